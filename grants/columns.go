package grants

import (
	"fmt"
	"strings"
)

// Kind is the type of value a column holds.
type Kind int

const (
	KindText    Kind = iota // free text
	KindInt                 // whole number
	KindNumber              // decimal number
	KindPercent             // decimal (0.45) or percentage (45%)
	KindDate                // date cell, Excel serial or ISO YYYY-MM-DD text
	KindChoice              // one of Column.Choices
	KindSteps               // "auto" or a whole number
)

func (k Kind) String() string {
	switch k {
	case KindText:
		return "text"
	case KindInt:
		return "whole number"
	case KindNumber:
		return "number"
	case KindPercent:
		return "percent"
	case KindDate:
		return "date"
	case KindChoice:
		return "choice"
	case KindSteps:
		return "auto or number"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// Column describes one column of a table sheet or one key of a key-value
// sheet. The table of columns drives header matching, parsing, validation
// messages, the init template with its About sheet, and the README's list.
type Column struct {
	Key      string   // canonical header or key, e.g. "grant_date"
	Kind     Kind     //
	Unit     string   // e.g. "shares", "currency per share", "years", "annual"
	Required bool     // needed on every row (or, on a key-value sheet, needed at all)
	Need     string   // in words: "required", "optional", "options and warrants"
	Choices  []string // for KindChoice (and the allowed whole numbers of a KindInt)
	Default  string   // in words, when optional
	Help     string   // plain words for the About sheet
	// Synonyms are the other headers (or keys) the trade uses for the
	// column, matched like Key: "Exercise Price" for strike.
	Synonyms []string
}

// matches reports whether the normalized header or key n (norm) names the
// column: its key or one of its synonyms.
func (c *Column) matches(n string) bool {
	if norm(c.Key) == n {
		return true
	}
	for _, s := range c.Synonyms {
		if norm(s) == n {
			return true
		}
	}
	return false
}

// also is the sentence that lists the column's synonyms, for the README
// and the About sheet of the template; "" when it has none.
func (c *Column) also(what string) string {
	if len(c.Synonyms) == 0 {
		return ""
	}
	return fmt.Sprintf(" Also read under the %s %s.", what, strings.Join(c.Synonyms, ", "))
}

// closest is the column of cols, other than those in taken, whose key or
// synonym is nearest the unknown header or key h, for a "did you mean"
// hint; nil when none is near. Near is within a third of the name's
// length in edits (at most 3: "strik", "Exercise Prices"), or containing
// it whole ("Strike Price (USD)").
func closest(h string, cols []Column, taken map[string]int) *Column {
	n := norm(h)
	if n == "" {
		return nil
	}
	var best *Column
	bestD, bestLen := 4, 0
	for i := range cols {
		c := &cols[i]
		if _, ok := taken[c.Key]; ok {
			continue
		}
		for _, name := range append([]string{c.Key}, c.Synonyms...) {
			m := norm(name)
			if d := editDistance(n, m, bestD); d < bestD && 3*d <= len(m) {
				best, bestD = c, d
			}
			if bestD == 4 && len(m) >= 5 && len(m) > bestLen && strings.Contains(n, m) {
				best, bestLen = c, len(m)
			}
		}
	}
	return best
}

// editDistance is the Levenshtein distance between a and b (in bytes of
// their normalized forms), or limit when it is limit or more.
func editDistance(a, b string, limit int) int {
	if d := len(a) - len(b); d >= limit || -d >= limit {
		return limit
	}
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		low := cur[0]
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			low = min(low, cur[j])
		}
		if low >= limit {
			return limit
		}
		prev, cur = cur, prev
	}
	return min(prev[len(b)], limit)
}

// didYouMean is the hint for an unknown header or key h among cols (those
// in taken left out): "; did you mean strike?", or "".
func didYouMean(h string, cols []Column, taken map[string]int) string {
	if c := closest(h, cols, taken); c != nil {
		return "; did you mean " + c.Key + "?"
	}
	return ""
}

// Sheet describes one sheet of the input workbook (or one CSV file).
type Sheet struct {
	Name     string // canonical name, e.g. "Share Prices"
	File     string // CSV file name, e.g. "share_prices.csv"
	KeyValue bool   // rows of key, value (and source) rather than a table
	Required bool
	Help     string
	Columns  []Column
	// KeyColumns are, on a key-value sheet, the optional columns beside
	// key and value.
	KeyColumns []Column
}

// Column returns the column with key k, or nil.
func (sh *Sheet) Column(k string) *Column {
	for i := range sh.Columns {
		if sh.Columns[i].Key == k {
			return &sh.Columns[i]
		}
	}
	return nil
}

// Canonical sheet names.
const (
	SheetCompany     = "Company"
	SheetAssumptions = "Assumptions"
	SheetGrants      = "Grants"
	SheetVesting     = "Vesting"
	SheetTransfers   = "Transfers"
	SheetAccounts    = "Accounts"
	SheetSharePrices = "Share Prices"
	SheetRates       = "Rates"
	SheetEvents      = "Events"
	SheetDesigns     = "Designs"
)

var (
	instruments     = []string{string(Option), string(Warrant), string(RSU)}
	classifications = []string{string(Equity), string(Liability)}
	exerciseStyles  = []string{string(American), string(European)}
	purposes        = []string{string(Compensation), string(Financing)}
	frameworks      = []string{string(ASC718), string(IFRS2)}
	eventKinds      = []string{string(Exercised), string(Forfeited), string(Expired), string(Cancelled)}
	compoundings    = []string{"continuous", "annual", "semiannual", "par-semiannual"}
	paperSizes      = []string{"a4", "letter"}
)

// Sheets is the layout of the input workbook (DESIGN §4.2), in the order the
// template writes them; the sheets of vesting conditions (conditions.go)
// come last.
var Sheets = append([]Sheet{
	{Name: SheetCompany, File: "company.csv", KeyValue: true, Required: true,
		Help: "The company and the reporting period: one key and its value per row.",
		Columns: []Column{
			{Key: "company_name", Kind: KindText, Required: true, Need: "required", Help: "The company's name as it appears in the memo.", Synonyms: []string{"Company", "Legal Name", "Entity Name"}},
			{Key: "valuation_date", Kind: KindDate, Required: true, Need: "required", Help: "The period end: liability-classified warrants are remeasured on it and expense runs to it.", Synonyms: []string{"Period End", "Period End Date", "Reporting Date"}},
			{Key: "period_start", Kind: KindDate, Need: "optional", Default: "first day of the quarter ending on valuation_date (the fiscal quarter, when valuation_date ends one)", Help: "The first day of the reporting period.", Synonyms: []string{"Period Start Date", "Period Begin"}},
			{Key: "currency", Kind: KindText, Unit: "ISO 4217 code", Need: "optional", Default: "USD", Help: "Three-letter currency code of prices and strikes.", Synonyms: []string{"Currency Code", "Reporting Currency"}},
			{Key: "shares_outstanding", Kind: KindInt, Unit: "shares", Need: "warrants", Help: "Common shares outstanding, for the dilution of warrants.", Synonyms: []string{"Common Shares Outstanding", "Outstanding Shares"}},
			{Key: "fiscal_year_end", Kind: KindChoice, Choices: months, Unit: "month", Need: "optional", Default: "December (calendar years)", Help: "The month the fiscal year ends in: its name, its first three letters or its number 1 to 12. Quarters, the expense forecast, the expense by fiscal year and the default period_start follow it; a year ending in January runs from 1 February and is named by the calendar year it ends in (FY2027 ends in January 2027)."},
			{Key: "fiscal_year_end_weekday", Kind: KindChoice, Choices: weekdays, Need: "optional", Default: "none: the year ends on the month's last day", Help: "For a 52/53-week year: the weekday it ends on, in or near the fiscal_year_end month. Its quarters are 13 weeks each, the fourth 14 in a 53-week year."},
			{Key: "fiscal_year_end_rule", Kind: KindChoice, Choices: []string{"last", "nearest"}, Need: "with fiscal_year_end_weekday", Default: "last", Help: "last: the year ends on the last such weekday of the month; nearest: on the one nearest the month's last day, which may fall in the next month's first three days."},
			{Key: "preparer", Kind: KindText, Need: "optional", Help: "The firm that prepares the memo, for a consultant's client pack: on the memo's cover and at the top of every page."},
			{Key: "client", Kind: KindText, Need: "optional", Default: "company_name", Help: "Whom the memo is prepared for, when not the company itself: on the cover and at the top of every page."},
			{Key: "paper_size", Kind: KindChoice, Choices: paperSizes, Need: "optional", Default: "letter if currency is USD, else a4", Help: "The memo's paper: a4 or letter."},
		}},
	{Name: SheetAssumptions, File: "assumptions.csv", KeyValue: true, Required: true,
		Help: "Company-wide valuation assumptions: key, value, an optional source that the memo quotes and an optional effective_date from which the row applies (a row without one applies from the beginning). A grant takes, key by key, the row in force at its measurement date (the latest effective_date on or before it); attribution, forfeitures, pre_vesting_forfeiture_rate and steps are those in force at valuation_date. A grant row may override some of them.",
		Columns: []Column{
			{Key: "volatility", Kind: KindPercent, Unit: "annual", Need: "required unless every grant row gives one", Help: "Expected volatility of the share price, e.g. 45% or 0.45.", Synonyms: []string{"Expected Volatility", "Vol"}},
			{Key: "dividend_yield", Kind: KindPercent, Unit: "annual, continuous", Need: "optional", Default: "0", Help: "Expected dividend yield.", Synonyms: []string{"Expected Dividend Yield", "Dividend Rate"}},
			{Key: "exercise_multiple", Kind: KindNumber, Unit: "times strike", Need: "optional", Default: "0 (none)", Help: "Holders exercise a vested option once the share price reaches this multiple of the strike; 0 means no such rule.", Synonyms: []string{"Early Exercise Multiple", "Suboptimal Exercise Factor"}},
			{Key: "post_vesting_exit_rate", Kind: KindPercent, Unit: "annual", Need: "optional", Default: "0", Help: "Share of vested holders who leave each year; a leaver exercises if in the money, else the option lapses.", Synonyms: []string{"Post-Vesting Exit Rate", "Post-Vesting Termination Rate", "Exit Rate"}},
			{Key: "pre_vesting_forfeiture_rate", Kind: KindPercent, Unit: "annual", Need: "optional", Default: "0", Help: "Share of unvested holders who leave each year; used for expense, never in fair value.", Synonyms: []string{"Pre-Vesting Forfeiture Rate", "Forfeiture Rate", "Expected Forfeiture Rate"}},
			{Key: "attribution", Kind: KindChoice, Choices: []string{string(Graded), string(StraightLine)}, Need: "optional", Default: "graded", Help: "How a graded award's cost is spread over service: per tranche (graded) or evenly over the whole award (straight-line).", Synonyms: []string{"Attribution Method", "Expense Attribution"}},
			{Key: "forfeitures", Kind: KindChoice, Choices: []string{string(Estimate), string(AsOccur)}, Need: "optional", Default: "estimate", Help: "Estimate forfeitures in advance, or account for them as they occur.", Synonyms: []string{"Forfeiture Policy", "Forfeiture Method"}},
			{Key: "steps", Kind: KindSteps, Need: "optional", Default: "auto", Help: "Lattice steps: auto (converged, with an error estimate) or a fixed number.", Synonyms: []string{"Lattice Steps"}},
			{Key: "framework", Kind: KindChoice, Choices: frameworks, Need: "optional", Default: "asc718", Help: "The accounting standard the books follow: asc718 (US GAAP, with ASC 740 for the tax effect) or ifrs2 (with IAS 12). Under ifrs2 attribution must be graded and forfeitures estimated, the journal credits a share-based payment reserve, and the deferred tax follows the intrinsic value.", Synonyms: []string{"Accounting Framework", "Accounting Standard"}},
			{Key: "tax_rate", Kind: KindPercent, Unit: "annual", Need: "optional", Default: "none (no tax effect)", Help: "The statutory income tax rate at which the deferred tax asset of deductible awards is measured, e.g. 25% or 0.25; dated rows give enacted changes."},
		},
		KeyColumns: []Column{
			{Key: "source", Kind: KindText, Need: "optional", Help: "Where the value comes from (a study, a policy memo); the memo and the workbook quote it beside the cell."},
			{Key: "effective_date", Kind: KindDate, Need: "optional", Default: "from the beginning", Help: "The row applies from this date on, so that a new estimate leaves grants measured before it alone. A key may have several rows with different dates; two rows of one key with the same date are an error."},
		}},
	{Name: SheetGrants, File: "grants.csv", Required: true,
		Help: "One row per grant. Empty cells take the defaults shown.",
		Columns: []Column{
			{Key: "grant_id", Kind: KindText, Required: true, Need: "required", Help: "A unique code for the grant.", Synonyms: []string{"Award ID", "Grant Number", "Award Number"}},
			{Key: "holder", Kind: KindText, Need: "optional", Help: "A code for the holder (no names needed).", Synonyms: []string{"Holder ID", "Employee ID", "Participant ID", "Grantee", "Optionee"}},
			{Key: "instrument", Kind: KindChoice, Choices: instruments, Need: "optional", Default: "option", Help: "Stock option, warrant or restricted stock unit.", Synonyms: []string{"Award Type", "Grant Type", "Instrument Type", "Security Type"}},
			{Key: "grant_date", Kind: KindDate, Required: true, Need: "required", Help: "The grant (measurement) date.", Synonyms: []string{"Date of Grant", "Award Date"}},
			{Key: "shares", Kind: KindInt, Unit: "shares", Required: true, Need: "required", Help: "Number of shares under the grant.", Synonyms: []string{"Shares Granted", "Options Granted", "Number of Shares", "Quantity Granted", "Quantity"}},
			{Key: "strike", Kind: KindNumber, Unit: "currency per share", Need: "options and warrants", Help: "Exercise price per share.", Synonyms: []string{"Exercise Price", "Strike Price", "Option Price", "Grant Price", "Exercise Price per Share"}},
			{Key: "expiry_date", Kind: KindDate, Need: "options and warrants: this or term_years", Help: "The last day the award may be exercised.", Synonyms: []string{"Expiration Date", "Expiry", "Expiration", "Expire Date"}},
			{Key: "term_years", Kind: KindNumber, Unit: "years", Need: "options and warrants: this or expiry_date", Help: "Contractual term from the grant date, when expiry_date is empty.", Synonyms: []string{"Term", "Term (years)", "Contractual Term", "Contractual Term (years)"}},
			{Key: "vest_start", Kind: KindDate, Need: "optional", Default: "grant_date", Help: "The date vesting counts from.", Synonyms: []string{"Vesting Start Date", "Vesting Commencement Date", "Vest Start Date", "Vesting Start"}},
			{Key: "vest_months", Kind: KindInt, Unit: "months", Need: "optional", Default: "0 (vested at grant)", Help: "Length of the vesting period.", Synonyms: []string{"Vesting Months", "Vesting Period (months)", "Vesting Term (months)"}},
			{Key: "cliff_months", Kind: KindInt, Unit: "months", Need: "optional", Default: "0", Help: "Nothing vests before the cliff; at the cliff everything accrued so far vests.", Synonyms: []string{"Cliff", "Cliff (months)", "Cliff Period (months)", "Vesting Cliff (months)"}},
			{Key: "vest_every_months", Kind: KindInt, Choices: []string{"1", "3", "12"}, Unit: "months", Need: "optional", Default: "1", Help: "After the cliff, shares vest monthly (1), quarterly (3) or yearly (12).", Synonyms: []string{"Vesting Frequency (months)", "Vesting Interval (months)", "Vest Every"}},
			{Key: "share_price", Kind: KindNumber, Unit: "currency per share", Need: "optional", Default: "Share Prices at the measurement date", Help: "Overrides the share's fair value at the measurement date.", Synonyms: []string{"Fair Market Value", "FMV", "Stock Price", "Share Value", "Fair Market Value per Share"}},
			{Key: "volatility", Kind: KindPercent, Unit: "annual", Need: "optional", Default: "Assumptions", Help: "Overrides the volatility.", Synonyms: []string{"Expected Volatility", "Vol"}},
			{Key: "dividend_yield", Kind: KindPercent, Unit: "annual", Need: "optional", Default: "Assumptions", Help: "Overrides the dividend yield.", Synonyms: []string{"Expected Dividend Yield", "Dividend Rate"}},
			{Key: "exercise_multiple", Kind: KindNumber, Unit: "times strike", Need: "optional", Default: "Assumptions", Help: "Overrides the exercise multiple.", Synonyms: []string{"Early Exercise Multiple", "Suboptimal Exercise Factor"}},
			{Key: "post_vesting_exit_rate", Kind: KindPercent, Unit: "annual", Need: "optional", Default: "Assumptions", Help: "Overrides the post-vesting exit rate.", Synonyms: []string{"Post-Vesting Exit Rate", "Post-Vesting Termination Rate", "Exit Rate"}},
			{Key: "classification", Kind: KindChoice, Choices: classifications, Need: "warrants, optional", Default: "equity", Help: "Equity warrants are measured at grant; liability warrants are remeasured at every valuation date.", Synonyms: []string{"Accounting Classification", "Equity or Liability"}},
			{Key: "exercise_style", Kind: KindChoice, Choices: exerciseStyles, Need: "warrants, optional", Default: "american", Help: "American warrants may be exercised at any time once vested; european only at expiry.", Synonyms: []string{"Exercise Type", "Option Style"}},
			{Key: "purpose", Kind: KindChoice, Choices: purposes, Need: "warrants: required; options and RSUs: optional", Default: "compensation (options and RSUs)", Help: "What the award pays for: compensation (share-based payment for services, expensed over service) or financing (a warrant issued to a lender or an investor: not compensation; measured at issue, and remeasured every period if a liability).", Synonyms: []string{"Award Purpose", "Issued For"}},
			{Key: "hire_date", Kind: KindDate, Need: "optional", Default: "grant_date", Help: "For a holder hired after the grant date, the day service begins: cost is recognized from it. Leave empty when the holder was employed at grant.", Synonyms: []string{"Date of Hire", "Employment Start Date", "Service Start Date"}},
			{Key: "tax_deductible", Kind: KindChoice, Choices: []string{"yes", "no"}, Need: "optional", Default: "yes for options and RSUs, no for warrants", Help: "Whether the award gives the company a tax deduction: no for US incentive stock options, yes for non-qualified options and RSUs. Deductible awards carry a deferred tax asset when Assumptions gives tax_rate."},
			{Key: "cost_center", Kind: KindText, Need: "optional", Default: "unassigned", Help: "The cost centre (function or department) whose expense the grant is, e.g. R&D or 4100; a move to another is a Transfers row. Expense is split by cost centre in the memo, the workbook, valuation.json and journal.csv; a grant with none is in the unassigned line, with a warning."},
			{Key: "condition", Kind: KindText, Need: "optional", Default: "none (service only)", Help: "A condition_id of the Conditions sheet: the award vests only if that performance or market condition is met too."},
		}},
	{Name: SheetVesting, File: "vesting.csv",
		Help: "Optional custom vesting: for each grant named here these rows replace the schedule of the Grants columns. The shares of a grant must add up to its grant.",
		Columns: []Column{
			{Key: "grant_id", Kind: KindText, Required: true, Need: "required", Help: "A grant_id of the Grants sheet.", Synonyms: []string{"Award ID", "Grant Number", "Award Number"}},
			{Key: "vest_date", Kind: KindDate, Required: true, Need: "required", Help: "The date these shares vest.", Synonyms: []string{"Vesting Date"}},
			{Key: "shares", Kind: KindInt, Unit: "shares", Required: true, Need: "required", Help: "Shares vesting on that date.", Synonyms: []string{"Shares Vesting", "Vesting Shares", "Number of Shares", "Quantity"}},
		}},
	{Name: SheetSharePrices, File: "share_prices.csv",
		Help: "The fair value of one share from each date on (a step function), usually one row per valuation of the common stock. With options or warrants, a row dated on or before valuation_date gives the period-end price of the disclosures.",
		Columns: []Column{
			{Key: "date", Kind: KindDate, Required: true, Need: "required", Help: "The date from which the price holds.", Synonyms: []string{"Valuation Date", "Effective Date", "As-of Date"}},
			{Key: "price", Kind: KindNumber, Unit: "currency per share", Required: true, Need: "required", Help: "Fair value per share.", Synonyms: []string{"Share Price", "Fair Market Value", "FMV", "Price per Share", "Fair Value per Share", "Common Stock Value"}},
		}},
	{Name: SheetRates, File: "rates.csv", Required: true,
		Help: "Risk-free rate curves: one row per tenor; a grant uses the latest curve dated on or before its measurement date.",
		Columns: []Column{
			{Key: "curve_date", Kind: KindDate, Required: true, Need: "required", Help: "The date of the curve.", Synonyms: []string{"As-of Date", "Curve As-of Date", "Yield Curve Date"}},
			{Key: "tenor_years", Kind: KindNumber, Unit: "years", Required: true, Need: "required", Help: "Tenor of the rate.", Synonyms: []string{"Tenor", "Tenor (years)", "Maturity (years)", "Term (years)"}},
			{Key: "rate", Kind: KindPercent, Unit: "annual", Required: true, Need: "required", Help: "The rate, e.g. 4.1% or 0.041.", Synonyms: []string{"Zero Rate", "Risk-Free Rate", "Yield"}},
			{Key: "compounding", Kind: KindChoice, Choices: compoundings, Need: "optional", Default: "continuous", Help: "Zero rates compounded continuously, annually or semiannually, or government par yields with semiannual coupons (par-semiannual), which are bootstrapped to zero rates.", Synonyms: []string{"Compounding Frequency", "Rate Basis"}},
		}},
	{Name: SheetEvents, File: "events.csv",
		Help: "Optional: what happened to granted shares. A forfeited event forfeits the unvested shares of tranches that vest after its date.",
		Columns: []Column{
			{Key: "grant_id", Kind: KindText, Required: true, Need: "required", Help: "A grant_id of the Grants sheet.", Synonyms: []string{"Award ID", "Grant Number", "Award Number"}},
			{Key: "date", Kind: KindDate, Required: true, Need: "required", Help: "The date of the event.", Synonyms: []string{"Event Date", "Transaction Date", "Effective Date"}},
			{Key: "event", Kind: KindChoice, Choices: eventKinds, Required: true, Need: "required", Help: "exercised, forfeited (unvested shares lost on leaving), expired (vested shares lapsed) or cancelled.", Synonyms: []string{"Event Type", "Transaction Type", "Action"}},
			{Key: "shares", Kind: KindInt, Unit: "shares", Required: true, Need: "required", Help: "Shares affected.", Synonyms: []string{"Shares Affected", "Number of Shares", "Quantity"}},
			{Key: "share_price", Kind: KindNumber, Unit: "currency per share", Need: "optional", Default: "Share Prices on the date", Help: "The share's fair value on the date of an exercise, for its tax deduction and the excess tax benefit or shortfall."},
			{Key: "replacement_grant_id", Kind: KindText, Need: "cancelled events, optional", Help: "For a cancellation with a concurrent replacement award: the grant_id of the replacement, granted on the cancellation date. The exchange is booked as a modification (ASC 718-20-35-8; IFRS 2.28(c)): the cancelled shares' grant-date cost is kept and only a replacement worth more than them on that date adds cost."},
		}},
	{Name: SheetTransfers, File: "transfers.csv",
		Help: "Optional: the cost centre history of holders who move. From its date on (that day included) a grant's service is rendered in the row's cost centre; before its first row, in the Grants cost_center. The expense of each day of service lands in the cost centre it was rendered in.",
		Columns: []Column{
			{Key: "grant_id", Kind: KindText, Required: true, Need: "required", Help: "A grant_id of the Grants sheet."},
			{Key: "date", Kind: KindDate, Required: true, Need: "required", Help: "The first day of service in the new cost centre."},
			{Key: "cost_center", Kind: KindText, Required: true, Need: "required", Help: "The cost centre from that date on."},
		}},
	{Name: SheetAccounts, File: "accounts.csv",
		Help: "Optional: the general-ledger account each role of journal.csv books to (role, account code and name). A role not listed keeps its default name and no code. A compensation_expense row with a cost_center applies to that cost centre only.",
		Columns: []Column{
			{Key: "role", Kind: KindChoice, Choices: accountRoleNames(), Required: true, Need: "required", Help: "compensation_expense; equity (additional paid-in capital, or under IFRS the share-based payment reserve); share_based_payment_liability (liability-classified awards); warrant_liability, fair_value_change, warrant_equity and financing_proceeds (warrants issued in financings); deferred_tax_asset; deferred_tax_benefit (the deferred tax line of the income statement)."},
			{Key: "cost_center", Kind: KindText, Need: "optional", Default: "every cost centre", Help: "For compensation_expense only: the cost centre this account serves, for a chart of accounts with an expense account per function."},
			{Key: "account_code", Kind: KindText, Need: "this or account_name", Help: "The account's code in your chart of accounts, as your ledger imports it."},
			{Key: "account_name", Kind: KindText, Need: "this or account_code", Default: "the role's default name", Help: "The account's name."},
		}},
}, append(conditionSheets, modificationsSheet)...)

// DesignSheets is the layout of the grant designs workbook that compare
// reads (and init --designs writes): the schedule's Company sheet with one
// more key, grant_date; its Assumptions, Share Prices and Rates sheets as
// they are; and Designs, one row per design to compare. Columns that mean
// what they mean on the Grants sheet are the Grants sheet's own.
var DesignSheets = []Sheet{
	withColumns(scheduleSheet(SheetCompany), Column{Key: "grant_date", Kind: KindDate, Need: "optional", Default: "valuation_date",
		Help: "The date the designs would be granted: every design is measured at it, with the share price and rate curve in force on it."}),
	scheduleSheet(SheetAssumptions),
	{Name: SheetDesigns, File: "designs.csv", Required: true,
		Help: fmt.Sprintf("One row per grant design to compare side by side, at most %d. Empty cells take the Assumptions or the defaults shown.", MaxDesigns),
		Columns: []Column{
			{Key: "design", Kind: KindText, Required: true, Need: "required", Help: "A short, unique name for the design, shown at the head of its column, e.g. 4y monthly, 1y cliff.", Synonyms: []string{"Design Name", "Scenario"}},
			grantColumn("instrument", "", ""),
			grantColumn("shares", "", ""),
			grantColumn("strike", "options and warrants: this or strike_premium", ""),
			{Key: "strike_premium", Kind: KindPercent, Unit: "over the share price", Need: "options and warrants: this or strike",
				Help:     "The strike as a premium over the share price at grant_date: 0 is at the money, 25% or 0.25 a strike a quarter above it.",
				Synonyms: []string{"Premium", "Premium over Share Price"}},
			grantColumn("term_years", "options and warrants", "Contractual term from the grant date."),
			grantColumn("vest_months", "", ""),
			grantColumn("cliff_months", "", ""),
			grantColumn("vest_every_months", "", ""),
			grantColumn("exercise_multiple", "", ""),
			grantColumn("post_vesting_exit_rate", "", "Overrides the post-vesting exit rate. A long exercise window after leaving means fewer leavers exercise or lose their options at once: a lower rate."),
			{Key: "pre_vesting_forfeiture_rate", Kind: KindPercent, Unit: "annual", Need: "optional", Default: "Assumptions",
				Help: "Overrides the share of unvested holders who leave each year: it enters the expected cost and the expense, never the fair value."},
			grantColumn("volatility", "", ""),
		}},
	scheduleSheet(SheetSharePrices),
	scheduleSheet(SheetRates),
}

// MaxDesigns is how many designs one comparison takes: more would not fit
// side by side on a page or a screen.
const MaxDesigns = 10

// withColumns is sh with more columns after its own.
func withColumns(sh Sheet, more ...Column) Sheet {
	sh.Columns = append(append([]Column(nil), sh.Columns...), more...)
	return sh
}

// grantColumn is the Grants sheet's column key, with need and help in
// place of its own when they are not empty.
func grantColumn(key, need, help string) Column {
	sh := scheduleSheet(SheetGrants)
	c := *sh.Column(key)
	if need != "" {
		c.Need = need
	}
	if help != "" {
		c.Help = help
	}
	return c
}

// DesignColumnsMarkdown renders, for the README, what the designs workbook
// holds beyond the schedule's sheets: the Designs sheet and the Company's
// grant_date key.
func DesignColumnsMarkdown() string {
	var extra []Sheet
	for _, sh := range DesignSheets {
		if sh.Name == SheetDesigns {
			extra = append(extra, sh)
			continue
		}
		own := scheduleSheet(sh.Name)
		var cols []Column
		for _, c := range sh.Columns {
			if own.Column(c.Key) == nil {
				cols = append(cols, c)
			}
		}
		if len(cols) > 0 {
			sh.Columns = cols
			extra = append(extra, sh)
		}
	}
	return layoutMarkdown(extra)
}

// scheduleSheet is the sheet of the schedule's layout named name.
func scheduleSheet(name string) Sheet {
	for _, sh := range Sheets {
		if sh.Name == name {
			return sh
		}
	}
	panic("grants: no schedule sheet " + name)
}

// SheetSpec returns the layout of the sheet with canonical name name (the
// schedule's, else the designs workbook's); it panics for an unknown name
// (a programming error).
func SheetSpec(name string) *Sheet {
	for _, layout := range [][]Sheet{Sheets, DesignSheets} {
		for i := range layout {
			if layout[i].Name == name {
				return &layout[i]
			}
		}
	}
	panic("grants: no sheet " + name)
}

// ColumnsMarkdown renders the sheets and their columns as Markdown, for the
// README.
func ColumnsMarkdown() string { return layoutMarkdown(Sheets) }

func layoutMarkdown(layout []Sheet) string {
	var b strings.Builder
	for _, sh := range layout {
		need := "optional sheet"
		if sh.Required {
			need = "required sheet"
		}
		file := sh.File
		fmt.Fprintf(&b, "### %s (%s; CSV file `%s`)\n\n%s\n\n", sh.Name, need, file, sh.Help)
		head := "column"
		if sh.KeyValue {
			head = "key"
		}
		fmt.Fprintf(&b, "| %s | kind | unit | needed | meaning |\n|---|---|---|---|---|\n", head)
		for _, c := range sh.Columns {
			kind := c.Kind.String()
			if len(c.Choices) > 0 {
				kind = "one of " + strings.Join(quoteAll(c.Choices), ", ")
			}
			need := c.Need
			if c.Default != "" {
				need += "; default " + c.Default
			}
			fmt.Fprintf(&b, "| `%s` | %s | %s | %s | %s%s |\n", c.Key, kind, c.Unit, need, c.Help, c.also(head+"s"))
		}
		if len(sh.KeyColumns) > 0 {
			b.WriteString("\nColumns beside key and value:\n\n| column | kind | needed | meaning |\n|---|---|---|---|\n")
			for _, c := range sh.KeyColumns {
				need := c.Need
				if c.Default != "" {
					need += "; default " + c.Default
				}
				fmt.Fprintf(&b, "| `%s` | %s | %s | %s |\n", c.Key, c.Kind.String(), need, c.Help)
			}
		}
		b.WriteString("\n")
	}
	return b.String()
}

func quoteAll(ss []string) []string {
	out := make([]string, len(ss))
	for i, s := range ss {
		out[i] = "`" + s + "`"
	}
	return out
}
