package main

import (
	"errors"
	"fmt"
	"time"

	"grantworth/grants"
	"grantworth/report"
	"grantworth/valuation"
)

// expense runs the period's attribution and disclosure tables
// (report.AddExpense) over the valued grants of m. The share price at the
// valuation date gives the intrinsic values; revalue measures each
// liability-classified warrant at its grant date and past quarter ends, so
// that its change in fair value is shown apart from compensation. An event
// that does not fit its grant is bad input (exit 2).
func (p *pipeline) expense(_ []*valued, m *report.Model) error {
	var price float64
	if pp, ok := p.s.PriceAt(p.s.Company.ValuationDate); ok {
		price = pp.Price
	}
	err := report.AddExpense(m, p.s, price, p.revalue)
	if errors.Is(err, grants.ErrEvent) {
		return asInput(err)
	}
	return err
}

// revalue values a liability-classified warrant as the base run does at
// the valuation date (lattice with dilution), but with the schedule's
// inputs as of date at: the share price, curve and years to vest and to
// expiry on that date.
func (p *pipeline) revalue(g grants.Grant, at time.Time) ([]float64, error) {
	s := *p.s
	s.Company.ValuationDate = at
	in, err := s.Inputs(g)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(in.Terms))
	for k, t := range in.Terms {
		var r valuation.Result
		if d := p.dilution(g); d != nil {
			r, err = valuation.WarrantValue(t, in.Market, *d, p.opts)
		} else {
			tt := t
			tt.Rational = tt.Rational || !tt.European
			r, err = valuation.Lattice(tt, in.Market, p.opts)
		}
		if err != nil {
			return nil, fmt.Errorf("tranche %d: %w", k+1, err)
		}
		out[k] = r.Value
	}
	return out, nil
}
