package grants

import (
	"bytes"
	"errors"
	"math/rand/v2"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/xuri/excelize/v2"
)

// baseCSV is a valid schedule as CSV text, sheet by sheet.
func baseCSV() fstest.MapFS {
	return fstest.MapFS{
		"company.csv":      {Data: []byte("key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-09-30\n")},
		"assumptions.csv":  {Data: []byte("key,value,source\nvolatility,45%,peers\n")},
		"grants.csv":       {Data: []byte("grant_id,grant_date,shares,strike,term_years,vest_months,cliff_months\nA-1,2025-01-15,1200,2.00,10,48,12\n")},
		"share_prices.csv": {Data: []byte("date,price\n2025-01-01,2.00\n")},
		"rates.csv":        {Data: []byte("curve_date,tenor_years,rate\n2025-01-01,5,4%\n")},
	}
}

func readMap(t *testing.T, fs fstest.MapFS) (*Schedule, *Report) {
	t.Helper()
	s, rep, err := ReadCSVDir(fs)
	if err != nil {
		t.Fatal(err)
	}
	return s, rep
}

func TestReadHeadersLoose(t *testing.T) {
	fs := baseCSV()
	// Other order, other case, spaces instead of underscores, an unknown
	// column, empty rows, thousands separators, percentages as text, a
	// sheet file named with spaces and capitals.
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("Shares, Grant ID ,GRANT_DATE,Strike,Term Years,Vest Months,Cliff Months,Notes\n\"1,200\",A-1,2025-01-15,2.00,10,48,12,first hire\n,,,,,,,\n")}
	delete(fs, "share_prices.csv")
	fs["Share Prices.CSV"] = &fstest.MapFile{Data: []byte("Date,Price\n2025-01-01,2.00\n")}
	s, rep := readMap(t, fs)
	if !rep.OK() {
		t.Fatalf("problems:\n%s", problems(rep))
	}
	if len(s.Grants) != 1 || s.Grants[0].Shares != 1200 || s.Grants[0].ID != "A-1" || s.Assumptions.Volatility != 0.45 || s.Rates[0].Rate != 0.04 {
		t.Fatalf("read %+v", s)
	}
	if !s.Grants[0].ExpiryDate.Equal(d("2035-01-15")) {
		t.Errorf("term 10 years gives expiry %v", s.Grants[0].ExpiryDate)
	}
	if got := problems(rep); !strings.Contains(got, `warning: Grants!H1: "Notes" is not a column grantworth reads; it is ignored`) {
		t.Errorf("no warning for the unknown column:\n%s", got)
	}
	if g := s.Grants[0]; g.Refs["shares"].String() != "Grants!A2" || g.Refs["grant_id"].String() != "Grants!B2" {
		t.Errorf("refs %v", g.Refs)
	}
	if !s.Company.PeriodStart.Equal(d("2026-07-01")) || s.Company.Currency != "USD" {
		t.Errorf("company defaults %+v", s.Company)
	}
}

func TestReadCollectsEveryProblem(t *testing.T) {
	fs := baseCSV()
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,grant_date,shares,strike,term_years\nA-1,2025/01/15,x,-1,10\nA-2,2025-01-15,10,,10\nA-2,2025-01-16,10,1,10\n")}
	_, rep := readMap(t, fs)
	got := problems(rep)
	for _, w := range []string{
		`Grants!B2 (grant_date): "2025/01/15" is not an ISO date`,
		`Grants!C2 (shares): "x" is not a number`,
		"Grants!D3 (strike): is required for option A-2",
		`Grants!A4 (grant_id): "A-2" is also the grant_id of row 3 (A3)`,
	} {
		if !strings.Contains(got, w) {
			t.Errorf("missing %q in\n%s", w, got)
		}
	}
	var ce *CellError
	if !errors.As(rep.Err(), &ce) || !errors.Is(rep.Err(), ErrAmbiguousDate) {
		t.Errorf("Report.Err does not unwrap to the cell errors: %v", rep.Err())
	}
}

func TestReadWarnings(t *testing.T) {
	fs := baseCSV()
	// Strike below the price at grant, a volatility of 300%, and a grant
	// more than twelve months after the latest valuation.
	fs["assumptions.csv"] = &fstest.MapFile{Data: []byte("key,value\nvolatility,3\n")}
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,grant_date,shares,strike,term_years\nA-1,2025-01-15,100,1.50,10\nA-2,2026-03-01,100,2,10\n")}
	_, rep := readMap(t, fs)
	if !rep.OK() {
		t.Fatalf("errors:\n%s", problems(rep))
	}
	got := problems(rep)
	for _, w := range []string{
		`Grants!D2 (strike): "1.5" is below the share price 2 at grant (Share Prices!B2)`,
		`Assumptions!B2 (volatility): "3" is outside 5%–200%`,
		`Grants!B3 (grant_date): "2026-03-01" is more than 12 months after the latest share valuation, 2025-01-01 (Share Prices!A2)`,
	} {
		if !strings.Contains(got, w) {
			t.Errorf("missing warning %q in\n%s", w, got)
		}
	}
}

func TestReadXLSXCells(t *testing.T) {
	// A workbook typed by hand: date cells, a percent cell, text numbers, a
	// formula with a saved value, a 1904 date system.
	s := smallSchedule()
	var buf bytes.Buffer
	if err := WriteXLSX(&buf, s); err != nil {
		t.Fatal(err)
	}
	f, err := excelize.OpenReader(&buf)
	if err != nil {
		t.Fatal(err)
	}
	must := func(err error) {
		if err != nil {
			t.Fatal(err)
		}
	}
	must(f.SetCellStr("Grants", "E2", "4,800"))      // text number with a separator
	must(f.SetCellStr("Grants", "D2", "2024-01-31")) // ISO text date
	must(f.SetCellFormula("Grants", "F2", "5/2"))
	must(f.SetCellValue("Grants", "F2", 2.5)) // the saved value
	must(f.SetCellFormula("Grants", "F2", "5/2"))
	must(f.SetCellStr("Assumptions", "B2", "55%"))
	var out bytes.Buffer
	must(f.Write(&out))
	got, rep, err := ReadXLSX(bytes.NewReader(out.Bytes()), int64(out.Len()))
	if err != nil || !rep.OK() {
		t.Fatalf("%v\n%s", err, problems(rep))
	}
	g := got.Grants[0]
	if g.Shares != 4800 || g.Strike != 2.5 || !g.GrantDate.Equal(d("2024-01-31")) || got.Assumptions.Volatility != 0.55 {
		t.Errorf("read %+v vol %v", g, got.Assumptions.Volatility)
	}
}

func TestReadLimits(t *testing.T) {
	_, _, err := ReadXLSX(bytes.NewReader(nil), MaxFileSize+1)
	if !errors.Is(err, ErrTooLarge) {
		t.Errorf("oversized workbook: %v", err)
	}
	fs := baseCSV()
	fs["grants.csv"] = &fstest.MapFile{Data: append([]byte("grant_id,"), bytes.Repeat([]byte("x"), MaxFileSize)...)}
	if _, _, err := ReadCSVDir(fs); !errors.Is(err, ErrTooLarge) || !strings.HasPrefix(err.Error(), "Grants: grants.csv is 67,108,873 bytes, more than the 64 MiB allowed") {
		t.Errorf("oversized CSV: %v", err)
	}
	wide := "grant_id" + strings.Repeat(",", MaxColumns) + "x\n"
	fs = baseCSV()
	fs["grants.csv"] = &fstest.MapFile{Data: []byte(wide)}
	_, rep := readMap(t, fs)
	if !strings.Contains(problems(rep), "row has cells beyond column 256") {
		t.Errorf("wide row:\n%s", problems(rep))
	}
}

func TestColumnsMarkdown(t *testing.T) {
	md := ColumnsMarkdown()
	for _, sh := range Sheets {
		if !strings.Contains(md, "### "+sh.Name) {
			t.Errorf("no section for %s", sh.Name)
		}
		for _, c := range sh.Columns {
			if !strings.Contains(md, "| `"+c.Key+"` |") {
				t.Errorf("no row for %s.%s", sh.Name, c.Key)
			}
		}
	}
}

func TestTemplate(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteXLSX(&buf, nil); err != nil {
		t.Fatal(err)
	}
	data := buf.Bytes()
	f, err := excelize.OpenReader(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"Company", "Assumptions", "Grants", "Vesting", "Share Prices", "Rates", "Events", "Transfers", "Accounts", "Conditions", "Assessments", "Payout Curve", "Peers", "Modifications", "About"}
	if got := f.GetSheetList(); strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("sheets %v, want %v", got, want)
	}
	dvs, err := f.GetDataValidations("Grants")
	if err != nil || len(dvs) < 4 {
		t.Errorf("Grants has %d drop-down lists (%v), want instrument, vest_every_months, classification, exercise_style", len(dvs), err)
	}
	about, _ := f.GetRows("About")
	text := ""
	for _, r := range about {
		text += strings.Join(r, "\t") + "\n"
	}
	if !strings.Contains(text, "not an audit opinion") || !strings.Contains(text, "post_vesting_exit_rate") {
		t.Errorf("About sheet lacks the caution or a column:\n%s", text)
	}
	// The date column carries a date format.
	st, _ := f.GetCellStyle("Grants", "D2")
	if s, _ := f.GetStyle(st); s == nil || s.CustomNumFmt == nil || *s.CustomNumFmt != "yyyy-mm-dd" {
		t.Errorf("grant_date D2 style %+v", s)
	}
	// A blank template reads with only the required company values and
	// the grants missing.
	_, rep, err := ReadXLSX(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Errors) != 3 || len(rep.Warnings) != 0 || !strings.Contains(rep.Errors[2].Error(), "Grants!A2 (grant_id): the sheet has no grant") {
		t.Errorf("blank template:\n%s", problems(rep))
	}
}

func FuzzReadCSV(f *testing.F) {
	f.Add([]byte("grant_id,grant_date,shares,strike,term_years\nA-1,2025-01-15,100,1.50,10\n"))
	f.Add([]byte("\ufeffgrant_id;shares\n"))
	f.Add([]byte("grant_id,holder\n\"a\nb\",\"c,d\"\n\n\nx"))
	f.Add([]byte("grant_id,grant_date\n\"unterminated\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		fs := baseCSV()
		fs["grants.csv"] = &fstest.MapFile{Data: data}
		s, rep, err := ReadCSVDir(fs)
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range rep.Errors {
			if e.Sheet == "" || e.Error() == "" {
				t.Fatalf("problem without a sheet: %#v", e)
			}
		}
		for _, g := range s.Grants {
			var sum int64
			for _, tr := range s.Tranches(g) {
				sum += tr.Shares
			}
			if g.Shares > 0 && sum != g.Shares {
				t.Fatalf("tranches of %+v add up to %d", g, sum)
			}
		}
	})
}

// FuzzReadXLSX fuzzes whole files: the archive layer (damaged entries,
// sizes, checksums) and what lies behind it. The seeds are the smallest
// workbook and the damaged workbooks of testdata/hostile; FuzzWorkbookParts
// and FuzzSheetXML reach the XML readers faster.
func FuzzReadXLSX(f *testing.F) {
	f.Add(tinyBook([]byte(tinyWorkbook), []byte(tinySST), []byte(tinySheet)))
	f.Add([]byte("PK\x03\x04"))
	f.Add([]byte{})
	hostileSeeds(f)
	f.Fuzz(checkReadXLSX)
}

func TestReadMoreWarnings(t *testing.T) {
	fs := baseCSV()
	fs["company.csv"] = &fstest.MapFile{Data: []byte("key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-09-30\nauditor,someone\n")}
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,instrument,grant_date,shares,strike,expiry_date,term_years,vest_start,vest_months,classification\n" +
		"A-1,option,2025-01-15,1200,2.00,2035-01-15,5,2025-01-15,48,equity\n" +
		"A-2,rsu,2025-01-15,100,3,,,2026-06-01,12,\n" +
		"A-3,option,2026-11-02,100,2.00,2036-11-02,,,0,\n")}
	fs["events.csv"] = &fstest.MapFile{Data: []byte("grant_id,date,event,shares\nA-1,2026-02-01,forfeited,800\nA-3,2026-12-01,exercised,10\n")}
	fs["notes.csv"] = &fstest.MapFile{Data: []byte("anything\n")}
	_, rep := readMap(t, fs)
	if !rep.OK() {
		t.Fatalf("errors:\n%s", problems(rep))
	}
	got := problems(rep)
	for _, w := range []string{
		`warning: notes: sheet is not one grantworth reads; it is ignored`,
		`warning: Company!A4 (key): "auditor" is not a key grantworth reads`,
		`warning: Grants!G2 (term_years): "5" disagrees with expiry_date 2035-01-15 (F2); expiry_date is used`,
		`warning: Grants!J2 (classification): "equity" applies to warrants only`,
		`warning: Grants!E3 (strike): "3" is ignored: an RSU has no strike`,
		`warning: Grants!H3 (vest_start): "2026-06-01" is more than a year after grant_date 2025-01-15`,
		`warning: Grants!C4 (grant_date): "2026-11-02" is after the valuation date 2026-09-30`,
		`warning: Events!B3 (date): "2026-12-01" is after the valuation date 2026-09-30`,
		// 2026-02-01: 12 months of 48 vested (300 of 1200), 900 unvested;
		// forfeiting 800 leaves 100 to vest after the holder left.
		`warning: Events!D2 (shares): "800" forfeits 800 of the 900 shares of grant A-1 unvested on 2026-02-01: the other 100 still vest`,
	} {
		if !strings.Contains(got, w) {
			t.Errorf("missing %q in\n%s", w, got)
		}
	}
	fs["events.csv"] = &fstest.MapFile{Data: []byte("grant_id,date,event,shares\nA-1,2026-02-01,forfeited,900\n")}
	_, rep = readMap(t, fs)
	if got := problems(rep); strings.Contains(got, "Events!D2") {
		t.Errorf("a termination of all 900 unvested shares drew a problem:\n%s", got)
	}
	fs["events.csv"] = &fstest.MapFile{Data: []byte("grant_id,date,event,shares\nA-1,2026-02-01,forfeited,1000\n")}
	_, rep = readMap(t, fs)
	if got := problems(rep); !strings.Contains(got, `warning: Events!D2 (shares): "1000" is more than the 900 unvested shares of grant A-1 on 2026-02-01`) {
		t.Errorf("forfeiting vested shares:\n%s", got)
	}
}

// Damaged workbooks give an error or a report, never a crash: random byte
// changes to a valid workbook (seeded; the fuzz target FuzzReadXLSX explores
// further).
func TestReadXLSXMutations(t *testing.T) {
	var buf bytes.Buffer
	if err := WriteXLSX(&buf, smallSchedule()); err != nil {
		t.Fatal(err)
	}
	seed := buf.Bytes()
	rng := rand.New(rand.NewPCG(3, 5))
	for i := 0; i < 40; i++ {
		b := append([]byte(nil), seed...)
		for k := 0; k < 1+rng.IntN(4); k++ {
			b[rng.IntN(len(b))] = byte(rng.IntN(256))
		}
		s, rep, err := ReadXLSX(bytes.NewReader(b), int64(len(b)))
		var ce *CellError
		if err != nil && !errors.As(err, &ce) {
			t.Errorf("mutation %d: error %v is not a *CellError", i, err)
		}
		if err == nil && (s == nil || rep == nil) {
			t.Errorf("mutation %d: no schedule and no error", i)
		}
	}
}

// The purpose of each award, a holder's hire date and the framework are
// read with their defaults: options and RSUs are compensation unless they
// say otherwise, a warrant says which (DESIGN §4.2); the framework is
// ASC 718 unless given.
func TestReadPurposeHireDateFramework(t *testing.T) {
	fs := baseCSV()
	fs["company.csv"] = &fstest.MapFile{Data: []byte("key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-09-30\nshares_outstanding,5000000\n")}
	fs["assumptions.csv"] = &fstest.MapFile{Data: []byte("key,value,source\nvolatility,45%,peers\nframework,IFRS2,group policy\n")}
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,instrument,grant_date,shares,strike,term_years,vest_months,purpose,Hire Date\n" +
		"A-1,option,2025-01-15,1200,2.00,10,48,,2025-03-01\n" +
		"W-1,warrant,2025-01-15,5000,2.50,7,0,Financing,\n" +
		"W-2,warrant,2025-01-15,500,2.50,7,12,compensation,\n")}
	s, rep := readMap(t, fs)
	if !rep.OK() {
		t.Fatalf("problems:\n%s", problems(rep))
	}
	want := map[string]Purpose{"A-1": Compensation, "W-1": Financing, "W-2": Compensation}
	for _, g := range s.Grants {
		if g.Purpose != want[g.ID] {
			t.Errorf("%s: purpose %q, want %q", g.ID, g.Purpose, want[g.ID])
		}
	}
	if g, _ := s.Grant("A-1"); !g.HireDate.Equal(d("2025-03-01")) || g.Refs["hire_date"].String() != "Grants!I2" {
		t.Errorf("hire date %v at %s", g.HireDate, g.Refs["hire_date"])
	}
	if g, _ := s.Grant("W-1"); !g.IsFinancing() || g.IsLiability() {
		t.Errorf("W-1 %+v", g)
	}
	if a := s.InForce(); a.Framework != IFRS2 || a.Refs["framework"].String() != "Assumptions!B3" {
		t.Errorf("framework %q at %s", a.Framework, a.Refs["framework"])
	}
}
