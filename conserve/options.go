package conserve

import (
	"github.com/colbridge/colbridge/conserve/analytic"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
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
	// accuracy check (0 means 8: with cells a few degrees wide the means of the analytic
	// fields are then exact to ≈ 1e-14, see CellMeansTo).
	Quadrature int

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

func (o *Options) quadrature() int {
	if o.Quadrature > 0 {
		return o.Quadrature
	}
	return 8
}
