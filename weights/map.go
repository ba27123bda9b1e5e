package weights

import (
	"fmt"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/version"
)

// Side describes one end of a map: which mesh, which location, how many degrees of
// freedom, and the measure and coverage of each.
type Side struct {
	// MeshName and MeshFingerprint identify the mesh (grids.Mesh.Fingerprint).
	MeshName        string
	MeshFingerprint string
	Location        grids.Location
	// Size is the number of degrees of freedom (matrix columns for the source, rows for
	// the target).
	Size int
	// Measure is the weight of each degree of freedom in the inner product and in
	// integrals: cell areas for cell fields (m² on the sphere), the kinetic-energy
	// weights for edge fields (see remap), nil when the side has none (a foreign matrix
	// without meshes).
	Measure []float64
	// Coverage is the fraction of each degree of freedom's measure covered by the other
	// side (1 for full coverage, 0 for none); nil means full coverage everywhere.
	Coverage []float64
}

// Provenance records who made a map and how.
type Provenance struct {
	Version string    // colbridge version
	Command string    // the command line or library call
	Created time.Time // UTC; from SOURCE_DATE_EPOCH when that is set
}

// Map is a linear map from a source location to a target location: the sparse matrix W
// (rows are targets, columns are sources) and its metadata.
type Map struct {
	W      *CSR
	Source Side
	Target Side
	// Method names the construction: "conservative", "interpolate", "nearest",
	// "perot", "adjoint", "vertical-linear" ... (see remap).
	Method string
	// Order is the formal order of accuracy of the method (0 when not meaningful).
	Order int
	// Normalization says how partially covered targets are scaled: "covered" (divide by
	// the covered part of the target: constants are preserved) or "whole" (divide by the
	// whole target measure: the integral over the covered part is preserved); "" when the
	// map has no partial coverage.
	Normalization string
	Provenance    Provenance
	// Attrs holds further text attributes that travel with the map (for example the name
	// of the measure variable a mass-weighted map reads at apply time).
	Attrs map[string]string
}

// Check reports whether the matrix is valid and its size matches both sides, and that
// the measures and coverages have the right lengths and are finite and non-negative.
func (m *Map) Check() error {
	if m.W == nil {
		return fmt.Errorf("map has no matrix")
	}
	if err := m.W.Check(); err != nil {
		return err
	}
	if m.W.Rows != m.Target.Size || m.W.Cols != m.Source.Size {
		return fmt.Errorf("matrix is %d × %d but the target has %d and the source %d degrees of freedom", m.W.Rows, m.W.Cols, m.Target.Size, m.Source.Size)
	}
	for _, s := range []struct {
		name string
		side *Side
	}{{"source", &m.Source}, {"target", &m.Target}} {
		for _, v := range []struct {
			name string
			xs   []float64
		}{{"measure", s.side.Measure}, {"coverage", s.side.Coverage}} {
			if v.xs == nil {
				continue
			}
			if len(v.xs) != s.side.Size {
				return fmt.Errorf("%s %s has %d values for %d degrees of freedom", s.name, v.name, len(v.xs), s.side.Size)
			}
			for i, x := range v.xs {
				if !(x >= 0) || x > 1e300 {
					return fmt.Errorf("%s %s[%d] = %v is not a finite non-negative number", s.name, v.name, i, x)
				}
			}
		}
	}
	return nil
}

// ApplyTo computes dst = W·src (see CSR.ApplyTo).
func (m *Map) ApplyTo(dst, src []float64) { m.W.ApplyTo(dst, src) }

// Version is the colbridge version recorded in provenance.
const Version = version.Version

// NewProvenance returns provenance for a map made now by the given command line. The time
// is taken from the SOURCE_DATE_EPOCH environment variable (seconds since 1970, the
// reproducible-builds convention) when it is set, so that rebuilt files are identical.
func NewProvenance(args []string) Provenance {
	t := time.Now().UTC().Truncate(time.Second)
	if s := os.Getenv("SOURCE_DATE_EPOCH"); s != "" {
		if sec, err := strconv.ParseInt(s, 10, 64); err == nil {
			t = time.Unix(sec, 0).UTC()
		}
	}
	return Provenance{Version: Version, Command: strings.Join(args, " "), Created: t}
}
