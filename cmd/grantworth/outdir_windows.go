package main

import (
	"os"

	"golang.org/x/sys/windows"
)

// flock takes an exclusive lock on f without waiting: errBusy if another
// process holds it.
func flock(f *os.File) error {
	var ol windows.Overlapped
	err := windows.LockFileEx(windows.Handle(f.Fd()), windows.LOCKFILE_EXCLUSIVE_LOCK|windows.LOCKFILE_FAIL_IMMEDIATELY, 0, 1, 0, &ol)
	if err == windows.ERROR_LOCK_VIOLATION {
		return errBusy
	}
	return err
}

func writable(dir string) error { return nil }

func sameDevice(a, b string) bool { return true }

func dieBy(sig os.Signal) { os.Exit(exitFailure) }

func signalName(sig os.Signal) string { return "interrupted" }
