package grants

import (
	"cmp"
	"math/bits"
	"slices"
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
// vested on its date, from each in proportion to its outstanding shares
// (ProRata: a termination, naming them all, takes them all; a pooled row
// of several holders of whom some leave takes the same share of every
// unvested tranche), then from vested outstanding shares, latest vest
// date first. An exercised or expired event takes vested outstanding
// shares, earliest vest date first. Shares an event names beyond what it
// may take are left as Short: the event takes what there is. Events of
// any other kind take nothing.
func Allocate(ts []Tranche, evs []Event) Allocation {
	// The moves are presized for what they nearly always number at most:
	// a departure takes each unvested tranche once, its exercises and
	// expiry then the vested ones, splitting one tranche at most each.
	order, open := make([]int, len(evs)), make([]int64, len(ts))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		return cmp.Compare(valuation.DayNumber(evs[a].Date), valuation.DayNumber(evs[b].Date))
	})
	for i, t := range ts {
		open[i] = t.Shares
	}
	out := Allocation{Events: make([]Taken, 0, len(evs)), Moves: make([]Move, 0, len(ts)+len(evs))}
	var idx []int
	var pool []int64
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
		// take moves up to n shares of tranche i, within what it holds and
		// what the event has left to take.
		take := func(i int, n int64) {
			n = min(n, open[i], left)
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
			idx, pool = idx[:0], pool[:0]
			for i := range ts {
				if !vested(i) && open[i] > 0 {
					idx = append(idx, i)
					pool = append(pool, open[i])
				}
			}
			for j, n := range ProRata(min(left, tk.Unvested), pool) {
				take(idx[j], n)
			}
			for i := len(ts) - 1; i >= 0 && left > 0; i-- {
				take(i, left)
			}
		case Exercised, Expired:
			for i := 0; i < len(ts) && left > 0; i++ {
				if vested(i) {
					take(i, left)
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

// ProRata divides n whole shares among pools in proportion to their
// sizes (0 ≤ n ≤ the sum of pools): each pool gets the floor of its exact
// share n·pool/total, and the shares left over by the floors go one each
// to the pools with the largest fractions left, the later pool first on
// a tie (largest remainders; with tranches in vest-date order, a tie goes
// to the tranche that vests later). No pool gets more than it holds, and
// the parts add up to n exactly.
func ProRata(n int64, pools []int64) []int64 {
	out := make([]int64, len(pools))
	var total int64
	for _, p := range pools {
		total += p
	}
	if n <= 0 || total <= 0 {
		return out
	}
	n = min(n, total)
	rem := make([]int64, len(pools)) // n·pool mod total, the fraction's numerator
	var given int64
	for i, p := range pools {
		q, r := mulDivMod(n, p, total)
		out[i], rem[i] = q, r
		given += q
	}
	order := make([]int, len(pools))
	for i := range order {
		order[i] = len(pools) - 1 - i
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(rem[b], rem[a]) })
	for _, i := range order[:n-given] {
		out[i]++
	}
	return out
}

// mulDivMod is the quotient and remainder of a·b/c for 0 ≤ a, b ≤ c and
// c > 0, exact for every c below 2^62.
func mulDivMod(a, b, c int64) (q, r int64) {
	hi, lo := bits.Mul64(uint64(a), uint64(b))
	uq, ur := bits.Div64(hi, lo, uint64(c))
	return int64(uq), int64(ur)
}
