package main

import (
	"fmt"
	"io"
	"math"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"grantworth/valuation"
)

// hurdleFlags are price's flags of a price hurdle: the award becomes
// exercisable only once the share price has been at or above Price.
type hurdleFlags struct {
	Price      float64 // 0: no hurdle
	Monitoring string  // daily | continuous
	Years      float64 // deadline; 0: the term
	Days       int     // closing prices averaged
}

func addHurdleFlags(f *pflag.FlagSet, h *hurdleFlags) {
	f.Float64Var(&h.Price, "hurdle", 0, "price hurdle: exercisable only once the share price has been at or above this (0 = none)")
	f.StringVar(&h.Monitoring, "hurdle-monitoring", "daily", "how the hurdle is watched: daily (closing prices, 252 a year) or continuous")
	f.Float64Var(&h.Years, "hurdle-years", 0, "years from now by which the hurdle must be met (default: the term)")
	f.IntVar(&h.Days, "hurdle-days", 1, "closing prices averaged against the hurdle (1 = the closing price; more: valued by simulation)")
}

func (h *hurdleFlags) set() bool { return h.Price > 0 }

// hurdle is the valuation's hurdle.
func (h *hurdleFlags) hurdle() valuation.Hurdle {
	mo := valuation.MonitorDaily
	if h.Monitoring == "continuous" {
		mo = valuation.MonitorContinuous
	}
	return valuation.Hurdle{Price: h.Price, YearsToDeadline: h.Years, Monitoring: mo, AverageDays: h.Days}
}

// checkHurdle validates the hurdle flags against the rest; every message
// names the flag and its value.
func (o *priceOptions) checkHurdle(cmd *cobra.Command, method string) error {
	f := cmd.Flags()
	h := &o.Hurdle
	if !f.Changed("hurdle") {
		for _, name := range []string{"hurdle-monitoring", "hurdle-years", "hurdle-days"} {
			if f.Changed(name) {
				return badInput("--%s needs --hurdle", name)
			}
		}
		return nil
	}
	switch {
	case math.IsNaN(h.Price) || math.IsInf(h.Price, 0) || h.Price <= 0:
		return badInput("--hurdle %v: a share price above 0", h.Price)
	case h.Monitoring != "daily" && h.Monitoring != "continuous":
		return badInput("--hurdle-monitoring %q: want daily or continuous", h.Monitoring)
	case math.IsNaN(h.Years) || h.Years < 0 || h.Years > o.Years:
		return badInput("--hurdle-years %v: from 0 (the term) to the term, %v years", h.Years, o.Years)
	case h.Days < 1 || h.Days > 260:
		return badInput("--hurdle-days %d: from 1 to 260 closing prices", h.Days)
	case h.Days > 1 && h.Monitoring == "continuous":
		return badInput("--hurdle-days %d: an average of closing prices is watched daily, not continuously", h.Days)
	case h.Days > 1 && method == "lattice":
		return badInput("--hurdle-days %d: an average of closing prices is path-dependent; value it with --method mc", h.Days)
	case f.Changed("shares-outstanding"):
		return badInput("--hurdle with --shares-outstanding: warrants are not valued with a price hurdle")
	case f.Changed("steps"):
		return badInput("--steps %d with --hurdle: the hurdle lattice is converged (auto) only", o.Steps)
	case method == "bsm" && !o.European:
		return badInput("--hurdle with --method bsm needs --european: the closed form is the up-and-in call")
	case method == "bsm" && h.Years != 0 && h.Years != o.Years:
		return badInput("--hurdle-years %v with --method bsm: the closed form watches the hurdle to expiry", h.Years)
	}
	return nil
}

// computeHurdlePrice values the award with its hurdle: on the hurdle
// lattice, by simulation, or in closed form (the up-and-in call); the
// Black-Scholes-Merton comparisons ignore the hurdle.
func computeHurdlePrice(o *priceOptions) (*priceResult, error) {
	res := &priceResult{Opts: o}
	if err := hurdlePrice(o, res); err != nil {
		return nil, err
	}
	var err error
	if res.BSM, err = valuation.BlackScholes(o.terms(), o.market()); err != nil {
		return nil, asInput(err)
	}
	if res.Simplified, err = valuation.SimplifiedBSM(o.terms(), o.market()); err != nil {
		return nil, asInput(err)
	}
	return res, nil
}

func hurdlePrice(o *priceOptions, res *priceResult) error {
	t, m, h := o.terms(), o.market(), o.Hurdle.hurdle()
	a := valuation.HurdleAward{Terms: t, VestYears: []float64{o.VestYears}, Hurdle: h}
	switch o.Method {
	case valuation.MethodLattice:
		rs, err := valuation.HurdleLattice(a, m)
		if err != nil {
			return asInput(err)
		}
		res.Main = rs[0]
		res.Mode = "auto (converged), hurdle on the lattice"
		if h.Monitoring == valuation.MonitorDaily {
			res.Mode += fmt.Sprintf("; daily closes by the continuity correction (the estimate includes %.2g%% for it)", 100*valuation.DailyCorrectionTolerance)
		}
	case valuation.MethodMC:
		paths := max(o.Paths, 2)
		sim, err := valuation.HurdleSim(a, m, valuation.SimOptions{Seed: o.Seed, MinPaths: paths, MaxPaths: paths})
		if err != nil {
			return asInput(err)
		}
		res.Main = sim.Tranches[0]
		res.Hurdle = sim
		res.Mode = fmt.Sprintf("Monte Carlo with the hurdle watched %s, %d paths, seed %d", h.Monitoring, sim.Paths, o.Seed)
	case valuation.MethodBSM:
		H := h.Price
		res.Mode = "closed form: the up-and-in call of Reiner and Rubinstein (1991), no rebate"
		if h.Monitoring == valuation.MonitorDaily {
			H *= math.Exp(0.5825971579390106 * o.Vol * math.Sqrt(1.0/valuation.TradingDaysPerYear))
			res.Mode += fmt.Sprintf(", daily closes by the continuity correction of Broadie, Glasserman and Kou (1997): hurdle %.4f watched continuously", H)
		}
		in := valuation.BSMInputs{Spot: o.Spot, Strike: o.Strike, Years: o.Years, Rate: o.Rate, DividendYield: o.DividendYield, Vol: o.Vol}
		res.Main = valuation.Result{Value: valuation.UpAndInCall(in, H, 0), ExpectedTermYears: o.Years, Method: valuation.MethodBSM}
	}
	return nil
}

// printHurdleText adds the hurdle's lines to price's report.
func printHurdleText(w io.Writer, r *priceResult) {
	h := r.Opts.Hurdle
	by := fmt.Sprintf("%g years", h.Years)
	if h.Years == 0 {
		by = "expiry"
	}
	what := "closing price"
	if h.Days > 1 {
		what = fmt.Sprintf("average of %d closing prices", h.Days)
	}
	if h.Monitoring == "continuous" {
		what = "price, watched continuously"
	}
	fmt.Fprintf(w, "\nPrice hurdle %g (%s), to be met by %s: the award is exercisable only once it is.\n", h.Price, what, by)
	if s := r.Hurdle; s != nil {
		fmt.Fprintf(w, "  probability of meeting it %.1f%%; median time to meet it %.2f years; derived service period %.2f years (ASC 718-10-55-71)\n",
			100*s.HitProbability, s.MedianHitYears, s.DerivedServiceYears[0])
	}
	fmt.Fprintln(w, "  The Black-Scholes-Merton comparison below ignores the hurdle.")
}

// hurdleJSON is price's JSON object of the hurdle.
type hurdleJSON struct {
	Price               float64  `json:"price"`
	Monitoring          string   `json:"monitoring"`
	DeadlineYears       float64  `json:"deadline_years"`
	AverageDays         int      `json:"average_days"`
	HitProbability      *float64 `json:"hit_probability,omitempty"`
	MedianHitYears      *float64 `json:"median_hit_years,omitempty"`
	DerivedServiceYears *float64 `json:"derived_service_years,omitempty"`
}

func hurdleJSONOf(r *priceResult) *hurdleJSON {
	o := r.Opts
	if !o.Hurdle.set() {
		return nil
	}
	deadline := o.Hurdle.Years
	if deadline == 0 {
		deadline = o.Years
	}
	j := &hurdleJSON{Price: o.Hurdle.Price, Monitoring: o.Hurdle.Monitoring, DeadlineYears: deadline, AverageDays: o.Hurdle.Days}
	if s := r.Hurdle; s != nil {
		j.HitProbability, j.MedianHitYears, j.DerivedServiceYears = &s.HitProbability, &s.MedianHitYears, &s.DerivedServiceYears[0]
	}
	return j
}
