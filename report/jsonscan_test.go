package report

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"
	"time"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/grantstest"
)

// smallPrior is a small valuation.json a later close can follow: two
// option grants and a liability-classified warrant of ledgerModel, three
// tranches each, the warrant remeasured once and exercised in part.
// Demo data.
func smallPrior() []byte {
	m := ledgerModel(3)
	for i := range m.Grants {
		m.Grants[i].Tranches = m.Grants[i].Tranches[:3]
		m.Expense.ByGrant[i].Tranches = m.Expense.ByGrant[i].Tranches[:3]
	}
	m.Assumptions = m.Assumptions[:8]
	w, ew := &m.Grants[2], &m.Expense.ByGrant[2]
	w.Instrument, w.Classification, ew.Instrument, ew.Liability = Warrant, "liability", Warrant, true
	ew.Events = []EventRecord{{Date: day("2026-08-20"), Event: "exercised", Shares: 500}}
	ew.Remeasurements = []Remeasurement{{Date: day("2026-06-30"), FairValuePerShare: []float64{0.5, 0.625, 0.75}}}
	m.Expense.Periods = []ExpensePeriod{{Start: day("2026-07-01"), End: day("2026-09-30"), Amount: 1234.5, Current: true, Label: "2026 Q3"}}
	var b bytes.Buffer
	if err := WriteJSON(&b, m); err != nil {
		panic(err)
	}
	return b.Bytes()
}

// priorViaEncodingJSON is the prior close in data read by encoding/json
// into a whole Model and handed to the same bookkeeping as ReadPrior's
// (addGrant, book, addInput, prior): the reference the scanner's reading
// must equal.
func priorViaEncodingJSON(t *testing.T, data []byte) *accounting.Prior {
	t.Helper()
	var m Model
	if err := json.Unmarshal(data, &m); err != nil {
		t.Fatal(err)
	}
	// The values an expense tranche leaves out (SchemaVersion 3) are
	// absent to the bookkeeping, not 0.
	var rows struct {
		Expense *struct {
			ByGrant []struct {
				Tranches []map[string]json.RawMessage `json:"tranches"`
			} `json:"by_grant"`
		} `json:"expense"`
	}
	if err := json.Unmarshal(data, &rows); err != nil {
		t.Fatal(err)
	}
	if rows.Expense != nil {
		for i, g := range rows.Expense.ByGrant {
			for k, row := range g.Tranches {
				et := &m.Expense.ByGrant[i].Tranches[k]
				if _, ok := row["fair_value_per_share"]; !ok {
					et.FairValuePerShare = math.NaN()
				}
				if _, ok := row["grant_date_fair_value_per_share"]; !ok {
					et.GrantDateFairValuePerShare = math.NaN()
				}
			}
		}
	}
	r := &priorReader{refuse: func(f string, a ...any) error { t.Fatalf(f, a...); return nil }, index: map[string]int{}}
	r.schemaVersion, r.tool, r.valuationDate, r.company = &m.SchemaVersion, &m.Tool, m.ValuationDate, m.Company
	for i := range m.Grants {
		r.addGrant(&m.Grants[i])
	}
	if m.Expense != nil {
		e := *m.Expense
		if e.ExpenseDetail != nil {
			for i := range e.ByGrant {
				r.book(&e.ByGrant[i])
			}
		}
		r.expense = &e
	}
	r.modifications = m.Modifications
	r.studies.Sensitivity, r.studies.Convergence, r.studies.MonteCarlo = sensitivityStudy(m.Sensitivity), convergenceStudy(m.Convergence), monteCarloStudy(m.CrossChecks)
	for i := range m.Assumptions {
		r.addInput(&m.Assumptions[i])
	}
	p, msg := r.prior()
	if msg != "" {
		t.Fatal(msg)
	}
	return p
}

// readBoth reads data as ReadPrior does and again a byte at a time
// through an 8-byte buffer, so that every token is split at every place;
// the two must agree, and the first is returned.
func readBoth(t *testing.T, data []byte) (*accounting.Prior, error) {
	t.Helper()
	p, err := readPrior(bytes.NewReader(data), "prior", "prior/valuation.json", scanBuffer)
	q, errq := readPrior(iotest.OneByteReader(bytes.NewReader(data)), "prior", "prior/valuation.json", 8)
	if (err == nil) != (errq == nil) || err != nil && err.Error() != errq.Error() {
		t.Fatalf("read whole: %v\nread a byte at a time: %v", err, errq)
	}
	if !reflect.DeepEqual(p, q) {
		t.Fatalf("read whole and a byte at a time differ:\n%+v\n%+v", p, q)
	}
	return p, err
}

// The scanner reads what encoding/json reads, field for field, from
// files grantworth wrote: a ledger, a small one with a liability warrant,
// and two closes of the test company (the second following the first,
// with warrants issued in financings and a modification).
func TestReadPriorMatchesEncodingJSON(t *testing.T) {
	files := map[string][]byte{"ledger": func() []byte {
		var b bytes.Buffer
		if err := WriteJSON(&b, ledgerModel(20)); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}(), "small": smallPrior()}
	s := grantstest.Fernhollow()
	d := grantstest.Day
	s.Grants = append(s.Grants,
		grants.Grant{ID: "F-1", Holder: "INVESTOR", Instrument: grants.Warrant, GrantDate: d("2025-09-01"), Shares: 50_000, Strike: 3.5,
			ExpiryDate: d("2032-09-01"), VestStart: d("2025-09-01"), VestEvery: 1, Classification: grants.Liability, ExerciseStyle: grants.American, Purpose: grants.Financing})
	s.Events = append(s.Events, grants.Event{GrantID: "F-1", Date: d("2026-08-20"), Kind: grants.Exercised, Shares: 5_000})
	_, _, dir := closeAt(t, s, "2026-06-30", nil)
	prior, err := ReadPrior(dir)
	if err != nil {
		t.Fatal(err)
	}
	_, _, dir2 := closeAt(t, s, "2026-09-30", prior)
	for i, dir := range []string{dir, dir2} {
		data, err := os.ReadFile(filepath.Join(dir, "valuation.json"))
		if err != nil {
			t.Fatal(err)
		}
		files["close "+strconv.Itoa(i+1)] = data
	}
	for name, data := range files {
		got, err := readBoth(t, data)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		got.Path, got.SHA256 = "", ""
		if want := priorViaEncodingJSON(t, data); !reflect.DeepEqual(got, want) {
			t.Errorf("%s: the scanner read\n%+v\nencoding/json\n%+v", name, got, want)
		}
	}
}

// A file that is not JSON, or whose members are not of their kind, is
// refused with the file, the line and the column where it goes wrong.
func TestReadPriorMalformed(t *testing.T) {
	head := "{\n  \"schema_version\": 2,\n  \"tool\": {\"name\": \"grantworth\", \"version\": \"1\"},\n"
	cases := []struct {
		name, body, want string
		syntax           bool // not JSON; else JSON with a member of the wrong kind
	}{
		{"empty", "", "line 1, column 1: found the end of the file where an object was expected", true},
		{"not an object", "[1, 2]", "line 1, column 1: found an array where an object was expected", false},
		{"missing comma", head + "  \"valuation_date\": \"2026-06-30\"\n  \"company\": {}\n}", "line 5, column 3: found '\"' where ',' or '}' was expected", true},
		{"trailing comma", head + "  \"warnings\": [\"a\",]\n}", "line 4, column 20: found ']' where a value was expected", true},
		{"truncated", head + "  \"grants\": [{\"grant_id\": \"G-1", "line 4, column 31: the file ends inside a string", true},
		{"truncated list", head + "  \"grants\": [", "line 4, column 14: found the end of the file where a value was expected", true},
		{"leading zero", head + "  \"settings\": {\"steps\": 012}\n}", `line 4, column 25: "012" is not a number`, true},
		{"bare fraction", head + "  \"grants\": [{\"tranches\": [{\"shares\": 1.}]}]\n}", `line 4, column 39: "1." is not a number`, true},
		{"minus alone", head + "  \"x\": -\n}", `line 4, column 8: "-" is not a number`, true},
		{"bad escape", head + "  \"x\": \"a\\qb\"\n}", `line 4, column 10: an unknown escape \q in a string`, true},
		{"bad unicode escape", head + "  \"x\": \"\\u12g4\"\n}", `line 4, column 9: a \u escape with "12g4", not four hexadecimal digits`, true},
		{"control character", head + "  \"x\": \"a\tb\"\n}", "line 4, column 10: a control character (byte 0x09) in a string", true},
		{"unquoted name", head + "  x: 1\n}", "line 4, column 3: found 'x' where a member name was expected", true},
		{"missing colon", head + "  \"x\" 1\n}", "line 4, column 7: found '1' where ':' after a member name was expected", true},
		{"bad literal", head + "  \"x\": nul\n}", "line 4, column 11: found '\\n' where the literal null was expected", true},
		{"after the end", head + "  \"x\": 1\n}\n}", "line 6, column 1: found '}' after the end of the top-level value", true},
		{"number for a string", head + "  \"grants\": [{\"grant_id\": 12}]\n}", "line 4, column 27: found a number where a string was expected", false},
		{"fraction for a count", head + "  \"grants\": [{\"tranches\": [{\"index\": 1.5}]}]\n}", "line 4, column 38: found 1.5 where a whole number was expected", false},
		{"bad date", head + "  \"valuation_date\": \"2026-02-30\"\n}", `line 4, column 21: found "2026-02-30" where a date YYYY-MM-DD was expected`, false},
		{"number for a date", head + "  \"valuation_date\": 20260630\n}", "line 4, column 21: found a number where a date YYYY-MM-DD was expected", false},
		{"object for a list", head + "  \"grants\": {}\n}", "line 4, column 13: found an object where an array was expected", false},
		{"out of range", head + "  \"grants\": [{\"tranches\": [{\"steps\": 1e999}]}]\n}", "line 4, column 38: found 1e999 where a whole number was expected", false},
		{"float out of range", head + "  \"expense\": {\"unrecognized_cost\": -1e999}\n}", "line 4, column 36: the number -1e999 is out of range", false},
	}
	for _, c := range cases {
		dir := t.TempDir()
		if err := os.WriteFile(filepath.Join(dir, "valuation.json"), []byte(c.body), 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := ReadPrior(dir)
		want := "prior close " + dir + ": is not a valuation.json grantworth wrote: " + filepath.Join(dir, "valuation.json") + ", " + c.want
		if err == nil || !errors.Is(err, accounting.ErrPrior) || err.Error() != want {
			t.Errorf("%s:\n got %v\nwant %s", c.name, err, want)
		}
		var je *jsonError
		if !errors.As(err, &je) || je.Syntax != c.syntax || json.Valid([]byte(c.body)) == c.syntax {
			t.Errorf("%s: a syntax error %v, want %v; encoding/json finds it valid: %v", c.name, je != nil && je.Syntax, c.syntax, json.Valid([]byte(c.body)))
		}
		if _, errb := readBoth(t, []byte(c.body)); errb == nil {
			t.Errorf("%s: read a byte at a time, no error", c.name)
		}
	}
}

// The scanner reads a number as strconv.ParseFloat does, to the bit,
// through its fast path (decimals up to 2⁵³ with at most 22 places) and
// past it: decimals of every length, exponents, the extremes.
func TestScannerFloat(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	read := func(s string) float64 {
		var f float64
		sc := newScanner(strings.NewReader(s), 8)
		sc.float(&f)
		if sc.err != nil {
			t.Fatalf("%s: %v", s, sc.err)
		}
		return f
	}
	cases := []string{"0", "-0", "0.1", "9007199254740992", "9007199254740993", "0.12345678901234567890123", "123456789012345678901",
		"1e5", "2.5E-3", "1e-400", "4.9e-324", "1.7976931348623157e308", "0.0000000000000000000001", "12345678901234567890.5"}
	for i := 0; i < 200_000; i++ {
		digits := strconv.FormatUint(rng.Uint64()>>uint(rng.IntN(64)), 10)
		at := rng.IntN(len(digits) + 1)
		s := digits[:at] + "." + digits[at:]
		switch {
		case at == 0:
			s = "0" + s
		case at == len(digits):
			s = digits
		}
		if rng.IntN(2) == 0 {
			s = "-" + s
		}
		if rng.IntN(8) == 0 {
			s += "e" + strconv.Itoa(rng.IntN(60)-30)
		}
		cases = append(cases, s)
	}
	for _, s := range cases {
		want, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		if got := read(s); math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("%s read as %v, strconv %v", s, got, want)
		}
	}
}

// Dates are written and read as the time package formats and parses
// them, every day from 1600 to 2400, and impossible days are refused.
func TestDatesMatchTimePackage(t *testing.T) {
	from := DateOf(time.Date(1600, 1, 1, 0, 0, 0, 0, time.UTC))
	to := DateOf(time.Date(2400, 12, 31, 0, 0, 0, 0, time.UTC))
	for d := from; d.n <= to.n; d.n++ {
		want := d.Time().AppendFormat(nil, "2006-01-02")
		if got := d.AppendISO(nil); !bytes.Equal(got, want) {
			t.Fatalf("day %d: AppendISO %s, time %s", d.n, got, want)
		}
		if back, ok := parseISODate(want); !ok || back != d {
			t.Fatalf("parseISODate(%s) = %v %v, want day %d", want, back.n, ok, d.n)
		}
	}
	for _, d := range []Date{DateOf(time.Date(-5, 3, 1, 0, 0, 0, 0, time.UTC)), DateOf(time.Date(12000, 3, 1, 0, 0, 0, 0, time.UTC))} {
		if got, want := d.AppendISO(nil), d.Time().AppendFormat(nil, "2006-01-02"); !bytes.Equal(got, want) {
			t.Errorf("AppendISO %s, time %s", got, want)
		}
	}
	for _, s := range []string{"2026-02-29", "2100-02-29", "2026-13-01", "2026-00-10", "2026-04-31", "2026-4-30", "20260430", "2026-04-3x", "0000-00-00"} {
		_, errT := time.Parse(time.DateOnly, s)
		if _, ok := parseISODate([]byte(s)); ok || errT == nil {
			t.Errorf("%s: parseISODate ok %v, time.Parse error %v; want both to refuse", s, ok, errT)
		}
	}
	if d, ok := parseISODate([]byte("2024-02-29")); !ok || d.String() != "2024-02-29" {
		t.Errorf("2024-02-29 read as %v", d)
	}
}

// Floats are written as encoding/json writes them: integers through the
// whole-number path, the switch to exponent form, -0, the extremes, and
// random bit patterns.
func TestAppendFloatMatchesEncodingJSON(t *testing.T) {
	vals := []float64{0, math.Copysign(0, -1), 1, -1, 545, 1 << 53, 1<<53 - 1, 1<<53 + 2, -(1 << 53), 1e15, 1e20, 1e21, 1e-6, 1e-7,
		999999999999999999999.0, 5e-324, math.MaxFloat64, -math.MaxFloat64, math.SmallestNonzeroFloat64, 0.1, 2.5, 1.82504999999999}
	rng := rand.New(rand.NewPCG(3, 5))
	for i := 0; i < 100_000; i++ {
		f := math.Float64frombits(rng.Uint64())
		if math.IsNaN(f) || math.IsInf(f, 0) {
			continue
		}
		vals = append(vals, f, math.Round(f*1e-300), float64(rng.Int64N(1<<60)))
	}
	for _, f := range vals {
		want, err := json.Marshal(f)
		if err != nil {
			t.Fatal(err)
		}
		if got := appendFloat(nil, f); !bytes.Equal(got, want) {
			t.Fatalf("%v (bits %x): appendFloat %s, encoding/json %s", f, math.Float64bits(f), got, want)
		}
	}
}

// FuzzReadPrior: whatever the bytes, the reader refuses or reads without
// a panic; it refuses every input that is not JSON (encoding/json's
// json.Valid) and calls a syntax error nothing that is JSON; and reading
// a byte at a time through a small buffer gives the same result.
func FuzzReadPrior(f *testing.F) {
	good := smallPrior()
	f.Add(good)
	f.Add(good[:len(good)/2])
	f.Add(bytes.Replace(good, []byte(fmt.Sprintf(`"schema_version": %d`, SchemaVersion)), []byte(fmt.Sprintf(`"schema_version": %d`, SchemaVersion+1)), 1))
	f.Add(bytes.Replace(good, []byte(`"index":2`), []byte(`"index":"2"`), 1))
	f.Add([]byte(`{"schema_version": 1, "tool": {"name": "grantworth"}, "valuation_date": "2026-06-30", "company": {"name": "X"}, "expense": {"by_grant": []}}`))
	f.Add([]byte(`{"a": [1, -0.5e+3, true, false, null, "\u00e9\n", {}], "b": {"c": []}}`))
	f.Add([]byte("\xef\xbb\xbf{}"))
	f.Fuzz(func(t *testing.T, data []byte) {
		_, err := readBoth(t, data)
		var je *jsonError
		syntax := errors.As(err, &je) && je.Syntax
		if valid := json.Valid(data); valid && syntax || !valid && err == nil {
			t.Fatalf("json.Valid %v, ReadPrior %v", valid, err)
		}
	})
}

// A one-line record is read in place only while its members are written
// as WriteJSON writes them; a record written otherwise (members moved,
// left out or unknown, white space between the tokens, a name with an
// escape, a number with an exponent, a null) is read from that member on
// by the member loop: the result is still encoding/json's, read whole and
// a byte at a time. The rewrites keep the file JSON (RFC 8259).
func TestReadPriorOneLineRecordsWrittenOtherwise(t *testing.T) {
	data := smallPrior()
	rewrites := map[string]func([]byte) []byte{
		"index moved last": func(b []byte) []byte {
			return regexp.MustCompile(`\{"index":(\d+),([^{}\n]*)\}`).ReplaceAll(b, []byte(`{$2,"index":$1}`))
		},
		"unknown member": func(b []byte) []byte {
			return bytes.ReplaceAll(b, []byte(`,"steps":`), []byte(`,"note":"a \"quoted\" word","steps":`))
		},
		"space before a colon": func(b []byte) []byte {
			return bytes.ReplaceAll(b, []byte(`,"shares":`), []byte(`,"shares" :`))
		},
		"space after a comma": func(b []byte) []byte {
			return bytes.ReplaceAll(b, []byte(`,"error_estimate":`), []byte(`, "error_estimate":`))
		},
		"space after the brace": func(b []byte) []byte {
			return bytes.ReplaceAll(b, []byte(`{"index":`), []byte("{ \"index\":"))
		},
		"escaped name": func(b []byte) []byte {
			return bytes.ReplaceAll(b, []byte(`,"cumulative":`), []byte(`,"cumul\u0061tive":`))
		},
		"exponent": func(b []byte) []byte {
			return regexp.MustCompile(`"(cumulative|fair_value_per_share)":([0-9]+)\.([0-9]+)`).ReplaceAll(b, []byte(`"$1":$2.${3}E+0`))
		},
		"null": func(b []byte) []byte {
			return bytes.ReplaceAll(b, []byte(`,"expected_term_years":`), []byte(`,"expected_term_years":null,"expected_term_years":`))
		},
	}
	for name, rewrite := range rewrites {
		b := rewrite(bytes.Clone(data))
		if bytes.Equal(b, data) {
			t.Fatalf("%s: the rewrite changed nothing", name)
		}
		got, err := readBoth(t, b)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		got.Path, got.SHA256 = "", ""
		if want := priorViaEncodingJSON(t, b); !reflect.DeepEqual(got, want) {
			t.Errorf("%s: the scanner read\n%+v\nencoding/json\n%+v", name, got, want)
		}
	}
}
