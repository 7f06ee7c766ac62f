package report

import (
	"bytes"
	"errors"
	"strings"
	"testing"
)

// The tests read every prior close given as a file or a bytes.Reader on
// two cores, whatever its size (prior_tail.go), and through
// iotest.OneByteReader alone (readBoth): the two must agree, errors
// included.
func init() { parallelPriorMin = 0 }

// A prior close read on two cores is read as it is alone: a file
// grantworth wrote (its tail taken); the same with a fault on any line of
// its tail (the same error, at its line); and files whose expense line is
// not where the tail can start (inside another member, or followed by
// grants), which are read alone.
func TestReadPriorOnTwoCores(t *testing.T) {
	good := smallPrior()
	taken := tailsTaken.Load()
	if _, err := readBoth(t, good); err != nil {
		t.Fatal(err)
	}
	if tailsTaken.Load() != taken+1 {
		t.Fatalf("the tail of a file grantworth wrote was not taken")
	}
	split := bytes.Index(good, tailMarker) + 1
	lines := bytes.Split(good, []byte{'\n'})
	line := 1 // of the byte at off
	off := 0
	faults := 0
	for i, l := range lines {
		if off >= split && len(l) > 0 && i%3 == 0 {
			// A stray byte before what the line holds.
			at := off + len(l) - len(bytes.TrimLeft(l, " "))
			bad := append(append(append([]byte{}, good[:at]...), '#'), good[at:]...)
			_, err := readBoth(t, bad)
			var je *jsonError
			if !errors.As(err, &je) || je.Line != line {
				t.Fatalf("a fault on line %d (%q): %v", line, l, err)
			}
			faults++
		}
		off += len(l) + 1
		line = i + 2
	}
	if faults < 30 {
		t.Fatalf("%d faults tried in the tail", faults)
	}

	taken = tailsTaken.Load()
	nested := bytes.Replace(good, []byte("\n  \"settings\": {"), []byte("\n  \"x\": {\n  \"expense\": 1},\n  \"settings\": {"), 1)
	grantsAfter := append(bytes.TrimRight(good, "\n}"), []byte(",\n  \"grants\": []\n}\n")...)
	for name, data := range map[string][]byte{"nested": nested, "grants after": grantsAfter} {
		p, err := readBoth(t, data)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if name == "grants after" && len(p.Grants) != 3 {
			t.Errorf("%s: %d grants", name, len(p.Grants))
		}
	}
	if !strings.Contains(string(nested), "\"x\": {\n  \"expense\"") || tailsTaken.Load() != taken {
		t.Errorf("a tail was taken where it does not start the expense member of the top level")
	}
}
