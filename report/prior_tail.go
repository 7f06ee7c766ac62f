package report

import (
	"bytes"
	"errors"
	"io"
	"sync/atomic"
)

// A large prior close is read on two cores: while the reader goes
// through the grants, a second goroutine reads the file from its expense
// attribution on (the members after it included) out of a second view of
// the same file (io.ReaderAt). The reader takes what it read when it
// comes to the expense member itself, at the top level of the file; the
// result is what reading on alone would give, errors (line and column)
// included, or else the tail's reading is dropped and the reader goes on
// alone:
//
//   - the tail starts where valuation.json as WriteJSON writes it has its
//     expense member, the line `  "expense": ` (a raw newline is always
//     white space outside strings, so the line is a member name at
//     whatever depth); the reader checks that it is at the top level
//     there, between members, before it takes anything;
//   - what the tail reads is kept apart and applied as it would have
//     been had the reader read it there (the attributions after the
//     grants, the inputs, the studies; priorReader.merge); a member whose
//     effect depends on what came before (the head, the grants) stops the
//     tail, and the reader reads the tail itself;
//   - a fault in the tail is reported at its line (the lines before the
//     tail, counted by the reader, added) and column (the tail starts on
//     a line of its own), unless the reader finds one before;
//   - the hash is still the reader's, over every byte in order: its
//     goroutine reads the rest of the file through once the reader is at
//     the tail, beside the tail's reading and what the caller does next.

// parallelPriorMin is the size from which a prior close is read on two
// cores (tests set it to 0).
var parallelPriorMin int64 = 8 << 20

// tailsTaken counts the tails read on a second core and taken (for the
// tests).
var tailsTaken atomic.Int64

// tailMarker is where the tail starts: the expense member of the top
// level, on a line of its own, as WriteJSON writes it. The tail's
// scanner starts at its quote.
var tailMarker = []byte("\n  \"expense\": ")

// tailQuote is the position of the quote in tailMarker.
const tailQuote = 3

// tailRead is the reading of a prior close's tail.
type tailRead struct {
	found chan struct{} // closed once split is known
	split int64         // offset of the quote of the expense member's name; -1: none
	done  chan struct{} // closed once r and err are final
	r     *priorReader  // what the tail holds
	err   error         // a fault in it (a *jsonError counts lines from the tail's first)
	stop  atomic.Bool
	ra    io.ReaderAt // the second view of the file, of size bytes
	size  int64
}

// startTail starts reading the tail of the file of size bytes at ra, if
// it is large enough to be worth a second core.
func startTail(ra io.ReaderAt, size int64, plans *decodePlans, bufSize int) *tailRead {
	if size < parallelPriorMin {
		return nil
	}
	t := &tailRead{found: make(chan struct{}), done: make(chan struct{}), split: -1, ra: ra, size: size}
	go func() {
		defer close(t.done)
		t.split = findTail(ra, size, &t.stop)
		close(t.found)
		if t.split < 0 || t.stop.Load() {
			return
		}
		rd := newReadAhead(io.NewSectionReader(ra, t.split, size-t.split), nil, nil)
		defer rd.Close()
		s := newScanner(&stoppable{rd, &t.stop}, bufSize)
		s.base, s.lineStart = t.split, t.split-tailQuote+1
		t.r = &priorReader{tail: true, plans: plans, index: map[string]int{}}
		t.err = t.r.members(s, 0)
	}()
	return t
}

// findTail is the offset of the tail's first byte (the quote after
// tailMarker), -1 if the file has no such line.
func findTail(ra io.ReaderAt, size int64, stop *atomic.Bool) int64 {
	buf := make([]byte, readAheadChunk)
	keep := len(tailMarker) - 1
	var off int64 // of buf[0]
	n := 0        // bytes in buf
	for off+int64(n) < size && !stop.Load() {
		m, err := ra.ReadAt(buf[n:], off+int64(n))
		n += m
		if i := bytes.Index(buf[:n], tailMarker); i >= 0 {
			return off + int64(i+tailQuote)
		}
		if err != nil && (err != io.EOF || m == 0) {
			return -1
		}
		if n > keep {
			copy(buf, buf[n-keep:n])
			off += int64(n - keep)
			n = keep
		}
	}
	return -1
}

// cancel stops the tail's reading and waits for its goroutine.
func (t *tailRead) cancel() {
	if t == nil {
		return
	}
	t.stop.Store(true)
	<-t.done
}

// stoppable reads rd until stop is set.
type stoppable struct {
	rd   io.Reader
	stop *atomic.Bool
}

var errTailStopped = errors.New("report: the tail's reading was stopped")

func (s *stoppable) Read(p []byte) (int, error) {
	if s.stop.Load() {
		return 0, errTailStopped
	}
	return s.rd.Read(p)
}

// takeTail is called by the reader at the top level of the file, where
// a member's name comes next in s: if the tail starts there, it takes
// what the tail read (the rest of the file goes on through the hash
// alone) and reports true, with the error reading on alone would have
// given. It reports false if the reader is to read on itself.
func (r *priorReader) takeTail(s *scanner) (bool, error) {
	t := r.tailRd
	s.peek()
	if s.err != nil {
		return false, nil
	}
	<-t.found
	if at := s.base + int64(s.pos); at != t.split {
		if at > t.split {
			// Past it: not at the top level there.
			t.cancel()
			r.tailRd = nil
		}
		return false, nil
	}
	// The expense member: the head is checked before it is read.
	if err := r.checkHead(); err != nil {
		t.cancel()
		return true, err
	}
	// The rest of the file goes through the hash alone (the Prior's
	// Hashed waits for it) while the tail is read; if the tail stops,
	// the reader reads on from the second view.
	r.ahead.stopReading()
	<-t.done
	r.tailRd = nil
	if t.r == nil || t.r.stopped {
		s.rd = io.NewSectionReader(t.ra, s.base+int64(len(s.buf)), t.size)
		return false, nil
	}
	if t.err != nil {
		var je *jsonError
		if errors.As(t.err, &je) {
			je.Line += s.lines + bytes.Count(s.buf[:s.pos], []byte{'\n'})
		}
		return true, t.err
	}
	r.merge(t.r)
	tailsTaken.Add(1)
	return true, nil
}

// merge applies what the tail read, in the order the reader would have
// read it there.
func (r *priorReader) merge(t *priorReader) {
	if t.seen&seenExpense != 0 {
		r.expense = t.expense
	}
	var tranches []ExpenseTranche
	ts := t.heldTranches.all()
	t.held.each(func(h *heldAttribution) {
		eg := h.eg
		if h.tranches >= 0 {
			tranches = tranches[:0]
			for k := 0; k < h.tranches; k++ {
				ht := ts()
				tranches = append(tranches, ExpenseTranche{Index: ht.index, Cumulative: ht.cumulative, FairValuePerShare: ht.value, GrantDateFairValuePerShare: ht.grantDate})
			}
			eg.Tranches = tranches
		}
		r.book(&eg)
	})
	if t.seen&seenModifications != 0 {
		r.modifications = t.modifications
	}
	if t.seen&seenSensitivity != 0 {
		r.studies.Sensitivity = t.studies.Sensitivity
	}
	if t.seen&seenConvergence != 0 {
		r.studies.Convergence = t.studies.Convergence
	}
	if t.seen&seenCrossChecks != 0 {
		r.studies.MonteCarlo = t.studies.MonteCarlo
	}
	t.inputs.each(r.addInput)
}

// heldTranche is what book reads of an expense tranche, held by a tail's
// reader until the grants are known.
type heldTranche struct {
	index                        int
	cumulative, value, grantDate float64
}

// heldAttribution is an attribution held by a tail's reader: the record
// without its tranches, and their number (-1: null).
type heldAttribution struct {
	eg       ExpenseGrant
	tranches int
}

// hold keeps attribution eg for the reader to book once the tail is
// taken; of its tranches, the figures book reads.
func (r *priorReader) hold(eg *ExpenseGrant) {
	h := heldAttribution{eg: *eg, tranches: -1}
	h.eg.Tranches = nil
	if eg.Tranches != nil {
		h.tranches = len(eg.Tranches)
		for _, t := range eg.Tranches {
			r.heldTranches.add(heldTranche{t.Index, t.Cumulative, t.FairValuePerShare, t.GrantDateFairValuePerShare})
		}
	}
	r.held.add(h)
}

// blocks is a list that grows a block at a time: what it holds is never
// copied as it grows (a tail holds a large ledger's attributions).
type blocks[T any] struct{ b [][]T }

const blockLen = 1024

func (l *blocks[T]) add(v T) {
	if n := len(l.b); n == 0 || len(l.b[n-1]) == blockLen {
		l.b = append(l.b, make([]T, 0, blockLen))
	}
	last := &l.b[len(l.b)-1]
	*last = append(*last, v)
}

// each calls f on every element, in order.
func (l *blocks[T]) each(f func(*T)) {
	for _, b := range l.b {
		for i := range b {
			f(&b[i])
		}
	}
}

// all returns a function that gives the elements in order, one a call.
func (l *blocks[T]) all() func() *T {
	i, j := 0, 0
	return func() *T {
		for j == len(l.b[i]) {
			i, j = i+1, 0
		}
		j++
		return &l.b[i][j-1]
	}
}
