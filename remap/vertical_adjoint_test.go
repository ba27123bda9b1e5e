package remap

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/colbridge/colbridge/grids"
)

// TestVerticalAdjointIdentity: for every restriction W and its adjoint W* (Adjoint), the
// defining identity ⟨W x, y⟩_t = ⟨x, W* y⟩_s holds to 1e-13 (DESIGN.md §5:
// W* = M_s⁻¹ Wᵀ M_t), with the coordinate measure (the stored matrices) and with random
// layer masses supplied at apply time (ApplyMeasureTo), on uniform, stretched and random
// levels.
func TestVerticalAdjointIdentity(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	a := randomLevels(t, rng, 19, 0, 1)
	b := randomLevels(t, rng, 12, 0, 1)
	uni := mustLevels(t, grids.Normalized, 16, 0, 1, 0)
	str := mustLevels(t, grids.Normalized, 16, 0, 1, 3)
	type pair struct {
		name     string
		src, dst *grids.Levels
		sl, dl   grids.VLocation
		meth     VerticalMethod
	}
	var pairs []pair
	for _, meth := range []VerticalMethod{VerticalLinear, VerticalConservative} {
		pairs = append(pairs,
			pair{"interface → layer, uniform", uni, uni, grids.Interface, grids.Layer, meth},
			pair{"interface → layer, stretched", str, str, grids.Interface, grids.Layer, meth},
			pair{"interface → layer, random", a, a, grids.Interface, grids.Layer, meth},
			pair{"layer → layer, other levels", a, b, grids.Layer, grids.Layer, meth},
			pair{"layer → interface, other levels", a, b, grids.Layer, grids.Interface, meth},
			pair{"interface → interface, other levels", b, a, grids.Interface, grids.Interface, meth},
		)
	}
	for _, p := range pairs {
		w := mustMap(t, p.src, p.sl, p.dst, p.dl, p.meth, nil)
		ws := mustAdjoint(t, w)
		name := p.meth.String() + " " + p.name
		for _, mass := range [][]float64{nil, randomMass(rng, p.src.NLev())} {
			x := make([]float64, w.NSource())
			y := make([]float64, w.NTarget())
			for i := range x {
				x[i] = rng.NormFloat64()
			}
			for i := range y {
				y[i] = rng.NormFloat64()
			}
			ms := make([]float64, w.NSource())
			mt := make([]float64, w.NTarget())
			w.SourceMeasureTo(ms, mass)
			w.TargetMeasureTo(mt, mass)
			// The adjoint's own measures are the restriction's, sides swapped.
			ms2 := make([]float64, ws.NTarget())
			ws.TargetMeasureTo(ms2, mass)
			for i := range ms {
				if ms[i] != ms2[i] {
					t.Fatalf("%s: adjoint's target measure %g differs from restriction's source measure %g", name, ms2[i], ms[i])
				}
			}
			wx := make([]float64, w.NTarget())
			wsy := make([]float64, w.NSource())
			if err := w.ApplyMeasureTo(wx, x, mass); err != nil {
				t.Fatal(err)
			}
			if err := ws.ApplyMeasureTo(wsy, y, mass); err != nil {
				t.Fatal(err)
			}
			lhs, rhs := triple(mt, wx, y), triple(ms, x, wsy)
			scale := tripleAbs(mt, wx, y) + tripleAbs(ms, x, wsy)
			if d := math.Abs(lhs - rhs); d > tolExact*scale {
				t.Errorf("%s (mass %v): ⟨Wx, y⟩ = %.16g, ⟨x, W*y⟩ = %.16g, relative %.2g", name, mass != nil, lhs, rhs, d/scale)
			}
		}
	}
}

func triple(m, a, b []float64) float64 {
	p := make([]float64, len(a))
	for i := range a {
		p[i] = a[i] * b[i]
	}
	return dot(m, p)
}

func tripleAbs(m, a, b []float64) float64 {
	var s float64
	for i := range a {
		s += math.Abs(m[i] * a[i] * b[i])
	}
	return s
}

// zigzag returns (−1)^k on n values.
func zigzag(n int) []float64 {
	z := make([]float64, n)
	for k := range z {
		z[k] = 1 - 2*float64(k%2)
	}
	return z
}

// TestVerticalZigzag: averaging interfaces to layers has the vertical zigzag (−1)^k in its
// null space, and nothing else (rank nlev from nlev+1 values) — common practice; Arakawa &
// Konor 1996 (Mon. Wea. Rev. 124:511–528) discuss that mode. The conservative
// alternative (interface values as dual-layer means) is, on the same levels, the average
// itself entry for entry (derived: each layer is the upper half of one dual layer and the
// lower half of the next), so it does not see the zigzag either; it sees it fully when the
// target layers are the dual layers (identity). Unlimited PPM from dual layers sees it
// only in the boundary layers on uniform levels (reflection symmetry of the interior
// stencil, derived); the test records what it does on stretched levels.
func TestVerticalZigzag(t *testing.T) {
	for _, c := range []struct {
		name    string
		stretch float64
	}{{"uniform", 0}, {"stretched", 3}} {
		const n = 24
		l := mustLevels(t, grids.Normalized, n, 0, 1, c.stretch)
		z := zigzag(n + 1)
		avg := mustMap(t, l, grids.Interface, l, grids.Layer, VerticalLinear, nil)
		con := mustMap(t, l, grids.Interface, l, grids.Layer, VerticalConservative, nil)
		ppm := mustMap(t, l, grids.Interface, l, grids.Layer, VerticalPPM, nil)
		y := make([]float64, n)

		avg.ApplyTo(y, z)
		if e := maxAbs(y); e != 0 { // ½·1 − ½·1 is exact
			t.Errorf("%s: average of the zigzag: max |y| = %g, want 0", c.name, e)
		}
		// Null space of the average: exactly one dimension.
		sv := singularValues(dense(avg.W))
		smax, smin := sv[0], sv[len(sv)-1]
		null := 0
		for _, s := range sv {
			if s < 1e-12*smax {
				null++
			}
		}
		if got := n + 1 - len(sv) + null; got != 1 {
			t.Errorf("%s: null space of the average has dimension %d, want 1", c.name, got)
		}
		t.Logf("%s: average: singular values %.3g … %.3g (smallest of %d; the zigzag is the extra null direction)", c.name, smax, smin, len(sv))

		// Conservative alternative: the same matrix.
		da, dc := dense(avg.W), dense(con.W)
		for i := range da {
			for j := range da[i] {
				if math.Abs(da[i][j]-dc[i][j]) > 4e-16 { // a few roundings of ½
					t.Errorf("%s: conservative[%d][%d] = %g, average %g", c.name, i, j, dc[i][j], da[i][j])
				}
			}
		}
		con.ApplyTo(y, z)
		t.Logf("%s: conservative interface → layer on the same levels: max |y| = %.2g (the average)", c.name, maxAbs(y))
		if e := maxAbs(y); e > 4e-16 {
			t.Errorf("%s: conservative on the same levels sees the zigzag: %g", c.name, e)
		}

		// Onto the dual layers themselves: the identity, so the zigzag passes whole.
		dual, err := grids.NewLevels(grids.Normalized, VolumeEdges(l, grids.Interface))
		if err != nil {
			t.Fatal(err)
		}
		toDual := mustMap(t, l, grids.Interface, dual, grids.Layer, VerticalConservative, nil)
		yd := make([]float64, n+1)
		toDual.ApplyTo(yd, z)
		for k := range yd {
			if math.Abs(yd[k]-z[k]) > 1e-15 {
				t.Errorf("%s: conservative onto the dual layers: layer %d = %g, want %g", c.name, k, yd[k], z[k])
			}
		}

		// Unlimited PPM from dual layers: each layer's stencil reaches three dual layers
		// either way, so on uniform levels layers 3 … n−4 see only uniform, symmetric
		// stencils and cancel the zigzag; the three layers at each end (where the dual
		// layers are half layers and the edges one-sided) and every layer of stretched
		// levels see it.
		ppm.ApplyTo(y, z)
		var interior float64
		for k := 3; k <= n-4; k++ {
			interior = math.Max(interior, math.Abs(y[k]))
		}
		t.Logf("%s: ppm interface → layer: |y| = %.3g, %.3g, %.3g in the three layers at the surface, max %.3g in layers 3 … %d", c.name, math.Abs(y[0]), math.Abs(y[1]), math.Abs(y[2]), interior, n-4)
		if c.stretch == 0 {
			if interior > 1e-14 {
				t.Errorf("uniform: ppm sees the zigzag in layers 3 … %d: %g", n-4, interior)
			}
			if math.Abs(y[0]) < 1e-2 || math.Abs(y[n-1]) < 1e-2 {
				t.Errorf("uniform: ppm's boundary layers do not see the zigzag (%g, %g)", y[0], y[n-1])
			}
		} else if interior < 1e-2 {
			t.Errorf("stretched: ppm does not see the zigzag inside the column (%g)", interior)
		}
	}
}

// TestVerticalAdjointNoZigzag: prolonging layer increments to interfaces with the adjoint of
// the average never creates the zigzag: ⟨W* y, z⟩_s = ⟨y, W z⟩_t = 0 (DESIGN.md §5,
// derived), with the coordinate measure and with layer masses. Linear interpolation, for
// comparison, does put a zigzag component into its output on stretched levels.
func TestVerticalAdjointNoZigzag(t *testing.T) {
	rng := rand.New(rand.NewPCG(33, 34))
	const n = 20
	l := mustLevels(t, grids.Normalized, n, 0, 1, 3)
	avg := mustMap(t, l, grids.Interface, l, grids.Layer, VerticalLinear, nil)
	adj := mustAdjoint(t, avg)
	lin := mustMap(t, l, grids.Layer, l, grids.Interface, VerticalLinear, nil)
	z := zigzag(n + 1)
	for _, mass := range [][]float64{nil, randomMass(rng, n)} {
		y := make([]float64, n)
		for i := range y {
			y[i] = rng.NormFloat64()
		}
		mi := make([]float64, n+1)
		adj.TargetMeasureTo(mi, mass)
		p := make([]float64, n+1)
		if err := adj.ApplyMeasureTo(p, y, mass); err != nil {
			t.Fatal(err)
		}
		comp := triple(mi, p, z) / math.Sqrt(triple(mi, p, p)*triple(mi, z, z))
		if math.Abs(comp) > tolExact {
			t.Errorf("adjoint (mass %v): zigzag share of the prolonged increment %.3g", mass != nil, comp)
		}
		lin.ApplyTo(p, y)
		clin := triple(mi, p, z) / math.Sqrt(triple(mi, p, p)*triple(mi, z, z))
		t.Logf("mass %v: zigzag share (cosine in the interface measure): adjoint %.2g, linear interpolation %.2g", mass != nil, comp, clin)
		if math.Abs(clin) < 1e-3 {
			t.Errorf("mass %v: linear interpolation puts no zigzag into a random increment (%g)", mass != nil, clin)
		}
	}
}

func maxAbs(xs []float64) float64 {
	var m float64
	for _, x := range xs {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// singularValues returns the singular values of a dense matrix, largest first (gonum).
func singularValues(a [][]float64) []float64 {
	r, c := len(a), len(a[0])
	d := mat.NewDense(r, c, nil)
	for i := range a {
		d.SetRow(i, a[i])
	}
	var svd mat.SVD
	if !svd.Factorize(d, mat.SVDNone) {
		panic("SVD failed")
	}
	return svd.Values(nil)
}
