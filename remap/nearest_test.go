package remap

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
)

// bruteNearest is the oracle: the distance to the nearest allowed centroid by exhaustive
// search (chord length on the sphere, minimum image on the plane) and the lowest index
// within tie of it.
func bruteNearest(m *grids.Mesh, p r3.Vec, on func(int) bool, tie float64) (int, float64) {
	dist := func(c int) float64 {
		q := m.CellCentroid[c]
		if m.Surface == grids.Plane {
			q = m.Unwrap(q, p)
			return math.Hypot(q.X-p.X, q.Y-p.Y)
		}
		return math.Sqrt(r3.Norm2(r3.Sub(q, p)))
	}
	best := math.Inf(1)
	for c := 0; c < m.NumCells(); c++ {
		if on(c) {
			best = math.Min(best, dist(c))
		}
	}
	for c := 0; c < m.NumCells(); c++ {
		if on(c) && dist(c) <= best+tie {
			return c, best
		}
	}
	return -1, best
}

// randomSpherePoints returns uniform points on the sphere and points aimed at the poles and
// the date line (STYLE habits: generators that aim at the hard places).
func randomSpherePoints(rng *rand.Rand, n int) []r3.Vec {
	pts := make([]r3.Vec, 0, n)
	for len(pts) < n {
		switch len(pts) % 4 {
		case 0, 1:
			z := 2*rng.Float64() - 1
			pts = append(pts, sphere.FromLonLat(2*math.Pi*rng.Float64(), math.Asin(z)))
		case 2: // within 2° of a pole
			lat := math.Pi/2 - rng.Float64()*2*math.Pi/180
			if rng.IntN(2) == 0 {
				lat = -lat
			}
			pts = append(pts, sphere.FromLonLat(2*math.Pi*rng.Float64(), lat))
		case 3: // within 1e-6 rad of the date line
			pts = append(pts, sphere.FromLonLat(math.Pi+(2*rng.Float64()-1)*1e-6, math.Asin(2*rng.Float64()-1)))
		}
	}
	return pts
}

// TestNearestOracle: the k-d tree search with periodic images and the tie rule agrees with
// exhaustive search (common practice: a brute-force oracle) on random points, with and
// without a source mask, on the sphere and on periodic and bounded planes.
func TestNearestOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	ico, err := grids.NewIcosahedralDual(3, 0)
	mustMesh(t, ico, err)
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18, Lon0: -180})
	mustMesh(t, ll, err)
	cases := []struct {
		name string
		m    *grids.Mesh
		pts  func() []r3.Vec
	}{
		{"icosdual3", ico, func() []r3.Vec { return randomSpherePoints(rng, 2000) }},
		{"latlon", ll, func() []r3.Vec { return randomSpherePoints(rng, 2000) }},
		{"periodic", periodicPlane(t, 15, 11, 2, 0.2, 9), func() []r3.Vec {
			// Points in [−1, 3)²: wrapping is part of the job.
			pts := make([]r3.Vec, 2000)
			for i := range pts {
				pts[i] = r3.Vec{X: 4*rng.Float64() - 1, Y: 4*rng.Float64() - 1}
			}
			return pts
		}},
		{"bounded", rectPlane(t, 12, 9, -1, 2, 3, 2, 0.2, 4), func() []r3.Vec {
			pts := make([]r3.Vec, 2000)
			for i := range pts {
				pts[i] = r3.Vec{X: -1 + 3*rng.Float64(), Y: 2 + 2*rng.Float64()}
			}
			return pts
		}},
	}
	for _, tc := range cases {
		for _, masked := range []bool{false, true} {
			on := func(int) bool { return true }
			var pts []r3.Vec
			var ids []int32
			mask := make([]bool, tc.m.NumCells())
			for c := range mask {
				mask[c] = !masked || rng.Float64() < 0.4
				if mask[c] {
					pts = append(pts, tc.m.CellCentroid[c])
					ids = append(ids, int32(c))
				}
			}
			if masked {
				on = func(c int) bool { return mask[c] }
			}
			ix := newPointIndex(tc.m, pts, ids)
			for _, p := range tc.pts() {
				id, d, ok := ix.nearest(p)
				if !ok {
					t.Fatalf("%s: no answer", tc.name)
				}
				want, best := bruteNearest(tc.m, tc.m.Wrap(p), on, ix.tieTol)
				// 1e-12: both distances are computed from the same points; they differ
				// by rounding of the periodic shift only.
				if int(id) != want || math.Abs(d-best) > 1e-12 {
					t.Fatalf("%s masked=%v: point %v: got cell %d at %.17g, oracle %d at %.17g", tc.name, masked, p, id, d, want, best)
				}
			}
		}
	}
}

// TestNearestMap: Build with method nearest gives one weight 1 per covered row, the
// oracle's cell, on global and periodic meshes every target covered; ties (coarse centres
// on fine vertices, equidistant from four fine centres: derived) go to the lowest index;
// a bounded source leaves targets outside it uncovered with empty rows.
func TestNearestMap(t *testing.T) {
	c13, err := grids.NewCubedSphere(13, 0)
	mustMesh(t, c13, err)
	ll, err := grids.NewLatLon(grids.LatLonSpec{NLon: 40, NLat: 20, Lon0: -180})
	mustMesh(t, ll, err)
	fine, err := grids.NewPlane(grids.PlaneSpec{NX: 16, NY: 16, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true})
	mustMesh(t, fine, err)
	// Every centre of the 2:1 coarser grid sits on a fine vertex.
	coarse, err := grids.NewPlane(grids.PlaneSpec{NX: 8, NY: 8, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true})
	mustMesh(t, coarse, err)
	cases := []struct {
		name     string
		src, tgt *grids.Mesh
		inside   func(p r3.Vec) bool
		ties     bool
	}{
		{"cubed-latlon", c13, ll, nil, false},
		{"latlon-cubed", ll, c13, nil, false},
		{"ties", fine, coarse, nil, true},
		{"bounded", rectPlane(t, 10, 10, 0.25, 0.25, 0.5, 0.5, 0.1, 2), rectPlane(t, 13, 13, 0, 0, 1, 1, 0, 0),
			func(p r3.Vec) bool { return p.X > 0.25 && p.X < 0.75 && p.Y > 0.25 && p.Y < 0.75 }, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			m, err := Build(tc.src, tc.tgt, Options{Method: Nearest})
			if err != nil {
				t.Fatal(err)
			}
			ties := 0
			for j, p := range tc.tgt.CellCentroid {
				lo, hi := m.W.RowStart[j], m.W.RowStart[j+1]
				if tc.inside != nil && !tc.inside(p) {
					if hi != lo || m.Target.Coverage[j] != 0 {
						t.Errorf("target %d outside the source: %d weights, coverage %g", j, hi-lo, m.Target.Coverage[j])
					}
					continue
				}
				if hi-lo != 1 || m.W.Values[lo] != 1 || m.Target.Coverage[j] != 1 {
					t.Fatalf("target %d: row %v %v coverage %g, want one weight 1", j, m.W.ColIndex[lo:hi], m.W.Values[lo:hi], m.Target.Coverage[j])
				}
				want, best := bruteNearest(tc.src, tc.src.Wrap(p), func(int) bool { return true }, 1e-12*math.Max(1, tc.src.Lx))
				if int(m.W.ColIndex[lo]) != want {
					t.Errorf("target %d: cell %d, oracle %d", j, m.W.ColIndex[lo], want)
				}
				if !tc.ties {
					continue
				}
				n := 0
				for c := range tc.src.CellCentroid {
					q := tc.src.Unwrap(tc.src.CellCentroid[c], p)
					if math.Abs(math.Hypot(q.X-p.X, q.Y-p.Y)-best) < 1e-12 {
						n++
					}
				}
				if n > 1 {
					ties++
				}
			}
			if tc.ties && ties != tc.tgt.NumCells() {
				t.Errorf("%d of %d targets were ties; the test meant all", ties, tc.tgt.NumCells())
			}
		})
	}
}

// TestPointMapsWorkers: interpolation and nearest maps are bit-identical for any number of
// workers (Options.Workers documents it; every row depends on its target point only).
func TestPointMapsWorkers(t *testing.T) {
	src, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18, Lon0: -180})
	mustMesh(t, src, err)
	tgt, err := grids.NewCubedSphere(12, 0)
	mustMesh(t, tgt, err)
	for _, method := range []string{Interpolate, Nearest} {
		order := map[string]int{Interpolate: 1, Nearest: 0}[method]
		ref, err := Build(src, tgt, Options{Method: method, Order: order, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range []int{2, 3, 7} {
			m, err := Build(src, tgt, Options{Method: method, Order: order, Workers: w})
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(m.W.RowStart, ref.W.RowStart) || !slices.Equal(m.W.ColIndex, ref.W.ColIndex) || !slices.Equal(m.W.Values, ref.W.Values) {
				t.Errorf("%s with %d workers differs from 1 worker", method, w)
			}
		}
	}
}
