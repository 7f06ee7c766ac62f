package grants

import (
	"maps"
	"math"
	"path/filepath"
	"reflect"
	"runtime"
	"strings"
	"testing"
	"time"

	"grantworth/valuation"
)

func TestInputsOption(t *testing.T) {
	s := smallSchedule()
	xlsx, _ := writeBoth(t, s)
	s, rep, err := ReadFile(xlsx)
	if err != nil || !rep.OK() {
		t.Fatalf("read: %v\n%s", err, problems(rep))
	}
	g, _ := s.Grant("G-001")
	in, err := s.Inputs(g)
	if err != nil {
		t.Fatal(err)
	}
	if !in.MeasurementDate.Equal(d("2024-01-31")) {
		t.Errorf("measurement date %v, want the grant date", in.MeasurementDate)
	}
	// Share Prices: 2.0 from 2023-12-31 is in force on 2024-01-31.
	if in.Market.Spot != 2.0 || in.SharePrice.Text != "Share Prices!B2 (valuation of 2023-12-31)" {
		t.Errorf("share price %v from %q", in.Market.Spot, in.SharePrice.Text)
	}
	if in.Volatility.Value != 0.55 || !strings.HasPrefix(in.Volatility.Text, "median of peers") || in.Volatility.Ref.String() != "Assumptions!B2" {
		t.Errorf("volatility %+v", in.Volatility)
	}
	if in.ExerciseMultiple.Value != 2.5 || in.ExitRate.Value != 0.1 {
		t.Errorf("behaviour %+v %+v", in.ExerciseMultiple, in.ExitRate)
	}
	if len(in.Terms) != len(in.Tranches) || len(in.Terms) != 37 {
		t.Fatalf("%d terms for %d tranches", len(in.Terms), len(in.Tranches))
	}
	T := valuation.YearFrac(d("2024-01-31"), d("2034-01-31"))
	if tm := in.Terms[0]; tm.YearsToExpiry != T || tm.Strike != 2.5 || tm.YearsToVest != valuation.YearFrac(d("2024-01-31"), d("2025-01-31")) || tm.Rational {
		t.Errorf("terms of tranche 1: %+v", tm)
	}
	// The 2023-12-31 curve (continuous 4.5% at 1y, 4.0% at 10y).
	if !in.CurveDate.Equal(d("2023-12-31")) || in.Market.Curve.Zero(10) != 0.04 {
		t.Errorf("curve of %v, zero(10) %v", in.CurveDate, in.Market.Curve.Zero(10))
	}
	if !strings.Contains(in.RiskFreeRate.Text, "Rates curve of 2023-12-31, 2 points") {
		t.Errorf("curve text %q", in.RiskFreeRate.Text)
	}
}

func TestInputsLiabilityWarrant(t *testing.T) {
	s := smallSchedule()
	g, _ := s.Grant("G-002")
	in, err := s.Inputs(g)
	if err != nil {
		t.Fatal(err)
	}
	// Remeasured at the valuation date 2026-09-30: price 4.5 from 2025-12-31,
	// curve of 2026-06-30 (5y semiannual 3.9% → 2·ln(1.0195) continuous).
	if !in.MeasurementDate.Equal(d("2026-09-30")) || in.Market.Spot != 4.5 {
		t.Errorf("measured %v at %v", in.MeasurementDate, in.Market.Spot)
	}
	if want := 2 * math.Log(1+0.039/2); math.Abs(in.Market.Curve.Zero(3)-want) > 1e-15 {
		t.Errorf("zero %v, want %v", in.Market.Curve.Zero(3), want)
	}
	tm := in.Terms[0]
	if !tm.Rational || tm.YearsToVest != 0 || tm.ExerciseMultiple != 0 || tm.ExitRate != 0 {
		t.Errorf("warrant terms %+v: want rational, vested, no employee behaviour", tm)
	}
}

func TestInputsRSU(t *testing.T) {
	s := smallSchedule()
	g, _ := s.Grant("G-003")
	in, err := s.Inputs(g)
	if err != nil {
		t.Fatal(err)
	}
	if in.Market.Spot != 3.1 || len(in.Terms) != 3 {
		t.Fatalf("spot %v, %d tranches", in.Market.Spot, len(in.Terms))
	}
	for _, tm := range in.Terms {
		if tm.Strike != 0 || tm.YearsToExpiry != tm.YearsToVest {
			t.Errorf("RSU terms %+v", tm)
		}
	}
}

func TestInputsMissingCurve(t *testing.T) {
	s := smallSchedule()
	s.Rates = s.Rates[2:] // first curve 2024-12-31, after G-001's grant
	g, _ := s.Grant("G-001")
	_, err := s.Inputs(g)
	if err == nil || !strings.Contains(err.Error(), "no Rates curve") {
		t.Fatalf("got %v, want a missing-curve error", err)
	}
	rep := Validate(s)
	if !strings.Contains(problems(&rep), "no Rates curve is dated on or before the measurement date 2024-01-31 of grant G-001") {
		t.Errorf("validate did not report it:\n%s", problems(&rep))
	}
}

// A grant made after the valuation date is left out, with a warning that
// names it; the others keep their order.
func TestValueInputsLeavesOutLaterGrants(t *testing.T) {
	s := smallSchedule()
	late := s.Grants[0]
	late.ID, late.GrantDate = "G-LATE", s.Company.ValuationDate.AddDate(0, 0, 1)
	s.Grants = append(s.Grants, late)
	ins, errs, skipped := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	if len(ins) != len(s.Grants)-1 || len(skipped) != 1 || !strings.Contains(skipped[0], "grant G-LATE") {
		t.Fatalf("%d inputs of %d grants, skipped %q", len(ins), len(s.Grants), skipped)
	}
	for i, in := range ins {
		if in.Grant.ID != s.Grants[i].ID {
			t.Errorf("input %d is grant %s, want %s", i, in.Grant.ID, s.Grants[i].ID)
		}
	}
}

// The period defaults to the three months that end on the valuation date
// (DESIGN §4.2: "the first day of the quarter that ends on valuation_date"),
// as the reader fills it in.
func TestSchedulePeriodDefault(t *testing.T) {
	s := &Schedule{Company: Company{ValuationDate: d("2026-11-20")}}
	start, end := s.Period()
	if !start.Equal(d("2026-08-21")) || !end.Equal(d("2026-11-20")) {
		t.Errorf("period %v..%v, want 2026-08-21..2026-11-20", start, end)
	}
}

// A valuation date given in place of the schedule's keeps the reporting
// period as long as the schedule's own (common practice: a quarter-end
// close reports the quarter), and says so when the period start moves away
// from the one the schedule gave. The sample's period is 2026-07-01 to
// 2026-09-30 (Company!B4, Company!B3): for 2026-12-31 it reports
// 2026-10-01 to 2026-12-31, three months, never the six from 2026-07-01.
func TestMoveValuationDate(t *testing.T) {
	s, _, err := ReadFile(filepath.Join("..", "sample", "tarnwick.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	read := *s
	cases := []struct {
		name         string
		start, end   string // the schedule's period; "" start = not given
		to           string
		want, remark string
	}{
		{"sample, next quarter", "2026-07-01", "2026-09-30", "2026-12-31", "2026-10-01",
			"the period reported is 2026-10-01 to 2026-12-31, 3 months, as long as the schedule's own period, 2026-07-01 to 2026-09-30; Company!B4's period_start 2026-07-01 is not used"},
		{"same date", "2026-07-01", "2026-09-30", "2026-09-30", "2026-07-01", ""},
		{"fiscal quarter ending in January", "2026-08-01", "2026-10-31", "2027-01-31", "2026-11-01", "3 months, as long as the schedule's own period"},
		{"a month", "2026-09-01", "2026-09-30", "2026-11-30", "2026-11-01", "1 month, as long as"},
		{"not whole months", "2026-07-01", "2026-09-15", "2026-12-31", "2026-10-01", "not a whole number of months, so a quarter is reported"},
		{"period start not given", "", "2026-09-30", "2026-12-31", "2026-10-01", ""},
	}
	for _, c := range cases {
		s := read
		s.Company.Refs = maps.Clone(read.Company.Refs)
		s.Company.ValuationDate = d(c.end)
		if c.start == "" {
			delete(s.Company.Refs, "period_start")
			s.Company.PeriodStart = s.Company.DefaultPeriodStart(d(c.end))
		} else {
			s.Company.PeriodStart = d(c.start)
		}
		w := s.MoveValuationDate(d(c.to))
		start, end := s.Period()
		if !start.Equal(d(c.want)) || !end.Equal(d(c.to)) {
			t.Errorf("%s: period %s..%s, want %s..%s", c.name, isoDay(start), isoDay(end), c.want, c.to)
		}
		if c.remark == "" && w != "" || !strings.Contains(w, c.remark) {
			t.Errorf("%s: warning %q, want %q", c.name, w, c.remark)
		}
	}
}

// The risk-free rate cites the Rates cells it comes from (linear
// interpolation in tenor, flat outside, DESIGN §4.2): a 2024-06-30 grant
// of 3 years on a curve of 1, 2, 5 and 10 years reads 1/3 of the way from
// the 2-year rate (Rates!C3) to the 5-year one (Rates!C4), never the
// 1-year cell a grant's single reference used to name; on par yields it
// cites every yield the bootstrap used up to the tenor above.
func TestRiskFreeRateCitesItsCells(t *testing.T) {
	s := smallSchedule()
	s.Rates = []RatePoint{
		{CurveDate: d("2024-06-30"), TenorYears: 1, Rate: 0.012, Compounding: "continuous", Row: 2},
		{CurveDate: d("2024-06-30"), TenorYears: 2, Rate: 0.018, Compounding: "continuous", Row: 3},
		{CurveDate: d("2024-06-30"), TenorYears: 5, Rate: 0.024, Compounding: "continuous", Row: 4},
		{CurveDate: d("2024-06-30"), TenorYears: 10, Rate: 0.03, Compounding: "continuous", Row: 5},
	}
	s.layout = map[string]map[string]int{SheetRates: {"curve_date": 0, "tenor_years": 1, "rate": 2}}
	g := Grant{ID: "HR-001", Instrument: Option, GrantDate: d("2024-06-30"), Shares: 100, Strike: 1, ExpiryDate: d("2027-06-30"), VestStart: d("2024-06-30")}
	in, err := s.Inputs(g)
	if err != nil {
		t.Fatal(err)
	}
	// 2024-06-30 to 2027-06-30 is 1,095 days: 3 years ACT/365F exactly.
	if in.RiskFreeRate.Ref.String() != "Rates!C3:C4" || math.Abs(in.RiskFreeRate.Value-(0.018+0.006/3)) > 1e-12 ||
		!strings.Contains(in.RiskFreeRate.Text, "interpolated between the 2-year and 5-year rates (Rates!C3:C4)") {
		t.Errorf("rate %v from %s: %s", in.RiskFreeRate.Value, in.RiskFreeRate.Ref, in.RiskFreeRate.Text)
	}
	s.Rates[1].Row, s.Rates[0].Row = 2, 3 // the 2-year row above the 1-year one: the cells are listed
	if in, _ := s.Inputs(g); in.RiskFreeRate.Ref.String() != "Rates!C2,C4" {
		t.Errorf("non-adjacent cells cited as %s", in.RiskFreeRate.Ref)
	}
	s.Rates[0].Row, s.Rates[1].Row = 2, 3
	for i := range s.Rates {
		s.Rates[i].Compounding = "par-semiannual"
	}
	g.ExpiryDate = d("2028-06-30") // 4 years: the bootstrap uses the 1-, 2- and 5-year yields
	in, err = s.Inputs(g)
	if err != nil {
		t.Fatal(err)
	}
	if in.RiskFreeRate.Ref.String() != "Rates!C2:C4" || !strings.Contains(in.RiskFreeRate.Text, "bootstrapped from the par yields up to 5-year") {
		t.Errorf("par: %s: %s", in.RiskFreeRate.Ref, in.RiskFreeRate.Text)
	}
}

// ValueInputs gathers the grants in chunks on all cores: the inputs, the
// errors (in ledger order, each grant's own) and the grants left out are
// those of one core, to the bit, and a grant in error leaves no gap.
func TestValueInputsSameOnAnyCores(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	s := bigSchedule(1000)
	for _, i := range []int{3, 400, 401, 999} { // no expiry: an error
		s.Grants[i].ExpiryDate = time.Time{}
	}
	s.Grants[500].GrantDate = s.Company.ValuationDate.AddDate(0, 0, 1) // left out
	s.Reindex()
	runtime.GOMAXPROCS(1)
	ins1, errs1, skipped1 := s.ValueInputs()
	runtime.GOMAXPROCS(4)
	ins4, errs4, skipped4 := s.ValueInputs()
	if len(ins1) != 995 || len(errs1) != 4 || len(skipped1) != 1 {
		t.Fatalf("%d inputs, %d errors, %d left out; want 995, 4 and 1", len(ins1), len(errs1), len(skipped1))
	}
	for k, i := range []int{3, 400, 401, 999} {
		if id := s.Grants[i].ID; !strings.Contains(errs1[k].Error(), id) || errs1[k].Error() != errs4[k].Error() {
			t.Errorf("error %d: %v on one core, %v on four; want grant %s's", k, errs1[k], errs4[k], id)
		}
	}
	if !reflect.DeepEqual(ins1, ins4) || !reflect.DeepEqual(skipped1, skipped4) {
		t.Error("the inputs gathered on four cores differ from those on one")
	}
	for j, in := range ins4 {
		if j > 0 && in.Grant.ID <= ins4[j-1].Grant.ID { // bigSchedule's IDs rise with the rows
			t.Fatalf("inputs out of ledger order at %d: %s after %s", j, in.Grant.ID, ins4[j-1].Grant.ID)
		}
	}
}
