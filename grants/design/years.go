package design

import (
	"time"

	"grantworth/grants"
	"grantworth/grants/accounting"
)

// YearAmount is the expense of one fiscal year.
type YearAmount struct {
	Year   int // the fiscal year's name (grants.FiscalPeriod.Year)
	Start  time.Time
	End    time.Time
	Amount float64
}

// expenseByYear attributes grant g's cost (fairValue[k] per share of its
// tranche k) to the fiscal years of calendar cal (grants.FiscalCalendar.Years)
// from its grant to its last day of service:
// the schedule's attribution, accounting.Spread, under the attribution
// method in force at the grant date and with forfeitures estimated at rate
// from the grant date, so that the years add up to the expected cost. It is
// the only use of the attribution in this package.
func expenseByYear(s *grants.Schedule, g grants.Grant, fairValue []float64, rate float64, cal grants.FiscalCalendar) ([]YearAmount, error) {
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
	years := cal.Years(g.GrantDate, last)
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
