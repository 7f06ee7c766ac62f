package accounting

import (
	"fmt"
	"math"
	"time"

	"grantworth/grants"
	"grantworth/valuation"
)

// RollLine is one line of a roll-forward: shares, and their weighted-average
// exercise price (0 for RSUs) and grant-date fair value per share.
type RollLine struct {
	Shares                int64
	WeightedExercisePrice float64
	WeightedFairValue     float64
}

// RollForward moves a count from the start of the period to its end:
// Start + Granted − Vested − Exercised − Forfeited − Cancelled − Expired = End.
// Options and warrants leave Vested at zero; nonvested RSUs leave Exercised
// and Expired at zero.
type RollForward struct {
	Instrument grants.Instrument
	Nonvested  bool // counts nonvested units (RSUs) rather than outstanding ones

	Start     RollLine // outstanding (nonvested) at the end of the day before the period start
	Granted   RollLine
	Vested    RollLine
	Exercised RollLine
	Forfeited RollLine
	Cancelled RollLine
	Expired   RollLine
	End       RollLine // at period end
}

// Check verifies the roll-forward identity
// start + granted − vested − exercised − forfeited − cancelled − expired = end.
func (r RollForward) Check() error {
	got := r.Start.Shares + r.Granted.Shares - r.Vested.Shares - r.Exercised.Shares - r.Forfeited.Shares - r.Cancelled.Shares - r.Expired.Shares
	if got != r.End.Shares {
		return fmt.Errorf("%s roll-forward: start %d + granted %d − vested %d − exercised %d − forfeited %d − cancelled %d − expired %d = %d, but end is %d",
			r.Instrument, r.Start.Shares, r.Granted.Shares, r.Vested.Shares, r.Exercised.Shares, r.Forfeited.Shares, r.Cancelled.Shares, r.Expired.Shares, got, r.End.Shares)
	}
	return nil
}

// OutstandingLine summarises a set of options or warrants at period end.
type OutstandingLine struct {
	Shares                     float64 // may be fractional for vested-and-expected-to-vest
	WeightedExercisePrice      float64
	WeightedRemainingTermYears float64 // contractual, ACT/365F from the period end
	AggregateIntrinsicValue    float64 // shares × max(share price − strike, 0)
}

// OutstandingSummary is the period-end table for options or warrants.
type OutstandingSummary struct {
	Outstanding    OutstandingLine
	Exercisable    OutstandingLine // vested
	VestedExpected OutstandingLine // vested plus unvested × expected share at vest (all under as-occur)
}

// GrantsInPeriod describes the grants of one instrument dated in the period.
type GrantsInPeriod struct {
	Grants            int
	Shares            int64
	WeightedFairValue float64 // grant-date fair value per share
	// The weighted-average valuation assumptions of the Measured grants
	// among them (weighted by shares).
	Measured          int
	Volatility        float64
	RiskFreeRate      float64
	DividendYield     float64
	ExpectedTermYears float64
}

// WarrantRow is one warrant grant outstanding at period end.
type WarrantRow struct {
	GrantID            string
	Holder             string
	Classification     grants.Classification
	Shares             int64 // outstanding
	Exercisable        int64
	Strike             float64
	ExpiryDate         time.Time
	RemainingTermYears float64
	FairValue          float64 // per share: the latest remeasurement for a liability, grant date for equity
	IntrinsicValue     float64
}

// Disclosure is the note's tables for one period.
type Disclosure struct {
	PeriodStart time.Time
	PeriodEnd   time.Time
	SharePrice  float64 // share fair value at period end, for intrinsic values

	Options             RollForward
	OptionsAtEnd        OutstandingSummary
	OptionGrants        GrantsInPeriod
	RSUs                RollForward // nonvested
	RSUGrants           GrantsInPeriod
	Warrants            RollForward
	WarrantsAtEnd       OutstandingSummary
	WarrantGrants       GrantsInPeriod
	WarrantsOutstanding []WarrantRow
}

// Check verifies every roll-forward identity.
func (d *Disclosure) Check() error {
	for _, r := range []RollForward{d.Options, d.RSUs, d.Warrants} {
		if err := r.Check(); err != nil {
			return err
		}
	}
	return nil
}

// rollAcc accumulates a roll line.
type rollAcc struct {
	shares int64
	px, fv float64
}

func (a *rollAcc) add(n int64, strike, fv float64) {
	a.shares += n
	a.px += float64(n) * strike
	a.fv += float64(n) * fv
}

func (a *rollAcc) line() RollLine {
	if a.shares == 0 {
		return RollLine{}
	}
	return RollLine{Shares: a.shares, WeightedExercisePrice: a.px / float64(a.shares), WeightedFairValue: a.fv / float64(a.shares)}
}

type rollAccs struct {
	start, granted, vested, exercised, forfeited, cancelled, expired, end rollAcc
}

func (r *rollAccs) result(inst grants.Instrument, nonvested bool) RollForward {
	return RollForward{Instrument: inst, Nonvested: nonvested,
		Start: r.start.line(), Granted: r.granted.line(), Vested: r.vested.line(), Exercised: r.exercised.line(),
		Forfeited: r.forfeited.line(), Cancelled: r.cancelled.line(), Expired: r.expired.line(), End: r.end.line()}
}

type outAcc struct {
	shares, px, term, iv float64
}

func (a *outAcc) add(n float64, strike, term, price float64) {
	a.shares += n
	a.px += n * strike
	a.term += n * term
	a.iv += n * math.Max(price-strike, 0)
}

func (a *outAcc) line() OutstandingLine {
	if a.shares == 0 {
		return OutstandingLine{}
	}
	return OutstandingLine{Shares: a.shares, WeightedExercisePrice: a.px / a.shares, WeightedRemainingTermYears: a.term / a.shares, AggregateIntrinsicValue: a.iv}
}

type grantAcc struct {
	grants, measured       int
	shares                 int64
	fv                     float64
	mShares                float64
	vol, rate, div, expect float64
}

func (a *grantAcc) add(aw *Award) {
	var n int64
	for _, tc := range aw.Tranches {
		n += tc.Tranche.Shares
		a.fv += float64(tc.Tranche.Shares) * tc.FairValue
	}
	a.grants++
	a.shares += n
	if m := aw.Measured; m != nil && n > 0 {
		w := float64(n)
		a.measured++
		a.mShares += w
		a.vol += w * m.Volatility
		a.rate += w * m.RiskFreeRate
		a.div += w * m.DividendYield
		a.expect += w * m.ExpectedTermYears
	}
}

func (a *grantAcc) result() GrantsInPeriod {
	g := GrantsInPeriod{Grants: a.grants, Shares: a.shares, Measured: a.measured}
	if a.shares > 0 {
		g.WeightedFairValue = a.fv / float64(a.shares)
	}
	if a.mShares > 0 {
		g.Volatility = a.vol / a.mShares
		g.RiskFreeRate = a.rate / a.mShares
		g.DividendYield = a.div / a.mShares
		g.ExpectedTermYears = a.expect / a.mShares
	}
	return g
}

// Disclose builds the disclosure tables for [periodStart, periodEnd] (both
// days included) from the same awards and policy as Expense; sharePrice is
// the share's fair value at period end. The policy's forfeiture estimate
// gives the vested-and-expected-to-vest line.
func Disclose(awards []Award, policy Policy, periodStart, periodEnd time.Time, sharePrice float64) (*Disclosure, error) {
	p, err := openPeriod(awards, policy, periodStart, periodEnd)
	if err != nil {
		return nil, err
	}
	return p.disclose(sharePrice)
}

// disclose is the period's Disclosure at the share price at its end.
func (p *period) disclose(sharePrice float64) (*Disclosure, error) {
	if !(sharePrice >= 0) || math.IsInf(sharePrice, 0) {
		return nil, fmt.Errorf("share price at period end %v: want a finite non-negative number", sharePrice)
	}
	periodStart, periodEnd := p.start, p.end
	open := shiftDays(periodStart, -1)
	var opt, rsu, war rollAccs
	var optOut, optEx, optExp, warOut, warEx, warExp outAcc
	var optG, rsuG, warG grantAcc
	d := &Disclosure{PeriodStart: periodStart, PeriodEnd: periodEnd, SharePrice: sharePrice}
	for _, l := range p.ledgers {
		aw := l.in
		g := aw.Grant
		inPeriod := valuation.Days(periodStart, g.GrantDate) >= 0
		switch g.Instrument {
		case grants.RSU:
			if inPeriod {
				rsuG.add(aw)
			}
			rollNonvested(l, &rsu, open, periodStart, periodEnd, inPeriod)
			continue
		case grants.Warrant:
			if inPeriod {
				warG.add(aw)
			}
			rollOutstanding(l, &war, open, periodStart, periodEnd, inPeriod)
			summarise(l, &warOut, &warEx, &warExp, periodEnd, sharePrice)
			if row, ok := warrantRow(l, periodEnd, sharePrice); ok {
				d.WarrantsOutstanding = append(d.WarrantsOutstanding, row)
			}
		default:
			if inPeriod {
				optG.add(aw)
			}
			rollOutstanding(l, &opt, open, periodStart, periodEnd, inPeriod)
			summarise(l, &optOut, &optEx, &optExp, periodEnd, sharePrice)
		}
	}
	d.Options = opt.result(grants.Option, false)
	d.RSUs = rsu.result(grants.RSU, true)
	d.Warrants = war.result(grants.Warrant, false)
	d.OptionsAtEnd = OutstandingSummary{Outstanding: optOut.line(), Exercisable: optEx.line(), VestedExpected: optExp.line()}
	d.WarrantsAtEnd = OutstandingSummary{Outstanding: warOut.line(), Exercisable: warEx.line(), VestedExpected: warExp.line()}
	d.OptionGrants, d.RSUGrants, d.WarrantGrants = optG.result(), rsuG.result(), warG.result()
	return d, d.Check()
}

func dayOnOrAfter(a, b time.Time) bool { return valuation.Days(b, a) >= 0 }

// rollOutstanding adds an option or warrant grant to a roll-forward of the
// number outstanding.
func rollOutstanding(l *awardLedger, r *rollAccs, open, start, end time.Time, inPeriod bool) {
	for i, t := range l.tr {
		k := func(d time.Time) float64 { return l.strikeOn(i, d) } // the strike in force on d
		atOpen, atEnd := t.Tranche.Shares, t.Tranche.Shares
		for _, m := range t.moves {
			if dayOnOrBefore(m.date, open) {
				atOpen -= m.shares
				atEnd -= m.shares
				continue
			}
			if dayOnOrBefore(m.date, end) {
				atEnd -= m.shares
				switch m.kind {
				case grants.Exercised:
					r.exercised.add(m.shares, k(m.date), t.FairValue)
				case grants.Forfeited:
					r.forfeited.add(m.shares, k(m.date), t.FairValue)
				case grants.Cancelled:
					r.cancelled.add(m.shares, k(m.date), t.FairValue)
				case grants.Expired:
					r.expired.add(m.shares, k(m.date), t.FairValue)
				}
			}
		}
		if inPeriod {
			r.granted.add(t.Tranche.Shares, k(l.in.Grant.GrantDate), t.FairValue)
		} else {
			r.start.add(atOpen, k(open), t.FairValue)
		}
		r.end.add(atEnd, k(end), t.FairValue)
	}
}

// rollNonvested adds an RSU grant to a roll-forward of the number nonvested.
// A tranche whose vest date is on or before the grant date vests on the
// grant date.
func rollNonvested(l *awardLedger, r *rollAccs, open, start, end time.Time, inPeriod bool) {
	g := l.in.Grant
	for _, t := range l.tr {
		ev := t.Tranche.VestDate
		if ev.Before(g.GrantDate) {
			ev = g.GrantDate
		}
		unvestedBy := func(d time.Time) int64 {
			var n int64
			for _, m := range t.moves {
				if !m.vested && dayOnOrBefore(m.date, d) {
					n += m.shares
				}
			}
			return n
		}
		if inPeriod {
			r.granted.add(t.Tranche.Shares, 0, t.FairValue)
		} else if !dayOnOrBefore(ev, open) {
			r.start.add(t.Tranche.Shares-unvestedBy(open), 0, t.FairValue)
		}
		for _, m := range t.moves {
			if m.vested || dayOnOrBefore(m.date, open) || !dayOnOrBefore(m.date, end) {
				continue
			}
			switch m.kind {
			case grants.Forfeited:
				r.forfeited.add(m.shares, 0, t.FairValue)
			case grants.Cancelled:
				r.cancelled.add(m.shares, 0, t.FairValue)
			}
		}
		switch {
		case dayOnOrAfter(ev, start) && dayOnOrBefore(ev, end):
			r.vested.add(t.Tranche.Shares-unvestedBy(end), 0, t.FairValue)
		case !dayOnOrBefore(ev, end):
			r.end.add(t.Tranche.Shares-unvestedBy(end), 0, t.FairValue)
		}
	}
}

// summarise adds an option or warrant grant's period-end position.
func summarise(l *awardLedger, out, ex, exp *outAcc, end time.Time, price float64) {
	term := 0.0
	if !l.expiry.IsZero() {
		term = math.Max(valuation.YearFrac(end, l.expiry), 0)
	}
	for i, t := range l.tr {
		n := float64(t.countsAt(end).open)
		if n == 0 {
			continue
		}
		k := l.strikeOn(i, end)
		out.add(n, k, term, price)
		if t.vestedOn(end) {
			ex.add(n, k, term, price)
			exp.add(n, k, term, price)
		} else {
			exp.add(n*t.expected(dayNum(end), l.rate), k, term, price)
		}
	}
}

// warrantRow is a warrant grant's row, if any of it is outstanding.
func warrantRow(l *awardLedger, end time.Time, price float64) (WarrantRow, bool) {
	g := l.in.Grant
	row := WarrantRow{GrantID: g.ID, Holder: g.Holder, Classification: g.Classification, Strike: l.strikeOn(0, end), ExpiryDate: l.expiry}
	if row.Classification == "" {
		row.Classification = grants.Equity
	}
	if !l.expiry.IsZero() {
		row.RemainingTermYears = math.Max(valuation.YearFrac(end, l.expiry), 0)
	}
	var fv float64
	for i, t := range l.tr {
		n := t.countsAt(end).open
		row.Shares += n
		if t.vestedOn(end) {
			row.Exercisable += n
		}
		v := t.FairValue
		if l.liability {
			v = l.fairValueAt(i, dayNum(end))
		}
		fv += float64(n) * v
	}
	if row.Shares == 0 {
		return row, false
	}
	row.FairValue = fv / float64(row.Shares)
	row.IntrinsicValue = float64(row.Shares) * math.Max(price-row.Strike, 0)
	return row, true
}
