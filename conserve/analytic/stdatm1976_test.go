package analytic

import (
	"math"
	"testing"
)

// halfUnit returns half a unit in the last digit of a value quoted with
// the given number of significant digits: the tolerance that matches a
// table rounded to those digits.
func halfUnit(v float64, digits int) float64 {
	return 0.5 * math.Pow(10, math.Floor(math.Log10(math.Abs(v)))-float64(digits-1))
}

func TestStdAtmosphereRows(t *testing.T) {
	// Rows of the U.S. Standard Atmosphere 1976 (NOAA/NASA/USAF) as quoted
	// in REFERENCES.md [C][D], and more rows from memory. Each value is
	// checked to half a unit in its last quoted digit.
	cases := []struct {
		h          float64 // geopotential height, m′
		t          float64 // K
		tDigits    int
		p          float64 // Pa
		pDigits    int
		rho        float64 // kg m⁻³
		rhoDigits  int
		fromMemory bool
	}{
		{0, 288.15, 5, 101325, 6, 1.225, 4, false},
		{5000, 255.65, 5, 54019.9, 6, 0.736115, 6, false},
		{11000, 216.65, 5, 22632.06, 7, 0.363918, 6, false},
		{20000, 216.65, 5, 5474.89, 6, 0.088035, 5, false},
		{32000, 228.65, 5, 868.019, 6, 0.013225, 5, false},
		{47000, 270.65, 5, 110.906, 6, 0.001428, 4, false},
		// From memory: base pressures at 51 and 71 km′ of the standard's
		// layer table.
		{51000, 270.65, 5, 66.93887, 7, 0, 0, true},
		{71000, 214.65, 5, 3.956420, 7, 0, 0, true},
		// From memory: 86 km geometric (84852 m′): p = 0.37338 Pa,
		// ρ = 6.958e-6 kg m⁻³. The molecular-scale temperature there is
		// 186.946 K (derived from the lapse rates; the kinetic one, 186.87 K,
		// is not modelled, see StdAtmosphere).
		{GeopotentialHeight(86000), 186.946, 6, 0.37338, 5, 6.958e-6, 4, true},
	}
	for _, c := range cases {
		tt, p, rho := StdAtmosphere(c.h)
		src := "U.S. Standard Atmosphere 1976, REFERENCES.md"
		if c.fromMemory {
			src = "U.S. Standard Atmosphere 1976, from memory"
		}
		if math.Abs(tt-c.t) > halfUnit(c.t, c.tDigits) {
			t.Errorf("H=%v: T = %.8g, want %v (%s)", c.h, tt, c.t, src)
		}
		if math.Abs(p-c.p) > halfUnit(c.p, c.pDigits) {
			t.Errorf("H=%v: p = %.10g, want %v (%s)", c.h, p, c.p, src)
		}
		if c.rhoDigits > 0 && math.Abs(rho-c.rho) > halfUnit(c.rho, c.rhoDigits) {
			t.Errorf("H=%v: ρ = %.8g, want %v (%s)", c.h, rho, c.rho, src)
		}
	}
}

func TestStdAtmosphereConstants(t *testing.T) {
	cases := []struct {
		name      string
		got, want float64
		tol       float64
		src       string
	}{
		// REFERENCES.md: R = 287.0531 from R* = 8.31432, M₀ = 28.9644 (7 digits).
		{"R", StdR, 287.0531, halfUnit(287.0531, 7), "REFERENCES.md"},
		// ρ₀ = p₀/(R T₀) = 1.225 to the 4 digits tabulated.
		{"ρ0", StdP0 / (StdR * StdT0), StdRho0, halfUnit(1.225, 4), "REFERENCES.md"},
		// REFERENCES.md: column mass p₀/g₀ = 10332.27 kg m⁻².
		{"p0/g0", StdP0 / StdG0, 10332.27, halfUnit(10332.27, 7), "REFERENCES.md"},
		// 86 km geometric is 84.8520 km′ geopotential (from memory); the
		// formula gives 84852.046.
		{"H(86 km)", GeopotentialHeight(86000), 84852.0, halfUnit(84852.0, 6), "from memory"},
		{"z(H(86 km))", GeometricHeight(GeopotentialHeight(86000)), 86000, 1e-9, "inverse"},
		{"g(0)", StdGravity(0), StdG0, 0, "definition"},
	}
	for _, c := range cases {
		if math.Abs(c.got-c.want) > c.tol {
			t.Errorf("%s = %.10g, want %.10g (%s)", c.name, c.got, c.want, c.src)
		}
	}
}

func TestStdAtmosphereContinuity(t *testing.T) {
	// Common practice: T and p are continuous at every layer base, and
	// out-of-range heights give NaN.
	for _, l := range stdLayers[1:] {
		const d = 1e-6 // m′
		t1, p1, _ := StdAtmosphere(l.hb - d)
		t2, p2, _ := StdAtmosphere(l.hb + d)
		// Over 2e-6 m′ T changes by ≤ 1e-8 K and p by ≤ 2e-10 relative.
		if math.Abs(t1-t2) > 1e-8 || math.Abs(p1-p2) > 1e-9*p1 {
			t.Errorf("jump at %v m′: T %v→%v, p %v→%v", l.hb, t1, t2, p1, p2)
		}
	}
	for _, h := range []float64{-6000, 84900, math.NaN(), math.Inf(1)} {
		if tt, p, rho := StdAtmosphere(h); !math.IsNaN(tt) || !math.IsNaN(p) || !math.IsNaN(rho) {
			t.Errorf("StdAtmosphere(%v) = %v %v %v, want NaN", h, tt, p, rho)
		}
	}
}

// stdMassByZ integrates ρ(z)·w(z) over geometric height with 24-point
// Gauss–Legendre on each layer (in z, unlike StdColumnMass, which works in
// geopotential height).
func stdMassByZ(z1, z2 float64, w func(z float64) float64) float64 {
	var edges []float64
	edges = append(edges, z1)
	for _, l := range stdLayers[1:] {
		if z := GeometricHeight(l.hb); z > z1 && z < z2 {
			edges = append(edges, z)
		}
	}
	edges = append(edges, z2)
	x, wt := gaussLegendre(24)
	var sum float64
	for i := 0; i+1 < len(edges); i++ {
		a, b := edges[i], edges[i+1]
		for k := range x {
			z := (a+b)/2 + (b-a)/2*x[k]
			_, _, rho := StdAtmosphere(GeopotentialHeight(z))
			sum += wt[k] * (b - a) / 2 * rho * w(z)
		}
	}
	return sum
}

func TestStdColumnMass(t *testing.T) {
	_, pTop, _ := StdAtmosphere(GeopotentialHeight(StdZTop))
	mass := StdColumnMass(0, StdZTop)
	// Independent quadrature in geometric height; 1e-14 relative is the
	// documented accuracy (measured ≤ 2e-15).
	for _, r := range [][2]float64{{0, StdZTop}, {StdZBottom, 0}, {0, 1000}, {10000, 12000}, {50000, StdZTop}} {
		got := StdColumnMass(r[0], r[1])
		if alt := stdMassByZ(r[0], r[1], func(float64) float64 { return 1 }); math.Abs(alt-got) > 1e-14*got {
			t.Errorf("∫ρ dz over %v = %.16g, by z-quadrature %.16g", r, got, alt)
		}
	}
	// Hydrostatic identity of the standard (dp = −ρ g dz, g = g₀(r₀/(r₀+z))²):
	// ∫ρ g/g₀ dz = (p₀ − p_top)/g₀; 1e-12 relative (quadrature converged).
	weighted := stdMassByZ(0, StdZTop, func(z float64) float64 { return StdGravity(z) / StdG0 })
	if want := (StdP0 - pTop) / StdG0; math.Abs(weighted-want) > 1e-12*want {
		t.Errorf("∫ρ g/g₀ dz = %.15g, want (p₀ − p_top)/g₀ = %.15g", weighted, want)
	}
	// The documented budget against p₀/g₀ = 10332.27 (REFERENCES.md):
	// ∫ρ dz − p₀/g₀ = (fall of g) − (mass above 86 km).
	gEffect := mass - weighted
	above := pTop / StdG0
	cases := []struct {
		name      string
		got, want float64
		tol       float64 // half a unit in the documented digits
	}{
		{"∫ρ dz", mass, 10356.12, 0.005},
		{"difference from p0/g0", mass - StdP0/StdG0, 23.85, 0.005},
		{"effect of g falling", gEffect, 23.89, 0.005},
		{"mass above 86 km", above, 0.038, 0.0005},
	}
	for _, c := range cases {
		if math.Abs(c.got-c.want) > c.tol {
			t.Errorf("%s = %.6g, documented %.6g", c.name, c.got, c.want)
		}
	}
	// Additivity and sign (documented).
	if s := StdColumnMass(0, 30000) + StdColumnMass(30000, StdZTop); math.Abs(s-mass) > 1e-12*mass {
		t.Errorf("mass is not additive: %v vs %v", s, mass)
	}
	if StdColumnMass(1000, 0) != -StdColumnMass(0, 1000) || !math.IsNaN(StdColumnMass(0, 90000)) {
		t.Errorf("reversed bounds or range check wrong")
	}
}
