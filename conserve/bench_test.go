package conserve

import (
	"fmt"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// bandedMap returns a synthetic n × n map with a band of width entries per row:
// W_{i,(i+d) mod n} = 1/width, unit measures, so it is exactly conservative and
// consistent (weights a power of two apart from width = 8 × unit).
func bandedMap(n, width int) *weights.Map {
	rowStart := make([]int64, n+1)
	col := make([]int32, 0, n*width)
	val := make([]float64, 0, n*width)
	for i := 0; i < n; i++ {
		// Columns in increasing order within the row.
		start := len(col)
		for d := 0; d < width; d++ {
			col = append(col, int32((i+d)%n))
			val = append(val, 1/float64(width))
		}
		row := col[start:]
		for a := 1; a < len(row); a++ {
			for b := a; b > 0 && row[b] < row[b-1]; b-- {
				row[b], row[b-1] = row[b-1], row[b]
			}
		}
		rowStart[i+1] = int64(len(col))
	}
	w := &weights.CSR{Rows: n, Cols: n, RowStart: rowStart, ColIndex: col, Values: val}
	side := weights.Side{Location: grids.Location{H: grids.Cell}, Size: n, Measure: ones(n)}
	return &weights.Map{W: w, Source: side, Target: side, Method: "synthetic-band"}
}

// BenchmarkAudit audits banded maps without the spectral analyses (the matrix checks, the
// test fields "constant" and "random", the adjoint and both round trips). The largest
// size has 2²⁰ rows × 4 = 4.2 million entries, the goal being ≤ 5 s for the whole audit
// including reading.
func BenchmarkAudit(b *testing.B) {
	for _, n := range []int{1 << 16, 1 << 20} {
		b.Run(fmt.Sprintf("entries=%d", 4*n), func(b *testing.B) { benchmarkAudit(b, n, 4) })
	}
}

func benchmarkAudit(b *testing.B, n, width int) {
	m := bandedMap(n, width)
	r, err := Audit(m, Options{Thresholds: StrictThresholds()})
	if err != nil {
		b.Fatal(err)
	}
	if !r.Passed || r.Entries != n*width {
		b.Fatalf("banded map failed its audit: %+v", r.Failures)
	}
	b.ResetTimer()
	for range b.N {
		if _, err := Audit(m, Options{Thresholds: StrictThresholds()}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFourier is the exact Fourier analysis of the 2:1 coarsening round trip, with
// the symbol, on a 32×32 periodic plane (1024 modes).
func BenchmarkFourier(b *testing.B) {
	fine, coarse := planeQuads(b, 32), planeQuads(b, 16)
	w := coarsen2(16)
	wa := Adjoint(w, fine.CellArea, coarse.CellArea)
	b.ResetTimer()
	for range b.N {
		if _, err := FourierAnalysis(fine, fine.CellArea, []*weights.CSR{wa, w}, w, wa, FourierOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}
