package accounting

import (
	"grantworth/grants"
	"math"
	"testing"
)

// sampleAwards reads the demo company's schedule and gives every tranche a
// fair value of 1 + index/10 a share (invented: the identities below hold
// for any values).
func sampleAwards(t *testing.T) (*grants.Schedule, []Award) {
	t.Helper()
	s, rep, err := grants.ReadFile("../../sample/tarnwick.xlsx")
	if err != nil {
		t.Fatal(err)
	}
	if rep != nil && !rep.OK() {
		t.Fatalf("sample has problems: %v", rep.Err())
	}
	var awards []Award
	for _, g := range s.Grants {
		ts := s.Tranches(g)
		fv := make([]float64, len(ts))
		for i := range fv {
			fv[i] = 1 + float64(i)/10
		}
		a, err := AwardOf(s, g, fv)
		if err != nil {
			t.Fatal(err)
		}
		// The sample's modifications, each part valued at its tranche's
		// value before and after, so that they add nothing and the
		// identities below hold as without them.
		sp, err := s.SplitOf(g)
		if err != nil {
			t.Fatal(err)
		}
		if sp != nil {
			a.Modified = &Modified{Parts: sp.Parts}
			for _, ch := range sp.Changes {
				vals := make([]float64, len(sp.Parts))
				for j, p := range sp.Parts {
					vals[j] = fv[p.Tranche]
				}
				a.Modified.Changes = append(a.Modified.Changes, ChangeValue{Change: ch, ValuesBefore: vals, ValuesAfter: vals})
			}
		}
		awards = append(awards, a)
	}
	return s, awards
}

// Identity on the sample (common practice): every roll-forward balances,
// start + granted − exercised − forfeited − expired = end, in the sample's
// period and in each quarter since its first grant.
func TestSampleRollForwardIdentity(t *testing.T) {
	s, awards := sampleAwards(t)
	start, end := s.Period()
	d, err := Disclose(awards, PolicyOf(s), start, end, 3)
	if err != nil {
		t.Fatal(err)
	}
	if d.Options.Start.Shares+d.Options.Granted.Shares == 0 {
		t.Fatal("the sample has no options")
	}
	for _, q := range s.Company.Fiscal.Quarters(ymd("2023-10-01"), end) {
		d, err := Disclose(awards, PolicyOf(s), q.Start, q.End, 3)
		if err != nil {
			t.Fatalf("quarter %s: %v", q.Name, err)
		}
		if err := d.Check(); err != nil {
			t.Error(err)
		}
	}
}

// Identity on the sample (ASC 718-10-35-3, IFRS 2.19): over every award's
// whole life the expense adds up to its fair value times the shares that
// vest, counted from Schedule.Tranches (shares less those forfeited before
// vesting; cancelled shares are accelerated, so they count), under every
// policy. The sample's two warrants issued in financings are not
// compensation and add nothing.
func TestSampleLifetimeExpense(t *testing.T) {
	s, awards := sampleAwards(t)
	var want float64
	financing := 0
	for i, g := range s.Grants {
		if g.IsFinancing() {
			financing++
			continue
		}
		for j, tr := range s.Tranches(g) {
			want += awards[i].Tranches[j].FairValue * float64(tr.Shares-tr.Forfeited)
		}
	}
	for _, pol := range []Policy{
		PolicyOf(s),
		{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur},
		{Attribution: grants.StraightLine, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1},
	} {
		r, err := Expense(awards, pol, ymd("2040-01-01"), ymd("2040-03-31"))
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(r.Cumulative-want) > 1e-9*want {
			t.Errorf("%v: lifetime expense %.4f, fair value × vested shares %.4f", pol, r.Cumulative, want)
		}
		if len(r.Financing) != financing || financing != 2 {
			t.Errorf("%v: %d financing warrants booked apart, want the sample's 2", pol, len(r.Financing))
		}
	}
}
