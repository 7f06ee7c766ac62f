package grants

import (
	"errors"
	"strings"
	"testing"
	"time"
)

func TestParsePrices(t *testing.T) {
	h, err := ParsePrices(strings.NewReader("Date, Open ,Close,Adj Close\n2026-01-05,1,10.5,5.25\n\n2026-01-06,1,11,5.5\n"), "x.csv")
	if err != nil {
		t.Fatal(err)
	}
	if h.Column != "Adj Close" || len(h.Points) != 2 || h.Points[1].Price != 5.5 || h.Lines[1] != 4 ||
		!h.Points[0].Date.Equal(time.Date(2026, 1, 5, 0, 0, 0, 0, time.UTC)) {
		t.Errorf("parsed %+v", h)
	}
	h, err = ParsePrices(strings.NewReader("close,date\n10,2026-01-05\n11,2026-01-06\n"), "y.csv")
	if err != nil || h.Column != "close" || h.Points[0].Price != 10 {
		t.Errorf("close column: %+v, %v", h, err)
	}
}

// Every bad file is an error that names the file and the line.
func TestParsePricesErrors(t *testing.T) {
	for _, c := range []struct {
		name, in string
		want     error
		where    string
	}{
		{"empty file", "", ErrPriceHeader, "p.csv: "},
		{"no date column", "day,close\n2026-01-05,1\n", ErrPriceHeader, "p.csv:1: "},
		{"header only", "date,close\n", ErrPriceCount, "p.csv: "},
		{"one price", "date,close\n2026-01-05,10\n", ErrPriceCount, "p.csv:2: "},
		{"zero price", "date,close\n2026-01-05,10\n2026-01-06,0\n", ErrPriceValue, "p.csv:3: "},
		{"negative price", "date,close\n2026-01-05,-10\n2026-01-06,1\n", ErrPriceValue, "p.csv:2: "},
		{"not a number", "date,close\n2026-01-05,ten\n2026-01-06,1\n", ErrPriceValue, "p.csv:2: "},
		{"NaN", "date,close\n2026-01-05,NaN\n2026-01-06,1\n", ErrPriceValue, "p.csv:2: "},
		{"mixed date formats", "date,close\n2026-01-05,10\n01/06/2026,11\n", ErrPriceDate, "p.csv:3: "},
		{"not a date", "date,close\n2026-02-30,10\n2026-03-01,11\n", ErrPriceDate, "p.csv:2: "},
		{"unsorted", "date,close\n2026-01-06,10\n2026-01-05,11\n", ErrPriceOrder, "p.csv:3: "},
		{"duplicate", "date,close\n2026-01-05,10\n2026-01-06,11\n2026-01-06,11\n", ErrPriceOrder, "p.csv:4: "},
		{"short row", "date,close\n2026-01-05\n2026-01-06,11\n", ErrPriceValue, "p.csv:2: "},
		{"bad quoting", "date,close\n2026-01-05,\"10\n", ErrPriceValue, "p.csv:"},
	} {
		_, err := ParsePrices(strings.NewReader(c.in), "p.csv")
		if !errors.Is(err, c.want) {
			t.Errorf("%s: err %v, want %v", c.name, err, c.want)
			continue
		}
		if !strings.HasPrefix(err.Error(), c.where) {
			t.Errorf("%s: error %q does not start with %q", c.name, err, c.where)
		}
	}
	_, err := ParsePrices(strings.NewReader("date,close\n2026-01-05,10\n2026-01-06,11\n2026-01-06,12\n"), "p.csv")
	if err == nil || !strings.Contains(err.Error(), "also line 3") {
		t.Errorf("duplicate date error %q does not name the other line", err)
	}
}

// FuzzParsePrices: any input parses or fails with a located error, and
// what parses is a valid series.
func FuzzParsePrices(f *testing.F) {
	f.Add("date,close\n2026-01-05,10\n2026-01-06,11\n")
	f.Add("Date,Adj Close,close\n2026-01-05,1,10\n2026-01-06,1.1,11\n")
	f.Add("date,close\n2026-01-06,10\n2026-01-05,11\n")
	f.Add("date,close\n\"2026-01-05\",\"1e3\"\n2026-01-06,0x10\n")
	f.Add("")
	f.Fuzz(func(t *testing.T, in string) {
		h, err := ParsePrices(strings.NewReader(in), "f.csv")
		if err != nil {
			var pe *PriceFileError
			if !errors.As(err, &pe) || pe.File != "f.csv" {
				t.Fatalf("error %v is not a PriceFileError for f.csv", err)
			}
			return
		}
		if len(h.Points) < 2 || len(h.Points) != len(h.Lines) {
			t.Fatalf("parsed %d points, %d lines", len(h.Points), len(h.Lines))
		}
		for i, p := range h.Points {
			if !(p.Price > 0) || (i > 0 && !p.Date.After(h.Points[i-1].Date)) {
				t.Fatalf("point %d %+v breaks the series", i, p)
			}
		}
	})
}
