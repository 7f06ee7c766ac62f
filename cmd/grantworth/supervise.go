package main

import (
	"fmt"
	"io"
)

// The Go runtime ends a process with exit status 2 when it crashes (an
// unrecovered panic in any goroutine, "fatal error: out of memory", a
// deadlock), which is the status this tool reserves for bad input. So on
// Unix the command runs in a child process (the same executable, marked by
// supervisedEnv) and main maps the child's status: 0 and 1 pass through,
// childExitInput (the child's way of saying bad input) becomes 2, and
// anything else, a crash or a kill, becomes 1 with a message. The child
// inherits the terminal, standard streams and environment; the parent
// passes SIGINT, SIGTERM and SIGHUP on, so that the child can clear its
// staging folder, and then ends by the same signal. Memory running out is
// the kernel killing the child (SIGKILL: exit 1 with a message) or the
// child's runtime failing to allocate (exit 2 from the child: 1). An
// address-space limit (ulimit -v) applies to the parent too, and a Go
// runtime needs address space to start threads: under a tight one the
// parent itself can fail with the runtime's exit 2.

// supervisedEnv marks the child process.
const supervisedEnv = "GRANTWORTH_SUPERVISED"

// childExitInput is the child's exit status for bad input (exit 2 of the
// tool); the child never uses 2 itself.
const childExitInput = 3

// childCode is the exit status the child uses for code.
func childCode(code int) int {
	if code == exitInput {
		return childExitInput
	}
	return code
}

// parentCode maps the child's exit status (not ended by a signal) to the
// tool's, and says why when the child crashed.
func parentCode(status int, errOut io.Writer) int {
	switch status {
	case exitOK, exitFailure:
		return status
	case childExitInput:
		return exitInput
	}
	fmt.Fprintf(errOut, "grantworth: the run crashed (exit status %d: out of memory, or an internal error; the message above says which). No half-written output was left. Please report an internal error with the message above.\n", status)
	return exitFailure
}
