package accounting

import (
	"errors"
	"strings"
	"testing"
	"time"

	"grantworth/grants"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// investorWarrant is a liability-classified warrant issued in a financing:
// 400,000 warrants issued 2025-02-10 worth 0.80 each, remeasured 0.95 on
// 2025-03-31, 1.90 on 2026-06-30, 2.75 on 2026-08-14 (the day 50,000 of
// them are exercised, after the share price rose on 2026-08-01) and 2.10
// on 2026-09-30.
func investorWarrant() Award {
	a := testAward("INV", grants.Warrant, "2025-02-10", []string{"2025-02-10"}, []int64{400_000}, []float64{0.80})
	a.Grant.Classification, a.Grant.Purpose, a.Grant.Strike = grants.Liability, grants.Financing, 2
	a.Remeasurements = []Remeasurement{
		{Date: ymd("2025-03-31"), FairValue: []float64{0.95}},
		{Date: ymd("2026-06-30"), FairValue: []float64{1.90}},
		{Date: ymd("2026-08-14"), FairValue: []float64{2.75}},
		{Date: ymd("2026-09-30"), FairValue: []float64{2.10}},
	}
	a.Events = []grants.Event{{GrantID: "INV", Date: ymd("2026-08-14"), Kind: grants.Exercised, Shares: 50_000}}
	return a
}

// Rule: a warrant issued in a financing is not share-based payment (ASC
// 718-10-15-3 scope; IFRS 2.2 and IAS 32; from memory): it has no
// compensation cost. A liability-classified one is measured at fair value
// at issue and remeasured at every period end and on exercise, its change
// shown as a change in fair value of the warrant liability outside
// operating expense (ASC 815-40-35-4; IAS 32.11 with IFRS 9; from memory),
// with its own journal lines. Worked by hand from investorWarrant:
//
//   - Q1 2025 (issue): recognized at issue 400,000 × 0.80 = 320,000;
//     remeasured to 400,000 × 0.95 = 380,000 on 2025-03-31, a change of
//     +60,000.
//   - Q3 2026 (the audit case): the liability opens at 400,000 × 1.90 =
//     760,000; on 2026-08-14 it is remeasured to 2.75 and the 50,000
//     exercised leave it at 50,000 × 2.75 = 137,500 (to equity); it closes
//     at 350,000 × 2.10 = 735,000. Change in fair value: 735,000 +
//     137,500 − 760,000 = +112,500. Reclassifying at the period-start value
//     of 1.90 would have missed 50,000 × (2.75 − 1.90) = 42,500 of it.
func TestFinancingWarrantLiability(t *testing.T) {
	a := investorWarrant()
	pol := Policy{}
	r := mustExpense(t, []Award{a}, pol, "2025-01-01", "2025-03-31")
	if len(r.Grants) != 0 || r.Period != 0 || r.Cumulative != 0 || r.Unrecognized != 0 {
		t.Fatalf("a financing warrant in compensation: %v, grants %+v", r, r.Grants)
	}
	if len(r.Financing) != 1 {
		t.Fatalf("financing %+v", r.Financing)
	}
	w := r.Financing[0]
	nearly(t, "issued", w.Issued, 320_000, tolMoney)
	nearly(t, "value at issue", w.ValueAtIssue, 320_000, tolMoney)
	nearly(t, "Q1 2025 change in fair value", w.FairValueChange, 60_000, tolMoney)
	nearly(t, "Q1 2025 liability", w.LiabilityEnd, 380_000, tolMoney)
	nearly(t, "Q1 2025 report change", r.FairValueChange, 60_000, tolMoney)
	checkJournal(t, Journal(r, nil, nil, Chart{Decimals: 2}), []Entry{
		{Lines: []Line{{Role: RoleFinancing, Debit: 320_000}, {Role: RoleLiability, Credit: 320_000}}},
		{Lines: []Line{{Role: RoleFairValueChange, Debit: 60_000}, {Role: RoleLiability, Credit: 60_000}}},
	}, grants.ASC718)

	r = mustExpense(t, []Award{a}, pol, "2026-07-01", "2026-09-30")
	w = r.Financing[0]
	nearly(t, "Q3 2026 opening liability", w.LiabilityOpen, 760_000, tolMoney)
	nearly(t, "Q3 2026 nothing issued", w.Issued, 0, 0)
	nearly(t, "reclassified at the exercise day's fair value", w.Reclassified, 137_500, tolMoney)
	nearly(t, "Q3 2026 closing liability", w.LiabilityEnd, 735_000, tolMoney)
	nearly(t, "Q3 2026 change in fair value", w.FairValueChange, 112_500, tolMoney)
	nearly(t, "roll", w.LiabilityOpen+w.Issued+w.FairValueChange-w.Reclassified, w.LiabilityEnd, tolMoney)
	if w.Outstanding != 350_000 || w.Exercised != 50_000 || w.FairValue != 2.10 {
		t.Errorf("Q3 2026 row %+v", w)
	}
	if r.Period != 0 || r.Cumulative != 0 || len(r.Grants) != 0 {
		t.Errorf("Q3 2026 compensation %v", r)
	}
	// The quarters' changes add up: the context periods hold the
	// quarters from Q1 2025, each with its change apart from compensation.
	var sum float64
	for _, p := range r.Periods {
		sum += p.FairValueChange
		if p.Amount != 0 {
			t.Errorf("period %v: compensation %v", p.Start, p.Amount)
		}
	}
	nearly(t, "changes since issue", sum, 735_000+137_500-320_000, tolMoney)
	checkJournal(t, Journal(r, nil, nil, Chart{Decimals: 2}), []Entry{
		{Lines: []Line{{Role: RoleFairValueChange, Debit: 112_500}, {Role: RoleLiability, Credit: 112_500}}},
		{Lines: []Line{{Role: RoleLiability, Debit: 137_500}, {Role: RoleWarrantEquity, Credit: 137_500}}},
	}, grants.ASC718)

	// Without the remeasurement on the exercise day the exercised warrants
	// leave at 1.90 and the change is 42,500 short.
	b := investorWarrant()
	b.Remeasurements = append(b.Remeasurements[:2], b.Remeasurements[3])
	r = mustExpense(t, []Award{b}, pol, "2026-07-01", "2026-09-30")
	nearly(t, "change without the exercise-day remeasurement", r.Financing[0].FairValueChange, 112_500-42_500, tolMoney)

	// Disclosures: in no share-based roll-forward, in its own.
	d, err := Disclose([]Award{a}, pol, ymd("2026-07-01"), ymd("2026-09-30"), 3.4)
	if err != nil {
		t.Fatal(err)
	}
	if d.Warrants.Start.Shares != 0 || d.Warrants.End.Shares != 0 || len(d.WarrantsOutstanding) != 0 || d.WarrantsAtEnd.Outstanding.Shares != 0 {
		t.Errorf("financing warrant in the share-based warrant tables: %+v", d.Warrants)
	}
	checkLine(t, "financing start", d.FinancingWarrants.Start, 400_000, 2, 0.80)
	checkLine(t, "financing exercised", d.FinancingWarrants.Exercised, 50_000, 2, 0.80)
	checkLine(t, "financing end", d.FinancingWarrants.End, 350_000, 2, 0.80)
	if d.WarrantActivity.Exercised != 0 || d.WarrantActivity.CashReceived != 0 {
		t.Errorf("financing exercise in the share-based activity: %+v", d.WarrantActivity)
	}
}

// Rule: an equity-classified warrant issued in a financing is measured
// once, at issue (ASC 815-40-25; IAS 32.16; from memory), and the proceeds
// are allocated to it with the financing (ASC 470-20-25-2): no
// compensation, no remeasurement, no journal line of the period. 250,000
// warrants issued with a loan on 2024-05-20 at 0.60: 150,000 at issue,
// the same in every later period.
func TestFinancingWarrantEquity(t *testing.T) {
	a := testAward("LND", grants.Warrant, "2024-05-20", []string{"2024-05-20"}, []int64{250_000}, []float64{0.60})
	a.Grant.Classification, a.Grant.Purpose = grants.Equity, grants.Financing
	for _, p := range [][2]string{{"2024-04-01", "2024-06-30"}, {"2026-07-01", "2026-09-30"}} {
		r := mustExpense(t, []Award{a}, Policy{}, p[0], p[1])
		if r.Period != 0 || r.Cumulative != 0 || len(r.Grants) != 0 || r.FairValueChange != 0 || len(Journal(r, nil, nil, Chart{Decimals: 2})) != 0 {
			t.Errorf("%s: %v, journal %+v", p[0], r, Journal(r, nil, nil, Chart{Decimals: 2}))
		}
		w := r.Financing[0]
		nearly(t, p[0]+" value at issue", w.ValueAtIssue, 150_000, tolMoney)
		if w.Classification != grants.Equity || w.FairValue != 0.60 || w.Outstanding != 250_000 || w.LiabilityEnd != 0 || w.Issued != 0 {
			t.Errorf("%s: %+v", p[0], w)
		}
	}
	// Spread of a financing warrant is nothing: it is no compensation.
	amounts, cost, err := Spread(a, Policy{}, []time.Time{ymd("2024-12-31")})
	if err != nil || cost != 0 || amounts[0] != 0 {
		t.Errorf("Spread: %v, %v, %v", amounts, cost, err)
	}
}

// Rule: under IFRS 2 (framework ifrs2) attribution is graded, each
// tranche a separate award (IFRS 2.IG11, from memory), forfeitures are
// estimated (IFRS 2.20), and the credit for equity-settled awards goes to
// equity (IFRS 2.7), which the journal names a share-based payment
// reserve, not additional paid-in capital. The four-tranche award's Q1
// 2029 is 4,581.73 (TestFourTrancheGraded) under either standard; only
// the names differ.
func TestIFRS2Framework(t *testing.T) {
	for _, pol := range []Policy{
		{Framework: grants.IFRS2, Attribution: grants.StraightLine},
		{Framework: grants.IFRS2, Forfeitures: grants.AsOccur},
		{Framework: "ias19"},
	} {
		if _, err := Expense([]Award{fourTranche()}, pol, ymd("2029-01-01"), ymd("2029-03-31")); err == nil {
			t.Errorf("%+v accepted", pol)
		}
	}
	want := 8000.0*90/365 + 9000.0*90/730 + 10000.0*90/1095 + 11000.0*90/1461
	for _, fw := range []grants.Framework{grants.ASC718, grants.IFRS2} {
		r := mustExpense(t, []Award{fourTranche()}, Policy{Framework: fw}, "2029-01-01", "2029-03-31")
		nearly(t, string(fw)+" Q1 2029", r.Period, want, tolMoney)
		checkJournal(t, Journal(r, nil, nil, Chart{Decimals: 2}), []Entry{{Lines: []Line{{Role: RoleCompensation, Debit: want}, {Role: RoleEquity, Credit: want}}}}, fw)
	}
	r := mustExpense(t, []Award{fourTranche()}, Policy{Framework: grants.IFRS2}, "2029-01-01", "2029-03-31")
	j := Journal(r, nil, nil, Chart{Decimals: 2})
	if got := j[0].Lines[1].Account.Name; got != "Share-based payment reserve" {
		t.Errorf("IFRS 2 equity account %q", got)
	}
	// A company's own account wins over either default.
	j = Journal(r, nil, nil, Chart{Decimals: 2, Accounts: map[ChartKey]Account{{Role: RoleEquity}: {Code: "3100", Name: "Other reserves"}}})
	if got := j[0].Lines[1].Account; got.Code != "3100" || got.Name != "Other reserves" {
		t.Errorf("mapped account %+v", got)
	}
}

// The disclosed risk-free rate of a grant is the zero rate at each
// tranche's expected term, weighted by shares as the expected term is
// (ASC 718-10-50-2, from memory; common practice): tranches of 1,000
// and 3,000 shares with expected terms of 4 and 6 years and rates of 3.0%
// and 4.0% there disclose 5.5 years at (1,000 × 3% + 3,000 × 4%)/4,000 =
// 3.75%, not the rate at the contractual term.
func TestMeasuredRateAtExpectedTerm(t *testing.T) {
	s := &grants.Schedule{Company: grants.Company{ValuationDate: ymd("2026-09-30"), PeriodStart: ymd("2026-07-01")}}
	g := grants.Grant{ID: "R", Instrument: grants.Option, GrantDate: ymd("2026-08-01"), Shares: 4000, Strike: 3, ExpiryDate: ymd("2036-08-01"), Purpose: grants.Compensation}
	s.Vesting = []grants.VestRow{{GrantID: "R", VestDate: ymd("2027-08-01"), Shares: 1000}, {GrantID: "R", VestDate: ymd("2028-08-01"), Shares: 3000}}
	s.Grants = []grants.Grant{g}
	v := &pricing.Valuation{Grants: []pricing.GrantValue{{
		Inputs:           grants.Inputs{Grant: g, Tranches: s.Tranches(g), RiskFreeRate: grants.Source{Value: 0.045}},
		Results:          []valuation.Result{{Value: 1, ExpectedTermYears: 4}, {Value: 1.2, ExpectedTermYears: 6}},
		ExpectedTermRate: []float64{0.03, 0.04},
	}}}
	awards, _, err := AwardsOf(s, v)
	if err != nil {
		t.Fatal(err)
	}
	m := awards[0].Measured
	nearly(t, "expected term", m.ExpectedTermYears, 5.5, 1e-12)
	nearly(t, "rate at the expected term", m.RiskFreeRate, 0.0375, 1e-12)
	if _, err := Close(s, v, nil); !errors.Is(err, grants.ErrRequired) {
		t.Errorf("Close without a period-end price: %v", err)
	}
}

// The audit case of issue 10, end to end through pricing: the sample's
// investor warrant TW-039 (liability-classified, issued in a financing),
// 50,000 of its 400,000 exercised on 2026-08-10 after the share's fair
// value rose to 3.90 on 2026-08-01 (an invented Share Prices row, before
// the sample's down round of 2026-08-14). Pricing
// revalues it on the exercise day; the books reclassify the exercised
// warrants at that day's fair value v(08-10), not at the 2026-06-30 value,
// so the period's change in fair value is larger by 50,000 × (v(08-10) −
// v(06-30)) than a reclassification at the last period end would give
// (IFRS 2.30 and ASC 815-40-35: remeasure on settlement, then reclassify).
func TestAuditCaseExerciseMidQuarter(t *testing.T) {
	s, rep, err := grants.ReadFile("../../sample/tarnwick.xlsx")
	if err != nil || !rep.OK() {
		t.Fatalf("sample: %v %v", err, rep.Err())
	}
	s.SharePrices = append(s.SharePrices, grants.PricePoint{Date: ymd("2026-08-01"), Price: 3.90, Row: 99})
	s.Events = append(s.Events, grants.Event{GrantID: "TW-039", Date: ymd("2026-08-10"), Kind: grants.Exercised, Shares: 50_000, Row: 99})
	g, _ := s.Grant("TW-039")
	in, err := s.Inputs(g)
	if err != nil {
		t.Fatal(err)
	}
	v, err := pricing.Value(s, []grants.Inputs{in}, pricing.Options{})
	if err != nil {
		t.Fatal(err)
	}
	at := map[string]float64{}
	for _, r := range v.Revaluations["TW-039"] {
		if r.Err != nil {
			t.Fatalf("revaluation on %s: %v", r.Date.Format(time.DateOnly), r.Err)
		}
		at[r.Date.Format(time.DateOnly)] = r.Values[0]
	}
	v0630 := at["2026-06-30"]
	if v0810, ok := at["2026-08-10"]; !ok || !(v0810 > v0630) {
		t.Fatalf("revaluations %v: want the exercise day, above the 2026-06-30 value after the price rose", at)
	}
	v0810 := at["2026-08-10"]
	awards, warns, err := AwardsOf(s, v)
	if err != nil || len(warns) > 0 {
		t.Fatalf("awards: %v %v", err, warns)
	}
	start, end := s.Period()
	r, err := Expense(awards, PolicyOf(s), start, end)
	if err != nil {
		t.Fatal(err)
	}
	w := r.Financing[0]
	vEnd := v.Grants[0].Results[0].Value
	nearly(t, "opening liability", w.LiabilityOpen, 400_000*v0630, tolMoney)
	nearly(t, "reclassified at the exercise day's value", w.Reclassified, 50_000*v0810, tolMoney)
	nearly(t, "closing liability", w.LiabilityEnd, 350_000*vEnd, tolMoney)
	nearly(t, "change in fair value", w.FairValueChange, 350_000*vEnd+50_000*v0810-400_000*v0630, tolMoney)
	t.Logf("v(06-30) %.4f, v(08-10) %.4f, v(09-30) %.4f: the remeasurement on the exercise day adds %.2f to the change", v0630, v0810, vEnd, 50_000*(v0810-v0630))
	if r.Period != 0 || len(r.Grants) != 0 {
		t.Errorf("the financing warrant booked compensation: %v", r)
	}
}

// lenderWarrant is an equity-classified warrant issued with a loan on
// 2026-01-20: 30,000 warrants at a strike of 4, vested at issue.
func lenderWarrant(p grants.Purpose) grants.Grant {
	return grants.Grant{ID: "L-1", Holder: "LENDER", Instrument: grants.Warrant, GrantDate: ymd("2026-01-20"), Shares: 30_000, Strike: 4,
		ExpiryDate: ymd("2033-01-20"), VestStart: ymd("2026-01-20"), VestEvery: 1, Classification: grants.Equity, ExerciseStyle: grants.American, Purpose: p}
}

// Rule: a close never restates a closed period; a warrant the prior close
// booked as compensation whose purpose is financing now has that
// compensation reversed in the open period, a catch-up with its cause,
// booked against the financing's proceeds (the value goes with the
// financing, ASC 470-20-25-2; ASC 250-10-45-17 books it in the open
// period here, our rule). Worked by hand: the first close (Q2 2026) books
// the warrant's whole value at issue as compensation (vested at issue);
// the second (Q3 2026), with the purpose corrected, reverses exactly that
// booked cumulative, and nothing else moves.
func TestPurposeCorrectedAfterPriorClose(t *testing.T) {
	s := chainSchedule("2026-06-30")
	s.Grants = append(s.Grants, lenderWarrant(grants.Compensation))
	v := grantstest.Value(t, s, nil)
	b := closeOf(t, s, v, nil)
	prior := Filed(s, v, b)
	var booked float64
	for _, g := range b.Expense.Grants {
		if g.GrantID == "L-1" {
			booked = g.Cumulative
		}
	}
	if booked <= 0 {
		t.Fatalf("the first close booked %v for L-1", booked)
	}

	s = chainSchedule("2026-09-30")
	s.Grants = append(s.Grants, lenderWarrant(grants.Financing))
	v = grantstest.Value(t, s, prior.Locks())
	b = closeOf(t, s, v, prior)
	var cu *CatchUp
	for i, c := range b.Reconciliation.CatchUps {
		if c.GrantID == "L-1" {
			cu = &b.Reconciliation.CatchUps[i]
		}
	}
	if cu == nil || cu.Cause != CausePurpose || !cu.Financing || cu.Amount != -booked || !strings.Contains(cu.Detail, "purpose") {
		t.Fatalf("catch-ups %+v", b.Reconciliation.CatchUps)
	}
	if len(b.Expense.Financing) != 1 || b.Expense.Financing[0].CompensationReversed != -booked {
		t.Errorf("financing %+v", b.Expense.Financing)
	}
	// Without the warrant, the period's expense is what it was; with it,
	// lower by exactly the booked amount.
	s2 := chainSchedule("2026-09-30")
	base := closeOf(t, s2, grantstest.Value(t, s2, nil), nil)
	nearly(t, "period expense less the reversal", b.Expense.Period, base.Expense.Period-booked, tolMoney)
	if err := b.Reconciliation.Check(); err != nil {
		t.Error(err)
	}
	found := false
	for _, e := range b.Journal {
		if len(e.Lines) == 2 && e.Lines[0].Role == RoleFinancing && e.Lines[1].Role == RoleCompensation && e.Lines[0].GrantID == "L-1" {
			found = true
			nearly(t, "reversal entry, in cents", e.Lines[0].Debit, booked, tolCent)
		}
	}
	if !found {
		t.Errorf("no entry Dr financing proceeds / Cr compensation for L-1: %+v", b.Journal)
	}
}
