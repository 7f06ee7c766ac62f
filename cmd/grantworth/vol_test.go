package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"grantworth/valuation"
)

func volTestIO() (*IO, *bytes.Buffer, *bytes.Buffer) {
	var out, errb bytes.Buffer
	return &IO{In: strings.NewReader(""), Out: &out, Err: &errb}, &out, &errb
}

// argv → options, through the real flag set with the run replaced.
func TestVolArgs(t *testing.T) {
	for _, c := range []struct {
		argv    []string
		check   func(*volOptions) bool
		wantErr string
	}{
		{[]string{"a.csv", "b.csv"}, func(o *volOptions) bool {
			return len(o.Files) == 2 && o.Frequency == valuation.Daily && o.AsOf.IsZero() && o.LookbackYears == 0 &&
				o.MinObservations == 20 && o.Propose == "median" && !o.JSON && !o.CSV && o.Chart == ""
		}, ""},
		{[]string{"a.csv", "--frequency", "weekly", "--as-of", "2026-09-30", "--lookback", "6.25", "--min-observations", "100",
			"--propose", "trimmed-mean", "--csv", "--chart", "c.png", "--force"}, func(o *volOptions) bool {
			return o.Frequency == valuation.Weekly && o.AsOf.Equal(time.Date(2026, 9, 30, 0, 0, 0, 0, time.UTC)) &&
				o.LookbackYears == 6.25 && o.MinObservations == 100 && o.Propose == "trimmed-mean" && o.CSV && o.Chart == "c.png" && o.Force
		}, ""},
		{[]string{"a.csv", "--frequency", "monthly"}, nil, `--frequency "monthly"`},
		{[]string{"a.csv", "--as-of", "30/09/2026"}, nil, `--as-of "30/09/2026"`},
		{[]string{"a.csv", "--lookback", "0"}, nil, "--lookback 0"},
		{[]string{"a.csv", "--lookback", "-2"}, nil, "--lookback -2"},
		{[]string{"a.csv", "--lookback", "six"}, nil, `"six"`},
		{[]string{"a.csv", "--min-observations", "1"}, nil, "--min-observations 1"},
		{[]string{"a.csv", "--propose", "mode"}, nil, `--propose "mode"`},
		{[]string{"a.csv", "--json", "--csv"}, nil, "--json and --csv"},
	} {
		ios, _, _ := volTestIO()
		var got *volOptions
		cmd := newVolCmd(ios, func(o *volOptions) error { got = o; return nil })
		cmd.SetArgs(c.argv)
		cmd.SetOut(ios.Out)
		cmd.SetErr(ios.Err)
		cmd.SilenceUsage, cmd.SilenceErrors = true, true
		err := cmd.Execute()
		if c.wantErr != "" {
			if err == nil || !strings.Contains(err.Error(), c.wantErr) {
				t.Errorf("%v: err %v, want one containing %q", c.argv, err, c.wantErr)
			}
			continue
		}
		if err != nil || got == nil || !c.check(got) {
			t.Errorf("%v: options %+v, err %v", c.argv, got, err)
		}
	}
}

// writeVolFixtures writes three small peers with known returns.
func writeVolFixtures(t *testing.T) (dir string, files []string) {
	t.Helper()
	dir = t.TempDir()
	// Hull's 21 prices (from memory) give 0.01216 daily; the other two
	// peers are it scaled (same returns) and with returns doubled.
	hull := []float64{20.00, 20.10, 19.90, 20.00, 20.50, 20.25, 20.90, 20.90, 20.90, 20.75, 20.75,
		21.00, 21.10, 20.90, 20.90, 21.25, 21.40, 21.40, 21.25, 21.75, 22.00}
	day := time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)
	var a, b, c strings.Builder
	a.WriteString("date,close\n")
	b.WriteString("Date,Close,Adjusted Close\n")
	c.WriteString("date,close\n")
	prev := hull[0]
	cp := 10.0
	for i, p := range hull {
		for day.Weekday() == time.Saturday || day.Weekday() == time.Sunday {
			day = day.AddDate(0, 0, 1)
		}
		if i > 0 {
			cp *= (p / prev) * (p / prev)
		}
		prev = p
		ds := day.Format(time.DateOnly)
		a.WriteString(ds + "," + volFtoa(p) + "\n")
		b.WriteString(ds + ",999," + volFtoa(3*p) + "\n")
		c.WriteString(ds + "," + volFtoa(cp) + "\n")
		day = day.AddDate(0, 0, 1)
	}
	for name, s := range map[string]string{"alder.csv": a.String(), "birch.csv": b.String(), "cedar.csv": c.String()} {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
		files = append(files, p)
	}
	return dir, []string{filepath.Join(dir, "alder.csv"), filepath.Join(dir, "birch.csv"), filepath.Join(dir, "cedar.csv")}
}

func volFtoa(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

// options → output: the table, JSON and CSV of three peers whose
// volatilities follow from Hull's table (0.01216·√252 = 19.30%, twice that
// for the doubled returns).
func TestVolOutput(t *testing.T) {
	_, files := writeVolFixtures(t)
	ios, out, _ := volTestIO()
	opts := &volOptions{IO: ios, Files: files, MinObservations: 20, Propose: "median", JSON: true}
	if err := runVol(opts); err != nil {
		t.Fatal(err)
	}
	var got struct {
		Frequency string  `json:"frequency"`
		AsOf      string  `json:"as_of"`
		Median    float64 `json:"median"`
		Mean      float64 `json:"mean"`
		Vol       float64 `json:"volatility"`
		Source    string  `json:"source"`
		Peers     []struct {
			Name         string  `json:"name"`
			Column       string  `json:"price_column"`
			Observations int     `json:"observations"`
			Volatility   float64 `json:"volatility"`
		} `json:"peers"`
	}
	if err := json.Unmarshal(out.Bytes(), &got); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	const tolAnnual = 0.0005 // Hull's 19.3% is published to 0.1%
	if len(got.Peers) != 3 || got.Peers[1].Column != "Adjusted Close" || got.Peers[0].Observations != 20 {
		t.Fatalf("peers %+v", got.Peers)
	}
	for i, want := range []float64{0.193, 0.193, 0.386} {
		if d := got.Peers[i].Volatility - want; d > 2*tolAnnual || d < -2*tolAnnual {
			t.Errorf("peer %s vol %v, want %v", got.Peers[i].Name, got.Peers[i].Volatility, want)
		}
	}
	if got.Vol != got.Median || got.Median != got.Peers[0].Volatility && got.Median != got.Peers[1].Volatility {
		t.Errorf("proposed %v, median %v", got.Vol, got.Median)
	}
	if want := "median of 3 peers' daily log-return volatility over 0.1 years to 2026-03-30"; got.Source != want || got.AsOf != "2026-03-30" {
		t.Errorf("source %q as of %s, want %q", got.Source, got.AsOf, want)
	}

	out.Reset()
	opts.JSON, opts.CSV = false, true
	if err := runVol(opts); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(out.String(), "key,value,source\nvolatility,0.19") || !strings.Contains(out.String(), "median of 3 peers'") {
		t.Errorf("csv output:\n%s", out)
	}

	out.Reset()
	opts.CSV = false
	opts.Chart = filepath.Join(t.TempDir(), "vol.png")
	if err := runVol(opts); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"alder", "Adjusted Close", "19.30%", "38.6", "median        19.30%  <- proposed", "ASC 718"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	if b, err := os.ReadFile(opts.Chart); err != nil || !bytes.HasPrefix(b, []byte("\x89PNG")) {
		t.Errorf("chart %s: %v, not a PNG", opts.Chart, err)
	}
	if err := runVol(opts); err == nil || !strings.Contains(err.Error(), "already exists") {
		t.Errorf("second run over the chart: %v, want a refusal without --force", err)
	}
}

// Bad files exit 2 through run(), naming file and line.
func TestVolBadInputExit2(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.csv")
	os.WriteFile(good, []byte("date,close\n2026-01-05,10\n2026-01-06,11\n2026-01-07,10.5\n2026-01-08,10.7\n2026-01-09,10.6\n2026-01-12,10.9\n"), 0o644)
	for _, c := range []struct{ name, body, want string }{
		{"empty.csv", "", "empty.csv: "},
		{"one.csv", "date,close\n2026-01-05,10\n", "one.csv:2: "},
		{"neg.csv", "date,close\n2026-01-05,10\n2026-01-06,-1\n", "neg.csv:3: "},
		{"dup.csv", "date,close\n2026-01-05,10\n2026-01-05,11\n", "dup.csv:3: "},
		{"few.csv", "date,close\n2026-01-05,10\n2026-01-08,11\n2026-01-12,12\n", "few.csv:4: "},
	} {
		p := filepath.Join(dir, c.name)
		os.WriteFile(p, []byte(c.body), 0o644)
		ios, out, errb := volTestIO()
		code := run([]string{"vol", good, p, "--min-observations", "3"}, ios)
		if code != exitInput || !strings.Contains(errb.String(), c.want) || out.Len() != 0 {
			t.Errorf("%s: exit %d, stderr %q (want exit 2 and %q), stdout %q", c.name, code, errb, c.want, out)
		}
	}
	ios, _, errb := volTestIO()
	if code := run([]string{"vol", filepath.Join(dir, "missing.csv")}, ios); code != exitInput {
		t.Errorf("missing file: exit %d, %s", code, errb)
	}
}

// The demo peers in sample/peers run and give the documented window.
func TestVolSamplePeers(t *testing.T) {
	files, _ := filepath.Glob("../../sample/peers/*.csv")
	if len(files) != 5 {
		t.Fatalf("sample/peers has %d CSV files, want 5", len(files))
	}
	ios, out, errb := volTestIO()
	if code := run(append([]string{"vol", "--as-of", "2026-09-30", "--csv"}, files...), ios); code != 0 {
		t.Fatalf("exit %d: %s", code, errb)
	}
	if !strings.Contains(out.String(), "median of 5 peers' daily log-return volatility over 6.1 years to 2026-09-30") {
		t.Errorf("sample output:\n%s", out)
	}
}

// A --lookback longer than the prices says what the estimate rests on, in
// the window line and in the source text; an --as-of before a file's first
// price names the file and where it starts.
func TestVolWindowBeyondPrices(t *testing.T) {
	files, _ := filepath.Glob("../../sample/peers/*.csv")
	ios, out, errb := volTestIO()
	if code := run(append([]string{"vol", "--as-of", "2026-09-30", "--lookback", "10"}, files...), ios); code != 0 {
		t.Fatalf("exit %d: %s", code, errb)
	}
	for _, want := range []string{
		"Window: 2016-09-29 to 2026-09-30 (10.0 years); the prices cover 6.1 to 7.0 years of it\n",
		"Source text: median of 5 peers' daily log-return volatility over 6.1 to 7.0 years (all the prices the files hold; 10.0 years were asked) to 2026-09-30\n",
	} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("no line %q in\n%s", want, out)
		}
	}
	if !strings.Contains(errb.String(), "corvid.csv: prices start 2020-08-14, 3.9 years after the window starts (2016-09-29)") {
		t.Errorf("stderr:\n%s", errb)
	}
	ios, out, errb = volTestIO()
	code := run(append([]string{"vol", "--as-of", "2020-01-01", "--lookback", "1"}, files...), ios)
	want := regexp.MustCompile(`^grantworth: --as-of 2020-01-01 is before the prices start \(\S*corvid.csv starts 2020-08-14\): give a date well after 2020-08-14, so that every file has a window of prices\n$`)
	if code != exitInput || !want.MatchString(errb.String()) || out.Len() != 0 {
		t.Errorf("--as-of before the prices: exit %d, stderr %q", code, errb)
	}
}
