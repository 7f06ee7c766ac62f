package report

import (
	"math"
	"strconv"
	"strings"
)

// groupDigits formats v with the given decimals and commas between
// thousands: 1234567.891 → "1,234,567.89".
func groupDigits(v float64, decimals int) string {
	s := strconv.FormatFloat(math.Abs(v), 'f', decimals, 64)
	intPart, frac := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		intPart, frac = s[:i], s[i:]
	}
	var b strings.Builder
	if v < 0 && strings.Trim(s, "0.") != "" {
		b.WriteByte('-')
	}
	for i, r := range intPart {
		if i > 0 && (len(intPart)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	b.WriteString(frac)
	return b.String()
}

// money is an amount with its currency: "EUR 1,234.50".
func money(v float64, cur string) string { return cur + " " + groupDigits(v, 2) }

// perShare is a value per share to four decimals: "1.3200".
func perShare(v float64) string { return groupDigits(v, 4) }

// pct is a decimal as a percentage: 0.4512 → "45.12%".
func pct(v float64) string { return strconv.FormatFloat(v*100, 'f', 2, 64) + "%" }

// signedPct is a relative change: "+3.10%" or "-1.25%".
func signedPct(v float64) string {
	s := pct(v)
	if v >= 0 {
		s = "+" + s
	}
	return s
}

// fixed is v to d decimals.
func fixed(v float64, d int) string { return strconv.FormatFloat(v, 'f', d, 64) }

// count is an integer with grouped digits.
func count[T ~int | ~int64](n T) string { return groupDigits(float64(n), 0) }

// counted is n and the word w, with an s unless n is 1 ("1 grant", "2 grants").
func counted(n int, w string) string {
	if n == 1 {
		return "1 " + w
	}
	return count(n) + " " + w + "s"
}
