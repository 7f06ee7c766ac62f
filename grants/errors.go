package grants

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Sentinel errors wrapped by CellError, so callers and tests can use errors.Is.
var (
	ErrNotDate       = errors.New("is not a date")
	ErrAmbiguousDate = errors.New("is not an ISO date (YYYY-MM-DD); text dates in other forms are ambiguous")
	ErrNotNumber     = errors.New("is not a number")
	ErrNotInteger    = errors.New("is not a whole number")
	ErrNotPercent    = errors.New("is not a decimal or a percentage")
	ErrNotChoice     = errors.New("is not one of the allowed values")
	ErrRequired      = errors.New("is required")
	ErrRange         = errors.New("is out of range")
	ErrDuplicate     = errors.New("appears more than once")
	ErrUnknown       = errors.New("is not known")
	ErrInconsistent  = errors.New("does not agree with another cell")
	ErrNoCachedValue = errors.New("is a formula with no saved value; open and save the workbook in a spreadsheet program so the value is stored")
	ErrMissingSheet  = errors.New("sheet is missing")
	ErrMissingColumn = errors.New("column is missing")
	ErrFormat        = errors.New("is not a grant schedule in a readable format")
	ErrTooLarge      = errors.New("is too large")
	ErrDamaged       = errors.New("is damaged")
)

// CellError is a problem with one cell (or, with Cell empty, one sheet) of
// a schedule. It prints as
//
//	Grants!F12 (strike): "-3" must be zero or more
//
// Err is a sentinel above, possibly wrapped with a more precise message.
type CellError struct {
	Sheet  string // canonical sheet name, e.g. "Grants"
	Cell   string // e.g. "F12"; empty for a problem with the whole sheet
	Column string // column key, e.g. "strike"; may be empty
	Value  string // the text found in the cell, quoted in the message
	Err    error
	// Msg, when set, replaces the sentinel's text in the message (the
	// sentinel still answers errors.Is).
	Msg string
}

func (e *CellError) Error() string {
	var b strings.Builder
	b.WriteString(e.Sheet)
	if e.Cell != "" {
		b.WriteString("!")
		b.WriteString(e.Cell)
	}
	if e.Column != "" {
		fmt.Fprintf(&b, " (%s)", e.Column)
	}
	b.WriteString(": ")
	if e.Value != "" {
		writeQuoted(&b, e.Value)
	}
	if e.Msg != "" {
		b.WriteString(e.Msg)
	} else if e.Err != nil {
		b.WriteString(e.Err.Error())
	}
	return b.String()
}

func (e *CellError) Unwrap() error { return e.Err }

// Ref is where the problem is.
func (e *CellError) Ref() Ref { return Ref{Sheet: e.Sheet, Cell: e.Cell} }

// MaxErrors is how many errors a Report keeps; later ones are counted only.
const MaxErrors = 50

// Report holds the problems found reading and validating a schedule, errors
// and warnings apart. An error means the schedule cannot be valued; a
// warning is worth a look but does not stop anything.
type Report struct {
	Errors   []*CellError
	Warnings []*CellError
	// Dropped counts errors found beyond MaxErrors.
	Dropped int

	skip map[string]bool // grant ids with a row that failed to parse
}

// OK reports whether there are no errors.
func (r *Report) OK() bool { return len(r.Errors) == 0 && r.Dropped == 0 }

// ErrorCount is the number of errors found, kept or dropped.
func (r *Report) ErrorCount() int { return len(r.Errors) + r.Dropped }

func (r *Report) addErr(e *CellError) {
	if len(r.Errors) >= MaxErrors {
		r.Dropped++
		return
	}
	r.Errors = append(r.Errors, e)
}

func (r *Report) addWarn(e *CellError) {
	if len(r.Warnings) >= 4*MaxErrors {
		return
	}
	r.Warnings = append(r.Warnings, e)
}

func (r *Report) errf(ref Ref, col, value string, err error, format string, args ...any) {
	r.addErr(&CellError{Sheet: ref.Sheet, Cell: ref.Cell, Column: col, Value: value, Err: err, Msg: fmt.Sprintf(format, args...)})
}

func (r *Report) warnf(ref Ref, col, value string, err error, format string, args ...any) {
	r.addWarn(&CellError{Sheet: ref.Sheet, Cell: ref.Cell, Column: col, Value: value, Err: err, Msg: fmt.Sprintf(format, args...)})
}

// Merge appends o's problems to r.
func (r *Report) Merge(o Report) {
	for _, e := range o.Errors {
		r.addErr(e)
	}
	r.Dropped += o.Dropped
	for _, w := range o.Warnings {
		r.addWarn(w)
	}
}

// Err returns nil when there are no errors, else an error listing them one
// per line.
func (r *Report) Err() error {
	if r.OK() {
		return nil
	}
	return reportError{r}
}

type reportError struct{ r *Report }

func (e reportError) Error() string {
	var b strings.Builder
	for i, ce := range e.r.Errors {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(ce.Error())
	}
	if e.r.Dropped > 0 {
		fmt.Fprintf(&b, "\n... and %d more errors", e.r.Dropped)
	}
	return b.String()
}

func (e reportError) Unwrap() []error {
	out := make([]error, len(e.r.Errors))
	for i, ce := range e.r.Errors {
		out[i] = ce
	}
	return out
}

// maxQuoted is how many characters of a cell's text a message quotes; a
// longer text is cut and its length given.
const maxQuoted = 60

func writeQuoted(b *strings.Builder, v string) {
	n := utf8.RuneCountInString(v)
	if n <= maxQuoted {
		fmt.Fprintf(b, "%q ", v)
		return
	}
	i := 0
	for k := 0; k < maxQuoted; k++ {
		_, size := utf8.DecodeRuneInString(v[i:])
		i += size
	}
	fmt.Fprintf(b, "%q (%d characters) ", v[:i]+"…", n)
}

// countText writes n with thousands separators: 200,000.
func countText(n int) string {
	s := strconv.Itoa(n)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	if neg {
		s = "-" + s
	}
	return s
}

// sizeText writes a size in bytes: whole MiB as such ("64 MiB"), anything
// else in bytes with separators.
func sizeText(n int64) string {
	if n >= 1<<20 && n%(1<<20) == 0 {
		return countText(int(n>>20)) + " MiB"
	}
	return countText(int(n)) + " bytes"
}
