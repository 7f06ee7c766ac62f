package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"grantworth/valuation"
)

func init() {
	verbs = append(verbs, func(ios *IO) *cobra.Command { return newPriceCmd(ios, nil) })
}

// priceOptions are the parsed arguments of `grantworth price`.
type priceOptions struct {
	IO                *IO
	Spot, Strike      float64
	Years, Vol, Rate  float64
	DividendYield     float64
	VestYears         float64
	Multiple          float64
	ExitRate          float64
	ForfeitureRate    float64 // pre-vesting, for the expected cost only
	American          bool
	European          bool
	Steps             int // 0 = auto
	Method            valuation.Method
	SharesOutstanding float64 // 0 = no dilution
	Warrants          float64
	NewIssue          bool
	Paths             int
	Seed              uint64
	JSON              bool
	Hurdle            hurdleFlags // price_hurdle.go
}

func (o *priceOptions) diluted() bool { return o.SharesOutstanding > 0 }

func (o *priceOptions) terms() valuation.Terms {
	return valuation.Terms{
		Strike: o.Strike, YearsToExpiry: o.Years, YearsToVest: o.VestYears,
		ExerciseMultiple: o.Multiple, ExitRate: o.ExitRate,
		Rational: o.American, European: o.European,
	}
}

func (o *priceOptions) market() valuation.Market {
	return valuation.Market{Spot: o.Spot, VolAnnual: o.Vol, DividendYield: o.DividendYield, Curve: valuation.FlatCurve(o.Rate)}
}

func (o *priceOptions) dilution() valuation.Dilution {
	return valuation.Dilution{SharesOutstanding: o.SharesOutstanding, Warrants: o.Warrants, PriceReflectsWarrants: !o.NewIssue}
}

func newPriceCmd(ios *IO, runF func(*priceOptions) error) *cobra.Command {
	opts := &priceOptions{IO: ios}
	var method string
	cmd := &cobra.Command{
		Use:   "price",
		Short: "Value one option, warrant or award from its terms",
		Long: `Value one award from flags: the fair value per share on the employee-option
lattice (default), by Black-Scholes-Merton, or by Monte Carlo, with the
expected term and the Black-Scholes-Merton comparison on the contractual term
and on the simplified-method term ((vesting + term)/2, SEC SAB 107).

The model: no exercise before vesting; once vested, exercise as soon as the
share reaches --exercise-multiple times the strike; vested holders leave at
--exit-rate a year (the annual share who leave) and then exercise if in the
money, else the option lapses; at expiry, exercise if in the money.
--american adds rational early exercise; --european values exercise at
expiry only (ignoring vesting, multiple and exits). Rates are continuously
compounded; volatility and rates are decimals or percentages (0.45 or 45%,
not 45).

Without --steps the lattice value is converged, with an error estimate;
--steps N gives the raw N-step Cox-Ross-Rubinstein tree. With
--shares-outstanding and --warrants the value is per warrant after dilution:
by default the share price already reflects the warrants (Galai-Schneller);
--new-issue applies the plain N/(N+W) factor. On the lattice warrants are
American (rational exercise) unless --european; --method bsm values them
European.

With --hurdle H the award becomes exercisable only once the share price has
been at or above H, by --hurdle-years (default: expiry); it combines with
vesting, the multiple and exits. --hurdle-monitoring daily (the default)
watches closing prices, 252 a year; continuous is the textbook barrier,
with which --european is exactly the up-and-in call of Reiner and
Rubinstein (--method bsm gives that closed form). --hurdle-days N watches
the average of the last N closes (--method mc only). --method mc also
prints the probability of meeting the hurdle and the derived service
period (the median time to vest on the paths that vest).

The figures are estimates, not an audit opinion: defer to licensed auditors
or valuation professionals and the accounting rules that apply to you
(ASC 718, IFRS 2 or local rules).`,
		Example: `  # A Tarnwick Labs option: 4-year vesting, exercise at 2.5x the strike, 8% of vested holders leave a year
  grantworth price --spot 12 --strike 12 --years 10 --vol 0.55 --rate 0.04 \
      --vest-years 4 --exercise-multiple 2.5 --exit-rate 0.08

  # The same as one JSON object, and cross-checked by Monte Carlo
  grantworth price --spot 12 --strike 12 --years 10 --vol 0.55 --rate 0.04 \
      --vest-years 4 --exercise-multiple 2.5 --exit-rate 0.08 --json
  grantworth price --spot 12 --strike 12 --years 10 --vol 0.55 --rate 0.04 \
      --vest-years 4 --exercise-multiple 2.5 --exit-rate 0.08 --method mc

  # For a grant design: also the expected cost per granted option if 10% of
  # unvested holders leave a year (a planning figure, never the fair value)
  grantworth price --spot 12 --strike 12 --years 10 --vol 0.55 --rate 0.04 \
      --vest-years 4 --exercise-multiple 2.5 --exit-rate 0.08 --forfeiture-rate 0.1

  # The same option exercisable only once the share has closed at or above 18
  # within 4 years; and the textbook up-and-in call against its closed form
  grantworth price --spot 12 --strike 12 --years 10 --vol 0.55 --rate 0.04 \
      --vest-years 4 --exercise-multiple 2.5 --exit-rate 0.08 --hurdle 18 --hurdle-years 4
  grantworth price --spot 12 --strike 12 --years 4 --vol 0.55 --rate 0.04 \
      --european --hurdle 18 --hurdle-monitoring continuous

  # Warrants Tarnwick issued to a lender: 400,000 on 25,000,000 shares, American
  grantworth price --spot 12 --strike 15 --years 7 --vol 0.55 --rate 0.04 \
      --american --shares-outstanding 25000000 --warrants 400000`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := opts.check(cmd, method); err != nil {
				return err
			}
			if runF != nil {
				return runF(opts)
			}
			return runPrice(opts)
		},
	}
	f := cmd.Flags()
	f.Float64Var(&opts.Spot, "spot", 0, "share fair value at the measurement date (required)")
	f.Float64Var(&opts.Strike, "strike", 0, "exercise price (required)")
	f.Float64Var(&opts.Years, "years", 0, "contractual term in years (required)")
	f.Var(&percentValue{p: &opts.Vol}, "vol", "annual volatility, e.g. 0.45 or 45% (required)")
	f.Var(&percentValue{p: &opts.Rate}, "rate", "risk-free rate, flat, continuously compounded, e.g. 0.04 or 4% (required)")
	f.Var(&percentValue{p: &opts.DividendYield}, "dividend-yield", "continuous dividend yield, e.g. 0.02 or 2%")
	f.Float64Var(&opts.VestYears, "vest-years", 0, "years to the vest date (0 = vested)")
	f.Float64Var(&opts.Multiple, "exercise-multiple", 0, "exercise once the share reaches this multiple of the strike (0 = none)")
	f.Var(&percentValue{p: &opts.ExitRate}, "exit-rate", "annual share of vested holders who leave, in [0, 1), e.g. 0.08 or 8%")
	f.Var(&percentValue{p: &opts.ForfeitureRate}, "forfeiture-rate", "annual share of unvested holders who leave, in [0, 1), e.g. 0.1 or 10%: adds the expected cost per granted award (never a fair value)")
	f.BoolVar(&opts.American, "american", false, "also exercise whenever that is optimal (rational exercise)")
	f.BoolVar(&opts.European, "european", false, "exercise at expiry only: ignores vesting, multiple and exits")
	f.IntVar(&opts.Steps, "steps", 0, "raw N-step lattice (default: auto, converged)")
	f.StringVar(&method, "method", "lattice", "lattice, bsm or mc")
	f.Float64Var(&opts.SharesOutstanding, "shares-outstanding", 0, "shares in issue, for warrant dilution (with --warrants)")
	f.Float64Var(&opts.Warrants, "warrants", 0, "shares the warrants would issue (with --shares-outstanding)")
	f.BoolVar(&opts.NewIssue, "new-issue", false, "dilution of a new issue: the share price does not yet reflect the warrants")
	f.IntVar(&opts.Paths, "paths", 100000, "Monte Carlo paths (with --method mc)")
	f.Uint64Var(&opts.Seed, "seed", 1, "Monte Carlo seed (with --method mc)")
	f.BoolVar(&opts.JSON, "json", false, "print one JSON object")
	addHurdleFlags(f, &opts.Hurdle)
	return cmd
}

// check validates the flags; every message names the flag and its value.
func (o *priceOptions) check(cmd *cobra.Command, method string) error {
	f := cmd.Flags()
	var missing []string
	for _, name := range []string{"spot", "strike", "years", "vol", "rate"} {
		if !f.Changed(name) {
			missing = append(missing, "--"+name)
		}
	}
	if len(missing) > 0 {
		return badInput("missing required flags: %s", strings.Join(missing, ", "))
	}
	for _, c := range []struct {
		flag string
		v    float64
	}{{"spot", o.Spot}, {"strike", o.Strike}, {"years", o.Years}, {"vol", o.Vol}, {"rate", o.Rate},
		{"dividend-yield", o.DividendYield}, {"vest-years", o.VestYears}, {"exercise-multiple", o.Multiple},
		{"exit-rate", o.ExitRate}, {"shares-outstanding", o.SharesOutstanding}, {"warrants", o.Warrants}} {
		if math.IsNaN(c.v) || math.IsInf(c.v, 0) {
			return badInput("--%s %v: not a finite number", c.flag, c.v)
		}
	}
	// The one table of ranges, shared with check and value; each value is
	// quoted as typed (45%).
	lim := valuation.Limits
	given := func(name string) string { return f.Lookup(name).Value.String() }
	hint := func(name string, in func(float64) bool) string { return percentHint(f.Lookup(name), in) }
	anyRate := func(x float64) bool { return math.Abs(x) <= 1 }
	switch {
	case !lim.SharePrice.In(o.Spot):
		return badInput("--spot %v: the share value must be %s", o.Spot, lim.SharePrice.Range())
	case !lim.Strike.In(o.Strike):
		return badInput("--strike %v: the strike must be %s (0: a pre-funded warrant)", o.Strike, lim.Strike.Range())
	case !lim.YearsToExpiry.In(o.Years):
		return badInput("--years %v: the term must be above 0 and at most 100 years (%d days)", o.Years, valuation.MaxTermDays)
	case !valuation.Limits.Volatility.In(o.Vol):
		return badInput("--vol %s: volatility must be %s (a decimal, 0.45, or a percentage, 45%%)%s", given("vol"), lim.Volatility.Range(), hint("vol", lim.Volatility.In))
	case !anyRate(o.Rate):
		return badInput("--rate %s: a rate between -1 and 1 (-100%% and 100%%), as a decimal, 0.04, or a percentage, 4%%%s", given("rate"), hint("rate", anyRate))
	case !lim.DividendYield.In(o.DividendYield):
		return badInput("--dividend-yield %s: a yield %s%s", given("dividend-yield"), lim.DividendYield.Range(), hint("dividend-yield", lim.DividendYield.In))
	case o.VestYears < 0:
		return badInput("--vest-years %v: must be at or above 0", o.VestYears)
	case o.VestYears > o.Years:
		return badInput("--vest-years %v: vesting comes after expiry (--years %v)", o.VestYears, o.Years)
	case !lim.ExerciseMultiple.In(o.Multiple):
		return badInput("--exercise-multiple %v: %s (0: none)", o.Multiple, lim.ExerciseMultiple.Range())
	case !lim.ExitRate.In(o.ExitRate):
		return badInput("--exit-rate %s: an annual share %s%s", given("exit-rate"), lim.ExitRate.Range(), hint("exit-rate", lim.ExitRate.In))
	case o.ForfeitureRate < 0 || o.ForfeitureRate >= 1:
		return badInput("--forfeiture-rate %s: an annual share at or above 0 and below 1%s", given("forfeiture-rate"), hint("forfeiture-rate", lim.ExitRate.In))
	case f.Changed("steps") && (o.Steps == 0 || !lim.Steps.In(float64(o.Steps))):
		return badInput("--steps %d: from %g to %g", o.Steps, lim.Steps.Min, lim.Steps.Max)
	case o.American && o.European:
		return badInput("--american and --european cannot be used together")
	case f.Changed("shares-outstanding") != f.Changed("warrants"):
		return badInput("--shares-outstanding and --warrants go together")
	case f.Changed("shares-outstanding") && o.SharesOutstanding <= 0:
		return badInput("--shares-outstanding %v: must be above 0", o.SharesOutstanding)
	case f.Changed("warrants") && o.Warrants <= 0:
		return badInput("--warrants %v: must be above 0", o.Warrants)
	case o.NewIssue && !f.Changed("warrants"):
		return badInput("--new-issue needs --shares-outstanding and --warrants")
	}
	if err := o.checkHurdle(cmd, method); err != nil {
		return err
	}
	switch method {
	case "lattice":
		o.Method = valuation.MethodLattice
		return nil
	case "bsm":
		o.Method = valuation.MethodBSM
	case "mc":
		o.Method = valuation.MethodMC
		if o.Paths < 2 || o.Paths > 10_000_000 {
			return badInput("--paths %d: between 2 and 10000000", o.Paths)
		}
	default:
		return badInput("--method %q: want lattice, bsm or mc", method)
	}
	// Flags of the lattice alone.
	switch {
	case f.Changed("steps"):
		return badInput("--steps %d: the lattice's; --method %s has no steps", o.Steps, method)
	case o.American:
		return badInput("--american: --method %s values no rational exercise; use --method lattice", method)
	}
	return nil
}

// priceResult is everything `price` prints.
type priceResult struct {
	Main            valuation.Result
	Mode            string // auto, raw, closed form, Monte Carlo
	BSM, Simplified valuation.Result
	Opts            *priceOptions
	Hurdle          *valuation.HurdleSimResult // --hurdle with --method mc
}

// dilute applies the options' dilution (if any) to a value function of the
// share price.
func (o *priceOptions) dilute(value func(valuation.Market) (valuation.Result, error)) (valuation.Result, error) {
	m := o.market()
	if !o.diluted() {
		return value(m)
	}
	var last valuation.Result
	w, at, err := valuation.DilutedValue(o.dilution(), m.Spot, func(s float64) (float64, error) {
		mm := m
		mm.Spot = s
		r, err := value(mm)
		last = r
		return r.Value, err
	})
	if err != nil {
		return valuation.Result{}, err
	}
	m.Spot = at
	if last, err = value(m); err != nil {
		return valuation.Result{}, err
	}
	last.Value, last.ErrorEstimate = w, o.dilution().CarryError(last.ErrorEstimate)
	return last, nil
}

// boundedMode is the mode of an auto-mode value bounded without a
// lattice (valuation.AutoNegligible).
const boundedMode = "auto, bounded: the share price is too unlikely to reach the strike"

func computePrice(o *priceOptions) (*priceResult, error) {
	if o.Hurdle.set() {
		return computeHurdlePrice(o)
	}
	t := o.terms()
	res := &priceResult{Opts: o}
	var err error
	switch o.Method {
	case valuation.MethodLattice:
		res.Mode = "auto (converged)"
		if o.Steps > 0 {
			res.Mode = fmt.Sprintf("raw %d-step tree", o.Steps)
		}
		if o.diluted() {
			res.Main, err = valuation.WarrantValue(t, o.market(), o.dilution(), valuation.LatticeOptions{Steps: o.Steps})
		} else {
			res.Main, err = valuation.Lattice(t, o.market(), valuation.LatticeOptions{Steps: o.Steps})
		}
	case valuation.MethodBSM:
		res.Mode = "closed form, exercise at expiry"
		res.Main, err = o.dilute(func(m valuation.Market) (valuation.Result, error) { return valuation.BlackScholes(t, m) })
	case valuation.MethodMC:
		res.Mode = fmt.Sprintf("Monte Carlo, %d paths, seed %d", o.Paths, o.Seed)
		mo := valuation.MCOptions{Paths: o.Paths, Seed: o.Seed}
		res.Main, err = o.dilute(func(m valuation.Market) (valuation.Result, error) { return valuation.MonteCarlo(t, m, mo) })
	}
	if err != nil {
		return nil, asInput(err)
	}
	if res.Main.MissedTarget {
		res.Mode = "auto, short of its accuracy target"
	}
	if o.Method == valuation.MethodLattice && o.Steps == 0 && res.Main.Steps == 0 {
		// Auto mode builds no lattice for an award whose share price is
		// too unlikely to reach the strike: its value is 0 and its error
		// estimate a bound on what it can be worth.
		res.Mode = boundedMode
	}
	if res.BSM, err = o.dilute(func(m valuation.Market) (valuation.Result, error) { return valuation.BlackScholes(t, m) }); err != nil {
		return nil, asInput(err)
	}
	if res.Simplified, err = o.dilute(func(m valuation.Market) (valuation.Result, error) { return valuation.SimplifiedBSM(t, m) }); err != nil {
		return nil, asInput(err)
	}
	return res, nil
}

func runPrice(o *priceOptions) error {
	res, err := computePrice(o)
	if err != nil {
		return err
	}
	if w := missedTargetWarning(res); w != "" {
		fmt.Fprintln(o.IO.Err, "warning: "+w)
	}
	if o.JSON {
		return printPriceJSON(o.IO.Out, res)
	}
	printPriceText(o.IO.Out, res)
	return nil
}

// missedTargetWarning says when the automatic lattice stopped short of its
// accuracy target (valuation.Result.MissedTarget), and how to check the
// value; "" when it did not.
func missedTargetWarning(r *priceResult) string {
	m := r.Main
	if !m.MissedTarget {
		return ""
	}
	w := fmt.Sprintf("the lattice's error estimate ± %.2g is %.2g%% of the value, above its %g%% accuracy target at the finest ladder it allows",
		m.ErrorEstimate, 100*m.ErrorEstimate/math.Abs(m.Value), 100*valuation.AutoTarget)
	if r.Opts.American {
		return w + "; Monte Carlo does not value rational exercise (--american), so check this value another way"
	}
	return w + "; cross-check it with --method mc"
}

func printPriceText(w io.Writer, r *priceResult) {
	o := r.Opts
	what := "option"
	if o.diluted() {
		what = "warrant, after dilution"
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "Fair value per %s\t%.4f\n", what, r.Main.Value)
	if r.Main.ErrorEstimate > 0 {
		kind := "error estimate"
		if o.Method == valuation.MethodMC {
			kind = "standard error"
		}
		est := fmt.Sprintf("%.4f", r.Main.ErrorEstimate)
		if e := r.Main.ErrorEstimate; e > 0 && e < 5e-5 {
			est = fmt.Sprintf("%.1e", e) // too small for four decimals, not zero
		}
		fmt.Fprintf(tw, "%s\t± %s\n", strings.ToUpper(kind[:1])+kind[1:], est)
	} else {
		fmt.Fprintf(tw, "Error estimate\t%s\n", map[bool]string{true: "exact (closed form)", false: "none (raw tree, not converged)"}[o.Method == valuation.MethodBSM])
	}
	fmt.Fprintf(tw, "Expected term\t%.2f years\n", r.Main.ExpectedTermYears)
	fmt.Fprintf(tw, "Method\t%s, %s\n", r.Main.Method, r.Mode)
	stepsName := "Steps"
	if o.Method == valuation.MethodMC {
		stepsName = "Paths"
	}
	if r.Mode == boundedMode {
		fmt.Fprintf(tw, "%s\tnone: no lattice is needed for a value this small\n", stepsName)
	} else {
		fmt.Fprintf(tw, "%s\t%d\n", stepsName, r.Main.Steps)
	}
	tw.Flush()
	if o.ForfeitureRate > 0 {
		fmt.Fprintf(w, "\nExpected cost per granted %s, not a fair value: %.4f\n  (fair value × %.4f, the share of holders expected to stay %g years to vesting at %g a year)\n",
			strings.SplitN(what, ",", 2)[0], valuation.ExpectedCost(r.Main.Value, o.ForfeitureRate, o.VestYears),
			valuation.SurvivalToVest(o.ForfeitureRate, o.VestYears), o.VestYears, o.ForfeitureRate)
	}
	if o.Hurdle.set() {
		printHurdleText(w, r)
	}
	fmt.Fprintln(w, "\nBlack-Scholes-Merton comparison (exercise at expiry):")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "  on the contractual term\t%.2f years\t%.4f\n", r.BSM.ExpectedTermYears, r.BSM.Value)
	fmt.Fprintf(tw, "  on the simplified term\t%.2f years\t%.4f\t(SEC SAB 107: (vesting + term)/2)\n", r.Simplified.ExpectedTermYears, r.Simplified.Value)
	tw.Flush()
	fmt.Fprintf(w, "\nInputs: spot %g, strike %g, term %g years, volatility %g, rate %g, dividend yield %g, vesting %g years, exercise multiple %s, exit rate %g",
		o.Spot, o.Strike, o.Years, o.Vol, o.Rate, o.DividendYield, o.VestYears, priceMultiple(o.Multiple), o.ExitRate)
	switch {
	case o.American:
		fmt.Fprint(w, ", rational exercise")
	case o.European:
		fmt.Fprint(w, ", exercise at expiry only")
	}
	if o.diluted() {
		kind := "price reflects the warrants (Galai-Schneller)"
		if o.NewIssue {
			kind = "new issue, N/(N+W)"
		}
		fmt.Fprintf(w, ", %.0f shares and %.0f warrants (%s)", o.SharesOutstanding, o.Warrants, kind)
	}
	fmt.Fprintln(w, ".")
	fmt.Fprintln(w, "An estimate, not an audit opinion: defer to licensed auditors or valuation professionals\nand the accounting rules that apply to you (ASC 718, IFRS 2 or local rules).")
}

func priceMultiple(m float64) string {
	if m == 0 {
		return "none"
	}
	return fmt.Sprintf("%g", m)
}

func printPriceJSON(w io.Writer, r *priceResult) error {
	o := r.Opts
	type comparison struct {
		Value     float64 `json:"value"`
		TermYears float64 `json:"term_years"`
	}
	type dilution struct {
		SharesOutstanding     float64 `json:"shares_outstanding"`
		Warrants              float64 `json:"warrants"`
		PriceReflectsWarrants bool    `json:"price_reflects_warrants"`
		Factor                float64 `json:"factor"`
	}
	type expectedCost struct {
		Value          float64 `json:"value"`
		ForfeitureRate float64 `json:"forfeiture_rate"`
		SurvivalToVest float64 `json:"survival_to_vest"`
		Note           string  `json:"note"`
	}
	type inputs struct {
		Spot             float64 `json:"spot"`
		Strike           float64 `json:"strike"`
		Years            float64 `json:"years"`
		Vol              float64 `json:"vol"`
		Rate             float64 `json:"rate"`
		DividendYield    float64 `json:"dividend_yield"`
		VestYears        float64 `json:"vest_years"`
		ExerciseMultiple float64 `json:"exercise_multiple"`
		ExitRate         float64 `json:"exit_rate"`
		American         bool    `json:"american"`
		European         bool    `json:"european"`
		Steps            int     `json:"steps"`
		Paths            int     `json:"paths,omitempty"`
		Seed             *uint64 `json:"seed,omitempty"`
	}
	out := struct {
		Value             float64       `json:"value"`
		ErrorEstimate     float64       `json:"error_estimate"`
		ExpectedTermYears float64       `json:"expected_term_years"`
		Steps             int           `json:"steps"`
		Method            string        `json:"method"`
		Mode              string        `json:"mode"`
		MissedTarget      bool          `json:"missed_target"`
		BSM               comparison    `json:"bsm"`
		BSMSimplified     comparison    `json:"bsm_simplified"`
		Dilution          *dilution     `json:"dilution,omitempty"`
		ExpectedCost      *expectedCost `json:"expected_cost,omitempty"`
		Hurdle            *hurdleJSON   `json:"hurdle,omitempty"`
		Inputs            inputs        `json:"inputs"`
	}{
		Value: r.Main.Value, ErrorEstimate: r.Main.ErrorEstimate, ExpectedTermYears: r.Main.ExpectedTermYears,
		Steps: r.Main.Steps, Method: r.Main.Method.String(), Mode: r.Mode, MissedTarget: r.Main.MissedTarget,
		BSM:           comparison{r.BSM.Value, r.BSM.ExpectedTermYears},
		BSMSimplified: comparison{r.Simplified.Value, r.Simplified.ExpectedTermYears},
		Inputs: inputs{o.Spot, o.Strike, o.Years, o.Vol, o.Rate, o.DividendYield, o.VestYears, o.Multiple, o.ExitRate,
			o.American, o.European, o.Steps, 0, nil},
	}
	if o.Method == valuation.MethodMC {
		out.Inputs.Paths, out.Inputs.Seed = o.Paths, &o.Seed
	}
	out.Hurdle = hurdleJSONOf(r)
	if o.ForfeitureRate > 0 {
		out.ExpectedCost = &expectedCost{valuation.ExpectedCost(r.Main.Value, o.ForfeitureRate, o.VestYears), o.ForfeitureRate,
			valuation.SurvivalToVest(o.ForfeitureRate, o.VestYears), "planning figure with pre-vesting forfeiture; not a fair value"}
	}
	if o.diluted() {
		d := o.dilution()
		out.Dilution = &dilution{d.SharesOutstanding, d.Warrants, d.PriceReflectsWarrants, d.Factor()}
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}
