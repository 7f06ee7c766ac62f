package accounting

// Modifications: what a change of an award's terms, or the cancellation of
// its shares with a replacement award, adds to its cost and when (see the
// package notes, "Modifications").

import (
	"fmt"
	"math"
	"sort"
	"time"

	"grantworth/grants"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// Modified is an award's changes (grants.Split), each with the fair values
// that measure it on its date, for the changes dated by the period end.
type Modified struct {
	Parts   []grants.Part
	Changes []ChangeValue
}

// ChangeValue is one change with its values: the fair value per share of
// each part (Modified.Parts order) on the change's date under the terms
// before and after it. ValuesAfter is nil for a cancellation with a
// replacement, whose replacement is valued as its own grant.
type ChangeValue struct {
	grants.Change
	ValuesBefore, ValuesAfter []float64
}

// Replaces is, for a replacement award, the cancellation it replaces: the
// cancelled grant and the index of that change in its Modified.Changes.
type Replaces struct {
	GrantID string
	Change  int
}

// changeKey names one change: its grant, its day and whether it is a
// cancellation with a replacement.
type changeKey struct {
	grant    string
	day      int
	replaced bool
}

func keyOf(ch *grants.Change) changeKey {
	return changeKey{grant: ch.GrantID, day: dayNum(ch.Date), replaced: ch.Cancellation != nil}
}

// layerKind is what a layer of a part's cost is.
type layerKind int

const (
	layerBase       layerKind = iota // the grant-date fair value
	layerIncrement                   // a change's incremental fair value
	layerImprobable                  // a Type III change's fair value on its date
	layerCarried                     // a replacement's: the cancelled shares' grant-date cost it takes over
)

// retarget is a layer's vest day from day from on: what is not yet earned
// of it on the day before is earned evenly from then to vest.
type retarget struct {
	from, vest int
	by         changeKey // the change that moved it (zero for the first)
}

// layer is one cost of a part: value per live share, earned over its
// service from its first day (with f0 of it earned already, for a cost
// carried over from a cancelled award), towards a vest day that a change
// may bring forward. A layer that a Type III change ends counts nothing
// from that change's day on.
type layer struct {
	kind   layerKind
	key    changeKey // the change it comes from (zero for the base)
	startN int
	value  float64
	f0     float64
	to     []retarget
	endN   int // 0: never ends
	endBy  changeKey
}

// view options for changes: a change dated on or after from is left out
// (0: none), and so is the change skip (zero: none).
func (v view) leaves(k changeKey) bool {
	if k == (changeKey{}) {
		return false
	}
	return v.from > 0 && k.day >= v.from || k == v.skip
}

// target is the layer's vest day as it stands on day d in view v.
func (ly *layer) target(d int, v view) int {
	t := ly.to[0].vest
	for _, r := range ly.to[1:] {
		if r.from > d {
			break
		}
		if !v.leaves(r.by) {
			t = r.vest
		}
	}
	return t
}

// frac is the share of the layer earned through the end of day d in view v.
func (ly *layer) frac(d int, v view) float64 {
	seg := ly.to[0]
	f := ly.f0
	for _, r := range ly.to[1:] {
		if r.from > d {
			break
		}
		if v.leaves(r.by) {
			continue
		}
		f += (1 - f) * serviceFraction(seg.from, seg.vest-seg.from, r.from-1)
		seg = retarget{from: r.from, vest: r.vest}
	}
	return f + (1-f)*serviceFraction(seg.from, seg.vest-seg.from, d)
}

// expected is the expected share of the layer's live shares still there at
// its vest day, seen at the end of day kd (see trancheLedger.expected).
func (ly *layer) expected(kd int, rate float64, v view, sv *survivals) float64 {
	tv := ly.target(kd, v)
	if tv <= kd || rate == 0 {
		return 1
	}
	return sv.at(rate, tv-max(ly.startN, kd+1))
}

// counts is the layer's live shares through day d in view v, and those
// whose cost a cancellation recognized at once. A move before the layer's
// first day that took unvested shares took them before it existed; from
// then on a forfeiture or a cancellation with a replacement before the
// layer's vest day reverses it (the cost goes, or goes to the
// replacement), a plain cancellation before it recognizes it at once.
func (t *trancheLedger) counts(ly *layer, d int, v view) (live, accel int64) {
	live = t.Tranche.Shares
	for _, m := range t.moves() {
		if v.keep == nil && m.dayN > d || v.keep != nil && !v.keep(m) {
			continue
		}
		if m.replaced && v.leaves(m.by) {
			continue
		}
		if m.kind != grants.Forfeited && m.kind != grants.Cancelled {
			continue
		}
		before := m.dayN < ly.startN
		unvested := !m.vested
		if !before {
			unvested = m.dayN < ly.target(m.dayN, v)
		}
		if !unvested {
			continue
		}
		live -= m.shares
		if m.kind == grants.Cancelled && !m.replaced && !before {
			accel += m.shares
		}
	}
	return live, accel
}

// on reports whether layer ly of part t counts on day d in view v. A
// layer a Type III change ends stops on the change's day when the view
// holds that change, or the holder's departure that day (a forfeiture of
// the award on the day): without the change the departure would have
// forfeited those shares.
func (t *trancheLedger) on(l *awardLedger, ly *layer, d int, v view) bool {
	if v.leaves(ly.key) || d < ly.startN {
		return false
	}
	if ly.endN == 0 || d < ly.endN || !v.leaves(ly.endBy) {
		return ly.endN == 0 || d < ly.endN
	}
	for i := range l.tr {
		for _, m := range l.tr[i].moves() {
			if m.kind == grants.Forfeited && m.dayN == ly.endN && (v.keep == nil && m.dayN <= d || v.keep != nil && v.keep(m)) {
				return false
			}
		}
	}
	return true
}

// cut splits the ledger's tranches into the parts of a.Modified and dates
// each by the changes dated by asOf (the vest date after the last of them).
func (l *awardLedger) cut(asOf time.Time) {
	mod := l.in.Modified
	if mod == nil {
		return
	}
	l.layered = true
	n := dayNum(asOf)
	var tr []trancheLedger
	for j, p := range mod.Parts {
		t := l.tr[p.Tranche]
		if t.more != nil { // each part its own moves and layers, as a copy's slices were
			m := *t.more
			t.more = &m
		}
		t.of = int32(p.Tranche)
		t.Tranche.Shares = p.Shares
		for _, ch := range mod.Changes {
			if dayNum(ch.Date) <= n {
				t.vestN = int32(dayNum(ch.Parts[j].VestAfter))
			}
		}
		t.endN = t.vestN
		if vd := t.vestDate(); vd.After(l.last) {
			l.last = vd
		}
		tr = append(tr, t)
	}
	l.tr = tr
}

// layer builds each part's layers from the grant-date value and the
// changes dated by asOf, once the events are applied.
func (l *awardLedger) layer(asOf time.Time) {
	for i := range l.tr {
		t := &l.tr[i]
		t.extra().layers = []layer{{kind: layerBase, startN: l.startN, value: t.FairValue, to: []retarget{{from: l.startN, vest: int(t.origN)}}}}
	}
	mod := l.in.Modified
	if mod == nil {
		return
	}
	n := dayNum(asOf)
	for k := range mod.Changes {
		ch := &mod.Changes[k]
		M := dayNum(ch.Date)
		if M > n {
			continue
		}
		key := keyOf(&ch.Change)
		for j := range l.tr {
			t := &l.tr[j]
			cp := ch.Parts[j]
			vb, va := dayNum(cp.VestBefore), dayNum(cp.VestAfter)
			if vb > M && va < vb {
				for li := range t.layers() {
					ly := &t.layers()[li]
					if ly.endN == 0 && ly.target(M, view{}) > va {
						ly.to = append(ly.to, retarget{from: M, vest: va, by: key})
					}
				}
			}
			if ch.Cancellation != nil || cp.Shares == 0 {
				continue
			}
			liveM := t.Tranche.Shares
			for _, m := range t.moves() {
				if m.dayN < M && !m.vested && (m.kind == grants.Forfeited || m.kind == grants.Cancelled) {
					liveM -= m.shares
				}
			}
			if liveM <= 0 {
				continue
			}
			improbable := cp.Improbable
			if !l.typeIII {
				improbable = 0 // IFRS 2 has no such category (B43)
			}
			if improbable > 0 {
				// Type III: the shares were not expected to vest under
				// the terms before, so the cost earned on them ends today
				// and their fair value on the date replaces it.
				r3 := float64(improbable) / float64(liveM)
				for li, nl := 0, len(t.layers()); li < nl; li++ {
					ly := &t.layers()[li]
					if ly.endN != 0 {
						continue
					}
					ended := *ly
					ended.to = append([]retarget(nil), ly.to...)
					ended.value = ly.value * r3
					ended.endN, ended.endBy = M, key
					ly.value -= ended.value
					t.extra().layers = append(t.layers(), ended)
				}
				t.extra().layers = append(t.layers(), layer{kind: layerImprobable, key: key, startN: M, value: ch.ValuesAfter[j] * r3, to: []retarget{{from: M, vest: va}}})
			}
			if rest := cp.Shares - improbable; rest > 0 {
				if inc := ch.ValuesAfter[j] - ch.ValuesBefore[j]; inc > 0 {
					t.extra().layers = append(t.layers(), layer{kind: layerIncrement, key: key, startN: M, value: inc * float64(rest) / float64(liveM), to: []retarget{{from: M, vest: va}}})
				}
			}
		}
	}
}

// replace gives replacement award l (its grant-date value not a cost of
// its own) the cost of cancelled award c's change k: the grant-date cost
// of the cancelled shares still unvested, earned as far as it was, to be
// earned over the replacement's service, on its parts not vested on the
// date (all of them if it vests at once) in proportion to their shares;
// and the replacement's value on the date less the cancelled shares'
// value then, if more, on every part in proportion to its value (ASC
// 718-20-35-8; IFRS 2.28(c)).
func (l *awardLedger) replace(c *awardLedger, k int) {
	ch := &c.in.Modified.Changes[k]
	M := dayNum(ch.Date)
	key := keyOf(&ch.Change)
	var carried, earned, before float64
	for j := range c.tr {
		t := &c.tr[j]
		cp := ch.Parts[j]
		before += ch.ValuesBefore[j] * float64(cp.Shares)
		if cp.Shares == 0 || dayNum(cp.VestBefore) <= M {
			continue
		}
		for li := range t.layers() {
			ly := &t.layers()[li]
			if !t.on(c, ly, M-1, view{}) {
				continue
			}
			x := ly.value * float64(cp.Shares)
			carried += x
			earned += x * ly.frac(M-1, view{})
		}
	}
	if !l.layered {
		l.layer(time.Time{})
		l.layered = true
	}
	var pool, worth float64
	unvested := false
	for i := range l.tr {
		if int(l.tr[i].vestN) > M {
			unvested = true
		}
	}
	for i := range l.tr {
		t := &l.tr[i]
		t.layers()[0].value = 0
		if !unvested || int(t.vestN) > M {
			pool += float64(t.Tranche.Shares)
		}
		worth += t.FairValue * float64(t.Tranche.Shares)
	}
	inc := worth - before
	for i := range l.tr {
		t := &l.tr[i]
		if carried > 0 && pool > 0 && (!unvested || int(t.vestN) > M) {
			t.extra().layers = append(t.layers(), layer{kind: layerCarried, key: key, startN: M, value: carried / pool, f0: earned / carried, to: []retarget{{from: M, vest: int(t.vestN)}}})
		}
		if inc > 0 && worth > 0 && t.FairValue > 0 {
			t.extra().layers = append(t.layers(), layer{kind: layerIncrement, key: key, startN: M, value: inc * t.FairValue / worth, to: []retarget{{from: M, vest: int(t.vestN)}}})
		}
	}
	l.replaced = &replacedBy{of: c, change: k, carried: carried, earned: earned, before: before, worth: worth}
}

// replacedBy is what a replacement award took over.
type replacedBy struct {
	of                             *awardLedger
	change                         int
	carried, earned, before, worth float64
}

// atLayered is atView for a ledger with layers (an award that a change
// touched): each part's cost is the sum of its layers', each earned
// graded over its own service, or straight-line by layer group.
func (l *awardLedger) atLayered(pol Policy, v view, comp []float64) snapshot {
	d, kd := v.d, min(v.d, v.known)
	sv := l.survival()
	s := snapshot{comp: comp}
	for i := range comp {
		comp[i] = 0
	}
	if d < l.grantN {
		return s
	}
	if pol.Attribution == grants.Graded {
		l.eachLayer(d, v, func(i int, ly *layer, live, acc int64) {
			comp[i] += ly.value*float64(live)*ly.expected(kd, v.rate, v, sv)*ly.frac(d, v) + ly.value*float64(acc)
		})
		return s
	}
	// Straight-line: each group (the grant-date value; each change's
	// layers) over its own service, never below the cost of its vested
	// parts.
	type entry struct {
		part   int
		vq     float64
		vested bool
	}
	groups := map[changeKey][]*layer{}
	var order []changeKey
	entries := map[changeKey][]entry{}
	l.eachLayer(d, v, func(i int, ly *layer, live, acc int64) {
		comp[i] += ly.value * float64(acc)
		if _, ok := entries[ly.key]; !ok {
			order = append(order, ly.key)
		}
		if live > 0 { // straight-line ends at the last vest day with shares still counted
			groups[ly.key] = append(groups[ly.key], ly)
		}
		entries[ly.key] = append(entries[ly.key], entry{i, ly.value * float64(live) * ly.expected(kd, v.rate, v, sv), d >= ly.target(d, v)})
	})
	for _, k := range order {
		var total, floor, unvested float64
		for _, e := range entries[k] {
			total += e.vq
			if e.vested {
				floor += e.vq
			} else {
				unvested += e.vq
			}
		}
		f := 0.0
		if len(groups[k]) > 0 {
			f = groupFrac(groups[k], d, v)
		}
		cum := math.Max(total*f, floor)
		rest := cum - floor
		for _, e := range entries[k] {
			switch {
			case e.vested:
				comp[e.part] += e.vq
			case unvested > 0:
				comp[e.part] += rest * e.vq / unvested
			}
		}
	}
	return s
}

// eachLayer calls f with every layer of every part that counts on day d
// in view v, with the part's index and the layer's counts on d.
func (l *awardLedger) eachLayer(d int, v view, f func(part int, ly *layer, live, acc int64)) {
	for i := range l.tr {
		t := &l.tr[i]
		for li := range t.layers() {
			ly := &t.layers()[li]
			if !t.on(l, ly, d, v) {
				continue
			}
			live, acc := t.counts(ly, d, v)
			f(i, ly, live, acc)
		}
	}
}

// groupFrac is the share of a group of layers earned through day d,
// straight-line from the group's first day to the last of its vest days,
// each change that brings that day forward spreading what is left up to
// the new one.
func groupFrac(ls []*layer, d int, v view) float64 {
	start := ls[0].startN
	var days []int
	for _, ly := range ls {
		start = min(start, ly.startN)
		for _, r := range ly.to[1:] {
			if !v.leaves(r.by) {
				days = append(days, r.from)
			}
		}
	}
	sort.Ints(days)
	last := func(at int) int {
		e := 0
		for _, ly := range ls {
			e = max(e, ly.target(at, v))
		}
		return e
	}
	f := ls[0].f0
	from, to := start, last(start)
	for _, x := range days {
		if x > d {
			break
		}
		if e := last(x); e != to {
			f += (1 - f) * serviceFraction(from, to-from, x-1)
			from, to = x, e
		}
	}
	return f + (1-f)*serviceFraction(from, to-from, d)
}

// ModificationExpense is what one change of an award's terms, or one
// cancellation with a replacement, did to the books: per part the shares
// it touched and their fair values before and after on its date, and its
// effect on the cost (the cost with the change less the cost had it not
// been made) in total, to the period start, in the period and to the
// period end.
type ModificationExpense struct {
	GrantID     string
	Date        time.Time
	Replacement string // the replacement award's grant, for a cancellation with one
	// Improbable is set for a Type III change (improbable to probable).
	Improbable bool
	Change     *grants.Change
	Parts      []ModifiedPart

	// The fair value on the date of the shares touched, before and after
	// (for a replacement: the cancelled shares, and the replacement), and
	// the incremental fair value booked: the sum of the parts' positive
	// increments (of the whole exchange for a replacement); a decrease
	// books nothing.
	Before, After, Increment float64
	// Reversed is the grant-date cost a Type III change reversed on its
	// date; Carried the grant-date cost of the cancelled shares still
	// unvested that a replacement took over (Earned of it earned by then).
	Reversed, Carried, Earned float64

	// The change's effect on the cost: the expected total, through the day
	// before the period start, in the period, through its end, and not yet
	// recognized.
	Cost, CumulativeOpen, Period, Cumulative, Unrecognized float64
}

// ModifiedPart is one part of an award at a change.
type ModifiedPart struct {
	Tranche               int // the tranche's Index
	Shares                int64
	Left                  int64 // still outstanding at the end of the day
	Improbable            int64
	Vested                bool // before the change, on its date
	VestBefore, VestAfter time.Time
	Before, After         float64 // per share
	Increment             float64 // per share booked: after less before when more, the whole value on the date for Type III shares
}

// Attribution says in words how the part's added cost is earned.
func (p ModifiedPart) Attribution(on time.Time) string {
	if p.Left == 0 && p.VestAfter.After(on) {
		return "none: forfeited on " + day(on)
	}
	if !p.VestAfter.After(on) {
		return "at once, on " + day(on)
	}
	return "over the service from " + day(on) + " to " + day(p.VestAfter)
}

// modificationExpense is the ModificationExpense of every change of the
// period's ledgers, dated by its end, in ledger and date order.
func (p *period) modificationExpense() []ModificationExpense {
	var out []ModificationExpense
	byID := p.byID(func(l *awardLedger) bool { return l.in.Modified != nil })
	open, end := dayNum(p.start)-1, dayNum(p.end)
	for _, l := range p.ledgers {
		mod := l.in.Modified
		if mod == nil {
			continue
		}
		for k := range mod.Changes {
			ch := &mod.Changes[k]
			M := dayNum(ch.Date)
			if M > end {
				continue
			}
			me := ModificationExpense{GrantID: l.in.Grant.ID, Date: ch.Date, Change: &ch.Change}
			key := keyOf(&ch.Change)
			for j, cp := range ch.Parts {
				if cp.Shares == 0 {
					continue
				}
				mp := ModifiedPart{Tranche: int(l.tr[j].Tranche.Index), Shares: cp.Shares, Left: cp.Left, Improbable: cp.Improbable, Vested: dayNum(cp.VestBefore) <= M,
					VestBefore: cp.VestBefore, VestAfter: cp.VestAfter, Before: ch.ValuesBefore[j]}
				me.Before += mp.Before * float64(cp.Shares)
				if !l.typeIII {
					mp.Improbable = 0
				}
				if ch.ValuesAfter != nil {
					mp.After = ch.ValuesAfter[j]
					me.After += mp.After * float64(cp.Shares)
					if mp.Improbable > 0 {
						mp.Increment = mp.After
						me.Improbable = true
					} else if inc := mp.After - mp.Before; inc > 0 {
						mp.Increment = inc
					}
					me.Increment += mp.Increment * float64(cp.Shares-mp.Improbable)
				}
				me.Parts = append(me.Parts, mp)
			}
			ledgers := []*awardLedger{l}
			if ch.Cancellation != nil {
				me.Replacement = ch.Cancellation.ReplacementGrantID
				if r := byID[me.Replacement]; r != nil && r.replaced != nil {
					ledgers = append(ledgers, r)
					me.After, me.Carried, me.Earned = r.replaced.worth, r.replaced.carried, r.replaced.earned
					me.Increment = math.Max(me.After-me.Before, 0)
				}
			}
			if me.Improbable {
				me.Reversed = l.endedCost(M-1, key)
			}
			for _, x := range ledgers {
				far := max(dayNum(x.last)+1, end)
				c := x.effect(p.pol, far, end, key)
				me.Cost += c.cum
				me.CumulativeOpen += x.effect(p.pol, open, open, key).cum
				me.Cumulative += x.effect(p.pol, end, end, key).cum
			}
			me.Period = me.Cumulative - me.CumulativeOpen
			me.Unrecognized = me.Cost - me.Cumulative
			if math.Abs(me.Unrecognized) < 1e-9*math.Max(1, math.Abs(me.Cost)) {
				me.Unrecognized = 0
			}
			out = append(out, me)
		}
	}
	return out
}

// effectOf is a change's effect on an award's cumulative cost.
type effectOf struct{ cum float64 }

// effect is change key's effect on l's cumulative cost through day d,
// knowing the leavers through known: the cost less the cost had the change
// not been made.
func (l *awardLedger) effect(pol Policy, d, known int, key changeKey) effectOf {
	comp := make([]float64, len(l.tr))
	with := l.atView(pol, view{d: d, known: known, rate: l.rate}, comp).compTotal()
	without := l.atView(pol, view{d: d, known: known, rate: l.rate, skip: key}, comp).compTotal()
	return effectOf{with - without}
}

// linkReplacements gives each replacement award among the ledgers the cost
// of the cancellation it replaces.
func (p *period) linkReplacements() {
	byID := p.byID(func(l *awardLedger) bool { return l.in.Replaces != nil })
	for _, l := range p.ledgers {
		r := l.in.Replaces
		if r == nil {
			continue
		}
		if c := byID[r.GrantID]; c != nil && c.in.Modified != nil && r.Change < len(c.in.Modified.Changes) {
			l.replace(c, r.Change)
		}
	}
}

// byID indexes the period's ledgers by grant ID when any of them is
// one that needs looking up (need), and is nil when none is: most closes
// have no change of terms, and need no index of every ledger.
func (p *period) byID(need func(*awardLedger) bool) map[string]*awardLedger {
	for _, l := range p.ledgers {
		if need(l) {
			byID := make(map[string]*awardLedger, len(p.ledgers))
			for _, l := range p.ledgers {
				byID[l.in.Grant.ID] = l
			}
			return byID
		}
	}
	return nil
}

// modifiedOf attaches to the awards the changes v measured, and to each
// replacement award the cancellation it replaces.
func modifiedOf(awards []Award, v *pricing.Valuation) error {
	if len(v.Modifications) == 0 {
		return nil // no index of every award to build
	}
	index := make(map[string]int, len(awards))
	for i := range awards {
		index[awards[i].Grant.ID] = i
	}
	for i := range v.Modifications {
		mv := &v.Modifications[i]
		ai, ok := index[mv.GrantID]
		if !ok {
			continue
		}
		a := &awards[ai]
		if a.Modified == nil {
			a.Modified = &Modified{Parts: mv.Split.Parts}
		}
		cv := ChangeValue{Change: *mv.Change(), ValuesBefore: results(mv.BeforeValues), ValuesAfter: results(mv.AfterValues)}
		if len(cv.ValuesBefore) != len(cv.Parts) || cv.ValuesAfter != nil && len(cv.ValuesAfter) != len(cv.Parts) {
			return fmt.Errorf("grant %s: the change of %s has %d values for %d parts", mv.GrantID, day(cv.Date), len(cv.ValuesBefore), len(cv.Parts))
		}
		a.Modified.Changes = append(a.Modified.Changes, cv)
		if mv.Replacement != "" {
			if ri, ok := index[mv.Replacement]; ok {
				awards[ri].Replaces = &Replaces{GrantID: mv.GrantID, Change: len(a.Modified.Changes) - 1}
			}
		}
	}
	return nil
}

func results(rs []valuation.Result) []float64 {
	if rs == nil {
		return nil
	}
	out := make([]float64, len(rs))
	for i, r := range rs {
		out[i] = r.Value
	}
	return out
}

// byTranche merges the parts of a tranche (ts, in l.tr order) into one
// entry per tranche of the award: counts and amounts added, the expected
// share at vest weighted by the shares counted, the vest date the last
// part's, the years left weighted by the cost not yet recognized.
func (l *awardLedger) byTranche(ts []TrancheExpense) []TrancheExpense {
	if !l.layered || len(l.tr) == l.tranches {
		return ts
	}
	var out []TrancheExpense
	var live []float64
	for i, te := range ts {
		n := float64(l.tr[i].Tranche.Shares)
		if i == 0 || l.tr[i-1].of != l.tr[i].of {
			te.ExpectedShare *= n
			te.RemainingYears *= te.Unrecognized
			out = append(out, te)
			live = append(live, n)
			continue
		}
		o := &out[len(out)-1]
		o.Shares += te.Shares
		o.SharesCounted += te.SharesCounted
		o.ExpectedShare += te.ExpectedShare * n
		o.Cost += te.Cost
		o.CumulativeOpen += te.CumulativeOpen
		o.Period += te.Period
		o.Cumulative += te.Cumulative
		o.Unrecognized += te.Unrecognized
		o.RemainingYears += te.RemainingYears * te.Unrecognized
		o.VestDate = te.VestDate
		live[len(live)-1] += n
	}
	for k := range out {
		o := &out[k]
		if live[k] > 0 {
			o.ExpectedShare /= live[k]
		}
		if o.Unrecognized > 0 {
			o.RemainingYears /= o.Unrecognized
		} else {
			o.RemainingYears = 0
		}
	}
	return out
}

// modificationNotes say how changes of terms are booked, and where the
// standards differ on the ones the ledgers hold.
func modificationNotes(fw grants.Framework, ledgers []*awardLedger) []string {
	notes := []string{"A cancellation without a replacement award recognizes the cancelled shares' remaining cost at once (ASC 718-20-35-9, IFRS 2.28(a)). A change of an award's terms, and a cancellation with a concurrent replacement award, is booked as a modification (ASC 718-20-35-3 and 35-8; IFRS 2.27, 2.28(c) and B42-B44): the grant-date cost stays, and an increase in fair value on the modification date is added, at once for vested shares and over the remaining service for unvested ones."}
	for _, l := range ledgers {
		if l.in.Modified == nil {
			continue
		}
		for _, ch := range l.in.Modified.Changes {
			for _, p := range ch.Parts {
				switch {
				case p.Improbable == 0:
				case fw == grants.IFRS2:
					return append(notes, "A change that vests shares not expected to vest under the terms before (the holder leaving on the modification date) is booked as IFRS 2 requires (B43): the grant-date cost of the shares that now vest is recognized, brought forward to their new vest date, and the increase in fair value on the date added. (ASC 718 would book it as improbable to probable, Type III: the grant-date cost reversed and the fair value on the date recognized instead, ASC 718-20-55-116.)")
				default:
					return append(notes, "A change that vests shares not expected to vest under the terms before (the holder leaving on the modification date) is booked as improbable to probable (ASC 718-20-55-116, Type III): the grant-date cost of those shares is reversed and their fair value on the modification date recognized instead. IFRS 2 has no such category: it would keep the grant-date cost of shares that now vest and add only the increase in fair value (B43).")
				}
			}
		}
	}
	return notes
}

// The causes of catch-ups that changes of terms give.
const (
	CauseLateModification    Cause = "late_modification"    // a change of terms dated in a closed period, first recorded now
	CauseModificationRemoved Cause = "modification_removed" // a change of terms the prior close booked is no longer recorded
)

// filedModifications are the changes of grant id that v measured, as a
// close files them for the next one.
func filedModifications(v *pricing.Valuation, id string) []pricing.LockedModification {
	var out []pricing.LockedModification
	for i := range v.Modifications {
		mv := &v.Modifications[i]
		if mv.GrantID != id {
			continue
		}
		ch := mv.Change()
		lm := pricing.LockedModification{Date: ch.Date, Terms: pricing.Fingerprint(ch)}
		for j, p := range ch.Parts {
			lp := pricing.LockedPart{VestBefore: p.VestBefore, VestAfter: p.VestAfter, Before: mv.BeforeValues[j]}
			if mv.AfterValues != nil {
				lp.After = mv.AfterValues[j]
			}
			lm.Parts = append(lm.Parts, lp)
		}
		out = append(out, lm)
	}
	return out
}

// diagnoseModifications adds the causes a grant's changes of terms give
// its history up to the prior close's day P: a change dated by then that
// the prior close did not book, or one it booked that is gone.
func diagnoseModifications(pg *PriorGrant, l *awardLedger, P int, s *grants.Schedule, add func(Cause, string, ...any)) {
	filed := map[string]int{}
	for _, m := range pg.Modifications {
		filed[m.Terms]++
	}
	if mod := l.in.Modified; mod != nil {
		for k := range mod.Changes {
			ch := &mod.Changes[k].Change
			if dayNum(ch.Date) > P {
				continue
			}
			f := pricing.Fingerprint(ch)
			if filed[f] > 0 {
				filed[f]--
				continue
			}
			where := ""
			if m := ch.Modification; m != nil {
				where = " (" + s.Cell(grants.SheetModifications, "date", m.Row).String() + ")"
			} else if c := ch.Cancellation; c != nil {
				where = " (" + s.Cell(grants.SheetEvents, "date", c.Row).String() + ")"
			}
			add(CauseLateModification, "the %s of %s%s is first recorded now", changeNoun(ch), day(ch.Date), where)
		}
	}
	for _, m := range pg.Modifications {
		if filed[m.Terms] > 0 {
			filed[m.Terms]--
			add(CauseModificationRemoved, "the change of terms of %s, booked by the prior close, is no longer recorded", day(m.Date))
		}
	}
}

// changeNoun names a change in words.
func changeNoun(ch *grants.Change) string {
	if ch.Cancellation != nil {
		return "cancellation with replacement award " + ch.Cancellation.ReplacementGrantID
	}
	return "modification"
}

// JournalText describes the change's journal entry.
func (m *ModificationExpense) JournalText() string {
	switch {
	case m.Replacement != "":
		return "Modification: grant " + m.GrantID + " cancelled and replaced by grant " + m.Replacement + " on " + day(m.Date)
	case m.Improbable:
		return "Modification of grant " + m.GrantID + " on " + day(m.Date) + " (improbable to probable: grant-date cost reversed, fair value on the date recognized)"
	}
	return "Modification of grant " + m.GrantID + " on " + day(m.Date) + " (incremental fair value)"
}

// strikeOn is the exercise price of part i's shares on day d: the grant's,
// then each modification's from its date (a modification of some of the
// shares mixes the two, weighted by the shares it touched).
func (l *awardLedger) strikeOn(i int, d time.Time) float64 {
	k := l.in.Grant.Strike
	if l.in.Modified == nil {
		return k
	}
	for _, ch := range l.in.Modified.Changes {
		if ch.Cancellation != nil || ch.Date.After(d) || i >= len(ch.Parts) {
			continue
		}
		if cp := ch.Parts[i]; ch.Partial && cp.Outstanding > 0 {
			w := float64(cp.Shares) / float64(cp.Outstanding)
			k = w*ch.After.Strike + (1-w)*k
		} else {
			k = ch.After.Strike
		}
	}
	return k
}

// endedCost is the grant-date cost earned through day d on the shares
// that Type III change key vests, which it reverses: the layers it ends,
// each as earned over its own service (graded).
func (l *awardLedger) endedCost(d int, key changeKey) float64 {
	var x float64
	v := view{d: d, known: d, rate: l.rate}
	sv := l.survival()
	for i := range l.tr {
		t := &l.tr[i]
		for li := range t.layers() {
			ly := &t.layers()[li]
			if ly.endBy != key || !t.on(l, ly, d, v) {
				continue
			}
			live, acc := t.counts(ly, d, v)
			x += ly.value*float64(live)*ly.expected(d, v.rate, v, sv)*ly.frac(d, v) + ly.value*float64(acc)
		}
	}
	return x
}
