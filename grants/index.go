package grants

import (
	"sort"
	"time"

	"grantworth/valuation"
)

// index holds what a schedule's per-grant look-ups would otherwise find by
// scanning whole sheets for every grant: the Events, Vesting and Transfers
// rows of each grant (their positions in sheet order) and the zero curve of each
// Rates curve date, built once and shared by every grant measured on it
// (so that caches keyed by the curve, such as the sensitivity runs', hit).
//
// The reader indexes the schedule it returns, and ValueInputs a schedule
// built in code. An index is used only while the sheets it was built from
// are unchanged in length and place (fresh); a schedule whose Events,
// Vesting, Transfers or Rates are appended to or replaced is scanned again until it
// is indexed anew. Rows edited in place (a grant_id, a date or a
// replacement_grant_id changed) need Schedule.Reindex.
type index struct {
	events, vesting, transfers, rates int
	event0                            *Event
	vest0                             *VestRow
	transfer0                         *Transfer
	rate0                             *RatePoint
	eventsOf, vestOf, transfersOf     map[string][]int32 // positions by grant ID
	curves                            []indexedCurve     // by date
	replacements                      bool               // an event names a replacement award
}

// indexedCurve is one curve date's rows and its zero curve, or why it
// cannot be built.
type indexedCurve struct {
	curve
	cv      *valuation.Curve
	text    string
	err     error
	byTenor []RatePoint // the points in tenor order (sheet order within a tenor), as citeRate reads them
}

// indexCurve is curve c built, with its points in tenor order.
func indexCurve(c curve) indexedCurve {
	cv, text, err := c.build()
	pts := append([]RatePoint(nil), c.points...)
	sort.SliceStable(pts, func(i, j int) bool { return pts[i].TenorYears < pts[j].TenorYears })
	return indexedCurve{c, cv, text, err, pts}
}

// Reindex builds the schedule's look-up index anew (see index). The
// reader calls it; call it again after editing rows in place.
func (s *Schedule) Reindex() {
	ix := &index{
		events: len(s.Events), vesting: len(s.Vesting), transfers: len(s.Transfers), rates: len(s.Rates),
		eventsOf: map[string][]int32{}, vestOf: map[string][]int32{}, transfersOf: map[string][]int32{},
	}
	if len(s.Events) > 0 {
		ix.event0 = &s.Events[0]
	}
	if len(s.Vesting) > 0 {
		ix.vest0 = &s.Vesting[0]
	}
	if len(s.Transfers) > 0 {
		ix.transfer0 = &s.Transfers[0]
	}
	if len(s.Rates) > 0 {
		ix.rate0 = &s.Rates[0]
	}
	for i, e := range s.Events {
		ix.eventsOf[e.GrantID] = append(ix.eventsOf[e.GrantID], int32(i))
		ix.replacements = ix.replacements || e.ReplacementGrantID != ""
	}
	for i, v := range s.Vesting {
		ix.vestOf[v.GrantID] = append(ix.vestOf[v.GrantID], int32(i))
	}
	for i, t := range s.Transfers {
		ix.transfersOf[t.GrantID] = append(ix.transfersOf[t.GrantID], int32(i))
	}
	for _, c := range s.curves() {
		ix.curves = append(ix.curves, indexCurve(c))
	}
	s.idx = ix
}

// fresh is s's index if it still describes s's sheets, else nil.
func (s *Schedule) fresh() *index {
	ix := s.idx
	if ix == nil || len(s.Events) != ix.events || len(s.Vesting) != ix.vesting || len(s.Transfers) != ix.transfers || len(s.Rates) != ix.rates {
		return nil
	}
	if (len(s.Events) > 0 && &s.Events[0] != ix.event0) || (len(s.Vesting) > 0 && &s.Vesting[0] != ix.vest0) ||
		(len(s.Transfers) > 0 && &s.Transfers[0] != ix.transfer0) || (len(s.Rates) > 0 && &s.Rates[0] != ix.rate0) {
		return nil
	}
	return ix
}

// curveOn is the latest curve dated on or before d, built.
func (ix *index) curveOn(d time.Time) (*indexedCurve, bool) {
	i := sort.Search(len(ix.curves), func(i int) bool { return ix.curves[i].date.After(d) })
	if i == 0 {
		return nil, false
	}
	return &ix.curves[i-1], true
}

// ofGrant are the rows of one grant, in sheet order: at the positions the
// index holds for it (at) when the index is fresh (ix not nil), else by
// a scan comparing each row's grantID with id.
func ofGrant[T any](rows []T, ix *index, at func(*index) []int32, id string, grantID func(*T) string) []T {
	if ix != nil {
		return rowsAt(rows, at(ix))
	}
	var out []T
	for i := range rows {
		if grantID(&rows[i]) == id {
			out = append(out, rows[i])
		}
	}
	return out
}

// rowsAt are the rows of rows at positions at.
func rowsAt[T any](rows []T, at []int32) []T {
	if len(at) == 0 {
		return nil
	}
	out := make([]T, len(at))
	for i, k := range at {
		out[i] = rows[k]
	}
	return out
}
