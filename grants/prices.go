package main

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

// Price history files for `grantworth vol`.
//
// A file is CSV with a header row naming the columns, matched
// case-insensitively ignoring spaces and underscores: `date` (ISO
// YYYY-MM-DD; other text dates are ambiguous and rejected), `close`, and
// optionally `adjusted_close`, which is used instead of `close` when the
// column is present. Other columns (open, high, volume, ...) are ignored.
// Rows must be in increasing date order with no date twice and every price
// a positive number. Blank lines are skipped.

// maxPriceRows bounds a price file: 100,000 rows is four centuries of
// trading days. Sizes claimed by a file are never trusted beyond it.
const maxPriceRows = 100_000

// Sentinels wrapped by priceFileError, for errors.Is in tests.
var (
	errPriceHeader = errors.New("bad header")
	errPriceDate   = errors.New("bad date")
	errPriceValue  = errors.New("bad price")
	errPriceOrder  = errors.New("dates out of order")
	errPriceCount  = errors.New("too few prices")
)

// priceFileError locates a problem in a price file.
type priceFileError struct {
	File string
	Line int // 1-based; 0 when the problem is the file as a whole
	Err  error
}

func (e *priceFileError) Error() string {
	if e.Line == 0 {
		return fmt.Sprintf("%s: %v", e.File, e.Err)
	}
	return fmt.Sprintf("%s:%d: %v", e.File, e.Line, e.Err)
}

func (e *priceFileError) Unwrap() error { return e.Err }

// priceHistory is one parsed file.
type priceHistory struct {
	File   string
	Column string // the header of the price column used
	Points []valuation.PricePoint
	Lines  []int // file line of each point
}

func priceNormHeader(s string) string {
	s = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(s, "\ufeff")))
	return strings.NewReplacer(" ", "", "_", "").Replace(s)
}

// parsePrices reads one price history from r; name is used in errors.
func parsePrices(r io.Reader, name string) (*priceHistory, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	fail := func(line int, sentinel error, format string, args ...any) error {
		return &priceFileError{File: name, Line: line, Err: fmt.Errorf("%w: %s", sentinel, fmt.Sprintf(format, args...))}
	}
	header, err := cr.Read()
	if err == io.EOF {
		return nil, fail(0, errPriceHeader, "the file is empty; want a header row with date and close")
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
		return nil, fail(1, errPriceHeader, "header %q needs a date column and a close (or adjusted_close) column", strings.Join(header, ","))
	}
	h := &priceHistory{File: name, Column: strings.TrimSpace(header[max(iClose, 0)])}
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
		if len(h.Points) >= maxPriceRows {
			return nil, fail(line, errPriceCount, "more than %d rows", maxPriceRows)
		}
		if iDate >= len(rec) || iPrice >= len(rec) {
			return nil, fail(line, errPriceValue, "row has %d fields, want at least %d", len(rec), max(iDate, iPrice)+1)
		}
		ds := strings.TrimSpace(rec[iDate])
		d, err := time.Parse(time.DateOnly, ds)
		if err != nil {
			return nil, fail(line, errPriceDate, "date %q is not an ISO date YYYY-MM-DD (other formats are ambiguous)", ds)
		}
		ps := strings.TrimSpace(rec[iPrice])
		p, err := strconv.ParseFloat(ps, 64)
		if err != nil {
			return nil, fail(line, errPriceValue, "%s %q is not a number", h.Column, ps)
		}
		if !(p > 0) || p > 1e15 {
			return nil, fail(line, errPriceValue, "%s %v is not a positive price", h.Column, ps)
		}
		if n := len(h.Points); n > 0 {
			prev := h.Points[n-1].Date
			switch {
			case d.Equal(prev):
				return nil, fail(line, errPriceOrder, "date %s appears twice (also line %d)", ds, prevLine)
			case d.Before(prev):
				return nil, fail(line, errPriceOrder, "date %s comes after %s (line %d); dates must increase", ds, prev.Format(time.DateOnly), prevLine)
			}
		}
		h.Points = append(h.Points, valuation.PricePoint{Date: d, Price: p})
		h.Lines = append(h.Lines, line)
		prevLine = line
	}
	switch len(h.Points) {
	case 0:
		return nil, fail(0, errPriceCount, "no prices below the header")
	case 1:
		return nil, fail(h.Lines[0], errPriceCount, "only one price; a return needs at least two")
	}
	return h, nil
}

func priceCSVFail(name string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &priceFileError{File: name, Line: pe.Line, Err: fmt.Errorf("%w: %v", errPriceValue, pe.Err)}
	}
	return &priceFileError{File: name, Err: err}
}
