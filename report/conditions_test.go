package report

import (
	"bytes"
	"encoding/json"
	"slices"
	"strings"
	"sync"
	"testing"

	"grantworth/grants/accounting"
	"grantworth/grants/grantstest"
	"grantworth/grants/pricing"
)

// conditionedModel is the Model of grantstest.Conditioned, valued with
// loose simulation targets (layout is checked here, not accuracy), built
// once.
var conditionedModel = sync.OnceValues(func() (*Model, error) {
	s := grantstest.Conditioned()
	ins, errs, _ := s.ValueInputs()
	if len(errs) > 0 {
		return nil, errs[0]
	}
	v, err := pricing.Value(s, ins, pricing.Options{SimTarget: 4})
	if err != nil {
		return nil, err
	}
	b, err := accounting.Close(s, v, nil)
	if err != nil {
		return nil, err
	}
	return Build(s, v, b, Run{Tool: Tool{Name: "grantworth", Version: "test"}})
})

func conditioned(t *testing.T) *Model {
	t.Helper()
	m, err := conditionedModel()
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// valuation.json carries each condition (its terms and the accounting
// rule) and, per grant, how the condition entered its value and expense;
// a schedule without conditions has neither field.
func TestJSONConditions(t *testing.T) {
	m := conditioned(t)
	var buf bytes.Buffer
	if err := WriteJSON(&buf, m); err != nil {
		t.Fatal(err)
	}
	var got struct {
		Conditions []struct {
			ID          string   `json:"condition_id"`
			Kind        string   `json:"kind"`
			Grants      []string `json:"grant_ids"`
			Rule        string   `json:"accounting_rule"`
			Performance *struct {
				Outcome     float64 `json:"outcome_at_period_end"`
				Assessments []struct {
					Counted float64 `json:"counted"`
				} `json:"assessments"`
			} `json:"performance"`
			TSR *struct {
				Payout []PayoutPoint `json:"payout_curve"`
			} `json:"relative_tsr"`
		} `json:"conditions"`
		Grants []struct {
			ID        string `json:"grant_id"`
			Condition *struct {
				Method   string `json:"method"`
				Tranches []struct {
					Value      float64 `json:"fair_value_per_share"`
					ServiceEnd string  `json:"service_end"`
					Z          float64 `json:"z"`
				} `json:"tranches"`
				HitProbability float64   `json:"hit_probability"`
				HitByMonth     []float64 `json:"hit_probability_by_month"`
				TSR            *struct {
					Companies   []TSRCompany `json:"companies"`
					Correlation [][]float64  `json:"correlation"`
					MeanPayout  float64      `json:"expected_payout"`
				} `json:"relative_tsr"`
			} `json:"condition"`
		} `json:"grants"`
	}
	if err := json.Unmarshal(buf.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	if len(got.Conditions) != 4 {
		t.Fatalf("%d conditions in valuation.json, want 4", len(got.Conditions))
	}
	for _, c := range got.Conditions {
		if c.Rule == "" || len(c.Grants) != 1 {
			t.Errorf("condition %s: %+v", c.ID, c)
		}
	}
	if p := got.Conditions[0].Performance; p == nil || p.Outcome != 1.5 || len(p.Assessments) != 3 || p.Assessments[1].Counted != 0 {
		t.Errorf("performance condition: %+v", p)
	}
	if tsr := got.Conditions[3].TSR; tsr == nil || len(tsr.Payout) != 3 {
		t.Errorf("relative TSR terms: %+v", tsr)
	}
	by := map[string]int{}
	for i, g := range got.Grants {
		by[g.ID] = i
	}
	if c := got.Grants[by["G-001"]].Condition; c != nil {
		t.Errorf("a service-only grant has a condition: %+v", c)
	}
	if c := got.Grants[by["P-001"]].Condition; c == nil || c.Method != "service award" {
		t.Errorf("P-001: %+v", c)
	}
	if c := got.Grants[by["H-001"]].Condition; c == nil || c.Method != "lattice" || c.HitProbability <= 0 || len(c.HitByMonth) < 48 || len(c.Tranches) != 3 || c.Tranches[0].Z == 0 {
		t.Errorf("H-001: %+v", c)
	}
	if c := got.Grants[by["T-001"]].Condition; c == nil || c.TSR == nil || len(c.TSR.Companies) != 4 || len(c.TSR.Correlation) != 4 || c.TSR.MeanPayout <= 0 ||
		c.Tranches[0].ServiceEnd != "2028-12-31" {
		t.Errorf("T-001: %+v", c)
	}
	buf.Reset()
	if err := WriteJSON(&buf, fixture()); err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(buf.Bytes(), []byte(`"condition`)) {
		t.Error("valuation.json of a schedule without conditions mentions them")
	}
}

// The workbook gains the condition sheets only when there is something to
// show on them, and the memo a section per kind of condition.
func TestConditionSheetsAndSections(t *testing.T) {
	m := conditioned(t)
	f := renderBook(t, m)
	sheets := f.GetSheetList()
	for _, want := range []string{SheetConditions, SheetConditionValues, SheetAssessments, SheetTSRPeers, SheetDistributions} {
		if !slices.Contains(sheets, want) {
			t.Errorf("workbook lacks sheet %s: %v", want, sheets)
		}
	}
	rows, err := f.GetRows(SheetConditionValues)
	if err != nil || len(rows) != 1+1+3+1+1 {
		t.Errorf("Condition values: %d rows (%v), want a header and 6 tranches", len(rows), err)
	}
	plain := renderBook(t, fixture()).GetSheetList()
	for _, s := range plain {
		if strings.Contains(s, "ondition") || s == SheetTSRPeers {
			t.Errorf("a workbook without conditions has sheet %s", s)
		}
	}
	text := strings.Join(strings.Fields(pdfText(t, renderMemo(t, m))), " ")
	for _, want := range []string{"Performance conditions", "Price hurdles", "Relative total shareholder return",
		"ASC 718-10-30-27", "ASC 718-10-55-71", "IFRS 2.15(b)", "Broadie, Glasserman and Kou", "Grant H-001: closing price at or above USD 7.00 by 2030-01-15",
		"Grant H-002: average of the last 20 closing prices", "Probability of no payout", "Expected payout", "a key customer left"} {
		if !strings.Contains(text, want) {
			t.Errorf("memo lacks %q", want)
		}
	}
	plainText := pdfText(t, renderMemo(t, fixture()))
	if strings.Contains(plainText, "Price hurdles") || strings.Contains(plainText, "Performance conditions") {
		t.Error("a memo without conditions has condition sections")
	}
}
