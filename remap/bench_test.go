package remap

import (
	"testing"

	"github.com/colbridge/colbridge/grids"
)

// BenchmarkOverlapsC384toLL025 computes the supermesh of the cubed sphere N=384 (884,736
// cells) and the 0.25° lat–lon grid (1440 × 720): about 4.2 million pieces (issue 3).
func BenchmarkOverlapsC384toLL025(b *testing.B) {
	src, err := grids.NewCubedSphere(384, 0)
	if err != nil {
		b.Fatal(err)
	}
	tgt, err := grids.NewLatLon(grids.LatLonSpec{NLon: 1440, NLat: 720})
	if err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		o, err := ComputeOverlaps(src, tgt, OverlapOptions{})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(o.Len()), "pieces")
		b.ReportMetric(float64(o.Len())/b.Elapsed().Seconds()*float64(i+1), "pieces/s")
	}
}
