package accounting

import (
	"errors"
	"fmt"
	"grantworth/grants"
	"math"
	"math/rand/v2"
	"testing"
	"time"
)

// tolMoney is the tolerance on hand-worked currency amounts: the arithmetic
// is exact, so only float rounding separates the two sides.
const tolMoney = 1e-6

func ymd(s string) time.Time {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		panic(err)
	}
	return t
}

// award builds a grant dated grantDate with one tranche per vest date.
func testAward(id string, inst grants.Instrument, grantDate string, vests []string, shares []int64, fvs []float64) Award {
	a := Award{Grant: grants.Grant{ID: id, Instrument: inst, GrantDate: ymd(grantDate), VestStart: ymd(grantDate), ExpiryDate: ymd(grantDate).AddDate(10, 0, 0)}}
	for i, v := range vests {
		a.Grant.Shares += shares[i]
		a.Tranches = append(a.Tranches, TrancheCost{Tranche: grants.Tranche{GrantID: id, Index: i + 1, VestDate: ymd(v), Shares: shares[i]}, FairValue: fvs[i]})
	}
	return a
}

func mustExpense(t *testing.T, awards []Award, pol Policy, start, end string) *ExpenseReport {
	t.Helper()
	r, err := Expense(awards, pol, ymd(start), ymd(end))
	if err != nil {
		t.Fatalf("Expense(%v, %s..%s): %v", pol, start, end, err)
	}
	return r
}

func nearly(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol || math.IsNaN(got) {
		t.Errorf("%s: got %.6f, want %.6f (diff %.3g, tol %g)", what, got, want, got-want, tol)
	}
}

// Rule: forfeiture estimate over a cliff (IFRS 2 implementation guidance,
// cliff-vesting example; DESIGN §6). 500 employees × 100 options, fair value
// 15, three-year cliff, 20% expected to leave over the three years:
// 50,000 × 80% × 15 / 3 = 200,000 a year. The annual rate that leaves 80%
// after three years is 1 − 0.8^(1/3). 2029-2031 have no 29 February, so each
// year is 365 of the 1,095 service days, a third exactly.
//
// The guidance's figures assume the leavers come as expected; the estimate
// here counts the holders still there at the rate over the service still to
// come, so the test records them: 500·(1 − 0.8^(1/3)) ≈ 36 leave in 2029, 33
// in 2030 and 31 in 2031 (100 in all), each on 31 December. Year 1:
// 464 × 0.8^(2/3) × 100 × 15 / 3 = 199,931.6; year 2: 431 × 0.8^(1/3) × 1,000
// − 199,931.6 = 200,172.6; year 3: 400 × 1,500 − 400,104.2 = 199,895.8. Whole
// leavers against a smooth estimate leave these within 0.1% of 200,000; the
// three years add to 400 × 100 × 15 = 600,000 exactly.
func TestIFRS2CliffForfeitureEstimate(t *testing.T) {
	const tolRounding = 200 // 0.1% of 200,000: whole employees leave, the estimate is smooth
	leavers := map[string]int{"2029": 36, "2030": 33, "2031": 31}
	var awards []Award
	next := 0
	for _, y := range []string{"2029", "2030", "2031"} {
		for k := 0; k < leavers[y]; k++ {
			a := testAward(fmt.Sprintf("E%03d", next), grants.Option, "2029-01-01", []string{"2032-01-01"}, []int64{100}, []float64{15})
			a.Events = []grants.Event{{GrantID: a.Grant.ID, Date: ymd(y + "-12-31"), Kind: grants.Forfeited, Shares: 100}}
			awards = append(awards, a)
			next++
		}
	}
	for ; next < 500; next++ {
		awards = append(awards, testAward(fmt.Sprintf("E%03d", next), grants.Option, "2029-01-01", []string{"2032-01-01"}, []int64{100}, []float64{15}))
	}
	rate := 1 - math.Pow(0.8, 1.0/3)
	for _, attr := range []grants.Attribution{grants.Graded, grants.StraightLine} {
		pol := Policy{Attribution: attr, Forfeitures: grants.Estimate, PreVestingForfeitureRate: rate}
		for _, y := range []string{"2029", "2030", "2031"} {
			r := mustExpense(t, awards, pol, y+"-01-01", y+"-12-31")
			nearly(t, fmt.Sprintf("%s %s expense", attr, y), r.Period, 200000, tolRounding)
		}
		r := mustExpense(t, awards, pol, "2029-01-01", "2029-12-31")
		nearly(t, string(attr)+" 2029 by hand", r.Period, 464*math.Pow(0.8, 2.0/3)*100*15/3, 1e-4)
		r = mustExpense(t, awards, pol, "2031-01-01", "2031-12-31")
		nearly(t, string(attr)+" cumulative 2031", r.Cumulative, 600000, 1e-4)
		nearly(t, string(attr)+" unrecognized 2031", r.Unrecognized, 0, 1e-4)
	}
}

// fourTranche is a four-tranche annual award, 1,000 shares a tranche,
// granted 2029-01-01, fair values 8, 9, 10, 11. Service days to the vest
// dates: 365, 730, 1,095, 1,461 (2032 is a leap year).
func fourTranche() Award {
	return testAward("A4", grants.Option, "2029-01-01",
		[]string{"2030-01-01", "2031-01-01", "2032-01-01", "2033-01-01"},
		[]int64{1000, 1000, 1000, 1000}, []float64{8, 9, 10, 11})
}

// Rule: graded attribution, each tranche straight-line over its own service
// period (IFRS 2 IG; ASC 718-10-35-8), no forfeitures.
func TestFourTrancheGraded(t *testing.T) {
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}
	aw := []Award{fourTranche()}
	cases := []struct {
		start, end string
		want       float64
	}{
		// Q1 2029 has 90 days: 8000·90/365 + 9000·90/730 + 10000·90/1095 + 11000·90/1461 = 4,581.73.
		{"2029-01-01", "2029-03-31", 8000.0*90/365 + 9000.0*90/730 + 10000.0*90/1095 + 11000.0*90/1461},
		// Q4 2029 has 92 days, all four tranches still accruing.
		{"2029-10-01", "2029-12-31", 8000.0*92/365 + 9000.0*92/730 + 10000.0*92/1095 + 11000.0*92/1461},
		// Q1 2030: tranche 1 is done; 90 days on the other three = 3,510.55.
		{"2030-01-01", "2030-03-31", 9000.0*90/730 + 10000.0*90/1095 + 11000.0*90/1461},
	}
	for _, c := range cases {
		r := mustExpense(t, aw, pol, c.start, c.end)
		nearly(t, "graded "+c.start, r.Period, c.want, tolMoney)
	}
	// At 2029-12-31: cumulative 8000 + 9000·365/730 + 10000·365/1095 + 11000·365/1461.
	r := mustExpense(t, aw, pol, "2029-10-01", "2029-12-31")
	cum := 8000 + 4500 + 10000.0/3 + 11000.0*365/1461
	nearly(t, "graded cumulative 2029", r.Cumulative, cum, tolMoney)
	nearly(t, "graded unrecognized 2029", r.Unrecognized, 38000-cum, tolMoney)
	// Weighted-average remaining period: tranche 2 has 4,500 left over 365
	// days, tranche 3 6,666.67 over 730, tranche 4 11000·1096/1461 over 1,096.
	u2, u3, u4 := 4500.0, 20000.0/3, 11000.0*1096/1461
	wantYears := (u2*365 + u3*730 + u4*1096) / 365 / (u2 + u3 + u4)
	nearly(t, "graded remaining years", r.RemainingYears, wantYears, 1e-12)
	if len(r.Grants) != 1 || len(r.Grants[0].Tranches) != 4 {
		t.Fatalf("want one grant of four tranches, got %+v", r.Grants)
	}
	nearly(t, "tranche 1 period", r.Grants[0].Tranches[0].Period, 8000.0*92/365, tolMoney)
	nearly(t, "tranche 4 unrecognized", r.Grants[0].Tranches[3].Unrecognized, u4, tolMoney)
}

// Rule: straight-line attribution over the whole award's service period
// (ASC 718-10-35-8), the floor not binding: total cost 38,000 over 1,461 days.
func TestFourTrancheStraightLine(t *testing.T) {
	pol := Policy{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur}
	aw := []Award{fourTranche()}
	for _, c := range []struct {
		start, end string
		days       float64
	}{{"2029-01-01", "2029-03-31", 90}, {"2029-10-01", "2029-12-31", 92}, {"2030-01-01", "2030-03-31", 90}} {
		r := mustExpense(t, aw, pol, c.start, c.end)
		// 38000·days/1461; the floor on 2030-01-01 is 8,000 < 38000·366/1461 = 9,519.5.
		nearly(t, "straight-line "+c.start, r.Period, 38000*c.days/1461, tolMoney)
	}
	r := mustExpense(t, aw, pol, "2029-10-01", "2029-12-31")
	nearly(t, "straight-line unrecognized 2029", r.Unrecognized, 38000*1096.0/1461, tolMoney)
	nearly(t, "straight-line remaining years", r.RemainingYears, 1096.0/365, 1e-12)
	// By tranche, the award's cumulative goes to the unvested tranches in
	// proportion to cost (none vested yet): tranche 1 gets 8/38 of it.
	nearly(t, "tranche 1 share", r.Grants[0].Tranches[0].Cumulative, 38000*365.0/1461*8/38, tolMoney)
}

// Rule: the straight-line floor (ASC 718-10-35-8): cumulative cost at least
// the cost of the tranches vested so far. Tranches of 2,000, 1,000, 500 and
// 500 shares at 10, vesting 2030-01-01 .. 2033-01-01; total 40,000.
func TestStraightLineFloorBites(t *testing.T) {
	a := testAward("F", grants.Option, "2029-01-01",
		[]string{"2030-01-01", "2031-01-01", "2032-01-01", "2033-01-01"},
		[]int64{2000, 1000, 500, 500}, []float64{10, 10, 10, 10})
	pol := Policy{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur}
	cases := []struct {
		start, end string
		want       float64
	}{
		// Through 2029-12-31 nothing has vested: 40000·365/1461 = 9,993.16.
		{"2029-10-01", "2029-12-31", 40000.0 * 92 / 1461},
		// Through 2030-03-31: max(40000·455/1461 = 12,457.22, 20,000 vested) = 20,000;
		// Q1 2030 = 20,000 − 9,993.16 = 10,006.84.
		{"2030-01-01", "2030-03-31", 20000 - 40000.0*365/1461},
		// Through 2030-12-31: max(40000·730/1461 = 19,986.31, 20,000) = 20,000; Q2-Q4 2030 book nothing.
		{"2030-04-01", "2030-12-31", 0},
		// Through 2031-01-01: max(40000·731/1461 = 20,013.69, 30,000) = 30,000.
		{"2031-01-01", "2031-01-01", 10000},
		// Through 2032-12-30: max(40000·1460/1461 = 39,972.62, 35,000): the line is above the floor again.
		{"2031-01-02", "2032-12-30", 40000.0*1460/1461 - 30000},
		// Through 2032-12-31 the service is complete: 40,000.
		{"2032-12-31", "2032-12-31", 40000 - 40000.0*1460/1461},
	}
	for _, c := range cases {
		r := mustExpense(t, []Award{a}, pol, c.start, c.end)
		nearly(t, "floor "+c.start+".."+c.end, r.Period, c.want, tolMoney)
	}
	// Graded on the same award for contrast: the floor never binds graded.
	r := mustExpense(t, []Award{a}, Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}, "2029-01-01", "2029-12-31")
	nearly(t, "graded 2029", r.Period, 20000+10000.0*365/730+5000.0*365/1095+5000.0*365/1461, tolMoney)
}

// Rule: an estimated forfeiture rate trued up to actual by vesting (ASC
// 718-10-35-3; IFRS 2.20). One tranche of 1,000 at 10 vesting 2030-01-01
// after 365 service days, rate 10%. At the end of a day the count is the
// 1,000 still there times 0.9^(service days still to come / 365): through
// 2029-09-30 (273 days served, 92 to come) 10,000 × 0.9^(92/365) × 273/365;
// nobody left, so by 2029-12-31 the count has risen to the actual 1,000 and
// the cumulative cost is 10,000; vesting on 2030-01-01 adds nothing.
func TestEstimateTrueUpAtVesting(t *testing.T) {
	a := testAward("T", grants.Option, "2029-01-01", []string{"2030-01-01"}, []int64{1000}, []float64{10})
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.10}
	r := mustExpense(t, []Award{a}, pol, "2029-01-01", "2029-09-30")
	nearly(t, "cumulative to 2029-09-30", r.Cumulative, 10000*math.Pow(0.9, 92.0/365)*273/365, tolMoney)
	nearly(t, "unrecognized at 2029-09-30 (net of expected forfeitures)", r.Unrecognized, 10000*math.Pow(0.9, 92.0/365)*92/365, tolMoney)
	r = mustExpense(t, []Award{a}, pol, "2029-10-01", "2029-12-31")
	nearly(t, "Q4 2029", r.Period, 10000-10000*math.Pow(0.9, 92.0/365)*273/365, tolMoney)
	nearly(t, "cumulative 2029", r.Cumulative, 10000, tolMoney)
	nearly(t, "unrecognized 2029", r.Unrecognized, 0, tolMoney)
	r = mustExpense(t, []Award{a}, pol, "2030-01-01", "2030-03-31")
	nearly(t, "Q1 2030 at vesting", r.Period, 0, tolMoney)
	// The forecast made at 2029-09-30 books the rest at the expected share
	// (forfeitures at the rate): 10,000 × 0.9^(92/365) × 92/365 in Q4.
	r = mustExpense(t, []Award{a}, pol, "2029-07-01", "2029-09-30")
	nearly(t, "forecast Q4 2029", r.Forecast[0].Amount, 10000*math.Pow(0.9, 92.0/365)*92/365, tolMoney)
}

// Rule: a termination under both forfeiture policies (ASC 718-10-35-3 and
// 718-10-35-1D, from memory; IFRS 2.19-20). The four-tranche award, all at
// 10, the holder leaves on 2030-06-30: tranches 2-4 (3,000 shares) are
// forfeited and their cost reversed; tranche 1 vested on 2030-01-01 stays.
// Cumulative through 2030-03-31 is 455 service days.
func TestTermination(t *testing.T) {
	a := testAward("X", grants.Option, "2029-01-01",
		[]string{"2030-01-01", "2031-01-01", "2032-01-01", "2033-01-01"},
		[]int64{1000, 1000, 1000, 1000}, []float64{10, 10, 10, 10})
	a.Events = []grants.Event{{GrantID: "X", Date: ymd("2030-06-30"), Kind: grants.Forfeited, Shares: 3000, Row: 2}}

	// As-occur: through 2030-03-31 10000 + 10000·455/730 + 10000·455/1095 + 10000·455/1461
	// = 23,502.43; through 2030-06-30 only tranche 1's 10,000 remains.
	asOccur := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}
	before := 10000 + 10000.0*455/730 + 10000.0*455/1095 + 10000.0*455/1461
	r := mustExpense(t, []Award{a}, asOccur, "2030-04-01", "2030-06-30")
	nearly(t, "as-occur Q2 2030", r.Period, 10000-before, tolMoney)
	nearly(t, "as-occur cumulative", r.Cumulative, 10000, tolMoney)
	nearly(t, "as-occur unrecognized", r.Unrecognized, 0, tolMoney)
	// The service ends at the last vest date that still has shares.
	if !r.Grants[0].ServiceEnd.Equal(ymd("2030-01-01")) {
		t.Errorf("service end after the termination %v, want 2030-01-01", r.Grants[0].ServiceEnd)
	}

	// Estimate at 10%: through 2030-03-31 the unvested tranches count at
	// 0.9^(service days still to come / 365): 730−455, 1095−455 and 1461−455
	// days; tranche 1 is vested at its 10,000.
	est := Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.10}
	beforeEst := 10000 + 10000*math.Pow(0.9, 275.0/365)*455/730 + 10000*math.Pow(0.9, 640.0/365)*455/1095 + 10000*math.Pow(0.9, 1006.0/365)*455/1461
	r = mustExpense(t, []Award{a}, est, "2030-04-01", "2030-06-30")
	nearly(t, "estimate Q2 2030", r.Period, 10000-beforeEst, tolMoney)
	nearly(t, "estimate cumulative", r.Cumulative, 10000, tolMoney)

	// The day before, nothing is reversed yet.
	r = mustExpense(t, []Award{a}, asOccur, "2030-04-01", "2030-06-29")
	nearly(t, "as-occur through 06-29", r.Cumulative, 10000+10000.0*545/730+10000.0*545/1095+10000.0*545/1461, tolMoney)

	// Straight-line: through 2030-03-31 max(40000·455/1461, 10000) = 12,457.22;
	// after the termination the floor leaves exactly the vested 10,000.
	sl := Policy{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur}
	r = mustExpense(t, []Award{a}, sl, "2030-04-01", "2030-06-30")
	nearly(t, "straight-line Q2 2030", r.Period, 10000-40000.0*455/1461, tolMoney)
}

// Rule (DESIGN §3; ours, the one rule of grants.Allocate): a partial
// forfeiture of a pooled row comes out of every unvested tranche in
// proportion, and reverses the cost recognized on the shares it takes
// (ASC 718-10-35-3; IFRS 2.19-20). A pooled row of 10,000 RSUs granted
// 2029-01-01 at 10 a unit, four yearly tranches of 2,500 vesting
// 2030-01-01 .. 2033-01-01 (365, 730, 1,095 and 1,461 service days);
// 1,000 forfeited on 2029-06-30, as-occur: 250 from each tranche, which
// keeps 2,250. Through 2029-03-31 (90 days) the cost is
// 25,000 × 90 × (1/365 + 1/730 + 1/1095 + 1/1461); through 2029-06-30
// (181 days) 22,500 × 181 × (the same sum). Taking the 1,000 from the last
// tranche alone would have left 2,500, 2,500, 2,500 and 1,500.
// Straight-line over the whole award: 90,000 × 181/1,461 through
// 2029-06-30, the service still ending 2033-01-01, since every tranche
// keeps shares.
func TestPartialForfeitureProRata(t *testing.T) {
	a := testAward("POOL", grants.RSU, "2029-01-01",
		[]string{"2030-01-01", "2031-01-01", "2032-01-01", "2033-01-01"},
		[]int64{2500, 2500, 2500, 2500}, []float64{10, 10, 10, 10})
	a.Events = []grants.Event{{GrantID: "POOL", Date: ymd("2029-06-30"), Kind: grants.Forfeited, Shares: 1000, Row: 3}}
	sum := 1.0/365 + 1.0/730 + 1.0/1095 + 1.0/1461
	r := mustExpense(t, []Award{a}, Policy{Forfeitures: grants.AsOccur}, "2029-04-01", "2029-06-30")
	nearly(t, "cumulative through 2029-06-30", r.Cumulative, 22500*181*sum, tolMoney)
	nearly(t, "Q2 2029", r.Period, 22500*181*sum-25000*90*sum, tolMoney)
	for i, te := range r.Grants[0].Tranches {
		if te.SharesCounted != 2250 {
			t.Errorf("tranche %d counts %v shares, want 2,250", i+1, te.SharesCounted)
		}
	}
	nearly(t, "expected total cost", r.Grants[0].Cost, 90000, tolMoney)
	sl := mustExpense(t, []Award{a}, Policy{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur}, "2029-04-01", "2029-06-30")
	nearly(t, "straight-line cumulative", sl.Cumulative, 90000*181.0/1461, tolMoney)
	if !sl.Grants[0].ServiceEnd.Equal(ymd("2033-01-01")) {
		t.Errorf("straight-line service ends %v, want 2033-01-01", sl.Grants[0].ServiceEnd)
	}
}

// Rule: a cancellation without a replacement recognizes the remaining
// unrecognized cost at once (ASC 718-20-35-9; IFRS 2.28(a); from memory).
// The four-tranche award at 10 a share, 3,000 unvested shares cancelled on
// 2030-06-30: cumulative jumps to the full 40,000.
func TestCancellationAccelerates(t *testing.T) {
	a := testAward("C", grants.Option, "2029-01-01",
		[]string{"2030-01-01", "2031-01-01", "2032-01-01", "2033-01-01"},
		[]int64{1000, 1000, 1000, 1000}, []float64{10, 10, 10, 10})
	a.Events = []grants.Event{{GrantID: "C", Date: ymd("2030-06-30"), Kind: grants.Cancelled, Shares: 3000}}
	before := 10000 + 10000.0*455/730 + 10000.0*455/1095 + 10000.0*455/1461
	for _, pol := range []Policy{
		{Attribution: grants.Graded, Forfeitures: grants.AsOccur},
		{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur},
		{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1},
	} {
		r := mustExpense(t, []Award{a}, pol, "2030-04-01", "2030-06-30")
		nearly(t, fmt.Sprintf("%v cumulative", pol), r.Cumulative, 40000, tolMoney)
		nearly(t, fmt.Sprintf("%v unrecognized", pol), r.Unrecognized, 0, tolMoney)
		if pol.Attribution == grants.Graded && pol.Forfeitures == grants.AsOccur {
			nearly(t, "as-occur Q2 2030", r.Period, 40000-before, tolMoney)
		}
		for _, f := range r.Forecast {
			nearly(t, "forecast after cancellation", f.Amount, 0, tolMoney)
		}
	}
}

// Rule: a liability-classified award to a provider of services is
// remeasured at every period end and on the day it is exercised, and every
// change in its fair value is compensation cost (ASC 718-30-35-3; IFRS
// 2.30-33); its unrecognized cost is measured at the current fair value.
// 1,000 warrants granted 2029-01-01 for services, vesting 2030-01-01 (365
// service days), worth 5 at grant, remeasured 6 on 2029-03-31, 4.50 on
// 2029-06-30, 6.50 on 2029-12-31, 8 on 2030-02-14 (the exercise of 400)
// and 7 on 2030-03-31.
//
//   - Q1 2029: liability = cost = 6 × 1,000 × 90/365 = 1,479.45.
//   - Q2 2029: liability 4.50 × 1,000 × 181/365 = 2,231.51, so the
//     quarter's cost is 2,231.51 − 1,479.45 = 752.05; the expected total
//     is 4,500 at the current fair value, 4,500 × 184/365 unrecognized.
//   - Q1 2030: the liability opens at 6.50 × 1,000 = 6,500; 400 exercised
//     at the exercise day's 8 move 3,200 to equity; it closes at
//     600 × 7 = 4,200; the cost is 4,200 + 3,200 − 6,500 = 900. Had the
//     warrants been reclassified at the last period-end value of 6.50, the
//     cost would have been 300: the remeasurement on the exercise day is
//     the 400 × (8 − 6.50) = 600 between them.
func TestLiabilityAwardRemeasuredToSettlement(t *testing.T) {
	a := testAward("W", grants.Warrant, "2029-01-01", []string{"2030-01-01"}, []int64{1000}, []float64{5})
	a.Grant.Classification, a.Grant.Purpose = grants.Liability, grants.Compensation
	a.Remeasurements = []Remeasurement{
		{Date: ymd("2029-03-31"), FairValue: []float64{6}},
		{Date: ymd("2029-06-30"), FairValue: []float64{4.5}},
	}
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}
	r := mustExpense(t, []Award{a}, pol, "2029-01-01", "2029-03-31")
	nearly(t, "Q1 compensation", r.Period, 6000.0*90/365, tolMoney)
	nearly(t, "Q1 liability", r.Grants[0].LiabilityEnd, 6000.0*90/365, tolMoney)
	nearly(t, "no fair-value change apart from compensation", r.FairValueChange, 0, 0)

	r = mustExpense(t, []Award{a}, pol, "2029-04-01", "2029-06-30")
	g := r.Grants[0]
	nearly(t, "Q2 compensation", r.Period, 4500.0*181/365-6000.0*90/365, tolMoney)
	nearly(t, "Q2 expected total at current fair value", g.Cost, 4500, tolMoney)
	nearly(t, "Q2 unrecognized at current fair value", r.Unrecognized, 4500.0*184/365, tolMoney)
	nearly(t, "Q2 tranche fair value shown", g.Tranches[0].FairValue, 4.5, 0)
	nearly(t, "Q2 liability roll", g.LiabilityEnd-g.LiabilityOpen, g.Period-g.ReclassifiedEquity, tolMoney)
	if len(r.Periods) != 2 || r.Periods[0].Current || !r.Periods[1].Current {
		t.Fatalf("periods: want Q1 context then Q2 current, got %+v", r.Periods)
	}
	nearly(t, "context Q1 compensation", r.Periods[0].Amount, 6000.0*90/365, tolMoney)

	a.Remeasurements = append(a.Remeasurements,
		Remeasurement{Date: ymd("2029-12-31"), FairValue: []float64{6.5}},
		Remeasurement{Date: ymd("2030-02-14"), FairValue: []float64{8}},
		Remeasurement{Date: ymd("2030-03-31"), FairValue: []float64{7}})
	a.Events = []grants.Event{{GrantID: "W", Date: ymd("2030-02-14"), Kind: grants.Exercised, Shares: 400}}
	r = mustExpense(t, []Award{a}, pol, "2030-01-01", "2030-03-31")
	g = r.Grants[0]
	nearly(t, "Q1 2030 opening liability", g.LiabilityOpen, 6500, tolMoney)
	nearly(t, "reclassified at the exercise day's value", g.ReclassifiedEquity, 3200, tolMoney)
	nearly(t, "closing liability", g.LiabilityEnd, 4200, tolMoney)
	nearly(t, "Q1 2030 compensation", r.Period, 900, tolMoney)

	// Journal: Dr compensation / Cr award liability 900; Dr award
	// liability / Cr additional paid-in capital 3,200.
	checkJournal(t, Journal(r, nil, nil, Chart{Decimals: 2}), []Entry{
		{Lines: []Line{{Role: RoleCompensation, Debit: 900}, {Role: RoleAwardLiability, Credit: 900}}},
		{Lines: []Line{{Role: RoleAwardLiability, Debit: 3200}, {Role: RoleEquity, Credit: 3200}}},
	}, grants.ASC718)
}

// checkJournal compares entries with want by role and amount, the
// accounts by the framework's default names, and checks that each balances.
func checkJournal(t *testing.T, got, want []Entry, fw grants.Framework) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("journal: got %+v, want %d entries", got, len(want))
	}
	for i := range want {
		if b := got[i].Balance(); b != 0 {
			t.Errorf("journal %d: debits less credits %v, want 0", i, b)
		}
		if len(got[i].Lines) != len(want[i].Lines) {
			t.Fatalf("journal %d: %+v", i, got[i])
		}
		for j, l := range want[i].Lines {
			g := got[i].Lines[j]
			if g.Role != l.Role || g.Account != DefaultAccount(l.Role, fw) {
				t.Errorf("journal %d line %d: %s %q, want %s %q", i, j, g.Role, g.Account.Name, l.Role, DefaultAccount(l.Role, fw).Name)
			}
			// The journal is in cents: want rounded to the cent.
			nearly(t, fmt.Sprintf("journal %d line %d debit", i, j), g.Debit, math.Round(l.Debit*100)/100, 1e-9)
			nearly(t, fmt.Sprintf("journal %d line %d credit", i, j), g.Credit, math.Round(l.Credit*100)/100, 1e-9)
		}
	}
}

// Rule: service starts on the grant date, or on a later hire date the
// schedule gives; a vest start after the grant date does not delay it
// (ASC 718-10-35-2 and IFRS 2.15, from memory: cost follows the service
// the holder renders, from the grant date for a holder already employed).
// 455 RSUs at 1 granted 2029-01-01, vesting 2030-04-01 (455 days on).
//   - Vest start 2029-04-01: service still from 2029-01-01, so Q1 2029
//     (90 days) books 455 × 90/455 = 90.
//   - Hire date 2029-04-01: nothing in Q1; 365 service days to vesting, so
//     April books 455 × 30/365.
//   - A tranche vested before the grant date (vest start back-dated a
//     year) is caught up on the grant day.
func TestServiceStart(t *testing.T) {
	a := testAward("L", grants.RSU, "2029-01-01", []string{"2030-04-01"}, []int64{455}, []float64{1})
	a.Grant.VestStart = ymd("2029-04-01")
	pol := Policy{Forfeitures: grants.AsOccur}
	r := mustExpense(t, []Award{a}, pol, "2029-01-01", "2029-03-31")
	nearly(t, "a later vest start does not delay service", r.Period, 90, tolMoney)
	if !r.Grants[0].ServiceStart.Equal(ymd("2029-01-01")) {
		t.Errorf("service start %v, want the grant date", r.Grants[0].ServiceStart)
	}

	a.Grant.HireDate = ymd("2029-04-01")
	r = mustExpense(t, []Award{a}, pol, "2029-01-01", "2029-03-31")
	nearly(t, "nothing before the hire date", r.Period, 0, tolMoney)
	r = mustExpense(t, []Award{a}, pol, "2029-04-01", "2029-04-30")
	nearly(t, "30 days of 365 from the hire date", r.Period, 455*30.0/365, tolMoney)
	a.Grant.HireDate = ymd("2028-06-01") // hired before the grant: the grant date rules
	r = mustExpense(t, []Award{a}, pol, "2029-01-01", "2029-03-31")
	nearly(t, "a hire date before the grant changes nothing", r.Period, 90, tolMoney)

	b := testAward("B", grants.Option, "2029-01-01", []string{"2029-01-01", "2030-01-01"}, []int64{100, 100}, []float64{2, 2})
	b.Grant.VestStart = ymd("2028-01-01")
	r = mustExpense(t, []Award{b}, pol, "2029-01-01", "2029-01-01")
	nearly(t, "catch-up on the grant day", r.Period, 200+200.0/365, tolMoney)
}

// Rule: events that do not fit their grant are errors naming the row.
func TestEventErrors(t *testing.T) {
	base := fourTranche()
	cases := []struct {
		name string
		ev   grants.Event
	}{
		{"exercise unvested", grants.Event{Date: ymd("2029-06-30"), Kind: grants.Exercised, Shares: 1, Row: 4}},
		{"exercise more than vested", grants.Event{Date: ymd("2030-06-30"), Kind: grants.Exercised, Shares: 1001, Row: 5}},
		{"forfeit more than outstanding", grants.Event{Date: ymd("2030-06-30"), Kind: grants.Forfeited, Shares: 4001, Row: 6}},
		{"before grant", grants.Event{Date: ymd("2028-12-31"), Kind: grants.Forfeited, Shares: 1, Row: 7}},
		{"zero shares", grants.Event{Date: ymd("2029-12-31"), Kind: grants.Cancelled, Shares: 0, Row: 8}},
		{"unknown kind", grants.Event{Date: ymd("2029-12-31"), Kind: "sold", Shares: 1, Row: 9}},
	}
	for _, c := range cases {
		a := base
		a.Events = []grants.Event{c.ev}
		_, err := Expense([]Award{a}, Policy{}, ymd("2030-10-01"), ymd("2030-12-31"))
		var ee *EventError
		if !errors.As(err, &ee) || !errors.Is(err, ErrEvent) || ee.Row != c.ev.Row {
			t.Errorf("%s: got %v, want an EventError for row %d", c.name, err, c.ev.Row)
		}
	}
	// Events after the period end are not applied yet.
	a := base
	a.Events = []grants.Event{{Date: ymd("2031-06-30"), Kind: grants.Exercised, Shares: 5000}}
	if _, err := Expense([]Award{a}, Policy{}, ymd("2030-10-01"), ymd("2030-12-31")); err != nil {
		t.Errorf("event after the period: %v", err)
	}
	if _, err := Expense([]Award{base}, Policy{Attribution: "front-loaded"}, ymd("2030-10-01"), ymd("2030-12-31")); err == nil {
		t.Error("unknown attribution accepted")
	}
	if _, err := Expense([]Award{base}, Policy{PreVestingForfeitureRate: 1}, ymd("2030-10-01"), ymd("2030-12-31")); err == nil {
		t.Error("forfeiture rate 1 accepted")
	}
}

// randomAward is a grant of 1-6 tranches at random vest dates with random
// fair values, and at most one termination or cancellation and some exercises.
func randomAward(rng *rand.Rand, id string) (a Award, vestedCost float64) {
	grant := ymd("2027-01-01").AddDate(0, 0, rng.IntN(900))
	n := 1 + rng.IntN(6)
	a = Award{Grant: grants.Grant{ID: id, Instrument: []grants.Instrument{grants.Option, grants.RSU, grants.Warrant}[rng.IntN(3)], GrantDate: grant, VestStart: grant.AddDate(0, 0, rng.IntN(200)-100), ExpiryDate: grant.AddDate(10, 0, 0)}}
	v := grant
	for i := 0; i < n; i++ {
		v = v.AddDate(0, 0, rng.IntN(400))
		sh := int64(1 + rng.IntN(5000))
		a.Grant.Shares += sh
		a.Tranches = append(a.Tranches, TrancheCost{Tranche: grants.Tranche{GrantID: id, Index: i + 1, VestDate: v, Shares: sh}, FairValue: 20 * rng.Float64()})
	}
	end := ymd("2027-01-01").AddDate(0, 0, 2800)
	switch rng.IntN(3) {
	case 0: // no event: every tranche vests
		for _, tc := range a.Tranches {
			vestedCost += tc.FairValue * float64(tc.Tranche.Shares)
		}
	case 1, 2: // a termination (or cancellation) of everything unvested on day e
		e := grant.AddDate(0, 0, rng.IntN(int(end.Sub(grant).Hours()/24)))
		kind := grants.Forfeited
		if rng.IntN(2) == 0 {
			kind = grants.Cancelled
		}
		var unvested, vested int64
		for _, tc := range a.Tranches {
			if tc.Tranche.VestDate.After(e) {
				unvested += tc.Tranche.Shares
				if kind == grants.Cancelled {
					vestedCost += tc.FairValue * float64(tc.Tranche.Shares)
				}
			} else {
				vested += tc.Tranche.Shares
				vestedCost += tc.FairValue * float64(tc.Tranche.Shares)
			}
		}
		if vested > 0 {
			x := int64(rng.IntN(int(vested)) + 1)
			a.Events = append(a.Events, grants.Event{GrantID: id, Date: e, Kind: grants.Exercised, Shares: x})
		}
		if unvested > 0 {
			a.Events = append(a.Events, grants.Event{GrantID: id, Date: e, Kind: kind, Shares: unvested})
		}
	}
	return a, vestedCost
}

// Property (ASC 718-10-35-3 and IFRS 2.19, the cost of an award ends at the
// grant-date fair value of what vests): over an award's whole life the
// expense adds up to fair value × shares that vested (cancelled shares count
// as vested, being accelerated), under every policy; the periods add up to
// the cumulative; forecast and what follows it add up to the unrecognized cost.
func TestLifetimeExpenseEqualsVestedCost(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 718))
	pols := []Policy{
		{Attribution: grants.Graded, Forfeitures: grants.AsOccur},
		{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur},
		{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.15},
		{Attribution: grants.StraightLine, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.15},
	}
	for k := 0; k < 200; k++ {
		a, want := randomAward(rng, fmt.Sprintf("R%d", k))
		tol := 1e-9 * math.Max(1, want)
		for _, pol := range pols {
			r, err := Expense([]Award{a}, pol, ymd("2034-10-01"), ymd("2034-12-31"))
			if err != nil {
				t.Fatalf("award %+v: %v", a, err)
			}
			if math.Abs(r.Cumulative-want) > tol {
				t.Errorf("%v award %s (%d tranches, events %+v): lifetime %.6f, want %.6f", pol, a.Grant.ID, len(a.Tranches), a.Events, r.Cumulative, want)
			}
			var sum float64
			for _, p := range r.Periods {
				sum += p.Amount
			}
			if math.Abs(sum-r.Cumulative) > tol {
				t.Errorf("%v award %s: periods add to %.6f, cumulative %.6f", pol, a.Grant.ID, sum, r.Cumulative)
			}
			// Mid-life: forecast + after = unrecognized.
			mid, err := Expense([]Award{a}, pol, ymd("2028-07-01"), ymd("2028-09-30"))
			if err != nil {
				t.Fatal(err)
			}
			var fc float64
			for _, f := range mid.Forecast {
				fc += f.Amount
			}
			if math.Abs(fc+mid.AfterForecast-mid.Unrecognized) > tol {
				t.Errorf("%v award %s: forecast %.6f + after %.6f != unrecognized %.6f", pol, a.Grant.ID, fc, mid.AfterForecast, mid.Unrecognized)
			}
			if mid.Unrecognized < -tol || mid.RemainingYears < 0 {
				t.Errorf("%v award %s: unrecognized %.6f over %.3f years", pol, a.Grant.ID, mid.Unrecognized, mid.RemainingYears)
			}
		}
	}
}

// Property: with no events, cumulative cost never falls from one quarter to
// the next (common practice: expense is only reversed by forfeiture).
func TestCumulativeNonDecreasingWithoutEvents(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 35))
	for k := 0; k < 50; k++ {
		a, _ := randomAward(rng, "M")
		a.Events = nil
		for _, pol := range []Policy{{Attribution: grants.StraightLine, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.2}, {Attribution: grants.Graded}} {
			r := mustExpense(t, []Award{a}, pol, "2034-10-01", "2034-12-31")
			for _, p := range r.Periods {
				if p.Amount < -1e-9 {
					t.Errorf("%v: quarter %s amount %.6f < 0", pol, p.Start.Format(time.DateOnly), p.Amount)
				}
			}
		}
	}
}

// The forecast covers 16 calendar quarters after the valuation date, the
// first partial when the valuation date is not a quarter end.
func TestForecastQuarters(t *testing.T) {
	r := mustExpense(t, []Award{fourTranche()}, Policy{}, "2029-08-01", "2029-11-15")
	if len(r.Forecast) != ForecastQuarters {
		t.Fatalf("forecast has %d quarters", len(r.Forecast))
	}
	if got := r.Forecast[0]; !got.Start.Equal(ymd("2029-11-16")) || !got.End.Equal(ymd("2029-12-31")) {
		t.Errorf("first forecast quarter %v..%v", got.Start, got.End)
	}
	if got := r.Forecast[15]; !got.Start.Equal(ymd("2033-07-01")) || !got.End.Equal(ymd("2033-09-30")) {
		t.Errorf("last forecast quarter %v..%v", got.Start, got.End)
	}
	// Context: Q1, Q2 2029, then July 2029 (the period starts 1 August), then the current period.
	if len(r.Periods) != 4 || !r.Periods[2].End.Equal(ymd("2029-07-31")) || !r.Periods[3].Current {
		t.Errorf("periods %+v", r.Periods)
	}
}

// Rule: one award's cost over periods of one's choosing (Spread), as
// expected at grant. Worked by hand: two tranches of 100 shares at 10,
// granted 2029-01-01, vesting 2030-01-01 (365 days) and 2031-01-01 (730
// days). Graded (each tranche over its own service; IFRS 2.IG11, from
// memory; ASC 718-10-35-8): 2029 = 1,000 + 500, 2030 = 500. Straight-line over the
// award (ASC 718-10-35-8): 1,000 a year, the floor of vested cost never
// binding. Under an estimate of 10% a year, each tranche's cost is scaled
// by 0.9 to the years of its whole service: 1,000 × 0.9 + 1,000 × 0.81.
func TestSpread(t *testing.T) {
	a := testAward("D", grants.Option, "2029-01-01", []string{"2030-01-01", "2031-01-01"}, []int64{100, 100}, []float64{10, 10})
	ends := []time.Time{ymd("2029-12-31"), ymd("2030-12-31"), ymd("2031-12-31")}
	cases := []struct {
		name    string
		pol     Policy
		amounts []float64
		cost    float64
	}{
		{"graded", Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}, []float64{1500, 500, 0}, 2000},
		{"straight-line", Policy{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur}, []float64{1000, 1000, 0}, 2000},
		{"graded estimate", Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1},
			[]float64{900 + 405, 405, 0}, 900 + 810},
	}
	for _, c := range cases {
		got, cost, err := Spread(a, c.pol, ends)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		var sum float64
		for i := range got {
			nearly(t, fmt.Sprintf("%s year %d", c.name, i+1), got[i], c.amounts[i], tolMoney)
			sum += got[i]
		}
		nearly(t, c.name+" cost", cost, c.cost, tolMoney)
		nearly(t, c.name+" years add up to the cost", sum, cost, tolMoney)
	}
	if _, _, err := Spread(a, Policy{}, []time.Time{ymd("2030-12-31"), ymd("2029-12-31")}); err == nil {
		t.Error("Spread accepted period ends out of order")
	}
}
