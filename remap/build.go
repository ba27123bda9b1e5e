package remap

import (
	"errors"
	"fmt"
	"sync/atomic"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// Method names of the horizontal maps.
const (
	Conservative = "conservative"
	Interpolate  = "interpolate"
	Nearest      = "nearest"
)

// Normalisations of partially covered targets.
//
// For the point methods (Interpolate, Nearest) a target's coverage is the share of its
// stencil weight that falls on unmasked source cells (1 without a source mask, 0 outside
// a regional source); "covered" renormalises the remaining weights to sum 1, "whole"
// keeps them, so masked sources act as zeros.
const (
	// ByCovered divides by the covered part of each target: constants are preserved, and
	// the target value is the mean over its covered part.
	ByCovered = "covered"
	// ByWhole divides by the whole target measure: the integral over the covered part is
	// preserved, and a half-covered target gets half the value it would have.
	ByWhole = "whole"
)

// Options selects and tunes a horizontal map.
type Options struct {
	// Method is Conservative, Interpolate or Nearest.
	Method string
	// Order: 1–4 for Conservative, 1 for Interpolate, 0 or 1 for Nearest.
	Order int
	// Normalization is ByCovered (default) or ByWhole; it matters only where a target is
	// partly covered.
	Normalization string
	// SourceMask and TargetMask, if not nil, mark the cells that take part (true) and
	// those that do not (false), for example land and sea.
	SourceMask, TargetMask []bool
	// Workers is the number of goroutines; ≤ 0 means GOMAXPROCS. The result does not
	// depend on it.
	Workers int
	// Done, if not nil, counts source cells processed (for progress bars).
	Done *atomic.Int64
	// Provenance is stored in the map.
	Provenance weights.Provenance
}

// ErrBadOptions reports an unsupported method, order or normalisation.
var ErrBadOptions = errors.New("bad map options")

// Build returns the horizontal map from cell means on src to cells of tgt. Targets that
// no unmasked source covers get empty rows and coverage 0: they are marked, and an apply
// step writes the fill value there, never a silent zero.
func Build(src, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	if err := opt.checkCells(src, tgt); err != nil {
		return nil, err
	}
	var (
		m   *weights.Map
		err error
	)
	switch opt.Method {
	case Conservative:
		switch opt.Order {
		case 1, 2:
			m, err = buildConservative(src, tgt, opt)
		case 3, 4:
			m, err = buildHighOrder(src, tgt, opt)
		default:
			return nil, fmt.Errorf("%w: conservative maps have order 1 to 4, not %d", ErrBadOptions, opt.Order)
		}
	case Interpolate:
		if opt.Order != 1 {
			return nil, fmt.Errorf("%w: interpolation has order 1, not %d", ErrBadOptions, opt.Order)
		}
		m, err = buildInterpolate(src, tgt, opt)
	case Nearest:
		if opt.Order > 1 {
			return nil, fmt.Errorf("%w: nearest has order 0 or 1, not %d", ErrBadOptions, opt.Order)
		}
		m, err = buildNearest(src, tgt, opt)
	default:
		return nil, fmt.Errorf("%w: method %q (want %s, %s or %s)", ErrBadOptions, opt.Method, Conservative, Interpolate, Nearest)
	}
	if err != nil {
		return nil, err
	}
	m.Provenance = opt.Provenance
	return m, m.Check()
}

// cellSide describes the cells of a mesh as one side of a map.
func cellSide(m *grids.Mesh, coverage []float64) weights.Side {
	return weights.Side{
		MeshName:        m.Name,
		MeshFingerprint: m.Fingerprint(),
		Location:        grids.Location{H: grids.Cell},
		Size:            m.NumCells(),
		Measure:         m.CellArea,
		Coverage:        coverage,
	}
}

// checkCells fills in the default normalisation and checks it and the masks' lengths
// against the two meshes' cells.
func (opt *Options) checkCells(src, tgt *grids.Mesh) error {
	if opt.Normalization == "" {
		opt.Normalization = ByCovered
	}
	if opt.Normalization != ByCovered && opt.Normalization != ByWhole {
		return fmt.Errorf("%w: normalization %q (want %q or %q)", ErrBadOptions, opt.Normalization, ByCovered, ByWhole)
	}
	if opt.SourceMask != nil && len(opt.SourceMask) != src.NumCells() {
		return fmt.Errorf("%w: source mask has %d values for %d cells", ErrBadOptions, len(opt.SourceMask), src.NumCells())
	}
	if opt.TargetMask != nil && len(opt.TargetMask) != tgt.NumCells() {
		return fmt.Errorf("%w: target mask has %d values for %d cells", ErrBadOptions, len(opt.TargetMask), tgt.NumCells())
	}
	return nil
}
