package main

import (
	"syscall"
	"testing"
)

// mountReadOnly mounts an empty read-only file system on dir (as root),
// or skips the test, and returns the unmount.
func mountReadOnly(t *testing.T, dir string) func() {
	t.Helper()
	if err := syscall.Mount("tmpfs", dir, "tmpfs", syscall.MS_RDONLY, "size=64k"); err != nil {
		t.Skipf("running as root and cannot mount a read-only file system: %v", err)
	}
	return func() { syscall.Unmount(dir, 0) }
}
