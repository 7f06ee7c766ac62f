package accounting

import (
	"fmt"
	"grantworth/grants"
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
	"time"
)

// noteAwards is a hand-made ledger for the Q4 2030 note (period
// 2030-10-01 .. 2030-12-31, share price 25 at period end).
func noteAwards() []Award {
	g1 := testAward("G1", grants.Option, "2029-01-01", []string{"2030-01-01", "2031-01-01", "2032-01-01", "2033-01-01"}, []int64{1000, 1000, 1000, 1000}, []float64{4, 4, 4, 4})
	g1.Grant.Strike = 10
	g1.Grant.ExpiryDate = ymd("2039-01-01")
	g1.Events = []grants.Event{
		{GrantID: "G1", Date: ymd("2030-05-01"), Kind: grants.Exercised, Shares: 200}, // before the period
		{GrantID: "G1", Date: ymd("2030-11-15"), Kind: grants.Exercised, Shares: 500},
	}
	g2 := testAward("G2", grants.Option, "2029-06-01", []string{"2030-06-01", "2031-06-01"}, []int64{1000, 1000}, []float64{5, 5})
	g2.Grant.Strike = 12
	g2.Grant.ExpiryDate = ymd("2039-06-01")
	g2.Events = []grants.Event{
		{GrantID: "G2", Date: ymd("2030-12-01"), Kind: grants.Forfeited, Shares: 1000}, // termination: tranche 2
		{GrantID: "G2", Date: ymd("2030-12-20"), Kind: grants.Expired, Shares: 400},
	}
	g3 := testAward("G3", grants.Option, "2030-11-01", []string{"2031-11-01"}, []int64{1200}, []float64{8})
	g3.Grant.Strike = 20
	g3.Grant.ExpiryDate = ymd("2040-11-01")
	g3.Measured = &MeasuredAssumptions{Volatility: 0.5, RiskFreeRate: 0.04, DividendYield: 0, ExpectedTermYears: 6}
	g4 := testAward("G4", grants.Option, "2020-01-01", []string{"2021-01-01"}, []int64{300}, []float64{1.5})
	g4.Grant.Strike = 5
	g4.Grant.ExpiryDate = ymd("2030-10-31") // expires unexercised in the period

	r1 := testAward("R1", grants.RSU, "2030-01-01", []string{"2030-04-01", "2030-07-01", "2030-10-01", "2031-01-01"}, []int64{250, 250, 250, 250}, []float64{20, 21, 22, 23})
	r1.Grant.ExpiryDate = time.Time{} // RSUs do not expire
	r1.Events = []grants.Event{{GrantID: "R1", Date: ymd("2030-11-30"), Kind: grants.Forfeited, Shares: 250}}
	r2 := testAward("R2", grants.RSU, "2030-12-15", []string{"2031-12-15"}, []int64{100}, []float64{24})
	r2.Grant.ExpiryDate = time.Time{}

	w1 := testAward("W1", grants.Warrant, "2028-01-01", []string{"2028-01-01"}, []int64{10000}, []float64{6})
	w1.Grant.Strike = 15
	w1.Grant.ExpiryDate = ymd("2033-01-01")
	w2 := testAward("W2", grants.Warrant, "2030-02-01", []string{"2031-02-01"}, []int64{5000}, []float64{3})
	w2.Grant.Strike = 22
	w2.Grant.ExpiryDate = ymd("2035-02-01")
	w2.Grant.Classification = grants.Liability
	w2.Remeasurements = []Remeasurement{{Date: ymd("2030-12-31"), FairValue: []float64{4.5}}}
	return []Award{g1, g2, g3, g4, r1, r2, w1, w2}
}

func checkLine(t *testing.T, what string, got RollLine, shares int64, price, fv float64) {
	t.Helper()
	if got.Shares != shares {
		t.Errorf("%s: %d shares, want %d", what, got.Shares, shares)
	}
	nearly(t, what+" weighted exercise price", got.WeightedExercisePrice, price, 1e-9)
	nearly(t, what+" weighted fair value", got.WeightedFairValue, fv, 1e-9)
}

// Rule: the option roll-forward with weighted-average exercise prices, the
// period-end summary and the nonvested RSU roll-forward (ASC 718-10-50-2,
// from memory). Hand-worked from noteAwards.
func TestDisclosureHandWorked(t *testing.T) {
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1}
	d, err := Disclose(noteAwards(), pol, ymd("2030-10-01"), ymd("2030-12-31"), 25)
	if err != nil {
		t.Fatal(err)
	}
	o := d.Options
	// Start: G1 4,000 − 200 exercised in May at 10; G2 2,000 at 12; G4 300 at 5:
	// 6,100 at (38,000 + 24,000 + 1,500)/6,100.
	checkLine(t, "start", o.Start, 6100, 63500.0/6100, (3800*4+2000*5+300*1.5)/6100.0)
	checkLine(t, "granted", o.Granted, 1200, 20, 8)
	checkLine(t, "exercised", o.Exercised, 500, 10, 4)
	checkLine(t, "forfeited", o.Forfeited, 1000, 12, 5)
	// Expired: G2's 400 at 12 and G4's 300 at 5 lapsing on 2030-10-31: (4,800 + 1,500)/700 = 9.
	checkLine(t, "expired", o.Expired, 700, 9, (400*5+300*1.5)/700.0)
	// End: G1 3,300 at 10, G2 600 at 12, G3 1,200 at 20: 64,200/5,100.
	checkLine(t, "end", o.End, 5100, 64200.0/5100, (3300*4+600*5+1200*8)/5100.0)

	// Exercisable: G1 tranche 1's 300 left at 10, G2's 600 at 12.
	ex := d.OptionsAtEnd.Exercisable
	nearly(t, "exercisable shares", ex.Shares, 900, 0)
	nearly(t, "exercisable price", ex.WeightedExercisePrice, 10200.0/900, 1e-9)
	nearly(t, "exercisable intrinsic", ex.AggregateIntrinsicValue, 300*15+600*13, 1e-9)
	// Remaining contractual term from 2030-12-31: G1 2,923 days, G2 3,074, G3 3,593.
	nearly(t, "exercisable term", ex.WeightedRemainingTermYears, (300*2923.0+600*3074)/900/365, 1e-12)
	out := d.OptionsAtEnd.Outstanding
	nearly(t, "outstanding intrinsic", out.AggregateIntrinsicValue, 3300*15+600*13+1200*5, 1e-9)
	nearly(t, "outstanding term", out.WeightedRemainingTermYears, (3300*2923.0+600*3074+1200*3593)/5100/365, 1e-12)
	// Vested and expected to vest: 900 + G1's 1,000 a tranche × 0.9^(service
	// days to come / 365) after 2030-12-31 (0, 365 and 731 days) + G3's 1,200
	// × 0.9^(304/365) (2031-01-01 to its 2031-11-01 vest date).
	wantExp := 900 + 1000*(1+0.9+math.Pow(0.9, 731.0/365)) + 1200*math.Pow(0.9, 304.0/365)
	nearly(t, "vested and expected", d.OptionsAtEnd.VestedExpected.Shares, wantExp, 1e-9)

	g := d.OptionGrants
	if g.Grants != 1 || g.Shares != 1200 || g.Measured != 1 {
		t.Errorf("option grants %+v", g)
	}
	nearly(t, "grant fair value", g.WeightedFairValue, 8, 1e-12)
	nearly(t, "grant volatility", g.Volatility, 0.5, 1e-12)
	nearly(t, "grant expected term", g.ExpectedTermYears, 6, 1e-12)

	// RSUs nonvested: start tranches 3 and 4 of R1 (500 at 22.5), granted R2's
	// 100 at 24, vested tranche 3 (250 at 22), forfeited tranche 4 (250 at 23), end 100 at 24.
	r := d.RSUs
	checkLine(t, "rsu start", r.Start, 500, 0, 22.5)
	checkLine(t, "rsu granted", r.Granted, 100, 0, 24)
	checkLine(t, "rsu vested", r.Vested, 250, 0, 22)
	checkLine(t, "rsu forfeited", r.Forfeited, 250, 0, 23)
	checkLine(t, "rsu end", r.End, 100, 0, 24)

	// Warrants: 15,000 outstanding throughout; W2 at its remeasured 4.50.
	checkLine(t, "warrants end", d.Warrants.End, 15000, (10000*15+5000*22)/15000.0, (10000*6+5000*3)/15000.0)
	if len(d.WarrantsOutstanding) != 2 {
		t.Fatalf("warrants outstanding %+v", d.WarrantsOutstanding)
	}
	w1, w2 := d.WarrantsOutstanding[0], d.WarrantsOutstanding[1]
	if w1.Exercisable != 10000 || w2.Exercisable != 0 || w2.Classification != grants.Liability || w1.Classification != grants.Equity {
		t.Errorf("warrant rows %+v", d.WarrantsOutstanding)
	}
	nearly(t, "W1 intrinsic", w1.IntrinsicValue, 100000, 1e-9)
	nearly(t, "W2 fair value", w2.FairValue, 4.5, 0)
	nearly(t, "W1 term", w1.RemainingTermYears, 732.0/365, 1e-12)
}

// Identity (common practice): start + granted − exercised − forfeited −
// expired = end for every roll-forward (Check), and the end count equals the
// shares granted less every event to date, counted independently.
func TestRollForwardIdentity(t *testing.T) {
	rng := rand.New(rand.NewPCG(50, 2))
	for k := 0; k < 100; k++ {
		var awards []Award
		want := map[grants.Instrument]int64{}
		for j := 0; j < 8; j++ {
			a, _ := randomAward(rng, fmt.Sprintf("P%d-%d", k, j))
			a.Grant.Strike = 1 + 10*rng.Float64()
			awards = append(awards, a)
		}
		start := ymd("2027-01-01").AddDate(0, 0, rng.IntN(1500))
		end := start.AddDate(0, 0, rng.IntN(200))
		for _, a := range awards {
			if a.Grant.GrantDate.After(end) || a.Grant.Instrument == grants.RSU {
				continue
			}
			n := a.Grant.Shares
			for _, e := range a.Events {
				if !e.Date.After(end) {
					n -= e.Shares
				}
			}
			want[a.Grant.Instrument] += n
		}
		d, err := Disclose(awards, Policy{PreVestingForfeitureRate: 0.1}, start, end, 7)
		if err != nil {
			t.Fatalf("period %s..%s: %v", start, end, err)
		}
		if d.Options.End.Shares != want[grants.Option] || d.Warrants.End.Shares != want[grants.Warrant] {
			t.Errorf("period %s..%s: options end %d want %d, warrants end %d want %d", start, end, d.Options.End.Shares, want[grants.Option], d.Warrants.End.Shares, want[grants.Warrant])
		}
		if float64(d.OptionsAtEnd.Outstanding.Shares) != float64(want[grants.Option]) {
			t.Errorf("outstanding summary %v, roll-forward end %d", d.OptionsAtEnd.Outstanding.Shares, want[grants.Option])
		}
	}
	bad := RollForward{Instrument: grants.Option, Start: RollLine{Shares: 10}, Exercised: RollLine{Shares: 3}, End: RollLine{Shares: 8}}
	if bad.Check() == nil {
		t.Error("Check accepted 10 − 3 = 8")
	}
}

// Attribute builds each ledger once for both reports; it must give exactly
// what Expense and Disclose give on their own.
func TestAttributeEqualsExpenseAndDisclose(t *testing.T) {
	pol := Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.1}
	start, end := ymd("2030-10-01"), ymd("2030-12-31")
	rep, disc, err := Attribute(noteAwards(), pol, start, end, 25)
	if err != nil {
		t.Fatal(err)
	}
	wantRep, err := Expense(noteAwards(), pol, start, end)
	if err != nil {
		t.Fatal(err)
	}
	wantDisc, err := Disclose(noteAwards(), pol, start, end, 25)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(rep, wantRep) {
		t.Errorf("Attribute's expense report differs from Expense's")
	}
	if !reflect.DeepEqual(disc, wantDisc) {
		t.Errorf("Attribute's disclosures differ from Disclose's")
	}
}

// Rule: the figures ASC 718-10-50-2 (from memory) and IFRS 2.45(c)-(d)
// ask for beyond the roll-forwards, worked by hand for Q4 2030
// (2030-10-01 .. 2030-12-31):
//
//   - Option A, 2,000 at strike 10 granted 2029-11-01, tranches of 1,000
//     vesting 2030-11-01 (fair value 4) and 2031-11-01 (5), expiring
//     2039-11-01; 300 exercised on 2030-12-15 when the share was worth 21,
//     100 on 2030-12-20 with no share price known.
//   - Option B, 1,000 at 14, vested 2030-06-01, expiring 2036-12-31.
//   - Option C, 500 at 16 vesting 2031-06-30, expiring 2040-06-30.
//   - Option D, 400 at 30, vested 2029-12-31, expiring 2035-12-31.
//
// Exercised 400: intrinsic value 300 × (21 − 10) = 3,300 (the unpriced 100
// left out and counted apart), cash received 400 × 10 = 4,000,
// weighted-average share price at exercise 21 (IFRS 2.45(c)). Vested in
// the quarter: A's first tranche, 1,000 × 4 = 4,000 of fair value. Ranges
// of exercise prices (IFRS 2.45(d)), each up to 1.5 times its lowest:
// 10–14 (A's 1,600 and B's 1,000), 16 (C's 500), 30 (D's 400). In the first,
// the weighted exercise price is (16,000 + 14,000)/2,600, the exercisable
// 600 + 1,000 at (6,000 + 14,000)/1,600 = 12.50, and the remaining life
// weighs A's 3,227 days (2030-12-31 to 2039-11-01) and B's 2,192.
func TestDisclosureActivityAndRanges(t *testing.T) {
	mk := func(id, grant string, vests []string, shares []int64, fvs []float64, strike float64, expiry string) Award {
		a := testAward(id, grants.Option, grant, vests, shares, fvs)
		a.Grant.Strike, a.Grant.ExpiryDate = strike, ymd(expiry)
		return a
	}
	a := mk("A", "2029-11-01", []string{"2030-11-01", "2031-11-01"}, []int64{1000, 1000}, []float64{4, 5}, 10, "2039-11-01")
	a.Events = []grants.Event{
		{GrantID: "A", Date: ymd("2030-12-15"), Kind: grants.Exercised, Shares: 300},
		{GrantID: "A", Date: ymd("2030-12-20"), Kind: grants.Exercised, Shares: 100},
	}
	a.EventPrices = []float64{21, 0}
	b := mk("B", "2029-06-01", []string{"2030-06-01"}, []int64{1000}, []float64{6}, 14, "2036-12-31")
	c := mk("C", "2030-06-30", []string{"2031-06-30"}, []int64{500}, []float64{7}, 16, "2040-06-30")
	d := mk("D", "2028-12-31", []string{"2029-12-31"}, []int64{400}, []float64{2}, 30, "2035-12-31")
	disc, err := Disclose([]Award{a, b, c, d}, Policy{Forfeitures: grants.AsOccur}, ymd("2030-10-01"), ymd("2030-12-31"), 25)
	if err != nil {
		t.Fatal(err)
	}
	act := disc.OptionActivity
	if act.Exercised != 400 || act.Unpriced != 100 || act.Vested != 1000 {
		t.Errorf("activity %+v", act)
	}
	nearly(t, "intrinsic value exercised", act.IntrinsicValueExercised, 3300, tolMoney)
	nearly(t, "cash received", act.CashReceived, 4000, tolMoney)
	nearly(t, "share price at exercise", act.WeightedSharePriceAtExercise, 21, 1e-12)
	nearly(t, "fair value vested", act.FairValueVested, 4000, tolMoney)

	rs := disc.OptionRanges
	if len(rs) != 3 {
		t.Fatalf("ranges %+v", rs)
	}
	r := rs[0]
	if r.Low != 10 || r.High != 14 || r.Outstanding != 2600 || r.Exercisable != 1600 {
		t.Errorf("first range %+v", r)
	}
	nearly(t, "range price", r.WeightedExercisePrice, 30000.0/2600, 1e-12)
	nearly(t, "range exercisable price", r.ExercisableWeightedPrice, 12.5, 1e-12)
	nearly(t, "range life", r.WeightedRemainingTermYears, (1600*3227.0+1000*2192)/2600/365, 1e-12)
	if rs[1].Low != 16 || rs[1].High != 16 || rs[1].Outstanding != 500 || rs[1].Exercisable != 0 || rs[2].Low != 30 || rs[2].Outstanding != 400 {
		t.Errorf("ranges %+v", rs)
	}
	var n int64
	for _, r := range rs {
		n += r.Outstanding
	}
	if float64(n) != disc.OptionsAtEnd.Outstanding.Shares {
		t.Errorf("ranges hold %d, outstanding %v", n, disc.OptionsAtEnd.Outstanding.Shares)
	}
	// RSUs: the nonvested roll-forward's vested line is the activity's.
	nd, err := Disclose(noteAwards(), Policy{}, ymd("2030-10-01"), ymd("2030-12-31"), 25)
	if err != nil {
		t.Fatal(err)
	}
	if nd.RSUActivity.Vested != nd.RSUs.Vested.Shares || math.Abs(nd.RSUActivity.FairValueVested-float64(nd.RSUs.Vested.Shares)*nd.RSUs.Vested.WeightedFairValue) > tolMoney {
		t.Errorf("RSU activity %+v, roll-forward vested %+v", nd.RSUActivity, nd.RSUs.Vested)
	}
}
