package report

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"grantworth/grants"
	"grantworth/grants/design"
	"grantworth/valuation"
)

// A comparison workbook with a sheet past excelize's stream chunk (16 MiB
// of XML, here 120,000 warnings) spills it to a temporary file: into
// WorkbookOptions.TempDir when one is given, never the system's temporary
// folder, and nothing is left there afterwards.
func TestCompareWorkbookTempDir(t *testing.T) {
	s, rep, err := grants.ReadDesigns(filepath.Join("..", "sample", "designs.xlsx"))
	if err != nil || !rep.OK() {
		t.Fatalf("sample designs: %v %v", err, rep)
	}
	sim := valuation.OutcomeOptions{Paths: 500, StepsPerYear: 12, Seed: 1}
	c, err := design.Compare(s, design.Options{Lattice: valuation.LatticeOptions{Steps: 100}, Outcomes: sim})
	if err != nil {
		t.Fatal(err)
	}
	m := BuildComparison(c, Run{Tool: Tool{Name: "grantworth", Version: "test"}}, 100, sim)
	line := strings.Repeat("a warning long enough to fill the sheet ", 5)
	for i := range 120_000 {
		m.Warnings = append(m.Warnings, fmt.Sprintf("%d %s", i, line))
	}
	stage, system := t.TempDir(), t.TempDir()
	t.Setenv("TMPDIR", system)
	w := &watchTemp{dirs: []string{stage, system}}
	if err := WriteCompareWorkbookWith(w, m, WorkbookOptions{TempDir: stage}); err != nil {
		t.Fatal(err)
	}
	// While the archive is copied out, the spilled sheet is still open.
	if len(w.seen) != 2 || w.seen[0] == 0 || w.seen[1] != 0 {
		t.Errorf("files while writing in TempDir and TMPDIR: %v; want some in TempDir only", w.seen)
	}
	for _, d := range []string{stage, system} {
		if left, _ := os.ReadDir(d); len(left) != 0 {
			t.Errorf("%d files left in %s, e.g. %s", len(left), d, left[0].Name())
		}
	}
}

// watchTemp is an io.Writer that counts the files in each of dirs at its
// first write.
type watchTemp struct {
	dirs []string
	seen []int
}

func (w *watchTemp) Write(p []byte) (int, error) {
	if w.seen == nil {
		for _, d := range w.dirs {
			ents, _ := os.ReadDir(d)
			w.seen = append(w.seen, len(ents))
		}
	}
	return len(p), nil
}
