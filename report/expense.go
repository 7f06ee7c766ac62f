package report

import (
	"sort"

	"grantworth/grants"
	"grantworth/grants/accounting"
)

// ExpenseDetail is the expense attribution and the disclosure tables beyond
// the contract fields of Expense (DESIGN §4.3). It is embedded in Expense,
// so its fields sit beside periods, unrecognized_cost and
// weighted_average_remaining_years in valuation.json.
type ExpenseDetail struct {
	PeriodStart              Date    `json:"period_start"`
	PeriodEnd                Date    `json:"period_end"`
	Attribution              string  `json:"attribution"`
	Forfeitures              string  `json:"forfeitures"`
	PreVestingForfeitureRate float64 `json:"pre_vesting_forfeiture_rate"`
	Framework                string  `json:"framework"` // asc718 | ifrs2
	ServiceRule              string  `json:"service_rule"`

	// Amount and Cumulative are compensation only: no warrant issued in a
	// financing is in them (DESIGN §4.3).
	Amount     float64 `json:"period_amount"` // compensation expense in the current period
	Cumulative float64 `json:"cumulative"`    // through the period end
	// FinancingFairValueChange is the period's change in fair value of
	// the financing warrants' liability, outside operating expense.
	FinancingFairValueChange float64 `json:"financing_fair_value_change"`

	// FiscalCalendar says in words how the company's fiscal years and
	// quarters run; Periods, Forecast and ByFiscalYear follow it.
	FiscalCalendar string `json:"fiscal_calendar"`

	ByGrant      []ExpenseGrant  `json:"by_grant"`
	ByGrantMonth []ExpenseGroup  `json:"by_grant_month"`
	Forecast     []ExpensePeriod `json:"forecast"` // the next 16 fiscal quarters
	// ByFiscalYear is the expense of each fiscal year from the earliest
	// grant's to the last service: recognized through the period end and
	// expected after it.
	ByFiscalYear []ExpenseYear `json:"by_fiscal_year"`
	// ByCostCenter splits the compensation expense by cost centre (name
	// order, "unassigned" last); the centres add up to the totals.
	ByCostCenter []ExpenseCostCenter `json:"by_cost_center"`
	// AfterForecast is the unrecognized cost expected after the forecast.
	AfterForecast float64 `json:"after_forecast"`
	// Financing are the warrants issued in financings, apart from
	// compensation.
	Financing []FinancingWarrant `json:"financing_warrants"`
	// Journal is journal.csv's entries; its amounts have JournalDecimals
	// decimals (the currency's minor unit).
	Journal         []JournalEntry `json:"journal"`
	JournalDecimals int            `json:"journal_decimals"`
	// Tax is the income tax effect; nil without a tax rate.
	Tax         *Tax         `json:"tax"`
	PolicyNotes []string     `json:"policy_notes"`
	Disclosures *Disclosures `json:"disclosures"`
}

// FinancingWarrant is a warrant issued in a financing: measured once at
// issue if equity-classified; if a liability, remeasured with its change
// outside operating expense, and its liability rolled forward:
// liability_at_period_start + issued + fair_value_change −
// reclassified_to_equity = liability_at_period_end.
type FinancingWarrant struct {
	GrantID          string  `json:"grant_id"`
	Holder           string  `json:"holder"`
	Classification   string  `json:"classification"`
	IssueDate        Date    `json:"issue_date"`
	Shares           int64   `json:"warrants_issued"`
	FairValueAtIssue float64 `json:"fair_value_per_warrant_at_issue"`
	ValueAtIssue     float64 `json:"value_at_issue"`
	Outstanding      int64   `json:"outstanding"`
	Exercised        int64   `json:"exercised_in_period"`
	FairValue        float64 `json:"fair_value_per_warrant_at_period_end"`
	LiabilityOpen    float64 `json:"liability_at_period_start"`
	Issued           float64 `json:"issued"`
	FairValueChange  float64 `json:"fair_value_change"`
	Reclassified     float64 `json:"reclassified_to_equity"`
	LiabilityEnd     float64 `json:"liability_at_period_end"`
	// ReclassifiedToDate is the liability reclassified on exercise
	// through the period end, in all; CompensationReversed the
	// compensation a prior close booked for the warrant, reversed in the
	// period (a catch-up; negative).
	ReclassifiedToDate   float64 `json:"reclassified_to_equity_cumulative"`
	CompensationReversed float64 `json:"compensation_reversed"`
	// What a later close reads: the events applied and a liability's fair
	// values per tranche at issue and after it.
	Events         []EventRecord   `json:"events"`
	Remeasurements []Remeasurement `json:"remeasurements"`
}

// ExpenseGrant is one grant's attribution.
type ExpenseGrant struct {
	GrantID        string  `json:"grant_id"`
	Holder         string  `json:"holder"`
	Instrument     string  `json:"instrument"`
	Liability      bool    `json:"liability"`
	GrantDate      Date    `json:"grant_date"`
	ServiceStart   Date    `json:"service_start"`
	ServiceEnd     Date    `json:"service_end"`
	Cost           float64 `json:"cost"` // expected total compensation cost
	CumulativeOpen float64 `json:"cumulative_at_period_start"`
	Amount         float64 `json:"period_amount"`
	Cumulative     float64 `json:"cumulative"`
	Unrecognized   float64 `json:"unrecognized_cost"`
	RemainingYears float64 `json:"remaining_years"`

	// Liability-classified awards only: their liability, which rolls as
	// liability_at_period_start + period_amount − reclassified_to_equity =
	// liability_at_period_end (every change in fair value is compensation).
	LiabilityOpen      float64 `json:"liability_at_period_start"`
	LiabilityEnd       float64 `json:"liability_at_period_end"`
	ReclassifiedEquity float64 `json:"reclassified_to_equity"`
	ReclassifiedToDate float64 `json:"reclassified_to_equity_cumulative"`

	// What a later close reads: the options or warrants outstanding (RSUs
	// nonvested) at the period end, the events applied, and a liability
	// warrant's fair values after its grant date.
	Outstanding    int64           `json:"outstanding_at_period_end"`
	Events         []EventRecord   `json:"events"`
	Remeasurements []Remeasurement `json:"remeasurements"`

	// CostCenter is the grant's at the period end; ByCostCenter its parts
	// in every cost centre its service was rendered in.
	CostCenter   string           `json:"cost_center"`
	ByCostCenter []CostCenterPart `json:"by_cost_center"`

	Tranches []ExpenseTranche `json:"tranches"`
}

// CostCenterPart is the part of one grant's expense in one cost centre.
type CostCenterPart struct {
	CostCenter   string  `json:"cost_center"`
	GrantID      string  `json:"-"` // for the workbook's rows under each centre
	Amount       float64 `json:"period_amount"`
	Cumulative   float64 `json:"cumulative"`
	Unrecognized float64 `json:"unrecognized_cost"`
}

// ExpenseCostCenter is one cost centre's compensation expense.
type ExpenseCostCenter struct {
	CostCenter    string    `json:"cost_center"`
	Grants        int       `json:"grants"`
	Amount        float64   `json:"period_amount"`
	Cumulative    float64   `json:"cumulative"`
	Unrecognized  float64   `json:"unrecognized_cost"`
	Forecast      []float64 `json:"forecast"` // by quarter of ExpenseDetail.Forecast
	AfterForecast float64   `json:"after_forecast"`
	// Parts are the grants' parts in this centre, in grant order.
	Parts []CostCenterPart `json:"-"`
}

// EventRecord is an event applied to a grant.
type EventRecord struct {
	Date   Date   `json:"date"`
	Event  string `json:"event"`
	Shares int64  `json:"shares"`
}

// Remeasurement is a liability-classified warrant's fair value per share
// of each tranche on a date.
type Remeasurement struct {
	Date              Date      `json:"date"`
	FairValuePerShare []float64 `json:"fair_value_per_share"`
}

// ExpenseTranche is one tranche's attribution.
type ExpenseTranche struct {
	Index         int     `json:"index"`
	VestDate      Date    `json:"vest_date"`
	Shares        int64   `json:"shares"`
	SharesCounted float64 `json:"shares_counted"` // expected to vest under an estimate, net of forfeitures
	// FairValuePerShare is what the cost is measured on: the grant-date
	// value, or a liability-classified award's latest remeasurement;
	// GrantDateFairValuePerShare the grant-date value in either case.
	FairValuePerShare          float64 `json:"fair_value_per_share"`
	GrantDateFairValuePerShare float64 `json:"grant_date_fair_value_per_share"`
	ExpectedShare              float64 `json:"expected_share_at_vest"`
	Cost                       float64 `json:"cost"`
	CumulativeOpen             float64 `json:"cumulative_at_period_start"`
	Amount                     float64 `json:"period_amount"`
	Cumulative                 float64 `json:"cumulative"`
	Unrecognized               float64 `json:"unrecognized_cost"`
	RemainingYears             float64 `json:"remaining_years"`
}

// ExpenseGroup sums the attribution of the grants of one grant month
// (Key "2024-03"), for long ledgers.
type ExpenseGroup struct {
	Key          string  `json:"key"`
	Grants       int     `json:"grants"`
	Cost         float64 `json:"cost"`
	Amount       float64 `json:"period_amount"`
	Cumulative   float64 `json:"cumulative"`
	Unrecognized float64 `json:"unrecognized_cost"`
}

// ExpenseYear is the compensation expense of one fiscal year.
type ExpenseYear struct {
	Year       string  `json:"fiscal_year"` // "2026" in calendar years, else "FY2027"
	Start      Date    `json:"start"`
	End        Date    `json:"end"`
	Recognized float64 `json:"recognized"` // through the period end
	Expected   float64 `json:"expected"`   // after the period end
	Total      float64 `json:"total"`
}

// JournalEntry is one entry of the period's journal, as journal.csv has it.
type JournalEntry struct {
	Number      int           `json:"entry"`
	Date        Date          `json:"date"`
	Description string        `json:"description"`
	Lines       []JournalLine `json:"lines"`
}

// JournalLine is one debit or credit, rounded to the currency's minor
// unit (exactly one of Debit and Credit is non-zero): the role the account
// plays (see accounting.Role), the account's code (empty unless mapped)
// and name, the cost centre of an expense line and the grant of a
// per-grant entry.
type JournalLine struct {
	Role        string  `json:"role"`
	AccountCode string  `json:"account_code"`
	Account     string  `json:"account"`
	CostCenter  string  `json:"cost_center"`
	GrantID     string  `json:"grant_id"`
	Debit       float64 `json:"debit"`
	Credit      float64 `json:"credit"`
}

// Disclosures are the share-based payment note's tables for the period.
// Warrants issued in financings are in FinancingWarrants only.
type Disclosures struct {
	SharePrice          float64        `json:"share_price"`        // at period end, for intrinsic values
	SharePriceSource    string         `json:"share_price_source"` // its cell, e.g. "Share Prices!B7 (valuation of 2026-09-30)"
	Options             RollForward    `json:"options"`
	OptionsAtEnd        []SummaryLine  `json:"options_at_period_end"`
	OptionGrants        GrantsInPeriod `json:"option_grants"`
	OptionActivity      Activity       `json:"option_activity"`
	OptionRanges        []PriceRange   `json:"option_exercise_price_ranges"`
	RSUs                RollForward    `json:"rsus"`
	RSUGrants           GrantsInPeriod `json:"rsu_grants"`
	RSUActivity         Activity       `json:"rsu_activity"`
	Warrants            RollForward    `json:"warrants"`
	WarrantsAtEnd       []SummaryLine  `json:"warrants_at_period_end"`
	WarrantGrants       GrantsInPeriod `json:"warrant_grants"`
	WarrantActivity     Activity       `json:"warrant_activity"`
	WarrantRanges       []PriceRange   `json:"warrant_exercise_price_ranges"`
	WarrantsOutstanding []WarrantRow   `json:"warrants_outstanding"`
	FinancingWarrants   RollForward    `json:"financing_warrants"`
}

// Activity is what one instrument's exercises and vestings in the period
// amounted to (ASC 718-10-50-2; IFRS 2.45(c)).
type Activity struct {
	Exercised                    int64   `json:"exercised"`
	IntrinsicValueExercised      float64 `json:"intrinsic_value_exercised"`
	CashReceived                 float64 `json:"cash_received_from_exercises"`
	WeightedSharePriceAtExercise float64 `json:"weighted_average_share_price_at_exercise"`
	Unpriced                     int64   `json:"exercised_without_share_price"`
	Vested                       int64   `json:"vested"`
	FairValueVested              float64 `json:"fair_value_vested"`
}

// PriceRange is the options or warrants outstanding at the period end
// whose exercise prices lie in [Low, High] (IFRS 2.45(d)).
type PriceRange struct {
	Low                        float64 `json:"exercise_price_low"`
	High                       float64 `json:"exercise_price_high"`
	Outstanding                int64   `json:"outstanding"`
	WeightedExercisePrice      float64 `json:"weighted_average_exercise_price"`
	WeightedRemainingTermYears float64 `json:"weighted_average_remaining_life_years"`
	Exercisable                int64   `json:"exercisable"`
	ExercisableWeightedPrice   float64 `json:"exercisable_weighted_average_exercise_price"`
}

// RollForward is a roll-forward table: its lines from the opening count
// to the closing one, and whether start + granted − the rest = end.
type RollForward struct {
	Instrument string     `json:"instrument"`
	Basis      string     `json:"basis"` // "outstanding" or "nonvested"
	Lines      []RollLine `json:"lines"`
	Balances   bool       `json:"identity_holds"`
}

// RollLine is one line of a roll-forward.
type RollLine struct {
	Label                 string  `json:"label"`
	Shares                int64   `json:"shares"`
	WeightedExercisePrice float64 `json:"weighted_average_exercise_price"`
	WeightedFairValue     float64 `json:"weighted_average_grant_date_fair_value"`
}

// SummaryLine is outstanding, exercisable or vested-and-expected-to-vest.
type SummaryLine struct {
	Label                 string  `json:"label"`
	Shares                float64 `json:"shares"`
	WeightedExercisePrice float64 `json:"weighted_average_exercise_price"`
	RemainingTermYears    float64 `json:"weighted_average_remaining_term_years"`
	IntrinsicValue        float64 `json:"aggregate_intrinsic_value"`
}

// GrantsInPeriod describes one instrument's grants dated in the period.
type GrantsInPeriod struct {
	Grants            int     `json:"grants"`
	Shares            int64   `json:"shares"`
	WeightedFairValue float64 `json:"weighted_average_grant_date_fair_value"`
	Measured          int     `json:"grants_with_assumptions"`
	Volatility        float64 `json:"weighted_average_volatility"`
	RiskFreeRate      float64 `json:"weighted_average_risk_free_rate"`
	DividendYield     float64 `json:"weighted_average_dividend_yield"`
	ExpectedTermYears float64 `json:"weighted_average_expected_term_years"`
}

// WarrantRow is one warrant grant outstanding at period end.
type WarrantRow struct {
	GrantID            string  `json:"grant_id"`
	Holder             string  `json:"holder"`
	Classification     string  `json:"classification"`
	Shares             int64   `json:"shares"`
	Exercisable        int64   `json:"exercisable"`
	Strike             float64 `json:"strike"`
	ExpiryDate         Date    `json:"expiry_date"`
	RemainingTermYears float64 `json:"remaining_term_years"`
	FairValuePerShare  float64 `json:"fair_value_per_share"`
	IntrinsicValue     float64 `json:"intrinsic_value"`
}

func periodsOf(ps []accounting.PeriodAmount) []ExpensePeriod {
	out := make([]ExpensePeriod, 0, len(ps))
	for _, p := range ps {
		out = append(out, ExpensePeriod{Start: DateOf(p.Start), End: DateOf(p.End), Amount: p.Amount, FinancingFairValueChange: p.FairValueChange, Current: p.Current, Label: p.Label})
	}
	return out
}

// expenseModel lays the books' attribution, journal and disclosures into
// the Model's types.
func expenseModel(b *accounting.Books) *Expense {
	r, d := b.Expense, b.Disclosure
	det := &ExpenseDetail{
		PeriodStart: DateOf(r.PeriodStart), PeriodEnd: DateOf(r.PeriodEnd),
		Attribution: string(r.Policy.Attribution), Forfeitures: string(r.Policy.Forfeitures),
		PreVestingForfeitureRate: r.Policy.PreVestingForfeitureRate, Framework: string(r.Policy.Framework), ServiceRule: r.ServiceRule,
		Amount: r.Period, Cumulative: r.Cumulative, FinancingFairValueChange: r.FairValueChange,
		Forecast: periodsOf(r.Forecast), AfterForecast: r.AfterForecast,
		PolicyNotes:    append([]string{}, r.PolicyNotes...),
		Financing:      make([]FinancingWarrant, 0, len(r.Financing)),
		FiscalCalendar: r.Policy.Calendar.String(),
		ByFiscalYear:   make([]ExpenseYear, 0, len(r.ByFiscalYear)),
	}
	for _, w := range r.Financing {
		det.Financing = append(det.Financing, FinancingWarrant{GrantID: w.GrantID, Holder: w.Holder, Classification: string(w.Classification),
			IssueDate: DateOf(w.IssueDate), Shares: w.Shares, FairValueAtIssue: w.FairValueAtIssue, ValueAtIssue: w.ValueAtIssue,
			Outstanding: w.Outstanding, Exercised: w.Exercised, FairValue: w.FairValue, LiabilityOpen: w.LiabilityOpen,
			Issued: w.Issued, FairValueChange: w.FairValueChange, Reclassified: w.Reclassified, LiabilityEnd: w.LiabilityEnd,
			ReclassifiedToDate: w.ReclassifiedToDate, CompensationReversed: w.CompensationReversed,
			Events: eventRecords(w.Events), Remeasurements: remeasurementRecords(w.Remeasurements)})
	}
	det.ByCostCenter = make([]ExpenseCostCenter, 0, len(r.ByCostCenter))
	centre := map[string]int{}
	for _, c := range r.ByCostCenter {
		centre[c.CostCenter] = len(det.ByCostCenter)
		det.ByCostCenter = append(det.ByCostCenter, ExpenseCostCenter{CostCenter: c.CostCenter, Grants: c.Grants, Amount: c.Period,
			Cumulative: c.Cumulative, Unrecognized: c.Unrecognized, Forecast: append([]float64{}, c.Forecast...), AfterForecast: c.AfterForecast})
	}
	for _, y := range r.ByFiscalYear {
		det.ByFiscalYear = append(det.ByFiscalYear, ExpenseYear{Year: y.Year.Name, Start: DateOf(y.Year.Start), End: DateOf(y.Year.End),
			Recognized: y.Recognized, Expected: y.Expected, Total: y.Recognized + y.Expected})
	}
	// Each grant on its own, on all cores (eachGrant), its tranches and
	// its parts by cost centre cut from one piece per chunk of grants;
	// the cost centres' parts and the months after, in grant order.
	det.ByGrant = make([]ExpenseGrant, len(r.Grants))
	eachGrant(len(r.Grants), func(lo, hi int) {
		nt, np := 0, 0
		for i := lo; i < hi; i++ {
			nt += len(r.Grants[i].Tranches)
			np += len(r.Grants[i].ByCostCenter)
		}
		tranches, parts := make([]ExpenseTranche, nt), make([]CostCenterPart, np)
		for i := lo; i < hi; i++ {
			g := &r.Grants[i]
			nt, np := len(g.Tranches), len(g.ByCostCenter)
			expenseGrantOf(&det.ByGrant[i], g, tranches[:nt:nt], parts[:np:np])
			tranches, parts = tranches[nt:], parts[np:]
			g.Tranches = nil // the Model holds them now (Build takes b over)
		}
	})
	held := make([]int, len(det.ByCostCenter))
	for i := range det.ByGrant {
		for _, p := range det.ByGrant[i].ByCostCenter {
			held[centre[p.CostCenter]]++
		}
	}
	for k, n := range held {
		if n > 0 {
			det.ByCostCenter[k].Parts = make([]CostCenterPart, 0, n)
		}
	}
	for i := range det.ByGrant {
		for _, p := range det.ByGrant[i].ByCostCenter {
			c := &det.ByCostCenter[centre[p.CostCenter]]
			c.Parts = append(c.Parts, p)
		}
	}
	months := map[string]*ExpenseGroup{}
	var key [16]byte
	for i := range det.ByGrant {
		g := &det.ByGrant[i]
		month := appendMonth(key[:0], g.GrantDate)
		grp := months[string(month)]
		if grp == nil {
			grp = &ExpenseGroup{Key: string(month)}
			months[grp.Key] = grp
		}
		grp.Grants++
		grp.Cost += g.Cost
		grp.Amount += g.Amount
		grp.Cumulative += g.Cumulative
		grp.Unrecognized += g.Unrecognized
	}
	det.ByGrantMonth = make([]ExpenseGroup, 0, len(months))
	for _, g := range months {
		det.ByGrantMonth = append(det.ByGrantMonth, *g)
	}
	sort.Slice(det.ByGrantMonth, func(i, j int) bool { return det.ByGrantMonth[i].Key < det.ByGrantMonth[j].Key })
	det.JournalDecimals = b.Chart.Decimals
	det.Tax = taxModel(b.Tax)
	det.Journal = make([]JournalEntry, 0, len(b.Journal))
	for i, e := range b.Journal {
		je := JournalEntry{Number: i + 1, Date: DateOf(e.Date), Description: e.Description}
		if len(e.Lines) > 0 {
			je.Lines = make([]JournalLine, 0, len(e.Lines))
		}
		for _, l := range e.Lines {
			je.Lines = append(je.Lines, JournalLine{Role: string(l.Role), AccountCode: l.Account.Code, Account: l.Account.Name,
				CostCenter: l.CostCenter, GrantID: l.GrantID, Debit: l.Debit, Credit: l.Credit})
		}
		det.Journal = append(det.Journal, je)
	}
	det.Disclosures = disclosuresModel(d)
	det.Disclosures.SharePriceSource = b.SharePrice.Text
	return &Expense{
		Periods:                       periodsOf(r.Periods),
		UnrecognizedCost:              r.Unrecognized,
		WeightedAverageRemainingYears: r.RemainingYears,
		ExpenseDetail:                 det,
	}
}

// expenseGrantOf lays grant g's attribution out into eg, its tranches
// into tranches and its parts by cost centre into parts (one for each of
// g's, which eg keeps).
func expenseGrantOf(eg *ExpenseGrant, g *accounting.GrantExpense, tranches []ExpenseTranche, parts []CostCenterPart) {
	*eg = ExpenseGrant{GrantID: g.GrantID, Holder: g.Holder, Instrument: string(g.Instrument), Liability: g.Liability,
		GrantDate: DateOf(g.GrantDate), ServiceStart: DateOf(g.ServiceStart), ServiceEnd: DateOf(g.ServiceEnd),
		Cost: g.Cost, CumulativeOpen: g.CumulativeOpen, Amount: g.Period, Cumulative: g.Cumulative,
		Unrecognized: g.Unrecognized, RemainingYears: g.RemainingYears,
		LiabilityOpen: g.LiabilityOpen, LiabilityEnd: g.LiabilityEnd,
		ReclassifiedEquity: g.ReclassifiedEquity, ReclassifiedToDate: g.ReclassifiedToDate,
		Outstanding: g.Outstanding, Events: eventRecords(g.Events), Remeasurements: remeasurementRecords(g.Remeasurements),
		CostCenter: g.CostCenter, ByCostCenter: parts, Tranches: tranches}
	for k := range g.ByCostCenter {
		p := &g.ByCostCenter[k]
		parts[k] = CostCenterPart{CostCenter: p.CostCenter, GrantID: g.GrantID, Amount: p.Period, Cumulative: p.Cumulative, Unrecognized: p.Unrecognized}
	}
	for k := range g.Tranches {
		t := &g.Tranches[k]
		tranches[k] = ExpenseTranche{Index: t.Index, VestDate: DateOf(t.VestDate), Shares: t.Shares,
			SharesCounted: t.SharesCounted, FairValuePerShare: t.FairValue, GrantDateFairValuePerShare: t.GrantDateFairValue, ExpectedShare: t.ExpectedShare, Cost: t.Cost,
			CumulativeOpen: t.CumulativeOpen, Amount: t.Period, Cumulative: t.Cumulative, Unrecognized: t.Unrecognized,
			RemainingYears: t.RemainingYears}
	}
}

// eventRecords are es as the Model has them; never nil.
func eventRecords(es []grants.Event) []EventRecord {
	out := make([]EventRecord, 0, len(es))
	for _, e := range es {
		out = append(out, EventRecord{Date: DateOf(e.Date), Event: string(e.Kind), Shares: e.Shares})
	}
	return out
}

// remeasurementRecords are rs as the Model has them; never nil.
func remeasurementRecords(rs []accounting.Remeasurement) []Remeasurement {
	out := make([]Remeasurement, 0, len(rs))
	for _, r := range rs {
		out = append(out, Remeasurement{Date: DateOf(r.Date), FairValuePerShare: r.FairValue})
	}
	return out
}

func rollLine(label string, l accounting.RollLine) RollLine {
	return RollLine{Label: label, Shares: l.Shares, WeightedExercisePrice: l.WeightedExercisePrice, WeightedFairValue: l.WeightedFairValue}
}

func rollModel(r accounting.RollForward) RollForward {
	out := RollForward{Instrument: string(r.Instrument), Basis: "outstanding", Balances: r.Check() == nil}
	if r.Nonvested {
		out.Basis = "nonvested"
		out.Lines = []RollLine{
			rollLine("Nonvested at start", r.Start), rollLine("Granted", r.Granted), rollLine("Vested", r.Vested),
			rollLine("Forfeited", r.Forfeited), rollLine("Cancelled", r.Cancelled), rollLine("Nonvested at end", r.End),
		}
		return out
	}
	out.Lines = []RollLine{
		rollLine("Outstanding at start", r.Start), rollLine("Granted", r.Granted), rollLine("Exercised", r.Exercised),
		rollLine("Forfeited", r.Forfeited), rollLine("Cancelled", r.Cancelled), rollLine("Expired", r.Expired),
		rollLine("Outstanding at end", r.End),
	}
	return out
}

func summaryModel(s accounting.OutstandingSummary) []SummaryLine {
	line := func(label string, l accounting.OutstandingLine) SummaryLine {
		return SummaryLine{Label: label, Shares: l.Shares, WeightedExercisePrice: l.WeightedExercisePrice,
			RemainingTermYears: l.WeightedRemainingTermYears, IntrinsicValue: l.AggregateIntrinsicValue}
	}
	return []SummaryLine{line("Outstanding", s.Outstanding), line("Exercisable (vested)", s.Exercisable), line("Vested and expected to vest", s.VestedExpected)}
}

func grantsModel(g accounting.GrantsInPeriod) GrantsInPeriod {
	return GrantsInPeriod{Grants: g.Grants, Shares: g.Shares, WeightedFairValue: g.WeightedFairValue, Measured: g.Measured,
		Volatility: g.Volatility, RiskFreeRate: g.RiskFreeRate, DividendYield: g.DividendYield, ExpectedTermYears: g.ExpectedTermYears}
}

func activityModel(a accounting.Activity) Activity {
	return Activity{Exercised: a.Exercised, IntrinsicValueExercised: a.IntrinsicValueExercised, CashReceived: a.CashReceived,
		WeightedSharePriceAtExercise: a.WeightedSharePriceAtExercise, Unpriced: a.Unpriced, Vested: a.Vested, FairValueVested: a.FairValueVested}
}

func rangesModel(rs []accounting.PriceRange) []PriceRange {
	out := make([]PriceRange, 0, len(rs))
	for _, r := range rs {
		out = append(out, PriceRange{Low: r.Low, High: r.High, Outstanding: r.Outstanding, WeightedExercisePrice: r.WeightedExercisePrice,
			WeightedRemainingTermYears: r.WeightedRemainingTermYears, Exercisable: r.Exercisable, ExercisableWeightedPrice: r.ExercisableWeightedPrice})
	}
	return out
}

func disclosuresModel(d *accounting.Disclosure) *Disclosures {
	out := &Disclosures{
		SharePrice: d.SharePrice,
		Options:    rollModel(d.Options), OptionsAtEnd: summaryModel(d.OptionsAtEnd), OptionGrants: grantsModel(d.OptionGrants),
		OptionActivity: activityModel(d.OptionActivity), OptionRanges: rangesModel(d.OptionRanges),
		RSUs: rollModel(d.RSUs), RSUGrants: grantsModel(d.RSUGrants), RSUActivity: activityModel(d.RSUActivity),
		Warrants: rollModel(d.Warrants), WarrantsAtEnd: summaryModel(d.WarrantsAtEnd), WarrantGrants: grantsModel(d.WarrantGrants),
		WarrantActivity: activityModel(d.WarrantActivity), WarrantRanges: rangesModel(d.WarrantRanges),
		WarrantsOutstanding: []WarrantRow{}, FinancingWarrants: rollModel(d.FinancingWarrants),
	}
	out.FinancingWarrants.Instrument = FinancingKey
	for _, w := range d.WarrantsOutstanding {
		out.WarrantsOutstanding = append(out.WarrantsOutstanding, WarrantRow{GrantID: w.GrantID, Holder: w.Holder,
			Classification: string(w.Classification), Shares: w.Shares, Exercisable: w.Exercisable, Strike: w.Strike,
			ExpiryDate: DateOf(w.ExpiryDate), RemainingTermYears: w.RemainingTermYears, FairValuePerShare: w.FairValue,
			IntrinsicValue: w.IntrinsicValue})
	}
	return out
}
