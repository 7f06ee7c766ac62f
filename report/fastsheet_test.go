package report

import (
	"archive/zip"
	"bytes"
	"io"
	"math"
	"testing"
	"time"
)

func zipEntries(t *testing.T, b []byte) map[string][]byte {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string][]byte{}
	for _, f := range zr.File {
		r, err := f.Open()
		if err != nil {
			t.Fatal(err)
		}
		data, err := io.ReadAll(r)
		r.Close()
		if err != nil {
			t.Fatal(err)
		}
		out[f.Name] = data
	}
	return out
}

// The Tranches rows written apart are the bytes excelize's stream writer
// writes: every entry of the workbook inflates to the same XML both ways.
func TestFastTrancheRowsMatchExcelize(t *testing.T) {
	m := fixture()
	for i := range m.Grants {
		m.Grants[i].Holder = "E0042" + string(rune('0'+i)) // plain text, so the fast rows apply
	}
	// Numbers at the edges of the 15-digit rule and a missing vest date.
	tr := &m.Grants[0].Tranches[0]
	tr.FairValuePerShare = 1234567.891234567891
	tr.ErrorEstimate = 0.000000123456789012345678
	tr.YearsToExpiry = 123456789012345678901.0
	tr.SimplifiedRate = math.Copysign(0, -1)
	tr.RiskFreeRate = -0.0421826842478506123
	m.Grants[0].Tranches[1].VestDate = Date{}
	m.Grants[0].Tranches[2].VestDate = DateOf(time.Date(1900, 3, 1, 0, 0, 0, 0, time.UTC))
	if !trancheRowsPlain(m) {
		t.Fatal("the test model does not take the fast rows")
	}
	render := func(slow bool) map[string][]byte {
		slowSheets = slow
		defer func() { slowSheets = false }()
		var buf bytes.Buffer
		if err := WriteWorkbook(&buf, m); err != nil {
			t.Fatal(err)
		}
		return zipEntries(t, buf.Bytes())
	}
	fast, slow := render(false), render(true)
	if len(fast) != len(slow) {
		t.Fatalf("%d entries fast, %d through excelize", len(fast), len(slow))
	}
	for name, want := range slow {
		got := fast[name]
		if bytes.Contains(got, []byte(rowsToken)) {
			t.Errorf("%s still holds the placeholder", name)
		}
		if !bytes.Equal(got, want) {
			i := 0
			for i < len(got) && i < len(want) && got[i] == want[i] {
				i++
			}
			lo := max(0, i-120)
			t.Errorf("%s differs at byte %d:\n fast: %q\nslow: %q", name, i, got[lo:min(len(got), i+120)], want[lo:min(len(want), i+120)])
		}
	}
}

// Text that excelize escapes, or a number it cannot write, keeps the
// sheet on excelize's path.
func TestFastTrancheRowsRefuseAwkwardValues(t *testing.T) {
	for _, s := range []string{"a&b", "<x>", "a_x0041_", " lead", "trail ", "Ελληνικά", "tab\t", "q\"", "it's"} {
		if plainText(s) {
			t.Errorf("plainText(%q) = true", s)
		}
	}
	for _, s := range []string{"", "OQ-00001", "E00895", "option", "A B"} {
		if !plainText(s) {
			t.Errorf("plainText(%q) = false", s)
		}
	}
	m := fixture() // its holders include a formula-like code and non-Latin letters
	if trancheRowsPlain(m) {
		t.Error("the fixture's holders are not plain text, yet the fast rows would write them")
	}
	m = fixture()
	for i := range m.Grants {
		m.Grants[i].Holder = "H"
	}
	m.Grants[0].Tranches[0].ErrorEstimate = math.NaN()
	if trancheRowsPlain(m) {
		t.Error("a NaN would be written by the fast rows")
	}
}
