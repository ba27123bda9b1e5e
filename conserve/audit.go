package conserve

import (
	"fmt"
	"math"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// Audit runs the checks of DESIGN.md §5 on the map m and returns the report with the
// gates of opt.Thresholds evaluated. Checks that need something the map and options do
// not provide (measures, meshes, a prolongation) are skipped with a note. It returns an
// error only when the inputs contradict each other (an invalid matrix, a mesh or
// prolongation whose sizes do not match the map).
//
// Cost without opt.Spectral: O(nnz) per test field and probe plus a transpose; a map
// with 4.2 million entries audits in about 1.1 s on the project's 2-core machine
// (BenchmarkAudit; 2–4 s while other jobs share it) and needs about 0.8 GB of scratch. With opt.Spectral: see
// FourierAnalysis, SphereNoise and NullSpace.
func Audit(m *weights.Map, opt Options) (*Report, error) {
	if err := m.Check(); err != nil {
		return nil, fmt.Errorf("audit: %w", err)
	}
	w := m.W
	ns, nt := w.Cols, w.Rows
	r := &Report{
		Schema: SchemaVersion, Method: m.Method, Order: m.Order,
		Source: sideInfo(&m.Source), Target: sideInfo(&m.Target),
		Sources: ns, Targets: nt, Entries: w.NNZ(),
		Failures: []Failure{}, Notes: []string{},
	}
	note := func(format string, args ...any) { r.Notes = append(r.Notes, fmt.Sprintf(format, args...)) }
	for _, h := range []grids.HLocation{m.Source.Location.H, m.Target.Location.H} {
		if h == grids.EdgeNormal || h == grids.EdgeTangential {
			r.VectorComponent = true
		}
	}
	if r.VectorComponent {
		note("a component of a vector map (%s to %s): the sums of its weights mix directions, so the conservation, consistency and bounds of scalar fields are shown but not gated; the pair check and the energy inner products judge it", m.Source.Location, m.Target.Location)
	}

	srcMesh, err := cellMesh(opt.SourceMesh, &m.Source, "source")
	if err != nil {
		return nil, err
	}
	tgtMesh, err := cellMesh(opt.TargetMesh, &m.Target, "target")
	if err != nil {
		return nil, err
	}
	if opt.SourceMesh != nil && srcMesh == nil {
		note("source mesh ignored: the source location is %s, not cell", m.Source.Location)
	}
	if opt.TargetMesh != nil && tgtMesh == nil {
		note("target mesh ignored: the target location is %s, not cell", m.Target.Location)
	}
	fields := opt.Fields
	if fields == nil && srcMesh != nil {
		fields = DefaultFields(srcMesh.Surface, srcMesh.Lx, srcMesh.Ly)
	}
	srcFields := sourceFields(ns, srcMesh, fields, opt.seed())
	var tgtFields []NamedVector
	if tgtMesh != nil && (srcMesh == nil || srcMesh.Surface == tgtMesh.Surface) {
		tgtFields = sourceFields(nt, tgtMesh, fields, opt.seed()+10)
	} else {
		tgtFields = sourceFields(nt, nil, nil, opt.seed()+10)
	}
	if srcMesh != nil {
		r.sourceMesh = srcMesh
	}
	if tgtMesh != nil {
		r.targetMesh = tgtMesh
	}

	ms, mt := m.Source.Measure, m.Target.Measure
	hasMeasures := ms != nil && mt != nil
	covered := coveredTargets(m.Target.Coverage, m.Normalization, nt)

	// 1. Conservation.
	if hasMeasures {
		r.Conservation = CheckConservation(w, ms, mt, m.Source.Coverage, srcFields)
		v := r.Conservation.MaxDefect
		r.ConservationMaxDefect = &v
	} else {
		note("conservation not checked: the %s measure is unknown", missingSide(ms, mt))
	}
	// 2. Consistency.
	r.Consistency = CheckConsistency(w, covered)
	r.ConsistencyMaxDefect = r.Consistency.MaxDefect
	// 3. Bounds.
	r.Bounds = CheckBounds(w, covered, srcFields)
	r.NegativeWeights = r.Bounds.NegativeWeights

	// 4. Adjoint pair and 5. round trips.
	sides := PairSides{MS: ms, MT: mt, CovS: m.Source.Coverage, CovT: m.Target.Coverage,
		CoveredS: coveredOnly(m.Source.Coverage, ns), CoveredT: covered}
	var p *weights.CSR
	how := ""
	switch {
	case opt.Prolongation != nil:
		pm := opt.Prolongation
		if err := pm.Check(); err != nil {
			return nil, fmt.Errorf("audit: prolongation: %w", err)
		}
		if pm.W.Rows != ns || pm.W.Cols != nt {
			return nil, fmt.Errorf("audit: prolongation is %d × %d but the map is %d × %d (want the transpose shape)", pm.W.Rows, pm.W.Cols, nt, ns)
		}
		p, how = pm.W, "given"
		if hasMeasures {
			pr := CheckPair(w, p, sides, opt.probes(), opt.seed())
			r.Pair = &pr
		} else {
			note("adjoint pair not checked: the %s measure is unknown", missingSide(ms, mt))
		}
	case hasMeasures:
		p, how = Adjoint(w, ms, mt), "adjoint"
	}
	var wAdj *weights.CSR
	if hasMeasures {
		if how == "adjoint" {
			wAdj = p
		} else {
			wAdj = Adjoint(w, ms, mt)
		}
	}
	if p != nil {
		sm, tm := ms, mt
		if !hasMeasures {
			sm, tm = ones(ns), ones(nt)
			note("round trips use unit measures: the %s measure is unknown", missingSide(ms, mt))
		}
		s2 := sides
		s2.MS, s2.MT = sm, tm
		rt := CheckRoundTrip(w, p, s2, srcFields, tgtFields, opt.probes(), opt.seed()+20, how)
		r.RoundTrip = &rt
	} else {
		note("round trips not checked: no prolongation and no measures to build the adjoint")
	}

	// 6. Noise, damping, invisible modes.
	if opt.Spectral {
		r.spectral(w, p, wAdj, srcMesh, ms, mt, opt, note)
	}

	// 7. Accuracy.
	if srcMesh != nil && tgtMesh != nil && len(fields) > 0 && mt != nil {
		if srcMesh.Surface != tgtMesh.Surface {
			note("accuracy not checked: the meshes lie on different surfaces")
		} else {
			acc, err := CheckAccuracy(w, srcMesh, tgtMesh, mt, covered, fields, opt.quadrature(srcMesh, tgtMesh), opt.accuracySample())
			if err != nil {
				note("accuracy not checked: %v", err)
			} else {
				r.Accuracy = acc
			}
		}
	} else {
		note("accuracy not checked: it needs cell meshes on both sides, target measures and positional test fields")
	}

	r.Evaluate(opt.Thresholds)
	return r, nil
}

// Evaluate (re)applies the gates t to the report, setting Failures and Passed. Call it
// again after attaching a Convergence section or changing thresholds.
func (r *Report) Evaluate(t Thresholds) {
	r.Failures = t.Evaluate(r)
	if r.Failures == nil {
		r.Failures = []Failure{}
	}
	r.Passed = len(r.Failures) == 0
}

// spectral runs check 6.
func (r *Report) spectral(w, p, wAdj *weights.CSR, srcMesh *grids.Mesh, ms, mt []float64, opt Options, note func(string, ...any)) {
	nsOpt := opt.NullSpace
	if srcMesh != nil && nsOpt.Adjacency == nil {
		nsOpt.Adjacency = Adjacency(srcMesh)
	}
	if ns, err := NullSpace(w, ms, mt, nsOpt); err != nil {
		note("null space not analysed: %v", err)
	} else {
		r.NullSpace = ns
	}
	if srcMesh == nil || p == nil {
		note("noise and damping not analysed: they need the source cell mesh and a prolongation or measures")
		return
	}
	sm := ms
	if sm == nil {
		sm = srcMesh.CellArea
	}
	round := []*weights.CSR{p, w}
	switch {
	case srcMesh.Surface == grids.Plane && srcMesh.PeriodicX && (srcMesh.PeriodicY || isOneRow(srcMesh)):
		var wSym *weights.CSR
		if wAdj != nil {
			wSym = w
		}
		f, err := FourierAnalysis(srcMesh, sm, round, wSym, wAdj, opt.Fourier)
		if err != nil {
			if f == nil {
				note("Fourier analysis not done: %v", err)
				return
			}
			note("symbol analysis not done: %v", err)
		}
		r.Fourier = f
	case srcMesh.Surface == grids.Sphere:
		s, err := SphereNoise(srcMesh, sm, round, opt.HighPass)
		if err != nil {
			note("sphere noise not measured: %v", err)
			return
		}
		r.SphereNoise = s
	default:
		note("noise and damping not analysed: the source mesh is a plane that is not periodic")
	}
}

// isOneRow reports whether every cell of a plane mesh spans its whole height (a strip).
func isOneRow(m *grids.Mesh) bool {
	for c := 0; c < m.NumCells(); c++ {
		var buf = m.CellPoints(c, nil)
		lo, hi := buf[0].Y, buf[0].Y
		for _, p := range buf {
			lo, hi = min(lo, p.Y), max(hi, p.Y)
		}
		if hi-lo < m.Ly*(1-1e-12) {
			return false
		}
	}
	return true
}

func ones(n int) []float64 {
	x := make([]float64, n)
	for i := range x {
		x[i] = 1
	}
	return x
}

func missingSide(ms, mt []float64) string {
	switch {
	case ms == nil && mt == nil:
		return "source and target"
	case ms == nil:
		return "source"
	}
	return "target"
}

// cellMesh returns mesh when the side's location is a 2-D or layered cell location and
// checks its size; nil when mesh is nil or the location is not cell.
func cellMesh(mesh *grids.Mesh, s *weights.Side, name string) (*grids.Mesh, error) {
	if mesh == nil || s.Location.H != grids.Cell {
		return nil, nil
	}
	if mesh.NumCells() != s.Size {
		return nil, fmt.Errorf("audit: %s mesh %q has %d cells but the map's %s has %d degrees of freedom", name, mesh.Name, mesh.NumCells(), name, s.Size)
	}
	return mesh, nil
}

func sideInfo(s *weights.Side) SideInfo {
	si := SideInfo{Mesh: s.MeshName, Fingerprint: s.MeshFingerprint, Location: s.Location.String(), Size: s.Size,
		HasMeasure: s.Measure != nil, HasCoverage: s.Coverage != nil}
	if s.Measure != nil {
		si.MeasureTotal = weights.Sum(s.Measure)
	}
	for i := 0; i < s.Size; i++ {
		if fullyCovered(s.Coverage, i) {
			si.FullyCovered++
		}
	}
	return si
}

// meshPoints are the cells of a mesh in plot coordinates: centroids and polygons in
// longitude and latitude (degrees) on the sphere, in x and y on the plane.
type meshPoints struct {
	sphere bool
	x, y   []float64
	polys  [][][2]float64 // per cell; cells crossing the date line or a period are unwrapped
	name   string
	// period of the plot coordinates (360 in longitude; Lx, Ly on periodic planes; 0 none)
	px, py float64
}

func pointsOf(m *grids.Mesh) *meshPoints {
	n := m.NumCells()
	p := &meshPoints{sphere: m.Surface == grids.Sphere, name: m.Name,
		x: make([]float64, n), y: make([]float64, n), polys: make([][][2]float64, n)}
	const deg = 180 / math.Pi
	if p.sphere {
		p.px = 360
	} else {
		if m.PeriodicX {
			p.px = m.Lx
		}
		if m.PeriodicY {
			p.py = m.Ly
		}
	}
	for c, g := range m.CellCentroid {
		if !p.sphere {
			p.x[c], p.y[c] = g.X, g.Y
			var poly [][2]float64
			for _, v := range m.CellVertices(c) {
				q := m.Unwrap(m.Verts[v], g)
				poly = append(poly, [2]float64{q.X, q.Y})
			}
			p.polys[c] = poly
			continue
		}
		lon0, lat0 := analytic.LonLat(g)
		p.x[c], p.y[c] = lon0*deg, lat0*deg
		// Unwrap vertex longitudes along the polygon; a cell around a pole winds by
		// ±360° and is closed along the pole's latitude line.
		vs := m.CellVertices(c)
		var poly [][2]float64
		prev := lon0
		for k, v := range vs {
			q := m.Verts[v]
			lon, lat := analytic.LonLat(q)
			if math.Abs(q.Z) >= 1-1e-15 { // a pole vertex: use the neighbours' longitudes
				a := m.Verts[vs[(k+len(vs)-1)%len(vs)]]
				b := m.Verts[vs[(k+1)%len(vs)]]
				la, _ := analytic.LonLat(a)
				lb, _ := analytic.LonLat(b)
				la = prev + math.Remainder(la-prev, 2*math.Pi)
				lb = la + math.Remainder(lb-la, 2*math.Pi)
				poly = append(poly, [2]float64{la * deg, lat * deg}, [2]float64{lb * deg, lat * deg})
				prev = lb
				continue
			}
			lon = prev + math.Remainder(lon-prev, 2*math.Pi)
			poly = append(poly, [2]float64{lon * deg, lat * deg})
			prev = lon
		}
		first := poly[0][0] / deg
		if wind := prev + math.Remainder(first-prev, 2*math.Pi) - first; math.Abs(wind) > math.Pi {
			// Encloses a pole: close along latitude ±90.
			pole := 90.0
			if g.Z < 0 {
				pole = -90
			}
			last := poly[len(poly)-1][0]
			poly = append(poly, [2]float64{last, pole}, [2]float64{poly[0][0], pole})
		}
		p.polys[c] = poly
	}
	return p
}
