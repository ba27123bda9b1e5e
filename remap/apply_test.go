package remap

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/conserve"
	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/weights"
)

// conserveTol is the conservation bar of DESIGN.md §7: conservative maps keep integrals
// to 1e-13 relative (the maps' own defects are ~1e-15, and the sums are compensated).
const conserveTol = 1e-13

// tc2Setup builds a cubed sphere N=8 and a 10° latitude–longitude grid, a conservative
// map of the given order between them, and a field file with the exact cell means of the
// Williamson et al. (1992) test case 2 height at two tilts (α = 0 and 0.05, the
// published standard values), as (time, cell) with a topology naming the source mesh.
func tc2Setup(t *testing.T, order int) (src, tgt *grids.Mesh, mapPath, fieldPath string, h []float64) {
	t.Helper()
	var err error
	src, err = grids.NewCubedSphere(8, 0)
	check(t, err)
	tgt, err = grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18})
	check(t, err)
	m, err := Build(src, tgt, Options{Method: Conservative, Order: order})
	check(t, err)
	dir := t.TempDir()
	mapPath = writeMapFile(t, dir, fmt.Sprintf("m%d.nc", order), m)
	n := src.NumCells()
	h = make([]float64, 2*n)
	for k, alpha := range []float64{0, 0.05} {
		// CellMeansTo: exact to ≈1e-14 at n = 8 on these cells (its documentation).
		check(t, conserve.CellMeansTo(h[k*n:(k+1)*n], src, analytic.TC2{Alpha: alpha}.Height, 8))
	}
	fieldPath = filepath.Join(dir, "tc2.nc")
	writeTestFile(t, fieldPath, ncio.NetCDF4,
		[]tdim{{"time", 2, true}, {"ncells", n, false}},
		[]tvar{topoVar(src, "ncells", ""),
			{name: "time", dims: []string{"time"}, data: []float64{0, 24}, text: [][2]string{{"units", "hours since 2000-01-01"}}},
			{name: "h", dims: []string{"time", "ncells"}, data: h,
				text: [][2]string{{"units", "m"}, {"long_name", "fluid depth, Williamson test case 2"}, {"mesh", "mesh"}, {"location", "face"}}}})
	return
}

// TestApplyTC2Conservation: a conservative map applied to the height field of Williamson,
// Drake, Hack, Jakob & Swarztrauber (1992, J. Comput. Phys. 102:211–224, test case 2),
// given as exact cell means (conserve.CellMeansTo of analytic.TC2.Height), keeps the area
// integral Σ A h to 1e-13 relative (DESIGN.md §7), for first- and second-order maps; and
// the result is close to the exact target cell means (accuracy bound: see below).
func TestApplyTC2Conservation(t *testing.T) {
	for _, order := range []int{1, 2} {
		t.Run(fmt.Sprintf("order%d", order), func(t *testing.T) {
			src, tgt, mapPath, fieldPath, h := tc2Setup(t, order)
			a, err := NewMapApplier(mapPath)
			check(t, err)
			out := filepath.Join(t.TempDir(), "out.nc")
			res, err := a.ApplyFile(fieldPath, out, ApplyOptions{})
			check(t, err)
			if len(res.Vars) != 1 || res.Vars[0].Name != "h" || res.Vars[0].Records != 2 {
				t.Fatalf("result %+v", res.Vars)
			}
			got, v := readVar(t, out, "h")
			if fmt.Sprint(v.Dims) != "[time nmesh_face]" {
				t.Errorf("output dimensions %v", v.Dims)
			}
			ns, nt := src.NumCells(), tgt.NumCells()
			exact := make([]float64, nt)
			for k, alpha := range []float64{0, 0.05} {
				before := compSum(src.CellArea, h[k*ns:(k+1)*ns])
				after := compSum(tgt.CellArea, got[k*nt:(k+1)*nt])
				if rel := math.Abs(after-before) / compAbsSum(src.CellArea, h[k*ns:(k+1)*ns]); rel > conserveTol {
					t.Errorf("α=%v: area integral changed by %.3g relative (> %g)", alpha, rel, conserveTol)
				}
				check(t, conserve.CellMeansTo(exact, tgt, analytic.TC2{Alpha: alpha}.Height, 8))
				// accTol: the height varies by 1905 m pole to equator (REFERENCES.md,
				// 2998.115 − 1092.833); 10° target cells averaging ~11° source cells
				// misplace at most a few percent of that, so 3 % of the range is a loose
				// bar that still catches a wrong map or a shuffled field.
				const accTol = 0.03 * 1905.3
				for i, x := range got[k*nt : (k+1)*nt] {
					if math.Abs(x-exact[i]) > accTol {
						t.Fatalf("α=%v: target %d = %v, exact cell mean %v", alpha, i, x, exact[i])
					}
				}
			}
			if s := readAttr(t, out, "h", "colbridge_method"); !strings.HasPrefix(s, fmt.Sprintf("conservative order %d", order)) {
				t.Errorf("colbridge_method = %q", s)
			}
			if fp := readAttr(t, out, "h", "colbridge_source_mesh_fingerprint"); fp != src.Fingerprint() {
				t.Errorf("source fingerprint %q", fp)
			}
		})
	}
}

// stdPlan writes a coupling plan for the standard-atmosphere test: a cubed sphere N=6
// with 20 stretched levels to columns on the icosahedral dual level 2 with 12 uniform
// levels (different levels, so the vertical factor is not the identity).
func stdPlan(t *testing.T) (dir string, dyn, cols *grids.Mesh, dynLev, colLev *grids.Levels) {
	t.Helper()
	dir = t.TempDir()
	var err error
	dyn, err = grids.NewCubedSphere(6, 0)
	check(t, err)
	cols, err = grids.NewIcosahedralDual(2, 0)
	check(t, err)
	check(t, grids.WriteUGRID(filepath.Join(dir, "dyn.nc"), dyn))
	check(t, grids.WriteUGRID(filepath.Join(dir, "cols.nc"), cols))
	plan := `
[dynamics]
mesh = "dyn.nc"
levels = { nlev = 20, top = 30000.0, stretch = 2.0 }
[columns]
mesh = "cols.nc"
levels = { nlev = 12, top = 30000.0 }
[[variable]]
name = "air_density"
source = "cell/layer"
target = "cell/layer"
vertical = "conservative"
[[variable]]
name = "tracer"
source = "cell/layer"
target = "cell/layer"
vertical = "conservative"
measure = "layer_mass"
[[variable]]
name = "theta"
source = "cell/interface"
target = "cell/layer"
vertical = "linear"
[[variable]]
name = "u"
source = "edge-normal/layer"
target = "cell/layer"
components = ["u_east", "u_north"]
vertical = "conservative"
prolongation = "average"
`
	check(t, os.WriteFile(filepath.Join(dir, "plan.toml"), []byte(plan), 0o644))
	p, err := ReadPlan(filepath.Join(dir, "plan.toml"))
	check(t, err)
	_, err = BuildBundle(p, filepath.Join(dir, "bundle"), BundleOptions{})
	check(t, err)
	dynLev, err = grids.NewStretchedLevels(grids.Height, 20, 0, 30000, 2)
	check(t, err)
	colLev, err = grids.NewUniformLevels(grids.Height, 12, 0, 30000)
	check(t, err)
	return
}

// stdFields writes the dynamics file of the standard-atmosphere test: two records of
// air_density (exact layer means of the 1976 U.S. Standard Atmosphere density, times a
// horizontal factor in record 1), layer_mass (the same as mass per area), theta on the
// interfaces, a tracer, and u on the edges.
func stdFields(t *testing.T, path string, dyn *grids.Mesh, lev *grids.Levels) (rho, mass, q, u []float64) {
	nc, ne, nl := dyn.NumCells(), dyn.NumEdges(), lev.NLev()
	z := lev.Interfaces
	rho, mass, q = make([]float64, 2*nl*nc), make([]float64, 2*nl*nc), make([]float64, 2*nl*nc)
	theta := make([]float64, 2*(nl+1)*nc)
	u = make([]float64, 2*nl*ne)
	for r := 0; r < 2; r++ {
		for c := 0; c < nc; c++ {
			p := dyn.CellCentroid[c]
			lon, lat := analytic.LonLat(p)
			f := 1.0
			if r == 1 {
				f = 1 + 0.1*math.Sin(lat)*math.Cos(2*lon)
			}
			for k := 0; k < nl; k++ {
				// StdColumnMass: ∫ρ dz of the 1976 standard atmosphere, exact to 1e-14.
				m := analytic.StdColumnMass(z[k], z[k+1])
				i := (r*nl+k)*nc + c
				mass[i] = f * m
				rho[i] = f * m / (z[k+1] - z[k])
				q[i] = (1 + 0.5*math.Sin(lat)*math.Cos(lon)) * math.Exp(-0.5*(z[k]+z[k+1])/8000)
			}
			for k := 0; k <= nl; k++ {
				T, P, _ := analytic.StdAtmosphere(analytic.GeopotentialHeight(z[k]))
				theta[(r*(nl+1)+k)*nc+c] = T * math.Pow(analytic.StdP0/P, 0.2857)
			}
		}
		for e := 0; e < ne; e++ {
			un := r3.Dot(analytic.TC2{Alpha: 0.05}.Velocity(dyn.EdgeMid[e]), dyn.EdgeNormal[e])
			for k := 0; k < nl; k++ {
				u[(r*nl+k)*ne+e] = un * (1 + float64(k)/10)
			}
		}
	}
	face := [][2]string{{"mesh", "mesh"}, {"location", "face"}}
	writeTestFile(t, path, ncio.NetCDF4,
		[]tdim{{"time", 2, true}, {"lev", nl, false}, {"ilev", nl + 1, false}, {"ncells", nc, false}, {"nedges", ne, false}},
		[]tvar{topoVar(dyn, "ncells", "nedges"),
			{name: "lev", dims: []string{"lev"}, data: lev.Midpoints(), text: [][2]string{{"units", "m"}}},
			{name: "air_density", dims: []string{"time", "lev", "ncells"}, data: rho,
				text: append([][2]string{{"units", "kg m-3"}, {"standard_name", "air_density"}}, face...)},
			{name: "layer_mass", dims: []string{"time", "lev", "ncells"}, data: mass, text: append([][2]string{{"units", "kg m-2"}}, face...)},
			{name: "tracer", dims: []string{"time", "lev", "ncells"}, data: q, text: append([][2]string{{"units", "1"}}, face...)},
			{name: "theta", dims: []string{"time", "ilev", "ncells"}, data: theta, text: append([][2]string{{"units", "K"}}, face...)},
			{name: "u", dims: []string{"time", "lev", "nedges"}, data: u, text: [][2]string{{"units", "m s-1"}, {"mesh", "mesh"}, {"location", "edge"}}},
		})
	return
}

// TestApplyStdAtmosphereColumnMass: columns built from the 1976 U.S. Standard Atmosphere
// (NOAA/NASA/USAF 1976; analytic.StdColumnMass gives ∫ρ dz of each layer) keep their
// column mass through a bundle's restriction to columns with other levels and a
// different mesh: every target column of the horizontally uniform record holds
// StdColumnMass(0, 30 km) to 1e-13 relative (thickness-weighted density and the mapped
// layer masses), and the mass-weighted tracer keeps Σ A m q over the globe to 1e-13 in
// both records (DESIGN.md §7); so does the prolongation back.
func TestApplyStdAtmosphereColumnMass(t *testing.T) {
	dir, dyn, cols, dynLev, colLev := stdPlan(t)
	in := filepath.Join(dir, "dyn_fields.nc")
	_, mass, q, _ := stdFields(t, in, dyn, dynLev)
	a, err := NewBundleApplier(filepath.Join(dir, "bundle"))
	check(t, err)
	phys := filepath.Join(dir, "phys", "dyn_fields.nc")
	check(t, os.MkdirAll(filepath.Dir(phys), 0o755))
	res, err := a.ApplyFile(in, phys, ApplyOptions{})
	check(t, err)
	if res.Direction != Restriction {
		t.Fatalf("direction %q", res.Direction)
	}
	column := analytic.StdColumnMass(0, 30000)
	nc, nl := cols.NumCells(), colLev.NLev()
	dz := colLev.Thicknesses()
	rho, _ := readVar(t, phys, "air_density")
	lm, _ := readVar(t, phys, "layer_mass")
	for c := 0; c < nc; c++ {
		var byRho, byMass weights.Accumulator
		for k := 0; k < nl; k++ {
			byRho.Add(rho[k*nc+c] * dz[k])
			byMass.Add(lm[k*nc+c])
		}
		for _, s := range []struct {
			what string
			v    float64
		}{{"Σ ρ Δz", byRho.Sum()}, {"Σ layer_mass", byMass.Sum()}} {
			if rel := math.Abs(s.v-column) / column; rel > conserveTol {
				t.Fatalf("column %d: %s = %.15g, the 1976 standard atmosphere has %.15g (relative %.3g)", c, s.what, s.v, column, rel)
			}
		}
	}
	// Tracer mass over the globe, both records.
	qOut, _ := readVar(t, phys, "tracer")
	globalMass := func(m *grids.Mesh, nlev int, mm, qq []float64, r int) (sum, abs float64) {
		n := m.NumCells()
		var s, sa weights.Accumulator
		for k := 0; k < nlev; k++ {
			for c := 0; c < n; c++ {
				i := (r*nlev+k)*n + c
				s.Add(m.CellArea[c] * mm[i] * qq[i])
				sa.Add(math.Abs(m.CellArea[c] * mm[i] * qq[i]))
			}
		}
		return s.Sum(), sa.Sum()
	}
	for r := 0; r < 2; r++ {
		before, scale := globalMass(dyn, dynLev.NLev(), mass, q, r)
		after, _ := globalMass(cols, nl, lm, qOut, r)
		if rel := math.Abs(after-before) / scale; rel > conserveTol {
			t.Errorf("record %d: tracer mass Σ A m q changed by %.3g relative", r, rel)
		}
	}
	// And back: the prolongation keeps the tracer mass too.
	back := filepath.Join(dir, "back", "dyn_fields.nc")
	check(t, os.MkdirAll(filepath.Dir(back), 0o755))
	res, err = a.ApplyFile(phys, back, ApplyOptions{})
	check(t, err)
	if res.Direction != Prolongation {
		t.Fatalf("direction back %q", res.Direction)
	}
	qBack, _ := readVar(t, back, "tracer")
	mBack, _ := readVar(t, back, "layer_mass")
	for r := 0; r < 2; r++ {
		before, scale := globalMass(cols, nl, lm, qOut, r)
		after, _ := globalMass(dyn, dynLev.NLev(), mBack, qBack, r)
		if rel := math.Abs(after-before) / scale; rel > conserveTol {
			t.Errorf("record %d back: tracer mass changed by %.3g relative", r, rel)
		}
	}
}

// TestApplyBundleMatchesFactored: the outputs of a bundle equal the maps applied
// directly: horizontal ⊗ vertical by ApplyFactoredTo (the tested Kronecker product) for
// the density, theta and both wind components, and for the wind prolongation the sum
// of the two component maps. Tolerance: the two paths sum in different orders.
func TestApplyBundleMatchesFactored(t *testing.T) {
	dir, dyn, _, dynLev, _ := stdPlan(t)
	in := filepath.Join(dir, "dyn_fields.nc")
	rho, _, _, u := stdFields(t, in, dyn, dynLev)
	bdir := filepath.Join(dir, "bundle")
	a, err := NewBundleApplier(bdir)
	check(t, err)
	phys := filepath.Join(t.TempDir(), "phys.nc")
	_, err = a.ApplyFile(in, phys, ApplyOptions{})
	check(t, err)
	man := a.Manifest
	load := func(file string) *weights.Map {
		m, err := weights.ReadMap(filepath.Join(bdir, file))
		check(t, err)
		return m
	}
	// orderTol: a few roundings of the terms, relative to the largest value.
	const orderTol = 1e-13
	compare := func(name string, got, want []float64) {
		t.Helper()
		big := 0.0
		for _, x := range want {
			big = math.Max(big, math.Abs(x))
		}
		for i := range want {
			if math.Abs(got[i]-want[i]) > orderTol*big {
				t.Fatalf("%s: value %d = %v, direct product %v", name, i, got[i], want[i])
			}
		}
	}
	for _, c := range []struct {
		entry, out string
		src        []float64
	}{{"air_density.restrict", "air_density", rho}, {"u.east.restrict", "u_east", u}, {"u.north.restrict", "u_north", u}} {
		e, _ := man.Find(c.entry)
		h, v := load(e.File), load(e.Vertical)
		got, _ := readVar(t, phys, c.out)
		nin, nout := h.W.Cols*v.W.Cols, h.W.Rows*v.W.Rows
		want := make([]float64, 2*nout)
		for r := 0; r < 2; r++ {
			ApplyFactoredTo(want[r*nout:(r+1)*nout], c.src[r*nin:(r+1)*nin], h.W, v.W, ColumnFastest)
		}
		compare(c.out, got, want)
	}
	// Wind back: u = P_east·V(u_east) + P_north·V(u_north).
	back := filepath.Join(t.TempDir(), "back.nc")
	_, err = a.ApplyFile(phys, back, ApplyOptions{})
	check(t, err)
	ue, _ := readVar(t, phys, "u_east")
	un, _ := readVar(t, phys, "u_north")
	gotU, v := readVar(t, back, "u")
	if len(v.Shape) != 3 || v.Shape[1] != 20 || v.Shape[2] != dyn.NumEdges() {
		t.Errorf("u back has dimensions %v %v, want (time, 20 layers, %d edges)", v.Dims, v.Shape, dyn.NumEdges())
	}
	pe, _ := man.Find("u.east.prolong")
	pn, _ := man.Find("u.north.prolong")
	he, hn, vv := load(pe.File), load(pn.File), load(pe.Vertical)
	nin, nout := he.W.Cols*vv.W.Cols, he.W.Rows*vv.W.Rows
	want := make([]float64, 2*nout)
	tmp := make([]float64, nout)
	for r := 0; r < 2; r++ {
		ApplyFactoredTo(want[r*nout:(r+1)*nout], ue[r*nin:(r+1)*nin], he.W, vv.W, ColumnFastest)
		ApplyFactoredTo(tmp, un[r*nin:(r+1)*nin], hn.W, vv.W, ColumnFastest)
		for i := range tmp {
			want[r*nout+i] += tmp[i]
		}
	}
	compare("u (prolonged)", gotU, want)
}

// TestApplyMissingValues: a missing source value (the _FillValue, a missing_value or NaN)
// makes exactly the targets whose rows use it missing (CF §2.5.1 fill semantics; the
// rows are read from the map), the count is reported, and every other target equals the
// map applied to the complete field: it does not depend on the missing value.
func TestApplyMissingValues(t *testing.T) {
	src, _, mapPath, _, _ := tc2Setup(t, 1)
	m, err := weights.ReadMap(mapPath)
	check(t, err)
	n := src.NumCells()
	x := make([]float64, n)
	for i := range x {
		x[i] = 1 + float64(i%17)
	}
	const fill, miss = -999.0, -888.0
	holes := map[int]float64{3: fill, 100: miss, 250: math.NaN()}
	y := append([]float64(nil), x...)
	for i, v := range holes {
		y[i] = v
	}
	dir := t.TempDir()
	in := filepath.Join(dir, "in.nc")
	writeTestFile(t, in, ncio.NetCDF4, []tdim{{"ncells", n, false}},
		[]tvar{{name: "f", dims: []string{"ncells"}, data: y, nums: map[string][]float64{"_FillValue": {fill}, "missing_value": {miss}}}})
	a, err := NewMapApplier(mapPath)
	check(t, err)
	out := filepath.Join(dir, "out", "in.nc")
	check(t, os.MkdirAll(filepath.Dir(out), 0o755))
	res, err := a.ApplyFile(in, out, ApplyOptions{})
	check(t, err)
	got, _ := readVar(t, out, "f")
	want := make([]float64, m.W.Rows)
	m.W.ApplyTo(want, x)
	spoiled := 0
	for i := 0; i < m.W.Rows; i++ {
		uses := false
		for k := m.W.RowStart[i]; k < m.W.RowStart[i+1]; k++ {
			_, ok := holes[int(m.W.ColIndex[k])]
			uses = uses || ok
		}
		switch {
		case uses:
			spoiled++
			if got[i] != fill {
				t.Errorf("target %d uses a missing source but holds %v, not the fill value", i, got[i])
			}
		case got[i] != want[i]:
			t.Errorf("target %d = %v, want %v", i, got[i], want[i])
		}
	}
	r := res.Vars[0]
	if r.MissingSources != 3 || r.Missing != int64(spoiled) || spoiled == 0 {
		t.Errorf("reported %d missing sources and %d spoiled targets; want 3 and %d", r.MissingSources, r.Missing, spoiled)
	}
	if fv := readAttr(t, out, "f", "_FillValue"); fv != "" {
		t.Errorf("_FillValue should be numeric, got text %q", fv)
	}
}

// TestApplyUncoveredTargets: targets no source covers (a regional source, a global
// target) get the fill value and are counted; covered ones are the map's values. The
// map's coverage says which (remap.Build: empty rows, coverage 0).
func TestApplyUncoveredTargets(t *testing.T) {
	lon := []float64{0, 10, 20, 30, 40}
	lat := []float64{-20, -10, 0, 10, 20}
	src, err := grids.NewLatLonEdges(lon, lat, 0)
	check(t, err)
	tgt, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18})
	check(t, err)
	m, err := Build(src, tgt, Options{Method: Conservative, Order: 1})
	check(t, err)
	dir := t.TempDir()
	mp := writeMapFile(t, dir, "m.nc", m)
	in := filepath.Join(dir, "in.nc")
	x := make([]float64, src.NumCells())
	for i := range x {
		x[i] = 5
	}
	writeTestFile(t, in, ncio.Classic64, []tdim{{"n", len(x), false}}, []tvar{{name: "f", dims: []string{"n"}, data: x, t: ncio.Float32}})
	a, err := NewMapApplier(mp)
	check(t, err)
	out := filepath.Join(dir, "o", "in.nc")
	check(t, os.MkdirAll(filepath.Dir(out), 0o755))
	res, err := a.ApplyFile(in, out, ApplyOptions{})
	check(t, err)
	got, v := readVar(t, out, "f")
	if v.Type != ncio.Float32 {
		t.Errorf("float input gave %v output", v.Type)
	}
	unc := 0
	for i, g := range got {
		covered := m.W.RowStart[i+1] > m.W.RowStart[i]
		if !covered {
			unc++
			if float32(g) != float32(defaultFillFloat) {
				t.Fatalf("uncovered target %d = %v", i, g)
			}
		} else if math.Abs(g-5) > 1e-6 { // float32 output: 5 to its precision (consistency)
			t.Fatalf("covered target %d = %v, want 5 (consistent map of a constant)", i, g)
		}
	}
	if unc == 0 || res.Vars[0].Uncovered != int64(unc) {
		t.Errorf("uncovered: counted %d, reported %d", unc, res.Vars[0].Uncovered)
	}
}

// TestApplyBounds: a second-order conservative map creates new extrema at a jump (its
// weights are partly negative); with Bounds, clip-and-assured-sum (Bradley et al. 2019)
// keeps every target within the range of the source values its row uses and the area
// integral to 1e-13 relative.
func TestApplyBounds(t *testing.T) {
	src, tgt, mapPath, _, _ := tc2Setup(t, 2)
	m, err := weights.ReadMap(mapPath)
	check(t, err)
	n := src.NumCells()
	x := make([]float64, n)
	c := r3.Unit(r3.Vec{X: 1, Y: 0.3, Z: 0.4})
	for i := range x {
		if r3.Dot(src.CellCentroid[i], c) > 0.8 {
			x[i] = 10 // a flat-topped bump with a jump: overshoots on both sides
		}
	}
	dir := t.TempDir()
	in := filepath.Join(dir, "in.nc")
	writeTestFile(t, in, ncio.NetCDF4, []tdim{{"ncells", n, false}}, []tvar{{name: "f", dims: []string{"ncells"}, data: x}})
	a, err := NewMapApplier(mapPath)
	check(t, err)
	outside := func(y []float64) int {
		k := 0
		for i := 0; i < m.W.Rows; i++ {
			lo, hi := math.Inf(1), math.Inf(-1)
			for p := m.W.RowStart[i]; p < m.W.RowStart[i+1]; p++ {
				lo = math.Min(lo, x[m.W.ColIndex[p]])
				hi = math.Max(hi, x[m.W.ColIndex[p]])
			}
			// boundsTol: the assured-sum step lands on a bound to rounding.
			const boundsTol = 1e-12
			if y[i] < lo-boundsTol || y[i] > hi+boundsTol {
				k++
			}
		}
		return k
	}
	plain := filepath.Join(dir, "plain", "in.nc")
	bounded := filepath.Join(dir, "bounded", "in.nc")
	for _, p := range []string{plain, bounded} {
		check(t, os.MkdirAll(filepath.Dir(p), 0o755))
	}
	_, err = a.ApplyFile(in, plain, ApplyOptions{})
	check(t, err)
	res, err := a.ApplyFile(in, bounded, ApplyOptions{Bounds: true})
	check(t, err)
	yp, _ := readVar(t, plain, "f")
	yb, _ := readVar(t, bounded, "f")
	if k := outside(yp); k == 0 {
		t.Fatalf("the second-order map made no new extrema on a jump; the test field is too smooth")
	}
	if k := outside(yb); k != 0 {
		t.Errorf("with bounds, %d targets are outside the range of their sources", k)
	}
	before := compSum(src.CellArea, x)
	for _, y := range [][]float64{yp, yb} {
		if rel := math.Abs(compSum(tgt.CellArea, y)-before) / compAbsSum(src.CellArea, x); rel > conserveTol {
			t.Errorf("area integral changed by %.3g relative", rel)
		}
	}
	if r := res.Vars[0]; r.Clipped == 0 || r.Infeasible != 0 {
		t.Errorf("clipped %d values, %d slices infeasible", r.Clipped, r.Infeasible)
	}
	if s := readAttr(t, bounded, "f", "colbridge_method"); !strings.Contains(s, "clip-and-assured-sum") {
		t.Errorf("method attribute %q does not say bounds were applied", s)
	}
}

// TestApplyStreamingIsExact: a budget small enough to cut the file into one record per
// chunk gives the same bytes as one big chunk (chunks are independent; common practice).
func TestApplyStreamingIsExact(t *testing.T) {
	dir, dyn, _, dynLev, _ := stdPlan(t)
	in := filepath.Join(dir, "dyn_fields.nc")
	stdFields(t, in, dyn, dynLev)
	a, err := NewBundleApplier(filepath.Join(dir, "bundle"))
	check(t, err)
	big := filepath.Join(t.TempDir(), "big.nc")
	small := filepath.Join(t.TempDir(), "small.nc")
	_, err = a.ApplyFile(in, big, ApplyOptions{})
	check(t, err)
	// A budget of one and a half records of the largest job.
	f, err := openInput(in)
	check(t, err)
	_, jobs, err := a.plan(f, ApplyOptions{})
	check(t, err)
	f.f.Close()
	var one int64
	for _, j := range jobs {
		one = max(one, j.recordBytes()+j.columnBytes())
	}
	res, err := a.ApplyFile(in, small, ApplyOptions{Memory: a.mapSize + fixedOverhead + one*3/2, Workers: 1})
	check(t, err)
	for _, v := range []string{"air_density", "tracer", "theta", "u_east", "u_north", "layer_mass"} {
		x, _ := readVar(t, big, v)
		y, _ := readVar(t, small, v)
		for i := range x {
			if math.Float64bits(x[i]) != math.Float64bits(y[i]) {
				t.Fatalf("%s: value %d differs: %v vs %v", v, i, x[i], y[i])
			}
		}
	}
	if res.Buffers > one*3/2 {
		t.Errorf("small budget: %d bytes of buffers, more than the %d allowed", res.Buffers, one*3/2)
	}
	if res.Chunks <= len(res.Vars) {
		t.Errorf("small budget: %d chunks for %d variables of 2 records; the budget should cut some", res.Chunks, len(res.Vars))
	}
}

// TestApplyPackedAndTypes: packed short values (CF §8.1: unpacked = packed·scale_factor +
// add_offset, the _FillValue compared before unpacking) are unpacked; a float32 output is
// asked for by Type; and bounds change nothing under a first-order map, whose weights are
// non-negative with rows summing to one (convex combinations stay in their bounds).
func TestApplyPackedAndTypes(t *testing.T) {
	src, _, mapPath, _, _ := tc2Setup(t, 1)
	m, err := weights.ReadMap(mapPath)
	check(t, err)
	n := src.NumCells()
	raw := make([]float64, n)
	x := make([]float64, n)
	for i := range raw {
		raw[i] = float64(i%200 - 100)
		x[i] = raw[i]*0.25 + 10
	}
	raw[7] = -32767 // the _FillValue
	dir := t.TempDir()
	in := filepath.Join(dir, "in.nc")
	writeTestFile(t, in, ncio.NetCDF4, []tdim{{"ncells", n, false}},
		[]tvar{{name: "p", dims: []string{"ncells"}, data: raw, t: ncio.Int16,
			nums: map[string][]float64{"scale_factor": {0.25}, "add_offset": {10}, "_FillValue": {-32767}},
			text: [][2]string{{"units", "K"}}}})
	a, err := NewMapApplier(mapPath)
	check(t, err)
	out := filepath.Join(dir, "o", "in.nc")
	check(t, os.MkdirAll(filepath.Dir(out), 0o755))
	res, err := a.ApplyFile(in, out, ApplyOptions{Type: TypeFloat32, Bounds: true})
	check(t, err)
	got, v := readVar(t, out, "p")
	if v.Type != ncio.Float32 {
		t.Errorf("output type %v, want float", v.Type)
	}
	want := make([]float64, m.W.Rows)
	m.W.ApplyTo(want, x)
	for i := range want {
		uses := false
		for k := m.W.RowStart[i]; k < m.W.RowStart[i+1]; k++ {
			uses = uses || m.W.ColIndex[k] == 7
		}
		if uses {
			if float32(got[i]) != float32(defaultFillFloat) {
				t.Errorf("target %d uses the missing source but holds %v", i, got[i])
			}
			continue
		}
		if float32(got[i]) != float32(want[i]) {
			t.Fatalf("target %d = %v, want %v (float32 of the unpacked map)", i, got[i], float32(want[i]))
		}
	}
	if r := res.Vars[0]; r.Clipped != 0 || r.MissingSources != 1 {
		t.Errorf("clipped %d (want 0 under a first-order map), missing sources %d (want 1)", r.Clipped, r.MissingSources)
	}
	for _, gone := range []string{"scale_factor", "add_offset"} {
		if f, err := ncio.Open(out); err == nil {
			if _, err := f.AttrFloat64s("p", gone); err == nil {
				t.Errorf("the output keeps %s", gone)
			}
			f.Close()
		}
	}
}

// TestApplyTargetMesh: with the target's mesh file the output carries its UGRID topology
// (UGRID 1.0: the topology variable and its face–node connectivity, face coordinates
// named by the field's coordinates attribute); a mesh file of another mesh is refused,
// naming both fingerprints; without one, a topology variable names the mesh.
func TestApplyTargetMesh(t *testing.T) {
	_, tgt, mapPath, in, _ := tc2Setup(t, 1)
	dir := t.TempDir()
	ll := filepath.Join(dir, "ll.nc")
	check(t, grids.WriteUGRID(ll, tgt))
	a, err := NewMapApplier(mapPath)
	check(t, err)
	out := filepath.Join(dir, "o", "tc2.nc")
	check(t, os.MkdirAll(filepath.Dir(out), 0o755))
	_, err = a.ApplyFile(in, out, ApplyOptions{TargetMesh: ll})
	check(t, err)
	back, err := grids.ReadMesh(out)
	check(t, err)
	if back.Fingerprint() != tgt.Fingerprint() {
		t.Errorf("the output's mesh reads back as %s, want %s", back.Fingerprint(), tgt.Fingerprint())
	}
	if c := readAttr(t, out, "h", "coordinates"); c != "mesh_face_x mesh_face_y" {
		t.Errorf("coordinates = %q", c)
	}
	other, err := grids.NewLatLon(grids.LatLonSpec{NLon: 36, NLat: 18, Lon0: 5})
	check(t, err)
	wrong := filepath.Join(dir, "other.nc")
	check(t, grids.WriteUGRID(wrong, other))
	_, err = a.ApplyFile(in, filepath.Join(dir, "o", "x.nc"), ApplyOptions{TargetMesh: wrong})
	if err == nil || !strings.Contains(err.Error(), other.Fingerprint()) || !strings.Contains(err.Error(), tgt.Fingerprint()) {
		t.Errorf("a mesh file of another mesh: %v", err)
	}
	stub := filepath.Join(dir, "o", "stub.nc")
	_, err = a.ApplyFile(in, stub, ApplyOptions{})
	check(t, err)
	if fp := readAttr(t, stub, "mesh", "colbridge_fingerprint"); fp != tgt.Fingerprint() {
		t.Errorf("stub topology fingerprint %q", fp)
	}
}
