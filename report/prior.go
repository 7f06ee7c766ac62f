package report

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"sync"
	"unsafe"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
	"grantworth/internal/slab"
	"grantworth/valuation"
)

// ReadPrior reads the close that a later one follows: an output folder
// (its valuation.json) or a valuation.json file. The file is only read.
// Every refusal wraps accounting.ErrPrior and says what is wrong: a file
// that is not a valuation.json grantworth wrote (not JSON at all, with
// the line and column where it goes wrong), one written in a newer format
// (schema_version) than this grantworth reads, or one that lacks what a
// later close needs.
func ReadPrior(path string) (*accounting.Prior, error) {
	p, err := ReadPriorHashing(path)
	if err != nil {
		return nil, err
	}
	if err := p.Hashed(); err != nil {
		return nil, err
	}
	return p, nil
}

// ReadPriorHashing is ReadPrior that returns once the file is read,
// while its SHA-256 is still being computed on the way to its end: a
// large prior's hash runs beside what the caller does next, and
// Prior.Hashed waits for it (with the read error, if the file failed to
// read after what the reader needed of it).
func ReadPriorHashing(path string) (*accounting.Prior, error) {
	refuse := refusal(path)
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
	// The hash's goroutine closes f once the file is read through.
	return readPriorHashing(f, f, path, file, scanBuffer)
}

// readPrior reads a prior close's valuation.json from rd, its hash
// included.
func readPrior(rd io.Reader, path, file string, bufSize int) (*accounting.Prior, error) {
	p, err := readPriorHashing(rd, nil, path, file, bufSize)
	if err != nil {
		return nil, err
	}
	if err := p.Hashed(); err != nil {
		return nil, err
	}
	return p, nil
}

// readPriorHashing reads a prior close's valuation.json from rd. The
// file is read once, as a stream (a large ledger's is hundreds of
// megabytes): what a later close needs is kept as it goes by
// (priorMembers), the rest only checked to be JSON, and its bytes are
// hashed on the way, to the end of the file after the reader is done
// (the Prior's Hashed waits for it). path is the prior as given, file
// the valuation.json read, for the messages; bufSize the scanner's buffer
// (tests make it small). closer, if not nil, is closed once nothing
// reads rd any more.
func readPriorHashing(rd io.Reader, closer io.Closer, path, file string, bufSize int) (p *accounting.Prior, err error) {
	refuse := refusal(path)
	ra := newReadAhead(rd, sha256.New(), closer)
	defer func() {
		ra.release()
		if err != nil {
			ra.Close() // the hash is not wanted
		}
	}()
	s := newScanner(ra, bufSize)
	r := &priorReader{refuse: refuse, index: map[string]int{}, plans: priorPlans(), ahead: ra}
	if at, ok := rd.(io.ReaderAt); ok {
		if size := sizeOf(rd); size > 0 {
			r.tailRd = startTail(at, size, r.plans, bufSize)
			defer r.tailRd.cancel()
		}
	}
	if err := r.read(s); err != nil {
		var pe *accounting.PriorError
		var je *jsonError
		switch {
		case errors.As(err, &pe):
			return nil, err
		case errors.As(err, &je):
			where := file
			if where == path {
				where = ""
			} else {
				where += ", "
			}
			pe := refuse("is not a valuation.json grantworth wrote: %s%v", where, err).(*accounting.PriorError)
			return nil, &priorJSONError{pe, je}
		}
		return nil, err
	}
	if err := r.checkHead(); err != nil {
		return nil, err
	}
	p, msg := r.prior()
	if msg != "" {
		return nil, refuse("is incomplete: %s", msg)
	}
	p.Path = path
	hashed := ra.hashed // not ra, whose chunks go with the reader
	p.HashLater(func() (string, error) {
		sum, err := hashed.wait()
		if err != nil {
			return "", err
		}
		return hex.EncodeToString(sum), nil
	})
	return p, nil
}

// sizeOf is the size of the file rd reads from its start (0 if unknown).
func sizeOf(rd io.Reader) int64 {
	switch f := rd.(type) {
	case *os.File:
		if st, err := f.Stat(); err == nil && st.Mode().IsRegular() {
			return st.Size()
		}
	case interface{ Size() int64 }:
		return f.Size()
	}
	return 0
}

// readAhead reads a file ahead of its reader in a goroutine of its own,
// a chunk at a time, and hashes each chunk there once it has handed it
// on: the hash of a large prior close (a third of its reading time) runs
// beside the parsing, on another core, and does not hold the parser up.
// Once the reader reads no more (stopReading), the goroutine reads the
// rest of the file for the hash alone, while the caller goes on.
type readAhead struct {
	rd     io.Reader
	h      hash.Hash     // nil: no hash
	full   chan []byte   // chunks read, in order; closed at the end
	free   chan []byte   // chunks read out
	detach chan struct{} // closed when the reader reads no more
	stop   chan struct{} // closed when neither reading nor hash is wanted
	done   chan struct{} // closed at the end; then err is final
	err    error         // the read error that ended the file (not io.EOF)
	hashed *hashEnd      // the hash, for whoever waits for it once the reader is gone

	// closer is closed once the goroutine has ended and released is
	// closed: what else reads the file (the tail) has done so.
	closer   io.Closer
	released chan struct{}

	buf  []byte // the chunk being read out
	left []byte // its part not read out
}

// hashEnd is what a readAhead's hash came to: once done is closed, the
// hash of every byte of the file, or the error that ended it early.
type hashEnd struct {
	done chan struct{}
	sum  []byte
	err  error
}

var errReadStopped = errors.New("report: the reading of the prior close was stopped")

// wait waits for the hash of the file.
func (e *hashEnd) wait() ([]byte, error) {
	<-e.done
	return e.sum, e.err
}

// readAheadChunk is the size of a chunk; readAheadChunks are in flight.
const (
	readAheadChunk  = 1 << 20
	readAheadChunks = 4
)

// newReadAhead starts reading rd, through the hash h (if not nil), and
// closes closer (if not nil) at the end, once release has been called.
// Close stops the goroutine.
func newReadAhead(rd io.Reader, h hash.Hash, closer io.Closer) *readAhead {
	ra := &readAhead{rd: rd, h: h, full: make(chan []byte, readAheadChunks), free: make(chan []byte, readAheadChunks),
		detach: make(chan struct{}), stop: make(chan struct{}), done: make(chan struct{}), closer: closer, released: make(chan struct{}),
		hashed: &hashEnd{done: make(chan struct{})}}
	for i := 0; i < readAheadChunks; i++ {
		ra.free <- make([]byte, readAheadChunk)
	}
	go ra.run()
	return ra
}

// run reads the file to its end, or until stop is closed.
func (ra *readAhead) run() {
	defer close(ra.done)
	defer func() {
		if ra.hashed.sum == nil && ra.hashed.err == nil {
			ra.hashed.err = errReadStopped
		}
		close(ra.hashed.done)
	}()
	if ra.closer != nil {
		defer func() {
			<-ra.released
			ra.closer.Close()
		}()
	}
	defer close(ra.full)
	reading := true // the reader takes the chunks
	for {
		var b []byte
		if reading {
			select {
			case b = <-ra.free:
			case <-ra.detach:
				reading = false
			case <-ra.stop:
				return
			}
		}
		if !reading {
			if ra.h == nil {
				return
			}
			// Every chunk is the goroutine's now (detach gave back the
			// reader's): one read out, or one the reader did not take.
			select {
			case b = <-ra.free:
			case b = <-ra.full:
			case <-ra.stop:
				return
			}
		}
		b = b[:cap(b)]
		n, err := io.ReadFull(ra.rd, b)
		if reading && n > 0 {
			// Never blocks: full has room for every chunk. The reader
			// reads b while it is hashed; it gives b back (free) only
			// once done with it, and b is read into again only after
			// that.
			ra.full <- b[:n]
		}
		if ra.h != nil {
			ra.h.Write(b[:n])
		}
		if !reading {
			ra.free <- b
		}
		if err != nil {
			if err != io.EOF && err != io.ErrUnexpectedEOF {
				ra.err, ra.hashed.err = err, err
			} else if ra.h != nil {
				ra.hashed.sum = ra.h.Sum(nil)
			}
			return
		}
	}
}

func (ra *readAhead) Read(p []byte) (int, error) {
	for len(ra.left) == 0 {
		if ra.buf != nil {
			ra.free <- ra.buf[:cap(ra.buf)]
			ra.buf = nil
		}
		b, ok := <-ra.full
		if !ok {
			if ra.err != nil {
				return 0, ra.err
			}
			return 0, io.EOF
		}
		ra.buf, ra.left = b, b
	}
	n := copy(p, ra.left)
	ra.left = ra.left[n:]
	return n, nil
}

// stopReading says that the reader reads no more (Read is not called
// again): the goroutine goes on to the end of the file for the hash.
func (ra *readAhead) stopReading() {
	if ra.buf != nil {
		ra.free <- ra.buf[:cap(ra.buf)] // never blocks: free has room for every chunk
		ra.buf, ra.left = nil, nil
	}
	close(ra.detach)
}

// release says that nothing but the goroutine reads the file any more:
// closer may be closed at the end. It is called once.
func (ra *readAhead) release() { close(ra.released) }

// Close stops the reading goroutine and waits for it.
func (ra *readAhead) Close() {
	close(ra.stop)
	<-ra.done
}

// refusal makes the refusals of the prior close at path.
func refusal(path string) func(format string, args ...any) error {
	return func(format string, args ...any) error {
		return &accounting.PriorError{Msg: "prior close " + path + ": " + fmt.Sprintf(format, args...)}
	}
}

// priorJSONError is a refusal of a file that is not JSON, or whose
// members are not of their kind: an accounting.PriorError that keeps
// where the file goes wrong.
type priorJSONError struct {
	*accounting.PriorError
	where *jsonError
}

func (e *priorJSONError) Unwrap() []error { return []error{e.PriorError, e.where} }

// priorMembers are the members of valuation.json's records that a later
// close reads (into accounting.Prior, through addGrant, book, addInput and
// prior); the reader skips the others, checking only that they are JSON.
// A record type not listed (a period, an event, a remeasurement, a
// modification) is read whole. To read one more member, add its json
// name here and use its field.
var priorMembers = map[reflect.Type][]string{
	reflect.TypeFor[Company](): {"name", "currency"},
	reflect.TypeFor[Grant](): {"grant_id", "instrument", "grant_date", "measurement_date", "expiry_date", "valuation_key",
		"value_status", "classification", "tranches"},
	reflect.TypeFor[Tranche](): {"index", "vest_date", "shares", "risk_free_rate", "fair_value_per_share", "error_estimate",
		"expected_term_years", "steps", "bsm_simplified_value", "simplified_term_years", "simplified_rate"},
	reflect.TypeFor[Expense](): {"periods", "unrecognized_cost", "period_start", "attribution", "forfeitures",
		"pre_vesting_forfeiture_rate", "framework", "financing_warrants"},
	reflect.TypeFor[ExpenseGrant](): {"grant_id", "service_start", "cost", "cumulative", "unrecognized_cost",
		"liability_at_period_end", "reclassified_to_equity_cumulative", "outstanding_at_period_end", "events", "remeasurements", "tranches"},
	reflect.TypeFor[ExpenseTranche](): {"index", "fair_value_per_share", "grant_date_fair_value_per_share", "cumulative"},
	reflect.TypeFor[FinancingWarrant](): {"grant_id", "liability_at_period_end", "reclassified_to_equity_cumulative",
		"outstanding", "events", "remeasurements"},
	reflect.TypeFor[Assumption](): {"grant_id", "name", "value", "ref", "source", "effective_date", "term"},
}

// priorPlans are the decoding plans of the prior reader, compiled once.
var priorPlans = sync.OnceValue(func() *decodePlans {
	return newDecodePlans(priorMembers, reflect.TypeFor[*int](), reflect.TypeFor[*Tool](), reflect.TypeFor[Date](),
		reflect.TypeFor[Company](), reflect.TypeFor[Grant](), reflect.TypeFor[Expense](), reflect.TypeFor[ExpenseGrant](),
		reflect.TypeFor[[]Modification](), reflect.TypeFor[Assumption]())
})

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
	plans         *decodePlans
	studies       pricing.Studies                    // the checks it filed
	trancheBlock  slab.Slab[accounting.PriorTranche] // the grants' tranches are cut from it

	// Reading on two cores (prior_tail.go): tailRd reads the tail of the
	// file beside this reader. tail marks the reader of a tail: it keeps
	// the inputs for later (inputs), notes which members it read (seen),
	// and stops at one it cannot read on its own (stopped).
	tailRd       *tailRead
	ahead        *readAhead // the file as the reader reads it, and its hash
	tail         bool
	stopped      bool
	seen         uint8
	inputs       blocks[Assumption]
	held         blocks[heldAttribution]
	heldTranches blocks[heldTranche] // theirs, one after another
}

// The members of the top level a tail's reader notes (priorReader.seen).
const (
	seenExpense uint8 = 1 << iota
	seenModifications
	seenSensitivity
	seenConvergence
	seenCrossChecks
)

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

// read reads the file's top-level object.
func (r *priorReader) read(s *scanner) error {
	if c := s.peek(); c != '{' && c != 0 {
		s.kindError("an object")
	} else {
		s.expect('{', "an object")
	}
	return r.members(s, 0)
}

// members reads the members of the top-level object, n of them read
// before, and checks that the file ends after it. A tail's reader starts
// at a member's name.
func (r *priorReader) members(s *scanner, n int) error {
	decode := func(v any) { r.plans.decode(s, v) }
	for s.next(&n, '}') {
		if r.tailRd != nil {
			if took, err := r.takeTail(s); took {
				return err
			}
		}
		key := s.key()
		if r.tail {
			switch string(key) {
			case "schema_version", "tool", "valuation_date", "company", "grants":
				// What follows depends on them: the reader reads on.
				r.stopped = true
				return nil
			}
		}
		switch string(key) {
		case "schema_version":
			decode(&r.schemaVersion)
		case "tool":
			decode(&r.tool)
		case "valuation_date":
			decode(&r.valuationDate)
		case "company":
			decode(&r.company)
		case "grants":
			if err := r.checkHead(); err != nil {
				return err
			}
			// One Grant read after another: addGrant copies what it
			// keeps.
			var g Grant
			grant := r.plans.of(reflect.TypeFor[Grant]())
			if !s.open('[') {
				break
			}
			for n := 0; s.next(&n, ']'); {
				g = Grant{Tranches: g.Tranches[:0]}
				grant.decode(s, unsafe.Pointer(&g))
				if s.err != nil {
					break
				}
				r.addGrant(&g)
			}
		case "expense":
			// The grant-date values it holds are read by its format
			// (a tail's reader leaves the check to the reader).
			if !r.tail {
				if err := r.checkHead(); err != nil {
					return err
				}
			}
			r.readExpense(s)
			r.seen |= seenExpense
		case "modifications":
			decode(&r.modifications)
			r.seen |= seenModifications
		case "sensitivity":
			var ss []Sensitivity
			decode(&ss)
			r.studies.Sensitivity = sensitivityStudy(ss)
			r.seen |= seenSensitivity
		case "convergence":
			var c *Convergence
			decode(&c)
			r.studies.Convergence = convergenceStudy(c)
			r.seen |= seenConvergence
		case "cross_checks":
			var cs []CrossCheck
			decode(&cs)
			r.studies.MonteCarlo = monteCarloStudy(cs)
			r.seen |= seenCrossChecks
		case "assumptions":
			var a Assumption
			input := r.plans.of(reflect.TypeFor[Assumption]())
			if !s.open('[') {
				break
			}
			for n := 0; s.next(&n, ']'); {
				a = Assumption{}
				input.decode(s, unsafe.Pointer(&a))
				if s.err != nil {
					break
				}
				r.addInput(&a)
			}
		default:
			s.skip()
		}
	}
	s.end()
	return s.err
}

// readExpense reads the expense object, its by_grant list grant by
// grant.
func (r *priorReader) readExpense(s *scanner) {
	if s.null() {
		r.expense = nil
		return
	}
	if !s.open('{') {
		return
	}
	e := &Expense{}
	pl := r.plans.of(reflect.TypeFor[Expense]())
	grant := r.plans.of(reflect.TypeFor[ExpenseGrant]())
	for n := 0; s.next(&n, '}'); {
		key := s.key()
		if string(key) == "by_grant" {
			if e.ExpenseDetail == nil {
				e.ExpenseDetail = &ExpenseDetail{}
			}
			if !s.open('[') {
				continue
			}
			var tranches []ExpenseTranche
			for n := 0; s.next(&n, ']'); {
				// A fresh record each (book keeps its remeasurements)
				// but for the array of its tranches, which book copies
				// from.
				eg := ExpenseGrant{Tranches: tranches[:0]}
				grant.decode(s, unsafe.Pointer(&eg))
				if s.err != nil {
					break
				}
				tranches = eg.Tranches
				r.book(&eg)
			}
			continue
		}
		if i, ok := pl.index[string(key)]; ok {
			pl.member(s, i, unsafe.Pointer(e))
		} else {
			s.skip()
		}
	}
	r.expense = e
}

// addGrant keeps what a later close needs of grant g's valuation.
func (r *priorReader) addGrant(g *Grant) {
	pg := accounting.PriorGrant{ID: g.ID, Instrument: grants.Instrument(g.Instrument), Liability: g.Instrument == Warrant && g.Classification == string(grants.Liability),
		GrantDate: g.GrantDate.Time(), MeasurementDate: g.MeasurementDate.Time(), ExpiryDate: g.ExpiryDate.Time(), ValuationKey: g.ValuationKey,
		Status: pricing.Status(g.ValueStatus)}
	if len(g.Tranches) > 0 {
		// Read already, not a count the file claims.
		pg.Tranches = r.trancheBlock.Take(len(g.Tranches))
	}
	for k, t := range g.Tranches {
		pg.Tranches[k] = accounting.PriorTranche{Index: t.Index, VestDate: t.VestDate.Time(), Shares: t.Shares,
			Result:       valuation.Result{Value: t.FairValuePerShare, ErrorEstimate: t.ErrorEstimate, ExpectedTermYears: t.ExpectedTermYears, Steps: t.Steps},
			BSM:          pricing.Comparison{Value: t.BSMSimplifiedValue, ExpectedTermYears: t.SimplifiedTerm},
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
	if r.tail {
		r.hold(eg) // its grant is not known yet
		return
	}
	i, ok := r.index[eg.GrantID]
	if !ok {
		c := *eg
		c.Tranches = append([]ExpenseTranche(nil), eg.Tranches...)
		r.pending = append(r.pending, c)
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
		b := &eg.Tranches[k]
		if b.Index != pg.Tranches[k].Index {
			r.bad[i] = fmt.Sprintf("grant %s: tranche %d valued, %d attributed in its place", pg.ID, pg.Tranches[k].Index, b.Index)
			return
		}
		pg.Tranches[k].Cumulative = b.Cumulative
		// What a row left out is the grant's tranche's (version 3), or
		// was never left out (0 as encoding/json reads a missing member).
		fv, gd := b.FairValuePerShare, b.GrantDateFairValuePerShare
		if *r.schemaVersion >= 3 {
			if math.IsNaN(fv) {
				fv = pg.Tranches[k].Result.Value
			}
			if math.IsNaN(gd) {
				gd = fv
			}
		}
		if math.IsNaN(fv) {
			fv = 0
		}
		if math.IsNaN(gd) {
			gd = 0
		}
		b.FairValuePerShare, b.GrantDateFairValuePerShare = fv, gd
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
	if r.tail {
		r.inputs.add(*a) // its grant is not known yet
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

// sensitivityStudy, convergenceStudy and monteCarloStudy are the checks
// a close filed (its sensitivity cases, convergence study and Monte Carlo
// cross-checks), for a rerun to reuse (pricing.Studies).
func sensitivityStudy(ss []Sensitivity) []pricing.Sensitivity {
	var out []pricing.Sensitivity
	for _, s := range ss {
		ps := pricing.Sensitivity{Input: s.Input, Label: s.Label, Unit: s.Unit}
		for _, pt := range s.Points {
			ps.Points = append(ps.Points, pricing.SensitivityPoint{Shift: pt.Shift, Label: pt.Label, FairValueTotal: pt.FairValueTotal, Change: pt.Change, SampleTotal: pt.SampleFairValueTotal})
		}
		out = append(out, ps)
	}
	return out
}

func convergenceStudy(c *Convergence) *pricing.Convergence {
	if c == nil {
		return nil
	}
	pc := &pricing.Convergence{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex,
		Auto: valuation.Result{Value: c.AutoValue, ErrorEstimate: c.AutoError, Steps: c.AutoSteps}}
	for _, pt := range c.Points {
		pc.Points = append(pc.Points, pricing.ConvergencePoint{Steps: pt.Steps, Value: pt.Value})
	}
	return pc
}

func monteCarloStudy(cs []CrossCheck) []pricing.MonteCarloCheck {
	var out []pricing.MonteCarloCheck
	for _, c := range cs {
		if c.Method == "mc" {
			out = append(out, pricing.MonteCarloCheck{GrantID: c.GrantID, TrancheIndex: c.TrancheIndex, Lattice: c.Lattice, LatticeError: c.LatticeError,
				Result: valuation.Result{Value: c.Value, ErrorEstimate: c.StdErr, Steps: c.Paths}, Seed: c.Seed, Z: c.Z})
		}
	}
	return out
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
