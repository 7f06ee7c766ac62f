package report

import (
	"bytes"
	"encoding/json"
	"io"
	"math"
	"reflect"
	"strconv"
	"strings"
	"sync"
)

// A JSON encoder for the Model's types that writes, in one pass and
// without a reflection walk per value, the bytes of encoding/json's
// Encoder (no HTML escaping) indented by two spaces, except that a flat
// record in a list (an object of strings, numbers and booleans only: a
// tranche, an event, an input, a period) is written on one line without
// spaces. valuation.json for a large ledger holds millions of such
// records: indented, each took a line a member, a third of the file. It
// knows the kinds the Model uses (structs with json tags and omitempty,
// embedded struct pointers, pointers, slices, strings, bools, integers,
// float64 and json.Marshaler); any other kind is handed to encoding/json.
// A test checks it against encoding/json on whole Models: the same bytes
// but for white space between tokens.

type jsonEnc struct {
	w   io.Writer
	buf []byte
	err error
	// flat is set while a flat record (flatRecord) is written on one line.
	flat bool
}

// flushAt is the buffer size at which the encoder writes out.
const flushAt = 1 << 16

func (e *jsonEnc) flush() {
	if e.err == nil && len(e.buf) > 0 {
		_, e.err = e.w.Write(e.buf)
	}
	e.buf = e.buf[:0]
}

func (e *jsonEnc) newline(depth int) {
	if e.flat {
		return
	}
	e.buf = append(e.buf, '\n')
	for i := 0; i < depth; i++ {
		e.buf = append(e.buf, ' ', ' ')
	}
}

var (
	marshalerType = reflect.TypeFor[json.Marshaler]()
	dateType      = reflect.TypeFor[Date]()
)

// field is one JSON member of a struct: its key (quoted, with ": ") and
// the index path to it (longer than one through an embedded pointer).
type field struct {
	key       []byte
	index     []int
	omitEmpty bool
	scalar    bool // a string, number, bool or Date: no object or array
}

var fieldCache sync.Map // reflect.Type → []field

// fieldsOf lists t's JSON members in encoding/json's order. Embedded
// structs (or pointers to them) without a tag are flattened; a name that
// occurs twice at the same depth is a conflict this encoder does not
// resolve, so such a type is refused (ok false) and encoded by
// encoding/json.
func fieldsOf(t reflect.Type) ([]field, bool) {
	if f, ok := fieldCache.Load(t); ok {
		fs := f.([]field)
		return fs, fs != nil
	}
	var out []field
	seen := map[string]bool{}
	ok := true
	var walk func(t reflect.Type, index []int)
	walk = func(t reflect.Type, index []int) {
		for i := 0; i < t.NumField(); i++ {
			sf := t.Field(i)
			tag := sf.Tag.Get("json")
			if tag == "-" {
				continue
			}
			name, opts, _ := strings.Cut(tag, ",")
			idx := append(append([]int(nil), index...), i)
			if sf.Anonymous && name == "" {
				ft := sf.Type
				if ft.Kind() == reflect.Pointer {
					ft = ft.Elem()
				}
				if ft.Kind() == reflect.Struct {
					if len(index) > 0 {
						ok = false // nested embedding: leave the rules to encoding/json
					}
					walk(ft, idx)
					continue
				}
			}
			if !sf.IsExported() {
				continue
			}
			if name == "" {
				name = sf.Name
			}
			if seen[name] || opts == "string" || strings.Contains(opts, "omitzero") {
				ok = false
			}
			seen[name] = true
			key, _ := json.Marshal(name)
			out = append(out, field{key: append(key, ':', ' '), index: idx, omitEmpty: strings.Contains(","+opts+",", ",omitempty,"), scalar: scalarType(sf.Type)})
		}
	}
	walk(t, nil)
	if !ok {
		out = nil
	}
	if out == nil {
		fieldCache.Store(t, []field(nil))
		return nil, false
	}
	fieldCache.Store(t, out)
	return out, true
}

// scalarType reports whether t is written as a JSON string, number or
// boolean.
func scalarType(t reflect.Type) bool {
	if t == dateType {
		return true
	}
	if t.Implements(marshalerType) {
		return false
	}
	switch t.Kind() {
	case reflect.String, reflect.Bool, reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Float32, reflect.Float64:
		return true
	}
	return false
}

var flatCache sync.Map // reflect.Type → bool

// flatRecord reports whether t is a struct whose members are all scalars
// (scalarType): such a record in a list is written on one line, without
// spaces, so that the list of a large ledger's tranches takes a line a
// tranche and no more bytes than it needs.
func flatRecord(t reflect.Type) bool {
	if f, ok := flatCache.Load(t); ok {
		return f.(bool)
	}
	flat := false
	if t.Kind() == reflect.Struct {
		if fs, ok := fieldsOf(t); ok {
			flat = true
			for _, f := range fs {
				flat = flat && f.scalar
			}
		}
	}
	flatCache.Store(t, flat)
	return flat
}

func isEmpty(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.String, reflect.Slice, reflect.Map, reflect.Array:
		return v.Len() == 0
	case reflect.Bool:
		return !v.Bool()
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return v.Int() == 0
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return v.Uint() == 0
	case reflect.Float32, reflect.Float64:
		return v.Float() == 0
	case reflect.Pointer, reflect.Interface:
		return v.IsNil()
	}
	return false
}

// value appends v at the given depth.
func (e *jsonEnc) value(v reflect.Value, depth int) {
	if len(e.buf) >= flushAt {
		e.flush()
	}
	if e.err != nil {
		return
	}
	t := v.Type()
	if t == dateType {
		d := v.Interface().(Date)
		if d.IsZero() {
			e.buf = append(e.buf, "null"...)
		} else {
			e.buf = append(e.buf, '"')
			e.buf = d.AppendISO(e.buf)
			e.buf = append(e.buf, '"')
		}
		return
	}
	if t.Kind() != reflect.Pointer && t.Implements(marshalerType) {
		e.fallback(v, depth)
		return
	}
	switch v.Kind() {
	case reflect.String:
		e.str(v.String())
	case reflect.Bool:
		e.buf = strconv.AppendBool(e.buf, v.Bool())
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		e.buf = strconv.AppendInt(e.buf, v.Int(), 10)
	case reflect.Float64:
		e.buf = appendFloat(e.buf, v.Float())
	case reflect.Pointer:
		if v.IsNil() {
			e.buf = append(e.buf, "null"...)
			return
		}
		e.value(v.Elem(), depth)
	case reflect.Slice:
		if v.IsNil() {
			e.buf = append(e.buf, "null"...)
			return
		}
		if t.Elem().Kind() == reflect.Uint8 {
			e.fallback(v, depth) // base64
			return
		}
		n := v.Len()
		if n == 0 {
			e.buf = append(e.buf, '[', ']')
			return
		}
		flat := !e.flat && flatRecord(t.Elem())
		e.buf = append(e.buf, '[')
		for i := 0; i < n; i++ {
			if i > 0 {
				e.buf = append(e.buf, ',')
			}
			e.newline(depth + 1)
			if flat {
				e.flat = true
				e.value(v.Index(i), depth+1)
				e.flat = false
				continue
			}
			e.value(v.Index(i), depth+1)
		}
		e.newline(depth)
		e.buf = append(e.buf, ']')
	case reflect.Struct:
		fs, ok := fieldsOf(t)
		if !ok {
			e.fallback(v, depth)
			return
		}
		e.buf = append(e.buf, '{')
		n := 0
	members:
		for _, f := range fs {
			fv := v
			for _, i := range f.index {
				if fv.Kind() == reflect.Pointer {
					if fv.IsNil() {
						continue members
					}
					fv = fv.Elem()
				}
				fv = fv.Field(i)
			}
			if f.omitEmpty && isEmpty(fv) {
				continue
			}
			if n > 0 {
				e.buf = append(e.buf, ',')
			}
			n++
			e.newline(depth + 1)
			if e.flat {
				e.buf = append(e.buf, f.key[:len(f.key)-1]...) // no space after the colon
			} else {
				e.buf = append(e.buf, f.key...)
			}
			e.value(fv, depth+1)
		}
		if n > 0 {
			e.newline(depth)
		}
		e.buf = append(e.buf, '}')
	default:
		e.fallback(v, depth)
	}
}

// appendFloat formats f as encoding/json does.
func appendFloat(b []byte, f float64) []byte {
	abs := math.Abs(f)
	format := byte('f')
	if abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, f, format, -1, 64)
	if format == 'e' {
		// Clean up e-09 to e-9.
		n := len(b)
		if n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

// str appends s quoted. Printable ASCII without a quote or a backslash is
// copied; anything else is left to encoding/json.
func (e *jsonEnc) str(s string) {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x7f || c == '"' || c == '\\' {
			e.fallback(reflect.ValueOf(s), 0)
			return
		}
	}
	e.buf = append(e.buf, '"')
	e.buf = append(e.buf, s...)
	e.buf = append(e.buf, '"')
}

// fallback encodes v with encoding/json and indents it to depth.
func (e *jsonEnc) fallback(v reflect.Value, depth int) {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v.Interface()); err != nil {
		if e.err == nil {
			e.err = err
		}
		return
	}
	src := bytes.TrimSuffix(b.Bytes(), []byte("\n"))
	if e.flat || bytes.IndexAny(src, "{[") < 0 {
		e.buf = append(e.buf, src...)
		return
	}
	var out bytes.Buffer
	if err := json.Indent(&out, src, strings.Repeat("  ", depth), "  "); err != nil {
		if e.err == nil {
			e.err = err
		}
		return
	}
	e.buf = append(e.buf, out.Bytes()...)
}
