//go:build !linux

package main

import "testing"

// mountReadOnly skips: only Linux tests mount a read-only file system.
func mountReadOnly(t *testing.T, dir string) func() {
	t.Skip("running as root: a read-only folder needs a read-only mount, tested on Linux")
	return func() {}
}
