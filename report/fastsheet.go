package report

import (
	"bytes"
	"encoding/xml"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"
	"unicode/utf16"
	"unicode/utf8"
)

// The Tranches sheet of a large ledger has a row per tranche, hundreds of
// thousands of rows of 26 cells, and excelize's stream writer spent most
// of the workbook's time on it cell by cell. When every value on the sheet
// is of a kind written here (any text, escaped as excelize escapes it;
// finite numbers; dates after 1900-02-28), its rows are written here instead,
// byte for byte as the stream writer writes them: excelize writes the
// sheet with the header and a placeholder row, and canonicalZip writes
// the rows in the placeholder's place as it copies the archive. Otherwise the
// sheet goes through excelize as every other sheet does. A test checks
// that both ways give the same sheet XML.

// slowSheets, set by a test, sends the Tranches sheet through excelize.
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

// fastRows writes a sheet's data rows, in the stream writer's form, to w.
type fastRows func(w io.Writer) error

// fastTable writes the data rows of table t with rows in place of
// excelize, and closes it: the rows are written as the archive is put in
// order (canonicalZip).
func (b *Book) fastTable(t *Table, rows fastRows) error {
	if err := t.Row(placeholder(len(b.fast))); err != nil {
		return err
	}
	b.fast = append(b.fast, rows)
	return t.Close()
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

// plainDate reports whether d is a date the fast rows can write.
func plainDate(d Date) bool {
	t := d.Time()
	return d.IsZero() || (!t.Before(excelFirstDay) && t.Before(excelLastDay))
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// rowWriter appends cells in the stream writer's form.
type rowWriter struct {
	b     []byte
	row   []byte                             // the row number as text
	round func(style int, v float64) float64 // Book.roundCell, as Book.Cell rounds
}

func (w *rowWriter) ref(col int) {
	w.b = append(w.b, ` r="`...)
	w.b = appendColumn(w.b, col)
	w.b = append(w.b, w.row...)
	w.b = append(w.b, '"')
}

func appendColumn(b []byte, col int) []byte {
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
	if s != 0 {
		w.b = append(w.b, ` s="`...)
		w.b = strconv.AppendInt(w.b, int64(s), 10)
		w.b = append(w.b, '"')
	}
}

// text is an inline string.
func (w *rowWriter) text(col, s int, v string) {
	w.b = append(w.b, `<c`...)
	w.ref(col)
	w.style(s)
	w.b = append(w.b, ` t="inlineStr"><is>`...)
	w.b = appendCellText(w.b, v)
	w.b = append(w.b, `</is></c>`...)
}

func (w *rowWriter) value(col, s int, v []byte) {
	w.b = append(w.b, `<c`...)
	w.ref(col)
	w.style(s)
	w.b = append(w.b, `><v>`...)
	w.b = append(w.b, v...)
	w.b = append(w.b, `</v></c>`...)
}

func (w *rowWriter) int(col, s int, v int64) {
	var tmp [24]byte
	w.value(col, s, strconv.AppendInt(tmp[:0], v, 10))
}

func (w *rowWriter) float(col, s int, v float64) {
	var tmp [40]byte
	w.value(col, s, appendCellFloat(tmp[:0], w.round(s, v)))
}

// date writes d as its serial number; the zero Date writes nothing.
func (w *rowWriter) date(col, s int, d Date) {
	if d.IsZero() {
		return
	}
	days := d.Time().Sub(excelEpoch) / (24 * time.Hour)
	w.int(col, s, int64(days))
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
		w := &rowWriter{b: make([]byte, 0, 8192), round: b.roundCell}
		row := 1
		return eachTranche(m, from, n, func(g *Grant, tr *Tranche) error {
			row++
			w.row = strconv.AppendInt(w.row[:0], int64(row), 10)
			d1, d2, bsm := bsmFormulas(row, g.Instrument)
			w.b = append(w.b[:0], `<row r="`...)
			w.b = append(w.b, w.row...)
			w.b = append(w.b, `">`...)
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
			w.formula(22, s.Number, d1)
			w.formula(23, s.Number, d2)
			w.formula(24, s.MoneyPerShare, bsm)
			w.float(25, s.MoneyPerShare, tr.FairValuePerShare-tr.BSMSimplifiedValue)
			w.float(26, s.Money, tr.FairValueTotal)
			w.b = append(w.b, `</row>`...)
			_, err := out.Write(w.b)
			return err
		})
	}
}
