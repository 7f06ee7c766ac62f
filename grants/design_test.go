package grants

import (
	"bytes"
	"reflect"
	"strings"
	"testing"
	"testing/fstest"
	"time"

	"github.com/xuri/excelize/v2"
)

// designsCSV is a small designs workbook as CSV files: two option designs
// and an RSU, granted on 2026-10-15 at the price of 2026-09-30.
func designsCSV() fstest.MapFS {
	return fstest.MapFS{
		"company.csv":      {Data: []byte("key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-09-30\ngrant_date,2026-10-15\nshares_outstanding,10000000\n")},
		"assumptions.csv":  {Data: []byte("key,value\nvolatility,45%\npre_vesting_forfeiture_rate,8%\n")},
		"designs.csv":      {Data: []byte("design,instrument,shares,strike,strike_premium,term_years,vest_months,cliff_months,vest_every_months\nAt the money,option,48000,,0,10,48,12,1\nPremium,option,48000,,25%,10,48,12,1\nUnits,rsu,16000,,,,48,12,3\n")},
		"share_prices.csv": {Data: []byte("date,price\n2026-09-30,2.00\n")},
		"rates.csv":        {Data: []byte("curve_date,tenor_years,rate\n2026-09-30,5,4%\n")},
	}
}

func readDesignsMap(t *testing.T, fs fstest.MapFS) (*Schedule, *Report) {
	t.Helper()
	s, rep, err := readCSVDir(fs, DesignSheets)
	if err != nil {
		t.Fatal(err)
	}
	noDesigns(s, rep)
	return s, rep
}

func TestReadDesigns(t *testing.T) {
	s, rep := readDesignsMap(t, designsCSV())
	if !rep.OK() || len(rep.Warnings) != 0 {
		t.Fatalf("problems:\n%s", problems(rep))
	}
	if len(s.Designs) != 3 || s.DesignDate() != d("2026-10-15") {
		t.Fatalf("designs %+v, grant date %v", s.Designs, s.DesignDate())
	}
	g, err := s.DesignGrant(s.Designs[1])
	if err != nil {
		t.Fatal(err)
	}
	// The strike is the price on the grant date times 1.25; the expiry ten
	// years on, as a Grants row with term_years 10 would have it.
	if g.Strike != 2.5 || g.ExpiryDate != d("2036-10-15") || g.VestStart != g.GrantDate || len(s.Tranches(g)) != 37 {
		t.Errorf("grant %+v, %d tranches", g, len(s.Tranches(g)))
	}
	if r, _ := s.DesignGrant(s.Designs[2]); r.Instrument != RSU || r.Strike != 0 || !r.ExpiryDate.IsZero() {
		t.Errorf("RSU grant %+v", r)
	}
	if s.DesignForfeitureRate(s.Designs[0]) != 0.08 {
		t.Errorf("forfeiture rate %v", s.DesignForfeitureRate(s.Designs[0]))
	}
	// Without a grant_date key the designs are granted on the valuation date.
	s.Company.GrantDate = time.Time{}
	if s.DesignDate() != d("2026-09-30") {
		t.Errorf("design date without grant_date: %v", s.DesignDate())
	}
}

// Every problem of a designs workbook is reported with its cell, as for a
// schedule.
func TestDesignProblems(t *testing.T) {
	for _, c := range []struct {
		name, file, data string
		want             []string // errors
		warn             string
	}{
		{"strike and premium", "designs.csv", "design,shares,strike,strike_premium,term_years\nA,100,2,10%,10\n",
			[]string{`Designs!D2 (strike_premium): "0.1" and strike 2 (C2) are both given; give one`}, ""},
		{"neither", "designs.csv", "design,shares,term_years\nA,100,10\n",
			[]string{`Designs!A2 (strike): or strike_premium is required for option A`}, ""},
		{"duplicate names and bad counts", "designs.csv", "design,shares,strike,term_years,vest_months,cliff_months,vest_every_months\nA,100,2,10,12,24,2\nA,0,2,10,0,0,1\n",
			[]string{`Designs!F2 (cliff_months): "24" is longer than vest_months 12 (E2)`, `Designs!G2 (vest_every_months): "2" must be 1, 3 or 12`,
				`Designs!A3 (design): "A" is also the name of the design on row 2 (A2)`, `Designs!B3 (shares): "0" must be more than zero and at most 10^12`}, ""},
		{"vesting after expiry", "designs.csv", "design,shares,strike,term_years,vest_months\nA,100,2,3,48\n",
			[]string{`Designs!E2 (vest_months): "48" vesting ends 2030-10-15, after the expiry 2029-10-15 that term_years 3 (D2) gives`}, ""},
		{"no term", "designs.csv", "design,shares,strike\nA,100,2\n",
			[]string{`Designs!A2 (term_years): is required for option A`}, ""},
		{"ranges", "designs.csv", "design,shares,strike_premium,term_years,volatility,exercise_multiple,post_vesting_exit_rate,pre_vesting_forfeiture_rate\nA,100,-150%,200,0,1,100%,-1%\n",
			[]string{`Designs!C2 (strike_premium): "-1.5" must be above -100% and at most 1000% of the share price`, `Designs!D2 (term_years): "200" must be more than 0 and at most 100 years`,
				`Designs!E2 (volatility): "0" must be from 0.01 to 5`, `Designs!F2 (exercise_multiple): "1" must be 0 (no such rule) or above 1`,
				`Designs!G2 (post_vesting_exit_rate): "1" must be at least 0 and below 1`, `Designs!H2 (pre_vesting_forfeiture_rate): "-0.01" must be at least 0 and below 1`}, ""},
		{"a bad cell", "designs.csv", "design,shares,strike,term_years,instrument\nA,many,2,10,bond\n",
			[]string{`Designs!E2 (instrument): "bond" is not one of option, warrant, rsu`, `Designs!B2 (shares): "many" is not a number`}, ""},
		{"RSU with option terms", "designs.csv", "design,instrument,shares,strike,term_years,vest_months\nU,rsu,100,2,10,12\n",
			nil, `Designs!D2 (strike): is ignored: an RSU has no strike, term or exercise`},
		{"in the money", "designs.csv", "design,shares,strike,term_years\nA,100,1.5,10\n",
			nil, `Designs!C2 (strike): "1.5" puts the strike below the share price 2 at grant (Share Prices!B2): the award is in the money`},
		{"warrant without shares outstanding", "company.csv", "key,value\ncompany_name,P\nvaluation_date,2026-09-30\n",
			nil, ""}, // with the warrant below
		{"no price at the grant date", "share_prices.csv", "date,price\n2026-11-01,2.00\n",
			[]string{`Company!B4 (grant_date): "2026-10-15" is the grant date of the designs, but no Share Prices row is dated on or before it`}, ""},
		{"no curve at the grant date", "rates.csv", "curve_date,tenor_years,rate\n2027-01-01,5,4%\n",
			[]string{`Company!B4 (grant_date): "2026-10-15" is the grant date of the designs, but no Rates curve is dated on or before it`}, ""},
		{"no volatility", "assumptions.csv", "key,value\ndividend_yield,0\n",
			[]string{`Assumptions (volatility): has no row in force on the grant date 2026-10-15, and not every option and warrant design gives one`}, ""},
		{"no designs", "designs.csv", "design,shares\n",
			[]string{`Designs!A2 (design): the sheet has no design: add one row per design under the header`}, ""},
		{"no Designs sheet", "designs.csv", "",
			[]string{`Designs!A1: sheet is empty; it needs a header row (design, shares)`}, ""},
	} {
		fs := designsCSV()
		fs[c.file] = &fstest.MapFile{Data: []byte(c.data)}
		if c.name == "warrant without shares outstanding" {
			fs["designs.csv"] = &fstest.MapFile{Data: []byte("design,instrument,shares,strike,term_years\nW,warrant,100,2,5\n")}
			c.want = []string{`Company (shares_outstanding): is needed for the dilution of warrant design W (A2)`}
		}
		_, rep := readDesignsMap(t, fs)
		var got []string
		for _, e := range rep.Errors {
			got = append(got, e.Error())
		}
		if !matchAll(got, c.want) {
			t.Errorf("%s: errors\n  %s\nwant (as prefixes)\n  %s", c.name, strings.Join(got, "\n  "), strings.Join(c.want, "\n  "))
		}
		if c.warn != "" && !strings.Contains(problems(rep), "warning: "+c.warn) {
			t.Errorf("%s: no warning %q in\n%s", c.name, c.warn, problems(rep))
		}
	}
}

// matchAll reports whether got has as many lines as want, each starting
// with its counterpart.
func matchAll(got, want []string) bool {
	if len(got) != len(want) {
		return false
	}
	for i := range got {
		if !strings.HasPrefix(got[i], want[i]) {
			return false
		}
	}
	return true
}

// More designs than fit side by side are refused at the first one too many.
func TestTooManyDesigns(t *testing.T) {
	var b strings.Builder
	b.WriteString("design,shares,strike,term_years\n")
	for i := range MaxDesigns + 2 {
		b.WriteString("D" + string(rune('a'+i)) + ",100,2,10\n")
	}
	fs := designsCSV()
	fs["designs.csv"] = &fstest.MapFile{Data: []byte(b.String())}
	_, rep := readDesignsMap(t, fs)
	if len(rep.Errors) != 1 || !strings.HasPrefix(rep.Errors[0].Error(), `Designs!A12 (design): "Dk" is design 11: compare takes at most 10 designs`) {
		t.Errorf("errors:\n%s", problems(rep))
	}
}

// The designs template holds the designs layout, reads back with only the
// required company values missing, and a filled workbook reads back as
// written.
func TestDesignsTemplateAndRoundTrip(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteDesignsXLSX(&buf, nil); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"Company", "Assumptions", "Designs", "Share Prices", "Rates", "About"}
	if got := f.GetSheetList(); strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("sheets %v, want %v", got, want)
	}
	company, _ := f.GetRows("Company")
	if n := len(company); n != 2+len(SheetSpec(SheetCompany).Columns) || company[n-1][0] != "grant_date" {
		t.Errorf("Company rows %v, want the schedule's keys and grant_date", company)
	}
	_, rep, err := readXLSX(bytes.NewReader(buf.Bytes()), int64(buf.Len()), DesignSheets)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Errors) != 2 || len(rep.Warnings) != 0 {
		t.Errorf("blank template:\n%s", problems(rep))
	}

	s, rep := readDesignsMap(t, designsCSV())
	if !rep.OK() {
		t.Fatal(problems(rep))
	}
	s.Designs[0].Volatility = fp(0.5)
	s.Designs[1].PreVestingForfeitureRate = fp(0.05)
	buf.Reset()
	if err := WriteDesignsXLSX(&buf, s); err != nil {
		t.Fatal(err)
	}
	back, rep, err := readXLSX(bytes.NewReader(buf.Bytes()), int64(buf.Len()), DesignSheets)
	if err != nil || !rep.OK() {
		t.Fatalf("%v\n%s", err, problems(rep))
	}
	for i := range s.Designs {
		a, b := s.Designs[i], back.Designs[i]
		a.Row, a.Refs, b.Row, b.Refs = 0, nil, 0, nil
		if !reflect.DeepEqual(a, b) {
			t.Errorf("design %d read back as\n  %+v\nwant\n  %+v", i, b, a)
		}
	}
	if back.Company.GrantDate != s.Company.GrantDate {
		t.Errorf("grant date %v, want %v", back.Company.GrantDate, s.Company.GrantDate)
	}
	// A schedule workbook does not read a grant_date key: it is a warning.
	fs := baseCSV()
	fs["company.csv"] = &fstest.MapFile{Data: []byte("key,value\ncompany_name,P\nvaluation_date,2026-09-30\ngrant_date,2026-10-15\n")}
	if _, rep := readMap(t, fs); !strings.Contains(problems(rep), "warning: Company!A4 (key): \"grant_date\" is not a key grantworth reads") {
		t.Errorf("grant_date in a schedule:\n%s", problems(rep))
	}
}

func TestDesignColumnsMarkdown(t *testing.T) {
	md := DesignColumnsMarkdown()
	sh := SheetSpec(SheetDesigns)
	for _, c := range sh.Columns {
		if !strings.Contains(md, "| `"+c.Key+"` |") {
			t.Errorf("no row for %s", c.Key)
		}
	}
	if !strings.Contains(md, "### Company") || !strings.Contains(md, "`grant_date`") || strings.Contains(md, "`valuation_date`") || strings.Contains(md, "### Rates") {
		t.Errorf("the designs list should add only Designs and Company's grant_date:\n%s", md)
	}
}

func FuzzReadDesignsCSV(f *testing.F) {
	f.Add([]byte("design,shares,strike_premium,term_years,vest_months,cliff_months\nA,1200,0,10,48,12\n"))
	f.Add([]byte("design,instrument,shares\nU,rsu,100\n"))
	f.Add([]byte("design,shares,strike,strike_premium\nA,1,2,3\n,,,\nB,x,y,z"))
	f.Fuzz(func(t *testing.T, data []byte) {
		fs := designsCSV()
		fs["designs.csv"] = &fstest.MapFile{Data: data}
		s, rep := readDesignsMap(t, fs)
		for _, e := range rep.Errors {
			if e.Sheet == "" || e.Error() == "" {
				t.Fatalf("problem without a sheet: %#v", e)
			}
		}
		if !rep.OK() {
			return
		}
		// What validation accepts, DesignGrant and Inputs take.
		for _, dz := range s.Designs {
			g, err := s.DesignGrant(dz)
			if err != nil {
				t.Fatalf("design %+v: %v", dz, err)
			}
			if _, err := s.Inputs(g); err != nil {
				t.Fatalf("design %+v: %v", dz, err)
			}
		}
	})
}
