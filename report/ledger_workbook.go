package report

// Workbook sheets of the ledger side of the expense: the split by cost
// centre and the expense by fiscal year.

// writeCostCenters is one row per cost centre (level "cost centre") with
// its forecast quarters, followed by the grants' parts in it (level
// "grant"), then the total.
func writeCostCenters(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetCostCenters)
	}
	cols := []Column{{"Level", 12}, {"Cost centre", 18}, {"Grant", 14}, {"Grants", 8}, {b.Cur("Period expense"), 16}, {b.Cur("Cumulative at period end"), 16}, {b.Cur("Unrecognized cost"), 16}}
	for _, q := range e.Forecast {
		cols = append(cols, Column{b.Cur(q.Label + " expected"), 14})
	}
	cols = append(cols, Column{b.Cur("Later"), 14})
	rows := 1 + len(e.ByCostCenter)
	for _, c := range e.ByCostCenter {
		rows += len(c.Parts)
	}
	t, err := b.NewTable(SheetCostCenters, cols, rows)
	if err != nil {
		return err
	}
	money := func(v float64) any { return b.Cell(b.Style.Money, v) }
	return b.rows(t, func(t *Table) error {
		for _, c := range e.ByCostCenter {
			row := []any{b.Cell(b.Style.Bold, "cost centre"), b.Text(c.CostCenter), nil, c.Grants, money(c.Amount), money(c.Cumulative), money(c.Unrecognized)}
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
		return t.Row(append(row, money(e.AfterForecast))...)
	})
}

// writeByYear is the expense of each fiscal year, recognized and expected.
func writeByYear(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetByYear)
	}
	cols := []Column{{"Fiscal year", 12}, {"Start", 12}, {"End", 12}, {b.Cur("Recognized"), 18}, {b.Cur("Expected"), 18}, {b.Cur("Total"), 18}, {"Calendar", 60}}
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
