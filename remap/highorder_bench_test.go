package remap

import (
	"fmt"
	"testing"

	"github.com/colbridge/colbridge/grids"
)

// BenchmarkHighOrder builds conservative maps of order 3 and 4 from the cubed sphere
// N=96 (55,296 cells) to the 1° lat–lon grid (360 × 180 = 64,800 cells), overlaps
// included. It checks conservation and consistency once before timing.
func BenchmarkHighOrder(b *testing.B) {
	src, err := grids.NewCubedSphere(96, 0)
	mustMesh(b, src, err)
	tgt, err := grids.NewLatLon(grids.LatLonSpec{NLon: 360, NLat: 180})
	mustMesh(b, tgt, err)
	for _, order := range []int{3, 4} {
		b.Run(fmt.Sprintf("C96toLL1/order%d", order), func(b *testing.B) {
			opt := Options{Method: Conservative, Order: order}
			m, err := Build(src, tgt, opt)
			if err != nil {
				b.Fatal(err)
			}
			if c, k := defects(m); c > highTol || k > highTol {
				b.Fatalf("conservation defect %.3g, consistency defect %.3g", c, k)
			}
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				m, err = Build(src, tgt, opt)
				if err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(m.W.NNZ()), "entries")
		})
	}
}
