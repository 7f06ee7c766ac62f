package valuation

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
	"time"
)

// tradingDays returns n weekday dates from start.
func tradingDays(start time.Time, n int) []time.Time {
	out := make([]time.Time, 0, n)
	for d := start; len(out) < n; d = d.AddDate(0, 0, 1) {
		if wd := d.Weekday(); wd != time.Saturday && wd != time.Sunday {
			out = append(out, d)
		}
	}
	return out
}

func seriesOf(dates []time.Time, prices []float64) []PricePoint {
	s := make([]PricePoint, len(prices))
	for i := range prices {
		s[i] = PricePoint{dates[i], prices[i]}
	}
	return s
}

// Hull, Options, Futures, and Other Derivatives, the table that estimates
// volatility from 21 daily closing prices (from memory; issue 4): standard
// deviation of the daily log returns 0.01216, about 19.3% a year with 252
// trading days.
func TestHistoricalVolHull(t *testing.T) {
	const (
		tolDaily  = 0.000005 // published to 5 decimals
		tolAnnual = 0.0005   // published to 0.1%
	)
	prices := []float64{20.00, 20.10, 19.90, 20.00, 20.50, 20.25, 20.90, 20.90, 20.90, 20.75, 20.75,
		21.00, 21.10, 20.90, 20.90, 21.25, 21.40, 21.40, 21.25, 21.75, 22.00}
	s := seriesOf(tradingDays(time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC), len(prices)), prices)
	e, err := HistoricalVol(s, VolOptions{MinObservations: 20})
	if err != nil {
		t.Fatal(err)
	}
	if e.Observations != 20 {
		t.Errorf("observations %d, want 20", e.Observations)
	}
	if math.Abs(e.PeriodStdDev-0.01216) > tolDaily {
		t.Errorf("Hull table daily std dev: got %.6f, want 0.01216, tol %g", e.PeriodStdDev, tolDaily)
	}
	if math.Abs(e.Annual-0.193) > tolAnnual {
		t.Errorf("Hull table annual vol: got %.5f, want 0.193, tol %g", e.Annual, tolAnnual)
	}
}

// gbmSeries simulates daily closes of geometric Brownian motion with
// volatility sigma on n trading days (seeded).
func gbmSeries(seed uint64, n int, sigma float64) []PricePoint {
	rng := rand.New(rand.NewPCG(seed, 0x9e3779b97f4a7c15))
	dates := tradingDays(time.Date(2019, 10, 1, 0, 0, 0, 0, time.UTC), n)
	prices := make([]float64, n)
	prices[0] = 40
	dt := 1.0 / 252
	for i := 1; i < n; i++ {
		prices[i] = prices[i-1] * math.Exp((0.05-sigma*sigma/2)*dt+sigma*math.Sqrt(dt)*rng.NormFloat64())
	}
	return seriesOf(dates, prices)
}

// Synthetic geometric Brownian motion with a known volatility: the estimate
// lies within 3 of its standard errors, σ/√(2n) for n normal returns (the
// large-sample standard error of a standard deviation). Weekly returns of
// daily GBM are GBM too.
func TestHistoricalVolGBM(t *testing.T) {
	const zMax = 3
	for _, c := range []struct {
		seed  uint64
		sigma float64
		f     Frequency
	}{{1, 0.30, Daily}, {2, 0.55, Daily}, {3, 0.15, Daily}, {4, 0.45, Weekly}, {5, 0.30, Weekly}} {
		s := gbmSeries(c.seed, 7*252, c.sigma)
		e, err := HistoricalVol(s, VolOptions{Frequency: c.f})
		if err != nil {
			t.Fatal(err)
		}
		se := c.sigma / math.Sqrt(2*float64(e.Observations))
		if z := (e.Annual - c.sigma) / se; math.Abs(z) > zMax {
			t.Errorf("seed %d σ %v %v: estimate %.4f from %d returns, z = %.2f", c.seed, c.sigma, c.f, e.Annual, e.Observations, z)
		}
		if weeks := 7 * 252 / 5; c.f == Weekly && (e.Observations < weeks-2 || e.Observations > weeks) {
			t.Errorf("weekly observations %d from %d weekdays, want %d weeks less one", e.Observations, 7*252, weeks)
		}
	}
}

func TestHistoricalVolWindow(t *testing.T) {
	s := gbmSeries(7, 3*252, 0.4)
	asOf := s[600].Date
	e, err := HistoricalVol(s, VolOptions{AsOf: asOf, LookbackYears: 1})
	if err != nil {
		t.Fatal(err)
	}
	if !e.Last.Equal(asOf) {
		t.Errorf("last date %v, want the as-of date %v", e.Last, asOf)
	}
	start := asOf.AddDate(0, 0, -365)
	if e.First.Before(start) || e.First.After(start.AddDate(0, 0, 3)) {
		t.Errorf("first date %v, want the first trading day on or after %v", e.First, start)
	}
	if e.Observations < 259 || e.Observations > 262 { // 261 weekdays in 365 days, give or take
		t.Errorf("observations %d in one year of weekdays", e.Observations)
	}
	if y := e.Years(); math.Abs(y-1) > 0.01 {
		t.Errorf("span %v years, want about 1", y)
	}
	// Same window by hand.
	var prices []float64
	for _, p := range s {
		if !p.Date.Before(e.First) && !p.Date.After(asOf) {
			prices = append(prices, p.Price)
		}
	}
	if want := SampleStdDev(LogReturns(prices)) * math.Sqrt(252); math.Abs(e.Annual-want) > 1e-15 {
		t.Errorf("windowed vol %v, by hand %v", e.Annual, want)
	}
}

func TestHistoricalVolErrors(t *testing.T) {
	d := func(day int) time.Time { return time.Date(2026, 1, day, 0, 0, 0, 0, time.UTC) }
	for _, c := range []struct {
		name   string
		series []PricePoint
		o      VolOptions
		want   error
	}{
		{"empty", nil, VolOptions{}, ErrTooFewObservations},
		{"one price", []PricePoint{{d(5), 10}}, VolOptions{}, ErrTooFewObservations},
		{"below minimum", []PricePoint{{d(5), 10}, {d(6), 11}, {d(7), 12}}, VolOptions{MinObservations: 3}, ErrTooFewObservations},
		{"zero price", []PricePoint{{d(5), 10}, {d(6), 0}, {d(7), 12}}, VolOptions{}, ErrPriceSeries},
		{"negative price", []PricePoint{{d(5), -10}, {d(6), 1}, {d(7), 12}}, VolOptions{}, ErrPriceSeries},
		{"unsorted", []PricePoint{{d(5), 10}, {d(7), 11}, {d(6), 12}}, VolOptions{}, ErrPriceSeries},
		{"duplicate", []PricePoint{{d(5), 10}, {d(5), 11}, {d(6), 12}}, VolOptions{}, ErrPriceSeries},
	} {
		if _, err := HistoricalVol(c.series, c.o); !errors.Is(err, c.want) {
			t.Errorf("%s: err %v, want %v", c.name, err, c.want)
		}
	}
}

func TestSummarizeVols(t *testing.T) {
	s := SummarizeVols([]float64{0.50, 0.30, 0.90, 0.40, 0.35})
	want := PeerSummary{N: 5, Mean: 0.49, Median: 0.40, TrimmedMean: (0.35 + 0.40 + 0.50) / 3, Trimmed: 1}
	if math.Abs(s.Mean-want.Mean) > 1e-15 || s.Median != want.Median || math.Abs(s.TrimmedMean-want.TrimmedMean) > 1e-15 || s.Trimmed != 1 {
		t.Errorf("SummarizeVols: %+v, want %+v", s, want)
	}
	if s := SummarizeVols([]float64{0.2, 0.4}); math.Abs(s.Median-0.3) > 1e-15 || s.Trimmed != 0 || s.TrimmedMean != s.Mean {
		t.Errorf("two peers: %+v", s)
	}
}

// The rolling series at a date equals HistoricalVol over the year to it.
func TestRollingVol(t *testing.T) {
	s := gbmSeries(11, 3*252, 0.35)
	roll := RollingVol(s, Daily, 1)
	if len(roll) < 400 {
		t.Fatalf("%d rolling points from 3 years with a 1-year window", len(roll))
	}
	for _, i := range []int{0, len(roll) / 2, len(roll) - 1} {
		e, err := HistoricalVol(s, VolOptions{AsOf: roll[i].Date, LookbackYears: 1})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(e.Annual-roll[i].Vol) > 1e-14 {
			t.Errorf("rolling vol at %v: %v, HistoricalVol %v", roll[i].Date, roll[i].Vol, e.Annual)
		}
	}
	if roll[0].Date.Before(s[0].Date.AddDate(0, 0, 365)) { // round(1·365.25) days
		t.Errorf("first rolling point %v has less than a year behind it", roll[0].Date)
	}
}
