package remap

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// Tolerances of the vertical tests.
const (
	// tolConserve is the conservation bound of DESIGN.md §7 (≤ 1e-13 relative to the sum
	// of |m q|): the maps do O(n) roundings per column, n ≤ a few hundred.
	tolConserve = 1e-13
	// tolExact bounds results that are exact in real arithmetic (reproduced polynomials,
	// row sums, adjoint identities) relative to the data's size: tens of roundings of
	// weights of size O(1), amplified at most ~10× by the extrapolating PPM edge stencils.
	tolExact = 1e-13
)

// mustLevels builds stretched levels or fails the test.
func mustLevels(t testing.TB, coord grids.VerticalCoord, n int, bottom, top, stretch float64) *grids.Levels {
	t.Helper()
	l, err := grids.NewStretchedLevels(coord, n, bottom, top, stretch)
	if err != nil {
		t.Fatal(err)
	}
	return l
}

// randomLevels returns n layers over [bottom, top] with independent random thicknesses
// spanning a factor 20.
func randomLevels(t testing.TB, rng *rand.Rand, n int, bottom, top float64) *grids.Levels {
	t.Helper()
	w := make([]float64, n)
	var sum float64
	for k := range w {
		w[k] = 0.05 + rng.Float64()
		sum += w[k]
	}
	z := make([]float64, n+1)
	z[0] = bottom
	for k := range w {
		z[k+1] = z[k] + (top-bottom)*w[k]/sum
	}
	z[n] = top
	l, err := grids.NewLevels(grids.Normalized, z)
	if err != nil {
		t.Fatal(err)
	}
	return l
}

func mustMap(t testing.TB, src *grids.Levels, sl grids.VLocation, dst *grids.Levels, dl grids.VLocation, m VerticalMethod, opt *VerticalOptions) *VerticalMap {
	t.Helper()
	vm, err := NewVerticalMap(src, sl, dst, dl, m, opt)
	if err != nil {
		t.Fatal(err)
	}
	return vm
}

func mustAdjoint(t testing.TB, m *VerticalMap) *VerticalMap {
	t.Helper()
	a, err := m.Adjoint()
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// dense returns w as rows of a dense matrix.
func dense(w *weights.CSR) [][]float64 {
	d := make([][]float64, w.Rows)
	for i := range d {
		d[i] = make([]float64, w.Cols)
		for k := w.RowStart[i]; k < w.RowStart[i+1]; k++ {
			d[i][w.ColIndex[k]] = w.Values[k]
		}
	}
	return d
}

// sumAbsProd returns Σ|a b| (the scale of a conservation sum).
func sumAbsProd(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += math.Abs(a[i] * b[i])
	}
	return s
}

var locs = []grids.VLocation{grids.Layer, grids.Interface}

// points returns where the values of location v sit: layer midpoints or interfaces.
func points(l *grids.Levels, v grids.VLocation) []float64 {
	if v == grids.Interface {
		return append([]float64(nil), l.Interfaces...)
	}
	return l.Midpoints()
}

// TestVerticalLinearProfiles: a linear map reproduces linear profiles exactly and its rows
// sum to 1 (consistency; Ullrich & Taylor 2015: row sums 1; exactness for degree 1 is
// the definition of linear interpolation, common practice). With ExtrapolateConstant the
// profile is reproduced only between the outermost source points.
func TestVerticalLinearProfiles(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	uni := mustLevels(t, grids.Normalized, 12, 0, 1, 0)
	str := mustLevels(t, grids.Normalized, 17, 0, 1, 3)
	wide := mustLevels(t, grids.Normalized, 9, -0.2, 1.3, -1) // reaches beyond the source
	profile := func(z float64) float64 { return 3 - 2.5*z }
	cases := []struct {
		name     string
		src, dst *grids.Levels
	}{
		{"uniform to stretched", uni, str},
		{"stretched to uniform", str, uni},
		{"same stretched levels", str, str},
		{"random to wider column", randomLevels(t, rng, 11, 0, 1), wide},
	}
	for _, c := range cases {
		for _, sl := range locs {
			for _, dl := range locs {
				for _, ex := range []Extrapolation{ExtrapolateLinear, ExtrapolateConstant} {
					m := mustMap(t, c.src, sl, c.dst, dl, VerticalLinear, &VerticalOptions{Extrapolation: ex})
					ps, pt := points(c.src, sl), points(c.dst, dl)
					x := make([]float64, len(ps))
					for i, z := range ps {
						x[i] = profile(z)
					}
					y := make([]float64, len(pt))
					m.ApplyTo(y, x)
					for i, z := range pt {
						inside := z >= ps[0] && z <= ps[len(ps)-1]
						if ex == ExtrapolateConstant && !inside {
							continue
						}
						if d := math.Abs(y[i] - profile(z)); d > tolExact*3 {
							t.Errorf("%s %v→%v %v: target %d at %g: got %g want %g (diff %.2g)", c.name, sl, dl, ex, i, z, y[i], profile(z), d)
						}
					}
					rs := make([]float64, m.W.Rows)
					m.W.RowSumsTo(rs)
					for i, s := range rs {
						if math.Abs(s-1) > 4e-16 { // one rounding of 1 − w plus w
							t.Errorf("%s %v→%v %v: row %d sums to 1%+.2g", c.name, sl, dl, ex, i, s-1)
						}
					}
					if ex == ExtrapolateConstant {
						for _, v := range m.W.Values {
							if v < 0 || v > 1 {
								t.Errorf("%s %v→%v constant: weight %g outside [0, 1]", c.name, sl, dl, v)
							}
						}
					}
				}
			}
		}
	}
}

// TestVerticalLinearUniformBoundary checks the documented boundary weights of layer →
// interface interpolation on uniform levels: 3/2 and −1/2 at the surface and the model top
// with linear extrapolation, 1 with constant extrapolation, 1/2 and 1/2 inside (derived:
// the midpoints are half a layer from the interfaces).
func TestVerticalLinearUniformBoundary(t *testing.T) {
	l := mustLevels(t, grids.Height, 6, 0, 6000, 0)
	lin := dense(mustMap(t, l, grids.Layer, l, grids.Interface, VerticalLinear, nil).W)
	con := dense(mustMap(t, l, grids.Layer, l, grids.Interface, VerticalLinear, &VerticalOptions{Extrapolation: ExtrapolateConstant}).W)
	checks := []struct {
		name    string
		got     float64
		want    float64
		comment string
	}{
		{"linear surface, layer 0", lin[0][0], 1.5, "derived"},
		{"linear surface, layer 1", lin[0][1], -0.5, "derived"},
		{"linear top, layer 5", lin[6][5], 1.5, "derived"},
		{"linear top, layer 4", lin[6][4], -0.5, "derived"},
		{"linear interface 3, layer 2", lin[3][2], 0.5, "derived"},
		{"constant surface", con[0][0], 1, "derived"},
		{"constant top", con[6][5], 1, "derived"},
	}
	for _, c := range checks {
		if math.Abs(c.got-c.want) > 1e-15 {
			t.Errorf("%s: %g, want %g (%s)", c.name, c.got, c.want, c.comment)
		}
	}
}

// TestVerticalConsistency: constants are kept (row sums 1) by the conservative, PPM and
// adjoint-of-conservative maps, and by the adjoint of the interface → layer average (the
// average is conservative for the dual-layer measure, so its adjoint is consistent:
// DESIGN.md §5, "W conservative ⇔ W* consistent"). Limited PPM keeps constants too.
func TestVerticalConsistency(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	a := randomLevels(t, rng, 13, 0, 1)
	b := randomLevels(t, rng, 7, 0, 1)
	for _, sl := range locs {
		for _, dl := range locs {
			for _, meth := range []VerticalMethod{VerticalConservative, VerticalPPM, VerticalPPMLimited} {
				m := mustMap(t, a, sl, b, dl, meth, nil)
				checkConstant(t, m, meth.String()+" "+sl.String()+"→"+dl.String())
				if meth == VerticalConservative {
					checkConstant(t, mustAdjoint(t, m), "adjoint of conservative "+sl.String()+"→"+dl.String())
				}
			}
		}
	}
	avg := mustMap(t, a, grids.Interface, a, grids.Layer, VerticalLinear, nil)
	checkConstant(t, mustAdjoint(t, avg), "adjoint of the interface → layer average")
}

// checkConstant maps the constant 2.5 with the coordinate measure and with random layer
// masses and requires 2.5 back in every target.
func checkConstant(t *testing.T, m *VerticalMap, name string) {
	t.Helper()
	rng := rand.New(rand.NewPCG(5, 6))
	x := make([]float64, m.NSource())
	for i := range x {
		x[i] = 2.5
	}
	mass := make([]float64, m.MassLevels().NLev())
	for i := range mass {
		mass[i] = math.Exp(4 * (rng.Float64() - 0.5))
	}
	y := make([]float64, m.NTarget())
	for _, ms := range [][]float64{nil, mass} {
		if err := m.ApplyMeasureTo(y, x, ms); err != nil {
			t.Fatal(err)
		}
		for i, v := range y {
			if math.Abs(v-2.5) > tolExact*2.5 {
				t.Errorf("%s (mass %v): target %d = %.17g, want 2.5", name, ms != nil, i, v)
			}
		}
	}
}

// TestVerticalApplyPaths: the matrix path (ApplyTo), the measure path with the coordinate
// thickness passed explicitly (ApplyMeasureTo) and the many-column path (ApplyColumnsTo)
// agree; NaN-filled destinations are overwritten; inputs are not modified (STYLE.md habit 6).
func TestVerticalApplyPaths(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	a := randomLevels(t, rng, 10, 0, 1)
	b := randomLevels(t, rng, 14, 0, 1)
	for _, meth := range []VerticalMethod{VerticalLinear, VerticalConservative, VerticalPPM, VerticalPPMLimited} {
		for _, sl := range locs {
			for _, dl := range locs {
				m := mustMap(t, a, sl, b, dl, meth, nil)
				maps := []*VerticalMap{m}
				if meth == VerticalLinear || meth == VerticalConservative {
					maps = append(maps, mustAdjoint(t, m))
				}
				for _, vm := range maps {
					name := vm.Method.String() + " " + vm.SourceLoc.String() + "→" + vm.TargetLoc.String()
					const ncol = 3
					ns, nt := vm.NSource(), vm.NTarget()
					src := make([]float64, ncol*ns)
					for i := range src {
						src[i] = rng.NormFloat64()
					}
					orig := append([]float64(nil), src...)
					thick := vm.MassLevels().Thicknesses()
					var mass []float64
					for range ncol {
						mass = append(mass, thick...)
					}
					origMass := append([]float64(nil), mass...)
					all := make([]float64, ncol*nt)
					for i := range all {
						all[i] = math.NaN()
					}
					if err := vm.ApplyColumnsTo(all, src, mass); err != nil {
						t.Fatal(err)
					}
					for c := range ncol {
						one := make([]float64, nt)
						for i := range one {
							one[i] = math.NaN()
						}
						vm.ApplyTo(one, src[c*ns:(c+1)*ns])
						for i := range one {
							if d := math.Abs(one[i] - all[c*nt+i]); !(d <= tolExact) {
								t.Errorf("%s column %d target %d: ApplyTo %g, ApplyColumnsTo with thickness %g", name, c, i, one[i], all[c*nt+i])
							}
						}
					}
					for i := range src {
						if src[i] != orig[i] {
							t.Fatalf("%s: source modified", name)
						}
					}
					for i := range mass {
						if mass[i] != origMass[i] {
							t.Fatalf("%s: measure modified", name)
						}
					}
				}
			}
		}
	}
}

// TestVerticalErrors: bad input comes back as errors that say what is wrong.
func TestVerticalErrors(t *testing.T) {
	a := mustLevels(t, grids.Normalized, 5, 0, 1, 0)
	h := mustLevels(t, grids.Height, 5, 0, 1, 0)
	short := mustLevels(t, grids.Normalized, 5, 0, 0.9, 0)
	cases := []struct {
		name     string
		src, dst *grids.Levels
		sl, dl   grids.VLocation
		meth     VerticalMethod
	}{
		{"coordinates differ", a, h, grids.Layer, grids.Layer, VerticalLinear},
		{"no levels", a, a, grids.NoLevels, grids.Layer, VerticalLinear},
		{"spans differ", a, short, grids.Layer, grids.Layer, VerticalConservative},
		{"adjoint by name", a, a, grids.Layer, grids.Layer, VerticalAdjoint},
		{"unknown method", a, a, grids.Layer, grids.Layer, VerticalMethod(99)},
	}
	for _, c := range cases {
		if _, err := NewVerticalMap(c.src, c.sl, c.dst, c.dl, c.meth, nil); err == nil {
			t.Errorf("%s: no error", c.name)
		} else {
			t.Logf("%s: %v", c.name, err)
		}
	}
	m := mustMap(t, a, grids.Layer, a, grids.Interface, VerticalConservative, nil)
	if err := m.ApplyMeasureTo(make([]float64, 6), make([]float64, 5), []float64{1, 1, 0, 1, 1}); err == nil {
		t.Error("zero layer mass: no error")
	} else {
		t.Logf("zero layer mass: %v", err)
	}
	if _, err := mustMap(t, a, grids.Layer, a, grids.Layer, VerticalPPM, nil).Adjoint(); err == nil {
		t.Error("adjoint of ppm: no error")
	}
	for _, s := range []string{"linear", "conservative", "ppm", "ppm-limited", "adjoint"} {
		m, err := ParseVerticalMethod(s)
		if err != nil || m.String() != s {
			t.Errorf("ParseVerticalMethod(%q) = %v, %v", s, m, err)
		}
	}
	if _, err := ParseVerticalMethod("cubic"); err == nil {
		t.Error("ParseVerticalMethod(cubic): no error")
	}
}
