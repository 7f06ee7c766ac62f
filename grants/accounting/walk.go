package accounting

import (
	"fmt"
	"sort"
	"strconv"
	"strings"

	"grantworth/grants"
)

// Walk is a roll from an opening balance to a closing one through the
// movements between them, in currency, every amount rounded to the cent
// so that the movements add up to closing less opening exactly, cent for
// cent (Check). Opening is nil for a walk that starts from nothing (the
// expense of the period, say).
type Walk struct {
	Opening *WalkLine
	Moves   []WalkLine
	Closing WalkLine
}

// WalkLine is one line of a Walk. Key is fixed for programs (opening,
// new_grants, expense, ...); Label is for people. Amount is rounded to
// the cent; Exact is the figure before rounding.
type WalkLine struct {
	Key, Label    string
	Amount, Exact float64
}

// cents is x rounded to the cent as the reports print it, in cents.
func cents(x float64) int64 {
	s := strconv.FormatFloat(x, 'f', 2, 64)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	whole, frac, _ := strings.Cut(s, ".")
	n, _ := strconv.ParseInt(whole+frac, 10, 64)
	if neg {
		return -n
	}
	return n
}

// Check verifies that the movements add up to closing less opening, cent
// for cent.
func (w Walk) Check() error {
	var open int64
	if w.Opening != nil {
		open = cents(w.Opening.Amount)
	}
	sum := open
	for _, m := range w.Moves {
		sum += cents(m.Amount)
	}
	if c := cents(w.Closing.Amount); sum != c {
		return fmt.Errorf("walk to %s: opening %d cents and movements come to %d cents, closing is %d", w.Closing.Key, open, sum, c)
	}
	return nil
}

// newWalk rounds a walk so that it adds up exactly. The opening and
// closing amounts are rounded as printed; so are the moves marked fixed
// (a figure printed elsewhere, such as the period's expense). The other
// moves share what is left by the largest-remainder rule: each is its
// exact amount rounded to the nearest cent, then the cents still missing
// (or in excess) go one each to the moves whose exact amounts lie
// furthest above (or below) their rounded ones, so that no move is more
// than a cent from its exact amount. An error means the exact amounts do
// not add up to within a cent a move: a fault of the program, not of the
// input.
func newWalk(opening *WalkLine, moves []WalkLine, fixed map[string]bool, closing WalkLine) (Walk, error) {
	w := Walk{Opening: opening, Moves: moves, Closing: closing}
	target := cents(closing.Exact)
	w.Closing.Amount = float64(target) / 100
	if opening != nil {
		o := *opening
		c := cents(o.Exact)
		o.Amount = float64(c) / 100
		w.Opening = &o
		target -= c
	}
	type share struct {
		i    int
		over float64 // exact less rounded, in cents
	}
	var free []share
	var sum float64
	for i := range w.Moves {
		m := &w.Moves[i]
		sum += m.Exact
		c := cents(m.Exact)
		m.Amount = float64(c) / 100
		target -= c
		if !fixed[m.Key] {
			free = append(free, share{i, m.Exact*100 - float64(c)})
		}
	}
	if target < -int64(len(free)) || target > int64(len(free)) {
		open := 0.0
		if opening != nil {
			open = opening.Exact
		}
		return w, fmt.Errorf("the walk to %s does not add up: opening %.6f and movements %.6f, closing %.6f", closing.Key, open, sum, closing.Exact)
	}
	sort.SliceStable(free, func(a, b int) bool { return free[a].over > free[b].over })
	step := int64(1)
	if target < 0 {
		step, target = -1, -target
		for a, b := 0, len(free)-1; a < b; a, b = a+1, b-1 {
			free[a], free[b] = free[b], free[a]
		}
	}
	for k := 0; k < int(target); k++ {
		m := &w.Moves[free[k].i]
		m.Amount = float64(cents(m.Exact)+step) / 100
	}
	return w, w.Check()
}

// CountWalk rolls the number of awards of one instrument from the prior
// close to this one: options and warrants outstanding, RSUs nonvested.
type CountWalk struct {
	Instrument grants.Instrument
	Nonvested  bool
	Lines      []CountLine // opening first, closing last
}

// CountLine is one line of a CountWalk.
type CountLine struct {
	Key, Label string
	Shares     int64
}

// Check verifies that the lines between the first and the last add up to
// their difference.
func (c CountWalk) Check() error {
	n := len(c.Lines)
	if n < 2 {
		return fmt.Errorf("%s count walk has %d lines", c.Instrument, n)
	}
	sum := c.Lines[0].Shares
	for _, l := range c.Lines[1 : n-1] {
		sum += l.Shares
	}
	if sum != c.Lines[n-1].Shares {
		return fmt.Errorf("%s count walk: opening and movements come to %d, closing is %d", c.Instrument, sum, c.Lines[n-1].Shares)
	}
	return nil
}
