package valuation

import (
	"runtime"
	"sync"
)

// Job is one grant for RunJobs: its terms (YearsToVest ignored), the vest
// time of each tranche, the market and the lattice options.
type Job struct {
	Terms     Terms
	VestYears []float64
	Market    Market
	Options   LatticeOptions
}

// JobResult holds a job's tranche results, in the order of its VestYears,
// or the error that stopped it.
type JobResult struct {
	Tranches []Result
	Err      error
}

// RunJobs values every job with LatticeTranches on workers goroutines
// (workers ≤ 0: one per CPU). Result i belongs to job i, and the numbers do
// not depend on the number of workers. progress, if not nil, is called after
// each finished job with the count done so far, from one goroutine at a time.
func RunJobs(jobs []Job, workers int, progress func(done, total int)) []JobResult {
	out := make([]JobResult, len(jobs))
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, len(jobs)))
	next := make(chan int)
	var mu sync.Mutex
	done := 0
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				j := &jobs[i]
				rs, err := LatticeTranches(j.Terms, j.VestYears, j.Market, j.Options)
				out[i] = JobResult{Tranches: rs, Err: err}
				if progress != nil {
					mu.Lock()
					done++
					progress(done, len(jobs))
					mu.Unlock()
				}
			}
		}()
	}
	for i := range jobs {
		next <- i
	}
	close(next)
	wg.Wait()
	return out
}
