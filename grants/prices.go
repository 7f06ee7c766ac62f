package grants

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"time"

	"grantworth/valuation"
)

// Price history files: the peers' closing prices that `grantworth vol`
// reads, and the company's and its peers' prices that a relative TSR
// condition names (the Peers sheet and the Conditions sheet's own_prices).
//
// A file is CSV with a header row naming the columns, matched
// case-insensitively ignoring spaces and underscores: `date` (ISO
// YYYY-MM-DD; other text dates are ambiguous and rejected), `close`, and
// optionally `adjusted_close`, which is used instead of `close` when the
// column is present. Other columns (open, high, volume, ...) are ignored.
// Rows must be in increasing date order with no date twice and every price
// a positive number. Blank lines are skipped.

// MaxPriceRows bounds a price file: 100,000 rows is four centuries of
// trading days. Sizes claimed by a file are never trusted beyond it.
const MaxPriceRows = 100_000

// Sentinels wrapped by PriceFileError, for errors.Is in tests.
var (
	ErrPriceHeader = errors.New("bad header")
	ErrPriceDate   = errors.New("bad date")
	ErrPriceValue  = errors.New("bad price")
	ErrPriceOrder  = errors.New("dates out of order")
	ErrPriceCount  = errors.New("too few prices")
)

// PriceFileError locates a problem in a price file.
type PriceFileError struct {
	File string
	Line int // 1-based; 0 when the problem is the file as a whole
	Err  error
}

func (e *PriceFileError) Error() string {
	if e.Line == 0 {
		return fmt.Sprintf("%s: %v", e.File, e.Err)
	}
	return fmt.Sprintf("%s:%d: %v", e.File, e.Line, e.Err)
}

func (e *PriceFileError) Unwrap() error { return e.Err }

// PriceHistory is one parsed file.
type PriceHistory struct {
	File   string
	Column string // the header of the price column used
	Points []valuation.PricePoint
	Lines  []int // file line of each point
}

func priceNormHeader(s string) string {
	s = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(s, "\ufeff")))
	return strings.NewReplacer(" ", "", "_", "").Replace(s)
}

// ParsePrices reads one price history from r; name is used in errors,
// which are *PriceFileError (file and line) wrapping a sentinel above.
func ParsePrices(r io.Reader, name string) (*PriceHistory, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	fail := func(line int, sentinel error, format string, args ...any) error {
		return &PriceFileError{File: name, Line: line, Err: fmt.Errorf("%w: %s", sentinel, fmt.Sprintf(format, args...))}
	}
	header, err := cr.Read()
	if err == io.EOF {
		return nil, fail(0, ErrPriceHeader, "the file is empty; want a header row with date and close")
	}
	if err != nil {
		return nil, priceCSVFail(name, err)
	}
	iDate, iClose, iAdj := -1, -1, -1
	for i, h := range header {
		switch priceNormHeader(h) {
		case "date":
			iDate = i
		case "close":
			iClose = i
		case "adjustedclose", "adjclose":
			iAdj = i
		}
	}
	if iDate < 0 || (iClose < 0 && iAdj < 0) {
		return nil, fail(1, ErrPriceHeader, "header %q needs a date column and a close (or adjusted_close) column", strings.Join(header, ","))
	}
	h := &PriceHistory{File: name, Column: strings.TrimSpace(header[max(iClose, 0)])}
	iPrice := iClose
	if iAdj >= 0 {
		iPrice, h.Column = iAdj, strings.TrimSpace(header[iAdj])
	}
	prevLine := 0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, priceCSVFail(name, err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		if len(h.Points) >= MaxPriceRows {
			return nil, fail(line, ErrPriceCount, "more than %d rows", MaxPriceRows)
		}
		if iDate >= len(rec) || iPrice >= len(rec) {
			return nil, fail(line, ErrPriceValue, "row has %d fields, want at least %d", len(rec), max(iDate, iPrice)+1)
		}
		ds := strings.TrimSpace(rec[iDate])
		d, err := time.Parse(time.DateOnly, ds)
		if err != nil {
			return nil, fail(line, ErrPriceDate, "date %q is not an ISO date YYYY-MM-DD (other formats are ambiguous)", ds)
		}
		ps := strings.TrimSpace(rec[iPrice])
		p, err := strconv.ParseFloat(ps, 64)
		if err != nil {
			return nil, fail(line, ErrPriceValue, "%s %q is not a number", h.Column, ps)
		}
		if !(p > 0) || p > 1e15 {
			return nil, fail(line, ErrPriceValue, "%s %v is not a positive price", h.Column, ps)
		}
		if n := len(h.Points); n > 0 {
			prev := h.Points[n-1].Date
			switch {
			case d.Equal(prev):
				return nil, fail(line, ErrPriceOrder, "date %s appears twice (also line %d)", ds, prevLine)
			case d.Before(prev):
				return nil, fail(line, ErrPriceOrder, "date %s comes after %s (line %d); dates must increase", ds, prev.Format(time.DateOnly), prevLine)
			}
		}
		h.Points = append(h.Points, valuation.PricePoint{Date: d, Price: p})
		h.Lines = append(h.Lines, line)
		prevLine = line
	}
	switch len(h.Points) {
	case 0:
		return nil, fail(0, ErrPriceCount, "no prices below the header")
	case 1:
		return nil, fail(h.Lines[0], ErrPriceCount, "only one price; a return needs at least two")
	}
	return h, nil
}

func priceCSVFail(name string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &PriceFileError{File: name, Line: pe.Line, Err: fmt.Errorf("%w: %v", ErrPriceValue, pe.Err)}
	}
	return &PriceFileError{File: name, Err: err}
}
