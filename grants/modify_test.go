package grants

import (
	"fmt"
	"reflect"
	"testing"
)

func ip(n int) *int { return &n }

// modSchedule is an invented grant of 4,800 options vesting monthly over
// four years from 2024-01-15 after a one-year cliff (1,200 at the cliff,
// then 100 a month).
func modSchedule(mods ...Modification) *Schedule {
	s := smallSchedule()
	s.Events = nil
	s.Modifications = mods
	return s
}

// TestSplitCliffWaiver: the cliff of G-001 (4,800 shares from 2024-01-31,
// 48 months, 12-month cliff) is waived on 2024-11-30, after ten months:
// under monthly vesting without a cliff 1,000 shares have vested by then
// (4,800 × 10/48), so the cliff tranche of 1,200 is cut into 1,000 vesting
// on the day and two runs of 100 vesting on 2024-12-31 and 2025-01-31; the
// later tranches keep their dates (the rule of the Grants columns, DESIGN
// §4.2, with cliff_months 0).
func TestSplitCliffWaiver(t *testing.T) {
	s := modSchedule(Modification{GrantID: "G-001", Date: d("2024-11-30"), NewCliffMonths: ip(0)})
	g, _ := s.Grant("G-001")
	sp, err := s.SplitOf(g)
	if err != nil {
		t.Fatal(err)
	}
	if got := len(sp.Parts); got != 39 { // 3 parts of the cliff tranche, 36 monthly tranches
		t.Fatalf("%d parts, want 39", got)
	}
	want := []Part{
		{Tranche: 0, Index: 1, Shares: 1000, Vest: d("2025-01-31"), Final: d("2024-11-30")},
		{Tranche: 0, Index: 1, Shares: 100, Vest: d("2025-01-31"), Final: d("2024-12-31")},
		{Tranche: 0, Index: 1, Shares: 100, Vest: d("2025-01-31"), Final: d("2025-01-31")},
		{Tranche: 1, Index: 2, Shares: 100, Vest: d("2025-02-28"), Final: d("2025-02-28")},
	}
	if !reflect.DeepEqual(sp.Parts[:4], want) {
		t.Errorf("parts %+v, want %+v", sp.Parts[:4], want)
	}
	ch := sp.Changes[0]
	if p := ch.Parts[0]; p.Outstanding != 1000 || p.Shares != 1000 || p.Improbable != 0 || !p.VestAfter.Equal(d("2024-11-30")) {
		t.Errorf("first part at the change: %+v", p)
	}
	// The holder leaves that day: the 1,000 vest only because of the
	// change (Type III); the other 3,800 are forfeited.
	s.Events = []Event{{GrantID: "G-001", Date: d("2024-11-30"), Kind: Forfeited, Shares: 3800, Row: 2}}
	sp, err = s.SplitOf(g)
	if err != nil {
		t.Fatal(err)
	}
	if p := sp.Changes[0].Parts; p[0].Improbable != 1000 || p[1].Improbable != 0 {
		t.Errorf("improbable shares %d and %d, want 1000 and 0", p[0].Improbable, p[1].Improbable)
	}
	if rep := Validate(s); !rep.OK() {
		t.Errorf("the departure with the cliff waived: %v", rep.Errors)
	}
	ts := s.Tranches(g)
	if ts[0].Forfeited != 200 || ts[1].Forfeited != 100 {
		t.Errorf("forfeited %d of the cliff tranche and %d of the next, want 200 and 100", ts[0].Forfeited, ts[1].Forfeited)
	}
}

// TestSplitFullAcceleration: new_vest_months 0 vests everything still
// unvested on the modification date; vested tranches keep their dates.
func TestSplitFullAcceleration(t *testing.T) {
	s := modSchedule(Modification{GrantID: "G-001", Date: d("2025-06-10"), NewVestMonths: ip(0)})
	g, _ := s.Grant("G-001")
	sp, err := s.SplitOf(g)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range sp.Parts {
		want := p.Vest
		if p.Vest.After(d("2025-06-10")) {
			want = d("2025-06-10")
		}
		if !p.Final.Equal(want) || p.Shares != s.Tranches(g)[p.Tranche].Shares {
			t.Errorf("part %+v: want final %s, whole tranche", p, isoDay(want))
		}
	}
}

// TestSplitPartialRepricing: 1,000 of 2,600 outstanding shares repriced are
// taken from each tranche in proportion to its outstanding shares, the
// largest remainders getting the odd shares; a later change of the grant
// is refused, as it could not say which shares it touches.
func TestSplitPartialRepricing(t *testing.T) {
	k := 1.0
	s := modSchedule(Modification{GrantID: "G-001", Date: d("2026-06-30"), NewStrike: &k, Shares: 1000, Row: 2})
	s.Events = []Event{{GrantID: "G-001", Date: d("2026-04-15"), Kind: Forfeited, Shares: 2200}}
	g, _ := s.Grant("G-001")
	sp, err := s.SplitOf(g)
	if err != nil {
		t.Fatal(err)
	}
	ch := sp.Changes[0]
	var out, touched int64
	for _, p := range ch.Parts {
		out += p.Outstanding
		touched += p.Shares
		if p.Outstanding > 0 && (p.Shares*2600 < 1000*p.Outstanding-2600 || p.Shares*2600 > 1000*p.Outstanding+2600) {
			t.Errorf("part %+v: not in proportion", p)
		}
	}
	if out != 2600 || touched != 1000 || !ch.Partial || ch.After.Strike != 1 || ch.Before.Strike != 2.5 {
		t.Errorf("outstanding %d, touched %d, partial %v, strike %v → %v", out, touched, ch.Partial, ch.Before.Strike, ch.After.Strike)
	}
	s.Modifications = append(s.Modifications, Modification{GrantID: "G-001", Date: d("2026-07-31"), NewStrike: &k, Row: 3})
	if _, err := s.SplitOf(g); err == nil {
		t.Error("a change after a partial one was accepted")
	}
}

// TestModificationsRoundTrip: the Modifications sheet and a replacement on
// the Events sheet read back from the workbook and the CSV folder as
// written.
func TestModificationsRoundTrip(t *testing.T) {
	k, x := 2.0, 0.05
	s := smallSchedule()
	s.Grants = append(s.Grants, Grant{ID: "G-005", Instrument: Option, GrantDate: d("2026-05-01"), Shares: 500, Strike: 4.5, ExpiryDate: d("2036-05-01"),
		VestStart: d("2026-05-01"), VestMonths: 12, CliffMonths: 12, VestEvery: 1, Purpose: Compensation})
	s.Events = append(s.Events, Event{GrantID: "G-004", Date: d("2026-05-01"), Kind: Cancelled, Shares: 1000, ReplacementGrantID: "G-005"})
	s.Modifications = []Modification{
		{GrantID: "G-001", Date: d("2026-06-30"), NewStrike: &k, NewExpiryDate: d("2035-01-31"), NewExitRate: &x, Note: "down round of June 2026"},
		{GrantID: "G-003", Date: d("2026-07-15"), NewVestMonths: ip(24)},
	}
	xlsx, dir := writeBoth(t, s)
	for _, path := range []string{xlsx, dir} {
		got, rep, err := ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if !rep.OK() {
			t.Fatalf("%s: %s", path, problems(rep))
		}
		if len(got.Modifications) != 2 || *got.Modifications[0].NewStrike != 2 || !got.Modifications[0].NewExpiryDate.Equal(d("2035-01-31")) ||
			*got.Modifications[0].NewExitRate != 0.05 || got.Modifications[0].Note != "down round of June 2026" || *got.Modifications[1].NewVestMonths != 24 ||
			got.Modifications[1].NewStrike != nil || got.Modifications[0].Refs["new_strike"].String() != "Modifications!C2" {
			t.Errorf("%s: modifications %+v", path, got.Modifications)
		}
		var rid string
		for _, e := range got.Events {
			rid += e.ReplacementGrantID
		}
		if rid != "G-005" {
			t.Errorf("%s: replacement %q, want G-005", path, rid)
		}
		if exp := got.Expiry(got.Grants[0]); !exp.Equal(d("2035-01-31")) {
			t.Errorf("%s: expiry after the modification %s", path, isoDay(exp))
		}
	}
}

// A grant's changes are the same whether its cancellations with a
// replacement come from the schedule's index or from a scan of the Events
// sheet, and a grant with none has no changes either way.
func TestChangesIndexed(t *testing.T) {
	k := 2.0
	s := smallSchedule()
	s.Grants = append(s.Grants, Grant{ID: "G-005", Instrument: Option, GrantDate: d("2026-05-01"), Shares: 500, Strike: 4.5, ExpiryDate: d("2036-05-01"),
		VestStart: d("2026-05-01"), VestMonths: 12, CliffMonths: 12, VestEvery: 1, Purpose: Compensation})
	s.Events = append(s.Events,
		Event{GrantID: "G-003", Date: d("2026-03-01"), Kind: Forfeited, Shares: 10},
		Event{GrantID: "G-004", Date: d("2026-05-01"), Kind: Cancelled, Shares: 1000, ReplacementGrantID: "G-005"})
	s.Modifications = []Modification{{GrantID: "G-004", Date: d("2026-04-15"), NewStrike: &k}}
	changes := func(s *Schedule) string {
		out := ""
		for _, g := range s.Grants {
			cs, err := s.Changes(g)
			out += fmt.Sprintf("%s %d %v %+v\n", g.ID, len(cs), err, cs)
		}
		return out
	}
	scanned := changes(s)
	s.Reindex()
	if s.fresh() == nil {
		t.Fatal("the index is stale just after Reindex")
	}
	if got := changes(s); got != scanned {
		t.Errorf("changes from the index:\n%s\nscanned:\n%s", got, scanned)
	}
	if cs, _ := s.Changes(s.Grants[3]); len(cs) != 2 {
		t.Errorf("G-004 has %d changes, want the repricing and the cancellation with its replacement", len(cs))
	}
}
