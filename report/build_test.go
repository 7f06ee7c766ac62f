package report

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
)

// Build lays a valuation out without changing a number: the Model's
// tranches, totals, sensitivity and checks are the valuation's own.
func TestBuildMapsTheValuation(t *testing.T) {
	s, _, err := grants.ReadFile(filepath.Join("..", "sample", "tarnwick.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	v := grantstest.Value(t, s, nil)
	b, err := accounting.Close(s, v, nil)
	if err != nil {
		t.Fatal(err)
	}
	run := Run{Tool: Tool{Name: "grantworth", Version: "test"}, Input: Input{Path: "sample/tarnwick.xlsx", SHA256: "00"}, Warnings: []string{"first warning"}}
	// Build takes v over and drops each grant's tranche results once laid
	// out: keep what this test compares.
	valued := append([]pricing.GrantValue(nil), v.Grants...)
	m, err := Build(s, v, b, run)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Grants) != len(valued) {
		t.Fatalf("%d grants in the Model, %d valued", len(m.Grants), len(valued))
	}
	for i := range v.Grants {
		if gv := &v.Grants[i]; gv.Results != nil || gv.BSM != nil || gv.Inputs.Tranches != nil {
			t.Errorf("grant %s: Build kept the valuation's tranche detail after laying it out", gv.Inputs.Grant.ID)
		}
	}
	for _, ge := range b.Expense.Grants {
		if ge.Tranches != nil {
			t.Errorf("grant %s: Build kept the books' tranche expense after laying it out", ge.GrantID)
		}
	}
	for i, g := range m.Grants {
		gv := valued[i]
		if g.ID != gv.Inputs.Grant.ID || len(g.Tranches) != len(gv.Results) {
			t.Fatalf("grant %d: %s with %d tranches, valued %s with %d", i, g.ID, len(g.Tranches), gv.Inputs.Grant.ID, len(gv.Results))
		}
		for k, tr := range g.Tranches {
			if tr.FairValuePerShare != gv.Results[k].Value || tr.BSMSimplifiedValue != gv.BSM[k].Value || tr.ErrorEstimate != gv.Results[k].ErrorEstimate {
				t.Errorf("grant %s tranche %d: model %+v, valued %+v, BSM %+v", g.ID, k+1, tr, gv.Results[k], gv.BSM[k])
			}
		}
	}
	// The sample's two financing warrants are kept apart from the
	// share-based awards' total; together they are everything valued.
	if m.FinancingTotals.Grants != 2 || math.Abs(m.Totals.FairValueTotal+m.FinancingTotals.FairValueTotal-v.FairValueTotal) > 1e-6 {
		t.Errorf("share-based total %v + financing %v (%d grants), valuation total %v", m.Totals.FairValueTotal,
			m.FinancingTotals.FairValueTotal, m.FinancingTotals.Grants, v.FairValueTotal)
	}
	if len(m.Sensitivity) != len(v.Sensitivity) {
		t.Fatalf("%d sensitivity cases, %d run", len(m.Sensitivity), len(v.Sensitivity))
	}
	for i, c := range m.Sensitivity {
		for j, p := range c.Points {
			if q := v.Sensitivity[i].Points[j]; p.FairValueTotal != q.FairValueTotal || p.Shift != q.Shift {
				t.Errorf("sensitivity %s point %d: model %+v, run %+v", c.Input, j, p, q)
			}
		}
	}
	if !strings.HasPrefix(m.Settings.Sensitivities, "Each case revalues every grant") {
		t.Errorf("settings.sensitivities = %q for a ledger revalued whole", m.Settings.Sensitivities)
	}
	if len(m.CrossChecks) != len(v.MonteCarlo) || !strings.Contains(m.Settings.MonteCarlo, count(pricing.MonteCarloPaths)+" paths per tranche") {
		t.Errorf("cross checks %+v, settings %q, from %+v", m.CrossChecks, m.Settings.MonteCarlo, v.MonteCarlo)
	}
	for j, x := range m.CrossChecks {
		c := v.MonteCarlo[j]
		if x.GrantID != c.GrantID || x.TrancheIndex != c.TrancheIndex || x.Value != c.Result.Value || x.Lattice != c.Lattice ||
			x.LatticeError != c.LatticeError || x.StdErr != c.Result.ErrorEstimate || x.Z != c.Z || x.Seed != c.Seed {
			t.Errorf("cross check %d: model %+v, run %+v", j, x, c)
		}
	}
	if m.Expense == nil {
		t.Error("no expense attribution")
	}
	if len(m.Warnings) == 0 || m.Warnings[0] != "first warning" {
		t.Errorf("warnings %q: the run's come first", m.Warnings)
	}
}

// What the value command lets go of before Build (the tranches' terms,
// pricing.Valuation.ReleaseTerms) changes nothing in the Model, and Build
// sizes its assumptions exactly (grantAssumptionCount), so that a large
// ledger's are not copied as they grow. (Identities of the code.)
func TestBuildAfterReleaseTerms(t *testing.T) {
	s, _, err := grants.ReadFile(filepath.Join("..", "sample", "tarnwick.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	run := Run{Tool: Tool{Name: "grantworth", Version: "test"}, Input: Input{Path: "sample/tarnwick.xlsx", SHA256: "00"}}
	build := func(release bool) *Model {
		v := grantstest.Value(t, s, nil)
		if release {
			v.ReleaseTerms()
		}
		b, err := accounting.Close(s, v, nil)
		if err != nil {
			t.Fatal(err)
		}
		m, err := Build(s, v, b, run)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	want, got := build(false), build(true)
	if len(got.Assumptions) != cap(got.Assumptions) {
		t.Errorf("%d assumptions in room for %d", len(got.Assumptions), cap(got.Assumptions))
	}
	var a, b strings.Builder
	if err := WriteJSON(&a, want); err != nil {
		t.Fatal(err)
	}
	if err := WriteJSON(&b, got); err != nil {
		t.Fatal(err)
	}
	if a.String() != b.String() {
		t.Error("the Model differs once the tranches' terms are let go before Build")
	}
}
