package report

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/plot/vg"
)

func (d *Memo) summary(m *Model) error {
	if err := d.Text("summary", d.data()); err != nil {
		return err
	}
	cur := m.Company.Currency
	d.Sub("Key figures")
	rows := [][]string{
		{"Company", m.Company.Name},
		{"Valuation date", m.ValuationDate.String()},
		{"Share-based awards: grants / vesting tranches", count(m.Totals.Grants) + " / " + count(m.Totals.Tranches)},
		{"Shares granted", count(m.Totals.Shares)},
		{"Fair value of every award granted, each at its measurement date", money(m.Totals.FairValueTotal, cur)},
	}
	if o := outstandingOf(m); o.OK {
		rows = append(rows, []string{"Of which outstanding at the period end (grant-date fair value)", money(o.FairValue, cur) + " over " + count(o.Shares) + " shares"})
	}
	rows = append(rows, []string{"Simplified-method Black-Scholes-Merton, every award granted", money(m.Totals.BSMSimplifiedTotal, cur)})
	if f := m.FinancingTotals; f.Grants > 0 {
		rows = append(rows, []string{"Warrants issued in financings (not share-based payment)",
			fmt.Sprintf("%s over %s shares, fair value %s", counted(f.Grants, "grant"), count(f.Shares), money(f.FairValueTotal, cur))})
	}
	if e := detail(m); e != nil {
		rows = append(rows,
			[]string{"Compensation expense for the period", money(e.Amount, cur)},
			[]string{"Unrecognized compensation cost", money(m.Expense.UnrecognizedCost, cur)},
			[]string{"Weighted-average remaining recognition period", fixed(m.Expense.WeightedAverageRemainingYears, 2) + " years"})
		if len(e.Financing) > 0 {
			rows = append(rows, []string{"Change in fair value of warrant liability (financing; outside operating expense)", money(e.FinancingFairValueChange, cur)})
		}
	}
	if len(m.CrossChecks) > 0 {
		rows = append(rows, []string{"Monte Carlo check", crossCheckSummary(m.CrossChecks)})
	}
	rows = append(rows, []string{"Warnings", count(len(m.Warnings))})
	d.Table([]Col{{"Item", 80, false}, {"Value", 90, false}}, rows)
	d.Sub("By instrument")
	d.groupTable("Instrument", m.ByInstrument, m.Totals, m.FinancingTotals)
	return nil
}

// groupTable lists the share-based groups with their total, then the
// financing warrants' groups and the total of everything valued when there
// are any (fin, their totals).
func (d *Memo) groupTable(first string, gs []Group, tot, fin Totals) {
	cur := d.Currency()
	cols := []Col{{first, 42, false}, {"Grants", 14, true}, {"Tranches", 16, true}, {"Shares", 22, true},
		{"Fair value per share", 22, true}, {"Fair value total (" + cur + ")", 30, true}, {"Simplified BSM (" + cur + ")", 24, true}}
	rows := make([][]string, 0, len(gs)+3)
	row := func(g Group) []string {
		return []string{g.Key, count(g.Grants), count(g.Tranches), count(g.Shares),
			perShare(g.FairValuePerShare), groupDigits(g.FairValueTotal, 2), groupDigits(g.BSMSimplifiedTotal, 2)}
	}
	total := func(label string, t Totals) []string {
		g := Group{Key: "\x00" + label, Grants: t.Grants, Tranches: t.Tranches, Shares: t.Shares, FairValueTotal: t.FairValueTotal, BSMSimplifiedTotal: t.BSMSimplifiedTotal}
		if t.Shares > 0 {
			g.FairValuePerShare = t.FairValueTotal / float64(t.Shares)
		}
		return row(g)
	}
	for _, g := range gs {
		if !g.Financing {
			rows = append(rows, row(g))
		}
	}
	if fin.Grants == 0 {
		rows = append(rows, total("Total", tot))
		d.Table(cols, rows)
		return
	}
	rows = append(rows, total("Total share-based awards", tot))
	for _, g := range gs {
		if g.Financing {
			rows = append(rows, row(g))
		}
	}
	rows = append(rows, total("Everything valued", tot.Plus(fin)))
	d.Table(cols, rows)
}

func (d *Memo) methodology(*Model) error { return d.Text("methodology", d.data()) }

// assumptions lists the company-wide inputs once, each with the number
// of grants that take it, then what is set grant by grant (a grant-row
// override, a share price, a rate, a default) grouped by input, value and
// source, at every size of schedule: the workbook's Assumptions sheet
// keeps a row per grant and input.
func (d *Memo) assumptions(m *Model) error {
	if err := d.Text("assumptions", d.data()); err != nil {
		return err
	}
	cur := m.Company.Currency
	// A grant's input read from a company-wide cell is counted on that
	// cell's row, not repeated. The rows are read where they are, not
	// copied: a large schedule has hundreds of thousands.
	type cell struct{ name, ref string }
	var company []*Assumption
	users := map[cell]map[string]bool{}
	for i := range m.Assumptions {
		if a := &m.Assumptions[i]; a.GrantID == "" {
			company = append(company, a)
			users[cell{a.Name, a.Ref}] = map[string]bool{}
		}
	}
	// What is set grant by grant: one row per input, value and source,
	// with the grants that share it; every row stays in the workbook.
	type key struct{ name, value, source, sheet string }
	type group struct {
		n     int
		first *Assumption
		cells map[string]bool
	}
	groups := map[key]*group{}
	var order []key
	own := 0
	for i := range m.Assumptions {
		a := &m.Assumptions[i]
		if a.GrantID == "" || a.Term {
			continue
		}
		if u, ok := users[cell{a.Name, a.Ref}]; ok {
			u[a.GrantID] = true
			continue
		}
		own++
		sheet, _, _ := strings.Cut(a.Ref, "!")
		src := a.Source
		if a.Ref != "" && strings.Contains(a.Ref, "!") {
			src = strings.ReplaceAll(src, a.Ref, sheet) // "Grants!Q7 (grant row)" groups as "Grants (grant row)"
		}
		k := key{a.Name, assumptionText(*a, cur), src, sheet}
		g := groups[k]
		if g == nil {
			order = append(order, k)
			g = &group{first: a, cells: map[string]bool{}}
			groups[k] = g
		}
		g.n++
		g.cells[a.Ref] = true
	}
	grants := len(m.Grants)
	if len(company) > 0 {
		d.Sub("Company-wide")
		rows := make([][]string, len(company))
		for i, a := range company {
			src := a.Source
			if !a.EffectiveDate.IsZero() {
				src = strings.TrimSpace(src + " (in force from " + a.EffectiveDate.String() + ")")
			}
			who := ""
			switch n := len(users[cell{a.Name, a.Ref}]); {
			case n == 0:
			case n == grants:
				who = "all " + count(n)
			default:
				who = count(n) + " of " + count(grants)
			}
			rows[i] = []string{a.Name, assumptionText(*a, cur), a.Ref, who, src}
		}
		d.Table([]Col{{"Input", 38, false}, {"Value", 26, false}, {"Cell", 24, false}, {"Grants", 16, true}, {"Source", 66, false}}, rows)
	}
	if own == 0 {
		d.Note(fmt.Sprintf("Every grant takes the company-wide inputs above. The grants' terms (dates, shares, strike, vesting) are in section %d and, with their cells, on the workbook's Assumptions sheet.", d.sections["results"]))
		return nil
	}
	sort.SliceStable(order, func(i, j int) bool { return order[i].name < order[j].name })
	d.Sub("Set grant by grant")
	d.Note(fmt.Sprintf("The inputs that are not one company-wide cell (%s of them over %s grants), grouped by input, value and source. The workbook's Assumptions sheet lists each one with its cell, and the grants' terms (dates, shares, strike, vesting) too.", count(own), count(grants)))
	if len(order) > 3*maxDetailRows {
		d.Note(fmt.Sprintf("Only the first %d of %s groups are shown.", 3*maxDetailRows, count(len(order))))
		order = order[:3*maxDetailRows]
	}
	rows := make([][]string, len(order))
	for i, k := range order {
		g := groups[k]
		who := count(g.n) + " grants"
		if g.n == 1 {
			who = g.first.GrantID
		}
		ref := g.first.Ref
		if n := len(g.cells); n > 1 {
			ref = k.sheet + " (" + count(n) + " cells)"
		}
		rows[i] = []string{k.name, k.value, who, ref, k.source}
	}
	d.Table([]Col{{"Input", 32, false}, {"Value", 20, true}, {"Grants", 22, false}, {"Cell", 26, false}, {"Source", 70, false}}, rows)
	return nil
}

func assumptionText(a Assumption, cur string) string {
	switch a.Kind {
	case KindPercent:
		return pct(a.Value)
	case KindMoney:
		return perShare(a.Value)
	case KindYears:
		return fixed(a.Value, 3)
	case KindNumber:
		if a.Value == float64(int64(a.Value)) {
			return groupDigits(a.Value, 0)
		}
		return strings.TrimRight(strings.TrimRight(fixed(a.Value, 4), "0"), ".")
	}
	return a.Text
}

func (d *Memo) results(m *Model) error {
	if err := d.Text("results", d.data()); err != nil {
		return err
	}
	d.Sub("By instrument")
	d.groupTable("Instrument", m.ByInstrument, m.Totals, m.FinancingTotals)
	if len(m.Grants) > maxGrantRows {
		d.Sub("By grant month")
		d.Note(fmt.Sprintf("The schedule has %s grants, so the share-based awards are grouped here by the month of grant; the workbook's Grants and Tranches sheets show each one.", count(len(m.Grants))))
		d.groupTable("Grant month", m.ByGrantMonth, m.Totals, Totals{})
		return nil
	}
	d.Sub("By grant")
	cur := m.Company.Currency
	cols := []Col{{"Grant", 16, false}, {"Holder", 18, false}, {"Instrument", 21, false}, {"Grant date", 19, false},
		{"Shares", 16, true}, {"Strike", 13, true}, {"Share price", 13, true}, {"Tranches", 16, true},
		{"Fair value per share", 16, true}, {"Fair value total (" + cur + ")", 22, true}}
	rows := make([][]string, 0, len(m.Grants)+1)
	grantRow := func(g Grant) []string {
		strike := perShare(g.Strike)
		if g.Instrument == RSU {
			strike = "–"
		}
		return []string{g.ID, g.Holder, g.Instrument, g.GrantDate.String(), count(g.Shares), strike,
			perShare(g.SharePrice), count(len(g.Tranches)), perShare(g.FairValuePerShare), groupDigits(g.FairValueTotal, 2)}
	}
	totalRow := func(of string, t Totals) []string {
		return []string{"\x00Total", "", of, "", count(t.Shares), "", "", count(t.Tranches), "", groupDigits(t.FairValueTotal, 2)}
	}
	for _, g := range m.Grants {
		if g.Purpose != Financing {
			rows = append(rows, grantRow(g))
		}
	}
	if m.FinancingTotals.Grants == 0 {
		rows = append(rows, totalRow("", m.Totals))
	} else {
		rows = append(rows, totalRow("share-based", m.Totals))
		for _, g := range m.Grants {
			if g.Purpose == Financing {
				r := grantRow(g)
				r[2] = "warrant (financing)"
				rows = append(rows, r)
			}
		}
		rows = append(rows, totalRow("all valued", m.Totals.Plus(m.FinancingTotals)))
	}
	d.Table(cols, rows)
	return nil
}

func (d *Memo) warrants(m *Model) error {
	data := d.data()
	if err := d.Text("warrants", data); err != nil {
		return err
	}
	if len(data.Warrants) == 0 {
		return nil
	}
	cur := m.Company.Currency
	cols := []Col{{"Warrant", 15, false}, {"Holder", 19, false}, {"Purpose", 19, false}, {"Classification", 23, false}, {"Exercise", 15, false},
		{"Warrants", 17, true}, {"Strike", 13, true}, {"Dilution", 31, false}, {"Per warrant", 18, true}}
	rows := make([][]string, 0, len(data.Warrants))
	var total float64
	for i, g := range data.Warrants {
		if i == 3*maxDetailRows {
			d.Note(fmt.Sprintf("Only the first %d of %s warrant grants are listed; the workbook lists all.", i, count(len(data.Warrants))))
			break
		}
		dil := "none"
		if g.Dilution != nil {
			dil = fmt.Sprintf("%s, %s new on %s", g.Dilution.Method, count(int64(g.Dilution.Warrants)), count(int64(g.Dilution.SharesOutstanding)))
		}
		rows = append(rows, []string{g.ID, g.Holder, g.Purpose, g.Classification, g.ExerciseStyle, count(g.Shares), perShare(g.Strike), dil,
			perShare(g.FairValuePerShare)})
		total += g.FairValueTotal
	}
	d.Table(cols, rows)
	d.Para(fmt.Sprintf("Total fair value of the warrants listed: %s.", money(total, cur)))
	return nil
}

func (d *Memo) sensitivity(m *Model) error {
	if err := d.Text("sensitivity", d.data()); err != nil {
		return err
	}
	if len(m.Sensitivity) == 0 {
		d.Para("No sensitivity runs were made.")
		return nil
	}
	if m.Settings.Sensitivities != "" && m.Settings.Sensitivities != sensitivityEveryGrant {
		d.Note(m.Settings.Sensitivities) // a sample: the note says which
	}
	cur := m.Company.Currency
	// Charts two by two.
	const cw, ch = 84.0, 56.0
	for i, s := range m.Sensitivity {
		png, w, err := d.Draw(func(w, h vg.Length) ([]byte, error) { return SensitivityPNG(s, cur, w, h) }, cw, ch)
		if err != nil {
			return err
		}
		col := i % 2
		if col == 0 {
			d.flushSub(ch + 2)
			d.need(ch + 2)
		}
		y := d.pdf.GetY()
		d.ImageAt(png, d.marginL()+float64(col)*(cw+2), y, w, ch)
		if col == 1 || i == len(m.Sensitivity)-1 {
			d.pdf.SetY(y + ch + 2)
		}
	}
	cols := []Col{{"Input", 44, false}, {"Case", 40, false}, {"Total fair value (" + cur + ")", 50, true}, {"Change from base", 36, true}}
	var rows [][]string
	for _, s := range m.Sensitivity {
		for _, p := range s.Points {
			rows = append(rows, []string{s.Label, withMinus(p.Label), groupDigits(p.FairValueTotal, 2), signedPct(p.Change)})
		}
	}
	d.Table(cols, rows)
	return nil
}

func (d *Memo) convergence(m *Model) error {
	c := m.Convergence
	if c == nil {
		d.Para("No convergence study was run.")
		return nil
	}
	if err := d.Text("convergence", d.data()); err != nil {
		return err
	}
	if err := d.Chart(func(w, h vg.Length) ([]byte, error) { return ConvergencePNG(*c, m.Company.Currency, w, h) }, 150, 78); err != nil {
		return err
	}
	cols := []Col{{"Steps N", 30, true}, {"Raw value", 40, true}, {"Less auto value", 40, true}}
	rows := make([][]string, len(c.Points))
	for i, p := range c.Points {
		rows[i] = []string{count(p.Steps), perShare(p.Value), fixed(p.Value-c.AutoValue, 6)}
	}
	d.Table(cols, rows)
	return nil
}

func (d *Memo) comparison(m *Model) error {
	if err := d.Text("comparison", d.data()); err != nil {
		return err
	}
	cur := m.Company.Currency
	diff := func(a, b float64) string {
		if b == 0 {
			return "–"
		}
		return signedPct(a/b - 1)
	}
	var rows [][]string
	first := "Grant"
	if len(m.Grants) > maxGrantRows {
		first = "Grant month"
		for _, g := range m.ByGrantMonth {
			rows = append(rows, []string{g.Key, "", groupDigits(g.FairValueTotal, 2), groupDigits(g.BSMSimplifiedTotal, 2),
				diff(g.FairValueTotal, g.BSMSimplifiedTotal)})
		}
	} else {
		for _, g := range m.Grants {
			rows = append(rows, []string{g.ID, g.Instrument, groupDigits(g.FairValueTotal, 2), groupDigits(g.BSMSimplifiedTotal, 2),
				diff(g.FairValueTotal, g.BSMSimplifiedTotal)})
		}
	}
	all := m.Totals.Plus(m.FinancingTotals)
	label := "Total"
	if len(m.Grants) > maxGrantRows && m.FinancingTotals.Grants > 0 {
		rows = append(rows, []string{"Financing warrants", Warrant, groupDigits(m.FinancingTotals.FairValueTotal, 2),
			groupDigits(m.FinancingTotals.BSMSimplifiedTotal, 2), diff(m.FinancingTotals.FairValueTotal, m.FinancingTotals.BSMSimplifiedTotal)})
	}
	if m.FinancingTotals.Grants > 0 {
		label = "Total, everything valued"
	}
	rows = append(rows, []string{"\x00" + label, "", groupDigits(all.FairValueTotal, 2), groupDigits(all.BSMSimplifiedTotal, 2),
		diff(all.FairValueTotal, all.BSMSimplifiedTotal)})
	d.Table([]Col{{first, 30, false}, {"Instrument", 24, false}, {"Lattice (" + cur + ")", 40, true},
		{"Simplified BSM (" + cur + ")", 40, true}, {"Lattice against BSM", 36, true}}, rows)
	if len(m.CrossChecks) > 0 {
		d.Sub("Monte Carlo cross-check")
		if err := d.Text("crosscheck", d.data()); err != nil {
			return err
		}
		if m.Settings.MonteCarlo != "" {
			d.Note(m.Settings.MonteCarlo)
		}
		var xr [][]string
		for _, x := range m.CrossChecks {
			xr = append(xr, []string{x.GrantID, count(x.TrancheIndex), perShare(x.Lattice) + " ± " + fixed(x.LatticeError, 4),
				perShare(x.Value) + " ± " + fixed(x.StdErr, 4), signedFixed(x.Z, 2)})
		}
		d.Table([]Col{{"Grant", 30, false}, {"Tranche", 18, true}, {"Lattice ± error", 42, true}, {"Monte Carlo ± s.e.", 42, true},
			{"z", 20, true}}, xr)
	}
	return nil
}

// crossCheckSummary is the key-figures line of the Monte Carlo check.
func crossCheckSummary(xs []CrossCheck) string {
	worst := 0.0
	for _, x := range xs {
		worst = max(worst, math.Abs(x.Z))
	}
	n := count(len(xs)) + " tranches"
	if len(xs) == 1 {
		n = "1 tranche"
	}
	return fmt.Sprintf("%s, largest |z| %s", n, fixed(worst, 1))
}

// withMinus is a case label ("-10 points") with the memo's minus sign.
func withMinus(label string) string {
	if rest, ok := strings.CutPrefix(label, "-"); ok {
		return minus + rest
	}
	return label
}

// signedFixed is x with d decimals and an explicit sign (− for negative).
func signedFixed(x float64, d int) string {
	s := fixed(math.Abs(x), d)
	switch {
	case s == fixed(0, d):
		return s
	case x < 0:
		return "−" + s
	}
	return "+" + s
}

func (d *Memo) warnings(m *Model) error {
	if len(m.Warnings) == 0 {
		d.Para("The schedule raised no warnings.")
		return nil
	}
	ws := m.Warnings
	if len(ws) > maxDetailRows {
		d.Note(fmt.Sprintf("The first %d of %s warnings; the workbook's Warnings sheet lists all.", maxDetailRows, count(len(ws))))
		ws = ws[:maxDetailRows]
	}
	rows := make([][]string, len(ws))
	for i, w := range ws {
		rows[i] = []string{count(i + 1), w}
	}
	d.Table([]Col{{"#", 10, true}, {"Warning", 160, false}}, rows)
	return nil
}

func (d *Memo) caution(*Model) error { return d.Text("caution", d.data()) }
