package report

import (
	"strings"

	"github.com/xuri/excelize/v2"
)

// Workbook sheets of the expense attribution and the disclosure tables.

// Sheet names added by this file, after Convergence.
const (
	SheetExpense     = "Expense"
	SheetCostCenters = "Expense by cost centre"
	SheetForecast    = "Expense forecast"
	SheetByYear      = "Expense by fiscal year"
	SheetFinancing   = "Financing warrants"
	SheetDisclosures = "Disclosures"
	SheetJournal     = "Journal"
)

func init() {
	sheetHooks = append(sheetHooks,
		SheetHook{SheetExpense, writeExpense},
		SheetHook{SheetCostCenters, writeCostCenters},
		SheetHook{SheetForecast, writeForecast},
		SheetHook{SheetByYear, writeByYear},
		SheetHook{SheetFinancing, writeFinancing},
		SheetHook{SheetDisclosures, writeDisclosures},
		SheetHook{SheetJournal, writeJournal},
		SheetHook{SheetTax, writeTax})
}

// notRun writes a one-line sheet when expense attribution did not run.
func notRun(b *Book, name string) error {
	return noteSheet(b, name, "Expense attribution did not run for this valuation.")
}

// noteSheet writes a sheet of one note.
func noteSheet(b *Book, name, note string) error {
	t, err := b.NewTable(name, []Column{{"Note", 80}}, 1)
	if err != nil {
		return err
	}
	if err := t.Row(note); err != nil {
		return err
	}
	return t.Close()
}

func detail(m *Model) *ExpenseDetail {
	if m.Expense == nil {
		return nil
	}
	return m.Expense.ExpenseDetail
}

// writeExpense is one row per grant (level "grant") followed by its
// tranches (level "tranche"), then the total.
func writeExpense(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetExpense)
	}
	cols := []Column{{"Level", 9}, {"Grant", 14}, {"Holder", 12}, {"Cost centre", 14}, {"Instrument", 11}, {"Tranche", 8},
		{"Service start", 12}, {"Vest date / service end", 14}, {"Shares", 11}, {"Shares counted", 13},
		{"Expected share at vest", 12}, {"Fair value per share", 14}, {"Total cost", 16},
		{"Cumulative at period start", 16}, {"Period expense", 16}, {"Cumulative at period end", 16},
		{"Unrecognized cost", 16}, {"Remaining years", 11}, {"Liability at period end (liability-classified)", 18}}
	rows := 1
	for _, g := range e.ByGrant {
		rows += 1 + len(g.Tranches)
	}
	t, err := b.NewTable(SheetExpense, cols, rows)
	if err != nil {
		return err
	}
	money := func(v float64) any { return b.Cell(b.Style.Money, v) }
	var shares int64
	for _, g := range e.ByGrant {
		var gs int64
		var counted float64
		for _, tr := range g.Tranches {
			gs += tr.Shares
			counted += tr.SharesCounted
		}
		shares += gs
		var liability any
		if g.Liability {
			liability = money(g.LiabilityEnd)
		}
		if err := t.Row("grant", b.Text(g.GrantID), b.Text(g.Holder), b.Text(g.CostCenter), g.Instrument, nil,
			b.DateCell(g.ServiceStart), b.DateCell(g.ServiceEnd), b.Cell(b.Style.Int, gs), b.Cell(b.Style.Number, counted),
			nil, nil, money(g.Cost), money(g.CumulativeOpen), money(g.Amount), money(g.Cumulative),
			money(g.Unrecognized), b.Cell(b.Style.Years, g.RemainingYears), liability); err != nil {
			return err
		}
		for _, tr := range g.Tranches {
			if err := t.Row("tranche", b.Text(g.GrantID), b.Text(g.Holder), nil, g.Instrument, tr.Index,
				b.DateCell(g.ServiceStart), b.DateCell(tr.VestDate), b.Cell(b.Style.Int, tr.Shares), b.Cell(b.Style.Number, tr.SharesCounted),
				b.Cell(b.Style.Percent, tr.ExpectedShare), b.Cell(b.Style.MoneyPerShare, tr.FairValuePerShare),
				money(tr.Cost), money(tr.CumulativeOpen), money(tr.Amount), money(tr.Cumulative),
				money(tr.Unrecognized), b.Cell(b.Style.Years, tr.RemainingYears), nil); err != nil {
				return err
			}
		}
	}
	var cost, open float64
	for _, g := range e.ByGrant {
		cost += g.Cost
		open += g.CumulativeOpen
	}
	if err := t.Row(b.Cell(b.Style.Bold, "total"), nil, nil, nil, nil, nil, nil, nil, b.Cell(b.Style.Int, shares), nil, nil, nil,
		money(cost), money(open), money(e.Amount), money(e.Cumulative), money(m.Expense.UnrecognizedCost),
		b.Cell(b.Style.Years, m.Expense.WeightedAverageRemainingYears), nil); err != nil {
		return err
	}
	return t.Close()
}

// writeForecast lists the quarters since the earliest grant, the current
// period, then the 16 quarters expected, and what is left after them.
func writeForecast(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetForecast)
	}
	cols := []Column{{"Kind", 12}, {"Quarter", 12}, {"Start", 12}, {"End", 12}, {"Compensation expense", 20}, {"Financing warrants: change in fair value (outside operating expense)", 26}}
	t, err := b.NewTable(SheetForecast, cols, len(m.Expense.Periods)+len(e.Forecast)+1)
	if err != nil {
		return err
	}
	for _, p := range m.Expense.Periods {
		kind := "recognized"
		if p.Current {
			kind = "this period"
		}
		if err := t.Row(kind, p.Label, b.DateCell(p.Start), b.DateCell(p.End), b.Cell(b.Style.Money, p.Amount), b.Cell(b.Style.Money, p.FinancingFairValueChange)); err != nil {
			return err
		}
	}
	for _, p := range e.Forecast {
		if err := t.Row("expected", p.Label, b.DateCell(p.Start), b.DateCell(p.End), b.Cell(b.Style.Money, p.Amount), nil); err != nil {
			return err
		}
	}
	if err := t.Row("after", nil, nil, nil, b.Cell(b.Style.Money, e.AfterForecast), nil); err != nil {
		return err
	}
	return t.Close()
}

// writeFinancing is one row per warrant issued in a financing: its value
// at issue and, for a liability, the period's roll of the liability.
func writeFinancing(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetFinancing)
	}
	cols := []Column{{"Grant", 14}, {"Holder", 14}, {"Classification", 14}, {"Issue date", 12}, {"Warrants issued", 14},
		{"Fair value per warrant at issue", 20}, {"Value at issue", 18}, {"Outstanding at period end", 16}, {"Exercised in period", 14},
		{"Fair value per warrant at period end", 22}, {"Liability at period start", 18}, {"Recognised at issue in period", 18},
		{"Change in fair value (outside operating expense)", 26}, {"Reclassified to equity on exercise", 20}, {"Liability at period end", 18}}
	t, err := b.NewTable(SheetFinancing, cols, max(len(e.Financing), 1))
	if err != nil {
		return err
	}
	if len(e.Financing) == 0 {
		if err := t.Row("No warrant issued in a financing."); err != nil {
			return err
		}
		return t.Close()
	}
	s := b.Style
	for _, w := range e.Financing {
		row := []any{b.Text(w.GrantID), b.Text(w.Holder), w.Classification, b.DateCell(w.IssueDate), b.Cell(s.Int, w.Shares),
			b.Cell(s.MoneyPerShare, w.FairValueAtIssue), b.Cell(s.Money, w.ValueAtIssue), b.Cell(s.Int, w.Outstanding),
			b.Cell(s.Int, w.Exercised), b.Cell(s.MoneyPerShare, w.FairValue)}
		if w.Classification == "liability" {
			row = append(row, b.Cell(s.Money, w.LiabilityOpen), b.Cell(s.Money, w.Issued), b.Cell(s.Money, w.FairValueChange),
				b.Cell(s.Money, w.Reclassified), b.Cell(s.Money, w.LiabilityEnd))
		}
		if err := t.Row(row...); err != nil {
			return err
		}
	}
	return t.Close()
}

// block is one table of a stacked sheet: its own header row naming
// every column, then rows.
type block struct {
	head []string
	rows [][]any
}

// writeBlocks writes blocks one under another on one sheet, each with a
// header row of its own, a blank row between them; the sheet's frozen
// first row, with the filter, is the first block's header.
func writeBlocks(b *Book, name string, widths []float64, blocks []block) error {
	cols := make([]Column, len(widths))
	for i, w := range widths {
		cols[i].Width = w
	}
	first := blocks[0]
	for i := range cols {
		if i < len(first.head) {
			cols[i].Header = first.head[i]
		}
	}
	t, err := b.NewTable(name, cols, len(first.rows))
	if err != nil {
		return err
	}
	for k, bl := range blocks {
		if k > 0 {
			t.Skip(1)
			head := make([]any, len(bl.head))
			for i, h := range bl.head {
				head[i] = b.Cell(b.Style.Header, h)
			}
			if err := t.TallRow(45, head...); err != nil {
				return err
			}
		}
		for _, r := range bl.rows {
			if err := t.Row(r...); err != nil {
				return err
			}
		}
	}
	return t.Close()
}

// writeDisclosures writes the note's tables one under another, each with
// a header row that names every value in it.
func writeDisclosures(b *Book, m *Model) error {
	e := detail(m)
	if e == nil || e.Disclosures == nil {
		return notRun(b, SheetDisclosures)
	}
	d := e.Disclosures
	s := b.Style
	money := func(v float64) any { return b.Cell(s.Money, v) }
	per := func(v float64) any { return b.Cell(s.MoneyPerShare, v) }

	roll := block{head: []string{"Roll-forward", "Line", "Shares", "Weighted-average exercise price", "Weighted-average fair value (at grant; financing: at issue)"}}
	for _, r := range []struct {
		name string
		r    RollForward
	}{{"Options", d.Options}, {"Nonvested RSUs", d.RSUs}, {"Warrants granted for services", d.Warrants}, {"Financing warrants (not share-based payment)", d.FinancingWarrants}} {
		for _, l := range r.r.Lines {
			var px any
			if r.r.Basis == "outstanding" {
				px = per(l.WeightedExercisePrice)
			}
			roll.rows = append(roll.rows, []any{r.name, l.Label, b.Cell(s.Int, l.Shares), px, per(l.WeightedFairValue)})
		}
	}
	end := block{head: []string{"At the period end", "Line", "Shares", "Weighted-average exercise price", "Weighted-average remaining contractual term (years)", "Aggregate intrinsic value"}}
	for _, x := range []struct {
		name string
		ls   []SummaryLine
	}{{"Options", d.OptionsAtEnd}, {"Warrants granted for services", d.WarrantsAtEnd}} {
		for _, l := range x.ls {
			end.rows = append(end.rows, []any{x.name, l.Label, b.Cell(s.Number, l.Shares), per(l.WeightedExercisePrice),
				b.Cell(s.Years, l.RemainingTermYears), money(l.IntrinsicValue)})
		}
	}
	granted := block{head: []string{"Granted in the period", "Grants", "Shares", "Weighted-average grant-date fair value", "Weighted-average volatility",
		"Weighted-average risk-free rate (at the expected term)", "Weighted-average dividend yield", "Weighted-average expected term (years)"}}
	for _, x := range []struct {
		name        string
		g           GrantsInPeriod
		assumptions bool
	}{{"Options", d.OptionGrants, true}, {"RSUs", d.RSUGrants, false}, {"Warrants granted for services", d.WarrantGrants, true}} {
		row := []any{x.name, b.Cell(s.Int, x.g.Grants), b.Cell(s.Int, x.g.Shares), per(x.g.WeightedFairValue)}
		if x.assumptions && x.g.Measured > 0 {
			row = append(row, b.Cell(s.Percent, x.g.Volatility), b.Cell(s.Percent, x.g.RiskFreeRate), b.Cell(s.Percent, x.g.DividendYield),
				b.Cell(s.Years, x.g.ExpectedTermYears))
		}
		granted.rows = append(granted.rows, row)
	}
	activity := block{head: []string{"Exercises and vesting in the period", "Exercised (shares)", "Total intrinsic value of exercises",
		"Cash received from exercises", "Weighted-average share price at exercise", "Exercised with no share price known (shares)",
		"Vested (shares)", "Total fair value of awards vested"}}
	for _, x := range []struct {
		name string
		a    Activity
	}{{"Options", d.OptionActivity}, {"Warrants granted for services", d.WarrantActivity}, {"RSUs", d.RSUActivity}} {
		activity.rows = append(activity.rows, []any{x.name, b.Cell(s.Int, x.a.Exercised), money(x.a.IntrinsicValueExercised),
			money(x.a.CashReceived), per(x.a.WeightedSharePriceAtExercise), b.Cell(s.Int, x.a.Unpriced),
			b.Cell(s.Int, x.a.Vested), money(x.a.FairValueVested)})
	}
	ranges := block{head: []string{"Outstanding at the period end by range of exercise prices", "Lowest exercise price", "Highest exercise price",
		"Outstanding", "Weighted-average exercise price", "Weighted-average remaining contractual life (years)", "Exercisable",
		"Weighted-average exercise price, exercisable"}}
	for _, x := range []struct {
		name string
		rs   []PriceRange
	}{{"Options", d.OptionRanges}, {"Warrants granted for services", d.WarrantRanges}} {
		for _, r := range x.rs {
			ranges.rows = append(ranges.rows, []any{x.name, per(r.Low), per(r.High), b.Cell(s.Int, r.Outstanding), per(r.WeightedExercisePrice),
				b.Cell(s.Years, r.WeightedRemainingTermYears), b.Cell(s.Int, r.Exercisable), per(r.ExercisableWeightedPrice)})
		}
	}
	blocks := []block{roll, end, granted, activity}
	if len(ranges.rows) > 0 {
		blocks = append(blocks, ranges)
	}
	if len(d.WarrantsOutstanding) > 0 {
		w := block{head: []string{"Warrants granted for services, outstanding", "Classification", "Outstanding", "Exercisable", "Strike",
			"Remaining contractual term (years)", "Fair value per warrant", "Intrinsic value"}}
		for _, r := range d.WarrantsOutstanding {
			w.rows = append(w.rows, []any{b.Text(r.GrantID), r.Classification, b.Cell(s.Int, r.Shares), b.Cell(s.Int, r.Exercisable),
				per(r.Strike), b.Cell(s.Years, r.RemainingTermYears), per(r.FairValuePerShare), money(r.IntrinsicValue)})
		}
		blocks = append(blocks, w)
	}
	blocks = append(blocks, block{head: []string{"Share price at the period end", "Used for the intrinsic values"},
		rows: [][]any{{"Share price", per(d.SharePrice)}}})
	return writeBlocks(b, SheetDisclosures, []float64{44, 30, 18, 20, 20, 22, 20, 22}, blocks)
}

// writeJournal is journal.csv as a sheet: one row per line of every entry,
// with the role and grant beside the file's columns.
func writeJournal(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetJournal)
	}
	cols := []Column{{"Entry", 7}, {"Date", 13}, {"Account code", 13}, {"Account", 54}, {"Cost centre", 14}, {"Debit", 16}, {"Credit", 16},
		{"Currency", 10}, {"Description", 84}, {"Role", 22}, {"Grant", 14}}
	// Debits and credits as journal.csv has them: in the currency's minor
	// unit, the currency in its own column rather than in each amount (a
	// space's width after each, "_)", keeps it apart from the next column).
	format := "#,##0"
	if e.JournalDecimals > 0 {
		format += "." + strings.Repeat("0", e.JournalDecimals)
	}
	format += "_)"
	amount, err := b.f.NewStyle(&excelize.Style{CustomNumFmt: &format})
	if err != nil {
		return err
	}
	n := 0
	for _, j := range e.Journal {
		n += len(j.Lines)
	}
	t, err := b.NewTable(SheetJournal, cols, n)
	if err != nil {
		return err
	}
	if n == 0 {
		if err := t.Row(nil, nil, nil, "Nothing is to be booked for the period."); err != nil {
			return err
		}
	}
	for _, j := range e.Journal {
		for _, l := range j.Lines {
			var dr, cr any
			if l.Debit != 0 {
				dr = b.Cell(amount, l.Debit)
			}
			if l.Credit != 0 {
				cr = b.Cell(amount, l.Credit)
			}
			if err := t.Row(j.Number, b.DateCell(j.Date), b.Text(l.AccountCode), b.Text(l.Account), b.Text(l.CostCenter), dr, cr,
				b.Text(m.Company.Currency), b.Text(j.Description), l.Role, b.Text(l.GrantID)); err != nil {
				return err
			}
		}
	}
	return t.Close()
}
