package report

import (
	"strconv"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"
)

// Spreadsheet limits (the file format's, and those of the programs that
// open it): rows and columns of a worksheet, characters of a cell. No
// sheet of valuation.xlsx passes them.
//
// The sheets with a row per tranche or per input (Tranches, the
// Expense sheet's tranche rows, Assumptions) outgrow a sheet at some
// thirty thousand grants of monthly vesting. Such a table continues on
// numbered sheets, each with its header row: "Tranches", "Tranches 2",
// "Tranches 3", ..., the rows in order. The Expense sheet keeps one row
// per grant and the total whatever the size, so that it stays complete;
// when its tranche rows would not fit beside them, they go to "Expense
// tranches", "Expense tranches 2", .... The About sheet says which
// sheets were continued. A text longer than a cell holds is cut, with a
// note of how much was left out (valuation.json has it whole).
const (
	MaxSheetRows    = 1 << 20 // 1,048,576
	MaxSheetColumns = 1 << 14 // 16,384
	MaxCellChars    = 32767
)

// sheetRowLimit is the rows a sheet is given, header included: the
// spreadsheet's limit, lowered by a test.
var sheetRowLimit = MaxSheetRows

// sheetParts splits n data rows over sheets of at most sheetRowLimit−1
// data rows each (one sheet even for none): the rows of each.
func sheetParts(n int) []int {
	per := sheetRowLimit - 1
	parts := []int{min(n, per)}
	for done := parts[0]; done < n; done += per {
		parts = append(parts, min(n-done, per))
	}
	return parts
}

// partName is the name of part i (from 0) of sheet name: the name itself,
// then "name 2", "name 3", ....
func partName(name string, i int) string {
	if i == 0 {
		return name
	}
	return name + " " + strconv.Itoa(i+1)
}

// partTable starts part i of sheet name with rows data rows: the hook
// made the first sheet; the others are made here, after it.
func (b *Book) partTable(name string, i int, cols []Column, rows int) (*Table, error) {
	sheet := partName(name, i)
	if i > 0 {
		if _, err := b.f.NewSheet(sheet); err != nil {
			return nil, err
		}
		if i == 1 {
			b.split = append(b.split, "")
		}
		b.split[len(b.split)-1] = name + " continues on " + name + " 2 to " + sheet
	}
	return b.NewTable(sheet, cols, rows)
}

// joinSplit lists the continued sheets for the About sheet.
func joinSplit(split []string) string {
	out := ""
	for i, s := range split {
		if i > 0 {
			out += "; "
		}
		out += s
	}
	return out
}

// cutText is s cut to what a cell holds, with a note of what was left out.
func cutText(s string) string {
	if len(s) <= MaxCellChars || utf8.RuneCountInString(s) <= MaxCellChars {
		return s
	}
	note := " [cut: " + strconv.Itoa(utf8.RuneCountInString(s)) + " characters in all; valuation.json has the whole text]"
	keep := MaxCellChars - utf8.RuneCountInString(note)
	n := 0
	for i := range s {
		if n == keep {
			return s[:i] + note
		}
		n++
	}
	return s
}

// cutCells cuts every text value of a row to what a cell holds.
func cutCells(values []any) {
	for i, v := range values {
		switch x := v.(type) {
		case string:
			if len(x) > MaxCellChars {
				values[i] = cutText(x)
			}
		case excelize.Cell:
			if s, ok := x.Value.(string); ok && len(s) > MaxCellChars {
				x.Value = cutText(s)
				values[i] = x
			}
		case *excelize.Cell:
			if s, ok := x.Value.(string); ok && len(s) > MaxCellChars {
				c := *x
				c.Value = cutText(s)
				values[i] = &c
			}
		}
	}
}
