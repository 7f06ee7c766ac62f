package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"grantworth/report"
)

// quarters are the closes of sample/quarters, in order.
var quarters = []string{"2025-12-31", "2026-03-31", "2026-06-30", "2026-09-30"}

// chainJSON is a valuation.json read for the checks of the chain.
type chainJSON struct {
	Grants []struct {
		ID          string  `json:"grant_id"`
		Volatility  float64 `json:"volatility"`
		ValueStatus string  `json:"value_status"`
		Condition   *struct {
			Kind string `json:"kind"`
		} `json:"condition"`
	} `json:"grants"`
	Expense struct {
		PeriodAmount     float64 `json:"period_amount"`
		Cumulative       float64 `json:"cumulative"`
		UnrecognizedCost float64 `json:"unrecognized_cost"`
	} `json:"expense"`
	Reconciliation *struct {
		PriorValuationDate string    `json:"prior_valuation_date"`
		Locked             int       `json:"grants_locked"`
		UnrecognizedCost   walkJSON  `json:"unrecognized_cost"`
		Expense            walkJSON  `json:"expense"`
		WarrantLiability   *walkJSON `json:"warrant_liability"`
		Outstanding        []struct {
			Instrument string `json:"instrument"`
			AddsUp     bool   `json:"adds_up"`
		} `json:"awards_outstanding"`
		CatchUps []struct {
			GrantID string  `json:"grant_id"`
			Cause   string  `json:"cause"`
			Detail  string  `json:"detail"`
			Amount  float64 `json:"amount"`
		} `json:"catch_ups"`
	} `json:"reconciliation"`
}

type walkJSON struct {
	Opening *struct {
		Amount float64 `json:"amount"`
	} `json:"opening"`
	Lines []struct {
		Key    string  `json:"key"`
		Amount float64 `json:"amount"`
	} `json:"lines"`
	Closing struct {
		Amount float64 `json:"amount"`
	} `json:"closing"`
	AddsUp bool `json:"adds_up"`
}

// cents is x in whole cents (the file's amounts are rounded to the cent).
func cents(x float64) int64 { return int64(math.Round(x * 100)) }

// footsToTheCent checks a walk read back from valuation.json: its lines
// add up to closing less opening, in whole cents.
func footsToTheCent(t *testing.T, what string, w walkJSON) {
	t.Helper()
	var sum int64
	if w.Opening != nil {
		sum = cents(w.Opening.Amount)
	}
	for _, l := range w.Lines {
		sum += cents(l.Amount)
	}
	if sum != cents(w.Closing.Amount) || !w.AddsUp {
		t.Errorf("%s: opening and lines come to %d cents, closing %d (adds_up %v)", what, sum, cents(w.Closing.Amount), w.AddsUp)
	}
}

// The sample's quarters closed as a chain, each with the last one's
// output as its prior (the README's example), are run once for the tests
// of this file.
var sampleChain = sync.OnceValue(func() (c struct {
	dir  string
	runs []result
	json []chainJSON
	err  error
}) {
	c.dir, c.err = os.MkdirTemp("", "grantworth-chain")
	if c.err != nil {
		return c
	}
	prev := ""
	for _, q := range quarters {
		args := []string{"value", filepath.Join("..", "..", "sample", "quarters", q), "--out", filepath.Join(c.dir, q)}
		if prev != "" {
			args = append(args, "--prior", filepath.Join(c.dir, prev))
		}
		var out, errb bytes.Buffer
		r := result{code: run(args, &IO{In: strings.NewReader(""), Out: &out, Err: &errb})}
		r.stdout, r.stderr = out.String(), errb.String()
		c.runs = append(c.runs, r)
		var j chainJSON
		if r.code == 0 {
			b, err := os.ReadFile(filepath.Join(c.dir, q, "valuation.json"))
			if err == nil {
				err = json.Unmarshal(b, &j)
			}
			if err != nil && c.err == nil {
				c.err = err
			}
		}
		c.json = append(c.json, j)
		prev = q
	}
	return c
})

// result is one run of the command.
type result struct {
	code           int
	stdout, stderr string
}

// The sample's four quarter ends closed as a chain (sample/quarters): each
// close reconciles to the last to the cent; the grants of earlier
// quarters keep their filed values through the Q3 peer study's new
// volatility, which the Q3 grants take from its effective_date; and the
// departure recorded late is booked in Q3 as a catch-up naming its cell.
func TestValuePriorSampleChain(t *testing.T) {
	c := sampleChain()
	if c.err != nil {
		t.Fatal(c.err)
	}
	for i, r := range c.runs {
		if r.code != 0 {
			t.Fatalf("close of %s: exit %d\n%s", quarters[i], r.code, r.stderr)
		}
		j := c.json[i]
		t.Logf("close of %s: expense %.2f, cumulative %.2f, unrecognized %.2f", quarters[i], j.Expense.PeriodAmount, j.Expense.Cumulative, j.Expense.UnrecognizedCost)
		if i == 0 {
			if j.Reconciliation != nil {
				t.Error("the first close has a reconciliation")
			}
			continue
		}
		r0 := j.Reconciliation
		if r0 == nil || r0.PriorValuationDate != quarters[i-1] {
			t.Fatalf("close of %s: reconciliation %+v", quarters[i], r0)
		}
		footsToTheCent(t, quarters[i]+" unrecognized cost", r0.UnrecognizedCost)
		footsToTheCent(t, quarters[i]+" expense", r0.Expense)
		if r0.WarrantLiability != nil {
			footsToTheCent(t, quarters[i]+" warrant liability", *r0.WarrantLiability)
		}
		for _, o := range r0.Outstanding {
			if !o.AddsUp {
				t.Errorf("%s: the %s count walk does not add up", quarters[i], o.Instrument)
			}
		}
		// The walks start where the last close ended, and the expense
		// walk ends at the period's expense.
		prev := c.json[i-1]
		if cents(r0.UnrecognizedCost.Opening.Amount) != cents(prev.Expense.UnrecognizedCost) ||
			cents(r0.UnrecognizedCost.Closing.Amount) != cents(j.Expense.UnrecognizedCost) ||
			cents(r0.Expense.Closing.Amount) != cents(j.Expense.PeriodAmount) {
			t.Errorf("%s: walks from %v to %v and %v; the closes say %v, %v and %v", quarters[i], r0.UnrecognizedCost.Opening.Amount,
				r0.UnrecognizedCost.Closing.Amount, r0.Expense.Closing.Amount, prev.Expense.UnrecognizedCost, j.Expense.UnrecognizedCost, j.Expense.PeriodAmount)
		}
		// Closed periods stand: this close's cumulative expense is the
		// last one's plus this period's.
		if d := j.Expense.Cumulative - prev.Expense.Cumulative - j.Expense.PeriodAmount; math.Abs(d) > 1e-6 {
			t.Errorf("%s: cumulative %v, prior %v, period %v", quarters[i], j.Expense.Cumulative, prev.Expense.Cumulative, j.Expense.PeriodAmount)
		}
	}
	// The README's table of the chain shows these closes' figures.
	readme, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	if err != nil {
		t.Fatal(err)
	}
	for i, j := range c.json {
		row := ""
		for _, l := range strings.Split(string(readme), "\n") {
			if strings.HasPrefix(l, "| "+quarters[i]+" |") {
				row = l
			}
		}
		for _, v := range []float64{j.Expense.PeriodAmount, j.Expense.Cumulative, j.Expense.UnrecognizedCost} {
			if !strings.Contains(row, " "+money2(v)+" ") {
				t.Errorf("README's row for the close of %s does not show %s: %q", quarters[i], money2(v), row)
			}
		}
	}
	q3 := c.json[3]
	status := map[string]string{}
	for _, g := range q3.Grants {
		status[g.ID] = g.ValueStatus
		if g.Condition != nil && g.Condition.Kind == "relative-tsr" {
			continue // its volatility is estimated from its price files
		}
		if g.ValueStatus == "locked" && g.Volatility != 0.52 || g.ValueStatus == "measured" && g.Volatility != 0.60 {
			t.Errorf("grant %s (%s) at volatility %v", g.ID, g.ValueStatus, g.Volatility)
		}
	}
	if status["TW-001"] != "locked" || status["TW-036"] != "measured" || status["TW-039"] != "remeasured" {
		t.Errorf("statuses %v", status)
	}
	cu := q3.Reconciliation.CatchUps
	if len(cu) != 1 || cu[0].GrantID != "TW-012" || cu[0].Cause != "late_event" || !strings.Contains(cu[0].Detail, "forfeited 21,000 shares on 2026-05-14 (Events!B") || !(cu[0].Amount < 0) {
		t.Fatalf("Q3 catch-ups %+v", cu)
	}
	var catchLine float64
	for _, l := range q3.Reconciliation.Expense.Lines {
		if l.Key == "catch_ups" {
			catchLine = l.Amount
		}
	}
	if cents(catchLine) != cents(cu[0].Amount) {
		t.Errorf("expense walk's catch-ups %v, the catch-up %v", catchLine, cu[0].Amount)
	}
}

// A close that follows a prior leaves the prior's files as they were.
func TestValuePriorUntouched(t *testing.T) {
	c := sampleChain()
	if c.err != nil {
		t.Fatal(c.err)
	}
	before := folderHash(t, filepath.Join(c.dir, quarters[2]))
	out := t.TempDir()
	if code, _, errs := runArgs(t, "value", filepath.Join("..", "..", "sample", "quarters", quarters[3]), "--out", out, "--force",
		"--prior", filepath.Join(c.dir, quarters[2], "valuation.json"), "--correct", "TW-005"); code != 0 {
		t.Fatalf("exit %d\n%s", code, errs)
	}
	if after := folderHash(t, filepath.Join(c.dir, quarters[2])); after != before {
		t.Error("the prior close's folder changed")
	}
	b, err := os.ReadFile(filepath.Join(out, "valuation.json"))
	if err != nil {
		t.Fatal(err)
	}
	var j chainJSON
	if err := json.Unmarshal(b, &j); err != nil {
		t.Fatal(err)
	}
	found := false
	for _, cu := range j.Reconciliation.CatchUps {
		found = found || cu.GrantID == "TW-005" && cu.Cause == "fair_value_corrected"
	}
	if !found {
		t.Errorf("--correct TW-005 booked no correction: %+v", j.Reconciliation.CatchUps)
	}
}

func folderHash(t *testing.T, dir string) string {
	t.Helper()
	h := sha256.New()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range ents {
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(h, "%s %d\n", e.Name(), len(b))
		h.Write(b)
	}
	return fmt.Sprintf("%x", h.Sum(nil))
}

// Refusals (DESIGN §4.1): exit 2, every reason said, nothing written, the
// prior left as it was.
func TestValuePriorRefusals(t *testing.T) {
	c := sampleChain()
	if c.err != nil {
		t.Fatal(c.err)
	}
	q2 := filepath.Join(c.dir, quarters[2])
	q3schedule := filepath.Join("..", "..", "sample", "quarters", quarters[3])
	q1schedule := filepath.Join("..", "..", "sample", "quarters", quarters[1])
	other := t.TempDir()
	sample, err := filepath.Abs(filepath.Join(q3schedule, "..", ".."))
	if err != nil {
		t.Fatal(err)
	}
	ents, err := os.ReadDir(q3schedule)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range ents {
		f := e.Name()
		b, err := os.ReadFile(filepath.Join(q3schedule, f))
		if err != nil {
			t.Fatal(err)
		}
		switch f {
		case "company.csv":
			b = []byte(strings.Replace(string(b), "Tarnwick Labs, Inc.", "Orrin Biotics, Inc.", 1))
		case "conditions.csv", "peers.csv": // price files relative to the sample folder
			b = []byte(strings.ReplaceAll(string(b), "../../", filepath.ToSlash(sample)+"/"))
		}
		if err := os.WriteFile(filepath.Join(other, f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	newer := filepath.Join(t.TempDir(), "valuation.json")
	b, _ := os.ReadFile(filepath.Join(q2, "valuation.json"))
	next := report.SchemaVersion + 1
	if err := os.WriteFile(newer, []byte(strings.Replace(string(b), fmt.Sprintf(`"schema_version": %d`, report.SchemaVersion), fmt.Sprintf(`"schema_version": %d`, next), 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	notOurs := filepath.Join(t.TempDir(), "valuation.json")
	if err := os.WriteFile(notOurs, []byte(`{"rows": []}`), 0o644); err != nil {
		t.Fatal(err)
	}
	before := folderHash(t, q2)
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"another company", []string{"value", other, "--prior", q2}, `is of "Tarnwick Labs, Inc.", this schedule of "Orrin Biotics, Inc."`},
		{"not before", []string{"value", q1schedule, "--prior", q2}, "not before this valuation date 2026-03-31"},
		{"same date", []string{"value", q3schedule, "--valuation-date", "2026-06-30", "--prior", q2}, "not before this valuation date"},
		{"not ours", []string{"value", q3schedule, "--prior", notOurs}, `is not a valuation.json grantworth wrote (its tool is "")`},
		{"newer format", []string{"value", q3schedule, "--prior", newer}, fmt.Sprintf("format version %d", next)},
		{"prior's folder", []string{"value", q3schedule, "--prior", q2, "--out", q2, "--force"}, "is the prior close's folder"},
		{"correct without prior", []string{"value", q3schedule, "--correct", "TW-001"}, "--correct needs --prior"},
		{"correct unknown", []string{"value", q3schedule, "--prior", q2, "--correct", "TW-999"}, "--correct TW-999: no such grant"},
		{"correct not filed", []string{"value", q3schedule, "--prior", q2, "--correct", "TW-036"}, "filed no value for it to correct"},
	}
	for _, k := range cases {
		args := k.args
		out := t.TempDir()
		if !contains(args, "--out") {
			args = append(args, "--out", out)
		}
		code, stdout, errs := runArgs(t, args...)
		if code != exitInput || !strings.Contains(errs, k.want) {
			t.Errorf("%s: exit %d, stderr %q; want exit 2 saying %q", k.name, code, errs, k.want)
		}
		if ents, _ := os.ReadDir(out); len(ents) > 0 || stdout != "" {
			t.Errorf("%s: wrote %d files, printed %q", k.name, len(ents), stdout)
		}
	}
	if folderHash(t, q2) != before {
		t.Error("a refused run changed the prior close's folder")
	}
}

func contains(ss []string, s string) bool {
	for _, x := range ss {
		if x == s {
			return true
		}
	}
	return false
}
