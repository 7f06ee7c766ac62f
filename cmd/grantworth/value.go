package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"runtime/pprof"
	"strings"
	"sync"
	"time"

	"github.com/spf13/cobra"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
	"grantworth/report"
	"grantworth/valuation"
)

func init() { verbs = append(verbs, newValueCmd) }

// Output file names (DESIGN §4.1).
var outputNames = []string{"memo.pdf", "valuation.xlsx", "valuation.json", "journal.csv"}

type valueOptions struct {
	io            *IO
	path          string
	out           string
	valuationDate string
	prior         string
	correct       []string
	force         bool
	cpuProfile    string
	memProfile    string
}

func newValueCmd(ios *IO) *cobra.Command {
	opts := &valueOptions{io: ios}
	cmd := &cobra.Command{
		Use:   "value SCHEDULE",
		Short: "Value every grant and write memo.pdf, valuation.xlsx, valuation.json and journal.csv",
		Long: `value is the quarter-close job. It reads a grant schedule (an .xlsx workbook
or a folder of CSV files), validates it, expands every grant into vesting
tranches, values each tranche (options on the employee-option lattice in
automatic, converged mode on all cores; warrants on the lattice with dilution;
RSUs in closed form), runs the sensitivity, convergence and Monte Carlo
checks and the period's expense attribution, and writes four files into the
output folder:

  memo.pdf        the memo for the file and the auditor
  valuation.xlsx  every input with its cell and every result, with live
                  Black-Scholes-Merton formulas beside the tool's figures
  valuation.json  the same figures for other programs (its fields: the
                  README, "valuation.json")
  journal.csv     the period's journal entries to import into the general
                  ledger, by cost centre, in the accounts of the Accounts
                  sheet (the README describes its columns)

With --prior, the close follows an earlier one (its output folder or its
valuation.json, only read): the grant-date fair values it filed stay locked
(a warning says when today's inputs would give another value), its booked
expense is the opening balance, changes to closed periods are booked now as
catch-ups with their causes, and the memo, workbook and JSON reconcile this
close to it. --correct GRANT measures a locked grant again, as the
correction of an error, booking the difference as a catch-up.

Any error in the schedule is printed with its cell and nothing is written
(exit 2). An existing output is never replaced without --force; the outputs
are written all together or not at all. The same schedule gives the same
files byte for byte.

The figures are estimates, not an audit opinion: defer to licensed auditors or
valuation professionals and the accounting rules that apply to you (ASC 718,
IFRS 2 or local rules).`,
		Example: `  grantworth value sample/tarnwick.xlsx --out out
  grantworth value ledger.xlsx --out q3 --valuation-date 2026-09-30 --force
  grantworth value ledger.xlsx --out q4 --valuation-date 2026-12-31 --prior q3
  grantworth value ledger.xlsx --out q4 --prior q3/valuation.json --correct TW-014`,
		Args: cobra.ExactArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			opts.path = args[0]
			return runValue(opts)
		},
	}
	cmd.Flags().StringVar(&opts.out, "out", "out", "folder to write the four files into (created if missing)")
	cmd.Flags().StringVar(&opts.valuationDate, "valuation-date", "", "period end YYYY-MM-DD, instead of the schedule's Company valuation_date")
	cmd.Flags().StringVar(&opts.prior, "prior", "", "the prior close to follow: its output folder or its valuation.json")
	cmd.Flags().StringSliceVar(&opts.correct, "correct", nil, "grant IDs whose locked grant-date value is measured again, as the correction of an error (needs --prior; repeat or separate with commas)")
	cmd.Flags().BoolVar(&opts.force, "force", false, "replace existing output files")
	// For developers: a CPU profile of the run, for go tool pprof.
	cmd.Flags().StringVar(&opts.cpuProfile, "cpuprofile", "", "write a CPU profile to this file")
	_ = cmd.Flags().MarkHidden("cpuprofile")
	// For developers: a heap profile of what is live once the report's
	// model is built, just before the files are written, for go tool pprof.
	cmd.Flags().StringVar(&opts.memProfile, "memprofile", "", "write a heap profile, taken before the files are written, to this file")
	_ = cmd.Flags().MarkHidden("memprofile")
	return cmd
}

func runValue(o *valueOptions) error {
	defer limitMemory(readLimit)() // memlimit.go
	if o.cpuProfile != "" {
		f, err := os.Create(o.cpuProfile)
		if err != nil {
			return err
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return err
		}
		defer pprof.StopCPUProfile()
	}
	// Refuse early, before any work, when an output is in the way (and
	// again under the folder's lock, below).
	if err := checkExisting(o.out, o.out, outputNames, o.force); err != nil {
		return err
	}
	if len(o.correct) > 0 && o.prior == "" {
		return badInput("--correct needs --prior: only a value filed by a prior close can be corrected")
	}
	var vdate time.Time
	if o.valuationDate != "" {
		t, err := time.Parse("2006-01-02", o.valuationDate)
		if err != nil {
			return badInput("--valuation-date %q is not a date YYYY-MM-DD", o.valuationDate)
		}
		vdate = t
	}
	st := newStages(o.io)
	defer st.interrupt() // a failed stage's line ends before its error
	st.begin("reading")
	// The prior close is read while the schedule is: the two are
	// independent until openPrior checks one against the other (a large
	// prior takes about as long as the schedule).
	var priorRead func() (*accounting.Prior, error)
	if o.prior != "" {
		priorRead = readPriorAsync(o.prior)
	}
	s, rep, err := grants.ReadFile(o.path)
	if err != nil {
		return readError(o.path, err)
	}
	perGrant := int64(perGrantHeap)
	if o.prior != "" {
		perGrant = perGrantHeapPrior
	}
	limitMemory(ledgerLimit(len(s.Grants), perGrant, availableMemory()))
	var moved []string
	if !vdate.IsZero() {
		// After a prior close the period starts the day after it (Open,
		// which says so when the Company sheet's period_start differs);
		// otherwise it stays as long as the schedule's own.
		sheetStart := s.Company.PeriodStart
		if w := s.MoveValuationDate(vdate); o.prior == "" && w != "" {
			moved = append(moved, w)
		}
		if o.prior != "" && !sheetStart.After(vdate) {
			s.Company.PeriodStart = sheetStart
		}
		// The date moves measurement dates and curves: check again, and
		// keep the problems not already found.
		again := grants.Validate(s)
		seen := map[string]bool{}
		for _, e := range rep.Errors {
			seen[e.Error()] = true
		}
		for _, e := range rep.Warnings {
			seen[e.Error()] = true
		}
		var fresh grants.Report
		for _, e := range again.Errors {
			if !seen[e.Error()] {
				fresh.Errors = append(fresh.Errors, e)
			}
		}
		for _, e := range again.Warnings {
			if !seen[e.Error()] {
				fresh.Warnings = append(fresh.Warnings, e)
			}
		}
		fresh.Dropped = again.Dropped
		rep.Merge(fresh)
	}
	if !rep.OK() {
		st.interrupt()
		return printProblems(o.io.Err, rep, nil)
	}
	// As check does: the valuation inputs of each grant, and whether the
	// lattice can value them.
	ins, inErrs, skipped := s.ValueInputs()
	if len(inErrs) > 0 {
		st.interrupt()
		return printProblems(o.io.Err, rep, inErrs)
	}
	var prior *accounting.Prior
	var priorWarnings []string
	if o.prior != "" {
		if prior, priorWarnings, err = openPrior(o, s, priorRead); err != nil {
			return err
		}
	}
	sum, err := grants.HashInput(o.path)
	if err != nil {
		var ce *grants.CellError
		if errors.As(err, &ce) {
			return asInput(err) // the input changed since it was read
		}
		return err
	}
	tranches := 0
	for _, in := range ins {
		tranches += len(in.Tranches)
	}
	priorNote := ""
	if prior != nil {
		priorNote = ", and the prior close"
	}
	st.end("%s grants, %s tranches%s", groupCount(len(ins)), groupCount(tranches), priorNote)
	// Lock and check the output folder before the long work: a second run,
	// a read-only folder or an output in the way is refused now.
	out, err := openOutput(o.out, outputNames, o.force, o.io)
	if err != nil {
		return err
	}
	defer out.close()
	st.mark("valuing")
	bar := newProgress(o.io, "valuing grants")
	sensBar := newProgress(o.io, "sensitivity runs")
	var studies *pricing.Studies
	if prior != nil {
		studies = &prior.Studies
	}
	v, err := pricing.Value(s, ins, pricing.Options{
		Lattice:     valuation.LatticeOptions{Steps: s.InForce().Steps},
		Progress:    bar.update,
		Sensitivity: func(done, total int) { bar.finish(); sensBar.update(done, total) },
		Locks:       prior.Locks(),
		Correct:     o.correct,
		// A grant whose inputs are as the prior close filed them keeps
		// its values without being valued, when the same grantworth
		// made them.
		Reuse: prior != nil && prior.ToolVersion == version,
		// and so do the checks of the prior close that are provably the
		// ones this run would make.
		Studies: studies,
	})
	bar.finish()
	sensBar.finish()
	if err != nil {
		if errors.Is(err, pricing.ErrLock) {
			return asInput(err)
		}
		return err
	}
	kept := 0
	for i := range v.Grants {
		if v.Grants[i].Reused {
			kept++
		}
	}
	keptNote := ""
	if kept > 0 {
		keptNote = fmt.Sprintf(" (%s as filed, not valued again)", groupCount(kept))
	}
	if n := studiesNote(v.StudiesReused); n != "" {
		keptNote += "; " + n + " as the prior close made them"
	}
	st.end("%s grants%s", groupCount(len(v.Grants)), keptNote)
	v.ReleaseTerms() // nothing after reads them but the report's years
	st.begin("accounting")
	books, err := accounting.Close(s, v, prior)
	if err != nil {
		if ce := (*grants.CellError)(nil); errors.As(err, &ce) {
			return asInput(err)
		}
		return err
	}
	st.end("%s grants booked, %s journal entries", groupCount(len(v.Grants)), groupCount(len(books.Journal)))
	st.mark("writing")
	if prior != nil {
		// The report names the prior's hash, which ran beside valuing
		// and accounting.
		if err := prior.Hashed(); err != nil {
			return err
		}
	}
	m, err := report.Build(s, v, books, report.Run{
		Tool:     report.Tool{Name: "grantworth", Version: version},
		Input:    report.Input{Path: filepath.ToSlash(o.path), SHA256: sum},
		Warnings: append(append(append(moved, warningTexts(rep)...), priorWarnings...), skipped...),
	})
	if err != nil {
		return err
	}
	m.Warnings = uniqueWarnings(m.Warnings)
	if o.memProfile != "" {
		if err := writeHeapProfile(o.memProfile); err != nil {
			return err
		}
	}
	files := outputs(m, out.tempDir())
	if o.io.ErrIsTerminal {
		var mu sync.Mutex // the files are written at the same time
		for i := range files {
			f := files[i]
			files[i].write = func(w io.Writer) error {
				mu.Lock()
				fmt.Fprintf(o.io.Err, "writing %s\n", f.name)
				mu.Unlock()
				return f.write(w)
			}
		}
	}
	if err := out.write(files); err != nil {
		return err
	}
	st.end("%d files", len(files))
	printWarnings(o.io.Err, m.Warnings)
	printSummary(o.io.Out, m, o.out)
	return nil
}

// studiesNote names the checks a rerun took from the prior close, "" if
// none.
func studiesNote(r pricing.StudiesReused) string {
	var parts []string
	if r.MonteCarlo > 0 {
		parts = append(parts, fmt.Sprintf("%d Monte Carlo %s", r.MonteCarlo, map[bool]string{true: "check", false: "checks"}[r.MonteCarlo == 1]))
	}
	if r.Convergence {
		parts = append(parts, "the convergence study")
	}
	if r.Sensitivity {
		parts = append(parts, "the sensitivity cases")
	}
	return strings.Join(parts, ", ")
}

// writeHeapProfile writes the live heap's profile to path (--memprofile).
func writeHeapProfile(path string) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	runtime.GC() // the profile's in-use figures are those of the last collection
	if err := pprof.WriteHeapProfile(f); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// stage labels this goroutine, and those it starts from now on, with
// the run's stage, so that a CPU profile (--cpuprofile) splits by stage:
// go tool pprof -tags grantworth cpu.prof.
func stage(name string) {
	pprof.SetGoroutineLabels(pprof.WithLabels(context.Background(), pprof.Labels("stage", name)))
}

// readError is the error of a schedule or designs workbook at path that
// could not be read at all: a problem in the file (a *grants.CellError) or
// a missing file is bad input (exit 2); anything else fails the run.
func readError(path string, err error) error {
	var ce *grants.CellError
	switch {
	case errors.As(err, &ce):
		return asInput(err)
	case errors.Is(err, fs.ErrNotExist):
		return badInput("%s: no such file or folder", path)
	}
	return err
}

// readPriorAsync starts reading the prior close at path and returns the
// function that waits for it; the prior's hash may still be running
// then (prior.Hashed waits for it). A run that stops before it asks
// leaves the read to finish on its own.
func readPriorAsync(path string) func() (*accounting.Prior, error) {
	type read struct {
		p   *accounting.Prior
		err error
	}
	done := make(chan read, 1)
	go func() {
		p, err := report.ReadPriorHashing(path)
		done <- read{p, err}
	}()
	return func() (*accounting.Prior, error) {
		r := <-done
		return r.p, r.err
	}
}

// openPrior reads the prior close o.prior and opens s's period after it
// (accounting.Open). Refusals are input errors; the output folder may
// not be the prior's, which must stay as it is.
func openPrior(o *valueOptions, s *grants.Schedule, read func() (*accounting.Prior, error)) (*accounting.Prior, []string, error) {
	prior, err := read()
	if err != nil {
		if errors.Is(err, accounting.ErrPrior) {
			return nil, nil, asInput(err)
		}
		return nil, nil, err
	}
	dir := o.prior
	if st, err := os.Stat(dir); err == nil && !st.IsDir() {
		dir = filepath.Dir(dir)
	}
	if sameDir(dir, o.out) {
		return nil, nil, badInput("--out %s is the prior close's folder: write this close elsewhere, so that the prior stays as it was filed", o.out)
	}
	warns, err := accounting.Open(s, prior)
	if err != nil {
		return nil, nil, asInput(err)
	}
	// The grants it filed values for (prior.Locks' keys, without making
	// the locks twice).
	filed := make(map[string]bool, len(o.correct))
	for _, id := range o.correct {
		filed[id] = false
	}
	for _, pg := range prior.Grants {
		if _, ok := filed[pg.ID]; ok {
			filed[pg.ID] = true
		}
	}
	for _, id := range o.correct {
		if _, ok := s.Grant(id); !ok {
			return nil, nil, badInput("--correct %s: no such grant on the Grants sheet", id)
		}
		if !filed[id] {
			return nil, nil, badInput("--correct %s: the prior close of %s filed no value for it to correct", id, prior.ValuationDate.Format(time.DateOnly))
		}
	}
	return prior, warns, nil
}

// sameDir reports whether a and b name the same folder (b need not
// exist).
func sameDir(a, b string) bool {
	sa, errA := os.Stat(a)
	sb, errB := os.Stat(b)
	if errA == nil && errB == nil {
		return os.SameFile(sa, sb)
	}
	x, errX := filepath.Abs(a)
	y, errY := filepath.Abs(b)
	return errX == nil && errY == nil && x == y
}

func printProblems(w io.Writer, rep *grants.Report, more []error) error {
	for _, e := range rep.Errors {
		fmt.Fprintln(w, e.Error())
	}
	for _, e := range more {
		fmt.Fprintln(w, e.Error())
	}
	if rep.Dropped > 0 {
		fmt.Fprintf(w, "... and %d more errors not listed\n", rep.Dropped)
	}
	for _, e := range rep.Warnings {
		fmt.Fprintln(w, checkWarningLine(e.Error()))
	}
	n := rep.ErrorCount() + len(more)
	fmt.Fprintf(w, "%d %s; nothing was written\n", n, checkPlural(n, "error"))
	return silentExit{exitInput}
}

// outputs are the files of outputNames, each rendered from the Model
// straight into the staging folder, so that a large ledger's files are
// never all in memory at once and nothing is visible unless all were made.
// Temporary files go into tmp.
func outputs(m *report.Model, tmp string) []outFile {
	return []outFile{
		{"memo.pdf", func(w io.Writer) error { return report.WriteMemo(w, m) }},
		{"valuation.xlsx", func(w io.Writer) error {
			return report.WriteWorkbookWith(w, m, report.WorkbookOptions{TempDir: tmp})
		}},
		{"valuation.json", func(w io.Writer) error { return report.WriteJSON(w, m) }},
		{"journal.csv", func(w io.Writer) error { return report.WriteJournalCSV(w, m) }},
	}
}

func printSummary(w io.Writer, m *report.Model, dir string) {
	cur := m.Company.Currency
	fmt.Fprintf(w, "%s, valuation date %s\n", m.Company.Name, m.ValuationDate)
	fmt.Fprintf(w, "  grants            %d share-based awards\n", m.Totals.Grants)
	for _, g := range m.ByInstrument {
		if !g.Financing {
			fmt.Fprintf(w, "    %-15s %d (%s %s)\n", g.Key, g.Grants, cur, money2(g.FairValueTotal))
		}
	}
	fmt.Fprintf(w, "  tranches          %s\n", groupCount(m.Totals.Tranches))
	fmt.Fprintf(w, "  shares            %s\n", groupCount(int(m.Totals.Shares)))
	fmt.Fprintf(w, "  total fair value  %s %s\n", cur, money2(m.Totals.FairValueTotal))
	if f := m.FinancingTotals; f.Grants > 0 {
		fmt.Fprintf(w, "  financing         %d warrant grants (%s %s), not share-based payment\n", f.Grants, cur, money2(f.FairValueTotal))
	}
	if m.Expense != nil {
		for _, p := range m.Expense.Periods {
			if p.Current {
				fmt.Fprintf(w, "  period expense    %s %s (%s to %s)\n", cur, money2(p.Amount), p.Start, p.End)
				if m.FinancingTotals.Grants > 0 {
					fmt.Fprintf(w, "  warrant liability %s %s change in fair value (financing, outside operating expense)\n", cur, money2(p.FinancingFairValueChange))
				}
			}
		}
	}
	if n := len(m.Modifications); n > 0 {
		var cost, amount float64
		for _, x := range m.Modifications {
			cost += x.Cost
			amount += x.Amount
		}
		fmt.Fprintf(w, "  modifications     %d (%s %s added to the cost, %s %s of it in the period)\n", n, cur, money2(cost), cur, money2(amount))
	}
	if len(m.Warnings) > 0 {
		fmt.Fprintf(w, "  warnings          %d (printed on stderr, and listed in the memo and the workbook)\n", len(m.Warnings))
	}
	for _, n := range outputNames {
		fmt.Fprintf(w, "  wrote             %s\n", filepath.Join(dir, n))
	}
	fmt.Fprintln(w, "Estimates, not an audit opinion: defer to licensed auditors or valuation professionals and the accounting rules that apply (ASC 718, IFRS 2 or local rules).")
}

// warningTexts returns the schedule's warnings as text, in the order found.
func warningTexts(rep *grants.Report) []string {
	out := make([]string, 0, len(rep.Warnings))
	for _, w := range rep.Warnings {
		out = append(out, w.Error())
	}
	return out
}

// uniqueWarnings is ws without repeats, in the order first found: a
// warning raised twice (by the schedule and by the valuation, or for each
// tranche of a grant in the same words) is listed once.
func uniqueWarnings(ws []string) []string {
	seen := make(map[string]bool, len(ws))
	out := ws[:0:0]
	for _, w := range ws {
		if !seen[w] {
			seen[w] = true
			out = append(out, w)
		}
	}
	return out
}

// printWarnings writes each warning on a line of its own, after
// "warning: ", for the person at the terminal (stderr); the files list
// them too.
func printWarnings(w io.Writer, ws []string) {
	for _, x := range ws {
		fmt.Fprintf(w, "warning: %s\n", x)
	}
}

// money2 is an amount with two decimals and grouped thousands.
func money2(v float64) string {
	neg := v < 0
	s := fmt.Sprintf("%.2f", abs(v))
	i := strings.IndexByte(s, '.')
	var b strings.Builder
	for k, r := range s[:i] {
		if k > 0 && (i-k)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	out := b.String() + s[i:]
	if neg && out != "0.00" {
		out = "-" + out
	}
	return out
}

func abs(v float64) float64 {
	if v < 0 {
		return -v
	}
	return v
}
