package report

import (
	"encoding/json"
	"fmt"
	"time"

	"grantworth/valuation"
)

// Date is a calendar date. It is written as YYYY-MM-DD in JSON and as a
// date cell in the workbook; the zero Date is written as null.
//
// It holds the day number (days since 1970-01-01, offset so that the zero
// Date is unset) in four bytes, not a time.Time's twenty-four: a large
// ledger's model holds several dates per tranche, millions of them, and a
// time.Time also carries a pointer the collector must follow.
type Date struct{ n int32 }

// dayOffset is added to a day number so that no real date is stored as 0.
const dayOffset = 1 << 30

// DateOf returns the date part of t.
func DateOf(t time.Time) Date {
	if t.IsZero() {
		return Date{}
	}
	return Date{int32(valuation.DayNumber(t) + dayOffset)}
}

// Time is the date at midnight UTC.
func (d Date) Time() time.Time {
	if d.n == 0 {
		return time.Time{}
	}
	return time.Unix((int64(d.n)-dayOffset)*86400, 0).UTC()
}

// IsZero reports whether d is unset.
func (d Date) IsZero() bool { return d.n == 0 }

// String is YYYY-MM-DD, or "" for the zero Date.
func (d Date) String() string {
	if d.IsZero() {
		return ""
	}
	return string(d.AppendISO(nil))
}

// unixDays is d's day number: days since 1970-01-01.
func (d Date) unixDays() int64 { return int64(d.n) - dayOffset }

// AppendISO appends the date as YYYY-MM-DD to b (nothing for the zero
// Date): the calendar date of its day number by the civil-from-days
// conversion of the proleptic Gregorian calendar (H. Hinnant,
// "chrono-Compatible Low-Level Date Algorithms"), without a time.Time; a
// year outside 0 to 9999 is left to the time package.
func (d Date) AppendISO(b []byte) []byte {
	if d.IsZero() {
		return b
	}
	z := d.unixDays() + 719468
	era := z / 146097
	if z < 0 {
		era = (z - 146096) / 146097
	}
	doe := z - era*146097
	yoe := (doe - doe/1460 + doe/36524 - doe/146096) / 365
	y := yoe + era*400
	doy := doe - (365*yoe + yoe/4 - yoe/100)
	mp := (5*doy + 2) / 153
	day := doy - (153*mp+2)/5 + 1
	m := mp + 3
	if mp >= 10 {
		m = mp - 9
		y++
	}
	if y < 0 || y > 9999 {
		return d.Time().AppendFormat(b, "2006-01-02")
	}
	return append(b, byte('0'+y/1000), byte('0'+y/100%10), byte('0'+y/10%10), byte('0'+y%10), '-',
		byte('0'+m/10), byte('0'+m%10), '-', byte('0'+day/10), byte('0'+day%10))
}

// parseISODate reads YYYY-MM-DD, a real day of the proleptic Gregorian
// calendar, as time.Parse with the layout 2006-01-02 does.
func parseISODate(b []byte) (Date, bool) {
	if len(b) != 10 || b[4] != '-' || b[7] != '-' {
		return Date{}, false
	}
	num := func(b []byte) (int64, bool) {
		n := int64(0)
		for _, c := range b {
			if c < '0' || c > '9' {
				return 0, false
			}
			n = 10*n + int64(c-'0')
		}
		return n, true
	}
	y, ok1 := num(b[:4])
	m, ok2 := num(b[5:7])
	d, ok3 := num(b[8:])
	if !ok1 || !ok2 || !ok3 || m < 1 || m > 12 || d < 1 {
		return Date{}, false
	}
	days := [13]int64{0, 31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31}[m]
	if m == 2 && y%4 == 0 && (y%100 != 0 || y%400 == 0) {
		days = 29
	}
	if d > days {
		return Date{}, false
	}
	// Days from civil (H. Hinnant, "chrono-Compatible Low-Level Date
	// Algorithms"); y is not negative here.
	if m <= 2 {
		y--
	}
	era := y / 400
	if y < 0 {
		era = (y - 399) / 400
	}
	yoe := y - era*400
	mp := (m + 9) % 12
	doy := (153*mp+2)/5 + d - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	n := era*146097 + doe - 719468
	return Date{int32(n + dayOffset)}, true
}

// MarshalJSON writes "YYYY-MM-DD" or null.
func (d Date) MarshalJSON() ([]byte, error) {
	if d.IsZero() {
		return []byte("null"), nil
	}
	return json.Marshal(d.String())
}

// UnmarshalJSON reads what MarshalJSON writes.
func (d *Date) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*d = Date{}
		return nil
	}
	var s string
	if err := json.Unmarshal(b, &s); err != nil {
		return err
	}
	v, ok := parseISODate([]byte(s))
	if !ok {
		return fmt.Errorf("date %q is not a date YYYY-MM-DD", s)
	}
	*d = v
	return nil
}

// Model is everything the three outputs show, built once by the caller
// from the schedule, the valuation results and the run's settings. The
// renderers (WriteJSON, WriteWorkbook, WriteMemo) only lay it out: no
// renderer values, sums or looks anything up that is not in the Model, so
// the memo, the workbook and the JSON cannot disagree.
type Model struct {
	// SchemaVersion is the version of valuation.json's layout
	// (SchemaVersion); a later close refuses a file of a newer one.
	SchemaVersion int      `json:"schema_version"`
	Tool          Tool     `json:"tool"`
	Input         Input    `json:"input"`
	ValuationDate Date     `json:"valuation_date"`
	PeriodStart   Date     `json:"period_start"`
	Company       Company  `json:"company"`
	Settings      Settings `json:"settings"`
	Grants        []Grant  `json:"grants"`
	// Totals are the share-based awards' (every grant whose purpose is
	// compensation); FinancingTotals the warrants issued in financings,
	// which are not share-based payment and are kept apart everywhere.
	Totals          Totals        `json:"totals"`
	FinancingTotals Totals        `json:"financing_totals"`
	Expense         *Expense      `json:"expense"` // nil until expense attribution has run
	Warnings        []string      `json:"warnings"`
	ByInstrument    []Group       `json:"by_instrument"`
	ByGrantMonth    []Group       `json:"by_grant_month"`
	Assumptions     []Assumption  `json:"assumptions"`
	Sensitivity     []Sensitivity `json:"sensitivity"`
	Convergence     *Convergence  `json:"convergence"`
	CrossChecks     []CrossCheck  `json:"cross_checks"`
	// Prior is the close this one follows (--prior), and Reconciliation
	// the walk from it; both nil for a first close.
	Prior          *PriorClose     `json:"prior"`
	Reconciliation *Reconciliation `json:"reconciliation"`
	// Modifications are the changes of awards' terms, and cancellations
	// with a replacement award, dated by the valuation date (modify.go).
	Modifications []Modification `json:"modifications"`
	// Conditions are the vesting conditions beyond service the grants
	// carry (conditions.go); absent when none does.
	Conditions []VestingCondition `json:"conditions,omitempty"`
	Caution    string             `json:"caution"`
}

// SchemaVersion is the layout of valuation.json this grantworth writes,
// and the newest it reads as a prior close. Raise it when a field a later
// close reads changes meaning or goes; adding fields does not need it.
//
// Version 2: warrants issued in financings leave expense.by_grant for
// expense.financing_warrants; a liability-classified award's change in
// fair value is compensation, and its tranches' fair_value_per_share is
// its latest remeasurement (grant_date_fair_value_per_share beside it).
//
// Version 3: a tranche of expense.by_grant leaves out what it would repeat:
// its vest_date, shares and fair_value_per_share when they are those of
// the grant's tranche of the same index in grants, and its
// grant_date_fair_value_per_share when it is its fair_value_per_share
// (expenseTranchesEnc, jsonenc.go).
const SchemaVersion = 3

// PriorClose identifies the close this one follows.
type PriorClose struct {
	Path          string `json:"path"`
	SHA256        string `json:"sha256"`
	ValuationDate Date   `json:"valuation_date"`
	ToolVersion   string `json:"tool_version"`
}

// Tool names the program that made the outputs.
type Tool struct {
	Name    string `json:"name"`
	Version string `json:"version"`
}

// Input identifies the schedule that was valued.
type Input struct {
	Path   string `json:"path"`   // as given on the command line
	SHA256 string `json:"sha256"` // hex, of the file's bytes (of the CSV files in name order for a folder)
}

// Company is what the memo says about the issuer.
type Company struct {
	Name              string  `json:"name"`
	Currency          string  `json:"currency"` // ISO 4217
	SharesOutstanding float64 `json:"shares_outstanding"`
	// Who the memo is for and by whom, when a consultant prepares it, and
	// its paper: the Company sheet's client, preparer and paper_size.
	// They change no figure, so valuation.json leaves them out.
	Client    string `json:"-"`
	Preparer  string `json:"-"`
	PaperSize string `json:"-"` // "a4", "letter" or "" (by currency)
}

// Settings are the run's choices that change numbers.
type Settings struct {
	Steps         string `json:"steps"`         // "auto" or a step count
	Attribution   string `json:"attribution"`   // graded | straight-line
	Forfeitures   string `json:"forfeitures"`   // estimate | as-occur
	Framework     string `json:"framework"`     // asc718 | ifrs2
	MonteCarlo    string `json:"monte_carlo"`   // what the cross-check ran, in words
	Sensitivities string `json:"sensitivities"` // how the sensitivity runs were made, in words
}

// Instrument names used in the Model.
const (
	Option  = "option"
	Warrant = "warrant"
	RSU     = "rsu"
)

// Grant is one award and its tranches, with the inputs it was valued on.
// Rates are the continuous zero rate at the grant's contractual term.
type Grant struct {
	ID                  string  `json:"grant_id"`
	Holder              string  `json:"holder"`
	Instrument          string  `json:"instrument"`
	Purpose             string  `json:"purpose"` // compensation | financing
	GrantDate           Date    `json:"grant_date"`
	HireDate            Date    `json:"hire_date"` // null unless the holder was hired after the grant date
	MeasurementDate     Date    `json:"measurement_date"`
	ExpiryDate          Date    `json:"expiry_date"`
	Shares              int64   `json:"shares"`
	Strike              float64 `json:"strike"`
	SharePrice          float64 `json:"share_price"`
	Volatility          float64 `json:"volatility"`
	RiskFreeRate        float64 `json:"risk_free_rate"`
	DividendYield       float64 `json:"dividend_yield"`
	ExerciseMultiple    float64 `json:"exercise_multiple"`
	PostVestingExitRate float64 `json:"post_vesting_exit_rate"`
	FairValuePerShare   float64 `json:"fair_value_per_share"` // share-weighted over the tranches
	FairValueTotal      float64 `json:"fair_value_total"`
	BSMSimplifiedTotal  float64 `json:"bsm_simplified_total"`
	Method              string  `json:"method"` // lattice, bsm, rsu, ...
	// ValueStatus says where the values come from: measured in this
	// close, locked (kept from the prior close), corrected (measured again
	// at the grant date), or remeasured (a liability-classified warrant).
	ValueStatus string `json:"value_status"`
	// ValuationKey is a digest of every number the values were measured
	// with (pricing.GrantValue.Key): a later close whose inputs give the
	// same key keeps the values without valuing the grant again.
	ValuationKey string `json:"valuation_key"`

	// Warrants only.
	Classification string    `json:"classification,omitempty"`
	ExerciseStyle  string    `json:"exercise_style,omitempty"`
	Dilution       *Dilution `json:"dilution,omitempty"`

	// Condition is how a vesting condition beyond service entered the
	// grant's value and expense (conditions.go); absent for service only.
	Condition *GrantCondition `json:"condition,omitempty"`

	Tranches []Tranche `json:"tranches"`
}

// Dilution is how a warrant's value was adjusted for the new shares.
type Dilution struct {
	SharesOutstanding     float64 `json:"shares_outstanding"`
	Warrants              float64 `json:"warrants"`
	PriceReflectsWarrants bool    `json:"price_reflects_warrants"`
	Method                string  `json:"method"`                    // e.g. Galai-Schneller
	UndilutedValue        float64 `json:"undiluted_value_per_share"` // the same lattice without dilution, first tranche
}

// Tranche is the part of a grant vesting on one date, with its value.
type Tranche struct {
	Index             int     `json:"index"`
	VestDate          Date    `json:"vest_date"`
	Shares            int64   `json:"shares"`
	YearsToExpiry     float64 `json:"years_to_expiry"`
	YearsToVest       float64 `json:"years_to_vest"`
	RiskFreeRate      float64 `json:"risk_free_rate"` // zero rate at the tranche's expiry
	FairValuePerShare float64 `json:"fair_value_per_share"`
	ErrorEstimate     float64 `json:"error_estimate"`
	ExpectedTermYears float64 `json:"expected_term_years"`
	Steps             int     `json:"steps"`

	// The closed-form comparison: for options Black-Scholes-Merton on the
	// simplified-method expected term (vest + expiry)/2, at the zero rate of
	// that term; for warrants Black-Scholes-Merton over the contractual term
	// before dilution (the simplified method is for employee options); for
	// RSUs the RSU value itself.
	BSMSimplifiedValue float64 `json:"bsm_simplified_value"`
	SimplifiedTerm     float64 `json:"simplified_term_years"`
	SimplifiedRate     float64 `json:"simplified_rate"`

	FairValueTotal float64 `json:"fair_value_total"`
}

// Totals are sums over a set of grants.
type Totals struct {
	Grants             int     `json:"grants"`
	Tranches           int     `json:"tranches"`
	Shares             int64   `json:"shares"`
	FairValueTotal     float64 `json:"fair_value_total"`
	BSMSimplifiedTotal float64 `json:"bsm_simplified_total"`
}

// Plus is t and u added together.
func (t Totals) Plus(u Totals) Totals {
	return Totals{Grants: t.Grants + u.Grants, Tranches: t.Tranches + u.Tranches, Shares: t.Shares + u.Shares,
		FairValueTotal: t.FairValueTotal + u.FairValueTotal, BSMSimplifiedTotal: t.BSMSimplifiedTotal + u.BSMSimplifiedTotal}
}

// Group is a subtotal: by instrument, or by grant month (Key "2024-03").
// The warrants issued in financings are one group of their own by
// instrument (Key "warrant (financing)", Financing set) and in no group by
// grant month.
type Group struct {
	Key                string  `json:"key"`
	Financing          bool    `json:"financing"`
	Grants             int     `json:"grants"`
	Tranches           int     `json:"tranches"`
	Shares             int64   `json:"shares"`
	FairValueTotal     float64 `json:"fair_value_total"`
	FairValuePerShare  float64 `json:"fair_value_per_share"`
	BSMSimplifiedTotal float64 `json:"bsm_simplified_total"`
}

// Value kinds of an Assumption, which say how it is formatted.
const (
	KindPercent = "percent"
	KindNumber  = "number"
	KindMoney   = "money"
	KindDate    = "date"
	KindText    = "text"
	KindYears   = "years"
)

// Assumption is one input a grant was valued on and where it came from. A row
// with an empty GrantID is a company-wide input.
type Assumption struct {
	GrantID string  `json:"grant_id"`
	Name    string  `json:"name"` // the input key, e.g. "volatility"
	Kind    string  `json:"kind"`
	Value   float64 `json:"value"` // for number kinds
	Text    string  `json:"text"`  // for date and text kinds, and as given otherwise
	Ref     string  `json:"ref"`   // Sheet!Cell, or "default"
	Source  string  `json:"source"`
	// EffectiveDate is the effective_date of the Assumptions row: the
	// row applies from it on. Zero (null) for an undated row and for
	// inputs from elsewhere.
	EffectiveDate Date `json:"effective_date"`
	// Term marks a contractual term of the grant (dates, shares, strike,
	// vesting) rather than a valuation assumption; the memo shows terms in
	// its results and lists only assumptions.
	Term bool `json:"term,omitempty"`
}

// Sensitivity is total fair value when one input is moved for every grant.
type Sensitivity struct {
	Input  string             `json:"input"` // volatility, exercise_multiple, post_vesting_exit_rate, risk_free_rate
	Label  string             `json:"label"`
	Unit   string             `json:"unit"` // how Shift is read: "points", "x", ...
	Points []SensitivityPoint `json:"points"`
}

// SensitivityPoint is one shifted run; Shift 0 is the base case.
type SensitivityPoint struct {
	Shift          float64 `json:"shift"`
	Label          string  `json:"label"`
	FairValueTotal float64 `json:"fair_value_total"`
	Change         float64 `json:"change"` // relative to the base case
	// SampleFairValueTotal is the total fair value of the grants the
	// case revalued (the sensitivity sample, or every grant): filed so
	// that a later close whose sample is unchanged can take the case as
	// it is and scale it to its own total, instead of running it again.
	SampleFairValueTotal float64 `json:"sample_fair_value_total"`
}

// Convergence shows raw lattice values against the step count for one
// tranche, and the auto value the tool reports.
type Convergence struct {
	GrantID      string             `json:"grant_id"`
	TrancheIndex int                `json:"tranche_index"`
	AutoValue    float64            `json:"auto_value"`
	AutoError    float64            `json:"auto_error_estimate"`
	AutoSteps    int                `json:"auto_steps"`
	Points       []ConvergencePoint `json:"points"`
}

// ConvergencePoint is a raw N-step lattice value.
type ConvergencePoint struct {
	Steps int     `json:"steps"`
	Value float64 `json:"value"`
}

// CrossCheck compares the lattice with an independent method for one
// tranche of the sample.
type CrossCheck struct {
	GrantID      string  `json:"grant_id"`
	TrancheIndex int     `json:"tranche_index"`
	Method       string  `json:"method"` // "mc"
	Lattice      float64 `json:"lattice"`
	LatticeError float64 `json:"lattice_error"` // the automatic lattice's error estimate
	Value        float64 `json:"value"`
	StdErr       float64 `json:"standard_error"`
	Paths        int     `json:"paths"`
	Seed         uint64  `json:"seed"`
	// Z is (Value − Lattice) / √(StdErr² + LatticeError²).
	Z float64 `json:"z"`
}

// Expense is the period's expense attribution (DESIGN §4.3). It is filled
// by the expense attribution step; nil means it did not run.
type Expense struct {
	Periods                       []ExpensePeriod `json:"periods"`
	UnrecognizedCost              float64         `json:"unrecognized_cost"`
	WeightedAverageRemainingYears float64         `json:"weighted_average_remaining_years"`
	*ExpenseDetail                                // by grant, forecast, journal, disclosures (expense.go)
}

// ExpensePeriod is the expense recognized in [Start, End].
type ExpensePeriod struct {
	Start  Date    `json:"start"`
	End    Date    `json:"end"`
	Amount float64 `json:"amount"`
	// Added by expense.go: the change in fair value of the financing
	// warrants' liability, apart from Amount (outside operating expense),
	// whether this is the reporting period, and the fiscal quarter holding
	// End ("2026 Q3", "FY2027 Q1").
	FinancingFairValueChange float64 `json:"fair_value_change"`
	Current                  bool    `json:"current"`
	Label                    string  `json:"label"`
}

// Caution is the notice every output carries (DESIGN §5).
const Caution = "The figures in this report are estimates made by software from the inputs shown. " +
	"They are not an audit opinion or a valuation opinion. Defer to licensed auditors or valuation " +
	"professionals and to the accounting rules that apply to you (ASC 718, IFRS 2 or local rules)."
