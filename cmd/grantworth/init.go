package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"grantworth/grants"
)

func init() { verbs = append(verbs, newInitCmd) }

// Names of what init writes inside DIR.
const (
	templateXLSX        = "grant-schedule.xlsx"
	templateCSV         = "grant-schedule-csv"
	designsTemplateXLSX = "grant-designs.xlsx"
	designsTemplateCSV  = "grant-designs-csv"
)

type initOptions struct {
	io      *IO
	dir     string
	csv     bool
	designs bool
	force   bool
}

// template is what init writes: the names and the writers of the workbook
// and of the CSV folder.
func (o *initOptions) template() (xlsx, csvDir string, writeXLSX func(io.Writer, *grants.Schedule) error, writeCSV func(string, *grants.Schedule) error) {
	if o.designs {
		return designsTemplateXLSX, designsTemplateCSV, grants.WriteDesignsXLSX, grants.WriteDesignsCSVDir
	}
	return templateXLSX, templateCSV, grants.WriteXLSX, grants.WriteCSVDir
}

func newInitCmd(ios *IO) *cobra.Command {
	opts := &initOptions{io: ios}
	cmd := &cobra.Command{
		Use:   "init [DIR]",
		Short: "Write a blank, documented grant schedule (or grant designs) workbook to fill in",
		Long: `init writes ` + templateXLSX + ` into DIR (default: the current folder): every
sheet grantworth reads with its column headers, an About sheet that explains
each column, drop-down lists for the choices and date and percent formats.
With --csv it writes the folder ` + templateCSV + ` of CSV files instead, one
per sheet. With --designs it writes the workbook that compare reads instead,
` + designsTemplateXLSX + ` (or the folder ` + designsTemplateCSV + ` with --csv): the
schedule's Company, Assumptions, Share Prices and Rates sheets and a Designs
sheet of one row per grant design. It never overwrites an existing file
unless --force is given.

The Company sheet's fiscal_year_end (a month; calendar years when empty)
sets the fiscal quarters of the forecast and the expense by fiscal year, and
the default period: a year ending in January has quarters February-April to
November-January and is named by the year it ends in. For a 52/53-week year
give fiscal_year_end_weekday (the weekday it ends on) and
fiscal_year_end_rule (last of the month, or nearest its last day). The
Accounts sheet lists every role of journal.csv with its default account name:
add your account codes. The Grants sheet's cost_center and the Transfers sheet
split the expense by function; the Assumptions key tax_rate and the Grants
column tax_deductible give the deferred tax.`,
		Example: `  grantworth init
  grantworth init q3-close
  grantworth init q3-close --csv
  grantworth init --designs plans`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			opts.dir = "."
			if len(args) == 1 {
				opts.dir = args[0]
			}
			return runInit(opts)
		},
	}
	cmd.Flags().BoolVar(&opts.csv, "csv", false, "write a folder of CSV files instead of a workbook")
	cmd.Flags().BoolVar(&opts.designs, "designs", false, "write the grant designs workbook that compare reads")
	cmd.Flags().BoolVar(&opts.force, "force", false, "replace existing files")
	return cmd
}

func runInit(o *initOptions) error {
	if err := os.MkdirAll(o.dir, 0o755); err != nil {
		return badInput("cannot create %s: %v", o.dir, err)
	}
	xlsxName, csvName, writeXLSX, writeCSV := o.template()
	if o.csv {
		dir := filepath.Join(o.dir, csvName)
		if _, err := os.Stat(dir); err == nil && !o.force {
			return badInput("%s exists; use --force to replace its files", dir)
		}
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return err
		}
		if err := writeCSV(dir, nil); err != nil {
			return err
		}
		fmt.Fprintln(o.io.Out, dir)
		return nil
	}
	path := filepath.Join(o.dir, xlsxName)
	if _, err := os.Stat(path); err == nil && !o.force {
		return badInput("%s exists; use --force to replace it", path)
	} else if err != nil && !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	if err := writeFileAtomic(path, func(w io.Writer) error { return writeXLSX(w, nil) }); err != nil {
		return err
	}
	fmt.Fprintln(o.io.Out, path)
	return nil
}
