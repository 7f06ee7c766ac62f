package accounting

import "grantworth/valuation"

// survivals caches valuation.SurvivalToVest by whole days: a view of a
// ledger asks for the expected share of every tranche, and the
// reconciliation and the forecast look at every ledger in a dozen views,
// so that a large ledger asks for the same few thousand powers millions
// of times. The years are always days/365 of a whole number of days, so a
// table by rate and days gives exactly what SurvivalToVest would (it
// fills itself from SurvivalToVest). It keeps the last two rates asked
// for (the policy's and, in the reconciliation, the prior close's). A
// survivals is one goroutine's: each worker of a close has its own
// (ledgerScratch).
type survivals struct {
	tabs [2]survivalTable
	next int // the table to reuse for a third rate
}

type survivalTable struct {
	rate float64
	used bool
	v    []float64 // by days; 0 until computed (or an underflow, computed each time)
}

// maxCachedDays bounds a table (256 KiB); a longer service is computed
// each time.
const maxCachedDays = 1 << 15

// at is valuation.SurvivalToVest(rate, float64(days)/365).
func (s *survivals) at(rate float64, days int) float64 {
	if days <= 0 || rate == 0 || days >= maxCachedDays {
		return valuation.SurvivalToVest(rate, float64(days)/365)
	}
	t := &s.tabs[0]
	switch {
	case t.used && t.rate == rate:
	case s.tabs[1].used && s.tabs[1].rate == rate:
		t = &s.tabs[1]
	default:
		t = &s.tabs[s.next]
		s.next = 1 - s.next
		clear(t.v)
		t.rate, t.used = rate, true
	}
	if days >= len(t.v) {
		v := make([]float64, min(max(days+1, 2*len(t.v), 512), maxCachedDays))
		copy(v, t.v)
		t.v = v
	}
	x := t.v[days]
	if x == 0 {
		x = valuation.SurvivalToVest(rate, float64(days)/365)
		t.v[days] = x
	}
	return x
}
