package pricing

import (
	"fmt"
	"hash/fnv"
	"math"
	"slices"

	"grantworth/grants"
	"grantworth/valuation"
)

// Settings of the simulations of market conditions. The value of a
// relative TSR award and of an average-price hurdle comes from the
// simulation at SimTarget; a closing-price hurdle's from the lattice, with
// the simulation at HurdleCheckTarget beside it as the check (z against
// the lattice, a warning past MonteCarloZLimit). Sensitivity cases run at
// SimSensitivityTarget, from SimSensitivityMinPaths, with the base case's
// seed (common random numbers). A grant simulates with the seed
// ConditionSeed plus the FNV-1a hash of its grant ID (conditionSeed): the
// same in every close, wherever the grant sits in the ledger.
const (
	SimTarget            = 0.002
	HurdleCheckTarget    = 0.0025
	SimSensitivityTarget = 0.005
	// SimSensitivityMinPaths are the fewest paths of a sensitivity case:
	// with the base case's seed its noise mostly cancels in the change.
	SimSensitivityMinPaths = 4 * valuation.SimBlockPaths
	ConditionSeed          = 1001
)

// ConditionValue is how a grant's market condition was valued: what the
// reports show beside the fair values.
type ConditionValue struct {
	Kind grants.ConditionKind
	// Method is "lattice" (a closing-price hurdle; the simulation is its
	// check) or "simulation" (an average-price hurdle, relative TSR).
	Method string
	Seed   uint64

	// A price hurdle: the lattice's values (nil when simulated), the
	// simulation with its hitting-time distribution and derived service
	// periods, z of each tranche (simulation against lattice), and the
	// same award without the hurdle.
	Lattice []valuation.Result
	Sim     *valuation.HurdleSimResult
	Z       []float64
	Plain   []valuation.Result

	// A relative TSR award: the simulation.
	TSR *valuation.TSRResult
}

// DerivedServiceYears are, per tranche, the years from the measurement
// date to the end of the requisite service a market condition sets: a
// hurdle's derived service period (the median time to vest on the paths
// that vest, ASC 718-10-55-71), a relative TSR award's vest date or the end
// of its performance period, whichever is later; nil otherwise.
func (gv *GrantValue) DerivedServiceYears() []float64 {
	c := gv.Condition
	switch {
	case c == nil:
		return nil
	case c.Sim != nil:
		return c.Sim.DerivedServiceYears
	case c.TSR != nil:
		out := make([]float64, len(c.TSR.Tranches))
		for k, r := range c.TSR.Tranches {
			out[k] = r.ExpectedTermYears
		}
		return out
	}
	return nil
}

// hurdleAward is the valuation's hurdle award of a price-hurdle grant on
// terms (a unit's strike 0, expiring at the later of the deadline and its
// last vest date).
func hurdleAward(in grants.Inputs, terms []valuation.Terms) valuation.HurdleAward {
	h := *in.Condition.Hurdle
	vest := make([]float64, len(terms))
	for k, t := range terms {
		vest[k] = t.YearsToVest
	}
	t := terms[0]
	a := valuation.HurdleAward{Terms: t, VestYears: vest, Hurdle: h}
	if in.Grant.Instrument == grants.RSU {
		a.Units = true
		a.Terms = valuation.Terms{YearsToExpiry: max(h.YearsToDeadline, slices.Max(vest))}
	}
	return a
}

// marketValue values a grant with a market condition on shifted terms and
// market (sh the sensitivity case; the zero shift is the base case): a
// closing-price hurdle on the lattice, an average-price hurdle and a
// relative TSR award by simulation.
func (p *pricer) marketValue(in grants.Inputs, terms []valuation.Terms, m valuation.Market, sh shift) ([]valuation.Result, error) {
	g := in.Grant
	seed := conditionSeed(g.ID)
	target := SimTarget * p.simScale
	if sh.name != "" {
		target = SimSensitivityTarget * p.simScale
	}
	o := valuation.SimOptions{Seed: seed, TargetRelSE: target}
	if sh.name != "" {
		o.MinPaths = SimSensitivityMinPaths
	}
	c := in.Condition
	switch {
	case c.Hurdle != nil && c.Hurdle.AverageDays > 1:
		sim, err := valuation.HurdleSim(hurdleAward(in, terms), m, o)
		if err != nil {
			return nil, fmt.Errorf("grant %s: hurdle simulation: %w", g.ID, err)
		}
		if sh.name == "" {
			p.keep(g.ID, &ConditionValue{Kind: grants.PriceHurdle, Method: "simulation", Seed: seed, Sim: sim})
		}
		return sim.Tranches, nil
	case c.Hurdle != nil:
		rs, err := valuation.HurdleLattice(hurdleAward(in, terms), m)
		if err != nil {
			return nil, fmt.Errorf("grant %s: hurdle lattice: %w", g.ID, err)
		}
		if sh.name == "" {
			p.keep(g.ID, &ConditionValue{Kind: grants.PriceHurdle, Method: "lattice", Seed: seed, Lattice: rs})
		}
		return rs, nil
	case c.TSR != nil:
		a := c.TSR.Award
		res, err := valuation.TSRSim(a, m, o)
		if err != nil {
			return nil, fmt.Errorf("grant %s: relative TSR simulation: %w", g.ID, err)
		}
		if sh.name == "" {
			p.keep(g.ID, &ConditionValue{Kind: grants.RelativeTSR, Method: "simulation", Seed: seed, TSR: res})
		}
		return res.Tranches, nil
	}
	return nil, fmt.Errorf("grant %s: condition %s is not a market condition", g.ID, c.Condition.ID)
}

// conditionSeed is grant id's simulation seed.
func conditionSeed(id string) uint64 {
	h := fnv.New64a()
	h.Write([]byte(id))
	return ConditionSeed + h.Sum64()%1_000_000
}

// keep records the base case's condition valuation of grant id.
func (p *pricer) keep(id string, c *ConditionValue) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.conds == nil {
		p.conds = map[string]*ConditionValue{}
	}
	p.conds[id] = c
}

// conditions completes the condition valuations of the base case: each
// closing-price hurdle is simulated beside its lattice (z, and a warning
// past MonteCarloZLimit), each hurdle award is valued without its hurdle
// too, and each grant gets its ConditionValue. A grant whose values a
// prior close locked keeps them; its condition valuation (the derived
// service periods the expense runs to) is made again from the same
// grant-date inputs with the same seed, so it is the one filed unless the
// inputs drifted (GrantValue.Drift says so).
func (p *pricer) conditions(v *Valuation) error {
	for i := range v.Grants {
		gv := &v.Grants[i]
		in := gv.Inputs
		c, ok := p.conds[in.Grant.ID]
		if !ok || !in.Condition.Market() {
			continue
		}
		gv.Condition = c
		if c.Kind != grants.PriceHurdle {
			continue
		}
		for k, l := range c.Lattice {
			if l.MissedTarget {
				v.Warnings = append(v.Warnings, fmt.Sprintf("grant %s tranche %d: the hurdle lattice gives %.6g ± %.2g per share, short of its %g%% accuracy target at the finest ladder it allows; the simulation beside it is the check",
					in.Grant.ID, in.Tranches[k].Index, l.Value, l.ErrorEstimate, 100*valuation.AutoTarget))
			}
		}
		a := hurdleAward(in, in.Terms)
		if c.Sim == nil {
			sim, err := valuation.HurdleSim(a, in.Market, valuation.SimOptions{Seed: c.Seed, TargetRelSE: HurdleCheckTarget * p.simScale})
			if err != nil {
				return fmt.Errorf("grant %s: hurdle simulation: %w", in.Grant.ID, err)
			}
			c.Sim = sim
			for k, l := range c.Lattice {
				s := sim.Tranches[k]
				z := 0.0
				if d := math.Hypot(s.ErrorEstimate, l.ErrorEstimate); d > 0 {
					z = (s.Value - l.Value) / d
				}
				c.Z = append(c.Z, z)
				if math.Abs(z) > MonteCarloZLimit {
					v.Warnings = append(v.Warnings, fmt.Sprintf("the simulation of grant %s tranche %d with its price hurdle gives %.4f ± %.4f per share against the hurdle lattice's %.4f ± %.4f (z = %.1f, beyond ±%g): a reviewer should look at this award's inputs and value",
						in.Grant.ID, in.Tranches[k].Index, s.Value, s.ErrorEstimate, l.Value, l.ErrorEstimate, z, MonteCarloZLimit))
				}
			}
		}
		plain, err := p.plain(in)
		if err != nil {
			return err
		}
		c.Plain = plain
	}
	return nil
}

// plain is a hurdle grant's tranches valued without the hurdle.
func (p *pricer) plain(in grants.Inputs) ([]valuation.Result, error) {
	if in.Grant.Instrument == grants.RSU {
		out := make([]valuation.Result, len(in.Terms))
		for k, t := range in.Terms {
			out[k] = valuation.RSUValue(in.Market, t.YearsToVest)
		}
		return out, nil
	}
	vest := make([]float64, len(in.Terms))
	for k, t := range in.Terms {
		vest[k] = t.YearsToVest
	}
	rs, err := valuation.LatticeTranches(in.Terms[0], vest, in.Market, valuation.LatticeOptions{})
	if err != nil {
		return nil, fmt.Errorf("grant %s without its hurdle: %w", in.Grant.ID, err)
	}
	return rs, nil
}

// market reports whether gv's grant carries a market condition: the
// generic lattice checks (convergence, the Monte Carlo sample, the
// missed-target list) leave it out, since its own check is in its
// ConditionValue.
func market(gv *GrantValue) bool { return gv.Inputs.Condition.Market() }
