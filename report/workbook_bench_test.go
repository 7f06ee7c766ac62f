package report

import (
	"io"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"
)

// countWriter counts the bytes written to it.
type countWriter struct{ n int64 }

func (c *countWriter) Write(p []byte) (int, error) { c.n += int64(len(p)); return len(p), nil }

// variedModel is bigModel with the figures of every grant and tranche
// drawn at random (seeded), rounded as the valuation's are: rows alike
// in shape but not in digits, which compress as a real ledger's do
// (bigModel's copies compress ten times better). Demo data.
func variedModel(n int) *Model {
	m := bigModel(n)
	rng := rand.New(rand.NewPCG(15, 1))
	round := func(v float64, d int) float64 { p := math.Pow10(d); return math.Round(v*p) / p }
	for i := range m.Grants {
		g := &m.Grants[i]
		g.SharePrice = round(0.5+3*rng.Float64(), 6)
		g.Strike = round(g.SharePrice*(0.8+0.4*rng.Float64()), 4)
		g.Volatility = round(0.3+0.4*rng.Float64(), 6)
		g.Shares = int64(1000 + rng.IntN(50000))
		for j := range g.Tranches {
			tr := &g.Tranches[j]
			tr.Shares = g.Shares / int64(len(g.Tranches))
			tr.VestDate = DateOf(tr.VestDate.Time().AddDate(0, j, 0))
			tr.YearsToVest = round(1+float64(j)/12+rng.Float64()/365, 6)
			tr.YearsToExpiry = round(10-rng.Float64()/10, 6)
			tr.RiskFreeRate = round(0.035+0.01*rng.Float64(), 8)
			tr.FairValuePerShare = round(g.SharePrice*(0.3+0.2*rng.Float64()), 6)
			tr.ErrorEstimate = round(0.0001*rng.Float64(), 8)
			tr.ExpectedTermYears = round(4+3*rng.Float64(), 6)
			tr.SimplifiedTerm = round((tr.YearsToVest+tr.YearsToExpiry)/2, 6)
			tr.SimplifiedRate = round(0.035+0.01*rng.Float64(), 8)
			tr.BSMSimplifiedValue = round(tr.FairValuePerShare*(0.95+0.1*rng.Float64()), 6)
			tr.FairValueTotal = round(tr.FairValuePerShare*float64(tr.Shares), 2)
		}
	}
	Summarize(m)
	return m
}

// The workbook of a 10,000-grant ledger (variedModel) with its CPU time
// per workbook (all threads, the compressor's and the collector's
// included: steadier than the wall clock on a shared machine, and what
// counts when every core is busy) and its size; e.g. go test ./report
// -run - -bench WorkbookCPU -benchtime 1x -count 5.
func BenchmarkWorkbookCPU(b *testing.B) {
	m := variedModel(10000)
	var size countWriter
	b.ReportAllocs()
	b.ResetTimer()
	cpu := cpuTime()
	for b.Loop() {
		size.n = 0
		if err := WriteWorkbook(&size, m); err != nil {
			b.Fatal(err)
		}
	}
	if d := (cpuTime() - cpu) / time.Duration(b.N); d > 0 {
		b.ReportMetric(float64(d.Microseconds())/1e3, "cpu-ms/op")
	}
	b.ReportMetric(float64(size.n)/1e6, "MB")
}

var _ io.Writer = (*countWriter)(nil)

// The Tranches rows of variedModel(10000) written apart, without the
// compressor: the cost of writing the rows themselves.
func BenchmarkFastTrancheRowsVaried(b *testing.B) {
	m := variedModel(10000)
	f := excelize.NewFile()
	defer f.Close()
	bk := &Book{f: f}
	if err := bk.styles(m.Company.Currency); err != nil {
		b.Fatal(err)
	}
	var size countWriter
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		size.n = 0
		if err := trancheRows(bk, m, 0, m.Totals.Tranches)(&size); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(size.n)/1e6, "MB")
}
