package valuation

import (
	"fmt"
	"testing"
)

var latticeSink float64

func benchGrant() (Terms, Market) {
	return Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08},
		Market{Spot: 12, VolAnnual: 0.55, DividendYield: 0.01, Curve: FlatCurve(0.04)}
}

func monthly(n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = float64(i+1) / 12
	}
	return v
}

// One tranche on the raw N-step tree; ns/node counts the (N+1)(N+2)/2 nodes
// of the tree (backward pass of value and expected life, forward pass to the
// vest date).
func BenchmarkLatticeRaw(b *testing.B) {
	tm, mk := benchGrant()
	for _, n := range []int{500, 2000, 5000} {
		b.Run(fmt.Sprintf("N=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			o := LatticeOptions{Steps: n}
			for b.Loop() {
				r, err := Lattice(tm, mk, o)
				if err != nil {
					b.Fatal(err)
				}
				latticeSink += r.Value
			}
			nodes := float64(n+1) * float64(n+2) / 2
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/nodes, "ns/node")
		})
	}
}

// A grant of 48 monthly tranches against one tranche, both at N = 2000.
func BenchmarkLatticeTranches(b *testing.B) {
	tm, mk := benchGrant()
	for _, k := range []int{1, 48} {
		vest := monthly(48)[48-k:] // the single tranche is the last (4 years)
		b.Run(fmt.Sprintf("tranches=%d/N=2000", k), func(b *testing.B) {
			b.ReportAllocs()
			o := LatticeOptions{Steps: 2000}
			for b.Loop() {
				rs, err := LatticeTranches(tm, vest, mk, o)
				if err != nil {
					b.Fatal(err)
				}
				latticeSink += rs[0].Value
			}
		})
	}
}

// Auto mode: one tranche and a 48-tranche grant (DESIGN §5: at most 0.5 ms
// for a unique ten-year grant with vesting, multiple and exit, all its
// tranches included), and one tranche with the barrier a node from the spot
// and vesting a week away (issue 11's region); ms/grant is the cost of one
// call, ns/node one node-step of the levels it solved (autoNodeSteps).
func BenchmarkLatticeAuto(b *testing.B) {
	tm, mk := benchGrant()
	near := Terms{Strike: 100, YearsToExpiry: 10, YearsToVest: 7.0 / 365, ExerciseMultiple: 1.05, ExitRate: 0.08}
	nearMk := Market{Spot: 100, VolAnnual: 0.5, Curve: FlatCurve(0.04)}
	for _, c := range []struct {
		name string
		tm   Terms
		mk   Market
		vest []float64
	}{
		{"tranches=1", tm, mk, monthly(48)[47:]},
		{"tranches=48", tm, mk, monthly(48)},
		{"barrier-near-spot", near, nearMk, []float64{near.YearsToVest}},
	} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			var rs []Result
			for b.Loop() {
				var err error
				rs, err = LatticeTranches(c.tm, c.vest, c.mk, LatticeOptions{})
				if err != nil {
					b.Fatal(err)
				}
				latticeSink += rs[0].Value
			}
			ns := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
			b.ReportMetric(ns/1e6, "ms/grant")
			b.ReportMetric(ns/float64(autoNodeSteps(c.tm, c.vest, c.mk, rs)), "ns/node")
		})
	}
}

// A ledger slice: 100 grants of 48 monthly tranches in auto mode on all
// cores; ms/grant scales to the 10,000-grant target of DESIGN §5.
func BenchmarkRunJobsAuto(b *testing.B) {
	tm, mk := benchGrant()
	jobs := make([]Job, 100)
	for i := range jobs {
		t := tm
		t.Strike = 8 + 0.1*float64(i)
		m := mk
		m.VolAnnual = 0.3 + 0.004*float64(i)
		jobs[i] = Job{Terms: t, VestYears: monthly(48), Market: m}
	}
	b.ReportAllocs()
	for b.Loop() {
		rs := RunJobs(jobs, 0, nil)
		latticeSink += rs[0].Tranches[0].Value
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(jobs))/1e6, "ms/grant")
}

// autoNodeSteps are the node-steps auto mode solved for a grant whose
// results are rs: every level up to the one of the finest steps.
func autoNodeSteps(tm Terms, vest []float64, mk Market, rs []Result) int {
	_, geo, _ := autoPreflight(tm, vest, mk, Convention{})
	steps := 0
	for _, r := range rs {
		steps = max(steps, r.Steps)
	}
	n := 0
	for lv := 0; lv < autoMaxLevels; lv++ {
		n += geo.work(lv)
		if geo.steps(lv) >= steps {
			break
		}
	}
	return n
}
