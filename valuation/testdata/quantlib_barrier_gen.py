#!/usr/bin/python3
"""Generate QuantLib reference values for the price-hurdle and relative-TSR tests.

Run with Debian's quantlib-python (QuantLib 1.29):
    /usr/bin/python3 quantlib_barrier_gen.py > quantlib_barrier.json

Conventions: flat continuously compounded rate and dividend yield, constant
volatility, Actual/360 with expiry a whole number of days after 2025-01-01
chosen so that the year fraction is exactly the one asked for (T*360 days).

up_and_in: European up-and-in calls, no rebate, continuous monitoring:
  analytic:  AnalyticBarrierEngine (Reiner-Rubinstein)
  binomial:  BinomialBarrierEngine('crr', 4000) (a lattice of QuantLib's own)
exchange: the option to exchange asset 2 for asset 1 at T, (S1 - S2)+, by
  KirkSpreadOptionEngine at strike 0, which is Margrabe's formula exactly.
"""
import json
import QuantLib as ql

TODAY = ql.Date(1, 1, 2025)
DC = ql.Actual360()


def process(s, r, q, vol):
    spot = ql.QuoteHandle(ql.SimpleQuote(s))
    rts = ql.YieldTermStructureHandle(ql.FlatForward(TODAY, r, DC, ql.Continuous))
    qts = ql.YieldTermStructureHandle(ql.FlatForward(TODAY, q, DC, ql.Continuous))
    vts = ql.BlackVolTermStructureHandle(ql.BlackConstantVol(TODAY, ql.NullCalendar(), vol, DC))
    return ql.BlackScholesMertonProcess(spot, qts, rts, vts)


def black(s, r, q, vol, t):
    """A BlackProcess on the forward F = S*e^((r-q)t), which is what
    KirkSpreadOptionEngine takes: e^(-rt)(F1 N(d1) - F2 N(d2)) is then
    Margrabe's S1 e^(-q1 t) N(d1) - S2 e^(-q2 t) N(d2)."""
    import math
    fwd = ql.QuoteHandle(ql.SimpleQuote(s * math.exp((r - q) * t)))
    rts = ql.YieldTermStructureHandle(ql.FlatForward(TODAY, r, DC, ql.Continuous))
    vts = ql.BlackVolTermStructureHandle(ql.BlackConstantVol(TODAY, ql.NullCalendar(), vol, DC))
    return ql.BlackProcess(fwd, rts, vts)


UP_AND_IN = [
    # spot, strike, barrier, years, rate, dividend yield, vol
    (100, 90, 105, 0.5, 0.08, 0.04, 0.25),
    (100, 100, 105, 0.5, 0.08, 0.04, 0.30),
    (100, 110, 105, 0.5, 0.08, 0.04, 0.25),
    (100, 100, 130, 1.0, 0.05, 0.02, 0.35),
    (12, 12, 18, 4.0, 0.04, 0.0, 0.55),
    (12, 10, 24, 10.0, 0.04, 0.01, 0.55),
    (50, 60, 55, 2.0, 0.03, 0.05, 0.20),
    (40, 40, 80, 5.0, 0.045, 0.0, 0.40),
]


def up_and_in():
    out = []
    for s, k, h, t, r, q, vol in UP_AND_IN:
        ql.Settings.instance().evaluationDate = TODAY
        expiry = TODAY + int(round(t * 360))
        proc = process(s, r, q, vol)
        opt = ql.BarrierOption(ql.Barrier.UpIn, h, 0.0, ql.PlainVanillaPayoff(ql.Option.Call, k),
                               ql.EuropeanExercise(expiry))
        opt.setPricingEngine(ql.AnalyticBarrierEngine(proc))
        analytic = opt.NPV()
        opt.setPricingEngine(ql.BinomialBarrierEngine(proc, 'crr', 4000))
        binomial = opt.NPV()
        out.append(dict(spot=s, strike=k, barrier=h, years=t, rate=r, dividend_yield=q, vol=vol,
                        analytic=analytic, binomial=binomial))
    return out


EXCHANGE = [
    # s1, s2, years, rate, q1, q2, vol1, vol2, correlation
    (1.2, 1.0, 2.0, 0.03, 0.0, 0.0, 0.30, 0.40, 0.5),
    (1.0, 1.0, 3.0, 0.04, 0.0, 0.0, 0.45, 0.35, -0.2),
    (0.9, 1.1, 1.0, 0.02, 0.0, 0.0, 0.25, 0.25, 0.8),
    (1.0, 0.95, 2.5, 0.03, 0.02, 0.0, 0.30, 0.35, 0.3),
]


def exchange():
    out = []
    for s1, s2, t, r, q1, q2, v1, v2, rho in EXCHANGE:
        ql.Settings.instance().evaluationDate = TODAY
        expiry = TODAY + int(round(t * 360))
        p1, p2 = black(s1, r, q1, v1, t), black(s2, r, q2, v2, t)
        corr = ql.QuoteHandle(ql.SimpleQuote(rho))
        opt = ql.SpreadOption(ql.PlainVanillaPayoff(ql.Option.Call, 0.0), ql.EuropeanExercise(expiry))
        opt.setPricingEngine(ql.KirkSpreadOptionEngine(p1, p2, corr))
        out.append(dict(s1=s1, s2=s2, years=t, rate=r, q1=q1, q2=q2, vol1=v1, vol2=v2, correlation=rho,
                        value=opt.NPV()))
    return out


print(json.dumps(dict(quantlib=ql.__version__, up_and_in=up_and_in(), exchange=exchange()), indent=1))
