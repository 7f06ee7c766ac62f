package design

import (
	"time"

	"grantworth/grants"
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

// expenseByYear attributes grant g's cost, cost[k] per share of its tranche
// k (the expected cost, with the pre-vesting forfeitures already in it),
// to the fiscal years from its grant to its last day of service, under the
// schedule's attribution method (graded or straight-line). It is the only
// use of the expense attribution in this package: the schedule's own
// attribution (grants.Expense) over one award, one year at a time, with
// forfeitures as they occur (none occur: the cost already expects them).
// The years add up to the total cost.
func expenseByYear(s *grants.Schedule, g grants.Grant, cost []float64, e YearEnd) ([]YearAmount, error) {
	award, err := s.AwardCost(g, cost)
	if err != nil {
		return nil, err
	}
	pol := s.ExpensePolicy()
	pol.Forfeitures, pol.PreVestingForfeitureRate = grants.AsOccur, 0
	// Service ends the day before the last vest date (a tranche vesting
	// on 1 January is fully accrued on 31 December).
	last := g.GrantDate
	for _, t := range award.Tranches {
		if end := t.Tranche.VestDate.AddDate(0, 0, -1); end.After(last) {
			last = end
		}
	}
	var out []YearAmount
	for _, fy := range FiscalYears(g.GrantDate, last, e) {
		rep, err := grants.Expense([]grants.AwardCost{award}, pol, fy.Start, fy.End)
		if err != nil {
			return nil, err
		}
		out = append(out, YearAmount{Year: fy.Year, Start: fy.Start, End: fy.End, Amount: rep.Period})
	}
	return out, nil
}
