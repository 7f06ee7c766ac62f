package report

import (
	"bytes"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
	"time"
)

// ledgerModel is an invented ledger of n option grants, 37 monthly
// tranches each (a four-year grant with a one-year cliff), with the
// expense attribution a later close reads and six inputs a grant: the
// shape of a large ledger's valuation.json. Its numbers are drawn from a
// seeded source, so that they take the full 15 to 17 digits a measured
// value takes (demo data, not valuation).
func ledgerModel(n int) *Model {
	m := fixture()
	m.SchemaVersion = SchemaVersion
	rng := rand.New(rand.NewPCG(1, uint64(n)))
	m.Grants = make([]Grant, n)
	m.Assumptions = nil
	m.Modifications = nil
	e := &Expense{ExpenseDetail: &ExpenseDetail{PeriodStart: m.PeriodStart, PeriodEnd: m.ValuationDate, Attribution: "graded",
		Forfeitures: "estimate", PreVestingForfeitureRate: 0.08, Framework: "asc718"}}
	e.ByGrant = make([]ExpenseGrant, n)
	for i := range m.Grants {
		g := Grant{ID: fmt.Sprintf("L-%06d", i+1), Holder: fmt.Sprintf("E%06d", i), Instrument: Option, Purpose: "compensation",
			GrantDate: day("2024-12-14"), MeasurementDate: day("2024-12-14"), ExpiryDate: day("2034-12-14"), Shares: 26200,
			Strike: 1 + rng.Float64(), SharePrice: 1 + rng.Float64(), Volatility: 0.3 + rng.Float64()/2, RiskFreeRate: 0.04 + rng.Float64()/100,
			ExerciseMultiple: 2.5, PostVestingExitRate: 0.1, Method: "lattice", ValueStatus: "measured", ValuationKey: fmt.Sprintf("%032x", rng.Uint64())}
		eg := ExpenseGrant{GrantID: g.ID, Holder: g.Holder, Instrument: Option, GrantDate: g.GrantDate, ServiceStart: g.GrantDate,
			ServiceEnd: day("2028-12-14"), Cost: 1e4 * rng.Float64(), CumulativeOpen: 1e4 * rng.Float64(), Amount: 1e3 * rng.Float64(),
			Cumulative: 1e4 * rng.Float64(), Unrecognized: 1e3 * rng.Float64(), RemainingYears: 2 * rng.Float64(), Outstanding: g.Shares,
			CostCenter: "R&D", ByCostCenter: []CostCenterPart{{CostCenter: "R&D", Amount: 1e3 * rng.Float64(), Cumulative: 1e4 * rng.Float64()}}}
		for k := 1; k <= 37; k++ {
			fv := rng.Float64()
			t := Tranche{Index: k, VestDate: day("2025-12-14"), Shares: 545, YearsToExpiry: 10.005479452054795, YearsToVest: float64(k) / 12,
				RiskFreeRate: g.RiskFreeRate, FairValuePerShare: fv, ErrorEstimate: rng.Float64() / 1e4, ExpectedTermYears: 5 + rng.Float64(),
				Steps: 332, BSMSimplifiedValue: 1 + rng.Float64(), SimplifiedTerm: 5 + rng.Float64(), SimplifiedRate: 0.04 + rng.Float64()/100,
				FairValueTotal: 545 * fv}
			g.Tranches = append(g.Tranches, t)
			eg.Tranches = append(eg.Tranches, ExpenseTranche{Index: k, VestDate: t.VestDate, Shares: 545, SharesCounted: 500 + 45*rng.Float64(),
				FairValuePerShare: fv, GrantDateFairValuePerShare: fv, ExpectedShare: rng.Float64(), Cost: 545 * fv, CumulativeOpen: 400 * fv,
				Amount: 50 * fv, Cumulative: 450 * fv, Unrecognized: 95 * fv, RemainingYears: rng.Float64()})
		}
		m.Grants[i] = g
		e.ByGrant[i] = eg
		for _, name := range []string{"share_price", "volatility", "dividend_yield", "exercise_multiple", "post_vesting_exit_rate", "risk_free_rate"} {
			m.Assumptions = append(m.Assumptions, Assumption{GrantID: g.ID, Name: name, Kind: KindPercent, Value: rng.Float64(), Text: "0.5", Ref: "Assumptions!B2", Source: "peer median"})
		}
	}
	m.Expense = e
	Summarize(m)
	return m
}

// benchLedgerGrants is the ledger the reading and writing benchmarks use:
// 2,000 grants, a file of about 75 MB (a fifth of a 10,000-grant one).
const benchLedgerGrants = 2000

// Writing valuation.json of a large ledger: go test ./report -run - -bench
// 'WriteJSON|ReadPrior' -benchmem. MB/s are of the file written.
func BenchmarkWriteJSON(b *testing.B) {
	m, file := ledgerFile(b)
	benchLoop(b, len(file), func() error { return WriteJSON(io.Discard, m) })
}

// Reading a large ledger's valuation.json back as a prior close. MB/s are
// of the file read.
func BenchmarkReadPrior(b *testing.B) {
	_, file := ledgerFile(b)
	path := filepath.Join(b.TempDir(), "valuation.json")
	if err := os.WriteFile(path, file, 0o644); err != nil {
		b.Fatal(err)
	}
	benchLoop(b, len(file), func() error {
		_, err := ReadPrior(path)
		return err
	})
}

// ledgerFile is the benchmarks' ledger and its valuation.json.
func ledgerFile(b *testing.B) (*Model, []byte) {
	m := ledgerModel(benchLedgerGrants)
	var buf bytes.Buffer
	if err := WriteJSON(&buf, m); err != nil {
		b.Fatal(err)
	}
	return m, buf.Bytes()
}

// benchLoop runs op b.N times over a file of size bytes. Beside the
// wall-clock figures it reports the process's CPU time per operation (all
// threads, the collector's included) and the megabytes per CPU second:
// steadier on a shared machine.
func benchLoop(b *testing.B, size int, op func() error) {
	b.SetBytes(int64(size))
	b.ReportAllocs()
	b.ResetTimer()
	cpu := cpuTime()
	for b.Loop() {
		if err := op(); err != nil {
			b.Fatal(err)
		}
	}
	if d := (cpuTime() - cpu) / time.Duration(b.N); d > 0 {
		b.ReportMetric(float64(d.Microseconds())/1e3, "cpu-ms/op")
		b.ReportMetric(float64(size)/1e6/d.Seconds(), "cpu-MB/s")
	}
}
