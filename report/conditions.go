package report

// The vesting conditions beyond service: what the Model says of each
// condition and of each grant that carries one (valuation.json's
// conditions and grants[].condition), laid out from the schedule, the
// pricing's ConditionValue and the books' Conditioned.

import (
	"slices"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// VestingCondition is one condition of the Conditions sheet that a grant
// valued carries.
type VestingCondition struct {
	ID          string   `json:"condition_id"`
	Kind        string   `json:"kind"` // performance | price-hurdle | relative-tsr
	Description string   `json:"description"`
	Ref         string   `json:"ref"`
	Grants      []string `json:"grant_ids"`
	// Rule is the accounting rule applied, in words, with the paragraphs.
	Rule        string            `json:"accounting_rule"`
	Performance *PerformanceTerms `json:"performance,omitempty"`
	Hurdle      *HurdleTerms      `json:"hurdle,omitempty"`
	TSR         *TSRTerms         `json:"relative_tsr,omitempty"`
}

// PerformanceTerms are a performance condition's payouts and assessments.
type PerformanceTerms struct {
	MeasurementDate Date    `json:"measurement_date"`
	ThresholdPayout float64 `json:"threshold_payout"`
	TargetPayout    float64 `json:"target_payout"`
	MaximumPayout   float64 `json:"maximum_payout"`
	// Assessments are dated on or before the valuation date; Counted is
	// the share of target each makes the expense follow.
	Assessments []AssessmentRow `json:"assessments"`
	// OutcomeAtPeriodEnd is the share of target counted at the period end
	// and ProbableAtPeriodEnd whether the condition is probable then.
	OutcomeAtPeriodEnd  float64 `json:"outcome_at_period_end"`
	ProbableAtPeriodEnd bool    `json:"probable_at_period_end"`
}

// AssessmentRow is one assessment of a performance condition.
type AssessmentRow struct {
	Date           Date     `json:"date"`
	Probable       bool     `json:"probable"`
	ExpectedPayout *float64 `json:"expected_payout"` // as given; null: the target payout
	Counted        float64  `json:"counted"`
	Note           string   `json:"note"`
	Ref            string   `json:"ref"`
}

// HurdleTerms are a price hurdle's terms.
type HurdleTerms struct {
	Price       float64 `json:"price"`
	AverageDays int     `json:"average_days"` // 1: the closing price
	Monitoring  string  `json:"monitoring"`   // daily | continuous
	Deadline    Date    `json:"deadline"`     // null: each option's expiry
	MetDate     Date    `json:"met_date"`     // null until met
}

// TSRTerms are a relative TSR condition's terms.
type TSRTerms struct {
	PeriodStart Date          `json:"performance_start"`
	PeriodEnd   Date          `json:"performance_end"`
	OwnPrices   string        `json:"own_prices"`
	NegativeCap *float64      `json:"negative_tsr_cap"` // null: none
	Payout      []PayoutPoint `json:"payout_curve"`
	Peers       []string      `json:"peers"`
}

// PayoutPoint is one point of a payout curve.
type PayoutPoint struct {
	Percentile float64 `json:"percentile"`
	Payout     float64 `json:"payout"`
}

// GrantCondition is how a grant's condition entered its valuation and
// its expense (valuation.json's grants[].condition).
type GrantCondition struct {
	ConditionID string `json:"condition_id"`
	Kind        string `json:"kind"`
	// Method is "service award" (a performance condition stays out of the
	// fair value), "lattice" (a closing-price hurdle, simulation beside
	// it) or "simulation" (an average-price hurdle, relative TSR).
	Method   string             `json:"method"`
	Seed     uint64             `json:"seed,omitempty"`
	Paths    int                `json:"paths,omitempty"`
	Tranches []ConditionTranche `json:"tranches"`

	// A price hurdle: the probability of meeting it by the deadline, the
	// median time to meet it on the paths that do, and the hitting-time
	// distribution by month.
	Deadline       Date      `json:"deadline"`
	HitProbability float64   `json:"hit_probability,omitempty"`
	MedianHitYears float64   `json:"median_hit_years,omitempty"`
	HitByMonth     []float64 `json:"hit_probability_by_month,omitempty"`

	TSR *GrantTSR `json:"relative_tsr,omitempty"`
}

// ConditionTranche is one tranche under its condition.
type ConditionTranche struct {
	Index int     `json:"index"`
	Value float64 `json:"fair_value_per_share"`
	// Error is the lattice's error estimate, or the simulation's standard
	// error when the value is simulated.
	Error float64 `json:"error_estimate"`
	// Check is a hurdle lattice's simulation beside it (value, standard
	// error, z); 0 otherwise.
	Check       float64 `json:"check_value,omitempty"`
	CheckStdErr float64 `json:"check_standard_error,omitempty"`
	Z           float64 `json:"z,omitempty"`
	// PlainValue is a hurdle award's value without the hurdle.
	PlainValue float64 `json:"plain_value,omitempty"`
	// DerivedServiceYears is a market condition's derived service period
	// from the measurement date, and ServiceEnd the end of the requisite
	// service the expense runs to (the vest date without a condition).
	DerivedServiceYears float64 `json:"derived_service_years,omitempty"`
	ServiceEnd          Date    `json:"service_end"`
}

// GrantTSR is a relative TSR grant's simulation: its inputs estimated from
// the price files and what the simulation found.
type GrantTSR struct {
	AsOf          Date         `json:"as_of"`
	WindowStart   Date         `json:"window_start"`
	LookbackYears float64      `json:"lookback_years"`
	Returns       int          `json:"common_returns"`
	Companies     []TSRCompany `json:"companies"` // the company first
	Correlation   [][]float64  `json:"correlation"`
	// The correlations of the company with its peers, and among the
	// peers: least, mean and largest.
	CompanyCorrelation CorrelationSummary `json:"company_correlation"`
	PeerCorrelation    CorrelationSummary `json:"peer_correlation"`

	AtEnd            float64   `json:"value_at_end"` // per target unit delivered at the end
	AtEndStdErr      float64   `json:"value_at_end_standard_error"`
	MeanPayout       float64   `json:"expected_payout"`
	MeanPayoutStdErr float64   `json:"expected_payout_standard_error"`
	ZeroPayout       float64   `json:"probability_of_no_payout"`
	Capped           float64   `json:"probability_capped"`
	PayoutBinWidth   float64   `json:"payout_bin_width"`
	PayoutBins       []float64 `json:"payout_distribution"`
	RankDeciles      []float64 `json:"rank_distribution"`
}

// TSRCompany is the company or a peer in a TSR grant's simulation.
type TSRCompany struct {
	Name        string  `json:"name"`
	File        string  `json:"file"`
	Ref         string  `json:"ref"`
	PriceColumn string  `json:"price_column"`
	Volatility  float64 `json:"volatility"`
	Returns     int     `json:"returns"`
	First       Date    `json:"first_date"`
	Last        Date    `json:"last_date"`
	StartDate   Date    `json:"start_date"`
	StartPrice  float64 `json:"start_price"`
	NowPrice    float64 `json:"price_at_measurement"`
	TSRToDate   float64 `json:"tsr_to_date"`
}

// CorrelationSummary is the least, mean and largest of a set of
// correlations.
type CorrelationSummary struct {
	Min  float64 `json:"min"`
	Mean float64 `json:"mean"`
	Max  float64 `json:"max"`
}

// Accounting rules, in words, for the memo and the workbook.
const (
	rulePerformance = "A performance condition is not in the fair value per unit (ASC 718-10-30-27, IFRS 2.19): each unit is valued as a service award. Expense follows the probable outcome (ASC 718-10-25-20, IFRS 2.20): the expected payout while the condition is probable, nothing while it is not. Every change of assessment is trued up at once, cumulatively, in the period it is made, and a condition that becomes improbable reverses the expense recognized on it."
	ruleHurdle      = "A price hurdle is a market condition, in the fair value (ASC 718-10-30-14, IFRS 2.21). Expense runs over the requisite service: to the later of each tranche's vest date and the derived service period, the median time to vest on the simulated paths on which it vests (ASC 718-10-55-71), estimated at grant and not revised (IFRS 2.15(b)). It is not reversed if the hurdle is not met, only if the holder leaves before the service is rendered; if the hurdle is met first, the rest of each tranche's cost is recognized by the later of that day and its vest date."
	ruleTSR         = "Relative total shareholder return is a market condition, in the fair value per target unit (ASC 718-10-30-14, IFRS 2.21): the simulation of the peers' returns and the payout curve price the expected payout. Expense runs over the service to the later of the vest date and the end of the performance period, on the target units, and is neither trued up for the payout achieved nor reversed if nothing vests; only a holder leaving before the service is rendered reverses it."
)

// conditionsModel lays out the conditions of the grants v valued, in the
// order of the Conditions sheet; Build has filled each grant's Condition
// (grantCondition) as it laid the grant out.
func conditionsModel(m *Model, s *grants.Schedule, v *pricing.Valuation) {
	used := map[string][]string{}
	for i := range v.Grants {
		gv := &v.Grants[i]
		if ci := gv.Inputs.Condition; ci != nil {
			used[ci.Condition.ID] = append(used[ci.Condition.ID], gv.Inputs.Grant.ID)
		}
	}
	end := s.Company.ValuationDate
	for _, k := range s.Conditions {
		ids, ok := used[k.ID]
		if !ok {
			continue
		}
		vc := VestingCondition{ID: k.ID, Kind: string(k.Kind), Description: k.Description, Grants: ids,
			Ref: s.Cell(grants.SheetConditions, "condition_id", k.Row).String()}
		switch k.Kind {
		case grants.Performance:
			vc.Rule = rulePerformance
			pt := &PerformanceTerms{MeasurementDate: DateOf(k.MeasurementDate), ThresholdPayout: k.ThresholdPayout,
				TargetPayout: k.TargetPayout, MaximumPayout: k.MaximumPayout, Assessments: []AssessmentRow{}}
			pt.OutcomeAtPeriodEnd, pt.ProbableAtPeriodEnd = k.TargetPayout, true
			for _, a := range s.AssessmentsOf(k.ID) {
				if a.Date.After(end) {
					continue
				}
				counted, _ := s.Outcome(&k, a.Date)
				pt.Assessments = append(pt.Assessments, AssessmentRow{Date: DateOf(a.Date), Probable: a.Probable, ExpectedPayout: a.ExpectedPayout,
					Counted: counted, Note: a.Note, Ref: s.Cell(grants.SheetAssessments, "date", a.Row).String()})
				pt.OutcomeAtPeriodEnd, pt.ProbableAtPeriodEnd = counted, a.Probable
			}
			vc.Performance = pt
		case grants.PriceHurdle:
			vc.Rule = ruleHurdle
			vc.Hurdle = &HurdleTerms{Price: k.HurdlePrice, AverageDays: k.HurdleDays, Monitoring: k.Monitoring,
				Deadline: DateOf(k.HurdleDeadline), MetDate: DateOf(k.HurdleMet)}
		case grants.RelativeTSR:
			vc.Rule = ruleTSR
			t := &TSRTerms{PeriodStart: DateOf(k.PeriodStart), PeriodEnd: DateOf(k.PeriodEnd), OwnPrices: k.OwnPrices, NegativeCap: k.NegativeCap}
			for _, p := range s.PayoutOf(k.ID) {
				t.Payout = append(t.Payout, PayoutPoint{p.Percentile, p.Payout})
			}
			for _, p := range s.PeersOf(k.ID) {
				t.Peers = append(t.Peers, p.Name)
			}
			vc.TSR = t
		}
		m.Conditions = append(m.Conditions, vc)
	}
}

// grantCondition is how grant gv's condition entered its value and, with
// its books ge (nil when expense did not run), its expense.
func grantCondition(gv *pricing.GrantValue, ge *accounting.GrantExpense) *GrantCondition {
	ci := gv.Inputs.Condition
	gc := &GrantCondition{ConditionID: ci.Condition.ID, Kind: string(ci.Condition.Kind), Method: "service award"}
	c := gv.Condition
	if c != nil {
		gc.Method, gc.Seed = c.Method, c.Seed
	}
	if ci.Hurdle != nil {
		gc.Deadline = DateOf(ci.Deadline)
	}
	derived := gv.DerivedServiceYears()
	for k, t := range gv.Inputs.Tranches {
		r := gv.Results[k]
		ct := ConditionTranche{Index: t.Index, Value: r.Value, Error: r.ErrorEstimate, ServiceEnd: DateOf(t.VestDate)}
		if k < len(derived) {
			ct.DerivedServiceYears = derived[k]
		}
		if ge != nil && ge.Condition != nil && k < len(ge.Condition.ServiceEnd) {
			ct.ServiceEnd = DateOf(ge.Condition.ServiceEnd[k])
		}
		if c != nil {
			if k < len(c.Z) {
				ct.Check, ct.CheckStdErr, ct.Z = c.Sim.Tranches[k].Value, c.Sim.Tranches[k].ErrorEstimate, c.Z[k]
			}
			if k < len(c.Plain) {
				ct.PlainValue = c.Plain[k].Value
			}
		}
		gc.Tranches = append(gc.Tranches, ct)
	}
	if c == nil {
		return gc
	}
	if sim := c.Sim; sim != nil {
		gc.Paths = sim.Paths
		gc.HitProbability, gc.MedianHitYears, gc.HitByMonth = sim.HitProbability, sim.MedianHitYears, sim.HitMonths
	}
	if res := c.TSR; res != nil {
		gc.Paths = res.Paths
		gc.TSR = grantTSR(ci.TSR, res)
	}
	return gc
}

func grantTSR(in *grants.TSRInputs, res *valuation.TSRResult) *GrantTSR {
	t := &GrantTSR{AsOf: DateOf(in.AsOf), WindowStart: DateOf(in.WindowStart), LookbackYears: in.LookbackYears, Returns: in.Returns,
		Correlation: in.Award.Corr, AtEnd: res.AtEnd, AtEndStdErr: res.AtEndSE, MeanPayout: res.MeanPayout, MeanPayoutStdErr: res.MeanPayoutSE,
		ZeroPayout: res.ZeroPayout, Capped: res.Capped, PayoutBinWidth: valuation.PayoutBin, PayoutBins: res.PayoutBins, RankDeciles: res.RankDeciles[:]}
	for _, c := range append([]grants.TSRCompany{in.Company}, in.Peers...) {
		t.Companies = append(t.Companies, TSRCompany{Name: c.Name, File: c.File, Ref: c.Ref.String(), PriceColumn: c.Column,
			Volatility: c.Vol.Annual, Returns: c.Vol.Observations, First: DateOf(c.Vol.First), Last: DateOf(c.Vol.Last),
			StartDate: DateOf(c.StartDate), StartPrice: c.StartPrice, NowPrice: c.NowPrice, TSRToDate: c.ToDate - 1})
	}
	var withCo, among []float64
	for i, row := range in.Award.Corr {
		for j := i + 1; j < len(row); j++ {
			if i == 0 {
				withCo = append(withCo, row[j])
			} else {
				among = append(among, row[j])
			}
		}
	}
	t.CompanyCorrelation, t.PeerCorrelation = summarize(withCo), summarize(among)
	return t
}

func summarize(xs []float64) CorrelationSummary {
	if len(xs) == 0 {
		return CorrelationSummary{}
	}
	var s float64
	for _, x := range xs {
		s += x
	}
	return CorrelationSummary{Min: slices.Min(xs), Mean: s / float64(len(xs)), Max: slices.Max(xs)}
}

// hasKind reports whether m holds a condition of kind k.
func (m *Model) hasKind(k grants.ConditionKind) bool {
	return slices.ContainsFunc(m.Conditions, func(c VestingCondition) bool { return c.Kind == string(k) })
}

// conditionGrants are the grants of m under condition id, in ledger order.
func (m *Model) conditionGrants(id string) []*Grant {
	var out []*Grant
	for i := range m.Grants {
		if c := m.Grants[i].Condition; c != nil && c.ConditionID == id {
			out = append(out, &m.Grants[i])
		}
	}
	return out
}
