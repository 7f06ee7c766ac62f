package accounting

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
	"time"

	"grantworth/grants"
)

// CostCenterAmount is the part of one grant's compensation expense that
// falls in one cost centre.
type CostCenterAmount struct {
	CostCenter   string
	Period       float64
	Cumulative   float64
	Unrecognized float64
}

// CostCenterExpense is the compensation expense of one cost centre: the
// sum of its parts of every grant (see the package notes on cost centres).
type CostCenterExpense struct {
	CostCenter    string
	Grants        int // grants with a part in it
	Period        float64
	Cumulative    float64
	Unrecognized  float64
	Forecast      []float64 // by ExpenseReport.Forecast quarter
	AfterForecast float64
}

// centreSpan is a stretch of days from day number from on (to the next
// span) during which a grant's service is rendered in centre, an index
// into awardLedger.centres.
type centreSpan struct {
	from   int
	centre int
}

// setCostCenters gives the ledger its cost centre history: the grant's
// cost centre (Unassigned when it names none) from the start, then its
// transfers dated on or before asOf.
func (l *awardLedger) setCostCenters(a *Award, asOf time.Time) {
	index := func(name string) int {
		if strings.TrimSpace(name) == "" {
			name = grants.Unassigned
		}
		for i, c := range l.centres {
			if c == name {
				return i
			}
		}
		l.centres = append(l.centres, name)
		return len(l.centres) - 1
	}
	sc := l.scratch                  // newAwardLedger's
	l.centres = sc.names.Take(1)[:0] // a grant's first cost centre, nearly always its only one
	l.spans = sc.spans.Take(1)
	l.spans[0] = centreSpan{from: math.MinInt, centre: index(a.Grant.CostCenter)}
	if len(a.Transfers) == 0 {
		return
	}
	ts := slices.Clone(a.Transfers)
	slices.SortStableFunc(ts, func(a, b grants.Transfer) int { return cmp.Compare(dayNum(a.Date), dayNum(b.Date)) })
	for _, t := range ts {
		if !dayOnOrBefore(t.Date, asOf) {
			continue
		}
		c, from := index(t.CostCenter), dayNum(t.Date)
		last := &l.spans[len(l.spans)-1]
		switch {
		case last.centre == c:
		case last.from == from:
			last.centre = c
		default:
			l.spans = append(l.spans, centreSpan{from: from, centre: c})
		}
	}
}

// centreOn is the centre of day d.
func (l *awardLedger) centreOn(d int) int {
	c := l.spans[0].centre
	for _, s := range l.spans[1:] {
		if s.from > d {
			break
		}
		c = s.centre
	}
	return c
}

// split adds to out (indexed like l.centres) each tranche's cumulative
// cost comp through the end of day d, shared among the centres in
// proportion to the days of its service rendered in each through d. A
// tranche with no service day yet rendered (one vesting on its service
// start) belongs to the centre of its service start.
func (l *awardLedger) split(comp []float64, d int, out []float64) {
	if len(l.spans) == 1 {
		c := l.spans[0].centre
		for _, v := range comp {
			out[c] += v
		}
		return
	}
	for i, v := range comp {
		if v == 0 {
			continue
		}
		t := &l.tr[i]
		a, b := l.startN, min(d, l.endAt(t, d)-1) // to the end of requisite service (a market condition can set it past the vest date)
		if b < a {
			out[l.centreOn(a)] += v
			continue
		}
		n := float64(b - a + 1)
		for k, s := range l.spans {
			end := math.MaxInt
			if k+1 < len(l.spans) {
				end = l.spans[k+1].from - 1
			}
			if days := min(b, end) - max(a, s.from) + 1; days > 0 {
				out[s.centre] += v * float64(days) / n
			}
		}
	}
}

// costCenterOrder sorts cost centre names, Unassigned last.
func costCenterLess(a, b string) bool {
	if (a == grants.Unassigned) != (b == grants.Unassigned) {
		return b == grants.Unassigned
	}
	return a < b
}

// centreParts are one grant's figures split among the cost centres of its
// ledger: per centre, its part of the grant's Period, Cumulative and
// Unrecognized, of each forecast quarter, and of what follows them.
type centreParts struct {
	amounts  []CostCenterAmount
	forecast [][]float64 // [centre][quarter]
	after    []float64
}

// costCenters splits one grant's figures by cost centre from the
// snapshots at the day before the period start (s0), at the period end
// (s1) and once every tranche has vested (sInf, on day far), with the
// forecast quarters evaluated again when the grant moved. forecast and
// after are the grant's whole forecast amounts and what follows. The
// float rounding of the split is put in the centre of the period end, so
// that the parts add up to the grant's figures exactly.
//
// The amounts are the grant's own (GrantExpense.ByCostCenter), cut from
// the scratch's block; the forecast and after reuse the memory of those
// of old, parts the caller has added up already.
func (l *awardLedger) costCenters(pol Policy, ge GrantExpense, s0, s1, sInf snapshot, open, end, far time.Time, quarters []PeriodAmount, forecast []float64, after float64, old centreParts) centreParts {
	n := len(l.centres)
	p := centreParts{amounts: l.buffers().centres.Take(n), forecast: old.forecast[:0], after: old.after[:0]}
	for c := range n {
		var row []float64
		if c < len(old.forecast) {
			row = old.forecast[c][:0] // read before the append below writes over it
		}
		p.forecast = append(p.forecast, row)
		p.after = append(p.after, 0)
	}
	if len(l.spans) == 1 {
		p.amounts[0] = CostCenterAmount{CostCenter: l.centres[0], Period: ge.Period, Cumulative: ge.Cumulative, Unrecognized: ge.Unrecognized}
		p.forecast[0] = append(p.forecast[0], forecast...)
		p.after[0] = after
		return p
	}
	at := func(s snapshot, d time.Time) []float64 {
		out := make([]float64, n)
		l.split(s.comp, dayNum(d), out)
		return out
	}
	cOpen, cEnd, cFar := at(s0, open), at(s1, end), at(sInf, far)
	tiny := 1e-9 * math.Max(1, math.Abs(ge.Cost))
	clean := func(x float64) float64 {
		if math.Abs(x) < tiny {
			return 0
		}
		return x
	}
	cur := l.centreOn(dayNum(end))
	var sums [3]float64
	for c := range p.amounts {
		a := CostCenterAmount{CostCenter: l.centres[c], Period: clean(cEnd[c] - cOpen[c]), Cumulative: clean(cEnd[c]), Unrecognized: clean(cFar[c] - cEnd[c])}
		if c != cur {
			sums[0] += a.Period
			sums[1] += a.Cumulative
			sums[2] += a.Unrecognized
		}
		p.amounts[c] = a
		for range quarters {
			p.forecast[c] = append(p.forecast[c], 0)
		}
	}
	p.amounts[cur].Period, p.amounts[cur].Cumulative, p.amounts[cur].Unrecognized = ge.Period-sums[0], ge.Cumulative-sums[1], ge.Unrecognized-sums[2]
	prev := cEnd
	buf := make([]float64, len(l.tr))
	for k, q := range quarters {
		now := make([]float64, n)
		l.split(l.atInto(pol, q.End, end, buf).comp, dayNum(q.End), now)
		var others float64
		for c := range now {
			if c != cur {
				p.forecast[c][k] = clean(now[c] - prev[c])
				others += p.forecast[c][k]
			}
		}
		p.forecast[cur][k] = forecast[k] - others
		prev = now
	}
	var others float64
	for c := range prev {
		if c != cur {
			p.after[c] = clean(cFar[c] - prev[c])
			others += p.after[c]
		}
	}
	p.after[cur] = after - others
	return p
}

// centreBook adds the parts of every grant up by cost centre.
type centreBook struct {
	quarters   int
	byName     map[string]*CostCenterExpense
	unassigned []string // grants with a part in Unassigned
}

func newCentreBook(quarters int) *centreBook {
	return &centreBook{quarters: quarters, byName: map[string]*CostCenterExpense{}}
}

func (b *centreBook) add(grantID string, p centreParts) {
	for c, a := range p.amounts {
		e := b.byName[a.CostCenter]
		if e == nil {
			e = &CostCenterExpense{CostCenter: a.CostCenter, Forecast: make([]float64, b.quarters)}
			b.byName[a.CostCenter] = e
		}
		e.Grants++
		e.Period += a.Period
		e.Cumulative += a.Cumulative
		e.Unrecognized += a.Unrecognized
		for k, v := range p.forecast[c] {
			e.Forecast[k] += v
		}
		e.AfterForecast += p.after[c]
		if a.CostCenter == grants.Unassigned {
			b.unassigned = append(b.unassigned, grantID)
		}
	}
}

// list is the cost centres in name order, Unassigned last.
func (b *centreBook) list() []CostCenterExpense {
	out := make([]CostCenterExpense, 0, len(b.byName))
	for _, e := range b.byName {
		out = append(out, *e)
	}
	sort.Slice(out, func(i, j int) bool { return costCenterLess(out[i].CostCenter, out[j].CostCenter) })
	return out
}

// unassignedWarning names the grants with expense in no cost centre (up to
// ten of them), or is empty.
func (b *centreBook) unassignedWarning() string {
	n := len(b.unassigned)
	if n == 0 {
		return ""
	}
	if len(b.byName) == 1 {
		return fmt.Sprintf("no grant names a cost_center: all %d grants' expense is in the %s line; give each grant its cost centre on the Grants sheet to split the expense by function", n, grants.Unassigned)
	}
	ids := b.unassigned
	more := ""
	if n > 10 {
		ids, more = ids[:10], fmt.Sprintf(" and %d more", n-10)
	}
	return fmt.Sprintf("%d %s no cost_center for some or all of their service (%s%s): that expense is in the %s line", n, plural(n, "grant has", "grants have"), strings.Join(ids, ", "), more, grants.Unassigned)
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
