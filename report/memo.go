package report

import (
	"bytes"
	"fmt"
	"io"
	"io/fs"
	"strings"
	"text/template"
	"time"

	"github.com/jung-kurt/gofpdf"
	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/goitalic"
	"golang.org/x/image/font/gofont/goregular"
	"gonum.org/v1/plot/vg"

	"grantworth/templates"
)

// MemoHook adds one numbered section to the memo. Other files of this
// package register hooks in an init function (for example the expense and
// disclosure sections); they come after the comparison with
// Black-Scholes-Merton and before the warnings.
type MemoHook struct {
	Key   string // for cross-references from templates: {{sec "key"}}
	Title string
	Write func(d *Memo, m *Model) error
}

var memoHooks []MemoHook

// memoSkips leave a hook's section (by Key) out of a memo it reports true
// for: a section with nothing to show.
var memoSkips = map[string]func(m *Model) bool{}

// Memo is the PDF being written. Hooks use its methods so that their
// sections look like the others.
type Memo struct {
	pdf      pdfDoc // gofpdf, with every text through MemoText
	m        *Model
	tpl      *template.Template
	sections map[string]int
	images   int
	widths   map[int]bool // pixel widths of the images placed so far
	sub      string       // a sub-heading not drawn yet: it goes with what follows
	head     [2]string    // the running head's left and right text (pages after the first)
	paper    Paper
}

// Paper is a page size of the reports.
type Paper struct {
	Name string  // as gofpdf knows it: "A4" or "Letter"
	W, H float64 // millimetres
}

// The reports' page sizes: ISO A4, and US Letter (8.5 × 11 inches).
var (
	PaperA4     = Paper{"A4", 210, 297}
	PaperLetter = Paper{"Letter", 215.9, 279.4}
)

// PaperFor is the memo's page size: the one the Company sheet names
// (paper_size "a4" or "letter"), else Letter for a company that reports
// in US dollars and A4 for any other.
func PaperFor(c Company) Paper {
	switch strings.ToLower(c.PaperSize) {
	case "letter":
		return PaperLetter
	case "a4":
		return PaperA4
	}
	if c.Currency == "USD" {
		return PaperLetter
	}
	return PaperA4
}

// Page geometry, in millimetres. The text block is textW wide on either
// paper, centred across the page.
const (
	marginT       = 22.0
	marginB       = 20.0
	textW         = 170.0
	bodySize      = 9.5
	bodyLine      = 4.6
	tableSize     = 7.5
	tableLine     = 3.6
	fontSans      = "gosans"
	maxGrantRows  = 150 // above this the memo groups grants by grant month
	maxDetailRows = 150 // assumption and warning rows listed in full up to this
)

// WriteMemo writes memo.pdf. Dates in the PDF's metadata are the valuation
// date and its resource catalogs are sorted, so the same Model gives the
// same bytes. (gofpdf's font subsetting of Go Mono varied from run to run
// in the glyph metrics it wrote, so the memo uses Go Regular, Bold and
// Italic only.)
func WriteMemo(w io.Writer, m *Model) error {
	d, err := newMemo(m)
	if err != nil {
		return err
	}
	steps := []MemoHook{
		{"summary", "Summary", (*Memo).summary},
		{"methodology", "Methodology", (*Memo).methodology},
		{"assumptions", "Assumptions and their sources", (*Memo).assumptions},
		{"results", "Results by grant and instrument", (*Memo).results},
		{"warrants", "Warrants", (*Memo).warrants},
		{"sensitivity", "Sensitivity of total fair value", (*Memo).sensitivity},
		{"convergence", "Convergence of the lattice", (*Memo).convergence},
		{"comparison", "Lattice against simplified-method Black-Scholes-Merton", (*Memo).comparison},
	}
	for _, h := range memoHooks {
		if skip := memoSkips[h.Key]; skip == nil || !skip(m) {
			steps = append(steps, h)
		}
	}
	steps = append(steps,
		MemoHook{"warnings", "Warnings", (*Memo).warnings},
		MemoHook{"caution", "Caution", (*Memo).caution})
	for i, s := range steps {
		d.sections[s.Key] = i + 1
	}
	d.cover()
	for i, s := range steps {
		newPage := map[string]bool{"summary": true, "methodology": true, "results": true, "sensitivity": true}[s.Key]
		// The caution is kept on one page: it is the part no reader may miss.
		keep := map[string]float64{"caution": 80}[s.Key]
		d.section(i+1, s.Title, newPage, keep)
		if err := s.Write(d, m); err != nil {
			return fmt.Errorf("memo section %s: %w", s.Title, err)
		}
		if err := d.pdf.Error(); err != nil {
			return fmt.Errorf("memo section %s: %w", s.Title, err)
		}
	}
	return d.pdf.Output(w)
}

func newMemo(m *Model) (*Memo, error) {
	author := m.Tool.Name + " " + m.Tool.Version
	paper := PaperFor(m.Company)
	pdf := newPDF(paper, "Fair value memo: "+m.Company.Name, "Fair value of share-based awards as of "+m.ValuationDate.String(), author, m.Tool.Name, m.ValuationDate.Time())
	d := &Memo{pdf: pdf, m: m, sections: map[string]int{}, widths: map[int]bool{}, paper: paper,
		head: runningHead(m)}
	pdf.SetHeaderFuncMode(d.header, false)
	pdf.SetFooterFunc(d.footer)
	var err error
	if d.tpl, err = d.templates(templates.Memo, "memo"); err != nil {
		return nil, err
	}
	return d, pdf.Error()
}

// runningHead is the left and right text at the top of every page but
// the first: whom the memo is for and who prepared it, when the Company
// sheet says so, and the valuation date.
func runningHead(m *Model) [2]string {
	left := m.Company.Name + " · Fair value memo"
	if c := m.Company.Client; c != "" && c != m.Company.Name {
		left = c + " · " + left
	}
	right := "Valuation date " + m.ValuationDate.String()
	if p := m.Company.Preparer; p != "" {
		right = "Prepared by " + p + " · " + right
	}
	return [2]string{left, right}
}

// newPDF is a document on paper in the reports' fonts and margins, its
// metadata dated date, so that the same input gives the same bytes.
func newPDF(paper Paper, title, subject, author, producer string, date time.Time) pdfDoc {
	pdf := pdfDoc{gofpdf.New("P", "mm", paper.Name, "")}
	pdf.SetCompression(true)
	pdf.SetCatalogSort(true)
	pdf.SetCreationDate(date)
	pdf.SetModificationDate(date)
	pdf.SetTitle(title, true)
	pdf.SetSubject(subject, true)
	pdf.SetAuthor(author, true)
	pdf.SetCreator(author, true)
	pdf.SetProducer(producer, true)
	pdf.AddUTF8FontFromBytes(fontSans, "", goregular.TTF)
	pdf.AddUTF8FontFromBytes(fontSans, "B", gobold.TTF)
	pdf.AddUTF8FontFromBytes(fontSans, "I", goitalic.TTF)
	pdf.SetMargins((paper.W-textW)/2, marginT, (paper.W-textW)/2)
	pdf.SetAutoPageBreak(true, marginB)
	pdf.AliasNbPages("{nb}")
	return pdf
}

// templates parses the *.tmpl files of folder dir of fsys with the
// memo's template functions.
func (d *Memo) templates(fsys fs.FS, dir string) (*template.Template, error) {
	tpl := template.New(dir).Funcs(template.FuncMap{
		"money":     money,
		"perShare":  perShare,
		"pct":       pct,
		"signedPct": signedPct,
		"relation":  relation,
		"fixed":     fixed,
		"count":     func(n any) string { return fmt.Sprint(groupAny(n)) },
		"sec":       func(key string) string { return fmt.Sprint(d.sections[key]) },
		"counted":   counted,
		"first": func(ps []ConvergencePoint) string {
			if len(ps) == 0 {
				return "–"
			}
			return count(ps[0].Steps)
		},
		"last": func(ps []ConvergencePoint) string {
			if len(ps) == 0 {
				return "–"
			}
			return count(ps[len(ps)-1].Steps)
		},
	})
	sub, err := fs.Sub(fsys, dir)
	if err != nil {
		return nil, err
	}
	return tpl.ParseFS(sub, "*.tmpl")
}

func groupAny(n any) string {
	switch v := n.(type) {
	case int:
		return count(v)
	case int64:
		return count(v)
	case float64:
		return groupDigits(v, 0)
	}
	return fmt.Sprint(n)
}

func (d *Memo) header() {
	if d.pdf.PageNo() == 1 {
		return
	}
	p := d.pdf
	p.SetFont(fontSans, "", 7.5)
	p.SetTextColor(90, 90, 90)
	p.SetXY(d.marginL(), 10)
	p.CellFormat(textW/2, 4, d.head[0], "", 0, "L", false, 0, "")
	p.CellFormat(textW/2, 4, d.head[1], "", 0, "R", false, 0, "")
	p.SetDrawColor(180, 180, 180)
	p.SetLineWidth(0.2)
	p.Line(d.marginL(), 15, d.paper.W-d.marginL(), 15)
	p.SetTextColor(0, 0, 0)
	p.SetXY(d.marginL(), marginT)
}

func (d *Memo) footer() {
	p := d.pdf
	p.SetY(-13)
	p.SetFont(fontSans, "", 7)
	p.SetTextColor(90, 90, 90)
	p.CellFormat(textW*0.75, 4, "An estimate, not an audit opinion: see the Caution section.", "", 0, "L", false, 0, "")
	p.CellFormat(textW*0.25, 4, fmt.Sprintf("Page %d of {nb}", p.PageNo()), "", 0, "R", false, 0, "")
	p.SetTextColor(0, 0, 0)
}

// titlePage starts a document's first page: the band across its top, then
// at y the kind of document over its title; scale 1 for a cover page,
// less for a title above other matter.
func (d *Memo) titlePage(y, scale float64, kind, title string) {
	p := d.pdf
	p.AddPage()
	p.SetFillColor(0x2F, 0x48, 0x58)
	p.Rect(0, 0, d.paper.W, 8, "F")
	p.SetY(y)
	p.SetFont(fontSans, "", 12*scale)
	p.SetTextColor(0x2F, 0x48, 0x58)
	p.CellFormat(textW, 7*scale, kind, "", 1, "L", false, 0, "")
	p.SetFont(fontSans, "B", 24*scale)
	p.SetTextColor(0, 0, 0)
	p.MultiCell(textW, 11*scale, title, "", "L", false)
}

// cautionBox draws the caution, boxed, at the foot of the current page in
// text of size points, or at the foot of a new page when what is on this
// one reaches too low.
func (d *Memo) cautionBox(caution string, size float64) {
	p := d.pdf
	line := size * 0.494 // millimetres per line
	p.SetFont(fontSans, "", size)
	lines := p.SplitText(caution, textW-10)
	h := float64(len(lines))*line + 12
	if p.GetY()+h+6 > d.pageH()-marginB {
		p.AddPage()
	}
	y := d.pageH() - marginB - h - 6
	p.SetFillColor(0xF3, 0xEE, 0xE4)
	p.Rect(d.marginL(), y, textW, h, "F")
	p.SetXY(d.marginL()+5, y+4)
	p.SetFont(fontSans, "B", size)
	p.CellFormat(textW-10, line, "Caution", "", 2, "L", false, 0, "")
	p.SetFont(fontSans, "", size)
	p.MultiCell(textW-10, line, caution, "", "L", false)
}

func (d *Memo) cover() {
	p, m := d.pdf, d.m
	d.titlePage(62, 1, "Fair value of share-based awards", m.Company.Name)
	p.Ln(2)
	p.SetFont(fontSans, "", 12)
	p.CellFormat(textW, 7, "Valuation memo as of "+m.ValuationDate.String(), "", 1, "L", false, 0, "")
	if !m.PeriodStart.IsZero() {
		p.CellFormat(textW, 7, "Reporting period "+m.PeriodStart.String()+" to "+m.ValuationDate.String(), "", 1, "L", false, 0, "")
	}
	p.Ln(14)
	cur := m.Company.Currency
	var rows [][2]string
	if c := m.Company.Client; c != "" && c != m.Company.Name {
		rows = append(rows, [2]string{"Prepared for", c})
	}
	if pr := m.Company.Preparer; pr != "" {
		rows = append(rows, [2]string{"Prepared by", pr})
	}
	rows = append(rows,
		[2]string{"Share-based awards", count(m.Totals.Grants) + " grants, " + count(m.Totals.Tranches) + " vesting tranches"},
		[2]string{"Fair value granted", money(m.Totals.FairValueTotal, cur) + " over " + count(m.Totals.Shares) + " shares: every award in the schedule, at its measurement date (grant date; a liability-classified award at the period end)"})
	if o := outstandingOf(m); o.OK {
		rows = append(rows, [2]string{"Still outstanding", money(o.FairValue, cur) + " over " + count(o.Shares) + " shares at the period end, at grant-date fair value (options and warrants not exercised, forfeited, cancelled or expired; RSUs not yet vested)"})
	}
	if f := m.FinancingTotals; f.Grants > 0 {
		rows = append(rows, [2]string{"Financing warrants", fmt.Sprintf("%s, fair value %s (not share-based payment; kept apart)",
			counted(f.Grants, "grant"), money(f.FairValueTotal, cur))})
	}
	rows = append(rows, [2]string{"Prepared with", m.Tool.Name + " " + m.Tool.Version}, [2]string{"Input", m.Input.Path})
	for _, r := range rows {
		p.SetFont(fontSans, "", 9.5)
		p.SetTextColor(90, 90, 90)
		p.CellFormat(38, 6, r[0], "", 0, "L", false, 0, "")
		p.SetTextColor(0, 0, 0)
		p.MultiCell(textW-38, 6, r[1], "", "L", false)
	}
	p.SetFont(fontSans, "", 9.5)
	p.SetTextColor(90, 90, 90)
	p.CellFormat(38, 6, "Input SHA-256", "", 0, "L", false, 0, "")
	p.SetTextColor(0, 0, 0)
	p.SetFont(fontSans, "", 8)
	p.MultiCell(textW-38, 6, m.Input.SHA256, "", "L", false)
	d.cautionBox(m.Caution, 8.5) // at the foot of the cover
}

// Section starts numbered section n, on a new page if asked or if little
// room is left.
func (d *Memo) Section(n int, title string, newPage bool) { d.section(n, title, newPage, 0) }

// section is Section that also starts a new page unless keep millimetres
// are left.
func (d *Memo) section(n int, title string, newPage bool, keep float64) {
	d.flushSub(0)
	p := d.pdf
	if newPage || p.GetY() > d.pageH()-marginB-max(45, keep) {
		p.AddPage()
	} else {
		p.Ln(6)
	}
	p.SetFont(fontSans, "B", 14)
	p.SetTextColor(0x2F, 0x48, 0x58)
	p.MultiCell(textW, 7, fmt.Sprintf("%d. %s", n, title), "", "L", false)
	p.SetTextColor(0, 0, 0)
	p.Ln(2)
}

// Sub is a sub-heading. It is drawn with whatever comes next, on the same
// page, so that it is never left alone at the foot of a page.
func (d *Memo) Sub(title string) {
	d.flushSub(0)
	d.sub = title
}

// flushSub draws a pending sub-heading, first starting a new page unless
// the heading and next millimetres of what follows it fit.
func (d *Memo) flushSub(next float64) {
	if d.sub == "" {
		return
	}
	title := d.sub
	d.sub = ""
	p := d.pdf
	d.need(9 + next)
	p.Ln(2)
	p.SetFont(fontSans, "B", 10.5)
	p.MultiCell(textW, 5.5, title, "", "L", false)
	p.Ln(0.5)
}

// Para is a paragraph of body text.
func (d *Memo) Para(text string) {
	d.flushSub(3 * bodyLine)
	p := d.pdf
	p.SetFont(fontSans, "", bodySize)
	p.MultiCell(textW, bodyLine, text, "", "L", false)
	p.Ln(1.8)
}

// Note is a small italic line, for pointers to the workbook.
func (d *Memo) Note(text string) {
	d.flushSub(12)
	p := d.pdf
	p.SetFont(fontSans, "I", 8)
	p.SetTextColor(70, 70, 70)
	p.MultiCell(textW, 3.8, text, "", "L", false)
	p.SetTextColor(0, 0, 0)
	p.Ln(1.5)
}

func (d *Memo) bullet(text string) {
	d.flushSub(2 * bodyLine)
	p := d.pdf
	p.SetFont(fontSans, "", bodySize)
	x := p.GetX()
	p.CellFormat(5, bodyLine, "•", "", 0, "L", false, 0, "")
	p.MultiCell(textW-5, bodyLine, text, "", "L", false)
	p.SetX(x)
	p.Ln(0.8)
}

// Text renders the template name (memo/NAME.tmpl) over data and lays it
// out: blank lines part paragraphs, "## " starts a sub-heading and "- " a
// bullet.
func (d *Memo) Text(name string, data any) error {
	var buf bytes.Buffer
	if err := d.tpl.ExecuteTemplate(&buf, name+".tmpl", data); err != nil {
		return err
	}
	for _, block := range strings.Split(strings.TrimSpace(buf.String()), "\n\n") {
		block = strings.TrimSpace(block)
		switch {
		case block == "":
		case strings.HasPrefix(block, "## "):
			d.Sub(strings.TrimPrefix(block, "## "))
		case strings.HasPrefix(block, "- "):
			for _, item := range strings.Split(block, "\n") {
				d.bullet(strings.TrimPrefix(strings.TrimSpace(item), "- "))
			}
			d.pdf.Ln(1)
		default:
			d.Para(strings.Join(strings.Fields(block), " "))
		}
	}
	return nil
}

// need starts a new page unless h millimetres are left.
func (d *Memo) need(h float64) {
	if d.pdf.GetY()+h > d.pageH()-marginB {
		d.pdf.AddPage()
	}
}

// Col is one column of a memo table; widths are in millimetres and
// should add up to at most the text width (170). Table widens a column
// whose content needs more and takes the room from columns that have
// some to spare.
type Col struct {
	Header string
	Width  float64
	Right  bool // align right (numbers)
}

// Row markers: the first cell of a row may start with one of them.
const (
	rowBold    = "\x00" // a total: bold, with a rule above
	rowHeading = "\x01" // a heading inside a table: bold, kept on one page with the row after it
)

// cellPad is the room a table cell leaves around its text (millimetres).
const cellPad = 2.0

// Table lays out rows under a shaded header. Columns are sized from their
// content (fitColumns): no date, code, number or header word is broken
// across lines. Cells wrap at spaces within their column; a table that
// runs past the page continues on the next one with its header
// repeated. A row whose first cell starts with rowBold is drawn bold
// (totals); one that starts with rowHeading is a bold heading that never
// stays alone at the foot of a page. A bold row of one cell heads a group
// and runs across the whole table.
func (d *Memo) Table(cols []Col, rows [][]string) {
	p := d.pdf
	cols = d.fitColumns(cols, rows)
	width := sumWidths(cols)
	head := func() {
		p.SetFont(fontSans, "B", tableSize)
		p.SetFillColor(0x2F, 0x48, 0x58)
		p.SetTextColor(255, 255, 255)
		lines := 1
		for _, c := range cols {
			if n := len(p.SplitText(c.Header, c.Width-cellPad)); n > lines {
				lines = n
			}
		}
		h := float64(lines)*tableLine + 1.6
		x, y := p.GetX(), p.GetY()
		for _, c := range cols {
			p.Rect(x, y, c.Width, h, "F")
			d.cellLines(x, y+0.8, c, p.SplitText(c.Header, c.Width-cellPad))
			x += c.Width
		}
		p.SetXY(d.marginL(), y+h)
		p.SetTextColor(0, 0, 0)
	}
	// Every row is wrapped first, so that a heading row can tell whether
	// the row after it fits beside it.
	type laid struct {
		style   string
		heading bool
		cells   []Col // cols, or one across the table
		lines   [][]string
		h       float64
	}
	laidRows := make([]laid, len(rows))
	for i, r := range rows {
		l := laid{}
		first := ""
		if len(r) > 0 {
			first = r[0]
		}
		switch {
		case strings.HasPrefix(first, rowBold):
			l.style = "B"
		case strings.HasPrefix(first, rowHeading):
			l.style, l.heading = "B", true
		}
		p.SetFont(fontSans, l.style, tableSize)
		l.cells = cols
		if l.style == "B" && len(r) == 1 {
			l.cells = []Col{{Width: width}}
		}
		l.lines = make([][]string, len(l.cells))
		n := 1
		for j, c := range l.cells {
			s := ""
			if j < len(r) {
				s = trimMarker(r[j])
			}
			l.lines[j] = p.SplitText(s, c.Width-cellPad)
			if len(l.lines[j]) == 0 {
				l.lines[j] = []string{""}
			}
			n = max(n, len(l.lines[j]))
		}
		l.h = float64(n)*tableLine + 1.2
		laidRows[i] = l
	}
	d.flushSub(20)
	d.need(20)
	head()
	for i, l := range laidRows {
		keep := l.h
		if l.heading && i+1 < len(laidRows) {
			keep += laidRows[i+1].h
		}
		if p.GetY()+keep > d.pageH()-marginB {
			p.AddPage()
			head()
		}
		p.SetFont(fontSans, l.style, tableSize)
		x, y := d.marginL(), p.GetY()
		if i%2 == 1 {
			p.SetFillColor(0xF2, 0xF4, 0xF5)
			p.Rect(x, y, width, l.h, "F")
		}
		if l.style == "B" {
			p.SetDrawColor(0x2F, 0x48, 0x58)
			p.SetLineWidth(0.3)
			p.Line(x, y, x+width, y)
		}
		for j, c := range l.cells {
			d.cellLines(x, y+0.6, c, l.lines[j])
			x += c.Width
		}
		p.SetXY(d.marginL(), y+l.h)
	}
	p.Ln(3)
}

// trimMarker is a cell's text without its row marker.
func trimMarker(s string) string {
	return strings.TrimPrefix(strings.TrimPrefix(s, rowBold), rowHeading)
}

// fitColumns sizes cols from the header and rows they will show, in the
// table fonts.
func (d *Memo) fitColumns(cols []Col, rows [][]string) []Col {
	p := d.pdf
	measure := func(s string, bold bool) float64 {
		style := ""
		if bold {
			style = "B"
		}
		p.SetFont(fontSans, style, tableSize)
		return p.GetStringWidth(s)
	}
	// SplitText keeps the cell margins clear on either side of the
	// width it is given (c.Width-cellPad).
	return fitColumns(cols, rows, textW, cellPad+2*p.GetCellMargin()+0.1, measure)
}

// fitColumns returns cols with widths that fit their content within
// limit millimetres, measure giving the width of a text in the table
// font (bold or not) and pad the room a cell keeps around its text:
//
//  1. every column is at least as wide as its longest word, header words
//     included, so that nothing breaks mid-word, as a third of its header
//     (three lines at most), and as wide as asked;
//  2. room a column has beyond its longest line (its header over two
//     lines) goes to columns whose cells would wrap;
//  3. a table wider than limit gives back room from the columns wider
//     than their longest word; only when the longest words alone are
//     wider than limit are all columns narrowed alike.
func fitColumns(cols []Col, rows [][]string, limit, pad float64, measure func(s string, bold bool) float64) []Col {
	out := append([]Col(nil), cols...)
	n := len(cols)
	least, natural := make([]float64, n), make([]float64, n)
	for j, c := range cols {
		// A header wraps at spaces, over three lines at most.
		least[j] = measure(c.Header, true) / 3
		for _, w := range strings.Fields(c.Header) {
			least[j] = max(least[j], measure(w, true))
		}
		natural[j] = max(least[j], measure(c.Header, true)/2)
	}
	for _, r := range rows {
		bold := len(r) > 0 && (strings.HasPrefix(r[0], rowBold) || strings.HasPrefix(r[0], rowHeading))
		if bold && len(r) == 1 {
			continue // a group's heading runs across the table
		}
		for j := 0; j < n && j < len(r); j++ {
			s := trimMarker(r[j])
			for _, w := range strings.Fields(s) {
				least[j] = max(least[j], measure(w, bold))
			}
			natural[j] = max(natural[j], measure(s, bold))
		}
	}
	for j := range out {
		least[j] += pad
		natural[j] = max(natural[j]+pad, least[j])
		out[j].Width = max(out[j].Width, least[j])
	}
	var spare, need float64
	for j, c := range out {
		if c.Width > natural[j] {
			spare += c.Width - natural[j]
		} else {
			need += natural[j] - c.Width
		}
	}
	if move := min(spare, need); move > 0 {
		for j, c := range out {
			if c.Width > natural[j] {
				out[j].Width -= (c.Width - natural[j]) * move / spare
			} else {
				out[j].Width += (natural[j] - c.Width) * move / need
			}
		}
	}
	total, slack := 0.0, 0.0
	for j, c := range out {
		total += c.Width
		slack += c.Width - least[j]
	}
	if over := total - limit; over > 0 {
		if slack >= over {
			for j, c := range out {
				out[j].Width -= (c.Width - least[j]) * over / slack
			}
		} else {
			for j := range out {
				out[j].Width = least[j] * limit / (total - slack)
			}
		}
	}
	return out
}

func (d *Memo) cellLines(x, y float64, c Col, lines []string) {
	align := "L"
	if c.Right {
		align = "R"
	}
	for k, s := range lines {
		d.pdf.SetXY(x+1, y+float64(k)*tableLine)
		d.pdf.CellFormat(c.Width-2, tableLine, s, "", 0, align, false, 0, "")
	}
}

func sumWidths(cols []Col) float64 {
	var s float64
	for _, c := range cols {
		s += c.Width
	}
	return s
}

// Draw renders a chart w×h millimetres in size and returns it with the
// width it was drawn at: a few hundredths of a millimetre more than w when
// another image already has that pixel width. gofpdf orders images by
// pixel width alone when writing, so two images of one width would come
// out in map order and two runs would differ.
func (d *Memo) Draw(chart func(w, h vg.Length) ([]byte, error), w, h float64) ([]byte, float64, error) {
	px := int(w/25.4*chartDPI + 0.5)
	for d.widths[px] || d.widths[px-1] || d.widths[px+1] {
		px += 3
	}
	d.widths[px] = true
	w = float64(px) * 25.4 / chartDPI
	png, err := chart(mm(w), mm(h))
	return png, w, err
}

// Chart draws a chart and places it at the current position, on a new page
// if it does not fit.
func (d *Memo) Chart(chart func(w, h vg.Length) ([]byte, error), w, h float64) error {
	png, w, err := d.Draw(chart, w, h)
	if err != nil {
		return err
	}
	d.ImageAt(png, d.marginL(), -1, w, h)
	d.pdf.SetY(d.pdf.GetY() + h + 3)
	return nil
}

// ImageAt places a PNG made by Draw at x and y (y < 0: the current line)
// without moving the cursor.
func (d *Memo) ImageAt(png []byte, x, y, w, h float64) {
	p := d.pdf
	if y < 0 {
		d.flushSub(h + 2)
		d.need(h + 2)
		y = p.GetY()
	}
	d.images++
	name := fmt.Sprintf("chart%03d", d.images)
	p.RegisterImageOptionsReader(name, gofpdf.ImageOptions{ImageType: "PNG"}, bytes.NewReader(png))
	p.ImageOptions(name, x, y, w, h, false, gofpdf.ImageOptions{ImageType: "PNG"}, 0, "")
}

// mm converts millimetres to plot lengths.
func mm(v float64) vg.Length { return vg.Length(v) * vg.Millimeter }

// Currency is the Model's currency code.
func (d *Memo) Currency() string { return d.m.Company.Currency }

// memoData is what the templates see: the Model and a few views of it.
type memoData struct {
	*Model
	Warrants []Grant
	// All are the totals of every instrument valued: the share-based
	// awards and the financing warrants.
	All Totals
	// Outstanding is the part of the share-based awards still outstanding
	// at the period end (ok false when the books did not run).
	Outstanding Outstanding
}

// Outstanding is the grant-date fair value of the share-based awards
// still outstanding at the period end: options and warrants granted for
// services not exercised, forfeited, cancelled or expired, and RSUs not
// yet vested, each at the weighted-average fair value of its roll-forward
// (the disclosure tables').
type Outstanding struct {
	OK        bool
	Shares    int64
	FairValue float64
}

// outstandingOf sums the closing lines of the share-based roll-forwards.
func outstandingOf(m *Model) Outstanding {
	e := detail(m)
	if e == nil || e.Disclosures == nil {
		return Outstanding{}
	}
	o := Outstanding{OK: true}
	x := e.Disclosures
	for _, r := range []RollForward{x.Options, x.RSUs, x.Warrants} {
		if len(r.Lines) == 0 {
			continue
		}
		end := r.Lines[len(r.Lines)-1]
		o.Shares += end.Shares
		o.FairValue += float64(end.Shares) * end.WeightedFairValue
	}
	return o
}

func (d *Memo) data() memoData {
	md := memoData{Model: d.m, All: d.m.Totals.Plus(d.m.FinancingTotals), Outstanding: outstandingOf(d.m)}
	for _, g := range d.m.Grants {
		if g.Instrument == Warrant {
			md.Warrants = append(md.Warrants, g)
		}
	}
	return md
}

// pageH is the page height in millimetres.
func (d *Memo) pageH() float64 { return d.paper.H }

// marginL is the left margin in millimetres: the text block centred.
func (d *Memo) marginL() float64 { return (d.paper.W - textW) / 2 }
