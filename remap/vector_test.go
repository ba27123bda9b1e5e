package remap

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// exactTol: reconstructions that are exact in exact arithmetic (Perot's identity on
// planar polygons) are held to 1e-13 relative: each value is a sum of a few O(1) terms,
// so rounding is ~1e-15; the margin allows meshes of a few thousand cells.
const exactTol = 1e-13

// planeMeshes returns planar test meshes: quadrilaterals and triangles, periodic and not,
// and a non-periodic quadrilateral mesh with randomly moved interior vertices (convex,
// non-parallelogram cells), all on [0, 2] × [0, 1].
func planeMeshes(t testing.TB) map[string]*grids.Mesh {
	out := map[string]*grids.Mesh{}
	for _, tri := range []bool{false, true} {
		for _, per := range []bool{false, true} {
			m, err := grids.NewPlane(grids.PlaneSpec{NX: 10, NY: 7, Lx: 2, Ly: 1, PeriodicX: per, PeriodicY: per, Triangles: tri})
			mustMesh(t, m, err)
			out[fmt.Sprintf("tri=%v/periodic=%v", tri, per)] = m
		}
	}
	out["jittered-quads"] = jitteredPlane(t, 10, 7, 2, 0.2, false, 1)
	out["jittered-triangles"] = jitteredPlane(t, 9, 8, 2, 0.2, true, 2)
	return out
}

// jitteredPlane returns a non-periodic nx × ny mesh of [0, 2] × [0, 1] whose interior
// vertices are moved by up to frac of a cell in each direction (seeded; frac < 0.25 keeps
// the cells convex).
// jitteredPlane returns an nx × ny planar mesh of [0, lx] × [0, 1] whose interior vertices
// are moved by up to frac of a cell in x and y (uniform random, fixed seed).
func jitteredPlane(t testing.TB, nx, ny int, lx, frac float64, tri bool, seed uint64) *grids.Mesh {
	t.Helper()
	base, err := grids.NewPlane(grids.PlaneSpec{NX: nx, NY: ny, Lx: lx, Ly: 1, Triangles: tri})
	mustMesh(t, base, err)
	rng := rand.New(rand.NewPCG(seed, 7))
	dx, dy := lx/float64(nx), 1/float64(ny)
	verts := make([]r3.Vec, len(base.Verts))
	for i, v := range base.Verts {
		verts[i] = v
		if v.X > 0 && v.X < lx && v.Y > 0 && v.Y < 1 {
			verts[i].X += frac * dx * (2*rng.Float64() - 1)
			verts[i].Y += frac * dy * (2*rng.Float64() - 1)
		}
	}
	m, err := grids.Build(grids.MeshSpec{Name: "jittered " + base.Name, Surface: grids.Plane, Lx: lx, Ly: 1,
		Verts: verts, CellStart: base.CellStart, CellVerts: base.CellVerts})
	return mustMesh(t, m, err)
}

// applyMap returns W·x.
func applyMap(w *weights.Map, x []float64) []float64 {
	y := make([]float64, w.W.Rows)
	w.ApplyTo(y, x)
	return y
}

// tangent returns t_e = k × n_e at edge e (k the local vertical).
func tangent(m *grids.Mesh, e int) r3.Vec {
	if m.Surface == grids.Sphere {
		return r3.Cross(m.EdgeMid[e], m.EdgeNormal[e])
	}
	n := m.EdgeNormal[e]
	return r3.Vec{X: -n.Y, Y: n.X}
}

// TestPerotConstantExact: Perot (2000, J. Comput. Phys. 159) — the reconstruction is exact
// for constant vector fields on planar polygons because Σ_e l_e (x_e − x_c) ⊗ n_e = A I
// (REFERENCES.md [C][D]); the tangential form inherits it through u·(k×n) = (u×k)·n.
// Checked on periodic and bounded quadrilateral and triangle meshes and on jittered ones.
func TestPerotConstantExact(t *testing.T) {
	u := r3.Vec{X: 1.3, Y: -0.7}
	for name, m := range planeMeshes(t) {
		for _, loc := range []grids.HLocation{grids.EdgeNormal, grids.EdgeTangential} {
			t.Run(name+"/"+loc.String(), func(t *testing.T) {
				maps, err := CellVectorFromEdges(m, loc)
				if err != nil {
					t.Fatal(err)
				}
				if len(maps) != 2 {
					t.Fatalf("%d component maps on the plane, want 2", len(maps))
				}
				ue := make([]float64, m.NumEdges())
				for e := range ue {
					dir := m.EdgeNormal[e]
					if loc == grids.EdgeTangential {
						dir = tangent(m, e)
					}
					ue[e] = r3.Dot(u, dir)
				}
				ux, uy := applyMap(maps[0], ue), applyMap(maps[1], ue)
				worst := 0.0
				for c := range ux {
					worst = math.Max(worst, math.Hypot(ux[c]-u.X, uy[c]-u.Y)/r3.Norm(u))
				}
				if worst > exactTol {
					t.Errorf("worst relative error %.3g > %g", worst, exactTol)
				}
			})
		}
	}
}

// TestPerotIdentityProperty: property test of the geometric identity behind Perot's
// reconstruction, Σ_e l_e (x_e − x_c) ⊗ n_e = A I for any convex polygon (divergence
// theorem applied to ∇x = I; Perot 2000, REFERENCES.md [C][D]), on random single-cell
// meshes with 3 to 9 vertices, scales from 1e-3 to 1e3 and arbitrary position.
func TestPerotIdentityProperty(t *testing.T) {
	rapid.Check(t, func(rt *rapid.T) {
		n := rapid.IntRange(3, 9).Draw(rt, "n")
		scale := math.Pow(10, rapid.Float64Range(-3, 3).Draw(rt, "log10scale"))
		cx := rapid.Float64Range(-1e3, 1e3).Draw(rt, "cx")
		cy := rapid.Float64Range(-1e3, 1e3).Draw(rt, "cy")
		// Random convex polygon: sorted angles with gaps < π, radii 1 (on a circle).
		angles := make([]float64, n)
		for k := range angles {
			angles[k] = (float64(k) + rapid.Float64Range(0.05, 0.95).Draw(rt, fmt.Sprintf("a%d", k))) * 2 * math.Pi / float64(n)
		}
		verts := make([]r3.Vec, n)
		cellVerts := make([]int32, n)
		for k, a := range angles {
			s, c := math.Sincos(a)
			verts[k] = r3.Vec{X: cx + scale*c, Y: cy + scale*s}
			cellVerts[k] = int32(k)
		}
		m, err := grids.Build(grids.MeshSpec{Surface: grids.Plane, Verts: verts, CellStart: []int32{0, int32(n)}, CellVerts: cellVerts})
		if err != nil {
			rt.Fatal(err)
		}
		var s [2][2]float64
		for _, e := range m.CellEdgeList(0) {
			d := r3.Sub(m.EdgeMid[e], m.CellCentroid[0])
			nn := r3.Scale(m.EdgeSign(0, int(e)), m.EdgeNormal[e])
			l := m.EdgeLength[e]
			s[0][0] += l * d.X * nn.X
			s[0][1] += l * d.X * nn.Y
			s[1][0] += l * d.Y * nn.X
			s[1][1] += l * d.Y * nn.Y
		}
		a := m.CellArea[0]
		// Tolerance: terms are l·|x_e − x_c| ~ scale², rounding of coordinates of size
		// |c| + scale relative to scale; 1e-12 covers |c|/scale up to 1e6 with margin.
		tol := 1e-12 * (1 + (math.Abs(cx)+math.Abs(cy))/scale) * scale * scale
		for i := range 2 {
			for j := range 2 {
				want := 0.0
				if i == j {
					want = a
				}
				if math.Abs(s[i][j]-want) > tol {
					rt.Fatalf("entry (%d,%d) = %.17g, want %.17g (A = %g)", i, j, s[i][j], want, a)
				}
			}
		}
	})
}

// tc2EdgeNormal returns the edge-mean normal velocity of test case 2: the exact flux
// across the edge (analytic.TC2.EdgeFlux, positive towards the right of v0→v1, which is
// EdgeNormal's direction) divided by the edge length. This is what a flux-form C-grid
// core carries (the edge mean, not the midpoint value); it is exact to rounding because
// the flux is a difference of stream-function values.
func tc2EdgeNormal(m *grids.Mesh, c analytic.TC2) []float64 {
	u := make([]float64, m.NumEdges())
	for e := range u {
		a, b := m.Verts[m.EdgeVerts[e][0]], m.Verts[m.EdgeVerts[e][1]]
		u[e] = c.EdgeFlux(a, b) / m.EdgeLength[e]
	}
	return u
}

// tc2EdgeMid returns u(x_e)·d_e at the edge midpoints, d the normal or the tangent.
func tc2EdgeMid(m *grids.Mesh, c analytic.TC2, loc grids.HLocation) []float64 {
	u := make([]float64, m.NumEdges())
	for e := range u {
		d := m.EdgeNormal[e]
		if loc == grids.EdgeTangential {
			d = tangent(m, e)
		}
		u[e] = r3.Dot(c.Velocity(m.EdgeMid[e]), d)
	}
	return u
}

// windError returns the relative L2 error (area-weighted) of (east, north) winds at the
// column points of cols against test case 2.
func windError(cols *grids.Mesh, c analytic.TC2, east, north []float64) float64 {
	var num, den float64
	for i := range east {
		p := cols.CellCentroid[i]
		ue, un := c.Wind(p)
		a := cols.CellArea[i]
		num += a * ((east[i]-ue)*(east[i]-ue) + (north[i]-un)*(north[i]-un))
		den += a * (ue*ue + un*un)
	}
	return math.Sqrt(num / den)
}

// orders returns the observed orders log(e_i/e_{i+1})/log(h_i/h_{i+1}).
func orders(errs, h []float64) []float64 {
	var o []float64
	for i := 0; i+1 < len(errs); i++ {
		o = append(o, math.Log(errs[i]/errs[i+1])/math.Log(h[i]/h[i+1]))
	}
	return o
}

// meanSpacing is √(mean cell area), the grid length used for convergence orders.
func meanSpacing(m *grids.Mesh) float64 {
	return math.Sqrt(m.TotalArea() / float64(m.NumCells()))
}

// minOrder: first order or better is required (the issue); Perot (2000) proves first
// order on general meshes. 0.95 leaves room for pre-asymptotic wobble over three levels.
const minOrder = 0.95

// TestPerotTC2Convergence: winds reconstructed from the exact edge components of
// Williamson et al. (1992) test case 2 (J. Comput. Phys. 102; REFERENCES.md [C]) at
// α = 0 and 0.05 converge at first order or better on the cubed sphere and the
// icosahedral hexagons, from normal components (edge means) and tangential components
// (midpoint values).
func TestPerotTC2Convergence(t *testing.T) {
	type family struct {
		name   string
		meshes func() []*grids.Mesh
	}
	fams := []family{
		{"cubed", func() []*grids.Mesh {
			var ms []*grids.Mesh
			for _, n := range []int{12, 24, 48} {
				m, err := grids.NewCubedSphere(n, 0)
				ms = append(ms, mustMesh(t, m, err))
			}
			return ms
		}},
		{"hexagons", func() []*grids.Mesh {
			var ms []*grids.Mesh
			for _, l := range []int{3, 4, 5} {
				m, err := grids.NewIcosahedralDual(l, 0)
				ms = append(ms, mustMesh(t, m, err))
			}
			return ms
		}},
	}
	type source struct {
		name string
		loc  grids.HLocation
		vals func(*grids.Mesh, analytic.TC2) []float64
	}
	srcs := []source{
		{"normal-flux", grids.EdgeNormal, tc2EdgeNormal},
		{"normal-mid", grids.EdgeNormal, func(m *grids.Mesh, c analytic.TC2) []float64 { return tc2EdgeMid(m, c, grids.EdgeNormal) }},
		{"tangential-mid", grids.EdgeTangential, func(m *grids.Mesh, c analytic.TC2) []float64 { return tc2EdgeMid(m, c, grids.EdgeTangential) }},
	}
	for _, f := range fams {
		ms := f.meshes()
		for _, s := range srcs {
			for _, alpha := range []float64{0, 0.05} {
				t.Run(fmt.Sprintf("%s/%s/alpha=%g", f.name, s.name, alpha), func(t *testing.T) {
					tc := analytic.TC2{Alpha: alpha}
					var errs, hs []float64
					for _, m := range ms {
						east, north, err := ColumnWinds(m, nil, s.loc, Options{})
						if err != nil {
							t.Fatal(err)
						}
						u := s.vals(m, tc)
						errs = append(errs, windError(m, tc, applyMap(east, u), applyMap(north, u)))
						hs = append(hs, meanSpacing(m))
					}
					o := orders(errs, hs)
					t.Logf("relative L2 errors %.3g, orders %.2f", errs, o)
					for _, x := range o {
						if x < minOrder {
							t.Errorf("order %.2f < %g (errors %.3g)", x, minOrder, errs)
						}
					}
				})
			}
		}
	}
}

// TestEastNorthBasis: the projection uses the east/north basis of conserve/analytic,
// including its pole convention (East = (0, 1, 0) on the z axis, the limit along λ = 0),
// so winds agree with formulas in longitude and latitude (analytic.TC2.Wind).
func TestEastNorthBasis(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	pts := []r3.Vec{{Z: 1}, {Z: -1}, {X: 1}, {Y: -1}}
	for range 100 {
		pts = append(pts, r3.Unit(r3.Vec{X: rng.NormFloat64(), Y: rng.NormFloat64(), Z: rng.NormFloat64()}))
	}
	for _, p := range pts {
		e, n := eastNorth(p)
		if d := r3.Norm(r3.Sub(e, analytic.East(p))) + r3.Norm(r3.Sub(n, analytic.North(p))); d > 1e-15 {
			t.Errorf("at %v: basis differs from conserve/analytic by %.3g", p, d)
		}
	}
}

// TestColumnWindsOtherMesh: winds restricted from the hexagonal dynamics mesh to
// cubed-sphere columns (Perot, then a conservative cell→cell map of each Cartesian
// component, then the projection at the column points) converge for Williamson et al.
// (1992) test case 2 at α = 0.05: first order or better with either conservative order
// (the columns' point values are compared with cell-mean-based maps). The hexagonal mesh
// has cells centred on both poles and the cubed sphere has vertices there, so the poles
// are exercised on both sides.
func TestColumnWindsOtherMesh(t *testing.T) {
	tc := analytic.TC2{Alpha: 0.05}
	levels, ns := []int{3, 4, 5}, []int{8, 16, 32}
	for _, order := range []int{1, 2} {
		var errs, hs []float64
		for k := range levels {
			dyn, err := grids.NewIcosahedralDual(levels[k], 0)
			mustMesh(t, dyn, err)
			cols, err := grids.NewCubedSphere(ns[k], 0)
			mustMesh(t, cols, err)
			east, north, err := ColumnWinds(dyn, cols, grids.EdgeNormal, Options{Method: Conservative, Order: order})
			if err != nil {
				t.Fatal(err)
			}
			if east.Target.MeshFingerprint != cols.Fingerprint() || east.Source.Location.H != grids.EdgeNormal {
				t.Fatalf("map sides: source %v on %q, target on %q", east.Source.Location, east.Source.MeshName, east.Target.MeshName)
			}
			u := tc2EdgeNormal(dyn, tc)
			errs = append(errs, windError(cols, tc, applyMap(east, u), applyMap(north, u)))
			hs = append(hs, meanSpacing(cols))
		}
		o := orders(errs, hs)
		t.Logf("conservative order %d: relative L2 errors %.3g, orders %.2f", order, errs, o)
		for _, x := range o {
			if x < minOrder {
				t.Errorf("order %d: convergence order %.2f < %g", order, x, minOrder)
			}
		}
	}
}

// TestVectorMapErrors: wrong locations and mismatched component maps are errors.
func TestVectorMapErrors(t *testing.T) {
	m, err := grids.NewPlane(grids.PlaneSpec{NX: 4, NY: 3, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true})
	mustMesh(t, m, err)
	if _, err := CellVectorFromEdges(m, grids.Cell); err == nil {
		t.Error("cell → cell vector accepted")
	}
	c4, err := grids.NewCubedSphere(4, 0)
	mustMesh(t, c4, err)
	cart, err := CellVectorFromEdges(m, grids.EdgeNormal)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := ProjectEastNorth(cart, c4); err == nil {
		t.Error("planar component maps projected onto a sphere")
	}
}
