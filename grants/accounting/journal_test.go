package accounting

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"grantworth/grants"
)

// Rule (common practice): parts rounded to cents add up to their total
// rounded to cents, by the largest remainder method. 100.006 + 200.003 +
// 300.003 = 600.012, which rounds to 600.01; rounded down the parts give
// 600.00, and the missing cent goes to the largest remainder, 0.6 cent, so
// to the first: 100.01, 200.00, 300.00. 0.006 + 0.0061 + 0.0059 = 0.018,
// two cents; each rounded alone would make three, so the cent of the
// smallest remainder (0.59 cent) is left out. A negative part rounds
// down too: −0.006 + 10.004 = 9.998 → 10.00; floors −0.01 and 10.00 give
// 9.99, and the cent goes to the larger remainder, −0.006's 0.4.
func TestApportionByHand(t *testing.T) {
	cases := []struct {
		xs     []float64
		target int64
		want   []int64
	}{
		{[]float64{100.006, 200.003, 300.003}, 60001, []int64{10001, 20000, 30000}},
		{[]float64{0.006, 0.0061, 0.0059}, 2, []int64{1, 1, 0}},
		{[]float64{-0.006, 10.004}, 1000, []int64{0, 1000}},
		{nil, 0, []int64{}},
	}
	for _, c := range cases {
		got := apportion(c.xs, c.target, 100)
		if fmt.Sprint(got) != fmt.Sprint(c.want) {
			t.Errorf("apportion(%v, %d) = %v, want %v", c.xs, c.target, got, c.want)
		}
	}
}

// The chart: a company account for the role and cost centre, else for the
// role, else the default named in the framework's wording (IFRS 2 calls
// the equity account the share-based payment reserve), and amounts in the
// currency's minor unit (none for the yen).
func TestChartOf(t *testing.T) {
	s := &grants.Schedule{Company: grants.Company{Currency: "JPY"},
		Accounts: []grants.AccountRow{
			{Role: "compensation_expense", Code: "6400", Name: "Stock compensation"},
			{Role: "compensation_expense", CostCenter: "R&D", Code: "6410"},
			{Role: "deferred_tax_asset", Code: "1800"},
		}}
	c := ChartOf(s)
	if c.Decimals != 0 {
		t.Errorf("chart %+v", c)
	}
	for _, k := range []struct {
		role   Role
		centre string
		want   Account
	}{
		{RoleCompensation, "R&D", Account{"6410", "Share-based payment expense"}},
		{RoleCompensation, "S&M", Account{"6400", "Stock compensation"}},
		{RoleCompensation, "", Account{"6400", "Stock compensation"}},
		{RoleEquity, "", Account{"", "Share-based payment reserve"}},
		{RoleDeferredTaxAsset, "R&D", Account{"1800", "Deferred tax asset"}},
	} {
		if got := c.Of(k.role, k.centre, grants.IFRS2); got != k.want {
			t.Errorf("Of(%s, %q) = %+v, want %+v", k.role, k.centre, got, k.want)
		}
	}
	if DefaultAccount(RoleEquity, grants.ASC718).Name != "Additional paid-in capital" {
		t.Error("ASC 718 equity account")
	}
	// Every role has its row in grants.AccountRoles, and every row a role.
	roles := map[string]bool{}
	for _, r := range grants.AccountRoles {
		roles[r.Role] = true
	}
	for _, r := range []Role{RoleCompensation, RoleEquity, RoleAwardLiability, RoleLiability, RoleFairValueChange, RoleWarrantEquity, RoleFinancing, RoleDeferredTaxAsset, RoleDeferredTax} {
		if !roles[string(r)] {
			t.Errorf("role %s is not in grants.AccountRoles", r)
		}
		delete(roles, string(r))
	}
	if len(roles) > 0 {
		t.Errorf("grants.AccountRoles has roles the journal does not book: %v", roles)
	}
}

// Property: for random awards (equity and liability-classified, with
// events and transfers between cost centres), every entry balances to the
// cent, each compensation line carries its cost centre, and the
// compensation lines add up to the period's expense rounded to the cent.
func TestJournalBalancesAndAddsUp(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 718))
	names := []string{"R&D", "S&M", "G&A", ""}
	for trial := 0; trial < 30; trial++ {
		var awards []Award
		for k := 0; k < 12; k++ {
			a, _ := randomAward(rng, fmt.Sprintf("J%d", k))
			a.Grant.CostCenter = names[rng.IntN(len(names))]
			if rng.IntN(3) == 0 {
				a.Transfers = []grants.Transfer{{GrantID: a.Grant.ID, Date: a.Grant.GrantDate.AddDate(0, 0, rng.IntN(900)), CostCenter: names[rng.IntN(3)]}}
			}
			if a.Grant.Instrument == grants.Warrant && rng.IntN(2) == 0 {
				a.Grant.Classification = grants.Liability
				a.Remeasurements = []Remeasurement{{Date: ymd("2028-03-31"), FairValue: make([]float64, len(a.Tranches))}}
				for i := range a.Tranches {
					a.Remeasurements[0].FairValue[i] = a.Tranches[i].FairValue * (0.5 + rng.Float64())
				}
			}
			awards = append(awards, a)
		}
		r := mustExpense(t, awards, Policy{Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1}, "2028-04-01", "2028-06-30")
		var comp int64
		for i, e := range Journal(r, nil, nil, Chart{Decimals: 2}) {
			var dr, cr int64
			for _, l := range e.Lines {
				if (l.Debit == 0) == (l.Credit == 0) || l.Debit < 0 || l.Credit < 0 {
					t.Fatalf("trial %d entry %d: line %+v has not exactly one positive side", trial, i, l)
				}
				dr += cents(l.Debit)
				cr += cents(l.Credit)
				if l.Role == RoleCompensation {
					comp += cents(l.Debit) - cents(l.Credit)
					if l.CostCenter == "" {
						t.Errorf("trial %d entry %d: compensation line with no cost centre", trial, i)
					}
				}
			}
			if dr != cr {
				t.Errorf("trial %d entry %q: debits %d cents, credits %d", trial, e.Description, dr, cr)
			}
		}
		if comp != cents(r.Period) {
			t.Errorf("trial %d: compensation lines %d cents, period expense %.4f", trial, comp, r.Period)
		}
	}
}
