package accounting

import (
	"reflect"
	"testing"
	"unsafe"

	"grantworth/grants"
	"grantworth/grants/pricing"
)

// TestCloseLetsGoOnlyOfWhatNothingReads checks that what Close lets go of
// as it goes (each ledger's tranches once its expense is drawn,
// period.dropsLedgers), and that its awards refer to the valuation's
// tranches rather than copy them (awardsOf), changes nothing: its
// expense report and disclosures equal Attribute's over AwardsOf's
// awards, which lets go of nothing. On the demo company's schedule
// as filed, and without its tax rate, when the ledgers are let go too.
// (An identity of the code, no outside source.)
func TestCloseLetsGoOnlyOfWhatNothingReads(t *testing.T) {
	for _, taxed := range []bool{true, false} {
		s, rep, err := grants.ReadFile("../../sample/tarnwick.xlsx")
		if err != nil {
			t.Fatal(err)
		}
		if rep != nil && !rep.OK() {
			t.Fatalf("sample has problems: %v", rep.Err())
		}
		if !taxed {
			s.Assumptions.TaxRate = 0
			var dated []grants.AssumptionRow
			for _, r := range s.Assumptions.Dated {
				if r.Key != "tax_rate" {
					dated = append(dated, r)
				}
			}
			s.Assumptions.Dated = dated
		}
		fv := func(g grants.Grant, k int) float64 { return 1 + float64(k)/10 }
		b, err := Close(s, fakeValuation(s, fv, nil), nil)
		if err != nil {
			t.Fatal(err)
		}
		if (b.Tax != nil) != taxed {
			t.Fatalf("taxed %v: tax report %v", taxed, b.Tax)
		}
		awards, _, err := AwardsOf(s, fakeValuation(s, fv, nil))
		if err != nil {
			t.Fatal(err)
		}
		start, end := s.Period()
		want, disc, err := Attribute(awards, PolicyOf(s), start, end, b.SharePrice.Value)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(b.Expense, want) {
			t.Errorf("taxed %v: Close's expense report differs from Attribute's", taxed)
		}
		if !reflect.DeepEqual(b.Disclosure, disc) {
			t.Errorf("taxed %v: Close's disclosures differ from Attribute's", taxed)
		}
	}
}

// What Close lets go of as it goes is read by nothing after, after a
// prior close too, where each grant's views for the reconciliation are
// taken with its expense: the books are the same, to the bit, when it
// lets go of nothing. On the schedule of TestWorkersCloseToTheBit (a
// repricing, a replacement award, a liability-classified and a financing
// warrant, late events), untaxed, its first close and the next, on one
// worker and on three. (An identity of the code, no outside source.)
//
// Not parallel: it sets the package's letGo, closeWorkers and minParallel.
func TestCloseAfterPriorLetsGoOnlyOfWhatNothingReads(t *testing.T) {
	keeping := func(f func() *Books) *Books {
		defer func() { letGo = true }()
		letGo = false
		return f()
	}
	first := workersSchedule("2026-06-30", false)
	v1 := valueQuickly(t, first, nil)
	b1 := closeOf(t, first, v1, nil)
	prior := Filed(first, v1, b1)
	s2 := workersSchedule("2026-09-30", false)
	s2.Events = append(s2.Events, grants.Event{GrantID: "W-010", Date: ymd("2026-08-03"), Kind: grants.Forfeited, Shares: 200},
		grants.Event{GrantID: "W-007", Date: ymd("2026-04-20"), Kind: grants.Forfeited, Shares: 50}) // recorded late
	s2.Reindex()
	if _, err := Open(s2, prior); err != nil {
		t.Fatal(err)
	}
	v2 := valueQuickly(t, s2, prior)
	for _, w := range []int{1, 3} {
		withWorkers(w, func() {
			for _, c := range []struct {
				name  string
				s     *grants.Schedule
				v     *pricing.Valuation
				prior *Prior
			}{{"first close", first, v1, nil}, {"close after the prior", s2, v2, prior}} {
				got := closeOf(t, c.s, c.v, c.prior)
				want := keeping(func() *Books { return closeOf(t, c.s, c.v, c.prior) })
				if !reflect.DeepEqual(got, want) {
					t.Errorf("%s, %d workers: the books differ when Close lets go of nothing:\n%s\n%s", c.name, w, got.Expense, want.Expense)
				}
				if c.prior != nil && (got.Reconciliation == nil || len(got.Reconciliation.CatchUps) == 0) {
					t.Errorf("%s: no catch-up for the late forfeiture: %+v", c.name, got.Reconciliation)
				}
			}
		})
	}
}

// A large close holds a ledger entry per tranche, millions of them: the
// entry stays within the 48 bytes trancheLedger's comment gives it. (A
// property of the code, no outside source.)
func TestTrancheLedgerSize(t *testing.T) {
	if n := unsafe.Sizeof(trancheLedger{}); n > 48 {
		t.Errorf("a ledger entry is %d bytes, not 48", n)
	}
}
