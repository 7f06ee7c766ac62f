package report

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
)

// closeAt values and books the invented company of grantstest at the
// quarter ending on end, after prior (nil for a first close), and writes
// its valuation.json into a temporary folder, which it returns with what
// the close filed (accounting.Filed, taken before Build takes the
// valuation and the books over) and the books.
func closeAt(t *testing.T, s *grants.Schedule, end string, prior *accounting.Prior) (*accounting.Prior, *accounting.Books, string) {
	t.Helper()
	s.Company.ValuationDate = grantstest.Day(end)
	s.Company.PeriodStart = grants.Company{}.DefaultPeriodStart(s.Company.ValuationDate)
	if prior != nil {
		if _, err := accounting.Open(s, prior); err != nil {
			t.Fatal(err)
		}
	}
	v := grantstest.Value(t, s, prior.Locks())
	b, err := accounting.Close(s, v, prior)
	if err != nil {
		t.Fatal(err)
	}
	filed := accounting.Filed(s, v, b)
	m, err := Build(s, v, b, Run{Tool: Tool{Name: "grantworth", Version: "test"}})
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	var buf bytes.Buffer
	if err := WriteJSON(&buf, m); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "valuation.json"), buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return filed, b, dir
}

// valuation.json carries everything a later close needs: what ReadPrior
// reads back from it is what the close filed (accounting.Filed), field
// for field, after a first close and after a close that followed one;
// warrants issued in financings (one a liability exercised in part in the
// second quarter) included.
func TestPriorRoundTrip(t *testing.T) {
	s := grantstest.Fernhollow()
	d := grantstest.Day
	s.Grants = append(s.Grants,
		grants.Grant{ID: "F-1", Holder: "INVESTOR", Instrument: grants.Warrant, GrantDate: d("2025-09-01"), Shares: 50_000, Strike: 3.5,
			ExpiryDate: d("2032-09-01"), VestStart: d("2025-09-01"), VestEvery: 1, Classification: grants.Liability, ExerciseStyle: grants.American, Purpose: grants.Financing},
		grants.Grant{ID: "F-2", Holder: "LENDER", Instrument: grants.Warrant, GrantDate: d("2025-10-15"), Shares: 20_000, Strike: 4,
			ExpiryDate: d("2032-10-15"), VestStart: d("2025-10-15"), VestEvery: 1, Classification: grants.Equity, ExerciseStyle: grants.American, Purpose: grants.Financing})
	s.Events = append(s.Events, grants.Event{GrantID: "F-1", Date: d("2026-08-20"), Kind: grants.Exercised, Shares: 5_000})
	want, b, dir := closeAt(t, s, "2026-06-30", nil)
	var prior *accounting.Prior
	for i, end := range []string{"2026-06-30", "2026-09-30"} {
		if i > 0 {
			want, b, dir = closeAt(t, s, end, prior)
			// The financing liability opens as the prior filed it and rolls.
			for _, fw := range b.Expense.Financing {
				if fw.GrantID != "F-1" {
					continue
				}
				pg := prior.Grants[len(prior.Grants)-2]
				if pg.ID != "F-1" || !pg.Financing || fw.LiabilityOpen != pg.LiabilityEnd || fw.Reclassified <= 0 ||
					math.Abs(fw.LiabilityOpen+fw.Issued+fw.FairValueChange-fw.Reclassified-fw.LiabilityEnd) > 1e-6 {
					t.Errorf("F-1 after the prior close: %+v, filed %+v", fw, pg)
				}
			}
		}
		got, err := ReadPrior(dir)
		if err != nil {
			t.Fatal(err)
		}
		if got.Path != dir || len(got.SHA256) != 64 || got.SchemaVersion != SchemaVersion || got.ToolVersion != "test" {
			t.Errorf("close of %s: path %q, sha256 %q, schema %d, tool %q", end, got.Path, got.SHA256, got.SchemaVersion, got.ToolVersion)
		}
		got.Path, got.SHA256, got.SchemaVersion, got.ToolVersion = "", "", 0, ""
		if !reflect.DeepEqual(got, want) {
			for k := range want.Grants {
				if k < len(got.Grants) && !reflect.DeepEqual(got.Grants[k], want.Grants[k]) {
					t.Errorf("close of %s, grant %s:\nread  %+v\nfiled %+v", end, want.Grants[k].ID, got.Grants[k], want.Grants[k])
				}
			}
			got.Grants, want.Grants = nil, nil
			t.Fatalf("close of %s:\nread  %+v\nfiled %+v", end, got, want)
		}
		prior = got
		prior.Path = dir
	}
}

// A prior that is not a valuation.json grantworth wrote, or one of a
// newer format, is refused, saying what is wrong (errors.Is ErrPrior).
func TestReadPriorRefusals(t *testing.T) {
	_, _, good := closeAt(t, grantstest.Fernhollow(), "2026-06-30", nil)
	data, err := os.ReadFile(filepath.Join(good, "valuation.json"))
	if err != nil {
		t.Fatal(err)
	}
	write := func(body string) string {
		p := filepath.Join(t.TempDir(), "valuation.json")
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	cases := []struct{ name, path, want string }{
		{"missing", filepath.Join(t.TempDir(), "nowhere"), "no such file or folder"},
		{"empty folder", t.TempDir(), "the folder has no valuation.json"},
		{"not JSON", write("memo, not json"), "is not a valuation.json grantworth wrote"},
		{"another tool", write(`{"tool": {"name": "sheetcalc", "version": "9"}, "schema_version": 1}`), `its tool is "sheetcalc"`},
		{"no schema", write(`{"tool": {"name": "grantworth", "version": "0.0.9"}}`), "has no schema_version"},
		{"newer", write(strings.Replace(string(data), fmt.Sprintf(`"schema_version": %d`, SchemaVersion), `"schema_version": 7`, 1)), "format version 7"},
		{"no expense", write(`{"schema_version": 1, "tool": {"name": "grantworth"}, "valuation_date": "2026-06-30", "company": {"name": "X"}}`), "no expense attribution"},
	}
	for _, c := range cases {
		_, err := ReadPrior(c.path)
		if err == nil || !errors.Is(err, accounting.ErrPrior) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want an ErrPrior saying %q", c.name, err, c.want)
		}
	}
	if _, err := ReadPrior(filepath.Join(good, "valuation.json")); err != nil {
		t.Errorf("the file itself: %v", err)
	}
}

// A later close that keeps a grant's values without valuing it again
// (pricing.Options.Reuse, its valuation key unchanged) keeps exactly what
// valuing it afresh gives: every number of every reused tranche equal to
// the last bit, read back through valuation.json. A grant whose inputs
// changed is valued, and its drift noted.
func TestReusedValuesEqualAFreshRunToTheBit(t *testing.T) {
	s := grantstest.Fernhollow()
	_, _, dir := closeAt(t, s, "2026-06-30", nil)
	prior, err := ReadPrior(dir)
	if err != nil {
		t.Fatal(err)
	}
	s.Company.ValuationDate = grantstest.Day("2026-09-30")
	s.Company.PeriodStart = grants.Company{}.DefaultPeriodStart(s.Company.ValuationDate)
	if _, err := accounting.Open(s, prior); err != nil {
		t.Fatal(err)
	}
	// One grant's input corrected since the prior close.
	var changed string
	for i, g := range s.Grants {
		if g.Instrument == grants.Option {
			s.Grants[i].Strike *= 1.01
			changed = g.ID
			break
		}
	}
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		t.Fatal(errs)
	}
	run := func(o pricing.Options) (*pricing.Valuation, int) {
		jobs := 0
		o.Progress = func(_, total int) { jobs = total }
		v, err := pricing.Value(s, ins, o)
		if err != nil {
			t.Fatal(err)
		}
		return v, jobs
	}
	reused, jobsReused := run(pricing.Options{Locks: prior.Locks(), Reuse: true})
	fresh, jobsFresh := run(pricing.Options{})
	bits := math.Float64bits
	n := 0
	for i := range reused.Grants {
		r, f := &reused.Grants[i], &fresh.Grants[i]
		id := r.Inputs.Grant.ID
		_, filed := prior.Locks()[id]
		switch {
		case id == changed:
			if r.Reused || r.Drift == nil {
				t.Errorf("grant %s, its strike changed: reused %v, drift %v; want it valued and its drift noted", id, r.Reused, r.Drift)
			}
			continue
		case filed && r.Inputs.Grant.Classification != grants.Liability && !r.Reused:
			t.Errorf("grant %s: inputs as filed, yet valued again", id)
		case !r.Reused:
			continue
		}
		n++
		if r.Key != f.Key {
			t.Errorf("grant %s: key %s kept, %s afresh", id, r.Key, f.Key)
		}
		for k := range r.Results {
			a, b := r.Results[k], f.Results[k]
			if bits(a.Value) != bits(b.Value) || bits(a.ErrorEstimate) != bits(b.ErrorEstimate) || bits(a.ExpectedTermYears) != bits(b.ExpectedTermYears) || a.Steps != b.Steps ||
				bits(r.BSM[k].Value) != bits(f.BSM[k].Value) || bits(r.BSM[k].ExpectedTermYears) != bits(f.BSM[k].ExpectedTermYears) ||
				bits(r.RiskFreeRate[k]) != bits(f.RiskFreeRate[k]) || bits(r.SimplifiedRate[k]) != bits(f.SimplifiedRate[k]) {
				t.Errorf("grant %s tranche %d: kept %+v %+v %v %v, afresh %+v %+v %v %v", id, k+1, a, r.BSM[k], r.RiskFreeRate[k], r.SimplifiedRate[k], b, f.BSM[k], f.RiskFreeRate[k], f.SimplifiedRate[k])
			}
		}
	}
	t.Logf("%d grants kept their filed values; %d lattice jobs with reuse, %d without", n, jobsReused, jobsFresh)
	if n == 0 || jobsReused >= jobsFresh {
		t.Errorf("%d grants reused; %d lattice jobs with reuse, %d without: want fewer", n, jobsReused, jobsFresh)
	}
}

// A close written before SchemaVersion 3 (testdata/prior_schema2.json,
// written by the grantworth before it) and the same close written since
// (prior_schema3.json, whose expense tranches leave out what their grants'
// tranches give) are read back the same: the test company's second
// close, its liability-classified warrant G-002 accrued on a grant-date
// value apart from its latest remeasurement.
func TestReadPriorSchemaVersions(t *testing.T) {
	var read [2]*accounting.Prior
	for i, v := range []int{2, 3} {
		p, err := ReadPrior(filepath.Join("testdata", fmt.Sprintf("prior_schema%d.json", v)))
		if err != nil {
			t.Fatal(err)
		}
		if p.SchemaVersion != v {
			t.Fatalf("prior_schema%d.json: schema %d", v, p.SchemaVersion)
		}
		p.Path, p.SHA256, p.SchemaVersion = "", "", 0
		read[i] = p
	}
	if !reflect.DeepEqual(read[0], read[1]) {
		for k := range read[0].Grants {
			if k < len(read[1].Grants) && !reflect.DeepEqual(read[0].Grants[k], read[1].Grants[k]) {
				t.Errorf("grant %s:\nschema 2 %+v\nschema 3 %+v", read[0].Grants[k].ID, read[0].Grants[k], read[1].Grants[k])
			}
		}
		t.Fatal("the two files are read differently")
	}
	found := false
	for _, pg := range read[1].Grants {
		found = found || pg.ID == "G-002" && pg.Liability && len(pg.Remeasurements) > 1 && pg.Remeasurements[0].FairValue[0] != pg.Tranches[0].Result.Value &&
			pg.Remeasurements[0].FairValue[0] == 1.316496850549323
	}
	if !found {
		t.Error("G-002 is not read with its grant-date value 1.316496850549323 (the file's) apart from its latest")
	}

	// A liability-classified warrant whose values are all its grant's:
	// its tranches leave out both, read back as its grant's.
	data := smallPrior()
	var rows struct {
		Expense struct {
			ByGrant []struct {
				Tranches []map[string]any `json:"tranches"`
			} `json:"by_grant"`
		} `json:"expense"`
	}
	if err := json.Unmarshal(data, &rows); err != nil || len(rows.Expense.ByGrant) != 3 {
		t.Fatalf("smallPrior: %v", err)
	}
	for _, row := range rows.Expense.ByGrant[2].Tranches {
		for _, name := range []string{"vest_date", "shares", "fair_value_per_share", "grant_date_fair_value_per_share"} {
			if _, ok := row[name]; ok {
				t.Errorf("the warrant's expense tranche repeats its %s: %v", name, row)
			}
		}
	}
	p, err := readPrior(bytes.NewReader(data), "small", "small", scanBuffer)
	if err != nil {
		t.Fatal(err)
	}
	w := p.Grants[2]
	if !w.Liability || len(w.Remeasurements) != 2 || len(w.Remeasurements[0].FairValue) != 3 {
		t.Fatalf("the warrant: %+v", w)
	}
	for k, tr := range w.Tranches {
		if v := w.Remeasurements[0].FairValue[k]; v != tr.Result.Value || v == 0 {
			t.Errorf("the warrant's tranche %d accrued on %v, its grant's value %v", tr.Index, v, tr.Result.Value)
		}
	}
}
