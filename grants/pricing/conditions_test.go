package pricing_test

import (
	"math"
	"testing"

	"grantworth/grants"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// valueConditioned values grantstest.Conditioned with loose simulation
// targets (the test's own speed; the figures checked are identities and
// agreements within the stated errors).
func valueConditioned(t *testing.T) (*grants.Schedule, *pricing.Valuation, map[string]*pricing.GrantValue) {
	t.Helper()
	s := grantstest.Conditioned()
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	v, err := pricing.Value(s, ins, pricing.Options{SimTarget: 4})
	if err != nil {
		t.Fatal(err)
	}
	by := map[string]*pricing.GrantValue{}
	for i := range v.Grants {
		by[v.Grants[i].Inputs.Grant.ID] = &v.Grants[i]
	}
	return s, v, by
}

// Dispatch by condition: a performance condition stays out of the fair
// value (ASC 718-10-30-27, IFRS 2.19), so P-001's units are worth what the
// same RSUs are; a closing-price hurdle is on the lattice with the
// simulation beside it within the combined error; an average-price hurdle
// and relative TSR by simulation; the generic lattice checks leave the
// market-condition grants alone.
func TestValueConditions(t *testing.T) {
	_, v, by := valueConditioned(t)
	p := by["P-001"]
	for k, r := range p.Results {
		if want := valuation.RSUValue(p.Inputs.Market, p.Inputs.Terms[k].YearsToVest); r != want {
			t.Errorf("P-001 tranche %d: %+v, want the RSU value %+v", k, r, want)
		}
	}
	if p.Condition != nil {
		t.Errorf("P-001: a performance condition has no condition valuation: %+v", p.Condition)
	}

	h := by["H-001"]
	c := h.Condition
	if c == nil || c.Method != "lattice" || len(c.Z) != len(h.Results) || c.Sim == nil || len(c.Plain) != len(h.Results) {
		t.Fatalf("H-001 condition valuation: %+v", c)
	}
	for k, r := range h.Results {
		if r != c.Lattice[k] || !(r.Value > 0 && r.Value < c.Plain[k].Value) || math.Abs(c.Z[k]) > pricing.MonteCarloZLimit {
			t.Errorf("H-001 tranche %d: %+v, plain %v, z %.2f", k, r, c.Plain[k].Value, c.Z[k])
		}
		if vest := h.Inputs.Terms[k].YearsToVest; c.Sim.DerivedServiceYears[k] < vest-1.0/365 {
			t.Errorf("H-001 tranche %d: derived service %.3f years before its vest date %.3f", k, c.Sim.DerivedServiceYears[k], vest)
		}
	}
	if hd := h.Inputs.Condition.Hurdle; hd == nil || hd.Price != 7 || hd.Monitoring != valuation.MonitorDaily || math.Abs(hd.YearsToDeadline-valuation.YearFrac(grantstest.Day("2026-01-15"), grantstest.Day("2030-01-15"))) > 1e-12 {
		t.Errorf("H-001 hurdle inputs %+v", hd)
	}

	a := by["H-002"]
	if a.Condition == nil || a.Condition.Method != "simulation" || a.Condition.Sim == nil || a.Results[0] != a.Condition.Sim.Tranches[0] {
		t.Errorf("H-002 (20-day average): %+v", a.Condition)
	}
	if a.Results[0].Value >= valuation.RSUValue(a.Inputs.Market, a.Inputs.Terms[0].YearsToVest).Value {
		t.Errorf("H-002: units with a hurdle %.4f not below plain units", a.Results[0].Value)
	}

	ts := by["T-001"]
	tc := ts.Condition
	if tc == nil || tc.TSR == nil || ts.Results[0] != tc.TSR.Tranches[0] {
		t.Fatalf("T-001: %+v", tc)
	}
	in := ts.Inputs.Condition.TSR
	if len(in.Peers) != 3 || in.Returns < 20 || ts.Inputs.Market.VolAnnual != in.Company.Vol.Annual || in.Company.ToDate <= 0 {
		t.Errorf("T-001 inputs: %+v", in)
	}
	// The payout is at most 200% of target, so each unit is worth less
	// than two shares delivered at the end.
	if r := ts.Results[0]; !(r.Value > 0 && r.Value < 2*ts.Inputs.Market.Spot) || r.ErrorEstimate <= 0 {
		t.Errorf("T-001 value %+v", r)
	}
	for _, mc := range v.MonteCarlo {
		if g := by[mc.GrantID]; g.Inputs.Condition.Market() {
			t.Errorf("the generic Monte Carlo check took market-condition grant %s", mc.GrantID)
		}
	}
	if v.Convergence != nil && by[v.Convergence.GrantID].Inputs.Condition.Market() {
		t.Errorf("the convergence study took market-condition grant %s", v.Convergence.GrantID)
	}
	// The sensitivity cases move the market-condition grants too: higher
	// volatility, more value for every award here.
	for _, sc := range v.Sensitivity {
		if sc.Input == "volatility" && !(sc.Points[len(sc.Points)-1].FairValueTotal > sc.Points[0].FairValueTotal) {
			t.Errorf("volatility sensitivity not increasing: %+v", sc.Points)
		}
	}
}
