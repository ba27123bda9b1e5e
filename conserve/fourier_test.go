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
		// The round trip is invariant under shifts by 2 cells, so it couples each mode
		// only with its aliases k + (π/dx)(a, b), a, b ∈ {0, 1} (Bloch's theorem).
		tr := f.Transfer()
		modes := f.ModeResponses()
		for in := range tr {
			for out, c := range tr[in] {
				dx := math.Remainder((modes[out].KX-modes[in].KX)*fine.Lx/(2*math.Pi), float64(n))
				dy := math.Remainder((modes[out].KY-modes[in].KY)*fine.Ly/(2*math.Pi), float64(n))
				if (math.Abs(dx) > 1e-9 || math.Abs(dy) > 1e-9) && cmplxAbs(c) > tolSymbol {
					t.Fatalf("n=%d: mode %d feeds mode %d (not an alias) with %v", n, in, out, c)
				}
			}
			if math.Abs(cmplxAbs(tr[in][in])-modes[in].Value) > 0 {
				t.Fatalf("transfer diagonal differs from the response")
			}
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

func cmplxAbs(c complex128) float64 { return math.Hypot(real(c), imag(c)) }

// overlapLine returns the first-order conservative map from a periodic line of ns equal
// cells onto one of nt equal cells (both of length 1): weight = overlap length / target
// length (the 1-D form of Jones 1999), computed by hand from the interval ends.
func overlapLine(ns, nt int) *weights.CSR {
	var ts []weights.Triplet
	for t := 0; t < nt; t++ {
		a, b := float64(t)/float64(nt), float64(t+1)/float64(nt)
		for s := 0; s < ns; s++ {
			c, d := float64(s)/float64(ns), float64(s+1)/float64(ns)
			if ov := math.Min(b, d) - math.Max(a, c); ov > 0 {
				ts = append(ts, weights.Triplet{Row: int32(t), Col: int32(s), Value: ov * float64(nt)})
			}
		}
	}
	return weights.FromTriplets(nt, ns, ts)
}

// TestFourierUnalignedLines: the conservative map from 12 cells onto 5 and its adjoint
// form a round trip that is invariant only under the full period, so modes of different
// classes couple (measured: one block of 11 classes; the test asks for at least 5); the
// map has rank 5 (its rows have nested, distinct supports), so 7 modes are
// invisible (linear algebra), the constant is kept (consistency), and with MaxBlock below
// 12 the symbol is skipped with an error while the response is still reported.
func TestFourierUnalignedLines(t *testing.T) {
	src, err := grids.NewLine(12, 1, 0)
	if err != nil {
		t.Fatal(err)
	}
	tgt, err := grids.NewLine(5, 1, 0)
	if err != nil {
		t.Fatal(err)
	}
	w := overlapLine(12, 5)
	wAdj := Adjoint(w, src.CellArea, tgt.CellArea)
	// Interval ends t/5 and s/12 are rounded; overlaps as short as 1/60 turn that into
	// ≈ 1e-15 relative errors of the weights.
	if d := conservationDefect(w, src.CellArea, tgt.CellArea, nil); d > 1e-14 {
		t.Fatalf("hand-built overlap map not conservative: %g", d)
	}
	f, err := FourierAnalysis(src, src.CellArea, []*weights.CSR{wAdj, w}, w, wAdj, FourierOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(f.ConstantResponse-1) > tolSymbol {
		t.Errorf("constant response %g", f.ConstantResponse)
	}
	if f.Symbol.LargestBlock < 5 || f.Symbol.InvisibleDimension != 7 {
		t.Errorf("largest block %d, invisible %d; want ≥ 5 coupled classes and 7", f.Symbol.LargestBlock, f.Symbol.InvisibleDimension)
	}
	if f.NoiseMax <= 0 {
		t.Errorf("noise %g, want > 0 for a piecewise-constant round trip", f.NoiseMax)
	}
	g, err := FourierAnalysis(src, src.CellArea, []*weights.CSR{wAdj, w}, w, wAdj, FourierOptions{MaxBlock: 4})
	if err == nil || g == nil || g.Symbol != nil || g.ConstantResponse != f.ConstantResponse {
		t.Errorf("MaxBlock 4: err %v, report %v; want an error and the response without symbol", err, g != nil)
	}
}
