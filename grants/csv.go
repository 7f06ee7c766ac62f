package grants

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"unicode/utf8"
)

// csvSource reads a folder of CSV files, one per sheet.
type csvSource struct {
	fsys  fs.FS
	names []string
	files map[string]string      // sheet name → file name
	types map[string]fs.FileMode // sheet name → type bits from the listing
}

func (c *csvSource) sheetNames() []string { return c.names }
func (c *csvSource) date1904() bool       { return false }

func (c *csvSource) rows(name string) (rowIter, error) {
	file := c.files[name]
	it := &csvRows{file: file}
	sheet := sheetOf(name)
	bad := func(format string, args ...any) (rowIter, error) {
		it.err = &CellError{Sheet: sheet, Err: ErrFormat, Msg: file + " " + fmt.Sprintf(format, args...)}
		return it, nil
	}
	if t := c.types[name]; !t.IsRegular() {
		return bad("is %s; grantworth reads only regular files (copy the file into the folder)", fileKind(t))
	}
	f, err := c.fsys.Open(file)
	if err != nil {
		return nil, err
	}
	// The entry may have changed since the folder was listed: look at what
	// was opened.
	st, err := f.Stat()
	if err == nil && !st.Mode().IsRegular() {
		f.Close()
		return bad("is %s; grantworth reads only regular files (copy the file into the folder)", fileKind(st.Mode().Type()))
	}
	if err == nil && st.Size() > MaxFileSize {
		err = &CellError{Sheet: sheet, Err: ErrTooLarge, Msg: fmt.Sprintf("%s is %s, more than the %s allowed for one sheet", file, sizeText(st.Size()), sizeText(MaxFileSize))}
	}
	if err != nil {
		f.Close()
		return nil, err
	}
	// The file is streamed, never held whole: a guard between the file
	// and the CSV reader bounds what one record can take.
	it.f = f
	it.guard = &recordGuard{r: io.LimitReader(f, st.Size())}
	br := bufio.NewReaderSize(it.guard, 64<<10)
	head, _ := br.Peek(64 << 10)
	switch {
	case bytes.HasPrefix(head, []byte("\xff\xfe")) || bytes.HasPrefix(head, []byte("\xfe\xff")):
		return bad("is UTF-16 (Unicode) text; save it as CSV UTF-8")
	case looksUTF16(head):
		return bad("is UTF-16 text without a byte-order mark; save it as CSV UTF-8")
	case bytes.IndexByte(head, '\r') >= 0 && bytes.IndexByte(head, '\n') < 0:
		return bad("ends its lines with a carriage return alone (as old Mac programs did); save it as CSV with Windows or Unix line endings")
	}
	if bytes.HasPrefix(head, []byte("\xef\xbb\xbf")) {
		br.Discard(3)
	}
	it.r = csv.NewReader(br)
	it.r.FieldsPerRecord = -1
	return it, nil
}

// maxRecordBytes bounds one CSV record (a row, with any line breaks inside
// its quoted fields): 256 columns of ordinary text need far less.
const maxRecordBytes = 4 << 20

// errRecordTooLong stops the CSV reader inside a record past
// maxRecordBytes.
var errRecordTooLong = errors.New("record too long")

// recordGuard counts the bytes read since the last record began.
type recordGuard struct {
	r    io.Reader
	n    int64 // bytes read
	mark int64 // n where the current record began (give or take a buffer)
}

func (g *recordGuard) Read(p []byte) (int, error) {
	if g.n-g.mark > maxRecordBytes+128<<10 {
		return 0, errRecordTooLong
	}
	n, err := g.r.Read(p)
	g.n += int64(n)
	return n, err
}

// looksUTF16 reports whether text with no byte-order mark is UTF-16: a
// quarter or more of its first bytes are NUL, as the high byte of every
// Latin character is (a stray NUL in UTF-8 text is read as text).
func looksUTF16(b []byte) bool {
	b = b[:min(len(b), 1024)]
	return len(b) >= 2 && bytes.Count(b, []byte{0}) >= len(b)/4
}

// fileKind says what a directory entry that is not a regular file is.
func fileKind(t fs.FileMode) string {
	switch {
	case t&fs.ModeSymlink != 0:
		return "a symbolic link"
	case t.IsDir():
		return "a folder"
	case t&fs.ModeDevice != 0:
		return "a device"
	case t&fs.ModeNamedPipe != 0:
		return "a named pipe"
	case t&fs.ModeSocket != 0:
		return "a socket"
	}
	return "not a regular file"
}

// csvSheets lists the .csv files of a folder listing that stand for a
// sheet grantworth reads (matched like sheet names), by sheet name.
func csvSheets(ents []fs.DirEntry) (names []string, files map[string]string, types map[string]fs.FileMode) {
	files, types = map[string]string{}, map[string]fs.FileMode{}
	for _, e := range ents {
		if e.IsDir() || !strings.EqualFold(filepath.Ext(e.Name()), ".csv") {
			continue
		}
		sheet := strings.TrimSuffix(e.Name(), filepath.Ext(e.Name()))
		names = append(names, sheet)
		files[sheet] = e.Name()
		types[sheet] = e.Type()
	}
	return names, files, types
}

// HashInput is the SHA-256 (hex) of the schedule at path: of the file's
// bytes, or for a folder of CSV files of each file that stands for a sheet
// grantworth reads, in name order: its name, a NUL byte, its length in
// decimal digits, a NUL byte and its bytes. Files are streamed; a file that
// is not a regular one or is past MaxFileSize is an error, as when reading;
// other files of the folder are not opened.
func HashInput(path string) (string, error) {
	st, err := os.Stat(path)
	if err != nil {
		return "", err
	}
	h := sha256.New()
	if !st.IsDir() {
		if err := hashFile(h, path, "", false); err != nil {
			return "", err
		}
		return hex.EncodeToString(h.Sum(nil)), nil
	}
	ents, err := os.ReadDir(path)
	if err != nil {
		return "", err
	}
	_, files, types := csvSheets(ents)
	var names []string
	for sheet, file := range files {
		if isSheet(sheet) {
			if !types[sheet].IsRegular() {
				return "", &CellError{Sheet: sheetOf(sheet), Err: ErrFormat, Msg: file + " is " + fileKind(types[sheet]) + "; grantworth reads only regular files"}
			}
			names = append(names, file)
		}
	}
	sort.Strings(names)
	for _, n := range names {
		if err := hashFile(h, filepath.Join(path, n), n, true); err != nil {
			return "", err
		}
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// hashFile streams the regular file at path into h, framed by its name and
// length when framed.
func hashFile(h io.Writer, path, name string, framed bool) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return err
	}
	if !st.Mode().IsRegular() {
		return &CellError{Sheet: filepath.Base(path), Err: ErrFormat, Msg: "is " + fileKind(st.Mode().Type()) + "; grantworth reads only regular files"}
	}
	if st.Size() > MaxFileSize {
		return &CellError{Sheet: filepath.Base(path), Err: ErrTooLarge, Msg: fmt.Sprintf("is %s, more than the %s allowed", sizeText(st.Size()), sizeText(MaxFileSize))}
	}
	if framed {
		fmt.Fprintf(h, "%s\x00%d\x00", name, st.Size())
	}
	n, err := io.Copy(h, io.LimitReader(f, st.Size()+1))
	if err == nil && n != st.Size() {
		err = fmt.Errorf("%s changed while it was read", path)
	}
	return err
}

// isSheet reports whether name (a sheet or file name without extension)
// stands for a sheet grantworth reads, in a schedule or a designs workbook.
func isSheet(name string) bool {
	_, ok := canonicalSheet(name)
	return ok
}

// canonicalSheet is the canonical name of the sheet of a schedule or a
// designs workbook that name (a sheet or file name without extension)
// stands for.
func canonicalSheet(name string) (string, bool) {
	for _, layout := range [][]Sheet{Sheets, DesignSheets} {
		for _, sh := range layout {
			if norm(sh.Name) == norm(name) {
				return sh.Name, true
			}
		}
	}
	return name, false
}

func firstInvalid(b []byte) int {
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n <= 1 {
			return i
		}
		i += n
	}
	return len(b)
}

// sheetOf is the canonical name of the sheet a file name stands for.
func sheetOf(name string) string {
	s, _ := canonicalSheet(name)
	return s
}

// csvRows numbers records the way a spreadsheet shows them: blank lines
// count as rows; a quoted field spanning lines stays in one row.
type csvRows struct {
	file    string
	f       fs.File
	guard   *recordGuard
	r       *csv.Reader
	err     error // returned by the next call of cells
	row     int
	endLine int      // line on which the last record ended
	cur     []string // the current row; nil for a blank one
	pending []string // a record read ahead, after gapLeft blank rows
	gapLeft int
	done    bool
}

func (c *csvRows) next() bool {
	switch {
	case c.done:
		return false
	case c.err != nil:
		c.done = true
		c.row++
		return true
	case c.gapLeft > 0:
		c.gapLeft--
		c.row++
		c.cur = nil
		return true
	case c.pending != nil:
		c.cur, c.pending = c.pending, nil
		c.row++
		return true
	}
	rec, err := c.r.Read()
	if err == io.EOF {
		c.done = true
		return false
	}
	if err != nil {
		var pe *csv.ParseError
		if errors.Is(err, errRecordTooLong) {
			err = &CellError{Err: ErrTooLarge, Msg: fmt.Sprintf("%s line %d starts a row longer than %s", c.file, c.endLine+1, sizeText(maxRecordBytes))}
		} else if errors.As(err, &pe) {
			err = &CellError{Err: ErrFormat, Msg: fmt.Sprintf("%s line %d, column %d: %v", c.file, pe.Line, pe.Column, pe.Err)}
		}
		c.err = err
		c.done = true
		c.row++
		return true
	}
	c.guard.mark = c.guard.n
	line, _ := c.r.FieldPos(0)
	last, _ := c.r.FieldPos(len(rec) - 1)
	for i, f := range rec {
		if !utf8.ValidString(f) {
			l, _ := c.r.FieldPos(i)
			c.err = &CellError{Err: ErrFormat, Msg: fmt.Sprintf("%s line %d is not UTF-8 text; save the file as CSV UTF-8", c.file, l+strings.Count(f[:firstInvalid([]byte(f))], "\n"))}
			c.done = true
			c.row++
			return true
		}
	}
	gap := line - c.endLine - 1
	c.endLine = last + strings.Count(rec[len(rec)-1], "\n")
	if c.row == 0 && len(rec) == 1 {
		for _, d := range []struct{ sep, name string }{{";", "semicolons"}, {"\t", "tabs"}, {"|", "vertical bars"}} {
			if strings.Contains(rec[0], d.sep) {
				c.err = &CellError{Err: ErrFormat, Msg: fmt.Sprintf("%s line %d: the fields seem separated by %s; grantworth reads comma-separated files (save as CSV with commas)", c.file, line, d.name)}
				c.done = true
				c.row++
				return true
			}
		}
	}
	c.row++
	if gap > 0 {
		c.pending, c.gapLeft, c.cur = rec, gap-1, nil
		return true
	}
	c.cur = rec
	return true
}

func (c *csvRows) cells() (int, []string, error) {
	if c.err != nil {
		return c.row, nil, c.err
	}
	for i, v := range c.cur {
		if tooLong(v, MaxCellChars) {
			c.err = &CellError{Cell: cellName(i+1, c.row), Err: ErrTooLarge,
				Msg: fmt.Sprintf("holds more than %s characters, more than a spreadsheet cell holds", countText(MaxCellChars))}
			c.done = true
			return c.row, nil, c.err
		}
	}
	return c.row, c.cur, nil
}

func (c *csvRows) emptyIsFormula(col, row int) bool { return false }
func (c *csvRows) close(bool) error {
	if c.f != nil {
		return c.f.Close()
	}
	return nil
}
