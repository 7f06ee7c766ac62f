package report

import "testing"

func TestGroupDigits(t *testing.T) {
	for _, c := range []struct {
		v    float64
		d    int
		want string
	}{
		{0, 2, "0.00"}, {999.995, 2, "1,000.00"}, {1234567.891, 2, "1,234,567.89"}, {-1234.5, 1, "-1,234.5"},
		{-0.001, 2, "0.00"}, {100, 0, "100"}, {100000, 0, "100,000"},
	} {
		if got := groupDigits(c.v, c.d); got != c.want {
			t.Errorf("groupDigits(%v, %d) = %q, want %q", c.v, c.d, got, c.want)
		}
	}
}
