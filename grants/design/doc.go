// Package design compares grant designs before a grant is made: what each
// costs the company, what it is worth to the person who receives it, and
// how its expense lands year by year. It is the engine of grantworth's
// compare command; package report lays its Comparison out.
//
// # Input
//
// A designs workbook (grants.ReadDesigns, the layout grants.DesignSheets):
// the schedule's Company, Assumptions, Share Prices and Rates sheets for
// the shared context, and a Designs sheet of one row per design. Every
// design is granted on the Company's grant_date (else its valuation_date)
// at the share price and on the rate curve in force then.
//
// # Per design
//
// Compare turns each design into the grant it describes
// (grants.Schedule.DesignGrant) and values it through the same run as a
// schedule's grants (pricing.Value), so a design identical to a
// grant of a schedule gets the fair value that grant gets from the value
// command, tranche for tranche. From that run come:
//
//   - the fair value per share and in total, share-weighted over the
//     tranches, with the lattice's error estimate (the accounting number);
//   - the expected term (risk-neutral, from the lattice) and the
//     Black-Scholes-Merton value on the simplified-method term beside it;
//   - the total fair value with volatility 5 and 10 points lower and higher;
//   - the Monte Carlo cross-check of the design's largest tranche.
//
// Then, for the company: the expected cost, each tranche's fair value times
// the share of holders still there at its vest date, (1 − f)^V with f the
// pre-vesting forfeiture rate (valuation.ExpectedCost): a planning figure,
// never the fair value. Its expense by fiscal year is the fair value
// attributed by the company's method (graded: each tranche over its own
// service; straight-line: the award evenly, never behind the vested
// tranches) through the schedule's attribution (accounting.Spread) over
// the fiscal year ends, with forfeitures estimated at the design's rate from
// the grant date; the years add up to the expected cost. Under a policy of accounting for forfeitures as they
// occur a company books the full cost as service is rendered and reverses
// it when a holder leaves: the expected total is the same, the timing
// earlier.
//
// And for the holder, under the same model and the risk-neutral measure
// (valuation.SimulateOutcomes, seeded): the probability that a share of the
// award ends in the money; how it ends (exercise at the multiple, on
// leaving, at expiry, or lapsing) and when; percentiles of the award's
// payoff in today's money; and the break-even share price, the price at
// expiry at which the award pays its fair value grown at the risk-free rate
// (strike + fair value / P(0, T) for an option; for an RSU, fair value /
// P(0, V) at its last vest date). These are risk-neutral figures: they
// price the award, they do not forecast the share.
//
// # Years
//
// The expense by year is by the fiscal years of the designs workbook's
// Company sheet (fiscal_year_end and the 52/53-week keys; calendar years by
// default), bucketed by grants.FiscalCalendar.Years, the one place dates
// are bucketed into fiscal years, which the valuation's expense by fiscal
// year uses too; each year is named by the calendar year of its nominal
// end month.
package design
