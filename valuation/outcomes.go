package valuation

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
)

// OutcomeOptions control SimulateOutcomes.
type OutcomeOptions struct {
	Paths        int    // number of share-price paths; 0 means DefaultOutcomePaths
	StepsPerYear int    // time grid; 0 means DefaultOutcomeStepsPerYear (vest dates and expiries are added to it)
	Seed         uint64 // seed of the PCG generator; the same seed gives the same numbers
}

// Defaults of OutcomeOptions. The share is sampled exactly at the grid
// dates, and the barrier, its hit time and departures are exact between
// them: twice a month is ample.
const (
	DefaultOutcomePaths        = 20000
	DefaultOutcomeStepsPerYear = 24
)

// Ending is how one tranche of an award ends on a path.
type Ending int

const (
	EndMultiple        Ending = iota // exercised when the share reached the exercise multiple
	EndLeftExercised                 // the vested holder left with the award in the money and exercised
	EndLeftLapsed                    // the vested holder left with it out of the money: it lapsed
	EndExpiryExercised               // exercised at expiry in the money (an RSU: delivered at vesting)
	EndExpiryLapsed                  // out of the money at expiry: it lapsed
	NumEndings
)

// Outcomes is the risk-neutral distribution of what an award of several
// tranches pays, by simulation. Probabilities and the mean are weighted by
// the tranches' weights (their shares): they describe one share of the
// award picked at random.
type Outcomes struct {
	Paths int
	// Sample is, per path, the award's payoff per share discounted to the
	// measurement date, Σ w_k·PV_k / Σ w_k, in ascending order.
	Sample []float64
	Mean   float64 // of Sample: the simulated value per share
	StdErr float64 // of Mean
	// InTheMoney is the probability that a share of the award ends with a
	// payoff (exercised, or an RSU delivered).
	InTheMoney float64
	Endings    [NumEndings]float64 // probability of each way of ending
	// EndYears[i] is the probability of ending in year i+1 after the
	// measurement date: after i years and by i+1, with yearLeeway for the
	// leap days in a run of anniversaries (ten calendar years are up to
	// three days more than ten years of 365 days).
	EndYears []float64
	// EndMonths[i] is the same for month i+1, in twelfths of a year.
	EndMonths         []float64
	ExpectedTermYears float64 // mean time to the end
}

// Quantile is the p-quantile of Sample (0 ≤ p ≤ 1), by linear
// interpolation between order statistics.
func (o *Outcomes) Quantile(p float64) float64 {
	n := len(o.Sample)
	if n == 0 {
		return math.NaN()
	}
	x := p * float64(n-1)
	i := min(max(int(math.Floor(x)), 0), n-1)
	j := min(i+1, n-1)
	f := x - float64(i)
	return o.Sample[i] + f*(o.Sample[j]-o.Sample[i])
}

// SimulateOutcomes simulates how an award of several tranches ends under the
// package's employee model and the risk-neutral measure, and what it pays:
// the distribution behind the fair value, for a holder who wants to know
// what an award may be worth rather than what it is worth on average.
//
// tranches holds each tranche's terms (its own YearsToVest; an RSU is a
// zero strike expiring at its vest date) and weights their shares. The
// share follows the same geometric Brownian motion as MonteCarlo, sampled
// exactly on a grid that holds every vest date and expiry. Each tranche
// follows the model on the common path: nothing before it vests; from then
// on exercise when the share first reaches M·K (between grid dates by the
// Brownian-bridge crossing probability, paying H − K at a hit time drawn
// from the bridge's first-passage law, bridgeHit), or a departure at V + E/λ (E a standard exponential drawn once per
// path, so every tranche's departure comes the same time after its own
// vesting; the share there drawn from the Brownian bridge), else (S_T − K)⁺
// at expiry. European terms pay at expiry only. The mean of Sample is
// therefore an estimate of the weighted fair value per share, and each
// tranche's marginal distribution is the model's; how tranches move together
// beyond the common share path is this coupling's choice.
//
// All tranches with an exercise multiple must share one barrier M·K.
// Rational (American) exercise is not simulated and is an error, as for
// MonteCarlo.
func SimulateOutcomes(tranches []Terms, weights []float64, m Market, o OutcomeOptions) (*Outcomes, error) {
	if len(tranches) == 0 || len(tranches) != len(weights) {
		return nil, fmt.Errorf("outcomes: %d tranches and %d weights", len(tranches), len(weights))
	}
	paths, spy := o.Paths, o.StepsPerYear
	if paths == 0 {
		paths = DefaultOutcomePaths
	}
	if spy == 0 {
		spy = DefaultOutcomeStepsPerYear
	}
	if paths < 2 || spy < 1 {
		return nil, fmt.Errorf("outcomes: paths %d must be at least 2 and steps per year %d at least 1", paths, spy)
	}
	var wsum, H, horizon float64
	for k, t := range tranches {
		if err := checkEmployee(t, m); err != nil {
			return nil, fmt.Errorf("tranche %d: %w", k+1, err)
		}
		if t.Rational && !t.European && t.YearsToVest < t.YearsToExpiry {
			return nil, fmt.Errorf("tranche %d: the simulation does not value rational (American) exercise", k+1)
		}
		if !(weights[k] >= 0) || math.IsInf(weights[k], 0) {
			return nil, fmt.Errorf("tranche %d: weight %v must be a finite number at or above 0", k+1, weights[k])
		}
		if t.ExerciseMultiple > 0 && !t.European {
			h := t.ExerciseMultiple * t.Strike
			if H != 0 && h != H {
				return nil, fmt.Errorf("tranche %d: exercise barrier %v differs from %v; the tranches must share one", k+1, h, H)
			}
			H = h
		}
		wsum += weights[k]
		horizon = math.Max(horizon, t.YearsToExpiry)
	}
	if !(wsum > 0) {
		return nil, fmt.Errorf("outcomes: the weights add up to %v", wsum)
	}

	// The grid: whole steps of 1/spy, with every vest date and expiry.
	times := []float64{0}
	for i := 1; float64(i)/float64(spy) < horizon-1e-9; i++ {
		times = append(times, float64(i)/float64(spy))
	}
	times = append(times, horizon)
	for _, t := range tranches {
		times = append(times, t.YearsToVest, t.YearsToExpiry)
	}
	sort.Float64s(times)
	times = slices.CompactFunc(times, func(a, b float64) bool { return math.Abs(b-a) < 1e-9 })
	at := func(x float64) int { // the grid index of a vest date or expiry
		i := sort.SearchFloat64s(times, x-1e-9)
		return min(i, len(times)-1)
	}
	n := len(times) - 1
	drift, sd := logSteps(times, m)
	disc := make([]float64, n+1)
	for i, t := range times {
		disc[i] = m.Curve.Discount(t)
	}
	type tranche struct {
		Terms
		w, lambda float64
		iV, iT    int
	}
	ts := make([]tranche, len(tranches))
	for k, t := range tranches {
		ts[k] = tranche{Terms: t, w: weights[k] / wsum, iV: at(t.YearsToVest), iT: at(t.YearsToExpiry)}
		if t.ExitRate > 0 && !t.European {
			ts[k].lambda = -math.Log1p(-t.ExitRate)
		}
	}
	h := math.Log(H)
	rng := rand.New(rand.NewPCG(o.Seed, 0x6f7574636f6d6573)) // stream constant: "outcomes"
	x := make([]float64, n+1)
	next := make([]int, n+1) // next[i]: the first step j ≥ i in which the path reaches H (n: none)
	// hitAt is the time at which the path first reaches H within step j
	// (x[j] < H), drawn once per path and step, so that the tranches that
	// share the path share the hit.
	hitFrac, hitPath := make([]float64, n), make([]int, n)
	hitAt := func(p, j int) float64 {
		if hitPath[j] != p+1 {
			hitPath[j], hitFrac[j] = p+1, bridgeHit(rng, x[j], x[j+1], h, sd[j]*sd[j])
		}
		return times[j] + (times[j+1]-times[j])*hitFrac[j]
	}
	out := &Outcomes{Paths: paths, Sample: make([]float64, paths),
		EndYears: make([]float64, endPeriod(horizon, 1)+1), EndMonths: make([]float64, endPeriod(horizon, 12)+1)}
	var sum, sum2, life float64
	x[0] = math.Log(m.Spot)
	for p := range paths {
		for i := range n {
			x[i+1] = x[i] + drift[i] + sd[i]*rng.NormFloat64()
		}
		if H > 0 {
			next[n] = n
			for i := n - 1; i >= 0; i-- {
				next[i] = next[i+1]
				if x[i] >= h || x[i+1] >= h {
					next[i] = i
				} else if p := bridgeCross(h, x[i], x[i+1], sd[i]*sd[i]); p > 0 && rng.Float64() < p {
					next[i] = i
				}
			}
		}
		e := rng.ExpFloat64()
		zb := rng.NormFloat64()
		var pay float64
		for _, t := range ts {
			var pv, end float64
			var how Ending
			barrier := H > 0 && t.ExerciseMultiple > 0 && !t.European
			switch {
			case t.European || t.iV >= t.iT:
				pv, end = math.Max(math.Exp(x[t.iT])-t.Strike, 0)*disc[t.iT], times[t.iT]
				how = EndExpiryExercised
			case barrier && x[t.iV] >= h:
				pv, end, how = (math.Exp(x[t.iV])-t.Strike)*disc[t.iV], times[t.iV], EndMultiple
			default:
				j := n
				if barrier {
					j = next[t.iV]
				}
				tau := math.Inf(1)
				if t.lambda > 0 {
					tau = t.YearsToVest + e/t.lambda
				}
				ie := t.iT // the step holding the departure, if before expiry
				if tau < t.YearsToExpiry {
					ie = max(sort.SearchFloat64s(times, tau)-1, t.iV)
				}
				switch {
				case j < ie:
					at := hitAt(p, j)
					pv, end, how = (H-t.Strike)*m.Curve.Discount(at), at, EndMultiple
				case ie < t.iT:
					t0, t1 := times[ie], times[ie+1]
					w := (tau - t0) / (t1 - t0)
					xt := x[ie] + w*(x[ie+1]-x[ie]) + sd[ie]*math.Sqrt(w*(1-w))*zb
					if v := sd[ie] * sd[ie] * w; barrier && (xt >= h || rng.Float64() < bridgeCross(h, x[ie], xt, v)) { // a fresh uniform: only this tranche's part of the step
						at := t0 + (tau-t0)*bridgeHit(rng, x[ie], xt, h, v)
						pv, end, how = (H-t.Strike)*m.Curve.Discount(at), at, EndMultiple
						break
					}
					pv, end, how = math.Max(math.Exp(xt)-t.Strike, 0)*m.Curve.Discount(tau), tau, EndLeftExercised
				case j < t.iT:
					at := hitAt(p, j)
					pv, end, how = (H-t.Strike)*m.Curve.Discount(at), at, EndMultiple
				default:
					pv, end = math.Max(math.Exp(x[t.iT])-t.Strike, 0)*disc[t.iT], times[t.iT]
					how = EndExpiryExercised
				}
			}
			if pv <= 0 {
				pv = 0
				how++ // the lapsed kind follows the exercised one
			} else {
				out.InTheMoney += t.w
			}
			out.Endings[how] += t.w
			out.EndYears[endPeriod(end, 1)] += t.w
			out.EndMonths[endPeriod(end, 12)] += t.w
			life += t.w * end
			pay += t.w * pv
		}
		out.Sample[p] = pay
		sum += pay
		sum2 += pay * pay
	}
	N := float64(paths)
	out.Mean = sum / N
	out.StdErr = math.Sqrt(math.Max(sum2/N-out.Mean*out.Mean, 0) / (N - 1))
	out.InTheMoney /= N
	for i := range out.Endings {
		out.Endings[i] /= N
	}
	for i := range out.EndYears {
		out.EndYears[i] /= N
	}
	for i := range out.EndMonths {
		out.EndMonths[i] /= N
	}
	out.ExpectedTermYears = life / N
	sort.Float64s(out.Sample)
	return out, nil
}

// yearLeeway is how far past a whole number of 365-day years an end may
// fall and still count in that year: three leap days.
const yearLeeway = 3.0 / 365

// endPeriod is the index into Outcomes.EndYears (perYear 1) or EndMonths
// (perYear 12) of an end t years after the measurement date.
func endPeriod(t float64, perYear int) int {
	n := float64(perYear)
	return max(int(math.Ceil(n*(t-yearLeeway)))-1, 0)
}

// logSteps are the mean and standard deviation of the change in the log
// share price over each step of the grid times under the risk-neutral
// measure: ∫(f − q − σ²/2)dt with f the curve's forward rate, and σ√Δt.
func logSteps(times []float64, m Market) (drift, sd []float64) {
	n := len(times) - 1
	drift, sd = make([]float64, n), make([]float64, n)
	s := m.VolAnnual
	for i := range n {
		dt := times[i+1] - times[i]
		f := m.Curve.Forward(times[i], times[i+1])
		drift[i] = (f - m.DividendYield - s*s/2) * dt
		sd[i] = s * math.Sqrt(dt)
	}
	return drift, sd
}

// bridgeCross is the probability that a Brownian path from log price a to b,
// both below h, over variance v touched h in between:
// exp(−2(h − a)(h − b)/v) (Glasserman, Monte Carlo Methods in Financial
// Engineering, §6.4); 0 when that is below a uniform's resolution
// (e^−40 ≈ 4e-18).
func bridgeCross(h, a, b, v float64) float64 {
	arg := 2 * (h - a) * (h - b) / v
	if arg >= 40 || v <= 0 {
		return 0
	}
	return math.Exp(-arg)
}
