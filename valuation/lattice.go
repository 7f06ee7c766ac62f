package valuation

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"sync"
)

// Convention selects the lattice's behavioural conventions. The zero value is
// grantworth's default (DESIGN §3): exits as a constant intensity
// λ = −ln(1−e), so a vested holder leaves within a step with probability
// 1 − e^(−λΔt); no exits before vesting (pre-vesting forfeiture is not part
// of fair value); the vest-date node is vested; Steps counts steps over the
// whole term. The other settings reproduce published tables that use other
// conventions.
type Convention struct {
	ExitPerStepLinear bool // per-step exit probability e·Δt instead of 1−e^(−λΔt)
	ExitBeforeVesting bool // exits also happen before vesting (the unvested leaver forfeits: value 0)
	VestNodeUnvested  bool // the vest-date node itself is still unvested
	StepsPerYear      bool // Steps in LatticeOptions means steps per year, not over the term
}

// LatticeOptions say how a lattice value is computed.
type LatticeOptions struct {
	Steps      int // 0 = auto (converged, with an error estimate); N = the raw N-step tree over the term
	Convention Convention
}

// ErrLatticeInput is wrapped by every error the lattice returns for bad data.
var ErrLatticeInput = errors.New("lattice input")

// MaxLatticeSteps bounds the steps of one tree (raw or auto), which keeps one
// valuation's memory and time bounded.
const MaxLatticeSteps = 20000

// Lattice values one award tranche on a Cox-Ross-Rubinstein lattice with
// vesting, the exercise multiple, post-vesting exit, dividend yield and the
// curve's forward rate per step (see the package documentation). With
// o.Steps == 0 the value is converged and carries an error estimate; with
// o.Steps == N it is the raw N-step tree.
func Lattice(t Terms, m Market, o LatticeOptions) (Result, error) {
	rs, err := LatticeTranches(t, []float64{t.YearsToVest}, m, o)
	if err != nil {
		return Result{}, err
	}
	return rs[0], nil
}

// LatticeTranches values every tranche of one grant: the same terms except
// the vest date (t.YearsToVest is ignored; vestYears gives one vest time per
// tranche, in years from the measurement date). It makes one backward pass of
// the vested value function and of the expected remaining life, and one
// forward pass of state prices up to the last vest date, so many tranches
// cost little more than one. Results are in input order.
func LatticeTranches(t Terms, vestYears []float64, m Market, o LatticeOptions) ([]Result, error) {
	t, vestYears, o, err := latticeInputs(t, vestYears, m, o)
	if err != nil || len(vestYears) == 0 {
		return nil, err
	}
	var rs []Result
	if o.Steps > 0 {
		rs, err = latticeRaw(t, vestYears, m, o)
	} else {
		rs, err = latticeAuto(t, vestYears, m, o.Convention)
	}
	if err != nil {
		return nil, err
	}
	for _, r := range rs {
		if !finite(r.Value) || !finite(r.ExpectedTermYears) || !finite(r.ErrorEstimate) {
			return nil, inputErr("the lattice gave no finite value for volatility %v, years to expiry %v, spot %v and strike %v", m.VolAnnual, t.YearsToExpiry, m.Spot, t.Strike)
		}
	}
	return rs, nil
}

// latticeInputs checks the inputs of a lattice valuation and gives a
// European award its plain terms: vesting, the multiple and exits play no
// part, and every tranche is read at expiry.
func latticeInputs(t Terms, vestYears []float64, m Market, o LatticeOptions) (Terms, []float64, LatticeOptions, error) {
	if err := checkLattice(t, vestYears, m, o); err != nil {
		return t, nil, o, err
	}
	if t.European {
		t = Terms{Strike: t.Strike, YearsToExpiry: t.YearsToExpiry}
		o.Convention = Convention{StepsPerYear: o.Convention.StepsPerYear}
		vy := make([]float64, len(vestYears))
		for i := range vy {
			vy[i] = t.YearsToExpiry
		}
		vestYears = vy
	}
	return t, vestYears, o, nil
}

// maxLogSpan bounds σ√(T·N), the log-price distance from the spot to the
// tree's top node, so that node prices stay far inside float64 range
// (e^709 overflows).
const maxLogSpan = 600

// checkSpan refuses a tree whose extreme node prices would overflow.
func checkSpan(t Terms, m Market, n int) error {
	if span := m.VolAnnual * math.Sqrt(t.YearsToExpiry*float64(n)); span > maxLogSpan {
		return inputErr("volatility %v over %v years on %d steps puts the top node e^%.0f times the spot, beyond floating point; use fewer steps or check the volatility (a decimal: 0.45, not 45)",
			m.VolAnnual, t.YearsToExpiry, n, span)
	}
	return nil
}

func inputErr(format string, args ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrLatticeInput}, args...)...)
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// checkLattice returns an error naming the first bad input. A nil curve is
// programmer misuse and panics.
func checkLattice(t Terms, vestYears []float64, m Market, o LatticeOptions) error {
	if m.Curve == nil {
		panic("valuation: Market.Curve is nil")
	}
	switch {
	case !Limits.SharePrice.In(m.Spot):
		return limitErr(Limits.SharePrice, "spot", m.Spot)
	case !Limits.Strike.In(t.Strike):
		return limitErr(Limits.Strike, "strike", t.Strike)
	case !finite(m.VolAnnual) || m.VolAnnual <= 0:
		return inputErr("volatility %v must be a finite number above 0", m.VolAnnual)
	case !Limits.YearsToExpiry.In(t.YearsToExpiry):
		return limitErr(Limits.YearsToExpiry, "years to expiry", t.YearsToExpiry)
	case !finite(m.DividendYield):
		return inputErr("dividend yield %v is not a finite number", m.DividendYield)
	case !finite(t.ExitRate) || t.ExitRate < 0 || t.ExitRate >= 1:
		return inputErr("exit rate %v must lie in [0, 1)", t.ExitRate)
	case !finite(t.ExerciseMultiple) || t.ExerciseMultiple < 0 || (t.ExerciseMultiple > 0 && t.ExerciseMultiple <= 1):
		return inputErr("exercise multiple %v must be 0 (none) or above 1", t.ExerciseMultiple)
	case o.Steps < 0:
		return inputErr("steps %d must be 0 (auto) or a positive number", o.Steps)
	}
	if !t.European {
		for _, v := range vestYears {
			if !finite(v) || v < 0 || v > t.YearsToExpiry {
				return inputErr("years to vest %v must lie between 0 and the years to expiry %v", v, t.YearsToExpiry)
			}
		}
	}
	return nil
}

// rawSteps is the number of steps over the term that o asks for.
func rawSteps(t Terms, o LatticeOptions) (int, error) {
	n := o.Steps
	if o.Convention.StepsPerYear {
		n = int(math.Floor(float64(o.Steps)*t.YearsToExpiry + 0.5))
		if n < 1 {
			n = 1
		}
	}
	if n > MaxLatticeSteps {
		return 0, inputErr("steps %d over the term exceed the limit of %d", n, MaxLatticeSteps)
	}
	return n, nil
}

// vestStep is V/Δt rounded to the nearest step, halves up (with a tolerance
// for the rounding of V·N/T itself).
func vestStep(v, T float64, n int) int {
	k := int(math.Floor(v*float64(n)/T + 0.5 + 1e-9))
	return min(max(k, 0), n)
}

func latticeRaw(t Terms, vestYears []float64, m Market, o LatticeOptions) ([]Result, error) {
	n, err := rawSteps(t, o)
	if err != nil {
		return nil, err
	}
	if err := checkSpan(t, m, n); err != nil {
		return nil, err
	}
	w := getWork(n)
	defer putWork(w)
	if err := w.build(t, m, n, o.Convention); err != nil {
		return nil, fmt.Errorf("%w; use at least %d steps over the term, or auto", err, minStepsForProb(t, m))
	}
	steps := make([]int, len(vestYears))
	for i, v := range vestYears {
		steps[i] = vestStep(v, t.YearsToExpiry, n)
	}
	vals, lives := w.solve(steps)
	out := make([]Result, len(vestYears))
	for i := range out {
		out[i] = Result{Value: vals[i], ExpectedTermYears: lives[i], Steps: n, Method: MethodLattice}
	}
	return out, nil
}

// work is the reusable memory of one tree. Nothing in the backward or forward
// pass allocates once a work is built for a step count it has seen.
type work struct {
	n     int
	dt    float64
	t     Terms
	conv  Convention
	a     float64 // exit probability per step
	p     []float64
	disc  []float64
	price []float64 // price[k+n] = S0·u^k, k = −n..n
	exh   [2][]float64
	w, l  []float64
	pi    []float64
	row   []float64 // flat store of the forward rows at the requested layers
	layer []int
	uniq  []int
	off   []int
	dotV  []float64
	dotL  []float64
	vals  []float64
	lives []float64
	sign  float64 // payoff sign(S−K): +1 call, −1 put (tests only)
	kBar  int     // exercise region: node levels k >= kBar (math.MaxInt: none)
}

var workPool = sync.Pool{New: func() any { return new(work) }}

func getWork(n int) *work {
	w := workPool.Get().(*work)
	w.resize(n)
	return w
}

func putWork(w *work) { w.sign = 1; workPool.Put(w) }

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

func (w *work) resize(n int) {
	w.n = n
	w.p = grow(w.p, n)
	w.disc = grow(w.disc, n)
	w.price = grow(w.price, 2*n+1)
	w.exh[0] = grow(w.exh[0], n+1)
	w.exh[1] = grow(w.exh[1], n+1)
	w.w = grow(w.w, n+2)
	w.l = grow(w.l, n+2)
	w.pi = grow(w.pi, n+2)
}

// build sets up the n-step tree: step length, up factor, per-step forward
// rates, discount factors and up-probabilities, node prices. It returns an
// error when an up-probability falls outside (0, 1).
func (w *work) build(t Terms, m Market, n int, conv Convention) error {
	w.t, w.conv = t, conv
	if w.sign == 0 {
		w.sign = 1
	}
	T := t.YearsToExpiry
	dt := T / float64(n)
	w.dt = dt
	h := m.VolAnnual * math.Sqrt(dt)
	u, d := math.Exp(h), math.Exp(-h)
	for i := 0; i < n; i++ {
		p, f := stepProb(m, T, n, i, u, d)
		if !(p > 0 && p < 1) {
			return &probError{vol: m.VolAnnual, rate: f, q: m.DividendYield, steps: n, p: p, step: i}
		}
		w.p[i] = p
		w.disc[i] = math.Exp(-f * dt)
	}
	switch {
	case t.ExitRate == 0:
		w.a = 0
	case conv.ExitPerStepLinear:
		w.a = t.ExitRate * dt
	default:
		w.a = -math.Expm1(math.Log1p(-t.ExitRate) * dt)
	}
	K := t.Strike
	for k := -n; k <= n; k++ {
		s := m.Spot * math.Exp(float64(k)*h)
		w.price[k+n] = s
	}
	// exh[par][m] = (S−K)⁺ at level k with k+n = 2m+par.
	for idx := 0; idx <= 2*n; idx++ {
		w.exh[idx&1][idx>>1] = math.Max(w.sign*(w.price[idx]-K), 0)
	}
	w.kBar = math.MaxInt
	if t.ExerciseMultiple > 0 {
		H := t.ExerciseMultiple * K
		w.kBar = n + 1
		for k := -n; k <= n; k++ {
			if w.price[k+n] >= H {
				w.kBar = k
				break
			}
		}
	}
	return nil
}

// probError reports an up-probability outside (0, 1).
type probError struct {
	vol, rate, q float64
	steps, step  int
	p            float64
}

func (e *probError) Error() string {
	return fmt.Sprintf("%v: up-probability %.4g outside (0, 1) at step %d of %d: volatility %v is too low for rate %v and dividend yield %v",
		ErrLatticeInput, e.p, e.step, e.steps, e.vol, e.rate, e.q)
}

func (e *probError) Unwrap() error { return ErrLatticeInput }

// minStepsForProb is the smallest step count at which every up-probability
// lies in (0, 1): |f−q|·√Δt < σ (with a margin), from the largest forward
// rate gap over the term.
func minStepsForProb(t Terms, m Market) int {
	T := t.YearsToExpiry
	g := 0.0
	const probe = 64
	for i := 0; i < probe; i++ {
		f := m.Curve.Forward(T*float64(i)/probe, T*float64(i+1)/probe)
		g = math.Max(g, math.Abs(f-m.DividendYield))
	}
	g = math.Max(g, math.Abs(m.Curve.Forward(0, 0)-m.DividendYield))
	r := 1.1 * g / m.VolAnnual
	return int(math.Ceil(T*r*r)) + 1
}

// solve runs the forward pass of risk-neutral probabilities up to the last
// layer it needs and the backward pass of the vested value function and the
// expected remaining life down to the first, and returns the value and
// expected term of a tranche vesting at each step in steps.
func (w *work) solve(steps []int) (vals, lives []float64) {
	n := w.n
	// The layer at which each tranche is read: its first vested layer.
	w.layer = w.layer[:0]
	for _, v := range steps {
		w.layer = append(w.layer, w.firstVested(v))
	}
	uniq := append(w.uniq[:0], w.layer...)
	sort.Ints(uniq)
	k := 0
	for _, x := range uniq {
		if k == 0 || uniq[k-1] != x {
			uniq[k] = x
			k++
		}
	}
	uniq = uniq[:k]
	w.uniq = uniq
	// Forward pass: pi(i, j), storing rows at the layers in uniq.
	tot := 0
	for _, x := range uniq {
		tot += x + 1
	}
	w.row = grow(w.row, tot)
	w.off = growInt(w.off, len(uniq))
	pi := w.pi
	pi[0] = 1
	o, u := 0, 0
	for i := 0; ; i++ {
		if u < len(uniq) && uniq[u] == i {
			copy(w.row[o:o+i+1], pi[:i+1])
			w.off[u] = o
			o += i + 1
			u++
		}
		if u == len(uniq) || i == n {
			break
		}
		p := w.p[i]
		q := 1 - p
		pi[i+1] = pi[i] * p
		for j := i; j > 0; j-- {
			pi[j] = pi[j]*q + pi[j-1]*p
		}
		pi[0] *= q
	}
	// Backward pass, taking the dot products at the requested layers.
	w.dotV = grow(w.dotV, len(uniq))
	w.dotL = grow(w.dotL, len(uniq))
	w.backward(uniq[0], func(i int, wv, lv []float64) {
		u := sort.SearchInts(uniq, i)
		if u == len(uniq) || uniq[u] != i {
			return
		}
		r := w.row[w.off[u] : w.off[u]+i+1]
		var sv, sl float64
		for j, pj := range r {
			sv += pj * wv[j]
			sl += pj * lv[j]
		}
		w.dotV[u], w.dotL[u] = sv, sl
	})
	w.vals = grow(w.vals, len(steps))
	w.lives = grow(w.lives, len(steps))
	for idx, L := range w.layer {
		u := sort.SearchInts(uniq, L)
		unvested := w.firstVested(steps[idx]) // nodes 0..unvested−1 are unvested
		D, life, surv := 1.0, 0.0, 1.0
		for i := 0; i < L; i++ {
			D *= w.disc[i]
		}
		if w.conv.ExitBeforeVesting && w.a > 0 {
			for i := 0; i < unvested; i++ {
				life += surv * w.a * float64(i) * w.dt
				surv *= 1 - w.a
			}
		}
		w.vals[idx] = D * surv * w.dotV[u]
		w.lives[idx] = life + surv*(float64(L)*w.dt+w.dotL[u])
	}
	return w.vals, w.lives
}

func growInt(s []int, n int) []int {
	if cap(s) < n {
		return make([]int, n)
	}
	return s[:n]
}

// firstVested is the first layer at which the vested value function applies
// for a tranche vesting at step v.
func (w *work) firstVested(v int) int {
	L := v
	if w.conv.VestNodeUnvested {
		L = v + 1
	}
	return min(L, w.n)
}

// backward rolls the vested value function w and expected remaining life l
// from expiry back to layer lo, calling at(i, w, l) at every layer i ≥ lo.
func (w *work) backward(lo int, at func(i int, wv, lv []float64)) {
	n := w.n
	K := w.t.Strike
	wv, lv := w.w[:n+1], w.l[:n+1]
	for j := 0; j <= n; j++ {
		wv[j] = w.exh[0][j] // level 2j−n, index 2j: parity 0
		lv[j] = 0
	}
	at(n, wv, lv)
	a, b := w.a, 1-w.a
	dt := w.dt
	rational := w.t.Rational
	for i := n - 1; i >= lo; i-- {
		p := w.p[i]
		q := 1 - p
		pd, qd := w.disc[i]*p*b, w.disc[i]*q*b
		pl, ql, dl := p*b, q*b, dt*b
		base := n - i // index of node j is base + 2j
		ex := w.exh[base&1][base>>1 : base>>1+i+1]
		// Exercise region: 2j − i ≥ kBar.
		jb := i + 1
		if w.kBar != math.MaxInt {
			jb = max(0, min(i+1, ceilHalf(w.kBar+i)))
		}
		ww, ll := wv[:i+2], lv[:i+2]
		if !rational {
			rollVested(ex[:jb], ww[:jb+1], ll[:jb+1], a, pd, qd, dl, pl, ql)
		} else {
			for j := 0; j < jb; j++ {
				c := a*ex[j] + pd*ww[j+1] + qd*ww[j]
				idx := base + 2*j
				s := w.sign * (w.price[idx] - K)
				if s > c {
					ww[j], ll[j] = s, 0
				} else {
					ww[j] = c
					ll[j] = dl + pl*ll[j+1] + ql*ll[j]
				}
			}
		}
		for j := jb; j <= i; j++ {
			ww[j] = w.price[base+2*j] - K
			ll[j] = 0
		}
		at(i, wv[:i+1], lv[:i+1])
	}
}

// ceilHalf is ⌈x/2⌉ for any integer x.
func ceilHalf(x int) int {
	if x >= 0 {
		return (x + 1) / 2
	}
	return -((-x) / 2)
}

// americanPutRaw is the raw n-step CRR value of an American put, used by the
// tests to check the tree against published put values.
func americanPutRaw(t Terms, m Market, n int) (float64, error) {
	w := getWork(n)
	defer putWork(w)
	w.sign = -1
	t.ExerciseMultiple, t.ExitRate, t.Rational, t.YearsToVest = 0, 0, true, 0
	if err := w.build(t, m, n, Convention{}); err != nil {
		return 0, err
	}
	v, _ := w.solve([]int{0})
	return v[0], nil
}

// rollVested is the inner loop of the backward pass below the exercise
// region: w[j] = a·e[j] + pd·w[j+1] + qd·w[j] and l[j] = dl + pl·l[j+1] +
// ql·l[j] for j < len(e), in place, with the upper neighbour carried in a
// register. len(w) and len(l) must be len(e)+1.
func rollVested(e, w, l []float64, a, pd, qd, dl, pl, ql float64) {
	if len(e) == 0 {
		return
	}
	w = w[:len(e)+1]
	l = l[:len(e)+1]
	w0, l0 := w[0], l[0]
	for j, ej := range e {
		w1, l1 := w[j+1], l[j+1]
		w[j] = a*ej + pd*w1 + qd*w0
		l[j] = dl + pl*l1 + ql*l0
		w0, l0 = w1, l1
	}
}
