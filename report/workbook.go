package report

import (
	"archive/zip"
	"bufio"
	"bytes"
	"fmt"
	"io"
	"os"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode"

	"github.com/xuri/excelize/v2"
)

// Sheet names of valuation.xlsx, in order. Sheets added by hooks come
// between Convergence and Warnings.
const (
	SheetSummary     = "Summary"
	SheetAssumptions = "Assumptions"
	SheetGrants      = "Grants"
	SheetTranches    = "Tranches"
	SheetSensitivity = "Sensitivity"
	SheetConvergence = "Convergence"
	SheetWarnings    = "Warnings"
	SheetAbout       = "About"
)

// SheetHook adds one sheet to the workbook. Other files of this package
// register hooks in an init function (for example the expense sheets), so
// that a new section needs no edit of the renderers.
type SheetHook struct {
	Name  string
	Write func(b *Book, m *Model) error
}

var sheetHooks []SheetHook

// sheetSkips leave a hook's sheet (by Name) out of a workbook it reports
// true for: a sheet with nothing to show.
var sheetSkips = map[string]func(m *Model) bool{}

// Book is the workbook being written, with its styles. Hooks use it to add
// sheets that look like the others.
type Book struct {
	f     *excelize.File
	Style Styles
	// fast write the data rows of large sheets apart (fastsheet.go),
	// placeholder k's rows fast[k]; slow sends every sheet through
	// excelize (for the test that compares).
	fast []fastRows
	slow bool
	// split names the sheets continued on numbered sheets, for the About
	// sheet.
	split []string
}

// Styles are the cell styles of the workbook.
type Styles struct {
	Header, Text, Input, Int, Number, Years, Percent, Date int
	Money, MoneyPerShare, Bold, BoldTop, Wrap              int
}

// Column is one column of a sheet table.
type Column struct {
	Header string
	Width  float64
}

// Table writes one sheet: a styled, frozen header row with an autofilter,
// then rows.
type Table struct {
	sw   *excelize.StreamWriter
	row  int
	cols int
}

// WriteWorkbook writes valuation.xlsx. Every number comes from the Model;
// the Tranches sheet also carries a live Black-Scholes-Merton formula beside
// the tool's simplified-method value so that it can be recomputed in the
// workbook. Text from the input is written as text cells with a text
// format, never as a formula. Temporary files go to the system's temporary
// folder; see WriteWorkbookWith.
func WriteWorkbook(w io.Writer, m *Model) error { return WriteWorkbookWith(w, m, WorkbookOptions{}) }

// WorkbookOptions say how the workbook is made, not what it shows.
type WorkbookOptions struct {
	// TempDir holds the temporary files (the archive before its entries
	// are put in order, excelize's streamed sheets; together about the
	// size of the workbook and its largest sheet); "" is the system's
	// temporary folder. A caller that writes into a staging folder puts
	// them there, so that a killed run leaves nothing elsewhere.
	TempDir string
}

// WriteWorkbookWith is WriteWorkbook with options.
func WriteWorkbookWith(w io.Writer, m *Model, o WorkbookOptions) error {
	f := excelize.NewFile(excelize.Options{TmpDir: o.TempDir})
	defer f.Close()
	// excelize's archive goes to a temporary file, not memory (its Write
	// would build the whole archive in a bytes.Buffer first): for a large
	// ledger it is over a hundred megabytes. It is then copied to w in a
	// fixed entry order. Deflate runs at its fastest level: the sheets are
	// hundreds of megabytes of XML, and the default level spends most of
	// the time writing them for a file a few per cent smaller; large sheets
	// are compressed on all cores (deflate.go).
	tmp, err := os.CreateTemp(o.TempDir, "grantworth-xlsx-*")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name())
	defer tmp.Close()
	tw := bufio.NewWriterSize(tmp, 1<<20)
	f.SetZipWriter(func(io.Writer) excelize.ZipWriter {
		zw := zip.NewWriter(tw)
		zw.RegisterCompressor(zip.Deflate, func(out io.Writer) (io.WriteCloser, error) {
			return newParallelDeflate(out), nil
		})
		return zw
	})
	b := &Book{f: f, slow: slowSheets}
	if err := b.styles(m.Company.Currency); err != nil {
		return err
	}
	date := m.ValuationDate.Time().Format("2006-01-02T15:04:05Z")
	if err := f.SetDocProps(&excelize.DocProperties{
		Title:          "Fair value workbook: " + m.Company.Name,
		Creator:        m.Tool.Name + " " + m.Tool.Version,
		LastModifiedBy: m.Tool.Name + " " + m.Tool.Version,
		Created:        date,
		Modified:       date,
		Description:    m.Caution,
	}); err != nil {
		return err
	}
	full := true
	if err := f.SetCalcProps(&excelize.CalcPropsOptions{FullCalcOnLoad: &full}); err != nil {
		return err
	}
	steps := []SheetHook{
		{SheetSummary, writeSummary},
		{SheetAssumptions, writeAssumptions},
		{SheetGrants, writeGrants},
		{SheetTranches, writeTranches},
		{SheetSensitivity, writeSensitivity},
		{SheetConvergence, writeConvergence},
	}
	for _, h := range sheetHooks {
		if skip := sheetSkips[h.Name]; skip == nil || !skip(m) {
			steps = append(steps, h)
		}
	}
	steps = append(steps, SheetHook{SheetWarnings, writeWarnings}, SheetHook{SheetAbout, writeAbout})
	for i, s := range steps {
		if i == 0 {
			if err := f.SetSheetName("Sheet1", s.Name); err != nil {
				return err
			}
		} else if _, err := f.NewSheet(s.Name); err != nil {
			return err
		}
		if err := s.Write(b, m); err != nil {
			return fmt.Errorf("workbook sheet %s: %w", s.Name, err)
		}
	}
	f.SetActiveSheet(0)
	var none bytes.Buffer
	if err := f.Write(&none); err != nil {
		return err
	}
	if none.Len() != 0 {
		return fmt.Errorf("workbook: %d bytes of the archive went around the temporary file", none.Len())
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	size, err := tmp.Seek(0, io.SeekCurrent)
	if err != nil {
		return err
	}
	return canonicalZip(w, tmp, size, b.fast)
}

// canonicalZip copies the zip archive in to w with its entries in a fixed
// order ([Content_Types].xml first, then by name) and no timestamps.
// excelize writes streamed sheets in map order, which would make two runs
// differ; the entries are copied without recompressing.
//
// A worksheet holding a placeholder row is written anew with the rows of
// its fast writer in that row's place.
func canonicalZip(w io.Writer, in io.ReaderAt, size int64, fast []fastRows) error {
	zr, err := zip.NewReader(in, size)
	if err != nil {
		return err
	}
	files := append([]*zip.File(nil), zr.File...)
	sort.SliceStable(files, func(i, j int) bool {
		a, b := files[i].Name, files[j].Name
		if (a == "[Content_Types].xml") != (b == "[Content_Types].xml") {
			return a == "[Content_Types].xml"
		}
		return a < b
	})
	zw := zip.NewWriter(w)
	zw.RegisterCompressor(zip.Deflate, func(out io.Writer) (io.WriteCloser, error) {
		return newParallelDeflate(out), nil
	})
	spliced := 0
	for _, zf := range files {
		h := zf.FileHeader
		h.Modified = time.Time{}
		h.ModifiedDate, h.ModifiedTime = 0, 0
		h.Extra = nil
		if spliced < len(fast) && strings.HasPrefix(zf.Name, "xl/worksheets/") && zf.UncompressedSize64 < 1<<20 {
			done, err := spliceRows(zw, zf, h, fast)
			if err != nil {
				return err
			}
			if done {
				spliced++
				continue
			}
		}
		r, err := zf.OpenRaw()
		if err != nil {
			return err
		}
		dst, err := zw.CreateRaw(&h)
		if err != nil {
			return err
		}
		if _, err := io.Copy(dst, r); err != nil {
			return err
		}
	}
	if spliced != len(fast) {
		return fmt.Errorf("workbook: %d of %d placeholder rows were not found; their rows would be lost", len(fast)-spliced, len(fast))
	}
	return zw.Close()
}

// spliceRows writes entry zf anew with the rows of its fast writer in
// place of the placeholder row, if it holds one.
func spliceRows(zw *zip.Writer, zf *zip.File, h zip.FileHeader, fast []fastRows) (bool, error) {
	r, err := zf.Open()
	if err != nil {
		return false, err
	}
	data, err := io.ReadAll(r)
	r.Close()
	if err != nil {
		return false, err
	}
	i, end, k, ok := findPlaceholder(data)
	if !ok {
		return false, nil
	}
	if k >= len(fast) {
		return false, fmt.Errorf("workbook: placeholder %d of %d in %s", k, len(fast), zf.Name)
	}
	h.CRC32, h.CompressedSize64, h.UncompressedSize64 = 0, 0, 0
	h.CompressedSize, h.UncompressedSize = 0, 0
	h.Method = zip.Deflate
	dst, err := zw.CreateHeader(&h)
	if err != nil {
		return false, err
	}
	if _, err := dst.Write(data[:i]); err != nil {
		return false, err
	}
	// Large writes: the compressor works in pieces of a megabyte.
	bw := bufio.NewWriterSize(dst, 1<<20)
	if err := fast[k](bw); err != nil {
		return false, err
	}
	if err := bw.Flush(); err != nil {
		return false, err
	}
	_, err = dst.Write(data[end:])
	return true, err
}

func (b *Book) styles(currency string) error {
	cur := strings.Map(func(r rune) rune {
		if unicode.IsLetter(r) {
			return r
		}
		return -1
	}, currency)
	if cur == "" {
		cur = "USD"
	}
	fmts := []struct {
		dst *int
		st  excelize.Style
	}{
		{&b.Style.Header, excelize.Style{
			Font:      &excelize.Font{Bold: true, Color: "FFFFFF"},
			Fill:      excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"2F4858"}},
			Alignment: &excelize.Alignment{Vertical: "center", WrapText: true},
			Border:    []excelize.Border{{Type: "bottom", Color: "1B2A33", Style: 1}},
		}},
		{&b.Style.Text, excelize.Style{NumFmt: 49}},
		{&b.Style.Input, excelize.Style{NumFmt: 49, Alignment: &excelize.Alignment{Indent: 1}}},
		{&b.Style.Wrap, excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}}},
		{&b.Style.Int, excelize.Style{NumFmt: 3}},
		{&b.Style.Number, excelize.Style{CustomNumFmt: strPtr("#,##0.0000")}},
		{&b.Style.Years, excelize.Style{CustomNumFmt: strPtr("0.000")}},
		{&b.Style.Percent, excelize.Style{CustomNumFmt: strPtr("0.00%")}},
		{&b.Style.Date, excelize.Style{CustomNumFmt: strPtr("yyyy-mm-dd")}},
		{&b.Style.Money, excelize.Style{CustomNumFmt: strPtr(`#,##0.00\ "` + cur + `"`)}},
		{&b.Style.MoneyPerShare, excelize.Style{CustomNumFmt: strPtr(`#,##0.0000\ "` + cur + `"`)}},
		{&b.Style.Bold, excelize.Style{Font: &excelize.Font{Bold: true}}},
		{&b.Style.BoldTop, excelize.Style{Font: &excelize.Font{Bold: true}, Alignment: &excelize.Alignment{Vertical: "top"}}},
	}
	for _, s := range fmts {
		id, err := b.f.NewStyle(&s.st)
		if err != nil {
			return err
		}
		*s.dst = id
	}
	return nil
}

func strPtr(s string) *string { return &s }

// NewTable starts sheet name (which must exist) with a header row, frozen,
// with an autofilter over the header and the rows data rows that follow.
func (b *Book) NewTable(name string, cols []Column, rows int) (*Table, error) {
	last, err := excelize.CoordinatesToCellName(len(cols), rows+1)
	if err != nil {
		return nil, err
	}
	if err := b.f.AutoFilter(name, "A1:"+last, nil); err != nil {
		return nil, err
	}
	// Printed, a sheet is landscape and one page wide, header row repeated.
	land, one, none, fit := "landscape", 1, 0, true
	if err := b.f.SetPageLayout(name, &excelize.PageLayoutOptions{Orientation: &land, FitToWidth: &one, FitToHeight: &none}); err != nil {
		return nil, err
	}
	if err := b.f.SetSheetProps(name, &excelize.SheetPropsOptions{FitToPage: &fit}); err != nil {
		return nil, err
	}
	if err := b.f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles", RefersTo: "'" + name + "'!$1:$1", Scope: name}); err != nil {
		return nil, err
	}
	sw, err := b.f.NewStreamWriter(name)
	if err != nil {
		return nil, err
	}
	for i, c := range cols {
		if err := sw.SetColWidth(i+1, i+1, c.Width); err != nil {
			return nil, err
		}
	}
	if err := sw.SetPanes(&excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"}); err != nil {
		return nil, err
	}
	head := make([]any, len(cols))
	for i, c := range cols {
		head[i] = excelize.Cell{StyleID: b.Style.Header, Value: c.Header}
	}
	if err := sw.SetRow("A1", head, excelize.RowOpts{Height: 30}); err != nil {
		return nil, err
	}
	return &Table{sw: sw, row: 1, cols: len(cols)}, nil
}

// Row appends one row. Values are excelize.Cell (for a style or formula),
// numbers, or strings; use Book.Text for text from the input.
func (t *Table) Row(values ...any) error {
	cutCells(values)
	t.row++
	return t.sw.SetRow("A"+strconv.Itoa(t.row), values)
}

// TallRow appends one row of the given height in points.
func (t *Table) TallRow(height float64, values ...any) error {
	cutCells(values)
	t.row++
	return t.sw.SetRow("A"+strconv.Itoa(t.row), values, excelize.RowOpts{Height: height})
}

// Merge merges the cells from column first to column last (1-based) of the
// last row written.
func (t *Table) Merge(first, last int) error {
	a, err := excelize.CoordinatesToCellName(first, t.row)
	if err != nil {
		return err
	}
	b, err := excelize.CoordinatesToCellName(last, t.row)
	if err != nil {
		return err
	}
	return t.sw.MergeCell(a, b)
}

// Skip leaves n empty rows.
func (t *Table) Skip(n int) { t.row += n }

// RowNum is the sheet row number of the last row written.
func (t *Table) RowNum() int { return t.row }

// Close finishes the sheet.
func (t *Table) Close() error { return t.sw.Flush() }

// Text is a text cell for a value that came from the input: stored as an
// inline string with the text number format, so it can never be read as a
// formula, even when it starts with =, +, - or @.
func (b *Book) Text(s string) excelize.Cell {
	return excelize.Cell{StyleID: b.Style.Input, Value: s}
}

// Cell is a number or date with a style.
func (b *Book) Cell(style int, v any) excelize.Cell {
	return excelize.Cell{StyleID: style, Value: v}
}

// DateCell is a date cell, or an empty one for the zero Date.
func (b *Book) DateCell(d Date) any {
	if d.IsZero() {
		return nil
	}
	return excelize.Cell{StyleID: b.Style.Date, Value: d.Time()}
}

func writeSummary(b *Book, m *Model) error {
	type kv struct {
		k string
		v any
	}
	rows := []kv{
		{"Company", b.Text(m.Company.Name)},
		{"Currency", b.Text(m.Company.Currency)},
		{"Valuation date", b.DateCell(m.ValuationDate)},
		{"Period start", b.DateCell(m.PeriodStart)},
		{"Share-based awards: grants", b.Cell(b.Style.Int, m.Totals.Grants)},
		{"Share-based awards: tranches", b.Cell(b.Style.Int, m.Totals.Tranches)},
		{"Shares under award", b.Cell(b.Style.Int, m.Totals.Shares)},
		{"Total fair value of share-based awards", b.Cell(b.Style.Money, m.Totals.FairValueTotal)},
		{"Simplified-method BSM total", b.Cell(b.Style.Money, m.Totals.BSMSimplifiedTotal)},
		{"Lattice less simplified BSM", b.Cell(b.Style.Money, m.Totals.FairValueTotal-m.Totals.BSMSimplifiedTotal)},
	}
	if f := m.FinancingTotals; f.Grants > 0 {
		rows = append(rows,
			kv{"Financing warrants (not share-based payment): grants", b.Cell(b.Style.Int, f.Grants)},
			kv{"Financing warrants: fair value", b.Cell(b.Style.Money, f.FairValueTotal)})
	}
	if e := detail(m); e != nil {
		rows = append(rows,
			kv{"Compensation expense for the period", b.Cell(b.Style.Money, e.Amount)},
			kv{"Unrecognized compensation cost", b.Cell(b.Style.Money, m.Expense.UnrecognizedCost)},
			kv{"Weighted-average remaining years", b.Cell(b.Style.Years, m.Expense.WeightedAverageRemainingYears)})
		if len(e.Financing) > 0 {
			rows = append(rows, kv{"Change in fair value of warrant liability (financing)", b.Cell(b.Style.Money, e.FinancingFairValueChange)})
		}
	}
	rows = append(rows, kv{"Warnings", b.Cell(b.Style.Int, len(m.Warnings))})
	cols := []Column{{"Item", 46}, {"Value", 26}, {"Grants", 10}, {"Tranches", 10}, {"Shares", 14}, {"Fair value total", 22}, {"Fair value per share", 20}, {"Simplified BSM total", 22}}
	t, err := b.NewTable(SheetSummary, cols, len(rows))
	if err != nil {
		return err
	}
	for _, r := range rows {
		if err := t.Row(r.k, r.v); err != nil {
			return err
		}
	}
	for _, sec := range []struct {
		title  string
		groups []Group
	}{{"By instrument", m.ByInstrument}, {"By grant month", m.ByGrantMonth}} {
		t.Skip(1)
		head := []any{b.Cell(b.Style.Header, sec.title), b.Cell(b.Style.Header, "")}
		for _, h := range []string{"Grants", "Tranches", "Shares", "Fair value total", "Fair value per share", "Simplified BSM total"} {
			head = append(head, b.Cell(b.Style.Header, h))
		}
		if err := t.Row(head...); err != nil {
			return err
		}
		for _, g := range sec.groups {
			if err := groupRow(b, t, g); err != nil {
				return err
			}
		}
	}
	t.Skip(1)
	if err := t.TallRow(48, b.Cell(b.Style.BoldTop, "Caution"), b.Cell(b.Style.Wrap, m.Caution)); err != nil {
		return err
	}
	if err := t.Merge(2, len(cols)); err != nil {
		return err
	}
	return t.Close()
}

func groupRow(b *Book, t *Table, g Group) error {
	return t.Row(b.Text(g.Key), nil, b.Cell(b.Style.Int, g.Grants), b.Cell(b.Style.Int, g.Tranches),
		b.Cell(b.Style.Int, g.Shares), b.Cell(b.Style.Money, g.FairValueTotal),
		b.Cell(b.Style.MoneyPerShare, g.FairValuePerShare), b.Cell(b.Style.Money, g.BSMSimplifiedTotal))
}

// valueCell formats an assumption's value by its kind.
func (b *Book) valueCell(a Assumption) any {
	switch a.Kind {
	case KindPercent:
		return b.Cell(b.Style.Percent, a.Value)
	case KindMoney:
		return b.Cell(b.Style.MoneyPerShare, a.Value)
	case KindYears:
		return b.Cell(b.Style.Years, a.Value)
	case KindNumber:
		return b.Cell(b.Style.Number, a.Value)
	}
	return b.Text(a.Text)
}

func writeAssumptions(b *Book, m *Model) error {
	cols := []Column{{"Grant", 14}, {"Input", 26}, {"Value", 16}, {"As given", 18}, {"Cell", 18}, {"In force from", 12}, {"Source", 60}}
	as := m.Assumptions
	for i, rows := range sheetParts(len(as)) {
		t, err := b.partTable(SheetAssumptions, i, cols, rows)
		if err != nil {
			return err
		}
		for _, a := range as[:rows] {
			grant := a.GrantID
			if grant == "" {
				grant = "(all)"
			}
			if err := t.Row(b.Text(grant), b.Text(a.Name), b.valueCell(a), b.Text(a.Text), b.Text(a.Ref), b.DateCell(a.EffectiveDate), b.Text(a.Source)); err != nil {
				return err
			}
		}
		if err := t.Close(); err != nil {
			return err
		}
		as = as[rows:]
	}
	return nil
}

func writeGrants(b *Book, m *Model) error {
	cols := []Column{{"Grant", 14}, {"Holder", 14}, {"Instrument", 11}, {"Grant date", 12}, {"Measurement date", 13},
		{"Expiry date", 12}, {"Shares", 12}, {"Strike", 14}, {"Share price", 14}, {"Volatility", 11},
		{"Risk-free rate", 11}, {"Dividend yield", 11}, {"Exercise multiple", 10}, {"Exit rate", 10},
		{"Tranches", 9}, {"Fair value per share", 16}, {"Fair value total", 20}, {"Simplified BSM total", 20},
		{"Lattice less BSM", 18}, {"Method", 10}, {"Classification", 13}, {"Purpose", 13}, {"Hire date", 12}}
	t, err := b.NewTable(SheetGrants, cols, len(m.Grants))
	if err != nil {
		return err
	}
	s := b.Style
	for _, g := range m.Grants {
		var class any
		if g.Classification != "" {
			class = b.Text(g.Classification)
		}
		if err := t.Row(b.Text(g.ID), b.Text(g.Holder), b.Text(g.Instrument), b.DateCell(g.GrantDate),
			b.DateCell(g.MeasurementDate), b.DateCell(g.ExpiryDate), b.Cell(s.Int, g.Shares),
			b.Cell(s.MoneyPerShare, g.Strike), b.Cell(s.MoneyPerShare, g.SharePrice), b.Cell(s.Percent, g.Volatility),
			b.Cell(s.Percent, g.RiskFreeRate), b.Cell(s.Percent, g.DividendYield), b.Cell(s.Number, g.ExerciseMultiple),
			b.Cell(s.Percent, g.PostVestingExitRate), b.Cell(s.Int, len(g.Tranches)),
			b.Cell(s.MoneyPerShare, g.FairValuePerShare), b.Cell(s.Money, g.FairValueTotal),
			b.Cell(s.Money, g.BSMSimplifiedTotal), b.Cell(s.Money, g.FairValueTotal-g.BSMSimplifiedTotal),
			b.Text(g.Method), class, g.Purpose, b.DateCell(g.HireDate)); err != nil {
			return err
		}
	}
	return t.Close()
}

// Tranches sheet columns, by letter, for the formulas.
const (
	colSpot   = "G"
	colStrike = "H"
	colVest   = "J"
	colVol    = "K"
	colDiv    = "M"
	colTerm   = "S"
	colRate   = "T"
	colD1     = "V"
	colD2     = "W"
)

// bsmFormulas are the Black-Scholes-Merton call with dividend yield on the
// row's term and rate, in the file's formula syntax (NORM.S.DIST carries
// the _xlfn. prefix that the file format requires of functions added in
// Excel 2010; without it spreadsheet programs show #NAME?): d1, d2 and the
// value, each in its own column so that an auditor can follow them. An
// RSU's comparison value is the share price less the dividends forgone to
// vesting, and has no d1 or d2.
func bsmFormulas(row int, instrument string) (d1, d2, value string) {
	// Plain concatenation rather than fmt: this runs for every tranche of
	// a ledger that may have hundreds of thousands.
	n := strconv.Itoa(row)
	c := func(col string) string { return col + n }
	if instrument == RSU {
		return "", "", c(colSpot) + "*EXP(-" + c(colDiv) + "*" + c(colVest) + ")"
	}
	d1 = "(LN(" + c(colSpot) + "/" + c(colStrike) + ")+(" + c(colRate) + "-" + c(colDiv) + "+" + c(colVol) + "^2/2)*" + c(colTerm) +
		")/(" + c(colVol) + "*SQRT(" + c(colTerm) + "))"
	d2 = c(colD1) + "-" + c(colVol) + "*SQRT(" + c(colTerm) + ")"
	value = c(colSpot) + "*EXP(-" + c(colDiv) + "*" + c(colTerm) + ")*_xlfn.NORM.S.DIST(" + c(colD1) + ",TRUE)-" +
		c(colStrike) + "*EXP(-" + c(colRate) + "*" + c(colTerm) + ")*_xlfn.NORM.S.DIST(" + c(colD2) + ",TRUE)"
	return d1, d2, value
}

// TrancheColumns are the headers of the Tranches sheet.
var TrancheColumns = []Column{{"Grant", 14}, {"Holder", 14}, {"Instrument", 11}, {"Tranche", 8}, {"Vest date", 12},
	{"Shares", 11}, {"Share price", 13}, {"Strike", 13}, {"Years to expiry", 9}, {"Years to vest", 9},
	{"Volatility", 10}, {"Risk-free rate", 10}, {"Dividend yield", 10}, {"Exercise multiple", 9}, {"Exit rate", 9},
	{"Fair value per share", 14}, {"Error estimate", 11}, {"Expected term", 10}, {"Simplified term", 10},
	{"Simplified rate", 10}, {"Simplified BSM (tool)", 14}, {"d1 (formula)", 10}, {"d2 (formula)", 10},
	{"Simplified BSM (formula)", 14},
	{"Lattice less BSM", 13}, {"Fair value total", 18}}

// eachTranche calls f for n tranches of m in order, from the from-th
// (counting from 0 over all grants).
func eachTranche(m *Model, from, n int, f func(g *Grant, tr *Tranche) error) error {
	for i := range m.Grants {
		g := &m.Grants[i]
		if from >= len(g.Tranches) {
			from -= len(g.Tranches)
			continue
		}
		for j := from; j < len(g.Tranches) && n > 0; j++ {
			if err := f(g, &g.Tranches[j]); err != nil {
				return err
			}
			n--
		}
		from = 0
		if n == 0 {
			break
		}
	}
	return nil
}

// writeTranches writes a row per tranche, on as many sheets as they need
// (sheetsplit.go).
func writeTranches(b *Book, m *Model) error {
	n := 0
	for _, g := range m.Grants {
		n += len(g.Tranches)
	}
	fast := !b.slow && trancheRowsPlain(m)
	from := 0
	for i, rows := range sheetParts(n) {
		t, err := b.partTable(SheetTranches, i, TrancheColumns, rows)
		if err != nil {
			return err
		}
		if fast {
			err = b.fastTable(t, trancheRows(b, m, from, rows))
		} else {
			err = slowTrancheRows(b, t, m, from, rows)
		}
		if err != nil {
			return err
		}
		from += rows
	}
	return nil
}

// slowTrancheRows writes n tranche rows from the from-th through
// excelize, and closes t.
func slowTrancheRows(b *Book, t *Table, m *Model, from, n int) error {
	s := b.Style
	// The row's cells are built in place and passed by pointer, not boxed
	// one by one: the sheet has a row per tranche, hundreds of thousands
	// for a large ledger.
	var cells [26]excelize.Cell
	vals := make([]any, len(cells))
	err := eachTranche(m, from, n, func(g *Grant, tr *Tranche) error {
		row := t.RowNum() + 1
		d1, d2, bsm := bsmFormulas(row, g.Instrument)
		cells = [26]excelize.Cell{b.Text(g.ID), b.Text(g.Holder), b.Text(g.Instrument), b.Cell(s.Int, tr.Index),
			{StyleID: s.Date, Value: tr.VestDate.Time()}, b.Cell(s.Int, tr.Shares), b.Cell(s.MoneyPerShare, g.SharePrice),
			b.Cell(s.MoneyPerShare, g.Strike), b.Cell(s.Years, tr.YearsToExpiry), b.Cell(s.Years, tr.YearsToVest),
			b.Cell(s.Percent, g.Volatility), b.Cell(s.Percent, tr.RiskFreeRate), b.Cell(s.Percent, g.DividendYield),
			b.Cell(s.Number, g.ExerciseMultiple), b.Cell(s.Percent, g.PostVestingExitRate),
			b.Cell(s.MoneyPerShare, tr.FairValuePerShare), b.Cell(s.Number, tr.ErrorEstimate),
			b.Cell(s.Years, tr.ExpectedTermYears), b.Cell(s.Years, tr.SimplifiedTerm),
			b.Cell(s.Percent, tr.SimplifiedRate), b.Cell(s.MoneyPerShare, tr.BSMSimplifiedValue),
			{StyleID: s.Number, Formula: d1}, {StyleID: s.Number, Formula: d2}, {StyleID: s.MoneyPerShare, Formula: bsm},
			b.Cell(s.MoneyPerShare, tr.FairValuePerShare-tr.BSMSimplifiedValue),
			b.Cell(s.Money, tr.FairValueTotal)}
		for i := range cells {
			vals[i] = &cells[i]
		}
		if tr.VestDate.IsZero() {
			vals[4] = nil
		}
		if d1 == "" {
			vals[21], vals[22] = nil, nil
		}
		return t.Row(vals...)
	})
	if err != nil {
		return err
	}
	return t.Close()
}

func writeSensitivity(b *Book, m *Model) error {
	n := 0
	for _, s := range m.Sensitivity {
		n += len(s.Points)
	}
	cols := []Column{{"Input", 26}, {"Shift", 12}, {"Case", 22}, {"Total fair value", 22}, {"Change from base", 14}}
	t, err := b.NewTable(SheetSensitivity, cols, n)
	if err != nil {
		return err
	}
	for _, s := range m.Sensitivity {
		for _, p := range s.Points {
			if err := t.Row(s.Label, b.Cell(b.Style.Number, p.Shift), p.Label,
				b.Cell(b.Style.Money, p.FairValueTotal), b.Cell(b.Style.Percent, p.Change)); err != nil {
				return err
			}
		}
	}
	return t.Close()
}

func writeConvergence(b *Book, m *Model) error {
	cols := []Column{{"Grant", 14}, {"Tranche", 9}, {"Steps", 10}, {"Raw lattice value", 16}, {"Auto value", 14},
		{"Auto error estimate", 14}, {"Auto steps", 10}}
	var pts []ConvergencePoint
	if m.Convergence != nil {
		pts = m.Convergence.Points
	}
	t, err := b.NewTable(SheetConvergence, cols, len(pts))
	if err != nil {
		return err
	}
	s := b.Style
	if c := m.Convergence; c != nil {
		for _, p := range pts {
			if err := t.Row(b.Text(c.GrantID), b.Cell(s.Int, c.TrancheIndex), b.Cell(s.Int, p.Steps),
				b.Cell(s.MoneyPerShare, p.Value), b.Cell(s.MoneyPerShare, c.AutoValue),
				b.Cell(s.Number, c.AutoError), b.Cell(s.Int, c.AutoSteps)); err != nil {
				return err
			}
		}
	}
	if len(m.CrossChecks) > 0 {
		t.Skip(1)
		hs := []string{"Cross-check grant", "Tranche", "Method", "Lattice value", "Other method", "Standard error", "Paths", "Lattice error", "z"}
		head := make([]any, len(hs))
		for i, h := range hs {
			head[i] = b.Cell(s.Header, h)
		}
		if err := t.Row(head...); err != nil {
			return err
		}
		for _, x := range m.CrossChecks {
			if err := t.Row(b.Text(x.GrantID), b.Cell(s.Int, x.TrancheIndex), x.Method, b.Cell(s.MoneyPerShare, x.Lattice),
				b.Cell(s.MoneyPerShare, x.Value), b.Cell(s.Number, x.StdErr), b.Cell(s.Int, x.Paths),
				b.Cell(s.Number, x.LatticeError), b.Cell(s.Number, x.Z)); err != nil {
				return err
			}
		}
	}
	return t.Close()
}

func writeWarnings(b *Book, m *Model) error {
	t, err := b.NewTable(SheetWarnings, []Column{{"#", 6}, {"Warning", 120}}, len(m.Warnings))
	if err != nil {
		return err
	}
	for i, w := range m.Warnings {
		if err := t.Row(i+1, b.Text(w)); err != nil {
			return err
		}
	}
	return t.Close()
}

func writeAbout(b *Book, m *Model) error {
	rows := [][2]any{
		{"Tool", m.Tool.Name},
		{"Version", m.Tool.Version},
		{"Input", b.Text(m.Input.Path)},
		{"Input SHA-256", m.Input.SHA256},
		{"Valuation date", b.DateCell(m.ValuationDate)},
		{"Period start", b.DateCell(m.PeriodStart)},
		{"Lattice steps", m.Settings.Steps},
		{"Attribution", b.Text(m.Settings.Attribution)},
		{"Forfeitures", b.Text(m.Settings.Forfeitures)},
		{"Monte Carlo cross-check", m.Settings.MonteCarlo},
		{"Sensitivity runs", m.Settings.Sensitivities},
		{"Formulas", "Tranches columns V to X recompute the simplified-method Black-Scholes-Merton value from columns G, H, J, K, M, S and T with NORM.S.DIST; column U is the tool's own figure. Spreadsheet programs recalculate them when the file is opened."},
	}
	if len(b.split) > 0 {
		rows = append(rows, [2]any{"Continued sheets", "A sheet holds at most " + count(MaxSheetRows) + " rows, so long tables continue on numbered sheets, each with its header row, the rows in order: " +
			joinSplit(b.split) + ". valuation.json holds every row in one file."})
	}
	rows = append(rows, [2]any{"Caution", m.Caution})
	return writeItems(b, SheetAbout, rows)
}

// writeItems writes sheet as rows of an item and its value, a long text
// value wrapped in a taller row.
func writeItems(b *Book, sheet string, rows [][2]any) error {
	t, err := b.NewTable(sheet, []Column{{"Item", 26}, {"Value", 110}}, len(rows))
	if err != nil {
		return err
	}
	for _, r := range rows {
		v := r[1]
		if s, ok := v.(string); ok && len(s) > 100 {
			// The value column is 110 characters wide.
			if err := t.TallRow(15*float64(1+len(s)/100), b.Cell(b.Style.Wrap, r[0]), b.Cell(b.Style.Wrap, s)); err != nil {
				return err
			}
			continue
		}
		if err := t.Row(r[0], v); err != nil {
			return err
		}
	}
	return t.Close()
}
