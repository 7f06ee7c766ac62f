package valuation

import "math"

// fdEmployee is the independent reference for the employee-option lattice: a
// Crank-Nicolson finite-difference solution, in log price, of the
// continuous-time model the lattice discretises (DESIGN §3):
//
//	V_τ = ½σ²V_xx + (r − q − ½σ²)V_x − rV + 1{vested}·λ·((S−K)⁺ − V),
//
// with V = S − K on S ≥ M·K after vesting (the exercise multiple as a
// Dirichlet boundary placed exactly on a grid line), max(V, S − K) after
// each step under rational exercise, (S−K)⁺ at expiry, and pure diffusion
// before vesting. The expected remaining life L solves the same equation
// without discounting, with a source of 1 and the exit intensity as its
// only decay, and L = 0 wherever the option is exercised. Rannacher
// start-up (four implicit half steps) at expiry and at the vest date damps
// the kinks, and at least nt/2 steps go before the vest date however near
// it is; the spot's value is interpolated (cubic) from the grid, which is
// anchored on the barrier. It shares no code with the lattice and differs
// from it in time (Crank-Nicolson against explicit trinomial steps), in
// space (a finer grid, no kink corrections) and before vesting (time steps
// against the exact normal), so agreement of the two checks both.
//
// nx is about the number of space steps per unit of log price, nt the
// time steps per year. It returns the value and the expected life in years.
func fdEmployee(tm Terms, mk Market, nx, nt int) float64 {
	v, _ := fdEmployeeLife(tm, mk, nx, nt)
	return v
}

func fdEmployeeLife(tm Terms, mk Market, nx, nt int) (value, life float64) {
	T, V := tm.YearsToExpiry, tm.YearsToVest
	K, S0, sig, q := tm.Strike, mk.Spot, mk.VolAnnual, mk.DividendYield
	lambda := -math.Log(1 - tm.ExitRate)
	x0 := math.Log(S0)
	span := 8 * sig * math.Sqrt(T)
	dx := 1 / float64(nx)
	hasBar := tm.ExerciseMultiple > 0
	xH := math.Inf(1)
	anchor := x0 // a grid line: the barrier if there is one, else the spot
	if hasBar {
		xH = math.Log(tm.ExerciseMultiple * K)
		anchor = xH
	}
	lo := x0 - span
	top := x0 + span
	if hasBar {
		top = math.Max(top, xH+3*sig*math.Sqrt(T))
		lo = math.Min(lo, xH-span)
	}
	ja := int(math.Ceil((anchor - lo) / dx)) // index of the anchor
	J := ja + int(math.Ceil((top-anchor)/dx))
	xs := make([]float64, J+1)
	S := make([]float64, J+1)
	for j := range xs {
		xs[j] = anchor + float64(j-ja)*dx
		S[j] = math.Exp(xs[j])
	}
	jH := J + 1
	if hasBar {
		jH = ja
	}
	val := make([]float64, J+1)
	lif := make([]float64, J+1)
	for j := range val {
		val[j] = math.Max(S[j]-K, 0)
	}
	// life of a vested option that is never exercised: exits or expiry
	g := func(tau float64) float64 {
		if lambda == 0 {
			return tau
		}
		return -math.Expm1(-lambda*tau) / lambda
	}
	// time grid: vest date on a grid line
	n2 := max(1, int(math.Ceil((T-V)*float64(nt))))
	// At least nt/2 steps before the vest date, however near: the vested
	// value's kink at the barrier diffuses over only σ√V before it, and a
	// step or two there (all of them Rannacher half steps) is far off.
	n1 := int(math.Ceil(V * float64(nt)))
	if V > 0 {
		n1 = max(n1, (nt+1)/2)
	}
	times := []float64{} // calendar times, descending from T
	for k := 0; k <= n2; k++ {
		times = append(times, T-(T-V)*float64(k)/float64(n2))
	}
	for k := 1; k <= n1; k++ {
		times = append(times, V-V*float64(k)/float64(n1))
	}
	a := make([]float64, J+1)
	b := make([]float64, J+1)
	c := make([]float64, J+1)
	rhs := make([]float64, J+1)
	cp := make([]float64, J+1)
	dp := make([]float64, J+1)
	src := make([]float64, J+1)
	// cn advances u one step: u_τ = α u_{j−1} + (β − k) u_j + γ u_{j+1} + src_j
	// on 1..hi−1 with Dirichlet values lowV, highV.
	cn := func(u []float64, hi int, al, be, ga, kill, dt, theta, lowV, highV float64) {
		bb := be - kill
		for j := 1; j < hi; j++ {
			ex := al*u[j-1] + bb*u[j] + ga*u[j+1] + src[j]
			rhs[j] = u[j] + (1-theta)*dt*ex + theta*dt*src[j]
			a[j] = -theta * dt * al
			b[j] = 1 - theta*dt*bb
			c[j] = -theta * dt * ga
		}
		rhs[1] -= a[1] * lowV
		rhs[hi-1] -= c[hi-1] * highV
		cp[1] = c[1] / b[1]
		dp[1] = rhs[1] / b[1]
		for j := 2; j < hi; j++ {
			m := b[j] - a[j]*cp[j-1]
			cp[j] = c[j] / m
			dp[j] = (rhs[j] - a[j]*dp[j-1]) / m
		}
		u[hi-1] = dp[hi-1]
		for j := hi - 2; j >= 1; j-- {
			u[j] = dp[j] - cp[j]*u[j+1]
		}
		u[0], u[hi] = lowV, highV
	}
	step := func(t1, t0 float64, theta float64, vested bool) {
		dt := t1 - t0
		r := mk.Curve.Forward(t0, t1)
		mu := r - q - 0.5*sig*sig
		lam := 0.0
		if vested {
			lam = lambda
		}
		al := 0.5*sig*sig/(dx*dx) - mu/(2*dx)
		ga := 0.5*sig*sig/(dx*dx) + mu/(2*dx)
		be := -sig * sig / (dx * dx)
		hi := J
		if vested && hasBar {
			hi = min(jH, J)
		}
		tau := T - t0
		// value
		highV := S[hi]*math.Exp(-q*tau) - K*mk.Curve.Discount(T)/mk.Curve.Discount(t0)
		if vested && hasBar && jH <= J {
			highV = S[hi] - K
		}
		for j := range src {
			src[j] = lam * math.Max(S[j]-K, 0)
		}
		cn(val, hi, al, be, ga, r+lam, dt, theta, 0, highV)
		// expected life
		var lowL, highL float64
		if vested {
			lowL, highL = g(tau), g(tau)
			if hasBar || (tm.Rational && q > 0) {
				highL = 0
			}
		} else {
			lowL = V - t0 + g(T-V)
			highL = lowL
			if hasBar {
				highL = V - t0
			}
		}
		for j := range src {
			src[j] = 1
		}
		cn(lif, hi, al, be, ga, lam, dt, theta, lowL, highL)
		if vested && hasBar {
			for j := hi; j <= J; j++ {
				val[j], lif[j] = S[j]-K, 0
			}
		}
		if vested && tm.Rational {
			for j := range val {
				if S[j]-K > val[j] {
					val[j], lif[j] = S[j]-K, 0
				}
			}
		}
	}
	rannacher := 0
	for k := 1; k < len(times); k++ {
		t1, t0 := times[k-1], times[k]
		vested := t0 >= V-1e-12 && !(V == T)
		if k == 1 || (k == n2+1) {
			rannacher = 4
		}
		if rannacher > 0 {
			rannacher--
			tm := 0.5 * (t1 + t0)
			step(t1, tm, 1, vested)
			step(tm, t0, 1, vested)
			continue
		}
		step(t1, t0, 0.5, vested)
	}
	if hasBar && V == 0 && S0 >= tm.ExerciseMultiple*K {
		return S0 - K, 0
	}
	// Cubic Lagrange interpolation at the spot, from points on the spot's
	// side of the barrier when the tranche is vested now (the value has a
	// kink there).
	j := int(math.Floor((x0 - xs[0]) / dx))
	st := j - 1
	if hasBar && V == 0 {
		st = min(st, jH-3)
	}
	for a := st; a < st+4; a++ {
		w := 1.0
		for b := st; b < st+4; b++ {
			if b != a {
				w *= (x0 - xs[b]) / (xs[a] - xs[b])
			}
		}
		value += w * val[a]
		life += w * lif[a]
	}
	return value, life
}
