package main

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/spf13/cobra"
)

// Exit codes come from the error's type, never its text: cobra's own
// errors before a command runs are usage (2), an inputError is 2, any other
// error 1 even if its text looks like a usage error, and a panic 1 with
// its stack.
func TestExitCodesByType(t *testing.T) {
	saved := verbs
	defer func() { verbs = saved }()
	verbs = append(append([]func(*IO) *cobra.Command(nil), saved...),
		func(*IO) *cobra.Command {
			return &cobra.Command{Use: "fail-text", RunE: func(*cobra.Command, []string) error {
				return errors.New(`unknown command "x": accepts 1 arg, invalid argument`)
			}}
		},
		func(*IO) *cobra.Command {
			return &cobra.Command{Use: "fail-input", RunE: func(*cobra.Command, []string) error {
				return badInput("a bad value")
			}}
		},
		func(*IO) *cobra.Command {
			return &cobra.Command{Use: "crash", RunE: func(*cobra.Command, []string) error {
				var m map[string]int
				m["x"] = 1 // panics: assignment to entry in nil map
				return nil
			}}
		})
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"no-such-verb"}, exitInput, "unknown command"},
		{[]string{"value"}, exitInput, "accepts 1 arg"},
		{[]string{"check", "a", "b"}, exitInput, "accepts 1 arg"},
		{[]string{"value", "x", "--no-such-flag"}, exitInput, "unknown flag"},
		{[]string{"price", "--spot"}, exitInput, "flag needs an argument"},
		{[]string{"fail-input"}, exitInput, "a bad value"},
		{[]string{"fail-text"}, exitFailure, "unknown command"},
		{[]string{"crash"}, exitFailure, "internal error: assignment to entry in nil map"},
	} {
		code, _, errs := runArgs(t, c.args...)
		if code != c.code || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stderr %q; want %d with %q", c.args, code, errs, c.code, c.want)
		}
	}
}

// Text from the input reaches the terminal escaped: a company name holding
// an escape sequence, a carriage return and a right-to-left override prints
// as \u001b, \u000d and \u202e, on stdout (the summary) and stderr (an error
// naming a grant). (A NUL byte is refused by the CSV reader before this;
// TestSafeWriter covers it.)
func TestInputTextPrintedSafely(t *testing.T) {
	dir := t.TempDir()
	name := "Evil\x1b[2J\x1b]0;pwned\x07 Co\rX\u202eoc"
	sched := oneGrantSchedule(t, filepath.Join(dir, "s"), strings.ReplaceAll(name, `"`, `""`))
	code, out, errs := runArgs(t, "value", sched, "--out", filepath.Join(dir, "out"))
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, s := range []string{out, errs} {
		for _, bad := range []string{"\x1b", "\r", "\x00", "\x07", "\u202e"} {
			if strings.Contains(s, bad) {
				t.Errorf("output holds %q raw:\n%s", bad, s)
			}
		}
	}
	if want := `Evil\u001b[2J\u001b]0;pwned\u0007 Co\u000dX\u202eoc, valuation date`; !strings.Contains(out, want) {
		t.Errorf("summary does not start with the escaped name %q:\n%s", want, out)
	}
	// A grant id with escapes, in an error message on stderr.
	g := filepath.Join(sched, "grants.csv")
	b, err := os.ReadFile(g)
	must(t, err)
	must(t, os.WriteFile(g, []byte(strings.Replace(string(b), "G1,E1,option,2025-01-10,1000,1.5", "G\x1b[31m1,E1,option,2025-01-10,-5,1.5", 1)), 0o644))
	code, _, errs = runArgs(t, "check", sched)
	if code != exitInput || strings.Contains(errs, "\x1b") {
		t.Errorf("check: exit %d, stderr %q", code, errs)
	}
}

// The escaping writer keeps JSON valid and meaning the same, passes
// ordinary text (accents, CJK, emoji) through, and joins a character cut
// between two writes.
func TestSafeWriter(t *testing.T) {
	var b strings.Builder
	w := newSafeWriter(&b)
	w.Write([]byte("a\x7fb\u0085c\x00 é 中 🚀\t\n"))
	r := []byte("€")
	w.Write(r[:1])
	w.Write(r[1:])
	w.Write([]byte{0xff, '\n'})
	if got, want := b.String(), "a\\u007fb\\u0085c\\u0000 é 中 🚀\t\n€\\xff\n"; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
}
