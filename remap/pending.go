package remap

import (
	"fmt"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

func buildHighOrder(src, tgt *grids.Mesh, opt Options) (*weights.Map, error) {
	return nil, fmt.Errorf("%w: conservative order %d is not available yet", ErrBadOptions, opt.Order)
}
