package grids

import "fmt"

// Surface is the surface a mesh lives on.
type Surface uint8

const (
	// Sphere: vertices are unit vectors, the mesh's Radius scales lengths and areas.
	Sphere Surface = iota + 1
	// Plane: vertices are (x, y, 0), optionally periodic in x and y.
	Plane
)

// EarthRadius is the default sphere radius in metres, the value of Williamson et al. 1992.
const EarthRadius = 6.37122e6

func (s Surface) String() string {
	switch s {
	case Sphere:
		return "sphere"
	case Plane:
		return "plane"
	}
	return fmt.Sprintf("Surface(%d)", uint8(s))
}

// ParseSurface converts "sphere" or "plane" to a Surface.
func ParseSurface(s string) (Surface, error) {
	switch s {
	case "sphere":
		return Sphere, nil
	case "plane":
		return Plane, nil
	}
	return 0, fmt.Errorf("unknown surface %q (want sphere or plane)", s)
}

// EdgeKind says which curve an edge follows between its two vertices.
type EdgeKind uint8

const (
	// GreatArc is the shorter great-circle arc (a straight segment on the plane).
	GreatArc EdgeKind = iota
	// Parallel is an arc of constant latitude (a small circle about the z axis), the
	// shorter way round. Both end points must have the same z.
	Parallel
)

func (k EdgeKind) String() string {
	switch k {
	case GreatArc:
		return "great-arc"
	case Parallel:
		return "parallel"
	}
	return fmt.Sprintf("EdgeKind(%d)", uint8(k))
}
