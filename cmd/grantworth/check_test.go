package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Every malformed schedule of grants/testdata/malformed makes check exit 2
// and print its expected lines, each starting with the cell reference.
func TestCheckMalformedCorpus(t *testing.T) {
	root := filepath.Join("..", "..", "grants", "testdata", "malformed")
	ents, err := os.ReadDir(root)
	if err != nil {
		t.Fatal(err)
	}
	if len(ents) < 30 {
		t.Fatalf("%d cases, want at least 30", len(ents))
	}
	for _, e := range ents {
		dir := filepath.Join(root, e.Name())
		t.Run(e.Name(), func(t *testing.T) {
			want, err := os.ReadFile(filepath.Join(dir, "want.txt"))
			if err != nil {
				t.Fatal(err)
			}
			files, _ := os.ReadDir(dir)
			var path string
			for _, f := range files {
				if f.Name() != "want.txt" {
					path = filepath.Join(dir, f.Name())
				}
			}
			code, out, errs := runArgs(t, "check", path)
			if code != exitInput {
				t.Fatalf("check %s: exit %d, want 2\n%s%s", path, code, out, errs)
			}
			lines := strings.Split(out, "\n")
			for _, w := range strings.Split(strings.TrimSpace(string(want)), "\n") {
				ok := false
				for _, l := range lines {
					ok = ok || strings.HasPrefix(l, w)
				}
				if !ok {
					t.Errorf("check %s: no line starts with\n  %s\nout:\n%s", path, w, out)
				}
			}
		})
	}
}

func TestCheckSample(t *testing.T) {
	for _, p := range []string{"tarnwick.xlsx", "tarnwick-csv"} {
		path := filepath.Join("..", "..", "sample", p)
		code, out, errs := runArgs(t, "check", path)
		if code != 0 {
			t.Fatalf("check %s: exit %d\n%s%s", p, code, out, errs)
		}
		if !strings.Contains(out, "47 grants (38 options, 2 warrants, 7 RSUs)") || !strings.HasSuffix(out, "0 errors, 5 warnings\n") {
			t.Errorf("check %s (want the 5 warnings of share valuations more than a quarter old):\n%s", p, out)
		}
		code, out, _ = runArgs(t, "check", path, "--json")
		var res checkResult
		if code != 0 || json.Unmarshal([]byte(out), &res) != nil || !res.OK || res.Summary.Grants != 47 || res.Summary.Instruments["warrant"] != 2 {
			t.Errorf("check --json %s: exit %d\n%s", p, code, out)
		}
	}
}

func TestCheckWarningsKeepCellFirst(t *testing.T) {
	if got := checkWarningLine(`Grants!F2 (strike): "1" is below`); got != `Grants!F2 (strike): warning: "1" is below` {
		t.Errorf("got %q", got)
	}
}
