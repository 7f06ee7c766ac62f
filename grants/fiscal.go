package grants

import (
	"fmt"
	"strings"
	"time"
)

// FiscalCalendar is how a company divides time into fiscal years and
// quarters: the Company keys fiscal_year_end, fiscal_year_end_weekday and
// fiscal_year_end_rule. The zero FiscalCalendar is the calendar year.
//
// A month-end year ends on the last day of YearEnd, and its quarters are
// the three-month blocks that follow: a year ending in January runs from 1
// February, its first quarter is February to April.
//
// A 52/53-week year (WeekBased) ends on a weekday instead: the last
// Weekday of the YearEnd month, or (Nearest) the Weekday nearest the last
// day of that month, which may fall in the first three days of the next
// month. It has 52 weeks, or 53 when the rule needs the extra week; its
// first three quarters are 13 weeks each, and the fourth takes the rest,
// 13 or 14 weeks (common practice).
//
// A fiscal year is named by the calendar year of its nominal end month
// (common practice, though not universal: a year ending in January 2027 is
// fiscal 2027 here, where some retailers call it fiscal 2026; a 52/53-week
// year named for December ends on or near 31 December of that year).
type FiscalCalendar struct {
	YearEnd   time.Month // 0 means December
	WeekBased bool
	Weekday   time.Weekday // WeekBased only
	Nearest   bool         // WeekBased only: nearest the month end, else the last in the month
}

// FiscalPeriod is one fiscal year or quarter: its first and last days,
// both included.
type FiscalPeriod struct {
	Year    int // the fiscal year's name (see FiscalCalendar)
	Quarter int // 1 to 4; 0 for a whole year
	Start   time.Time
	End     time.Time
	Name    string // "2026 Q3" in calendar years; "FY2027 Q1" and "FY2027" otherwise
}

// weekDays is the length of a 13-week fiscal quarter.
const weekDays = 13 * 7

func (c FiscalCalendar) month() time.Month {
	if c.YearEnd == 0 {
		return time.December
	}
	return c.YearEnd
}

// IsCalendar reports whether fiscal years are calendar years.
func (c FiscalCalendar) IsCalendar() bool { return c.month() == time.December && !c.WeekBased }

// String says the calendar in words, for the memo.
func (c FiscalCalendar) String() string {
	m := c.month()
	switch {
	case c.IsCalendar():
		return "calendar years (the fiscal year ends on 31 December)"
	case !c.WeekBased:
		return fmt.Sprintf("a fiscal year ending on the last day of %s, quarters of three calendar months", m)
	case c.Nearest:
		return fmt.Sprintf("a 52/53-week fiscal year ending on the %s nearest the last day of %s, quarters of 13 weeks (the fourth 14 in a 53-week year)", c.Weekday, m)
	}
	return fmt.Sprintf("a 52/53-week fiscal year ending on the last %s of %s, quarters of 13 weeks (the fourth 14 in a 53-week year)", c.Weekday, m)
}

// yearEnd is the last day of fiscal year y.
func (c FiscalCalendar) yearEnd(y int) time.Time {
	last := time.Date(y, c.month()+1, 0, 0, 0, 0, 0, time.UTC)
	if !c.WeekBased {
		return last
	}
	back := (int(last.Weekday()) - int(c.Weekday) + 7) % 7 // days from the last Weekday to the month end
	if c.Nearest && back > 3 {
		return last.AddDate(0, 0, 7-back)
	}
	return last.AddDate(0, 0, -back)
}

// Year is the fiscal year holding day d.
func (c FiscalCalendar) Year(d time.Time) FiscalPeriod {
	d = time.Date(d.Year(), d.Month(), d.Day(), 0, 0, 0, 0, time.UTC)
	y := d.Year()
	for !d.After(c.yearEnd(y - 1)) {
		y--
	}
	for d.After(c.yearEnd(y)) {
		y++
	}
	return FiscalPeriod{Year: y, Start: c.yearEnd(y-1).AddDate(0, 0, 1), End: c.yearEnd(y), Name: c.name(y, 0)}
}

// Quarter is the fiscal quarter holding day d.
func (c FiscalCalendar) Quarter(d time.Time) FiscalPeriod {
	fy := c.Year(d)
	d = time.Date(d.Year(), d.Month(), d.Day(), 0, 0, 0, 0, time.UTC)
	var q int
	var start, end time.Time
	if c.WeekBased {
		q = min(int(d.Sub(fy.Start).Hours()/24)/weekDays+1, 4)
		start = fy.Start.AddDate(0, 0, weekDays*(q-1))
		end = start.AddDate(0, 0, weekDays-1)
		if q == 4 {
			end = fy.End
		}
	} else {
		months := (d.Year()-fy.Start.Year())*12 + int(d.Month()) - int(fy.Start.Month())
		q = months/3 + 1
		start = AddMonths(fy.Start, 3*(q-1))
		end = AddMonths(fy.Start, 3*q).AddDate(0, 0, -1)
	}
	return FiscalPeriod{Year: fy.Year, Quarter: q, Start: start, End: end, Name: c.name(fy.Year, q)}
}

func (c FiscalCalendar) name(y, q int) string {
	switch {
	case c.IsCalendar() && q == 0:
		return fmt.Sprint(y)
	case c.IsCalendar():
		return fmt.Sprintf("%d Q%d", y, q)
	case q == 0:
		return fmt.Sprintf("FY%d", y)
	}
	return fmt.Sprintf("FY%d Q%d", y, q)
}

// Years are the fiscal years from the one holding first to the one
// holding last (none when last is before first). This is the one place
// that buckets dates into fiscal years: the expense by fiscal year of a
// close and of a grant design both use it.
func (c FiscalCalendar) Years(first, last time.Time) []FiscalPeriod { return span(first, last, c.Year) }

// Quarters are the fiscal quarters from the one holding first to the one
// holding last (none when last is before first).
func (c FiscalCalendar) Quarters(first, last time.Time) []FiscalPeriod {
	return span(first, last, c.Quarter)
}

// span lists the periods of holding (Year or Quarter) from the one holding
// first to the one holding last.
func span(first, last time.Time, holding func(time.Time) FiscalPeriod) []FiscalPeriod {
	var out []FiscalPeriod
	if last.Before(first) {
		return nil
	}
	for p := holding(first); !p.Start.After(last); p = holding(p.End.AddDate(0, 0, 1)) {
		out = append(out, p)
	}
	return out
}

// months are the month names accepted for fiscal_year_end, in order.
var months = func() []string {
	out := make([]string, 12)
	for i := range out {
		out[i] = time.Month(i + 1).String()
	}
	return out
}()

var weekdays = func() []string {
	out := make([]string, 7)
	for i := range out {
		out[i] = strings.ToLower(time.Weekday(i).String())
	}
	return out
}()

// parseMonth reads a month as its English name, its first three letters
// or its number 1 to 12.
func parseMonth(s string) (time.Month, bool) {
	s = strings.TrimSpace(s)
	if n, err := ParseInt(s); err == nil {
		if n >= 1 && n <= 12 {
			return time.Month(n), true
		}
		return 0, false
	}
	for i, m := range months {
		if strings.EqualFold(s, m) || len(s) == 3 && strings.EqualFold(s, m[:3]) {
			return time.Month(i + 1), true
		}
	}
	return 0, false
}

// parseWeekday reads a weekday as its English name or its first three
// letters.
func parseWeekday(s string) (time.Weekday, bool) {
	s = strings.TrimSpace(s)
	for i, w := range weekdays {
		if strings.EqualFold(s, w) || len(s) == 3 && strings.EqualFold(s, w[:3]) {
			return time.Weekday(i), true
		}
	}
	return 0, false
}
