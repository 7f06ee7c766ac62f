package report

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

func ymdT(s string) time.Time {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		panic(err)
	}
	return t
}

// expenseSchedule is an invented company (demo data, not a reference): an
// option grant with a termination, an RSU grant, a liability warrant
// granted for services, and a liability warrant issued with a loan.
func expenseSchedule() *grants.Schedule {
	return &grants.Schedule{
		Company:     grants.Company{Name: "Quillmere Instruments GmbH", ValuationDate: ymdT("2026-12-31"), PeriodStart: ymdT("2026-10-01"), Currency: "EUR"},
		Assumptions: grants.Assumptions{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.05, TaxRate: 0.3},
		Grants: []grants.Grant{
			{ID: "Q-1", Holder: "E7", Instrument: grants.Option, GrantDate: ymdT("2025-01-15"), Shares: 4000, Strike: 3,
				ExpiryDate: ymdT("2035-01-15"), VestStart: ymdT("2025-01-15"), VestMonths: 48, CliffMonths: 12, VestEvery: 12, CostCenter: "R&D"},
			{ID: "Q-2", Holder: "E9", Instrument: grants.Option, GrantDate: ymdT("2026-11-02"), Shares: 1200, Strike: 5,
				ExpiryDate: ymdT("2036-11-02"), VestStart: ymdT("2026-11-02"), VestMonths: 36, CliffMonths: 12, VestEvery: 12, CostCenter: "S&M"},
			{ID: "Q-3", Holder: "E2", Instrument: grants.RSU, GrantDate: ymdT("2026-02-01"), Shares: 900,
				VestStart: ymdT("2026-02-01"), VestMonths: 36, VestEvery: 12},
			{ID: "Q-4", Holder: "=SUM(A1)", Instrument: grants.Warrant, GrantDate: ymdT("2026-03-01"), Shares: 10000, Strike: 4,
				ExpiryDate: ymdT("2031-03-01"), VestStart: ymdT("2026-03-01"), VestMonths: 12, VestEvery: 12, Classification: grants.Liability,
				Purpose: grants.Compensation},
			{ID: "Q-5", Holder: "LENDER", Instrument: grants.Warrant, GrantDate: ymdT("2026-06-15"), Shares: 5000, Strike: 5,
				ExpiryDate: ymdT("2033-06-15"), VestStart: ymdT("2026-06-15"), VestEvery: 1, Classification: grants.Liability,
				Purpose: grants.Financing},
		},
		SharePrices: []grants.PricePoint{{Date: ymdT("2026-01-01"), Price: 6}},
		Transfers:   []grants.Transfer{{GrantID: "Q-1", Date: ymdT("2026-11-16"), CostCenter: "S&M", Row: 2}},
		Events: []grants.Event{
			{GrantID: "Q-1", Date: ymdT("2026-11-30"), Kind: grants.Forfeited, Shares: 2000, Row: 2},
			{GrantID: "Q-1", Date: ymdT("2026-12-10"), Kind: grants.Exercised, Shares: 600, Row: 3},
		},
	}
}

// valuationFor values every tranche of s at an invented fair value,
// 1 + index/4 a share, with an expected term of 5 years; revalue, when
// not nil, gives the liability warrant's values at its grant date and
// past quarter ends.
func valuationFor(s *grants.Schedule, revalue func(g grants.Grant, at time.Time) ([]float64, error)) *pricing.Valuation {
	v := &pricing.Valuation{Revaluations: map[string][]pricing.Revaluation{}}
	_, end := s.Period()
	for _, g := range s.Grants {
		gv := pricing.GrantValue{Inputs: grants.Inputs{Grant: g, Tranches: s.Tranches(g),
			Volatility: grants.Source{Value: 0.5}, RiskFreeRate: grants.Source{Value: 0.03}}}
		for _, tr := range gv.Inputs.Tranches {
			gv.Results = append(gv.Results, valuation.Result{Value: 1 + float64(tr.Index)/4, ExpectedTermYears: 5})
		}
		v.Grants = append(v.Grants, gv)
		if g.Classification == grants.Liability && revalue != nil {
			var rs []pricing.Revaluation
			for _, at := range append([]time.Time{g.GrantDate}, pricing.RemeasurementDates(grants.FiscalCalendar{}, g.GrantDate, end, nil)...) {
				vals, err := revalue(g, at)
				rs = append(rs, pricing.Revaluation{Date: at, Values: vals, Err: err})
				if err != nil {
					break
				}
			}
			v.Revaluations[g.ID] = rs
		}
	}
	return v
}

// expenseModelFor values every tranche at an invented fair value (see
// valuationFor), the liability warrant at 1.10 at grant and 0.05 more
// each quarter end, closes the books and lays them into a Model.
func expenseModelFor(t *testing.T, s *grants.Schedule) *Model {
	t.Helper()
	return expenseModelWith(t, s, func(g grants.Grant, at time.Time) ([]float64, error) {
		q := float64(int(at.Sub(g.GrantDate).Hours()/24) / 91)
		return []float64{1.10 + 0.05*q}, nil
	})
}

func expenseModelWith(t *testing.T, s *grants.Schedule, revalue func(g grants.Grant, at time.Time) ([]float64, error)) *Model {
	t.Helper()
	m := &Model{Tool: Tool{Name: "grantworth", Version: "test"}, ValuationDate: DateOf(s.Company.ValuationDate),
		PeriodStart: DateOf(s.Company.PeriodStart), Company: Company{Name: s.Company.Name, Currency: s.Company.Currency}, Caution: Caution}
	for _, g := range s.Grants {
		mg := Grant{ID: g.ID, Holder: g.Holder, Instrument: string(g.Instrument), Purpose: string(g.Purpose), GrantDate: DateOf(g.GrantDate), Shares: g.Shares,
			Strike: g.Strike, Volatility: 0.5, RiskFreeRate: 0.03, Classification: string(g.Classification)}
		for _, tr := range s.Tranches(g) {
			mg.Tranches = append(mg.Tranches, Tranche{Index: tr.Index, VestDate: DateOf(tr.VestDate), Shares: tr.Shares,
				FairValuePerShare: 1 + float64(tr.Index)/4, ExpectedTermYears: 5})
		}
		m.Grants = append(m.Grants, mg)
	}
	Summarize(m)
	b, err := accounting.Close(s, valuationFor(s, revalue), nil)
	if err != nil {
		t.Fatal(err)
	}
	m.Expense = expenseModel(b)
	m.Warnings = append(m.Warnings, b.Warnings...)
	return m
}

// The three outputs carry the expense figures and agree with each other:
// the JSON fields of DESIGN §4.3, the Expense, Expense forecast and
// Disclosures sheets, and the memo's sections.
func TestExpenseOutputs(t *testing.T) {
	m := expenseModelFor(t, expenseSchedule())
	e := m.Expense
	if e == nil || e.ExpenseDetail == nil {
		t.Fatal("no expense")
	}
	// JSON: the contract fields and the detail beside them.
	var buf bytes.Buffer
	if err := WriteJSON(&buf, m); err != nil {
		t.Fatal(err)
	}
	var raw map[string]any
	if err := json.Unmarshal(buf.Bytes(), &raw); err != nil {
		t.Fatal(err)
	}
	ex := raw["expense"].(map[string]any)
	for _, k := range []string{"periods", "unrecognized_cost", "weighted_average_remaining_years", "by_grant", "forecast", "journal", "disclosures"} {
		if _, ok := ex[k]; !ok {
			t.Errorf("valuation.json expense has no %q", k)
		}
	}
	periods := ex["periods"].([]any)
	last := periods[len(periods)-1].(map[string]any)
	if last["start"] != "2026-10-01" || last["end"] != "2026-12-31" || last["current"] != true {
		t.Errorf("current period %v", last)
	}
	if got := last["amount"].(float64); math.Abs(got-e.Amount) > 1e-9 {
		t.Errorf("current period amount %v, detail %v", got, e.Amount)
	}
	if n := len(ex["forecast"].([]any)); n != accounting.ForecastQuarters {
		t.Errorf("forecast has %d quarters", n)
	}
	var unrec float64
	for _, g := range e.ByGrant {
		unrec += g.Unrecognized
	}
	if math.Abs(unrec-e.UnrecognizedCost) > 1e-6 {
		t.Errorf("by-grant unrecognized %v, total %v", unrec, e.UnrecognizedCost)
	}
	// The compensatory liability warrant's remeasurement is compensation
	// (ASC 718-30-35-3), and its liability rolls: open + compensation −
	// reclassified = end.
	var w *ExpenseGrant
	for i := range e.ByGrant {
		if e.ByGrant[i].Liability {
			w = &e.ByGrant[i]
		}
	}
	if w == nil || w.LiabilityEnd == 0 {
		t.Fatalf("liability warrant: %+v", w)
	}
	if d := w.LiabilityEnd - w.LiabilityOpen - (w.Amount - w.ReclassifiedEquity); math.Abs(d) > 1e-6 {
		t.Errorf("liability roll off by %v", d)
	}
	// The financing warrant is in no compensation figure: its change in
	// fair value is apart, and its liability rolls.
	if len(e.Financing) != 1 || e.Financing[0].GrantID != "Q-5" || e.FinancingFairValueChange == 0 {
		t.Fatalf("financing %+v, change %v", e.Financing, e.FinancingFairValueChange)
	}
	fw := e.Financing[0]
	if d := fw.LiabilityOpen + fw.Issued + fw.FairValueChange - fw.Reclassified - fw.LiabilityEnd; math.Abs(d) > 1e-6 {
		t.Errorf("financing liability roll off by %v: %+v", d, fw)
	}
	for _, g := range e.ByGrant {
		if g.GrantID == "Q-5" {
			t.Errorf("financing warrant among the compensation grants: %+v", g)
		}
	}
	if m.Totals.Grants != 4 || m.FinancingTotals.Grants != 1 {
		t.Errorf("totals %+v, financing %+v", m.Totals, m.FinancingTotals)
	}
	for _, r := range []RollForward{e.Disclosures.Options, e.Disclosures.RSUs, e.Disclosures.Warrants, e.Disclosures.FinancingWarrants} {
		if !r.Balances {
			t.Errorf("%s roll-forward does not balance: %+v", r.Instrument, r.Lines)
		}
	}

	// Workbook: the total row of Expense equals the JSON; the warrant's
	// formula-like holder is text; the Disclosures sheet has the roll-forward.
	var xb bytes.Buffer
	if err := WriteWorkbook(&xb, m); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&xb)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := f.GetRows(SheetExpense, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	total := rows[len(rows)-1]
	if total[0] != "total" {
		t.Fatalf("last Expense row %v", total)
	}
	if got, _ := strconv.ParseFloat(total[14], 64); math.Abs(got-e.Amount) > 0.005 { // the workbook keeps cents
		t.Errorf("Expense sheet period total %v, JSON %v", got, e.Amount)
	}
	// The cost centres add up to the totals, in the JSON and on their sheet.
	var ccSum float64
	for _, c := range e.ByCostCenter {
		ccSum += c.Amount
	}
	if len(e.ByCostCenter) != 3 || math.Abs(ccSum-e.Amount) > 1e-9 {
		t.Errorf("cost centres %+v add to %v, period %v", e.ByCostCenter, ccSum, e.Amount)
	}
	crows, err := f.GetRows(SheetCostCenters, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	if last := crows[len(crows)-1]; last[0] != "total" || !closeText(last[4], e.Amount) {
		t.Errorf("cost centre sheet total row %v, period %v", last, e.Amount)
	}
	for _, r := range rows[1:] {
		if r[1] == "Q-4" {
			cell := ""
			for i, row := range rows {
				if len(row) > 1 && row[1] == "Q-4" {
					cell, _ = excelize.CoordinatesToCellName(3, i+1)
					break
				}
			}
			if fm, _ := f.GetCellFormula(SheetExpense, cell); fm != "" {
				t.Errorf("holder %s written as a formula %q", cell, fm)
			}
			break
		}
	}
	drows, err := f.GetRows(SheetDisclosures)
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, r := range drows {
		if len(r) > 2 && r[0] == "Options" && r[1] == "Outstanding at end" {
			found = true
			if want := strconv.FormatInt(e.Disclosures.Options.Lines[len(e.Disclosures.Options.Lines)-1].Shares, 10); strings.ReplaceAll(r[2], ",", "") != want {
				t.Errorf("Disclosures outstanding at end %q, want %s", r[2], want)
			}
		}
	}
	if !found {
		t.Error("Disclosures sheet has no option roll-forward end line")
	}
	frows, _ := f.GetRows(SheetForecast)
	if len(frows) != 1+len(e.Periods)+accounting.ForecastQuarters+1 {
		t.Errorf("Expense forecast has %d rows", len(frows))
	}
	// Journal: a row per line of the JSON's entries, debits equal to credits.
	jrows, _ := f.GetRows(SheetJournal, excelize.Options{RawCellValue: true})
	var lines int
	for _, j := range e.Journal {
		lines += len(j.Lines)
	}
	var dr, cr float64
	for _, r := range jrows[1:] { // debit and credit are columns F and G, as in journal.csv
		if len(r) > 5 {
			v, _ := strconv.ParseFloat(r[5], 64)
			dr += v
		}
		if len(r) > 6 {
			v, _ := strconv.ParseFloat(r[6], 64)
			cr += v
		}
	}
	if len(jrows) != 1+lines || lines == 0 || math.Abs(dr-cr) > 1e-6 {
		t.Errorf("Journal sheet: %d rows for %d lines, debits %v, credits %v", len(jrows), lines, dr, cr)
	}
	finRows, _ := f.GetRows(SheetFinancing)
	if len(finRows) != 2 || finRows[1][0] != "Q-5" {
		t.Errorf("Financing warrants sheet %v", finRows)
	}

	// Memo: the three sections with their figures.
	text := pdfText(t, renderMemo(t, m))
	flat := strings.Join(strings.Fields(text), " ")
	for _, want := range []string{"Compensation expense for the period", "Journal entries", "Income tax effects", "Deferred tax asset at the period end", "Share-based payment disclosures",
		"Expense by quarter", "Outstanding at end", "Nonvested at start", "Vested and expected to vest",
		money(e.Amount, "EUR"), "Additional paid-in capital", "Share-based compensation liability", "Warrants issued in financings",
		"Change in fair value of warrant liability", "Total intrinsic value of exercises", "range of exercise prices", "By cost centre", "Expense by fiscal year"} {
		if !strings.Contains(flat, want) {
			t.Errorf("memo has no %q", want)
		}
	}
}

// Golden: the expense part of valuation.json for the invented company.
func TestExpenseJSONGolden(t *testing.T) {
	m := expenseModelFor(t, expenseSchedule())
	b, err := json.MarshalIndent(m.Expense, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	golden(t, "expense.json", append(b, '\n'))
}

// Without a revaluation (or when it fails) a liability warrant is measured
// at the valuation date only, and a warning says so.
func TestExpenseNoRevalue(t *testing.T) {
	s := expenseSchedule()
	m := expenseModelWith(t, s, nil)
	if len(m.Warnings) == 0 || !strings.Contains(strings.Join(m.Warnings, "\n"), "Q-4") {
		t.Errorf("warnings %v", m.Warnings)
	}
	if m.Expense.FinancingFairValueChange != 0 {
		t.Errorf("fair value change %v without remeasurements", m.Expense.FinancingFairValueChange)
	}
	failing := func(grants.Grant, time.Time) ([]float64, error) { return nil, errors.New("no curve on 2026-03-01") }
	m = expenseModelWith(t, s, failing)
	if !strings.Contains(strings.Join(m.Warnings, "\n"), "no curve on 2026-03-01") || m.Expense.FinancingFairValueChange != 0 {
		t.Errorf("failed revaluation: warnings %v, fair value change %v", m.Warnings, m.Expense.FinancingFairValueChange)
	}
}

// Under IFRS 2 (framework ifrs2) the journal's equity is a share-based
// payment reserve (IFRS 2.7), in the JSON, the Journal sheet and the memo.
func TestExpenseIFRS2Names(t *testing.T) {
	s := expenseSchedule()
	s.Assumptions.Framework = grants.IFRS2
	m := expenseModelFor(t, s)
	e := m.Expense
	if e.Framework != "ifrs2" || len(e.Journal) == 0 {
		t.Fatalf("framework %q, journal %+v", e.Framework, e.Journal)
	}
	// The termination makes the period's equity-classified cost negative:
	// the first entry debits the reserve and credits the expense.
	var equity []JournalLine
	for _, l := range e.Journal[0].Lines {
		if l.Role == "equity" {
			equity = append(equity, l)
		}
	}
	if len(equity) != 1 || equity[0].Account != "Share-based payment reserve" || equity[0].Debit <= 0 {
		t.Errorf("equity lines %+v", equity)
	}
	f := renderBook(t, m)
	rows, _ := f.GetRows(SheetJournal)
	found := false
	for _, r := range rows[1:] {
		found = found || len(r) > 9 && r[9] == "equity" && r[3] == "Share-based payment reserve"
	}
	if !found {
		t.Errorf("Journal sheet has no share-based payment reserve line: %q", rows)
	}
	flat := strings.Join(strings.Fields(pdfText(t, renderMemo(t, m))), " ")
	for _, want := range []string{"Standard: IFRS 2", "credit a share-based payment reserve in equity (IFRS 2)", "Share-based payment reserve"} {
		if !strings.Contains(flat, want) {
			t.Errorf("memo has no %q", want)
		}
	}
}

// closeText reports whether the cell text is the number v to 1e-6.
// closeText reports whether a workbook amount is v to the cent the
// workbook keeps.
func closeText(text string, v float64) bool {
	f, err := strconv.ParseFloat(text, 64)
	return err == nil && math.Abs(f-v) <= 0.005
}
