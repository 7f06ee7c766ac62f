package main

import (
	"archive/zip"
	"bytes"
	"compress/flate"
	"flag"
	"fmt"
	"hash/crc32"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Builders of the hostile inputs of issue 16: workbooks that unzip to
// hundreds of megabytes from a small file. They are made by the tests
// (never committed): a part of n copies of a chunk is deflated once per
// chunk and the compressed chunk repeated, which is a valid deflate stream
// because each chunk refers back only to its own bytes.

// part is one zip entry; big parts give their bytes as a prefix, a chunk
// repeated n times and a suffix.
type part struct {
	name                  string
	prefix, chunk, suffix []byte
	n                     int
	declared              uint64 // the size the archive states, when not the true one
}

func (p part) size() uint64 {
	return uint64(len(p.prefix) + p.n*len(p.chunk) + len(p.suffix))
}

// flushed deflates b as non-final blocks ending on a byte boundary.
func flushed(t testing.TB, b []byte, final bool) []byte {
	t.Helper()
	var buf bytes.Buffer
	w, _ := flate.NewWriter(&buf, flate.BestSpeed)
	w.Write(b)
	if final {
		w.Close()
	} else {
		w.Flush()
	}
	return buf.Bytes()
}

func writeBook(t testing.TB, path string, parts []part) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zw := zip.NewWriter(f)
	for _, p := range parts {
		if p.n == 0 && p.declared == 0 {
			w, err := zw.CreateHeader(&zip.FileHeader{Name: p.name, Method: zip.Store})
			if err != nil {
				t.Fatal(err)
			}
			w.Write(p.prefix)
			continue
		}
		crc := crc32.ChecksumIEEE(p.prefix)
		for i := 0; i < p.n; i++ {
			crc = crc32.Update(crc, crc32.IEEETable, p.chunk)
		}
		crc = crc32.Update(crc, crc32.IEEETable, p.suffix)
		pre := flushed(t, p.prefix, false)
		ch := flushed(t, p.chunk, false)
		suf := flushed(t, p.suffix, true)
		size := p.size()
		if p.declared != 0 {
			size = p.declared
		}
		h := &zip.FileHeader{Name: p.name, Method: zip.Deflate, CRC32: crc, UncompressedSize64: size,
			CompressedSize64: uint64(len(pre) + p.n*len(ch) + len(suf))}
		w, err := zw.CreateRaw(h)
		if err != nil {
			t.Fatal(err)
		}
		w.Write(pre)
		for i := 0; i < p.n; i++ {
			w.Write(ch)
		}
		w.Write(suf)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
}

// sampleParts returns the sample workbook's parts and the name of its
// Grants worksheet part.
func sampleParts(t testing.TB) ([]part, string) {
	t.Helper()
	b, err := os.ReadFile(sampleXLSX)
	if err != nil {
		t.Fatal(err)
	}
	zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatal(err)
	}
	var parts []part
	grants := ""
	for _, f := range zr.File {
		rc, _ := f.Open()
		data, err := io.ReadAll(rc)
		if err != nil {
			t.Fatal(err)
		}
		if strings.HasPrefix(f.Name, "xl/worksheets/") && bytes.Contains(data, []byte("<v>31000</v>")) {
			grants = f.Name // the sheet with the first grant's 31,000 shares
		}
		parts = append(parts, part{name: f.Name, prefix: data})
	}
	if grants == "" {
		t.Fatal("no Grants sheet found in the sample")
	}
	return parts, grants
}

// withPart replaces the part named name.
func withPart(parts []part, p part) []part {
	out := append([]part(nil), parts...)
	for i := range out {
		if out[i].name == p.name {
			out[i] = p
		}
	}
	return out
}

func repeat(s string, size int) []byte {
	return bytes.Repeat([]byte(s), size/len(s))
}

const mib = 1 << 20

// rowsAfterHeader splits the Grants sheet before its first data row and
// after its last.
func splitRows(t testing.TB, data []byte) (head, tail []byte) {
	i := bytes.Index(data, []byte(`<row r="2"`))
	j := bytes.LastIndex(data, []byte(`</row>`))
	if i < 0 || j < 0 {
		t.Fatal("the Grants sheet has no rows")
	}
	return data[:i], data[j+len(`</row>`):]
}

var bombsDir = flag.String("bombs", "", "write the hostile workbooks into this folder (TestWriteBombs)")

// bombs are the workbooks of issue 16's "memory and time bounded" list,
// written into dir; the map gives each file's path by case name.
func writeBombs(t testing.TB, dir string) map[string]string {
	parts, grants := sampleParts(t)
	var sheet []byte
	var sst part
	for _, p := range parts {
		if p.name == grants {
			sheet = p.prefix
		}
		if p.name == "xl/sharedStrings.xml" {
			sst = p
		}
	}
	head, tail := splitRows(t, sheet)
	out := map[string]string{}
	add := func(name string, ps []part) {
		path := filepath.Join(dir, name+".xlsx")
		writeBook(t, path, ps)
		out[name] = path
	}

	// One cell of 480 MB: the first grant's id as inline text.
	add("cell-480mb", withPart(parts, part{name: grants,
		prefix: append(append([]byte(nil), head...), `<row r="2"><c r="A2" t="inlineStr"><is><t>`...),
		chunk:  repeat("A", mib), n: 480,
		suffix: append([]byte(`</t></is></c></row>`), tail...)}))

	// One shared string of 480 MB, after the sample's own.
	i := bytes.LastIndex(sst.prefix, []byte("</sst>"))
	add("shared-string-480mb", withPart(parts, part{name: sst.name,
		prefix: append(append([]byte(nil), sst.prefix[:i]...), "<si><t>"...),
		chunk:  repeat("B", mib), n: 480,
		suffix: []byte("</t></si></sst>")}))

	// About 28 million tiny shared strings (17 bytes each, 476 MB).
	si := "<si><t>x</t></si>"
	add("shared-strings-28m", withPart(parts, part{name: sst.name,
		prefix: append([]byte(nil), sst.prefix[:i]...),
		chunk:  repeat(si, mib), n: 28_000_000 / (mib / len(si)),
		suffix: []byte("</sst>")}))

	// 1,048,576 rows, each a copy of the first grant with only the cells
	// it needs (rows and cells numbered by position).
	row := `<row><c t="s"><v>42</v></c><c t="s"><v>43</v></c><c t="s"><v>44</v></c><c><v>45206</v></c><c><v>31000</v></c><c><v>0.85</v></c><c><v>48859</v></c></row>`
	add("rows-1048576", withPart(parts, part{name: grants,
		prefix: head, chunk: bytes.Repeat([]byte(row), 1025), n: 1023, // 1,048,575 rows after the header
		suffix: tail}))

	// 5 million nested elements inside a cell.
	add("nested-5m", withPart(parts, part{name: grants,
		prefix: append(append([]byte(nil), head...), `<row r="2"><c r="A2" t="inlineStr"><is>`...),
		chunk:  bytes.Repeat([]byte("<a>"), 1_000_000), n: 5,
		suffix: append(append(bytes.Repeat([]byte("</a>"), 5_000_000), `</is></c></row>`...), tail...)}))

	// The same attacks kept under the unzipped-size limit, so that each
	// meets its own limit: a 200 MB cell, a 200 MB shared string, 14
	// million shared strings, 2,100 shared strings of 32,000 characters.
	add("cell-200mb", withPart(parts, part{name: grants,
		prefix: append(append([]byte(nil), head...), `<row r="2"><c r="A2"><v>`...),
		chunk:  repeat("7", mib), n: 200,
		suffix: append([]byte(`</v></c></row>`), tail...)}))
	add("shared-string-200mb", withPart(parts, part{name: sst.name,
		prefix: append(append([]byte(nil), sst.prefix[:i]...), "<si><t>"...),
		chunk:  repeat("B", mib), n: 200,
		suffix: []byte("</t></si></sst>")}))
	add("shared-strings-14m", withPart(parts, part{name: sst.name,
		prefix: append([]byte(nil), sst.prefix[:i]...),
		chunk:  repeat(si, mib), n: 14_000_000 / (mib / len(si)),
		suffix: []byte("</sst>")}))
	add("shared-text-67mb", withPart(parts, part{name: sst.name,
		prefix: append([]byte(nil), sst.prefix[:i]...),
		chunk:  []byte("<si><t>" + strings.Repeat("C", 32000) + "</t></si>"), n: 2100,
		suffix: []byte("</sst>")}))

	// 1,048,575 blank rows: nothing to read, but every one numbered.
	add("blank-rows-1048576", withPart(parts, part{name: grants,
		prefix: head, chunk: bytes.Repeat([]byte(`<row><c s="3"/></row>`), 1025), n: 1023,
		suffix: tail}))

	// One row of ten million cells.
	add("row-10m-cells", withPart(parts, part{name: grants,
		prefix: append(append([]byte(nil), head...), `<row r="2">`...),
		chunk:  bytes.Repeat([]byte(`<c/>`), 250_000), n: 40,
		suffix: append([]byte(`</row>`), tail...)}))

	// The 480 MB cell in an entry that says it is 100,000 bytes.
	p := part{name: grants,
		prefix: append(append([]byte(nil), head...), `<row r="2"><c r="A2" t="inlineStr"><is><t>`...),
		chunk:  repeat("A", mib), n: 480,
		suffix: append([]byte(`</t></is></c></row>`), tail...)}
	p.declared = 100_000
	add("cell-480mb-declared-100kb", withPart(parts, p))

	// An archive of 100,000 parts.
	many := append([]part(nil), parts...)
	for k := 0; k < 100_000; k++ {
		many = append(many, part{name: fmt.Sprintf("xl/media/p%d.bin", k)})
	}
	add("parts-100000", many)
	return out
}

// TestWriteBombs writes the bombs for measuring a build by hand:
//
//	go test ./cmd/grantworth -run TestWriteBombs -bombs /tmp/bombs
func TestWriteBombs(t *testing.T) {
	if *bombsDir == "" {
		t.Skip("give -bombs DIR to write the hostile workbooks")
	}
	for name, path := range writeBombs(t, *bombsDir) {
		st, _ := os.Stat(path)
		t.Logf("%s: %s, %d bytes", name, path, st.Size())
	}
}
