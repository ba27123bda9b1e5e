package remap

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// BenchmarkVerticalApply times vertical maps on 100 000 columns × 60 layers (a 1/4°-class
// global mesh with a typical layer count), level-fastest: 6·10⁶ values per field, 48 MB.
// Target: 60 layers of other stretched levels over the same column; for interface
// targets 61. "mass" supplies a layer mass per column (the terrain-following/mass-based
// path); "coordinate" uses the stored matrix. "factored" applies H ⊗ V with H a
// 4-neighbour ring average on the 100 000 columns.
func BenchmarkVerticalApply(b *testing.B) {
	const ncol, nlev = 100_000, 60
	rng := rand.New(rand.NewPCG(51, 52))
	src := mustLevels(b, grids.Normalized, nlev, 0, 1, 3)
	dst := mustLevels(b, grids.Normalized, nlev, 0, 1, 2)
	mass := make([]float64, ncol*nlev)
	for i := range mass {
		mass[i] = 0.5 + rng.Float64()
	}
	cases := []struct {
		meth   VerticalMethod
		sl, dl grids.VLocation
	}{
		{VerticalLinear, grids.Interface, grids.Layer},
		{VerticalConservative, grids.Layer, grids.Layer},
		{VerticalConservative, grids.Interface, grids.Layer},
		{VerticalPPM, grids.Layer, grids.Layer},
		{VerticalPPMLimited, grids.Layer, grids.Layer},
	}
	for _, c := range cases {
		m := mustMap(b, src, c.sl, dst, c.dl, c.meth, nil)
		x := make([]float64, ncol*m.NSource())
		for i := range x {
			x[i] = rng.NormFloat64()
		}
		y := make([]float64, ncol*m.NTarget())
		for _, withMass := range []bool{false, true} {
			if withMass && c.meth == VerticalLinear {
				continue // the measure does not enter linear maps
			}
			var ms []float64
			name := "coordinate"
			if withMass {
				ms, name = mass, "mass"
			}
			b.Run(fmt.Sprintf("%v/%v-%v/%s", c.meth, c.sl, c.dl, name), func(b *testing.B) {
				b.SetBytes(int64(8 * (len(x) + len(y))))
				for b.Loop() {
					if err := m.ApplyColumnsTo(y, x, ms); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
	// Factored H ⊗ V, H a ring average over 4 neighbours (nnz 4 per row).
	var ts []weights.Triplet
	for i := 0; i < ncol; i++ {
		for _, d := range []int{-2, -1, 1, 2} {
			ts = append(ts, weights.Triplet{Row: int32(i), Col: int32((i + d + ncol) % ncol), Value: 0.25})
		}
	}
	h := weights.FromTriplets(ncol, ncol, ts)
	v := mustMap(b, src, grids.Layer, dst, grids.Layer, VerticalPPM, nil).W
	x := make([]float64, ncol*nlev)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	y := make([]float64, ncol*nlev)
	for _, layout := range []Layout{LevelFastest, ColumnFastest} {
		f := &Factored{H: h, V: v, Layout: layout}
		b.Run("factored-ppm/"+layout.String(), func(b *testing.B) {
			b.SetBytes(int64(8 * (len(x) + len(y))))
			for b.Loop() {
				f.ApplyTo(y, x)
			}
		})
	}
}
