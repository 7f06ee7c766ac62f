package valuation

import "time"

// YearFrac is the ACT/365F year fraction from a to b: calendar days between
// the two dates (times of day ignored) divided by 365. It is negative when b
// is before a. It is the one day count used throughout grantworth.
func YearFrac(a, b time.Time) float64 {
	return float64(Days(a, b)) / 365
}

// Days is the number of calendar days from a to b, counted on their
// year-month-day in their own locations.
func Days(a, b time.Time) int {
	if n := DayNumber(b) - DayNumber(a); n > -maxDays && n < maxDays {
		return int(n)
	}
	da := time.Date(a.Year(), a.Month(), a.Day(), 0, 0, 0, 0, time.UTC)
	db := time.Date(b.Year(), b.Month(), b.Day(), 0, 0, 0, 0, time.UTC)
	return int(db.Sub(da) / (24 * time.Hour))
}

// maxDays bounds the days between two dates that Days counts from their
// day numbers; past it Days counts as it always has, through a
// time.Duration, which saturates at about 292 years (106,751 days).
const maxDays = 100_000

// DayNumber is the number of t's calendar day (its year-month-day in its
// own location) since 1970-01-01: DayNumber(b) - DayNumber(a) is
// Days(a, b) for dates less than 292 years apart. A UTC time's day is
// that of its seconds (every UTC day has 86,400), without taking its date
// apart.
func DayNumber(t time.Time) int64 {
	if t.Location() == time.UTC {
		s := t.Unix()
		if s < 0 {
			return (s+1)/86400 - 1 // floor
		}
		return s / 86400
	}
	y, m, d := t.Date()
	return time.Date(y, m, d, 0, 0, 0, 0, time.UTC).Unix() / 86400
}
