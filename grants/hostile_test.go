package grants

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"testing/fstest"
)

// CSV files a careless export or a hostile folder gives: each gets a plain
// message naming the sheet and the file, and nothing more is said of that
// sheet ("sheet is empty" was printed after some of these).
func TestReadCSVOddFiles(t *testing.T) {
	utf16 := func(s string, bom bool) []byte {
		var b []byte
		if bom {
			b = append(b, 0xff, 0xfe)
		}
		for _, r := range s {
			b = append(b, byte(r), 0)
		}
		return b
	}
	grants := "grant_id,grant_date,shares,strike,term_years\nA-1,2025-01-15,100,1.50,10\n"
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"utf16 with bom", utf16(grants, true), "Grants: grants.csv is UTF-16 (Unicode) text; save it as CSV UTF-8"},
		{"utf16 without bom", utf16(grants, false), "Grants: grants.csv is UTF-16 text without a byte-order mark; save it as CSV UTF-8"},
		{"cr only", []byte(strings.ReplaceAll(grants, "\n", "\r")), "Grants: grants.csv ends its lines with a carriage return alone"},
		{"latin-1", []byte(grants + "A-2,2025-01-15,100,1.50,10,Jos\xe9\n"), "Grants: grants.csv line 3 is not UTF-8 text"},
	} {
		t.Run(c.name, func(t *testing.T) {
			fs := baseCSV()
			fs["grants.csv"] = &fstest.MapFile{Data: c.data}
			defer writeHostile(t, "csv-"+c.name, mapFiles(fs))
			_, rep := readMap(t, fs)
			got := problems(rep)
			if !strings.Contains(got, c.want) {
				t.Errorf("want %q in\n%s", c.want, got)
			}
			lastErr[t.Name()] = c.want
			if strings.Contains(got, "Grants: sheet is empty") || strings.Contains(got, "Grants!A1: sheet is empty") {
				t.Errorf("a second, wrong message:\n%s", got)
			}
		})
	}
}

// csvDir writes the base CSV schedule into a temporary folder.
func csvDir(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	for name, f := range baseCSV() {
		if err := os.WriteFile(filepath.Join(dir, name), f.Data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

// Only regular files are read, symbolic links are not followed, and files
// that are no sheet are not opened, even to hash them.
func TestReadCSVFolderFiles(t *testing.T) {
	dir := csvDir(t)
	if err := os.Symlink("/dev/zero", filepath.Join(dir, "notes.csv")); err != nil {
		t.Skip("no symbolic links here:", err)
	}
	// A 3 GB sparse file that is no sheet.
	f, err := os.Create(filepath.Join(dir, "export.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(3 << 30); err != nil {
		t.Skip("no sparse files here:", err)
	}
	f.Close()
	s, rep, err := ReadFile(dir)
	if err != nil || !rep.OK() || len(s.Grants) != 1 {
		t.Fatalf("the folder with unrelated files: %v\n%s", err, problems(rep))
	}
	if got := problems(rep); !strings.Contains(got, "notes: sheet is not one grantworth reads; it is ignored") {
		t.Errorf("no warning for notes.csv:\n%s", got)
	}
	sum, err := HashInput(dir)
	if err != nil || len(sum) != 64 {
		t.Fatalf("hash: %q %v", sum, err)
	}

	// A sheet that is a symbolic link, even to a good file, is refused.
	os.Rename(filepath.Join(dir, "grants.csv"), filepath.Join(dir, "real.txt"))
	os.Symlink("real.txt", filepath.Join(dir, "grants.csv"))
	_, rep, err = ReadFile(dir)
	if err != nil {
		t.Fatal(err)
	}
	want := "Grants: grants.csv is a symbolic link; grantworth reads only regular files"
	if got := problems(rep); !strings.Contains(got, want) || strings.Contains(got, "sheet is empty") {
		t.Errorf("want %q alone in\n%s", want, got)
	}
	if _, err := HashInput(dir); err == nil || !strings.Contains(err.Error(), "symbolic link") {
		t.Errorf("hash of a folder whose sheet is a link: %v", err)
	}

	// A sheet past the size limit is refused before it is read: a 3 GB
	// sparse grants.csv would take 3 GB to read.
	os.Remove(filepath.Join(dir, "grants.csv"))
	os.Rename(filepath.Join(dir, "export.csv"), filepath.Join(dir, "grants.csv"))
	_, _, err = ReadFile(dir)
	if !errors.Is(err, ErrTooLarge) || !strings.HasPrefix(err.Error(), "Grants: grants.csv is 3,072 MiB, more than the 64 MiB allowed") {
		t.Errorf("3 GB grants.csv: %v", err)
	}
	if _, err := HashInput(dir); !errors.Is(err, ErrTooLarge) {
		t.Errorf("hash of a 3 GB sheet: %v", err)
	}
	// A device given as the schedule is refused.
	if _, _, err := ReadFile("/dev/zero"); !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), "is a device") {
		t.Errorf("/dev/zero: %v", err)
	}
}

// The hash of a CSV folder frames each sheet file as before: name, NUL,
// length, NUL, bytes, in name order (the sample's hash is in the goldens).
func TestHashInputFraming(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "grants.csv"), []byte("g"), 0o644)
	os.WriteFile(filepath.Join(dir, "company.csv"), []byte("co"), 0o644)
	os.WriteFile(filepath.Join(dir, "readme.csv"), []byte("not a sheet"), 0o644)
	got, err := HashInput(dir)
	if err != nil {
		t.Fatal(err)
	}
	// From coreutils: printf 'company.csv\0002\000cogrants.csv\0001\000g' | sha256sum
	const want = "95a20c317ebff17cb39953d329b7e49fa5f94cfa8b66ea1f0cf1dbd37851a705"
	if got != want {
		t.Errorf("hash %s, want %s", got, want)
	}
}

// Text fields have lengths: a 10,000-character grant id made a 4,318-page
// memo. Each is an error naming the cell, quoting the start of the text and
// its length.
func TestReadTextLimits(t *testing.T) {
	long := func(n int) string { return strings.Repeat("x", n) }
	for _, c := range []struct {
		name, file, data, want string
	}{
		{"grant id", "grants.csv", "grant_id,grant_date,shares,strike,term_years\n" + long(10000) + ",2025-01-15,100,1.50,10\n",
			`Grants!A2 (grant_id): "` + long(60) + `…" (10000 characters) is longer than the 64 characters allowed for grant_id`},
		{"holder", "grants.csv", "grant_id,holder,grant_date,shares,strike,term_years\nA-1," + long(1000) + ",2025-01-15,100,1.50,10\n",
			`Grants!B2 (holder): "` + long(60) + `…" (1000 characters) is longer than the 200 characters allowed for holder`},
		{"company name", "company.csv", "key,value\ncompany_name," + long(201) + "\nvaluation_date,2026-09-30\n",
			`Company!B2 (company_name): "` + long(60) + `…" (201 characters) is longer than the 200 characters allowed for company_name`},
		{"source", "assumptions.csv", "key,value,source\nvolatility,45%," + long(501) + "\n",
			`Assumptions!C2 (source): "` + long(60) + `…" (501 characters) is longer than the 500 characters allowed for the source of volatility`},
		{"header", "grants.csv", "grant_id,grant_date,shares,strike,term_years," + long(1000) + "\nA-1,2025-01-15,100,1.50,10,x\n",
			`Grants!F1: "` + long(60) + `…" (1000 characters) is longer than any column name (at most 100 characters)`},
		{"key", "company.csv", "key,value\ncompany_name,Pebblebrook Audio\nvaluation_date,2026-09-30\n" + long(101) + ",1\n",
			`Company!A4 (key): "` + long(60) + `…" (101 characters) is longer than any key (at most 100 characters)`},
	} {
		t.Run(c.name, func(t *testing.T) {
			fs := baseCSV()
			fs[c.file] = &fstest.MapFile{Data: []byte(c.data)}
			if len(c.data) < 100_000 {
				lastErr[t.Name()] = c.want[:strings.Index(c.want, `"`)]
				defer writeHostile(t, "csv-long-"+c.name, mapFiles(fs))
			}
			_, rep := readMap(t, fs)
			got := problems(rep)
			if !strings.Contains(got, c.want) {
				t.Errorf("want %q in\n%s", c.want, got)
			}
			if len(got) > 4000 {
				t.Errorf("the problems run to %d bytes: the text is printed whole", len(got))
			}
		})
	}
	// Past a spreadsheet cell's 32,767 characters, any cell stops the read:
	// a holder of a million characters made a memo of 111,063 pages, a 60 MB
	// header a warning of 63 MB.
	for _, data := range []string{
		"grant_id,holder,grant_date,shares,strike,term_years\nA-1," + long(1_000_000) + ",2025-01-15,100,1.50,10\n",
		"grant_id,grant_date,shares,strike,term_years,notes\nA-1,2025-01-15,100,1.50,10,\"" + long(32768) + "\"\n",
	} {
		fs := baseCSV()
		fs["grants.csv"] = &fstest.MapFile{Data: []byte(data)}
		_, _, err := ReadCSVDir(fs)
		if !errors.Is(err, ErrTooLarge) || !strings.HasSuffix(err.Error(), "2: holds more than 32,767 characters, more than a spreadsheet cell holds") {
			t.Errorf("a cell past 32,767 characters: %v", err)
		}
	}
	// A row of 5 MiB is refused before it is read whole.
	fs := baseCSV()
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,grant_date,shares,notes\nA-1,2025-01-15,100," + strings.Repeat("\"x\",", 5<<20/4) + "\n")}
	if _, _, err := ReadCSVDir(fs); !errors.Is(err, ErrTooLarge) || err.Error() != "Grants: grants.csv line 2 starts a row longer than 4 MiB" {
		t.Errorf("a 5 MiB row: %v", err)
	}

	// Text at the limits is read.
	fs = baseCSV()
	fs["grants.csv"] = &fstest.MapFile{Data: []byte("grant_id,holder,grant_date,shares,strike,term_years\n" + long(64) + "," + strings.Repeat("é", 200) + ",2025-01-15,100,1.50,10\n")}
	s, rep := readMap(t, fs)
	if !rep.OK() || len(s.Grants) != 1 {
		t.Errorf("text at the limits:\n%s", problems(rep))
	}
}

func mapFiles(fs fstest.MapFS) map[string][]byte {
	out := map[string][]byte{}
	for n, f := range fs {
		out[n] = f.Data
	}
	return out
}
