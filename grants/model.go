package grants

import (
	"time"

	"grantworth/valuation"
)

// Instrument is the kind of award.
type Instrument string

const (
	Option  Instrument = "option"
	Warrant Instrument = "warrant"
	RSU     Instrument = "rsu"
)

// Classification is how a warrant is classified for accounting.
type Classification string

const (
	Equity    Classification = "equity"    // measured once, at grant
	Liability Classification = "liability" // remeasured at every valuation date
)

// Purpose is what an award pays for: services (share-based payment) or
// a financing (a warrant issued to a lender or an investor, which is not
// compensation).
type Purpose string

const (
	Compensation Purpose = "compensation" // share-based payment for services: expensed over service
	Financing    Purpose = "financing"    // issued in a debt or equity financing: not compensation
)

// Framework is the accounting standard the books follow.
type Framework string

const (
	ASC718 Framework = "asc718" // US GAAP, ASC 718 (the default)
	IFRS2  Framework = "ifrs2"  // IFRS 2
)

// ExerciseStyle is when a vested warrant may be exercised.
type ExerciseStyle string

const (
	American ExerciseStyle = "american"
	European ExerciseStyle = "european"
)

// EventKind is what happened to some of a grant's shares.
type EventKind string

const (
	Exercised EventKind = "exercised"
	Forfeited EventKind = "forfeited"
	Expired   EventKind = "expired"
	Cancelled EventKind = "cancelled"
)

// Ref is where a value came from: a sheet and a cell such as "D7".
// The zero Ref means the value is a default.
type Ref struct {
	Sheet string
	Cell  string
}

func (r Ref) String() string {
	if r.Sheet == "" {
		return "default"
	}
	return r.Sheet + "!" + r.Cell
}

// Schedule is a company's grant schedule as read from a workbook or a folder
// of CSV files: everything grantworth needs to value and expense its awards.
type Schedule struct {
	Company     Company
	Assumptions Assumptions
	Grants      []Grant
	Vesting     []VestRow // custom vesting rows; they replace the column schedule of the grants they name
	Transfers   []Transfer
	Accounts    []AccountRow
	SharePrices []PricePoint
	Rates       []RatePoint
	Events      []Event
	// Modifications are the rows of the Modifications sheet (modify.go).
	Modifications []Modification
	Designs       []Design // the Designs sheet of a designs workbook (ReadDesigns)

	// Vesting conditions (conditions.go): the Conditions, Assessments,
	// Payout Curve and Peers sheets, row by row.
	Conditions  []Condition
	Assessments []Assessment
	PayoutCurve []PayoutRow
	Peers       []Peer

	// layout is, per sheet read, the 0-based column of each column key, so
	// that problems with empty cells can name the cell.
	layout map[string]map[string]int
	// idx finds a grant's rows and a date's curve without a scan (index.go).
	idx *index
}

// Company is the Company sheet.
type Company struct {
	Name              string
	ValuationDate     time.Time // the period end
	PeriodStart       time.Time // default: DefaultPeriodStart(ValuationDate)
	Currency          string    // ISO 4217, default USD
	SharesOutstanding float64
	Fiscal            FiscalCalendar // fiscal_year_end and the 52/53-week keys
	GrantDate         time.Time      // designs workbook: the grant date of every design; zero means ValuationDate
	Client            string         // optional: whom a consultant prepares the memo for
	Preparer          string         // optional: the firm that prepares the memo
	PaperSize         string         // optional: "a4" or "letter"; "" chooses by currency
	Refs              map[string]Ref // by key, e.g. "valuation_date"
}

// DefaultPeriodStart is the period start a schedule that gives none has
// for a period ending on end: the first day of the quarter that ends on
// end (DESIGN §4.2). When end is the last day of a fiscal quarter that is
// the fiscal quarter; otherwise it is a quarter's length back: three
// months (2026-11-20 gives 2026-08-21) or, in a 52/53-week calendar,
// 13 weeks.
func (c Company) DefaultPeriodStart(end time.Time) time.Time {
	end = time.Date(end.Year(), end.Month(), end.Day(), 0, 0, 0, 0, time.UTC)
	q := c.Fiscal.Quarter(end)
	switch {
	case q.End.Equal(end):
		return q.Start
	case c.Fiscal.WeekBased:
		return end.AddDate(0, 0, 1-weekDays)
	}
	return AddMonths(end.AddDate(0, 0, 1), -3)
}

// Attribution is how a graded award's cost is spread over service.
type Attribution string

const (
	Graded       Attribution = "graded"
	StraightLine Attribution = "straight-line"
)

// ForfeiturePolicy is how pre-vesting forfeitures enter expense.
type ForfeiturePolicy string

const (
	Estimate ForfeiturePolicy = "estimate"
	AsOccur  ForfeiturePolicy = "as-occur"
)

// Assumptions is the Assumptions sheet: company-wide defaults that a grant
// row may override. The fields hold the rows without an effective_date,
// which apply from the beginning; Dated holds the rows with one. At gives
// the values in force on a date.
type Assumptions struct {
	Volatility               float64
	DividendYield            float64
	ExerciseMultiple         float64 // 0 = none
	PostVestingExitRate      float64 // annual share of vested holders who leave
	PreVestingForfeitureRate float64 // annual share of unvested holders who leave
	Attribution              Attribution
	Forfeitures              ForfeiturePolicy
	Steps                    int               // 0 = auto
	Framework                Framework         // "" is ASC718
	TaxRate                  float64           // statutory income tax rate; 0: no tax effect is booked
	Sources                  map[string]string // by key: the text of the source column
	Refs                     map[string]Ref    // by key: where the value came from
	// Dated are the rows with an effective_date, in sheet order.
	Dated []AssumptionRow
	// Since is, in a view made by At, the effective_date of each key's
	// row in force (absent for an undated row or a default).
	Since map[string]time.Time
	// blank holds the value cell of each key whose row has an empty value,
	// so that a message can name the cell to fill in.
	blank map[string]Ref
}

// AssumptionRow is a row of the Assumptions sheet with an effective_date:
// the value of Key from Effective on. Value holds a number or percentage
// (steps as a number, 0 for auto); Text holds attribution and forfeitures.
type AssumptionRow struct {
	Key       string
	Effective time.Time
	Value     float64
	Text      string
	Source    string
	Ref       Ref // the value's cell
	DateRef   Ref // the effective_date's cell
}

// Grant is one row of the Grants sheet, with defaults filled in
// (instrument, vest start, expiry from term_years) but no Assumptions merged:
// a nil override means "use the Assumptions value".
type Grant struct {
	ID          string
	Holder      string
	Instrument  Instrument
	GrantDate   time.Time
	Shares      int64
	Strike      float64 // 0 for RSUs
	ExpiryDate  time.Time
	VestStart   time.Time
	VestMonths  int
	CliffMonths int
	VestEvery   int // months: 1, 3 or 12

	SharePrice          *float64
	Volatility          *float64
	DividendYield       *float64
	ExerciseMultiple    *float64
	PostVestingExitRate *float64

	Classification Classification // warrants; default equity
	ExerciseStyle  ExerciseStyle  // warrants; default american
	// Purpose is compensation or financing: options and RSUs default to
	// compensation; a warrant read from a sheet must say which.
	Purpose Purpose
	// HireDate is, for a holder hired after the grant date, the day
	// service begins; zero when the holder was employed at grant.
	HireDate time.Time
	// Condition is a condition_id of the Conditions sheet; "" for service
	// only.
	Condition string

	CostCenter string // "" when none is given: the expense is Unassigned
	// TaxDeductible says whether the award gives the company a tax
	// deduction (nil: by instrument, see Deductible).
	TaxDeductible *bool

	Row  int            // 1-based row on the Grants sheet
	Refs map[string]Ref // by column key, e.g. "strike"
}

// IsFinancing reports whether g was issued in a financing: a warrant
// that is not share-based payment.
func (g Grant) IsFinancing() bool { return g.Purpose == Financing }

// IsLiability reports whether g is a liability-classified warrant,
// remeasured at fair value every period and at settlement.
func (g Grant) IsLiability() bool { return g.Instrument == Warrant && g.Classification == Liability }

// VestRow is one row of the Vesting sheet.
type VestRow struct {
	GrantID  string
	VestDate time.Time
	Shares   int64
	Row      int
}

// Unassigned is the cost centre of expense whose grant names none. The
// name is reserved: a schedule may not use it for a cost centre.
const Unassigned = "unassigned"

// Transfer is one row of Transfers: grant GrantID's service is rendered in
// CostCenter from Date on.
type Transfer struct {
	GrantID    string
	Date       time.Time
	CostCenter string
	Row        int
}

// PricePoint is one row of Share Prices: the share's fair value from Date on.
type PricePoint struct {
	Date  time.Time
	Price float64
	Row   int
}

// RatePoint is one row of Rates.
type RatePoint struct {
	CurveDate   time.Time
	TenorYears  float64
	Rate        float64
	Compounding string // continuous | annual | semiannual | par-semiannual
	Row         int
}

// Event is one row of Events.
type Event struct {
	GrantID    string
	Date       time.Time
	Kind       EventKind
	Shares     int64
	SharePrice *float64 // the share's fair value on Date, when the row gives it
	Row        int
	// ReplacementGrantID names, for a cancellation with a concurrent
	// replacement award, the grant that replaces the shares (modify.go).
	ReplacementGrantID string
}

// Deductible reports whether grant g gives the company a tax deduction:
// its tax_deductible cell, else yes for options and RSUs (non-qualified
// options and RSUs are deductible in the United States; an incentive stock
// option is not, and must say no) and no for warrants (issued to lenders
// and investors, which give no compensation deduction).
func (g Grant) Deductible() bool {
	if g.TaxDeductible != nil {
		return *g.TaxDeductible
	}
	return g.Instrument != Warrant
}

// AccountRole is what an account does in the journal (the Accounts
// sheet's role column, accounting.Role) and the name of its account when
// the company gives none, under ASC 718 and under IFRS 2.
type AccountRole struct {
	Role     string
	Name     string
	IFRSName string
}

// AccountRoles are the journal's roles, in the order the template lists
// them.
var AccountRoles = []AccountRole{
	{"compensation_expense", "Compensation expense", "Share-based payment expense"},
	{"equity", "Additional paid-in capital", "Share-based payment reserve"},
	{"share_based_payment_liability", "Share-based compensation liability", "Share-based payment liability"},
	{"warrant_liability", "Warrant liability", "Warrant liability"},
	{"fair_value_change", "Change in fair value of warrant liability", "Change in fair value of warrant liability"},
	{"warrant_equity", "Additional paid-in capital", "Share premium"},
	{"financing_proceeds", "Financing proceeds allocated to warrants", "Financing proceeds allocated to warrants"},
	{"deferred_tax_asset", "Deferred tax asset", "Deferred tax asset"},
	{"deferred_tax_benefit", "Deferred income tax benefit", "Deferred tax income"},
}

func accountRoleNames() []string {
	out := make([]string, len(AccountRoles))
	for i, r := range AccountRoles {
		out[i] = r.Role
	}
	return out
}

// AccountRow is one row of Accounts: the account a role books to, for
// every cost centre or (CostCenter given, compensation_expense only) for
// one.
type AccountRow struct {
	Role       string
	CostCenter string
	Code       string
	Name       string
	Row        int
}

// Tranche is the part of a grant that vests on one date. A large ledger
// holds millions of them: the dates of its forfeitures and cancellations,
// which few tranches have, are kept as day numbers in four bytes each.
type Tranche struct {
	GrantID  string
	Index    int // 1-based, in vest-date order
	VestDate time.Time
	Shares   int64 // as granted

	// Forfeited of Shares were forfeited before vesting, by the forfeited
	// events up to ForfeitDate (the last such event): the holder left.
	// Cancelled of Shares were cancelled before vesting by cancelled
	// events up to CancelDate.
	Forfeited, Cancelled int64
	// forfeitDay and cancelDay are those dates as day numbers
	// (dayNumber); 0 for none.
	forfeitDay, cancelDay int32
}

// Vesting is the number of shares of the tranche that vest (or vested):
// Shares less Forfeited and Cancelled.
func (t Tranche) Vesting() int64 { return t.Shares - t.Forfeited - t.Cancelled }

// ForfeitDate is the date of the last forfeited event that took shares
// of the tranche before it vested; the zero Time when none did.
func (t Tranche) ForfeitDate() time.Time { return fromDayNumber(t.forfeitDay) }

// CancelDate is the date of the last cancelled event that took shares of
// the tranche before it vested; the zero Time when none did.
func (t Tranche) CancelDate() time.Time { return fromDayNumber(t.cancelDay) }

// dayOffset is added to days since 1970-01-01 so that no date's day
// number is 0, kept for no date.
const dayOffset = 1 << 30

// dayNumber is the calendar day of d as days since 1970-01-01 plus
// dayOffset.
func dayNumber(d time.Time) int32 { return int32(valuation.DayNumber(d) + dayOffset) }

// fromDayNumber is the date dayNumber gave n, at midnight UTC; the zero
// Time for 0.
func fromDayNumber(n int32) time.Time {
	if n == 0 {
		return time.Time{}
	}
	return time.Unix((int64(n)-dayOffset)*86400, 0).UTC()
}
