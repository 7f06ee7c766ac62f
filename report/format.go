package report

import (
	"math"
	"strconv"
	"strings"
)

// minus is the one minus sign of every figure the reports print as text:
// U+2212, the typographic minus, the width of a plus and of a digit, so
// that signed columns line up. Hyphens stay hyphens ("share-based").
const minus = "\u2212"

// groupDigits formats v with the given decimals and commas between
// thousands: 1234567.891 → "1,234,567.89", −1234.5 → "−1,234.5".
func groupDigits(v float64, decimals int) string {
	s := strconv.FormatFloat(math.Abs(v), 'f', decimals, 64)
	intPart, frac := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		intPart, frac = s[:i], s[i:]
	}
	var b strings.Builder
	if v < 0 && strings.Trim(s, "0.") != "" {
		b.WriteString(minus)
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

// pct is a decimal as a percentage: 0.4512 → "45.12%", −0.01 → "−1.00%".
func pct(v float64) string { return fixed(v*100, 2) + "%" }

// signedPct is a relative change: "+3.10%" or "−1.25%" (a change that
// rounds to nothing is "0.00%").
func signedPct(v float64) string {
	s := pct(v)
	if v > 0 && s != pct(0) {
		s = "+" + s
	}
	return s
}

// relation says how a compares with b in words, for prose: "3.88%
// below", "1.20% above", or "equal to" when the difference rounds to
// nothing at two decimals of a per cent. ("the lattice is 3.88% below
// it", never "-3.88% from it".)
func relation(a, b float64) string {
	if b == 0 {
		return "not comparable with"
	}
	r := a/b - 1
	switch s := pct(math.Abs(r)); {
	case s == pct(0):
		return "equal to"
	case r < 0:
		return s + " below"
	default:
		return s + " above"
	}
}

// fixed is v to d decimals, a negative one with the typographic minus
// ("−0.25"); a value that rounds to zero has no sign.
func fixed(v float64, d int) string {
	s := strconv.FormatFloat(v, 'f', d, 64)
	if strings.HasPrefix(s, "-") {
		if strings.Trim(s[1:], "0.") == "" {
			return s[1:]
		}
		return minus + s[1:]
	}
	return s
}

// count is an integer with grouped digits.
func count[T ~int | ~int64](n T) string { return groupDigits(float64(n), 0) }

// counted is n and the word w, with an s unless n is 1 ("1 grant", "2 grants").
func counted(n int, w string) string {
	if n == 1 {
		return "1 " + w
	}
	return count(n) + " " + w + "s"
}
