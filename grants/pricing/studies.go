package pricing

import (
	"math"
	"slices"

	"grantworth/valuation"
)

// Studies are the checks a prior close filed beside its values (its
// valuation.json's sensitivity, convergence and cross_checks) and the
// order of its grants. A close that follows it takes a check from it
// instead of running it again only where the check is provably the one
// this run would make, to the last bit (see Options.Studies).
type Studies struct {
	// GrantIDs are the prior close's grants in its ledger order, from
	// which its sensitivity sample was taken.
	GrantIDs    []string
	Sensitivity []Sensitivity
	Convergence *Convergence
	// MonteCarlo are its cross-checks, with their fields as filed:
	// GrantID, TrancheIndex, Lattice, LatticeError, Seed, Z, and of
	// Result the Value, ErrorEstimate and Steps (the paths).
	MonteCarlo []MonteCarloCheck
}

// StudiesReused says which checks a run took from the prior close
// (Options.Studies) instead of running them.
type StudiesReused struct {
	Sensitivity, Convergence bool
	MonteCarlo               int // cross-checks, of len(Valuation.MonteCarlo)
}

// unchanged reports whether gv's values and every input of a check of it
// are what the prior close valued and checked: the grant took its filed
// values (Reused: today's valuation key is the one filed, by this
// grantworth), and the prior close measured it on the inputs that key
// describes (Lock.Measured), so that its checks were made on them too.
func unchanged(gv *GrantValue) bool {
	return gv.Reused && gv.Lock != nil && gv.Lock.Measured
}

// priorCheck is the prior close's Monte Carlo check of tranche k of gv
// with the given seed, completed with auto (the automatic lattice this
// run compares it with), when the simulation is provably the one this
// run would make: the grant is unchanged and the prior simulated the same
// tranche with the same seed and paths. The simulation depends on nothing
// else (the lattice beside it is this run's).
func (p *pricer) priorCheck(gv *GrantValue, k int, seed uint64, auto valuation.Result) (MonteCarloCheck, bool) {
	st := p.studies
	if st == nil || !unchanged(gv) {
		return MonteCarloCheck{}, false
	}
	in := gv.Inputs
	for _, c := range st.MonteCarlo {
		if c.GrantID == in.Grant.ID && c.TrancheIndex == in.Tranches[k].Index && c.Seed == seed && c.Result.Steps == MonteCarloPaths {
			mc := valuation.Result{Value: c.Result.Value, ErrorEstimate: c.Result.ErrorEstimate, Steps: c.Result.Steps, Method: valuation.MethodMC}
			return newCheck(gv, k, auto, mc, seed), true
		}
	}
	return MonteCarloCheck{}, false
}

// priorConvergence is the prior close's convergence study of tranche k
// of gv, beside auto (this run's automatic lattice value), when it is
// provably the one this run would make: the grant is unchanged and the
// prior studied the same tranche (the raw lattices depend on nothing
// else).
func (p *pricer) priorConvergence(gv *GrantValue, k int, auto valuation.Result) (*Convergence, bool) {
	st := p.studies
	if st == nil || st.Convergence == nil || !unchanged(gv) {
		return nil, false
	}
	c := st.Convergence
	if c.GrantID != gv.Inputs.Grant.ID || c.TrancheIndex != gv.Inputs.Tranches[k].Index {
		return nil, false
	}
	return &Convergence{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex, Auto: auto, Points: slices.Clone(c.Points)}, true
}

// priorSensitivity is the prior close's sensitivity cases when this run's
// are provably the same: the sample is the same grants in the same order
// (the prior's sample taken from st.GrantIDs as sensitivity takes it),
// each unchanged, so each case revalues them to the same sample totals;
// the cases are those of sensitivityCases. A point's total is then base ×
// its sample total ÷ sampleBase: it is the filed one when base is the
// filed base (the base case's total), else it is computed from the sample
// total the prior filed (SensitivityPoint.SampleTotal) when it filed
// them. ok is false when neither holds.
func (p *pricer) priorSensitivity(sample []*GrantValue, base, sampleBase float64) ([]Sensitivity, bool) {
	st := p.studies
	if st == nil || len(st.Sensitivity) != len(sensitivityCases) {
		return nil, false
	}
	idx := sampleOf(len(st.GrantIDs))
	if len(idx) != len(sample) {
		return nil, false
	}
	for j, gv := range sample {
		if st.GrantIDs[idx[j]] != gv.Inputs.Grant.ID || !unchanged(gv) {
			return nil, false
		}
	}
	var filedBase *SensitivityPoint
	for i, c := range sensitivityCases {
		s := &st.Sensitivity[i]
		if s.Input != c.key || len(s.Points) != len(c.shifts) {
			return nil, false
		}
		for j, d := range c.shifts {
			pt := &s.Points[j]
			if !same(pt.Shift, shiftShown(c.unit, d)) || pt.Label != c.labels[j] {
				return nil, false
			}
			if d == 0 {
				filedBase = pt
			}
		}
	}
	asFiled := same(filedBase.FairValueTotal, base)
	if !asFiled && !(sampleBase > 0 && same(filedBase.SampleTotal, sampleBase)) {
		return nil, false
	}
	out := make([]Sensitivity, len(st.Sensitivity))
	for i, s := range st.Sensitivity {
		out[i] = Sensitivity{Input: s.Input, Label: s.Label, Unit: s.Unit, Points: slices.Clone(s.Points)}
		if asFiled {
			continue
		}
		for j := range out[i].Points {
			pt := &out[i].Points[j]
			pt.FairValueTotal, pt.Change = sensitivityPoint(base, pt.SampleTotal, sampleBase, sensitivityCases[i].shifts[j] != 0)
		}
	}
	return out, true
}

// same reports whether a and b are the same number to the last bit.
func same(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

// FiledStudies are v's checks as a close files them for the next
// (valuation.json's sensitivity, convergence and cross_checks, its
// grants' order): only the fields Studies lists.
func (v *Valuation) FiledStudies() Studies {
	st := Studies{GrantIDs: make([]string, len(v.Grants))}
	for i := range v.Grants {
		st.GrantIDs[i] = v.Grants[i].Inputs.Grant.ID
	}
	for _, s := range v.Sensitivity {
		f := Sensitivity{Input: s.Input, Label: s.Label, Unit: s.Unit}
		for _, pt := range s.Points {
			f.Points = append(f.Points, SensitivityPoint{Shift: pt.Shift, Label: pt.Label, FairValueTotal: pt.FairValueTotal, Change: pt.Change, SampleTotal: pt.SampleTotal})
		}
		st.Sensitivity = append(st.Sensitivity, f)
	}
	if c := v.Convergence; c != nil {
		st.Convergence = &Convergence{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex,
			Auto: valuation.Result{Value: c.Auto.Value, ErrorEstimate: c.Auto.ErrorEstimate, Steps: c.Auto.Steps}, Points: slices.Clone(c.Points)}
	}
	for _, c := range v.MonteCarlo {
		st.MonteCarlo = append(st.MonteCarlo, MonteCarloCheck{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex, Lattice: c.Lattice, LatticeError: c.LatticeError,
			Result: valuation.Result{Value: c.Result.Value, ErrorEstimate: c.Result.ErrorEstimate, Steps: c.Result.Steps}, Seed: c.Seed, Z: c.Z})
	}
	return st
}
