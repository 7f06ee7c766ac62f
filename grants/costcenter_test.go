package grants

import (
	"bytes"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/xuri/excelize/v2"
)

// The cost_center column and the Transfers sheet: read with their cells,
// and every problem named by its cell.
func TestReadCostCentersAndTransfers(t *testing.T) {
	fs := baseCSV()
	fs["grants.csv"].Data = []byte("grant_id,grant_date,shares,strike,term_years,vest_months,cliff_months,cost_center\nA-1,2025-01-15,1200,2.00,10,48,12,R&D\nA-2,2025-01-15,1200,2.00,10,48,12,\n")
	fs["transfers.csv"] = &fstest.MapFile{Data: []byte("grant_id,date,cost_center\nA-1,2025-09-01,S&M\n")}
	s, rep := readMap(t, fs)
	if !rep.OK() || len(rep.Warnings) != 0 {
		t.Fatalf("problems:\n%s", problems(rep))
	}
	if s.Grants[0].CostCenter != "R&D" || s.Grants[1].CostCenter != "" {
		t.Errorf("cost centres %q, %q", s.Grants[0].CostCenter, s.Grants[1].CostCenter)
	}
	if tr := s.TransfersOf("A-1"); len(tr) != 1 || tr[0].CostCenter != "S&M" || !tr[0].Date.Equal(d("2025-09-01")) || tr[0].Row != 2 {
		t.Errorf("transfers %+v", tr)
	}

	fs["grants.csv"].Data = []byte("grant_id,grant_date,shares,strike,term_years,vest_months,cliff_months,cost_center\nA-1,2025-01-15,1200,2.00,10,48,12,Unassigned\n")
	fs["transfers.csv"].Data = []byte("grant_id,date,cost_center\nA-1,2025-09-01,S&M\nA-1,2025-09-01,G&A\nB-9,2025-09-01,S&M\nA-1,2025-01-01,R&D\nA-1,2027-01-01,R&D\nA-1,2025-10-01,\n")
	_, rep = readMap(t, fs)
	got := problems(rep)
	for _, w := range []string{
		`error: Grants!H2 (cost_center): "Unassigned" is the name grantworth gives expense with no cost centre`,
		`error: Transfers!B3 (date): "2025-09-01" is also the date of row 2 (B2) for grant A-1`,
		`error: Transfers!A4 (grant_id): "B-9" is not a grant_id of the Grants sheet`,
		`warning: Transfers!B5 (date): "2025-01-01" is on or before the grant date 2025-01-15 of grant A-1`,
		`warning: Transfers!B6 (date): "2027-01-01" is after the valuation date 2026-09-30`,
		`error: Transfers!C7 (cost_center): is required`,
	} {
		if !strings.Contains(got, w) {
			t.Errorf("missing %q in\n%s", w, got)
		}
	}
}

// The Accounts sheet, the tax keys and columns: read with their cells, and
// every problem named by its cell.
func TestReadAccountsAndTax(t *testing.T) {
	fs := baseCSV()
	fs["assumptions.csv"].Data = []byte("key,value,source\nvolatility,45%,peers\nframework,IFRS2\ntax_rate,25%,statutory rate\n")
	fs["grants.csv"].Data = []byte("grant_id,grant_date,shares,strike,term_years,vest_months,cliff_months,cost_center,tax_deductible\nA-1,2025-01-15,1200,2.00,10,48,12,R&D,no\nA-2,2025-01-15,1200,2.00,10,48,12,S&M,\n")
	fs["accounts.csv"] = &fstest.MapFile{Data: []byte("role,cost_center,account_code,account_name\ncompensation_expense,,6400,Stock compensation\ncompensation_expense,R&D,6410,\nequity,,3100,\n")}
	fs["events.csv"] = &fstest.MapFile{Data: []byte("grant_id,date,event,shares,share_price\nA-2,2026-02-01,exercised,100,4.5\n")}
	s, rep := readMap(t, fs)
	if !rep.OK() || len(rep.Warnings) != 0 {
		t.Fatalf("problems:\n%s", problems(rep))
	}
	a := s.Assumptions
	if a.Framework != IFRS2 || a.TaxRate != 0.25 || a.Sources["tax_rate"] != "statutory rate" {
		t.Errorf("framework %q, tax rate %v, sources %v", a.Framework, a.TaxRate, a.Sources)
	}
	if s.Grants[0].Deductible() || !s.Grants[1].Deductible() || s.Grants[1].TaxDeductible != nil {
		t.Errorf("deductible: %v %v", s.Grants[0].TaxDeductible, s.Grants[1].TaxDeductible)
	}
	want := []AccountRow{{Role: "compensation_expense", Code: "6400", Name: "Stock compensation", Row: 2}, {Role: "compensation_expense", CostCenter: "R&D", Code: "6410", Row: 3}, {Role: "equity", Code: "3100", Row: 4}}
	if len(s.Accounts) != 3 || s.Accounts[0] != want[0] || s.Accounts[1] != want[1] || s.Accounts[2] != want[2] {
		t.Errorf("accounts %+v", s.Accounts)
	}
	if e := s.Events[0]; e.SharePrice == nil || *e.SharePrice != 4.5 {
		t.Errorf("event share price %v", e.SharePrice)
	}

	fs["assumptions.csv"].Data = []byte("key,value,source\nvolatility,45%,peers\nframework,gaap\ntax_rate,125%\n")
	fs["accounts.csv"].Data = []byte("role,cost_center,account_code,account_name\ncompensation_expense,,6400,\ncompensation_expense,,6401,\nequity,R&D,3100,\ncompensation_expense,Marketing,6420,\nbonus,,1,\ndeferred_tax_asset,,,\n")
	fs["events.csv"].Data = []byte("grant_id,date,event,shares,share_price\nA-2,2026-02-01,exercised,100,-1\n")
	_, rep = readMap(t, fs)
	got := problems(rep)
	for _, w := range []string{
		`error: Assumptions!B3 (framework): "gaap" is not one of asc718, ifrs2`,
		`error: Assumptions!B4 (tax_rate): "1.25" must be at least 0 and below 1`,
		`error: Accounts!A3 (role): "compensation_expense" is given twice: row 2 (A2) maps the same role compensation_expense`,
		`warning: Accounts!B4 (cost_center): "R&D" applies to compensation_expense only`,
		`warning: Accounts!B5 (cost_center): "Marketing" is not the cost_center of any grant or transfer`,
		`error: Accounts!A6 (role): "bonus" is not one of compensation_expense`,
		`error: Accounts!C7 (account_code): is empty, and so is account_name`,
		`error: Events!E2 (share_price): "-1" must be more than zero`,
	} {
		if !strings.Contains(got, w) {
			t.Errorf("missing %q in\n%s", w, got)
		}
	}
}

// A written Accounts sheet shows each role and account name whole: its
// columns are as wide as their longest text, so that a role such as
// share_based_payment_liability is not cut short by the cost centre
// beside it.
func TestWrittenAccountsColumnsFit(t *testing.T) {
	s := smallSchedule()
	s.Accounts = []AccountRow{{Role: "share_based_payment_liability", Code: "2460", Name: "Share-based compensation liability"},
		{Role: "compensation_expense", CostCenter: "R&D", Code: "6410", Name: "Share-based compensation - research and development"}}
	var buf bytes.Buffer
	if err := WriteXLSX(&buf, s); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := f.GetRows(SheetAccounts)
	if err != nil || len(rows) < 2 {
		t.Fatalf("Accounts rows %v, %v", rows, err)
	}
	for c, col := range []string{"A", "B", "C", "D"} {
		longest := 0
		for _, r := range rows {
			if c < len(r) {
				longest = max(longest, len(r[c]))
			}
		}
		w, err := f.GetColWidth(SheetAccounts, col)
		if err != nil {
			t.Fatal(err)
		}
		if w < float64(longest) {
			t.Errorf("Accounts column %s (%s) is %g wide, its longest text %d characters", col, rows[0][c], w, longest)
		}
	}
}

// TransfersOf gives the same rows, in date order, from the index as from a
// scan of the sheet, and scans again once rows are added after indexing.
func TestTransfersOfIndexed(t *testing.T) {
	s := bigSchedule(50)
	for i, g := range s.Grants {
		for k := range i % 4 { // none to three transfers, out of date order
			s.Transfers = append(s.Transfers, Transfer{GrantID: g.ID, Date: g.GrantDate.AddDate(0, 0, 90*(3-k)), CostCenter: "CC" + string(rune('A'+k)), Row: len(s.Transfers) + 2})
		}
	}
	scanned := func(id string) []Transfer {
		u := *s
		u.idx = nil
		return u.TransfersOf(id)
	}
	s.Reindex()
	if s.fresh() == nil {
		t.Fatal("the index is stale just after Reindex")
	}
	for _, g := range s.Grants {
		got, want := s.TransfersOf(g.ID), scanned(g.ID)
		if len(got) != len(want) {
			t.Fatalf("%s: %d transfers from the index, %d scanned", g.ID, len(got), len(want))
		}
		for k := range got {
			if got[k] != want[k] || (k > 0 && got[k].Date.Before(got[k-1].Date)) {
				t.Errorf("%s: transfer %d is %+v, scanned %+v", g.ID, k, got[k], want[k])
			}
		}
	}
	s.Transfers = append(s.Transfers, Transfer{GrantID: s.Grants[0].ID, Date: s.Grants[0].GrantDate.AddDate(0, 1, 0), CostCenter: "late", Row: 999})
	if tr := s.TransfersOf(s.Grants[0].ID); len(tr) != 1 || tr[0].CostCenter != "late" {
		t.Errorf("a row added after indexing: %+v", tr)
	}
}

// Whether an event names a replacement award is answered by the index as
// by a scan of the Events sheet, before and after such an event is added.
func TestHasReplacementsIndexed(t *testing.T) {
	s := bigSchedule(20)
	for i, g := range s.Grants[:5] {
		s.Events = append(s.Events, Event{GrantID: g.ID, Date: g.GrantDate.AddDate(1, 0, i), Kind: Forfeited, Shares: 10, Row: len(s.Events) + 2})
	}
	s.Reindex()
	if s.fresh() == nil || s.hasReplacements() {
		t.Fatalf("fresh index %v, replacements %v: want a fresh index and none", s.fresh() != nil, s.hasReplacements())
	}
	s.Events[2].ReplacementGrantID = s.Grants[9].ID // edited in place: Reindex needed
	s.Reindex()
	if !s.hasReplacements() {
		t.Error("the index misses a replacement named after Reindex")
	}
	s.Events = append(s.Events, Event{GrantID: s.Grants[7].ID, Kind: Cancelled, ReplacementGrantID: s.Grants[8].ID})
	s.Events[2].ReplacementGrantID = ""
	if s.fresh() != nil || !s.hasReplacements() {
		t.Error("after an event is appended the sheet is scanned again and its replacement found")
	}
}
