package pricing_test

import (
	"bytes"
	"math"
	"testing"

	"grantworth/grants"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
)

// Two grants on the same terms (a board's batch) are valued once; when
// one is corrected and the other keeps the value a prior close filed, the
// corrected one keeps today's measurement and the locked one the filed
// value: keeping one grant's value does not write over the other's.
func TestLockedTwinDoesNotOverwriteCorrectedTwin(t *testing.T) {
	d := grantstest.Day
	ledger := func() *grants.Schedule {
		s := grantstest.Fernhollow()
		for _, id := range []string{"A-1", "A-2"} {
			s.Grants = append(s.Grants, grants.Grant{ID: id, Instrument: grants.Option, GrantDate: d("2025-05-01"), Shares: 2400, Strike: 3.5,
				ExpiryDate: d("2035-05-01"), VestStart: d("2025-05-01"), VestMonths: 48, CliffMonths: 12, VestEvery: 3, Purpose: grants.Compensation})
		}
		return s
	}
	_, data := closeOf(t, ledger(), nil, pricing.Options{})
	prior := readBack(t, data)
	// The share prices were wrong: both twins would now be worth more.
	s := ledger()
	for i := range s.SharePrices {
		s.SharePrices[i].Price *= 1.1
	}
	s.Company.ValuationDate = d("2026-12-31")
	v, _ := closeOf(t, s, prior, pricing.Options{Correct: []string{"A-1"}})
	fresh := grantstest.Value(t, s, nil)
	byID := func(v *pricing.Valuation, id string) *pricing.GrantValue {
		for i := range v.Grants {
			if v.Grants[i].Inputs.Grant.ID == id {
				return &v.Grants[i]
			}
		}
		t.Fatalf("no grant %s", id)
		return nil
	}
	a1, a2, want := byID(v, "A-1"), byID(v, "A-2"), byID(fresh, "A-1")
	filed := prior.Locks()["A-2"].Tranches
	for k := range a1.Results {
		if math.Float64bits(a1.Results[k].Value) != math.Float64bits(want.Results[k].Value) {
			t.Errorf("corrected A-1 tranche %d: %v, today's measurement %v", k+1, a1.Results[k].Value, want.Results[k].Value)
		}
		if math.Float64bits(a2.Results[k].Value) != math.Float64bits(filed[k].Result.Value) {
			t.Errorf("locked A-2 tranche %d: %v, filed %v", k+1, a2.Results[k].Value, filed[k].Result.Value)
		}
	}
	if a1.Status != pricing.Corrected || a2.Status != pricing.Locked {
		t.Errorf("statuses %s, %s", a1.Status, a2.Status)
	}
}

// A rerun that keeps its grants' filed values without valuing them
// (Options.Reuse) writes the same valuation.json, byte for byte, as one
// that values every grant again and keeps the filed values: the zero
// rates at the expected terms (ExpectedTermRate, disclosed as the
// weighted-average risk-free rate) included.
func TestReuseWritesWhatValuingAgainWrites(t *testing.T) {
	s := studiesLedger()
	_, data := closeOf(t, s, nil, pricing.Options{})
	prior := readBack(t, data)
	rerun := func(reuse bool) (*pricing.Valuation, []byte) {
		s := studiesLedger()
		s.Company.ValuationDate = grantstest.Day("2026-12-31")
		return closeOf(t, s, prior, pricing.Options{Reuse: reuse, Studies: &prior.Studies})
	}
	kept, keptJSON := rerun(true)
	again, againJSON := rerun(false)
	n := 0
	for i := range kept.Grants {
		a, b := &kept.Grants[i], &again.Grants[i]
		if a.Reused {
			n++
		}
		for k := range a.ExpectedTermRate {
			if math.Float64bits(a.ExpectedTermRate[k]) != math.Float64bits(b.ExpectedTermRate[k]) {
				t.Errorf("grant %s tranche %d: zero rate at the expected term %v kept, %v valued again", a.Inputs.Grant.ID, k+1, a.ExpectedTermRate[k], b.ExpectedTermRate[k])
				break
			}
		}
	}
	if n == 0 {
		t.Fatal("no grant kept its filed values")
	}
	if !bytes.Equal(keptJSON, againJSON) {
		t.Error("valuation.json differs")
	}
}
