package grants

import (
	"archive/zip"
	"bytes"
	"errors"
	"flag"
	"hash/crc32"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// samplePath is the demo workbook: 44 grants.
var samplePath = filepath.Join("..", "sample", "tarnwick.xlsx")

// zipPart is one entry of a workbook, and how to write it back.
type zipPart struct {
	name string
	data []byte
	// raw, when set, writes the entry with this header as given (a wrong
	// checksum or size) and data compressed as is.
	raw *zip.FileHeader
}

func readParts(t testing.TB, b []byte) []zipPart {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatal(err)
	}
	var out []zipPart
	for _, f := range zr.File {
		rc, err := f.Open()
		if err != nil {
			t.Fatal(err)
		}
		data, err := io.ReadAll(rc)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, zipPart{name: f.Name, data: data})
	}
	return out
}

func writeParts(t testing.TB, parts []zipPart) []byte {
	t.Helper()
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	for _, p := range parts {
		if p.raw != nil {
			// Deflate the data on its own, then write it under the
			// given header.
			comp := deflate(t, p.data)
			h := *p.raw
			h.Name, h.Method = p.name, zip.Deflate
			h.CompressedSize64 = uint64(len(comp))
			w, err := zw.CreateRaw(&h)
			if err != nil {
				t.Fatal(err)
			}
			w.Write(comp)
			continue
		}
		w, err := zw.Create(p.name)
		if err != nil {
			t.Fatal(err)
		}
		w.Write(p.data)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func deflate(t testing.TB, data []byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	w, _ := zw.Create("x")
	w.Write(data)
	zw.Close()
	zr, err := zip.NewReader(bytes.NewReader(buf.Bytes()), int64(buf.Len()))
	if err != nil {
		t.Fatal(err)
	}
	rc, err := zr.File[0].OpenRaw()
	if err != nil {
		t.Fatal(err)
	}
	raw, _ := io.ReadAll(rc)
	return raw
}

// grantsPart is the name of the sample's Grants worksheet part.
func grantsPart(t testing.TB, b []byte) string {
	t.Helper()
	book, err := openXLSX(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatal(err)
	}
	for _, sh := range book.sheets {
		if sh.name == SheetGrants {
			return sh.part
		}
	}
	t.Fatal("sample has no Grants sheet")
	return ""
}

// damagedSample returns the sample workbook with its Grants part changed
// by fn.
func damagedSample(t testing.TB, fn func(p *zipPart)) []byte {
	t.Helper()
	b, err := os.ReadFile(samplePath)
	if err != nil {
		t.Fatal(err)
	}
	name := grantsPart(t, b)
	parts := readParts(t, b)
	for i := range parts {
		if parts[i].name == name {
			fn(&parts[i])
		}
	}
	return writeParts(t, parts)
}

// cutAtRow returns the index of row n's start tag in a worksheet.
func cutAtRow(t testing.TB, data []byte, n string) int {
	t.Helper()
	i := bytes.Index(data, []byte(`<row r="`+n+`"`))
	if i < 0 {
		t.Fatalf("no row %s", n)
	}
	return i
}

// The damaged workbooks of issue 16: each used to read as 38 of the 44
// grants, exit 0, nothing said. Each must be an error naming the Grants
// sheet, and no schedule.
func TestReadDamagedWorkbook(t *testing.T) {
	cases := []struct {
		name string
		fn   func(p *zipPart)
		want string
	}{
		{"garbage before row 40", func(p *zipPart) {
			i := cutAtRow(t, p.data, "40")
			p.data = append(append(append([]byte(nil), p.data[:i]...), "\x00\x07<<garbage"...), p.data[i:]...)
		}, "Grants!"},
		{"text garbage before row 40", func(p *zipPart) {
			i := cutAtRow(t, p.data, "40")
			p.data = append(append(append([]byte(nil), p.data[:i]...), "garbage"...), p.data[i:]...)
		}, "Grants!"},
		{"sheet cut short at row 40", func(p *zipPart) {
			p.data = p.data[:cutAtRow(t, p.data, "40")]
		}, "Grants!"},
		{"sheet cut inside a cell", func(p *zipPart) {
			p.data = p.data[:cutAtRow(t, p.data, "40")+40]
		}, "Grants!"},
		{"declared size smaller than its data", func(p *zipPart) {
			p.raw = &zip.FileHeader{CRC32: crc32.ChecksumIEEE(p.data), UncompressedSize64: uint64(len(p.data) - 500)}
		}, "Grants"},
		{"wrong checksum", func(p *zipPart) {
			p.raw = &zip.FileHeader{CRC32: crc32.ChecksumIEEE(p.data) ^ 1, UncompressedSize64: uint64(len(p.data))}
		}, "Grants"},
		{"end tag out of order", func(p *zipPart) {
			i := cutAtRow(t, p.data, "40")
			j := bytes.Index(p.data[i:], []byte("</row>"))
			p.data = append(append([]byte(nil), p.data[:i+j]...), p.data[i+j+len("</row>"):]...)
		}, "Grants!"},
		{"shared string the workbook lacks", func(p *zipPart) {
			i := cutAtRow(t, p.data, "40")
			j := bytes.Index(p.data[i:], []byte(`t="s"><v>`))
			k := i + j + len(`t="s"><v>`)
			e := bytes.IndexByte(p.data[k:], '<')
			p.data = append(append(append([]byte(nil), p.data[:k]...), "99999"...), p.data[k+e:]...)
		}, "Grants!"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			b := damagedSample(t, c.fn)
			defer writeHostile(t, "damaged-"+c.name, map[string][]byte{"schedule.xlsx": b})
			s, rep, err := ReadXLSX(bytes.NewReader(b), int64(len(b)))
			if err == nil {
				n := 0
				if s != nil {
					n = len(s.Grants)
				}
				t.Fatalf("read with no error: %d grants, %d problems", n, rep.ErrorCount())
			}
			if !errors.Is(err, ErrDamaged) {
				t.Errorf("error %v does not wrap ErrDamaged", err)
			}
			if s != nil || rep != nil {
				t.Errorf("a schedule came back with the error")
			}
			if !strings.HasPrefix(err.Error(), c.want) {
				t.Errorf("error %q does not start with %q", err, c.want)
			}
			lastErr[t.Name()] = err.Error()
		})
	}
}

// The same sample rebuilt without damage reads whole: the helpers above
// change only what each case says.
func TestReadRebuiltSample(t *testing.T) {
	b := damagedSample(t, func(*zipPart) {})
	s, rep, err := ReadXLSX(bytes.NewReader(b), int64(len(b)))
	if err != nil || !rep.OK() || len(s.Grants) != 47 {
		t.Fatalf("rebuilt sample: %v, %d grants", err, len(s.Grants))
	}
	b = damagedSample(t, func(p *zipPart) {
		p.raw = &zip.FileHeader{CRC32: crc32.ChecksumIEEE(p.data), UncompressedSize64: uint64(len(p.data))}
	})
	s, rep, err = ReadXLSX(bytes.NewReader(b), int64(len(b)))
	if err != nil || !rep.OK() || len(s.Grants) != 47 {
		t.Fatalf("rebuilt sample with a raw entry: %v", err)
	}
}

// A workbook cut short as a file (the archive's directory lost) is not
// read at all.
func TestReadTruncatedFile(t *testing.T) {
	b, err := os.ReadFile(samplePath)
	if err != nil {
		t.Fatal(err)
	}
	for _, n := range []int{len(b) / 2, len(b) - 30, 100} {
		_, _, err := ReadXLSX(bytes.NewReader(b[:n]), int64(n))
		if !errors.Is(err, ErrFormat) {
			t.Errorf("cut at %d of %d: %v", n, len(b), err)
		}
	}
}

func TestCellName(t *testing.T) {
	for _, c := range []struct {
		col, row int
		want     string
	}{{1, 1, "A1"}, {26, 7, "Z7"}, {27, 10, "AA10"}, {52, 1, "AZ1"}, {53, 1, "BA1"}, {702, 3, "ZZ3"}, {703, 3, "AAA3"}, {16384, 1048576, "XFD1048576"}, {0, 1, ""}, {1, 0, ""}, {16385, 1, ""}} {
		if got := cellName(c.col, c.row); got != c.want {
			t.Errorf("cellName(%d, %d) = %q, want %q", c.col, c.row, got, c.want)
		}
	}
}

var hostileUpdate = flag.Bool("hostile.update", false, "rewrite the cases of testdata/hostile made by these tests")

// hostileRoot is the corpus of hostile inputs that cmd/grantworth's test
// runs through value in a child process.
var hostileRoot = filepath.Join("..", "testdata", "hostile")

// writeHostile records a case of the corpus under -hostile.update: its
// files, and in want.txt the start of the message that value must print
// (up to any parenthesis after the cell). A test that failed writes nothing.
func writeHostile(t *testing.T, name string, files map[string][]byte) {
	t.Helper()
	if !*hostileUpdate || t.Failed() {
		return
	}
	msg := t.Name() // replaced by the logged error below
	if e, ok := lastErr[t.Name()]; ok {
		msg = e
	}
	dir := filepath.Join(hostileRoot, strings.ReplaceAll(name, " ", "-"))
	if err := os.RemoveAll(dir); err != nil {
		t.Fatal(err)
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	for n, b := range files {
		if err := os.WriteFile(filepath.Join(dir, n), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if i := strings.Index(msg, ": "); i > 0 {
		if j := strings.IndexAny(msg[i+2:], "(\n"); j > 0 {
			msg = msg[:i+2+j]
		}
	}
	msg = strings.TrimSpace(msg)
	if err := os.WriteFile(filepath.Join(dir, "want.txt"), []byte(msg+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
}

// lastErr holds, by test name, the message a hostile case gave.
var lastErr = map[string]string{}

func TestCountAndSizeText(t *testing.T) {
	for n, want := range map[int]string{0: "0", 999: "999", 1000: "1,000", 32767: "32,767", 1048576: "1,048,576", -1234: "-1,234"} {
		if got := countText(n); got != want {
			t.Errorf("countText(%d) = %q, want %q", n, got, want)
		}
	}
	for n, want := range map[int64]string{64 << 20: "64 MiB", 3 << 30: "3,072 MiB", 67108873: "67,108,873 bytes", 10: "10 bytes"} {
		if got := sizeText(n); got != want {
			t.Errorf("sizeText(%d) = %q, want %q", n, got, want)
		}
	}
}
