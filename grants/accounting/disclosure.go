package accounting

import (
	"fmt"
	"math"
	"sort"
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

// Activity is what one instrument's exercises and vestings in the period
// amounted to: the total intrinsic value of the options exercised, the
// cash received from exercises and the total fair value of the awards
// vested (ASC 718-10-50-2, from memory), and the
// weighted-average share price at the dates of exercise (IFRS 2.45(c)).
type Activity struct {
	Exercised                    int64   // shares exercised in the period
	IntrinsicValueExercised      float64 // Σ shares × (share price on the exercise date − strike)⁺
	CashReceived                 float64 // Σ shares × strike
	WeightedSharePriceAtExercise float64 // share-weighted share price on the exercise dates
	// Unpriced are the exercised shares with no share price known on
	// their date: they count in CashReceived but not in the two above.
	Unpriced int64
	Vested   int64 // shares that vested in the period
	// FairValueVested is Σ shares vested × fair value per share: the
	// grant-date value, or for a liability-classified award its latest
	// fair value on the vest date.
	FairValueVested float64
}

// PriceRange is the options (or warrants) outstanding at the period end
// whose exercise prices lie in [Low, High], for IFRS 2.45(d): the range
// of exercise prices and the weighted-average remaining contractual life.
// A range starts at the lowest exercise price not yet in one and holds
// every exercise price up to RangeWidth times it (ours).
type PriceRange struct {
	Low, High                  float64
	Outstanding                int64
	WeightedExercisePrice      float64
	WeightedRemainingTermYears float64 // contractual, from the period end
	Exercisable                int64
	ExercisableWeightedPrice   float64
}

// RangeWidth is the largest ratio of the highest to the lowest exercise
// price within one PriceRange.
const RangeWidth = 1.5

// Disclosure is the note's tables for one period. Warrants issued in a
// financing are not share-based payment: they are in none of the
// share-based tables (Warrants, WarrantsAtEnd, WarrantGrants,
// WarrantsOutstanding, WarrantActivity) but in FinancingWarrants alone.
type Disclosure struct {
	PeriodStart time.Time
	PeriodEnd   time.Time
	SharePrice  float64 // share fair value at period end, for intrinsic values

	Options             RollForward
	OptionsAtEnd        OutstandingSummary
	OptionGrants        GrantsInPeriod
	OptionActivity      Activity
	OptionRanges        []PriceRange
	RSUs                RollForward // nonvested
	RSUGrants           GrantsInPeriod
	RSUActivity         Activity // vested only
	Warrants            RollForward
	WarrantsAtEnd       OutstandingSummary
	WarrantGrants       GrantsInPeriod
	WarrantActivity     Activity
	WarrantRanges       []PriceRange
	WarrantsOutstanding []WarrantRow
	// FinancingWarrants is the roll-forward of the warrants issued in
	// financings, on the number outstanding.
	FinancingWarrants RollForward
}

// Check verifies every roll-forward identity.
func (d *Disclosure) Check() error {
	for _, r := range []RollForward{d.Options, d.RSUs, d.Warrants, d.FinancingWarrants} {
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
	for i := range aw.tranches() {
		tc, fv := aw.tranche(i)
		n += tc.Shares
		a.fv += float64(tc.Shares) * fv
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
	var opt, rsu, war, fin rollAccs
	var optOut, optEx, optExp, warOut, warEx, warExp outAcc
	var optG, rsuG, warG grantAcc
	var optAct, rsuAct, warAct Activity
	optRanges, warRanges := rangeAccs{}, rangeAccs{}
	d := &Disclosure{PeriodStart: periodStart, PeriodEnd: periodEnd, SharePrice: sharePrice}
	for _, l := range p.ledgers {
		aw := l.in
		g := aw.Grant
		inPeriod := valuation.Days(periodStart, g.GrantDate) >= 0
		switch {
		case l.financing:
			rollOutstanding(l, &fin, nil, open, periodStart, periodEnd, inPeriod)
		case g.Instrument == grants.RSU:
			if inPeriod {
				rsuG.add(aw)
			}
			rollNonvested(l, &rsu, open, periodStart, periodEnd, inPeriod)
			vested(l, &rsuAct, periodStart, periodEnd)
		case g.Instrument == grants.Warrant:
			if inPeriod {
				warG.add(aw)
			}
			rollOutstanding(l, &war, &warAct, open, periodStart, periodEnd, inPeriod)
			vested(l, &warAct, periodStart, periodEnd)
			summarise(l, &warOut, &warEx, &warExp, warRanges, periodEnd, sharePrice)
			if row, ok := warrantRow(l, periodEnd, sharePrice); ok {
				d.WarrantsOutstanding = append(d.WarrantsOutstanding, row)
			}
		default:
			if inPeriod {
				optG.add(aw)
			}
			rollOutstanding(l, &opt, &optAct, open, periodStart, periodEnd, inPeriod)
			vested(l, &optAct, periodStart, periodEnd)
			summarise(l, &optOut, &optEx, &optExp, optRanges, periodEnd, sharePrice)
		}
	}
	d.Options = opt.result(grants.Option, false)
	d.RSUs = rsu.result(grants.RSU, true)
	d.Warrants = war.result(grants.Warrant, false)
	d.FinancingWarrants = fin.result(grants.Warrant, false)
	d.OptionsAtEnd = OutstandingSummary{Outstanding: optOut.line(), Exercisable: optEx.line(), VestedExpected: optExp.line()}
	d.WarrantsAtEnd = OutstandingSummary{Outstanding: warOut.line(), Exercisable: warEx.line(), VestedExpected: warExp.line()}
	d.OptionGrants, d.RSUGrants, d.WarrantGrants = optG.result(), rsuG.result(), warG.result()
	d.OptionActivity, d.RSUActivity, d.WarrantActivity = optAct.weighted(), rsuAct, warAct.weighted()
	d.OptionRanges, d.WarrantRanges = optRanges.ranges(), warRanges.ranges()
	return d, d.Check()
}

// weighted turns the sum of shares × price at exercise into its average.
func (a Activity) weighted() Activity {
	if n := a.Exercised - a.Unpriced; n > 0 {
		a.WeightedSharePriceAtExercise /= float64(n)
	} else {
		a.WeightedSharePriceAtExercise = 0
	}
	return a
}

// vested adds to a the shares of l's tranches that vest in [start, end],
// net of those forfeited or cancelled before vesting, at their fair value
// (a tranche vesting before its grant date vests on the grant date).
func vested(l *awardLedger, a *Activity, start, end time.Time) {
	startN, endN := dayNum(start), dayNum(end)
	for i := range l.tr {
		t := &l.tr[i]
		ev := max(int(t.vestN), l.grantN) // the day it vests
		if ev < startN || ev > endN {
			continue
		}
		c := t.countsN(ev)
		n := c.live(t.Tranche.Shares)
		fv := t.FairValue
		if l.liability {
			fv = l.fairValueAt(i, ev)
		}
		a.Vested += n
		a.FairValueVested += float64(n) * fv
	}
}

// rangeAccs gathers outstanding options or warrants by exercise price.
type rangeAccs map[float64]*rangeAcc

type rangeAcc struct {
	out, ex   int64
	term, exK float64 // Σ shares × remaining term; Σ exercisable × strike
}

func (r rangeAccs) add(strike float64, out, ex int64, term float64) {
	a := r[strike]
	if a == nil {
		a = &rangeAcc{}
		r[strike] = a
	}
	a.out += out
	a.ex += ex
	a.term += float64(out) * term
	a.exK += float64(ex) * strike
}

// ranges bands the exercise prices (see PriceRange), lowest first.
func (r rangeAccs) ranges() []PriceRange {
	strikes := make([]float64, 0, len(r))
	for k, a := range r {
		if a.out > 0 {
			strikes = append(strikes, k)
		}
	}
	sort.Float64s(strikes)
	var out []PriceRange
	for i := 0; i < len(strikes); {
		pr := PriceRange{Low: strikes[i]}
		var px, term, exK float64
		for ; i < len(strikes) && strikes[i] <= RangeWidth*pr.Low; i++ {
			a := r[strikes[i]]
			pr.High = strikes[i]
			pr.Outstanding += a.out
			pr.Exercisable += a.ex
			px += float64(a.out) * strikes[i]
			term += a.term
			exK += a.exK
		}
		pr.WeightedExercisePrice = px / float64(pr.Outstanding)
		pr.WeightedRemainingTermYears = term / float64(pr.Outstanding)
		if pr.Exercisable > 0 {
			pr.ExercisableWeightedPrice = exK / float64(pr.Exercisable)
		}
		out = append(out, pr)
	}
	return out
}

func dayOnOrAfter(a, b time.Time) bool { return valuation.Days(b, a) >= 0 }

// rollOutstanding adds an option or warrant grant to a roll-forward of the
// number outstanding, and its exercises in the period to act (when not
// nil).
func rollOutstanding(l *awardLedger, r *rollAccs, act *Activity, open, start, end time.Time, inPeriod bool) {
	for i, t := range l.tr {
		strike := func(d time.Time) float64 { return l.strikeOn(i, d) } // in force on d
		atOpen, atEnd := t.Tranche.Shares, t.Tranche.Shares
		for _, m := range t.moves() {
			if dayOnOrBefore(m.date, open) {
				atOpen -= m.shares
				atEnd -= m.shares
				continue
			}
			if dayOnOrBefore(m.date, end) {
				atEnd -= m.shares
				k := strike(m.date)
				switch m.kind {
				case grants.Exercised:
					r.exercised.add(m.shares, k, t.FairValue)
					if act != nil {
						act.Exercised += m.shares
						act.CashReceived += float64(m.shares) * k
						if m.price > 0 {
							act.IntrinsicValueExercised += float64(m.shares) * math.Max(m.price-k, 0)
							act.WeightedSharePriceAtExercise += float64(m.shares) * m.price
						} else {
							act.Unpriced += m.shares
						}
					}
				case grants.Forfeited:
					r.forfeited.add(m.shares, k, t.FairValue)
				case grants.Cancelled:
					r.cancelled.add(m.shares, k, t.FairValue)
				case grants.Expired:
					r.expired.add(m.shares, k, t.FairValue)
				}
			}
		}
		if inPeriod {
			r.granted.add(t.Tranche.Shares, strike(l.in.Grant.GrantDate), t.FairValue)
		} else {
			r.start.add(atOpen, strike(open), t.FairValue)
		}
		r.end.add(atEnd, strike(end), t.FairValue)
	}
}

// rollNonvested adds an RSU grant to a roll-forward of the number nonvested.
// A tranche whose vest date is on or before the grant date vests on the
// grant date.
func rollNonvested(l *awardLedger, r *rollAccs, open, start, end time.Time, inPeriod bool) {
	g := l.in.Grant
	for _, t := range l.tr {
		ev := t.vestDate()
		if ev.Before(g.GrantDate) {
			ev = g.GrantDate
		}
		unvestedBy := func(d time.Time) int64 {
			var n int64
			for _, m := range t.moves() {
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
		for _, m := range t.moves() {
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

// summarise adds an option or warrant grant's period-end position, and
// its outstanding and exercisable shares to the exercise-price ranges.
func summarise(l *awardLedger, out, ex, exp *outAcc, ranges rangeAccs, end time.Time, price float64) {
	term := 0.0
	if !l.expiry.IsZero() {
		term = math.Max(valuation.YearFrac(end, l.expiry), 0)
	}
	endN := dayNum(end)
	for i := range l.tr {
		t := &l.tr[i]
		n := float64(t.countsN(endN).open)
		if n == 0 {
			continue
		}
		k := l.strikeOn(i, end)
		out.add(n, k, term, price)
		if t.vestedN(endN) {
			ex.add(n, k, term, price)
			exp.add(n, k, term, price)
			ranges.add(k, int64(n), int64(n), term)
		} else {
			ranges.add(k, int64(n), 0, term)
			exp.add(n*l.expected(t, endN, l.rate, l.survival()), k, term, price)
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
	endN := dayNum(end)
	for i := range l.tr {
		t := &l.tr[i]
		n := t.countsN(endN).open
		row.Shares += n
		if t.vestedN(endN) {
			row.Exercisable += n
		}
		v := t.FairValue
		if l.liability {
			v = l.fairValueAt(i, endN)
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
