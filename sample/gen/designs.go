package main

import "grantworth/grants"

// Designs builds sample/designs.xlsx: six ways Tarnwick Labs could make its
// next senior hire's grant, for grantworth compare. The company, its
// assumptions, share valuations and rate curves are those of the schedule;
// the grant date is two weeks after its valuation date, with the
// valuation of 2026-09-30 in force.
//
//   - Standard: options at the money, four years monthly after a one-year
//     cliff, ten-year term;
//   - 3y no cliff: vesting over three years, monthly from the first month;
//   - Premium 25%: the standard with the strike a quarter above the price;
//   - 7-year term: the standard with a shorter life;
//   - RSUs: a third as many units, four years quarterly after the cliff;
//   - Long window: the standard with a long exercise window after leaving,
//     so fewer leavers exercise at once: a post-vesting exit rate of 4%
//     instead of the company's 12%.
func Designs() *grants.Schedule {
	s := Schedule()
	d := &grants.Schedule{Company: s.Company, Assumptions: s.Assumptions, SharePrices: s.SharePrices, Rates: s.Rates}
	d.Company.PeriodStart = d.Company.ValuationDate.AddDate(0, -3, 1)
	d.Company.GrantDate = day("2026-10-15")
	std := grants.Design{Instrument: grants.Option, Shares: 120_000, StrikePremium: f(0), TermYears: 10, VestMonths: 48, CliffMonths: 12, VestEvery: 1}
	with := func(name string, change func(*grants.Design)) grants.Design {
		x := std
		x.Name = name
		change(&x)
		return x
	}
	d.Designs = []grants.Design{
		with("Standard", func(*grants.Design) {}),
		with("3y no cliff", func(x *grants.Design) { x.VestMonths, x.CliffMonths = 36, 0 }),
		with("Premium 25%", func(x *grants.Design) { x.StrikePremium = f(0.25) }),
		with("7-year term", func(x *grants.Design) { x.TermYears = 7 }),
		with("RSUs", func(x *grants.Design) {
			x.Instrument, x.Shares, x.StrikePremium, x.TermYears, x.VestEvery = grants.RSU, 40_000, nil, 0, 3
		}),
		with("Long window", func(x *grants.Design) { x.PostVestingExitRate = f(0.04) }),
	}
	return d
}
