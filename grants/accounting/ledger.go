package accounting

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"
	"time"

	"grantworth/grants"
	"grantworth/internal/slab"
	"grantworth/valuation"
)

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
	kind   grants.EventKind
	shares int64
	vested bool    // the tranche was vested on the day of the move
	price  float64 // share price on the day of the move: its Events row's, else Share Prices'; 0 if unknown
	// rowPrice is whether the price is the Events row's own share_price.
	rowPrice bool
	// replaced marks a cancellation with a replacement award, the change
	// by (modify.go).
	replaced bool
	by       changeKey
}

// ledgerTerms are the terms of a tranche the ledger reads: a large
// ledger holds one per tranche, so not a whole grants.Tranche.
// The vest date is the tranche's vestN (vestDate).
type ledgerTerms struct {
	Shares int64
	Index  int32
}

// trancheLedger is one tranche of a ledger, in 48 bytes: a large ledger
// holds millions. What is the same for every tranche of the award (the
// service start, the day a hurdle was met) is the ledger's.
type trancheLedger struct {
	// Tranche and FairValue are those of the award's tranche (the service
	// starts on the award's start, awardLedger.start and startN).
	Tranche   ledgerTerms
	FairValue float64
	// Day numbers (dayNum) in four bytes each: of the vest date, and of
	// the last day of the requisite service, endN (the vest date unless a
	// market condition sets a later one; awardLedger.endAt).
	vestN, endN int32
	// A ledger of an award that a change touched has one entry per part
	// of a tranche (modify.go): of is the index of its tranche in the
	// award's, origN the day number of that tranche's vest date as
	// granted (its key in a prior close), and layers its costs. For any
	// other award of is the entry's own index and origN its vestN.
	origN, of int32
	// more holds the moves and layers of the few tranches that have any
	// (moves, layers, extra): nil for the rest.
	more *trancheMore
}

type trancheMore struct {
	moves  []move
	layers []layer
}

// moves are the events that took shares of the tranche, in date order.
func (t *trancheLedger) moves() []move {
	if t.more == nil {
		return nil
	}
	return t.more.moves
}

// layers are the tranche's cost layers once a change touched its award.
func (t *trancheLedger) layers() []layer {
	if t.more == nil {
		return nil
	}
	return t.more.layers
}

// extra is t.more, made when first needed.
func (t *trancheLedger) extra() *trancheMore {
	if t.more == nil {
		t.more = new(trancheMore)
	}
	return t.more
}

type awardLedger struct {
	in *Award
	// liability: a liability-classified warrant, remeasured to fair value;
	// financing: issued in a financing, not compensation.
	liability, financing bool
	rate                 float64 // pre-vesting forfeiture rate; 0 under as-occur
	start                time.Time
	last                 time.Time // last vest date
	tr                   []trancheLedger
	// tranches is len(in.Tranches), the award's tranches as granted,
	// which Close lets go once the ledger is built (period.ownsAwards).
	tranches int
	remeas   []Remeasurement // sorted by date
	remeasN  []int           // their day numbers
	// day numbers of the grant date and the service start, and of the
	// day a market condition's hurdle was met (math.MaxInt until then,
	// conditions.go)
	grantN, startN int
	metN           int
	// expiry is the award's expiry after the changes dated by the ledger's
	// date; layered is set when a change touched it, and replaced for a
	// replacement award (modify.go).
	// typeIII is set under ASC 718, which books an improbable-to-probable
	// change at its date's fair value.
	expiry   time.Time
	layered  bool
	typeIII  bool
	replaced *replacedBy
	// asOfN is the last day whose events (and a condition's assessments)
	// are known.
	asOfN int
	// the cost centres the grant's service is rendered in, and when
	centres []string
	spans   []centreSpan

	// scratch for atView and the expense loop, shared by the ledgers one
	// worker of a close reads (one at a time; each worker sets it to its
	// own before it reads a ledger, inOrder): a buffer per ledger would
	// hold 48 bytes a tranche for the whole close.
	scratch *ledgerScratch
}

// ledgerScratch are the buffers a ledger's views are computed in, and
// the survival to vest they ask for again and again; and, on a worker of
// a close, the scratch of building a ledger and the blocks the lists a
// close keeps per grant are cut from.
type ledgerScratch struct {
	value, lia, comp []float64
	// s0, s1 and sInf hold the cost by tranche of the snapshots of a
	// grant's expense (expenseRun.grant).
	s0, s1, sInf []float64
	counts       []trancheCounts
	surv         survivals

	// events, given and tranches are newAwardLedger's and apply's.
	events     []pricedEvent
	given      []grants.Event
	tranches   []grants.Tranche
	perTranche []int

	fvs      slab.Slab[float64]
	measured slab.Slab[MeasuredAssumptions]
	names    slab.Slab[string]
	spans    slab.Slab[centreSpan]
	expenses slab.Slab[TrancheExpense]
	centres  slab.Slab[CostCenterAmount]
}

// survival is the cache of survival to vest of l's scratch.
func (l *awardLedger) survival() *survivals {
	if l.scratch == nil {
		l.scratch = &ledgerScratch{}
	}
	return &l.scratch.surv
}

// buffers are the scratch buffers sized for l's tranches.
func (l *awardLedger) buffers() *ledgerScratch {
	if l.scratch == nil {
		l.scratch = &ledgerScratch{}
	}
	sc, n := l.scratch, len(l.tr)
	if len(sc.value) < n {
		b := make([]float64, 6*n) // one block for the six
		sc.value, sc.lia, sc.comp, sc.s0, sc.s1, sc.sInf = b[:n:n], b[n:2*n:2*n], b[2*n:3*n:3*n], b[3*n:4*n:4*n], b[4*n:5*n:5*n], b[5*n:]
		sc.counts = make([]trancheCounts, n)
	}
	return sc
}

// onOrBefore reports a <= b by calendar day.
func dayOnOrBefore(a, b time.Time) bool { return dayNum(a) <= dayNum(b) }

// dn is the day number of t's calendar day (days since 1970-01-01), so
// that the inner loops compare and subtract integers. dayNum(b) − dayNum(a) equals
// valuation.Days(a, b).
func dayNum(t time.Time) int { return int(valuation.DayNumber(t)) }

// dayDate is the calendar day numbered n (dayNum), at midnight UTC.
func dayDate(n int) time.Time { return time.Unix(int64(n)*86400, 0).UTC() }

func shiftDays(t time.Time, n int) time.Time { return t.AddDate(0, 0, n) }

func (p Policy) normalized() (Policy, error) {
	if p.Attribution == "" {
		p.Attribution = grants.Graded
	}
	if p.Forfeitures == "" {
		p.Forfeitures = grants.Estimate
	}
	if p.Attribution != grants.Graded && p.Attribution != grants.StraightLine {
		return p, fmt.Errorf("attribution %q: want %q or %q", p.Attribution, grants.Graded, grants.StraightLine)
	}
	if p.Forfeitures != grants.Estimate && p.Forfeitures != grants.AsOccur {
		return p, fmt.Errorf("forfeitures %q: want %q or %q", p.Forfeitures, grants.Estimate, grants.AsOccur)
	}
	if p.Framework == "" {
		p.Framework = grants.ASC718
	}
	switch {
	case p.Framework != grants.ASC718 && p.Framework != grants.IFRS2:
		return p, fmt.Errorf("framework %q: want %q or %q", p.Framework, grants.ASC718, grants.IFRS2)
	case p.Framework == grants.IFRS2 && p.Attribution != grants.Graded:
		return p, fmt.Errorf("attribution %q: IFRS 2 treats each tranche as a separate award, so attribution must be %q (IFRS 2.IG11)", p.Attribution, grants.Graded)
	case p.Framework == grants.IFRS2 && p.Forfeitures != grants.Estimate:
		return p, fmt.Errorf("forfeitures %q: IFRS 2 recognizes the awards expected to vest, so forfeitures must be %q (IFRS 2.20)", p.Forfeitures, grants.Estimate)
	}
	if !(p.PreVestingForfeitureRate >= 0 && p.PreVestingForfeitureRate < 1) {
		return p, fmt.Errorf("pre-vesting forfeiture rate %v: want a share in [0, 1)", p.PreVestingForfeitureRate)
	}
	return p, nil
}

// ledger applies an award's events up to asOf to its tranches. sc is the
// scratch of the worker building it, which the ledger keeps (nil: its
// own).
func newAwardLedger(a *Award, pol Policy, asOf time.Time, sc *ledgerScratch) (*awardLedger, error) {
	g := a.Grant
	nt := a.tranches()
	if nt == 0 {
		return nil, fmt.Errorf("grant %s: no tranches", g.ID)
	}
	if sc == nil {
		sc = &ledgerScratch{}
	}
	l := &awardLedger{in: a, liability: g.IsLiability(), financing: g.IsFinancing(), start: ServiceStart(g), asOfN: dayNum(asOf), scratch: sc}
	if pol.Forfeitures == grants.Estimate {
		l.rate = pol.PreVestingForfeitureRate
	}
	l.tr, l.tranches = make([]trancheLedger, 0, nt), nt
	var prev *grants.Tranche
	for i := range nt {
		tc, fv := a.tranche(i)
		if tc.GrantID != "" && tc.GrantID != g.ID {
			return nil, fmt.Errorf("grant %s: tranche %d belongs to grant %s", g.ID, tc.Index, tc.GrantID)
		}
		if !(fv >= 0) || math.IsInf(fv, 0) {
			return nil, fmt.Errorf("grant %s tranche %d: fair value per share %v is not a finite non-negative number", g.ID, tc.Index, fv)
		}
		if tc.Shares < 0 {
			return nil, fmt.Errorf("grant %s tranche %d: %d shares", g.ID, tc.Index, tc.Shares)
		}
		if prev != nil && tc.VestDate.Before(prev.VestDate) {
			return nil, fmt.Errorf("grant %s: tranches not in vest-date order at tranche %d", g.ID, tc.Index)
		}
		if !g.ExpiryDate.IsZero() && tc.VestDate.After(g.ExpiryDate) {
			return nil, fmt.Errorf("grant %s tranche %d: vests %s, after expiry %s", g.ID, tc.Index, tc.VestDate.Format(time.DateOnly), g.ExpiryDate.Format(time.DateOnly))
		}
		terms := ledgerTerms{Index: int32(tc.Index), Shares: tc.Shares}
		t := trancheLedger{Tranche: terms, FairValue: fv, vestN: int32(dayNum(tc.VestDate)), of: int32(i)}
		t.endN, t.origN = t.vestN, t.vestN
		l.tr = append(l.tr, t)
		prev = tc
	}
	last, _ := a.tranche(nt - 1)
	l.last = last.VestDate
	l.grantN, l.startN, l.metN = dayNum(g.GrantDate), dayNum(l.start), math.MaxInt
	l.expiry, l.typeIII = g.ExpiryDate, pol.Framework != grants.IFRS2
	if a.Modified != nil {
		for _, ch := range a.Modified.Changes {
			if dayOnOrBefore(ch.Date, asOf) && !ch.After.ExpiryDate.IsZero() {
				l.expiry = ch.After.ExpiryDate
			}
		}
		l.cut(asOf)
	}
	l.applyCondition()
	if len(a.Remeasurements) > 0 && !l.liability {
		return nil, fmt.Errorf("grant %s: remeasurements given but it is not a liability-classified warrant", g.ID)
	}
	for _, r := range a.Remeasurements {
		if len(r.FairValue) != nt {
			return nil, fmt.Errorf("grant %s: remeasurement on %s has %d values for %d tranches", g.ID, r.Date.Format(time.DateOnly), len(r.FairValue), nt)
		}
		for i, v := range r.FairValue {
			if !(v >= 0) || math.IsInf(v, 0) {
				tc, _ := a.tranche(i)
				return nil, fmt.Errorf("grant %s tranche %d: remeasured fair value %v on %s", g.ID, tc.Index, v, r.Date.Format(time.DateOnly))
			}
		}
		l.remeas = append(l.remeas, r)
	}
	slices.SortStableFunc(l.remeas, func(a, b Remeasurement) int { return cmp.Compare(dayNum(a.Date), dayNum(b.Date)) })
	for _, r := range l.remeas {
		l.remeasN = append(l.remeasN, dayNum(r.Date))
	}

	evs := sc.events[:0]
	for k, e := range a.Events {
		if e.GrantID != "" && e.GrantID != g.ID {
			return nil, &EventError{GrantID: e.GrantID, Row: e.Row, Date: e.Date, Msg: fmt.Sprintf("listed under grant %s", g.ID)}
		}
		if dayOnOrBefore(e.Date, asOf) {
			pe := pricedEvent{Event: e}
			switch {
			case e.SharePrice != nil:
				pe.price = *e.SharePrice
			case k < len(a.EventPrices):
				pe.price = a.EventPrices[k]
			}
			evs = append(evs, pe)
		}
	}
	sc.events = evs
	l.setCostCenters(a, asOf)
	slices.SortStableFunc(evs, func(a, b pricedEvent) int { return cmp.Compare(dayNum(a.Date), dayNum(b.Date)) })
	if err := l.apply(evs); err != nil {
		return nil, err
	}
	if exp := l.expiry; !exp.IsZero() && dayOnOrBefore(exp, asOf) && g.Instrument != grants.RSU {
		for i := range l.tr {
			if n := l.tr[i].open(); n > 0 {
				l.tr[i].extra().moves = append(l.tr[i].moves(), move{date: exp, dayN: dayNum(exp), kind: grants.Expired, shares: n, vested: true})
			}
		}
	}
	if l.layered {
		l.layer(asOf)
	}
	return l, nil
}

// vestDate is the tranche's vest date (after the changes that moved it).
func (t *trancheLedger) vestDate() time.Time { return dayDate(int(t.vestN)) }

func (t *trancheLedger) open() int64 {
	n := t.Tranche.Shares
	for _, m := range t.moves() {
		n -= m.shares
	}
	return n
}

func (t *trancheLedger) vestedOn(d time.Time) bool { return int(t.vestN) <= dayNum(d) }

func (t *trancheLedger) vestedN(d int) bool { return int(t.vestN) <= d }

// expected is the expected share of tranche t's live shares at the end
// of day d that are still there at its vest date (see the package notes
// on forfeitures): rate over the service days still to come, from day d+1
// (or the service start) to the day before vesting; 1 once vested or with
// no forfeiture rate.
// sv computes valuation.SurvivalToVest.
func (l *awardLedger) expected(t *trancheLedger, d int, rate float64, sv *survivals) float64 {
	end := l.endAt(t, d)
	if end <= d || rate == 0 {
		return 1
	}
	return sv.at(rate, end-max(l.startN, d+1))
}

// pricedEvent is an event with the share price on its date.
type pricedEvent struct {
	grants.Event
	price float64
}

// apply checks the events (in date order) against the grant and gives
// each tranche its moves by grants.Allocate.
func (l *awardLedger) apply(pevs []pricedEvent) error {
	if len(pevs) == 0 {
		return nil // nothing to check or to give out
	}
	sc := l.scratch
	evs := sc.given[:0]
	for _, e := range pevs {
		evs = append(evs, e.Event)
	}
	sc.given = evs
	g := l.in.Grant
	fail := func(e grants.Event, format string, args ...any) error {
		return &EventError{GrantID: g.ID, Row: e.Row, Date: e.Date, Msg: fmt.Sprintf(format, args...)}
	}
	for _, e := range evs {
		switch {
		case e.Shares <= 0:
			return fail(e, "%s %d shares: want a positive number", e.Kind, e.Shares)
		case valuation.Days(g.GrantDate, e.Date) < 0:
			return fail(e, "%s before the grant date %s", e.Kind, g.GrantDate.Format(time.DateOnly))
		case !l.expiry.IsZero() && valuation.Days(l.expiry, e.Date) > 0:
			return fail(e, "%s after the expiry date %s", e.Kind, l.expiry.Format(time.DateOnly))
		}
		switch e.Kind {
		case grants.Forfeited, grants.Cancelled, grants.Exercised, grants.Expired:
		default:
			return fail(e, "unknown event %q", e.Kind)
		}
	}
	ts := sc.tranches[:0]
	for i := range l.tr {
		ts = append(ts, grants.Tranche{Index: int(l.tr[i].Tranche.Index), VestDate: l.tr[i].vestDate(), Shares: l.tr[i].Tranche.Shares})
	}
	sc.tranches = ts
	al := grants.Allocate(ts, evs)
	for _, tk := range al.Events {
		if tk.Short == 0 {
			continue
		}
		e := tk.Event
		if e.Kind == grants.Forfeited || e.Kind == grants.Cancelled {
			return fail(e, "%s %d shares but only %d are outstanding", e.Kind, e.Shares, tk.Unvested+tk.Vested)
		}
		return fail(e, "%s %d shares but only %d are vested and outstanding", e.Kind, e.Shares, tk.Vested)
	}
	// The moves go to their tranches in two blocks, one of the tranches'
	// trancheMore and one of the moves, each tranche's cut with its
	// capacity (block.take).
	per := sc.perTranche[:0]
	for range l.tr {
		per = append(per, 0)
	}
	sc.perTranche = per
	for _, m := range al.Moves {
		per[m.Tranche]++
	}
	withMoves := 0
	for i, n := range per {
		if n > 0 && l.tr[i].more == nil {
			withMoves++
		}
	}
	mores, moves := make([]trancheMore, withMoves), make([]move, len(al.Moves))
	for i, n := range per {
		if t := &l.tr[i]; n > 0 && t.more == nil {
			t.more, mores = &mores[0], mores[1:]
			t.more.moves, moves = moves[:0:n], moves[n:]
		}
	}
	for _, m := range al.Moves {
		t := &l.tr[m.Tranche]
		mv := move{date: m.Date, dayN: dayNum(m.Date), kind: m.Kind, shares: m.Shares, vested: m.Vested, price: pevs[m.Event].price, rowPrice: pevs[m.Event].SharePrice != nil}
		if e := pevs[m.Event].Event; e.Kind == grants.Cancelled && e.ReplacementGrantID != "" {
			mv.replaced, mv.by = true, changeKey{grant: g.ID, day: mv.dayN, replaced: true}
		}
		t.extra().moves = append(t.moves(), mv)
	}
	return nil
}

// trancheCounts are a tranche's shares by what has happened to them through
// the end of a day.
type trancheCounts struct {
	reversed    int64 // forfeited while unvested: cost reversed
	accelerated int64 // cancelled while unvested: cost recognized at once
	open        int64 // still outstanding
	exercised   int64
}

func (t *trancheLedger) countsAt(d time.Time) trancheCounts { return t.countsN(dayNum(d)) }

func (t *trancheLedger) countsN(d int) trancheCounts { return t.countsWhere(d, nil) }

// countsWhere counts the moves keep accepts, or with keep nil those on
// or before day d.
func (t *trancheLedger) countsWhere(d int, keep func(move) bool) trancheCounts {
	c := trancheCounts{open: t.Tranche.Shares}
	for _, m := range t.moves() {
		if keep == nil && m.dayN > d || keep != nil && !keep(m) {
			continue
		}
		c.open -= m.shares
		switch {
		case m.kind == grants.Forfeited && !m.vested:
			c.reversed += m.shares
		case m.kind == grants.Cancelled && !m.vested:
			c.accelerated += m.shares
		case m.kind == grants.Exercised:
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
// others at their expected share, at the forfeiture rate rate.
// Straight-line attribution runs from the service start to the day
// numbered endN.
func (l *awardLedger) attribute(pol Policy, value []float64, d, known, endN int, rate float64, out []float64) {
	if d < l.grantN {
		for i := range out {
			out[i] = 0
		}
		return
	}
	kd := min(d, known)
	o := l.outcome(d) // a performance condition's probable outcome
	sv := l.survival()
	q := func(i int) float64 { return l.expected(&l.tr[i], kd, rate, sv) * o }
	if pol.Attribution == grants.Graded {
		for i := range l.tr {
			out[i] = value[i] * q(i) * serviceFraction(l.startN, l.daysAt(&l.tr[i], d), d)
		}
		return
	}
	var total, floor, unvested float64
	for i := range l.tr {
		v := value[i] * q(i)
		total += v
		if l.endAt(&l.tr[i], d) <= d { // vested, the requisite service done
			floor += v
		} else {
			unvested += v
		}
	}
	cum := math.Max(total*serviceFraction(l.startN, endN-l.startN, d), floor)
	rest := cum - floor
	for i := range l.tr {
		v := value[i] * q(i)
		switch {
		case l.endAt(&l.tr[i], d) <= d:
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
	comp      []float64 // cumulative compensation cost by tranche (none for a financing warrant)
	liability float64   // warrant liability
	settled   float64   // cumulative liability reclassified to equity on exercise
	issued    float64   // a financing warrant's liability recognized at issue
}

func (s snapshot) compTotal() float64 {
	var t float64
	for _, v := range s.comp {
		t += v
	}
	return t
}

// fvChange is the cumulative change in fair value of a financing
// warrant's liability since its issue.
func (s snapshot) fvChange() float64 { return s.liability + s.settled - s.issued }

func (l *awardLedger) at(pol Policy, dt, knownt time.Time) snapshot {
	return l.atInto(pol, dt, knownt, make([]float64, len(l.tr)))
}

// atInto is at, writing the cumulative cost by tranche into comp; the
// other buffers are the ledger's own, reused from call to call.
func (l *awardLedger) atInto(pol Policy, dt, knownt time.Time, comp []float64) snapshot {
	return l.atView(pol, view{d: dayNum(dt), known: dayNum(knownt), rate: l.rate}, comp)
}

// view is a way of looking at an award: attribution through the end of
// day d, with the leavers known through day known, at the forfeiture
// rate rate, counting the moves keep accepts (nil: those on or before
// day d). The reconciliation to a prior close looks at an award in
// several views that differ in one of these at a time.
type view struct {
	d, known int
	rate     float64
	keep     func(move) bool
	// Changes of the award's terms (modify.go) dated on or after from are
	// left out (0: none), and so is the change skip.
	from int
	skip changeKey
}

// atView is the award's position in view v, the cumulative cost by
// tranche written into comp.
//
// An equity-classified award's cost is its grant-date fair value times the
// shares counted, attributed over service. A liability-classified one's
// is its liability (the latest fair value times the outstanding shares
// counted, attributed over service) plus what was reclassified to equity
// on exercise at the fair value of the exercise day. A financing warrant
// has no cost: its liability, if it is one, is the latest fair value times
// the outstanding warrants, in full from the issue date.
func (l *awardLedger) atView(pol Policy, v view, comp []float64) snapshot {
	if l.layered {
		return l.atLayered(pol, v, comp)
	}
	d, known := v.d, v.known
	n := len(l.tr)
	s := snapshot{comp: comp}
	sc := l.buffers()
	value, counts := sc.value[:n], sc.counts[:n]
	for i := range l.tr {
		counts[i] = l.tr[i].countsWhere(d, v.keep)
	}
	if l.financing {
		for i := range comp {
			comp[i] = 0
		}
		if !l.liability || d < l.grantN {
			return s
		}
		for i, t := range l.tr {
			s.issued += t.FairValue * float64(t.Tranche.Shares)
			s.liability += l.fairValueAt(i, d) * float64(counts[i].open)
			s.settled += l.settledN(i, v)
		}
		return s
	}
	endN := l.serviceEndN(counts, d)
	if !l.liability {
		for i := range l.tr {
			value[i] = l.tr[i].FairValue * float64(counts[i].live(l.tr[i].Tranche.Shares))
		}
		l.attribute(pol, value, d, known, endN, v.rate, s.comp)
		for i := range l.tr {
			s.comp[i] += l.tr[i].FairValue * float64(counts[i].accelerated)
		}
		return s
	}
	for i := range l.tr {
		value[i] = l.fairValueAt(i, d) * float64(counts[i].open)
	}
	lia := sc.lia[:n]
	l.attribute(pol, value, d, known, endN, v.rate, lia)
	for i := range l.tr {
		settled := l.settledN(i, v)
		s.comp[i] = lia[i] + settled
		s.liability += lia[i]
		s.settled += settled
	}
	return s
}

// settledN is what tranche i's exercises counted in view v (those keep
// accepts, or with keep nil those on or before day d) reclassified from
// the liability to equity: each at the fair value of its exercise day,
// remeasured then (IFRS 2.30; ASC 718-30-35-3 and ASC 815-40-35). The
// exercised shares leave the liability in the same view (countsWhere).
func (l *awardLedger) settledN(i int, v view) float64 {
	var x float64
	for _, m := range l.tr[i].moves() {
		if m.kind == grants.Exercised && (v.keep == nil && m.dayN <= v.d || v.keep != nil && v.keep(m)) {
			x += l.fairValueAt(i, m.dayN) * float64(m.shares)
		}
	}
	return x
}

// serviceEndN is the day number of the latest end of requisite service,
// as known at the end of day d, of a tranche with shares whose cost still
// counts (not forfeited or cancelled before vesting): where straight-line
// attribution ends. The end is the vest date unless a market condition
// sets a later one (trancheLedger.endAt). With no such tranche, the
// latest end of any.
func (l *awardLedger) serviceEndN(counts []trancheCounts, d int) int {
	end, any := 0, 0
	for i := range l.tr {
		e := l.endAt(&l.tr[i], d)
		any = max(any, e)
		if counts[i].live(l.tr[i].Tranche.Shares) > 0 {
			end = max(end, e)
		}
	}
	if end == 0 {
		return any
	}
	return end
}

// costs is the award's expected total compensation cost and its
// cumulative cost through day v.d, both in view v: the total is the
// cost once every tranche has vested, with the same moves and the same
// knowledge of leavers.
func (l *awardLedger) costs(pol Policy, v view) (cost, cum float64) {
	comp := l.buffers().comp[:len(l.tr)]
	cum = l.atView(pol, v, comp).compTotal()
	if v.keep == nil {
		d := v.d
		v.keep = func(m move) bool { return m.dayN <= d }
	}
	v.d = max(dayNum(l.last)+1, v.d)
	return l.atView(pol, v, comp).compTotal(), cum
}

func civilDay(t time.Time) time.Time {
	return time.Date(t.Year(), t.Month(), t.Day(), 0, 0, 0, 0, time.UTC)
}

// outstanding is, at the end of day d, the award's options or warrants
// outstanding, or its RSUs nonvested.
func (l *awardLedger) outstanding(d int) int64 {
	var n int64
	for i := range l.tr {
		t := &l.tr[i]
		if l.in.Grant.Instrument == grants.RSU && t.vestedN(d) {
			continue
		}
		n += t.countsN(d).open
	}
	return n
}

// eventsThrough are the award's events dated on or before end, in date
// order.
func (a *Award) eventsThrough(end time.Time) []grants.Event {
	n := 0
	for _, e := range a.Events {
		if dayOnOrBefore(e.Date, end) {
			n++
		}
	}
	if n == 0 {
		return nil
	}
	out := make([]grants.Event, 0, n)
	for _, e := range a.Events {
		if dayOnOrBefore(e.Date, end) {
			out = append(out, e)
		}
	}
	slices.SortStableFunc(out, func(a, b grants.Event) int { return cmp.Compare(dayNum(a.Date), dayNum(b.Date)) })
	return out
}
