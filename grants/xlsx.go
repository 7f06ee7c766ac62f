package grants

import (
	"archive/zip"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"path"
	"strconv"
	"strings"
	"unicode/utf8"
)

// The .xlsx reader: a workbook is a zip archive of XML parts (ECMA-376
// Office Open XML, Part 1). Only what a grant schedule needs is read: the
// workbook part (sheet names, the 1904 date system), its relationships
// (where each sheet and the shared strings are), the shared strings and the
// worksheets' cell values, all streamed. Every part that is read is read to
// its end, so that a wrong checksum, a wrong size or XML that does not
// close is an error, never a shorter schedule.

// xlsxBook is an open workbook.
type xlsxBook struct {
	parts    map[string]*zip.File // by lower-case name
	sheets   []xlsxSheet
	d1904    bool
	sst      sharedStrings
	unzipped int64 // bytes unzipped so far, against MaxUnzipSize
}

type xlsxSheet struct {
	name, part string
	worksheet  bool // false for a chart sheet or a part of another kind
}

// sharedStrings is the workbook's table of strings, kept in one block.
type sharedStrings struct {
	text []byte
	ends []uint32 // ends[i] is where string i ends in text
}

func (s *sharedStrings) get(i int) string {
	start := uint32(0)
	if i > 0 {
		start = s.ends[i-1]
	}
	return string(s.text[start:s.ends[i]])
}

// bookError is a problem with the workbook as a whole; ReadFile names the
// file in it.
func bookError(sentinel error, format string, args ...any) *CellError {
	return &CellError{Err: sentinel, Msg: fmt.Sprintf(format, args...)}
}

func damaged(part string, err error) *CellError {
	return bookError(ErrDamaged, "is a damaged workbook (%s: %s); open it in a spreadsheet program, save it again and retry", part, describeZipErr(err))
}

func describeZipErr(err error) string {
	switch {
	case errors.Is(err, zip.ErrChecksum):
		return "its checksum does not match its content"
	case errors.Is(err, zip.ErrFormat):
		return "its size or format in the archive is wrong"
	case errors.Is(err, zip.ErrAlgorithm):
		return "it is compressed with a method .xlsx files do not use"
	case errors.Is(err, io.ErrUnexpectedEOF):
		return "it is cut short"
	}
	return strings.TrimPrefix(err.Error(), "flate: ")
}

// openXLSX opens the workbook of size bytes in r and reads its workbook
// part, relationships and shared strings.
func openXLSX(r io.ReaderAt, size int64) (*xlsxBook, error) {
	var head [8]byte
	n, _ := r.ReadAt(head[:], 0)
	switch {
	case bytes.HasPrefix(head[:n], []byte("\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1")):
		return nil, bookError(ErrFormat, "is a password-protected workbook or an old .xls file; save it as an .xlsx workbook without a password")
	case !bytes.HasPrefix(head[:n], []byte("PK")):
		return nil, bookError(ErrFormat, "is not an .xlsx workbook (it is not a zip archive)")
	}
	if err := checkZipEntries(r, size); err != nil {
		return nil, err
	}
	zr, err := zip.NewReader(r, size)
	if err != nil {
		return nil, bookError(ErrFormat, "is not an .xlsx workbook or is damaged (%v)", err)
	}
	b := &xlsxBook{parts: make(map[string]*zip.File, len(zr.File))}
	for _, f := range zr.File {
		k := strings.ToLower(f.Name)
		if _, dup := b.parts[k]; dup {
			return nil, damaged(f.Name, errors.New("the archive holds it twice"))
		}
		b.parts[k] = f
	}
	wbPath := "xl/workbook.xml"
	if rels, err := b.rels("_rels/.rels", ""); err != nil {
		return nil, err
	} else {
		for _, rel := range rels {
			if strings.HasSuffix(rel.typ, "/officeDocument") {
				wbPath = rel.target
			}
		}
	}
	if b.parts[strings.ToLower(wbPath)] == nil {
		return nil, bookError(ErrFormat, "is not an .xlsx workbook (it has no workbook part %s)", wbPath)
	}
	type sheetRef struct{ name, id string }
	var refs []sheetRef
	err = b.scan(wbPath, 0, func(s *xmlScanner, k tokKind) error {
		if k != tokStart {
			return nil
		}
		switch string(local(s.name)) {
		case "workbookPr":
			v, _ := s.attr("date1904")
			b.d1904 = string(v) == "1" || string(v) == "true"
		case "sheet":
			name, _ := s.attr("name")
			id, _ := s.attr("id")
			if len(refs) >= maxSheets {
				return bookError(ErrTooLarge, "has more than %d sheets", maxSheets)
			}
			refs = append(refs, sheetRef{string(name), string(id)})
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	dir := path.Dir(wbPath)
	rels, err := b.rels(path.Join(dir, "_rels", path.Base(wbPath)+".rels"), dir)
	if err != nil {
		return nil, err
	}
	byID := map[string]rel{}
	sstPath := ""
	for _, r := range rels {
		byID[r.id] = r
		if strings.HasSuffix(r.typ, "/sharedStrings") {
			sstPath = r.target
		}
	}
	for _, ref := range refs {
		r, ok := byID[ref.id]
		if !ok || b.parts[strings.ToLower(r.target)] == nil {
			return nil, &CellError{Sheet: ref.name, Err: ErrDamaged,
				Msg: "is listed in the workbook but its part is missing; open the workbook in a spreadsheet program, save it again and retry"}
		}
		b.sheets = append(b.sheets, xlsxSheet{name: ref.name, part: r.target, worksheet: strings.HasSuffix(r.typ, "/worksheet")})
	}
	if sstPath != "" && b.parts[strings.ToLower(sstPath)] != nil {
		if err := b.readSharedStrings(sstPath); err != nil {
			return nil, err
		}
	}
	return b, nil
}

// maxSheets is the most sheets a workbook may list; a schedule has eight.
const maxSheets = 1000

// checkZipEntries refuses an archive whose directory lists more entries
// than a workbook has, before the zip reader allocates one record each.
func checkZipEntries(r io.ReaderAt, size int64) error {
	const eocdLen = 22
	tail := int64(eocdLen + 65535)
	if tail > size {
		tail = size
	}
	buf := make([]byte, tail)
	if _, err := r.ReadAt(buf, size-tail); err != nil && err != io.EOF {
		return bookError(ErrFormat, "cannot be read (%v)", err)
	}
	i := bytes.LastIndex(buf, []byte("PK\x05\x06"))
	if i < 0 || len(buf)-i < eocdLen {
		return nil // the zip reader gives the error
	}
	if n := binary.LittleEndian.Uint16(buf[i+10:]); int(n) > maxZipEntries {
		return bookError(ErrTooLarge, "is an archive of %s or more parts; a workbook has a few dozen (at most %s are read)", countText(int(n)), countText(maxZipEntries))
	}
	return nil
}

// maxZipEntries is the most parts an archive may hold (a workbook of eight
// sheets has about twenty).
const maxZipEntries = 10000

// countingReader counts the bytes unzipped against the workbook's budget.
type countingReader struct {
	r    io.Reader
	b    *xlsxBook
	part string
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.b.unzipped += int64(n)
	if c.b.unzipped > MaxUnzipSize {
		return n, bookError(ErrTooLarge, "unzips to more than %s (at %s); a grant schedule is far smaller", sizeText(MaxUnzipSize), c.part)
	}
	return n, err
}

// open returns a reader of the part's unzipped bytes; it returns the zip
// reader's checksum and size errors at the end.
func (b *xlsxBook) open(name string) (io.ReadCloser, error) {
	f := b.parts[strings.ToLower(name)]
	if f == nil {
		return nil, bookError(ErrDamaged, "is a damaged workbook (%s is missing)", name)
	}
	if rest := MaxUnzipSize - b.unzipped; rest < 0 || f.UncompressedSize64 > uint64(rest) {
		return nil, bookError(ErrTooLarge, "unzips to more than %s (%s alone is %s); a grant schedule is far smaller", sizeText(MaxUnzipSize), name, sizeText(int64(min(f.UncompressedSize64, 1<<62))))
	}
	rc, err := f.Open()
	if err != nil {
		return nil, damaged(name, err)
	}
	return struct {
		io.Reader
		io.Closer
	}{&countingReader{r: rc, b: b, part: name}, rc}, nil
}

// scan reads the whole part name, calling fn for every token. A text run
// longer than maxText (0: the cell limit) is an error.
func (b *xlsxBook) scan(name string, maxText int, fn func(*xmlScanner, tokKind) error) error {
	rc, err := b.open(name)
	if err != nil {
		return err
	}
	defer rc.Close()
	if maxText == 0 {
		maxText = maxCellBytes
	}
	s := newXMLScanner(rc, maxText)
	for {
		k, err := s.next()
		if err != nil {
			return b.partErr(name, err)
		}
		if k == tokEOF {
			return nil
		}
		if err := fn(s, k); err != nil {
			return err
		}
	}
}

// partErr turns an error met reading part into the error to report.
func (b *xlsxBook) partErr(part string, err error) error {
	var ce *CellError
	if errors.As(err, &ce) {
		return ce
	}
	if errors.Is(err, errTextTooLong) {
		return bookError(ErrTooLarge, "holds a run of text longer than %s characters in %s, more than a spreadsheet cell holds", countText(MaxCellChars), part)
	}
	return damaged(part, err)
}

type rel struct{ id, typ, target string }

// rels reads a relationships part; a missing one is empty. Targets are
// resolved against dir.
func (b *xlsxBook) rels(name, dir string) ([]rel, error) {
	if b.parts[strings.ToLower(name)] == nil {
		return nil, nil
	}
	var out []rel
	err := b.scan(name, 0, func(s *xmlScanner, k tokKind) error {
		if k != tokStart || string(local(s.name)) != "Relationship" {
			return nil
		}
		if len(out) >= maxZipEntries {
			return bookError(ErrTooLarge, "has more than %d relationships in %s", maxZipEntries, name)
		}
		id, _ := s.attr("Id")
		typ, _ := s.attr("Type")
		target, _ := s.attr("Target")
		if mode, _ := s.attr("TargetMode"); string(mode) == "External" {
			return nil
		}
		t := string(target)
		if strings.HasPrefix(t, "/") {
			t = path.Clean(t[1:])
		} else {
			t = path.Join(dir, t)
		}
		out = append(out, rel{string(id), string(typ), t})
		return nil
	})
	return out, err
}

// readSharedStrings loads the shared strings, within MaxSharedStrings
// strings and MaxSharedStringBytes bytes.
func (b *xlsxBook) readSharedStrings(name string) error {
	var (
		inSI, inT bool
		phonetic  int // depth inside <rPh>, whose text is not the cell's
		start     int
	)
	sst := &b.sst
	err := b.scan(name, 0, func(s *xmlScanner, k tokKind) error {
		switch k {
		case tokStart:
			switch string(local(s.name)) {
			case "si":
				if len(sst.ends) >= MaxSharedStrings {
					return bookError(ErrTooLarge, "has more than %s shared strings; a grant schedule has far fewer", countText(MaxSharedStrings))
				}
				inSI, start = true, len(sst.text)
			case "rPh":
				phonetic++
			case "t":
				inT = inSI && phonetic == 0
			}
		case tokText:
			if inT {
				if len(sst.text)-start+len(s.text) > maxCellBytes {
					return bookError(ErrTooLarge, "holds a shared string longer than %s characters, more than a spreadsheet cell holds", countText(MaxCellChars))
				}
				if len(sst.text)+len(s.text) > MaxSharedStringBytes {
					return bookError(ErrTooLarge, "has more than %s of shared strings; a grant schedule has far fewer", sizeText(MaxSharedStringBytes))
				}
				sst.text = append(sst.text, s.text...)
			}
		case tokEnd:
			switch string(local(s.name)) {
			case "si":
				if inSI {
					if u := unescapeOOXML(sst.text[start:]); u != nil {
						sst.text = append(sst.text[:start], u...)
					}
					if !utf8.Valid(sst.text[start:]) {
						return damaged(name, fmt.Errorf("shared string %d is not UTF-8 text", len(sst.ends)))
					}
					if utf8.RuneCount(sst.text[start:]) > MaxCellChars {
						return bookError(ErrTooLarge, "holds a shared string longer than %s characters, more than a spreadsheet cell holds", countText(MaxCellChars))
					}
					sst.ends = append(sst.ends, uint32(len(sst.text)))
				}
				inSI = false
			case "rPh":
				phonetic--
			case "t":
				inT = false
			}
		}
		return nil
	})
	return err
}

// unescapeOOXML decodes the _xHHHH_ escapes Office writes for characters
// XML cannot hold (ECMA-376 Part 1, §22.9.2.19, ST_Xstring); it returns nil
// when there is none.
func unescapeOOXML(b []byte) []byte {
	i := bytes.Index(b, []byte("_x"))
	if i < 0 {
		return nil
	}
	var out []byte
	for i >= 0 {
		if i+7 <= len(b) && b[i+6] == '_' {
			if n, err := strconv.ParseUint(string(b[i+2:i+6]), 16, 16); err == nil {
				if out == nil {
					out = make([]byte, 0, len(b))
				}
				out = append(out, b[:i]...)
				out = utf8.AppendRune(out, rune(n))
				b = b[i+7:]
				i = bytes.Index(b, []byte("_x"))
				continue
			}
		}
		j := bytes.Index(b[i+2:], []byte("_x"))
		if j < 0 {
			break
		}
		i += 2 + j
	}
	if out == nil {
		return nil
	}
	return append(out, b...)
}

func (b *xlsxBook) sheetNames() []string {
	names := make([]string, len(b.sheets))
	for i, s := range b.sheets {
		names[i] = s.name
	}
	return names
}

func (b *xlsxBook) date1904() bool { return b.d1904 }

func (b *xlsxBook) rows(name string) (rowIter, error) {
	for _, sh := range b.sheets {
		if sh.name != name {
			continue
		}
		rc, err := b.open(sh.part)
		if err != nil {
			return nil, err
		}
		return &xlsxRows{book: b, sheet: name, part: sh.part, rc: rc, s: newXMLScanner(rc, maxCellBytes), worksheet: sh.worksheet}, nil
	}
	return nil, fmt.Errorf("no sheet %q", name)
}

// xlsxRows streams the rows of one worksheet. Only rows present in the
// part are returned (a spreadsheet leaves blank rows out).
type xlsxRows struct {
	book      *xlsxBook
	sheet     string
	part      string
	rc        io.ReadCloser
	s         *xmlScanner
	worksheet bool

	inData  bool // inside <sheetData>
	done    bool // the part has been read to its end
	row     int
	cur     []string
	formula []int // columns of the current row holding a formula with no value
	err     error
	errSeen bool   // err has been returned by cells
	val     []byte // the cell value being read
}

func (x *xlsxRows) next() bool {
	if x.err != nil || x.done {
		return false
	}
	if err := x.readRow(); err != nil {
		x.err = err
		return true
	}
	return !x.done
}

func (x *xlsxRows) cells() (int, []string, error) {
	if x.err != nil {
		x.errSeen = true
	}
	return x.row, x.cur, x.err
}

func (x *xlsxRows) emptyIsFormula(col, row int) bool {
	if row != x.row {
		return false
	}
	for _, c := range x.formula {
		if c == col {
			return true
		}
	}
	return false
}

// close reads the rest of the part, so that damage after the last row
// read is still found, and releases it. With drain false (the read is being
// abandoned) it only releases it.
func (x *xlsxRows) close(drain bool) error {
	for drain && x.err == nil && !x.done {
		if err := x.readRow(); err != nil {
			x.err = err
		}
	}
	x.rc.Close()
	if x.err != nil && !x.errSeen {
		return x.err
	}
	return nil
}

func (x *xlsxRows) fail(cell string, err error) error {
	var ce *CellError
	if errors.As(err, &ce) {
		if ce.Sheet == "" {
			ce.Sheet = x.sheet
		}
		return ce
	}
	if errors.Is(err, errTextTooLong) {
		return &CellError{Sheet: x.sheet, Cell: cell, Err: ErrTooLarge,
			Msg: fmt.Sprintf("holds more than %s characters, more than a spreadsheet cell holds", countText(MaxCellChars))}
	}
	var xe *errXML
	if !errors.As(err, &xe) {
		cell = "" // the archive's checks say nothing of where
	}
	msg := fmt.Sprintf("the sheet is damaged (%s: %s); open the workbook in a spreadsheet program, save it again and retry", x.part, describeZipErr(err))
	return &CellError{Sheet: x.sheet, Cell: cell, Err: ErrDamaged, Msg: msg}
}

// readRow reads up to the end of the next <row>; at </sheetData> it reads
// the rest of the part and sets done.
func (x *xlsxRows) readRow() error {
	var (
		inRow, inCell, inV, inIS, inT bool
		phonetic                      int
		col, ncells                   int
		typ                           string
		hasF                          bool
	)
	cellRef := func() string { return cellName(max(col, 1), x.row) }
	for {
		k, err := x.s.next()
		if err != nil {
			return x.fail(cellRef(), err)
		}
		switch k {
		case tokEOF:
			x.done = true
			return nil
		case tokStart:
			if !x.worksheet {
				continue
			}
			switch string(local(x.s.name)) {
			case "sheetData":
				x.inData = true
			case "row":
				if !x.inData || inRow {
					continue
				}
				n := x.row + 1
				if v, ok := x.s.attr("r"); ok {
					r, err := strconv.Atoi(string(v))
					if err != nil || r < 1 {
						return x.fail(cellRef(), contentErr("row number %q", truncBytes(v)))
					}
					if r <= x.row {
						return x.fail(cellRef(), contentErr("row %d comes after row %d", r, x.row))
					}
					n = r
				}
				if n > maxSheetRows {
					return &CellError{Sheet: x.sheet, Err: ErrDamaged, Msg: fmt.Sprintf("has a row numbered %s, beyond a spreadsheet's last row %s; the workbook is damaged", countText(n), countText(maxSheetRows))}
				}
				x.row, inRow, col, ncells = n, true, 0, 0
				x.cur, x.formula = make([]string, 0, len(x.cur)), x.formula[:0]
			case "c":
				if !inRow {
					continue
				}
				ncells++
				if ncells > maxSheetColumns {
					return &CellError{Sheet: x.sheet, Cell: cellName(1, x.row), Err: ErrTooLarge,
						Msg: fmt.Sprintf("row %d has more than %s cells, more than a spreadsheet row holds", x.row, countText(maxSheetColumns))}
				}
				c := col + 1
				if v, ok := x.s.attr("r"); ok {
					cc, err := columnOf(v)
					if err != nil {
						return x.fail(cellRef(), err)
					}
					c = cc
				}
				col, inCell, hasF = c, true, false
				t, _ := x.s.attr("t")
				typ = string(t)
				x.val = x.val[:0]
			case "v":
				inV = inCell
			case "f":
				hasF = hasF || inCell
			case "is":
				inIS = inCell
			case "rPh":
				phonetic++
			case "t":
				inT = inIS && phonetic == 0
			}
		case tokText:
			if x.inData && !inV && !inT && !hasText(x.s) {
				if len(bytes.Trim(x.s.text, " \t\r\n")) > 0 {
					return x.fail(cellRef(), contentErr("text %q where only rows and cells belong", truncBytes(x.s.text)))
				}
			}
			if inV || inT {
				if len(x.val)+len(x.s.text) > maxCellBytes {
					return x.fail(cellRef(), errTextTooLong)
				}
				x.val = append(x.val, x.s.text...)
			}
		case tokEnd:
			if !x.worksheet {
				continue
			}
			switch string(local(x.s.name)) {
			case "sheetData":
				x.inData = false
			case "row":
				if inRow {
					return nil
				}
			case "c":
				if inCell {
					if err := x.endCell(col, typ, hasF, inIS); err != nil {
						return x.fail(cellRef(), err)
					}
				}
				inCell, inIS = false, false
			case "v":
				inV = false
			case "is":
				inIS = false
			case "rPh":
				phonetic--
			case "t":
				inT = false
			}
		}
	}
}

// endCell stores the value of the cell just read in column col.
func (x *xlsxRows) endCell(col int, typ string, hasF, inline bool) error {
	val := x.val
	switch typ {
	case "s":
		if len(bytes.TrimSpace(val)) == 0 {
			val = nil
			break
		}
		i, err := strconv.Atoi(string(bytes.TrimSpace(val)))
		if err != nil || i < 0 || i >= len(x.book.sst.ends) {
			return contentErr("a shared string %q that the workbook does not have", truncBytes(val))
		}
		s := x.book.sst.get(i)
		x.put(col, s)
		return nil
	case "inlineStr":
		if u := unescapeOOXML(val); u != nil {
			val = u
		}
	}
	if !utf8.Valid(val) {
		return contentErr("text that is not UTF-8")
	}
	if utf8.RuneCount(val) > MaxCellChars {
		return errTextTooLong
	}
	if len(val) == 0 {
		if hasF {
			x.formula = append(x.formula, col)
		}
		return nil
	}
	x.put(col, string(val))
	return nil
}

func (x *xlsxRows) put(col int, v string) {
	if v == "" {
		return
	}
	for len(x.cur) < col {
		x.cur = append(x.cur, "")
	}
	x.cur[col-1] = v
}

// columnOf is the column number of a cell reference such as "AB12".
func columnOf(ref []byte) (int, error) {
	c, i := 0, 0
	for ; i < len(ref); i++ {
		ch := ref[i] | 0x20
		if ch < 'a' || ch > 'z' {
			break
		}
		c = c*26 + int(ch-'a') + 1
		if c > maxSheetColumns {
			return 0, contentErr("a cell reference %q beyond a spreadsheet's last column", truncBytes(ref))
		}
	}
	if i == 0 {
		return 0, contentErr("a cell reference %q", truncBytes(ref))
	}
	return c, nil
}

// A spreadsheet's own bounds (ECMA-376 and every spreadsheet program):
// 1,048,576 rows of 16,384 columns.
const (
	maxSheetRows    = 1 << 20
	maxSheetColumns = 1 << 14
)

// hasText reports whether the innermost open element may hold text: any
// but the containers of rows and cells.
func hasText(s *xmlScanner) bool {
	if len(s.stack) == 0 {
		return false
	}
	switch string(local(s.stack[len(s.stack)-1])) {
	case "sheetData", "row", "c", "is", "r":
		return false
	}
	return true
}

// contentErr is damage found in what a part says (not in its XML or its
// archive entry): it keeps the cell where it was found.
func contentErr(format string, args ...any) error {
	return &errXML{off: -1, msg: fmt.Sprintf(format, args...)}
}
