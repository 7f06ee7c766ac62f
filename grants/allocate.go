package grants

import (
	"sort"
	"time"

	"grantworth/valuation"
)

// Move is the part of one event taken from one tranche.
type Move struct {
	Event   int // index of the event in the list given to Allocate
	Tranche int // index of the tranche in the list given to Allocate
	Date    time.Time
	Kind    EventKind
	Shares  int64
	// Vested is whether the tranche had vested on the event's date: a
	// tranche vests at the start of its vest day, so an event on that day
	// finds it vested.
	Vested bool
}

// Taken is what Allocate did with one event: the shares outstanding on its
// date before it, the shares it took from unvested and from vested
// tranches, and Short, the shares it names beyond those it could take
// (forfeited and cancelled events take from all outstanding shares,
// exercised and expired ones from vested outstanding shares only).
type Taken struct {
	Event                    Event
	Unvested, Vested         int64
	FromUnvested, FromVested int64
	Short                    int64
}

// Allocation is the outcome of Allocate: the moves in the order made,
// and what each event took, in the order applied.
type Allocation struct {
	Moves  []Move
	Events []Taken
}

// Allocate applies events to the tranches ts of one grant (in vest-date
// order). It is the one home of the rule; Schedule.Tranches, Validate and
// the accounting all call it.
//
// Events apply in date order, events of the same day in the order given.
// A forfeited or cancelled event takes its shares from the tranches not
// vested on its date, latest vest date first (a termination forfeits them
// all), then from vested outstanding shares, latest first. An exercised
// or expired event takes vested outstanding shares, earliest vest date
// first. Shares an event names beyond what it may take are left as
// Short: the event takes what there is. Events of any other kind take
// nothing.
func Allocate(ts []Tranche, evs []Event) Allocation {
	order := make([]int, len(evs))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return valuation.Days(evs[order[b]].Date, evs[order[a]].Date) < 0 })
	open := make([]int64, len(ts))
	for i, t := range ts {
		open[i] = t.Shares
	}
	out := Allocation{Events: make([]Taken, 0, len(evs))}
	for _, k := range order {
		e := evs[k]
		vested := func(i int) bool { return valuation.Days(ts[i].VestDate, e.Date) >= 0 }
		tk := Taken{Event: e}
		for i := range ts {
			if vested(i) {
				tk.Vested += open[i]
			} else {
				tk.Unvested += open[i]
			}
		}
		left := max(e.Shares, 0)
		take := func(i int) {
			n := min(open[i], left)
			if n <= 0 {
				return
			}
			v := vested(i)
			out.Moves = append(out.Moves, Move{Event: k, Tranche: i, Date: e.Date, Kind: e.Kind, Shares: n, Vested: v})
			open[i] -= n
			left -= n
			if v {
				tk.FromVested += n
			} else {
				tk.FromUnvested += n
			}
		}
		switch e.Kind {
		case Forfeited, Cancelled:
			for i := len(ts) - 1; i >= 0 && left > 0; i-- {
				if !vested(i) {
					take(i)
				}
			}
			for i := len(ts) - 1; i >= 0 && left > 0; i-- {
				take(i)
			}
		case Exercised, Expired:
			for i := 0; i < len(ts) && left > 0; i++ {
				if vested(i) {
					take(i)
				}
			}
		default:
			left = 0
		}
		tk.Short = left
		out.Events = append(out.Events, tk)
	}
	return out
}
