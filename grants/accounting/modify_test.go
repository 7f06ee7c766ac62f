package accounting

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"strings"
	"testing"
	"time"

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
// Its grant-date cost was recognized at grant (vested at once), so the
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
		{"unrecognized", r.Unrecognized, 0},
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
		{"increment unrecognized", me.Unrecognized, 2_400 * 275.0 / 365},
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

// TestIFRS2RepricingExample reproduces the repricing example of the
// IFRS 2 implementation guidance (IG Example 7; figures from memory), as
// far as its stated inputs allow. 500 employees get 100 options each at
// the start of year 1, vesting after three years of service, fair value 15
// each at grant. By the end of year 1 the share price has fallen and the
// options are repriced: worth 5 each just before, 8 just after (the
// example gives both values; so does this test), so the increment of 3 is
// earned over the two years left (IFRS 2 B43(a)). Departures: 40 in year
// 1, 35 in year 2, 28 in year 3; the expected total departures were 110
// at the end of year 1 and 105 at the end of year 2.
//
//	year 1: 390 × 100 × 15 × 1/3                                 = 195,000
//	year 2: 395 × 100 × (15 × 2/3 + 3 × 1/2) − 195,000           = 259,250
//	year 3: 397 × 100 × (15 + 3) − 454,250                       = 260,350
//
// Here the 50,000 options are one grant, vesting on 2024-01-01 after 1,095
// days (no leap day, so a year is a third); the repricing is dated
// 2022-01-01, so that the day count earns none of the increment in year 1,
// as the example does; each departure is a forfeiture mid-year. The
// expected departures are an annual rate (the schedule's
// pre_vesting_forfeiture_rate): at the end of year 1, 46,000 options live
// with two years to go and 39,000 expected, so (1 − r)² = 39/46; at the end
// of year 2, 42,500 live with one year to go and 39,500 expected, so
// 1 − r = 395/425. Each year is closed after the last (value --prior):
// the change of rate is a catch-up of the year's expense, which is the
// year's figure in total.
func TestIFRS2RepricingExample(t *testing.T) {
	d := grantstest.Day
	k := 6.0
	sched := func(end string, rate float64) *grants.Schedule {
		s := &grants.Schedule{
			Company: grants.Company{Name: "Oakmere Textiles plc", ValuationDate: d(end), Currency: "GBP"},
			Assumptions: grants.Assumptions{Volatility: 0.4, Attribution: grants.Graded, Forfeitures: grants.Estimate, Framework: grants.IFRS2,
				PreVestingForfeitureRate: rate},
			Grants: []grants.Grant{{ID: "IG7", Instrument: grants.Option, GrantDate: d("2021-01-01"), VestStart: d("2021-01-01"),
				Shares: 50_000, Strike: 20, ExpiryDate: d("2031-01-01"), VestMonths: 36, CliffMonths: 36, VestEvery: 1}},
			SharePrices: []grants.PricePoint{{Date: d("2020-12-31"), Price: 20}},
			Events: []grants.Event{
				{GrantID: "IG7", Date: d("2021-06-30"), Kind: grants.Forfeited, Shares: 4_000},
				{GrantID: "IG7", Date: d("2022-06-30"), Kind: grants.Forfeited, Shares: 3_500},
				{GrantID: "IG7", Date: d("2023-06-30"), Kind: grants.Forfeited, Shares: 2_800},
			},
			Modifications: []grants.Modification{{GrantID: "IG7", Date: d("2022-01-01"), NewStrike: &k}},
		}
		var evs []grants.Event
		for _, e := range s.Events {
			if !e.Date.After(s.Company.ValuationDate) {
				evs = append(evs, e)
			}
		}
		s.Events = evs
		s.Company.PeriodStart = s.Company.DefaultPeriodStart(s.Company.ValuationDate)
		return s
	}
	r1 := 1 - math.Sqrt(39.0/46)
	r2 := 1 - 395.0/425
	var prior *Prior
	for _, y := range []struct {
		end        string
		rate       float64
		cumulative float64
		expense    float64
	}{
		{"2021-12-31", r1, 195_000, 0},
		{"2022-12-31", r2, 454_250, 259_250},
		{"2023-12-31", r2, 714_600, 260_350},
	} {
		s := sched(y.end, y.rate)
		v := fakeValuation(s, func(grants.Grant, int) float64 { return 15 }, prior)
		fakeModifications(t, s, v, flat(5), flat(8))
		b := closeOf(t, s, v, prior)
		r := b.Expense
		if math.Abs(r.Cumulative-y.cumulative) > tolCent {
			t.Errorf("%s: cumulative %.2f, want %.2f", y.end, r.Cumulative, y.cumulative)
		}
		if prior != nil {
			if math.Abs(r.Period-y.expense) > tolCent {
				t.Errorf("%s: the year's expense %.2f, want %.2f", y.end, r.Period, y.expense)
			}
			if err := b.Reconciliation.Check(); err != nil {
				t.Errorf("%s: %v", y.end, err)
			}
		}
		prior = Filed(s, v, b)
	}
}

// TestReplacementOfLowerValue: oneOption's 1,200 shares (grant-date value
// 10, vesting 2027-01-01) are cancelled on 2026-01-01 and replaced by a
// grant of 1,000 shares vesting on the same day, worth 2 each on the
// date, when the cancelled shares are worth 4 each (values given). The
// replacement, 2,000, is worth less than what it replaces, 4,800, so no
// incremental cost is booked, and the grant-date cost of 12,000 stays
// (ASC 718-20-35-8; IFRS 2.28(c)): it is taken over by the replacement and
// earned over the service left, which here ends on the same day, so the
// expense is the one the original would have had:
//
//	quarter to 2026-03-31: 12,000 × 90/730 = 1,479.45
//
// and none of it is recognized at once, as a cancellation without a
// replacement would (ASC 718-20-35-9). One worth 6 a share (6,000) adds
// 6,000 − 4,800 = 1,200 over its year of service: 1,200 × 90/365 = 295.89
// in the quarter.
func TestReplacementOfLowerValue(t *testing.T) {
	d := grantstest.Day
	for _, c := range []struct {
		name      string
		worth     float64 // the replacement's value per share on the date
		increment float64
	}{{"lower", 2, 0}, {"higher", 6, 1_200}} {
		s := oneOption("2026-03-31", Policy{Forfeitures: grants.AsOccur})
		s.Grants = append(s.Grants, grants.Grant{ID: "L-2", Instrument: grants.Option, GrantDate: d("2026-01-01"), VestStart: d("2026-01-01"),
			Shares: 1_000, Strike: 3, ExpiryDate: d("2036-01-01"), VestMonths: 12, CliffMonths: 12, VestEvery: 1})
		s.Events = []grants.Event{{GrantID: "L-1", Date: d("2026-01-01"), Kind: grants.Cancelled, Shares: 1_200, ReplacementGrantID: "L-2"}}
		v := fakeValuation(s, func(g grants.Grant, _ int) float64 {
			if g.ID == "L-2" {
				return c.worth
			}
			return 10
		}, nil)
		fakeModifications(t, s, v, flat(4), nil)
		r := closeOf(t, s, v, nil).Expense
		want := 12_000*90.0/730 + c.increment*90.0/365
		if math.Abs(r.Period-want) > tolCent {
			t.Errorf("%s: expense %.2f, want %.2f", c.name, r.Period, want)
		}
		var cost float64
		for _, g := range r.Grants {
			cost += g.Cost
		}
		if math.Abs(cost-(12_000+c.increment)) > tolCent {
			t.Errorf("%s: total cost %.2f, want %.2f (the grant-date cost kept)", c.name, cost, 12_000+c.increment)
		}
		me := r.Modifications[0]
		if me.Replacement != "L-2" || math.Abs(me.Increment-c.increment) > tolCent || math.Abs(me.Before-4_800) > tolCent ||
			math.Abs(me.After-1_000*c.worth) > tolCent || math.Abs(me.Carried-12_000) > tolCent || math.Abs(me.Earned-6_000) > tolCent {
			t.Errorf("%s: %+v", c.name, me)
		}
		if math.Abs(me.Cost-c.increment) > tolCent {
			t.Errorf("%s: the exchange adds %.2f to the cost, want %.2f", c.name, me.Cost, c.increment)
		}
	}
}

// typeIII is an invented grant of 1,200 options (fair value 2 at grant on
// 2025-01-01) vesting all at once after a year (2026-01-01). Its holder
// leaves on 2025-11-01, after ten months, and the board waives the cliff
// that day: under the monthly vesting without it, 1,000 shares vest on the
// day, and the other 200 (due on 2025-12-01 and 2026-01-01) are forfeited.
// Worth 1.20 a share just before and 1.50 just after (values given).
func typeIII(fw grants.Framework) (*grants.Schedule, *pricing.Valuation) {
	d := grantstest.Day
	pol := Policy{Forfeitures: grants.AsOccur}
	if fw == grants.IFRS2 {
		pol.Forfeitures = grants.Estimate
	}
	s := oneOption("2025-12-31", pol)
	s.Assumptions.Framework = fw
	s.Grants[0].VestMonths, s.Grants[0].CliffMonths = 12, 12
	s.Events = []grants.Event{{GrantID: "L-1", Date: d("2025-11-01"), Kind: grants.Forfeited, Shares: 200}}
	s.Modifications = []grants.Modification{{GrantID: "L-1", Date: d("2025-11-01"), NewCliffMonths: ip(0), Note: "good leaver"}}
	return s, fakeValuation(s, func(grants.Grant, int) float64 { return 2 }, nil)
}

// TestTypeIIIByHand: the cliff waiver for the leaver vests 1,000 shares
// that were not expected to vest (the holder leaves that day): under ASC
// 718 an improbable-to-probable change (ASC 718-20-55-116, Type III). The
// grant-date cost earned on them is reversed and their fair value on the
// date recognized at once instead, the modification-date value, not the
// original (as forfeitures occur):
//
//	opening, 2025-09-30:  1,200 × 2 × 273/365            = 1,795.07
//	reversed on the date: 1,000 × 2 × 304/365 (to 10-31) = 1,665.75
//	recognized:           1,000 × 1.50                   = 1,500.00
//	cumulative at 2025-12-31                              = 1,500.00
//	the quarter's expense: 1,500 − 1,795.07              =  −295.07
//
// Under IFRS 2, which has no such category (B43), the 1,000 shares keep
// their grant-date cost, brought forward to the day they now vest, and
// the increase of 0.30 a share is added: 1,000 × (2 + 0.30) = 2,300.
func TestTypeIIIByHand(t *testing.T) {
	s, v := typeIII(grants.ASC718)
	fakeModifications(t, s, v, flat(1.2), flat(1.5))
	r := closeOf(t, s, v, nil).Expense
	me := r.Modifications[0]
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"cumulative", r.Cumulative, 1_500},
		{"expense", r.Period, 1_500 - 1_200*2*273.0/365},
		{"reversed", me.Reversed, 1_000 * 2 * 304.0 / 365},
		{"cost of the change", me.Cost, 1_500},
		{"unrecognized", r.Unrecognized, 0},
	} {
		if math.Abs(c.got-c.want) > tolCent {
			t.Errorf("%s: %.4f, want %.4f", c.name, c.got, c.want)
		}
	}
	if !me.Improbable || len(me.Parts) != 3 || me.Parts[0].Improbable != 1_000 || me.Parts[0].Increment != 1.5 {
		t.Errorf("%+v", me)
	}

	s, v = typeIII(grants.IFRS2)
	fakeModifications(t, s, v, flat(1.2), flat(1.5))
	r = closeOf(t, s, v, nil).Expense
	if want := 1_000 * (2 + 0.3); math.Abs(r.Cumulative-want) > tolCent || r.Modifications[0].Improbable {
		t.Errorf("IFRS 2: cumulative %.2f, want %.2f; %+v", r.Cumulative, want, r.Modifications[0])
	}
}

// TestAccelerationByHand: the same cliff waiver for a holder who stays
// (probable to probable, ASC 718-20-35-3 Type I; IFRS 2 B43(c)). The
// grant-date cost is not reversed: the 1,000 shares now vesting on
// 2025-11-01 have what was left of their cost recognized that day, and
// the two tranches of 100 (2025-12-01, 2026-01-01) have theirs spread from
// the date to their new vest dates. With the same value before and after
// nothing is added, and the cost stays 2,400:
//
//	1,000 × 2                                              = 2,000.00
//	100 × 2 (vested 2025-12-01)                            =   200.00
//	100 × 2 × (304/365 + (1 − 304/365) × 61/61) to 12-31   =   200.00
//	cumulative at 2025-12-31                               = 2,400.00
//
// (the last tranche vests 2026-01-01, so by the end of 2025-12-31 it is
// fully earned, as the package notes on days say).
func TestAccelerationByHand(t *testing.T) {
	s, v := typeIII(grants.ASC718)
	s.Events = nil
	fakeModifications(t, s, v, flat(1.2), flat(1.2))
	r := closeOf(t, s, v, nil).Expense
	if math.Abs(r.Cumulative-2_400) > tolCent || r.Grants[0].Cost != 2_400 || r.Modifications[0].Improbable {
		t.Errorf("cumulative %.2f, cost %.2f, want 2,400 each; %+v", r.Cumulative, r.Grants[0].Cost, r.Modifications[0])
	}
	// At the end of 2025-11-30 the 100 shares vesting 2025-12-01 are
	// fully earned, and those vesting 2026-01-01 have earned
	// 304/365 + (61/365)·(30/61) of their cost.
	s.Company.ValuationDate = grantstest.Day("2025-11-30")
	r = closeOf(t, s, v, nil).Expense
	want := 2_200 + 200*(304.0/365+(61.0/365)*(30.0/61))
	if math.Abs(r.Cumulative-want) > tolCent {
		t.Errorf("at 2025-11-30: cumulative %.2f, want %.2f", r.Cumulative, want)
	}
}

// TestModificationAcrossCloses: ashgrove's repricing of 2026-08-14,
// closed quarter after quarter (value --prior).
//
//   - Booked in the quarter to 2026-09-30, its values are filed; the next
//     close keeps them like grant-date values (ASC 718-10-30-6 and
//     718-20-35-3: the modification is measured once, on its date), even
//     when the Share Prices row of that day is changed afterwards.
//   - A change of the modification's terms after it was filed must be
//     corrected (the error wraps pricing.ErrLock).
//   - Recorded only after the quarter it is dated in was closed, it is a
//     catch-up of the open quarter with its cause (late_modification):
//     the whole increment, as the option is vested.
func TestModificationAcrossCloses(t *testing.T) {
	d := grantstest.Day
	at := func(end string, withMod bool) *grants.Schedule {
		s := ashgrove()
		s.Company.ValuationDate, s.Company.PeriodStart = d(end), s.Company.DefaultPeriodStart(d(end))
		if !withMod {
			s.Modifications = nil
		}
		return s
	}
	q3s := at("2026-09-30", true)
	v3, b3 := valueAndClose(t, q3s, nil)
	inc := b3.Expense.Modifications[0].Increment
	prior := Filed(q3s, v3, b3)
	if len(prior.Grants[0].Modifications) != 1 {
		t.Fatalf("filed %d modifications", len(prior.Grants[0].Modifications))
	}

	q4s := at("2026-12-31", true)
	q4s.SharePrices[1].Price = 4.2 // the valuation of 2026-08-14, revised
	v4, b4 := valueAndClose(t, q4s, prior)
	if mv := v4.Modifications[0]; mv.Status != pricing.Locked || mv.AfterValues[0] != v3.Modifications[0].AfterValues[0] {
		t.Errorf("the next close's modification is %s at %v, want locked at %v", mv.Status, mv.AfterValues[0].Value, v3.Modifications[0].AfterValues[0].Value)
	}
	if b4.Expense.Period != 0 || len(b4.Reconciliation.CatchUps) != 0 {
		t.Errorf("Q4: expense %.2f, catch-ups %+v; want none", b4.Expense.Period, b4.Reconciliation.CatchUps)
	}

	k := 3.5
	q4s = at("2026-12-31", true)
	q4s.Modifications[0].NewStrike = &k
	if _, err := Open(q4s, prior); err != nil {
		t.Fatal(err)
	}
	ins, _, _ := q4s.ValueInputs()
	if _, err := pricing.Value(q4s, ins, pricing.Options{Locks: prior.Locks()}); !errors.Is(err, pricing.ErrLock) {
		t.Errorf("a changed repricing: %v, want an error wrapping ErrLock", err)
	}

	// Recorded late.
	q3s = at("2026-09-30", false)
	v3, b3 = valueAndClose(t, q3s, nil)
	prior = Filed(q3s, v3, b3)
	_, b4 = valueAndClose(t, at("2026-12-31", true), prior)
	cu := b4.Reconciliation.CatchUps
	if len(cu) != 1 || cu[0].Cause != CauseLateModification || math.Abs(cu[0].Amount-inc) > tolCent || !strings.Contains(cu[0].Detail, "modification of 2026-08-14") {
		t.Errorf("catch-ups %+v, want one late_modification of %.2f", cu, inc)
	}
	if math.Abs(b4.Expense.Period-inc) > tolCent {
		t.Errorf("Q4 expense %.2f, want the catch-up %.2f", b4.Expense.Period, inc)
	}
}

// TestReconciliationModificationsLine: the walk from the prior close shows
// the period's modifications on a line of their own: the unrecognized
// cost gains the increment (cost line), the expense the part of it
// recognized in the period. oneOption, closed at 2025-12-31 and then at
// 2026-03-31 with a repricing on 2026-01-01 worth 2 a share more
// (TestRepricingUnvestedByHand): 2,400 added, 591.78 recognized.
func TestReconciliationModificationsLine(t *testing.T) {
	pol := Policy{Forfeitures: grants.AsOccur}
	q4 := oneOption("2025-12-31", pol)
	v := fakeValuation(q4, ten, nil)
	prior := Filed(q4, v, closeOf(t, q4, v, nil))
	s := oneOption("2026-03-31", pol)
	k := 2.0
	s.Modifications = []grants.Modification{{GrantID: "L-1", Date: grantstest.Day("2026-01-01"), NewStrike: &k}}
	v = fakeValuation(s, ten, prior)
	fakeModifications(t, s, v, flat(3), flat(5))
	r := closeOf(t, s, v, prior).Reconciliation
	if err := r.Check(); err != nil {
		t.Fatal(err)
	}
	if got := line(t, r.Unrecognized, "modifications"); math.Abs(got-2_400) > tolCent {
		t.Errorf("unrecognized cost walk: modifications %.2f, want 2,400", got)
	}
	if got := line(t, r.Expense, "modifications"); math.Abs(got-2_400*90.0/365) > tolCent {
		t.Errorf("expense walk: modifications %.2f, want %.2f", got, 2_400*90.0/365)
	}
	if got := line(t, r.Expense, "service"); math.Abs(got-12_000*90.0/730) > tolCent {
		t.Errorf("expense walk: service %.2f, want %.2f", got, 12_000*90.0/730)
	}
}

// TestLeaverWindowByHand: a good leaver's exercise window extended. An
// invented option of 4,800 shares at strike 2, granted 2024-08-01 and
// vesting monthly over 48 months without a cliff, to expire 2034-08-01.
// Its holder leaves on 2026-08-01, when 24 months (2,400 shares) have
// vested; the other 2,400 are forfeited that day. The board lets the
// leaver keep the vested options for a year (new expiry 2027-08-01, exit
// rate 0). The share is worth 3 that day; flat 4% rates, volatility 50%,
// no dividends or exercise multiple.
//
// Before the change the leaver's vested options are worth what leaving
// gives them under the lattice's exit, exercise at once: 3 − 2 = 1.00 a
// share. After it they are a one-year option, which with no multiple, exit
// or dividends is the Black-Scholes-Merton call: QuantLib 1.29 gives
// 1.19868972 (testdata/quantlib_reprice_gen.py). The options are vested,
// so the increment is booked at once in the quarter (ASC 718-20-35-3;
// IFRS 2.27 and B43(b)):
//
//	increment = 2,400 × (1.19868972 − 1.00) = 476.86
//
// The 2,400 unvested shares were not expected to vest before the change
// and do not vest after it (improbable to improbable, ASC 718-20-55-116
// Type IV): they add nothing and their grant-date cost is reversed by the
// forfeiture, so the grant's cost is the 2,400 vested shares' grant-date
// cost plus the increment.
func TestLeaverWindowByHand(t *testing.T) {
	var ref struct {
		Leaver struct {
			Value float64 `json:"value"`
		} `json:"leaver"`
	}
	data, err := os.ReadFile("testdata/quantlib_reprice.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(data, &ref); err != nil || ref.Leaver.Value == 0 {
		t.Fatalf("reference: %v", err)
	}
	d := grantstest.Day
	zero := 0.0
	s := &grants.Schedule{
		Company:     grants.Company{Name: "Brackenfield Optics, Inc.", ValuationDate: d("2026-09-30"), PeriodStart: d("2026-07-01"), Currency: "USD"},
		Assumptions: grants.Assumptions{Volatility: 0.5, Attribution: grants.Graded, Forfeitures: grants.AsOccur, PostVestingExitRate: 0.10},
		Grants: []grants.Grant{{ID: "B-1", Instrument: grants.Option, GrantDate: d("2024-08-01"), VestStart: d("2024-08-01"),
			Shares: 4_800, Strike: 2, ExpiryDate: d("2034-08-01"), VestMonths: 48, VestEvery: 1}},
		SharePrices: []grants.PricePoint{{Date: d("2024-07-31"), Price: 2}, {Date: d("2026-07-31"), Price: 3}},
		Rates:       []grants.RatePoint{{CurveDate: d("2024-01-01"), TenorYears: 1, Rate: 0.04}, {CurveDate: d("2024-01-01"), TenorYears: 10, Rate: 0.04}},
		Events:      []grants.Event{{GrantID: "B-1", Date: d("2026-08-01"), Kind: grants.Forfeited, Shares: 2_400}},
		Modifications: []grants.Modification{{GrantID: "B-1", Date: d("2026-08-01"), NewExpiryDate: d("2027-08-01"), NewExitRate: &zero,
			Note: "good leaver: a year to exercise"}},
	}
	v, b := valueAndClose(t, s, nil)
	mv := v.Modifications[0]
	const tolVanilla = 1e-5 // DESIGN §5, the vanilla limits
	var vested int64
	for j, p := range mv.Change().Parts {
		if !p.Vested(mv.Change().Date) {
			continue
		}
		vested += p.Shares
		if mv.BeforeValues[j].Value != 1 {
			t.Errorf("part %d before: %v, want the intrinsic value 1", j+1, mv.BeforeValues[j].Value)
		}
		if got := mv.AfterValues[j].Value; math.Abs(got/ref.Leaver.Value-1) > tolVanilla {
			t.Errorf("part %d after: lattice %.8f, QuantLib %.8f", j+1, got, ref.Leaver.Value)
		}
	}
	if vested != 2_400 {
		t.Fatalf("%d vested shares touched, want 2,400", vested)
	}
	me := b.Expense.Modifications[0]
	want := 2_400 * (ref.Leaver.Value - 1)
	tol := 2_400 * tolVanilla * ref.Leaver.Value
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"increment", me.Increment, want},
		{"cost added", me.Cost, want},
		{"in the quarter", me.Period, want},
		{"unrecognized", me.Unrecognized, 0},
	} {
		if math.Abs(c.got-c.want) > tol {
			t.Errorf("%s: %.4f, want %.4f", c.name, c.got, c.want)
		}
	}
	t.Logf("after %.8f (QuantLib %.8f), increment %.2f", mv.AfterValues[0].Value, ref.Leaver.Value, me.Increment)
	var base float64
	for _, tr := range b.Expense.Grants[0].Tranches {
		if !tr.VestDate.After(d("2026-08-01")) {
			base += tr.FairValue * float64(tr.Shares)
		}
	}
	if got := b.Expense.Grants[0].Cost; math.Abs(got-(base+me.Cost)) > tolCent {
		t.Errorf("grant cost %.2f, want the vested shares' grant-date cost %.2f plus the increment %.2f", got, base, me.Cost)
	}
	for _, p := range me.Parts {
		if !p.Vested && (p.Increment != 0 || p.Attribution(me.Date) != "none: forfeited on 2026-08-01") {
			t.Errorf("unvested part %+v: attributed %q", p, p.Attribution(me.Date))
		}
	}

	// Without the new expiry the award after the change would be valued as
	// if the holder stayed: the schedule draws a warning on the cell.
	s.Modifications[0].NewExpiryDate = time.Time{}
	rep := grants.Validate(s)
	found := false
	for _, w := range rep.Warnings {
		if w.Column == "new_expiry_date" && strings.Contains(w.Msg, "leaves on 2026-08-01") {
			found = true
		}
	}
	if !found {
		t.Errorf("no warning on new_expiry_date for a leaver's change: %v", rep.Warnings)
	}
}

// TestDecelerationByHand: a change that makes vesting slower. oneOption's
// 1,200 shares (fair value 10 at grant on 2025-01-01, all vesting
// 2027-01-01 after 730 days) get a three-year cliff on 2026-01-01, so
// they would vest on 2028-01-01, worth 3 a share before and after (values
// given): no increment. A change not beneficial to the holder is not
// taken into account (IFRS 2 B44(c)); the grant-date cost is recognized
// when the original service condition is met, whether or not the new one
// is (ASC 718-20-55-116, Type II, probable to improbable), so the cost is
// earned over the original service to 2027-01-01 and kept when the holder
// leaves on 2027-06-01, between the two vest dates (as forfeitures occur):
//
//	2026-03-31: 12,000 × 455/730 = 7,479.45
//	2026-12-31: 12,000 (the last day's service ends the period)
//	2027-06-30: 12,000, nothing reversed by the departure
//
// A departure before the original vest date (2026-06-01) forfeits the
// shares as it would have without the change: nothing is left.
func TestDecelerationByHand(t *testing.T) {
	d := grantstest.Day
	for _, c := range []struct {
		end, leaves string
		cumulative  float64
	}{
		{"2026-03-31", "", 12_000 * 455.0 / 730},
		{"2026-12-31", "", 12_000},
		{"2027-06-30", "2027-06-01", 12_000},
		{"2026-06-30", "2026-06-01", 0},
	} {
		s := oneOption(c.end, Policy{Forfeitures: grants.AsOccur})
		s.Modifications = []grants.Modification{{GrantID: "L-1", Date: d("2026-01-01"), NewVestMonths: ip(36), NewCliffMonths: ip(36)}}
		if c.leaves != "" {
			s.Events = []grants.Event{{GrantID: "L-1", Date: d(c.leaves), Kind: grants.Forfeited, Shares: 1_200}}
		}
		v := fakeValuation(s, ten, nil)
		fakeModifications(t, s, v, flat(3), flat(3))
		r := closeOf(t, s, v, nil).Expense
		if math.Abs(r.Cumulative-c.cumulative) > tolCent {
			t.Errorf("%s (leaving %q): cumulative %.2f, want %.2f", c.end, c.leaves, r.Cumulative, c.cumulative)
		}
		if me := r.Modifications[0]; me.Cost != 0 || me.Improbable {
			t.Errorf("%s: the change adds %.2f (improbable %v), want nothing", c.end, me.Cost, me.Improbable)
		}
	}
}
