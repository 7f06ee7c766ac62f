package valuation

import (
	"reflect"
	"testing"
)

// RunJobs gives the same numbers whatever the number of workers, in job
// order, and reports errors per job.
func TestRunJobsDeterministic(t *testing.T) {
	var jobs []Job
	for g := 0; g < 12; g++ {
		vest := []float64{}
		for m := 1; m <= 4+g; m++ {
			vest = append(vest, float64(m)/4)
		}
		jobs = append(jobs, Job{
			Terms:     Terms{Strike: 10 + float64(g), YearsToExpiry: 10, ExerciseMultiple: 2 + 0.1*float64(g), ExitRate: 0.05},
			VestYears: vest,
			Market:    Market{Spot: 12, VolAnnual: 0.4 + 0.01*float64(g), DividendYield: 0.01, Curve: FlatCurve(0.04)},
			Options:   LatticeOptions{Steps: 100 * (1 + g%3)},
		})
	}
	jobs[5].Market.VolAnnual = -1 // bad data in one job
	var last, calls int
	one := RunJobs(jobs, 1, func(done, total int) {
		calls++
		if done != last+1 || total != len(jobs) {
			t.Errorf("progress(%d, %d) after %d", done, total, last)
		}
		last = done
	})
	many := RunJobs(jobs, 5, nil)
	if calls != len(jobs) {
		t.Errorf("progress called %d times for %d jobs", calls, len(jobs))
	}
	if !reflect.DeepEqual(one, many) {
		t.Errorf("results differ between 1 and 5 workers")
	}
	for i, r := range one {
		if (r.Err != nil) != (i == 5) {
			t.Errorf("job %d: error %v", i, r.Err)
		}
		if i == 5 {
			continue
		}
		want, _ := LatticeTranches(jobs[i].Terms, jobs[i].VestYears, jobs[i].Market, jobs[i].Options)
		if !reflect.DeepEqual(r.Tranches, want) {
			t.Errorf("job %d: runner %v, direct %v", i, r.Tranches, want)
		}
	}
	if got := RunJobs(nil, 0, nil); len(got) != 0 {
		t.Errorf("no jobs: %v", got)
	}
}
