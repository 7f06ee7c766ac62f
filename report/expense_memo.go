package report

// Memo sections of the expense attribution, the journal summary and the
// disclosure tables.

import (
	"fmt"
	"strings"

	"gonum.org/v1/plot/vg"
)

func init() {
	memoHooks = append(memoHooks,
		MemoHook{"expense", "Compensation expense for the period", (*Memo).expense},
		MemoHook{"financing", "Warrants issued in financings", (*Memo).financing},
		MemoHook{"journal", "Journal entries", (*Memo).journal},
		MemoHook{"tax", "Income tax effects", (*Memo).tax},
		MemoHook{"disclosures", "Share-based payment disclosures", (*Memo).disclosures})
}

// expenseData is what the expense templates see.
type expenseData struct {
	*Model
	E *ExpenseDetail
}

// chartQuarters is how many recognized periods (the current one included)
// the expense chart shows before the forecast.
const chartQuarters = 8

func (d *Memo) expense(m *Model) error {
	e := detail(m)
	if e == nil {
		d.Para("Expense attribution did not run for this valuation.")
		return nil
	}
	cur := m.Company.Currency
	if err := d.Text("expense", expenseData{m, e}); err != nil {
		return err
	}
	d.Sub("Key figures")
	d.Table([]Col{{"Item", 100, false}, {"Amount", 70, true}}, [][]string{
		{"Compensation expense for the period", money(e.Amount, cur)},
		{"Cumulative compensation expense to the period end", money(e.Cumulative, cur)},
		{"Unrecognized compensation cost at the period end", money(m.Expense.UnrecognizedCost, cur)},
		{"Weighted-average remaining recognition period", fixed(m.Expense.WeightedAverageRemainingYears, 2) + " years"},
	})

	d.costCenters(m, e)

	if len(e.ByGrant) <= maxGrantRows {
		d.Sub("By grant")
		cols := []Col{{"Grant", 18, false}, {"Instrument", 20, false}, {"Service", 30, false}, {"Total cost", 22, true},
			{"This period", 20, true}, {"Cumulative", 22, true}, {"Unrecognized", 22, true}, {"Years left", 16, true}}
		rows := make([][]string, 0, len(e.ByGrant)+1)
		var cost float64
		for _, g := range e.ByGrant {
			inst := g.Instrument
			if g.Liability {
				inst += " (liability)"
			}
			rows = append(rows, []string{g.GrantID, inst, g.ServiceStart.String() + " to " + g.ServiceEnd.String(),
				groupDigits(g.Cost, 2), groupDigits(g.Amount, 2), groupDigits(g.Cumulative, 2), groupDigits(g.Unrecognized, 2), fixed(g.RemainingYears, 2)})
			cost += g.Cost
		}
		rows = append(rows, []string{"\x00Total", "", "", groupDigits(cost, 2), groupDigits(e.Amount, 2), groupDigits(e.Cumulative, 2),
			groupDigits(m.Expense.UnrecognizedCost, 2), fixed(m.Expense.WeightedAverageRemainingYears, 2)})
		d.Table(cols, rows)
	} else {
		d.Sub("By grant month")
		cols := []Col{{"Grant month", 26, false}, {"Grants", 16, true}, {"Total cost", 32, true}, {"This period", 32, true},
			{"Cumulative", 32, true}, {"Unrecognized", 32, true}}
		rows := make([][]string, 0, len(e.ByGrantMonth))
		for _, g := range e.ByGrantMonth {
			rows = append(rows, []string{g.Key, count(g.Grants), groupDigits(g.Cost, 2), groupDigits(g.Amount, 2),
				groupDigits(g.Cumulative, 2), groupDigits(g.Unrecognized, 2)})
		}
		d.Table(cols, rows)
	}
	var liab [][]string
	for _, g := range e.ByGrant {
		if g.Liability {
			liab = append(liab, []string{g.GrantID, groupDigits(g.LiabilityOpen, 2), groupDigits(g.Amount, 2),
				groupDigits(g.ReclassifiedEquity, 2), groupDigits(g.LiabilityEnd, 2)})
		}
	}
	if len(liab) > 0 {
		d.Sub("Liability-classified awards")
		d.Para("Remeasured to fair value at every period end and on each exercise day; every change in fair value is compensation cost (ASC 718-30-35-3; IFRS 2.30-33). Opening liability + compensation − reclassified to equity on exercise = closing liability.")
		d.Table([]Col{{"Grant", 34, false}, {"Opening liability", 34, true}, {"Compensation", 34, true},
			{"To equity on exercise", 34, true}, {"Closing liability", 34, true}}, liab)
	}
	d.Note("Every grant and tranche, with its share counts and expected share at vest, is on the Expense sheet of valuation.xlsx.")

	d.Sub("Expense by quarter")
	periods := m.Expense.Periods
	if len(periods) > chartQuarters {
		periods = periods[len(periods)-chartQuarters:]
	}
	bars := make([]PeriodBar, 0, len(periods)+len(e.Forecast))
	for _, p := range periods {
		kind := PeriodPast
		if p.Current {
			kind = PeriodCurrent
		}
		bars = append(bars, PeriodBar{p.Label, p.Amount, kind})
	}
	for _, p := range e.Forecast {
		bars = append(bars, PeriodBar{p.Label, p.Amount, PeriodExpected})
	}
	if err := d.Chart(func(w, h vg.Length) ([]byte, error) {
		return PeriodBarsPNG("Compensation expense by quarter", bars, cur, w, h)
	}, textW, 80); err != nil {
		return err
	}
	d.Para(fmt.Sprintf("The expected expense assumes no further grants, terminations or cancellations%s. It is a budget figure, not a forecast of events.",
		map[bool]string{true: " and forfeitures at the estimated rate", false: ""}[e.Forfeitures == "estimate"]))
	rows := make([][]string, 0, len(e.Forecast)+1)
	var sum float64
	for _, p := range e.Forecast {
		rows = append(rows, []string{p.Label, p.Start.String() + " to " + p.End.String(), groupDigits(p.Amount, 2)})
		sum += p.Amount
	}
	rows = append(rows, []string{"Later", "", groupDigits(e.AfterForecast, 2)})
	rows = append(rows, []string{"\x00Total", "", groupDigits(sum+e.AfterForecast, 2)})
	d.Table([]Col{{"Quarter", 40, false}, {"Days", 70, false}, {"Expected expense (" + cur + ")", 60, true}}, rows)

	if len(e.ByFiscalYear) > 0 {
		d.Sub("Expense by fiscal year")
		d.Para("Fiscal years are " + e.FiscalCalendar + ". Recognized is what the periods to " + e.PeriodEnd.String() +
			" booked; expected is what the awards outstanding at that date will add, on the same assumptions as the forecast.")
		rows = rows[:0]
		for _, y := range e.ByFiscalYear {
			rows = append(rows, []string{y.Year, y.Start.String() + " to " + y.End.String(), groupDigits(y.Recognized, 2), groupDigits(y.Expected, 2), groupDigits(y.Total, 2)})
		}
		// The years add up to the cumulative expense and the unrecognized cost.
		rows = append(rows, []string{"\x00Total", "", groupDigits(e.Cumulative, 2), groupDigits(m.Expense.UnrecognizedCost, 2), groupDigits(e.Cumulative+m.Expense.UnrecognizedCost, 2)})
		d.Table([]Col{{"Fiscal year", 22, false}, {"Days", 46, false}, {"Recognized (" + cur + ")", 34, true}, {"Expected (" + cur + ")", 34, true}, {"Total (" + cur + ")", 34, true}}, rows)
	}
	return nil
}

func (d *Memo) journal(m *Model) error {
	e := detail(m)
	if e == nil {
		d.Para("Expense attribution did not run for this valuation.")
		return nil
	}
	if len(e.Journal) == 0 {
		d.Para("Nothing is to be booked for the period.")
		return nil
	}
	equity := "additional paid-in capital"
	if e.Framework == "ifrs2" {
		equity = "a share-based payment reserve in equity (IFRS 2)"
	}
	d.Para(fmt.Sprintf("The entries of journal.csv for the period %s to %s, in %s, dated %s. Compensation expense is booked by cost centre. Equity-classified awards credit %s; liability-classified awards credit their liability, remeasured to fair value, and every change in it is compensation. Warrants issued in financings have entries of their own, outside compensation: a liability-classified one's change in fair value is booked outside operating expense. With a tax rate, the deferred tax asset's movement is booked against the deferred tax line. Accounts are those of the Accounts sheet; a role it does not map keeps its default name and no code. Amounts are rounded to the currency's minor unit so that every entry balances and the expense lines add up to the period's expense. A catch-up for a closed period is an entry of its own, naming its grant and cause, and so is each modification of the period (its section of the memo gives the detail). Exercise proceeds are not shown.",
		e.PeriodStart, e.PeriodEnd, m.Company.Currency, e.PeriodEnd, equity))
	var rows [][]string
	for _, j := range e.Journal {
		rows = append(rows, []string{rowHeading + fmt.Sprintf("%d. %s", j.Number, j.Description)})
		for _, l := range j.Lines {
			acct := "Dr " + l.Account
			dr, cr := groupDigits(l.Debit, e.JournalDecimals), ""
			if l.Credit != 0 {
				acct, dr, cr = "    Cr "+l.Account, "", groupDigits(l.Credit, e.JournalDecimals)
			}
			rows = append(rows, []string{acct, l.AccountCode, l.CostCenter, dr, cr})
		}
	}
	d.Table([]Col{{"Entry and account", 86, false}, {"Code", 14, false}, {"Cost centre", 20, false}, {"Debit", 25, true}, {"Credit", 25, true}}, rows)
	d.Note("The same lines are on the Journal sheet of valuation.xlsx and in journal.csv, one row per line, ready to import.")
	return nil
}

// rollTable is a roll-forward, its last column the weighted average of
// the fair value that fvLabel names.
func (d *Memo) rollTable(r RollForward, price bool, fvLabel string) {
	cur := d.Currency()
	cols := []Col{{"", 70, false}, {"Shares", 30, true}}
	if price {
		cols = append(cols, Col{"Weighted-average exercise price (" + cur + ")", 35, true})
	}
	cols = append(cols, Col{fvLabel + " (" + cur + ")", 35, true})
	var rows [][]string
	for i, l := range r.Lines {
		label := l.Label
		if i == 0 || i == len(r.Lines)-1 {
			label = "\x00" + label
		}
		px, fv := "–", "–"
		if l.Shares != 0 {
			px, fv = perShare(l.WeightedExercisePrice), perShare(l.WeightedFairValue)
		}
		row := []string{label, count(l.Shares)}
		if price {
			row = append(row, px)
		}
		rows = append(rows, append(row, fv))
	}
	d.Table(cols, rows)
}

func (d *Memo) summaryTable(ls []SummaryLine) {
	cur := d.Currency()
	var rows [][]string
	for _, l := range ls {
		rows = append(rows, []string{l.Label, groupDigits(l.Shares, 0), perShare(l.WeightedExercisePrice), fixed(l.RemainingTermYears, 2), groupDigits(l.IntrinsicValue, 2)})
	}
	d.Table([]Col{{"At the period end", 50, false}, {"Shares", 26, true}, {"Weighted-average exercise price (" + cur + ")", 32, true},
		{"Weighted-average remaining contractual term (years)", 30, true}, {"Aggregate intrinsic value (" + cur + ")", 32, true}}, rows)
}

func (d *Memo) disclosures(m *Model) error {
	e := detail(m)
	if e == nil || e.Disclosures == nil {
		d.Para("Expense attribution did not run for this valuation.")
		return nil
	}
	x := e.Disclosures
	if err := d.Text("disclosures", expenseData{m, e}); err != nil {
		return err
	}
	const grantFV = "Weighted-average grant-date fair value"
	compWarrants := rollHasShares(x.Warrants)
	d.Sub("Options")
	d.rollTable(x.Options, true, grantFV)
	d.summaryTable(x.OptionsAtEnd)
	d.rangeTable("Options", x.OptionRanges)
	g := x.OptionGrants
	if g.Grants == 0 {
		d.Para("No options were granted in the period.")
	} else {
		grantsWord := "grants"
		if g.Grants == 1 {
			grantsWord = "grant"
		}
		text := fmt.Sprintf("%s options were granted in the period (%s %s) at a weighted-average grant-date fair value of %s per share.",
			count(g.Shares), count(g.Grants), grantsWord, perShare(g.WeightedFairValue))
		if g.Measured > 0 {
			text += fmt.Sprintf(" Their weighted-average valuation assumptions: volatility %s, risk-free rate %s, dividend yield %s, expected term %s years.",
				pct(g.Volatility), pct(g.RiskFreeRate), pct(g.DividendYield), fixed(g.ExpectedTermYears, 2))
		}
		d.Para(text)
	}
	d.Sub("Restricted stock units (nonvested)")
	d.rollTable(x.RSUs, false, grantFV)
	d.Sub("Exercises and vesting in the period")
	d.activityTable(x, compWarrants)
	d.Sub("Warrants granted for services")
	if !compWarrants {
		d.Para("No warrant was granted for services.")
	} else {
		d.rollTable(x.Warrants, true, grantFV)
		d.summaryTable(x.WarrantsAtEnd)
		d.rangeTable("Warrants", x.WarrantRanges)
	}
	if len(e.Financing) > 0 {
		d.Para(fmt.Sprintf("The %s warrants issued in financings are not share-based payment and are in none of these tables; section %d shows them.",
			count(len(e.Financing)), d.sections["financing"]))
	}
	if len(x.WarrantsOutstanding) > 0 {
		var rows [][]string
		for _, w := range x.WarrantsOutstanding {
			rows = append(rows, []string{w.GrantID, w.Classification, count(w.Shares), count(w.Exercisable), perShare(w.Strike),
				w.ExpiryDate.String(), perShare(w.FairValuePerShare), groupDigits(w.IntrinsicValue, 2)})
		}
		d.Table([]Col{{"Grant", 20, false}, {"Classification", 24, false}, {"Outstanding", 20, true}, {"Exercisable", 20, true},
			{"Strike", 18, true}, {"Expiry", 22, false}, {"Fair value per share", 22, true}, {"Intrinsic value", 24, true}}, rows)
	}
	var broken []string
	for _, r := range []RollForward{x.Options, x.RSUs, x.Warrants, x.FinancingWarrants} {
		if !r.Balances {
			broken = append(broken, r.Instrument)
		}
	}
	if len(broken) > 0 {
		d.Para("Check: the roll-forward of " + strings.Join(broken, ", ") + " does not balance; see the warnings.")
	} else {
		d.Note("Each roll-forward balances: start + granted − vested − exercised − forfeited − cancelled − expired = end. The same tables are on the Disclosures sheet of valuation.xlsx.")
	}
	return nil
}

// costCenters is the expense split by cost centre, with the next four
// forecast quarters.
func (d *Memo) costCenters(m *Model, e *ExpenseDetail) {
	d.Sub("By cost centre")
	d.Para("Each day of service is expensed in the cost centre it was rendered in (the Grants column cost_center and the Transfers sheet); a later change of estimate or a reversal is shared among the cost centres in proportion to the days of service each had. The cost centres add up to the totals.")
	nq := min(4, len(e.Forecast))
	cols := []Col{{"Cost centre", 26, false}, {"This period", 22, true}, {"Cumulative", 22, true}, {"Unrecognized", 22, true}}
	w := 78.0 / float64(max(nq, 1))
	for _, q := range e.Forecast[:nq] {
		cols = append(cols, Col{q.Label + " e", w, true})
	}
	rows := make([][]string, 0, len(e.ByCostCenter)+1)
	for _, c := range e.ByCostCenter {
		row := []string{c.CostCenter, groupDigits(c.Amount, 2), groupDigits(c.Cumulative, 2), groupDigits(c.Unrecognized, 2)}
		for _, v := range c.Forecast[:nq] {
			row = append(row, groupDigits(v, 2))
		}
		rows = append(rows, row)
	}
	total := []string{"\x00Total", groupDigits(e.Amount, 2), groupDigits(e.Cumulative, 2), groupDigits(m.Expense.UnrecognizedCost, 2)}
	for _, q := range e.Forecast[:nq] {
		total = append(total, groupDigits(q.Amount, 2))
	}
	d.Table(cols, append(rows, total))
	d.Note("e = expected. Every forecast quarter by cost centre, and each grant's part in each cost centre, are on the Expense by cost centre sheet of valuation.xlsx.")
}

// financing is the section on warrants issued in financings: not
// share-based payment, kept apart from every compensation figure.
func (d *Memo) financing(m *Model) error {
	e := detail(m)
	if e == nil {
		d.Para("Expense attribution did not run for this valuation.")
		return nil
	}
	if len(e.Financing) == 0 {
		d.Para("The schedule has no warrant issued in a financing.")
		return nil
	}
	if err := d.Text("financing", expenseData{m, e}); err != nil {
		return err
	}
	cur := m.Company.Currency
	var eq, li [][]string
	var eqTotal float64
	var open, issued, change, reclass, closing float64
	for _, w := range e.Financing {
		if w.Classification == "liability" {
			li = append(li, []string{w.GrantID, perShare(w.FairValue), groupDigits(w.LiabilityOpen, 2), groupDigits(w.Issued, 2),
				groupDigits(w.FairValueChange, 2), groupDigits(w.Reclassified, 2), groupDigits(w.LiabilityEnd, 2)})
			open, issued, change, reclass, closing = open+w.LiabilityOpen, issued+w.Issued, change+w.FairValueChange, reclass+w.Reclassified, closing+w.LiabilityEnd
			continue
		}
		eq = append(eq, []string{w.GrantID, w.Holder, w.IssueDate.String(), count(w.Shares), perShare(w.FairValueAtIssue),
			groupDigits(w.ValueAtIssue, 2), count(w.Outstanding)})
		eqTotal += w.ValueAtIssue
	}
	if len(eq) > 0 {
		d.Sub("Classified in equity: measured once, at issue")
		if len(eq) > 1 {
			eq = append(eq, []string{"\x00Total", "", "", "", "", groupDigits(eqTotal, 2), ""})
		}
		d.Table([]Col{{"Grant", 22, false}, {"Holder", 26, false}, {"Issued", 22, false}, {"Warrants", 22, true},
			{"Fair value per warrant at issue", 26, true}, {"Value at issue (" + cur + ")", 30, true}, {"Outstanding at the period end", 22, true}}, eq)
	}
	if len(li) > 0 {
		d.Sub("Classified as liabilities: remeasured to fair value")
		if len(li) > 1 {
			li = append(li, []string{"\x00Total", "", groupDigits(open, 2), groupDigits(issued, 2), groupDigits(change, 2), groupDigits(reclass, 2), groupDigits(closing, 2)})
		}
		d.Table([]Col{{"Grant", 22, false}, {"Fair value per warrant at the period end", 26, true}, {"Opening liability", 24, true},
			{"Recognized at issue", 22, true}, {"Change in fair value", 24, true}, {"To equity on exercise", 24, true}, {"Closing liability", 24, true}}, li)
		d.Para(fmt.Sprintf("Change in fair value of the warrant liability for the period, outside operating expense: %s (a positive change is a loss). Opening liability + recognized at issue + change in fair value − reclassified to equity on exercise = closing liability.",
			money(e.FinancingFairValueChange, cur)))
	}
	if x := e.Disclosures; x != nil {
		d.Sub("Financing warrants outstanding")
		d.rollTable(x.FinancingWarrants, true, "Weighted-average fair value at issue")
	}
	return nil
}

// activityTable is the exercises and vesting of the period by instrument
// (ASC 718-10-50-2; IFRS 2.45(c)).
func (d *Memo) activityTable(x *Disclosures, warrants bool) {
	cur := d.Currency()
	type col struct {
		name string
		a    Activity
		rsu  bool
	}
	cs := []col{{"Options", x.OptionActivity, false}}
	if warrants {
		cs = append(cs, col{"Warrants", x.WarrantActivity, false})
	}
	cs = append(cs, col{"RSUs", x.RSUActivity, true})
	line := func(label string, f func(c col) string) []string {
		row := []string{label}
		for _, c := range cs {
			row = append(row, f(c))
		}
		return row
	}
	dash := func(c col, s string) string {
		if c.rsu {
			return "–"
		}
		return s
	}
	rows := [][]string{
		line("Exercised (shares)", func(c col) string { return dash(c, count(c.a.Exercised)) }),
		line("Total intrinsic value of exercises ("+cur+")", func(c col) string { return dash(c, groupDigits(c.a.IntrinsicValueExercised, 2)) }),
		line("Cash received from exercises ("+cur+")", func(c col) string { return dash(c, groupDigits(c.a.CashReceived, 2)) }),
		line("Weighted-average share price at exercise ("+cur+")", func(c col) string {
			if c.a.Exercised == c.a.Unpriced {
				return "–"
			}
			return dash(c, perShare(c.a.WeightedSharePriceAtExercise))
		}),
		line("Vested (shares)", func(c col) string { return count(c.a.Vested) }),
		line("Total fair value of awards vested ("+cur+")", func(c col) string { return groupDigits(c.a.FairValueVested, 2) }),
	}
	cols := []Col{{"In the period", 80, false}}
	for _, c := range cs {
		cols = append(cols, Col{c.name, 90 / float64(len(cs)), true})
	}
	d.Table(cols, rows)
	var unpriced []string
	for _, c := range cs {
		if c.a.Unpriced > 0 {
			unpriced = append(unpriced, fmt.Sprintf("%s %s", count(c.a.Unpriced), strings.ToLower(c.name)))
		}
	}
	if len(unpriced) > 0 {
		d.Note("No share price is known on the date of the exercise of " + strings.Join(unpriced, " and ") + ": those are left out of the intrinsic value and the share price at exercise.")
	}
}

// rangeTable is the options or warrants outstanding at the period end by
// range of exercise prices (IFRS 2.45(d)).
func (d *Memo) rangeTable(what string, rs []PriceRange) {
	if len(rs) == 0 {
		return
	}
	cur := d.Currency()
	rows := make([][]string, 0, len(rs))
	for _, r := range rs {
		rng := perShare(r.Low)
		if r.High != r.Low {
			rng += " – " + perShare(r.High)
		}
		exPx := "–"
		if r.Exercisable > 0 {
			exPx = perShare(r.ExercisableWeightedPrice)
		}
		rows = append(rows, []string{rng, count(r.Outstanding), perShare(r.WeightedExercisePrice), fixed(r.WeightedRemainingTermYears, 2),
			count(r.Exercisable), exPx})
	}
	d.Table([]Col{{what + " at the period end by range of exercise prices (" + cur + ")", 40, false}, {"Outstanding", 22, true},
		{"Weighted-average exercise price", 30, true}, {"Weighted-average remaining contractual life (years)", 28, true},
		{"Exercisable", 20, true}, {"Weighted-average exercise price, exercisable", 30, true}}, rows)
}

// rollHasShares reports whether any line of r has shares.
func rollHasShares(r RollForward) bool {
	for _, l := range r.Lines {
		if l.Shares != 0 {
			return true
		}
	}
	return false
}
