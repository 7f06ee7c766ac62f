package grants

import (
	"flag"
	"os"
	"strings"
	"testing"
)

var updateREADME = flag.Bool("update", false, "rewrite the column list in ../README.md")

// The README's column lists are generated from the one column table, so the
// documentation cannot drift from what the reader accepts.
func TestREADMEColumnList(t *testing.T) {
	readmeBlock(t, "<!-- columns:begin", "<!-- columns:end -->", ColumnsMarkdown())
	readmeBlock(t, "<!-- design-columns:begin", "<!-- design-columns:end -->", DesignColumnsMarkdown())
}

// readmeBlock checks (or with -update rewrites) the README's lines between
// the begin and end markers against md.
func readmeBlock(t *testing.T, begin, end, md string) {
	t.Helper()
	const path = "../README.md"
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	s := string(raw)
	i := strings.Index(s, begin)
	j := strings.Index(s, end)
	if i < 0 || j < i {
		t.Fatalf("%s has no %q ... %q block", path, begin, end)
	}
	i += strings.Index(s[i:], "\n") + 1 // keep the marker line
	want := "\n" + md
	if !strings.HasSuffix(want, "\n\n") {
		want = strings.TrimRight(want, "\n") + "\n\n"
	}
	if s[i:j] == want {
		return
	}
	if *updateREADME {
		if err := os.WriteFile(path, []byte(s[:i]+want+s[j:]), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	t.Errorf("the column list %s in %s is out of date: run go test ./grants -run TestREADMEColumnList -update", begin, path)
}
