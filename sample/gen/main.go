// Command gen writes grantworth's demo schedule: Tarnwick Labs, Inc., an
// invented company, with about forty grants from late 2023 to its valuation
// date of 2026-09-30, as sample/tarnwick.xlsx and as the CSV folder
// sample/tarnwick-csv/; and the grant designs it is weighing for its next
// hire, as sample/designs.xlsx (see Designs). Everything is made up; the random
// choices come from a fixed seed, so the files are the same on every run.
//
// Run it from the repository root:
//
//	go run ./sample/gen
//
// What is in the schedule:
//   - options on the common practice four-year, one-year-cliff monthly
//     schedule, some quarterly and some vesting yearly, and refresh grants to
//     earlier holders (four years monthly, no cliff);
//   - one option with a custom schedule on the Vesting sheet;
//   - two warrants issued in financings (purpose financing, so not
//     compensation): an equity-classified one issued with a loan and a
//     liability-classified one issued with a share sale (remeasured at the
//     valuation date);
//   - RSUs vesting yearly over three years;
//   - terminations (forfeited unvested shares, then expired vested ones)
//     and exercises on the Events sheet;
//   - a cost centre on every grant (R&D, S&M, G&A, COGS) and two
//     transfers between cost centres;
//   - general-ledger accounts for journal.csv, one expense account per
//     cost centre;
//   - a 25% tax rate under ASC 718, with a quarter of the options
//     incentive stock options that give no deduction;
//   - seven valuations of the common stock on Share Prices, the last two
//     after a down round in August 2026;
//   - on the Modifications sheet, the board's response to the down round
//     (2026-08-20): two underwater options repriced to the new valuation,
//     one partly vested (TW-022) and one not yet (TW-033); and a good
//     leaver (TW-028, holder E026, leaving on 2026-09-10 before the cliff)
//     whose cliff is waived and exercise window extended to a year, the
//     rest of the grant forfeited that day (improbable to probable);
//   - a rate curve at every quarter end, zero rates until 2026-03-31 and
//     government par yields (par-semiannual) from 2026-06-30 on;
//   - one award vesting on each kind of condition beyond service: a
//     performance condition, a price hurdle and relative TSR
//     (conditions.go), with Tarnwick's own daily closes in
//     sample/prices/tarnwick.csv for the relative TSR.
//
// It also writes sample/quarters/: the same schedule as the finance team
// held it at four quarter ends, 2025-12-31 to 2026-09-30, one CSV folder
// each, for closing quarter after quarter with value --prior. Each holds
// what was known at its date (grants, events, share prices and curves
// dated on or before it). The last adds two things that happen in real
// closes: the Q3 peer study's volatility of 60%, as an Assumptions row in
// force from 2026-07-01, and the departure of holder E011 (grant TW-012)
// on 2026-05-14, in a quarter already closed, which HR reported only in
// August (its unvested shares forfeited then, the vested ones expiring 90
// days later).
package main

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"time"

	"grantworth/grants"
)

const seed = 20260930

// costCenters are given to the option grants in turn: research and
// development, sales and marketing, general and administrative, cost of
// revenue.
var costCenters = []string{"R&D", "R&D", "S&M", "G&A", "R&D", "COGS", "S&M"}

func day(s string) time.Time {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		panic(err)
	}
	return t
}

func f(x float64) *float64 { return &x }

func ip(n int) *int { return &n }

var no = false

// Schedule builds the Tarnwick Labs schedule.
func Schedule() *grants.Schedule {
	rng := rand.New(rand.NewPCG(seed, 1))
	s := &grants.Schedule{
		Company: grants.Company{Name: "Tarnwick Labs, Inc.", ValuationDate: day("2026-09-30"), PeriodStart: day("2026-07-01"),
			Currency: "USD", SharesOutstanding: 24_500_000, Fiscal: grants.FiscalCalendar{YearEnd: time.December}},
		Assumptions: grants.Assumptions{
			Volatility: 0.52, DividendYield: 0, ExerciseMultiple: 2.2, PostVestingExitRate: 0.12, PreVestingForfeitureRate: 0.10,
			Attribution: grants.Graded, Forfeitures: grants.Estimate, Framework: grants.ASC718, TaxRate: 0.25,
			Sources: map[string]string{
				"volatility":                  "median of 5 peers' daily log-return volatility over 6.1 years to 2026-09-30 (grantworth vol sample/peers/*.csv, guideline peers)",
				"dividend_yield":              "no dividends paid or planned (board resolution of 2023-11-14)",
				"exercise_multiple":           "Tarnwick exercise history 2019-2026: early exercises at a median 2.2 times strike",
				"post_vesting_exit_rate":      "Tarnwick HR: 12% a year of vested holders left, 2021-2026",
				"pre_vesting_forfeiture_rate": "Tarnwick HR: 10% a year of unvested holders left, 2021-2026",
				"attribution":                 "accounting policy memo of 2023-10-02",
				"framework":                   "US GAAP financial statements (accounting policy memo of 2023-10-02)",
				"tax_rate":                    "US federal 21% and state taxes net of the federal benefit, blended (tax provision memo of 2026-01-15)",
			},
		},
	}
	s.SharePrices = []grants.PricePoint{
		{Date: day("2023-09-30"), Price: 0.85},
		{Date: day("2024-03-31"), Price: 1.10},
		{Date: day("2024-12-31"), Price: 1.60},
		{Date: day("2025-06-30"), Price: 2.40},
		{Date: day("2026-03-31"), Price: 3.05},
		{Date: day("2026-08-14"), Price: 2.10}, // after the Series B down round
		{Date: day("2026-09-30"), Price: 2.25},
	}
	priceAt := func(t time.Time) float64 {
		p := 0.0
		for _, pp := range s.SharePrices {
			if !pp.Date.After(t) {
				p = pp.Price
			}
		}
		return p
	}

	// Grant dates: from 2023-10-02 to 2026-09-15, about one a month.
	start := day("2023-10-02")
	n := 0
	id := func() string { n++; return fmt.Sprintf("TW-%03d", n) }
	holder := 0
	var optionHolders []string
	var opts []grants.Grant
	for m := 0; m < 36; m++ {
		gd := grants.AddMonths(start, m).AddDate(0, 0, rng.IntN(12))
		if m == 35 {
			gd = day("2026-09-15")
		}
		holder++
		h := fmt.Sprintf("E%03d", holder)
		g := grants.Grant{ID: id(), Holder: h, Instrument: grants.Option, GrantDate: gd,
			Shares: int64(1000 * (4 + rng.IntN(60))), Strike: priceAt(gd), ExpiryDate: grants.AddMonths(gd, 120),
			VestStart: gd, VestMonths: 48, CliffMonths: 12, VestEvery: 1}
		switch {
		case m%9 == 4: // quarterly after the cliff
			g.VestEvery = 3
		case m%11 == 7: // yearly, a quarter each anniversary
			g.VestEvery, g.CliffMonths = 12, 0
		}
		if m%12 == 10 { // refresh grant to an earlier holder
			g.Holder = optionHolders[rng.IntN(len(optionHolders))]
			g.CliffMonths = 0
			g.Shares = int64(1000 * (2 + rng.IntN(20)))
			holder--
		} else {
			optionHolders = append(optionHolders, g.Holder)
		}
		g.CostCenter = costCenters[m%len(costCenters)]
		if m%4 == 2 { // an incentive stock option: no deduction for the company
			g.TaxDeductible = &no
		}
		if m == 20 { // an executive's grant with its own strike price premium and a lower exit rate
			g.Strike = math.Round(priceAt(gd)*1.25*100) / 100
			g.PostVestingExitRate = f(0.05)
		}
		opts = append(opts, g)
	}
	// A grant vesting on milestones, on the Vesting sheet (30/30/40).
	ms := grants.Grant{ID: id(), Holder: "E900", Instrument: grants.Option, GrantDate: day("2024-08-19"), Shares: 50_000,
		Strike: priceAt(day("2024-08-19")), ExpiryDate: day("2034-08-19"), VestStart: day("2024-08-19"), VestMonths: 36, CliffMonths: 12, VestEvery: 12,
		CostCenter: "R&D"}
	opts = append(opts, ms)
	s.Vesting = []grants.VestRow{
		{GrantID: ms.ID, VestDate: day("2025-03-31"), Shares: 15_000},
		{GrantID: ms.ID, VestDate: day("2026-01-15"), Shares: 15_000},
		{GrantID: ms.ID, VestDate: day("2027-06-30"), Shares: 20_000},
	}
	s.Grants = append(s.Grants, opts...)

	// Warrants issued in financings, vested at issue, seven-year term.
	s.Grants = append(s.Grants,
		grants.Grant{ID: id(), Holder: "LENDER-1", Instrument: grants.Warrant, GrantDate: day("2024-05-20"), Shares: 250_000, Strike: 1.20,
			ExpiryDate: day("2031-05-20"), VestStart: day("2024-05-20"), VestEvery: 1, Classification: grants.Equity, ExerciseStyle: grants.American,
			Purpose: grants.Financing},
		grants.Grant{ID: id(), Holder: "INVESTOR-2", Instrument: grants.Warrant, GrantDate: day("2025-02-10"), Shares: 400_000, Strike: 2.00,
			ExpiryDate: day("2032-02-10"), VestStart: day("2025-02-10"), VestEvery: 1, Classification: grants.Liability, ExerciseStyle: grants.American,
			Purpose: grants.Financing, Volatility: f(0.50)},
	)
	// RSUs: three years, a third each anniversary.
	for i, gd := range []string{"2024-02-15", "2024-11-12", "2025-05-06", "2025-11-18", "2026-04-21"} {
		t := day(gd)
		s.Grants = append(s.Grants, grants.Grant{ID: id(), Holder: fmt.Sprintf("D%02d", i+1), Instrument: grants.RSU, GrantDate: t,
			Shares: int64(500 * (6 + rng.IntN(20))), VestStart: t, VestMonths: 36, VestEvery: 12, CostCenter: "G&A"})
	}
	// The general-ledger accounts of journal.csv: an expense account per
	// function, and the balance-sheet and tax accounts.
	s.Accounts = []grants.AccountRow{
		{Role: "compensation_expense", Code: "6400", Name: "Share-based compensation"},
		{Role: "compensation_expense", CostCenter: "R&D", Code: "6410", Name: "Share-based compensation - research and development"},
		{Role: "compensation_expense", CostCenter: "S&M", Code: "6420", Name: "Share-based compensation - sales and marketing"},
		{Role: "compensation_expense", CostCenter: "G&A", Code: "6430", Name: "Share-based compensation - general and administrative"},
		{Role: "compensation_expense", CostCenter: "COGS", Code: "5410", Name: "Share-based compensation - cost of revenue"},
		{Role: "equity", Code: "3100", Name: "Additional paid-in capital"},
		{Role: "share_based_payment_liability", Code: "2460", Name: "Share-based compensation liability"},
		{Role: "warrant_liability", Code: "2450", Name: "Warrant liability"},
		{Role: "fair_value_change", Code: "7150", Name: "Change in fair value of warrant liability"},
		{Role: "warrant_equity", Code: "3100", Name: "Additional paid-in capital"},
		{Role: "financing_proceeds", Code: "2210", Name: "Debt discount - warrants"},
		{Role: "deferred_tax_asset", Code: "1850", Name: "Deferred tax assets"},
		{Role: "deferred_tax_benefit", Code: "8100", Name: "Deferred income tax benefit"},
	}
	// Two holders changed function: one from R&D to S&M a year ago, one
	// from cost of revenue to R&D in the period.
	s.Transfers = []grants.Transfer{
		{GrantID: opts[4].ID, Date: day("2025-10-01"), CostCenter: "S&M"},
		{GrantID: opts[12].ID, Date: day("2026-08-17"), CostCenter: "R&D"},
	}

	// Events: two holders left (unvested forfeited on leaving, vested shares
	// unexercised expired 90 days later), two exercises.
	left := func(g grants.Grant, on time.Time, exercise int64) {
		ts := s.Tranches(g)
		vested := grants.VestedAt(ts, on)
		s.Events = append(s.Events, grants.Event{GrantID: g.ID, Date: on, Kind: grants.Forfeited, Shares: g.Shares - vested})
		if exercise > 0 {
			s.Events = append(s.Events, grants.Event{GrantID: g.ID, Date: on.AddDate(0, 0, 30), Kind: grants.Exercised, Shares: exercise})
		}
		if rest := vested - exercise; rest > 0 && !on.AddDate(0, 0, 90).After(s.Company.ValuationDate) {
			s.Events = append(s.Events, grants.Event{GrantID: g.ID, Date: on.AddDate(0, 0, 90), Kind: grants.Expired, Shares: rest})
		}
	}
	// The down round of August 2026: the board reprices two underwater
	// options (strikes 2.40 and 3.05) to the new valuation, and lets a
	// good leaver keep what has accrued before the cliff, with a year to
	// exercise it.
	reprice := 2.10
	note := "board resolution of 2026-08-18: options of continuing staff struck above the August valuation repriced to it"
	s.Modifications = []grants.Modification{
		{GrantID: opts[21].ID, Date: day("2026-08-20"), NewStrike: &reprice, Note: note},
		{GrantID: opts[32].ID, Date: day("2026-08-20"), NewStrike: &reprice, Note: note},
		{GrantID: opts[27].ID, Date: day("2026-09-10"), NewCliffMonths: ip(0), NewExpiryDate: day("2027-09-10"), NewExitRate: f(0),
			Note: "good leaver (board consent of 2026-09-08): cliff waived, a year to exercise"},
	}
	s.Events = append(s.Events, grants.Event{GrantID: opts[27].ID, Date: day("2026-09-10"), Kind: grants.Forfeited,
		Shares: opts[27].Shares - opts[27].Shares*7/48}) // seven months accrued of 48
	left(opts[2], day("2025-07-18"), 0)
	left(opts[5], day("2026-02-27"), 1000)
	s.Events = append(s.Events,
		grants.Event{GrantID: opts[0].ID, Date: day("2026-05-12"), Kind: grants.Exercised, Shares: 2000},
		grants.Event{GrantID: opts[1].ID, Date: day("2026-08-03"), Kind: grants.Exercised, Shares: 1500},
	)

	// A curve per quarter end: invented zero rates drifting down from about
	// 4.9% to 3.8%, then par yields.
	tenors := []float64{0.25, 0.5, 1, 2, 3, 5, 7, 10}
	q := day("2023-09-30")
	for i := 0; !q.After(s.Company.ValuationDate); i++ {
		level := 0.049 - 0.0011*float64(i)
		comp := "continuous"
		if !q.Before(day("2026-06-30")) {
			comp = "par-semiannual"
		}
		for _, tn := range tenors {
			slope := -0.004 + 0.0012*math.Log1p(tn)
			r := level + slope + 0.0004*(rng.Float64()-0.5)
			s.Rates = append(s.Rates, grants.RatePoint{CurveDate: q, TenorYears: tn, Rate: math.Round(r*1e5) / 1e5, Compounding: comp})
		}
		q = grants.AddMonths(q.AddDate(0, 0, 1), 3).AddDate(0, 0, -1)
	}
	addConditions(s)
	return s
}

// QuarterEnds are the closes of sample/quarters.
var QuarterEnds = []string{"2025-12-31", "2026-03-31", "2026-06-30", "2026-09-30"}

// AsKnownAt is s as it was known at the quarter end d: its grants,
// events, share prices and curves dated on or before d, valued at d.
func AsKnownAt(s *grants.Schedule, d time.Time) *grants.Schedule {
	q := *s
	q.Company.ValuationDate, q.Company.PeriodStart = d, s.Company.DefaultPeriodStart(d)
	q.Grants, q.Vesting, q.Events, q.SharePrices, q.Rates, q.Transfers, q.Modifications = nil, nil, nil, nil, nil, nil, nil
	kept := map[string]bool{}
	for _, g := range s.Grants {
		if !g.GrantDate.After(d) {
			q.Grants = append(q.Grants, g)
			kept[g.ID] = true
		}
	}
	for _, v := range s.Vesting {
		if kept[v.GrantID] {
			q.Vesting = append(q.Vesting, v)
		}
	}
	for _, e := range s.Events {
		if !e.Date.After(d) {
			q.Events = append(q.Events, e)
		}
	}
	for _, t := range s.Transfers {
		if kept[t.GrantID] && !t.Date.After(d) {
			q.Transfers = append(q.Transfers, t)
		}
	}
	for _, m := range s.Modifications {
		if !m.Date.After(d) {
			q.Modifications = append(q.Modifications, m)
		}
	}
	for _, p := range s.SharePrices {
		if !p.Date.After(d) {
			q.SharePrices = append(q.SharePrices, p)
		}
	}
	for _, r := range s.Rates {
		if !r.CurveDate.After(d) {
			q.Rates = append(q.Rates, r)
		}
	}
	conditionsKnownAt(&q, s, d)
	return &q
}

// Quarters are the schedules of sample/quarters, by quarter end.
func Quarters() map[string]*grants.Schedule {
	out := map[string]*grants.Schedule{}
	for _, end := range QuarterEnds {
		q := AsKnownAt(Schedule(), day(end))
		q.Assumptions.Sources["volatility"] = "median of 5 peers' daily log-return volatility over 6 years to 2025-09-30 (grantworth vol, guideline peers)"
		out[end] = q
	}
	q3 := out["2026-09-30"]
	q3.Assumptions.Dated = []grants.AssumptionRow{{Key: "volatility", Effective: day("2026-07-01"), Value: 0.60,
		Source: "Q3 2026 peer study: median of 5 peers' daily log-return volatility over 6.3 years to 2026-06-30"}}
	for _, g := range q3.Grants {
		if g.ID != "TW-012" {
			continue
		}
		left := day("2026-05-14")
		vested := grants.VestedAt(q3.Tranches(g), left)
		q3.Events = append(q3.Events,
			grants.Event{GrantID: g.ID, Date: left, Kind: grants.Forfeited, Shares: g.Shares - vested},
			grants.Event{GrantID: g.ID, Date: left.AddDate(0, 0, 90), Kind: grants.Expired, Shares: vested})
	}
	return out
}

func main() {
	if err := run("sample"); err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}

func run(dir string) error {
	s := Schedule()
	var buf bytes.Buffer
	if err := grants.WriteXLSX(&buf, s); err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(dir, "tarnwick.xlsx"), buf.Bytes(), 0o644); err != nil {
		return err
	}
	if err := ownCloses(dir, s); err != nil {
		return err
	}
	csvDir := filepath.Join(dir, "tarnwick-csv")
	if err := os.MkdirAll(csvDir, 0o755); err != nil {
		return err
	}
	relocate(s, 1)
	if err := grants.WriteCSVDir(csvDir, s); err != nil {
		return err
	}
	for end, q := range Quarters() {
		d := filepath.Join(dir, "quarters", end)
		if err := os.MkdirAll(d, 0o755); err != nil {
			return err
		}
		relocate(q, 2)
		if err := grants.WriteCSVDir(d, q); err != nil {
			return err
		}
	}
	buf.Reset()
	if err := grants.WriteDesignsXLSX(&buf, Designs()); err != nil {
		return err
	}
	return os.WriteFile(filepath.Join(dir, "designs.xlsx"), buf.Bytes(), 0o644)
}
