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
		nearly(t, string(attr)+" unrecognised 2031", r.Unrecognized, 0, 1e-4)
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
	nearly(t, "graded unrecognised 2029", r.Unrecognized, 38000-cum, tolMoney)
	// Weighted-average remaining period: tranche 2 has 4,500 left over 365
	// days, tranche 3 6,666.67 over 730, tranche 4 11000·1096/1461 over 1,096.
	u2, u3, u4 := 4500.0, 20000.0/3, 11000.0*1096/1461
	wantYears := (u2*365 + u3*730 + u4*1096) / 365 / (u2 + u3 + u4)
	nearly(t, "graded remaining years", r.RemainingYears, wantYears, 1e-12)
	if len(r.Grants) != 1 || len(r.Grants[0].Tranches) != 4 {
		t.Fatalf("want one grant of four tranches, got %+v", r.Grants)
	}
	nearly(t, "tranche 1 period", r.Grants[0].Tranches[0].Period, 8000.0*92/365, tolMoney)
	nearly(t, "tranche 4 unrecognised", r.Grants[0].Tranches[3].Unrecognized, u4, tolMoney)
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
	nearly(t, "straight-line unrecognised 2029", r.Unrecognized, 38000*1096.0/1461, tolMoney)
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
	nearly(t, "unrecognised at 2029-09-30 (net of expected forfeitures)", r.Unrecognized, 10000*math.Pow(0.9, 92.0/365)*92/365, tolMoney)
	r = mustExpense(t, []Award{a}, pol, "2029-10-01", "2029-12-31")
	nearly(t, "Q4 2029", r.Period, 10000-10000*math.Pow(0.9, 92.0/365)*273/365, tolMoney)
	nearly(t, "cumulative 2029", r.Cumulative, 10000, tolMoney)
	nearly(t, "unrecognised 2029", r.Unrecognized, 0, tolMoney)
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
	nearly(t, "as-occur unrecognised", r.Unrecognized, 0, tolMoney)

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

// Rule (ours, matching Schedule.Tranches): a partial forfeiture comes out of
// the unvested tranches that vest latest. The four-tranche award at 10,
// 1,500 forfeited on 2030-06-30 as-occur: tranche 4 loses all 1,000 and
// tranche 3 500; cumulative through 2030-06-30 (546 service days) is
// 10000 + 10000·546/730 + 5000·546/1095 + 0.
func TestPartialForfeitureLatestFirst(t *testing.T) {
	a := testAward("P", grants.Option, "2029-01-01",
		[]string{"2030-01-01", "2031-01-01", "2032-01-01", "2033-01-01"},
		[]int64{1000, 1000, 1000, 1000}, []float64{10, 10, 10, 10})
	a.Events = []grants.Event{{GrantID: "P", Date: ymd("2030-06-30"), Kind: grants.Forfeited, Shares: 1500}}
	r := mustExpense(t, []Award{a}, Policy{Forfeitures: grants.AsOccur}, "2030-04-01", "2030-06-30")
	nearly(t, "cumulative", r.Cumulative, 10000+10000.0*546/730+5000.0*546/1095, tolMoney)
	if got := r.Grants[0].Tranches[3].SharesCounted; got != 0 {
		t.Errorf("tranche 4 counts %v shares, want 0", got)
	}
}

// Rule: a cancellation without a replacement recognises the remaining
// unrecognised cost at once (ASC 718-20-35-9; IFRS 2.28(a); from memory).
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
		nearly(t, fmt.Sprintf("%v unrecognised", pol), r.Unrecognized, 0, tolMoney)
		if pol.Attribution == grants.Graded && pol.Forfeitures == grants.AsOccur {
			nearly(t, "as-occur Q2 2030", r.Period, 40000-before, tolMoney)
		}
		for _, f := range r.Forecast {
			nearly(t, "forecast after cancellation", f.Amount, 0, tolMoney)
		}
	}
}

// Rule: a liability-classified warrant is remeasured at each valuation date
// and the change in fair value is shown apart from compensation (ASC 718-30,
// from memory; our presentation choice, see the package notes). 1,000
// warrants granted 2029-01-01, one-year cliff, grant-date value 5; remeasured
// 6 on 2029-03-31 and 4.50 on 2029-06-30.
func TestLiabilityWarrantRemeasured(t *testing.T) {
	a := testAward("W", grants.Warrant, "2029-01-01", []string{"2030-01-01"}, []int64{1000}, []float64{5})
	a.Grant.Classification = grants.Liability
	a.Remeasurements = []Remeasurement{
		{Date: ymd("2029-03-31"), FairValue: []float64{6}},
		{Date: ymd("2029-06-30"), FairValue: []float64{4.5}},
	}
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}

	// Q1: compensation 5000·90/365 = 1,232.88; liability 6000·90/365 =
	// 1,479.45; change in fair value 1000·90/365 = 246.58.
	r := mustExpense(t, []Award{a}, pol, "2029-01-01", "2029-03-31")
	nearly(t, "Q1 compensation", r.Period, 5000.0*90/365, tolMoney)
	nearly(t, "Q1 fair-value change", r.FairValueChange, 1000.0*90/365, tolMoney)
	nearly(t, "Q1 liability", r.Grants[0].LiabilityEnd, 6000.0*90/365, tolMoney)

	// Q2: compensation 5000·91/365 = 1,246.58; liability 4500·181/365 =
	// 2,231.51; cumulative change (4500 − 5000)·181/365 = −247.95, so Q2's
	// change is −247.95 − 246.58 = −494.52.
	r = mustExpense(t, []Award{a}, pol, "2029-04-01", "2029-06-30")
	nearly(t, "Q2 compensation", r.Period, 5000.0*91/365, tolMoney)
	nearly(t, "Q2 fair-value change", r.FairValueChange, (-500.0*181-1000*90)/365, tolMoney)
	g := r.Grants[0]
	nearly(t, "Q2 liability roll", g.LiabilityEnd-g.LiabilityOpen, g.Period+g.FairValueChange-g.ReclassifiedEquity, tolMoney)
	if len(r.Periods) != 2 || r.Periods[0].Current || !r.Periods[1].Current {
		t.Fatalf("periods: want Q1 context then Q2 current, got %+v", r.Periods)
	}
	nearly(t, "context Q1 fair-value change", r.Periods[0].FairValueChange, 1000.0*90/365, tolMoney)

	// Journal, in cents: Dr compensation / Cr liability 1,246.58; the gain
	// of 494.52 is Dr liability / Cr change in fair value.
	want := []Entry{
		{Lines: []Line{{Role: RoleCompensation, Debit: 1246.58}, {Role: RoleLiability, Credit: 1246.58}}},
		{Lines: []Line{{Role: RoleLiability, Debit: 494.52}, {Role: RoleFairValueChange, Credit: 494.52}}},
	}
	journal := Journal(r, nil, nil, Chart{Decimals: 2})
	if len(journal) != len(want) {
		t.Fatalf("journal: got %+v, want %d entries", journal, len(want))
	}
	for i := range want {
		if b := journal[i].Balance(); b != 0 {
			t.Errorf("journal %d: debits less credits %v, want 0", i, b)
		}
		for j, l := range want[i].Lines {
			got := journal[i].Lines[j]
			if got.Role != l.Role || got.Account != DefaultAccount(l.Role, grants.ASC718) {
				t.Errorf("journal %d line %d: %s %q, want %s %q", i, j, got.Role, got.Account.Name, l.Role, DefaultAccount(l.Role, grants.ASC718).Name)
			}
			if got.Debit != l.Debit || got.Credit != l.Credit {
				t.Errorf("journal %d line %d: debit %v credit %v, want %v %v", i, j, got.Debit, got.Credit, l.Debit, l.Credit)
			}
		}
	}

	// Vested, then 400 exercised on 2030-03-31 at the 2030-03-31 value of
	// 7: 2,800 is reclassified to equity; the liability left is 600 × 7.
	a.Remeasurements = append(a.Remeasurements, Remeasurement{Date: ymd("2030-03-31"), FairValue: []float64{7}})
	a.Events = []grants.Event{{GrantID: "W", Date: ymd("2030-03-31"), Kind: grants.Exercised, Shares: 400}}
	r = mustExpense(t, []Award{a}, pol, "2030-01-01", "2030-03-31")
	g = r.Grants[0]
	nearly(t, "reclassified", g.ReclassifiedEquity, 2800, tolMoney)
	nearly(t, "liability after exercise", g.LiabilityEnd, 4200, tolMoney)
	nearly(t, "liability roll after exercise", g.LiabilityEnd-g.LiabilityOpen, g.Period+g.FairValueChange-g.ReclassifiedEquity, tolMoney)
	nearly(t, "Q1 2030 compensation", r.Period, 0, tolMoney)
}

// Rule: the service period starts at the later of grant date and vest start
// (ServiceStart). A vest start after the grant date delays accrual; one
// before it is caught up on the grant date.
func TestServiceStart(t *testing.T) {
	a := testAward("L", grants.RSU, "2029-01-01", []string{"2030-04-01"}, []int64{365}, []float64{1})
	a.Grant.VestStart = ymd("2029-04-01") // 365 service days to 2030-04-01
	pol := Policy{Forfeitures: grants.AsOccur}
	r := mustExpense(t, []Award{a}, pol, "2029-01-01", "2029-03-31")
	nearly(t, "nothing before vest start", r.Period, 0, tolMoney)
	r = mustExpense(t, []Award{a}, pol, "2029-04-01", "2029-04-30")
	nearly(t, "30 days of 365", r.Period, 30, tolMoney)

	// Vest start back-dated a year to 2028-01-01, four annual tranches:
	// tranche 1 (vest 2029-01-01) is vested at grant and booked on the grant day.
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
// the cumulative; forecast and what follows it add up to the unrecognised cost.
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
			// Mid-life: forecast + after = unrecognised.
			mid, err := Expense([]Award{a}, pol, ymd("2028-07-01"), ymd("2028-09-30"))
			if err != nil {
				t.Fatal(err)
			}
			var fc float64
			for _, f := range mid.Forecast {
				fc += f.Amount
			}
			if math.Abs(fc+mid.AfterForecast-mid.Unrecognized) > tol {
				t.Errorf("%v award %s: forecast %.6f + after %.6f != unrecognised %.6f", pol, a.Grant.ID, fc, mid.AfterForecast, mid.Unrecognized)
			}
			if mid.Unrecognized < -tol || mid.RemainingYears < 0 {
				t.Errorf("%v award %s: unrecognised %.6f over %.3f years", pol, a.Grant.ID, mid.Unrecognized, mid.RemainingYears)
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
