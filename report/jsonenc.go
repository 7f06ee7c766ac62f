package report

import (
	"bytes"
	"encoding"
	"encoding/json"
	"errors"
	"io"
	"math"
	"reflect"
	"strconv"
	"strings"
	"sync"
	"unsafe"
)

// A JSON encoder for the Model's types that writes, in one pass, the bytes
// of encoding/json's Encoder (no HTML escaping) indented by two spaces,
// except that a flat record in a list (an object of strings, numbers and
// booleans only: a tranche, an event, an input, a period) is written on
// one line without spaces. valuation.json for a large ledger holds
// millions of such records: indented, each took a line a member, a third
// of the file.
//
// Each type is looked at once: encoderOf compiles it into a plan (a
// struct's members with their keys, offsets and encoders; a slice's
// element encoder), and the plans then read the values through their
// offsets, without reflection. The plans know the kinds the Model uses
// (structs with json tags and omitempty, embedded struct pointers,
// pointers, slices, strings, bools, integers, float64 and Date); any other
// kind, or a type with its own MarshalJSON or MarshalText, is handed to
// encoding/json. A test checks the encoder against encoding/json on whole
// Models: the same bytes but for white space between tokens.

type jsonEnc struct {
	w   io.Writer
	buf []byte
	err error
	// flat is set while a flat record (typeEnc.flat) is written on one
	// line.
	flat bool
	// grantTranches are the tranches of each grant of the Model written,
	// by grant ID; ref those of the grant whose expense attribution is
	// being written (expenseTranchesEnc).
	grantTranches map[string][]Tranche
	ref           []Tranche
	// floats holds the bytes of fractional numbers written lately, by
	// their bits: a value written again (a grant's years_to_expiry and
	// risk_free_rate on each of its tranches, a tranche's cost again as
	// its cumulative) is copied instead of formatted again.
	floats [floatMemos]floatMemo
}

// floatMemo is a float64's bits and the bytes appendFloat wrote for it
// (n 0: none yet).
type floatMemo struct {
	bits uint64
	n    uint8
	b    [32]byte
}

// floatMemos is the number of floats jsonEnc keeps the bytes of, each
// in the place the top floatMemoBits bits of a multiplicative hash of its
// bits give.
const (
	floatMemoBits = 6
	floatMemos    = 1 << floatMemoBits
)

// flushAt is the buffer size at which the encoder writes out: large
// writes, few system calls.
const flushAt = 1 << 20

// errNonFinite stops the encoder at a NaN or an infinity; WriteJSON then
// finds its path for the message.
var errNonFinite = errors.New("report: a number is not finite")

func (e *jsonEnc) flush() {
	if e.err == nil && len(e.buf) > 0 {
		_, e.err = e.w.Write(e.buf)
	}
	e.buf = e.buf[:0]
}

// indent is what newline appends: a newline and up to 32 levels of two
// spaces.
var indent = "\n" + strings.Repeat("  ", 32)

func (e *jsonEnc) newline(depth int) {
	if e.flat {
		return
	}
	if n := 1 + 2*depth; n <= len(indent) {
		e.buf = append(e.buf, indent[:n]...)
		return
	}
	e.buf = append(e.buf, '\n')
	for i := 0; i < depth; i++ {
		e.buf = append(e.buf, ' ', ' ')
	}
}

// encodeFunc appends the value of the plan's type at p.
type encodeFunc func(e *jsonEnc, p unsafe.Pointer, depth int)

// typeEnc is the compiled plan of one type.
type typeEnc struct {
	t    reflect.Type
	kind encKind
	enc  encodeFunc // for the kinds encodeScalar does not know
	// flat: a struct whose members are all scalars (scalar), written on
	// one line when it is an element of a list.
	flat, scalar bool
	empty        func(p unsafe.Pointer) bool // for omitempty
}

// encKind names the scalars a struct's member loop writes itself.
type encKind uint8

const (
	kOther encKind = iota
	kString
	kFloat64
	kInt
	kInt64
	kBool
	kDate
)

// member is one JSON member of a struct: its key and the way to its
// value (as in jsonField) and its encoder.
type member struct {
	key, flatKey []byte // `"name": ` and `"name":`
	embedded     bool
	embedOff     uintptr
	off          uintptr
	te           *typeEnc
	omitEmpty    bool
}

var (
	marshalerType       = reflect.TypeFor[json.Marshaler]()
	textMarshalerType   = reflect.TypeFor[encoding.TextMarshaler]()
	dateType            = reflect.TypeFor[Date]()
	expenseGrantType    = reflect.TypeFor[ExpenseGrant]()
	expenseTranchesType = reflect.TypeFor[[]ExpenseTranche]()
	encPlans            sync.Map // reflect.Type → *typeEnc
	encPlanMu           sync.Mutex
)

// encoderOf is the plan of t, compiled on first use.
func encoderOf(t reflect.Type) *typeEnc {
	if te, ok := encPlans.Load(t); ok {
		return te.(*typeEnc)
	}
	encPlanMu.Lock()
	defer encPlanMu.Unlock()
	building := map[reflect.Type]*typeEnc{}
	te := compileEnc(t, building)
	for t, te := range building {
		encPlans.Store(t, te)
	}
	return te
}

// compileEnc builds t's plan. building holds the plans being built, so
// that a type that contains itself refers to its own plan.
func compileEnc(t reflect.Type, building map[reflect.Type]*typeEnc) *typeEnc {
	if te, ok := encPlans.Load(t); ok {
		return te.(*typeEnc)
	}
	if te, ok := building[t]; ok {
		return te
	}
	te := &typeEnc{t: t}
	building[t] = te
	te.empty = emptyFunc(t)
	switch {
	case t == dateType:
		te.kind, te.scalar = kDate, true
		return te
	case t == expenseGrantType:
		members, _ := membersOf(t, building)
		enc := structEnc(members)
		te.enc = func(e *jsonEnc, p unsafe.Pointer, depth int) {
			e.ref = e.grantTranches[(*ExpenseGrant)(p).GrantID]
			enc(e, p, depth)
			e.ref = nil
		}
		return te
	case t == expenseTranchesType:
		te.enc = expenseTranchesEnc
		return te
	case t.Kind() != reflect.Pointer && (t.Implements(marshalerType) || t.Implements(textMarshalerType) ||
		reflect.PointerTo(t).Implements(marshalerType) || reflect.PointerTo(t).Implements(textMarshalerType)):
		te.enc = fallbackEnc(t)
		return te
	}
	switch t.Kind() {
	case reflect.String:
		te.kind, te.scalar = kString, true
	case reflect.Float64:
		te.kind, te.scalar = kFloat64, true
	case reflect.Int:
		te.kind, te.scalar = kInt, true
	case reflect.Int64:
		te.kind, te.scalar = kInt64, true
	case reflect.Bool:
		te.kind, te.scalar = kBool, true
	case reflect.Int8, reflect.Int16, reflect.Int32:
		te.scalar = true
		te.enc = func(e *jsonEnc, p unsafe.Pointer, _ int) {
			e.buf = strconv.AppendInt(e.buf, reflect.NewAt(t, p).Elem().Int(), 10)
		}
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		te.scalar = true
		te.enc = func(e *jsonEnc, p unsafe.Pointer, _ int) {
			e.buf = strconv.AppendUint(e.buf, reflect.NewAt(t, p).Elem().Uint(), 10)
		}
	case reflect.Pointer:
		elem := compileEnc(t.Elem(), building)
		te.enc = func(e *jsonEnc, p unsafe.Pointer, depth int) {
			q := *(*unsafe.Pointer)(p)
			if q == nil {
				e.buf = append(e.buf, "null"...)
				return
			}
			elem.encode(e, q, depth)
		}
	case reflect.Slice:
		if t.Elem().Kind() == reflect.Uint8 {
			te.enc = fallbackEnc(t) // base64
			break
		}
		te.enc = sliceEnc(t, compileEnc(t.Elem(), building))
	case reflect.Struct:
		members, ok := membersOf(t, building)
		if !ok {
			te.enc = fallbackEnc(t)
			break
		}
		te.flat = true
		for _, m := range members {
			te.flat = te.flat && m.te.scalar
		}
		te.enc = structEnc(members)
	default:
		// Float32 (encoding/json formats it in 32 bits), arrays, maps,
		// interfaces: none in the Model; left to encoding/json.
		te.enc = fallbackEnc(t)
	}
	return te
}

// membersOf is t's JSON members with their encoders (jsonFields).
func membersOf(t reflect.Type, building map[reflect.Type]*typeEnc) ([]member, bool) {
	fs, ok := jsonFields(t)
	if !ok {
		return nil, false
	}
	out := make([]member, len(fs))
	for i, f := range fs {
		key, _ := json.Marshal(f.name)
		out[i] = member{key: append(key, ':', ' '), flatKey: append(key, ':'), embedded: f.embedded, embedOff: f.embedOff,
			off: f.off, te: compileEnc(f.typ, building), omitEmpty: f.omitEmpty}
	}
	return out, true
}

// jsonField is one JSON member of a struct type and the way to its value:
// the offset of the embedded struct pointer it is reached through
// (embedded, embedType the struct it points to), then its offset.
type jsonField struct {
	name      string
	typ       reflect.Type
	embedded  bool
	embedOff  uintptr
	embedType reflect.Type
	off       uintptr
	omitEmpty bool
}

// jsonFields lists t's JSON members in encoding/json's order. Embedded
// structs (or pointers to them) without a tag are flattened; a name that
// occurs twice, an embedding within an embedding, or the options string
// and omitzero are rules the encoder and the decoder here do not follow,
// so such a type is refused (ok false) and left to encoding/json.
func jsonFields(t reflect.Type) ([]jsonField, bool) {
	var out []jsonField
	seen := map[string]bool{}
	ok := true
	// nested: t is itself embedded; embedded: reached through the
	// pointer at embedOff.
	var walk func(t reflect.Type, nested bool, via *jsonField, base uintptr)
	walk = func(t reflect.Type, nested bool, via *jsonField, base uintptr) {
		for i := 0; i < t.NumField(); i++ {
			sf := t.Field(i)
			tag := sf.Tag.Get("json")
			if tag == "-" {
				continue
			}
			name, opts, _ := strings.Cut(tag, ",")
			if sf.Anonymous && name == "" {
				ft := sf.Type
				if ft.Kind() == reflect.Pointer {
					ft = ft.Elem()
				}
				if ft.Kind() == reflect.Struct {
					if nested {
						ok = false // nested embedding: leave the rules to encoding/json
					}
					if sf.Type.Kind() == reflect.Pointer {
						walk(ft, true, &jsonField{embedded: true, embedOff: base + sf.Offset, embedType: ft}, 0)
					} else {
						walk(ft, true, via, base+sf.Offset)
					}
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
			f := jsonField{name: name, typ: sf.Type, off: base + sf.Offset, omitEmpty: strings.Contains(","+opts+",", ",omitempty,")}
			if via != nil {
				f.embedded, f.embedOff, f.embedType = true, via.embedOff, via.embedType
			}
			out = append(out, f)
		}
	}
	walk(t, false, nil, 0)
	return out, ok
}

// encode appends the value at p.
func (te *typeEnc) encode(e *jsonEnc, p unsafe.Pointer, depth int) {
	if !e.scalar(te.kind, p) {
		te.enc(e, p, depth)
	}
}

// scalar appends the scalar of kind k at p, or reports false for a kind it
// does not write.
func (e *jsonEnc) scalar(k encKind, p unsafe.Pointer) bool {
	switch k {
	case kString:
		e.str(*(*string)(p))
	case kFloat64:
		e.float(*(*float64)(p))
	case kInt:
		e.buf = strconv.AppendInt(e.buf, int64(*(*int)(p)), 10)
	case kInt64:
		e.buf = strconv.AppendInt(e.buf, *(*int64)(p), 10)
	case kBool:
		e.buf = strconv.AppendBool(e.buf, *(*bool)(p))
	case kDate:
		d := *(*Date)(p)
		if d.IsZero() {
			e.buf = append(e.buf, "null"...)
		} else {
			e.buf = append(e.buf, '"')
			e.buf = d.AppendISO(e.buf)
			e.buf = append(e.buf, '"')
		}
	default:
		return false
	}
	return true
}

func structEnc(members []member) encodeFunc {
	return func(e *jsonEnc, p unsafe.Pointer, depth int) {
		if len(e.buf) >= flushAt {
			e.flush()
		}
		e.buf = append(e.buf, '{')
		n := 0
		for i := range members {
			m := &members[i]
			q := p
			if m.embedded {
				q = *(*unsafe.Pointer)(unsafe.Add(p, m.embedOff))
				if q == nil {
					continue
				}
			}
			q = unsafe.Add(q, m.off)
			if m.omitEmpty && m.te.empty(q) {
				continue
			}
			if n > 0 {
				e.buf = append(e.buf, ',')
			}
			n++
			if e.flat {
				e.buf = append(e.buf, m.flatKey...)
			} else {
				e.newline(depth + 1)
				e.buf = append(e.buf, m.key...)
			}
			if !e.scalar(m.te.kind, q) {
				m.te.enc(e, q, depth+1)
			}
		}
		if n > 0 {
			e.newline(depth)
		}
		e.buf = append(e.buf, '}')
	}
}

func sliceEnc(t reflect.Type, elem *typeEnc) encodeFunc {
	size := t.Elem().Size()
	return func(e *jsonEnc, p unsafe.Pointer, depth int) {
		// A slice's header is the same whatever its element type.
		s := (*[]byte)(p)
		if *s == nil {
			e.buf = append(e.buf, "null"...)
			return
		}
		n := len(*s)
		if n == 0 {
			e.buf = append(e.buf, '[', ']')
			return
		}
		flat := !e.flat && elem.flat
		base := unsafe.Pointer(unsafe.SliceData(*s))
		e.buf = append(e.buf, '[')
		for i := 0; i < n && e.err == nil; i++ {
			if i > 0 {
				e.buf = append(e.buf, ',')
			}
			e.newline(depth + 1)
			q := unsafe.Add(base, uintptr(i)*size)
			if flat {
				e.flat = true
				elem.encode(e, q, depth+1)
				e.flat = false
				continue
			}
			elem.encode(e, q, depth+1)
		}
		e.newline(depth)
		e.buf = append(e.buf, ']')
	}
}

// emptyFunc is omitempty's test for t, as encoding/json applies it.
func emptyFunc(t reflect.Type) func(unsafe.Pointer) bool {
	switch t.Kind() {
	case reflect.String:
		return func(p unsafe.Pointer) bool { return len(*(*string)(p)) == 0 }
	case reflect.Slice:
		return func(p unsafe.Pointer) bool { return len(*(*[]byte)(p)) == 0 }
	case reflect.Pointer:
		return func(p unsafe.Pointer) bool { return *(*unsafe.Pointer)(p) == nil }
	case reflect.Float64:
		return func(p unsafe.Pointer) bool { return *(*float64)(p) == 0 }
	case reflect.Int:
		return func(p unsafe.Pointer) bool { return *(*int)(p) == 0 }
	case reflect.Bool:
		return func(p unsafe.Pointer) bool { return !*(*bool)(p) }
	}
	return func(p unsafe.Pointer) bool { return isEmptyValue(reflect.NewAt(t, p).Elem()) }
}

func isEmptyValue(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.String, reflect.Slice, reflect.Map, reflect.Array:
		return v.Len() == 0
	case reflect.Bool:
		return !v.Bool()
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return v.Int() == 0
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		return v.Uint() == 0
	case reflect.Float32, reflect.Float64:
		return v.Float() == 0
	case reflect.Pointer, reflect.Interface:
		return v.IsNil()
	}
	return false
}

// float appends f as encoding/json does; a NaN or an infinity stops the
// encoder.
func (e *jsonEnc) float(f float64) {
	if f-f != 0 {
		if e.err == nil {
			e.err = errNonFinite
		}
		return
	}
	if f == math.Trunc(f) && math.Abs(f) < 1<<53 {
		e.buf = appendFloat(e.buf, f) // a whole number: its digits
		return
	}
	// appendFloat gives the same bytes for the same bits.
	bits := math.Float64bits(f)
	c := &e.floats[(bits*0x9e3779b97f4a7c15)>>(64-floatMemoBits)]
	if c.n > 0 && c.bits == bits {
		e.buf = append(e.buf, c.b[:c.n]...)
		return
	}
	start := len(e.buf)
	e.buf = appendFloat(e.buf, f)
	if n := len(e.buf) - start; n <= len(c.b) {
		c.bits, c.n = bits, uint8(n)
		copy(c.b[:], e.buf[start:])
	}
}

// appendFloat formats f as encoding/json does. A whole number below 2⁵³
// is written as an integer: its shortest form is its digits.
func appendFloat(b []byte, f float64) []byte {
	if f == math.Trunc(f) && math.Abs(f) < 1<<53 {
		if f == 0 && math.Signbit(f) {
			return append(b, '-', '0')
		}
		return strconv.AppendInt(b, int64(f), 10)
	}
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

// fallbackEnc encodes a value of t with encoding/json.
func fallbackEnc(t reflect.Type) encodeFunc {
	return func(e *jsonEnc, p unsafe.Pointer, depth int) {
		e.fallback(reflect.NewAt(t, p), depth)
	}
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

// expenseTranchesEnc writes a grant's tranche attributions
// (expense.by_grant[].tranches), one a line, leaving out what a row would
// repeat (SchemaVersion 3): its vest_date, shares and fair_value_per_share
// when they are those of the grant's tranche of the same index (e.ref),
// its grant_date_fair_value_per_share when it is its
// fair_value_per_share. A reader takes a member left out from there. The
// members written come in ExpenseTranche's order.
func expenseTranchesEnc(e *jsonEnc, p unsafe.Pointer, depth int) {
	s := *(*[]ExpenseTranche)(p)
	switch {
	case s == nil:
		e.buf = append(e.buf, "null"...)
		return
	case len(s) == 0:
		e.buf = append(e.buf, '[', ']')
		return
	}
	e.buf = append(e.buf, '[')
	for k := range s {
		if k > 0 {
			e.buf = append(e.buf, ',')
		}
		if len(e.buf) >= flushAt {
			e.flush()
		}
		e.newline(depth + 1)
		t := &s[k]
		ref := trancheOf(e.ref, k, t.Index)
		e.buf = append(e.buf, `{"index":`...)
		e.buf = strconv.AppendInt(e.buf, int64(t.Index), 10)
		if ref == nil || t.VestDate != ref.VestDate {
			e.buf = append(e.buf, `,"vest_date":`...)
			e.scalar(kDate, unsafe.Pointer(&t.VestDate))
		}
		if ref == nil || t.Shares != ref.Shares {
			e.buf = append(e.buf, `,"shares":`...)
			e.buf = strconv.AppendInt(e.buf, t.Shares, 10)
		}
		e.buf = append(e.buf, `,"shares_counted":`...)
		e.float(t.SharesCounted)
		if ref == nil || !sameFloat(t.FairValuePerShare, ref.FairValuePerShare) {
			e.buf = append(e.buf, `,"fair_value_per_share":`...)
			e.float(t.FairValuePerShare)
		}
		if !sameFloat(t.GrantDateFairValuePerShare, t.FairValuePerShare) {
			e.buf = append(e.buf, `,"grant_date_fair_value_per_share":`...)
			e.float(t.GrantDateFairValuePerShare)
		}
		e.buf = append(e.buf, `,"expected_share_at_vest":`...)
		e.float(t.ExpectedShare)
		e.buf = append(e.buf, `,"cost":`...)
		e.float(t.Cost)
		e.buf = append(e.buf, `,"cumulative_at_period_start":`...)
		e.float(t.CumulativeOpen)
		e.buf = append(e.buf, `,"period_amount":`...)
		e.float(t.Amount)
		e.buf = append(e.buf, `,"cumulative":`...)
		e.float(t.Cumulative)
		e.buf = append(e.buf, `,"unrecognized_cost":`...)
		e.float(t.Unrecognized)
		e.buf = append(e.buf, `,"remaining_years":`...)
		e.float(t.RemainingYears)
		e.buf = append(e.buf, '}')
	}
	e.newline(depth)
	e.buf = append(e.buf, ']')
}

// trancheOf is the tranche of ts with the given index, looked for at
// position k first; nil if there is none.
func trancheOf(ts []Tranche, k, index int) *Tranche {
	if k < len(ts) && ts[k].Index == index {
		return &ts[k]
	}
	for i := range ts {
		if ts[i].Index == index {
			return &ts[i]
		}
	}
	return nil
}

// sameFloat reports whether a and b are written the same: the same
// float64, bit for bit (0 and -0 are not).
func sameFloat(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }
