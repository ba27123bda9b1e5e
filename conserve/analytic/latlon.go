package analytic

import "math"

// LatLonCellArea returns the exact area on the unit sphere of the cell
// bounded by the meridians lon1, lon2 and the parallels lat1, lat2
// (radians): (λ₂ − λ₁)(sin φ₂ − sin φ₁). The parallels are small circles,
// not great circles. Reversed bounds give a negative area.
func LatLonCellArea(lon1, lon2, lat1, lat2 float64) float64 {
	return (lon2 - lon1) * (math.Sin(lat2) - math.Sin(lat1))
}

// LatLonCellIntegral returns the iterated integral
//
//	∫_{lon1}^{lon2} ∫_{lat1}^{lat2} f(λ, φ) cos φ dφ dλ
//
// over a cell bounded by meridians and parallels on the unit sphere
// (radians; lon2 may exceed π to cross the date line; reversed bounds
// change the sign), by an n×n tensor Gauss–Legendre rule in λ and φ.
//
// The φ weights wⱼ cos φⱼ are rescaled by one common factor so that they
// sum to sin φ₂ − sin φ₁ exactly; the integral of 1 is then
// LatLonCellArea to rounding (a few ulps), for every n. The factor
// differs from 1 by the quadrature error of ∫cos φ dφ, so it does not
// slow convergence. Quadrature in φ rather than in sin φ keeps the
// integrand analytic up to and across the poles (in sin φ, fields such as
// x = cos φ cos λ have a square-root singularity at a pole), so the error
// falls geometrically with n for analytic f on every cell, polar ones
// included; the tests show 1e-14 relative by n = 12 on a polar cap cell.
//
// It panics if n < 1. Cost: n² evaluations of f.
func LatLonCellIntegral(lon1, lon2, lat1, lat2 float64, f Field, n int) float64 {
	x, w := gaussLegendre(n)
	if lon1 == lon2 || lat1 == lat2 {
		return 0
	}
	hl, ml := (lon2-lon1)/2, (lon2+lon1)/2
	hp, mp := (lat2-lat1)/2, (lat2+lat1)/2
	// Rescaled latitude weights: Σ wφ = sin φ₂ − sin φ₁.
	wphi := make([]float64, n)
	var sumw float64
	for j := range x {
		wphi[j] = w[j] * hp * math.Cos(mp+hp*x[j])
		sumw += wphi[j]
	}
	scale := (math.Sin(lat2) - math.Sin(lat1)) / sumw
	var sum float64
	for i := range x {
		lon := ml + hl*x[i]
		var inner float64
		for j := range x {
			inner += wphi[j] * f(Point(lon, mp+hp*x[j]))
		}
		sum += w[i] * inner
	}
	return sum * hl * scale
}
