package report

import (
	"bytes"
	"encoding/json"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// golden compares got with testdata/name; -update rewrites it. A missing
// golden file fails.
func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("golden %s: %v (run go test ./report -update to create it)", path, err)
	}
	if !bytes.Equal(got, want) {
		gl, wl := strings.Split(string(got), "\n"), strings.Split(string(want), "\n")
		for i := 0; i < len(gl) || i < len(wl); i++ {
			var g, w string
			if i < len(gl) {
				g = gl[i]
			}
			if i < len(wl) {
				w = wl[i]
			}
			if g != w {
				t.Fatalf("%s differs from the golden at line %d:\n got: %s\nwant: %s\n(run with -update if the change is intended)", name, i+1, g, w)
			}
		}
	}
}

func TestJSONGolden(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteJSON(&buf, fixture()); err != nil {
		t.Fatal(err)
	}
	golden(t, "fixture.json", buf.Bytes())
}

// The fields DESIGN §4.3 requires, with their JSON types.
func TestJSONContractFields(t *testing.T) {
	m := fixture()
	m.Expense = &Expense{Periods: []ExpensePeriod{{Start: day("2026-07-01"), End: day("2026-09-30"), Amount: 1234.5}}, UnrecognizedCost: 10, WeightedAverageRemainingYears: 1.5}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, m); err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	obj := func(v any, path string) map[string]any {
		o, ok := v.(map[string]any)
		if !ok {
			t.Fatalf("%s is %T, want an object", path, v)
		}
		return o
	}
	need := func(o map[string]any, path string, kinds map[string]string) {
		for k, kind := range kinds {
			v, ok := o[k]
			if !ok {
				t.Errorf("%s.%s missing", path, k)
				continue
			}
			okKind := false
			switch kind {
			case "string":
				_, okKind = v.(string)
			case "number":
				_, okKind = v.(float64)
			case "date":
				s, _ := v.(string)
				okKind = len(s) == 10 && s[4] == '-' && s[7] == '-'
			case "array":
				_, okKind = v.([]any)
			case "object":
				_, okKind = v.(map[string]any)
			}
			if !okKind {
				t.Errorf("%s.%s = %v, want a %s", path, k, v, kind)
			}
		}
	}
	need(doc, "", map[string]string{"tool": "object", "input": "object", "valuation_date": "date", "grants": "array",
		"totals": "object", "expense": "object", "warnings": "array"})
	need(obj(doc["tool"], "tool"), "tool", map[string]string{"name": "string", "version": "string"})
	need(obj(doc["input"], "input"), "input", map[string]string{"path": "string", "sha256": "string"})
	need(obj(doc["totals"], "totals"), "totals", map[string]string{"grants": "number", "tranches": "number", "fair_value_total": "number"})
	ex := obj(doc["expense"], "expense")
	need(ex, "expense", map[string]string{"periods": "array", "unrecognized_cost": "number", "weighted_average_remaining_years": "number"})
	need(obj(ex["periods"].([]any)[0], "expense.periods[0]"), "expense.periods[0]", map[string]string{"start": "date", "end": "date", "amount": "number"})
	for _, g := range doc["grants"].([]any) {
		go_ := obj(g, "grant")
		need(go_, "grant", map[string]string{"grant_id": "string", "instrument": "string", "grant_date": "date", "shares": "number",
			"strike": "number", "share_price": "number", "volatility": "number", "risk_free_rate": "number", "dividend_yield": "number",
			"exercise_multiple": "number", "post_vesting_exit_rate": "number", "fair_value_per_share": "number",
			"fair_value_total": "number", "tranches": "array"})
		for _, tr := range go_["tranches"].([]any) {
			need(obj(tr, "tranche"), "tranche", map[string]string{"index": "number", "vest_date": "date", "shares": "number",
				"fair_value_per_share": "number", "error_estimate": "number", "expected_term_years": "number",
				"bsm_simplified_value": "number", "fair_value_total": "number"})
		}
	}
}

func TestJSONRejectsNaN(t *testing.T) {
	m := fixture()
	m.Grants[1].Tranches[0].ErrorEstimate = math.NaN()
	err := WriteJSON(&bytes.Buffer{}, m)
	if err == nil || !strings.Contains(err.Error(), "Grants[1].Tranches[0].ErrorEstimate") {
		t.Fatalf("WriteJSON with a NaN: err = %v, want one naming Grants[1].Tranches[0].ErrorEstimate", err)
	}
}

func TestJSONDeterministic(t *testing.T) {
	var a, b bytes.Buffer
	if err := WriteJSON(&a, fixture()); err != nil {
		t.Fatal(err)
	}
	if err := WriteJSON(&b, fixture()); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Fatal("two renderings of the same Model differ")
	}
}

// WriteJSON streams the file field by field and grant by grant; the bytes
// must be those of encoding/json's Encoder on the whole Model but for
// white space.
func TestJSONStreamingMatchesEncoder(t *testing.T) {
	m := fixture()
	m.Expense = &Expense{Periods: []ExpensePeriod{{Start: day("2026-07-01"), End: day("2026-09-30"), Amount: 1.5}}}
	m.Grants[0].Holder = `quote " backslash \ brace { bracket ] <tag> & é`
	var got, want bytes.Buffer
	if err := WriteJSON(&got, m); err != nil {
		t.Fatal(err)
	}
	enc := json.NewEncoder(&want)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(m); err != nil {
		t.Fatal(err)
	}
	sameTokens(t, "streamed", got.Bytes(), want.Bytes())
}
