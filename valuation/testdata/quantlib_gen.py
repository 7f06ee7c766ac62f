#!/usr/bin/python3
"""Generate QuantLib reference values for the lattice tests.

Run with Debian's quantlib-python:  /usr/bin/python3 quantlib_gen.py > quantlib_calls.json

For each parameter set (calls with a continuous dividend yield, flat
continuously compounded rate, ACT/365F) it records
  european:      AnalyticEuropeanEngine (Black-Scholes-Merton)
  american_fd:   FdBlackScholesVanillaEngine, 4000 time x 4000 space steps
  american_fd_coarse: the same at 2000 x 2000 (the reference's own error)
  american_crr:  BinomialVanillaEngine('crr', 5000) (a second American method)
"""
import json
import QuantLib as ql

SETS = [
    # spot, strike, years, rate, dividend yield, vol
    (42, 40, 0.75, 0.04, 0.08, 0.35),
    (100, 100, 1.0, 0.05, 0.03, 0.20),
    (100, 90, 1.0, 0.05, 0.06, 0.25),
    (100, 110, 2.0, 0.03, 0.04, 0.30),
    (50, 50, 5.0, 0.04, 0.02, 0.40),
    (50, 60, 10.0, 0.05, 0.025, 0.35),
    (12, 12, 10.0, 0.04, 0.01, 0.55),
    (12, 8, 7.0, 0.02, 0.05, 0.60),
    (30, 25, 3.0, 0.06, 0.10, 0.30),
    (30, 35, 0.5, 0.01, 0.03, 0.45),
    (75, 70, 0.5, 0.10, 0.05, 0.35),
    (60, 65, 0.25, 0.08, 0.02, 0.30),
    (20, 15, 4.0, 0.03, 0.07, 0.25),
    (20, 20, 4.0, 0.00, 0.04, 0.50),
    (200, 180, 6.0, 0.045, 0.035, 0.28),
    (5, 6, 8.0, 0.035, 0.015, 0.80),
    (40, 40, 10.0, 0.05, 0.05, 0.30),
    (40, 30, 2.0, 0.02, 0.12, 0.22),
    (90, 100, 1.5, 0.07, 0.01, 0.18),
    (15, 10, 10.0, 0.04, 0.03, 0.65),
    (33, 30, 5.0, 0.041, 0.0, 0.32),
    (8, 10, 3.0, 0.025, 0.06, 0.42),
]


def price(s, k, t, r, q, vol):
    today = ql.Date(1, 1, 2025)
    ql.Settings.instance().evaluationDate = today
    dc = ql.Actual365Fixed()
    days = int(round(t * 365))
    expiry = today + days
    years = days / 365.0
    spot = ql.QuoteHandle(ql.SimpleQuote(s))
    rts = ql.YieldTermStructureHandle(ql.FlatForward(today, r, dc, ql.Continuous))
    qts = ql.YieldTermStructureHandle(ql.FlatForward(today, q, dc, ql.Continuous))
    vts = ql.BlackVolTermStructureHandle(ql.BlackConstantVol(today, ql.NullCalendar(), vol, dc))
    proc = ql.BlackScholesMertonProcess(spot, qts, rts, vts)
    payoff = ql.PlainVanillaPayoff(ql.Option.Call, k)
    eu = ql.VanillaOption(payoff, ql.EuropeanExercise(expiry))
    eu.setPricingEngine(ql.AnalyticEuropeanEngine(proc))
    am = ql.VanillaOption(payoff, ql.AmericanExercise(today, expiry))
    am.setPricingEngine(ql.FdBlackScholesVanillaEngine(proc, 4000, 4000))
    fd = am.NPV()
    am.setPricingEngine(ql.FdBlackScholesVanillaEngine(proc, 2000, 2000))
    fdc = am.NPV()
    am.setPricingEngine(ql.BinomialVanillaEngine(proc, "crr", 5000))
    crr = am.NPV()
    return years, eu.NPV(), fd, fdc, crr


def main():
    rows = []
    for s, k, t, r, q, vol in SETS:
        years, eu, fd, fdc, crr = price(s, k, t, r, q, vol)
        rows.append({"spot": s, "strike": k, "years": years, "rate": r,
                     "dividend_yield": q, "vol": vol, "european": eu,
                     "american_fd": fd, "american_fd_coarse": fdc,
                     "american_crr": crr})
    out = {"library": "QuantLib", "version": ql.__version__,
           "generator": "testdata/quantlib_gen.py",
           "engines": {"european": "AnalyticEuropeanEngine",
                       "american_fd": "FdBlackScholesVanillaEngine(4000, 4000)",
                       "american_fd_coarse": "FdBlackScholesVanillaEngine(2000, 2000)",
                       "american_crr": "BinomialVanillaEngine(crr, 5000)"},
           "calls": rows}
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
