package report

// Memo sections of the vesting conditions: one per kind, each left out of
// a memo without that kind.

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"grantworth/grants"
)

func init() {
	memoHooks = append(memoHooks,
		MemoHook{"performance", "Performance conditions", (*Memo).performance},
		MemoHook{"hurdles", "Price hurdles", (*Memo).hurdles},
		MemoHook{"tsr", "Relative total shareholder return", (*Memo).tsr})
	memoSkips["performance"] = func(m *Model) bool { return !m.hasKind(grants.Performance) }
	memoSkips["hurdles"] = func(m *Model) bool { return !m.hasKind(grants.PriceHurdle) }
	memoSkips["tsr"] = func(m *Model) bool { return !m.hasKind(grants.RelativeTSR) }
}

// maxConditionCharts bounds the charts of one section; the workbook has
// every grant's figures.
const maxConditionCharts = 6

// expenseOf is grant id's row of the expense attribution, or nil.
func (m *Model) expenseOf(id string) *ExpenseGrant {
	if e := detail(m); e != nil {
		for i := range e.ByGrant {
			if e.ByGrant[i].GrantID == id {
				return &e.ByGrant[i]
			}
		}
	}
	return nil
}

func (d *Memo) performance(m *Model) error {
	if err := d.Text("performance", d.data()); err != nil {
		return err
	}
	cur := m.Company.Currency
	for _, c := range m.Conditions {
		if c.Performance == nil {
			continue
		}
		pt := c.Performance
		d.Sub(fmt.Sprintf("Condition %s%s", c.ID, titled(c.Description)))
		d.Table([]Col{{"Term", 60, false}, {"Value", 110, false}}, [][]string{
			{"Measured on", pt.MeasurementDate.String()},
			{"Payout at threshold, target, maximum", fmt.Sprintf("%s, %s, %s of the target units", pct(pt.ThresholdPayout), pct(pt.TargetPayout), pct(pt.MaximumPayout))},
			{"Counted at the period end", fmt.Sprintf("%s of target (%s)", pct(pt.OutcomeAtPeriodEnd), map[bool]string{true: "probable", false: "not probable"}[pt.ProbableAtPeriodEnd])},
			{"Defined at", c.Ref},
		})
		if len(pt.Assessments) > 0 {
			rows := make([][]string, 0, len(pt.Assessments))
			var labels []string
			var vals []float64
			for _, a := range pt.Assessments {
				exp := "target"
				if a.ExpectedPayout != nil {
					exp = pct(*a.ExpectedPayout)
				}
				rows = append(rows, []string{a.Date.String(), map[bool]string{true: "yes", false: "no"}[a.Probable], exp, pct(a.Counted), a.Note, a.Ref})
				labels = append(labels, a.Date.String())
				vals = append(vals, a.Counted)
			}
			d.Table([]Col{{"Assessed", 20, false}, {"Probable", 17, false}, {"Expected", 17, true}, {"Counted", 17, true}, {"Note", 73, false}, {"Cell", 26, false}}, rows)
			if err := d.Chart(func(w, h vg.Length) ([]byte, error) {
				return ShareBarsPNG("Share of target units the expense counts, from each assessment", labels, vals, "of target", w, h)
			}, textW, 55); err != nil {
				return err
			}
		}
		rows := [][]string{}
		for _, g := range m.conditionGrants(c.ID) {
			row := []string{g.ID, count(g.Shares), perShare(g.FairValuePerShare)}
			if e := m.expenseOf(g.ID); e != nil {
				row = append(row, groupDigits(e.Cost, 2), groupDigits(e.Amount, 2), groupDigits(e.Cumulative, 2))
			} else {
				row = append(row, "–", "–", "–")
			}
			rows = append(rows, row)
		}
		d.Table([]Col{{"Grant", 22, false}, {"Target units", 22, true}, {"Value per unit (" + cur + ")", 28, true}, {"Cost expected", 34, true}, {"This period", 30, true}, {"Cumulative", 34, true}}, rows)
	}
	d.Note("The cost expected is at the outcome counted at the period end and the forfeiture estimate. Every grant's tranches are on the Expense sheet of valuation.xlsx, the assessments on its Conditions sheet.")
	return nil
}

func titled(desc string) string {
	if desc == "" {
		return ""
	}
	return ": " + desc
}

func (d *Memo) hurdles(m *Model) error {
	if err := d.Text("hurdles", d.data()); err != nil {
		return err
	}
	cur := m.Company.Currency
	charts := 0
	for _, c := range m.Conditions {
		h := c.Hurdle
		if h == nil {
			continue
		}
		what := "closing price"
		if h.AverageDays > 1 {
			what = fmt.Sprintf("average of the last %d closing prices", h.AverageDays)
		}
		if h.Monitoring == "continuous" {
			what = "price, watched continuously"
		}
		for _, g := range m.conditionGrants(c.ID) {
			gc := g.Condition
			d.Sub(fmt.Sprintf("Grant %s: %s at or above %s by %s", g.ID, what, money(h.Price, cur), gc.Deadline))
			met := "not yet"
			if !h.MetDate.IsZero() {
				met = h.MetDate.String()
			}
			d.Table([]Col{{"Term", 60, false}, {"Value", 110, false}}, [][]string{
				{"Condition", c.ID + titled(c.Description) + " (" + c.Ref + ")"},
				{"Instrument and shares", fmt.Sprintf("%s, %s", g.Instrument, count(g.Shares))},
				{"Share price at measurement", money(g.SharePrice, cur)},
				{"Method", hurdleMethod(gc)},
				{"Probability of meeting it by the deadline", pct(gc.HitProbability)},
				{"Median time to meet it, when met", fixed(gc.MedianHitYears, 2) + " years"},
				{"Met on", met},
			})
			rows := make([][]string, 0, len(gc.Tranches))
			for i, t := range gc.Tranches {
				check, z := "–", "–"
				if gc.Method == "lattice" {
					check, z = perShare(t.Check)+" ± "+fixed(t.CheckStdErr, 4), fixed(t.Z, 2)
				}
				rows = append(rows, []string{fmt.Sprint(t.Index), g.Tranches[i].VestDate.String(), perShare(t.Value) + " ± " + fixed(t.Error, 4),
					check, z, perShare(t.PlainValue), fixed(t.DerivedServiceYears, 2), t.ServiceEnd.String()})
			}
			d.Table([]Col{{"Tranche", 15, true}, {"Vest date", 20, false}, {"Fair value (" + cur + ")", 28, true}, {"Simulation", 28, true}, {"z", 13, true},
				{"No hurdle", 20, true}, {"Derived years", 20, true}, {"Service end", 22, false}}, rows)
			if charts < maxConditionCharts && len(gc.HitByMonth) > 0 {
				charts++
				labels := make([]string, len(gc.HitByMonth))
				for i := range labels {
					labels[i] = fmt.Sprint(i + 1)
				}
				if err := d.Chart(func(w, h vg.Length) ([]byte, error) {
					return ShareBarsPNG(fmt.Sprintf("When the hurdle is first met: probability by month after measurement (%s in all)", pct(gc.HitProbability)), labels, gc.HitByMonth, "probability", w, h)
				}, textW, 58); err != nil {
					return err
				}
			}
		}
	}
	d.Note("\"No hurdle\" is the same award valued without its hurdle: what the hurdle takes from the fair value. Every hurdle grant's figures and its hitting-time distribution are on the Conditions sheet of valuation.xlsx.")
	return nil
}

func hurdleMethod(gc *GrantCondition) string {
	if gc.Method == "lattice" {
		return fmt.Sprintf("hurdle lattice; simulation of %s paths beside it (seed %d)", count(gc.Paths), gc.Seed)
	}
	return fmt.Sprintf("simulation, %s paths (seed %d): an average of closing prices is path-dependent", count(gc.Paths), gc.Seed)
}

func (d *Memo) tsr(m *Model) error {
	if err := d.Text("tsr", d.data()); err != nil {
		return err
	}
	cur := m.Company.Currency
	charts := 0
	for _, c := range m.Conditions {
		tt := c.TSR
		if tt == nil {
			continue
		}
		d.Sub(fmt.Sprintf("Condition %s%s: %s to %s", c.ID, titled(c.Description), tt.PeriodStart, tt.PeriodEnd))
		cap := "none"
		if tt.NegativeCap != nil {
			cap = pct(*tt.NegativeCap) + " of target when the company's own TSR is negative"
		}
		var curve []string
		for _, p := range tt.Payout {
			curve = append(curve, fmt.Sprintf("%s → %s", pct(p.Percentile), pct(p.Payout)))
		}
		d.Table([]Col{{"Term", 50, false}, {"Value", 120, false}}, [][]string{
			{"Payout curve (percentile rank → payout)", strings.Join(curve, "; ") + "; linear between, nothing below the first, the last above it"},
			{"Payout cap", cap},
			{"Peers", count(len(tt.Peers)) + ": " + strings.Join(tt.Peers, ", ")},
			{"Defined at", c.Ref},
		})
		for _, g := range m.conditionGrants(c.ID) {
			gt := g.Condition.TSR
			if gt == nil {
				continue
			}
			d.Sub(fmt.Sprintf("Grant %s: %s target units", g.ID, count(g.Shares)))
			rows := make([][]string, 0, len(gt.Companies))
			for i, co := range gt.Companies {
				name := co.Name
				if i == 0 {
					name = "the company"
				}
				rows = append(rows, []string{name, co.File + " (" + co.PriceColumn + ")", pct(co.Volatility), count(co.Returns), signedPct(co.TSRToDate)})
			}
			d.Table([]Col{{"Company", 32, false}, {"Prices", 62, false}, {"Volatility", 22, true}, {"Returns", 20, true}, {"TSR to date", 24, true}}, rows)
			d.Para(fmt.Sprintf("Volatilities and correlations over the %s years to %s (from %s), %s daily returns on dates every file has. Correlation of the company with its peers: %s to %s, mean %s; among the peers: %s to %s, mean %s. The full matrix is on the TSR peers sheet of valuation.xlsx.",
				fixed(gt.LookbackYears, 2), gt.AsOf, gt.WindowStart, count(gt.Returns),
				fixed(gt.CompanyCorrelation.Min, 2), fixed(gt.CompanyCorrelation.Max, 2), fixed(gt.CompanyCorrelation.Mean, 2),
				fixed(gt.PeerCorrelation.Min, 2), fixed(gt.PeerCorrelation.Max, 2), fixed(gt.PeerCorrelation.Mean, 2)))
			vrows := [][]string{
				{"Value per target unit at the end of the period (" + cur + ")", perShare(gt.AtEnd) + " ± " + fixed(gt.AtEndStdErr, 4) + " (standard error)"},
				{"Expected payout", pct(gt.MeanPayout) + " of target ± " + pct(gt.MeanPayoutStdErr)},
				{"Probability of no payout", pct(gt.ZeroPayout)},
				{"Probability the negative-TSR cap binds", pct(gt.Capped)},
				{"Paths and seed", fmt.Sprintf("%s (seed %d)", count(g.Condition.Paths), g.Condition.Seed)},
			}
			for _, t := range g.Condition.Tranches {
				vrows = append(vrows, []string{fmt.Sprintf("Tranche %d, service to %s (%s)", t.Index, t.ServiceEnd, cur), perShare(t.Value) + " ± " + fixed(t.Error, 4)})
			}
			d.Table([]Col{{"Result", 80, false}, {"Value", 90, false}}, vrows)
			if charts < maxConditionCharts {
				charts++
				labels := make([]string, len(gt.PayoutBins))
				for i := range labels {
					labels[i] = fmt.Sprintf("%.0f", 100*float64(i)*gt.PayoutBinWidth)
				}
				if err := d.Chart(func(w, h vg.Length) ([]byte, error) {
					return ShareBarsPNG(fmt.Sprintf("Payout distribution: probability of each payout, %% of target (%s expected)", pct(gt.MeanPayout)), labels, gt.PayoutBins, "probability", w, h)
				}, textW, 58); err != nil {
					return err
				}
			}
		}
	}
	return nil
}

// ShareBarsPNG is a bar chart of shares (probabilities, payouts) by label,
// the axis in per cent from zero to the tallest bar with room above it.
func ShareBarsPNG(title string, labels []string, values []float64, ylabel string, w, h vg.Length) ([]byte, error) {
	p := basePlot(title, "", ylabel+" (%)")
	pc := make(plotter.Values, len(values))
	for i, v := range values {
		pc[i] = 100 * v
	}
	width := vg.Points(14)
	if n := len(values); n > 0 {
		width = vg.Length(math.Min(14, math.Max(2, float64(w.Points())*0.6/float64(n))))
	}
	bars, err := plotter.NewBarChart(pc, width)
	if err != nil {
		return nil, err
	}
	bars.Color, bars.LineStyle.Width = inkData, 0
	p.Add(bars)
	p.NominalX(thinLabels(labels, 24)...)
	if len(labels) > 12 {
		p.X.Tick.Label.Rotation = math.Pi / 4
		p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XRight, draw.YCenter
	}
	p.Y.Min, p.Y.Max = barRange(pc)
	p.Y.Tick.Marker = percentTicks{}
	return pngOf(p, w, h)
}

// thinLabels blanks labels so that at most n show.
func thinLabels(labels []string, n int) []string {
	if len(labels) <= n {
		return labels
	}
	step := (len(labels) + n - 1) / n
	out := make([]string, len(labels))
	for i, l := range labels {
		if i%step == 0 {
			out[i] = l
		}
	}
	return out
}

// percentTicks labels a per-cent axis with one decimal below 10.
type percentTicks struct{}

func (percentTicks) Ticks(min, max float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(min, max)
	for i := range ts {
		if ts[i].Label != "" {
			dec := 0
			if max < 10 {
				dec = 1
			}
			ts[i].Label = groupDigits(ts[i].Value, dec)
		}
	}
	return ts
}
