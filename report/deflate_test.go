package report

import (
	"bytes"
	"compress/flate"
	"fmt"
	"io"
	"math/rand/v2"
	"testing"
)

// parallelDeflate's output inflates back to its input (with the standard
// library's reader), and is the same bytes however the input was split
// into writes and however the pieces were scheduled.
func TestParallelDeflateRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{0, 1, 1000, deflateChunk - 1, deflateChunk, deflateChunk + 1, 3*deflateChunk + deflateChunk/2} {
		// Sheet-like text: repetitive, with numbers that vary.
		var in bytes.Buffer
		for in.Len() < n {
			fmt.Fprintf(&in, `<c r="P%d" s="11"><v>%v</v></c>`, in.Len(), rng.Float64())
		}
		src := in.Bytes()[:n]
		var outs [][]byte
		for _, step := range []int{n + 1, 4096, 7919} {
			var out bytes.Buffer
			w := newParallelDeflate(&out)
			for p := src; len(p) > 0; {
				k := min(step, len(p))
				if _, err := w.Write(p[:k]); err != nil {
					t.Fatal(err)
				}
				p = p[k:]
			}
			if err := w.Close(); err != nil {
				t.Fatal(err)
			}
			got, err := io.ReadAll(flate.NewReader(bytes.NewReader(out.Bytes())))
			if err != nil {
				t.Fatalf("%d bytes in writes of %d: inflate: %v", n, step, err)
			}
			if !bytes.Equal(got, src) {
				t.Fatalf("%d bytes in writes of %d: inflated %d bytes that differ from the input", n, step, len(got))
			}
			outs = append(outs, out.Bytes())
		}
		for i := 1; i < len(outs); i++ {
			if !bytes.Equal(outs[i], outs[0]) {
				t.Errorf("%d bytes: the compressed bytes depend on how the input was written", n)
			}
		}
	}
}
