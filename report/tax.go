package report

// The income tax effect: its model, memo section and workbook sheet.

import (
	"fmt"

	"grantworth/grants/accounting"
)

// Tax is the income tax effect of the period's share-based compensation
// (the accounting package's notes on income taxes). It is nil when the
// schedule gives no tax rate.
type Tax struct {
	Framework         string  `json:"framework"` // asc718 or ifrs2
	RateAtPeriodStart float64 `json:"rate_at_period_start"`
	Rate              float64 `json:"rate"` // at the period end
	// The share prices the IFRS 2 estimated deductions use (0 under ASC 718).
	SharePriceAtPeriodStart float64 `json:"share_price_at_period_start"`
	SharePrice              float64 `json:"share_price"`

	AssetAtPeriodStart  float64 `json:"deferred_tax_asset_at_period_start"`
	Asset               float64 `json:"deferred_tax_asset"`
	EquityAtPeriodStart float64 `json:"in_equity_at_period_start"`
	Equity              float64 `json:"in_equity"`
	Benefit             float64 `json:"deferred_tax_benefit"` // in profit or loss; negative: an expense
	ToEquity            float64 `json:"to_equity"`
	NotDeductible       int     `json:"grants_not_deductible"`

	ByGrant     []TaxGrant      `json:"by_grant"`
	Settlements []TaxSettlement `json:"settlements"`
}

// TaxGrant is one deductible grant's deferred tax.
type TaxGrant struct {
	GrantID            string  `json:"grant_id"`
	BasisAtPeriodStart float64 `json:"temporary_difference_at_period_start"`
	Basis              float64 `json:"temporary_difference"`
	Cost               float64 `json:"cost_of_outstanding"`
	AssetAtPeriodStart float64 `json:"deferred_tax_asset_at_period_start"`
	Asset              float64 `json:"deferred_tax_asset"`
	Equity             float64 `json:"in_equity"`
}

// TaxSettlement is a deduction taken or lost in the period.
type TaxSettlement struct {
	GrantID     string  `json:"grant_id"`
	Date        Date    `json:"date"`
	Event       string  `json:"event"` // exercised, vested, expired, forfeited, cancelled
	Shares      int64   `json:"shares"`
	Computed    bool    `json:"computed"`
	SharePrice  float64 `json:"share_price"`
	PriceSource string  `json:"share_price_source"`
	Deduction   float64 `json:"deduction"`
	Cost        float64 `json:"cost"`
	Rate        float64 `json:"rate"`
	Excess      float64 `json:"excess_tax_benefit"` // negative: a shortfall
	ToEquity    float64 `json:"to_equity"`
	Note        string  `json:"note"`
}

// taxModel lays the books' tax effect into the Model's types.
func taxModel(t *accounting.TaxReport) *Tax {
	if t == nil {
		return nil
	}
	m := &Tax{Framework: string(t.Framework), RateAtPeriodStart: t.RateOpen, Rate: t.RateEnd,
		AssetAtPeriodStart: t.AssetOpen, Asset: t.AssetEnd, EquityAtPeriodStart: t.EquityOpen, Equity: t.EquityEnd,
		Benefit: t.Benefit, ToEquity: t.ToEquity, NotDeductible: t.NotDeductible,
		ByGrant: make([]TaxGrant, 0, len(t.Grants)), Settlements: make([]TaxSettlement, 0, len(t.Settlements))}
	if m.Framework == "" {
		m.Framework = "asc718"
	}
	if m.Framework == "ifrs2" {
		m.SharePriceAtPeriodStart, m.SharePrice = t.PriceOpen, t.PriceEnd
	}
	for _, g := range t.Grants {
		m.ByGrant = append(m.ByGrant, TaxGrant{GrantID: g.GrantID, BasisAtPeriodStart: g.BasisOpen, Basis: g.BasisEnd, Cost: g.CostEnd,
			AssetAtPeriodStart: g.AssetOpen, Asset: g.AssetEnd, Equity: g.EquityEnd})
	}
	for _, s := range t.Settlements {
		m.Settlements = append(m.Settlements, TaxSettlement{GrantID: s.GrantID, Date: DateOf(s.Date), Event: s.Kind, Shares: s.Shares,
			Computed: s.Computed, SharePrice: s.SharePrice, PriceSource: s.PriceSource, Deduction: s.Deduction, Cost: s.Cost,
			Rate: s.Rate, Excess: s.Excess, ToEquity: s.ToEquity, Note: s.Note})
	}
	return m
}

// SheetTax is the workbook sheet of the tax effect.
const SheetTax = "Income tax"

// taxData is what the tax template sees.
type taxData struct {
	*Model
	T *Tax
}

func (d *Memo) tax(m *Model) error {
	e := detail(m)
	if e == nil {
		d.Para("Expense attribution did not run for this valuation.")
		return nil
	}
	x := e.Tax
	if x == nil {
		d.Para("The Assumptions sheet gives no tax_rate: no deferred tax is worked out or booked. Give the statutory rate, and mark on the Grants sheet (tax_deductible) the awards that give no deduction, to see the deferred tax asset, the period's deferred tax benefit and the excess tax benefits and shortfalls of the period's exercises and vestings.")
		return nil
	}
	cur := m.Company.Currency
	if err := d.Text("tax", taxData{m, x}); err != nil {
		return err
	}
	d.Sub("Key figures")
	rows := [][]string{
		{"Statutory rate at the period end (at its start)", pct(x.Rate) + " (" + pct(x.RateAtPeriodStart) + ")"},
		{"Deferred tax asset at the period start", money(x.AssetAtPeriodStart, cur)},
		{"Deferred tax benefit of the period (profit or loss)", money(x.Benefit, cur)},
	}
	if x.Framework == "ifrs2" {
		rows = append(rows,
			[]string{"Recognized in equity in the period (IAS 12.68C)", money(x.ToEquity, cur)},
			[]string{"Share price for the estimated deductions, start and end", perShare(x.SharePriceAtPeriodStart) + " and " + perShare(x.SharePrice)})
	}
	rows = append(rows, []string{"Deferred tax asset at the period end", money(x.Asset, cur)})
	if x.Framework == "ifrs2" {
		rows = append(rows, []string{"of which recognized in equity", money(x.Equity, cur)})
	}
	rows = append(rows, []string{"Grants that give no deduction (no asset)", count(x.NotDeductible)})
	d.Table([]Col{{"Item", 110, false}, {"Amount", 60, true}}, rows)

	d.Sub("Deductions taken or lost in the period")
	if len(x.Settlements) == 0 {
		d.Para("No deductible award was exercised, vested (RSUs) or lapsed in the period.")
	} else {
		var rows [][]string
		for _, s := range x.Settlements {
			if !s.Computed {
				rows = append(rows, []string{s.GrantID, s.Date.String(), s.Event, count(s.Shares), "–", "–", groupDigits(s.Cost, 2), "not computed"})
				continue
			}
			px := "–"
			if s.Event == "exercised" || s.Event == "vested" {
				px = perShare(s.SharePrice)
			}
			rows = append(rows, []string{s.GrantID, s.Date.String(), s.Event, count(s.Shares), px, groupDigits(s.Deduction, 2), groupDigits(s.Cost, 2), groupDigits(s.Excess, 2)})
		}
		d.Table([]Col{{"Grant", 18, false}, {"Date", 20, false}, {"Event", 18, false}, {"Shares", 18, true}, {"Share price", 20, true},
			{"Deduction (" + cur + ")", 26, true}, {"Cost (" + cur + ")", 24, true}, {"Excess (shortfall)", 26, true}}, rows)
		for _, s := range x.Settlements {
			if !s.Computed {
				d.Note(fmt.Sprintf("%s on %s: not computed, %s.", s.GrantID, s.Date, s.Note))
			}
		}
	}
	d.Note("Each deductible grant's temporary difference and asset, and every deduction above, are on the Income tax sheet of valuation.xlsx.")
	return nil
}

// writeTax is one row per deductible grant (kind "grant") with its
// temporary difference and asset, then one per deduction taken or lost
// (kind "deduction"), then the total.
func writeTax(b *Book, m *Model) error {
	e := detail(m)
	if e == nil {
		return notRun(b, SheetTax)
	}
	if e.Tax == nil {
		return noteSheet(b, SheetTax, "No tax_rate is given on the Assumptions sheet: no tax effect is worked out.")
	}
	x := e.Tax
	cols := []Column{{"Kind", 11}, {"Grant", 14}, {"Date", 13}, {"Event", 11}, {"Shares", 11}, {b.Cur("Share price"), 12},
		{b.Cur("Temporary difference, period start"), 22}, {b.Cur("Temporary difference, period end"), 22}, {b.Cur("Cost of outstanding"), 16},
		{b.Cur("Deferred tax asset, period start"), 22}, {b.Cur("Deferred tax asset, period end"), 22}, {b.Cur("In equity at period end"), 14},
		{b.Cur("Deduction"), 16}, {b.Cur("Cost"), 16}, {"Rate", 9}, {b.Cur("Excess tax benefit (shortfall)"), 16}, {b.Cur("To equity"), 14}, {"Note", 50}}
	t, err := b.NewTable(SheetTax, cols, len(x.ByGrant)+len(x.Settlements)+1)
	if err != nil {
		return err
	}
	money := func(v float64) any { return b.Cell(b.Style.Money, v) }
	idle := 0 // grants with no difference and no asset at either date
	for _, g := range x.ByGrant {
		if g.BasisAtPeriodStart == 0 && g.Basis == 0 && g.Cost == 0 && g.AssetAtPeriodStart == 0 && g.Asset == 0 && g.Equity == 0 {
			idle++
			continue
		}
		if err := t.Row("grant", b.Text(g.GrantID), nil, nil, nil, nil, money(g.BasisAtPeriodStart), money(g.Basis), money(g.Cost),
			money(g.AssetAtPeriodStart), money(g.Asset), money(g.Equity), nil, nil, nil, nil, nil, nil); err != nil {
			return err
		}
	}
	for _, s := range x.Settlements {
		var px, ded, exc, eq any
		if s.Computed {
			ded, exc, eq = money(s.Deduction), money(s.Excess), money(s.ToEquity)
			if s.Event == "exercised" || s.Event == "vested" {
				px = b.Cell(b.Style.MoneyPerShare, s.SharePrice)
			}
		}
		note := s.Note
		if note == "" {
			note = s.PriceSource
		}
		if err := t.Row("deduction", b.Text(s.GrantID), b.DateCell(s.Date), s.Event, b.Cell(b.Style.Int, s.Shares), px, nil, nil, nil, nil, nil, nil,
			ded, money(s.Cost), b.Cell(b.Style.Percent, s.Rate), exc, eq, note); err != nil {
			return err
		}
	}
	if err := t.Row(b.Cell(b.Style.Bold, "total"), nil, nil, nil, nil, nil, nil, nil, nil, money(x.AssetAtPeriodStart), money(x.Asset), money(x.Equity),
		nil, nil, nil, nil, nil, taxTotalNote(x, idle)); err != nil {
		return err
	}
	return t.Close()
}

// taxTotalNote is the Income tax sheet's total line's note: the period's
// benefit, what went to equity, and how many deductible grants are left
// out for having nothing outstanding at either date.
func taxTotalNote(x *Tax, idle int) string {
	note := fmt.Sprintf("deferred tax benefit of the period %s; to equity %s", groupDigits(x.Benefit, 2), groupDigits(x.ToEquity, 2))
	if idle > 0 {
		note += fmt.Sprintf("; %d deductible %s with no temporary difference at either date not listed", idle, map[bool]string{true: "grant", false: "grants"}[idle == 1])
	}
	return note
}
