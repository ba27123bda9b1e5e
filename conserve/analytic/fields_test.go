package analytic

import (
	"math"
	"math/cmplx"
	"sort"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
	"pgregory.net/rapid"
)

// tolField: the fields are a few trigonometric evaluations of O(1) values;
// 1e-13 absolute allows for the argument 16λ of the oscillatory field.
const tolField = 1e-13

func TestFieldsCartesianForms(t *testing.T) {
	// Common analytic identities for unit p = (x, y, z):
	// cos²φ cos 2λ = x² − y² and sin¹⁶(2φ) cos 16λ = 2¹⁶ z¹⁶ Re((x+iy)¹⁶).
	// They also show both fields are smooth through the poles.
	rapid.Check(t, func(t *rapid.T) {
		p := drawPoint(t, "p")
		if got, want := Smooth(p), 2+p.X*p.X-p.Y*p.Y; math.Abs(got-want) > tolField {
			t.Fatalf("Smooth(%v) = %v, want %v", p, got, want)
		}
		w := cmplx.Pow(complex(p.X, p.Y), 16)
		want := 2 + math.Pow(2, 16)*math.Pow(p.Z, 16)*real(w)
		if got := Oscillatory(p); math.Abs(got-want) > tolField {
			t.Fatalf("Oscillatory(%v) = %v, want %v", p, got, want)
		}
	})
}

func TestRegistry(t *testing.T) {
	fs := Fields()
	var names []string
	for _, f := range fs {
		names = append(names, f.Name)
	}
	want := []string{"oscillatory", "smooth", "tc2-height", "vortex"}
	if strings.Join(names, ",") != strings.Join(want, ",") || !sort.StringsAreSorted(names) {
		t.Fatalf("Fields() names = %v, want %v", names, want)
	}
	fs[0].Name = "changed"
	if Fields()[0].Name != "oscillatory" {
		t.Errorf("Fields() does not return a copy")
	}
	for _, n := range want {
		f, err := FieldNamed(n)
		if err != nil || f.Name != n || f.Eval == nil || f.Summary == "" {
			t.Errorf("FieldNamed(%q) = %+v, %v", n, f, err)
		}
	}
	_, err := FieldNamed("gaussian-hill")
	if err == nil || !strings.Contains(err.Error(), "gaussian-hill") || !strings.Contains(err.Error(), "smooth") {
		t.Errorf("FieldNamed(unknown) error = %v, want the name and the known names", err)
	}
	// tc2-height evaluates test case 2.
	f, _ := FieldNamed("tc2-height")
	p := Point(0.3, 0.2)
	if f.Eval(p) != tc2Registry.Height(p) {
		t.Errorf("tc2-height does not evaluate TC2.Height")
	}
}

func TestRegistryMeans(t *testing.T) {
	// Exact means (documented): smooth and oscillatory 2 (a constant plus
	// harmonics of degree ≥ 1, which integrate to zero: common analytic
	// fact); tc2-height (gh₀ − C/3)/g since the sphere mean of μ² is 1/3;
	// vortex 1 by odd symmetry. Quadrature on the 8 octants.
	cases := []struct {
		name string
		n    int
		// tol: relative; from the measured convergence (oscillatory needs
		// n = 48 on octants to reach rounding, the others n = 24).
		tol float64
	}{
		{"smooth", 24, 1e-14},
		{"oscillatory", 48, 1e-14},
		{"tc2-height", 24, 1e-14},
		{"vortex", 32, 1e-14},
	}
	for _, c := range cases {
		f, err := FieldNamed(c.name)
		if err != nil {
			t.Fatal(err)
		}
		mean := sphereIntegral(f.Eval, c.n) / (4 * math.Pi)
		if math.Abs(mean-f.Mean) > c.tol*math.Abs(f.Mean) {
			t.Errorf("%s: mean by quadrature %.16g, documented %.16g", c.name, mean, f.Mean)
		}
	}
}

func TestVortex(t *testing.T) {
	// Nair & Jablonowski 2008 (form and parameters from memory).
	v := RegistryVortex
	c := Point(v.CenterLon, v.CenterLat)
	cases := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		// ρ = 0 at the centres: h = 1 whatever the time.
		{"h(centre)", v.Eval(c), 1, 1e-15},
		{"h(antipode)", v.Eval(r3.Scale(-1, c)), 1, 1e-15},
		// ω(0) = (3√3/2) u₀/a, the limit of V(ρ)/(aρ).
		{"ω(0)", v.AngularVelocity(0), 1.5 * math.Sqrt(3) * TC2U0 / EarthRadius, 1e-25},
		{"ω(1e-9)", v.AngularVelocity(1e-9), 1.5 * math.Sqrt(3) * TC2U0 / EarthRadius, 1e-20},
		// V(ρ) = u₀(3√3/2) sech²ρ tanh ρ at ρ = 1 (from memory).
		{"V(1)", v.AngularVelocity(1) * EarthRadius, TC2U0 * 1.5 * math.Sqrt(3) * math.Tanh(1) / (math.Cosh(1) * math.Cosh(1)), 1e-12},
	}
	for _, tc := range cases {
		if math.Abs(tc.got-tc.want) > tc.tol {
			t.Errorf("%s = %.16g, want %.16g", tc.name, tc.got, tc.want)
		}
	}
	if _, latr := v.Rotated(c); math.Abs(latr-math.Pi/2) > 1e-15 {
		t.Errorf("centre has rotated latitude %v, want π/2", latr)
	}
	rapid.Check(t, func(t *rapid.T) {
		p := drawPoint(t, "p")
		vx := Vortex{
			CenterLon: rapid.Float64Range(-math.Pi, math.Pi).Draw(t, "lonc"),
			CenterLat: rapid.Float64Range(-math.Pi/2, math.Pi/2).Draw(t, "latc"),
			Time:      rapid.Float64Range(0, 12*Day).Draw(t, "time"),
		}
		// The rotated coordinates in their usual lon–lat form (Nair &
		// Jablonowski 2008; formula from memory):
		lon, lat := LonLat(p)
		lc, pc := vx.CenterLon, vx.CenterLat
		wantLon := math.Atan2(math.Cos(lat)*math.Sin(lon-lc), math.Cos(lat)*math.Sin(pc)*math.Cos(lon-lc)-math.Cos(pc)*math.Sin(lat))
		wantLat := math.Asin(math.Sin(lat)*math.Sin(pc) + math.Cos(lat)*math.Cos(pc)*math.Cos(lon-lc))
		gotLon, gotLat := vx.Rotated(p)
		// Tolerances: asin loses half the digits near ±π/2 (√eps ≈ 1e-8,
		// hence 1e-7 on the latitude); the rotated longitude is undefined
		// at the rotated poles and has error ≈ eps/cos φ′ near them, so it
		// is compared only where cos φ′ > 1e-6, to 1e-9.
		if math.Abs(gotLat-wantLat) > 1e-7 || (math.Cos(wantLat) > 1e-6 && math.Abs(math.Remainder(gotLon-wantLon, 2*math.Pi)) > 1e-9) {
			t.Fatalf("Rotated(%v) = (%v, %v), lon–lat form (%v, %v)", p, gotLon, gotLat, wantLon, wantLat)
		}
		h := vx.Eval(p)
		if !(h > 0 && h < 2) {
			t.Fatalf("h = %v outside (0, 2)", h)
		}
		// h − 1 is odd in λ′ − ωt: at t = 0 the mirror point in λ′ gives 2 − h.
		v0 := Vortex{CenterLon: vx.CenterLon, CenterLat: vx.CenterLat}
		cv := Point(vx.CenterLon, vx.CenterLat)
		mirror := r3.Sub(p, r3.Scale(2*r3.Dot(p, East(cv)), East(cv))) // λ′ → −λ′
		// 1e-14: two tanh evaluations of O(1) arguments.
		if s := v0.Eval(p) + v0.Eval(mirror); math.Abs(s-2) > 1e-14 {
			t.Fatalf("h(λ′) + h(−λ′) = %v at t = 0, want 2", s)
		}
	})
}

func TestVortexMeanAllTimes(t *testing.T) {
	// Documented: the sphere mean of h is 1 at every time (odd symmetry).
	for _, days := range []float64{0, 1, 6, 12} {
		v := Vortex{CenterLon: 0.4, CenterLat: -1.1, Time: days * Day}
		n := 32
		if days > 3 {
			n = 64 // the spiral is wound tighter
		}
		if m := sphereIntegral(v.Eval, n) / (4 * math.Pi); math.Abs(m-1) > 1e-12 {
			t.Errorf("t = %v days: mean %.16g, want 1", days, m)
		}
	}
}
