package accounting

import (
	"math"
	"testing"
	"time"

	"grantworth/grants"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
)

// spread is Spread of a under graded attribution with no forfeiture
// estimate, through each date of ends.
func spread(t *testing.T, a Award, ends ...string) ([]float64, float64) {
	t.Helper()
	var es []time.Time
	for _, e := range ends {
		es = append(es, ymd(e))
	}
	amounts, cost, err := Spread(a, Policy{}, es)
	if err != nil {
		t.Fatal(err)
	}
	return amounts, cost
}

// Rule: a performance condition stays out of the fair value (ASC
// 718-10-30-27, IFRS 2.19); expense follows the probable outcome, accrued
// while the condition is probable and not while it is not, trued up
// cumulatively when the assessment changes and reversed when it becomes
// improbable (ASC 718-10-25-20 and 718-10-35-3, IFRS 2.20; paragraph
// numbers of ASC 718 from memory).
//
// Worked by hand: 1,000 units, fair value 20.00 each, granted 2025-01-01,
// cliff vesting 2027-01-01: 730 days of service (2025 and 2026 have no 29
// February). Assessed probable at target (100%) on 2025-01-01, improbable
// on 2025-07-01, probable at 150% (between target and maximum) on
// 2026-01-01.
//
//	through 2025-06-30: 181 days × 1.0 × 20,000 / 730 =  4,958.90
//	through 2025-12-31: improbable: 0, so H2 2025 reverses −4,958.90
//	through 2026-06-30: 546 days × 1.5 × 20,000 / 730 = 22,438.36
//	                    (H1 2026: +22,438.36, the catch-up of 2025 at 150% and the half year)
//	through 2026-12-31: 730 days × 1.5 × 20,000 / 730 = 30,000.00 (H2 2026: +7,561.64)
//
// The award's expected total cost at the end is 30,000: 1,500 units
// expected to vest at 20.00.
func TestPerformanceConditionProbableImprobable(t *testing.T) {
	a := testAward("P-1", grants.RSU, "2025-01-01", []string{"2027-01-01"}, []int64{1000}, []float64{20})
	a.Condition = &Conditioned{Kind: grants.Performance, Initial: 1, Outcomes: []Outcome{
		{Date: ymd("2025-01-01"), Share: 1, Probable: true},
		{Date: ymd("2025-07-01"), Share: 0, Probable: false},
		{Date: ymd("2026-01-01"), Share: 1.5, Probable: true},
	}}
	got, cost := spread(t, a, "2025-06-30", "2025-12-31", "2026-06-30", "2026-12-31")
	want := []float64{20000 * 181.0 / 730, -20000 * 181.0 / 730, 1.5 * 20000 * 546 / 730, 30000 - 1.5*20000*546/730}
	for i := range want {
		nearly(t, "half-year "+[]string{"H1 2025", "H2 2025", "H1 2026", "H2 2026"}[i], got[i], want[i], tolMoney)
	}
	nearly(t, "expected total cost", cost, 30000, tolMoney)
	nearly(t, "H1 2025 by hand", got[0], 4958.90, 0.005)
	nearly(t, "H1 2026 by hand", got[2], 22438.36, 0.005)

	// The same through a close of H2 2025: the period's expense is the
	// reversal, nothing is left cumulative, and the cost expected is 0
	// (the assessment of 2026 is not known yet).
	r := mustExpense(t, []Award{a}, Policy{}, "2025-07-01", "2025-12-31")
	nearly(t, "H2 2025 expense", r.Period, -20000*181.0/730, tolMoney)
	nearly(t, "cumulative at 2025-12-31", r.Cumulative, 0, tolMoney)
	nearly(t, "expected cost while improbable", r.Grants[0].Cost, 0, tolMoney)
}

// Rule: a market condition is in the fair value (ASC 718-10-30-14, IFRS
// 2.21), and the expense of an award whose requisite service is rendered
// is not reversed when the condition is not met (ASC 718-10-30-14 and
// 718-10-55-61, IFRS 2.21; from memory). The requisite service of an award
// that vests when a hurdle is met is the derived service period (ASC
// 718-10-55-71), not revised under IFRS 2.15(b) however the hurdle does.
//
// Worked by hand: 1,000 hurdle units, fair value 6.00 each (the hurdle
// priced in), granted 2025-01-01, service vesting 2026-01-01, derived
// service period to 2026-07-01: 546 days. The hurdle's deadline,
// 2026-12-31, passes without it being met.
//
//	through 2025-12-31: 365 of 546 days × 6,000 = 4,010.99
//	through 2026-06-30: all 546 days: 6,000.00
//	through 2026-12-31 (the deadline passed, not met): still 6,000.00
func TestMarketConditionMissedKeepsExpense(t *testing.T) {
	a := testAward("H-1", grants.RSU, "2025-01-01", []string{"2026-01-01"}, []int64{1000}, []float64{6})
	a.Condition = &Conditioned{Kind: grants.PriceHurdle, ServiceEnd: []time.Time{ymd("2026-07-01")}}
	got, cost := spread(t, a, "2025-12-31", "2026-06-30", "2026-12-31")
	nearly(t, "2025", got[0], 6000*365.0/546, tolMoney)
	nearly(t, "2025 by hand", got[0], 4010.99, 0.005)
	nearly(t, "H1 2026", got[1], 6000-6000*365.0/546, tolMoney)
	nearly(t, "H2 2026, after the missed deadline", got[2], 0, tolMoney)
	nearly(t, "expected cost", cost, 6000, tolMoney)
	r := mustExpense(t, []Award{a}, Policy{}, "2026-10-01", "2026-12-31")
	nearly(t, "cumulative once the deadline passed", r.Cumulative, 6000, tolMoney)
	if r.Grants[0].ServiceEnd != ymd("2026-07-01") {
		t.Errorf("service end %s, want the derived 2026-07-01", r.Grants[0].ServiceEnd.Format(time.DateOnly))
	}
}

// Rule: when a hurdle is met before the derived service period ends, the
// award vests at the later of that day and its vest date, and the cost
// not yet recognized is recognized by then (ASC 718-10-55-71 to 55-79, from
// memory: the derived service period ends when the condition is met).
//
// Worked by hand, the award above met on 2025-10-01, before its vest date:
// the service now ends 2026-01-01 (365 days), so
//
//	through 2025-09-30: 273 of 546 days × 6,000 = 3,000.00
//	through 2025-10-01: 274 of 365 days × 6,000 = 4,504.11 (the catch-up of 1,504.11 on the day)
//	through 2025-12-31: 365 of 365 days: 6,000.00
func TestMarketConditionMetEarly(t *testing.T) {
	a := testAward("H-2", grants.RSU, "2025-01-01", []string{"2026-01-01"}, []int64{1000}, []float64{6})
	a.Condition = &Conditioned{Kind: grants.PriceHurdle, ServiceEnd: []time.Time{ymd("2026-07-01")}, Met: ymd("2025-10-01")}
	got, cost := spread(t, a, "2025-09-30", "2025-10-01", "2025-12-31", "2026-06-30")
	nearly(t, "through 2025-09-30", got[0], 3000, tolMoney)
	nearly(t, "on 2025-10-01", got[0]+got[1], 6000*274.0/365, tolMoney)
	nearly(t, "on 2025-10-01 by hand", got[0]+got[1], 4504.11, 0.005)
	nearly(t, "through 2025-12-31", got[0]+got[1]+got[2], 6000, tolMoney)
	nearly(t, "after", got[3], 0, tolMoney)
	nearly(t, "expected cost", cost, 6000, tolMoney)
}

// The close of grantstest.Conditioned: every condition's award is booked
// (P-001 at its probable outcome of 150%, the market conditions over their
// derived service periods), and P-001 worked by hand as above: 1,000 units
// at their fair value f, cliff 2027-01-01 (730 days), 150% probable since
// 2026-01-01, and the schedule's estimate that 8% of unvested holders
// leave a year over the 92 days of service left: cumulative at 2026-09-30
// = 1.5 × 1,000 × f × 638/730 × 0.92^(92/365), and the expected cost the
// same without the 638/730.
func TestCloseConditions(t *testing.T) {
	s := grantstest.Conditioned()
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	v, err := pricing.Value(s, ins, pricing.Options{SimTarget: 4})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Close(s, v, nil)
	if err != nil {
		t.Fatal(err)
	}
	by := map[string]GrantExpense{}
	for _, g := range b.Expense.Grants {
		by[g.GrantID] = g
	}
	var f float64
	for _, gv := range v.Grants {
		if gv.Inputs.Grant.ID == "P-001" {
			f = gv.Results[0].Value
		}
	}
	stay := math.Pow(0.92, 92.0/365)
	nearly(t, "P-001 cumulative", by["P-001"].Cumulative, 1.5*1000*f*638/730*stay, tolMoney)
	nearly(t, "P-001 cost", by["P-001"].Cost, 1.5*1000*f*stay, tolMoney)
	for _, id := range []string{"H-001", "H-002", "T-001"} {
		g, ok := by[id]
		if !ok || g.Cost <= 0 || g.Cumulative <= 0 {
			t.Errorf("%s: %+v", id, g)
		}
	}
	// T-001's units are delivered at the end of the performance period,
	// 2028-12-31, though their vest date is 2028-12-31 too: its service
	// ends there; H-002's at or after its vest date 2027-01-15.
	if got := by["T-001"].ServiceEnd; got.Before(ymd("2028-12-31")) {
		t.Errorf("T-001 service end %s", got.Format(time.DateOnly))
	}
	if got := by["H-002"].ServiceEnd; got.Before(ymd("2027-01-15")) {
		t.Errorf("H-002 service end %s", got.Format(time.DateOnly))
	}
}
