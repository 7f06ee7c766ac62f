package report

import (
	"fmt"
	"time"
)

func day(s string) Date {
	t, err := time.Parse("2006-01-02", s)
	if err != nil {
		panic(err)
	}
	return DateOf(t)
}

// fixture is a hand-made Model for an invented company, with one grant of
// each instrument, a holder code that looks like a formula and one in
// non-Latin letters. The numbers are invented (demo data, not references):
// the tests check layout and agreement between the outputs, not valuation.
func fixture() *Model {
	m := &Model{
		Tool:          Tool{Name: "grantworth", Version: "0.1.0-test"},
		Input:         Input{Path: "sample/larkspur.xlsx", SHA256: "9f2c4e1b7a6d5c3e8f0a1b2c3d4e5f60718293a4b5c6d7e8f90a1b2c3d4e5f60"},
		ValuationDate: day("2026-09-30"),
		PeriodStart:   day("2026-07-01"),
		Company:       Company{Name: "Larkspur Robotics Ltd", Currency: "EUR", SharesOutstanding: 12_500_000},
		Settings: Settings{Steps: "auto", Attribution: "graded", Forfeitures: "estimate", Framework: "asc718",
			MonteCarlo: "40,000 paths per tranche, seeds 1 to 2, on grants G-001 and G-002", Sensitivities: "all grants revalued for each case"},
		Warnings: []string{
			"Grants!C9 (holder): unknown column \"notes\" ignored",
			"grant G-004: exercise multiple 1.2 is below 1.5; check it",
		},
		Caution: Caution,
	}
	opt := Grant{ID: "G-001", Holder: "=HYPERLINK(\"x\")", Instrument: Option, Purpose: "compensation", GrantDate: day("2025-03-14"),
		MeasurementDate: day("2025-03-14"), ExpiryDate: day("2035-03-14"), Shares: 4800, Strike: 2.50, SharePrice: 2.50,
		Volatility: 0.55, RiskFreeRate: 0.0391, DividendYield: 0, ExerciseMultiple: 2.5, PostVestingExitRate: 0.08, Method: "lattice"}
	for i := 1; i <= 4; i++ {
		v := float64(i)
		opt.Tranches = append(opt.Tranches, Tranche{Index: i, VestDate: DateOf(time.Date(2025+i, 3, 14, 0, 0, 0, 0, time.UTC)),
			Shares: 1200, YearsToExpiry: 10, YearsToVest: v, RiskFreeRate: 0.0391,
			FairValuePerShare: 1.30 + 0.02*v, ErrorEstimate: 0.0004, ExpectedTermYears: 4.1 + 0.5*v, Steps: 2400,
			BSMSimplifiedValue: 1.40 + 0.03*v, SimplifiedTerm: (v + 10) / 2, SimplifiedRate: 0.0385 + 0.0003*v})
	}
	opt2 := Grant{ID: "G-002", Holder: "Ø-7 Søren", Instrument: Option, Purpose: "compensation", GrantDate: day("2026-08-01"),
		MeasurementDate: day("2026-08-01"), ExpiryDate: day("2036-08-01"), Shares: 1000, Strike: 3.10, SharePrice: 3.10,
		Volatility: 0.5, RiskFreeRate: 0.0402, DividendYield: 0.01, ExerciseMultiple: 0, PostVestingExitRate: 0.1, Method: "lattice",
		Tranches: []Tranche{{Index: 1, VestDate: day("2027-08-01"), Shares: 1000, YearsToExpiry: 10, YearsToVest: 1,
			RiskFreeRate: 0.0402, FairValuePerShare: 1.6012, ErrorEstimate: 0.0003, ExpectedTermYears: 5.2, Steps: 2400,
			BSMSimplifiedValue: 1.55, SimplifiedTerm: 5.5, SimplifiedRate: 0.0398}}}
	war := Grant{ID: "W-001", Holder: "Harbour Lending", Instrument: Warrant, Purpose: Financing, GrantDate: day("2024-11-20"),
		MeasurementDate: day("2026-09-30"), ExpiryDate: day("2031-11-20"), Shares: 250000, Strike: 4.00, SharePrice: 3.20,
		Volatility: 0.45, RiskFreeRate: 0.0379, ExerciseMultiple: 0, PostVestingExitRate: 0, Method: "warrant",
		Classification: "liability", ExerciseStyle: "american",
		Dilution: &Dilution{SharesOutstanding: 12_500_000, Warrants: 250000, PriceReflectsWarrants: true, Method: "Galai-Schneller", UndilutedValue: 1.41},
		Tranches: []Tranche{{Index: 1, VestDate: day("2024-11-20"), Shares: 250000, YearsToExpiry: 5.14, YearsToVest: 0,
			RiskFreeRate: 0.0379, FairValuePerShare: 1.3843, ErrorEstimate: 0.0002, ExpectedTermYears: 5.14, Steps: 1300,
			BSMSimplifiedValue: 1.41, SimplifiedTerm: 2.57, SimplifiedRate: 0.0371}}}
	rsu := Grant{ID: "R-001", Holder: "E-0042", Instrument: RSU, Purpose: "compensation", GrantDate: day("2026-01-05"),
		MeasurementDate: day("2026-01-05"), Shares: 600, SharePrice: 2.90, Volatility: 0.55, RiskFreeRate: 0.04,
		DividendYield: 0.01, Method: "rsu"}
	for i := 1; i <= 3; i++ {
		v := float64(i)
		fv := 2.90 * (1 - 0.01*v) // near S·e^(−qV); invented
		rsu.Tranches = append(rsu.Tranches, Tranche{Index: i, VestDate: DateOf(time.Date(2026+i, 1, 5, 0, 0, 0, 0, time.UTC)),
			Shares: 200, YearsToVest: v, FairValuePerShare: fv, BSMSimplifiedValue: fv, SimplifiedTerm: v})
	}
	m.Grants = []Grant{opt, opt2, war, rsu}
	for _, g := range m.Grants {
		m.Assumptions = append(m.Assumptions,
			Assumption{GrantID: g.ID, Name: "share_price", Kind: KindMoney, Value: g.SharePrice, Text: fmt.Sprint(g.SharePrice), Ref: "Share Prices!B3", Source: "board minutes 2025-03-10, independent 409A-style report"},
			Assumption{GrantID: g.ID, Name: "volatility", Kind: KindPercent, Value: g.Volatility, Text: "55%", Ref: "Assumptions!B2", Source: "+peer median, 5y weekly returns"},
			Assumption{GrantID: g.ID, Name: "grant_date", Kind: KindDate, Text: g.GrantDate.String(), Ref: "Grants!D2"})
	}
	m.Assumptions = append(m.Assumptions, Assumption{Name: "attribution", Kind: KindText, Text: "graded", Ref: "Assumptions!B7", Source: "@policy memo FIN-12"},
		Assumption{Name: "volatility", Kind: KindPercent, Value: 0.6, Text: "0.6", Ref: "Assumptions!B10", Source: "peer study of 2026-06-20", EffectiveDate: day("2026-07-01")})
	Summarize(m)
	base := m.Totals.FairValueTotal
	for _, s := range []struct{ in, label, unit string }{
		{"volatility", "Volatility", "points"}, {"exercise_multiple", "Exercise multiple", "x"},
		{"post_vesting_exit_rate", "Exit rate", "points"}, {"risk_free_rate", "Risk-free rate", "points"}} {
		sens := Sensitivity{Input: s.in, Label: s.label, Unit: s.unit}
		for _, sh := range []float64{-2, -1, 0, 1, 2} {
			v := base * (1 + 0.03*sh)
			sens.Points = append(sens.Points, SensitivityPoint{Shift: sh, Label: fmt.Sprintf("%+g", sh), FairValueTotal: v, Change: v/base - 1})
		}
		m.Sensitivity = append(m.Sensitivity, sens)
	}
	c := &Convergence{GrantID: "G-001", TrancheIndex: 1, AutoValue: 1.32, AutoError: 0.0004, AutoSteps: 2400}
	for i, n := range []int{50, 100, 200, 400, 800, 1600} {
		sign := 1.0
		if i%2 == 1 {
			sign = -1
		}
		c.Points = append(c.Points, ConvergencePoint{Steps: n, Value: 1.32 + sign*0.4/float64(n)})
	}
	m.Convergence = c
	// A repricing of G-001 from 2.50 to 2.00 on 2026-08-20, its first
	// tranche vested (values invented).
	mod := Modification{GrantID: "G-001", Date: day("2026-08-20"), Kind: "modification", Accounting: "probable_to_probable",
		Changes: "strike 2.5 → 2", Note: "=board resolution of 2026-08-18", Ref: "Modifications!B2", Terms: "2026-08-20|2.5 …|2 …", ValueStatus: "measured",
		TermsBefore: ModifiedTerms{Strike: 2.5, ExpiryDate: day("2035-03-14"), VestMonths: 48, CliffMonths: 12, ExerciseMultiple: 2.5, PostVestingExitRate: 0.08},
		TermsAfter:  ModifiedTerms{Strike: 2, ExpiryDate: day("2035-03-14"), VestMonths: 48, CliffMonths: 12, ExerciseMultiple: 2.5, PostVestingExitRate: 0.08},
		SharePrice:  1.80, SharePriceSource: "Share Prices!B9 (valuation of 2026-08-15)", Volatility: 0.6, VolatilitySource: "Assumptions!B10, in force from 2026-07-01",
		RiskFreeRate: 0.038, CurveSource: "Rates curve of 2026-06-30, 3 points, continuous zero rates", Shares: 4800}
	for i := 1; i <= 4; i++ {
		v := float64(i)
		p := ModifiedPart{TrancheIndex: i, Shares: 1200, Vested: i == 1, VestDateBefore: DateOf(time.Date(2025+i, 3, 14, 0, 0, 0, 0, time.UTC)),
			Before: PartValue{FairValuePerShare: 0.61 + 0.02*v, ErrorEstimate: 0.0003, ExpectedTermYears: 4 + v/2, Steps: 2400},
			After:  PartValue{FairValuePerShare: 0.79 + 0.02*v, ErrorEstimate: 0.0003, ExpectedTermYears: 4.2 + v/2, Steps: 2400}, Increment: 0.18}
		p.VestDateAfter = p.VestDateBefore
		p.Attribution = "over the service from 2026-08-20 to " + p.VestDateAfter.String()
		if i == 1 {
			p.Attribution = "at once, on 2026-08-20"
		}
		mod.Parts = append(mod.Parts, p)
		mod.FairValueBefore += p.Before.FairValuePerShare * 1200
		mod.FairValueAfter += p.After.FairValuePerShare * 1200
	}
	mod.Increment, mod.Cost, mod.Amount, mod.Cumulative, mod.Unrecognized = 864, 864, 300.5, 300.5, 563.5
	m.Modifications = []Modification{mod}
	m.CrossChecks = []CrossCheck{
		{GrantID: "G-001", TrancheIndex: 1, Method: "mc", Lattice: 1.32, LatticeError: 0.0003, Value: 1.3187, StdErr: 0.0021, Paths: 40000, Seed: 1, Z: -0.6128},
		{GrantID: "G-002", TrancheIndex: 1, Method: "mc", Lattice: 0.874, LatticeError: 0.0002, Value: 0.8772, StdErr: 0.0015, Paths: 40000, Seed: 2, Z: 2.1146},
	}
	return m
}
