//go:build ignore

// Command gen writes the demo peer price histories in this folder: five
// invented guideline companies of the invented demo company Tarnwick
// Labs, daily closes to 2026-09-30. The figures are invented (geometric
// Brownian motion with a fixed seed), for the demo only.
//
// Run from the repository root:
//
//	go run sample/peers/gen.go
//
// Each file has date and close; tallis.csv also has adjusted_close (a 2-for-1
// split on 2022-06-01 halves its close, not its adjusted close) and
// corvid.csv starts at its listing on 2020-08-14, so the default window of
// `grantworth vol` is the 6.1 years every peer covers.
package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"time"
)

type peer struct {
	file  string
	start time.Time
	price float64 // first close
	vol   float64 // annual volatility of the simulated returns
	drift float64
	seed  uint64
}

func main() {
	d := func(y int, m time.Month, day int) time.Time { return time.Date(y, m, day, 0, 0, 0, 0, time.UTC) }
	end := d(2026, 9, 30)
	peers := []peer{
		{"brightwater.csv", d(2019, 9, 30), 24.10, 0.48, 0.06, 101},
		{"corvid.csv", d(2020, 8, 14), 18.00, 0.62, 0.02, 102},
		{"meridian.csv", d(2019, 9, 30), 61.35, 0.44, 0.08, 103},
		{"pinecrest.csv", d(2019, 9, 30), 9.80, 0.85, -0.03, 104},
		{"tallis.csv", d(2019, 9, 30), 132.50, 0.55, 0.10, 105},
	}
	split := d(2022, 6, 1)
	for _, p := range peers {
		rng := rand.New(rand.NewPCG(p.seed, 2026))
		path := filepath.Join("sample", "peers", p.file)
		f, err := os.Create(path)
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		adjusted := p.file == "tallis.csv"
		if adjusted {
			fmt.Fprintln(f, "date,close,adjusted_close")
		} else {
			fmt.Fprintln(f, "date,close")
		}
		s := p.price
		dt := 1.0 / 252
		for day := p.start; !day.After(end); day = day.AddDate(0, 0, 1) {
			if wd := day.Weekday(); wd == time.Saturday || wd == time.Sunday || holiday(day) {
				continue
			}
			if !day.Equal(p.start) {
				s *= math.Exp((p.drift-p.vol*p.vol/2)*dt + p.vol*math.Sqrt(dt)*rng.NormFloat64())
			}
			if adjusted {
				close := s
				if !day.Before(split) {
					close = s / 2
				}
				// Adjusted closes restate history in post-split shares.
				fmt.Fprintf(f, "%s,%.2f,%.4f\n", day.Format(time.DateOnly), close, s/2)
			} else {
				fmt.Fprintf(f, "%s,%.2f\n", day.Format(time.DateOnly), s)
			}
		}
		if err := f.Close(); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
}

// holiday marks a few fixed-date market holidays, so the files have the
// gaps real histories have.
func holiday(d time.Time) bool {
	m, day := d.Month(), d.Day()
	return m == time.January && day == 1 || m == time.July && day == 4 || m == time.December && day == 25
}
