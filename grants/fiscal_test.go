package grants

import (
	"strings"
	"testing"
	"time"
)

// The fiscal quarters and years worked out by hand from a calendar (the
// weekdays checked with Python's datetime).
func TestFiscalCalendarByHand(t *testing.T) {
	jan := FiscalCalendar{YearEnd: time.January}
	june := FiscalCalendar{YearEnd: time.June}
	// 52/53-week, last Saturday of January: 31 January 2026 is a Saturday,
	// 25 January 2025 the last Saturday of that month, 30 January 2027 of
	// 2027. FY2026 runs 2025-01-26 to 2026-01-31, 371 days (53 weeks):
	// three quarters of 91 days, then 98.
	lastSat := FiscalCalendar{YearEnd: time.January, WeekBased: true, Weekday: time.Saturday}
	// 52/53-week, Saturday nearest 31 December: 31 December 2024 is a
	// Tuesday (Saturday 28 December, 3 days before), 2025 a Wednesday
	// (Saturday 3 January 2026, 3 days after), 2026 a Thursday (Saturday
	// 2 January 2027). FY2025 is 371 days, FY2026 364.
	nearDec := FiscalCalendar{YearEnd: time.December, WeekBased: true, Weekday: time.Saturday, Nearest: true}
	cases := []struct {
		cal         FiscalCalendar
		d           string
		year        int
		yStart      string
		yEnd        string
		q           int
		qStart      string
		qEnd        string
		name, year_ string
	}{
		{FiscalCalendar{}, "2026-08-15", 2026, "2026-01-01", "2026-12-31", 3, "2026-07-01", "2026-09-30", "2026 Q3", "2026"},
		{FiscalCalendar{}, "2026-12-31", 2026, "2026-01-01", "2026-12-31", 4, "2026-10-01", "2026-12-31", "2026 Q4", "2026"},
		{jan, "2026-09-30", 2027, "2026-02-01", "2027-01-31", 3, "2026-08-01", "2026-10-31", "FY2027 Q3", "FY2027"},
		{jan, "2027-01-31", 2027, "2026-02-01", "2027-01-31", 4, "2026-11-01", "2027-01-31", "FY2027 Q4", "FY2027"},
		{jan, "2027-02-01", 2028, "2027-02-01", "2028-01-31", 1, "2027-02-01", "2027-04-30", "FY2028 Q1", "FY2028"},
		{jan, "2026-01-15", 2026, "2025-02-01", "2026-01-31", 4, "2025-11-01", "2026-01-31", "FY2026 Q4", "FY2026"},
		{june, "2026-09-30", 2027, "2026-07-01", "2027-06-30", 1, "2026-07-01", "2026-09-30", "FY2027 Q1", "FY2027"},
		{lastSat, "2025-01-26", 2026, "2025-01-26", "2026-01-31", 1, "2025-01-26", "2025-04-26", "FY2026 Q1", "FY2026"},
		{lastSat, "2025-10-25", 2026, "2025-01-26", "2026-01-31", 3, "2025-07-27", "2025-10-25", "FY2026 Q3", "FY2026"},
		{lastSat, "2026-01-31", 2026, "2025-01-26", "2026-01-31", 4, "2025-10-26", "2026-01-31", "FY2026 Q4", "FY2026"},
		{lastSat, "2026-02-01", 2027, "2026-02-01", "2027-01-30", 1, "2026-02-01", "2026-05-02", "FY2027 Q1", "FY2027"},
		{lastSat, "2027-01-30", 2027, "2026-02-01", "2027-01-30", 4, "2026-11-01", "2027-01-30", "FY2027 Q4", "FY2027"},
		{nearDec, "2026-01-02", 2025, "2024-12-29", "2026-01-03", 4, "2025-09-28", "2026-01-03", "FY2025 Q4", "FY2025"},
		{nearDec, "2026-01-04", 2026, "2026-01-04", "2027-01-02", 1, "2026-01-04", "2026-04-04", "FY2026 Q1", "FY2026"},
		{nearDec, "2027-01-01", 2026, "2026-01-04", "2027-01-02", 4, "2026-10-04", "2027-01-02", "FY2026 Q4", "FY2026"},
	}
	for _, c := range cases {
		y, q := c.cal.Year(d(c.d)), c.cal.Quarter(d(c.d))
		got := []string{
			y.Start.Format(time.DateOnly), y.End.Format(time.DateOnly), q.Start.Format(time.DateOnly), q.End.Format(time.DateOnly), q.Name, y.Name}
		want := []string{c.yStart, c.yEnd, c.qStart, c.qEnd, c.name, c.year_}
		if y.Year != c.year || q.Year != c.year || q.Quarter != c.q || strings.Join(got, " ") != strings.Join(want, " ") {
			t.Errorf("%v on %s: year %d %v quarter %d, want year %d %v quarter %d", c.cal, c.d, y.Year, got, q.Quarter, c.year, want, c.q)
		}
	}
}

// Identities over ten years of days for every kind of calendar: each
// quarter lies in its year and holds the day, quarters tile the year with
// no gap, years are 52 or 53 weeks for a week-based calendar.
func TestFiscalCalendarTiles(t *testing.T) {
	var cals []FiscalCalendar
	for m := time.January; m <= time.December; m++ {
		cals = append(cals, FiscalCalendar{YearEnd: m})
		for w := time.Sunday; w <= time.Saturday; w++ {
			cals = append(cals, FiscalCalendar{YearEnd: m, WeekBased: true, Weekday: w}, FiscalCalendar{YearEnd: m, WeekBased: true, Weekday: w, Nearest: true})
		}
	}
	for _, c := range cals {
		years := c.Years(d("2020-01-01"), d("2030-12-31"))
		for i, y := range years {
			if i > 0 && !y.Start.Equal(years[i-1].End.AddDate(0, 0, 1)) {
				t.Fatalf("%v: year %s does not follow %s", c, y.Name, years[i-1].Name)
			}
			if n := int(y.End.Sub(y.Start).Hours()/24) + 1; c.WeekBased && n != 364 && n != 371 {
				t.Fatalf("%v: %s has %d days", c, y.Name, n)
			}
			if c.WeekBased && y.End.Weekday() != c.Weekday {
				t.Fatalf("%v: %s ends on a %s", c, y.Name, y.End.Weekday())
			}
			qs := c.Quarters(y.Start, y.End)
			if len(qs) != 4 || !qs[0].Start.Equal(y.Start) || !qs[3].End.Equal(y.End) {
				t.Fatalf("%v: %s has quarters %v", c, y.Name, qs)
			}
			for k, q := range qs {
				if q.Quarter != k+1 || q.Year != y.Year || k > 0 && !q.Start.Equal(qs[k-1].End.AddDate(0, 0, 1)) {
					t.Fatalf("%v: %s quarter %d is %+v", c, y.Name, k+1, q)
				}
				if got := c.Quarter(q.End); got != q {
					t.Fatalf("%v: the quarter of %s is %+v, want %+v", c, q.End.Format(time.DateOnly), got, q)
				}
			}
		}
	}
}

func TestParseMonthAndWeekday(t *testing.T) {
	for in, want := range map[string]time.Month{"January": 1, "jan": 1, "1": 1, "12": 12, " Sep ": 9, "september": 9} {
		if m, ok := parseMonth(in); !ok || m != want {
			t.Errorf("parseMonth(%q) = %v, %v; want %v", in, m, ok, want)
		}
	}
	for _, bad := range []string{"0", "13", "Janu", "", "1.5"} {
		if m, ok := parseMonth(bad); ok {
			t.Errorf("parseMonth(%q) = %v, want an error", bad, m)
		}
	}
	if w, ok := parseWeekday("Sat"); !ok || w != time.Saturday {
		t.Errorf("parseWeekday(Sat) = %v, %v", w, ok)
	}
	if _, ok := parseWeekday("Sa"); ok {
		t.Error("parseWeekday(Sa) accepted")
	}
}

// The default period start (DESIGN §4.2: the first day of the quarter that
// ends on valuation_date) follows the fiscal calendar.
func TestDefaultPeriodStartFiscal(t *testing.T) {
	lastSat := FiscalCalendar{YearEnd: time.January, WeekBased: true, Weekday: time.Saturday}
	cases := []struct {
		cal       FiscalCalendar
		end, want string
	}{
		{FiscalCalendar{}, "2026-09-30", "2026-07-01"},
		{FiscalCalendar{YearEnd: time.January}, "2026-10-31", "2026-08-01"},
		{FiscalCalendar{YearEnd: time.January}, "2027-01-31", "2026-11-01"},
		// A fiscal quarter end of 13 weeks: three months back would give 2025-07-26.
		{lastSat, "2025-10-25", "2025-07-27"},
		// Mid-quarter: a quarter's length back, 91 days in a week-based calendar.
		{lastSat, "2025-10-20", "2025-07-22"},
		{FiscalCalendar{YearEnd: time.January}, "2026-11-20", "2026-08-21"},
	}
	for _, c := range cases {
		co := Company{Fiscal: c.cal}
		if got := co.DefaultPeriodStart(d(c.end)).Format(time.DateOnly); got != c.want {
			t.Errorf("%v, period ending %s: starts %s, want %s", c.cal, c.end, got, c.want)
		}
	}
}

// The Company keys of the fiscal calendar: month as a name, an
// abbreviation or a number; a bad value names its cell; a rule without a
// weekday is a warning.
func TestReadFiscalKeys(t *testing.T) {
	fs := baseCSV()
	fs["company.csv"].Data = []byte("key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-10-31\nfiscal_year_end,Jan\n")
	s, rep := readMap(t, fs)
	if !rep.OK() || s.Company.Fiscal != (FiscalCalendar{YearEnd: time.January}) || !s.Company.PeriodStart.Equal(d("2026-08-01")) {
		t.Fatalf("calendar %+v, period start %v:\n%s", s.Company.Fiscal, s.Company.PeriodStart, problems(rep))
	}
	fs["company.csv"].Data = []byte("key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2025-10-25\nfiscal_year_end,1\nfiscal_year_end_weekday,saturday\n")
	s, rep = readMap(t, fs)
	if want := (FiscalCalendar{YearEnd: time.January, WeekBased: true, Weekday: time.Saturday}); !rep.OK() || s.Company.Fiscal != want || !s.Company.PeriodStart.Equal(d("2025-07-27")) {
		t.Fatalf("calendar %+v, period start %v:\n%s", s.Company.Fiscal, s.Company.PeriodStart, problems(rep))
	}
	fs["company.csv"].Data = []byte("key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-09-30\nfiscal_year_end,Janvier\nfiscal_year_end_rule,nearest\nfiscal_year_end_weekday,Caturday\n")
	_, rep = readMap(t, fs)
	got := problems(rep)
	for _, w := range []string{
		`error: Company!B4 (fiscal_year_end): "Janvier" is not a month`,
		`error: Company!B6 (fiscal_year_end_weekday): "Caturday" is not a weekday`,
		`warning: Company!B5 (fiscal_year_end_rule): applies only to a 52/53-week year`,
	} {
		if !strings.Contains(got, w) {
			t.Errorf("missing %q in\n%s", w, got)
		}
	}
}

// Years buckets a span into fiscal years, the first holding first and the
// last holding last (the cases worked by hand for the comparison of grant
// designs, whose expense by year uses it).
func TestFiscalYearsSpan(t *testing.T) {
	for _, c := range []struct {
		first, last string
		cal         FiscalCalendar
		want        string
	}{
		{"2026-07-01", "2030-07-01", FiscalCalendar{}, "2026:2026-01-01..2026-12-31 2027 2028 2029 2030:2030-01-01..2030-12-31"},
		{"2026-07-01", "2026-07-01", FiscalCalendar{}, "2026:2026-01-01..2026-12-31"},
		{"2026-07-01", "2028-06-30", FiscalCalendar{YearEnd: time.June}, "2027:2026-07-01..2027-06-30 2028:2027-07-01..2028-06-30"},
		{"2026-06-30", "2026-07-01", FiscalCalendar{YearEnd: time.June}, "2026:2025-07-01..2026-06-30 2027:2026-07-01..2027-06-30"},
		{"2027-03-01", "2028-03-01", FiscalCalendar{YearEnd: time.February}, "2028:2027-03-01..2028-02-29 2029:2028-03-01..2029-02-28"},
		{"2026-07-01", "2026-06-30", FiscalCalendar{}, ""},
	} {
		var parts []string
		ys := c.cal.Years(d(c.first), d(c.last))
		for i, y := range ys {
			s := ""
			if i == 0 || i == len(ys)-1 {
				s = ":" + y.Start.Format(time.DateOnly) + ".." + y.End.Format(time.DateOnly)
			}
			parts = append(parts, time.Date(y.Year, 1, 1, 0, 0, 0, 0, time.UTC).Format("2006")+s)
		}
		if got := strings.Join(parts, " "); got != c.want {
			t.Errorf("%s..%s %v: %s, want %s", c.first, c.last, c.cal, got, c.want)
		}
	}
}

// FuzzParseMonth: any text is a month 1 to 12 whose name reads back to it,
// or refused; the same for weekdays. go test ./grants -fuzz FuzzParseMonth
func FuzzParseMonth(f *testing.F) {
	for _, s := range []string{"January", "jan", "12", "0", "Sept.", " Sat ", "saturday", "13", "-1", "1e1"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if m, ok := parseMonth(s); ok {
			if m < time.January || m > time.December {
				t.Fatalf("parseMonth(%q) = %d", s, m)
			}
			if back, ok := parseMonth(m.String()); !ok || back != m {
				t.Fatalf("parseMonth(%q) = %v, which reads back as %v", s, m, back)
			}
		}
		if w, ok := parseWeekday(s); ok {
			if back, ok := parseWeekday(w.String()); !ok || back != w {
				t.Fatalf("parseWeekday(%q) = %v, which reads back as %v", s, w, back)
			}
		}
	})
}
