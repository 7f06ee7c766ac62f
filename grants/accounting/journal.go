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
// role are the company's to choose (the Accounts sheet, Chart), and its
// default name is in grants.AccountRoles.
type Role string

// The roles the journal books to (the values of grants.AccountRoles).
const (
	RoleCompensation Role = "compensation_expense"
	// RoleEquity is the equity credited for share-based payment:
	// additional paid-in capital under ASC 718, a share-based payment
	// reserve under IFRS 2.
	RoleEquity Role = "equity"
	// RoleAwardLiability is the liability of liability-classified awards
	// to employees and other providers of services.
	RoleAwardLiability Role = "share_based_payment_liability"
	// RoleLiability is the liability of warrants issued in financings.
	RoleLiability Role = "warrant_liability"
	// RoleFairValueChange is the change in fair value of the financing
	// warrants' liability, outside operating expense.
	RoleFairValueChange Role = "fair_value_change"
	// RoleWarrantEquity is the equity a financing warrant's liability is
	// reclassified to when the warrant is exercised.
	RoleWarrantEquity Role = "warrant_equity"
	// RoleFinancing is where the proceeds of a financing allocated to a
	// liability-classified warrant at issue are debited: a debt discount
	// for a warrant issued with a loan, the share proceeds for one issued
	// with shares.
	RoleFinancing Role = "financing_proceeds"
	// RoleDeferredTaxAsset is the deferred tax asset of deductible awards.
	RoleDeferredTaxAsset Role = "deferred_tax_asset"
	// RoleDeferredTax is the deferred tax line of the income statement (a
	// benefit when credited).
	RoleDeferredTax Role = "deferred_tax_benefit"
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
// expense), and the decimals of its currency, to which every amount is
// rounded. A role it does not map has its default account under the
// framework (DefaultAccount).
type Chart struct {
	Accounts map[ChartKey]Account
	Decimals int
}

// ChartOf is the chart of schedule s: its Accounts sheet and its
// currency's minor unit (grants.MinorUnits).
func ChartOf(s *grants.Schedule) Chart {
	c := Chart{Accounts: map[ChartKey]Account{}, Decimals: grants.MinorUnits(s.Company.Currency)}
	for _, a := range s.Accounts {
		k := ChartKey{Role: Role(a.Role)}
		if k.Role == RoleCompensation {
			k.CostCenter = a.CostCenter
		}
		c.Accounts[k] = Account{Code: a.Code, Name: a.Name}
	}
	return c
}

// DefaultAccount is the account of role r under framework fw when the
// company maps none: no code, and the role's name in the framework's
// wording (grants.AccountRoles; IFRS 2 calls the equity of equity-settled
// awards a share-based payment reserve, not additional paid-in capital).
func DefaultAccount(r Role, fw grants.Framework) Account {
	for _, ar := range grants.AccountRoles {
		if ar.Role == string(r) {
			if fw == grants.IFRS2 {
				return Account{Name: ar.IFRSName}
			}
			return Account{Name: ar.Name}
		}
	}
	return Account{Name: string(r)}
}

// Of is the account of role r for cost centre costCenter under framework
// fw: the company's account for the role and that centre, else for the
// role, else the default; a mapped account with no name takes the
// default name.
func (c Chart) Of(r Role, costCenter string, fw grants.Framework) Account {
	a, ok := c.Accounts[ChartKey{r, costCenter}]
	if !ok || costCenter == "" {
		a, ok = c.Accounts[ChartKey{Role: r}]
	}
	def := DefaultAccount(r, fw)
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

// minEntry is the smallest catch-up found: half a cent.
const minEntry = 0.005

// journal builds entries in whole minor units.
type journal struct {
	chart Chart
	fw    grants.Framework
	date  time.Time
	out   []Entry
}

// line is a line of units minor units on the debit side of role (on the
// credit side when negative).
func (j *journal) line(role Role, costCenter, grantID string, units int64) Line {
	l := Line{Role: role, Account: j.chart.Of(role, costCenter, j.fw), CostCenter: costCenter, GrantID: grantID}
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
func (j *journal) transfer(desc string, debit, credit Role, amount float64) {
	u := int64(math.Round(amount * j.chart.scale()))
	j.entry(desc, []Line{j.line(debit, "", "", u), j.line(credit, "", "", -u)})
}

func abs64(x int64) int64 {
	if x < 0 {
		return -x
	}
	return x
}

// Journal is the period's entries for the attribution r, its catch-ups
// and its tax effect (nil for none), in the accounts of chart and the
// default names of r's framework:
//
//  1. compensation of equity-classified awards against equity, without
//     their catch-ups and the modifications' cost;
//  2. compensation of liability-classified awards (every change in their
//     fair value included) against the award liability, without their
//     catch-ups;
//  3. one entry per catch-up, naming its grant and cause, against equity,
//     the award liability, or for compensation reversed on a warrant now
//     known to be issued in a financing, the financing's proceeds;
//  4. one entry per modification of an award's terms or cancellation with
//     a replacement award, naming its grant, for what it added to the
//     period's expense (r.Modifications; modify.go), against equity;
//  5. exercised liability-classified awards, the liability at the
//     exercise day's fair value reclassified to equity;
//  6. financing warrants classified as liabilities issued in the period,
//     at fair value, against the financing's proceeds;
//  7. the change in fair value of the financing warrants' liability,
//     outside operating expense;
//  8. exercised financing warrants, the liability at the exercise day's
//     fair value reclassified to equity;
//  9. with tax, the change in the deferred tax asset against the deferred
//     tax benefit (and, under IFRS 2, equity for the part beyond the
//     cumulative expense).
//
// Every compensation expense line is for one cost centre: the summary
// entries have a line per centre from the grants' parts
// (GrantExpense.ByCostCenter), and a catch-up or a modification is booked
// in its grant's cost centre at the period end (for a catch-up, the centre
// that holds the difference between the opening balance the prior close
// booked and the one restated now; see the package notes on cost centres). Amounts are rounded to the
// currency's minor unit; the compensation lines (entries 1 to 4) are
// rounded together (largest remainder, apportion) so that they add up to
// the period's expense rounded, and every entry balances in minor units.
// Entries that round to nothing are left out. Equity-classified financing
// warrants are booked with their financing, at the proceeds allocated to
// them, and have no entry here.
func Journal(r *ExpenseReport, catchUps []CatchUp, tax *TaxReport, chart Chart) []Entry {
	j := &journal{chart: chart, fw: r.Policy.Framework, date: r.PeriodEnd}
	// The compensation entries: the two summaries, then one per catch-up
	// and one per modification;
	// and their expense amounts by cost centre.
	type compEntry struct {
		desc    string
		credit  Role
		grantID string
	}
	entries := []compEntry{
		{"Share-based compensation for the period (equity-classified awards)", RoleEquity, ""},
		{"Share-based compensation for the period (liability-classified awards, remeasured to fair value)", RoleAwardLiability, ""},
	}
	type cell struct {
		entry  int
		centre string
	}
	amounts := map[cell]float64{}
	centreOf := map[string]string{}
	var liaReclass float64
	for _, g := range r.Grants {
		centreOf[g.GrantID] = g.CostCenter
		e := 0
		if g.Liability {
			e = 1
			liaReclass += g.ReclassifiedEquity
		}
		for _, p := range g.ByCostCenter {
			amounts[cell{e, p.CostCenter}] += p.Period
		}
	}
	var issued, change, finReclass float64
	for _, w := range r.Financing {
		centreOf[w.GrantID] = w.CostCenter
		issued += w.Issued
		change += w.FairValueChange
		finReclass += w.Reclassified
	}
	for _, c := range catchUps {
		summary, credit := 0, RoleEquity
		switch {
		case c.Financing: // not in a summary: its amount is the warrant's reversed compensation
			summary, credit = -1, RoleFinancing
		case c.Liability:
			summary, credit = 1, RoleAwardLiability
		}
		entries = append(entries, compEntry{"Catch-up for closed periods, grant " + c.GrantID + " (" + strings.ReplaceAll(string(c.Cause), "_", " ") + ")", credit, c.GrantID})
		centre := centreOf[c.GrantID]
		if centre == "" {
			centre = grants.Unassigned
		}
		amounts[cell{len(entries) - 1, centre}] += c.Amount
		if summary >= 0 {
			amounts[cell{summary, centre}] -= c.Amount
		}
	}
	for _, m := range r.Modifications {
		entries = append(entries, compEntry{m.JournalText(), RoleEquity, m.GrantID})
		centre := centreOf[m.GrantID]
		if centre == "" {
			centre = grants.Unassigned
		}
		amounts[cell{len(entries) - 1, centre}] += m.Period
		amounts[cell{0, centre}] -= m.Period
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
	for e, ce := range entries {
		var lines []Line
		var total int64
		for i, c := range cells {
			if c.entry == e {
				lines = append(lines, j.line(RoleCompensation, c.centre, ce.grantID, units[i]))
				total += units[i]
			}
		}
		j.entry(ce.desc, append(lines, j.line(ce.credit, "", ce.grantID, -total)))
	}
	j.transfer("Liability-classified awards exercised: liability at the exercise-date fair value reclassified to equity", RoleAwardLiability, RoleEquity, liaReclass)
	j.transfer("Financing warrants issued in the period, recognized as a liability at fair value", RoleFinancing, RoleLiability, issued)
	j.transfer("Change in fair value of the financing warrants' liability (outside operating expense)", RoleFairValueChange, RoleLiability, change)
	j.transfer("Financing warrants exercised: liability at the exercise-date fair value reclassified to equity", RoleLiability, RoleWarrantEquity, finReclass)
	if tax != nil {
		asset := int64(math.Round((tax.AssetEnd - tax.AssetOpen) * chart.scale()))
		equity := int64(math.Round(tax.ToEquity * chart.scale()))
		desc := "Deferred tax on share-based compensation (ASC 718-740)"
		if j.fw == grants.IFRS2 {
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
