package report

import (
	"fmt"
	"sort"
	"strings"

	"grantworth/grants"
	"grantworth/grants/design"
	"grantworth/valuation"
)

// CompareModel is everything the outputs of grantworth compare show: the
// comparison.pdf, comparison.xlsx and the --json object (DESIGN §4.1). It
// is built once (BuildComparison) from a design.Comparison and the run's
// settings; the renderers only lay it out, so they cannot disagree. Money
// is in Currency; rates and probabilities are decimals.
type CompareModel struct {
	Tool             Tool             `json:"tool"`
	Input            Input            `json:"input"`
	SchemaVersion    int              `json:"schema_version"`
	Company          string           `json:"company"`
	Currency         string           `json:"currency"`
	GrantDate        Date             `json:"grant_date"`
	SharePrice       float64          `json:"share_price"`
	SharePriceSource string           `json:"share_price_source"`
	Attribution      string           `json:"attribution"`     // graded | straight-line
	FiscalYearEnd    string           `json:"fiscal_year_end"` // MM-DD
	Steps            string           `json:"steps"`           // "auto" or a raw step count
	Simulation       SimulationInfo   `json:"simulation"`
	Years            []FiscalYear     `json:"fiscal_years"` // every year some design expenses, in order
	Designs          []DesignResult   `json:"designs"`
	Warnings         []string         `json:"warnings"`
	Caution          string           `json:"caution"`
	Notes            []string         `json:"notes"` // how to read the figures, in words
	Percentiles      []float64        `json:"percentiles"`
	Endings          []EndingCategory `json:"endings"` // the ways of ending, in the order of DesignResult.Endings
}

// SimulationInfo says how the outcome distributions were simulated.
type SimulationInfo struct {
	Paths        int    `json:"paths"`
	StepsPerYear int    `json:"steps_per_year"`
	Seed         uint64 `json:"seed"` // design i (from 0) used Seed+i
}

// EndingCategory names one way an award ends.
type EndingCategory struct {
	Key   string `json:"key"`
	Label string `json:"label"`
}

// DesignResult is one design's column of the comparison.
type DesignResult struct {
	Design                   string  `json:"design"`
	Instrument               string  `json:"instrument"`
	Shares                   int64   `json:"shares"`
	Strike                   float64 `json:"strike"` // 0 for an RSU
	StrikePremium            float64 `json:"strike_premium"`
	ExpiryDate               Date    `json:"expiry_date"` // null for an RSU
	TermYears                float64 `json:"term_years"`  // to expiry; an RSU's to its last vest date
	VestMonths               int     `json:"vest_months"`
	CliffMonths              int     `json:"cliff_months"`
	VestEveryMonths          int     `json:"vest_every_months"`
	Tranches                 int     `json:"tranches"`
	Volatility               float64 `json:"volatility"`
	DividendYield            float64 `json:"dividend_yield"`
	RiskFreeRate             float64 `json:"risk_free_rate"` // continuous zero rate to the term
	ExerciseMultiple         float64 `json:"exercise_multiple"`
	PostVestingExitRate      float64 `json:"post_vesting_exit_rate"`
	PreVestingForfeitureRate float64 `json:"pre_vesting_forfeiture_rate"`
	DilutionFactor           float64 `json:"dilution_factor"`

	FairValuePerShare     float64 `json:"fair_value_per_share"`
	FairValueTotal        float64 `json:"fair_value_total"`
	ErrorEstimate         float64 `json:"error_estimate"` // per share
	ExpectedCostTotal     float64 `json:"expected_cost_total"`
	ExpectedTermYears     float64 `json:"expected_term_years"`
	BSMSimplifiedValue    float64 `json:"bsm_simplified_value"` // per share
	ProbabilityInTheMoney float64 `json:"probability_in_the_money"`
	BreakEvenSharePrice   float64 `json:"break_even_share_price"`

	Payoff        []PayoffPercentile `json:"payoff_percentiles"`
	SimulatedMean float64            `json:"simulated_value_per_share"`
	SimulatedSE   float64            `json:"simulated_standard_error"`
	Endings       []float64          `json:"endings"`      // probability of each of CompareModel.Endings
	EndByYear     []float64          `json:"end_by_year"`  // probability of ending in year i+1 after the grant
	EndByMonth    []float64          `json:"end_by_month"` // the same by month
	Note          string             `json:"note,omitempty"`

	VolShifts     []VolatilityPoint `json:"volatility_sensitivity"`
	Check         *DesignCheck      `json:"monte_carlo_check"`
	ExpenseByYear []YearExpense     `json:"expense_by_year"`
	Tranche       []DesignTranche   `json:"tranche_values"`
}

// PayoffPercentile is one percentile of the award's payoff in today's money
// (risk-neutral).
type PayoffPercentile struct {
	Percentile float64 `json:"percentile"` // e.g. 0.9
	PerShare   float64 `json:"per_share"`
	Total      float64 `json:"total"`
}

// VolatilityPoint is the total fair value with volatility moved.
type VolatilityPoint struct {
	ShiftPoints    float64 `json:"shift_points"`
	FairValueTotal float64 `json:"fair_value_total"`
}

// DesignCheck is the Monte Carlo cross-check of one tranche.
type DesignCheck struct {
	Tranche      int     `json:"tranche"`
	Lattice      float64 `json:"lattice"`
	LatticeError float64 `json:"lattice_error"`
	MonteCarlo   float64 `json:"monte_carlo"`
	StdErr       float64 `json:"standard_error"`
	Paths        int     `json:"paths"`
	Z            float64 `json:"z"`
}

// FiscalYear is one fiscal year: its label (the calendar year in which it
// ends), first and last day.
type FiscalYear struct {
	Year  int  `json:"year"`
	Start Date `json:"start"`
	End   Date `json:"end"`
}

// YearExpense is the expected expense of one fiscal year.
type YearExpense struct {
	Year   int     `json:"year"`
	Start  Date    `json:"start"`
	End    Date    `json:"end"`
	Amount float64 `json:"amount"`
}

// DesignTranche is one vesting tranche of a design.
type DesignTranche struct {
	Index              int     `json:"index"`
	VestDate           Date    `json:"vest_date"`
	Shares             int64   `json:"shares"`
	FairValuePerShare  float64 `json:"fair_value_per_share"`
	ErrorEstimate      float64 `json:"error_estimate"`
	ExpectedTermYears  float64 `json:"expected_term_years"`
	ExpectedCost       float64 `json:"expected_cost_per_share"`
	SurvivalToVest     float64 `json:"share_expected_to_vest"`
	FairValueTotal     float64 `json:"fair_value_total"`
	ExpectedCostTotal  float64 `json:"expected_cost_total"`
	YearsToVest        float64 `json:"years_to_vest"`
	BSMSimplifiedValue float64 `json:"bsm_simplified_value"`
}

// CompareSchemaVersion is the version of the --json object's layout.
const CompareSchemaVersion = 1

// ComparePercentiles are the payoff percentiles the outputs report; the
// comparison table shows the 10th, 50th and 90th (design.Percentiles).
var ComparePercentiles = []float64{0.05, 0.10, 0.25, 0.50, 0.75, 0.90, 0.95}

var endingCategories = []EndingCategory{
	{"exercised_at_multiple", "Exercised when the share reached the exercise multiple"},
	{"exercised_on_leaving", "Exercised when the holder left"},
	{"lapsed_on_leaving", "Lapsed when the holder left (out of the money)"},
	{"exercised_at_expiry", "Exercised at expiry (an RSU: delivered at vesting)"},
	{"lapsed_at_expiry", "Lapsed at expiry (out of the money)"},
}

// BuildComparison lays c into a CompareModel with the run's settings (the
// tool, the input and its hash, the warnings of the workbook and the
// simulation options used). It values nothing.
func BuildComparison(c *design.Comparison, run Run, steps int, sim valuation.OutcomeOptions) *CompareModel {
	m := &CompareModel{
		Tool: run.Tool, Input: run.Input, SchemaVersion: CompareSchemaVersion,
		Company: c.Company, Currency: c.Currency, GrantDate: DateOf(c.GrantDate),
		SharePrice: c.SharePrice.Value, SharePriceSource: c.SharePrice.Text,
		Attribution: string(c.Policy.Attribution), Steps: "auto",
		Simulation: SimulationInfo{Paths: sim.Paths, StepsPerYear: sim.StepsPerYear, Seed: sim.Seed},
		Warnings:   append(append([]string{}, run.Warnings...), c.Warnings...),
		Caution:    Caution, Percentiles: ComparePercentiles, Endings: endingCategories,
	}
	if steps > 0 {
		m.Steps = fmt.Sprintf("%d (raw lattice)", steps)
	}
	m.FiscalYearEnd = c.Calendar.Year(c.GrantDate).End.Format("01-02")
	seen := map[int]bool{}
	for i := range c.Designs {
		d := designResult(&c.Designs[i])
		m.Designs = append(m.Designs, d)
		for _, y := range d.ExpenseByYear {
			if !seen[y.Year] {
				seen[y.Year] = true
				m.Years = append(m.Years, FiscalYear{Year: y.Year, Start: y.Start, End: y.End})
			}
		}
	}
	sort.Slice(m.Years, func(i, j int) bool { return m.Years[i].Year < m.Years[j].Year })
	m.Notes = compareNotes(m, c)
	return m
}

func designResult(r *design.Result) DesignResult {
	in, g := r.Inputs, r.Grant
	out := DesignResult{
		Design: r.Design.Name, Instrument: string(g.Instrument), Shares: g.Shares, Strike: g.Strike,
		ExpiryDate: DateOf(g.ExpiryDate), TermYears: r.HorizonYears,
		VestMonths: g.VestMonths, CliffMonths: g.CliffMonths, VestEveryMonths: g.VestEvery, Tranches: len(in.Tranches),
		Volatility: in.Volatility.Value, DividendYield: in.DividendYield.Value, RiskFreeRate: in.RiskFreeRate.Value,
		ExerciseMultiple: in.ExerciseMultiple.Value, PostVestingExitRate: in.ExitRate.Value,
		PreVestingForfeitureRate: r.ForfeitureRate, DilutionFactor: r.DilutionFactor,
		FairValuePerShare: r.FairValuePerShare, FairValueTotal: r.FairValueTotal, ErrorEstimate: r.ErrorEstimate,
		ExpectedCostTotal: r.ExpectedCostTotal, ExpectedTermYears: r.ExpectedTermYears, BSMSimplifiedValue: r.BSMSimplified,
		ProbabilityInTheMoney: r.Outcomes.InTheMoney, BreakEvenSharePrice: r.BreakEven,
		SimulatedMean: r.Outcomes.Mean, SimulatedSE: r.Outcomes.StdErr, EndByYear: r.Outcomes.EndYears, EndByMonth: r.Outcomes.EndMonths,
		Note: r.OutcomeNote,
	}
	if g.Instrument != grants.RSU && in.SharePrice.Value > 0 {
		out.StrikePremium = g.Strike/in.SharePrice.Value - 1
	}
	n := float64(g.Shares)
	for _, p := range ComparePercentiles {
		q := r.Outcomes.Quantile(p)
		out.Payoff = append(out.Payoff, PayoffPercentile{Percentile: p, PerShare: q, Total: q * n})
	}
	for k := range endingCategories {
		out.Endings = append(out.Endings, r.Outcomes.Endings[k])
	}
	for _, p := range r.Volatility {
		out.VolShifts = append(out.VolShifts, VolatilityPoint{ShiftPoints: p.Shift, FairValueTotal: p.FairValueTotal})
	}
	if c := r.Check; c != nil {
		out.Check = &DesignCheck{Tranche: c.TrancheIndex, Lattice: c.Lattice, LatticeError: c.LatticeError,
			MonteCarlo: c.Result.Value, StdErr: c.Result.ErrorEstimate, Paths: c.Result.Steps, Z: c.Z}
	}
	for _, y := range r.ExpenseByYear {
		out.ExpenseByYear = append(out.ExpenseByYear, YearExpense{Year: y.Year, Start: DateOf(y.Start), End: DateOf(y.End), Amount: y.Amount})
	}
	for k, t := range in.Tranches {
		res, n := r.Tranches[k], float64(t.Shares)
		out.Tranche = append(out.Tranche, DesignTranche{
			Index: t.Index, VestDate: DateOf(t.VestDate), Shares: t.Shares, YearsToVest: in.Terms[k].YearsToVest,
			FairValuePerShare: res.Value, ErrorEstimate: res.ErrorEstimate, ExpectedTermYears: res.ExpectedTermYears,
			SurvivalToVest: res.SurvivalToVest, ExpectedCost: res.ExpectedCost,
			FairValueTotal: res.Value * n, ExpectedCostTotal: res.ExpectedCost * n, BSMSimplifiedValue: res.BSMSimplified,
		})
	}
	return out
}

// compareNotes say in words how to read the figures.
func compareNotes(m *CompareModel, c *design.Comparison) []string {
	var rates []string
	seen := map[float64]bool{}
	for _, d := range m.Designs {
		if !seen[d.PreVestingForfeitureRate] {
			seen[d.PreVestingForfeitureRate] = true
			rates = append(rates, pct0(d.PreVestingForfeitureRate))
		}
	}
	notes := []string{
		"Fair value is the grant-date value the accounts record under ASC 718 and IFRS 2: the award valued on a lattice with vesting, early exercise at the exercise multiple and exits of vested holders. It leaves out holders who leave before vesting.",
		fmt.Sprintf("Expected cost is the fair value of the shares expected to vest when %s of unvested holders leave each year: the cost the company expects to recognize. It is a planning figure, not a fair value. Expense by year spreads it by the %s method over the service to each vest date.", strings.Join(rates, " or "), m.Attribution),
		"Probability in the money, the payoff percentiles and the ways of ending are risk-neutral: they are the odds that price the award, not a forecast of the share. A share's risk-neutral growth is only the risk-free rate, so an option's median payoff can be nothing while a minority of good outcomes carries its value.",
		"The break-even share price is the price at expiry (an RSU: at its last vesting) at which the award pays its fair value grown at the risk-free rate: what the holder would have had by taking the fair value in cash and investing it.",
	}
	if c.Policy.Forfeitures == grants.AsOccur {
		notes = append(notes, "The company accounts for forfeitures as they occur: it books the full cost as service is rendered and reverses it when a holder leaves. The expected total is the expected cost shown; the timing is earlier than the expense by year shown.")
	}
	return notes
}

// vestEvery is how often a design vests after its cliff.
func vestEvery(d DesignResult) string {
	if d.VestMonths == 0 {
		return "at grant"
	}
	return map[int]string{1: "monthly", 3: "quarterly", 12: "yearly"}[d.VestEveryMonths]
}

// cliffText is a design's cliff in months, or "none".
func cliffText(d DesignResult) string {
	if d.CliffMonths == 0 {
		return "none"
	}
	return fmt.Sprint(d.CliffMonths)
}

// volatilityAt is the total fair value at a volatility shift, if made.
func (d DesignResult) volatilityAt(shift float64) (float64, bool) {
	for _, p := range d.VolShifts {
		if p.ShiftPoints == shift {
			return p.FairValueTotal, true
		}
	}
	return 0, false
}

// expenseIn is the design's expected expense in fiscal year y (0 outside
// its years).
func (d DesignResult) expenseIn(y int) float64 {
	for _, e := range d.ExpenseByYear {
		if e.Year == y {
			return e.Amount
		}
	}
	return 0
}

// payoffAt is the payoff percentile p, if reported.
func (d DesignResult) payoffAt(p float64) PayoffPercentile {
	for _, q := range d.Payoff {
		if q.Percentile == p {
			return q
		}
	}
	return PayoffPercentile{Percentile: p}
}

// compareDate formats a date for the reports' prose: "15 October 2026".
func compareDate(d Date) string { return d.Time().Format("2 January 2006") }
