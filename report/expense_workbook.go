package report

import (
	"fmt"
	"io"
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

// Sheet that continues the Expense sheet's tranche rows when a large
// ledger's would not fit beside its grant rows (sheetsplit.go).
const SheetExpenseTranches = "Expense tranches"

// expenseColumns are the columns of the Expense sheet and of its
// continuation, the amounts' headers with the currency.
func expenseColumns(b *Book) []Column {
	return []Column{{"Level", 9}, {"Grant", 14}, {"Holder", 12}, {"Cost centre", 14}, {"Instrument", 11}, {"Tranche", 8},
		{"Service start", 12}, {"Vest date / service end", 14}, {"Shares", 11}, {"Shares counted", 13},
		{"Expected share at vest", 12}, {b.Cur("Fair value per share"), 14}, {b.Cur("Total cost"), 16},
		{b.Cur("Cumulative at period start"), 16}, {b.Cur("Period expense"), 16}, {b.Cur("Cumulative at period end"), 16},
		{b.Cur("Unrecognized cost"), 16}, {"Remaining years", 11}, {b.Cur("Liability at period end (liability-classified)"), 18}}
}

// writeExpense is one row per grant (level "grant") followed by its
// tranches (level "tranche"), then the total. When that is more than a
// sheet holds, the sheet keeps the grant rows and the total and the
// tranche rows go to the Expense tranches sheets.
func writeExpense(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetExpense)
	}
	tranches := 0
	for _, g := range e.ByGrant {
		tranches += len(g.Tranches)
	}
	apart := len(e.ByGrant)+tranches+1 > sheetRowLimit-1
	rows := len(e.ByGrant) + 1
	if !apart {
		rows += tranches
	}
	x := &expenseSheet{b: b, m: m, e: e}
	t, err := b.NewTable(SheetExpense, expenseColumns(b), rows)
	if err != nil {
		return err
	}
	fast := !b.slow && expenseRowsPlain(m.Expense)
	if fast {
		err = b.fastTable(t, x.fast(0, len(e.ByGrant), true, !apart))
	} else {
		err = x.slow(t, 0, len(e.ByGrant), true, !apart)
	}
	if err != nil || !apart {
		return err
	}
	// The tranche rows apart: whole grants to a sheet.
	last := SheetExpenseTranches
	for from, part := 0, 0; from < len(e.ByGrant); part++ {
		to, n := from, 0
		for to < len(e.ByGrant) && n+len(e.ByGrant[to].Tranches) <= sheetRowLimit-1 {
			n += len(e.ByGrant[to].Tranches)
			to++
		}
		if to == from {
			return fmt.Errorf("grant %s has more tranches than a sheet holds", e.ByGrant[from].GrantID)
		}
		if part == 0 {
			if _, err := b.f.NewSheet(SheetExpenseTranches); err != nil {
				return err
			}
		}
		t, err := b.partTable(SheetExpenseTranches, part, expenseColumns(b), n)
		if err != nil {
			return err
		}
		last = partName(SheetExpenseTranches, part)
		if fast {
			err = b.fastTable(t, x.fast(from, to, false, true))
		} else {
			err = x.slow(t, from, to, false, true)
		}
		if err != nil {
			return err
		}
		from = to
	}
	b.split = append(b.split, "the Expense sheet keeps a row per grant and the total, its tranche rows are on "+SheetExpenseTranches+" to "+last)
	return nil
}

// expenseSheet writes the rows of the Expense sheet (or of its tranche
// continuation) for grants [from, to) of e.ByGrant, through excelize
// (slow) or apart (fast): with total (the Expense sheet itself) each
// grant's row and the total row, and the tranche rows if withTranches.
type expenseSheet struct {
	b *Book
	m *Model
	e *ExpenseDetail
}

// totals are the total row's sums over every grant.
func (x *expenseSheet) totals() (shares int64, cost, open float64) {
	for _, g := range x.e.ByGrant {
		for _, tr := range g.Tranches {
			shares += tr.Shares
		}
		cost += g.Cost
		open += g.CumulativeOpen
	}
	return shares, cost, open
}

func grantSums(g *ExpenseGrant) (shares int64, counted float64) {
	for _, tr := range g.Tranches {
		shares += tr.Shares
		counted += tr.SharesCounted
	}
	return shares, counted
}

func (x *expenseSheet) slow(t *Table, from, to int, total, withTranches bool) error {
	b, e := x.b, x.e
	money := func(v float64) any { return b.Cell(b.Style.Money, v) }
	for i := from; i < to; i++ {
		g := &e.ByGrant[i]
		if total { // the Expense sheet itself: its grant rows
			gs, counted := grantSums(g)
			var liability any
			if g.Liability {
				liability = money(g.LiabilityEnd)
			}
			if err := t.Row("grant", b.Text(g.GrantID), b.Text(g.Holder), b.Text(g.CostCenter), g.Instrument, nil,
				b.DateCell(g.ServiceStart), b.DateCell(g.ServiceEnd), b.Cell(b.Style.Int, gs), b.Cell(b.Style.Shares, counted),
				nil, nil, money(g.Cost), money(g.CumulativeOpen), money(g.Amount), money(g.Cumulative),
				money(g.Unrecognized), b.Cell(b.Style.Years, g.RemainingYears), liability); err != nil {
				return err
			}
		}
		if !withTranches {
			continue
		}
		for _, tr := range g.Tranches {
			if err := t.Row("tranche", b.Text(g.GrantID), b.Text(g.Holder), nil, g.Instrument, tr.Index,
				b.DateCell(g.ServiceStart), b.DateCell(tr.VestDate), b.Cell(b.Style.Int, tr.Shares), b.Cell(b.Style.Shares, tr.SharesCounted),
				b.Cell(b.Style.Percent, tr.ExpectedShare), b.Cell(b.Style.MoneyPerShare, tr.FairValuePerShare),
				money(tr.Cost), money(tr.CumulativeOpen), money(tr.Amount), money(tr.Cumulative),
				money(tr.Unrecognized), b.Cell(b.Style.Years, tr.RemainingYears), nil); err != nil {
				return err
			}
		}
	}
	if total {
		shares, cost, open := x.totals()
		if err := t.Row(b.Cell(b.Style.Bold, "total"), nil, nil, nil, nil, nil, nil, nil, b.Cell(b.Style.Int, shares), nil, nil, nil,
			money(cost), money(open), money(e.Amount), money(e.Cumulative), money(x.m.Expense.UnrecognizedCost),
			b.Cell(b.Style.Years, x.m.Expense.WeightedAverageRemainingYears), nil); err != nil {
			return err
		}
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
	cols := []Column{{"Kind", 12}, {"Quarter", 12}, {"Start", 12}, {"End", 12}, {b.Cur("Compensation expense"), 20}, {b.Cur("Financing warrants: change in fair value (outside operating expense)"), 26}}
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
		{b.Cur("Fair value per warrant at issue"), 20}, {b.Cur("Value at issue"), 18}, {"Outstanding at period end", 16}, {"Exercised in period", 14},
		{b.Cur("Fair value per warrant at period end"), 22}, {b.Cur("Liability at period start"), 18}, {b.Cur("Recognized at issue in period"), 18},
		{b.Cur("Change in fair value (outside operating expense)"), 26}, {b.Cur("Reclassified to equity on exercise"), 20}, {b.Cur("Liability at period end"), 18}}
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
	return b.rows(t, func(t *Table) error {
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
		return nil
	})
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
	last, lastCol := 0, len(cols)
	for k, bl := range blocks {
		if k > 0 {
			last += 1 // the blank row
		}
		last += 1 + len(bl.rows)
		lastCol = max(lastCol, len(bl.head))
		for _, r := range bl.rows {
			lastCol = max(lastCol, len(r))
		}
	}
	t, err := b.NewTableSpan(name, cols, len(first.rows), last, lastCol)
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
			if err := t.TallRow(headerHeight(bl.head, widths), head...); err != nil {
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

	// A weighted average over no shares, and what an RSU cannot have
	// (an exercise), are blank.
	roll := block{head: []string{"Roll-forward", "Line", "Shares", b.Cur("Weighted-average exercise price"), b.Cur("Weighted-average fair value (at grant; financing: at issue)")}}
	for _, r := range []struct {
		name string
		r    RollForward
	}{{"Options", d.Options}, {"Nonvested RSUs", d.RSUs}, {"Warrants granted for services", d.Warrants}, {"Financing warrants (not share-based payment)", d.FinancingWarrants}} {
		for _, l := range r.r.Lines {
			priced := l.Shares != 0
			roll.rows = append(roll.rows, []any{r.name, l.Label, b.Cell(s.Int, l.Shares),
				b.Amount(s.MoneyPerShare, l.WeightedExercisePrice, priced && r.r.Basis == "outstanding"),
				b.Amount(s.MoneyPerShare, l.WeightedFairValue, priced)})
		}
	}
	end := block{head: []string{"At the period end", "Line", "Shares", b.Cur("Weighted-average exercise price"), "Weighted-average remaining contractual term (years)", b.Cur("Aggregate intrinsic value")}}
	for _, x := range []struct {
		name string
		ls   []SummaryLine
	}{{"Options", d.OptionsAtEnd}, {"Warrants granted for services", d.WarrantsAtEnd}} {
		for _, l := range x.ls {
			some := l.Shares != 0
			end.rows = append(end.rows, []any{x.name, l.Label, b.Cell(s.Shares, l.Shares), b.Amount(s.MoneyPerShare, l.WeightedExercisePrice, some),
				b.Amount(s.Years, l.RemainingTermYears, some), money(l.IntrinsicValue)})
		}
	}
	granted := block{head: []string{"Granted in the period", "Grants", "Shares", b.Cur("Weighted-average grant-date fair value"), "Weighted-average volatility",
		"Weighted-average risk-free rate (at the expected term)", "Weighted-average dividend yield", "Weighted-average expected term (years)"}}
	for _, x := range []struct {
		name        string
		g           GrantsInPeriod
		assumptions bool
	}{{"Options", d.OptionGrants, true}, {"RSUs", d.RSUGrants, false}, {"Warrants granted for services", d.WarrantGrants, true}} {
		row := []any{x.name, b.Cell(s.Int, x.g.Grants), b.Cell(s.Int, x.g.Shares), b.Amount(s.MoneyPerShare, x.g.WeightedFairValue, x.g.Shares != 0)}
		if x.assumptions && x.g.Measured > 0 {
			row = append(row, b.Cell(s.Percent, x.g.Volatility), b.Cell(s.Percent, x.g.RiskFreeRate), b.Cell(s.Percent, x.g.DividendYield),
				b.Cell(s.Years, x.g.ExpectedTermYears))
		}
		granted.rows = append(granted.rows, row)
	}
	activity := block{head: []string{"Exercises and vesting in the period", "Exercised (shares)", b.Cur("Total intrinsic value of exercises"),
		b.Cur("Cash received from exercises"), b.Cur("Weighted-average share price at exercise"), "Exercised with no share price known (shares)",
		"Vested (shares)", b.Cur("Total fair value of awards vested")}}
	for _, x := range []struct {
		name      string
		a         Activity
		exercised bool // an RSU is never exercised: its exercise cells are blank
	}{{"Options", d.OptionActivity, true}, {"Warrants granted for services", d.WarrantActivity, true}, {"RSUs", d.RSUActivity, false}} {
		ex := func(style int, v float64) any { return b.Amount(style, v, x.exercised) }
		var exercised, unpriced any
		if x.exercised {
			exercised, unpriced = b.Cell(s.Int, x.a.Exercised), b.Cell(s.Int, x.a.Unpriced)
		}
		activity.rows = append(activity.rows, []any{x.name, exercised, ex(s.Money, x.a.IntrinsicValueExercised),
			ex(s.Money, x.a.CashReceived), b.Amount(s.MoneyPerShare, x.a.WeightedSharePriceAtExercise, x.exercised && x.a.Exercised > x.a.Unpriced), unpriced,
			b.Cell(s.Int, x.a.Vested), money(x.a.FairValueVested)})
	}
	ranges := block{head: []string{"Outstanding at the period end by range of exercise prices", b.Cur("Lowest exercise price"), b.Cur("Highest exercise price"),
		"Outstanding", b.Cur("Weighted-average exercise price"), "Weighted-average remaining contractual life (years)", "Exercisable",
		b.Cur("Weighted-average exercise price, exercisable")}}
	for _, x := range []struct {
		name string
		rs   []PriceRange
	}{{"Options", d.OptionRanges}, {"Warrants granted for services", d.WarrantRanges}} {
		for _, r := range x.rs {
			ranges.rows = append(ranges.rows, []any{x.name, per(r.Low), per(r.High), b.Cell(s.Int, r.Outstanding), per(r.WeightedExercisePrice),
				b.Cell(s.Years, r.WeightedRemainingTermYears), b.Cell(s.Int, r.Exercisable), b.Amount(s.MoneyPerShare, r.ExercisableWeightedPrice, r.Exercisable != 0)})
		}
	}
	blocks := []block{roll, end, granted, activity}
	if len(ranges.rows) > 0 {
		blocks = append(blocks, ranges)
	}
	if len(d.WarrantsOutstanding) > 0 {
		w := block{head: []string{"Warrants granted for services, outstanding", "Classification", "Outstanding", "Exercisable", b.Cur("Strike"),
			"Remaining contractual term (years)", b.Cur("Fair value per warrant"), b.Cur("Intrinsic value")}}
		for _, r := range d.WarrantsOutstanding {
			w.rows = append(w.rows, []any{b.Text(r.GrantID), r.Classification, b.Cell(s.Int, r.Shares), b.Cell(s.Int, r.Exercisable),
				per(r.Strike), b.Cell(s.Years, r.RemainingTermYears), per(r.FairValuePerShare), money(r.IntrinsicValue)})
		}
		blocks = append(blocks, w)
	}
	blocks = append(blocks, block{head: []string{"Share price at the period end", b.Cur("Used for the intrinsic values")},
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
	cols := []Column{{"Entry", 7}, {"Date", 13}, {"Account code", 13}, {"Account", 54}, {"Cost centre", 14}, {b.Cur("Debit"), 16}, {b.Cur("Credit"), 16},
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
	if len(e.Journal) == 0 {
		t, err := b.NewTable(SheetJournal, cols, 0)
		if err != nil {
			return err
		}
		if err := t.Row(nil, nil, nil, "Nothing is to be booked for the period."); err != nil {
			return err
		}
		return t.Close()
	}
	// Whole entries to a sheet: a journal longer than a sheet (a catch-up
	// for each of many grants) continues on Journal 2, ....
	for from, part := 0, 0; from < len(e.Journal); part++ {
		to, n := from, 0
		for to < len(e.Journal) && (to == from || n+len(e.Journal[to].Lines) <= sheetRowLimit-1) {
			n += len(e.Journal[to].Lines)
			to++
		}
		t, err := b.partTable(SheetJournal, part, cols, n)
		if err != nil {
			return err
		}
		entries := e.Journal[from:to]
		err = b.rows(t, func(t *Table) error {
			for _, j := range entries {
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
			return nil
		})
		if err != nil {
			return err
		}
		from = to
	}
	return nil
}

// expenseRowsPlain reports whether the fast rows can write x's Expense
// rows: every date within what they write (plainDate) and every number
// finite.
func expenseRowsPlain(x *Expense) bool {
	e := x.ExpenseDetail
	for i := range e.ByGrant {
		g := &e.ByGrant[i]
		if !plainDate(g.ServiceStart) || !plainDate(g.ServiceEnd) {
			return false
		}
		for _, v := range []float64{g.Cost, g.CumulativeOpen, g.Amount, g.Cumulative, g.Unrecognized, g.RemainingYears, g.LiabilityEnd} {
			if !finite(v) {
				return false
			}
		}
		for _, tr := range g.Tranches {
			if !plainDate(tr.VestDate) {
				return false
			}
			for _, v := range []float64{tr.SharesCounted, tr.ExpectedShare, tr.FairValuePerShare, tr.Cost, tr.CumulativeOpen, tr.Amount, tr.Cumulative, tr.Unrecognized, tr.RemainingYears} {
				if !finite(v) {
					return false
				}
			}
		}
	}
	for _, v := range []float64{e.Amount, e.Cumulative, x.UnrecognizedCost, x.WeightedAverageRemainingYears} {
		if !finite(v) {
			return false
		}
	}
	return true
}

// fast is slow's rows written apart, cell for cell as excelize writes
// them (rowWriter), numbered from row 2.
func (x *expenseSheet) fast(from, to int, total, withTranches bool) fastRows {
	return func(out io.Writer) error {
		b, e := x.b, x.e
		s := b.Style
		w := b.newRowWriter(out)
		row := 1
		start := func() {
			row++
			_ = w.start(row, 0)
		}
		end := w.end
		for i := from; i < to; i++ {
			g := &e.ByGrant[i]
			if total {
				gs, counted := grantSums(g)
				start()
				w.text(1, 0, "grant")
				w.text(2, s.Input, g.GrantID)
				w.text(3, s.Input, g.Holder)
				w.text(4, s.Input, g.CostCenter)
				w.text(5, 0, g.Instrument)
				w.date(7, s.Date, g.ServiceStart)
				w.date(8, s.Date, g.ServiceEnd)
				w.int(9, s.Int, gs)
				w.float(10, s.Shares, counted)
				w.float(13, s.Money, g.Cost)
				w.float(14, s.Money, g.CumulativeOpen)
				w.float(15, s.Money, g.Amount)
				w.float(16, s.Money, g.Cumulative)
				w.float(17, s.Money, g.Unrecognized)
				w.float(18, s.Years, g.RemainingYears)
				if g.Liability {
					w.float(19, s.Money, g.LiabilityEnd)
				}
				if err := end(); err != nil {
					return err
				}
			}
			if !withTranches {
				continue
			}
			for k := range g.Tranches {
				tr := &g.Tranches[k]
				start()
				w.text(1, 0, "tranche")
				w.text(2, s.Input, g.GrantID)
				w.text(3, s.Input, g.Holder)
				w.text(5, 0, g.Instrument)
				w.int(6, 0, int64(tr.Index))
				w.date(7, s.Date, g.ServiceStart)
				w.date(8, s.Date, tr.VestDate)
				w.int(9, s.Int, tr.Shares)
				w.float(10, s.Shares, tr.SharesCounted)
				w.float(11, s.Percent, tr.ExpectedShare)
				w.float(12, s.MoneyPerShare, tr.FairValuePerShare)
				w.float(13, s.Money, tr.Cost)
				w.float(14, s.Money, tr.CumulativeOpen)
				w.float(15, s.Money, tr.Amount)
				w.float(16, s.Money, tr.Cumulative)
				w.float(17, s.Money, tr.Unrecognized)
				w.float(18, s.Years, tr.RemainingYears)
				if err := end(); err != nil {
					return err
				}
			}
		}
		if total {
			shares, cost, open := x.totals()
			start()
			w.text(1, s.Bold, "total")
			w.int(9, s.Int, shares)
			w.float(13, s.Money, cost)
			w.float(14, s.Money, open)
			w.float(15, s.Money, e.Amount)
			w.float(16, s.Money, e.Cumulative)
			w.float(17, s.Money, x.m.Expense.UnrecognizedCost)
			w.float(18, s.Years, x.m.Expense.WeightedAverageRemainingYears)
			if err := end(); err != nil {
				return err
			}
		}
		return w.flush()
	}
}
