package grants

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"strconv"
	"unicode/utf8"
)

// xmlScanner is a streaming XML tokenizer for the parts of a workbook. It
// checks that the document is well formed (every element closed in order,
// nothing after the root, no document type declaration) and holds memory
// bounded by its limits whatever the input: a text run, a tag and the
// nesting depth are capped, and nothing is sized from a count the document
// states. It is made for SpreadsheetML, not for XML at large: no DTD, no
// entities beyond the five predefined ones and character references.
type xmlScanner struct {
	src    io.Reader
	buf    []byte
	r, w   int
	off    int64 // bytes consumed before buf[0]
	srcErr error // error from src once buf is drained (io.EOF at the end)

	maxText  int // longest text run kept, in bytes
	maxDepth int

	stack   [][]byte // names of the open elements
	rootEnd bool     // the root element has closed

	// The current token.
	name      []byte // qualified name of a start or end tag
	attrs     []xmlAttr
	text      []byte // decoded character data
	selfClose bool   // the start tag was <a/>: an end token follows
	attrBuf   []byte // backing store of attribute values
}

type tokKind int

const (
	tokStart tokKind = iota + 1
	tokEnd
	tokText
	tokEOF
)

type xmlAttr struct {
	name  []byte // qualified name
	value []byte // decoded
}

// Limits of the scanner that no workbook part comes near.
const (
	maxXMLDepth    = 64      // SpreadsheetML nests about ten deep
	maxXMLTag      = 1 << 16 // bytes of one tag with its attributes (at most the buffer)
	maxXMLAttrs    = 64      // attributes of one element
	xmlScanBufSize = 64 << 10
)

// errXML is a well-formedness error; the reader reports it as a damaged
// workbook.
type errXML struct {
	off int64
	msg string
}

func (e *errXML) Error() string {
	if e.off < 0 {
		return e.msg
	}
	return fmt.Sprintf("byte %d: %s", e.off, e.msg)
}

// errTextTooLong is returned when a run of text exceeds maxText bytes.
var errTextTooLong = errors.New("text longer than the limit")

func newXMLScanner(src io.Reader, maxText int) *xmlScanner {
	return &xmlScanner{src: src, buf: make([]byte, xmlScanBufSize), maxText: maxText, maxDepth: maxXMLDepth}
}

func (s *xmlScanner) fail(format string, args ...any) error {
	return &errXML{off: s.off + int64(s.r), msg: fmt.Sprintf(format, args...)}
}

// fill reads more input; it returns false at the end of input or on a read
// error (kept in srcErr).
func (s *xmlScanner) fill() bool {
	if s.srcErr != nil {
		return false
	}
	if s.r > 0 {
		copy(s.buf, s.buf[s.r:s.w])
		s.off += int64(s.r)
		s.w -= s.r
		s.r = 0
	}
	for s.w < len(s.buf) {
		n, err := s.src.Read(s.buf[s.w:])
		s.w += n
		if err != nil {
			s.srcErr = err
			break
		}
		if n > 0 {
			break
		}
	}
	return s.w > s.r
}

// readErr is the error to return when input ended before the document did.
func (s *xmlScanner) readErr() error {
	if s.srcErr != nil && s.srcErr != io.EOF {
		return s.srcErr
	}
	return s.fail("the document ends in the middle (it is cut short)")
}

func (s *xmlScanner) peek() (byte, bool) {
	if s.r == s.w && !s.fill() {
		return 0, false
	}
	return s.buf[s.r], true
}

// next reads the next token. After tokEOF, or after an error, it must not
// be called again.
func (s *xmlScanner) next() (tokKind, error) {
	if s.selfClose {
		s.selfClose = false
		s.stack = s.stack[:len(s.stack)-1]
		if len(s.stack) == 0 {
			s.rootEnd = true
		}
		return tokEnd, nil
	}
	if s.off == 0 && s.r == 0 {
		// A byte-order mark may open the document.
		if s.fill(); bytes.HasPrefix(s.buf[:s.w], []byte("\xef\xbb\xbf")) {
			s.r = 3
		}
	}
	for {
		c, ok := s.peek()
		if !ok {
			if s.srcErr != nil && s.srcErr != io.EOF {
				return 0, s.srcErr
			}
			if len(s.stack) > 0 || !s.rootEnd {
				return 0, s.readErr()
			}
			return tokEOF, nil
		}
		if c != '<' {
			if err := s.readText(); err != nil {
				return 0, err
			}
			if !utf8.Valid(s.text) {
				return 0, s.fail("text that is not UTF-8")
			}
			if len(s.stack) == 0 {
				if len(bytes.TrimLeft(s.text, " \t\r\n")) > 0 {
					return 0, s.fail("text outside the root element")
				}
				continue
			}
			return tokText, nil
		}
		// A markup construct: make sure its first bytes are in the buffer.
		if s.w-s.r < 9 {
			s.fill()
		}
		rest := s.buf[s.r:s.w]
		if len(rest) < 2 {
			return 0, s.readErr()
		}
		switch rest[1] {
		case '/':
			return s.readEnd()
		case '?':
			if err := s.skipPast("?>"); err != nil {
				return 0, err
			}
		case '!':
			switch {
			case bytes.HasPrefix(rest, []byte("<!--")):
				if err := s.skipPast("-->"); err != nil {
					return 0, err
				}
			case bytes.HasPrefix(rest, []byte("<![CDATA[")):
				if len(s.stack) == 0 {
					return 0, s.fail("text outside the root element")
				}
				s.r += len("<![CDATA[")
				if err := s.readCDATA(); err != nil {
					return 0, err
				}
				if !utf8.Valid(s.text) {
					return 0, s.fail("text that is not UTF-8")
				}
				return tokText, nil
			default:
				return 0, s.fail("a document type declaration, which a workbook never has")
			}
		default:
			return s.readStart()
		}
	}
}

// skipPast consumes input up to and including end.
func (s *xmlScanner) skipPast(end string) error {
	for {
		if i := bytes.Index(s.buf[s.r:s.w], []byte(end)); i >= 0 {
			s.r += i + len(end)
			return nil
		}
		// Keep the last bytes that could start end.
		if k := s.w - s.r - (len(end) - 1); k > 0 {
			s.r += k
		}
		if !s.fill() {
			return s.readErr()
		}
	}
}

func (s *xmlScanner) readCDATA() error {
	s.text = s.text[:0]
	for {
		if i := bytes.Index(s.buf[s.r:s.w], []byte("]]>")); i >= 0 {
			if err := s.appendText(s.buf[s.r : s.r+i]); err != nil {
				return err
			}
			s.r += i + 3
			return nil
		}
		if k := s.w - s.r - 2; k > 0 {
			if err := s.appendText(s.buf[s.r : s.r+k]); err != nil {
				return err
			}
			s.r += k
		}
		if !s.fill() {
			return s.readErr()
		}
	}
}

func (s *xmlScanner) appendText(b []byte) error {
	if len(s.text)+len(b) > s.maxText {
		return errTextTooLong
	}
	for _, c := range b {
		if c < 0x20 && c != '\t' && c != '\n' && c != '\r' {
			return s.fail("a control character (%#02x), which XML text cannot hold", c)
		}
	}
	s.text = append(s.text, b...)
	return nil
}

// readText reads character data up to the next '<', decoding references.
func (s *xmlScanner) readText() error {
	s.text = s.text[:0]
	for {
		if s.r == s.w && !s.fill() {
			return nil // the caller sees the end of input
		}
		chunk := s.buf[s.r:s.w]
		end := bytes.IndexByte(chunk, '<')
		if end < 0 {
			end = len(chunk)
		}
		amp := bytes.IndexByte(chunk[:end], '&')
		if amp < 0 {
			if err := s.appendText(chunk[:end]); err != nil {
				return err
			}
			s.r += end
			if end < len(chunk) {
				return nil
			}
			continue
		}
		if err := s.appendText(chunk[:amp]); err != nil {
			return err
		}
		s.r += amp
		r, err := s.readRef()
		if err != nil {
			return err
		}
		if len(s.text)+utf8.UTFMax > s.maxText {
			return errTextTooLong
		}
		s.text = utf8.AppendRune(s.text, r)
	}
}

// readRef decodes the reference at s.r ("&amp;", "&#38;", "&#x26;").
func (s *xmlScanner) readRef() (rune, error) {
	for {
		i := bytes.IndexByte(s.buf[s.r:s.w], ';')
		if i >= 0 {
			if i > 12 {
				return 0, s.fail("an entity reference that is not one of XML's")
			}
			ref := s.buf[s.r+1 : s.r+i]
			r, ok := decodeRef(ref)
			if !ok {
				return 0, s.fail("unknown entity reference &%s;", truncBytes(ref))
			}
			s.r += i + 1
			return r, nil
		}
		if s.w-s.r > 12 {
			return 0, s.fail("an entity reference that is not one of XML's")
		}
		n := s.w - s.r
		if !s.fill() || s.w-s.r == n {
			return 0, s.readErr()
		}
	}
}

func decodeRef(ref []byte) (rune, bool) {
	switch string(ref) {
	case "lt":
		return '<', true
	case "gt":
		return '>', true
	case "amp":
		return '&', true
	case "quot":
		return '"', true
	case "apos":
		return '\'', true
	}
	if len(ref) < 2 || ref[0] != '#' {
		return 0, false
	}
	var n uint64
	var err error
	if ref[1] == 'x' {
		n, err = strconv.ParseUint(string(ref[2:]), 16, 32)
	} else {
		n, err = strconv.ParseUint(string(ref[1:]), 10, 32)
	}
	if err != nil || n == 0 || n > utf8.MaxRune || !utf8.ValidRune(rune(n)) {
		return 0, false
	}
	return rune(n), true
}

func truncBytes(b []byte) string {
	if len(b) > 20 {
		return string(b[:20]) + "..."
	}
	return string(b)
}

// tag returns the bytes of the tag at s.r up to and including '>', which
// stay valid until the next fill; quoted attribute values may hold '>'.
func (s *xmlScanner) tag() ([]byte, error) {
	var quote byte
	i := s.r + 1
	for {
		for ; i < s.w; i++ {
			c := s.buf[i]
			switch {
			case quote != 0:
				if c == quote {
					quote = 0
				}
			case c == '"' || c == '\'':
				quote = c
			case c == '>':
				t := s.buf[s.r : i+1]
				s.r = i + 1
				return t, nil
			}
		}
		if i-s.r >= maxXMLTag {
			return nil, s.fail("a tag longer than %d bytes", maxXMLTag)
		}
		consumed := i - s.r
		if !s.fill() {
			return nil, s.readErr()
		}
		i = s.r + consumed
	}
}

func isNameByte(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' ||
		c == '_' || c == ':' || c == '-' || c == '.' || c >= 0x80
}

func isSpace(c byte) bool { return c == ' ' || c == '\t' || c == '\r' || c == '\n' }

func (s *xmlScanner) readEnd() (tokKind, error) {
	t, err := s.tag()
	if err != nil {
		return 0, err
	}
	name := t[2 : len(t)-1]
	for len(name) > 0 && isSpace(name[len(name)-1]) {
		name = name[:len(name)-1]
	}
	if len(s.stack) == 0 {
		return 0, s.fail("an end tag </%s> with no element open", truncBytes(name))
	}
	open := s.stack[len(s.stack)-1]
	if !bytes.Equal(open, name) {
		return 0, s.fail("end tag </%s> where </%s> was expected", truncBytes(name), truncBytes(open))
	}
	s.name = open
	s.stack = s.stack[:len(s.stack)-1]
	if len(s.stack) == 0 {
		s.rootEnd = true
	}
	return tokEnd, nil
}

func (s *xmlScanner) readStart() (tokKind, error) {
	if s.rootEnd {
		return 0, s.fail("an element after the root element")
	}
	t, err := s.tag()
	if err != nil {
		return 0, err
	}
	body := t[1 : len(t)-1]
	if n := len(body); n > 0 && body[n-1] == '/' {
		s.selfClose = true
		body = body[:n-1]
	}
	i := 0
	for i < len(body) && isNameByte(body[i]) {
		i++
	}
	if i == 0 {
		return 0, s.fail("a '<' that starts no tag")
	}
	if len(s.stack) >= s.maxDepth {
		return 0, s.fail("elements nested more than %d deep", s.maxDepth)
	}
	// The name is kept on the stack: copy it out of the buffer, reusing
	// the slot's storage.
	d := len(s.stack)
	if d < cap(s.stack) {
		s.stack = s.stack[:d+1]
		s.stack[d] = append(s.stack[d][:0], body[:i]...)
	} else {
		s.stack = append(s.stack, append([]byte(nil), body[:i]...))
	}
	s.name = s.stack[d]
	s.attrs = s.attrs[:0]
	s.attrBuf = s.attrBuf[:0]
	type span struct{ n0, n1, v0, v1 int }
	var spans [maxXMLAttrs]span
	na := 0
	for {
		j := i
		for j < len(body) && isSpace(body[j]) {
			j++
		}
		if j == len(body) {
			break
		}
		if j == i {
			return 0, s.fail("attributes of <%s> not separated by space", truncBytes(s.name))
		}
		k := j
		for k < len(body) && isNameByte(body[k]) {
			k++
		}
		if k == j {
			return 0, s.fail("a malformed attribute in <%s>", truncBytes(s.name))
		}
		n0, n1 := j, k
		for k < len(body) && isSpace(body[k]) {
			k++
		}
		if k == len(body) || body[k] != '=' {
			return 0, s.fail("attribute %s of <%s> has no value", truncBytes(body[n0:n1]), truncBytes(s.name))
		}
		k++
		for k < len(body) && isSpace(body[k]) {
			k++
		}
		if k == len(body) || body[k] != '"' && body[k] != '\'' {
			return 0, s.fail("attribute %s of <%s> is not quoted", truncBytes(body[n0:n1]), truncBytes(s.name))
		}
		q := body[k]
		e := bytes.IndexByte(body[k+1:], q)
		if e < 0 {
			return 0, s.fail("attribute %s of <%s> is not closed", truncBytes(body[n0:n1]), truncBytes(s.name))
		}
		if na == maxXMLAttrs {
			return 0, s.fail("more than %d attributes on <%s>", maxXMLAttrs, truncBytes(s.name))
		}
		v0 := len(s.attrBuf)
		if err := s.decodeAttr(body[k+1 : k+1+e]); err != nil {
			return 0, err
		}
		spans[na] = span{n0, n1, v0, len(s.attrBuf)}
		na++
		i = k + 1 + e + 1
	}
	for _, sp := range spans[:na] {
		s.attrs = append(s.attrs, xmlAttr{name: body[sp.n0:sp.n1], value: s.attrBuf[sp.v0:sp.v1]})
	}
	return tokStart, nil
}

// decodeAttr appends the decoded attribute value v to attrBuf.
func (s *xmlScanner) decodeAttr(v []byte) error {
	for {
		a := bytes.IndexByte(v, '&')
		if a < 0 {
			if bytes.IndexByte(v, '<') >= 0 {
				return s.fail("a '<' inside an attribute value")
			}
			s.attrBuf = append(s.attrBuf, v...)
			return nil
		}
		s.attrBuf = append(s.attrBuf, v[:a]...)
		e := bytes.IndexByte(v[a:], ';')
		if e < 0 {
			return s.fail("an '&' that starts no entity reference")
		}
		r, ok := decodeRef(v[a+1 : a+e])
		if !ok {
			return s.fail("unknown entity reference &%s;", truncBytes(v[a+1:a+e]))
		}
		s.attrBuf = utf8.AppendRune(s.attrBuf, r)
		v = v[a+e+1:]
	}
}

// local is the part of a qualified name after any prefix.
func local(name []byte) []byte {
	if i := bytes.LastIndexByte(name, ':'); i >= 0 {
		return name[i+1:]
	}
	return name
}

// attr returns the value of the attribute with the local name n.
func (s *xmlScanner) attr(n string) ([]byte, bool) {
	for _, a := range s.attrs {
		if string(local(a.name)) == n {
			return a.value, true
		}
	}
	return nil, false
}
