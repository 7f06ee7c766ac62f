package accounting

import (
	"math"
	"strings"
	"testing"
	"time"

	"grantworth/grants"
)

// taxOf books the awards over [start, end] and works out the tax effect at
// rate with the share prices given (a step function by date).
func taxOf(t *testing.T, awards []Award, f grants.Framework, rate float64, prices map[string]float64, start, end string) (*TaxReport, *ExpenseReport) {
	t.Helper()
	// Estimated forfeitures at a rate of 0: as they occur, which IFRS 2
	// does not allow as a policy.
	p, err := openPeriod(awards, Policy{Framework: f, Attribution: grants.Graded, Forfeitures: grants.Estimate}, ymd(start), ymd(end))
	if err != nil {
		t.Fatal(err)
	}
	in := TaxInputs{Rate: func(time.Time) float64 { return rate },
		Price: func(d time.Time) (float64, string, bool) {
			var best string
			for k := range prices {
				if !ymd(k).After(d) && k > best {
					best = k
				}
			}
			if best == "" {
				return 0, "", false
			}
			return prices[best], "price of " + best, true
		}}
	priceEnd, _, _ := in.Price(ymd(end))
	return p.tax(in, priceEnd), p.expense()
}

// entryOf is the journal's entry whose description starts with prefix.
func entryOf(t *testing.T, js []Entry, prefix string) Entry {
	t.Helper()
	for _, e := range js {
		if strings.HasPrefix(e.Description, prefix) {
			return e
		}
	}
	t.Fatalf("no entry %q in %+v", prefix, js)
	return Entry{}
}

// roleAmount is the debits less credits of role in e.
func roleAmount(e Entry, r Role) float64 {
	var x float64
	for _, l := range e.Lines {
		if l.Role == r {
			x += l.Debit - l.Credit
		}
	}
	return x
}

// round2 is x rounded to the cent.
func round2(x float64) float64 { return math.Round(x*100) / 100 }

// Rule: the cumulative compensation cost of an award that ordinarily gives
// a tax deduction is a deductible temporary difference, and the deferred
// tax asset is that cost at the statutory rate (ASC 718-740-25-2 and
// 718-740-30-1, from memory). A non-qualified option: 1,000 options at a
// fair value of 10, granted 2029-01-01, vesting 2030-01-01 (365 days), a
// 25% rate. By 31 March 90 days are rendered, cost 2,465.75, asset 616.44;
// by 30 June 181 days, cost 4,958.90, asset 1,239.73; the quarter's
// deferred tax benefit is 25% × 10,000 × 91/365 = 623.29: Dr deferred tax
// asset / Cr deferred tax benefit 623.29. An incentive stock option (no
// deduction) has none.
func TestDeferredTaxASC718ByHand(t *testing.T) {
	a := testAward("N1", grants.Option, "2029-01-01", []string{"2030-01-01"}, []int64{1000}, []float64{10})
	a.Grant.Strike = 5
	tx, r := taxOf(t, []Award{a}, grants.ASC718, 0.25, map[string]float64{"2029-01-01": 5}, "2029-04-01", "2029-06-30")
	nearly(t, "asset at the period start", tx.AssetOpen, 0.25*10000*90/365, tolMoney)
	nearly(t, "asset at the period end", tx.AssetEnd, 0.25*10000*181/365, tolMoney)
	nearly(t, "deferred tax benefit", tx.Benefit, 0.25*10000*91/365, tolMoney)
	nearly(t, "to equity", tx.ToEquity, 0, tolMoney)
	e := entryOf(t, Journal(r, nil, tx, Chart{Decimals: 2}), "Deferred tax")
	if got := roleAmount(e, RoleDeferredTaxAsset); got != 623.29 || roleAmount(e, RoleDeferredTax) != -623.29 || e.Balance() != 0 {
		t.Errorf("entry %+v: want Dr deferred tax asset / Cr deferred tax benefit 623.29", e)
	}

	iso := a
	no := false
	iso.Grant.TaxDeductible = &no
	tx, r = taxOf(t, []Award{iso}, grants.ASC718, 0.25, map[string]float64{"2029-01-01": 5}, "2029-04-01", "2029-06-30")
	if tx.AssetEnd != 0 || tx.NotDeductible != 1 || len(tx.Grants) != 0 {
		t.Errorf("incentive stock option: %+v, want no asset", tx)
	}
	for _, e := range Journal(r, nil, tx, Chart{Decimals: 2}) {
		if strings.HasPrefix(e.Description, "Deferred tax") {
			t.Errorf("incentive stock option: deferred tax entry %+v", e)
		}
	}
	// No rate, no tax effect.
	if tx, _ := taxOf(t, []Award{a}, grants.ASC718, 0, nil, "2029-04-01", "2029-06-30"); tx != nil {
		t.Errorf("zero rate: %+v", tx)
	}
}

// Rule: under IFRS the deferred tax asset is measured on the deduction the
// share price at the period end would give, for the service rendered so
// far (IAS 12.68B), and the tax on any part of it beyond the cumulative
// expense goes to equity (IAS 12.68C). The option above (strike 5, fair
// value 10), the share at 12 on 31 March and at 20 on 30 June, 25%:
//   - 31 March: intrinsic value 7 × 1,000 × 90/365 = 1,726.03, below the
//     cost 2,465.75: asset 431.51, nothing in equity;
//   - 30 June: 15 × 1,000 × 181/365 = 7,438.36 against the cost 4,958.90:
//     asset 1,859.59, of which 25% × 2,479.45 = 619.86 in equity;
//   - the quarter: Dr asset 1,428.08 / Cr deferred tax income 808.22 (25% ×
//     (4,958.90 − 1,726.03)) / Cr equity 619.86.
func TestDeferredTaxIFRSIntrinsicValueByHand(t *testing.T) {
	a := testAward("I1", grants.Option, "2029-01-01", []string{"2030-01-01"}, []int64{1000}, []float64{10})
	a.Grant.Strike = 5
	tx, r := taxOf(t, []Award{a}, grants.IFRS2, 0.25, map[string]float64{"2029-01-01": 5, "2029-03-31": 12, "2029-06-30": 20}, "2029-04-01", "2029-06-30")
	nearly(t, "IFRS asset at the start", tx.AssetOpen, 0.25*7000*90/365, tolMoney)
	nearly(t, "IFRS equity at the start", tx.EquityOpen, 0, tolMoney)
	nearly(t, "IFRS asset at the end", tx.AssetEnd, 0.25*15000*181/365, tolMoney)
	nearly(t, "IFRS equity at the end", tx.EquityEnd, 0.25*(15000-10000)*181/365, tolMoney)
	nearly(t, "IFRS deferred tax income", tx.Benefit, 0.25*(10000*181-7000*90)/365, tolMoney)
	nearly(t, "IFRS to equity", tx.ToEquity, 0.25*5000*181/365, tolMoney)
	e := entryOf(t, Journal(r, nil, tx, Chart{Decimals: 2}), "Deferred tax")
	want := map[Role]float64{RoleDeferredTaxAsset: 1428.08, RoleDeferredTax: -808.22, RoleEquity: -619.86}
	for role, x := range want {
		if got := round2(roleAmount(e, role)); got != x {
			t.Errorf("IFRS entry %s: %v, want %v", role, got, x)
		}
	}
	if round2(e.Balance()) != 0 {
		t.Errorf("IFRS entry does not balance: %+v", e)
	}
	for _, l := range e.Lines {
		if l.Role == RoleEquity && l.Account.Name != "Share-based payment reserve" {
			t.Errorf("IFRS equity account %q", l.Account.Name)
		}
	}
}

// Rule: when the deduction is taken, the difference between the deduction
// and the cost recognized, at the rate, is an excess tax benefit or a
// shortfall (ASC 718-740-35-2, in income tax expense since ASU 2016-09;
// from memory), and the deferred tax asset of those shares is released. A
// vested option, 1,000 at a fair value of 4, strike 5, 25%: on 15 May 400
// are exercised with the share at 12: deduction 7 × 400 = 2,800, cost
// 1,600, excess benefit 300; the asset falls from 1,000 to 600, so the
// deferred tax entry is Dr deferred tax benefit 400 / Cr asset 400. At 8
// the deduction, 1,200, falls short of the cost: a shortfall of 100. With
// no price known the benefit cannot be computed, and says so. An RSU
// tranche of 300 units at 6 vesting on 1 May with the share at 9: deduction
// 2,700, cost 1,800, excess 225.
func TestExcessTaxBenefitByHand(t *testing.T) {
	opt := func(price *float64) Award {
		a := testAward("X1", grants.Option, "2028-01-01", []string{"2029-01-01"}, []int64{1000}, []float64{4})
		a.Grant.Strike = 5
		a.Events = []grants.Event{{GrantID: "X1", Date: ymd("2029-05-15"), Kind: grants.Exercised, Shares: 400, SharePrice: price}}
		return a
	}
	p12, p8 := 12.0, 8.0
	tx, r := taxOf(t, []Award{opt(&p12)}, grants.ASC718, 0.25, map[string]float64{"2028-01-01": 5}, "2029-04-01", "2029-06-30")
	if len(tx.Settlements) != 1 {
		t.Fatalf("settlements %+v", tx.Settlements)
	}
	st := tx.Settlements[0]
	nearly(t, "deduction", st.Deduction, 2800, tolMoney)
	nearly(t, "cost", st.Cost, 1600, tolMoney)
	nearly(t, "excess tax benefit", st.Excess, 300, tolMoney)
	if !st.Computed || st.Kind != "exercised" || st.Shares != 400 || st.ToEquity != 0 {
		t.Errorf("settlement %+v", st)
	}
	nearly(t, "asset before", tx.AssetOpen, 1000, tolMoney)
	nearly(t, "asset after", tx.AssetEnd, 600, tolMoney)
	e := entryOf(t, Journal(r, nil, tx, Chart{Decimals: 2}), "Deferred tax")
	if roleAmount(e, RoleDeferredTax) != 400 || roleAmount(e, RoleDeferredTaxAsset) != -400 {
		t.Errorf("release entry %+v", e)
	}

	tx, _ = taxOf(t, []Award{opt(&p8)}, grants.ASC718, 0.25, map[string]float64{"2028-01-01": 5}, "2029-04-01", "2029-06-30")
	nearly(t, "shortfall", tx.Settlements[0].Excess, -100, tolMoney)

	tx, _ = taxOf(t, []Award{opt(nil)}, grants.ASC718, 0.25, nil, "2029-04-01", "2029-06-30")
	if st := tx.Settlements[0]; st.Computed || !strings.Contains(st.Note, "no share price is known on 2029-05-15") {
		t.Errorf("no price: %+v", st)
	}

	// Under IFRS an excess goes to equity (IAS 12.68C).
	tx, _ = taxOf(t, []Award{opt(&p12)}, grants.IFRS2, 0.25, map[string]float64{"2028-01-01": 5}, "2029-04-01", "2029-06-30")
	nearly(t, "IFRS excess to equity", tx.Settlements[0].ToEquity, 300, tolMoney)

	rsu := testAward("R1", grants.RSU, "2028-05-01", []string{"2029-05-01"}, []int64{300}, []float64{6})
	tx, _ = taxOf(t, []Award{rsu}, grants.ASC718, 0.25, map[string]float64{"2028-01-01": 6, "2029-04-20": 9}, "2029-04-01", "2029-06-30")
	if len(tx.Settlements) != 1 || tx.Settlements[0].Kind != "vested" {
		t.Fatalf("RSU settlements %+v", tx.Settlements)
	}
	st = tx.Settlements[0]
	nearly(t, "RSU deduction", st.Deduction, 2700, tolMoney)
	nearly(t, "RSU excess", st.Excess, 225, tolMoney)
	nearly(t, "RSU asset after delivery", tx.AssetEnd, 0, tolMoney)
}
