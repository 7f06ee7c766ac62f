package accounting

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"grantworth/grants"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// Modifications (ASC 718-20-35-3, 35-8 and 55-116; IFRS 2.26-28 and
// B42-B44). Each test works its figures out by hand in its comment.

func ip(n int) *int { return &n }

// ashgrove is an invented company with one option of 10,000 shares at
// strike 10, granted 2022-03-01 and vested at grant, expiring 2032-03-01;
// the share fell from 10 to 4 by 2026-08-14, when the board repriced the
// option to 4. Flat 4% continuous rates, volatility 50%, no dividends, no
// exercise multiple and no exit: the lattice then equals the European
// call (Merton 1973). Valued at 2026-09-30 for the quarter from 2026-07-01.
func ashgrove() *grants.Schedule {
	d := grantstest.Day
	k4 := 4.0
	return &grants.Schedule{
		Company:     grants.Company{Name: "Ashgrove Instruments, Inc.", ValuationDate: d("2026-09-30"), PeriodStart: d("2026-07-01"), Currency: "USD"},
		Assumptions: grants.Assumptions{Volatility: 0.5, Attribution: grants.Graded, Forfeitures: grants.AsOccur},
		Grants: []grants.Grant{{ID: "A-1", Instrument: grants.Option, GrantDate: d("2022-03-01"), VestStart: d("2022-03-01"),
			Shares: 10_000, Strike: 10, ExpiryDate: d("2032-03-01"), VestEvery: 1}},
		SharePrices:   []grants.PricePoint{{Date: d("2022-02-28"), Price: 10}, {Date: d("2026-08-14"), Price: 4}},
		Rates:         []grants.RatePoint{{CurveDate: d("2022-01-01"), TenorYears: 1, Rate: 0.04}, {CurveDate: d("2022-01-01"), TenorYears: 10, Rate: 0.04}},
		Modifications: []grants.Modification{{GrantID: "A-1", Date: d("2026-08-14"), NewStrike: &k4, Note: "board resolution of 2026-08-12"}},
	}
}

// valueAndClose values s with pricing.Value and books it after prior.
func valueAndClose(t *testing.T, s *grants.Schedule, prior *Prior) (*pricing.Valuation, *Books) {
	t.Helper()
	if rep := grants.Validate(s); !rep.OK() {
		t.Fatalf("schedule: %v", rep.Errors)
	}
	if prior != nil {
		if _, err := Open(s, prior); err != nil {
			t.Fatal(err)
		}
	}
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	v, err := pricing.Value(s, ins, pricing.Options{Locks: prior.Locks()})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Close(s, v, prior)
	if err != nil {
		t.Fatal(err)
	}
	return v, b
}

// TestRepricingVestedByHand: a fully vested underwater option repriced.
// Its grant-date cost was recognised at grant (vested at once), so the
// quarter's expense is the incremental fair value alone, all of it in the
// quarter of the repricing (ASC 718-20-35-3; the illustrations of ASC
// 718-20-55 book the increment of vested options at once; IFRS 2.27 and
// B43(b)):
//
//	increment = (value at strike 4 − value at strike 10) × 10,000
//
// both on 2026-08-14 with that day's share price 4, curve and volatility,
// and 2,026 days to expiry. The values come from our own lattice (auto
// mode), which in this limit (no multiple, exit or dividends) must equal
// the Black-Scholes-Merton call; QuantLib 1.29's AnalyticEuropeanEngine
// gives 1.04373832 and 2.02297393 (testdata/quantlib_reprice_gen.py), so
// the increment is (2.02297393 − 1.04373832) × 10,000 = 9,792.36.
func TestRepricingVestedByHand(t *testing.T) {
	var ref struct {
		Values map[string]float64 `json:"values"`
	}
	data, err := os.ReadFile("testdata/quantlib_reprice.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(data, &ref); err != nil {
		t.Fatal(err)
	}
	s := ashgrove()
	v, b := valueAndClose(t, s, nil)
	if len(v.Modifications) != 1 {
		t.Fatalf("%d modifications valued, want 1", len(v.Modifications))
	}
	mv := v.Modifications[0]
	// Our lattice against the closed form (DESIGN §5: 1e-5 relative in the
	// vanilla limits).
	const tolVanilla = 1e-5
	for _, c := range []struct {
		name string
		got  float64
		want float64
	}{{"before (strike 10)", mv.BeforeValues[0].Value, ref.Values["10"]}, {"after (strike 4)", mv.AfterValues[0].Value, ref.Values["4"]}} {
		if math.Abs(c.got/c.want-1) > tolVanilla {
			t.Errorf("%s: lattice %.8f, QuantLib %.8f", c.name, c.got, c.want)
		}
	}
	// And the lattice's own values, called directly: the same numbers.
	cv, _ := valuation.NewCurve([]valuation.CurvePoint{{Tenor: 1, Rate: 0.04}, {Tenor: 10, Rate: 0.04}})
	m := valuation.Market{Spot: 4, VolAnnual: 0.5, Curve: cv}
	T := valuation.YearFrac(grantstest.Day("2026-08-14"), grantstest.Day("2032-03-01"))
	before, err := valuation.Lattice(valuation.Terms{Strike: 10, YearsToExpiry: T}, m, valuation.LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	after, err := valuation.Lattice(valuation.Terms{Strike: 4, YearsToExpiry: T}, m, valuation.LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if before.Value != mv.BeforeValues[0].Value || after.Value != mv.AfterValues[0].Value {
		t.Errorf("pricing gives %v → %v, the lattice %v → %v", mv.BeforeValues[0].Value, mv.AfterValues[0].Value, before.Value, after.Value)
	}
	want := (after.Value - before.Value) * 10_000
	if math.Abs(want-(ref.Values["4"]-ref.Values["10"])*10_000) > tolVanilla*(ref.Values["4"]+ref.Values["10"])*10_000 {
		t.Errorf("increment %.2f from the lattice, %.2f from QuantLib", want, (ref.Values["4"]-ref.Values["10"])*10_000)
	}
	r := b.Expense
	if len(r.Modifications) != 1 {
		t.Fatalf("%d modifications booked", len(r.Modifications))
	}
	me := r.Modifications[0]
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"increment", me.Increment, want},
		{"cost added", me.Cost, want},
		{"booked in the period", me.Period, want},
		{"quarter's expense", r.Period, want},
		{"unrecognised", r.Unrecognized, 0},
		{"cumulative", r.Cumulative, 10_000*v.Grants[0].Results[0].Value + want},
	} {
		if math.Abs(c.got-c.want) > tolCent {
			t.Errorf("%s: %.4f, want %.4f", c.name, c.got, c.want)
		}
	}
	if p := me.Parts[0]; !p.Vested || p.Attribution(me.Date) != "at once, on 2026-08-14" {
		t.Errorf("part %+v: attributed %q", p, p.Attribution(me.Date))
	}
	var booked float64
	for _, e := range b.Journal {
		for _, l := range e.Lines {
			if l.GrantID == "A-1" && l.Role == RoleCompensation {
				booked += l.Debit - l.Credit
			}
		}
	}
	if math.Abs(booked-want) > tolCent {
		t.Errorf("journal books %.2f to grant A-1, want %.2f", booked, want)
	}
	// The disclosures show the new strike on the options outstanding.
	if got := b.Disclosure.OptionsAtEnd.Outstanding.WeightedExercisePrice; got != 4 {
		t.Errorf("weighted exercise price outstanding %v, want 4", got)
	}
	if got := b.Disclosure.Options.Start.WeightedExercisePrice; got != 10 {
		t.Errorf("weighted exercise price at the start %v, want 10", got)
	}
}

// TestRepricingWithBehaviourByHand: the same repricing of holders who
// exercise at 2.5 times the strike and leave at 10% a year. The values
// now come only from our own lattice (there is no closed form), and the
// increment booked is still their difference times the shares.
func TestRepricingWithBehaviourByHand(t *testing.T) {
	s := ashgrove()
	s.Assumptions.ExerciseMultiple, s.Assumptions.PostVestingExitRate = 2.5, 0.10
	_, b := valueAndClose(t, s, nil)
	cv, _ := valuation.NewCurve([]valuation.CurvePoint{{Tenor: 1, Rate: 0.04}, {Tenor: 10, Rate: 0.04}})
	m := valuation.Market{Spot: 4, VolAnnual: 0.5, Curve: cv}
	T := valuation.YearFrac(grantstest.Day("2026-08-14"), grantstest.Day("2032-03-01"))
	val := func(k float64) float64 {
		r, err := valuation.Lattice(valuation.Terms{Strike: k, YearsToExpiry: T, ExerciseMultiple: 2.5, ExitRate: 0.10}, m, valuation.LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		return r.Value
	}
	want := (val(4) - val(10)) * 10_000
	if got := b.Expense.Period; math.Abs(got-want) > tolCent {
		t.Errorf("quarter's expense %.2f, want the increment %.2f", got, want)
	}
}

// fakeModifications adds to v every change of the grants v holds dated by
// s's valuation date, valued at before(grant, change, part) and after(...)
// per share: the accounting does not care where values come from.
func fakeModifications(t *testing.T, s *grants.Schedule, v *pricing.Valuation, before, after func(id string, k, j int) float64) {
	t.Helper()
	for _, gv := range v.Grants {
		g := gv.Inputs.Grant
		sp, err := s.SplitOf(g)
		if err != nil {
			t.Fatal(err)
		}
		if sp == nil {
			continue
		}
		for k := range sp.Changes {
			ch := &sp.Changes[k]
			if ch.Date.After(s.Company.ValuationDate) {
				continue
			}
			mv := pricing.ModificationValue{GrantID: g.ID, Split: sp, Index: k, Status: pricing.Measured}
			for j := range ch.Parts {
				mv.BeforeValues = append(mv.BeforeValues, valuation.Result{Value: before(g.ID, k, j)})
				if ch.Cancellation == nil {
					mv.AfterValues = append(mv.AfterValues, valuation.Result{Value: after(g.ID, k, j)})
				}
			}
			if ch.Cancellation != nil {
				mv.Replacement = ch.Cancellation.ReplacementGrantID
			}
			v.Modifications = append(v.Modifications, mv)
		}
	}
}

func flat(x float64) func(string, int, int) float64 {
	return func(string, int, int) float64 { return x }
}

// TestRepricingUnvestedByHand: oneOption's 1,200 shares (fair value 10 at
// grant on 2025-01-01, all vesting 2027-01-01, 730 days) are repriced on
// 2026-01-01, when the option is worth 3 a share before and 5 after
// (values given, as the accounting does not care where they come from).
// The increment, (5 − 3) × 1,200 = 2,400, is earned over the 365 days of
// service left (ASC 718-20-35-3; IFRS 2 B43(a)), on top of the grant-date
// cost of 12,000, which is unchanged. For the quarter to 2026-03-31 (90
// days), as forfeitures occur:
//
//	grant-date cost:  12,000 × 90/730  = 1,479.45 (cumulative 12,000 × 455/730 = 7,479.45)
//	increment:         2,400 × 90/365  =   591.78
//	expense                            = 2,071.23
func TestRepricingUnvestedByHand(t *testing.T) {
	s := oneOption("2026-03-31", Policy{Forfeitures: grants.AsOccur})
	k := 2.0
	s.Modifications = []grants.Modification{{GrantID: "L-1", Date: grantstest.Day("2026-01-01"), NewStrike: &k}}
	v := fakeValuation(s, ten, nil)
	fakeModifications(t, s, v, flat(3), flat(5))
	b := closeOf(t, s, v, nil)
	r := b.Expense
	me := r.Modifications[0]
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"quarter's expense", r.Period, 12_000*90.0/730 + 2_400*90.0/365},
		{"increment", me.Increment, 2_400},
		{"increment's cost", me.Cost, 2_400},
		{"increment in the quarter", me.Period, 2_400 * 90.0 / 365},
		{"increment unrecognised", me.Unrecognized, 2_400 * 275.0 / 365},
		{"total cost", r.Grants[0].Cost, 12_000 + 2_400},
		{"cumulative", r.Cumulative, 12_000*455.0/730 + 2_400*90.0/365},
		{"grant-date cost", r.Grants[0].Tranches[0].FairValue * float64(r.Grants[0].Tranches[0].Shares), 12_000},
	} {
		if math.Abs(c.got-c.want) > tolCent {
			t.Errorf("%s: %.4f, want %.4f", c.name, c.got, c.want)
		}
	}
	if p := me.Parts[0]; p.Vested || p.Attribution(me.Date) != "over the service from 2026-01-01 to 2027-01-01" {
		t.Errorf("part %+v: attributed %q", p, p.Attribution(me.Date))
	}
	// A decrease books nothing: the grant-date cost stays.
	v = fakeValuation(s, ten, nil)
	fakeModifications(t, s, v, flat(5), flat(3))
	r = closeOf(t, s, v, nil).Expense
	if want := 12_000 * 90.0 / 730; math.Abs(r.Period-want) > tolCent || r.Modifications[0].Cost != 0 {
		t.Errorf("a lower value after: expense %.2f (want %.2f), cost added %.2f (want 0)", r.Period, want, r.Modifications[0].Cost)
	}
}
