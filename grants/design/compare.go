package design

import (
	"fmt"
	"runtime"
	"sync"
	"time"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// Options are the choices of one comparison.
type Options struct {
	// Lattice is passed to the valuation of every design (Steps 0: the
	// automatic, converged mode).
	Lattice valuation.LatticeOptions
	// Outcomes control the simulation of how each design ends; design i
	// (from 0) is simulated with seed Outcomes.Seed+i.
	Outcomes valuation.OutcomeOptions
	// Progress, when not nil, is called as designs finish, from one
	// goroutine at a time.
	Progress func(done, total int)
}

// Comparison is every design of a designs workbook, valued at one grant
// date in one market.
type Comparison struct {
	Company    string
	Currency   string
	GrantDate  time.Time
	SharePrice grants.Source         // at the grant date
	Policy     accounting.Policy     // in force at the grant date; the forfeiture rate is each design's
	Calendar   grants.FiscalCalendar // the Company sheet's fiscal years, of the expense by year
	Designs    []Result
	Warnings   []string
}

// Result is one design, valued. Money is in the Company currency; "per
// share" means per share (or unit) granted.
type Result struct {
	Design grants.Design
	Grant  grants.Grant  // the grant the design describes: strike, expiry, vesting
	Inputs grants.Inputs // its tranches, terms, market and the source of each input
	// Tranches are the tranches' values, in Inputs.Tranches order.
	Tranches []Tranche

	FairValuePerShare float64 // share-weighted over the tranches: the accounting number
	FairValueTotal    float64
	ErrorEstimate     float64 // per share: the tranches' error estimates, share-weighted (added, not pooled)
	ExpectedTermYears float64 // share-weighted risk-neutral expected life (lattice)
	// BSMSimplified is the Black-Scholes-Merton value per share on the
	// simplified-method term ((vest + term)/2, SEC SAB 107), share-weighted;
	// for an RSU it is S0·e^(−qV), for a warrant after the dilution factor.
	BSMSimplified float64

	// ForfeitureRate is the pre-vesting forfeiture rate applied to the
	// expected cost; ExpectedCostTotal is the cost to the company if that
	// share of unvested holders leave each year: never the fair value.
	ForfeitureRate    float64
	ExpectedCostTotal float64
	// ExpenseByYear spreads ExpectedCostTotal over the fiscal years under
	// the company's attribution method; it adds up to ExpectedCostTotal.
	ExpenseByYear []YearAmount

	// DilutionFactor is N/(N+W) for a warrant, 1 otherwise.
	DilutionFactor float64
	// HorizonYears is the contractual term (an RSU: its last vest date);
	// BreakEven is the share price then at which the award pays its fair
	// value grown at the risk-free rate to that date: what the holder
	// would have had by taking the fair value in cash and investing it.
	HorizonYears float64
	BreakEven    float64

	// Outcomes is the simulated distribution of what the award pays
	// (risk-neutral, per share, in today's money; a warrant's after
	// dilution): its Quantile gives the payoff percentiles.
	Outcomes *valuation.Outcomes
	// OutcomeNote says where the simulation departs from the valuation
	// model (rational exercise of a warrant with dividends); usually "".
	OutcomeNote string

	// Volatility is the total fair value with volatility moved by 5 and
	// 10 points either way (and the base case), from the valuation run.
	Volatility []pricing.SensitivityPoint
	// Check is the Monte Carlo cross-check of the design's largest
	// tranche against the lattice; nil for an RSU.
	Check *pricing.MonteCarloCheck
}

// Tranche is one tranche of a design, valued.
type Tranche struct {
	valuation.Result         // fair value per share, error estimate, expected term
	BSMSimplified    float64 // per share, after a warrant's dilution
	SurvivalToVest   float64 // share of holders expected to be there at the vest date
	ExpectedCost     float64 // per share: Value × SurvivalToVest
}

// Compare values every design of s (a designs workbook, ReadDesigns) at
// its grant date: each through the same valuation run as a schedule's
// grants (pricing.Value), then its expected cost, its expense by
// fiscal year (the schedule's attribution method, expenseByYear) and the
// simulated distribution of its outcomes. Designs are valued on all cores;
// the result does not depend on their number. An input the validation
// should have caught is returned as the *grants.CellError that names it.
func Compare(s *grants.Schedule, o Options) (*Comparison, error) {
	gd := s.DesignDate()
	c := &Comparison{
		Company: s.Company.Name, Currency: s.Company.Currency, GrantDate: gd,
		Policy: policyAt(s, gd), Calendar: s.Company.Fiscal, Designs: make([]Result, len(s.Designs)),
	}
	errs := make([]error, len(s.Designs))
	warns := make([][]string, len(s.Designs))
	sem := make(chan struct{}, max(1, runtime.GOMAXPROCS(0)))
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	for i, d := range s.Designs {
		wg.Add(1)
		sem <- struct{}{}
		go func() {
			defer func() { <-sem; wg.Done() }()
			oo := o.Outcomes
			oo.Seed += uint64(i)
			warns[i], errs[i] = compareOne(s, d, o, oo, &c.Designs[i])
			if o.Progress != nil {
				mu.Lock()
				done++
				o.Progress(done, len(s.Designs))
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			return nil, fmt.Errorf("design %s: %w", s.Designs[i].Name, err)
		}
		if i == 0 {
			c.SharePrice = c.Designs[0].Inputs.SharePrice // every design's: one grant date
		}
		for _, w := range warns[i] {
			c.Warnings = append(c.Warnings, fmt.Sprintf("design %s: %s", s.Designs[i].Name, w))
		}
	}
	return c, nil
}

// compareOne values design d into r and returns the valuation's warnings.
func compareOne(s *grants.Schedule, d grants.Design, o Options, oo valuation.OutcomeOptions, r *Result) ([]string, error) {
	g, err := s.DesignGrant(d)
	if err != nil {
		return nil, err
	}
	in, err := s.Inputs(g)
	if err != nil {
		return nil, err
	}
	v, err := pricing.Value(s, []grants.Inputs{in}, pricing.Options{Lattice: o.Lattice})
	if err != nil {
		return nil, err
	}
	gv := v.Grants[0]
	*r = Result{Design: d, Grant: g, Inputs: in, Tranches: make([]Tranche, len(in.Tranches)), DilutionFactor: 1,
		ForfeitureRate: s.DesignForfeitureRate(d)}
	if gv.Dilution != nil {
		r.DilutionFactor = gv.Dilution.Factor()
	}
	values := make([]float64, len(in.Tranches))
	for k, t := range in.Tranches {
		res, terms, w := gv.Results[k], in.Terms[k], float64(t.Shares)
		bsm, err := valuation.SimplifiedBSM(terms, in.Market)
		if err != nil {
			return nil, fmt.Errorf("tranche %d: simplified BSM: %w", t.Index, err)
		}
		surv := valuation.SurvivalToVest(r.ForfeitureRate, terms.YearsToVest)
		cost := valuation.ExpectedCost(res.Value, r.ForfeitureRate, terms.YearsToVest)
		r.Tranches[k] = Tranche{Result: res, BSMSimplified: bsm.Value * r.DilutionFactor, SurvivalToVest: surv, ExpectedCost: cost}
		values[k] = res.Value
		r.FairValueTotal += w * res.Value
		r.ErrorEstimate += w * res.ErrorEstimate
		r.ExpectedTermYears += w * res.ExpectedTermYears
		r.BSMSimplified += w * r.Tranches[k].BSMSimplified
		r.ExpectedCostTotal += w * cost
		r.HorizonYears = max(r.HorizonYears, terms.YearsToExpiry)
	}
	n := float64(g.Shares)
	r.FairValuePerShare = r.FairValueTotal / n
	r.ErrorEstimate /= n
	r.ExpectedTermYears /= n
	r.BSMSimplified /= n
	if r.ExpenseByYear, err = expenseByYear(s, g, values, r.ForfeitureRate, s.Company.Fiscal); err != nil {
		return nil, fmt.Errorf("expense: %w", err)
	}
	r.BreakEven = breakEven(r, in.Market.Curve.Discount(r.HorizonYears))
	if err := r.simulate(in, oo); err != nil {
		return nil, fmt.Errorf("outcomes: %w", err)
	}
	for _, sn := range v.Sensitivity {
		if sn.Input == "volatility" {
			r.Volatility = sn.Points
		}
	}
	if len(v.MonteCarlo) > 0 {
		r.Check = &v.MonteCarlo[0]
	}
	return v.Warnings, nil
}

// breakEven is the share price at the horizon at which the award pays
// its fair value per share grown at the risk-free rate (disc is the
// discount factor to the horizon).
func breakEven(r *Result, disc float64) float64 {
	grown := r.FairValuePerShare / disc
	if r.Grant.Instrument == grants.RSU {
		return grown
	}
	return r.Grant.Strike + grown/r.DilutionFactor
}

// simulate fills the outcome distribution: every tranche on common paths,
// weighted by its shares. A warrant's payoffs are diluted by its factor;
// its rational exercise is not simulated (without dividends early exercise
// of a call is never optimal, Merton 1973, so nothing is lost).
func (r *Result) simulate(in grants.Inputs, o valuation.OutcomeOptions) error {
	terms := append([]valuation.Terms(nil), in.Terms...)
	w := make([]float64, len(terms))
	for k := range terms {
		if terms[k].Rational {
			terms[k].Rational = false
			if in.Market.DividendYield > 0 {
				r.OutcomeNote = "the distribution holds the warrant to expiry (or the exercise multiple): with dividends, rational early exercise, which the fair value includes, is not simulated"
			}
		}
		w[k] = float64(in.Tranches[k].Shares)
	}
	out, err := valuation.SimulateOutcomes(terms, w, in.Market, o)
	if err != nil {
		return err
	}
	if f := r.DilutionFactor; f != 1 {
		for i := range out.Sample {
			out.Sample[i] *= f
		}
		out.Mean *= f
		out.StdErr *= f
	}
	r.Outcomes = out
	return nil
}
