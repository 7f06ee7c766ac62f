package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// sampleCopy copies the sample's CSV schedule into a temporary folder,
// letting edit change the text of any file first (a file set to "" is left
// out).
func sampleCopy(t *testing.T, edit func(files map[string]string)) string {
	t.Helper()
	src := filepath.Join("..", "..", "sample", "tarnwick-csv")
	ents, err := os.ReadDir(src)
	must(t, err)
	files := map[string]string{}
	for _, e := range ents {
		b, err := os.ReadFile(filepath.Join(src, e.Name()))
		must(t, err)
		files[e.Name()] = string(b)
	}
	if edit != nil {
		edit(files)
	}
	dir := filepath.Join(t.TempDir(), "schedule")
	must(t, os.Mkdir(dir, 0o755))
	for n, s := range files {
		if s != "" {
			must(t, os.WriteFile(filepath.Join(dir, n), []byte(s), 0o644))
		}
	}
	// The price files the relative TSR condition names, beside the folder
	// as in sample/.
	for _, d := range []string{"peers", "prices"} {
		must(t, os.CopyFS(filepath.Join(filepath.Dir(dir), d), os.DirFS(filepath.Join("..", "..", "sample", d))))
	}
	return dir
}

// replaceHeader renames column old of a CSV file's header row.
func replaceHeader(t *testing.T, files map[string]string, file, old, new string) {
	t.Helper()
	head, rest, _ := strings.Cut(files[file], "\n")
	cols := strings.Split(head, ",")
	for i, c := range cols {
		if c == old {
			cols[i] = new
			files[file] = strings.Join(cols, ",") + "\n" + rest
			return
		}
	}
	t.Fatalf("%s has no column %s", file, old)
}

// A schedule whose headers are the trade's ("Exercise Price", "Vesting
// Start Date", "Expiration Date") checks clean; a misspelt one is named
// with the column it may be.
func TestCheckTradeHeaders(t *testing.T) {
	dir := sampleCopy(t, func(f map[string]string) {
		replaceHeader(t, f, "grants.csv", "strike", "Exercise Price")
		replaceHeader(t, f, "grants.csv", "vest_start", "Vesting Start Date")
		replaceHeader(t, f, "grants.csv", "expiry_date", "Expiration Date")
		replaceHeader(t, f, "grants.csv", "grant_date", "Grant Date")
	})
	code, out, errs := runArgs(t, "check", dir)
	if code != 0 || !strings.HasSuffix(out, "0 errors, 5 warnings\n") { // the sample's 5 warnings of share valuations more than a quarter old
		t.Errorf("check with the trade's headers: exit %d\n%s%s", code, out, errs)
	}
	dir = sampleCopy(t, func(f map[string]string) {
		replaceHeader(t, f, "grants.csv", "strike", "Option Prices")
	})
	code, out, _ = runArgs(t, "check", dir)
	if code != exitInput {
		t.Fatalf("check with Option Prices: exit %d, want 2\n%s", code, out)
	}
	if want := `Grants!F1: warning: "Option Prices" is not a column grantworth reads; it is ignored; did you mean strike?`; !strings.Contains(out, want) {
		t.Errorf("no line %q in\n%s", want, out)
	}
}

// keepHeader cuts a CSV file to its header row.
func keepHeader(files map[string]string, file string) {
	head, _, _ := strings.Cut(files[file], "\n")
	files[file] = head + "\n"
}

// setKey gives key of a key-value CSV file the value v.
func setKey(t *testing.T, files map[string]string, file, key, v string) {
	t.Helper()
	lines := strings.Split(files[file], "\n")
	for i, l := range lines {
		if k, rest, ok := strings.Cut(l, ","); ok && k == key {
			_, src, _ := strings.Cut(rest, ",")
			lines[i] = k + "," + v + "," + src
			files[file] = strings.Join(lines, "\n")
			return
		}
	}
	t.Fatalf("%s has no key %s", file, key)
}

// A schedule with no grant is an error naming the Grants sheet, in check
// and in value, and value writes nothing.
func TestEmptySchedule(t *testing.T) {
	dir := sampleCopy(t, func(f map[string]string) {
		for _, n := range []string{"grants.csv", "vesting.csv", "events.csv", "modifications.csv"} {
			keepHeader(f, n)
		}
		f["transfers.csv"], f["accounts.csv"] = "", "" // optional sheets, of grants
	})
	const want = "Grants!A2 (grant_id): the sheet has no grant: add one row per grant under the header\n"
	code, out, _ := runArgs(t, "check", dir)
	if code != exitInput || !strings.HasPrefix(out, want) || !strings.HasSuffix(out, "1 error, 0 warnings\n") {
		t.Errorf("check: exit %d\n%s", code, out)
	}
	outDir := filepath.Join(t.TempDir(), "out")
	code, _, errs := runArgs(t, "value", dir, "--out", outDir)
	if code != exitInput || !strings.HasPrefix(errs, want) {
		t.Errorf("value: exit %d\n%s", code, errs)
	}
	if _, err := os.Stat(outDir); !os.IsNotExist(err) {
		t.Errorf("value wrote %s for an empty schedule", outDir)
	}
}

// A required Assumptions key with its value left blank is named by its
// value cell, as empty, not as a missing key.
func TestBlankAssumption(t *testing.T) {
	dir := sampleCopy(t, func(f map[string]string) { setKey(t, f, "assumptions.csv", "volatility", "") })
	code, out, _ := runArgs(t, "check", dir)
	want := "Assumptions!B2 (volatility): is empty, and grant TW-001 (Grants!N2) gives none: fill in the annual volatility, 0.45 or 45%\n"
	if code != exitInput || !strings.HasPrefix(out, want) {
		t.Errorf("check: exit %d, want the line\n%s\nin\n%s", code, want, out)
	}
}

// A percentage typed without its sign (58 for 58%) is named as such, in
// every percent column.
func TestPercentWithoutSign(t *testing.T) {
	dir := sampleCopy(t, func(f map[string]string) {
		setKey(t, f, "assumptions.csv", "volatility", "58")
		setKey(t, f, "assumptions.csv", "post_vesting_exit_rate", "12")
		setKey(t, f, "assumptions.csv", "dividend_yield", "2")
		f["rates.csv"] = strings.Replace(f["rates.csv"], "2023-09-30,0.25,0.04526,", "2023-09-30,0.25,4.526,", 1)
	})
	code, out, _ := runArgs(t, "check", dir)
	for _, want := range []string{
		`Assumptions!B2 (volatility): "58" must be from 0.01 to 5 (1% to 500%), as a decimal, 0.45, or a percentage, 45%; did you mean 58% (0.58)?`,
		`Assumptions!B3 (dividend_yield): "2" must be at least 0 and below 1 (100%); did you mean 2% (0.02)?`,
		`Assumptions!B5 (post_vesting_exit_rate): "12" must be at least 0 and below 1 (100%): the annual share of vested holders who leave; did you mean 12% (0.12)?`,
		`Rates!C2 (rate): "4.526" is not a plausible rate; did you mean 4.526% (0.04526)?`,
	} {
		if !strings.Contains(out, want) {
			t.Errorf("no line\n  %s\nin\n%s", want, out)
		}
	}
	if code != exitInput || !strings.HasSuffix(out, "4 errors, 5 warnings\n") {
		t.Errorf("check: exit %d\n%s", code, out)
	}
}

// One bad vest_every_months is reported once: the grant's Events rows are
// not checked against the tranches it would give (before, a monthly grant
// typed as vesting every 7 months also drew "expires more than the 14312
// vested shares" and a partial-forfeiture warning).
func TestBadVestingReportedOnce(t *testing.T) {
	dir := sampleCopy(t, func(f map[string]string) {
		f["grants.csv"] = strings.Replace(f["grants.csv"], "TW-006,E006,option,2024-03-12,35000,0.85,2034-03-12,,2024-03-12,48,12,1,", "TW-006,E006,option,2024-03-12,35000,0.85,2034-03-12,,2024-03-12,48,12,7,", 1)
	})
	code, out, _ := runArgs(t, "check", dir)
	if code != exitInput || !strings.HasPrefix(out, "Grants!L7 (vest_every_months): \"7\" must be 1, 3 or 12\n") || !strings.HasSuffix(out, "1 error, 5 warnings\n") || strings.Contains(out, "Events!") {
		t.Errorf("check: exit %d\n%s", code, out)
	}
}

// keepGrants cuts the sample to the grants named (and their events and
// transfers; the Accounts sheet is left out), for a quick run of value.
func keepGrants(f map[string]string, ids ...string) {
	keep := map[string]bool{}
	for _, id := range ids {
		keep[id] = true
	}
	f["accounts.csv"] = "" // its cost centres would be unused
	for _, n := range []string{"grants.csv", "vesting.csv", "events.csv", "transfers.csv", "modifications.csv"} {
		lines := strings.Split(strings.TrimSuffix(f[n], "\n"), "\n")
		out := lines[:1]
		for _, l := range lines[1:] {
			if id, _, _ := strings.Cut(l, ","); keep[id] {
				out = append(out, l)
			}
		}
		f[n] = strings.Join(out, "\n") + "\n"
	}
}

// value prints every warning on stderr, once, the same list as the files
// carry; the summary on stdout counts them.
func TestValueWarningsOnStderr(t *testing.T) {
	dir := sampleCopy(t, func(f map[string]string) {
		keepGrants(f, "TW-001", "TW-002")
		f["grants.csv"] = strings.Replace(f["grants.csv"], "TW-001,E001,option,2023-10-07,31000,0.85,", "TW-001,E001,option,2023-10-07,31000,0.10,", 1)
		setKey(t, f, "assumptions.csv", "volatility", "0.03")
	})
	outDir := filepath.Join(t.TempDir(), "out")
	code, out, errs := runArgs(t, "value", dir, "--out", outDir)
	if code != 0 {
		t.Fatalf("value: exit %d\n%s", code, errs)
	}
	want := []string{
		`Assumptions!B2 (volatility): "0.03" is outside 5%–200%; check that it is an annual decimal (0.45 = 45%)`,
		`Grants!F2 (strike): "0.1" is below the share price 0.85 at grant (Share Prices!B2): the award is in the money`,
	}
	var lines []string
	for _, l := range strings.Split(strings.TrimSpace(errs), "\n") {
		if w, ok := strings.CutPrefix(l, "warning: "); ok {
			lines = append(lines, w)
		}
	}
	if strings.Join(lines, "\n") != strings.Join(want, "\n") {
		t.Errorf("warnings on stderr:\n%s\nwant\n%s", strings.Join(lines, "\n"), strings.Join(want, "\n"))
	}
	if !strings.Contains(out, "  warnings          2 (printed on stderr, and listed in the memo and the workbook)\n") || strings.Contains(out, "warning:") {
		t.Errorf("stdout:\n%s", out)
	}
	b, err := os.ReadFile(filepath.Join(outDir, "valuation.json"))
	must(t, err)
	var v struct{ Warnings []string }
	must(t, json.Unmarshal(b, &v))
	if strings.Join(v.Warnings, "\n") != strings.Join(want, "\n") {
		t.Errorf("valuation.json warnings:\n%s", strings.Join(v.Warnings, "\n"))
	}
}

func TestUniqueWarnings(t *testing.T) {
	got := uniqueWarnings([]string{"a", "b", "a", "c", "b"})
	if strings.Join(got, ",") != "a,b,c" {
		t.Errorf("uniqueWarnings: %q", got)
	}
}

// A share valuation or a rate curve more than a quarter old at a grant's
// measurement date is warned of once, at its own cell, naming the grants
// measured with it and how old it is for each. The sample's share
// valuations, made twice a year, draw five such warnings.
func TestOldInputsWarned(t *testing.T) {
	dir := sampleCopy(t, func(f map[string]string) {
		var keep []string
		for _, l := range strings.Split(f["rates.csv"], "\n") {
			if !strings.HasPrefix(l, "2025-12-31,") && !strings.HasPrefix(l, "2026-03-31,") && !strings.HasPrefix(l, "2026-06-30,") {
				keep = append(keep, l)
			}
		}
		f["rates.csv"] = strings.Join(keep, "\n")
	})
	code, out, _ := runArgs(t, "check", dir)
	for _, want := range []string{
		`Rates!A66 (curve_date): warning: "2025-09-30" is the rate curve in force, more than 3 months old at the measurement dates of 10 grants, TW-028 (3 months 13 days), TW-029 (4 months 14 days), TW-030 (5 months 8 days), TW-031 (6 months 8 days), TW-032 (7 months 3 days) and 5 more: add a Rates curve dated nearer the measurement date` + "\n",
		`Share Prices!A2 (date): warning: "2023-09-30" is the share valuation in force, more than 3 months old at the measurement dates of 4 grants, TW-004 (3 months 11 days), TW-005 (4 months 5 days), TW-006 (5 months 12 days), TW-040 (4 months 16 days): check that the share's fair value has not moved since, or add a Share Prices row nearer the date` + "\n",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("no line\n  %s\nin\n%s", want, out)
		}
	}
	if code != 0 || !strings.HasSuffix(out, "0 errors, 6 warnings\n") {
		t.Errorf("check: exit %d\n%s", code, out)
	}
}
