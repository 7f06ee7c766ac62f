package report

// Workbook sheets of the expense attribution and the disclosure tables.

// Sheet names added by this file, after Convergence.
const (
	SheetExpense     = "Expense"
	SheetForecast    = "Expense forecast"
	SheetByYear      = "Expense by fiscal year"
	SheetCostCenters = "Expense by cost centre"
	SheetJournal     = "Journal"
	SheetDisclosures = "Disclosures"
)

func init() {
	sheetHooks = append(sheetHooks,
		SheetHook{SheetExpense, writeExpense},
		SheetHook{SheetCostCenters, writeCostCenters},
		SheetHook{SheetForecast, writeForecast},
		SheetHook{SheetByYear, writeByYear},
		SheetHook{SheetJournal, writeJournal},
		SheetHook{SheetTax, writeTax},
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
		{"Unrecognized cost", 16}, {"Remaining years", 11}, {"Fair value change (liability)", 16},
		{"Liability at period end", 16}}
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
		var fvChange, liability any
		if g.Liability {
			fvChange, liability = money(g.FairValueChange), money(g.LiabilityEnd)
		}
		if err := t.Row("grant", b.Text(g.GrantID), b.Text(g.Holder), b.Text(g.CostCenter), g.Instrument, nil,
			b.DateCell(g.ServiceStart), b.DateCell(g.ServiceEnd), b.Cell(b.Style.Int, gs), b.Cell(b.Style.Number, counted),
			nil, nil, money(g.Cost), money(g.CumulativeOpen), money(g.Amount), money(g.Cumulative),
			money(g.Unrecognized), b.Cell(b.Style.Years, g.RemainingYears), fvChange, liability); err != nil {
			return err
		}
		for _, tr := range g.Tranches {
			if err := t.Row("tranche", b.Text(g.GrantID), b.Text(g.Holder), nil, g.Instrument, tr.Index,
				b.DateCell(g.ServiceStart), b.DateCell(tr.VestDate), b.Cell(b.Style.Int, tr.Shares), b.Cell(b.Style.Number, tr.SharesCounted),
				b.Cell(b.Style.Percent, tr.ExpectedShare), b.Cell(b.Style.MoneyPerShare, tr.FairValuePerShare),
				money(tr.Cost), money(tr.CumulativeOpen), money(tr.Amount), money(tr.Cumulative),
				money(tr.Unrecognized), b.Cell(b.Style.Years, tr.RemainingYears), nil, nil); err != nil {
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
		b.Cell(b.Style.Years, m.Expense.WeightedAverageRemainingYears), money(e.FairValueChange), nil); err != nil {
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
	cols := []Column{{"Kind", 12}, {"Quarter", 12}, {"Start", 12}, {"End", 12}, {"Compensation expense", 20}, {"Fair value change (liability)", 20}}
	t, err := b.NewTable(SheetForecast, cols, len(m.Expense.Periods)+len(e.Forecast)+1)
	if err != nil {
		return err
	}
	for _, p := range m.Expense.Periods {
		kind := "recognized"
		if p.Current {
			kind = "this period"
		}
		if err := t.Row(kind, p.Label, b.DateCell(p.Start), b.DateCell(p.End), b.Cell(b.Style.Money, p.Amount), b.Cell(b.Style.Money, p.FairValueChange)); err != nil {
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

// writeByYear is the expense of each fiscal year, recognised and expected.
func writeByYear(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetByYear)
	}
	cols := []Column{{"Fiscal year", 12}, {"Start", 12}, {"End", 12}, {"Recognized", 18}, {"Expected", 18}, {"Total", 18}, {"Calendar", 60}}
	t, err := b.NewTable(SheetByYear, cols, len(e.ByFiscalYear))
	if err != nil {
		return err
	}
	money := func(v float64) any { return b.Cell(b.Style.Money, v) }
	for i, y := range e.ByFiscalYear {
		var cal any
		if i == 0 {
			cal = e.FiscalCalendar
		}
		if err := t.Row(y.Year, b.DateCell(y.Start), b.DateCell(y.End), money(y.Recognized), money(y.Expected), money(y.Total), cal); err != nil {
			return err
		}
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
		{"Aggregate intrinsic value", 18}}
	type row []any
	var rows []row
	roll := func(name string, r RollForward) {
		for _, l := range r.Lines {
			var px any
			if r.Basis == "outstanding" {
				px = b.Cell(b.Style.MoneyPerShare, l.WeightedExercisePrice)
			}
			rows = append(rows, row{name, l.Label, b.Cell(b.Style.Int, l.Shares), px, b.Cell(b.Style.MoneyPerShare, l.WeightedFairValue), nil, nil})
		}
	}
	summary := func(name string, ls []SummaryLine) {
		for _, l := range ls {
			rows = append(rows, row{name, l.Label, b.Cell(b.Style.Number, l.Shares), b.Cell(b.Style.MoneyPerShare, l.WeightedExercisePrice), nil,
				b.Cell(b.Style.Years, l.RemainingTermYears), b.Cell(b.Style.Money, l.IntrinsicValue)})
		}
	}
	granted := func(name string, g GrantsInPeriod, assumptions bool) {
		rows = append(rows, row{name, "Grants in the period", b.Cell(b.Style.Int, g.Shares), nil, b.Cell(b.Style.MoneyPerShare, g.WeightedFairValue), nil, nil})
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
			rows = append(rows, row{name, a.label, nil, nil, a.v, nil, nil})
		}
		rows = append(rows, row{name, "Weighted-average expected term", nil, nil, nil, b.Cell(b.Style.Years, g.ExpectedTermYears), nil})
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
			b.Cell(b.Style.Years, w.RemainingTermYears), b.Cell(b.Style.Money, w.IntrinsicValue)})
	}
	rows = append(rows, row{"Share price at period end", "used for the intrinsic values (in the exercise price column)", nil, b.Cell(b.Style.MoneyPerShare, d.SharePrice), nil, nil, nil})
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

// writeCostCenters is one row per cost centre (level "cost centre") with
// its forecast quarters, followed by the grants' parts in it (level
// "grant"), then the total.
func writeCostCenters(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetCostCenters)
	}
	cols := []Column{{"Level", 12}, {"Cost centre", 18}, {"Grant", 14}, {"Grants", 8}, {"Period expense", 16}, {"Cumulative at period end", 16}, {"Unrecognized cost", 16}}
	for _, q := range e.Forecast {
		cols = append(cols, Column{q.Label + " expected", 14})
	}
	cols = append(cols, Column{"Later", 14})
	rows := 1 + len(e.ByCostCenter)
	for _, c := range e.ByCostCenter {
		rows += len(c.Parts)
	}
	t, err := b.NewTable(SheetCostCenters, cols, rows)
	if err != nil {
		return err
	}
	money := func(v float64) any { return b.Cell(b.Style.Money, v) }
	for _, c := range e.ByCostCenter {
		row := []any{"cost centre", b.Text(c.CostCenter), nil, c.Grants, money(c.Amount), money(c.Cumulative), money(c.Unrecognized)}
		for _, v := range c.Forecast {
			row = append(row, money(v))
		}
		if err := t.Row(append(row, money(c.AfterForecast))...); err != nil {
			return err
		}
		for _, p := range c.Parts {
			if err := t.Row("grant", b.Text(c.CostCenter), b.Text(p.GrantID), nil, money(p.Amount), money(p.Cumulative), money(p.Unrecognized)); err != nil {
				return err
			}
		}
	}
	row := []any{b.Cell(b.Style.Bold, "total"), nil, nil, nil, money(e.Amount), money(e.Cumulative), money(m.Expense.UnrecognizedCost)}
	for _, q := range e.Forecast {
		row = append(row, money(q.Amount))
	}
	if err := t.Row(append(row, money(e.AfterForecast))...); err != nil {
		return err
	}
	return t.Close()
}

// writeJournal is journal.csv as a sheet: one row per line of every entry,
// with the role and grant beside the file's columns.
func writeJournal(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetJournal)
	}
	cols := []Column{{"Entry", 7}, {"Date", 12}, {"Account code", 12}, {"Account", 54}, {"Cost centre", 14}, {"Debit", 18}, {"Credit", 18},
		{"Currency", 9}, {"Description", 60}, {"Role", 22}, {"Grant", 14}}
	n := 0
	for _, j := range e.Journal {
		n += len(j.Lines)
	}
	t, err := b.NewTable(SheetJournal, cols, n)
	if err != nil {
		return err
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
			if err := t.Row(j.Number, b.DateCell(j.Date), b.Text(l.AccountCode), b.Text(l.Account), b.Text(l.CostCenter), dr, cr,
				m.Company.Currency, b.Text(j.Description), l.Role, b.Text(l.GrantID)); err != nil {
				return err
			}
		}
	}
	return t.Close()
}
