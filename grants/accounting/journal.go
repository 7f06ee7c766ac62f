package accounting

import (
	"math"
	"sort"
	"strings"
	"time"

	"grantworth/grants"
)

// Role is what an account does in the journal, whatever the company calls
// it. The journal is written in roles; the account code and name of each
// role are the company's to choose (the Accounts sheet, Chart).
type Role string

// The roles the journal books to (the values of grants.AccountRoles).
const (
	RoleCompensation     Role = "compensation_expense"
	RoleEquity           Role = "equity" // additional paid-in capital; under IFRS the share-based payment reserve
	RoleLiability        Role = "warrant_liability"
	RoleFairValueChange  Role = "fair_value_change" // of the warrant liability, apart from compensation
	RoleDeferredTaxAsset Role = "deferred_tax_asset"
	RoleDeferredTax      Role = "deferred_tax_benefit" // the deferred tax line of the income statement
)

// Account is a ledger account: its code in the company's chart of
// accounts (empty when not given) and its name.
type Account struct {
	Code, Name string
}

// ChartKey is a role, and a cost centre for an account that serves one
// (compensation expense only; empty for every centre).
type ChartKey struct {
	Role       Role
	CostCenter string
}

// Chart is the company's chart of accounts as the journal uses it: the
// account of each role it maps (per cost centre, for compensation
// expense), the framework whose wording names the accounts it does not,
// and the decimals of its currency, to which every amount is rounded.
type Chart struct {
	Accounts  map[ChartKey]Account
	Framework grants.Framework
	Decimals  int
}

// ChartOf is the chart of schedule s: its Accounts sheet, the framework in
// force at the valuation date and its currency's minor unit
// (grants.MinorUnits).
func ChartOf(s *grants.Schedule) Chart {
	c := Chart{Accounts: map[ChartKey]Account{}, Framework: s.InForce().Framework, Decimals: grants.MinorUnits(s.Company.Currency)}
	for _, a := range s.Accounts {
		k := ChartKey{Role: Role(a.Role)}
		if k.Role == RoleCompensation {
			k.CostCenter = a.CostCenter
		}
		c.Accounts[k] = Account{Code: a.Code, Name: a.Name}
	}
	return c
}

// DefaultAccount is the account of role r when the company maps none: no
// code, and the role's name in the wording of framework f
// (grants.AccountRoles).
func DefaultAccount(r Role, f grants.Framework) Account {
	for _, ar := range grants.AccountRoles {
		if ar.Role == string(r) {
			if f == grants.IFRS2 {
				return Account{Name: ar.IFRSName}
			}
			return Account{Name: ar.Name}
		}
	}
	return Account{Name: string(r)}
}

// Of is the account of role r for cost centre costCenter: the company's
// account for the role and that centre, else for the role, else the
// default; a mapped account with no name takes the default name.
func (c Chart) Of(r Role, costCenter string) Account {
	a, ok := c.Accounts[ChartKey{r, costCenter}]
	if !ok || costCenter == "" {
		a, ok = c.Accounts[ChartKey{Role: r}]
	}
	def := DefaultAccount(r, c.Framework)
	if !ok {
		return def
	}
	if a.Name == "" {
		a.Name = def.Name
	}
	return a
}

// scale is 10 to the chart's decimals: the minor units of one currency unit.
func (c Chart) scale() float64 { return math.Pow10(c.Decimals) }

// Line is one debit or credit of an entry. Exactly one of Debit and Credit
// is non-zero, a whole number of the currency's minor units. CostCenter is
// set on compensation expense lines; GrantID on the lines of an entry for
// one grant.
type Line struct {
	Role       Role
	Account    Account
	CostCenter string
	GrantID    string
	Debit      float64
	Credit     float64
}

// Entry is one journal entry, dated at the period end; its lines balance.
type Entry struct {
	Date        time.Time
	Description string
	Lines       []Line
}

// Balance is the entry's debits less its credits (0 for a balanced entry).
func (e Entry) Balance() float64 {
	var b float64
	for _, l := range e.Lines {
		b += l.Debit - l.Credit
	}
	return b
}

// journal builds entries in whole minor units.
type journal struct {
	chart Chart
	date  time.Time
	out   []Entry
}

// line is a line of units minor units on the debit side of role (on the
// credit side when negative).
func (j *journal) line(role Role, costCenter, grantID string, units int64) Line {
	l := Line{Role: role, Account: j.chart.Of(role, costCenter), CostCenter: costCenter, GrantID: grantID}
	amount := float64(abs64(units)) / j.chart.scale()
	if units >= 0 {
		l.Debit = amount
	} else {
		l.Credit = amount
	}
	return l
}

// entry adds an entry of the given lines, debits first, dropping lines of
// no units; an entry left with no lines is not added.
func (j *journal) entry(desc string, lines []Line) {
	var kept []Line
	for _, l := range lines {
		if l.Debit != 0 {
			kept = append(kept, l)
		}
	}
	for _, l := range lines {
		if l.Credit != 0 {
			kept = append(kept, l)
		}
	}
	if len(kept) > 0 {
		j.out = append(j.out, Entry{Date: j.date, Description: desc, Lines: kept})
	}
}

// transfer adds a two-line entry debiting debit and crediting credit with
// amount rounded to minor units; a negative amount swaps the sides.
func (j *journal) transfer(desc string, debit, credit Role, grantID string, amount float64) {
	u := int64(math.Round(amount * j.chart.scale()))
	j.entry(desc, []Line{j.line(debit, "", grantID, u), j.line(credit, "", grantID, -u)})
}

// minEntry is the smallest catch-up found: half a cent.
const minEntry = 0.005

func abs64(x int64) int64 {
	if x < 0 {
		return -x
	}
	return x
}

// Journal is the period's entries for the attribution r, its catch-ups
// and its tax effect, in the accounts of chart: the compensation of
// equity-classified awards against equity and of liability-classified
// warrants against the liability, each without its catch-ups; an entry
// per catch-up, naming its grant and cause; the liability's remeasurement
// apart from compensation; exercised liability warrants reclassified to
// equity; and, with tax, the change in the deferred tax asset against the
// deferred tax benefit (and, under IFRS 2, equity for the part beyond the
// cumulative expense). Every compensation expense line is for one cost
// centre: the summary entries have a line per centre from the grants'
// parts (GrantExpense.ByCostCenter), and a catch-up is booked in its
// grant's cost centre at the period end, which holds the difference
// between the opening balance the prior close booked and the one restated
// now (see the package notes on cost centres). Amounts are rounded to the
// currency's minor unit; the compensation lines are rounded together
// (largest remainder, apportion) so that they add up to the period's
// expense rounded, and every entry balances in minor units. Entries that
// round to nothing are left out.
func Journal(r *ExpenseReport, catchUps []CatchUp, tax *TaxReport, chart Chart) []Entry {
	j := &journal{chart: chart, date: r.PeriodEnd}
	// Compensation entries: the two summaries, then one per catch-up; and
	// their expense lines by cost centre.
	type compEntry struct {
		desc    string
		credit  Role
		grantID string
	}
	entries := []compEntry{
		{"Share-based compensation for the period (equity-classified awards)", RoleEquity, ""},
		{"Share-based compensation for the period (liability-classified warrants)", RoleLiability, ""},
	}
	type cell struct {
		entry  int
		centre string
	}
	amounts := map[cell]float64{}
	grantOf := map[string]*GrantExpense{}
	var fv, reclass float64
	for i := range r.Grants {
		g := &r.Grants[i]
		grantOf[g.GrantID] = g
		e := 0
		if g.Liability {
			e = 1
			fv += g.FairValueChange
			reclass += g.ReclassifiedEquity
		}
		for _, p := range g.ByCostCenter {
			amounts[cell{e, p.CostCenter}] += p.Period
		}
	}
	for _, c := range catchUps {
		summary, credit := 0, RoleEquity
		if c.Liability {
			summary, credit = 1, RoleLiability
		}
		entries = append(entries, compEntry{"Catch-up for closed periods, grant " + c.GrantID + " (" + strings.ReplaceAll(string(c.Cause), "_", " ") + ")", credit, c.GrantID})
		centre := grants.Unassigned
		if g := grantOf[c.GrantID]; g != nil && g.CostCenter != "" {
			centre = g.CostCenter
		}
		amounts[cell{len(entries) - 1, centre}] += c.Amount
		amounts[cell{summary, centre}] -= c.Amount
	}
	cells := make([]cell, 0, len(amounts))
	for c := range amounts {
		cells = append(cells, c)
	}
	sort.Slice(cells, func(a, b int) bool {
		if cells[a].entry != cells[b].entry {
			return cells[a].entry < cells[b].entry
		}
		return costCenterLess(cells[a].centre, cells[b].centre)
	})
	xs := make([]float64, len(cells))
	for i, c := range cells {
		xs[i] = amounts[c]
	}
	units := apportion(xs, int64(math.Round(r.Period*chart.scale())), chart.scale())
	comp := func(e int) {
		var lines []Line
		var total int64
		for i, c := range cells {
			if c.entry == e {
				lines = append(lines, j.line(RoleCompensation, c.centre, entries[e].grantID, units[i]))
				total += units[i]
			}
		}
		j.entry(entries[e].desc, append(lines, j.line(entries[e].credit, "", entries[e].grantID, -total)))
	}
	for e := range entries {
		comp(e)
	}
	j.transfer("Remeasurement of the warrant liability to fair value (apart from compensation)", RoleFairValueChange, RoleLiability, "", fv)
	j.transfer("Exercised liability-classified warrants reclassified to equity", RoleLiability, RoleEquity, "", reclass)
	if tax != nil {
		asset := int64(math.Round((tax.AssetEnd - tax.AssetOpen) * chart.scale()))
		equity := int64(math.Round(tax.ToEquity * chart.scale()))
		desc := "Deferred tax on share-based compensation (ASC 718-740)"
		if tax.Framework == grants.IFRS2 {
			desc = "Deferred tax on share-based payment (IAS 12.68A-C: beyond the cumulative expense, in equity)"
		}
		j.entry(desc, []Line{j.line(RoleDeferredTaxAsset, "", "", asset), j.line(RoleDeferredTax, "", "", equity-asset), j.line(RoleEquity, "", "", -equity)})
	}
	return j.out
}

// apportion rounds xs, amounts in currency units, to whole minor units
// (scale to a unit) that add up to target: each is rounded down, and the
// units still missing go one each to the largest remainders, the earlier
// of equal ones first (the largest remainder method, common practice for
// rounding parts to a rounded total). With target the rounded sum of xs
// no part moves by a unit or more from its own amount.
func apportion(xs []float64, target int64, scale float64) []int64 {
	n := len(xs)
	out := make([]int64, n)
	if n == 0 {
		return out
	}
	rem := make([]float64, n)
	var got int64
	for i, x := range xs {
		f := math.Floor(x * scale)
		out[i], rem[i] = int64(f), x*scale-f
		got += out[i]
	}
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return rem[order[a]] > rem[order[b]] })
	for k := 0; got < target; k++ {
		out[order[k%n]]++
		got++
	}
	for k := n - 1; got > target; k-- {
		out[order[(k%n+n)%n]]--
		got--
	}
	return out
}
