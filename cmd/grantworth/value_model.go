package main

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"grantworth/grants"
	"grantworth/report"
	"grantworth/valuation"
)

// The pipeline of the value command: from a read and validated schedule to
// the report Model. It values; the report package only lays out.

// Sizes of the extra runs. The sensitivity runs revalue every grant when
// the ledger is small, else an evenly spaced sample of this many grants
// whose relative change is applied to the full total.
const (
	sensitivitySample = 300
	mcPaths           = 100_000
	mcSeed            = 1
)

// convergenceSteps are the raw step counts of the convergence study: about
// √2 apart, so that the oscillation between them shows.
var convergenceSteps = []int{25, 35, 50, 71, 100, 141, 200, 283, 400, 566, 800, 1131, 1600, 2263, 3200, 4525}

// valued is one grant's inputs and the value of each of its tranches.
type valued struct {
	in   grants.Inputs
	vest []float64 // years to vest per tranche
	res  []valuation.Result
	bsm  []valuation.Result
	dil  *valuation.Dilution
}

// pipeline holds the run's settings.
type pipeline struct {
	s        *grants.Schedule
	opts     valuation.LatticeOptions
	progress func(done, total int) // the base valuation, by grant
	sensBar  *progressBar          // the sensitivity runs; nil for none
	warnings []string
}

// gatherInputs collects the inputs of every grant made on or before the
// valuation date (a later grant is not outstanding at the period end and is
// left out, with a warning), or every error found.
func gatherInputs(s *grants.Schedule) ([]*valued, []error, []string) {
	var out []*valued
	var errs []error
	var warns []string
	for _, g := range s.Grants {
		if valuation.Days(s.Company.ValuationDate, g.GrantDate) > 0 {
			warns = append(warns, fmt.Sprintf("grant %s, dated %s after the valuation date %s, is left out of this valuation",
				g.ID, report.DateOf(g.GrantDate), report.DateOf(s.Company.ValuationDate)))
			continue
		}
		in, err := s.Inputs(g)
		if err != nil {
			errs = append(errs, err)
			continue
		}
		v := &valued{in: in, vest: make([]float64, len(in.Terms))}
		for i, t := range in.Terms {
			v.vest[i] = t.YearsToVest
		}
		out = append(out, v)
	}
	return out, errs, warns
}

// dilution is how a warrant grant dilutes: its own shares against the
// company's shares outstanding. A liability-classified warrant is measured
// at the valuation date, when the share price already reflects the
// warrants (Galai-Schneller); an equity-classified one at issue, a new
// issue (the plain factor).
func (p *pipeline) dilution(g grants.Grant) *valuation.Dilution {
	n := p.s.Company.SharesOutstanding
	if n <= 0 {
		return nil
	}
	return &valuation.Dilution{SharesOutstanding: n, Warrants: float64(g.Shares), PriceReflectsWarrants: g.Classification == grants.Liability}
}

// market is the shifted copy of a grant's market and terms for one case.
type shift struct {
	name string
	d    float64
}

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

// valueSet values the grants vs under one case (the zero shift is the base
// case): options on the lattice, all cores; warrants on the lattice with
// dilution; RSUs in closed form. It returns the tranche results per grant.
func (p *pipeline) valueSet(vs []*valued, sh shift, progress func(done, total int)) ([][]valuation.Result, error) {
	out := make([][]valuation.Result, len(vs))
	curves := map[*valuation.Curve]*valuation.Curve{}
	var jobs []valuation.Job
	var jobOf []int
	for i, v := range vs {
		terms, m, err := shiftCase(v.in, sh, curves)
		if err != nil {
			return nil, err
		}
		g := v.in.Grant
		switch g.Instrument {
		case grants.RSU:
			rs := make([]valuation.Result, len(v.vest))
			for k, y := range v.vest {
				rs[k] = valuation.RSUValue(m, y)
			}
			out[i] = rs
		case grants.Warrant:
			rs := make([]valuation.Result, len(terms))
			for k, t := range terms {
				var err error
				if d := p.dilution(g); d != nil {
					rs[k], err = valuation.WarrantValue(t, m, *d, p.opts)
				} else {
					tt := t
					tt.Rational = tt.Rational || !tt.European
					rs[k], err = valuation.Lattice(tt, m, p.opts)
				}
				if err != nil {
					return nil, fmt.Errorf("grant %s tranche %d: %w", g.ID, k+1, err)
				}
			}
			out[i] = rs
		default:
			if len(terms) == 0 {
				continue
			}
			jobs = append(jobs, valuation.Job{Terms: terms[0], VestYears: v.vest, Market: m, Options: p.opts})
			jobOf = append(jobOf, i)
		}
	}
	// Grants with the same terms, vesting and market (a board's batch of
	// grants on one date) are valued once.
	uniq, index := dedupJobs(jobs)
	res := valuation.RunJobs(uniq, 0, progress)
	for j := range jobs {
		r := res[index[j]]
		v := vs[jobOf[j]]
		if r.Err != nil {
			return nil, fmt.Errorf("grant %s: %w", v.in.Grant.ID, r.Err)
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

// buildModel values everything and fills the report Model.
func (p *pipeline) buildModel(vs []*valued, set report.Model) (*report.Model, error) {
	m := set
	s := p.s
	base, err := p.valueSet(vs, shift{}, p.progress)
	if err != nil {
		return nil, err
	}
	for i, v := range vs {
		v.res = base[i]
		v.dil = nil
		if v.in.Grant.Instrument == grants.Warrant {
			v.dil = p.dilution(v.in.Grant)
		}
		v.bsm = make([]valuation.Result, len(v.in.Terms))
		for k, t := range v.in.Terms {
			switch v.in.Grant.Instrument {
			case grants.RSU:
				v.bsm[k] = valuation.RSUValue(v.in.Market, t.YearsToVest)
				continue
			case grants.Warrant:
				// The simplified method is for employee options: a warrant
				// is compared with BSM over its term, before dilution.
				if v.bsm[k], err = valuation.BlackScholes(t, v.in.Market); err != nil {
					return nil, fmt.Errorf("grant %s tranche %d: BSM: %w", v.in.Grant.ID, k+1, err)
				}
				continue
			}
			if v.bsm[k], err = valuation.SimplifiedBSM(t, v.in.Market); err != nil {
				return nil, fmt.Errorf("grant %s tranche %d: simplified BSM: %w", v.in.Grant.ID, k+1, err)
			}
		}
	}
	m.Company = report.Company{Name: s.Company.Name, Currency: s.Company.Currency, SharesOutstanding: s.Company.SharesOutstanding}
	m.ValuationDate = report.DateOf(s.Company.ValuationDate)
	m.PeriodStart = report.DateOf(s.Company.PeriodStart)
	m.Settings.Steps = "auto"
	if p.opts.Steps > 0 {
		m.Settings.Steps = strconv.Itoa(p.opts.Steps) + " (raw lattice)"
	}
	m.Settings.Attribution = string(s.Assumptions.Attribution)
	m.Settings.Forfeitures = string(s.Assumptions.Forfeitures)
	m.Caution = report.Caution
	m.Assumptions = companyAssumptions(s)
	for _, v := range vs {
		m.Grants = append(m.Grants, grantOf(v))
		m.Assumptions = append(m.Assumptions, grantAssumptions(v)...)
	}
	if s.Company.SharesOutstanding <= 0 {
		for _, v := range vs {
			if v.in.Grant.Instrument == grants.Warrant {
				p.warnings = append(p.warnings, "Company!shares_outstanding is not given, so warrants are valued without dilution")
				break
			}
		}
	}
	report.Summarize(&m)
	if err := p.sensitivity(vs, &m); err != nil {
		return nil, err
	}
	if err := p.convergence(vs, &m); err != nil {
		return nil, err
	}
	var price float64
	if pp, ok := s.PriceAt(s.Company.ValuationDate); ok {
		price = pp.Price
	}
	if err := report.AddExpense(&m, s, price, p.revalue); err != nil {
		return nil, err
	}
	m.Warnings = append(m.Warnings, p.warnings...)
	return &m, nil
}

func grantOf(v *valued) report.Grant {
	in, g := v.in, v.in.Grant
	rg := report.Grant{
		ID: g.ID, Holder: g.Holder, Instrument: string(g.Instrument),
		GrantDate: report.DateOf(g.GrantDate), MeasurementDate: report.DateOf(in.MeasurementDate),
		ExpiryDate: report.DateOf(g.ExpiryDate), Shares: g.Shares, Strike: g.Strike,
		SharePrice: in.SharePrice.Value, Volatility: in.Volatility.Value, RiskFreeRate: in.RiskFreeRate.Value,
		DividendYield: in.DividendYield.Value, ExerciseMultiple: in.ExerciseMultiple.Value,
		PostVestingExitRate: in.ExitRate.Value, Method: "lattice",
	}
	switch g.Instrument {
	case grants.RSU:
		rg.Method = "rsu"
	case grants.Warrant:
		rg.Classification, rg.ExerciseStyle = string(g.Classification), string(g.ExerciseStyle)
		if v.dil != nil {
			method := "N/(N+W) factor, new issue"
			if v.dil.PriceReflectsWarrants {
				method = "Galai-Schneller"
			}
			var und float64
			if len(in.Terms) > 0 {
				t := in.Terms[0]
				t.Rational = t.Rational || !t.European
				if r, err := valuation.Lattice(t, in.Market, valuation.LatticeOptions{}); err == nil {
					und = r.Value
				}
			}
			rg.Method = "lattice, diluted"
			rg.Dilution = &report.Dilution{SharesOutstanding: v.dil.SharesOutstanding, Warrants: v.dil.Warrants,
				PriceReflectsWarrants: v.dil.PriceReflectsWarrants, Method: method, UndilutedValue: und}
		}
	}
	for k, t := range in.Tranches {
		term := in.Terms[k]
		r, b := v.res[k], v.bsm[k]
		tr := report.Tranche{Index: t.Index, VestDate: report.DateOf(t.VestDate), Shares: t.Shares,
			YearsToExpiry: term.YearsToExpiry, YearsToVest: term.YearsToVest,
			FairValuePerShare: r.Value, ErrorEstimate: r.ErrorEstimate, ExpectedTermYears: r.ExpectedTermYears, Steps: r.Steps,
			BSMSimplifiedValue: b.Value, SimplifiedTerm: b.ExpectedTermYears}
		if c := in.Market.Curve; c != nil {
			tr.RiskFreeRate = c.Zero(term.YearsToExpiry)
			tr.SimplifiedRate = c.Zero(b.ExpectedTermYears)
		}
		rg.Tranches = append(rg.Tranches, tr)
	}
	return rg
}

func refText(r grants.Ref) string { return r.String() }

func companyAssumptions(s *grants.Schedule) []report.Assumption {
	c, a := s.Company, s.Assumptions
	src := func(key string) string { return a.Sources[key] }
	cref := func(key string) string { return refText(c.Refs[key]) }
	aref := func(key string) string { return refText(a.Refs[key]) }
	day := func(t time.Time) string { return report.DateOf(t).String() }
	out := []report.Assumption{
		{Name: "company_name", Kind: report.KindText, Text: c.Name, Ref: cref("company_name")},
		{Name: "valuation_date", Kind: report.KindDate, Text: day(c.ValuationDate), Ref: cref("valuation_date")},
		{Name: "period_start", Kind: report.KindDate, Text: day(c.PeriodStart), Ref: cref("period_start")},
		{Name: "currency", Kind: report.KindText, Text: c.Currency, Ref: cref("currency")},
		{Name: "shares_outstanding", Kind: report.KindNumber, Value: c.SharesOutstanding, Text: strconv.FormatFloat(c.SharesOutstanding, 'f', -1, 64), Ref: cref("shares_outstanding")},
	}
	num := func(key, kind string, v float64) report.Assumption {
		return report.Assumption{Name: key, Kind: kind, Value: v, Text: strconv.FormatFloat(v, 'g', -1, 64), Ref: aref(key), Source: src(key)}
	}
	steps := "auto"
	if a.Steps > 0 {
		steps = strconv.Itoa(a.Steps)
	}
	out = append(out,
		num("volatility", report.KindPercent, a.Volatility),
		num("dividend_yield", report.KindPercent, a.DividendYield),
		num("exercise_multiple", report.KindNumber, a.ExerciseMultiple),
		num("post_vesting_exit_rate", report.KindPercent, a.PostVestingExitRate),
		num("pre_vesting_forfeiture_rate", report.KindPercent, a.PreVestingForfeitureRate),
		report.Assumption{Name: "attribution", Kind: report.KindText, Text: string(a.Attribution), Ref: aref("attribution"), Source: src("attribution")},
		report.Assumption{Name: "forfeitures", Kind: report.KindText, Text: string(a.Forfeitures), Ref: aref("forfeitures"), Source: src("forfeitures")},
		report.Assumption{Name: "steps", Kind: report.KindText, Text: steps, Ref: aref("steps"), Source: src("steps")},
	)
	return out
}

// grantAssumptions are the inputs a grant was valued on, each with its
// cell and source text.
func grantAssumptions(v *valued) []report.Assumption {
	in, g := v.in, v.in.Grant
	ref := func(k string) string { return refText(g.Refs[k]) }
	day := func(t time.Time) string { return report.DateOf(t).String() }
	src := func(key, kind string, s grants.Source) report.Assumption {
		return report.Assumption{GrantID: g.ID, Name: key, Kind: kind, Value: s.Value, Text: strconv.FormatFloat(s.Value, 'g', -1, 64), Ref: refText(s.Ref), Source: s.Text}
	}
	out := []report.Assumption{
		{GrantID: g.ID, Name: "instrument", Kind: report.KindText, Text: string(g.Instrument), Ref: ref("instrument"), Term: true},
		{GrantID: g.ID, Name: "grant_date", Kind: report.KindDate, Text: day(g.GrantDate), Ref: ref("grant_date"), Term: true},
		{GrantID: g.ID, Name: "measurement_date", Kind: report.KindDate, Text: day(in.MeasurementDate), Source: measurementNote(g), Term: true},
		{GrantID: g.ID, Name: "shares", Kind: report.KindNumber, Value: float64(g.Shares), Text: strconv.FormatInt(g.Shares, 10), Ref: ref("shares"), Term: true},
	}
	if g.Instrument != grants.RSU {
		out = append(out,
			report.Assumption{GrantID: g.ID, Name: "strike", Kind: report.KindMoney, Value: g.Strike, Text: strconv.FormatFloat(g.Strike, 'g', -1, 64), Ref: ref("strike"), Term: true},
			report.Assumption{GrantID: g.ID, Name: "expiry_date", Kind: report.KindDate, Text: day(g.ExpiryDate), Ref: firstRef(g.Refs, "expiry_date", "term_years"), Term: true})
	}
	out = append(out, report.Assumption{GrantID: g.ID, Name: "vesting", Kind: report.KindText,
		Text: fmt.Sprintf("%d tranches from %s", len(in.Tranches), day(g.VestStart)), Ref: firstRef(g.Refs, "vest_months", "vest_start"),
		Source: fmt.Sprintf("%d months, cliff %d, every %d", g.VestMonths, g.CliffMonths, g.VestEvery), Term: true})
	out = append(out, src("share_price", report.KindMoney, in.SharePrice))
	if g.Instrument != grants.RSU {
		out = append(out, src("volatility", report.KindPercent, in.Volatility))
	}
	out = append(out, src("dividend_yield", report.KindPercent, in.DividendYield))
	if g.Instrument != grants.RSU {
		out = append(out,
			src("exercise_multiple", report.KindNumber, in.ExerciseMultiple),
			src("post_vesting_exit_rate", report.KindPercent, in.ExitRate),
			src("risk_free_rate", report.KindPercent, in.RiskFreeRate))
	}
	return out
}

func measurementNote(g grants.Grant) string {
	if g.Instrument == grants.Warrant && g.Classification == grants.Liability {
		return "valuation date: a liability-classified warrant is remeasured each period"
	}
	return "grant date"
}

func firstRef(refs map[string]grants.Ref, keys ...string) string {
	for _, k := range keys {
		if r, ok := refs[k]; ok {
			return r.String()
		}
	}
	return grants.Ref{}.String()
}

// sensitivity revalues the ledger (or a sample of it) with one input moved
// at a time.
func (p *pipeline) sensitivity(vs []*valued, m *report.Model) error {
	sample := vs
	if len(vs) > sensitivitySample {
		sample = make([]*valued, 0, sensitivitySample)
		for i := 0; i < sensitivitySample; i++ {
			sample = append(sample, vs[i*len(vs)/sensitivitySample])
		}
		m.Settings.Sensitivities = fmt.Sprintf("Each case revalues an evenly spaced sample of %d of the %d grants; its relative change is applied to the total fair value of all grants.", len(sample), len(vs))
	} else {
		m.Settings.Sensitivities = "Each case revalues every grant with the input moved for all of them."
	}
	total := func(rs [][]valuation.Result, set []*valued) float64 {
		var t float64
		for i, v := range set {
			for k, tr := range v.in.Tranches {
				t += rs[i][k].Value * float64(tr.Shares)
			}
		}
		return t
	}
	baseRes := make([][]valuation.Result, len(sample))
	for i, v := range sample {
		baseRes[i] = v.res
	}
	sampleBase := total(baseRes, sample)
	cases := []struct {
		key, label, unit string
		shifts           []float64
		labels           []string
	}{
		{"volatility", "Volatility", "percentage points", []float64{-0.10, -0.05, 0, 0.05, 0.10}, []string{"−10 points", "−5 points", "base", "+5 points", "+10 points"}},
		{"exercise_multiple", "Exercise multiple", "multiple", []float64{-0.5, 0, 0.5, 1.0}, []string{"−0.5", "base", "+0.5", "+1.0"}},
		{"post_vesting_exit_rate", "Post-vesting exit rate", "percentage points", []float64{-0.05, 0, 0.05, 0.10}, []string{"−5 points", "base", "+5 points", "+10 points"}},
		{"risk_free_rate", "Risk-free rate", "percentage points", []float64{-0.01, 0, 0.01}, []string{"−1 point", "base", "+1 point"}},
	}
	bar := p.sensBar
	n, done := 0, 0
	for _, c := range cases {
		n += len(c.shifts) - 1
	}
	for _, c := range cases {
		sens := report.Sensitivity{Input: c.key, Label: c.label, Unit: c.unit}
		for j, d := range c.shifts {
			fv := m.Totals.FairValueTotal
			if d != 0 {
				rs, err := p.valueSet(sample, shift{c.key, d}, nil)
				if err != nil {
					return fmt.Errorf("sensitivity %s %+g: %w", c.key, d, err)
				}
				if sampleBase > 0 {
					fv = m.Totals.FairValueTotal * total(rs, sample) / sampleBase
				}
				done++
				if bar != nil {
					bar.update(done, n)
				}
			}
			change := 0.0
			if m.Totals.FairValueTotal > 0 {
				change = fv/m.Totals.FairValueTotal - 1
			}
			x := d
			if c.unit == "percentage points" {
				x = d * 100
			}
			sens.Points = append(sens.Points, report.SensitivityPoint{Shift: x, Label: c.labels[j], FairValueTotal: fv, Change: change})
		}
		m.Sensitivity = append(m.Sensitivity, sens)
	}
	if bar != nil {
		bar.finish()
	}
	return nil
}

// representative is the option tranche with the largest total fair value
// (else any lattice-valued tranche): the convergence study and the Monte
// Carlo check use it.
func representative(vs []*valued) (*valued, int) {
	var best *valued
	bk, bv := -1, -1.0
	for pass := 0; pass < 2 && best == nil; pass++ {
		for _, v := range vs {
			if v.in.Grant.Instrument == grants.RSU || (pass == 0 && v.in.Grant.Instrument != grants.Option) {
				continue
			}
			for k, t := range v.in.Tranches {
				if x := v.res[k].Value * float64(t.Shares); x > bv {
					best, bk, bv = v, k, x
				}
			}
		}
	}
	return best, bk
}

func (p *pipeline) convergence(vs []*valued, m *report.Model) error {
	v, k := representative(vs)
	if v == nil {
		return nil
	}
	t := v.in.Terms[k]
	mk := v.in.Market
	if v.in.Grant.Instrument == grants.Warrant {
		t.Rational = t.Rational || !t.European
	}
	auto, err := valuation.Lattice(t, mk, valuation.LatticeOptions{})
	if err != nil {
		return fmt.Errorf("convergence study, grant %s: %w", v.in.Grant.ID, err)
	}
	c := &report.Convergence{GrantID: v.in.Grant.ID, TrancheIndex: v.in.Tranches[k].Index,
		AutoValue: auto.Value, AutoError: auto.ErrorEstimate, AutoSteps: auto.Steps}
	for _, n := range convergenceSteps {
		r, err := valuation.Lattice(t, mk, valuation.LatticeOptions{Steps: n})
		if err != nil {
			return fmt.Errorf("convergence study, grant %s, %d steps: %w", v.in.Grant.ID, n, err)
		}
		c.Points = append(c.Points, report.ConvergencePoint{Steps: n, Value: r.Value})
	}
	m.Convergence = c
	if t.Rational {
		m.Settings.MonteCarlo = "No Monte Carlo check: the representative award allows rational early exercise, which the simulation does not model."
		return nil
	}
	mc, err := valuation.MonteCarlo(t, mk, valuation.MCOptions{Paths: mcPaths, Seed: mcSeed})
	if err != nil {
		m.Settings.MonteCarlo = "Monte Carlo check not run: " + err.Error()
		return nil
	}
	m.Settings.MonteCarlo = fmt.Sprintf("%s paths (antithetic pairs, control variate), weekly grid with continuous barrier monitoring, seed %d, on grant %s tranche %d.",
		strings.TrimSuffix(money2(float64(mc.Steps)), ".00"), mcSeed, v.in.Grant.ID, v.in.Tranches[k].Index)
	m.CrossChecks = append(m.CrossChecks, report.CrossCheck{GrantID: v.in.Grant.ID, TrancheIndex: v.in.Tranches[k].Index,
		Method: "mc", Lattice: auto.Value, Value: mc.Value, StdErr: mc.ErrorEstimate, Paths: mc.Steps})
	return nil
}

// revalue is a liability-classified warrant's value per tranche measured
// at date at (its grant date, or a past quarter end) for the expense
// attribution's remeasurements: the schedule's inputs as of that date, on
// the same lattice with the same dilution.
func (p *pipeline) revalue(g grants.Grant, at time.Time) ([]float64, error) {
	s := *p.s
	s.Company.ValuationDate = at
	in, err := s.Inputs(g)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(in.Terms))
	for k, t := range in.Terms {
		var r valuation.Result
		if d := p.dilution(g); d != nil {
			r, err = valuation.WarrantValue(t, in.Market, *d, p.opts)
		} else {
			t.Rational = t.Rational || !t.European
			r, err = valuation.Lattice(t, in.Market, p.opts)
		}
		if err != nil {
			return nil, fmt.Errorf("tranche %d: %w", k+1, err)
		}
		out[k] = r.Value
	}
	return out, nil
}

// warningTexts returns the schedule's warnings as text, in the order found.
func warningTexts(rep *grants.Report) []string {
	out := make([]string, 0, len(rep.Warnings))
	for _, w := range rep.Warnings {
		out = append(out, w.Error())
	}
	return out
}
