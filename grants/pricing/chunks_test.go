package pricing

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"strconv"
	"testing"
	"time"

	"grantworth/grants"
	"grantworth/valuation"
)

// keyBefore and jobKeyBefore are the valuation key and job key as they
// were first written, one string at a time: the keys of a close filed
// by an earlier build must be the ones this build computes, or a rerun
// would value every grant again.
func keyBefore(p *pricer, gv *GrantValue) string {
	in, g := &gv.Inputs, gv.Inputs.Grant
	vest := make([]float64, len(in.Terms))
	for k, t := range in.Terms {
		vest[k] = t.YearsToVest
	}
	b := []byte(string(g.Instrument) + "|" + string(g.Classification) + "|" + string(g.ExerciseStyle) + "|")
	if len(in.Terms) > 0 {
		b = append(b, jobKeyBefore(valuation.Job{Terms: in.Terms[0], VestYears: vest, Market: in.Market, Options: p.opts})...)
	} else {
		b = append(b, jobKeyBefore(valuation.Job{Market: in.Market, Options: p.opts})...)
	}
	for _, t := range in.Terms {
		b = strconv.AppendUint(b, math.Float64bits(t.YearsToExpiry), 16)
		b = append(b, ',')
	}
	if g.Instrument == grants.Warrant {
		if d := p.dilution(g); d != nil {
			b = fmt.Appendf(b, "|%x,%x,%t", math.Float64bits(d.SharesOutstanding), math.Float64bits(d.Warrants), d.PriceReflectsWarrants)
		}
	}
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:16])
}

func jobKeyBefore(j valuation.Job) string {
	b := make([]byte, 0, 256)
	f := func(x float64) { b = strconv.AppendUint(b, math.Float64bits(x), 16); b = append(b, ',') }
	t, m := j.Terms, j.Market
	f(t.Strike)
	f(t.YearsToExpiry)
	f(t.ExerciseMultiple)
	f(t.ExitRate)
	b = strconv.AppendBool(b, t.Rational)
	b = strconv.AppendBool(b, t.European)
	b = append(b, '|')
	for _, v := range j.VestYears {
		f(v)
	}
	b = append(b, '|')
	f(m.Spot)
	f(m.VolAnnual)
	f(m.DividendYield)
	if m.Curve != nil {
		ten, zs := m.Curve.Points()
		for i := range ten {
			f(ten[i])
			f(zs[i])
		}
	}
	b = append(b, '|')
	b = strconv.AppendInt(b, int64(j.Options.Steps), 10)
	b = append(b, fmt.Sprintf("%+v", j.Options.Convention)...)
	return string(b)
}

// The keys written into a reused buffer, with each curve's text kept, are
// the keys as first written: for every grant of the sample (options,
// warrants of both classifications, RSUs), under lattice options of
// either kind, with one keyBuf for all of them as a goroutine of Value
// uses it.
func TestKeysAsFirstWritten(t *testing.T) {
	v := valuedSample(t)
	s, _, err := grants.ReadFile("../../sample/tarnwick.xlsx")
	if err != nil {
		t.Fatal(err)
	}
	kinds := map[grants.Instrument]int{}
	for _, o := range []valuation.LatticeOptions{{}, {Steps: 400, Convention: valuation.Convention{StepsPerYear: true}}} {
		p := &pricer{s: s, opts: o}
		var kb keyBuf
		for i := range v.Grants {
			gv := &v.Grants[i]
			kinds[gv.Inputs.Grant.Instrument]++
			if got, want := kb.grantKey(p, gv), keyBefore(p, gv); got != want {
				t.Errorf("grant %s, options %+v: key %s, as first written %s", gv.Inputs.Grant.ID, o, got, want)
			}
			vest := make([]float64, len(gv.Inputs.Terms))
			for k, tm := range gv.Inputs.Terms {
				vest[k] = tm.YearsToVest
			}
			j := valuation.Job{Market: gv.Inputs.Market, VestYears: vest, Options: o}
			if len(gv.Inputs.Terms) > 0 {
				j.Terms = gv.Inputs.Terms[0]
			}
			if got, want := string(kb.appendJob(nil, &j)), jobKeyBefore(j); got != want {
				t.Errorf("grant %s: job key\n%s\nas first written\n%s", gv.Inputs.Grant.ID, got, want)
			}
		}
	}
	if kinds[grants.Option] == 0 || kinds[grants.Warrant] == 0 || kinds[grants.RSU] == 0 {
		t.Fatalf("the sample should hold every instrument: %v", kinds)
	}
}

// The filed tranche of each tranche is the one filed with its vest day,
// the last of several on one day, by merge where both are in order and by
// look-up where not.
func TestFiledTranche(t *testing.T) {
	day := func(s string) time.Time {
		d, err := time.Parse(time.DateOnly, s)
		if err != nil {
			t.Fatal(err)
		}
		return d
	}
	ts := func(days ...string) []grants.Tranche {
		var out []grants.Tranche
		for _, d := range days {
			out = append(out, grants.Tranche{VestDate: day(d)})
		}
		return out
	}
	filed := func(days ...string) []LockedTranche {
		var out []LockedTranche
		for _, d := range days {
			// A filed date read back at another hour is the same day.
			out = append(out, LockedTranche{VestDate: day(d).Add(13 * time.Hour)})
		}
		return out
	}
	for _, c := range []struct {
		name  string
		ts    []grants.Tranche
		filed []LockedTranche
		want  []int
	}{
		{"same", ts("2025-01-31", "2025-02-28", "2025-03-31"), filed("2025-01-31", "2025-02-28", "2025-03-31"), []int{0, 1, 2}},
		{"fewer filed", ts("2025-01-31", "2025-02-28", "2025-03-31"), filed("2025-02-28"), []int{-1, 0, -1}},
		{"more filed", ts("2025-02-28"), filed("2024-12-31", "2025-01-31", "2025-02-28", "2025-03-31"), []int{2}},
		{"filed out of order", ts("2025-01-31", "2025-02-28"), filed("2025-02-28", "2025-01-31"), []int{1, 0}},
		{"a day filed twice", ts("2025-01-31", "2025-02-28"), filed("2025-01-31", "2025-01-31", "2025-02-28"), []int{1, 2}},
		{"tranches out of order", ts("2025-02-28", "2025-01-31"), filed("2025-01-31", "2025-02-28"), []int{1, 0}},
		{"none filed", ts("2025-01-31"), nil, []int{-1}},
	} {
		got := filedTranche(c.ts, c.filed)
		if fmt.Sprint(got) != fmt.Sprint(c.want) {
			t.Errorf("%s: %v, want %v", c.name, got, c.want)
		}
	}
}
