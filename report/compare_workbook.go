package report

import (
	"bytes"
	"fmt"
	"io"

	"github.com/xuri/excelize/v2"
)

// Sheet names of comparison.xlsx, in order.
const (
	SheetComparison = "Comparison"
	SheetYearly     = "Expense by year"
	SheetOutcomes   = "Outcomes"
	SheetDesignTr   = "Tranches"
	SheetInputs     = "Inputs"
)

// WriteCompareWorkbookWith writes comparison.xlsx: the comparison with designs
// as columns, the expected expense by fiscal year, the outcome
// distributions, every tranche, the inputs of each design, the warnings and
// an About sheet with the caution. Every number comes from the model; the
// entries are written in a fixed order with no timestamps, so the same
// model gives the same bytes. Temporary files (excelize's streamed sheets
// past its chunk size) go into o.TempDir, "" the system's temporary folder.
func WriteCompareWorkbookWith(w io.Writer, m *CompareModel, o WorkbookOptions) error {
	f := excelize.NewFile(excelize.Options{TmpDir: o.TempDir})
	defer f.Close()
	b := &Book{f: f}
	if err := b.styles(m.Currency); err != nil {
		return err
	}
	date := m.GrantDate.Time().Format("2006-01-02T15:04:05Z")
	if err := f.SetDocProps(&excelize.DocProperties{
		Title: "Grant designs compared: " + m.Company, Creator: m.Tool.Name + " " + m.Tool.Version,
		LastModifiedBy: m.Tool.Name + " " + m.Tool.Version, Created: date, Modified: date, Description: m.Caution,
	}); err != nil {
		return err
	}
	steps := []struct {
		name  string
		write func(*Book, *CompareModel) error
	}{
		{SheetComparison, writeComparison},
		{SheetYearly, writeDesignExpense},
		{SheetOutcomes, writeOutcomes},
		{SheetDesignTr, writeDesignTranches},
		{SheetInputs, writeDesignInputs},
		{SheetWarnings, func(b *Book, m *CompareModel) error { return writeWarnings(b, &Model{Warnings: m.Warnings}) }},
		{SheetAbout, writeCompareAbout},
	}
	for i, s := range steps {
		if i == 0 {
			if err := f.SetSheetName("Sheet1", s.name); err != nil {
				return err
			}
		} else if _, err := f.NewSheet(s.name); err != nil {
			return err
		}
		if err := s.write(b, m); err != nil {
			return fmt.Errorf("workbook sheet %s: %w", s.name, err)
		}
	}
	f.SetActiveSheet(0)
	var buf bytes.Buffer
	if err := f.Write(&buf); err != nil {
		return err
	}
	return canonicalZip(w, bytes.NewReader(buf.Bytes()), int64(buf.Len()), nil)
}

// designCols are a label column and a column per design.
func designCols(m *CompareModel, first string) []Column {
	cols := []Column{{first, 52}}
	for _, d := range m.Designs {
		cols = append(cols, Column{d.Design, 16})
	}
	return cols
}

// designRow writes one row of a designs-as-columns sheet: a label and a
// cell per design.
func designRow(t *Table, b *Book, m *CompareModel, label string, cell func(DesignResult) any) error {
	r := []any{b.Cell(b.Style.Wrap, label)}
	for _, d := range m.Designs {
		r = append(r, cell(d))
	}
	return t.Row(r...)
}

func writeComparison(b *Book, m *CompareModel) error {
	s := b.Style
	money := func(v float64) any { return b.Cell(s.MoneyTagged, v) }
	perSh := func(v float64) any { return b.Cell(s.PerShareTagged, v) }
	notRSU := func(d DesignResult, v any) any {
		if d.Instrument == RSU {
			return nil
		}
		return v
	}
	type line struct {
		label string
		cell  func(DesignResult) any
	}
	groups := []struct {
		title string
		lines []line
	}{
		{"The grant", []line{
			{"Instrument", func(d DesignResult) any { return b.Text(instrumentName(d.Instrument)) }},
			{"Shares", func(d DesignResult) any { return b.Cell(s.Int, d.Shares) }},
			{"Strike", func(d DesignResult) any { return notRSU(d, perSh(d.Strike)) }},
			{"Strike over the share price at grant", func(d DesignResult) any { return notRSU(d, b.Cell(s.Percent, d.StrikePremium)) }},
			{"Expiry date", func(d DesignResult) any { return b.DateCell(d.ExpiryDate) }},
			{"Term, years (an RSU: to its last vesting)", func(d DesignResult) any { return b.Cell(s.Years, d.TermYears) }},
			{"Vesting period (months)", func(d DesignResult) any { return b.Cell(s.Int, d.VestMonths) }},
			{"Vests", func(d DesignResult) any { return b.Text(vestEvery(d)) }},
			{"Cliff (months)", func(d DesignResult) any { return b.Cell(s.Int, d.CliffMonths) }},
			{"Tranches", func(d DesignResult) any { return b.Cell(s.Int, d.Tranches) }},
		}},
		{"Cost to the company", []line{
			{"Fair value per share", func(d DesignResult) any { return perSh(d.FairValuePerShare) }},
			{"Error estimate per share (±)", func(d DesignResult) any { return perSh(d.ErrorEstimate) }},
			{"Fair value, total", func(d DesignResult) any { return money(d.FairValueTotal) }},
			{"Pre-vesting forfeiture rate", func(d DesignResult) any { return b.Cell(s.Percent, d.PreVestingForfeitureRate) }},
			{"Expected cost, with departures before vesting (not a fair value)", func(d DesignResult) any { return money(d.ExpectedCostTotal) }},
			{"Expected cost against " + m.Designs[0].Design, func(d DesignResult) any {
				if base := m.Designs[0].ExpectedCostTotal; base > 0 {
					return b.Cell(s.Percent, d.ExpectedCostTotal/base-1)
				}
				return nil
			}},
			{"Expected term, lattice (years)", func(d DesignResult) any { return b.Cell(s.Years, d.ExpectedTermYears) }},
			{"Black-Scholes-Merton per share, simplified-method term", func(d DesignResult) any { return perSh(d.BSMSimplifiedValue) }},
		}},
		{"Fair value, total, with volatility moved", nil},
		{"Value to the holder (risk-neutral)", []line{
			{"Chance a share ends in the money", func(d DesignResult) any { return b.Cell(s.Percent, d.ProbabilityInTheMoney) }},
			{"Break-even share price", func(d DesignResult) any { return perSh(d.BreakEvenSharePrice) }},
		}},
	}
	for _, sh := range []float64{-10, -5, 5, 10} {
		groups[2].lines = append(groups[2].lines, line{fmt.Sprintf("Volatility %+g points", sh), func(d DesignResult) any {
			if v, ok := d.volatilityAt(sh); ok {
				return money(v)
			}
			return nil
		}})
	}
	for _, p := range m.Percentiles {
		groups[3].lines = append(groups[3].lines, line{fmt.Sprintf("Payoff of the grant, %s percentile, today's money", ordinal(p)), func(d DesignResult) any { return money(d.payoffAt(p).Total) }})
	}
	n := len(groups)
	for _, g := range groups {
		n += len(g.lines)
	}
	t, err := b.NewTable(SheetComparison, designCols(m, "Design"), n+len(m.Notes)+2)
	if err != nil {
		return err
	}
	for _, g := range groups {
		if err := t.Row(b.Cell(s.Bold, g.title)); err != nil {
			return err
		}
		for _, l := range g.lines {
			if err := designRow(t, b, m, l.label, l.cell); err != nil {
				return err
			}
		}
	}
	t.Skip(1)
	for _, note := range append(append([]string{}, m.Notes...), m.Caution) {
		if err := t.TallRow(15*float64(1+len(note)/120), b.Cell(b.Style.Wrap, note)); err != nil {
			return err
		}
		if err := t.Merge(1, len(m.Designs)+1); err != nil {
			return err
		}
	}
	return t.Close()
}

// ordinal is a percentile as an ordinal: 0.1 → "10th", 0.5 → "50th".
func ordinal(p float64) string {
	n := int(p*100 + 0.5)
	suffix := "th"
	if n%100 < 11 || n%100 > 13 {
		switch n % 10 {
		case 1:
			suffix = "st"
		case 2:
			suffix = "nd"
		case 3:
			suffix = "rd"
		}
	}
	return fmt.Sprint(n) + suffix
}

func writeDesignExpense(b *Book, m *CompareModel) error {
	cols := append([]Column{{"Fiscal year", 12}, {"From", 12}, {"To", 12}}, designCols(m, "")[1:]...)
	t, err := b.NewTable(SheetYearly, cols, len(m.Years)+1)
	if err != nil {
		return err
	}
	for _, y := range m.Years {
		r := []any{y.Year, b.DateCell(y.Start), b.DateCell(y.End)}
		for _, d := range m.Designs {
			r = append(r, b.Cell(b.Style.MoneyTagged, d.expenseIn(y.Year)))
		}
		if err := t.Row(r...); err != nil {
			return err
		}
	}
	tot := []any{b.Cell(b.Style.Bold, "Expected cost"), nil, nil}
	for _, d := range m.Designs {
		tot = append(tot, b.Cell(b.Style.MoneyTagged, d.ExpectedCostTotal))
	}
	if err := t.Row(tot...); err != nil {
		return err
	}
	return t.Close()
}

func writeOutcomes(b *Book, m *CompareModel) error {
	s := b.Style
	maxYears := 0
	for _, d := range m.Designs {
		maxYears = max(maxYears, len(d.EndByYear))
	}
	t, err := b.NewTable(SheetOutcomes, designCols(m, "Risk-neutral, per share of the grant"), 6+len(m.Percentiles)+len(m.Endings)+maxYears)
	if err != nil {
		return err
	}
	rows := []struct {
		label string
		cell  func(DesignResult) any
	}{
		{"Simulated value per share (mean payoff, today's money)", func(d DesignResult) any { return b.Cell(s.PerShareTagged, d.SimulatedMean) }},
		{"Its standard error", func(d DesignResult) any { return b.Cell(s.PerShareTagged, d.SimulatedSE) }},
		{"Fair value per share, lattice", func(d DesignResult) any { return b.Cell(s.PerShareTagged, d.FairValuePerShare) }},
		{"Chance a share ends in the money", func(d DesignResult) any { return b.Cell(s.Percent, d.ProbabilityInTheMoney) }},
	}
	for _, p := range m.Percentiles {
		rows = append(rows, struct {
			label string
			cell  func(DesignResult) any
		}{fmt.Sprintf("Payoff per share, %s percentile", ordinal(p)), func(d DesignResult) any { return b.Cell(s.PerShareTagged, d.payoffAt(p).PerShare) }})
	}
	for k, e := range m.Endings {
		rows = append(rows, struct {
			label string
			cell  func(DesignResult) any
		}{e.Label, func(d DesignResult) any { return b.Cell(s.Percent, d.Endings[k]) }})
	}
	for y := range maxYears {
		rows = append(rows, struct {
			label string
			cell  func(DesignResult) any
		}{fmt.Sprintf("Ends in year %d after the grant", y+1), func(d DesignResult) any {
			if y < len(d.EndByYear) {
				return b.Cell(s.Percent, d.EndByYear[y])
			}
			return nil
		}})
	}
	for _, r := range rows {
		if err := designRow(t, b, m, r.label, r.cell); err != nil {
			return err
		}
	}
	t.Skip(1)
	note := fmt.Sprintf("Simulated with %d paths per design, %d steps a year (vest dates and expiries added), seed %d for the first design and one more for each next. Risk-neutral figures price the award; they do not forecast the share.",
		m.Simulation.Paths, m.Simulation.StepsPerYear, m.Simulation.Seed)
	if err := t.TallRow(30, b.Cell(s.Wrap, note)); err != nil {
		return err
	}
	if err := t.Merge(1, len(m.Designs)+1); err != nil {
		return err
	}
	return t.Close()
}

func writeDesignTranches(b *Book, m *CompareModel) error {
	s := b.Style
	cols := []Column{{"Design", 18}, {"Tranche", 9}, {"Vest date", 12}, {"Years to vest", 11}, {"Shares", 12},
		{"Fair value per share", 16}, {"Error estimate", 13}, {"Expected term (years)", 12}, {"Simplified BSM per share", 16},
		{"Share expected to vest", 13}, {"Expected cost per share", 16}, {"Fair value total", 18}, {"Expected cost total", 18}}
	n := 0
	for _, d := range m.Designs {
		n += len(d.Tranche)
	}
	t, err := b.NewTable(SheetDesignTr, cols, n)
	if err != nil {
		return err
	}
	for _, d := range m.Designs {
		for _, tr := range d.Tranche {
			if err := t.Row(b.Text(d.Design), tr.Index, b.DateCell(tr.VestDate), b.Cell(s.Years, tr.YearsToVest), b.Cell(s.Int, tr.Shares),
				b.Cell(s.PerShareTagged, tr.FairValuePerShare), b.Cell(s.Number, tr.ErrorEstimate), b.Cell(s.Years, tr.ExpectedTermYears),
				b.Cell(s.PerShareTagged, tr.BSMSimplifiedValue), b.Cell(s.Percent, tr.SurvivalToVest), b.Cell(s.PerShareTagged, tr.ExpectedCost),
				b.Cell(s.MoneyTagged, tr.FairValueTotal), b.Cell(s.MoneyTagged, tr.ExpectedCostTotal)); err != nil {
				return err
			}
		}
	}
	return t.Close()
}

func writeDesignInputs(b *Book, m *CompareModel) error {
	s := b.Style
	t, err := b.NewTable(SheetInputs, designCols(m, "Input"), 10)
	if err != nil {
		return err
	}
	for _, r := range []struct {
		label string
		cell  func(DesignResult) any
	}{
		{"Share price at grant", func(DesignResult) any { return b.Cell(s.PerShareTagged, m.SharePrice) }},
		{"Volatility", func(d DesignResult) any { return b.Cell(s.Percent, d.Volatility) }},
		{"Dividend yield", func(d DesignResult) any { return b.Cell(s.Percent, d.DividendYield) }},
		{"Risk-free zero rate to the term (continuous)", func(d DesignResult) any { return b.Cell(s.Percent, d.RiskFreeRate) }},
		{"Exercise multiple (0: none)", func(d DesignResult) any { return b.Cell(s.Number, d.ExerciseMultiple) }},
		{"Vested holders leaving a year", func(d DesignResult) any { return b.Cell(s.Percent, d.PostVestingExitRate) }},
		{"Unvested holders leaving a year", func(d DesignResult) any { return b.Cell(s.Percent, d.PreVestingForfeitureRate) }},
		{"Dilution factor N/(N+W) (warrants)", func(d DesignResult) any { return b.Cell(s.Number, d.DilutionFactor) }},
	} {
		if err := designRow(t, b, m, r.label, r.cell); err != nil {
			return err
		}
	}
	return t.Close()
}

func writeCompareAbout(b *Book, m *CompareModel) error {
	rows := [][2]any{
		{"Tool", m.Tool.Name},
		{"Version", m.Tool.Version},
		{"Input", b.Text(m.Input.Path)},
		{"Input SHA-256", m.Input.SHA256},
		{"Company", b.Text(m.Company)},
		{"Grant date", b.DateCell(m.GrantDate)},
		{"Share price at grant", b.Cell(b.Style.PerShareTagged, m.SharePrice)},
		{"Share price from", b.Text(m.SharePriceSource)},
		{"Attribution", b.Text(m.Attribution)},
		{"Fiscal year ends (month-day)", m.FiscalYearEnd},
		{"Lattice steps", m.Steps},
		{"Caution", m.Caution},
	}
	return writeItems(b, SheetAbout, rows)
}
