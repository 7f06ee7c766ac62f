package grants

import (
	"cmp"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"grantworth/valuation"
)

// ConditionKind is what a vesting condition measures.
type ConditionKind string

const (
	// Performance is a performance condition on the company's own
	// results (revenue, EBITDA, a product milestone): it stays out of the
	// fair value, and expense follows the probable outcome (ASC
	// 718-10-30-27, IFRS 2.19-20).
	Performance ConditionKind = "performance"
	// PriceHurdle is a market condition: the share price at or above a
	// hurdle, on a closing price or an average of closing prices, by a
	// deadline. It is in the fair value (ASC 718-10-30-14, IFRS 2.21).
	PriceHurdle ConditionKind = "price-hurdle"
	// RelativeTSR is a market condition: units vesting in a number set by
	// the company's total shareholder return ranked against a peer group's
	// over a performance period.
	RelativeTSR ConditionKind = "relative-tsr"
)

// Market reports whether the condition is a market condition (in the fair
// value, expense not reversed when it is not met).
func (k ConditionKind) Market() bool { return k == PriceHurdle || k == RelativeTSR }

// Canonical names of the condition sheets.
const (
	SheetConditions  = "Conditions"
	SheetAssessments = "Assessments"
	SheetPayoutCurve = "Payout Curve"
	SheetPeers       = "Peers"
)

var (
	conditionKinds = []string{string(Performance), string(PriceHurdle), string(RelativeTSR)}
	monitorings    = []string{"daily", "continuous"}
	yesNo          = []string{"yes", "no"}
)

// conditionSheets are the sheets of vesting conditions, after the
// schedule's own in Sheets.
var conditionSheets = []Sheet{
	{Name: SheetConditions, File: "conditions.csv",
		Help: "Optional: vesting conditions beyond service, one row each; a grant names one in its condition column. performance: a condition on the company's own results, out of the fair value, expense following the probable outcome (Assessments). price-hurdle: the share price at or above a hurdle by a deadline. relative-tsr: units vesting by the company's total shareholder return ranked against its peers' (Peers, Payout Curve). Both market conditions are in the fair value, and their expense is not reversed when they are not met.",
		Columns: []Column{
			{Key: "condition_id", Kind: KindText, Required: true, Need: "required", Help: "A unique code for the condition; grants name it in their condition column."},
			{Key: "kind", Kind: KindChoice, Choices: conditionKinds, Required: true, Need: "required", Help: "performance, price-hurdle or relative-tsr."},
			{Key: "description", Kind: KindText, Need: "optional", Help: "What is measured, in words; the memo quotes it (e.g. FY2027 revenue of at least 40 million)."},
			{Key: "measurement_date", Kind: KindDate, Need: "performance: required", Help: "The date the performance is measured; tranches should vest on or after it."},
			{Key: "threshold_payout", Kind: KindPercent, Unit: "of target", Need: "performance: optional", Help: "The share of the target units that vests at the threshold level of performance, e.g. 50%."},
			{Key: "target_payout", Kind: KindPercent, Unit: "of target", Need: "performance: optional", Default: "100%", Help: "The share that vests at target: the grant's shares are the target units."},
			{Key: "maximum_payout", Kind: KindPercent, Unit: "of target", Need: "performance: optional", Default: "target_payout", Help: "The share that vests at the maximum level, e.g. 200%."},
			{Key: "hurdle_price", Kind: KindNumber, Unit: "currency per share", Need: "price-hurdle: required", Help: "The award vests only once the share price has been at or above this."},
			{Key: "hurdle_days", Kind: KindInt, Unit: "closing prices", Need: "price-hurdle: optional", Default: "1 (the closing price)", Help: "The number of closing prices averaged against the hurdle, e.g. 20 for a 20-day average."},
			{Key: "hurdle_monitoring", Kind: KindChoice, Choices: monitorings, Need: "price-hurdle: optional", Default: "daily", Help: "daily watches closing prices (252 a year); continuous every moment (the textbook barrier)."},
			{Key: "hurdle_deadline", Kind: KindDate, Need: "price-hurdle: required for RSUs", Default: "the option's expiry", Help: "The hurdle must be met on or before this date, or the award lapses."},
			{Key: "hurdle_met_date", Kind: KindDate, Need: "price-hurdle: once met", Help: "The day the hurdle was met: the cost of tranches whose service is done is recognized then."},
			{Key: "performance_start", Kind: KindDate, Need: "relative-tsr: required", Help: "The first day of the performance period."},
			{Key: "performance_end", Kind: KindDate, Need: "relative-tsr: required", Help: "The last day of the performance period; units vest on the later of it and their vest date."},
			{Key: "own_prices", Kind: KindText, Unit: "file", Need: "relative-tsr: required", Help: "The company's closing prices: a CSV file with date and close (adjusted_close, with dividends reinvested, when present), its path relative to the workbook's folder (for a CSV folder, to that folder)."},
			{Key: "negative_tsr_cap", Kind: KindPercent, Unit: "of target", Need: "relative-tsr: optional", Default: "none", Help: "The payout is capped at this when the company's own TSR over the period is negative, e.g. 100%."},
		}},
	{Name: SheetAssessments, File: "assessments.csv",
		Help: "Optional: the company's assessment of each performance condition, dated. Expense follows the latest assessment on or before each day: the expected payout while probable, nothing while improbable, trued up when it changes.",
		Columns: []Column{
			{Key: "condition_id", Kind: KindText, Required: true, Need: "required", Help: "A performance condition_id of the Conditions sheet."},
			{Key: "date", Kind: KindDate, Required: true, Need: "required", Help: "The date of the assessment."},
			{Key: "probable", Kind: KindChoice, Choices: yesNo, Required: true, Need: "required", Help: "yes if the condition is probable of being met (ASC 718's threshold; under IFRS 2 the best estimate of what will vest), else no."},
			{Key: "expected_payout", Kind: KindPercent, Unit: "of target", Need: "optional", Default: "target_payout when probable", Help: "The share of target units expected to vest, e.g. 150% between target and maximum."},
			{Key: "note", Kind: KindText, Need: "optional", Help: "Why, in words; the memo quotes it."},
		}},
	{Name: SheetPayoutCurve, File: "payout_curve.csv",
		Help: "Optional: the payout of each relative TSR condition by the company's percentile rank (the share of peers whose TSR it beats), linear between points, nothing below the first, the last point's payout above the last.",
		Columns: []Column{
			{Key: "condition_id", Kind: KindText, Required: true, Need: "required", Help: "A relative-tsr condition_id of the Conditions sheet."},
			{Key: "percentile", Kind: KindPercent, Required: true, Need: "required", Help: "A percentile rank, 0% to 100%."},
			{Key: "payout", Kind: KindPercent, Unit: "of target", Required: true, Need: "required", Help: "The share of target units that vests at that rank."},
		}},
	{Name: SheetPeers, File: "peers.csv",
		Help: "Optional: the peer group of each relative TSR condition, one row per peer, with the file of its closing prices.",
		Columns: []Column{
			{Key: "condition_id", Kind: KindText, Required: true, Need: "required", Help: "A relative-tsr condition_id of the Conditions sheet."},
			{Key: "peer", Kind: KindText, Required: true, Need: "required", Help: "The peer's name or ticker."},
			{Key: "file", Kind: KindText, Unit: "file", Required: true, Need: "required", Help: "Its closing prices: a CSV file with date and close (adjusted_close when present), its path relative to the workbook's folder (for a CSV folder, to that folder)."},
		}},
}

// Condition is one row of the Conditions sheet.
type Condition struct {
	ID          string
	Kind        ConditionKind
	Description string

	// Performance.
	MeasurementDate                              time.Time
	ThresholdPayout, TargetPayout, MaximumPayout float64 // shares of target (1 = 100%)

	// Price hurdle.
	HurdlePrice    float64
	HurdleDays     int    // closing prices averaged; 1 the closing price
	Monitoring     string // daily | continuous
	HurdleDeadline time.Time
	HurdleMet      time.Time // zero until met

	// Relative TSR.
	PeriodStart, PeriodEnd time.Time
	OwnPrices              string   // file, as written
	NegativeCap            *float64 // share of target; nil: none
	Own                    *PriceHistory

	Row  int
	Refs map[string]Ref
}

// Assessment is one row of the Assessments sheet.
type Assessment struct {
	ConditionID    string
	Date           time.Time
	Probable       bool
	ExpectedPayout *float64 // share of target; nil: the target payout when probable
	Note           string
	Row            int
}

// PayoutRow is one row of the Payout Curve sheet.
type PayoutRow struct {
	ConditionID        string
	Percentile, Payout float64
	Row                int
}

// Peer is one row of the Peers sheet, with its prices once read.
type Peer struct {
	ConditionID, Name, File string
	History                 *PriceHistory
	Row                     int
}

// Condition returns the Conditions row with id, or nil.
func (s *Schedule) Condition(id string) *Condition {
	for i := range s.Conditions {
		if s.Conditions[i].ID == id {
			return &s.Conditions[i]
		}
	}
	return nil
}

// Outcome is the share of target units a performance condition's
// assessment in force at the end of day d counts (the latest on or before
// it): its expected payout while probable, 0 while improbable, and the
// target payout before any assessment. a is that assessment (nil before
// any).
func (s *Schedule) Outcome(c *Condition, d time.Time) (share float64, a *Assessment) {
	for i := range s.Assessments {
		x := &s.Assessments[i]
		if x.ConditionID == c.ID && !x.Date.After(d) && (a == nil || !x.Date.Before(a.Date)) {
			a = x
		}
	}
	switch {
	case a == nil:
		return c.TargetPayout, nil
	case !a.Probable:
		return 0, a
	case a.ExpectedPayout != nil:
		return *a.ExpectedPayout, a
	}
	return c.TargetPayout, a
}

// AssessmentsOf are condition id's assessments in date order.
func (s *Schedule) AssessmentsOf(id string) []Assessment {
	out := rowsOf(s.Assessments, id, func(a Assessment) string { return a.ConditionID })
	slices.SortStableFunc(out, func(a, b Assessment) int { return a.Date.Compare(b.Date) })
	return out
}

// PayoutOf is condition id's payout curve, in percentile order.
func (s *Schedule) PayoutOf(id string) []PayoutRow {
	out := rowsOf(s.PayoutCurve, id, func(p PayoutRow) string { return p.ConditionID })
	slices.SortStableFunc(out, func(a, b PayoutRow) int { return cmp.Compare(a.Percentile, b.Percentile) })
	return out
}

// PeersOf are condition id's peers, in sheet order.
func (s *Schedule) PeersOf(id string) []Peer {
	return rowsOf(s.Peers, id, func(p Peer) string { return p.ConditionID })
}

// rowsOf are the rows of a condition sheet that name condition id, in
// sheet order.
func rowsOf[T any](rows []T, id string, of func(T) string) []T {
	var out []T
	for _, r := range rows {
		if of(r) == id {
			out = append(out, r)
		}
	}
	return out
}

func (t *tableReader) conditionRow(c *rowCtx) {
	k := Condition{Row: c.row, TargetPayout: 1, HurdleDays: 1, Monitoring: "daily"}
	k.ID, _ = c.required("condition_id")
	if v, ok := c.choice("kind", true); ok {
		k.Kind = ConditionKind(v)
	}
	k.Description, _ = c.text("description")
	k.MeasurementDate, _ = c.date("measurement_date", false)
	k.ThresholdPayout, _ = c.percent("threshold_payout", false)
	if v, ok := c.percent("target_payout", false); ok {
		k.TargetPayout = v
	}
	k.MaximumPayout = k.TargetPayout
	if v, ok := c.percent("maximum_payout", false); ok {
		k.MaximumPayout = v
	}
	k.HurdlePrice, _ = c.number("hurdle_price", false)
	if v, ok := c.integer("hurdle_days", false); ok {
		k.HurdleDays = int(max(min(v, 1<<20), -1))
	}
	if v, ok := c.choice("hurdle_monitoring", false); ok {
		k.Monitoring = v
	}
	k.HurdleDeadline, _ = c.date("hurdle_deadline", false)
	k.HurdleMet, _ = c.date("hurdle_met_date", false)
	k.PeriodStart, _ = c.date("performance_start", false)
	k.PeriodEnd, _ = c.date("performance_end", false)
	k.OwnPrices, _ = c.text("own_prices")
	k.NegativeCap = c.ptr("negative_tsr_cap", true)
	k.Refs = c.refs
	if !c.failed {
		t.s.Conditions = append(t.s.Conditions, k)
	}
}

func (t *tableReader) assessmentRow(c *rowCtx) {
	a := Assessment{Row: c.row}
	a.ConditionID, _ = c.required("condition_id")
	a.Date, _ = c.date("date", true)
	if v, ok := c.choice("probable", true); ok {
		a.Probable = v == "yes"
	}
	a.ExpectedPayout = c.ptr("expected_payout", true)
	a.Note, _ = c.text("note")
	if !c.failed {
		t.s.Assessments = append(t.s.Assessments, a)
	}
}

func (t *tableReader) payoutRow(c *rowCtx) {
	p := PayoutRow{Row: c.row}
	p.ConditionID, _ = c.required("condition_id")
	p.Percentile, _ = c.percent("percentile", true)
	p.Payout, _ = c.percent("payout", true)
	if !c.failed {
		t.s.PayoutCurve = append(t.s.PayoutCurve, p)
	}
}

func (t *tableReader) peerRow(c *rowCtx) {
	p := Peer{Row: c.row}
	p.ConditionID, _ = c.required("condition_id")
	p.Name, _ = c.required("peer")
	p.File, _ = c.required("file")
	if !c.failed {
		t.s.Peers = append(t.s.Peers, p)
	}
}

// conditions checks the condition sheets and the grants that name them.
func (v *validator) conditions() {
	s := v.s
	byID := map[string]*Condition{}
	for i := range s.Conditions {
		k := &s.Conditions[i]
		ref := func(key string) Ref { return s.cell(SheetConditions, key, k.Row, k.Refs) }
		if o, dup := byID[k.ID]; dup {
			v.rep.errf(ref("condition_id"), "condition_id", k.ID, ErrDuplicate, "is also the condition_id of row %d", o.Row)
			continue
		}
		byID[k.ID] = k
		v.condition(k, ref)
	}
	for _, g := range s.Grants {
		if g.Condition == "" {
			continue
		}
		ref := func(key string) Ref { return s.cell(SheetGrants, key, g.Row, g.Refs) }
		k, ok := byID[g.Condition]
		if !ok {
			v.rep.errf(ref("condition"), "condition", g.Condition, ErrUnknown, "is not a condition_id of the Conditions sheet")
			continue
		}
		v.grantCondition(g, k, ref)
	}
	kind := func(sheet string, row int, id string, want ConditionKind) bool {
		k, ok := byID[id]
		r := s.cell(sheet, "condition_id", row, nil)
		switch {
		case !ok:
			v.rep.errf(r, "condition_id", id, ErrUnknown, "is not a condition_id of the Conditions sheet")
		case k.Kind != want && want == Performance:
			v.rep.errf(r, "condition_id", id, ErrInconsistent, "is a %s condition: a market condition is not assessed, since its expense does not follow the outcome (ASC 718-10-30-14, IFRS 2.21)", k.Kind)
		case k.Kind != want:
			v.rep.errf(r, "condition_id", id, ErrInconsistent, "is a %s condition, not %s", k.Kind, want)
		default:
			return true
		}
		return false
	}
	seen := map[string]int{}
	for _, a := range s.Assessments {
		if !kind(SheetAssessments, a.Row, a.ConditionID, Performance) {
			continue
		}
		key := a.ConditionID + "|" + isoDay(a.Date)
		if r, dup := seen[key]; dup {
			v.rep.errf(s.cell(SheetAssessments, "date", a.Row, nil), "date", isoDay(a.Date), ErrDuplicate, "is also the date of row %d's assessment of %s", r, a.ConditionID)
		}
		seen[key] = a.Row
		if p := a.ExpectedPayout; p != nil {
			k := byID[a.ConditionID]
			r := s.cell(SheetAssessments, "expected_payout", a.Row, nil)
			switch {
			case *p < 0 || *p > 10:
				v.rep.errf(r, "expected_payout", num(*p), ErrRange, "must be 0%% to 1000%% of target")
			case !a.Probable && *p > 0:
				v.rep.warnf(r, "expected_payout", num(*p), ErrInconsistent, "is ignored: the condition is assessed as not probable, so nothing is expensed")
			case a.Probable && (*p > k.MaximumPayout+1e-12 || *p < k.ThresholdPayout-1e-12):
				v.rep.warnf(r, "expected_payout", num(*p), ErrRange, "lies outside the threshold %s to maximum %s of condition %s", pct(k.ThresholdPayout), pct(k.MaximumPayout), k.ID)
			}
		}
	}
	for _, p := range s.PayoutCurve {
		if !kind(SheetPayoutCurve, p.Row, p.ConditionID, RelativeTSR) {
			continue
		}
		if p.Percentile < 0 || p.Percentile > 1 {
			v.rep.errf(s.cell(SheetPayoutCurve, "percentile", p.Row, nil), "percentile", num(p.Percentile), ErrRange, "must be 0%% to 100%%")
		}
		if p.Payout < 0 || p.Payout > 10 {
			v.rep.errf(s.cell(SheetPayoutCurve, "payout", p.Row, nil), "payout", num(p.Payout), ErrRange, "must be 0%% to 1000%% of target")
		}
	}
	for _, p := range s.Peers {
		kind(SheetPeers, p.Row, p.ConditionID, RelativeTSR)
	}
}

// pct is a share as a percentage for messages.
func pct(x float64) string { return strconv.FormatFloat(100*x, 'g', 6, 64) + "%" }

// condition checks one Conditions row.
func (v *validator) condition(k *Condition, ref func(string) Ref) {
	s := v.s
	has := func(key string) bool { _, ok := k.Refs[key]; return ok }
	need := func(key string, ok bool) {
		if !ok {
			v.rep.errf(ref(key), key, "", ErrRequired, "is required for a %s condition (%s)", k.Kind, k.ID)
		}
	}
	// Columns of another kind are ignored, with a warning.
	own := map[ConditionKind][]string{
		Performance: {"measurement_date", "threshold_payout", "target_payout", "maximum_payout"},
		PriceHurdle: {"hurdle_price", "hurdle_days", "hurdle_monitoring", "hurdle_deadline", "hurdle_met_date"},
		RelativeTSR: {"performance_start", "performance_end", "own_prices", "negative_tsr_cap"},
	}
	for kind, keys := range own {
		if kind == k.Kind {
			continue
		}
		for _, key := range keys {
			if has(key) {
				v.rep.warnf(ref(key), key, "", ErrInconsistent, "applies to %s conditions; it is ignored for %s condition %s", kind, k.Kind, k.ID)
			}
		}
	}
	switch k.Kind {
	case Performance:
		need("measurement_date", has("measurement_date"))
		switch {
		case k.ThresholdPayout < 0 || k.TargetPayout < 0 || k.MaximumPayout > 10:
			v.rep.errf(ref("target_payout"), "target_payout", num(k.TargetPayout), ErrRange, "payouts must be 0%% to 1000%% of target")
		case k.ThresholdPayout > k.TargetPayout:
			v.rep.errf(ref("threshold_payout"), "threshold_payout", num(k.ThresholdPayout), ErrRange, "is above target_payout %s", pct(k.TargetPayout))
		case k.MaximumPayout < k.TargetPayout:
			v.rep.errf(ref("maximum_payout"), "maximum_payout", num(k.MaximumPayout), ErrRange, "is below target_payout %s", pct(k.TargetPayout))
		}
	case PriceHurdle:
		need("hurdle_price", has("hurdle_price"))
		if has("hurdle_price") && !(k.HurdlePrice > 0 && k.HurdlePrice < 1e12) {
			v.rep.errf(ref("hurdle_price"), "hurdle_price", num(k.HurdlePrice), ErrRange, "must be a share price above 0")
		}
		if k.HurdleDays < 1 || k.HurdleDays > 260 {
			v.rep.errf(ref("hurdle_days"), "hurdle_days", strconv.Itoa(k.HurdleDays), ErrRange, "must be 1 (the closing price) to 260 closing prices")
		} else if k.HurdleDays > 1 && k.Monitoring == "continuous" {
			v.rep.errf(ref("hurdle_monitoring"), "hurdle_monitoring", k.Monitoring, ErrInconsistent, "an average of %d closing prices is watched daily", k.HurdleDays)
		}
		if !k.HurdleMet.IsZero() && !k.HurdleDeadline.IsZero() && k.HurdleMet.After(k.HurdleDeadline) {
			v.rep.errf(ref("hurdle_met_date"), "hurdle_met_date", isoDay(k.HurdleMet), ErrRange, "is after the hurdle_deadline %s", isoDay(k.HurdleDeadline))
		}
		if vd := s.Company.ValuationDate; !k.HurdleMet.IsZero() && !vd.IsZero() && k.HurdleMet.After(vd) {
			v.rep.errf(ref("hurdle_met_date"), "hurdle_met_date", isoDay(k.HurdleMet), ErrRange, "is after the valuation date %s", isoDay(vd))
		}
	case RelativeTSR:
		need("performance_start", has("performance_start"))
		need("performance_end", has("performance_end"))
		need("own_prices", k.OwnPrices != "")
		if !k.PeriodStart.IsZero() && !k.PeriodEnd.IsZero() && !k.PeriodEnd.After(k.PeriodStart) {
			v.rep.errf(ref("performance_end"), "performance_end", isoDay(k.PeriodEnd), ErrRange, "must be after performance_start %s", isoDay(k.PeriodStart))
		}
		if c := k.NegativeCap; c != nil && (*c < 0 || *c > 10) {
			v.rep.errf(ref("negative_tsr_cap"), "negative_tsr_cap", num(*c), ErrRange, "must be 0%% to 1000%% of target")
		}
		if len(s.PeersOf(k.ID)) == 0 {
			v.rep.errf(ref("condition_id"), "condition_id", k.ID, ErrRequired, "has no Peers rows: a relative TSR needs a peer group")
		}
		curve := s.PayoutOf(k.ID)
		if len(curve) == 0 {
			v.rep.errf(ref("condition_id"), "condition_id", k.ID, ErrRequired, "has no Payout Curve rows")
		}
		for i := 1; i < len(curve); i++ {
			if curve[i].Percentile == curve[i-1].Percentile {
				v.rep.errf(s.cell(SheetPayoutCurve, "percentile", curve[i].Row, nil), "percentile", num(curve[i].Percentile), ErrDuplicate,
					"is also the percentile of row %d for condition %s", curve[i-1].Row, k.ID)
			}
		}
	}
}

// grantCondition checks that grant g can carry condition k.
func (v *validator) grantCondition(g Grant, k *Condition, ref func(string) Ref) {
	s := v.s
	kref := func(key string) Ref { return s.cell(SheetConditions, key, k.Row, k.Refs) }
	switch {
	case g.Instrument == Warrant:
		v.rep.errf(ref("condition"), "condition", g.Condition, ErrInconsistent, "applies to options and RSUs; warrant %s cannot carry condition %s", g.ID, k.ID)
		return
	case k.Kind == RelativeTSR && g.Instrument != RSU:
		v.rep.errf(ref("condition"), "condition", g.Condition, ErrInconsistent, "is a relative TSR condition, which applies to units (instrument rsu), not %s %s", article(g.Instrument), g.ID)
		return
	}
	if g.GrantDate.IsZero() {
		return
	}
	ts := s.Tranches(g)
	switch k.Kind {
	case Performance:
		if len(ts) > 0 && !k.MeasurementDate.IsZero() && ts[0].VestDate.Before(k.MeasurementDate) {
			v.rep.warnf(ref("condition"), "condition", g.Condition, ErrRange, "grant %s has a tranche vesting %s, before the measurement date %s of condition %s (%s): it vests only when the outcome is known",
				g.ID, isoDay(ts[0].VestDate), isoDay(k.MeasurementDate), k.ID, kref("measurement_date"))
		}
		if len(s.AssessmentsOf(k.ID)) == 0 {
			v.rep.warnf(ref("condition"), "condition", g.Condition, ErrRequired, "condition %s has no Assessments rows: grant %s's expense assumes the target payout is probable", k.ID, g.ID)
		}
	case PriceHurdle:
		d := k.HurdleDeadline
		switch {
		case d.IsZero() && g.Instrument == RSU:
			v.rep.errf(kref("hurdle_deadline"), "hurdle_deadline", "", ErrRequired, "is required for RSU %s: units have no expiry to end the hurdle's window", g.ID)
		case !d.IsZero() && !d.After(g.GrantDate):
			v.rep.errf(kref("hurdle_deadline"), "hurdle_deadline", isoDay(d), ErrRange, "is not after the grant date %s of grant %s (%s)", isoDay(g.GrantDate), g.ID, ref("grant_date").Cell)
		case !d.IsZero() && g.Instrument == Option && !g.ExpiryDate.IsZero() && d.After(g.ExpiryDate):
			v.rep.warnf(kref("hurdle_deadline"), "hurdle_deadline", isoDay(d), ErrRange, "is after the expiry %s of option %s; the hurdle is watched to expiry", isoDay(g.ExpiryDate), g.ID)
		}
	case RelativeTSR:
		if !k.PeriodEnd.IsZero() && !g.GrantDate.Before(k.PeriodEnd) {
			v.rep.errf(ref("grant_date"), "grant_date", isoDay(g.GrantDate), ErrRange, "is on or after the end %s of condition %s's performance period (%s)", isoDay(k.PeriodEnd), k.ID, kref("performance_end"))
		}
		if n := len(ts); n > 0 && !k.PeriodEnd.IsZero() && ts[n-1].VestDate.Before(k.PeriodEnd) {
			v.rep.warnf(ref("condition"), "condition", g.Condition, ErrRange, "grant %s's last tranche vests %s, before the performance period ends %s: its units are delivered at the end",
				g.ID, isoDay(ts[n-1].VestDate), isoDay(k.PeriodEnd))
		}
	}
}

// loadPrices reads the price files that relative TSR conditions name,
// each path relative to dir (an absolute path as it is), at most
// MaxFileSize bytes of a regular file, and checks that each covers what
// the conditions need: a price on or before the start of the performance
// period, and prices up to each grant's measurement date. A file used
// twice is read once.
func (s *Schedule) loadPrices(dir string) Report {
	var rep Report
	cache := map[string]*PriceHistory{}
	failed := map[string]error{}
	load := func(file string, ref Ref, col string) *PriceHistory {
		path := file
		if !filepath.IsAbs(path) {
			path = filepath.Join(dir, filepath.FromSlash(file))
		}
		if h, ok := cache[path]; ok {
			return h
		}
		if err, ok := failed[path]; ok {
			rep.errf(ref, col, file, ErrFormat, "%v", err)
			return nil
		}
		h, err := readPriceFile(path, file)
		if err != nil {
			failed[path] = err
			rep.errf(ref, col, file, ErrFormat, "%v", err)
			return nil
		}
		cache[path] = h
		return h
	}
	for i := range s.Conditions {
		k := &s.Conditions[i]
		if k.Kind != RelativeTSR || k.OwnPrices == "" {
			continue
		}
		ref := s.cell(SheetConditions, "own_prices", k.Row, k.Refs)
		if k.Own = load(k.OwnPrices, ref, "own_prices"); k.Own != nil {
			s.coverage(&rep, k, k.Own, ref, "own_prices")
		}
	}
	for i := range s.Peers {
		p := &s.Peers[i]
		k := s.Condition(p.ConditionID)
		if k == nil || k.Kind != RelativeTSR {
			continue
		}
		ref := s.cell(SheetPeers, "file", p.Row, nil)
		if p.History = load(p.File, ref, "file"); p.History != nil {
			s.coverage(&rep, k, p.History, ref, "file")
		}
	}
	return rep
}

// readPriceFile reads one price file; errors say the file and line.
func readPriceFile(path, name string) (*PriceHistory, error) {
	st, err := os.Stat(path)
	switch {
	case err != nil:
		return nil, fmt.Errorf("cannot be read: %v", errText(err))
	case !st.Mode().IsRegular():
		return nil, fmt.Errorf("is %s, not a price file", fileKind(st.Mode().Type()))
	case st.Size() > MaxFileSize:
		return nil, fmt.Errorf("is %s, more than the %s allowed", sizeText(st.Size()), sizeText(MaxFileSize))
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("cannot be read: %v", errText(err))
	}
	defer f.Close()
	return ParsePrices(io.LimitReader(f, MaxFileSize), name)
}

// errText is an OS error without the path it repeats.
func errText(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// coverage checks that history h covers condition k's needs.
func (s *Schedule) coverage(rep *Report, k *Condition, h *PriceHistory, ref Ref, col string) {
	if k.PeriodStart.IsZero() {
		return
	}
	first, last := h.Points[0].Date, h.Points[len(h.Points)-1].Date
	if first.After(k.PeriodStart) {
		rep.errf(ref, col, h.File, ErrRange, "prices start %s, after the performance period's start %s: the TSR to date needs the price on or before it", isoDay(first), isoDay(k.PeriodStart))
	}
	for _, g := range s.Grants {
		if g.Condition != k.ID || g.GrantDate.IsZero() {
			continue
		}
		md := s.MeasurementDate(g)
		if md.Sub(last) > 10*24*time.Hour && md.Before(k.PeriodEnd) {
			rep.errf(ref, col, h.File, ErrRange, "prices end %s, more than ten days before the measurement date %s of grant %s", isoDay(last), isoDay(md), g.ID)
		}
		// The estimates look back over the period remaining (as `vol`
		// warns, the prices should cover it).
		from := md
		if from.Before(k.PeriodStart) {
			from = k.PeriodStart
		}
		lb := valuation.YearFrac(from, k.PeriodEnd)
		if ws := md.AddDate(0, 0, -int(math.Round(lb*365.25))); first.Sub(ws) > 10*24*time.Hour {
			rep.warnf(ref, col, h.File, ErrRange, "covers %.1f of the %.1f years of look-back the volatility and correlations of grant %s need (the performance period remaining): they are estimated from the prices there are",
				valuation.YearFrac(first, md), lb, g.ID)
		}
	}
}

// scheduleDir is the folder the relative paths of a schedule at path are
// read from: a workbook's folder, or a CSV folder itself.
func scheduleDir(path string) string {
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		return path
	}
	return filepath.Dir(path)
}

// conditionText is a condition in words for messages and reports.
func (k *Condition) String() string {
	switch k.Kind {
	case PriceHurdle:
		what := "closing price"
		if k.HurdleDays > 1 {
			what = fmt.Sprintf("average of %d closing prices", k.HurdleDays)
		}
		if k.Monitoring == "continuous" {
			what = "share price, watched continuously"
		}
		by := "by expiry"
		if !k.HurdleDeadline.IsZero() {
			by = "by " + isoDay(k.HurdleDeadline)
		}
		return fmt.Sprintf("%s at or above %s %s", what, num(k.HurdlePrice), by)
	case RelativeTSR:
		return fmt.Sprintf("relative TSR from %s to %s", isoDay(k.PeriodStart), isoDay(k.PeriodEnd))
	}
	return strings.TrimSpace("performance measured " + isoDay(k.MeasurementDate))
}

// conditionRows are the rows of condition sheet name for the writer.
func conditionRows(s *Schedule, name string, n int, put func([]any, string, any)) [][]any {
	var rows [][]any
	switch name {
	case SheetConditions:
		for _, k := range s.Conditions {
			row := make([]any, n)
			put(row, "condition_id", k.ID)
			put(row, "kind", string(k.Kind))
			if k.Description != "" {
				put(row, "description", k.Description)
			}
			date := func(key string, t time.Time) {
				if !t.IsZero() {
					put(row, key, t)
				}
			}
			switch k.Kind {
			case Performance:
				date("measurement_date", k.MeasurementDate)
				put(row, "threshold_payout", k.ThresholdPayout)
				put(row, "target_payout", k.TargetPayout)
				put(row, "maximum_payout", k.MaximumPayout)
			case PriceHurdle:
				put(row, "hurdle_price", k.HurdlePrice)
				put(row, "hurdle_days", int64(max(k.HurdleDays, 1)))
				put(row, "hurdle_monitoring", k.Monitoring)
				date("hurdle_deadline", k.HurdleDeadline)
				date("hurdle_met_date", k.HurdleMet)
			case RelativeTSR:
				date("performance_start", k.PeriodStart)
				date("performance_end", k.PeriodEnd)
				put(row, "own_prices", k.OwnPrices)
				if k.NegativeCap != nil {
					put(row, "negative_tsr_cap", *k.NegativeCap)
				}
			}
			rows = append(rows, row)
		}
	case SheetAssessments:
		for _, a := range s.Assessments {
			row := make([]any, n)
			put(row, "condition_id", a.ConditionID)
			put(row, "date", a.Date)
			put(row, "probable", map[bool]string{true: "yes", false: "no"}[a.Probable])
			if a.ExpectedPayout != nil {
				put(row, "expected_payout", *a.ExpectedPayout)
			}
			if a.Note != "" {
				put(row, "note", a.Note)
			}
			rows = append(rows, row)
		}
	case SheetPayoutCurve:
		for _, p := range s.PayoutCurve {
			rows = append(rows, []any{p.ConditionID, p.Percentile, p.Payout})
		}
	case SheetPeers:
		for _, p := range s.Peers {
			rows = append(rows, []any{p.ConditionID, p.Name, p.File})
		}
	}
	return rows
}
