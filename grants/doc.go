// Package grants owns everything spreadsheet-shaped in grantworth: the grant
// schedule model, reading it from an .xlsx workbook or a folder of CSV files,
// validation with cell references, the expansion of grants into vesting
// tranches, the one rule that gives events to tranches (Allocate), and the
// valuation inputs of each grant with the source of every assumption. It
// does no numerics of its own beyond counting shares; valuation does
// those. Below it, package pricing values a whole schedule and package
// accounting books it.
//
// # The workbook
//
// The sheets and their columns are listed in Sheets (DESIGN §4.2, a
// contract); ColumnsMarkdown renders the list for the README, and WriteXLSX
// with a nil Schedule writes the blank template. Sheet names, headers and
// keys are matched case-insensitively, ignoring spaces and underscores;
// columns come in any order; unknown sheets, columns and keys are warnings.
// Rows whose cells are all empty are skipped.
//
// Values are read from the stored cell values (formats are not needed):
//
//   - Dates: date cells and Excel serial numbers (1900 or 1904 system, as the
//     workbook says), or ISO text YYYY-MM-DD. Other text such as 03/04/2025
//     is refused: it is ambiguous.
//   - Numbers: numeric cells or plain text numbers. Commas are accepted only
//     as thousands separators in groups of three ("1,234,567.5"); "1,5" is
//     refused because a decimal comma cannot be told from a separator.
//   - Percentages: 0.45, a cell formatted 45% (which stores 0.45), or the
//     text "45%".
//   - A formula is read by the value the spreadsheet saved with it; a formula
//     with no saved value is an error naming the cell.
//
// A CSV folder holds one UTF-8 file per sheet (grants.csv, company.csv, ...;
// an optional byte-order mark is dropped; quoted fields may hold commas and
// line breaks). Its rows are numbered as a spreadsheet would show the file,
// so problems carry the same Sheet!Cell references as in a workbook. A file
// separated by semicolons or tabs, UTF-16 text, or lines ended by a carriage
// return alone is refused with a message saying so. Only the files that
// stand for a sheet are opened, and each must be a regular file (not a
// symbolic link, a device or a pipe); HashInput hashes the same files.
//
// The workbook is read by this package's own streaming reader of the zip
// archive and its XML parts (xlsx.go, xmlscan.go), not by a spreadsheet
// library: every part read is read to its end, so a wrong checksum or size
// in the archive, XML that is cut short or does not close, or a cell that
// refers to a string the workbook lacks is an error wrapping ErrDamaged and
// naming the sheet, never a schedule with rows missing.
//
// # Vesting conditions
//
// A grant may name, in its condition column, a row of the Conditions sheet
// (conditions.go): a performance condition (payouts at threshold, target
// and maximum; its assessments, dated, on the Assessments sheet), a price
// hurdle (a price, on a closing price or an average of N closes, watched
// daily or continuously, by a deadline, and the day it was met) or
// relative TSR (a performance period, the peers and their price files on
// the Peers sheet, the payout curve on the Payout Curve sheet, an optional
// cap when the company's own TSR is negative, and the company's own price
// file). Validation checks each condition's kind-specific columns, that
// only a performance condition is assessed, that relative TSR is carried
// by units and no condition by a warrant, and that a hurdle's deadline
// falls after the grant. ReadFile reads the price files a relative TSR
// names (paths relative to the workbook's folder, or to a CSV folder
// itself; ParsePrices, the format of `grantworth vol`) and checks they
// cover the period's start and each grant's measurement date, with a
// warning when they cover less than the look-back; each problem names the
// cell that gives the file. Inputs then estimates a relative TSR grant's
// volatilities and correlations from them (ConditionInputs, TSRInputs),
// and its volatility is the company's own, from its file.
//
// # Limits
//
// Untrusted workbooks cannot exhaust memory or time: files are capped at
// MaxFileSize bytes, a workbook at MaxUnzipSize unzipped, the Grants sheet
// at MaxGrants rows and every sheet at row MaxRows, each row at MaxColumns
// non-empty columns (and a spreadsheet's 16,384 cells; a CSV record at
// 4 MiB), each cell at MaxCellChars characters, the shared strings at
// MaxSharedStrings strings and MaxSharedStringBytes bytes, XML nesting at
// 64 elements. Each limit is checked while streaming, before memory is
// taken for what it bounds, and a file past one is an error wrapping
// ErrTooLarge that names the sheet (the file, for the shared strings).
// Counts written inside a file are never used to size anything. Text
// fields have their own, shorter limits (MaxIDChars, MaxNameChars,
// MaxSourceChars, MaxHeaderChars): longer text is an error naming the cell.
//
// # Problems
//
// Every problem is a *CellError naming the sheet, the cell, the column and
// the value found, wrapping a sentinel (ErrNotDate, ErrRange, ...) for
// errors.Is. A Report keeps errors and warnings apart and holds up to
// MaxErrors errors. Reading never stops at the first problem: a row with a
// bad cell is left out of the Schedule (and rules that would misfire
// because of it are skipped), and everything else is still checked. A grant
// whose shares, expiry or vesting columns are wrong has its Vesting and
// Events rows left unchecked, so that one cause gives one error.
//
// The rules Validate applies, beyond the types of the cells:
//
//   - Schedule: at least one grant on the Grants sheet.
//   - Company: period_start before valuation_date; shares_outstanding given
//     when there are warrants; fiscal_year_end a month (a name, its first
//     three letters or 1 to 12), fiscal_year_end_weekday a weekday, a
//     warning for fiscal_year_end_rule without one (FiscalCalendar).
//   - Assumptions: volatility given (unless every option and warrant row
//     gives one; a blank value names its empty cell) and above 0, a
//     warning outside 5%–200%; dividend yield, exit and forfeiture rates
//     and tax_rate in [0, 1); exercise multiple 0 or 1 to 100;
//     under framework ifrs2, attribution graded and forfeitures estimate
//     (IFRS 2 allows no other), each refusal naming its cell. A percentage
//     typed without its sign and so out of range (58 for 58%) is asked
//     about: "did you mean 58% (0.58)?" (PercentHint).
//   - Grants: unique grant_id (both rows named); shares above 0; a strike
//     for options and warrants, never negative (an RSU's is ignored with a
//     warning); an expiry (expiry_date or term_years) after grant_date;
//     cliff_months not above vest_months; vest_every_months 1, 3 or 12;
//     vesting that ends after expiry; the same override bounds as the
//     Assumptions; a warrant's purpose given (compensation or financing),
//     and financing for warrants only; a hire_date before the expiry; a
//     warning for a strike below the share price at grant, a grant after
//     the valuation date, a vest_start over a year after grant, a
//     hire_date after the last vest date; no cost_center named unassigned
//     (Unassigned, the name of expense with none).
//   - Market: a share price at every measurement date (the row's share_price
//     or a Share Prices row on or before it), and one at the valuation date
//     when an option or warrant is granted by then (PeriodEndPrice, for
//     the disclosures' intrinsic values), with a warning when the latest
//     valuation is more than StaleMonths old at the grant date (common
//     practice), and a milder one, on the Share Prices row, when it is more
//     than QuarterMonths old at the measurement dates of some grants
//     (named, each with the age); a Rates curve dated on or before every measurement date of
//     an option or warrant; prices above 0 and one per date; tenors from 0
//     to 100 years and unique within a curve; rates between -20% and 50%
//     (4.5 for 4.5% is caught); a curve is par-semiannual or zero rates, not
//     both, and must build; a warning on a curve more than QuarterMonths
//     old at the measurement dates of some grants.
//   - Vesting: rows for known grants, shares above 0, adding up to the grant.
//   - Transfers: rows for known grants, one cost centre per grant and day,
//     none named unassigned; a warning for a row on or before the grant
//     date (its centre holds from the start) and one after the valuation
//     date (left out of this close).
//   - Accounts: a role of AccountRoles, an account_code or an
//     account_name, one row per role (and, for compensation_expense, per
//     cost centre); a warning for a cost_center on another role, or one no
//     grant or transfer names.
//   - Events: known grants, shares above 0, dates not before the grant (a
//     warning after the valuation date); shares never above what is
//     outstanding when they happen: forfeited and cancelled against all
//     outstanding shares (a warning when a forfeiture exceeds the unvested
//     ones, and when it forfeits only part of them, so that the rest vest
//     after the holder left), exercised and expired against vested
//     outstanding shares; a share_price above 0.
//
// # Measurement
//
// Tranches expands a grant into vesting tranches (DESIGN §4.2) with its
// forfeitures applied by Allocate (from the unvested tranches in
// proportion, ProRata); Inputs gives a grant's valuation.Terms per tranche,
// its valuation.Market at the measurement date (the grant date, or the
// valuation date for a liability-classified warrant) and the source of each
// assumption, ready for the memo.
package grants
