package conserve

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/weights"
)

// gainQuads is the eigenvalue of H = ((I − D⁻¹A)/2)^p for the mode cos(θx·i + θy·j) on a
// uniform periodic quad lattice: D⁻¹A averages the 4 neighbours, whose symbol is
// (cos θx + cos θy)/2 (the 5-point stencil; discrete Fourier analysis, common practice).
func gainQuads(tx, ty float64, p int) float64 {
	return math.Pow((1-(math.Cos(tx)+math.Cos(ty))/2)/2, float64(p))
}

// TestHighPassGain: the filter acts on lattice Fourier modes with exactly the gain of
// the documented formula, and the numbers quoted in HighPassTo's documentation follow
// from that formula.
func TestHighPassGain(t *testing.T) {
	const n = 24
	m := planeQuads(t, n)
	adj := Adjacency(m)
	x := make([]float64, m.NumCells())
	y := make([]float64, m.NumCells())
	for _, pq := range [][2]int{{0, 0}, {12, 12}, {12, 0}, {8, 0}, {3, 0}, {3, 3}, {5, 7}} {
		tx, ty := 2*math.Pi*float64(pq[0])/n, 2*math.Pi*float64(pq[1])/n
		for c := range x {
			i, j := c%n, c/n
			x[c] = math.Cos(tx*float64(i) + ty*float64(j))
		}
		HighPassTo(y, x, adj, 3)
		g := gainQuads(tx, ty, 3)
		for c := range x {
			// Three applications of a 5-point average of unit values: rounding ≈ 1e-16.
			if math.Abs(y[c]-g*x[c]) > 1e-14 {
				t.Fatalf("mode %v cell %d: Hx = %g, want %g·x = %g", pq, c, y[c], g, g*x[c])
			}
		}
	}
	quoted := []struct {
		tx, ty, want, tol float64
	}{
		{math.Pi, math.Pi, 1, 1e-15},
		{math.Pi, 0, 0.125, 1e-15},
		{2 * math.Pi / 3, 0, 0.0527, 5e-5},
		{math.Pi / 4, 0, 3.93e-4, 5e-6},
		{math.Sqrt2 * math.Pi / 3, math.Sqrt2 * math.Pi / 3, 0.0943, 5e-5},
		{math.Sqrt2 * math.Pi / 8, math.Sqrt2 * math.Pi / 8, 4.24e-4, 5e-6},
	}
	for _, q := range quoted {
		if g := gainQuads(q.tx, q.ty, 3); math.Abs(g-q.want) > q.tol {
			t.Errorf("gain at θ = (%g, %g) is %.4g, documentation says %g", q.tx, q.ty, g, q.want)
		}
	}
	// Hexagons: the most oscillatory mode of the 6-neighbour average has symbol −1/2
	// (triangular lattice, common practice), so the gain is (3/4)³ = 0.42.
	if g := math.Pow((1+0.5)/2, 3); math.Abs(g-0.42) > 0.005 {
		t.Errorf("hexagonal gain %g", g)
	}
}

// TestSphereNoise: the identity keeps every zonal harmonic (response 1) and adds no
// high-pass energy; the piecewise-constant round trip of the exact 2:1 cubed-sphere
// coarsening keeps the smoothest harmonics almost fully, damps shorter ones more, and
// injects grid-scale energy (its output steps at coarse cell edges: common practice).
func TestSphereNoise(t *testing.T) {
	cf, cc := cubed(t, 8), cubed(t, 4)
	n := cf.NumCells()
	var ids []weights.Triplet
	for c := 0; c < n; c++ {
		ids = append(ids, weights.Triplet{Row: int32(c), Col: int32(c), Value: 1})
	}
	id := weights.FromTriplets(n, n, ids)
	r, err := SphereNoise(cf, cf.CellArea, []*weights.CSR{id}, HighPassOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range r.Damping {
		if math.Abs(d.Response-1) > 1e-14 {
			t.Errorf("identity: degree %d response %g", d.Degree, d.Response)
		}
	}
	if r.OutputShareMax != r.InputShareMax {
		t.Errorf("identity: output share %g differs from input share %g", r.OutputShareMax, r.InputShareMax)
	}
	// Jeans: degree l has wavelength 2πR/√(l(l+1)); on N = 8 the grid length is
	// √(4πR²/384) = 0.1809R, so λ_l = 34.73/√(l(l+1)) grid lengths: 10.0 at l = 3,
	// 7.77 at l = 4; the smooth ensemble (≥ 8 grid lengths) stops at l = 3.
	if r.SmoothMaxDegree != 3 {
		t.Errorf("smooth max degree %d, want 3", r.SmoothMaxDegree)
	}
	w := cubeCoarsen2(cf, cc, 4)
	p := Adjoint(w, cf.CellArea, cc.CellArea)
	r, err = SphereNoise(cf, cf.CellArea, []*weights.CSR{p, w}, HighPassOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Damping[0].Response < 0.98 || r.Damping[0].Response > 1 {
		t.Errorf("round trip: degree 1 response %g, want in [0.98, 1]", r.Damping[0].Response)
	}
	last := r.Damping[len(r.Damping)-1]
	if last.Response > 0.5*r.Damping[0].Response {
		t.Errorf("round trip: degree %d (wavelength %.2g) response %g, want strong damping", last.Degree, last.Wavelength, last.Response)
	}
	if r.OutputShareMax < 5*r.InputShareMax {
		t.Errorf("round trip: high-pass share %g not clearly above the input's %g", r.OutputShareMax, r.InputShareMax)
	}
}

// TestZonalSweep: the recurrence gives the Legendre polynomials P_2 = (3μ² − 1)/2,
// P_3 = (5μ³ − 3μ)/2 (closed forms, Abramowitz & Stegun 22.3; from memory) and
// P_l(1) = 1, P_l(−1) = (−1)^l.
func TestZonalSweep(t *testing.T) {
	axis := r3.Vec{X: 0, Y: 0, Z: 1}
	var pts []r3.Vec
	for _, mu := range []float64{-1, -0.7, -0.1, 0, 0.3, 0.95, 1} {
		pts = append(pts, r3.Vec{X: math.Sqrt(1 - mu*mu), Z: mu})
	}
	zonalSweep(pts, axis, 40, func(l int, p []float64) {
		for i, x := range pts {
			mu := x.Z
			var want float64
			switch {
			case l == 2:
				want = (3*mu*mu - 1) / 2
			case l == 3:
				want = (5*mu*mu*mu - 3*mu) / 2
			case mu == 1:
				want = 1
			case mu == -1:
				want = math.Pow(-1, float64(l))
			default:
				continue
			}
			// The upward recurrence is stable on [−1, 1]: rounding grows like l·ε.
			if math.Abs(p[i]-want) > 1e-13 {
				t.Errorf("P_%d(%g) = %.17g, want %.17g", l, mu, p[i], want)
			}
		}
	})
}

// TestDestinationsOverwritten: destination-first functions overwrite every entry of a
// NaN-filled destination, and HighPassTo may alias its input (common practice for
// destination-first APIs, STYLE.md).
func TestDestinationsOverwritten(t *testing.T) {
	m := planeQuads(t, 6)
	n := m.NumCells()
	nan := func(k int) []float64 {
		x := make([]float64, k)
		for i := range x {
			x[i] = math.NaN()
		}
		return x
	}
	x := make([]float64, n)
	for i := range x {
		x[i] = float64(i % 7)
	}
	want := make([]float64, n)
	HighPassTo(want, x, Adjacency(m), 2)
	got := nan(n)
	HighPassTo(got, x, Adjacency(m), 2)
	alias := append([]float64(nil), x...)
	HighPassTo(alias, alias, Adjacency(m), 2)
	for i := range want {
		if got[i] != want[i] || alias[i] != want[i] {
			t.Fatalf("HighPassTo[%d]: %g (NaN dst) and %g (aliased), want %g", i, got[i], alias[i], want[i])
		}
	}
	means := nan(n)
	if err := CellMeansTo(means, m, func(p r3.Vec) float64 { return p.Y }, 3); err != nil {
		t.Fatal(err)
	}
	w := coarsen2(3)
	c := nan(w.Cols)
	ColumnSumsTo(c, w, m.CellArea, planeQuads(t, 3).CellArea)
	for i := range means {
		if math.IsNaN(means[i]) || math.IsNaN(c[i]) {
			t.Fatalf("entry %d left NaN", i)
		}
	}
}
