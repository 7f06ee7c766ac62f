package report

import (
	"fmt"
	"io"
	"testing"

	"github.com/xuri/excelize/v2"
)

// bigModel is the fixture's first option grant copied n times, 37 monthly
// tranches each as a four-year, one-year-cliff grant has: the size of a
// 10,000-grant ledger's outputs. Demo data.
func bigModel(n int) *Model {
	m := fixture()
	proto := m.Grants[0]
	tr := proto.Tranches[0]
	proto.Tranches = nil
	for k := 1; k <= 37; k++ {
		t := tr
		t.Index = k
		proto.Tranches = append(proto.Tranches, t)
	}
	m.Grants = make([]Grant, n)
	m.Assumptions = nil
	for i := range m.Grants {
		g := proto
		g.ID = fmt.Sprintf("L-%05d", i)
		g.Holder = fmt.Sprintf("E%05d", i)
		g.Tranches = append([]Tranche(nil), proto.Tranches...)
		m.Grants[i] = g
		for _, name := range []string{"share_price", "volatility", "dividend_yield", "exercise_multiple", "post_vesting_exit_rate", "risk_free_rate"} {
			m.Assumptions = append(m.Assumptions, Assumption{GrantID: g.ID, Name: name, Kind: KindPercent, Value: 0.5, Text: "0.5", Ref: "Assumptions!B2", Source: "peer median"})
		}
	}
	Summarize(m)
	return m
}

// Rendering a 10,000-grant ledger (370,000 tranches); run briefly, e.g.
// go test ./report -run - -bench Render -benchtime 1x.
func BenchmarkRender(b *testing.B) {
	m := bigModel(10000)
	for _, r := range []struct {
		name string
		f    func(io.Writer, *Model) error
	}{{"json", WriteJSON}, {"workbook", WriteWorkbook}, {"memo", WriteMemo}} {
		b.Run(r.name, func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if err := r.f(io.Discard, m); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// The Tranches rows of a 10,000-grant ledger written apart, without the
// compressor: the cost of the fast rows themselves.
func BenchmarkFastTrancheRows(b *testing.B) {
	m := bigModel(10000)
	f := excelize.NewFile()
	defer f.Close()
	bk := &Book{f: f}
	if err := bk.styles(m.Company.Currency); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := trancheRows(bk, m, 0, m.Totals.Tranches)(io.Discard); err != nil {
			b.Fatal(err)
		}
	}
}
