package main

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"grantworth/grants"
)

// The committed sample files are what the generator writes.
func TestGeneratorReproducesSample(t *testing.T) {
	dir := t.TempDir()
	if err := run(dir); err != nil {
		t.Fatal(err)
	}
	var n int
	err := filepath.Walk(dir, func(p string, info os.FileInfo, err error) error {
		if err != nil || info.IsDir() {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		got, _ := os.ReadFile(p)
		want, err := os.ReadFile(filepath.Join("..", rel))
		if err != nil {
			t.Errorf("sample/%s is not committed: %v", rel, err)
			return nil
		}
		if !bytes.Equal(got, want) {
			t.Errorf("sample/%s differs from what go run ./sample/gen writes; rerun it", rel)
		}
		n++
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	// tarnwick.xlsx and a CSV file per sheet, designs.xlsx,
	// prices/tarnwick.csv (the company's closes for its relative TSR
	// award), and a CSV file per sheet for each of the four quarters.
	if want := 1 + len(grants.Sheets) + 1 + 1 + 4*len(grants.Sheets); n != want {
		t.Errorf("generator wrote %d files, want %d", n, want)
	}
}
