package grants

import (
	"bytes"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/xuri/excelize/v2"
)

// The headers the trade uses for a column read as that column, in the
// Grants sheet and on the key-value sheets alike, so that a schedule
// exported from a cap table with "Exercise Price", "Option Price",
// "Vesting Start Date" and "Expiration Date" needs no renaming.
func TestReadSynonymHeaders(t *testing.T) {
	fs := baseCSV()
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("Award ID,Date of Grant,Shares Granted,Exercise Price,Expiration Date,Vesting Start Date,Vesting Period (months),Cliff (months)\n" +
		"A-1,2025-01-15,1200,2.00,2035-01-15,2025-02-01,48,12\n")}
	fs["assumptions.csv"] = &fstest.MapFile{Data: []byte("key,value\nExpected Volatility,45%\nPost-Vesting Exit Rate,10%\n")}
	fs["rates.csv"] = &fstest.MapFile{Data: []byte("curve_date,Tenor (years),Risk-Free Rate\n2025-01-01,5,4%\n")}
	s, rep := readMap(t, fs)
	if !rep.OK() || len(rep.Warnings) != 0 {
		t.Fatalf("problems:\n%s", problems(rep))
	}
	g := s.Grants[0]
	if g.ID != "A-1" || g.Shares != 1200 || g.Strike != 2 || !g.ExpiryDate.Equal(d("2035-01-15")) || !g.VestStart.Equal(d("2025-02-01")) || g.VestMonths != 48 || g.CliffMonths != 12 {
		t.Errorf("grant read as %+v", g)
	}
	if a := s.Assumptions; a.Volatility != 0.45 || a.PostVestingExitRate != 0.10 {
		t.Errorf("assumptions read as volatility %v, exit rate %v", a.Volatility, a.PostVestingExitRate)
	}
	if len(s.Rates) != 1 || s.Rates[0].TenorYears != 5 || s.Rates[0].Rate != 0.04 {
		t.Errorf("rates read as %+v", s.Rates)
	}
	// "Option Price" is strike too.
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,grant_date,shares,Option Price,term_years\nA-1,2025-01-15,1200,2.50,10\n")}
	if s, rep := readMap(t, fs); !rep.OK() || s.Grants[0].Strike != 2.5 {
		t.Errorf("Option Price: strike %v, problems:\n%s", s.Grants[0].Strike, problems(rep))
	}
}

// The template's About sheet and the README (TestREADMEColumnList) list
// each column's synonyms from the same table the reader matches with.
func TestTemplateListsSynonyms(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteXLSX(&buf, nil); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	rows, err := f.GetRows("About")
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range rows {
		if len(r) > 6 && r[1] == "strike" {
			if !strings.Contains(r[6], "Also read under the headers Exercise Price, Strike Price, Option Price") {
				t.Errorf("About sheet, strike: %q", r[6])
			}
			return
		}
	}
	t.Error("the About sheet has no row for strike")
}

// Every synonym names one column of its sheet: none is its own key again,
// none is the key or a synonym of another column of the sheet.
func TestSynonymsUnambiguous(t *testing.T) {
	for _, layout := range [][]Sheet{Sheets, DesignSheets} {
		for _, sh := range layout {
			owner := map[string]string{}
			for _, c := range append(append([]Column{}, sh.Columns...), sh.KeyColumns...) {
				for i, name := range append([]string{c.Key}, c.Synonyms...) {
					n := norm(name)
					if i > 0 && n == norm(c.Key) {
						t.Errorf("%s: synonym %q of %s is the key itself", sh.Name, name, c.Key)
					}
					if o, ok := owner[n]; ok && o != c.Key {
						t.Errorf("%s: %q names both %s and %s", sh.Name, name, o, c.Key)
					}
					owner[n] = c.Key
				}
			}
		}
	}
}

// An unknown header, key or sheet is ignored with a warning that names the
// closest one grantworth reads; a header near nothing gets no guess.
func TestDidYouMean(t *testing.T) {
	fs := baseCSV()
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,grant_date,shares,Strik,term_years,Notes,Expiration Dates\nA-1,2025-01-15,1200,2.00,10,first hire,\n")}
	fs["assumptions.csv"] = &fstest.MapFile{Data: []byte("key,value\nvolatility,45%\nexit rates,10%\n")}
	_, rep := readMap(t, fs)
	got := problems(rep)
	for _, want := range []string{
		`warning: Grants!D1: "Strik" is not a column grantworth reads; it is ignored; did you mean strike?`,
		`warning: Grants!F1: "Notes" is not a column grantworth reads; it is ignored` + "\n",
		`warning: Grants!G1: "Expiration Dates" is not a column grantworth reads; it is ignored; did you mean expiry_date?`,
		`warning: Assumptions!A3 (key): "exit rates" is not a key grantworth reads; it is ignored; did you mean post_vesting_exit_rate?`,
	} {
		if !strings.Contains(got, want) {
			t.Errorf("no line\n  %s\nin:\n%s", want, got)
		}
	}
	for _, c := range []struct{ header, want string }{
		{"Strike Price (USD)", "strike"}, // contains a synonym whole
		{"Grant Dte", "grant_date"},      // one letter short
		{"vest_every_month", "vest_every_months"},
		{"hire", ""},          // too short to guess from
		{"Employee Name", ""}, // not holder: a name, not a code
		{"shares", ""},        // taken by an earlier column
	} {
		got := ""
		if col := closest(c.header, scheduleSheet(SheetGrants).Columns, map[string]int{"shares": 2}); col != nil {
			got = col.Key
		}
		if got != c.want {
			t.Errorf("closest(%q) = %q, want %q", c.header, got, c.want)
		}
	}
	// A sheet: "Grant" for Grants.
	var buf bytes.Buffer
	if err := WriteXLSX(&buf, smallSchedule()); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.SetSheetName("Grants", "Grant"); err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	if err := f.Write(&out); err != nil {
		t.Fatal(err)
	}
	_, rep, err = ReadXLSX(bytes.NewReader(out.Bytes()), int64(out.Len()))
	if err != nil {
		t.Fatal(err)
	}
	if got, want := problems(rep), "warning: Grant: sheet is not one grantworth reads; it is ignored; did you mean Grants?"; !strings.Contains(got, want) {
		t.Errorf("no line\n  %s\nin:\n%s", want, got)
	}
}

// The designs' grant date gets the same quarter-age warnings as a grant's
// measurement date: a share valuation and a curve of 2026-03-31 are 6
// months 15 days old on 2026-10-15.
func TestDesignsOldInputs(t *testing.T) {
	fs := designsCSV()
	fs["share_prices.csv"] = &fstest.MapFile{Data: []byte("date,price\n2026-03-31,2.00\n")}
	fs["rates.csv"] = &fstest.MapFile{Data: []byte("curve_date,tenor_years,rate\n2026-03-31,5,4%\n")}
	_, rep := readDesignsMap(t, fs)
	got := problems(rep)
	for _, want := range []string{
		`warning: Share Prices!A2 (date): "2026-03-31" is the share valuation in force, 6 months 15 days old at the grant date 2026-10-15 of the designs (more than 3 months): check that the share's fair value has not moved since, or add a Share Prices row nearer the date`,
		`warning: Rates!A2 (curve_date): "2026-03-31" is the rate curve in force, 6 months 15 days old at the grant date 2026-10-15 of the designs (more than 3 months): add a Rates curve dated nearer it`,
	} {
		if !strings.Contains(got, want) {
			t.Errorf("no line\n  %s\nin:\n%s", want, got)
		}
	}
	if !rep.OK() || len(rep.Warnings) != 2 {
		t.Errorf("problems:\n%s", got)
	}
}
