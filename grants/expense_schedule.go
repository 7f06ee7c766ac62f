package grants

import (
	"fmt"
	"time"
)

// AwardCost pairs grant g of s with its tranches as granted
// (Schedule.Tranches, before forfeitures: attribution applies the events
// itself), its events and fairValue, the fair value per share of each
// tranche in the same order.
func (s *Schedule) AwardCost(g Grant, fairValue []float64) (AwardCost, error) {
	ts := s.Tranches(g)
	if len(fairValue) != len(ts) {
		return AwardCost{}, fmt.Errorf("grant %s: %d fair values for %d tranches", g.ID, len(fairValue), len(ts))
	}
	a := AwardCost{Grant: g, Events: s.EventsOf(g.ID)}
	for i, t := range ts {
		a.Tranches = append(a.Tranches, TrancheCost{Tranche: Tranche{GrantID: t.GrantID, Index: t.Index, VestDate: t.VestDate, Shares: t.Shares}, FairValue: fairValue[i]})
	}
	return a, nil
}

// ExpensePolicy is the schedule's attribution and forfeiture policy from its
// Assumptions sheet.
func (s *Schedule) ExpensePolicy() ExpensePolicy {
	return ExpensePolicy{
		Attribution:              s.Assumptions.Attribution,
		Forfeitures:              s.Assumptions.Forfeitures,
		PreVestingForfeitureRate: s.Assumptions.PreVestingForfeitureRate,
	}
}

// Period is the reporting period of the schedule: its period start (the
// first day of the valuation date's quarter when not given) to its
// valuation date.
func (s *Schedule) Period() (start, end time.Time) {
	end = civilDay(s.Company.ValuationDate)
	start = civilDay(s.Company.PeriodStart)
	if s.Company.PeriodStart.IsZero() {
		start = quarterStart(end)
	}
	return start, end
}
