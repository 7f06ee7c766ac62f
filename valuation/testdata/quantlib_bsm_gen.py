#!/usr/bin/python3
"""Generate quantlib_bsm.json: European option values and Greeks from
QuantLib's AnalyticEuropeanEngine (Black-Scholes-Merton with a continuous
dividend yield), the reference for valuation/bsm_test.go.

Run from this directory with Debian's quantlib-python:
    /usr/bin/python3 quantlib_bsm_gen.py > quantlib_bsm.json

Conventions matched to grantworth: flat continuously compounded rate and
dividend yield, Actual/365 Fixed, the expiry a whole number of days after
the evaluation date, so T = days/365 exactly. QuantLib's theta is per year
(theta()), vega and rho per unit of volatility and rate.
"""
import json
import QuantLib as ql

today = ql.Date(15, ql.January, 2026)
ql.Settings.instance().evaluationDate = today
dc = ql.Actual365Fixed()

cases = []
for spot, strike, days, r, q, vol in [
    (100, 100, 365, 0.05, 0.00, 0.20),
    (100, 90, 182, 0.03, 0.02, 0.25),
    (100, 110, 730, 0.04, 0.01, 0.35),
    (50, 50, 3650, 0.05, 0.025, 0.35),
    (12, 12, 3650, 0.04, 0.0, 0.55),
    (12, 30, 3650, 0.04, 0.0, 0.55),
    (40, 60, 1825, 0.03, 0.0, 0.30),
    (75, 70, 183, 0.10, 0.05, 0.35),
    (42, 40, 274, 0.04, 0.08, 0.35),
    (1, 2, 30, 0.01, 0.0, 0.80),
    (200, 100, 90, 0.02, 0.03, 0.15),
    (100, 150, 2555, -0.005, 0.0, 0.45),
    (8.5, 10, 1460, 0.045, 0.015, 0.60),
    (30, 25, 7, 0.05, 0.0, 0.40),
    (100, 100, 10950, 0.03, 0.02, 0.30),
    (65, 60, 500, 0.07, 0.10, 0.18),
]:
    spot_h = ql.QuoteHandle(ql.SimpleQuote(spot))
    rts = ql.YieldTermStructureHandle(ql.FlatForward(today, r, dc, ql.Continuous))
    qts = ql.YieldTermStructureHandle(ql.FlatForward(today, q, dc, ql.Continuous))
    vts = ql.BlackVolTermStructureHandle(ql.BlackConstantVol(today, ql.NullCalendar(), vol, dc))
    process = ql.BlackScholesMertonProcess(spot_h, qts, rts, vts)
    engine = ql.AnalyticEuropeanEngine(process)
    expiry = today + days
    for kind, name in [(ql.Option.Call, "call"), (ql.Option.Put, "put")]:
        opt = ql.VanillaOption(ql.PlainVanillaPayoff(kind, strike), ql.EuropeanExercise(expiry))
        opt.setPricingEngine(engine)
        cases.append({
            "type": name, "spot": spot, "strike": strike, "years": days / 365.0,
            "rate": r, "dividend_yield": q, "vol": vol,
            "value": opt.NPV(), "delta": opt.delta(), "gamma": opt.gamma(),
            "vega": opt.vega(), "theta": opt.theta(), "rho": opt.rho(),
        })

print(json.dumps({"generator": "testdata/quantlib_bsm_gen.py",
                  "quantlib_version": ql.__version__,
                  "engine": "AnalyticEuropeanEngine", "cases": cases}, indent=1))
