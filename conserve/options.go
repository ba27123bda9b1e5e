package conserve

import (
	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
	"math"
)

// CoverageTol is the slack in "fully covered": a degree of freedom counts as fully covered
// when its coverage is at least 1 − CoverageTol. 1e-12 leaves room for overlap areas
// computed to a few ulps relative to the cell.
const CoverageTol = 1e-12

// BoundsTol is the slack of the extremum checks, relative to max|f| of the source values:
// a convex combination of n values computed in floating point can leave their range by
// about n·2⁻⁵³·max|f| (n ≲ 100 for coupling maps gives ≈ 1e-14), so only excursions
// beyond 1e-12 count as new extrema.
const BoundsTol = 1e-12

// TestField is a named scalar field for the mass, bounds and accuracy checks: a function of
// position, evaluated at the cell centroids of a side's mesh (unit vectors on the sphere,
// (x, y, 0) on the plane). The index-based fields "constant" (all ones) and "random"
// (uniform in [0, 1), fixed seed) need no mesh and are always audited.
type TestField struct {
	Name string
	Eval analytic.Field
}

// Options selects what an audit measures. The zero value audits the map alone: the
// matrix checks (conservation, consistency, bounds on the index-based fields) and the
// round trip with the adjoint as prolongation.
type Options struct {
	// SourceMesh and TargetMesh are the meshes of the two sides (optional). They enable
	// the test fields by position, the accuracy check, the noise analyses and the map
	// plots, when the side's location is cell. Their cell counts must match the map.
	SourceMesh, TargetMesh *grids.Mesh

	// Prolongation is the map back from target to source (optional). When it is given
	// the pair check runs and the round trips use it; otherwise the round trips use the
	// adjoint W*.
	Prolongation *weights.Map

	// Fields are the positional test fields. Nil means the defaults of DefaultFields for
	// the source mesh's surface.
	Fields []TestField

	// Spectral enables the noise, damping and null-space analyses (check 6), which cost
	// O(N) map applications: Fourier analysis on doubly periodic planes, the
	// graph-Laplacian high-pass on other meshes, the null space of the restriction.
	Spectral bool
	// Fourier, HighPass and NullSpace tune the spectral analyses; zero values mean the
	// documented defaults.
	Fourier   FourierOptions
	HighPass  HighPassOptions
	NullSpace NullSpaceOptions

	// Quadrature is the Gauss–Legendre order per direction for exact cell means in the
	// accuracy check (0 chooses it from the cell size, QuadratureFor: 8 on cells a few
	// degrees wide, 4 on 0.25° cells; the means of the analytic fields are then exact to
	// ≈ 1e-14, see CellMeansTo).
	Quadrature int

	// AccuracySample bounds the targets of the accuracy check: on maps with more covered
	// targets an evenly spaced sample of about this many is used (0 means 20,000, a
	// negative value all targets). With 20,000 targets l1 and l2 are estimated to about
	// 1 % (sampling; 0.4 % measured on a smooth error field), and the accuracy check of
	// a 1-million-target map takes seconds instead of a minute.
	AccuracySample int

	// Probes is the number of random vectors for the adjoint identity and the idempotence
	// estimates (0 means 4). Seed seeds them and the "random" field (0 means 1).
	Probes int
	Seed   uint64

	// Thresholds are the gates; the zero value gates nothing.
	Thresholds Thresholds
}

func (o *Options) probes() int {
	if o.Probes > 0 {
		return o.Probes
	}
	return 4
}

func (o *Options) seed() uint64 {
	if o.Seed != 0 {
		return o.Seed
	}
	return 1
}

func (o *Options) accuracySample() int {
	switch {
	case o.AccuracySample < 0:
		return 0
	case o.AccuracySample == 0:
		return 20000
	}
	return o.AccuracySample
}

func (o *Options) quadrature(meshes ...*grids.Mesh) int {
	if o.Quadrature > 0 {
		return o.Quadrature
	}
	n := 3
	for _, m := range meshes {
		if m != nil {
			n = max(n, QuadratureFor(m))
		}
	}
	return n
}

// QuadratureFor returns the Gauss–Legendre order per direction that makes the exact cell
// means of the test fields accurate to about 1e-14 relative on mesh m: the smallest n ≥ 3
// with (k·h/2)^(2n)/(2n)! ≤ 1e-14, h the mean cell size (radians on the sphere, in units of
// the shorter period on the plane) and k = 32 the largest wavenumber of the test fields
// (the oscillatory field's sin¹⁶(2φ) has degree 32 in φ). This is the leading term of the
// Gauss rule's error for a trigonometric integrand (common practice, from the remainder
// formula of Gauss quadrature, Abramowitz & Stegun 25.4.30, from memory). It gives 8 on
// cells a few degrees wide and 4 on 0.25° cells, which keeps the accuracy check of an
// operational-size map within seconds.
func QuadratureFor(m *grids.Mesh) int {
	h := math.Sqrt(m.TotalArea() / float64(m.NumCells()))
	switch {
	case m.Surface == grids.Sphere:
		h /= m.Radius
	case m.Lx > 0 && m.Ly > 0:
		h *= 2 * math.Pi / math.Min(m.Lx, m.Ly)
	default:
		return 8
	}
	x := 32 * h / 2
	fact := 1.0
	for n := 1; n <= 8; n++ {
		fact *= float64(2*n-1) * float64(2*n) // (2n)!
		if n >= 3 && math.Pow(x, float64(2*n))/fact <= 1e-14 {
			return n
		}
	}
	return 8
}
