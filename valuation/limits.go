package valuation

import (
	"math"
	"strconv"
)

// Limit is the range of one input that the tool values. The schedule's
// validation refuses a value outside it with the cell (grants.Validate),
// and the valuation refuses it too, so that what a check accepts a
// valuation values.
type Limit struct {
	Key      string  // the input's key in the schedule, e.g. "volatility"
	Min, Max float64 // the range
	MinOpen  bool    // Min itself is refused: the value must be above it
	MaxOpen  bool    // Max itself is refused: the value must be below it
	Zero     bool    // 0 is accepted too, outside the range (an exercise multiple of 0: none)
	Why      string  // where the bounds come from
}

// In reports whether x lies within l.
func (l Limit) In(x float64) bool {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return false
	}
	if l.Zero && x == 0 {
		return true
	}
	lo := x > l.Min || (!l.MinOpen && x == l.Min)
	hi := x < l.Max || (!l.MaxOpen && x == l.Max)
	return lo && hi
}

// Range says the range in words, for messages: "from 0.01 to 5", "at
// least 0 and below 1", "0, or above 1 and at most 100".
func (l Limit) Range() string {
	g := bound
	lo, hi := "at least "+g(l.Min), "at most "+g(l.Max)
	if l.MinOpen {
		lo = "above " + g(l.Min)
	}
	if l.MaxOpen {
		hi = "below " + g(l.Max)
	}
	s := lo + " and " + hi
	if !l.MinOpen && !l.MaxOpen {
		s = "from " + g(l.Min) + " to " + g(l.Max)
	}
	if l.Zero {
		s = "0, or " + s
	}
	return s
}

// bound is a bound as people write it: 0.01, 20000, 10^12, 10^-6.
func bound(x float64) string {
	if a := math.Abs(x); a != 0 && (a >= 1e6 || a < 1e-3) {
		if e := math.Round(math.Log10(a)); math.Abs(a-math.Pow(10, e)) <= 1e-9*a {
			sign := ""
			if x < 0 {
				sign = "-"
			}
			return sign + "10^" + strconv.Itoa(int(e))
		}
	}
	return strconv.FormatFloat(x, 'f', -1, 64)
}

// Limits is the one table of input ranges. The bounds keep every number
// the valuation forms finite with room to spare: lattice node prices reach
// S0·e^±maxLogSpan (about 10^±260), and totals multiply a value per share
// by up to 10^12 shares and add up many grants.
var Limits = struct {
	SharePrice, Strike, Volatility, YearsToExpiry, DividendYield, ExitRate, ExerciseMultiple, Steps, Shares, Rate, Tenor Limit
}{
	SharePrice: Limit{Key: "share_price", Min: 1e-6, Max: 1e12,
		Why: "a millionth of a currency unit to 10^12 a share: any share in any currency; node prices S0·e^±600 and totals over 10^12 shares stay far inside floating point"},
	Strike: Limit{Key: "strike", Min: 0, Max: 1e12,
		Why: "0 (a pre-funded warrant) to 10^12 a share, as for the share price"},
	Volatility: Limit{Key: "volatility", Min: 0.01, Max: 5,
		Why: "1% to 500% a year: outside it the figure is almost surely mistyped (45 for 0.45); how high a volatility the lattice resolves also depends on the term and the steps (Feasible)"},
	YearsToExpiry: Limit{Key: "years_to_expiry", Min: 0, MinOpen: true, Max: MaxTermDays / 365.0,
		Why: "a term of up to 100 calendar years (36,525 days, ACT/365F), as term_years allows"},
	DividendYield: Limit{Key: "dividend_yield", Min: 0, Max: 1, MaxOpen: true,
		Why: "a continuous yield of 0 to 100% a year"},
	ExitRate: Limit{Key: "post_vesting_exit_rate", Min: 0, Max: 1, MaxOpen: true,
		Why: "the annual share of vested holders who leave: λ = −ln(1−e) is finite below 1"},
	ExerciseMultiple: Limit{Key: "exercise_multiple", Min: 1, MinOpen: true, Max: 100, Zero: true,
		Why: "0 (no such rule) or a share price above the strike, up to 100 times it"},
	Steps: Limit{Key: "steps", Min: 1, Max: MaxLatticeSteps, Zero: true,
		Why: "0 (auto) or a raw tree of up to MaxLatticeSteps steps, which bounds one valuation's time and memory"},
	Shares: Limit{Key: "shares", Min: 1, Max: 1e12,
		Why: "1 to 10^12 shares a grant"},
	Rate: Limit{Key: "rate", Min: -0.2, MinOpen: true, Max: 0.5, MaxOpen: true,
		Why: "a zero or par rate above −20% and below 50% a year: anything else is a rate typed as a percentage number (4.5 for 4.5%)"},
	Tenor: Limit{Key: "tenor_years", Min: 0, Max: 100,
		Why: "a curve point from 0 to 100 years"},
}

// MaxTermDays is the longest term, 100 calendar years with their leap days.
const MaxTermDays = 36525

// AllLimits lists the rows of Limits, for documentation and tests.
func AllLimits() []Limit {
	l := Limits
	return []Limit{l.SharePrice, l.Strike, l.Volatility, l.YearsToExpiry, l.DividendYield, l.ExitRate, l.ExerciseMultiple, l.Steps, l.Shares, l.Rate, l.Tenor}
}

// Feasible reports, without solving, whether LatticeTranches values terms
// t with tranches vesting at vestYears in market m with options o: the
// inputs within Limits (the volatility only above 0, so that a sensitivity
// case may move it past the table's bounds); for a raw tree, a step count
// within the limit whose every up-probability lies in (0, 1) and whose
// extreme node prices stay within floating point; in auto mode, the
// checks auto mode makes before it solves (its spread of prices and the
// size of its coarsest grids). The error wraps ErrLatticeInput and names
// what to change. It costs about as much as building one tree's
// probabilities, far less than solving it.
func Feasible(t Terms, vestYears []float64, m Market, o LatticeOptions) error {
	t, vestYears, o, err := latticeInputs(t, vestYears, m, o)
	if err != nil || len(vestYears) == 0 {
		return err
	}
	if o.Steps == 0 {
		_, _, err := autoPreflight(t, vestYears, m, o.Convention)
		return err
	}
	n, err := rawSteps(t, o)
	if err != nil {
		return err
	}
	if err := checkSpan(t, m, n); err != nil {
		return err
	}
	// The up-probability of every step, as the tree computes it.
	h := m.VolAnnual * math.Sqrt(t.YearsToExpiry/float64(n))
	u, d := math.Exp(h), math.Exp(-h)
	for i := 0; i < n; i++ {
		if p, f := stepProb(m, t.YearsToExpiry, n, i, u, d); !(p > 0 && p < 1) {
			return inputErr("%d steps over %.4g years give step %d an up-probability of %.4g, outside (0, 1), for volatility %v at the forward rate %.4g and dividend yield %v; use at least %d steps, or auto",
				n, t.YearsToExpiry, i+1, p, m.VolAnnual, f, m.DividendYield, max(minStepsForProb(t, m), n+1))
		}
	}
	return nil
}

// stepProb is the risk-neutral up-probability of step i of an n-step tree
// over T years with up and down factors u and d, p = (e^((f−q)Δt) − d)/(u
// − d), and the step's forward rate f.
func stepProb(m Market, T float64, n, i int, u, d float64) (p, f float64) {
	t0, t1 := T*float64(i)/float64(n), T*float64(i+1)/float64(n)
	f = m.Curve.Forward(t0, t1)
	g := math.Exp((f - m.DividendYield) * (T / float64(n)))
	return (g - d) / (u - d), f
}

// limitErr is the error of an input outside its Limit.
func limitErr(l Limit, what string, x float64) error {
	return inputErr("%s %v must be %s", what, x, l.Range())
}
