package grants

import (
	"strings"
	"testing"
)

// The one allocation rule (our own, stated in Allocate), worked by hand on
// four yearly tranches of 1,000 vesting 2025-01-01 to 2028-01-01:
//   - 2025-06-30, 300 exercised: vested tranche 1 gives them (earliest first).
//   - 2026-01-01, 1,500 forfeited: tranche 2 vests that day, so the
//     unvested are tranches 3 and 4: 1,000 from 4, 500 from 3 (latest first).
//   - 2026-02-01, 2,000 cancelled: 500 unvested left in tranche 3, then
//     vested shares latest first: 1,000 from tranche 2, 500 from tranche 1.
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
	want := []mv{{0, Exercised, 300, true}, {3, Forfeited, 1000, false}, {2, Forfeited, 500, false},
		{2, Cancelled, 500, false}, {1, Cancelled, 1000, true}, {0, Cancelled, 500, true}, {0, Expired, 200, true}}
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
