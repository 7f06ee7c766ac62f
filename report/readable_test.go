package report

// Issue 14: a memo and a workbook a reviewer can read without a second
// look. The memo's checks read the text pdftotext (Debian poppler-utils)
// extracts; the workbook's read the cells and the sheets' XML back.

import (
	"archive/zip"
	"bytes"
	"fmt"
	"image/png"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
	"gonum.org/v1/plot/vg"
)

// pageTexts is the memo's text page by page.
func pageTexts(t *testing.T, m *Model) []string {
	t.Helper()
	return strings.Split(pdfText(t, renderMemo(t, m)), "\f")
}

func TestFitColumns(t *testing.T) {
	chars := func(s string, bold bool) float64 { // 1 mm a character, bold 1.2
		if bold {
			return 1.2 * float64(len([]rune(s)))
		}
		return float64(len([]rune(s)))
	}
	cols := []Col{{"Grant", 10, false}, {"Holder", 8, false}, {"Instrument", 8, false}, {"Grant date", 8, false}, {"Notes", 60, false}}
	rows := [][]string{
		{"TW-038", "LENDER-A", "option", "2023-10-07", "short"},
		{rowBold + "Total", "INVESTOR-2", "warrant (financing)", "2024-02-15", ""},
	}
	got := fitColumns(cols, rows, 170, 4, chars)
	for j, least := range []float64{1.2*5 + 4, 10 + 4, 1.2*10 + 4, 10 + 4} {
		if got[j].Width < least-1e-9 {
			t.Errorf("column %q is %.2f mm wide, below its longest word (%.2f mm)", got[j].Header, got[j].Width, least)
		}
	}
	// Room the notes do not need goes to the instrument column, whose
	// cells would wrap.
	if w := got[2].Width; w < float64(len("warrant (financing)"))+4 {
		t.Errorf("instrument column %.2f mm, want room for \"warrant (financing)\" on one line", w)
	}
	if total := sumWidths(got); total > 170+1e-9 {
		t.Errorf("total width %.2f mm, more than the page's 170", total)
	}
	// Too wide for the page: the columns give back room down to their
	// longest words, never below.
	wide := fitColumns([]Col{{"A", 100, false}, {"B", 100, false}}, [][]string{{"aaaaaaaaaaaaaaaaaaaaaaaaa", "b"}}, 170, 4, chars)
	if total := sumWidths(wide); math.Abs(total-170) > 1e-9 {
		t.Errorf("total width %.2f mm, want the 170 of the page", total)
	}
	if wide[0].Width < 29 {
		t.Errorf("column A %.2f mm, below its longest word", wide[0].Width)
	}
}

// The grant table never breaks a date, a holder code or a header word
// across lines (issue 14 saw "2023-10-0 / 7", "LENDER- / A",
// "Instrumen / t").
func TestMemoGrantTableWords(t *testing.T) {
	m := fixture()
	m.Grants[2].Holder = "LENDER-A"
	m.Grants[3].Holder = "INVESTOR-2"
	pages := pageTexts(t, m)
	var results string
	for _, p := range pages {
		if strings.Contains(p, "Results by grant and instrument") {
			results = p
		}
	}
	if results == "" {
		t.Fatal("no page with the results section")
	}
	for _, g := range m.Grants {
		for _, word := range []string{g.ID, g.GrantDate.String()} {
			if !strings.Contains(results, word) {
				t.Errorf("results page lacks %q whole", word)
			}
		}
	}
	for _, word := range []string{"LENDER-A", "INVESTOR-2", "Instrument", "Holder", "Tranches"} {
		if !strings.Contains(results, word) {
			t.Errorf("results page lacks %q whole", word)
		}
	}
}

// One minus sign, U+2212, throughout the memo, and changes in words:
// "3.88% below it", never "-3.88% from it".
func TestMemoOneMinusSign(t *testing.T) {
	m := fixture()
	m.Totals.BSMSimplifiedTotal = m.Totals.FairValueTotal / (1 - 0.0388)
	text := strings.Join(pageTexts(t, m), " ")
	flat := strings.Join(strings.Fields(text), " ")
	if hyphen := regexp.MustCompile(`(^|[\s(])-[0-9]`).FindString(flat); hyphen != "" {
		t.Errorf("memo has a hyphen-minus before a figure: %q", hyphen)
	}
	if !strings.Contains(flat, "−") {
		t.Error("memo has no typographic minus: the fixture has negative changes")
	}
	if !strings.Contains(flat, "so the lattice is 3.88% below it") {
		t.Error("summary does not say the lattice is 3.88% below the simplified method")
	}
	if strings.Contains(flat, "% from it") {
		t.Error(`summary says "% from it"`)
	}
}

// Letter for companies reporting in USD, A4 otherwise, unless the
// Company sheet's paper_size says which (ISO 216 A4: 210 × 297 mm; US
// Letter: 8.5 × 11 in, 612 × 792 points, common practice).
func TestMemoPaperSize(t *testing.T) {
	for _, c := range []struct {
		currency, paper, want string
	}{
		{"EUR", "", "[0 0 595.28 841.89]"},
		{"USD", "", "[0 0 612.00 792.00]"},
		{"EUR", "letter", "[0 0 612.00 792.00]"},
		{"USD", "a4", "[0 0 595.28 841.89]"},
	} {
		m := fixture()
		m.Company.Currency, m.Company.PaperSize = c.currency, c.paper
		pdf := string(renderMemo(t, m))
		if !strings.Contains(pdf, "/MediaBox "+c.want) {
			i := strings.Index(pdf, "/MediaBox")
			t.Errorf("%s, paper_size %q: want MediaBox %s, have %.40s", c.currency, c.paper, c.want, pdf[max(i, 0):])
		}
	}
}

// A consultant's memo names the client and the preparer on the cover and
// at the top of every later page.
func TestMemoPreparerAndClient(t *testing.T) {
	m := fixture()
	m.Company.Preparer = "Halden Rowe Advisory"
	m.Company.Client = "Larkspur Holdings plc"
	pages := pageTexts(t, m)
	cover := strings.Join(strings.Fields(pages[0]), " ")
	for _, want := range []string{"Prepared for Larkspur Holdings plc", "Prepared by Halden Rowe Advisory"} {
		if !strings.Contains(cover, want) {
			t.Errorf("cover lacks %q", want)
		}
	}
	for i, p := range pages[1 : len(pages)-1] {
		head := strings.Join(strings.Fields(strings.SplitN(p, "\n", 2)[0]), " ")
		if !strings.Contains(head, "Larkspur Holdings plc") || !strings.Contains(head, "Prepared by Halden Rowe Advisory") {
			t.Errorf("page %d's running head %q lacks the client or the preparer", i+2, head)
		}
	}
	// Without them, neither line appears.
	plain := strings.Join(pageTexts(t, fixture()), " ")
	if strings.Contains(plain, "Prepared for") || strings.Contains(plain, "Prepared by") {
		t.Error("memo without preparer or client names one")
	}
}

// The headline says what it covers: every award granted, each at its
// measurement date, with the part still outstanding beside it.
func TestMemoHeadlineOutstanding(t *testing.T) {
	m := expenseModelFor(t, expenseSchedule())
	o := outstandingOf(m)
	if !o.OK || o.Shares == 0 {
		t.Fatalf("outstanding %+v: the expense schedule has awards outstanding", o)
	}
	// By hand: the closing lines of the roll-forwards, shares times the
	// weighted-average grant-date fair value.
	x := m.Expense.Disclosures
	var want float64
	for _, r := range []RollForward{x.Options, x.RSUs, x.Warrants} {
		end := r.Lines[len(r.Lines)-1]
		want += float64(end.Shares) * end.WeightedFairValue
	}
	if math.Abs(o.FairValue-want) > 1e-9 {
		t.Errorf("outstanding fair value %v, want %v", o.FairValue, want)
	}
	pages := pageTexts(t, m)
	cover := strings.Join(strings.Fields(pages[0]), " ")
	cur := m.Company.Currency
	for _, want := range []string{"Fair value granted " + money(m.Totals.FairValueTotal, cur), "at its measurement date",
		"Still outstanding " + money(o.FairValue, cur)} {
		if !strings.Contains(cover, want) {
			t.Errorf("cover lacks %q", want)
		}
	}
	summary := strings.Join(strings.Fields(pages[1]), " ")
	for _, want := range []string{"Fair value of every award granted, each at its measurement date " + money(m.Totals.FairValueTotal, cur),
		"Of which outstanding at the period end (grant-date fair value) " + money(o.FairValue, cur)} {
		if !strings.Contains(summary, want) {
			t.Errorf("summary lacks %q", want)
		}
	}
}

// Section 3 lists a company-wide input once, with the grants that take
// it, at every size of schedule: 26 grants that share every input give
// one row per input, not 26.
func TestMemoAssumptionsGrouped(t *testing.T) {
	m := bigModel(26)
	m.Assumptions = append(m.Assumptions, Assumption{Name: "volatility", Kind: KindPercent, Value: 0.5, Text: "0.5", Ref: "Assumptions!B2", Source: "peer median"})
	var sec string
	for _, p := range pageTexts(t, m) {
		if strings.Contains(p, "3. Assumptions and their sources") || (sec != "" && !strings.Contains(p, "4. Results")) {
			sec += p
		}
		if strings.Contains(p, "4. Results") {
			sec += strings.SplitN(p, "4. Results", 2)[0]
			break
		}
	}
	if n := strings.Count(sec, "volatility"); n != 1 {
		t.Errorf("section 3 names volatility %d times, want once (the company-wide row)", n)
	}
	if !strings.Contains(sec, "all 26") {
		t.Error("the company-wide volatility row does not say all 26 grants take it")
	}
	if n := strings.Count(sec, "share_price"); n != 1 {
		t.Errorf("section 3 names share_price %d times, want one row for the 26 grants", n)
	}
	if strings.Contains(sec, "L-00003") {
		t.Error("section 3 lists a grant by itself though all share their inputs")
	}
}

// The sensitivity page says each thing once.
func TestMemoSensitivityNoRepeat(t *testing.T) {
	m := fixture()
	m.Settings.Sensitivities = sensitivityEveryGrant
	for _, p := range pageTexts(t, m) {
		if !strings.Contains(p, "Sensitivity of total fair value") {
			continue
		}
		flat := strings.Join(strings.Fields(p), " ")
		if strings.Contains(flat, sensitivityEveryGrant) {
			t.Error("the sensitivity page repeats, as a note, that every grant is revalued")
		}
		seen := map[string]bool{}
		for _, s := range strings.Split(flat, ". ") {
			if len(s) > 30 && seen[s] {
				t.Errorf("sentence on the sensitivity page twice: %q", s)
			}
			seen[s] = true
		}
	}
}

// A heading row inside a table (a journal entry's title) is never left
// alone at the foot of a page: it moves to the next page with its first
// line.
func TestMemoHeadingRowKeptWithNext(t *testing.T) {
	d, err := newMemo(fixture())
	if err != nil {
		t.Fatal(err)
	}
	d.pdf.AddPage()
	// Room for the table's header and one row, not two.
	d.pdf.SetY(d.pageH() - marginB - 2*tableLine - 4.5)
	d.Table([]Col{{"Entry and account", 110, false}, {"Debit", 30, true}, {"Credit", 30, true}},
		[][]string{{rowHeading + "2. Change in fair value of the warrant liability", "", ""}, {"Dr Change in fair value", "10.00", ""}})
	var buf bytes.Buffer
	if err := d.pdf.Output(&buf); err != nil {
		t.Fatal(err)
	}
	for _, p := range strings.Split(pdfText(t, buf.Bytes()), "\f") {
		if strings.Contains(p, "2. Change in fair value") != strings.Contains(p, "Dr Change in fair value") {
			t.Fatalf("the heading row and its first line are on different pages:\n%s", p)
		}
	}
}

func TestBarRange(t *testing.T) {
	for _, c := range []struct {
		values []float64
		lo, hi float64
	}{
		{[]float64{10, 40, 100, 20}, 0, 100 * (1 + barHeadroom)},
		{[]float64{-20, 80}, -20, 80 + 100*barHeadroom},
		{nil, 0, 1},
	} {
		lo, hi := barRange(c.values)
		if math.Abs(lo-c.lo) > 1e-9 || math.Abs(hi-c.hi) > 1e-9 {
			t.Errorf("barRange(%v) = %v, %v; want %v, %v", c.values, lo, hi, c.lo, c.hi)
		}
		for _, v := range c.values {
			if v >= hi {
				t.Errorf("barRange(%v): bar %v reaches the top of the axis %v", c.values, v, hi)
			}
		}
	}
}

// Past, current and expected quarters are drawn each in its own fill.
func TestPeriodBarsInks(t *testing.T) {
	bars := []PeriodBar{{"2026 Q1", 50, PeriodPast}, {"2026 Q2", 80, PeriodPast}, {"2026 Q3", 120, PeriodCurrent},
		{"2026 Q4", 90, PeriodExpected}, {"2027 Q1", 60, PeriodExpected}}
	b, err := PeriodBarsPNG("Compensation expense by quarter", bars, "EUR", 120*vg.Millimeter, 70*vg.Millimeter)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	count := map[PeriodKind]int{}
	bounds := img.Bounds()
	for y := bounds.Min.Y; y < bounds.Max.Y; y++ {
		for x := bounds.Min.X; x < bounds.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			for k, ink := range periodInks {
				ir, ig, ib, _ := ink.fill.RGBA()
				if r == ir && g == ig && bl == ib {
					count[PeriodKind(k)]++
				}
			}
		}
	}
	for k, ink := range periodInks {
		if count[PeriodKind(k)] < 200 {
			t.Errorf("%s bars: %d pixels of their fill, want a bar's worth", ink.legend, count[PeriodKind(k)])
		}
	}
}

// sheetXML is each worksheet's XML by sheet name.
func sheetXML(t *testing.T, m *Model) map[string]string {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteWorkbook(&buf, m); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := zip.NewReader(bytes.NewReader(buf.Bytes()), int64(buf.Len()))
	if err != nil {
		t.Fatal(err)
	}
	raw := map[string]string{}
	for _, zf := range zr.File {
		r, err := zf.Open()
		if err != nil {
			t.Fatal(err)
		}
		b, _ := io.ReadAll(r)
		r.Close()
		raw[zf.Name] = string(b)
	}
	out := map[string]string{}
	for i, name := range f.GetSheetList() {
		out[name] = raw[fmt.Sprintf("xl/worksheets/sheet%d.xml", i+1)]
	}
	return out
}

// Every sheet declares the range its cells fill, so that readers in
// streaming mode see the data (issue 14: every sheet said A1).
func TestWorkbookDimensions(t *testing.T) {
	for _, m := range []*Model{fixture(), expenseModelFor(t, expenseSchedule())} {
		for name, x := range sheetXML(t, m) {
			dim := regexp.MustCompile(`<dimension ref="([^"]*)"`).FindStringSubmatch(x)
			if dim == nil {
				t.Errorf("%s: no dimension", name)
				continue
			}
			maxCol, maxRow := 0, 0
			for _, c := range sheetCells(t, name, []byte(x)) {
				maxCol, maxRow = max(maxCol, c.col), max(maxRow, c.row)
			}
			want, _ := excelize.CoordinatesToCellName(maxCol, maxRow)
			if dim[1] != "A1:"+want {
				t.Errorf("%s: dimension %s, cells fill A1:%s", name, dim[1], want)
			}
		}
	}
}

// No float noise: every number keeps at most eight decimals (cents for
// amounts; 129999.999999999 was one).
func TestWorkbookNoFloatNoise(t *testing.T) {
	for _, line := range strings.Split(dumpBook(t, renderBook(t, expenseModelFor(t, expenseSchedule()))), "\n") {
		cell, v, _ := strings.Cut(line, " = ")
		if _, err := strconv.ParseFloat(v, 64); err != nil || strings.ContainsAny(v, "eE") {
			continue
		}
		if i := strings.IndexByte(v, '.'); i >= 0 && len(v)-i-1 > 8 {
			t.Errorf("%s = %s: more than eight decimals", cell, v)
		}
	}
}

// Every cell in a plain amount format sits under a header (the nearest
// header row above it) that names the currency, and no cell outside the
// Assumptions and Reconciliation sheets (columns that mix kinds) carries
// the currency in its format.
func TestWorkbookCurrencyInHeaders(t *testing.T) {
	m := expenseModelFor(t, expenseSchedule())
	f := renderBook(t, m)
	cur := "(" + m.Company.Currency + ")"
	for _, sh := range f.GetSheetList() {
		rows, err := f.GetRows(sh)
		if err != nil {
			t.Fatal(err)
		}
		head := map[int]string{}
		for r, row := range rows {
			for c := range row {
				cell, _ := excelize.CoordinatesToCellName(c+1, r+1)
				id, err := f.GetCellStyle(sh, cell)
				if err != nil {
					t.Fatal(err)
				}
				st, err := f.GetStyle(id)
				if err != nil {
					t.Fatal(err)
				}
				if st.Fill.Type == "pattern" { // a header cell
					v, _ := f.GetCellValue(sh, cell)
					head[c] = v
					continue
				}
				if st.CustomNumFmt == nil {
					continue
				}
				switch *st.CustomNumFmt {
				case "#,##0.00", "#,##0.0000":
					if v, _ := f.GetCellValue(sh, cell); v != "" && !strings.Contains(head[c], cur) && !strings.Contains(row[0], cur) {
						t.Errorf("%s!%s: an amount under %q, which does not name the currency", sh, cell, head[c])
					}
				}
				if sh != SheetAssumptions && sh != SheetReconciliation && strings.Contains(*st.CustomNumFmt, m.Company.Currency) {
					t.Errorf("%s!%s: the currency is in the cell's format %q", sh, cell, *st.CustomNumFmt)
				}
			}
		}
	}
}

// The Disclosures sheet: a weighted average over no shares and an RSU's
// exercise are blank, not 0; every header names what is under it.
func TestWorkbookDisclosuresBlanks(t *testing.T) {
	f := renderBook(t, expenseModelFor(t, expenseSchedule()))
	rows, err := f.GetRows(SheetDisclosures, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	var head []string
	checked := 0
	for _, r := range rows {
		if len(r) == 0 {
			head = nil
			continue
		}
		if head == nil {
			head = r
			continue
		}
		cell := func(i int) string {
			if i < len(r) {
				return r[i]
			}
			return ""
		}
		switch head[0] {
		case "Roll-forward":
			if cell(2) == "0" {
				checked++
				if cell(3) != "" || cell(4) != "" {
					t.Errorf("roll-forward %s %s: no shares but averages %q, %q", r[0], r[1], cell(3), cell(4))
				}
			}
		case "Exercises and vesting in the period":
			if r[0] == "RSUs" {
				checked++
				for i := 1; i <= 5; i++ {
					if cell(i) != "" {
						t.Errorf("RSUs under %q: %q, want blank", head[i], cell(i))
					}
				}
			}
		}
	}
	if checked == 0 {
		t.Fatal("no line without shares and no RSU row checked")
	}
}

// Columns are as wide as their content (LibreOffice showed the
// Assumptions sheet's columns running into each other); a long source
// wraps within its column.
func TestWorkbookAssumptionWidths(t *testing.T) {
	m := expenseModelFor(t, expenseSchedule())
	f := renderBook(t, m)
	longest := map[int]int{}
	for _, a := range m.Assumptions {
		for j, s := range []string{a.GrantID, a.Name, "", a.Text, a.Ref} {
			longest[j] = max(longest[j], len([]rune(s)))
		}
	}
	for j, n := range longest {
		col, _ := excelize.ColumnNumberToName(j + 1)
		w, err := f.GetColWidth(SheetAssumptions, col)
		if err != nil {
			t.Fatal(err)
		}
		if w < float64(n) {
			t.Errorf("Assumptions column %s is %.1f characters wide, its longest text %d", col, w, n)
		}
	}
}
