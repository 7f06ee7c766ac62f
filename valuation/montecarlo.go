package valuation

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// MCOptions control MonteCarlo.
type MCOptions struct {
	Paths        int    // number of paths, rounded up to even (antithetic pairs); 0 means 50,000
	StepsPerYear int    // time grid; 0 means 52. The barrier and exits are exact between steps (see MonteCarlo)
	Seed         uint64 // seed of the PCG generator; the same seed gives the same numbers
}

// checkEmployee returns an error naming the first behavioural input a
// method of the employee model cannot use.
func checkEmployee(t Terms, m Market) error {
	if err := checkClosedForm(t, m); err != nil {
		return err
	}
	switch {
	case math.IsNaN(t.ExerciseMultiple) || math.IsInf(t.ExerciseMultiple, 0) || t.ExerciseMultiple < 0 ||
		(t.ExerciseMultiple > 0 && t.ExerciseMultiple <= 1):
		return fmt.Errorf("exercise multiple %v must be 0 (none) or above 1", t.ExerciseMultiple)
	case !(t.ExitRate >= 0 && t.ExitRate < 1):
		return fmt.Errorf("exit rate %v must be an annual share at or above 0 and below 1", t.ExitRate)
	}
	return nil
}

// MonteCarlo values the employee option of the package model by simulation,
// as an independent check on the lattice.
//
// The share follows geometric Brownian motion under the risk-neutral
// measure, ln S growing by ∫(f(t) − q − σ²/2)dt + σ dW with f the curve's
// forward rate, sampled exactly at the grid dates (the vest date is one of
// them). Before vesting nothing happens. From the vest date on:
//
//   - the holder exercises when S first reaches H = M·K (M the exercise
//     multiple), monitored continuously: between grid dates with log prices
//     a, b below ln H the path crossed with the Brownian-bridge probability
//     exp(−2(ln H − a)(ln H − b)/(σ²Δt)) (e.g. Glasserman, Monte Carlo
//     Methods in Financial Engineering, §6.4), and the moment it first
//     reached H is drawn from the bridge's first-passage law (bridgeHit);
//     the payoff H − K is discounted from that moment, so the barrier
//     carries no discretisation error;
//   - the holder leaves at an exponential time after vesting with intensity
//     λ = −ln(1 − e) (e the annual exit share), exercising if S > K at that
//     moment; S there is drawn from the Brownian bridge between the grid
//     dates around it, and the barrier is checked on the part of the step
//     before it, so exits carry no discretisation error;
//   - otherwise the option pays (S_T − K)⁺ at expiry.
//
// European terms (or vesting at expiry) pay (S_T − K)⁺ only. Rational
// (American) exercise is not simulated: it needs a regression estimate of
// continuation values, and the lattice values it exactly; such terms return
// an error.
//
// Paths are antithetic pairs (the normals negated; the exit time shared).
// A control variate removes most of the rest of the noise: the discounted
// share value S_τ·e^(qτ)·P(0, τ) at the time τ the option ends is a
// martingale stopped at a stopping time, so its mean is S0 (optional
// stopping); the value is the pair means' average corrected by the
// regression on that control, and ErrorEstimate its standard error (see
// controlled). ExpectedTermYears is the risk-neutral mean of the time the
// option ends (exercise, exit or expiry) and TermError its standard error
// (from the pair means). Steps is the number of paths. The generator is math/rand/v2's
// PCG seeded with o.Seed, so results are reproducible.
func MonteCarlo(t Terms, m Market, o MCOptions) (Result, error) {
	if err := checkEmployee(t, m); err != nil {
		return Result{}, err
	}
	paths := o.Paths
	if paths == 0 {
		paths = 50000
	}
	spy := o.StepsPerYear
	if spy == 0 {
		spy = 52
	}
	if paths < 2 {
		return Result{}, fmt.Errorf("Monte Carlo paths %d must be at least 2", paths)
	}
	if spy < 1 {
		return Result{}, fmt.Errorf("Monte Carlo steps per year %d must be at least 1", spy)
	}
	paths += paths % 2
	T, V := t.YearsToExpiry, t.YearsToVest
	european := t.European || V >= T
	if t.Rational && !european {
		return Result{}, fmt.Errorf("Monte Carlo does not value rational (American) exercise; use the lattice")
	}

	// Time grid: whole steps to the vest date, then to expiry.
	var times []float64
	if european {
		times = []float64{0, T}
	} else {
		nV := int(math.Ceil(V*float64(spy) - 1e-9))
		nA := max(1, int(math.Ceil((T-V)*float64(spy)-1e-9)))
		times = make([]float64, 0, nV+nA+1)
		for i := 0; i <= nV; i++ {
			times = append(times, V*float64(i)/float64(max(nV, 1)))
		}
		for i := 1; i <= nA; i++ {
			times = append(times, V+(T-V)*float64(i)/float64(nA))
		}
		times[nV] = V
	}
	n := len(times) - 1
	iV := 0
	if !european {
		iV = int(math.Ceil(V*float64(spy) - 1e-9))
	}
	q := m.DividendYield
	drift, sd := logSteps(times, m)
	discT := m.Curve.Discount(T)

	K := t.Strike
	barrier := !european && t.ExerciseMultiple > 0
	H := t.ExerciseMultiple * K
	h := math.Log(H)
	lambda := 0.0
	if !european {
		lambda = -math.Log1p(-t.ExitRate)
	}
	x0 := math.Log(m.Spot)
	rng := rand.New(rand.NewPCG(o.Seed, 0x6772616e74776f72)) // stream constant: "grantwor"

	// crossed reports whether a path from log price a to b (both below h)
	// over a Brownian variance v touched h in between.
	crossed := func(a, b, v float64) bool {
		if b >= h {
			return true
		}
		p := bridgeCross(h, a, b, v)
		return p > 0 && rng.Float64() < p
	}
	z := make([]float64, n)
	// path returns the discounted payoff, the time the option ends and the
	// control S·e^(qt)·P(0, t) at that time.
	control := func(logS, at float64) float64 { return math.Exp(logS+q*at) * m.Curve.Discount(at) }
	path := func(s, tau, zb float64) (pv, life, cv float64) {
		x := x0
		for i := 0; i < iV; i++ {
			x += drift[i] + s*sd[i]*z[i]
		}
		if barrier && x >= h {
			return (math.Exp(x) - K) * m.Curve.Discount(V), V, control(x, V)
		}
		for i := iV; i < n; i++ {
			xn := x + drift[i] + s*sd[i]*z[i]
			t0, t1 := times[i], times[i+1]
			if tau < t1 {
				w := (tau - t0) / (t1 - t0)
				xt := x + w*(xn-x) + s*sd[i]*math.Sqrt(w*(1-w))*zb
				if v := sd[i] * sd[i] * w; barrier && crossed(x, xt, v) {
					at := t0 + (tau-t0)*bridgeHit(rng, x, xt, h, v)
					return (H - K) * m.Curve.Discount(at), at, control(h, at)
				}
				return math.Max(math.Exp(xt)-K, 0) * m.Curve.Discount(tau), tau, control(xt, tau)
			}
			if v := sd[i] * sd[i]; barrier && crossed(x, xn, v) {
				at := t0 + (t1-t0)*bridgeHit(rng, x, xn, h, v)
				return (H - K) * m.Curve.Discount(at), at, control(h, at)
			}
			x = xn
		}
		return math.Max(math.Exp(x)-K, 0) * discT, T, control(x, T)
	}

	pairs := paths / 2
	ys := make([]float64, pairs) // pair means of the discounted payoff
	cs := make([]float64, pairs) // pair means of the control
	var lifeSum, lifeSq float64  // of the pair means of the life
	for k := range pairs {
		for i := range z {
			z[i] = rng.NormFloat64()
		}
		tau := math.Inf(1)
		if lambda > 0 {
			tau = V + rng.ExpFloat64()/lambda
		}
		zb := rng.NormFloat64()
		p1, l1, c1 := path(1, tau, zb)
		p2, l2, c2 := path(-1, tau, -zb)
		ys[k], cs[k] = (p1+p2)/2, (c1+c2)/2
		l := (l1 + l2) / 2
		lifeSum += l
		lifeSq += l * l
	}
	mean, se := controlled(ys, cs, m.Spot)
	np := float64(pairs)
	life := lifeSum / np
	lifeSE := math.Sqrt(math.Max(lifeSq/np-life*life, 0) / (np - 1))
	return Result{
		Value:             mean,
		ErrorEstimate:     se,
		ExpectedTermYears: life,
		TermError:         lifeSE,
		Steps:             paths,
		Method:            MethodMC,
	}, nil
}

// bridgeHit is the time, as a share of the step, at which a Brownian bridge
// from log price a (below h) to b over a step of variance v first reaches h,
// given that it does. With u = h − a and w = |h − b|, the hitting time t of
// a step of length Δ has density proportional to
// t^(−3/2)·e^(−u²/(2vt/Δ))·(Δ−t)^(−1/2)·e^(−w²/(2v(Δ−t)/Δ)) (the first
// passage density of Brownian motion to h, then its transition from h to
// b), so z = t/(Δ−t) is inverse Gaussian with mean u/w and shape u²/v, or
// Lévy (z = (u²/v)/N²) when b = h. Derived here from the reflection
// principle; the inverse Gaussian is drawn by Michael, Schucany and Haas
// (1976, "Generating random variates using transformations with multiple
// roots", The American Statistician 30(2)).
func bridgeHit(rng *rand.Rand, a, b, h, v float64) float64 {
	u, w := h-a, math.Abs(h-b)
	shape := u * u / v
	var z float64
	if w == 0 {
		n := rng.NormFloat64()
		z = shape / (n * n)
	} else {
		mu := u / w
		y := rng.NormFloat64()
		y *= y
		x := mu + mu*mu*y/(2*shape) - mu/(2*shape)*math.Sqrt(4*mu*shape*y+mu*mu*y*y)
		z = x
		if rng.Float64() > mu/(mu+x) {
			z = mu * mu / x
		}
	}
	if math.IsInf(z, 1) {
		return 1
	}
	return z / (1 + z)
}

// controlled is the control-variate estimate of the mean of ys given
// controls cs of known mean mu: mean(y) − β·(mean(c) − mu) with β the
// sample regression slope cov(y, c)/var(c), and its standard error from the
// residual variance var(y) − cov²/var(c) with n − 2 degrees of freedom
// (Glasserman, Monte Carlo Methods in Financial Engineering, §4.1). Two
// passes over the samples.
func controlled(ys, cs []float64, mu float64) (mean, se float64) {
	n := float64(len(ys))
	var my, mc float64
	for i := range ys {
		my += ys[i]
		mc += cs[i]
	}
	my /= n
	mc /= n
	var syy, scc, syc float64
	for i := range ys {
		dy, dc := ys[i]-my, cs[i]-mc
		syy += dy * dy
		scc += dc * dc
		syc += dy * dc
	}
	beta := 0.0
	if scc > 0 {
		beta = syc / scc
	}
	mean = my - beta*(mc-mu)
	if len(ys) > 2 {
		res := math.Max(syy-beta*syc, 0) / (n - 2)
		se = math.Sqrt(res / n)
	}
	return mean, se
}
