package grants

// Expense attribution: how each tranche's fair value becomes compensation
// expense over its service period (ASC 718, IFRS 2).
//
// # Days
//
// All dates are calendar days. A tranche's service runs from the start of
// its service-start day to the start of its vest day, and the cost accrues
// evenly per day of service (ACT, valuation.Days). "Cumulative through day d"
// means through the end of day d, so a tranche that vests on 1 January 2030
// after a year of service is fully accrued by 31 December 2029, and a period
// [start, end] includes both of its days. A tranche is vested on and after its
// vest day. An event dated e acts at the end of day e and only on tranches not
// vested on e: a holder who leaves on 31 December does not keep a tranche that
// vests on 1 January; one who leaves on 1 January does.
//
// # Service start
//
// The service period starts at the later of the grant date and the vest
// start (ServiceStart). Not before the grant date, because the grant date is
// the measurement date and the award does not exist before it; service that
// a holder rendered before the grant (a vest start back-dated to the hire
// date) is caught up at once on the grant date, by a tranche whose vest date
// is already past or by a larger share of a longer tranche. We do not use a
// service inception date before the grant date (ASC 718-10-55-108, from
// memory), because that needs the award remeasured until it is granted. Not
// before the vest start when that is later, because the holder earns nothing
// for service before vesting begins.
//
// # Attribution
//
// Graded: each tranche straight-line over its own service period (IFRS 2
// requires it; ASC 718 allows it). Straight-line: the whole award
// straight-line from its service start to its last vest date, with the
// cumulative cost never below the cost of the tranches vested so far
// (ASC 718-10-35-8). For the by-tranche tables a straight-line award's
// cumulative cost is allocated in full to its vested tranches and the rest to
// the unvested ones in proportion to their cost.
//
// # Forfeitures
//
// Estimate: a tranche still unvested counts its shares not yet forfeited at
// the expected share still there at its vest date, (1 − rate)^Y with Y the
// years of service still to come (at the service start, the whole service
// period). Leavers already recorded are not expected to leave again: a
// termination removes the forfeited shares at once and the estimate for the
// rest covers only the service ahead, so the count converges to the actual
// shares by the vest date (factor 1 from then on). As-occur: every share counts until it is
// forfeited. Either way a forfeiture reverses all the cost recognised on the
// forfeited shares, on the day of the forfeiture.
//
// # Events
//
// Forfeited shares come out of the unvested tranches, latest vest date
// first, as Schedule.Tranches takes them (a termination forfeits them all);
// shares beyond the unvested ones come out of vested shares, latest first,
// and reverse nothing. Exercised and expired shares come out of vested
// shares, earliest vest date first, and change counts but not cost.
// Cancelled shares (a cancellation without a replacement award) are taken
// the same way as forfeited ones; on unvested shares their remaining
// unrecognised cost is recognised in full on the cancellation date
// (ASC 718-20-35-9, IFRS 2.28(a); from memory). Options and warrants still outstanding at the end of their
// expiry date expire then.
//
// # Liability-classified warrants
//
// Compensation expense accrues on the grant-date fair value, exactly as for
// an equity award. The warrant liability is the latest remeasured fair value
// (Remeasurement; the grant-date value until the first one) times the
// outstanding shares times the share of service rendered; the difference
// between the change in the liability and the compensation expense, after
// exercised warrants are reclassified to equity at their latest fair value,
// is the change in fair value, shown apart from compensation expense.
// Expired, cancelled and forfeited warrants release their liability through
// that line.

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"grantworth/valuation"
)

// TrancheCost is a tranche with its fair value per share at its measurement
// date: the grant date, or for a liability-classified warrant its first
// measurement (later ones are Remeasurements).
type TrancheCost struct {
	Tranche   Tranche
	FairValue float64
}

// Remeasurement is a liability-classified warrant's fair value per share on
// a valuation date, one value per tranche in AwardCost.Tranches order.
type Remeasurement struct {
	Date      time.Time
	FairValue []float64
}

// MeasuredAssumptions are the valuation inputs a grant was measured with,
// for the disclosure of the period's weighted-average assumptions.
type MeasuredAssumptions struct {
	Volatility        float64
	RiskFreeRate      float64
	DividendYield     float64
	ExpectedTermYears float64
}

// AwardCost is everything attribution needs about one grant.
type AwardCost struct {
	Grant          Grant
	Tranches       []TrancheCost // in vest-date order
	Events         []Event       // this grant's events, in any order
	Remeasurements []Remeasurement
	Measured       *MeasuredAssumptions // optional; used by Disclose
}

// ExpensePolicy is the company's attribution and forfeiture policy. The zero
// Attribution is Graded and the zero Forfeitures is Estimate (both allowed
// under ASC 718 and IFRS 2).
type ExpensePolicy struct {
	Attribution              Attribution
	Forfeitures              ForfeiturePolicy
	PreVestingForfeitureRate float64 // annual share of unvested holders who leave, in [0, 1)
}

// PeriodAmount is the expense of one period.
type PeriodAmount struct {
	Start           time.Time
	End             time.Time
	Amount          float64 // compensation expense
	FairValueChange float64 // liability-classified warrants, apart from compensation
	Current         bool    // the reporting period [period start, valuation date]
}

// TrancheExpense is one tranche's attribution.
type TrancheExpense struct {
	Index          int
	VestDate       time.Time
	ServiceStart   time.Time
	Shares         int64   // as granted
	SharesCounted  float64 // shares whose cost counts at period end (expected at vest under Estimate)
	FairValue      float64 // per share, grant date
	ExpectedShare  float64 // (1 − rate)^Y at period end, Y the service years still to come; 1 under as-occur
	Cost           float64 // expected total compensation cost at period end
	CumulativeOpen float64 // through the day before the period start
	Period         float64
	Cumulative     float64 // through period end
	Unrecognized   float64
	RemainingYears float64 // service days left after the period end / 365
}

// GrantExpense is one grant's attribution.
type GrantExpense struct {
	GrantID        string
	Holder         string
	Instrument     Instrument
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

	// Liability-classified warrants only.
	FairValueChange    float64 // in the period
	LiabilityOpen      float64 // at the end of the day before the period start
	LiabilityEnd       float64 // at period end
	ReclassifiedEquity float64 // liability moved to equity on exercise in the period

	Tranches []TrancheExpense
}

// JournalLine is one line of a journal entry.
type JournalLine struct {
	Account string
	Debit   float64
	Credit  float64
}

// JournalEntry is a summary entry for the period.
type JournalEntry struct {
	Description string
	Lines       []JournalLine
}

// Journal account names.
const (
	AccountCompensation   = "Compensation expense"
	AccountAPIC           = "Additional paid-in capital"
	AccountLiability      = "Warrant liability"
	AccountFairValueDelta = "Change in fair value of warrant liability"
)

// ExpenseReport is the attribution for one reporting period.
type ExpenseReport struct {
	PeriodStart time.Time
	PeriodEnd   time.Time
	Policy      ExpensePolicy
	ServiceRule string // the service-start rule, in words, for the reports

	Grants []GrantExpense

	Period          float64 // compensation expense in [PeriodStart, PeriodEnd]
	FairValueChange float64 // liability warrants, apart from Period
	Cumulative      float64 // through PeriodEnd
	Unrecognized    float64 // at PeriodEnd
	// RemainingYears is the weighted-average remaining recognition period:
	// each tranche's (graded) or award's (straight-line) service days left
	// after the period end, over 365, weighted by its unrecognised cost
	// (common practice).
	RemainingYears float64

	// Periods are the calendar quarters from the one holding the earliest
	// grant date up to the period start (context), then the current period.
	Periods []PeriodAmount
	// Forecast is the expected compensation expense in each of the next 16
	// calendar quarters after PeriodEnd (the first may be partial), assuming
	// no further events and, under Estimate, forfeitures at the estimated
	// rate. AfterForecast is what remains after them.
	Forecast      []PeriodAmount
	AfterForecast float64

	Journal  []JournalEntry
	Warnings []string
	// PolicyNotes say where the chosen policy differs between ASC 718 and
	// IFRS 2, and what attribution does not model.
	PolicyNotes []string
}

// ForecastQuarters is how many calendar quarters the forecast covers.
const ForecastQuarters = 16

// ServiceRule says in words which service-start rule attribution applies.
const ServiceRule = "Service starts at the later of the grant date and the vest start: not before the grant date, which is the measurement date (service already rendered is caught up on the grant date), and not before vesting begins, since earlier service earns nothing."

// ServiceStart is the first day of a grant's service period: the later of
// its grant date and its vest start (see the package notes on expense).
func ServiceStart(g Grant) time.Time {
	if g.VestStart.After(g.GrantDate) {
		return g.VestStart
	}
	return g.GrantDate
}

// ExpectedShare is the expected share of a tranche's holders there on a date
// who are still there at its vest date, under an annual pre-vesting
// forfeiture rate: (1 − rate)^Y, with Y the ACT/365F years from that date to
// the vest date (1 if already vested). Attribution applies it from the later
// of the service start and the latest date whose leavers are known, to the
// shares not yet forfeited: leavers already recorded are not expected to
// leave again, so the estimate is trued up to actual at every termination
// and converges to the actual count at vesting.
func ExpectedShare(rate float64, from, vest time.Time) float64 {
	return valuation.SurvivalToVest(rate, valuation.YearFrac(from, vest))
}

// ErrEvent is wrapped by every error about an event that does not fit its
// grant.
var ErrEvent = errors.New("event does not fit the grant")

// EventError is an event that cannot be applied to its grant.
type EventError struct {
	GrantID string
	Row     int // Events sheet row, 0 if unknown
	Date    time.Time
	Msg     string
}

func (e *EventError) Error() string {
	loc := "Events"
	if e.Row > 0 {
		loc = fmt.Sprintf("Events row %d", e.Row)
	}
	return fmt.Sprintf("%s: grant %s on %s: %s", loc, e.GrantID, e.Date.Format(time.DateOnly), e.Msg)
}

func (e *EventError) Unwrap() error { return ErrEvent }

// move is an event applied to one tranche.
type move struct {
	date   time.Time
	dayN   int // dayNum(date)
	kind   EventKind
	shares int64
	vested bool // the tranche was vested on the day of the move
}

type trancheLedger struct {
	TrancheCost
	start time.Time // service start
	days  int       // service days
	// day numbers (dn) of the service start and the vest date
	startN, vestN int
	rate          float64 // pre-vesting forfeiture rate; 0 under as-occur
	moves         []move
}

type awardLedger struct {
	in        *AwardCost
	liability bool
	start     time.Time
	last      time.Time // last vest date
	days      int
	tr        []trancheLedger
	remeas    []Remeasurement // sorted by date
	remeasN   []int           // their day numbers
	// day numbers of the grant date and the service start
	grantN, startN int

	// scratch for atInto
	bufValue, bufLia, bufComp []float64
	bufCounts                 []trancheCounts
}

// onOrBefore reports a <= b by calendar day.
func dayOnOrBefore(a, b time.Time) bool { return dayNum(a) <= dayNum(b) }

// dn is the day number of t's calendar day (days since 1970-01-01), so
// that the inner loops compare and subtract integers. dayNum(b) − dayNum(a) equals
// valuation.Days(a, b).
func dayNum(t time.Time) int {
	return int(time.Date(t.Year(), t.Month(), t.Day(), 0, 0, 0, 0, time.UTC).Unix() / 86400)
}

func shiftDays(t time.Time, n int) time.Time { return t.AddDate(0, 0, n) }

func (p ExpensePolicy) normalized() (ExpensePolicy, error) {
	if p.Attribution == "" {
		p.Attribution = Graded
	}
	if p.Forfeitures == "" {
		p.Forfeitures = Estimate
	}
	if p.Attribution != Graded && p.Attribution != StraightLine {
		return p, fmt.Errorf("attribution %q: want %q or %q", p.Attribution, Graded, StraightLine)
	}
	if p.Forfeitures != Estimate && p.Forfeitures != AsOccur {
		return p, fmt.Errorf("forfeitures %q: want %q or %q", p.Forfeitures, Estimate, AsOccur)
	}
	if !(p.PreVestingForfeitureRate >= 0 && p.PreVestingForfeitureRate < 1) {
		return p, fmt.Errorf("pre-vesting forfeiture rate %v: want a share in [0, 1)", p.PreVestingForfeitureRate)
	}
	return p, nil
}

// ledger applies an award's events up to asOf to its tranches.
func newAwardLedger(a *AwardCost, pol ExpensePolicy, asOf time.Time) (*awardLedger, error) {
	g := a.Grant
	if len(a.Tranches) == 0 {
		return nil, fmt.Errorf("grant %s: no tranches", g.ID)
	}
	l := &awardLedger{in: a, liability: g.Instrument == Warrant && g.Classification == Liability, start: ServiceStart(g)}
	for i, tc := range a.Tranches {
		if tc.Tranche.GrantID != "" && tc.Tranche.GrantID != g.ID {
			return nil, fmt.Errorf("grant %s: tranche %d belongs to grant %s", g.ID, tc.Tranche.Index, tc.Tranche.GrantID)
		}
		if !(tc.FairValue >= 0) || math.IsInf(tc.FairValue, 0) {
			return nil, fmt.Errorf("grant %s tranche %d: fair value per share %v is not a finite non-negative number", g.ID, tc.Tranche.Index, tc.FairValue)
		}
		if tc.Tranche.Shares < 0 {
			return nil, fmt.Errorf("grant %s tranche %d: %d shares", g.ID, tc.Tranche.Index, tc.Tranche.Shares)
		}
		if i > 0 && tc.Tranche.VestDate.Before(a.Tranches[i-1].Tranche.VestDate) {
			return nil, fmt.Errorf("grant %s: tranches not in vest-date order at tranche %d", g.ID, tc.Tranche.Index)
		}
		if !g.ExpiryDate.IsZero() && tc.Tranche.VestDate.After(g.ExpiryDate) {
			return nil, fmt.Errorf("grant %s tranche %d: vests %s, after expiry %s", g.ID, tc.Tranche.Index, tc.Tranche.VestDate.Format(time.DateOnly), g.ExpiryDate.Format(time.DateOnly))
		}
		t := trancheLedger{TrancheCost: tc, start: l.start, startN: dayNum(l.start), vestN: dayNum(tc.Tranche.VestDate)}
		t.days = t.vestN - t.startN
		if pol.Forfeitures == Estimate {
			t.rate = pol.PreVestingForfeitureRate
		}
		l.tr = append(l.tr, t)
	}
	l.last = a.Tranches[len(a.Tranches)-1].Tranche.VestDate
	l.days = valuation.Days(l.start, l.last)
	l.grantN, l.startN = dayNum(g.GrantDate), dayNum(l.start)
	if len(a.Remeasurements) > 0 && !l.liability {
		return nil, fmt.Errorf("grant %s: remeasurements given but it is not a liability-classified warrant", g.ID)
	}
	for _, r := range a.Remeasurements {
		if len(r.FairValue) != len(a.Tranches) {
			return nil, fmt.Errorf("grant %s: remeasurement on %s has %d values for %d tranches", g.ID, r.Date.Format(time.DateOnly), len(r.FairValue), len(a.Tranches))
		}
		for i, v := range r.FairValue {
			if !(v >= 0) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("grant %s tranche %d: remeasured fair value %v on %s", g.ID, a.Tranches[i].Tranche.Index, v, r.Date.Format(time.DateOnly))
			}
		}
		l.remeas = append(l.remeas, r)
	}
	sort.SliceStable(l.remeas, func(i, j int) bool { return dayNum(l.remeas[i].Date) < dayNum(l.remeas[j].Date) })
	for _, r := range l.remeas {
		l.remeasN = append(l.remeasN, dayNum(r.Date))
	}

	evs := make([]Event, 0, len(a.Events))
	for _, e := range a.Events {
		if e.GrantID != "" && e.GrantID != g.ID {
			return nil, &EventError{GrantID: e.GrantID, Row: e.Row, Date: e.Date, Msg: fmt.Sprintf("listed under grant %s", g.ID)}
		}
		if dayOnOrBefore(e.Date, asOf) {
			evs = append(evs, e)
		}
	}
	sort.SliceStable(evs, func(i, j int) bool { return valuation.Days(evs[j].Date, evs[i].Date) < 0 })
	for _, e := range evs {
		if err := l.apply(e); err != nil {
			return nil, err
		}
	}
	if !g.ExpiryDate.IsZero() && dayOnOrBefore(g.ExpiryDate, asOf) && g.Instrument != RSU {
		for i := range l.tr {
			if n := l.tr[i].open(); n > 0 {
				l.tr[i].moves = append(l.tr[i].moves, move{date: g.ExpiryDate, dayN: dayNum(g.ExpiryDate), kind: Expired, shares: n, vested: true})
			}
		}
	}
	return l, nil
}

func (t *trancheLedger) open() int64 {
	n := t.Tranche.Shares
	for _, m := range t.moves {
		n -= m.shares
	}
	return n
}

func (t *trancheLedger) vestedOn(d time.Time) bool { return t.vestN <= dayNum(d) }

func (t *trancheLedger) vestedN(d int) bool { return t.vestN <= d }

// expected is the expected share of the tranche's live shares at the end of
// day d that are still there at its vest date (see ExpectedShare): the rate
// over the service days still to come, from day d+1 (or the service start)
// to the day before vesting; 1 once vested or with no forfeiture rate.
func (t *trancheLedger) expected(d int) float64 {
	if t.vestedN(d) || t.rate == 0 {
		return 1
	}
	return valuation.SurvivalToVest(t.rate, float64(t.vestN-max(t.startN, d+1))/365)
}

// apply allocates one event's shares to tranches.
func (l *awardLedger) apply(e Event) error {
	g := l.in.Grant
	fail := func(format string, args ...any) error {
		return &EventError{GrantID: g.ID, Row: e.Row, Date: e.Date, Msg: fmt.Sprintf(format, args...)}
	}
	if e.Shares <= 0 {
		return fail("%s %d shares: want a positive number", e.Kind, e.Shares)
	}
	if valuation.Days(g.GrantDate, e.Date) < 0 {
		return fail("%s before the grant date %s", e.Kind, g.GrantDate.Format(time.DateOnly))
	}
	if !g.ExpiryDate.IsZero() && valuation.Days(g.ExpiryDate, e.Date) > 0 {
		return fail("%s after the expiry date %s", e.Kind, g.ExpiryDate.Format(time.DateOnly))
	}
	var unvested, vested int64
	for i := range l.tr {
		if l.tr[i].vestedOn(e.Date) {
			vested += l.tr[i].open()
		} else {
			unvested += l.tr[i].open()
		}
	}
	left := e.Shares
	take := func(i int) {
		t := &l.tr[i]
		n := min(t.open(), left)
		if n > 0 {
			t.moves = append(t.moves, move{date: e.Date, dayN: dayNum(e.Date), kind: e.Kind, shares: n, vested: t.vestedOn(e.Date)})
			left -= n
		}
	}
	switch e.Kind {
	case Forfeited, Cancelled:
		if e.Shares > unvested+vested {
			return fail("%s %d shares but only %d are outstanding", e.Kind, e.Shares, unvested+vested)
		}
		for i := len(l.tr) - 1; i >= 0 && left > 0; i-- {
			if !l.tr[i].vestedOn(e.Date) {
				take(i)
			}
		}
		for i := len(l.tr) - 1; i >= 0 && left > 0; i-- {
			take(i)
		}
	case Exercised, Expired:
		if e.Shares > vested {
			return fail("%s %d shares but only %d are vested and outstanding", e.Kind, e.Shares, vested)
		}
		for i := 0; i < len(l.tr) && left > 0; i++ {
			if l.tr[i].vestedOn(e.Date) {
				take(i)
			}
		}
	default:
		return fail("unknown event %q", e.Kind)
	}
	return nil
}

// trancheCounts are a tranche's shares by what has happened to them through
// the end of a day.
type trancheCounts struct {
	reversed    int64 // forfeited while unvested: cost reversed
	accelerated int64 // cancelled while unvested: cost recognised at once
	open        int64 // still outstanding
	exercised   int64
}

func (t *trancheLedger) countsAt(d time.Time) trancheCounts { return t.countsN(dayNum(d)) }

func (t *trancheLedger) countsN(d int) trancheCounts {
	c := trancheCounts{open: t.Tranche.Shares}
	for _, m := range t.moves {
		if m.dayN > d {
			continue
		}
		c.open -= m.shares
		switch {
		case m.kind == Forfeited && !m.vested:
			c.reversed += m.shares
		case m.kind == Cancelled && !m.vested:
			c.accelerated += m.shares
		case m.kind == Exercised:
			c.exercised += m.shares
		}
	}
	return c
}

// live is the shares whose cost still accrues by the attribution rule.
func (c trancheCounts) live(total int64) int64 { return total - c.reversed - c.accelerated }

// fraction is the share of a service period of days days from day start
// that is rendered through the end of day d.
func serviceFraction(start, days, d int) float64 {
	done := d + 1 - start
	if done <= 0 {
		return 0
	}
	if days <= 0 || done >= days {
		return 1
	}
	return float64(done) / float64(days)
}

// attribute spreads value[i] (fair value × counted shares of tranche i) by
// the policy through the end of day d, writing each tranche's cumulative
// cost into out. Tranches vested on or before known count in full; the
// others at their expected share.
func (l *awardLedger) attribute(pol ExpensePolicy, value []float64, d, known int, out []float64) {
	if d < l.grantN {
		for i := range out {
			out[i] = 0
		}
		return
	}
	kd := min(d, known)
	q := func(i int) float64 { return l.tr[i].expected(kd) }
	if pol.Attribution == Graded {
		for i := range l.tr {
			out[i] = value[i] * q(i) * serviceFraction(l.tr[i].startN, l.tr[i].days, d)
		}
		return
	}
	var total, floor, unvested float64
	for i := range l.tr {
		v := value[i] * q(i)
		total += v
		if l.tr[i].vestedN(d) {
			floor += v
		} else {
			unvested += v
		}
	}
	cum := math.Max(total*serviceFraction(l.startN, l.days, d), floor)
	rest := cum - floor
	for i := range l.tr {
		v := value[i] * q(i)
		switch {
		case l.tr[i].vestedN(d):
			out[i] = v
		case unvested > 0:
			out[i] = rest * v / unvested
		default:
			out[i] = 0
		}
	}
}

// fairValueAt is the latest liability fair value of tranche i on day d.
func (l *awardLedger) fairValueAt(i int, d int) float64 {
	fv := l.tr[i].FairValue
	for k, r := range l.remeas {
		if l.remeasN[k] <= d {
			fv = r.FairValue[i]
		}
	}
	return fv
}

// snapshot is an award's position through the end of a day.
type snapshot struct {
	comp      []float64 // cumulative compensation cost by tranche
	liability float64   // warrant liability
	settled   float64   // cumulative liability reclassified to equity
}

func (s snapshot) compTotal() float64 {
	var t float64
	for _, v := range s.comp {
		t += v
	}
	return t
}

// fvChange is the cumulative change in fair value of a liability warrant.
func (s snapshot) fvChange() float64 { return s.liability + s.settled - s.compTotal() }

func (l *awardLedger) at(pol ExpensePolicy, dt, knownt time.Time) snapshot {
	return l.atInto(pol, dt, knownt, make([]float64, len(l.tr)))
}

// atInto is at, writing the cumulative cost by tranche into comp; the
// other buffers are the ledger's own, reused from call to call.
func (l *awardLedger) atInto(pol ExpensePolicy, dt, knownt time.Time, comp []float64) snapshot {
	d, known := dayNum(dt), dayNum(knownt)
	n := len(l.tr)
	s := snapshot{comp: comp}
	if len(l.bufValue) < n {
		l.bufValue, l.bufLia, l.bufCounts = make([]float64, n), make([]float64, n), make([]trancheCounts, n)
	}
	value, counts := l.bufValue[:n], l.bufCounts[:n]
	for i := range l.tr {
		counts[i] = l.tr[i].countsN(d)
		value[i] = l.tr[i].FairValue * float64(counts[i].live(l.tr[i].Tranche.Shares))
	}
	l.attribute(pol, value, d, known, s.comp)
	for i := range l.tr {
		s.comp[i] += l.tr[i].FairValue * float64(counts[i].accelerated)
	}
	if !l.liability {
		return s
	}
	for i := range l.tr {
		value[i] = l.fairValueAt(i, d) * float64(counts[i].open)
		for _, m := range l.tr[i].moves {
			if m.kind == Exercised && m.dayN <= d {
				s.settled += l.fairValueAt(i, m.dayN) * float64(m.shares)
			}
		}
	}
	lia := l.bufLia[:n]
	l.attribute(pol, value, d, known, lia)
	for _, v := range lia {
		s.liability += v
	}
	return s
}

// quarterStart is the first day of the calendar quarter holding d.
func quarterStart(d time.Time) time.Time {
	m := (int(d.Month())-1)/3*3 + 1
	return time.Date(d.Year(), time.Month(m), 1, 0, 0, 0, 0, time.UTC)
}

// quarterEnd is the last day of the calendar quarter holding d.
func quarterEnd(d time.Time) time.Time {
	return shiftDays(quarterStart(d).AddDate(0, 3, 0), -1)
}

func civilDay(t time.Time) time.Time {
	return time.Date(t.Year(), t.Month(), t.Day(), 0, 0, 0, 0, time.UTC)
}

// Expense attributes the awards' cost to the period [periodStart, periodEnd]
// (both days included; periodEnd is the valuation date) under the policy.
// Grants dated after periodEnd are left out, and so are events after it.
// Errors name the grant (and the Events row) that does not fit.
func Expense(awards []AwardCost, policy ExpensePolicy, periodStart, periodEnd time.Time) (*ExpenseReport, error) {
	p, err := openPeriod(awards, policy, periodStart, periodEnd)
	if err != nil {
		return nil, err
	}
	return p.expense(), nil
}

// Attribute is Expense and Disclose over the same awards, policy and
// period, with each award's ledger built once for both.
func Attribute(awards []AwardCost, policy ExpensePolicy, periodStart, periodEnd time.Time, sharePrice float64) (*ExpenseReport, *Disclosure, error) {
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
// granted by its end, in award order.
type period struct {
	pol        ExpensePolicy
	start, end time.Time
	ledgers    []*awardLedger
}

// openPeriod checks the policy and the period and builds the ledgers;
// the error joins one error for each award that does not fit.
func openPeriod(awards []AwardCost, policy ExpensePolicy, periodStart, periodEnd time.Time) (*period, error) {
	pol, err := policy.normalized()
	if err != nil {
		return nil, err
	}
	periodStart, periodEnd = civilDay(periodStart), civilDay(periodEnd)
	if periodEnd.Before(periodStart) {
		return nil, fmt.Errorf("period end %s is before period start %s", periodEnd.Format(time.DateOnly), periodStart.Format(time.DateOnly))
	}
	p := &period{pol: pol, start: periodStart, end: periodEnd}
	var errs []error
	for i := range awards {
		if valuation.Days(awards[i].Grant.GrantDate, periodEnd) < 0 {
			continue
		}
		l, err := newAwardLedger(&awards[i], pol, periodEnd)
		if err != nil {
			errs = append(errs, err)
			continue
		}
		p.ledgers = append(p.ledgers, l)
	}
	if len(errs) > 0 {
		return nil, errors.Join(errs...)
	}
	return p, nil
}

// expense is the period's ExpenseReport.
func (p *period) expense() *ExpenseReport {
	pol, periodStart, periodEnd, ledgers := p.pol, p.start, p.end, p.ledgers
	rep := &ExpenseReport{PeriodStart: periodStart, PeriodEnd: periodEnd, Policy: pol, ServiceRule: ServiceRule}
	open := shiftDays(periodStart, -1)

	// Period boundaries: context quarters, then the current period.
	var bounds []PeriodAmount
	if len(ledgers) > 0 {
		first := ledgers[0].in.Grant.GrantDate
		for _, l := range ledgers {
			if l.in.Grant.GrantDate.Before(first) {
				first = l.in.Grant.GrantDate
			}
		}
		for q := quarterStart(first); q.Before(periodStart); q = q.AddDate(0, 3, 0) {
			end := quarterEnd(q)
			if !end.Before(periodStart) {
				end = open
			}
			bounds = append(bounds, PeriodAmount{Start: q, End: end})
		}
	}
	bounds = append(bounds, PeriodAmount{Start: periodStart, End: periodEnd, Current: true})
	fstart := shiftDays(periodEnd, 1)
	for k := 0; k < ForecastQuarters; k++ {
		end := quarterEnd(fstart)
		rep.Forecast = append(rep.Forecast, PeriodAmount{Start: fstart, End: end})
		fstart = shiftDays(end, 1)
	}

	var wYears float64
	for _, l := range ledgers {
		g := l.in.Grant
		ge := GrantExpense{GrantID: g.ID, Holder: g.Holder, Instrument: g.Instrument, Liability: l.liability, GrantDate: g.GrantDate, ServiceStart: l.start, ServiceEnd: l.last}
		s0 := l.at(pol, open, open)
		s1 := l.at(pol, periodEnd, periodEnd)
		// Every tranche is vested the day after the later of the last vest
		// date and the period end, so the cost there is the expected total.
		far := shiftDays(l.last, 1)
		if far.Before(periodEnd) {
			far = periodEnd
		}
		sInf := l.at(pol, far, periodEnd)
		var lastLive time.Time
		for i, t := range l.tr {
			c := t.countsAt(periodEnd)
			live := c.live(t.Tranche.Shares)
			if live > 0 {
				lastLive = t.Tranche.VestDate
			}
			q := t.expected(dayNum(periodEnd))
			te := TrancheExpense{
				Index: t.Tranche.Index, VestDate: t.Tranche.VestDate, ServiceStart: t.start,
				Shares: t.Tranche.Shares, SharesCounted: float64(live)*q + float64(c.accelerated),
				FairValue: t.FairValue, ExpectedShare: q,
				Cost: sInf.comp[i], CumulativeOpen: s0.comp[i], Cumulative: s1.comp[i],
			}
			te.Period = te.Cumulative - te.CumulativeOpen
			te.Unrecognized = te.Cost - te.Cumulative
			if te.Unrecognized < 1e-9*math.Max(1, te.Cost) {
				te.Unrecognized = 0
			}
			if left := valuation.Days(shiftDays(periodEnd, 1), t.Tranche.VestDate); left > 0 && te.Unrecognized > 0 {
				te.RemainingYears = float64(left) / 365
			}
			ge.Tranches = append(ge.Tranches, te)
			ge.Cost += te.Cost
			ge.CumulativeOpen += te.CumulativeOpen
			ge.Cumulative += te.Cumulative
			ge.Unrecognized += te.Unrecognized
			if pol.Attribution == Graded {
				wYears += te.Unrecognized * te.RemainingYears
			}
		}
		ge.Period = ge.Cumulative - ge.CumulativeOpen
		if ge.Unrecognized > 0 {
			if pol.Attribution == StraightLine {
				if left := valuation.Days(shiftDays(periodEnd, 1), lastLive); left > 0 {
					ge.RemainingYears = float64(left) / 365
				}
				wYears += ge.Unrecognized * ge.RemainingYears
			} else {
				var w float64
				for _, te := range ge.Tranches {
					w += te.Unrecognized * te.RemainingYears
				}
				ge.RemainingYears = w / ge.Unrecognized
			}
		}
		if l.liability {
			ge.FairValueChange = s1.fvChange() - s0.fvChange()
			ge.LiabilityOpen = s0.liability
			ge.LiabilityEnd = s1.liability
			ge.ReclassifiedEquity = s1.settled - s0.settled
			if len(l.remeas) == 0 {
				rep.Warnings = append(rep.Warnings, fmt.Sprintf("grant %s: liability-classified warrant with no remeasurement; its liability is carried at the grant-date fair value", g.ID))
			}
		}
		rep.Grants = append(rep.Grants, ge)
		rep.Period += ge.Period
		rep.FairValueChange += ge.FairValueChange
		rep.Cumulative += ge.Cumulative
		rep.Unrecognized += ge.Unrecognized

		l.bufComp = make([]float64, len(l.tr))
		var prevComp, prevFV float64
		for k := range bounds {
			cur := l.atInto(pol, bounds[k].End, bounds[k].End, l.bufComp)
			c := cur.compTotal()
			bounds[k].Amount += c - prevComp
			if l.liability {
				fv := cur.fvChange()
				bounds[k].FairValueChange += fv - prevFV
				prevFV = fv
			}
			prevComp = c
		}
		prevTotal := s1.compTotal()
		for k := range rep.Forecast {
			cur := l.atInto(pol, rep.Forecast[k].End, periodEnd, l.bufComp).compTotal()
			rep.Forecast[k].Amount += cur - prevTotal
			prevTotal = cur
		}
		rep.AfterForecast += sInf.compTotal() - prevTotal
	}
	if rep.Unrecognized > 0 {
		rep.RemainingYears = wYears / rep.Unrecognized
	}
	rep.Periods = bounds
	rep.Journal = periodJournal(rep)
	rep.PolicyNotes = policyNotes(pol, ledgers)
	return rep
}

// policyNotes explains the policy's standing under each standard.
func policyNotes(pol ExpensePolicy, ledgers []*awardLedger) []string {
	graded, warrants := false, false
	for _, l := range ledgers {
		if len(l.tr) > 1 {
			graded = true
		}
		if l.in.Grant.Instrument == Warrant {
			warrants = true
		}
	}
	var notes []string
	if pol.Attribution == StraightLine && graded {
		notes = append(notes, "Straight-line attribution of a graded-vesting award is an election under ASC 718 (718-10-35-8); IFRS 2 treats each tranche as a separate award, which is graded attribution.")
	}
	if pol.Forfeitures == AsOccur {
		notes = append(notes, "Accounting for forfeitures as they occur is an election under ASC 718 (718-10-35-3); IFRS 2 requires an estimate of the awards expected to vest.")
	}
	if warrants {
		notes = append(notes, "Warrants are attributed like awards for goods or services. A warrant issued in a financing (to a lender or an investor) is not share-based compensation: its issue-date value belongs with the financing (a debt discount or an issue cost; ASC 470, ASC 815, IAS 32), and only its remeasurement, for a liability, belongs in profit or loss.")
	}
	notes = append(notes, "A cancellation is treated as without a replacement award; modifications and replacement awards are not modelled.")
	return notes
}

// entry builds a two-line entry moving amount from credit to debit; a
// negative amount swaps the sides.
func journalEntry(desc, debit, credit string, amount float64) JournalEntry {
	if amount < 0 {
		debit, credit, amount = credit, debit, -amount
	}
	return JournalEntry{Description: desc, Lines: []JournalLine{{Account: debit, Debit: amount}, {Account: credit, Credit: amount}}}
}

// journal is the period's summary entries; entries with nothing to book are
// left out.
func periodJournal(rep *ExpenseReport) []JournalEntry {
	var equity, liaComp, fv, reclass float64
	for _, g := range rep.Grants {
		if g.Liability {
			liaComp += g.Period
			fv += g.FairValueChange
			reclass += g.ReclassifiedEquity
		} else {
			equity += g.Period
		}
	}
	var out []JournalEntry
	add := func(e JournalEntry, amount float64) {
		if math.Abs(amount) >= 0.005 {
			out = append(out, e)
		}
	}
	add(journalEntry("Share-based compensation for the period (equity-classified awards)", AccountCompensation, AccountAPIC, equity), equity)
	add(journalEntry("Share-based compensation for the period (liability-classified warrants)", AccountCompensation, AccountLiability, liaComp), liaComp)
	add(journalEntry("Remeasurement of the warrant liability to fair value (apart from compensation)", AccountFairValueDelta, AccountLiability, fv), fv)
	add(journalEntry("Exercised liability-classified warrants reclassified to equity", AccountLiability, AccountAPIC, reclass), reclass)
	return out
}

// String is a one-line summary, for logs and test failures.
func (r *ExpenseReport) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "expense %s..%s %s/%s: period %.2f, fv change %.2f, cumulative %.2f, unrecognised %.2f over %.2f years",
		r.PeriodStart.Format(time.DateOnly), r.PeriodEnd.Format(time.DateOnly), r.Policy.Attribution, r.Policy.Forfeitures,
		r.Period, r.FairValueChange, r.Cumulative, r.Unrecognized, r.RemainingYears)
	return b.String()
}
