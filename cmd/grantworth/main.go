// Command grantworth values employee stock options, warrants and RSUs and
// writes the memo, workbook and JSON a finance team files at quarter close.
//
// Exit codes: 0 success, 1 runtime failure (a crash included), 2 bad input
// or usage.
package main

import "os"

func main() {
	if code, ok := supervise(os.Args[1:]); ok {
		os.Exit(code)
	}
	code := run(os.Args[1:], systemIO())
	if os.Getenv(supervisedEnv) != "" {
		code = childCode(code)
	}
	os.Exit(code)
}
