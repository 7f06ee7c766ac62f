package accounting

import (
	"testing"

	"grantworth/grants"
	"grantworth/grants/grantstest"
)

// The attribution ledger takes forfeited and cancelled shares from the same
// tranches as Schedule.Tranches does, so the expense tables and the
// valuation's tranche counts agree (our own rule, stated in both places).
func TestLedgerMatchesScheduleTranches(t *testing.T) {
	s := grantstest.Fernhollow()
	s.Events = append(s.Events,
		grants.Event{GrantID: "G-003", Date: ymd("2026-07-15"), Kind: grants.Cancelled, Shares: 400},
		grants.Event{GrantID: "G-001", Date: ymd("2026-08-01"), Kind: grants.Forfeited, Shares: 100},
	)
	for _, g := range s.Grants {
		ts := s.Tranches(g)
		fv := make([]float64, len(ts))
		for i := range fv {
			fv[i] = 1
		}
		a, err := AwardOf(s, g, fv)
		if err != nil {
			t.Fatal(err)
		}
		l, err := newAwardLedger(&a, Policy{}, ymd("2099-12-31"), nil)
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
	if _, err := AwardOf(s, s.Grants[0], nil); err == nil {
		t.Error("Award accepted no fair values")
	}
	start, end := s.Period()
	if !start.Equal(ymd("2026-07-01")) || !end.Equal(ymd("2026-09-30")) {
		t.Errorf("period %v..%v", start, end)
	}
}
