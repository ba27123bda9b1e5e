package analytic

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

func TestLatLonCellArea(t *testing.T) {
	const deg = math.Pi / 180
	r2 := EarthRadius * EarthRadius
	cases := []struct {
		name string
		got  float64
		want float64
		tol  float64 // absolute: half a unit in the last quoted digit
		src  string
	}{
		{"1°×1° at the equator", r2 * LatLonCellArea(0, deg, 0, deg), 1.23645e10, 0.000005e10, "REFERENCES.md [D]"},
		{"1°×1° at the pole", r2 * LatLonCellArea(0, deg, 89*deg, 90*deg), 1.07904e8, 0.000005e8, "REFERENCES.md [D]"},
		{"whole sphere", LatLonCellArea(-math.Pi, math.Pi, -math.Pi/2, math.Pi/2), 4 * math.Pi, 4e-15, "common analytic fact"},
		{"reversed", LatLonCellArea(1, 0, 0, 1), -math.Sin(1), 1e-16, "documented sign"},
	}
	for _, c := range cases {
		if math.Abs(c.got-c.want) > c.tol {
			t.Errorf("%s: %.9g, want %.9g (%s)", c.name, c.got, c.want, c.src)
		}
	}
}

// tolCellOne: the integral of 1 must be the exact area to rounding for
// every n (documented rescaling); a few ulps of the area.
const tolCellOne = 8e-16

func TestLatLonCellIntegralOfOne(t *testing.T) {
	// REFERENCES.md [D]: exact lat–lon cell area (λ₂ − λ₁)(sin φ₂ − sin φ₁).
	cells := [][4]float64{
		{0, 0.1, 0, 0.1},
		{-math.Pi, math.Pi, -math.Pi / 2, math.Pi / 2},
		{3, 3.3, 1.5, math.Pi / 2},       // polar cap cell across the date line
		{0, 2, -math.Pi / 2, -1.2},       // south polar
		{1, 1 + 1e-6, 0.3, 0.3 + 1e-6},   // tiny
		{0, 1, 0.5, 0.2},                 // reversed latitudes
		{-0.2, 6.1, -0.9, 1.4},           // nearly global band
		{0, math.Pi / 2, 0, math.Pi / 2}, // the octant
	}
	for _, c := range cells {
		want := LatLonCellArea(c[0], c[1], c[2], c[3])
		for _, n := range []int{1, 2, 3, 5, 8, 16} {
			got := LatLonCellIntegral(c[0], c[1], c[2], c[3], one, n)
			if math.Abs(got-want) > tolCellOne*math.Abs(want) {
				t.Errorf("cell %v n=%d: ∫1 = %.17g, area %.17g", c, n, got, want)
			}
		}
	}
	if got := LatLonCellIntegral(0, 1, 0.5, 0.5, one, 4); got != 0 {
		t.Errorf("zero-height cell: %v", got)
	}
}

func TestLatLonCellIntegralAnalytic(t *testing.T) {
	// Closed forms (common analytic facts): with dA = cos φ dφ dλ,
	// ∫x dA = [sin λ]·[φ/2 + sin 2φ/4] (x = cos φ cos λ) — in sin φ this
	// integrand has a square-root singularity at the pole;
	// ∫z² dA = Δλ·[sin³φ/3]; ∫(x² − y²) dA = [sin 2λ/2]·[sin φ − sin³φ/3].
	x := func(p r3.Vec) float64 { return p.X }
	z2 := func(p r3.Vec) float64 { return p.Z * p.Z }
	x2y2 := func(p r3.Vec) float64 { return p.X*p.X - p.Y*p.Y }
	prim := func(f func(float64) float64, a, b float64) float64 { return f(b) - f(a) }
	phiX := func(p float64) float64 { return p/2 + math.Sin(2*p)/4 }
	cube := func(p float64) float64 { return math.Pow(math.Sin(p), 3) / 3 }
	cos3 := func(p float64) float64 { return math.Sin(p) - math.Pow(math.Sin(p), 3)/3 }
	cases := []struct {
		name                   string
		lon1, lon2, lat1, lat2 float64
		f                      Field
		want                   float64
		n                      int
		tol                    float64 // relative
	}{
		{"x on a polar cap cell", 0, math.Pi / 2, 1, math.Pi / 2, x,
			prim(math.Sin, 0, math.Pi/2) * prim(phiX, 1, math.Pi/2), 12, 1e-14},
		// The closed form subtracts numbers of size 0.8 to get 0.006, so it
		// carries about 3e-14 relative rounding itself.
		{"x on a south polar cell", -0.3, 0.8, -math.Pi / 2, -1.3, x,
			prim(math.Sin, -0.3, 0.8) * prim(phiX, -math.Pi/2, -1.3), 12, 1e-13},
		{"z² on a band", 0, 2, -0.4, 1.1, z2, 2 * prim(cube, -0.4, 1.1), 12, 1e-14},
		{"x²−y² on a cell", 0.2, 1.9, -1, 0.3, x2y2,
			prim(func(l float64) float64 { return math.Sin(2*l) / 2 }, 0.2, 1.9) * prim(cos3, -1, 0.3), 12, 1e-14},
	}
	for _, c := range cases {
		got := LatLonCellIntegral(c.lon1, c.lon2, c.lat1, c.lat2, c.f, c.n)
		if math.Abs(got-c.want) > c.tol*math.Abs(c.want) {
			t.Errorf("%s: %.17g, want %.17g", c.name, got, c.want)
		}
	}
}

func TestLatLonCellMatchesTriangle(t *testing.T) {
	// The cell λ ∈ [0, π/2], φ ∈ [0, π/2] is the octant triangle (the
	// equator is a great circle), so the two integrators must agree
	// (common analytic fact), here on fields of either sign.
	for _, f := range []struct {
		name string
		f    Field
	}{
		{"smooth", Smooth},
		{"oscillatory", Oscillatory},
		{"x·y − z³", func(p r3.Vec) float64 { return p.X*p.Y - p.Z*p.Z*p.Z }},
	} {
		cell := LatLonCellIntegral(0, math.Pi/2, 0, math.Pi/2, f.f, 48)
		tri := SphericalTriangleIntegral(r3.Vec{X: 1}, r3.Vec{Y: 1}, r3.Vec{Z: 1}, f.f, 48)
		// 1e-14: both rules are converged to rounding at n = 48.
		if math.Abs(cell-tri) > 1e-14*math.Max(1, math.Abs(tri)) {
			t.Errorf("%s: cell %.17g, triangle %.17g", f.name, cell, tri)
		}
	}
}

func TestLatLonGlobalMeans(t *testing.T) {
	// Tiling the sphere by 8×4 lat–lon cells: the registry means (see
	// TestRegistryMeans) again, through the other integrator.
	for _, name := range []string{"smooth", "oscillatory", "tc2-height", "vortex"} {
		f, _ := FieldNamed(name)
		var sum float64
		for i := 0; i < 8; i++ {
			for j := 0; j < 4; j++ {
				sum += LatLonCellIntegral(float64(i)*math.Pi/4, float64(i+1)*math.Pi/4,
					-math.Pi/2+float64(j)*math.Pi/4, -math.Pi/2+float64(j+1)*math.Pi/4, f.Eval, 32)
			}
		}
		// 1e-13: 32 cells at n = 32, converged; rounding of the sum.
		if m := sum / (4 * math.Pi); math.Abs(m-f.Mean) > 1e-13*math.Abs(f.Mean) {
			t.Errorf("%s: mean %.16g, want %.16g", name, m, f.Mean)
		}
	}
}
