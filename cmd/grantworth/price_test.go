package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"grantworth/valuation"
)

var priceBase = []string{"--spot", "12", "--strike", "12", "--years", "10", "--vol", "0.55", "--rate", "0.04"}

func priceArgs(extra ...string) []string { return append(append([]string{}, priceBase...), extra...) }

// argv → options, through the real flag set with the run replaced.
func TestPriceArgs(t *testing.T) {
	for _, c := range []struct {
		argv  []string
		check func(*priceOptions) bool
	}{
		{priceArgs(), func(o *priceOptions) bool {
			return o.Spot == 12 && o.Strike == 12 && o.Years == 10 && o.Vol == 0.55 && o.Rate == 0.04 &&
				o.DividendYield == 0 && o.VestYears == 0 && o.Multiple == 0 && o.ExitRate == 0 && !o.American && !o.European &&
				o.Steps == 0 && o.Method == valuation.MethodLattice && !o.diluted() && !o.JSON
		}},
		{priceArgs("--dividend-yield", "0.01", "--vest-years", "4", "--exercise-multiple", "2.5", "--exit-rate", "0.08",
			"--american", "--steps", "500", "--shares-outstanding", "1e6", "--warrants", "2e5", "--new-issue", "--json"), func(o *priceOptions) bool {
			return o.DividendYield == 0.01 && o.VestYears == 4 && o.Multiple == 2.5 && o.ExitRate == 0.08 && o.American &&
				o.Steps == 500 && o.SharesOutstanding == 1e6 && o.Warrants == 2e5 && o.NewIssue && o.JSON && !o.dilution().PriceReflectsWarrants
		}},
		{priceArgs("--method", "mc", "--paths", "2000", "--seed", "7", "--european"), func(o *priceOptions) bool {
			return o.Method == valuation.MethodMC && o.Paths == 2000 && o.Seed == 7 && o.European
		}},
		{priceArgs("--method", "bsm"), func(o *priceOptions) bool { return o.Method == valuation.MethodBSM }},
		// Every percent flag takes a percentage as the schedule's columns do.
		{priceArgs("--vol", "45%", "--rate", "4.5%", "--dividend-yield", "1%", "--exit-rate", "8%", "--forfeiture-rate", "10 %"), func(o *priceOptions) bool {
			return o.Vol == 0.45 && o.Rate == 0.045 && o.DividendYield == 0.01 && o.ExitRate == 0.08 && o.ForfeitureRate == 0.1
		}},
	} {
		ios, _, _ := volTestIO()
		var got *priceOptions
		cmd := newPriceCmd(ios, func(o *priceOptions) error { got = o; return nil })
		cmd.SetArgs(c.argv)
		cmd.SilenceUsage, cmd.SilenceErrors = true, true
		if err := cmd.Execute(); err != nil || got == nil || !c.check(got) {
			t.Errorf("%v: options %+v, err %v", c.argv, got, err)
		}
	}
}

// Bad flags exit 2 with a message naming the flag and the value.
func TestPriceBadFlags(t *testing.T) {
	for _, c := range []struct {
		argv []string
		want string
	}{
		{priceArgs("--vol", "-0.2"), "--vol -0.2"},
		{priceArgs("--vol", "0"), "--vol 0"},
		{priceArgs("--vol", "abc"), `"abc" for "--vol"`},
		{priceArgs("--strike", "-5"), "--strike -5"},
		{priceArgs("--spot", "0"), "--spot 0"},
		{priceArgs("--years", "-1"), "--years -1"},
		{priceArgs("--rate", "4"), "--rate 4: a rate between -1 and 1 (-100% and 100%), as a decimal, 0.04, or a percentage, 4%; did you mean 4% (0.04)?"},
		{priceArgs("--rate", "400%"), "--rate 400%: a rate between -1 and 1"},
		{priceArgs("--vol", "58"), "--vol 58: volatility must be from 0.01 to 5 (a decimal, 0.45, or a percentage, 45%); did you mean 58% (0.58)?"},
		{priceArgs("--vol", "600%"), "--vol 600%: volatility must be from 0.01 to 5 (a decimal, 0.45, or a percentage, 45%)\n"},
		{priceArgs("--vol", "45 %x"), `"45 %x" for "--vol" flag: not a decimal (0.45) or a percentage (45%)`},
		{priceArgs("--dividend-yield", "2"), "--dividend-yield 2: a yield at least 0 and below 1; did you mean 2% (0.02)?"},
		{priceArgs("--exit-rate", "8"), "--exit-rate 8: an annual share at least 0 and below 1; did you mean 8% (0.08)?"},
		{priceArgs("--forfeiture-rate", "10"), "--forfeiture-rate 10: an annual share at or above 0 and below 1; did you mean 10% (0.1)?"},
		{priceArgs("--rate", "NaN"), `"NaN" for "--rate"`},
		{priceArgs("--dividend-yield", "-0.01"), "--dividend-yield -0.01"},
		{priceArgs("--vest-years", "11"), "--vest-years 11"},
		{priceArgs("--vest-years", "-1"), "--vest-years -1"},
		{priceArgs("--exit-rate", "1"), "--exit-rate 1"},
		{priceArgs("--exit-rate", "-0.1"), "--exit-rate -0.1"},
		{priceArgs("--forfeiture-rate", "1"), "--forfeiture-rate 1"},
		{priceArgs("--exercise-multiple", "1"), "--exercise-multiple 1"},
		{priceArgs("--exercise-multiple", "0.5"), "--exercise-multiple 0.5"},
		{priceArgs("--exercise-multiple", "-2"), "--exercise-multiple -2"},
		{priceArgs("--steps", "0"), "--steps 0"},
		{priceArgs("--steps", "ten"), `"ten" for "--steps"`},
		{priceArgs("--american", "--european"), "--american and --european"},
		{priceArgs("--method", "tree"), `--method "tree"`},
		{priceArgs("--method", "bsm", "--steps", "100"), "--steps 100"},
		{priceArgs("--method", "mc", "--american"), "--american"},
		{priceArgs("--method", "mc", "--paths", "1"), "--paths 1"},
		{priceArgs("--warrants", "100"), "--shares-outstanding and --warrants"},
		{priceArgs("--shares-outstanding", "-1", "--warrants", "100"), "--shares-outstanding -1"},
		{priceArgs("--new-issue"), "--new-issue"},
		{[]string{"price", "--spot", "12"}, "missing required flags: --strike, --years, --vol, --rate"},
		{priceArgs("extra"), "unknown command"},
	} {
		ios, out, errb := volTestIO()
		argv := c.argv
		if argv[0] != "price" {
			argv = append([]string{"price"}, argv...)
		}
		code := run(argv, ios)
		if code != exitInput || !strings.Contains(errb.String(), c.want) || out.Len() != 0 {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 naming %q", argv, code, errb, c.want)
		}
	}
}

type priceJSON struct {
	Value         float64 `json:"value"`
	ErrorEstimate float64 `json:"error_estimate"`
	ExpectedTerm  float64 `json:"expected_term_years"`
	Steps         int     `json:"steps"`
	Method        string  `json:"method"`
	BSM           struct {
		Value     float64 `json:"value"`
		TermYears float64 `json:"term_years"`
	} `json:"bsm"`
	BSMSimplified struct {
		Value     float64 `json:"value"`
		TermYears float64 `json:"term_years"`
	} `json:"bsm_simplified"`
	Inputs map[string]any `json:"inputs"`
}

func priceRunJSON(t *testing.T, argv ...string) priceJSON {
	t.Helper()
	ios, out, errb := volTestIO()
	if code := run(append([]string{"price", "--json"}, argv...), ios); code != 0 {
		t.Fatalf("%v: exit %d: %s", argv, code, errb)
	}
	var got priceJSON
	if err := json.Unmarshal(out.Bytes(), &got); err != nil {
		t.Fatalf("%v: %v\n%s", argv, err, out)
	}
	return got
}

// options → output: the JSON object of the issue's done-when command and
// the published values through the command line.
func TestPriceOutput(t *testing.T) {
	argv := priceArgs("--vest-years", "4", "--exercise-multiple", "2.5", "--exit-rate", "0.08")
	got := priceRunJSON(t, argv...)
	lat, err := valuation.Lattice(valuation.Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08},
		valuation.Market{Spot: 12, VolAnnual: 0.55, Curve: valuation.FlatCurve(0.04)}, valuation.LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if got.Value != lat.Value || got.ErrorEstimate != lat.ErrorEstimate || got.ExpectedTerm != lat.ExpectedTermYears ||
		got.Steps != lat.Steps || got.Method != "lattice" || got.BSM.TermYears != 10 || got.BSMSimplified.TermYears != 7 ||
		got.Inputs["exit_rate"] != 0.08 {
		t.Errorf("JSON %+v, lattice %+v", got, lat)
	}
	// Hull's BSM example (from memory): 4.76.
	h := priceRunJSON(t, "--spot", "42", "--strike", "40", "--years", "0.5", "--vol", "0.2", "--rate", "0.1", "--method", "bsm")
	if math.Abs(h.Value-4.76) > 0.005 || h.Method != "bsm" || h.ErrorEstimate != 0 {
		t.Errorf("Hull BSM through price: %+v", h)
	}
	// Hull's warrant example (from memory): 5.87 for a new issue.
	w := priceRunJSON(t, "--spot", "40", "--strike", "60", "--years", "5", "--vol", "0.3", "--rate", "0.03",
		"--method", "bsm", "--shares-outstanding", "1000000", "--warrants", "200000", "--new-issue")
	if math.Abs(w.Value-5.87) > 0.005 {
		t.Errorf("Hull warrant through price: %v, want 5.87", w.Value)
	}
	// Monte Carlo: reproducible with its seed, and within 3 standard errors of the lattice.
	mc1 := priceRunJSON(t, append(argv, "--method", "mc", "--paths", "20000", "--seed", "3")...)
	mc2 := priceRunJSON(t, append(argv, "--method", "mc", "--paths", "20000", "--seed", "3")...)
	if mc1.Value != mc2.Value || mc1.Steps != 20000 || mc1.Method != "mc" {
		t.Errorf("Monte Carlo runs differ or mislabelled: %+v, %+v", mc1, mc2)
	}
	if z := (mc1.Value - lat.Value) / math.Hypot(mc1.ErrorEstimate, lat.ErrorEstimate); math.Abs(z) > 3 {
		t.Errorf("Monte Carlo %v ± %v against lattice %v: z = %.2f", mc1.Value, mc1.ErrorEstimate, lat.Value, z)
	}
	// Raw steps.
	raw := priceRunJSON(t, append(argv, "--steps", "250")...)
	if raw.Steps != 250 || raw.ErrorEstimate != 0 {
		t.Errorf("raw tree: %+v", raw)
	}

	ios, out, _ := volTestIO()
	if code := run(append([]string{"price"}, argv...), ios); code != 0 {
		t.Fatal(code)
	}
	for _, want := range []string{"Fair value per option", "7.059", "Error estimate", "Expected term", "7.57 years",
		"lattice, auto (converged)", "Steps", "on the contractual term", "on the simplified term", "7.00 years", "ASC 718"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("report lacks %q:\n%s", want, out)
		}
	}
}

// The expected cost for grant design: the fair value times the share of
// holders expected to reach vesting, (1 − 0.1)^4 = 0.6561 (IFRS 2 expected
// forfeiture arithmetic, as in its implementation guidance's cliff example);
// it is printed apart from, and never as, the fair value.
func TestPriceExpectedCost(t *testing.T) {
	argv := priceArgs("--vest-years", "4", "--forfeiture-rate", "0.1", "--json")
	ios, out, errb := volTestIO()
	if code := run(append([]string{"price"}, argv...), ios); code != 0 {
		t.Fatalf("exit %d: %s", code, errb)
	}
	var got struct {
		Value        float64 `json:"value"`
		ExpectedCost struct {
			Value          float64 `json:"value"`
			SurvivalToVest float64 `json:"survival_to_vest"`
		} `json:"expected_cost"`
	}
	if err := json.Unmarshal(out.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	plain := priceRunJSON(t, priceArgs("--vest-years", "4")...)
	if got.Value != plain.Value {
		t.Errorf("the forfeiture rate changed the fair value: %v, want %v", got.Value, plain.Value)
	}
	if math.Abs(got.ExpectedCost.SurvivalToVest-0.6561) > 1e-12 || math.Abs(got.ExpectedCost.Value-0.6561*plain.Value) > 1e-12 {
		t.Errorf("expected cost %+v, want 0.6561 × %v", got.ExpectedCost, plain.Value)
	}
	ios, out, _ = volTestIO()
	if code := run(append([]string{"price"}, priceArgs("--vest-years", "4", "--forfeiture-rate", "0.1")...), ios); code != 0 {
		t.Fatal(code)
	}
	if !strings.Contains(out.String(), "Expected cost per granted option, not a fair value") {
		t.Errorf("report lacks the expected cost line:\n%s", out)
	}
}

// A value the automatic lattice could not bring within its accuracy target
// says so: a warning on stderr and missed_target in the JSON. The case is
// the American call of TestLatticeAutoIssue11Cases (valuation), whose
// exercise boundary lies too near the spot for the lattice's step limit;
// a plain option is within the target and says nothing.
func TestPriceMissedTarget(t *testing.T) {
	for _, c := range []struct {
		argv   []string
		missed bool
	}{
		{[]string{"--spot", "100", "--strike", "100", "--years", "15", "--vol", "10%", "--rate", "-1%", "--dividend-yield", "8%", "--american"}, true},
		{priceArgs("--vest-years", "4"), false},
	} {
		for _, asJSON := range []bool{false, true} {
			argv := append([]string{"price"}, c.argv...)
			if asJSON {
				argv = append(argv, "--json")
			}
			ios, out, errb := volTestIO()
			if code := run(argv, ios); code != 0 {
				t.Fatalf("%v: exit %d: %s", argv, code, errb)
			}
			warned := strings.Contains(errb.String(), "warning: the lattice's error estimate ± 0.0017 is 0.085% of the value, above its 0.05% accuracy target at the finest ladder it allows; Monte Carlo does not value rational exercise (--american), so check this value another way\n")
			if warned != c.missed || (!c.missed && errb.Len() > 0) {
				t.Errorf("%v: stderr %q, want the warning %v", argv, errb, c.missed)
			}
			if strings.Contains(out.String(), "warning") {
				t.Errorf("%v: a warning on stdout:\n%s", argv, out)
			}
			if asJSON {
				var got struct {
					MissedTarget *bool  `json:"missed_target"`
					Mode         string `json:"mode"`
				}
				if err := json.Unmarshal(out.Bytes(), &got); err != nil || got.MissedTarget == nil || *got.MissedTarget != c.missed {
					t.Errorf("%v: missed_target %v (err %v), want %v", argv, got.MissedTarget, err, c.missed)
				}
				if c.missed && got.Mode != "auto, short of its accuracy target" {
					t.Errorf("%v: mode %q", argv, got.Mode)
				}
			}
		}
	}
}

// An award whose share price cannot plausibly reach its strike (a strike
// 10^12 times the share price) is valued at 0 with a bound as its error
// estimate and no lattice: the output says so instead of "0 steps" of a
// converged lattice, and shows the bound rather than ± 0.0000.
func TestPriceBounded(t *testing.T) {
	ios, out, errb := volTestIO()
	argv := []string{"price", "--spot", "1.6", "--strike", "1e12", "--years", "10", "--vol", "0.5", "--rate", "0.04", "--vest-years", "1"}
	if code := run(argv, ios); code != 0 {
		t.Fatalf("exit %d: %s", code, errb)
	}
	for _, want := range []string{"Fair value per option  0.0000\n", "Error estimate         ± ", "e-", boundedMode, "none: no lattice is needed"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out.String(), "± 0.0000") || strings.Contains(out.String(), "converged") {
		t.Errorf("a bounded value shown as converged or with a zero estimate:\n%s", out)
	}
}
