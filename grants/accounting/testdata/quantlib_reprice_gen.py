#!/usr/bin/python3
"""Generate quantlib_reprice.json: the Black-Scholes-Merton values of the
vested option repriced in modify_test.go (TestRepricingVestedByHand), just
before (strike 10) and just after (strike 4) the repricing of 2026-08-14,
from QuantLib's AnalyticEuropeanEngine.

Run from this directory with Debian's quantlib-python:
    /usr/bin/python3 quantlib_reprice_gen.py > quantlib_reprice.json

The option has no exercise multiple, no exit rate and no dividends, so
the employee lattice's value is the European call's (early exercise of a
call on a share without dividends is never optimal, Merton 1973).
Conventions matched to grantworth: a flat continuously compounded rate of
4%, Actual/365 Fixed, the expiry 2032-03-01 a whole number of days after
the modification date.
"""
import json
import QuantLib as ql

today = ql.Date(14, ql.August, 2026)
ql.Settings.instance().evaluationDate = today
dc = ql.Actual365Fixed()
expiry = ql.Date(1, ql.March, 2032)
spot, r, q, vol = 4.0, 0.04, 0.0, 0.50

out = {"quantlib": ql.__version__, "spot": spot, "rate": r, "volatility": vol,
       "modification_date": "2026-08-14", "expiry": "2032-03-01", "days": expiry - today, "values": {}}
for strike in (10.0, 4.0):
    process = ql.BlackScholesMertonProcess(
        ql.QuoteHandle(ql.SimpleQuote(spot)),
        ql.YieldTermStructureHandle(ql.FlatForward(today, q, dc, ql.Continuous)),
        ql.YieldTermStructureHandle(ql.FlatForward(today, r, dc, ql.Continuous)),
        ql.BlackVolTermStructureHandle(ql.BlackConstantVol(today, ql.NullCalendar(), vol, dc)))
    opt = ql.VanillaOption(ql.PlainVanillaPayoff(ql.Option.Call, strike), ql.EuropeanExercise(expiry))
    opt.setPricingEngine(ql.AnalyticEuropeanEngine(process))
    out["values"]["%g" % strike] = opt.NPV()
print(json.dumps(out, indent=2))
