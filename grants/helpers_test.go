package grants

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

func d(s string) time.Time {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		panic(err)
	}
	return t
}

func fp(f float64) *float64 { return &f }

// smallSchedule is an invented company with one of each kind of award.
func smallSchedule() *Schedule {
	return &Schedule{
		Company: Company{Name: "Fernhollow Devices, Inc.", ValuationDate: d("2026-09-30"), PeriodStart: d("2026-07-01"), Currency: "USD", SharesOutstanding: 20_000_000},
		Assumptions: Assumptions{Volatility: 0.55, DividendYield: 0, ExerciseMultiple: 2.5, PostVestingExitRate: 0.1, PreVestingForfeitureRate: 0.08,
			Attribution: Graded, Forfeitures: Estimate, Sources: map[string]string{"volatility": "median of peers' daily volatility"}},
		Grants: []Grant{
			{ID: "G-001", Holder: "E01", Instrument: Option, GrantDate: d("2024-01-31"), Shares: 4800, Strike: 2.5, ExpiryDate: d("2034-01-31"),
				VestStart: d("2024-01-31"), VestMonths: 48, CliffMonths: 12, VestEvery: 1, Purpose: Compensation},
			{ID: "G-002", Instrument: Warrant, GrantDate: d("2025-03-15"), Shares: 100000, Strike: 4, ExpiryDate: d("2030-03-15"),
				VestStart: d("2025-03-15"), VestEvery: 1, Classification: Liability, ExerciseStyle: American, Purpose: Compensation},
			{ID: "G-003", Instrument: RSU, GrantDate: d("2025-06-30"), Shares: 1000, VestStart: d("2025-06-30"), VestMonths: 36, VestEvery: 12, SharePrice: fp(3.1), Purpose: Compensation},
			{ID: "G-004", Instrument: Option, GrantDate: d("2025-02-01"), Shares: 1000, Strike: 3, ExpiryDate: d("2035-02-01"), VestStart: d("2025-02-01"), VestEvery: 1, Volatility: fp(0.6), Purpose: Compensation},
		},
		Vesting:     []VestRow{{GrantID: "G-004", VestDate: d("2025-08-01"), Shares: 400}, {GrantID: "G-004", VestDate: d("2026-02-01"), Shares: 600}},
		SharePrices: []PricePoint{{Date: d("2023-12-31"), Price: 2.0}, {Date: d("2024-12-31"), Price: 3.0}, {Date: d("2025-12-31"), Price: 4.5}},
		Rates: []RatePoint{
			{CurveDate: d("2023-12-31"), TenorYears: 1, Rate: 0.045, Compounding: "continuous"},
			{CurveDate: d("2023-12-31"), TenorYears: 10, Rate: 0.04, Compounding: "continuous"},
			{CurveDate: d("2024-12-31"), TenorYears: 2, Rate: 0.042, Compounding: "annual"},
			{CurveDate: d("2026-06-30"), TenorYears: 5, Rate: 0.039, Compounding: "semiannual"},
		},
		Events: []Event{{GrantID: "G-001", Date: d("2026-04-15"), Kind: Forfeited, Shares: 2200}, {GrantID: "G-001", Date: d("2026-05-01"), Kind: Exercised, Shares: 1000}},
	}
}

// writeBoth writes s as an .xlsx and as a CSV folder under t's temp dir.
func writeBoth(t *testing.T, s *Schedule) (xlsx, dir string) {
	t.Helper()
	tmp := t.TempDir()
	var buf bytes.Buffer
	if err := WriteXLSX(&buf, s); err != nil {
		t.Fatal(err)
	}
	xlsx = filepath.Join(tmp, "s.xlsx")
	if err := os.WriteFile(xlsx, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	dir = filepath.Join(tmp, "csv")
	if err := os.Mkdir(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := WriteCSVDir(dir, s); err != nil {
		t.Fatal(err)
	}
	return xlsx, dir
}

func problems(r *Report) string {
	var b strings.Builder
	for _, e := range r.Errors {
		b.WriteString("error: " + e.Error() + "\n")
	}
	for _, w := range r.Warnings {
		b.WriteString("warning: " + w.Error() + "\n")
	}
	return b.String()
}
