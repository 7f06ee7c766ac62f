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
// With the default GOGC the heap of a run grows to about twice its live
// heap before it is collected, so the limit is what keeps the memory a
// user sees near what the run holds.
//
//   - While the schedule is read the limit is readLimit: the input is not
//     yet trusted, and the readers' garbage is collected soon enough that a
//     hostile workbook is refused within DESIGN §5's 1 GiB.
//   - Once the schedule is read, the limit is ledgerLimit: room for what
//     every run holds (ledgerBase) and for some 15 to 50% more than the
//     live heap of a ledger of that many grants at its peak
//     (perGrantHeap), never more than a quarter of the memory the process
//     may use (the machine's, or its control group's limit when lower),
//     which leaves the rest to the operating system and to other
//     programs. A 10,000-grant adversarial ledger runs in about 316 MiB
//     and a 100,000-grant one in about 1.85 GiB (December 2026), instead
//     of the 0.7 and 5.5 GiB they reached when the heap was left to double;
//     the collector runs more often near the peak, for some 8% more CPU
//     at 100,000 grants.
const (
	readLimit = 768 << 20
	// ledgerBase is room for what a run holds whatever the ledger: the
	// live heap of a 1,000-grant ledger peaks at 70 to 85 MB, some 40 MB
	// of which any ledger holds, and that of the sample at 23 MB.
	ledgerBase = 128 << 20
	// perGrantHeap is room for the live heap per grant of the adversarial
	// ledger (bench/ledger, 37 tranches a grant), measured in December
	// 2026 with heap profiles and gctrace: it peaks at the end of the
	// accounting's expense and while the report is built, at 160 to 190
	// MB at 10,000 grants and 1.6 to 1.7 GB at 100,000 (with what any run
	// holds), some 16 KB a grant; 18 KiB keeps a 100,000-grant run within
	// 2 GiB (issue 15) while leaving the collector some room at the peak,
	// and more below it.
	perGrantHeap = 18 << 10
	// perGrantHeapPrior is perGrantHeap for a close that follows a prior
	// one (--prior): the prior's values, the reconciliation to it and the
	// awards and ledgers it reads are held beside the rest. The live heap
	// of a 10,000-grant rerun peaked at some 345 MB until December 2026,
	// and at 235 to 240 MB since the accounting lets go of each ledger
	// with its expense and the prior's locks come in small blocks. The
	// limit was left where it was: with a lower one (GOMEMLIMIT 304 to
	// 400 MiB) the rerun took as many page faults or more, the runtime
	// handing freed memory back and touching it again.
	perGrantHeapPrior = 32 << 10
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

// ledgerLimit is the soft limit for a ledger of n grants, perGrant bytes
// of room a grant (perGrantHeap, or perGrantHeapPrior after a prior
// close), on a process that may use avail bytes (0 when unknown, then a
// quarter of it is no bound), never under ledgerBase.
func ledgerLimit(n int, perGrant, avail int64) int64 {
	limit := ledgerBase + int64(n)*perGrant
	if avail > 0 {
		limit = min(limit, avail/4)
	}
	return max(limit, ledgerBase)
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
