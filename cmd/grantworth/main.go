// Command grantworth values employee stock options, warrants and RSUs and
// writes the memo, workbook and JSON a finance team files at quarter close.
//
// Exit codes: 0 success, 1 runtime failure, 2 bad input or usage.
package main

import "os"

func main() {
	os.Exit(run(os.Args[1:], systemIO()))
}
