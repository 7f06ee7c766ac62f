package valuation

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"time"
)

// Volatility from share prices.
//
// A private company has no price history of its own; its volatility comes
// from guideline public peers. For each peer the estimate is the sample
// standard deviation of log returns ln(P_i/P_{i−1}) over a lookback window,
// annualised by √252 for daily returns or √52 for weekly ones (Hull,
// Options, Futures, and Other Derivatives, the section on estimating
// volatility from historical data). Returns run between successive
// observations whatever the calendar gap: weekends and holidays are not
// trading days and add no variance (common practice). Across peers the
// mean, the median and a trimmed mean are offered (SummarizeVols).

// PricePoint is one closing price.
type PricePoint struct {
	Date  time.Time
	Price float64 // per share, adjusted for splits and dividends when available
}

// Frequency is the sampling of returns.
type Frequency int

const (
	Daily  Frequency = iota // every observation; 252 a year
	Weekly                  // the last observation of each ISO week (Monday to Sunday); 52 a year
)

func (f Frequency) String() string {
	if f == Weekly {
		return "weekly"
	}
	return "daily"
}

// PeriodsPerYear is the annualisation count: 252 trading days or 52 weeks
// (common practice).
func (f Frequency) PeriodsPerYear() float64 {
	if f == Weekly {
		return 52
	}
	return 252
}

// VolOptions select the window and sampling of HistoricalVol.
type VolOptions struct {
	Frequency Frequency
	// AsOf ends the window (inclusive); the zero time means the last date
	// of the series.
	AsOf time.Time
	// LookbackYears is the window length; the window starts
	// round(LookbackYears·365.25) calendar days before AsOf (inclusive).
	// 0 means the whole series up to AsOf.
	LookbackYears float64
	// MinObservations is the fewest returns accepted (at least 2 in any case).
	MinObservations int
}

// VolEstimate is one peer's volatility and how it was obtained.
type VolEstimate struct {
	Observations int       // returns used
	First, Last  time.Time // dates of the first and last price used
	PeriodStdDev float64   // sample standard deviation of the log returns
	Annual       float64   // PeriodStdDev·√PeriodsPerYear
	Frequency    Frequency
}

// Years is the span of prices used, on ACT/365F.
func (e VolEstimate) Years() float64 { return YearFrac(e.First, e.Last) }

// ErrTooFewObservations is wrapped when the window holds too few returns.
var ErrTooFewObservations = errors.New("too few observations")

// ErrPriceSeries is wrapped when a series is not strictly increasing in date
// or holds a price that is not finite and positive.
var ErrPriceSeries = errors.New("bad price series")

// CheckPrices returns an error wrapping ErrPriceSeries naming the first
// point (by index and date) that is out of order, repeated, or not a
// finite positive price.
func CheckPrices(series []PricePoint) error {
	for i, p := range series {
		if !(p.Price > 0) || math.IsInf(p.Price, 0) {
			return fmt.Errorf("%w: point %d (%s): price %v is not a positive number", ErrPriceSeries, i, p.Date.Format(time.DateOnly), p.Price)
		}
		if i > 0 && !p.Date.After(series[i-1].Date) {
			what := "before"
			if p.Date.Equal(series[i-1].Date) {
				what = "the same as"
			}
			return fmt.Errorf("%w: point %d: date %s is %s the date before it, %s", ErrPriceSeries, i, p.Date.Format(time.DateOnly), what, series[i-1].Date.Format(time.DateOnly))
		}
	}
	return nil
}

// LogReturns are ln(p[i]/p[i−1]); prices must be positive.
func LogReturns(prices []float64) []float64 {
	if len(prices) < 2 {
		return nil
	}
	out := make([]float64, len(prices)-1)
	for i := 1; i < len(prices); i++ {
		out[i-1] = math.Log(prices[i] / prices[i-1])
	}
	return out
}

// SampleStdDev is the standard deviation with the n−1 divisor (two passes:
// mean, then squared deviations). It is NaN for fewer than two values.
func SampleStdDev(x []float64) float64 {
	if len(x) < 2 {
		return math.NaN()
	}
	mean := 0.0
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	ss := 0.0
	for _, v := range x {
		ss += (v - mean) * (v - mean)
	}
	return math.Sqrt(ss / float64(len(x)-1))
}

// sampled returns the points of series in [from, to] at frequency f.
func sampled(series []PricePoint, from, to time.Time, f Frequency) []PricePoint {
	var out []PricePoint
	for _, p := range series {
		if p.Date.Before(from) || p.Date.After(to) {
			continue
		}
		if f == Weekly && len(out) > 0 {
			y0, w0 := out[len(out)-1].Date.ISOWeek()
			if y, w := p.Date.ISOWeek(); y == y0 && w == w0 {
				out[len(out)-1] = p // keep the last observation of the week
				continue
			}
		}
		out = append(out, p)
	}
	return out
}

func windowStart(asOf time.Time, years float64) time.Time {
	return asOf.AddDate(0, 0, -int(math.Round(years*365.25)))
}

// HistoricalVol estimates one peer's annual volatility from its closing
// prices (sorted, strictly increasing dates; see CheckPrices) over the
// window and sampling of o.
func HistoricalVol(series []PricePoint, o VolOptions) (VolEstimate, error) {
	if err := CheckPrices(series); err != nil {
		return VolEstimate{}, err
	}
	if len(series) == 0 {
		return VolEstimate{}, fmt.Errorf("%w: no prices", ErrTooFewObservations)
	}
	if math.IsNaN(o.LookbackYears) || o.LookbackYears < 0 || math.IsInf(o.LookbackYears, 0) {
		return VolEstimate{}, fmt.Errorf("lookback %v years is not a number at or above 0", o.LookbackYears)
	}
	asOf := o.AsOf
	if asOf.IsZero() {
		asOf = series[len(series)-1].Date
	}
	from := series[0].Date
	if o.LookbackYears > 0 {
		from = windowStart(asOf, o.LookbackYears)
	}
	pts := sampled(series, from, asOf, o.Frequency)
	need := max(o.MinObservations, 2)
	if len(pts)-1 < need {
		return VolEstimate{}, fmt.Errorf("%w: %d %s returns from %s to %s, need at least %d", ErrTooFewObservations,
			max(len(pts)-1, 0), o.Frequency, from.Format(time.DateOnly), asOf.Format(time.DateOnly), need)
	}
	prices := make([]float64, len(pts))
	for i, p := range pts {
		prices[i] = p.Price
	}
	sd := SampleStdDev(LogReturns(prices))
	return VolEstimate{
		Observations: len(pts) - 1,
		First:        pts[0].Date,
		Last:         pts[len(pts)-1].Date,
		PeriodStdDev: sd,
		Annual:       sd * math.Sqrt(o.Frequency.PeriodsPerYear()),
		Frequency:    o.Frequency,
	}, nil
}

// PeerSummary combines the peers' annual volatilities.
type PeerSummary struct {
	N           int
	Mean        float64
	Median      float64
	TrimmedMean float64
	Trimmed     int // values dropped from each end for TrimmedMean
}

// SummarizeVols returns the mean, the median and the trimmed mean of vols:
// the trimmed mean drops the floor(n/10) highest and lowest values, and at
// least one from each end once there are 3 or more (so with 5 peers it is
// the mean of the middle three). It panics on an empty slice.
func SummarizeVols(vols []float64) PeerSummary {
	n := len(vols)
	if n == 0 {
		panic("valuation: SummarizeVols of no values")
	}
	s := slices.Clone(vols)
	slices.Sort(s)
	sum := 0.0
	for _, v := range s {
		sum += v
	}
	med := s[n/2]
	if n%2 == 0 {
		med = (s[n/2-1] + s[n/2]) / 2
	}
	k := 0
	if n >= 3 {
		k = max(1, n/10)
	}
	tsum := 0.0
	for _, v := range s[k : n-k] {
		tsum += v
	}
	return PeerSummary{N: n, Mean: sum / float64(n), Median: med, TrimmedMean: tsum / float64(n-2*k), Trimmed: k}
}

// VolPoint is one point of a rolling volatility series.
type VolPoint struct {
	Date time.Time
	Vol  float64 // annual
}

// RollingVol is the annual volatility over the windowYears ending at each
// sampled date from the first date with a full window behind it to the
// last, by the same estimator as HistoricalVol. series must pass
// CheckPrices.
func RollingVol(series []PricePoint, f Frequency, windowYears float64) []VolPoint {
	if len(series) < 3 {
		return nil
	}
	pts := sampled(series, series[0].Date, series[len(series)-1].Date, f)
	r := make([]float64, len(pts)) // r[i] = return into pts[i]; r[0] unused
	for i := 1; i < len(pts); i++ {
		r[i] = math.Log(pts[i].Price / pts[i-1].Price)
	}
	ann := math.Sqrt(f.PeriodsPerYear())
	var out []VolPoint
	lo := 0
	for i := range pts {
		start := windowStart(pts[i].Date, windowYears)
		if start.Before(pts[0].Date) {
			continue
		}
		for pts[lo].Date.Before(start) {
			lo++
		}
		if i-lo < 2 {
			continue
		}
		out = append(out, VolPoint{Date: pts[i].Date, Vol: SampleStdDev(r[lo+1:i+1]) * ann})
	}
	return out
}
