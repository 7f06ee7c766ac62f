package report

// Workbook sheets of the expense attribution and the disclosure tables.

import (
	"fmt"
	"io"
	"strconv"
)

// Sheet names added by this file, after Convergence.
const (
	SheetExpense     = "Expense"
	SheetForecast    = "Expense forecast"
	SheetDisclosures = "Disclosures"
)

func init() {
	sheetHooks = append(sheetHooks,
		SheetHook{SheetExpense, writeExpense},
		SheetHook{SheetForecast, writeForecast},
		SheetHook{SheetDisclosures, writeDisclosures})
}

// notRun writes a one-line sheet when expense attribution did not run.
func notRun(b *Book, name string) error {
	t, err := b.NewTable(name, []Column{{"Note", 80}}, 1)
	if err != nil {
		return err
	}
	if err := t.Row("Expense attribution did not run for this valuation."); err != nil {
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
// continuation.
var expenseColumns = []Column{{"Level", 9}, {"Grant", 14}, {"Holder", 12}, {"Instrument", 11}, {"Tranche", 8},
	{"Service start", 12}, {"Vest date / service end", 14}, {"Shares", 11}, {"Shares counted", 13},
	{"Expected share at vest", 12}, {"Fair value per share", 14}, {"Total cost", 16},
	{"Cumulative at period start", 16}, {"Period expense", 16}, {"Cumulative at period end", 16},
	{"Unrecognized cost", 16}, {"Remaining years", 11}, {"Fair value change (liability)", 16},
	{"Liability at period end", 16}}

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
	t, err := b.NewTable(SheetExpense, expenseColumns, rows)
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
		t, err := b.partTable(SheetExpenseTranches, part, expenseColumns, n)
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
			var fvChange, liability any
			if g.Liability {
				fvChange, liability = money(g.FairValueChange), money(g.LiabilityEnd)
			}
			if err := t.Row("grant", b.Text(g.GrantID), b.Text(g.Holder), g.Instrument, nil,
				b.DateCell(g.ServiceStart), b.DateCell(g.ServiceEnd), b.Cell(b.Style.Int, gs), b.Cell(b.Style.Number, counted),
				nil, nil, money(g.Cost), money(g.CumulativeOpen), money(g.Amount), money(g.Cumulative),
				money(g.Unrecognized), b.Cell(b.Style.Years, g.RemainingYears), fvChange, liability); err != nil {
				return err
			}
		}
		if !withTranches {
			continue
		}
		for _, tr := range g.Tranches {
			if err := t.Row("tranche", b.Text(g.GrantID), b.Text(g.Holder), g.Instrument, tr.Index,
				b.DateCell(g.ServiceStart), b.DateCell(tr.VestDate), b.Cell(b.Style.Int, tr.Shares), b.Cell(b.Style.Number, tr.SharesCounted),
				b.Cell(b.Style.Percent, tr.ExpectedShare), b.Cell(b.Style.MoneyPerShare, tr.FairValuePerShare),
				money(tr.Cost), money(tr.CumulativeOpen), money(tr.Amount), money(tr.Cumulative),
				money(tr.Unrecognized), b.Cell(b.Style.Years, tr.RemainingYears), nil, nil); err != nil {
				return err
			}
		}
	}
	if total {
		shares, cost, open := x.totals()
		if err := t.Row(b.Cell(b.Style.Bold, "total"), nil, nil, nil, nil, nil, nil, b.Cell(b.Style.Int, shares), nil, nil, nil,
			money(cost), money(open), money(e.Amount), money(e.Cumulative), money(x.m.Expense.UnrecognizedCost),
			b.Cell(b.Style.Years, x.m.Expense.WeightedAverageRemainingYears), money(e.FairValueChange), nil); err != nil {
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
	cols := []Column{{"Kind", 12}, {"Start", 12}, {"End", 12}, {"Compensation expense", 20}, {"Fair value change (liability)", 20}}
	t, err := b.NewTable(SheetForecast, cols, len(m.Expense.Periods)+len(e.Forecast)+1)
	if err != nil {
		return err
	}
	for _, p := range m.Expense.Periods {
		kind := "recognized"
		if p.Current {
			kind = "this period"
		}
		if err := t.Row(kind, b.DateCell(p.Start), b.DateCell(p.End), b.Cell(b.Style.Money, p.Amount), b.Cell(b.Style.Money, p.FairValueChange)); err != nil {
			return err
		}
	}
	for _, p := range e.Forecast {
		if err := t.Row("expected", b.DateCell(p.Start), b.DateCell(p.End), b.Cell(b.Style.Money, p.Amount), nil); err != nil {
			return err
		}
	}
	if err := t.Row("after", nil, nil, b.Cell(b.Style.Money, e.AfterForecast), nil); err != nil {
		return err
	}
	return t.Close()
}

// writeDisclosures stacks the note's tables in one long table, a row per
// line, so that every figure can be filtered by table; then the journal.
func writeDisclosures(b *Book, m *Model) error {
	e := detail(m)
	if e == nil || e.Disclosures == nil {
		return notRun(b, SheetDisclosures)
	}
	d := e.Disclosures
	cols := []Column{{"Table", 30}, {"Line", 34}, {"Shares", 13}, {"Weighted-average exercise price", 16},
		{"Weighted-average grant-date fair value", 16}, {"Weighted-average remaining term (years)", 14},
		{"Aggregate intrinsic value", 18}, {"Debit", 16}, {"Credit", 16}}
	type row []any
	var rows []row
	roll := func(name string, r RollForward) {
		for _, l := range r.Lines {
			var px any
			if r.Basis == "outstanding" {
				px = b.Cell(b.Style.MoneyPerShare, l.WeightedExercisePrice)
			}
			rows = append(rows, row{name, l.Label, b.Cell(b.Style.Int, l.Shares), px, b.Cell(b.Style.MoneyPerShare, l.WeightedFairValue), nil, nil, nil, nil})
		}
	}
	summary := func(name string, ls []SummaryLine) {
		for _, l := range ls {
			rows = append(rows, row{name, l.Label, b.Cell(b.Style.Number, l.Shares), b.Cell(b.Style.MoneyPerShare, l.WeightedExercisePrice), nil,
				b.Cell(b.Style.Years, l.RemainingTermYears), b.Cell(b.Style.Money, l.IntrinsicValue), nil, nil})
		}
	}
	granted := func(name string, g GrantsInPeriod, assumptions bool) {
		rows = append(rows, row{name, "Grants in the period", b.Cell(b.Style.Int, g.Shares), nil, b.Cell(b.Style.MoneyPerShare, g.WeightedFairValue), nil, nil, nil, nil})
		if !assumptions || g.Measured == 0 {
			return
		}
		for _, a := range []struct {
			label string
			v     any
		}{
			{"Weighted-average volatility", b.Cell(b.Style.Percent, g.Volatility)},
			{"Weighted-average risk-free rate", b.Cell(b.Style.Percent, g.RiskFreeRate)},
			{"Weighted-average dividend yield", b.Cell(b.Style.Percent, g.DividendYield)},
		} {
			rows = append(rows, row{name, a.label, nil, nil, a.v, nil, nil, nil, nil})
		}
		rows = append(rows, row{name, "Weighted-average expected term", nil, nil, nil, b.Cell(b.Style.Years, g.ExpectedTermYears), nil, nil, nil})
	}
	roll("Option roll-forward", d.Options)
	summary("Options at period end", d.OptionsAtEnd)
	granted("Options granted", d.OptionGrants, true)
	roll("Nonvested RSU roll-forward", d.RSUs)
	granted("RSUs granted", d.RSUGrants, false)
	roll("Warrant roll-forward", d.Warrants)
	summary("Warrants at period end", d.WarrantsAtEnd)
	for _, w := range d.WarrantsOutstanding {
		rows = append(rows, row{"Warrants outstanding", b.Text(w.GrantID + " (" + w.Classification + ")"), b.Cell(b.Style.Int, w.Shares),
			b.Cell(b.Style.MoneyPerShare, w.Strike), b.Cell(b.Style.MoneyPerShare, w.FairValuePerShare),
			b.Cell(b.Style.Years, w.RemainingTermYears), b.Cell(b.Style.Money, w.IntrinsicValue), nil, nil})
	}
	for _, j := range e.Journal {
		for _, l := range j.Lines {
			var dr, cr any
			if l.Debit != 0 {
				dr = b.Cell(b.Style.Money, l.Debit)
			}
			if l.Credit != 0 {
				cr = b.Cell(b.Style.Money, l.Credit)
			}
			rows = append(rows, row{"Journal: " + j.Description, l.Account, nil, nil, nil, nil, nil, dr, cr})
		}
	}
	rows = append(rows, row{"Share price at period end", "used for the intrinsic values (in the exercise price column)", nil, b.Cell(b.Style.MoneyPerShare, d.SharePrice), nil, nil, nil, nil, nil})
	t, err := b.NewTable(SheetDisclosures, cols, len(rows))
	if err != nil {
		return err
	}
	for _, r := range rows {
		if err := t.Row(r...); err != nil {
			return err
		}
	}
	return t.Close()
}

// expenseRowsPlain reports whether the fast rows can write x's Expense
// rows (see plainText).
func expenseRowsPlain(x *Expense) bool {
	e := x.ExpenseDetail
	for i := range e.ByGrant {
		g := &e.ByGrant[i]
		if !plainText(g.GrantID) || !plainText(g.Holder) || !plainText(g.Instrument) || !plainDate(g.ServiceStart) || !plainDate(g.ServiceEnd) {
			return false
		}
		for _, v := range []float64{g.Cost, g.CumulativeOpen, g.Amount, g.Cumulative, g.Unrecognized, g.RemainingYears, g.FairValueChange, g.LiabilityEnd} {
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
	for _, v := range []float64{e.Amount, e.Cumulative, e.FairValueChange, x.UnrecognizedCost, x.WeightedAverageRemainingYears} {
		if !finite(v) {
			return false
		}
	}
	return true
}

// fast is slow's rows written apart, byte for byte as excelize writes
// them, numbered from row 2.
func (x *expenseSheet) fast(from, to int, total, withTranches bool) fastRows {
	return func(out io.Writer) error {
		b, e := x.b, x.e
		s := b.Style
		w := &rowWriter{b: make([]byte, 0, 8192)}
		row := 1
		start := func() {
			row++
			w.row = strconv.AppendInt(w.row[:0], int64(row), 10)
			w.b = append(w.b[:0], `<row r="`...)
			w.b = append(w.b, w.row...)
			w.b = append(w.b, `">`...)
		}
		end := func() error {
			w.b = append(w.b, `</row>`...)
			_, err := out.Write(w.b)
			return err
		}
		for i := from; i < to; i++ {
			g := &e.ByGrant[i]
			if total {
				gs, counted := grantSums(g)
				start()
				w.text(1, 0, "grant")
				w.text(2, s.Input, g.GrantID)
				w.text(3, s.Input, g.Holder)
				w.text(4, 0, g.Instrument)
				w.date(6, s.Date, g.ServiceStart)
				w.date(7, s.Date, g.ServiceEnd)
				w.int(8, s.Int, gs)
				w.float(9, s.Number, counted)
				w.float(12, s.Money, g.Cost)
				w.float(13, s.Money, g.CumulativeOpen)
				w.float(14, s.Money, g.Amount)
				w.float(15, s.Money, g.Cumulative)
				w.float(16, s.Money, g.Unrecognized)
				w.float(17, s.Years, g.RemainingYears)
				if g.Liability {
					w.float(18, s.Money, g.FairValueChange)
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
				w.text(4, 0, g.Instrument)
				w.int(5, 0, int64(tr.Index))
				w.date(6, s.Date, g.ServiceStart)
				w.date(7, s.Date, tr.VestDate)
				w.int(8, s.Int, tr.Shares)
				w.float(9, s.Number, tr.SharesCounted)
				w.float(10, s.Percent, tr.ExpectedShare)
				w.float(11, s.MoneyPerShare, tr.FairValuePerShare)
				w.float(12, s.Money, tr.Cost)
				w.float(13, s.Money, tr.CumulativeOpen)
				w.float(14, s.Money, tr.Amount)
				w.float(15, s.Money, tr.Cumulative)
				w.float(16, s.Money, tr.Unrecognized)
				w.float(17, s.Years, tr.RemainingYears)
				if err := end(); err != nil {
					return err
				}
			}
		}
		if total {
			shares, cost, open := x.totals()
			start()
			w.text(1, s.Bold, "total")
			w.int(8, s.Int, shares)
			w.float(12, s.Money, cost)
			w.float(13, s.Money, open)
			w.float(14, s.Money, e.Amount)
			w.float(15, s.Money, e.Cumulative)
			w.float(16, s.Money, x.m.Expense.UnrecognizedCost)
			w.float(17, s.Years, x.m.Expense.WeightedAverageRemainingYears)
			w.float(18, s.Money, e.FairValueChange)
			if err := end(); err != nil {
				return err
			}
		}
		return nil
	}
}
