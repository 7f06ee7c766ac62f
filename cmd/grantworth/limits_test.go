package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"grantworth/report"
	"grantworth/valuation"
)

var limitsLong = flag.Bool("limits.long", false, "TestLimitEdges also values a raw tree of the largest step count (slow)")

// limitSchedule writes a CSV schedule of the sample's company, assumptions,
// prices and rates with one grant row per entry of rows (each a column →
// value map over a plain ten-year option), then lets edit change any file.
func limitSchedule(t *testing.T, dir string, rows []map[string]string, edit func(files map[string]string)) string {
	t.Helper()
	src := "../../sample/tarnwick-csv"
	files := map[string]string{}
	for _, f := range []string{"company.csv", "assumptions.csv", "share_prices.csv", "rates.csv"} {
		b, err := os.ReadFile(filepath.Join(src, f))
		must(t, err)
		files[f] = string(b)
	}
	var b strings.Builder
	b.WriteString(strings.Join(grantColumns, ",") + "\n")
	for i, r := range rows {
		row := map[string]string{"grant_id": fmt.Sprintf("L%02d", i+1), "holder": "E1", "instrument": "option",
			"grant_date": "2025-01-10", "shares": "1000", "strike": "1.6", "expiry_date": "2035-01-10",
			"vest_start": "2025-01-10", "vest_months": "48", "cliff_months": "12", "vest_every_months": "12"}
		for k, v := range r {
			row[k] = v
		}
		for j, c := range grantColumns {
			if j > 0 {
				b.WriteByte(',')
			}
			b.WriteString(row[c])
		}
		b.WriteByte('\n')
	}
	files["grants.csv"] = b.String()
	if edit != nil {
		edit(files)
	}
	must(t, os.MkdirAll(dir, 0o755))
	for n, s := range files {
		must(t, os.WriteFile(filepath.Join(dir, n), []byte(s), 0o644))
	}
	return dir
}

var grantColumns = strings.Split("grant_id,holder,instrument,grant_date,shares,strike,expiry_date,term_years,vest_start,vest_months,cliff_months,vest_every_months,share_price,volatility,dividend_yield,exercise_multiple,post_vesting_exit_rate,classification,exercise_style", ",")

// grantCell is the cell of column key on the first grant row.
func grantCell(key string) string {
	for i, c := range grantColumns {
		if c == key {
			return fmt.Sprintf("Grants!%c2 (%s)", 'A'+i, key)
		}
	}
	panic("no column " + key)
}

// oneCurve is a Rates sheet of one curve of two points.
func oneCurve(t0, r0, t1, r1 string) func(map[string]string) {
	return func(f map[string]string) {
		f["rates.csv"] = "curve_date,tenor_years,rate,compounding\n2024-12-31," + t0 + "," + r0 + ",continuous\n2024-12-31," + t1 + "," + r1 + ",continuous\n"
	}
}

// edge is one value of an input at or just past a bound of its Limit.
type edge struct {
	row  map[string]string       // the grant's cells
	edit func(map[string]string) // or a change to the other sheets
	cell string                  // for a value outside: the cell the error names
}

// limitEdges gives, for a row of valuation.Limits, the values at its
// bounds that must be valued and those just past them that check must
// refuse with their cell.
func limitEdges(t *testing.T, l valuation.Limit) (in, out []edge) {
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	col := func(key string, ins, outs []float64) {
		for _, x := range ins {
			in = append(in, edge{row: map[string]string{key: g(x)}})
		}
		for _, x := range outs {
			out = append(out, edge{row: map[string]string{key: g(x)}, cell: grantCell(key)})
		}
	}
	const tiny = 1e-7
	switch l.Key {
	case "share_price", "strike", "volatility", "dividend_yield", "post_vesting_exit_rate", "shares":
		lo, hi := l.Min, l.Max
		ins := []float64{lo, hi}
		outs := []float64{lo * (1 - tiny), hi * (1 + tiny)}
		if lo == 0 {
			outs[0] = -tiny
		}
		if l.MaxOpen {
			ins[1], outs[1] = hi*(1-tiny), hi
		}
		if l.Key == "shares" {
			outs = []float64{lo - 1, hi + 1}
		}
		col(l.Key, ins, outs)
		if l.Key == "strike" {
			in[1].row["share_price"] = g(hi) // a strike of 10^12 on a share of 10^12
		}
		if l.Key == "volatility" {
			// Auto mode resolves a spread σ√T of at most 10: the highest
			// volatility on a three-year option.
			in[1].row["expiry_date"], in[1].row["vest_months"] = "2028-01-10", "24"
		}
	case "exercise_multiple":
		col(l.Key, []float64{0, l.Min * (1 + tiny), l.Max}, []float64{l.Min, l.Max * (1 + tiny), -0.5})
	case "years_to_expiry":
		// 2025-01-10 + 100 calendar years is 36,524 days; two days more
		// pass 36,525. A one-day option vests at grant.
		in = append(in,
			edge{row: map[string]string{"expiry_date": "2125-01-10"}},
			edge{row: map[string]string{"expiry_date": "2025-01-11", "vest_months": "0", "cliff_months": "0"}})
		out = append(out,
			edge{row: map[string]string{"expiry_date": "2125-01-12"}, cell: grantCell("expiry_date")},
			edge{row: map[string]string{"expiry_date": "2025-01-10", "vest_months": "0", "cliff_months": "0"}, cell: grantCell("expiry_date")})
	case "steps":
		steps := func(n string) func(map[string]string) {
			return func(f map[string]string) {
				f["assumptions.csv"] = strings.Replace(f["assumptions.csv"], "steps,auto", "steps,"+n, 1)
			}
		}
		in = append(in, edge{edit: steps(g(l.Min))})
		if *limitsLong {
			in = append(in, edge{edit: steps(g(l.Max))})
		}
		out = append(out, edge{edit: steps("0"), cell: "(steps)"}, edge{edit: steps(g(l.Max + 1)), cell: "(steps)"})
	case "rate":
		in = append(in, edge{edit: oneCurve("0", g(l.Min+tiny), "30", g(l.Max-tiny))})
		out = append(out, edge{edit: oneCurve("0", g(l.Min), "30", "0.04"), cell: "Rates!C2 (rate)"},
			edge{edit: oneCurve("0", "0.04", "30", g(l.Max)), cell: "Rates!C3 (rate)"})
	case "tenor_years":
		in = append(in, edge{edit: oneCurve(g(l.Min), "0.04", g(l.Max), "0.05")})
		out = append(out, edge{edit: oneCurve(g(l.Min-tiny), "0.04", "10", "0.05"), cell: "Rates!B2 (tenor_years)"},
			edge{edit: oneCurve("0", "0.04", g(l.Max+tiny), "0.05"), cell: "Rates!B3 (tenor_years)"})
	default:
		t.Fatalf("limit %q has no edges in this test: add them", l.Key)
	}
	return in, out
}

// Every bound of the one table of limits, walked through the program: a
// value at a bound passes check and value values it (every tranche
// finite, all files written); a value just past it fails check with exit
// 2 and its cell, and value refuses it the same way, writing nothing. The
// cases that used to pass check and fail value (exit 1, no cell) are the
// first rows of TestLimitRegressions.
func TestLimitEdges(t *testing.T) {
	base := t.TempDir()
	var rows []map[string]string
	var edits []func(map[string]string)
	n := 0
	for _, l := range valuation.AllLimits() {
		in, out := limitEdges(t, l)
		for _, e := range in {
			if e.row != nil {
				rows = append(rows, e.row)
			} else {
				edits = append(edits, e.edit)
			}
		}
		for _, e := range out {
			n++
			var rs []map[string]string
			if e.row != nil {
				rs = []map[string]string{e.row}
			} else {
				rs = []map[string]string{{}}
			}
			dir := limitSchedule(t, filepath.Join(base, fmt.Sprintf("out%02d", n)), rs, e.edit)
			code, stdout, _ := runArgs(t, "check", dir)
			if code != exitInput || !strings.Contains(stdout, e.cell) {
				t.Errorf("%s past its bound (%v %v): check exit %d, want 2 naming %s:\n%s", l.Key, e.row, e.cell, code, e.cell, stdout)
			}
			outDir := filepath.Join(base, fmt.Sprintf("out%02d-value", n))
			code, _, stderr := runArgs(t, "value", dir, "--out", outDir)
			if code != exitInput || !strings.Contains(stderr, e.cell) || exists(outDir) {
				t.Errorf("%s past its bound (%v %v): value exit %d (folder written: %v), want 2 naming %s:\n%s", l.Key, e.row, e.cell, code, exists(outDir), e.cell, stderr)
			}
		}
	}
	// All the grant-level bounds in one schedule, one grant each; each
	// other sheet's bound in a schedule of its own.
	runs := []string{limitSchedule(t, filepath.Join(base, "in-grants"), rows, nil)}
	for i, e := range edits {
		runs = append(runs, limitSchedule(t, filepath.Join(base, fmt.Sprintf("in-sheet%d", i)), []map[string]string{{}}, e))
	}
	for _, dir := range runs {
		if code, stdout, _ := runArgs(t, "check", dir); code != 0 {
			t.Errorf("%s: check exit %d:\n%s", filepath.Base(dir), code, stdout)
			continue
		}
		out := dir + "-out"
		code, _, stderr := runArgs(t, "value", dir, "--out", out)
		if code != 0 {
			t.Errorf("%s: value exit %d:\n%s", filepath.Base(dir), code, stderr)
			continue
		}
		var m report.Model
		b, err := os.ReadFile(filepath.Join(out, "valuation.json"))
		must(t, err)
		must(t, json.Unmarshal(b, &m))
		if want := strings.Count(mustRead(t, filepath.Join(dir, "grants.csv")), "\n") - 1; len(m.Grants) != want {
			t.Errorf("%s: %d grants valued, want %d", filepath.Base(dir), len(m.Grants), want)
		}
		for _, name := range outputNames {
			if !exists(filepath.Join(out, name)) {
				t.Errorf("%s: %s not written", filepath.Base(dir), name)
			}
		}
	}
	t.Logf("%d grants at the bounds in one run, %d other runs, %d values past the bounds", len(rows), len(edits), n)
}

func mustRead(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	must(t, err)
	return string(b)
}

// The inputs that passed check and then made value fail with exit 1 and
// no cell: each is now refused by check with its cell (or valued).
func TestLimitRegressions(t *testing.T) {
	base := t.TempDir()
	for i, c := range []struct {
		name string
		row  map[string]string
		edit func(map[string]string)
		cell string // "" : valued
	}{
		{"volatility 5 on a ten-year option (a sensitivity case overflowed)", map[string]string{"volatility": "5"}, nil, grantCell("volatility")},
		{"volatility 5 on a three-year option", map[string]string{"volatility": "5", "expiry_date": "2028-01-10", "vest_months": "24"}, nil, ""},
		{"volatility 1e-12", map[string]string{"volatility": "1e-12"}, nil, grantCell("volatility")},
		{"steps 100,000 against the lattice's 20,000", nil, func(f map[string]string) {
			f["assumptions.csv"] = strings.Replace(f["assumptions.csv"], "steps,auto", "steps,100000", 1)
		}, "Assumptions!B9 (steps)"},
		{"strike 1e308", map[string]string{"strike": "1e308"}, nil, grantCell("strike")},
		{"share price 1e308", map[string]string{"share_price": "1e308"}, nil, grantCell("share_price")},
		{"an RSU at 1e300", map[string]string{"instrument": "rsu", "strike": "", "expiry_date": "", "share_price": "1e300", "vest_months": "36", "cliff_months": "0"}, nil, grantCell("share_price")},
		{"raw steps that put the tree's top node past floating point", map[string]string{"volatility": "3"}, func(f map[string]string) {
			f["assumptions.csv"] = strings.Replace(f["assumptions.csv"], "steps,auto", "steps,5000", 1)
		}, "Assumptions!B9 (steps)"},
		{"volatility 0.01 at rates near 50%", map[string]string{"volatility": "0.01"}, oneCurve("0", "0.49", "30", "0.49"), ""},
		{"a strike 10^5 times the share price (auto mode's value was noise, up to 92 ± 150 for a worthless option)", map[string]string{"strike": "160000"}, nil, ""},
		{"a strike 10^12 on a share of 1.6 at 1% volatility", map[string]string{"strike": "1e12", "volatility": "0.01"}, nil, ""},
	} {
		rows := []map[string]string{c.row}
		if c.row == nil {
			rows = []map[string]string{{}}
		}
		dir := limitSchedule(t, filepath.Join(base, fmt.Sprintf("case%d", i)), rows, c.edit)
		code, stdout, _ := runArgs(t, "check", dir)
		out := filepath.Join(base, fmt.Sprintf("case%d-out", i))
		vcode, _, stderr := runArgs(t, "value", dir, "--out", out)
		if c.cell == "" {
			if code != 0 || vcode != 0 {
				t.Errorf("%s: check exit %d, value exit %d; want both 0\n%s\n%s", c.name, code, vcode, stdout, stderr)
			}
			continue
		}
		if code != exitInput || !strings.Contains(stdout, c.cell) {
			t.Errorf("%s: check exit %d, want 2 naming %s:\n%s", c.name, code, c.cell, stdout)
		}
		if vcode != exitInput || !strings.Contains(stderr, c.cell) || exists(out) {
			t.Errorf("%s: value exit %d, want 2 naming %s and nothing written:\n%s", c.name, vcode, c.cell, stderr)
		}
	}
}
