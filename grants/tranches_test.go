package grants

import (
	"fmt"
	"math/rand/v2"
	"testing"
	"time"
)

func TestTranchesFourYearCliffMonthly(t *testing.T) {
	// 4,800 shares, 48 months, 12-month cliff, monthly (common practice:
	// a quarter at the cliff, then 1/48 a month).
	g := Grant{ID: "A", GrantDate: d("2024-01-31"), VestStart: d("2024-01-31"), Shares: 4800, VestMonths: 48, CliffMonths: 12, VestEvery: 1}
	ts := (&Schedule{}).Tranches(g)
	if len(ts) != 37 {
		t.Fatalf("got %d tranches, want 37 (cliff + 36 months)", len(ts))
	}
	if ts[0].Shares != 1200 || !ts[0].VestDate.Equal(d("2025-01-31")) {
		t.Errorf("cliff tranche %+v, want 1200 on 2025-01-31", ts[0])
	}
	// 31 January + 13 months is the last day of February 2025.
	if !ts[1].VestDate.Equal(d("2025-02-28")) || ts[1].Shares != 100 {
		t.Errorf("tranche 2 %+v, want 100 on 2025-02-28", ts[1])
	}
	if !ts[2].VestDate.Equal(d("2025-03-31")) {
		t.Errorf("tranche 3 on %s, want 2025-03-31 (month end clamp from the start, not cumulative)", ts[2].VestDate.Format(time.DateOnly))
	}
	if !ts[36].VestDate.Equal(d("2028-01-31")) {
		t.Errorf("last tranche on %s, want 2028-01-31", ts[36].VestDate.Format(time.DateOnly))
	}
}

func TestTranchesFloorOfCumulative(t *testing.T) {
	// 10 shares over 4 quarters: floor(10·3/12)=2, floor(10·6/12)=5,
	// floor(10·9/12)=7, 10: tranches 2, 3, 2, 3.
	g := Grant{ID: "B", GrantDate: d("2025-01-01"), VestStart: d("2025-01-01"), Shares: 10, VestMonths: 12, VestEvery: 3}
	ts := (&Schedule{}).Tranches(g)
	want := []int64{2, 3, 2, 3}
	if len(ts) != len(want) {
		t.Fatalf("got %d tranches %+v, want %v", len(ts), ts, want)
	}
	for i, w := range want {
		if ts[i].Shares != w || ts[i].Index != i+1 {
			t.Errorf("tranche %d: %+v, want %d shares", i, ts[i], w)
		}
	}
}

func TestTranchesVestedAtGrant(t *testing.T) {
	g := Grant{ID: "C", GrantDate: d("2025-05-05"), VestStart: d("2025-01-01"), Shares: 7}
	ts := (&Schedule{}).Tranches(g)
	if len(ts) != 1 || ts[0].Shares != 7 || !ts[0].VestDate.Equal(g.GrantDate) {
		t.Fatalf("got %+v, want one tranche of 7 on the grant date", ts)
	}
}

func TestTranchesForfeit(t *testing.T) {
	s := smallSchedule()
	g, _ := s.Grant("G-001")
	ts := s.Tranches(g)
	// Left on 2026-04-15: vested by then: 1200 at the cliff (2025-01-31) +
	// 100 a month to 2026-03-31 (14 months) = 2600; the termination
	// forfeits the 2200 unvested, every tranche that vests after it.
	var forfeited, vesting int64
	for _, tr := range ts {
		vestedBefore := !tr.VestDate.After(d("2026-04-15"))
		if vestedBefore && tr.Forfeited != 0 || !vestedBefore && (tr.Forfeited != tr.Shares || !tr.ForfeitDate().Equal(d("2026-04-15"))) {
			t.Errorf("tranche %d vesting %s: %+v", tr.Index, tr.VestDate.Format(time.DateOnly), tr)
		}
		forfeited += tr.Forfeited
		vesting += tr.Vesting()
	}
	if forfeited != 2200 || vesting != 4800-2200 {
		t.Errorf("forfeited %d, vesting %d; want 2200 and 2600", forfeited, vesting)
	}
}

// Property: over random schedules the tranches add up to the grant exactly,
// vest in order, never before the cliff, and all within the vesting period.
func TestTranchesAddUp(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	everies := []int{1, 3, 12}
	for i := 0; i < 5000; i++ {
		vm := rng.IntN(121)
		cliff := 0
		if vm > 0 {
			cliff = rng.IntN(vm + 1)
		}
		start := d("2020-01-01").AddDate(0, 0, rng.IntN(3000))
		g := Grant{ID: "P", GrantDate: start, VestStart: start, Shares: 1 + rng.Int64N(10_000_000), VestMonths: vm, CliffMonths: cliff, VestEvery: everies[rng.IntN(3)]}
		ts := (&Schedule{}).Tranches(g)
		var sum int64
		for j, tr := range ts {
			sum += tr.Shares
			if tr.Shares <= 0 {
				t.Fatalf("grant %+v: tranche %d has %d shares", g, j, tr.Shares)
			}
			if j > 0 && !tr.VestDate.After(ts[j-1].VestDate) {
				t.Fatalf("grant %+v: tranche %d not after the one before", g, j)
			}
			if vm > 0 && tr.VestDate.Before(AddMonths(start, cliff)) {
				t.Fatalf("grant %+v: tranche %d vests before the cliff", g, j)
			}
			if vm > 0 && tr.VestDate.After(AddMonths(start, vm)) {
				t.Fatalf("grant %+v: tranche %d after the vesting period", g, j)
			}
		}
		if sum != g.Shares {
			t.Fatalf("grant %+v: tranches add up to %d, want %d", g, sum, g.Shares)
		}
	}
}

func TestAddMonths(t *testing.T) {
	for _, c := range []struct {
		from string
		n    int
		want string
	}{
		{"2025-01-31", 1, "2025-02-28"},
		{"2024-01-31", 1, "2024-02-29"},
		{"2025-01-31", 2, "2025-03-31"},
		{"2025-08-31", -6, "2025-02-28"},
		{"2025-12-15", 1, "2026-01-15"},
		{"2026-10-01", -3, "2026-07-01"},
	} {
		if got := AddMonths(d(c.from), c.n); !got.Equal(d(c.want)) {
			t.Errorf("AddMonths(%s, %d) = %s, want %s", c.from, c.n, got.Format(time.DateOnly), c.want)
		}
	}
}

// AddMonths counts months by arithmetic and days in a month by the
// Gregorian rule (common practice: 29 February in years divisible by 4,
// except centuries not divisible by 400); it must agree with package
// time's own normalization of an overflowing month and day, from which it
// was first written, over years before and after 1970, leap centuries and
// months far from the start.
func TestAddMonthsAsTimeNormalizes(t *testing.T) {
	byTime := func(t time.Time, n int) time.Time {
		y, m, d := t.Date()
		first := time.Date(y, m+time.Month(n), 1, 0, 0, 0, 0, time.UTC)
		last := first.AddDate(0, 1, -1).Day()
		if d > last {
			d = last
		}
		return time.Date(first.Year(), first.Month(), d, 0, 0, 0, 0, time.UTC)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for range 200_000 {
		from := time.Date(rng.IntN(2600)-300, time.Month(1+rng.IntN(12)), 1+rng.IntN(31), rng.IntN(24), 0, 0, 0, time.UTC)
		n := rng.IntN(2600) - 1300
		if got, want := AddMonths(from, n), byTime(from, n); !got.Equal(want) {
			t.Fatalf("AddMonths(%v, %d) = %v, want %v", from, n, got, want)
		}
	}
	for _, y := range []int{1600, 1700, 1900, 2000, 2100, 2400, -100, -400, 0} {
		from := time.Date(y, time.January, 31, 0, 0, 0, 0, time.UTC)
		if got, want := AddMonths(from, 1), byTime(from, 1); !got.Equal(want) {
			t.Errorf("AddMonths(%v, 1) = %v, want %v", from, got, want)
		}
	}
}

// lastVest is the vest date of the last tranche the schedule expands
// (custom Vesting rows or the columns), without expanding the columns.
func TestLastVestIsLastTranche(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	s := smallSchedule()
	s.Vesting = nil
	var gs []Grant
	for i := range 20_000 {
		start := time.Date(2020+rng.IntN(6), time.Month(1+rng.IntN(12)), 28+rng.IntN(4), 0, 0, 0, 0, time.UTC)
		g := Grant{ID: fmt.Sprintf("G%d", i), GrantDate: start.AddDate(0, 0, -rng.IntN(40)), VestStart: start,
			Shares: int64(rng.IntN(5000)) - 10, VestMonths: rng.IntN(70) - 2, CliffMonths: rng.IntN(30) - 2, VestEvery: rng.IntN(14) - 1}
		if rng.IntN(10) == 0 { // some on custom rows, of any shares
			for k := range 1 + rng.IntN(6) {
				s.Vesting = append(s.Vesting, VestRow{GrantID: g.ID, VestDate: start.AddDate(0, rng.IntN(40)-k, 0), Shares: int64(rng.IntN(300)) - 20})
			}
		}
		gs = append(gs, g)
	}
	s.Reindex()
	for _, g := range gs {
		ts := s.tranchesBeforeEvents(g)
		got, ok := s.lastVest(g)
		if ok != (len(ts) > 0) || ok && !got.Equal(ts[len(ts)-1].VestDate) {
			t.Fatalf("grant %+v: lastVest %v %v, tranches %+v", g, got, ok, ts)
		}
	}
}

// A tranche keeps the dates of its forfeitures and cancellations as day
// numbers: every calendar day comes back as itself (1969-12-31, day -1,
// and 1970-01-01, day 0, included), and no date as the zero Time.
func TestTrancheEventDays(t *testing.T) {
	for _, s := range []string{"1900-03-01", "1969-12-31", "1970-01-01", "2026-04-15", "2099-12-31"} {
		day := d(s)
		tr := Tranche{forfeitDay: dayNumber(day), cancelDay: dayNumber(day.Add(13 * time.Hour))}
		if !tr.ForfeitDate().Equal(day) || !tr.CancelDate().Equal(day) {
			t.Errorf("%s: forfeit %v, cancel %v", s, tr.ForfeitDate(), tr.CancelDate())
		}
	}
	if tr := (Tranche{}); !tr.ForfeitDate().IsZero() || !tr.CancelDate().IsZero() {
		t.Errorf("no events: forfeit %v, cancel %v", tr.ForfeitDate(), tr.CancelDate())
	}
}
