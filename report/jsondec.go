package report

import (
	"encoding"
	"encoding/json"
	"fmt"
	"math"
	"reflect"
	"strconv"
	"sync"
	"unsafe"
)

// Decoding plans over the scanner (jsonscan.go) for the Model's types: the
// mirror of the encoder's plans (jsonenc.go). A struct is read member by
// member into its fields by their json names (exact names; a member it
// does not know is skipped, its grammar checked), a list into a slice, a
// null as encoding/json reads one (a pointer or a slice becomes nil, a
// Date zero, anything else is left as it is). A type the plans do not know
// (a map, an interface, one with its own UnmarshalJSON or UnmarshalText)
// is read as raw bytes and handed to encoding/json.
//
// A plan may read only some members of a record (decodePlans.only): the
// prior reader skips what a later close does not need.

type decodePlans struct {
	only  map[reflect.Type][]string // members read, by record type; a type not listed is read whole
	mu    sync.Mutex                // guards plans: a type is compiled on first use
	plans map[reflect.Type]*decPlan
}

type decPlan struct {
	t      reflect.Type
	kind   encKind                        // a scalar decodeScalar reads, or kOther
	dec    func(*scanner, unsafe.Pointer) // the other kinds
	fields []decField                     // a struct's members
	index  map[string]int                 // position in fields by name
	// flat: a struct of scalars only, which WriteJSON writes on one line
	// in a list (a tranche, an input): decodeStruct matches its members
	// in place (inPlace) before it reads them one by one.
	flat bool
}

type decField struct {
	jsonField
	quoted []byte   // the name in quotes, as a member's name is written
	lead   []byte   // `,"name":`, the member as a one-line record has it after another
	plan   *decPlan // nil: not read
}

// absent marks a float member that was not read (JSON has no NaN); only
// the values an expense tranche may leave out are marked (ExpenseTranche,
// the prior reader's book).
var absent = math.NaN()

var (
	expenseTrancheType  = reflect.TypeFor[ExpenseTranche]()
	unmarshalerType     = reflect.TypeFor[json.Unmarshaler]()
	textUnmarshalerType = reflect.TypeFor[encoding.TextUnmarshaler]()
)

// newDecodePlans compiles the plans of the types given and of every type
// they hold. only names, for a record type, the members to read; it
// panics on a name the type does not have (a mistake in the caller's list).
func newDecodePlans(only map[reflect.Type][]string, types ...reflect.Type) *decodePlans {
	d := &decodePlans{only: only, plans: map[reflect.Type]*decPlan{}}
	for _, t := range types {
		d.of(t)
	}
	for t, names := range only {
		pl := d.of(t)
		for _, n := range names {
			if _, ok := pl.index[n]; !ok {
				panic(fmt.Sprintf("report: %v has no JSON member %q", t, n))
			}
		}
	}
	return d
}

// decode reads the value that comes next into *v (v a pointer), by the
// plan of v's element type.
func (d *decodePlans) decode(s *scanner, v any) {
	rv := reflect.ValueOf(v)
	d.of(rv.Type().Elem()).decode(s, rv.UnsafePointer())
}

// of is t's plan, compiled on first use; several readers may ask at once.
func (d *decodePlans) of(t reflect.Type) *decPlan {
	d.mu.Lock()
	defer d.mu.Unlock()
	return d.plan(t)
}

// plan is t's plan, compiled on first use; d.mu is held.
func (d *decodePlans) plan(t reflect.Type) *decPlan {
	if pl, ok := d.plans[t]; ok {
		return pl
	}
	pl := &decPlan{t: t}
	d.plans[t] = pl
	switch {
	case t == dateType:
		pl.kind = kDate
		return pl
	case t.Kind() != reflect.Pointer && (reflect.PointerTo(t).Implements(unmarshalerType) || reflect.PointerTo(t).Implements(textUnmarshalerType)):
		pl.dec = rawDec(t)
		return pl
	}
	switch t.Kind() {
	case reflect.String:
		pl.kind = kString
	case reflect.Float64:
		pl.kind = kFloat64
	case reflect.Int:
		pl.kind = kInt
	case reflect.Int64:
		pl.kind = kInt64
	case reflect.Bool:
		pl.kind = kBool
	case reflect.Int8, reflect.Int16, reflect.Int32:
		pl.dec = func(s *scanner, p unsafe.Pointer) {
			if v, ok := s.integer(t.Bits()); ok {
				reflect.NewAt(t, p).Elem().SetInt(v)
			}
		}
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		pl.dec = func(s *scanner, p unsafe.Pointer) {
			if v, ok := s.unsigned(t.Bits()); ok {
				reflect.NewAt(t, p).Elem().SetUint(v)
			}
		}
	case reflect.Pointer:
		elem := d.plan(t.Elem())
		pl.dec = func(s *scanner, p unsafe.Pointer) {
			pp := (*unsafe.Pointer)(p)
			if s.null() {
				*pp = nil
				return
			}
			if *pp == nil {
				*pp = reflect.New(t.Elem()).UnsafePointer()
			}
			elem.decode(s, *pp)
		}
	case reflect.Slice:
		if t.Elem().Kind() == reflect.Uint8 {
			pl.dec = rawDec(t) // base64
			break
		}
		pl.dec = sliceDec(t, d.plan(t.Elem()))
	case reflect.Struct:
		fs, ok := jsonFields(t)
		if !ok {
			pl.dec = rawDec(t)
			break
		}
		read := map[string]bool{}
		names, some := d.only[t]
		for _, n := range names {
			read[n] = true
		}
		pl.index = map[string]int{}
		pl.flat = true
		for i, f := range fs {
			df := decField{jsonField: f, quoted: []byte(strconv.Quote(f.name))}
			df.lead = append(append([]byte{','}, df.quoted...), ':')
			if !some || read[f.name] {
				df.plan = d.plan(f.typ)
			}
			pl.fields = append(pl.fields, df)
			pl.index[f.name] = i
			pl.flat = pl.flat && !f.embedded && scalarKind(f.typ)
		}
		pl.dec = pl.decodeStruct
		if t == expenseTrancheType {
			// A member a row leaves out (SchemaVersion 3) stays absent.
			pl.dec = func(s *scanner, p unsafe.Pointer) {
				et := (*ExpenseTranche)(p)
				et.FairValuePerShare, et.GrantDateFairValuePerShare = absent, absent
				pl.decodeStruct(s, p)
			}
		}
	default:
		pl.dec = rawDec(t)
	}
	return pl
}

// decode reads the value that comes next into the value of the plan's
// type at p.
func (pl *decPlan) decode(s *scanner, p unsafe.Pointer) {
	switch pl.kind {
	case kString:
		s.str((*string)(p))
	case kFloat64:
		s.float((*float64)(p))
	case kInt:
		if v, ok := s.integer(strconv.IntSize); ok {
			*(*int)(p) = int(v)
		}
	case kInt64:
		if v, ok := s.integer(64); ok {
			*(*int64)(p) = v
		}
	case kBool:
		s.boolean((*bool)(p))
	case kDate:
		s.date((*Date)(p))
	default:
		pl.dec(s, p)
	}
}

// decodeStruct reads an object into the struct at p. The members of a
// file grantworth wrote come in the order of the fields: the next field's
// name is tried before the index.
func (pl *decPlan) decodeStruct(s *scanner, p unsafe.Pointer) {
	if !s.open('{') {
		return
	}
	n, next := 0, 0
	if pl.flat {
		n, next = pl.inPlace(s, p)
	}
	for s.next(&n, '}') {
		i := -1
		if next < len(pl.fields) && s.keyIs(pl.fields[next].quoted) {
			i = next
		} else {
			k := s.key()
			if s.err != nil {
				return
			}
			if j, ok := pl.index[string(k)]; ok {
				i = j
			}
		}
		if i < 0 {
			s.skip()
			continue
		}
		next = i + 1
		pl.member(s, i, p)
	}
}

// inPlace reads the members of a one-line record as WriteJSON writes
// them, matched in the buffer: each name right after the '{' or the ','
// before it, in quotes, printable ASCII without escapes, its colon right
// after it (the next field's name tried first, as decodeStruct does, then
// the index; a member left out or out of order is found too), up to the
// first member that is not so written, or the end of the record or of the
// buffer. It returns the members read (n) and the field after the last
// one read (next); decodeStruct reads on from there, as it would have read
// those members itself: the same values into the same fields, and a value
// of the wrong kind or a fault refused by the same call.
func (pl *decPlan) inPlace(s *scanner, p unsafe.Pointer) (n, next int) {
	for s.err == nil {
		b := s.buf[s.pos:]
		if n > 0 {
			if len(b) == 0 || b[0] != ',' {
				break
			}
			b = b[1:]
		}
		i, at := -1, 0
		if next < len(pl.fields) {
			if q := pl.fields[next].quoted; len(b) > len(q) && b[len(q)] == ':' && string(b[:len(q)]) == string(q) {
				i, at = next, len(q)+1
			}
		}
		if i < 0 {
			// Another member: its name read as key reads a name of
			// printable ASCII without escapes, looked up as there.
			if len(b) == 0 || b[0] != '"' {
				break
			}
			j := 1
			for j < len(b) && plainByte[b[j]] {
				j++
			}
			if j+1 >= len(b) || b[j] != '"' || b[j+1] != ':' {
				break
			}
			var ok bool
			if i, ok = pl.index[string(b[1:j])]; !ok {
				i = -1
			}
			at = j + 2
		}
		s.pos += len(s.buf[s.pos:]) - len(b) + at
		n++
		if i < 0 {
			s.skip()
			continue
		}
		next = i + 1
		f := &pl.fields[i]
		q := unsafe.Add(p, f.off)
		kind := kOther
		if f.plan != nil {
			kind = f.plan.kind
		}
		switch kind {
		case kFloat64, kInt, kInt64, kOther:
			// A number that ends in the buffer is read here; anything
			// else (a null, a string, a token the buffer cuts, a fault)
			// as decodeStruct reads it.
			b := s.buf[s.pos:]
			r := scanNumber(b)
			if !r.ok || r.end == len(b) {
				pl.member(s, i, p)
				continue
			}
			if f.plan == nil {
				s.pos += r.end
				continue
			}
			if !numberInPlace(s, kind, b[:r.end], &r, q) {
				pl.member(s, i, p)
			}
		default:
			f.plan.decode(s, q)
		}
	}
	return n, next
}

// numberInPlace reads the number tok at s.pos, scanned whole (r), into the
// value of kind k at q as scanner.float and scanner.integer would; false
// (nothing read) where they would take another path.
func numberInPlace(s *scanner, k encKind, tok []byte, r *numScan, q unsafe.Pointer) bool {
	switch k {
	case kFloat64:
		f, ok := floatOf(tok, r)
		if !ok {
			return false
		}
		*(*float64)(q) = f
	case kInt, kInt64:
		v, ok := wholeOf(r)
		if !ok || k == kInt && strconv.IntSize != 64 {
			return false
		}
		if k == kInt {
			*(*int)(q) = int(v)
		} else {
			*(*int64)(q) = v
		}
	default:
		return false
	}
	s.pos += len(tok)
	return true
}

// scalarKind reports whether WriteJSON writes a value of t as a scalar
// (its typeEnc.scalar): a struct of such members is flat.
func scalarKind(t reflect.Type) bool {
	if t == dateType {
		return true
	}
	if t.Kind() != reflect.Pointer && (t.Implements(marshalerType) || t.Implements(textMarshalerType) ||
		reflect.PointerTo(t).Implements(marshalerType) || reflect.PointerTo(t).Implements(textMarshalerType)) {
		return false
	}
	switch t.Kind() {
	case reflect.String, reflect.Float64, reflect.Int, reflect.Int64, reflect.Bool,
		reflect.Int8, reflect.Int16, reflect.Int32, reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
		return true
	}
	return false
}

// member reads the value that comes next into field i of the struct at p
// (or skips it, a field not read).
func (pl *decPlan) member(s *scanner, i int, p unsafe.Pointer) {
	f := &pl.fields[i]
	if f.plan == nil {
		s.skip()
		return
	}
	if f.embedded {
		pp := (*unsafe.Pointer)(unsafe.Add(p, f.embedOff))
		if *pp == nil {
			*pp = reflect.New(f.embedType).UnsafePointer()
		}
		p = *pp
	}
	f.plan.decode(s, unsafe.Add(p, f.off))
}

// sliceDec reads an array into a slice of t, from its first element on
// (its array reused, each element zeroed first); null makes it nil.
func sliceDec(t reflect.Type, elem *decPlan) func(*scanner, unsafe.Pointer) {
	return func(s *scanner, p unsafe.Pointer) {
		v := reflect.NewAt(t, p).Elem()
		if s.null() {
			v.SetZero()
			return
		}
		if !s.open('[') {
			return
		}
		if v.IsNil() {
			v.Set(reflect.MakeSlice(t, 0, 0))
		}
		v.SetLen(0)
		for n := 0; s.next(&n, ']'); {
			i := v.Len()
			if i == v.Cap() {
				v.Grow(1)
			}
			v.SetLen(i + 1)
			e := v.Index(i)
			e.SetZero()
			elem.decode(s, e.Addr().UnsafePointer())
		}
	}
}

// rawDec reads a value of t through encoding/json.
func rawDec(t reflect.Type) func(*scanner, unsafe.Pointer) {
	return func(s *scanner, p unsafe.Pointer) {
		raw := s.rawValue()
		if s.err != nil {
			return
		}
		if err := json.Unmarshal(raw, reflect.NewAt(t, p).Interface()); err != nil {
			s.failAt(s.pos-len(raw), false, "%v", err)
		}
	}
}
