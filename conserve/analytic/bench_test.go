package analytic

import (
	"fmt"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// BenchmarkSphericalTriangleIntegral times one octant-sized triangle of the
// smooth field at several quadrature orders (n² evaluations each).
func BenchmarkSphericalTriangleIntegral(b *testing.B) {
	for _, n := range []int{4, 8, 16, 32} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			benchmarkTriangle(b, n)
		})
	}
}

func benchmarkTriangle(b *testing.B, n int) {
	a, c, d := r3.Vec{X: 1}, r3.Vec{Y: 1}, r3.Vec{Z: 1}
	if got := SphericalTriangleIntegral(a, c, d, one, 24); got < 1.5 || got > 1.6 {
		b.Fatalf("octant area %v", got)
	}
	for b.Loop() {
		SphericalTriangleIntegral(a, c, d, Smooth, n)
	}
}

// BenchmarkLatLonCellIntegral times one cell of the smooth field.
func BenchmarkLatLonCellIntegral(b *testing.B) {
	for _, n := range []int{4, 8, 16} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			for b.Loop() {
				LatLonCellIntegral(0, 0.1, 0.2, 0.3, Smooth, n)
			}
		})
	}
}
