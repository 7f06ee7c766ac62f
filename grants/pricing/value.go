package pricing

import (
	"fmt"
	"math"
	"runtime"
	"sort"
	"strconv"
	"sync"
	"time"

	"grantworth/grants"
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
}

// GrantValue is one grant's inputs and the value of each of its tranches.
type GrantValue struct {
	Inputs  grants.Inputs
	Results []valuation.Result // per tranche, in Inputs.Tranches order
	// BSM is the closed-form comparison per tranche: Black-Scholes-Merton
	// on the simplified-method term for options, over the contractual term
	// before dilution for warrants, the RSU value itself for RSUs.
	BSM []valuation.Result
	// Dilution is how a warrant was diluted; nil for options, RSUs and
	// warrants of a company without shares outstanding.
	Dilution *valuation.Dilution
	// UndilutedValue is, for a diluted warrant, its first tranche on the
	// automatic lattice without dilution (0 if that failed).
	UndilutedValue float64
	// RiskFreeRate is, per tranche, the continuous zero rate of the
	// grant's curve at the tranche's years to expiry, and SimplifiedRate
	// at the term of its closed-form comparison (BSM's ExpectedTermYears);
	// both 0 without a curve.
	RiskFreeRate, SimplifiedRate []float64
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

// Revaluation is a liability-classified warrant's value per tranche
// measured at Date, or the error that stopped it.
type Revaluation struct {
	Date   time.Time
	Values []float64
	Err    error
}

// Valuation is everything Value found.
type Valuation struct {
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
	// Revaluations are, per liability-classified warrant's grant ID, its
	// values at the grant date and then at RemeasurementDates, up to the
	// first that failed.
	Revaluations map[string][]Revaluation
	Warnings     []string
}

// RemeasurementDates are the fiscal quarter ends of calendar cal from the
// one of the quarter containing grantDate up to before end, the most recent
// MaxRemeasurements of them.
func RemeasurementDates(cal grants.FiscalCalendar, grantDate, end time.Time) []time.Time {
	var ends []time.Time
	for _, q := range cal.Quarters(grantDate, end) {
		if q.End.Before(end) {
			ends = append(ends, q.End)
		}
	}
	if len(ends) > MaxRemeasurements {
		ends = ends[len(ends)-MaxRemeasurements:]
	}
	return ends
}

// Value values the grants ins (from ValueInputs): options as lattice jobs
// on all cores, warrants on the lattice with dilution, RSUs in closed
// form, the closed-form comparison per tranche; then the sensitivity
// cases, the convergence study on a representative tranche, the Monte
// Carlo check of a small sample of tranches, and the revaluations of liability-classified warrants that
// expense attribution needs. The result depends only on the schedule and
// opts, never on the number of cores.
func Value(s *grants.Schedule, ins []grants.Inputs, opts Options) (*Valuation, error) {
	p := &pricer{s: s, opts: opts.Lattice}
	v := &Valuation{Options: opts, Grants: make([]GrantValue, len(ins))}
	for i := range ins {
		v.Grants[i].Inputs = ins[i]
	}
	base, err := p.valueSet(v.Grants, shift{}, opts.Progress)
	if err != nil {
		return nil, err
	}
	for i := range v.Grants {
		gv := &v.Grants[i]
		gv.Results = base[i]
		if err := p.compare(gv); err != nil {
			return nil, err
		}
		v.FairValueTotal += gv.FairValueTotal()
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
	v.Revaluations = map[string][]Revaluation{}
	_, end := s.Period()
	for _, gv := range v.Grants {
		g := gv.Inputs.Grant
		if g.Instrument != grants.Warrant || g.Classification != grants.Liability {
			continue
		}
		var rs []Revaluation
		for _, at := range append([]time.Time{g.GrantDate}, RemeasurementDates(s.Company.Fiscal, g.GrantDate, end)...) {
			vals, err := p.revalue(g, at)
			rs = append(rs, Revaluation{Date: at, Values: vals, Err: err})
			if err != nil {
				break
			}
		}
		v.Revaluations[g.ID] = rs
	}
	return v, nil
}

// pricer holds a run's schedule and lattice settings.
type pricer struct {
	s    *grants.Schedule
	opts valuation.LatticeOptions
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
	gv.BSM = make([]valuation.Result, len(in.Terms))
	for k, t := range in.Terms {
		var err error
		switch g.Instrument {
		case grants.RSU:
			gv.BSM[k] = valuation.RSUValue(in.Market, t.YearsToVest)
			continue
		case grants.Warrant:
			// The simplified method is for employee options: a warrant
			// is compared with BSM over its term, before dilution.
			if gv.BSM[k], err = valuation.BlackScholes(t, in.Market); err != nil {
				return fmt.Errorf("grant %s tranche %d: BSM: %w", g.ID, k+1, err)
			}
			continue
		}
		if gv.BSM[k], err = valuation.SimplifiedBSM(t, in.Market); err != nil {
			return fmt.Errorf("grant %s tranche %d: simplified BSM: %w", g.ID, k+1, err)
		}
	}
	gv.RiskFreeRate = make([]float64, len(in.Terms))
	gv.SimplifiedRate = make([]float64, len(in.Terms))
	if c := in.Market.Curve; c != nil {
		for k, t := range in.Terms {
			gv.RiskFreeRate[k] = c.Zero(t.YearsToExpiry)
			gv.SimplifiedRate[k] = c.Zero(gv.BSM[k].ExpectedTermYears)
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
		m.VolAnnual = math.Max(0.01, m.VolAnnual+sh.d)
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
					terms[i].ExerciseMultiple = math.Max(1.05, terms[i].ExerciseMultiple+sh.d)
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
// It returns the tranche results per grant.
func (p *pricer) valueSet(gs []GrantValue, sh shift, progress func(done, total int)) ([][]valuation.Result, error) {
	out := make([][]valuation.Result, len(gs))
	curves := map[*valuation.Curve]*valuation.Curve{}
	var jobs []valuation.Job
	var jobOf []int
	for i := range gs {
		in := gs[i].Inputs
		terms, m, err := shiftCase(in, sh, curves)
		if err != nil {
			return nil, err
		}
		g := in.Grant
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
					return nil, fmt.Errorf("grant %s tranche %d: %w", g.ID, k+1, err)
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
			return nil, fmt.Errorf("grant %s: %w", gs[jobOf[j]].Inputs.Grant.ID, r.Err)
		}
		out[jobOf[j]] = r.Tranches
	}
	return out, nil
}

// dedupJobs returns the distinct jobs and, for each job, the index of its
// distinct copy. Jobs are the same when every number that enters the
// lattice is the same, bit for bit.
func dedupJobs(jobs []valuation.Job) ([]valuation.Job, []int) {
	seen := map[string]int{}
	index := make([]int, len(jobs))
	var uniq []valuation.Job
	for i, j := range jobs {
		k := jobKey(j)
		u, ok := seen[k]
		if !ok {
			u = len(uniq)
			seen[k] = u
			uniq = append(uniq, j)
		}
		index[i] = u
	}
	return uniq, index
}

func jobKey(j valuation.Job) string {
	b := make([]byte, 0, 256)
	f := func(x float64) { b = strconv.AppendUint(b, math.Float64bits(x), 16); b = append(b, ',') }
	t, m := j.Terms, j.Market
	f(t.Strike)
	f(t.YearsToExpiry)
	f(t.ExerciseMultiple)
	f(t.ExitRate)
	b = strconv.AppendBool(b, t.Rational)
	b = strconv.AppendBool(b, t.European)
	b = append(b, '|')
	for _, v := range j.VestYears {
		f(v)
	}
	b = append(b, '|')
	f(m.Spot)
	f(m.VolAnnual)
	f(m.DividendYield)
	if m.Curve != nil {
		ten, zs := m.Curve.Points()
		for i := range ten {
			f(ten[i])
			f(zs[i])
		}
	}
	b = append(b, '|')
	b = strconv.AppendInt(b, int64(j.Options.Steps), 10)
	b = append(b, fmt.Sprintf("%+v", j.Options.Convention)...)
	return string(b)
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
// at a time.
func (p *pricer) sensitivity(v *Valuation, progress func(done, total int)) error {
	gs := v.Grants
	sample := gs
	if len(gs) > SensitivitySample {
		sample = make([]GrantValue, 0, SensitivitySample)
		for i := 0; i < SensitivitySample; i++ {
			sample = append(sample, gs[i*len(gs)/SensitivitySample])
		}
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
	n, done := 0, 0
	for _, c := range sensitivityCases {
		n += len(c.shifts) - 1
	}
	for _, c := range sensitivityCases {
		sens := Sensitivity{Input: c.key, Label: c.label, Unit: c.unit}
		for j, d := range c.shifts {
			fv := base
			if d != 0 {
				rs, err := p.valueSet(sample, shift{c.key, d}, nil)
				if err != nil {
					return fmt.Errorf("sensitivity %s %+g: %w", c.key, d, err)
				}
				if sampleBase > 0 {
					fv = base * total(rs) / sampleBase
				}
				done++
				if progress != nil {
					progress(done, n)
				}
			}
			change := 0.0
			if base > 0 {
				change = fv/base - 1
			}
			x := d
			if c.unit == "percentage points" {
				x = d * 100
			}
			sens.Points = append(sens.Points, SensitivityPoint{Shift: x, Label: c.labels[j], FairValueTotal: fv, Change: change})
		}
		v.Sensitivity = append(v.Sensitivity, sens)
	}
	return nil
}

// representative is the option tranche with the largest total fair value
// (else any lattice-valued tranche): the convergence study uses it.
func representative(gs []GrantValue) (*GrantValue, int) {
	var best *GrantValue
	bk, bv := -1, -1.0
	for pass := 0; pass < 2 && best == nil; pass++ {
		for i := range gs {
			gv := &gs[i]
			if gv.Inputs.Grant.Instrument == grants.RSU || (pass == 0 && gv.Inputs.Grant.Instrument != grants.Option) {
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
	auto, err := valuation.Lattice(t, mk, valuation.LatticeOptions{})
	if err != nil {
		return fmt.Errorf("convergence study, grant %s: %w", in.Grant.ID, err)
	}
	c := &Convergence{GrantID: in.Grant.ID, TrancheIndex: in.Tranches[k].Index, Auto: auto}
	for _, n := range ConvergenceSteps {
		r, err := valuation.Lattice(t, mk, valuation.LatticeOptions{Steps: n})
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
		if g.Instrument != grants.Option && g.Instrument != grants.Warrant {
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
	sem := make(chan struct{}, max(1, runtime.GOMAXPROCS(0)))
	var wg sync.WaitGroup
	for j, pk := range picks {
		wg.Add(1)
		sem <- struct{}{}
		go func() {
			defer func() { <-sem; wg.Done() }()
			gv := &v.Grants[pk.i]
			in := gv.Inputs
			t := mcTerms(gv, pk.k)
			o := &outs[j]
			auto, err := valuation.Lattice(t, in.Market, valuation.LatticeOptions{})
			if err != nil {
				o.err = fmt.Errorf("Monte Carlo check, grant %s tranche %d: lattice: %w", in.Grant.ID, in.Tranches[pk.k].Index, err)
				return
			}
			seed := uint64(MonteCarloSeed + j)
			mc, err := valuation.MonteCarlo(t, in.Market, valuation.MCOptions{Paths: MonteCarloPaths, Seed: seed})
			if err != nil {
				o.mcErr = fmt.Errorf("grant %s tranche %d: %w", in.Grant.ID, in.Tranches[pk.k].Index, err)
				return
			}
			o.c = MonteCarloCheck{GrantID: in.Grant.ID, TrancheIndex: in.Tranches[pk.k].Index, Instrument: in.Grant.Instrument,
				Lattice: auto.Value, LatticeError: auto.ErrorEstimate, Result: mc, Seed: seed}
			if d := math.Hypot(mc.ErrorEstimate, auto.ErrorEstimate); d > 0 {
				o.c.Z = (mc.Value - auto.Value) / d
			}
		}()
	}
	wg.Wait()
	for _, o := range outs {
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
		if w := mcWarning(c); w != "" {
			v.Warnings = append(v.Warnings, w)
		}
	}
	return nil
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
