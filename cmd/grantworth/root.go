package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"

	"github.com/spf13/cobra"
	"golang.org/x/term"
)

// version is the tool version written into every report. Release builds set
// it with -ldflags "-X main.version=...".
var version = "0.1.0"

// IO is where a command reads and writes; tests pass buffers.
type IO struct {
	In            io.Reader
	Out           io.Writer // results
	Err           io.Writer // errors, warnings and progress
	ErrIsTerminal bool      // show progress bars on Err
	OutIsTerminal bool

	progress io.Writer // the raw Err for progress bars (Err escapes control characters); nil: Err
}

func systemIO() *IO {
	return &IO{
		In:            os.Stdin,
		Out:           os.Stdout,
		Err:           os.Stderr,
		OutIsTerminal: term.IsTerminal(int(os.Stdout.Fd())),
		ErrIsTerminal: term.IsTerminal(int(os.Stderr.Fd())),
	}
}

// Exit codes, documented in the README for people who script the tool.
const (
	exitOK      = 0
	exitFailure = 1 // runtime failure
	exitInput   = 2 // bad input or usage
)

// inputError marks an error as the user's input being at fault: exit 2, and
// the message printed as it is.
type inputError struct{ err error }

func (e inputError) Error() string { return e.err.Error() }
func (e inputError) Unwrap() error { return e.err }

// badInput returns an error that exits 2.
func badInput(format string, args ...any) error {
	return inputError{fmt.Errorf(format, args...)}
}

// asInput marks err (if not nil) as bad input.
func asInput(err error) error {
	if err == nil {
		return nil
	}
	return inputError{err}
}

// crashError is a panic caught and turned into an error: exit 1, printed
// with its stack for a bug report.
type crashError struct {
	value any
	stack []byte
}

func (e *crashError) Error() string {
	return fmt.Sprintf("internal error: %v\n%s\nPlease report this with the message above.", e.value, e.stack)
}

// silentExit exits with a code after the command has already printed what
// the user needs (for example every problem found by check).
type silentExit struct{ code int }

func (e silentExit) Error() string { return fmt.Sprintf("exit %d", e.code) }

// verbs holds the constructors of the subcommands; each verb's file adds
// its own in an init function.
var verbs []func(*IO) *cobra.Command

func newRootCmd(ios *IO) *cobra.Command {
	root := &cobra.Command{
		Use:   "grantworth",
		Short: "Value stock options, warrants and RSUs and write the quarter-close reports",
		Long: `grantworth values employee stock options, warrants and RSUs from a grant
schedule workbook: a fair value per vesting tranche on a Cox-Ross-Rubinstein
lattice with vesting, an exercise multiple and post-vesting exits, cross-checked
against closed forms and Monte Carlo, the expense for the period, and a memo,
a workbook and a JSON file for the auditor.

The figures are estimates, not an audit opinion: defer to licensed auditors or
valuation professionals and the accounting rules that apply to you (ASC 718,
IFRS 2 or local rules).`,
		Version:       version,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetIn(ios.In)
	root.SetOut(ios.Out)
	root.SetErr(ios.Err)
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return asInput(err) })
	for _, v := range verbs {
		root.AddCommand(v(ios))
	}
	return root
}

// run executes argv and maps the outcome to an exit code by the error's
// type: an inputError, or an error cobra returns before the command runs
// (an unknown command or flag, a wrong number of arguments), is bad input
// (2); a silentExit carries its code; anything else, a panic included, is
// a runtime failure (1). Errors are printed here and only here, and all
// output goes through a safeWriter.
func run(args []string, ios *IO) (code int) {
	safe := *ios
	safe.Out, safe.Err = newSafeWriter(ios.Out), newSafeWriter(ios.Err)
	if safe.progress == nil {
		safe.progress = ios.Err
	}
	ios = &safe
	defer func() {
		if r := recover(); r != nil {
			fmt.Fprintf(ios.Err, "grantworth: %v\n", &crashError{value: r, stack: debug.Stack()})
			code = exitFailure
		}
	}()
	root := newRootCmd(ios)
	started := false // the command's own code ran
	var mark func(*cobra.Command)
	mark = func(c *cobra.Command) {
		if f := c.RunE; f != nil {
			c.RunE = func(cmd *cobra.Command, args []string) error {
				started = true
				return f(cmd, args)
			}
		}
		for _, sub := range c.Commands() {
			mark(sub)
		}
	}
	mark(root)
	root.SetArgs(args)
	err := root.Execute()
	var se silentExit
	var ie inputError
	switch {
	case err == nil:
		return exitOK
	case errors.As(err, &se):
		return se.code
	case errors.As(err, &ie), !started:
		fmt.Fprintf(ios.Err, "grantworth: %v\n", err)
		return exitInput
	default:
		fmt.Fprintf(ios.Err, "grantworth: %v\n", err)
		return exitFailure
	}
}
