#!/usr/bin/python3
"""Generate quantlib_par.json: zero curves bootstrapped by QuantLib from
government par yields, the reference for valuation/par_test.go.

Run from this directory with Debian's quantlib-python:
    /usr/bin/python3 quantlib_par_gen.py > quantlib_par.json

Conventions chosen to match valuation.BootstrapPar as closely as QuantLib
allows:
  * 30/360 (bond basis) for coupons and for the curve's time axis, with the
    reference date on the 15th, so every half-year is exactly 0.5 years and
    every coupon exactly y/2; NullCalendar, no business-day adjustment,
    settlement on the reference date, so accrued interest is nil.
  * Bills (tenors below half a year) are DepositRateHelpers: one payment of
    1 + y*t at t, as BootstrapPar assumes.
  * PiecewiseLinearZero: continuous zero rates linear in time, as Curve.

Two curves per set of quotes:
  "matched":     a FixedRateBondHelper at every half-year, with the par yield
                 interpolated linearly between quoted tenors (BootstrapPar's
                 rule), so the two bootstraps solve the same equations and
                 should agree to QuantLib's solver accuracy;
  "quoted_only": helpers at the quoted tenors only; QuantLib then interpolates
                 zero rates (not par yields) between quotes, a different
                 curve whose difference the test bounds and reports.
"""
import json
import QuantLib as ql

today = ql.Date(15, ql.January, 2026)
ql.Settings.instance().evaluationDate = today
dc = ql.Thirty360(ql.Thirty360.BondBasis)

SETS = {
    # Invented test quotes (tenor in years, par yield), shapes of the trade:
    "upward": [(1/12, 0.0390), (0.25, 0.0395), (0.5, 0.0400), (1, 0.0385),
               (2, 0.0370), (3, 0.0372), (5, 0.0385), (7, 0.0400),
               (10, 0.0420), (20, 0.0470), (30, 0.0465)],
    "inverted": [(0.25, 0.0550), (0.5, 0.0545), (1, 0.0520), (2, 0.0480),
                 (5, 0.0430), (10, 0.0410), (30, 0.0400)],
    "flat5": [(0.5, 0.05), (1, 0.05), (2, 0.05), (5, 0.05), (10, 0.05)],
}


def par_at(quotes, t):
    if t <= quotes[0][0]:
        return quotes[0][1]
    if t >= quotes[-1][0]:
        return quotes[-1][1]
    for (t0, y0), (t1, y1) in zip(quotes, quotes[1:]):
        if t0 <= t <= t1:
            return y0 + (t - t0) / (t1 - t0) * (y1 - y0)


def helper(t, y):
    months = int(round(12 * t))
    if t < 0.5:
        return ql.DepositRateHelper(ql.QuoteHandle(ql.SimpleQuote(y)), ql.Period(months, ql.Months),
                                    0, ql.NullCalendar(), ql.Unadjusted, False, dc)
    maturity = today + ql.Period(months, ql.Months)
    schedule = ql.Schedule(today, maturity, ql.Period(ql.Semiannual), ql.NullCalendar(),
                           ql.Unadjusted, ql.Unadjusted, ql.DateGeneration.Backward, False)
    return ql.FixedRateBondHelper(ql.QuoteHandle(ql.SimpleQuote(100.0)), 0, 100.0, schedule, [y], dc,
                                  ql.Unadjusted, 100.0, today)


def zeros(curve, times):
    out = []
    for t in times:
        d = today + ql.Period(int(round(12 * t)), ql.Months)
        out.append({"tenor": t, "zero": curve.zeroRate(d, dc, ql.Continuous).rate(),
                    "discount": curve.discount(d)})
    return out


result = {"generator": "testdata/quantlib_par_gen.py", "quantlib_version": ql.__version__,
          "curve": "PiecewiseLinearZero, 30/360 bond basis, continuous zero rates", "sets": []}
for name, quotes in SETS.items():
    bills = [t for t, _ in quotes if t < 0.5]
    halves = [k / 2 for k in range(1, int(round(2 * quotes[-1][0])) + 1)]
    matched = [helper(t, quotes[[q[0] for q in quotes].index(t)][1]) for t in bills]
    matched += [helper(t, par_at(quotes, t)) for t in halves]
    c1 = ql.PiecewiseLinearZero(today, matched, dc)
    c2 = ql.PiecewiseLinearZero(today, [helper(t, y) for t, y in quotes], dc)
    result["sets"].append({
        "name": name,
        "tenors": [t for t, _ in quotes], "par_yields": [y for _, y in quotes],
        "matched": zeros(c1, bills + halves),
        "quoted_only": zeros(c2, bills + halves),
    })
print(json.dumps(result, indent=1))
