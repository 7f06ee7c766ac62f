package grants

import (
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"
)

// The demo company (sample/, written by go run ./sample/gen) reads the same
// from its workbook and its CSV folder, with no error; its only warnings
// are of its share valuations, made twice a year, that are more than a
// quarter old at some grant dates.
func TestSampleBothFormsAgree(t *testing.T) {
	sx, rx, err := ReadFile(filepath.Join("..", "sample", "tarnwick.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	sc, rc, err := ReadFile(filepath.Join("..", "sample", "tarnwick-csv"))
	if err != nil {
		t.Fatal(err)
	}
	aged := func(r *Report) bool {
		for _, w := range r.Warnings {
			if w.Sheet != SheetSharePrices || !strings.Contains(w.Msg, "more than 3 months old at the measurement dates of") {
				return false
			}
		}
		return len(r.Warnings) == 5
	}
	if len(rx.Errors)+len(rc.Errors) != 0 || !aged(rx) || !aged(rc) {
		t.Fatalf("sample problems:\nxlsx:\n%scsv:\n%s", problems(rx), problems(rc))
	}
	// The price files a relative TSR names are written relative to each
	// form's folder: the same files by other paths.
	for _, s := range []*Schedule{sx, sc} {
		for i := range s.Conditions {
			if k := &s.Conditions[i]; k.Own != nil {
				k.OwnPrices, k.Own.File = filepath.Base(k.OwnPrices), filepath.Base(k.Own.File)
			}
		}
		for i := range s.Peers {
			p := &s.Peers[i]
			p.File, p.History.File = filepath.Base(p.File), filepath.Base(p.History.File)
		}
	}
	if !reflect.DeepEqual(sx, sc) {
		for i := range sx.Grants {
			if !reflect.DeepEqual(sx.Grants[i], sc.Grants[i]) {
				t.Errorf("grant %d differs:\nxlsx %+v\ncsv  %+v", i, sx.Grants[i], sc.Grants[i])
			}
		}
		t.Fatal("the xlsx and CSV samples read to different schedules")
	}
	counts := map[Instrument]int{}
	for _, g := range sx.Grants {
		counts[g.Instrument]++
	}
	if n := len(sx.Grants); n < 35 || n > 50 || counts[Warrant] != 2 || counts[RSU] < 3 {
		t.Errorf("sample has %d grants %v", n, counts)
	}
	// Every grant has inputs; the liability warrant is remeasured at the
	// valuation date on the par-semiannual curve of 2026-09-30.
	liab := 0
	for _, g := range sx.Grants {
		in, err := sx.Inputs(g)
		if err != nil {
			t.Fatalf("inputs of %s: %v", g.ID, err)
		}
		if g.Classification == Liability {
			liab++
			if !in.MeasurementDate.Equal(sx.Company.ValuationDate) || !in.CurveDate.Equal(sx.Company.ValuationDate) ||
				!strings.Contains(in.RiskFreeRate.Text, "par-semiannual yields bootstrapped") {
				t.Errorf("liability warrant %s: measured %v on curve %v (%s)", g.ID, in.MeasurementDate, in.CurveDate, in.RiskFreeRate.Text)
			}
		}
		if g.Instrument == Option && !strings.Contains(in.Volatility.Text, "guideline peers") {
			t.Errorf("%s volatility source %q", g.ID, in.Volatility.Text)
		}
	}
	if liab != 1 {
		t.Errorf("%d liability warrants, want 1", liab)
	}
	if len(sx.Events) < 4 || len(sx.Vesting) == 0 {
		t.Errorf("%d events, %d vesting rows", len(sx.Events), len(sx.Vesting))
	}
	if sx.Company.ValuationDate.Format(time.DateOnly) != "2026-09-30" {
		t.Errorf("valuation date %v", sx.Company.ValuationDate)
	}
}
