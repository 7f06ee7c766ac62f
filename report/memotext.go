package report

import (
	"fmt"
	"sort"
	"strings"
	"sync"
	"unicode"
	"unicode/utf8"

	"github.com/jung-kurt/gofpdf"
	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/goitalic"
	"golang.org/x/image/font/gofont/goregular"
	"golang.org/x/image/font/sfnt"
	"golang.org/x/text/unicode/norm"

	"grantworth/grants"
)

// Text in the memo.
//
// The memo's fonts (Go Regular, Bold and Italic, embedded) draw Latin,
// Greek and Cyrillic text and common symbols, but no Chinese, Japanese,
// Korean, Hebrew, Arabic or emoji, and gofpdf indexes a table of 65,536
// glyph widths by code point, so a character outside the Basic
// Multilingual Plane would make it panic. Every string the memo draws
// therefore goes through MemoText: a character the three fonts can draw is
// drawn as it is (after Unicode NFC composition, so that a letter and its
// combining accent become the one accented letter the font has); any other
// is shown visibly as its code point in brackets, a run of them together,
// "[U+4E2D U+6587]"; a byte that is not UTF-8 as "[0xFF]". Tabs and
// carriage returns become spaces; newlines break lines where the memo
// wraps text and become spaces where it does not.
//
// Build adds a warning for each input column whose text the memo cannot
// draw as given, naming its first cell (MemoTextWarnings); the workbook
// and the JSON always keep the text as given.

// memoGlyphs is the set of code points all three memo fonts have a glyph
// for, as a bitmap over the Basic Multilingual Plane.
var memoGlyphs = sync.OnceValue(func() *[1 << 16 / 64]uint64 {
	var set [1 << 16 / 64]uint64
	var fonts []*sfnt.Font
	for _, ttf := range [][]byte{goregular.TTF, gobold.TTF, goitalic.TTF} {
		f, err := sfnt.Parse(ttf)
		if err != nil {
			panic("report: embedded font: " + err.Error())
		}
		fonts = append(fonts, f)
	}
	var buf sfnt.Buffer
	for r := rune(0x20); r < 1<<16; r++ {
		ok := true
		for _, f := range fonts {
			if gi, err := f.GlyphIndex(&buf, r); err != nil || gi == 0 {
				ok = false
				break
			}
		}
		if ok {
			set[r/64] |= 1 << (r % 64)
		}
	}
	return &set
})

// Drawable reports whether the memo draws r as it is.
func Drawable(r rune) bool {
	if r < 0x20 || r >= 1<<16 || unicode.IsControl(r) || unicode.Is(unicode.Cf, r) {
		return false
	}
	return memoGlyphs()[r/64]&(1<<(r%64)) != 0
}

// MemoText is s as the memo draws it: see the notes at the top of this
// file. With breaks false a newline becomes a space. The result holds
// only characters for which Drawable is true (and newlines, with breaks).
func MemoText(s string, breaks bool) string {
	if memoPlain(s, breaks) {
		return s
	}
	s = norm.NFC.String(s)
	var b strings.Builder
	inRun := false // inside "[U+... " of characters not drawn
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		var mark string
		switch {
		case r == utf8.RuneError && n == 1:
			mark = fmt.Sprintf("0x%02X", s[i])
		case r == '\n' && breaks:
		case r == '\t' || r == '\r' || r == '\n':
			r = ' '
		case !Drawable(r):
			mark = fmt.Sprintf("U+%04X", r)
		}
		switch {
		case mark != "" && inRun:
			b.WriteString(" " + mark)
		case mark != "":
			b.WriteString("[" + mark)
			inRun = true
		default:
			if inRun {
				b.WriteByte(']')
				inRun = false
			}
			b.WriteRune(r)
		}
		i += n
	}
	if inRun {
		b.WriteByte(']')
	}
	return b.String()
}

// memoPlain reports whether MemoText leaves s as it is: printable ASCII
// (the common case, checked without a look-up) or drawable characters
// already composed.
func memoPlain(s string, breaks bool) bool {
	ascii := true
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c >= utf8.RuneSelf {
			ascii = false
			break
		}
		if (c < 0x20 && !(breaks && c == '\n')) || c == 0x7f {
			return false
		}
	}
	if ascii {
		return true
	}
	if !utf8.ValidString(s) || !norm.NFC.IsNormalString(s) {
		return false
	}
	for _, r := range s {
		if !(r == '\n' && breaks) && !Drawable(r) {
			return false
		}
	}
	return true
}

// metaText is s for the PDF's metadata (title, subject), which viewers
// show in their own fonts: gofpdf encodes it as UTF-16 but mishandles
// characters outside the Basic Multilingual Plane and bytes that are not
// UTF-8, so those become code points in brackets; the rest is kept.
func metaText(s string) string {
	var b strings.Builder
	for i := 0; i < len(s); {
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n == 1:
			fmt.Fprintf(&b, "[0x%02X]", s[i])
		case r >= 1<<16 || unicode.IsControl(r) || unicode.Is(unicode.Cf, r):
			fmt.Fprintf(&b, "[U+%04X]", r)
		default:
			b.WriteRune(r)
		}
		i += n
	}
	return b.String()
}

// pdfDoc is the PDF the memo draws on: gofpdf with every method that
// takes text passing it through MemoText first, so that no string reaches
// gofpdf that it would panic on or draw as empty boxes.
type pdfDoc struct{ *gofpdf.Fpdf }

func (p pdfDoc) CellFormat(w, h float64, txt, border string, ln int, align string, fill bool, link int, linkStr string) {
	p.Fpdf.CellFormat(w, h, MemoText(txt, false), border, ln, align, fill, link, linkStr)
}

func (p pdfDoc) Cell(w, h float64, txt string) { p.Fpdf.Cell(w, h, MemoText(txt, false)) }

func (p pdfDoc) MultiCell(w, h float64, txt, border, align string, fill bool) {
	p.Fpdf.MultiCell(w, h, MemoText(txt, true), border, align, fill)
}

func (p pdfDoc) SplitText(txt string, w float64) []string {
	return p.Fpdf.SplitText(MemoText(txt, true), w)
}

func (p pdfDoc) Write(h float64, txt string) { p.Fpdf.Write(h, MemoText(txt, true)) }

func (p pdfDoc) Text(x, y float64, txt string) { p.Fpdf.Text(x, y, MemoText(txt, false)) }

func (p pdfDoc) GetStringWidth(s string) float64 { return p.Fpdf.GetStringWidth(MemoText(s, false)) }

func (p pdfDoc) SetTitle(s string, isUTF8 bool)   { p.Fpdf.SetTitle(metaText(s), isUTF8) }
func (p pdfDoc) SetSubject(s string, isUTF8 bool) { p.Fpdf.SetSubject(metaText(s), isUTF8) }
func (p pdfDoc) SetAuthor(s string, isUTF8 bool)  { p.Fpdf.SetAuthor(metaText(s), isUTF8) }
func (p pdfDoc) SetCreator(s string, isUTF8 bool) { p.Fpdf.SetCreator(metaText(s), isUTF8) }
func (p pdfDoc) SetProducer(s string, isUTF8 bool) {
	p.Fpdf.SetProducer(metaText(s), isUTF8)
}
func (p pdfDoc) SetKeywords(s string, isUTF8 bool) { p.Fpdf.SetKeywords(metaText(s), isUTF8) }

// MemoTextWarnings returns a warning for each input field whose text the
// memo cannot draw as given: the company name, grant ids, holders, the
// sources of assumptions and the input's path. Each names the first cell
// of its column, the characters and how the memo shows them, and how many
// more cells of that column are alike.
func MemoTextWarnings(s *grants.Schedule, inputPath string) []string {
	type field struct {
		first, value string
		more         int
	}
	var order []string
	fields := map[string]*field{}
	add := func(key string, ref grants.Ref, value string) {
		if MemoText(value, true) == value {
			return
		}
		if f := fields[key]; f != nil {
			f.more++
			return
		}
		where := ref.String()
		if ref.Sheet == "" {
			where = key
		}
		fields[key] = &field{first: where, value: value}
		order = append(order, key)
	}
	c := s.Company
	add("company_name", c.Refs["company_name"], c.Name)
	keys := make([]string, 0, len(s.Assumptions.Sources))
	for k := range s.Assumptions.Sources {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		add(k+" source", s.Assumptions.Refs[k], s.Assumptions.Sources[k])
	}
	for _, g := range s.Grants {
		add("grant_id", g.Refs["grant_id"], g.ID)
		add("holder", g.Refs["holder"], g.Holder)
	}
	for _, d := range s.Designs {
		add("design", d.Refs["design"], d.Name)
	}
	add("input path", grants.Ref{}, inputPath)
	var out []string
	for _, k := range order {
		f := fields[k]
		where := f.first
		if !strings.Contains(where, "!") {
			where = "the " + k
		} else {
			where += " (" + k + ")"
		}
		v := f.value
		if n := utf8.RuneCountInString(v); n > 40 {
			v = string([]rune(v)[:40]) + "…"
		}
		msg := fmt.Sprintf("%s: %q has characters the memo's font cannot draw; the memo shows %s, and the workbook and the JSON keep the text as given",
			where, v, MemoText(v, true))
		switch {
		case f.more == 1:
			msg += " (and for 1 more cell of this column)"
		case f.more > 1:
			msg += fmt.Sprintf(" (and for %d more cells of this column)", f.more)
		}
		out = append(out, msg)
	}
	return out
}
