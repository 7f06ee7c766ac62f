package grants

import (
	"fmt"
	"sort"
	"strconv"
	"time"

	"grantworth/valuation"
)

// Modification is one row of the Modifications sheet: a change, on Date,
// to the terms of a grant's outstanding shares (ASC 718-20-35-3; IFRS
// 2.26-27). A nil or zero field leaves that term as it was.
type Modification struct {
	GrantID string
	Date    time.Time

	NewStrike           *float64
	NewExpiryDate       time.Time
	NewVestMonths       *int // the vesting period, counted from vest_start as on the Grants sheet
	NewCliffMonths      *int
	NewExitRate         *float64 // new_post_vesting_exit_rate
	NewExerciseMultiple *float64

	// Shares is how many of the outstanding shares are modified (taken
	// from every tranche in proportion to its outstanding shares); 0 means
	// all of them.
	Shares int64
	Note   string

	Row  int            // 1-based row on the Modifications sheet
	Refs map[string]Ref // by column key
}

// ChangesVesting reports whether m changes when shares vest.
func (m *Modification) ChangesVesting() bool {
	return m.NewVestMonths != nil || m.NewCliffMonths != nil
}

// changesSomething reports whether m names any new term.
func (m *Modification) changesSomething() bool {
	return m.NewStrike != nil || !m.NewExpiryDate.IsZero() || m.ChangesVesting() || m.NewExitRate != nil || m.NewExerciseMultiple != nil
}

// Terms are the terms of a grant that a modification may change, as they
// stand at some date: the grant row's, then each modification's in turn.
// A nil ExitRate or ExerciseMultiple takes the Assumptions in force at
// the date it is measured.
type Terms struct {
	Strike                  float64
	ExpiryDate              time.Time
	VestMonths, CliffMonths int
	ExitRate                *float64
	ExerciseMultiple        *float64
}

// termsOf are the terms a grant was granted on.
func termsOf(g Grant) Terms {
	return Terms{Strike: g.Strike, ExpiryDate: g.ExpiryDate, VestMonths: g.VestMonths, CliffMonths: min(g.CliffMonths, g.VestMonths),
		ExitRate: g.PostVestingExitRate, ExerciseMultiple: g.ExerciseMultiple}
}

// apply is t with m's changes.
func (t Terms) apply(m *Modification) Terms {
	if m.NewStrike != nil {
		t.Strike = *m.NewStrike
	}
	if !m.NewExpiryDate.IsZero() {
		t.ExpiryDate = m.NewExpiryDate
	}
	if m.NewVestMonths != nil {
		t.VestMonths = *m.NewVestMonths
	}
	if m.NewCliffMonths != nil {
		t.CliffMonths = *m.NewCliffMonths
	}
	t.CliffMonths = min(t.CliffMonths, t.VestMonths)
	if m.NewExitRate != nil {
		t.ExitRate = m.NewExitRate
	}
	if m.NewExerciseMultiple != nil {
		t.ExerciseMultiple = m.NewExerciseMultiple
	}
	return t
}

// Change is what one modification of a grant, or the cancellation of some
// of its shares with a concurrent replacement award (ASC 718-20-35-8;
// IFRS 2.28(c)), does to it on its date: the terms before and after, and
// per part of the grant (see Split) the shares it touches. Exactly one of
// Modification and Cancellation is set.
type Change struct {
	GrantID      string
	Date         time.Time
	Modification *Modification // a row of the Modifications sheet
	Cancellation *Event        // a cancelled event with a replacement_grant_id
	Before       Terms
	After        Terms // Before for a cancellation
	// Partial is set when a modification names fewer shares than are
	// outstanding.
	Partial bool
	// Leaves is set when the holder leaves on the date (a forfeited event
	// that day): under the terms before, the leaver's vested options are
	// exercised at once if in the money, else lapse, as the lattice's exit
	// does; the terms after (a new expiry, an exit rate) say how long the
	// leaver may hold them.
	Leaves bool
	Parts  []ChangedPart // every part of the grant, in Split.Parts order
}

// ChangedPart is one part of a grant at a Change.
type ChangedPart struct {
	// VestBefore and VestAfter are the part's vest date under the terms
	// before and after (the same unless the vesting changed). A part
	// vested on the date stays as it vested.
	VestBefore, VestAfter time.Time
	// Outstanding are its shares outstanding at the start of the date
	// (before that day's events), Shares those the change touches (the
	// shares modified, or cancelled and replaced), and Left those still
	// outstanding at the end of the day.
	Outstanding, Shares, Left int64
	// Improbable are the shares of Shares that were not expected to vest
	// under the terms before and vest because of the change: unvested
	// under the terms before, vested on the date under those after, and
	// the holder leaves that day (a forfeited event on the date). Such an
	// improbable-to-probable change (ASC 718-20-55-116, Type III) is
	// accounted at the fair value on the date.
	Improbable int64
}

// Vested reports whether the part had vested on the change's date d,
// under the terms before (a part is vested on its vest day).
func (p ChangedPart) Vested(d time.Time) bool { return !p.VestBefore.After(d) }

// Part is a run of a grant's shares that vest together under the grant's
// terms and under every change of them: a whole tranche, unless a change
// of vesting cut it. Shares are ranked in vest-date order.
type Part struct {
	Tranche int   // 0-based index of its tranche in Schedule.Tranches
	Index   int   // that tranche's Index
	Shares  int64 // as granted
	// Vest is the tranche's vest date as granted, and Final the part's
	// after every change of the grant.
	Vest, Final time.Time
}

// Split is a grant cut into its parts, with its changes.
type Split struct {
	Parts   []Part
	Changes []Change
}

// Replacement is the cancellation of grant Cancelled's shares with a
// concurrent replacement award, grant ReplacementID.
type Replacement struct {
	Cancelled, ReplacementID string
	Event                    Event
}

// ModificationsOf are the rows of the Modifications sheet for grant id, in
// date order.
func (s *Schedule) ModificationsOf(id string) []*Modification {
	var out []*Modification
	for i := range s.Modifications {
		if s.Modifications[i].GrantID == id {
			out = append(out, &s.Modifications[i])
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Date.Before(out[j].Date) })
	return out
}

// ReplacedBy is the cancellation that grant id replaces, if it is a
// replacement award.
func (s *Schedule) ReplacedBy(id string) (Replacement, bool) {
	for _, e := range s.Events {
		if e.ReplacementGrantID == id && e.Kind == Cancelled {
			return Replacement{Cancelled: e.GrantID, ReplacementID: id, Event: e}, true
		}
	}
	return Replacement{}, false
}

// Expiry is the grant's expiry date after every modification of it.
func (s *Schedule) Expiry(g Grant) time.Time {
	e := g.ExpiryDate
	for _, m := range s.ModificationsOf(g.ID) {
		if !m.NewExpiryDate.IsZero() {
			e = m.NewExpiryDate
		}
	}
	return e
}

// changeRefs are g's modifications and its cancellations with a
// replacement, in date order (a cancellation after a modification of the
// same day).
type step struct {
	mod *Modification
	can *Event
}

func (st step) date() time.Time {
	if st.mod != nil {
		return st.mod.Date
	}
	return st.can.Date
}

func (s *Schedule) steps(g Grant) []step {
	var out []step
	for _, m := range s.ModificationsOf(g.ID) {
		out = append(out, step{mod: m})
	}
	// g's events, by the index's positions when it is fresh (a scan of
	// the Events sheet per grant made valuing 100,000 grants with 16,000
	// events cost 9 s), in sheet order either way.
	replaces := func(e *Event) bool {
		return e.GrantID == g.ID && e.Kind == Cancelled && e.ReplacementGrantID != ""
	}
	if ix := s.fresh(); ix != nil {
		if ix.replacements {
			for _, i := range ix.eventsOf[g.ID] {
				if e := &s.Events[i]; replaces(e) {
					out = append(out, step{can: e})
				}
			}
		}
	} else {
		for i := range s.Events {
			if e := &s.Events[i]; replaces(e) {
				out = append(out, step{can: e})
			}
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].date().Before(out[j].date()) })
	return out
}

// Changes works out what each modification of grant g, and each
// cancellation of its shares with a replacement award, does to it (see
// SplitOf); they come in date order.
func (s *Schedule) Changes(g Grant) ([]Change, error) {
	sp, err := s.SplitOf(g)
	if err != nil || sp == nil {
		return nil, err
	}
	return sp.Changes, nil
}

// SplitOf cuts grant g into parts and works out its changes, in date
// order: the terms before and after each, and per part the vest dates
// before and after, the shares outstanding and touched, and the shares
// that vest only because of the change (Type III). A grant without
// changes gives nil.
//
// The shares a modification touches are those outstanding at the start
// of its day (before that day's events): all of them, or the number it
// names, taken from every part in proportion to its outstanding shares
// (the largest remainders get the odd shares). Vested shares stay as they
// vested. A new vest_months or cliff_months gives the vesting the Grants
// columns would with those values (the same vest_start and
// vest_every_months) to the shares still unvested: ranked in vest-date
// order, the share of rank r vests on the first date by which that
// vesting has vested more than r shares, or on the modification date if
// that date is already past. A tranche whose shares then vest on several
// dates is cut into parts, one per date. A cancellation with a
// replacement touches the shares the cancelled event takes (Allocate, on
// the parts).
//
// The error, a *CellError naming the row, says why a change cannot be
// applied; Validate reports the same problems.
func (s *Schedule) SplitOf(g Grant) (*Split, error) {
	steps := s.steps(g)
	if len(steps) == 0 {
		return nil, nil
	}
	ts := s.tranchesBeforeEvents(g)
	fail := func(st step, key string, err error, format string, args ...any) error {
		sheet, row, refs := SheetModifications, 0, map[string]Ref(nil)
		value := ""
		if m := st.mod; m != nil {
			row, refs = m.Row, m.Refs
			switch key {
			case "date":
				value = isoDay(m.Date)
			case "shares":
				value = strconv.FormatInt(m.Shares, 10)
			case "new_vest_months", "new_cliff_months":
				if p := map[string]*int{"new_vest_months": m.NewVestMonths, "new_cliff_months": m.NewCliffMonths}[key]; p != nil {
					value = strconv.Itoa(*p)
				}
			case "new_expiry_date":
				value = isoDay(m.NewExpiryDate)
			}
		} else {
			sheet, row = SheetEvents, st.can.Row
			switch key {
			case "date":
				value = isoDay(st.can.Date)
			case "shares":
				value = strconv.FormatInt(st.can.Shares, 10)
			}
		}
		r := s.cell(sheet, key, row, refs)
		return &CellError{Sheet: r.Sheet, Cell: r.Cell, Column: key, Value: value, Err: err, Msg: fmt.Sprintf(format, args...)}
	}

	// The vesting as a function of rank, before the first step and after
	// each: spans[k+1] holds the vest dates after step k.
	var bounds []int64 // tranche boundaries: tranche i holds ranks [bounds[i], bounds[i+1])
	var first []vestSpan
	var r int64
	for _, t := range ts {
		bounds = append(bounds, r)
		first = append(first, vestSpan{r, t.VestDate})
		r += t.Shares
	}
	bounds = append(bounds, r)
	spans := [][]vestSpan{first}
	terms := termsOf(g)
	termsAt := []Terms{terms}
	for _, st := range steps {
		cur := spans[len(spans)-1]
		if m := st.mod; m != nil {
			if m.ChangesVesting() {
				if rows := s.vestRows(g.ID); len(rows) > 0 {
					return nil, fail(st, changedVestingKey(m), ErrInconsistent, "grant %s vests on the Vesting sheet's rows, which a new vest_months or cliff_months cannot change; give its new vesting as a grant of its own", g.ID)
				}
				cur = revest(g, cur, r, terms.apply(m), m.Date)
			}
			terms = terms.apply(m)
		}
		spans = append(spans, cur)
		termsAt = append(termsAt, terms)
	}

	// The parts: every rank where a tranche or any step's vest date starts.
	cutAt := map[int64]bool{}
	for _, sps := range spans {
		for _, x := range sps {
			cutAt[x.from] = true
		}
	}
	var cuts []int64
	for x := range cutAt {
		if x < r {
			cuts = append(cuts, x)
		}
	}
	sort.Slice(cuts, func(i, j int) bool { return cuts[i] < cuts[j] })
	sp := &Split{}
	for j, a := range cuts {
		b := r
		if j+1 < len(cuts) {
			b = cuts[j+1]
		}
		i := sort.Search(len(ts), func(i int) bool { return bounds[i+1] > a })
		sp.Parts = append(sp.Parts, Part{Tranche: i, Index: ts[i].Index, Shares: b - a, Vest: ts[i].VestDate, Final: dateAt(spans[len(spans)-1], a)})
	}
	parts := make([]Tranche, len(sp.Parts))
	for j, p := range sp.Parts {
		parts[j] = Tranche{GrantID: g.ID, Index: j + 1, VestDate: p.Final, Shares: p.Shares}
	}

	// What each step touches.
	evs := s.EventsOf(g.ID)
	var partial *Modification
	for k, st := range steps {
		at := st.date()
		ch := Change{GrantID: g.ID, Date: at, Modification: st.mod, Cancellation: st.can, Before: termsAt[k], After: termsAt[k+1]}
		if partial != nil {
			return nil, fail(st, "date", ErrInconsistent, "grant %s was modified in part on %s (%s): a later change cannot say which of its shares it touches; record the grant as two grants instead",
				g.ID, isoDay(partial.Date), s.cell(SheetModifications, "shares", partial.Row, partial.Refs))
		}
		if at.Before(g.GrantDate) {
			return nil, fail(st, "date", ErrRange, "is before the grant date %s of grant %s", isoDay(g.GrantDate), g.ID)
		}
		if g.Instrument != RSU && !at.Before(ch.Before.ExpiryDate) {
			return nil, fail(st, "date", ErrRange, "is on or after the expiry %s of grant %s: nothing is left to change", isoDay(ch.Before.ExpiryDate), g.ID)
		}
		var before, through []Event
		for _, e := range evs {
			if e.Date.Before(at) {
				before = append(before, e)
			}
			if !e.Date.After(at) {
				through = append(through, e)
			}
		}
		open := make([]int64, len(parts))
		for j, p := range parts {
			open[j] = p.Shares
		}
		for _, mv := range Allocate(parts, before).Moves {
			open[mv.Tranche] -= mv.Shares
		}
		var total int64
		for _, n := range open {
			total += n
		}
		ch.Parts = make([]ChangedPart, len(parts))
		for j := range parts {
			a := cuts[j]
			ch.Parts[j] = ChangedPart{VestBefore: dateAt(spans[k], a), VestAfter: dateAt(spans[k+1], a), Outstanding: open[j]}
		}
		if total == 0 {
			key := "date"
			if st.can != nil {
				key = "shares"
			}
			return nil, fail(st, key, ErrRange, "grant %s has no shares outstanding on %s", g.ID, isoDay(at))
		}
		if st.can != nil {
			al := Allocate(parts, through)
			for j := range ch.Parts {
				ch.Parts[j].Left = open[j]
			}
			for _, mv := range al.Moves {
				if through[mv.Event] == *st.can {
					ch.Parts[mv.Tranche].Shares += mv.Shares
				}
				if !mv.Date.Before(at) {
					ch.Parts[mv.Tranche].Left -= mv.Shares
				}
			}
			sp.Changes = append(sp.Changes, ch)
			continue
		}
		m := st.mod
		touched := open
		if m.Shares > 0 && m.Shares != total {
			if m.Shares > total {
				return nil, fail(st, "shares", ErrRange, "modifies %d shares, but grant %s has %d outstanding on %s", m.Shares, g.ID, total, isoDay(at))
			}
			if m.ChangesVesting() {
				return nil, fail(st, "shares", ErrInconsistent, "a change of vesting applies to all %d outstanding shares of grant %s; leave shares empty, or record the shares whose vesting changes as a grant of their own", total, g.ID)
			}
			touched = ProRata(m.Shares, open)
			ch.Partial, partial = true, m
		}
		leaves := false
		for _, e := range evs {
			if e.Kind == Forfeited && valuation.Days(e.Date, at) == 0 {
				leaves = true
			}
		}
		ch.Leaves = leaves
		left := append([]int64(nil), open...) // outstanding at the end of the day
		for _, mv := range Allocate(parts, through).Moves {
			if !mv.Date.Before(at) {
				left[mv.Tranche] -= mv.Shares
			}
		}
		for j := range ch.Parts {
			p := &ch.Parts[j]
			p.Shares, p.Left = touched[j], left[j]
			if leaves && p.VestBefore.After(at) && !p.VestAfter.After(at) {
				p.Improbable = p.Shares
			}
			if g.Instrument != RSU && left[j] > 0 && p.VestAfter.After(ch.After.ExpiryDate) {
				key := "new_expiry_date"
				if m.NewExpiryDate.IsZero() {
					key = changedVestingKey(m)
				}
				return nil, fail(st, key, ErrRange, "shares of tranche %d of grant %s would vest on %s, after the expiry %s", sp.Parts[j].Index, g.ID, isoDay(p.VestAfter), isoDay(ch.After.ExpiryDate))
			}
		}
		sp.Changes = append(sp.Changes, ch)
	}
	return sp, nil
}

// vestSpan gives the vest date of the ranks from from up to the next one's.
type vestSpan struct {
	from int64
	date time.Time
}

// dateAt is the vest date of rank x.
func dateAt(sps []vestSpan, x int64) time.Time {
	i := sort.Search(len(sps), func(i int) bool { return sps[i].from > x }) - 1
	return sps[max(i, 0)].date
}

func changedVestingKey(m *Modification) string {
	if m.NewVestMonths != nil {
		return "new_vest_months"
	}
	return "new_cliff_months"
}

// revest is the vesting sps (of total ranks) after a change on date at to
// the vesting of terms t: ranks vested on at keep their dates; the share
// of rank x still unvested vests on the first date of t's vesting (from
// g's vest_start, every g's vest_every_months) by which more than x shares
// have vested, and not before at.
func revest(g Grant, sps []vestSpan, total int64, t Terms, at time.Time) []vestSpan {
	vm, cliff := max(t.VestMonths, 0), min(max(t.CliffMonths, 0), max(t.VestMonths, 0))
	every := max(g.VestEvery, 1)
	var months []int
	if vm > 0 {
		if cliff > 0 {
			months = append(months, cliff)
		}
		for m := every; m < vm; m += every {
			if m > cliff {
				months = append(months, m)
			}
		}
		months = append(months, vm)
	}
	// The new vesting as spans: ranks below counts[k] vest by months[k].
	var fresh []vestSpan
	var prev int64
	for _, m := range months {
		c := floorMulDiv(total, int64(m), int64(vm))
		if c > prev {
			d := AddMonths(g.VestStart, m)
			if !d.After(at) {
				d = at
			}
			fresh = append(fresh, vestSpan{prev, d})
			prev = c
		}
	}
	if len(fresh) == 0 {
		fresh = []vestSpan{{0, at}}
	}
	var out []vestSpan
	add := func(x vestSpan) {
		if n := len(out); n > 0 && out[n-1].date.Equal(x.date) {
			return
		}
		out = append(out, x)
	}
	for i, x := range sps {
		end := total
		if i+1 < len(sps) {
			end = sps[i+1].from
		}
		if !x.date.After(at) {
			add(x)
			continue
		}
		add(vestSpan{x.from, dateAt(fresh, x.from)})
		for _, f := range fresh {
			if f.from > x.from && f.from < end {
				add(f)
			}
		}
	}
	return out
}

// allocate is Allocate for grant g's tranches ts (as granted, in
// vest-date order) and events evs, after every change of g: the events are
// given to the parts of SplitOf, each vested from its final vest date, and
// each move names the tranche its part belongs to. (A change of vesting
// only ever moves shares still unvested, so a part's vested state on any
// day before the change is the same under either date.)
func (s *Schedule) allocate(g Grant, ts []Tranche, evs []Event) Allocation {
	if len(s.Modifications) == 0 && !s.hasReplacements() {
		return Allocate(ts, evs)
	}
	sp, err := s.SplitOf(g)
	if err != nil || sp == nil {
		return Allocate(ts, evs)
	}
	parts := make([]Tranche, len(sp.Parts))
	for j, p := range sp.Parts {
		parts[j] = Tranche{GrantID: g.ID, Index: j + 1, VestDate: p.Final, Shares: p.Shares}
	}
	al := Allocate(parts, evs)
	for k := range al.Moves {
		al.Moves[k].Tranche = sp.Parts[al.Moves[k].Tranche].Tranche
	}
	return al
}

// hasReplacements reports whether any event names a replacement award.
// It is asked once per grant: the index answers it without a scan of the
// Events sheet (which made reading 100,000 grants with 16,000 events take
// 3.3 s).
func (s *Schedule) hasReplacements() bool {
	if ix := s.fresh(); ix != nil {
		return ix.replacements
	}
	for _, e := range s.Events {
		if e.ReplacementGrantID != "" {
			return true
		}
	}
	return false
}

// modificationRow reads one row of the Modifications sheet.
func (t *tableReader) modificationRow(c *rowCtx) {
	m := Modification{Row: c.row}
	m.GrantID, _ = c.required("grant_id")
	m.Date, _ = c.date("date", true)
	m.NewStrike = c.ptr("new_strike", false)
	m.NewExpiryDate, _ = c.date("new_expiry_date", false)
	if _, ok := c.text("new_vest_months"); ok {
		n := c.months("new_vest_months")
		m.NewVestMonths = &n
	}
	if _, ok := c.text("new_cliff_months"); ok {
		n := c.months("new_cliff_months")
		m.NewCliffMonths = &n
	}
	m.NewExitRate = c.ptr("new_post_vesting_exit_rate", true)
	m.NewExerciseMultiple = c.ptr("new_exercise_multiple", false)
	m.Shares, _ = c.integer("shares", false)
	m.Note, _ = c.text("note")
	m.Refs = c.refs
	if !c.keep(m.GrantID) {
		return
	}
	t.s.Modifications = append(t.s.Modifications, m)
}

// modificationRows are the Modifications sheet's rows of s, as cells.
func modificationRows(s *Schedule, n int, put func(row []any, k string, v any)) [][]any {
	var rows [][]any
	for _, m := range s.Modifications {
		row := make([]any, n)
		put(row, "grant_id", m.GrantID)
		put(row, "date", m.Date)
		if m.NewStrike != nil {
			put(row, "new_strike", *m.NewStrike)
		}
		if !m.NewExpiryDate.IsZero() {
			put(row, "new_expiry_date", m.NewExpiryDate)
		}
		if m.NewVestMonths != nil {
			put(row, "new_vest_months", int64(*m.NewVestMonths))
		}
		if m.NewCliffMonths != nil {
			put(row, "new_cliff_months", int64(*m.NewCliffMonths))
		}
		if m.NewExitRate != nil {
			put(row, "new_post_vesting_exit_rate", *m.NewExitRate)
		}
		if m.NewExerciseMultiple != nil {
			put(row, "new_exercise_multiple", *m.NewExerciseMultiple)
		}
		if m.Shares > 0 {
			put(row, "shares", m.Shares)
		}
		if m.Note != "" {
			put(row, "note", m.Note)
		}
		rows = append(rows, row)
	}
	return rows
}

// modifications checks the Modifications sheet and the cancellations with
// a replacement award.
func (v *validator) modifications() {
	s := v.s
	seen := map[string]int{}
	for i := range s.Modifications {
		m := &s.Modifications[i]
		ref := func(k string) Ref { return s.cell(SheetModifications, k, m.Row, m.Refs) }
		g, ok := v.grant(m.GrantID)
		if !ok {
			if !v.skip[m.GrantID] {
				v.rep.errf(ref("grant_id"), "grant_id", m.GrantID, ErrUnknown, "is not a grant_id of the Grants sheet")
			}
			continue
		}
		key := m.GrantID + "|" + isoDay(m.Date)
		if r, dup := seen[key]; dup {
			v.rep.errf(ref("date"), "date", isoDay(m.Date), ErrDuplicate, "grant %s is also modified on this date by row %d (%s): put both changes on one row", m.GrantID, r, s.cell(SheetModifications, "date", r, nil).Cell)
		} else {
			seen[key] = m.Row
		}
		if !m.changesSomething() {
			v.rep.errf(ref("new_strike"), "new_strike", "", ErrRequired, "the row changes nothing: give at least one of new_strike, new_expiry_date, new_vest_months, new_cliff_months, new_post_vesting_exit_rate, new_exercise_multiple")
		}
		if g.Instrument == Warrant && g.Classification == Liability {
			v.rep.errf(ref("grant_id"), "grant_id", m.GrantID, ErrInconsistent, "is a liability-classified warrant, remeasured at fair value every period: a change of its terms is not booked as a modification by grantworth; give its new terms to the valuation that remeasures it")
			continue
		}
		if g.Condition != "" {
			v.rep.errf(ref("grant_id"), "grant_id", m.GrantID, ErrInconsistent, "vests on condition %s besides service: grantworth does not yet book a change of the terms of such an award; book it outside grantworth and leave its row out", g.Condition)
			continue
		}
		if m.NewStrike != nil {
			switch {
			case g.Instrument == RSU:
				v.rep.errf(ref("new_strike"), "new_strike", num(*m.NewStrike), ErrInconsistent, "grant %s is an RSU, which has no strike", g.ID)
			case *m.NewStrike < 0:
				v.rep.errf(ref("new_strike"), "new_strike", num(*m.NewStrike), ErrRange, "must be zero or more")
			}
		}
		if !m.NewExpiryDate.IsZero() {
			switch {
			case g.Instrument == RSU:
				v.rep.errf(ref("new_expiry_date"), "new_expiry_date", isoDay(m.NewExpiryDate), ErrInconsistent, "grant %s is an RSU, which has no expiry", g.ID)
			case !m.NewExpiryDate.After(m.Date):
				v.rep.errf(ref("new_expiry_date"), "new_expiry_date", isoDay(m.NewExpiryDate), ErrRange, "must be after the modification date %s", isoDay(m.Date))
			}
		}
		if m.NewVestMonths != nil && m.NewCliffMonths != nil && *m.NewCliffMonths > *m.NewVestMonths {
			v.rep.errf(ref("new_cliff_months"), "new_cliff_months", strconv.Itoa(*m.NewCliffMonths), ErrRange, "is longer than new_vest_months %d (%s)", *m.NewVestMonths, ref("new_vest_months").Cell)
		}
		if x := m.NewExitRate; x != nil && (*x < 0 || *x >= 1) {
			v.rep.errf(ref("new_post_vesting_exit_rate"), "new_post_vesting_exit_rate", num(*x), ErrRange, "must be at least 0 and below 1 (100%%): the annual share of vested holders who leave")
		}
		if x := m.NewExerciseMultiple; x != nil && (*x != 0 && *x <= 1 || *x < 0 || *x > 100) {
			v.rep.errf(ref("new_exercise_multiple"), "new_exercise_multiple", num(*x), ErrRange, "must be 0 (no such rule) or above 1, up to 100 times the strike")
		}
		if g.Instrument == RSU && (m.NewExitRate != nil || m.NewExerciseMultiple != nil) {
			key := "new_post_vesting_exit_rate"
			if m.NewExitRate == nil {
				key = "new_exercise_multiple"
			}
			v.rep.errf(ref(key), key, "", ErrInconsistent, "grant %s is an RSU: it is delivered at vesting, so no exercise behaviour applies", g.ID)
		}
		if m.Shares < 0 {
			v.rep.errf(ref("shares"), "shares", strconv.FormatInt(m.Shares, 10), ErrRange, "must be more than zero (or empty for all outstanding shares)")
		}
		if vd := s.Company.ValuationDate; !vd.IsZero() && m.Date.After(vd) {
			v.rep.warnf(ref("date"), "date", isoDay(m.Date), ErrRange, "is after the valuation date %s; the modification is left out of this close", isoDay(vd))
		}
	}
	byReplacement := map[string]int{}
	for _, e := range s.Events {
		if e.ReplacementGrantID == "" {
			continue
		}
		ref := func(k string) Ref { return s.cell(SheetEvents, k, e.Row, nil) }
		rid := e.ReplacementGrantID
		if e.Kind != Cancelled {
			v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrInconsistent, "names a replacement award, which only a cancelled event may have (this one is %s)", e.Kind)
			continue
		}
		r, ok := v.grant(rid)
		if !ok {
			if !v.skip[rid] {
				v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrUnknown, "is not a grant_id of the Grants sheet")
			}
			continue
		}
		if rid == e.GrantID {
			v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrInconsistent, "a grant cannot replace itself")
			continue
		}
		if prev, dup := byReplacement[rid]; dup {
			v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrDuplicate, "grant %s already replaces the cancellation of row %d (%s): a replacement award replaces one cancellation", rid, prev, s.cell(SheetEvents, "replacement_grant_id", prev, nil).Cell)
			continue
		}
		byReplacement[rid] = e.Row
		if valuation.Days(r.GrantDate, e.Date) != 0 {
			v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrInconsistent, "is granted on %s (%s), not on the cancellation date %s: a replacement is granted with the cancellation (ASC 718-20-35-8; IFRS 2.28(c)); a later grant is a new award, and the cancellation then recognizes the cancelled shares' remaining cost at once",
				isoDay(r.GrantDate), s.cell(SheetGrants, "grant_date", r.Row, r.Refs), isoDay(e.Date))
		}
		if r.Instrument == Warrant && r.Classification == Liability {
			v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrInconsistent, "grant %s is a liability-classified warrant; a replacement by one is not booked as a modification by grantworth", r.ID)
		}
		if c, ok := v.grant(e.GrantID); ok && c.Instrument == Warrant && c.Classification == Liability {
			v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrInconsistent, "grant %s is a liability-classified warrant, remeasured at fair value; its cancellation with a replacement is not booked as a modification by grantworth", c.ID)
		}
		if c, ok := v.grant(e.GrantID); ok && (c.Condition != "" || r.Condition != "") {
			v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrInconsistent, "grant %s or %s vests on a condition besides service: grantworth does not yet book such an exchange as a modification", c.ID, r.ID)
		}
		if _, ok := s.ReplacedBy(e.GrantID); ok {
			v.rep.errf(ref("replacement_grant_id"), "replacement_grant_id", rid, ErrInconsistent, "grant %s is itself a replacement award; a replacement of a replacement is not booked by grantworth", e.GrantID)
		}
	}
	// What each change does, grant by grant.
	done := map[string]bool{}
	check := func(id string) {
		if done[id] || v.skip[id] {
			return
		}
		done[id] = true
		g, ok := v.grant(id)
		if !ok || g.Shares <= 0 || g.GrantDate.IsZero() || (g.Instrument == Warrant && g.Classification == Liability) {
			return
		}
		chs, err := s.Changes(g)
		if err != nil {
			if ce, ok := err.(*CellError); ok {
				v.rep.addErr(ce)
			}
			return
		}
		for _, ch := range chs {
			v.departureHint(g, ch)
			v.leaverWindowHint(g, ch)
		}
	}
	for _, m := range s.Modifications {
		check(m.GrantID)
	}
	for _, e := range s.Events {
		if e.ReplacementGrantID != "" {
			check(e.GrantID)
		}
	}
}

// HintDays is how soon after a change of vesting a recorded departure
// draws a warning that the change may have been improbable to probable.
const HintDays = 90

// departureHint warns when a change accelerates vesting and the holder
// leaves soon after, not on the day: if the departure was expected when
// the change was made, the shares it vests were not expected to vest, and
// the change should be dated on the day the holder leaves.
func (v *validator) departureHint(g Grant, ch Change) {
	m := ch.Modification
	if m == nil || !m.ChangesVesting() {
		return
	}
	accelerated := false
	for _, t := range ch.Parts {
		if t.Shares > 0 && t.VestAfter.Before(t.VestBefore) {
			accelerated = true
		}
	}
	if !accelerated {
		return
	}
	for _, e := range v.s.EventsOf(g.ID) {
		if d := valuation.Days(ch.Date, e.Date); e.Kind == Forfeited && d > 0 && d <= HintDays {
			v.rep.warnf(v.s.cell(SheetModifications, "date", m.Row, m.Refs), "date", isoDay(m.Date), ErrInconsistent,
				"accelerates vesting of grant %s, whose holder leaves %d days later (%s): if the departure was expected then, the shares it vests were not expected to vest (improbable to probable, ASC 718-20-55-116); date the modification on the departure day so that it is accounted at its fair value on that day",
				g.ID, d, v.s.cell(SheetEvents, "date", e.Row, nil))
			return
		}
	}
}

// leaverWindowHint warns when an option's holder leaves on the date of a
// change that sets no new expiry: the award after the change is then
// valued as if its holder stayed to the contractual expiry, while a
// leaver's options last only the exercise window after leaving.
func (v *validator) leaverWindowHint(g Grant, ch Change) {
	m := ch.Modification
	if m == nil || !ch.Leaves || g.Instrument == RSU || !m.NewExpiryDate.IsZero() {
		return
	}
	var kept int64
	for _, p := range ch.Parts {
		if p.Shares > 0 && !p.VestAfter.After(ch.Date) {
			kept += p.Shares
		}
	}
	if kept == 0 {
		return
	}
	v.rep.warnf(v.s.cell(SheetModifications, "new_expiry_date", m.Row, m.Refs), "new_expiry_date", "", ErrInconsistent,
		"the holder of grant %s leaves on %s (a forfeited event that day) and keeps %d vested shares, but the change sets no new expiry: the award after it is valued as if the holder stayed to %s; put the last day of exercise after leaving here (and, if the leaver holds to it, a post-vesting exit rate of 0)",
		g.ID, isoDay(ch.Date), kept, isoDay(ch.After.ExpiryDate))
}

// SheetModifications is the canonical name of the Modifications sheet.
const SheetModifications = "Modifications"

// modificationsSheet is the layout of the Modifications sheet (DESIGN
// §4.2, issue 18; a contract).
var modificationsSheet = Sheet{Name: SheetModifications, File: "modifications.csv",
	Help: "Optional: changes to the terms of outstanding awards (ASC 718-20-35-3; IFRS 2.26-27), one row per grant and date: a repricing of underwater options, a longer exercise window, accelerated (or slower) vesting of what is still unvested, a new exit rate or exercise multiple. Empty cells leave a term as it was. The award is valued just before and just after the change on its date (that date's share price, curve and Assumptions; the remaining term; each tranche vested or not); the increase in fair value is added to the grant-date cost, at once for vested tranches and over the remaining service for unvested ones. A decrease books nothing: the grant-date cost stays.",
	Columns: []Column{
		{Key: "grant_id", Kind: KindText, Required: true, Need: "required", Help: "A grant_id of the Grants sheet."},
		{Key: "date", Kind: KindDate, Required: true, Need: "required", Help: "The modification date: the award is valued on it before and after the change, and the change applies from the start of the day (before that day's events). When the holder leaves that day (a forfeited event on the date), shares that vest only because of the change were not expected to vest and are accounted at their fair value on the date (ASC 718-20-55-116, improbable to probable)."},
		{Key: "new_strike", Kind: KindNumber, Unit: "currency per share", Need: "optional", Default: "unchanged", Help: "The new exercise price: a repricing."},
		{Key: "new_expiry_date", Kind: KindDate, Need: "optional", Default: "unchanged", Help: "The new last day of exercise, e.g. a longer exercise window. For a holder leaving on the date, the last day the leaver may exercise: without the change the leaver's vested options are valued as exercised at once if in the money, else lapsed (the lattice's exit)."},
		{Key: "new_vest_months", Kind: KindInt, Unit: "months", Need: "optional", Default: "unchanged", Help: "A new vesting period, counted from vest_start as on the Grants sheet; 0 vests everything still unvested on the modification date. Vested tranches stay as they vested; each unvested tranche vests whole on the first date the new vesting has vested all the shares up to it (not before the modification date)."},
		{Key: "new_cliff_months", Kind: KindInt, Unit: "months", Need: "optional", Default: "unchanged", Help: "A new cliff, e.g. 0 to waive it for a holder leaving before the first anniversary."},
		{Key: "new_post_vesting_exit_rate", Kind: KindPercent, Unit: "annual", Need: "options, optional", Default: "unchanged", Help: "The exit rate of vested holders under the new terms: a longer post-termination exercise window means fewer leavers exercise or lose their options at once."},
		{Key: "new_exercise_multiple", Kind: KindNumber, Unit: "times strike", Need: "options, optional", Default: "unchanged", Help: "The exercise multiple under the new terms."},
		{Key: "shares", Kind: KindInt, Unit: "shares", Need: "optional", Default: "all outstanding", Help: "How many outstanding shares are modified, when only part of the grant is: taken from every tranche in proportion to its outstanding shares. A change of vesting applies to the whole grant."},
		{Key: "note", Kind: KindText, Need: "optional", Help: "Why (e.g. the board resolution); the memo quotes it."},
	}}

// InputsAt are the valuation inputs of grant g on date at under terms t,
// for the parts of Split sp with their vest dates vest: the share price,
// curve, volatility and dividend yield in force on that date (the Share
// Prices and Assumptions rows, never the grant row's share_price,
// volatility or dividend_yield, which were measured at its grant date);
// the exercise multiple and exit rate of t (a modification's, the grant
// row's, else the Assumptions in force on the date); the strike and
// expiry of t; and per part the years to its vest date (0 once vested).
// Tranches holds the parts, numbered from 1, each with its shares as
// granted.
func (s *Schedule) InputsAt(g Grant, at time.Time, t Terms, sp *Split, vest []time.Time) (Inputs, error) {
	sc := *s
	sc.Vesting, sc.Events, sc.Modifications = nil, nil, nil
	h := g
	h.GrantDate, h.VestStart, h.VestMonths, h.CliffMonths = at, at, 0, 0
	h.Strike, h.ExpiryDate = t.Strike, t.ExpiryDate
	h.SharePrice, h.Volatility, h.DividendYield = nil, nil, nil
	h.ExerciseMultiple, h.PostVestingExitRate = t.ExerciseMultiple, t.ExitRate
	h.Refs = map[string]Ref{}
	for k, r := range g.Refs {
		switch k {
		case "share_price", "volatility", "dividend_yield":
		default:
			h.Refs[k] = r
		}
	}
	for _, m := range s.ModificationsOf(g.ID) {
		if m.Date.After(at) {
			break
		}
		for key, col := range map[string]string{"exercise_multiple": "new_exercise_multiple", "post_vesting_exit_rate": "new_post_vesting_exit_rate", "strike": "new_strike", "expiry_date": "new_expiry_date"} {
			if r, ok := m.Refs[col]; ok {
				h.Refs[key] = r
			}
		}
	}
	in, err := sc.Inputs(h)
	if err != nil {
		return Inputs{}, err
	}
	for _, src := range []*Source{&in.ExerciseMultiple, &in.ExitRate} {
		if src.Ref.Sheet == SheetModifications {
			src.Text = src.Ref.String() + " (modification)"
		}
	}
	in.Grant = g
	tm := valuation.Terms{}
	if len(in.Terms) > 0 {
		tm = in.Terms[0]
	}
	in.Tranches = make([]Tranche, len(sp.Parts))
	in.Terms = make([]valuation.Terms, len(sp.Parts))
	for j, p := range sp.Parts {
		in.Tranches[j] = Tranche{GrantID: g.ID, Index: j + 1, VestDate: vest[j], Shares: p.Shares}
		x := tm
		x.YearsToVest = max(valuation.YearFrac(at, vest[j]), 0)
		if g.Instrument == RSU {
			x.Strike, x.YearsToExpiry = 0, x.YearsToVest
		} else if x.YearsToVest > x.YearsToExpiry {
			// Shares that would vest only after the expiry: forfeited that
			// day (SplitOf refuses any left outstanding), they are valued
			// as vesting at expiry.
			x.YearsToVest = x.YearsToExpiry
		}
		in.Terms[j] = x
	}
	return in, nil
}
