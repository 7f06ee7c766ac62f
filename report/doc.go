// Package report lays out a valuation as the three files a finance team
// files at quarter close: valuation.json (DESIGN §4.3), valuation.xlsx and
// memo.pdf.
//
// # One model, three renderers
//
// Build lays a schedule, its valuation (pricing.Value) and the books of
// its close (accounting.Close) into one Model with the run's settings
// (tool version, input path and its SHA-256: injected, never read from a
// clock); it sums (Summarize) but values and books nothing. The Model goes
// to WriteJSON, WriteWorkbook and WriteMemo. The renderers value nothing
// and look nothing up outside the Model, so the three files cannot
// disagree. Each writes to an io.Writer; the command owns the files.
//
// # Compensation and financing apart
//
// Totals and every compensation figure cover the share-based awards only;
// warrants issued in financings (Grant.Purpose financing) are summed in
// FinancingTotals, grouped apart by instrument ("warrant (financing)"),
// and shown in their own memo section, workbook sheet (Financing
// warrants) and expense.financing_warrants, never inside
// expense.period_amount or expense.cumulative (DESIGN §4.3). The journal's
// lines, each with its account role, have a sheet of their own (Journal);
// the Disclosures sheet stacks the note's tables, each under a header row
// that names every value in it.
//
// # Quarter after quarter
//
// valuation.json carries schema_version (SchemaVersion) and all a later
// close needs: the grant-date values, the cumulative cost per grant and
// tranche, the events applied, a liability warrant's remeasurements, the
// counts and the liability at the valuation date, and the financing
// warrants' liabilities and measurements. ReadPrior reads it back
// into an accounting.Prior, refusing a file grantworth did not write or
// wrote in a newer format. The reconciliation to the prior close is its
// own memo section, workbook sheet and JSON object (reconcile.go).
//
// # Determinism
//
// The same Model gives the same bytes from every renderer: JSON fields in a
// fixed order; the workbook's zip entries in name order with no
// timestamps and its document dates set to the valuation date; the PDF's
// creation and modification dates set to the valuation date, its catalogs
// sorted and every image of a distinct pixel width (see Memo.Draw).
//
// # Adding a section
//
// Another file of this package adds a workbook sheet by appending a
// SheetHook to sheetHooks, and a memo section by appending a MemoHook to
// memoHooks, in an init function; hooks come after the built-in results
// and before Warnings. The Book and Memo helpers (NewTable, Text, Cell,
// Cur, Amount, Table, Para, Sub, Chart, BarPNG, PeriodBarsPNG) give them
// the same look. Data for a new
// section goes into the Model (as Expense does), so that JSON carries it
// too.
//
// # Units
//
// Money is in the Company currency; values per share carry four decimals
// in the memo; rates, volatilities and yields are decimals in JSON and the
// workbook (formatted as percentages there) and percentages in the memo.
// The memo prints every negative figure with one minus sign, U+2212
// (format.go), and says changes in words ("3.88% below it", relation).
// The workbook names the currency in the header of an amount column
// (Book.Cur) and keeps plain numbers in its cells, rounded by style
// (Book.Cell: cents, six decimals a share, eight for rates); a cell with
// no value is empty (Book.Amount). Each sheet declares the range its
// cells fill (NewTable, or NewTableSpan for stacked tables).
//
// # Pages
//
// The memo is on US Letter for a USD reporter and on A4 otherwise, or as
// the Company sheet's paper_size says (PaperFor), its text block 170 mm
// wide on either. Table sizes its columns from their content (no date,
// code or header word broken across lines) and keeps a heading row
// (rowHeading) with the row after it; Sub keeps a sub-heading with what
// follows. The optional preparer and client of the Company sheet head
// the cover and every later page. The expense chart (PeriodBarsPNG)
// tells past, current and expected quarters apart and leaves room
// above its tallest bar.
package report
