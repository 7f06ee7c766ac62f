package pricing_test

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"slices"
	"testing"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
	"grantworth/report"
)

// A close and a rerun that reuses the prior close's values are the same
// to the bit on one core as on four: the keys, the locks kept, the
// comparisons, the Monte Carlo checks and the inputs are gathered in
// chunks of grants on all cores, each grant's alone.
func TestValueSameOnAnyCores(t *testing.T) {
	if testing.Short() {
		t.Skip("values a ledger of 324 grants four times")
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	dir := t.TempDir() // one prior folder: valuation.json names it
	run := func(procs int, data []byte) (*pricing.Valuation, []byte) {
		runtime.GOMAXPROCS(procs)
		s := studiesLedger()
		opts := pricing.Options{}
		if data == nil {
			return closeOf(t, s, nil, opts)
		}
		s.Company.ValuationDate = grantstest.Day("2026-12-31")
		s.Company.PeriodStart = grantstest.Day("2026-10-01")
		if err := os.WriteFile(filepath.Join(dir, "valuation.json"), data, 0o644); err != nil {
			t.Fatal(err)
		}
		prior, err := report.ReadPrior(dir)
		if err != nil {
			t.Fatal(err)
		}
		opts.Reuse, opts.Studies = true, &prior.Studies
		opts.Correct = []string{"X-007"}
		return closeOf(t, s, prior, opts)
	}
	one, first := run(1, nil)
	four, first4 := run(4, nil)
	if !bytes.Equal(first, first4) || !reflect.DeepEqual(one.Grants, four.Grants) {
		t.Fatal("a first close on four cores differs from one on one core")
	}
	again, rerun := run(1, first)
	again4, rerun4 := run(4, first)
	reused := 0
	for _, gv := range again.Grants {
		if gv.Reused {
			reused++
		}
	}
	if reused < len(again.Grants)-2 {
		t.Fatalf("the rerun reused %d of %d grants: it should reuse all but the corrected one", reused, len(again.Grants))
	}
	if !bytes.Equal(rerun, rerun4) {
		t.Fatal("a rerun's valuation.json on four cores differs from one on one core")
	}
	for i := range again.Grants {
		if a, b := &again.Grants[i], &again4.Grants[i]; !reflect.DeepEqual(a, b) {
			t.Fatalf("a rerun on four cores differs from one on one core, first at grant %s:\n%+v\n%+v", a.Inputs.Grant.ID, *a, *b)
		}
	}
}

// BenchmarkValueReuse values a ledger of 2,000 options again after a
// prior close of the same inputs (a rerun): every grant reused, its
// filed values kept, the checks taken from the prior close. The inputs
// are gathered and the prior close read once, outside the loop.
func BenchmarkValueReuse(b *testing.B) {
	s := grantstest.Fernhollow()
	s.Grants = slices.DeleteFunc(s.Grants, func(g grants.Grant) bool { return g.Classification == grants.Liability })
	for i := range 2000 {
		gd := grantstest.Day("2024-02-01").AddDate(0, i%30, i%27)
		s.Grants = append(s.Grants, grants.Grant{ID: fmt.Sprintf("X-%04d", i), Instrument: grants.Option, GrantDate: gd, Shares: int64(1000 + 37*i),
			Strike: 2 + 0.013*float64(i%300), ExpiryDate: gd.AddDate(10, 0, 0), VestStart: gd, VestMonths: 48, CliffMonths: 12, VestEvery: 1, Purpose: grants.Compensation})
	}
	_, data := closeOf(b, s, nil, pricing.Options{})
	prior := readBack(b, data)
	s.Company.ValuationDate = grantstest.Day("2026-12-31")
	s.Company.PeriodStart = grantstest.Day("2026-10-01")
	if _, err := accounting.Open(s, prior); err != nil {
		b.Fatal(err)
	}
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		b.Fatal(errs[0])
	}
	opts := pricing.Options{Locks: prior.Locks(), Reuse: true, Studies: &prior.Studies}
	b.ReportAllocs()
	for b.Loop() {
		v, err := pricing.Value(s, ins, opts)
		if err != nil {
			b.Fatal(err)
		}
		if !v.Grants[len(v.Grants)-1].Reused {
			b.Fatal("the last grant was valued again")
		}
	}
}
