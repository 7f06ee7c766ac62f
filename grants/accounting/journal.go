package accounting

import (
	"math"
	"strings"
	"time"

	"grantworth/grants"
)

// Role is what an account does in the journal, whatever the company calls
// it. The journal is written in roles; the account name (and, later, code)
// of each role is the company's to choose (Accounts).
type Role string

// The roles the journal books to.
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
)

// Account is a ledger account: its code in the company's chart of
// accounts (empty when not given) and its name.
type Account struct {
	Code, Name string
}

// Accounts gives the account of each role.
type Accounts map[Role]Account

// DefaultAccounts are the accounts used for the roles a company does not
// map, under ASC 718.
var DefaultAccounts = Accounts{
	RoleCompensation:    {Name: "Compensation expense"},
	RoleEquity:          {Name: "Additional paid-in capital"},
	RoleAwardLiability:  {Name: "Share-based compensation liability"},
	RoleLiability:       {Name: "Warrant liability"},
	RoleFairValueChange: {Name: "Change in fair value of warrant liability"},
	RoleWarrantEquity:   {Name: "Additional paid-in capital"},
	RoleFinancing:       {Name: "Financing proceeds allocated to warrants"},
}

// IFRSAccounts are the default names that differ under IFRS 2: the equity
// of equity-settled awards is a share-based payment reserve, not
// additional paid-in capital.
var IFRSAccounts = Accounts{
	RoleCompensation:   {Name: "Share-based payment expense"},
	RoleEquity:         {Name: "Share-based payment reserve"},
	RoleAwardLiability: {Name: "Share-based payment liability"},
	RoleWarrantEquity:  {Name: "Share premium"},
}

// DefaultAccount is the account of role r under framework fw when the
// company maps none.
func DefaultAccount(r Role, fw grants.Framework) Account {
	if fw == grants.IFRS2 {
		if a, ok := IFRSAccounts[r]; ok {
			return a
		}
	}
	return DefaultAccounts[r]
}

// Of is the account of role r: the company's, else the ASC 718 default.
func (a Accounts) Of(r Role) Account { return a.under(r, grants.ASC718) }

// under is the account of role r: the company's, else the default under fw.
func (a Accounts) under(r Role, fw grants.Framework) Account {
	if acct, ok := a[r]; ok && acct.Name != "" {
		return acct
	}
	return DefaultAccount(r, fw)
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

// minEntry is the smallest amount booked: half a cent.
const minEntry = 0.005

// Journal is the period's entries for the attribution r and its
// catch-ups, in the account names accts (nil for the defaults of r's
// framework):
//
//  1. compensation of equity-classified awards against equity, without
//     their catch-ups and the modifications' cost;
//  2. compensation of liability-classified awards (every change in their
//     fair value included) against the award liability, without their
//     catch-ups;
//  3. one entry per catch-up, naming its grant and cause, against equity,
//     the award liability, or for compensation reversed on a warrant now
//     known to be issued in a financing, the financing's proceeds (the
//     compensation lines and these add up to the period's expense), and
//     one entry per modification of an award's terms or cancellation with
//     a replacement award, for what it added to the period's expense
//     (r.Modifications; modify.go), against equity;
//  4. exercised liability-classified awards, the liability at the
//     exercise day's fair value reclassified to equity;
//  5. financing warrants classified as liabilities issued in the period,
//     at fair value, against the financing's proceeds;
//  6. the change in fair value of the financing warrants' liability,
//     outside operating expense;
//  7. exercised financing warrants, the liability at the exercise day's
//     fair value reclassified to equity.
//
// An amount that is negative swaps the entry's sides; entries with less
// than half a cent to book are left out. Equity-classified financing
// warrants are booked with their financing, at the proceeds allocated to
// them, and have no entry here.
func Journal(r *ExpenseReport, catchUps []CatchUp, accts Accounts) []Entry {
	fw := r.Policy.Framework
	var equity, liaComp, liaReclass float64
	for _, g := range r.Grants {
		if g.Liability {
			liaComp += g.Period
			liaReclass += g.ReclassifiedEquity
		} else {
			equity += g.Period
		}
	}
	for _, c := range catchUps {
		switch {
		case c.Financing:
		case c.Liability:
			liaComp -= c.Amount
		default:
			equity -= c.Amount
		}
	}
	for _, m := range r.Modifications {
		equity -= m.Period
	}
	var issued, change, finReclass float64
	for _, w := range r.Financing {
		issued += w.Issued
		change += w.FairValueChange
		finReclass += w.Reclassified
	}
	var out []Entry
	add := func(desc string, debit, credit Role, grantID string, amount float64) {
		if math.Abs(amount) < minEntry {
			return
		}
		if amount < 0 {
			debit, credit, amount = credit, debit, -amount
		}
		out = append(out, Entry{Date: r.PeriodEnd, Description: desc, Lines: []Line{
			{Role: debit, Account: accts.under(debit, fw), GrantID: grantID, Debit: amount},
			{Role: credit, Account: accts.under(credit, fw), GrantID: grantID, Credit: amount},
		}})
	}
	add("Share-based compensation for the period (equity-classified awards)", RoleCompensation, RoleEquity, "", equity)
	add("Share-based compensation for the period (liability-classified awards, remeasured to fair value)", RoleCompensation, RoleAwardLiability, "", liaComp)
	for _, c := range catchUps {
		credit := RoleEquity
		switch {
		case c.Financing:
			credit = RoleFinancing
		case c.Liability:
			credit = RoleAwardLiability
		}
		add("Catch-up for closed periods, grant "+c.GrantID+" ("+strings.ReplaceAll(string(c.Cause), "_", " ")+")", RoleCompensation, credit, c.GrantID, c.Amount)
	}
	for _, m := range r.Modifications {
		add(m.JournalText(), RoleCompensation, RoleEquity, m.GrantID, m.Period)
	}
	add("Liability-classified awards exercised: liability at the exercise-date fair value reclassified to equity", RoleAwardLiability, RoleEquity, "", liaReclass)
	add("Financing warrants issued in the period, recognised as a liability at fair value", RoleFinancing, RoleLiability, "", issued)
	add("Change in fair value of the financing warrants' liability (outside operating expense)", RoleFairValueChange, RoleLiability, "", change)
	add("Financing warrants exercised: liability at the exercise-date fair value reclassified to equity", RoleLiability, RoleWarrantEquity, "", finReclass)
	return out
}
