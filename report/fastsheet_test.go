package report

import (
	"archive/zip"
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"
)

// renderBothWays writes m's workbook with the fast sheet writers and again
// with every sheet through excelize, and returns both zips' entries.
func renderBothWays(t *testing.T, m *Model) (fast, slow map[string][]byte) {
	t.Helper()
	render := func(slow bool) map[string][]byte {
		slowSheets = slow
		defer func() { slowSheets = false }()
		var buf bytes.Buffer
		if err := WriteWorkbook(&buf, m); err != nil {
			t.Fatal(err)
		}
		return zipEntries(t, buf.Bytes())
	}
	return render(false), render(true)
}

func zipEntries(t *testing.T, b []byte) map[string][]byte {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string][]byte{}
	for _, f := range zr.File {
		r, err := f.Open()
		if err != nil {
			t.Fatal(err)
		}
		data, err := io.ReadAll(r)
		r.Close()
		if err != nil {
			t.Fatal(err)
		}
		out[f.Name] = data
	}
	return out
}

// The Tranches rows written apart read back as the cells excelize's
// stream writer writes: every cell's value, formula, style and type.
func TestFastTrancheRowsMatchExcelize(t *testing.T) {
	m := fixture() // its holders include a formula-like code and non-Latin letters
	for i := range m.Grants {
		if i > 0 {
			m.Grants[i].Holder = awkwardTexts[i%len(awkwardTexts)]
		}
	}
	// Numbers at the edges of the 15-digit rule and a missing vest date.
	tr := &m.Grants[0].Tranches[0]
	tr.FairValuePerShare = 1234567.891234567891
	tr.ErrorEstimate = 0.000000123456789012345678
	tr.YearsToExpiry = 123456789012345678901.0
	tr.SimplifiedRate = math.Copysign(0, -1)
	tr.RiskFreeRate = -0.0421826842478506123
	m.Grants[0].Tranches[1].VestDate = Date{}
	m.Grants[0].Tranches[2].VestDate = DateOf(time.Date(1900, 3, 1, 0, 0, 0, 0, time.UTC))
	if !trancheRowsPlain(m) {
		t.Fatal("the test model does not take the fast rows")
	}
	sameBothWays(t, "", m)
}

// Runs of the formulas' rows of every length: RSUs and options of one
// tranche and of several, one after the other, alone and in runs, the
// runs cut where a sheet ends (the Tranches sheet continued).
func TestFastTrancheFormulaRuns(t *testing.T) {
	m := fixture()
	var opt, rsu Grant
	for _, g := range m.Grants {
		if g.Instrument == RSU {
			rsu = g
		} else if len(g.Tranches) > 1 {
			opt = g
		}
	}
	if rsu.ID == "" || opt.ID == "" {
		t.Fatal("the fixture has no RSU or no option of several tranches")
	}
	// o: an option, r: an RSU; the digit is its tranches.
	m.Grants = nil
	for i, k := range strings.Fields("o1 r1 o1 o1 r1 r1 o3 r2 o1 r3 o2 o2 r1") {
		g := opt
		if k[0] == 'r' {
			g = rsu
		}
		g.ID = fmt.Sprintf("%s-%02d", g.ID, i)
		g.Tranches = append([]Tranche(nil), g.Tranches...)
		for len(g.Tranches) < int(k[1]-'0') {
			g.Tranches = append(g.Tranches, g.Tranches[0])
		}
		g.Tranches = g.Tranches[:k[1]-'0']
		m.Grants = append(m.Grants, g)
	}
	Summarize(m)
	if !trancheRowsPlain(m) {
		t.Fatal("the test model does not take the fast rows")
	}
	sameBothWays(t, "", m)
	for _, limit := range []int{2, 3, 5} {
		lowerRowLimit(t, limit)
		sameBothWays(t, "limit "+strconv.Itoa(limit)+": ", m)
	}
}

// sameBothWays checks that m's workbook written with the fast rows reads
// back as the one written through excelize: every entry that is not a
// worksheet the same bytes; every worksheet the same XML around its
// rows, no placeholder left, and through excelize the same cells (value,
// formula, style and type) and row heights.
func sameBothWays(t *testing.T, label string, m *Model) {
	t.Helper()
	fast, slow := renderBothWays(t, m)
	if len(fast) != len(slow) {
		t.Fatalf("%s%d entries fast, %d through excelize", label, len(fast), len(slow))
	}
	for name, want := range slow {
		got, ok := fast[name]
		if !ok {
			t.Errorf("%s%s missing from the fast workbook", label, name)
			continue
		}
		if bytes.Contains(got, []byte(rowsToken)) {
			t.Errorf("%s%s still holds the placeholder", label, name)
		}
		if strings.HasPrefix(name, "xl/worksheets/") {
			checkSharedFormulas(t, label+name, got)
			got, want = aroundRows(got), aroundRows(want)
		}
		if !bytes.Equal(got, want) {
			i := 0
			for i < len(got) && i < len(want) && got[i] == want[i] {
				i++
			}
			lo := max(0, i-120)
			t.Errorf("%s%s differs at byte %d:\n fast: %q\nslow: %q", label, name, i, got[lo:min(len(got), i+120)], want[lo:min(len(want), i+120)])
		}
	}
	sameCells(t, label, zipBytes(t, fast), zipBytes(t, slow))
}

// aroundRows is a worksheet's XML without the rows of its sheetData.
func aroundRows(x []byte) []byte {
	i, j := bytes.Index(x, []byte("<sheetData>")), bytes.Index(x, []byte("</sheetData>"))
	if i < 0 || j < i {
		return x
	}
	return append(append([]byte(nil), x[:i]...), x[j:]...)
}

// zipBytes is a zip archive of entries.
func zipBytes(t *testing.T, entries map[string][]byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	for name, b := range entries {
		w, err := zw.Create(name)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := w.Write(b); err != nil {
			t.Fatal(err)
		}
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// sameCells checks, through excelize, that two workbooks have the same
// sheets, dimensions, row heights and cells: every cell's raw value,
// formula, style and type.
func sameCells(t *testing.T, label string, got, want []byte) {
	t.Helper()
	open := func(b []byte) *excelize.File {
		f, err := excelize.OpenReader(bytes.NewReader(b))
		if err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { f.Close() })
		return f
	}
	g, w := open(got), open(want)
	sheets := w.GetSheetList()
	if gs := g.GetSheetList(); !slices.Equal(gs, sheets) {
		t.Fatalf("%ssheets %q, want %q", label, gs, sheets)
	}
	cells := 0
	for _, sh := range sheets {
		gd, _ := g.GetSheetDimension(sh)
		wd, err := w.GetSheetDimension(sh)
		if err != nil || gd != wd {
			t.Errorf("%s%s: dimension %q, want %q (%v)", label, sh, gd, wd, err)
			continue
		}
		_, last, _ := strings.Cut(wd, ":")
		cols, rows, err := excelize.CellNameToCoordinates(last)
		if err != nil {
			t.Fatalf("%s%s: dimension %q: %v", label, sh, wd, err)
		}
		for r := 1; r <= rows; r++ {
			gh, _ := g.GetRowHeight(sh, r)
			wh, _ := w.GetRowHeight(sh, r)
			if gh != wh {
				t.Errorf("%s%s row %d: height %v, want %v", label, sh, r, gh, wh)
			}
			for c := 1; c <= cols; c++ {
				cell, _ := excelize.CoordinatesToCellName(c, r)
				if a, b := cellOf(t, g, sh, cell), cellOf(t, w, sh, cell); a != b {
					t.Errorf("%s%s!%s: %+v, want %+v", label, sh, cell, a, b)
				}
				cells++
			}
		}
	}
	if cells == 0 {
		t.Errorf("%sno cells compared", label)
	}
}

// sheetCell is a cell of a worksheet's XML with its place; hasRef says
// whether it gives its place by its own r attribute.
type sheetCell struct {
	col, row int
	hasRef   bool
	f        *struct {
		T    string `xml:"t,attr"`
		Ref  string `xml:"ref,attr"`
		Si   *int   `xml:"si,attr"`
		Text string `xml:",chardata"`
	}
}

// sheetCells reads the cells of a worksheet's XML in order, each at its
// place: a row or cell without its r attribute is the one after the
// row or cell before it (ECMA-376 Part 1, 18.3.1.73 and 18.3.1.4), the
// first the sheet's first row or the row's first column.
func sheetCells(t *testing.T, name string, x []byte) []sheetCell {
	t.Helper()
	type cellXML struct {
		R string `xml:"r,attr"`
		F *struct {
			T    string `xml:"t,attr"`
			Ref  string `xml:"ref,attr"`
			Si   *int   `xml:"si,attr"`
			Text string `xml:",chardata"`
		} `xml:"f"`
	}
	var ws struct {
		Rows []struct {
			R     int       `xml:"r,attr"`
			Cells []cellXML `xml:"c"`
		} `xml:"sheetData>row"`
	}
	if err := xml.Unmarshal(x, &ws); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	var out []sheetCell
	row := 0
	for _, r := range ws.Rows {
		if row++; r.R != 0 {
			if r.R < row {
				t.Fatalf("%s: row %d after row %d", name, r.R, row-1)
			}
			row = r.R
		}
		col := 0
		for _, c := range r.Cells {
			if col++; c.R != "" {
				cc, rr, err := excelize.CellNameToCoordinates(c.R)
				if err != nil || rr != row || cc < col {
					t.Fatalf("%s: cell %s after column %d of row %d (%v)", name, c.R, col-1, row, err)
				}
				col = cc
			}
			out = append(out, sheetCell{col: col, row: row, hasRef: c.R != "", f: c.F})
		}
	}
	return out
}

// checkSharedFormulas checks the shared formulas of a worksheet's XML
// (ECMA-376 Part 1, 18.3.1.40): each is given once, with its text and a
// range (ref) that is exactly the cells of one column that refer to it,
// all of them below the one that gives it, rows one after the other; and
// every cell of a shared formula names its place (r), which the format
// leaves optional but widely used readers need to move the formula's
// references (openpyxl 3.0.9, from Debian's python3-openpyxl, fails on a
// shared formula's cell without it).
func checkSharedFormulas(t *testing.T, name string, x []byte) {
	t.Helper()
	type use struct {
		ref         string
		first, last int // rows
		col, n      int
	}
	shared := map[int]*use{}
	for _, c := range sheetCells(t, name, x) {
		if c.f == nil || c.f.T != "shared" {
			continue
		}
		if c.f.Si == nil {
			t.Errorf("%s: a shared formula at column %d row %d without si", name, c.col, c.row)
			continue
		}
		if !c.hasRef {
			t.Errorf("%s: the shared formula's cell at column %d row %d without its r attribute", name, c.col, c.row)
		}
		u := shared[*c.f.Si]
		if c.f.Ref != "" {
			if u != nil || c.f.Text == "" {
				t.Errorf("%s: shared formula %d given twice or without its text", name, *c.f.Si)
			}
			shared[*c.f.Si] = &use{ref: c.f.Ref, first: c.row, last: c.row, col: c.col, n: 1}
			continue
		}
		if u == nil || c.f.Text != "" || c.col != u.col || c.row != u.last+1 {
			t.Errorf("%s: column %d row %d refers to shared formula %d out of place (%+v)", name, c.col, c.row, *c.f.Si, u)
			continue
		}
		u.last, u.n = c.row, u.n+1
	}
	for si, u := range shared {
		a, _ := excelize.CoordinatesToCellName(u.col, u.first)
		b, _ := excelize.CoordinatesToCellName(u.col, u.last)
		if u.ref != a+":"+b || u.n < 2 {
			t.Errorf("%s: shared formula %d has range %s, used by %d cells from %s to %s", name, si, u.ref, u.n, a, b)
		}
	}
}

// readCell is what a reader sees of a cell.
type readCell struct {
	Value, Formula string
	Style          int
	Type           excelize.CellType
}

func cellOf(t *testing.T, f *excelize.File, sheet, cell string) readCell {
	t.Helper()
	var c readCell
	var err [4]error
	c.Value, err[0] = f.GetCellValue(sheet, cell, excelize.Options{RawCellValue: true})
	c.Formula, err[1] = f.GetCellFormula(sheet, cell)
	c.Style, err[2] = f.GetCellStyle(sheet, cell)
	c.Type, err[3] = f.GetCellType(sheet, cell)
	for _, e := range err {
		if e != nil {
			t.Fatalf("%s!%s: %v", sheet, cell, e)
		}
	}
	return c
}

// Every sheet whose rows Book.rows writes apart (Assumptions, Grants,
// Condition values; the expense sheets are checked with the expense
// model) reads back as the cells excelize writes, with
// awkward text and numbers in every column of the Assumptions and Grants
// sheets: values of every kind, a missing grant and date, a wrapped tall
// row, a text longer than a cell holds, numbers that are not finite or
// pass 15 digits, negative zero.
func TestFastSheetRowsMatchExcelize(t *testing.T) {
	m := fixture()
	odd := []float64{math.NaN(), math.Inf(1), math.Inf(-1), math.Copysign(0, -1), 1234567.891234567891, 123456789012345678901.0,
		-0.0421826842478506123, 1e-9, 0.1 + 0.2, 129999.999999999}
	kinds := []string{KindPercent, KindMoney, KindYears, KindNumber, KindDate, KindText, "other"}
	for i, s := range awkwardTexts {
		a := Assumption{GrantID: s, Name: awkwardTexts[(i+1)%len(awkwardTexts)], Kind: kinds[i%len(kinds)], Value: odd[i%len(odd)],
			Text: awkwardTexts[(i+2)%len(awkwardTexts)], Ref: awkwardTexts[(i+3)%len(awkwardTexts)], Source: s}
		if i%3 == 0 {
			a.GrantID = ""
			a.EffectiveDate = DateOf(time.Date(2026, 7, 1, 0, 0, 0, 0, time.UTC))
		}
		if i%4 == 0 {
			a.Value = float64(i * 1000) // a whole number
		}
		if i%5 == 0 {
			a.Source = strings.Repeat(s+" wrapped source ", 12)
		}
		m.Assumptions = append(m.Assumptions, a)
	}
	m.Assumptions = append(m.Assumptions, Assumption{Name: "long", Kind: KindText, Text: strings.Repeat("x&", MaxCellChars), Source: "short"})
	for i := range m.Grants {
		g := &m.Grants[i]
		g.Holder = awkwardTexts[(i+4)%len(awkwardTexts)]
		g.Method = awkwardTexts[(i+5)%len(awkwardTexts)]
		g.Purpose = awkwardTexts[(i+6)%len(awkwardTexts)]
		g.Classification = awkwardTexts[(i+7)%len(awkwardTexts)]
		g.Strike = odd[i%len(odd)]
		g.Volatility = odd[(i+1)%len(odd)]
		g.FairValueTotal = odd[(i+2)%len(odd)]
	}
	m.Grants[0].HireDate = Date{}
	m.Grants[1].HireDate = DateOf(time.Date(1900, 3, 1, 0, 0, 0, 0, time.UTC))
	sameBothWays(t, "", m)
	// The cost centres, the journal and the financing warrants are in
	// TestFastExpenseRowsMatchExcelize; the condition values here.
	sameBothWays(t, "conditions: ", conditioned(t))
}

// awkwardTexts are texts that excelize escapes one way or another: XML's
// special characters, literal _xHHHH_ escapes (ECMA-376 Part 1,
// 22.9.2.19), characters XML 1.0 cannot hold, white space at either end,
// non-ASCII letters and invalid UTF-8.
var awkwardTexts = []string{
	"R&D", "S&M", "a<b>c", `say "hi"`, "it's", "=HYPERLINK(\"x\")",
	"_x0041_", "a_x005F_x0041_b", "_x005F_", "_x005F_x0041_", "_x005F_xD800_", "_xD800_ and _xdfff_", "_x12G4_", "__x0041__x0042_", "x0041_",
	"tab\tin", "\tlead", "trail\n", "line\nfeed", "cr\r", "\x01ctl\x1f", "del\x7f", "\ufffe",
	" lead", "trail ", "", "plain", "Ø-7 Søren", "Ελληνικά", "日本語", "emoji 😀", "bad \xff\xfe utf-8",
}

// The fast rows write each text cell as excelize's stream writer does:
// escaped XML, the xml:space attribute, the _x005F_ escape and the cut to
// a cell's length, byte for byte.
func TestAppendCellTextMatchesExcelize(t *testing.T) {
	texts := append([]string{}, awkwardTexts...)
	texts = append(texts, strings.Repeat("é&", 20000), strings.Repeat("😀", 20000), strings.Repeat("_x0041_", 5000)+" ", strings.Repeat("a", MaxCellChars+1))
	for _, s := range texts {
		f := excelize.NewFile()
		sw, err := f.NewStreamWriter("Sheet1")
		if err != nil {
			t.Fatal(err)
		}
		row := []any{excelize.Cell{StyleID: 0, Value: s}}
		cutCells(row)
		if err := sw.SetRow("A1", row); err != nil {
			t.Fatal(err)
		}
		if err := sw.Flush(); err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := f.Write(&buf); err != nil {
			t.Fatal(err)
		}
		sheet := zipEntries(t, buf.Bytes())["xl/worksheets/sheet1.xml"]
		i, j := bytes.Index(sheet, []byte(`<c r="A1"`)), bytes.Index(sheet, []byte(`</c></row>`))
		if i < 0 || j < i {
			t.Fatalf("%.40q: no cell A1 in %.300q", s, sheet)
		}
		want := string(sheet[i : j+len(`</c>`)])
		w := &rowWriter{row: []byte("1")}
		w.text(1, 0, s)
		if got := string(w.b); got != want {
			t.Errorf("%.40q:\n fast: %.200q\nexcelize: %.200q", s, got, want)
		}
	}
}

// plainText picks the texts written as they are; a number the fast rows
// cannot write keeps the sheet on excelize's path.
func TestFastTrancheRowsRefuseAwkwardValues(t *testing.T) {
	for _, s := range []string{"a&b", "<x>", "a_x0041_", " lead", "trail ", "Ελληνικά", "tab\t", "q\"", "it's"} {
		if plainText(s) {
			t.Errorf("plainText(%q) = true", s)
		}
	}
	for _, s := range []string{"", "OQ-00001", "E00895", "option", "A B"} {
		if !plainText(s) {
			t.Errorf("plainText(%q) = false", s)
		}
	}
	m := fixture()
	m.Grants[0].Tranches[0].ErrorEstimate = math.NaN()
	if trancheRowsPlain(m) {
		t.Error("a NaN would be written by the fast rows")
	}
}

// The digits of a rounded value written from its scaled whole number
// (appendScaled) are those of the shortest-decimal search excelize makes
// (appendCellFloat of the value Book.roundCell gives), for values of every
// size and sign, at each style's decimals, around the 10^15 bound, at
// halves and at the values sums of money leave (129999.999999999).
func TestAppendScaledMatchesShortestDecimal(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	var vs []float64
	for i := 0; i < 200000; i++ {
		mag := math.Pow10(rng.IntN(36) - 18)
		v := rng.Float64() * mag
		if rng.IntN(2) == 0 {
			v = -v
		}
		vs = append(vs, v)
	}
	for d := 0; d <= 8; d++ {
		p := math.Pow10(d)
		for _, k := range []float64{1, 5, 9, 10, 99, 999999999999999, 1e15 - 1, 1e15, 1e15 + 1, 123456789012345, 4503599627370496} {
			vs = append(vs, k/p, -k/p, (k+0.5)/p, math.Nextafter(k/p, 0), math.Nextafter(k/p, 2*k/p))
		}
	}
	vs = append(vs, 0, math.Copysign(0, -1), 129999.999999999, 0.1+0.2, 1e-9, 5e-9, math.MaxFloat64, math.SmallestNonzeroFloat64,
		math.NaN(), math.Inf(1), math.Inf(-1))
	scaled := 0
	for d := 0; d <= 8; d++ {
		for _, v := range vs {
			want := string(appendCellFloat(nil, roundTo(d, v)))
			var got []byte
			if appendScaled(&got, v, d, false) {
				scaled++
				if string(got) != want {
					t.Fatalf("v %v to %d decimals: scaled %q, shortest %q", v, d, got, want)
				}
			}
			r := roundTo(d, v)
			got = got[:0]
			if appendScaled(&got, r, d, true) && string(got) != string(appendCellFloat(nil, r)) {
				t.Fatalf("rounded %v to %d decimals: scaled %q, shortest %q", r, d, got, appendCellFloat(nil, r))
			}
		}
	}
	if scaled < len(vs) {
		t.Errorf("only %d of %d values took the scaled path", scaled, 9*len(vs))
	}
}
