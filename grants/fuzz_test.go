package grants

import (
	"archive/zip"
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
	"testing/fstest"
	"time"
	"unicode/utf8"
)

// FuzzSheetXML fuzzes the worksheet layer alone: the XML of one sheet, read
// row by row against a small shared-string table, with no archive around
// it (FuzzReadXLSX spends most of its executions on the zip layer). Any
// input must end in rows or in an error naming the sheet, never a panic;
// rows come in increasing order within a spreadsheet's bounds and no cell
// is longer than a cell may be.
func FuzzSheetXML(f *testing.F) {
	f.Add([]byte(`<worksheet><sheetData><row r="1"><c r="A1" t="s"><v>0</v></c><c r="C1" t="inlineStr"><is><t>x</t></is></c></row><row><c><f>1+1</f></c><c t="s"><v>2</v></c></row></sheetData></worksheet>`))
	f.Add([]byte(`<?xml version="1.0"?><x:worksheet xmlns:x="u"><x:sheetData><x:row r="7"><x:c r="B7"><x:v>4.5</x:v></x:c></x:row></x:sheetData></x:worksheet>`))
	f.Add([]byte(`<worksheet><sheetData><row r="2"><c r="A2" t="inlineStr"><is><r><t>a&amp;b</t></r><rPh><t>no</t></rPh></is></c></row></sheetData></worksheet>`))
	f.Add([]byte(`<worksheet><sheetData><row r="1"><c r="A1"><v><![CDATA[1<2]]></v></c></row></sheetData><!-- end --></worksheet>`))
	f.Add([]byte(`<worksheet><sheetData><row r="3"><c r="A3"`))
	f.Add([]byte(`<!DOCTYPE x [<!ENTITY a "b">]><worksheet/>`))
	if b, err := os.ReadFile(samplePath); err == nil {
		if sheet := partOf(b, "xl/worksheets/sheet3.xml"); sheet != nil {
			f.Add(sheet[:min(len(sheet), 4096)])
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		book := &xlsxBook{sst: sharedStrings{text: []byte("abc"), ends: []uint32{1, 2, 3}}}
		x := &xlsxRows{book: book, sheet: "Grants", part: "sheet.xml", rc: io.NopCloser(nil),
			s: newXMLScanner(bytes.NewReader(data), maxCellBytes), worksheet: true}
		last := 0
		for x.next() {
			row, cells, err := x.cells()
			if err != nil {
				var ce *CellError
				if !errors.As(err, &ce) || ce.Sheet != "Grants" || !(errors.Is(err, ErrDamaged) || errors.Is(err, ErrTooLarge)) {
					t.Fatalf("error %v is not a sheet's damage or size", err)
				}
				return
			}
			if row <= last || row > maxSheetRows {
				t.Fatalf("row %d after row %d", row, last)
			}
			last = row
			if len(cells) > maxSheetColumns {
				t.Fatalf("row %d has %d cells", row, len(cells))
			}
			for _, c := range cells {
				if utf8.RuneCountInString(c) > MaxCellChars || !utf8.ValidString(c) {
					t.Fatalf("cell of %d bytes", len(c))
				}
			}
		}
		if err := x.close(true); err != nil && !errors.Is(err, ErrDamaged) && !errors.Is(err, ErrTooLarge) {
			t.Fatalf("close: %v", err)
		}
	})
}

// partOf returns the unzipped part name of the workbook b, or nil.
func partOf(b []byte, name string) []byte {
	book, err := openXLSX(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		return nil
	}
	rc, err := book.open(name)
	if err != nil {
		return nil
	}
	defer rc.Close()
	data, _ := io.ReadAll(rc)
	return data
}

// hostileSeeds adds the damaged workbooks of testdata/hostile to f.
func hostileSeeds(f *testing.F) {
	paths, _ := filepath.Glob(filepath.Join(hostileRoot, "*", "schedule.xlsx"))
	for _, p := range paths {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
}

// FuzzTranches fuzzes vesting expansion with a forfeiture: the tranches of
// a grant add up to its shares, come in vest-date order, and no tranche
// loses more shares than it has.
func FuzzTranches(f *testing.F) {
	f.Add(int64(4800), uint16(48), uint16(12), uint8(1), int16(0), int64(2100), int16(800))
	f.Add(int64(1), uint16(0), uint16(0), uint8(12), int16(-400), int64(1), int16(0))
	f.Add(int64(1_000_000_007), uint16(1200), uint16(1200), uint8(3), int16(31), int64(0), int16(-30))
	f.Fuzz(func(t *testing.T, shares int64, vm, cm uint16, every uint8, startDays int16, forfeit int64, forfeitDays int16) {
		vm, cm = vm%1201, cm%1201
		if cm > vm {
			cm = vm
		}
		ev := []int{1, 3, 12}[int(every)%3]
		grant := d("2024-01-31")
		g := Grant{ID: "F-1", Instrument: Option, GrantDate: grant, Shares: shares, Strike: 1, ExpiryDate: grant.AddDate(110, 0, 0),
			VestStart: grant.AddDate(0, 0, int(startDays)), VestMonths: int(vm), CliffMonths: int(cm), VestEvery: ev}
		s := &Schedule{Grants: []Grant{g}}
		if forfeit > 0 && forfeit <= shares {
			s.Events = []Event{{GrantID: "F-1", Date: grant.AddDate(0, 0, int(forfeitDays)), Kind: Forfeited, Shares: forfeit}}
		}
		ts := s.Tranches(g)
		var sum int64
		var prev time.Time
		for _, tr := range ts {
			if tr.Shares <= 0 || tr.Forfeited < 0 || tr.Forfeited+tr.Cancelled > tr.Shares {
				t.Fatalf("tranche %+v of %+v", tr, g)
			}
			if tr.VestDate.Before(prev) {
				t.Fatalf("tranche %d vests %v before %v", tr.Index, tr.VestDate, prev)
			}
			prev = tr.VestDate
			sum += tr.Shares
		}
		if shares > 0 && sum != shares {
			t.Fatalf("tranches of %+v add up to %d", g, sum)
		}
	})
}

// FuzzInputs fuzzes the valuation inputs of whatever the reader accepts
// from a fuzzed Grants and Assumptions sheet: Inputs never panics, and an
// error it gives is a *CellError naming a sheet.
func FuzzInputs(f *testing.F) {
	f.Add([]byte("grant_id,grant_date,shares,strike,term_years,volatility\nA-1,2025-01-15,100,1.50,10,200%\n"), []byte("key,value\nvolatility,45%\n"))
	f.Add([]byte("grant_id,instrument,grant_date,shares,strike,expiry_date,classification\nW,warrant,2026-09-30,5,0,2026-10-01,liability\n"), []byte("key,value\nexercise_multiple,1\n"))
	f.Add([]byte("grant_id,instrument,grant_date,shares,vest_months\nR,rsu,2026-01-01,7,1200\n"), []byte("key,value\ndividend_yield,0.99\n"))
	f.Fuzz(func(t *testing.T, grants, assumptions []byte) {
		fs := baseCSV()
		fs["grants.csv"] = &fstest.MapFile{Data: grants}
		fs["assumptions.csv"] = &fstest.MapFile{Data: assumptions}
		s, _, err := ReadCSVDir(fs)
		if err != nil {
			return
		}
		for _, g := range s.Grants {
			in, err := s.Inputs(g)
			if err != nil {
				var ce *CellError
				if !errors.As(err, &ce) || ce.Sheet == "" {
					t.Fatalf("Inputs(%+v): %v is not a *CellError naming a sheet", g, err)
				}
				continue
			}
			if len(in.Terms) != len(in.Tranches) {
				t.Fatalf("%d terms for %d tranches", len(in.Terms), len(in.Tranches))
			}
		}
	})
}

// tinyBook is a workbook of the given parts with one sheet, Grants: the
// smallest seed for the archive-level fuzz targets.
func tinyBook(workbook, sst, sheet []byte) []byte {
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	for _, p := range []struct {
		name string
		data []byte
	}{
		{"xl/workbook.xml", workbook},
		{"xl/_rels/workbook.xml.rels", []byte(`<Relationships><Relationship Id="r1" Type="x/worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="r2" Type="x/sharedStrings" Target="sharedStrings.xml"/></Relationships>`)},
		{"xl/sharedStrings.xml", sst},
		{"xl/worksheets/sheet1.xml", sheet},
	} {
		w, _ := zw.CreateHeader(&zip.FileHeader{Name: p.name, Method: zip.Store})
		w.Write(p.data)
	}
	zw.Close()
	return buf.Bytes()
}

const (
	tinyWorkbook = `<workbook><workbookPr date1904="0"/><sheets><sheet name="Grants" sheetId="1" r:id="r1"/></sheets></workbook>`
	tinySST      = `<sst><si><t>grant_id</t></si><si><t>A-1</t></si><si><r><t>grant</t></r><r><t>_date</t></r></si></sst>`
	tinySheet    = `<worksheet><sheetData><row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>2</v></c><c r="C1" t="inlineStr"><is><t>shares</t></is></c></row>` +
		`<row r="2"><c r="A2" t="s"><v>1</v></c><c r="B2"><v>45672</v></c><c r="C2"><f>10*10</f><v>100</v></c></row></sheetData></worksheet>`
)

// FuzzWorkbookParts fuzzes the parts of a one-sheet workbook, zipped by
// the harness with their true checksums, so that the fuzzer's changes reach
// the workbook, shared-strings and sheet readers instead of failing the
// archive's checks.
func FuzzWorkbookParts(f *testing.F) {
	f.Add([]byte(tinyWorkbook), []byte(tinySST), []byte(tinySheet))
	f.Add([]byte(`<workbook><sheets><sheet name="Grants" r:id="r9"/><sheet name="Grants" r:id="r1"/></sheets></workbook>`), []byte(`<sst><si><t>_x0041_</t></si></sst>`), []byte(`<worksheet><sheetData><row><c t="s"><v>0</v></c></row></sheetData></worksheet>`))
	f.Fuzz(func(t *testing.T, workbook, sst, sheet []byte) {
		b := tinyBook(workbook, sst, sheet)
		checkReadXLSX(t, b)
	})
}

// checkReadXLSX reads a workbook and checks that the result is an error
// of the reader's kind or a report whose problems name a sheet.
func checkReadXLSX(t *testing.T, data []byte) {
	s, rep, err := ReadXLSX(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		var ce *CellError
		if !errors.As(err, &ce) {
			t.Fatalf("error %v is not a *CellError", err)
		}
		if s != nil || rep != nil {
			t.Fatalf("a schedule came back with the error %v", err)
		}
		return
	}
	for _, e := range rep.Errors {
		if e.Sheet == "" {
			t.Fatalf("problem without a sheet: %#v", e)
		}
	}
}
