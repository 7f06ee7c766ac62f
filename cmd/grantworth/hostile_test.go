package main

import (
	"crypto/sha256"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// The test binary runs grantworth itself when asked, so that each hostile
// input can be valued in a child process whose peak memory the kernel
// measures.
func init() {
	if os.Getenv("GRANTWORTH_TEST_AS_MAIN") == "1" {
		os.Exit(run(os.Args[1:], systemIO()))
	}
}

// maxRSSMiB is DESIGN §5's bound: an untrusted workbook is refused within
// 1 GiB.
const maxRSSMiB = 1024

// childRun runs grantworth args in a child process and returns its exit
// code, stderr, peak resident memory in MiB and CPU seconds.
func childRun(t *testing.T, args ...string) (code int, stderr string, rssMiB int64, cpu time.Duration) {
	t.Helper()
	cmd := exec.Command(os.Args[0], args...)
	cmd.Env = append(os.Environ(), "GRANTWORTH_TEST_AS_MAIN=1")
	var errb strings.Builder
	cmd.Stderr = &errb
	cmd.Stdout = io.Discard
	err := cmd.Run()
	if err != nil {
		if _, ok := err.(*exec.ExitError); !ok {
			t.Fatal(err)
		}
	}
	ps := cmd.ProcessState
	ru := ps.SysUsage().(*syscall.Rusage)
	return ps.ExitCode(), errb.String(), ru.Maxrss / 1024, ps.UserTime() + ps.SystemTime()
}

// fingerprint identifies a file or a folder's files by name, size, time
// and (below 64 MiB) content, to show an input unchanged.
func fingerprint(t *testing.T, path string) string {
	t.Helper()
	var b strings.Builder
	err := filepath.WalkDir(path, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		info, err := os.Lstat(p)
		if err != nil {
			return err
		}
		fmt.Fprintf(&b, "%s %v %d %d", p, info.Mode(), info.Size(), info.ModTime().UnixNano())
		if info.Mode().IsRegular() && info.Size() < 64<<20 {
			data, err := os.ReadFile(p)
			if err != nil {
				return err
			}
			fmt.Fprintf(&b, " %x", sha256.Sum256(data))
		}
		b.WriteByte('\n')
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return b.String()
}

// hostileCase is one input that value must refuse.
type hostileCase struct {
	name, path string
	want       string // the start of a line of stderr
}

// hostileCases are the committed corpus of testdata/hostile and the cases
// built here: the workbook bombs and the CSV folders that hold links,
// devices and sparse files.
func hostileCases(t *testing.T) []hostileCase {
	root := filepath.Join("..", "..", "testdata", "hostile")
	ents, err := os.ReadDir(root)
	if err != nil {
		t.Fatal(err)
	}
	var cs []hostileCase
	for _, e := range ents {
		if !e.IsDir() {
			continue
		}
		dir := filepath.Join(root, e.Name())
		want, err := os.ReadFile(filepath.Join(dir, "want.txt"))
		if err != nil {
			t.Fatal(err)
		}
		path := dir
		if _, err := os.Stat(filepath.Join(dir, "schedule.xlsx")); err == nil {
			path = filepath.Join(dir, "schedule.xlsx")
		}
		cs = append(cs, hostileCase{e.Name(), path, strings.TrimSpace(string(want))})
	}
	if len(cs) < 17 {
		t.Fatalf("only %d cases in %s", len(cs), root)
	}

	tmp := t.TempDir()
	bombs := writeBombs(t, tmp)
	for name, want := range map[string]string{
		"cell-480mb":                "Grants: unzips to more than 256 MiB",
		"shared-string-480mb":       "shared-string-480mb.xlsx: unzips to more than",
		"shared-strings-28m":        "shared-strings-28m.xlsx: unzips to more than",
		"rows-1048576":              "Grants!A200002: the sheet has more than 200,000 grant rows",
		"nested-5m":                 "Grants!A2: the sheet is damaged",
		"cell-200mb":                "Grants!A2: holds more than 32,767 characters",
		"shared-string-200mb":       "shared-string-200mb.xlsx: holds a run of text longer than 32,767 characters",
		"shared-strings-14m":        "shared-strings-14m.xlsx: has more than 2,000,000 shared strings",
		"shared-text-67mb":          "shared-text-67mb.xlsx: has more than 64 MiB of shared strings",
		"blank-rows-1048576":        "Grants!A1000001: the sheet has more than 1,000,000 rows",
		"row-10m-cells":             "Grants!A2: row 2 has more than 16,384 cells",
		"cell-480mb-declared-100kb": "Grants: the sheet is damaged",
		"parts-100000":              "parts-100000.xlsx: is an archive of 65,535 or more parts",
	} {
		cs = append(cs, hostileCase{"bomb-" + name, bombs[name], want})
	}

	// CSV folders: a sheet that links to a device, a sheet that is a 3 GB
	// sparse file, a holder of a million characters, a cell of 64 MB.
	sample := filepath.Join("..", "..", "sample", "tarnwick-csv")
	folder := func(name string) string {
		dir := filepath.Join(tmp, name)
		if err := os.CopyFS(dir, os.DirFS(sample)); err != nil {
			t.Fatal(err)
		}
		return dir
	}
	dir := folder("csv-grants-link-to-dev-zero")
	os.Remove(filepath.Join(dir, "grants.csv"))
	if err := os.Symlink("/dev/zero", filepath.Join(dir, "grants.csv")); err == nil {
		cs = append(cs, hostileCase{"csv-grants-link-to-dev-zero", dir, "Grants: grants.csv is a symbolic link"})
	}
	dir = folder("csv-grants-sparse-3gb")
	if err := os.Truncate(filepath.Join(dir, "grants.csv"), 3<<30); err == nil {
		cs = append(cs, hostileCase{"csv-grants-sparse-3gb", dir, "Grants: grants.csv is 3,072 MiB, more than"})
	}
	dir = folder("csv-holder-1m")
	g, _ := os.ReadFile(filepath.Join(dir, "grants.csv"))
	lines := strings.SplitN(string(g), "\n", 3)
	head := strings.Split(lines[0], ",")
	row := strings.Split(lines[1], ",")
	for i, h := range head {
		if h == "holder" {
			row[i] = strings.Repeat("H", 1_000_000)
			lines[1] = strings.Join(row, ",")
			os.WriteFile(filepath.Join(dir, "grants.csv"), []byte(strings.Join(lines, "\n")), 0o644)
			cs = append(cs, hostileCase{"csv-holder-1m", dir, fmt.Sprintf("Grants!%c2: holds more than 32,767 characters", 'A'+i)})
		}
	}
	// One cell of 64 MB, just within the file size limit.
	dir = folder("csv-grants-cell-64mb")
	big := []byte(lines[0] + "\n\"" + strings.Repeat("A", 64<<20-len(lines[0])-10) + "\"\n")
	os.WriteFile(filepath.Join(dir, "grants.csv"), big, 0o644)
	cs = append(cs, hostileCase{"csv-grants-cell-64mb", dir, "Grants: grants.csv line 2 starts a row longer than 4 MiB"})
	return cs
}

// TestHostileInputs runs value on every hostile input in a child process:
// exit 2, a message naming the sheet or the cell, no output folder, the
// input unchanged, and the child's peak memory within 1 GiB. (The CPU time
// of each is logged, not asserted: the machine is shared.)
func TestHostileInputs(t *testing.T) {
	if testing.Short() {
		t.Skip("builds half a gigabyte of bombs")
	}
	for _, c := range hostileCases(t) {
		t.Run(c.name, func(t *testing.T) {
			before := fingerprint(t, c.path)
			out := filepath.Join(t.TempDir(), "out")
			code, stderr, rss, cpu := childRun(t, "value", c.path, "--out", out)
			t.Logf("exit %d, peak %d MiB, %.2f s CPU: %s", code, rss, cpu.Seconds(), firstLine(stderr))
			if code != exitInput {
				t.Errorf("exit %d, want 2; stderr:\n%s", code, stderr)
			}
			found := false
			for _, l := range strings.Split(stderr, "\n") {
				l = strings.TrimPrefix(l, "grantworth: ")
				found = found || strings.HasPrefix(l, c.want)
			}
			if !found {
				t.Errorf("no line of stderr starts with\n  %s\nstderr:\n%s", c.want, stderr)
			}
			if _, err := os.Lstat(out); !os.IsNotExist(err) {
				t.Errorf("the output folder was made (%v)", err)
			}
			if after := fingerprint(t, c.path); after != before {
				t.Errorf("the input changed:\n%s\n%s", before, after)
			}
			if rss > maxRSSMiB {
				t.Errorf("peak memory %d MiB, more than %d MiB", rss, maxRSSMiB)
			}
		})
	}
}

func firstLine(s string) string {
	s, _, _ = strings.Cut(s, "\n")
	if len(s) > 160 {
		s = s[:160] + "..."
	}
	return s
}
