//go:build unix

package main

import (
	"bytes"
	"os"
	"os/exec"
	"strings"
	"testing"
)

// The supervising parent maps the child's status: a crash (the runtime's
// exit 2) becomes 1 with a message, the child's bad-input status 2, a
// kill 1 with a message.
func TestSupervisorExitCodes(t *testing.T) {
	child := func(mode string) *exec.Cmd {
		c := exec.Command(os.Args[0])
		c.Env = append(os.Environ(), testMainEnv+"="+mode, supervisedEnv+"=1")
		return c
	}
	var errb bytes.Buffer
	c := child("crash")
	c.Stderr = &errb
	code, ok := superviseCmd(c)
	if !ok || code != exitFailure || !strings.Contains(errb.String(), "panic: a crash") || !strings.Contains(errb.String(), "grantworth: the run crashed (exit status 2") {
		t.Errorf("crash: exit %d (started %v), stderr %q; want 1 with the panic and a message", code, ok, errb.String())
	}
	errb.Reset()
	c = child("exit")
	c.Stderr = &errb
	if code, _ := superviseCmd(c); code != exitInput || errb.Len() != 0 {
		t.Errorf("bad input: exit %d, stderr %q; want 2 and nothing added", code, errb.String())
	}
	// A real out-of-memory crash of the child under an address-space limit
	// set on it alone (util-linux prlimit), the parent unaffected: the
	// runtime's "fatal error: out of memory", or a thread it cannot make,
	// both exit 2.
	if prl, err := exec.LookPath("prlimit"); err == nil {
		errb.Reset()
		c = exec.Command(prl, "--as=800000000", os.Args[0], "value", sampleXLSX, "--out", t.TempDir()+"/out")
		c.Env = append(os.Environ(), testMainEnv+"=1", supervisedEnv+"=1")
		c.Stderr = &errb
		if code, _ := superviseCmd(c); code != exitFailure || !strings.Contains(errb.String(), "the run crashed (exit status 2: out of memory") {
			t.Errorf("out of memory: exit %d, stderr ends %q; want 1 and a message", code, tail(errb.String(), 300))
		}
	}
	errb.Reset()
	c = exec.Command("sh", "-c", "kill -KILL $$")
	c.Stderr = &errb
	if code, _ := superviseCmd(c); code != exitFailure || !strings.Contains(errb.String(), "ended by signal 9 (killed)") {
		t.Errorf("killed: exit %d, stderr %q; want 1 and a message", code, errb.String())
	}
}

func tail(s string, n int) string {
	if len(s) > n {
		return s[len(s)-n:]
	}
	return s
}
