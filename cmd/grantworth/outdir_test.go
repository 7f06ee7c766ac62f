package main

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"
)

// testMainEnv makes the test binary run main instead of the tests, so that
// tests can start grantworth as a real process (to kill it, or to run two
// at once) without building it.
const testMainEnv = "GRANTWORTH_TEST_MAIN"

var killRuns = flag.Int("kills", 4, "runs killed at random moments by TestOutputKilledAtRandomMoments")

// gwProcess is grantworth as a child process. With worker set it is the
// process that does the work (no supervising parent), so that kill -9
// hits the writer itself.
func gwProcess(t *testing.T, worker bool, tmp string, args ...string) *exec.Cmd {
	t.Helper()
	cmd := exec.Command(os.Args[0], args...)
	cmd.Env = append(os.Environ(), testMainEnv+"=1", "TMPDIR="+tmp)
	if worker {
		cmd.Env = append(cmd.Env, supervisedEnv+"=1")
	}
	return cmd
}

// oneGrantSchedule writes a small CSV schedule (the sample's market data,
// one option grant) whose company is named name: two names give two sets
// of outputs that differ in every file.
func oneGrantSchedule(t *testing.T, dir, name string) string {
	t.Helper()
	src := "../../sample/tarnwick-csv"
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"rates.csv", "share_prices.csv", "assumptions.csv"} {
		b, err := os.ReadFile(filepath.Join(src, f))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	co, err := os.ReadFile(filepath.Join(src, "company.csv"))
	if err != nil {
		t.Fatal(err)
	}
	co = bytes.Replace(co, []byte(`"Tarnwick Labs, Inc."`), []byte(`"`+name+`"`), 1)
	must(t, os.WriteFile(filepath.Join(dir, "company.csv"), co, 0o644))
	head, err := os.ReadFile(filepath.Join(src, "grants.csv"))
	if err != nil {
		t.Fatal(err)
	}
	head = head[:bytes.IndexByte(head, '\n')+1]
	row := "G1,E1,option,2025-01-10,1000,1.5,2035-01-10,,2025-01-10,48,12,1,,,,,,,\n"
	must(t, os.WriteFile(filepath.Join(dir, "grants.csv"), append(head, row...), 0o644))
	return dir
}

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// fileSet is the files of a folder by name.
type fileSet map[string][]byte

func readSet(t *testing.T, dir string) fileSet {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	must(t, err)
	s := fileSet{}
	for _, e := range ents {
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			b = []byte("(not a file: " + e.Type().String() + ")")
		}
		s[e.Name()] = b
	}
	return s
}

func (s fileSet) equal(o fileSet) bool {
	if len(s) != len(o) {
		return false
	}
	for n, b := range s {
		if ob, ok := o[n]; !ok || !bytes.Equal(b, ob) {
			return false
		}
	}
	return true
}

func (s fileSet) names() []string {
	var ns []string
	for n := range s {
		ns = append(ns, n)
	}
	slices.Sort(ns)
	return ns
}

func (s fileSet) with(name string, b []byte) fileSet {
	o := fileSet{name: b}
	for n, v := range s {
		o[n] = v
	}
	return o
}

func writeSet(t *testing.T, dir string, s fileSet) {
	t.Helper()
	must(t, os.MkdirAll(dir, 0o755))
	for n, b := range s {
		must(t, os.WriteFile(filepath.Join(dir, n), b, 0o644))
	}
}

// refRun runs grantworth to completion and returns the outputs and how
// long it took.
func refRun(t *testing.T, tmp, sched, out string) (fileSet, time.Duration) {
	t.Helper()
	start := time.Now()
	cmd := gwProcess(t, true, tmp, "value", sched, "--out", out)
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("value %s: %v\n%s", sched, err, b)
	}
	return readSet(t, out), time.Since(start)
}

// procFixture is the setting of a test that starts grantworth processes:
// a folder, the children's TMPDIR inside it (it must stay empty), and a
// one-grant schedule per company name, each valued once to completion for
// its reference outputs.
type procFixture struct {
	base, tmp string
	scheds    []string
	refs      []fileSet
	dur       time.Duration // how long the last reference run took
}

func newProcFixture(t *testing.T, companies ...string) *procFixture {
	t.Helper()
	if testing.Short() {
		t.Skip("starts grantworth processes")
	}
	f := &procFixture{base: t.TempDir()}
	f.tmp = filepath.Join(f.base, "tmp")
	must(t, os.Mkdir(f.tmp, 0o755))
	for i, c := range companies {
		s := oneGrantSchedule(t, filepath.Join(f.base, fmt.Sprintf("sched%d", i)), c)
		ref, dur := refRun(t, f.tmp, s, filepath.Join(f.base, fmt.Sprintf("ref%d", i)))
		f.scheds, f.refs, f.dur = append(f.scheds, s), append(f.refs, ref), dur
	}
	return f
}

// A run killed with SIGKILL at a random moment leaves the output folder
// with the old set of files or the new one, never a mix, and nothing a
// rerun trips on: the rerun succeeds and leaves no staging folder, lock
// file or temporary file beside the outputs, in them or in the system's
// temporary folder. Three cases: a new folder, a folder of earlier outputs
// (swapped whole), and a folder that also holds a file of the user's
// (the files moved in one by one after a commit mark).
func TestOutputKilledAtRandomMoments(t *testing.T) {
	f := newProcFixture(t, "Old Run Co", "New Run Co")
	base, tmp, schedB, dur := f.base, f.tmp, f.scheds[1], f.dur
	refA, refB := f.refs[0], f.refs[1]
	if refA.equal(refB) || len(refB) != len(outputNames) {
		t.Fatalf("reference runs: %v and %v", refA.names(), refB.names())
	}
	notes := []byte("the user's own notes\n")
	rng := rand.New(rand.NewPCG(16, 1))
	outcomes := map[string]int{}
	for i := 0; i < *killRuns; i++ {
		mode := []string{"new folder", "earlier outputs", "user's file too"}[i%3]
		parent := filepath.Join(base, fmt.Sprintf("run%02d", i))
		out := filepath.Join(parent, "out")
		must(t, os.MkdirAll(parent, 0o755))
		old, want := fileSet(nil), refB
		args := []string{"value", schedB, "--out", out}
		switch mode {
		case "earlier outputs":
			old = refA
			args = append(args, "--force")
		case "user's file too":
			old, want = refA.with("notes.txt", notes), refB.with("notes.txt", notes)
			args = append(args, "--force")
		}
		if old != nil {
			writeSet(t, out, old)
		}
		// Half the kills anywhere in the run, half near its end, when the
		// files are written and swapped in.
		f := rng.Float64() * 1.2
		if i%2 == 1 {
			f = 0.75 + rng.Float64()*0.3
		}
		delay := time.Duration(f * float64(dur))
		cmd := gwProcess(t, true, tmp, args...)
		must(t, cmd.Start())
		time.Sleep(delay)
		cmd.Process.Kill()
		cmd.Wait()
		got := readSet(t, out)
		switch {
		case got.equal(want):
			outcomes["new set"]++
		case old == nil && got == nil:
			outcomes["no folder"]++
		case old != nil && got.equal(old):
			outcomes["old set"]++
		default:
			t.Fatalf("run %d (%s) killed after %v: the folder holds %v, neither the old set nor the new", i, mode, delay, got.names())
		}
		// A rerun is not hindered, finishes, and leaves nothing else.
		if b, err := gwProcess(t, false, tmp, append(args[:4:4], "--force")...).CombinedOutput(); err != nil {
			t.Fatalf("run %d (%s): rerun after the kill: %v\n%s", i, mode, err, b)
		}
		if got := readSet(t, out); !got.equal(want) {
			t.Fatalf("run %d (%s): after the rerun the folder holds %v", i, mode, got.names())
		}
		if ents, _ := os.ReadDir(parent); len(ents) != 1 {
			t.Errorf("run %d (%s): beside the output folder after the rerun: %v", i, mode, dirNames(parent))
		}
	}
	if n := dirNames(tmp); len(n) > 0 {
		t.Errorf("temporary files left in TMPDIR: %v", n)
	}
	t.Logf("%d runs killed at random moments (a clean run took %v): %v", *killRuns, dur.Round(time.Millisecond), outcomes)
}

func dirNames(dir string) []string {
	ents, _ := os.ReadDir(dir)
	var ns []string
	for _, e := range ents {
		ns = append(ns, e.Name())
	}
	return ns
}

// Two runs at once into one folder: without --force one writes and the
// other is refused (busy, or the files exist by the time it looks); with
// --force, of two different schedules, the folder ends with one run's
// whole set. Neither leaves anything behind.
func TestOutputConcurrentRuns(t *testing.T) {
	f := newProcFixture(t, "First Co", "Second Co")
	base, tmp := f.base, f.tmp
	schedA, schedB, refA, refB := f.scheds[0], f.scheds[1], f.refs[0], f.refs[1]
	for i, force := range []bool{false, true} {
		parent := filepath.Join(base, fmt.Sprintf("pair%d", i))
		out := filepath.Join(parent, "out")
		var cmds []*exec.Cmd
		var errs []*bytes.Buffer
		for _, s := range []string{schedA, schedB} {
			args := []string{"value", s, "--out", out}
			if force {
				args = append(args, "--force")
			}
			c := gwProcess(t, false, tmp, args...)
			var eb bytes.Buffer
			c.Stderr = &eb
			must(t, c.Start())
			cmds, errs = append(cmds, c), append(errs, &eb)
		}
		codes := make([]int, 2)
		for k, c := range cmds {
			c.Wait()
			codes[k] = c.ProcessState.ExitCode()
		}
		got := readSet(t, out)
		if !got.equal(refA) && !got.equal(refB) {
			t.Fatalf("pair %d (force %v): exits %v, the folder holds %v, not one run's set", i, force, codes, got.names())
		}
		ok := 0
		for k, c := range codes {
			switch {
			case c == 0:
				ok++
			case c == exitFailure && strings.Contains(errs[k].String(), "another grantworth run is writing to"):
			case c == exitInput && !force && strings.Contains(errs[k].String(), "already exist"):
			default:
				t.Errorf("pair %d (force %v): run %d exit %d: %s", i, force, k, c, errs[k])
			}
		}
		if ok == 0 || (!force && ok != 1) {
			t.Errorf("pair %d (force %v): %d runs succeeded (exits %v)", i, force, ok, codes)
		}
		if n := dirNames(parent); len(n) != 1 {
			t.Errorf("pair %d: beside the output folder: %v", i, n)
		}
		t.Logf("pair %d (force %v): exits %v", i, force, codes)
	}
}

// The next run finishes the move of a run killed while it moved its files
// in one by one, and removes the staging folders of killed runs and the
// temporary files of earlier versions.
func TestOutputRecoversKilledRun(t *testing.T) {
	parent := t.TempDir()
	out := filepath.Join(parent, "out")
	names := []string{"memo.pdf", "valuation.xlsx", "valuation.json"}
	writeSet(t, out, fileSet{"memo.pdf": []byte("new memo"), "valuation.xlsx": []byte("old book"), "valuation.json": []byte("old json"), "notes.txt": []byte("mine")})
	// Killed after moving memo.pdf in: the rest waits in the staging folder.
	stage := filepath.Join(out, stageInfix+"aaaa")
	writeSet(t, stage, fileSet{"valuation.xlsx": []byte("new book"), "valuation.json": []byte("new json"),
		manifestName: []byte(strings.Join(names, "\n") + "\n"), commitName: nil})
	// Killed before its commit, beside and inside; and an old version's temporary file.
	writeSet(t, filepath.Join(parent, ".out"+stageInfix+"bbbb"), fileSet{"memo.pdf": []byte("never shown"), manifestName: []byte("memo.pdf\n")})
	writeSet(t, filepath.Join(out, stageInfix+"cccc"), fileSet{"memo.pdf": []byte("never shown"), manifestName: []byte("memo.pdf\n")})
	must(t, os.WriteFile(filepath.Join(out, ".valuation.json.tmp-123"), []byte("partial"), 0o600))
	o, err := openOutput(out, names, false, &IO{Err: io.Discard})
	if err == nil {
		o.close()
		t.Fatal("openOutput without force over existing outputs succeeded")
	}
	want := fileSet{"memo.pdf": []byte("new memo"), "valuation.xlsx": []byte("new book"), "valuation.json": []byte("new json"), "notes.txt": []byte("mine")}
	if got := readSet(t, out); !got.equal(want) {
		t.Errorf("after recovery the folder holds %v", got.names())
		for n, b := range got {
			t.Logf("  %s: %q", n, b)
		}
	}
	if n := dirNames(parent); len(n) != 1 {
		t.Errorf("beside the output folder: %v", n)
	}
}

// A read-only output folder is refused before the valuation starts (the
// progress bar never appears), with exit 1 and the folder named; nothing
// is left beside it.
func TestOutputReadOnlyFolder(t *testing.T) {
	parent := t.TempDir()
	out := filepath.Join(parent, "out")
	must(t, os.Mkdir(out, 0o755))
	if os.Geteuid() == 0 {
		// Root writes through permissions: use a read-only file system.
		defer mountReadOnly(t, out)()
	} else {
		must(t, os.Chmod(out, 0o555))
		defer os.Chmod(out, 0o755)
	}
	sched := oneGrantSchedule(t, filepath.Join(t.TempDir(), "s"), "Read Only Co")
	var stdout, stderr bytes.Buffer
	code := run([]string{"value", sched, "--out", out}, &IO{In: strings.NewReader(""), Out: &stdout, Err: &stderr, ErrIsTerminal: true})
	if code != exitFailure || !strings.Contains(stderr.String(), "cannot write to the output folder "+out) {
		t.Errorf("exit %d, stderr %q; want exit 1 naming the folder", code, stderr.String())
	}
	if strings.Contains(stderr.String(), "valuing grants") {
		t.Error("the valuation ran before the folder was found read-only")
	}
	if n := dirNames(parent); len(n) != 1 {
		t.Errorf("beside the output folder: %v", n)
	}
}

// A failed run into a folder it had to create leaves no folder, nor the
// parents it created.
func TestOutputFailedRunLeavesNoFolder(t *testing.T) {
	parent := t.TempDir()
	out := filepath.Join(parent, "a", "b", "out")
	files := []outFile{{"memo.pdf", func(w io.Writer) error { return errors.New("renderer failed") }}}
	if err := writeOutputs(out, files, false, &IO{Err: io.Discard}); err == nil {
		t.Fatal("a failing renderer succeeded")
	}
	if n := dirNames(parent); len(n) != 0 {
		t.Errorf("after the failure the parent holds %v", n)
	}
}

// SIGINT and SIGTERM during a run remove the staging folder, report it,
// and end the process by the signal; the supervising parent ends by it
// too.
func TestOutputInterrupted(t *testing.T) {
	f := newProcFixture(t, "Interrupted Co")
	base, tmp, sched, dur := f.base, f.tmp, f.scheds[0], f.dur
	for i, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
		parent := filepath.Join(base, fmt.Sprintf("run%d", i))
		out := filepath.Join(parent, "out")
		must(t, os.Mkdir(parent, 0o755))
		cmd := gwProcess(t, false, tmp, "value", sched, "--out", out)
		var eb bytes.Buffer
		cmd.Stderr = &eb
		must(t, cmd.Start())
		// Wait for the staging folder: the run is past its checks.
		deadline := time.Now().Add(10 * dur)
		for len(dirNames(parent)) < 2 && time.Now().Before(deadline) {
			time.Sleep(5 * time.Millisecond)
		}
		cmd.Process.Signal(sig)
		cmd.Wait()
		ws := cmd.ProcessState.Sys().(syscall.WaitStatus)
		if !(ws.Signaled() && ws.Signal() == sig) && ws.ExitStatus() != 128+int(sig) {
			t.Errorf("%v: the process ended with %v, not by the signal", sig, cmd.ProcessState)
		}
		if n := dirNames(parent); len(n) != 0 && !(len(n) == 1 && n[0] == "out") {
			t.Errorf("%v: left %v", sig, n)
		}
		if !strings.Contains(eb.String(), "nothing was written") && !strings.Contains(eb.String(), "already written") {
			t.Errorf("%v: stderr %q", sig, eb.String())
		}
	}
	if n := dirNames(tmp); len(n) > 0 {
		t.Errorf("temporary files left in TMPDIR: %v", n)
	}
}
