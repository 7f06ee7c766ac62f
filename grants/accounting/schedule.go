package accounting

import (
	"fmt"

	"grantworth/grants"
)

// AwardOf pairs grant g of s with its tranches as granted
// (Schedule.Tranches, before forfeitures: attribution applies the events
// itself), its events with the share price in force on each event's date
// (Schedule.PriceAt), its transfers between cost centres and fairValue,
// the fair value per share of each tranche in the same order.
func AwardOf(s *grants.Schedule, g grants.Grant, fairValue []float64) (Award, error) {
	return awardOf(s, g, s.Tranches(g), fairValue)
}

// awardOf is AwardOf with g's tranches ts given (Schedule.Tranches: the
// forfeitures they carry are left out), so that a grant valued already is
// not expanded again.
func awardOf(s *grants.Schedule, g grants.Grant, ts []grants.Tranche, fairValue []float64) (Award, error) {
	if len(fairValue) != len(ts) {
		return Award{}, fmt.Errorf("grant %s: %d fair values for %d tranches", g.ID, len(fairValue), len(ts))
	}
	a := Award{Grant: g, Events: s.EventsOf(g.ID), Transfers: s.TransfersOf(g.ID), Tranches: make([]TrancheCost, len(ts))}
	for _, e := range a.Events {
		var px float64
		if p, ok := s.PriceAt(e.Date); ok {
			px = p.Price
		}
		a.EventPrices = append(a.EventPrices, px)
	}
	for i, t := range ts {
		a.Tranches[i] = TrancheCost{Tranche: grants.Tranche{GrantID: t.GrantID, Index: t.Index, VestDate: t.VestDate, Shares: t.Shares}, FairValue: fairValue[i]}
	}
	return a, nil
}

// PolicyOf is the schedule's attribution and forfeiture policy and its
// framework, the Assumptions rows in force at its valuation date, with the
// fiscal calendar of its Company sheet.
func PolicyOf(s *grants.Schedule) Policy {
	a := s.InForce()
	return Policy{
		Attribution:              a.Attribution,
		Forfeitures:              a.Forfeitures,
		PreVestingForfeitureRate: a.PreVestingForfeitureRate,
		Framework:                a.Framework,
		Calendar:                 s.Company.Fiscal,
	}
}
