// Package cores spreads independent work over the machine's cores in
// chunks of consecutive items, with the result a serial loop gives.
package cores

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// Chunks calls work on the consecutive ranges [lo, hi) of chunk items
// that cover [0, n), on all cores, and returns the error of the lowest
// range that returned one. A range that stops at its first failure makes
// that the error a serial loop over [0, n) would stop at. work must touch
// only the items of its range (and what no range writes).
func Chunks(n, chunk int, work func(lo, hi int) error) error {
	chunks := (n + chunk - 1) / chunk
	workers := min(runtime.GOMAXPROCS(0), chunks)
	if workers <= 1 {
		for lo := 0; lo < n; lo += chunk {
			if err := work(lo, min(lo+chunk, n)); err != nil {
				return err
			}
		}
		return nil
	}
	errs := make([]error, chunks)
	var next atomic.Int64
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				c := int(next.Add(1) - 1)
				if c >= chunks {
					return
				}
				lo := c * chunk
				errs[c] = work(lo, min(lo+chunk, n))
			}
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}
