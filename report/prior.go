package report

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/valuation"
)

// ReadPrior reads the close that a later one follows: an output folder
// (its valuation.json) or a valuation.json file. The file is only read.
// Every refusal wraps accounting.ErrPrior and says what is wrong: a file
// that is not a valuation.json grantworth wrote, one written in a newer
// format (schema_version) than this grantworth reads, or one that lacks
// what a later close needs.
func ReadPrior(path string) (*accounting.Prior, error) {
	refuse := func(format string, args ...any) error {
		return &accounting.PriorError{Msg: "prior close " + path + ": " + fmt.Sprintf(format, args...)}
	}
	file := path
	st, err := os.Stat(path)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil, refuse("no such file or folder")
	case err != nil:
		return nil, err
	case st.IsDir():
		file = filepath.Join(path, "valuation.json")
		if _, err := os.Stat(file); errors.Is(err, fs.ErrNotExist) {
			return nil, refuse("the folder has no valuation.json: give the output folder of an earlier close, or its valuation.json")
		}
	}
	data, err := os.ReadFile(file)
	if err != nil {
		return nil, err
	}
	var head struct {
		SchemaVersion *int  `json:"schema_version"`
		Tool          *Tool `json:"tool"`
	}
	if err := json.Unmarshal(data, &head); err != nil {
		return nil, refuse("is not a valuation.json grantworth wrote: %v", err)
	}
	switch {
	case head.Tool == nil || head.Tool.Name != "grantworth":
		name := ""
		if head.Tool != nil {
			name = head.Tool.Name
		}
		return nil, refuse("is not a valuation.json grantworth wrote (its tool is %q)", name)
	case head.SchemaVersion == nil:
		return nil, refuse("has no schema_version: grantworth %s wrote it before closes could follow one another; value that quarter again with this grantworth and give its output", head.Tool.Version)
	case *head.SchemaVersion > SchemaVersion:
		return nil, refuse("was written in format version %d (by grantworth %s); this grantworth reads versions up to %d: use a grantworth at least as new",
			*head.SchemaVersion, head.Tool.Version, SchemaVersion)
	case *head.SchemaVersion < 1:
		return nil, refuse("has schema_version %d, which no grantworth writes", *head.SchemaVersion)
	}
	var m Model
	dec := json.NewDecoder(bytes.NewReader(data))
	if err := dec.Decode(&m); err != nil {
		return nil, refuse("is not a valuation.json grantworth wrote: %v", err)
	}
	sum := sha256.Sum256(data)
	p, msg := priorOf(&m)
	if msg != "" {
		return nil, refuse("is incomplete: %s", msg)
	}
	p.Path, p.SHA256 = path, hex.EncodeToString(sum[:])
	return p, nil
}

// priorOf is what a later close needs from the Model m of a prior one,
// or what it lacks, in words.
func priorOf(m *Model) (*accounting.Prior, string) {
	switch {
	case m.ValuationDate.IsZero():
		return nil, "no valuation_date"
	case strings.TrimSpace(m.Company.Name) == "":
		return nil, "no company name"
	case m.Expense == nil || m.Expense.ExpenseDetail == nil:
		return nil, "no expense attribution"
	}
	e := m.Expense
	p := &accounting.Prior{SchemaVersion: m.SchemaVersion, ToolVersion: m.Tool.Version, Company: m.Company.Name, Currency: m.Company.Currency,
		ValuationDate: m.ValuationDate.Time(), PeriodStart: e.PeriodStart.Time(), Unrecognized: e.UnrecognizedCost,
		Policy: accounting.Policy{Attribution: grants.Attribution(e.Attribution), Forfeitures: grants.ForfeiturePolicy(e.Forfeitures),
			PreVestingForfeitureRate: e.PreVestingForfeitureRate, Framework: grants.Framework(e.Framework)},
		LiabilityChangeApart: m.SchemaVersion < 2}
	for _, pa := range e.Periods {
		p.Periods = append(p.Periods, accounting.PeriodAmount{Start: pa.Start.Time(), End: pa.End.Time(), Label: pa.Label, Amount: pa.Amount, FairValueChange: pa.FinancingFairValueChange})
	}
	booked := make(map[string]*ExpenseGrant, len(e.ByGrant))
	for i := range e.ByGrant {
		booked[e.ByGrant[i].GrantID] = &e.ByGrant[i]
	}
	financing := make(map[string]*FinancingWarrant, len(e.Financing))
	for i := range e.Financing {
		financing[e.Financing[i].GrantID] = &e.Financing[i]
	}
	inputs := map[string]map[string]grants.Source{}
	for _, a := range m.Assumptions {
		if a.GrantID == "" || a.Term && a.Name != "strike" {
			continue
		}
		if inputs[a.GrantID] == nil {
			inputs[a.GrantID] = map[string]grants.Source{}
		}
		inputs[a.GrantID][a.Name] = grants.Source{Value: a.Value, Ref: refOf(a.Ref), Text: a.Source, Since: a.EffectiveDate.Time()}
	}
	for _, g := range m.Grants {
		if fw, ok := financing[g.ID]; ok {
			pg, msg := priorFinancing(g, fw, inputs[g.ID])
			if msg != "" {
				return nil, msg
			}
			p.Grants = append(p.Grants, pg)
			continue
		}
		eg, ok := booked[g.ID]
		if !ok {
			return nil, "grant " + g.ID + " has no expense attribution"
		}
		if len(eg.Tranches) != len(g.Tranches) {
			return nil, fmt.Sprintf("grant %s has %d tranches valued and %d attributed", g.ID, len(g.Tranches), len(eg.Tranches))
		}
		pg := accounting.PriorGrant{ID: g.ID, Instrument: grants.Instrument(g.Instrument), Liability: g.Instrument == Warrant && g.Classification == string(grants.Liability),
			GrantDate: g.GrantDate.Time(), ServiceStart: eg.ServiceStart.Time(), MeasurementDate: g.MeasurementDate.Time(), ExpiryDate: g.ExpiryDate.Time(),
			Inputs: inputs[g.ID], Cost: eg.Cost, Cumulative: eg.Cumulative, Unrecognized: eg.Unrecognized,
			LiabilityEnd: eg.LiabilityEnd, Reclassified: eg.ReclassifiedToDate, Outstanding: eg.Outstanding}
		for k, t := range g.Tranches {
			b := eg.Tranches[k]
			if b.Index != t.Index {
				return nil, fmt.Sprintf("grant %s: tranche %d valued, %d attributed in its place", g.ID, t.Index, b.Index)
			}
			pg.Tranches = append(pg.Tranches, accounting.PriorTranche{Index: t.Index, VestDate: t.VestDate.Time(), Shares: t.Shares,
				Result:       valuation.Result{Value: t.FairValuePerShare, ErrorEstimate: t.ErrorEstimate, ExpectedTermYears: t.ExpectedTermYears, Steps: t.Steps},
				BSM:          valuation.Result{Value: t.BSMSimplifiedValue, ExpectedTermYears: t.SimplifiedTerm},
				RiskFreeRate: t.RiskFreeRate, SimplifiedRate: t.SimplifiedRate, Cumulative: b.Cumulative})
		}
		for _, ev := range eg.Events {
			pg.Events = append(pg.Events, grants.Event{GrantID: g.ID, Date: ev.Date.Time(), Kind: grants.EventKind(ev.Event), Shares: ev.Shares})
		}
		if pg.Liability {
			// Compensation accrued on the grant-date values the expense
			// used; the remeasurements follow them.
			at0 := make([]float64, len(eg.Tranches))
			for k, b := range eg.Tranches {
				at0[k] = b.GrantDateFairValuePerShare
				if m.SchemaVersion < 2 { // the grant-date value was the one shown
					at0[k] = b.FairValuePerShare
				}
			}
			pg.Remeasurements = append(pg.Remeasurements, accounting.Remeasurement{Date: g.GrantDate.Time(), FairValue: at0})
			for _, r := range eg.Remeasurements {
				if len(r.FairValuePerShare) != len(eg.Tranches) {
					return nil, fmt.Sprintf("grant %s: a remeasurement on %s has %d values for %d tranches", g.ID, r.Date, len(r.FairValuePerShare), len(eg.Tranches))
				}
				pg.Remeasurements = append(pg.Remeasurements, accounting.Remeasurement{Date: r.Date.Time(), FairValue: r.FairValuePerShare})
			}
		}
		p.Grants = append(p.Grants, pg)
	}
	return p, filedModifications(m, p)
}

// priorFinancing is the PriorGrant of a warrant issued in a financing,
// g with its row fw of the expense's financing warrants, or what it
// lacks.
func priorFinancing(g Grant, fw *FinancingWarrant, inputs map[string]grants.Source) (accounting.PriorGrant, string) {
	pg := accounting.PriorGrant{ID: g.ID, Instrument: grants.Instrument(g.Instrument), Liability: g.Classification == string(grants.Liability),
		Financing: true, GrantDate: g.GrantDate.Time(), ServiceStart: g.GrantDate.Time(), MeasurementDate: g.MeasurementDate.Time(),
		ExpiryDate: g.ExpiryDate.Time(), Inputs: inputs, LiabilityEnd: fw.LiabilityEnd, Reclassified: fw.ReclassifiedToDate, Outstanding: fw.Outstanding}
	for _, t := range g.Tranches {
		pg.Tranches = append(pg.Tranches, accounting.PriorTranche{Index: t.Index, VestDate: t.VestDate.Time(), Shares: t.Shares,
			Result:       valuation.Result{Value: t.FairValuePerShare, ErrorEstimate: t.ErrorEstimate, ExpectedTermYears: t.ExpectedTermYears, Steps: t.Steps},
			BSM:          valuation.Result{Value: t.BSMSimplifiedValue, ExpectedTermYears: t.SimplifiedTerm},
			RiskFreeRate: t.RiskFreeRate, SimplifiedRate: t.SimplifiedRate})
	}
	for _, ev := range fw.Events {
		pg.Events = append(pg.Events, grants.Event{GrantID: g.ID, Date: ev.Date.Time(), Kind: grants.EventKind(ev.Event), Shares: ev.Shares})
	}
	for _, r := range fw.Remeasurements {
		if len(r.FairValuePerShare) != len(g.Tranches) {
			return pg, fmt.Sprintf("financing warrant %s: a remeasurement on %s has %d values for %d tranches", g.ID, r.Date, len(r.FairValuePerShare), len(g.Tranches))
		}
		pg.Remeasurements = append(pg.Remeasurements, accounting.Remeasurement{Date: r.Date.Time(), FairValue: r.FairValuePerShare})
	}
	return pg, ""
}

// refOf parses "Sheet!Cell" back into a Ref ("default" and "" give the
// zero Ref).
func refOf(s string) grants.Ref {
	sheet, cell, ok := strings.Cut(s, "!")
	if !ok {
		return grants.Ref{}
	}
	return grants.Ref{Sheet: sheet, Cell: cell}
}
