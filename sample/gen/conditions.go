package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"time"

	"grantworth/grants"
)

// Awards of the sample that vest on more than service, one of each kind:
//   - TW-101, performance share units: 40,000 units vesting 2027-03-03 if
//     FY2026 revenue reaches its target (50% at threshold, 150% at
//     maximum); assessed probable at grant, improbable on 2025-09-30 when
//     the largest customer left, probable at 120% on 2026-06-30;
//   - TW-102, an option exercisable only once the share has closed at or
//     above 6.00 by 2030-02-15, on top of four years of yearly vesting;
//   - TW-103, relative TSR units: 60,000 target units vesting 2029-01-01 by
//     Tarnwick's total shareholder return from 2026-01-01 to 2028-12-31
//     ranked against the five guideline peers of sample/peers (25th
//     percentile 50%, median 100%, 75th percentile 200%; at most 100% if
//     Tarnwick's own TSR is negative).
//
// The relative TSR needs Tarnwick's own daily closes: sample/prices/
// tarnwick.csv, invented here (ownCloses) through the Share Prices
// valuations, from 2023-01-03, as if its shares had traded since.
func addConditions(s *grants.Schedule) {
	price := func(t time.Time) float64 {
		p := 0.0
		for _, pp := range s.SharePrices {
			if !pp.Date.After(t) {
				p = pp.Price
			}
		}
		return p
	}
	psu, hur, tsr := day("2025-03-03"), day("2026-02-16"), day("2026-04-01")
	s.Grants = append(s.Grants,
		grants.Grant{ID: "TW-101", Holder: "E901", Instrument: grants.RSU, GrantDate: psu, Shares: 40_000,
			VestStart: psu, VestMonths: 24, CliffMonths: 24, VestEvery: 12, Condition: "REV-FY26", CostCenter: "S&M"},
		grants.Grant{ID: "TW-102", Holder: "E902", Instrument: grants.Option, GrantDate: hur, Shares: 120_000, Strike: price(hur),
			ExpiryDate: grants.AddMonths(hur, 120), VestStart: hur, VestMonths: 48, CliffMonths: 12, VestEvery: 12, Condition: "CLOSE-6", CostCenter: "R&D"},
		grants.Grant{ID: "TW-103", Holder: "E001", Instrument: grants.RSU, GrantDate: tsr, Shares: 60_000,
			VestStart: day("2026-01-01"), VestMonths: 36, CliffMonths: 36, VestEvery: 12, Condition: "RTSR-26", CostCenter: "G&A"},
	)
	capped := 1.0
	s.Conditions = []grants.Condition{
		{ID: "REV-FY26", Kind: grants.Performance, Description: "FY2026 revenue of USD 30 million (threshold 24 million, maximum 36 million)",
			MeasurementDate: day("2026-12-31"), ThresholdPayout: 0.5, TargetPayout: 1, MaximumPayout: 1.5, HurdleDays: 1, Monitoring: "daily"},
		{ID: "CLOSE-6", Kind: grants.PriceHurdle, Description: "the share closes at or above 6.00",
			HurdlePrice: 6, HurdleDays: 1, Monitoring: "daily", HurdleDeadline: day("2030-02-15"), TargetPayout: 1, MaximumPayout: 1},
		{ID: "RTSR-26", Kind: grants.RelativeTSR, Description: "TSR against the five guideline peers",
			PeriodStart: day("2026-01-01"), PeriodEnd: day("2028-12-31"), OwnPrices: "prices/tarnwick.csv", NegativeCap: &capped,
			TargetPayout: 1, MaximumPayout: 1, HurdleDays: 1, Monitoring: "daily"},
	}
	s.Assessments = []grants.Assessment{
		{ConditionID: "REV-FY26", Date: psu, Probable: true, Note: "budget approved by the board"},
		{ConditionID: "REV-FY26", Date: day("2025-09-30"), Probable: false, Note: "the largest customer ended its contract"},
		{ConditionID: "REV-FY26", Date: day("2026-06-30"), Probable: true, ExpectedPayout: f(1.2), Note: "two enterprise contracts signed"},
	}
	s.PayoutCurve = []grants.PayoutRow{
		{ConditionID: "RTSR-26", Percentile: 0.25, Payout: 0.5},
		{ConditionID: "RTSR-26", Percentile: 0.5, Payout: 1},
		{ConditionID: "RTSR-26", Percentile: 0.75, Payout: 2},
	}
	for _, p := range []string{"Brightwater", "Corvid", "Meridian", "Pinecrest", "Tallis"} {
		s.Peers = append(s.Peers, grants.Peer{ConditionID: "RTSR-26", Name: p, File: "peers/" + strings.ToLower(p) + ".csv"})
	}
}

// conditionsKnownAt keeps in q (s as known at d, AsKnownAt) the conditions
// of the grants q holds, their payout curves and peers, and the
// assessments dated on or before d.
func conditionsKnownAt(q, s *grants.Schedule, d time.Time) {
	used := map[string]bool{}
	for _, g := range q.Grants {
		used[g.Condition] = true
	}
	q.Conditions, q.Assessments, q.PayoutCurve, q.Peers = nil, nil, nil, nil
	for _, k := range s.Conditions {
		if used[k.ID] {
			q.Conditions = append(q.Conditions, k)
		}
	}
	for _, a := range s.Assessments {
		if used[a.ConditionID] && !a.Date.After(d) {
			q.Assessments = append(q.Assessments, a)
		}
	}
	for _, p := range s.PayoutCurve {
		if used[p.ConditionID] {
			q.PayoutCurve = append(q.PayoutCurve, p)
		}
	}
	for _, p := range s.Peers {
		if used[p.ConditionID] {
			q.Peers = append(q.Peers, p)
		}
	}
}

// relocate makes s's price file paths relative to a folder up levels
// below sample/ (the paths are written relative to sample/, where the
// workbook is).
func relocate(s *grants.Schedule, up int) {
	pre := strings.Repeat("../", up)
	for i := range s.Conditions {
		if s.Conditions[i].OwnPrices != "" {
			s.Conditions[i].OwnPrices = pre + s.Conditions[i].OwnPrices
		}
	}
	for i := range s.Peers {
		s.Peers[i].File = pre + s.Peers[i].File
	}
}

// ownCloses writes Tarnwick's invented daily closes to dir/prices/
// tarnwick.csv: a log-price random walk of 52% a year (the Assumptions'
// volatility) on weekdays but 1 January, 4 July and 25 December, tied down
// (Brownian bridges) to each Share Prices valuation on the last trading
// day on or before its date, from 0.70 on 2023-01-03 to the valuation date.
func ownCloses(dir string, s *grants.Schedule) error {
	type anchor struct {
		t time.Time
		p float64
	}
	anchors := []anchor{{day("2023-01-03"), 0.70}}
	for _, pp := range s.SharePrices {
		anchors = append(anchors, anchor{pp.Date, pp.Price})
	}
	trading := func(t time.Time) bool {
		m, d := t.Month(), t.Day()
		return t.Weekday() != time.Saturday && t.Weekday() != time.Sunday &&
			!(m == time.January && d == 1 || m == time.July && d == 4 || m == time.December && d == 25)
	}
	var days []time.Time
	for t := anchors[0].t; !t.After(s.Company.ValuationDate); t = t.AddDate(0, 0, 1) {
		if trading(t) {
			days = append(days, t)
		}
	}
	// The anchor days: the last trading day on or before each date.
	at := make([]int, len(anchors))
	for i, a := range anchors {
		for k, t := range days {
			if !t.After(a.t) {
				at[i] = k
			}
		}
	}
	rng := rand.New(rand.NewPCG(seed, 7))
	sd := 0.52 * math.Sqrt(1.0/252)
	x := make([]float64, len(days))
	for i := 0; i+1 < len(anchors); i++ {
		a, b := at[i], at[i+1]
		n := b - a
		w := make([]float64, n+1)
		for k := 1; k <= n; k++ {
			w[k] = w[k-1] + sd*rng.NormFloat64()
		}
		la, lb := math.Log(anchors[i].p), math.Log(anchors[i+1].p)
		for k := 0; k <= n; k++ {
			u := float64(k) / float64(n)
			x[a+k] = la + (lb-la)*u + w[k] - u*w[n]
		}
	}
	var b strings.Builder
	b.WriteString("date,close\n")
	for k, t := range days {
		fmt.Fprintf(&b, "%s,%.4f\n", t.Format(time.DateOnly), math.Exp(x[k]))
	}
	if err := os.MkdirAll(filepath.Join(dir, "prices"), 0o755); err != nil {
		return err
	}
	return os.WriteFile(filepath.Join(dir, "prices", "tarnwick.csv"), []byte(b.String()), 0o644)
}
