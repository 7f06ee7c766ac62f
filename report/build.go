package report

import "sort"

// Summarize fills the sums of m from its tranches: each grant's total,
// share-weighted value per share and simplified-method total, m.Totals, and
// the subtotals by instrument and by grant month. The builder calls it once
// after the tranches are valued; the renderers only read what it wrote.
func Summarize(m *Model) {
	m.Totals = Totals{Grants: len(m.Grants)}
	inst := map[string]*Group{}
	month := map[string]*Group{}
	add := func(set map[string]*Group, key string, g *Grant) {
		s := set[key]
		if s == nil {
			s = &Group{Key: key}
			set[key] = s
		}
		s.Grants++
		s.Tranches += len(g.Tranches)
		s.Shares += g.Shares
		s.FairValueTotal += g.FairValueTotal
		s.BSMSimplifiedTotal += g.BSMSimplifiedTotal
	}
	for i := range m.Grants {
		g := &m.Grants[i]
		g.FairValueTotal, g.BSMSimplifiedTotal = 0, 0
		var shares int64
		for j := range g.Tranches {
			t := &g.Tranches[j]
			t.FairValueTotal = t.FairValuePerShare * float64(t.Shares)
			g.FairValueTotal += t.FairValueTotal
			g.BSMSimplifiedTotal += t.BSMSimplifiedValue * float64(t.Shares)
			shares += t.Shares
		}
		g.FairValuePerShare = 0
		if shares > 0 {
			g.FairValuePerShare = g.FairValueTotal / float64(shares)
		}
		m.Totals.Tranches += len(g.Tranches)
		m.Totals.Shares += g.Shares
		m.Totals.FairValueTotal += g.FairValueTotal
		m.Totals.BSMSimplifiedTotal += g.BSMSimplifiedTotal
		add(inst, g.Instrument, g)
		add(month, g.GrantDate.Time().Format("2006-01"), g)
	}
	m.ByInstrument = sortedGroups(inst)
	m.ByGrantMonth = sortedGroups(month)
}

func sortedGroups(set map[string]*Group) []Group {
	out := make([]Group, 0, len(set))
	for _, g := range set {
		if g.Shares > 0 {
			g.FairValuePerShare = g.FairValueTotal / float64(g.Shares)
		}
		out = append(out, *g)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Key < out[j].Key })
	return out
}
