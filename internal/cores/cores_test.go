package cores

import (
	"fmt"
	"runtime"
	"testing"
)

// Chunks visits every index once, and returns the error a serial loop
// would stop at, whatever the cores and the chunk.
func TestChunks(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(4))
	for _, n := range []int{0, 1, 7, 128, 129, 1000} {
		for _, chunk := range []int{1, 3, 128} {
			seen := make([]int, n)
			err := Chunks(n, chunk, func(lo, hi int) error {
				for i := lo; i < hi; i++ {
					seen[i]++
				}
				return nil
			})
			if err != nil {
				t.Fatal(err)
			}
			for i, c := range seen {
				if c != 1 {
					t.Fatalf("n %d chunk %d: index %d visited %d times", n, chunk, i, c)
				}
			}
			if n < 2 {
				continue
			}
			bad := map[int]bool{n / 2: true, n - 1: true}
			err = Chunks(n, chunk, func(lo, hi int) error {
				for i := lo; i < hi; i++ {
					if bad[i] {
						return fmt.Errorf("failed at %d", i)
					}
				}
				return nil
			})
			if want := fmt.Sprintf("failed at %d", n/2); err == nil || err.Error() != want {
				t.Errorf("n %d chunk %d: error %v, want %s", n, chunk, err, want)
			}
		}
	}
}
