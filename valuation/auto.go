package valuation

import (
	"math"
	"sort"
	"sync"
)

// autoModel is the continuous-time model that auto mode converges to: the
// package model of DESIGN §3 with the lattice's conventions taken to their
// limit (a per-step exit of e·Δt is an intensity e; the vest-date node's
// status does not matter in the limit).
type autoModel struct {
	K, T, sig, q float64
	spot, x0     float64
	lambda       float64 // exit intensity of vested holders
	preLambda    float64 // exit intensity before vesting (Convention.ExitBeforeVesting), else 0
	rational     bool
	bar          bool    // the exercise multiple can bind
	xH           float64 // ln(M·K); −Inf for a zero strike
	curve        *Curve
}

func newAutoModel(t Terms, m Market, conv Convention) autoModel {
	am := autoModel{K: t.Strike, T: t.YearsToExpiry, sig: m.VolAnnual, q: m.DividendYield,
		spot: m.Spot, x0: math.Log(m.Spot), rational: t.Rational, curve: m.Curve}
	switch {
	case t.ExitRate == 0:
	case conv.ExitPerStepLinear:
		am.lambda = t.ExitRate
	default:
		am.lambda = -math.Log1p(-t.ExitRate)
	}
	if conv.ExitBeforeVesting {
		am.preLambda = am.lambda
	}
	if t.ExerciseMultiple > 0 {
		am.bar = true
		am.xH = math.Log(t.ExerciseMultiple * t.Strike)
	}
	if am.rational && am.q <= 0 && am.K > 0 {
		// A call on a share paying no dividends is never exercised early
		// while rates are not negative (Merton 1973): the vested value is
		// at least S − K·P(t, T) ≥ S − K, exits and the multiple included.
		lo, _ := am.driftRange()
		am.rational = lo+am.q+am.sig*am.sig/2 < 0
	}
	return am
}

// autoGeo is the geometry shared by every level of the ladder: the knots of
// the time grid (the vest dates and expiry), the base steps of each interval
// between knots, the node anchor and the band of log prices.
type autoGeo struct {
	knots  []float64 // increasing; knots[len-1] = T
	at     [][]int   // tranches read at each knot
	base   []int     // steps of interval i (knots[i] to knots[i+1]) on level 0
	h0     float64   // node spacing of level 0
	anchor float64   // a node: ln H, else ln K, else ln S0
	lo, hi float64   // band of log prices
	bar    bool      // the top node is the barrier
	bound  float64   // reachBound: no tranche is worth more
}

// worthless reports whether no tranche can be worth more than
// AutoNegligible of the share price: they are valued at 0 ± bound.
func (g *autoGeo) worthless(am *autoModel) bool { return g.bound <= AutoNegligible*am.spot }

// autoR is σ²Δt/h², the ratio of a step's variance to the squared node
// spacing, on the longest step of each interval.
const autoR = 1.0 / 3

// autoBaseSteps are the steps over the term on the coarsest level, the
// fewest at which the error estimate covered the error in at least 95% of
// the cases of every region (32 and 48 did not; the issue 11 note).
const autoBaseSteps = 64

// autoMaxSpacing bounds the node spacing of level 0 in log price.
const autoMaxSpacing = 0.4

// autoBand is the half-width of the band of log prices, in standard
// deviations σ√T of the whole term (the curve's drift is added).
const autoBand = 6.0

// autoStrikeReach is how far the band reaches above the strike, in
// standard deviations σ√T, when the strike lies near or beyond the top
// of the band: the payoff's kink and the values just above it are on the
// grid, and the linear extrapolation at the top of the band starts where
// the value is nearly linear in the share price.
const autoStrikeReach = 2.0

func (am *autoModel) geometry(vest []float64) autoGeo {
	var g autoGeo
	T := am.T
	// Level 0: at least autoBaseSteps steps over the term, and nodes no
	// further apart than autoMaxSpacing in log price.
	n0 := max(float64(autoBaseSteps), math.Ceil(am.sig*am.sig*T/(autoR*autoMaxSpacing*autoMaxSpacing)))
	dt0 := T / n0
	g.h0 = am.sig * math.Sqrt(dt0/autoR)
	idx := make([]int, 0, len(vest))
	for i, v := range vest {
		if am.gridded(v) {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return vest[idx[a]] < vest[idx[b]] })
	if len(idx) == 0 {
		return g
	}
	// A knot per vest time, with the tranches vesting then: a run of
	// idx, which is in vest order.
	g.knots = make([]float64, 0, len(idx)+1)
	g.at = make([][]int, 0, len(idx)+1)
	for j := 0; j < len(idx); {
		e := j + 1
		for e < len(idx) && vest[idx[e]] == vest[idx[j]] {
			e++
		}
		g.knots = append(g.knots, vest[idx[j]])
		g.at = append(g.at, idx[j:e:e])
		j = e
	}
	g.knots = append(g.knots, T)
	g.at = append(g.at, nil)
	g.base = make([]int, 0, len(g.knots)-1)
	for i := 0; i+1 < len(g.knots); i++ {
		gap := g.knots[i+1] - g.knots[i]
		g.base = append(g.base, max(1, int(math.Ceil(gap/dt0-1e-9))))
	}
	nuLo, nuHi := am.driftRange()
	g.bound = am.reachBound(nuHi)
	w := autoBand * am.sig * math.Sqrt(T)
	g.lo = am.x0 - w + math.Min(0, nuLo*T)
	g.hi = am.x0 + w + math.Max(0, nuHi*T)
	g.anchor = am.x0
	if am.K > 0 {
		g.anchor = math.Log(am.K)
		if !g.worthless(am) {
			g.hi = math.Max(g.hi, g.anchor+autoStrikeReach*am.sig*math.Sqrt(T))
		}
	}
	if am.bar && am.xH < g.hi {
		g.bar = true
		g.hi = am.xH
		g.anchor = am.xH
		g.lo = math.Min(g.lo, am.xH-w+math.Min(0, nuLo*T))
	}
	return g
}

// narrow reports whether a tranche vesting at v is read by exact
// integration of cubics rather than the trapezoid rule, on every level
// alike (a method that changed between levels would spoil the
// extrapolation). The trapezoid rule is spectrally accurate (error about
// e^(−2π²s²/h²)) for a normal density of standard deviation s at least
// 1.5 node spacings h; on the coarsest level, hence on all.
func (g *autoGeo) narrow(am *autoModel, v float64) bool {
	return am.sig*math.Sqrt(v) < 1.5*g.h0
}

// spacing is the node spacing of level lv.
func (g *autoGeo) spacing(lv int) float64 { return g.h0 / math.Sqrt(float64(int(1)<<lv)) }

// steps are the time steps of level lv over the term.
func (g *autoGeo) steps(lv int) int {
	n := 0
	for _, b := range g.base {
		n += b << lv
	}
	return n
}

// nodes are the price levels of level lv's band.
func (g *autoGeo) nodes(lv int) int { return int((g.hi-g.lo)/g.spacing(lv)) + 2 }

// work is the node-steps of level lv.
func (g *autoGeo) work(lv int) int { return g.steps(lv) * g.nodes(lv) }

// gridded reports whether a tranche vesting at v needs the grid (others
// have closed forms).
func (am *autoModel) gridded(v float64) bool {
	switch {
	case v >= am.T:
		return false // vests at expiry: a European call
	case am.K == 0:
		return false // a claim on the share itself
	case v == 0 && am.bar && am.x0 >= am.xH:
		return false // vested at or above the barrier: exercised now
	}
	return true
}

// closed is the value and expected life of a tranche gridded rejects.
func (am *autoModel) closed(v float64) (val, life float64) {
	switch {
	case v >= am.T:
		fwd := am.spot * math.Exp(-am.q*am.T)
		return BSMCall(BSMInputs{Spot: fwd, Strike: am.K, Years: am.T, Rate: am.curve.Zero(am.T), Vol: am.sig}), am.T
	case am.K == 0:
		// Paid S when it ends: at once on vesting with a multiple (or
		// under rational exercise, with dividends to lose), else at the
		// first exit or expiry, worth S0·E[e^(−qτ)].
		pv := am.spot * math.Exp(-am.q*v)
		if am.bar || (am.rational && am.q > 0) {
			return pv, v
		}
		d := am.T - v
		k := am.lambda + am.q
		surv := math.Exp(-k * d)
		frac := d // (1 − e^(−k·d))/k
		if k != 0 {
			frac = -math.Expm1(-k*d) / k
		}
		return pv * (am.lambda*frac + surv), v + am.holdLife(d)
	}
	return am.spot - am.K, 0
}

// reachBound is an upper bound of the value of every tranche:
// S0·e^(q⁻T)·Q^S(max_{t≤T} S_t ≥ K), Q^S the measure under which the share
// with its dividends reinvested is the numeraire. Whenever the award ends,
// at τ ≤ T (exercise at the multiple or rationally, an exit, expiry), it
// pays (S_τ − K)⁺ ≤ S_τ·1{S_τ ≥ K}, and the discounted share with its
// dividends reinvested, Z_t = S_t·e^(qt)·P(0, t), is a martingale (also
// with the exits' independent clock), so by optional stopping and the
// change of numeraire E[P(0, τ)·S_τ·1{S_τ ≥ K}] ≤ e^(q⁻T)·E[Z_τ·1{S_τ ≥ K}]
// = S0·e^(q⁻T)·Q^S(S_τ ≥ K), and {S_τ ≥ K} lies within {max S ≥ K}. Under
// Q^S, ln S drifts at f − q + σ²/2, at most μ = max(0, nuHi + σ²) (nuHi the
// largest ν of driftRange), so ln S_t − ln S0 ≤ μT + σW_t and the
// reflection principle gives Q^S(max S ≥ K) ≤ 2Φ(−a/(σ√T)), a = ln(K/S0) −
// μT > 0. With no strike, or the strike within reach, it is +Inf.
func (am *autoModel) reachBound(nuHi float64) float64 {
	if am.K <= 0 {
		return math.Inf(1)
	}
	a := math.Log(am.K) - am.x0 - math.Max(0, nuHi+am.sig*am.sig)*am.T
	if a <= 0 {
		return math.Inf(1)
	}
	return am.spot * math.Exp(math.Max(0, -am.q)*am.T) * 2 * stdNormCDF(-a/(am.sig*math.Sqrt(am.T)))
}

// holdLife is the expected time a vested holder keeps an award that is
// never exercised early: until he leaves or for the d years left.
func (am *autoModel) holdLife(d float64) float64 {
	if am.lambda > 0 {
		return -math.Expm1(-am.lambda*d) / am.lambda
	}
	return d
}

// driftRange is the smallest and largest ν = f − q − σ²/2 over the term.
func (am *autoModel) driftRange() (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	const probe = 64
	for i := 0; i <= probe; i++ {
		var f float64
		if i == probe {
			f = am.curve.Forward(0, 0)
		} else {
			f = am.curve.Forward(am.T*float64(i)/probe, am.T*float64(i+1)/probe)
		}
		nu := f - am.q - am.sig*am.sig/2
		lo, hi = math.Min(lo, nu), math.Max(hi, nu)
	}
	return lo, hi
}

// autoGrid is one level's grid: nodes x_j = anchor + (j + j0)·h.
type autoGrid struct {
	h      float64
	j0     int
	top    int // the barrier node (fixed at S − K from there up), or the last node
	x, s   []float64
	exit   []float64  // exit payoff (S−K)⁺
	intr   []float64  // S − K
	term   []float64  // payoff at expiry, averaged over the node's cell
	xK, jk float64    // ln K and the jump of W_xxx there (0: none)
	ks     float64    // the side of the strike kinkPart lives on: +1 above, −1 below
	kfix   [2]int     // nodes within h of ln K (−1: none)
	kcor   [2]float64 // their corrections per unit time
	w, l   []float64  // value and expected remaining life
	w2, l2 []float64  // the next layer while a step is taken
	steps  []autoStep // the level's steps (levelSteps), kept for the next
	// ints and prevInts are −ln D(t) at the ends of the steps of this
	// level and the last (levelSteps).
	ints, prevInts []float64
}

func (g *autoGrid) setup(am *autoModel, geo *autoGeo, h float64, ghosts int) {
	g.h = h
	g.j0 = int(math.Floor((geo.lo - geo.anchor) / h))
	jTop := int(math.Ceil((geo.hi - geo.anchor) / h))
	if geo.bar {
		jTop = 0
	}
	g.top = jTop - g.j0
	n := g.top + 1
	if geo.bar {
		n += ghosts
	}
	g.x = grow(g.x, n)
	g.s = grow(g.s, n)
	g.exit = grow(g.exit, n)
	g.intr = grow(g.intr, n)
	g.term = grow(g.term, n)
	g.w = grow(g.w, n)
	g.l = grow(g.l, n)
	g.w2 = grow(g.w2, n)
	g.l2 = grow(g.l2, n)
	for j := range n {
		x := geo.anchor + float64(j+g.j0)*h
		g.x[j] = x
		g.s[j] = math.Exp(x)
		g.intr[j] = g.s[j] - am.K
		g.exit[j] = math.Max(g.intr[j], 0)
		g.term[j] = cellAverage(x, h/2, am.K)
	}
	// The exit payoff's kink at the strike puts a jump of −2λK/σ² in the
	// third derivative of W there. The second difference of the two nodes
	// nearest it (at θh from it, |θ| < 1) overstates W_xx by jump·h(1−|θ|)³/6;
	// the step removes that.
	g.kfix = [2]int{-1, -1}
	g.jk = 0
	if am.lambda > 0 && am.K > 0 {
		g.xK = math.Log(am.K)
		g.jk = -2 * am.lambda * am.K / (am.sig * am.sig)
		g.ks = 1
		if am.x0 > g.xK {
			g.ks = -1
		}
		u := (g.xK - g.x[0]) / h
		j := int(math.Floor(u))
		for i, jj := range [2]int{j, j + 1} {
			th := math.Abs(u - float64(jj))
			if jj >= 0 && jj < n && th < 1 {
				g.kfix[i] = jj
				g.kcor[i] = -0.5 * am.sig * am.sig * g.jk * h * (1 - th) * (1 - th) * (1 - th) / 6
			}
		}
	}
}

// kinkPart is a part of W at x that carries the third-derivative jump at
// the strike: jump·((x − ln K)⁺)³/6, or jump·((ln K − x)⁺)³/6, whichever is
// 0 on the spot's side of the strike. Being 0 there, it never cancels
// against W where W is small: a two-sided |x − ln K|³ grows with the
// distance from the strike, and far out of the money W − kinkPart and the
// part added back would each be many orders of magnitude above W, leaving
// W lost in their rounding.
func (g *autoGrid) kinkPart(x float64) float64 {
	d := max(g.ks*(x-g.xK), 0)
	return g.jk * d * d * d / 6
}

// cellAverage is (S−K)⁺ averaged over [x−c, x+c] in log price where that
// cell holds the strike, and the plain payoff elsewhere. Averaging the
// payoff over its kink's cell gives the lattice an error smooth in the step
// count (Heston and Zhou 2000, "On the rate of convergence of discrete-time
// contingent claims", Mathematical Finance 10(1); Pooley, Vetzal and
// Forsyth 2003, "Convergence remedies for non-smooth payoffs in option
// pricing", Journal of Computational Finance 6(4)).
func cellAverage(x, c, K float64) float64 {
	if K <= 0 {
		return math.Exp(x) * math.Sinh(c) / c
	}
	lk := math.Log(K)
	switch {
	case x+c <= lk:
		return 0
	case x-c >= lk:
		return math.Exp(x)*math.Sinh(c)/c - K
	}
	return (math.Exp(x+c) - K - K*(x+c-lk)) / (2 * c)
}

// autoStep is one time step of the trinomial lattice.
type autoStep struct {
	dt, f float64
}

// levelSteps lists the steps of level lv, from the first knot forward,
// into steps, and the integrated forward rate −ln D(t) at each step's end
// into ints. prev holds level lv−1's (nil on level 0): a step of level lv
// ends at an even k of 2n where one of level lv−1 ends at k/2 of n, the
// same time to the last bit ((t1−t0)·2k/(2n) rounds as (t1−t0)·k/n, a
// power of 2 apart), so half the logarithms are taken from it.
func (am *autoModel) levelSteps(geo *autoGeo, lv int, steps []autoStep, prev, ints []float64) ([]autoStep, []float64) {
	steps, ints = steps[:0], ints[:0]
	off := 0 // where the segment's ends start in prev
	for i, nb := range geo.base {
		n := nb << lv
		t0, t1 := geo.knots[i], geo.knots[i+1]
		lp := -math.Log(am.curve.Discount(t0)) // ∫f
		for k := 1; k <= n; k++ {
			tk := t0 + (t1-t0)*float64(k)/float64(n)
			if k == n {
				tk = t1
			}
			var lq float64
			if lv > 0 && k%2 == 0 {
				lq = prev[off+k/2-1]
			} else {
				lq = -math.Log(am.curve.Discount(tk))
			}
			dt := tk - (t0 + (t1-t0)*float64(k-1)/float64(n))
			steps = append(steps, autoStep{dt: dt, f: (lq - lp) / dt})
			ints = append(ints, lq)
			lp = lq
		}
		off += n / 2
	}
	return steps, ints
}

// solveLevel rolls the vested value and life back over level lv and reads
// every gridded tranche at its knot into vals and lives.
func (am *autoModel) solveLevel(geo *autoGeo, lv int, g *autoGrid, vest []float64, vals, lives []float64) {
	// g.ints holds level lv−1's integrated rates (latticeAuto solves the
	// levels in order, from 0).
	g.prevInts, g.ints = g.ints, g.prevInts
	steps, ints := am.levelSteps(geo, lv, g.steps, g.prevInts, g.ints)
	g.steps, g.ints = steps, ints
	h := geo.spacing(lv)
	kmax := 0
	for _, st := range steps {
		nu := st.f - am.q - am.sig*am.sig/2
		kmax = max(kmax, int(math.Abs(math.Round(nu*st.dt/h))))
	}
	g.setup(am, geo, h, kmax+2)
	n := len(g.w)
	for j := range n {
		g.w[j] = g.term[j]
		if j >= g.top && geo.bar {
			g.w[j] = g.intr[j]
		}
		g.l[j] = 0
	}
	si := len(steps)
	for kn := len(geo.knots) - 2; kn >= 0; kn-- {
		for range geo.base[kn] << lv {
			si--
			am.step(g, geo.bar, steps[si])
		}
		for _, i := range geo.at[kn] {
			vals[i], lives[i] = am.read(g, geo, vest[i])
		}
	}
}

// step takes the lattice one step back: trinomial branching to the node
// nearest the drift and its two neighbours (Hull and White 1990, "Valuing
// derivative securities using the explicit finite difference method",
// Journal of Financial and Quantitative Analysis 25(1)), with the first two
// moments of the log-price step matched.
func (am *autoModel) step(g *autoGrid, bar bool, st autoStep) {
	dt := st.dt
	k, pu, pm, pd, disc := am.branch(g.h, st)
	a := -math.Expm1(-am.lambda * dt)
	b := 1 - a
	dl := dt
	if am.lambda > 0 {
		dl = a / am.lambda
	}
	cu, cm, cd := b*disc*pu, b*disc*pm, b*disc*pd
	lu, lm, ld := b*pu, b*pm, b*pd
	// Nodes whose branches lie on the grid: with the barrier, every node
	// below it (the ghost nodes above it take the largest shift).
	n := len(g.w)
	jlo, jhi := max(1, 1-k), min(n-2, n-2-k)
	if bar {
		jhi = g.top - 1
	}
	w, l, w2, l2 := g.w, g.l, g.w2, g.l2
	trinomialRoll(w2[jlo:jhi+1], l2[jlo:jhi+1], g.exit[jlo:jhi+1], w[jlo+k-1:jhi+k+2], l[jlo+k-1:jhi+k+2], a, cu, cm, cd, dl, lu, lm, ld)
	for i, j := range g.kfix {
		if j >= jlo && j <= jhi {
			w2[j] += dt * g.kcor[i]
		}
	}
	if am.rational {
		for j := jlo; j <= jhi; j++ {
			if g.intr[j] > w2[j] {
				w2[j], l2[j] = g.intr[j], 0
			}
		}
	}
	// Ends of the band: the value linear in the share price (and at
	// least 0 at the bottom, where a call's convex value would otherwise
	// be extrapolated below 0), the life linear in log price.
	eh := math.Exp(g.h)
	for j := jlo - 1; j >= 0; j-- {
		w2[j] = max(w2[j+1]-(w2[j+2]-w2[j+1])/eh, 0)
		l2[j] = 2*l2[j+1] - l2[j+2]
	}
	if bar {
		for j := g.top; j < n; j++ {
			w2[j], l2[j] = g.intr[j], 0
		}
	} else {
		for j := jhi + 1; j < n; j++ {
			w2[j] = w2[j-1] + (w2[j-1]-w2[j-2])*eh
			l2[j] = 2*l2[j-1] - l2[j-2]
		}
	}
	g.w, g.w2 = w2, w
	g.l, g.l2 = l2, l
}

// branch is the trinomial branching of step st on nodes h apart: the shift
// k of the middle branch (the node nearest the drift), the three
// probabilities with the first two moments of the log-price step matched,
// and the step's discount factor.
func (am *autoModel) branch(h float64, st autoStep) (k int, pu, pm, pd, disc float64) {
	dt := st.dt
	nu := st.f - am.q - am.sig*am.sig/2
	k = int(math.Round(nu * dt / h))
	eps := (nu*dt - float64(k)*h) / h
	v := am.sig*am.sig*dt/(h*h) + eps*eps
	pu, pd = (v+eps)/2, (v-eps)/2
	if pu < 0 || pd < 0 {
		// upwind: positive weights at the cost of a variance error
		r := am.sig * am.sig * dt / (h * h)
		pu, pd = r/2+math.Max(eps, 0), r/2+math.Max(-eps, 0)
	}
	return k, pu, 1 - pu - pd, pd, math.Exp(-st.f * dt)
}

// trinomialRoll is the inner loop of a step: for each node j,
// w2[j] = a·ex[j] + cu·w[j+2] + cm·w[j+1] + cd·w[j] and l2[j] = dl + lu·l[j+2]
// + lm·l[j+1] + ld·l[j], where w and l start one node below the first
// branch (len(w) = len(l) = len(w2) + 2).
func trinomialRoll(w2, l2, ex, w, l []float64, a, cu, cm, cd, dl, lu, lm, ld float64) {
	n := len(w2)
	if n == 0 {
		return
	}
	wup, lup := w[2:n+2], l[2:n+2]
	l2, ex = l2[:len(wup)], ex[:len(wup)]
	w2 = w2[:len(wup)]
	wd, wm, vd, vm := w[0], w[1], l[0], l[1]
	for j, wu := range wup {
		vu := lup[j]
		w2[j] = a*ex[j] + cu*wu + cm*wm + cd*wd
		l2[j] = dl + lu*vu + lm*vm + ld*vd
		wd, wm, vd, vm = wm, wu, vm, vu
	}
}

// read values a tranche vesting at v from the vested value W and life L on
// the grid at time v: the share's log price at v is normal with mean m and
// standard deviation s = σ√v (exactly, for any curve), so the tranche is
// worth P(0, v)·E[W(x_v)] and lives v + E[L(x_v)]. Above the barrier W is
// S − K in closed form. Below it the expectation integrates W interpolated
// by cubics between nodes (never across the barrier) exactly against the
// normal density when it is narrow, and by the trapezoid rule with the
// Euler-Maclaurin end terms at the barrier when it is wide (narrow).
func (am *autoModel) read(g *autoGrid, geo *autoGeo, v float64) (val, life float64) {
	val, life = am.readFrom(g, geo, am.x0, 0, v)
	return am.preVest(v, val, life)
}

// readFrom is the value at time t and log price x of a tranche vesting at
// v ≥ t, and its expected remaining life, from the vested value W and life
// L on the grid at time v: P(t, v)·E[W(x_v) | x_t = x] and (v − t) +
// E[L(x_v) | x_t = x], the log price at v normal with mean x + ∫f − q(v−t)
// − s²/2 and standard deviation s = σ√(v−t).
func (am *autoModel) readFrom(g *autoGrid, geo *autoGeo, x, t, v float64) (val, life float64) {
	top := g.top
	if v <= t {
		if geo.bar && x >= am.xH {
			return math.Exp(x) - am.K, 0
		}
		return g.interp(g.w, top, x, true), g.interp(g.l, top, x, false)
	}
	P := am.curve.Discount(v) / am.curve.Discount(t)
	s := am.sig * math.Sqrt(v-t)
	m := x - math.Log(P) - am.q*(v-t) - s*s/2
	var ew, el float64
	if geo.narrow(am, v-t) {
		ew, el = g.gaussCubic(top, m, s)
	} else {
		ew, el = g.gaussTrap(top, m, s, geo.bar)
	}
	if geo.bar {
		// ∫ above ln H of (e^x − K)φ
		ew += math.Exp(m+s*s/2)*stdNormCDF((m+s*s-am.xH)/s) - am.K*stdNormCDF((m-am.xH)/s)
	}
	return P * ew, v - t + el
}

// stencil is the first of the four nodes whose cubic interpolates cell c
// (nodes c and c+1), kept within nodes 0..top.
func stencil(c, top int) int {
	return min(max(c-1, 0), top-3)
}

// interp is the quintic interpolant of f at log price x, through the six
// nodes around it (never across the barrier); for the value (kink true)
// the strike's third-derivative jump is taken out of the nodes first and
// added back at x. Its error, O(h⁶), is far below the lattice's own: a
// cubic's O(h⁴) error, which changes irregularly from level to level as the
// spot moves between nodes, spoilt the extrapolation where the value
// curves sharply on the scale of a node spacing (low volatility, the
// strike a few standard deviations away).
func (g *autoGrid) interp(f []float64, top int, x float64, kink bool) float64 {
	const np = 6
	u := (x - g.x[0]) / g.h
	c := min(max(int(math.Floor(u)), 0), top-1)
	st := min(max(c-np/2+1, 0), top-np+1)
	u -= float64(st)
	sum, add := 0.0, 0.0
	if kink && g.jk != 0 {
		add = g.kinkPart(x)
	}
	for a := range np {
		w := 1.0
		for b := range np {
			if b != a {
				w *= (u - float64(b)) / float64(a-b)
			}
		}
		fa := f[st+a]
		if kink && g.jk != 0 {
			fa -= g.kinkPart(g.x[st+a])
		}
		sum += w * fa
	}
	return sum + add
}

// cubicCoef are the monomial coefficients in u of the cubic through
// (0, f0), (1, f1), (2, f2), (3, f3), from its forward differences.
func cubicCoef(f0, f1, f2, f3 float64) (c0, c1, c2, c3 float64) {
	d1 := f1 - f0
	d2 := f2 - 2*f1 + f0
	d3 := f3 - 3*f2 + 3*f1 - f0
	return f0, d1 - d2/2 + d3/3, d2/2 - d3/2, d3 / 6
}

// gaussCubic integrates the cubic interpolants of w and l below node top
// against the normal density of mean m and standard deviation s, cell by
// cell with the normal's partial moments.
func (g *autoGrid) gaussCubic(top int, m, s float64) (ew, el float64) {
	const span = 8.5
	h := g.h
	cLo := max(int(math.Floor((m-span*s-g.x[0])/h)), 0)
	cHi := min(int(math.Floor((m+span*s-g.x[0])/h)), top-1)
	if cLo > cHi {
		return 0, 0
	}
	ya := (g.x[cLo] - m) / s
	ta, pa := normTail(ya), stdNormPDF(ya)
	beta := s / h
	for c := cLo; c <= cHi; c++ {
		yb := (g.x[c+1] - m) / s
		tb, pb := normTail(yb), stdNormPDF(yb)
		M0 := normMass(ya, yb, ta, tb)
		M1, M2, M3 := partialMoments(ya, yb, M0, pa, pb)
		st := stencil(c, top)
		alpha := (m - g.x[st]) / h
		for k, f := range [2][]float64{g.w, g.l} {
			f0, f1, f2, f3 := f[st], f[st+1], f[st+2], f[st+3]
			if k == 0 && g.jk != 0 {
				f0 -= g.kinkPart(g.x[st])
				f1 -= g.kinkPart(g.x[st+1])
				f2 -= g.kinkPart(g.x[st+2])
				f3 -= g.kinkPart(g.x[st+3])
			}
			c0, c1, c2, c3 := cubicCoef(f0, f1, f2, f3)
			d0 := c0 + alpha*(c1+alpha*(c2+alpha*c3))
			d1 := beta * (c1 + alpha*(2*c2+3*alpha*c3))
			d2 := beta * beta * (c2 + 3*alpha*c3)
			d3 := beta * beta * beta * c3
			x := d0*M0 + d1*M1 + d2*M2 + d3*M3
			if k == 0 {
				ew += x
			} else {
				el += x
			}
		}
		ya, ta, pa = yb, tb, pb
	}
	if g.jk != 0 {
		ew += g.jk / 6 * kinkMoment(g.x[cLo], g.x[cHi+1], g.xK, g.ks, m, s)
	}
	return ew, el
}

// partialMoments are M_k = ∫_ya^yb y^k φ(y) dy, k = 0..3, of the standard
// normal density φ, given the mass M0 = Φ(yb) − Φ(ya) and φ at both ends
// (integration by parts: M_k = (k−1)·M_{k−2} + ya^(k−1)φ(ya) −
// yb^(k−1)φ(yb)).
func partialMoments(ya, yb, M0, pa, pb float64) (M1, M2, M3 float64) {
	M1 = pa - pb
	M2 = M0 + ya*pa - yb*pb
	M3 = 2*M1 + ya*ya*pa - yb*yb*pb
	return
}

// kinkMoment is ∫_a^b ((ks·(x − c))⁺)³ φ(x; m, s) dx for the normal density
// of mean m and standard deviation s: the moment of kinkPart's cubic on
// side ks (+1 above c, −1 below).
func kinkMoment(a, b, c, ks, m, s float64) float64 {
	// (x − c)³ = s³(y − z)³ with y = (x − m)/s, z = (c − m)/s
	z := (c - m) / s
	ya, yb := (a-m)/s, (b-m)/s
	if ks > 0 {
		ya = math.Max(ya, z)
	} else {
		yb = math.Min(yb, z)
	}
	if ya >= yb {
		return 0
	}
	M0 := normMass(ya, yb, normTail(ya), normTail(yb))
	M1, M2, M3 := partialMoments(ya, yb, M0, stdNormPDF(ya), stdNormPDF(yb))
	return ks * s * s * s * (M3 - 3*z*M2 + 3*z*z*M1 - z*z*z*M0)
}

// normTail is Φ(−|y|), the normal tail beyond y.
func normTail(y float64) float64 { return stdNormCDF(-math.Abs(y)) }

// normMass is Φ(yb) − Φ(ya) for ya ≤ yb from their tails ta = normTail(ya)
// and tb = normTail(yb), so that a cell far in the upper tail keeps its
// digits (Φ(yb) − Φ(ya) there is 1 − 1 to rounding).
func normMass(ya, yb, ta, tb float64) float64 {
	switch {
	case ya >= 0:
		return ta - tb
	case yb <= 0:
		return tb - ta
	}
	return 1 - ta - tb
}

// gaussTrap integrates w and l below node top against the normal density
// by the trapezoid rule. At the barrier, where the integrand stops, it adds
// the Euler-Maclaurin end terms −(h²/12)F′ + (h⁴/720)F‴ of F = f·φ, with the
// density's derivatives exact and f's from the cubic through the last four
// nodes (f is smooth up to the barrier); the density is negligible at the
// band's other end.
func (g *autoGrid) gaussTrap(top int, m, s float64, bar bool) (ew, el float64) {
	const span = 9.0
	h := g.h
	jLo := max(int(math.Ceil((m-span*s-g.x[0])/h)), 0)
	jHi := min(int(math.Floor((m+span*s-g.x[0])/h)), top)
	if jLo > jHi {
		return 0, 0
	}
	// h·φ at the nodes by recurrence from the node nearest the mean:
	// φ(y+δ)/φ(y) = e^(−yδ−δ²/2).
	jc := min(max(int(math.Round((m-g.x[0])/h)), jLo), jHi)
	del := h / s
	yc := (g.x[jc] - m) / s
	pc := del / math.Sqrt(2*math.Pi) * math.Exp(-yc*yc/2)
	q := math.Exp(-del * del)
	// The strike's third-derivative jump is taken out of w and its
	// integral added in closed form.
	wk := func(j int) float64 { return g.w[j] - g.kinkPart(g.x[j]) }
	p, r := pc, math.Exp(-yc*del-del*del/2)
	for j := jc; j <= jHi; j++ {
		ew += wk(j) * p
		el += g.l[j] * p
		p *= r
		r *= q
	}
	p, r = pc, math.Exp(yc*del-del*del/2)
	for j := jc - 1; j >= jLo; j-- {
		p *= r
		r *= q
		ew += wk(j) * p
		el += g.l[j] * p
	}
	end := bar && jHi == top
	if end {
		y := (g.x[top] - m) / s
		phi := stdNormPDF(y) / s
		d1 := -y / s * phi
		d2 := (y*y - 1) / (s * s) * phi
		d3 := -(y*y*y - 3*y) / (s * s * s) * phi
		em := func(f0, f1, f2, f3 float64) float64 {
			n1, n2, n3 := f0-f1, f0-2*f1+f2, f0-3*f1+3*f2-f3
			w1 := (n1 + n2/2 + n3/3) / h
			w2 := (n2 + n3) / (h * h)
			w3 := n3 / (h * h * h)
			F1 := w1*phi + f0*d1
			F3 := w3*phi + 3*w2*d1 + 3*w1*d2 + f0*d3
			return -h*f0*phi/2 - h*h/12*F1 + h*h*h*h/720*F3
		}
		ew += em(wk(top), wk(top-1), wk(top-2), wk(top-3))
		el += em(g.l[top], g.l[top-1], g.l[top-2], g.l[top-3])
	}
	if g.jk != 0 {
		hi := m + 12*s
		if end {
			hi = g.x[top]
		}
		ew += g.jk / 6 * kinkMoment(m-12*s, hi, g.xK, g.ks, m, s)
	}
	return ew, el
}

// Limits of the ladder.
const (
	autoMinLevels = 3        // levels always solved
	autoMaxLevels = 9        // levels at most (the finest has 256 times the steps of the first)
	autoMaxWork   = 40000000 // node-steps at most over all levels, unless the first three need more
	autoMaxSigma  = 10.0     // σ√T above which auto mode refuses (the price spreads over e^±70 in one standard deviation)
)

// gridPool keeps the grids' memory between valuations.
var gridPool = sync.Pool{New: func() any { return new(autoGrid) }}

// autoPreflight is what auto mode checks before it solves anything, with
// the model and grid geometry it checks: Feasible asks it too.
func autoPreflight(t Terms, vestYears []float64, m Market, conv Convention) (autoModel, autoGeo, error) {
	if s := m.VolAnnual * math.Sqrt(t.YearsToExpiry); s > autoMaxSigma {
		return autoModel{}, autoGeo{}, inputErr("volatility %v over %v years spreads the share price over e^±%.0f in one standard deviation, beyond what the lattice resolves; check the volatility (a decimal: 0.45, not 45)",
			m.VolAnnual, t.YearsToExpiry, s)
	}
	am := newAutoModel(t, m, conv)
	geo := am.geometry(vestYears)
	if len(geo.knots) == 0 || geo.worthless(&am) {
		return am, geo, nil
	}
	if nodes, steps := geo.nodes(autoMinLevels-1), geo.steps(autoMinLevels-1); nodes > MaxLatticeSteps || steps > MaxLatticeSteps {
		return am, geo, inputErr("auto mode needs %d price levels and %d steps (limit %d each): volatility %v is too low for the drift of rates %.4g and dividend yield %v over %v years, or the tranches vest too often",
			nodes, steps, MaxLatticeSteps, m.VolAnnual, am.curve.Zero(t.YearsToExpiry), m.DividendYield, t.YearsToExpiry)
	}
	return am, geo, nil
}

// latticeAuto is auto mode: see the package documentation.
func latticeAuto(t Terms, vestYears []float64, m Market, conv Convention) ([]Result, error) {
	am, geo, err := autoPreflight(t, vestYears, m, conv)
	if err != nil {
		return nil, err
	}
	n := len(vestYears)
	out := make([]Result, n)
	for i, v := range vestYears {
		if !am.gridded(v) {
			val, life := am.closed(v)
			val, life = am.preVest(v, val, life)
			out[i] = Result{Value: val, ErrorEstimate: 1e-12 * math.Max(1, math.Abs(val)), ExpectedTermYears: life, Method: MethodLattice}
		}
	}
	if len(geo.knots) == 0 {
		return out, nil
	}
	if geo.worthless(&am) {
		// The share price reaching the strike within the term is so
		// unlikely that every tranche is worth at most the bound: 0 ±
		// bound. The holder then keeps the award until he leaves or it
		// expires, except on paths that reach the strike (probability
		// below bound/S0), where his life differs by at most T.
		for _, ks := range geo.at {
			for _, i := range ks {
				v := vestYears[i]
				_, life := am.preVest(v, 0, v+am.holdLife(am.T-v))
				out[i] = Result{Value: 0, ErrorEstimate: geo.bound, ExpectedTermYears: life,
					TermError: am.T * geo.bound / am.spot, Method: MethodLattice}
			}
		}
		return out, nil
	}
	var vals, lives [][]float64
	g := gridPool.Get().(*autoGrid)
	defer gridPool.Put(g)
	work := 0
	for lv := 0; lv < autoMaxLevels; lv++ {
		if lv >= autoMinLevels {
			if !am.missed(out, geo) || work+geo.work(lv) > autoMaxWork || geo.nodes(lv) > MaxLatticeSteps || geo.steps(lv) > MaxLatticeSteps {
				break
			}
		}
		vals = append(vals, make([]float64, n))
		lives = append(lives, make([]float64, n))
		am.solveLevel(&geo, lv, g, vestYears, vals[lv], lives[lv])
		work += geo.work(lv)
		if lv+1 >= autoMinLevels {
			am.estimate(geo, vals, lives, out)
		}
	}
	steps := geo.steps(len(vals) - 1)
	for _, ks := range geo.at {
		for _, i := range ks {
			out[i].Steps = steps
			out[i].Method = MethodLattice
			out[i].MissedTarget = out[i].ErrorEstimate > am.target(out[i].Value)
		}
	}
	return out, nil
}

// autoFloor is the smallest relative error auto mode claims: the size of
// the parts of the error that do not shrink smoothly (cubic interpolation,
// the integration end terms), and about the accuracy of the references it
// was checked against.
const autoFloor = 2e-5

// autoAbsFloor, times the share price, is the smallest absolute error auto
// mode claims: far out of the money, where the value is a few billionths of
// the share price or less, the levels converge irregularly and their
// changes understate the error (by up to 2e-13 of the share price at three
// levels in the sweep of TestLatticeAutoFarOutOfTheMoney). A tenth of
// AutoNegligible, so that the target stays within reach.
const autoAbsFloor = AutoNegligible / 10

// autoKappa weighs the finest level's own correction in the error estimate.
const autoKappa = 0.2

// estimate fills the value, expected term and error estimates of every
// gridded tranche from the levels solved so far (at least three).
//
// Without rational exercise the error of a level is c·h² + o(h²) with h²
// halving from level to level, so R = 2V_L − V_{L−1} removes the first term
// (Richardson). Its error is estimated as |R_L − R_{L−1}| (the change of the
// extrapolation) plus κ·|V_L − V_{L−1}| (a share of the correction itself,
// for the parts of the remainder that do not shrink smoothly).
//
// Under rational exercise the error need not be smooth in h: the free
// boundary falls anywhere between nodes, and exercise happens only at the
// steps. Unless the levels' changes shrink as a first-order error would
// (asymptotic), the value is the finest level and its estimate the sum of
// its last two changes, |V_L − V_{L−1}| + |V_{L−1} − V_{L−2}|.
func (am *autoModel) estimate(geo autoGeo, vals, lives [][]float64, out []Result) {
	L := len(vals) - 1
	for _, ks := range geo.at {
		for _, i := range ks {
			v2, v1, v0 := vals[L][i], vals[L-1][i], vals[L-2][i]
			l2, l1, l0 := lives[L][i], lives[L-1][i], lives[L-2][i]
			r2, r1 := 2*v2-v1, 2*v1-v0
			val, life := r2, 2*l2-l1
			est := math.Abs(r2-r1) + autoKappa*math.Abs(v2-v1)
			lest := math.Abs(life-(2*l1-l0)) + autoKappa*math.Abs(l2-l1)
			if am.rational && !asymptotic(vals, i) {
				val, life = v2, l2
				est = math.Abs(v2-v1) + math.Abs(v1-v0)
				lest = math.Abs(l2-l1) + math.Abs(l1-l0)
			}
			if val < 0 {
				// An award is worth at least nothing (its holder may let
				// it lapse). The extrapolation falls below 0 only where
				// the last change exceeds half the finest value, far from
				// the asymptotic regime (a value of a few billionths of
				// the share price): the value is then 0, nearer the truth
				// than R, and the estimate at least the finest value and
				// its last change.
				val = 0
				est = math.Max(est, math.Abs(v2)+math.Abs(v2-v1))
			}
			out[i].Value = val
			out[i].ErrorEstimate = math.Max(est+autoFloor*math.Abs(val), autoAbsFloor*am.spot)
			out[i].ExpectedTermYears = life
			out[i].TermError = lest + autoFloor*life
		}
	}
}

// asymptotic reports whether tranche i's last changes between levels shrink
// as an error in h² does: each about half the one before (ratios within
// 1.5 to 3), over the last two ratios where there are four levels.
func asymptotic(vals [][]float64, i int) bool {
	L := len(vals) - 1
	for k := L; k >= max(2, L-1); k-- {
		d0, d1 := vals[k-1][i]-vals[k-2][i], vals[k][i]-vals[k-1][i]
		if !(d0/d1 >= 1.5 && d0/d1 <= 3) {
			return false
		}
	}
	return true
}

// target is the error estimate auto mode aims for on a value val:
// AutoTarget of it, or AutoNegligible of the share price if that is more.
func (am *autoModel) target(val float64) float64 {
	return math.Max(AutoTarget*math.Abs(val), AutoNegligible*am.spot)
}

// missed reports whether a gridded tranche's estimate exceeds the target.
func (am *autoModel) missed(out []Result, geo autoGeo) bool {
	for _, ks := range geo.at {
		for _, i := range ks {
			if out[i].ErrorEstimate > am.target(out[i].Value) {
				return true
			}
		}
	}
	return false
}

// preVest applies exits before vesting (Convention.ExitBeforeVesting) to a
// tranche vesting at v: the holder must stay until v.
func (am *autoModel) preVest(v, val, life float64) (float64, float64) {
	if am.preLambda == 0 {
		return val, life
	}
	surv := math.Exp(-am.preLambda * v)
	return val * surv, -math.Expm1(-am.preLambda*v)/am.preLambda + surv*life
}
