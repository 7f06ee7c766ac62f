package accounting

import (
	"fmt"
	"time"

	"grantworth/grants"
	"grantworth/grants/pricing"
)

// Books are the accounting of one period close: the expense attribution,
// the disclosure tables and the journal, from one set of ledgers, and
// after a prior close the reconciliation to it.
type Books struct {
	Expense        *ExpenseReport
	Disclosure     *Disclosure
	Journal        []Entry
	Chart          Chart           // the accounts and rounding the journal is in
	Tax            *TaxReport      // nil when the schedule gives no tax rate
	Reconciliation *Reconciliation // nil without a prior close
	// SharePrice is the share price at the period end, with its cell,
	// for the disclosures' intrinsic values.
	SharePrice grants.Source
	// Warnings are the accounting's own, in the order found.
	Warnings []string
}

// Close does the accounting of schedule s's period over the grants v
// valued: the awards (AwardsOf), their attribution and the disclosure
// tables from one set of ledgers (as Attribute) and the journal. With prior, the close that came
// before (opened by Open, and whose values v kept), the opening balances
// are what prior booked, the closed periods stand as it booked them, and
// the Reconciliation walks from it to this close with its catch-ups. An
// error that is the schedule's (no share price at the period end) is a
// *grants.CellError.
func Close(s *grants.Schedule, v *pricing.Valuation, prior *Prior) (*Books, error) {
	b := &Books{}
	src, err := s.PeriodEndPrice()
	if err != nil && s.NeedsPeriodEndPrice() {
		return nil, err
	}
	b.SharePrice = src
	awards, warns, err := awardsOf(s, v, false) // v stays as it is until the books are made
	if err != nil {
		return nil, err
	}
	b.Warnings = warns
	start, end := s.Period()
	if prior != nil && !start.Equal(civilDay(prior.ValuationDate).AddDate(0, 0, 1)) {
		return nil, fmt.Errorf("the period starts on %s, not the day after the prior close of %s: open it with Open", day(start), day(prior.ValuationDate))
	}
	// The awards refer to v's tranches (awardsOf); the reconciliation to
	// a prior close takes its views of each ledger with its expense, so
	// only the tax report reads the ledgers' tranches after the expense.
	p, err := openPeriod(awards, PolicyOf(s), start, end)
	if err != nil {
		return nil, fmt.Errorf("expense and disclosures: %w", err)
	}
	p.prior = prior
	if prior != nil {
		p.recon = &reconciling{s: s, corrected: correctedOf(v)}
	}
	taxIn := TaxInputsOf(s)
	p.dropsLedgers = letGo && !p.taxed(taxIn)
	disc, err := p.disclose(b.SharePrice.Value)
	if err != nil {
		return nil, fmt.Errorf("disclosures: %w", err)
	}
	rep := p.expense()
	b.Expense, b.Disclosure = rep, disc
	b.Warnings = append(b.Warnings, rep.Warnings...)
	var catchUps []CatchUp
	if prior != nil {
		if b.Reconciliation, err = p.reconcile(prior, p.sts, rep, disc, s, v); err != nil {
			return nil, fmt.Errorf("reconciliation to the prior close: %w", err)
		}
		catchUps = b.Reconciliation.CatchUps
	}
	b.Tax = p.tax(taxIn, b.SharePrice.Value)
	if b.Tax != nil {
		b.Warnings = append(b.Warnings, b.Tax.Warnings...)
	}
	b.Chart = ChartOf(s)
	b.Journal = Journal(rep, catchUps, b.Tax, b.Chart)
	return b, nil
}

// letGo is whether Close lets go of what nothing reads after
// (period.dropsLedgers); a test turns it off to check that nothing does.
var letGo = true

// AwardsOf pairs every grant v valued with its fair values: per tranche,
// the grant-date value of an equity-classified award; for a
// liability-classified warrant its value at the grant date, with its
// values at the past quarter ends and at the valuation date as
// Remeasurements (the revaluations v holds: past quarter ends and
// exercise days). The weighted-average assumptions each grant was measured
// with go along for the disclosures, the risk-free rate being each
// tranche's zero rate at its expected term (pricing's ExpectedTermRate)
// weighted by its shares, as the expected term is.
// A liability warrant that could not be revalued is measured at the
// valuation date only, with a warning.
func AwardsOf(s *grants.Schedule, v *pricing.Valuation) ([]Award, []string, error) {
	return awardsOf(s, v, true)
}

// awardsOf is AwardsOf; without copies each award refers to its grant's
// tranches in v rather than holding a copy of them (awardOf), and v must
// stay as it is while the awards are read.
func awardsOf(s *grants.Schedule, v *pricing.Valuation, copies bool) ([]Award, []string, error) {
	_, end := s.Period()
	var awards []Award // nil for none, as ever
	if len(v.Grants) > 0 {
		awards = make([]Award, len(v.Grants))
	}
	var warns []string
	var first error
	type made struct {
		warn string
		err  error
	}
	// Each grant's award is its own (awards[i], from v.Grants[i]); the
	// warnings and the first error go in grant order.
	inOrder(len(v.Grants), workersFor(len(v.Grants)), func(i int, sc *ledgerScratch, m *made) {
		*m = made{}
		gv := &v.Grants[i]
		g := gv.Inputs.Grant
		fv := sc.fvs.Take(len(gv.Results))
		var shares, term, rate float64
		for k, r := range gv.Results {
			fv[k] = r.Value
			n := float64(gv.Inputs.Tranches[k].Shares)
			shares += n
			term += n * r.ExpectedTermYears
			if k < len(gv.ExpectedTermRate) {
				rate += n * gv.ExpectedTermRate[k]
			} else {
				rate += n * gv.Inputs.RiskFreeRate.Value
			}
		}
		a, err := awardOf(s, g, gv.Inputs.Tranches, fv, copies)
		if err != nil {
			m.err = fmt.Errorf("expense: %w", err)
			return
		}
		a.Condition = ConditionOf(s, gv, end)
		if shares > 0 {
			a.Measured = &sc.measured.Take(1)[0]
			*a.Measured = MeasuredAssumptions{Volatility: gv.Inputs.Volatility.Value, RiskFreeRate: rate / shares,
				DividendYield: gv.Inputs.DividendYield.Value, ExpectedTermYears: term / shares}
		}
		if g.IsLiability() {
			m.warn = remeasure(&a, fv, end, v.Revaluations[g.ID])
		}
		awards[i] = a
	}, func(_ int, m *made) {
		if m.err != nil && first == nil {
			first = m.err
		}
		if m.warn != "" {
			warns = append(warns, m.warn)
		}
	})
	if first != nil {
		return nil, nil, first
	}
	if err := modifiedOf(awards, v); err != nil {
		return nil, nil, err
	}
	return awards, warns, nil
}

// remeasure makes a liability warrant's grant-date value its FairValue and
// its revaluations at the past quarter ends, then fv at the valuation date
// end, its Remeasurements. When the revaluations are missing or one
// failed, the warrant is measured at the valuation date only and the
// warning returned says so.
func remeasure(a *Award, fv []float64, end time.Time, revs []pricing.Revaluation) string {
	g := a.Grant
	setValues := func(vs []float64) {
		if a.valued != nil {
			a.fv = vs
			return
		}
		for i := range a.Tranches {
			a.Tranches[i].FairValue = vs[i]
		}
	}
	only := func(why string) string {
		setValues(fv)
		a.Remeasurements = []Remeasurement{{Date: end, FairValue: fv}}
		return fmt.Sprintf("grant %s: liability-classified warrant measured at the valuation date only (%s); its compensation expense uses that value and no change in fair value is shown apart", g.ID, why)
	}
	if len(revs) == 0 {
		return only("no revaluation was run")
	}
	if r := revs[0]; r.Err != nil || len(r.Values) != len(fv) {
		return only(fmt.Sprintf("it could not be valued at its grant date: %v", r.Err))
	}
	var rs []Remeasurement
	for _, r := range revs[1:] {
		if r.Err != nil || len(r.Values) != len(fv) {
			return only(fmt.Sprintf("it could not be valued at %s: %v", r.Date.Format(time.DateOnly), r.Err))
		}
		rs = append(rs, Remeasurement{Date: r.Date, FairValue: r.Values})
	}
	setValues(revs[0].Values)
	a.Remeasurements = append(rs, Remeasurement{Date: end, FairValue: fv})
	return ""
}
