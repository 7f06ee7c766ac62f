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
	return awardOf(s, g, s.Tranches(g), fairValue, true)
}

// awardOf is AwardOf with g's tranches ts given (Schedule.Tranches: the
// forfeitures they carry are left out), so that a grant valued already is
// not expanded again. With copies its Tranches are ts's with fairValue;
// without, the award refers to ts and fairValue themselves, which must
// stay as they are while it is read (Close's own awards: a large close
// holds no second copy of every tranche).
func awardOf(s *grants.Schedule, g grants.Grant, ts []grants.Tranche, fairValue []float64, copies bool) (Award, error) {
	if len(fairValue) != len(ts) {
		return Award{}, fmt.Errorf("grant %s: %d fair values for %d tranches", g.ID, len(fairValue), len(ts))
	}
	a := Award{Grant: g, Events: s.EventsOf(g.ID), Transfers: s.TransfersOf(g.ID)}
	if len(a.Events) > 0 {
		a.EventPrices = make([]float64, len(a.Events))
	}
	for k, e := range a.Events {
		if p, ok := s.PriceAt(e.Date); ok {
			a.EventPrices[k] = p.Price
		}
	}
	if !copies {
		a.valued, a.fv = ts, fairValue
		return a, nil
	}
	a.Tranches = make([]TrancheCost, len(ts))
	for i, t := range ts {
		a.Tranches[i] = TrancheCost{Tranche: grants.Tranche{GrantID: t.GrantID, Index: t.Index, VestDate: t.VestDate, Shares: t.Shares}, FairValue: fairValue[i]}
	}
	return a, nil
}

// tranches is the number of the award's tranches: its Tranches, or
// those it refers to (awardOf).
func (a *Award) tranches() int {
	if a.valued != nil {
		return len(a.valued)
	}
	return len(a.Tranches)
}

// tranche is the award's tranche i and its fair value per share. Only
// GrantID, Index, VestDate and Shares of the tranche are the award's.
func (a *Award) tranche(i int) (*grants.Tranche, float64) {
	if a.valued != nil {
		return &a.valued[i], a.fv[i]
	}
	return &a.Tranches[i].Tranche, a.Tranches[i].FairValue
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
