package accounting

import (
	"math"
	"time"

	"grantworth/grants"
	"grantworth/grants/pricing"
)

// Conditioned is how a vesting condition beyond service changes an award's
// attribution (Award.Condition).
type Conditioned struct {
	Kind grants.ConditionKind
	// Outcomes are a performance condition's probable outcomes, the share
	// of target units counted from each date on, in date order; before the
	// first, Initial.
	Initial  float64
	Outcomes []Outcome
	// ServiceEnd is, per tranche, the end of the requisite service a market
	// condition sets when later than the vest date: a price hurdle's
	// derived service period, a relative TSR award's performance period.
	// A zero date is the vest date.
	ServiceEnd []time.Time
	// Met is the day a price hurdle was met (zero until it is): a tranche
	// whose vest date has passed vests then, and the rest of its cost is
	// recognized.
	Met time.Time
}

// Outcome is a performance condition's probable outcome from Date on.
type Outcome struct {
	Date     time.Time
	Share    float64 // of target units: the expected payout while probable, 0 while improbable
	Probable bool
}

// ConditionOf is the attribution terms of the condition of grant gv in
// schedule s as known at asOf (the valuation date): a performance
// condition's assessments dated by then, a market condition's derived
// service periods (from the valuation) and the day a hurdle was met. It is
// nil for a grant with service only.
func ConditionOf(s *grants.Schedule, gv *pricing.GrantValue, asOf time.Time) *Conditioned {
	ci := gv.Inputs.Condition
	if ci == nil {
		return nil
	}
	k := ci.Condition
	c := &Conditioned{Kind: k.Kind, Initial: 1}
	switch k.Kind {
	case grants.Performance:
		c.Initial = k.TargetPayout
		for _, a := range s.AssessmentsOf(k.ID) {
			if a.Date.After(asOf) {
				continue
			}
			share, _ := s.Outcome(&k, a.Date)
			c.Outcomes = append(c.Outcomes, Outcome{Date: a.Date, Share: share, Probable: a.Probable})
		}
	case grants.PriceHurdle, grants.RelativeTSR:
		md := gv.Inputs.MeasurementDate
		for k, y := range gv.DerivedServiceYears() {
			end := md.AddDate(0, 0, int(math.Round(y*365)))
			if vd := gv.Inputs.Tranches[k].VestDate; end.Before(vd) {
				end = vd
			}
			c.ServiceEnd = append(c.ServiceEnd, end)
		}
		if !k.HurdleMet.IsZero() && !k.HurdleMet.After(asOf) {
			c.Met = k.HurdleMet
		}
	}
	return c
}

// OutcomeAt is the probable outcome in force at the end of day d: the
// share of target units counted (1 without a performance condition, the
// target payout before the first assessment) and whether it is an
// assessment of probable (true before any).
func (c *Conditioned) OutcomeAt(d time.Time) (share float64, probable bool) {
	return c.outcome(dayNum(d))
}

func (c *Conditioned) outcome(d int) (share float64, probable bool) {
	if c == nil || c.Kind != grants.Performance {
		return 1, true
	}
	share, probable = c.Initial, true
	for _, o := range c.Outcomes {
		if dayNum(o.Date) <= d {
			share, probable = o.Share, o.Probable
		}
	}
	return share, probable
}

// outcome is the share of target units counted at the end of day d, with
// the assessments known by the ledger's last day.
func (l *awardLedger) outcome(d int) float64 {
	share, _ := l.in.Condition.outcome(min(d, l.asOfN))
	return share
}

// applyCondition sets each tranche's requisite service end from the
// award's condition, and the award's last service day.
func (l *awardLedger) applyCondition() {
	c := l.in.Condition
	if c == nil {
		return
	}
	if !c.Met.IsZero() && dayNum(c.Met) <= l.asOfN {
		l.metN = dayNum(c.Met) // endAt
	}
	last := l.last
	for i := range l.tr {
		t := &l.tr[i]
		if i < len(c.ServiceEnd) && !c.ServiceEnd[i].IsZero() && dayNum(c.ServiceEnd[i]) > int(t.endN) {
			t.endN = int32(dayNum(c.ServiceEnd[i]))
		}
		if e := shiftDays(civilDay(l.start), int(t.endN)-l.startN); e.After(last) {
			last = e
		}
	}
	l.last = last
}

// endAt is the last day of tranche t's requisite service as known at the
// end of day d: its vest date, or the later end a market condition sets,
// brought forward once a hurdle is met: from the day it was met (metN)
// the tranche vests at the later of its vest date and that day, never
// later than the derived end.
func (l *awardLedger) endAt(t *trancheLedger, d int) int {
	if d >= l.metN {
		return min(int(t.endN), max(int(t.vestN), l.metN))
	}
	return int(t.endN)
}

// daysAt are tranche t's service days as known at the end of day d.
func (l *awardLedger) daysAt(t *trancheLedger, d int) int { return l.endAt(t, d) - l.startN }
