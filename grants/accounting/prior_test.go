package accounting

import (
	"errors"
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"

	"grantworth/grants"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// tolCent is the tolerance on a figure rounded to the cent.
const tolCent = 0.005

// fakeValuation values every tranche of every grant of s made by its
// valuation date at fv(grant, tranche index), without a lattice: the
// accounting does not care where fair values come from. Locks from prior
// are kept as pricing would keep them, and the grants in correct take
// their fv instead.
func fakeValuation(s *grants.Schedule, fv func(g grants.Grant, k int) float64, prior *Prior, correct ...string) *pricing.Valuation {
	v := &pricing.Valuation{Revaluations: map[string][]pricing.Revaluation{}}
	locks := prior.Locks()
	for _, g := range s.Grants {
		if g.GrantDate.After(s.Company.ValuationDate) {
			continue
		}
		gv := pricing.GrantValue{Inputs: grants.Inputs{Grant: g, MeasurementDate: g.GrantDate, Tranches: s.Tranches(g)}, Status: pricing.Measured}
		for k := range gv.Inputs.Tranches {
			r := valuation.Result{Value: fv(g, k)}
			gv.Results = append(gv.Results, r)
			gv.BSM = append(gv.BSM, pricing.Comparison{Value: r.Value, ExpectedTermYears: r.ExpectedTermYears})
			gv.RiskFreeRate = append(gv.RiskFreeRate, 0)
			gv.SimplifiedRate = append(gv.SimplifiedRate, 0)
		}
		if lk, ok := locks[g.ID]; ok {
			gv.Lock, gv.Status = &lk, pricing.Locked
			for _, id := range correct {
				if id == g.ID {
					gv.Status = pricing.Corrected
				}
			}
			if gv.Status == pricing.Locked {
				for k, tr := range gv.Inputs.Tranches {
					for _, t := range lk.Tranches {
						if t.VestDate.Equal(tr.VestDate) {
							gv.Results[k] = t.Result
						}
					}
				}
			}
		}
		v.Grants = append(v.Grants, gv)
	}
	return v
}

// oneOption is an invented company with one option grant: 1,200 shares
// at a fair value of 10, granted 2025-01-01 and vesting all at once on
// 2027-01-01 (730 days of service), valued at end.
func oneOption(end string, pol Policy) *grants.Schedule {
	d := grantstest.Day
	return &grants.Schedule{
		Company: grants.Company{Name: "Corrigan Tools Ltd", ValuationDate: d(end), PeriodStart: grants.Company{}.DefaultPeriodStart(d(end)), Currency: "GBP"},
		Assumptions: grants.Assumptions{Volatility: 0.4, Attribution: pol.Attribution, Forfeitures: pol.Forfeitures,
			PreVestingForfeitureRate: pol.PreVestingForfeitureRate},
		Grants: []grants.Grant{{ID: "L-1", Instrument: grants.Option, GrantDate: d("2025-01-01"), VestStart: d("2025-01-01"),
			Shares: 1200, Strike: 5, ExpiryDate: d("2035-01-01"), VestMonths: 24, CliffMonths: 24, VestEvery: 1}},
		SharePrices: []grants.PricePoint{{Date: d("2024-12-31"), Price: 5}},
	}
}

func ten(grants.Grant, int) float64 { return 10 }

// closeOf books s over v after prior, opening its period first.
func closeOf(t *testing.T, s *grants.Schedule, v *pricing.Valuation, prior *Prior) *Books {
	t.Helper()
	if prior != nil {
		if _, err := Open(s, prior); err != nil {
			t.Fatal(err)
		}
	}
	b, err := Close(s, v, prior)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func line(t *testing.T, w Walk, key string) float64 {
	t.Helper()
	for _, l := range w.Moves {
		if l.Key == key {
			return l.Amount
		}
	}
	t.Fatalf("walk to %s has no line %s", w.Closing.Key, key)
	return 0
}

// Rule: a forfeiture dated in a closed period but recorded only now is a
// catch-up of the open period with its cause; the closed period is not
// restated (ASC 250-10-45-17; ASC 718-10-35-3: the cost of forfeited
// awards is reversed when the forfeiture is known). Worked by hand: the
// prior close of 2026-06-30 booked 12,000 × 546/730 = 8,975.34 (as-occur,
// 546 days of service from 2025-01-01 through 2026-06-30); the holder
// left on 2026-05-14, recorded in the next quarter. The catch-up is
// −8,975.34 and is the whole expense of the quarter (no service after the
// departure). Unrecognized cost: 3,024.66 at the prior close, less the
// 12,000 of cost the forfeiture releases, plus the 8,975.34 reversed,
// gives 0.
func TestLateForfeitureCatchUp(t *testing.T) {
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}
	s := oneOption("2026-06-30", pol)
	b := closeOf(t, s, fakeValuation(s, ten, nil), nil)
	booked := 12000.0 * 546 / 730
	nearly(t, "booked at the prior close", b.Expense.Cumulative, booked, tolMoney)
	prior := Filed(s, fakeValuation(s, ten, nil), b)

	s = oneOption("2026-09-30", pol)
	s.Events = []grants.Event{{GrantID: "L-1", Date: ymd("2026-05-14"), Kind: grants.Forfeited, Shares: 1200, Row: 2}}
	b = closeOf(t, s, fakeValuation(s, ten, prior), prior)
	r := b.Reconciliation
	nearly(t, "period expense", b.Expense.Period, -booked, tolMoney)
	if len(r.CatchUps) != 1 || r.CatchUps[0].Cause != CauseLateEvent || !strings.Contains(r.CatchUps[0].Detail, "forfeited 1,200 shares on 2026-05-14 (Events!A2)") {
		t.Fatalf("catch-ups %+v", r.CatchUps)
	}
	nearly(t, "catch-up", r.CatchUps[0].Amount, -booked, tolMoney)
	nearly(t, "expense walk: catch-ups", line(t, r.Expense, "catch_ups"), -8975.34, tolCent)
	nearly(t, "expense walk: service", line(t, r.Expense, "service"), 0, tolCent)
	nearly(t, "opening unrecognized", r.Unrecognized.Opening.Amount, 3024.66, tolCent)
	nearly(t, "cost released", line(t, r.Unrecognized, "catch_ups"), -12000, tolCent)
	nearly(t, "expense in the walk", line(t, r.Unrecognized, "expense"), 8975.34, tolCent)
	nearly(t, "closing unrecognized", r.Unrecognized.Closing.Amount, 0, tolCent)
	if c := r.Outstanding[0]; c.Lines[0].Shares != 1200 || c.Lines[1].Key != "catch_ups" || c.Lines[1].Shares != -1200 || c.Lines[len(c.Lines)-1].Shares != 0 {
		t.Errorf("options walk %+v", c.Lines)
	}
	// The journal books the reversal as a catch-up entry naming the grant,
	// and nothing else.
	if len(b.Journal) != 1 || b.Journal[0].Lines[0].GrantID != "L-1" || !strings.Contains(b.Journal[0].Description, "late event") {
		t.Fatalf("journal %+v", b.Journal)
	}
	if l := b.Journal[0].Lines[0]; l.Role != RoleEquity || math.Abs(l.Debit-booked) > tolCent {
		t.Errorf("catch-up entry debits %+v, want equity %v", l, booked)
	}
}

// Rule: a grant-date fair value is measured once (ASC 718-10-30-6, IFRS
// 2.16); measuring it again corrects an error, and the difference for the
// closed periods is a catch-up of the open one. Worked by hand: filed at
// 10, corrected to 12; by the prior close 546 of 730 days were rendered,
// so the catch-up is 1,200 × 2 × 546/730 = 1,795.07, and the quarter's own
// service is 14,400 × 92/730 = 1,814.79.
func TestCorrectionCatchUp(t *testing.T) {
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}
	s := oneOption("2026-06-30", pol)
	v := fakeValuation(s, ten, nil)
	prior := Filed(s, v, closeOf(t, s, v, nil))
	s = oneOption("2026-09-30", pol)
	twelve := func(grants.Grant, int) float64 { return 12 }
	b := closeOf(t, s, fakeValuation(s, twelve, prior, "L-1"), prior)
	r := b.Reconciliation
	if len(r.CatchUps) != 1 || r.CatchUps[0].Cause != CauseCorrection || !strings.Contains(r.CatchUps[0].Detail, "10.0000 a share then, 12.0000 now") {
		t.Fatalf("catch-ups %+v", r.CatchUps)
	}
	nearly(t, "catch-up", r.CatchUps[0].Amount, 2400.0*546/730, tolMoney)
	nearly(t, "service", line(t, r.Expense, "service"), 14400.0*92/730, tolCent)
	nearly(t, "period expense", b.Expense.Period, 2400.0*546/730+14400.0*92/730, tolMoney)
	if r.Corrected != 1 || r.Locked != 0 {
		t.Errorf("corrected %d, locked %d", r.Corrected, r.Locked)
	}
}

// Rule: a change in the forfeiture estimate is a change in estimate; the
// cost recognized on it is trued up in the period of the change (ASC
// 718-10-35-3, ASC 250-10-45-17). Worked by hand: at the prior close the
// tranche counted 1,200 × 0.9^Y of its 12,000 with Y = 184/365 (the days
// from 2026-07-01 to the vest date), 546/730 of it recognized; at 20% it
// counts 0.8^Y. The catch-up is 12,000 × 546/730 × (0.8^Y − 0.9^Y).
func TestForfeitureRateChangeCatchUp(t *testing.T) {
	s := oneOption("2026-06-30", Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.10})
	v := fakeValuation(s, ten, nil)
	prior := Filed(s, v, closeOf(t, s, v, nil))
	s = oneOption("2026-09-30", Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.10})
	s.Assumptions.Dated = []grants.AssumptionRow{{Key: "pre_vesting_forfeiture_rate", Effective: ymd("2026-07-01"), Value: 0.20}}
	b := closeOf(t, s, fakeValuation(s, ten, prior), prior)
	r := b.Reconciliation
	y := 184.0 / 365
	want := 12000.0 * 546 / 730 * (math.Pow(0.8, y) - math.Pow(0.9, y))
	if len(r.CatchUps) != 1 || r.CatchUps[0].Cause != CauseEstimateChange {
		t.Fatalf("catch-ups %+v", r.CatchUps)
	}
	nearly(t, "catch-up", r.CatchUps[0].Amount, want, tolMoney)
	nearly(t, "expense walk: estimate", line(t, r.Expense, "forfeiture_estimate"), want, tolCent)
	nearly(t, "expense walk: catch-ups", line(t, r.Expense, "catch_ups"), 0, tolCent)
}

// A prior of another company, of a later date, with another policy, or
// that filed a grant the schedule lacks, is refused (errors.Is ErrPrior)
// and the schedule is left as it was.
func TestOpenRefusals(t *testing.T) {
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}
	s := oneOption("2026-06-30", pol)
	v := fakeValuation(s, ten, nil)
	prior := Filed(s, v, closeOf(t, s, v, nil))
	cases := []struct {
		name   string
		change func(s *grants.Schedule)
		want   string
	}{
		{"company", func(s *grants.Schedule) { s.Company.Name = "Someone Else plc" }, `is of "Corrigan Tools Ltd"`},
		{"currency", func(s *grants.Schedule) { s.Company.Currency = "EUR" }, "is in GBP"},
		{"same date", func(s *grants.Schedule) { s.Company.ValuationDate = ymd("2026-06-30") }, "not before this valuation date"},
		{"earlier date", func(s *grants.Schedule) { s.Company.ValuationDate = ymd("2026-03-31") }, "not before this valuation date"},
		{"attribution", func(s *grants.Schedule) { s.Assumptions.Attribution = grants.StraightLine }, "attribution is straight-line now"},
		{"forfeitures", func(s *grants.Schedule) { s.Assumptions.Forfeitures = grants.Estimate }, "forfeitures is estimate now"},
		{"missing grant", func(s *grants.Schedule) { s.Grants[0].ID = "L-2" }, "grant L-1 filed in the prior close"},
	}
	for _, c := range cases {
		s := oneOption("2026-09-30", pol)
		c.change(s)
		start := s.Company.PeriodStart
		_, err := Open(s, prior)
		if err == nil || !errors.Is(err, ErrPrior) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want a refusal saying %q", c.name, err, c.want)
		}
		if !s.Company.PeriodStart.Equal(start) {
			t.Errorf("%s: the refused schedule's period start moved to %v", c.name, s.Company.PeriodStart)
		}
	}
}

// chainSchedule is the invented company of grantstest with more events,
// at the quarter ending on end.
func chainSchedule(end string) *grants.Schedule {
	s := grantstest.Fernhollow()
	s.Company.ValuationDate = ymd(end)
	s.Company.PeriodStart = grants.Company{}.DefaultPeriodStart(s.Company.ValuationDate)
	s.Events = append(s.Events,
		grants.Event{GrantID: "G-003", Date: ymd("2026-08-20"), Kind: grants.Cancelled, Shares: 300},
		grants.Event{GrantID: "G-004", Date: ymd("2026-02-10"), Kind: grants.Exercised, Shares: 150},
		grants.Event{GrantID: "G-002", Date: ymd("2026-05-05"), Kind: grants.Exercised, Shares: 20000})
	return s
}

// Closing quarter after quarter, each close following the last, gives the
// same figures as one close at the end over the same schedule, to the last
// bit: the expense report, the disclosures and the journal (our own rule:
// a chain of closes of an unchanged schedule restates nothing).
func TestChainEqualsOneRun(t *testing.T) {
	t.Parallel()
	var prior *Prior
	var b *Books
	for _, end := range []string{"2026-03-31", "2026-06-30", "2026-09-30"} {
		s := chainSchedule(end)
		v := grantstest.Value(t, s, prior.Locks())
		b = closeOf(t, s, v, prior)
		if r := b.Reconciliation; r != nil {
			if err := r.Check(); err != nil || len(r.CatchUps) != 0 {
				t.Fatalf("close of %s: %v, catch-ups %+v", end, err, r.CatchUps)
			}
		}
		prior = Filed(s, v, b)
	}
	s := chainSchedule("2026-09-30")
	one := closeOf(t, s, grantstest.Value(t, s, nil), nil)
	if !reflect.DeepEqual(b.Expense, one.Expense) {
		t.Errorf("expense after the chain:\n%s\none close:\n%s", b.Expense, one.Expense)
		for i := range one.Expense.Grants {
			if !reflect.DeepEqual(b.Expense.Grants[i], one.Expense.Grants[i]) {
				t.Errorf("grant %s:\nchain %+v\none   %+v", one.Expense.Grants[i].GrantID, b.Expense.Grants[i], one.Expense.Grants[i])
			}
		}
	}
	if !reflect.DeepEqual(b.Disclosure, one.Disclosure) {
		t.Errorf("disclosures after the chain %+v\none close %+v", b.Disclosure, one.Disclosure)
	}
	if !reflect.DeepEqual(b.Journal, one.Journal) {
		t.Errorf("journal after the chain %+v\none close %+v", b.Journal, one.Journal)
	}
}

// A change of assumptions between quarters keeps the chain exact: after
// an undated volatility change, the locked grants keep the values filed
// (with a warning naming them and the cells that differ), the grant with
// its own volatility is not named, and every walk adds up. A dated change
// leaves the earlier grants alone: no warning.
func TestLockedValuesSurviveChangedAssumption(t *testing.T) {
	t.Parallel()
	s := chainSchedule("2026-06-30")
	v := grantstest.Value(t, s, nil)
	prior := Filed(s, v, closeOf(t, s, v, nil))
	filed := map[string][]float64{}
	for _, gv := range v.Grants {
		for _, r := range gv.Results {
			filed[gv.Inputs.Grant.ID] = append(filed[gv.Inputs.Grant.ID], r.Value)
		}
	}

	s = chainSchedule("2026-09-30")
	s.Assumptions.Volatility = 0.65
	v = grantstest.Value(t, s, prior.Locks())
	b := closeOf(t, s, v, prior)
	for _, gv := range v.Grants {
		id := gv.Inputs.Grant.ID
		if gv.Status != pricing.Locked {
			continue
		}
		for k, r := range gv.Results {
			if r.Value != filed[id][k] {
				t.Errorf("grant %s tranche %d: %v, filed %v", id, k+1, r.Value, filed[id][k])
			}
		}
	}
	warned := strings.Join(v.Warnings, "\n")
	if !strings.Contains(warned, "grant G-001 keeps the grant-date fair value filed at the close of 2026-06-30") ||
		!strings.Contains(warned, "volatility 0.55 (default) then, 0.65 (default) now") || strings.Contains(warned, "G-004") {
		t.Errorf("warnings:\n%s", warned)
	}
	if err := b.Reconciliation.Check(); err != nil {
		t.Error(err)
	}
	s = chainSchedule("2026-09-30")
	s.Assumptions.Dated = []grants.AssumptionRow{{Key: "volatility", Effective: ymd("2026-07-01"), Value: 0.65}}
	v = grantstest.Value(t, s, prior.Locks())
	for _, w := range v.Warnings {
		if strings.Contains(w, "keeps the grant-date fair value") {
			t.Errorf("a dated change gave the warning %q", w)
		}
	}
}

// Property: over random ledgers closed three quarters in a row, with
// events recorded a quarter late, every walk adds up to the cent, each
// rounded line is within a cent of its exact figure, and the catch-ups
// add up to the catch-up line of the expense walk (an identity).
func TestReconciliationAddsUp(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	for trial := 0; trial < 40; trial++ {
		pol := Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1}
		if trial%2 == 1 {
			pol.Attribution = grants.StraightLine
		}
		if trial%3 == 2 {
			pol.Forfeitures = grants.AsOccur
		}
		base := oneOption("2026-03-31", pol)
		base.Grants = nil
		var events []grants.Event
		for i := 0; i < 6; i++ {
			gd := ymd("2024-01-01").AddDate(0, 0, rng.IntN(900))
			g := grants.Grant{ID: string(rune('A' + i)), Instrument: grants.Option, GrantDate: gd, VestStart: gd, Shares: int64(1200 * (1 + rng.IntN(4))),
				Strike: 5, ExpiryDate: gd.AddDate(10, 0, 0), VestMonths: 48, CliffMonths: 12 * rng.IntN(2), VestEvery: []int{1, 3, 12}[rng.IntN(3)]}
			base.Grants = append(base.Grants, g)
			if rng.IntN(2) == 0 {
				on := gd.AddDate(0, 0, 200+rng.IntN(700))
				kind := []grants.EventKind{grants.Forfeited, grants.Cancelled}[rng.IntN(2)]
				n := grants.VestedAt(base.Tranches(g), on)
				events = append(events, grants.Event{GrantID: g.ID, Date: on, Kind: kind, Shares: g.Shares - n})
			}
		}
		fv := func(g grants.Grant, k int) float64 { return 1 + float64(g.ID[0]-'A')/10 + float64(k)/100 }
		var prior *Prior
		for q, end := range []string{"2026-03-31", "2026-06-30", "2026-09-30"} {
			s := *base
			s.Company.ValuationDate, s.Company.PeriodStart = ymd(end), grants.Company{}.DefaultPeriodStart(ymd(end))
			// An event is recorded the quarter after the one it falls in.
			for _, e := range events {
				if !e.Date.After(ymd(end).AddDate(0, -3, 0)) || q == 2 && !e.Date.After(ymd(end)) {
					s.Events = append(s.Events, e)
				}
			}
			v := fakeValuation(&s, fv, prior)
			b := closeOf(t, &s, v, prior)
			if r := b.Reconciliation; r != nil {
				if err := r.Check(); err != nil {
					t.Fatalf("trial %d, %s: %v", trial, end, err)
				}
				var sum float64
				for _, c := range r.CatchUps {
					if c.Cause != CauseEstimateChange {
						sum += c.Amount
					}
				}
				nearly(t, "catch-ups against their line", line(t, r.Expense, "catch_ups"), sum, 0.01)
				for _, w := range []Walk{r.Unrecognized, r.Expense} {
					for _, l := range w.Moves {
						if math.Abs(l.Amount-l.Exact) > 0.0100001 {
							t.Errorf("trial %d, %s, %s: %v rounded from %v", trial, end, l.Key, l.Amount, l.Exact)
						}
					}
				}
			}
			prior = Filed(&s, v, b)
		}
	}
}
