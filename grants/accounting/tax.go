package accounting

import (
	"fmt"
	"math"
	"sort"
	"time"

	"grantworth/grants"
)

// TaxInputs are what the tax effect needs beyond the awards and the
// policy (whose framework says which rule applies): the statutory rate and
// the share price in force on a day.
type TaxInputs struct {
	Rate func(d time.Time) float64
	// Price is the share's fair value on day d and where it came from, or
	// false when none is known.
	Price func(d time.Time) (float64, string, bool)
}

// TaxInputsOf are the tax inputs of schedule s: its Assumptions tax_rate
// in force on each day (dated rows give enacted changes) and its Share
// Prices.
func TaxInputsOf(s *grants.Schedule) TaxInputs {
	return TaxInputs{
		Rate: func(d time.Time) float64 { return s.Assumptions.At(d).TaxRate },
		Price: func(d time.Time) (float64, string, bool) {
			src, ok := s.SharePriceOn(d)
			return src.Value, src.Text, ok
		},
	}
}

// TaxReport is the income tax effect of the period's share-based
// compensation (see the package notes on income taxes).
type TaxReport struct {
	Framework             grants.Framework
	RateOpen, RateEnd     float64 // in force at the day before the period start and at the period end
	PriceOpen, PriceEnd   float64 // IFRS 2: the share prices the estimated deductions use
	Grants                []GrantTax
	AssetOpen, AssetEnd   float64 // deferred tax asset
	EquityOpen, EquityEnd float64 // IFRS 2: the part of the asset recognized in equity (IAS 12.68C)
	// Benefit is the period's deferred tax benefit in profit or loss (a
	// negative Benefit is an expense); ToEquity the period's change in the
	// part in equity. Benefit + ToEquity = AssetEnd − AssetOpen.
	Benefit, ToEquity float64
	// Settlements are the period's exercises and vestings of deductible
	// awards, and their lapses, with the deduction and the excess tax
	// benefit or shortfall each gives (ASC 718-740-35-2).
	Settlements []Settlement
	// NotDeductible counts the awards that give no deduction.
	NotDeductible int
	Warnings      []string
}

// GrantTax is one deductible award's deferred tax.
type GrantTax struct {
	GrantID string
	// Basis is the deductible temporary difference: under ASC 718 the
	// compensation cost recognized on the award's outstanding shares (for
	// a liability-classified warrant, the liability); under IFRS 2 the
	// deduction the share price would give, for the service rendered.
	BasisOpen, BasisEnd float64
	// CostEnd is the cumulative compensation cost of the outstanding
	// shares at the period end (the ASC 718 basis; under IFRS 2 the limit
	// of what goes to profit or loss).
	CostEnd             float64
	AssetOpen, AssetEnd float64
	EquityOpen          float64
	EquityEnd           float64
}

// Settlement is a deduction taken (an exercise, an RSU tranche vesting) or
// lost (options lapsing or cancelled) in the period, for one grant and day.
type Settlement struct {
	GrantID     string
	Date        time.Time
	Kind        string // exercised, vested, expired, forfeited (vested shares), cancelled
	Shares      int64
	Computed    bool    // false when no share price is known on Date
	SharePrice  float64 // on Date, for exercises and vestings
	PriceSource string
	Deduction   float64 // (price − strike) × shares; price × shares for RSUs; 0 when lapsed
	Cost        float64 // compensation cost recognized on those shares
	Rate        float64
	// Excess is Rate × (Deduction − Cost): an excess tax benefit when
	// positive, a shortfall when negative; ToEquity is, under IFRS 2, the
	// part of a positive one that goes to equity (IAS 12.68C), all of it.
	Excess   float64
	ToEquity float64
	Note     string // when not Computed: why
}

// taxed reports whether the period has a TaxReport: a tax rate in force
// on the day before its start or on its end.
func (p *period) taxed(in TaxInputs) bool {
	return in.Rate(shiftDays(p.start, -1)) != 0 || in.Rate(p.end) != 0
}

// tax is the period's TaxReport, or nil when the rate is zero on both
// dates.
func (p *period) tax(in TaxInputs, priceEnd float64) *TaxReport {
	open := shiftDays(p.start, -1)
	t := &TaxReport{Framework: p.pol.Framework, RateOpen: in.Rate(open), RateEnd: in.Rate(p.end), PriceEnd: priceEnd}
	if !p.taxed(in) {
		return nil
	}
	ifrs := p.pol.Framework == grants.IFRS2
	if ifrs {
		px, _, ok := in.Price(open)
		t.PriceOpen = px
		if !ok {
			t.PriceOpen = priceEnd
			for _, l := range p.ledgers {
				if !l.financing && l.in.Grant.Deductible() && dayNum(l.in.Grant.GrantDate) <= dayNum(open) {
					t.Warnings = append(t.Warnings, fmt.Sprintf("no share price is known on %s, the day before the period start: the opening deferred tax asset (IAS 12.68B) uses the period-end price %g", open.Format(time.DateOnly), priceEnd))
					break
				}
			}
		}
	}
	openN, endN := dayNum(open), dayNum(p.end)
	for _, l := range p.ledgers {
		g := l.in.Grant
		if l.financing {
			continue // not compensation: no compensation deduction
		}
		if !g.Deductible() {
			t.NotDeductible++
			continue
		}
		gt := GrantTax{GrantID: g.ID}
		var costOpen float64
		gt.BasisOpen, costOpen = l.taxBasis(p.pol, ifrs, openN, t.PriceOpen)
		gt.BasisEnd, gt.CostEnd = l.taxBasis(p.pol, ifrs, endN, priceEnd)
		gt.AssetOpen, gt.AssetEnd = t.RateOpen*gt.BasisOpen, t.RateEnd*gt.BasisEnd
		if ifrs {
			gt.EquityOpen = t.RateOpen * math.Max(0, gt.BasisOpen-costOpen)
			gt.EquityEnd = t.RateEnd * math.Max(0, gt.BasisEnd-gt.CostEnd)
		}
		t.Grants = append(t.Grants, gt)
		t.AssetOpen += gt.AssetOpen
		t.AssetEnd += gt.AssetEnd
		t.EquityOpen += gt.EquityOpen
		t.EquityEnd += gt.EquityEnd
		t.Settlements = append(t.Settlements, l.settlements(in, ifrs, dayNum(p.start), endN)...)
	}
	t.ToEquity = t.EquityEnd - t.EquityOpen
	t.Benefit = t.AssetEnd - t.AssetOpen - t.ToEquity
	return t
}

// taxBasis is the award's deductible temporary difference through the end
// of day d (IFRS 2: at share price price) and the compensation cost of its
// outstanding shares. An RSU's shares are delivered, and deducted, when
// they vest; an option's when exercised; lapsed and cancelled shares are
// never deducted. Under IFRS 2 the estimated deduction of each tranche,
// its intrinsic value on the outstanding shares, is attributed like its
// cost: for the service rendered, at the share expected to vest.
func (l *awardLedger) taxBasis(pol Policy, ifrs bool, d int, price float64) (basis, cost float64) {
	n := len(l.tr)
	comp := make([]float64, n)
	s := l.atView(pol, view{d: d, known: d, rate: l.rate}, comp)
	g := l.in.Grant
	value := make([]float64, n)
	counts := make([]trancheCounts, n)
	for i := range l.tr {
		t := &l.tr[i]
		c := t.countsN(d)
		counts[i] = c
		delivered := g.Instrument == grants.RSU && t.vestedN(d)
		if !delivered {
			// The cost of the shares still outstanding: the cumulative cost
			// less that of shares cancelled (recognized at once, never
			// deducted) and of vested shares exercised or lapsed.
			cost += comp[i] - t.FairValue*float64(c.accelerated+c.live(t.Tranche.Shares)-c.open)
			iv := price
			if g.Instrument != grants.RSU {
				iv = math.Max(0, price-g.Strike)
			}
			value[i] = iv * float64(c.open)
		}
	}
	if l.liability {
		cost = s.liability
	}
	if !ifrs {
		return cost, cost
	}
	est := make([]float64, n)
	l.attribute(pol, value, d, d, l.serviceEndN(counts, d), l.rate, est)
	for _, v := range est {
		basis += v
	}
	return basis, cost
}

// settlements are the award's deductions taken or lost from day from to
// day to, by day and kind.
func (l *awardLedger) settlements(in TaxInputs, ifrs bool, from, to int) []Settlement {
	g := l.in.Grant
	// Exercises with their own share price are kept apart, by price.
	type key struct {
		day   int
		kind  string
		price float64
	}
	acc := map[key]*Settlement{}
	var keys []key
	add := func(k key, date time.Time, shares int64, cost float64) {
		st := acc[k]
		if st == nil {
			st = &Settlement{GrantID: g.ID, Date: date, Kind: k.kind}
			if k.price > 0 {
				st.SharePrice, st.PriceSource, st.Computed = k.price, "its Events row", true
			}
			acc[k] = st
			keys = append(keys, k)
		}
		st.Shares += shares
		st.Cost += cost
	}
	for i := range l.tr {
		t := &l.tr[i]
		for _, m := range t.moves() {
			if m.dayN < from || m.dayN > to {
				continue
			}
			switch {
			case m.kind == grants.Exercised:
				k := key{day: m.dayN, kind: string(m.kind)}
				if m.rowPrice {
					k.price = m.price
				}
				add(k, m.date, m.shares, t.FairValue*float64(m.shares))
			case m.vested || m.kind == grants.Cancelled: // lapsed, or cancelled: cost recognized, no deduction
				add(key{day: m.dayN, kind: string(m.kind)}, m.date, m.shares, t.FairValue*float64(m.shares))
			}
		}
		if g.Instrument == grants.RSU && int(t.vestN) >= from && int(t.vestN) <= to {
			if n := t.countsN(int(t.vestN)).open; n > 0 {
				add(key{day: int(t.vestN), kind: "vested"}, t.vestDate(), n, t.FairValue*float64(n))
			}
		}
	}
	sort.SliceStable(keys, func(a, b int) bool { return keys[a].day < keys[b].day })
	out := make([]Settlement, 0, len(keys))
	for _, k := range keys {
		st := *acc[k]
		st.Rate = in.Rate(st.Date)
		switch st.Kind {
		case string(grants.Exercised), "vested":
			if !st.Computed {
				px, src, ok := in.Price(st.Date)
				if !ok {
					st.Note = fmt.Sprintf("no share price is known on %s: give the Events row a share_price, or a Share Prices row dated on or before it", st.Date.Format(time.DateOnly))
					out = append(out, st)
					continue
				}
				st.SharePrice, st.PriceSource, st.Computed = px, src, true
			}
			iv := st.SharePrice
			if g.Instrument != grants.RSU {
				iv = math.Max(0, st.SharePrice-g.Strike)
			}
			st.Deduction = iv * float64(st.Shares)
		default:
			st.Computed = true
		}
		st.Excess = st.Rate * (st.Deduction - st.Cost)
		if ifrs && st.Excess > 0 {
			st.ToEquity = st.Excess
		}
		out = append(out, st)
	}
	return out
}
