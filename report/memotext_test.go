package report

import (
	"io"
	"strings"
	"sync"
	"testing"
	"unicode/utf8"
)

// Characters the memo's fonts lack are shown as code points, runs of them
// together; characters they have are drawn as given, composed (NFC).
func TestMemoTextReplacement(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"Tarnwick Labs, Inc.", "Tarnwick Labs, Inc."},
		{"Ελληνικά Русский Øre é ü ß €", "Ελληνικά Русский Øre é ü ß €"},
		{"Cafe\u0301", "Café"}, // e and a combining acute compose to é
		{"Rocket 🚀 Co", "Rocket [U+1F680] Co"},
		{"中文公司", "[U+4E2D U+6587 U+516C U+53F8]"},
		{"חברה בע\"מ", "[U+05D7 U+05D1 U+05E8 U+05D4] [U+05D1 U+05E2]\"[U+05DE]"},
		{"a\x1b[31mb", "a[U+001B][31mb"},
		{"rtl\u202eevil", "rtl[U+202E]evil"},
		{"bad \xff byte", "bad [0xFF] byte"},
		{"tab\tcr\rnl\nend", "tab cr nl\nend"},
	} {
		if got := MemoText(c.in, true); got != c.want {
			t.Errorf("MemoText(%q) = %q, want %q", c.in, got, c.want)
		}
	}
	if got := MemoText("one\ntwo", false); got != "one two" {
		t.Errorf("without breaks a newline is a space: %q", got)
	}
}

// Every field of the memo that comes from the input (company name, grant
// id, holder, source text, warnings, input path) renders without a panic
// or an error whatever it holds, and the characters the fonts lack appear
// as code points in the PDF's text.
func TestMemoUnicodeFields(t *testing.T) {
	// The memo's own text (templates, headings, labels) is all drawable.
	if text := pdfText(t, renderMemo(t, fixture())); strings.Contains(text, "[U+") {
		i := strings.Index(text, "[U+")
		t.Errorf("the memo's own text has characters its fonts lack: %q", text[max(0, i-60):i+20])
	}
	m := fixture()
	m.Company.Name = "Rocket 🚀 株式会社 חברה"
	m.Grants[0].ID = "G-😀-1"
	m.Grants[0].Holder = "张伟"
	m.Input.Path = "schedules/𝔊𝔯𝔞𝔫𝔱𝔰.xlsx"
	m.Warnings = append(m.Warnings, "Grants!B2 (holder): \"张伟\"")
	for i := range m.Assumptions {
		m.Assumptions[i].Source = "🔒 board minutes 中"
	}
	text := pdfText(t, renderMemo(t, m))
	for _, want := range []string{"Rocket [U+1F680] [U+682A U+5F0F U+4F1A U+793E] [U+05D7 U+05D1 U+05E8 U+05D4]", "[U+5F20 U+4F1F]", "[U+1F512] board minutes [U+4E2D]"} {
		if !strings.Contains(strings.Join(strings.Fields(text), " "), want) {
			t.Errorf("the memo does not show %q", want)
		}
	}
}

// fuzzDoc is the document FuzzMemoText draws on: building one (fonts,
// templates) and writing it out cost tens of milliseconds, so each lasts
// fuzzDocUses inputs, or until it passes fuzzDocPages pages, and is then
// written out, which subsets the fonts to every character drawn. The page
// bound keeps each input's call short: 2,000 control characters in a
// narrow table column fill some 1,600 pages, and writing out a hundred
// such inputs at once took 31 s, past the 10 s after which the fuzzing
// machinery takes a worker for hung and stops it.
var fuzzDoc struct {
	sync.Mutex
	d    *Memo
	uses int
}

const (
	fuzzDocUses  = 100
	fuzzDocPages = 2000
)

// FuzzMemoText draws arbitrary text through every kind of memo text call
// (cover, headings, paragraphs, notes, bullets, table cells, metadata): no
// panic, no error, and the text given to gofpdf is only drawable
// characters, unchanged by a second pass.
//
//	go test ./report -run '^$' -fuzz FuzzMemoText
func FuzzMemoText(f *testing.F) {
	for _, s := range []string{"", "Tarnwick Labs", "🚀", "中文", "עברית", "\xff\xfe", "a\u0301", "\x00\n\r\t", "\U0010FFFF", "\ufffd", strings.Repeat("W", 300)} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		out := MemoText(s, true)
		for _, r := range out {
			if r != '\n' && !Drawable(r) {
				t.Fatalf("MemoText(%q) = %q holds %U", s, out, r)
			}
		}
		if !utf8.ValidString(out) || MemoText(out, true) != out {
			t.Fatalf("MemoText(%q) = %q is not stable", s, out)
		}
		if utf8.RuneCountInString(s) > 2000 {
			return
		}
		fd := &fuzzDoc
		fd.Lock()
		defer fd.Unlock()
		if fd.d == nil {
			d, err := newMemo(&Model{Company: Company{Currency: "USD"}, Caution: Caution})
			if err != nil {
				t.Fatal(err)
			}
			fd.d = d
		}
		d := fd.d
		d.m.Company.Name, d.m.Input.Path = s, s
		d.pdf.SetTitle(s, true)
		d.cover()
		d.section(1, s, false, 0)
		d.Sub(s)
		d.Para(s)
		d.Note(s)
		d.bullet(s)
		d.Table([]Col{{Header: s, Width: 40}, {Header: "x", Width: 20, Right: true}}, [][]string{{s, s}, {"\x00" + s, s}})
		if err := d.pdf.Error(); err != nil {
			t.Fatalf("%q: %v", s, err)
		}
		if fd.uses++; fd.uses >= fuzzDocUses || d.pdf.PageCount() > fuzzDocPages {
			fd.d, fd.uses = nil, 0
			if err := d.pdf.Output(io.Discard); err != nil {
				t.Fatalf("writing the document after %q: %v", s, err)
			}
		}
	})
}
