package report

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// referenceJSON is valuation.json as encoding/json writes it: the
// reference the one-pass encoder must equal but for white space.
func referenceJSON(t *testing.T, m *Model) []byte {
	t.Helper()
	c := withEmptyLists(m)
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(c); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func sameJSON(t *testing.T, name string, m *Model) {
	t.Helper()
	var got bytes.Buffer
	if err := WriteJSON(&got, m); err != nil {
		t.Fatal(err)
	}
	sameTokens(t, name, got.Bytes(), referenceJSON(t, m))
}

// sameTokens fails unless got and want are the same bytes but for white
// space between tokens (json.Compact), and got is valid JSON.
func sameTokens(t *testing.T, name string, got, want []byte) {
	t.Helper()
	var g, w bytes.Buffer
	if err := json.Compact(&g, got); err != nil {
		t.Fatalf("%s: WriteJSON wrote invalid JSON: %v", name, err)
	}
	if err := json.Compact(&w, want); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(g.Bytes(), w.Bytes()) {
		g, w := g.Bytes(), w.Bytes()
		i := 0
		for i < len(g) && i < len(w) && g[i] == w[i] {
			i++
		}
		lo := max(0, i-80)
		t.Fatalf("%s: WriteJSON differs from encoding/json at byte %d:\n got: %q\nwant: %q", name, i, g[lo:min(len(g), i+80)], w[lo:min(len(w), i+80)])
	}
}

// The one-pass encoder writes what encoding/json writes, on the fixture,
// on a Model with an expense attribution, and on the awkward cases: text
// that needs escaping (quotes, control characters, <>&, U+2028, invalid
// UTF-8, non-Latin letters), floats at the switch to exponent form, -0,
// omitted empty fields and nil lists.
func TestJSONEncoderMatchesEncodingJSON(t *testing.T) {
	sameJSON(t, "fixture", fixture())
	sameJSON(t, "expense", expenseModelFor(t, expenseSchedule()))

	m := fixture()
	m.Warnings = []string{"a \"quoted\" \\ back\tslash\n", "<b>&amp;</b>", "line\u2028sep\u2029", "bad \xff utf-8", "Ελληνικά 日本語", "\x00\x1f\x7f", ""}
	g := &m.Grants[0]
	g.Classification, g.Dilution = "", nil
	g.Tranches[0].FairValuePerShare = 1e-7
	g.Tranches[0].ErrorEstimate = 1e-6
	g.Tranches[0].YearsToVest = math.Copysign(0, -1)
	g.Tranches[0].SimplifiedRate = 1e21
	g.Tranches[0].SimplifiedTerm = 999999999999999999999.0
	g.Tranches[0].RiskFreeRate = 5e-324
	g.Tranches[0].VestDate = Date{}
	m.Grants[1].Tranches = nil
	m.Sensitivity = nil
	m.Convergence = nil
	m.Expense = &Expense{UnrecognizedCost: 12.5}
	m.Assumptions = append(m.Assumptions, Assumption{GrantID: "x", Name: "n", Term: true}, Assumption{})
	sameJSON(t, "awkward", m)

	sameJSON(t, "empty", &Model{})
	sameJSON(t, "ledger", ledgerModel(5))
}

// A NaN or an infinity stops the writer wherever it is, the expense's
// records (through the embedded ExpenseDetail) included, and the error
// names it.
func TestJSONRejectsNonFiniteInExpense(t *testing.T) {
	m := ledgerModel(3)
	m.Expense.ByGrant[2].Tranches[5].Cumulative = math.Inf(-1)
	err := WriteJSON(&bytes.Buffer{}, m)
	if err == nil || !strings.Contains(err.Error(), "ByGrant[2].Tranches[5].Cumulative is -Inf") {
		t.Fatalf("WriteJSON with an infinity: err = %v, want one naming ByGrant[2].Tranches[5].Cumulative", err)
	}
}

// Flat records in lists (tranches, events, inputs, periods) take a line
// each, without spaces; everything else is indented by two spaces.
func TestJSONFlatRecordsOnOneLine(t *testing.T) {
	m := expenseModelFor(t, expenseSchedule())
	var b bytes.Buffer
	if err := WriteJSON(&b, m); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(b.String(), "\n")
	tranches, flat := 0, 0
	for _, l := range lines {
		x := strings.TrimLeft(l, " ")
		if strings.HasPrefix(x, `{"index":`) {
			tranches++
			if !strings.HasSuffix(strings.TrimSuffix(x, ","), "}") || strings.Contains(x, `": `) {
				t.Errorf("a tranche is not one compact line: %q", l)
			}
		}
		if strings.HasPrefix(x, "{") && strings.HasSuffix(strings.TrimSuffix(x, ","), "}") {
			flat++
		}
	}
	want := 0
	for _, g := range m.Grants {
		want += len(g.Tranches)
	}
	for _, g := range m.Expense.ByGrant {
		want += len(g.Tranches)
	}
	if tranches != want {
		t.Errorf("%d tranche lines, want %d (the grants' and the expense's)", tranches, want)
	}
	if !strings.HasPrefix(b.String(), "{\n  \"schema_version\": ") {
		t.Errorf("the top level is not indented: %q", b.String()[:40])
	}
}
