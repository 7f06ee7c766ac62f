package report

import (
	"fmt"
	"io"
	"math"
	"strings"
	"time"

	"gonum.org/v1/plot/vg"

	"grantworth/templates"
)

// compareData is what the comparison's templates see.
type compareData struct {
	*CompareModel
	When    string // the grant date in words
	YearEnd string // the fiscal year end in words: "31 December"
}

// WriteComparePDF writes comparison.pdf: the comparison table with the
// caution on its first page, then expense by year, the value to the holder
// at expiry and the spread of payoffs, how and when the awards end, the
// method with its checks, the warnings and the caution. The document's
// dates are the grant date, so the same model gives the same bytes.
func WriteComparePDF(w io.Writer, m *CompareModel) error {
	author := m.Tool.Name + " " + m.Tool.Version
	paper := PaperFor(Company{Currency: m.Currency})
	pdf := newPDF(paper, "Grant designs compared: "+m.Company, "Grant designs for a grant on "+m.GrantDate.String(), author, m.Tool.Name, m.GrantDate.Time())
	d := &Memo{pdf: pdf, sections: map[string]int{}, widths: map[int]bool{}, paper: paper,
		head: [2]string{m.Company + " · Grant designs compared", "Grant date " + m.GrantDate.String()}}
	pdf.SetHeaderFuncMode(d.header, false)
	pdf.SetFooterFunc(d.footer)
	var err error
	if d.tpl, err = d.templates(templates.Compare, "compare"); err != nil {
		return err
	}
	data := compareData{CompareModel: m, When: compareDate(m.GrantDate), YearEnd: yearEndText(m.FiscalYearEnd)}
	if err := d.compareFront(m, data); err != nil {
		return err
	}
	type section struct {
		title   string
		newPage bool
		write   func(*Memo, *CompareModel, compareData) error
	}
	steps := []section{
		{"Reading the comparison", true, func(d *Memo, m *CompareModel, _ compareData) error {
			for _, n := range m.Notes {
				d.bullet(n)
			}
			return nil
		}},
		{"How the cost lands: expense by year", false, (*Memo).compareExpense},
		{"What each design is worth to the holder", true, (*Memo).compareHolder},
		{"How and when the awards end", true, (*Memo).compareEndings},
		{"Method and checks", false, (*Memo).compareMethod},
	}
	if len(m.Warnings) > 0 {
		steps = append(steps, section{"Warnings", false, (*Memo).compareWarnings})
	}
	steps = append(steps, section{"Caution", false, func(d *Memo, _ *CompareModel, data compareData) error { return d.Text("caution", data) }})
	for i, s := range steps {
		keep := 0.0
		if s.title == "Caution" {
			keep = 80 // the caution is kept on one page
		}
		d.section(i+1, s.title, s.newPage, keep)
		if err := s.write(d, m, data); err != nil {
			return fmt.Errorf("comparison section %s: %w", s.title, err)
		}
		if err := pdf.Error(); err != nil {
			return fmt.Errorf("comparison section %s: %w", s.title, err)
		}
	}
	return pdf.Output(w)
}

// compareFront is the first page: title, the comparison table and the
// caution.
func (d *Memo) compareFront(m *CompareModel, data compareData) error {
	p := d.pdf
	d.titlePage(16, 0.85, "Grant designs compared", m.Company)
	p.SetFont(fontSans, "", 10)
	p.CellFormat(textW, 6, fmt.Sprintf("%d designs for a grant on %s · share price %s", len(m.Designs), data.When, money(m.SharePrice, m.Currency)), "", 1, "L", false, 0, "")
	p.Ln(3)
	if err := d.Text("intro", data); err != nil {
		return err
	}
	d.Table(compareCols(m), CompareTable(m))
	d.Note(fmt.Sprintf("Amounts in %s. Totals are for the whole grant. Percentiles are of the award's payoff in today's money, risk-neutral. The workbook comparison.xlsx holds every tranche.", m.Currency))
	d.cautionBox(m.Caution, 8)
	return nil
}

// compareCols are a label column and one column per design.
func compareCols(m *CompareModel) []Col {
	label := 46.0
	cols := []Col{{"", label, false}}
	per := (textW - label) / float64(max(len(m.Designs), 1))
	for _, d := range m.Designs {
		cols = append(cols, Col{d.Design, per, true})
	}
	return cols
}

// CompareTable is the comparison table as text, designs as columns (a
// label first): the PDF's first page and the command's screen. A row
// whose first cell starts with "\x00" heads a group and has no other cell.
func CompareTable(m *CompareModel) [][]string {
	var rows [][]string
	group := func(title string) { rows = append(rows, []string{"\x00" + title}) }
	row := func(label string, cell func(DesignResult) string) {
		r := []string{label}
		for _, d := range m.Designs {
			r = append(r, cell(d))
		}
		rows = append(rows, r)
	}
	notRSU := func(f func(DesignResult) string) func(DesignResult) string {
		return func(d DesignResult) string {
			if d.Instrument == RSU {
				return "–"
			}
			return f(d)
		}
	}
	group("The grant")
	row("Instrument", func(d DesignResult) string { return instrumentName(d.Instrument) })
	row("Shares", func(d DesignResult) string { return count(d.Shares) })
	row("Strike", notRSU(func(d DesignResult) string { return fixed(d.Strike, 2) + premiumText(d.StrikePremium) }))
	row("Term (years)", notRSU(func(d DesignResult) string { return fixed(d.TermYears, 1) }))
	row("Vesting period (months)", func(d DesignResult) string { return fmt.Sprint(d.VestMonths) })
	row("Vests", func(d DesignResult) string { return vestEvery(d) })
	row("Cliff (months)", func(d DesignResult) string { return cliffText(d) })
	row("Vested holders leaving a year", notRSU(func(d DesignResult) string { return pct0(d.PostVestingExitRate) }))
	group("Cost to the company")
	row("Fair value per share", func(d DesignResult) string { return perShare(d.FairValuePerShare) })
	row("  error estimate (±)", func(d DesignResult) string { return perShare(d.ErrorEstimate) })
	row("Fair value, total", func(d DesignResult) string { return groupDigits(d.FairValueTotal, 0) })
	row("Expected cost, with departures before vesting (not a fair value)", func(d DesignResult) string { return groupDigits(d.ExpectedCostTotal, 0) })
	if base := m.Designs[0]; len(m.Designs) > 1 && base.ExpectedCostTotal > 0 {
		row("Expected cost against "+base.Design, func(d DesignResult) string {
			if d.Design == base.Design {
				return "–"
			}
			return signedPct0(d.ExpectedCostTotal/base.ExpectedCostTotal - 1)
		})
	}
	row("Expected term, lattice (years)", func(d DesignResult) string { return fixed(d.ExpectedTermYears, 2) })
	row("Black-Scholes-Merton per share, simplified-method term", func(d DesignResult) string { return perShare(d.BSMSimplifiedValue) })
	row("Fair value, total, volatility 10 points lower", func(d DesignResult) string { return volText(d, -10) })
	row("Fair value, total, volatility 10 points higher", func(d DesignResult) string { return volText(d, 10) })
	group("Value to the holder (risk-neutral)")
	row("Chance a share ends in the money", func(d DesignResult) string { return pct1(d.ProbabilityInTheMoney) })
	row("Break-even share price", func(d DesignResult) string { return fixed(d.BreakEvenSharePrice, 2) })
	for _, pc := range []struct {
		p     float64
		label string
	}{{0.10, "Payoff, 10th percentile"}, {0.50, "Payoff, median"}, {0.90, "Payoff, 90th percentile"}} {
		row(pc.label, func(d DesignResult) string { return groupDigits(d.payoffAt(pc.p).Total, 0) })
	}
	return rows
}

func instrumentName(i string) string {
	return map[string]string{Option: "option", Warrant: "warrant", RSU: "RSU"}[i]
}

func premiumText(p float64) string {
	switch {
	case p > 5e-5:
		return " (+" + pct0(p) + ")"
	case p < -5e-5:
		return " (" + pct0(p) + ")"
	}
	return ""
}

// pct0 is a rate as a percentage to one decimal, without a trailing
// ".0": 0.1 → "10%", 0.125 → "12.5%".
func pct0(v float64) string {
	s := fixed(v*100, 1)
	return strings.TrimSuffix(s, ".0") + "%"
}

// signedPct0 is a relative change to one decimal: "+1.2%", "−10.5%".
func signedPct0(v float64) string {
	if v >= 0 {
		return "+" + pct0(v)
	}
	return "−" + pct0(-v)
}

// pct1 is a probability as a percentage to one decimal: 0.42 → "42.0%".
func pct1(v float64) string { return fixed(v*100, 1) + "%" }

func volText(d DesignResult, shift float64) string {
	v, ok := d.volatilityAt(shift)
	if !ok {
		return "–"
	}
	return groupDigits(v, 0)
}

func (d *Memo) compareExpense(m *CompareModel, _ compareData) error {
	first := m.Designs[0].ExpenseByYear[0]
	d.Para(fmt.Sprintf("The expected cost of each design, spread over the service to each vest date by the %s method the company follows, by fiscal year (%d runs from the grant, %s, to %s). A year's bar is what the income statement would carry for the grant if holders leave at the expected rate; the years of each design add up to its expected cost.",
		m.Attribution, first.Year, compareDate(m.GrantDate), compareDate(first.End)))
	if err := d.Chart(func(w, h vg.Length) ([]byte, error) { return ExpenseByYearPNG(m, w, h) }, textW, 82); err != nil {
		return err
	}
	cols := compareCols(m)
	cols[0].Header = "Fiscal year (" + m.Currency + ")"
	var rows [][]string
	for _, y := range m.Years {
		r := []string{fmt.Sprint(y.Year)}
		for _, dr := range m.Designs {
			r = append(r, groupDigits(dr.expenseIn(y.Year), 0))
		}
		rows = append(rows, r)
	}
	tot := []string{"\x00Total: the expected cost"}
	for _, dr := range m.Designs {
		tot = append(tot, groupDigits(dr.ExpectedCostTotal, 0))
	}
	d.Table(cols, append(rows, tot))
	return nil
}

func (d *Memo) compareHolder(m *CompareModel, _ compareData) error {
	d.Sub("At expiry, by share price")
	d.Para("What the whole grant pays the holder if the share is worth a given price when the option expires (an RSU: when it vests), before tax. The marker on each line is its break-even price: the price at which the grant pays its fair value grown at the risk-free rate, what the holder would have had by taking the fair value in cash.")
	if err := d.Chart(func(w, h vg.Length) ([]byte, error) { return PayoffAtExpiryPNG(m, w, h) }, textW, 88); err != nil {
		return err
	}
	d.Sub("The spread of outcomes, in today's money")
	d.Para("The range of what each grant may pay, under the risk-neutral odds that price it, discounted to the grant date. The triangle is the fair value, the average over every outcome. For options the average sits far above the median: most paths pay little or nothing and a few pay a great deal.")
	return d.Chart(func(w, h vg.Length) ([]byte, error) { return PayoffRangePNG(m, w, h) }, textW, 78)
}

func (d *Memo) compareEndings(m *CompareModel, _ compareData) error {
	d.Para("How the shares of each grant end, risk-neutral: exercised early when the share reaches the exercise multiple, exercised or lost when a vested holder leaves, or at expiry. Departures before vesting are left out here, as in the fair value; they are in the expected cost.")
	cols := compareCols(m)
	cols[0].Header = "Share of the grant"
	var rows [][]string
	for k, e := range m.Endings {
		r := []string{e.Label}
		for _, dr := range m.Designs {
			r = append(r, pct1(dr.Endings[k]))
		}
		rows = append(rows, r)
	}
	d.Table(cols, rows)
	d.Sub("When the grants end")
	return d.Chart(func(w, h vg.Length) ([]byte, error) { return EndTimingPNG(m, w, h) }, textW, 70)
}

func (d *Memo) compareMethod(m *CompareModel, data compareData) error {
	if err := d.Text("method", data); err != nil {
		return err
	}
	cols := []Col{{"Design", 30, false}, {"Fair value per share", 22, true}, {"Outcome simulation", 28, true}, {"z", 12, true},
		{"Largest tranche", 16, true}, {"Its lattice value", 22, true}, {"Monte Carlo", 28, true}, {"z", 12, true}}
	var rows [][]string
	z := func(a, b, sa, sb float64) string { return fixed((a-b)/math.Hypot(sa, sb), 2) }
	for _, dr := range m.Designs {
		r := []string{dr.Design, perShare(dr.FairValuePerShare), perShare(dr.SimulatedMean) + " ± " + perShare(dr.SimulatedSE),
			z(dr.SimulatedMean, dr.FairValuePerShare, dr.SimulatedSE, dr.ErrorEstimate)}
		if c := dr.Check; c != nil {
			r = append(r, fmt.Sprint(c.Tranche), perShare(c.Lattice), perShare(c.MonteCarlo)+" ± "+perShare(c.StdErr), fixed(c.Z, 2))
		} else {
			r = append(r, "–", "closed form", "–", "–")
		}
		rows = append(rows, r)
		if dr.Note != "" {
			rows = append(rows, []string{"", dr.Note})
		}
	}
	d.Sub("Checks")
	d.Table(cols, rows)
	d.Note(fmt.Sprintf("The outcome simulation's mean payoff per share should agree with the lattice's fair value within its standard error; the Monte Carlo check (%s paths) values each option design's largest tranche apart from the lattice. z is the difference over the combined uncertainty: within about ±3 the two agree.", count(firstCheckPaths(m))))
	return nil
}

func firstCheckPaths(m *CompareModel) int {
	for _, d := range m.Designs {
		if d.Check != nil {
			return d.Check.Paths
		}
	}
	return 0
}

// yearEndText is a fiscal year end MM-DD in words: "31 December".
func yearEndText(mmdd string) string {
	t, err := time.Parse("01-02", mmdd)
	if err != nil {
		return mmdd
	}
	return t.Format("2 January")
}

func (d *Memo) compareWarnings(m *CompareModel, _ compareData) error {
	for _, w := range m.Warnings {
		d.bullet(w)
	}
	return nil
}
