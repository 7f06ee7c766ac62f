package accounting

import (
	"fmt"
	"math/rand/v2"
	"testing"
	"time"

	"grantworth/grants"
)

// Rule: quarters, the forecast and the expense by fiscal year follow the
// company's fiscal calendar (a year ending on 31 January here; fiscal
// quarters are the three-month blocks from 1 February, common practice).
// One tranche of 1,000 shares at 10, granted 2026-02-01 and vesting
// 2028-02-01: 730 days of service (no 29 February in between), 10,000/730 a
// day, graded, forfeitures as they occur. Period FY2027 Q3 = 2026-08-01 to
// 2026-10-31, 92 days: 10,000 × 92/730 = 1,260.27. Before it, FY2027 Q1
// (1 February to 30 April, 89 days) and Q2 (May to July, 92 days). After
// it FY2027 Q4 (November to January, 92 days), then FY2028's quarters of
// 89, 92, 92 and 92 days, then nothing. FY2027 recognized 273 days and
// expects 92 more; FY2028 expects 365 days = 5,000.
func TestJanuaryFiscalYearQuartersAndForecast(t *testing.T) {
	a := testAward("J1", grants.Option, "2026-02-01", []string{"2028-02-01"}, []int64{1000}, []float64{10})
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur, Calendar: grants.FiscalCalendar{YearEnd: time.January}}
	r := mustExpense(t, []Award{a}, pol, "2026-08-01", "2026-10-31")
	perDay := 10000.0 / 730
	type want struct {
		label, start, end string
		days              float64
	}
	check := func(what string, got []PeriodAmount, ws []want) {
		t.Helper()
		if len(got) < len(ws) {
			t.Fatalf("%s: %d periods, want at least %d", what, len(got), len(ws))
		}
		for i, w := range ws {
			g := got[i]
			if g.Label != w.label || g.Start.Format(time.DateOnly) != w.start || g.End.Format(time.DateOnly) != w.end {
				t.Errorf("%s %d: %s %s..%s, want %s %s..%s", what, i, g.Label, g.Start.Format(time.DateOnly), g.End.Format(time.DateOnly), w.label, w.start, w.end)
			}
			nearly(t, fmt.Sprintf("%s %s", what, w.label), g.Amount, w.days*perDay, tolMoney)
		}
	}
	check("periods", r.Periods, []want{
		{"FY2027 Q1", "2026-02-01", "2026-04-30", 89},
		{"FY2027 Q2", "2026-05-01", "2026-07-31", 92},
		{"FY2027 Q3", "2026-08-01", "2026-10-31", 92},
	})
	if len(r.Periods) != 3 || !r.Periods[2].Current {
		t.Errorf("periods %+v: want two context quarters and the current one", r.Periods)
	}
	check("forecast", r.Forecast, []want{
		{"FY2027 Q4", "2026-11-01", "2027-01-31", 92},
		{"FY2028 Q1", "2027-02-01", "2027-04-30", 89},
		{"FY2028 Q2", "2027-05-01", "2027-07-31", 92},
		{"FY2028 Q3", "2027-08-01", "2027-10-31", 92},
		{"FY2028 Q4", "2027-11-01", "2028-01-31", 92},
		{"FY2029 Q1", "2028-02-01", "2028-04-30", 0},
	})
	if len(r.Forecast) != ForecastQuarters {
		t.Errorf("%d forecast quarters, want %d", len(r.Forecast), ForecastQuarters)
	}
	nearly(t, "period", r.Period, 92*perDay, tolMoney)
	if len(r.ByFiscalYear) != 2 {
		t.Fatalf("by fiscal year %+v: want FY2027 and FY2028", r.ByFiscalYear)
	}
	y27, y28 := r.ByFiscalYear[0], r.ByFiscalYear[1]
	if y27.Year.Name != "FY2027" || y28.Year.Name != "FY2028" || !y28.Year.End.Equal(ymd("2028-01-31")) {
		t.Errorf("years %+v, %+v", y27.Year, y28.Year)
	}
	nearly(t, "FY2027 recognized", y27.Recognized, 273*perDay, tolMoney)
	nearly(t, "FY2027 expected", y27.Expected, 92*perDay, tolMoney)
	nearly(t, "FY2028 recognized", y28.Recognized, 0, tolMoney)
	nearly(t, "FY2028 expected", y28.Expected, 5000, tolMoney)

	// The same award in calendar quarters: the forecast starts with the
	// two-month stub November to December 2026 that a January year avoids.
	pol.Calendar = grants.FiscalCalendar{}
	r = mustExpense(t, []Award{a}, pol, "2026-08-01", "2026-10-31")
	check("calendar forecast", r.Forecast, []want{{"2026 Q4", "2026-11-01", "2026-12-31", 61}})
}

// Identity (common practice): over many awards and events and every kind
// of calendar, the fiscal years add up to the cumulative expense
// (recognized) and the unrecognized cost (expected), and the recognized
// part of each year equals its quarters.
func TestFiscalYearsAddUp(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 740))
	var awards []Award
	for k := 0; k < 40; k++ {
		a, _ := randomAward(rng, fmt.Sprintf("R%d", k))
		awards = append(awards, a)
	}
	for _, cal := range []grants.FiscalCalendar{{}, {YearEnd: time.January}, {YearEnd: time.June},
		{YearEnd: time.January, WeekBased: true, Weekday: time.Saturday}, {YearEnd: time.September, WeekBased: true, Weekday: time.Friday, Nearest: true}} {
		for _, attr := range []grants.Attribution{grants.Graded, grants.StraightLine} {
			pol := Policy{Attribution: attr, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.12, Calendar: cal}
			start := cal.Quarter(ymd("2027-05-20")).Start
			r := mustExpense(t, awards, pol, start.Format(time.DateOnly), "2027-05-20")
			var rec, exp float64
			for _, y := range r.ByFiscalYear {
				rec += y.Recognized
				exp += y.Expected
				var q float64
				for _, p := range r.Periods {
					if !p.End.Before(y.Year.Start) && !p.End.After(y.Year.End) {
						q += p.Amount
					}
				}
				nearly(t, fmt.Sprintf("%v %s %s recognized against its quarters", cal, attr, y.Year.Name), y.Recognized, q, 1e-6)
			}
			nearly(t, fmt.Sprintf("%v %s recognized", cal, attr), rec, r.Cumulative, 1e-6)
			nearly(t, fmt.Sprintf("%v %s expected", cal, attr), exp, r.Unrecognized, 1e-6)
			var f float64
			for _, p := range r.Forecast {
				f += p.Amount
			}
			nearly(t, fmt.Sprintf("%v %s forecast", cal, attr), f+r.AfterForecast, r.Unrecognized, 1e-6)
		}
	}
}
