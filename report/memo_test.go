package report

import (
	"bytes"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

func renderMemo(t *testing.T, m *Model) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := WriteMemo(&buf, m); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// pdfText runs pdftotext (Debian's poppler-utils) on pdf and returns the
// text, pages parted by form feeds.
func pdfText(t *testing.T, pdf []byte) string {
	t.Helper()
	if _, err := exec.LookPath("pdftotext"); err != nil {
		// CI installs poppler-utils and must read the memo; elsewhere a
		// machine without it skips only the checks of the memo's text.
		if os.Getenv("CI") != "" {
			t.Fatal("pdftotext not found: install poppler-utils (the CI script does)")
		}
		t.Skip("pdftotext not found: apt-get install poppler-utils to check the memo's text")
	}
	path := filepath.Join(t.TempDir(), "memo.pdf")
	if err := os.WriteFile(path, pdf, 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command("pdftotext", "-layout", path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	return string(out)
}

func TestMemoText(t *testing.T) {
	m := fixture()
	text := pdfText(t, renderMemo(t, m))
	flat := strings.Join(strings.Fields(text), " ")
	for _, want := range []string{
		"Larkspur Robotics Ltd",
		"EUR " + groupDigits(m.Totals.FairValueTotal, 2),
		"not an audit opinion",
		"ASC 718, IFRS 2 or local rules",
		"Cox-Ross-Rubinstein",
		"Galai",
		"Ø-7 Søren",
		m.Input.SHA256,
		"Page 2 of",
	} {
		if !strings.Contains(flat, want) {
			t.Errorf("memo text lacks %q", want)
		}
	}
	// The page count is kept in a golden file: a change in layout that
	// adds or drops pages shows up in review.
	golden(t, "fixture.pages.txt", []byte(fmt.Sprintf("%d\n", strings.Count(text, "\f"))))
}

// Map order varies from run to run, so three renderings give a fair chance
// of catching anything that depends on it.
func TestMemoDeterministic(t *testing.T) {
	a := renderMemo(t, fixture())
	for i := 0; i < 2; i++ {
		if b := renderMemo(t, fixture()); !bytes.Equal(a, b) {
			t.Fatal("two renderings of the same Model differ")
		}
	}
}

// A ledger too long to list grant by grant is grouped by grant month, and
// its memo stays short (issue 5: a 10,000-grant ledger still gives a
// readable memo).
func TestMemoLargeLedgerGrouped(t *testing.T) {
	m := bigModel(2000)
	text := pdfText(t, renderMemo(t, m))
	flat := strings.Join(strings.Fields(text), " ")
	for _, want := range []string{"By grant month", "so the share-based awards are grouped here by the month of grant", "Grant month"} {
		if !strings.Contains(flat, want) {
			t.Errorf("memo of 2,000 grants lacks %q", want)
		}
	}
	if strings.Contains(flat, "L-01999") {
		t.Error("memo of 2,000 grants lists grants one by one")
	}
	if pages := strings.Count(text, "\f"); pages > 20 {
		t.Errorf("memo of 2,000 grants has %d pages, want at most 20", pages)
	}
}
