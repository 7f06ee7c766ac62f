package accounting

import (
	"fmt"

	"grantworth/grants"
)

// AwardOf pairs grant g of s with its tranches as granted
// (Schedule.Tranches, before forfeitures: attribution applies the events
// itself), its events and fairValue, the fair value per share of each
// tranche in the same order.
func AwardOf(s *grants.Schedule, g grants.Grant, fairValue []float64) (Award, error) {
	return awardOf(g, s.Tranches(g), s.EventsOf(g.ID), fairValue)
}

// awardOf is AwardOf with g's tranches ts (Schedule.Tranches: the
// forfeitures they carry are left out) and events given, so that a grant
// valued already is not expanded again.
func awardOf(g grants.Grant, ts []grants.Tranche, events []grants.Event, fairValue []float64) (Award, error) {
	if len(fairValue) != len(ts) {
		return Award{}, fmt.Errorf("grant %s: %d fair values for %d tranches", g.ID, len(fairValue), len(ts))
	}
	a := Award{Grant: g, Events: events, Tranches: make([]TrancheCost, len(ts))}
	for i, t := range ts {
		a.Tranches[i] = TrancheCost{Tranche: grants.Tranche{GrantID: t.GrantID, Index: t.Index, VestDate: t.VestDate, Shares: t.Shares}, FairValue: fairValue[i]}
	}
	return a, nil
}

// PolicyOf is the schedule's attribution and forfeiture policy: the
// Assumptions rows in force at its valuation date.
func PolicyOf(s *grants.Schedule) Policy {
	a := s.InForce()
	return Policy{
		Attribution:              a.Attribution,
		Forfeitures:              a.Forfeitures,
		PreVestingForfeitureRate: a.PreVestingForfeitureRate,
	}
}
