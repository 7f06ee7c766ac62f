package accounting

import (
	"runtime"
	"sync"
)

// A close's work per grant (building each ledger, its expense, its views
// for the reconciliation) is shared among workers, each grant's figures
// computed on one of them with its own scratch, while everything that adds
// the grants up (the totals, the periods, the cost centres, the warnings)
// is done on the calling goroutine in grant order: the sums are the same
// floating-point operations in the same order whatever the number of
// workers, so that the books are the same to the bit.

// closeWorkers is how many workers share a close's work per grant; 0 is
// runtime.GOMAXPROCS. minParallel is the fewest ledgers worth sharing: a
// smaller close (the sample, most tests) runs on the calling goroutine
// alone, starting nothing. Tests change both.
var (
	closeWorkers = 0
	minParallel  = 256
)

// workersFor is how many workers share the work of n grants.
func workersFor(n int) int {
	w := closeWorkers
	if w <= 0 {
		w = runtime.GOMAXPROCS(0)
	}
	if n < minParallel || w < 1 {
		return 1
	}
	return min(w, n)
}

// inOrder calls work(i, sc, &r) for every i in [0, n) on w workers, sc the
// worker's own scratch, and then done(i, &r) with that result on the
// calling goroutine, in the order of i. The grants go to the workers in
// blocks, and the workers run at most a few blocks ahead of done, so that
// the results held at once stay few whatever n. A result R is reused from
// block to block: work must set every field it reads (it may keep the
// capacity of slices). With w = 1 it is a plain loop. A panic in work is
// raised again on the calling goroutine.
func inOrder[R any](n, w int, work func(i int, sc *ledgerScratch, r *R), done func(i int, r *R)) {
	if w <= 1 || n <= 1 {
		sc := &ledgerScratch{}
		var r R
		for i := 0; i < n; i++ {
			work(i, sc, &r)
			done(i, &r)
		}
		return
	}
	block := max(1, min(64, n/(4*w)))
	nb := (n + block - 1) / block
	window := min(4*w, nb)
	type slot struct {
		rs    []R
		ready chan any // the block's panic, or nil
	}
	slots := make([]slot, window)
	for k := range slots {
		slots[k] = slot{rs: make([]R, block), ready: make(chan any, 1)}
	}
	jobs := make(chan int, window)
	var wg sync.WaitGroup
	defer func() {
		close(jobs)
		wg.Wait()
	}()
	for range w {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sc := &ledgerScratch{}
			for b := range jobs {
				s := &slots[b%window]
				s.ready <- func() (p any) {
					defer func() { p = recover() }()
					lo := b * block
					for i := lo; i < min(lo+block, n); i++ {
						work(i, sc, &s.rs[i-lo])
					}
					return nil
				}()
			}
		}()
	}
	next := 0
	for b := 0; b < nb; b++ {
		for ; next < nb && next < b+window; next++ {
			jobs <- next
		}
		s := &slots[b%window]
		if p := <-s.ready; p != nil {
			panic(p)
		}
		lo := b * block
		for i := lo; i < min(lo+block, n); i++ {
			done(i, &s.rs[i-lo])
		}
	}
}
