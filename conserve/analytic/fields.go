package analytic

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/spatial/r3"
)

// Field is a scalar field on the unit sphere, evaluated at a direction p
// (unit length expected; the fields here normalise where it matters).
type Field func(p r3.Vec) float64

// Smooth is the smooth remapping test field 2 + cos²φ cos 2λ, a spherical
// harmonic of degree 2 plus a constant (for unit p it equals
// 2 + x² − y²). Its mean over the sphere is 2; its range is [1, 3].
// Source: the test fields of Ullrich & Taylor (2015), Mon. Wea. Rev.
// 143(6):2419–2440, as listed in colbridge's REFERENCES.md.
func Smooth(p r3.Vec) float64 {
	lon, lat := LonLat(p)
	c := math.Cos(lat)
	return 2 + c*c*math.Cos(2*lon)
}

// Oscillatory is the high-frequency remapping test field
// 2 + sin¹⁶(2φ) cos 16λ (a degree-32 harmonic plus a constant). Its mean
// over the sphere is 2; its range is [1, 3]. Source: as for Smooth
// (Ullrich & Taylor 2015, as listed in REFERENCES.md).
func Oscillatory(p r3.Vec) float64 {
	lon, lat := LonLat(p)
	s := math.Sin(2 * lat)
	s2 := s * s
	s4 := s2 * s2
	s8 := s4 * s4
	return 2 + s8*s8*math.Cos(16*lon)
}

// NamedField is an entry of the field registry.
type NamedField struct {
	// Name is the registry key, e.g. "smooth".
	Name string
	// Summary is a one-line description with the formula and source.
	Summary string
	// Eval evaluates the field at a point of the unit sphere.
	Eval Field
	// Mean is the exact mean of the field over the sphere, (1/4π)∫ f dA.
	Mean float64
}

// tc2Registry is the test case 2 flow used by the "tc2-height" entry.
var tc2Registry = TC2{Alpha: math.Pi / 4}

// registry lists the named test fields; keep it sorted by name.
var registry = []NamedField{
	{
		Name:    "oscillatory",
		Summary: "2 + sin¹⁶(2φ) cos 16λ (Ullrich & Taylor 2015)",
		Eval:    Oscillatory,
		Mean:    2,
	},
	{
		Name:    "smooth",
		Summary: "2 + cos²φ cos 2λ (Ullrich & Taylor 2015)",
		Eval:    Smooth,
		Mean:    2,
	},
	{
		Name:    "tc2-height",
		Summary: "fluid depth h in m of Williamson et al. 1992 test case 2 with tilt α = π/4",
		Eval:    tc2Registry.Height,
		// The mean of μ² over the sphere is 1/3 for any unit axis.
		Mean: (TC2GH0 - (EarthRadius*EarthOmega*TC2U0+TC2U0*TC2U0/2)/3) / Gravity,
	},
	{
		Name:    "vortex",
		Summary: "1 − tanh[(ρ/γ) sin(λ′ − ωt)], ρ₀ = 3, γ = 5, t = 3 days (Nair & Jablonowski 2008; parameters from memory)",
		Eval:    RegistryVortex.Eval,
		// The field minus 1 is odd in λ′ − ωt on every rotated parallel.
		Mean: 1,
	},
}

// Fields returns the registered test fields sorted by name: "oscillatory",
// "smooth", "tc2-height", "vortex". The slice is a fresh copy.
func Fields() []NamedField {
	out := make([]NamedField, len(registry))
	copy(out, registry)
	return out
}

// FieldNamed returns the registered field with the given name, or an
// error that lists the known names.
func FieldNamed(name string) (NamedField, error) {
	i := sort.Search(len(registry), func(i int) bool { return registry[i].Name >= name })
	if i < len(registry) && registry[i].Name == name {
		return registry[i], nil
	}
	names := make([]string, len(registry))
	for i, f := range registry {
		names[i] = f.Name
	}
	return NamedField{}, fmt.Errorf("analytic: unknown test field %q (known: %s)", name, strings.Join(names, ", "))
}
