//go:build unix

package main

import (
	"errors"
	"fmt"
	"os"
	"os/exec"
	"os/signal"
	"runtime"
	"syscall"
)

// supervise runs the command in a child process and returns the tool's
// exit status, or ok false when this process should run the command itself
// (it is the child, or no child could be started).
func supervise(args []string) (code int, ok bool) {
	if os.Getenv(supervisedEnv) != "" {
		return 0, false
	}
	exe, err := os.Executable()
	if err != nil {
		return 0, false
	}
	cmd := exec.Command(exe, args...)
	cmd.Args[0] = os.Args[0]
	cmd.Env = append(os.Environ(), supervisedEnv+"=1")
	cmd.Stdin, cmd.Stdout, cmd.Stderr = os.Stdin, os.Stdout, os.Stderr
	return superviseCmd(cmd)
}

// superviseCmd runs cmd as the child and returns the tool's exit status;
// ok is false if it could not be started.
func superviseCmd(cmd *exec.Cmd) (code int, ok bool) {
	// Signals are caught before the child starts, so none is lost.
	sigs := make(chan os.Signal, 4)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM, syscall.SIGHUP)
	defer signal.Stop(sigs)
	cmd.SysProcAttr = childAttr()
	// The parent-death signal goes with the thread that started the
	// child: keep this goroutine on it.
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	if err := cmd.Start(); err != nil {
		return 0, false
	}
	waited := make(chan error, 1)
	go func() { waited <- cmd.Wait() }()
	for {
		select {
		case sig := <-sigs:
			cmd.Process.Signal(sig)
		case err := <-waited:
			var ee *exec.ExitError
			if err != nil && !errors.As(err, &ee) {
				fmt.Fprintf(cmd.Stderr, "grantworth: %v\n", err)
				return exitFailure, true
			}
			ws, _ := cmd.ProcessState.Sys().(syscall.WaitStatus)
			if ws.Signaled() {
				switch sig := ws.Signal(); sig {
				case syscall.SIGINT, syscall.SIGTERM, syscall.SIGHUP, syscall.SIGPIPE:
					signal.Stop(sigs)
					dieBy(sig)
				default:
					fmt.Fprintf(cmd.Stderr, "grantworth: the run ended by signal %d (%v): out of memory, or another program stopped it; no half-written output was left\n", int(sig), sig)
				}
				return exitFailure, true
			}
			// A child that found its interrupt ignored exits 128+n instead.
			switch c := cmd.ProcessState.ExitCode(); c {
			case 128 + int(syscall.SIGINT), 128 + int(syscall.SIGTERM), 128 + int(syscall.SIGHUP):
				dieBy(syscall.Signal(c - 128))
			}
			return parentCode(cmd.ProcessState.ExitCode(), cmd.Stderr), true
		}
	}
}
