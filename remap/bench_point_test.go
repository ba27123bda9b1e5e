package remap

import (
	"testing"

	"github.com/colbridge/colbridge/grids"
)

// benchmarkPointMap builds a point map from the cubed sphere N=n to the lat–lon grid of
// 4n × 2n cells (N = 96: 55,296 sources, 73,728 targets).
func benchmarkPointMap(b *testing.B, method string, order, n int) {
	src, err := grids.NewCubedSphere(n, 0)
	if err != nil {
		b.Fatal(err)
	}
	tgt, err := grids.NewLatLon(grids.LatLonSpec{NLon: 4 * n, NLat: 2 * n, Lon0: -180})
	if err != nil {
		b.Fatal(err)
	}
	// Check before timing: every target covered, rows sum to 1.
	m, err := Build(src, tgt, Options{Method: method, Order: order})
	if err != nil {
		b.Fatal(err)
	}
	if rs, _ := rowSumDefect(m); rs > roundTol {
		b.Fatalf("row-sum defect %.3g", rs)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Build(src, tgt, Options{Method: method, Order: order}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(tgt.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "targets/s")
}

func BenchmarkInterpolateC96(b *testing.B) { benchmarkPointMap(b, Interpolate, 1, 96) }
func BenchmarkNearestC96(b *testing.B)     { benchmarkPointMap(b, Nearest, 0, 96) }

// BenchmarkInterpolateLatLonSource interpolates from the 1° lat–lon grid (bilinear and
// polar stencils) to the cubed sphere N=96.
func BenchmarkInterpolateLatLonSource(b *testing.B) {
	src, err := grids.NewLatLon(grids.LatLonSpec{NLon: 360, NLat: 180, Lon0: -180})
	if err != nil {
		b.Fatal(err)
	}
	tgt, err := grids.NewCubedSphere(96, 0)
	if err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Build(src, tgt, Options{Method: Interpolate, Order: 1}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(tgt.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "targets/s")
}
