package report

// Workbook sheets of the vesting conditions, each left out of a workbook
// with nothing to show.

import (
	"fmt"
	"strings"

	"github.com/xuri/excelize/v2"

	"grantworth/grants"
)

// Sheet names added by this file.
const (
	SheetConditions      = "Conditions"
	SheetConditionValues = "Condition values"
	SheetAssessments     = "Assessments"
	SheetTSRPeers        = "TSR peers"
	SheetDistributions   = "Condition distributions"
)

func init() {
	sheetHooks = append(sheetHooks,
		SheetHook{SheetConditions, writeConditions},
		SheetHook{SheetConditionValues, writeConditionValues},
		SheetHook{SheetAssessments, writeAssessments},
		SheetHook{SheetTSRPeers, writeTSRPeers},
		SheetHook{SheetDistributions, writeDistributions})
	none := func(m *Model) bool { return len(m.Conditions) == 0 }
	sheetSkips[SheetConditions] = none
	sheetSkips[SheetConditionValues] = none
	sheetSkips[SheetAssessments] = func(m *Model) bool { return !m.hasKind(grants.Performance) }
	sheetSkips[SheetTSRPeers] = func(m *Model) bool { return !m.hasKind(grants.RelativeTSR) }
	sheetSkips[SheetDistributions] = func(m *Model) bool {
		return !m.hasKind(grants.PriceHurdle) && !m.hasKind(grants.RelativeTSR)
	}
}

// conditionTerms are a condition's terms in words.
func conditionTerms(c VestingCondition) string {
	switch {
	case c.Performance != nil:
		p := c.Performance
		return fmt.Sprintf("measured %s; payout %s at threshold, %s at target, %s at maximum", p.MeasurementDate, pct(p.ThresholdPayout), pct(p.TargetPayout), pct(p.MaximumPayout))
	case c.Hurdle != nil:
		h := c.Hurdle
		what := "closing price"
		if h.AverageDays > 1 {
			what = fmt.Sprintf("average of %d closing prices", h.AverageDays)
		}
		by := "each option's expiry"
		if !h.Deadline.IsZero() {
			by = h.Deadline.String()
		}
		s := fmt.Sprintf("%s at or above %s, watched %s, by %s", what, groupDigits(h.Price, 4), h.Monitoring, by)
		if !h.MetDate.IsZero() {
			s += "; met " + h.MetDate.String()
		}
		return s
	case c.TSR != nil:
		t := c.TSR
		var pts []string
		for _, p := range t.Payout {
			pts = append(pts, pct(p.Percentile)+" → "+pct(p.Payout))
		}
		s := fmt.Sprintf("%s to %s against %s; payout %s", t.PeriodStart, t.PeriodEnd, strings.Join(t.Peers, ", "), strings.Join(pts, ", "))
		if t.NegativeCap != nil {
			s += "; at most " + pct(*t.NegativeCap) + " when the company's TSR is negative"
		}
		return s
	}
	return ""
}

func writeConditions(b *Book, m *Model) error {
	t, err := b.NewTable(SheetConditions, []Column{{"Condition", 14}, {"Kind", 13}, {"Description", 30}, {"Cell", 14},
		{"Grants", 18}, {"Terms", 50}, {"Accounting rule", 90}}, len(m.Conditions))
	if err != nil {
		return err
	}
	// The rows are tall (the rule wraps): every cell wraps at the top, the
	// schedule's text in the text format as Book.Text writes it.
	input, err := b.f.NewStyle(&excelize.Style{NumFmt: 49, Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}})
	if err != nil {
		return err
	}
	in := func(x string) any { return b.Cell(input, x) }
	wrap := func(x string) any { return b.Cell(b.Style.Wrap, x) }
	for _, c := range m.Conditions {
		if err := t.TallRow(15*float64(1+len(c.Rule)/110), in(c.ID), wrap(c.Kind), in(c.Description), wrap(c.Ref),
			in(strings.Join(c.Grants, ", ")), wrap(conditionTerms(c)), wrap(c.Rule)); err != nil {
			return err
		}
	}
	return t.Close()
}

func writeConditionValues(b *Book, m *Model) error {
	rows := 0
	for _, g := range m.Grants {
		if g.Condition != nil {
			rows += len(g.Condition.Tranches)
		}
	}
	t, err := b.NewTable(SheetConditionValues, []Column{{"Grant", 12}, {"Condition", 12}, {"Kind", 13}, {"Method", 13}, {"Tranche", 8},
		{"Vest date", 12}, {"Service end", 12}, {b.Cur("Fair value per share"), 14}, {b.Cur("± error or s.e."), 14},
		{b.Cur("Simulation check"), 14}, {b.Cur("± its s.e."), 12}, {"z", 8}, {b.Cur("Without the hurdle"), 14}, {"Derived service years", 14},
		{"Hurdle met (probability)", 14}, {"Median years to meet", 14}, {"Expected payout", 12}, {"Paths", 11}, {"Seed", 10}}, rows)
	if err != nil {
		return err
	}
	opt := func(style int, v float64, ok bool) any {
		if !ok {
			return nil
		}
		return b.Cell(style, v)
	}
	return b.rows(t, func(t *Table) error {
		for _, g := range m.Grants {
			gc := g.Condition
			if gc == nil {
				continue
			}
			hurdle := gc.Kind == string(grants.PriceHurdle)
			payout, hasPayout := 0.0, gc.TSR != nil
			if hasPayout {
				payout = gc.TSR.MeanPayout
			}
			for i, ct := range gc.Tranches {
				checked := gc.Method == "lattice"
				if err := t.Row(b.Text(g.ID), b.Text(gc.ConditionID), gc.Kind, gc.Method, ct.Index, b.DateCell(g.Tranches[i].VestDate), b.DateCell(ct.ServiceEnd),
					b.Cell(b.Style.MoneyPerShare, ct.Value), b.Cell(b.Style.MoneyPerShare, ct.Error),
					opt(b.Style.MoneyPerShare, ct.Check, checked), opt(b.Style.MoneyPerShare, ct.CheckStdErr, checked), opt(b.Style.Number, ct.Z, checked),
					opt(b.Style.MoneyPerShare, ct.PlainValue, hurdle), opt(b.Style.Years, ct.DerivedServiceYears, ct.DerivedServiceYears > 0),
					opt(b.Style.Percent, gc.HitProbability, hurdle), opt(b.Style.Years, gc.MedianHitYears, hurdle), opt(b.Style.Percent, payout, hasPayout),
					opt(b.Style.Int, float64(gc.Paths), gc.Paths > 0), opt(b.Style.Int, float64(gc.Seed), gc.Seed > 0)); err != nil {
					return err
				}
			}
		}
		return nil
	})
}

func writeAssessments(b *Book, m *Model) error {
	rows := 0
	for _, c := range m.Conditions {
		if c.Performance != nil {
			rows += len(c.Performance.Assessments)
		}
	}
	t, err := b.NewTable(SheetAssessments, []Column{{"Condition", 14}, {"Assessed", 12}, {"Probable", 10}, {"Expected payout", 14},
		{"Counted", 12}, {"Note", 50}, {"Cell", 16}}, rows)
	if err != nil {
		return err
	}
	for _, c := range m.Conditions {
		if c.Performance == nil {
			continue
		}
		for _, a := range c.Performance.Assessments {
			var exp any = "target"
			if a.ExpectedPayout != nil {
				exp = b.Cell(b.Style.Percent, *a.ExpectedPayout)
			}
			if err := t.Row(b.Text(c.ID), b.DateCell(a.Date), map[bool]string{true: "yes", false: "no"}[a.Probable], exp,
				b.Cell(b.Style.Percent, a.Counted), b.Text(a.Note), a.Ref); err != nil {
				return err
			}
		}
	}
	return t.Close()
}

// writeTSRPeers lists, per relative TSR grant, the company and its peers
// with their estimates, and the correlation matrix beside them.
func writeTSRPeers(b *Book, m *Model) error {
	n, rows := 0, 0
	for _, g := range m.Grants {
		if g.Condition != nil && g.Condition.TSR != nil {
			n = max(n, len(g.Condition.TSR.Companies))
			rows += len(g.Condition.TSR.Companies)
		}
	}
	cols := []Column{{"Grant", 12}, {"Company", 16}, {"Price file", 28}, {"Cell", 12}, {"Price column", 13}, {"Volatility", 11},
		{"Daily returns", 10}, {"First price used", 12}, {"Last price used", 12}, {"Period start price date", 12}, {"Price then", 11},
		{"Price at measurement", 13}, {"TSR to date", 11}}
	for i := range n {
		cols = append(cols, Column{fmt.Sprintf("Correlation with %d", i+1), 11})
	}
	t, err := b.NewTable(SheetTSRPeers, cols, rows)
	if err != nil {
		return err
	}
	for _, g := range m.Grants {
		if g.Condition == nil || g.Condition.TSR == nil {
			continue
		}
		gt := g.Condition.TSR
		for i, c := range gt.Companies {
			name := fmt.Sprintf("%d %s", i+1, c.Name)
			row := []any{b.Text(g.ID), b.Text(name), b.Text(c.File), c.Ref, b.Text(c.PriceColumn), b.Cell(b.Style.Percent, c.Volatility),
				b.Cell(b.Style.Int, c.Returns), b.DateCell(c.First), b.DateCell(c.Last), b.DateCell(c.StartDate),
				b.Cell(b.Style.MoneyPerShare, c.StartPrice), b.Cell(b.Style.MoneyPerShare, c.NowPrice), b.Cell(b.Style.Percent, c.TSRToDate)}
			for _, x := range gt.Correlation[i] {
				row = append(row, b.Cell(b.Style.Number, x))
			}
			if err := t.Row(row...); err != nil {
				return err
			}
		}
	}
	return t.Close()
}

// writeDistributions lists the hurdles' hitting times by month and the
// relative TSR awards' payout and rank distributions.
func writeDistributions(b *Book, m *Model) error {
	rows := 0
	for _, g := range m.Grants {
		if c := g.Condition; c != nil {
			rows += len(c.HitByMonth)
			if c.TSR != nil {
				rows += len(c.TSR.PayoutBins) + len(c.TSR.RankDeciles)
			}
		}
	}
	t, err := b.NewTable(SheetDistributions, []Column{{"Grant", 12}, {"Distribution", 34}, {"From", 10}, {"To", 10}, {"Probability", 12}, {"Cumulative", 12}}, rows)
	if err != nil {
		return err
	}
	write := func(id, what string, ps []float64, width float64, unit int) error {
		cum := 0.0
		for i, p := range ps {
			cum += p
			from, to := any(float64(i)*width), any(float64(i+1)*width)
			style := b.Style.Int
			if unit == 0 {
				style = b.Style.Percent
			}
			if err := t.Row(b.Text(id), what, b.Cell(style, from), b.Cell(style, to), b.Cell(b.Style.Percent, p), b.Cell(b.Style.Percent, cum)); err != nil {
				return err
			}
		}
		return nil
	}
	for _, g := range m.Grants {
		c := g.Condition
		if c == nil {
			continue
		}
		if err := write(g.ID, "hurdle first met, months after measurement", c.HitByMonth, 1, 1); err != nil {
			return err
		}
		if c.TSR != nil {
			if err := write(g.ID, "payout, share of target", c.TSR.PayoutBins, c.TSR.PayoutBinWidth, 0); err != nil {
				return err
			}
			if err := write(g.ID, "percentile rank", c.TSR.RankDeciles, 0.1, 0); err != nil {
				return err
			}
		}
	}
	return t.Close()
}
