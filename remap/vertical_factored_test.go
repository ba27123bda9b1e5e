package remap

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// randomCSR returns a rows × cols matrix with up to k random entries per row.
func randomCSR(rng *rand.Rand, rows, cols, k int) *weights.CSR {
	var ts []weights.Triplet
	for i := 0; i < rows; i++ {
		for range k {
			ts = append(ts, weights.Triplet{Row: int32(i), Col: int32(rng.IntN(cols)), Value: rng.NormFloat64()})
		}
	}
	return weights.FromTriplets(rows, cols, ts)
}

// kronecker returns the expanded H ⊗ V in the given layout (rows and columns numbered as
// the fields are stored): the oracle ApplyFactoredTo must match (definition of the
// Kronecker product; common practice).
func kronecker(h, v *weights.CSR, layout Layout) *weights.CSR {
	idx := func(col, lev, ncol, nlev int) int32 {
		if layout == LevelFastest {
			return int32(col*nlev + lev)
		}
		return int32(lev*ncol + col)
	}
	var ts []weights.Triplet
	for i := 0; i < h.Rows; i++ {
		for p := h.RowStart[i]; p < h.RowStart[i+1]; p++ {
			j := int(h.ColIndex[p])
			for t := 0; t < v.Rows; t++ {
				for q := v.RowStart[t]; q < v.RowStart[t+1]; q++ {
					s := int(v.ColIndex[q])
					ts = append(ts, weights.Triplet{
						Row: idx(i, t, h.Rows, v.Rows), Col: idx(j, s, h.Cols, v.Cols),
						Value: h.Values[p] * v.Values[q],
					})
				}
			}
		}
	}
	return weights.FromTriplets(h.Rows*v.Rows, h.Cols*v.Cols, ts)
}

// TestFactoredMatchesKronecker: applying horizontal ⊗ vertical factored equals applying the
// explicitly expanded Kronecker product, in both layouts, with either pass first (the
// sizes are chosen so that both orders are taken), and a reused Factored gives the same
// result with a NaN-filled destination.
func TestFactoredMatchesKronecker(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	src := mustLevels(t, grids.Normalized, 9, 0, 1, 2)
	dst := randomLevels(t, rng, 6, 0, 1)
	v := mustMap(t, src, grids.Layer, dst, grids.Interface, VerticalPPM, nil).W
	cases := []struct {
		name       string
		rows, cols int
		k          int
	}{
		{"coarsening horizontal (vertical first)", 5, 40, 8},
		{"refining horizontal (horizontal first)", 40, 5, 1},
		{"square", 13, 13, 3},
	}
	for _, c := range cases {
		h := randomCSR(rng, c.rows, c.cols, c.k)
		for _, layout := range []Layout{LevelFastest, ColumnFastest} {
			x := make([]float64, h.Cols*v.Cols)
			for i := range x {
				x[i] = rng.NormFloat64()
			}
			want := make([]float64, h.Rows*v.Rows)
			kronecker(h, v, layout).ApplyTo(want, x)
			got := make([]float64, len(want))
			ApplyFactoredTo(got, x, h, v, layout)
			f := &Factored{H: h, V: v, Layout: layout}
			again := make([]float64, len(want))
			for round := 0; round < 2; round++ {
				for i := range again {
					again[i] = math.NaN()
				}
				f.ApplyTo(again, x)
			}
			var scale float64
			for _, w := range want {
				scale = math.Max(scale, math.Abs(w))
			}
			for i := range want {
				// Both orders are exact in real arithmetic; they round differently by a
				// few ulps of the largest term.
				if d := math.Abs(got[i] - want[i]); d > 1e-13*scale || again[i] != got[i] {
					t.Fatalf("%s %v: entry %d: factored %.16g (reused %.16g), expanded %.16g", c.name, layout, i, got[i], again[i], want[i])
				}
			}
		}
	}
}
