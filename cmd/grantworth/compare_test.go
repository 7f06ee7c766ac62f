package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/xuri/excelize/v2"

	"grantworth/report"
)

// The sample designs workbook shipped with the project.
const sampleDesigns = "../../sample/designs.xlsx"

// argv → options, through the real flag set with the run replaced.
func TestCompareArgs(t *testing.T) {
	for _, c := range []struct {
		argv  []string
		check func(*compareOptions) bool
	}{
		{[]string{"d.xlsx"}, func(o *compareOptions) bool { return o.Path == "d.xlsx" && o.Out == "" && !o.JSON && !o.Force }},
		{[]string{"plans", "--out", "out/designs", "--json", "--force"}, func(o *compareOptions) bool {
			return o.Path == "plans" && o.Out == "out/designs" && o.JSON && o.Force
		}},
	} {
		ios, _, _ := volTestIO()
		var got *compareOptions
		cmd := newCompareCmd(ios, func(o *compareOptions) error { got = o; return nil })
		cmd.SetArgs(c.argv)
		cmd.SilenceUsage, cmd.SilenceErrors = true, true
		if err := cmd.Execute(); err != nil || got == nil || !c.check(got) {
			t.Errorf("%v: options %+v, err %v", c.argv, got, err)
		}
	}
	for _, argv := range [][]string{{"compare"}, {"compare", "a", "b"}, {"compare", "a", "--steps", "3"}} {
		if code, out, errs := runArgs(t, argv...); code != exitInput || out != "" || errs == "" {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2 and a message", argv, code, out, errs)
		}
	}
}

// compareRun runs compare on the sample once, with --json and --out, for
// the tests that read its outputs.
var compareRun struct {
	once           sync.Once
	dir            string
	code           int
	stdout, stderr string
	pdf, xlsx      []byte
}

func compareSample(t *testing.T) (dir, js string, pdf, xlsx []byte) {
	t.Helper()
	r := &compareRun
	r.once.Do(func() {
		d, err := os.MkdirTemp("", "grantworth-compare-")
		if err != nil {
			t.Fatal(err)
		}
		r.dir = d
		r.code, r.stdout, r.stderr = runArgs(t, "compare", sampleDesigns, "--json", "--out", filepath.Join(d, "out"))
		r.pdf, _ = os.ReadFile(filepath.Join(d, "out", "comparison.pdf"))
		r.xlsx, _ = os.ReadFile(filepath.Join(d, "out", "comparison.xlsx"))
	})
	if r.code != 0 {
		t.Fatalf("compare %s: exit %d\nstderr:\n%s", sampleDesigns, r.code, r.stderr)
	}
	return filepath.Join(r.dir, "out"), r.stdout, r.pdf, r.xlsx
}

// The --json object: a golden file, and the fields DESIGN §4.1 promises.
func TestCompareSampleJSON(t *testing.T) {
	_, js, _, _ := compareSample(t)
	goldenFile(t, "designs.comparison.json", []byte(js))
	var got struct {
		Designs []map[string]json.RawMessage `json:"designs"`
	}
	if err := json.Unmarshal([]byte(js), &got); err != nil {
		t.Fatal(err)
	}
	if len(got.Designs) != 6 {
		t.Fatalf("%d designs", len(got.Designs))
	}
	for _, d := range got.Designs {
		for _, k := range []string{"design", "instrument", "fair_value_per_share", "fair_value_total", "error_estimate", "expected_cost_total",
			"expected_term_years", "bsm_simplified_value", "probability_in_the_money", "expense_by_year"} {
			if _, ok := d[k]; !ok {
				t.Errorf("design %s has no %q", d["design"], k)
			}
		}
		var years []struct {
			Year   *int     `json:"year"`
			Amount *float64 `json:"amount"`
		}
		if err := json.Unmarshal(d["expense_by_year"], &years); err != nil || len(years) == 0 || years[0].Year == nil || years[0].Amount == nil {
			t.Errorf("expense_by_year %s: %v", d["expense_by_year"], err)
		}
	}
}

// The screen table, from the same model as the JSON: designs as columns,
// every row, and the caution.
func TestCompareTableOutput(t *testing.T) {
	_, js, _, _ := compareSample(t)
	var m report.CompareModel
	if err := json.Unmarshal([]byte(js), &m); err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	printComparison(&out, &m, "out/designs")
	text := out.String()
	for _, want := range []string{
		"Tarnwick Labs, Inc.: 6 grant designs on 2026-10-15, share price 2.25 (amounts in USD)",
		"Standard   3y no cliff   Premium 25%   7-year term          RSUs   Long window",
		"  Strike                                    2.25          2.25   2.81 (+25%)          2.25             –          2.25",
		"Cost to the company\n",
		"  Expected cost, with departures ",
		"  before vesting (not a fair value)\n",
		"Value to the holder (risk-neutral)\n",
		"wrote out/designs/comparison.pdf\nwrote out/designs/comparison.xlsx\n",
		"defer to licensed auditors or valuation professionals",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("table lacks %q:\n%s", want, text)
		}
	}
	// Every line fits a wide terminal: label and six columns.
	for _, l := range strings.Split(text, "\n") {
		if n := len([]rune(l)); n > compareLabelWidth+6*(compareColumnWidth+1)+2 && !strings.HasPrefix(l, "Estimates") && !strings.HasPrefix(l, "Tarnwick") {
			t.Errorf("line of %d characters: %q", n, l)
		}
	}
	// Fair value per share as printed is the JSON's, to four decimals.
	for _, d := range m.Designs {
		if !strings.Contains(text, strconv.FormatFloat(d.FairValuePerShare, 'f', 4, 64)) {
			t.Errorf("%s: fair value per share %.4f not on screen", d.Design, d.FairValuePerShare)
		}
	}
}

// The workbook holds the JSON's numbers, and the PDF the sections and the
// caution.
func TestCompareSampleFiles(t *testing.T) {
	_, js, pdf, xlsx := compareSample(t)
	var m report.CompareModel
	if err := json.Unmarshal([]byte(js), &m); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(bytes.NewReader(xlsx))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	want := []string{"Comparison", "Expense by year", "Outcomes", "Tranches", "Inputs", "Warnings", "About"}
	if got := f.GetSheetList(); strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("sheets %v, want %v", got, want)
	}
	rows, err := f.GetRows("Comparison", excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatal(err)
	}
	found := 0
	for _, r := range rows {
		if len(r) > 6 && r[0] == "Fair value, total" {
			for i, d := range m.Designs {
				// The workbook keeps cents (no float noise, issue 14).
				if got, err := strconv.ParseFloat(r[i+1], 64); err != nil || math.Abs(got-d.FairValueTotal) > 0.005 {
					t.Errorf("%s: workbook fair value total %s, JSON %v", d.Design, r[i+1], d.FairValueTotal)
				}
			}
			found++
		}
	}
	if found != 1 {
		t.Errorf("the Comparison sheet has %d fair value total rows", found)
	}
	tr, _ := f.GetRows("Tranches")
	n := 0
	for _, d := range m.Designs {
		n += len(d.Tranche)
	}
	if len(tr) != n+1 {
		t.Errorf("Tranches has %d rows, want %d and a header", len(tr)-1, n)
	}
	if !bytes.HasPrefix(pdf, []byte("%PDF-")) || len(pdf) < 20000 {
		t.Fatalf("comparison.pdf: %d bytes", len(pdf))
	}
	text := pdfText(t, pdf)
	if text == "" {
		return
	}
	for _, s := range []string{"Grant designs compared", "Tarnwick Labs, Inc.", "Reading the comparison", "How the cost lands: expense by year",
		"What each design is worth to the holder", "How and when the awards end", "Method and checks", "Caution",
		"not an audit opinion", "licensed auditors or valuation", "Expected cost against Standard"} {
		if !strings.Contains(text, s) {
			t.Errorf("comparison.pdf lacks %q", s)
		}
	}
}

// pdfText is the PDF's text by pdftotext (page breaks as form feeds), or ""
// when poppler-utils is missing: CI installs it and must read the PDFs;
// elsewhere a machine without it skips only the checks of their text.
func pdfText(t *testing.T, pdf []byte) string {
	t.Helper()
	if _, err := exec.LookPath("pdftotext"); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatal("pdftotext not found: install poppler-utils (the CI script does)")
		}
		t.Log("pdftotext not found: apt-get install poppler-utils to check the PDFs' text")
		return ""
	}
	path := filepath.Join(t.TempDir(), "doc.pdf")
	if err := os.WriteFile(path, pdf, 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command("pdftotext", "-layout", path, "-").Output()
	if err != nil {
		t.Fatal(err)
	}
	return string(out)
}

// The same designs give the same files byte for byte, and an existing
// output is not replaced without --force.
func TestCompareRerunIdenticalAndRefusal(t *testing.T) {
	dir, _, pdf, xlsx := compareSample(t)
	code, _, errs := runArgs(t, "compare", sampleDesigns, "--out", dir)
	if code != exitInput || !strings.Contains(errs, "--force") {
		t.Fatalf("second run without --force: exit %d, %q", code, errs)
	}
	again := t.TempDir()
	if code, _, errs := runArgs(t, "compare", sampleDesigns, "--out", again); code != 0 {
		t.Fatalf("rerun: exit %d: %s", code, errs)
	}
	for name, want := range map[string][]byte{"comparison.pdf": pdf, "comparison.xlsx": xlsx} {
		got, _ := os.ReadFile(filepath.Join(again, name))
		if !bytes.Equal(got, want) {
			t.Errorf("%s differs between two runs", name)
		}
	}
}

// A designs workbook with errors: every problem with its cell, exit 2,
// nothing written.
func TestCompareBadInputWritesNothing(t *testing.T) {
	src := t.TempDir()
	files := map[string]string{
		"company.csv":      "key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-09-30\n",
		"assumptions.csv":  "key,value\nvolatility,45%\n",
		"designs.csv":      "design,shares,strike,strike_premium,term_years,vest_months,cliff_months\nA,1000,2,10%,10,48,12\nB,1000,,0,10,24,36\n",
		"share_prices.csv": "date,price\n2026-09-30,2.00\n",
		"rates.csv":        "curve_date,tenor_years,rate\n2026-09-30,5,4%\n",
	}
	for n, data := range files {
		if err := os.WriteFile(filepath.Join(src, n), []byte(data), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	out := filepath.Join(t.TempDir(), "out")
	code, stdout, errs := runArgs(t, "compare", src, "--out", out)
	for _, want := range []string{
		`Designs!D2 (strike_premium): "0.1" and strike 2 (C2) are both given; give one`,
		`Designs!G3 (cliff_months): "36" is longer than vest_months 24 (F3)`,
		"2 errors; nothing was written",
	} {
		if !strings.Contains(errs, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errs)
		}
	}
	if code != exitInput || stdout != "" {
		t.Errorf("exit %d, stdout %q", code, stdout)
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("%s was created", out)
	}
	if code, _, errs := runArgs(t, "compare", filepath.Join(src, "none.xlsx")); code != exitInput || !strings.Contains(errs, "no such file") {
		t.Errorf("missing file: exit %d %q", code, errs)
	}
}

// init --designs writes the template compare reads; filled in with a
// company, a rate, a price and one design, it compares.
func TestInitDesignsTemplate(t *testing.T) {
	dir := t.TempDir()
	if code, out, errs := runArgs(t, "init", "--designs", dir); code != 0 || !strings.Contains(out, designsTemplateXLSX) {
		t.Fatalf("init --designs: exit %d: %s%s", code, out, errs)
	}
	if code, _, _ := runArgs(t, "init", "--designs", dir); code != exitInput {
		t.Error("a second init --designs did not refuse")
	}
	if code, _, _ := runArgs(t, "init", "--designs", "--csv", dir); code != 0 {
		t.Error("init --designs --csv failed")
	}
	for _, n := range []string{"company.csv", "assumptions.csv", "designs.csv", "share_prices.csv", "rates.csv"} {
		if _, err := os.Stat(filepath.Join(dir, designsTemplateCSV, n)); err != nil {
			t.Errorf("init --designs --csv did not write %s", n)
		}
	}
	path := filepath.Join(dir, designsTemplateXLSX)
	f, set, _ := fillTemplateContext(t, path, "2026-09-30", 2.0)
	// design, instrument, shares, strike, strike_premium, term_years, vest_months, cliff_months, vest_every_months
	for col, v := range map[string]any{"A": "At the money", "B": "option", "C": 4800, "E": 0, "F": 10, "G": 48, "H": 12, "I": 1} {
		set("Designs", col+"2", v)
	}
	if err := f.Save(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	code, out, errs := runArgs(t, "compare", path)
	if code != 0 || !strings.Contains(out, "Pebblebrook Audio, Inc.: 1 grant design on 2026-09-30") {
		t.Fatalf("filled template: exit %d\n%s%s", code, out, errs)
	}
}

func BenchmarkCompareSample(b *testing.B) {
	for b.Loop() {
		var out, errb bytes.Buffer
		if code := run([]string{"compare", sampleDesigns}, &IO{In: strings.NewReader(""), Out: &out, Err: &errb}); code != 0 {
			b.Fatal(errb.String())
		}
	}
}

// compare --out keeps its temporary files in the output's staging folder:
// a TMPDIR pointed at a fresh folder is still empty after the run, and
// the output folder holds both files and nothing else. (The workbook's
// spill into that folder is report.TestCompareWorkbookTempDir.)
func TestCompareLeavesNothingInTMPDIR(t *testing.T) {
	system, parent := t.TempDir(), t.TempDir()
	t.Setenv("TMPDIR", system)
	out := filepath.Join(parent, "out")
	if code, _, errs := runArgs(t, "compare", sampleDesigns, "--out", out); code != 0 {
		t.Fatalf("compare: exit %d\n%s", code, errs)
	}
	if left, _ := os.ReadDir(system); len(left) != 0 {
		t.Errorf("%d files left in TMPDIR, e.g. %s", len(left), left[0].Name())
	}
	if ents, _ := os.ReadDir(parent); len(ents) != 1 {
		t.Errorf("beside the output folder: %v, want out only", ents)
	}
	ents, _ := os.ReadDir(out)
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	if strings.Join(names, " ") != strings.Join(compareOutputs, " ") {
		t.Errorf("output folder holds %v, want %v", names, compareOutputs)
	}
	xlsx, err := os.ReadFile(filepath.Join(out, "comparison.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(bytes.NewReader(xlsx))
	if err != nil {
		t.Fatalf("comparison.xlsx: %v", err)
	}
	defer f.Close()
	if rows, err := f.GetRows("Comparison"); err != nil || len(rows) < 10 {
		t.Errorf("comparison.xlsx Comparison sheet: %d rows, %v", len(rows), err)
	}
	if pdf, err := os.ReadFile(filepath.Join(out, "comparison.pdf")); err != nil || !bytes.HasSuffix(bytes.TrimSpace(pdf), []byte("%%EOF")) {
		t.Errorf("comparison.pdf is not a whole PDF: %v", err)
	}
}
