package grants

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"grantworth/valuation"
)

// Validate checks a schedule for the problems that reading cannot see
// (the rules are listed in the package documentation) and returns them
// with the cell each concerns. ReadFile, ReadXLSX and ReadCSVDir run it
// already; call it for a schedule built in code.
func Validate(s *Schedule) Report {
	return validate(s, nil)
}

// StaleMonths is how old the latest share valuation may be at a grant date
// before a warning (common practice: a valuation more than twelve months
// old is stale).
const StaleMonths = 12

// Bounds outside which a volatility draws a warning; the bounds of what is
// accepted at all are valuation.Limits.Volatility (the price command's
// too).
const (
	VolLow  = 0.05
	VolHigh = 2.00
)

func validate(s *Schedule, skip map[string]bool) Report {
	v := &validator{s: s, skip: make(map[string]bool, len(skip)), byID: make(map[string]int, len(s.Grants))}
	for id := range skip {
		v.skip[id] = true
	}
	for i := len(s.Grants) - 1; i >= 0; i-- {
		v.byID[s.Grants[i].ID] = i // the first row of an id wins
	}
	v.company()
	v.assumptions()
	v.prices()
	v.rates()
	v.grants()
	v.vesting()
	v.transfers()
	v.accounts()
	v.events()
	v.modifications()
	v.designs()
	v.conditions()
	return v.rep
}

type validator struct {
	s    *Schedule
	skip map[string]bool // grant ids whose Vesting and Events rows are not checked: the grant's row has an error
	byID map[string]int  // grant index by id
	rep  Report
	// the share valuations and rate curves more than a quarter old at
	// some grant's measurement date (marketAt), warned of after the grants
	oldPrices, oldCurves agedInputs
}

func (v *validator) grant(id string) (Grant, bool) {
	i, ok := v.byID[id]
	if !ok {
		return Grant{}, false
	}
	return v.s.Grants[i], true
}

func num(f float64) string { return strconv.FormatFloat(f, 'g', -1, 64) }
func isoDay(t time.Time) string {
	if t.IsZero() {
		return ""
	}
	return t.Format(time.DateOnly)
}

// cell is the reference of column key on row of sheet: from refs if the
// cell was read, else from the sheet's header layout.
func (s *Schedule) cell(sheet, key string, row int, refs map[string]Ref) Ref {
	if r, ok := refs[key]; ok {
		return r
	}
	if cols, ok := s.layout[sheet]; ok {
		if i, ok := cols[key]; ok && row > 0 {
			return Ref{Sheet: sheet, Cell: cellName(i+1, row)}
		}
	}
	if row > 0 {
		return Ref{Sheet: sheet, Cell: cellName(1, row)}
	}
	return Ref{Sheet: sheet}
}

func (v *validator) company() {
	co := &v.s.Company
	if co.ValuationDate.IsZero() {
		return
	}
	if !co.PeriodStart.IsZero() && !co.PeriodStart.Before(co.ValuationDate) {
		v.rep.errf(v.s.cell(SheetCompany, "period_start", 0, co.Refs), "period_start", isoDay(co.PeriodStart), ErrRange,
			"must be before valuation_date %s", isoDay(co.ValuationDate))
	}
	if v.s.NeedsPeriodEndPrice() {
		if _, err := v.s.periodEndPrice(); err != nil {
			v.rep.addErr(err)
		}
	}
	if _, rule := co.Refs["fiscal_year_end_rule"]; rule && !co.Fiscal.WeekBased {
		v.rep.warnf(v.s.cell(SheetCompany, "fiscal_year_end_rule", 0, co.Refs), "fiscal_year_end_rule", "", ErrInconsistent,
			"applies only to a 52/53-week year, with fiscal_year_end_weekday; it is ignored and the year ends on the month's last day")
	}
	if co.SharesOutstanding < 0 {
		v.rep.errf(v.s.cell(SheetCompany, "shares_outstanding", 0, co.Refs), "shares_outstanding", num(co.SharesOutstanding), ErrRange, "must be more than zero")
	}
}

// PercentHint is "; did you mean 58% (0.58)?" for a value x of a percent
// column or flag that is out of range (in says what is in range) but would
// be in range as x%: a percentage typed without its sign, 58 for 58%. It is
// "" otherwise; 1 and below get no hint (1 may as well mean 100%).
func PercentHint(x float64, in func(float64) bool) string {
	if x <= 1 || in(x) || !in(x/100) {
		return ""
	}
	return fmt.Sprintf("; did you mean %s%% (%s)?", num12(x), num12(x/100))
}

// num12 writes f to 12 significant digits, hiding the float noise of a
// scaling (4.526/100 is 0.04526, not 0.045259999999999995).
func num12(f float64) string { return strconv.FormatFloat(f, 'g', 12, 64) }

func (v *validator) rate(sheet, key string, row int, refs map[string]Ref, x float64, what string) {
	ref := v.s.cell(sheet, key, row, refs)
	if !valuation.Limits.ExitRate.In(x) { // the range of every annual leaving rate
		v.rep.errf(ref, key, num(x), ErrRange, "must be at least 0 and below 1 (100%%): %s%s", what, PercentHint(x, valuation.Limits.ExitRate.In))
	}
}

func (v *validator) vol(sheet string, row int, refs map[string]Ref, x float64) {
	ref := v.s.cell(sheet, "volatility", row, refs)
	switch {
	case !valuation.Limits.Volatility.In(x):
		l := valuation.Limits.Volatility
		v.rep.errf(ref, "volatility", num(x), ErrRange, "must be from %g to %g (%g%% to %g%%), as a decimal, 0.45, or a percentage, 45%%%s", l.Min, l.Max, l.Min*100, l.Max*100, PercentHint(x, l.In))
	case x < VolLow || x > VolHigh:
		v.rep.warnf(ref, "volatility", num(x), ErrRange, "is outside %g%%–%g%%; check that it is an annual decimal (0.45 = 45%%)", VolLow*100, VolHigh*100)
	}
}

func (v *validator) yield(sheet string, row int, refs map[string]Ref, x float64) {
	l := valuation.Limits.DividendYield
	v.limit(v.s.cell(sheet, "dividend_yield", row, refs), l, x, " (100%)"+PercentHint(x, l.In))
}

func (v *validator) multiple(sheet string, row int, refs map[string]Ref, x float64) {
	if l := valuation.Limits.ExerciseMultiple; !l.In(x) {
		v.rep.errf(v.s.cell(sheet, "exercise_multiple", row, refs), "exercise_multiple", num(x), ErrRange, "must be 0 (no such rule) or above %g, up to %g times the strike", l.Min, l.Max)
	}
}

// limit reports x outside the valuation's range l (valuation.Limits) at
// ref, as "must be " and the range, then more.
func (v *validator) limit(ref Ref, l valuation.Limit, x float64, more string) {
	if !l.In(x) {
		v.rep.errf(ref, l.Key, num(x), ErrRange, "must be %s%s", l.Range(), more)
	}
}

func (v *validator) assumptions() {
	a := &v.s.Assumptions
	sh := SheetAssumptions
	if a.has("volatility") {
		v.vol(sh, 0, a.Refs, a.Volatility)
	}
	for _, g := range v.s.Grants {
		if g.Volatility != nil || g.Instrument == RSU {
			continue
		}
		md := v.s.MeasurementDate(g)
		if at := a.At(md); at.has("volatility") {
			continue
		}
		gref := v.s.cell(SheetGrants, "volatility", g.Row, g.Refs)
		if ref, ok := a.blank["volatility"]; ok && !a.dated("volatility") {
			v.rep.errf(ref, "volatility", "", ErrRequired, "is empty, and grant %s (%s) gives none: fill in the annual volatility, 0.45 or 45%%", g.ID, gref)
		} else if !a.dated("volatility") {
			v.rep.errf(Ref{Sheet: sh}, "volatility", "", ErrRequired, "key is missing, and grant %s (%s) gives none: add a row volatility with its value", g.ID, gref)
		} else {
			v.rep.errf(Ref{Sheet: sh}, "volatility", "", ErrRequired, "has no row in force on %s, the measurement date of grant %s (%s gives none): add a row without effective_date or one dated on or before it", isoDay(md), g.ID, gref)
		}
		break
	}
	for _, r := range a.Dated {
		refs := map[string]Ref{r.Key: r.Ref}
		switch r.Key {
		case "volatility":
			v.vol(sh, 0, refs, r.Value)
		case "dividend_yield":
			v.yield(sh, 0, refs, r.Value)
		case "exercise_multiple":
			v.multiple(sh, 0, refs, r.Value)
		case "post_vesting_exit_rate":
			v.rate(sh, r.Key, 0, refs, r.Value, "the annual share of vested holders who leave")
		case "pre_vesting_forfeiture_rate":
			v.rate(sh, r.Key, 0, refs, r.Value, "the annual share of unvested holders who leave")
		}
	}
	v.yield(sh, 0, a.Refs, a.DividendYield)
	v.multiple(sh, 0, a.Refs, a.ExerciseMultiple)
	v.rate(sh, "post_vesting_exit_rate", 0, a.Refs, a.PostVestingExitRate, "the annual share of vested holders who leave")
	v.rate(sh, "pre_vesting_forfeiture_rate", 0, a.Refs, a.PreVestingForfeitureRate, "the annual share of unvested holders who leave")
	v.rate(sh, "tax_rate", 0, a.Refs, a.TaxRate, "the statutory income tax rate")
	// The policy of the close is the one in force at the valuation date.
	if p := v.s.InForce(); p.Framework == IFRS2 {
		if p.Attribution == StraightLine {
			v.rep.errf(v.s.cell(sh, "attribution", 0, p.Refs), "attribution", string(p.Attribution), ErrInconsistent,
				"is not allowed under IFRS 2 (framework ifrs2): each tranche of a graded award is a separate award, so attribution must be graded (IFRS 2.IG11)")
		}
		if p.Forfeitures == AsOccur {
			v.rep.errf(v.s.cell(sh, "forfeitures", 0, p.Refs), "forfeitures", string(p.Forfeitures), ErrInconsistent,
				"is not allowed under IFRS 2 (framework ifrs2): the expense must rest on the best estimate of the awards expected to vest (IFRS 2.20), so forfeitures must be estimate")
		}
	}
}

func (v *validator) prices() {
	seen := map[time.Time]int{}
	for _, p := range v.s.SharePrices {
		if l := valuation.Limits.SharePrice; !l.In(p.Price) {
			v.rep.errf(v.s.cell(SheetSharePrices, "price", p.Row, nil), "price", num(p.Price), ErrRange, "must be %s", l.Range())
		}
		if r, dup := seen[p.Date]; dup {
			v.rep.errf(v.s.cell(SheetSharePrices, "date", p.Row, nil), "date", isoDay(p.Date), ErrDuplicate,
				"is also the date of %s; keep one price per date", v.s.cell(SheetSharePrices, "date", r, nil).Cell)
		} else {
			seen[p.Date] = p.Row
		}
	}
}

func (v *validator) rates() {
	for _, c := range v.s.curves() {
		tenors := map[float64]int{}
		par, other := 0, 0
		for _, p := range c.points {
			ref := v.s.cell(SheetRates, "tenor_years", p.Row, nil)
			v.limit(ref, valuation.Limits.Tenor, p.TenorYears, " years")
			if r, dup := tenors[p.TenorYears]; dup {
				v.rep.errf(ref, "tenor_years", num(p.TenorYears), ErrDuplicate, "appears twice in the curve of %s (also %s)", isoDay(c.date), v.s.cell(SheetRates, "tenor_years", r, nil).Cell)
			} else {
				tenors[p.TenorYears] = p.Row
			}
			if !valuation.Limits.Rate.In(p.Rate) {
				msg := "is not a plausible rate; write 4.5% or 0.045, not 4.5"
				if h := PercentHint(p.Rate, valuation.Limits.Rate.In); h != "" {
					msg = "is not a plausible rate" + h
				}
				v.rep.errf(v.s.cell(SheetRates, "rate", p.Row, nil), "rate", num(p.Rate), ErrRange, "%s", msg)
			}
			if p.Compounding == "par-semiannual" {
				par++
				if h := p.TenorYears * 2; p.TenorYears >= 0.5 && math.Abs(h-math.Round(h)) > 1e-9 {
					v.rep.errf(ref, "tenor_years", num(p.TenorYears), ErrRange,
						"is not a whole number of half-years, as a par-semiannual yield needs (semiannual coupons); below half a year any tenor is a bill")
				}
			} else {
				other++
			}
		}
		if par > 0 && other > 0 {
			v.rep.errf(v.s.cell(SheetRates, "compounding", c.points[0].Row, nil), "compounding", "", ErrInconsistent,
				"the curve of %s mixes par-semiannual yields with zero rates; give one or the other", isoDay(c.date))
			continue
		}
		if v.rep.OK() {
			if _, _, err := c.build(); err != nil {
				v.rep.errf(v.s.cell(SheetRates, "curve_date", c.points[0].Row, nil), "curve_date", isoDay(c.date), ErrRange, "cannot be made into a zero curve: %v", err)
			}
		}
	}
}

func (v *validator) grants() {
	s := v.s
	ids := map[string]int{}
	for _, g := range s.Grants {
		ref := func(k string) Ref { return s.cell(SheetGrants, k, g.Row, g.Refs) }
		if r, dup := ids[g.ID]; dup {
			v.rep.errf(ref("grant_id"), "grant_id", g.ID, ErrDuplicate, "is also the grant_id of row %d (%s)", r, s.cell(SheetGrants, "grant_id", r, nil).Cell)
		} else {
			ids[g.ID] = g.Row
		}
		// An error in what shapes the grant's tranches (shares, expiry,
		// vesting) is reported once: its Vesting and Events rows are not
		// checked against tranches known to be wrong (skip).
		shapeErrs := v.rep.ErrorCount()
		if g.Shares <= 0 {
			v.rep.errf(ref("shares"), "shares", strconv.FormatInt(g.Shares, 10), ErrRange, "must be more than zero")
		}
		if g.Shares > 0 {
			v.limit(ref("shares"), valuation.Limits.Shares, float64(g.Shares), " shares")
		}
		_, hasStrike := g.Refs["strike"]
		if g.Refs == nil {
			hasStrike = g.Strike > 0
		}
		switch {
		case g.Instrument != RSU && !hasStrike:
			v.rep.errf(ref("strike"), "strike", "", ErrRequired, "is required for %s %s", article(g.Instrument), g.ID)
		case !valuation.Limits.Strike.In(g.Strike):
			v.rep.errf(ref("strike"), "strike", num(g.Strike), ErrRange, "must be %s", valuation.Limits.Strike.Range())
		case g.Instrument == RSU && hasStrike && g.Strike != 0:
			v.rep.warnf(ref("strike"), "strike", num(g.Strike), ErrInconsistent, "is ignored: an RSU has no strike")
		}
		if g.Instrument != RSU {
			if g.ExpiryDate.IsZero() {
				v.rep.errf(ref("expiry_date"), "expiry_date", "", ErrRequired, "%s %s needs expiry_date or term_years", article(g.Instrument), g.ID)
			} else if !g.ExpiryDate.After(g.GrantDate) {
				v.rep.errf(ref("expiry_date"), "expiry_date", isoDay(g.ExpiryDate), ErrRange, "must be after grant_date %s (%s)", isoDay(g.GrantDate), ref("grant_date").Cell)
			} else if !g.GrantDate.IsZero() && !valuation.Limits.YearsToExpiry.In(valuation.YearFrac(g.GrantDate, g.ExpiryDate)) {
				v.rep.errf(ref("expiry_date"), "expiry_date", isoDay(g.ExpiryDate), ErrRange, "is more than 100 years (%d days) after grant_date %s (%s)", valuation.MaxTermDays, isoDay(g.GrantDate), ref("grant_date").Cell)
			}
		}
		if g.CliffMonths > g.VestMonths {
			v.rep.errf(ref("cliff_months"), "cliff_months", strconv.Itoa(g.CliffMonths), ErrRange, "is longer than vest_months %d (%s)", g.VestMonths, ref("vest_months").Cell)
		}
		if e := g.VestEvery; e != 1 && e != 3 && e != 12 {
			v.rep.errf(ref("vest_every_months"), "vest_every_months", strconv.Itoa(e), ErrRange, "must be 1, 3 or 12")
		}
		if v.rep.ErrorCount() > shapeErrs {
			v.skip[g.ID] = true
		}
		if !g.VestStart.IsZero() && !g.GrantDate.IsZero() && g.VestStart.After(g.GrantDate.AddDate(1, 0, 0)) {
			v.rep.warnf(ref("vest_start"), "vest_start", isoDay(g.VestStart), ErrRange, "is more than a year after grant_date %s", isoDay(g.GrantDate))
		}
		switch {
		case g.Instrument == Warrant && g.Purpose == "":
			v.rep.errf(ref("purpose"), "purpose", "", ErrRequired,
				"warrant %s must say what it pays for: compensation (share-based payment for services) or financing (issued to a lender or an investor, not compensation)", g.ID)
		case g.Instrument != Warrant && g.Purpose == Financing:
			v.rep.errf(ref("purpose"), "purpose", string(g.Purpose), ErrInconsistent,
				"applies to warrants only: enter an instrument issued to a lender or an investor as a warrant (%s %s)", article(g.Instrument), g.ID)
		}
		if !g.HireDate.IsZero() && !g.GrantDate.IsZero() && g.HireDate.After(g.GrantDate) {
			if !g.ExpiryDate.IsZero() && !g.HireDate.Before(g.ExpiryDate) {
				v.rep.errf(ref("hire_date"), "hire_date", isoDay(g.HireDate), ErrRange, "is on or after the expiry %s of %s %s", isoDay(g.ExpiryDate), article(g.Instrument), g.ID)
			} else if last, ok := s.lastVest(g); ok && g.HireDate.After(last) {
				v.rep.warnf(ref("hire_date"), "hire_date", isoDay(g.HireDate), ErrRange,
					"is after the last vest date %s of grant %s: no service is left to earn, so its whole cost is recognized on the hire date", isoDay(last), g.ID)
			}
		}
		if co := s.Company.ValuationDate; !co.IsZero() && g.GrantDate.After(co) {
			v.rep.warnf(ref("grant_date"), "grant_date", isoDay(g.GrantDate), ErrRange, "is after the valuation date %s; the grant is outside the period", isoDay(co))
		}
		// Overrides.
		if g.Volatility != nil {
			v.vol(SheetGrants, g.Row, g.Refs, *g.Volatility)
		}
		if g.DividendYield != nil {
			v.yield(SheetGrants, g.Row, g.Refs, *g.DividendYield)
		}
		if g.ExerciseMultiple != nil {
			v.multiple(SheetGrants, g.Row, g.Refs, *g.ExerciseMultiple)
		}
		if g.PostVestingExitRate != nil {
			v.rate(SheetGrants, "post_vesting_exit_rate", g.Row, g.Refs, *g.PostVestingExitRate, "the annual share of vested holders who leave")
		}
		if g.SharePrice != nil {
			v.limit(ref("share_price"), valuation.Limits.SharePrice, *g.SharePrice, "")
		}
		v.costCenter(ref("cost_center"), g.CostCenter)
		if g.Instrument == Warrant && s.Company.SharesOutstanding <= 0 {
			v.rep.errf(s.cell(SheetCompany, "shares_outstanding", 0, s.Company.Refs), "shares_outstanding", "", ErrRequired,
				"is needed for the dilution of warrant %s (%s)", g.ID, ref("grant_id").Cell)
		}
		if g.Shares <= 0 || g.GrantDate.IsZero() {
			continue
		}
		v.marketAt(g, ref)
		// Vesting that ends after expiry.
		if g.Instrument != RSU && !g.ExpiryDate.IsZero() && g.ExpiryDate.After(g.GrantDate) && g.CliffMonths <= g.VestMonths {
			// Events move no vest date.
			if lastVest, ok := s.lastVest(g); ok && lastVest.After(g.ExpiryDate) {
				if rows := s.vestRows(g.ID); len(rows) > 0 {
					last := rows[0]
					for _, r := range rows {
						if r.VestDate.After(last.VestDate) {
							last = r
						}
					}
					v.rep.errf(s.cell(SheetVesting, "vest_date", last.Row, nil), "vest_date", isoDay(last.VestDate), ErrRange,
						"is after the expiry %s of grant %s (%s)", isoDay(g.ExpiryDate), g.ID, ref("expiry_date").Cell)
				} else {
					v.rep.errf(ref("vest_months"), "vest_months", "", ErrRange,
						"vesting ends %s, after the expiry %s (%s)", isoDay(lastVest), isoDay(g.ExpiryDate), ref("expiry_date").Cell)
				}
			}
		}
	}
	v.oldPrices.warn(v, "the share valuation in force", "check that the share's fair value has not moved since, or add a Share Prices row nearer the date")
	v.oldCurves.warn(v, "the rate curve in force", "add a Rates curve dated nearer the measurement date")
}

func article(i Instrument) string {
	switch i {
	case Option:
		return "option"
	case Warrant:
		return "warrant"
	}
	return string(i)
}

// marketAt checks that a share price and a rate curve are known at the
// grant's measurement date, and that the price is not stale.
func (v *validator) marketAt(g Grant, ref func(string) Ref) {
	s := v.s
	md := s.MeasurementDate(g)
	if md.IsZero() {
		return
	}
	p, ok := s.PriceAt(md)
	if g.SharePrice == nil {
		if !ok {
			v.rep.errf(ref("share_price"), "share_price", "", ErrRequired,
				"no share price is known at the measurement date %s of grant %s: give one here or a Share Prices row dated on or before it", isoDay(md), g.ID)
		} else if g.Strike > 0 && g.Instrument != RSU && g.Strike < p.Price && md.Equal(g.GrantDate) {
			v.rep.warnf(ref("strike"), "strike", num(g.Strike), ErrRange, "is below the share price %s at grant (%s): the award is in the money", num(p.Price), s.cell(SheetSharePrices, "price", p.Row, nil))
		}
	} else if g.Strike > 0 && g.Instrument != RSU && g.Strike < *g.SharePrice && md.Equal(g.GrantDate) {
		v.rep.warnf(ref("strike"), "strike", num(g.Strike), ErrRange, "is below the share price %s at grant (%s): the award is in the money", num(*g.SharePrice), ref("share_price").Cell)
	}
	if ok && g.SharePrice == nil && AddMonths(p.Date, StaleMonths).Before(md) {
		r, key := ref("grant_date"), "grant_date"
		if !md.Equal(g.GrantDate) { // a liability warrant, measured at the valuation date
			r, key = s.cell(SheetCompany, "valuation_date", 0, s.Company.Refs), "valuation_date"
		}
		v.rep.warnf(r, key, isoDay(md), ErrRange,
			"is more than %d months after the latest share valuation, %s (%s): the valuation may be stale", StaleMonths, isoDay(p.Date), s.cell(SheetSharePrices, "date", p.Row, nil))
	} else if ok && g.SharePrice == nil && olderThanQuarter(p.Date, md) {
		v.oldPrices.note(s.cell(SheetSharePrices, "date", p.Row, nil), "date", p.Date, md, g.ID)
	}
	if g.Instrument == Warrant && g.Classification == Liability && !g.ExpiryDate.IsZero() && !md.Before(g.ExpiryDate) {
		v.rep.errf(ref("expiry_date"), "expiry_date", isoDay(g.ExpiryDate), ErrRange,
			"is on or before the valuation date %s: liability-classified warrant %s is remeasured at the valuation date but has expired; leave it out of the schedule of outstanding awards", isoDay(md), g.ID)
	}
	if g.Instrument != RSU {
		if c, ok := s.curveAt(md); !ok {
			v.rep.errf(ref("grant_date"), "grant_date", "", ErrRequired,
				"no Rates curve is dated on or before the measurement date %s of grant %s", isoDay(md), g.ID)
		} else if olderThanQuarter(c.date, md) {
			v.oldCurves.note(s.cell(SheetRates, "curve_date", c.points[0].Row, nil), "curve_date", c.date, md, g.ID)
		}
	}
}

func (v *validator) vesting() {
	s := v.s
	type sum struct {
		shares int64
		rows   []int
	}
	sums := map[string]*sum{}
	var order []string
	for _, r := range s.Vesting {
		if r.Shares <= 0 {
			v.rep.errf(s.cell(SheetVesting, "shares", r.Row, nil), "shares", strconv.FormatInt(r.Shares, 10), ErrRange, "must be more than zero")
		}
		g, ok := v.grant(r.GrantID)
		if !ok {
			if !v.skip[r.GrantID] {
				v.rep.errf(s.cell(SheetVesting, "grant_id", r.Row, nil), "grant_id", r.GrantID, ErrUnknown, "is not a grant_id of the Grants sheet")
			}
			continue
		}
		if !g.GrantDate.IsZero() && r.VestDate.Before(g.GrantDate.AddDate(-10, 0, 0)) {
			v.rep.errf(s.cell(SheetVesting, "vest_date", r.Row, nil), "vest_date", isoDay(r.VestDate), ErrRange, "is more than ten years before the grant date %s", isoDay(g.GrantDate))
		}
		if sums[r.GrantID] == nil {
			sums[r.GrantID] = &sum{}
			order = append(order, r.GrantID)
		}
		sums[r.GrantID].shares += r.Shares
		sums[r.GrantID].rows = append(sums[r.GrantID].rows, r.Row)
	}
	for _, id := range order {
		if v.skip[id] {
			continue
		}
		g, _ := v.grant(id)
		if su := sums[id]; su.shares != g.Shares {
			first, last := su.rows[0], su.rows[len(su.rows)-1]
			v.rep.errf(s.cell(SheetVesting, "shares", first, nil), "shares", "", ErrInconsistent,
				"the Vesting rows %d–%d of grant %s add up to %d shares, but the grant has %d (%s)",
				first, last, id, su.shares, g.Shares, s.cell(SheetGrants, "shares", g.Row, g.Refs))
		}
	}
}

// costCenter refuses the reserved name Unassigned.
func (v *validator) costCenter(ref Ref, name string) {
	if strings.EqualFold(strings.TrimSpace(name), Unassigned) {
		v.rep.errf(ref, "cost_center", name, ErrRange, "is the name grantworth gives expense with no cost centre; leave the cell empty for that, or name the cost centre")
	}
}

func (v *validator) transfers() {
	s := v.s
	seen := map[string]int{} // grant and date → row
	for _, tr := range s.Transfers {
		ref := func(k string) Ref { return s.cell(SheetTransfers, k, tr.Row, nil) }
		g, ok := v.grant(tr.GrantID)
		if !ok {
			if !v.skip[tr.GrantID] {
				v.rep.errf(ref("grant_id"), "grant_id", tr.GrantID, ErrUnknown, "is not a grant_id of the Grants sheet")
			}
			continue
		}
		v.costCenter(ref("cost_center"), tr.CostCenter)
		key := tr.GrantID + "\x00" + isoDay(tr.Date)
		if r, dup := seen[key]; dup {
			v.rep.errf(ref("date"), "date", isoDay(tr.Date), ErrDuplicate, "is also the date of row %d (%s) for grant %s; keep one cost centre per day", r, s.cell(SheetTransfers, "date", r, nil).Cell, tr.GrantID)
			continue
		}
		seen[key] = tr.Row
		switch {
		case !g.GrantDate.IsZero() && !tr.Date.After(g.GrantDate):
			v.rep.warnf(ref("date"), "date", isoDay(tr.Date), ErrRange, "is on or before the grant date %s of grant %s: the grant's service is in %s from its start, whatever its cost_center (%s)",
				isoDay(g.GrantDate), g.ID, tr.CostCenter, s.cell(SheetGrants, "cost_center", g.Row, g.Refs).Cell)
		case !s.Company.ValuationDate.IsZero() && tr.Date.After(s.Company.ValuationDate):
			v.rep.warnf(ref("date"), "date", isoDay(tr.Date), ErrRange, "is after the valuation date %s: it is left out of this close, like an event after it", isoDay(s.Company.ValuationDate))
		}
	}
}

func (v *validator) accounts() {
	s := v.s
	used := map[string]bool{}
	for _, g := range s.Grants {
		used[g.CostCenter] = true
	}
	for _, t := range s.Transfers {
		used[t.CostCenter] = true
	}
	seen := map[string]int{} // role and cost centre → row
	for _, a := range s.Accounts {
		ref := func(k string) Ref { return s.cell(SheetAccounts, k, a.Row, nil) }
		key := a.Role + "\x00" + a.CostCenter
		if r, dup := seen[key]; dup {
			what := "role " + a.Role
			if a.CostCenter != "" {
				what += " and cost centre " + a.CostCenter
			}
			v.rep.errf(ref("role"), "role", a.Role, ErrDuplicate, "is given twice: row %d (%s) maps the same %s", r, s.cell(SheetAccounts, "role", r, nil).Cell, what)
			continue
		}
		seen[key] = a.Row
		switch {
		case a.CostCenter != "" && a.Role != "compensation_expense":
			v.rep.warnf(ref("cost_center"), "cost_center", a.CostCenter, ErrInconsistent, "applies to compensation_expense only; the %s row is used for every cost centre", a.Role)
		case a.CostCenter != "" && !used[a.CostCenter]:
			v.rep.warnf(ref("cost_center"), "cost_center", a.CostCenter, ErrUnknown, "is not the cost_center of any grant or transfer; the row is not used")
		}
	}
}

func (v *validator) events() {
	s := v.s
	byGrant := map[string][]Event{}
	var order []string
	for _, e := range s.Events {
		ref := func(k string) Ref { return s.cell(SheetEvents, k, e.Row, nil) }
		if e.Shares <= 0 {
			v.rep.errf(ref("shares"), "shares", strconv.FormatInt(e.Shares, 10), ErrRange, "must be more than zero")
			continue
		}
		g, ok := v.grant(e.GrantID)
		if !ok {
			if !v.skip[e.GrantID] {
				v.rep.errf(ref("grant_id"), "grant_id", e.GrantID, ErrUnknown, "is not a grant_id of the Grants sheet")
			}
			continue
		}
		if e.Date.Before(g.GrantDate) {
			v.rep.errf(ref("date"), "date", isoDay(e.Date), ErrRange, "is before the grant date %s of grant %s (%s)", isoDay(g.GrantDate), g.ID, s.cell(SheetGrants, "grant_date", g.Row, g.Refs).Cell)
			continue
		}
		if exp := s.Expiry(g); !exp.IsZero() && e.Date.After(exp) {
			v.rep.errf(ref("date"), "date", isoDay(e.Date), ErrRange, "is after the expiry date %s of grant %s (%s)", isoDay(exp), g.ID, s.cell(SheetGrants, "expiry_date", g.Row, g.Refs).Cell)
			continue
		}
		if e.SharePrice != nil && !(*e.SharePrice > 0) {
			v.rep.errf(ref("share_price"), "share_price", num(*e.SharePrice), ErrRange, "must be more than zero")
		}
		if vd := s.Company.ValuationDate; !vd.IsZero() && e.Date.After(vd) {
			v.rep.warnf(ref("date"), "date", isoDay(e.Date), ErrRange, "is after the valuation date %s", isoDay(vd))
		}
		if byGrant[e.GrantID] == nil {
			order = append(order, e.GrantID)
		}
		byGrant[e.GrantID] = append(byGrant[e.GrantID], e)
	}
	for _, id := range order {
		if v.skip[id] {
			continue
		}
		g, _ := v.grant(id)
		gref := s.cell(SheetGrants, "shares", g.Row, g.Refs)
		for _, tk := range s.allocate(g, s.tranchesBeforeEvents(g), byGrant[id]).Events {
			e := tk.Event
			ref := s.cell(SheetEvents, "shares", e.Row, nil)
			n := strconv.FormatInt(e.Shares, 10)
			switch e.Kind {
			case Forfeited:
				switch {
				case tk.Short > 0:
					v.rep.errf(ref, "shares", n, ErrRange,
						"forfeits more than the %d shares outstanding of grant %s on %s (%s)", tk.Unvested+tk.Vested, id, isoDay(e.Date), gref)
				case tk.FromVested > 0:
					v.rep.warnf(ref, "shares", n, ErrRange,
						"is more than the %d unvested shares of grant %s on %s; the rest are taken from vested shares (record those as expired)", tk.Unvested, id, isoDay(e.Date))
				case tk.FromUnvested < tk.Unvested:
					v.rep.warnf(ref, "shares", n, ErrRange,
						"forfeits %d of the %d shares of grant %s unvested on %s: the other %d still vest after that date, as though their holders stayed. If the holder left, forfeit all %d; a pooled row of several holders may forfeit part, taken from each unvested tranche in proportion",
						tk.FromUnvested, tk.Unvested, id, isoDay(e.Date), tk.Unvested-tk.FromUnvested, tk.Unvested)
				}
			case Exercised, Expired:
				if tk.Short > 0 {
					v.rep.errf(ref, "shares", n, ErrRange,
						"%s more than the %d vested shares outstanding of grant %s on %s (%s)", verb(e.Kind), tk.Vested, id, isoDay(e.Date), gref)
				}
			case Cancelled:
				if tk.Short > 0 {
					v.rep.errf(ref, "shares", n, ErrRange,
						"cancels more than the %d shares outstanding of grant %s on %s (%s)", tk.Unvested+tk.Vested, id, isoDay(e.Date), gref)
				}
			}
		}
	}
}

func verb(k EventKind) string {
	if k == Exercised {
		return "exercises"
	}
	return "expires"
}

// MeasurementDate is the date a grant is measured at: the grant date, or
// for a liability-classified warrant the valuation date (it is remeasured
// every period).
func (s *Schedule) MeasurementDate(g Grant) time.Time {
	if g.Instrument == Warrant && g.Classification == Liability && !s.Company.ValuationDate.IsZero() {
		return s.Company.ValuationDate
	}
	return g.GrantDate
}

// PriceAt is the Share Prices row in force on d: the latest dated on or
// before d.
func (s *Schedule) PriceAt(d time.Time) (PricePoint, bool) {
	var best PricePoint
	ok := false
	for _, p := range s.SharePrices {
		if !p.Date.After(d) && (!ok || p.Date.After(best.Date)) {
			best, ok = p, true
		}
	}
	return best, ok
}

// curve is the Rates rows of one curve date.
type curve struct {
	date   time.Time
	points []RatePoint
}

func (s *Schedule) curves() []curve {
	by := map[time.Time][]RatePoint{}
	var dates []time.Time
	for _, p := range s.Rates {
		if by[p.CurveDate] == nil {
			dates = append(dates, p.CurveDate)
		}
		by[p.CurveDate] = append(by[p.CurveDate], p)
	}
	sort.Slice(dates, func(i, j int) bool { return dates[i].Before(dates[j]) })
	out := make([]curve, len(dates))
	for i, d := range dates {
		out[i] = curve{date: d, points: by[d]}
	}
	return out
}

// builtCurveAt is the latest curve dated on or before d, with its zero
// curve built (once per curve date when the schedule is indexed).
func (s *Schedule) builtCurveAt(d time.Time) (*indexedCurve, bool) {
	if ix := s.fresh(); ix != nil {
		return ix.curveOn(d)
	}
	c, ok := s.curveAt(d)
	if !ok {
		return nil, false
	}
	ic := indexCurve(c)
	return &ic, true
}

// curveAt is the latest curve dated on or before d.
func (s *Schedule) curveAt(d time.Time) (curve, bool) {
	if ix := s.fresh(); ix != nil {
		if c, ok := ix.curveOn(d); ok {
			return c.curve, true
		}
		return curve{}, false
	}
	var best curve
	ok := false
	for _, p := range s.Rates {
		if !p.CurveDate.After(d) && (!ok || p.CurveDate.After(best.date)) {
			best, ok = curve{date: p.CurveDate}, true
		}
	}
	if !ok {
		return curve{}, false
	}
	for _, p := range s.Rates {
		if p.CurveDate.Equal(best.date) {
			best.points = append(best.points, p)
		}
	}
	return best, true
}

// build makes the zero curve and says how.
func (c curve) build() (*valuation.Curve, string, error) {
	n := len(c.points)
	if n > 0 && c.points[0].Compounding == "par-semiannual" {
		pts := append([]RatePoint(nil), c.points...)
		sort.Slice(pts, func(i, j int) bool { return pts[i].TenorYears < pts[j].TenorYears })
		tenors := make([]float64, n)
		yields := make([]float64, n)
		for i, p := range pts {
			if p.Compounding != "par-semiannual" {
				return nil, "", fmt.Errorf("the curve mixes par-semiannual yields with zero rates")
			}
			tenors[i], yields[i] = p.TenorYears, p.Rate
		}
		cv, err := bootstrapPar(tenors, yields)
		if err != nil {
			return nil, "", err
		}
		return cv, fmt.Sprintf("Rates curve of %s, %d %s, par-semiannual yields bootstrapped to zero rates", isoDay(c.date), n, plural(n, "point")), nil
	}
	pts := make([]valuation.CurvePoint, n)
	kinds := map[string]bool{}
	for i, p := range c.points {
		var comp valuation.Compounding
		switch p.Compounding {
		case "annual":
			comp = valuation.Annual
		case "semiannual":
			comp = valuation.Semiannual
		case "continuous", "":
			comp = valuation.Continuous
		default:
			return nil, "", fmt.Errorf("the curve mixes par-semiannual yields with zero rates")
		}
		kinds[comp.String()] = true
		pts[i] = valuation.CurvePoint{Tenor: p.TenorYears, Rate: p.Rate, Compounding: comp}
	}
	cv, err := valuation.NewCurve(pts)
	if err != nil {
		return nil, "", err
	}
	var ks []string
	for k := range kinds {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	return cv, fmt.Sprintf("Rates curve of %s, %d %s, %s zero rates", isoDay(c.date), n, plural(n, "point"), strings.Join(ks, " and ")), nil
}

func plural(n int, w string) string {
	if n == 1 {
		return w
	}
	return w + "s"
}
