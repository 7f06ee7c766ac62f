package main

import (
	"bufio"
	"bytes"
	"os"
	"runtime/debug"
	"strconv"
	"strings"
)

// The soft limit on the Go heap during value (debug.SetMemoryLimit), unless
// the GOMEMLIMIT environment variable sets one. The limit does not make the
// collector run less often than GOGC has it (by default when the heap has
// doubled since the last collection); it makes it run more often as the
// heap nears the limit, and all the time once the live heap passes it.
//
//   - While the schedule is read the limit is readLimit: the input is not
//     yet trusted, and the readers' garbage is collected soon enough that a
//     hostile workbook is refused within DESIGN §5's 1 GiB.
//   - Once the schedule is read, the limit is ledgerLimit: room for about
//     twice the live heap of a ledger of that many grants (perGrantHeap),
//     never less than readLimit, and never more than a quarter of the
//     memory the process may use (the machine's, or its control group's
//     limit when lower), which leaves the rest to the operating system and
//     to other programs. A 10,000-grant ledger keeps readLimit, as before
//     (a larger limit only made it hold more memory, for no less CPU); at
//     100,000 grants the live heap no longer sits above the limit, where
//     the collector ran all the time and took over 40% of the CPU.
const (
	readLimit = 768 << 20
	// perGrantHeap is room for the heap per grant of the adversarial
	// ledger (bench/ledger, 37 tranches a grant), measured in December
	// 2026: at 100,000 grants under a 768 MiB limit the run held 4.4 GiB
	// with the collector running all the time, so its live heap was at
	// most some 45 KiB a grant; 64 KiB leaves the collector room.
	perGrantHeap = 64 << 10
)

// limitMemory sets the heap's soft limit to limit, unless GOMEMLIMIT is
// set, and returns the function that puts the previous one back.
func limitMemory(limit int64) (restore func()) {
	if os.Getenv("GOMEMLIMIT") != "" {
		return func() {}
	}
	old := debug.SetMemoryLimit(limit)
	return func() { debug.SetMemoryLimit(old) }
}

// ledgerLimit is the soft limit for a ledger of n grants on a process that
// may use avail bytes (0 when unknown, then a quarter of it is no bound).
func ledgerLimit(n int, avail int64) int64 {
	limit := int64(n) * perGrantHeap
	if avail > 0 {
		limit = min(limit, avail/4)
	}
	return max(limit, readLimit)
}

// availableMemory is the memory the process may use: the machine's
// (MemTotal of /proc/meminfo) or its control group's limit (cgroup v2
// memory.max, or v1 memory.limit_in_bytes) when that is lower; 0 when
// neither can be read (a system without /proc).
func availableMemory() int64 {
	avail := int64(0)
	if b, err := os.ReadFile("/proc/meminfo"); err == nil {
		avail = memTotal(b)
	}
	for _, f := range []string{"/sys/fs/cgroup/memory.max", "/sys/fs/cgroup/memory/memory.limit_in_bytes"} {
		if b, err := os.ReadFile(f); err == nil {
			if c := cgroupLimit(b); c > 0 && (avail == 0 || c < avail) {
				avail = c
			}
		}
	}
	return avail
}

// memTotal reads the MemTotal line of /proc/meminfo ("MemTotal: 24683548
// kB"); 0 if there is none.
func memTotal(meminfo []byte) int64 {
	sc := bufio.NewScanner(bytes.NewReader(meminfo))
	for sc.Scan() {
		rest, ok := strings.CutPrefix(sc.Text(), "MemTotal:")
		if !ok {
			continue
		}
		f := strings.Fields(rest)
		if len(f) != 2 || f[1] != "kB" {
			return 0
		}
		kb, err := strconv.ParseInt(f[0], 10, 64)
		if err != nil || kb <= 0 || kb > 1<<43 {
			return 0
		}
		return kb << 10
	}
	return 0
}

// cgroupLimit reads a control group's memory limit in bytes: 0 for none
// ("max", or cgroup v1's page-rounded largest number) or for text that is
// not a number.
func cgroupLimit(b []byte) int64 {
	n, err := strconv.ParseInt(strings.TrimSpace(string(b)), 10, 64)
	if err != nil || n <= 0 || n >= 1<<62 {
		return 0
	}
	return n
}
