package main

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"
	"unicode/utf8"

	"github.com/spf13/cobra"

	"grantworth/grants"
	"grantworth/grants/design"
	"grantworth/report"
	"grantworth/valuation"
)

func init() {
	verbs = append(verbs, func(ios *IO) *cobra.Command { return newCompareCmd(ios, nil) })
}

// Files compare writes with --out.
var compareOutputs = []string{"comparison.pdf", "comparison.xlsx"}

// The outcome simulation of every comparison: paths per design and the
// first design's seed (the next designs take the next seeds).
const (
	comparePaths = valuation.DefaultOutcomePaths
	compareSeed  = 1
)

// compareOptions are the parsed arguments of `grantworth compare`.
type compareOptions struct {
	IO    *IO
	Path  string
	Out   string // "" writes no files
	JSON  bool
	Force bool
}

func newCompareCmd(ios *IO, runF func(*compareOptions) error) *cobra.Command {
	opts := &compareOptions{IO: ios}
	cmd := &cobra.Command{
		Use:   "compare DESIGNS",
		Short: "Compare grant designs side by side before the grant is made",
		Long: `compare reads a grant designs workbook (an .xlsx file or a folder of CSV files:
the schedule's Company, Assumptions, Share Prices and Rates sheets and a Designs
sheet of one row per design; grantworth init --designs writes one to fill in)
and values every design as the grant it describes, on the Company's
grant_date (else its valuation_date), the way value values a schedule's
grants. It prints a table with the designs as columns:

  cost to the company  fair value per share and in total with its error
                       estimate, the expected cost if unvested holders leave
                       at the forfeiture rate (never a fair value), the
                       expected term beside Black-Scholes-Merton on the
                       simplified-method term, and the total with
                       volatility 10 points lower and higher;
  value to the holder  the chance a share ends in the money, the break-even
                       share price and the 10th, 50th and 90th percentiles of
                       the payoff in today's money (risk-neutral: how the
                       award is priced, not a forecast).

With --json it prints one JSON object instead; with --out DIR it also writes
comparison.pdf (the table, expense by fiscal year, value against the share
price at expiry and the spread of payoffs for every design, how and when the
awards end, the checks and the caution) and comparison.xlsx (the same numbers
and every tranche). Any error in the workbook is printed with its cell and
nothing is written (exit 2). An existing output is never replaced without
--force; the files are written together or not at all.

The figures are estimates, not an audit opinion: defer to licensed auditors or
valuation professionals and the accounting rules that apply to you (ASC 718,
IFRS 2 or local rules).`,
		Example: `  grantworth compare sample/designs.xlsx
  grantworth compare sample/designs.xlsx --out out/designs
  grantworth compare designs-csv --json | jq '.designs[] | {design, fair_value_total}'
  grantworth init --designs plans && grantworth compare plans/grant-designs.xlsx`,
		Args: cobra.ExactArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			opts.Path = args[0]
			if runF != nil {
				return runF(opts)
			}
			return runCompare(opts)
		},
	}
	cmd.Flags().StringVar(&opts.Out, "out", "", "also write comparison.pdf and comparison.xlsx into this folder (created if missing)")
	cmd.Flags().BoolVar(&opts.JSON, "json", false, "print one JSON object instead of the table")
	cmd.Flags().BoolVar(&opts.Force, "force", false, "replace existing output files")
	return cmd
}

func runCompare(o *compareOptions) error {
	// Refuse early, before any work, when an output is in the way (and
	// again under the folder's lock, below).
	if o.Out != "" {
		if err := checkExisting(o.Out, o.Out, compareOutputs, o.Force); err != nil {
			return err
		}
	}
	s, rep, err := grants.ReadDesigns(o.Path)
	if err != nil {
		return readError(o.Path, err)
	}
	if !rep.OK() {
		return printProblems(o.IO.Err, rep, nil)
	}
	sum, err := grants.HashInput(o.Path)
	if err != nil {
		var ce *grants.CellError
		if errors.As(err, &ce) {
			return asInput(err) // the input changed since it was read
		}
		return err
	}
	var out *outputSet
	if o.Out != "" {
		// Lock and check the output folder before the work.
		if out, err = openOutput(o.Out, compareOutputs, o.Force, o.IO); err != nil {
			return err
		}
		defer out.close()
	}
	sim := valuation.OutcomeOptions{Paths: comparePaths, StepsPerYear: valuation.DefaultOutcomeStepsPerYear, Seed: compareSeed}
	steps := s.Assumptions.At(s.DesignDate()).Steps
	bar := newProgress(o.IO, "valuing designs")
	c, err := design.Compare(s, design.Options{
		Lattice:  valuation.LatticeOptions{Steps: steps},
		Outcomes: sim,
		Progress: bar.update,
	})
	bar.finish()
	if err != nil {
		var ce *grants.CellError
		if errors.As(err, &ce) {
			return asInput(err)
		}
		return err
	}
	m := report.BuildComparison(c, report.Run{
		Tool:     report.Tool{Name: "grantworth", Version: version},
		Input:    report.Input{Path: filepath.ToSlash(o.Path), SHA256: sum},
		Warnings: append(warningTexts(rep), report.MemoTextWarnings(s, o.Path)...),
	}, steps, sim)
	m.Warnings = uniqueWarnings(m.Warnings)
	printWarnings(o.IO.Err, m.Warnings)
	if out != nil {
		if err := out.write([]outFile{
			{compareOutputs[0], func(w io.Writer) error { return report.WriteComparePDF(w, m) }},
			{compareOutputs[1], func(w io.Writer) error {
				return report.WriteCompareWorkbookWith(w, m, report.WorkbookOptions{TempDir: out.tempDir()})
			}},
		}); err != nil {
			return err
		}
	}
	if o.JSON {
		return report.WriteCompareJSON(o.IO.Out, m)
	}
	printComparison(o.IO.Out, m, o.Out)
	return nil
}

// Widths of the comparison on screen, in characters.
const (
	compareLabelWidth  = 34
	compareColumnWidth = 13
)

// printComparison prints the comparison table with the designs as columns,
// long labels and cells wrapped, then the files written and the caution.
func printComparison(w io.Writer, m *report.CompareModel, dir string) {
	fmt.Fprintf(w, "%s: %d grant %s on %s, share price %s (amounts in %s)\n\n", m.Company, len(m.Designs), checkPlural(len(m.Designs), "design"), m.GrantDate, money2(m.SharePrice), m.Currency)
	head := []string{""}
	for _, d := range m.Designs {
		head = append(head, d.Design)
	}
	printRow(w, head)
	for _, r := range report.CompareTable(m) {
		if strings.HasPrefix(r[0], "\x00") {
			fmt.Fprintln(w, strings.TrimPrefix(r[0], "\x00"))
			continue
		}
		r[0] = "  " + r[0]
		printRow(w, r)
	}
	fmt.Fprintln(w)
	if n := len(m.Warnings); n > 0 {
		fmt.Fprintf(w, "%d %s (printed on stderr, and listed in the PDF, the workbook and the JSON)\n", n, checkPlural(n, "warning"))
	}
	if dir != "" {
		for _, n := range compareOutputs {
			fmt.Fprintf(w, "wrote %s\n", filepath.Join(dir, n))
		}
	}
	fmt.Fprintln(w, "Estimates, not an audit opinion: defer to licensed auditors or valuation professionals and the accounting rules that apply (ASC 718, IFRS 2 or local rules).")
}

// printRow prints one row: the label left-aligned, the cells right-aligned,
// each wrapped to its width on as many lines as it needs.
func printRow(w io.Writer, cells []string) {
	cols := make([][]string, len(cells))
	lines := 1
	for i, c := range cells {
		width := compareColumnWidth
		if i == 0 {
			width = compareLabelWidth
		}
		cols[i] = wrapText(c, width)
		lines = max(lines, len(cols[i]))
	}
	for k := range lines {
		var b strings.Builder
		for i, col := range cols {
			s := ""
			if k < len(col) {
				s = col[k]
			}
			pad := strings.Repeat(" ", max(0, compareColumnWidth-utf8.RuneCountInString(s)))
			if i == 0 {
				// Continuation lines of a label keep its indent.
				if k > 0 && strings.HasPrefix(cells[0], "  ") {
					s = "  " + s
				}
				b.WriteString(s + strings.Repeat(" ", max(0, compareLabelWidth-utf8.RuneCountInString(s))))
				continue
			}
			b.WriteString(" " + pad + s)
		}
		fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
	}
}

// wrapText breaks s at spaces into lines of at most width characters (a
// longer word stands alone on its line).
func wrapText(s string, width int) []string {
	var lines []string
	line := ""
	for _, word := range strings.Fields(s) {
		switch {
		case line == "":
			line = word
		case utf8.RuneCountInString(line)+1+utf8.RuneCountInString(word) <= width:
			line += " " + word
		default:
			lines = append(lines, line)
			line = word
		}
	}
	lines = append(lines, line)
	if strings.HasPrefix(s, "  ") {
		lines[0] = "  " + lines[0]
	}
	return lines
}
