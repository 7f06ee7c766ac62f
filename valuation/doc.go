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
//
// # The employee-option lattice
//
// Lattice and LatticeTranches value an option on a Cox-Ross-Rubinstein tree
// of N steps of Δt = T/N: u = e^(σ√Δt), d = 1/u, and on step i the curve's
// forward rate f_i gives p_i = (e^((f_i−q)Δt) − d)/(u − d) and the discount
// e^(−f_iΔt); every p_i must lie in (0, 1). At expiry a node is worth
// (S−K)⁺. At a vested node the holder exercises if S ≥ M·K (value S − K);
// otherwise he leaves within the step with probability a = 1 − e^(−λΔt),
// λ = −ln(1 − e) for the annual exit share e, exercising if in the money,
// and holds otherwise: a·(S−K)⁺ + (1−a)·continuation, and with rational
// exercise the larger of that and S − K. Before vesting the option only
// rolls back (pre-vesting forfeiture is not part of fair value). The vest
// step is V/Δt rounded to the nearest step (halves up), and that node is
// vested. Convention switches to a per-step exit of e·Δt, exits before
// vesting and an unvested vest-date node, as some published tables use.
//
// One backward pass computes the vested value and the expected remaining
// life (risk-neutral, ending at exercise, exit or expiry) at every node; a
// forward pass of the risk-neutral node probabilities up to the last vest
// date then values every tranche of a grant as its discounted expectation
// at its vest layer. 48 monthly tranches cost about as much as one.
//
// With Steps = N the value is that raw tree, node for node: a textbook
// Cox-Ross-Rubinstein tree.
//
// # Auto mode
//
// With Steps = 0 (auto) the value is converged and carries an error
// estimate. Auto mode values the model's continuous-time limit (the
// conventions taken to their limit: a per-step exit of e·Δt is an intensity
// e) on a lattice built for it rather than on the CRR tree, whose node
// levels fall anywhere against the barrier, the vest date and the spot:
//
//   - A trinomial lattice in log price whose nodes are fixed in space and
//     anchored so that one lies exactly on the barrier ln(M·K) at every step
//     count (Ritchken 1995, "On pricing barrier options", Journal of
//     Derivatives 3(2)); above it the value is S − K. Each node branches to
//     the node nearest its drift and that node's neighbours, with the
//     first two moments of the step matched (Hull and White 1990, "Valuing
//     derivative securities using the explicit finite difference method",
//     Journal of Financial and Quantitative Analysis 25(1)), and
//     σ²Δt/h² = 1/3, which also cancels the leading third and fourth
//     cumulants of the step (Δt the step, h the node spacing).
//   - A time layer on every vest date, whatever the step count: the steps
//     between two vest dates (or the last one and expiry) are equal.
//   - Before the vest date nothing happens but the share moving, so the log
//     price at the vest date is exactly normal, mean ln S0 − ln P(0, V) −
//     qV − σ²V/2 and variance σ²V, for any curve; a tranche is worth
//     P(0, V)·E[W(S_V)] of the vested value W on the vest layer, integrated
//     against that normal density: S − K in closed form above the barrier,
//     below it the trapezoid rule with the Euler-Maclaurin end terms at the
//     barrier (the density's derivatives exact), or, for a density narrower
//     than 1.5 node spacings (vesting days away), exact integration of W's
//     cubic interpolant cell by cell. A vest date days away costs no more
//     than one years away, and the spot needs no node.
//   - The exit payoff's kink at the strike puts a jump of −2λK/σ² in W's
//     third derivative there; the two nodes either side of it get the
//     stencil's known error for such a jump removed (in the manner of the
//     immersed interface method, LeVeque and Li 1994, SIAM Journal on
//     Numerical Analysis 31(4)), and interpolation and integration take the
//     jump out and add it back in closed form: as the one-sided cubic
//     jump·((x − ln K)⁺)³/6 that is 0 on the spot's side of the strike, so
//     that far out of the money it never cancels against a tiny W. Values
//     between nodes come from the quintic through the six nearest nodes.
//     The band reaches two σ√T above the strike. The expiry payoff is
//     averaged over each node's cell (Pooley, Vetzal and Forsyth 2003,
//     "Convergence remedies for non-smooth payoffs in option pricing",
//     Journal of Computational Finance 6(4)).
//   - The ladder: level 0 has 64 steps over the term (more if needed to keep
//     nodes within 0.4 of log price apart), plus the vest dates' layers;
//     each level doubles every interval's steps and divides h by √2.
//     Three levels always; more, up to nine, while a tranche's error
//     estimate exceeds AutoTarget (0.05%) of its value and the work stays
//     within 40 million node-steps and MaxLatticeSteps steps and nodes.
//   - The value is Richardson's R = 2V_L − V_{L−1} of the two finest levels
//     V (the error is c·h² + o(h²)); its estimate is |R_L − R_{L−1}| +
//     0.2·|V_L − V_{L−1}|. Under rational exercise the free boundary falls
//     anywhere between nodes and the error need not be smooth: unless the
//     levels' changes halve regularly, the value is the finest level and
//     its estimate the sum of its last two changes.
//   - If the limits stop the ladder with an estimate above the target,
//     Result.MissedTarget says so; the estimate stays honest.
//   - Far out of the money the target is AutoNegligible (10⁻¹⁰) of the
//     share price where that is more than 0.05% of the value, and no
//     estimate is below a tenth of it. An award whose share price can
//     hardly reach the strike within the term (the reflection principle
//     bounds its value, reachBound, by AutoNegligible of the share price)
//     is valued at 0 with that bound as its estimate, with no lattice. A
//     value is never below 0: an extrapolation that overshoots below 0 is
//     shown as 0 with an estimate covering the finest level.
//
// Against an independent Crank-Nicolson solution of the same model
// (fdref_test.go), over 80 random employee options and 160 with the barrier
// within two node spacings of the spot, vesting now, a day, a week or a
// month away: relative error median 1.1e-5, largest 3.2e-4; the estimate
// covered the error in 78 of the 80 random cases and in 40, 39, 40 and 40
// of the 40 barrier cases of each vesting; Monte Carlo agreed within three
// combined standard errors in all 40 barrier cases tried. A ten-year grant
// of 48 monthly tranches costs about 2.5 million instructions (three
// levels of about 90, 180 and 350 steps and 30 to 60 nodes), a tenth of
// the CRR ladder's.
//
// RunJobs values many grants on all cores, with results in job order that
// do not depend on the number of workers.
//
// # Price hurdles
//
// A HurdleAward vests (an option becomes exercisable, a unit is delivered)
// at the later of each tranche's vest date and the first time the share
// price is at or above the Hurdle, if that is by its deadline. Before then
// nothing happens: no exercise, and a leaver forfeits (pre-vesting, so out
// of fair value). HurdleLattice solves it in auto mode's way: the award
// once the hurdle is met on auto mode's grid anchored on the exercise
// multiple (before the vest date, its vest layer carried back by the exact
// normal law, readFrom), and the award still waiting on a second grid of
// the same spacing and time layers with a node exactly on the hurdle,
// where it takes the first one's value; the ladder, Richardson's
// extrapolation and the estimate are auto mode's (the coarsest level has
// twice its steps). UpAndInCall is the closed form it meets for a
// European call watched continuously (Reiner and Rubinstein 1991). Daily
// closes are the continuous hurdle raised by the continuity correction of
// Broadie, Glasserman and Kou (1997), with DailyCorrectionTolerance in the
// estimate. HurdleSim simulates daily closes (and averages of N closes,
// which only it values) exactly and continuous hurdles by the Brownian
// bridge, and gives the hitting-time distribution and each tranche's
// derived service period (the median time to vest on the paths on which it
// vests, ASC 718-10-55-71). On 40 random up-and-in calls the lattice is
// within 0.05% of the closed form with a covering estimate, and on
// employee options and units it agrees with the simulation within their
// combined error (the tests).
//
// # Relative total shareholder return
//
// TSRSim values units vesting by the company's TSR rank among its peers:
// the total returns at the end of the performance period are drawn exactly
// from correlated geometric Brownian motions (each at the risk-free rate,
// dividends reinvested; the Cholesky factor of the correlations), from the
// TSR to date of each company for an award granted during the period; the
// payout curve (PayoutCurve) and a cap when the company's own TSR is
// negative set the units; a unit is worth the expected payout times the
// share price at the end (rate less dividend yield), discounted.
// Correlations estimates the matrix from price files on common dates, as
// HistoricalVol does each volatility. The tests check the engine against
// Margrabe's exchange option (and QuantLib's), a binary outperformance
// payout against its bivariate-normal closed form, and a large symmetric
// peer group against the uniform rank.
//
// # Simulations of conditions
//
// HurdleSim and TSRSim run antithetic pairs with a control variate (the
// discounted stopped share, mean S0) in blocks of SimBlockPaths paths, each
// block from its own PCG stream, on all cores, in rounds until every
// value's standard error is within SimOptions.TargetRelSE of it: the
// numbers depend on the seed only, never on the number of cores.
package valuation
