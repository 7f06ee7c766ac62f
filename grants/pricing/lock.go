package pricing

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"time"

	"grantworth/grants"
	"grantworth/internal/cores"
	"grantworth/valuation"
)

// Status says where a grant's values come from.
type Status string

const (
	Measured   Status = "measured"   // measured in this close
	Locked     Status = "locked"     // the grant-date values a prior close filed, kept
	Corrected  Status = "corrected"  // measured again at the grant date, correcting a prior close's values
	Remeasured Status = "remeasured" // a liability-classified warrant, measured at the valuation date
)

// Lock is what a prior close filed for one grant's measurement (ASC
// 718-10-30-6, IFRS 2.16: an equity-classified award is measured once, at
// its grant date, and not again). Value keeps it instead of today's
// measurement, unless the grant is named in Options.Correct.
type Lock struct {
	Close           time.Time // the prior close's valuation date
	Liability       bool      // the grant was a liability-classified warrant then
	MeasurementDate time.Time
	ExpiryDate      time.Time
	// Inputs are the inputs the values were measured with, by key
	// (those of grants.Inputs.Named, and strike).
	Inputs map[string]grants.Source
	// Tranches are an equity-classified award's values, per tranche.
	Tranches []LockedTranche
	// Revaluations are a liability-classified warrant's values at its
	// grant date, the past quarter ends and the prior close's valuation
	// date.
	Revaluations []Revaluation
	// Modifications are the values of the grant's changes the prior
	// close measured (modify.go).
	Modifications []LockedModification
	// Key is the valuation key (GrantValue.Key) of the values filed; ""
	// from a close that filed none.
	Key string
	// Measured is set when the prior close measured the values filed on
	// the inputs Key describes (it valued the grant then: status
	// measured or corrected), so that its checks of the grant (Studies)
	// were made on those inputs too.
	Measured bool
}

// LockedTranche is one tranche's measurement as filed.
type LockedTranche struct {
	VestDate                     time.Time
	Result                       valuation.Result
	BSM                          Comparison // the closed-form comparison's value and expected term
	RiskFreeRate, SimplifiedRate float64
}

// ErrLock is wrapped by every error about keeping or correcting a prior
// close's values: the input is at fault, not the program.
var ErrLock = errors.New("a prior close's value cannot be kept as asked")

// LockError is such an error, naming the grant.
type LockError struct{ GrantID, Msg string }

func (e *LockError) Error() string { return "grant " + e.GrantID + ": " + e.Msg }
func (e *LockError) Unwrap() error { return ErrLock }

func isLiability(g grants.Grant) bool {
	return g.Instrument == grants.Warrant && g.Classification == grants.Liability
}

// lock sets every grant's Status and keeps the values of the locked ones
// (see Lock); the warnings name each kept value that today's inputs would
// change by more than its error estimate.
func lock(v *Valuation, opts Options) ([]string, error) {
	valued := map[string]bool{} // of the grants named in opts.Correct
	if len(opts.Correct) > 0 {
		named := map[string]bool{}
		for _, id := range opts.Correct {
			named[id] = true
		}
		for i := range v.Grants {
			if id := v.Grants[i].Inputs.Grant.ID; named[id] {
				valued[id] = true
			}
		}
	}
	correct := map[string]bool{}
	for _, id := range opts.Correct {
		if !valued[id] {
			return nil, &LockError{id, "is named to be corrected but is not valued in this close"}
		}
		if _, ok := opts.Locks[id]; !ok {
			return nil, &LockError{id, "is named to be corrected but has no value filed in the prior close"}
		}
		correct[id] = true
	}
	// Grant by grant, on all cores: each keeps its own lock.
	err := cores.Chunks(len(v.Grants), grantChunk, func(lo, hi int) error {
		for i := lo; i < hi; i++ {
			if err := lockOne(&v.Grants[i], opts.Locks, correct); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return driftWarnings(v.Grants), nil
}

// lockOne sets gv's Status and keeps its values from its lock in locks,
// if it has one and is not named in correct.
func lockOne(gv *GrantValue, locks map[string]Lock, correct map[string]bool) error {
	g := gv.Inputs.Grant
	gv.Status = Measured
	if isLiability(g) {
		gv.Status = Remeasured
	}
	lk, ok := locks[g.ID]
	if !ok {
		return nil
	}
	gv.Lock = &lk
	if correct[g.ID] {
		gv.Status = Corrected
		return nil
	}
	if lk.Liability != isLiability(g) {
		return &LockError{g.ID, fmt.Sprintf("was %s at the prior close of %s and is %s now: a change of classification is not booked by grantworth; name the grant to be corrected if the classification was an error",
			classOf(lk.Liability), day(lk.Close), classOf(isLiability(g)))}
	}
	if lk.Liability {
		return nil // its past values are kept as revaluations
	}
	if err := keep(gv, &lk); err != nil {
		return err
	}
	gv.Key = lk.Key
	gv.Lock.Tranches = nil // kept in Results, BSM and the rates
	return nil
}

// Drift is how far today's inputs would move a locked grant's values:
// its fair value per share as filed and as measured now (weighted by
// shares), with the inputs that differ.
type Drift struct {
	Filed, Today float64
	Changes      []string
}

// driftWarnings says which locked grants today's inputs would change by
// more than their error estimates: grant by grant when a change touches
// few of them, else one warning per change naming the grants (each is
// listed in the reconciliation).
func driftWarnings(gs []GrantValue) []string {
	type group struct {
		why          string
		gvs          []*GrantValue
		filed, today float64 // totals
	}
	var order []*group
	by := map[string]*group{}
	for i := range gs {
		gv := &gs[i]
		if gv.Drift == nil {
			continue
		}
		why := "its inputs are as filed, so the method differs (another grantworth version?)"
		if len(gv.Drift.Changes) > 0 {
			why = "the inputs that differ: " + strings.Join(gv.Drift.Changes, "; ")
		}
		g := by[why]
		if g == nil {
			g = &group{why: why}
			by[why] = g
			order = append(order, g)
		}
		g.gvs = append(g.gvs, gv)
		var shares float64
		for _, t := range gv.Inputs.Tranches {
			shares += float64(t.Shares)
		}
		g.filed += gv.Drift.Filed * shares
		g.today += gv.Drift.Today * shares
	}
	var out []string
	for _, g := range order {
		if len(g.gvs) <= maxDriftWarnings {
			for _, gv := range g.gvs {
				id := gv.Inputs.Grant.ID
				out = append(out, fmt.Sprintf("grant %s keeps the grant-date fair value filed at the close of %s, %.4f a share (weighted by shares); today's inputs would give %.4f (%s). If the filed value was an error, correct it (value --correct %s) and the difference is booked as a catch-up",
					id, day(gv.Lock.Close), gv.Drift.Filed, gv.Drift.Today, g.why, id))
			}
			continue
		}
		var ids []string
		for _, gv := range g.gvs[:min(len(g.gvs), 10)] {
			ids = append(ids, gv.Inputs.Grant.ID)
		}
		more := ""
		if n := len(g.gvs) - len(ids); n > 0 {
			more = fmt.Sprintf(" and %d more", n)
		}
		out = append(out, fmt.Sprintf("%d grants (%s%s) keep the grant-date fair values filed at the close of %s; today's inputs would change them (%s): %.2f in all as filed, %.2f from today's inputs. Each is listed in the reconciliation; if a filed value was an error, correct it (value --correct GRANT) and the difference is booked as a catch-up",
			len(g.gvs), strings.Join(ids, ", "), more, day(g.gvs[0].Lock.Close), g.why, g.filed, g.today))
	}
	return out
}

// maxDriftWarnings is how many locked grants one change of inputs may
// move before their warnings are given as one.
const maxDriftWarnings = 5

func classOf(liability bool) string {
	if liability {
		return "liability-classified"
	}
	return "equity-classified"
}

func day(t time.Time) string { return t.Format(time.DateOnly) }

// filedTranche is, for each tranche of ts, the position in filed of the
// tranche filed with the same vest day (the last such), or -1.
func filedTranche(ts []grants.Tranche, filed []LockedTranche) []int {
	at := make([]int, len(ts))
	increasing := true
	for j := 1; j < len(filed) && increasing; j++ {
		increasing = valuation.DayNumber(filed[j].VestDate) > valuation.DayNumber(filed[j-1].VestDate)
	}
	if increasing {
		// Both in vest-date order, as Tranches gives them and a close
		// files them: one merge (the filed days are worked out as it
		// goes, not kept: a rerun merges every grant's).
		j, prev, sorted := 0, int64(math.MinInt64), true
		fd := int64(math.MinInt64) // the day number of filed[j], once j < len(filed)
		if len(filed) > 0 {
			fd = valuation.DayNumber(filed[0].VestDate)
		}
		for k, tr := range ts {
			d := valuation.DayNumber(tr.VestDate)
			if d < prev {
				sorted = false
				break
			}
			prev = d
			for j < len(filed) && fd < d {
				if j++; j < len(filed) {
					fd = valuation.DayNumber(filed[j].VestDate)
				}
			}
			at[k] = -1
			if j < len(filed) && fd == d {
				at[k] = j
			}
		}
		if sorted {
			return at
		}
	}
	byDay := make(map[int64]int, len(filed))
	for j := range filed {
		byDay[valuation.DayNumber(filed[j].VestDate)] = j
	}
	for k, tr := range ts {
		j, ok := byDay[valuation.DayNumber(tr.VestDate)]
		if !ok {
			j = -1
		}
		at[k] = j
	}
	return at
}

// keep puts lk's values in place of gv's, tranche by tranche by vest
// date, and its inputs in place of today's, and notes in gv.Drift when
// today's values differ by more than their error estimates.
func keep(gv *GrantValue, lk *Lock) error {
	g := gv.Inputs.Grant
	at := filedTranche(gv.Inputs.Tranches, lk.Tranches)
	var shares, now, then float64
	differs := false
	// Grants on the same terms share one slice of results (valued once,
	// valueSet): the kept values go into the grant's own (a Reused
	// grant's is its own already).
	if !gv.Reused {
		gv.Results = slices.Clone(gv.Results)
	}
	for k, tr := range gv.Inputs.Tranches {
		j := at[k]
		if j < 0 {
			return &LockError{g.ID, fmt.Sprintf("its tranche vesting %s has no value filed at the prior close of %s (its vesting changed since): name the grant to be corrected so that it is measured again at its grant date",
				day(tr.VestDate), day(lk.Close))}
		}
		t := lk.Tranches[j]
		today := gv.Results[k]
		tol := math.Max(today.ErrorEstimate, t.Result.ErrorEstimate) + 1e-12*math.Abs(t.Result.Value)
		if !gv.Reused && math.Abs(today.Value-t.Result.Value) > tol {
			differs = true
		}
		n := float64(tr.Shares)
		shares += n
		now += n * today.Value
		then += n * t.Result.Value
		gv.Results[k], gv.BSM[k] = t.Result, t.BSM
		gv.RiskFreeRate[k], gv.SimplifiedRate[k] = t.RiskFreeRate, t.SimplifiedRate
		if c := gv.Inputs.Market.Curve; gv.Reused && c != nil {
			// As compare gives a grant valued again, whose expected
			// term is the one filed.
			gv.ExpectedTermRate[k] = c.Zero(t.Result.ExpectedTermYears)
		}
	}
	gv.Status = Locked
	if differs && shares > 0 {
		gv.Drift = &Drift{Filed: then / shares, Today: now / shares, Changes: inputChanges(gv, lk)}
	}
	for _, n := range gv.Inputs.Named() {
		if src, ok := lk.Inputs[n.Key]; ok {
			*n.Source = src
		}
	}
	return nil
}

// inputChanges lists the inputs (and terms) of gv that differ from those
// lk was measured with, each with both values and their cells.
func inputChanges(gv *GrantValue, lk *Lock) []string {
	in, g := &gv.Inputs, gv.Inputs.Grant
	var out []string
	if !lk.MeasurementDate.IsZero() && !lk.MeasurementDate.Equal(in.MeasurementDate) {
		out = append(out, fmt.Sprintf("measurement date %s then, %s now (%s)", day(lk.MeasurementDate), day(in.MeasurementDate), g.Refs["grant_date"]))
	}
	if !lk.ExpiryDate.IsZero() && !lk.ExpiryDate.Equal(g.ExpiryDate) {
		out = append(out, fmt.Sprintf("expiry %s then, %s now (%s)", day(lk.ExpiryDate), day(g.ExpiryDate), g.Refs["expiry_date"]))
	}
	named := append(in.Named(), grants.Named{Key: "strike", Source: &grants.Source{Value: g.Strike, Ref: g.Refs["strike"]}})
	for _, n := range named {
		then, ok := lk.Inputs[n.Key]
		if !ok || then.Value == n.Source.Value {
			continue
		}
		out = append(out, fmt.Sprintf("%s %g (%s) then, %g (%s) now", n.Key, then.Value, then.Ref, n.Source.Value, n.Source.Ref))
	}
	return out
}

// revaluation is lk's kept value at date at, if it filed one.
func (lk *Lock) revaluation(at time.Time) (Revaluation, bool) {
	for _, r := range lk.Revaluations {
		if r.Err == nil && valuation.Days(r.Date, at) == 0 {
			return r, true
		}
	}
	return Revaluation{}, false
}
