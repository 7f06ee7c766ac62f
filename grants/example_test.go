package grants_test

import (
	"fmt"
	"time"

	"grantworth/grants"
)

// Read the demo schedule, expand a grant into tranches and gather its
// valuation inputs with their sources.
func ExampleSchedule_Inputs() {
	s, rep, err := grants.ReadFile("../sample/tarnwick.xlsx")
	if err != nil || !rep.OK() {
		fmt.Println(err, rep.Err())
		return
	}
	g, _ := s.Grant("TW-003")
	in, err := s.Inputs(g)
	if err != nil {
		fmt.Println(err)
		return
	}
	first, last := in.Tranches[0], in.Tranches[len(in.Tranches)-1]
	fmt.Printf("%s: %d shares, measured %s, %d tranches\n", g.ID, g.Shares, in.MeasurementDate.Format(time.DateOnly), len(in.Tranches))
	fmt.Printf("first %d on %s, last %d on %s (%d forfeited)\n", first.Shares, first.VestDate.Format(time.DateOnly), last.Shares, last.VestDate.Format(time.DateOnly), last.Forfeited)
	fmt.Printf("S0 %.2f from %s\n", in.Market.Spot, in.SharePrice.Text)
	fmt.Printf("K %.2f, T %.4f years, V %.4f years (first tranche)\n", in.Terms[0].Strike, in.Terms[0].YearsToExpiry, in.Terms[0].YearsToVest)
	fmt.Printf("sigma %.2f from %s\n", in.Volatility.Value, in.Volatility.Text)
	fmt.Printf("r(T) %.5f from %s\n", in.RiskFreeRate.Value, in.RiskFreeRate.Text)
	// Output:
	// TW-003: 7000 shares, measured 2023-12-09, 37 tranches
	// first 1750 on 2024-12-09, last 146 on 2027-12-09 (146 forfeited)
	// S0 0.85 from Share Prices!B2 (valuation of 2023-09-30)
	// K 0.85, T 10.0082 years, V 1.0027 years (first tranche)
	// sigma 0.52 from median of 5 peers' daily log-return volatility over 6.1 years to 2026-09-30 (grantworth vol sample/peers/*.csv, guideline peers) (Assumptions!B2)
	// r(T) 0.04779 from Rates curve of 2023-09-30, 8 points, continuous zero rates; at 10.01 years, flat beyond the 10-year rate (Rates!C9)
}
