package accounting

import (
	"fmt"
	"testing"

	"grantworth/grants"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

var sinkReport *ExpenseReport

// BenchmarkExpenseLedger attributes a ledger of 10,000 four-year grants with
// monthly vesting (48 tranches each), granted over five years, at one
// quarter end: the size DESIGN §5 sets for the end-to-end run.
func BenchmarkExpenseLedger(b *testing.B) {
	var awards []Award
	for i := 0; i < 10000; i++ {
		g := ymd("2022-01-01").AddDate(0, 0, i%1800)
		a := Award{Grant: grants.Grant{ID: fmt.Sprintf("B%05d", i), Instrument: grants.Option, GrantDate: g, VestStart: g, ExpiryDate: g.AddDate(10, 0, 0), Strike: 5}}
		for k := 1; k <= 48; k++ {
			a.Tranches = append(a.Tranches, TrancheCost{Tranche: grants.Tranche{GrantID: a.Grant.ID, Index: k, VestDate: g.AddDate(0, k, 0), Shares: 100}, FairValue: 3})
		}
		if i%7 == 0 {
			a.Events = []grants.Event{{GrantID: a.Grant.ID, Date: g.AddDate(1, 6, 0), Kind: grants.Forfeited, Shares: 3000}}
		}
		awards = append(awards, a)
	}
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1}
	b.ReportAllocs()
	for b.Loop() {
		r, err := Expense(awards, pol, ymd("2026-10-01"), ymd("2026-12-31"))
		if err != nil {
			b.Fatal(err)
		}
		sinkReport = r
	}
}

var sinkBooks *Books

// BenchmarkClosePrior books a ledger of 2,000 four-year grants with
// monthly vesting (48 tranches each) at a quarter end, as a first close
// and after a prior close (the reconciliation's views of every award
// included), to show what following a prior costs.
func BenchmarkClosePrior(b *testing.B) { benchClose(b, 2000) }

// BenchmarkClose10000 is BenchmarkClosePrior at the 10,000 grants DESIGN
// §5 sets for the end-to-end run.
func BenchmarkClose10000(b *testing.B) { benchClose(b, 10000) }

func benchClose(b *testing.B, n int) {
	s := oneOption("2026-06-30", Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1})
	g0 := s.Grants[0]
	s.Grants = nil
	for i := 0; i < n; i++ {
		g := g0
		g.ID = fmt.Sprintf("B%05d", i)
		g.GrantDate = ymd("2022-01-01").AddDate(0, 0, i%1500)
		g.VestStart, g.ExpiryDate, g.VestMonths, g.CliffMonths = g.GrantDate, g.GrantDate.AddDate(10, 0, 0), 48, 12
		s.Grants = append(s.Grants, g)
		if i%7 == 0 {
			s.Events = append(s.Events, grants.Event{GrantID: g.ID, Date: g.GrantDate.AddDate(1, 6, 0), Kind: grants.Forfeited, Shares: 600})
		}
	}
	s.Reindex() // as the reader does
	fv := func(grants.Grant, int) float64 { return 3 }
	v := fakeValuation(s, fv, nil)
	first, err := Close(s, v, nil)
	if err != nil {
		b.Fatal(err)
	}
	prior := Filed(s, v, first)
	next := *s
	next.Company.ValuationDate, next.Company.PeriodStart = ymd("2026-09-30"), ymd("2026-07-01")
	vn := fakeValuation(&next, fv, prior)
	b.Run("first", func(b *testing.B) {
		b.ReportAllocs()
		c0 := cpuSeconds()
		for b.Loop() {
			if sinkBooks, err = Close(&next, vn, nil); err != nil {
				b.Fatal(err)
			}
		}
		reportCPU(b, c0)
	})
	b.Run("prior", func(b *testing.B) {
		b.ReportAllocs()
		c0 := cpuSeconds()
		for b.Loop() {
			if sinkBooks, err = Close(&next, vn, prior); err != nil {
				b.Fatal(err)
			}
		}
		reportCPU(b, c0)
	})
}

// reportCPU reports the CPU time per operation since c0 (cpuSeconds), all
// cores together: on a shared machine a steadier figure than the time.
func reportCPU(b *testing.B, c0 float64) {
	if c0 > 0 && b.N > 0 {
		b.ReportMetric((cpuSeconds()-c0)/float64(b.N), "cpu-s/op")
	}
}

var sinkLocks map[string]pricing.Lock

// BenchmarkLocks makes the locks of a prior close of 10,000 grants of 48
// tranches each, as a rerun does before it values anything.
func BenchmarkLocks(b *testing.B) {
	p := &Prior{ValuationDate: ymd("2026-09-30")}
	for i := 0; i < 10000; i++ {
		pg := PriorGrant{ID: fmt.Sprintf("B%05d", i), Instrument: grants.Option, Status: pricing.Locked}
		for k := 1; k <= 48; k++ {
			pg.Tranches = append(pg.Tranches, PriorTranche{Index: k, VestDate: ymd("2022-01-01").AddDate(0, k, 0), Shares: 100, Result: valuation.Result{Value: 3}})
		}
		p.Grants = append(p.Grants, pg)
	}
	b.ReportAllocs()
	c0 := cpuSeconds()
	for b.Loop() {
		sinkLocks = p.Locks()
	}
	reportCPU(b, c0)
}
