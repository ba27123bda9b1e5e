package analytic

import (
	"math"
	"testing"
)

// tolHS: the forcing is a few products, a log and a power of O(1..300)
// values; 1e-12 K (or relative) is far above their rounding.
const tolHS = 1e-12

func TestHeldSuarezValues(t *testing.T) {
	// Held & Suarez 1994, values from memory (see HeldSuarez1994).
	hs := HeldSuarez1994
	const deg = math.Pi / 180
	cases := []struct {
		name      string
		got, want float64
		src       string
	}{
		// [315 − 0 − 0]·1 at p₀ on the equator.
		{"T_eq(p0, 0°)", hs.EquilibriumTemperature(1e5, 0), 315, "Held & Suarez 1994, from memory"},
		// 315 − ΔT_y at the pole surface.
		{"T_eq(p0, 90°)", hs.EquilibriumTemperature(1e5, 90*deg), 255, "Held & Suarez 1994, from memory"},
		{"T_eq(p0, −90°)", hs.EquilibriumTemperature(1e5, -90*deg), 255, "Held & Suarez 1994, from memory"},
		// The 200 K floor aloft: at 10 hPa the unfloored value is
		// (315 + 10 ln 100)(0.01)^(2/7) ≈ 97 K on the equator.
		{"T_eq(10 hPa, 0°)", hs.EquilibriumTemperature(1e3, 0), 200, "Held & Suarez 1994, from memory"},
		{"T_eq(1 hPa, 45°)", hs.EquilibriumTemperature(1e2, 45*deg), 200, "Held & Suarez 1994, from memory"},
		// Above the floor at 500 hPa, 30°: the formula itself.
		{"T_eq(500 hPa, 30°)", hs.EquilibriumTemperature(5e4, 30*deg),
			(315 - 60*0.25 - 10*math.Log(0.5)*0.75) * math.Pow(0.5, 2.0/7.0), "Held & Suarez 1994, from memory"},
		// Rates in day⁻¹.
		{"k_T(1, 0°)", hs.ThermalRate(1, 0) * Day, 0.25, "k_s"},
		{"k_T(1, 90°)", hs.ThermalRate(1, 90*deg) * Day, 1.0 / 40, "k_a (cos⁴ = 0)"},
		{"k_T(0.7, 0°)", hs.ThermalRate(0.7, 0) * Day, 1.0 / 40, "k_a at σ_b"},
		{"k_T(0.5, 0°)", hs.ThermalRate(0.5, 0) * Day, 1.0 / 40, "k_a above σ_b"},
		{"k_T(0.85, 60°)", hs.ThermalRate(0.85, 60*deg) * Day, 1.0/40 + (0.25-1.0/40)*0.5/16, "formula"},
		{"k_v(1)", hs.DragRate(1) * Day, 1, "k_f"},
		{"k_v(0.7)", hs.DragRate(0.7) * Day, 0, "zero at σ_b"},
		{"k_v(0.3)", hs.DragRate(0.3) * Day, 0, "zero above σ_b"},
		{"k_v(0.85)", hs.DragRate(0.85) * Day, 0.5, "linear in σ"},
	}
	for _, c := range cases {
		if math.Abs(c.got-c.want) > tolHS*math.Max(1, math.Abs(c.want)) {
			t.Errorf("%s = %.15g, want %.15g (%s)", c.name, c.got, c.want, c.src)
		}
	}
}

func TestHeldSuarezTendencies(t *testing.T) {
	hs := HeldSuarez1994
	lat := 0.3
	ps := 98000.0
	p := []float64{1000, 20000, 50000, 70000, 85000, 97000}
	temp := []float64{210, 220, 260, 280, 290, 300}
	u := []float64{30, 20, 10, -5, 8, 3}
	dT := hs.TemperatureTendencyTo(nil, temp, p, ps, lat)
	du := hs.WindTendencyTo(make([]float64, len(u)), u, p, ps)
	for k := range p {
		sigma := p[k] / ps
		wantT := -hs.ThermalRate(sigma, lat) * (temp[k] - hs.EquilibriumTemperature(p[k], lat))
		wantU := -hs.DragRate(sigma) * u[k]
		if math.Abs(dT[k]-wantT) > tolHS*math.Abs(wantT) || math.Abs(du[k]-wantU) > tolHS*math.Abs(wantU) {
			t.Errorf("level %d: dT/dt %g want %g, du/dt %g want %g", k, dT[k], wantT, du[k], wantU)
		}
		if sigma <= hs.SigmaB && du[k] != 0 {
			t.Errorf("level %d (σ=%.2f ≤ σ_b): du/dt = %g, want 0", k, sigma, du[k])
		}
	}
	// Relaxation: a column at T_eq has no tendency; dst may alias the input.
	eq := make([]float64, len(p))
	for k := range p {
		eq[k] = hs.EquilibriumTemperature(p[k], lat)
	}
	for k, v := range hs.TemperatureTendencyTo(eq, eq, p, ps, lat) {
		if v != 0 {
			t.Errorf("level %d: tendency %g at equilibrium", k, v)
		}
	}
	for _, f := range []func(){
		func() { hs.TemperatureTendencyTo(nil, temp[:2], p, ps, lat) },
		func() { hs.WindTendencyTo(make([]float64, 2), u, p, ps) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("length mismatch did not panic")
				}
			}()
			f()
		}()
	}
}
