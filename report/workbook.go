package report

import (
	"archive/zip"
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"

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
	// cur is the currency code that headers of amounts carry ("USD"):
	// the cells hold plain numbers.
	cur string
	// decimals is how many decimals a value of each number style keeps
	// (roundCell): sums carry float noise (129999.999999999) that no
	// reader should see.
	decimals map[int]int
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
//
// Money and MoneyPerShare are plain amounts: the header of their column
// names the currency (Book.Cur). MoneyTagged and PerShareTagged carry it
// in every cell, for a column that mixes amounts with other things.
// Shares is a count of shares that may be fractional (expected to vest),
// shown whole.
type Styles struct {
	Header, Text, Input, Int, Number, Years, Percent, Date int
	Money, MoneyPerShare, Bold, BoldTop, Wrap              int
	MoneyTagged, PerShareTagged, Shares, WrapInput         int
}

// Column is one column of a sheet table.
type Column struct {
	Header string
	Width  float64
}

// widthSample is how many rows fitWidths is shown: enough to meet every
// kind of value, without a pass over a ledger's every row.
const widthSample = 2000

// fitWidths widens each column of cols to hold the longest text under it
// (rows: the cells' text, column by column) and the longest word of its
// header (headers wrap), up to limit characters; no column gets narrower
// than asked. Widths are in the spreadsheet's characters.
func fitWidths(cols []Column, rows [][]string, limit float64) []Column {
	out := append([]Column(nil), cols...)
	for j := range out {
		w := out[j].Width
		for _, word := range strings.Fields(out[j].Header) {
			w = max(w, float64(utf8.RuneCountInString(word))*1.2+2) // bold
		}
		for _, r := range rows {
			if j < len(r) {
				w = max(w, float64(utf8.RuneCountInString(r[j]))+2)
			}
		}
		out[j].Width = min(w, max(limit, out[j].Width))
	}
	return out
}

// headerHeight is the height in points of a header row whose headers
// wrap within columns of widths characters: every line of the longest
// header shown, two lines at least.
func headerHeight(heads []string, widths []float64) float64 {
	lines := 2
	for i, h := range heads {
		if i >= len(widths) || h == "" {
			continue
		}
		// Bold text runs about a fifth wider than the column's characters.
		per := max(1, int((widths[i]-1)/1.2))
		n, line := 1, 0
		for _, w := range strings.Fields(h) {
			k := utf8.RuneCountInString(w)
			if line > 0 && line+1+k > per {
				n, line = n+1, k
			} else if line > 0 {
				line += 1 + k
			} else {
				line = k
			}
		}
		lines = max(lines, n)
	}
	return 13*float64(lines) + 4
}

// Table writes one sheet: a styled, frozen header row with an autofilter,
// then rows.
type Table struct {
	sw    *excelize.StreamWriter
	sheet string
	row   int
	cols  int
	// fast, on the fast path of Book.rows, writes the rows in sw's
	// place.
	fast *rowWriter
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
	b := &Book{f: f, slow: slowSheets, cur: m.Company.Currency}
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
	// No SetActiveSheet: a new file's first sheet is already the selected
	// tab (tabSelected in its sheet view, activeTab 0 by default), and
	// excelize's SetActiveSheet parses every sheet's XML to say so, the
	// streamed ones included (a large ledger's tens of megabytes of
	// Assumptions), only to throw the result away.
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
	if err := fast[k](dst); err != nil {
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
		{&b.Style.WrapInput, excelize.Style{NumFmt: 49, Alignment: &excelize.Alignment{WrapText: true}}},
		{&b.Style.Int, excelize.Style{NumFmt: 3}},
		{&b.Style.Shares, excelize.Style{CustomNumFmt: strPtr("#,##0")}}, // not NumFmt 3: a style of its own, rounded apart
		{&b.Style.Number, excelize.Style{CustomNumFmt: strPtr("#,##0.0###")}},
		{&b.Style.Years, excelize.Style{CustomNumFmt: strPtr("0.000")}},
		{&b.Style.Percent, excelize.Style{CustomNumFmt: strPtr("0.00%")}},
		{&b.Style.Date, excelize.Style{CustomNumFmt: strPtr("yyyy-mm-dd")}},
		{&b.Style.Money, excelize.Style{CustomNumFmt: strPtr("#,##0.00")}},
		{&b.Style.MoneyPerShare, excelize.Style{CustomNumFmt: strPtr("#,##0.0000")}},
		{&b.Style.MoneyTagged, excelize.Style{CustomNumFmt: strPtr(`#,##0.00\ "` + cur + `"`)}},
		{&b.Style.PerShareTagged, excelize.Style{CustomNumFmt: strPtr(`#,##0.0000\ "` + cur + `"`)}},
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
	st := b.Style
	b.decimals = map[int]int{st.Int: 0, st.Shares: 2, st.Number: 8, st.Years: 6, st.Percent: 8,
		st.Money: 2, st.MoneyTagged: 2, st.MoneyPerShare: 6, st.PerShareTagged: 6}
	return nil
}

// Cur is header h with the currency the amounts under it are in:
// "Fair value total (USD)".
func (b *Book) Cur(h string) string { return h + " (" + b.cur + ")" }

// roundCell is v rounded to the decimals its style keeps: cents for
// amounts, six decimals for values per share and years, eight for rates
// and plain numbers, whole numbers for counts. A value of another style
// is v.
func (b *Book) roundCell(style int, v float64) float64 {
	d, ok := b.decimals[style]
	if !ok {
		return v
	}
	return roundTo(d, v)
}

func strPtr(s string) *string { return &s }

// NewTable starts sheet name (which must exist) with a header row, frozen,
// with an autofilter over the header and the rows data rows that follow.
// The sheet declares that it fills the header and those rows (its
// <dimension>, which readers in streaming mode rely on); a sheet that
// writes more rows or columns says so with NewTableSpan.
func (b *Book) NewTable(name string, cols []Column, rows int) (*Table, error) {
	return b.NewTableSpan(name, cols, rows, rows+1, len(cols))
}

// NewTableSpan is NewTable for a sheet whose cells reach row lastRow and
// column lastCol (1-based), beyond the filtered table: sections stacked
// under it, a note beside it.
func (b *Book) NewTableSpan(name string, cols []Column, rows, lastRow, lastCol int) (*Table, error) {
	last, err := excelize.CoordinatesToCellName(len(cols), rows+1)
	if err != nil {
		return nil, err
	}
	if err := b.f.AutoFilter(name, "A1:"+last, nil); err != nil {
		return nil, err
	}
	end, err := excelize.CoordinatesToCellName(max(lastCol, len(cols), 1), max(lastRow, rows+1))
	if err != nil {
		return nil, err
	}
	if err := b.f.SetSheetDimension(name, "A1:"+end); err != nil {
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
	heads := make([]string, len(cols))
	widths := make([]float64, len(cols))
	for i, c := range cols {
		heads[i], widths[i] = c.Header, c.Width
	}
	if err := sw.SetRow("A1", head, excelize.RowOpts{Height: headerHeight(heads, widths)}); err != nil {
		return nil, err
	}
	return &Table{sw: sw, sheet: name, row: 1, cols: len(cols)}, nil
}

// Row appends one row. Values are excelize.Cell (for a style or formula),
// numbers, or strings; use Book.Text for text from the input.
func (t *Table) Row(values ...any) error { return t.put(0, values) }

// TallRow appends one row of the given height in points.
func (t *Table) TallRow(height float64, values ...any) error { return t.put(height, values) }

func (t *Table) put(height float64, values []any) error {
	cutCells(values)
	t.row++
	if t.fast != nil {
		return t.fast.values(t.row, height, values)
	}
	if height != 0 {
		return t.sw.SetRow("A"+strconv.Itoa(t.row), values, excelize.RowOpts{Height: height})
	}
	return t.sw.SetRow("A"+strconv.Itoa(t.row), values)
}

// Merge merges the cells from column first to column last (1-based) of the
// last row written.
func (t *Table) Merge(first, last int) error {
	if t.fast != nil {
		return fmt.Errorf("workbook: no merged cells on the fast rows")
	}
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
func (t *Table) Close() error {
	if t.fast != nil {
		return t.fast.flush()
	}
	return t.sw.Flush()
}

// Text is a text cell for a value that came from the input: stored as an
// inline string with the text number format, so it can never be read as a
// formula, even when it starts with =, +, - or @.
func (b *Book) Text(s string) excelize.Cell {
	return excelize.Cell{StyleID: b.Style.Input, Value: s}
}

// Cell is a number or date with a style; a float is rounded to the
// decimals the style keeps (roundCell).
func (b *Book) Cell(style int, v any) excelize.Cell {
	if f, ok := v.(float64); ok {
		v = b.roundCell(style, f)
	}
	return excelize.Cell{StyleID: style, Value: v}
}

// Amount is a cell of style for v, or an empty cell when ok is false: a
// line with no such value (a weighted average over no shares, an
// exercise of an RSU) is blank, not 0.
func (b *Book) Amount(style int, v float64, ok bool) any {
	if !ok {
		return nil
	}
	return b.Cell(style, v)
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
		{"Shares granted", b.Cell(b.Style.Int, m.Totals.Shares)},
		{b.Cur("Fair value of every award granted, each at its measurement date"), b.Cell(b.Style.Money, m.Totals.FairValueTotal)},
	}
	if o := outstandingOf(m); o.OK {
		rows = append(rows,
			kv{"Outstanding at the period end: shares", b.Cell(b.Style.Int, o.Shares)},
			kv{b.Cur("Outstanding at the period end: grant-date fair value"), b.Cell(b.Style.Money, o.FairValue)})
	}
	rows = append(rows,
		kv{b.Cur("Simplified-method BSM total, every award granted"), b.Cell(b.Style.Money, m.Totals.BSMSimplifiedTotal)},
		kv{b.Cur("Lattice less simplified BSM"), b.Cell(b.Style.Money, m.Totals.FairValueTotal-m.Totals.BSMSimplifiedTotal)})
	if f := m.FinancingTotals; f.Grants > 0 {
		rows = append(rows,
			kv{"Financing warrants (not share-based payment): grants", b.Cell(b.Style.Int, f.Grants)},
			kv{b.Cur("Financing warrants: fair value"), b.Cell(b.Style.Money, f.FairValueTotal)})
	}
	if e := detail(m); e != nil {
		rows = append(rows,
			kv{b.Cur("Compensation expense for the period"), b.Cell(b.Style.Money, e.Amount)},
			kv{b.Cur("Unrecognized compensation cost"), b.Cell(b.Style.Money, m.Expense.UnrecognizedCost)},
			kv{"Weighted-average remaining years", b.Cell(b.Style.Years, m.Expense.WeightedAverageRemainingYears)})
		if len(e.Financing) > 0 {
			rows = append(rows, kv{b.Cur("Change in fair value of warrant liability (financing)"), b.Cell(b.Style.Money, e.FinancingFairValueChange)})
		}
	}
	rows = append(rows, kv{"Warnings", b.Cell(b.Style.Int, len(m.Warnings))})
	groupHead := []string{"Grants", "Tranches", "Shares", b.Cur("Fair value total"), b.Cur("Fair value per share"), b.Cur("Simplified BSM total")}
	cols := []Column{{"Item", 46}, {"Value", 26}}
	for _, h := range groupHead {
		cols = append(cols, Column{h, 14})
	}
	labels := make([][]string, 0, len(rows)+len(m.ByInstrument)+len(m.ByGrantMonth))
	for _, r := range rows {
		labels = append(labels, []string{r.k, m.Company.Name})
	}
	for _, g := range append(append([]Group(nil), m.ByInstrument...), m.ByGrantMonth...) {
		labels = append(labels, []string{g.Key})
	}
	cols = fitWidths(cols, labels, 70)
	// The table, a blank row and a header row before each group, a blank
	// row and the caution.
	last := 1 + len(rows) + 2 + len(m.ByInstrument) + 2 + len(m.ByGrantMonth) + 2
	t, err := b.NewTableSpan(SheetSummary, cols, len(rows), last, len(cols))
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
		for _, h := range groupHead {
			head = append(head, b.Cell(b.Style.Header, h))
		}
		widths := make([]float64, len(cols))
		for i, c := range cols {
			widths[i] = c.Width
		}
		if err := t.TallRow(headerHeight(append([]string{sec.title, ""}, groupHead...), widths), head...); err != nil {
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
	switch style, kind := b.valueKind(a); kind {
	case valueWhole:
		return b.Cell(style, int64(a.Value))
	case valueNumber:
		return b.Cell(style, a.Value)
	}
	return b.Text(a.Text)
}

// The kinds of an assumption's Value cell.
const (
	valueText   = iota // its text
	valueWhole         // a whole number (shares): no decimals
	valueNumber        // a number rounded by its style
)

// valueKind is the style and kind of assumption a's Value cell.
func (b *Book) valueKind(a Assumption) (style, kind int) {
	switch a.Kind {
	case KindPercent:
		return b.Style.Percent, valueNumber
	case KindMoney:
		return b.Style.PerShareTagged, valueNumber // a column of every kind of value: the cell says its currency
	case KindYears:
		return b.Style.Years, valueNumber
	case KindNumber:
		if a.Value == math.Trunc(a.Value) && math.Abs(a.Value) < 1e15 {
			return b.Style.Int, valueWhole
		}
		return b.Style.Number, valueNumber
	}
	return b.Style.Input, valueText
}

// assumptionRow writes on the fast rows (w) the cells of an Assumptions
// row that writeAssumptions gives Table.Row, without boxing each into an
// interface value: the sheet has a row per input of every grant.
func (b *Book) assumptionRow(w *rowWriter, row int, height float64, grant string, a Assumption, srcStyle int) error {
	if err := w.start(row, height); err != nil {
		return err
	}
	in := b.Style.Input
	w.text(1, in, grant)
	w.text(2, in, a.Name)
	switch style, kind := b.valueKind(a); kind {
	case valueWhole:
		w.int(3, style, int64(a.Value))
	case valueNumber:
		if finite(a.Value) {
			w.float(3, style, a.Value)
		} else {
			w.text(3, style, fmt.Sprint(a.Value)) // as rowWriter.cell writes it
		}
	default:
		w.text(3, style, a.Text)
	}
	w.text(4, in, a.Text)
	w.text(5, in, a.Ref)
	if err := w.cell(6, b.DateCell(a.EffectiveDate)); err != nil {
		return err
	}
	w.text(7, srcStyle, a.Source)
	return w.end()
}

func writeAssumptions(b *Book, m *Model) error {
	// Widths from the content, the source wrapped within a column of at
	// most sourceWidth characters.
	const sourceWidth = 70
	cols := []Column{{"Grant", 8}, {"Input", 8}, {"Value", 12}, {"As given", 10}, {"Cell", 8}, {"In force from", 12}, {"Source", 20}}
	text := make([][]string, 0, min(len(m.Assumptions), widthSample))
	for _, a := range m.Assumptions[:min(len(m.Assumptions), widthSample)] {
		text = append(text, []string{a.GrantID, a.Name, assumptionText(a, m.Company.Currency) + " " + m.Company.Currency, a.Text, a.Ref, "", a.Source})
	}
	cols = fitWidths(cols, text, sourceWidth)
	as := m.Assumptions
	for i, rows := range sheetParts(len(as)) {
		t, err := b.partTable(SheetAssumptions, i, cols, rows)
		if err != nil {
			return err
		}
		part := as[:rows]
		err = b.rows(t, func(t *Table) error {
			cells := make([]any, 7)
			for _, a := range part {
				grant := a.GrantID
				if grant == "" {
					grant = "(all)"
				}
				src, height := b.Text(a.Source), 0.0
				if n := utf8.RuneCountInString(a.Source); float64(n) > cols[6].Width-2 {
					// Wrapped, in a row as tall as its lines: spreadsheet
					// programs do not all fit a row's height to wrapped
					// text. A row is at most 409 points tall (the file
					// format's limit); a longer source is shown in part,
					// the rest a click away.
					src.StyleID = b.Style.WrapInput
					height = min(excelize.MaxRowHeight, 15*math.Ceil(float64(n)/(cols[6].Width-4)))
				}
				if t.fast != nil {
					t.row++
					if err := b.assumptionRow(t.fast, t.row, height, grant, a, src.StyleID); err != nil {
						return err
					}
					continue
				}
				cells[0], cells[1], cells[2], cells[3], cells[4], cells[5], cells[6] =
					b.Text(grant), b.Text(a.Name), b.valueCell(a), b.Text(a.Text), b.Text(a.Ref), b.DateCell(a.EffectiveDate), src
				if err := t.TallRow(height, cells...); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			return err
		}
		as = as[rows:]
	}
	return nil
}

func writeGrants(b *Book, m *Model) error {
	cols := []Column{{"Grant", 14}, {"Holder", 14}, {"Instrument", 11}, {"Grant date", 12}, {"Measurement date", 13},
		{"Expiry date", 12}, {"Shares", 12}, {b.Cur("Strike"), 14}, {b.Cur("Share price"), 14}, {"Volatility", 11},
		{"Risk-free rate", 11}, {"Dividend yield", 11}, {"Exercise multiple", 10}, {"Exit rate", 10},
		{"Tranches", 9}, {b.Cur("Fair value per share"), 16}, {b.Cur("Fair value total"), 20}, {b.Cur("Simplified BSM total"), 20},
		{b.Cur("Lattice less BSM"), 18}, {"Method", 10}, {"Classification", 13}, {"Purpose", 13}, {"Hire date", 12}}
	ids := make([][]string, 0, min(len(m.Grants), widthSample))
	for _, g := range m.Grants[:min(len(m.Grants), widthSample)] {
		ids = append(ids, []string{g.ID, g.Holder, g.Instrument})
	}
	cols = fitWidths(cols, ids, 40)
	t, err := b.NewTable(SheetGrants, cols, len(m.Grants))
	if err != nil {
		return err
	}
	s := b.Style
	return b.rows(t, func(t *Table) error {
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
		return nil
	})
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
	n := strconv.Itoa(row)
	if instrument == RSU {
		return "", "", bsmRSU.at(n)
	}
	return bsmD1.at(n), bsmD2.at(n), bsmValue.at(n)
}

// rowFormula is a formula of a Tranches row: its text cut where the row
// number goes, so that a row's formula is written without building it
// (trancheRows) and contains no character XML escapes.
type rowFormula []string

// at is the formula on row n.
func (f rowFormula) at(n string) string { return strings.Join(f, n) }

// newRowFormula is the formula of the cells of columns cols on the same
// row: each "%" of text stands for the next column's cell.
func newRowFormula(text string, cols ...string) rowFormula {
	parts := strings.Split(text, "%")
	if len(parts) != len(cols)+1 {
		panic("newRowFormula: " + text)
	}
	f := rowFormula{parts[0]}
	for i, col := range cols {
		f[len(f)-1] += col
		f = append(f, parts[i+1])
	}
	return f
}

// The simplified-method formulas of a Tranches row.
var (
	bsmD1 = newRowFormula("(LN(%/%)+(%-%+%^2/2)*%)/(%*SQRT(%))",
		colSpot, colStrike, colRate, colDiv, colVol, colTerm, colVol, colTerm)
	bsmD2    = newRowFormula("%-%*SQRT(%)", colD1, colVol, colTerm)
	bsmValue = newRowFormula("%*EXP(-%*%)*_xlfn.NORM.S.DIST(%,TRUE)-%*EXP(-%*%)*_xlfn.NORM.S.DIST(%,TRUE)",
		colSpot, colDiv, colTerm, colD1, colStrike, colRate, colTerm, colD2)
	bsmRSU = newRowFormula("%*EXP(-%*%)", colSpot, colDiv, colVest)
)

// trancheAmountColumns are the columns of TrancheColumns (0-based) in
// the currency, which their headers name.
var trancheAmountColumns = []int{6, 7, 15, 16, 20, 23, 24, 25}

// TrancheColumns are the headers of the Tranches sheet (the currency is
// added to those of trancheAmountColumns).
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
	cols := append([]Column(nil), TrancheColumns...)
	for _, i := range trancheAmountColumns {
		cols[i].Header = b.Cur(cols[i].Header)
	}
	fast := !b.slow && trancheRowsPlain(m)
	from := 0
	for i, rows := range sheetParts(n) {
		t, err := b.partTable(SheetTranches, i, cols, rows)
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
	cols := []Column{{"Input", 26}, {"Shift", 12}, {"Case", 22}, {b.Cur("Total fair value"), 22}, {"Change from base", 14}}
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
	cols := []Column{{"Grant", 14}, {"Tranche", 9}, {"Steps", 10}, {b.Cur("Raw lattice value"), 16}, {b.Cur("Auto value"), 14},
		{"Auto error estimate", 14}, {"Auto steps", 10}}
	var pts []ConvergencePoint
	if m.Convergence != nil {
		pts = m.Convergence.Points
	}
	last, lastCol := len(pts)+1, len(cols)
	if len(m.CrossChecks) > 0 {
		last, lastCol = last+2+len(m.CrossChecks), 9
	}
	t, err := b.NewTableSpan(SheetConvergence, cols, len(pts), last, lastCol)
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
		hs := []string{"Cross-check grant", "Tranche", "Method", b.Cur("Lattice value"), b.Cur("Other method"), "Standard error", "Paths", "Lattice error", "z"}
		head := make([]any, len(hs))
		widths := make([]float64, len(hs))
		for i, h := range hs {
			head[i] = b.Cell(s.Header, h)
			widths[i] = 14
			if i < len(cols) {
				widths[i] = cols[i].Width
			}
		}
		if err := t.TallRow(headerHeight(hs, widths), head...); err != nil {
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
