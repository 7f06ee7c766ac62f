package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"

	"grantworth/report"
)

var updateValue = flag.Bool("update", false, "rewrite the golden files in testdata/")

// The sample schedule shipped with the project (an invented company).
const sampleXLSX = "../../sample/tarnwick.xlsx"

// sampleRun runs value on the sample once for all the tests that only read
// its outputs: the run takes seconds.
var sampleRun struct {
	once             sync.Once
	dir              string
	code             int
	stdout, stderr   string
	pdf, xlsx, jsonb []byte
}

func valueSample(t *testing.T) (dir string, pdf, xlsx, js []byte) {
	t.Helper()
	r := &sampleRun
	r.once.Do(func() {
		d, err := os.MkdirTemp("", "grantworth-value-")
		if err != nil {
			t.Fatal(err)
		}
		r.dir = filepath.Join(d, "out")
		r.code, r.stdout, r.stderr = runArgs(t, "value", sampleXLSX, "--out", r.dir)
		r.pdf, _ = os.ReadFile(filepath.Join(r.dir, "memo.pdf"))
		r.xlsx, _ = os.ReadFile(filepath.Join(r.dir, "valuation.xlsx"))
		r.jsonb, _ = os.ReadFile(filepath.Join(r.dir, "valuation.json"))
	})
	if r.code != 0 {
		t.Fatalf("value %s: exit %d\nstdout:\n%s\nstderr:\n%s", sampleXLSX, r.code, r.stdout, r.stderr)
	}
	return r.dir, r.pdf, r.xlsx, r.jsonb
}

func TestMain(m *testing.M) {
	switch os.Getenv(testMainEnv) {
	case "":
	case "crash":
		go panic("a crash for TestSupervisorExitCodes") // the runtime exits 2
		select {}
	case "exit":
		os.Exit(childCode(exitInput))
	default:
		main() // a test started this binary as grantworth
		return
	}
	code := m.Run()
	if sampleRun.dir != "" {
		os.RemoveAll(filepath.Dir(sampleRun.dir))
	}
	if compareRun.dir != "" {
		os.RemoveAll(compareRun.dir)
	}
	os.Exit(code)
}

func goldenFile(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *updateValue {
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("golden %s: %v (run go test ./cmd/grantworth -run %s -update to create it)", path, err, t.Name())
	}
	if !bytes.Equal(got, want) {
		gl, wl := strings.Split(string(got), "\n"), strings.Split(string(want), "\n")
		for i := 0; i < len(gl) && i < len(wl); i++ {
			if gl[i] != wl[i] {
				t.Fatalf("%s differs from the golden at line %d:\n got: %s\nwant: %s\n(run with -update if the change is intended)", name, i+1, gl[i], wl[i])
			}
		}
		t.Fatalf("%s differs from the golden in length: %d lines, want %d", name, len(gl), len(wl))
	}
}

func TestValueSampleJSONGolden(t *testing.T) {
	_, _, _, js := valueSample(t)
	goldenFile(t, "tarnwick.valuation.json", js)
}

func TestValueSampleSummary(t *testing.T) {
	dir, _, _, js := valueSample(t)
	var m report.Model
	if err := json.Unmarshal(js, &m); err != nil {
		t.Fatal(err)
	}
	out := sampleRun.stdout
	for _, want := range []string{m.Company.Name, "grants            " + strconv.Itoa(m.Totals.Grants),
		"tranches          " + groupCount(m.Totals.Tranches), "shares            " + groupCount(int(m.Totals.Shares)), money2(m.Totals.FairValueTotal),
		filepath.Join(dir, "memo.pdf"), filepath.Join(dir, "valuation.xlsx"), filepath.Join(dir, "valuation.json")} {
		if !strings.Contains(out, want) {
			t.Errorf("summary lacks %q:\n%s", want, out)
		}
	}
	// stderr is not a terminal, so nothing is drawn there: it holds the
	// warnings alone, each once, as the JSON lists them.
	if want := "warning: " + strings.Join(m.Warnings, "\nwarning: ") + "\n"; sampleRun.stderr != want {
		t.Errorf("stderr %q, want the warnings\n%q", sampleRun.stderr, want)
	}
	// The sums in the JSON add up (they are what the memo and workbook
	// show): Totals over the share-based awards, FinancingTotals over the
	// warrants issued in financings.
	var total, finTotal float64
	n := 0
	for _, g := range m.Grants {
		var gt float64
		for _, tr := range g.Tranches {
			if d := tr.FairValuePerShare*float64(tr.Shares) - tr.FairValueTotal; math.Abs(d) > 1e-9 {
				t.Errorf("grant %s tranche %d: total %v is not shares × value", g.ID, tr.Index, tr.FairValueTotal)
			}
			gt += tr.FairValueTotal
		}
		if math.Abs(gt-g.FairValueTotal) > 1e-6 {
			t.Errorf("grant %s: total %v, tranches add to %v", g.ID, g.FairValueTotal, gt)
		}
		if g.Purpose == "financing" {
			finTotal += gt
			continue
		}
		n += len(g.Tranches)
		total += gt
	}
	if n != m.Totals.Tranches || math.Abs(total-m.Totals.FairValueTotal) > 1e-6 || math.Abs(finTotal-m.FinancingTotals.FairValueTotal) > 1e-6 {
		t.Errorf("totals %d tranches %v, financing %v; want %d, %v and %v", m.Totals.Tranches, m.Totals.FairValueTotal,
			m.FinancingTotals.FairValueTotal, n, total, finTotal)
	}
	// DESIGN §4.3: the financing warrants are never inside the
	// compensation expense; the sample's lender and investor warrants are
	// apart, and the cumulative is the compensation grants' alone.
	e := m.Expense
	var cum float64
	for _, g := range e.ByGrant {
		if g.GrantID == "TW-038" || g.GrantID == "TW-039" {
			t.Errorf("financing warrant %s in expense.by_grant", g.GrantID)
		}
		cum += g.Cumulative
	}
	if math.Abs(cum-e.Cumulative) > 1e-6 || len(e.Financing) != 2 || e.Financing[0].GrantID != "TW-038" || e.Financing[1].GrantID != "TW-039" {
		t.Errorf("cumulative %v, by grant %v; financing %+v", e.Cumulative, cum, e.Financing)
	}
	if !strings.Contains(out, "financing         2 warrant grants") {
		t.Errorf("summary does not show the financing warrants apart:\n%s", out)
	}
	if m.Expense == nil || len(m.Expense.Periods) == 0 {
		t.Error("valuation.json has no expense periods")
	}
}

func TestValueSampleWorkbook(t *testing.T) {
	_, _, xb, js := valueSample(t)
	var m report.Model
	if err := json.Unmarshal(js, &m); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(bytes.NewReader(xb))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sheets := strings.Join(f.GetSheetList(), ",")
	for _, s := range []string{"Summary", "Assumptions", "Grants", "Tranches", "Sensitivity", "Convergence", "Warnings", "About"} {
		if !strings.Contains(sheets, s) {
			t.Errorf("workbook lacks sheet %s (has %s)", s, sheets)
		}
	}
	row := 2
	for _, g := range m.Grants {
		for _, tr := range g.Tranches {
			get := func(col string) string {
				v, _ := f.GetCellValue("Tranches", fmt.Sprintf("%s%d", col, row), excelize.Options{RawCellValue: true})
				return v
			}
			if get("A") != g.ID || get("B") != g.Holder {
				t.Fatalf("Tranches row %d: grant %q holder %q, want %q %q", row, get("A"), get("B"), g.ID, g.Holder)
			}
			// The workbook keeps six decimals of a value per share and
			// cents of an amount (no float noise, issue 14).
			for col, c := range map[string]struct{ want, tol float64 }{"F": {float64(tr.Shares), 0}, "P": {tr.FairValuePerShare, 5e-7},
				"U": {tr.BSMSimplifiedValue, 5e-7}, "Z": {tr.FairValueTotal, 0.005}} {
				want := c.want
				got, err := strconv.ParseFloat(get(col), 64)
				if err != nil || math.Abs(got-want) > c.tol+1e-12*math.Max(1, math.Abs(want)) {
					t.Errorf("Tranches!%s%d = %q, JSON has %v", col, row, get(col), want)
				}
			}
			fm, _ := f.GetCellFormula("Tranches", fmt.Sprintf("X%d", row))
			if g.Instrument != report.RSU && !strings.Contains(fm, "NORM.S.DIST") {
				t.Errorf("Tranches!X%d = %q, want a NORM.S.DIST formula", row, fm)
			}
			for _, col := range []string{"A", "B"} {
				if typ, _ := f.GetCellType("Tranches", fmt.Sprintf("%s%d", col, row)); typ != excelize.CellTypeInlineString {
					t.Errorf("Tranches!%s%d: cell type %v, want text", col, row, typ)
				}
			}
			row++
		}
	}
}

func TestValueSampleMemo(t *testing.T) {
	_, pdf, _, js := valueSample(t)
	var m report.Model
	if err := json.Unmarshal(js, &m); err != nil {
		t.Fatal(err)
	}
	text := pdfText(t, pdf)
	if text == "" {
		t.Skip("pdftotext not found: apt-get install poppler-utils to check the memo's text")
	}
	flat := strings.Join(strings.Fields(text), " ")
	for _, want := range []string{m.Company.Name, "USD " + money2(m.Totals.FairValueTotal), "not an audit opinion",
		"ASC 718, IFRS 2 or local rules", "Methodology", "Sensitivity of total fair value", "Convergence of the lattice"} {
		if !strings.Contains(flat, want) {
			t.Errorf("memo text lacks %q", want)
		}
	}
	goldenFile(t, "tarnwick.memo-pages.txt", []byte(fmt.Sprintf("%d\n", strings.Count(text, "\f"))))
}

// A rerun gives the same three files byte for byte.
func TestValueRerunIdentical(t *testing.T) {
	_, pdf, xb, js := valueSample(t)
	dir := filepath.Join(t.TempDir(), "again")
	if code, _, errs := runArgs(t, "value", sampleXLSX, "--out", dir); code != 0 {
		t.Fatalf("second run: exit %d: %s", code, errs)
	}
	for name, want := range map[string][]byte{"memo.pdf": pdf, "valuation.xlsx": xb, "valuation.json": js} {
		got, _ := os.ReadFile(filepath.Join(dir, name))
		if !bytes.Equal(got, want) {
			t.Errorf("%s differs between two runs on the same input", name)
		}
	}
}

// Without --force a second run into the same folder refuses (exit 2) and
// changes nothing; with --force it replaces the files.
func TestValueRefusesOverwrite(t *testing.T) {
	dir := t.TempDir()
	old := []byte("an earlier memo")
	if err := os.WriteFile(filepath.Join(dir, "memo.pdf"), old, 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := runArgs(t, "value", sampleXLSX, "--out", dir)
	if code != exitInput || !strings.Contains(errs, "--force") || out != "" {
		t.Fatalf("exit %d, stdout %q, stderr %q; want exit 2 naming --force and no summary", code, out, errs)
	}
	got, _ := os.ReadFile(filepath.Join(dir, "memo.pdf"))
	ents, _ := os.ReadDir(dir)
	if !bytes.Equal(got, old) || len(ents) != 1 {
		t.Fatalf("the refused run changed the folder: %d entries, memo %q", len(ents), got)
	}
	if testing.Short() {
		return
	}
	_, pdf, _, _ := valueSample(t)
	if code, _, errs := runArgs(t, "value", sampleXLSX, "--out", dir, "--force"); code != 0 {
		t.Fatalf("--force: exit %d: %s", code, errs)
	}
	got, _ = os.ReadFile(filepath.Join(dir, "memo.pdf"))
	if !bytes.Equal(got, pdf) {
		t.Error("--force did not replace memo.pdf with the new memo")
	}
}

// A schedule with an error: every problem on stderr with its cell, exit 2,
// nothing written, the input unchanged.
func TestValueBadInputWritesNothing(t *testing.T) {
	tmp := t.TempDir()
	bad := filepath.Join(tmp, "bad.xlsx")
	f, err := excelize.OpenFile(sampleXLSX)
	if err != nil {
		t.Fatal(err)
	}
	// Two broken cells on the Grants sheet: a negative strike and a text date.
	rows, _ := f.GetRows("Grants")
	col := func(name string) string {
		for i, h := range rows[0] {
			if strings.EqualFold(strings.ReplaceAll(h, " ", "_"), name) {
				c, _ := excelize.ColumnNumberToName(i + 1)
				return c
			}
		}
		t.Fatalf("sample Grants sheet has no %s column", name)
		return ""
	}
	f.SetCellValue("Grants", col("strike")+"2", -3)
	f.SetCellValue("Grants", col("grant_date")+"3", "3/4/2025")
	if err := f.SaveAs(bad); err != nil {
		t.Fatal(err)
	}
	f.Close()
	before, _ := os.ReadFile(bad)
	out := filepath.Join(tmp, "out")
	code, stdout, errs := runArgs(t, "value", bad, "--out", out)
	if code != exitInput {
		t.Fatalf("exit %d, want 2; stderr:\n%s", code, errs)
	}
	for _, want := range []string{"Grants!" + col("strike") + "2", "Grants!" + col("grant_date") + "3", "nothing was written"} {
		if !strings.Contains(errs, want) {
			t.Errorf("stderr lacks %q:\n%s", want, errs)
		}
	}
	if stdout != "" {
		t.Errorf("stdout %q, want nothing", stdout)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("the output folder was created (%v)", err)
	}
	after, _ := os.ReadFile(bad)
	if !bytes.Equal(before, after) {
		t.Error("the input was modified")
	}
}

func TestValueUsage(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"value"}, "accepts 1 arg"},
		{[]string{"value", sampleXLSX, "--valuation-date", "30/09/2026"}, "not a date"},
		{[]string{"value", "no-such-schedule.xlsx", "--out", "x"}, "no such file"},
	} {
		code, _, errs := runArgs(t, c.args...)
		if code != exitInput || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 with %q", c.args, code, errs, c.want)
		}
	}
}

// writeAll leaves nothing behind when it cannot finish: here the target
// is a file, not a folder.
func TestWriteAllFailureLeavesNothing(t *testing.T) {
	dir := t.TempDir()
	block := filepath.Join(dir, "block")
	if err := os.WriteFile(block, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	// memo.pdf exists as a folder, so its rename fails after the others
	// could have been renamed.
	out := filepath.Join(dir, "out")
	if err := os.MkdirAll(filepath.Join(out, "valuation.json", "x"), 0o755); err != nil {
		t.Fatal(err)
	}
	text := func(s string) func(io.Writer) error {
		return func(w io.Writer) error { _, err := io.WriteString(w, s); return err }
	}
	files := []outFile{{"memo.pdf", text("a")}, {"valuation.xlsx", text("b")}, {"valuation.json", text("c")}}
	if err := writeOutputs(out, files, true, &IO{Err: io.Discard}); err == nil {
		t.Fatal("writeAll over a folder named valuation.json succeeded")
	}
	ents, _ := os.ReadDir(out)
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	if len(names) != 1 || names[0] != "valuation.json" {
		t.Errorf("after the failure the folder holds %v, want only the folder that was there", names)
	}
	if err := writeOutputs(block, files, false, &IO{Err: io.Discard}); err == nil {
		t.Error("writeAll into a file succeeded")
	}
	// A renderer that fails after writing part of its file.
	out2 := filepath.Join(dir, "out2")
	broken := []outFile{{"memo.pdf", text("a")}, {"valuation.xlsx", func(w io.Writer) error {
		io.WriteString(w, "half a workbook")
		return errors.New("renderer failed")
	}}, {"valuation.json", text("c")}}
	if err := writeOutputs(out2, broken, false, &IO{Err: io.Discard}); err == nil || !strings.Contains(err.Error(), "renderer failed") {
		t.Fatalf("writeAll with a failing renderer: %v", err)
	}
	if ents, _ := os.ReadDir(out2); len(ents) != 0 {
		t.Errorf("a failed render left %d files behind", len(ents))
	}
}

func TestProgressBar(t *testing.T) {
	var buf bytes.Buffer
	p := newProgress(&IO{Err: &buf, ErrIsTerminal: true}, "valuing grants")
	for i := 1; i <= 4; i++ {
		p.update(i, 4)
	}
	p.finish()
	if s := buf.String(); !strings.Contains(s, "\r") || !strings.Contains(s, "100% 4/4") || !strings.HasSuffix(s, "\n") {
		t.Errorf("terminal progress = %q", s)
	}
	buf.Reset()
	p = newProgress(&IO{Err: &buf}, "valuing grants")
	p.update(1, 2)
	p.finish()
	if buf.Len() != 0 {
		t.Errorf("progress on a non-terminal wrote %q", buf.String())
	}
}

// The time left appears once a second has passed and a per cent is done,
// estimated from the pace so far, and is padded so that a shorter text
// overwrites a longer one.
func TestTimeLeft(t *testing.T) {
	for _, c := range []struct {
		spent       time.Duration
		done, total int
		want        string
	}{
		{500 * time.Millisecond, 50, 100, ""},            // too soon to judge
		{10 * time.Second, 0, 100, ""},                   // nothing done
		{10 * time.Second, 5, 1000, ""},                  // less than a per cent
		{10 * time.Second, 100, 100, ""},                 // done
		{10 * time.Second, 50, 100, ", about 11 s left"}, // 10 s more, rounded up
		{30 * time.Second, 25, 100, ", about 1 min 30 s left"},
	} {
		got := timeLeft(c.spent, c.done, c.total)
		if len(got) != timeLeftWidth || strings.TrimRight(got, " ") != c.want {
			t.Errorf("timeLeft(%v, %d, %d) = %q, want %q padded to %d", c.spent, c.done, c.total, got, c.want, timeLeftWidth)
		}
	}
}

// On a terminal each stage ends with a line of what it did; a stage that
// fails ends its line before the error; elsewhere nothing is printed.
func TestStages(t *testing.T) {
	var buf bytes.Buffer
	st := newStages(&IO{Err: &buf, ErrIsTerminal: true})
	st.begin("reading")
	st.end("%s grants", groupCount(12345))
	st.begin("accounting")
	st.interrupt()
	st.interrupt()
	got := buf.String()
	if !strings.Contains(got, "reading     ...\rreading     12,345 grants") || !strings.HasSuffix(got, "accounting  ...\n") ||
		strings.Count(got, "\n") != 2 {
		t.Errorf("terminal stages = %q", got)
	}
	buf.Reset()
	st = newStages(&IO{Err: &buf})
	st.begin("reading")
	st.end("done")
	st.interrupt()
	if buf.Len() != 0 {
		t.Errorf("stages on a non-terminal wrote %q", buf.String())
	}
}

// --valuation-date moves the period end: grants made after it are left out
// with a warning, and the period is the quarter ending on it.
func TestValueValuationDate(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "q2")
	// On a terminal, progress goes to stderr; the summary stays on stdout.
	var out, errb bytes.Buffer
	code := run([]string{"value", sampleXLSX, "--out", dir, "--valuation-date", "2026-06-30"},
		&IO{In: strings.NewReader(""), Out: &out, Err: &errb, ErrIsTerminal: true})
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	if e := errb.String(); !strings.Contains(e, "\r") || !strings.Contains(e, "valuing grants") || !strings.Contains(e, "writing memo.pdf") ||
		!strings.Contains(e, "\rreading ") || !strings.Contains(e, "\raccounting ") || !strings.Contains(e, fmt.Sprintf("\rwriting     %d files", len(outputNames))) {
		t.Errorf("terminal stderr = %q, want a progress bar, the files being written and each stage's line", e)
	}
	if strings.Contains(out.String(), "\r") {
		t.Error("progress went to stdout")
	}
	js, _ := os.ReadFile(filepath.Join(dir, "valuation.json"))
	var m report.Model
	if err := json.Unmarshal(js, &m); err != nil {
		t.Fatal(err)
	}
	if m.ValuationDate.String() != "2026-06-30" || m.PeriodStart.String() != "2026-04-01" {
		t.Errorf("valuation date %s, period start %s; want 2026-06-30 and 2026-04-01", m.ValuationDate, m.PeriodStart)
	}
	// The period stays a quarter, and a warning says which period and why.
	if !strings.Contains(strings.Join(m.Warnings, "\n"), "the period reported is 2026-04-01 to 2026-06-30, 3 months") {
		t.Errorf("no warning names the period reported: %q", m.Warnings)
	}
	left := 0
	for _, w := range m.Warnings {
		if strings.Contains(w, "is left out of this valuation") {
			left++
		}
	}
	for _, g := range m.Grants {
		if g.GrantDate.Time().After(m.ValuationDate.Time()) {
			t.Errorf("grant %s dated %s is valued as of %s", g.ID, g.GrantDate, m.ValuationDate)
		}
	}
	if left == 0 {
		t.Error("no warning names the grants made after the valuation date")
	}
}

// End to end on the sample: read, value, render, write. Run briefly:
// go test ./cmd/grantworth -run - -bench ValueSample -benchtime 2x
func BenchmarkValueSample(b *testing.B) {
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		dir := b.TempDir()
		var out, errb bytes.Buffer
		if code := run([]string{"value", sampleXLSX, "--out", dir}, &IO{In: strings.NewReader(""), Out: &out, Err: &errb}); code != 0 {
			b.Fatalf("exit %d: %s", code, errb.String())
		}
	}
}

// The Income tax sheet lists each deductible grant that has a temporary
// difference or an asset at either date, and counts the others in its
// total line instead of a row of zeros each (the sample has one: TW-006,
// exercised and expired before the period).
func TestValueSampleTaxSheetSkipsIdleGrants(t *testing.T) {
	_, _, xb, js := valueSample(t)
	var m report.Model
	if err := json.Unmarshal(js, &m); err != nil {
		t.Fatal(err)
	}
	x := m.Expense.Tax
	idle := 0
	for _, g := range x.ByGrant {
		if g.BasisAtPeriodStart == 0 && g.Basis == 0 && g.Cost == 0 && g.AssetAtPeriodStart == 0 && g.Asset == 0 && g.Equity == 0 {
			idle++
		}
	}
	if idle == 0 {
		t.Fatal("the sample has no deductible grant with nothing outstanding: the test needs one")
	}
	f, err := excelize.OpenReader(bytes.NewReader(xb))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := f.GetRows(report.SheetTax)
	if err != nil {
		t.Fatal(err)
	}
	listed, total := 0, ""
	for _, r := range rows {
		if len(r) > 0 && r[0] == "grant" {
			listed++
		}
		if len(r) > 0 && r[0] == "total" {
			total = r[len(r)-1]
		}
	}
	if listed != len(x.ByGrant)-idle || !strings.Contains(total, fmt.Sprintf("%d deductible grant", idle)) {
		t.Errorf("%d grant rows of %d deductible grants, %d idle; total note %q", listed, len(x.ByGrant), idle, total)
	}
}
