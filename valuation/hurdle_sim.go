package valuation

import (
	"math"
	"math/rand/v2"
	"slices"
)

// HurdleSimResult is what HurdleSim found.
type HurdleSimResult struct {
	// Tranches are each tranche's value (ErrorEstimate its standard
	// error), expected term (TermError its standard error) and paths
	// (Steps), in the order of the award's VestYears.
	Tranches []Result
	Paths    int
	// HitProbability is the risk-neutral probability that the hurdle is
	// met by its deadline (1 when it is met at the measurement date).
	HitProbability float64
	// HitMonths[i] is the probability that the hurdle is first met in
	// month i+1 after the measurement date (twelfths of a year), up to the
	// deadline: the hitting-time distribution.
	HitMonths []float64
	// MedianHitYears is the median time to meet the hurdle on the paths
	// that meet it (0 when none do), to the day.
	MedianHitYears float64
	// DerivedServiceYears are, per tranche, the median time to vest (the
	// later of its vest date and the day the hurdle is met) on the paths
	// on which it vests: the derived service period of ASC 718-10-55-71,
	// to the day. A tranche on no such path gets its vest date.
	DerivedServiceYears []float64
}

// HurdleSim values a hurdle award by simulation: the independent check on
// HurdleLattice, and the method for hurdles on an average of closing
// prices. It also gives the hitting-time distribution and each tranche's
// derived service period.
//
// The share follows the geometric Brownian motion of MonteCarlo, sampled
// exactly on a grid holding every vest date, the deadline and expiry: the
// trading days up to the deadline (TradingDaysPerYear a year, from the
// measurement date) for a daily hurdle, o.StepsPerYear a year otherwise.
// A daily hurdle is met at the first close (or average of the last
// AverageDays closes, the measurement date's price standing in for the
// closes before it) at or above the hurdle. A continuous one is met when
// the path first reaches it: between grid dates with the Brownian-bridge
// crossing probability, at a moment drawn from the bridge's first-passage
// law (bridgeHit), the path going on from there as the bridge to the next
// grid date.
//
// From the later of the tranche's vest date and the moment the hurdle is
// met, each tranche follows the model of MonteCarlo: exercise when the
// share reaches M·K (continuously, by the bridge), departures at an
// exponential time after that start (one standard exponential per path,
// as in SimulateOutcomes), else (S_T − K)⁺ at expiry; units deliver the
// share at that start; European terms pay (S_T − K)⁺ at expiry. An award
// whose hurdle is not met by the deadline ends there with nothing.
//
// Paths are antithetic pairs, valued with the control variate of
// MonteCarlo (the stopped discounted share, mean S0). They run in blocks
// on all cores and in rounds until every tranche's standard error is
// within o.TargetRelSE of its value (simBlocks); the result depends on the
// seed only. Rational exercise is not simulated.
func HurdleSim(a HurdleAward, m Market, o SimOptions) (*HurdleSimResult, error) {
	if err := a.check(m); err != nil {
		return nil, err
	}
	if a.Terms.Rational && !a.Terms.European {
		return nil, inputErr("the hurdle simulation does not value rational (American) exercise; use the lattice")
	}
	o, err := o.normalized()
	if err != nil {
		return nil, err
	}
	hs := newHurdlePaths(a, m, o)
	n := len(a.VestYears)
	newAcc := func() *hurdleAcc { return hs.newAcc() }
	run := func(rng *rand.Rand, acc *hurdleAcc) { hs.block(rng, acc) }
	merge := func(dst, src *hurdleAcc) { dst.merge(src) }
	more := func(acc *hurdleAcc, paths int) int {
		need := 0
		for i := range n {
			mean, se, _, _ := acc.cv[i].estimate(m.Spot)
			need = max(need, pathsFor(se, o.TargetRelSE*math.Abs(mean), paths))
		}
		return need
	}
	acc, paths := simBlocks(o, newAcc, run, merge, more)
	return hs.result(acc, paths), nil
}

// hurdlePaths is the fixed part of a hurdle simulation: the grid, the
// drifts and the award.
type hurdlePaths struct {
	a       HurdleAward
	m       Market
	times   []float64
	drift   []float64 // of ln S over each step
	sd      []float64 // σ√Δt of each step
	monitor []bool    // grid date k+1 is a close the daily hurdle watches
	// anchor[i] marks the grid dates the path is needed at once the
	// hurdle is met (every one but a daily close that is nothing else):
	// between them the bridge is exact, so the walk takes one step.
	anchor           []bool
	cumDrift, cumVar []float64 // of ln S from 0 to each grid date
	iD               int       // grid index of the deadline
	iV               []int     // grid index of each vest date
	disc             []float64 // P(0, t_k)
	x0, xB           float64   // ln S0, ln H
	xM               float64   // ln(M·K), +Inf without a multiple
	K                float64
	lambda           float64
	deadline         float64
	days             int // hitting-time bins (days) up to the deadline
	employee         bool
}

func newHurdlePaths(a HurdleAward, m Market, o SimOptions) *hurdlePaths {
	t := a.Terms
	hs := &hurdlePaths{a: a, m: m, x0: math.Log(m.Spot), xB: math.Log(a.Hurdle.Price), xM: math.Inf(1), K: t.Strike,
		deadline: a.deadline(), employee: !a.Units && !t.European}
	if a.Units {
		hs.deadline = math.Min(hs.deadline, t.YearsToExpiry)
	}
	if hs.employee && t.ExerciseMultiple > 0 {
		hs.xM = math.Log(t.ExerciseMultiple * t.Strike)
	}
	if hs.employee && t.ExitRate > 0 {
		hs.lambda = -math.Log1p(-t.ExitRate)
	}
	D, T := hs.deadline, t.YearsToExpiry
	daily := a.Hurdle.Monitoring == MonitorDaily
	type mark struct {
		t   float64
		mon bool
	}
	var ms []mark
	if daily {
		for k := 1; float64(k)/TradingDaysPerYear <= D+1e-12; k++ {
			ms = append(ms, mark{math.Min(float64(k)/TradingDaysPerYear, D), true})
		}
	} else {
		for k := 1; float64(k)/float64(o.StepsPerYear) < D; k++ {
			ms = append(ms, mark{float64(k) / float64(o.StepsPerYear), false})
		}
	}
	end := D
	if !a.Units {
		end = T
		for k := 1; D+float64(k)/float64(o.StepsPerYear) < T; k++ {
			ms = append(ms, mark{D + float64(k)/float64(o.StepsPerYear), false})
		}
	}
	ms = append(ms, mark{D, false}, mark{end, false})
	for _, v := range a.VestYears {
		if v > 0 && v < end {
			ms = append(ms, mark{v, false})
		}
	}
	slices.SortStableFunc(ms, func(x, y mark) int {
		switch {
		case x.t < y.t:
			return -1
		case x.t > y.t:
			return 1
		}
		return 0
	})
	hs.times = []float64{0}
	hs.monitor = nil
	hs.anchor = []bool{true}
	for _, mk := range ms {
		if last := len(hs.times) - 1; mk.t <= hs.times[last]+1e-12 {
			if mk.mon && last > 0 {
				hs.monitor[last-1] = true
			}
			hs.anchor[last] = hs.anchor[last] || !mk.mon
			continue
		}
		hs.times = append(hs.times, mk.t)
		hs.monitor = append(hs.monitor, mk.mon)
		hs.anchor = append(hs.anchor, !mk.mon)
	}
	hs.drift, hs.sd = logSteps(hs.times, m)
	hs.cumDrift = make([]float64, len(hs.times))
	hs.cumVar = make([]float64, len(hs.times))
	for k := range hs.drift {
		hs.cumDrift[k+1] = hs.cumDrift[k] + hs.drift[k]
		hs.cumVar[k+1] = hs.cumVar[k] + hs.sd[k]*hs.sd[k]
	}
	hs.disc = make([]float64, len(hs.times))
	for k, tk := range hs.times {
		hs.disc[k] = m.Curve.Discount(tk)
	}
	hs.iD = slices.IndexFunc(hs.times, func(x float64) bool { return math.Abs(x-D) <= 1e-12 })
	for _, v := range a.VestYears {
		i := 0
		for k, tk := range hs.times {
			if tk <= v+1e-12 {
				i = k
			}
		}
		hs.iV = append(hs.iV, i)
	}
	hs.days = int(math.Ceil(D*365)) + 1
	return hs
}

// hurdleAcc accumulates a block's statistics.
type hurdleAcc struct {
	cv    []cvSums
	paths float64
	hits  float64
	hitD  []float64   // hits by day
	vestD [][]float64 // per tranche, vestings by day of max(V, τ)
}

func (hs *hurdlePaths) newAcc() *hurdleAcc {
	n := len(hs.a.VestYears)
	acc := &hurdleAcc{cv: make([]cvSums, n), hitD: make([]float64, hs.days), vestD: make([][]float64, n)}
	for i, v := range hs.a.VestYears {
		acc.vestD[i] = make([]float64, int(math.Ceil(math.Max(v, hs.deadline)*365))+2)
	}
	return acc
}

func (a *hurdleAcc) merge(o *hurdleAcc) {
	for i := range a.cv {
		a.cv[i].merge(&o.cv[i])
		for d, x := range o.vestD[i] {
			a.vestD[i][d] += x
		}
	}
	a.paths += o.paths
	a.hits += o.hits
	for d, x := range o.hitD {
		a.hitD[d] += x
	}
}

// hurdleState is one path's draws, shared by its antithetic partner.
type hurdleState struct {
	z     []float64 // the step normals, drawn as needed
	drawn int
	exp   float64 // standard exponential of the departure
	x     []float64
}

func (st *hurdleState) normal(rng *rand.Rand, k int) float64 {
	for st.drawn <= k {
		st.z[st.drawn] = rng.NormFloat64()
		st.drawn++
	}
	return st.z[k]
}

// block simulates SimBlockPaths paths into acc.
func (hs *hurdlePaths) block(rng *rand.Rand, acc *hurdleAcc) {
	n := len(hs.a.VestYears)
	st := &hurdleState{z: make([]float64, len(hs.drift)), x: make([]float64, len(hs.times))}
	y := make([]float64, 2*n)
	c := make([]float64, 2*n)
	l := make([]float64, 2*n)
	var buf []float64
	if k := hs.a.Hurdle.AverageDays; k > 1 {
		buf = make([]float64, k)
	}
	for range SimBlockPaths / 2 {
		st.drawn = 0
		st.exp = rng.ExpFloat64()
		for side := range 2 {
			s := 1.0
			if side == 1 {
				s = -1
			}
			tau, hit := hs.path(rng, st, s, buf)
			acc.paths++
			if hit {
				acc.hits++
				acc.hitD[min(int(tau*365), hs.days-1)]++
			}
			for i := range n {
				pv, ctl, life, vest := hs.tranche(rng, st, s, i, tau, hit)
				y[2*i+side], c[2*i+side], l[2*i+side] = pv, ctl, life
				if hit {
					acc.vestD[i][min(int(vest*365), len(acc.vestD[i])-1)]++
				}
			}
		}
		for i := range n {
			acc.cv[i].add((y[2*i]+y[2*i+1])/2, (c[2*i]+c[2*i+1])/2, (l[2*i]+l[2*i+1])/2)
		}
	}
}

// path walks the share up to the deadline (and on to expiry when the hurdle
// is met), filling st.x, and returns when the hurdle was met.
func (hs *hurdlePaths) path(rng *rand.Rand, st *hurdleState, s float64, buf []float64) (tau float64, hit bool) {
	x := hs.x0
	st.x[0] = x
	daily := hs.a.Hurdle.Monitoring == MonitorDaily
	nb, sum, pos := len(buf), 0.0, 0
	if nb > 0 {
		for i := range buf {
			buf[i] = hs.m.Spot
		}
		sum = float64(nb) * hs.m.Spot
	}
	if x >= hs.xB {
		hit = true
	}
	filled := 0
	for k := 0; k < hs.iD && !hit; k++ {
		xn := x + hs.drift[k] + s*hs.sd[k]*st.normal(rng, k)
		st.x[k+1] = xn
		filled = k + 1
		switch {
		case daily && hs.monitor[k]:
			met := xn >= hs.xB
			if nb > 0 {
				p := math.Exp(xn)
				sum += p - buf[pos]
				buf[pos] = p
				pos = (pos + 1) % nb
				met = sum >= hs.a.Hurdle.Price*float64(nb)
			}
			if met {
				tau, hit = hs.times[k+1], true
			}
		case !daily:
			v := hs.sd[k] * hs.sd[k]
			if xn >= hs.xB {
				tau, hit = hs.times[k]+(hs.times[k+1]-hs.times[k])*bridgeHit(rng, x, xn, hs.xB, v), true
			} else if p := bridgeCross(hs.xB, x, xn, v); p > 0 && rng.Float64() < p {
				tau, hit = hs.times[k]+(hs.times[k+1]-hs.times[k])*bridgeHit(rng, x, xn, hs.xB, v), true
			}
		}
		x = xn
	}
	if !hit {
		return hs.deadline, false
	}
	// On from the hit, only to the grid dates the tranches need.
	for a, j := filled, filled+1; j < len(st.x); j++ {
		if hs.anchor[j] {
			st.x[j] = st.x[a] + hs.cumDrift[j] - hs.cumDrift[a] + s*math.Sqrt(hs.cumVar[j]-hs.cumVar[a])*st.normal(rng, j-1)
			a = j
		}
	}
	return tau, true
}

// stepOf is the grid step holding time t: the k with t_k ≤ t < t_(k+1),
// or for a grid date, the step that ends on it.
func (hs *hurdlePaths) stepOf(t float64) int {
	k, _ := slices.BinarySearch(hs.times, t)
	if k < len(hs.times) && hs.times[k] == t {
		return k
	}
	return k - 1
}

// tranche is tranche i's discounted payoff, control, life and vesting time
// on the path in st, given the time tau the hurdle was met (hit).
func (hs *hurdlePaths) tranche(rng *rand.Rand, st *hurdleState, s float64, i int, tau float64, hit bool) (pv, ctl, life, vest float64) {
	q := hs.m.DividendYield
	control := func(x, t float64) float64 { return math.Exp(x+q*t) * hs.m.Curve.Discount(t) }
	if !hit {
		D := hs.deadline
		return 0, control(st.x[hs.iD], D), D, 0
	}
	v := hs.a.VestYears[i]
	t := hs.a.Terms
	T := t.YearsToExpiry
	// The start: the later of the vest date and the hit, with its log price
	// and the grid step it falls in.
	start, xs, k := tau, 0.0, 0
	within := false // the start lies inside step k, on the bridge to x[k+1]
	if v >= tau {
		start, k = v, hs.iV[i]
		xs = st.x[k]
	} else {
		k = hs.stepOf(tau)
		if hs.times[k] == tau {
			xs = st.x[k]
		} else {
			xs, within = hs.xB, true
		}
	}
	switch {
	case hs.a.Units:
		return math.Exp(xs) * hs.m.Curve.Discount(start), control(xs, start), start, start
	case t.European:
		xT := st.x[len(st.x)-1]
		return math.Max(math.Exp(xT)-hs.K, 0) * hs.m.Curve.Discount(T), control(xT, T), T, start
	}
	if xs >= hs.xM {
		return (math.Exp(xs) - hs.K) * hs.m.Curve.Discount(start), control(xs, start), start, start
	}
	exit := math.Inf(1)
	if hs.lambda > 0 {
		exit = start + st.exp/hs.lambda
	}
	// Segment by segment to the next grid date the path was drawn at
	// (after the hit the walk skips daily closes that are nothing else):
	// (a, xa) to (b, xb), of Brownian variance v.
	a, xa := start, xs
	for k < len(hs.drift) {
		j := k + 1
		for !within && j < len(hs.anchor)-1 && !hs.anchor[j] {
			j++
		}
		b, xb := hs.times[j], st.x[j]
		v := hs.cumVar[j] - hs.cumVar[k]
		if within {
			v = hs.sd[k] * hs.sd[k] * (b - a) / (hs.times[k+1] - hs.times[k])
		}
		within = false
		if exit < b {
			w := (exit - a) / (b - a)
			xe := xa + w*(xb-xa) + math.Sqrt(v*w*(1-w))*rng.NormFloat64()
			if at, ok := hs.cross(rng, a, xa, exit, xe, v*w); ok {
				return (math.Exp(hs.xM) - hs.K) * hs.m.Curve.Discount(at), control(hs.xM, at), at, start
			}
			return math.Max(math.Exp(xe)-hs.K, 0) * hs.m.Curve.Discount(exit), control(xe, exit), exit, start
		}
		if at, ok := hs.cross(rng, a, xa, b, xb, v); ok {
			return (math.Exp(hs.xM) - hs.K) * hs.m.Curve.Discount(at), control(hs.xM, at), at, start
		}
		a, xa, k = b, xb, j
	}
	return math.Max(math.Exp(xa)-hs.K, 0) * hs.m.Curve.Discount(T), control(xa, T), T, start
}

// cross reports whether the path from (a, xa) to (b, xb), a Brownian bridge
// of variance v, reaches the exercise barrier, and when.
func (hs *hurdlePaths) cross(rng *rand.Rand, a, xa, b, xb, v float64) (float64, bool) {
	if math.IsInf(hs.xM, 1) {
		return 0, false
	}
	if xb >= hs.xM {
		return a + (b-a)*bridgeHit(rng, xa, xb, hs.xM, v), true
	}
	if p := bridgeCross(hs.xM, xa, xb, v); p > 0 && rng.Float64() < p {
		return a + (b-a)*bridgeHit(rng, xa, xb, hs.xM, v), true
	}
	return 0, false
}

// result turns the accumulated statistics into a HurdleSimResult.
func (hs *hurdlePaths) result(acc *hurdleAcc, paths int) *HurdleSimResult {
	r := &HurdleSimResult{Paths: paths}
	for i := range acc.cv {
		mean, se, life, lse := acc.cv[i].estimate(hs.m.Spot)
		r.Tranches = append(r.Tranches, Result{Value: mean, ErrorEstimate: se, ExpectedTermYears: life, TermError: lse, Steps: paths, Method: MethodMC})
	}
	r.HitProbability = acc.hits / acc.paths
	months := int(math.Ceil(hs.deadline*12 - 1e-9))
	r.HitMonths = make([]float64, max(months, 1))
	for d, x := range acc.hitD {
		mo := min(int(float64(d)/365*12), len(r.HitMonths)-1)
		r.HitMonths[mo] += x / acc.paths
	}
	r.MedianHitYears = medianDay(acc.hitD, acc.hits)
	for i, v := range hs.a.VestYears {
		d := medianDay(acc.vestD[i], acc.hits)
		if acc.hits == 0 {
			d = v
		}
		r.DerivedServiceYears = append(r.DerivedServiceYears, math.Max(d, v))
	}
	return r
}

// medianDay is the median of a histogram by day holding total counts, in
// years (the middle of its day, at most the day's end), or 0 when empty.
func medianDay(hist []float64, total float64) float64 {
	if total <= 0 {
		return 0
	}
	cum := 0.0
	for d, x := range hist {
		cum += x
		if cum >= total/2 {
			return float64(d) / 365
		}
	}
	return float64(len(hist)-1) / 365
}
