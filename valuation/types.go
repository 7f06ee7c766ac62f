package valuation

import "strconv"

// Terms are the contractual and behavioural terms of one award tranche.
type Terms struct {
	Strike           float64 // K, currency per share
	YearsToExpiry    float64 // T, from the measurement date
	YearsToVest      float64 // V, 0 if already vested
	ExerciseMultiple float64 // M: exercise once S >= M*K; 0 means no such rule
	ExitRate         float64 // annual share of vested holders who leave, in [0, 1)
	Rational         bool    // also exercise whenever that is optimal (American; warrants)
	European         bool    // exercise at expiry only: ignores vesting, multiple and exit
}

// Market is what the award is valued in at its measurement date.
type Market struct {
	Spot          float64 // S0, share fair value
	VolAnnual     float64 // sigma
	DividendYield float64 // q, continuous
	Curve         *Curve  // zero curve at the measurement date
}

// Method names how a Result was obtained. It is one byte, not a string,
// so that a Result packs into 48 bytes: a ledger holds one per tranche
// (millions of them), and its String is the name shown.
type Method uint8

const (
	MethodNone Method = iota // the zero Result's
	MethodLattice
	MethodBSM
	MethodMC
)

var methodNames = [...]string{MethodNone: "", MethodLattice: "lattice", MethodBSM: "bsm", MethodMC: "mc"}

// String is the method's name: "lattice", "bsm" or "mc" ("" for none).
func (m Method) String() string {
	if int(m) < len(methodNames) {
		return methodNames[m]
	}
	return "method(" + strconv.Itoa(int(m)) + ")"
}

// MarshalText writes the method's name, as the string it once was.
func (m Method) MarshalText() ([]byte, error) { return []byte(m.String()), nil }

// Result is a value and the statistics of how it was obtained.
type Result struct {
	Value             float64 // per share
	ErrorEstimate     float64 // absolute, per share; 0 when exact (closed form)
	ExpectedTermYears float64 // risk-neutral expected life of the award from the measurement date
	TermError         float64 // absolute error estimate (lattice) or standard error (Monte Carlo) of ExpectedTermYears, in years; 0 when exact or not estimated
	Steps             int     // lattice steps over the term (largest used in auto mode); paths for MC
	Method            Method
	// MissedTarget is set by auto mode when the finest ladder its limits
	// allow still leaves ErrorEstimate above AutoTarget of the value: the
	// value is the best the lattice reached and ErrorEstimate says how far
	// off it may be. Callers should warn and cross-check (Monte Carlo).
	MissedTarget bool
}

// AutoTarget is the relative accuracy auto mode aims for (DESIGN §5: within
// 0.05% of a converged reference). It refines its ladder until the error
// estimate of every tranche is within AutoTarget of its value (or within
// AutoNegligible of the share price, if that is more), or its limits are
// reached (Result.MissedTarget).
const AutoTarget = 5e-4

// AutoNegligible, times the share price, is the absolute accuracy auto
// mode settles for where AutoTarget of the value is less: far out of the
// money, where a value of a few billionths of the share price cannot be
// resolved to 0.05% of itself by any lattice, and does not need to be.
// An award that certainly cannot be worth more than this (its share
// price reaching the strike within the term is that unlikely) is valued
// at 0 with that bound as its error estimate, without a lattice.
const AutoNegligible = 1e-10
