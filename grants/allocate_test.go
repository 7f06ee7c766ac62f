package grants

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// The one allocation rule (our own, stated in Allocate), worked by hand on
// four yearly tranches of 1,000 vesting 2025-01-01 to 2028-01-01:
//   - 2025-06-30, 300 exercised: vested tranche 1 gives them (earliest first).
//   - 2026-01-01, 1,500 forfeited: tranche 2 vests that day, so the
//     unvested are tranches 3 and 4, 1,000 each: 750 from each (in
//     proportion).
//   - 2026-02-01, 2,000 cancelled: the 500 unvested left, 250 from each of
//     tranches 3 and 4, then vested shares latest first: 1,000 from
//     tranche 2, 500 from tranche 1.
//   - 2026-03-01, 300 expired: only 200 vested are outstanding; Short 100.
func TestAllocate(t *testing.T) {
	var ts []Tranche
	for i, v := range []string{"2025-01-01", "2026-01-01", "2027-01-01", "2028-01-01"} {
		ts = append(ts, Tranche{GrantID: "A", Index: i + 1, VestDate: d(v), Shares: 1000})
	}
	evs := []Event{ // out of date order on purpose
		{GrantID: "A", Date: d("2026-02-01"), Kind: Cancelled, Shares: 2000},
		{GrantID: "A", Date: d("2025-06-30"), Kind: Exercised, Shares: 300},
		{GrantID: "A", Date: d("2026-03-01"), Kind: Expired, Shares: 300},
		{GrantID: "A", Date: d("2026-01-01"), Kind: Forfeited, Shares: 1500},
	}
	al := Allocate(ts, evs)
	type mv struct {
		tranche int
		kind    EventKind
		shares  int64
		vested  bool
	}
	want := []mv{{0, Exercised, 300, true}, {2, Forfeited, 750, false}, {3, Forfeited, 750, false},
		{2, Cancelled, 250, false}, {3, Cancelled, 250, false}, {1, Cancelled, 1000, true}, {0, Cancelled, 500, true}, {0, Expired, 200, true}}
	if len(al.Moves) != len(want) {
		t.Fatalf("moves %+v, want %+v", al.Moves, want)
	}
	for i, w := range want {
		m := al.Moves[i]
		if (mv{m.Tranche, m.Kind, m.Shares, m.Vested}) != w {
			t.Errorf("move %d: %+v, want %+v", i, m, w)
		}
	}
	taken := []Taken{
		{Unvested: 3000, Vested: 1000, FromVested: 300},
		{Unvested: 2000, Vested: 1700, FromUnvested: 1500},
		{Unvested: 500, Vested: 1700, FromUnvested: 500, FromVested: 1500},
		{Vested: 200, FromVested: 200, Short: 100},
	}
	for i, w := range taken {
		got := al.Events[i]
		got.Event = Event{}
		if got != w {
			t.Errorf("event %d (%s): %+v, want %+v", i, al.Events[i].Event.Kind, got, w)
		}
	}
}

// A partial forfeiture of a pooled row comes out of every unvested
// tranche in proportion (DESIGN §3; the rule of Allocate, ours): 10,000
// RSUs vesting yearly over three years are tranches of 3,333, 3,333 and
// 3,334 (floor of the cumulative count, DESIGN §4.2). 1,000 forfeited
// before the first vest date: the exact shares are 333.3, 333.3 and
// 333.4, the floors 333 each leave one share over, which goes to the
// largest fraction, tranche 3: 333, 333, 334. A year on, tranche 1 has
// vested; 500 more forfeited come out of tranches 2 and 3 (3,000 and
// 3,000 left): 250 each.
func TestAllocatePartialForfeitureProRata(t *testing.T) {
	g := Grant{ID: "POOL", Instrument: RSU, GrantDate: d("2025-01-15"), VestStart: d("2025-01-15"), Shares: 10000, VestMonths: 36, VestEvery: 12}
	ts := expand(g)
	if len(ts) != 3 || ts[0].Shares != 3333 || ts[1].Shares != 3333 || ts[2].Shares != 3334 {
		t.Fatalf("tranches %+v", ts)
	}
	al := Allocate(ts, []Event{
		{GrantID: "POOL", Date: d("2025-06-30"), Kind: Forfeited, Shares: 1000},
		{GrantID: "POOL", Date: d("2026-06-30"), Kind: Forfeited, Shares: 500},
	})
	got := []int64{0, 0, 0}
	var first []int64
	for _, m := range al.Moves {
		if m.Vested {
			t.Errorf("move from a vested tranche: %+v", m)
		}
		got[m.Tranche] += m.Shares
		if m.Event == 0 {
			first = append(first, m.Shares)
		}
	}
	if want := []int64{333, 333, 334}; !slices.Equal(first, want) {
		t.Errorf("first forfeiture took %v, want %v", first, want)
	}
	if want := []int64{333, 583, 584}; !slices.Equal(got, want) {
		t.Errorf("in all %v, want %v", got, want)
	}
	if tk := al.Events[1]; tk.Unvested != 6000 || tk.FromUnvested != 500 || tk.FromVested != 0 {
		t.Errorf("second forfeiture %+v", tk)
	}
}

// Property of ProRata: the parts add up to n, none exceeds its pool, and
// each is within one share of its exact share n·pool/total (identities,
// no source needed); ties go to the later pool.
func TestProRata(t *testing.T) {
	if got := ProRata(2, []int64{1, 1, 1}); !slices.Equal(got, []int64{0, 1, 1}) {
		t.Errorf("tie: %v, want [0 1 1]", got)
	}
	rng := rand.New(rand.NewPCG(3, 2))
	for k := 0; k < 2000; k++ {
		pools := make([]int64, 1+rng.IntN(8))
		var total int64
		for i := range pools {
			pools[i] = rng.Int64N(1 << uint(1+rng.IntN(40)))
			total += pools[i]
		}
		n := rng.Int64N(total + 1)
		got := ProRata(n, pools)
		var sum int64
		for i, p := range got {
			sum += p
			exact := float64(n) * float64(pools[i]) / float64(max(total, 1))
			if p < 0 || p > pools[i] || math.Abs(float64(p)-exact) >= 1+1e-9*exact {
				t.Fatalf("ProRata(%d, %v) = %v: part %d is %d, exact %.3f", n, pools, got, i, p, exact)
			}
		}
		if sum != n {
			t.Fatalf("ProRata(%d, %v) = %v adds to %d", n, pools, got, sum)
		}
	}
}

// The period-end share price is an input with its cell, and its absence
// is an error naming the valuation date's cell when an option or warrant
// needs it for the disclosures.
func TestPeriodEndPrice(t *testing.T) {
	s := smallSchedule()
	src, err := s.PeriodEndPrice()
	if err != nil || src.Value != 4.5 || !strings.Contains(src.Text, "valuation of 2025-12-31") {
		t.Fatalf("PeriodEndPrice = %+v, %v", src, err)
	}
	s.SharePrices = s.SharePrices[:0]
	for i := range s.Grants {
		s.Grants[i].SharePrice = fp(2)
	}
	if _, err := s.PeriodEndPrice(); err == nil || !strings.Contains(err.Error(), "Company") || !strings.Contains(err.Error(), "no Share Prices row") {
		t.Fatalf("no price: %v", err)
	}
	rep := Validate(s)
	if !strings.Contains(problems(&rep), "error: Company (valuation_date): \"2026-09-30\" has no share price") {
		t.Errorf("validation:\n%s", problems(&rep))
	}
}
