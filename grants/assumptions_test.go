package grants

import (
	"strings"
	"testing"
	"testing/fstest"
)

// datedCSV is the base schedule with a second and a third volatility
// estimate and a later forfeiture rate, each with its effective_date.
func datedCSV() fstest.MapFS {
	fs := baseCSV()
	fs["assumptions.csv"] = &fstest.MapFile{Data: []byte("key,value,source,effective_date\n" +
		"volatility,45%,peers 2024,\n" +
		"volatility,52%,peers 2025,2025-04-01\n" +
		"volatility,60%,Q3 peer study,2026-07-01\n" +
		"pre_vesting_forfeiture_rate,8%,HR,\n" +
		"pre_vesting_forfeiture_rate,12%,HR 2026,2026-09-01\n")}
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,grant_date,shares,strike,term_years,vest_months,cliff_months,volatility\n" +
		"A-1,2025-01-15,1200,2.00,10,48,12,\n" +
		"A-2,2025-04-01,1200,2.00,10,48,12,\n" +
		"A-3,2026-08-10,1200,2.00,10,48,12,\n" +
		"A-4,2026-08-10,1200,2.00,10,48,12,70%\n")}
	return fs
}

// A grant takes, key by key, the row in force at its measurement date
// (the latest effective_date on or before it; DESIGN §4.2); a grant-row
// override still wins; the memo's source text names the row's cell and
// date; the policy keys are those in force at the valuation date.
func TestDatedAssumptionsPerGrant(t *testing.T) {
	s, rep := readMap(t, datedCSV())
	if !rep.OK() {
		t.Fatalf("problems:\n%s", problems(rep))
	}
	if s.Assumptions.Volatility != 0.45 || len(s.Assumptions.Dated) != 3 {
		t.Fatalf("undated volatility %v, dated rows %+v", s.Assumptions.Volatility, s.Assumptions.Dated)
	}
	want := []struct {
		id, ref, text string
		vol           float64
	}{
		{"A-1", "Assumptions!B2", "peers 2024 (Assumptions!B2)", 0.45},
		{"A-2", "Assumptions!B3", "peers 2025 (Assumptions!B3, in force from 2025-04-01)", 0.52}, // on the effective date itself
		{"A-3", "Assumptions!B4", "Q3 peer study (Assumptions!B4, in force from 2026-07-01)", 0.60},
		{"A-4", "Grants!H5", "Grants!H5 (grant row)", 0.70},
	}
	for i, w := range want {
		in, err := s.Inputs(s.Grants[i])
		if err != nil {
			t.Fatal(err)
		}
		if v := in.Volatility; v.Value != w.vol || v.Ref.String() != w.ref || v.Text != w.text {
			t.Errorf("grant %s volatility %+v, want %v from %s, %q", w.id, v, w.vol, w.ref, w.text)
		}
	}
	if in, _ := s.Inputs(s.Grants[2]); !in.Volatility.Since.Equal(d("2026-07-01")) {
		t.Errorf("A-3's volatility row is in force since %v", in.Volatility.Since)
	}
	if a := s.InForce(); a.PreVestingForfeitureRate != 0.12 || a.Refs["pre_vesting_forfeiture_rate"].String() != "Assumptions!B6" {
		t.Errorf("forfeiture rate in force at the valuation date: %v from %v", a.PreVestingForfeitureRate, a.Refs["pre_vesting_forfeiture_rate"])
	}
	if a := s.Assumptions.At(d("2026-08-31")); a.PreVestingForfeitureRate != 0.08 || a.Sources["pre_vesting_forfeiture_rate"] != "HR" {
		t.Errorf("forfeiture rate on 2026-08-31: %v (%q)", a.PreVestingForfeitureRate, a.Sources["pre_vesting_forfeiture_rate"])
	}
}

// Dated rows survive a round trip through a workbook and a CSV folder.
func TestDatedAssumptionsRoundTrip(t *testing.T) {
	s := smallSchedule()
	s.Assumptions.Dated = []AssumptionRow{
		{Key: "volatility", Effective: d("2025-01-01"), Value: 0.6, Source: "peer study"},
		{Key: "attribution", Effective: d("2026-01-01"), Text: string(StraightLine)},
		{Key: "steps", Effective: d("2026-01-01"), Value: 400},
	}
	xlsx, dir := writeBoth(t, s)
	for _, path := range []string{xlsx, dir} {
		got, rep, err := ReadFile(path)
		if err != nil || !rep.OK() {
			t.Fatalf("%s: %v\n%s", path, err, problems(rep))
		}
		if len(got.Assumptions.Dated) != 3 {
			t.Fatalf("%s: dated rows %+v", path, got.Assumptions.Dated)
		}
		for i, r := range got.Assumptions.Dated {
			w := s.Assumptions.Dated[i]
			if r.Key != w.Key || !r.Effective.Equal(w.Effective) || r.Value != w.Value || r.Text != w.Text || r.Source != w.Source || r.Ref.Sheet != SheetAssumptions {
				t.Errorf("%s: row %d %+v, wrote %+v", path, i, r, w)
			}
		}
		if a := got.InForce(); a.Attribution != StraightLine || a.Steps != 400 || a.Volatility != 0.6 {
			t.Errorf("%s: in force %+v", path, a)
		}
	}
}

// Two rows of one key with the same effective_date are an error naming
// both cells; a dated value out of range is an error at its cell; a
// grant measured before the first dated volatility, with no undated one,
// has none.
func TestDatedAssumptionsProblems(t *testing.T) {
	fs := datedCSV()
	fs["assumptions.csv"] = &fstest.MapFile{Data: []byte("key,value,source,effective_date\n" +
		"volatility,52%,peers,2025-04-01\n" +
		"volatility,55%,again,2025-04-01\n" +
		"dividend_yield,150%,,2026-01-01\n" +
		"exercise_multiple,0.5,,2026-01-01\n" +
		"effective_date,1,,\n" +
		"volatility,,,2026-02-01\n" +
		"volatility,40%,,31/12/2026\n")}
	_, rep := readMap(t, fs)
	got := problems(rep)
	for _, want := range []string{
		`error: Assumptions!A3 (key): "volatility" is given twice with effective_date 2025-04-01 (also A2)`,
		`error: Assumptions!B4 (dividend_yield): "1.5" must be at least 0 and below 1`,
		`error: Assumptions!B5 (exercise_multiple): "0.5" must be 0`,
		`warning: Assumptions!A6 (key): "effective_date" is not a key grantworth reads`,
		`error: Assumptions!B7 (volatility): is required on a row with an effective_date`,
		`error: Assumptions!D8 (effective_date): "31/12/2026"`,
		`error: Assumptions (volatility): has no row in force on 2025-01-15, the measurement date of grant A-1`,
	} {
		if !strings.Contains(got, want) {
			t.Errorf("no problem %q in:\n%s", want, got)
		}
	}
}
