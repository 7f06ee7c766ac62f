package grants

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"grantworth/valuation"
)

// Limits against files built to exhaust memory or time. Each is checked
// while streaming, before anything is allocated for what it bounds; counts
// stated inside a file are never trusted. A file past a limit is refused
// with an error (ErrTooLarge) naming the sheet.
const (
	MaxFileSize          = 64 << 20  // bytes of an .xlsx file or of one CSV file
	MaxUnzipSize         = 256 << 20 // bytes of the parts of an .xlsx file read, once unzipped
	MaxRows              = 1_000_000 // rows of one sheet, by row number
	MaxGrants            = 200_000   // rows of the Grants sheet with anything in them
	MaxColumns           = 256       // non-empty columns of one row
	MaxCellChars         = 32767     // characters of one cell, a spreadsheet cell's own limit
	MaxSharedStrings     = 2_000_000 // strings in a workbook's shared-strings table
	MaxSharedStringBytes = 64 << 20  // bytes of text in that table
)

// Lengths of the text fields kept and printed, in characters. Longer text
// is an error naming the cell: a grant id or a holder is a short label, and
// unbounded text would fill the memo with pages.
const (
	MaxIDChars     = 64  // grant_id, cost_center, account_code
	MaxNameChars   = 200 // holder, company_name, account_name
	MaxSourceChars = 500 // the source of an assumption
	MaxHeaderChars = 100 // a header or a key
)

// textLimit gives the longest text allowed in a column read as text.
var textLimit = map[string]int{"grant_id": MaxIDChars, "holder": MaxNameChars, "company_name": MaxNameChars,
	"cost_center": MaxIDChars, "account_code": MaxIDChars, "account_name": MaxNameChars,
	"condition": MaxIDChars, "condition_id": MaxIDChars, "peer": MaxNameChars, "description": MaxSourceChars, "note": MaxSourceChars,
	"own_prices": MaxSourceChars, "file": MaxSourceChars, "replacement_grant_id": MaxIDChars,
	"preparer": MaxNameChars, "client": MaxNameChars}

// tooLong reports whether v has more than limit characters.
func tooLong(v string, limit int) bool {
	return len(v) > limit && utf8.RuneCountInString(v) > limit
}

// maxCellBytes bounds the UTF-8 bytes of one cell's text (four bytes at most
// per character).
const maxCellBytes = 4 * MaxCellChars

// source is a workbook or a folder of CSV files, seen as sheets of rows.
type source interface {
	sheetNames() []string
	rows(name string) (rowIter, error)
	date1904() bool
}

// rowIter walks a sheet's rows. next advances one row (rows are numbered
// from 1 as a spreadsheet shows them; blank rows may be left out); cells
// returns the current row's raw cell texts, or the error that stopped the
// reading. An error wrapping ErrDamaged or ErrTooLarge stops the whole read.
type rowIter interface {
	next() bool
	cells() (row int, cells []string, err error)
	// emptyIsFormula reports whether the empty cell at col, row (1-based)
	// holds a formula with no saved value.
	emptyIsFormula(col, row int) bool
	// close releases the sheet; with drain it first reads the rest of
	// it, and returns any error found there.
	close(drain bool) error
}

// ReadFile reads the schedule at path: an .xlsx workbook or a folder of CSV
// files. It returns an error only when nothing could be read (no such file,
// not a workbook, too large); every problem in the schedule itself, with
// its sheet and cell, is in the Report, and the Schedule holds the rows
// that could be read.
//
// The price files that relative TSR conditions name are read too, their
// paths relative to the workbook's folder (or the CSV folder); their
// problems are in the Report, at the cell that names them.
func ReadFile(path string) (*Schedule, *Report, error) {
	s, rep, err := readFile(path, Sheets)
	if err == nil {
		rep.Merge(s.loadPrices(scheduleDir(path)))
	}
	return s, rep, err
}

// readFile is ReadFile for the workbook of the given layout (Sheets or
// DesignSheets).
func readFile(path string, layout []Sheet) (*Schedule, *Report, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, nil, err
	}
	if st.IsDir() {
		s, rep, err := readCSVDir(os.DirFS(path), layout)
		var ce *CellError
		if errors.As(err, &ce) && ce.Sheet == "." {
			ce.Sheet = filepath.Base(path)
		}
		return s, rep, err
	}
	name := filepath.Base(path)
	if !st.Mode().IsRegular() {
		return nil, nil, &CellError{Sheet: name, Err: ErrFormat, Msg: "is " + fileKind(st.Mode().Type()) + ", not a workbook file or a folder of CSV files"}
	}
	if strings.EqualFold(filepath.Ext(path), ".csv") {
		return nil, nil, &CellError{Sheet: name, Err: ErrFormat,
			Msg: fmt.Sprintf("is one CSV file; give the folder that holds %s and the other sheets", csvFiles(layout))}
	}
	if st.Size() > MaxFileSize {
		return nil, nil, &CellError{Sheet: name, Err: ErrTooLarge, Msg: fmt.Sprintf("is %s, more than the %s allowed", sizeText(st.Size()), sizeText(MaxFileSize))}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	s, rep, err := readXLSX(f, st.Size(), layout)
	var ce *CellError
	if errors.As(err, &ce) && ce.Sheet == "" {
		ce.Sheet = name
	}
	return s, rep, err
}

// ReadXLSX reads a schedule workbook of size bytes from r. A workbook that
// is damaged (a wrong checksum or size in the archive, XML that does not
// close, a reference to a string it lacks) or past a limit is an error
// naming the sheet: never a shorter schedule.
func ReadXLSX(r io.ReaderAt, size int64) (*Schedule, *Report, error) {
	return readXLSX(r, size, Sheets)
}

func readXLSX(r io.ReaderAt, size int64, layout []Sheet) (*Schedule, *Report, error) {
	if size > MaxFileSize {
		return nil, nil, &CellError{Err: ErrTooLarge, Msg: fmt.Sprintf("is %s, more than the %s allowed", sizeText(size), sizeText(MaxFileSize))}
	}
	if size == 0 {
		return nil, nil, &CellError{Err: ErrFormat, Msg: "is empty, not an .xlsx workbook"}
	}
	b, err := openXLSX(r, size)
	if err != nil {
		return nil, nil, err
	}
	return read(b, layout)
}

// ReadCSVDir reads a schedule from a folder of CSV files, one per sheet
// (grants.csv, company.csv, ...; names matched like sheet names).
func ReadCSVDir(fsys fs.FS) (*Schedule, *Report, error) { return readCSVDir(fsys, Sheets) }

func readCSVDir(fsys fs.FS, layout []Sheet) (*Schedule, *Report, error) {
	ents, err := fs.ReadDir(fsys, ".")
	if err != nil {
		return nil, nil, err
	}
	src := &csvSource{fsys: fsys}
	src.names, src.files, src.types = csvSheets(ents)
	if len(src.names) == 0 {
		return nil, nil, &CellError{Sheet: ".", Err: ErrFormat, Msg: "holds no .csv files"}
	}
	return read(src, layout)
}

// csvFiles names the CSV files of the layout's first table sheet and its
// company sheet: grants.csv, company.csv for a schedule.
func csvFiles(layout []Sheet) string {
	for _, sh := range layout {
		if sh.Required && !sh.KeyValue {
			return sh.File + ", company.csv"
		}
	}
	return "company.csv"
}

// read builds a Schedule from a source laid out as layout (Sheets or
// DesignSheets) and validates it. It stops at the first error that makes
// the source unreadable (ErrDamaged, ErrTooLarge).
func read(src source, layout []Sheet) (*Schedule, *Report, error) {
	s := &Schedule{layout: map[string]map[string]int{}}
	rep := &Report{skip: map[string]bool{}}
	s.Company.Refs = map[string]Ref{}
	s.Assumptions.Refs = map[string]Ref{}
	s.Assumptions.Sources = map[string]string{}
	s.Assumptions.Attribution = Graded
	s.Assumptions.Forfeitures = Estimate

	found := map[string]string{} // canonical → actual name
	var unknown []string
	for _, name := range src.sheetNames() {
		n := norm(name)
		matched := false
		for _, sh := range layout {
			if norm(sh.Name) == n {
				if prev, dup := found[sh.Name]; dup {
					rep.errf(Ref{Sheet: name}, "", "", ErrDuplicate, "sheet matches %s, like sheet %q", sh.Name, prev)
				} else {
					found[sh.Name] = name
				}
				matched = true
			}
		}
		if !matched && n != "about" {
			unknown = append(unknown, name)
		}
	}
	var missing []Column // the layout's sheets not found, for a hint
	for _, sh := range layout {
		if _, ok := found[sh.Name]; !ok {
			missing = append(missing, Column{Key: sh.Name})
		}
	}
	for _, name := range unknown {
		rep.warnf(Ref{Sheet: name}, "", "", ErrUnknown, "sheet is not one grantworth reads; it is ignored%s", didYouMean(name, missing, nil))
	}
	d1904 := src.date1904()
	for i := range layout {
		sh := &layout[i]
		name, ok := found[sh.Name]
		if !ok {
			if sh.Required {
				rep.errf(Ref{Sheet: sh.Name}, "", "", ErrMissingSheet, "sheet is missing (CSV: %s)", sh.File)
			}
			continue
		}
		it, err := src.rows(name)
		if err != nil {
			if fatal(err) {
				return nil, nil, sheetErr(err, sh.Name)
			}
			rep.errf(Ref{Sheet: sh.Name}, "", "", ErrFormat, "cannot be read: %v", err)
			continue
		}
		t := &tableReader{s: s, sh: sh, rep: rep, it: it, d1904: d1904}
		if sh.KeyValue {
			t.readKeyValue()
		} else {
			t.readTable()
		}
		err = it.close(t.fatal == nil)
		if t.fatal != nil {
			return nil, nil, t.fatal
		}
		if err != nil {
			if fatal(err) {
				return nil, nil, sheetErr(err, sh.Name)
			}
			rep.errf(Ref{Sheet: sh.Name}, "", "", ErrFormat, "cannot be read: %v", err)
		}
	}
	finishCompany(s, rep)
	s.Reindex()
	noGrants(s, rep)
	v := validate(s, rep.skip)
	rep.Merge(v)
	return s, rep, nil
}

// noGrants reports a schedule whose Grants sheet was read but holds no
// grant: there is nothing to value, and
// a memo of zeros must not pass for a close. A row or header that failed
// has its own error already.
func noGrants(s *Schedule, rep *Report) {
	if _, read := s.layout[SheetGrants]; read && len(s.Grants) == 0 {
		for _, e := range rep.Errors {
			if e.Sheet == SheetGrants {
				return
			}
		}
		rep.errf(Ref{Sheet: SheetGrants, Cell: "A2"}, "grant_id", "", ErrRequired, "the sheet has no grant: add one row per grant under the header")
	}
}

// fatal reports whether err makes the whole source unreadable.
func fatal(err error) bool {
	return errors.Is(err, ErrDamaged) || errors.Is(err, ErrTooLarge)
}

// sheetErr names sheet in err when it names none.
func sheetErr(err error, sheet string) error {
	var ce *CellError
	if errors.As(err, &ce) && ce.Sheet == "" {
		ce.Sheet = sheet
	}
	return err
}

type tableReader struct {
	s     *Schedule
	sh    *Sheet
	rep   *Report
	it    rowIter
	d1904 bool
	fatal error // the error that stopped the whole read
	count int   // rows returned by nextRow
	// broken is set when the sheet could not be read to its end; the
	// error has been reported, and nothing more is said of what is missing.
	broken bool
}

// nextRow returns the next row with any non-blank cell.
func (t *tableReader) nextRow() (int, []string, bool) {
	for t.it.next() {
		n, cells, err := t.it.cells()
		if err != nil {
			t.broken = true
			if fatal(err) {
				t.fatal = sheetErr(err, t.sh.Name)
				return 0, nil, false
			}
			var ce *CellError
			if errors.As(err, &ce) {
				if ce.Sheet == "" {
					ce.Sheet = t.sh.Name
				}
				t.rep.addErr(ce)
			} else {
				t.rep.errf(Ref{Sheet: t.sh.Name, Cell: cellName(1, n)}, "", "", ErrFormat, "row cannot be read: %v", err)
			}
			return 0, nil, false
		}
		if n > MaxRows {
			t.broken = true
			t.fatal = &CellError{Sheet: t.sh.Name, Cell: cellName(1, n), Err: ErrTooLarge, Msg: fmt.Sprintf("the sheet has more than %s rows", countText(MaxRows))}
			return 0, nil, false
		}
		blank := true
		for i, c := range cells {
			if strings.TrimSpace(c) != "" {
				if i >= MaxColumns {
					t.broken = true
					t.rep.errf(Ref{Sheet: t.sh.Name, Cell: cellName(i+1, n)}, "", "", ErrTooLarge, "row has cells beyond column %d", MaxColumns)
					return 0, nil, false
				}
				blank = false
			}
		}
		if len(cells) > MaxColumns {
			cells = cells[:MaxColumns]
		}
		if blank {
			// A row of formulas with no saved values is not blank.
			for i := range cells {
				if t.it.emptyIsFormula(i+1, n) {
					blank = false
					break
				}
			}
		}
		if !blank {
			t.count++
			if t.sh.Name == SheetGrants && t.count > MaxGrants+1 { // and the header
				t.broken = true
				t.fatal = &CellError{Sheet: t.sh.Name, Cell: cellName(1, n), Err: ErrTooLarge,
					Msg: fmt.Sprintf("the sheet has more than %s grant rows; grantworth values at most %s grants in one run", countText(MaxGrants), countText(MaxGrants))}
				return 0, nil, false
			}
			return n, cells, true
		}
	}
	return 0, nil, false
}

// cellName is the A1-style name of a cell ("AB12"), or "" for a position
// outside a sheet.
func cellName(col, row int) string {
	if col < 1 || row < 1 || col > maxSheetColumns {
		return ""
	}
	var b [16]byte
	i := 3
	for c := col; c > 0; c = (c - 1) / 26 {
		i--
		b[i] = byte('A' + (c-1)%26)
	}
	return string(strconv.AppendInt(b[i:3], int64(row), 10))
}

func (t *tableReader) readTable() {
	hrow, head, ok := t.nextRow()
	if !ok {
		if t.sh.Required && !t.broken {
			t.rep.errf(Ref{Sheet: t.sh.Name, Cell: "A1"}, "", "", ErrMissingColumn, "sheet is empty; it needs a header row (%s)", headerList(t.sh))
		}
		return
	}
	cols := map[string]int{}
	var unknown []int // columns of headers that name no column
	for i, h := range head {
		if tooLong(h, MaxHeaderChars) {
			t.rep.errf(Ref{Sheet: t.sh.Name, Cell: cellName(i+1, hrow)}, "", h, ErrTooLarge, "is longer than any column name (at most %d characters)", MaxHeaderChars)
			continue
		}
		n := norm(h)
		if n == "" {
			continue
		}
		var col *Column
		for j := range t.sh.Columns {
			if t.sh.Columns[j].matches(n) {
				col = &t.sh.Columns[j]
			}
		}
		ref := Ref{Sheet: t.sh.Name, Cell: cellName(i+1, hrow)}
		if col == nil {
			unknown = append(unknown, i)
			continue
		}
		if j, dup := cols[col.Key]; dup {
			t.rep.errf(ref, col.Key, h, ErrDuplicate, "is the same column as %s", cellName(j+1, hrow))
			continue
		}
		cols[col.Key] = i
	}
	for _, i := range unknown { // hinted at the columns still missing
		t.rep.warnf(Ref{Sheet: t.sh.Name, Cell: cellName(i+1, hrow)}, "", head[i], ErrUnknown, "is not a column grantworth reads; it is ignored%s", didYouMean(head[i], t.sh.Columns, cols))
	}
	t.s.layout[t.sh.Name] = cols
	missing := false
	for _, c := range t.sh.Columns {
		if _, ok := cols[c.Key]; c.Required && !ok {
			t.rep.errf(Ref{Sheet: t.sh.Name, Cell: cellName(1, hrow)}, c.Key, "", ErrMissingColumn, "column is missing from the header row")
			missing = true
		}
	}
	if missing {
		return
	}
	for {
		n, cells, ok := t.nextRow()
		if !ok {
			return
		}
		c := &rowCtx{t: t, row: n, cells: cells, cols: cols, refs: make(map[string]Ref, len(cells))}
		switch t.sh.Name {
		case SheetGrants:
			t.grantRow(c)
		case SheetVesting:
			t.vestRow(c)
		case SheetTransfers:
			t.transferRow(c)
		case SheetAccounts:
			t.accountRow(c)
		case SheetSharePrices:
			t.priceRow(c)
		case SheetRates:
			t.rateRow(c)
		case SheetEvents:
			t.eventRow(c)
		case SheetModifications:
			t.modificationRow(c)
		case SheetDesigns:
			t.designRow(c)
		case SheetConditions:
			t.conditionRow(c)
		case SheetAssessments:
			t.assessmentRow(c)
		case SheetPayoutCurve:
			t.payoutRow(c)
		case SheetPeers:
			t.peerRow(c)
		}
	}
}

func headerList(sh *Sheet) string {
	var keys []string
	for _, c := range sh.Columns {
		if c.Required {
			keys = append(keys, c.Key)
		}
	}
	return strings.Join(keys, ", ")
}

// rowCtx reads typed values from one row, recording problems.
type rowCtx struct {
	t      *tableReader
	row    int
	cells  []string
	cols   map[string]int // key → 0-based column
	refs   map[string]Ref
	failed bool
}

// keep reports whether the row read cleanly. A row that did not marks
// the grant it names, so that the grant's later checks are skipped instead
// of cascading from the row that is missing.
func (c *rowCtx) keep(grantID string) bool {
	if c.failed && grantID != "" {
		c.t.rep.skip[grantID] = true
	}
	return !c.failed
}

func (c *rowCtx) ref(key string) Ref {
	if i, ok := c.cols[key]; ok {
		return Ref{Sheet: c.t.sh.Name, Cell: cellName(i+1, c.row)}
	}
	return Ref{Sheet: c.t.sh.Name, Cell: cellName(1, c.row)}
}

func (c *rowCtx) fail(key, value string, err error) {
	c.failed = true
	ref := c.ref(key)
	c.t.rep.addErr(&CellError{Sheet: ref.Sheet, Cell: ref.Cell, Column: key, Value: value, Err: err})
}

func (c *rowCtx) failf(key, value string, err error, format string, args ...any) {
	c.failed = true
	c.t.rep.errf(c.ref(key), key, value, err, format, args...)
}

// text returns the trimmed text of the cell in column key and whether it
// is non-empty.
func (c *rowCtx) text(key string) (string, bool) {
	i, ok := c.cols[key]
	if !ok {
		return "", false
	}
	v := ""
	if i < len(c.cells) {
		v = strings.TrimSpace(c.cells[i])
	}
	if v == "" {
		if c.t.it.emptyIsFormula(i+1, c.row) {
			c.fail(key, "", ErrNoCachedValue)
		}
		return "", false
	}
	if limit, ok := textLimit[key]; ok && tooLong(v, limit) {
		c.failf(key, v, ErrTooLarge, "is longer than the %d characters allowed for %s", limit, key)
		return "", false
	}
	c.refs[key] = c.ref(key)
	return v, true
}

func (c *rowCtx) required(key string) (string, bool) {
	v, ok := c.text(key)
	if !ok && !c.failed {
		c.fail(key, "", ErrRequired)
	}
	return v, ok
}

func (c *rowCtx) date(key string, req bool) (time.Time, bool) {
	v, ok := c.get(key, req)
	if !ok {
		return time.Time{}, false
	}
	t, err := parseDate(v, c.t.d1904)
	if err != nil {
		if errors.Is(err, ErrRange) {
			c.failf(key, v, err, "is not a date between %d and %d", minYear, maxYear)
		} else {
			c.fail(key, v, err)
		}
		return time.Time{}, false
	}
	return t, true
}

func (c *rowCtx) get(key string, req bool) (string, bool) {
	if req {
		return c.required(key)
	}
	return c.text(key)
}

func (c *rowCtx) number(key string, req bool) (float64, bool) {
	v, ok := c.get(key, req)
	if !ok {
		return 0, false
	}
	f, err := ParseNumber(v)
	if err != nil {
		c.fail(key, v, err)
		return 0, false
	}
	return f, true
}

func (c *rowCtx) integer(key string, req bool) (int64, bool) {
	v, ok := c.get(key, req)
	if !ok {
		return 0, false
	}
	n, err := ParseInt(v)
	if err != nil {
		c.fail(key, v, err)
		return 0, false
	}
	return n, true
}

func (c *rowCtx) percent(key string, req bool) (float64, bool) {
	v, ok := c.get(key, req)
	if !ok {
		return 0, false
	}
	f, err := ParsePercent(v)
	if err != nil {
		c.fail(key, v, err)
		return 0, false
	}
	return f, true
}

func (c *rowCtx) choice(key string, req bool) (string, bool) {
	v, ok := c.get(key, req)
	if !ok {
		return "", false
	}
	col := c.t.sh.Column(key)
	for _, ch := range col.Choices {
		if norm(ch) == norm(v) || strings.EqualFold(ch, v) {
			return ch, true
		}
	}
	c.failf(key, v, ErrNotChoice, "is not one of %s", strings.Join(col.Choices, ", "))
	return "", false
}

func (c *rowCtx) ptr(key string, percent bool) *float64 {
	var f float64
	var ok bool
	if percent {
		f, ok = c.percent(key, false)
	} else {
		f, ok = c.number(key, false)
	}
	if !ok {
		return nil
	}
	return &f
}

func (t *tableReader) grantRow(c *rowCtx) {
	g := Grant{Row: c.row}
	id, idOK := c.required("grant_id")
	g.ID = id
	g.Holder, _ = c.text("holder")
	g.Instrument = Option
	if v, ok := c.choice("instrument", false); ok {
		g.Instrument = Instrument(v)
	}
	g.GrantDate, _ = c.date("grant_date", true)
	g.Shares, _ = c.integer("shares", true)
	g.Strike, _ = c.number("strike", false)
	exp, expOK := c.date("expiry_date", false)
	term, termOK := c.number("term_years", false)
	switch {
	case expOK:
		g.ExpiryDate = exp
	case termOK && !g.GrantDate.IsZero():
		if term <= 0 || term > 100 {
			c.failf("term_years", c.cellText("term_years"), ErrRange, "must be more than 0 and at most 100 years")
		} else {
			g.ExpiryDate = termExpiry(g.GrantDate, term)
		}
	}
	if expOK && termOK && !g.GrantDate.IsZero() {
		if d := termExpiry(g.GrantDate, term).Sub(exp); d > 4*24*time.Hour || d < -4*24*time.Hour {
			t.rep.warnf(c.ref("term_years"), "term_years", c.cellText("term_years"), ErrInconsistent,
				"disagrees with expiry_date %s (%s); expiry_date is used", exp.Format(time.DateOnly), c.ref("expiry_date").Cell)
		}
	}
	g.VestStart = g.GrantDate
	if v, ok := c.date("vest_start", false); ok {
		g.VestStart = v
	}
	g.VestMonths = c.months("vest_months")
	g.CliffMonths = c.months("cliff_months")
	g.VestEvery = 1
	if ve, ok := c.integer("vest_every_months", false); ok {
		g.VestEvery = int(ve)
	}
	g.SharePrice = c.ptr("share_price", false)
	g.Volatility = c.ptr("volatility", true)
	g.DividendYield = c.ptr("dividend_yield", true)
	g.ExerciseMultiple = c.ptr("exercise_multiple", false)
	g.PostVestingExitRate = c.ptr("post_vesting_exit_rate", true)
	cl, clOK := c.choice("classification", false)
	st, stOK := c.choice("exercise_style", false)
	if g.Instrument == Warrant {
		g.Classification, g.ExerciseStyle = Equity, American
		if clOK {
			g.Classification = Classification(cl)
		}
		if stOK {
			g.ExerciseStyle = ExerciseStyle(st)
		}
	} else {
		for _, k := range []string{"classification", "exercise_style"} {
			if _, ok := c.refs[k]; ok {
				t.rep.warnf(c.ref(k), k, c.cellText(k), ErrInconsistent, "applies to warrants only; ignored for %s %s", g.Instrument, g.ID)
			}
		}
	}
	if v, ok := c.choice("purpose", false); ok {
		g.Purpose = Purpose(v)
	} else if g.Instrument != Warrant {
		g.Purpose = Compensation
	}
	g.HireDate, _ = c.date("hire_date", false)
	g.CostCenter, _ = c.text("cost_center")
	if v, ok := c.choice("tax_deductible", false); ok {
		b := v == "yes"
		g.TaxDeductible = &b
	}
	g.Condition, _ = c.text("condition")
	g.Refs = c.refs
	if c.failed || !idOK {
		if idOK {
			t.rep.skip[id] = true
		}
		return
	}
	t.s.Grants = append(t.s.Grants, g)
}

// termExpiry is the grant date plus a contractual term in years: whole
// months are added as months (month-end clamped); any rest of a month as
// days of a 365-day year.
func termExpiry(grant time.Time, years float64) time.Time {
	months := years * 12
	whole := int(months)
	t := AddMonths(grant, whole)
	if rest := months - float64(whole); rest > 1e-9 {
		t = t.AddDate(0, 0, int(rest/12*365+0.5))
	}
	return t
}

func (c *rowCtx) cellText(key string) string {
	if i, ok := c.cols[key]; ok && i < len(c.cells) {
		return strings.TrimSpace(c.cells[i])
	}
	return ""
}

func (t *tableReader) vestRow(c *rowCtx) {
	v := VestRow{Row: c.row}
	v.GrantID, _ = c.required("grant_id")
	v.VestDate, _ = c.date("vest_date", true)
	v.Shares, _ = c.integer("shares", true)
	if !c.keep(v.GrantID) {
		return
	}
	t.s.Vesting = append(t.s.Vesting, v)
}

func (t *tableReader) transferRow(c *rowCtx) {
	tr := Transfer{Row: c.row}
	tr.GrantID, _ = c.required("grant_id")
	tr.Date, _ = c.date("date", true)
	tr.CostCenter, _ = c.required("cost_center")
	if !c.keep(tr.GrantID) {
		return
	}
	t.s.Transfers = append(t.s.Transfers, tr)
}

func (t *tableReader) accountRow(c *rowCtx) {
	a := AccountRow{Row: c.row}
	a.Role, _ = c.choice("role", true)
	a.CostCenter, _ = c.text("cost_center")
	a.Code, _ = c.text("account_code")
	a.Name, _ = c.text("account_name")
	if !c.failed && a.Code == "" && a.Name == "" {
		c.failf("account_code", "", ErrRequired, "is empty, and so is account_name: give the role %s an account code, a name or both", a.Role)
	}
	if !c.failed {
		t.s.Accounts = append(t.s.Accounts, a)
	}
}

func (t *tableReader) priceRow(c *rowCtx) {
	p := PricePoint{Row: c.row}
	p.Date, _ = c.date("date", true)
	p.Price, _ = c.number("price", true)
	if !c.failed {
		t.s.SharePrices = append(t.s.SharePrices, p)
	}
}

func (t *tableReader) rateRow(c *rowCtx) {
	p := RatePoint{Row: c.row, Compounding: "continuous"}
	p.CurveDate, _ = c.date("curve_date", true)
	p.TenorYears, _ = c.number("tenor_years", true)
	p.Rate, _ = c.percent("rate", true)
	if v, ok := c.choice("compounding", false); ok {
		p.Compounding = v
	}
	if !c.failed {
		t.s.Rates = append(t.s.Rates, p)
	}
}

func (t *tableReader) eventRow(c *rowCtx) {
	e := Event{Row: c.row}
	e.GrantID, _ = c.required("grant_id")
	e.Date, _ = c.date("date", true)
	if k := norm(c.cellText("event")); strings.HasPrefix(k, "modif") || strings.HasPrefix(k, "repric") {
		c.failf("event", c.cellText("event"), ErrNotChoice, "is not an event: record a change of terms (a repricing, a new expiry, accelerated vesting) as a row of the Modifications sheet")
	} else if k, ok := c.choice("event", true); ok {
		e.Kind = EventKind(k)
	}
	e.Shares, _ = c.integer("shares", true)
	e.SharePrice = c.ptr("share_price", false)
	e.ReplacementGrantID, _ = c.text("replacement_grant_id")
	if !c.keep(e.GrantID) {
		return
	}
	t.s.Events = append(t.s.Events, e)
}

// readKeyValue reads Company or Assumptions: rows of key, value and
// (Assumptions) source. A header row "key, value, source" is optional.
func (t *tableReader) readKeyValue() {
	kc, vc, sc, ec := 0, 1, 2, -1
	if t.sh.Name == SheetAssumptions {
		ec = 3
	}
	first := true
	seen := map[string]Ref{}
	for {
		n, cells, ok := t.nextRow()
		if !ok {
			break
		}
		if first {
			first = false
			if len(cells) > 0 && norm(cells[0]) == "key" {
				kc, vc, sc, ec = -1, -1, -1, -1
				for i, h := range cells {
					if tooLong(h, MaxHeaderChars) {
						t.rep.errf(Ref{Sheet: t.sh.Name, Cell: cellName(i+1, n)}, "", h, ErrTooLarge, "is longer than any column name (at most %d characters)", MaxHeaderChars)
						continue
					}
					switch norm(h) {
					case "key":
						kc = i
					case "value":
						vc = i
					case "source":
						sc = i
					case "":
					case "effectivedate":
						if t.sh.Name == SheetAssumptions {
							ec = i
							break
						}
						t.rep.warnf(Ref{Sheet: t.sh.Name, Cell: cellName(i+1, n)}, "", h, ErrUnknown, "is not a column grantworth reads (%s); it is ignored", keyValueColumns(t.sh.Name))
					default:
						t.rep.warnf(Ref{Sheet: t.sh.Name, Cell: cellName(i+1, n)}, "", h, ErrUnknown, "is not a column grantworth reads (%s); it is ignored", keyValueColumns(t.sh.Name))
					}
				}
				if vc < 0 {
					t.rep.errf(Ref{Sheet: t.sh.Name, Cell: cellName(1, n)}, "value", "", ErrMissingColumn, "column is missing from the header row")
					return
				}
				continue
			}
		}
		key := ""
		if kc < len(cells) {
			key = strings.TrimSpace(cells[kc])
		}
		keyRef := Ref{Sheet: t.sh.Name, Cell: cellName(kc+1, n)}
		if key == "" {
			t.rep.errf(keyRef, "key", "", ErrRequired, "has a value but no key")
			continue
		}
		if tooLong(key, MaxHeaderChars) {
			t.rep.errf(keyRef, "key", key, ErrTooLarge, "is longer than any key (at most %d characters)", MaxHeaderChars)
			continue
		}
		col := (*Column)(nil)
		for i := range t.sh.Columns {
			if t.sh.Columns[i].matches(norm(key)) {
				col = &t.sh.Columns[i]
			}
		}
		if col == nil {
			t.rep.warnf(keyRef, "key", key, ErrUnknown, "is not a key grantworth reads; it is ignored%s", didYouMean(key, t.sh.Columns, nil))
			continue
		}
		c := &rowCtx{t: t, row: n, cells: cells, cols: map[string]int{col.Key: vc}, refs: map[string]Ref{}}
		src := ""
		if sc >= 0 && sc < len(cells) {
			src = strings.TrimSpace(cells[sc])
			if tooLong(src, MaxSourceChars) {
				t.rep.errf(Ref{Sheet: t.sh.Name, Cell: cellName(sc+1, n)}, "source", src, ErrTooLarge, "is longer than the %d characters allowed for the source of %s", MaxSourceChars, col.Key)
				src = ""
			}
		}
		if ec >= 0 && ec < len(cells) && strings.TrimSpace(cells[ec]) != "" {
			t.datedAssumption(c, col, ec, src, keyRef, seen)
			continue
		}
		if prev, dup := seen[col.Key]; dup {
			t.rep.errf(keyRef, "key", key, ErrDuplicate, "is given twice (also %s)", prev.Cell)
			continue
		}
		seen[col.Key] = keyRef
		if t.sh.Name == SheetCompany {
			t.companyValue(c, col)
		} else {
			t.assumptionValue(c, col, &t.s.Assumptions)
			if _, given := c.refs[col.Key]; !given && !c.failed {
				if t.s.Assumptions.blank == nil {
					t.s.Assumptions.blank = map[string]Ref{}
				}
				t.s.Assumptions.blank[col.Key] = c.ref(col.Key)
			}
			if src != "" {
				t.s.Assumptions.Sources[col.Key] = src
			}
		}
		for k, r := range c.refs {
			if t.sh.Name == SheetCompany {
				t.s.Company.Refs[k] = r
			} else {
				t.s.Assumptions.Refs[k] = r
			}
		}
	}
	for _, col := range t.sh.Columns {
		if _, ok := seen[col.Key]; col.Required && !ok && !t.broken && !t.s.Assumptions.dated(col.Key) {
			t.rep.errf(Ref{Sheet: t.sh.Name, Cell: cellName(1, 1)}, col.Key, "", ErrRequired, "key is missing; add a row %s with its value", col.Key)
		}
	}
}

func (t *tableReader) companyValue(c *rowCtx, col *Column) {
	co := &t.s.Company
	switch col.Key {
	case "company_name":
		co.Name, _ = c.required(col.Key)
	case "valuation_date":
		co.ValuationDate, _ = c.date(col.Key, true)
	case "period_start":
		co.PeriodStart, _ = c.date(col.Key, false)
	case "currency":
		if v, ok := c.text(col.Key); ok {
			if !isCurrency(v) {
				c.failf(col.Key, v, ErrRange, "is not a three-letter ISO 4217 currency code such as USD or EUR")
			} else {
				co.Currency = strings.ToUpper(v)
			}
		}
	case "shares_outstanding":
		co.SharesOutstanding = 0
		if n, ok := c.integer(col.Key, false); ok {
			co.SharesOutstanding = float64(n)
		}
	case "fiscal_year_end":
		if v, ok := c.text(col.Key); ok {
			if m, ok := parseMonth(v); ok {
				co.Fiscal.YearEnd = m
			} else {
				c.failf(col.Key, v, ErrNotChoice, "is not a month: give its name (January), its first three letters (Jan) or its number 1 to 12")
			}
		}
	case "fiscal_year_end_weekday":
		if v, ok := c.text(col.Key); ok {
			if w, ok := parseWeekday(v); ok {
				co.Fiscal.WeekBased, co.Fiscal.Weekday = true, w
			} else {
				c.failf(col.Key, v, ErrNotChoice, "is not a weekday: give its name (Saturday) or its first three letters (Sat)")
			}
		}
	case "fiscal_year_end_rule":
		if v, ok := c.choice(col.Key, false); ok {
			co.Fiscal.Nearest = v == "nearest"
		}
	case "grant_date":
		co.GrantDate, _ = c.date(col.Key, false)
	case "preparer":
		co.Preparer, _ = c.text(col.Key)
	case "client":
		co.Client, _ = c.text(col.Key)
	case "paper_size":
		co.PaperSize, _ = c.choice(col.Key, false)
	}
}

func isCurrency(s string) bool {
	if len(s) != 3 {
		return false
	}
	for _, r := range s {
		if !(r >= 'A' && r <= 'Z' || r >= 'a' && r <= 'z') {
			return false
		}
	}
	return true
}

// keyValueColumns lists the columns of a key-value sheet, for messages.
func keyValueColumns(sheet string) string {
	if sheet == SheetAssumptions {
		return "key, value, source, effective_date"
	}
	return "key, value, source"
}

// datedAssumption reads a row of Assumptions with an effective_date (in
// column ec) into Assumptions.Dated. seen holds the undated keys, and the
// dated ones as key@date, with their cells.
func (t *tableReader) datedAssumption(c *rowCtx, col *Column, ec int, src string, keyRef Ref, seen map[string]Ref) {
	c.cols["effective_date"] = ec
	eff, ok := c.date("effective_date", false)
	if !ok {
		return
	}
	k := col.Key + "@" + isoDay(eff)
	if prev, dup := seen[k]; dup {
		t.rep.errf(keyRef, "key", col.Key, ErrDuplicate, "is given twice with effective_date %s (also %s)", isoDay(eff), prev.Cell)
		return
	}
	seen[k] = keyRef
	var x Assumptions
	if t.assumptionValue(c, col, &x); c.failed {
		return
	}
	if _, given := c.refs[col.Key]; !given {
		c.failf(col.Key, "", ErrRequired, "is required on a row with an effective_date")
		return
	}
	r := x.row(col.Key)
	r.Effective, r.Source, r.Ref, r.DateRef = eff, src, c.refs[col.Key], c.refs["effective_date"]
	t.s.Assumptions.Dated = append(t.s.Assumptions.Dated, r)
}

// dated reports whether a row with an effective_date gives key.
func (a *Assumptions) dated(key string) bool {
	for _, r := range a.Dated {
		if r.Key == key {
			return true
		}
	}
	return false
}

func (t *tableReader) assumptionValue(c *rowCtx, col *Column, a *Assumptions) {
	switch col.Key {
	case "volatility":
		a.Volatility, _ = c.percent(col.Key, false)
	case "dividend_yield":
		a.DividendYield, _ = c.percent(col.Key, false)
	case "exercise_multiple":
		a.ExerciseMultiple, _ = c.number(col.Key, false)
	case "post_vesting_exit_rate":
		a.PostVestingExitRate, _ = c.percent(col.Key, false)
	case "pre_vesting_forfeiture_rate":
		a.PreVestingForfeitureRate, _ = c.percent(col.Key, false)
	case "attribution":
		if v, ok := c.choice(col.Key, false); ok {
			a.Attribution = Attribution(v)
		}
	case "forfeitures":
		if v, ok := c.choice(col.Key, false); ok {
			a.Forfeitures = ForfeiturePolicy(v)
		}
	case "framework":
		if v, ok := c.choice(col.Key, false); ok {
			a.Framework = Framework(v)
		}
	case "tax_rate":
		a.TaxRate, _ = c.percent(col.Key, false)
	case "steps":
		if v, ok := c.text(col.Key); ok && !strings.EqualFold(v, "auto") {
			n, err := ParseInt(v)
			if l := valuation.Limits.Steps; err != nil || n == 0 || !l.In(float64(n)) {
				c.failf(col.Key, v, ErrRange, "must be auto or a whole number of steps from %g to %g", l.Min, l.Max)
			} else {
				a.Steps = int(n)
			}
		}
	}
}

// finishCompany fills the Company defaults.
func finishCompany(s *Schedule, rep *Report) {
	co := &s.Company
	if co.Currency == "" {
		co.Currency = "USD"
	}
	if co.PeriodStart.IsZero() && !co.ValuationDate.IsZero() {
		co.PeriodStart = co.DefaultPeriodStart(co.ValuationDate)
	}
}
