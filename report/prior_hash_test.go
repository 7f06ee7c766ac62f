package report

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"os"
	"path/filepath"
	"testing"
	"testing/iotest"

	"grantworth/grants/accounting"
)

// priorOfChunks is a valuation.json of several read-ahead chunks on each
// side of its tail, so that the hash reads on alone after the reader is
// at the tail.
func priorOfChunks(t *testing.T) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := WriteJSON(&b, ledgerModel(250)); err != nil {
		t.Fatal(err)
	}
	data := b.Bytes()
	if split := bytes.Index(data, tailMarker); split < 3*readAheadChunk || len(data)-split < 3*readAheadChunk {
		t.Fatalf("a file of %d bytes whose tail starts at %d", len(data), split)
	}
	return data
}

// The prior's SHA256 is that of the file's bytes (crypto/sha256 over the
// whole file), also when the file is read on two cores and the hash
// runs on after the reader (ReadPriorHashing, then Hashed).
func TestReadPriorHashIsTheFiles(t *testing.T) {
	for name, data := range map[string][]byte{"small": smallPrior(), "of chunks": priorOfChunks(t)} {
		sum := sha256.Sum256(data)
		want := hex.EncodeToString(sum[:])
		path := filepath.Join(t.TempDir(), "valuation.json")
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
		taken := tailsTaken.Load()
		p, err := ReadPrior(path)
		if err != nil {
			t.Fatal(err)
		}
		if p.SHA256 != want {
			t.Errorf("%s: ReadPrior's hash %s, the file's %s", name, p.SHA256, want)
		}
		q, err := ReadPriorHashing(path)
		if err != nil {
			t.Fatal(err)
		}
		if err := q.Hashed(); err != nil || q.SHA256 != want {
			t.Errorf("%s: ReadPriorHashing's hash %s (%v), the file's %s", name, q.SHA256, err, want)
		}
		if tailsTaken.Load() != taken+2 {
			t.Errorf("%s: the file was not read on two cores", name)
		}
		// A stream read alone, and one a byte at a time.
		for _, rd := range []*accounting.Prior{mustRead(t, data, false), mustRead(t, data, true)} {
			if rd.SHA256 != want {
				t.Errorf("%s: read from a stream, hash %s, the file's %s", name, rd.SHA256, want)
			}
		}
	}
}

func mustRead(t *testing.T, data []byte, byteAtATime bool) *accounting.Prior {
	t.Helper()
	rd := iotest.OneByteReader(bytes.NewReader(data))
	if !byteAtATime {
		rd = bytes.NewReader(data)
	}
	p, err := readPrior(rd, "prior", "prior", scanBuffer)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// lateFailure reads data as a file whose reading fails at byte at; its
// second view (ReadAt, which the tail reads) does not.
type lateFailure struct {
	*bytes.Reader
	at int64
}

var errLate = errors.New("the disk failed late")

func (l *lateFailure) Read(p []byte) (int, error) {
	off := l.Size() - int64(l.Len())
	if off >= l.at {
		return 0, errLate
	}
	if int64(len(p)) > l.at-off {
		p = p[:l.at-off]
	}
	return l.Reader.Read(p)
}

// A file that fails to read after the reader and the tail have read
// what they need (the hash reads on alone) is refused all the same,
// with the read error: by readPrior, and by the Prior's Hashed after
// readPriorHashing.
func TestReadPriorFailsLate(t *testing.T) {
	data := priorOfChunks(t)
	at := int64(bytes.Index(data, tailMarker) + 2*readAheadChunk)
	taken := tailsTaken.Load()
	if _, err := readPrior(&lateFailure{bytes.NewReader(data), at}, "prior", "prior", scanBuffer); !errors.Is(err, errLate) {
		t.Fatalf("a file that fails late: %v", err)
	}
	p, err := readPriorHashing(&lateFailure{bytes.NewReader(data), at}, nil, "prior", "prior", scanBuffer)
	if err != nil {
		t.Fatalf("read to the tail: %v", err)
	}
	if tailsTaken.Load() != taken+2 {
		t.Fatalf("the tail was not taken: the reading failed before the parsers finished")
	}
	for range 2 {
		if err := p.Hashed(); !errors.Is(err, errLate) || p.SHA256 != "" {
			t.Fatalf("Hashed: %v, hash %q", err, p.SHA256)
		}
	}
	// Failing before the tail, the reader finds it.
	if _, err := readPriorHashing(&lateFailure{bytes.NewReader(data), 1000}, nil, "prior", "prior", scanBuffer); !errors.Is(err, errLate) {
		t.Fatalf("a file that fails early: %v", err)
	}
}
