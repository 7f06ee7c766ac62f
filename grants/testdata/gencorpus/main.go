// Command gencorpus writes the malformed-schedule corpus in
// grants/testdata/malformed: each case a folder holding a broken schedule
// (schedule.xlsx, a CSV folder schedule/, or another file) and want.txt,
// the problem lines check must print (each line of want.txt is the start of
// one printed line, cell reference first). The expected lines are written
// here by hand, not taken from the reader. Each case breaks one thing in a
// valid base schedule, written to grants/testdata/valid. Run from the
// repository root:
//
//	go run ./grants/testdata/gencorpus
package main

import (
	"archive/zip"
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"

	"github.com/xuri/excelize/v2"

	"grantworth/grants"
)

// The base schedule is valid: an invented company with three options, an
// RSU and a liability warrant.
var base = map[string]string{
	"company.csv": `key,value
company_name,Pebblebrook Audio
valuation_date,2026-09-30
currency,USD
shares_outstanding,5000000
`,
	"assumptions.csv": `key,value,source
volatility,0.5,peer median
dividend_yield,0,none paid
exercise_multiple,2.5,
post_vesting_exit_rate,0.1,
pre_vesting_forfeiture_rate,0.08,
`,
	"grants.csv": `grant_id,instrument,grant_date,shares,strike,expiry_date,vest_months,cliff_months,vest_every_months,classification,purpose
PB-1,option,2024-03-01,4800,1.50,2034-03-01,48,12,1,,
PB-2,option,2025-01-15,1200,2.00,2035-01-15,36,0,3,,
PB-3,rsu,2025-06-01,900,,,36,0,12,,
PB-4,warrant,2025-02-01,10000,2.50,2030-02-01,0,0,1,liability,financing
`,
	"vesting.csv": `grant_id,vest_date,shares
PB-2,2025-07-15,600
PB-2,2026-01-15,600
`,
	"share_prices.csv": `date,price
2024-01-01,1.40
2025-01-01,2.00
2026-06-30,2.80
2025-05-31,2.30
`,
	"rates.csv": `curve_date,tenor_years,rate,compounding
2024-01-01,1,0.045,continuous
2024-01-01,10,0.042,continuous
2026-06-30,0.5,0.041,par-semiannual
2026-06-30,2,0.039,par-semiannual
2026-06-30,10,0.040,par-semiannual
2025-01-01,1,0.044,continuous
2025-01-01,10,0.041,continuous
`,
	"events.csv": `grant_id,date,event,shares
PB-1,2026-03-15,forfeited,2400
`,
}

type edit struct{ file, old, new string }

type corpusCase struct {
	name  string
	edits []edit                  // CSV text edits (old "" = replace the file; new "-" = delete it)
	xlsx  func(*excelize.File)    // edits of the workbook made from the (edited) CSV; nil = a CSV folder
	raw   func(dir string) string // writes another kind of file, returns its name
	// cellXML replaces cells of the Grants worksheet XML of the workbook
	// (by reference), for cells excelize will not write, such as a formula
	// with no saved value.
	cellXML map[string]string
	want    []string
}

const isoMsg = "is not an ISO date (YYYY-MM-DD); text dates in other forms are ambiguous"

var cases = []corpusCase{
	{name: "missing-sheet", edits: []edit{{"company.csv", "", "-"}},
		want: []string{"Company: sheet is missing (CSV: company.csv)"}},
	{name: "missing-column", edits: []edit{{"grants.csv", "grant_date,shares,strike", "grant_date,strike"}},
		want: []string{"Grants!A1 (shares): column is missing from the header row"}},
	{name: "duplicate-ids", edits: []edit{{"grants.csv", "PB-2,option", "PB-1,option"}, {"vesting.csv", "", "grant_id,vest_date,shares\n"}},
		want: []string{`Grants!A3 (grant_id): "PB-1" is also the grant_id of row 2 (A2)`}},
	{name: "text-in-number", edits: []edit{{"grants.csv", "2024-03-01,4800,", "2024-03-01,lots,"}},
		want: []string{`Grants!D2 (shares): "lots" is not a number`}},
	{name: "ambiguous-date", edits: []edit{{"grants.csv", "PB-2,option,2025-01-15", "PB-2,option,03/04/2025"}},
		want: []string{`Grants!C3 (grant_date): "03/04/2025" ` + isoMsg}},
	{name: "negative-shares", edits: []edit{{"grants.csv", "2024-03-01,4800,", "2024-03-01,-100,"}, {"events.csv", "", "grant_id,date,event,shares\n"}},
		want: []string{`Grants!D2 (shares): "-100" must be more than zero`}},
	{name: "cliff-longer-than-vesting", edits: []edit{{"grants.csv", "2034-03-01,48,12,", "2034-03-01,48,60,"}},
		want: []string{`Grants!H2 (cliff_months): "60" is longer than vest_months 48 (G2)`}},
	{name: "expiry-before-grant", edits: []edit{{"grants.csv", "2.00,2035-01-15", "2.00,2024-01-15"}},
		want: []string{`Grants!F3 (expiry_date): "2024-01-15" must be after grant_date 2025-01-15 (C3)`}},
	{name: "vesting-does-not-add-up", edits: []edit{{"vesting.csv", "2026-01-15,600", "2026-01-15,500"}},
		want: []string{"Vesting!C2 (shares): the Vesting rows 2–3 of grant PB-2 add up to 1100 shares, but the grant has 1200 (Grants!D3)"}},
	{name: "unknown-instrument", edits: []edit{{"grants.csv", "PB-1,option", "PB-1,stock"}},
		want: []string{`Grants!B2 (instrument): "stock" is not one of option, warrant, rsu`}},
	{name: "empty-file", raw: func(dir string) string { write(filepath.Join(dir, "schedule.xlsx"), ""); return "schedule.xlsx" },
		want: []string{"schedule.xlsx: is empty, not an .xlsx workbook"}},
	{name: "not-a-workbook", raw: func(dir string) string {
		write(filepath.Join(dir, "schedule.xlsx"), base["grants.csv"])
		return "schedule.xlsx"
	}, want: []string{"schedule.xlsx: is not an .xlsx workbook ("}},
	{name: "one-csv-file", raw: func(dir string) string {
		write(filepath.Join(dir, "grants.csv"), base["grants.csv"])
		return "grants.csv"
	}, want: []string{"grants.csv: is one CSV file; give the folder that holds grants.csv"}},
	{name: "folder-without-csv", raw: func(dir string) string {
		must(os.MkdirAll(filepath.Join(dir, "schedule"), 0o755))
		write(filepath.Join(dir, "schedule", "grants.txt"), base["grants.csv"])
		return "schedule"
	}, want: []string{"schedule: holds no .csv files"}},
	{name: "csv-semicolons", edits: []edit{{"grants.csv", "", strings.ReplaceAll(base["grants.csv"], ",", ";")}},
		want: []string{"Grants: grants.csv line 1: the fields seem separated by semicolons"}},
	{name: "csv-tabs", edits: []edit{{"rates.csv", "", strings.ReplaceAll(base["rates.csv"], ",", "\t")}},
		want: []string{"Rates: rates.csv line 1: the fields seem separated by tabs"}},
	{name: "csv-bom", edits: []edit{{"grants.csv", "", "\ufeff" + strings.Replace(base["grants.csv"], "4800,1.50", "4800,-3", 1)}},
		want: []string{`Grants!E2 (strike): "-3" must be from 0 to 10^12`}},
	{name: "csv-quoted-newline", edits: []edit{{"grants.csv", "", strings.NewReplacer(
		"purpose\n", "purpose,notes\n",
		"2034-03-01,48,12,1,,\n", "2034-03-01,48,12,1,,,\"approved by the board,\nsee minutes\"\n",
		"2025-01-15,1200,", "2025-01-15,x12,").Replace(base["grants.csv"])}},
		want: []string{`Grants!D3 (shares): "x12" is not a number`}},
	{name: "csv-blank-lines", edits: []edit{{"grants.csv", "PB-2,option", "\n\nPB-2,option"}, {"grants.csv", "PB-3,rsu,2025-06-01", "PB-3,rsu,2025-6-1"}},
		want: []string{`Grants!C6 (grant_date): "2025-6-1" ` + isoMsg}},
	{name: "csv-not-utf8", edits: []edit{{"grants.csv", "PB-2,option", "PB-\xe92,option"}},
		want: []string{"Grants: grants.csv line 3 is not UTF-8 text; save the file as CSV UTF-8"}},
	{name: "csv-bad-quote", edits: []edit{{"grants.csv", "PB-3,rsu", "PB-3\",rsu"}},
		want: []string{"Grants: grants.csv line 4, column 5: bare \" in non-quoted-field"}},
	// The workbook has the template's columns: grant_id A, holder B,
	// instrument C, grant_date D, shares E, strike F, ...
	{name: "xlsx-formula-without-value", cellXML: map[string]string{"F2": `<c r="F2"><f>1.5*1</f></c>`}, want: []string{"Grants!F2 (strike): is a formula with no saved value"}},
	{name: "xlsx-formula-error-value", cellXML: map[string]string{"F3": `<c r="F3" t="e"><f>1/0</f><v>#DIV/0!</v></c>`}, want: []string{`Grants!F3 (strike): "#DIV/0!" is not a number`}},
	{name: "xlsx-text-date", xlsx: func(f *excelize.File) { must(f.SetCellStr("Grants", "D2", "4/3/2024")) },
		want: []string{`Grants!D2 (grant_date): "4/3/2024" ` + isoMsg}},
	{name: "xlsx-missing-sheet", xlsx: func(f *excelize.File) { must(f.DeleteSheet("Rates")) },
		want: []string{"Rates: sheet is missing (CSV: rates.csv)"}},
	{name: "xlsx-text-number", xlsx: func(f *excelize.File) { must(f.SetCellStr("Grants", "E5", "10.000,5")) },
		want: []string{`Grants!E5 (shares): "10.000,5" is not a number`}},
	{name: "strike-missing", edits: []edit{{"grants.csv", "4800,1.50,", "4800,,"}},
		want: []string{"Grants!E2 (strike): is required for option PB-1"}},
	{name: "no-share-price", edits: []edit{{"share_prices.csv", "2024-01-01,1.40", "2024-06-01,1.40"}},
		want: []string{"Grants!A2 (share_price): no share price is known at the measurement date 2024-03-01 of grant PB-1"}},
	{name: "no-rate-curve", edits: []edit{{"rates.csv", "2024-01-01,1,", "2024-06-01,1,"}, {"rates.csv", "2024-01-01,10,", "2024-06-01,10,"}},
		want: []string{"Grants!C2 (grant_date): no Rates curve is dated on or before the measurement date 2024-03-01 of grant PB-1"}},
	{name: "event-above-outstanding", edits: []edit{{"events.csv", "forfeited,2400", "forfeited,5000"}},
		want: []string{`Events!D2 (shares): "5000" forfeits more than the 4800 shares outstanding of grant PB-1 on 2026-03-15 (Grants!D2)`}},
	{name: "exercise-above-vested", edits: []edit{{"events.csv", "forfeited,2400", "exercised,3000"}},
		want: []string{`Events!D2 (shares): "3000" exercises more than the 2400 vested shares outstanding of grant PB-1 on 2026-03-15 (Grants!D2)`}},
	{name: "event-unknown-grant", edits: []edit{{"events.csv", "PB-1,", "PB-9,"}},
		want: []string{`Events!A2 (grant_id): "PB-9" is not a grant_id of the Grants sheet`}},
	{name: "event-unknown-kind", edits: []edit{{"events.csv", "forfeited", "left"}},
		want: []string{`Events!C2 (event): "left" is not one of exercised, forfeited, expired, cancelled`}},
	{name: "exit-rate-one-or-more", edits: []edit{{"assumptions.csv", "post_vesting_exit_rate,0.1", "post_vesting_exit_rate,1.2"}},
		want: []string{`Assumptions!B5 (post_vesting_exit_rate): "1.2" must be at least 0 and below 1 (100%)`}},
	{name: "forfeiture-rate-100-percent", edits: []edit{{"assumptions.csv", "pre_vesting_forfeiture_rate,0.08", "pre_vesting_forfeiture_rate,100%"}},
		want: []string{`Assumptions!B6 (pre_vesting_forfeiture_rate): "1" must be at least 0 and below 1 (100%)`}},
	{name: "vesting-after-expiry", edits: []edit{{"grants.csv", "1.50,2034-03-01", "1.50,2027-03-01"}, {"events.csv", "", "grant_id,date,event,shares\n"}},
		want: []string{"Grants!G2 (vest_months): vesting ends 2028-03-01, after the expiry 2027-03-01 (F2)"}},
	{name: "vesting-unknown-grant", edits: []edit{{"vesting.csv", "PB-2,2026", "PB-7,2026"}},
		want: []string{`Vesting!A3 (grant_id): "PB-7" is not a grant_id of the Grants sheet`}},
	{name: "impossible-date", edits: []edit{{"grants.csv", "option,2024-03-01", "option,2023-13-01"}},
		want: []string{`Grants!C2 (grant_date): "2023-13-01" is not a date`}},
	{name: "bad-percent", edits: []edit{{"assumptions.csv", "volatility,0.5", "volatility,45%%"}},
		want: []string{`Assumptions!B2 (volatility): "45%%" is not a decimal or a percentage`}},
	{name: "vest-every-two-months", edits: []edit{{"grants.csv", "2034-03-01,48,12,1,", "2034-03-01,48,12,2,"}},
		want: []string{`Grants!I2 (vest_every_months): "2" must be 1, 3 or 12`}},
	{name: "rate-as-whole-number", edits: []edit{{"rates.csv", "2024-01-01,1,0.045", "2024-01-01,1,4.5"}},
		want: []string{`Rates!C2 (rate): "4.5" is not a plausible rate; did you mean 4.5% (0.045)?`}},
	{name: "curve-mixes-par-and-zero", edits: []edit{{"rates.csv", "2026-06-30,2,0.039,par-semiannual", "2026-06-30,2,0.039,continuous"}},
		want: []string{"Rates!D4 (compounding): the curve of 2026-06-30 mixes par-semiannual yields with zero rates"}},
	{name: "duplicate-tenor", edits: []edit{{"rates.csv", "2024-01-01,10,", "2024-01-01,1,"}},
		want: []string{`Rates!B3 (tenor_years): "1" appears twice in the curve of 2024-01-01 (also B2)`}},
	{name: "missing-valuation-date", edits: []edit{{"company.csv", "valuation_date,2026-09-30\n", ""}},
		want: []string{"Company!A1 (valuation_date): key is missing"}},
	{name: "duplicate-column", edits: []edit{{"grants.csv", "purpose\n", "purpose,Shares\n"}},
		want: []string{`Grants!L1 (shares): "Shares" is the same column as D1`}},
	{name: "negative-term", edits: []edit{
		{"grants.csv", "grant_id,instrument,grant_date,shares,strike,expiry_date,", "grant_id,instrument,grant_date,shares,strike,term_years,"},
		{"grants.csv", "2.00,2035-01-15", "2.00,-5"}},
		want: []string{`Grants!F3 (term_years): "-5" must be more than 0 and at most 100 years`}},
	{name: "warrant-without-shares-outstanding", edits: []edit{{"company.csv", "shares_outstanding,5000000\n", ""}},
		want: []string{"Company (shares_outstanding): is needed for the dilution of warrant PB-4 (A5)"}},
	{name: "liability-warrant-expired", edits: []edit{{"grants.csv", "2.50,2030-02-01", "2.50,2026-06-01"}},
		want: []string{`Grants!F5 (expiry_date): "2026-06-01" is on or before the valuation date 2026-09-30: liability-classified warrant PB-4`}},
	{name: "event-before-grant", edits: []edit{{"events.csv", "PB-1,2026-03-15", "PB-1,2023-03-15"}},
		want: []string{`Events!B2 (date): "2023-03-15" is before the grant date 2024-03-01 of grant PB-1 (C2)`}},
	{name: "event-after-expiry", edits: []edit{{"events.csv", "PB-1,2026-03-15", "PB-1,2034-06-01"}},
		want: []string{`Events!B2 (date): "2034-06-01" is after the expiry date 2034-03-01 of grant PB-1 (F2)`}},
	{name: "unknown-compounding", edits: []edit{{"rates.csv", "2024-01-01,1,0.045,continuous", "2024-01-01,1,0.045,monthly"}},
		want: []string{`Rates!D2 (compounding): "monthly" is not one of continuous, annual, semiannual, par-semiannual`}},
	{name: "bad-currency", edits: []edit{{"company.csv", "currency,USD", "currency,US$"}},
		want: []string{`Company!B4 (currency): "US$" is not a three-letter ISO 4217 currency code`}},
	{name: "duplicate-price-date", edits: []edit{{"share_prices.csv", "2025-01-01,2.00", "2024-01-01,2.00"}},
		want: []string{`Share Prices!A3 (date): "2024-01-01" is also the date of A2; keep one price per date`}},
	{name: "cancel-above-outstanding", edits: []edit{{"events.csv", "forfeited,2400", "cancelled,5000"}},
		want: []string{`Events!D2 (shares): "5000" cancels more than the 4800 shares outstanding of grant PB-1 on 2026-03-15 (Grants!D2)`}},
	{name: "expire-above-vested", edits: []edit{{"events.csv", "forfeited,2400", "expired,3000"}},
		want: []string{`Events!D2 (shares): "3000" expires more than the 2400 vested shares outstanding of grant PB-1 on 2026-03-15 (Grants!D2)`}},
	{name: "exercise-multiple-below-one", edits: []edit{{"assumptions.csv", "exercise_multiple,2.5", "exercise_multiple,0.5"}},
		want: []string{`Assumptions!B4 (exercise_multiple): "0.5" must be 0 (no such rule) or above 1, up to 100 times the strike`}},
	{name: "exercise-multiple-of-one", edits: []edit{{"assumptions.csv", "exercise_multiple,2.5", "exercise_multiple,1"}},
		want: []string{`Assumptions!B4 (exercise_multiple): "1" must be 0 (no such rule) or above 1, up to 100 times the strike`}},
	{name: "volatility-too-high", edits: []edit{{"assumptions.csv", "volatility,0.5,", "volatility,9,"}},
		want: []string{`Assumptions!B2 (volatility): "9" must be from 0.01 to 5 (1% to 500%), as a decimal`}},
	{name: "period-start-after-valuation-date", edits: []edit{{"company.csv", "currency,USD\n", "currency,USD\nperiod_start,2026-10-01\n"}},
		want: []string{`Company!B5 (period_start): "2026-10-01" must be before valuation_date 2026-09-30`}},
	{name: "par-tenor-not-half-years", edits: []edit{{"rates.csv", "2026-06-30,2,", "2026-06-30,2.3,"}},
		want: []string{`Rates!B5 (tenor_years): "2.3" is not a whole number of half-years, as a par-semiannual yield needs`}},
	{name: "volatility-missing", edits: []edit{{"assumptions.csv", "volatility,0.5,peer median\n", ""}},
		want: []string{"Assumptions (volatility): key is missing, and grant PB-1 (Grants!A2) gives none"}},
	{name: "tenor-too-long", edits: []edit{{"rates.csv", "2024-01-01,10,", "2024-01-01,150,"}},
		want: []string{`Rates!B3 (tenor_years): "150" must be from 0 to 100 years`}},
	{name: "event-zero-shares", edits: []edit{{"events.csv", "forfeited,2400", "forfeited,0"}},
		want: []string{`Events!D2 (shares): "0" must be more than zero`}},
	{name: "vesting-zero-shares", edits: []edit{{"vesting.csv", "2026-01-15,600", "2026-01-15,0"}},
		want: []string{`Vesting!C3 (shares): "0" must be more than zero`}},
	{name: "ambiguous-vest-date", edits: []edit{{"vesting.csv", "PB-2,2025-07-15", "PB-2,15.07.2025"}},
		want: []string{`Vesting!B2 (vest_date): "15.07.2025" ` + isoMsg}},
	{name: "warrant-without-purpose", edits: []edit{{"grants.csv", "liability,financing", "liability,"}},
		want: []string{`Grants!K5 (purpose): warrant PB-4 must say what it pays for: compensation (share-based payment for services) or financing`}},
	{name: "financing-option", edits: []edit{{"grants.csv", "2034-03-01,48,12,1,,", "2034-03-01,48,12,1,,financing"}},
		want: []string{`Grants!K2 (purpose): "financing" applies to warrants only: enter an instrument issued to a lender or an investor as a warrant (option PB-1)`}},
	{name: "ifrs2-straight-line", edits: []edit{{"assumptions.csv", "pre_vesting_forfeiture_rate,0.08,\n", "pre_vesting_forfeiture_rate,0.08,\nattribution,straight-line,\nframework,ifrs2,\n"}},
		want: []string{`Assumptions!B7 (attribution): "straight-line" is not allowed under IFRS 2 (framework ifrs2)`}},
	{name: "ifrs2-as-occur", edits: []edit{{"assumptions.csv", "pre_vesting_forfeiture_rate,0.08,\n", "pre_vesting_forfeiture_rate,0.08,\nforfeitures,as-occur,\nframework,ifrs2,\n"}},
		want: []string{`Assumptions!B7 (forfeitures): "as-occur" is not allowed under IFRS 2 (framework ifrs2)`}},
	{name: "unknown-framework", edits: []edit{{"assumptions.csv", "pre_vesting_forfeiture_rate,0.08,\n", "pre_vesting_forfeiture_rate,0.08,\nframework,ias19,\n"}},
		want: []string{`Assumptions!B7 (framework): "ias19" is not one of asc718, ifrs2`}},
	{name: "fiscal-year-end-not-a-month", edits: []edit{{"company.csv", "currency,USD\n", "currency,USD\nfiscal_year_end,Sept.\n"}},
		want: []string{`Company!B5 (fiscal_year_end): "Sept." is not a month`}},
	{name: "tax-rate-as-percent-number", edits: []edit{{"assumptions.csv", "pre_vesting_forfeiture_rate,0.08,\n", "pre_vesting_forfeiture_rate,0.08,\ntax_rate,25,\n"}},
		want: []string{`Assumptions!B7 (tax_rate): "25" must be at least 0 and below 1`}},
	{name: "transfer-unknown-grant", edits: []edit{{"transfers.csv", "", "grant_id,date,cost_center\nPB-9,2026-01-01,R&D\n"}},
		want: []string{`Transfers!A2 (grant_id): "PB-9" is not a grant_id of the Grants sheet`}},
	{name: "transfer-same-day", edits: []edit{{"transfers.csv", "", "grant_id,date,cost_center\nPB-1,2026-01-01,R&D\nPB-1,2026-01-01,S&M\n"}},
		want: []string{`Transfers!B3 (date): "2026-01-01" is also the date of row 2 (B2) for grant PB-1`}},
	{name: "account-without-code-or-name", edits: []edit{{"accounts.csv", "", "role,cost_center,account_code,account_name\nequity,,,\n"}},
		want: []string{`Accounts!C2 (account_code): is empty, and so is account_name`}},
	{name: "account-unknown-role", edits: []edit{{"accounts.csv", "", "role,account_code\nbonus_expense,6500\n"}},
		want: []string{`Accounts!A2 (role): "bonus_expense" is not one of compensation_expense`}},
	{name: "hire-date-after-expiry", edits: []edit{{"grants.csv", "classification,purpose\n", "classification,purpose,hire_date\n"},
		{"grants.csv", "0,3,,\n", "0,3,,,2035-02-01\n"}},
		want: []string{`Grants!L3 (hire_date): "2035-02-01" is on or after the expiry 2035-01-15 of option PB-2`}},
	{name: "decimal-comma-price", edits: []edit{{"share_prices.csv", "2025-01-01,2.00", "2025-01-01,\"2,00\""}},
		want: []string{`Share Prices!B3 (price): "2,00" is not a number`}},
	// Modifications and replacement awards.
	{name: "event-modified", edits: []edit{{"events.csv", "forfeited", "modified"}},
		want: []string{`Events!C2 (event): "modified" is not an event: record a change of terms (a repricing, a new expiry, accelerated vesting) as a row of the Modifications sheet`}},
	{name: "modification-unknown-grant", edits: []edit{{"modifications.csv", "", modHead + "PB-9,2026-07-15,1.20,,,,,,,\n"}},
		want: []string{`Modifications!A2 (grant_id): "PB-9" is not a grant_id of the Grants sheet`}},
	{name: "modification-changes-nothing", edits: []edit{{"modifications.csv", "", modHead + "PB-1,2026-07-15,,,,,,,,board minute 12\n"}},
		want: []string{`Modifications!C2 (new_strike): the row changes nothing: give at least one of new_strike, new_expiry_date, new_vest_months, new_cliff_months, new_post_vesting_exit_rate, new_exercise_multiple`}},
	{name: "modification-rsu-strike", edits: []edit{{"modifications.csv", "", modHead + "PB-3,2026-07-15,1.20,,,,,,,\n"}},
		want: []string{`Modifications!C2 (new_strike): "1.2" grant PB-3 is an RSU, which has no strike`}},
	{name: "modification-partial-vesting", edits: []edit{{"modifications.csv", "", modHead + "PB-1,2026-07-15,,,36,,,,1000,\n"}},
		want: []string{`Modifications!I2 (shares): "1000" a change of vesting applies to all 2400 outstanding shares of grant PB-1; leave shares empty, or record the shares whose vesting changes as a grant of their own`}},
	{name: "modification-after-expiry", edits: []edit{{"modifications.csv", "", modHead + "PB-2,2035-02-01,1.00,,,,,,,\n"}},
		want: []string{`Modifications!B2 (date): "2035-02-01" is on or after the expiry 2035-01-15 of grant PB-2: nothing is left to change`}},
	{name: "modification-liability-warrant", edits: []edit{{"modifications.csv", "", modHead + "PB-4,2026-07-15,2.00,,,,,,,\n"}},
		want: []string{`Modifications!A2 (grant_id): "PB-4" is a liability-classified warrant, remeasured at fair value every period: a change of its terms is not booked as a modification by grantworth; give its new terms to the valuation that remeasures it`}},
	{name: "replacement-not-concurrent", edits: []edit{{"events.csv", "", "grant_id,date,event,shares,replacement_grant_id\nPB-1,2026-03-15,forfeited,2400,\nPB-2,2026-05-01,cancelled,1200,PB-1\n"}},
		want: []string{`Events!E3 (replacement_grant_id): "PB-1" is granted on 2024-03-01 (Grants!C2), not on the cancellation date 2026-05-01: a replacement is granted with the cancellation (ASC 718-20-35-8; IFRS 2.28(c)); a later grant is a new award, and the cancellation then recognizes the cancelled shares' remaining cost at once`}},
	{name: "replacement-on-forfeiture", edits: []edit{{"events.csv", "", "grant_id,date,event,shares,replacement_grant_id\nPB-1,2026-03-15,forfeited,2400,PB-2\n"}},
		want: []string{`Events!E2 (replacement_grant_id): "PB-2" names a replacement award, which only a cancelled event may have (this one is forfeited)`}},
}

// modHead is the header row of the Modifications sheet's CSV file.
const modHead = "grant_id,date,new_strike,new_expiry_date,new_vest_months,new_cliff_months,new_post_vesting_exit_rate,new_exercise_multiple,shares,note\n"

func main() {
	out := filepath.Join("grants", "testdata", "malformed")
	if err := os.RemoveAll(out); err != nil {
		fail(err)
	}
	for _, c := range cases {
		dir := filepath.Join(out, c.name)
		must(os.MkdirAll(dir, 0o755))
		files := map[string]string{}
		for k, v := range base {
			files[k] = v
		}
		for _, e := range c.edits {
			switch {
			case e.new == "-":
				delete(files, e.file)
			case e.old == "":
				files[e.file] = e.new
			default:
				if !strings.Contains(files[e.file], e.old) {
					fail(fmt.Errorf("case %s: %q not in %s", c.name, e.old, e.file))
				}
				files[e.file] = strings.Replace(files[e.file], e.old, e.new, 1)
			}
		}
		switch {
		case c.raw != nil:
			c.raw(dir)
		case c.xlsx != nil || c.cellXML != nil:
			tmp, err := os.MkdirTemp("", "corpus")
			must(err)
			for k, v := range files {
				write(filepath.Join(tmp, k), v)
			}
			s, rep, err := grants.ReadCSVDir(os.DirFS(tmp))
			must(err)
			os.RemoveAll(tmp)
			if !rep.OK() {
				fail(fmt.Errorf("case %s: base does not read cleanly: %v", c.name, rep.Err()))
			}
			var buf bytes.Buffer
			must(grants.WriteXLSX(&buf, s))
			f, err := excelize.OpenReader(&buf)
			must(err)
			if c.xlsx != nil {
				c.xlsx(f)
			}
			path := filepath.Join(dir, "schedule.xlsx")
			must(f.SaveAs(path))
			if c.cellXML != nil {
				patchCells(path, "xl/worksheets/sheet3.xml", c.cellXML)
			}
		default:
			sd := filepath.Join(dir, "schedule")
			must(os.MkdirAll(sd, 0o755))
			for k, v := range files {
				write(filepath.Join(sd, k), v)
			}
		}
		write(filepath.Join(dir, "want.txt"), strings.Join(c.want, "\n")+"\n")
	}
	// The base itself, which must read with no problem at all.
	valid := filepath.Join("grants", "testdata", "valid", "schedule")
	must(os.RemoveAll(valid))
	must(os.MkdirAll(valid, 0o755))
	for k, v := range base {
		write(filepath.Join(valid, k), v)
	}
	fmt.Printf("wrote %d cases to %s and the valid base to %s\n", len(cases), out, valid)
}

// patchCells rewrites cells of one worksheet inside the .xlsx at path.
func patchCells(path, entry string, cells map[string]string) {
	zr, err := zip.OpenReader(path)
	must(err)
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	for _, f := range zr.File {
		rc, err := f.Open()
		must(err)
		data, err := io.ReadAll(rc)
		must(err)
		rc.Close()
		if f.Name == entry {
			for ref, x := range cells {
				re := regexp.MustCompile(`<c r="` + ref + `"[^>]*?(/>|>.*?</c>)`)
				if !re.Match(data) {
					fail(fmt.Errorf("cell %s not in %s", ref, entry))
				}
				data = re.ReplaceAll(data, []byte(x))
			}
		}
		w, err := zw.CreateHeader(&zip.FileHeader{Name: f.Name, Method: zip.Deflate})
		must(err)
		_, err = w.Write(data)
		must(err)
	}
	must(zw.Close())
	zr.Close()
	must(os.WriteFile(path, buf.Bytes(), 0o644))
}

func write(path, s string) { must(os.WriteFile(path, []byte(s), 0o644)) }

func must(err error) {
	if err != nil {
		fail(err)
	}
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "gencorpus:", err)
	os.Exit(1)
}
