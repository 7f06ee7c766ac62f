package report

import (
	"io"
	"testing"
	"time"
)

// countWriter counts the bytes written to it.
type countWriter struct{ n int64 }

func (c *countWriter) Write(p []byte) (int, error) { c.n += int64(len(p)); return len(p), nil }

// The workbook of a 10,000-grant ledger (bigModel) with its CPU time per
// workbook (all threads, the compressor's and the collector's included:
// steadier than the wall clock on a shared machine, and what counts when
// every core is busy) and its size; e.g. go test ./report -run - -bench
// WorkbookCPU -benchtime 1x -count 5.
func BenchmarkWorkbookCPU(b *testing.B) {
	m := bigModel(10000)
	var size countWriter
	b.ReportAllocs()
	b.ResetTimer()
	cpu := cpuTime()
	for b.Loop() {
		size.n = 0
		if err := WriteWorkbook(&size, m); err != nil {
			b.Fatal(err)
		}
	}
	if d := (cpuTime() - cpu) / time.Duration(b.N); d > 0 {
		b.ReportMetric(float64(d.Microseconds())/1e3, "cpu-ms/op")
	}
	b.ReportMetric(float64(size.n)/1e6, "MB")
}

var _ io.Writer = (*countWriter)(nil)
