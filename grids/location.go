package grids

import (
	"fmt"
	"strings"
)

// HLocation is where the degrees of freedom of a field sit horizontally.
type HLocation uint8

const (
	// Cell: one value per cell (a cell mean, or the value at the column point).
	Cell HLocation = iota + 1
	// EdgeNormal: one value per edge, the velocity component along EdgeNormal.
	EdgeNormal
	// EdgeTangential: one value per edge, the component along the edge tangent
	// k × EdgeNormal (k the local vertical).
	EdgeTangential
	// Vertex: one value per vertex (stream function, vorticity).
	Vertex
	// DG1: discontinuous piecewise-linear; one value per cell corner, ordered like
	// CellVerts (the value of the field at that corner from inside the cell).
	DG1
	// CG2: continuous piecewise-quadratic (P2 Lagrange on triangles, Q2 on
	// quadrilaterals): the values at every vertex (in vertex order), then at every edge
	// midpoint (in edge order), then at the centre of every quadrilateral cell (in cell
	// order; triangles have none).
	CG2
)

var hNames = map[HLocation]string{
	Cell: "cell", EdgeNormal: "edge-normal", EdgeTangential: "edge-tangential",
	Vertex: "vertex", DG1: "dg1", CG2: "cg2",
}

func (h HLocation) String() string {
	if s, ok := hNames[h]; ok {
		return s
	}
	return fmt.Sprintf("HLocation(%d)", uint8(h))
}

// VLocation is where the degrees of freedom sit vertically.
type VLocation uint8

const (
	// NoLevels: a 2-D field.
	NoLevels VLocation = iota
	// Layer: one value per layer (nlev).
	Layer
	// Interface: one value per interface (nlev+1), Charney–Phillips temperature.
	Interface
)

func (v VLocation) String() string {
	switch v {
	case NoLevels:
		return "none"
	case Layer:
		return "layer"
	case Interface:
		return "interface"
	}
	return fmt.Sprintf("VLocation(%d)", uint8(v))
}

// Location is a horizontal part times a vertical part.
type Location struct {
	H HLocation
	V VLocation
}

// String returns "cell", "edge-normal/layer" and so on: the vertical part is omitted for
// 2-D fields.
func (l Location) String() string {
	if l.H == 0 {
		return l.V.String() // a vertical factor
	}
	if l.V == NoLevels {
		return l.H.String()
	}
	return l.H.String() + "/" + l.V.String()
}

// ParseLocation parses the form String writes.
func ParseLocation(s string) (Location, error) {
	switch s {
	case "layer":
		return Location{V: Layer}, nil
	case "interface":
		return Location{V: Interface}, nil
	}
	hs, vs, _ := strings.Cut(s, "/")
	var loc Location
	for h, name := range hNames {
		if name == hs {
			loc.H = h
		}
	}
	if loc.H == 0 {
		return Location{}, fmt.Errorf("unknown location %q (horizontal part must be one of cell, edge-normal, edge-tangential, vertex, dg1, cg2)", s)
	}
	switch vs {
	case "", "none":
	case "layer":
		loc.V = Layer
	case "interface":
		loc.V = Interface
	default:
		return Location{}, fmt.Errorf("unknown location %q (vertical part must be layer, interface or none)", s)
	}
	return loc, nil
}

// Size returns the number of horizontal degrees of freedom of location h on mesh m.
func (m *Mesh) Size(h HLocation) int {
	switch h {
	case Cell:
		return m.NumCells()
	case EdgeNormal, EdgeTangential:
		return m.NumEdges()
	case Vertex:
		return m.NumVerts()
	case DG1:
		return len(m.CellVerts)
	case CG2:
		quads := 0
		for c := 0; c < m.NumCells(); c++ {
			if m.CellStart[c+1]-m.CellStart[c] == 4 {
				quads++
			}
		}
		return m.NumVerts() + m.NumEdges() + quads
	}
	panic(fmt.Sprintf("grids: Size: unknown location %v", h))
}

// Size returns the number of vertical degrees of freedom of v on levels l (1 for NoLevels).
func (l *Levels) Size(v VLocation) int {
	switch v {
	case NoLevels:
		return 1
	case Layer:
		return l.NLev()
	case Interface:
		return l.NLev() + 1
	}
	panic(fmt.Sprintf("grids: Size: unknown vertical location %v", v))
}
