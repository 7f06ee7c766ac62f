package design

import (
	"time"

	"grantworth/grants"
	"grantworth/grants/accounting"
)

// YearEnd is the last day of a fiscal year, as a month and a day. The zero
// value is 31 December: calendar years.
type YearEnd struct {
	Month time.Month
	Day   int
}

func (e YearEnd) orDefault() YearEnd {
	if e.Month == 0 {
		return YearEnd{Month: time.December, Day: 31}
	}
	return e
}

// FiscalYear is one fiscal year: its first and last days, and its label,
// the calendar year in which it ends (common practice: a year ending on 30
// June 2027 is fiscal 2027).
type FiscalYear struct {
	Year       int
	Start, End time.Time
}

// FiscalYears are the fiscal years ending on e, from the one that holds
// first to the one that holds last. A year end on a day the month lacks
// (29 February) is the month's last day. This is the one place dates are
// bucketed into years.
func FiscalYears(first, last time.Time, e YearEnd) []FiscalYear {
	e = e.orDefault()
	end := func(y int) time.Time { // the year end in calendar year y
		return time.Date(y, e.Month, min(e.Day, daysIn(y, e.Month)), 0, 0, 0, 0, time.UTC)
	}
	y := first.Year()
	if first.After(end(y)) {
		y++
	}
	var out []FiscalYear
	for {
		fy := FiscalYear{Year: y, Start: end(y-1).AddDate(0, 0, 1), End: end(y)}
		out = append(out, fy)
		if !last.After(fy.End) {
			return out
		}
		y++
	}
}

func daysIn(y int, m time.Month) int {
	return time.Date(y, m+1, 0, 0, 0, 0, 0, time.UTC).Day()
}

// YearAmount is the expense of one fiscal year.
type YearAmount struct {
	Year   int
	Start  time.Time
	End    time.Time
	Amount float64
}

// expenseByYear attributes grant g's cost (fairValue[k] per share of its
// tranche k) to the fiscal years from its grant to its last day of service:
// the schedule's attribution, accounting.Spread, under the attribution
// method in force at the grant date and with forfeitures estimated at rate
// from the grant date, so that the years add up to the expected cost. It is
// the only use of the attribution in this package.
func expenseByYear(s *grants.Schedule, g grants.Grant, fairValue []float64, rate float64, e YearEnd) ([]YearAmount, error) {
	award, err := accounting.AwardOf(s, g, fairValue)
	if err != nil {
		return nil, err
	}
	pol := policyAt(s, g.GrantDate)
	pol.Forfeitures, pol.PreVestingForfeitureRate = grants.Estimate, rate
	// Service ends the day before the last vest date (a tranche vesting
	// on 1 January is fully accrued on 31 December).
	last := g.GrantDate
	for _, t := range award.Tranches {
		if end := t.Tranche.VestDate.AddDate(0, 0, -1); end.After(last) {
			last = end
		}
	}
	years := FiscalYears(g.GrantDate, last, e)
	ends := make([]time.Time, len(years))
	for i, y := range years {
		ends[i] = y.End
	}
	amounts, _, err := accounting.Spread(award, pol, ends)
	if err != nil {
		return nil, err
	}
	out := make([]YearAmount, len(years))
	for i, y := range years {
		out[i] = YearAmount{Year: y.Year, Start: y.Start, End: y.End, Amount: amounts[i]}
	}
	return out, nil
}

// policyAt is the schedule's attribution and forfeiture policy in force on
// day d.
func policyAt(s *grants.Schedule, d time.Time) accounting.Policy {
	a := s.Assumptions.At(d)
	return accounting.Policy{Attribution: a.Attribution, Forfeitures: a.Forfeitures, PreVestingForfeitureRate: a.PreVestingForfeitureRate}
}
