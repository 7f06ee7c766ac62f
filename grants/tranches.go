package grants

import (
	"sort"
	"time"
)

// Tranches expands a grant into its vesting tranches, in vest-date order,
// with the forfeited and cancelled events of the grant applied.
//
// If the Vesting sheet names the grant, its rows are the tranches (rows on
// the same date are added together). Otherwise the Grants columns give them
// by the rule of DESIGN §4.2 (common practice): after m months of service,
// floor(shares × m / vest_months) shares have vested, counted at the cliff
// and then every vest_every_months (and at vest_months itself); a tranche
// is the difference between successive counts, so the tranches add up to
// the grant exactly, and months with no new shares give no tranche. Month
// m falls on vest_start plus m months, a missing day becoming the month's
// last day. A grant with vest_months 0 is one tranche vested at grant.
//
// Forfeited and cancelled events take their shares by the rule of
// Allocate: from the tranches that vest after the event's date, in
// proportion to their shares (a termination forfeits them all); a tranche
// vesting on the event's date has vested. Shares taken from vested tranches, and
// exercised and expired events, change no tranche's Forfeited or
// Cancelled. A grant with no shares has no tranches.
func (s *Schedule) Tranches(g Grant) []Tranche {
	ts := s.tranchesBeforeEvents(g)
	evs := s.EventsOf(g.ID)
	if len(evs) == 0 {
		return ts // no event moves a share (Allocate of no events makes no moves)
	}
	for _, m := range s.allocate(g, ts, evs).Moves {
		if m.Vested {
			continue
		}
		t := &ts[m.Tranche]
		switch m.Kind {
		case Forfeited:
			t.Forfeited += m.Shares
			t.forfeitDay = dayNumber(m.Date)
		case Cancelled:
			t.Cancelled += m.Shares
			t.cancelDay = dayNumber(m.Date)
		}
	}
	return ts
}

// tranchesBeforeEvents is the vesting of g with no events applied.
func (s *Schedule) tranchesBeforeEvents(g Grant) []Tranche {
	if rows := s.vestRows(g.ID); len(rows) > 0 {
		return customTranches(g, rows)
	}
	return expand(g)
}

// lastVest is the vest date of the last of g's tranches before events
// (tranchesBeforeEvents), or false when it has none. The column schedule
// is not expanded for it: its last tranche always vests at vest_months,
// where the count reaches the grant's shares (floor(shares × m /
// vest_months) is below shares for every earlier m).
func (s *Schedule) lastVest(g Grant) (time.Time, bool) {
	if rows := s.vestRows(g.ID); len(rows) > 0 {
		ts := customTranches(g, rows)
		if len(ts) == 0 {
			return time.Time{}, false
		}
		return ts[len(ts)-1].VestDate, true
	}
	switch {
	case g.Shares <= 0:
		return time.Time{}, false
	case g.VestMonths <= 0:
		return g.GrantDate, true
	}
	return AddMonths(g.VestStart, g.VestMonths), true
}

// expand applies the column schedule of DESIGN §4.2.
func expand(g Grant) []Tranche {
	if g.Shares <= 0 {
		return nil
	}
	vm := g.VestMonths
	if vm <= 0 {
		return []Tranche{{GrantID: g.ID, Index: 1, VestDate: g.GrantDate, Shares: g.Shares}}
	}
	every := g.VestEvery
	if every <= 0 {
		every = 1
	}
	cliff := min(max(g.CliffMonths, 0), vm)
	ts := make([]Tranche, 0, min((vm-cliff)/every+2, 1202))
	var prev int64
	add := func(m int) {
		cum := floorMulDiv(g.Shares, int64(m), int64(vm))
		if cum > prev {
			ts = append(ts, Tranche{GrantID: g.ID, Index: len(ts) + 1, VestDate: AddMonths(g.VestStart, m), Shares: cum - prev})
			prev = cum
		}
	}
	if cliff > 0 {
		add(cliff)
	}
	for m := every; m < vm; m += every {
		if m > cliff {
			add(m)
		}
	}
	add(vm)
	return ts
}

// floorMulDiv is floor(a×m/n) for a, m ≥ 0 and n > 0, without overflow for
// any a up to 2^53 and m up to n.
func floorMulDiv(a, m, n int64) int64 {
	return a/n*m + (a%n)*m/n
}

func customTranches(g Grant, rows []VestRow) []Tranche {
	rows = append([]VestRow(nil), rows...)
	sort.SliceStable(rows, func(i, j int) bool { return rows[i].VestDate.Before(rows[j].VestDate) })
	var ts []Tranche
	for _, r := range rows {
		if r.Shares <= 0 {
			continue
		}
		if n := len(ts); n > 0 && ts[n-1].VestDate.Equal(r.VestDate) {
			ts[n-1].Shares += r.Shares
			continue
		}
		ts = append(ts, Tranche{GrantID: g.ID, Index: len(ts) + 1, VestDate: r.VestDate, Shares: r.Shares})
	}
	return ts
}

func (s *Schedule) vestRows(id string) []VestRow {
	return ofGrant(s.Vesting, s.fresh(), func(ix *index) []int32 { return ix.vestOf[id] }, id, func(v *VestRow) string { return v.GrantID })
}

// EventsOf returns the events of grant id in date order (rows on the same
// date in sheet order).
func (s *Schedule) EventsOf(id string) []Event {
	out := ofGrant(s.Events, s.fresh(), func(ix *index) []int32 { return ix.eventsOf[id] }, id, func(e *Event) string { return e.GrantID })
	sort.SliceStable(out, func(i, j int) bool { return out[i].Date.Before(out[j].Date) })
	return out
}

// TransfersOf returns the Transfers rows of grant id in date order.
func (s *Schedule) TransfersOf(id string) []Transfer {
	out := ofGrant(s.Transfers, s.fresh(), func(ix *index) []int32 { return ix.transfersOf[id] }, id, func(t *Transfer) string { return t.GrantID })
	sort.SliceStable(out, func(i, j int) bool { return out[i].Date.Before(out[j].Date) })
	return out
}

// Grant returns the grant with the given id.
func (s *Schedule) Grant(id string) (Grant, bool) {
	for _, g := range s.Grants {
		if g.ID == id {
			return g, true
		}
	}
	return Grant{}, false
}

// VestedAt is the number of shares of ts vested on date d (tranches vesting
// on d included), before forfeitures.
func VestedAt(ts []Tranche, d time.Time) int64 {
	var n int64
	for _, t := range ts {
		if !t.VestDate.After(d) {
			n += t.Shares
		}
	}
	return n
}
