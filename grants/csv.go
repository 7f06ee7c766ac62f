package grants

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"strings"
	"unicode/utf8"
)

// csvSource reads a folder of CSV files, one per sheet.
type csvSource struct {
	fsys  fs.FS
	names []string
	files map[string]string // sheet name → file name
}

func (c *csvSource) sheetNames() []string { return c.names }
func (c *csvSource) date1904() bool       { return false }

func (c *csvSource) rows(name string) (rowIter, error) {
	file := c.files[name]
	f, err := c.fsys.Open(file)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	data, err := io.ReadAll(io.LimitReader(f, MaxFileSize+1))
	if err != nil {
		return nil, err
	}
	it := &csvRows{file: file}
	if len(data) > MaxFileSize {
		it.err = &CellError{Sheet: sheetOf(name), Err: ErrTooLarge, Msg: fmt.Sprintf("%s is more than %d bytes", file, MaxFileSize)}
		return it, nil
	}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	if !utf8.Valid(data) {
		line := 1 + bytes.Count(data[:firstInvalid(data)], []byte("\n"))
		it.err = &CellError{Sheet: sheetOf(name), Err: ErrFormat, Msg: fmt.Sprintf("%s line %d is not UTF-8 text; save the file as CSV UTF-8", file, line)}
		return it, nil
	}
	it.r = csv.NewReader(bytes.NewReader(data))
	it.r.FieldsPerRecord = -1
	return it, nil
}

func firstInvalid(b []byte) int {
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n <= 1 {
			return i
		}
		i += n
	}
	return len(b)
}

// sheetOf is the canonical name of the sheet a file name stands for.
func sheetOf(name string) string {
	for _, sh := range Sheets {
		if norm(sh.Name) == norm(name) {
			return sh.Name
		}
	}
	return name
}

// csvRows numbers records the way a spreadsheet shows them: blank lines
// count as rows; a quoted field spanning lines stays in one row.
type csvRows struct {
	file    string
	r       *csv.Reader
	err     error // returned by the next call of cells
	row     int
	endLine int      // line on which the last record ended
	cur     []string // the current row; nil for a blank one
	pending []string // a record read ahead, after gapLeft blank rows
	gapLeft int
	done    bool
}

func (c *csvRows) next() bool {
	switch {
	case c.done:
		return false
	case c.err != nil:
		c.done = true
		c.row++
		return true
	case c.gapLeft > 0:
		c.gapLeft--
		c.row++
		c.cur = nil
		return true
	case c.pending != nil:
		c.cur, c.pending = c.pending, nil
		c.row++
		return true
	}
	rec, err := c.r.Read()
	if err == io.EOF {
		c.done = true
		return false
	}
	if err != nil {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			err = &CellError{Err: ErrFormat, Msg: fmt.Sprintf("%s line %d, column %d: %v", c.file, pe.Line, pe.Column, pe.Err)}
		}
		c.err = err
		c.done = true
		c.row++
		return true
	}
	line, _ := c.r.FieldPos(0)
	last, _ := c.r.FieldPos(len(rec) - 1)
	gap := line - c.endLine - 1
	c.endLine = last + strings.Count(rec[len(rec)-1], "\n")
	if c.row == 0 && len(rec) == 1 {
		for _, d := range []struct{ sep, name string }{{";", "semicolons"}, {"\t", "tabs"}, {"|", "vertical bars"}} {
			if strings.Contains(rec[0], d.sep) {
				c.err = &CellError{Err: ErrFormat, Msg: fmt.Sprintf("%s line %d: the fields seem separated by %s; grantworth reads comma-separated files (save as CSV with commas)", c.file, line, d.name)}
				c.done = true
				c.row++
				return true
			}
		}
	}
	c.row++
	if gap > 0 {
		c.pending, c.gapLeft, c.cur = rec, gap-1, nil
		return true
	}
	c.cur = rec
	return true
}

func (c *csvRows) cells() (int, []string, error) {
	if c.err != nil {
		return c.row, nil, c.err
	}
	return c.row, c.cur, nil
}

func (c *csvRows) emptyIsFormula(col, row int) bool { return false }
func (c *csvRows) close() error                     { return nil }
