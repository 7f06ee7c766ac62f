package pricing

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"grantworth/grants"
	"grantworth/internal/cores"
	"grantworth/valuation"
)

// Sizes of the extra runs. The sensitivity runs revalue every grant when
// the ledger is small, else an evenly spaced sample of SensitivitySample
// grants whose relative change is applied to the full total.
const (
	SensitivitySample = 300
	// The Monte Carlo cross-check simulates up to MonteCarloSample
	// tranches with MonteCarloPaths paths each, the i-th (from 0) with
	// seed MonteCarloSeed+i. A check whose |z| exceeds MonteCarloZLimit
	// raises a warning.
	MonteCarloSample = 8
	MonteCarloPaths  = 40_000
	MonteCarloSeed   = 1
	MonteCarloZLimit = 4.0
	// A tranche whose automatic lattice value misses valuation.AutoTarget
	// raises a warning (the first MissedTargetWarnings of them one each,
	// then one for the rest), and the first MissedTargetSample of them
	// that the simulation can value get its value beside the lattice's,
	// the i-th (from 0) with seed MonteCarloSeed+MonteCarloSample+i.
	MissedTargetWarnings = 10
	MissedTargetSample   = 8
	// MaxRemeasurements bounds the past quarter ends at which a
	// liability-classified warrant is revalued (the most recent are kept).
	MaxRemeasurements = 12
)

// ConvergenceSteps are the raw step counts of the convergence study: about
// √2 apart, so that the oscillation between them shows.
var ConvergenceSteps = []int{25, 35, 50, 71, 100, 141, 200, 283, 400, 566, 800, 1131, 1600, 2263, 3200, 4525}

// Options are the choices of one valuation run.
type Options struct {
	// Lattice is passed to every lattice valuation of the base and
	// sensitivity runs (Steps 0 is the automatic, converged mode).
	Lattice valuation.LatticeOptions
	// Progress, when not nil, is called as the base valuation advances
	// (done of total distinct option jobs); Sensitivity as the sensitivity
	// cases finish.
	Progress, Sensitivity func(done, total int)
	// Locks are the measurements a prior close filed, by grant ID
	// (accounting.Prior.Locks): an equity-classified grant keeps its
	// tranche values, a liability-classified warrant its past
	// revaluations. Correct names grants measured afresh instead, as the
	// correction of an error.
	Locks   map[string]Lock
	Correct []string
	// Reuse lets a locked grant without a vesting condition beyond
	// service (the key does not cover one) whose valuation key today
	// equals the one filed (Lock.Key: every number that enters its valuation is as it
	// was) take its filed values without being valued again; such a
	// grant is not checked for drift, which only another method could
	// cause. Set it when the prior close was made by this version of
	// grantworth.
	Reuse bool
	// Studies are the checks of the prior close the Locks come from
	// (nil without one). A check of this run whose every input is as the
	// prior close's (its grants Reused, and measured by that close on the
	// inputs of their keys) is taken from it instead of being run again:
	// the sensitivity cases, the convergence study, each Monte Carlo
	// cross-check (studies.go). It needs Reuse.
	Studies *Studies
	// SimTarget scales the standard errors the simulations of market
	// conditions aim for (conditions.go): 0 or 1 as set there, 4 four
	// times as loose (quick runs and tests).
	SimTarget float64
}

// GrantValue is one grant's inputs and the value of each of its tranches.
type GrantValue struct {
	Inputs  grants.Inputs
	Results []valuation.Result // per tranche, in Inputs.Tranches order
	// BSM is the closed-form comparison per tranche: Black-Scholes-Merton
	// on the simplified-method term for options, over the contractual term
	// before dilution for warrants, the RSU value itself for RSUs.
	BSM []Comparison
	// Dilution is how a warrant was diluted; nil for options, RSUs and
	// warrants of a company without shares outstanding.
	Dilution *valuation.Dilution
	// UndilutedValue is, for a diluted warrant, its first tranche on the
	// automatic lattice without dilution (0 if that failed).
	UndilutedValue float64
	// Status says whether the values were measured now, kept from a
	// prior close (Lock) or corrected; Lock is the prior close's
	// measurement of a locked, corrected or remeasured grant (a locked
	// grant's without its Tranches, whose values it keeps as its own).
	Status Status
	Lock   *Lock
	// Drift is, for a locked grant that today's inputs would value
	// differently, by how much and why; nil otherwise.
	Drift *Drift
	// Key is the grant's valuation key: a digest of every number that
	// enters its valuation (instrument, terms and vest times of every
	// tranche, market and curve, dilution, lattice settings), of today's
	// inputs, or for a locked grant of the filed ones. Reused is set when
	// a locked grant took its filed values without being valued
	// (Options.Reuse).
	Key    string
	Reused bool
	// RiskFreeRate is, per tranche, the continuous zero rate of the
	// grant's curve at the tranche's years to expiry, SimplifiedRate at
	// the term of its closed-form comparison (BSM's ExpectedTermYears) and
	// ExpectedTermRate at its expected term (Results' ExpectedTermYears),
	// the rate disclosed for the period's grants; all 0 without a curve.
	RiskFreeRate, SimplifiedRate, ExpectedTermRate []float64
	// ExpiryYears and VestYears are, per tranche, its terms'
	// YearsToExpiry and YearsToVest, set by ReleaseTerms when it lets the
	// whole terms (Inputs.Terms) go; nil before.
	ExpiryYears, VestYears []float64
	// Condition is how a market condition was valued (conditions.go);
	// nil without one.
	Condition *ConditionValue
}

// TermYears are tranche k's years to expiry and to vest, from its terms
// or, once ReleaseTerms let them go, from what it kept of them.
func (g *GrantValue) TermYears(k int) (expiry, vest float64) {
	if g.ExpiryYears != nil {
		return g.ExpiryYears[k], g.VestYears[k]
	}
	t := g.Inputs.Terms[k]
	return t.YearsToExpiry, t.YearsToVest
}

// ReleaseTerms lets go of each grant's tranche terms (Inputs.Terms, 48
// bytes a tranche), keeping only the years to expiry and to vest that the
// report reads of them (TermYears), for a caller that reads nothing else
// of the terms after Value: the value command, before its accounting,
// whose peak a large ledger's terms would raise by some 120 MB at
// 100,000 grants.
func (v *Valuation) ReleaseTerms() {
	for i := range v.Grants {
		gv := &v.Grants[i]
		n := len(gv.Inputs.Terms)
		if n == 0 || gv.ExpiryYears != nil {
			continue
		}
		years := make([]float64, 2*n)
		gv.ExpiryYears, gv.VestYears = years[:n:n], years[n:]
		for k, t := range gv.Inputs.Terms {
			gv.ExpiryYears[k], gv.VestYears[k] = t.YearsToExpiry, t.YearsToVest
		}
		gv.Inputs.Terms = nil
	}
}

// Comparison is a tranche's closed-form comparison (GrantValue.BSM): its
// value per share and the term it was taken over, all that is read of it
// once it is made. Kept in 16 bytes instead of a valuation.Result's 48: a
// ledger holds one per tranche.
type Comparison struct {
	Value             float64 // per share
	ExpectedTermYears float64 // the term of the closed form
}

// comparisonOf is the comparison r gave.
func comparisonOf(r valuation.Result) Comparison {
	return Comparison{Value: r.Value, ExpectedTermYears: r.ExpectedTermYears}
}

// FairValueTotal is the sum over the tranches of value times shares.
func (g *GrantValue) FairValueTotal() float64 {
	var t float64
	for k, tr := range g.Inputs.Tranches {
		t += g.Results[k].Value * float64(tr.Shares)
	}
	return t
}

// Sensitivity is total fair value with one input moved for every grant.
type Sensitivity struct {
	Input, Label, Unit string
	Points             []SensitivityPoint
}

// SensitivityPoint is one shifted run; Shift 0 is the base case. Shift is
// in percentage points for rates and in the input's own unit otherwise.
type SensitivityPoint struct {
	Shift          float64
	Label          string
	FairValueTotal float64
	Change         float64 // relative to the base case
	// SampleTotal is the total fair value of the sensitivity sample in
	// this case (in the base case, the sample's own): FairValueTotal is
	// the ledger's total times SampleTotal over the base case's.
	SampleTotal float64
}

// Convergence is the raw lattice against the step count for one tranche,
// beside the automatic value.
type Convergence struct {
	GrantID      string
	TrancheIndex int
	Auto         valuation.Result
	Points       []ConvergencePoint
}

// ConvergencePoint is a raw N-step lattice value.
type ConvergencePoint struct {
	Steps int
	Value float64
}

// MonteCarloCheck is the simulation of one sampled tranche beside the
// automatic lattice on the same terms (undiluted for a warrant).
type MonteCarloCheck struct {
	GrantID      string
	TrancheIndex int
	Instrument   grants.Instrument
	Lattice      float64 // the automatic lattice value
	LatticeError float64 // its error estimate
	Result       valuation.Result
	Seed         uint64
	// Z is (Result.Value − Lattice) / √(s.e.² + LatticeError²); 0 when
	// both errors are 0.
	Z float64
}

// MissedTarget is a tranche whose automatic lattice value missed
// valuation.AutoTarget: its result as valued (diluted for a warrant), and,
// for the first MissedTargetSample that the simulation can value, the Monte
// Carlo check of the same terms (undiluted for a warrant, as in the
// cross-check); Check is nil otherwise.
type MissedTarget struct {
	GrantID      string
	TrancheIndex int
	Result       valuation.Result
	Check        *MonteCarloCheck
	Rational     bool // the terms allow rational exercise, which the simulation does not value
}

// Revaluation is a liability-classified warrant's value per tranche
// measured at Date, or the error that stopped it.
type Revaluation struct {
	Date   time.Time
	Values []float64
	Err    error
}

// Valuation is everything Value found.
type Valuation struct {
	// Options are those of the run, without the Locks (each grant's is
	// its Lock), which are let go once used: a ledger's are large.
	Options Options
	Grants  []GrantValue
	// FairValueTotal sums the grants' totals in order.
	FairValueTotal float64
	// SensitivitySample is how many grants each sensitivity case revalued
	// (all of them when it equals len(Grants)).
	SensitivitySample int
	Sensitivity       []Sensitivity
	Convergence       *Convergence // nil without a lattice-valued tranche
	// MonteCarlo is the cross-check of a sample of tranches (see
	// monteCarloSample), in ledger order. MonteCarloRational is set when
	// no tranche could be checked because every lattice-valued award
	// allows rational early exercise; MonteCarloErr holds the first
	// refusal of the simulation (that tranche is left out of the sample).
	MonteCarlo         []MonteCarloCheck
	MonteCarloRational bool
	MonteCarloErr      error
	// MissedTarget are the tranches, in ledger order, whose automatic
	// lattice value the lattice could not bring within
	// valuation.AutoTarget (each also raised a warning).
	MissedTarget []MissedTarget
	// Revaluations are, per liability-classified warrant's grant ID, its
	// values at the grant date and then at RemeasurementDates, up to the
	// first that failed.
	Revaluations map[string][]Revaluation
	// Modifications are the changes of the grants' terms dated by the
	// valuation date, each measured on its date (modify.go), in ledger
	// order and, within a grant, date order.
	Modifications []ModificationValue
	Warnings      []string
	// StudiesReused says which checks were taken from the prior close
	// (Options.Studies) instead of being run.
	StudiesReused StudiesReused
}

// RemeasurementDates are the days before end on which a
// liability-classified warrant granted on grantDate is revalued after its
// grant date: the fiscal quarter ends of calendar cal from the one of the
// quarter containing grantDate up to before end, the most recent
// MaxRemeasurements of them, and the days in (grantDate, end) of its
// exercises, given in exercised, on which it is remeasured before the
// exercised warrants leave the liability (IFRS 2.30; ASC 718-30-35-3;
// ASC 815-40-35). In date order, each day once.
func RemeasurementDates(cal grants.FiscalCalendar, grantDate, end time.Time, exercised []time.Time) []time.Time {
	var ends []time.Time
	for _, q := range cal.Quarters(grantDate, end) {
		if q.End.Before(end) {
			ends = append(ends, q.End)
		}
	}
	if len(ends) > MaxRemeasurements {
		ends = ends[len(ends)-MaxRemeasurements:]
	}
	for _, d := range exercised {
		if d.After(grantDate) && d.Before(end) {
			ends = append(ends, d)
		}
	}
	sort.Slice(ends, func(i, j int) bool { return ends[i].Before(ends[j]) })
	return slices.CompactFunc(ends, func(a, b time.Time) bool { return a.Equal(b) })
}

// revaluationDates are the dates a liability-classified warrant is
// revalued at before end: its grant date and the RemeasurementDates of
// calendar cal (with the days of its exercises), and the valuation date of
// the prior close it is locked to (a close measured it then) when that is
// not a quarter end.
func revaluationDates(cal grants.FiscalCalendar, gv *GrantValue, end time.Time, exercised []time.Time) []time.Time {
	g := gv.Inputs.Grant
	dates := append([]time.Time{g.GrantDate}, RemeasurementDates(cal, g.GrantDate, end, exercised)...)
	if lk := gv.Lock; lk != nil && gv.Status == Remeasured && lk.Close.Before(end) && lk.Close.After(g.GrantDate) {
		for _, d := range dates {
			if valuation.Days(d, lk.Close) == 0 {
				return dates
			}
		}
		dates = append(dates, lk.Close)
		sort.Slice(dates, func(i, j int) bool { return dates[i].Before(dates[j]) })
	}
	return dates
}

// Value values the grants ins (from ValueInputs): options as lattice jobs
// on all cores, warrants on the lattice with dilution, RSUs in closed
// form, the closed-form comparison per tranche; then the sensitivity
// cases, the convergence study on a representative tranche, the Monte
// Carlo check of a small sample of tranches, and the revaluations of liability-classified warrants that
// expense attribution needs. The result depends only on the schedule and
// opts, never on the number of cores.
func Value(s *grants.Schedule, ins []grants.Inputs, opts Options) (*Valuation, error) {
	p := &pricer{s: s, opts: opts.Lattice, simScale: max(opts.SimTarget, 1)}
	if opts.Reuse {
		p.studies = opts.Studies
	}
	v := &Valuation{Options: opts, Grants: make([]GrantValue, len(ins))}
	correct := map[string]bool{}
	for _, id := range opts.Correct {
		correct[id] = true
	}
	// Each grant's key, and whether it is reused, on all cores (a
	// rerun's keys are most of its valuing).
	cores.Chunks(len(ins), grantChunk, func(lo, hi int) error {
		var kb keyBuf
		for i := lo; i < hi; i++ {
			gv := &v.Grants[i]
			gv.Inputs = ins[i]
			gv.Key = kb.grantKey(p, gv)
			if lk, ok := opts.Locks[gv.Inputs.Grant.ID]; ok && opts.Reuse && !correct[gv.Inputs.Grant.ID] &&
				!lk.Liability && !isLiability(gv.Inputs.Grant) && gv.Inputs.Condition == nil && lk.Key != "" && lk.Key == gv.Key {
				gv.Reused = true
			}
		}
		return nil
	})
	base, _, err := p.valueSet(v.Grants, shift{}, opts.Progress)
	if err != nil {
		return nil, err
	}
	err = cores.Chunks(len(v.Grants), grantChunk, func(lo, hi int) error {
		for i := lo; i < hi; i++ {
			gv := &v.Grants[i]
			gv.Results = base[i]
			if gv.Reused { // filled from the lock by lock()
				gv.Results = make([]valuation.Result, len(gv.Inputs.Tranches))
			}
			if err := p.compare(gv); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	warns, err := lock(v, opts)
	if err != nil {
		return nil, err
	}
	v.Warnings = append(v.Warnings, warns...)
	if err := p.modifications(v, opts); err != nil {
		return nil, err
	}
	for i := range v.Grants {
		v.FairValueTotal += v.Grants[i].FairValueTotal()
	}
	if s.Company.SharesOutstanding <= 0 {
		for _, gv := range v.Grants {
			if gv.Inputs.Grant.Instrument == grants.Warrant {
				v.Warnings = append(v.Warnings, "Company!shares_outstanding is not given, so warrants are valued without dilution")
				break
			}
		}
	}
	if err := p.sensitivity(v, opts.Sensitivity); err != nil {
		return nil, err
	}
	if err := p.convergence(v); err != nil {
		return nil, err
	}
	if err := p.monteCarlo(v); err != nil {
		return nil, err
	}
	if err := p.missedTarget(v); err != nil {
		return nil, err
	}
	if err := p.conditions(v); err != nil {
		return nil, err
	}
	v.Revaluations = map[string][]Revaluation{}
	_, end := s.Period()
	for i := range v.Grants {
		gv := &v.Grants[i]
		g := gv.Inputs.Grant
		if !isLiability(g) {
			continue
		}
		var exercised []time.Time
		for _, e := range s.EventsOf(g.ID) {
			if e.Kind == grants.Exercised && e.Date.Before(g.ExpiryDate) {
				exercised = append(exercised, e.Date)
			}
		}
		var rs []Revaluation
		for _, at := range revaluationDates(s.Company.Fiscal, gv, end, exercised) {
			if gv.Status == Remeasured && gv.Lock != nil {
				if r, ok := gv.Lock.revaluation(at); ok && len(r.Values) == len(gv.Inputs.Tranches) {
					rs = append(rs, r)
					continue
				}
			}
			vals, err := p.revalue(g, at)
			rs = append(rs, Revaluation{Date: at, Values: vals, Err: err})
			if err != nil {
				break
			}
		}
		v.Revaluations[g.ID] = rs
	}
	v.Options.Locks = nil
	return v, nil
}

// pricer holds a run's schedule and lattice settings, and the base case's
// condition valuations (conditions.go).
type pricer struct {
	s        *grants.Schedule
	opts     valuation.LatticeOptions
	mu       sync.Mutex
	conds    map[string]*ConditionValue
	simScale float64  // Options.SimTarget
	studies  *Studies // Options.Studies, when Options.Reuse
}

// dilution is how a warrant grant dilutes: its own shares against the
// company's shares outstanding. A liability-classified warrant is measured
// at the valuation date, when the share price already reflects the
// warrants (Galai-Schneller); an equity-classified one at issue, a new
// issue (the plain factor).
func (p *pricer) dilution(g grants.Grant) *valuation.Dilution {
	n := p.s.Company.SharesOutstanding
	if n <= 0 {
		return nil
	}
	return &valuation.Dilution{SharesOutstanding: n, Warrants: float64(g.Shares), PriceReflectsWarrants: g.Classification == grants.Liability}
}

// warrant values one warrant tranche on terms t in market m: on the
// lattice with dilution when the company's shares outstanding are known,
// else undiluted; exercised rationally unless European.
func (p *pricer) warrant(g grants.Grant, t valuation.Terms, m valuation.Market) (valuation.Result, error) {
	if d := p.dilution(g); d != nil {
		return valuation.WarrantValue(t, m, *d, p.opts)
	}
	return valuation.Lattice(rational(t), m, p.opts)
}

// rational is warrant terms t exercised rationally after vesting unless
// they are European (exercise at expiry only).
func rational(t valuation.Terms) valuation.Terms {
	t.Rational = t.Rational || !t.European
	return t
}

// compare fills a valued grant's closed-form comparison, dilution and
// undiluted value.
func (p *pricer) compare(gv *GrantValue) error {
	in, g := gv.Inputs, gv.Inputs.Grant
	if g.Instrument == grants.Warrant {
		gv.Dilution = p.dilution(g)
		if gv.Dilution != nil && len(in.Terms) > 0 {
			if r, err := valuation.Lattice(rational(in.Terms[0]), in.Market, valuation.LatticeOptions{}); err == nil {
				gv.UndilutedValue = r.Value
			}
		}
	}
	n := len(in.Terms)
	gv.BSM = make([]Comparison, n)
	rates := make([]float64, 3*n)
	gv.RiskFreeRate, gv.SimplifiedRate, gv.ExpectedTermRate = rates[:n:n], rates[n:2*n:2*n], rates[2*n:]
	if gv.Reused {
		return nil // keep (lock.go) fills them from the lock
	}
	for k, t := range in.Terms {
		var r valuation.Result
		var err error
		switch g.Instrument {
		case grants.RSU:
			r = valuation.RSUValue(in.Market, t.YearsToVest)
		case grants.Warrant:
			// The simplified method is for employee options: a warrant
			// is compared with BSM over its term, before dilution.
			if r, err = valuation.BlackScholes(t, in.Market); err != nil {
				return fmt.Errorf("grant %s tranche %d: BSM: %w", g.ID, k+1, err)
			}
		default:
			if r, err = valuation.SimplifiedBSM(t, in.Market); err != nil {
				return fmt.Errorf("grant %s tranche %d: simplified BSM: %w", g.ID, k+1, err)
			}
		}
		gv.BSM[k] = comparisonOf(r)
	}
	if c := in.Market.Curve; c != nil {
		for k, t := range in.Terms {
			gv.RiskFreeRate[k] = c.Zero(t.YearsToExpiry)
			gv.SimplifiedRate[k] = c.Zero(gv.BSM[k].ExpectedTermYears)
			gv.ExpectedTermRate[k] = c.Zero(gv.Results[k].ExpectedTermYears)
		}
	}
	return nil
}

// shift is one input moved by d for a sensitivity case; the zero shift is
// the base case.
type shift struct {
	name string
	d    float64
}

// shiftCase is the shifted copy of a grant's terms and market for one
// case. curves caches the shifted copy of each curve.
func shiftCase(in grants.Inputs, sh shift, curves map[*valuation.Curve]*valuation.Curve) ([]valuation.Terms, valuation.Market, error) {
	terms := append([]valuation.Terms(nil), in.Terms...)
	m := in.Market
	switch sh.name {
	case "volatility":
		vl := valuation.Limits.Volatility
		m.VolAnnual = math.Min(vl.Max, math.Max(vl.Min, m.VolAnnual+sh.d))
	case "risk_free_rate":
		c, ok := curves[m.Curve]
		if !ok {
			ten, zs := m.Curve.Points()
			pts := make([]valuation.CurvePoint, len(ten))
			for i := range ten {
				pts[i] = valuation.CurvePoint{Tenor: ten[i], Rate: zs[i] + sh.d}
			}
			var err error
			if c, err = valuation.NewCurve(pts); err != nil {
				return nil, m, err
			}
			curves[m.Curve] = c
		}
		m.Curve = c
	case "exercise_multiple":
		if in.Grant.Instrument == grants.Option {
			for i := range terms {
				if terms[i].ExerciseMultiple > 0 {
					terms[i].ExerciseMultiple = math.Min(valuation.Limits.ExerciseMultiple.Max, math.Max(1.05, terms[i].ExerciseMultiple+sh.d))
				}
			}
		}
	case "post_vesting_exit_rate":
		if in.Grant.Instrument == grants.Option {
			for i := range terms {
				terms[i].ExitRate = math.Min(0.95, math.Max(0, terms[i].ExitRate+sh.d))
			}
		}
	}
	return terms, m, nil
}

// valueSet values the grants gs under one case: options on the lattice,
// all cores; warrants on the lattice with dilution; RSUs in closed form.
// It returns the tranche results per grant. In a shifted case a grant the
// lattice cannot value with the input moved (valuation.Feasible: its
// volatility moved past what the tree can represent over its term, say)
// keeps its base values, and is named in kept.
func (p *pricer) valueSet(gs []GrantValue, sh shift, progress func(done, total int)) (out [][]valuation.Result, kept []string, err error) {
	out = make([][]valuation.Result, len(gs))
	curves := map[*valuation.Curve]*valuation.Curve{}
	var jobs []valuation.Job
	var jobOf []int
	for i := range gs {
		if gs[i].Reused && sh == (shift{}) {
			continue // its filed values are kept
		}
		in := gs[i].Inputs
		terms, m, err := shiftCase(in, sh, curves)
		if err != nil {
			return nil, nil, err
		}
		g := in.Grant
		if in.Condition.Market() {
			rs, err := p.marketValue(in, terms, m, sh)
			if err != nil {
				return nil, nil, err
			}
			out[i] = rs
			continue
		}
		if sh.name != "" && p.infeasible(g, terms, m) {
			out[i] = gs[i].Results
			kept = append(kept, g.ID)
			continue
		}
		switch g.Instrument {
		case grants.RSU:
			rs := make([]valuation.Result, len(in.Terms))
			for k, t := range in.Terms {
				rs[k] = valuation.RSUValue(m, t.YearsToVest)
			}
			out[i] = rs
		case grants.Warrant:
			rs := make([]valuation.Result, len(terms))
			for k, t := range terms {
				var err error
				if rs[k], err = p.warrant(g, t, m); err != nil {
					return nil, nil, fmt.Errorf("grant %s tranche %d: %w", g.ID, k+1, err)
				}
			}
			out[i] = rs
		default:
			if len(terms) == 0 {
				continue
			}
			vest := make([]float64, len(in.Terms))
			for k, t := range in.Terms {
				vest[k] = t.YearsToVest
			}
			jobs = append(jobs, valuation.Job{Terms: terms[0], VestYears: vest, Market: m, Options: p.opts})
			jobOf = append(jobOf, i)
		}
	}
	// Grants with the same terms, vesting and market (a board's batch of
	// grants on one date) are valued once.
	uniq, index := dedupJobs(jobs)
	res := valuation.RunJobs(uniq, 0, progress)
	for j := range jobs {
		r := res[index[j]]
		if r.Err != nil {
			return nil, nil, fmt.Errorf("grant %s: %w", gs[jobOf[j]].Inputs.Grant.ID, r.Err)
		}
		out[jobOf[j]] = r.Tranches
	}
	return out, kept, nil
}

// infeasible reports whether the lattice cannot value option or warrant g
// on its shifted terms in market m (valuation.Feasible: its volatility
// moved past what the tree can represent over its term, say).
func (p *pricer) infeasible(g grants.Grant, terms []valuation.Terms, m valuation.Market) bool {
	if g.Instrument == grants.RSU || len(terms) == 0 {
		return false
	}
	t := terms[0]
	if g.Instrument == grants.Warrant {
		t = rational(t)
	}
	vest := make([]float64, len(terms))
	for k, tk := range terms {
		vest[k] = tk.YearsToVest
	}
	return valuation.Feasible(t, vest, m, p.opts) != nil
}

// unvalued are the grants of gs, by ID, that valueSet keeps at their base
// values in the shifted case sh, found without valuing any.
func (p *pricer) unvalued(gs []GrantValue, sh shift) []string {
	out := make([]bool, len(gs))
	cores.Chunks(len(gs), 16, func(lo, hi int) error {
		curves := map[*valuation.Curve]*valuation.Curve{} // a chunk's own
		for i := lo; i < hi; i++ {
			in := gs[i].Inputs
			if in.Condition.Market() {
				continue
			}
			terms, m, err := shiftCase(in, sh, curves)
			out[i] = err == nil && p.infeasible(in.Grant, terms, m)
		}
		return nil
	})
	var kept []string
	for i, x := range out {
		if x {
			kept = append(kept, gs[i].Inputs.Grant.ID)
		}
	}
	return kept
}

// dedupJobs returns the distinct jobs and, for each job, the index of its
// distinct copy. Jobs are the same when every number that enters the
// lattice is the same, bit for bit.
func dedupJobs(jobs []valuation.Job) ([]valuation.Job, []int) {
	seen := make(map[string]int, len(jobs))
	index := make([]int, len(jobs))
	var uniq []valuation.Job
	var kb keyBuf
	for i := range jobs {
		k := kb.appendJob(kb.b[:0], &jobs[i])
		kb.b = k
		u, ok := seen[string(k)] // no copy of the key for a job seen before
		if !ok {
			u = len(uniq)
			seen[string(k)] = u
			uniq = append(uniq, jobs[i])
		}
		index[i] = u
	}
	return uniq, index
}

// keyBuf writes valuation keys and job keys into buffers it reuses, and
// keeps the text of what many grants share (each curve's points, the
// lattice options), so that a ledger's keys cost no allocation but the
// keys themselves. One goroutine uses one keyBuf.
type keyBuf struct {
	b, g     []byte
	vest     []float64
	curves   map[*valuation.Curve][]byte // a curve's points, as appendJob writes them
	opts     valuation.LatticeOptions
	optsText []byte // of opts, once optsSet
	optsSet  bool
}

// grantKey is gv's valuation key (GrantValue.Key) in run p: a SHA-256
// digest of its instrument and every number that enters its valuation.
func (kb *keyBuf) grantKey(p *pricer, gv *GrantValue) string {
	in, g := &gv.Inputs, gv.Inputs.Grant
	b := kb.g[:0]
	b = append(b, g.Instrument...)
	b = append(b, '|')
	b = append(b, g.Classification...)
	b = append(b, '|')
	b = append(b, g.ExerciseStyle...)
	b = append(b, '|')
	j := valuation.Job{Market: in.Market, Options: p.opts}
	if len(in.Terms) > 0 {
		vest := kb.vest[:0]
		for _, t := range in.Terms {
			vest = append(vest, t.YearsToVest)
		}
		kb.vest = vest
		j.Terms, j.VestYears = in.Terms[0], vest
	}
	b = kb.appendJob(b, &j)
	for _, t := range in.Terms { // a tranche's own terms (an RSU's expiry is its vest date)
		b = appendBits(b, t.YearsToExpiry)
	}
	if g.Instrument == grants.Warrant {
		if d := p.dilution(g); d != nil {
			b = fmt.Appendf(b, "|%x,%x,%t", math.Float64bits(d.SharesOutstanding), math.Float64bits(d.Warrants), d.PriceReflectsWarrants)
		}
	}
	kb.g = b
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:16])
}

// appendBits appends x's bits in hexadecimal and a comma.
func appendBits(b []byte, x float64) []byte {
	b = strconv.AppendUint(b, math.Float64bits(x), 16)
	return append(b, ',')
}

// appendJob appends to b the text of every number of job j that enters
// the lattice: two jobs are valued alike when their texts are equal.
func (kb *keyBuf) appendJob(b []byte, j *valuation.Job) []byte {
	t, m := &j.Terms, &j.Market
	b = appendBits(b, t.Strike)
	b = appendBits(b, t.YearsToExpiry)
	b = appendBits(b, t.ExerciseMultiple)
	b = appendBits(b, t.ExitRate)
	b = strconv.AppendBool(b, t.Rational)
	b = strconv.AppendBool(b, t.European)
	b = append(b, '|')
	for _, v := range j.VestYears {
		b = appendBits(b, v)
	}
	b = append(b, '|')
	b = appendBits(b, m.Spot)
	b = appendBits(b, m.VolAnnual)
	b = appendBits(b, m.DividendYield)
	if m.Curve != nil {
		text, ok := kb.curves[m.Curve]
		if !ok {
			ten, zs := m.Curve.Points()
			for i := range ten {
				text = appendBits(text, ten[i])
				text = appendBits(text, zs[i])
			}
			if kb.curves == nil {
				kb.curves = map[*valuation.Curve][]byte{}
			}
			kb.curves[m.Curve] = text
		}
		b = append(b, text...)
	}
	b = append(b, '|')
	if !kb.optsSet || kb.opts != j.Options {
		kb.opts, kb.optsSet = j.Options, true
		kb.optsText = strconv.AppendInt(kb.optsText[:0], int64(j.Options.Steps), 10)
		kb.optsText = append(kb.optsText, fmt.Sprintf("%+v", j.Options.Convention)...)
	}
	return append(b, kb.optsText...)
}

// sensitivityCases are the inputs moved and by how much.
var sensitivityCases = []struct {
	key, label, unit string
	shifts           []float64
	labels           []string
}{
	{"volatility", "Volatility", "percentage points", []float64{-0.10, -0.05, 0, 0.05, 0.10}, []string{"−10 points", "−5 points", "base", "+5 points", "+10 points"}},
	{"exercise_multiple", "Exercise multiple", "multiple", []float64{-0.5, 0, 0.5, 1.0}, []string{"−0.5", "base", "+0.5", "+1.0"}},
	{"post_vesting_exit_rate", "Post-vesting exit rate", "percentage points", []float64{-0.05, 0, 0.05, 0.10}, []string{"−5 points", "base", "+5 points", "+10 points"}},
	{"risk_free_rate", "Risk-free rate", "percentage points", []float64{-0.01, 0, 0.01}, []string{"−1 point", "base", "+1 point"}},
}

// sensitivity revalues the ledger (or a sample of it) with one input moved
// at a time; cases provably as the prior close's are taken from it
// (priorSensitivity).
func (p *pricer) sensitivity(v *Valuation, progress func(done, total int)) error {
	gs := v.Grants
	idx := sampleOf(len(gs))
	sample := make([]GrantValue, len(idx))
	samplePtr := make([]*GrantValue, len(idx))
	for j, i := range idx {
		sample[j], samplePtr[j] = gs[i], &gs[i]
	}
	v.SensitivitySample = len(sample)
	total := func(rs [][]valuation.Result) float64 {
		var t float64
		for i := range sample {
			for k, tr := range sample[i].Inputs.Tranches {
				t += rs[i][k].Value * float64(tr.Shares)
			}
		}
		return t
	}
	baseRes := make([][]valuation.Result, len(sample))
	for i := range sample {
		baseRes[i] = sample[i].Results
	}
	sampleBase := total(baseRes)
	base := v.FairValueTotal
	reused, ok := p.priorSensitivity(samplePtr, base, sampleBase)
	n, done := 0, 0
	for _, c := range sensitivityCases {
		n += len(c.shifts) - 1
	}
	for ci, c := range sensitivityCases {
		sens := Sensitivity{Input: c.key, Label: c.label, Unit: c.unit}
		for j, d := range c.shifts {
			st := sampleBase
			if d != 0 {
				var kept []string
				if ok {
					kept = p.unvalued(sample, shift{c.key, d})
				} else {
					rs, k, err := p.valueSet(sample, shift{c.key, d}, nil)
					if err != nil {
						return fmt.Errorf("sensitivity %s %+g: %w", c.key, d, err)
					}
					st, kept = total(rs), k
				}
				if len(kept) > 0 {
					v.Warnings = append(v.Warnings, fmt.Sprintf("sensitivity case %s %s: the lattice cannot value %s with the input moved; the base value is used instead",
						c.label, c.labels[j], joinIDs(kept)))
				}
				done++
				if progress != nil {
					progress(done, n)
				}
			}
			if ok {
				continue
			}
			fv, change := sensitivityPoint(base, st, sampleBase, d != 0)
			sens.Points = append(sens.Points, SensitivityPoint{Shift: shiftShown(c.unit, d), Label: c.labels[j], FairValueTotal: fv, Change: change, SampleTotal: st})
		}
		if ok {
			sens = reused[ci]
		}
		v.Sensitivity = append(v.Sensitivity, sens)
	}
	v.StudiesReused.Sensitivity = ok
	return nil
}

// sampleOf are the positions in a ledger of n grants of the sensitivity
// sample: every grant when the ledger is small, else SensitivitySample
// evenly spaced.
func sampleOf(n int) []int {
	m := min(n, SensitivitySample)
	idx := make([]int, m)
	for i := range idx {
		idx[i] = i
		if n > SensitivitySample {
			idx[i] = i * n / SensitivitySample
		}
	}
	return idx
}

// sensitivityPoint is the ledger's total fair value in a case whose sample
// totals sampleTotal (base and sampleBase in the base case), and its
// change from base.
func sensitivityPoint(base, sampleTotal, sampleBase float64, shifted bool) (fv, change float64) {
	fv = base
	if shifted && sampleBase > 0 {
		fv = base * sampleTotal / sampleBase
	}
	if base > 0 {
		change = fv/base - 1
	}
	return fv, change
}

// shiftShown is shift d as a point shows it: in percentage points for
// rates (unit "percentage points"), else in the input's own unit.
func shiftShown(unit string, d float64) float64 {
	if unit == "percentage points" {
		return d * 100
	}
	return d
}

// joinIDs names grants by id, the first few of many.
func joinIDs(ids []string) string {
	switch {
	case len(ids) == 1:
		return "grant " + ids[0]
	case len(ids) <= 5:
		return "grants " + strings.Join(ids, ", ")
	}
	return fmt.Sprintf("grants %s and %d more", strings.Join(ids[:5], ", "), len(ids)-5)
}

// representative is the option tranche with the largest total fair value
// (else any lattice-valued tranche): the convergence study uses it.
func representative(gs []GrantValue) (*GrantValue, int) {
	var best *GrantValue
	bk, bv := -1, -1.0
	for pass := 0; pass < 2 && best == nil; pass++ {
		for i := range gs {
			gv := &gs[i]
			if gv.Inputs.Grant.Instrument == grants.RSU || market(gv) || (pass == 0 && gv.Inputs.Grant.Instrument != grants.Option) {
				continue
			}
			for k, t := range gv.Inputs.Tranches {
				if x := gv.Results[k].Value * float64(t.Shares); x > bv {
					best, bk, bv = gv, k, x
				}
			}
		}
	}
	return best, bk
}

// convergence runs the convergence study on the representative tranche.
func (p *pricer) convergence(v *Valuation) error {
	gv, k := representative(v.Grants)
	if gv == nil {
		return nil
	}
	in := gv.Inputs
	t := mcTerms(gv, k)
	mk := in.Market
	auto, err := p.autoResult(gv, k)
	if err != nil {
		return fmt.Errorf("convergence study, grant %s: %w", in.Grant.ID, err)
	}
	if c, ok := p.priorConvergence(gv, k, auto); ok {
		v.Convergence, v.StudiesReused.Convergence = c, true
		return nil
	}
	c := &Convergence{GrantID: in.Grant.ID, TrancheIndex: in.Tranches[k].Index, Auto: auto}
	for _, n := range ConvergenceSteps {
		o := valuation.LatticeOptions{Steps: n}
		if valuation.Feasible(t, []float64{t.YearsToVest}, mk, o) != nil {
			continue // too few steps for the up-probability, or too many for floating point
		}
		r, err := valuation.Lattice(t, mk, o)
		if err != nil {
			return fmt.Errorf("convergence study, grant %s, %d steps: %w", in.Grant.ID, n, err)
		}
		c.Points = append(c.Points, ConvergencePoint{Steps: n, Value: r.Value})
	}
	v.Convergence = c
	return nil
}

// mcTerms are the lattice terms of tranche k of gv as the convergence
// study and the cross-check value them: a warrant that is not European is
// exercised rationally.
func mcTerms(gv *GrantValue, k int) valuation.Terms {
	t := gv.Inputs.Terms[k]
	if gv.Inputs.Grant.Instrument == grants.Warrant {
		t = rational(t)
	}
	return t
}

// autoResult is the automatic lattice's result for tranche k of gv on
// its mcTerms, as the convergence study and the Monte Carlo check show it:
// the run's own value when the run measured it so (now, on the automatic
// lattice, undiluted), else valued afresh (a locked grant's too, kept
// without being valued or not, so that keeping it unvalued changes
// nothing).
func (p *pricer) autoResult(gv *GrantValue, k int) (valuation.Result, error) {
	if p.opts == (valuation.LatticeOptions{}) && gv.Status != Locked && gv.Dilution == nil && gv.Inputs.Grant.Instrument != grants.RSU {
		return gv.Results[k], nil
	}
	return valuation.Lattice(mcTerms(gv, k), gv.Inputs.Market, valuation.LatticeOptions{})
}

// simulable reports whether valuation.MonteCarlo values terms t: it does
// not simulate rational exercise after vesting.
func simulable(t valuation.Terms) bool {
	return !t.Rational || t.European || t.YearsToVest >= t.YearsToExpiry
}

// mcPick is a tranche of the Monte Carlo sample: grant index i in the
// ledger, tranche k.
type mcPick struct{ i, k int }

// monteCarloSample picks up to MonteCarloSample tranches for the Monte
// Carlo check, deterministically, in ledger order. The candidates are the
// equity options and warrants whose terms the simulation can value (no
// rational exercise), one per grant: its tranche of largest total fair
// value. Picks are made one at a time, each the candidate that first adds
// an instrument not yet in the sample, then a grant month not yet in it,
// then has the largest total fair value (ties to the earlier grant). It
// reports whether any lattice-valued tranche was left out because it
// allows rational exercise.
func monteCarloSample(gs []GrantValue) (picks []mcPick, rational bool) {
	type cand struct {
		mcPick
		month int
		inst  grants.Instrument
		fv    float64
	}
	var cs []cand
	for i := range gs {
		gv := &gs[i]
		g := gv.Inputs.Grant
		if g.Instrument != grants.Option && g.Instrument != grants.Warrant || market(gv) {
			continue
		}
		best, bv := -1, -1.0
		for k, tr := range gv.Inputs.Tranches {
			if !simulable(mcTerms(gv, k)) {
				rational = true
				continue
			}
			if x := gv.Results[k].Value * float64(tr.Shares); x > bv {
				best, bv = k, x
			}
		}
		if best >= 0 {
			cs = append(cs, cand{mcPick{i, best}, g.GrantDate.Year()*12 + int(g.GrantDate.Month()), g.Instrument, bv})
		}
	}
	insts := map[grants.Instrument]bool{}
	months := map[int]bool{}
	taken := make([]bool, len(cs))
	for len(picks) < MonteCarloSample && len(picks) < len(cs) {
		b := -1
		better := func(c, d cand) bool {
			if x, y := !insts[c.inst], !insts[d.inst]; x != y {
				return x
			}
			if x, y := !months[c.month], !months[d.month]; x != y {
				return x
			}
			return c.fv > d.fv
		}
		for j := range cs {
			if !taken[j] && (b < 0 || better(cs[j], cs[b])) {
				b = j
			}
		}
		taken[b] = true
		insts[cs[b].inst], months[cs[b].month] = true, true
		picks = append(picks, cs[b].mcPick)
	}
	sort.Slice(picks, func(a, b int) bool {
		if picks[a].i != picks[b].i {
			return picks[a].i < picks[b].i
		}
		return picks[a].k < picks[b].k
	})
	return picks, rational
}

// monteCarlo runs the Monte Carlo cross-check on the sample, the tranches
// on all cores (each its own seed, so the result does not depend on their
// number), and warns of any |z| above MonteCarloZLimit.
func (p *pricer) monteCarlo(v *Valuation) error {
	picks, rational := monteCarloSample(v.Grants)
	if len(picks) == 0 {
		v.MonteCarloRational = rational
		return nil
	}
	type out struct {
		c     MonteCarloCheck
		err   error // the lattice failed: the run fails
		mcErr error // the simulation refused: the tranche is left out
	}
	outs := make([]out, len(picks))
	reused := make([]bool, len(picks))
	// All at once (at most MonteCarloSample): the cores share them
	// until the last ends, where checks taken a core at a time, of
	// unequal lengths, would leave one core alone with the longest.
	var wg sync.WaitGroup
	for j, pk := range picks {
		wg.Add(1)
		go func() {
			defer wg.Done()
			o := &outs[j]
			o.c, reused[j], o.err, o.mcErr = p.check(&v.Grants[pk.i], pk.k, uint64(MonteCarloSeed+j))
		}()
	}
	wg.Wait()
	for j, o := range outs {
		switch {
		case o.err != nil:
			return o.err
		case o.mcErr != nil:
			if v.MonteCarloErr == nil {
				v.MonteCarloErr = o.mcErr
			}
			continue
		}
		c := o.c
		v.MonteCarlo = append(v.MonteCarlo, c)
		if reused[j] {
			v.StudiesReused.MonteCarlo++
		}
		if w := mcWarning(c); w != "" {
			v.Warnings = append(v.Warnings, w)
		}
	}
	return nil
}

// check simulates tranche k of gv with the given seed beside the automatic
// lattice on the same terms (mcTerms), or takes the prior close's
// simulation when it is provably the same (priorCheck; reused). err is the
// lattice's failure (the run fails), mcErr the simulation's refusal (the
// tranche is left out).
func (p *pricer) check(gv *GrantValue, k int, seed uint64) (c MonteCarloCheck, reused bool, err, mcErr error) {
	in := gv.Inputs
	auto, err := p.autoResult(gv, k)
	if err != nil {
		return c, false, fmt.Errorf("Monte Carlo check, grant %s tranche %d: lattice: %w", in.Grant.ID, in.Tranches[k].Index, err), nil
	}
	if c, ok := p.priorCheck(gv, k, seed, auto); ok {
		return c, true, nil, nil
	}
	mc, err := valuation.MonteCarlo(mcTerms(gv, k), in.Market, valuation.MCOptions{Paths: MonteCarloPaths, Seed: seed})
	if err != nil {
		return c, false, nil, fmt.Errorf("grant %s tranche %d: %w", in.Grant.ID, in.Tranches[k].Index, err)
	}
	return newCheck(gv, k, auto, mc, seed), false, nil, nil
}

// newCheck is the check of tranche k of gv: simulation mc with the given
// seed beside the automatic lattice's auto.
func newCheck(gv *GrantValue, k int, auto, mc valuation.Result, seed uint64) MonteCarloCheck {
	in := gv.Inputs
	c := MonteCarloCheck{GrantID: in.Grant.ID, TrancheIndex: in.Tranches[k].Index, Instrument: in.Grant.Instrument,
		Lattice: auto.Value, LatticeError: auto.ErrorEstimate, Result: mc, Seed: seed}
	if d := math.Hypot(mc.ErrorEstimate, auto.ErrorEstimate); d > 0 {
		c.Z = (mc.Value - auto.Value) / d
	}
	return c
}

// missedTarget lists the option and warrant tranches whose automatic
// lattice value missed valuation.AutoTarget, simulates the first
// MissedTargetSample of them that the simulation can value (on all cores,
// each its own seed), and warns of each.
func (p *pricer) missedTarget(v *Valuation) error {
	var picks []mcPick
	for i := range v.Grants {
		gv := &v.Grants[i]
		if g := gv.Inputs.Grant; g.Instrument != grants.Option && g.Instrument != grants.Warrant || market(gv) {
			continue
		}
		for k, r := range gv.Results {
			if r.MissedTarget {
				picks = append(picks, mcPick{i, k})
			}
		}
	}
	v.MissedTarget = make([]MissedTarget, len(picks))
	var wg sync.WaitGroup // at most MissedTargetSample at once, as monteCarlo's
	errs := make([]error, len(picks))
	sim := 0
	for j, pk := range picks {
		gv := &v.Grants[pk.i]
		rational := !simulable(mcTerms(gv, pk.k))
		v.MissedTarget[j] = MissedTarget{GrantID: gv.Inputs.Grant.ID, TrancheIndex: gv.Inputs.Tranches[pk.k].Index, Result: gv.Results[pk.k], Rational: rational}
		if sim == MissedTargetSample || rational {
			continue
		}
		seed := uint64(MonteCarloSeed + MonteCarloSample + sim)
		sim++
		wg.Add(1)
		go func() {
			defer wg.Done()
			c, _, err, mcErr := p.check(gv, pk.k, seed)
			if err == nil && mcErr == nil {
				v.MissedTarget[j].Check = &c
			}
			errs[j] = err
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	v.Warnings = append(v.Warnings, missedWarnings(v.MissedTarget)...)
	return nil
}

// missedWarnings are the warnings of the tranches short of the accuracy
// target: one each for the first MissedTargetWarnings, one for the rest.
func missedWarnings(ms []MissedTarget) []string {
	var ws []string
	for j, m := range ms {
		if j == MissedTargetWarnings {
			return append(ws, fmt.Sprintf("%d more tranches are valued short of the lattice's %g%% accuracy target (the first %d are named above)",
				len(ms)-j, 100*valuation.AutoTarget, MissedTargetWarnings))
		}
		ws = append(ws, missedWarning(m))
	}
	return ws
}

// missedWarning is the warning of a tranche short of the accuracy target.
func missedWarning(m MissedTarget) string {
	r := m.Result
	w := fmt.Sprintf("grant %s tranche %d: the lattice gives %.6g ± %.2g per share (%.2g%%), short of its %g%% accuracy target at the finest ladder it allows",
		m.GrantID, m.TrancheIndex, r.Value, r.ErrorEstimate, 100*r.ErrorEstimate/math.Abs(r.Value), 100*valuation.AutoTarget)
	switch c := m.Check; {
	case c != nil:
		return w + fmt.Sprintf("; Monte Carlo gives %.6g ± %.2g for the same terms%s (lattice %.6g, seed %d)",
			c.Result.Value, c.Result.ErrorEstimate, undiluted(c.Instrument), c.Lattice, c.Seed)
	case m.Rational:
		return w + "; Monte Carlo does not value rational exercise, so a reviewer should check this tranche another way"
	default:
		return w + fmt.Sprintf("; it is beyond the first %d such tranches simulated, so a reviewer should check it another way", MissedTargetSample)
	}
}

// undiluted says that a warrant's check is of the undiluted call.
func undiluted(inst grants.Instrument) string {
	if inst == grants.Warrant {
		return " undiluted"
	}
	return ""
}

// mcWarning is the warning a check raises when |z| exceeds
// MonteCarloZLimit, else "".
func mcWarning(c MonteCarloCheck) string {
	if !(math.Abs(c.Z) > MonteCarloZLimit) {
		return ""
	}
	return fmt.Sprintf("the Monte Carlo check of grant %s tranche %d gives %.4f ± %.4f per share against the lattice's %.4f ± %.4f (z = %.1f, beyond ±%g): a reviewer should look at this tranche's inputs and value",
		c.GrantID, c.TrancheIndex, c.Result.Value, c.Result.ErrorEstimate, c.Lattice, c.LatticeError, c.Z, MonteCarloZLimit)
}

// revalue is a liability-classified warrant's value per tranche measured
// at date at (its grant date, or a past quarter end): the schedule's
// inputs as of that date, on the same lattice with the same dilution.
func (p *pricer) revalue(g grants.Grant, at time.Time) ([]float64, error) {
	s := *p.s
	s.Company.ValuationDate = at
	in, err := s.Inputs(g)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(in.Terms))
	for k, t := range in.Terms {
		r, err := p.warrant(g, t, in.Market)
		if err != nil {
			return nil, fmt.Errorf("tranche %d: %w", k+1, err)
		}
		out[k] = r.Value
	}
	return out, nil
}
