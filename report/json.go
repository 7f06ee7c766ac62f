package report

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"reflect"
	"strings"
)

// WriteJSON writes valuation.json (DESIGN §4.3): the Model as one JSON
// object, indented by two spaces, fields in a fixed order, empty lists as
// [] rather than null. The same Model gives the same bytes. A NaN or an
// infinity anywhere in the Model is an error, not a silent null.
func WriteJSON(w io.Writer, m *Model) error {
	if err := checkFinite(reflect.ValueOf(m), "model"); err != nil {
		return err
	}
	c := *m
	c.Grants = nonNil(c.Grants)
	for i := range c.Grants {
		c.Grants[i].Tranches = nonNil(c.Grants[i].Tranches)
	}
	c.Warnings = nonNil(c.Warnings)
	c.ByInstrument = nonNil(c.ByInstrument)
	c.ByGrantMonth = nonNil(c.ByGrantMonth)
	c.Assumptions = nonNil(c.Assumptions)
	c.Sensitivity = nonNil(c.Sensitivity)
	c.CrossChecks = nonNil(c.CrossChecks)
	if c.Expense != nil && c.Expense.Periods == nil {
		e := *c.Expense
		e.Periods = []ExpensePeriod{}
		c.Expense = &e
	}
	// The object is written field by field, and a list field element by
	// element, each element encoded on its own and indented as it is
	// written: the file for a large ledger is hundreds of megabytes and is
	// never held in memory whole. The bytes are those of encoding/json's
	// Encoder with a two-space indent (the golden tests check it).
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.WriteString("{")
	v := reflect.ValueOf(c)
	t := v.Type()
	first := true
	for i := 0; i < t.NumField(); i++ {
		sf := t.Field(i)
		name, _, _ := strings.Cut(sf.Tag.Get("json"), ",")
		if !sf.IsExported() || name == "-" {
			continue
		}
		if name == "" {
			name = sf.Name
		}
		if !first {
			bw.WriteString(",")
		}
		first = false
		bw.WriteString("\n  ")
		key, _ := json.Marshal(name)
		bw.Write(key)
		bw.WriteString(": ")
		fv := v.Field(i)
		if fv.Kind() == reflect.Slice && fv.Len() > 0 {
			bw.WriteString("[")
			for k := 0; k < fv.Len(); k++ {
				if k > 0 {
					bw.WriteString(",")
				}
				bw.WriteString("\n    ")
				if err := encodeIndented(bw, fv.Index(k).Interface(), 2); err != nil {
					return err
				}
			}
			bw.WriteString("\n  ]")
			continue
		}
		if err := encodeIndented(bw, fv.Interface(), 1); err != nil {
			return err
		}
	}
	bw.WriteString("\n}\n")
	return bw.Flush()
}

// encodeIndented writes v as JSON (no HTML escaping), indented by two
// spaces as if it stood at the given depth of the document.
func encodeIndented(w *bufio.Writer, v any, depth int) error {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return err
	}
	indentTo(w, bytes.TrimSuffix(buf.Bytes(), []byte("\n")), depth)
	return nil
}

// indentTo copies compact JSON to w with encoding/json's indentation rules:
// a newline and two spaces per level after { [ and , (none inside an empty
// {} or []), a space after :.
func indentTo(w *bufio.Writer, src []byte, depth int) {
	newline := func() {
		w.WriteByte('\n')
		for i := 0; i < depth; i++ {
			w.WriteString("  ")
		}
	}
	needIndent, inString, escaped := false, false, false
	for _, c := range src {
		if inString {
			w.WriteByte(c)
			switch {
			case escaped:
				escaped = false
			case c == '\\':
				escaped = true
			case c == '"':
				inString = false
			}
			continue
		}
		if needIndent && c != ']' && c != '}' {
			needIndent = false
			depth++
			newline()
		}
		switch c {
		case '"':
			inString = true
			w.WriteByte(c)
		case '{', '[':
			w.WriteByte(c)
			needIndent = true
		case ',':
			w.WriteByte(c)
			newline()
		case ':':
			w.WriteByte(c)
			w.WriteByte(' ')
		case '}', ']':
			if needIndent {
				needIndent = false
			} else {
				depth--
				newline()
			}
			w.WriteByte(c)
		default:
			w.WriteByte(c)
		}
	}
}

func nonNil[T any](s []T) []T {
	if s == nil {
		return []T{}
	}
	return s
}

// checkFinite walks v and reports the first non-finite float by its path.
func checkFinite(v reflect.Value, path string) error {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return nil
		}
		return checkFinite(v.Elem(), path)
	case reflect.Struct:
		t := v.Type()
		for i := 0; i < v.NumField(); i++ {
			if !t.Field(i).IsExported() {
				continue
			}
			if err := checkFinite(v.Field(i), path+"."+t.Field(i).Name); err != nil {
				return err
			}
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			if err := checkFinite(v.Index(i), fmt.Sprintf("%s[%d]", path, i)); err != nil {
				return err
			}
		}
	case reflect.Float32, reflect.Float64:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			return fmt.Errorf("report: %s is %v, not a finite number", path, f)
		}
	}
	return nil
}
