#!/usr/bin/python3
"""Generate quantlib_reprice.json: the Black-Scholes-Merton values of the
vested option repriced in modify_test.go (TestRepricingVestedByHand), just
before (strike 10) and just after (strike 4) the repricing of 2026-08-14,
and of the leaver's vested options in TestLeaverWindowByHand after their
exercise window is extended to a year on 2026-08-01 (share 3, strike 2,
expiry 2027-08-01), from QuantLib's AnalyticEuropeanEngine.

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

dc = ql.Actual365Fixed()
r, q, vol = 0.04, 0.0, 0.50


def call(today, expiry, spot, strike):
    ql.Settings.instance().evaluationDate = today
    process = ql.BlackScholesMertonProcess(
        ql.QuoteHandle(ql.SimpleQuote(spot)),
        ql.YieldTermStructureHandle(ql.FlatForward(today, q, dc, ql.Continuous)),
        ql.YieldTermStructureHandle(ql.FlatForward(today, r, dc, ql.Continuous)),
        ql.BlackVolTermStructureHandle(ql.BlackConstantVol(today, ql.NullCalendar(), vol, dc)))
    opt = ql.VanillaOption(ql.PlainVanillaPayoff(ql.Option.Call, strike), ql.EuropeanExercise(expiry))
    opt.setPricingEngine(ql.AnalyticEuropeanEngine(process))
    return opt.NPV()


today = ql.Date(14, ql.August, 2026)
expiry = ql.Date(1, ql.March, 2032)
spot = 4.0
out = {"quantlib": ql.__version__, "spot": spot, "rate": r, "volatility": vol,
       "modification_date": "2026-08-14", "expiry": "2032-03-01", "days": expiry - today, "values": {}}
for strike in (10.0, 4.0):
    out["values"]["%g" % strike] = call(today, expiry, spot, strike)
left, window = ql.Date(1, ql.August, 2026), ql.Date(1, ql.August, 2027)
out["leaver"] = {"modification_date": "2026-08-01", "expiry": "2027-08-01", "days": window - left,
                 "spot": 3.0, "strike": 2.0, "value": call(left, window, 3.0, 2.0)}
print(json.dumps(out, indent=2))
