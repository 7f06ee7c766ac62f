package report

import (
	"bytes"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

func renderBook(t *testing.T, m *Model) *excelize.File {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteWorkbook(&buf, m); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

// dumpBook lists every non-empty cell as "Sheet!A1 = value" (raw values;
// formulas as "= =..."), sheet by sheet, row by row.
func dumpBook(t *testing.T, f *excelize.File) string {
	t.Helper()
	var b strings.Builder
	for _, sh := range f.GetSheetList() {
		rows, err := f.GetRows(sh, excelize.Options{RawCellValue: true})
		if err != nil {
			t.Fatal(err)
		}
		for r, row := range rows {
			for c, v := range row {
				cell, _ := excelize.CoordinatesToCellName(c+1, r+1)
				if fm, _ := f.GetCellFormula(sh, cell); fm != "" {
					fmt.Fprintf(&b, "%s!%s = [formula] =%s\n", sh, cell, fm)
					continue
				}
				if v != "" {
					fmt.Fprintf(&b, "%s!%s = %s\n", sh, cell, v)
				}
			}
		}
	}
	return b.String()
}

func TestWorkbookGolden(t *testing.T) {
	golden(t, "fixture.xlsx.txt", []byte(dumpBook(t, renderBook(t, fixture()))))
}

func TestWorkbookSheetsAndHeaders(t *testing.T) {
	f := renderBook(t, fixture())
	want := []string{SheetSummary, SheetAssumptions, SheetGrants, SheetTranches, SheetSensitivity, SheetConvergence, SheetExpense, SheetCostCenters, SheetForecast, SheetByYear, SheetFinancing, SheetDisclosures, SheetJournal, SheetTax, SheetModifications, SheetReconciliation, SheetWarnings, SheetAbout}
	got := f.GetSheetList()
	if strings.Join(got, ",") != strings.Join(want, ",") {
		t.Fatalf("sheets = %v, want %v", got, want)
	}
	// The Tranches columns issue 5 asks for; amounts name their currency
	// (issue 14).
	for i, h := range []string{"Grant", "Holder", "Instrument", "Tranche", "Vest date", "Shares", "Share price (EUR)", "Strike (EUR)",
		"Years to expiry", "Years to vest", "Volatility", "Risk-free rate", "Dividend yield", "Exercise multiple",
		"Exit rate", "Fair value per share (EUR)", "Error estimate (EUR)", "Expected term"} {
		cell, _ := excelize.CoordinatesToCellName(i+1, 1)
		if v, _ := f.GetCellValue(SheetTranches, cell); v != h {
			t.Errorf("Tranches!%s = %q, want %q", cell, v, h)
		}
	}
	for _, sh := range []string{SheetAssumptions, SheetGrants, SheetTranches, SheetWarnings} {
		p, err := f.GetPanes(sh)
		if err != nil || !p.Freeze || p.YSplit != 1 {
			t.Errorf("%s: panes %+v (%v), want the header row frozen", sh, p, err)
		}
	}
}

// Every number of the Tranches sheet equals the Model (and so valuation.json).
func TestWorkbookMatchesModel(t *testing.T) {
	m := fixture()
	f := renderBook(t, m)
	row := 2
	num := func(cell string) float64 {
		v, err := f.GetCellValue(SheetTranches, cell, excelize.Options{RawCellValue: true})
		if err != nil {
			t.Fatal(err)
		}
		x, err := strconv.ParseFloat(v, 64)
		if err != nil {
			t.Fatalf("Tranches!%s = %q, not a number", cell, v)
		}
		return x
	}
	for _, g := range m.Grants {
		for _, tr := range g.Tranches {
			// The workbook keeps cents, six decimals of a value per share or
			// a year and eight of a plain number (Book.roundCell).
			for col, c := range map[string]struct{ want, tol float64 }{"F": {float64(tr.Shares), 0}, "P": {tr.FairValuePerShare, 5e-7},
				"Q": {tr.ErrorEstimate, 5e-7}, "R": {tr.ExpectedTermYears, 5e-7}, "U": {tr.BSMSimplifiedValue, 5e-7}, "Z": {tr.FairValueTotal, 0.005}} {
				cell := fmt.Sprintf("%s%d", col, row)
				want := c.want
				if got := num(cell); math.Abs(got-want) > c.tol+1e-12*math.Max(1, math.Abs(want)) {
					t.Errorf("Tranches!%s (grant %s tranche %d) = %v, want %v", cell, g.ID, tr.Index, got, want)
				}
			}
			if id, _ := f.GetCellValue(SheetTranches, fmt.Sprintf("A%d", row)); id != g.ID {
				t.Errorf("Tranches!A%d = %q, want %q", row, id, g.ID)
			}
			row++
		}
	}
	if l, _ := f.GetCellValue(SheetSummary, "A9"); l != "Fair value of every award granted, each at its measurement date (EUR)" {
		t.Fatalf("Summary!A9 = %q, want the total fair value label", l)
	}
	v, _ := f.GetCellValue(SheetSummary, "B9", excelize.Options{RawCellValue: true})
	if got, _ := strconv.ParseFloat(v, 64); math.Abs(got-m.Totals.FairValueTotal) > 0.005 {
		t.Errorf("Summary!B9 = %q, want the total fair value %v", v, m.Totals.FairValueTotal)
	}
}

func TestWorkbookFormulaColumn(t *testing.T) {
	m := fixture()
	f := renderBook(t, m)
	n := m.Totals.Tranches
	for r := 2; r <= n+1; r++ {
		fm, err := f.GetCellFormula(SheetTranches, fmt.Sprintf("X%d", r))
		if err != nil || fm == "" {
			t.Fatalf("Tranches!X%d has no formula (%v)", r, err)
		}
		inst, _ := f.GetCellValue(SheetTranches, fmt.Sprintf("C%d", r))
		if inst != RSU && !strings.Contains(fm, "NORM.S.DIST") {
			t.Errorf("Tranches!X%d = %s, want a NORM.S.DIST formula", r, fm)
		}
	}
}

// The workbook formula recomputes Black-Scholes-Merton: S=42, K=40,
// r=0.10, sigma=0.20, T=0.5, no dividends gives a call of 4.76 (Hull,
// Options, Futures, and Other Derivatives, worked example; from memory).
// excelize's own formula engine evaluates the cell.
func TestWorkbookFormulaValue(t *testing.T) {
	const tol = 0.005 // the reference is quoted to the cent
	m := &Model{Tool: Tool{Name: "grantworth", Version: "t"}, Company: Company{Name: "Test", Currency: "USD"},
		ValuationDate: day("2026-01-01"), Caution: Caution}
	m.Grants = []Grant{{ID: "H-1", Instrument: Option, GrantDate: day("2026-01-01"), Shares: 1, Strike: 40, SharePrice: 42, Volatility: 0.20,
		Tranches: []Tranche{{Index: 1, Shares: 1, SimplifiedTerm: 0.5, SimplifiedRate: 0.10, BSMSimplifiedValue: 4.76}}}}
	Summarize(m)
	f := renderBook(t, m)
	v, err := f.CalcCellValue(SheetTranches, "X2", excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	got, err := strconv.ParseFloat(v, 64)
	if err != nil {
		t.Fatalf("V2 = %q", v)
	}
	if math.Abs(got-4.76) > tol {
		t.Fatalf("BSM formula S=42 K=40 r=0.10 sigma=0.20 T=0.5: got %v, want 4.76 ± %v", got, tol)
	}
}

// Text from the input is stored as text, never as a formula, even when it
// starts with = (the G-001 holder code of the fixture) or + or @ (sources).
func TestWorkbookInputTextIsText(t *testing.T) {
	f := renderBook(t, fixture())
	checks := []struct{ sheet, cell, want string }{
		{SheetGrants, "B2", `=HYPERLINK("x")`},
		{SheetTranches, "B2", `=HYPERLINK("x")`},
		{SheetGrants, "B3", "Ø-7 Søren"},
	}
	rows, _ := f.GetRows(SheetAssumptions)
	for i, r := range rows {
		if len(r) > 6 && (strings.HasPrefix(r[6], "+") || strings.HasPrefix(r[6], "@")) {
			checks = append(checks, struct{ sheet, cell, want string }{SheetAssumptions, fmt.Sprintf("G%d", i+1), r[6]})
		}
	}
	if len(checks) < 5 {
		t.Fatalf("fixture has too few formula-like texts: %v", checks)
	}
	for _, c := range checks {
		fm, _ := f.GetCellFormula(c.sheet, c.cell)
		typ, _ := f.GetCellType(c.sheet, c.cell)
		v, _ := f.GetCellValue(c.sheet, c.cell)
		if fm != "" || v != c.want || (typ != excelize.CellTypeInlineString && typ != excelize.CellTypeSharedString) {
			t.Errorf("%s!%s: formula %q, type %v, value %q; want the text %q", c.sheet, c.cell, fm, typ, v, c.want)
		}
	}
}

func TestWorkbookDeterministic(t *testing.T) {
	var a, b bytes.Buffer
	if err := WriteWorkbook(&a, fixture()); err != nil {
		t.Fatal(err)
	}
	if err := WriteWorkbook(&b, fixture()); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Fatal("two renderings of the same Model differ")
	}
}

// A source too long for a row of its lines (a row is at most 409 points
// tall, excelize.MaxRowHeight) is written whole in the tallest row, not
// refused with the whole workbook.
func TestWorkbookLongSource(t *testing.T) {
	m := fixture()
	long := strings.Repeat("word ", 1000) + "end"
	m.Assumptions[0].Source = long
	f := renderBook(t, m)
	if v, _ := f.GetCellValue(SheetAssumptions, "G2"); v != long {
		t.Errorf("Assumptions!G2 holds %d characters, want the %d of the source", len(v), len(long))
	}
	if h, _ := f.GetRowHeight(SheetAssumptions, 2); h != excelize.MaxRowHeight {
		t.Errorf("row 2 is %v points tall, want %v", h, excelize.MaxRowHeight)
	}
}
