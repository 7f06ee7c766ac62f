package accounting

import (
	"fmt"
	"math"
	"strings"
	"time"

	"grantworth/grants"
	"grantworth/grants/pricing"
)

// Cause is why a catch-up is booked: what changed the history of closed
// periods.
type Cause string

// The causes of catch-ups, in the order one is chosen as a grant's main
// cause when it has several.
const (
	CauseCorrection     Cause = "fair_value_corrected"        // the grant-date value was measured again (a correction of an error)
	CausePurpose        Cause = "purpose_changed"             // booked as compensation, issued in a financing now (or the reverse)
	CauseLateGrant      Cause = "late_grant"                  // a grant dated in a closed period, first recorded now
	CauseLateEvent      Cause = "late_event"                  // an event dated in a closed period, first recorded now
	CauseEventRemoved   Cause = "event_removed"               // an event the prior close applied is no longer recorded
	CauseVesting        Cause = "vesting_changed"             // the grant's tranches changed
	CauseTerms          Cause = "terms_changed"               // the service period changed (grant date, vest start)
	CauseRestated       Cause = "restated"                    // none of the above found, yet the history differs
	CauseEstimateChange Cause = "forfeiture_estimate_changed" // the pre-vesting forfeiture rate changed (a change in estimate)
)

// CatchUp is compensation booked in the open period for a closed one
// (ASC 250-10-45-17 for a change in estimate, ASC 718-10-35-3 for a
// forfeiture estimate; a closed period is never restated). Amount is
// what it adds to the period's expense (negative for a reversal).
type CatchUp struct {
	GrantID   string
	Cause     Cause
	Detail    string // every cause found, in words, with cells
	Amount    float64
	Liability bool // booked against the award liability rather than equity
	// Financing is compensation reversed on a warrant the prior close
	// booked as compensation whose purpose is financing now: booked
	// against the financing's proceeds.
	Financing bool
}

// Reconciliation walks from the prior close to this one: the
// unrecognized compensation cost, the period's expense, the liability of
// liability-classified awards and the awards outstanding; and lists the
// catch-ups. The warrants issued in financings have their own roll
// (FinancingWarrant).
type Reconciliation struct {
	Prior        *Prior
	Unrecognized Walk
	Expense      Walk
	Liability    *Walk // nil without a liability-classified award
	Outstanding  []CountWalk
	CatchUps     []CatchUp
	// Locked, Corrected and Measured count the grants whose grant-date
	// values were kept from the prior close, measured again as a
	// correction, and measured for the first time.
	Locked, Corrected, Measured int
}

// Check verifies every walk of the reconciliation.
func (r *Reconciliation) Check() error {
	for _, w := range []Walk{r.Unrecognized, r.Expense} {
		if err := w.Check(); err != nil {
			return err
		}
	}
	if r.Liability != nil {
		if err := r.Liability.Check(); err != nil {
			return err
		}
	}
	for _, c := range r.Outstanding {
		if err := c.Check(); err != nil {
			return err
		}
	}
	return nil
}

// grantStates are one award's cost and cumulative cost in the views the
// reconciliation walks through (see the package notes).
type grantStates struct {
	old                                         bool // granted on or before the prior close
	costA0, costA, costB1, costB2, costM, costC float64
	cumA0, cumA, cumB1, cumB2, cumD0            float64
	bookedCost, bookedCum                       float64
	liabilityOpen, settledOpen, fvOpen          float64
	prior                                       *PriorGrant
	ledger                                      *awardLedger
	catchUps                                    []CatchUp // of a grant granted by the prior close (catchUps)
}

// reconciling is what each grant's views for the reconciliation read
// beyond the ledger and the prior close: the schedule, for the cells the
// catch-ups name, and the grants measured again as corrections, by ID.
type reconciling struct {
	s         *grants.Schedule
	corrected map[string]*pricing.GrantValue
}

// correctedOf are the grants v measured again as corrections, by ID,
// found once (a look-up per grant, not a scan of the ledger for each).
func correctedOf(v *pricing.Valuation) map[string]*pricing.GrantValue {
	corrected := map[string]*pricing.GrantValue{}
	for i := range v.Grants {
		if gv := &v.Grants[i]; gv.Status == pricing.Corrected {
			corrected[gv.Inputs.Grant.ID] = gv
		}
	}
	return corrected
}

// states looks at ledger l in the views of the reconciliation to the
// prior close pr: A′ restated at the prior close at its forfeiture rate,
// A at today's, B1 with the period's forfeitures, B2 with all the period's
// events, M with the period's changes of terms too (modify.go), C knowing
// the leavers through the period end; and D0, this close without the
// period's changes of terms.
func (p *period) states(l *awardLedger, pr *Prior) grantStates {
	P, N := dayNum(pr.ValuationDate), dayNum(p.end)
	st := grantStates{ledger: l, old: l.grantN <= P}
	b := P
	if !st.old {
		b = l.grantN - 1
	}
	upTo := func(x int) func(move) bool { return func(m move) bool { return m.dayN <= x } }
	prev, _ := pr.Policy.normalized()
	ratePrior := 0.0
	if p.pol.Forfeitures == grants.Estimate {
		ratePrior = prev.PreVestingForfeitureRate
	}
	cut := P + 1 // the period's changes of terms are left out until view M
	st.costA, st.cumA = l.costs(p.pol, view{d: b, known: b, rate: l.rate, keep: upTo(b), from: cut})
	st.costA0, st.cumA0 = st.costA, st.cumA
	if st.old {
		st.costA0, st.cumA0 = l.costs(p.pol, view{d: b, known: b, rate: ratePrior, keep: upTo(b), from: cut})
	}
	forfeits := func(m move) bool { return m.dayN <= b || m.dayN <= N && m.kind == grants.Forfeited }
	st.costB1, st.cumB1 = l.costs(p.pol, view{d: b, known: b, rate: l.rate, keep: forfeits, from: cut})
	st.costB2, st.cumB2 = l.costs(p.pol, view{d: b, known: b, rate: l.rate, keep: upTo(N), from: cut})
	st.costM, _ = l.costs(p.pol, view{d: b, known: b, rate: l.rate, keep: upTo(N)})
	st.costC, _ = l.costs(p.pol, view{d: b, known: N, rate: l.rate, keep: upTo(N)})
	st.cumD0 = l.atView(p.pol, view{d: N, known: N, rate: l.rate, from: cut}, l.buffers().comp[:len(l.tr)]).compTotal()
	if pg, ok := pr.grant(l.in.Grant.ID); ok {
		st.prior = pg
		st.bookedCost, st.bookedCum = pg.Cost, pg.Cumulative
		st.liabilityOpen, st.settledOpen = pg.LiabilityEnd, pg.Reclassified
		st.fvOpen = pg.LiabilityEnd + pg.Reclassified - pg.Cumulative
	}
	return st
}

// reconcile walks from the prior close to rep and d, the period's
// attribution and disclosures; sts are the states of p's compensation
// ledgers in order (those of rep.Grants), with their catch-ups; s and v
// give the cells and the counts of grants locked, corrected and measured. A financing warrant the prior close
// booked as compensation has that compensation reversed, a catch-up.
func (p *period) reconcile(pr *Prior, sts []grantStates, rep *ExpenseReport, d *Disclosure, s *grants.Schedule, v *pricing.Valuation) (*Reconciliation, error) {
	r := &Reconciliation{Prior: pr}
	var K, Q, Nw, F, R, Mod float64     // cost moves
	var Kc, Qc, S, Fc, Cc, Smod float64 // cumulative moves
	var hasLiability bool
	var lOpen, lComp, lReclass, lEnd float64
	for i, st := range sts {
		ge := &rep.Grants[i]
		l := st.ledger
		if st.old {
			K += st.costA0 - st.bookedCost
			Q += st.costA - st.costA0
			Kc += st.cumA0 - st.bookedCum
			Qc += st.cumA - st.cumA0
		} else {
			Nw += st.costA
		}
		F += st.costB2 - st.costA
		Mod += st.costM - st.costB2
		Q += st.costC - st.costM
		R += ge.Cost - st.costC // a liability-classified award remeasured in the period
		Fc += st.cumB1 - st.cumA
		Cc += st.cumB2 - st.cumB1
		S += st.cumD0 - st.cumB2
		Smod += ge.Cumulative - st.cumD0
		if l.liability || st.prior != nil && st.prior.Liability {
			hasLiability = true
			lOpen += st.liabilityOpen
			lComp += ge.Period
			lReclass -= ge.ReclassifiedEquity
			lEnd += ge.LiabilityEnd
		}
		r.CatchUps = append(r.CatchUps, st.catchUps...)
	}
	for _, fw := range rep.Financing {
		pg, ok := pr.grant(fw.GrantID)
		if !ok || pg.Financing {
			continue
		}
		K -= pg.Cost
		Kc += fw.CompensationReversed
		g, _ := s.Grant(fw.GrantID)
		r.CatchUps = append(r.CatchUps, CatchUp{GrantID: fw.GrantID, Cause: CausePurpose, Amount: fw.CompensationReversed, Financing: true,
			Detail: fmt.Sprintf("its purpose is financing now (%s), compensation at the prior close: issued in a financing, it is not share-based payment, so the compensation of %.2f the prior close booked for it is reversed; its value goes with the financing", purposeCell(s, g), pg.Cumulative)})
	}
	asOf := func(t time.Time) string { return t.Format(time.DateOnly) }
	var err error
	r.Unrecognized, err = newWalk(&WalkLine{Key: "opening", Label: "Unrecognized cost at the prior close of " + asOf(pr.ValuationDate), Exact: pr.Unrecognized},
		[]WalkLine{
			{Key: "new_grants", Label: "Grants of the period, expected cost at grant", Exact: Nw},
			{Key: "expense", Label: "Compensation expense of the period", Exact: -rep.Period},
			{Key: "forfeitures_and_cancellations", Label: "Forfeitures (expected cost released) and cancellations (estimate settled in full)", Exact: F},
			{Key: "modifications", Label: "Modifications of the period (incremental fair value, and Type III and replacement effects)", Exact: Mod},
			{Key: "forfeiture_estimate", Label: "Changes in the forfeiture estimate", Exact: Q},
			{Key: "catch_ups", Label: "Catch-ups for closed periods (cost)", Exact: K},
			{Key: "remeasurement", Label: "Remeasurement of liability-classified awards to fair value", Exact: R},
		}, map[string]bool{"expense": true},
		WalkLine{Key: "closing", Label: "Unrecognized cost at this close, " + asOf(p.end), Exact: rep.Unrecognized})
	if err != nil {
		return nil, err
	}
	r.Expense, err = newWalk(nil,
		[]WalkLine{
			{Key: "service", Label: "Service rendered in the period (with the remeasurement of liability-classified awards)", Exact: S},
			{Key: "forfeitures", Label: "Forfeitures in the period (cost reversed)", Exact: Fc},
			{Key: "cancellations", Label: "Cancellations in the period (unrecognized cost recognized at once)", Exact: Cc},
			{Key: "modifications", Label: "Modifications of the period (cost recognized because of them)", Exact: Smod},
			{Key: "forfeiture_estimate", Label: "Change in the forfeiture rate, on cost recognized before the period", Exact: Qc},
			{Key: "catch_ups", Label: "Catch-ups for closed periods", Exact: Kc},
		}, nil,
		WalkLine{Key: "closing", Label: "Compensation expense of the period", Exact: rep.Period})
	if err != nil {
		return nil, err
	}
	if hasLiability {
		w, err := newWalk(&WalkLine{Key: "opening", Label: "Liability of liability-classified awards at the prior close of " + asOf(pr.ValuationDate), Exact: lOpen},
			[]WalkLine{
				{Key: "compensation", Label: "Compensation expense (liability-classified awards, remeasured to fair value)", Exact: lComp},
				{Key: "reclassified", Label: "Exercised awards reclassified to equity", Exact: lReclass},
			}, nil,
			WalkLine{Key: "closing", Label: "Liability of liability-classified awards at this close, " + asOf(p.end), Exact: lEnd})
		if err != nil {
			return nil, err
		}
		r.Liability = &w
	}
	r.Outstanding = countWalks(pr, sts, d)
	for _, gv := range v.Grants {
		switch gv.Status {
		case pricing.Locked:
			r.Locked++
		case pricing.Corrected:
			r.Corrected++
		case pricing.Measured:
			r.Measured++
		}
	}
	return r, r.Check()
}

// countWalks rolls the number of awards of each instrument from the
// counts the prior close filed, through the restatement of closed
// periods, to the roll-forwards of the disclosures.
func countWalks(pr *Prior, sts []grantStates, d *Disclosure) []CountWalk {
	opening := map[grants.Instrument]int64{}
	for _, st := range sts {
		if st.prior != nil {
			opening[st.ledger.in.Grant.Instrument] += st.prior.Outstanding
		}
	}
	var out []CountWalk
	for _, rf := range []RollForward{d.Options, d.Warrants, d.RSUs} {
		open := opening[rf.Instrument]
		if open == 0 && rf.Start.Shares == 0 && rf.Granted.Shares == 0 && rf.End.Shares == 0 {
			continue
		}
		what := "outstanding"
		if rf.Nonvested {
			what = "nonvested"
		}
		lines := []CountLine{
			{"opening", fmt.Sprintf("%s at the prior close of %s", capital(what), pr.ValuationDate.Format(time.DateOnly)), open},
			{"catch_ups", "Catch-ups for closed periods (events or grants recorded late)", rf.Start.Shares - open},
			{"granted", "Granted", rf.Granted.Shares},
		}
		if rf.Nonvested {
			lines = append(lines, CountLine{"vested", "Vested", -rf.Vested.Shares})
		} else {
			lines = append(lines, CountLine{"exercised", "Exercised", -rf.Exercised.Shares})
		}
		lines = append(lines, CountLine{"forfeited", "Forfeited", -rf.Forfeited.Shares}, CountLine{"cancelled", "Cancelled", -rf.Cancelled.Shares})
		if !rf.Nonvested {
			lines = append(lines, CountLine{"expired", "Expired", -rf.Expired.Shares})
		}
		lines = append(lines, CountLine{"closing", capital(what) + " at this close", rf.End.Shares})
		out = append(out, CountWalk{Instrument: rf.Instrument, Nonvested: rf.Nonvested, Lines: lines})
	}
	return out
}

func capital(s string) string { return strings.ToUpper(s[:1]) + s[1:] }

// catchUps are the catch-ups of one grant granted by the prior close:
// the compensation its restated history adds for the closed periods,
// with every cause found, and apart the effect of a changed forfeiture
// rate on the cost it had recognized.
func catchUps(st grantStates, l *awardLedger, pr *Prior, s *grants.Schedule, corrected map[string]*pricing.GrantValue) []CatchUp {
	g := l.in.Grant
	var out []CatchUp
	causes, details := diagnose(st, l, pr, s, corrected)
	if amt := st.cumA0 - st.bookedCum; math.Abs(amt) >= minEntry || len(causes) > 0 {
		if len(causes) == 0 {
			causes = []Cause{CauseRestated}
			details = []string{"the cost recomputed now for the closed periods differs from what the prior close booked (another grantworth version, or an input it does not compare)"}
		}
		out = append(out, CatchUp{GrantID: g.ID, Cause: causes[0], Detail: strings.Join(details, "; "), Amount: amt, Liability: l.liability})
	}
	if amt := st.cumA - st.cumA0; math.Abs(amt) >= minEntry {
		a := s.InForce()
		prev, _ := pr.Policy.normalized()
		out = append(out, CatchUp{GrantID: g.ID, Cause: CauseEstimateChange, Amount: amt, Liability: l.liability,
			Detail: fmt.Sprintf("the pre-vesting forfeiture rate is %g now (%s), %g at the prior close: the cost recognized to it is trued up", a.PreVestingForfeitureRate, a.Refs["pre_vesting_forfeiture_rate"], prev.PreVestingForfeitureRate)})
	}
	return out
}

// diagnose finds why a grant's history differs from what the prior close
// filed, the causes in the order of the Cause constants; corrected are
// the grants measured again as corrections, by ID.
func diagnose(st grantStates, l *awardLedger, pr *Prior, s *grants.Schedule, corrected map[string]*pricing.GrantValue) ([]Cause, []string) {
	g := l.in.Grant
	var found [len(causeOrder)][]string // by causeOrder: a grant nearly always has none
	add := func(c Cause, format string, args ...any) {
		k := causeIndex(c)
		found[k] = append(found[k], fmt.Sprintf(format, args...))
	}
	P := dayNum(pr.ValuationDate)
	if gv, ok := corrected[g.ID]; ok {
		add(CauseCorrection, "the grant-date fair value is measured again as a correction: %.4f a share then, %.4f now (weighted by shares)", lockedAverage(gv, l), valuedAverage(l))
	}
	pg := st.prior
	if pg != nil && pg.Financing {
		add(CausePurpose, "its purpose is compensation now (%s), financing at the prior close: its cost is recognized from its grant date", purposeCell(s, g))
	}
	if pg == nil {
		add(CauseLateGrant, "granted on %s, in a closed period, and first valued now", g.GrantDate.Format(time.DateOnly))
	} else {
		// The events filed, each matched at most once by one recorded
		// now with the same day, kind and shares; a grant has few, so a
		// scan, not a map.
		matched := make([]bool, len(pg.Events))
		same := func(a, b grants.Event) bool {
			return dayNum(a.Date) == dayNum(b.Date) && a.Kind == b.Kind && a.Shares == b.Shares
		}
	now:
		for _, e := range l.in.Events {
			if dayNum(e.Date) > P {
				continue
			}
			for j, f := range pg.Events {
				if !matched[j] && same(f, e) {
					matched[j] = true
					continue now
				}
			}
			add(CauseLateEvent, "%s %s shares on %s (%s) is first recorded now", e.Kind, groupInt(e.Shares), e.Date.Format(time.DateOnly), s.Cell(grants.SheetEvents, "date", e.Row))
		}
		for j, e := range pg.Events {
			if !matched[j] {
				add(CauseEventRemoved, "%s %s shares on %s, applied by the prior close, is no longer recorded", e.Kind, groupInt(e.Shares), e.Date.Format(time.DateOnly))
			}
		}
		diagnoseModifications(pg, l, P, s, add)
		if !sameTranches(pg.Tranches, l.in) {
			add(CauseVesting, "the vesting changed: %d tranches of %s shares then, %d of %s now", len(pg.Tranches), groupInt(trancheShares(pg.Tranches)), l.in.tranches(), groupInt(g.Shares))
		}
		if !pg.ServiceStart.IsZero() && dayNum(pg.ServiceStart) != l.startN {
			add(CauseTerms, "the service period starts on %s now, %s then", l.start.Format(time.DateOnly), pg.ServiceStart.Format(time.DateOnly))
		}
	}
	var causes []Cause
	var details []string
	for k, c := range causeOrder {
		if ds := found[k]; len(ds) > 0 {
			causes = append(causes, c)
			details = append(details, ds...)
		}
	}
	return causes, details
}

// causeOrder are the causes diagnose finds, in the order it lists them.
var causeOrder = [...]Cause{CauseCorrection, CausePurpose, CauseLateGrant, CauseLateEvent, CauseEventRemoved, CauseLateModification, CauseModificationRemoved, CauseVesting, CauseTerms}

// causeIndex is c's place in causeOrder.
func causeIndex(c Cause) int {
	for k, o := range causeOrder {
		if o == c {
			return k
		}
	}
	panic("accounting: cause " + string(c) + " not in causeOrder")
}

// sameTranches reports whether award a's tranches vest on the days of
// those filed, with their shares.
func sameTranches(filed []PriorTranche, a *Award) bool {
	if len(filed) != a.tranches() {
		return false
	}
	for i, t := range filed {
		if now, _ := a.tranche(i); dayNum(t.VestDate) != dayNum(now.VestDate) || t.Shares != now.Shares {
			return false
		}
	}
	return true
}

func trancheShares(ts []PriorTranche) int64 {
	var n int64
	for _, t := range ts {
		n += t.Shares
	}
	return n
}

// lockedAverage and valuedAverage are a corrected grant's filed and new
// grant-date fair values per share, weighted by shares (for a
// liability-classified warrant, its values at the grant date).
func lockedAverage(gv *pricing.GrantValue, l *awardLedger) float64 {
	if gv.Lock == nil {
		return 0
	}
	var n, x float64
	for _, t := range l.tr {
		for _, lt := range gv.Lock.Tranches {
			if dayNum(lt.VestDate) == int(t.origN) {
				n += float64(t.Tranche.Shares)
				x += float64(t.Tranche.Shares) * lt.Result.Value
			}
		}
	}
	if rs := gv.Lock.Revaluations; len(rs) > 0 && dayNum(rs[0].Date) == l.grantN && len(rs[0].Values) == len(l.tr) {
		for i, t := range l.tr {
			n += float64(t.Tranche.Shares)
			x += float64(t.Tranche.Shares) * rs[0].Values[i]
		}
	}
	if n == 0 {
		return 0
	}
	return x / n
}

func valuedAverage(l *awardLedger) float64 {
	var n, x float64
	for _, t := range l.tr {
		n += float64(t.Tranche.Shares)
		x += float64(t.Tranche.Shares) * t.FairValue
	}
	if n == 0 {
		return 0
	}
	return x / n
}

// groupInt writes n with thousands separators.
func groupInt(n int64) string {
	s := fmt.Sprint(n)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	for i, r := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}

// purposeCell is where grant g's purpose was read: its cell, or for a
// schedule built in code the sheet.
func purposeCell(s *grants.Schedule, g grants.Grant) string {
	if r, ok := g.Refs["purpose"]; ok {
		return r.String()
	}
	if g.Row > 0 {
		return s.Cell(grants.SheetGrants, "purpose", g.Row).String()
	}
	return "the Grants sheet"
}
