package accounting

import (
	"reflect"
	"testing"

	"grantworth/grants"
)

// TestCloseLetsGoOnlyOfWhatNothingReads checks that what Close lets go of
// as it goes (each award's tranches once the disclosures are drawn, each
// ledger's once its expense is, period.ownsAwards) is read by nothing
// after: its expense report and disclosures equal Attribute's over the
// same awards, which lets go of nothing. On the demo company's schedule
// as filed, and without its tax rate, when the ledgers are let go too.
// (An identity of the code, no outside source.)
func TestCloseLetsGoOnlyOfWhatNothingReads(t *testing.T) {
	for _, taxed := range []bool{true, false} {
		s, rep, err := grants.ReadFile("../../sample/tarnwick.xlsx")
		if err != nil {
			t.Fatal(err)
		}
		if rep != nil && !rep.OK() {
			t.Fatalf("sample has problems: %v", rep.Err())
		}
		if !taxed {
			s.Assumptions.TaxRate = 0
			var dated []grants.AssumptionRow
			for _, r := range s.Assumptions.Dated {
				if r.Key != "tax_rate" {
					dated = append(dated, r)
				}
			}
			s.Assumptions.Dated = dated
		}
		fv := func(g grants.Grant, k int) float64 { return 1 + float64(k)/10 }
		b, err := Close(s, fakeValuation(s, fv, nil), nil)
		if err != nil {
			t.Fatal(err)
		}
		if (b.Tax != nil) != taxed {
			t.Fatalf("taxed %v: tax report %v", taxed, b.Tax)
		}
		awards, _, err := AwardsOf(s, fakeValuation(s, fv, nil))
		if err != nil {
			t.Fatal(err)
		}
		start, end := s.Period()
		want, disc, err := Attribute(awards, PolicyOf(s), start, end, b.SharePrice.Value)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(b.Expense, want) {
			t.Errorf("taxed %v: Close's expense report differs from Attribute's", taxed)
		}
		if !reflect.DeepEqual(b.Disclosure, disc) {
			t.Errorf("taxed %v: Close's disclosures differ from Attribute's", taxed)
		}
	}
}
