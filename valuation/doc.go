// Package valuation holds grantworth's numerics: zero curves, the
// employee-option lattice, closed forms and Greeks, warrants with dilution,
// RSUs, a Monte Carlo cross-check, volatility estimation from prices and the
// portfolio runner. It does no I/O and imports nothing above it.
//
// # Units
//
// Times are year fractions on ACT/365F (see YearFrac). Rates are continuously
// compounded decimals and volatilities annual decimals (0.45, not 45). Money
// is in the award's currency per share unless a name says otherwise.
//
// # Separation
//
// Every method takes the Terms of an award (strike, expiry, vesting,
// behaviour) and the Market it is valued in (share price, volatility,
// dividend yield, zero curve) and returns a Result that says how the value
// was obtained: value, error estimate, expected term, steps and method.
//
// # Errors
//
// Bad data (a negative volatility, vesting after expiry) returns an error
// that names the input and its value. Programmer misuse, such as a nil curve
// where one is required, panics.
package valuation
