package report

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"time"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
	"grantworth/internal/cores"
)

// FinancingKey is the by-instrument group of the warrants issued in
// financings.
const FinancingKey = "warrant (financing)"

// Financing is the purpose of a warrant issued in a financing.
const Financing = "financing"

// Summarize fills the sums of m from its tranches: each grant's total,
// share-weighted value per share and simplified-method total, m.Totals of
// the share-based awards and m.FinancingTotals of the financing warrants,
// and the subtotals by instrument (the financing warrants a group of their
// own) and by grant month (share-based awards only). The builder calls it
// once after the tranches are valued; the renderers only read what it
// wrote.
func Summarize(m *Model) {
	for i := range m.Grants {
		sumGrant(&m.Grants[i])
	}
	sumGroups(m)
}

// sumGrant is Summarize's part within grant g: each tranche's total, and
// the grant's totals and value per share.
func sumGrant(g *Grant) {
	g.FairValueTotal, g.BSMSimplifiedTotal = 0, 0
	var shares int64
	for j := range g.Tranches {
		t := &g.Tranches[j]
		t.FairValueTotal = t.FairValuePerShare * float64(t.Shares)
		g.FairValueTotal += t.FairValueTotal
		g.BSMSimplifiedTotal += t.BSMSimplifiedValue * float64(t.Shares)
		shares += t.Shares
	}
	g.FairValuePerShare = 0
	if shares > 0 {
		g.FairValuePerShare = g.FairValueTotal / float64(shares)
	}
}

// sumGroups is Summarize's part over the grants, in grant order, once
// sumGrant has summed each.
func sumGroups(m *Model) {
	m.Totals, m.FinancingTotals = Totals{}, Totals{}
	inst := map[string]*Group{}
	month := map[string]*Group{}
	add := func(set map[string]*Group, key []byte, g *Grant) {
		s := set[string(key)]
		if s == nil {
			s = &Group{Key: string(key), Financing: g.Purpose == Financing}
			set[s.Key] = s
		}
		s.Grants++
		s.Tranches += len(g.Tranches)
		s.Shares += g.Shares
		s.FairValueTotal += g.FairValueTotal
		s.BSMSimplifiedTotal += g.BSMSimplifiedTotal
	}
	var key [32]byte
	for i := range m.Grants {
		g := &m.Grants[i]
		tot := &m.Totals
		if g.Purpose == Financing {
			tot = &m.FinancingTotals
			add(inst, append(key[:0], FinancingKey...), g)
		} else {
			add(inst, append(key[:0], g.Instrument...), g)
			add(month, appendMonth(key[:0], g.GrantDate), g)
		}
		tot.Grants++
		tot.Tranches += len(g.Tranches)
		tot.Shares += g.Shares
		tot.FairValueTotal += g.FairValueTotal
		tot.BSMSimplifiedTotal += g.BSMSimplifiedTotal
	}
	m.ByInstrument = sortedGroups(inst)
	m.ByGrantMonth = sortedGroups(month)
}

// appendMonth appends d's month, d.Time().Format("2006-01"), to b.
func appendMonth(b []byte, d Date) []byte {
	n := len(b)
	if b = d.AppendISO(b); len(b)-n == len("2006-01-02") {
		return b[:n+len("2006-01")]
	}
	return d.Time().AppendFormat(b[:n], "2006-01")
}

func sortedGroups(set map[string]*Group) []Group {
	out := make([]Group, 0, len(set))
	for _, g := range set {
		if g.Shares > 0 {
			g.FairValuePerShare = g.FairValueTotal / float64(g.Shares)
		}
		out = append(out, *g)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Key < out[j].Key })
	return out
}

// Run is what a Model says about the run itself, given by the caller: the
// tool, the input and its hash, and the warnings found before valuing (the
// schedule's, then the grants left out).
type Run struct {
	Tool     Tool
	Input    Input
	Warnings []string
}

// sensitivityEveryGrant is Settings.Sensitivities when every grant was
// revalued in each case; the memo says so in its own words already.
const sensitivityEveryGrant = "Each case revalues every grant with the input moved for all of them."

// Build's work per grant runs on all cores in chunks of buildChunk
// consecutive grants (internal/cores), each chunk writing only its own
// grants' places in the Model, from buildMinParallel grants on; a smaller
// ledger (the sample, most tests) is laid out in one plain loop. Tests
// change both.
var (
	buildChunk       = 64
	buildMinParallel = 256
)

// eachGrant calls work on chunks [lo, hi) of consecutive grants that
// cover [0, n), on all cores if n is large enough.
func eachGrant(n int, work func(lo, hi int)) {
	if n < buildMinParallel {
		work(0, n)
		return
	}
	cores.Chunks(n, buildChunk, func(lo, hi int) error {
		work(lo, hi)
		return nil
	})
}

// Build lays the schedule s, its valuation v and the books b of its close
// into a Model: every grant with its inputs, their provenance and tranche
// results, the sums (Summarize), the sensitivity cases, the convergence
// study, the Monte Carlo check and the period's expense attribution,
// journal and disclosures. It values and books nothing. A large ledger's
// grants are laid out on all cores, and the Model is the same to the bit
// on any number of them (TestBuildOnAnyCores).
//
// Build takes v and b over: as it lays each grant out it drops that
// grant's per-tranche detail from them (v's tranches, terms, results and
// rates; b's tranche expense), so that a large ledger is not held twice,
// once as the valuation and the books and once as the Model. Read what
// you need of v and b before calling Build.
func Build(s *grants.Schedule, v *pricing.Valuation, b *accounting.Books, run Run) (*Model, error) {
	m := &Model{SchemaVersion: SchemaVersion, Tool: run.Tool, Input: run.Input, Warnings: append(make([]string, 0, len(run.Warnings)), run.Warnings...)}
	m.Company = Company{Name: s.Company.Name, Currency: s.Company.Currency, SharesOutstanding: s.Company.SharesOutstanding,
		Client: s.Company.Client, Preparer: s.Company.Preparer, PaperSize: s.Company.PaperSize}
	m.ValuationDate = DateOf(s.Company.ValuationDate)
	m.PeriodStart = DateOf(s.Company.PeriodStart)
	m.Settings.Steps = "auto"
	if n := v.Options.Lattice.Steps; n > 0 {
		m.Settings.Steps = strconv.Itoa(n) + " (raw lattice)"
	}
	policy := s.InForce()
	m.Settings.Attribution = string(policy.Attribution)
	m.Settings.Forfeitures = string(policy.Forfeitures)
	m.Settings.Framework = string(grants.ASC718)
	if policy.Framework != "" {
		m.Settings.Framework = string(policy.Framework)
	}
	m.Caution = Caution
	// Each grant is laid out on its own, on all cores (eachGrant): its
	// Grant, its tranches, its own sums and then its assumption rows, each
	// written in its place in the Model. What adds the grants up
	// (sumGroups) runs after, here, in grant order.
	n := len(v.Grants)
	if n > 0 {
		m.Grants = make([]Grant, n)
	}
	var books map[string]*accounting.GrantExpense
	for i := range v.Grants {
		if v.Grants[i].Inputs.Condition != nil {
			books = booksByGrant(b)
			break
		}
	}
	// rows[i+1] is the number of assumption rows of grant i, and then,
	// summed, where they end.
	rows := make([]int, n+1)
	eachGrant(n, func(lo, hi int) {
		k := 0
		for i := lo; i < hi; i++ {
			k += len(v.Grants[i].Inputs.Tranches)
		}
		slab := make([]Tranche, k) // the tranches of the chunk's grants, in one piece
		for i := lo; i < hi; i++ {
			gv, g := &v.Grants[i], &m.Grants[i]
			k := len(gv.Inputs.Tranches)
			grantOf(g, gv, slab[:k:k])
			slab = slab[k:]
			if gv.Inputs.Condition != nil {
				g.Condition = grantCondition(gv, books[gv.Inputs.Grant.ID])
			}
			sumGrant(g)
			rows[i+1] = grantAssumptionCount(gv)
			releaseGrant(gv)
		}
	})
	// The assumptions once the valuation's tranche detail is let go, and
	// sized once: made beside it, or grown by appending, a large ledger's
	// would raise the peak of the run.
	company := companyAssumptions(s)
	rows[0] = len(company)
	for i := 1; i <= n; i++ {
		rows[i] += rows[i-1]
	}
	m.Assumptions = make([]Assumption, rows[n])
	copy(m.Assumptions, company)
	eachGrant(n, func(lo, hi int) {
		texts := inputTexts{}
		for i := lo; i < hi; i++ {
			at, end := rows[i], rows[i+1]
			if got := appendGrantAssumptions(m.Assumptions[at:at:end], &v.Grants[i], len(m.Grants[i].Tranches), texts); len(got) != end-at {
				panic(fmt.Sprintf("report: grant %s has %d assumption rows, %d counted", v.Grants[i].Inputs.Grant.ID, len(got), end-at))
			}
		}
	})
	sumGroups(m)
	if v.SensitivitySample < len(v.Grants) {
		m.Settings.Sensitivities = fmt.Sprintf("Each case revalues an evenly spaced sample of %d of the %d grants; its relative change is applied to the total fair value of all grants.", v.SensitivitySample, len(v.Grants))
	} else {
		m.Settings.Sensitivities = sensitivityEveryGrant
	}
	for _, c := range v.Sensitivity {
		sens := Sensitivity{Input: c.Input, Label: c.Label, Unit: c.Unit}
		for _, p := range c.Points {
			sens.Points = append(sens.Points, SensitivityPoint{Shift: p.Shift, Label: p.Label, FairValueTotal: p.FairValueTotal, Change: p.Change, SampleFairValueTotal: p.SampleTotal})
		}
		m.Sensitivity = append(m.Sensitivity, sens)
	}
	if c := v.Convergence; c != nil {
		mc := &Convergence{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex,
			AutoValue: c.Auto.Value, AutoError: c.Auto.ErrorEstimate, AutoSteps: c.Auto.Steps}
		for _, p := range c.Points {
			mc.Points = append(mc.Points, ConvergencePoint{Steps: p.Steps, Value: p.Value})
		}
		m.Convergence = mc
	}
	switch n := len(v.MonteCarlo); {
	case n > 0:
		c := v.MonteCarlo
		tranches := "1 tranche"
		if n > 1 {
			tranches = count(n) + " tranches, the largest of each of " + count(n) + " grants spread over instruments and grant months"
		}
		seeds := fmt.Sprintf("seed %d", c[0].Seed)
		if n > 1 {
			seeds = fmt.Sprintf("seeds %d to %d", c[0].Seed, c[n-1].Seed)
		}
		m.Settings.MonteCarlo = fmt.Sprintf("%s paths per tranche (antithetic pairs, control variate), weekly grid with continuous barrier monitoring, %s, on %s.",
			count(c[0].Result.Steps), seeds, tranches)
		if v.MonteCarloErr != nil {
			m.Settings.MonteCarlo += " Left out: " + v.MonteCarloErr.Error() + "."
		}
		for _, c := range c {
			m.CrossChecks = append(m.CrossChecks, CrossCheck{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex,
				Method: "mc", Lattice: c.Lattice, LatticeError: c.LatticeError, Value: c.Result.Value, StdErr: c.Result.ErrorEstimate,
				Paths: c.Result.Steps, Seed: c.Seed, Z: c.Z})
		}
	case v.MonteCarloErr != nil:
		m.Settings.MonteCarlo = "Monte Carlo check not run: " + v.MonteCarloErr.Error()
	case v.MonteCarloRational:
		m.Settings.MonteCarlo = "No Monte Carlo check: every lattice-valued award allows rational early exercise, which the simulation does not model."
	}
	m.Expense = expenseModel(b)
	m.Modifications = modificationsModel(s, v, b)
	conditionsModel(m, s, v)
	if r := b.Reconciliation; r != nil {
		m.Prior = priorModel(r.Prior)
		m.Reconciliation = reconciliationModel(r, v)
	}
	m.Warnings = append(m.Warnings, b.Warnings...)
	m.Warnings = append(m.Warnings, v.Warnings...)
	m.Warnings = append(m.Warnings, MemoTextWarnings(s, run.Input.Path)...)
	return m, nil
}

// releaseGrant drops what the Model now holds of grant gv's tranches.
func releaseGrant(gv *pricing.GrantValue) {
	gv.Inputs.Tranches, gv.Inputs.Terms = nil, nil
	gv.Results, gv.BSM = nil, nil
	gv.RiskFreeRate, gv.SimplifiedRate, gv.ExpectedTermRate = nil, nil, nil
	gv.ExpiryYears, gv.VestYears = nil, nil
}

// booksByGrant are the books' grants by ID (none when b has no expense).
func booksByGrant(b *accounting.Books) map[string]*accounting.GrantExpense {
	books := map[string]*accounting.GrantExpense{}
	if b != nil && b.Expense != nil {
		for i := range b.Expense.Grants {
			books[b.Expense.Grants[i].GrantID] = &b.Expense.Grants[i]
		}
	}
	return books
}

// grantOf lays grant gv out into rg, its tranches into tranches (one
// per tranche of gv, which rg keeps).
func grantOf(rg *Grant, gv *pricing.GrantValue, tranches []Tranche) {
	in := &gv.Inputs
	g := &in.Grant
	*rg = Grant{
		ID: g.ID, Holder: g.Holder, Instrument: string(g.Instrument), Purpose: string(g.Purpose),
		GrantDate: DateOf(g.GrantDate), MeasurementDate: DateOf(in.MeasurementDate),
		ExpiryDate: DateOf(g.ExpiryDate), Shares: g.Shares, Strike: g.Strike,
		SharePrice: in.SharePrice.Value, Volatility: in.Volatility.Value, RiskFreeRate: in.RiskFreeRate.Value,
		DividendYield: in.DividendYield.Value, ExerciseMultiple: in.ExerciseMultiple.Value,
		PostVestingExitRate: in.ExitRate.Value, Method: "lattice", ValueStatus: string(gv.Status), ValuationKey: gv.Key,
	}
	if rg.Purpose == "" {
		rg.Purpose = string(grants.Compensation)
	}
	if g.HireDate.After(g.GrantDate) {
		rg.HireDate = DateOf(g.HireDate)
	}
	switch g.Instrument {
	case grants.RSU:
		rg.Method = "rsu"
	case grants.Warrant:
		rg.Classification, rg.ExerciseStyle = string(g.Classification), string(g.ExerciseStyle)
		if d := gv.Dilution; d != nil {
			method := "N/(N+W) factor, new issue"
			if d.PriceReflectsWarrants {
				method = "Galai-Schneller"
			}
			rg.Method = "lattice, diluted"
			rg.Dilution = &Dilution{SharesOutstanding: d.SharesOutstanding, Warrants: d.Warrants,
				PriceReflectsWarrants: d.PriceReflectsWarrants, Method: method, UndilutedValue: gv.UndilutedValue}
		}
	}
	for k := range in.Tranches {
		t := &in.Tranches[k]
		expiry, vest := gv.TermYears(k)
		r, b := &gv.Results[k], &gv.BSM[k]
		tranches[k] = Tranche{Index: t.Index, VestDate: DateOf(t.VestDate), Shares: t.Shares,
			YearsToExpiry: expiry, YearsToVest: vest,
			FairValuePerShare: r.Value, ErrorEstimate: r.ErrorEstimate, ExpectedTermYears: r.ExpectedTermYears, Steps: r.Steps,
			BSMSimplifiedValue: b.Value, SimplifiedTerm: b.ExpectedTermYears,
			RiskFreeRate: gv.RiskFreeRate[k], SimplifiedRate: gv.SimplifiedRate[k]}
	}
	rg.Tranches = tranches
}

func companyAssumptions(s *grants.Schedule) []Assumption {
	c, a := s.Company, s.Assumptions
	src := func(key string) string { return a.Sources[key] }
	cref := func(key string) string { return c.Refs[key].String() }
	aref := func(key string) string { return a.Refs[key].String() }
	day := func(t time.Time) string { return DateOf(t).String() }
	out := []Assumption{
		{Name: "company_name", Kind: KindText, Text: c.Name, Ref: cref("company_name")},
		{Name: "valuation_date", Kind: KindDate, Text: day(c.ValuationDate), Ref: cref("valuation_date")},
		{Name: "period_start", Kind: KindDate, Text: day(c.PeriodStart), Ref: cref("period_start")},
		{Name: "currency", Kind: KindText, Text: c.Currency, Ref: cref("currency")},
		{Name: "shares_outstanding", Kind: KindNumber, Value: c.SharesOutstanding, Text: strconv.FormatFloat(c.SharesOutstanding, 'f', -1, 64), Ref: cref("shares_outstanding")},
	}
	num := func(key, kind string, v float64) Assumption {
		return Assumption{Name: key, Kind: kind, Value: v, Text: strconv.FormatFloat(v, 'g', -1, 64), Ref: aref(key), Source: src(key)}
	}
	steps := "auto"
	if a.Steps > 0 {
		steps = strconv.Itoa(a.Steps)
	}
	framework := string(a.Framework)
	if framework == "" {
		framework = string(grants.ASC718)
	}
	out = append(out,
		num("volatility", KindPercent, a.Volatility),
		num("dividend_yield", KindPercent, a.DividendYield),
		num("exercise_multiple", KindNumber, a.ExerciseMultiple),
		num("post_vesting_exit_rate", KindPercent, a.PostVestingExitRate),
		num("pre_vesting_forfeiture_rate", KindPercent, a.PreVestingForfeitureRate),
		Assumption{Name: "attribution", Kind: KindText, Text: string(a.Attribution), Ref: aref("attribution"), Source: src("attribution")},
		Assumption{Name: "forfeitures", Kind: KindText, Text: string(a.Forfeitures), Ref: aref("forfeitures"), Source: src("forfeitures")},
		Assumption{Name: "steps", Kind: KindText, Text: steps, Ref: aref("steps"), Source: src("steps")},
		Assumption{Name: "framework", Kind: KindText, Text: framework, Ref: aref("framework"), Source: src("framework")},
	)
	for _, r := range a.Dated {
		row := Assumption{Name: r.Key, Kind: KindText, Text: r.Text, Ref: r.Ref.String(), Source: r.Source, EffectiveDate: DateOf(r.Effective)}
		switch r.Key {
		case "volatility", "dividend_yield", "post_vesting_exit_rate", "pre_vesting_forfeiture_rate":
			row.Kind, row.Value, row.Text = KindPercent, r.Value, strconv.FormatFloat(r.Value, 'g', -1, 64)
		case "exercise_multiple":
			row.Kind, row.Value, row.Text = KindNumber, r.Value, strconv.FormatFloat(r.Value, 'g', -1, 64)
		case "steps":
			row.Text = "auto"
			if r.Value > 0 {
				row.Text = strconv.FormatFloat(r.Value, 'f', 0, 64)
			}
		}
		out = append(out, row)
	}
	return out
}

// appendGrantAssumptions appends to out the inputs a grant of that many
// tranches was valued on, each with its cell and source text: straight
// into the model's rows, sized once, with no slice of the grant's own.
func appendGrantAssumptions(out []Assumption, gv *pricing.GrantValue, tranches int, texts inputTexts) []Assumption {
	in := &gv.Inputs
	g := &in.Grant
	ref := func(k string) string { return g.Refs[k].String() }
	out = append(out,
		Assumption{GrantID: g.ID, Name: "instrument", Kind: KindText, Text: string(g.Instrument), Ref: ref("instrument"), Term: true},
		Assumption{GrantID: g.ID, Name: "purpose", Kind: KindText, Text: purposeOf(g), Ref: ref("purpose"), Source: purposeNote(g), Term: true},
		Assumption{GrantID: g.ID, Name: "grant_date", Kind: KindDate, Text: dayText(g.GrantDate), Ref: ref("grant_date"), Term: true},
		Assumption{GrantID: g.ID, Name: "measurement_date", Kind: KindDate, Text: dayText(in.MeasurementDate), Source: measurementNote(g), Term: true},
		Assumption{GrantID: g.ID, Name: "shares", Kind: KindNumber, Value: float64(g.Shares), Text: strconv.FormatInt(g.Shares, 10), Ref: ref("shares"), Term: true})
	if g.Instrument != grants.RSU {
		out = append(out,
			Assumption{GrantID: g.ID, Name: "strike", Kind: KindMoney, Value: g.Strike, Text: strconv.FormatFloat(g.Strike, 'g', -1, 64), Ref: ref("strike"), Term: true},
			Assumption{GrantID: g.ID, Name: "expiry_date", Kind: KindDate, Text: dayText(g.ExpiryDate), Ref: firstRef(g.Refs, "expiry_date", "term_years"), Term: true})
	}
	if g.HireDate.After(g.GrantDate) {
		out = append(out, Assumption{GrantID: g.ID, Name: "hire_date", Kind: KindDate, Text: dayText(g.HireDate), Ref: ref("hire_date"),
			Source: "service, and the cost, start on the hire date", Term: true})
	}
	// "%d tranches from %s" and "%d months, cliff %d, every %d", written
	// out without fmt's boxing of each argument.
	var buf [64]byte
	text := append(strconv.AppendInt(buf[:0], int64(tranches), 10), " tranches from "...)
	text = DateOf(g.VestStart).AppendISO(text)
	source := append(strconv.AppendInt(text[len(text):], int64(g.VestMonths), 10), " months, cliff "...)
	source = append(strconv.AppendInt(source, int64(g.CliffMonths), 10), ", every "...)
	source = strconv.AppendInt(source, int64(g.VestEvery), 10)
	out = append(out, Assumption{GrantID: g.ID, Name: "vesting", Kind: KindText,
		Text: string(text), Ref: firstRef(g.Refs, "vest_months", "vest_start"), Source: string(source), Term: true})
	for _, n := range in.Named() {
		t := texts.of(n.Key, n.Source)
		out = append(out, Assumption{GrantID: g.ID, Name: n.Key, Kind: t.kind, Value: n.Source.Value, Text: t.text, Ref: t.refText,
			Source: n.Source.Text, EffectiveDate: DateOf(n.Source.Since)})
	}
	return out
}

// inputTexts are the texts of the inputs of the grant laid out last, by
// key, for the next one: neighbouring grants share most of their inputs
// (the Assumptions in force, the period's share price, a curve's cells),
// and a value or a cell met again is then neither formatted nor
// allocated again. One per chunk of grants (the texts are the same
// whatever the chunk).
type inputTexts map[string]*inputText

type inputText struct {
	kind    string // inputKinds[key]
	value   float64
	text    string // strconv.FormatFloat(value, 'g', -1, 64)
	ref     grants.Ref
	refText string // ref.String()
}

// of is the texts of input key with source s.
func (ts inputTexts) of(key string, s *grants.Source) *inputText {
	t := ts[key]
	if t == nil {
		t = &inputText{kind: inputKinds[key], value: s.Value, text: strconv.FormatFloat(s.Value, 'g', -1, 64), ref: s.Ref, refText: s.Ref.String()}
		ts[key] = t
		return t
	}
	if math.Float64bits(s.Value) != math.Float64bits(t.value) {
		t.value, t.text = s.Value, strconv.FormatFloat(s.Value, 'g', -1, 64)
	}
	if s.Ref != t.ref {
		t.ref, t.refText = s.Ref, s.Ref.String()
	}
	return t
}

// dayText is DateOf(t).String() in one allocation rather than two.
func dayText(t time.Time) string {
	var buf [16]byte
	return string(DateOf(t).AppendISO(buf[:0]))
}

// grantAssumptionCount is the number of rows appendGrantAssumptions
// appends for gv, without making them.
func grantAssumptionCount(gv *pricing.GrantValue) int {
	g := gv.Inputs.Grant
	n := 6 + len(gv.Inputs.Named()) // the terms always given, vesting, the inputs
	if g.Instrument != grants.RSU {
		n += 2 // strike, expiry_date
	}
	if g.HireDate.After(g.GrantDate) {
		n++
	}
	return n
}

func purposeOf(g *grants.Grant) string {
	if g.Purpose == "" {
		return string(grants.Compensation)
	}
	return string(g.Purpose)
}

func purposeNote(g *grants.Grant) string {
	if g.IsFinancing() {
		return "issued in a financing: not share-based payment, kept apart from compensation"
	}
	return "share-based payment for services"
}

// inputKinds is the kind of each valuation input of grants.Inputs.Named.
var inputKinds = map[string]string{"share_price": KindMoney, "volatility": KindPercent, "dividend_yield": KindPercent,
	"exercise_multiple": KindNumber, "post_vesting_exit_rate": KindPercent, "risk_free_rate": KindPercent}

func measurementNote(g *grants.Grant) string {
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
