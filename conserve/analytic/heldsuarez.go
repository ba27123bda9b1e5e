package analytic

import (
	"fmt"
	"math"
)

// HeldSuarez holds the parameters of the dry forcing of Held & Suarez
// (1994), "A proposal for the intercomparison of the dynamical cores of
// atmospheric general circulation models", Bull. Amer. Meteor. Soc.
// 75:1825–1830. The values in HeldSuarez1994 are from memory (they agree
// with the defaults of several public model codes, which is not the same
// as a check against the paper).
//
// With σ = p/p_s and latitude φ:
//
//	T_eq(p, φ) = max(T_min, [T_surf − ΔT_y sin²φ − Δθ_z ln(p/p₀) cos²φ](p/p₀)^κ)
//	k_T(σ, φ)  = k_a + (k_s − k_a) max(0, (σ − σ_b)/(1 − σ_b)) cos⁴φ
//	k_v(σ)     = k_f max(0, (σ − σ_b)/(1 − σ_b))
//	dT/dt = −k_T (T − T_eq),   d(u, v)/dt = −k_v (u, v).
type HeldSuarez struct {
	TSurf       float64 // K, T_eq at p₀ on the equator (315)
	TMin        float64 // K, floor of T_eq (200)
	DeltaTy     float64 // K, equator-to-pole difference ΔT_y (60)
	DeltaThetaZ float64 // K, vertical potential-temperature scale Δθ_z (10)
	P0          float64 // Pa, reference pressure p₀ (1e5)
	Kappa       float64 // R/c_p (2/7)
	SigmaB      float64 // top of the boundary layer σ_b (0.7)
	Ka          float64 // s⁻¹, free-atmosphere relaxation rate k_a (1/40 day⁻¹)
	Ks          float64 // s⁻¹, surface equatorial relaxation rate k_s (1/4 day⁻¹)
	Kf          float64 // s⁻¹, surface Rayleigh drag rate k_f (1 day⁻¹)
}

// HeldSuarez1994 has the parameter values of Held & Suarez (1994), from
// memory; rates use Day = 86400 s.
var HeldSuarez1994 = HeldSuarez{
	TSurf:       315,
	TMin:        200,
	DeltaTy:     60,
	DeltaThetaZ: 10,
	P0:          1e5,
	Kappa:       2.0 / 7.0,
	SigmaB:      0.7,
	Ka:          1 / (40 * Day),
	Ks:          1 / (4 * Day),
	Kf:          1 / Day,
}

// EquilibriumTemperature returns T_eq in K at pressure p (Pa, > 0) and
// latitude lat (radians).
func (h HeldSuarez) EquilibriumTemperature(p, lat float64) float64 {
	s, c := math.Sincos(lat)
	r := p / h.P0
	t := (h.TSurf - h.DeltaTy*s*s - h.DeltaThetaZ*math.Log(r)*c*c) * math.Pow(r, h.Kappa)
	return math.Max(h.TMin, t)
}

// boundaryWeight returns max(0, (σ − σ_b)/(1 − σ_b)).
func (h HeldSuarez) boundaryWeight(sigma float64) float64 {
	return math.Max(0, (sigma-h.SigmaB)/(1-h.SigmaB))
}

// ThermalRate returns the relaxation rate k_T in s⁻¹ at σ and latitude
// lat (radians): k_a above σ_b, rising to k_s at the equatorial surface.
func (h HeldSuarez) ThermalRate(sigma, lat float64) float64 {
	c := math.Cos(lat)
	c2 := c * c
	return h.Ka + (h.Ks-h.Ka)*h.boundaryWeight(sigma)*c2*c2
}

// DragRate returns the Rayleigh drag rate k_v in s⁻¹ at σ: zero for
// σ ≤ σ_b, k_f at σ = 1.
func (h HeldSuarez) DragRate(sigma float64) float64 {
	return h.Kf * h.boundaryWeight(sigma)
}

// TemperatureTendencyTo writes dT/dt = −k_T(σ, φ)(T − T_eq(p, φ)) in K s⁻¹
// for a column with temperatures t (K) at pressures p (Pa), surface
// pressure ps (Pa) and latitude lat (radians) into dst and returns it.
// A nil dst is allocated. It panics if the lengths of t, p and a non-nil
// dst differ. dst may alias t.
func (h HeldSuarez) TemperatureTendencyTo(dst, t, p []float64, ps, lat float64) []float64 {
	dst = columnDst(dst, t, p)
	for k := range t {
		dst[k] = -h.ThermalRate(p[k]/ps, lat) * (t[k] - h.EquilibriumTemperature(p[k], lat))
	}
	return dst
}

// WindTendencyTo writes du/dt = −k_v(σ) u in m s⁻² for a column of one
// wind component u (m s⁻¹) at pressures p (Pa) with surface pressure ps
// (Pa) into dst and returns it. Apply it to u and v alike. A nil dst is
// allocated. It panics if the lengths of u, p and a non-nil dst differ.
// dst may alias u.
func (h HeldSuarez) WindTendencyTo(dst, u, p []float64, ps float64) []float64 {
	dst = columnDst(dst, u, p)
	for k := range u {
		dst[k] = -h.DragRate(p[k]/ps) * u[k]
	}
	return dst
}

// columnDst checks the column lengths and returns dst, allocated if nil.
func columnDst(dst, x, p []float64) []float64 {
	if len(x) != len(p) {
		panic(fmt.Sprintf("analytic: column length mismatch: %d values, %d pressures", len(x), len(p)))
	}
	if dst == nil {
		return make([]float64, len(x))
	}
	if len(dst) != len(x) {
		panic(fmt.Sprintf("analytic: column length mismatch: dst %d, values %d", len(dst), len(x)))
	}
	return dst
}
