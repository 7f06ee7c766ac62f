package report

// The reconciliation to the prior close: its model, its memo section and
// its workbook sheet.

import (
	"fmt"
	"strings"

	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
)

// SheetReconciliation is the workbook sheet of the reconciliation.
const SheetReconciliation = "Reconciliation"

func init() {
	memoHooks = append(memoHooks, MemoHook{"reconciliation", "Reconciliation to the prior close", (*Memo).reconciliation})
	sheetHooks = append(sheetHooks, SheetHook{SheetReconciliation, writeReconciliation})
}

// Reconciliation is the walk from the prior close to this one.
type Reconciliation struct {
	PriorValuationDate Date `json:"prior_valuation_date"`
	// How many grants kept the grant-date values the prior close filed,
	// were measured again as a correction, or were measured first now.
	Locked    int `json:"grants_locked"`
	Corrected int `json:"grants_corrected"`
	Measured  int `json:"grants_measured"`

	UnrecognizedCost Walk `json:"unrecognized_cost"`
	Expense          Walk `json:"expense"`
	// WarrantLiability walks the liability of liability-classified awards
	// (warrants granted for services); the financing warrants' liability
	// rolls in expense.financing_warrants.
	WarrantLiability  *Walk       `json:"warrant_liability"`
	AwardsOutstanding []CountWalk `json:"awards_outstanding"`
	CatchUps          []CatchUp   `json:"catch_ups"`
	// Drift lists the locked grants that today's inputs would value
	// differently, by more than the error estimate: their values are
	// kept, and this says by how much and why.
	Drift []Drift `json:"drift"`
}

// Drift is a locked grant's fair value per share as filed and from
// today's inputs, and the inputs that differ.
type Drift struct {
	GrantID       string  `json:"grant_id"`
	FiledPerShare float64 `json:"filed_fair_value_per_share"`
	TodayPerShare float64 `json:"today_fair_value_per_share"`
	Inputs        string  `json:"inputs_that_differ"`
}

// Walk rolls an amount from an opening balance (none for the period's
// expense) through its movements to the closing one; amounts are rounded
// to the cent and add up exactly.
type Walk struct {
	Opening *WalkLine  `json:"opening"`
	Lines   []WalkLine `json:"lines"`
	Closing WalkLine   `json:"closing"`
	AddsUp  bool       `json:"adds_up"`
}

// WalkLine is one line of a Walk.
type WalkLine struct {
	Key    string  `json:"key"`
	Label  string  `json:"label"`
	Amount float64 `json:"amount"`
}

// CountWalk rolls the number of awards of one instrument.
type CountWalk struct {
	Instrument string      `json:"instrument"`
	Basis      string      `json:"basis"` // outstanding, or nonvested for RSUs
	Lines      []CountLine `json:"lines"`
	AddsUp     bool        `json:"adds_up"`
}

// CountLine is one line of a CountWalk.
type CountLine struct {
	Key    string `json:"key"`
	Label  string `json:"label"`
	Shares int64  `json:"shares"`
}

// CatchUp is compensation booked in this period for a closed one.
type CatchUp struct {
	GrantID       string  `json:"grant_id"`
	Cause         string  `json:"cause"`
	Detail        string  `json:"detail"`
	Amount        float64 `json:"amount"`
	BookedAgainst string  `json:"booked_against"` // equity, share-based payment liability, or financing proceeds
}

func walkModel(w accounting.Walk) Walk {
	line := func(l accounting.WalkLine) WalkLine { return WalkLine{Key: l.Key, Label: l.Label, Amount: l.Amount} }
	out := Walk{Closing: line(w.Closing), Lines: []WalkLine{}, AddsUp: w.Check() == nil}
	if w.Opening != nil {
		o := line(*w.Opening)
		out.Opening = &o
	}
	for _, l := range w.Moves {
		out.Lines = append(out.Lines, line(l))
	}
	return out
}

// reconciliationModel lays out r and the drift of the locked grants of v.
func reconciliationModel(r *accounting.Reconciliation, v *pricing.Valuation) *Reconciliation {
	out := &Reconciliation{PriorValuationDate: DateOf(r.Prior.ValuationDate), Locked: r.Locked, Corrected: r.Corrected, Measured: r.Measured,
		UnrecognizedCost: walkModel(r.Unrecognized), Expense: walkModel(r.Expense), AwardsOutstanding: []CountWalk{}, CatchUps: []CatchUp{}, Drift: []Drift{}}
	for _, gv := range v.Grants {
		if d := gv.Drift; d != nil {
			out.Drift = append(out.Drift, Drift{GrantID: gv.Inputs.Grant.ID, FiledPerShare: d.Filed, TodayPerShare: d.Today, Inputs: strings.Join(d.Changes, "; ")})
		}
	}
	if r.Liability != nil {
		w := walkModel(*r.Liability)
		out.WarrantLiability = &w
	}
	for _, c := range r.Outstanding {
		cw := CountWalk{Instrument: string(c.Instrument), Basis: "outstanding", AddsUp: c.Check() == nil}
		if c.Nonvested {
			cw.Basis = "nonvested"
		}
		for _, l := range c.Lines {
			cw.Lines = append(cw.Lines, CountLine{Key: l.Key, Label: l.Label, Shares: l.Shares})
		}
		out.AwardsOutstanding = append(out.AwardsOutstanding, cw)
	}
	for _, c := range r.CatchUps {
		against := "equity"
		switch {
		case c.Financing:
			against = "financing proceeds"
		case c.Liability:
			against = "share-based payment liability"
		}
		out.CatchUps = append(out.CatchUps, CatchUp{GrantID: c.GrantID, Cause: string(c.Cause), Detail: c.Detail, Amount: c.Amount, BookedAgainst: against})
	}
	return out
}

// priorModel identifies the prior close p.
func priorModel(p *accounting.Prior) *PriorClose {
	return &PriorClose{Path: p.Path, SHA256: p.SHA256, ValuationDate: DateOf(p.ValuationDate), ToolVersion: p.ToolVersion}
}

func (d *Memo) walkTable(w Walk, cur string) {
	var rows [][]string
	if w.Opening != nil {
		rows = append(rows, []string{"\x00" + w.Opening.Label, groupDigits(w.Opening.Amount, 2)})
	}
	for _, l := range w.Lines {
		rows = append(rows, []string{l.Label, groupDigits(l.Amount, 2)})
	}
	rows = append(rows, []string{"\x00" + w.Closing.Label, groupDigits(w.Closing.Amount, 2)})
	d.Table([]Col{{"", 130, false}, {cur, 40, true}}, rows)
}

func (d *Memo) reconciliation(m *Model) error {
	r := m.Reconciliation
	if r == nil {
		d.Para("This close was valued without a prior close: every grant was measured from the schedule, and the opening balances of the period are the schedule's history computed afresh. When the next quarter is closed with this one's output as its prior (value --prior), the grant-date values filed here stay locked, the expense booked here is its opening balance, and this section walks from one close to the other.")
		return nil
	}
	cur := m.Company.Currency
	p := m.Prior
	d.Para(fmt.Sprintf("This close follows the prior close of %s (%s, written by grantworth %s). Closed periods stand as that close booked them: its cumulative expense per grant and tranche is this period's opening balance, and whatever changes history (an event dated in a closed period but recorded only now, a corrected vesting or fair value, a change in the forfeiture estimate) is booked in this period as a catch-up, shown below with its cause. Of the grants valued, %s kept the grant-date fair values that close filed (ASC 718-10-30-6, IFRS 2.16), %s were measured again as the correction of an error, and %s were measured for the first time; liability-classified warrants are remeasured at every close.",
		r.PriorValuationDate, p.Path, p.ToolVersion, count(r.Locked), count(r.Corrected), count(r.Measured)))
	d.Sub("Unrecognized compensation cost")
	d.walkTable(r.UnrecognizedCost, cur)
	d.Sub("Compensation expense of the period")
	d.walkTable(r.Expense, cur)
	if r.WarrantLiability != nil {
		d.Sub("Liability of liability-classified awards")
		d.walkTable(*r.WarrantLiability, cur)
	}
	if len(r.AwardsOutstanding) > 0 {
		d.Sub("Awards outstanding")
		cols := []Col{{"", 100, false}}
		for _, c := range r.AwardsOutstanding {
			cols = append(cols, Col{plural(c.Instrument) + " (" + c.Basis + ")", 30, true})
		}
		d.Table(cols, countRows(r.AwardsOutstanding))
	}
	d.Sub("Catch-ups for closed periods")
	if len(r.CatchUps) == 0 {
		d.Para("None: the history of the closed periods, recomputed from this schedule, is what the prior close booked.")
	} else {
		var rows [][]string
		var sum float64
		for _, c := range r.CatchUps {
			rows = append(rows, []string{c.GrantID, strings.ReplaceAll(c.Cause, "_", " "), c.Detail, groupDigits(c.Amount, 2)})
			sum += c.Amount
		}
		rows = append(rows, []string{"\x00Total", "", "", groupDigits(sum, 2)})
		d.Table([]Col{{"Grant", 18, false}, {"Cause", 30, false}, {"What changed", 92, false}, {"Expense (" + cur + ")", 30, true}}, rows)
	}
	if len(r.Drift) > 0 {
		d.Sub("Locked values that today's inputs would change")
		d.Para(fmt.Sprintf("%s grants keep the grant-date fair values filed at the prior close although today's inputs would give other values (by more than the error estimate). Grant-date fair values are not remeasured (ASC 718-10-30-6, IFRS 2.16): a changed estimate applies to later grants, through an Assumptions row with its effective_date. If a filed value was an error, value --correct GRANT measures it again and books the difference as a catch-up.", count(len(r.Drift))))
		rows := make([][]string, 0, min(len(r.Drift), maxGrantRows))
		for _, x := range r.Drift[:min(len(r.Drift), maxGrantRows)] {
			rows = append(rows, []string{x.GrantID, perShare(x.FiledPerShare), perShare(x.TodayPerShare), x.Inputs})
		}
		d.Table([]Col{{"Grant", 18, false}, {"Filed", 24, true}, {"Today's inputs", 24, true}, {"Inputs that differ", 104, false}}, rows)
		if len(r.Drift) > maxGrantRows {
			d.Note(fmt.Sprintf("The first %d of %s are shown; every one is on the Reconciliation sheet of valuation.xlsx.", maxGrantRows, count(len(r.Drift))))
		}
	}
	var broken []string
	for _, w := range []Walk{r.UnrecognizedCost, r.Expense} {
		if !w.AddsUp {
			broken = append(broken, w.Closing.Label)
		}
	}
	if len(broken) > 0 {
		d.Para("Check: " + strings.Join(broken, ", ") + " does not add up; see the warnings.")
	} else {
		d.Note("Every walk adds up to the cent: each amount is rounded to the cent, the movements sharing the rounding by the largest remainder so that they add up to the closing less the opening balance. The same tables are on the Reconciliation sheet of valuation.xlsx.")
	}
	return nil
}

func plural(instrument string) string {
	switch instrument {
	case Option:
		return "Options"
	case Warrant:
		return "Warrants"
	case RSU:
		return "RSUs"
	}
	return instrument
}

// countKeys is the order of the lines of the count walks, side by side.
var countKeys = []string{"opening", "catch_ups", "granted", "vested", "exercised", "forfeited", "cancelled", "expired", "closing"}

// countRows lays the count walks side by side: one row per line key.
func countRows(ws []CountWalk) [][]string {
	labels := map[string]string{}
	for _, w := range ws {
		for _, l := range w.Lines {
			labels[l.Key] = l.Label
		}
	}
	var keys []string
	for _, k := range countKeys {
		if _, ok := labels[k]; ok {
			keys = append(keys, k)
		}
	}
	var rows [][]string
	for _, k := range keys {
		label := labels[k]
		switch k {
		case "opening":
			label = "\x00At the prior close"
		case "closing":
			label = "\x00At this close"
		}
		row := []string{label}
		for _, w := range ws {
			cell := "–"
			for _, l := range w.Lines {
				if l.Key == k {
					cell = count(l.Shares)
				}
			}
			row = append(row, cell)
		}
		rows = append(rows, row)
	}
	return rows
}

// writeReconciliation writes the walks and the catch-ups, one block
// under another.
func writeReconciliation(b *Book, m *Model) error {
	cols := []Column{{"Walk", 22}, {"Line", 70}, {"Key", 24}, {"Amount or shares", 18}, {"Grant", 14}, {"Detail", 80}}
	r := m.Reconciliation
	if r == nil {
		t, err := b.NewTable(SheetReconciliation, cols, 1)
		if err != nil {
			return err
		}
		if err := t.Row(nil, b.Text("This close was valued without a prior close (value --prior); there is nothing to reconcile to.")); err != nil {
			return err
		}
		return t.Close()
	}
	n := 0
	for _, w := range []Walk{r.UnrecognizedCost, r.Expense} {
		n += len(w.Lines) + 2
	}
	if r.WarrantLiability != nil {
		n += len(r.WarrantLiability.Lines) + 2
	}
	for _, c := range r.AwardsOutstanding {
		n += len(c.Lines)
	}
	n += len(r.CatchUps) + len(r.Drift)
	t, err := b.NewTable(SheetReconciliation, cols, n)
	if err != nil {
		return err
	}
	money := func(v float64) any { return b.Cell(b.Style.MoneyTagged, v) }
	walk := func(name string, w Walk) error {
		if w.Opening != nil {
			if err := t.Row(name, b.Text(w.Opening.Label), w.Opening.Key, money(w.Opening.Amount)); err != nil {
				return err
			}
		}
		for _, l := range w.Lines {
			if err := t.Row(name, b.Text(l.Label), l.Key, money(l.Amount)); err != nil {
				return err
			}
		}
		return t.Row(name, b.Cell(b.Style.Bold, w.Closing.Label), w.Closing.Key, money(w.Closing.Amount))
	}
	if err := walk("Unrecognized cost", r.UnrecognizedCost); err != nil {
		return err
	}
	if err := walk("Expense", r.Expense); err != nil {
		return err
	}
	if r.WarrantLiability != nil {
		if err := walk("Liability of liability-classified awards", *r.WarrantLiability); err != nil {
			return err
		}
	}
	for _, c := range r.AwardsOutstanding {
		for _, l := range c.Lines {
			if err := t.Row(plural(c.Instrument)+" "+c.Basis, b.Text(l.Label), l.Key, b.Cell(b.Style.Int, l.Shares)); err != nil {
				return err
			}
		}
	}
	for _, c := range r.CatchUps {
		if err := t.Row("Catch-up", b.Text(strings.ReplaceAll(c.Cause, "_", " ")), c.Cause, money(c.Amount), b.Text(c.GrantID), b.Text(c.Detail)); err != nil {
			return err
		}
	}
	for _, x := range r.Drift {
		label := fmt.Sprintf("Locked at %s a share; today's inputs give %s", perShare(x.FiledPerShare), perShare(x.TodayPerShare))
		if err := t.Row("Locked value", b.Text(label), "drift", b.Cell(b.Style.PerShareTagged, x.TodayPerShare-x.FiledPerShare), b.Text(x.GrantID), b.Text(x.Inputs)); err != nil {
			return err
		}
	}
	return t.Close()
}
