package report

import (
	"strings"
	"testing"
)

func TestGroupDigits(t *testing.T) {
	for _, c := range []struct {
		v    float64
		d    int
		want string
	}{
		{0, 2, "0.00"}, {999.995, 2, "1,000.00"}, {1234567.891, 2, "1,234,567.89"}, {-1234.5, 1, "−1,234.5"},
		{-0.001, 2, "0.00"}, {100, 0, "100"}, {100000, 0, "100,000"},
	} {
		if got := groupDigits(c.v, c.d); got != c.want {
			t.Errorf("groupDigits(%v, %d) = %q, want %q", c.v, c.d, got, c.want)
		}
	}
}

// One minus sign in every figure printed as text: U+2212 (issue 14), in
// amounts, percentages and fixed decimals alike, and none on a value
// that rounds to zero.
func TestOneMinusSign(t *testing.T) {
	for _, c := range []struct{ got, want string }{
		{groupDigits(-1234.5, 2), "−1,234.50"},
		{pct(-0.0907), "−9.07%"},
		{signedPct(-0.0907), "−9.07%"},
		{signedPct(0.0421), "+4.21%"},
		{signedPct(-0.00001), "0.00%"},
		{signedPct(0), "0.00%"},
		{fixed(-0.25, 2), "−0.25"},
		{fixed(-0.001, 2), "0.00"},
		{signedFixed(-1.5, 1), "−1.5"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
		if strings.Contains(c.got, "-") {
			t.Errorf("%q has a hyphen-minus", c.got)
		}
	}
}

func TestRelation(t *testing.T) {
	for _, c := range []struct {
		a, b float64
		want string
	}{
		{96.12, 100, "3.88% below"}, {101.2, 100, "1.20% above"}, {100.00001, 100, "equal to"}, {1, 0, "not comparable with"},
	} {
		if got := relation(c.a, c.b); got != c.want {
			t.Errorf("relation(%v, %v) = %q, want %q", c.a, c.b, got, c.want)
		}
	}
}
