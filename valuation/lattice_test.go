package valuation

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// refBSMCall is a private Black-Scholes-Merton call with continuous dividend
// yield q and flat rate r (Merton 1973), the reference for the lattice's
// vanilla limits.
func refBSMCall(s, k, T, r, q, vol float64) float64 {
	sd := vol * math.Sqrt(T)
	d1 := (math.Log(s/k) + (r-q+0.5*vol*vol)*T) / sd
	d2 := d1 - sd
	n := func(x float64) float64 { return 0.5 * math.Erfc(-x/math.Sqrt2) }
	return s*math.Exp(-q*T)*n(d1) - k*math.Exp(-r*T)*n(d2)
}

// refCRR is a textbook Cox-Ross-Rubinstein tree written out node by node, as
// in the standard construction (node price S0·u^j·d^(i−j), backward
// induction), with the employee rules of DESIGN §3 added at each node. It
// shares no code with the package's lattice and is the reference for raw
// mode.
func refCRR(tm Terms, mk Market, n int, c Convention) float64 {
	T := tm.YearsToExpiry
	dt := T / float64(n)
	u := math.Exp(mk.VolAnnual * math.Sqrt(dt))
	d := 1 / u
	v := int(math.Floor(tm.YearsToVest/dt + 0.5 + 1e-9))
	if tm.European {
		v = n
		tm.ExerciseMultiple, tm.ExitRate, tm.Rational = 0, 0, false
		c = Convention{}
	}
	var a float64
	if c.ExitPerStepLinear {
		a = tm.ExitRate * dt
	} else {
		lambda := -math.Log(1 - tm.ExitRate)
		a = 1 - math.Exp(-lambda*dt)
	}
	val := make([]float64, n+1)
	for j := 0; j <= n; j++ {
		s := mk.Spot * math.Pow(u, float64(j)) * math.Pow(d, float64(n-j))
		val[j] = math.Max(s-tm.Strike, 0)
	}
	for i := n - 1; i >= 0; i-- {
		// Forward rate over [i·dt, (i+1)·dt] from the discount factors.
		r := math.Log(mk.Curve.Discount(float64(i)*dt)/mk.Curve.Discount(float64(i+1)*dt)) / dt
		p := (math.Exp((r-mk.DividendYield)*dt) - d) / (u - d)
		vested := i >= v
		if c.VestNodeUnvested {
			vested = i > v
		}
		for j := 0; j <= i; j++ {
			s := mk.Spot * math.Pow(u, float64(j)) * math.Pow(d, float64(i-j))
			cont := math.Exp(-r*dt) * (p*val[j+1] + (1-p)*val[j])
			switch {
			case !vested && c.ExitBeforeVesting:
				val[j] = (1 - a) * cont
			case !vested:
				val[j] = cont
			case tm.ExerciseMultiple > 0 && s >= tm.ExerciseMultiple*tm.Strike:
				val[j] = s - tm.Strike
			default:
				x := a*math.Max(s-tm.Strike, 0) + (1-a)*cont
				if tm.Rational {
					x = math.Max(x, s-tm.Strike)
				}
				val[j] = x
			}
		}
	}
	return val[0]
}

func testCurve(t *testing.T) *Curve {
	c, err := NewCurve([]CurvePoint{{0.5, 0.030, Continuous}, {2, 0.036, Continuous}, {5, 0.041, Semiannual}, {10, 0.045, Annual}})
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// Raw mode equals the textbook tree (issue 2 item 5) to 1e-10.
func TestLatticeRawMatchesTextbookCRR(t *testing.T) {
	const tol = 1e-10
	curve := testCurve(t)
	terms := []Terms{
		{Strike: 50, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 3, ExitRate: 0.1},
		{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08},
		{Strike: 40, YearsToExpiry: 7, YearsToVest: 1.3, ExerciseMultiple: 2, ExitRate: 0.2, Rational: true},
		{Strike: 30, YearsToExpiry: 5, YearsToVest: 0, ExerciseMultiple: 0, ExitRate: 0.05},
		{Strike: 30, YearsToExpiry: 5, YearsToVest: 5},
		{Strike: 30, YearsToExpiry: 2, YearsToVest: 1, Rational: true},
		{Strike: 25, YearsToExpiry: 6, YearsToVest: 2, ExerciseMultiple: 1.5, European: true},
		{Strike: 0, YearsToExpiry: 3, YearsToVest: 1, ExerciseMultiple: 2},
	}
	markets := []Market{
		{Spot: 50, VolAnnual: 0.35, DividendYield: 0.025, Curve: FlatCurve(0.05)},
		{Spot: 12, VolAnnual: 0.55, Curve: curve},
		{Spot: 33, VolAnnual: 0.25, DividendYield: 0.04, Curve: curve},
	}
	convs := []Convention{{}, {ExitPerStepLinear: true, ExitBeforeVesting: true, VestNodeUnvested: true}, {VestNodeUnvested: true}, {ExitBeforeVesting: true}}
	for _, tm := range terms {
		for _, mk := range markets {
			for _, c := range convs {
				for _, n := range []int{1, 2, 7, 25, 120, 333} {
					got, err := Lattice(tm, mk, LatticeOptions{Steps: n, Convention: c})
					if err != nil {
						t.Fatalf("terms %+v market %+v conv %+v n %d: %v", tm, mk, c, n, err)
					}
					want := refCRR(tm, mk, n, c)
					if d := math.Abs(got.Value - want); d > tol*math.Max(1, want) || got.Steps != n || got.ErrorEstimate != 0 {
						t.Errorf("terms %+v spot %v vol %v q %v conv %+v n %d: got %.12f (steps %d, err %v), textbook %.12f, tol %g",
							tm, mk.Spot, mk.VolAnnual, mk.DividendYield, c, n, got.Value, got.Steps, got.ErrorEstimate, want, tol)
					}
				}
			}
		}
	}
}

// Vest step rounding: V/Δt rounded to the nearest step, halves up (issue 2 item 5).
func TestVestStepRounding(t *testing.T) {
	for _, c := range []struct {
		v, T float64
		n    int
		want int
	}{{2.5, 10, 4, 1}, {1.25, 10, 4, 1}, {3.75, 10, 4, 2}, {2.4, 10, 4, 1}, {0.3, 1, 5, 2}, {0.5, 1, 3, 2}, {1, 1, 3, 3}, {0, 1, 3, 0}} {
		if got := vestStep(c.v, c.T, c.n); got != c.want {
			t.Errorf("vestStep(V=%v, T=%v, N=%d) = %d, want %d", c.v, c.T, c.n, got, c.want)
		}
	}
}

// Benninga, Financial Modelling, 3rd ed., §17.8: employee option S=K=50,
// T=10, vesting 3 years, r=5%, σ=35%, q=2.5%, exit 10% a year as e·Δt per
// step before and after vesting, multiple 3, vest-date node unvested.
func TestLatticeBenningaTable(t *testing.T) {
	const tol = 0.5e-4 // the table's 4 decimals
	tm := Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 3, ExerciseMultiple: 3, ExitRate: 0.10}
	mk := Market{Spot: 50, VolAnnual: 0.35, DividendYield: 0.025, Curve: FlatCurve(0.05)}
	conv := Convention{ExitPerStepLinear: true, ExitBeforeVesting: true, VestNodeUnvested: true, StepsPerYear: true}
	for _, row := range []struct {
		perYear int
		want    float64
	}{{2, 12.8213}, {5, 13.2870}, {10, 13.4312}, {25, 13.5275}, {50, 13.5646}, {75, 13.5733}, {100, 13.5753}, {200, 13.5810}} {
		got, err := Lattice(tm, mk, LatticeOptions{Steps: row.perYear, Convention: conv})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got.Value-row.want) > tol || got.Steps != 10*row.perYear {
			t.Errorf("%d steps a year: got %.6f (steps %d), Benninga %.4f, tol %g", row.perYear, got.Value, got.Steps, row.want, tol)
		}
	}
	// Benninga, same section: the BSM call on S·e^(−qT), 19.1842.
	if got := refBSMCall(50*math.Exp(-0.025*10), 50, 10, 0.05, 0, 0.35); math.Abs(got-19.1842) > tol {
		t.Errorf("BSM on S·e^(−qT): got %.6f, Benninga 19.1842", got)
	}
	// Auto mode under the book's conventions converges to their continuous
	// limit: exits at intensity e before and after vesting, so the value is
	// e^(−e·V) (survive to vesting; exits are independent of the price)
	// times the default-convention value with λ = e, which the Crank-Nicolson
	// reference gives.
	lim := tm
	lim.ExitRate = 1 - math.Exp(-0.10) // λ = −ln(1−e') = 0.10
	f1, f2 := fdEmployee(lim, mk, 120, 60), fdEmployee(lim, mk, 240, 120)
	limit := math.Exp(-0.10*3) * (f2 + (f2-f1)/3)
	conv.StepsPerYear = false
	auto, err := Lattice(tm, mk, LatticeOptions{Convention: conv})
	if err != nil {
		t.Fatal(err)
	}
	if e := math.Abs(auto.Value - limit); e > 5e-4*limit || e > auto.ErrorEstimate {
		t.Errorf("book conventions, auto: %.6f ± %.2g, continuous limit %.6f (FD), tol 5e-4 relative", auto.Value, auto.ErrorEstimate, limit)
	}
	// Same inputs, our defaults, auto mode: reported in the issue note. The
	// converged value must lie within its error estimate of the 200-a-year
	// raw tree's neighbourhood and below the BSM bound.
	got, err := Lattice(tm, mk, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("Benninga inputs under our defaults, auto: %.4f ± %.4f (steps %d, expected term %.3f years)", got.Value, got.ErrorEstimate, got.Steps, got.ExpectedTermYears)
	if !(got.Value < refBSMCall(50, 50, 10, 0.05, 0.025, 0.35)) {
		t.Errorf("auto value %v not below the European BSM value", got.Value)
	}
}

// Hull, Options, Futures, and Other Derivatives, binomial tree example:
// American put S=K=50, r=10%, σ=40%, T=5/12; 4.49 at 5 steps; 4.263, 4.272,
// 4.278, 4.283 at 30, 50, 100, 500 steps (from memory).
func TestLatticeHullAmericanPut(t *testing.T) {
	tm := Terms{Strike: 50, YearsToExpiry: 5.0 / 12}
	mk := Market{Spot: 50, VolAnnual: 0.40, Curve: FlatCurve(0.10)}
	for _, row := range []struct {
		n    int
		want float64
		tol  float64 // half a unit in the last quoted decimal
	}{{5, 4.49, 0.005}, {30, 4.263, 0.0005}, {50, 4.272, 0.0005}, {100, 4.278, 0.0005}, {500, 4.283, 0.0005}} {
		got, err := americanPutRaw(tm, mk, row.n)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got-row.want) > row.tol {
			t.Errorf("%d steps: got %.5f, Hull %v, tol %v", row.n, got, row.want, row.tol)
		}
	}
}

// Vanilla limits (Merton 1973; DESIGN §6): auto mode within 1e-5 relative.
func TestLatticeAutoVanillaLimits(t *testing.T) {
	const tol = 1e-5
	for _, c := range []struct {
		name string
		tm   Terms
		mk   Market
		want float64
	}{
		{"no multiple, exit or dividend = BSM", Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 3}, Market{Spot: 50, VolAnnual: 0.35, Curve: FlatCurve(0.05)}, refBSMCall(50, 50, 10, 0.05, 0, 0.35)},
		{"rational, no dividend = BSM", Terms{Strike: 40, YearsToExpiry: 4, YearsToVest: 1, Rational: true}, Market{Spot: 42, VolAnnual: 0.3, Curve: FlatCurve(0.04)}, refBSMCall(42, 40, 4, 0.04, 0, 0.3)},
		{"vesting at expiry = European BSM", Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 10, ExerciseMultiple: 2.5, ExitRate: 0.08}, Market{Spot: 12, VolAnnual: 0.55, DividendYield: 0.02, Curve: FlatCurve(0.04)}, refBSMCall(12, 12, 10, 0.04, 0.02, 0.55)},
		{"European flag = BSM", Terms{Strike: 60, YearsToExpiry: 0.25, YearsToVest: 0.1, ExerciseMultiple: 2, ExitRate: 0.3, European: true}, Market{Spot: 65, VolAnnual: 0.30, DividendYield: 0.01, Curve: FlatCurve(0.08)}, refBSMCall(65, 60, 0.25, 0.08, 0.01, 0.30)},
		{"out of the money, short", Terms{Strike: 65, YearsToExpiry: 0.25, YearsToVest: 0.25}, Market{Spot: 60, VolAnnual: 0.30, Curve: FlatCurve(0.08)}, refBSMCall(60, 65, 0.25, 0.08, 0, 0.30)},
	} {
		got, err := Lattice(c.tm, c.mk, LatticeOptions{})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if rel := math.Abs(got.Value-c.want) / c.want; rel > tol || !(got.ErrorEstimate > 0) {
			t.Errorf("%s: terms %+v market %+v: got %.8f ± %g, BSM %.8f, rel %.2g, tol %g", c.name, c.tm, c.mk, got.Value, got.ErrorEstimate, c.want, rel, tol)
		}
		if math.Abs(got.ExpectedTermYears-c.tm.YearsToExpiry) > 1e-9 {
			t.Errorf("%s: expected term %v, want the contractual term %v (never exercised early)", c.name, got.ExpectedTermYears, c.tm.YearsToExpiry)
		}
	}
}

// Value rises with the multiple and falls with the exit rate (DESIGN §6,
// limits that must hold).
func TestLatticeMonotone(t *testing.T) {
	mk := Market{Spot: 12, VolAnnual: 0.55, DividendYield: 0.01, Curve: FlatCurve(0.04)}
	for _, steps := range []int{0, 400} {
		prev := 0.0
		for _, M := range []float64{1.2, 1.5, 2, 2.5, 3, 4, 6} {
			r, err := Lattice(Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: M, ExitRate: 0.08}, mk, LatticeOptions{Steps: steps})
			if err != nil {
				t.Fatal(err)
			}
			if r.Value <= prev {
				t.Errorf("steps %d: multiple %v gives %v, not above %v at the smaller multiple", steps, M, r.Value, prev)
			}
			prev = r.Value
		}
		prev = math.Inf(1)
		for _, e := range []float64{0, 0.02, 0.05, 0.1, 0.2, 0.4, 0.8} {
			r, err := Lattice(Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: e}, mk, LatticeOptions{Steps: steps})
			if err != nil {
				t.Fatal(err)
			}
			if r.Value >= prev {
				t.Errorf("steps %d: exit rate %v gives %v, not below %v at the smaller rate", steps, e, r.Value, prev)
			}
			prev = r.Value
		}
	}
}

// Every vested node is worth at least its intrinsic value when the holder
// may exercise whenever it pays (rational exercise), and without dividends
// also under the behavioural rules, since then a call is worth at least
// S − K·e^(−rτ) (Merton 1973).
func TestLatticeVestedAtLeastIntrinsic(t *testing.T) {
	for _, c := range []struct {
		tm Terms
		q  float64
	}{
		{Terms{Strike: 12, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.08}, 0},
		{Terms{Strike: 12, YearsToExpiry: 10, ExitRate: 0.3, Rational: true}, 0.06},
		{Terms{Strike: 12, YearsToExpiry: 10, ExerciseMultiple: 2, ExitRate: 0.1, Rational: true}, 0.03},
	} {
		tm := c.tm
		mk := Market{Spot: 12, VolAnnual: 0.55, DividendYield: c.q, Curve: FlatCurve(0.04)}
		{
			w := getWork(300)
			if err := w.build(tm, mk, 300, Convention{}); err != nil {
				t.Fatal(err)
			}
			bad := 0
			w.backward(0, func(i int, wv, lv []float64) {
				for j := range wv {
					s := w.price[w.n-i+2*j]
					if wv[j] < s-tm.Strike-1e-12*s && bad < 5 {
						bad++
						t.Errorf("terms %+v: node (%d, %d) S=%v worth %v below intrinsic %v", tm, i, j, s, wv[j], s-tm.Strike)
					}
				}
			})
			putWork(w)
		}
	}
}

// LatticeTranches equals valuing each tranche on its own (issue 2 item 3):
// exactly in raw mode; in auto mode within the two error estimates, since
// every tranche's vest date is a time layer of the grant's grid, which so
// differs from a lone tranche's.
func TestLatticeTranchesEqualsSingle(t *testing.T) {
	tm := Terms{Strike: 12, YearsToExpiry: 10, ExerciseMultiple: 2.5, ExitRate: 0.08}
	mk := Market{Spot: 12, VolAnnual: 0.55, DividendYield: 0.01, Curve: testCurve(t)}
	vest := []float64{4, 0.25, 1, 1, 2.5, 3.75, 0, 10, 9.99}
	for _, o := range []LatticeOptions{{Steps: 480}, {Steps: 37, Convention: Convention{ExitPerStepLinear: true, ExitBeforeVesting: true, VestNodeUnvested: true}}, {}} {
		all, err := LatticeTranches(tm, vest, mk, o)
		if err != nil {
			t.Fatal(err)
		}
		for i, v := range vest {
			one := tm
			one.YearsToVest = v
			r, err := Lattice(one, mk, o)
			if err != nil {
				t.Fatal(err)
			}
			tol, ltol := 1e-12*math.Max(1, r.Value), 1e-11
			if o.Steps == 0 {
				tol = r.ErrorEstimate + all[i].ErrorEstimate
				ltol = r.TermError + all[i].TermError
			}
			if math.Abs(r.Value-all[i].Value) > tol || math.Abs(r.ExpectedTermYears-all[i].ExpectedTermYears) > ltol {
				t.Errorf("options %+v vest %v: tranches %v (term %v), alone %v (term %v), tol %g (term %g)", o, v, all[i].Value, all[i].ExpectedTermYears, r.Value, r.ExpectedTermYears, tol, ltol)
			}
			// and the raw tranche equals the textbook tree
			if o.Steps > 0 {
				want := refCRR(one, mk, o.Steps, o.Convention)
				if math.Abs(want-all[i].Value) > 1e-10*math.Max(1, want) {
					t.Errorf("options %+v vest %v: tranches %v, textbook %v", o, v, all[i].Value, want)
				}
			}
		}
	}
}

// Expected term: with exits only (no multiple, rational exercise or
// dividend) the life ends at the first exit after vesting or at expiry:
// V + (1−e^(−λ(T−V)))/λ for exits at intensity λ (exponential waiting time).
// The raw tree takes exits at the start of each step, so its life is short
// by about Δt/2; auto mode's extrapolation removes that.
func TestLatticeExpectedTermExitsOnly(t *testing.T) {
	for _, c := range []struct{ T, V, e float64 }{{10, 4, 0.08}, {10, 0, 0.3}, {5, 2, 0.5}} {
		lambda := -math.Log(1 - c.e)
		want := c.V + (1-math.Exp(-lambda*(c.T-c.V)))/lambda
		for _, o := range []LatticeOptions{{Steps: 2000}, {}} {
			r, err := Lattice(Terms{Strike: 10, YearsToExpiry: c.T, YearsToVest: c.V, ExitRate: c.e}, Market{Spot: 10, VolAnnual: 0.4, Curve: FlatCurve(0.03)}, o)
			if err != nil {
				t.Fatal(err)
			}
			tol := 1e-4
			if o.Steps > 0 {
				tol = 0.5*c.T/float64(o.Steps) + 1e-4
			}
			if math.Abs(r.ExpectedTermYears-want) > tol {
				t.Errorf("T %v V %v e %v steps %d: expected term %v, want %v, tol %v", c.T, c.V, c.e, o.Steps, r.ExpectedTermYears, want, tol)
			}
		}
	}
}

func TestLatticeBadInput(t *testing.T) {
	ok := Terms{Strike: 12, YearsToExpiry: 10, YearsToVest: 4, ExerciseMultiple: 2.5, ExitRate: 0.08}
	mk := Market{Spot: 12, VolAnnual: 0.55, Curve: FlatCurve(0.04)}
	for _, c := range []struct {
		name string
		tm   func(*Terms)
		mk   func(*Market)
		o    LatticeOptions
		want string
	}{
		{"spot", nil, func(m *Market) { m.Spot = 0 }, LatticeOptions{}, "spot 0"},
		{"negative strike", func(t *Terms) { t.Strike = -1 }, nil, LatticeOptions{}, "strike -1"},
		{"vol", nil, func(m *Market) { m.VolAnnual = -0.2 }, LatticeOptions{}, "volatility -0.2"},
		{"vol zero", nil, func(m *Market) { m.VolAnnual = 0 }, LatticeOptions{}, "volatility 0"},
		{"term", func(t *Terms) { t.YearsToExpiry = 0 }, nil, LatticeOptions{}, "years to expiry 0"},
		{"vest after expiry", func(t *Terms) { t.YearsToVest = 11 }, nil, LatticeOptions{}, "years to vest 11"},
		{"exit 1", func(t *Terms) { t.ExitRate = 1 }, nil, LatticeOptions{}, "exit rate 1"},
		{"multiple 1", func(t *Terms) { t.ExerciseMultiple = 1 }, nil, LatticeOptions{}, "exercise multiple 1"},
		{"multiple 0.5", func(t *Terms) { t.ExerciseMultiple = 0.5 }, nil, LatticeOptions{}, "exercise multiple 0.5"},
		{"dividend NaN", nil, func(m *Market) { m.DividendYield = math.NaN() }, LatticeOptions{}, "dividend yield NaN"},
		{"steps", nil, nil, LatticeOptions{Steps: -3}, "steps -3"},
		{"too many steps", nil, nil, LatticeOptions{Steps: MaxLatticeSteps + 1}, "exceed"},
		// raw: p outside (0, 1) at 10 steps (|r−q|·√Δt > σ)
		{"probability raw", nil, func(m *Market) { m.VolAnnual = 0.01; m.DividendYield = 0.3 }, LatticeOptions{Steps: 10}, "volatility 0.01"},
		// auto: even branching to the node nearest the drift needs more
		// price levels than the limit (the drift spans 4.6 in log price,
		// the nodes are about σ·√(Δt·3) apart)
		{"probability auto", nil, func(m *Market) { m.VolAnnual = 0.00001; m.DividendYield = 0.5 }, LatticeOptions{}, "dividend yield 0.5"},
	} {
		tm, m := ok, mk
		if c.tm != nil {
			c.tm(&tm)
		}
		if c.mk != nil {
			c.mk(&m)
		}
		_, err := Lattice(tm, m, c.o)
		if err == nil || !errors.Is(err, ErrLatticeInput) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one wrapping ErrLatticeInput that mentions %q", c.name, err, c.want)
		}
	}
}

// A drift far larger than the volatility (p outside (0, 1) on any raw tree
// below T·(r/σ)² = 1000 steps): auto mode branches each node to the node
// nearest the drift and its neighbours (Hull and White 1990) and still
// gives the BSM value, which holds whatever the vesting with no multiple,
// exits or dividends (Merton 1973).
func TestLatticeAutoLargeDrift(t *testing.T) {
	tm := Terms{Strike: 10, YearsToExpiry: 10, YearsToVest: 5}
	mk := Market{Spot: 10, VolAnnual: 0.02, Curve: FlatCurve(0.2)}
	r, err := Lattice(tm, mk, LatticeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	want := refBSMCall(10, 10, 10, 0.2, 0, 0.02)
	if r.Steps == 0 || math.Abs(r.Value-want) > 1e-5*want || r.MissedTarget {
		t.Errorf("got %v ± %v at %d steps (missed target %v), BSM %v", r.Value, r.ErrorEstimate, r.Steps, r.MissedTarget, want)
	}
}

// A barrier on or next to the spot (S0 = M·K, or within rounding of it), vested
// now or later: auto mode must neither hang nor lose accuracy. Vested now with
// S0 ≥ M·K the holder exercises at once: S0 − K exactly (DESIGN §3).
func TestLatticeAutoBarrierAtSpot(t *testing.T) {
	mk := Market{Spot: 20, VolAnnual: 0.4, Curve: FlatCurve(0.03)}
	for _, M := range []float64{2, 2 * (1 + 1e-13), 2 * (1 - 1e-13)} {
		r, err := Lattice(Terms{Strike: 10, YearsToExpiry: 5, ExerciseMultiple: M, ExitRate: 0.1}, mk, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if M <= 2 && math.Abs(r.Value-10) > 1e-9 {
			t.Errorf("multiple %v, vested now at the barrier: %v, want S0 − K = 10", M, r.Value)
		}
		r, err = Lattice(Terms{Strike: 10, YearsToExpiry: 5, YearsToVest: 1, ExerciseMultiple: M, ExitRate: 0.1}, mk, LatticeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		tm := Terms{Strike: 10, YearsToExpiry: 5, YearsToVest: 1, ExerciseMultiple: M, ExitRate: 0.1}
		ref := fdEmployee(tm, mk, 300, 150)
		if math.Abs(r.Value-ref) > 5e-4*ref {
			t.Errorf("multiple %v, vesting in a year: auto %v ± %v, FD %v", M, r.Value, r.ErrorEstimate, ref)
		}
	}
}

// A tree whose top node price would overflow float64 is refused with an
// error naming the volatility, never a NaN value (σ√(T·N) = 1.6·√(10·20000)
// ≈ 716 > 709 = ln of the largest float64; σ = 8 over 10 years needs it in
// auto mode too).
func TestLatticeRefusesOverflowingTree(t *testing.T) {
	cases := []struct {
		vol   float64
		steps int
	}{{1.6, 20000}, {5, 2000}, {8, 0}, {10, 0}}
	for _, c := range cases {
		terms := Terms{Strike: 50, YearsToExpiry: 10}
		m := Market{Spot: 50, VolAnnual: c.vol, Curve: FlatCurve(0.05)}
		r, err := Lattice(terms, m, LatticeOptions{Steps: c.steps})
		if !errors.Is(err, ErrLatticeInput) {
			t.Errorf("vol %v steps %d: got value %v, err %v; want an ErrLatticeInput", c.vol, c.steps, r.Value, err)
		}
	}
}

// Auto mode never builds a tree above MaxLatticeSteps: a volatility so low
// that the up-probability needs more is refused.
func TestLatticeAutoStepLimit(t *testing.T) {
	terms := Terms{Strike: 50, YearsToExpiry: 10, YearsToVest: 1, ExerciseMultiple: 2}
	m := Market{Spot: 50, VolAnnual: 0.004, Curve: FlatCurve(0.10)}
	r, err := Lattice(terms, m, LatticeOptions{})
	if err == nil && r.Steps > MaxLatticeSteps {
		t.Fatalf("auto mode used %d steps, above the limit %d", r.Steps, MaxLatticeSteps)
	}
	if err != nil && !errors.Is(err, ErrLatticeInput) {
		t.Fatalf("err %v does not wrap ErrLatticeInput", err)
	}
}
