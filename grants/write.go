package grants

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"time"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"
)

// Caution is printed on the About sheet of every workbook grantworth writes.
const Caution = "The figures grantworth produces are estimates, not an audit opinion. Defer to licensed auditors or valuation professionals and to the accounting rules that apply to you (ASC 718, IFRS 2 or local rules)."

// templateRows is how many rows of a table sheet carry drop-down lists
// and formats in a workbook written with no rows.
const templateRows = 1000

// WriteXLSX writes s as a schedule workbook in the layout of Sheets, with an
// About sheet explaining every column, drop-down lists for the choices, and
// date and percent formats. A nil or empty s gives the blank template.
// Reading the result back gives s again.
func WriteXLSX(w io.Writer, s *Schedule) error {
	return writeXLSX(w, s, Sheets, "grantworth grant schedule")
}

// writeXLSX writes the sheets of layout with an About sheet headed title.
func writeXLSX(w io.Writer, s *Schedule, layout []Sheet, title string) error {
	if s == nil {
		s = &Schedule{}
	}
	f := excelize.NewFile()
	defer f.Close()
	st, err := newStyles(f)
	if err != nil {
		return err
	}
	first := true
	for i := range layout {
		sh := &layout[i]
		if first {
			if err := f.SetSheetName("Sheet1", sh.Name); err != nil {
				return err
			}
			first = false
		} else if _, err := f.NewSheet(sh.Name); err != nil {
			return err
		}
		rows := sheetRows(s, sh)
		if sh.KeyValue {
			err = writeKeyValue(f, sh, rows, st)
		} else {
			err = writeTable(f, sh, rows, st)
		}
		if err != nil {
			return fmt.Errorf("sheet %s: %w", sh.Name, err)
		}
	}
	if err := writeAbout(f, st, layout, title); err != nil {
		return err
	}
	f.SetActiveSheet(0)
	return f.Write(w)
}

type cellStyles struct{ head, date, pct, wrap, bold int }

func newStyles(f *excelize.File) (cellStyles, error) {
	var st cellStyles
	var err error
	iso := "yyyy-mm-dd"
	if st.head, err = f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true}, Fill: excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"DDE6EE"}}}); err != nil {
		return st, err
	}
	if st.date, err = f.NewStyle(&excelize.Style{CustomNumFmt: &iso}); err != nil {
		return st, err
	}
	if st.pct, err = f.NewStyle(&excelize.Style{NumFmt: 10}); err != nil {
		return st, err
	}
	if st.wrap, err = f.NewStyle(&excelize.Style{Alignment: &excelize.Alignment{WrapText: true, Vertical: "top"}}); err != nil {
		return st, err
	}
	st.bold, err = f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true, Size: 12}})
	return st, err
}

func colStyle(c *Column, st cellStyles) int {
	switch c.Kind {
	case KindDate:
		return st.date
	case KindPercent:
		return st.pct
	}
	return 0
}

func choices(c *Column) []string {
	if len(c.Choices) > 0 {
		return c.Choices
	}
	return nil
}

func writeTable(f *excelize.File, sh *Sheet, rows [][]any, st cellStyles) error {
	n := len(sh.Columns)
	head := make([]any, n)
	for i, c := range sh.Columns {
		head[i] = c.Key
	}
	if err := f.SetSheetRow(sh.Name, "A1", &head); err != nil {
		return err
	}
	last := max(len(rows)+1, templateRows)
	for i := range sh.Columns {
		c := &sh.Columns[i]
		col, _ := excelize.ColumnNumberToName(i + 1)
		if s := colStyle(c, st); s != 0 {
			if err := f.SetCellStyle(sh.Name, col+"2", fmt.Sprintf("%s%d", col, last), s); err != nil {
				return err
			}
		}
		if ch := choices(c); ch != nil {
			dv := excelize.NewDataValidation(true)
			dv.Sqref = fmt.Sprintf("%s2:%s%d", col, col, last)
			if err := dv.SetDropList(ch); err != nil {
				return err
			}
			if err := f.AddDataValidation(sh.Name, dv); err != nil {
				return err
			}
		}
		if err := f.SetColWidth(sh.Name, col, col, colWidth(c.Key, rows, i)); err != nil {
			return err
		}
	}
	endCol, _ := excelize.ColumnNumberToName(n)
	if err := f.SetCellStyle(sh.Name, "A1", endCol+"1", st.head); err != nil {
		return err
	}
	if err := f.SetPanes(sh.Name, &excelize.Panes{Freeze: true, YSplit: 1, TopLeftCell: "A2", ActivePane: "bottomLeft"}); err != nil {
		return err
	}
	for r, row := range rows {
		cell, _ := excelize.CoordinatesToCellName(1, r+2)
		if err := f.SetSheetRow(sh.Name, cell, &row); err != nil {
			return err
		}
	}
	return nil
}

// colWidth fits column i to its header and to the longest text written
// in it (up to 60 characters), so that a long role or account name is not
// cut short by the cell beside it.
func colWidth(key string, rows [][]any, i int) float64 {
	w := max(len(key), 10)
	for _, row := range rows {
		if i < len(row) {
			if t, ok := row[i].(string); ok {
				w = max(w, min(utf8.RuneCountInString(t), 58))
			}
		}
	}
	return float64(w + 2)
}

func writeKeyValue(f *excelize.File, sh *Sheet, rows [][]any, st cellStyles) error {
	head := []any{"key", "value"}
	if sh.Name == SheetAssumptions {
		head = append(head, "source", "effective_date")
	}
	if err := f.SetSheetRow(sh.Name, "A1", &head); err != nil {
		return err
	}
	endCol, _ := excelize.ColumnNumberToName(len(head))
	if err := f.SetCellStyle(sh.Name, "A1", endCol+"1", st.head); err != nil {
		return err
	}
	_ = f.SetColWidth(sh.Name, "A", "A", 30)
	_ = f.SetColWidth(sh.Name, "B", "B", 18)
	_ = f.SetColWidth(sh.Name, "C", "C", 60)
	if sh.Name == SheetAssumptions {
		_ = f.SetColWidth(sh.Name, "D", "D", 14)
		if err := f.SetCellStyle(sh.Name, "D2", fmt.Sprintf("D%d", max(len(rows)+1, 40)), st.date); err != nil {
			return err
		}
	}
	for r, row := range rows {
		n := r + 2
		cell, _ := excelize.CoordinatesToCellName(1, n)
		if err := f.SetSheetRow(sh.Name, cell, &row); err != nil {
			return err
		}
		c := sh.Column(row[0].(string))
		if c == nil {
			continue
		}
		vcell, _ := excelize.CoordinatesToCellName(2, n)
		if s := colStyle(c, st); s != 0 {
			if err := f.SetCellStyle(sh.Name, vcell, vcell, s); err != nil {
				return err
			}
		}
		if ch := choices(c); ch != nil {
			dv := excelize.NewDataValidation(true)
			dv.Sqref = vcell
			if err := dv.SetDropList(ch); err != nil {
				return err
			}
			if err := f.AddDataValidation(sh.Name, dv); err != nil {
				return err
			}
		}
	}
	return nil
}

func writeAbout(f *excelize.File, st cellStyles, layout []Sheet, title string) error {
	const about = "About"
	if _, err := f.NewSheet(about); err != nil {
		return err
	}
	lines := [][]any{
		{title},
		{Caution},
		{"Sheet and column names may be in any case, with or without spaces or underscores; columns may come in any order, and the other headers the trade uses, listed under meaning, are read too. Dates are date cells or ISO text (2026-09-30); other text dates are refused as ambiguous. Rates may be 0.45 or 45%. Numbers may use commas only as thousands separators (1,234,567.5)."},
		{},
		{"sheet", "column or key", "kind", "unit", "needed", "default", "meaning"},
	}
	for _, sh := range layout {
		lines = append(lines, []any{sh.Name, "", "", "", map[bool]string{true: "required sheet", false: "optional sheet"}[sh.Required], "", sh.Help})
		for _, c := range sh.Columns {
			kind := c.Kind.String()
			if ch := choices(&c); ch != nil {
				kind = "one of: " + joinComma(ch)
			}
			what := "headers"
			if sh.KeyValue {
				what = "keys"
			}
			lines = append(lines, []any{"", c.Key, kind, c.Unit, c.Need, c.Default, c.Help + c.also(what)})
		}
		for _, c := range sh.KeyColumns {
			lines = append(lines, []any{"", c.Key + " (column)", c.Kind.String(), c.Unit, c.Need, c.Default, c.Help})
		}
	}
	for i, l := range lines {
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		if err := f.SetSheetRow(about, cell, &l); err != nil {
			return err
		}
	}
	_ = f.SetCellStyle(about, "A1", "A1", st.bold)
	_ = f.SetCellStyle(about, "A5", "G5", st.head)
	_ = f.SetColWidth(about, "A", "A", 14)
	_ = f.SetColWidth(about, "B", "B", 26)
	_ = f.SetColWidth(about, "C", "F", 16)
	_ = f.SetColWidth(about, "G", "G", 90)
	return nil
}

func joinComma(ss []string) string {
	var b bytes.Buffer
	for i, s := range ss {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(s)
	}
	return b.String()
}

// sheetRows gives the rows (after the header) of one sheet of s, as cell
// values: nil for empty, string, int64, float64 or time.Time.
func sheetRows(s *Schedule, sh *Sheet) [][]any {
	switch sh.Name {
	case SheetCompany:
		return companyRows(s, sh)
	case SheetAssumptions:
		return assumptionRows(s)
	}
	var rows [][]any
	n := len(sh.Columns)
	idx := map[string]int{}
	for i, c := range sh.Columns {
		idx[c.Key] = i
	}
	put := func(row []any, k string, v any) { row[idx[k]] = v }
	switch sh.Name {
	case SheetGrants:
		for _, g := range s.Grants {
			row := make([]any, n)
			put(row, "grant_id", g.ID)
			if g.Holder != "" {
				put(row, "holder", g.Holder)
			}
			put(row, "instrument", string(g.Instrument))
			put(row, "grant_date", g.GrantDate)
			put(row, "shares", g.Shares)
			if g.Instrument != RSU {
				put(row, "strike", g.Strike)
			}
			if !g.ExpiryDate.IsZero() {
				put(row, "expiry_date", g.ExpiryDate)
			}
			if !g.VestStart.IsZero() {
				put(row, "vest_start", g.VestStart)
			}
			put(row, "vest_months", int64(g.VestMonths))
			put(row, "cliff_months", int64(g.CliffMonths))
			put(row, "vest_every_months", int64(max(g.VestEvery, 1)))
			for k, p := range map[string]*float64{"share_price": g.SharePrice, "volatility": g.Volatility, "dividend_yield": g.DividendYield,
				"exercise_multiple": g.ExerciseMultiple, "post_vesting_exit_rate": g.PostVestingExitRate} {
				if p != nil {
					put(row, k, *p)
				}
			}
			if g.Instrument == Warrant {
				put(row, "classification", string(g.Classification))
				put(row, "exercise_style", string(g.ExerciseStyle))
			}
			if g.Purpose != "" {
				put(row, "purpose", string(g.Purpose))
			}
			if !g.HireDate.IsZero() {
				put(row, "hire_date", g.HireDate)
			}
			if g.CostCenter != "" {
				put(row, "cost_center", g.CostCenter)
			}
			if g.TaxDeductible != nil {
				put(row, "tax_deductible", map[bool]string{true: "yes", false: "no"}[*g.TaxDeductible])
			}
			if g.Condition != "" {
				put(row, "condition", g.Condition)
			}
			rows = append(rows, row)
		}
	case SheetTransfers:
		for _, t := range s.Transfers {
			rows = append(rows, []any{t.GrantID, t.Date, t.CostCenter})
		}
	case SheetAccounts:
		for _, a := range s.Accounts {
			rows = append(rows, []any{a.Role, nilIfEmpty(a.CostCenter), nilIfEmpty(a.Code), nilIfEmpty(a.Name)})
		}
		if len(s.Accounts) == 0 && len(s.Grants) == 0 { // the blank template: every role with its default name
			for _, r := range AccountRoles {
				rows = append(rows, []any{r.Role, nil, nil, r.Name})
			}
		}
	case SheetVesting:
		for _, v := range s.Vesting {
			rows = append(rows, []any{v.GrantID, v.VestDate, v.Shares})
		}
	case SheetSharePrices:
		for _, p := range s.SharePrices {
			rows = append(rows, []any{p.Date, p.Price})
		}
	case SheetRates:
		for _, p := range s.Rates {
			rows = append(rows, []any{p.CurveDate, p.TenorYears, p.Rate, p.Compounding})
		}
	case SheetEvents:
		for _, e := range s.Events {
			row := make([]any, n)
			put(row, "grant_id", e.GrantID)
			put(row, "date", e.Date)
			put(row, "event", string(e.Kind))
			put(row, "shares", e.Shares)
			if e.SharePrice != nil {
				put(row, "share_price", *e.SharePrice)
			}
			if e.ReplacementGrantID != "" {
				put(row, "replacement_grant_id", e.ReplacementGrantID)
			}
			rows = append(rows, row)
		}
	case SheetModifications:
		rows = modificationRows(s, n, put)
	case SheetDesigns:
		for _, d := range s.Designs {
			rows = append(rows, designRowCells(d, n, put))
		}
	case SheetConditions, SheetAssessments, SheetPayoutCurve, SheetPeers:
		rows = conditionRows(s, sh.Name, n, put)
	}
	return rows
}

func nilIfEmpty(s string) any {
	if s == "" {
		return nil
	}
	return s
}

func companyRows(s *Schedule, sh *Sheet) [][]any {
	co := s.Company
	blank := co.Name == "" && co.ValuationDate.IsZero()
	val := func(ok bool, v any) any {
		if !ok {
			return nil
		}
		return v
	}
	rows := [][]any{
		{"company_name", val(co.Name != "", co.Name)},
		{"valuation_date", val(!co.ValuationDate.IsZero(), co.ValuationDate)},
		{"period_start", val(!co.PeriodStart.IsZero(), co.PeriodStart)},
		{"currency", val(!blank && co.Currency != "", co.Currency)},
		{"shares_outstanding", val(co.SharesOutstanding > 0, int64(co.SharesOutstanding))},
		{"fiscal_year_end", val(co.Fiscal.YearEnd != 0, co.Fiscal.YearEnd.String())},
		{"fiscal_year_end_weekday", val(co.Fiscal.WeekBased, weekdays[co.Fiscal.Weekday])},
		{"fiscal_year_end_rule", val(co.Fiscal.WeekBased, map[bool]string{true: "nearest", false: "last"}[co.Fiscal.Nearest])},
		{"preparer", val(co.Preparer != "", co.Preparer)},
		{"client", val(co.Client != "", co.Client)},
		{"paper_size", val(co.PaperSize != "", co.PaperSize)},
	}
	if sh.Column("grant_date") != nil {
		rows = append(rows, []any{"grant_date", val(!co.GrantDate.IsZero(), co.GrantDate)})
	}
	return rows
}

func assumptionRows(s *Schedule) [][]any {
	a := s.Assumptions
	blank := len(s.Grants) == 0 && a.Volatility == 0
	has := func(k string) bool {
		if blank {
			return false
		}
		if a.Refs == nil {
			return true
		}
		_, ok := a.Refs[k]
		return ok
	}
	val := func(k string, v any) any {
		if !has(k) {
			return nil
		}
		return v
	}
	steps := any("auto")
	if a.Steps > 0 {
		steps = int64(a.Steps)
	}
	framework, taxRate := any(nil), any(nil)
	if a.Framework != "" {
		framework = val("framework", string(a.Framework))
	}
	if a.TaxRate != 0 {
		taxRate = val("tax_rate", a.TaxRate)
	}
	rows := [][]any{
		{"volatility", val("volatility", a.Volatility)},
		{"dividend_yield", val("dividend_yield", a.DividendYield)},
		{"exercise_multiple", val("exercise_multiple", a.ExerciseMultiple)},
		{"post_vesting_exit_rate", val("post_vesting_exit_rate", a.PostVestingExitRate)},
		{"pre_vesting_forfeiture_rate", val("pre_vesting_forfeiture_rate", a.PreVestingForfeitureRate)},
		{"attribution", val("attribution", string(a.Attribution))},
		{"forfeitures", val("forfeitures", string(a.Forfeitures))},
		{"steps", val("steps", steps)},
		{"framework", framework},
		{"tax_rate", taxRate},
	}
	for i := range rows {
		if src := a.Sources[rows[i][0].(string)]; src != "" {
			rows[i] = append(rows[i], src)
		}
	}
	for _, r := range a.Dated {
		var v any = r.Value
		switch r.Key {
		case "attribution", "forfeitures", "framework":
			v = r.Text
		case "steps":
			v = any("auto")
			if r.Value > 0 {
				v = int64(r.Value)
			}
		}
		var src any
		if r.Source != "" {
			src = r.Source
		}
		rows = append(rows, []any{r.Key, v, src, r.Effective})
	}
	return rows
}

// WriteCSVDir writes s as a folder of CSV files (one per sheet of Sheets,
// header first; dates ISO, rates as decimals) into dir, which must exist.
// Existing files of those names are replaced; the caller checks first.
func WriteCSVDir(dir string, s *Schedule) error { return writeCSVDir(dir, s, Sheets) }

func writeCSVDir(dir string, s *Schedule, layout []Sheet) error {
	if s == nil {
		s = &Schedule{}
	}
	for i := range layout {
		sh := &layout[i]
		var buf bytes.Buffer
		w := csv.NewWriter(&buf)
		var head []string
		if sh.KeyValue {
			head = []string{"key", "value"}
			if sh.Name == SheetAssumptions {
				head = append(head, "source", "effective_date")
			}
		} else {
			for _, c := range sh.Columns {
				head = append(head, c.Key)
			}
		}
		_ = w.Write(head)
		for _, row := range sheetRows(s, sh) {
			rec := make([]string, len(row))
			for j, v := range row {
				rec[j] = csvText(v)
			}
			_ = w.Write(rec)
		}
		w.Flush()
		if err := w.Error(); err != nil {
			return err
		}
		if err := os.WriteFile(filepath.Join(dir, sh.File), buf.Bytes(), 0o644); err != nil {
			return err
		}
	}
	return nil
}

func csvText(v any) string {
	switch x := v.(type) {
	case nil:
		return ""
	case string:
		return x
	case int64:
		return strconv.FormatInt(x, 10)
	case float64:
		return strconv.FormatFloat(x, 'f', -1, 64)
	case time.Time:
		return x.Format(time.DateOnly)
	}
	return fmt.Sprint(v)
}
