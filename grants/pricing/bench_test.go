package pricing

import (
	"testing"

	"grantworth/valuation"
)

// The Monte Carlo cross-check of the sample company: the sample of up to
// MonteCarloSample tranches as the value command runs it, beside the
// single 100,000-path simulation of the representative tranche it
// replaced, for comparison.
func BenchmarkMonteCarloCheck(b *testing.B) {
	v, err := sampleValued()
	if err != nil {
		b.Fatal(err)
	}
	b.Run("sample", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			w := &Valuation{Grants: v.Grants}
			if err := (&pricer{}).monteCarlo(w); err != nil {
				b.Fatal(err)
			}
			benchSink = len(w.MonteCarlo)
		}
	})
	b.Run("single100k", func(b *testing.B) {
		b.ReportAllocs()
		gv, k := representative(v.Grants)
		t := mcTerms(gv, k)
		for b.Loop() {
			r, err := valuation.MonteCarlo(t, gv.Inputs.Market, valuation.MCOptions{Paths: 100_000, Seed: MonteCarloSeed})
			if err != nil {
				b.Fatal(err)
			}
			benchSink = r.Steps
		}
	})
}

var benchSink int
