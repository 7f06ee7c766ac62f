package grants_test

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"grantworth/grants"
	"grantworth/grants/grantstest"
)

// writeConditioned writes grantstest.Conditioned as a CSV folder (or, with
// xlsx, a workbook) in a new directory, its price files under prices/, and
// returns the path to read.
func writeConditioned(t *testing.T, xlsx bool) string {
	t.Helper()
	s := grantstest.Conditioned()
	dir := t.TempDir()
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	must(os.MkdirAll(filepath.Join(dir, "prices"), 0o755))
	write := func(h *grants.PriceHistory) string {
		var b bytes.Buffer
		b.WriteString("date,close\n")
		for _, p := range h.Points {
			fmt.Fprintf(&b, "%s,%.2f\n", p.Date.Format("2006-01-02"), p.Price)
		}
		must(os.WriteFile(filepath.Join(dir, "prices", h.File), b.Bytes(), 0o644))
		return "prices/" + h.File
	}
	s.Conditions[3].OwnPrices = write(s.Conditions[3].Own)
	for i := range s.Peers {
		s.Peers[i].File = write(s.Peers[i].History)
	}
	if xlsx {
		var b bytes.Buffer
		must(grants.WriteXLSX(&b, s))
		path := filepath.Join(dir, "schedule.xlsx")
		must(os.WriteFile(path, b.Bytes(), 0o644))
		return path
	}
	must(grants.WriteCSVDir(dir, s))
	return dir
}

// The condition sheets round-trip through the template writer and the
// reader, as a workbook and as a CSV folder, with the price files read from
// beside the schedule; and the relative TSR grant's inputs come from them.
func TestConditionsRoundTrip(t *testing.T) {
	want := grantstest.Conditioned()
	for _, xlsx := range []bool{false, true} {
		path := writeConditioned(t, xlsx)
		s, rep, err := grants.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		if !rep.OK() {
			t.Fatalf("xlsx %v: %v", xlsx, rep.Errors)
		}
		if len(s.Conditions) != 4 || len(s.Assessments) != 3 || len(s.PayoutCurve) != 3 || len(s.Peers) != 3 {
			t.Fatalf("xlsx %v: read %d conditions, %d assessments, %d payout points, %d peers", xlsx, len(s.Conditions), len(s.Assessments), len(s.PayoutCurve), len(s.Peers))
		}
		for i, k := range s.Conditions {
			w := want.Conditions[i]
			if k.ID != w.ID || k.Kind != w.Kind || k.HurdlePrice != w.HurdlePrice || k.HurdleDays != w.HurdleDays || !k.HurdleDeadline.Equal(w.HurdleDeadline) ||
				!k.PeriodEnd.Equal(w.PeriodEnd) || k.MaximumPayout != w.MaximumPayout || k.ThresholdPayout != w.ThresholdPayout || k.Monitoring != w.Monitoring {
				t.Errorf("xlsx %v: condition %d read %+v, wrote %+v", xlsx, i, k, w)
			}
		}
		if a := s.Assessments[2]; !a.Probable || a.ExpectedPayout == nil || *a.ExpectedPayout != 1.5 || a.Note != "two new customers" {
			t.Errorf("xlsx %v: assessment %+v", xlsx, a)
		}
		if k := s.Condition("RTSR"); k.Own == nil || len(k.Own.Points) != len(want.Conditions[3].Own.Points) || *k.NegativeCap != 1 {
			t.Errorf("xlsx %v: own prices not read: %+v", xlsx, k)
		}
		for _, p := range s.Peers {
			if p.History == nil || len(p.History.Points) < 500 {
				t.Errorf("xlsx %v: peer %s prices not read", xlsx, p.Name)
			}
		}
		for _, g := range s.Grants {
			if g.ID == "T-001" {
				in, err := s.Inputs(g)
				if err != nil {
					t.Fatal(err)
				}
				tsr := in.Condition.TSR
				// 2026-03-31 is inside the period 2026-01-01 to
				// 2028-12-31: the look-back is the 2.75 years left.
				if tsr == nil || len(tsr.Award.Peers) != 3 || tsr.LookbackYears != 1006.0/365 || tsr.Company.StartDate.Format("2006-01-02") != "2026-01-01" ||
					tsr.Award.YearsToStart != 0 || tsr.Award.ToDate != tsr.Company.NowPrice/tsr.Company.StartPrice || in.Volatility.Value != tsr.Company.Vol.Annual {
					t.Errorf("xlsx %v: TSR inputs %+v", xlsx, tsr)
				}
			}
		}
	}
}

// Every problem of the condition sheets names its sheet, cell and column.
func TestConditionProblems(t *testing.T) {
	for _, c := range []struct {
		name      string
		file      string
		old, new  string
		want      string
		isWarning bool
	}{
		{"unknown condition", "grants.csv", ",RTSR\n", ",NOPE\n", `Grants!X9 (condition): "NOPE" is not a condition_id of the Conditions sheet`, false},
		{"hurdle without price", "conditions.csv", "HURDLE7,price-hurdle,,,,,,7,", "HURDLE7,price-hurdle,,,,,,,", "Conditions!H3 (hurdle_price): is required for a price-hurdle condition (HURDLE7)", false},
		{"average watched continuously", "conditions.csv", "9,20,daily", "9,20,continuous", `Conditions!J4 (hurdle_monitoring): "continuous" an average of 20 closing prices is watched daily`, false},
		{"market condition assessed", "assessments.csv", "REV27,2025-07-01", "RTSR,2025-07-01", `Assessments!A3 (condition_id): "RTSR" is a relative-tsr condition: a market condition is not assessed`, false},
		{"payout for a performance condition", "payout_curve.csv", "RTSR,0.25", "REV27,0.25", `Payout Curve!A2 (condition_id): "REV27" is a performance condition, not relative-tsr`, false},
		{"TSR on an option", "grants.csv", ",HURDLE7\n", ",RTSR\n", `Grants!X7 (condition): "RTSR" is a relative TSR condition, which applies to units (instrument rsu), not option H-001`, false},
		{"missing peer file", "peers.csv", "prices/peer-b.csv", "prices/peer-x.csv", `Peers!C3 (file): "prices/peer-x.csv" cannot be read: no such file or directory`, false},
		{"no peers", "peers.csv", "RTSR,Peer", "OTHER,Peer", "Conditions!A5 (condition_id): \"RTSR\" has no Peers rows", false},
		{"TSR end before start", "conditions.csv", "2026-01-01,2028-12-31", "2026-01-01,2025-12-31", `Conditions!N5 (performance_end): "2025-12-31" must be after performance_start 2026-01-01`, false},
		{"look-back beyond the prices", "conditions.csv", "2026-01-01,2028-12-31", "2026-01-01,2030-12-31", `Conditions!O5 (own_prices): "prices/own.csv" covers 2.2 of the 4.8 years of look-back`, true},
		{"payout above maximum", "assessments.csv", "yes,1.5,", "yes,2.5,", `Assessments!D4 (expected_payout): "2.5" lies outside the threshold 50% to maximum 200% of condition REV27`, true},
		{"hurdle met after the valuation date", "conditions.csv", "2030-01-15,,", "2030-01-15,2026-10-01,", `Conditions!L3 (hurdle_met_date): "2026-10-01" is after the valuation date 2026-09-30`, false},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir := writeConditioned(t, false)
			p := filepath.Join(dir, c.file)
			b, err := os.ReadFile(p)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Contains(b, []byte(c.old)) {
				t.Fatalf("%s lacks %q:\n%s", c.file, c.old, b)
			}
			if err := os.WriteFile(p, bytes.ReplaceAll(b, []byte(c.old), []byte(c.new)), 0o644); err != nil {
				t.Fatal(err)
			}
			_, rep, err := grants.ReadFile(dir)
			if err != nil {
				t.Fatal(err)
			}
			list := rep.Errors
			if c.isWarning {
				list = rep.Warnings
			}
			var lines []string
			for _, e := range list {
				lines = append(lines, e.Error())
				if strings.HasPrefix(e.Error(), c.want) {
					if !errors.Is(e, e.Err) {
						t.Errorf("%v does not wrap its sentinel", e)
					}
					return
				}
			}
			t.Errorf("no problem starting %q among:\n%s", c.want, strings.Join(lines, "\n"))
		})
	}
}
