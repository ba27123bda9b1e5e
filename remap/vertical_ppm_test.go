package remap

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/colbridge/colbridge/grids"
)

// edgeWeights returns the weights of the edge value at interface i on cells of widths d
// (the edge value of the unit vectors), computed with the given edge function.
func edgeWeights(n int, d []float64, f func(q []float64) float64) []float64 {
	w := make([]float64, n)
	q := make([]float64, n)
	for c := range q {
		q[c] = 1
		w[c] = f(q)
		q[c] = 0
	}
	return w
}

// TestPPMUniformEdgeWeights: on uniform levels the interior edge value is
// (−q̄_{j−1} + 7q̄_j + 7q̄_{j+1} − q̄_{j+2})/12 (CW84 eq. 1.9; REFERENCES.md [C]); the
// one-sided boundary edges are (25, −23, 13, −3)/12 and (3, 13, −5, 1)/12 (derived: the
// unique four-cell weights exact for cubics, checked by hand on 1, x, x²).
func TestPPMUniformEdgeWeights(t *testing.T) {
	const n = 8
	d := make([]float64, n)
	for i := range d {
		d[i] = 0.37 // any uniform width
	}
	da := make([]float64, n)
	e := make([]float64, n+1)
	edge := func(i int) func(q []float64) float64 {
		return func(q []float64) float64 { ppmEdgesTo(e, q, d, false, da); return e[i] }
	}
	cases := []struct {
		name string
		i    int
		want []float64 // weights ×12 on the cells listed from first
		from int
	}{
		{"interior edge 4 (CW84 eq. 1.9)", 4, []float64{-1, 7, 7, -1}, 2},
		{"surface edge (derived)", 0, []float64{25, -23, 13, -3}, 0},
		{"edge 1 (derived)", 1, []float64{3, 13, -5, 1}, 0},
		{"top edge (derived, mirrored)", n, []float64{-3, 13, -23, 25}, n - 4},
	}
	for _, c := range cases {
		w := edgeWeights(n, d, edge(c.i))
		for k := range w {
			want := 0.0
			if k >= c.from && k < c.from+len(c.want) {
				want = c.want[k-c.from] / 12
			}
			if math.Abs(w[k]-want) > 1e-14 {
				t.Errorf("%s: weight of cell %d = %.16g, want %.16g", c.name, k, w[k], want)
			}
		}
	}
}

// TestPPMEdgeCW84MatchesQuartic: on random stretched widths the explicit CW84 eq. 1.6 (with
// the unlimited slopes of eq. 1.7) equals the derivative, at the edge, of the quartic
// interpolating the cumulative integral at the five surrounding interfaces — the
// construction CW84 §1 derive eq. 1.6 from (from memory; this test is what confirms our
// transcription of eqs. 1.6–1.7: a slip in any coefficient breaks the equality).
func TestPPMEdgeCW84MatchesQuartic(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for trial := 0; trial < 200; trial++ {
		const n = 9
		d := make([]float64, n)
		q := make([]float64, n)
		for i := range d {
			d[i] = math.Exp(3 * (rng.Float64() - 0.5)) // widths within a factor e³ ≈ 20
			q[i] = rng.NormFloat64()
		}
		for i := 2; i <= n-2; i++ {
			cw := ppmInteriorEdge(i, d, q, ppmSlope(i-1, d, q, false), ppmSlope(i, d, q, false))
			// the quartic centred on i: window lo = i−2 as ppmOneSidedEdge picks inside.
			quart := ppmOneSidedEdge(i, d, q)
			if math.Abs(cw-quart) > 1e-12*(1+math.Abs(quart)) {
				t.Fatalf("trial %d edge %d: CW84 eq. 1.6 gives %.16g, quartic %.16g", trial, i, cw, quart)
			}
		}
	}
}

// quadMean returns the exact mean of c0 + c1 z + c2 z² over [a, b].
func quadMean(c [3]float64, a, b float64) float64 {
	return c[0] + c[1]*(a+b)/2 + c[2]*(a*a+a*b+b*b)/3
}

// TestPPMQuadraticExact: unlimited PPM remaps the exact means of any quadratic exactly.
// CW84 (REFERENCES.md [C][D]) state it for interior cells of uniform grids; our one-sided
// boundary edges and the non-uniform eq. 1.6 are exact for cubics, so it holds in every
// target volume on uniform, geometrically stretched and random levels (derived). The source
// may be layers or the dual layers of interfaces (fed with the dual-layer means).
func TestPPMQuadraticExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	cases := []struct {
		name     string
		src, dst *grids.Levels
	}{
		{"uniform 20 → uniform 13", mustLevels(t, grids.Normalized, 20, 0, 1, 0), mustLevels(t, grids.Normalized, 13, 0, 1, 0)},
		{"uniform 20 → stretched 31", mustLevels(t, grids.Normalized, 20, 0, 1, 0), mustLevels(t, grids.Normalized, 31, 0, 1, 2.5)},
		{"stretched 25 (×20) → uniform 9", mustLevels(t, grids.Normalized, 25, 0, 1, 3), mustLevels(t, grids.Normalized, 9, 0, 1, 0)},
		{"random 15 → random 40", randomLevels(t, rng, 15, 0, 1), randomLevels(t, rng, 40, 0, 1)},
		{"4 layers → 6 (smallest full stencil)", randomLevels(t, rng, 4, 0, 1), randomLevels(t, rng, 6, 0, 1)},
	}
	for _, c := range cases {
		for _, sl := range locs {
			for _, dl := range locs {
				m := mustMap(t, c.src, sl, c.dst, dl, VerticalPPM, nil)
				se, te := VolumeEdges(c.src, sl), VolumeEdges(c.dst, dl)
				for trial := 0; trial < 5; trial++ {
					co := [3]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
					x := make([]float64, len(se)-1)
					for i := range x {
						x[i] = quadMean(co, se[i], se[i+1])
					}
					y := make([]float64, len(te)-1)
					m.ApplyTo(y, x)
					scale := math.Abs(co[0]) + math.Abs(co[1]) + math.Abs(co[2])
					for i := range y {
						want := quadMean(co, te[i], te[i+1])
						if d := math.Abs(y[i] - want); d > tolExact*scale {
							t.Errorf("%s %v→%v: target %d: %.16g, exact %.16g (diff %.2g)", c.name, sl, dl, i, y[i], want, d)
						}
					}
				}
			}
		}
	}
}

// TestVerticalOrder measures the order of accuracy of layer-mean remapping of a smooth
// profile between two families of levels refined together: unlimited PPM is third order
// and first-order conservative is first order (REFERENCES.md: degree-p reconstruction
// about order p+1, first-order conservative O(Δx) [M]/[C]). On stretched levels the ratio
// of neighbouring widths tends to 1 under refinement, so the order is kept.
func TestVerticalOrder(t *testing.T) {
	F := func(z float64) float64 { return -math.Cos(3*z)/3 + 0.5*math.Sin(7*z)/7 }
	cases := []struct {
		name           string
		meth           VerticalMethod
		sstr, tstr     float64
		minOrd, maxOrd float64
	}{
		// Bounds on the order between the two finest sizes. PPM's observed order
		// approaches 3 from above: at coarse resolution the O(Δ⁴) error of the edge
		// values outweighs the O(Δ³) cubic remainder of the parabola (measured: 3.0 on
		// uniform levels, 3.5 on stretched ones at n = 256 → 512), so only a lower bound
		// 0.3 below the formal order and a sanity upper bound are set.
		{"ppm uniform", VerticalPPM, 0, 0, 2.7, 4.5},
		{"ppm stretched", VerticalPPM, 3, -1.5, 2.7, 4.5},
		{"conservative uniform", VerticalConservative, 0, 0, 0.8, 1.2},
		{"conservative stretched", VerticalConservative, 3, -1.5, 0.8, 1.2},
	}
	for _, c := range cases {
		var errs []float64
		sizes := []int{32, 64, 128, 256, 512}
		for _, n := range sizes {
			src := mustLevels(t, grids.Normalized, n, 0, 1, c.sstr)
			dst := mustLevels(t, grids.Normalized, n*3/2, 0, 1, c.tstr)
			m := mustMap(t, src, grids.Layer, dst, grids.Layer, c.meth, nil)
			zs, zt := src.Interfaces, dst.Interfaces
			x := make([]float64, n)
			for i := range x {
				x[i] = (F(zs[i+1]) - F(zs[i])) / (zs[i+1] - zs[i])
			}
			y := make([]float64, dst.NLev())
			m.ApplyTo(y, x)
			var e float64
			for i := range y {
				e = math.Max(e, math.Abs(y[i]-(F(zt[i+1])-F(zt[i]))/(zt[i+1]-zt[i])))
			}
			errs = append(errs, math.Log(e))
		}
		var ord float64
		for k := 1; k < len(errs); k++ {
			ord = (errs[k-1] - errs[k]) / math.Ln2
			t.Logf("%s: n %d→%d: L∞ %.3g → %.3g, order %.2f", c.name, sizes[k-1], sizes[k], math.Exp(errs[k-1]), math.Exp(errs[k]), ord)
		}
		if ord < c.minOrd || ord > c.maxOrd {
			t.Errorf("%s: observed order %.2f (finest pair) outside [%g, %g]", c.name, ord, c.minOrd, c.maxOrd)
		}
	}
}

// TestPPMLimited: the limited scheme never leaves the range of the source means of its
// column (the purpose of the CW84 limiter, eqs. 1.8 and 1.10, from memory), maps monotone
// data to monotone data, keeps constants, and reproduces linear profiles in targets that
// touch no boundary source layer (the limiter leaves a linear profile alone: δ_m a = δa,
// a₆ = 0). Unlimited PPM, for contrast, overshoots a step.
func TestPPMLimited(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	src := mustLevels(t, grids.Normalized, 30, 0, 1, 2)
	dst := randomLevels(t, rng, 47, 0, 1)
	lim := mustMap(t, src, grids.Layer, dst, grids.Layer, VerticalPPMLimited, nil)
	unl := mustMap(t, src, grids.Layer, dst, grids.Layer, VerticalPPM, nil)
	step := make([]float64, 30)
	for i := range step {
		if i >= 12 {
			step[i] = 1
		}
	}
	y := make([]float64, 47)
	unl.ApplyTo(y, step)
	var over float64
	for _, v := range y {
		over = math.Max(over, math.Max(v-1, -v))
	}
	if over < 1e-3 {
		t.Errorf("unlimited PPM of a step: overshoot %.3g, expected a visible one", over)
	}
	t.Logf("unlimited PPM of a step overshoots by %.3g", over)
	profiles := map[string]func(i int) float64{
		"step":      func(i int) float64 { return step[i] },
		"random":    func(int) float64 { return rng.NormFloat64() },
		"monotone":  func(i int) float64 { return math.Exp(-float64(i) / 5) },
		"spike":     func(i int) float64 { return map[bool]float64{true: 5, false: 0}[i == 17] },
		"oscillate": func(i int) float64 { return float64(i%2) + 0.1*float64(i) },
	}
	for name, p := range profiles {
		x := make([]float64, 30)
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := range x {
			x[i] = p(i)
			lo, hi = math.Min(lo, x[i]), math.Max(hi, x[i])
		}
		for _, ms := range [][]float64{nil, randomMass(rng, 30)} {
			if err := lim.ApplyMeasureTo(y, x, ms); err != nil {
				t.Fatal(err)
			}
			for i, v := range y {
				// Bounds are kept up to rounding of the data's size.
				if v < lo-1e-14*(1+math.Abs(lo)) || v > hi+1e-14*(1+math.Abs(hi)) {
					t.Errorf("%s (mass %v): target %d = %.17g outside [%g, %g]", name, ms != nil, i, v, lo, hi)
				}
				if name == "monotone" && i > 0 && v > y[i-1]+1e-15 {
					t.Errorf("monotone (mass %v): target %d = %g above target %d = %g", ms != nil, i, v, i-1, y[i-1])
				}
			}
		}
	}
	// Linear profile: exact away from the boundary source layers.
	zs, zt := src.Interfaces, dst.Interfaces
	x := make([]float64, 30)
	for i := range x {
		x[i] = 2 + 3*(zs[i]+zs[i+1])/2
	}
	lim.ApplyTo(y, x)
	for i := range y {
		if zt[i] < zs[1] || zt[i+1] > zs[29] {
			continue
		}
		if d := math.Abs(y[i] - (2 + 3*(zt[i]+zt[i+1])/2)); d > tolExact*5 {
			t.Errorf("linear profile: target %d off by %.2g", i, d)
		}
	}
}

func randomMass(rng *rand.Rand, n int) []float64 {
	m := make([]float64, n)
	for i := range m {
		m[i] = math.Exp(6 * (rng.Float64() - 0.5))
	}
	return m
}

// TestRemapPPMColumnMassCoordinate: mass-weighted PPM through a map (ApplyMeasureTo) is PPM
// in the cumulative-mass coordinate: RemapPPMColumnTo on the cumulative masses of the
// source layers and of the target layers gives the same values (derived from the
// definition; two code paths). Both conserve Σ m q.
func TestRemapPPMColumnMassCoordinate(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	src := randomLevels(t, rng, 21, 0, 1)
	dst := randomLevels(t, rng, 16, 0, 1)
	mass := randomMass(rng, 21)
	for _, meth := range []VerticalMethod{VerticalPPM, VerticalPPMLimited} {
		m := mustMap(t, src, grids.Layer, dst, grids.Layer, meth, nil)
		x := make([]float64, 21)
		for i := range x {
			x[i] = rng.NormFloat64()
		}
		y := make([]float64, 16)
		if err := m.ApplyMeasureTo(y, x, mass); err != nil {
			t.Fatal(err)
		}
		mt := make([]float64, 16)
		m.TargetMeasureTo(mt, mass)
		se := make([]float64, 22)
		te := make([]float64, 17)
		for i := range mass {
			se[i+1] = se[i] + mass[i]
		}
		for i := range mt {
			te[i+1] = te[i] + mt[i]
		}
		y2 := make([]float64, 16)
		if err := RemapPPMColumnTo(y2, x, se, te, meth == VerticalPPMLimited); err != nil {
			t.Fatal(err)
		}
		for i := range y {
			// The cumulative sums round differently from the per-piece masses: a few
			// ulps of the column total per value.
			if math.Abs(y[i]-y2[i]) > 1e-12 {
				t.Errorf("%v target %d: map %.16g, column function %.16g", meth, i, y[i], y2[i])
			}
		}
		if d := math.Abs(dot(mt, y) - dot(mass, x)); d > tolConserve*sumAbsProd(mass, x) {
			t.Errorf("%v: Σ m q changes by %.3g", meth, d)
		}
	}
	if err := RemapPPMColumnTo(make([]float64, 2), make([]float64, 2), []float64{0, 1, 2}, []float64{0, 1, 3}, false); err == nil {
		t.Error("RemapPPMColumnTo with different spans: no error")
	}
}

func dot(a, b []float64) float64 {
	var s, c float64
	for i := range a {
		x := a[i] * b[i]
		t := s + x
		if math.Abs(s) >= math.Abs(x) {
			c += (s - t) + x
		} else {
			c += (x - t) + s
		}
		s = t
	}
	return s + c
}

// TestPPMWeightSizes records the size of the unlimited PPM weights quoted in the
// VerticalMethod documentation, on 60-layer levels (uniform or stretched ×20 source,
// stretched ×7 target): about 6 entries per row, negative weights no lower than −1.13 and
// row sums of |W| up to 3.52, both largest at the surface where the one-sided edge
// extrapolates (measured here; the bounds below are those values rounded up).
func TestPPMWeightSizes(t *testing.T) {
	dst := mustLevels(t, grids.Normalized, 60, 0, 1, 2)
	for _, st := range []float64{0, 3} {
		src := mustLevels(t, grids.Normalized, 60, 0, 1, st)
		for _, sl := range locs {
			m := mustMap(t, src, sl, dst, grids.Layer, VerticalPPM, nil)
			var most, neg float64
			for i := 0; i < m.W.Rows; i++ {
				var s float64
				for k := m.W.RowStart[i]; k < m.W.RowStart[i+1]; k++ {
					s += math.Abs(m.W.Values[k])
					neg = math.Min(neg, m.W.Values[k])
				}
				most = math.Max(most, s)
			}
			perRow := float64(m.W.NNZ()) / float64(m.W.Rows)
			t.Logf("stretch %g, %v → layer: %.2f entries per row, most negative %.3g, largest Σ|W| %.3g", st, sl, perRow, neg, most)
			if perRow > 6.5 || neg < -1.2 || most > 3.6 {
				t.Errorf("stretch %g, %v: weights larger than documented", st, sl)
			}
		}
	}
}
