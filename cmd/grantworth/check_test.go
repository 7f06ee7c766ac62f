package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"
)

// Every malformed schedule of grants/testdata/malformed makes check exit 2
// and print its expected lines, each starting with the cell reference.
func TestCheckMalformedCorpus(t *testing.T) {
	root := filepath.Join("..", "..", "grants", "testdata", "malformed")
	ents, err := os.ReadDir(root)
	if err != nil {
		t.Fatal(err)
	}
	if len(ents) < 30 {
		t.Fatalf("%d cases, want at least 30", len(ents))
	}
	for _, e := range ents {
		dir := filepath.Join(root, e.Name())
		t.Run(e.Name(), func(t *testing.T) {
			want, err := os.ReadFile(filepath.Join(dir, "want.txt"))
			if err != nil {
				t.Fatal(err)
			}
			files, _ := os.ReadDir(dir)
			var path string
			for _, f := range files {
				if f.Name() != "want.txt" {
					path = filepath.Join(dir, f.Name())
				}
			}
			code, out, errs := runArgs(t, "check", path)
			if code != exitInput {
				t.Fatalf("check %s: exit %d, want 2\n%s%s", path, code, out, errs)
			}
			lines := strings.Split(out, "\n")
			for _, w := range strings.Split(strings.TrimSpace(string(want)), "\n") {
				ok := false
				for _, l := range lines {
					ok = ok || strings.HasPrefix(l, w)
				}
				if !ok {
					t.Errorf("check %s: no line starts with\n  %s\nout:\n%s", path, w, out)
				}
			}
		})
	}
}

func TestCheckSample(t *testing.T) {
	for _, p := range []string{"tarnwick.xlsx", "tarnwick-csv"} {
		path := filepath.Join("..", "..", "sample", p)
		code, out, errs := runArgs(t, "check", path)
		if code != 0 {
			t.Fatalf("check %s: exit %d\n%s%s", p, code, out, errs)
		}
		if !strings.Contains(out, "47 grants (38 options, 2 warrants, 7 RSUs)") || !strings.HasSuffix(out, "0 errors, 5 warnings\n") {
			t.Errorf("check %s (want the 5 warnings of share valuations more than a quarter old):\n%s", p, out)
		}
		code, out, _ = runArgs(t, "check", path, "--json")
		var res checkResult
		if code != 0 || json.Unmarshal([]byte(out), &res) != nil || !res.OK || res.Summary.Grants != 47 || res.Summary.Instruments["warrant"] != 2 {
			t.Errorf("check --json %s: exit %d\n%s", p, code, out)
		}
	}
}

func TestCheckWarningsKeepCellFirst(t *testing.T) {
	if got := checkWarningLine(`Grants!F2 (strike): "1" is below`); got != `Grants!F2 (strike): warning: "1" is below` {
		t.Errorf("got %q", got)
	}
}

// check accepts the sample designs workbook, and the same designs as a
// CSV folder, as compare does, and summarises the designs.
func TestCheckDesignsSample(t *testing.T) {
	path := filepath.Join("..", "..", "sample", "designs.xlsx")
	code, out, errs := runArgs(t, "check", path)
	if code != 0 || !strings.Contains(out, "6 grant designs (5 options, 1 RSU) on ") || !strings.HasSuffix(out, "0 errors, 0 warnings\n") || strings.Contains(out, "Grants") {
		t.Fatalf("check %s: exit %d\n%s%s", path, code, out, errs)
	}
	code, out, _ = runArgs(t, "check", path, "--json")
	var res checkResult
	if code != 0 || json.Unmarshal([]byte(out), &res) != nil || !res.OK || res.Summary != nil || res.Designs == nil || res.Designs.Designs != 6 || res.Designs.Instruments["rsu"] != 1 {
		t.Errorf("check --json %s: exit %d\n%s", path, code, out)
	}
	dir := t.TempDir()
	if code, _, errs := runArgs(t, "init", "--designs", "--csv", dir); code != 0 {
		t.Fatalf("init --designs --csv: %s", errs)
	}
	csv := filepath.Join(dir, designsTemplateCSV)
	for n, data := range map[string]string{
		"company.csv":      "key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-09-30\n",
		"assumptions.csv":  "key,value\nvolatility,45%\n",
		"designs.csv":      "design,shares,strike_premium,term_years,vest_months,cliff_months\nA,1000,10%,10,48,12\n",
		"share_prices.csv": "date,price\n2026-09-30,2.00\n",
		"rates.csv":        "curve_date,tenor_years,rate\n2026-09-30,5,4%\n",
	} {
		if err := os.WriteFile(filepath.Join(csv, n), []byte(data), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if code, out, errs := runArgs(t, "check", csv); code != 0 || !strings.Contains(out, ": 1 grant design (1 option) on 2026-09-30\n") {
		t.Errorf("check %s: exit %d\n%s%s", csv, code, out, errs)
	}
}

// A designs workbook with bad cells: check prints each problem as
// Sheet!Cell (column): message, the lines compare prints, and exits 2.
func TestCheckDesignsBadCell(t *testing.T) {
	src, err := os.ReadFile(filepath.Join("..", "..", "sample", "designs.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(bytes.NewReader(src))
	if err != nil {
		t.Fatal(err)
	}
	// shares of the first design; cliff_months of the second, past its vesting.
	if err := f.SetCellValue("Designs", "C2", "many"); err != nil {
		t.Fatal(err)
	}
	if err := f.SetCellValue("Designs", "H3", 600); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "designs.xlsx")
	if err := f.SaveAs(path); err != nil {
		t.Fatal(err)
	}
	code, out, errs := runArgs(t, "check", path)
	if code != exitInput {
		t.Fatalf("check: exit %d, want 2\n%s%s", code, out, errs)
	}
	for _, want := range []string{`Designs!C2 (shares): "many" `, `Designs!H3 (cliff_months): "600" is longer than vest_months`, "2 errors, 0 warnings"} {
		if !strings.Contains(out, want) {
			t.Errorf("check lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(out, "Grants") {
		t.Errorf("check read the designs as a schedule:\n%s", out)
	}
	_, _, cerrs := runArgs(t, "compare", path)
	for _, l := range strings.Split(cerrs, "\n") {
		if strings.HasPrefix(l, "Designs!") && !strings.Contains(out, l+"\n") {
			t.Errorf("compare prints %q; check does not:\n%s", l, out)
		}
	}
	code, out, _ = runArgs(t, "check", path, "--json")
	var res checkResult
	if code != exitInput || json.Unmarshal([]byte(out), &res) != nil || res.OK || len(res.Errors) != 2 || res.Errors[0].Cell != "C2" || res.Errors[0].Column != "shares" {
		t.Errorf("check --json: exit %d\n%s", code, out)
	}
}
