package grids

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"github.com/colbridge/colbridge/internal/ncio"
)

// readCFLatLon builds a latitude–longitude mesh from CF coordinate variables: a 1-D
// variable recognised as latitude (standard_name latitude or units degrees_north) and one
// as longitude (standard_name longitude or units degrees_east). Cell edges come from their
// "bounds" variables when present (n × 2), else halfway between centres, with the outer
// edges extrapolated by half a spacing and latitudes clamped to ±90°.
func readCFLatLon(f *ncio.File, path string) (*Mesh, error) {
	var latName, lonName string
	for _, v := range f.Vars() {
		if len(v.Shape) != 1 {
			continue
		}
		sn, _ := f.AttrText(v.Name, "standard_name")
		u, _ := f.AttrText(v.Name, "units")
		u = strings.ToLower(u)
		switch {
		case latName == "" && (sn == "latitude" || u == "degrees_north" || u == "degree_north" || u == "degrees_n"):
			latName = v.Name
		case lonName == "" && (sn == "longitude" || u == "degrees_east" || u == "degree_east" || u == "degrees_e"):
			lonName = v.Name
		}
	}
	if latName == "" || lonName == "" {
		return nil, fileErr(path, "", errNoLatLon, "not a mesh file: no variable with cf_role = mesh_topology and no CF latitude/longitude coordinates")
	}
	lonEdges, err := cfEdges(f, path, lonName, false)
	if err != nil {
		return nil, err
	}
	latEdges, err := cfEdges(f, path, latName, true)
	if err != nil {
		return nil, err
	}
	m, err := NewLatLonEdges(lonEdges, latEdges, 0)
	if err != nil {
		return nil, fileErr(path, latName, err, "coordinates do not describe a latitude–longitude grid")
	}
	m.Name = fmt.Sprintf("lat-lon %dx%d from %s", len(lonEdges)-1, len(latEdges)-1, filepath.Base(path))
	return m, nil
}

// cfEdges returns the n+1 increasing cell edges of a CF coordinate, from its bounds or
// from its centres.
func cfEdges(f *ncio.File, path, name string, isLat bool) ([]float64, error) {
	c, err := readFloats1D(f, path, name)
	if err != nil {
		return nil, err
	}
	n := len(c)
	if n < 1 {
		return nil, fileErr(path, name, nil, "has no values")
	}
	flip := n > 1 && c[1] < c[0]
	var edges []float64
	if bn, err := f.AttrText(name, "bounds"); err == nil && bn != "" {
		v, err := f.Var(bn)
		if err != nil {
			return nil, fileErr(path, bn, err, "named by %s:bounds but missing", name)
		}
		if len(v.Shape) != 2 || v.Shape[0] != n || v.Shape[1] != 2 {
			return nil, fileErr(path, bn, nil, "has shape %v, want [%d 2]", v.Shape, n)
		}
		b := make([]float64, 2*n)
		if err := f.ReadFloat64s(bn, nil, nil, b); err != nil {
			return nil, err
		}
		edges = make([]float64, n+1)
		for i := 0; i < n; i++ {
			lo, hi := math.Min(b[2*i], b[2*i+1]), math.Max(b[2*i], b[2*i+1])
			if flip {
				lo, hi = hi, lo
			}
			if i == 0 {
				edges[0] = lo
			} else if math.Abs(edges[i]-lo) > 1e-9*math.Max(1, math.Abs(lo)) {
				return nil, fileErr(path, bn, nil, "cells %d and %d are not contiguous (%g vs %g)", i-1, i, edges[i], lo)
			}
			edges[i+1] = hi
		}
	} else {
		if n < 2 {
			return nil, fileErr(path, name, nil, "one value and no bounds: cannot tell the cell size")
		}
		edges = make([]float64, n+1)
		for i := 1; i < n; i++ {
			edges[i] = (c[i-1] + c[i]) / 2
		}
		edges[0] = c[0] - (c[1]-c[0])/2
		edges[n] = c[n-1] + (c[n-1]-c[n-2])/2
	}
	if flip {
		for i, j := 0, n; i < j; i, j = i+1, j-1 {
			edges[i], edges[j] = edges[j], edges[i]
		}
	}
	if isLat {
		for i := range edges {
			edges[i] = math.Max(-90, math.Min(90, edges[i]))
		}
	}
	for i := 0; i < n; i++ {
		if !(edges[i+1] > edges[i]) {
			return nil, fileErr(path, name, nil, "cell edges are not strictly monotone at %d (%g, %g)", i, edges[i], edges[i+1])
		}
	}
	return edges, nil
}
