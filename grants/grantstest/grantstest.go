// Package grantstest holds invented schedules, and a helper that values
// them, for the tests of the packages above pricing (accounting, report,
// the command).
// They are demo data, not references: a test that checks a number against
// one of them works the number out by hand or checks an identity.
package grantstest

import (
	"testing"
	"time"

	"grantworth/grants"
	"grantworth/grants/pricing"
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
