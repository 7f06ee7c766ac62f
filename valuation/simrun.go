package valuation

import (
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
)

// SimOptions control the simulations of market conditions (HurdleSim and
// TSRSim).
type SimOptions struct {
	Seed uint64 // the same seed gives the same numbers, on any number of cores
	// TargetRelSE is the standard error aimed at, relative to the value:
	// paths are added in rounds until every tranche's standard error is
	// within it, or MaxPaths are reached. 0 means DefaultSimTarget.
	TargetRelSE float64
	// MinPaths and MaxPaths bound the paths (0: DefaultSimMinPaths and
	// DefaultSimMaxPaths); both are rounded up to whole blocks of
	// SimBlockPaths.
	MinPaths, MaxPaths int
	// Workers is the number of goroutines (0: one per CPU). The result does
	// not depend on it.
	Workers int
	// StepsPerYear is the time grid of a continuously watched hurdle and
	// of the vested phase (0: 52); crossings and departures are exact
	// between grid dates, so it only spaces the random draws.
	StepsPerYear int
}

// Defaults of SimOptions.
const (
	DefaultSimTarget   = 0.002
	DefaultSimMinPaths = 16 * SimBlockPaths
	DefaultSimMaxPaths = 1024 * SimBlockPaths
	// SimBlockPaths is the number of paths (antithetic pairs × 2) of one
	// block: the unit of work and of reproducibility. Block b draws from
	// its own PCG stream, so blocks can run on any core in any order.
	SimBlockPaths = 2048
)

func (o SimOptions) normalized() (SimOptions, error) {
	if o.TargetRelSE == 0 {
		o.TargetRelSE = DefaultSimTarget
	}
	if o.MinPaths == 0 {
		o.MinPaths = DefaultSimMinPaths
	}
	if o.MaxPaths == 0 {
		o.MaxPaths = max(DefaultSimMaxPaths, o.MinPaths)
	}
	if o.StepsPerYear == 0 {
		o.StepsPerYear = 52
	}
	switch {
	case !(o.TargetRelSE > 0) || math.IsInf(o.TargetRelSE, 0):
		return o, inputErr("target standard error %v must be a finite share above 0", o.TargetRelSE)
	case o.MinPaths < 2 || o.MaxPaths < o.MinPaths:
		return o, inputErr("paths between %d and %d: want at least 2, the least first", o.MinPaths, o.MaxPaths)
	case o.MaxPaths > 1<<30:
		return o, inputErr("at most %d paths", 1<<30)
	case o.StepsPerYear < 1 || o.StepsPerYear > 100000:
		return o, inputErr("steps per year %d: want 1 to 100000", o.StepsPerYear)
	}
	return o, nil
}

// blocks is the number of blocks that hold at least paths paths.
func blocks(paths int) int { return (paths + SimBlockPaths - 1) / SimBlockPaths }

// blockRNG is block b's generator under seed.
func blockRNG(seed uint64, b int) *rand.Rand {
	return rand.New(rand.NewPCG(seed, 0x636f6e646974696f^(uint64(b)*0x9e3779b97f4a7c15))) // "conditio"
}

// simBlocks runs blocks of SimBlockPaths paths in rounds: the first round
// has o.MinPaths, and after each round more(total, paths) says how many
// more paths the target needs (0 to stop; capped at o.MaxPaths). Each block
// fills a fresh accumulator from newAcc with run, on o.Workers goroutines;
// the round's accumulators are merged into the total in block order, so
// the result depends on o.Seed only.
func simBlocks[A any](o SimOptions, newAcc func() A, run func(rng *rand.Rand, acc A), merge func(dst, src A), more func(total A, paths int) int) (A, int) {
	total := newAcc()
	workers := o.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	done, want := 0, blocks(o.MinPaths)
	maxBlocks := blocks(o.MaxPaths)
	for want > done {
		accs := make([]A, want-done)
		next := make(chan int)
		var wg sync.WaitGroup
		for range max(1, min(workers, len(accs))) {
			wg.Add(1)
			go func() {
				defer wg.Done()
				for b := range next {
					acc := newAcc()
					run(blockRNG(o.Seed, b), acc)
					accs[b-done] = acc
				}
			}()
		}
		for b := done; b < want; b++ {
			next <- b
		}
		close(next)
		wg.Wait()
		for _, a := range accs {
			merge(total, a)
		}
		done = want
		if extra := more(total, done*SimBlockPaths); extra > 0 {
			want = min(maxBlocks, done+blocks(extra))
		}
	}
	return total, done * SimBlockPaths
}

// cvSums are the sums over antithetic pairs of a payoff's pair mean y and
// its control's c, whose mean is known, for a control-variate estimate
// (controlled, from sums).
type cvSums struct {
	n                       float64
	y, c, yy, cc, yc, l, ll float64 // l: the pair mean of the life
}

func (s *cvSums) add(y, c, l float64) {
	s.n++
	s.y += y
	s.c += c
	s.yy += y * y
	s.cc += c * c
	s.yc += y * c
	s.l += l
	s.ll += l * l
}

func (s *cvSums) merge(o *cvSums) {
	s.n += o.n
	s.y += o.y
	s.c += o.c
	s.yy += o.yy
	s.cc += o.cc
	s.yc += o.yc
	s.l += o.l
	s.ll += o.ll
}

// estimate is the control-variate estimate of the mean of y given the
// control's known mean mu, with its standard error (as controlled), and
// the mean life with its standard error.
func (s *cvSums) estimate(mu float64) (mean, se, life, lifeSE float64) {
	n := s.n
	if n < 3 {
		return math.NaN(), math.Inf(1), math.NaN(), math.Inf(1)
	}
	my, mc := s.y/n, s.c/n
	syy := math.Max(s.yy-n*my*my, 0)
	scc := math.Max(s.cc-n*mc*mc, 0)
	syc := s.yc - n*my*mc
	beta := 0.0
	if scc > 1e-300 {
		beta = syc / scc
	}
	mean = my - beta*(mc-mu)
	se = math.Sqrt(math.Max(syy-beta*syc, 0) / (n - 2) / n)
	life = s.l / n
	lifeSE = math.Sqrt(math.Max(s.ll/n-life*life, 0) / (n - 1))
	return mean, se, life, lifeSE
}

// pathsFor is how many more paths bring a standard error se over paths
// paths within target (10% to spare), or 0.
func pathsFor(se, target float64, paths int) int {
	if !(se > target) || target <= 0 {
		return 0
	}
	need := float64(paths) * (se / target) * (se / target) * 1.1
	return int(math.Min(need, 1<<30)) - paths
}
