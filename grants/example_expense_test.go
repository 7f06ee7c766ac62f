package grants_test

import (
	"fmt"
	"math"
	"time"

	"grantworth/grants"
)

// The IFRS 2 implementation guidance's cliff-vesting example (DESIGN §6):
// 100 options to each of 500 employees, fair value 15 each, three years of
// service, 20% expected to leave over the three years. Expense attributes
// 50,000 × 80% × 15 / 3 = 200,000 to each year.
func ExampleExpense() {
	day := func(s string) time.Time { t, _ := time.Parse(time.DateOnly, s); return t }
	award := grants.AwardCost{
		Grant: grants.Grant{ID: "CLIFF", Instrument: grants.Option, GrantDate: day("2029-01-01"), Shares: 50000, Strike: 20, ExpiryDate: day("2039-01-01")},
		Tranches: []grants.TrancheCost{{
			Tranche:   grants.Tranche{GrantID: "CLIFF", Index: 1, VestDate: day("2032-01-01"), Shares: 50000},
			FairValue: 15,
		}},
	}
	policy := grants.ExpensePolicy{
		Attribution: grants.Graded,
		Forfeitures: grants.Estimate,
		// (1 − rate)^3 = 0.8: the annual rate that leaves 80% after three years.
		PreVestingForfeitureRate: 1 - math.Cbrt(0.8),
	}
	r, err := grants.Expense([]grants.AwardCost{award}, policy, day("2030-01-01"), day("2030-12-31"))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("2030 expense %.0f, cumulative %.0f, unrecognised %.0f over %.2f years\n", r.Period, r.Cumulative, r.Unrecognized, r.RemainingYears)
	// Output: 2030 expense 200000, cumulative 400000, unrecognised 200000 over 1.00 years
}
