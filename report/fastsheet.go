package report

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"
	"unicode/utf16"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"
)

// The sheets with a row per tranche, grant or input of a large ledger
// (Tranches, Expense, Assumptions, Grants, ...) have hundreds of
// thousands of rows, and excelize's stream writer spent most of the
// workbook's time on them cell by cell, then wrote them to a temporary
// file and read them back. Their rows are written here instead, cell for
// cell as the stream writer writes them (the same value, text escapes,
// number digits, style and type) but shorter: a cell that follows the
// one before it without a gap is written without its reference (ref),
// and a formula repeated down the Tranches sheet is written once per run
// of rows as a shared formula (formulaRun). excelize writes the sheet
// with the header and a placeholder row, and canonicalZip writes the rows
// in the placeholder's place as it copies the archive, straight into its
// compressor. Two ways:
//
//   - Book.rows runs a sheet's own row loop later, with a Table that
//     encodes each row's values itself (rowWriter.cell) instead of
//     handing them to excelize: one loop for both ways.
//   - The Tranches and Expense rows, the largest, have writers of their
//     own that skip the boxing of every value (trancheRows,
//     expenseSheet.fast), used when every value on the sheet is of a
//     kind written here (any text, escaped as excelize escapes it;
//     finite numbers; dates after 1900-02-28); otherwise the sheet goes
//     through excelize as the others do.
//
// A test writes every sheet both ways and checks that they read back as
// the same cells, through excelize and by the file format's rules.

// slowSheets, set by a test, sends every sheet through excelize.
var slowSheets = false

// rowsToken begins the placeholder cell's text; the number of the rows
// writer it stands for follows.
const rowsToken = "grantworth-rows-placeholder-5c1e-"

// placeholderHead begins the row excelize writes for a placeholder: row
// 2, one inline string in A2, no style.
var placeholderHead = []byte(`<row r="2"><c r="A2" t="inlineStr"><is><t>` + rowsToken)

const placeholderTail = `</t></is></c></row>`

// placeholder is the text of the placeholder cell of rows writer k.
func placeholder(k int) string { return rowsToken + strconv.Itoa(k) }

// fastRows writes a sheet's data rows, in the fast rows' form, to w.
type fastRows func(w io.Writer) error

// fastTable writes the data rows of table t with rows in place of
// excelize, and closes it: the rows are written as the archive is put in
// order (canonicalZip), numbered from row 2.
func (b *Book) fastTable(t *Table, rows fastRows) error {
	if err := t.Row(placeholder(len(b.fast))); err != nil {
		return err
	}
	b.fast = append(b.fast, rows)
	return t.Close()
}

// rows writes the data rows of table t, which has only its header, with
// write, and closes t. Through excelize (Book.slow) write runs now;
// otherwise it runs as the archive is put in order, with a Table of its
// own that encodes the rows in excelize's form (rowWriter.cell), so it
// must not depend on anything that changes after this call. write uses
// Row, TallRow, Skip and RowNum; Merge is not offered on that path.
func (b *Book) rows(t *Table, write func(t *Table) error) error {
	if b.slow {
		if err := write(t); err != nil {
			return err
		}
		return t.Close()
	}
	row, cols, sheet := t.row, t.cols, t.sheet // the header's
	return b.fastTable(t, func(out io.Writer) error {
		ft := &Table{sheet: sheet, row: row, cols: cols, fast: b.newRowWriter(out)}
		if err := write(ft); err != nil {
			return fmt.Errorf("workbook sheet %s: %w", sheet, err)
		}
		return ft.fast.flush()
	})
}

// findPlaceholder returns where the placeholder row in data begins and
// ends and the number of its rows writer; ok is false if data holds none.
func findPlaceholder(data []byte) (start, end, k int, ok bool) {
	i := bytes.Index(data, placeholderHead)
	if i < 0 {
		return 0, 0, 0, false
	}
	j := i + len(placeholderHead)
	n := 0
	for j < len(data) && data[j] >= '0' && data[j] <= '9' {
		n = n*10 + int(data[j]-'0')
		j++
	}
	if !bytes.HasPrefix(data[j:], []byte(placeholderTail)) {
		return 0, 0, 0, false
	}
	return i, j + len(placeholderTail), n, true
}

// plainText reports whether excelize writes s as it is: printable ASCII
// without an XML special character, an underscore (its _xHHHH_ escapes)
// or white space at either end. Other text goes through appendCellText.
func plainText(s string) bool {
	if len(s) > 0 && (s[0] == ' ' || s[len(s)-1] == ' ') {
		return false
	}
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c < 0x20 || c > 0x7e, c == '&', c == '<', c == '>', c == '"', c == '\'', c == '_':
			return false
		}
	}
	return true
}

// appendCellText appends the <t> element of an inline string cell holding
// s, as excelize v2.11.1's stream writer writes it (trimCellValue and
// bstrMarshal in its cell.go and lib.go, and writeCell in stream.go): the
// text cut to what a cell holds (cutText, then excelize's cut to 32,767
// UTF-16 units); xml:space="preserve" when it begins or ends with a space,
// tab, line feed or carriage return; the XML escapes of encoding/xml
// (which also turns characters XML 1.0 cannot hold and invalid UTF-8 into
// U+FFFD), with line feeds left as they are; and each literal _xHHHH_ in
// the text marked as literal by escaping its underscore (_x005F_).
func appendCellText(b []byte, s string) []byte {
	if len(s) > MaxCellChars {
		s = cutUTF16(cutText(s), MaxCellChars)
	}
	if plainText(s) {
		b = append(b, `<t>`...)
		b = append(b, s...)
		return append(b, `</t>`...)
	}
	b = append(b, `<t`...)
	if s != "" && (isCellSpace(s[0]) || isCellSpace(s[len(s)-1])) {
		b = append(b, ` xml:space="preserve"`...)
	}
	b = append(b, '>')
	var esc strings.Builder
	_ = xml.EscapeText(&esc, []byte(s))
	b = appendLiteralEscapes(b, strings.ReplaceAll(esc.String(), "&#xA;", "\n"))
	return append(b, `</t>`...)
}

func isCellSpace(c byte) bool { return c == '\t' || c == '\n' || c == '\r' || c == ' ' }

// cutUTF16 cuts s to at most n UTF-16 code units, on a character boundary.
func cutUTF16(s string, n int) string {
	units := 0
	for i, r := range s {
		if units += utf16.RuneLen(r); units > n {
			return s[:i]
		}
	}
	return s
}

// literalEscape is the form of the escapes of characters XML cannot hold
// in a spreadsheet's text (ECMA-376 Part 1, 22.9.2.19 ST_Xstring).
var literalEscape = regexp.MustCompile(`_x[a-fA-F\d]{4}_`)

// appendLiteralEscapes appends s, with each _xHHHH_ in it escaped as
// excelize's bstrMarshal escapes it, quirks included so that the bytes are
// the same: _xHHHH_ becomes _x005F_xHHHH_; _x005F_ itself becomes
// _x005F_x005F_, or _x005F_x005F_x005F_ when xHHHH_ follows it; and an
// escape naming a UTF-16 surrogate (D800 to DFFF) is dropped.
func appendLiteralEscapes(b []byte, s string) []byte {
	if !strings.Contains(s, "_x") {
		return append(b, s...)
	}
	cursor := 0
	for _, m := range literalEscape.FindAllStringIndex(s, -1) {
		b = append(b, s[cursor:m[0]]...)
		cursor = m[1]
		if sub := s[m[0]:m[1]]; sub == "_x005F_" {
			if next := s[m[1]:min(len(s), m[1]+6)]; len(next) == 6 && next[0] == 'x' && next[5] == '_' && isHex4(next[1:5]) && !surrogate(next[1:5]) {
				b = append(b, "_x005F_x005F_x005F_"...)
			} else {
				b = append(b, "_x005F_x005F_"...)
			}
			continue
		}
		if !surrogate(s[m[0]+2 : m[1]-1]) {
			b = append(b, "_x005F"...)
			b = append(b, s[m[0]:m[1]]...)
		}
	}
	return append(b, s[cursor:]...)
}

func isHex4(h string) bool {
	for i := 0; i < len(h); i++ {
		if c := h[i] | 0x20; !(h[i] >= '0' && h[i] <= '9') && !(c >= 'a' && c <= 'f') {
			return false
		}
	}
	return len(h) == 4
}

// surrogate reports whether the four hexadecimal digits h name a UTF-16
// surrogate, which is no character.
func surrogate(h string) bool {
	v, _ := strconv.ParseUint(h, 16, 16)
	return v >= 0xd800 && v <= 0xdfff
}

// Excel's day 60 is the 29th of February 1900 that never was; from the
// 1st of March 1900 on, a date's serial is its days since 1899-12-30.
var (
	excelEpoch    = time.Date(1899, 12, 30, 0, 0, 0, 0, time.UTC)
	excelFirstDay = time.Date(1900, 3, 1, 0, 0, 0, 0, time.UTC)
	excelLastDay  = time.Date(2200, 1, 1, 0, 0, 0, 0, time.UTC)
)

// The same bounds as dates, and the serial number of 1970-01-01.
var (
	excelFirstDate, excelLastDate = DateOf(excelFirstDay), DateOf(excelLastDay)
	excelUnixDay                  = excelDays(time.Unix(0, 0).UTC())
)

// plainDate reports whether d is a date the fast rows can write.
func plainDate(d Date) bool {
	return d.IsZero() || (d.n >= excelFirstDate.n && d.n < excelLastDate.n)
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// rowWriter appends rows in the fast rows' form to b, and hands
// them to out in batches (flush).
type rowWriter struct {
	b   []byte
	r   int    // the row being written
	row []byte // its number as text
	// next is the column a cell written without its reference stands in:
	// the one after the row's last cell (ref).
	next int
	out  io.Writer
	// dec is the decimals Book.roundCell keeps for each style (by ID),
	// -1 for a style it leaves as it is.
	dec []int8
}

// rowBatch is the size of the writes of a rowWriter: large enough that
// the writer below (the archive's compressor, which works in pieces of a
// megabyte) is called rarely, small enough to stay in the cache.
const rowBatch = 64 << 10

// newRowWriter is a rowWriter to out with b's styles.
func (b *Book) newRowWriter(out io.Writer) *rowWriter {
	dec := make([]int8, 0, 32)
	for style, d := range b.decimals {
		for len(dec) <= style {
			dec = append(dec, -1)
		}
		dec[style] = int8(d)
	}
	return &rowWriter{b: make([]byte, 0, rowBatch+8192), out: out, dec: dec}
}

// start begins row r, height points tall (0: the default height); it is
// excelize's error for a height past the file format's limit.
func (w *rowWriter) start(r int, height float64) error {
	if height > excelize.MaxRowHeight {
		return excelize.ErrMaxRowHeight
	}
	w.r, w.row = r, strconv.AppendInt(w.row[:0], int64(r), 10)
	w.next = 1
	w.b = append(w.b, `<row r="`...)
	w.b = append(w.b, w.row...)
	w.b = append(w.b, '"')
	if height > 0 {
		w.b = append(w.b, ` ht="`...)
		w.b = strconv.AppendFloat(w.b, height, 'f', -1, 64)
		w.b = append(w.b, `" customHeight="1"`...)
	}
	w.b = append(w.b, '>')
	return nil
}

// end ends the row, and hands a full batch to out.
func (w *rowWriter) end() error {
	w.b = append(w.b, `</row>`...)
	if len(w.b) < rowBatch {
		return nil
	}
	return w.flush()
}

// flush hands the rows written so far to out.
func (w *rowWriter) flush() error {
	if len(w.b) == 0 {
		return nil
	}
	_, err := w.out.Write(w.b)
	w.b = w.b[:0]
	return err
}

// ref gives the cell being begun its column: by its place alone when it
// follows the row's last cell (its r attribute is optional, ECMA-376
// Part 1, 18.3.1.4: a cell without one is the column after the cell
// before it, the first the row's first column), else by its r attribute.
// Every cell of a long sheet's rows is written in order, and the
// reference was a sixth of the Tranches sheet's XML.
func (w *rowWriter) ref(col int) {
	if col == w.next {
		w.next++
		return
	}
	w.at(col)
}

// at gives the cell being begun its r attribute wherever it stands. A
// cell of a shared formula always has it: readers place a shared formula
// and move its references by its cells' own references (openpyxl 3.0,
// the reader pandas uses for workbooks, fails on such a cell without
// one).
func (w *rowWriter) at(col int) {
	w.next = col + 1
	w.b = append(w.b, ` r="`...)
	w.b = appendColumn(w.b, col)
	w.b = append(w.b, w.row...)
	w.b = append(w.b, '"')
}

func appendColumn(b []byte, col int) []byte {
	if col <= 26 {
		return append(b, byte('A'+col-1))
	}
	var tmp [4]byte
	i := len(tmp)
	for col > 0 {
		col--
		i--
		tmp[i] = byte('A' + col%26)
		col /= 26
	}
	return append(b, tmp[i:]...)
}

func (w *rowWriter) style(s int) {
	if s > 0 && s < len(styleAttrs) {
		w.b = append(w.b, styleAttrs[s]...)
	} else if s > 0 {
		w.b = append(w.b, ` s="`...)
		w.b = strconv.AppendInt(w.b, int64(s), 10)
		w.b = append(w.b, '"')
	}
}

// styleAttrs are the s attributes of the first styles, and valueOpens
// the beginnings of a value cell of each of them without a reference
// (open): the sheets use a few dozen styles, and a large ledger's rows
// tens of millions of cells.
var styleAttrs, valueOpens = func() (attrs, opens [64]string) {
	for s := range attrs {
		if s > 0 {
			attrs[s] = ` s="` + strconv.Itoa(s) + `"`
		}
		opens[s] = `<c` + attrs[s] + `><v>`
	}
	return
}()

// text is an inline string.
func (w *rowWriter) text(col, s int, v string) {
	w.b = append(w.b, `<c`...)
	w.ref(col)
	w.style(s)
	w.b = append(w.b, ` t="inlineStr"><is>`...)
	w.b = appendCellText(w.b, v)
	w.b = append(w.b, `</is></c>`...)
}

// open begins a cell holding a value (<v>).
func (w *rowWriter) open(col, s int) {
	if col == w.next && s >= 0 && s < len(valueOpens) {
		w.next++
		w.b = append(w.b, valueOpens[s]...)
		return
	}
	w.b = append(w.b, `<c`...)
	w.ref(col)
	w.style(s)
	w.b = append(w.b, `><v>`...)
}

func (w *rowWriter) close() { w.b = append(w.b, `</v></c>`...) }

func (w *rowWriter) int(col, s int, v int64) {
	w.open(col, s)
	w.b = strconv.AppendInt(w.b, v, 10)
	w.close()
}

// float writes v rounded as Book.Cell rounds it (Book.roundCell) for
// style s.
func (w *rowWriter) float(col, s int, v float64) {
	w.open(col, s)
	if d := w.decimals(s); d < 0 || !appendScaled(&w.b, v, d, false) {
		w.b = appendCellFloat(w.b, roundTo(d, v))
	}
	w.close()
}

// number writes v as it is, as excelize writes a float64 (v was rounded
// by Book.Cell, or is of a style that keeps every digit).
func (w *rowWriter) number(col, s int, v float64) {
	w.open(col, s)
	if d := w.decimals(s); d < 0 || !appendScaled(&w.b, v, d, true) {
		w.b = appendCellFloat(w.b, v)
	}
	w.close()
}

func (w *rowWriter) decimals(s int) int {
	if s >= 0 && s < len(w.dec) {
		return int(w.dec[s])
	}
	return -1
}

// pow10 are the exact powers of ten a style's decimals scale by.
var pow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15}

// appendScaled appends v rounded to d decimals as excelize writes that
// rounded value (appendCellFloat of roundTo(d, v)), but from the whole
// number k = round(v·10^d) rather than by the shortest-decimal search,
// and reports true; or appends nothing and reports false, where that is
// not known to give the same digits. With exact, v must already be
// rounded (v = k/10^d, as Book.roundCell computes it).
//
// Why the digits are the same: r = k/10^d, correctly rounded, is the
// double nearest the decimal s = k·10^-d, so s reads back as r. Any other
// decimal with no more significant digits than s differs from s by at
// least 10^-d, while two decimals that both read back as r differ by at
// most one unit in the last place of r, which is below 10^-d/4 when
// |k| < 10^15 (|r| < 10^(15-d), ulp(r) ≤ |r|·2^-52). So s is the shortest
// decimal that reads back as r, the one strconv writes; with at most 15
// significant digits, excelize's cut leaves it as it is.
func appendScaled(b *[]byte, v float64, d int, exact bool) bool {
	if d < 0 || d >= len(pow10) {
		return false
	}
	p := pow10[d]
	k := math.Round(v * p)
	if !(math.Abs(k) < 1e15) || k == 0 || (exact && k/p != v) {
		return false // NaN, infinities and large values; zero (or -0); v not rounded
	}
	u := uint64(math.Abs(k))
	if k < 0 {
		*b = append(*b, '-')
	}
	// The digits of u, at least d+1 of them (a zero before the point),
	// from the last; then the whole part, and the decimals without their
	// trailing zeros.
	var tmp [24]byte
	i, point := len(tmp), len(tmp)-d
	for u >= 100 {
		q := u / 100
		r := 2 * (u - 100*q)
		i -= 2
		tmp[i], tmp[i+1] = digitPairs[r], digitPairs[r+1]
		u = q
	}
	if u >= 10 {
		i -= 2
		tmp[i], tmp[i+1] = digitPairs[2*u], digitPairs[2*u+1]
	} else {
		i--
		tmp[i] = byte('0' + u)
	}
	for i > point-1 {
		i--
		tmp[i] = '0'
	}
	*b = append(*b, tmp[i:point]...)
	end := len(tmp)
	for end > point && tmp[end-1] == '0' {
		end--
	}
	if end > point {
		*b = append(*b, '.')
		*b = append(*b, tmp[point:end]...)
	}
	return true
}

// digitPairs are the numbers 00 to 99 as two digits each.
const digitPairs = "00010203040506070809" + "10111213141516171819" + "20212223242526272829" + "30313233343536373839" +
	"40414243444546474849" + "50515253545556575859" + "60616263646566676869" + "70717273747576777879" +
	"80818283848586878889" + "90919293949596979899"

// roundTo is Book.roundCell for a style of d decimals (d < 0: none).
func roundTo(d int, v float64) float64 {
	if d < 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	p := math.Pow10(d)
	r := math.Round(v*p) / p
	if math.IsInf(r*p, 0) { // too large to scale: keep it
		return v
	}
	if r == 0 {
		return 0 // no negative zero
	}
	return r
}

// date writes d as its serial number; the zero Date writes nothing.
func (w *rowWriter) date(col, s int, d Date) {
	if d.IsZero() {
		return
	}
	w.int(col, s, excelUnixDay+d.unixDays())
}

// excelDays is the serial number of a day from the 1st of March 1900 on.
func excelDays(t time.Time) int64 {
	return int64(t.Sub(excelEpoch) / (24 * time.Hour))
}

func (w *rowWriter) formula(col, s int, f string) {
	if f == "" {
		return
	}
	w.b = append(w.b, `<c`...)
	w.ref(col)
	w.style(s)
	w.b = append(w.b, ` t="str"><f>`...)
	if strings.ContainsAny(f, "&<>\"'\t\n\r") || !utf8.ValidString(f) {
		var esc bytes.Buffer
		_ = xml.EscapeText(&esc, []byte(f))
		w.b = append(w.b, esc.Bytes()...)
	} else {
		w.b = append(w.b, f...)
	}
	w.b = append(w.b, `</f></c>`...)
}

// cell appends v at column col as excelize's StreamWriter.SetRow writes
// it, for the kinds of value the sheets pass: nil (no cell), text, whole
// numbers, float64, time.Time (with a style) and excelize.Cell holding
// one of them or a formula alone. Any other is an error: it would be
// written differently from excelize.
func (w *rowWriter) cell(col int, v any) error {
	s := 0
	switch c := v.(type) {
	case nil:
		return nil
	case excelize.Cell:
		s, v = c.StyleID, c.Value
		if c.Formula != "" {
			return w.formulaCell(col, s, c)
		}
	case *excelize.Cell:
		if c != nil {
			s, v = c.StyleID, c.Value
			if c.Formula != "" {
				return w.formulaCell(col, s, *c)
			}
		}
	}
	switch x := v.(type) {
	case nil: // a cell with a style and nothing in it
		w.b = append(w.b, `<c`...)
		w.ref(col)
		w.style(s)
		w.b = append(w.b, `></c>`...)
	case string:
		w.text(col, s, x)
	case int:
		w.int(col, s, int64(x))
	case int64:
		w.int(col, s, x)
	case int32:
		w.int(col, s, int64(x))
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			w.text(col, s, fmt.Sprint(x))
		} else {
			w.number(col, s, x)
		}
	case time.Time:
		// A style of ours (excelize would add one), midnight UTC from
		// the 1st of March 1900 on: a whole serial number.
		if s <= 0 || x.Location() != time.UTC || x.Before(excelFirstDay) || !x.Before(excelLastDay) || x.Truncate(24*time.Hour) != x {
			return fmt.Errorf("workbook: the fast rows do not write the time %v (style %d)", x, s)
		}
		w.int(col, s, excelDays(x))
	default:
		return fmt.Errorf("workbook: the fast rows do not write a %T", v)
	}
	return nil
}

func (w *rowWriter) formulaCell(col, s int, c excelize.Cell) error {
	if c.Value != nil {
		return fmt.Errorf("workbook: the fast rows do not write a formula with a value")
	}
	w.formula(col, s, c.Formula)
	return nil
}

// values writes row r of values from column A, height points tall (0:
// the default), as StreamWriter.SetRow writes it.
func (w *rowWriter) values(r int, height float64, values []any) error {
	if err := w.start(r, height); err != nil {
		return err
	}
	for i, v := range values {
		if err := w.cell(i+1, v); err != nil {
			return err
		}
	}
	return w.end()
}

// appendCellFloat writes v as excelize does: the shortest decimal form,
// cut to Excel's 15 significant digits (truncated, not rounded; digits
// cut before the decimal point become zeros).
func appendCellFloat(b []byte, v float64) []byte {
	start := len(b)
	b = strconv.AppendFloat(b, v, 'f', -1, 64)
	if math.Abs(v) == math.MaxFloat64 {
		return b
	}
	s := b[start:]
	dot := bytes.IndexByte(s, '.')
	sig := 0
	for i, c := range s {
		if c < '0' || c > '9' || (sig == 0 && c == '0') {
			continue
		}
		sig++
		if sig <= 15 {
			continue
		}
		if dot >= 0 && i > dot {
			s = s[:i]
			if s[len(s)-1] == '.' {
				s = s[:len(s)-1]
			}
			return b[:start+len(s)]
		}
		if dot < 0 {
			dot = len(s)
		}
		for ; i < dot; i++ {
			s[i] = '0'
		}
		return b[:start+dot]
	}
	return b
}

// trancheRowsPlain reports whether the fast rows can write m's Tranches
// sheet.
func trancheRowsPlain(m *Model) bool {
	for _, g := range m.Grants {
		for _, v := range []float64{g.SharePrice, g.Strike, g.Volatility, g.DividendYield, g.ExerciseMultiple, g.PostVestingExitRate} {
			if !finite(v) {
				return false
			}
		}
		for _, tr := range g.Tranches {
			if !plainDate(tr.VestDate) {
				return false
			}
			for _, v := range []float64{tr.YearsToExpiry, tr.YearsToVest, tr.RiskFreeRate, tr.FairValuePerShare, tr.ErrorEstimate,
				tr.ExpectedTermYears, tr.SimplifiedTerm, tr.SimplifiedRate, tr.BSMSimplifiedValue, tr.FairValuePerShare - tr.BSMSimplifiedValue, tr.FairValueTotal} {
				if !finite(v) {
					return false
				}
			}
		}
	}
	return true
}

// trancheRows writes n of the Tranches sheet's data rows from the from-th
// tranche, numbered from row 2, the cells of slowTrancheRows in the same
// order.
func trancheRows(b *Book, m *Model, from, n int) fastRows {
	return func(out io.Writer) error {
		s := b.Style
		w := b.newRowWriter(out)
		runs := formulaRuns(m, from, n)
		var run formulaRun
		row := 1
		err := eachTranche(m, from, n, func(g *Grant, tr *Tranche) error {
			row++
			if row > run.last {
				formulas := 3
				if g.Instrument == RSU {
					formulas = 1
				}
				run.begin(row, runs[0], formulas)
				runs = runs[1:]
			}
			_ = w.start(row, 0)
			w.text(1, s.Input, g.ID)
			w.text(2, s.Input, g.Holder)
			w.text(3, s.Input, g.Instrument)
			w.int(4, s.Int, int64(tr.Index))
			w.date(5, s.Date, tr.VestDate)
			w.int(6, s.Int, tr.Shares)
			w.float(7, s.MoneyPerShare, g.SharePrice)
			w.float(8, s.MoneyPerShare, g.Strike)
			w.float(9, s.Years, tr.YearsToExpiry)
			w.float(10, s.Years, tr.YearsToVest)
			w.float(11, s.Percent, g.Volatility)
			w.float(12, s.Percent, tr.RiskFreeRate)
			w.float(13, s.Percent, g.DividendYield)
			w.float(14, s.Number, g.ExerciseMultiple)
			w.float(15, s.Percent, g.PostVestingExitRate)
			w.float(16, s.MoneyPerShare, tr.FairValuePerShare)
			w.float(17, s.Number, tr.ErrorEstimate)
			w.float(18, s.Years, tr.ExpectedTermYears)
			w.float(19, s.Years, tr.SimplifiedTerm)
			w.float(20, s.Percent, tr.SimplifiedRate)
			w.float(21, s.MoneyPerShare, tr.BSMSimplifiedValue)
			if g.Instrument == RSU {
				w.shared(24, s.MoneyPerShare, bsmRSU, &run, 0)
			} else {
				w.shared(22, s.Number, bsmD1, &run, 0)
				w.shared(23, s.Number, bsmD2, &run, 1)
				w.shared(24, s.MoneyPerShare, bsmValue, &run, 2)
			}
			w.float(25, s.MoneyPerShare, tr.FairValuePerShare-tr.BSMSimplifiedValue)
			w.float(26, s.Money, tr.FairValueTotal)
			return w.end()
		})
		if err != nil {
			return err
		}
		return w.flush()
	}
}

// A formula repeated down a column is written once, as a shared formula
// (ECMA-376 Part 1, 18.3.1.40): the first cell of a run of rows holds its
// text, a number (si) and the range of cells that share it (ref); each
// cell below holds only the number, and its formula is the first one's
// with the references moved down by as many rows (relative references,
// 18.17.2.3). A Tranches row's three formulas were a fifth of its XML.

// formulaRun is a run of consecutive Tranches rows whose grants take the
// same formulas (RSU or not), each of which the run shares.
type formulaRun struct {
	first, last int // the run's rows
	base        int // the number of the run's first shared formula
	next        int // the number of the sheet's next shared formula
}

// begin starts a run of n rows at row with k formulas a row; a run of one
// row shares nothing.
func (r *formulaRun) begin(row, n, k int) {
	r.first, r.last, r.base = row, row+n-1, r.next
	if n > 1 {
		r.next += k
	}
}

// formulaRuns are the lengths of the runs of consecutive rows among n
// tranches from the from-th (eachTranche) whose grants take the same
// formulas.
func formulaRuns(m *Model, from, n int) []int {
	var runs []int
	last := false
	_ = eachTranche(m, from, n, func(g *Grant, _ *Tranche) error {
		rsu := g.Instrument == RSU
		if len(runs) == 0 || rsu != last {
			runs = append(runs, 0)
			last = rsu
		}
		runs[len(runs)-1]++
		return nil
	})
	return runs
}

// shared writes the formula of template f (rowFormula) at column col of
// the row being written, as the k-th shared formula of run.
func (w *rowWriter) shared(col, s int, f rowFormula, run *formulaRun, k int) {
	if run.first == run.last {
		w.template(col, s, f)
		return
	}
	w.b = append(w.b, `<c`...)
	w.at(col)
	w.style(s)
	w.b = append(w.b, ` t="str"><f t="shared"`...)
	if w.r != run.first {
		w.b = append(w.b, ` si="`...)
		w.b = strconv.AppendInt(w.b, int64(run.base+k), 10)
		w.b = append(w.b, `"/></c>`...)
		return
	}
	w.b = append(w.b, ` ref="`...)
	w.b = appendColumn(w.b, col)
	w.b = append(w.b, w.row...)
	w.b = append(w.b, ':')
	w.b = appendColumn(w.b, col)
	w.b = strconv.AppendInt(w.b, int64(run.last), 10)
	w.b = append(w.b, `" si="`...)
	w.b = strconv.AppendInt(w.b, int64(run.base+k), 10)
	w.b = append(w.b, `">`...)
	w.appendTemplate(f)
	w.b = append(w.b, `</f></c>`...)
}

// template writes the formula of template f (rowFormula) on the row
// being written.
func (w *rowWriter) template(col, s int, f rowFormula) {
	w.b = append(w.b, `<c`...)
	w.ref(col)
	w.style(s)
	w.b = append(w.b, ` t="str"><f>`...)
	w.appendTemplate(f)
	w.b = append(w.b, `</f></c>`...)
}

// appendTemplate appends template f's formula on the row being written.
func (w *rowWriter) appendTemplate(f rowFormula) {
	for i, part := range f {
		if i > 0 {
			w.b = append(w.b, w.row...)
		}
		w.b = append(w.b, part...)
	}
}
