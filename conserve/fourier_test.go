package conserve

import (
	"math"
	"sort"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// tolSymbol: the responses and singular values come from O(N log N) FFTs and one or two
// sparse products of unit-size weights; rounding stays near 1e-15, and 1e-13 leaves a
// factor 100.
const tolSymbol = 1e-13

// TestCheckerboardRemovedByCoarsening: a 2:1 conservative coarsening maps the
// checkerboard (−1)^(i+j) to zero, so the fine→coarse→fine round trip with its adjoint
// removes it completely (REFERENCES.md, "Noise and staggering facts" [D]).
func TestCheckerboardRemovedByCoarsening(t *testing.T) {
	for _, n := range []int{4, 8} {
		fine, coarse := planeQuads(t, 2*n), planeQuads(t, n)
		w := coarsen2(n)
		wAdj := Adjoint(w, fine.CellArea, coarse.CellArea)
		// Directly: the checkerboard's image is exactly zero.
		x := make([]float64, fine.NumCells())
		for c := range x {
			i, j := c%(2*n), c/(2*n)
			x[c] = float64(1 - 2*((i+j)%2))
		}
		y := make([]float64, coarse.NumCells())
		w.ApplyTo(y, x)
		for i, v := range y {
			if v != 0 {
				t.Fatalf("n=%d: W·checkerboard[%d] = %g, want 0", n, i, v)
			}
		}
		// By Fourier analysis of R = W*W.
		f, err := FourierAnalysis(fine, fine.CellArea, []*weights.CSR{wAdj, w}, w, wAdj, FourierOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if f.NX != 2*n || f.NY != 2*n || f.CellsPerLatticeCell != 1 {
			t.Errorf("n=%d: lattice %d×%d×%d, want %d×%d×1", n, f.NX, f.NY, f.CellsPerLatticeCell, 2*n, 2*n)
		}
		if f.CheckerboardResponse == nil || math.Abs(*f.CheckerboardResponse) > tolSymbol {
			t.Errorf("n=%d: checkerboard response %v, want 0", n, f.CheckerboardResponse)
		}
		if f.Response2DX == nil || math.Abs(*f.Response2DX) > tolSymbol {
			t.Errorf("n=%d: 2Δx response %v, want 0 (pairs of cells average to 0)", n, f.Response2DX)
		}
		if math.Abs(f.ConstantResponse-1) > tolSymbol {
			t.Errorf("n=%d: constant response %g, want 1 (W and W* are consistent)", n, f.ConstantResponse)
		}
		// A piecewise-constant prolongation makes grid-scale copies of smooth waves:
		// some noise must be reported, but less than the whole output.
		if !(f.NoiseMax > 0.01 && f.NoiseMax < 1) {
			t.Errorf("n=%d: noise max %g, want in (0.01, 1)", n, f.NoiseMax)
		}
		s := f.Symbol
		if s == nil {
			t.Fatalf("n=%d: no symbol analysis", n)
		}
		// The coarsening has rank n² on 4n² fine cells: null space 3n² (linear algebra),
		// in blocks of the 4 aliases κ, κ+(π,0), κ+(0,π), κ+(π,π).
		if s.InvisibleDimension != 3*n*n {
			t.Errorf("n=%d: invisible dimension %d, want %d", n, s.InvisibleDimension, 3*n*n)
		}
		if s.LargestBlock != 4 {
			t.Errorf("n=%d: largest block %d, want 4", n, s.LargestBlock)
		}
		if s.SmoothestInvisibleWavelength > 4+1e-9 {
			t.Errorf("n=%d: smoothest invisible wavelength %g, want ≤ 4", n, s.SmoothestInvisibleWavelength)
		}
		if pat := s.WorstMode(); len(pat) != fine.NumCells() {
			t.Errorf("n=%d: worst mode has %d values", n, len(pat))
		} else {
			wp := make([]float64, coarse.NumCells())
			w.ApplyTo(wp, pat)
			for _, v := range wp {
				if math.Abs(v) > 1e-12 {
					t.Errorf("n=%d: worst mode is not invisible: W·x has %g", n, v)
					break
				}
			}
		}
	}
}

// TestTwoPointAverageSymbol: two-point averaging has the symbol e^{ikΔx/2}·cos(kΔx/2),
// so its singular values are |cos(kΔx/2)| and the response of W*W is cos²(kΔx/2)
// (REFERENCES.md, "Noise and staggering facts" [D]). On a periodic line of N cells,
// k = 2πp/(NΔx).
func TestTwoPointAverageSymbol(t *testing.T) {
	for _, n := range []int{8, 15, 32} {
		line, err := grids.NewLine(n, 1, 0)
		if err != nil {
			t.Fatal(err)
		}
		w := twoPointAverage(n)
		wAdj := Adjoint(w, line.CellArea, line.CellArea)
		f, err := FourierAnalysis(line, line.CellArea, []*weights.CSR{wAdj, w}, w, wAdj, FourierOptions{})
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range f.ModeResponses() {
			c := math.Cos(m.KX * (1 / float64(n)) / 2)
			if math.Abs(m.Value-c*c) > tolSymbol {
				t.Errorf("N=%d kx=%g: response %g, want cos² = %g", n, m.KX, m.Value, c*c)
			}
		}
		want := make([]float64, n)
		for p := range want {
			want[p] = math.Abs(math.Cos(math.Pi * float64(p) / float64(n)))
		}
		sort.Float64s(want)
		got := f.Symbol.SingularValues()
		if len(got) != n {
			t.Fatalf("N=%d: %d singular values", n, len(got))
		}
		// Compare σ²: singular values come from eigenvalues of W*W, whose rounding
		// (≈ 1e-16) shows as ≈ 1e-8 in σ near zero.
		for i := range want {
			if math.Abs(got[i]*got[i]-want[i]*want[i]) > tolSymbol {
				t.Errorf("N=%d: singular value %d = %.17g, want |cos| = %.17g", n, i, got[i], want[i])
			}
		}
		wantInvisible := 0
		if n%2 == 0 {
			wantInvisible = 1 // the 2Δx wave, p = N/2
		}
		if f.Symbol.InvisibleDimension != wantInvisible {
			t.Errorf("N=%d: invisible dimension %d, want %d", n, f.Symbol.InvisibleDimension, wantInvisible)
		}
		if wantInvisible == 1 && math.Abs(f.Symbol.SmoothestInvisibleWavelength-2) > 1e-12 {
			t.Errorf("N=%d: invisible wavelength %g, want 2", n, f.Symbol.SmoothestInvisibleWavelength)
		}
		// W*W is translation invariant: no energy leaves its mode, no noise.
		if f.NoiseMax > tolSymbol {
			t.Errorf("N=%d: noise %g, want 0", n, f.NoiseMax)
		}
	}
}

// TestFourierTriangles: on a periodic triangle mesh (2 cells per lattice cell) the
// identity keeps every mode with response 1 and no noise (trivially), and averaging each
// pair of triangles into its square, with the adjoint back, makes the alternating
// up/down-triangle pattern invisible while keeping the constant (linear algebra: the
// pair average has rank N/2).
func TestFourierTriangles(t *testing.T) {
	const n = 6
	tri, err := grids.NewPlane(grids.PlaneSpec{NX: n, NY: n, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true, Triangles: true})
	if err != nil {
		t.Fatal(err)
	}
	quads := planeQuads(t, n)
	nt := tri.NumCells()
	var ids []weights.Triplet
	for c := 0; c < nt; c++ {
		ids = append(ids, weights.Triplet{Row: int32(c), Col: int32(c), Value: 1})
	}
	id := weights.FromTriplets(nt, nt, ids)
	f, err := FourierAnalysis(tri, tri.CellArea, []*weights.CSR{id}, nil, nil, FourierOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if f.CellsPerLatticeCell != 2 || f.NX != n || f.NY != n {
		t.Fatalf("lattice %d×%d×%d, want %d×%d×2", f.NX, f.NY, f.CellsPerLatticeCell, n, n)
	}
	for _, m := range f.ModeResponses() {
		if math.Abs(m.Value-1) > tolSymbol {
			t.Errorf("identity: mode (%g,%g) response %g, want 1", m.KX, m.KY, m.Value)
		}
	}
	if f.NoiseMax > tolSymbol {
		t.Errorf("identity: noise %g", f.NoiseMax)
	}
	var ts []weights.Triplet
	for c := 0; c < n*n; c++ {
		ts = append(ts, weights.Triplet{Row: int32(c), Col: int32(2 * c), Value: 0.5},
			weights.Triplet{Row: int32(c), Col: int32(2*c + 1), Value: 0.5})
	}
	w := weights.FromTriplets(n*n, nt, ts)
	wAdj := Adjoint(w, tri.CellArea, quads.CellArea)
	f, err = FourierAnalysis(tri, tri.CellArea, []*weights.CSR{wAdj, w}, w, wAdj, FourierOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(f.ConstantResponse-1) > tolSymbol {
		t.Errorf("pair average: constant response %g, want 1", f.ConstantResponse)
	}
	if f.Symbol.InvisibleDimension != n*n {
		t.Errorf("pair average: invisible dimension %d, want %d", f.Symbol.InvisibleDimension, n*n)
	}
	// The null vector of each class is the up/down difference: every invisible
	// Fourier mode is sub-grid (wavelength below 2 lattice lengths).
	if f.Symbol.SmoothestInvisibleWavelength >= 2 {
		t.Errorf("pair average: smoothest invisible wavelength %g, want < 2", f.Symbol.SmoothestInvisibleWavelength)
	}
}
