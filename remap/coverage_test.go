package remap

import (
	"fmt"
	"github.com/colbridge/colbridge/weights"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/grids/sphere"
)

// covTol: coverages and normalised sums from overlap areas hold to the overlap engine's
// rounding (pieces sum to cell areas within 1e-14 relative, ComputeOverlaps), so 1e-12.
const covTol = 1e-12

// lonLatBox is a longitude–latitude rectangle in degrees (lon1 > lon0, no wrap).
type lonLatBox struct{ lon0, lon1, lat0, lat1 float64 }

// area returns the exact area on the unit sphere, Δλ(sin φ₂ − sin φ₁) (REFERENCES.md,
// lat–lon cell area [D]); empty boxes have area 0.
func (b lonLatBox) area() float64 {
	if b.lon1 <= b.lon0 || b.lat1 <= b.lat0 {
		return 0
	}
	r := math.Pi / 180
	return (b.lon1 - b.lon0) * r * (math.Sin(b.lat1*r) - math.Sin(b.lat0*r))
}

func (b lonLatBox) meet(c lonLatBox) lonLatBox {
	return lonLatBox{math.Max(b.lon0, c.lon0), math.Min(b.lon1, c.lon1), math.Max(b.lat0, c.lat0), math.Min(b.lat1, c.lat1)}
}

// globalCellBox returns the box of cell (i, j) of grids.NewLatLon(nlon, nlat, lon0=−180).
func globalCellBox(c, nlon, nlat int) lonLatBox {
	i, j := c%nlon, c/nlon
	dl, dp := 360/float64(nlon), 180/float64(nlat)
	return lonLatBox{-180 + float64(i)*dl, -180 + float64(i+1)*dl, -90 + float64(j)*dp, -90 + float64(j+1)*dp}
}

// patchCellBox returns the box of cell c of latLonPatch(lon0, lat0, dlon, dlat, nlon, ·).
func patchCellBox(c int, lon0, lat0, dlon, dlat float64, nlon int) lonLatBox {
	i, j := c%nlon, c/nlon
	return lonLatBox{lon0 + float64(i)*dlon, lon0 + float64(i+1)*dlon, lat0 + float64(j)*dlat, lat0 + float64(j+1)*dlat}
}

func lonLatDeg(p r3.Vec) (float64, float64) {
	lon, lat := sphere.LonLat(p)
	return lon * 180 / math.Pi, lat * 180 / math.Pi
}

// integral returns Σ measure·x over entries with positive weight w (nil: all).
func integral(measure, x []float64) float64 {
	var k weights.Accumulator
	for i := range x {
		k.Add(measure[i] * x[i])
	}
	return k.Sum()
}

// TestRegionalCoverage: a regional lat–lon patch (built from a MeshSpec) against a global
// lat–lon grid, both ways, conservative order 1. Every coverage equals the exact share of
// the cell inside the other mesh, from the analytic area of lon–lat rectangles
// (REFERENCES.md [D]): < 1 at the patch edge, 0 outside, 1 inside. Uncovered targets have
// empty rows. "covered" keeps constants on covered targets (row sums 1); "whole" keeps
// the integral of the covered part: Σ_t A_t (Wf)_t = Σ_s A_s·cov_s·f_s, and its row sums
// are the coverages (DESIGN.md §2, §5; build.go).
func TestRegionalCoverage(t *testing.T) {
	const nlon, nlat = 90, 45 // 4°, lon0 = −180
	global, err := grids.NewLatLon(grids.LatLonSpec{NLon: nlon, NLat: nlat, Lon0: -180})
	mustMesh(t, global, err)
	const plon0, plat0, pdlon, pdlat, pnlon, pnlat = -31.3, 10.6, 1.7, 1.3, 30, 25
	patch := latLonPatch(t, plon0, plat0, pdlon, pdlat, pnlon, pnlat)
	whole := lonLatBox{plon0, plon0 + pnlon*pdlon, plat0, plat0 + pnlat*pdlat}
	globalCov := func(c int) float64 {
		b := globalCellBox(c, nlon, nlat)
		return b.meet(whole).area() / b.area()
	}
	rng := rand.New(rand.NewPCG(3, 3))

	t.Run("global-to-patch", func(t *testing.T) {
		m, err := Build(global, patch, Options{Method: Conservative, Order: 1})
		if err != nil {
			t.Fatal(err)
		}
		partial := 0
		for s, c := range m.Source.Coverage {
			if d := math.Abs(c - globalCov(s)); d > covTol {
				t.Fatalf("source %d: coverage %.15g, exact %.15g", s, c, globalCov(s))
			}
			if c > 0 && c < 1 {
				partial++
			}
		}
		for j, c := range m.Target.Coverage {
			if math.Abs(c-1) > covTol {
				t.Fatalf("target %d inside the global source: coverage %g", j, c)
			}
		}
		if partial == 0 {
			t.Fatal("no partly covered source cell: the test lost its edge")
		}
		if m.Normalization != ByCovered {
			t.Errorf("normalization %q, want %q recorded for a partial map", m.Normalization, ByCovered)
		}
	})

	t.Run("patch-to-global", func(t *testing.T) {
		f := make([]float64, patch.NumCells())
		for i := range f {
			f[i] = 1 + rng.Float64()
		}
		for _, norm := range []string{ByCovered, ByWhole} {
			m, err := Build(patch, global, Options{Method: Conservative, Order: 1, Normalization: norm})
			if err != nil {
				t.Fatal(err)
			}
			rs := make([]float64, m.W.Rows)
			m.W.RowSumsTo(rs)
			for j, c := range m.Target.Coverage {
				want := globalCov(j)
				if math.Abs(c-want) > covTol {
					t.Fatalf("%s: target %d: coverage %.15g, exact %.15g", norm, j, c, want)
				}
				rowWant := 1.0
				if norm == ByWhole {
					rowWant = want
				}
				if c == 0 {
					rowWant = 0
					if m.W.RowStart[j] != m.W.RowStart[j+1] {
						t.Fatalf("%s: uncovered target %d has %d weights", norm, j, m.W.RowStart[j+1]-m.W.RowStart[j])
					}
				}
				if math.Abs(rs[j]-rowWant) > covTol {
					t.Fatalf("%s: target %d: row sum %.15g, want %.15g", norm, j, rs[j], rowWant)
				}
			}
			if norm == ByWhole {
				got := make([]float64, m.W.Rows)
				m.ApplyTo(got, f)
				in, out := integral(patch.CellArea, f), integral(global.CellArea, got)
				if math.Abs(out-in) > covTol*math.Abs(in) {
					t.Errorf("whole: integral %.15g, source %.15g (rel %.2g)", out, in, (out-in)/in)
				}
			}
		}
	})
}

// TestPartialBoth: two bounded planar meshes that overlap in part (neither covers the
// other). Target coverage equals the exact share of each (regular) target cell inside the
// source rectangle (rectangle intersection, elementary); "whole" keeps the integral of the
// covered part, Σ_t A_t (Wf)_t = Σ_s A_s·cov_s·f_s, with cov_s checked the same way for a
// regular source; "covered" keeps constants.
func TestPartialBoth(t *testing.T) {
	src := rectPlane(t, 10, 10, 0, 0, 1, 1, 0, 0)
	tgt := rectPlane(t, 7, 9, 0.37, 0.21, 1, 1, 0, 0)
	share := func(x0, y0, dx, dy, X0, Y0, LX, LY float64) float64 {
		w := math.Max(0, math.Min(x0+dx, X0+LX)-math.Max(x0, X0))
		h := math.Max(0, math.Min(y0+dy, Y0+LY)-math.Max(y0, Y0))
		return w * h / (dx * dy)
	}
	rng := rand.New(rand.NewPCG(4, 4))
	f := make([]float64, src.NumCells())
	for i := range f {
		f[i] = rng.Float64() - 0.3
	}
	for _, norm := range []string{ByCovered, ByWhole} {
		m, err := Build(src, tgt, Options{Method: Conservative, Order: 1, Normalization: norm})
		if err != nil {
			t.Fatal(err)
		}
		for j, c := range m.Target.Coverage {
			i, k := j%7, j/7
			want := share(0.37+float64(i)/7, 0.21+float64(k)/9, 1.0/7, 1.0/9, 0, 0, 1, 1)
			if math.Abs(c-want) > covTol {
				t.Fatalf("%s: target %d coverage %.15g, exact %.15g", norm, j, c, want)
			}
		}
		covS := 0.0
		for s, c := range m.Source.Coverage {
			i, k := s%10, s/10
			want := share(float64(i)/10, float64(k)/10, 0.1, 0.1, 0.37, 0.21, 1, 1)
			if math.Abs(c-want) > covTol {
				t.Fatalf("%s: source %d coverage %.15g, exact %.15g", norm, s, c, want)
			}
			covS += src.CellArea[s] * c * f[s]
		}
		got := make([]float64, tgt.NumCells())
		m.ApplyTo(got, f)
		rs := make([]float64, tgt.NumCells())
		m.W.RowSumsTo(rs)
		for j, c := range m.Target.Coverage {
			want := 1.0
			switch {
			case c == 0:
				want = 0
			case norm == ByWhole:
				want = c
			}
			if math.Abs(rs[j]-want) > covTol {
				t.Errorf("%s: target %d row sum %.15g, want %.15g", norm, j, rs[j], want)
			}
		}
		if norm == ByWhole {
			if out := integral(tgt.CellArea, got); math.Abs(out-covS) > covTol*integral(src.CellArea, absAll(f)) {
				t.Errorf("whole: integral %.15g, covered part of the source %.15g", out, covS)
			}
		}
	}
}

func absAll(x []float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = math.Abs(v)
	}
	return out
}

// TestMasksAllMethods: source and target masks for every method and both normalisations,
// against the unmasked map (the definitions in buildConservative and buildPointMap):
//   - masked targets have empty rows and coverage 0;
//   - masked sources have no weights;
//   - "covered": row sums 1 on every covered target;
//   - "whole": each row is the unmasked row restricted to unmasked sources
//     (interpolation) and its sum is the target's coverage (all methods; nearest takes
//     the nearest unmasked cell instead, checked in TestNearestOracle);
//   - no target with coverage 0 has weights (never a silent zero).
func TestMasksAllMethods(t *testing.T) {
	src, err := grids.NewCubedSphere(10, 0)
	mustMesh(t, src, err)
	tgt, err := grids.NewLatLon(grids.LatLonSpec{NLon: 48, NLat: 24, Lon0: -180})
	mustMesh(t, tgt, err)
	rng := rand.New(rand.NewPCG(8, 8))
	smask := make([]bool, src.NumCells())
	for i := range smask {
		// Land-like blobs: a smooth pattern, so some targets lose all their sources.
		p := src.CellCentroid[i]
		smask[i] = math.Sin(3*p.X)+math.Cos(4*p.Y)*p.Z > 0.2
	}
	tmask := make([]bool, tgt.NumCells())
	for i := range tmask {
		tmask[i] = rng.Float64() < 0.8
	}
	methods := []struct {
		method string
		order  int
	}{{Conservative, 1}, {Conservative, 2}, {Interpolate, 1}, {Nearest, 0}}
	for _, me := range methods {
		for _, norm := range []string{ByCovered, ByWhole} {
			t.Run(fmt.Sprintf("%s%d-%s", me.method, me.order, norm), func(t *testing.T) {
				opt := Options{Method: me.method, Order: me.order, Normalization: norm}
				base, err := Build(src, tgt, opt)
				if err != nil {
					t.Fatal(err)
				}
				opt.SourceMask, opt.TargetMask = smask, tmask
				m, err := Build(src, tgt, opt)
				if err != nil {
					t.Fatal(err)
				}
				rs := make([]float64, m.W.Rows)
				m.W.RowSumsTo(rs)
				uncovered := 0
				for j := 0; j < m.W.Rows; j++ {
					lo, hi := m.W.RowStart[j], m.W.RowStart[j+1]
					c := m.Target.Coverage[j]
					if !tmask[j] && (c != 0 || hi != lo) {
						t.Fatalf("masked target %d: coverage %g, %d weights", j, c, hi-lo)
					}
					if c == 0 {
						uncovered++
						if hi != lo {
							t.Fatalf("target %d with coverage 0 has %d weights", j, hi-lo)
						}
						continue
					}
					for k := lo; k < hi; k++ {
						if !smask[m.W.ColIndex[k]] {
							t.Fatalf("target %d uses masked source %d", j, m.W.ColIndex[k])
						}
					}
					want := 1.0
					if norm == ByWhole {
						want = c
					}
					// Conservative order 2 adds gradient terms whose sum is zero only to
					// rounding; 1e-12 covers both.
					if math.Abs(rs[j]-want) > covTol {
						t.Fatalf("target %d: row sum %.15g, want %.15g", j, rs[j], want)
					}
					if norm == ByWhole && me.method == Interpolate {
						for k := lo; k < hi; k++ {
							if d := math.Abs(m.W.Values[k] - base.W.At(j, int(m.W.ColIndex[k]))); d > roundTol {
								t.Fatalf("whole: target %d source %d: %g, unmasked %g", j, m.W.ColIndex[k], m.W.Values[k], base.W.At(j, int(m.W.ColIndex[k])))
							}
						}
					}
				}
				for s := range smask {
					if m.Source.Coverage == nil || (!smask[s] && m.Source.Coverage[s] != 0) {
						t.Fatalf("source %d masked=%v: coverage not recorded as 0", s, !smask[s])
					}
				}
				if m.Normalization != norm {
					t.Errorf("normalization %q, want %q", m.Normalization, norm)
				}
				t.Logf("%d of %d targets uncovered", uncovered, m.W.Rows)
			})
		}
	}
}

// TestRegionalPointMethods: a regional source against a global target for the point
// methods. Nearest covers exactly the targets inside the patch; interpolation covers the
// targets inside the lon–lat rectangle spanned by the patch's outer centroids (its dual
// polygons are the lon–lat rectangles between four centroids: derived). Points within a
// small margin of either boundary are not judged.
func TestRegionalPointMethods(t *testing.T) {
	const plon0, plat0, pdlon, pdlat, pnlon, pnlat = -31.3, 10.6, 1.7, 1.3, 30, 25
	patch := latLonPatch(t, plon0, plat0, pdlon, pdlat, pnlon, pnlat)
	global, err := grids.NewLatLon(grids.LatLonSpec{NLon: 360, NLat: 180, Lon0: -180.3})
	mustMesh(t, global, err)
	// Centroid latitudes of the first and last rows of the patch.
	latC := func(c int) float64 { _, lat := lonLatDeg(patch.CellCentroid[c]); return lat }
	hulls := map[string]lonLatBox{
		Nearest:     {plon0, plon0 + pnlon*pdlon, plat0, plat0 + pnlat*pdlat},
		Interpolate: {plon0 + pdlon/2, plon0 + (pnlon-0.5)*pdlon, latC(0), latC(patch.NumCells() - 1)},
	}
	const margin = 1e-6 // degrees; no target centroid comes this close to the hulls
	for method, h := range hulls {
		m, err := Build(patch, global, Options{Method: method, Order: map[string]int{Nearest: 0, Interpolate: 1}[method]})
		if err != nil {
			t.Fatal(err)
		}
		checkedIn, checkedOut := 0, 0
		for j, p := range global.CellCentroid {
			lon, lat := lonLatDeg(p)
			in := lon > h.lon0+margin && lon < h.lon1-margin && lat > h.lat0+margin && lat < h.lat1-margin
			out := lon < h.lon0-margin || lon > h.lon1+margin || lat < h.lat0-margin || lat > h.lat1+margin
			c := m.Target.Coverage[j]
			empty := m.W.RowStart[j] == m.W.RowStart[j+1]
			switch {
			case in:
				checkedIn++
				if c != 1 || empty {
					t.Errorf("%s: target %d at (%.3f, %.3f) inside: coverage %g", method, j, lon, lat, c)
				}
			case out:
				checkedOut++
				if c != 0 || !empty {
					t.Errorf("%s: target %d at (%.3f, %.3f) outside: coverage %g", method, j, lon, lat, c)
				}
			}
		}
		t.Logf("%s: %d targets inside, %d outside checked", method, checkedIn, checkedOut)
		if checkedIn == 0 {
			t.Errorf("%s: no target inside", method)
		}
	}
}
