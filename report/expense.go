package report

import (
	"fmt"
	"sort"
	"time"

	"grantworth/grants"
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
	ServiceRule              string  `json:"service_rule"`

	Amount          float64 `json:"period_amount"`     // compensation expense in the current period
	FairValueChange float64 `json:"fair_value_change"` // liability warrants, apart from compensation
	Cumulative      float64 `json:"cumulative"`        // through the period end

	ByGrant      []ExpenseGrant  `json:"by_grant"`
	ByGrantMonth []ExpenseGroup  `json:"by_grant_month"`
	Forecast     []ExpensePeriod `json:"forecast"` // the next 16 calendar quarters
	// AfterForecast is the unrecognised cost expected after the forecast.
	AfterForecast float64        `json:"after_forecast"`
	Journal       []JournalEntry `json:"journal"`
	PolicyNotes   []string       `json:"policy_notes"`
	Disclosures   *Disclosures   `json:"disclosures"`
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

	// Liability-classified warrants only.
	FairValueChange    float64 `json:"fair_value_change"`
	LiabilityOpen      float64 `json:"liability_at_period_start"`
	LiabilityEnd       float64 `json:"liability_at_period_end"`
	ReclassifiedEquity float64 `json:"reclassified_to_equity"`

	Tranches []ExpenseTranche `json:"tranches"`
}

// ExpenseTranche is one tranche's attribution.
type ExpenseTranche struct {
	Index             int     `json:"index"`
	VestDate          Date    `json:"vest_date"`
	Shares            int64   `json:"shares"`
	SharesCounted     float64 `json:"shares_counted"` // expected to vest under an estimate, net of forfeitures
	FairValuePerShare float64 `json:"fair_value_per_share"`
	ExpectedShare     float64 `json:"expected_share_at_vest"`
	Cost              float64 `json:"cost"`
	CumulativeOpen    float64 `json:"cumulative_at_period_start"`
	Amount            float64 `json:"period_amount"`
	Cumulative        float64 `json:"cumulative"`
	Unrecognized      float64 `json:"unrecognized_cost"`
	RemainingYears    float64 `json:"remaining_years"`
}

// ExpenseGroup sums the attribution of the grants of one grant month
// (Key "2024-03"), for long ledgers.
type ExpenseGroup struct {
	Key             string  `json:"key"`
	Grants          int     `json:"grants"`
	Cost            float64 `json:"cost"`
	Amount          float64 `json:"period_amount"`
	Cumulative      float64 `json:"cumulative"`
	Unrecognized    float64 `json:"unrecognized_cost"`
	FairValueChange float64 `json:"fair_value_change"`
}

// JournalEntry is one summary entry for the period.
type JournalEntry struct {
	Description string        `json:"description"`
	Lines       []JournalLine `json:"lines"`
}

// JournalLine is one debit or credit.
type JournalLine struct {
	Account string  `json:"account"`
	Debit   float64 `json:"debit"`
	Credit  float64 `json:"credit"`
}

// Disclosures are the share-based payment note's tables for the period.
type Disclosures struct {
	SharePrice          float64        `json:"share_price"` // at period end, for intrinsic values
	Options             RollForward    `json:"options"`
	OptionsAtEnd        []SummaryLine  `json:"options_at_period_end"`
	OptionGrants        GrantsInPeriod `json:"option_grants"`
	RSUs                RollForward    `json:"rsus"`
	RSUGrants           GrantsInPeriod `json:"rsu_grants"`
	Warrants            RollForward    `json:"warrants"`
	WarrantsAtEnd       []SummaryLine  `json:"warrants_at_period_end"`
	WarrantGrants       GrantsInPeriod `json:"warrant_grants"`
	WarrantsOutstanding []WarrantRow   `json:"warrants_outstanding"`
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

// Revalue gives a liability-classified warrant's fair value per share of
// each tranche (in Schedule.Tranches order) measured at date at, for the
// grant-date measurement and the remeasurements. The value command passes
// one built on its valuation; nil leaves a liability warrant measured at
// the valuation date only.
type Revalue func(g grants.Grant, at time.Time) ([]float64, error)

// AddExpense runs expense attribution and the disclosure tables for the
// schedule's period over the valued grants of m, and fills m.Expense. It is
// a build step, like Summarize: the renderers only lay out what it writes.
// sharePrice is the share's fair value at the valuation date (for intrinsic
// values). For a liability-classified warrant the fair values in m are
// those at the valuation date (its measurement date); revalue, when not
// nil, gives those at the grant date and at past quarter ends so that the
// change in fair value can be shown apart from compensation.
func AddExpense(m *Model, s *grants.Schedule, sharePrice float64, revalue Revalue) error {
	start, end := s.Period()
	pol := s.ExpensePolicy()
	var awards []grants.AwardCost
	for _, mg := range m.Grants {
		g, ok := s.Grant(mg.ID)
		if !ok {
			return fmt.Errorf("expense: grant %s is in the results but not in the schedule", mg.ID)
		}
		fv := make([]float64, len(mg.Tranches))
		var shares, term float64
		for i, t := range mg.Tranches {
			fv[i] = t.FairValuePerShare
			shares += float64(t.Shares)
			term += float64(t.Shares) * t.ExpectedTermYears
		}
		a, err := s.AwardCost(g, fv)
		if err != nil {
			return fmt.Errorf("expense: %w", err)
		}
		if shares > 0 {
			a.Measured = &grants.MeasuredAssumptions{Volatility: mg.Volatility, RiskFreeRate: mg.RiskFreeRate, DividendYield: mg.DividendYield, ExpectedTermYears: term / shares}
		}
		if g.Instrument == grants.Warrant && g.Classification == grants.Liability {
			remeasure(&a, fv, end, revalue, m)
		}
		awards = append(awards, a)
	}
	rep, disc, err := grants.Attribute(awards, pol, start, end, sharePrice)
	if err != nil {
		return fmt.Errorf("expense and disclosures: %w", err)
	}
	m.Expense = expenseModel(rep, disc)
	m.Warnings = append(m.Warnings, rep.Warnings...)
	return nil
}

// remeasure makes a liability warrant's grant-date value its FairValue and
// the valuation-date value fv (with past quarter ends, if revalue can give
// them) its Remeasurements. When revalue is nil or fails (no share price or
// curve at the grant date, say), the warrant is measured at the valuation
// date only and a warning says so.
func remeasure(a *grants.AwardCost, fv []float64, end time.Time, revalue Revalue, m *Model) {
	g := a.Grant
	only := func(why string) {
		m.Warnings = append(m.Warnings, fmt.Sprintf("grant %s: liability-classified warrant measured at the valuation date only (%s); its compensation expense uses that value and no change in fair value is shown apart", g.ID, why))
		for i := range a.Tranches {
			a.Tranches[i].FairValue = fv[i]
		}
		a.Remeasurements = []grants.Remeasurement{{Date: end, FairValue: fv}}
	}
	if revalue == nil {
		only("no revaluation was run")
		return
	}
	at0, err := revalue(g, g.GrantDate)
	if err != nil || len(at0) != len(fv) {
		only(fmt.Sprintf("it could not be valued at its grant date: %v", err))
		return
	}
	ends := grants.RemeasurementDates(g.GrantDate, end)
	var rs []grants.Remeasurement
	for _, q := range ends {
		v, err := revalue(g, q)
		if err != nil || len(v) != len(fv) {
			only(fmt.Sprintf("it could not be valued at %s: %v", q.Format(time.DateOnly), err))
			return
		}
		rs = append(rs, grants.Remeasurement{Date: q, FairValue: v})
	}
	for i := range a.Tranches {
		a.Tranches[i].FairValue = at0[i]
	}
	a.Remeasurements = append(rs, grants.Remeasurement{Date: end, FairValue: fv})
}

func periodsOf(ps []grants.PeriodAmount) []ExpensePeriod {
	out := make([]ExpensePeriod, 0, len(ps))
	for _, p := range ps {
		out = append(out, ExpensePeriod{Start: DateOf(p.Start), End: DateOf(p.End), Amount: p.Amount, FairValueChange: p.FairValueChange, Current: p.Current})
	}
	return out
}

// expenseModel lays the attribution and disclosures into the Model's types.
func expenseModel(r *grants.ExpenseReport, d *grants.Disclosure) *Expense {
	det := &ExpenseDetail{
		PeriodStart: DateOf(r.PeriodStart), PeriodEnd: DateOf(r.PeriodEnd),
		Attribution: string(r.Policy.Attribution), Forfeitures: string(r.Policy.Forfeitures),
		PreVestingForfeitureRate: r.Policy.PreVestingForfeitureRate, ServiceRule: r.ServiceRule,
		Amount: r.Period, FairValueChange: r.FairValueChange, Cumulative: r.Cumulative,
		Forecast: periodsOf(r.Forecast), AfterForecast: r.AfterForecast,
		PolicyNotes: append([]string{}, r.PolicyNotes...),
		ByGrant:     []ExpenseGrant{}, Journal: []JournalEntry{},
	}
	months := map[string]*ExpenseGroup{}
	for _, g := range r.Grants {
		eg := ExpenseGrant{GrantID: g.GrantID, Holder: g.Holder, Instrument: string(g.Instrument), Liability: g.Liability,
			GrantDate: DateOf(g.GrantDate), ServiceStart: DateOf(g.ServiceStart), ServiceEnd: DateOf(g.ServiceEnd),
			Cost: g.Cost, CumulativeOpen: g.CumulativeOpen, Amount: g.Period, Cumulative: g.Cumulative,
			Unrecognized: g.Unrecognized, RemainingYears: g.RemainingYears,
			FairValueChange: g.FairValueChange, LiabilityOpen: g.LiabilityOpen, LiabilityEnd: g.LiabilityEnd,
			ReclassifiedEquity: g.ReclassifiedEquity, Tranches: []ExpenseTranche{}}
		for _, t := range g.Tranches {
			eg.Tranches = append(eg.Tranches, ExpenseTranche{Index: t.Index, VestDate: DateOf(t.VestDate), Shares: t.Shares,
				SharesCounted: t.SharesCounted, FairValuePerShare: t.FairValue, ExpectedShare: t.ExpectedShare, Cost: t.Cost,
				CumulativeOpen: t.CumulativeOpen, Amount: t.Period, Cumulative: t.Cumulative, Unrecognized: t.Unrecognized,
				RemainingYears: t.RemainingYears})
		}
		det.ByGrant = append(det.ByGrant, eg)
	}
	for i := range det.ByGrant {
		g := &det.ByGrant[i]
		key := g.GrantDate.Time().Format("2006-01")
		grp := months[key]
		if grp == nil {
			grp = &ExpenseGroup{Key: key}
			months[key] = grp
		}
		grp.Grants++
		grp.Cost += g.Cost
		grp.Amount += g.Amount
		grp.Cumulative += g.Cumulative
		grp.Unrecognized += g.Unrecognized
		grp.FairValueChange += g.FairValueChange
	}
	det.ByGrantMonth = make([]ExpenseGroup, 0, len(months))
	for _, g := range months {
		det.ByGrantMonth = append(det.ByGrantMonth, *g)
	}
	sort.Slice(det.ByGrantMonth, func(i, j int) bool { return det.ByGrantMonth[i].Key < det.ByGrantMonth[j].Key })
	for _, e := range r.Journal {
		je := JournalEntry{Description: e.Description}
		for _, l := range e.Lines {
			je.Lines = append(je.Lines, JournalLine{Account: l.Account, Debit: l.Debit, Credit: l.Credit})
		}
		det.Journal = append(det.Journal, je)
	}
	det.Disclosures = disclosuresModel(d)
	return &Expense{
		Periods:                       periodsOf(r.Periods),
		UnrecognizedCost:              r.Unrecognized,
		WeightedAverageRemainingYears: r.RemainingYears,
		ExpenseDetail:                 det,
	}
}

func rollLine(label string, l grants.RollLine) RollLine {
	return RollLine{Label: label, Shares: l.Shares, WeightedExercisePrice: l.WeightedExercisePrice, WeightedFairValue: l.WeightedFairValue}
}

func rollModel(r grants.RollForward) RollForward {
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

func summaryModel(s grants.OutstandingSummary) []SummaryLine {
	line := func(label string, l grants.OutstandingLine) SummaryLine {
		return SummaryLine{Label: label, Shares: l.Shares, WeightedExercisePrice: l.WeightedExercisePrice,
			RemainingTermYears: l.WeightedRemainingTermYears, IntrinsicValue: l.AggregateIntrinsicValue}
	}
	return []SummaryLine{line("Outstanding", s.Outstanding), line("Exercisable (vested)", s.Exercisable), line("Vested and expected to vest", s.VestedExpected)}
}

func grantsModel(g grants.GrantsInPeriod) GrantsInPeriod {
	return GrantsInPeriod{Grants: g.Grants, Shares: g.Shares, WeightedFairValue: g.WeightedFairValue, Measured: g.Measured,
		Volatility: g.Volatility, RiskFreeRate: g.RiskFreeRate, DividendYield: g.DividendYield, ExpectedTermYears: g.ExpectedTermYears}
}

func disclosuresModel(d *grants.Disclosure) *Disclosures {
	out := &Disclosures{
		SharePrice: d.SharePrice,
		Options:    rollModel(d.Options), OptionsAtEnd: summaryModel(d.OptionsAtEnd), OptionGrants: grantsModel(d.OptionGrants),
		RSUs: rollModel(d.RSUs), RSUGrants: grantsModel(d.RSUGrants),
		Warrants: rollModel(d.Warrants), WarrantsAtEnd: summaryModel(d.WarrantsAtEnd), WarrantGrants: grantsModel(d.WarrantGrants),
		WarrantsOutstanding: []WarrantRow{},
	}
	for _, w := range d.WarrantsOutstanding {
		out.WarrantsOutstanding = append(out.WarrantsOutstanding, WarrantRow{GrantID: w.GrantID, Holder: w.Holder,
			Classification: string(w.Classification), Shares: w.Shares, Exercisable: w.Exercisable, Strike: w.Strike,
			ExpiryDate: DateOf(w.ExpiryDate), RemainingTermYears: w.RemainingTermYears, FairValuePerShare: w.FairValue,
			IntrinsicValue: w.IntrinsicValue})
	}
	return out
}
