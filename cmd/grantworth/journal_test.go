package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"grantworth/report"
)

// centsOf reads a journal amount, a plain decimal number with two decimals,
// as whole cents; the empty cell is 0.
func centsOf(t *testing.T, s string) int64 {
	t.Helper()
	if s == "" {
		return 0
	}
	whole, frac, ok := strings.Cut(s, ".")
	if !ok || len(frac) != 2 || strings.HasPrefix(s, "-") || strings.HasPrefix(s, "+") {
		t.Fatalf("amount %q is not a plain decimal number with two decimals", s)
	}
	n, err := strconv.ParseInt(whole+frac, 10, 64)
	if err != nil {
		t.Fatalf("amount %q: %v", s, err)
	}
	return n
}

// The sample's journal.csv (DESIGN §4.4): the golden file, then the file
// imported back with encoding/csv as a ledger would: the header exactly,
// one debit or one credit per line, every entry balancing to the cent, the
// compensation expense lines adding up to the period's expense of
// valuation.json, the same lines as the JSON journal, the grant named on
// the lines of a per-grant entry, and no text cell starting like a formula.
func TestValueSampleJournal(t *testing.T) {
	dir, _, _, js := valueSample(t)
	b, err := os.ReadFile(filepath.Join(dir, "journal.csv"))
	if err != nil {
		t.Fatal(err)
	}
	goldenFile(t, "tarnwick.journal.csv", b)
	var m report.Model
	if err := json.Unmarshal(js, &m); err != nil {
		t.Fatal(err)
	}
	e := m.Expense.ExpenseDetail
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Join(recs[0], ",") != "entry,date,account_code,account,cost_center,debit,credit,currency,description" {
		t.Fatalf("header %v", recs[0])
	}
	var lines []report.JournalLine
	var numbers []int
	for _, je := range e.Journal {
		for _, l := range je.Lines {
			lines = append(lines, l)
			numbers = append(numbers, je.Number)
		}
	}
	if len(recs)-1 != len(lines) || len(lines) == 0 {
		t.Fatalf("%d rows for %d journal lines in valuation.json", len(recs)-1, len(lines))
	}
	balance := map[string]int64{}
	var comp, debits, jsonDebits int64
	for i, r := range recs[1:] {
		l := lines[i]
		dr, cr := centsOf(t, r[5]), centsOf(t, r[6])
		if (dr == 0) == (cr == 0) {
			t.Errorf("row %d: debit %q credit %q: want exactly one", i+2, r[5], r[6])
		}
		if r[0] != strconv.Itoa(numbers[i]) || r[1] != "2026-09-30" || r[7] != "USD" || r[2] != l.AccountCode || r[3] != l.Account || r[4] != l.CostCenter {
			t.Errorf("row %d %v does not match the JSON line %+v of entry %d", i+2, r, l, numbers[i])
		}
		if dr != int64(math.Round(l.Debit*100)) || cr != int64(math.Round(l.Credit*100)) {
			t.Errorf("row %d: %q %q, JSON %v %v", i+2, r[5], r[6], l.Debit, l.Credit)
		}
		if l.GrantID != "" && !strings.Contains(r[8], l.GrantID) {
			t.Errorf("row %d: description %q does not name grant %s", i+2, r[8], l.GrantID)
		}
		for _, cell := range r {
			if cell != "" && strings.ContainsRune("=+-@", rune(cell[0])) {
				t.Errorf("row %d: cell %q starts like a formula", i+2, cell)
			}
		}
		balance[r[0]] += dr - cr
		debits += dr
		jsonDebits += int64(math.Round(l.Debit * 100))
		if l.Role == "compensation_expense" {
			comp += dr - cr
			if r[4] == "" {
				t.Errorf("row %d: a compensation expense line with no cost centre", i+2)
			}
		}
	}
	for n, b := range balance {
		if b != 0 {
			t.Errorf("entry %s: debits less credits %d cents", n, b)
		}
	}
	if want := int64(math.Round(e.Amount * 100)); comp != want {
		t.Errorf("compensation expense lines add to %d cents, the period's expense is %.4f", comp, e.Amount)
	}
	if debits != jsonDebits {
		t.Errorf("journal.csv debits %d cents, valuation.json's %d", debits, jsonDebits)
	}
}
