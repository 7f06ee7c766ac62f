// Command ledger writes a large invented grant schedule for timing the
// value command end to end. The company (Orrin Quarry Software, Inc.) and
// everything in it are made up; the seed is fixed, so the same flags give
// the same file byte for byte.
//
//	go run ./bench/... -grants 10000 -kind adversarial -out /tmp/ledger.xlsx
//	/usr/bin/time -v grantworth value /tmp/ledger.xlsx --out /tmp/ledger-out
//
// With -correct K the same ledger is written with grant K's strike raised
// by a cent, as a corrected ledger for a rerun that follows the first
// close (value --prior):
//
//	go run ./bench/... -grants 10000 -kind adversarial -correct 5000 -out /tmp/ledger2.xlsx
//	grantworth value /tmp/ledger2.xlsx --out /tmp/ledger-out2 --prior /tmp/ledger-out
//
// Two kinds:
//
//   - realistic: what a listed company's plan looks like. Grants are made
//     on board dates (twice a month) at the share price of the day, so that
//     many grants share every valuation input; most options vest four years
//     monthly after a one-year cliff, some quarterly or yearly, refresh
//     grants four years monthly without a cliff; about one grant in eight is
//     an RSU and one in two thousand an equity-classified warrant, one in
//     five thousand a liability-classified one. Share prices step each
//     half-year (one round a year is a down round); a rate curve at every
//     quarter end. About one holder in ten has left: forfeited unvested
//     shares, with some exercises and expiries of vested ones.
//   - adversarial: no two grants share their valuation inputs, so that no
//     valuation is saved by valuing identical grants once. Every grant is an
//     option granted on any day, vesting 48 months monthly after a one-year
//     cliff (37 tranches), with its own strike and its own volatility
//     override; the same prices, curves and departures as realistic.
//
// Both kinds put every grant in a cost centre (R&D, S&M, G&A or COGS, as
// a plan's functions are commonly named, so that holders and cost centres
// carry text the workbook escapes) and move one grant in 25 to another
// cost centre part-way (a Transfers row).
//
// bench/run.sh times value on both kinds at several sizes.
package main

import (
	"bytes"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"time"

	"grantworth/grants"
)

func main() {
	n := flag.Int("grants", 10000, "number of grants")
	flag.IntVar(n, "n", 10000, "the same as -grants")
	kind := flag.String("kind", "realistic", "realistic (grants share inputs, as in a real plan) or adversarial (no two grants alike)")
	out := flag.String("out", "ledger.xlsx", "workbook to write")
	correct := flag.Int("correct", 0, "raise the strike of grant number K (1 to -grants) by a cent: the ledger corrected")
	flag.Parse()
	if *n < 1 || *n > 200000 {
		fail(fmt.Errorf("-grants %d: want 1 to 200,000 (the reader's limit)", *n))
	}
	var s *grants.Schedule
	switch *kind {
	case "realistic":
		s = realistic(*n)
	case "adversarial":
		s = adversarial(*n)
	default:
		fail(fmt.Errorf("-kind %q: want realistic or adversarial", *kind))
	}
	costCentres(s)
	if *correct != 0 {
		if *correct < 1 || *correct > *n {
			fail(fmt.Errorf("-correct %d: want a grant number from 1 to %d", *correct, *n))
		}
		g := &s.Grants[*correct-1]
		if g.Instrument == grants.RSU {
			g.Shares += 100 // an RSU has no strike: its share count is corrected
		} else {
			g.Strike += 0.01
		}
	}
	var buf bytes.Buffer
	if err := grants.WriteXLSX(&buf, s); err != nil {
		fail(err)
	}
	if err := os.WriteFile(*out, buf.Bytes(), 0o644); err != nil {
		fail(err)
	}
	fmt.Printf("wrote %s: %d %s grants, %d events, %d transfers, %d bytes\n", *out, *n, *kind, len(s.Events), len(s.Transfers), buf.Len())
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "ledger:", err)
	os.Exit(1)
}

func day(s string) time.Time {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		panic(err)
	}
	return t
}

var (
	first      = day("2023-01-02") // the first grant date
	valDate    = day("2026-09-30")
	grantDays  = int(valDate.Sub(first).Hours()/24) - 14
	quarterEnd = func(q time.Time) time.Time { return grants.AddMonths(q.AddDate(0, 0, 1), 3).AddDate(0, 0, -1) }
)

// company is the schedule without grants or events: the company, the
// assumptions, a share price step per half-year and a curve per quarter.
func company(rng *rand.Rand) *grants.Schedule {
	s := &grants.Schedule{
		Company: grants.Company{Name: "Orrin Quarry Software, Inc.", ValuationDate: valDate,
			PeriodStart: day("2026-07-01"), Currency: "USD", SharesOutstanding: 90_000_000},
		Assumptions: grants.Assumptions{Volatility: 0.5, ExerciseMultiple: 2.5, PostVestingExitRate: 0.1,
			PreVestingForfeitureRate: 0.08, Attribution: grants.Graded, Forfeitures: grants.Estimate,
			Sources: map[string]string{"volatility": "invented ledger for timing runs"}},
	}
	price := 1.2
	for i, d := 0, day("2022-12-31"); d.Before(day("2026-10-01")); i, d = i+1, grants.AddMonths(d, 6) {
		s.SharePrices = append(s.SharePrices, grants.PricePoint{Date: d, Price: price})
		if i%4 == 3 {
			price *= 0.9 // a down round
		} else {
			price *= 1.15
		}
	}
	for q := day("2022-12-31"); q.Before(day("2026-10-01")); q = quarterEnd(q) {
		base := 0.03 + 0.01*rng.Float64()
		for _, tn := range []float64{0.5, 1, 2, 5, 10} {
			s.Rates = append(s.Rates, grants.RatePoint{CurveDate: q, TenorYears: tn, Rate: base + 0.001*tn, Compounding: "continuous"})
		}
	}
	return s
}

// priceAt is the share price in force on d.
func priceAt(s *grants.Schedule, d time.Time) float64 {
	p := s.SharePrices[0].Price
	for _, pp := range s.SharePrices {
		if !pp.Date.After(d) {
			p = pp.Price
		}
	}
	return p
}

// cents rounds a price up to the cent: at the money or just above, so that
// no grant is in the money at grant.
func cents(p float64) float64 { return math.Ceil(p*100) / 100 }

func f(x float64) *float64 { return &x }

func realistic(n int) *grants.Schedule {
	rng := rand.New(rand.NewPCG(2026, 9))
	s := company(rng)
	// Board dates: the 1st and 15th of every month, moved off weekends.
	var boards []time.Time
	for d := first; d.Before(valDate.AddDate(0, 0, -14)); d = grants.AddMonths(d, 1) {
		for _, dd := range []int{0, 14} {
			b := d.AddDate(0, 0, dd)
			for b.Weekday() == time.Saturday || b.Weekday() == time.Sunday {
				b = b.AddDate(0, 0, 1)
			}
			boards = append(boards, b)
		}
	}
	for i := range n {
		gd := boards[rng.IntN(len(boards))]
		g := grants.Grant{
			ID: fmt.Sprintf("OQ-%06d", i+1), Holder: fmt.Sprintf("E%06d", rng.IntN(max(n/2, 1))), Instrument: grants.Option,
			GrantDate: gd, Shares: int64(100 * (1 + rng.IntN(300))), Strike: cents(priceAt(s, gd)),
			ExpiryDate: grants.AddMonths(gd, 120), VestStart: gd, VestMonths: 48, CliffMonths: 12, VestEvery: 1,
		}
		switch r := rng.IntN(10000); {
		case r < 2: // a liability-classified warrant issued to an investor, vested at issue
			g.Instrument, g.Classification, g.ExerciseStyle = grants.Warrant, grants.Liability, grants.American
			g.Purpose = grants.Financing
			g.ExpiryDate, g.VestMonths, g.CliffMonths = grants.AddMonths(gd, 60), 0, 0
			g.Shares *= 10
		case r < 7: // an equity-classified warrant issued with a loan
			g.Instrument, g.Classification, g.ExerciseStyle = grants.Warrant, grants.Equity, grants.European
			g.Purpose = grants.Financing
			g.ExpiryDate, g.VestMonths, g.CliffMonths = grants.AddMonths(gd, 84), 0, 0
			g.Shares *= 10
		case r < 1250: // an RSU, yearly over three years
			g.Instrument, g.Strike, g.ExpiryDate = grants.RSU, 0, time.Time{}
			g.VestMonths, g.CliffMonths, g.VestEvery = 36, 12, 12
		case r < 2200: // quarterly
			g.VestEvery = 3
		case r < 2700: // yearly
			g.VestEvery = 12
		case r < 4000: // a refresh grant: four years monthly, no cliff
			g.CliffMonths = 0
		}
		s.Grants = append(s.Grants, g)
		departures(s, rng, g)
	}
	return s
}

func adversarial(n int) *grants.Schedule {
	rng := rand.New(rand.NewPCG(2026, 11))
	s := company(rng)
	seen := map[[2]uint64]bool{}
	for i := range n {
		gd := first.AddDate(0, 0, rng.IntN(grantDays))
		// A strike of its own (1 to 1.4 times the price, to the
		// hundredth of a cent) and a volatility of its own: no two
		// grants alike, which the map makes sure of.
		strike := math.Ceil(priceAt(s, gd)*(1+0.4*rng.Float64())*1e4) / 1e4
		vol := 0.35 + 0.3*rng.Float64()
		for seen[[2]uint64{uint64(gd.Unix()), math.Float64bits(strike)}] {
			strike += 1e-4
		}
		seen[[2]uint64{uint64(gd.Unix()), math.Float64bits(strike)}] = true
		g := grants.Grant{
			ID: fmt.Sprintf("OQ-%06d", i+1), Holder: fmt.Sprintf("E%06d", rng.IntN(max(n/2, 1))), Instrument: grants.Option,
			GrantDate: gd, Shares: int64(100 * (1 + rng.IntN(300))), Strike: strike,
			ExpiryDate: grants.AddMonths(gd, 120), VestStart: gd, VestMonths: 48, CliffMonths: 12, VestEvery: 1,
			Volatility: f(math.Round(vol*1e6) / 1e6),
		}
		s.Grants = append(s.Grants, g)
		departures(s, rng, g)
	}
	return s
}

// departures adds, for about one grant in ten, its holder's departure on
// a day between the grant and the valuation date: the unvested shares
// forfeited that day; of the vested ones, half exercised within 90 days
// and the rest expired then.
func departures(s *grants.Schedule, rng *rand.Rand, g grants.Grant) {
	if rng.IntN(10) != 0 || g.Instrument == grants.Warrant {
		return
	}
	span := int(valDate.Sub(g.GrantDate).Hours()/24) - 1
	if span < 30 {
		return
	}
	left := g.GrantDate.AddDate(0, 0, 1+rng.IntN(span))
	ts := (&grants.Schedule{}).Tranches(g) // the column schedule, no events
	vested := grants.VestedAt(ts, left)
	if un := g.Shares - vested; un > 0 {
		s.Events = append(s.Events, grants.Event{GrantID: g.ID, Date: left, Kind: grants.Forfeited, Shares: un})
	}
	if vested == 0 || g.Instrument == grants.RSU {
		return
	}
	end := left.AddDate(0, 0, 90)
	if end.After(valDate) {
		return // still inside the exercise window at the period end
	}
	ex := vested / 2
	if ex > 0 {
		s.Events = append(s.Events, grants.Event{GrantID: g.ID, Date: left.AddDate(0, 0, 1+rng.IntN(89)), Kind: grants.Exercised, Shares: ex})
	}
	s.Events = append(s.Events, grants.Event{GrantID: g.ID, Date: end, Kind: grants.Expired, Shares: vested - ex})
}

// centres are the cost centres of the invented ledger, most of the plan in
// R&D.
var centres = []string{"R&D", "R&D", "R&D", "S&M", "S&M", "G&A", "COGS"}

// costCentres puts each grant of s in a cost centre and moves one grant in
// 25 to another on a day between its grant and the valuation date. It
// draws from a generator of its own, so the grants and events are those
// the kind's generator made.
func costCentres(s *grants.Schedule) {
	rng := rand.New(rand.NewPCG(2026, 13))
	for i := range s.Grants {
		g := &s.Grants[i]
		g.CostCenter = centres[rng.IntN(len(centres))]
		span := int(valDate.Sub(g.GrantDate).Hours()/24) - 1
		if rng.IntN(25) != 0 || span < 2 {
			continue
		}
		to := centres[rng.IntN(len(centres))]
		for to == g.CostCenter {
			to = centres[rng.IntN(len(centres))]
		}
		s.Transfers = append(s.Transfers, grants.Transfer{GrantID: g.ID, Date: g.GrantDate.AddDate(0, 0, 1+rng.IntN(span)), CostCenter: to})
	}
}
