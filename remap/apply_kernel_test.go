package remap

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/colbridge/colbridge/weights"
)

// randomSparse returns a rows × cols matrix with about perRow entries per row (some rows
// empty), values in [−0.5, 1.5).
func randomSparse(rng *rand.Rand, rows, cols, perRow int) *weights.CSR {
	var ts []weights.Triplet
	for i := 0; i < rows; i++ {
		if rng.IntN(10) == 0 {
			continue // empty rows occur (uncovered targets)
		}
		for k := 0; k < 1+rng.IntN(2*perRow); k++ {
			ts = append(ts, weights.Triplet{Row: int32(i), Col: int32(rng.IntN(cols)), Value: rng.Float64()*2 - 0.5})
		}
	}
	return weights.FromTriplets(rows, cols, ts)
}

// TestMultiApplyToOracle: MultiApplyTo on n vectors in NetCDF order gives, bit for bit,
// CSR.ApplyTo of each vector (the oracle: one vector at a time, summed in storage order),
// for every remainder of the 8- and 4-wide blocks, with NaN-filled and reused
// destinations, and adds exactly when asked. Common practice (oracle test).
func TestMultiApplyToOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	w := randomSparse(rng, 700, 500, 6)
	for _, n := range []int{0, 1, 3, 4, 7, 8, 9, 13, 16, 17, 30} {
		src := make([]float64, n*w.Cols)
		for i := range src {
			src[i] = rng.NormFloat64()
		}
		dst := make([]float64, n*w.Rows)
		for i := range dst {
			dst[i] = math.NaN()
		}
		MultiApplyTo(dst, src, w, n, false, 0)
		want := make([]float64, w.Rows)
		for v := 0; v < n; v++ {
			w.ApplyTo(want, src[v*w.Cols:(v+1)*w.Cols])
			for i, x := range want {
				if got := dst[v*w.Rows+i]; got != x {
					t.Fatalf("n=%d vector %d row %d: got %v, want %v (bitwise)", n, v, i, got, x)
				}
			}
		}
		// add: dst + W·src
		base := make([]float64, len(dst))
		for i := range base {
			base[i] = float64(i % 7)
		}
		acc := append([]float64(nil), base...)
		MultiApplyTo(acc, src, w, n, true, 3)
		for i := range acc {
			if acc[i] != base[i]+dst[i] {
				t.Fatalf("n=%d add: entry %d got %v, want %v", n, i, acc[i], base[i]+dst[i])
			}
		}
	}
}

// TestLevelsToOracle: the column-fastest vertical product equals the per-column CSR
// product bit for bit (oracle: applyCSR on each column). Common practice.
func TestLevelsToOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	v := randomSparse(rng, 9, 11, 3)
	const ncol, nrec = 37, 3
	src := make([]float64, nrec*v.Cols*ncol)
	for i := range src {
		src[i] = rng.NormFloat64()
	}
	dst := make([]float64, nrec*v.Rows*ncol)
	levelsTo(dst, src, v, ncol, nrec, 0)
	col := make([]float64, v.Cols)
	out := make([]float64, v.Rows)
	for r := 0; r < nrec; r++ {
		for c := 0; c < ncol; c++ {
			for s := range col {
				col[s] = src[(r*v.Cols+s)*ncol+c]
			}
			applyCSR(out, col, v)
			for tt, x := range out {
				if got := dst[(r*v.Rows+tt)*ncol+c]; got != x {
					t.Fatalf("record %d column %d level %d: got %v want %v", r, c, tt, got, x)
				}
			}
		}
	}
}

// TestTransposeTo against the definition, on shapes that are not multiples of the tile.
func TestTransposeTo(t *testing.T) {
	for _, sh := range [][2]int{{1, 1}, {3, 70}, {65, 33}, {100, 7}} {
		r, c := sh[0], sh[1]
		src := make([]float64, r*c)
		for i := range src {
			src[i] = float64(i)
		}
		dst := make([]float64, r*c)
		transposeTo(dst, src, r, c, 0)
		for i := 0; i < r; i++ {
			for j := 0; j < c; j++ {
				if dst[j*r+i] != src[i*c+j] {
					t.Fatalf("%d×%d: (%d,%d) wrong", r, c, i, j)
				}
			}
		}
	}
}

// TestRowBoundsAndMask against brute force (common practice: oracle).
func TestRowBoundsAndMask(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	w := randomSparse(rng, 120, 90, 4)
	const n = 5
	src := make([]float64, n*w.Cols)
	miss := make([]bool, n*w.Cols)
	for i := range src {
		src[i] = rng.NormFloat64()
		miss[i] = rng.IntN(40) == 0
	}
	lo := make([]float64, n*w.Rows)
	hi := make([]float64, n*w.Rows)
	rowBoundsTo(lo, hi, src, w, n, 0)
	out := make([]bool, n*w.Rows)
	cnt := spreadMaskTo(out, miss, w, n, 0)
	want := 0
	for v := 0; v < n; v++ {
		for i := 0; i < w.Rows; i++ {
			mn, mx, bad := math.Inf(1), math.Inf(-1), false
			for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
				j := int(w.ColIndex[k])
				mn = math.Min(mn, src[v*w.Cols+j])
				mx = math.Max(mx, src[v*w.Cols+j])
				bad = bad || miss[v*w.Cols+j]
			}
			if lo[v*w.Rows+i] != mn || hi[v*w.Rows+i] != mx || out[v*w.Rows+i] != bad {
				t.Fatalf("vector %d row %d: bounds [%v, %v] mask %v, want [%v, %v] %v", v, i, lo[v*w.Rows+i], hi[v*w.Rows+i], out[v*w.Rows+i], mn, mx, bad)
			}
			if bad {
				want++
			}
		}
	}
	if cnt != want {
		t.Errorf("spreadMaskTo counted %d, want %d", cnt, want)
	}
}

// TestClipAndAssuredSum checks the properties Bradley, Bosler, Guba et al. (2019, SIAM J.
// Sci. Comput., clip-and-assured-sum) state: when Σw·lo ≤ Σw·y ≤ Σw·hi, every value ends
// in its bounds and Σ w y is kept; when the bounds cannot hold the mass, the sum is still
// kept and the result says infeasible.
func TestClipAndAssuredSum(t *testing.T) {
	// massTol: the sums are compensated; a few roundings of the largest term.
	const massTol = 1e-14
	rng := rand.New(rand.NewPCG(7, 8))
	for trial := 0; trial < 200; trial++ {
		n := 1 + rng.IntN(50)
		y, lo, hi, w := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		for i := range y {
			lo[i] = rng.NormFloat64()
			hi[i] = lo[i] + rng.Float64()*2
			y[i] = lo[i] + (hi[i]-lo[i])*(rng.Float64()*1.6-0.3) // some outside
			w[i] = 0.1 + rng.Float64()
		}
		var m0, wlo, whi weights.Accumulator
		for i := range y {
			m0.Add(w[i] * y[i])
			wlo.Add(w[i] * lo[i])
			whi.Add(w[i] * hi[i])
		}
		admissible := wlo.Sum() <= m0.Sum() && m0.Sum() <= whi.Sum()
		_, feasible := clipAndAssuredSum(y, lo, hi, w, nil)
		var m1, scale weights.Accumulator
		for i := range y {
			m1.Add(w[i] * y[i])
			scale.Add(math.Abs(w[i] * y[i]))
		}
		if d := math.Abs(m1.Sum() - m0.Sum()); d > massTol*scale.Sum() {
			t.Fatalf("trial %d: mass changed by %.3g (relative %.3g)", trial, d, d/scale.Sum())
		}
		if feasible != admissible {
			t.Fatalf("trial %d: feasible %v, but the bounds admit the mass: %v", trial, feasible, admissible)
		}
		if admissible {
			for i := range y {
				// boundsTol: the proportional step lands on a bound to rounding.
				const boundsTol = 1e-12
				if y[i] < lo[i]-boundsTol*(1+math.Abs(lo[i])) || y[i] > hi[i]+boundsTol*(1+math.Abs(hi[i])) {
					t.Fatalf("trial %d: value %d = %v outside [%v, %v]", trial, i, y[i], lo[i], hi[i])
				}
			}
		}
	}
}
