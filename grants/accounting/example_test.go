package accounting_test

import (
	"fmt"
	"time"

	"grantworth/grants"
	"grantworth/grants/accounting"
)

// A three-year cliff grant of 50,000 options at a fair value of 15 each
// (the shape of the IFRS 2 implementation guidance's cliff example; the
// forfeiture estimate is tested in TestIFRS2CliffForfeitureEstimate).
func ExampleExpense() {
	day := func(s string) time.Time { t, _ := time.Parse(time.DateOnly, s); return t }
	award := accounting.Award{
		Grant: grants.Grant{ID: "CLIFF", Instrument: grants.Option, GrantDate: day("2029-01-01"), Shares: 50000, Strike: 20, ExpiryDate: day("2039-01-01")},
		Tranches: []accounting.TrancheCost{{
			Tranche:   grants.Tranche{GrantID: "CLIFF", Index: 1, VestDate: day("2032-01-01"), Shares: 50000},
			FairValue: 15,
		}},
	}
	// Forfeitures as they occur: nobody has left, so each of the three
	// service years carries a third of 50,000 × 15.
	policy := accounting.Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}
	r, err := accounting.Expense([]accounting.Award{award}, policy, day("2030-01-01"), day("2030-12-31"))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("2030 expense %.0f, cumulative %.0f, unrecognized %.0f over %.2f years\n", r.Period, r.Cumulative, r.Unrecognized, r.RemainingYears)
	// Output: 2030 expense 250000, cumulative 500000, unrecognized 250000 over 1.00 years
}
