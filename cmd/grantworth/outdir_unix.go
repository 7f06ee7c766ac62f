//go:build unix

package main

import (
	"errors"
	"os"
	"os/signal"
	"syscall"
	"time"

	"golang.org/x/sys/unix"
)

// flock takes an exclusive lock on f without waiting: errBusy if another
// process holds it. The lock goes with the process, however it ends.
func flock(f *os.File) error {
	err := unix.Flock(int(f.Fd()), unix.LOCK_EX|unix.LOCK_NB)
	if errors.Is(err, unix.EWOULDBLOCK) {
		return errBusy
	}
	return err
}

// writable reports why dir cannot be written (a read-only folder or file
// system), or nil.
func writable(dir string) error {
	if err := unix.Access(dir, unix.W_OK|unix.X_OK); err != nil {
		return &os.PathError{Op: "access", Path: dir, Err: err}
	}
	return nil
}

// sameDevice reports whether a and b are on one file system, so that a
// rename between them works.
func sameDevice(a, b string) bool {
	var sa, sb unix.Stat_t
	if unix.Stat(a, &sa) != nil || unix.Stat(b, &sb) != nil {
		return false
	}
	return sa.Dev == sb.Dev
}

// dieBy ends the process by sig with its default action, so that the
// shell that started it sees the signal (a script's loop stops on ^C). If
// the signal was ignored when the process started (a background job of a
// script ignores SIGINT), it exits with 128 plus the signal's number, as a
// shell reports a process ended by a signal.
func dieBy(sig os.Signal) {
	s, ok := sig.(syscall.Signal)
	if !ok {
		os.Exit(exitFailure)
	}
	signal.Reset(s)
	syscall.Kill(os.Getpid(), s)
	time.Sleep(100 * time.Millisecond)
	os.Exit(128 + int(s))
}

// signalName says what a signal did, for a message.
func signalName(sig os.Signal) string {
	switch sig {
	case syscall.SIGINT:
		return "interrupted"
	case syscall.SIGTERM:
		return "terminated"
	case syscall.SIGHUP:
		return "hung up"
	}
	return sig.String()
}
