package valuation

import (
	"fmt"
	"math"
	"slices"
)

// Monitoring says how a price hurdle is watched.
type Monitoring int

const (
	// MonitorDaily watches closing prices, TradingDaysPerYear a year
	// (the contract's default).
	MonitorDaily Monitoring = iota
	// MonitorContinuous watches the price at every moment: the textbook
	// barrier.
	MonitorContinuous
)

func (mo Monitoring) String() string {
	if mo == MonitorContinuous {
		return "continuous"
	}
	return "daily"
}

// TradingDaysPerYear is the number of closing prices a year a daily hurdle
// watches (common practice).
const TradingDaysPerYear = 252

// bgkBeta is −ζ(1/2)/√(2π) ≈ 0.5826, the constant of the continuity
// correction of Broadie, Glasserman and Kou (1997, "A continuity correction
// for discrete barrier options", Mathematical Finance 7(4)): a barrier H
// watched every Δt years is worth, to o(√Δt), the same barrier watched
// continuously at H·e^(βσ√Δt) (an upper barrier moves up).
const bgkBeta = 0.5825971579390106

// Hurdle is a market condition on the share price: the award vests (an
// option becomes exercisable, a unit is delivered) only once the share
// price has been at or above Price, on or before YearsToDeadline. A share
// price at or above Price at the measurement date meets it at once.
type Hurdle struct {
	Price float64
	// YearsToDeadline is when the hurdle must be met by, from the
	// measurement date; 0, or a date beyond expiry, means the expiry.
	YearsToDeadline float64
	Monitoring      Monitoring
	// AverageDays is the number of closing prices averaged: 0 or 1 is the
	// closing price itself; N > 1 the average of the last N closing prices
	// (daily monitoring only; path-dependent, so valued by simulation).
	AverageDays int
}

// HurdleAward is an award whose tranches vest on service and on a price
// hurdle: each tranche vests at the later of its vest date and the day
// the hurdle is met, and not at all if the hurdle is not met by the
// deadline.
type HurdleAward struct {
	// Terms are the option's terms (YearsToVest is ignored; VestYears gives
	// each tranche's). European terms pay (S_T − K)⁺ at expiry if the
	// hurdle was met by the deadline: an up-and-in call.
	Terms     Terms
	VestYears []float64
	Hurdle    Hurdle
	// Units makes the award restricted stock units: one share delivered
	// when the tranche vests. Terms.Strike must be 0 and YearsToExpiry
	// the latest of the deadline and the vest dates.
	Units bool
}

// deadline is the hurdle's deadline in years, at most the expiry.
func (a HurdleAward) deadline() float64 {
	d := a.Hurdle.YearsToDeadline
	if d <= 0 || d > a.Terms.YearsToExpiry {
		d = a.Terms.YearsToExpiry
	}
	return d
}

// check returns an error naming the first input of a that no method
// values. m is checked too.
func (a HurdleAward) check(m Market) error {
	t := a.Terms
	if err := checkLattice(t, a.VestYears, m, LatticeOptions{}); err != nil {
		return err
	}
	h := a.Hurdle
	switch {
	case !finite(h.Price) || h.Price <= 0:
		return inputErr("hurdle price %v must be a finite number above 0", h.Price)
	case !finite(h.YearsToDeadline) || h.YearsToDeadline < 0:
		return inputErr("years to the hurdle's deadline %v must be a finite number at or above 0", h.YearsToDeadline)
	case h.Monitoring != MonitorDaily && h.Monitoring != MonitorContinuous:
		return inputErr("hurdle monitoring %d is neither daily nor continuous", h.Monitoring)
	case h.AverageDays < 0 || h.AverageDays > 260:
		return inputErr("hurdle average over %d closing prices: want 1 to 260", h.AverageDays)
	case h.AverageDays > 1 && h.Monitoring != MonitorDaily:
		return inputErr("a hurdle on the average of %d closing prices is watched daily, not continuously", h.AverageDays)
	case a.Units && (t.Strike != 0 || t.European || t.Rational):
		return inputErr("hurdle units deliver a share: strike %v must be 0, and they are neither European nor exercised", t.Strike)
	case len(a.VestYears) == 0:
		return inputErr("a hurdle award needs at least one tranche")
	}
	return nil
}

// UpAndInCall is the value of a European call that exists only if the share
// price reaches the barrier H, watched continuously, before expiry, with
// rebate paid at expiry if it never does (Reiner and Rubinstein 1991,
// "Breaking down the barriers", Risk 4(8); in the notation of Haug, The
// Complete Guide to Option Pricing Formulas, 2nd ed., §4.17.1): with
// b = r − q, μ = (b − σ²/2)/σ², and
//
//	A = S·e^((b−r)T)·N(x1) − K·e^(−rT)·N(x1 − σ√T)
//	B = S·e^((b−r)T)·N(x2) − K·e^(−rT)·N(x2 − σ√T)
//	C = S·e^((b−r)T)·(H/S)^(2(μ+1))·N(−y1) − K·e^(−rT)·(H/S)^(2μ)·N(−y1 + σ√T)
//	D = S·e^((b−r)T)·(H/S)^(2(μ+1))·N(−y2) − K·e^(−rT)·(H/S)^(2μ)·N(−y2 + σ√T)
//	E = rebate·e^(−rT)·(N(−x2 + σ√T) − (H/S)^(2μ)·N(−y2 + σ√T))
//
// x1 = ln(S/K)/(σ√T) + (1+μ)σ√T, x2 = ln(S/H)/(σ√T) + (1+μ)σ√T,
// y1 = ln(H²/(SK))/(σ√T) + (1+μ)σ√T, y2 = ln(H/S)/(σ√T) + (1+μ)σ√T,
// the value is A + E for K ≥ H and B − C + D + E for K < H. A spot at or
// above the barrier has met it: the plain call. It panics when in fails
// Check or H is not above 0.
func UpAndInCall(in BSMInputs, H, rebate float64) float64 {
	in.mustCheck()
	if !(H > 0) {
		panic(fmt.Sprintf("valuation: barrier %v must be above 0", H))
	}
	S, K, T, r, q, sig := in.Spot, in.Strike, in.Years, in.Rate, in.DividendYield, in.Vol
	if S >= H {
		return BSMCall(in)
	}
	if T == 0 || sig == 0 {
		// No time for the barrier to be reached (σ = 0: the forward path).
		if sig == 0 && T > 0 && S*math.Exp((r-q)*T) >= H {
			return BSMCall(in)
		}
		return rebate * math.Exp(-r*T)
	}
	b := r - q
	st := sig * math.Sqrt(T)
	mu := (b - sig*sig/2) / (sig * sig)
	fs := S * math.Exp((b-r)*T)
	fk := K * math.Exp(-r*T)
	N := stdNormCDF
	x1 := math.Log(S/K)/st + (1+mu)*st
	x2 := math.Log(S/H)/st + (1+mu)*st
	y1 := math.Log(H*H/(S*K))/st + (1+mu)*st
	y2 := math.Log(H/S)/st + (1+mu)*st
	hs := H / S
	p1, p0 := math.Pow(hs, 2*(mu+1)), math.Pow(hs, 2*mu)
	E := rebate * math.Exp(-r*T) * (N(-x2+st) - p0*N(-y2+st))
	if K >= H {
		return fs*N(x1) - fk*N(x1-st) + E
	}
	B := fs*N(x2) - fk*N(x2-st)
	C := fs*p1*N(-y1) - fk*p0*N(-y1+st)
	D := fs*p1*N(-y2) - fk*p0*N(-y2+st)
	return B - C + D + E
}

// HurdleLattice values every tranche of a hurdle award (closing-price
// hurdles; an average of closing prices is path-dependent and valued by
// HurdleSim) in auto mode: converged, with an error estimate.
//
// Each tranche's value is the expectation of U(τ, S_τ) at the first time τ
// the hurdle is met, if by the deadline D, where U is what the award is
// worth once the hurdle is met: the employee option of the package model
// vesting at the tranche's vest date (its vested value W from the hurdle
// on, P(τ, V)·E[W(S_V)] before the vest date), the European call's
// Black-Scholes-Merton value, or for units the share itself (less the
// dividends forgone before the vest date). Until the hurdle is met nothing
// happens: there is no exercise, and a holder who leaves forfeits an award
// not yet vested, which is pre-vesting forfeiture and stays out of fair
// value.
//
// The lattice is auto mode's (see the package documentation): the vested
// value W is rolled back on a trinomial grid anchored on the exercise
// barrier M·K; the not-yet-met value on a second grid of the same spacing
// and time layers anchored so that a node lies exactly on the hurdle ln H
// (Ritchken 1995), where it takes U's value; its ghost nodes above the
// hurdle take U's value too. Time layers fall on the vest dates, the
// deadline and expiry. U at the hurdle is W interpolated from its grid, or
// before the vest date W's vest layer integrated against the normal
// transition from the hurdle. The value at the spot is the cubic through
// the four nearest nodes. Levels halve h² as in auto mode, and the value
// is Richardson's extrapolation of the two finest with auto mode's error
// estimate.
//
// Daily monitoring is valued as continuous monitoring of the hurdle moved
// up to H·e^(βσ√Δt), Δt = 1/TradingDaysPerYear, β ≈ 0.5826 (the
// continuity correction of Broadie, Glasserman and Kou 1997); the error
// estimate then adds DailyCorrectionTolerance of the value for the
// correction's own error, and MissedTarget says whether the lattice alone
// reached AutoTarget. HurdleSim values daily monitoring exactly.
//
// A share price at or above the hurdle at the measurement date has met
// it: the tranches are the plain award's (LatticeTranches, or the unit's
// S0·e^(−qV)).
func HurdleLattice(a HurdleAward, m Market) ([]Result, error) {
	if err := a.check(m); err != nil {
		return nil, err
	}
	if a.Hurdle.AverageDays > 1 {
		return nil, inputErr("a hurdle on the average of %d closing prices is path-dependent: it is valued by simulation, not on the lattice", a.Hurdle.AverageDays)
	}
	if m.Spot >= a.Hurdle.Price {
		return plainTranches(a, m)
	}
	if s := m.VolAnnual * math.Sqrt(a.Terms.YearsToExpiry); s > autoMaxSigma {
		return nil, inputErr("volatility %v over %v years is beyond what the lattice resolves; check the volatility (a decimal: 0.45, not 45)", m.VolAnnual, a.Terms.YearsToExpiry)
	}
	H := a.Hurdle.Price
	daily := a.Hurdle.Monitoring == MonitorDaily
	if daily {
		H *= math.Exp(bgkBeta * m.VolAnnual * math.Sqrt(1.0/TradingDaysPerYear))
	}
	out, err := hurdleAuto(a, m, H)
	if err != nil {
		return nil, err
	}
	if daily {
		// The continuity correction's own error (MissedTarget stays the
		// lattice's convergence alone).
		for i := range out {
			out[i].ErrorEstimate += DailyCorrectionTolerance * math.Abs(out[i].Value)
		}
	}
	for _, r := range out {
		if !finite(r.Value) || !finite(r.ErrorEstimate) || !finite(r.ExpectedTermYears) {
			return nil, inputErr("the hurdle lattice gave no finite value for volatility %v, hurdle %v and spot %v", m.VolAnnual, a.Hurdle.Price, m.Spot)
		}
	}
	return out, nil
}

// DailyCorrectionTolerance is the relative error HurdleLattice adds to the
// error estimate of a daily hurdle for the continuity correction, which is
// exact only to o(√Δt): against exact daily simulation (HurdleSim) its
// error stayed within 0.2% of the value on 30 tranches of European calls,
// employee options and units, volatility 30% and 60%, hurdles 10%, 30% and
// 100% above the spot (TestDailyHurdleCorrection checks a sample of them).
const DailyCorrectionTolerance = 0.0025

// plainTranches values a hurdle award whose hurdle is already met.
func plainTranches(a HurdleAward, m Market) ([]Result, error) {
	if a.Units {
		out := make([]Result, len(a.VestYears))
		for i, v := range a.VestYears {
			out[i] = RSUValue(m, v)
		}
		return out, nil
	}
	return LatticeTranches(a.Terms, a.VestYears, m, LatticeOptions{})
}

// hurdleBaseSteps are the steps over the term (and over the hurdle's
// window) on the coarsest level: twice auto mode's, because the corner
// where the hurdle meets its deadline keeps the coarsest level of 64 steps
// short of the h² regime that the extrapolation and its estimate assume
// (an up-and-in call 10 years out, hurdle at twice the spot, σ = 55%:
// errors of 64, 128 and 256 steps in the ratios 1.8 and 1.5, then 1.8,
// 1.96, 1.96).
const hurdleBaseSteps = 2 * autoBaseSteps

// hurdleGrid is the time grid of a hurdle lattice: the knots (0, the vest
// dates, the deadline and, when the vested value is needed, expiry) and the
// base steps between them.
type hurdleGrid struct {
	knots []float64
	base  []int
}

// times are the layer times of level lv.
func (hg *hurdleGrid) times(lv int) []float64 {
	ts := []float64{0}
	for i, nb := range hg.base {
		n := nb << lv
		t0, t1 := hg.knots[i], hg.knots[i+1]
		for k := 1; k < n; k++ {
			ts = append(ts, t0+(t1-t0)*float64(k)/float64(n))
		}
		ts = append(ts, t1)
	}
	return ts
}

// index is the layer of level lv at knot time t (which must be a knot).
func (hg *hurdleGrid) index(lv int, t float64) int {
	k := 0
	for i, nb := range hg.base {
		if hg.knots[i] >= t {
			break
		}
		k += nb << lv
	}
	return k
}

// hurdleAuto is the auto-mode lattice of a with a continuously watched
// hurdle at H.
func hurdleAuto(a HurdleAward, m Market, H float64) ([]Result, error) {
	t := a.Terms
	am := newAutoModel(t, m, Convention{})
	employee := !a.Units && !t.European
	T := t.YearsToExpiry
	D := a.deadline()
	if a.Units {
		D = math.Min(D, T)
	}
	xB := math.Log(H)
	span := D
	if employee {
		span = T
	}
	// Steps: at least hurdleBaseSteps over the span and over the hurdle's
	// window, and nodes no further apart than autoMaxSpacing.
	dt0 := math.Min(span/hurdleBaseSteps, D/hurdleBaseSteps)
	dt0 = math.Min(dt0, autoR*autoMaxSpacing*autoMaxSpacing/(am.sig*am.sig))
	h0 := am.sig * math.Sqrt(dt0/autoR)
	knots := []float64{0, D}
	if employee {
		knots = append(knots, T)
		for _, v := range a.VestYears {
			if v > 0 && v < T {
				knots = append(knots, v)
			}
		}
	} else if a.Units {
		for _, v := range a.VestYears {
			if v > 0 && v < D {
				knots = append(knots, v)
			}
		}
	}
	slices.Sort(knots)
	knots = slices.Compact(knots)
	hg := hurdleGrid{knots: knots}
	for i := 0; i+1 < len(knots); i++ {
		hg.base = append(hg.base, max(1, int(math.Ceil((knots[i+1]-knots[i])/dt0-1e-9))))
	}
	nuLo, nuHi := am.driftRange()
	// The not-yet-met grid: from below the spot's band up to the hurdle.
	nLo := math.Min(am.x0, xB) - autoBand*am.sig*math.Sqrt(D) + math.Min(0, nuLo*D)
	// The vested grid, when there is one: auto mode's band, wide enough for
	// the transitions from the hurdle too.
	var wgeo autoGeo
	if employee {
		w := autoBand * am.sig * math.Sqrt(T)
		wgeo = autoGeo{h0: h0, anchor: am.x0,
			lo: math.Min(am.x0, xB) - w + math.Min(0, nuLo*T),
			hi: math.Max(am.x0, xB) + w + math.Max(0, nuHi*T)}
		if am.K > 0 {
			wgeo.anchor = math.Log(am.K)
		}
		if am.bar && am.xH < wgeo.hi {
			wgeo.bar, wgeo.hi, wgeo.anchor = true, am.xH, am.xH
		}
	}
	n := len(a.VestYears)
	var vals, lives [][]float64
	out := make([]Result, n)
	at := make([]int, n)
	for i := range at {
		at[i] = i
	}
	est := autoGeo{at: [][]int{at}}
	work := 0
	levelWork := func(lv int) (steps, nodes int) {
		steps = hg.steps(lv)
		h := h0 / math.Sqrt(float64(int(1)<<lv))
		nodes = int((xB-nLo)/h) + 2
		if employee {
			nodes += int((wgeo.hi-wgeo.lo)/h) + 2
		}
		return steps, steps * nodes * (1 + n)
	}
	if s, _ := levelWork(autoMinLevels - 1); s > MaxLatticeSteps {
		return nil, inputErr("the hurdle lattice needs %d steps (limit %d): the tranches vest too often or the deadline is too short", s, MaxLatticeSteps)
	}
	for lv := 0; lv < autoMaxLevels; lv++ {
		s, wk := levelWork(lv)
		if lv >= autoMinLevels && (!am.missed(out, est) || work+wk > autoMaxWork || s > MaxLatticeSteps) {
			break
		}
		v, l := make([]float64, n), make([]float64, n)
		am.hurdleLevel(a, &hg, lv, h0, xB, nLo, D, employee, &wgeo, v, l)
		vals, lives = append(vals, v), append(lives, l)
		work += wk
		if lv+1 >= autoMinLevels {
			am.estimate(est, vals, lives, out)
		}
	}
	steps := hg.steps(len(vals) - 1)
	for i := range out {
		out[i].Steps = steps
		out[i].Method = MethodLattice
		out[i].MissedTarget = out[i].ErrorEstimate > am.target(out[i].Value)
	}
	return out, nil
}

// steps are the time steps of level lv.
func (hg *hurdleGrid) steps(lv int) int {
	n := 0
	for _, b := range hg.base {
		n += b << lv
	}
	return n
}

// hurdleLevel solves level lv of the hurdle lattice and writes each
// tranche's value and expected life at the spot into vals and lives.
func (am *autoModel) hurdleLevel(a HurdleAward, hg *hurdleGrid, lv int, h0, xB, nLo, D float64,
	employee bool, wgeo *autoGeo, vals, lives []float64) {
	h := h0 / math.Sqrt(float64(int(1)<<lv))
	ts := hg.times(lv)
	steps := make([]autoStep, len(ts)-1)
	kmax := 0
	for k := range steps {
		dt := ts[k+1] - ts[k]
		f := (math.Log(am.curve.Discount(ts[k])) - math.Log(am.curve.Discount(ts[k+1]))) / dt
		steps[k] = autoStep{dt: dt, f: f}
		kk, _, _, _, _ := am.branch(h, steps[k])
		kmax = max(kmax, abs(kk))
	}
	iD := hg.index(lv, D)
	ghosts := kmax + 1 // nodes above the hurdle that a branch from below can reach
	xs := make([]float64, ghosts)
	for g := range xs {
		xs[g] = xB + float64(g)*h
	}

	// U at the hurdle's nodes, per layer up to the deadline, per tranche.
	n := len(a.VestYears)
	bv := make([][]float64, n) // bv[i][k*ghosts+g]
	bl := make([][]float64, n)
	for i := range bv {
		bv[i] = make([]float64, (iD+1)*ghosts)
		bl[i] = make([]float64, (iD+1)*ghosts)
	}
	switch {
	case a.Units:
		for i, v := range a.VestYears {
			for k := 0; k <= iD; k++ {
				wait := math.Max(0, v-ts[k])
				for g, x := range xs {
					bv[i][k*ghosts+g] = math.Exp(x - am.q*wait)
					bl[i][k*ghosts+g] = wait
				}
			}
		}
	case a.Terms.European:
		T := a.Terms.YearsToExpiry
		for k := 0; k <= iD; k++ {
			left := T - ts[k]
			r := 0.0
			if left > 0 {
				r = (math.Log(am.curve.Discount(ts[k])) - math.Log(am.curve.Discount(T))) / left
			}
			for g, x := range xs {
				c := BSMCall(BSMInputs{Spot: math.Exp(x), Strike: am.K, Years: left, Rate: r, DividendYield: am.q, Vol: am.sig})
				for i := range bv {
					bv[i][k*ghosts+g], bl[i][k*ghosts+g] = c, left
				}
			}
		}
	default:
		am.hurdleVested(a, wgeo, ts, steps, h, iD, xs, bv, bl)
	}

	// The not-yet-met value, per tranche, from the deadline back to 0.
	j0 := int(math.Floor((nLo - xB) / h))
	top := -j0
	nn := top + ghosts
	x := make([]float64, nn)
	for j := range x {
		x[j] = xB + float64(j-top)*h
	}
	w, l := make([]float64, nn), make([]float64, nn)
	w2, l2 := make([]float64, nn), make([]float64, nn)
	zero := make([]float64, nn)
	g := autoGrid{h: h, x: x, top: top}
	for i := range a.VestYears {
		clear(w)
		clear(l)
		copy(w[top:], bv[i][iD*ghosts:(iD+1)*ghosts])
		copy(l[top:], bl[i][iD*ghosts:(iD+1)*ghosts])
		for k := iD - 1; k >= 0; k-- {
			st := steps[k]
			kk, pu, pm, pd, disc := am.branch(h, st)
			jlo := max(1, 1-kk)
			trinomialRoll(w2[jlo:top], l2[jlo:top], zero[jlo:top], w[jlo+kk-1:top+kk+1], l[jlo+kk-1:top+kk+1],
				0, disc*pu, disc*pm, disc*pd, st.dt, pu, pm, pd)
			eh := math.Exp(h)
			for j := jlo - 1; j >= 0; j-- {
				w2[j] = w2[j+1] - (w2[j+2]-w2[j+1])/eh
				l2[j] = 2*l2[j+1] - l2[j+2]
			}
			copy(w2[top:], bv[i][k*ghosts:(k+1)*ghosts])
			copy(l2[top:], bl[i][k*ghosts:(k+1)*ghosts])
			w, w2 = w2, w
			l, l2 = l2, l
		}
		vals[i] = g.interp(w, top, am.x0, false)
		lives[i] = g.interp(l, top, am.x0, false)
	}
}

// hurdleVested fills bv and bl with the employee option's value and life
// once the hurdle is met, at the hurdle's nodes xs on each layer up to the
// deadline's (iD): the vested value W rolled back on its own grid from
// expiry, and before a tranche's vest date W's vest layer integrated
// against the normal transition from the node.
func (am *autoModel) hurdleVested(a HurdleAward, geo *autoGeo, ts []float64, steps []autoStep, h float64, iD int, xs []float64, bv, bl [][]float64) {
	kmax := 0
	for _, st := range steps {
		kk, _, _, _, _ := am.branch(h, st)
		kmax = max(kmax, abs(kk))
	}
	g := gridPool.Get().(*autoGrid)
	defer gridPool.Put(g)
	g.setup(am, geo, h, kmax+2)
	for j := range g.w {
		g.w[j] = g.term[j]
		if j >= g.top && geo.bar {
			g.w[j] = g.intr[j]
		}
		g.l[j] = 0
	}
	ghosts := len(xs)
	vested := func(x float64) (float64, float64) {
		if geo.bar && x >= am.xH {
			return math.Exp(x) - am.K, 0
		}
		return g.interp(g.w, g.top, x, true), g.interp(g.l, g.top, x, false)
	}
	// The vest layers, kept as grids of their own.
	layers := map[float64]*autoGrid{}
	vmin := math.Inf(1)
	for _, v := range a.VestYears {
		vmin = math.Min(vmin, v)
	}
	last := len(ts) - 1
	for k := last; k >= 0; k-- {
		if k < last {
			am.step(g, geo.bar, steps[k])
		}
		for _, v := range a.VestYears {
			if ts[k] == v || (k == last && v >= ts[k]) {
				if _, ok := layers[v]; !ok {
					c := *g
					c.w, c.l = slices.Clone(g.w), slices.Clone(g.l)
					layers[v] = &c
				}
			}
		}
		if k <= iD {
			for i, v := range a.VestYears {
				if ts[k] >= v {
					for gi, x := range xs {
						bv[i][k*ghosts+gi], bl[i][k*ghosts+gi] = vested(x)
					}
				}
			}
		}
		if ts[k] <= vmin && k <= iD {
			break
		}
	}
	// Before each vest date: from the vest layer by the normal transition.
	for i, v := range a.VestYears {
		lay := layers[v]
		for k := 0; k <= iD && ts[k] < v; k++ {
			for gi, x := range xs {
				bv[i][k*ghosts+gi], bl[i][k*ghosts+gi] = am.readFrom(lay, geo, x, ts[k], v)
			}
		}
	}
}

func abs(k int) int {
	if k < 0 {
		return -k
	}
	return k
}
