package main

import "testing"

// The soft limit is room for every run's own heap and for the ledger's,
// grows with the ledger and stops at a quarter of the memory the process
// may use.
func TestLedgerLimit(t *testing.T) {
	const gib = 1 << 30
	for _, c := range []struct {
		grants int
		avail  int64
		want   int64
	}{
		{0, 24 * gib, ledgerBase},
		{10_000, 24 * gib, ledgerBase + 10_000*perGrantHeap},      // about 300 MiB
		{100_000, 24 * gib, ledgerBase + 100_000*perGrantHeap},    // about 1.8 GiB, under a quarter of the machine
		{400_000, 24 * gib, 6 * gib},                              // a quarter of the machine
		{100_000, 4 * gib, gib},                                   // a 4 GiB container: its quarter
		{100_000, 256 << 20, ledgerBase},                          // a quarter under what any run holds
		{100_000, 0, ledgerBase + 100_000*perGrantHeap},           // memory unknown
		{1_000_000, 1 << 62, ledgerBase + 1_000_000*perGrantHeap}, // no bound from the machine
	} {
		if got := ledgerLimit(c.grants, perGrantHeap, c.avail); got != c.want {
			t.Errorf("ledgerLimit(%d, %d) = %d, want %d", c.grants, c.avail, got, c.want)
		}
	}
	// After a prior close, more room a grant: about 440 MiB at 10,000.
	if got, want := ledgerLimit(10_000, perGrantHeapPrior, 24*gib), int64(ledgerBase+10_000*perGrantHeapPrior); got != want {
		t.Errorf("ledgerLimit after a prior close = %d, want %d", got, want)
	}
}

func TestMemTotal(t *testing.T) {
	for _, c := range []struct {
		in   string
		want int64
	}{
		{"MemTotal:       24683548 kB\nMemFree:        18797708 kB\n", 24683548 << 10},
		{"MemFree: 1 kB\nMemTotal: 1024 kB\n", 1 << 20},
		{"MemFree: 1 kB\n", 0},
		{"MemTotal: lots kB\n", 0},
		{"MemTotal: 1024 MB\n", 0},
		{"MemTotal: -5 kB\n", 0},
		{"", 0},
	} {
		if got := memTotal([]byte(c.in)); got != c.want {
			t.Errorf("memTotal(%q) = %d, want %d", c.in, got, c.want)
		}
	}
}

func TestCgroupLimit(t *testing.T) {
	for _, c := range []struct {
		in   string
		want int64
	}{
		{"max\n", 0},                 // cgroup v2: no limit
		{"9223372036854771712\n", 0}, // cgroup v1: no limit
		{"2147483648\n", 2 << 30},    // 2 GiB
		{"", 0},
		{"-1\n", 0},
	} {
		if got := cgroupLimit([]byte(c.in)); got != c.want {
			t.Errorf("cgroupLimit(%q) = %d, want %d", c.in, got, c.want)
		}
	}
}
