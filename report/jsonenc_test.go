package report

import (
	"bytes"
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// referenceJSON is valuation.json as encoding/json writes it, each
// expense tranche without what it repeats (slimTranche): the reference
// the one-pass encoder must equal but for white space.
func referenceJSON(t *testing.T, m *Model) []byte {
	t.Helper()
	c := withEmptyLists(m)
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(c); err != nil {
		t.Fatal(err)
	}
	out := b.Bytes()
	if c.Expense == nil || c.Expense.ExpenseDetail == nil {
		return out
	}
	// The rows come in order after the grants: each is replaced where
	// the one before it was.
	grantTranches := map[string][]Tranche{}
	for _, g := range c.Grants {
		grantTranches[g.ID] = g.Tranches
	}
	at := bytes.Index(out, []byte(`"expense":`))
	for _, eg := range c.Expense.ByGrant {
		for _, et := range eg.Tranches {
			full, err := json.Marshal(et)
			if err != nil {
				t.Fatal(err)
			}
			i := bytes.Index(out[at:], full)
			if i < 0 {
				t.Fatalf("grant %s: no row %s", eg.GrantID, full)
			}
			slim := slimTranche(t, et, grantTranches[eg.GrantID])
			out = append(out[:at+i], append(slim, out[at+i+len(full):]...)...)
			at += i + len(slim)
		}
	}
	return out
}

// slimTranche is et as valuation.json has it since SchemaVersion 3: its
// vest_date, shares and fair_value_per_share only where they are not
// those of the grant's tranche of the same index (in ts), its
// grant_date_fair_value_per_share only where it is not its
// fair_value_per_share.
func slimTranche(t *testing.T, et ExpenseTranche, ts []Tranche) []byte {
	t.Helper()
	type row struct {
		Index                      int      `json:"index"`
		VestDate                   *Date    `json:"vest_date,omitempty"`
		Shares                     *int64   `json:"shares,omitempty"`
		SharesCounted              float64  `json:"shares_counted"`
		FairValuePerShare          *float64 `json:"fair_value_per_share,omitempty"`
		GrantDateFairValuePerShare *float64 `json:"grant_date_fair_value_per_share,omitempty"`
		ExpectedShare              float64  `json:"expected_share_at_vest"`
		Cost                       float64  `json:"cost"`
		CumulativeOpen             float64  `json:"cumulative_at_period_start"`
		Amount                     float64  `json:"period_amount"`
		Cumulative                 float64  `json:"cumulative"`
		Unrecognized               float64  `json:"unrecognized_cost"`
		RemainingYears             float64  `json:"remaining_years"`
	}
	r := row{et.Index, &et.VestDate, &et.Shares, et.SharesCounted, &et.FairValuePerShare, &et.GrantDateFairValuePerShare,
		et.ExpectedShare, et.Cost, et.CumulativeOpen, et.Amount, et.Cumulative, et.Unrecognized, et.RemainingYears}
	// row is ExpenseTranche's members, all of them, in their order.
	if a, b := mustJSON(t, r), mustJSON(t, et); !bytes.Equal(a, b) {
		t.Fatalf("the reference's row is not an ExpenseTranche:\n%s\n%s", a, b)
	}
	for _, gt := range ts {
		if gt.Index != et.Index {
			continue
		}
		if gt.VestDate == et.VestDate {
			r.VestDate = nil
		}
		if gt.Shares == et.Shares {
			r.Shares = nil
		}
		if math.Float64bits(gt.FairValuePerShare) == math.Float64bits(et.FairValuePerShare) {
			r.FairValuePerShare = nil
		}
		break
	}
	if math.Float64bits(et.GrantDateFairValuePerShare) == math.Float64bits(et.FairValuePerShare) {
		r.GrantDateFairValuePerShare = nil
	}
	return mustJSON(t, r)
}

func mustJSON(t *testing.T, v any) []byte {
	t.Helper()
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return b
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

	// Expense tranches that differ from their grant's, or have none.
	m = ledgerModel(4)
	ts := m.Expense.ByGrant[0].Tranches
	ts[0].VestDate = day("2026-01-01")
	ts[1].Shares++
	ts[2].FairValuePerShare = math.Copysign(0, -1)
	m.Grants[0].Tranches[2].FairValuePerShare = 0
	ts[3].GrantDateFairValuePerShare = 2 * ts[3].FairValuePerShare
	ts[4].Index = 99
	ts[5], ts[6] = ts[6], ts[5]
	m.Expense.ByGrant[1].GrantID = "not a grant"
	m.Grants[2].Tranches = nil
	m.Expense.ByGrant[3].Tranches = nil
	sameJSON(t, "expense tranches", m)
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

// The encoder writes a fractional number it wrote lately from the bytes
// it kept (jsonEnc.floats): a stream drawn from a few values, so that
// each is written again, after others that share its place, next to
// values one bit apart, gives encoding/json's bytes for every one (the reference), a
// value at a time as each is written anew.
func TestJSONEncoderRepeatedFloats(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	pool := []float64{10.005479452054795, 0.0459025598046908, 5e-324, -1.5e300, 1e-7, 0.1, 2.5, 545.25, -0.3}
	for len(pool) < 3*floatMemos {
		x := rng.Float64() * math.Pow(10, float64(rng.IntN(40)-20))
		pool = append(pool, x, math.Nextafter(x, 2*x)) // neighbours: one bit apart
	}
	e := &jsonEnc{}
	for i := 0; i < 50_000; i++ {
		f := pool[rng.IntN(len(pool))]
		if rng.IntN(2) == 0 {
			f = -f
		}
		e.buf = e.buf[:0]
		e.float(f)
		want, err := json.Marshal(f)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(e.buf, want) {
			t.Fatalf("%v (bits %x), number %d: encoder %s, encoding/json %s", f, math.Float64bits(f), i, e.buf, want)
		}
	}
}
