package analytic

import "math"

// Constants of the U.S. Standard Atmosphere, 1976 (NOAA, NASA, USAF;
// U.S. Government Printing Office, Washington D.C.).
const (
	// StdP0 is the sea-level pressure in Pa.
	StdP0 = 101325.0
	// StdT0 is the sea-level temperature in K.
	StdT0 = 288.15
	// StdRho0 is the sea-level density in kg m⁻³ as tabulated;
	// StdP0/(StdR·StdT0) = 1.2250 to five digits.
	StdRho0 = 1.225
	// StdG0 is the sea-level gravity in m s⁻², which also defines the
	// geopotential metre.
	StdG0 = 9.80665
	// StdRStar is the gas constant of the standard, 8.31432e3
	// J kmol⁻¹ K⁻¹ (not the later CODATA value).
	StdRStar = 8.31432e3
	// StdM0 is the sea-level mean molar mass of air in kg kmol⁻¹.
	StdM0 = 28.9644
	// StdR is the specific gas constant R*/M₀ ≈ 287.0531 J kg⁻¹ K⁻¹.
	StdR = StdRStar / StdM0
	// StdR0 is the effective Earth radius in m used to convert between
	// geometric and geopotential height.
	StdR0 = 6356766.0
	// StdZBottom and StdZTop bound the geometric heights (m) covered here:
	// the standard's tables start at −5 km; 86 km is the top of its
	// lower, homogeneously mixed part.
	StdZBottom = -5000.0
	StdZTop    = 86000.0
)

// stdLayer is one row of the layer table: base geopotential height (m′),
// lapse rate dT/dH (K/m′), and the base temperature and pressure that
// follow from integrating the layers below.
type stdLayer struct{ hb, lapse, tb, pb float64 }

// stdLayers is the 1976 standard's layer table up to 86 km (lapse rates
// −6.5, 0, +1.0, +2.8, 0, −2.8, −2.0 K/km′ from bases 0, 11, 20, 32, 47,
// 51, 71 km′). Base temperatures and pressures are computed in init by
// chaining the layer formulas from (StdT0, StdP0), as the standard does.
var stdLayers = []stdLayer{
	{hb: 0, lapse: -6.5e-3},
	{hb: 11000, lapse: 0},
	{hb: 20000, lapse: 1.0e-3},
	{hb: 32000, lapse: 2.8e-3},
	{hb: 47000, lapse: 0},
	{hb: 51000, lapse: -2.8e-3},
	{hb: 71000, lapse: -2.0e-3},
}

func init() {
	stdLayers[0].tb, stdLayers[0].pb = StdT0, StdP0
	for i := 1; i < len(stdLayers); i++ {
		stdLayers[i].tb, stdLayers[i].pb = stdLayers[i-1].at(stdLayers[i].hb)
	}
}

// at returns the molecular-scale temperature and pressure at
// geopotential height h inside (or extrapolated from) layer l.
func (l stdLayer) at(h float64) (t, p float64) {
	dh := h - l.hb
	if l.lapse == 0 {
		return l.tb, l.pb * math.Exp(-StdG0*dh/(StdR*l.tb))
	}
	t = l.tb + l.lapse*dh
	return t, l.pb * math.Pow(l.tb/t, StdG0/(StdR*l.lapse))
}

// GeopotentialHeight returns the geopotential height H = r₀z/(r₀ + z) in
// geopotential metres for geometric height z in m (r₀ = StdR0).
// 86 km geometric is 84852.05 m′.
func GeopotentialHeight(z float64) float64 { return StdR0 * z / (StdR0 + z) }

// GeometricHeight returns the geometric height z = r₀H/(r₀ − H) in m for
// geopotential height H in m′; it inverts GeopotentialHeight.
func GeometricHeight(h float64) float64 { return StdR0 * h / (StdR0 - h) }

// StdGravity returns the gravity g₀(r₀/(r₀+z))² of the standard at
// geometric height z (m), in m s⁻².
func StdGravity(z float64) float64 {
	r := StdR0 / (StdR0 + z)
	return StdG0 * r * r
}

// StdAtmosphere returns the temperature t (K), pressure p (Pa) and
// density ρ = p/(R t) (kg m⁻³) of the 1976 U.S. Standard Atmosphere at
// geopotential height h (m′), for h between GeopotentialHeight(StdZBottom)
// and GeopotentialHeight(StdZTop) = 84852.05 m′; outside that range all
// three are NaN.
//
// Within each layer T = T_b + L(H − H_b) and
//
//	p = p_b (T_b/T)^(g₀/(R L))      (L ≠ 0),
//	p = p_b exp(−g₀(H − H_b)/(R T_b))  (L = 0),
//
// the exact hydrostatic solution dp/dH = −g₀p/(RT). The temperature is
// the molecular-scale temperature T_M. The standard's kinetic temperature
// equals it below 80 km; from 80 to 86 km it is T_M·M/M₀ with M/M₀
// falling from 1 to 0.999579 (from memory), so above 80 km this t is up
// to 0.08 K warmer than the tabulated kinetic temperature (186.87 K at
// 86 km, from memory; here 186.946 K). Pressure and density are not
// affected. The tabulated rows checked in the tests (H = 0 … 47 km′) agree
// to the digits quoted.
func StdAtmosphere(h float64) (t, p, rho float64) {
	if !(h >= GeopotentialHeight(StdZBottom) && h <= GeopotentialHeight(StdZTop)) {
		return math.NaN(), math.NaN(), math.NaN()
	}
	i := len(stdLayers) - 1
	for i > 0 && h < stdLayers[i].hb {
		i--
	}
	t, p = stdLayers[i].at(h)
	return t, p, p / (StdR * t)
}

// StdColumnMass returns the mass per unit area ∫ρ dz in kg m⁻² between
// geometric heights z1 < z2 (m, within [StdZBottom, StdZTop]) of the 1976
// standard atmosphere, by 16-point Gauss–Legendre quadrature in
// geopotential height on each layer piece (dz/dH = (r₀/(r₀ − H))²); the
// integrand is analytic on each piece, so the result is exact to about
// 1e-14 relative. Reversed bounds give the negative; heights outside the
// range give NaN.
//
// Note ∫ρ dz exceeds the pressure difference divided by g₀, because g
// falls with height: (p(z1) − p(z2))/g₀ = ∫ρ (g/g₀) dz. From 0 to 86 km
// ∫ρ dz = 10356.12 kg m⁻², while p₀/g₀ = 10332.27 kg m⁻²; the difference,
// +23.85, is +23.89 from the fall of g (about 2z̄/r₀ of the column, with
// z̄ ≈ 7.3 km the mass-weighted mean height) and −0.038 from the mass above
// 86 km (p(86 km)/g₀ with p(86 km) = 0.37338 Pa). These numbers are
// checked in the tests.
func StdColumnMass(z1, z2 float64) float64 {
	if z1 > z2 {
		return -StdColumnMass(z2, z1)
	}
	if !(z1 >= StdZBottom && z2 <= StdZTop) {
		return math.NaN()
	}
	h1, h2 := GeopotentialHeight(z1), GeopotentialHeight(z2)
	x, w := gaussLegendre(16)
	var sum float64
	for i, l := range stdLayers {
		lo, hi := l.hb, math.Inf(1)
		if i+1 < len(stdLayers) {
			hi = stdLayers[i+1].hb
		}
		if i == 0 {
			lo = math.Inf(-1)
		}
		a, b := math.Max(lo, h1), math.Min(hi, h2)
		if a >= b {
			continue
		}
		half, mid := (b-a)/2, (b+a)/2
		for k := range x {
			h := mid + half*x[k]
			t, p := l.at(h)
			r := StdR0 / (StdR0 - h)
			sum += w[k] * half * p / (StdR * t) * r * r
		}
	}
	return sum
}
