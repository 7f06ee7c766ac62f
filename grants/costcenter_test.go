package grants

import (
	"strings"
	"testing"
	"testing/fstest"
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
