// Package pricing is the schedule-wide valuation run: from a validated
// schedule's inputs (grants.Schedule.ValueInputs) to the fair value of
// every tranche and the checks around it. It sits between grants, which
// owns the inputs and their cells, and the numerics of valuation, which
// know nothing of schedules; accounting and report come after it and
// never call back into it.
//
// # What Value does
//
// Value takes the inputs of every grant made by the valuation date and
// returns a Valuation:
//
//   - Dispatch by instrument, decided here and nowhere else: options on the
//     employee-option lattice as valuation.Jobs run on all cores
//     (valuation.RunJobs), identical jobs (every number that enters the
//     lattice equal bit for bit: a board's batch of grants) valued once;
//     warrants on the lattice with dilution (valuation.WarrantValue:
//     Galai-Schneller for a liability-classified warrant, whose price
//     already reflects it; the plain N/(N+W) factor for a new issue),
//     rational exercise unless European; RSUs in closed form
//     (valuation.RSUValue).
//   - The closed-form comparison of each tranche (GrantValue.BSM):
//     Black-Scholes-Merton on the simplified-method term for options, over
//     the contractual term before dilution for warrants, the RSU value
//     itself for RSUs; with the zero rates of the tranche and of that term.
//   - Sensitivity: total fair value with one input moved for every grant
//     (volatility, exercise multiple, exit rate, the whole curve), on an
//     evenly spaced sample of SensitivitySample grants when the ledger is
//     larger, scaled to the total.
//   - Convergence: the raw lattice at ConvergenceSteps beside the
//     automatic value, on the option tranche of largest total value.
//   - A Monte Carlo cross-check of up to MonteCarloSample tranches spread
//     over instruments and grant months, each with its own seed, z against
//     the lattice and a warning past MonteCarloZLimit.
//
// The automatic value beside the convergence study and the checks is the
// one the run reports for the tranche, valued with its grant's other
// tranches (a tranche valued alone sits on another time grid and may
// differ within the error estimate); it is valued again only where the run
// did not value it so (a raw --steps run, a diluted warrant, a value kept
// from a prior close).
//   - The tranches whose automatic lattice value misses valuation.AutoTarget
//     (valuation.Result.MissedTarget), listed in Valuation.MissedTarget with
//     a warning each (the first MissedTargetWarnings): the lattice's value
//     and estimate, and the Monte Carlo value of the same terms beside it
//     for the first MissedTargetSample the simulation can value.
//   - Revaluations of each liability-classified warrant at its grant date,
//     at the past fiscal quarter ends and on the days of its exercises before
//     its expiry (RemeasurementDates): the accounting remeasures the
//     liability to them, and reclassifies exercised warrants to equity at
//     the exercise day's value, not the last period end's.
//   - Per tranche, the zero rates at its years to expiry, at the term of
//     its closed-form comparison and at its expected term
//     (ExpectedTermRate), the last being the rate disclosed for the
//     period's grants.
//
// # Vesting conditions
//
// A grant may carry a condition besides service (grants.Inputs.Condition),
// and the dispatch decides its method here too (conditions.go):
//
//   - A performance condition stays out of the fair value (ASC
//     718-10-30-27, IFRS 2.19): the grant is valued as the same award with
//     service vesting only; the accounting follows its probable outcome.
//   - A price hurdle on the closing price is valued on the hurdle lattice
//     (valuation.HurdleLattice), and simulated beside it
//     (valuation.HurdleSim, at HurdleCheckTarget) as the check: z per
//     tranche, a warning past MonteCarloZLimit. The simulation also gives
//     the probability of meeting the hurdle, its hitting-time distribution
//     and each tranche's derived service period (ASC 718-10-55-71), which
//     the accounting runs the expense to; and the award is valued without
//     its hurdle for the memo.
//   - A hurdle on an average of closing prices, and relative TSR
//     (valuation.TSRSim, its volatilities, correlations and TSR to date
//     from the price files), are valued by simulation at SimTarget.
//
// Each grant simulates with a seed derived from its grant ID, so its
// numbers are the same in every close wherever it sits in the ledger; the
// sensitivity cases reuse it (common random numbers). Market-condition
// grants are left out of the generic checks (convergence, the Monte Carlo
// sample, the missed-target list), which value the award without its
// condition. GrantValue.Condition holds what was found.
//
// # After a prior close
//
// Options.Locks are the measurements a prior close filed
// (accounting.Prior.Locks). An equity-classified grant's grant-date fair
// value is measured once (ASC 718-10-30-6, IFRS 2.16): a locked grant
// keeps, tranche by tranche (matched by vest date), the values, error
// estimates, expected terms, comparisons and zero rates filed, and the
// inputs they were measured with (Status Locked). Today's measurement is
// still made, so that a grant whose values today's inputs would move by
// more than their error estimates is noted (GrantValue.Drift, with the
// inputs that differ and their cells) and warned of. A liability-classified
// warrant is remeasured at the valuation date (Status Remeasured) and
// keeps its filed values at its grant date and past quarter ends. A grant
// named in Options.Correct is measured again (Status Corrected): the
// correction of an error, which the accounting books as a catch-up. A
// locked grant whose tranches changed, or whose classification changed,
// must be corrected: the error wraps ErrLock.
//
// With Options.Reuse, a locked grant whose valuation key today is the one
// filed (every number that enters its valuation as it was, the same
// grantworth) keeps its filed values without being valued (Reused), and
// gets exactly what valuing it again would give. Options.Studies are the
// prior close's checks (studies.go): the Monte Carlo cross-check of a
// tranche, the convergence study, the sensitivity cases are taken from it
// only when every grant they touch is Reused and was measured by that
// close on the inputs of its key (Lock.Measured), the same tranche and
// seed, the same sample of the same ledger; the sensitivity cases when,
// besides, the ledger's total is the one filed, or the prior filed the
// sample's totals (SensitivityPoint.SampleTotal). Valuation.StudiesReused
// says which were taken. A rerun that reuses writes the same outputs, byte
// for byte, as one that values and checks everything again.
//
// The result depends on the schedule and the options only, never on the
// number of cores. Progress comes back through the callbacks of Options;
// Value prints nothing.
//
// # Errors
//
// An input the lattice refuses is an error naming the grant and tranche.
// A revaluation that fails is kept in the Valuation (Revaluation.Err) for
// the accounting to explain; it does not stop the run.
package pricing
