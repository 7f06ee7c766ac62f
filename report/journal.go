package report

import (
	"encoding/csv"
	"io"
	"strconv"
	"strings"
)

// JournalHeader is the header row of journal.csv (DESIGN §4.4, a
// contract).
var JournalHeader = []string{"entry", "date", "account_code", "account", "cost_center", "debit", "credit", "currency", "description"}

// WriteJournalCSV writes journal.csv (DESIGN §4.4): the header, then one
// row per line of every journal entry of the Model, in entry order: the
// entry's number and date (the period end), the account's code and name,
// the cost centre of an expense line, the debit or the credit as a plain
// decimal number with the currency's decimals (the other empty), the
// currency code and the entry's description (naming the grant on the
// lines of an entry for one grant). The file is UTF-8 with CRLF line ends
// (RFC 4180). A text cell that a spreadsheet would take for a formula,
// one starting with =, +, -, @, a tab or a carriage return, is written
// with a leading apostrophe. A Model with no expense gives the header
// alone.
func WriteJournalCSV(w io.Writer, m *Model) error {
	cw := csv.NewWriter(w)
	cw.UseCRLF = true
	if err := cw.Write(JournalHeader); err != nil {
		return err
	}
	e := detail(m)
	if e != nil {
		amount := func(v float64) string {
			if v == 0 {
				return ""
			}
			return strconv.FormatFloat(v, 'f', e.JournalDecimals, 64)
		}
		for _, je := range e.Journal {
			for _, l := range je.Lines {
				desc := je.Description
				if l.GrantID != "" && !strings.Contains(desc, l.GrantID) {
					desc += " (grant " + l.GrantID + ")"
				}
				rec := []string{strconv.Itoa(je.Number), je.Date.String(), safeText(l.AccountCode), safeText(l.Account),
					safeText(l.CostCenter), amount(l.Debit), amount(l.Credit), safeText(m.Company.Currency), safeText(desc)}
				if err := cw.Write(rec); err != nil {
					return err
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

// safeText is s with a leading apostrophe when a spreadsheet would read it
// as a formula (common practice against formula injection in CSV files).
func safeText(s string) string {
	if s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return "'" + s
	}
	return s
}
