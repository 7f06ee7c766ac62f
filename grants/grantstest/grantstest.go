// Package grantstest holds invented schedules, and a helper that values
// them, for the tests of the packages above pricing (accounting, report,
// the command).
// They are demo data, not references: a test that checks a number against
// one of them works the number out by hand or checks an identity.
package grantstest

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"grantworth/grants"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// Day parses an ISO date; it panics on a bad one (test data only).
func Day(s string) time.Time {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		panic(err)
	}
	return t
}

func f(x float64) *float64 { return &x }

// Fernhollow is an invented company with one award of each kind: a
// four-year option with a termination and an exercise, a
// liability-classified warrant, an RSU grant priced on its row, and an
// option vesting on the Vesting sheet; valued at 2026-09-30.
func Fernhollow() *grants.Schedule {
	d := Day
	return &grants.Schedule{
		Company: grants.Company{Name: "Fernhollow Devices, Inc.", ValuationDate: d("2026-09-30"), PeriodStart: d("2026-07-01"), Currency: "USD", SharesOutstanding: 20_000_000},
		Assumptions: grants.Assumptions{Volatility: 0.55, DividendYield: 0, ExerciseMultiple: 2.5, PostVestingExitRate: 0.1, PreVestingForfeitureRate: 0.08,
			Attribution: grants.Graded, Forfeitures: grants.Estimate, Sources: map[string]string{"volatility": "median of peers' daily volatility"}},
		Grants: []grants.Grant{
			{ID: "G-001", Holder: "E01", Instrument: grants.Option, GrantDate: d("2024-01-31"), Shares: 4800, Strike: 2.5, ExpiryDate: d("2034-01-31"),
				VestStart: d("2024-01-31"), VestMonths: 48, CliffMonths: 12, VestEvery: 1, Purpose: grants.Compensation},
			{ID: "G-002", Instrument: grants.Warrant, GrantDate: d("2025-03-15"), Shares: 100000, Strike: 4, ExpiryDate: d("2030-03-15"),
				VestStart: d("2025-03-15"), VestEvery: 1, Classification: grants.Liability, ExerciseStyle: grants.American, Purpose: grants.Compensation},
			{ID: "G-003", Instrument: grants.RSU, GrantDate: d("2025-06-30"), Shares: 1000, VestStart: d("2025-06-30"), VestMonths: 36, VestEvery: 12, SharePrice: f(3.1), Purpose: grants.Compensation},
			{ID: "G-004", Instrument: grants.Option, GrantDate: d("2025-02-01"), Shares: 1000, Strike: 3, ExpiryDate: d("2035-02-01"), VestStart: d("2025-02-01"), VestEvery: 1, Volatility: f(0.6), Purpose: grants.Compensation},
		},
		Vesting:     []grants.VestRow{{GrantID: "G-004", VestDate: d("2025-08-01"), Shares: 400}, {GrantID: "G-004", VestDate: d("2026-02-01"), Shares: 600}},
		SharePrices: []grants.PricePoint{{Date: d("2023-12-31"), Price: 2.0}, {Date: d("2024-12-31"), Price: 3.0}, {Date: d("2025-12-31"), Price: 4.5}},
		Rates: []grants.RatePoint{
			{CurveDate: d("2023-12-31"), TenorYears: 1, Rate: 0.045, Compounding: "continuous"},
			{CurveDate: d("2023-12-31"), TenorYears: 10, Rate: 0.04, Compounding: "continuous"},
			{CurveDate: d("2024-12-31"), TenorYears: 2, Rate: 0.042, Compounding: "annual"},
			{CurveDate: d("2026-06-30"), TenorYears: 5, Rate: 0.039, Compounding: "semiannual"},
		},
		Events: []grants.Event{{GrantID: "G-001", Date: d("2026-04-15"), Kind: grants.Forfeited, Shares: 2200}, {GrantID: "G-001", Date: d("2026-05-01"), Kind: grants.Exercised, Shares: 1000}},
	}
}

// Conditioned is Fernhollow with one award of each vesting condition: a
// performance share unit grant (P-001) whose assessment went from probable
// to improbable and back, an option exercisable only once the share has
// closed at or above 7.00 within four years (H-001), units vesting on a
// 20-day average price of 9.00 (H-002), and relative TSR units against
// three peers (T-001), their prices invented in Prices (the company's own
// first).
func Conditioned() *grants.Schedule {
	d := Day
	s := Fernhollow()
	s.Grants = append(s.Grants,
		grants.Grant{ID: "P-001", Instrument: grants.RSU, GrantDate: d("2025-01-01"), Shares: 1000, VestStart: d("2025-01-01"), VestMonths: 24, CliffMonths: 24, VestEvery: 12, Condition: "REV27"},
		grants.Grant{ID: "H-001", Instrument: grants.Option, GrantDate: d("2026-01-15"), Shares: 10000, Strike: 4.5, ExpiryDate: d("2036-01-15"),
			VestStart: d("2026-01-15"), VestMonths: 36, CliffMonths: 12, VestEvery: 12, Condition: "HURDLE7"},
		grants.Grant{ID: "H-002", Instrument: grants.RSU, GrantDate: d("2026-01-15"), Shares: 3000, VestStart: d("2026-01-15"), VestMonths: 12, CliffMonths: 12, VestEvery: 12, Condition: "AVG9"},
		grants.Grant{ID: "T-001", Instrument: grants.RSU, GrantDate: d("2026-03-31"), Shares: 2000, VestStart: d("2026-03-31"), VestMonths: 33, CliffMonths: 33, VestEvery: 12, Condition: "RTSR"},
	)
	cap1 := 1.0
	s.Conditions = []grants.Condition{
		{ID: "REV27", Kind: grants.Performance, Description: "FY2026 revenue of at least 12 million", MeasurementDate: d("2026-12-31"),
			ThresholdPayout: 0.5, TargetPayout: 1, MaximumPayout: 2, HurdleDays: 1, Monitoring: "daily"},
		{ID: "HURDLE7", Kind: grants.PriceHurdle, HurdlePrice: 7, HurdleDays: 1, Monitoring: "daily", HurdleDeadline: d("2030-01-15"), TargetPayout: 1, MaximumPayout: 1},
		{ID: "AVG9", Kind: grants.PriceHurdle, HurdlePrice: 9, HurdleDays: 20, Monitoring: "daily", HurdleDeadline: d("2029-01-15"), TargetPayout: 1, MaximumPayout: 1},
		{ID: "RTSR", Kind: grants.RelativeTSR, PeriodStart: d("2026-01-01"), PeriodEnd: d("2028-12-31"), OwnPrices: "own.csv", NegativeCap: &cap1,
			TargetPayout: 1, MaximumPayout: 1, HurdleDays: 1, Monitoring: "daily"},
	}
	s.Assessments = []grants.Assessment{
		{ConditionID: "REV27", Date: d("2025-01-01"), Probable: true},
		{ConditionID: "REV27", Date: d("2025-07-01"), Probable: false, Note: "a key customer left"},
		{ConditionID: "REV27", Date: d("2026-01-01"), Probable: true, ExpectedPayout: f(1.5), Note: "two new customers"},
	}
	s.PayoutCurve = []grants.PayoutRow{{ConditionID: "RTSR", Percentile: 0.25, Payout: 0.5}, {ConditionID: "RTSR", Percentile: 0.5, Payout: 1}, {ConditionID: "RTSR", Percentile: 0.75, Payout: 2}}
	hs := Prices()
	s.Conditions[3].Own = hs[0]
	for i, h := range hs[1:] {
		s.Peers = append(s.Peers, grants.Peer{ConditionID: "RTSR", Name: fmt.Sprintf("Peer %c", 'A'+i), File: h.File, History: h, Row: i + 2})
	}
	return s
}

// Prices are invented daily closing prices, 2024-01-02 to 2026-09-30 on
// weekdays, of the company and three peers, from a seeded correlated
// random walk (volatilities 55%, 40%, 35%, 60%; correlation 0.5 with the
// company).
func Prices() []*grants.PriceHistory {
	vols := []float64{0.55, 0.40, 0.35, 0.60}
	start := []float64{3.0, 20, 45, 8}
	names := []string{"own.csv", "peer-a.csv", "peer-b.csv", "peer-c.csv"}
	rng := rand.New(rand.NewPCG(17, 2026))
	hs := make([]*grants.PriceHistory, len(vols))
	for i := range hs {
		hs[i] = &grants.PriceHistory{File: names[i], Column: "close"}
	}
	p := append([]float64(nil), start...)
	line := 2
	for t := d0(); !t.After(Day("2026-09-30")); t = t.AddDate(0, 0, 1) {
		if t.Weekday() == time.Saturday || t.Weekday() == time.Sunday {
			continue
		}
		common := rng.NormFloat64()
		for i, v := range vols {
			z := 0.5*common + math.Sqrt(0.75)*rng.NormFloat64()
			if i == 0 {
				z = common
			}
			p[i] *= math.Exp(v*math.Sqrt(1.0/252)*z - v*v/(2*252))
			hs[i].Points = append(hs[i].Points, valuation.PricePoint{Date: t, Price: math.Round(p[i]*100) / 100})
			hs[i].Lines = append(hs[i].Lines, line)
		}
		line++
	}
	return hs
}

func d0() time.Time { return Day("2024-01-02") }

// Value values s on the lattice as the value command does, keeping the
// locks of a prior close (nil for none); a problem fails tb.
func Value(tb testing.TB, s *grants.Schedule, locks map[string]pricing.Lock) *pricing.Valuation {
	tb.Helper()
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		tb.Fatal(errs)
	}
	v, err := pricing.Value(s, ins, pricing.Options{Locks: locks})
	if err != nil {
		tb.Fatal(err)
	}
	return v
}
