package report

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"reflect"
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
	// Everything but the grants is encoded at once; the grants, which are
	// most of the file for a large ledger, one at a time into the place
	// left for them, so that memory does not grow with the whole file.
	grants := c.Grants
	c.Grants = []Grant{}
	head, err := marshalIndent(&c, "")
	if err != nil {
		return err
	}
	const slot = "\n  \"grants\": [],\n"
	i := bytes.Index(head, []byte(slot))
	if i < 0 {
		return fmt.Errorf("report: no grants field in the JSON head")
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.Write(head[:i])
	if len(grants) == 0 {
		bw.WriteString(slot)
	} else {
		bw.WriteString("\n  \"grants\": [\n")
		for k := range grants {
			g, err := marshalIndent(&grants[k], "    ")
			if err != nil {
				return err
			}
			bw.WriteString("    ")
			bw.Write(bytes.TrimSuffix(g, []byte("\n")))
			if k < len(grants)-1 {
				bw.WriteString(",")
			}
			bw.WriteString("\n")
		}
		bw.WriteString("  ],\n")
	}
	bw.Write(head[i+len(slot):])
	return bw.Flush()
}

// marshalIndent encodes v as the whole file is encoded (two-space indent,
// no HTML escaping), each line after the first prefixed.
func marshalIndent(v any, prefix string) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent(prefix, "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
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
