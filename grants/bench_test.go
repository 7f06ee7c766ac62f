package grants

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"os"
	"testing"
)

// bigSchedule is an invented ledger of n option grants with four-year
// monthly vesting, a share price history and quarterly rate curves.
func bigSchedule(n int) *Schedule {
	rng := rand.New(rand.NewPCG(1, 2))
	s := smallSchedule()
	s.Grants, s.Vesting, s.Events = nil, nil, nil
	for i := 0; i < n; i++ {
		gd := d("2023-01-02").AddDate(0, 0, rng.IntN(1300))
		s.Grants = append(s.Grants, Grant{ID: fmt.Sprintf("L-%05d", i), Holder: fmt.Sprintf("H%05d", i), Instrument: Option, GrantDate: gd,
			Shares: int64(100 * (1 + rng.IntN(500))), Strike: 2.5, ExpiryDate: AddMonths(gd, 120), VestStart: gd,
			VestMonths: 48, CliffMonths: 12, VestEvery: 1})
	}
	s.SharePrices = []PricePoint{{Date: d("2022-12-31"), Price: 2.0}, {Date: d("2023-12-31"), Price: 2.4}, {Date: d("2024-12-31"), Price: 2.9}, {Date: d("2025-12-31"), Price: 3.3}}
	s.Rates = nil
	for q := d("2022-12-31"); q.Before(d("2026-10-01")); q = AddMonths(q.AddDate(0, 0, 1), 3).AddDate(0, 0, -1) {
		for _, tn := range []float64{0.5, 1, 2, 5, 10} {
			s.Rates = append(s.Rates, RatePoint{CurveDate: q, TenorYears: tn, Rate: 0.04, Compounding: "continuous"})
		}
	}
	return s
}

// BenchmarkRead10000 reads a 10,000-grant workbook and CSV folder: parse,
// validate (which expands every grant into its tranches) and nothing else.
func BenchmarkRead10000(b *testing.B) {
	s := bigSchedule(10000)
	var buf bytes.Buffer
	if err := WriteXLSX(&buf, s); err != nil {
		b.Fatal(err)
	}
	data := buf.Bytes()
	dir := b.TempDir()
	if err := WriteCSVDir(dir, s); err != nil {
		b.Fatal(err)
	}
	var sink int
	b.Run("xlsx", func(b *testing.B) {
		b.ReportAllocs()
		b.SetBytes(int64(len(data)))
		for b.Loop() {
			got, rep, err := ReadXLSX(bytes.NewReader(data), int64(len(data)))
			if err != nil || !rep.OK() {
				b.Fatalf("%v %v", err, rep.Err())
			}
			sink += len(got.Grants)
		}
	})
	b.Run("csv", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			got, rep, err := ReadCSVDir(os.DirFS(dir))
			if err != nil || !rep.OK() {
				b.Fatalf("%v %v", err, rep.Err())
			}
			sink += len(got.Grants)
		}
	})
	b.Run("tranches", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			for _, g := range s.Grants {
				sink += len(s.Tranches(g))
			}
		}
	})
	if sink == 0 {
		b.Fatal("nothing read")
	}
}

// BenchmarkTransfersOf looks up every grant's Transfers rows in a
// 10,000-grant ledger with a transfer for one grant in 25 (as bench/ledger
// writes), through the index and by scanning the sheet for each grant as
// an unindexed schedule does.
func BenchmarkTransfersOf(b *testing.B) {
	s := bigSchedule(10000)
	for i, g := range s.Grants {
		if i%25 == 0 {
			s.Transfers = append(s.Transfers, Transfer{GrantID: g.ID, Date: g.GrantDate.AddDate(0, 6, 0), CostCenter: "S&M"})
		}
	}
	unindexed := *s
	unindexed.idx = nil
	s.Reindex()
	var sink int
	for _, c := range []struct {
		name string
		s    *Schedule
	}{{"indexed", s}, {"scanned", &unindexed}} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				for _, g := range c.s.Grants {
					sink += len(c.s.TransfersOf(g.ID))
				}
			}
		})
	}
	if sink == 0 {
		b.Fatal("no transfers found")
	}
}

// BenchmarkValueInputs10000 gathers the valuation inputs of a 10,000-grant
// ledger (tranches, terms, market, curve and provenance of each grant, and
// whether the lattice can value it), as the value command does once the
// schedule is read.
func BenchmarkValueInputs10000(b *testing.B) {
	s := bigSchedule(10000)
	s.Reindex()
	b.ReportAllocs()
	var sink int
	for b.Loop() {
		ins, errs, _ := s.ValueInputs()
		if len(errs) > 0 {
			b.Fatal(errs[0])
		}
		sink += len(ins)
	}
	if sink == 0 {
		b.Fatal("no inputs")
	}
}
