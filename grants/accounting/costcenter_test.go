package accounting

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"grantworth/grants"
)

func centre(t *testing.T, r *ExpenseReport, name string) CostCenterExpense {
	t.Helper()
	for _, c := range r.ByCostCenter {
		if c.CostCenter == name {
			return c
		}
	}
	t.Fatalf("no cost centre %q in %+v", name, r.ByCostCenter)
	return CostCenterExpense{}
}

// Rule: the expense of each day of service lands in the cost centre the
// service was rendered in, and a later change of estimate or reversal is
// shared in proportion to those days (common practice for functional
// expense; ASC 718-10-35-2 attributes the cost over the service period,
// from memory). One tranche of 1,000 shares at 10, granted 2029-01-01,
// vesting 2030-01-01: 365 days. The holder moves from R&D to S&M on
// 2029-04-01, after 90 days (January to March) in R&D.
func TestCostCenterTransferByHand(t *testing.T) {
	base := testAward("T1", grants.Option, "2029-01-01", []string{"2030-01-01"}, []int64{1000}, []float64{10})
	base.Grant.CostCenter = "R&D"
	base.Transfers = []grants.Transfer{{GrantID: "T1", Date: ymd("2029-04-01"), CostCenter: "S&M"}}
	asOccur := Policy{Attribution: grants.Graded, Forfeitures: grants.AsOccur}

	// Q2 2029 (91 days) is all S&M: 10,000 × 91/365 = 2,493.15. At 30 June
	// R&D holds its 90 days, 2,465.75, and S&M 91 days; the 184 days
	// left, 5,041.10, and the forecast's Q3 (92 days) will be S&M's.
	r := mustExpense(t, []Award{base}, asOccur, "2029-04-01", "2029-06-30")
	rd, sm := centre(t, r, "R&D"), centre(t, r, "S&M")
	nearly(t, "R&D period", rd.Period, 0, tolMoney)
	nearly(t, "S&M period", sm.Period, 10000.0*91/365, tolMoney)
	nearly(t, "R&D cumulative", rd.Cumulative, 10000.0*90/365, tolMoney)
	nearly(t, "S&M cumulative", sm.Cumulative, 10000.0*91/365, tolMoney)
	nearly(t, "R&D unrecognized", rd.Unrecognized, 0, tolMoney)
	nearly(t, "S&M unrecognized", sm.Unrecognized, 10000.0*184/365, tolMoney)
	nearly(t, "S&M forecast Q3", sm.Forecast[0], 10000.0*92/365, tolMoney)
	nearly(t, "R&D forecast Q3", rd.Forecast[0], 0, tolMoney)
	if g := r.Grants[0]; g.CostCenter != "S&M" || len(g.ByCostCenter) != 2 {
		t.Errorf("grant at period end in %q, parts %+v", g.CostCenter, g.ByCostCenter)
	}

	// Q1 2029 is all R&D: 90/365 of 10,000.
	r = mustExpense(t, []Award{base}, asOccur, "2029-01-01", "2029-03-31")
	if len(r.ByCostCenter) != 1 || r.ByCostCenter[0].CostCenter != "R&D" {
		t.Errorf("Q1: centres %+v, want R&D only (the transfer is after the period end)", r.ByCostCenter)
	}
	nearly(t, "Q1 R&D", r.ByCostCenter[0].Period, 10000.0*90/365, tolMoney)

	// A change of estimate after the move is shared by the service days:
	// with 20% a year expected to leave, the expected share at 31 March is
	// 0.8^(275/365) (275 days of service to come) and at 30 June
	// 0.8^(184/365); R&D's 90 days take 10,000 × 90/365 × their difference.
	est := Policy{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.2}
	r = mustExpense(t, []Award{base}, est, "2029-04-01", "2029-06-30")
	rd, sm = centre(t, r, "R&D"), centre(t, r, "S&M")
	qMar, qJun := math.Pow(0.8, 275.0/365), math.Pow(0.8, 184.0/365)
	nearly(t, "R&D true-up", rd.Period, 10000.0*90/365*(qJun-qMar), tolMoney)
	nearly(t, "S&M period", sm.Period, 10000.0*91/365*qJun, tolMoney)

	// A termination after the move reverses the cost where it was booked:
	// on 15 May R&D gives back its 90 days; S&M, which accrued from 1 April,
	// ends the quarter at nothing.
	gone := base
	gone.Events = []grants.Event{{GrantID: "T1", Date: ymd("2029-05-15"), Kind: grants.Forfeited, Shares: 1000}}
	r = mustExpense(t, []Award{gone}, asOccur, "2029-04-01", "2029-06-30")
	nearly(t, "R&D reversal", centre(t, r, "R&D").Period, -10000.0*90/365, tolMoney)
	nearly(t, "S&M after reversal", centre(t, r, "S&M").Period, 0, tolMoney)
	nearly(t, "total", r.Period, -10000.0*90/365, tolMoney)
}

// A grant with no cost centre is in the unassigned line, with a warning
// that names it; centres come in name order, unassigned last.
func TestCostCenterUnassigned(t *testing.T) {
	a := testAward("U1", grants.RSU, "2029-01-01", []string{"2030-01-01"}, []int64{100}, []float64{5})
	b := testAward("U2", grants.RSU, "2029-01-01", []string{"2030-01-01"}, []int64{100}, []float64{5})
	b.Grant.CostCenter = "G&A"
	c := testAward("U3", grants.RSU, "2029-01-01", []string{"2030-01-01"}, []int64{100}, []float64{5})
	c.Grant.CostCenter = "COGS"
	r := mustExpense(t, []Award{a, b, c}, Policy{Forfeitures: grants.AsOccur}, "2029-01-01", "2029-03-31")
	var names []string
	for _, cc := range r.ByCostCenter {
		names = append(names, cc.CostCenter)
	}
	if strings.Join(names, ",") != "COGS,G&A,"+grants.Unassigned {
		t.Errorf("centres %v", names)
	}
	if w := strings.Join(r.Warnings, "\n"); !strings.Contains(w, "1 grant has no cost_center") || !strings.Contains(w, "U1") {
		t.Errorf("warnings %q", w)
	}
}

// Property: for random awards, events and transfers, the cost centres add
// up to the totals (period, cumulative, unrecognized, every forecast
// quarter and what follows), and each grant's parts to the grant's.
func TestCostCentersAddUp(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 4100))
	names := []string{"R&D", "S&M", "G&A", "COGS", ""}
	var awards []Award
	for k := 0; k < 60; k++ {
		a, _ := randomAward(rng, fmt.Sprintf("C%d", k))
		a.Grant.CostCenter = names[rng.IntN(len(names))]
		for n := rng.IntN(4); n > 0; n-- {
			a.Transfers = append(a.Transfers, grants.Transfer{GrantID: a.Grant.ID, Date: a.Grant.GrantDate.AddDate(0, 0, rng.IntN(1500)-100), CostCenter: names[rng.IntN(len(names)-1)]})
		}
		awards = append(awards, a)
	}
	for _, pol := range []Policy{
		{Attribution: grants.Graded, Forfeitures: grants.Estimate, PreVestingForfeitureRate: 0.15},
		{Attribution: grants.StraightLine, Forfeitures: grants.AsOccur},
	} {
		for _, end := range []string{"2027-06-30", "2028-03-31", "2029-12-31", "2032-09-30"} {
			start := pol.Calendar.Quarter(ymd(end)).Start.Format("2006-01-02")
			r := mustExpense(t, awards, pol, start, end)
			var per, cum, unrec, after float64
			fc := make([]float64, len(r.Forecast))
			for _, c := range r.ByCostCenter {
				per += c.Period
				cum += c.Cumulative
				unrec += c.Unrecognized
				after += c.AfterForecast
				for k, v := range c.Forecast {
					fc[k] += v
				}
			}
			tol := 1e-9 * math.Max(1, r.Cumulative+r.Unrecognized)
			what := fmt.Sprintf("%s/%s to %s", pol.Attribution, pol.Forfeitures, end)
			nearly(t, what+" period", per, r.Period, tol)
			nearly(t, what+" cumulative", cum, r.Cumulative, tol)
			nearly(t, what+" unrecognized", unrec, r.Unrecognized, tol)
			nearly(t, what+" after forecast", after, r.AfterForecast, tol)
			for k := range fc {
				nearly(t, fmt.Sprintf("%s forecast %d", what, k), fc[k], r.Forecast[k].Amount, tol)
			}
			for _, g := range r.Grants {
				var p, c, u float64
				for _, a := range g.ByCostCenter {
					p += a.Period
					c += a.Cumulative
					u += a.Unrecognized
				}
				if tol := 1e-12 * math.Max(1, g.Cost); math.Abs(p-g.Period) > tol || math.Abs(c-g.Cumulative) > tol || math.Abs(u-g.Unrecognized) > tol {
					t.Errorf("%s grant %s: parts %+v add to %v %v %v, grant %v %v %v", what, g.GrantID, g.ByCostCenter, p, c, u, g.Period, g.Cumulative, g.Unrecognized)
				}
			}
		}
	}
}
