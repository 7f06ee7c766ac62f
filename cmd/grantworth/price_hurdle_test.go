package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"grantworth/valuation"
)

// The flag contract of issue 17: with --european --hurdle-monitoring
// continuous the award is the up-and-in call of Reiner and Rubinstein
// (1991), no rebate, within the accuracy target (valuation.AutoTarget);
// --method bsm prints that closed form; the default lattice run combines
// the hurdle with vesting, the multiple and exits and prints the usual
// fields plus the hurdle; --method mc agrees with it within the combined
// error.
func TestPriceHurdleContract(t *testing.T) {
	argv := []string{"--spot", "12", "--strike", "12", "--years", "4", "--vol", "0.55", "--rate", "0.04", "--european", "--hurdle", "18", "--hurdle-monitoring", "continuous"}
	lat := priceRunJSON(t, argv...)
	want := valuation.UpAndInCall(valuation.BSMInputs{Spot: 12, Strike: 12, Years: 4, Rate: 0.04, Vol: 0.55}, 18, 0)
	if e := math.Abs(lat.Value - want); e > valuation.AutoTarget*want || e > lat.ErrorEstimate {
		t.Errorf("up-and-in call through price: %.6f ± %.2g, Reiner-Rubinstein %.6f", lat.Value, lat.ErrorEstimate, want)
	}
	cf := priceRunJSON(t, append(argv, "--method", "bsm")...)
	if cf.Value != want || cf.ErrorEstimate != 0 {
		t.Errorf("--method bsm: %+v, want the closed form %v", cf, want)
	}

	emp := []string{"--spot", "12", "--strike", "12", "--years", "10", "--vol", "0.55", "--rate", "0.04", "--vest-years", "4",
		"--exercise-multiple", "2.5", "--exit-rate", "0.08", "--hurdle", "18", "--hurdle-years", "4"}
	var got struct {
		priceJSON
		Hurdle struct {
			Price               float64  `json:"price"`
			Monitoring          string   `json:"monitoring"`
			DeadlineYears       float64  `json:"deadline_years"`
			HitProbability      *float64 `json:"hit_probability"`
			DerivedServiceYears *float64 `json:"derived_service_years"`
		} `json:"hurdle"`
	}
	ios, out, errb := volTestIO()
	if code := run(append([]string{"price", "--json"}, emp...), ios); code != 0 {
		t.Fatalf("exit %d: %s", code, errb)
	}
	if err := json.Unmarshal(out.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	plain := priceRunJSON(t, emp[:len(emp)-4]...)
	if !(got.Value > 0 && got.Value < plain.Value) || got.Hurdle.Price != 18 || got.Hurdle.Monitoring != "daily" ||
		got.Hurdle.DeadlineYears != 4 || got.ExpectedTerm <= 0 || got.Method != "lattice" {
		t.Errorf("hurdle option: %+v (the plain option %v)", got, plain.Value)
	}
	mc := priceRunJSON(t, append(emp, "--method", "mc", "--paths", "40000", "--seed", "2")...)
	if z := (mc.Value - got.Value) / math.Hypot(mc.ErrorEstimate, got.ErrorEstimate); math.Abs(z) > 4 {
		t.Errorf("Monte Carlo %v ± %v, lattice %v ± %v: z = %.1f", mc.Value, mc.ErrorEstimate, got.Value, got.ErrorEstimate, z)
	}

	ios, out, _ = volTestIO()
	if code := run(append([]string{"price"}, append(emp, "--method", "mc", "--paths", "8000")...), ios); code != 0 {
		t.Fatal(code)
	}
	for _, s := range []string{"Price hurdle 18 (closing price), to be met by 4 years", "probability of meeting it", "derived service period", "ignores the hurdle"} {
		if !strings.Contains(out.String(), s) {
			t.Errorf("report lacks %q:\n%s", s, out)
		}
	}
}

// Bad hurdle flags exit 2 naming the flag and its value.
func TestPriceHurdleBadFlags(t *testing.T) {
	base := []string{"price", "--spot", "12", "--strike", "12", "--years", "4", "--vol", "0.55", "--rate", "0.04"}
	for _, c := range []struct {
		argv []string
		want string
	}{
		{[]string{"--hurdle", "-1"}, "--hurdle -1"},
		{[]string{"--hurdle", "18", "--hurdle-monitoring", "weekly"}, `--hurdle-monitoring "weekly"`},
		{[]string{"--hurdle-monitoring", "continuous"}, "--hurdle-monitoring needs --hurdle"},
		{[]string{"--hurdle", "18", "--hurdle-years", "5"}, "--hurdle-years 5"},
		{[]string{"--hurdle", "18", "--hurdle-days", "20"}, "--hurdle-days 20: an average of closing prices is path-dependent"},
		{[]string{"--hurdle", "18", "--hurdle-days", "20", "--hurdle-monitoring", "continuous", "--method", "mc"}, "--hurdle-days 20"},
		{[]string{"--hurdle", "18", "--method", "bsm"}, "needs --european"},
		{[]string{"--hurdle", "18", "--steps", "100"}, "--steps 100 with --hurdle"},
		{[]string{"--hurdle", "18", "--shares-outstanding", "100", "--warrants", "10"}, "--hurdle with --shares-outstanding"},
	} {
		ios, out, errb := volTestIO()
		code := run(append(append([]string{}, base...), c.argv...), ios)
		if code != exitInput || !strings.Contains(errb.String(), c.want) || out.Len() != 0 {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 naming %q", c.argv, code, errb, c.want)
		}
	}
}
