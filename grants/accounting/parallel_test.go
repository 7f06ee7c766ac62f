package accounting

import (
	"fmt"
	"reflect"
	"testing"

	"grantworth/grants"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
)

// workersSchedule is grantstest's company, with its liability-classified
// warrant and its forfeiture and exercise, at the quarter ending on end,
// with more: the performance share units of grantstest.Conditioned (its
// condition assessed probable, improbable, then probable at 150%), a
// repricing, a cancellation with a replacement award, a financing
// warrant, transfers between cost centres, a tax rate when taxed, and
// forty plain options vesting quarterly, granted 23 days apart (the last
// ones after the first close), every third with a forfeiture, so that the
// grants fill many blocks of work.
func workersSchedule(end string, taxed bool) *grants.Schedule {
	d := grantstest.Day
	s := grantstest.Fernhollow()
	s.Company.ValuationDate = d(end)
	s.Company.PeriodStart = grants.Company{}.DefaultPeriodStart(s.Company.ValuationDate)
	if taxed {
		s.Assumptions.TaxRate = 0.25
	}
	c := grantstest.Conditioned()
	for _, g := range c.Grants {
		if g.ID == "P-001" {
			s.Grants = append(s.Grants, g)
		}
	}
	s.Conditions = []grants.Condition{c.Conditions[0]}
	s.Assessments = c.Assessments
	if s.Conditions[0].ID != "REV27" || s.Conditions[0].Kind != grants.Performance {
		panic("grantstest.Conditioned's first condition is not the performance condition REV27")
	}
	k := 2.0
	s.Grants = append(s.Grants,
		grants.Grant{ID: "R-001", Holder: "E04", Instrument: grants.Option, GrantDate: d("2026-02-01"), Shares: 1200, Strike: 4.5, ExpiryDate: d("2036-02-01"),
			VestStart: d("2026-02-01"), VestMonths: 24, CliffMonths: 6, VestEvery: 3, Purpose: grants.Compensation},
		grants.Grant{ID: "F-001", Instrument: grants.Warrant, GrantDate: d("2025-09-01"), Shares: 50000, Strike: 5, ExpiryDate: d("2030-09-01"),
			VestStart: d("2025-09-01"), VestEvery: 1, Classification: grants.Liability, ExerciseStyle: grants.American, Purpose: grants.Financing})
	for i := range 40 {
		g := d("2024-01-15").AddDate(0, 0, 23*i)
		s.Grants = append(s.Grants, grants.Grant{ID: fmt.Sprintf("W-%03d", i), Holder: fmt.Sprintf("H%02d", i), Instrument: grants.Option, GrantDate: g,
			Shares: int64(480 + 48*(i%5)), Strike: 2 + float64(i%7)/4, ExpiryDate: g.AddDate(10, 0, 0), VestStart: g, VestMonths: 48, CliffMonths: 12, VestEvery: 3,
			CostCenter: []string{"", "R&D", "Sales"}[i%3], Purpose: grants.Compensation})
		if i%3 == 0 {
			s.Events = append(s.Events, grants.Event{GrantID: fmt.Sprintf("W-%03d", i), Date: g.AddDate(1, 2, 0), Kind: grants.Forfeited, Shares: 100})
		}
		if i%4 == 1 {
			s.Transfers = append(s.Transfers, grants.Transfer{GrantID: fmt.Sprintf("W-%03d", i), Date: d("2026-05-01"), CostCenter: "Operations"})
		}
	}
	s.Events = append(s.Events, grants.Event{GrantID: "G-004", Date: d("2026-02-01"), Kind: grants.Cancelled, Shares: 600, ReplacementGrantID: "R-001"})
	s.Modifications = append(s.Modifications, grants.Modification{GrantID: "G-001", Date: d("2026-05-15"), NewStrike: &k, Note: "repriced"})
	s.Reindex()
	return s
}

// withWorkers runs f with the close's work per grant shared among w
// workers, however few the grants.
func withWorkers(w int, f func()) {
	cw, mp := closeWorkers, minParallel
	defer func() { closeWorkers, minParallel = cw, mp }()
	closeWorkers, minParallel = w, 0
	f()
}

// valueQuickly values s as grantstest.Value does, after a prior close
// taking the values and the checks it filed where the inputs are the same
// (as the value command does after a close by the same version): the
// books, not the values, are under test.
func valueQuickly(t *testing.T, s *grants.Schedule, prior *Prior) *pricing.Valuation {
	t.Helper()
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	opts := pricing.Options{Locks: prior.Locks()}
	if prior != nil {
		opts.Reuse, opts.Studies = true, &prior.Studies
	}
	v, err := pricing.Value(s, ins, opts)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// A close shared among workers gives the same books, to the bit, as one
// worker alone: the first close and the next one after it, taxed and not
// (our own rule: the sums are made in grant order whatever the number of
// workers).
//
// Not parallel: it sets the package's closeWorkers and minParallel.
func TestWorkersCloseToTheBit(t *testing.T) {
	v1 := valueQuickly(t, workersSchedule("2026-06-30", false), nil)
	var prior *Prior
	var v2 *pricing.Valuation
	for _, taxed := range []bool{false, true} {
		first := workersSchedule("2026-06-30", taxed)
		var b1 *Books
		withWorkers(1, func() { b1 = closeOf(t, first, v1, nil) })
		for _, w := range []int{2, 3, 8} {
			withWorkers(w, func() {
				if b := closeOf(t, first, v1, nil); !reflect.DeepEqual(b, b1) {
					t.Errorf("taxed %v, first close: %d workers differ from one:\n%s\n%s", taxed, w, b.Expense, b1.Expense)
				}
			})
		}
		if taxed != (b1.Tax != nil) {
			t.Fatalf("taxed %v: tax report %+v", taxed, b1.Tax)
		}
		if len(b1.Expense.Modifications) < 2 || len(b1.Expense.Financing) != 1 {
			t.Fatalf("modifications %+v, financing %+v", b1.Expense.Modifications, b1.Expense.Financing)
		}

		s2 := workersSchedule("2026-09-30", taxed)
		s2.Events = append(s2.Events, grants.Event{GrantID: "W-010", Date: grantstest.Day("2026-08-03"), Kind: grants.Forfeited, Shares: 200},
			grants.Event{GrantID: "W-007", Date: grantstest.Day("2026-04-20"), Kind: grants.Forfeited, Shares: 50}) // recorded late
		s2.Reindex()
		if prior == nil { // the tax rate changes neither the values nor what the close files
			prior = Filed(first, v1, b1)
		}
		if _, err := Open(s2, prior); err != nil {
			t.Fatal(err)
		}
		if v2 == nil {
			v2 = valueQuickly(t, s2, prior)
		}
		var b2 *Books
		withWorkers(1, func() { b2 = closeOf(t, s2, v2, prior) })
		if b2.Reconciliation == nil || len(b2.Reconciliation.CatchUps) == 0 {
			t.Fatalf("taxed %v: no catch-up for the late forfeiture: %+v", taxed, b2.Reconciliation)
		}
		for _, w := range []int{2, 5} {
			withWorkers(w, func() {
				if b := closeOf(t, s2, v2, prior); !reflect.DeepEqual(b, b2) {
					t.Errorf("taxed %v, close after the prior: %d workers differ from one:\n%s\n%s", taxed, w, b.Expense, b2.Expense)
				}
			})
		}
	}
}
