package remap

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
)

// planeMeans returns the exact cell means of f over the cells of a planar mesh by Green's
// theorem, ∬ f dA = ∮ F dy with ∂F/∂x = f (F given), integrating F along each straight
// edge with n-point Gauss–Legendre from gonum (integrate/quad), which is exact when F is a
// polynomial of degree ≤ 2n − 2 along the edge.
func planeMeans(m *grids.Mesh, F func(x, y float64) float64, n int) []float64 {
	x, w := make([]float64, n), make([]float64, n)
	quad.Legendre{}.FixedLocations(x, w, 0, 1)
	out := make([]float64, m.NumCells())
	var buf []r3.Vec
	for c := range out {
		vs := m.CellPoints(c, buf[:0])
		sum := 0.0
		for k := range vs {
			a, b := vs[k], vs[(k+1)%len(vs)]
			for i := range x {
				sum += w[i] * F(a.X+x[i]*(b.X-a.X), a.Y+x[i]*(b.Y-a.Y)) * (b.Y - a.Y)
			}
		}
		out[c] = sum / m.CellArea[c]
	}
	return out
}

// poly2 is a polynomial Σ c_ij x^i y^j of total degree ≤ deg.
type poly2 struct {
	deg int
	c   map[[2]int]float64
}

func randomPoly(deg int, rng *rand.Rand) poly2 {
	p := poly2{deg: deg, c: map[[2]int]float64{}}
	for d := 0; d <= deg; d++ {
		for j := 0; j <= d; j++ {
			p.c[[2]int{d - j, j}] = 2*rng.Float64() - 1
		}
	}
	return p
}

func (p poly2) eval(x, y float64) float64 {
	v := 0.0
	for e, c := range p.c {
		v += c * math.Pow(x, float64(e[0])) * math.Pow(y, float64(e[1]))
	}
	return v
}

// antiX is ∫ p dx: Σ c_ij x^(i+1)/(i+1) y^j.
func (p poly2) antiX(x, y float64) float64 {
	v := 0.0
	for e, c := range p.c {
		v += c * math.Pow(x, float64(e[0]+1)) / float64(e[0]+1) * math.Pow(y, float64(e[1]))
	}
	return v
}

// evalFit returns the reconstruction of cell s (patch nb, operator c, means mean from
// cellFitter.fit) at the point x, for the cell means f.
func evalFit(r *reconstructor, s int, nb []int32, c, mean, f []float64, x r3.Vec) float64 {
	fr := &r.frames[s]
	xi, eta := fr.project(x)
	X, Y := xi*fr.inv, eta*fr.inv
	v := f[s]
	k := 0
	for d := 1; d <= r.p; d++ {
		for j := 0; j <= d; j++ {
			a := 0.0
			for i, nk := range nb {
				a += c[k*len(nb)+i] * (f[nk] - f[s])
			}
			v += a * (math.Pow(X, float64(d-j))*math.Pow(Y, float64(j)) - mean[k])
			k++
		}
	}
	return v
}

// TestReconstructionPolynomials: the least-squares reconstruction of degree p, fed the
// exact cell means of any polynomial of degree ≤ p, returns that polynomial (a
// least-squares fit reproduces every function in its span exactly, since the residual
// can be zero; common practice for k-exact reconstruction, e.g. Barth & Frederickson 1990,
// AIAA 90-0013, from memory). On the plane the quadrature is exact for these degrees, so
// the result is exact to rounding. Cells at the domain edge have one-sided patches.
func TestReconstructionPolynomials(t *testing.T) {
	// polyTol: absolute, for polynomials with coefficients in [−1, 1] on [0, 1]²;
	// rounding in the fit scaled by its condition (measured ≤ 4.4e-14; a polynomial of
	// degree p + 1 misses by 4e-4 to 1e-2, so the check has teeth).
	const polyTol = 1e-12
	rng := rand.New(rand.NewPCG(1, 2))
	meshes := []*grids.Mesh{
		jitteredPlane(t, 10, 8, 1, 0.25, false, 3),
		jitteredPlane(t, 7, 9, 1, 0.25, true, 4),
	}
	for _, m := range meshes {
		for _, p := range []int{1, 2, 3} {
			for deg := 0; deg <= p; deg++ {
				q := randomPoly(deg, rng)
				f := planeMeans(m, q.antiX, 4)
				r := newReconstructor(m, p, func(int) bool { return true }, 1)
				ft := r.newFitter()
				worst := 0.0
				var buf []r3.Vec
				for s := 0; s < m.NumCells(); s++ {
					nb, c, mean := ft.fit(s)
					vs := m.CellPoints(s, buf[:0])
					pts := append(vs, r3.Scale(1/m.CellArea[s], m.CellMoment(s)))
					for _, x := range pts {
						got := evalFit(r, s, nb, c, mean, f, x)
						worst = math.Max(worst, math.Abs(got-q.eval(x.X, x.Y)))
					}
				}
				if worst > polyTol {
					t.Errorf("%s p=%d, polynomial of degree %d: worst error %.3g", m.Name, p, deg, worst)
				}
			}
		}
	}
}

// TestHighOrderPlanePolynomials: the whole map (reconstruction, quadrature over every
// piece, centring) carries exact cell means of a polynomial of degree ≤ order − 1 to
// exact target means, between two unrelated irregular planar meshes (k-exactness of the
// reconstruction, as above, and exact integration of polynomials over polygons).
func TestHighOrderPlanePolynomials(t *testing.T) {
	// planeTol: absolute, rounding (measured ≤ 1.3e-14 with coefficients in [−1, 1]; a
	// polynomial of degree = order misses by ~1e-3).
	const planeTol = 1e-12
	rng := rand.New(rand.NewPCG(5, 6))
	src := jitteredPlane(t, 12, 10, 1, 0.25, false, 8)
	tgt := jitteredPlane(t, 9, 13, 1, 0.25, true, 9)
	for _, order := range []int{3, 4} {
		w, err := Build(src, tgt, Options{Method: Conservative, Order: order})
		if err != nil {
			t.Fatal(err)
		}
		c, k := defects(w)
		if c > highTol || k > highTol {
			t.Errorf("order %d: conservation defect %.3g, consistency defect %.3g", order, c, k)
		}
		for deg := 0; deg < order; deg++ {
			q := randomPoly(deg, rng)
			got := make([]float64, w.W.Rows)
			w.ApplyTo(got, planeMeans(src, q.antiX, 4))
			want := planeMeans(tgt, q.antiX, 4)
			worst := 0.0
			for i := range got {
				worst = math.Max(worst, math.Abs(got[i]-want[i]))
			}
			if worst > planeTol {
				t.Errorf("order %d, polynomial of degree %d: worst target error %.3g", order, deg, worst)
			}
		}
	}
}

// TestHighOrderPeriodicPlane: on doubly periodic planes the frames of cells at the seam
// must unwrap their neighbours; a smooth periodic field sin 2πx cos 2πy mapped from
// quadrilaterals to triangles converges at about order p + 1 (REFERENCES.md [M]), which
// fails at once if a seam patch is assembled from the wrong images.
func TestHighOrderPeriodicPlane(t *testing.T) {
	F := func(x, y float64) float64 { return -math.Cos(2*math.Pi*x) / (2 * math.Pi) * math.Cos(2*math.Pi*y) }
	// minOrder: a little under p + 1 (measured orders are listed in the log).
	minOrder := map[int]float64{3: 2.7, 4: 3.5}
	for _, order := range []int{3, 4} {
		var errs []float64
		for _, n := range []int{8, 16, 32} {
			src, err := grids.NewPlane(grids.PlaneSpec{NX: n, NY: n, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true})
			mustMesh(t, src, err)
			tgt, err := grids.NewPlane(grids.PlaneSpec{NX: n + n/2, NY: n + n/4, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true, Triangles: true})
			mustMesh(t, tgt, err)
			w, err := Build(src, tgt, Options{Method: Conservative, Order: order})
			if err != nil {
				t.Fatal(err)
			}
			if c, k := defects(w); c > highTol || k > highTol {
				t.Errorf("order %d n=%d: conservation defect %.3g, consistency defect %.3g", order, n, c, k)
			}
			got := make([]float64, w.W.Rows)
			// 12 points per edge: F is analytic, the rule's error is ~1e-16.
			w.ApplyTo(got, planeMeans(src, F, 12))
			want := planeMeans(tgt, F, 12)
			worst := 0.0
			for i := range got {
				worst = math.Max(worst, math.Abs(got[i]-want[i]))
			}
			errs = append(errs, worst)
		}
		o := math.Log2(errs[1] / errs[2])
		t.Logf("order %d: max errors %.3g %.3g %.3g, observed order %.2f", order, errs[0], errs[1], errs[2], o)
		if o < minOrder[order] {
			t.Errorf("order %d: observed order %.2f < %.1f", order, o, minOrder[order])
		}
	}
}
