package report

import (
	"bytes"
	"fmt"
	"math"
	"path/filepath"
	"reflect"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
)

// Build lays a valuation out without changing a number: the Model's
// tranches, totals, sensitivity and checks are the valuation's own.
func TestBuildMapsTheValuation(t *testing.T) {
	s, _, err := grants.ReadFile(filepath.Join("..", "sample", "tarnwick.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	v := grantstest.Value(t, s, nil)
	b, err := accounting.Close(s, v, nil)
	if err != nil {
		t.Fatal(err)
	}
	run := Run{Tool: Tool{Name: "grantworth", Version: "test"}, Input: Input{Path: "sample/tarnwick.xlsx", SHA256: "00"}, Warnings: []string{"first warning"}}
	// Build takes v over and drops each grant's tranche results once laid
	// out: keep what this test compares.
	valued := append([]pricing.GrantValue(nil), v.Grants...)
	m, err := Build(s, v, b, run)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Grants) != len(valued) {
		t.Fatalf("%d grants in the Model, %d valued", len(m.Grants), len(valued))
	}
	for i := range v.Grants {
		if gv := &v.Grants[i]; gv.Results != nil || gv.BSM != nil || gv.Inputs.Tranches != nil {
			t.Errorf("grant %s: Build kept the valuation's tranche detail after laying it out", gv.Inputs.Grant.ID)
		}
	}
	for _, ge := range b.Expense.Grants {
		if ge.Tranches != nil {
			t.Errorf("grant %s: Build kept the books' tranche expense after laying it out", ge.GrantID)
		}
	}
	for i, g := range m.Grants {
		gv := valued[i]
		if g.ID != gv.Inputs.Grant.ID || len(g.Tranches) != len(gv.Results) {
			t.Fatalf("grant %d: %s with %d tranches, valued %s with %d", i, g.ID, len(g.Tranches), gv.Inputs.Grant.ID, len(gv.Results))
		}
		for k, tr := range g.Tranches {
			if tr.FairValuePerShare != gv.Results[k].Value || tr.BSMSimplifiedValue != gv.BSM[k].Value || tr.ErrorEstimate != gv.Results[k].ErrorEstimate {
				t.Errorf("grant %s tranche %d: model %+v, valued %+v, BSM %+v", g.ID, k+1, tr, gv.Results[k], gv.BSM[k])
			}
		}
	}
	// The sample's two financing warrants are kept apart from the
	// share-based awards' total; together they are everything valued.
	if m.FinancingTotals.Grants != 2 || math.Abs(m.Totals.FairValueTotal+m.FinancingTotals.FairValueTotal-v.FairValueTotal) > 1e-6 {
		t.Errorf("share-based total %v + financing %v (%d grants), valuation total %v", m.Totals.FairValueTotal,
			m.FinancingTotals.FairValueTotal, m.FinancingTotals.Grants, v.FairValueTotal)
	}
	if len(m.Sensitivity) != len(v.Sensitivity) {
		t.Fatalf("%d sensitivity cases, %d run", len(m.Sensitivity), len(v.Sensitivity))
	}
	for i, c := range m.Sensitivity {
		for j, p := range c.Points {
			if q := v.Sensitivity[i].Points[j]; p.FairValueTotal != q.FairValueTotal || p.Shift != q.Shift {
				t.Errorf("sensitivity %s point %d: model %+v, run %+v", c.Input, j, p, q)
			}
		}
	}
	if !strings.HasPrefix(m.Settings.Sensitivities, "Each case revalues every grant") {
		t.Errorf("settings.sensitivities = %q for a ledger revalued whole", m.Settings.Sensitivities)
	}
	if len(m.CrossChecks) != len(v.MonteCarlo) || !strings.Contains(m.Settings.MonteCarlo, count(pricing.MonteCarloPaths)+" paths per tranche") {
		t.Errorf("cross checks %+v, settings %q, from %+v", m.CrossChecks, m.Settings.MonteCarlo, v.MonteCarlo)
	}
	for j, x := range m.CrossChecks {
		c := v.MonteCarlo[j]
		if x.GrantID != c.GrantID || x.TrancheIndex != c.TrancheIndex || x.Value != c.Result.Value || x.Lattice != c.Lattice ||
			x.LatticeError != c.LatticeError || x.StdErr != c.Result.ErrorEstimate || x.Z != c.Z || x.Seed != c.Seed {
			t.Errorf("cross check %d: model %+v, run %+v", j, x, c)
		}
	}
	if m.Expense == nil {
		t.Error("no expense attribution")
	}
	if len(m.Warnings) == 0 || m.Warnings[0] != "first warning" {
		t.Errorf("warnings %q: the run's come first", m.Warnings)
	}
}

// What the value command lets go of before Build (the tranches' terms,
// pricing.Valuation.ReleaseTerms) changes nothing in the Model, and Build
// sizes its assumptions exactly (grantAssumptionCount), so that a large
// ledger's are not copied as they grow. (Identities of the code.)
func TestBuildAfterReleaseTerms(t *testing.T) {
	s, _, err := grants.ReadFile(filepath.Join("..", "sample", "tarnwick.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	run := Run{Tool: Tool{Name: "grantworth", Version: "test"}, Input: Input{Path: "sample/tarnwick.xlsx", SHA256: "00"}}
	build := func(release bool) *Model {
		v := grantstest.Value(t, s, nil)
		if release {
			v.ReleaseTerms()
		}
		b, err := accounting.Close(s, v, nil)
		if err != nil {
			t.Fatal(err)
		}
		m, err := Build(s, v, b, run)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	want, got := build(false), build(true)
	if len(got.Assumptions) != cap(got.Assumptions) {
		t.Errorf("%d assumptions in room for %d", len(got.Assumptions), cap(got.Assumptions))
	}
	var a, b strings.Builder
	if err := WriteJSON(&a, want); err != nil {
		t.Fatal(err)
	}
	if err := WriteJSON(&b, got); err != nil {
		t.Fatal(err)
	}
	if a.String() != b.String() {
		t.Error("the Model differs once the tranches' terms are let go before Build")
	}
}

// manyGrants is grantstest's company (an option with a forfeiture and an
// exercise, a liability-classified warrant, an RSU, a custom vesting) with
// n four-year options more vesting monthly after a one-year cliff (37
// tranches, as in the load generator's ledgers), in four cost centres,
// one in ten with a forfeiture and one in 25 moved to another centre,
// written to a workbook and read back so that every input carries its
// cell. The grant dates and strikes repeat every 120 grants, so that the
// valuation values few distinct grants: Build, not the lattice, is what
// its users time. Demo data.
func manyGrants(tb testing.TB, n int) *grants.Schedule {
	tb.Helper()
	d := grantstest.Day
	s := grantstest.Fernhollow()
	centres := []string{"R&D", "S&M", "G&A", "COGS"}
	for i := range n {
		id := fmt.Sprintf("L-%05d", i)
		g := d("2024-01-10").AddDate(0, 0, 8*(i%120))
		s.Grants = append(s.Grants, grants.Grant{ID: id, Holder: fmt.Sprintf("H%05d", i), Instrument: grants.Option, GrantDate: g,
			Shares: int64(1200 + 48*(i%5)), Strike: 2 + float64(i%120%7)/4, ExpiryDate: g.AddDate(10, 0, 0), VestStart: g,
			VestMonths: 48, CliffMonths: 12, VestEvery: 1, CostCenter: centres[i%4], Purpose: grants.Compensation})
		if f := g.AddDate(1, 2, 0); i%10 == 3 && f.Before(s.Company.ValuationDate) {
			s.Events = append(s.Events, grants.Event{GrantID: id, Date: f, Kind: grants.Forfeited, Shares: 100})
		}
		if t := d("2026-05-01"); i%25 == 7 && g.Before(t) {
			s.Transfers = append(s.Transfers, grants.Transfer{GrantID: id, Date: t, CostCenter: centres[(i+1)%4]})
		}
	}
	var buf bytes.Buffer
	if err := grants.WriteXLSX(&buf, s); err != nil {
		tb.Fatal(err)
	}
	read, rep, err := grants.ReadXLSX(bytes.NewReader(buf.Bytes()), int64(buf.Len()))
	if err != nil {
		tb.Fatal(err)
	}
	if !rep.OK() {
		tb.Fatalf("%d errors, the first %v", rep.ErrorCount(), rep.Errors[0])
	}
	return read
}

// takeOver is a valuation and books that Build may take over (it drops
// each grant's tranche detail as it lays it out) without touching v and b:
// new slices of their grants.
func takeOver(v *pricing.Valuation, b *accounting.Books) (*pricing.Valuation, *accounting.Books) {
	v2, b2 := *v, *b
	v2.Grants = append([]pricing.GrantValue(nil), v.Grants...)
	if b.Expense != nil {
		e := *b.Expense
		e.Grants = append([]accounting.GrantExpense(nil), e.Grants...)
		b2.Expense = &e
	}
	return &v2, &b2
}

// Build lays a ledger out the same, to the bit and in the same order, on
// one core in one plain loop and on several in chunks of any size: the
// sample (every instrument, vesting conditions of each kind, financing
// warrants, a modification, several cost centres) at its first close,
// and grantstest's company with 60 options more at the close after its
// first (a reconciliation, forfeitures, transfers between cost centres).
// Our own rule: each grant is laid out on its own, and whatever adds
// grants up is done in grant order.
//
// Not parallel: it sets GOMAXPROCS and the package's buildChunk and
// buildMinParallel.
func TestBuildOnAnyCores(t *testing.T) {
	sample, _, err := grants.ReadFile(filepath.Join("..", "sample", "tarnwick.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	v, err := pricing.Value(sample, mustInputs(t, sample), pricing.Options{SimTarget: 4})
	if err != nil {
		t.Fatal(err)
	}
	b, err := accounting.Close(sample, v, nil)
	if err != nil {
		t.Fatal(err)
	}

	s := manyGrants(t, 60)
	v1 := grantstest.Value(t, s, nil)
	b1, err := accounting.Close(s, v1, nil)
	if err != nil {
		t.Fatal(err)
	}
	prior := accounting.Filed(s, v1, b1)
	s.Company.ValuationDate = grantstest.Day("2026-12-31")
	s.Company.PeriodStart = grants.Company{}.DefaultPeriodStart(s.Company.ValuationDate)
	if _, err := accounting.Open(s, prior); err != nil {
		t.Fatal(err)
	}
	v2 := grantstest.Value(t, s, prior.Locks())
	b2, err := accounting.Close(s, v2, prior)
	if err != nil {
		t.Fatal(err)
	}

	for _, c := range []struct {
		name string
		s    *grants.Schedule
		v    *pricing.Valuation
		b    *accounting.Books
	}{{"sample", sample, v, b}, {"second close", s, v2, b2}} {
		want := buildOn(t, 1, 0, c.s, c.v, c.b)
		conditioned, parts := 0, 0
		for _, g := range want.Grants {
			if g.Condition != nil {
				conditioned++
			}
		}
		for _, cc := range want.Expense.ByCostCenter {
			parts += len(cc.Parts)
		}
		if len(want.Grants) < 20 || parts < len(want.Grants)/2 || (c.name == "sample") != (conditioned > 0 && len(want.Expense.Financing) > 0 && len(want.Modifications) > 0) ||
			(c.name == "second close") != (want.Reconciliation != nil) {
			t.Fatalf("%s: %d grants, %d conditioned, %d cost centre parts, %d financing warrants, %d modifications, reconciliation %v: not the ledger this test means",
				c.name, len(want.Grants), conditioned, parts, len(want.Expense.Financing), len(want.Modifications), want.Reconciliation != nil)
		}
		for _, w := range []struct{ procs, chunk int }{{1, 3}, {2, 1}, {4, 3}, {8, 7}} {
			if got := buildOn(t, w.procs, w.chunk, c.s, c.v, c.b); !reflect.DeepEqual(got, want) {
				var a, b strings.Builder
				_, _ = WriteJSON(&a, want), WriteJSON(&b, got)
				t.Errorf("%s: GOMAXPROCS %d, chunks of %d grants: the Model differs from one core's (valuation.json the same: %v)",
					c.name, w.procs, w.chunk, a.String() == b.String())
			}
		}
	}
}

// buildOn is Build of s, v and b (taken over through takeOver) on procs
// cores in chunks of chunk grants, or with chunk 0 in one plain loop.
func buildOn(t *testing.T, procs, chunk int, s *grants.Schedule, v *pricing.Valuation, b *accounting.Books) *Model {
	t.Helper()
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
	c, mp := buildChunk, buildMinParallel
	defer func() { buildChunk, buildMinParallel = c, mp }()
	buildChunk, buildMinParallel = chunk, 0
	if chunk == 0 {
		buildMinParallel = math.MaxInt
	}
	v, b = takeOver(v, b)
	m, err := Build(s, v, b, Run{Tool: Tool{Name: "grantworth", Version: "test"}, Input: Input{Path: "ledger.xlsx"}, Warnings: []string{"a warning"}})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// mustInputs are the valuation inputs of s; a problem fails t.
func mustInputs(t *testing.T, s *grants.Schedule) []grants.Inputs {
	t.Helper()
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	return ins
}

// builds are manyGrants(n) valued and booked, by n, made once per run of
// the benchmarks: Build takes them over through takeOver only.
var builds sync.Map

type buildInput struct {
	s *grants.Schedule
	v *pricing.Valuation
	b *accounting.Books
}

// Laying out the valuation and the books of a ledger of 10,000 grants
// (370,000 tranches) into the Model, as the value command does after the
// close, and of 300 (about the fewest Build shares among the cores); the
// ledger is valued and booked once, outside the timing.
func BenchmarkBuild(b *testing.B) {
	for _, n := range []int{300, 10000} {
		b.Run(fmt.Sprintf("grants=%d", n), func(b *testing.B) {
			in, ok := builds.Load(n)
			if !ok {
				s := manyGrants(b, n)
				v := grantstest.Value(b, s, nil)
				v.ReleaseTerms()
				books, err := accounting.Close(s, v, nil)
				if err != nil {
					b.Fatal(err)
				}
				in, _ = builds.LoadOrStore(n, buildInput{s, v, books})
			}
			s, v, books := in.(buildInput).s, in.(buildInput).v, in.(buildInput).b
			run := Run{Tool: Tool{Name: "grantworth", Version: "bench"}}
			b.ReportAllocs()
			b.ResetTimer()
			var cpu time.Duration // the process's, all threads and the collector's included
			for i := 0; i < b.N; i++ {
				b.StopTimer()
				v2, b2 := takeOver(v, books)
				b.StartTimer()
				c := cpuTime()
				if _, err := Build(s, v2, b2, run); err != nil {
					b.Fatal(err)
				}
				cpu += cpuTime() - c
			}
			if cpu > 0 {
				b.ReportMetric(float64(cpu.Microseconds())/1e3/float64(b.N), "cpu-ms/op")
			}
		})
	}
}
