package main

import (
	"archive/zip"
	"bytes"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A workbook whose worksheets fail their checksums is refused (exit 2, the
// sheet named, nothing written, the input unchanged); it used to be read as
// far as the damage and valued.
func TestValueDamagedWorkbook(t *testing.T) {
	src, err := os.ReadFile(sampleXLSX)
	if err != nil {
		t.Fatal(err)
	}
	zr, err := zip.NewReader(bytes.NewReader(src), int64(len(src)))
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	for _, f := range zr.File {
		raw, err := f.OpenRaw()
		if err != nil {
			t.Fatal(err)
		}
		h := f.FileHeader
		if strings.HasPrefix(f.Name, "xl/worksheets/") {
			h.CRC32 ^= 1
		}
		w, err := zw.CreateRaw(&h)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := io.Copy(w, raw); err != nil {
			t.Fatal(err)
		}
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	tmp := t.TempDir()
	bad := filepath.Join(tmp, "damaged.xlsx")
	if err := os.WriteFile(bad, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(tmp, "out")
	for _, args := range [][]string{{"check", bad}, {"value", bad, "--out", out}} {
		verb := args[0]
		code, stdout, errs := runArgs(t, args...)
		errs += stdout // check prints its findings on stdout
		if code != exitInput {
			t.Fatalf("%s: exit %d, want 2\n%s%s", verb, code, stdout, errs)
		}
		if !strings.Contains(errs, "Company: the sheet is damaged (xl/worksheets/") || !strings.Contains(errs, "checksum") {
			t.Errorf("%s: the message does not name the sheet and the damage:\n%s", verb, errs)
		}
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("the output folder was created (%v)", err)
	}
	after, _ := os.ReadFile(bad)
	if !bytes.Equal(buf.Bytes(), after) {
		t.Error("the input was modified")
	}
}
