package report

import (
	"fmt"
	"io"
	"math"
	"reflect"
	"strconv"
	"unsafe"
)

// WriteJSON writes valuation.json (DESIGN §4.3): the Model as one JSON
// object, indented by two spaces, fields in a fixed order, empty lists as
// [] rather than null, each record of scalars in a list (a tranche, an
// input, a period) on one line. The same Model gives the same bytes. A
// NaN or an infinity anywhere in what it writes is an error, not a silent
// null; the file is then incomplete, and the caller discards it (value
// writes into a staging folder).
func WriteJSON(w io.Writer, m *Model) error {
	c := withEmptyLists(m)
	// The file for a large ledger is hundreds of megabytes: it is encoded
	// in one pass straight to w (jsonenc.go), never held in memory whole.
	// The bytes are those of encoding/json's Encoder with a two-space
	// indent but for the records on one line (the golden tests and
	// TestJSONEncoderMatchesEncodingJSON check it).
	e := &jsonEnc{w: w, buf: make([]byte, 0, flushAt+flushAt/8)}
	if c.Expense != nil && c.Expense.ExpenseDetail != nil && len(c.Expense.ByGrant) > 0 {
		// An attribution's tranches leave out what the grant's give.
		e.grantTranches = make(map[string][]Tranche, len(c.Grants))
		for i := range c.Grants {
			e.grantTranches[c.Grants[i].ID] = c.Grants[i].Tranches
		}
	}
	encoderOf(reflect.TypeFor[Model]()).encode(e, unsafe.Pointer(&c), 0)
	if e.err == errNonFinite {
		if err := checkFinite(reflect.ValueOf(m), "model"); err != nil {
			return err
		}
		return e.err
	}
	e.buf = append(e.buf, '\n')
	e.flush()
	return e.err
}

func nonNil[T any](s []T) []T {
	if s == nil {
		return []T{}
	}
	return s
}

// checkFinite walks v and reports the first non-finite float by its path.
func checkFinite(v reflect.Value, path string) error {
	if bad, f := findNonFinite(v); bad != nil {
		for i := len(bad) - 1; i >= 0; i-- {
			path += bad[i]
		}
		return fmt.Errorf("report: %s is %v, not a finite number", path, f)
	}
	return nil
}

// findNonFinite returns the path to the first non-finite float in v, its
// steps innermost first (built only when one is found), and the value.
func findNonFinite(v reflect.Value) ([]string, float64) {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return nil, 0
		}
		return findNonFinite(v.Elem())
	case reflect.Struct:
		t := v.Type()
		for i := 0; i < v.NumField(); i++ {
			if !t.Field(i).IsExported() {
				continue
			}
			if bad, f := findNonFinite(v.Field(i)); bad != nil {
				return append(bad, "."+t.Field(i).Name), f
			}
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			if bad, f := findNonFinite(v.Index(i)); bad != nil {
				return append(bad, "["+strconv.Itoa(i)+"]"), f
			}
		}
	case reflect.Float32, reflect.Float64:
		if f := v.Float(); math.IsNaN(f) || math.IsInf(f, 0) {
			return []string{}, f
		}
	}
	return nil, 0
}

// withEmptyLists is a shallow copy of m whose nil lists are empty, so that
// valuation.json shows [] rather than null. The other renderers may be
// reading m at the same time: the grants are copied, not changed, when one
// lacks its list of tranches.
func withEmptyLists(m *Model) Model {
	c := *m
	c.Grants = nonNil(c.Grants)
	for i := range c.Grants {
		if c.Grants[i].Tranches == nil {
			c.Grants = append([]Grant(nil), c.Grants...)
			for j := i; j < len(c.Grants); j++ {
				c.Grants[j].Tranches = nonNil(c.Grants[j].Tranches)
			}
			break
		}
	}
	c.Warnings = nonNil(c.Warnings)
	c.ByInstrument = nonNil(c.ByInstrument)
	c.ByGrantMonth = nonNil(c.ByGrantMonth)
	c.Assumptions = nonNil(c.Assumptions)
	c.Sensitivity = nonNil(c.Sensitivity)
	c.CrossChecks = nonNil(c.CrossChecks)
	c.Modifications = nonNil(c.Modifications)
	if c.Expense != nil && c.Expense.Periods == nil {
		e := *c.Expense
		e.Periods = []ExpensePeriod{}
		c.Expense = &e
	}
	return c
}
