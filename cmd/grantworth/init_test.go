package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"
)

func runArgs(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = run(args, &IO{In: strings.NewReader(""), Out: &out, Err: &errb})
	return code, out.String(), errb.String()
}

func TestInitRefusesOverwrite(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runArgs(t, "init", dir); code != 0 {
		t.Fatalf("init: exit %d: %s", code, errs)
	}
	path := filepath.Join(dir, templateXLSX)
	before, _ := os.ReadFile(path)
	code, _, errs := runArgs(t, "init", dir)
	if code != exitInput || !strings.Contains(errs, "--force") {
		t.Fatalf("second init: exit %d, stderr %q; want exit 2 naming --force", code, errs)
	}
	after, _ := os.ReadFile(path)
	if !bytes.Equal(before, after) {
		t.Error("the refused init changed the file")
	}
	if code, _, errs := runArgs(t, "init", dir, "--force"); code != 0 {
		t.Fatalf("init --force: exit %d: %s", code, errs)
	}
	if code, _, _ := runArgs(t, "init", dir, "--csv"); code != 0 {
		t.Fatal("init --csv failed")
	}
	if code, _, _ := runArgs(t, "init", dir, "--csv"); code != exitInput {
		t.Fatal("second init --csv did not refuse")
	}
	for _, f := range []string{"grants.csv", "company.csv", "assumptions.csv", "rates.csv", "share_prices.csv", "vesting.csv", "events.csv"} {
		if _, err := os.Stat(filepath.Join(dir, templateCSV, f)); err != nil {
			t.Errorf("init --csv did not write %s", f)
		}
	}
}

// The blank template fails check only on what must be filled in; once the
// company, one rate and one grant row are filled in, it passes.
func TestInitTemplateFilledPassesCheck(t *testing.T) {
	dir := t.TempDir()
	if code, _, errs := runArgs(t, "init", dir); code != 0 {
		t.Fatalf("init: exit %d: %s", code, errs)
	}
	path := filepath.Join(dir, templateXLSX)
	code, out, _ := runArgs(t, "check", path)
	if code != exitInput || !strings.Contains(out, "Company!B2 (company_name): is required") || !strings.Contains(out, "Company!B3 (valuation_date): is required") {
		t.Fatalf("blank template: exit %d\n%s", code, out)
	}
	f, set, day := fillTemplateContext(t, path, "2026-06-30", 1.25)
	// One grant row: id, instrument, grant date, shares, strike, term,
	// four-year monthly vesting with a one-year cliff, its own share price
	// (the Share Prices row gives the period end's).
	for col, v := range map[string]any{"A": "P-1", "C": "option", "D": day("2026-08-01"), "E": 4800, "F": 1.25, "H": 10, "J": 48, "K": 12, "L": 1, "M": 1.25} {
		set("Grants", col+"2", v)
	}
	if err := f.Save(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	code, out, errs := runArgs(t, "check", path)
	if code != 0 {
		t.Fatalf("filled template: exit %d\n%s%s", code, out, errs)
	}
	if !strings.Contains(out, "1 grant (1 option), 37 tranches, 1 measurement date from 2026-08-01 to 2026-08-01") {
		t.Errorf("summary:\n%s", out)
	}
}

func TestCheckExitCodes(t *testing.T) {
	code, _, errs := runArgs(t, "check", filepath.Join(t.TempDir(), "none.xlsx"))
	if code != exitInput || !strings.Contains(errs, "no such file") {
		t.Errorf("missing file: exit %d %q", code, errs)
	}
	if code, _, _ := runArgs(t, "check"); code != exitInput {
		t.Errorf("no argument: exit %d", code)
	}
	bad := filepath.Join(t.TempDir(), "x.xlsx")
	os.WriteFile(bad, []byte("grant_id,shares\n"), 0o644)
	code, out, _ := runArgs(t, "check", bad, "--json")
	if code != exitInput || !strings.Contains(out, `"ok": false`) || !strings.Contains(out, "x.xlsx: is not an .xlsx workbook") {
		t.Errorf("not a workbook: exit %d\n%s", code, out)
	}
}

// fillTemplateContext opens a template init wrote and fills the context
// every schedule needs: an invented company valued on 2026-09-30, a
// volatility, one share price and a one-point curve dated priceDate. It
// returns the open workbook, a setter that fails the test on error, and a
// date parser.
func fillTemplateContext(t *testing.T, path, priceDate string, price float64) (*excelize.File, func(sheet, cell string, v any), func(string) time.Time) {
	t.Helper()
	f, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatal(err)
	}
	set := func(sheet, cell string, v any) {
		if err := f.SetCellValue(sheet, cell, v); err != nil {
			t.Fatal(err)
		}
	}
	day := func(s string) time.Time { t, _ := time.Parse(time.DateOnly, s); return t }
	set("Company", "B2", "Pebblebrook Audio, Inc.")
	set("Company", "B3", day("2026-09-30"))
	set("Assumptions", "B2", 0.5)
	set("Share Prices", "A2", day(priceDate))
	set("Share Prices", "B2", price)
	set("Rates", "A2", day(priceDate))
	set("Rates", "B2", 5)
	set("Rates", "C2", 0.04)
	return f, set, day
}
