package report

import (
	"bytes"
	"encoding/csv"
	"strings"
	"testing"
)

// journal.csv (DESIGN §4.4): the contract header, one row per line with
// the debit or the credit in plain decimals of the currency, CRLF line
// ends, a per-grant entry's lines naming the grant, and text that a
// spreadsheet would take for a formula written with a leading apostrophe,
// read back by encoding/csv as written.
func TestWriteJournalCSV(t *testing.T) {
	m := &Model{Company: Company{Currency: "JPY"}, Expense: &Expense{ExpenseDetail: &ExpenseDetail{JournalDecimals: 0, Journal: []JournalEntry{
		{Number: 1, Date: DateOf(ymdT("2026-09-30")), Description: "Share-based compensation", Lines: []JournalLine{
			{Role: "compensation_expense", AccountCode: "=6400", Account: "@Comp", CostCenter: "-OPS", Debit: 1200},
			{Role: "compensation_expense", AccountCode: "6410", Account: "Comp, R&D", CostCenter: "+R&D", Debit: 34},
			{Role: "equity", AccountCode: "3100", Account: "APIC", Credit: 1234},
		}},
		{Number: 2, Date: DateOf(ymdT("2026-09-30")), Description: "Catch-up", Lines: []JournalLine{
			{Role: "compensation_expense", Account: "Comp", CostCenter: "\tTAB", GrantID: "G-7", Debit: 5},
			{Role: "equity", Account: "APIC", GrantID: "G-7", Credit: 5},
		}},
	}}}}
	var buf bytes.Buffer
	if err := WriteJournalCSV(&buf, m); err != nil {
		t.Fatal(err)
	}
	if !strings.HasSuffix(buf.String(), "\r\n") || strings.Count(buf.String(), "\r\n") != 6 {
		t.Errorf("want six CRLF-ended rows:\n%q", buf.String())
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := [][]string{
		JournalHeader,
		{"1", "2026-09-30", "'=6400", "'@Comp", "'-OPS", "1200", "", "JPY", "Share-based compensation"},
		{"1", "2026-09-30", "6410", "Comp, R&D", "'+R&D", "34", "", "JPY", "Share-based compensation"},
		{"1", "2026-09-30", "3100", "APIC", "", "", "1234", "JPY", "Share-based compensation"},
		{"2", "2026-09-30", "", "Comp", "'\tTAB", "5", "", "JPY", "Catch-up (grant G-7)"},
		{"2", "2026-09-30", "", "APIC", "", "", "5", "JPY", "Catch-up (grant G-7)"},
	}
	if len(recs) != len(want) {
		t.Fatalf("%d rows, want %d: %q", len(recs), len(want), recs)
	}
	for i := range want {
		if strings.Join(recs[i], "|") != strings.Join(want[i], "|") {
			t.Errorf("row %d: %q, want %q", i+1, recs[i], want[i])
		}
	}
	if strings.Join(JournalHeader, ",") != "entry,date,account_code,account,cost_center,debit,credit,currency,description" {
		t.Errorf("header %v is not the contract's", JournalHeader)
	}

	// No expense: the header alone.
	buf.Reset()
	if err := WriteJournalCSV(&buf, &Model{}); err != nil || buf.String() != strings.Join(JournalHeader, ",")+"\r\n" {
		t.Errorf("no expense: %q, %v", buf.String(), err)
	}
}
