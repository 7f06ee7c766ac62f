package main

import (
	"fmt"
	"io"
	"sync"
	"unicode"
	"unicode/utf8"
)

// safeWriter passes text on with every character that could drive or fool
// a terminal written as an escape: control characters other than newline
// and tab (ESC, NUL, carriage return, DEL and the C1 controls), the
// invisible format characters (bidirectional overrides, zero-width
// characters) and the line and paragraph separators become \uXXXX, and a
// byte that is not UTF-8 becomes \xNN. Input text such as a company name
// then prints as it reads, wherever it is printed. The \uXXXX form is also
// a JSON string escape of the same character, so JSON output stays valid
// and means the same (encoding/json escapes the C0 controls itself but
// passes DEL and the C1 controls through).
type safeWriter struct {
	mu    sync.Mutex
	w     io.Writer
	carry []byte // the start of a character cut by the end of the last write
}

func newSafeWriter(w io.Writer) *safeWriter { return &safeWriter{w: w} }

func (s *safeWriter) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	buf := p
	if len(s.carry) > 0 {
		buf = append(s.carry, p...)
		s.carry = nil
	}
	out := make([]byte, 0, len(buf)+16)
	for i := 0; i < len(buf); {
		c := buf[i]
		if c < utf8.RuneSelf {
			if c == '\n' || c == '\t' || (c >= 0x20 && c != 0x7f) {
				out = append(out, c)
			} else {
				out = fmt.Appendf(out, `\u%04x`, c)
			}
			i++
			continue
		}
		r, n := utf8.DecodeRune(buf[i:])
		switch {
		case r == utf8.RuneError && n <= 1 && !utf8.FullRune(buf[i:]):
			s.carry = append([]byte(nil), buf[i:]...)
			i = len(buf)
			continue
		case r == utf8.RuneError && n <= 1:
			out = fmt.Appendf(out, `\x%02x`, c)
		case unsafeRune(r):
			out = fmt.Appendf(out, `\u%04x`, r)
		default:
			out = append(out, buf[i:i+n]...)
		}
		i += n
	}
	if _, err := s.w.Write(out); err != nil {
		return 0, err
	}
	return len(p), nil
}

// unsafeRune reports a character outside ASCII that a terminal may act on
// or that hides or reorders the text around it.
func unsafeRune(r rune) bool {
	return unicode.IsControl(r) || unicode.Is(unicode.Cf, r) || r == '\u2028' || r == '\u2029'
}
