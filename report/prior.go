package report

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
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
	f, err := os.Open(file)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	// The file is read once, as a stream: what a later close needs is
	// kept as it goes by (a large ledger's file is hundreds of megabytes),
	// and its bytes are hashed on the way.
	h := sha256.New()
	in := io.TeeReader(bufio.NewReaderSize(f, 1<<20), h)
	r := &priorReader{refuse: refuse, index: map[string]int{}}
	if err := r.read(json.NewDecoder(in)); err != nil {
		var pe *accounting.PriorError
		if errors.As(err, &pe) {
			return nil, err
		}
		return nil, refuse("is not a valuation.json grantworth wrote: %v", err)
	}
	if _, err := io.Copy(io.Discard, in); err != nil {
		return nil, err
	}
	if err := r.checkHead(); err != nil {
		return nil, err
	}
	p, msg := r.prior()
	if msg != "" {
		return nil, refuse("is incomplete: %s", msg)
	}
	p.Path, p.SHA256 = path, hex.EncodeToString(h.Sum(nil))
	return p, nil
}

// priorReader keeps what a later close needs from a valuation.json as it
// is decoded, member by member and grant by grant.
type priorReader struct {
	refuse        func(format string, args ...any) error
	headChecked   bool
	schemaVersion *int
	tool          *Tool
	valuationDate Date
	company       Company
	expense       *Expense // without its by_grant
	grants        []accounting.PriorGrant
	index         map[string]int // grant ID → position in grants
	booked        []bool         // grants[i] has its expense attribution
	bad           []string       // grants[i]'s attribution does not fit it ("" if it does)
	pending       []ExpenseGrant // attributions read before their grants
	modifications []Modification // the changes of awards' terms it measured
	studies       pricing.Studies
}

// checkHead refuses a file grantworth did not write or wrote in a newer
// format (once, before the grants are read).
func (r *priorReader) checkHead() error {
	if r.headChecked {
		return nil
	}
	r.headChecked = true
	switch {
	case r.tool == nil || r.tool.Name != "grantworth":
		name := ""
		if r.tool != nil {
			name = r.tool.Name
		}
		return r.refuse("is not a valuation.json grantworth wrote (its tool is %q)", name)
	case r.schemaVersion == nil:
		return r.refuse("has no schema_version: grantworth %s wrote it before closes could follow one another; value that quarter again with this grantworth and give its output", r.tool.Version)
	case *r.schemaVersion > SchemaVersion:
		return r.refuse("was written in format version %d (by grantworth %s); this grantworth reads versions up to %d: use a grantworth at least as new",
			*r.schemaVersion, r.tool.Version, SchemaVersion)
	case *r.schemaVersion < 1:
		return r.refuse("has schema_version %d, which no grantworth writes", *r.schemaVersion)
	}
	return nil
}

// delim reads the delimiter want.
func delim(dec *json.Decoder, want json.Delim) error {
	tok, err := dec.Token()
	if err != nil {
		return err
	}
	if d, ok := tok.(json.Delim); !ok || d != want {
		return fmt.Errorf("found %v where %v was expected", tok, want)
	}
	return nil
}

// each calls f for each element of the array that comes next.
func each(dec *json.Decoder, f func() error) error {
	if err := delim(dec, '['); err != nil {
		return err
	}
	for dec.More() {
		if err := f(); err != nil {
			return err
		}
	}
	return delim(dec, ']')
}

// members calls f with each key of the object that comes next; f decodes
// the value.
func members(dec *json.Decoder, f func(key string) error) error {
	if err := delim(dec, '{'); err != nil {
		return err
	}
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return err
		}
		key, ok := tok.(string)
		if !ok {
			return fmt.Errorf("found %v where a member name was expected", tok)
		}
		if err := f(key); err != nil {
			return err
		}
	}
	return delim(dec, '}')
}

// skip reads past the value that comes next.
func skip(dec *json.Decoder) error {
	depth := 0
	for {
		tok, err := dec.Token()
		if err != nil {
			return err
		}
		switch tok {
		case json.Delim('{'), json.Delim('['):
			depth++
		case json.Delim('}'), json.Delim(']'):
			depth--
		}
		if depth == 0 {
			return nil
		}
	}
}

func (r *priorReader) read(dec *json.Decoder) error {
	tok, err := dec.Token()
	if err != nil {
		return err
	}
	if tok != json.Delim('{') {
		return fmt.Errorf("the file holds %v, not an object", tok)
	}
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return err
		}
		key, _ := tok.(string)
		switch key {
		case "schema_version":
			err = dec.Decode(&r.schemaVersion)
		case "tool":
			err = dec.Decode(&r.tool)
		case "valuation_date":
			err = dec.Decode(&r.valuationDate)
		case "company":
			err = dec.Decode(&r.company)
		case "grants":
			if err := r.checkHead(); err != nil {
				return err
			}
			err = each(dec, func() error {
				var g Grant
				if err := dec.Decode(&g); err != nil {
					return err
				}
				r.addGrant(&g)
				return nil
			})
		case "expense":
			// The grant-date values it holds are read by its format.
			if err := r.checkHead(); err != nil {
				return err
			}
			err = r.readExpense(dec)
		case "modifications":
			err = dec.Decode(&r.modifications)
		case "sensitivity", "convergence", "cross_checks":
			err = r.readStudy(dec, key)
		case "assumptions":
			err = each(dec, func() error {
				var a Assumption
				if err := dec.Decode(&a); err != nil {
					return err
				}
				r.addInput(&a)
				return nil
			})
		default:
			err = skip(dec)
		}
		if err != nil {
			return err
		}
	}
	_, err = dec.Token() // the closing brace
	return err
}

// readExpense reads the expense object, its by_grant list grant by
// grant.
func (r *priorReader) readExpense(dec *json.Decoder) error {
	var raw json.RawMessage
	tok, err := dec.Token()
	if err != nil {
		return err
	}
	if tok == nil {
		r.expense = nil
		return nil
	}
	if tok != json.Delim('{') {
		return fmt.Errorf("expense is %v, not an object", tok)
	}
	rest := map[string]json.RawMessage{}
	byGrant := false
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return err
		}
		key, _ := tok.(string)
		if key == "by_grant" {
			byGrant = true
			err = each(dec, func() error {
				var eg ExpenseGrant
				if err := dec.Decode(&eg); err != nil {
					return err
				}
				r.book(&eg)
				return nil
			})
		} else {
			err = dec.Decode(&raw)
			rest[key] = append(json.RawMessage(nil), raw...)
		}
		if err != nil {
			return err
		}
	}
	if err := delim(dec, '}'); err != nil {
		return err
	}
	b, err := json.Marshal(rest)
	if err != nil {
		return err
	}
	e := &Expense{}
	if err := json.Unmarshal(b, e); err != nil {
		return err
	}
	if byGrant && e.ExpenseDetail == nil {
		e.ExpenseDetail = &ExpenseDetail{}
	}
	r.expense = e
	return nil
}

// addGrant keeps what a later close needs of grant g's valuation.
func (r *priorReader) addGrant(g *Grant) {
	pg := accounting.PriorGrant{ID: g.ID, Instrument: grants.Instrument(g.Instrument), Liability: g.Instrument == Warrant && g.Classification == string(grants.Liability),
		GrantDate: g.GrantDate.Time(), MeasurementDate: g.MeasurementDate.Time(), ExpiryDate: g.ExpiryDate.Time(), ValuationKey: g.ValuationKey,
		Status: pricing.Status(g.ValueStatus)}
	if len(g.Tranches) > 0 {
		pg.Tranches = make([]accounting.PriorTranche, len(g.Tranches))
	}
	for k, t := range g.Tranches {
		pg.Tranches[k] = accounting.PriorTranche{Index: t.Index, VestDate: t.VestDate.Time(), Shares: t.Shares,
			Result:       valuation.Result{Value: t.FairValuePerShare, ErrorEstimate: t.ErrorEstimate, ExpectedTermYears: t.ExpectedTermYears, Steps: t.Steps},
			BSM:          valuation.Result{Value: t.BSMSimplifiedValue, ExpectedTermYears: t.SimplifiedTerm},
			RiskFreeRate: t.RiskFreeRate, SimplifiedRate: t.SimplifiedRate}
	}
	r.index[g.ID] = len(r.grants)
	r.grants = append(r.grants, pg)
	r.booked = append(r.booked, false)
	r.bad = append(r.bad, "")
	// An attribution read before its grant (not in a file grantworth
	// wrote, whose grants come first) is applied now.
	for i := 0; i < len(r.pending); i++ {
		if r.pending[i].GrantID == g.ID {
			eg := r.pending[i]
			r.pending = append(r.pending[:i], r.pending[i+1:]...)
			i--
			r.book(&eg)
		}
	}
}

// book pairs grant eg.GrantID with its expense attribution (the last
// one, if the file gives two).
func (r *priorReader) book(eg *ExpenseGrant) {
	i, ok := r.index[eg.GrantID]
	if !ok {
		r.pending = append(r.pending, *eg)
		return
	}
	pg := &r.grants[i]
	r.booked[i], r.bad[i] = true, ""
	if len(eg.Tranches) != len(pg.Tranches) {
		r.bad[i] = fmt.Sprintf("grant %s has %d tranches valued and %d attributed", pg.ID, len(pg.Tranches), len(eg.Tranches))
		return
	}
	pg.ServiceStart = eg.ServiceStart.Time()
	pg.Cost, pg.Cumulative, pg.Unrecognized = eg.Cost, eg.Cumulative, eg.Unrecognized
	pg.LiabilityEnd, pg.Reclassified, pg.Outstanding = eg.LiabilityEnd, eg.ReclassifiedToDate, eg.Outstanding
	for k := range pg.Tranches {
		b := eg.Tranches[k]
		if b.Index != pg.Tranches[k].Index {
			r.bad[i] = fmt.Sprintf("grant %s: tranche %d valued, %d attributed in its place", pg.ID, pg.Tranches[k].Index, b.Index)
			return
		}
		pg.Tranches[k].Cumulative = b.Cumulative
	}
	pg.Events = nil
	for _, ev := range eg.Events {
		pg.Events = append(pg.Events, grants.Event{GrantID: pg.ID, Date: ev.Date.Time(), Kind: grants.EventKind(ev.Event), Shares: ev.Shares})
	}
	pg.Remeasurements = nil
	if pg.Liability {
		// Compensation accrued on the grant-date values the expense
		// used; the remeasurements follow them.
		at0 := make([]float64, len(eg.Tranches))
		for k, b := range eg.Tranches {
			at0[k] = b.GrantDateFairValuePerShare
			if *r.schemaVersion < 2 { // the grant-date value was the one shown
				at0[k] = b.FairValuePerShare
			}
		}
		pg.Remeasurements = append(pg.Remeasurements, accounting.Remeasurement{Date: pg.GrantDate, FairValue: at0})
		for _, rm := range eg.Remeasurements {
			if len(rm.FairValuePerShare) != len(eg.Tranches) {
				r.bad[i] = fmt.Sprintf("grant %s: a remeasurement on %s has %d values for %d tranches", pg.ID, rm.Date, len(rm.FairValuePerShare), len(eg.Tranches))
				return
			}
			pg.Remeasurements = append(pg.Remeasurements, accounting.Remeasurement{Date: rm.Date.Time(), FairValue: rm.FairValuePerShare})
		}
	}
}

// addInput keeps an input a grant was measured with.
func (r *priorReader) addInput(a *Assumption) {
	if a.GrantID == "" || a.Term && a.Name != "strike" {
		return
	}
	i, ok := r.index[a.GrantID]
	if !ok {
		return
	}
	pg := &r.grants[i]
	if pg.Inputs == nil {
		pg.Inputs = map[string]grants.Source{}
	}
	pg.Inputs[a.Name] = grants.Source{Value: a.Value, Ref: refOf(a.Ref), Text: a.Source, Since: a.EffectiveDate.Time()}
}

// prior is what a later close needs from the file read, or what it
// lacks, in words.
func (r *priorReader) prior() (*accounting.Prior, string) {
	switch {
	case r.valuationDate.IsZero():
		return nil, "no valuation_date"
	case strings.TrimSpace(r.company.Name) == "":
		return nil, "no company name"
	case r.expense == nil || r.expense.ExpenseDetail == nil:
		return nil, "no expense attribution"
	}
	e := r.expense
	p := &accounting.Prior{SchemaVersion: *r.schemaVersion, ToolVersion: r.tool.Version, Company: r.company.Name, Currency: r.company.Currency,
		ValuationDate: r.valuationDate.Time(), PeriodStart: e.PeriodStart.Time(), Unrecognized: e.UnrecognizedCost,
		Policy: accounting.Policy{Attribution: grants.Attribution(e.Attribution), Forfeitures: grants.ForfeiturePolicy(e.Forfeitures),
			PreVestingForfeitureRate: e.PreVestingForfeitureRate, Framework: grants.Framework(e.Framework)},
		LiabilityChangeApart: *r.schemaVersion < 2}
	for _, pa := range e.Periods {
		p.Periods = append(p.Periods, accounting.PeriodAmount{Start: pa.Start.Time(), End: pa.End.Time(), Label: pa.Label, Amount: pa.Amount, FairValueChange: pa.FinancingFairValueChange})
	}
	financing := make(map[string]*FinancingWarrant, len(e.Financing))
	for i := range e.Financing {
		financing[e.Financing[i].GrantID] = &e.Financing[i]
	}
	for i := range r.grants {
		if fw, ok := financing[r.grants[i].ID]; ok {
			pg, msg := priorFinancing(&r.grants[i], fw)
			if msg != "" {
				return nil, msg
			}
			r.grants[i] = pg
			continue
		}
		switch {
		case !r.booked[i]:
			return nil, "grant " + r.grants[i].ID + " has no expense attribution"
		case r.bad[i] != "":
			return nil, r.bad[i]
		}
	}
	p.Grants = r.grants
	p.Studies = r.studies
	p.Studies.GrantIDs = make([]string, len(r.grants))
	for i := range r.grants {
		p.Studies.GrantIDs[i] = r.grants[i].ID
	}
	return p, filedModifications(r.modifications, p)
}

// priorFinancing is the PriorGrant of a warrant issued in a financing:
// g as its grant was read (its attribution, if the file gives one, left
// out) with its row fw of the expense's financing warrants, or what it
// lacks.
func priorFinancing(g *accounting.PriorGrant, fw *FinancingWarrant) (accounting.PriorGrant, string) {
	pg := accounting.PriorGrant{ID: g.ID, Instrument: g.Instrument, Liability: g.Liability, Financing: true,
		GrantDate: g.GrantDate, ServiceStart: g.GrantDate, MeasurementDate: g.MeasurementDate, ExpiryDate: g.ExpiryDate,
		ValuationKey: g.ValuationKey, Status: g.Status, Inputs: g.Inputs, LiabilityEnd: fw.LiabilityEnd, Reclassified: fw.ReclassifiedToDate, Outstanding: fw.Outstanding}
	for _, t := range g.Tranches {
		t.Cumulative = 0
		pg.Tranches = append(pg.Tranches, t)
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

// readStudy reads the sensitivity cases, the convergence study or the
// Monte Carlo checks (key) into r.studies, for a rerun to reuse.
func (r *priorReader) readStudy(dec *json.Decoder, key string) error {
	st := &r.studies
	switch key {
	case "sensitivity":
		var ss []Sensitivity
		if err := dec.Decode(&ss); err != nil {
			return err
		}
		st.Sensitivity = nil
		for _, s := range ss {
			ps := pricing.Sensitivity{Input: s.Input, Label: s.Label, Unit: s.Unit}
			for _, pt := range s.Points {
				ps.Points = append(ps.Points, pricing.SensitivityPoint{Shift: pt.Shift, Label: pt.Label, FairValueTotal: pt.FairValueTotal, Change: pt.Change})
			}
			st.Sensitivity = append(st.Sensitivity, ps)
		}
	case "convergence":
		var c *Convergence
		if err := dec.Decode(&c); err != nil {
			return err
		}
		st.Convergence = nil
		if c != nil {
			st.Convergence = &pricing.Convergence{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex,
				Auto: valuation.Result{Value: c.AutoValue, ErrorEstimate: c.AutoError, Steps: c.AutoSteps}}
			for _, pt := range c.Points {
				st.Convergence.Points = append(st.Convergence.Points, pricing.ConvergencePoint{Steps: pt.Steps, Value: pt.Value})
			}
		}
	default:
		var cs []CrossCheck
		if err := dec.Decode(&cs); err != nil {
			return err
		}
		st.MonteCarlo = nil
		for _, c := range cs {
			if c.Method == "mc" {
				st.MonteCarlo = append(st.MonteCarlo, pricing.MonteCarloCheck{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex, Lattice: c.Lattice, LatticeError: c.LatticeError,
					Result: valuation.Result{Value: c.Value, ErrorEstimate: c.StdErr, Steps: c.Paths}, Seed: c.Seed, Z: c.Z})
			}
		}
	}
	return nil
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
