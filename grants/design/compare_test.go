package design

import (
	"math"
	"testing"

	"grantworth/grants"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

var day = grantstest.Day

func f(x float64) *float64 { return &x }

// Tolerances.
const (
	exactRel = 1e-12 // closed forms and sums that must agree to rounding
	zMax     = 4     // simulated figures against their reference, in standard errors
)

// halvard is an invented company's market for designs: a share of 4.00 on
// 2026-06-30, designs granted on 2026-07-01.
func halvard() *grants.Schedule {
	return &grants.Schedule{
		Company: grants.Company{Name: "Halvard Optics, Inc.", ValuationDate: day("2026-06-30"), GrantDate: day("2026-07-01"), Currency: "USD", SharesOutstanding: 8_000_000},
		Assumptions: grants.Assumptions{Volatility: 0.5, ExerciseMultiple: 2.5, PostVestingExitRate: 0.1, PreVestingForfeitureRate: 0.1,
			Attribution: grants.Graded, Forfeitures: grants.Estimate},
		SharePrices: []grants.PricePoint{{Date: day("2026-06-30"), Price: 4, Row: 2}},
		Rates: []grants.RatePoint{
			{CurveDate: day("2026-06-30"), TenorYears: 1, Rate: 0.04, Compounding: "continuous", Row: 2},
			{CurveDate: day("2026-06-30"), TenorYears: 10, Rate: 0.042, Compounding: "continuous", Row: 3},
		},
	}
}

func option(name string, change func(*grants.Design)) grants.Design {
	d := grants.Design{Name: name, Instrument: grants.Option, Shares: 48_000, StrikePremium: f(0), TermYears: 10, VestMonths: 48, CliffMonths: 12, VestEvery: 1}
	if change != nil {
		change(&d)
	}
	return d
}

// fast are options for tests: fewer simulated paths.
var fast = Options{Outcomes: valuation.OutcomeOptions{Paths: 4000, Seed: 1}}

func compare(t *testing.T, s *grants.Schedule, ds ...grants.Design) []Result {
	t.Helper()
	s.Designs = ds
	if rep := grants.Validate(s); !rep.OK() {
		t.Fatalf("designs do not validate: %v", rep.Err())
	}
	c, err := Compare(s, fast)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range c.Designs {
		var sum float64
		for _, y := range r.ExpenseByYear {
			sum += y.Amount
		}
		// Expense by year adds up to the expected cost, whatever the design.
		if math.Abs(sum-r.ExpectedCostTotal) > exactRel*r.ExpectedCostTotal {
			t.Errorf("%s: expense by year adds up to %.6f, expected cost %.6f", r.Design.Name, sum, r.ExpectedCostTotal)
		}
		// The simulation values the same model as the lattice.
		if z := (r.Outcomes.Mean - r.FairValuePerShare) / math.Hypot(r.Outcomes.StdErr, r.ErrorEstimate); math.Abs(z) > zMax {
			t.Errorf("%s: simulated mean %.4f ± %.4f against fair value %.4f ± %.4f (z %.1f)", r.Design.Name, r.Outcomes.Mean, r.Outcomes.StdErr, r.FairValuePerShare, r.ErrorEstimate, z)
		}
	}
	return c.Designs
}

// A longer cliff lowers the expected cost and not the fair value. With no
// exercise multiple, no exits and no dividends an option is worth its
// Black-Scholes-Merton value whatever its vesting (early exercise of a call
// on a share paying no dividend is never optimal, Merton 1973), so the
// designs' fair values must agree within their error estimates; the later
// vesting of the cliff's shares leaves fewer holders there to vest them
// (common practice: the expected cost applies (1 − f)^V per tranche).
func TestLongerCliffLowersCostNotValue(t *testing.T) {
	s := halvard()
	s.Assumptions.ExerciseMultiple, s.Assumptions.PostVestingExitRate = 0, 0
	rs := compare(t, s,
		option("no cliff", func(d *grants.Design) { d.CliffMonths = 0 }),
		option("1y cliff", nil),
		option("2y cliff", func(d *grants.Design) { d.CliffMonths = 24 }))
	bsm := valuation.BSMCall(valuation.BSMInputs{Spot: 4, Strike: 4, Years: valuation.YearFrac(day("2026-07-01"), day("2036-07-01")), Rate: rs[0].Inputs.Market.Curve.Zero(valuation.YearFrac(day("2026-07-01"), day("2036-07-01"))), Vol: 0.5})
	for i, r := range rs {
		if math.Abs(r.FairValuePerShare-bsm) > r.ErrorEstimate+1e-9 {
			t.Errorf("%s: fair value %.6f, BSM %.6f, error estimate %.6f", r.Design.Name, r.FairValuePerShare, bsm, r.ErrorEstimate)
		}
		if i > 0 && !(r.ExpectedCostTotal < rs[i-1].ExpectedCostTotal) {
			t.Errorf("%s: expected cost %.2f not below %s's %.2f", r.Design.Name, r.ExpectedCostTotal, rs[i-1].Design.Name, rs[i-1].ExpectedCostTotal)
		}
	}
	// With the company's behaviour (multiple, exits) the cost still falls.
	rs = compare(t, halvard(), option("1y cliff", nil), option("2y cliff", func(d *grants.Design) { d.CliffMonths = 24 }))
	if !(rs[1].ExpectedCostTotal < rs[0].ExpectedCostTotal) {
		t.Errorf("with behaviour: 2y cliff costs %.2f, 1y cliff %.2f", rs[1].ExpectedCostTotal, rs[0].ExpectedCostTotal)
	}
}

// A premium strike lowers the fair value, and a longer term raises it
// (a call's value falls with its strike and, on a share paying no
// dividend, rises with its life: Merton 1973; the lattice keeps both).
func TestStrikeAndTermOrder(t *testing.T) {
	rs := compare(t, halvard(),
		option("discount 20%", func(d *grants.Design) { d.StrikePremium = f(-0.2) }),
		option("at the money", nil),
		option("premium 25%", func(d *grants.Design) { d.StrikePremium = f(0.25) }),
		option("premium 50%", func(d *grants.Design) { d.StrikePremium = f(0.5) }))
	for i := 1; i < len(rs); i++ {
		if !(rs[i].FairValuePerShare < rs[i-1].FairValuePerShare-rs[i].ErrorEstimate-rs[i-1].ErrorEstimate) {
			t.Errorf("%s: fair value %.4f not below %s's %.4f", rs[i].Design.Name, rs[i].FairValuePerShare, rs[i-1].Design.Name, rs[i-1].FairValuePerShare)
		}
		if !(rs[i].Grant.Strike > rs[i-1].Grant.Strike) {
			t.Errorf("strikes %v then %v", rs[i-1].Grant.Strike, rs[i].Grant.Strike)
		}
	}
	if rs[2].Grant.Strike != 4*1.25 {
		t.Errorf("a 25%% premium on 4.00 is a strike of %v", rs[2].Grant.Strike)
	}
	rs = compare(t, halvard(),
		option("5-year", func(d *grants.Design) { d.TermYears = 5 }),
		option("7-year", func(d *grants.Design) { d.TermYears = 7 }),
		option("10-year", nil))
	for i := 1; i < len(rs); i++ {
		if !(rs[i].FairValuePerShare > rs[i-1].FairValuePerShare+rs[i].ErrorEstimate+rs[i-1].ErrorEstimate) {
			t.Errorf("%s: fair value %.4f not above %s's %.4f", rs[i].Design.Name, rs[i].FairValuePerShare, rs[i-1].Design.Name, rs[i-1].FairValuePerShare)
		}
	}
}

// An RSU's fair value is S0·e^(−qV) for each tranche (the share less the
// dividends forgone before delivery; DESIGN §3), so the design's total is
// Σ shares·S0·e^(−qV) over its vest dates, counted here independently.
func TestRSUFairValue(t *testing.T) {
	s := halvard()
	s.Assumptions.DividendYield = 0.02
	rs := compare(t, s, grants.Design{Name: "units", Instrument: grants.RSU, Shares: 16_000, VestMonths: 48, CliffMonths: 12, VestEvery: 3})
	r := rs[0]
	gd := day("2026-07-01")
	var want float64
	prev := int64(0)
	for m := 12; m <= 48; m += 3 {
		cum := int64(16_000 * m / 48)
		want += float64(cum-prev) * 4 * math.Exp(-0.02*valuation.YearFrac(gd, grants.AddMonths(gd, m)))
		prev = cum
	}
	if math.Abs(r.FairValueTotal-want) > exactRel*want || r.ErrorEstimate != 0 {
		t.Errorf("RSU fair value %.10f (error %v), want %.10f", r.FairValueTotal, r.ErrorEstimate, want)
	}
	if r.BSMSimplified != r.FairValuePerShare || r.Outcomes.InTheMoney != 1 {
		t.Errorf("RSU: simplified BSM %v, fair value %v, in the money %v", r.BSMSimplified, r.FairValuePerShare, r.Outcomes.InTheMoney)
	}
}

// A design identical to a grant of the sample schedule gets the fair value
// the value command gives that grant, tranche for tranche.
func TestDesignMatchesScheduleGrant(t *testing.T) {
	s, rep, err := grants.ReadFile("../../sample/tarnwick.xlsx")
	if err != nil || !rep.OK() {
		t.Fatalf("%v %v", err, rep.Err())
	}
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	v, err := pricing.Value(s, ins, pricing.Options{})
	if err != nil {
		t.Fatal(err)
	}
	checked := 0
	for _, gv := range v.Grants {
		g := gv.Inputs.Grant
		// Options granted at the valuation's share price, expiring ten
		// years on, vesting from the grant date, with no events or custom
		// vesting: what a design can describe.
		if g.Instrument != grants.Option || len(s.EventsOf(g.ID)) > 0 || g.VestStart != g.GrantDate || g.ExpiryDate != grants.AddMonths(g.GrantDate, 120) ||
			len(gv.Inputs.Tranches) != len(s.Tranches(g)) || checked == 3 {
			continue
		}
		if custom := func() bool {
			for _, r := range s.Vesting {
				if r.GrantID == g.ID {
					return true
				}
			}
			return false
		}(); custom {
			continue
		}
		ds := &grants.Schedule{Company: s.Company, Assumptions: s.Assumptions, SharePrices: s.SharePrices, Rates: s.Rates}
		ds.Company.GrantDate = g.GrantDate
		ds.Designs = []grants.Design{{Name: g.ID, Instrument: grants.Option, Shares: g.Shares, Strike: f(g.Strike), TermYears: 10,
			VestMonths: g.VestMonths, CliffMonths: g.CliffMonths, VestEvery: g.VestEvery, PostVestingExitRate: g.PostVestingExitRate, Volatility: g.Volatility}}
		c, err := Compare(ds, fast)
		if err != nil {
			t.Fatal(err)
		}
		r := c.Designs[0]
		if len(r.Tranches) != len(gv.Results) {
			t.Fatalf("%s: %d tranches as a design, %d in the schedule", g.ID, len(r.Tranches), len(gv.Results))
		}
		for k := range r.Tranches {
			if r.Tranches[k].Value != gv.Results[k].Value {
				t.Errorf("%s tranche %d: design %.12f, value %.12f", g.ID, k+1, r.Tranches[k].Value, gv.Results[k].Value)
			}
		}
		if math.Abs(r.FairValueTotal-gv.FairValueTotal()) > exactRel*r.FairValueTotal {
			t.Errorf("%s: design total %.6f, value %.6f", g.ID, r.FairValueTotal, gv.FairValueTotal())
		}
		checked++
	}
	if checked < 3 {
		t.Errorf("only %d sample grants could be checked", checked)
	}
}

// Expense by year, worked by hand: 400 RSUs on a share of 4.00 with no
// dividends (fair value 4.00 each, 1,600 in all), a quarter vesting on each
// of the first four anniversaries of a grant on 1 January 2025, nobody
// expected to leave. Service days to the vest dates: 365, 730, 1,095 and
// 1,461 (2028 is a leap year).
//
// Graded (each tranche straight-line over its own service; IFRS 2 IG11 and
// ASC 718-10-35-8, from memory): 2025 takes 365 days of each tranche,
// 400·(1 + 365/730 + 365/1095 + 365/1461); 2026 the next 365 days of the
// last three; 2027 of the last two; 2028 the last 366 days of the fourth.
//
// Straight-line (ASC 718-10-35-8): 1,600 evenly over 1,461 days, never
// below the cost of the tranches vested, which it never falls behind here.
func TestExpenseByYearByHand(t *testing.T) {
	s := halvard()
	s.Company.ValuationDate, s.Company.GrantDate = day("2024-12-31"), day("2025-01-01")
	s.SharePrices = []grants.PricePoint{{Date: day("2024-12-31"), Price: 4}}
	s.Rates[0].CurveDate, s.Rates[1].CurveDate = day("2024-12-31"), day("2024-12-31")
	s.Assumptions.PreVestingForfeitureRate = 0
	units := grants.Design{Name: "units", Instrument: grants.RSU, Shares: 400, VestMonths: 48, VestEvery: 12}
	graded := []float64{
		400 * (1 + 365.0/730 + 365.0/1095 + 365.0/1461),
		400 * (365.0/730 + 365.0/1095 + 365.0/1461),
		400 * (365.0/1095 + 365.0/1461),
		400 * 366.0 / 1461,
	}
	straight := []float64{1600 * 365.0 / 1461, 1600 * 365.0 / 1461, 1600 * 365.0 / 1461, 1600 * 366.0 / 1461}
	for _, c := range []struct {
		attribution grants.Attribution
		want        []float64
	}{{grants.Graded, graded}, {grants.StraightLine, straight}} {
		s.Assumptions.Attribution = c.attribution
		r := compare(t, s, units)[0]
		if len(r.ExpenseByYear) != 4 {
			t.Fatalf("%s: %d years: %+v", c.attribution, len(r.ExpenseByYear), r.ExpenseByYear)
		}
		for i, y := range r.ExpenseByYear {
			if y.Year != 2025+i || math.Abs(y.Amount-c.want[i]) > 1e-9 {
				t.Errorf("%s: year %d: %.6f, want %d: %.6f", c.attribution, y.Year, y.Amount, 2025+i, c.want[i])
			}
		}
	}
	// With 10% of unvested holders leaving a year the expected cost is each
	// tranche's 400 times 0.9^V, V its years to vest (valuation.ExpectedCost).
	s.Assumptions.Attribution, s.Assumptions.PreVestingForfeitureRate = grants.Graded, 0.1
	r := compare(t, s, units)[0]
	want := 400 * (math.Pow(0.9, 1) + math.Pow(0.9, 2) + math.Pow(0.9, 3) + math.Pow(0.9, 1461.0/365))
	if math.Abs(r.ExpectedCostTotal-want) > exactRel*want || r.FairValueTotal != 1600 {
		t.Errorf("expected cost %.6f, want %.6f; fair value %.6f, want 1600", r.ExpectedCostTotal, want, r.FairValueTotal)
	}
}

// A warrant design is diluted like a schedule's warrant: N/(N+W) of the
// call (a new issue), and its simulated payoffs with it.
func TestWarrantDesign(t *testing.T) {
	s := halvard()
	w := grants.Design{Name: "advisor warrant", Instrument: grants.Warrant, Shares: 400_000, Strike: f(4), TermYears: 5, VestEvery: 1}
	r := compare(t, s, w)[0]
	if want := 8e6 / 8.4e6; math.Abs(r.DilutionFactor-want) > exactRel {
		t.Errorf("dilution factor %v, want %v", r.DilutionFactor, want)
	}
	// Without dividends the American warrant is the European one (Merton
	// 1973): the factor times the BSM call.
	T := valuation.YearFrac(day("2026-07-01"), day("2031-07-01"))
	bsm := valuation.BSMCall(valuation.BSMInputs{Spot: 4, Strike: 4, Years: T, Rate: r.Inputs.Market.Curve.Zero(T), Vol: 0.5})
	if math.Abs(r.FairValuePerShare-r.DilutionFactor*bsm) > r.ErrorEstimate+1e-9 {
		t.Errorf("warrant %.6f ± %.6f, want %.6f", r.FairValuePerShare, r.ErrorEstimate, r.DilutionFactor*bsm)
	}
	if r.OutcomeNote != "" || r.BreakEven <= 4 {
		t.Errorf("note %q, break-even %v", r.OutcomeNote, r.BreakEven)
	}
}

// The break-even share price pays the fair value grown at the risk-free
// rate: for an option K + FV/P(0,T), so that buying the award's payoff at
// that price costs exactly its fair value in cash invested at that rate.
func TestBreakEven(t *testing.T) {
	r := compare(t, halvard(), option("standard", nil))[0]
	T := r.HorizonYears
	want := r.Grant.Strike + r.FairValuePerShare/r.Inputs.Market.Curve.Discount(T)
	if math.Abs(r.BreakEven-want) > exactRel*want || math.Abs(T-valuation.YearFrac(day("2026-07-01"), day("2036-07-01"))) > 1e-12 {
		t.Errorf("break-even %v, want %v (horizon %v)", r.BreakEven, want, T)
	}
	// Value rises with volatility (a call's vega is positive).
	if len(r.Volatility) != 5 || r.Volatility[0].Shift != -10 || r.Volatility[4].Shift != 10 {
		t.Fatalf("volatility cases %+v", r.Volatility)
	}
	for i := 1; i < len(r.Volatility); i++ {
		if !(r.Volatility[i].FairValueTotal > r.Volatility[i-1].FairValueTotal) {
			t.Errorf("volatility cases not rising: %+v", r.Volatility)
		}
	}
	if r.Check == nil || math.Abs(r.Check.Z) > zMax {
		t.Errorf("Monte Carlo check %+v", r.Check)
	}
	if p10, p50, p90 := r.Outcomes.Quantile(0.1), r.Outcomes.Quantile(0.5), r.Outcomes.Quantile(0.9); !(p10 <= p50 && p50 < p90) {
		t.Errorf("payoff percentiles %v %v %v", p10, p50, p90)
	}
}
