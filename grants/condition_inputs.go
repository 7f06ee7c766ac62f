package grants

import (
	"fmt"
	"math"
	"time"

	"grantworth/valuation"
)

// ConditionInputs is what valuing a grant's vesting condition needs, with
// provenance (Inputs.Condition).
type ConditionInputs struct {
	Condition Condition // the Conditions row
	// Hurdle is a price hurdle's, its deadline in years from the
	// measurement date; Deadline the date (the row's, else the expiry).
	Hurdle   *valuation.Hurdle
	Deadline time.Time
	TSR      *TSRInputs
}

// Market reports whether c is a market condition (nil: none).
func (c *ConditionInputs) Market() bool { return c != nil && c.Condition.Kind.Market() }

// TSRInputs are a relative TSR grant's simulation inputs, estimated from
// the price files: each company's volatility by the estimator of `vol`
// (valuation.HistoricalVol, daily log returns) and their correlations
// (valuation.Correlations), over a look-back equal to the performance
// period remaining at the measurement date and ending on it, and each
// company's total-return growth so far in the period.
type TSRInputs struct {
	Award   valuation.TSRAward // VestYears are the grant's tranches'
	Company TSRCompany
	Peers   []TSRCompany
	// The window of the estimates: LookbackYears ending at AsOf (the
	// measurement date), from WindowStart; Returns daily returns on dates
	// every file has, behind the correlations.
	AsOf, WindowStart time.Time
	LookbackYears     float64
	Returns           int
}

// TSRCompany is the company or one peer as the simulation sees it.
type TSRCompany struct {
	Name, File string
	Ref        Ref    // the cell naming the file
	Column     string // the price column used (adjusted_close: dividends reinvested)
	Vol        valuation.VolEstimate
	// StartPrice is the last price on or before the performance period's
	// start (StartDate), NowPrice on or before the measurement date;
	// ToDate their ratio (1 before the period starts).
	StartDate, NowDate   time.Time
	StartPrice, NowPrice float64
	ToDate               float64
}

// conditionInputs fills in.Condition for a grant that names a condition.
// A relative TSR grant's volatility becomes the company's own, estimated
// from its price file.
func (s *Schedule) conditionInputs(in *Inputs) error {
	g := in.Grant
	gref := s.cell(SheetGrants, "condition", g.Row, g.Refs)
	k := s.Condition(g.Condition)
	if k == nil {
		return &CellError{Sheet: gref.Sheet, Cell: gref.Cell, Column: "condition", Value: g.Condition, Err: ErrUnknown, Msg: "is not a condition_id of the Conditions sheet"}
	}
	ci := &ConditionInputs{Condition: *k}
	in.Condition = ci
	md := in.MeasurementDate
	if k.Kind.Market() && in.CurveDate.IsZero() {
		r := s.cell(SheetGrants, "grant_date", g.Row, g.Refs)
		return &CellError{Sheet: r.Sheet, Cell: r.Cell, Column: "grant_date", Value: isoDay(g.GrantDate), Err: ErrRequired,
			Msg: fmt.Sprintf("has no Rates curve dated on or before it: market condition %s is valued with the risk-free rate", k.ID)}
	}
	kref := func(key string) Ref { return s.cell(SheetConditions, key, k.Row, k.Refs) }
	fail := func(r Ref, col, val, format string, args ...any) error {
		return &CellError{Sheet: r.Sheet, Cell: r.Cell, Column: col, Value: val, Err: ErrRange, Msg: fmt.Sprintf(format, args...)}
	}
	switch k.Kind {
	case PriceHurdle:
		ci.Deadline = k.HurdleDeadline
		if ci.Deadline.IsZero() || (g.Instrument == Option && ci.Deadline.After(g.ExpiryDate)) {
			ci.Deadline = g.ExpiryDate
		}
		if ci.Deadline.IsZero() {
			return &CellError{Sheet: SheetConditions, Cell: kref("hurdle_deadline").Cell, Column: "hurdle_deadline", Err: ErrRequired, Msg: fmt.Sprintf("is required for RSU %s", g.ID)}
		}
		D := valuation.YearFrac(md, ci.Deadline)
		if D <= 0 {
			return fail(kref("hurdle_deadline"), "hurdle_deadline", isoDay(ci.Deadline), "is not after the measurement date %s of grant %s", isoDay(md), g.ID)
		}
		mo := valuation.MonitorDaily
		if k.Monitoring == "continuous" {
			mo = valuation.MonitorContinuous
		}
		ci.Hurdle = &valuation.Hurdle{Price: k.HurdlePrice, YearsToDeadline: D, Monitoring: mo, AverageDays: k.HurdleDays}
	case RelativeTSR:
		t, err := s.tsrInputs(in, k)
		if err != nil {
			return err
		}
		ci.TSR = t
		c := t.Company
		in.Volatility = Source{Value: c.Vol.Annual, Ref: c.Ref, Text: fmt.Sprintf("%s (%s): %d daily returns %s to %s, the %.2f years of performance period remaining",
			c.File, c.Ref, c.Vol.Observations, isoDay(c.Vol.First), isoDay(c.Vol.Last), t.LookbackYears)}
		in.Market.VolAnnual = c.Vol.Annual
	}
	return nil
}

// tsrInputs estimates a relative TSR grant's simulation inputs from the
// price files of condition k.
func (s *Schedule) tsrInputs(in *Inputs, k *Condition) (*TSRInputs, error) {
	md := in.MeasurementDate
	g := in.Grant
	own := s.cell(SheetConditions, "own_prices", k.Row, k.Refs)
	fileErr := func(r Ref, col, file, format string, args ...any) error {
		return &CellError{Sheet: r.Sheet, Cell: r.Cell, Column: col, Value: file, Err: ErrRange, Msg: fmt.Sprintf(format, args...)}
	}
	type src struct {
		name, file, col string
		ref             Ref
		h               *PriceHistory
	}
	srcs := []src{{"company", k.OwnPrices, "own_prices", own, k.Own}}
	for _, p := range s.PeersOf(k.ID) {
		srcs = append(srcs, src{p.Name, p.File, "file", s.cell(SheetPeers, "file", p.Row, nil), p.History})
	}
	for _, x := range srcs {
		if x.h == nil {
			return nil, fileErr(x.ref, x.col, x.file, "was not read: relative TSR needs the schedule read from its file (grants.ReadFile), with the price files beside it")
		}
	}
	start := k.PeriodStart
	t := &TSRInputs{AsOf: md}
	from := md
	if md.Before(start) {
		from = start
	}
	t.LookbackYears = valuation.YearFrac(from, k.PeriodEnd)
	if t.LookbackYears <= 0 {
		r := s.cell(SheetGrants, "grant_date", g.Row, g.Refs)
		return nil, fileErr(r, "grant_date", isoDay(g.GrantDate), "is on or after the end %s of the performance period of condition %s", isoDay(k.PeriodEnd), k.ID)
	}
	t.WindowStart = md.AddDate(0, 0, -int(math.Round(t.LookbackYears*365.25)))
	series := make([][]valuation.PricePoint, len(srcs))
	for i, x := range srcs {
		c := TSRCompany{Name: x.name, File: x.file, Ref: x.ref, Column: x.h.Column, ToDate: 1}
		est, err := valuation.HistoricalVol(x.h.Points, valuation.VolOptions{Frequency: valuation.Daily, AsOf: md, LookbackYears: t.LookbackYears, MinObservations: 20})
		if err != nil {
			return nil, fileErr(x.ref, x.col, x.file, "gives no volatility over the %.2f years to %s for grant %s: %v", t.LookbackYears, isoDay(md), g.ID, err)
		}
		c.Vol = est
		var ok bool
		if c.StartDate, c.StartPrice, ok = priceOnOrBefore(x.h.Points, start); !ok {
			return nil, fileErr(x.ref, x.col, x.file, "has no price on or before the performance period's start %s", isoDay(start))
		}
		if c.NowDate, c.NowPrice, ok = priceOnOrBefore(x.h.Points, md); !ok {
			return nil, fileErr(x.ref, x.col, x.file, "has no price on or before the measurement date %s of grant %s", isoDay(md), g.ID)
		}
		if !md.Before(start) {
			c.ToDate = c.NowPrice / c.StartPrice
		}
		series[i] = x.h.Points
		if i == 0 {
			t.Company = c
		} else {
			t.Peers = append(t.Peers, c)
		}
	}
	corr, n, err := valuation.Correlations(series, md, t.LookbackYears, 20)
	if err != nil {
		return nil, fileErr(own, "own_prices", k.OwnPrices, "with the peers' files gives no correlations over the %.2f years to %s: %v", t.LookbackYears, isoDay(md), err)
	}
	t.Returns = n
	a := valuation.TSRAward{YearsToEnd: valuation.YearFrac(md, k.PeriodEnd), ToDate: t.Company.ToDate, Corr: corr}
	if md.Before(start) {
		a.YearsToStart = valuation.YearFrac(md, start)
	}
	for _, p := range t.Peers {
		a.Peers = append(a.Peers, valuation.TSRPeer{Vol: p.Vol.Annual, ToDate: p.ToDate})
	}
	for _, p := range s.PayoutOf(k.ID) {
		a.Payout = append(a.Payout, valuation.PayoutPoint{Percentile: p.Percentile, Payout: p.Payout})
	}
	if k.NegativeCap != nil {
		a.HasCap, a.NegativeCap = true, *k.NegativeCap
	}
	for _, tm := range in.Terms {
		a.VestYears = append(a.VestYears, tm.YearsToVest)
	}
	t.Award = a
	return t, nil
}

// priceOnOrBefore is the last price dated on or before d.
func priceOnOrBefore(pts []valuation.PricePoint, d time.Time) (time.Time, float64, bool) {
	var at time.Time
	var p float64
	for _, x := range pts {
		if x.Date.After(d) {
			break
		}
		at, p = x.Date, x.Price
	}
	return at, p, !at.IsZero()
}
