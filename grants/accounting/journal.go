package accounting

import (
	"math"
	"strings"
	"time"
)

// Role is what an account does in the journal, whatever the company calls
// it. The journal is written in roles; the account name (and, later, code)
// of each role is the company's to choose (Accounts).
type Role string

// The roles the journal books to.
const (
	RoleCompensation    Role = "compensation_expense"
	RoleEquity          Role = "equity" // additional paid-in capital
	RoleLiability       Role = "warrant_liability"
	RoleFairValueChange Role = "fair_value_change" // of the warrant liability, apart from compensation
)

// Account is a ledger account: its code in the company's chart of
// accounts (empty when not given) and its name.
type Account struct {
	Code, Name string
}

// Accounts gives the account of each role.
type Accounts map[Role]Account

// DefaultAccounts are the accounts used for the roles a company does not
// map.
var DefaultAccounts = Accounts{
	RoleCompensation:    {Name: "Compensation expense"},
	RoleEquity:          {Name: "Additional paid-in capital"},
	RoleLiability:       {Name: "Warrant liability"},
	RoleFairValueChange: {Name: "Change in fair value of warrant liability"},
}

// Of is the account of role r: the company's, else the default.
func (a Accounts) Of(r Role) Account {
	if acct, ok := a[r]; ok && acct.Name != "" {
		return acct
	}
	return DefaultAccounts[r]
}

// Line is one debit or credit of an entry. Exactly one of Debit and Credit
// is non-zero. GrantID is empty on a summary line that books many grants.
type Line struct {
	Role    Role
	Account Account
	GrantID string
	Debit   float64
	Credit  float64
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

// transfer is a two-line entry debiting debit and crediting credit with
// amount; a negative amount swaps the sides.
func transfer(date time.Time, desc string, accts Accounts, debit, credit Role, grantID string, amount float64) Entry {
	if amount < 0 {
		debit, credit, amount = credit, debit, -amount
	}
	return Entry{Date: date, Description: desc, Lines: []Line{
		{Role: debit, Account: accts.Of(debit), GrantID: grantID, Debit: amount},
		{Role: credit, Account: accts.Of(credit), GrantID: grantID, Credit: amount},
	}}
}

// minEntry is the smallest amount booked: half a cent.
const minEntry = 0.005

// Journal is the period's entries for the attribution r and its
// catch-ups, in the accounts accts (nil for DefaultAccounts): the
// compensation of equity-classified awards against equity and of
// liability-classified warrants against the liability, each without its
// catch-ups and the modifications' cost; an entry per catch-up, naming its
// grant and cause; an entry per modification (r.Modifications); the
// liability's remeasurement apart from compensation; and exercised
// liability warrants reclassified to equity. The compensation lines add
// up to the period's expense. Entries of less than half a cent are left
// out.
func Journal(r *ExpenseReport, catchUps []CatchUp, accts Accounts) []Entry {
	var equity, liaComp, fv, reclass float64
	for _, g := range r.Grants {
		if g.Liability {
			liaComp += g.Period
			fv += g.FairValueChange
			reclass += g.ReclassifiedEquity
		} else {
			equity += g.Period
		}
	}
	for _, c := range catchUps {
		if c.Liability {
			liaComp -= c.Amount
		} else {
			equity -= c.Amount
		}
	}
	for _, m := range r.Modifications {
		equity -= m.Period
	}
	var out []Entry
	add := func(desc string, debit, credit Role, grantID string, amount float64) {
		if math.Abs(amount) >= minEntry {
			out = append(out, transfer(r.PeriodEnd, desc, accts, debit, credit, grantID, amount))
		}
	}
	add("Share-based compensation for the period (equity-classified awards)", RoleCompensation, RoleEquity, "", equity)
	add("Share-based compensation for the period (liability-classified warrants)", RoleCompensation, RoleLiability, "", liaComp)
	for _, c := range catchUps {
		credit := RoleEquity
		if c.Liability {
			credit = RoleLiability
		}
		add("Catch-up for closed periods, grant "+c.GrantID+" ("+strings.ReplaceAll(string(c.Cause), "_", " ")+")", RoleCompensation, credit, c.GrantID, c.Amount)
	}
	for _, m := range r.Modifications {
		add(m.JournalText(), RoleCompensation, RoleEquity, m.GrantID, m.Period)
	}
	add("Remeasurement of the warrant liability to fair value (apart from compensation)", RoleFairValueChange, RoleLiability, "", fv)
	add("Exercised liability-classified warrants reclassified to equity", RoleLiability, RoleEquity, "", reclass)
	return out
}
