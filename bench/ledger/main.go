// Command ledger writes a large invented grant schedule for timing the
// value command end to end: n option grants (default 10,000) of an
// invented company, granted over 2023-2026 at the share price of the day,
// most with four-year monthly vesting after a one-year cliff, some
// quarterly or annual, with a share price step per half-year and a rate
// curve per quarter. The seed is fixed, so the file is the same each time.
//
//	go run ./bench/ledger -n 10000 -out /tmp/ledger.xlsx
//	/usr/bin/time -v go run ./cmd/grantworth value /tmp/ledger.xlsx --out /tmp/ledger-out
package main

import (
	"bytes"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"time"

	"grantworth/grants"
)

func main() {
	n := flag.Int("n", 10000, "number of grants")
	out := flag.String("out", "ledger.xlsx", "workbook to write")
	flag.Parse()
	var buf bytes.Buffer
	if err := grants.WriteXLSX(&buf, ledger(*n)); err != nil {
		fmt.Fprintln(os.Stderr, "ledger:", err)
		os.Exit(1)
	}
	if err := os.WriteFile(*out, buf.Bytes(), 0o644); err != nil {
		fmt.Fprintln(os.Stderr, "ledger:", err)
		os.Exit(1)
	}
	fmt.Printf("wrote %s: %d grants, %d bytes\n", *out, *n, buf.Len())
}

func day(s string) time.Time {
	t, err := time.Parse("2006-01-02", s)
	if err != nil {
		panic(err)
	}
	return t
}

func ledger(n int) *grants.Schedule {
	rng := rand.New(rand.NewPCG(2026, 9))
	s := &grants.Schedule{
		Company: grants.Company{Name: "Orrin Quarry Software, Inc.", ValuationDate: day("2026-09-30"),
			PeriodStart: day("2026-07-01"), Currency: "USD", SharesOutstanding: 90_000_000},
		Assumptions: grants.Assumptions{Volatility: 0.5, ExerciseMultiple: 2.5, PostVestingExitRate: 0.1,
			PreVestingForfeitureRate: 0.08, Attribution: grants.Graded, Forfeitures: grants.Estimate,
			Sources: map[string]string{"volatility": "invented ledger for timing runs"}},
	}
	price := 1.2
	for d := day("2022-12-31"); d.Before(day("2026-10-01")); d = grants.AddMonths(d, 6) {
		s.SharePrices = append(s.SharePrices, grants.PricePoint{Date: d, Price: price})
		price *= 1.12
	}
	for q := day("2022-12-31"); q.Before(day("2026-10-01")); q = grants.AddMonths(q.AddDate(0, 0, 1), 3).AddDate(0, 0, -1) {
		base := 0.03 + 0.01*rng.Float64()
		for _, tn := range []float64{0.5, 1, 2, 5, 10} {
			s.Rates = append(s.Rates, grants.RatePoint{CurveDate: q, TenorYears: tn, Rate: base + 0.001*tn, Compounding: "continuous"})
		}
	}
	for i := range n {
		gd := day("2023-01-02").AddDate(0, 0, rng.IntN(1360))
		every := []int{1, 1, 1, 1, 1, 1, 3, 12}[rng.IntN(8)]
		s.Grants = append(s.Grants, grants.Grant{
			ID: fmt.Sprintf("OQ-%05d", i+1), Holder: fmt.Sprintf("E%05d", rng.IntN(4000)), Instrument: grants.Option,
			GrantDate: gd, Shares: int64(100 * (1 + rng.IntN(300))), Strike: priceAt(s, gd),
			ExpiryDate: grants.AddMonths(gd, 120), VestStart: gd, VestMonths: 48, CliffMonths: 12, VestEvery: every,
		})
	}
	return s
}

func priceAt(s *grants.Schedule, d time.Time) float64 {
	p := s.SharePrices[0].Price
	for _, pp := range s.SharePrices {
		if !pp.Date.After(d) {
			p = pp.Price
		}
	}
	return float64(int(p*100+0.5)) / 100
}
