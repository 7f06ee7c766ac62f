package pricing

import (
	"fmt"
	"strconv"
	"strings"
	"time"

	"grantworth/grants"
	"grantworth/valuation"
)

// ModificationValue is one change of a grant measured on its date (ASC
// 718-20-35-3; IFRS 2.27, B43): the award under the terms just before the
// change and just after it, part by part (grants.Split), with the share
// price, curve and volatility of that date, its remaining term, and each
// part vested or not. When the holder leaves on the date, the vested parts
// of an option before the change are worth what exiting that day gives
// (see leaverBefore). For a cancellation with a replacement award only
// the cancelled award is valued here: the replacement's value on the date
// is its grant-date value in Valuation.Grants.
type ModificationValue struct {
	GrantID string
	Split   *grants.Split // the grant's parts and all its changes
	Index   int           // of this change in Split.Changes
	// Before and After are the inputs on the date under the terms before
	// and after, one Terms per part (After is empty for a replacement).
	Before, After grants.Inputs
	// BeforeValues and AfterValues are the fair values per share of each
	// part (AfterValues is nil for a replacement).
	BeforeValues, AfterValues []valuation.Result
	// Replacement is the grant that replaces the cancelled shares, if any.
	Replacement string
	// Status says whether the values were measured now, kept from the
	// prior close (Locked) or measured again (Corrected).
	Status Status
}

// Change is the change this value measures.
func (mv *ModificationValue) Change() *grants.Change { return &mv.Split.Changes[mv.Index] }

// LockedModification is one change's values as a prior close filed them,
// which a later close keeps like a grant-date value.
type LockedModification struct {
	Date time.Time
	// Terms says what the change was (Fingerprint): a change whose terms
	// differ now must be corrected.
	Terms string
	Parts []LockedPart
}

// LockedPart is one part's values at a change, as filed.
type LockedPart struct {
	VestBefore, VestAfter time.Time
	Before, After         valuation.Result
}

// Fingerprint says what change ch is, for matching it with a prior
// close's filing: its date, its kind and the terms before and after (not
// the shares it touches, which later-recorded events may change without
// changing any value per share).
func Fingerprint(ch *grants.Change) string {
	var b strings.Builder
	b.WriteString(ch.Date.Format(time.DateOnly))
	if ch.Cancellation != nil {
		b.WriteString("|replaced by " + ch.Cancellation.ReplacementGrantID)
	}
	for _, t := range []grants.Terms{ch.Before, ch.After} {
		fmt.Fprintf(&b, "|%s %s %d/%d %s %s", strconv.FormatFloat(t.Strike, 'g', -1, 64), t.ExpiryDate.Format(time.DateOnly),
			t.VestMonths, t.CliffMonths, opt(t.ExitRate), opt(t.ExerciseMultiple))
	}
	return b.String()
}

func opt(p *float64) string {
	if p == nil {
		return "-"
	}
	return strconv.FormatFloat(*p, 'g', -1, 64)
}

// modifications values every change, dated by the valuation date, of the
// grants v valued: the award before (and after) on the change's date,
// options on the lattice (all cores), warrants with dilution, RSUs in
// closed form. Changes a prior close filed keep its values (unless the
// grant is to be corrected); one whose terms changed since must be
// corrected.
func (p *pricer) modifications(v *Valuation, opts Options) error {
	_, end := p.s.Period()
	valued := map[string]bool{}
	for i := range v.Grants {
		valued[v.Grants[i].Inputs.Grant.ID] = true
	}
	correct := map[string]bool{}
	for _, id := range opts.Correct {
		correct[id] = true
	}
	type side struct {
		mv    int // index in v.Modifications
		after bool
		in    *grants.Inputs
	}
	var sides []side
	for i := range v.Grants {
		g := v.Grants[i].Inputs.Grant
		sp, err := p.s.SplitOf(g)
		if err != nil {
			return err
		}
		if sp == nil {
			continue
		}
		for k := range sp.Changes {
			ch := &sp.Changes[k]
			if ch.Date.After(end) {
				continue
			}
			mv := ModificationValue{GrantID: g.ID, Split: sp, Index: k, Status: Measured}
			vb, va := make([]time.Time, len(ch.Parts)), make([]time.Time, len(ch.Parts))
			for j, pt := range ch.Parts {
				vb[j], va[j] = pt.VestBefore, pt.VestAfter
			}
			if mv.Before, err = p.s.InputsAt(g, ch.Date, ch.Before, sp, vb); err != nil {
				return fmt.Errorf("modification of grant %s on %s: %w", g.ID, ch.Date.Format(time.DateOnly), err)
			}
			if ch.Cancellation != nil {
				mv.Replacement = ch.Cancellation.ReplacementGrantID
				if !valued[mv.Replacement] {
					return fmt.Errorf("grant %s: the replacement award %s of its cancellation on %s is not valued in this close", g.ID, mv.Replacement, ch.Date.Format(time.DateOnly))
				}
			} else if mv.After, err = p.s.InputsAt(g, ch.Date, ch.After, sp, va); err != nil {
				return fmt.Errorf("modification of grant %s on %s: %w", g.ID, ch.Date.Format(time.DateOnly), err)
			}
			v.Modifications = append(v.Modifications, mv)
		}
	}
	for i := range v.Modifications {
		mv := &v.Modifications[i]
		sides = append(sides, side{i, false, &mv.Before})
		if mv.Replacement == "" {
			sides = append(sides, side{i, true, &mv.After})
		}
	}
	// Options as lattice jobs, all at once; warrants and RSUs here.
	vals := make([][]valuation.Result, len(sides))
	var jobs []valuation.Job
	var jobOf []int
	for k, sd := range sides {
		in := sd.in
		g := in.Grant
		switch g.Instrument {
		case grants.RSU:
			rs := make([]valuation.Result, len(in.Terms))
			for j, t := range in.Terms {
				rs[j] = valuation.RSUValue(in.Market, t.YearsToVest)
			}
			vals[k] = rs
		case grants.Warrant:
			rs := make([]valuation.Result, len(in.Terms))
			for j, t := range in.Terms {
				var err error
				if rs[j], err = p.warrant(g, t, in.Market); err != nil {
					return fmt.Errorf("modification of grant %s on %s, part %d: %w", g.ID, in.MeasurementDate.Format(time.DateOnly), j+1, err)
				}
			}
			vals[k] = rs
		default:
			vest := make([]float64, len(in.Terms))
			for j, t := range in.Terms {
				vest[j] = t.YearsToVest
			}
			jobs = append(jobs, valuation.Job{Terms: in.Terms[0], VestYears: vest, Market: in.Market, Options: p.opts})
			jobOf = append(jobOf, k)
		}
	}
	uniq, index := dedupJobs(jobs)
	res := valuation.RunJobs(uniq, 0, nil)
	for j := range jobs {
		r := res[index[j]]
		in := sides[jobOf[j]].in
		if r.Err != nil {
			return fmt.Errorf("modification of grant %s on %s: %w", in.Grant.ID, in.MeasurementDate.Format(time.DateOnly), r.Err)
		}
		vals[jobOf[j]] = r.Tranches
	}
	for k, sd := range sides {
		mv := &v.Modifications[sd.mv]
		if sd.after {
			mv.AfterValues = vals[k]
		} else {
			mv.BeforeValues = vals[k]
		}
	}
	for i := range v.Modifications {
		leaverBefore(&v.Modifications[i])
	}
	// Values a prior close filed are kept.
	for i := range v.Modifications {
		mv := &v.Modifications[i]
		lk, ok := opts.Locks[mv.GrantID]
		if !ok {
			continue
		}
		ch := mv.Change()
		for _, lm := range lk.Modifications {
			if valuation.Days(lm.Date, ch.Date) != 0 {
				continue
			}
			if correct[mv.GrantID] {
				mv.Status = Corrected
				break
			}
			if err := keepModification(mv, &lm, lk.Close); err != nil {
				return err
			}
			break
		}
	}
	return nil
}

// leaverBefore values the vested parts of a leaver's options under the
// terms before the change as the lattice's exit does: exercised at once if
// in the money, else lapsed, so worth their intrinsic value on the date
// (the share price less the strike, or nothing). Without the change the
// leaver would have held them no longer; with it (a new expiry, an exit
// rate) the parts are valued on the lattice as the terms after say.
// Vested RSUs are shares, and a cancellation with a replacement is valued
// as the award it cancels: both are left as they are.
func leaverBefore(mv *ModificationValue) {
	ch := mv.Change()
	if !ch.Leaves || ch.Cancellation != nil || mv.Before.Grant.Instrument != grants.Option {
		return
	}
	intrinsic := max(mv.Before.Market.Spot-ch.Before.Strike, 0)
	for j, p := range ch.Parts {
		if p.Vested(ch.Date) {
			mv.BeforeValues[j] = valuation.Result{Value: intrinsic}
		}
	}
}

// keepModification puts the filed values lm in place of mv's, part by
// part, or says why it cannot.
func keepModification(mv *ModificationValue, lm *LockedModification, close time.Time) error {
	ch := mv.Change()
	if f := Fingerprint(ch); f != lm.Terms {
		return &LockError{mv.GrantID, fmt.Sprintf("its modification of %s is not the one the prior close of %s filed (%s then, %s now): name the grant to be corrected so that the change is measured again",
			day(ch.Date), day(close), lm.Terms, f)}
	}
	if len(lm.Parts) != len(ch.Parts) {
		return &LockError{mv.GrantID, fmt.Sprintf("its modification of %s touches %d parts of the grant now and %d at the prior close of %s (its vesting changed since): name the grant to be corrected",
			day(ch.Date), len(ch.Parts), len(lm.Parts), day(close))}
	}
	for j, pt := range ch.Parts {
		lp := lm.Parts[j]
		if valuation.Days(lp.VestBefore, pt.VestBefore) != 0 || valuation.Days(lp.VestAfter, pt.VestAfter) != 0 {
			return &LockError{mv.GrantID, fmt.Sprintf("part %d of its modification of %s vests on %s then %s now, %s then %s at the prior close of %s: name the grant to be corrected",
				j+1, day(ch.Date), day(pt.VestBefore), day(pt.VestAfter), day(lp.VestBefore), day(lp.VestAfter), day(close))}
		}
	}
	for j := range ch.Parts {
		mv.BeforeValues[j] = lm.Parts[j].Before
		if mv.AfterValues != nil {
			mv.AfterValues[j] = lm.Parts[j].After
		}
	}
	mv.Status = Locked
	return nil
}
