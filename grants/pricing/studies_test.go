package pricing_test

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
	"grantworth/report"
)

// studiesLedger is grantstest's invented company with 320 more options,
// no two alike, so that the sensitivity runs take a sample (more than
// pricing.SensitivitySample grants), and without its liability-classified
// warrant, whose values every close measures again (a sample holding it
// is never reused).
func studiesLedger() *grants.Schedule {
	s := grantstest.Fernhollow()
	s.Grants = slices.DeleteFunc(s.Grants, func(g grants.Grant) bool { return g.Classification == grants.Liability })
	for i := range 320 {
		gd := grantstest.Day("2024-02-01").AddDate(0, i%30, i%27)
		s.Grants = append(s.Grants, grants.Grant{ID: fmt.Sprintf("X-%03d", i), Instrument: grants.Option, GrantDate: gd, Shares: int64(1000 + 37*i),
			Strike: 2 + 0.013*float64(i), ExpiryDate: gd.AddDate(10, 0, 0), VestStart: gd, VestMonths: 48, CliffMonths: 12, VestEvery: 12, Purpose: grants.Compensation})
	}
	return s
}

// closeOf values s (after prior, if any) with opts as the value command
// does, books it and renders its valuation.json.
func closeOf(t testing.TB, s *grants.Schedule, prior *accounting.Prior, opts pricing.Options) (*pricing.Valuation, []byte) {
	t.Helper()
	if prior != nil {
		if _, err := accounting.Open(s, prior); err != nil {
			t.Fatal(err)
		}
		opts.Locks = prior.Locks()
	}
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	v, err := pricing.Value(s, ins, opts)
	if err != nil {
		t.Fatal(err)
	}
	b, err := accounting.Close(s, v, prior)
	if err != nil {
		t.Fatal(err)
	}
	m, err := report.Build(s, v, b, report.Run{Tool: report.Tool{Name: "grantworth", Version: "test"}})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := report.WriteJSON(&buf, m); err != nil {
		t.Fatal(err)
	}
	return v, buf.Bytes()
}

// readBack is the close whose valuation.json is data as a later close
// reads it (report.ReadPrior), a fresh copy at each call.
func readBack(t testing.TB, data []byte) *accounting.Prior {
	t.Helper()
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "valuation.json"), data, 0o644); err != nil {
		t.Fatal(err)
	}
	prior, err := report.ReadPrior(dir)
	if err != nil {
		t.Fatal(err)
	}
	return prior
}

// A rerun takes the prior close's sensitivity cases, convergence study and
// Monte Carlo checks (pricing.Options.Studies, read back from its
// valuation.json) only where each is provably the one it would make: the
// rerun's valuation.json is then the same, byte for byte, as that of the
// same rerun running every check afresh, and every check is run again
// when anything it depends on changed: a grant corrected inside the
// sensitivity sample, the representative grant of the convergence study,
// the share price, the curve, the volatility, or the grantworth that made
// the prior close. (Equality to the last bit is the claim; nothing
// outside the project is needed to check it.)
func TestReusedStudiesEqualAFreshRunToTheBit(t *testing.T) {
	if testing.Short() {
		t.Skip("values a ledger of 324 grants a dozen times")
	}
	s := studiesLedger()
	v1, data := closeOf(t, s, nil, pricing.Options{})
	if v1.SensitivitySample >= len(v1.Grants) || len(v1.MonteCarlo) < 2 || v1.Convergence == nil {
		t.Fatalf("the ledger should sample its sensitivity and have checks: sample %d of %d, %d Monte Carlo checks, convergence %v",
			v1.SensitivitySample, len(v1.Grants), len(v1.MonteCarlo), v1.Convergence)
	}
	// Grants by role in the prior close's checks.
	inSample := map[string]bool{}
	n := len(v1.Grants)
	for i := range v1.SensitivitySample {
		inSample[v1.Grants[i*n/v1.SensitivitySample].Inputs.Grant.ID] = true
	}
	checked := map[string]bool{v1.Convergence.GrantID: true}
	for _, c := range v1.MonteCarlo {
		checked[c.GrantID] = true
	}
	var outside, sampled string // X grants: one in no check, one in the sample only
	for _, gv := range v1.Grants {
		id := gv.Inputs.Grant.ID
		switch {
		case id[0] != 'X' || checked[id]:
		case inSample[id] && sampled == "":
			sampled = id
		case !inSample[id] && outside == "":
			outside = id
		}
	}
	rep := v1.Convergence.GrantID
	unfile := func(st *pricing.Studies) { // as a valuation.json written before sample totals were filed
		for i := range st.Sensitivity {
			for j := range st.Sensitivity[i].Points {
				st.Sensitivity[i].Points[j].SampleTotal = 0
			}
		}
	}
	strike := func(id string) func(*grants.Schedule) {
		return func(s *grants.Schedule) {
			for i := range s.Grants {
				if s.Grants[i].ID == id {
					s.Grants[i].Strike *= 1.01
				}
			}
		}
	}
	all := len(v1.MonteCarlo)
	cases := []struct {
		name    string
		change  func(*grants.Schedule)
		correct string
		version bool // another grantworth made the prior close
		unfiled bool // the prior close did not file its sample totals
		want    pricing.StudiesReused
	}{
		{name: "as filed", want: pricing.StudiesReused{Sensitivity: true, Convergence: true, MonteCarlo: all}},
		{name: "a grant outside every check corrected, sample totals not filed", change: strike(outside), correct: outside, unfiled: true,
			want: pricing.StudiesReused{Convergence: true, MonteCarlo: all}},
		{name: "a grant outside every check corrected", change: strike(outside), correct: outside,
			want: pricing.StudiesReused{Sensitivity: true, Convergence: true, MonteCarlo: all}},
		{name: "a grant of the sensitivity sample corrected", change: strike(sampled), correct: sampled,
			want: pricing.StudiesReused{Convergence: true, MonteCarlo: all}},
		{name: "the representative grant corrected", change: strike(rep), correct: rep,
			want: pricing.StudiesReused{Sensitivity: !inSample[rep], MonteCarlo: all - 1}},
		{name: "share price", change: func(s *grants.Schedule) {
			for i := range s.SharePrices {
				s.SharePrices[i].Price *= 1.01
			}
		}},
		{name: "curve", change: func(s *grants.Schedule) {
			for i := range s.Rates {
				s.Rates[i].Rate += 0.001
			}
		}},
		{name: "volatility", change: func(s *grants.Schedule) {
			s.Assumptions.Volatility += 0.01
			for i := range s.Grants {
				if v := s.Grants[i].Volatility; v != nil {
					w := *v + 0.01
					s.Grants[i].Volatility = &w
				}
			}
		}},
		{name: "another grantworth", version: true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			prior := readBack(t, data)
			if c.unfiled {
				unfile(&prior.Studies)
			}
			rerun := func(studies *pricing.Studies) (*pricing.Valuation, []byte) {
				s := studiesLedger()
				s.Company.ValuationDate = grantstest.Day("2026-12-31")
				s.Company.PeriodStart = grantstest.Day("2026-10-01")
				if c.change != nil {
					c.change(s)
				}
				var correct []string
				if c.correct != "" {
					correct = []string{c.correct}
				}
				return closeOf(t, s, prior, pricing.Options{Reuse: !c.version, Correct: correct, Studies: studies})
			}
			got, gotJSON := rerun(&prior.Studies)
			fresh, freshJSON := rerun(nil)
			if got.StudiesReused != c.want {
				t.Errorf("reused %+v, want %+v", got.StudiesReused, c.want)
			}
			if fresh.StudiesReused != (pricing.StudiesReused{}) {
				t.Errorf("without the prior's studies, reused %+v", fresh.StudiesReused)
			}
			if a, b := filed(got), filed(fresh); a != b {
				t.Errorf("checks with reuse:\n%s\nafresh:\n%s", a, b)
			}
			if !slices.Equal(got.Warnings, fresh.Warnings) {
				t.Errorf("warnings with reuse %q, afresh %q", got.Warnings, fresh.Warnings)
			}
			if !bytes.Equal(gotJSON, freshJSON) {
				t.Error("valuation.json differs from the same rerun's with every check run afresh")
			}
		})
	}
	// A close after one that kept its grants' filed values (locked) does
	// not reuse that close's checks: the file does not say whether it
	// made them on the inputs of the keys filed.
	t.Run("after a close of locked grants", func(t *testing.T) {
		t.Parallel()
		prior := readBack(t, data)
		s := studiesLedger()
		s.Company.ValuationDate = grantstest.Day("2026-12-31")
		_, data2 := closeOf(t, s, prior, pricing.Options{Reuse: true, Studies: &prior.Studies})
		prior = readBack(t, data2)
		s = studiesLedger()
		s.Company.ValuationDate = grantstest.Day("2027-03-31")
		v, _ := closeOf(t, s, prior, pricing.Options{Reuse: true, Studies: &prior.Studies})
		if v.StudiesReused != (pricing.StudiesReused{}) {
			t.Errorf("reused %+v of a close whose grants were locked", v.StudiesReused)
		}
	})
}

// filed are v's checks as filed, every number to the last bit (%v prints
// the shortest decimal that reads back as the same float64).
func filed(v *pricing.Valuation) string {
	st := v.FiledStudies()
	st.GrantIDs = nil
	c := st.Convergence
	st.Convergence = nil
	out := fmt.Sprintf("%+v", st)
	if c != nil {
		out += fmt.Sprintf(" convergence %+v", *c)
	}
	return out
}
