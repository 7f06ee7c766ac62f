package grants

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// corpusCase is one malformed schedule of testdata/malformed (written by
// testdata/gencorpus) and the problem lines it must give.
type corpusCase struct {
	name, path string
	want       []string
}

func loadCorpus(t *testing.T, root string) []corpusCase {
	t.Helper()
	ents, err := os.ReadDir(root)
	if err != nil {
		t.Fatal(err)
	}
	var cs []corpusCase
	for _, e := range ents {
		dir := filepath.Join(root, e.Name())
		want, err := os.ReadFile(filepath.Join(dir, "want.txt"))
		if err != nil {
			t.Fatal(err)
		}
		files, _ := os.ReadDir(dir)
		path := ""
		for _, f := range files {
			if f.Name() != "want.txt" {
				path = filepath.Join(dir, f.Name())
			}
		}
		cs = append(cs, corpusCase{name: e.Name(), path: path, want: strings.Split(strings.TrimSpace(string(want)), "\n")})
	}
	return cs
}

// CorpusLines reads path and returns its error lines as check prints them.
func corpusLines(path string) (errs []string, fatal bool) {
	_, rep, err := ReadFile(path)
	if err != nil {
		return []string{err.Error()}, true
	}
	for _, e := range rep.Errors {
		errs = append(errs, e.Error())
	}
	return errs, false
}

func TestMalformedCorpus(t *testing.T) {
	cs := loadCorpus(t, filepath.Join("testdata", "malformed"))
	if len(cs) < 30 {
		t.Fatalf("only %d malformed cases; want at least 30", len(cs))
	}
	for _, c := range cs {
		t.Run(c.name, func(t *testing.T) {
			got, _ := corpusLines(c.path)
			if len(got) == 0 {
				t.Fatalf("%s reads with no error", c.path)
			}
			for _, w := range c.want {
				found := false
				for _, g := range got {
					if strings.HasPrefix(g, w) {
						found = true
					}
				}
				if !found {
					t.Errorf("%s: no error line starts with\n  %s\ngot:\n  %s", c.path, w, strings.Join(got, "\n  "))
				}
			}
		})
	}
}

// The schedule every malformed case starts from reads with no problem, so
// each case's errors come from what it breaks.
func TestCorpusBaseIsValid(t *testing.T) {
	_, rep, err := ReadFile(filepath.Join("testdata", "valid", "schedule"))
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Errors)+len(rep.Warnings) != 0 {
		t.Fatalf("base problems:\n%s", problems(rep))
	}
}
