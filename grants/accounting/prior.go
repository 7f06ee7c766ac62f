package accounting

import (
	"errors"
	"fmt"
	"sort"
	"strings"
	"time"

	"grantworth/grants"
	"grantworth/grants/pricing"
	"grantworth/internal/slab"
	"grantworth/valuation"
)

// ErrPrior is wrapped by every error that refuses a prior close or a
// schedule against it: the input is at fault, not the program.
var ErrPrior = errors.New("the prior close cannot be used")

// PriorError is a refusal of a prior close, in words.
type PriorError struct{ Msg string }

func (e *PriorError) Error() string { return e.Msg }
func (e *PriorError) Unwrap() error { return ErrPrior }

func refuse(format string, args ...any) error {
	return &PriorError{Msg: fmt.Sprintf(format, args...)}
}

// Prior is what an earlier close filed that a later one needs: the
// grant-date values it measured, the cost it recognized per grant and
// tranche, the liability and the counts at its valuation date, the
// events it knew of and the periods it booked. report.ReadPrior reads it
// from that close's valuation.json.
type Prior struct {
	// Path is the file read, SHA256 the SHA-256 of its bytes (in hex),
	// once known: a prior returned while its file was still being hashed
	// (report.ReadPriorHashing) has it after Hashed.
	Path, SHA256  string
	ToolVersion   string
	SchemaVersion int
	Company       string
	Currency      string
	ValuationDate time.Time
	PeriodStart   time.Time
	Policy        Policy         // in force at its valuation date
	Periods       []PeriodAmount // as booked, its own period last
	Unrecognized  float64        // at its valuation date, as filed
	Grants        []PriorGrant   // in its ledger order
	// LiabilityChangeApart is set for a close that showed a
	// liability-classified award's change in fair value apart from
	// compensation (grantworth's format 1): its booked cost cannot be
	// carried on by the rule of ASC 718-30-35-3.
	LiabilityChangeApart bool
	// Studies are the checks it filed (sensitivity, convergence, Monte
	// Carlo) and its grants' order, for a rerun to reuse
	// (pricing.Options.Studies).
	Studies pricing.Studies

	byID    map[string]int // grant's index: position by grant ID
	indexed int            // len(Grants) when byID was made

	hashing func() (string, error) // waits for SHA256 (HashLater)
}

// HashLater says that p's SHA256 is still being computed: sum waits for
// it, or for the error that kept the file from being read through.
func (p *Prior) HashLater(sum func() (string, error)) { p.hashing = sum }

// Hashed waits for p's SHA256 if it is still being computed (HashLater)
// and sets it; the error is the one that kept the file from being read
// through, which fails the run as a failed reading would have. What
// reads SHA256 calls it first, from one goroutine.
func (p *Prior) Hashed() error {
	if p.hashing == nil {
		return nil
	}
	sum, err := p.hashing()
	if err != nil {
		return err
	}
	p.SHA256, p.hashing = sum, nil
	return nil
}

// PriorGrant is one grant as a prior close filed it.
type PriorGrant struct {
	ID         string
	Instrument grants.Instrument
	Liability  bool // a liability-classified warrant
	// Financing is a warrant the close kept apart as issued in a
	// financing: no compensation, only its liability and measurements.
	Financing       bool
	GrantDate       time.Time
	ServiceStart    time.Time
	MeasurementDate time.Time
	ExpiryDate      time.Time
	// Inputs are the valuation inputs it was measured with, by name
	// (share_price, volatility, dividend_yield, exercise_multiple,
	// post_vesting_exit_rate, risk_free_rate, strike), with their cells.
	Inputs   map[string]grants.Source
	Tranches []PriorTranche
	// ValuationKey is the digest of every number its filed values were
	// measured with (pricing.GrantValue.Key); "" if none was filed.
	ValuationKey string
	// Status is where its values came from in that close (measured,
	// locked, corrected, remeasured).
	Status pricing.Status

	Cost, Cumulative, Unrecognized float64
	// Liability-classified warrants: the liability at its valuation date
	// and the liability reclassified to equity on exercise, in all.
	LiabilityEnd, Reclassified float64
	Outstanding                int64 // options and warrants outstanding; RSUs nonvested
	Events                     []grants.Event
	// Remeasurements are a liability-classified warrant's fair values at
	// its grant date (first, when it could be valued then), at the past
	// quarter ends and at the close's valuation date.
	Remeasurements []Remeasurement
	// Modifications are the changes of its terms the close measured, with
	// their values per part (modify.go).
	Modifications []pricing.LockedModification
}

// PriorTranche is one tranche as a prior close filed it.
type PriorTranche struct {
	Index    int
	VestDate time.Time
	Shares   int64
	Result   valuation.Result   // the fair value per share with its error estimate, expected term and steps
	BSM      pricing.Comparison // the closed-form comparison: value and term
	// RiskFreeRate and SimplifiedRate are the zero rates at the tranche's
	// expiry and at the comparison's term.
	RiskFreeRate, SimplifiedRate float64
	Cumulative                   float64 // compensation recognized through the close's valuation date
}

// grant returns the prior close's grant id (the first of that id), by
// an index made on the first call (again when the grants are appended
// to): a close looks up every grant of a ledger that may have a hundred
// thousand.
func (p *Prior) grant(id string) (*PriorGrant, bool) {
	p.index()
	if i, ok := p.byID[id]; ok && p.Grants[i].ID == id {
		return &p.Grants[i], true
	}
	return nil, false
}

// index makes the index grant looks grants up by, unless it is made
// already: the workers of a close look up at once, so Close makes it
// before they start.
func (p *Prior) index() {
	if p.byID == nil || p.indexed != len(p.Grants) {
		p.byID = make(map[string]int, len(p.Grants))
		for i := len(p.Grants) - 1; i >= 0; i-- {
			p.byID[p.Grants[i].ID] = i
		}
		p.indexed = len(p.Grants)
	}
}

// Open checks schedule s against the prior close p and opens the period
// the day after p's valuation date: it refuses (an error wrapping
// ErrPrior) a prior of another company or currency, one whose valuation
// date is not before s's, a change of attribution or forfeiture policy,
// and a schedule that lacks a grant p filed. A period_start the Company
// sheet gives that differs is replaced, with a warning.
func Open(s *grants.Schedule, p *Prior) (warnings []string, err error) {
	co := s.Company
	if !strings.EqualFold(strings.TrimSpace(p.Company), strings.TrimSpace(co.Name)) {
		return nil, refuse("the prior close %s is of %q, this schedule of %q (%s): a close reconciles only to the same company's last one",
			p.Path, p.Company, co.Name, co.Refs["company_name"])
	}
	if p.Currency != "" && !strings.EqualFold(p.Currency, co.Currency) {
		return nil, refuse("the prior close %s is in %s, this schedule in %s (%s)", p.Path, p.Currency, co.Currency, co.Refs["currency"])
	}
	if valuation.Days(p.ValuationDate, co.ValuationDate) <= 0 {
		return nil, refuse("the prior close %s is of %s, not before this valuation date %s: the prior must be an earlier close",
			p.Path, day(p.ValuationDate), day(co.ValuationDate))
	}
	pol, _ := PolicyOf(s).normalized()
	prev, _ := p.Policy.normalized()
	a := s.InForce()
	if pol.Attribution != prev.Attribution {
		return nil, refuse("attribution is %s now (%s) but was %s at the prior close of %s: a change of accounting policy is not booked by grantworth; keep the policy, or start a new chain without --prior",
			pol.Attribution, a.Refs["attribution"], prev.Attribution, day(p.ValuationDate))
	}
	if pol.Forfeitures != prev.Forfeitures {
		return nil, refuse("forfeitures is %s now (%s) but was %s at the prior close of %s: a change of accounting policy is not booked by grantworth; keep the policy, or start a new chain without --prior",
			pol.Forfeitures, a.Refs["forfeitures"], prev.Forfeitures, day(p.ValuationDate))
	}
	if p.LiabilityChangeApart {
		for _, pg := range p.Grants {
			if g, ok := s.Grant(pg.ID); ok && pg.Liability && !g.IsFinancing() {
				return nil, refuse("the prior close %s (format version %d) showed the change in fair value of liability-classified warrant %s apart from compensation; it is compensation now (ASC 718-30-35-3): value the quarter of %s again with this grantworth and give its output",
					p.Path, p.SchemaVersion, pg.ID, day(p.ValuationDate))
			}
		}
	}
	valued := map[string]bool{}
	for _, g := range s.Grants {
		if valuation.Days(co.ValuationDate, g.GrantDate) <= 0 {
			valued[g.ID] = true
		}
	}
	var missing []string
	for _, pg := range p.Grants {
		if !valued[pg.ID] {
			missing = append(missing, pg.ID)
		}
	}
	if len(missing) > 0 {
		sort.Strings(missing)
		return nil, refuse("%s filed in the prior close of %s %s not on the Grants sheet (or dated after the valuation date): the cost booked for %s cannot just vanish; keep the rows and record what happened on the Events sheet",
			listOf("grant", missing), day(p.ValuationDate), isAre(len(missing)), itThem(len(missing)))
	}
	start := civilDay(p.ValuationDate).AddDate(0, 0, 1)
	if _, given := co.Refs["period_start"]; given && !civilDay(co.PeriodStart).Equal(start) {
		warnings = append(warnings, fmt.Sprintf("%s (period_start) %s is replaced by %s, the day after the prior close of %s: the period runs from the last close",
			co.Refs["period_start"], day(co.PeriodStart), day(start), day(p.ValuationDate)))
	}
	s.Company.PeriodStart = start
	return warnings, nil
}

func day(t time.Time) string { return t.Format(time.DateOnly) }

func listOf(what string, ids []string) string {
	const most = 10
	more := ""
	if len(ids) > most {
		more = fmt.Sprintf(" and %d more", len(ids)-most)
		ids = ids[:most]
	}
	if len(ids) == 1 {
		return what + " " + ids[0]
	}
	return what + "s " + strings.Join(ids, ", ") + more
}

func isAre(n int) string {
	if n == 1 {
		return "is"
	}
	return "are"
}

func itThem(n int) string {
	if n == 1 {
		return "it"
	}
	return "them"
}

// Locks are the measurements p filed that a later close keeps
// (pricing.Lock): every grant's tranche values with the inputs they were
// measured with, and a liability-classified warrant's values at its grant
// date, past quarter ends and p's valuation date. A nil p has none.
func (p *Prior) Locks() map[string]pricing.Lock {
	if p == nil {
		return nil
	}
	out := make(map[string]pricing.Lock, len(p.Grants))
	// The equity awards' filed tranches cut from blocks (internal/slab):
	// few allocations for a ledger's hundreds of thousands, and a lock
	// whose tranches outlive the valuing (a corrected grant's) keeps one
	// block alive, not them all.
	var blocks slab.Slab[pricing.LockedTranche]
	for i := range p.Grants {
		pg := &p.Grants[i]
		lk := pricing.Lock{Close: p.ValuationDate, Liability: pg.Liability, MeasurementDate: pg.MeasurementDate, ExpiryDate: pg.ExpiryDate, Inputs: pg.Inputs, Key: pg.ValuationKey,
			Modifications: pg.Modifications, Measured: pg.Status == pricing.Measured || pg.Status == pricing.Corrected}
		if pg.Liability {
			if len(pg.Remeasurements) > 0 {
				lk.Revaluations = make([]pricing.Revaluation, 0, len(pg.Remeasurements))
			}
			for _, r := range pg.Remeasurements {
				lk.Revaluations = append(lk.Revaluations, pricing.Revaluation{Date: r.Date, Values: r.FairValue})
			}
		} else if len(pg.Tranches) > 0 {
			lk.Tranches = blocks.Take(len(pg.Tranches))
			for k := range pg.Tranches {
				t := &pg.Tranches[k]
				lk.Tranches[k] = pricing.LockedTranche{VestDate: t.VestDate, Result: t.Result, BSM: t.BSM,
					RiskFreeRate: t.RiskFreeRate, SimplifiedRate: t.SimplifiedRate}
			}
		}
		out[pg.ID] = lk
	}
	return out
}

// Filed is what the close b of schedule s, over the grants v valued, files
// for the next close: the Prior that report.ReadPrior reads back from its
// valuation.json (with no Path or SHA256).
func Filed(s *grants.Schedule, v *pricing.Valuation, b *Books) *Prior {
	rep := b.Expense
	p := &Prior{Company: s.Company.Name, Currency: s.Company.Currency, ValuationDate: rep.PeriodEnd, PeriodStart: rep.PeriodStart,
		Policy: rep.Policy, Unrecognized: rep.Unrecognized}
	for _, pa := range rep.Periods {
		pa.Current = false
		p.Periods = append(p.Periods, pa)
	}
	booked := make(map[string]*GrantExpense, len(rep.Grants))
	for i := range rep.Grants {
		booked[rep.Grants[i].GrantID] = &rep.Grants[i]
	}
	financing := make(map[string]*FinancingWarrant, len(rep.Financing))
	for i := range rep.Financing {
		financing[rep.Financing[i].GrantID] = &rep.Financing[i]
	}
	for i := range v.Grants {
		gv := &v.Grants[i]
		in, g := &gv.Inputs, gv.Inputs.Grant
		if fw, ok := financing[g.ID]; ok {
			p.Grants = append(p.Grants, filedFinancing(gv, fw))
			continue
		}
		ge, ok := booked[g.ID]
		if !ok {
			continue
		}
		pg := PriorGrant{ID: g.ID, Instrument: g.Instrument, Liability: ge.Liability, GrantDate: g.GrantDate, ServiceStart: ge.ServiceStart,
			MeasurementDate: in.MeasurementDate, ExpiryDate: g.ExpiryDate, Inputs: map[string]grants.Source{}, ValuationKey: gv.Key, Status: gv.Status,
			Cost: ge.Cost, Cumulative: ge.Cumulative, Unrecognized: ge.Unrecognized,
			LiabilityEnd: ge.LiabilityEnd, Reclassified: ge.ReclassifiedToDate, Outstanding: ge.Outstanding}
		for _, e := range ge.Events {
			pg.Events = append(pg.Events, grants.Event{GrantID: g.ID, Date: e.Date, Kind: e.Kind, Shares: e.Shares})
		}
		filedMeasurements(&pg, gv, func(k int) float64 { return ge.Tranches[k].Cumulative })
		if pg.Liability {
			at0 := make([]float64, len(ge.Tranches))
			for k, t := range ge.Tranches {
				at0[k] = t.GrantDateFairValue
			}
			pg.Remeasurements = append([]Remeasurement{{Date: g.GrantDate, FairValue: at0}}, ge.Remeasurements...)
		}
		pg.Modifications = filedModifications(v, g.ID)
		p.Grants = append(p.Grants, pg)
	}
	p.Studies = v.FiledStudies()
	return p
}

// filedMeasurements gives pg the inputs and tranche values of gv, each
// tranche with the cumulative cost cum gives it.
func filedMeasurements(pg *PriorGrant, gv *pricing.GrantValue, cum func(k int) float64) {
	in, g := &gv.Inputs, gv.Inputs.Grant
	for _, n := range in.Named() {
		pg.Inputs[n.Key] = *n.Source
	}
	if g.Instrument != grants.RSU {
		pg.Inputs["strike"] = grants.Source{Value: g.Strike, Ref: g.Refs["strike"]}
	}
	for k, t := range in.Tranches {
		pg.Tranches = append(pg.Tranches, PriorTranche{Index: t.Index, VestDate: t.VestDate, Shares: t.Shares,
			Result:       valuation.Result{Value: gv.Results[k].Value, ErrorEstimate: gv.Results[k].ErrorEstimate, ExpectedTermYears: gv.Results[k].ExpectedTermYears, Steps: gv.Results[k].Steps},
			BSM:          gv.BSM[k],
			RiskFreeRate: gv.RiskFreeRate[k], SimplifiedRate: gv.SimplifiedRate[k], Cumulative: cum(k)})
	}
}

// filedFinancing is what a close files for a warrant issued in a
// financing: no cost, its measurements, and for a liability its balance,
// its reclassifications and its fair values from issue on.
func filedFinancing(gv *pricing.GrantValue, fw *FinancingWarrant) PriorGrant {
	g := gv.Inputs.Grant
	pg := PriorGrant{ID: g.ID, Instrument: g.Instrument, Liability: g.IsLiability(), Financing: true, GrantDate: g.GrantDate,
		ServiceStart: g.GrantDate, MeasurementDate: gv.Inputs.MeasurementDate, ExpiryDate: g.ExpiryDate, Inputs: map[string]grants.Source{}, ValuationKey: gv.Key, Status: gv.Status,
		LiabilityEnd: fw.LiabilityEnd, Reclassified: fw.ReclassifiedToDate, Outstanding: fw.Outstanding, Remeasurements: fw.Remeasurements}
	for _, e := range fw.Events {
		pg.Events = append(pg.Events, grants.Event{GrantID: g.ID, Date: e.Date, Kind: e.Kind, Shares: e.Shares})
	}
	filedMeasurements(&pg, gv, func(int) float64 { return 0 })
	return pg
}
