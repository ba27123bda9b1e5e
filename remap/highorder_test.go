package remap

import (
	"fmt"
	"math"
	"os"
	"slices"
	"sync"
	"testing"
	"time"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// sharedMeshes returns testMeshes built once for all tests of this file (meshes are
// read-only after Build).
var sharedMeshes = sync.OnceValue(func() map[string]*grids.Mesh { return testMeshes(nilTB{}) })

// nilTB lets testMeshes run outside a test; a mesh error panics.
type nilTB struct{ testing.TB }

func (nilTB) Helper()                      {}
func (nilTB) Fatal(args ...any)            { panic(fmt.Sprint(args...)) }
func (nilTB) Fatalf(f string, args ...any) { panic(fmt.Sprintf(f, args...)) }

// highTol: conservation max|c_s − 1| and consistency max|Σ_s W_ts − 1| for orders 3 and
// 4: the bound (DESIGN.md §7, 1e-13 relative), the same as orders 1–2 (propTol).
const highTol = propTol

// TestHighOrderProperties: conservation and consistency ≤ 1e-13 for orders 3 and 4 on
// ordered pairs of the meshes, with lat–lon on either side (DESIGN.md §5
// definitions; Ullrich & Taylor 2015 state that a conservative and consistent linear map
// has column sums Σ_t A_t W_ts = A_s and row sums 1).
func TestHighOrderProperties(t *testing.T) {
	ms := sharedMeshes()
	pairs := [][2]string{
		{"cubed24", "latlon1.5shift"},
		{"latlon2", "icosdual4"},
		{"icosdual4", "cubed24"},
	}
	if !testing.Short() {
		pairs = append(pairs, [2]string{"latlon2", "latlon1.5shift"}, [2]string{"cubed24", "icosdual4"})
	}
	for _, order := range []int{3, 4} {
		for _, pr := range pairs {
			t.Run(fmt.Sprintf("o%d/%s-%s", order, pr[0], pr[1]), func(t *testing.T) {
				m, err := Build(ms[pr[0]], ms[pr[1]], Options{Method: Conservative, Order: order})
				if err != nil {
					t.Fatal(err)
				}
				c, k := defects(m)
				t.Logf("conservation defect %.2g, consistency defect %.2g, %d entries", c, k, m.W.NNZ())
				if c > highTol || k > highTol {
					t.Errorf("conservation defect %.3g, consistency defect %.3g", c, k)
				}
			})
		}
	}
}

// TestHighOrderIdentity: a mesh mapped to itself gives the identity for orders 3 and 4:
// the pieces of every cell are the cell itself (neighbours only touch), so its centred
// moments vanish and every reconstruction term integrates to zero — common practice,
// exact geometry.
func TestHighOrderIdentity(t *testing.T) {
	ms := sharedMeshes()
	plane, err := grids.NewPlane(grids.PlaneSpec{NX: 12, NY: 9, Lx: 1, Ly: 1, PeriodicX: true, PeriodicY: true, Triangles: true})
	mustMesh(t, plane, err)
	names := []string{"cubed24", "icosdual4", "latlon2", "plane"}
	if !testing.Short() {
		names = append(names, "latlon1.5shift")
	}
	for _, name := range names {
		m := ms[name]
		if name == "plane" {
			m = plane
		}
		for _, order := range []int{3, 4} {
			w, err := Build(m, m, Options{Method: Conservative, Order: order})
			if err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for i := 0; i < w.W.Rows; i++ {
				diag := 0.0
				for k := w.W.RowStart[i]; k < w.W.RowStart[i+1]; k++ {
					if int(w.W.ColIndex[k]) == i {
						diag = w.W.Values[k]
					} else {
						worst = math.Max(worst, math.Abs(w.W.Values[k]))
					}
				}
				worst = math.Max(worst, math.Abs(diag-1))
			}
			t.Logf("%s order %d: identity defect %.2g", name, order, worst)
			if worst > highTol {
				t.Errorf("%s order %d: identity defect %.3g", name, order, worst)
			}
		}
	}
}

// TestHighOrderDeterministic: the map does not depend on the number of workers, bit for
// bit (DESIGN.md: results are reproducible; internal/par splits work into fixed blocks
// and rows are summed in a fixed order).
func TestHighOrderDeterministic(t *testing.T) {
	ms := sharedMeshes()
	var ref *weights.Map
	for _, workers := range []int{1, 2, 3} {
		w, err := Build(ms["latlon2"], ms["icosdual4"], Options{Method: Conservative, Order: 4, Workers: workers})
		if err != nil {
			t.Fatal(err)
		}
		if ref == nil {
			ref = w
			continue
		}
		if !slices.Equal(ref.W.RowStart, w.W.RowStart) || !slices.Equal(ref.W.ColIndex, w.W.ColIndex) || !slices.Equal(ref.W.Values, w.W.Values) {
			t.Errorf("%d workers: the matrix differs from 1 worker's", workers)
		}
	}
}

// TestHighOrderMasked: with source and target masks the masked cells get no entries, and
// the two normalisations keep their guarantees (DESIGN.md §5 definitions): dividing by
// the whole target area (ByWhole) conserves on the fully covered sources, dividing by the
// covered part (ByCovered) is consistent on the covered targets. (ByCovered scales up
// targets that are only partly covered, so it cannot also conserve there; order 1 does
// the same.)
func TestHighOrderMasked(t *testing.T) {
	ms := sharedMeshes()
	src, tgt := ms["cubed24"], ms["latlon2"]
	srcMask := make([]bool, src.NumCells())
	for c := range srcMask {
		srcMask[c] = src.CellCentroid[c].Z < 0.5 // a "land" cap north of 30°N is off
	}
	tgtMask := make([]bool, tgt.NumCells())
	for c := range tgtMask {
		tgtMask[c] = tgt.CellCentroid[c].X > -0.8
	}
	for _, order := range []int{3, 4} {
		for _, norm := range []string{ByWhole, ByCovered} {
			w, err := Build(src, tgt, Options{Method: Conservative, Order: order, SourceMask: srcMask, TargetMask: tgtMask, Normalization: norm})
			if err != nil {
				t.Fatal(err)
			}
			c, k := defects(w)
			if norm == ByWhole && c > highTol {
				t.Errorf("order %d, %s: conservation defect %.3g", order, norm, c)
			}
			if norm == ByCovered && k > highTol {
				t.Errorf("order %d, %s: consistency defect %.3g", order, norm, k)
			}
			for i := 0; i < w.W.Rows; i++ {
				for q := w.W.RowStart[i]; q < w.W.RowStart[i+1]; q++ {
					if !tgtMask[i] || !srcMask[w.W.ColIndex[q]] {
						t.Fatalf("order %d: entry (%d, %d) involves a masked cell", order, i, w.W.ColIndex[q])
					}
				}
			}
		}
	}
}

// convergenceStudy is one refinement sequence: the mesh pairs at three resolutions.
type convergenceStudy struct {
	name  string
	f     analytic.Field
	pairs func(t *testing.T) [][2]*grids.Mesh
	// wobbly: judge the mean order of the two steps, not the last one (lat–lon sources
	// alternate between ~2.6 and ~3.3 per step before settling at 3).
	wobbly bool
}

func cubedToLatLon(ns ...int) func(t *testing.T) [][2]*grids.Mesh {
	return func(t *testing.T) [][2]*grids.Mesh {
		var out [][2]*grids.Mesh
		for _, n := range ns {
			src, err := grids.NewCubedSphere(n, 0)
			mustMesh(t, src, err)
			tgt, err := grids.NewLatLon(grids.LatLonSpec{NLon: 4 * n, NLat: 2 * n, Lon0: 0.3})
			mustMesh(t, tgt, err)
			out = append(out, [2]*grids.Mesh{src, tgt})
		}
		return out
	}
}

// TestHighOrderConvergence measures the observed L2 convergence order of conservative maps
// of order 3 and 4 over three resolutions (cubed sphere N → lat–lon 4N × 2N shifted,
// both refined by 2) on the smooth and oscillatory fields of REFERENCES.md (Ullrich &
// Taylor 2015 test fields, via conserve/analytic), against exact target means
// (exactMeans). Expected (REFERENCES.md [M]/[C]): a degree-p reconstruction is about order
// p + 1 on smooth fields; the issue asks order 3 ≥ 2.7. Measured (2 cores, 2026): order
// 3: 3.68 smooth, 3.64 oscillatory; order 4: 4.06 smooth, 4.97 oscillatory (still
// pre-asymptotic on a degree-32 field); about 4 s on two idle cores (7 s of CPU).
//
// With COLBRIDGE_LONG=1 two more sequences run (about 12 s in all): icosahedral dual
// levels 3–5 → cubed N = 12–48 and lat–lon 6°–1.5° → cubed N = 12–48, on the smooth
// field and the vortex of Nair & Jablonowski 2008 (REFERENCES.md, parameters from
// memory). Measured on the smooth field, last step: order 3: 3.02 and 2.57 (lat–lon
// steps alternate: 3.27, 2.57, then 3.03 one level finer, so the mean of the two steps is
// judged there); order 4: 4.07 and 4.14.
func TestHighOrderConvergence(t *testing.T) {
	if testing.Short() {
		t.Skip("convergence study")
	}
	start := time.Now()
	studies := []convergenceStudy{
		{"cubed→latlon smooth", analytic.Smooth, cubedToLatLon(12, 24, 48), false},
		{"cubed→latlon oscillatory", analytic.Oscillatory, cubedToLatLon(24, 48, 96), false},
	}
	// minOrder: the bound for order 3; for order 4 a bound a little under the
	// measured ~4 (smooth) so a regression to third order is caught.
	minOrder := map[int]float64{3: 2.7, 4: 3.5}
	if os.Getenv("COLBRIDGE_LONG") == "1" {
		icos := func(t *testing.T) [][2]*grids.Mesh {
			var out [][2]*grids.Mesh
			for i, n := range []int{12, 24, 48} {
				src, err := grids.NewIcosahedralDual(3+i, 0)
				mustMesh(t, src, err)
				tgt, err := grids.NewCubedSphere(n, 0)
				mustMesh(t, tgt, err)
				out = append(out, [2]*grids.Mesh{src, tgt})
			}
			return out
		}
		latlon := func(t *testing.T) [][2]*grids.Mesh {
			var out [][2]*grids.Mesh
			for _, n := range []int{12, 24, 48} {
				src, err := grids.NewLatLon(grids.LatLonSpec{NLon: 5 * n, NLat: 5 * n / 2, Lon0: 0.37})
				mustMesh(t, src, err)
				tgt, err := grids.NewCubedSphere(n, 0)
				mustMesh(t, tgt, err)
				out = append(out, [2]*grids.Mesh{src, tgt})
			}
			return out
		}
		studies = append(studies,
			convergenceStudy{"icosdual→cubed smooth", analytic.Smooth, icos, false},
			convergenceStudy{"icosdual→cubed vortex", analytic.RegistryVortex.Eval, icos, false},
			convergenceStudy{"latlon→cubed smooth", analytic.Smooth, latlon, true},
			convergenceStudy{"latlon→cubed vortex", analytic.RegistryVortex.Eval, latlon, true},
		)
	}
	for _, st := range studies {
		meshes := st.pairs(t)
		var srcMeans, tgtMeans [][]float64
		for _, mm := range meshes {
			srcMeans = append(srcMeans, exactMeans(mm[0], st.f, 8))
			tgtMeans = append(tgtMeans, exactMeans(mm[1], st.f, 8))
		}
		for _, order := range []int{3, 4} {
			errs := convergenceErrors(t, meshes, srcMeans, tgtMeans, order)
			o1 := math.Log2(errs[0] / errs[1])
			o2 := math.Log2(errs[1] / errs[2])
			observed := o2
			if st.wobbly {
				observed = (o1 + o2) / 2
			}
			t.Logf("%s order %d: L2 errors %.3g %.3g %.3g, observed orders %.2f %.2f", st.name, order, errs[0], errs[1], errs[2], o1, o2)
			if observed < minOrder[order] {
				t.Errorf("%s order %d: observed orders %.2f, %.2f < %.1f", st.name, order, o1, o2, minOrder[order])
			}
		}
	}
	t.Logf("took %v", time.Since(start).Round(time.Millisecond))
}
