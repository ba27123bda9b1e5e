package conserve

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/spatial/r3"

	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
)

// DefaultFields returns the positional test fields for meshes on the given surface and
// domain:
//
//   - on the sphere, the registry of package analytic: "oscillatory", "smooth",
//     "tc2-height", "vortex";
//   - on the plane of size lx × ly, "plane-smooth" 2 + sin(2πx/lx)·cos(2πy/ly) and
//     "plane-oscillatory" 2 + sin(16πx/lx)·sin(16πy/ly), both periodic on the domain
//     (wavelengths lx and lx/8).
func DefaultFields(s grids.Surface, lx, ly float64) []TestField {
	if s == grids.Sphere {
		var out []TestField
		for _, f := range analytic.Fields() {
			out = append(out, TestField{Name: f.Name, Eval: f.Eval})
		}
		return out
	}
	return []TestField{
		{Name: "plane-smooth", Eval: func(p r3.Vec) float64 {
			return 2 + math.Sin(2*math.Pi*p.X/lx)*math.Cos(2*math.Pi*p.Y/ly)
		}},
		{Name: "plane-oscillatory", Eval: func(p r3.Vec) float64 {
			return 2 + math.Sin(16*math.Pi*p.X/lx)*math.Sin(16*math.Pi*p.Y/ly)
		}},
	}
}

// sourceFields returns the fields the mass and bounds checks use on the source side:
// "constant", "random", then the positional fields at the source cell centroids when the
// source has a cell mesh.
func sourceFields(n int, mesh *grids.Mesh, fields []TestField, seed uint64) []NamedVector {
	one := make([]float64, n)
	for i := range one {
		one[i] = 1
	}
	rng := rand.New(rand.NewPCG(seed, 0x636f6c62))
	rnd := make([]float64, n)
	for i := range rnd {
		rnd[i] = rng.Float64()
	}
	out := []NamedVector{{"constant", one}, {"random", rnd}}
	if mesh == nil {
		return out
	}
	for _, f := range fields {
		x := make([]float64, n)
		for c := range x {
			x[c] = f.Eval(mesh.CellCentroid[c])
		}
		out = append(out, NamedVector{f.Name, x})
	}
	return out
}

// randomVectors returns k vectors of length n with entries uniform in [−1, 1).
func randomVectors(k, n int, seed uint64) [][]float64 {
	rng := rand.New(rand.NewPCG(seed, 0x70726f62))
	out := make([][]float64, k)
	for i := range out {
		out[i] = make([]float64, n)
		for j := range out[i] {
			out[i][j] = 2*rng.Float64() - 1
		}
	}
	return out
}
