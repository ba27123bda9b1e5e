package remap

import (
	"fmt"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

func buildInterpolate(src, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	return nil, fmt.Errorf("%w: interpolation is not available yet", ErrBadOptions)
}

func buildNearest(src, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	return nil, fmt.Errorf("%w: nearest is not available yet", ErrBadOptions)
}
