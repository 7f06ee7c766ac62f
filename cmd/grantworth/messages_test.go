package main

import (
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
	if code != 0 || !strings.HasSuffix(out, "0 errors, 0 warnings\n") {
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
