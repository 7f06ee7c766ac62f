package pricing

import (
	"math"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"grantworth/grants"
	"grantworth/valuation"
)

// The sample valued once for the tests of this file.
var sampleValued = sync.OnceValues(func() (*Valuation, error) {
	s, _, err := grants.ReadFile(filepath.Join("..", "..", "sample", "tarnwick.xlsx"))
	if err != nil {
		return nil, err
	}
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		return nil, errs[0]
	}
	return Value(s, ins, Options{})
})

func valuedSample(t *testing.T) *Valuation {
	t.Helper()
	v, err := sampleValued()
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// Fiscal quarter ends (common practice) from the grant's quarter up to
// before the period end, at most MaxRemeasurements of the latest, and the
// days of exercises after the grant and before the period end, on which
// the liability is remeasured before it is reclassified (IFRS 2.30;
// ASC 815-40-35): each day once, in order.
func TestRemeasurementDates(t *testing.T) {
	cases := []struct {
		grant, end string
		want       []string
		exercised  []string
	}{
		{"2025-02-10", "2026-09-30", []string{"2025-03-31", "2025-06-30", "2025-09-30", "2025-12-31", "2026-03-31", "2026-06-30", "2026-08-14"},
			[]string{"2026-08-14", "2026-08-14", "2026-09-30", "2025-02-10"}},
		{"2025-02-10", "2025-09-30", []string{"2025-03-31", "2025-05-02", "2025-06-30"}, []string{"2025-06-30", "2025-05-02"}},
		{"2025-02-10", "2025-09-30", []string{"2025-03-31", "2025-06-30"}, nil},
		{"2025-03-31", "2025-09-30", []string{"2025-03-31", "2025-06-30"}, nil},
		{"2025-07-01", "2025-09-30", nil, nil},
		{"2025-11-15", "2025-12-31", nil, nil},
		{"2025-12-31", "2026-03-31", []string{"2025-12-31"}, nil},
		{"2019-01-01", "2025-09-30", []string{"2022-09-30", "2022-12-31", "2023-03-31", "2023-06-30", "2023-09-30", "2023-12-31",
			"2024-03-31", "2024-06-30", "2024-09-30", "2024-12-31", "2025-03-31", "2025-06-30"}, nil},
	}
	for _, c := range cases {
		var got []string
		var ex []time.Time
		for _, e := range c.exercised {
			ex = append(ex, ymd(e))
		}
		for _, q := range RemeasurementDates(grants.FiscalCalendar{}, ymd(c.grant), ymd(c.end), ex) {
			got = append(got, q.Format(time.DateOnly))
		}
		if strings.Join(got, " ") != strings.Join(c.want, " ") {
			t.Errorf("RemeasurementDates(%s, %s) = %v, want %v", c.grant, c.end, got, c.want)
		}
	}
	// A year ending in January: its quarter ends are 30 April, 31 July,
	// 31 October and 31 January.
	var got []string
	for _, q := range RemeasurementDates(grants.FiscalCalendar{YearEnd: time.January}, ymd("2025-02-10"), ymd("2025-10-31"), nil) {
		got = append(got, q.Format(time.DateOnly))
	}
	if strings.Join(got, " ") != "2025-04-30 2025-07-31" {
		t.Errorf("January year: %v, want 2025-04-30 2025-07-31", got)
	}
}

// Jobs equal bit for bit are valued once; any difference in a number that
// enters the lattice keeps them apart.
func TestDedupJobs(t *testing.T) {
	c, err := valuation.NewCurve([]valuation.CurvePoint{{Tenor: 1, Rate: 0.04}, {Tenor: 10, Rate: 0.042}})
	if err != nil {
		t.Fatal(err)
	}
	c2, err := valuation.NewCurve([]valuation.CurvePoint{{Tenor: 1, Rate: 0.04}, {Tenor: 10, Rate: 0.0421}})
	if err != nil {
		t.Fatal(err)
	}
	base := valuation.Job{Terms: valuation.Terms{Strike: 2, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.08},
		VestYears: []float64{1, 2, 3, 4}, Market: valuation.Market{Spot: 2, VolAnnual: 0.5, Curve: c}}
	vol := base
	vol.Market.VolAnnual = math.Nextafter(0.5, 1)
	vest := base
	vest.VestYears = []float64{1, 2, 3}
	curve := base
	curve.Market.Curve = c2
	steps := base
	steps.Options.Steps = 200
	sameCurve := base
	sameCurve.Market.Curve, _ = valuation.NewCurve([]valuation.CurvePoint{{Tenor: 1, Rate: 0.04}, {Tenor: 10, Rate: 0.042}})
	jobs := []valuation.Job{base, vol, base, vest, curve, steps, sameCurve}
	uniq, index := dedupJobs(jobs)
	want := []int{0, 1, 0, 2, 3, 4, 0}
	if len(uniq) != 5 {
		t.Errorf("%d distinct jobs, want 5", len(uniq))
	}
	for i := range want {
		if index[i] != want[i] {
			t.Errorf("job %d → %d, want %d (index %v)", i, index[i], want[i], index)
		}
	}
}

// Value on the sample: a result per tranche, totals that add up, and the
// extra runs move the way option values must.
func TestValueSample(t *testing.T) {
	v := valuedSample(t)
	var sum float64
	for _, gv := range v.Grants {
		g := gv.Inputs.Grant
		if len(gv.Results) != len(gv.Inputs.Tranches) || len(gv.BSM) != len(gv.Inputs.Tranches) {
			t.Fatalf("grant %s: %d results, %d BSM for %d tranches", g.ID, len(gv.Results), len(gv.BSM), len(gv.Inputs.Tranches))
		}
		limit := gv.Inputs.Market.Spot
		if c := gv.Inputs.Condition; c != nil && c.TSR != nil {
			limit *= c.TSR.Award.Payout.Max() // units paying up to that many shares each
		}
		for k, r := range gv.Results {
			if !(r.Value > 0) || r.Value > limit {
				t.Errorf("grant %s tranche %d: value %g outside (0, spot %g]", g.ID, k+1, r.Value, gv.Inputs.Market.Spot)
			}
		}
		if (g.Instrument == grants.Warrant) != (gv.Dilution != nil) {
			t.Errorf("grant %s (%s): dilution %+v", g.ID, g.Instrument, gv.Dilution)
		}
		sum += gv.FairValueTotal()
	}
	if sum != v.FairValueTotal {
		t.Errorf("FairValueTotal %v, sum of grants %v", v.FairValueTotal, sum)
	}
	if v.SensitivitySample != len(v.Grants) {
		t.Errorf("sensitivity sample %d of %d grants; a small ledger is revalued whole", v.SensitivitySample, len(v.Grants))
	}
	// grants.Option value rises with volatility (positive vega: common practice).
	for _, c := range v.Sensitivity {
		if c.Input != "volatility" {
			continue
		}
		for j := 1; j < len(c.Points); j++ {
			if !(c.Points[j].FairValueTotal > c.Points[j-1].FairValueTotal) {
				t.Errorf("volatility %s → %s: total %v → %v, want a rise", c.Points[j-1].Label, c.Points[j].Label, c.Points[j-1].FairValueTotal, c.Points[j].FairValueTotal)
			}
		}
	}
	// The raw lattice converges: its values over the four finest step
	// counts spread less than over the four coarsest (an identity of a
	// convergent sequence, no citation needed).
	c := v.Convergence
	if c == nil || len(c.Points) != len(ConvergenceSteps) {
		t.Fatalf("convergence %+v", c)
	}
	spread := func(ps []ConvergencePoint) float64 {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, p := range ps {
			lo, hi = math.Min(lo, p.Value), math.Max(hi, p.Value)
		}
		return hi - lo
	}
	if first, last := spread(c.Points[:4]), spread(c.Points[len(c.Points)-4:]); !(last < first) {
		t.Errorf("convergence: spread of the finest four %v not below the coarsest four %v (%+v)", last, first, c.Points)
	}
	// Every sampled tranche's simulation agrees with the lattice: the
	// simulation is an independent method for the same model, so z (the
	// difference over the combined error) is about standard normal and
	// |z| < MonteCarloZLimit (common practice for a Monte Carlo check; the
	// weekly grid adds a small bias, well inside it).
	if len(v.MonteCarlo) == 0 && !v.MonteCarloRational && v.MonteCarloErr == nil {
		t.Error("no Monte Carlo check and no reason why")
	}
	for _, mc := range v.MonteCarlo {
		if !(math.Abs(mc.Z) < MonteCarloZLimit) {
			t.Errorf("Monte Carlo grant %s tranche %d (seed %d): %v ± %v, lattice %v ± %v, z %v, limit %v",
				mc.GrantID, mc.TrancheIndex, mc.Seed, mc.Result.Value, mc.Result.ErrorEstimate, mc.Lattice, mc.LatticeError, mc.Z, MonteCarloZLimit)
		}
	}
	// Each liability warrant is revalued at its grant date and at the
	// past quarter ends.
	n := 0
	for _, gv := range v.Grants {
		g := gv.Inputs.Grant
		if g.Instrument != grants.Warrant || g.Classification != grants.Liability {
			continue
		}
		n++
		rs := v.Revaluations[g.ID]
		if len(rs) == 0 || !rs[0].Date.Equal(g.GrantDate) {
			t.Fatalf("grant %s revaluations %+v", g.ID, rs)
		}
		want := append([]time.Time{g.GrantDate}, RemeasurementDates(grants.FiscalCalendar{}, g.GrantDate, ymd("2026-09-30"), nil)...)
		if len(rs) != len(want) {
			t.Errorf("grant %s: %d revaluations, want %d", g.ID, len(rs), len(want))
		}
		for j, r := range rs {
			if r.Err != nil || len(r.Values) != len(gv.Inputs.Tranches) || !r.Date.Equal(want[j]) {
				t.Errorf("grant %s at %s: %v, %d values", g.ID, r.Date.Format(time.DateOnly), r.Err, len(r.Values))
			}
		}
	}
	if n == 0 {
		t.Error("the sample has no liability-classified warrant to revalue")
	}
}

// The Monte Carlo sample of the sample company: up to MonteCarloSample
// tranches of distinct option or warrant grants the simulation can value,
// in ledger order, each seed its own, z consistent with its parts, no
// warning raised; and a second run gives the same numbers bit for bit.
func TestMonteCarloSampleOfSample(t *testing.T) {
	v := valuedSample(t)
	if n := len(v.MonteCarlo); n < 2 || n > MonteCarloSample {
		t.Fatalf("%d Monte Carlo checks, want 2 to %d (err %v)", n, MonteCarloSample, v.MonteCarloErr)
	}
	index := map[string]int{}
	for i, gv := range v.Grants {
		index[gv.Inputs.Grant.ID] = i
	}
	seeds := map[uint64]bool{}
	last := -1
	for _, c := range v.MonteCarlo {
		i, ok := index[c.GrantID]
		if !ok || i <= last {
			t.Errorf("check of grant %s (index %d) out of ledger order or repeated after index %d", c.GrantID, i, last)
		}
		last = i
		t.Logf("grant %s tranche %d (%s): lattice %.6f ± %.6f, Monte Carlo %.6f ± %.6f (seed %d), z %+.2f",
			c.GrantID, c.TrancheIndex, c.Instrument, c.Lattice, c.LatticeError, c.Result.Value, c.Result.ErrorEstimate, c.Seed, c.Z)
		gv := &v.Grants[i]
		if inst := gv.Inputs.Grant.Instrument; inst == grants.RSU || !simulable(mcTerms(gv, c.TrancheIndex-1)) {
			t.Errorf("grant %s tranche %d (%s) cannot be simulated", c.GrantID, c.TrancheIndex, inst)
		}
		if seeds[c.Seed] {
			t.Errorf("seed %d used twice", c.Seed)
		}
		seeds[c.Seed] = true
		if c.Result.Steps != MonteCarloPaths || !(c.Result.ErrorEstimate > 0) {
			t.Errorf("grant %s: %d paths, standard error %v", c.GrantID, c.Result.Steps, c.Result.ErrorEstimate)
		}
		if want := (c.Result.Value - c.Lattice) / math.Hypot(c.Result.ErrorEstimate, c.LatticeError); c.Z != want {
			t.Errorf("grant %s: z %v, want %v", c.GrantID, c.Z, want)
		}
	}
	for _, w := range v.Warnings {
		if strings.Contains(w, "Monte Carlo") {
			t.Errorf("unexpected warning %q", w)
		}
	}
	again := &Valuation{Grants: v.Grants}
	p := &pricer{}
	if err := p.monteCarlo(again); err != nil {
		t.Fatal(err)
	}
	if len(again.MonteCarlo) != len(v.MonteCarlo) {
		t.Fatalf("rerun: %d checks, first run %d", len(again.MonteCarlo), len(v.MonteCarlo))
	}
	for j := range again.MonteCarlo {
		if again.MonteCarlo[j] != v.MonteCarlo[j] {
			t.Errorf("rerun check %d: %+v, first run %+v", j, again.MonteCarlo[j], v.MonteCarlo[j])
		}
	}
}

// The sample's picks spread: each instrument first, then new grant
// months, then size; RSUs and rational warrants never; at most
// MonteCarloSample picks; ledger order.
func TestMonteCarloSampleSpread(t *testing.T) {
	mk := func(inst grants.Instrument, month int, fv float64, rational bool) GrantValue {
		return GrantValue{
			Inputs: grants.Inputs{
				Grant:    grants.Grant{Instrument: inst, GrantDate: time.Date(2024, time.Month(month), 15, 0, 0, 0, 0, time.UTC)},
				Tranches: []grants.Tranche{{Index: 1, Shares: 100}, {Index: 2, Shares: 100}},
				Terms:    []valuation.Terms{{YearsToExpiry: 10, YearsToVest: 1, Rational: rational}, {YearsToExpiry: 10, YearsToVest: 2, Rational: rational}},
			},
			Results: []valuation.Result{{Value: fv}, {Value: fv * 1.1}},
		}
	}
	var gs []GrantValue
	for i := 0; i < 12; i++ { // options: two per month over six months, growing in size
		gs = append(gs, mk(grants.Option, 1+i/2, float64(10+i), false))
	}
	euro := mk(grants.Warrant, 1, 0.5, false) // European: simulable
	euro.Inputs.Terms[0].European, euro.Inputs.Terms[1].European = true, true
	gs = append(gs, mk(grants.RSU, 7, 1000, false), mk(grants.Warrant, 1, 1, true), euro)
	picks, rational := monteCarloSample(gs)
	if !rational {
		t.Error("the rational warrant was not reported")
	}
	// Expected by hand from the rule: option month 6 (largest, i=11),
	// warrant (i=14), then one option in each of months 5 to 2 (i=9, 7,
	// 5, 3; month 1 is taken by the warrant), then the largest left
	// (i=10, 8).
	want := []mcPick{{3, 1}, {5, 1}, {7, 1}, {8, 1}, {9, 1}, {10, 1}, {11, 1}, {14, 1}}
	if len(picks) != len(want) {
		t.Fatalf("picks %v, want %v", picks, want)
	}
	for j := range want {
		if picks[j] != want[j] {
			t.Fatalf("picks %v, want %v", picks, want)
		}
	}
}

// A check beyond the limit warns, naming the grant and tranche; one
// within it does not.
func TestMonteCarloWarning(t *testing.T) {
	c := MonteCarloCheck{GrantID: "G-9", TrancheIndex: 2, Lattice: 1, LatticeError: 0.001, Result: valuation.Result{Value: 1.1, ErrorEstimate: 0.01}, Z: 9.95}
	if w := mcWarning(c); !strings.Contains(w, "grant G-9 tranche 2") || !strings.Contains(w, "z = 9.9") {
		t.Errorf("warning %q for %+v", w, c)
	}
	c.Z = -3.9
	if w := mcWarning(c); w != "" {
		t.Errorf("warning %q for |z| %v within %v", w, c.Z, MonteCarloZLimit)
	}
}

// Tranches whose automatic lattice value misses valuation.AutoTarget are
// listed in ledger order and warned of: an option's with the Monte Carlo
// value of the same terms beside it, a rational warrant's saying the
// simulation cannot value it; past MissedTargetWarnings one warning counts
// the rest. The sample itself has none.
func TestMissedTarget(t *testing.T) {
	v := valuedSample(t)
	if len(v.MissedTarget) != 0 {
		t.Errorf("sample: %d tranches missed the target: %+v", len(v.MissedTarget), v.MissedTarget)
	}
	for _, w := range v.Warnings {
		if strings.Contains(w, "accuracy target") {
			t.Errorf("sample: unexpected warning %q", w)
		}
	}
	gs := append([]GrantValue(nil), v.Grants...)
	opt, war := -1, -1
	for i, gv := range gs {
		switch g := gv.Inputs.Grant; {
		case opt < 0 && g.Instrument == grants.Option:
			opt = i
		case war < 0 && g.Instrument == grants.Warrant && !simulable(mcTerms(&gs[i], 0)):
			war = i
		}
	}
	if opt < 0 || war < 0 {
		t.Fatalf("the sample has no option (%d) or no rational warrant (%d)", opt, war)
	}
	for _, i := range []int{opt, war} {
		gs[i].Results = append([]valuation.Result(nil), gs[i].Results...)
		gs[i].Results[0].MissedTarget = true
	}
	got := &Valuation{Grants: gs}
	if err := (&pricer{}).missedTarget(got); err != nil {
		t.Fatal(err)
	}
	if len(got.MissedTarget) != 2 || len(got.Warnings) != 2 {
		t.Fatalf("%d listed, %d warnings, want 2 and 2: %+v %q", len(got.MissedTarget), len(got.Warnings), got.MissedTarget, got.Warnings)
	}
	o, w := got.MissedTarget[0], got.MissedTarget[1] // ledger order
	if war < opt {
		o, w = w, o
	}
	if o.GrantID != gs[opt].Inputs.Grant.ID || o.Check == nil || o.Rational || o.Check.Result.Steps != MonteCarloPaths || o.Check.Seed != MonteCarloSeed+MonteCarloSample {
		t.Errorf("option: %+v, check %+v", o, o.Check)
	}
	if w.GrantID != gs[war].Inputs.Grant.ID || w.Check != nil || !w.Rational {
		t.Errorf("rational warrant: %+v", w)
	}
	if ws := got.Warnings; !strings.HasPrefix(ws[0], "grant "+got.MissedTarget[0].GrantID+" tranche 1: the lattice gives") ||
		!strings.Contains(missedWarning(o), "Monte Carlo gives") || !strings.Contains(missedWarning(w), "does not value rational exercise") {
		t.Errorf("warnings %q", ws)
	}
	// Many: one warning each up to the limit, then one for the rest.
	many := make([]MissedTarget, MissedTargetWarnings+3)
	for j := range many {
		many[j] = w
	}
	ws := missedWarnings(many)
	if len(ws) != MissedTargetWarnings+1 || !strings.HasPrefix(ws[MissedTargetWarnings], "3 more tranches") {
		t.Errorf("%d warnings, last %q", len(ws), ws[len(ws)-1])
	}
}

func ymd(s string) time.Time {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		panic(err)
	}
	return t
}

// The ledger path (every grant's job batched, grants with the same inputs
// valued once, on all cores) gives each tranche the value its grant gets
// valued alone on the lattice, to 1e-12 relative (issue 15's accuracy
// bound; in fact bit for bit): batching saves work, never accuracy.
func TestLedgerPathEqualsEachGrantAlone(t *testing.T) {
	const rel = 1e-12
	// The sample's first options, each twice under another ID (a board's
	// batch of grants alike), so that the ledger path values some once
	// for two grants.
	s, _, err := grants.ReadFile(filepath.Join("..", "..", "sample", "tarnwick.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	var keep []grants.Grant
	for _, g := range s.Grants {
		if g.Instrument == grants.Option && len(keep) < 8 {
			twin := g
			twin.ID += "-TWIN"
			keep = append(keep, g, twin)
		}
	}
	s.Grants = keep
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs[0])
	}
	v, err := Value(s, ins, Options{})
	if err != nil {
		t.Fatal(err)
	}
	jobs, checked := map[string]bool{}, 0
	for _, gv := range v.Grants {
		in := gv.Inputs
		if in.Grant.Instrument != grants.Option || len(in.Terms) == 0 {
			continue
		}
		vest := make([]float64, len(in.Terms))
		for k, tm := range in.Terms {
			vest[k] = tm.YearsToVest
		}
		jobs[jobKey(valuation.Job{Terms: in.Terms[0], VestYears: vest, Market: in.Market})] = true
		alone, err := valuation.LatticeTranches(in.Terms[0], vest, in.Market, valuation.LatticeOptions{})
		if err != nil {
			t.Fatalf("grant %s: %v", in.Grant.ID, err)
		}
		for k, want := range alone {
			got := gv.Results[k]
			for _, c := range []struct {
				name      string
				got, want float64
			}{{"value", got.Value, want.Value}, {"error estimate", got.ErrorEstimate, want.ErrorEstimate},
				{"expected term", got.ExpectedTermYears, want.ExpectedTermYears}} {
				if math.Abs(c.got-c.want) > rel*math.Abs(c.want) {
					t.Errorf("grant %s tranche %d: %s %v on the ledger path, %v alone", in.Grant.ID, k+1, c.name, c.got, c.want)
				}
			}
			checked++
		}
	}
	if len(jobs) == 0 || 2*len(jobs) != len(v.Grants) {
		t.Fatalf("%d distinct jobs for %d grants, want one for each pair", len(jobs), len(v.Grants))
	}
	t.Logf("%d option tranches checked; %d distinct lattice jobs", checked, len(jobs))
}

// jobKey is the text of every number of job j that enters the lattice
// (keyBuf.appendJob): two jobs are valued alike when their keys are equal.
func jobKey(j valuation.Job) string {
	var kb keyBuf
	return string(kb.appendJob(nil, &j))
}
