package grants

import "testing"

// The attribution ledger takes forfeited and cancelled shares from the same
// tranches as Schedule.Tranches does, so the expense tables and the
// valuation's tranche counts agree (our own rule, stated in both places).
func TestLedgerMatchesScheduleTranches(t *testing.T) {
	s := smallSchedule()
	s.Events = append(s.Events,
		Event{GrantID: "G-003", Date: ymd("2026-07-15"), Kind: Cancelled, Shares: 400},
		Event{GrantID: "G-001", Date: ymd("2026-08-01"), Kind: Forfeited, Shares: 100},
	)
	for _, g := range s.Grants {
		ts := s.Tranches(g)
		fv := make([]float64, len(ts))
		for i := range fv {
			fv[i] = 1
		}
		a, err := s.AwardCost(g, fv)
		if err != nil {
			t.Fatal(err)
		}
		l, err := newAwardLedger(&a, ExpensePolicy{}, ymd("2099-12-31"))
		if err != nil {
			t.Fatalf("grant %s: %v", g.ID, err)
		}
		for i, tr := range ts {
			c := l.tr[i].countsAt(ymd("2099-12-31"))
			if c.reversed != tr.Forfeited || c.accelerated != tr.Cancelled {
				t.Errorf("grant %s tranche %d: ledger forfeited %d cancelled %d, Schedule.Tranches %d and %d",
					g.ID, tr.Index, c.reversed, c.accelerated, tr.Forfeited, tr.Cancelled)
			}
		}
	}
	if _, err := s.AwardCost(s.Grants[0], nil); err == nil {
		t.Error("AwardCost accepted no fair values")
	}
	start, end := s.Period()
	if !start.Equal(ymd("2026-07-01")) || !end.Equal(ymd("2026-09-30")) {
		t.Errorf("period %v..%v", start, end)
	}
}

// The period defaults to the valuation date's calendar quarter (DESIGN §4.2).
func TestSchedulePeriodDefault(t *testing.T) {
	s := &Schedule{Company: Company{ValuationDate: ymd("2026-11-20")}}
	start, end := s.Period()
	if !start.Equal(ymd("2026-10-01")) || !end.Equal(ymd("2026-11-20")) {
		t.Errorf("period %v..%v, want 2026-10-01..2026-11-20", start, end)
	}
}
