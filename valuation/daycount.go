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
	da := time.Date(a.Year(), a.Month(), a.Day(), 0, 0, 0, 0, time.UTC)
	db := time.Date(b.Year(), b.Month(), b.Day(), 0, 0, 0, 0, time.UTC)
	return int(db.Sub(da) / (24 * time.Hour))
}
