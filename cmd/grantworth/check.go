package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"sort"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"grantworth/grants"
)

func init() { verbs = append(verbs, newCheckCmd) }

type checkOptions struct {
	io   *IO
	path string
	json bool
}

func newCheckCmd(ios *IO) *cobra.Command {
	opts := &checkOptions{io: ios}
	cmd := &cobra.Command{
		Use:   "check SCHEDULE|DESIGNS",
		Short: "Validate a grant schedule or a designs workbook and list every problem with its cell",
		Long: `check reads a grant schedule (an .xlsx workbook or a folder of CSV files)
and lists every problem it finds, one per line as Sheet!Cell (column): message,
errors first, then warnings, and a short summary: grants by instrument,
tranches and measurement dates.

A grant designs workbook (a Designs sheet and no Grants sheet, as
grantworth init --designs writes) is checked by the rules compare applies
before it values the designs, and summarised as designs by instrument and
their grant date: what check accepts, compare compares.

It exits 0 when there is no error (warnings allowed) and 2 when there is any.`,
		Example: `  grantworth check sample/tarnwick.xlsx
  grantworth check sample/tarnwick-csv
  grantworth check sample/designs.xlsx
  grantworth check ledger.xlsx --json | jq .errors`,
		Args: cobra.ExactArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			opts.path = args[0]
			return runCheck(opts)
		},
	}
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the problems and the summary as one JSON object")
	return cmd
}

type checkProblem struct {
	Sheet   string `json:"sheet"`
	Cell    string `json:"cell"`
	Column  string `json:"column,omitempty"`
	Value   string `json:"value,omitempty"`
	Message string `json:"message"`
}

type checkSummary struct {
	Grants           int            `json:"grants"`
	Instruments      map[string]int `json:"instruments"`
	Tranches         int            `json:"tranches"`
	MeasurementDates int            `json:"measurement_dates"`
	FirstDate        string         `json:"first_measurement_date,omitempty"`
	LastDate         string         `json:"last_measurement_date,omitempty"`
}

type checkResult struct {
	Path          string         `json:"path"`
	OK            bool           `json:"ok"`
	Errors        []checkProblem `json:"errors"`
	ErrorsDropped int            `json:"errors_not_listed"`
	Warnings      []checkProblem `json:"warnings"`
	Summary       *checkSummary  `json:"summary,omitempty"`
	// Designs summarises a designs workbook, in place of Summary.
	Designs *checkDesigns `json:"designs,omitempty"`
}

// checkDesigns is the summary of a grant designs workbook.
type checkDesigns struct {
	Designs     int            `json:"designs"`
	Instruments map[string]int `json:"instruments"`
	GrantDate   string         `json:"grant_date,omitempty"`
}

func checkProblemOf(e *grants.CellError) checkProblem {
	p := checkProblem{Sheet: e.Sheet, Cell: e.Cell, Column: e.Column, Value: e.Value, Message: e.Error()}
	return p
}

func runCheck(o *checkOptions) error {
	s, rep, err := grants.ReadFile(o.path)
	res := checkResult{Path: o.path, Errors: []checkProblem{}, Warnings: []checkProblem{}}
	if err == nil {
		if ds, drep := readDesignsInstead(o.path, rep); ds != nil {
			checkDesignsInto(&res, ds, drep)
			return finishCheck(o, &res)
		}
	}
	if err != nil {
		var ce *grants.CellError
		switch {
		case errors.As(err, &ce):
			res.Errors = append(res.Errors, checkProblemOf(ce))
		case errors.Is(err, fs.ErrNotExist):
			return badInput("%s: no such file or folder", o.path)
		default:
			return err
		}
	} else {
		for _, e := range rep.Errors {
			res.Errors = append(res.Errors, checkProblemOf(e))
		}
		for _, w := range rep.Warnings {
			res.Warnings = append(res.Warnings, checkProblemOf(w))
		}
		res.ErrorsDropped = rep.Dropped
		if rep.OK() {
			// What value does next with the schedule, so that what check
			// accepts value values: each grant's valuation inputs, and
			// whether the lattice can value them (valuation.Feasible).
			_, inErrs, _ := s.ValueInputs()
			addCheckErrors(&res, inErrs)
		}
		res.Summary = checkSummarize(s)
	}
	return finishCheck(o, &res)
}

// addCheckErrors adds the errors of the valuation inputs to res.
func addCheckErrors(res *checkResult, errs []error) {
	for _, e := range errs {
		var ce *grants.CellError
		if errors.As(e, &ce) {
			res.Errors = append(res.Errors, checkProblemOf(ce))
		} else {
			res.Errors = append(res.Errors, checkProblem{Message: e.Error()})
		}
	}
}

// readDesignsInstead reads path as a grant designs workbook when the
// schedule reader's report rep says it has no Grants sheet and it has a
// Designs sheet; else it returns nil.
func readDesignsInstead(path string, rep *grants.Report) (*grants.Schedule, *grants.Report) {
	if !missingSheet(rep, grants.SheetGrants) {
		return nil, nil
	}
	ds, drep, err := grants.ReadDesigns(path)
	if err != nil || missingSheet(drep, grants.SheetDesigns) {
		return nil, nil
	}
	return ds, drep
}

// missingSheet tells whether rep reports the sheet name missing.
func missingSheet(rep *grants.Report, name string) bool {
	for _, e := range rep.Errors {
		if e.Sheet == name && errors.Is(e, grants.ErrMissingSheet) {
			return true
		}
	}
	return false
}

// checkDesignsInto checks a designs workbook as compare does before it
// values the designs: the reader's report, then each design as the grant
// it describes (grants.Schedule.DesignGrant) and its valuation inputs,
// with whether the lattice can value them (valuation.Feasible).
func checkDesignsInto(res *checkResult, s *grants.Schedule, rep *grants.Report) {
	for _, e := range rep.Errors {
		res.Errors = append(res.Errors, checkProblemOf(e))
	}
	for _, w := range rep.Warnings {
		res.Warnings = append(res.Warnings, checkProblemOf(w))
	}
	res.ErrorsDropped = rep.Dropped
	sm := &checkDesigns{Designs: len(s.Designs), Instruments: map[string]int{}}
	if gd := s.DesignDate(); !gd.IsZero() {
		sm.GrantDate = gd.Format(time.DateOnly)
	}
	for _, d := range s.Designs {
		sm.Instruments[string(d.Instrument)]++
		if !rep.OK() {
			continue
		}
		g, err := s.DesignGrant(d)
		if err == nil {
			_, err = s.Inputs(g)
		}
		if err != nil {
			addCheckErrors(res, []error{err})
		}
	}
	res.Designs = sm
}

// finishCheck prints res, as JSON or as lines, and exits 2 on any error.
func finishCheck(o *checkOptions, res *checkResult) error {
	res.OK = len(res.Errors) == 0 && res.ErrorsDropped == 0
	if o.json {
		enc := json.NewEncoder(o.io.Out)
		enc.SetIndent("", "  ")
		if err := enc.Encode(res); err != nil {
			return err
		}
	} else {
		printCheck(o.io.Out, res)
	}
	if !res.OK {
		return silentExit{exitInput}
	}
	return nil
}

func printCheck(w io.Writer, r *checkResult) {
	for _, e := range r.Errors {
		fmt.Fprintln(w, e.Message)
	}
	if r.ErrorsDropped > 0 {
		fmt.Fprintf(w, "... and %d more errors not listed\n", r.ErrorsDropped)
	}
	for _, e := range r.Warnings {
		fmt.Fprintln(w, checkWarningLine(e.Message))
	}
	if sm := r.Designs; sm != nil {
		fmt.Fprintf(w, "%s: %d grant %s%s", r.Path, sm.Designs, checkPlural(sm.Designs, "design"), checkKinds(sm.Instruments))
		if sm.GrantDate != "" {
			fmt.Fprintf(w, " on %s", sm.GrantDate)
		}
		fmt.Fprintln(w)
	}
	if sm := r.Summary; sm != nil {
		fmt.Fprintf(w, "%s: %d %s%s", r.Path, sm.Grants, checkPlural(sm.Grants, "grant"), checkKinds(sm.Instruments))
		fmt.Fprintf(w, ", %d %s, %d measurement %s", sm.Tranches, checkPlural(sm.Tranches, "tranche"), sm.MeasurementDates, checkPlural(sm.MeasurementDates, "date"))
		if sm.FirstDate != "" {
			fmt.Fprintf(w, " from %s to %s", sm.FirstDate, sm.LastDate)
		}
		fmt.Fprintln(w)
	}
	ne := len(r.Errors) + r.ErrorsDropped
	fmt.Fprintf(w, "%d %s, %d %s\n", ne, checkPlural(ne, "error"), len(r.Warnings), checkPlural(len(r.Warnings), "warning"))
}

// checkKinds is the count by instrument, " (38 options, 7 RSUs)", or "".
func checkKinds(by map[string]int) string {
	var kinds []string
	for _, k := range []string{"option", "warrant", "rsu"} {
		if n := by[k]; n > 0 {
			kinds = append(kinds, fmt.Sprintf("%d %s", n, checkPlural(n, k)))
		}
	}
	if len(kinds) == 0 {
		return ""
	}
	return " (" + strings.Join(kinds, ", ") + ")"
}

// warningLine puts "warning:" after the cell reference, so that every line
// still starts with Sheet!Cell.
func checkWarningLine(msg string) string {
	if i := strings.Index(msg, ": "); i >= 0 {
		return msg[:i] + ": warning: " + msg[i+2:]
	}
	return "warning: " + msg
}

func checkPlural(n int, w string) string {
	if w == "rsu" {
		w = "RSU"
	}
	if n == 1 {
		return w
	}
	return w + "s"
}

func checkSummarize(s *grants.Schedule) *checkSummary {
	sm := &checkSummary{Grants: len(s.Grants), Instruments: map[string]int{}}
	dates := map[time.Time]bool{}
	for _, g := range s.Grants {
		sm.Instruments[string(g.Instrument)]++
		sm.Tranches += len(s.Tranches(g))
		dates[s.MeasurementDate(g)] = true
	}
	var ds []time.Time
	for t := range dates {
		if !t.IsZero() {
			ds = append(ds, t)
		}
	}
	sort.Slice(ds, func(i, j int) bool { return ds[i].Before(ds[j]) })
	sm.MeasurementDates = len(ds)
	if len(ds) > 0 {
		sm.FirstDate, sm.LastDate = ds[0].Format(time.DateOnly), ds[len(ds)-1].Format(time.DateOnly)
	}
	return sm
}
