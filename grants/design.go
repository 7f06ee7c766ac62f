package grants

import (
	"fmt"
	"io"
	"strconv"
	"time"
)

// Design is one row of the Designs sheet: a grant that could be made, to be
// compared with others before it is. Nil overrides take the Assumptions.
type Design struct {
	Name          string
	Instrument    Instrument
	Shares        int64
	Strike        *float64 // currency per share; nil when StrikePremium gives it
	StrikePremium *float64 // the strike as a fraction over the share price at the grant date
	TermYears     float64  // contractual term; 0 for an RSU
	VestMonths    int
	CliffMonths   int
	VestEvery     int // months: 1, 3 or 12

	ExerciseMultiple         *float64
	PostVestingExitRate      *float64
	PreVestingForfeitureRate *float64
	Volatility               *float64

	Row  int            // 1-based row on the Designs sheet
	Refs map[string]Ref // by column key
}

// ReadDesigns reads a grant designs workbook (the layout of DesignSheets)
// at path: an .xlsx file or a folder of CSV files. As with ReadFile, the
// error is for a file that cannot be read at all; every problem in it is
// in the Report with its cell.
func ReadDesigns(path string) (*Schedule, *Report, error) {
	s, rep, err := readFile(path, DesignSheets)
	if err != nil {
		return nil, nil, err
	}
	noDesigns(s, rep)
	return s, rep, nil
}

// noDesigns reports a designs workbook whose Designs sheet has a header but
// no design, when nothing else is wrong with it.
func noDesigns(s *Schedule, rep *Report) {
	if _, read := s.layout[SheetDesigns]; read && len(s.Designs) == 0 && rep.OK() {
		rep.errf(Ref{Sheet: SheetDesigns, Cell: "A2"}, "design", "", ErrRequired, "the sheet has no design: add one row per design under the header")
	}
}

// WriteDesignsXLSX writes s as a grant designs workbook in the layout of
// DesignSheets, with an About sheet; a nil s gives the blank template.
func WriteDesignsXLSX(w io.Writer, s *Schedule) error {
	return writeXLSX(w, s, DesignSheets, "grantworth grant designs")
}

// WriteDesignsCSVDir writes s as a folder of CSV files in the layout of
// DesignSheets into dir, which must exist.
func WriteDesignsCSVDir(dir string, s *Schedule) error { return writeCSVDir(dir, s, DesignSheets) }

// DesignDate is the date every design of s would be granted on: the
// Company's grant_date, else its valuation_date.
func (s *Schedule) DesignDate() time.Time {
	if !s.Company.GrantDate.IsZero() {
		return s.Company.GrantDate
	}
	return s.Company.ValuationDate
}

// designDateRef is the cell that gives DesignDate.
func (s *Schedule) designDateRef() (Ref, string) {
	if !s.Company.GrantDate.IsZero() {
		return s.cell(SheetCompany, "grant_date", 0, s.Company.Refs), "grant_date"
	}
	return s.cell(SheetCompany, "valuation_date", 0, s.Company.Refs), "valuation_date"
}

// DesignGrant is design d as the grant it describes, made on DesignDate: the
// strike given or the share price then times one plus the premium, the
// expiry term_years on (as a Grants row with term_years), vesting from the
// grant date, and the design's overrides. A warrant is equity-classified
// with American exercise. The error (a *CellError) names what is missing;
// Validate reports the same problems for every design at once.
func (s *Schedule) DesignGrant(d Design) (Grant, error) {
	gd := s.DesignDate()
	g := Grant{
		ID: d.Name, Instrument: d.Instrument, GrantDate: gd, Shares: d.Shares, VestStart: gd,
		VestMonths: d.VestMonths, CliffMonths: d.CliffMonths, VestEvery: max(d.VestEvery, 1),
		Volatility: d.Volatility, ExerciseMultiple: d.ExerciseMultiple, PostVestingExitRate: d.PostVestingExitRate,
		Row: d.Row, Refs: d.Refs,
	}
	if g.Instrument == Warrant {
		g.Classification, g.ExerciseStyle = Equity, American
	}
	if g.Instrument == RSU {
		return g, nil
	}
	fail := func(key, format string, args ...any) (Grant, error) {
		r := s.cell(SheetDesigns, key, d.Row, d.Refs)
		return Grant{}, &CellError{Sheet: r.Sheet, Cell: r.Cell, Column: key, Err: ErrRequired, Msg: fmt.Sprintf(format, args...)}
	}
	if d.TermYears <= 0 {
		return fail("term_years", "design %s has no term", d.Name)
	}
	g.ExpiryDate = termExpiry(gd, d.TermYears)
	switch {
	case d.Strike != nil:
		g.Strike = *d.Strike
	case d.StrikePremium != nil:
		p, ok := s.PriceAt(gd)
		if !ok {
			return fail("strike_premium", "no share price is known at the grant date %s to put the premium on", isoDay(gd))
		}
		g.Strike = p.Price * (1 + *d.StrikePremium)
	default:
		return fail("strike", "design %s has neither a strike nor a strike_premium", d.Name)
	}
	return g, nil
}

// DesignForfeitureRate is design d's pre-vesting forfeiture rate: its own,
// else the Assumptions' in force at the grant date.
func (s *Schedule) DesignForfeitureRate(d Design) float64 {
	if d.PreVestingForfeitureRate != nil {
		return *d.PreVestingForfeitureRate
	}
	return s.Assumptions.At(s.DesignDate()).PreVestingForfeitureRate
}

// months reads a whole number of months from 0 to 1200 in column key.
func (c *rowCtx) months(key string) int {
	n, _ := c.integer(key, false)
	if n < 0 || n > 1200 {
		c.failf(key, c.cellText(key), ErrRange, "must be from 0 to 1200 months")
		return 0
	}
	return int(n)
}

func (t *tableReader) designRow(c *rowCtx) {
	d := Design{Row: c.row, Instrument: Option, VestEvery: 1}
	d.Name, _ = c.required("design")
	if v, ok := c.choice("instrument", false); ok {
		d.Instrument = Instrument(v)
	}
	d.Shares, _ = c.integer("shares", true)
	d.Strike = c.ptr("strike", false)
	d.StrikePremium = c.ptr("strike_premium", true)
	d.TermYears, _ = c.number("term_years", false)
	d.VestMonths = c.months("vest_months")
	d.CliffMonths = c.months("cliff_months")
	if ve, ok := c.integer("vest_every_months", false); ok {
		d.VestEvery = int(ve)
	}
	d.ExerciseMultiple = c.ptr("exercise_multiple", false)
	d.PostVestingExitRate = c.ptr("post_vesting_exit_rate", true)
	d.PreVestingForfeitureRate = c.ptr("pre_vesting_forfeiture_rate", true)
	d.Volatility = c.ptr("volatility", true)
	d.Refs = c.refs
	if !c.failed {
		t.s.Designs = append(t.s.Designs, d)
	}
}

// designRowCells is design d as the cells of a Designs row of n columns.
func designRowCells(d Design, n int, put func(row []any, key string, v any)) []any {
	row := make([]any, n)
	put(row, "design", d.Name)
	put(row, "instrument", string(d.Instrument))
	put(row, "shares", d.Shares)
	if d.Instrument != RSU {
		put(row, "term_years", d.TermYears)
	}
	put(row, "vest_months", int64(d.VestMonths))
	put(row, "cliff_months", int64(d.CliffMonths))
	put(row, "vest_every_months", int64(max(d.VestEvery, 1)))
	for _, o := range []struct {
		key string
		p   *float64
	}{{"strike", d.Strike}, {"strike_premium", d.StrikePremium}, {"exercise_multiple", d.ExerciseMultiple},
		{"post_vesting_exit_rate", d.PostVestingExitRate}, {"pre_vesting_forfeiture_rate", d.PreVestingForfeitureRate}, {"volatility", d.Volatility}} {
		if o.p != nil {
			put(row, o.key, *o.p)
		}
	}
	return row
}

// designs checks the Designs sheet: the rules of the Grants sheet where a
// column means the same, a strike or a premium (not both) for options and
// warrants, and a share price and a rate curve at the grant date.
func (v *validator) designs() {
	s := v.s
	if len(s.Designs) == 0 {
		return
	}
	gd := s.DesignDate()
	a := s.Assumptions.At(gd)
	dref, dkey := s.designDateRef()
	price, havePrice := s.PriceAt(gd)
	names := map[string]int{}
	volMissing, needCurve := false, false
	for i, d := range s.Designs {
		ref := func(k string) Ref { return s.cell(SheetDesigns, k, d.Row, d.Refs) }
		has := func(k string) bool { _, ok := d.Refs[k]; return ok }
		if i == MaxDesigns {
			v.rep.errf(ref("design"), "design", d.Name, ErrRange, "is design %d: compare takes at most %d designs side by side; split them over two workbooks", i+1, MaxDesigns)
		}
		if r, dup := names[d.Name]; dup {
			v.rep.errf(ref("design"), "design", d.Name, ErrDuplicate, "is also the name of the design on row %d (%s)", r, s.cell(SheetDesigns, "design", r, nil).Cell)
		} else {
			names[d.Name] = d.Row
		}
		if d.Shares <= 0 || d.Shares > 1e12 {
			v.rep.errf(ref("shares"), "shares", strconv.FormatInt(d.Shares, 10), ErrRange, "must be more than zero and at most 10^12")
		}
		if d.Instrument == RSU {
			for _, k := range []string{"strike", "strike_premium", "term_years", "exercise_multiple", "post_vesting_exit_rate"} {
				if has(k) {
					v.rep.warnf(ref(k), k, "", ErrInconsistent, "is ignored: an RSU has no strike, term or exercise")
				}
			}
		} else {
			needCurve = true
			switch {
			case d.Strike != nil && d.StrikePremium != nil:
				v.rep.errf(ref("strike_premium"), "strike_premium", num(*d.StrikePremium), ErrInconsistent, "and strike %s (%s) are both given; give one", num(*d.Strike), ref("strike").Cell)
			case d.Strike == nil && d.StrikePremium == nil:
				v.rep.errf(ref("strike"), "strike", "", ErrRequired, "or strike_premium is required for %s %s", article(d.Instrument), d.Name)
			case d.Strike != nil && *d.Strike < 0:
				v.rep.errf(ref("strike"), "strike", num(*d.Strike), ErrRange, "must be zero or more")
			case d.StrikePremium != nil && (*d.StrikePremium <= -1 || *d.StrikePremium > 10):
				v.rep.errf(ref("strike_premium"), "strike_premium", num(*d.StrikePremium), ErrRange, "must be above -100%% and at most 1000%% of the share price")
			case havePrice && d.Strike != nil && *d.Strike < price.Price, havePrice && d.StrikePremium != nil && *d.StrikePremium < 0:
				k, x := "strike", d.Strike
				if x == nil {
					k, x = "strike_premium", d.StrikePremium
				}
				v.rep.warnf(ref(k), k, num(*x), ErrRange, "puts the strike below the share price %s at grant (%s): the award is in the money", num(price.Price), s.cell(SheetSharePrices, "price", price.Row, nil))
			}
			switch {
			case !has("term_years") && (d.Refs != nil || d.TermYears == 0): // built in code: a zero term is none
				v.rep.errf(ref("term_years"), "term_years", "", ErrRequired, "is required for %s %s", article(d.Instrument), d.Name)
			case d.TermYears <= 0 || d.TermYears > 100:
				v.rep.errf(ref("term_years"), "term_years", num(d.TermYears), ErrRange, "must be more than 0 and at most 100 years")
			}
			if d.Volatility == nil && !a.has("volatility") {
				volMissing = true
			}
		}
		if d.CliffMonths > d.VestMonths {
			v.rep.errf(ref("cliff_months"), "cliff_months", strconv.Itoa(d.CliffMonths), ErrRange, "is longer than vest_months %d (%s)", d.VestMonths, ref("vest_months").Cell)
		}
		if e := d.VestEvery; e != 1 && e != 3 && e != 12 {
			v.rep.errf(ref("vest_every_months"), "vest_every_months", strconv.Itoa(e), ErrRange, "must be 1, 3 or 12")
		}
		if d.Volatility != nil {
			v.vol(SheetDesigns, d.Row, d.Refs, *d.Volatility)
		}
		if d.ExerciseMultiple != nil {
			v.multiple(SheetDesigns, d.Row, d.Refs, *d.ExerciseMultiple)
		}
		if d.PostVestingExitRate != nil {
			v.rate(SheetDesigns, "post_vesting_exit_rate", d.Row, d.Refs, *d.PostVestingExitRate, "the annual share of vested holders who leave")
		}
		if d.PreVestingForfeitureRate != nil {
			v.rate(SheetDesigns, "pre_vesting_forfeiture_rate", d.Row, d.Refs, *d.PreVestingForfeitureRate, "the annual share of unvested holders who leave")
		}
		if d.Instrument == Warrant && s.Company.SharesOutstanding <= 0 {
			v.rep.errf(s.cell(SheetCompany, "shares_outstanding", 0, s.Company.Refs), "shares_outstanding", "", ErrRequired,
				"is needed for the dilution of warrant design %s (%s)", d.Name, ref("design").Cell)
		}
		// Vesting that ends after expiry.
		if d.Instrument != RSU && d.TermYears > 0 && d.TermYears <= 100 && d.CliffMonths <= d.VestMonths && !gd.IsZero() {
			expiry := termExpiry(gd, d.TermYears)
			if end := AddMonths(gd, d.VestMonths); end.After(expiry) {
				v.rep.errf(ref("vest_months"), "vest_months", strconv.Itoa(d.VestMonths), ErrRange,
					"vesting ends %s, after the expiry %s that term_years %s (%s) gives", isoDay(end), isoDay(expiry), num(d.TermYears), ref("term_years").Cell)
			}
		}
	}
	if volMissing {
		if ref, ok := a.blank["volatility"]; ok {
			v.rep.errf(ref, "volatility", "", ErrRequired, "is empty, and not every option and warrant design gives one: fill in the annual volatility, 0.45 or 45%%")
		} else {
			v.rep.errf(Ref{Sheet: SheetAssumptions}, "volatility", "", ErrRequired, "has no row in force on the grant date %s, and not every option and warrant design gives one", isoDay(gd))
		}
	}
	if gd.IsZero() {
		return
	}
	if !havePrice {
		v.rep.errf(dref, dkey, isoDay(gd), ErrRequired, "is the grant date of the designs, but no Share Prices row is dated on or before it: add the share's fair value at that date")
	} else if AddMonths(price.Date, StaleMonths).Before(gd) {
		v.rep.warnf(dref, dkey, isoDay(gd), ErrRange, "is more than %d months after the latest share valuation, %s (%s): the valuation may be stale",
			StaleMonths, isoDay(price.Date), s.cell(SheetSharePrices, "date", price.Row, nil))
	} else if olderThanQuarter(price.Date, gd) {
		v.rep.warnf(s.cell(SheetSharePrices, "date", price.Row, nil), "date", isoDay(price.Date), ErrRange,
			"is the share valuation in force, %s old at the grant date %s of the designs (more than %d months): check that the share's fair value has not moved since, or add a Share Prices row nearer the date",
			ageText(price.Date, gd), isoDay(gd), QuarterMonths)
	}
	c, ok := s.curveAt(gd)
	switch {
	case needCurve && !ok:
		v.rep.errf(dref, dkey, isoDay(gd), ErrRequired, "is the grant date of the designs, but no Rates curve is dated on or before it")
	case needCurve && olderThanQuarter(c.date, gd):
		v.rep.warnf(s.cell(SheetRates, "curve_date", c.points[0].Row, nil), "curve_date", isoDay(c.date), ErrRange,
			"is the rate curve in force, %s old at the grant date %s of the designs (more than %d months): add a Rates curve dated nearer it",
			ageText(c.date, gd), isoDay(gd), QuarterMonths)
	}
}
