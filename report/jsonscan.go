package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"unicode/utf8"
	"unsafe"
)

// A streaming JSON scanner for reading valuation.json back (prior.go): it
// reads the file once through a large buffer, checks the grammar of
// everything it passes (RFC 8259, as encoding/json's scanner does, the
// members it skips included), and says where a file goes wrong by line
// and column. Errors stick: after the first, every call returns a zero
// value and the error stays in err, so that the readers built on it check
// once per record.

type scanner struct {
	rd  io.Reader
	buf []byte // buf[pos:] is not read yet
	pos int
	eof bool
	err error

	// Where buf[0] is in the file: its offset, the newlines before it and
	// the offset of the line it is on.
	base      int64
	lines     int
	lineStart int64

	// raw capture (rawValue): buf[mark:] is kept in rec when the buffer
	// moves on; -1 when nothing is captured.
	mark int
	rec  []byte

	keyBuf []byte // the last member name read
}

// scanBuffer is the scanner's buffer: large reads. It grows for a token
// that does not fit.
const scanBuffer = 1 << 20

// newScanner reads rd through a buffer of size bytes (at least 8).
func newScanner(rd io.Reader, size int) *scanner {
	return &scanner{rd: rd, buf: make([]byte, 0, max(size, 8)), mark: -1}
}

// A jsonError is where and why a valuation.json cannot be read: a
// syntax error (the bytes are not JSON) or a value of the wrong kind
// for its member.
type jsonError struct {
	Line, Column int   // from 1; the column counts bytes
	Offset       int64 // from 0
	Msg          string
	Syntax       bool // not JSON at all
}

func (e *jsonError) Error() string {
	return fmt.Sprintf("line %d, column %d: %s", e.Line, e.Column, e.Msg)
}

// failAt records the first error, at buf[i] (at buf[0] if i is before
// it: a value longer than the buffer).
func (s *scanner) failAt(i int, syntax bool, format string, args ...any) {
	if s.err != nil {
		return
	}
	before := s.buf[:min(max(i, 0), len(s.buf))]
	line := s.lines + bytes.Count(before, []byte{'\n'}) + 1
	start := s.lineStart
	if j := bytes.LastIndexByte(before, '\n'); j >= 0 {
		start = s.base + int64(j) + 1
	}
	off := s.base + int64(len(before))
	s.err = &jsonError{Line: line, Column: int(off-start) + 1, Offset: off, Msg: fmt.Sprintf(format, args...), Syntax: syntax}
}

// syntaxError fails at buf[i], which is not what JSON allows there.
func (s *scanner) syntaxError(i int, want string) {
	s.failAt(i, true, "found %s where %s was expected", s.describe(i), want)
}

// describe names the byte at buf[i] for a message.
func (s *scanner) describe(i int) string {
	if i >= len(s.buf) {
		return "the end of the file"
	}
	c := s.buf[i]
	if c < utf8.RuneSelf {
		return strconv.QuoteRune(rune(c))
	}
	return fmt.Sprintf("byte 0x%02x", c)
}

// more reads more of the file, keeping buf[pos:] (and buf[mark:] in rec);
// false at the end of the file or on a read error.
func (s *scanner) more() bool {
	if s.eof || s.err != nil {
		return false
	}
	keep := s.pos
	if s.mark >= 0 {
		s.rec = append(s.rec, s.buf[s.mark:keep]...)
		s.mark = 0
	}
	gone := s.buf[:keep]
	s.lines += bytes.Count(gone, []byte{'\n'})
	if j := bytes.LastIndexByte(gone, '\n'); j >= 0 {
		s.lineStart = s.base + int64(j) + 1
	}
	s.base += int64(keep)
	n := copy(s.buf[:cap(s.buf)], s.buf[keep:])
	s.buf, s.pos = s.buf[:n], 0
	if n > cap(s.buf)/2 {
		b := make([]byte, n, 2*cap(s.buf))
		copy(b, s.buf)
		s.buf = b
	}
	for {
		m, err := s.rd.Read(s.buf[n:cap(s.buf)])
		s.buf = s.buf[:n+m]
		switch {
		case err == io.EOF:
			s.eof = true
			return m > 0
		case err != nil:
			s.err = err
			return false
		case m > 0:
			return true
		}
	}
}

// peek skips white space and returns the next byte, 0 at the end of the
// file.
func (s *scanner) peek() byte {
	for {
		for s.pos < len(s.buf) {
			switch c := s.buf[s.pos]; c {
			case ' ', '\n', '\r', '\t':
				s.pos++
			default:
				return c
			}
		}
		if !s.more() {
			return 0
		}
	}
}

// expect reads the byte c, after white space.
func (s *scanner) expect(c byte, want string) bool {
	if s.err != nil {
		return false
	}
	if s.peek() != c {
		s.syntaxError(s.pos, want)
		return false
	}
	s.pos++
	return true
}

// null reads a null if one comes next.
func (s *scanner) null() bool {
	if s.err != nil || s.peek() != 'n' {
		return false
	}
	return s.literal("null")
}

// literal reads true, false or null, whose first byte comes next.
func (s *scanner) literal(lit string) bool {
	for len(s.buf)-s.pos < len(lit) && s.more() {
	}
	for i := 0; i < len(lit); i++ {
		if s.pos+i >= len(s.buf) || s.buf[s.pos+i] != lit[i] {
			s.syntaxError(s.pos+i, "the literal "+lit)
			return false
		}
	}
	s.pos += len(lit)
	return true
}

// open reads the opening '{' or '[' of an object or an array; false (and
// no error) for a null, false with an error for anything else.
func (s *scanner) open(c byte) bool {
	if s.err != nil {
		return false
	}
	switch s.peek() {
	case c:
		s.pos++
		return true
	case 'n':
		s.literal("null")
		return false
	}
	what := "an object"
	if c == '[' {
		what = "an array"
	}
	s.kindError(what)
	return false
}

// kindError fails at the value that comes next, which is not of the kind
// its member needs.
func (s *scanner) kindError(want string) {
	if s.err != nil {
		return
	}
	found := "a string"
	switch c := s.peek(); {
	case c == '{':
		found = "an object"
	case c == '[':
		found = "an array"
	case c == 't' || c == 'f':
		found = "a boolean"
	case c == 'n':
		found = "null"
	case c == '-' || c >= '0' && c <= '9':
		found = "a number"
	case c != '"':
		s.syntaxError(s.pos, "a value")
		return
	}
	s.failAt(s.pos, false, "found %s where %s was expected", found, want)
}

// next moves to the next element of the array or object that open
// opened: false, past the closing bracket, when there is none. n counts
// the elements read so far.
func (s *scanner) next(n *int, close byte) bool {
	if s.err != nil {
		return false
	}
	c := s.peek()
	if c == close {
		s.pos++
		return false
	}
	if *n > 0 {
		if c != ',' {
			s.syntaxError(s.pos, "',' or '"+string(close)+"'")
			return false
		}
		s.pos++
	}
	*n++
	return true
}

// key reads a member's name and its colon. The bytes are valid until the
// next key.
func (s *scanner) key() []byte {
	if s.err != nil {
		return nil
	}
	if s.peek() != '"' {
		s.syntaxError(s.pos, "a member name")
		return nil
	}
	raw, plain := s.stringToken()
	// A copy: reading the colon may move the buffer.
	if plain {
		s.keyBuf = append(s.keyBuf[:0], raw[1:len(raw)-1]...)
	} else if s.err == nil {
		var str string
		s.unquote(raw, &str)
		s.keyBuf = append(s.keyBuf[:0], str...)
	}
	if !s.expect(':', "':' after a member name") {
		return nil
	}
	return s.keyBuf
}

// keyIs reads a member's name and its colon if they are q (a name in
// quotes that needs no escapes) followed at once by the colon, as a
// file grantworth wrote has them; else it reads nothing and reports
// false, and key reads the name.
func (s *scanner) keyIs(q []byte) bool {
	if s.err != nil || s.peek() != '"' {
		return false
	}
	b := s.buf[s.pos:]
	if len(b) <= len(q) || b[len(q)] != ':' || string(b[:len(q)]) != string(q) {
		return false
	}
	s.pos += len(q) + 1
	return true
}

// plainByte marks the bytes a string holds as they are: printable ASCII
// but the quote and the backslash. numberByte marks the bytes a number is
// made of.
var plainByte, numberByte = func() (p, n [256]bool) {
	for c := 0x20; c < 0x7f; c++ {
		p[c] = c != '"' && c != '\\'
	}
	for _, c := range []byte("0123456789+-.eE") {
		n[c] = true
	}
	return p, n
}()

// stringToken reads the string that comes next, quotes included; plain
// reports that it is ASCII without escapes, its bytes between the quotes
// its value. The token is valid until the scanner reads on.
func (s *scanner) stringToken() (tok []byte, plain bool) {
	i := 1 // from s.pos, which stays at the opening quote until the end
	plain = true
	for {
		b := s.buf
		j := s.pos + i
		for j < len(b) && plainByte[b[j]] {
			j++
		}
		i = j - s.pos
		if j == len(b) || b[j] == '\\' && (j+1 >= len(b) || b[j+1] == 'u' && j+6 > len(b)) {
			if !s.more() {
				if s.err == nil {
					s.failAt(len(s.buf), true, "the file ends inside a string")
				}
				return nil, false
			}
			continue
		}
		switch c := b[j]; {
		case c == '"':
			tok = b[s.pos : j+1]
			s.pos = j + 1
			return tok, plain
		case c == '\\':
			plain = false
			switch b[j+1] {
			case '"', '\\', '/', 'b', 'f', 'n', 'r', 't':
				i += 2
			case 'u':
				for _, h := range b[j+2 : j+6] {
					if !('0' <= h && h <= '9' || 'a' <= h && h <= 'f' || 'A' <= h && h <= 'F') {
						s.failAt(j, true, "a \\u escape with %q, not four hexadecimal digits", b[j+2:j+6])
						return nil, false
					}
				}
				i += 6
			default:
				s.failAt(j, true, "an unknown escape \\%c in a string", b[j+1])
				return nil, false
			}
		case c < 0x20:
			s.failAt(j, true, "a control character (byte 0x%02x) in a string", c)
			return nil, false
		default: // not ASCII
			plain = false
			i++
		}
	}
}

// unquote decodes a string token with escapes or non-ASCII bytes as
// encoding/json does (invalid UTF-8 becomes U+FFFD).
func (s *scanner) unquote(tok []byte, dst *string) {
	if bytes.IndexByte(tok, '\\') < 0 && utf8.Valid(tok) {
		*dst = string(tok[1 : len(tok)-1])
		return
	}
	if err := json.Unmarshal(tok, dst); err != nil {
		s.failAt(s.pos, true, "%v", err)
	}
}

// str reads a string (null leaves dst as it is).
func (s *scanner) str(dst *string) {
	if s.err != nil {
		return
	}
	switch s.peek() {
	case '"':
		tok, plain := s.stringToken()
		if plain {
			*dst = string(tok[1 : len(tok)-1])
		} else if s.err == nil {
			s.unquote(tok, dst)
		}
	case 'n':
		s.literal("null")
	default:
		s.kindError("a string")
	}
}

// number reads a number token, checked against JSON's grammar; nil (and
// no error) for a null. It is valid until the scanner reads on.
func (s *scanner) number() []byte {
	tok, _ := s.numberScan()
	return tok
}

// numScan is what one pass over a number token finds: where it ends (or
// goes wrong), and, for a number without an exponent, its digits as a
// whole number (mant, exact if nd ≤ 19) with dec of them decimals.
type numScan struct {
	end     int
	ok      bool
	neg     bool
	exp     bool
	mant    uint64
	nd, dec int
}

// scanNumber scans the number at the start of b by JSON's grammar,
// -?(0|[1-9][0-9]*)(\.[0-9]+)?([eE][+-]?[0-9]+)?, in one pass. A token
// that reaches the end of b may go on past it.
func scanNumber(b []byte) (r numScan) {
	i := 0
	if i < len(b) && b[i] == '-' {
		r.neg = true
		i++
	}
	at := i
	for i < len(b) && b[i]-'0' < 10 {
		r.mant = 10*r.mant + uint64(b[i]-'0')
		i++
	}
	r.nd = i - at
	if r.nd == 0 || r.nd > 1 && b[at] == '0' {
		r.end = i
		return r
	}
	if i < len(b) && b[i] == '.' {
		i++
		at = i
		for i < len(b) && b[i]-'0' < 10 {
			r.mant = 10*r.mant + uint64(b[i]-'0')
			i++
		}
		r.dec = i - at
		if r.dec == 0 {
			r.end = i
			return r
		}
		r.nd += r.dec
	}
	if i < len(b) && (b[i] == 'e' || b[i] == 'E') {
		r.exp = true
		i++
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			i++
		}
		at = i
		for i < len(b) && b[i]-'0' < 10 {
			i++
		}
		if i == at {
			r.end = i
			return r
		}
	}
	// A number ends at a byte no number holds: "1.5.2" is not two.
	r.end, r.ok = i, i == len(b) || !numberByte[b[i]]
	return r
}

// numberScan reads the number that comes next (nil, and no error, for a
// null).
func (s *scanner) numberScan() ([]byte, numScan) {
	if s.err != nil {
		return nil, numScan{}
	}
	c := s.peek()
	if c == 'n' {
		s.literal("null")
		return nil, numScan{}
	}
	if c != '-' && (c < '0' || c > '9') {
		s.kindError("a number")
		return nil, numScan{}
	}
	for {
		r := scanNumber(s.buf[s.pos:])
		if s.pos+r.end == len(s.buf) && s.more() {
			continue // the token may go on in the next read
		}
		if !r.ok {
			// The message quotes the whole run of number bytes, read on
			// to its end so that it does not depend on where a read ended.
			k := 0
			for {
				for s.pos+k < len(s.buf) && numberByte[s.buf[s.pos+k]] {
					k++
				}
				if s.pos+k < len(s.buf) || !s.more() {
					break
				}
			}
			s.failAt(s.pos, true, "%q is not a number", s.buf[s.pos:s.pos+k])
			return nil, r
		}
		tok := s.buf[s.pos : s.pos+r.end]
		s.pos += r.end
		return tok, r
	}
}

// float reads a number into a float64 (null leaves it as it is). A
// number without an exponent whose digits make a whole number up to 2⁵³
// and that has at most 22 decimals is the quotient of two floats that
// hold them exactly, rounded once: the nearest float to it (W. D.
// Clinger, "How to Read Floating Point Numbers Accurately", 1990;
// strconv's first path too). Anything else is left to strconv.
func (s *scanner) float(dst *float64) {
	tok, r := s.numberScan()
	if tok == nil {
		return
	}
	f, ok := floatOf(tok, &r)
	if !ok {
		s.failAt(s.pos-len(tok), false, "the number %s is out of range", tok)
		return
	}
	*dst = f
}

// floatOf is the float64 of the number tok, scanned whole (r): by one
// exact division where its digits and its power of ten are exact float64s
// (Clinger's fast path), else by strconv.ParseFloat; false when it is out
// of range.
func floatOf(tok []byte, r *numScan) (float64, bool) {
	if !r.exp && r.nd <= 19 && r.mant <= 1<<53 && r.dec < len(exactPow10) {
		f := float64(r.mant) / exactPow10[r.dec]
		if r.neg {
			f = -f
		}
		return f, true
	}
	f, err := strconv.ParseFloat(unsafe.String(&tok[0], len(tok)), 64)
	return f, err == nil
}

// wholeOf is the number scanned (r) as an int64 when it is written as a
// whole number of at most 18 digits; false when strconv must decide.
func wholeOf(r *numScan) (int64, bool) {
	if r.exp || r.dec != 0 || r.nd > 18 {
		return 0, false
	}
	v := int64(r.mant)
	if r.neg {
		v = -v
	}
	return v, true
}

// exactPow10 are the powers of ten a float64 holds exactly.
var exactPow10 = [23]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// integer reads a whole number of bits bits (null gives ok false).
func (s *scanner) integer(bits int) (v int64, ok bool) {
	tok, r := s.numberScan()
	if tok == nil {
		return 0, false
	}
	if bits == 64 {
		if v, ok := wholeOf(&r); ok {
			return v, true
		}
	}
	v, err := strconv.ParseInt(unsafe.String(&tok[0], len(tok)), 10, bits)
	if err != nil {
		s.failAt(s.pos-len(tok), false, "found %s where a whole number was expected", tok)
		return 0, false
	}
	return v, true
}

// unsigned reads a whole number of bits bits, not negative (null gives ok
// false).
func (s *scanner) unsigned(bits int) (v uint64, ok bool) {
	tok := s.number()
	if tok == nil {
		return 0, false
	}
	v, err := strconv.ParseUint(unsafe.String(&tok[0], len(tok)), 10, bits)
	if err != nil {
		s.failAt(s.pos-len(tok), false, "found %s where a whole number not below 0 was expected", tok)
		return 0, false
	}
	return v, true
}

// boolean reads true or false (null leaves dst as it is).
func (s *scanner) boolean(dst *bool) {
	if s.err != nil {
		return
	}
	switch s.peek() {
	case 't':
		if s.literal("true") {
			*dst = true
		}
	case 'f':
		if s.literal("false") {
			*dst = false
		}
	case 'n':
		s.literal("null")
	default:
		s.kindError("true or false")
	}
}

// date reads a "YYYY-MM-DD" string or null (the zero Date).
func (s *scanner) date(dst *Date) {
	if s.err != nil {
		return
	}
	switch s.peek() {
	case '"':
		tok, plain := s.stringToken()
		if s.err != nil {
			return
		}
		at := s.pos - len(tok)
		d, ok := parseISODate(tok[1 : len(tok)-1])
		if !plain || !ok {
			var text string
			s.unquote(tok, &text)
			s.failAt(at, false, "found %q where a date YYYY-MM-DD was expected", text)
			return
		}
		*dst = d
	case 'n':
		if s.literal("null") {
			*dst = Date{}
		}
	default:
		s.kindError("a date YYYY-MM-DD")
	}
}

// skip reads past the value that comes next, checking its grammar.
func (s *scanner) skip() {
	if s.err != nil {
		return
	}
	switch c := s.peek(); {
	case c == '{':
		s.pos++
		for n := 0; s.next(&n, '}'); {
			s.key()
			s.skip()
		}
	case c == '[':
		s.pos++
		for n := 0; s.next(&n, ']'); {
			s.skip()
		}
	case c == '"':
		s.stringToken()
	case c == 't':
		s.literal("true")
	case c == 'f':
		s.literal("false")
	case c == 'n':
		s.literal("null")
	case c == '-' || c >= '0' && c <= '9':
		s.number()
	default:
		s.syntaxError(s.pos, "a value")
	}
}

// rawValue reads the value that comes next and returns its bytes (a
// copy), for encoding/json to decode.
func (s *scanner) rawValue() []byte {
	if s.err != nil {
		return nil
	}
	s.peek()
	s.mark, s.rec = s.pos, s.rec[:0]
	s.skip()
	if s.mark >= 0 && s.err == nil {
		s.rec = append(s.rec, s.buf[s.mark:s.pos]...)
	}
	s.mark = -1
	if s.err != nil {
		return nil
	}
	return append([]byte(nil), s.rec...)
}

// end checks that nothing but white space follows the value read last,
// reading the file to its end.
func (s *scanner) end() {
	if s.err != nil {
		return
	}
	if s.peek() != 0 || s.pos < len(s.buf) {
		s.failAt(s.pos, true, "found %s after the end of the top-level value", s.describe(s.pos))
	}
}
