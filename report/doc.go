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
// Table, Para, Sub, Chart, BarPNG) give them the same look. Data for a new
// section goes into the Model (as Expense does), so that JSON carries it
// too.
//
// # Units
//
// Money is in the Company currency; values per share carry four decimals
// in the memo; rates, volatilities and yields are decimals in JSON and the
// workbook (formatted as percentages there) and percentages in the memo.
package report
