package grids

import (
	"fmt"

	"gonum.org/v1/gonum/spatial/r3"
)

// Columns is a physics column set: one column per cell of the footprint mesh, standing on
// that cell's footprint, with its own levels. The column point is the cell centroid.
// Often the footprint is the dynamics mesh itself; it may be a different, coarser or
// offset mesh.
type Columns struct {
	Footprint *Mesh
	Levels    *Levels
}

// NewColumns pairs a footprint mesh with levels.
func NewColumns(footprint *Mesh, levels *Levels) (*Columns, error) {
	if footprint == nil || levels == nil {
		return nil, fmt.Errorf("columns: need a footprint mesh and levels")
	}
	return &Columns{Footprint: footprint, Levels: levels}, nil
}

// Len returns the number of columns.
func (c *Columns) Len() int { return c.Footprint.NumCells() }

// Point returns the column point of column i: the centroid of its footprint.
func (c *Columns) Point(i int) r3.Vec { return c.Footprint.CellCentroid[i] }
