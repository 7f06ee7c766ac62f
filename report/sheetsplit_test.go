package report

import (
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// lowerRowLimit makes a sheet hold n rows (header included) for the
// test, so that a small model passes the limit as a ledger of hundreds of
// thousands of grants passes the real one.
func lowerRowLimit(t *testing.T, n int) {
	t.Helper()
	sheetRowLimit = n
	t.Cleanup(func() { sheetRowLimit = MaxSheetRows })
}

// plainExpenseModel is the expense test model with holders and cost
// centres whose text excelize escapes (awkwardTexts).
func plainExpenseModel(t *testing.T) *Model {
	m := expenseModelFor(t, expenseSchedule())
	for i := range m.Grants {
		m.Grants[i].Holder = awkwardTexts[i%len(awkwardTexts)]
	}
	for i := range m.Expense.ByGrant {
		m.Expense.ByGrant[i].Holder = awkwardTexts[(i+3)%len(awkwardTexts)] + strconv.Itoa(i)
		m.Expense.ByGrant[i].CostCenter = []string{"R&D", "S&M"}[i%2] // a cost centre of each grant row
	}
	if !trancheRowsPlain(m) || !expenseRowsPlain(m.Expense) {
		t.Fatal("the test model does not take the fast rows")
	}
	return m
}

// The Expense rows written apart read back as the cells excelize writes, on one
// sheet and continued on several.
func TestFastExpenseRowsMatchExcelize(t *testing.T) {
	m := plainExpenseModel(t)
	for _, limit := range []int{MaxSheetRows, 5} {
		if limit != MaxSheetRows {
			lowerRowLimit(t, limit)
		}
		sameBothWays(t, "limit "+strconv.Itoa(limit)+": ", m)
	}
}

// A model past the row limit: every table that outgrows a sheet
// continues on numbered sheets with their header rows and no row lost or
// repeated; the Summary, Grants and Expense sheets stay whole; no sheet
// passes the limit.
func TestSheetsPastTheRowLimit(t *testing.T) {
	const limit = 9 // a header and 8 rows
	lowerRowLimit(t, limit)
	m := plainExpenseModel(t)
	m.Assumptions = nil
	for _, g := range m.Grants {
		for _, k := range []string{"share_price", "volatility", "dividend_yield"} {
			m.Assumptions = append(m.Assumptions, Assumption{GrantID: g.ID, Name: k, Kind: KindNumber, Value: 1, Text: "1"})
		}
	}
	// A catch-up entry for each grant (two lines each): the Journal
	// continues too, an entry never split across sheets.
	m.Expense.Journal = nil
	for k, g := range m.Grants {
		m.Expense.Journal = append(m.Expense.Journal, JournalEntry{Number: k + 1, Description: "Catch-up for closed periods, grant " + g.ID, Lines: []JournalLine{
			{Role: "compensation", Account: "Share-based compensation expense", GrantID: g.ID, Debit: 1},
			{Role: "equity", Account: "Additional paid-in capital", GrantID: g.ID, Credit: 1}}})
	}
	f := renderBook(t, m)
	sheets := f.GetSheetList()
	rowsOf := func(sh string) [][]string {
		rows, err := f.GetRows(sh, excelize.Options{RawCellValue: true})
		if err != nil {
			t.Fatal(err)
		}
		if len(rows) > limit {
			t.Errorf("%s has %d rows, more than the %d a sheet holds", sh, len(rows), limit)
		}
		return rows
	}
	// A table's rows over its numbered sheets, headers checked.
	table := func(name string) (header []string, data [][]string, parts int) {
		for _, sh := range sheets {
			if sh != name && !(strings.HasPrefix(sh, name+" ") && isNumber(strings.TrimPrefix(sh, name+" "))) {
				continue
			}
			rows := rowsOf(sh)
			if header == nil {
				header = rows[0]
			} else if strings.Join(rows[0], "|") != strings.Join(header, "|") {
				t.Errorf("%s's header %v differs from %s's %v", sh, rows[0], name, header)
			}
			data = append(data, rows[1:]...)
			parts++
		}
		return header, data, parts
	}

	tranches := 0
	for _, g := range m.Grants {
		tranches += len(g.Tranches)
	}
	_, data, parts := table(SheetTranches)
	if want := (tranches + limit - 2) / (limit - 1); parts != want || len(data) != tranches {
		t.Errorf("Tranches: %d rows on %d sheets, want %d on %d", len(data), parts, tranches, want)
	}
	k := 0
	for _, g := range m.Grants {
		for _, tr := range g.Tranches {
			if k < len(data) && (data[k][0] != g.ID || data[k][3] != strconv.Itoa(tr.Index)) {
				t.Errorf("Tranches row %d is %s tranche %s, want %s tranche %d", k, data[k][0], data[k][3], g.ID, tr.Index)
			}
			k++
		}
	}
	// Each formula refers to its own row on its own sheet.
	if fm, _ := f.GetCellFormula(SheetTranches+" 2", "X2"); !strings.HasPrefix(fm, "G2*EXP(-M2*") {
		t.Errorf("Tranches 2!X2 = %q, want a formula of row 2", fm)
	}

	_, data, _ = table(SheetAssumptions)
	if len(data) != len(m.Assumptions) {
		t.Errorf("Assumptions: %d rows, want %d", len(data), len(m.Assumptions))
	}

	// The Expense sheet: every grant and the total; its tranche rows apart.
	exp := rowsOf(SheetExpense)
	if n := len(m.Expense.ByGrant) + 1; len(exp)-1 != n {
		t.Errorf("Expense has %d rows, want a row per grant and the total (%d)", len(exp)-1, n)
	}
	if last := exp[len(exp)-1]; last[0] != "total" {
		t.Errorf("Expense's last row is %v, want the total", last)
	}
	_, data, _ = table(SheetExpenseTranches)
	k = 0
	for _, g := range m.Expense.ByGrant {
		for _, tr := range g.Tranches {
			if k >= len(data) || data[k][0] != "tranche" || data[k][1] != g.GrantID || data[k][5] != strconv.Itoa(tr.Index) {
				t.Fatalf("Expense tranches row %d: %v, want %s tranche %d", k, data[min(k, len(data)-1)], g.GrantID, tr.Index)
			}
			k++
		}
	}
	if k != len(data) {
		t.Errorf("Expense tranches: %d rows, want %d", len(data), k)
	}
	_, data, parts = table(SheetJournal)
	per := (limit - 1) / 2 // whole entries of two lines to a sheet
	if want := (len(m.Expense.Journal) + per - 1) / per; len(data) != 2*len(m.Expense.Journal) || parts != want {
		t.Errorf("Journal: %d rows on %d sheets, want %d on %d", len(data), parts, 2*len(m.Expense.Journal), want)
	}
	for k := 0; k+1 < len(data); k += 2 {
		if data[k][0] != data[k+1][0] || data[k][10] != data[k+1][10] || data[k][10] == "" {
			t.Errorf("Journal rows %d and %d: an entry split (%v, %v)", k, k+1, data[k], data[k+1])
		}
	}
	if _, data, _ := table(SheetGrants); len(data) != len(m.Grants) {
		t.Errorf("Grants: %d rows, want %d", len(data), len(m.Grants))
	}
	about, _ := f.GetRows(SheetAbout)
	found := false
	for _, r := range about {
		if len(r) > 1 && r[0] == "Continued sheets" && strings.Contains(r[1], "Tranches continues on Tranches 2") && strings.Contains(r[1], SheetExpenseTranches) {
			found = true
		}
	}
	if !found {
		t.Error("the About sheet does not say which sheets continue")
	}
}

func isNumber(s string) bool {
	_, err := strconv.Atoi(s)
	return err == nil
}

// At the real limit: 100,000 grants of 37 tranches fill four Tranches
// sheets, none past 1,048,576 rows with its header.
func TestSheetPartsAtTheRealLimit(t *testing.T) {
	for _, n := range []int{0, 1, MaxSheetRows - 1, MaxSheetRows, 3_700_000} {
		ps := sheetParts(n)
		sum := 0
		for _, p := range ps {
			if p+1 > MaxSheetRows {
				t.Errorf("%d rows: a part of %d rows passes the limit with its header", n, p)
			}
			sum += p
		}
		if sum != n {
			t.Errorf("%d rows: parts %v hold %d", n, ps, sum)
		}
		if want := max(1, (n+MaxSheetRows-2)/(MaxSheetRows-1)); len(ps) != want {
			t.Errorf("%d rows: %d parts, want %d", n, len(ps), want)
		}
	}
}

// A text longer than a cell holds is cut with a note; shorter texts are
// kept as they are.
func TestLongTextIsCut(t *testing.T) {
	long := strings.Repeat("ab ", 20000)
	m := fixture()
	m.Warnings = append(m.Warnings, long)
	f := renderBook(t, m)
	rows, err := f.GetRows(SheetWarnings)
	if err != nil {
		t.Fatal(err)
	}
	last := rows[len(rows)-1][1]
	if n := len([]rune(last)); n > MaxCellChars || !strings.Contains(last, "cut: 60000 characters") {
		t.Errorf("the long warning's cell has %d characters: %q...", n, last[len(last)-120:])
	}
	if s := "short"; cutText(s) != s {
		t.Error("a short text was changed")
	}
}
