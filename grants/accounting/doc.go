// Package accounting books what pricing measured: the compensation
// expense of share-based awards under ASC 718 and IFRS 2, the warrants
// issued in financings apart from it, the tables of the share-based
// payment note and the journal of the period. This comment is the manual
// of the method; every rule in it has a case worked by hand in the
// package's tests, with the paragraph of the standard named.
//
// # The close
//
// Close takes the schedule, its pricing.Valuation and the prior close (nil
// for a first one) and returns the Books of the period:
//
//  1. AwardsOf pairs each valued grant with its fair value per tranche (an
//     Award): the grant-date value of an equity-classified award; for a
//     liability-classified warrant its value at the grant date, with its
//     revaluations at the past fiscal quarter ends, on the days of its exercises
//     and at the valuation date as Remeasurements. Each event goes with the
//     share price in force on its date. The grant's weighted-average
//     assumptions go along for the disclosure of the period's grants:
//     volatility, dividend yield, the expected term, and the risk-free rate
//     at each tranche's expected term (not at its contractual term), each
//     weighted by the tranches' shares.
//  2. Attribute builds one ledger per award (its tranches with their
//     events) and from the same ledgers the ExpenseReport of the period
//     (Expense) and the Disclosure tables (Disclose).
//  3. After a prior close, the Reconciliation to it (below).
//  4. With a tax rate, the TaxReport of the period: the deferred tax and
//     the deductions taken or lost (below).
//  5. Journal writes the period's entries from the ExpenseReport, the
//     catch-ups and the tax, in the company's chart of accounts (ChartOf).
//
// The schedule's period is grants.Schedule.Period (the Company sheet's
// period_start to valuation_date); its policy is PolicyOf (the Assumptions
// keys attribution, forfeitures, pre_vesting_forfeiture_rate and
// framework, and the Company sheet's fiscal calendar). The share price at
// the period end, for intrinsic values, is grants.Schedule.PeriodEndPrice,
// with its cell; without one, a schedule with options or warrants is an
// error, never a silent zero.
//
// Nothing here values anything (pricing did) or lays anything out (report
// does); report reads Books and adds nothing up.
//
// A large close runs its work per grant (each award, ledger, expense and
// view of the reconciliation) on all cores, and adds the grants up in
// grant order on one (parallel.go): the Books are the same to the bit
// whatever the number of cores. It holds little beside the report's own
// rows: Close's awards refer to the valuation's tranches rather than copy
// them, each grant's views for the reconciliation are taken with its
// expense, and a ledger's tranches are let go once both are drawn (unless
// the tax report reads them after); each worker has its own scratch, and
// the lists kept per grant are cut from larger blocks.
//
// To attribute one award over periods of one's own choosing (a grant
// design before it is made, say) use Spread.
//
// # Days
//
// All dates are calendar days. A tranche's service runs from the start of
// its service-start day to the start of its vest day, and the cost accrues
// evenly per day of service (ACT, valuation.Days). "Cumulative through day d"
// means through the end of day d, so a tranche that vests on 1 January 2030
// after a year of service is fully accrued by 31 December 2029, and a period
// [start, end] includes both of its days. A tranche is vested on and after its
// vest day. An event dated e acts at the end of day e and only on tranches not
// vested on e: a holder who leaves on 31 December does not keep a tranche that
// vests on 1 January; one who leaves on 1 January does.
//
// # Service start
//
// The service period starts on the grant date, or on the holder's hire
// date (the Grants column hire_date) when that is later: a holder hired
// after the grant serves from the day employment begins (ServiceStart;
// ASC 718-10-35-2 and IFRS 2.15, from memory). A vest start after the
// grant date does not delay it: a holder already employed renders service
// from the grant date on, and the vesting schedule only says when the
// shares are earned. Not before the grant date, because the grant date is
// the measurement date and the award does not exist before it; service
// that a holder rendered before the grant (a vest start back-dated to the
// hire date) is caught up at once on the grant date, by a tranche whose
// vest date is already past or by a larger share of a longer tranche. We
// do not use a service inception date before the grant date (ASC
// 718-10-55-108, from memory), because that needs the award remeasured
// until it is granted.
//
// # Attribution
//
// Graded: each tranche straight-line over its own service period (IFRS 2
// requires it; ASC 718 allows it). Straight-line: the whole award
// straight-line from its service start to the last vest date of a tranche
// that still has shares (after a termination, the last vested one), with
// the cumulative cost never below the cost of the tranches vested so far
// (ASC 718-10-35-8). For the by-tranche tables a straight-line award's
// cumulative cost is allocated in full to its vested tranches and the rest to
// the unvested ones in proportion to their cost.
//
// # Forfeitures
//
// Estimate: a tranche still unvested counts its shares not yet forfeited at
// the expected share still there at its vest date, (1 − rate)^Y with Y the
// years of service still to come (at the service start, the whole service
// period). Leavers already recorded are not expected to leave again: a
// termination removes the forfeited shares at once and the estimate for the
// rest covers only the service ahead, so the count converges to the actual
// shares by the vest date (factor 1 from then on). As-occur: every share
// counts until it is forfeited. Either way a forfeiture reverses all the
// cost recognized on the forfeited shares, on the day of the forfeiture.
//
// # Events
//
// Events are given to tranches by grants.Allocate, the one rule that
// validation and Schedule.Tranches use too: forfeited shares come out of
// the unvested tranches in proportion to the shares each still holds (a
// termination forfeits them all; a pooled row of several holders, some of
// whom leave, loses the same share of every unvested tranche, in whole
// shares by the largest remainders, grants.ProRata); shares beyond the
// unvested ones come out of vested shares, latest first, and reverse
// nothing. A forfeiture that leaves shares unvested is a warning of
// validation naming its cell: for one holder who left, those shares would
// vest after the holder was gone. Exercised and expired shares come out
// of vested shares, earliest vest date first, and change counts but not
// the cost of an equity-classified award. Cancelled shares (a
// cancellation without a replacement award) are taken the same way as
// forfeited ones; on unvested shares of an equity-classified award their
// remaining unrecognized cost is recognized in full on the cancellation
// date (ASC 718-20-35-9, IFRS 2.28(a); from memory). Options and warrants
// still outstanding at the end of their expiry date expire then. An event
// that does not fit its grant is an *EventError (errors.Is ErrEvent)
// naming its Events row.
//
// # Liability-classified awards
//
// A liability-classified warrant granted for services is measured at fair
// value at every period end and on the day of each exercise (its
// Remeasurements), and every change in that fair value is compensation
// cost (ASC 718-30-35-3; IFRS 2.30-33). Its liability is the latest fair
// value (the grant-date value until the first remeasurement) times the
// outstanding shares counted (at the expected share under Estimate) times
// the share of service rendered, attributed like any award; its cumulative
// cost is that liability plus what its exercises moved to equity, each at
// the fair value of its exercise day, remeasured then and not taken from
// the last period end. Its expected total and unrecognized cost are at the
// current fair value. Forfeited, cancelled and expired shares leave the
// liability and the cost recognized on them is reversed: a liability
// award costs what it is settled for.
//
// # Financing warrants
//
// A warrant whose purpose is financing (issued to a lender with a loan, or
// to an investor with shares) is not share-based payment (ASC 718-10-15-3
// and IFRS 2.2, from memory): it has no compensation cost and is in none
// of the compensation figures, roll-forwards or journal lines;
// ExpenseReport.Financing and Disclosure.FinancingWarrants hold it apart.
// An equity-classified one is measured once, at issue, and its value at
// issue goes with the financing: with debt, the proceeds are allocated to
// it on relative fair values (ASC 470-20-25-2), the fair value at issue
// being the input; it is equity under ASC 815-40 and IAS 32.16 (from
// memory), never remeasured, and has no entry of the period. A
// liability-classified one is recognized at its fair value at issue, in
// full (there is no service to attribute over), remeasured at every period
// end and on the day of each exercise, and the change is the change in
// fair value of the warrant liability, outside operating expense (ASC
// 815-40-35; a derivative liability at fair value through profit or loss
// under IAS 32.11 and IFRS 9; from memory). Its liability rolls as opening
// + issued + change in fair value − reclassified on exercise = closing,
// the exercised warrants leaving at the exercise day's fair value.
//
// # Modifications
//
// A change of an award's terms (a row of the Modifications sheet) or the
// cancellation of its shares with a concurrent replacement award (a
// cancelled event with a replacement_grant_id) is a modification (ASC
// 718-20-35-3 and 35-8; IFRS 2.26-28 and B42-B44). Award.Modified carries
// the award's parts (grants.Split: a tranche, or the shares of one that
// vest together once a change of vesting cut it) and each change with the
// fair value per share of every part on its date, just before and just
// after it (pricing measures both with that date's share price, curve and
// volatility). Each part's cost is then a stack of layers, each earned over
// its own service and reversed by a forfeiture before its vest day:
//
//   - the grant-date cost, never reduced by a change: a change that brings
//     a vest date forward earns what is left of it from the change to the
//     new date; one that puts it back is not taken into account (IFRS 2
//     B44(c)), so the grant-date cost is earned over the original service
//     and kept once that service is given (ASC 718-20-55-116, Type II);
//   - the incremental fair value (after less before, per part; a decrease
//     adds nothing), at once for a part vested on the date and otherwise
//     over the service from the date to its vest date (B43(a)-(b));
//   - for shares that vest only because of the change while their holder
//     leaves that day (a forfeited event on the date), under ASC 718 an
//     improbable-to-probable change (Type III): the grant-date cost earned
//     on them ends and their whole fair value on the date is recognized
//     instead; IFRS 2 has no such category and treats them as above.
//     Shares the holder forfeits that day all the same (improbable to
//     improbable, Type IV) add nothing. For the leaver's vested options,
//     pricing values the terms before as the lattice's exit does: exercise
//     at once if in the money, else nothing (their intrinsic value);
//   - for a replacement award, the cancelled shares' grant-date cost not
//     yet vested, carried over and earned over the replacement's service
//     (not recognized at once as for a cancellation, ASC 718-20-35-9), and
//     the replacement's value on the date less the cancelled shares' value
//     then, if more (ASC 718-20-35-8; IFRS 2.28(c)).
//
// ModificationExpense reports each change's effect on the cost (the cost
// with the change less the cost without it), the walk from the prior close
// gives it a line of its own, and the journal an entry per change naming
// its grant. A prior close's values of a change are kept like grant-date
// values (Locks); a change first recorded after the quarter it is dated in
// was closed is a catch-up of the open quarter (late_modification).
//
// # Vesting conditions beyond service
//
// An award may vest on a condition besides service (Award.Condition, made
// by ConditionOf from the schedule's Conditions and Assessments and from
// pricing's valuation of the condition).
//
// A performance condition (revenue, earnings, a milestone) is not in the
// fair value per unit (ASC 718-10-30-27, IFRS 2.19). Its cost follows the
// probable outcome (ASC 718-10-25-20; IFRS 2.20 asks for the best estimate
// of the number that will vest, the same figure here): each day counts the
// share of target units named by the latest assessment dated on or before
// it (its expected payout while probable, nothing while improbable, the
// target payout before the first), and only assessments dated by the
// period end count. The cumulative cost is the attribution above times
// that share, so a change of assessment is trued up at once, cumulatively,
// on its date, and a condition that becomes improbable reverses all the
// cost recognized on it (ASC 718-10-35-3, from memory).
// TestPerformanceConditionProbableImprobable works 1,000 units at 20.00
// through probable, improbable and probable at 150% by hand.
//
// A market condition (a price hurdle, relative TSR) is in the fair value
// (ASC 718-10-30-14, IFRS 2.21). Its cost is recognized over the requisite
// service and is not reversed when the condition is not met, only when the
// service is not rendered (a forfeiture); a relative TSR award's cost is
// not trued up for the payout achieved (TestMarketConditionMissedKeepsExpense).
// Each tranche's requisite service runs to the later of its vest date and
// the end the condition sets (Conditioned.ServiceEnd): for a price hurdle
// the derived service period, the median time to vest on the simulated
// paths on which the tranche vests (ASC 718-10-55-71), estimated at grant
// and not revised (IFRS 2.15(b)); for relative TSR the end of the
// performance period. When a hurdle is met (Conditioned.Met), each
// tranche's service ends at the later of that day and its vest date, never
// later than before, so the rest of its cost is recognized by then
// (TestMarketConditionMetEarly). The forfeiture estimate runs to the end of
// the requisite service, and a straight-line award's floor counts a
// tranche once that service is done.
//
// Not modelled: share counts (the roll-forwards, the outstanding and
// vested-and-expected tables) follow the vest dates whatever the
// condition; an award that lapses because its market condition was not
// met leaves them only through an event the company records (expired,
// once its vest date has passed), and its cost stays.
//
// # Fiscal calendar
//
// Policy.Calendar (grants.FiscalCalendar, from the Company keys
// fiscal_year_end and, for a 52/53-week year, fiscal_year_end_weekday and
// fiscal_year_end_rule) sets the quarters: the context quarters before
// the period (Periods), the 16 of the forecast (Forecast, the first from
// the day after the period end to the end of its fiscal quarter), each
// with its Label, and the liability warrants' remeasurement dates. A year
// ending on 31 January has quarters February to April, May to July,
// August to October and November to January, so its forecast has no
// two-month stub. ByFiscalYear is the expense of each fiscal year, from
// the one holding the earliest grant to the one holding the last day of
// service, bucketed by grants.FiscalCalendar.Years (the one bucketing,
// which the comparison of grant designs uses too): recognized, each period
// counted in the year holding its end (so the years add up to the
// cumulative expense, and to the periods as booked after a prior close),
// and expected, as the forecast expects it (adding up to the unrecognized
// cost).
//
// # Cost centres
//
// A grant's service is rendered in its cost centre (the Grants column
// cost_center; Unassigned when empty), and from each Transfers row's date
// on (that day included) in the row's cost centre; transfers dated after
// the period end are left out, like events. Each day of service is
// expensed where it was rendered: a tranche's cumulative cost through day
// d is shared among the cost centres in proportion to the days of its
// service rendered in each through d (a tranche vesting on its service
// start belongs to the centre of that day). For a tranche whose cost
// accrues evenly this puts each day's expense in that day's centre; a
// later change (the forfeiture estimate trued up, a forfeiture reversing
// the cost, a cancellation) is shared by the same days, so the cost
// recognized in each centre is always that of the service rendered there
// (common practice for functional expense; the attribution over the
// service period is ASC 718-10-35-2, from memory). Future service is the
// centre's at the period end. Every figure of a grant (period,
// cumulative, unrecognized, each forecast quarter and what follows) is
// split so, the float rounding going to the centre at the period end, so
// that the parts add up to the grant's figures exactly; ByCostCenter adds
// them up by centre, in name order with Unassigned last, and a warning
// names the grants with expense in Unassigned. After a prior close, the
// difference between the opening balance it booked and the one restated
// now is in the centre at the period end, and so is a catch-up.
//
// # Income taxes
//
// With a statutory rate (the Assumptions key tax_rate, the rate in force
// on each day; 0 or absent: no TaxReport), each award that gives the
// company a tax deduction (grants.Grant.Deductible: the Grants column
// tax_deductible, else options and RSUs yes, warrants no; financing
// warrants never) carries a deferred tax asset on a deductible temporary
// difference:
//
//   - ASC 718: the compensation cost recognized on its outstanding shares
//     (ASC 718-740-25-2 and 718-740-30-1, from memory), for a
//     liability-classified award its liability. The asset is not adjusted
//     for the share price.
//   - IFRS 2: the deduction the share price at the period end would give,
//     the intrinsic value of the outstanding options (the share price of
//     the outstanding RSUs), for the service rendered and on the shares
//     expected to vest, attributed like the cost (IAS 12.68B). The tax on
//     the part of it beyond the cumulative cost of those shares is in
//     equity (IAS 12.68C), per grant; the rest in profit or loss.
//
// An RSU's shares are deducted when they vest and an option's when
// exercised; lapsed and cancelled shares never are. The period's deferred
// tax benefit is the change in the asset less the change of the part in
// equity, the rate at the day before the period start measuring the
// opening asset (so an enacted change of rate goes through the period;
// ASC 740-10-35-4, from memory) and, under IFRS 2, the share price of
// that day the opening deduction. The Settlements of the period are each
// deduction taken (an exercise, at the share price of its Events row or
// else of Share Prices on the day; an RSU tranche vesting, at Share
// Prices on its vest day) or lost (vested shares expired or forfeited,
// shares cancelled): the deduction at the rate less the cost recognized
// on those shares at the rate is an excess tax benefit or a shortfall
// (ASC 718-740-35-2, in income tax expense since ASU 2016-09; under IFRS
// 2 an excess is in equity, IAS 12.68C; from memory). An exercise on a day
// with no share price known is listed as not computed, with the reason.
// The deduction itself reduces current tax and belongs to the income tax
// provision: the journal books only the deferred tax asset's movement
// (its release for the deductions of the period included), so that
// nothing is booked twice. A disqualifying disposition of an incentive
// stock option is not modelled.
//
// # Disclosures
//
// Disclose builds the tables of the share-based payment note
// (ASC 718-10-50-2, IFRS 2.44-52; from memory): roll-forwards of options,
// warrants and nonvested RSUs with weighted averages, the outstanding,
// exercisable and vested-and-expected-to-vest summary, and the period's
// grants with their weighted-average assumptions. Counts are as of the end
// of a day, with the events of that day applied and a tranche vested on
// and after its vest day. Options and warrants are rolled forward on the
// number outstanding; RSUs on the number nonvested (granted, vested,
// forfeited), which is what their note shows. Weighted averages are
// weighted by shares. Every roll-forward satisfies start + granted −
// vested − exercised − forfeited − cancelled − expired = end (Check).
//
// Beside the roll-forwards, each instrument's Activity in the period: the
// total intrinsic value of the options exercised (shares × the share price
// in force on the exercise date less the strike, never below zero), the
// cash received from exercises (shares × strike) and the total fair value
// of the awards vested (ASC 718-10-50-2, from memory), and the
// weighted-average share price at the dates of exercise (IFRS 2.45(c)); an
// exercise on a day with no share price known is counted apart (Unpriced).
// The options outstanding at the end are grouped in ranges of exercise
// prices, each from its lowest price up to RangeWidth (1.5, ours) times
// it, with their weighted-average exercise price and remaining contractual
// life (IFRS 2.45(d)). Financing warrants have a roll-forward of their own.
//
// # Quarter after quarter: the prior close
//
// A finance team closes every quarter, and what it booked stays booked.
// With the Prior of the last close (read from its valuation.json by
// report.ReadPrior; Filed is what a close files for the next one):
//
//   - Open refuses a prior of another company or currency, one whose
//     valuation date is not before this one, a change of attribution or
//     forfeiture policy (a change of accounting policy is not booked
//     here), and a schedule that lacks a grant the prior filed; it opens
//     the period the day after the prior's valuation date.
//   - Locks hands pricing the grant-date values the prior filed, which it
//     keeps for every equity-classified award it measured (ASC
//     718-10-30-6, IFRS 2.16), and a liability-classified warrant's past
//     values; a grant named to be corrected is measured again instead.
//   - Close takes the cumulative cost the prior booked per grant and
//     tranche as the opening balance, and the closed periods as it booked
//     them. The period's expense is the cumulative cost now less that
//     balance. Whatever changes history is a catch-up of the open period
//     (CatchUp, with its Cause): an event dated in a closed period but
//     first recorded now, a grant recorded late, an event removed, changed
//     vesting or service dates, a corrected fair value, a change in the
//     forfeiture rate (a change in estimate: ASC 250-10-45-17, ASC
//     718-10-35-3), and a warrant the prior close booked as compensation
//     whose purpose is financing now (its compensation reversed). A
//     closed period is never restated.
//   - A financing warrant's liability opens as the prior close filed it;
//     its change in fair value in the period closes its roll.
//
// The Reconciliation walks from the prior close to this one. Each award
// is looked at in a few views that differ in one thing at a time (its
// cost once vested, and its cost recognized, in each):
//
//	A′  restated at the prior close with everything known now, at the
//	    prior's forfeiture rate (for a grant of the period: at its grant,
//	    before any event)
//	A   the same at today's rate
//	B1  A with the period's forfeitures
//	B2  A with all of the period's events
//	C   B2 knowing the leavers through this period's end
//	D   this close
//
// The unrecognized cost walks: at the prior close (as filed), plus the
// grants of the period (their cost at grant, A), less the period's
// expense, plus forfeitures and cancellations (B2 − A: the expected cost
// forfeitures release, and the estimate a cancellation settles in full),
// plus changes in the forfeiture estimate ((A − A′) + (C − B2)), plus the
// cost of catch-ups (A′ less the cost filed), plus the remeasurement of
// liability-classified awards (D − C: their cost at today's fair value
// against the prior close's), to the unrecognized cost now. The period's
// expense walks: service in the period (D − C, with the remeasurement of
// liability-classified awards),
// forfeitures (B1 − A), cancellations (B2 − B1), the changed rate on cost
// already recognized (A − A′) and the catch-ups (A′ less the cost
// booked). The liability of liability-classified awards walks from its
// filed balance through compensation and the reclassifications on
// exercise (the financing warrants' liability has its own roll); the awards outstanding of each instrument from the counts
// filed, through the catch-ups (the restated count at the prior close
// less the filed one) and the disclosures' roll-forward, to the count now.
// Every amount is rounded to the cent and every walk adds up exactly
// (Walk.Check): the opening and closing balances and the period's
// expense are rounded as printed elsewhere, and the other movements share
// the rounding by the largest remainder, none more than a cent from its
// exact figure.
//
// Closing quarter after quarter with an unchanged schedule gives, to the
// last bit, the figures of one close at the end (the expense report, the
// disclosures, the journal); the tests check it.
//
// # Journal
//
// The journal is data: Entries of Lines, each line a Role (what the
// account does: compensation expense, equity, the share-based payment
// liability, the financing warrants' liability, its change in fair value,
// the equity exercised financing warrants become, the financing's
// proceeds, the deferred tax asset, the deferred tax line), the Account
// the company maps to that role in its Chart (the Accounts sheet: a code
// and a name per role, and for compensation expense optionally per cost
// centre; DefaultAccount otherwise, a name in the framework's wording and
// no code), the cost centre of an expense line, the grant of a per-grant
// entry, and a debit or a credit. Journal gives the period's summary
// entries: compensation of equity-classified awards against equity and
// of liability-classified awards against their liability, with an expense
// line per cost centre; those exercised, reclassified to equity;
// financing warrants recognized as liabilities at issue; the change in
// fair value of that liability; the financing warrants exercised,
// reclassified to equity; one entry per catch-up naming its grant and
// cause, and one per modification of the period naming its grant (the
// summary lines leave both out); and the deferred tax. Amounts are whole minor units of the currency (grants.MinorUnits:
// cents, or none for the yen). The compensation lines are rounded
// together by the largest remainder method (apportion, common practice),
// so that they add up to the period's expense rounded; every other entry
// is rounded once and its lines share it, so every entry balances exactly.
// An entry that rounds to nothing is left out.
//
// # Framework
//
// Policy.Framework is the standard the books follow: ASC 718 (the default)
// or IFRS 2. Under IFRS 2 graded attribution is required, each tranche
// being a separate award (IFRS 2.IG11, from memory), and forfeitures must
// be estimated (IFRS 2.20); the other choices are an error here and a
// validation error naming the Assumptions cell. The journal's default
// names follow the framework: under IFRS 2 the credit for equity-settled
// awards goes to a share-based payment reserve in equity (IFRS 2.7), not
// additional paid-in capital, and the expense is share-based payment
// expense.
//
// # Extending
//
// Later rules add to these shapes rather than reshape them: a new account
// is a Role (with its default names in grants.AccountRoles); a new kind of history change is a
// Cause; a new movement of a walk is a WalkLine (its views, like those
// above, telescoping from the opening to the closing balance); per-grant
// entries set Line.GrantID. Spread attributes one award over periods of
// one's choosing for those who need no schedule.
//
// # Errors
//
// Bad data (a tranche out of vest-date order, a negative fair value, an
// event that does not fit) is an error naming the grant; several awards'
// errors are joined. A policy the framework forbids is an error.
// Programmer misuse (a period ending before it starts) is an error too,
// never a panic.
package accounting
