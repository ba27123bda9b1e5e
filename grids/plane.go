package grids

import (
	"fmt"

	"gonum.org/v1/gonum/spatial/r3"
)

// PlaneSpec describes a rectangular planar mesh of nx × ny quadrilaterals (or twice as
// many triangles) covering [0, Lx] × [0, Ly].
type PlaneSpec struct {
	NX, NY               int
	Lx, Ly               float64
	PeriodicX, PeriodicY bool
	// Triangles splits every quadrilateral along its diagonal from lower left to upper
	// right.
	Triangles bool
}

// NewPlane returns the planar mesh described by s. Cell (i, j) has index j·nx + i (two
// triangles 2(j·nx + i) and 2(j·nx + i) + 1 when split); vertex (i, j) has index
// j·(nx or nx+1) + i. A periodic direction needs at least 3 cells so that every cell is
// smaller than half the period.
func NewPlane(s PlaneSpec) (*Mesh, error) {
	if s.NX < 1 || s.NY < 1 || !(s.Lx > 0) || !(s.Ly > 0) {
		return nil, fmt.Errorf("plane mesh: need nx, ny ≥ 1 and positive lengths (have %d × %d, %g × %g)", s.NX, s.NY, s.Lx, s.Ly)
	}
	if (s.PeriodicX && s.NX < 3) || (s.PeriodicY && s.NY < 3) {
		return nil, fmt.Errorf("plane mesh: a periodic direction needs at least 3 cells (have %d × %d)", s.NX, s.NY)
	}
	vx, vy := s.NX+1, s.NY+1
	if s.PeriodicX {
		vx = s.NX
	}
	if s.PeriodicY {
		vy = s.NY
	}
	dx, dy := s.Lx/float64(s.NX), s.Ly/float64(s.NY)
	verts := make([]r3.Vec, 0, vx*vy)
	for j := 0; j < vy; j++ {
		for i := 0; i < vx; i++ {
			x, y := float64(i)*dx, float64(j)*dy
			if i == s.NX {
				x = s.Lx
			}
			if j == s.NY {
				y = s.Ly
			}
			verts = append(verts, r3.Vec{X: x, Y: y})
		}
	}
	vid := func(i, j int) int32 { return int32((j%vy)*vx + i%vx) }
	per := 1
	if s.Triangles {
		per = 2
	}
	nc := per * s.NX * s.NY
	cellStart := make([]int32, nc+1)
	cellVerts := make([]int32, 0, 4*nc)
	c := 0
	for j := 0; j < s.NY; j++ {
		for i := 0; i < s.NX; i++ {
			sw, se, ne, nw := vid(i, j), vid(i+1, j), vid(i+1, j+1), vid(i, j+1)
			if s.Triangles {
				cellVerts = append(cellVerts, sw, se, ne)
				c++
				cellStart[c] = int32(len(cellVerts))
				cellVerts = append(cellVerts, sw, ne, nw)
			} else {
				cellVerts = append(cellVerts, sw, se, ne, nw)
			}
			c++
			cellStart[c] = int32(len(cellVerts))
		}
	}
	shape := "quads"
	if s.Triangles {
		shape = "triangles"
	}
	return Build(MeshSpec{
		Name:    fmt.Sprintf("plane %s %dx%d", shape, s.NX, s.NY),
		Surface: Plane, Lx: s.Lx, Ly: s.Ly, PeriodicX: s.PeriodicX, PeriodicY: s.PeriodicY,
		Verts: verts, CellStart: cellStart, CellVerts: cellVerts,
	})
}

// NewLine returns a periodic 1-D line of nx cells of length lx/nx for x–z slice models,
// represented as a strip one cell wide: a plane mesh of nx × 1 quadrilaterals of height
// width, periodic in x only. Cell i is the interval [i·lx/nx, (i+1)·lx/nx]; maps between
// lines then weigh by length (times the common width). width ≤ 0 means 1.
func NewLine(nx int, lx, width float64) (*Mesh, error) {
	if width <= 0 {
		width = 1
	}
	m, err := NewPlane(PlaneSpec{NX: nx, NY: 1, Lx: lx, Ly: width, PeriodicX: true})
	if err != nil {
		return nil, fmt.Errorf("line: %w", err)
	}
	m.Name = fmt.Sprintf("periodic line %d", nx)
	return m, nil
}
