package grids_test

import (
	"fmt"
	"testing"

	"github.com/colbridge/colbridge/grids"
)

// BenchmarkCubedSphere builds the equiangular cubed sphere with full geometry (areas,
// centroids, edges, normals, dual areas). Goal (issue 2): N = 384 (884,736 cells) in ≤ 2 s.
func BenchmarkCubedSphere(b *testing.B) {
	for _, n := range []int{96, 384} {
		b.Run(fmt.Sprintf("N=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				m, err := grids.NewCubedSphere(n, 0)
				if err != nil {
					b.Fatal(err)
				}
				if m.NumCells() != 6*n*n {
					b.Fatal("wrong size")
				}
			}
			b.ReportMetric(float64(6*n*n), "cells")
		})
	}
}

// BenchmarkLatLon builds a 0.25° latitude–longitude grid (1440 × 720).
func BenchmarkLatLon(b *testing.B) {
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := grids.NewLatLon(grids.LatLonSpec{NLon: 1440, NLat: 720}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkIcosahedralDual builds the hexagonal mesh of level 7 (163,842 cells).
func BenchmarkIcosahedralDual(b *testing.B) {
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := grids.NewIcosahedralDual(7, 0); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkUGRIDWriteRead writes the cubed sphere N=384 (884,736 cells) as UGRID NetCDF and
// reads it back. Goal (issue 2): ≤ 3 s each.
func BenchmarkUGRIDWriteRead(b *testing.B) {
	m, err := grids.NewCubedSphere(384, 0)
	if err != nil {
		b.Fatal(err)
	}
	path := b.TempDir() + "/c384.nc"
	b.Run("write", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			if err := grids.WriteUGRID(path, m); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("read", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			r, err := grids.ReadMesh(path)
			if err != nil {
				b.Fatal(err)
			}
			if r.NumCells() != m.NumCells() {
				b.Fatal("wrong size")
			}
		}
	})
}
