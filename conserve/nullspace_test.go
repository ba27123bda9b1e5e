package conserve

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// interfaceToLayer returns the averaging of nlev+1 interface values to nlev layers
// (layer k = mean of interfaces k and k+1), repeated over cols columns (block diagonal),
// with the layer thicknesses as layer measures and the half-layer (dual) thicknesses as
// interface measures.
func interfaceToLayer(t testing.TB, nlev, cols int) (*weights.CSR, []float64, []float64) {
	t.Helper()
	lv, err := grids.NewStretchedLevels(grids.Height, nlev, 0, 3e4, 3)
	if err != nil {
		t.Fatal(err)
	}
	dz := lv.Thicknesses()
	var ts []weights.Triplet
	var ms, mt []float64
	for c := 0; c < cols; c++ {
		for k := 0; k < nlev; k++ {
			r := int32(c*nlev + k)
			ts = append(ts, weights.Triplet{Row: r, Col: int32(c*(nlev+1) + k), Value: 0.5},
				weights.Triplet{Row: r, Col: int32(c*(nlev+1) + k + 1), Value: 0.5})
			mt = append(mt, dz[k])
		}
		for k := 0; k <= nlev; k++ {
			m := 0.0
			if k > 0 {
				m += dz[k-1] / 2
			}
			if k < nlev {
				m += dz[k] / 2
			}
			ms = append(ms, m)
		}
	}
	return weights.FromTriplets(cols*nlev, cols*(nlev+1), ts), ms, mt
}

// TestVerticalZigzagInvisible: averaging interfaces to layers cannot see the zigzag
// (−1)^k (REFERENCES.md: Arakawa & Konor 1996, MWR 124:511–528, discuss this
// computational mode of Lorenz staggering; that interface→layer averaging has it in its
// null space is common practice and a one-line check: ((−1)^k + (−1)^(k+1))/2 = 0). The
// averaging has full row rank, so the null space is exactly one-dimensional.
func TestVerticalZigzagInvisible(t *testing.T) {
	cases := []struct {
		name string
		opt  NullSpaceOptions
	}{
		{"dense", NullSpaceOptions{}},
		{"lanczos", NullSpaceOptions{DenseMax: 10}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			const nlev = 60
			w, ms, mt := interfaceToLayer(t, nlev, 1)
			r, err := NullSpace(w, ms, mt, c.opt)
			if err != nil {
				t.Fatal(err)
			}
			if r.Dimension != 1 {
				t.Errorf("dimension %d, want 1", r.Dimension)
			}
			mode := r.WorstMode()
			sign := math.Copysign(1, mode[0])
			for k, v := range mode {
				want := sign * float64(1-2*(k%2))
				// The mode is the zigzag to rounding of the SVD or Lanczos vectors.
				if math.Abs(v-want) > 1e-10 {
					t.Fatalf("mode[%d] = %g, want %g (zigzag)", k, v, want)
				}
			}
			if r.WorstModeSingularValue > 1e-7 {
				t.Errorf("worst singular value %g, want ≈ 0", r.WorstModeSingularValue)
			}
		})
	}
}

// TestLanczosDeflation: 50 columns of the averaging give a 50-dimensional null space
// (one zigzag per column; also forced by the shape, 50·61 sources for 50·60 targets).
// Lanczos locks one null vector per run and stops at MaxModes, so it reports the size
// bound 50 as the dimension, flags the search as capped, and every locked mode is
// invisible.
func TestLanczosDeflation(t *testing.T) {
	w, ms, mt := interfaceToLayer(t, 60, 50)
	r, err := NullSpace(w, ms, mt, NullSpaceOptions{DenseMax: 100, MaxModes: 4})
	if err != nil {
		t.Fatal(err)
	}
	if r.Method != "lanczos" || r.Dimension != 50 || !r.Capped || r.Exact {
		t.Errorf("method %s dimension %d capped %v exact %v, want lanczos 50 true false", r.Method, r.Dimension, r.Capped, r.Exact)
	}
	y := make([]float64, w.Rows)
	w.ApplyTo(y, r.WorstMode())
	for _, v := range y {
		if math.Abs(v) > 1e-10 {
			t.Fatalf("locked mode not invisible: W·x has %g", v)
		}
	}
}

// TestLanczosAgreesWithSVD: on a random sparse matrix with two planted null vectors
// (two pairs of equal columns: e_i − e_j is null), Lanczos with full
// reorthogonalisation and gonum's dense SVD (an outside reference implementation) agree
// on the dimension and on σ_max.
func TestLanczosAgreesWithSVD(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	const rows, cols = 220, 160
	var ts []weights.Triplet
	for i := 0; i < rows; i++ {
		for j := 0; j < cols; j++ {
			if rng.Float64() < 0.05 && j != 7 && j != 30 {
				v := rng.Float64()
				ts = append(ts, weights.Triplet{Row: int32(i), Col: int32(j), Value: v})
				switch j {
				case 3:
					ts = append(ts, weights.Triplet{Row: int32(i), Col: 7, Value: v})
				case 20:
					ts = append(ts, weights.Triplet{Row: int32(i), Col: 30, Value: v})
				}
			}
		}
	}
	w := weights.FromTriplets(rows, cols, ts)
	dense, err := NullSpace(w, nil, nil, NullSpaceOptions{})
	if err != nil {
		t.Fatal(err)
	}
	lz, err := NullSpace(w, nil, nil, NullSpaceOptions{DenseMax: 10, Steps: cols})
	if err != nil {
		t.Fatal(err)
	}
	if dense.Dimension != 2 || lz.Dimension != 2 {
		t.Errorf("dimension dense %d lanczos %d, want 2", dense.Dimension, lz.Dimension)
	}
	// σ_max converges first in Lanczos; 1e-10 relative is far above its rounding.
	if math.Abs(dense.MaxSingularValue-lz.MaxSingularValue) > 1e-10*dense.MaxSingularValue {
		t.Errorf("σ_max dense %.15g lanczos %.15g", dense.MaxSingularValue, lz.MaxSingularValue)
	}
}
