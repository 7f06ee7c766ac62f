package grants

import (
	"fmt"
	"sort"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"grantworth/internal/cores"
	"grantworth/valuation"
)

// Source is one valuation input as used for a grant and where it came from.
type Source struct {
	Value float64
	Ref   Ref    // the cell it was read from; the zero Ref for a default
	Text  string // for the memo, e.g. "Share Prices!B7 (valuation of 2025-03-31)"
	// Since is the effective_date of the Assumptions row it came from;
	// zero for an undated row and for every other source.
	Since time.Time
}

// Inputs is everything the valuation needs for one grant, with provenance.
type Inputs struct {
	Grant           Grant
	MeasurementDate time.Time // grant date; valuation date for liability warrants
	Tranches        []Tranche
	Terms           []valuation.Terms // one per tranche, same order
	Market          valuation.Market
	CurveDate       time.Time // zero when no curve was needed (an RSU without one)

	SharePrice       Source
	Volatility       Source
	DividendYield    Source
	ExerciseMultiple Source
	ExitRate         Source
	// RiskFreeRate is the continuous zero rate at the grant's years to
	// expiry (for an RSU, to its last vest date); Ref is the Rates cells it
	// was interpolated (or bootstrapped) from, and Text describes the curve
	// and how.
	RiskFreeRate Source

	// Condition is the grant's vesting condition beyond service with what
	// valuing it needs (condition_inputs.go); nil for service only.
	Condition *ConditionInputs
}

// Named is one valuation input of a grant by its key.
type Named struct {
	Key    string
	Source *Source
}

// Named are the grant's valuation inputs by key, in the memo's order:
// share_price, volatility (not for an RSU), dividend_yield, and for
// options and warrants exercise_multiple, post_vesting_exit_rate and
// risk_free_rate. The Sources are in's own.
func (in *Inputs) Named() []Named {
	out := append(make([]Named, 0, 6), Named{"share_price", &in.SharePrice}) // room for all six: asked of every grant of a ledger
	if in.Grant.Instrument != RSU {
		out = append(out, Named{"volatility", &in.Volatility})
	}
	out = append(out, Named{"dividend_yield", &in.DividendYield})
	if in.Grant.Instrument != RSU {
		out = append(out, Named{"exercise_multiple", &in.ExerciseMultiple}, Named{"post_vesting_exit_rate", &in.ExitRate}, Named{"risk_free_rate", &in.RiskFreeRate})
	}
	return out
}

// Inputs gathers the valuation inputs of grant g: the measurement date,
// one valuation.Terms per tranche, the Market at the measurement date and
// the source of every assumption.
//
// The share price is the grant row's share_price, else the Share Prices
// row in force at the measurement date. Volatility and dividend yield are
// the row's overrides, else the Assumptions in force at the measurement
// date (Assumptions.At). The exercise multiple and post-vesting exit rate
// describe employees: options take the row's overrides, else the
// Assumptions in force; warrants take only the row's (default
// none); RSUs have neither. The curve is the latest Rates curve dated on or
// before the measurement date. For an RSU, YearsToExpiry equals
// YearsToVest and the strike is 0. American warrants get Rational, european
// ones European.
//
// The error (a *CellError) says what is missing; Validate reports the same
// problems for the whole schedule at once.
func (s *Schedule) Inputs(g Grant) (Inputs, error) {
	in := Inputs{Grant: g, MeasurementDate: s.MeasurementDate(g), Tranches: s.Tranches(g)}
	md := in.MeasurementDate
	gref := func(k string) Ref { return s.cell(SheetGrants, k, g.Row, g.Refs) }
	fail := func(k, format string, args ...any) (Inputs, error) {
		r := gref(k)
		return Inputs{}, &CellError{Sheet: r.Sheet, Cell: r.Cell, Column: k, Err: ErrRequired, Msg: fmt.Sprintf(format, args...)}
	}
	if md.IsZero() {
		return fail("grant_date", "grant %s has no grant date", g.ID)
	}

	// Share price.
	if g.SharePrice != nil {
		r := gref("share_price")
		in.SharePrice = Source{Value: *g.SharePrice, Ref: r, Text: r.String() + " (grant row)"}
	} else if p, ok := s.PriceAt(md); ok {
		r := s.cell(SheetSharePrices, "price", p.Row, nil)
		in.SharePrice = Source{Value: p.Price, Ref: r, Text: fmt.Sprintf("%s (valuation of %s)", r, isoDay(p.Date))}
	} else {
		return fail("share_price", "no share price is known at %s for grant %s", isoDay(md), g.ID)
	}

	view := s.Assumptions.At(md)
	a := &view
	assumed := func(key string, v float64) Source { return a.source(key, v) }
	override := func(key string, p *float64, fallback Source) Source {
		if p == nil {
			return fallback
		}
		r := gref(key)
		return Source{Value: *p, Ref: r, Text: r.String() + " (grant row)"}
	}
	none := Source{Text: "none"}
	in.Volatility = override("volatility", g.Volatility, assumed("volatility", a.Volatility))
	in.DividendYield = override("dividend_yield", g.DividendYield, assumed("dividend_yield", a.DividendYield))
	switch g.Instrument {
	case Option:
		in.ExerciseMultiple = override("exercise_multiple", g.ExerciseMultiple, assumed("exercise_multiple", a.ExerciseMultiple))
		in.ExitRate = override("post_vesting_exit_rate", g.PostVestingExitRate, assumed("post_vesting_exit_rate", a.PostVestingExitRate))
	case Warrant:
		in.ExerciseMultiple = override("exercise_multiple", g.ExerciseMultiple, none)
		in.ExitRate = override("post_vesting_exit_rate", g.PostVestingExitRate, none)
	default:
		in.ExerciseMultiple, in.ExitRate = none, none
	}
	if g.Instrument != RSU {
		if _, ok := g.Refs["volatility"]; !ok && g.Volatility == nil {
			if !a.has("volatility") {
				return fail("volatility", "grant %s has no volatility, and the Assumptions give none", g.ID)
			}
		}
	}

	// Terms per tranche.
	T := 0.0
	if g.Instrument != RSU {
		if g.ExpiryDate.IsZero() {
			return fail("expiry_date", "grant %s has no expiry", g.ID)
		}
		T = valuation.YearFrac(md, g.ExpiryDate)
		if T <= 0 {
			return fail("expiry_date", "grant %s expired on %s, before its measurement date %s", g.ID, isoDay(g.ExpiryDate), isoDay(md))
		}
	}
	horizon := T
	in.Terms = make([]valuation.Terms, len(in.Tranches))
	for i, t := range in.Tranches {
		V := max(valuation.YearFrac(md, t.VestDate), 0)
		tm := valuation.Terms{
			Strike: g.Strike, YearsToExpiry: T, YearsToVest: V,
			ExerciseMultiple: in.ExerciseMultiple.Value, ExitRate: in.ExitRate.Value,
		}
		switch g.Instrument {
		case RSU:
			tm.Strike, tm.YearsToExpiry = 0, V
			horizon = max(horizon, V)
		case Warrant:
			tm.Rational = g.ExerciseStyle != European
			tm.European = g.ExerciseStyle == European
		}
		if V > tm.YearsToExpiry {
			return fail("vest_months", "tranche %d of grant %s vests on %s, after the expiry %s", t.Index, g.ID, isoDay(t.VestDate), isoDay(g.ExpiryDate))
		}
		in.Terms[i] = tm
	}

	// Curve.
	in.Market = valuation.Market{Spot: in.SharePrice.Value, VolAnnual: in.Volatility.Value, DividendYield: in.DividendYield.Value}
	if c, ok := s.builtCurveAt(md); ok {
		cv, text, err := c.cv, c.text, c.err
		if err != nil {
			r := s.cell(SheetRates, "curve_date", c.points[0].Row, nil)
			return Inputs{}, &CellError{Sheet: r.Sheet, Cell: r.Cell, Column: "curve_date", Value: isoDay(c.date), Err: ErrRange, Msg: "curve cannot be built: " + err.Error()}
		}
		in.Market.Curve, in.CurveDate = cv, c.date
		r, how := s.citeRate(c.byTenor, horizon)
		in.RiskFreeRate = Source{Value: cv.Zero(horizon), Ref: r, Text: text + "; " + how}
	} else if g.Instrument == RSU {
		in.Market.Curve = valuation.FlatCurve(0)
		in.RiskFreeRate = Source{Text: fmt.Sprintf("no Rates curve on or before %s; an RSU's value needs none", isoDay(md))}
	} else {
		return fail("grant_date", "no Rates curve is dated on or before %s, the measurement date of grant %s", isoDay(md), g.ID)
	}
	if g.Condition != "" {
		if err := s.conditionInputs(&in); err != nil {
			return Inputs{}, err
		}
	}
	if err := s.feasible(in); err != nil {
		return Inputs{}, err
	}
	return in, nil
}

// feasible reports, as a *CellError, a grant whose inputs the lattice
// cannot value (valuation.Feasible: an input outside valuation.Limits, a
// strike too far above the share price, a volatility too high for the
// term, a raw step count too small for the up-probability or too large
// for the tree's extreme prices). The cell named is the input at fault:
// the steps assumption when it sets a raw step count, else the grant's
// volatility.
func (s *Schedule) feasible(in Inputs) error {
	g := in.Grant
	if g.Instrument == RSU || len(in.Terms) == 0 {
		return nil
	}
	t := in.Terms[0]
	if g.Instrument == Warrant && !t.European {
		t.Rational = true // as warrants are valued
	}
	if !g.GrantDate.IsZero() && in.MeasurementDate.After(g.GrantDate) {
		// A liability warrant is also remeasured at past quarter ends,
		// back to its grant date: check the longest term.
		t.YearsToExpiry = max(t.YearsToExpiry, valuation.YearFrac(g.GrantDate, g.ExpiryDate))
	}
	a := s.InForce() // value runs every lattice with the steps in force at the valuation date
	o := valuation.LatticeOptions{Steps: a.Steps}
	var buf [64]float64 // on the stack for most grants: Feasible keeps no part of vest
	vest := buf[:0]
	if len(in.Terms) > len(buf) {
		vest = make([]float64, 0, len(in.Terms))
	}
	for _, tk := range in.Terms {
		vest = append(vest, tk.YearsToVest)
	}
	err := valuation.Feasible(t, vest, in.Market, o)
	if err == nil {
		return nil
	}
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	ref, col, val := in.Volatility.Ref, "volatility", num(in.Volatility.Value)
	switch l := valuation.Limits; {
	case !l.SharePrice.In(in.Market.Spot):
		ref, col, val = in.SharePrice.Ref, "share_price", num(in.Market.Spot)
	case !l.Strike.In(t.Strike):
		ref, col, val = s.cell(SheetGrants, "strike", g.Row, g.Refs), "strike", num(t.Strike)
	case !l.YearsToExpiry.In(t.YearsToExpiry):
		ref, col, val = s.cell(SheetGrants, "expiry_date", g.Row, g.Refs), "expiry_date", isoDay(g.ExpiryDate)
	case o.Steps > 0:
		ref, col, val = a.Refs["steps"], "steps", strconv.Itoa(o.Steps)
	}
	if ref.Sheet == "" {
		ref = s.cell(SheetGrants, "grant_id", g.Row, g.Refs)
	}
	msg := strings.TrimPrefix(err.Error(), valuation.ErrLatticeInput.Error()+": ")
	return &CellError{Sheet: ref.Sheet, Cell: ref.Cell, Column: col, Value: val, Err: ErrRange,
		Msg: fmt.Sprintf("cannot be valued on the lattice for grant %s (%s): %s", g.ID, s.cell(SheetGrants, "grant_id", g.Row, g.Refs).Cell, msg)}
}

// citeRate is where the zero rate at h years of the curve whose points
// are pts, in tenor order (indexedCurve.byTenor), comes from: the Rates
// cells it is interpolated between (linear in tenor, flat outside the
// quoted tenors), or for par yields every cell up to the tenor at or
// above h that the bootstrap used, with the how in words. Cells that are
// adjacent rows are written as a range ("C8:C9"), others listed ("C2,C9").
func (s *Schedule) citeRate(pts []RatePoint, h float64) (Ref, string) {
	cell := func(p RatePoint) string { return s.cell(SheetRates, "rate", p.Row, nil).Cell }
	cite := func(ps []RatePoint) Ref {
		r := Ref{Sheet: SheetRates, Cell: cell(ps[0])}
		if len(ps) == 1 {
			return r
		}
		adjacent := true
		for i := 1; i < len(ps); i++ {
			adjacent = adjacent && ps[i].Row == ps[i-1].Row+1
		}
		if adjacent {
			r.Cell += ":" + cell(ps[len(ps)-1])
			return r
		}
		for _, p := range ps[1:] {
			r.Cell += "," + cell(p)
		}
		return r
	}
	years := func(t float64) string { return strconv.FormatFloat(t, 'f', -1, 64) + "-year" }
	hi := sort.Search(len(pts), func(i int) bool { return pts[i].TenorYears >= h })
	at := fmt.Sprintf("at %.2f years", h)
	if len(pts) > 0 && pts[0].Compounding == "par-semiannual" {
		last := min(hi, len(pts)-1)
		r := cite(pts[:last+1])
		return r, fmt.Sprintf("%s, bootstrapped from the par yields up to %s (%s)", at, years(pts[last].TenorYears), r)
	}
	switch {
	case hi == len(pts):
		r := cite(pts[len(pts)-1:])
		return r, fmt.Sprintf("%s, flat beyond the %s rate (%s)", at, years(pts[len(pts)-1].TenorYears), r)
	case pts[hi].TenorYears == h || hi == 0:
		r := cite(pts[hi : hi+1])
		if pts[hi].TenorYears == h {
			return r, fmt.Sprintf("%s, the %s rate (%s)", at, years(h), r)
		}
		return r, fmt.Sprintf("%s, flat below the %s rate (%s)", at, years(pts[0].TenorYears), r)
	}
	lo, up := pts[hi-1], pts[hi]
	r := cite([]RatePoint{lo, up})
	return r, fmt.Sprintf("%s, interpolated between the %s and %s rates (%s)", at, years(lo.TenorYears), years(up.TenorYears), r)
}

// source is the Source of key, whose value in a (a view made by At) is v:
// its cell and source text, and the date the row is in force from.
func (a *Assumptions) source(key string, v float64) Source {
	since := ""
	if d, ok := a.Since[key]; ok {
		since = "in force from " + isoDay(d)
	}
	r, ok := a.Refs[key]
	if !ok && a.Refs == nil { // built in code: every value given
		text := "Assumptions"
		if src := a.Sources[key]; src != "" {
			text = src
		}
		if since != "" {
			text += " (" + since + ")"
		}
		return Source{Value: v, Text: text, Since: a.Since[key]}
	}
	if !ok {
		return Source{Value: v, Text: "default"}
	}
	where := r.String()
	if since != "" {
		where += ", " + since
	}
	text := where
	if src := a.Sources[key]; src != "" {
		text = src + " (" + where + ")"
	}
	return Source{Value: v, Ref: r, Text: text, Since: a.Since[key]}
}

// has reports whether key was given on the Assumptions sheet (for
// Assumptions built in code, with no Refs, whether volatility is set; every
// other key has a usable zero default).
func (a *Assumptions) has(key string) bool {
	if a.Refs == nil {
		return key != "volatility" || a.Volatility != 0
	}
	_, ok := a.Refs[key]
	return ok
}

// ValueInputs collects the inputs of every grant made on or before the
// valuation date (a later grant is not outstanding at the period end and
// is left out, with a warning in skipped), or every error found. The
// grants are gathered on all cores; ins and errs are in ledger order.
func (s *Schedule) ValueInputs() (ins []Inputs, errs []error, skipped []string) {
	if s.fresh() == nil {
		s.Reindex()
	}
	var made []int // positions in s.Grants of the grants to value
	for i, g := range s.Grants {
		if valuation.Days(s.Company.ValuationDate, g.GrantDate) > 0 {
			skipped = append(skipped, fmt.Sprintf("grant %s, dated %s after the valuation date %s, is left out of this valuation",
				g.ID, isoDay(g.GrantDate), isoDay(s.Company.ValuationDate)))
			continue
		}
		made = append(made, i)
	}
	if len(made) == 0 {
		return nil, nil, skipped
	}
	ins = make([]Inputs, len(made))
	errAt := make([]error, len(made))
	var failed atomic.Bool
	cores.Chunks(len(made), inputsChunk, func(lo, hi int) error {
		for j := lo; j < hi; j++ {
			if ins[j], errAt[j] = s.Inputs(s.Grants[made[j]]); errAt[j] != nil {
				failed.Store(true)
			}
		}
		return nil
	})
	if !failed.Load() {
		return ins, nil, skipped
	}
	n := 0
	for j := range ins {
		if errAt[j] != nil {
			errs = append(errs, errAt[j])
			continue
		}
		ins[n] = ins[j]
		n++
	}
	if n == 0 {
		return nil, errs, skipped
	}
	clear(ins[n:])
	return ins[:n], errs, skipped
}

// inputsChunk is how many consecutive grants one goroutine of ValueInputs
// gathers at a time.
const inputsChunk = 64

// PeriodEndPrice is the share price in force at the valuation date (the
// Share Prices row dated on or before it), with its cell: the disclosures
// value options and warrants outstanding at the period end at it. When no
// row is dated on or before the valuation date the error, a *CellError,
// names the valuation date's cell.
func (s *Schedule) PeriodEndPrice() (Source, error) {
	src, err := s.periodEndPrice()
	if err != nil {
		return src, err
	}
	return src, nil
}

func (s *Schedule) periodEndPrice() (Source, *CellError) {
	d := s.Company.ValuationDate
	if src, ok := s.SharePriceOn(d); ok {
		return src, nil
	}
	r := s.cell(SheetCompany, "valuation_date", 0, s.Company.Refs)
	return Source{}, &CellError{Sheet: r.Sheet, Cell: r.Cell, Column: "valuation_date", Value: isoDay(d), Err: ErrRequired,
		Msg: "has no share price: no Share Prices row is dated on or before it, and the intrinsic values of the options and warrants outstanding at the period end need one"}
}

// SharePriceOn is the share price in force on day d (PriceAt) with its
// cell, or false when no Share Prices row is dated on or before d.
func (s *Schedule) SharePriceOn(d time.Time) (Source, bool) {
	p, ok := s.PriceAt(d)
	if !ok {
		return Source{}, false
	}
	r := s.cell(SheetSharePrices, "price", p.Row, nil)
	return Source{Value: p.Price, Ref: r, Text: fmt.Sprintf("%s (valuation of %s)", r, isoDay(p.Date))}, true
}

// NeedsPeriodEndPrice reports whether an option or warrant is granted by
// the valuation date, so that the disclosures need PeriodEndPrice (an
// RSU has no intrinsic value to show apart from its price).
func (s *Schedule) NeedsPeriodEndPrice() bool {
	for _, g := range s.Grants {
		if g.Instrument != RSU && !g.GrantDate.IsZero() && !g.GrantDate.After(s.Company.ValuationDate) {
			return true
		}
	}
	return false
}

// MoveValuationDate makes d the period end in place of the Company
// sheet's valuation_date (a valuation date given on the command line),
// keeping the reporting period as long as the schedule's own: a schedule
// whose period_start to valuation_date spans n whole months (a quarter,
// say) reports the n months ending on d; a period_start the schedule did
// not give stays the default, Company.DefaultPeriodStart of d (the
// fiscal quarter ending on d, when d ends one); a period of any other
// length becomes the three months ending on d. When the period start so
// moves away from a period_start the schedule gave, the returned warning
// says which period is reported and why; otherwise it is "".
func (s *Schedule) MoveValuationDate(d time.Time) string {
	co := &s.Company
	oldEnd, oldStart := co.ValuationDate, co.PeriodStart
	co.ValuationDate = d
	_, given := co.Refs["period_start"]
	if !given || oldStart.IsZero() || oldEnd.IsZero() {
		co.PeriodStart = co.DefaultPeriodStart(d)
		return ""
	}
	if d.Equal(oldEnd) {
		return ""
	}
	months, why := 3, "the schedule's period is not a whole number of months, so a quarter is reported"
	for n := 1; n <= 12; n++ {
		if AddMonths(oldEnd.AddDate(0, 0, 1), -n).Equal(oldStart) {
			months, why = n, fmt.Sprintf("as long as the schedule's own period, %s to %s", isoDay(oldStart), isoDay(oldEnd))
			break
		}
	}
	co.PeriodStart = AddMonths(d.AddDate(0, 0, 1), -months)
	if co.PeriodStart.Equal(oldStart) {
		return ""
	}
	return fmt.Sprintf("the valuation date %s replaces %s (%s): the period reported is %s to %s, %d %s, %s; %s's period_start %s is not used",
		isoDay(d), isoDay(oldEnd), s.cell(SheetCompany, "valuation_date", 0, co.Refs), isoDay(co.PeriodStart), isoDay(d),
		months, plural(months, "month"), why, s.cell(SheetCompany, "period_start", 0, co.Refs), isoDay(oldStart))
}

// Period is the reporting period of the schedule: its period start to its
// valuation date, as calendar days. A period start the schedule does not
// give is the reader's default, Company.DefaultPeriodStart of the
// valuation date.
func (s *Schedule) Period() (start, end time.Time) {
	day := func(t time.Time) time.Time { return time.Date(t.Year(), t.Month(), t.Day(), 0, 0, 0, 0, time.UTC) }
	end = day(s.Company.ValuationDate)
	start = day(s.Company.PeriodStart)
	if s.Company.PeriodStart.IsZero() {
		start = s.Company.DefaultPeriodStart(end)
	}
	return start, end
}

// Cell is the cell of column key on row of sheet, as problems name it
// (the sheet's first column when key is not on it).
func (s *Schedule) Cell(sheet, key string, row int) Ref { return s.cell(sheet, key, row, nil) }
