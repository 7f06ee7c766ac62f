//go:build unix

package accounting

import "syscall"

// cpuSeconds is the CPU time the process has used so far, user and
// system, for benchmarks on a machine shared with other work (where wall
// time says little); 0 if unknown.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}
