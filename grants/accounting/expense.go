package accounting

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"time"

	"grantworth/grants"
	"grantworth/valuation"
)

// TrancheCost is a tranche with its fair value per share at its measurement
// date: the grant date, or for a liability-classified warrant its first
// measurement (later ones are Remeasurements).
type TrancheCost struct {
	Tranche   grants.Tranche
	FairValue float64
}

// Remeasurement is a liability-classified warrant's fair value per share on
// a valuation date, one value per tranche in Award.Tranches order.
type Remeasurement struct {
	Date      time.Time
	FairValue []float64
}

// MeasuredAssumptions are the valuation inputs a grant was measured with,
// for the disclosure of the period's weighted-average assumptions.
type MeasuredAssumptions struct {
	Volatility        float64
	RiskFreeRate      float64 // the zero rate at the expected term, weighted over the tranches by shares
	DividendYield     float64
	ExpectedTermYears float64 // weighted over the tranches by shares
}

// Award is everything attribution needs about one grant.
type Award struct {
	Grant    grants.Grant
	Tranches []TrancheCost  // in vest-date order
	Events   []grants.Event // this grant's events, in any order
	// EventPrices are the share price in force on each event's date, in
	// Events order (0 or missing when unknown), for the intrinsic value of
	// exercises in the disclosures; an event row's own share_price wins.
	EventPrices    []float64
	Transfers      []grants.Transfer // this grant's cost centre history, in any order
	Remeasurements []Remeasurement
	Measured       *MeasuredAssumptions // optional; used by Disclose
	// Modified are the changes of its terms dated by the period end, with
	// their values, and Replaces, for a replacement award, the
	// cancellation it replaces (modify.go).
	Modified *Modified
	Replaces *Replaces
	// Condition is how a vesting condition beyond service changes the
	// attribution (ConditionOf); nil for service only.
	Condition *Conditioned

	// valued and fv are, in an award Close made, its tranches as the
	// valuation holds them and their fair values, in place of Tranches
	// (awardOf; read through tranche).
	valued []grants.Tranche
	fv     []float64
}

// Policy is the company's attribution and forfeiture policy, the standard
// it follows and the fiscal calendar its periods are reported in. The zero
// Attribution is Graded and the zero Forfeitures is Estimate (both allowed
// under ASC 718 and IFRS 2); the zero Calendar is calendar years.
type Policy struct {
	Attribution              grants.Attribution
	Forfeitures              grants.ForfeiturePolicy
	PreVestingForfeitureRate float64 // annual share of unvested holders who leave, in [0, 1)
	// Framework is the standard followed; the zero Framework is ASC 718.
	// IFRS 2 requires graded attribution and estimated forfeitures, and
	// names the journal's equity account differently.
	Framework grants.Framework
	// Calendar is the fiscal calendar of the periods and the forecast.
	Calendar grants.FiscalCalendar
}

// PeriodAmount is the expense of one period.
type PeriodAmount struct {
	Start           time.Time
	End             time.Time
	Label           string  // the fiscal quarter holding End, e.g. "2026 Q3" or "FY2027 Q1"
	Amount          float64 // compensation expense
	FairValueChange float64 // financing warrants' liability, apart from compensation (outside operating expense)
	Current         bool    // the reporting period [period start, valuation date]
}

// YearAmount is the compensation expense of one fiscal year: what was
// recognized in it through the period end (each period as booked at its
// end, like Periods) and what is expected in it after the period end (as
// expected at the period end, like Forecast). The years of a report add up
// to its cumulative expense and its unrecognized cost.
type YearAmount struct {
	Year       grants.FiscalPeriod
	Recognized float64
	Expected   float64
}

// TrancheExpense is one tranche's attribution. Its service starts on its
// grant's (GrantExpense.ServiceStart).
type TrancheExpense struct {
	Index         int
	VestDate      time.Time
	Shares        int64   // as granted
	SharesCounted float64 // shares whose cost counts at period end (expected at vest under Estimate)
	// FairValue is per share: the grant-date value, or for a
	// liability-classified award its latest remeasurement, on which its
	// cost is measured; GrantDateFairValue is its value at the grant date
	// in either case.
	FairValue          float64
	GrantDateFairValue float64
	ExpectedShare      float64 // (1 − rate)^Y at period end, Y the service years still to come; 1 under as-occur
	Cost               float64 // expected total compensation cost at period end
	CumulativeOpen     float64 // through the day before the period start
	Period             float64
	Cumulative         float64 // through period end
	Unrecognized       float64
	RemainingYears     float64 // service days left after the period end / 365
}

// GrantExpense is one grant's attribution.
type GrantExpense struct {
	GrantID        string
	Holder         string
	Instrument     grants.Instrument
	Liability      bool
	GrantDate      time.Time
	ServiceStart   time.Time
	ServiceEnd     time.Time // last vest date
	Cost           float64
	CumulativeOpen float64
	Period         float64
	Cumulative     float64
	Unrecognized   float64
	RemainingYears float64

	// Liability-classified awards only: the award's liability, which
	// rolls as LiabilityOpen + Period − ReclassifiedEquity = LiabilityEnd
	// (every change in its fair value is compensation cost).
	LiabilityOpen      float64 // at the end of the day before the period start
	LiabilityEnd       float64 // at period end
	ReclassifiedEquity float64 // liability moved to equity on exercise in the period, at the exercise day's fair value
	// ReclassifiedToDate is the liability moved to equity on exercise
	// through the period end, in all.
	ReclassifiedToDate float64

	// Outstanding is, at the period end, the options or warrants
	// outstanding, or the RSUs nonvested.
	Outstanding int64
	// Events are the grant's events applied, through the period end, and
	// Remeasurements a liability-classified warrant's fair values after
	// its grant date (the past quarter ends and the period end): what a
	// later close compares and keeps.
	Events         []grants.Event
	Remeasurements []Remeasurement

	// CostCenter is the grant's cost centre at the period end (Unassigned
	// when it names none); ByCostCenter splits its Period, Cumulative and
	// Unrecognized among the cost centres its service was rendered in
	// (one part when it never moved). The parts add up to the grant's.
	CostCenter   string
	ByCostCenter []CostCenterAmount

	Tranches []TrancheExpense
	// Condition is how a vesting condition beyond service changed the
	// attribution (nil for service only): the outcomes assessed, the
	// requisite service ends, the day a hurdle was met.
	Condition *Conditioned
}

// FinancingWarrant is a warrant issued in a financing (to a lender or an
// investor): not share-based payment, so it has no compensation cost. An
// equity-classified one is measured once, at issue (ASC 815-40, IAS 32);
// a liability-classified one is measured at fair value at issue and
// remeasured at every period end and on every exercise, the change shown
// outside operating expense (ASC 815-40-35; IAS 32.11 and IFRS 9).
type FinancingWarrant struct {
	GrantID        string
	Holder         string
	Classification grants.Classification
	IssueDate      time.Time
	Shares         int64 // issued
	// FairValueAtIssue is per warrant (weighted over the tranches);
	// ValueAtIssue the total, fair value at issue times the warrants
	// issued: the amount a liability is recognized at, and the input to
	// the allocation of the financing's proceeds to an equity-classified
	// one (relative fair values, ASC 470-20-25-2).
	FairValueAtIssue float64
	ValueAtIssue     float64
	Outstanding      int64 // at period end
	Exercised        int64 // in the period
	// FairValue is per warrant at the period end: the latest remeasurement
	// of a liability, the value at issue of an equity-classified one.
	FairValue float64

	// Liability-classified only, the period's roll of the liability:
	// LiabilityOpen + Issued + FairValueChange − Reclassified = LiabilityEnd.
	LiabilityOpen      float64 // at the end of the day before the period start (as the prior close filed it, after one)
	Issued             float64 // recognized at issue, when issued in the period
	FairValueChange    float64 // remeasurement, outside operating expense
	Reclassified       float64 // to equity on exercise, at the exercise day's fair value
	LiabilityEnd       float64
	ReclassifiedToDate float64 // to equity on exercise through the period end, in all

	// CompensationReversed is, after a prior close that booked this
	// warrant as compensation, that compensation reversed in the period
	// (negative; in the period's expense as a catch-up).
	CompensationReversed float64

	// Events are the warrant's events through the period end, and
	// Remeasurements a liability's fair values per tranche at issue and
	// after it: what a later close keeps.
	Events         []grants.Event
	Remeasurements []Remeasurement

	// CostCenter is the warrant's cost centre at the period end, for a
	// compensation catch-up it may carry.
	CostCenter string
}

// ExpenseReport is the attribution for one reporting period.
type ExpenseReport struct {
	PeriodStart time.Time
	PeriodEnd   time.Time
	Policy      Policy
	ServiceRule string // the service-start rule, in words, for the reports

	Grants []GrantExpense

	Period       float64 // compensation expense in [PeriodStart, PeriodEnd]
	Cumulative   float64 // through PeriodEnd
	Unrecognized float64 // at PeriodEnd
	// RemainingYears is the weighted-average remaining recognition period:
	// each tranche's (graded) or award's (straight-line) service days left
	// after the period end, over 365, weighted by its unrecognized cost
	// (common practice).
	RemainingYears float64

	// Periods are the fiscal quarters from the one holding the earliest
	// grant date up to the period start (context), then the current period.
	Periods []PeriodAmount
	// Forecast is the expected compensation expense in each of the next 16
	// fiscal quarters after PeriodEnd (the first may be partial), assuming
	// no further events and, under Estimate, forfeitures at the estimated
	// rate. AfterForecast is what remains after them.
	Forecast      []PeriodAmount
	AfterForecast float64
	// ByCostCenter splits Period, Cumulative, Unrecognized, the Forecast
	// and AfterForecast by cost centre, in name order with Unassigned
	// last; the centres add up to the totals.
	ByCostCenter []CostCenterExpense
	// ByFiscalYear covers the fiscal years from the one holding the
	// earliest grant date to the one in which the last service is rendered
	// (at least the one holding PeriodEnd), from Policy.Calendar.Years.
	ByFiscalYear []YearAmount

	// Financing are the warrants issued in financings, apart from
	// compensation: none of them is in Grants, Cumulative, Unrecognized or
	// the forecast. FairValueChange is the change in fair value of their
	// liabilities in the period, outside operating expense.
	Financing       []FinancingWarrant
	FairValueChange float64

	Warnings []string
	// PolicyNotes say where the chosen policy differs between ASC 718 and
	// IFRS 2, and what attribution does not model.
	PolicyNotes []string
	// Modifications are the changes of awards' terms dated by the period
	// end, and the cancellations with a replacement, with what each did to
	// the cost (modify.go).
	Modifications []ModificationExpense
}

// ForecastQuarters is how many fiscal quarters the forecast covers.
const ForecastQuarters = 16

// ServiceRule says in words which service-start rule attribution applies.
const ServiceRule = "Service starts on the grant date, when the holder is already employed, or on the hire date the schedule gives for a holder hired after the grant; never before the grant date, the measurement date (service rendered before it is caught up on the grant date). A vest start after the grant date does not delay it: the holder serves from the grant date on."

// ServiceStart is the first day of a grant's service period: its grant
// date, or its hire date when that is later (see the package notes on
// service start).
func ServiceStart(g grants.Grant) time.Time {
	if g.HireDate.After(g.GrantDate) {
		return g.HireDate
	}
	return g.GrantDate
}

// Expense attributes the awards' cost to the period [periodStart, periodEnd]
// (both days included; periodEnd is the valuation date) under the policy.
// Grants dated after periodEnd are left out, and so are events after it.
// Errors name the grant (and the Events row) that does not fit.
func Expense(awards []Award, policy Policy, periodStart, periodEnd time.Time) (*ExpenseReport, error) {
	p, err := openPeriod(awards, policy, periodStart, periodEnd)
	if err != nil {
		return nil, err
	}
	return p.expense(), nil
}

// Attribute is Expense and Disclose over the same awards, policy and
// period, with each award's ledger built once for both.
func Attribute(awards []Award, policy Policy, periodStart, periodEnd time.Time, sharePrice float64) (*ExpenseReport, *Disclosure, error) {
	p, err := openPeriod(awards, policy, periodStart, periodEnd)
	if err != nil {
		return nil, nil, err
	}
	d, err := p.disclose(sharePrice)
	if err != nil {
		return nil, nil, err
	}
	return p.expense(), d, nil
}

// period is a checked policy and period with the ledger of every award
// granted by its end, in award order, and the prior close it follows,
// if any.
type period struct {
	pol        Policy
	start, end time.Time
	ledgers    []*awardLedger
	prior      *Prior
	// recon is set when the period is reconciled to prior (Close): each
	// grant's expense takes its views for the reconciliation too, into
	// sts, those of the compensation ledgers in order (as
	// ExpenseReport.Grants).
	recon *reconciling
	sts   []grantStates
	// dropsLedgers is set when the ledgers are Close's own and nothing
	// after the expense reads their tranches (untaxed): expense lets go
	// of each ledger's tranches once that grant's expense (and its views)
	// are drawn, so that a large ledger is not held twice over beside the
	// report, but for those another ledger's expense reads after
	// (keepsTranches).
	dropsLedgers bool
}

// keepsTranches reports whether ledger l's tranches are read after its
// own expense is drawn: a modified award's (modificationExpense) and the
// awards a replacement reads, a replacement's and a financing warrant's
// (left alone, being few).
func keepsTranches(ledgers []*awardLedger) map[*awardLedger]bool {
	keep := map[*awardLedger]bool{}
	for _, l := range ledgers {
		if l.in.Modified != nil || l.replaced != nil || l.financing {
			keep[l] = true
		}
		if l.replaced != nil {
			keep[l.replaced.of] = true
		}
	}
	return keep
}

// openPeriod checks the policy and the period and builds the ledgers;
// the error joins one error for each award that does not fit.
func openPeriod(awards []Award, policy Policy, periodStart, periodEnd time.Time) (*period, error) {
	pol, err := policy.normalized()
	if err != nil {
		return nil, err
	}
	periodStart, periodEnd = civilDay(periodStart), civilDay(periodEnd)
	if periodEnd.Before(periodStart) {
		return nil, fmt.Errorf("period end %s is before period start %s", periodEnd.Format(time.DateOnly), periodStart.Format(time.DateOnly))
	}
	p := &period{pol: pol, start: periodStart, end: periodEnd}
	type built struct {
		l   *awardLedger
		err error
	}
	var errs []error
	p.ledgers = make([]*awardLedger, 0, len(awards))
	inOrder(len(awards), workersFor(len(awards)), func(i int, sc *ledgerScratch, b *built) {
		*b = built{}
		if valuation.Days(awards[i].Grant.GrantDate, periodEnd) < 0 {
			return
		}
		b.l, b.err = newAwardLedger(&awards[i], pol, periodEnd, sc)
	}, func(i int, b *built) {
		switch {
		case b.err != nil:
			errs = append(errs, b.err)
		case b.l != nil:
			p.ledgers = append(p.ledgers, b.l)
		}
	})
	if len(errs) > 0 {
		return nil, errors.Join(errs...)
	}
	p.linkReplacements()
	return p, nil
}

// expense is the period's ExpenseReport.
func (p *period) expense() *ExpenseReport {
	pol, periodStart, periodEnd, ledgers := p.pol, p.start, p.end, p.ledgers
	rep := &ExpenseReport{PeriodStart: periodStart, PeriodEnd: periodEnd, Policy: pol, ServiceRule: ServiceRule}
	open := shiftDays(periodStart, -1)

	cal := pol.Calendar
	// Period boundaries: context quarters, then the current period. After
	// a prior close the closed periods are as it booked them.
	var bounds []PeriodAmount
	first, lastDay := periodEnd, periodEnd
	for _, l := range ledgers {
		if g := l.in.Grant.GrantDate; g.Before(first) {
			first = g
		}
		if d := shiftDays(l.last, -1); d.After(lastDay) {
			lastDay = d
		}
	}
	switch {
	case p.prior != nil:
		for _, pa := range p.prior.Periods {
			pa.Current = false
			if pa.Label == "" {
				pa.Label = cal.Quarter(pa.End).Name
			}
			bounds = append(bounds, pa)
			first = minDay(first, pa.Start)
		}
	case len(ledgers) > 0:
		for _, q := range cal.Quarters(first, open) {
			end := q.End
			if !end.Before(periodStart) {
				end = open
			}
			bounds = append(bounds, PeriodAmount{Start: q.Start, End: end, Label: q.Name})
		}
	}
	bounds = append(bounds, PeriodAmount{Start: periodStart, End: periodEnd, Current: true, Label: cal.Quarter(periodEnd).Name})
	fstart := shiftDays(periodEnd, 1)
	for k := 0; k < ForecastQuarters; k++ {
		q := cal.Quarter(fstart)
		rep.Forecast = append(rep.Forecast, PeriodAmount{Start: fstart, End: q.End, Label: q.Name})
		fstart = shiftDays(q.End, 1)
	}
	for _, y := range cal.Years(first, lastDay) {
		rep.ByFiscalYear = append(rep.ByFiscalYear, YearAmount{Year: y})
	}
	// The days each ledger is evaluated on after the period end, as
	// expected at the period end: the forecast's quarter ends and the
	// fiscal year ends.
	future := newDaySet()
	for _, f := range rep.Forecast {
		future.add(f.End)
	}
	for _, y := range rep.ByFiscalYear {
		if y.Year.End.After(periodEnd) {
			future.add(y.Year.End)
			if d := shiftDays(y.Year.Start, -1); d.After(periodEnd) {
				future.add(d)
			}
		}
	}
	centres := newCentreBook(len(rep.Forecast))

	graded := gradedAny(ledgers) // for policyNotes, read before any ledger is let go
	var keep map[*awardLedger]bool
	if p.dropsLedgers {
		keep = keepsTranches(ledgers)
	}
	x := &expenseRun{p: p, open: open, endN: dayNum(periodEnd), future: future.days, booked: p.prior != nil, keep: keep,
		quarters: append([]PeriodAmount(nil), rep.Forecast...), forecastAt: make([]int, len(rep.Forecast)),
		yearEnd: make([]int, len(rep.ByFiscalYear)), yearFrom: make([]int, len(rep.ByFiscalYear))}
	if !x.booked {
		for _, b := range bounds {
			x.boundEnds = append(x.boundEnds, b.End)
		}
	}
	for k, f := range rep.Forecast {
		x.forecastAt[k] = future.index(f.End)
	}
	for k, y := range rep.ByFiscalYear {
		x.yearEnd[k], x.yearFrom[k] = -1, -1
		if y.Year.End.After(periodEnd) {
			x.yearEnd[k] = future.index(y.Year.End)
			if d := shiftDays(y.Year.Start, -1); d.After(periodEnd) {
				x.yearFrom[k] = future.index(d)
			}
		}
	}
	if p.prior != nil {
		p.prior.index() // before the workers look grants up in it
	}
	compensation := 0
	for _, l := range ledgers {
		if !l.financing {
			compensation++
		}
	}
	if compensation > 0 { // nil for none, as ever
		rep.Grants = make([]GrantExpense, 0, compensation)
	}
	if p.recon != nil {
		p.sts = make([]grantStates, 0, compensation)
	}
	var wYears float64
	inOrder(len(ledgers), workersFor(len(ledgers)), func(i int, sc *ledgerScratch, r *grantResult) {
		l := ledgers[i]
		l.scratch = sc
		x.grant(l, r)
		if p.recon != nil && !l.financing {
			r.st = p.states(l, p.prior)
			if r.st.old {
				r.st.catchUps = catchUps(r.st, l, p.prior, p.recon.s, p.recon.corrected)
			}
		}
		if p.dropsLedgers && !x.keep[l] {
			l.tr = nil // its expense and views are drawn, and nothing after reads it
		}
	}, func(i int, r *grantResult) {
		g := &ledgers[i].in.Grant
		if r.financing {
			fw := &r.fw
			rep.Financing = append(rep.Financing, *fw)
			rep.FairValueChange += fw.FairValueChange
			rep.Period += fw.CompensationReversed
			if fw.CompensationReversed != 0 { // in the cost centres too, so that they add up to the period
				centres.add(g.ID, centreParts{amounts: []CostCenterAmount{{CostCenter: fw.CostCenter, Period: fw.CompensationReversed}},
					forecast: [][]float64{make([]float64, len(rep.Forecast))}, after: []float64{0}})
			}
			addPeriods(bounds, x.booked, true, fw.CompensationReversed, fw.FairValueChange, r.periodComp, r.periodFV)
			if r.warn != "" {
				rep.Warnings = append(rep.Warnings, r.warn)
			}
			return
		}
		ge := &r.ge
		if pol.Attribution == grants.Graded {
			for _, w := range r.weights {
				wYears += w.unrecognized * w.years
			}
		}
		if ge.Unrecognized > 0 && pol.Attribution == grants.StraightLine {
			wYears += ge.Unrecognized * ge.RemainingYears
		}
		if r.warn != "" {
			rep.Warnings = append(rep.Warnings, r.warn)
		}
		rep.Period += ge.Period
		rep.Cumulative += ge.Cumulative
		rep.Unrecognized += ge.Unrecognized
		addPeriods(bounds, x.booked, false, ge.Period, 0, r.periodComp, nil)
		for k := range rep.Forecast {
			rep.Forecast[k].Amount += r.forecast[k]
		}
		rep.AfterForecast += r.after
		centres.add(g.ID, r.parts)
		rep.Grants = append(rep.Grants, *ge)
		if p.recon != nil {
			p.sts = append(p.sts, r.st)
		}
		for k := range rep.ByFiscalYear {
			if x.yearEnd[k] >= 0 {
				rep.ByFiscalYear[k].Expected += r.years[k]
			}
		}
	})
	if rep.Unrecognized > 0 {
		rep.RemainingYears = wYears / rep.Unrecognized
	}
	rep.Periods = bounds
	// A period's expense is recognized in the fiscal year holding its end.
	for _, b := range bounds {
		for k := range rep.ByFiscalYear {
			if y := &rep.ByFiscalYear[k]; !b.End.Before(y.Year.Start) && !b.End.After(y.Year.End) {
				y.Recognized += b.Amount
			}
		}
	}
	rep.ByCostCenter = centres.list()
	if w := centres.unassignedWarning(); w != "" {
		rep.Warnings = append(rep.Warnings, w)
	}
	rep.PolicyNotes = policyNotes(pol, graded, ledgers)
	rep.Modifications = p.modificationExpense()
	return rep
}

// gradedAny reports whether an award of ledgers vests in more than one
// part.
func gradedAny(ledgers []*awardLedger) bool {
	for _, l := range ledgers {
		if len(l.tr) > 1 {
			return true
		}
	}
	return false
}

// policyNotes explains the policy's standing under each standard, graded
// being whether an award vests in more than one part (gradedAny).
func policyNotes(pol Policy, graded bool, ledgers []*awardLedger) []string {
	var notes []string
	if pol.Attribution == grants.StraightLine && graded {
		notes = append(notes, "Straight-line attribution of a graded-vesting award is an election under ASC 718 (718-10-35-8); IFRS 2 treats each tranche as a separate award, which is graded attribution.")
	}
	if pol.Forfeitures == grants.AsOccur {
		notes = append(notes, "Accounting for forfeitures as they occur is an election under ASC 718 (718-10-35-3); IFRS 2 requires an estimate of the awards expected to vest.")
	}
	return append(notes, modificationNotes(pol.Framework, ledgers)...)
}

// String is a one-line summary, for logs and test failures.
func (r *ExpenseReport) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "expense %s..%s %s/%s: period %.2f, cumulative %.2f, unrecognized %.2f over %.2f years; financing warrants' fv change %.2f",
		r.PeriodStart.Format(time.DateOnly), r.PeriodEnd.Format(time.DateOnly), r.Policy.Attribution, r.Policy.Forfeitures,
		r.Period, r.Cumulative, r.Unrecognized, r.RemainingYears, r.FairValueChange)
	return b.String()
}

// Spread attributes one award's cost over consecutive periods as it is
// expected on the award's grant date: amounts[i] is the compensation
// cost recognized after the end of day ends[i−1] (for i = 0, from the
// start) through the end of day ends[i], and cost is the award's expected
// total, which the amounts add up to once ends reach its last vest date.
// The award's events up to the last end are applied; the forfeiture
// estimate, under Estimate, runs from the grant date over the whole
// service period. ends must be in increasing order.
func Spread(a Award, pol Policy, ends []time.Time) (amounts []float64, cost float64, err error) {
	pol, err = pol.normalized()
	if err != nil {
		return nil, 0, err
	}
	for i := 1; i < len(ends); i++ {
		if dayNum(ends[i]) <= dayNum(ends[i-1]) {
			return nil, 0, fmt.Errorf("period ends %s and %s are not in increasing order", ends[i-1].Format(time.DateOnly), ends[i].Format(time.DateOnly))
		}
	}
	asOf := a.Grant.GrantDate
	if n := len(ends); n > 0 && ends[n-1].After(asOf) {
		asOf = ends[n-1]
	}
	l, err := newAwardLedger(&a, pol, asOf, nil)
	if err != nil {
		return nil, 0, err
	}
	known := shiftDays(a.Grant.GrantDate, -1)
	amounts = make([]float64, len(ends))
	var prev float64
	for i, e := range ends {
		c := l.at(pol, e, known).compTotal()
		amounts[i] = c - prev
		prev = c
	}
	far := shiftDays(l.last, 1)
	if far.Before(asOf) {
		far = asOf
	}
	return amounts, l.at(pol, far, known).compTotal(), nil
}

// daySet is a set of calendar days in the order added, each with its index.
type daySet struct {
	days []time.Time
	idx  map[int]int // by dayNum
}

func newDaySet() *daySet { return &daySet{idx: map[int]int{}} }

func (s *daySet) add(d time.Time) {
	if _, ok := s.idx[dayNum(d)]; !ok {
		s.idx[dayNum(d)] = len(s.days)
		s.days = append(s.days, civilDay(d))
	}
}

// index is the index of day d, which must have been added.
func (s *daySet) index(d time.Time) int {
	i, ok := s.idx[dayNum(d)]
	if !ok {
		panic("accounting: day " + d.Format(time.DateOnly) + " not in the set")
	}
	return i
}

func minDay(a, b time.Time) time.Time {
	if b.Before(a) {
		return b
	}
	return a
}

func maxDay(a, b time.Time) time.Time {
	if b.After(a) {
		return b
	}
	return a

}

// periodAmounts is what the award adds to each of the periods ends close
// (consecutive, the first from the start): its compensation to their
// Amount, appended to comp, and a financing warrant's change in fair
// value to their FairValueChange, appended to fv. buf is scratch for the
// award's cost by tranche.
func (l *awardLedger) periodAmounts(pol Policy, ends []time.Time, buf, comp, fv []float64) ([]float64, []float64) {
	var prevComp, prevFV float64
	for _, e := range ends {
		if dayNum(e) < l.grantN {
			// Before the grant date an award has no cost and no liability
			// (atView, atLayered; no event is dated before it, apply), and
			// so had none at the ends before: what at would give, 0 − 0.
			comp = append(comp, 0)
			if l.financing {
				fv = append(fv, 0)
			}
			continue
		}
		cur := l.atInto(pol, e, e, buf)
		c := cur.compTotal()
		comp = append(comp, c-prevComp)
		prevComp = c
		if l.financing {
			f := cur.fvChange()
			fv = append(fv, f-prevFV)
			prevFV = f
		}
	}
	return comp, fv
}

// addPeriods adds an award's compensation in each of the periods ps to
// their Amount, and a financing warrant's change in fair value to their
// FairValueChange: each period's own, pc and pf (periodAmounts). After a
// prior close (booked) the closed periods stand as it booked them, and
// only the current one takes the award's period figures, comp and fv.
func addPeriods(ps []PeriodAmount, booked, financing bool, comp, fv float64, pc, pf []float64) {
	for k := range ps {
		if booked {
			if ps[k].Current {
				ps[k].Amount += comp
				ps[k].FairValueChange += fv
			}
			continue
		}
		ps[k].Amount += pc[k]
		if financing {
			ps[k].FairValueChange += pf[k]
		}
	}
}

// financingWarrant is a financing warrant's row for the period, from its
// positions s0 at the end of the day before the period and s1 at its end,
// and after a prior close (booked) pg, what that close filed for it (nil
// when it did not have the warrant). After a prior close the liability
// opens as filed (nothing for a warrant the close did not have) and the
// change in fair value closes the roll, so that a closed period is never
// restated. A warrant the prior close booked as compensation has that
// compensation reversed in the period.
func (l *awardLedger) financingWarrant(s0, s1 snapshot, booked bool, pg *PriorGrant, start, end time.Time) FinancingWarrant {
	g := l.in.Grant
	fw := FinancingWarrant{GrantID: g.ID, Holder: g.Holder, Classification: g.Classification, IssueDate: g.GrantDate, Shares: g.Shares,
		Events: l.in.eventsThrough(end)}
	if fw.Classification == "" {
		fw.Classification = grants.Equity
	}
	var issued, atEnd float64
	var shares int64
	at0 := make([]float64, len(l.tr))
	for i, t := range l.tr {
		at0[i] = t.FairValue
		shares += t.Tranche.Shares
		issued += t.FairValue * float64(t.Tranche.Shares)
		c := t.countsAt(end)
		fw.Outstanding += c.open
		fw.Exercised += c.exercised - t.countsAt(shiftDays(start, -1)).exercised
		v := t.FairValue
		if l.liability {
			v = l.fairValueAt(i, dayNum(end))
		}
		atEnd += v * float64(t.Tranche.Shares)
	}
	fw.ValueAtIssue = issued
	if shares > 0 {
		fw.FairValueAtIssue = issued / float64(shares)
		fw.FairValue = atEnd / float64(shares)
	}
	if pg != nil && !pg.Financing {
		fw.CompensationReversed = -pg.Cumulative
	}
	if !l.liability {
		return fw
	}
	settledOpen := s0.settled
	fw.LiabilityOpen, fw.Issued = s0.liability, s1.issued-s0.issued
	switch {
	case booked && pg != nil:
		fw.LiabilityOpen, settledOpen = pg.LiabilityEnd, pg.Reclassified
	case booked:
		fw.LiabilityOpen, fw.Issued, settledOpen = 0, s1.issued, 0
	}
	fw.Reclassified = s1.settled - settledOpen
	fw.LiabilityEnd, fw.ReclassifiedToDate = s1.liability, s1.settled
	fw.FairValueChange = fw.LiabilityEnd - fw.LiabilityOpen - fw.Issued + fw.Reclassified
	fw.Remeasurements = append([]Remeasurement{{Date: g.GrantDate, FairValue: at0}}, l.remeas...)
	return fw
}

// expenseRun is what every grant's expense reads of the period: read
// only while the workers run (expense).
type expenseRun struct {
	p      *period
	open   time.Time // the day before the period start
	endN   int       // the period end's day number
	booked bool      // after a prior close: the closed periods stand as it booked them
	keep   map[*awardLedger]bool
	// boundEnds are the ends of the periods (unless booked), quarters the
	// forecast quarters, future the days evaluated after the period end
	// and forecastAt the index there of each quarter's end; for each fiscal
	// year, yearEnd is that of its end and yearFrom of the day before its
	// start (-1: the year ends by the period end, or starts by it).
	boundEnds  []time.Time
	quarters   []PeriodAmount
	future     []time.Time
	forecastAt []int
	yearEnd    []int
	yearFrom   []int
}

// grantResult is one ledger's figures, which expense adds up in ledger
// order: a financing warrant's row, or a grant's expense with what it adds
// to each period, forecast quarter and fiscal year, its parts by cost
// centre, and the unrecognized cost and years left of each of its parts
// (graded) for the weighted remaining period. Its slices are reused from
// ledger to ledger.
type grantResult struct {
	financing bool
	fw        FinancingWarrant
	ge        GrantExpense
	warn      string
	// periodComp and periodFV are by period (unless booked).
	periodComp, periodFV []float64
	weights              []unrecognizedYears
	forecast             []float64
	after                float64
	years                []float64 // by fiscal year, where yearEnd ≥ 0
	parts                centreParts
	futureVals           []float64 // scratch: the cost through each future day
	priorDays            []int     // scratch: the prior close's tranches' vest days
	// st are the ledger's views for the reconciliation to the prior
	// close, with its catch-ups (period.recon).
	st grantStates
}

type unrecognizedYears struct{ unrecognized, years float64 }

// grant computes ledger l's figures into r.
func (x *expenseRun) grant(l *awardLedger, r *grantResult) {
	p := x.p
	pol, periodStart, periodEnd, open, endN := p.pol, p.start, p.end, x.open, x.endN
	g := l.in.Grant
	sc, n := l.buffers(), len(l.tr)
	s0 := l.atInto(pol, open, open, sc.s0[:n])
	s1 := l.atInto(pol, periodEnd, periodEnd, sc.s1[:n])
	var pg *PriorGrant
	if p.prior != nil {
		pg, _ = p.prior.grant(g.ID)
	}
	comp := sc.comp[:n]
	r.financing, r.warn = l.financing, ""
	r.periodComp, r.periodFV = r.periodComp[:0], r.periodFV[:0]
	if !x.booked {
		r.periodComp, r.periodFV = l.periodAmounts(pol, x.boundEnds, comp, r.periodComp, r.periodFV)
	}
	if l.financing {
		r.fw = l.financingWarrant(s0, s1, x.booked, pg, periodStart, periodEnd)
		r.fw.CostCenter = l.centres[l.centreOn(endN)]
		if l.liability && len(l.remeas) == 0 {
			r.warn = fmt.Sprintf("grant %s: liability-classified financing warrant with no remeasurement; its liability is carried at its fair value at issue", g.ID)
		}
		return
	}
	ge := GrantExpense{GrantID: g.ID, Holder: g.Holder, Instrument: g.Instrument, Liability: l.liability, GrantDate: g.GrantDate, ServiceStart: l.start, ServiceEnd: l.last, Condition: l.in.Condition}
	// The opening balances: as restated (s0), or as the prior close
	// booked them (nothing for a grant it did not have).
	bookedTranche := func(i int) float64 { return s0.comp[i] }
	if p.prior != nil {
		r.priorDays = r.priorDays[:0]
		if pg != nil {
			for _, t := range pg.Tranches {
				r.priorDays = append(r.priorDays, dayNum(t.VestDate))
			}
		}
		bookedTranche = func(i int) float64 {
			if pg != nil && (i == 0 || l.tr[i-1].of != l.tr[i].of) { // a tranche's first part carries it
				for k, d := range r.priorDays {
					if d == int(l.tr[i].origN) {
						return pg.Tranches[k].Cumulative
					}
				}
			}
			return 0
		}
	}
	// Every tranche is vested the day after the later of the last vest
	// date and the period end, so the cost there is the expected total.
	far := shiftDays(l.last, 1)
	if far.Before(periodEnd) {
		far = periodEnd
	}
	sInf := l.atInto(pol, far, periodEnd, sc.sInf[:n])
	lastLive, anyLive := 0, false // the day number of the last service end of a tranche with live shares
	ge.Tranches = sc.expenses.Take(n)[:0]
	r.weights = r.weights[:0]
	sv, o := l.survival(), l.outcome(endN)
	for i := range l.tr {
		t := &l.tr[i]
		c := t.countsN(endN)
		live := c.live(t.Tranche.Shares)
		serviceEnd := l.endAt(t, endN)
		if live > 0 && (!anyLive || serviceEnd > lastLive) {
			lastLive, anyLive = serviceEnd, true
		}
		q := l.expected(t, endN, l.rate, sv)
		fv := t.FairValue
		if l.liability {
			fv = l.fairValueAt(i, endN)
		}
		te := TrancheExpense{
			Index: int(t.Tranche.Index), VestDate: t.vestDate(),
			Shares: t.Tranche.Shares, SharesCounted: float64(live)*q*o + float64(c.accelerated),
			FairValue: fv, GrantDateFairValue: t.FairValue, ExpectedShare: q,
			Cost: sInf.comp[i], CumulativeOpen: bookedTranche(i), Cumulative: s1.comp[i],
		}
		te.Period = te.Cumulative - te.CumulativeOpen
		te.Unrecognized = te.Cost - te.Cumulative
		if te.Unrecognized < 1e-9*math.Max(1, te.Cost) {
			te.Unrecognized = 0
		}
		if left := serviceEnd - (endN + 1); left > 0 && te.Unrecognized > 0 {
			te.RemainingYears = float64(left) / 365
		}
		ge.Tranches = append(ge.Tranches, te)
		ge.Cost += te.Cost
		ge.CumulativeOpen += te.CumulativeOpen
		ge.Cumulative += te.Cumulative
		ge.Unrecognized += te.Unrecognized
		if pol.Attribution == grants.Graded {
			r.weights = append(r.weights, unrecognizedYears{te.Unrecognized, te.RemainingYears})
		}
	}
	ge.Tranches = l.byTranche(ge.Tranches)
	if anyLive {
		ge.ServiceEnd = dayDate(lastLive)
	}
	if p.prior != nil {
		ge.CumulativeOpen = 0
		if pg != nil {
			ge.CumulativeOpen = pg.Cumulative
		}
	}
	ge.Period = ge.Cumulative - ge.CumulativeOpen
	ge.Outstanding = l.outstanding(endN)
	ge.Events = l.in.eventsThrough(periodEnd)
	if ge.Unrecognized > 0 {
		if pol.Attribution == grants.StraightLine {
			if left := lastLive - (endN + 1); anyLive && left > 0 {
				ge.RemainingYears = float64(left) / 365
			}
		} else {
			var w float64
			for _, te := range ge.Tranches {
				w += te.Unrecognized * te.RemainingYears
			}
			ge.RemainingYears = w / ge.Unrecognized
		}
	}
	if l.liability {
		lOpen, settledOpen := s0.liability, s0.settled
		if p.prior != nil {
			lOpen, settledOpen = 0, 0
			if pg != nil {
				lOpen, settledOpen = pg.LiabilityEnd, pg.Reclassified
			}
		}
		ge.LiabilityOpen = lOpen
		ge.LiabilityEnd = s1.liability
		ge.ReclassifiedEquity = s1.settled - settledOpen
		ge.ReclassifiedToDate = s1.settled
		ge.Remeasurements = l.remeas
		if len(l.remeas) == 0 {
			r.warn = fmt.Sprintf("grant %s: liability-classified warrant with no remeasurement; its liability is carried at the grant-date fair value", g.ID)
		}
	}
	ge.CostCenter = l.centres[l.centreOn(endN)]
	r.futureVals = r.futureVals[:0]
	for _, d := range x.future {
		r.futureVals = append(r.futureVals, l.atInto(pol, d, periodEnd, comp).compTotal())
	}
	prevTotal := s1.compTotal()
	r.forecast = r.forecast[:0]
	for k := range x.quarters {
		cur := r.futureVals[x.forecastAt[k]]
		r.forecast = append(r.forecast, cur-prevTotal)
		prevTotal = cur
	}
	r.after = sInf.compTotal() - prevTotal
	r.parts = l.costCenters(pol, ge, s0, s1, sInf, open, periodEnd, far, x.quarters, r.forecast, r.after, r.parts)
	ge.ByCostCenter = r.parts.amounts
	r.years = r.years[:0]
	for k, e := range x.yearEnd {
		var y float64
		if e >= 0 {
			from := s1.compTotal()
			if f := x.yearFrom[k]; f >= 0 {
				from = r.futureVals[f]
			}
			y = r.futureVals[e] - from
		}
		r.years = append(r.years, y)
	}
	r.ge = ge
}
