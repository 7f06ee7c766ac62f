package report

import (
	"encoding/json"
	"io"
	"reflect"
)

// WriteCompareJSON writes the comparison as one JSON object (DESIGN §4.1,
// grantworth compare --json), indented by two spaces, fields in a fixed
// order. A NaN or an infinity anywhere is an error, not a silent null.
func WriteCompareJSON(w io.Writer, m *CompareModel) error {
	if err := checkFinite(reflect.ValueOf(m), "comparison"); err != nil {
		return err
	}
	e := json.NewEncoder(w)
	e.SetIndent("", "  ")
	return e.Encode(m)
}
