package main

import (
	"encoding/json"
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"text/tabwriter"

	flag "github.com/spf13/pflag"

	"github.com/colbridge/colbridge/grids"
)

func runMesh(args []string, e *env) error {
	if len(args) == 0 || args[0] == "--help" || args[0] == "-h" {
		fmt.Fprint(e.stdout, meshHelp)
		if len(args) == 0 {
			return usagef("mesh: say make or info")
		}
		return nil
	}
	switch args[0] {
	case "make":
		return runMeshMake(args[1:], e)
	case "info":
		return runMeshInfo(args[1:], e)
	}
	return usagef("mesh: unknown action %q (want make or info)", args[0])
}

const meshHelp = `Usage: colbridge mesh make <kind> [flags] -o FILE
       colbridge mesh info FILE [--json]

Kinds: cubed, icos, latlon, plane, line. Run 'colbridge mesh make <kind> --help'.

Examples:
  colbridge mesh make cubed --n 24 -o c24.nc
  colbridge mesh make icos --level 4 --dual -o i4.nc
  colbridge mesh make latlon --nlon 180 --nlat 90 -o ll.nc
  colbridge mesh make plane --nx 32 --ny 32 --lx 1e6 --ly 1e6 --tri -o p.nc
  colbridge mesh info c24.nc --json
`

func runMeshMake(args []string, e *env) error {
	if len(args) == 0 || strings.HasPrefix(args[0], "-") {
		if len(args) > 0 && (args[0] == "--help" || args[0] == "-h") {
			fmt.Fprint(e.stdout, meshHelp)
			return nil
		}
		return usagef("mesh make: say which kind: cubed, icos, latlon, plane or line")
	}
	kind, args := args[0], args[1:]
	var (
		out    string
		radius float64
		build  func() (*grids.Mesh, error)
		fs     *flag.FlagSet
	)
	switch kind {
	case "cubed":
		fs = newFlags("mesh make cubed", "mesh make cubed --n N [--radius R] -o FILE",
			"colbridge mesh make cubed --n 24 -o c24.nc     # 3456 cells, about 4° (417 km)")
		fs.StringVarP(&out, "output", "o", "", "the mesh file to write (UGRID NetCDF)")
		n := fs.Int("n", 0, "cells along each panel edge (6·n² cells in all)")
		fs.Float64Var(&radius, "radius", grids.EarthRadius, "sphere radius in metres")
		build = func() (*grids.Mesh, error) { return grids.NewCubedSphere(*n, radius) }
	case "icos":
		fs = newFlags("mesh make icos", "mesh make icos --level K [--dual] [--radius R] -o FILE",
			"colbridge mesh make icos --level 4 -o i4.nc          # 5120 triangles",
			"colbridge mesh make icos --level 4 --dual -o h4.nc   # 2562 hexagons and pentagons")
		fs.StringVarP(&out, "output", "o", "", "the mesh file to write (UGRID NetCDF)")
		level := fs.Int("level", -1, "bisection level k: 20·4^k triangles")
		dual := fs.Bool("dual", false, "write the hexagonal–pentagonal dual (10·4^k + 2 cells)")
		fs.Float64Var(&radius, "radius", grids.EarthRadius, "sphere radius in metres")
		build = func() (*grids.Mesh, error) {
			if *dual {
				return grids.NewIcosahedralDual(*level, radius)
			}
			return grids.NewIcosahedral(*level, radius)
		}
	case "latlon":
		fs = newFlags("mesh make latlon", "mesh make latlon --nlon N --nlat M [--lon0 DEG] [--radius R] -o FILE",
			"colbridge mesh make latlon --nlon 180 --nlat 90 -o ll2.nc          # 2° cells",
			"colbridge mesh make latlon --nlon 240 --nlat 120 --lon0 0.4 -o ll.nc")
		fs.StringVarP(&out, "output", "o", "", "the mesh file to write (UGRID NetCDF)")
		nlon := fs.Int("nlon", 0, "cells along a parallel")
		nlat := fs.Int("nlat", 0, "cells along a meridian (pole to pole)")
		lon0 := fs.Float64("lon0", 0, "longitude of the western edge of the first column, degrees")
		fs.Float64Var(&radius, "radius", grids.EarthRadius, "sphere radius in metres")
		build = func() (*grids.Mesh, error) {
			return grids.NewLatLon(grids.LatLonSpec{NLon: *nlon, NLat: *nlat, Lon0: *lon0, Radius: radius})
		}
	case "plane":
		fs = newFlags("mesh make plane", "mesh make plane --nx N --ny M --lx L --ly L [--tri] [--periodic xy|x|y|none] -o FILE",
			"colbridge mesh make plane --nx 32 --ny 32 --lx 1e6 --ly 1e6 -o p.nc",
			"colbridge mesh make plane --nx 32 --ny 32 --lx 1e6 --ly 1e6 --tri --periodic none -o disk.nc")
		fs.StringVarP(&out, "output", "o", "", "the mesh file to write (UGRID NetCDF)")
		nx := fs.Int("nx", 0, "cells along x")
		ny := fs.Int("ny", 0, "cells along y")
		lx := fs.Float64("lx", 0, "domain length in x (metres)")
		ly := fs.Float64("ly", 0, "domain length in y (metres)")
		tri := fs.Bool("tri", false, "split every quadrilateral into two triangles")
		per := fs.String("periodic", "xy", "periodic directions: xy, x, y or none")
		build = func() (*grids.Mesh, error) {
			if !map[string]bool{"xy": true, "x": true, "y": true, "none": true}[*per] {
				return nil, usagef("mesh make plane: --periodic %q (want xy, x, y or none)", *per)
			}
			return grids.NewPlane(grids.PlaneSpec{NX: *nx, NY: *ny, Lx: *lx, Ly: *ly, Triangles: *tri,
				PeriodicX: strings.Contains(*per, "x"), PeriodicY: strings.Contains(*per, "y")})
		}
	case "line":
		fs = newFlags("mesh make line", "mesh make line --nx N --lx L [--width W] -o FILE",
			"colbridge mesh make line --nx 128 --lx 1.28e6 -o slice.nc   # periodic x–z slice, 10 km cells")
		fs.StringVarP(&out, "output", "o", "", "the mesh file to write (UGRID NetCDF)")
		nx := fs.Int("nx", 0, "cells along the line")
		lx := fs.Float64("lx", 0, "period of the line (metres)")
		width := fs.Float64("width", 1, "width of the strip that represents the line")
		build = func() (*grids.Mesh, error) { return grids.NewLine(*nx, *lx, *width) }
	default:
		return usagef("mesh make: unknown kind %q (want cubed, icos, latlon, plane or line)", kind)
	}
	if err := parse(fs, args, e); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("mesh make %s: unexpected argument %q", kind, fs.Arg(0))
	}
	if out == "" {
		return usagef("mesh make %s: say where to write the mesh with -o FILE", kind)
	}
	m, err := build()
	if err != nil {
		if _, ok := err.(*usageError); ok {
			return err
		}
		return usagef("mesh make %s: %v", kind, err)
	}
	if err := grids.WriteUGRID(out, m); err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "wrote %s: %s, %d cells, %d edges, %d vertices\n", out, m.Name, m.NumCells(), m.NumEdges(), m.NumVerts())
	return nil
}

// meshSummary is the JSON form of mesh info (DESIGN.md §8 keys: cells, edges, vertices,
// area, surface).
type meshSummary struct {
	File         string         `json:"file"`
	Name         string         `json:"name"`
	Surface      string         `json:"surface"`
	Radius       float64        `json:"radius,omitempty"`
	Lx           float64        `json:"lx,omitempty"`
	Ly           float64        `json:"ly,omitempty"`
	PeriodicX    bool           `json:"periodic_x,omitempty"`
	PeriodicY    bool           `json:"periodic_y,omitempty"`
	Cells        int            `json:"cells"`
	Edges        int            `json:"edges"`
	Vertices     int            `json:"vertices"`
	Area         float64        `json:"area"`
	AreaDefect   float64        `json:"area_relative_defect"`
	Euler        int            `json:"euler_characteristic"`
	CellDegrees  map[string]int `json:"cell_degrees"`
	MinCellArea  float64        `json:"min_cell_area"`
	MaxCellArea  float64        `json:"max_cell_area"`
	MinEdge      float64        `json:"min_edge_length"`
	MaxEdge      float64        `json:"max_edge_length"`
	Fingerprint  string         `json:"fingerprint"`
	ParallelEdge int            `json:"parallel_edges,omitempty"`
}

func summarise(path string, m *grids.Mesh) meshSummary {
	s := meshSummary{
		File: filepath.Base(path), Name: m.Name, Surface: m.Surface.String(),
		Cells: m.NumCells(), Edges: m.NumEdges(), Vertices: m.NumVerts(),
		Area: m.TotalArea(), Euler: m.NumVerts() - m.NumEdges() + m.NumCells(),
		CellDegrees: map[string]int{}, Fingerprint: m.Fingerprint(),
		MinCellArea: math.Inf(1), MinEdge: math.Inf(1),
	}
	if m.Surface == grids.Sphere {
		s.Radius = m.Radius
		exact := 4 * math.Pi * m.Radius * m.Radius
		s.AreaDefect = (s.Area - exact) / exact
	} else {
		s.Lx, s.Ly, s.PeriodicX, s.PeriodicY = m.Lx, m.Ly, m.PeriodicX, m.PeriodicY
		if m.Lx > 0 && m.Ly > 0 {
			s.AreaDefect = (s.Area - m.Lx*m.Ly) / (m.Lx * m.Ly)
		}
	}
	for c := 0; c < m.NumCells(); c++ {
		s.CellDegrees[fmt.Sprint(len(m.CellVertices(c)))]++
		s.MinCellArea = math.Min(s.MinCellArea, m.CellArea[c])
		s.MaxCellArea = math.Max(s.MaxCellArea, m.CellArea[c])
	}
	for e := 0; e < m.NumEdges(); e++ {
		s.MinEdge = math.Min(s.MinEdge, m.EdgeLength[e])
		s.MaxEdge = math.Max(s.MaxEdge, m.EdgeLength[e])
		if m.Kind(e) == grids.Parallel {
			s.ParallelEdge++
		}
	}
	return s
}

func runMeshInfo(args []string, e *env) error {
	fs := newFlags("mesh info", "mesh info FILE [--json]",
		"colbridge mesh info c24.nc",
		"colbridge mesh info c24.nc --json | jq .cells")
	asJSON := fs.Bool("json", false, "print one JSON object on stdout")
	if err := parse(fs, args, e); err != nil {
		return err
	}
	if fs.NArg() != 1 {
		return usagef("mesh info: give exactly one mesh file")
	}
	path := fs.Arg(0)
	m, err := grids.ReadMesh(path)
	if err != nil {
		return err
	}
	s := summarise(path, m)
	if *asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(s)
	}
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
	unit, lunit := "m²", "m"
	fmt.Fprintf(tw, "mesh\t%s\t(%s)\n", s.Name, s.File)
	if m.Surface == grids.Sphere {
		fmt.Fprintf(tw, "surface\tsphere, radius %.6g m\n", m.Radius)
	} else {
		fmt.Fprintf(tw, "surface\tplane %g × %g, periodic x %v, y %v\n", m.Lx, m.Ly, m.PeriodicX, m.PeriodicY)
	}
	fmt.Fprintf(tw, "cells\t%d\t%s\n", s.Cells, degreeList(s.CellDegrees))
	fmt.Fprintf(tw, "edges\t%d\t%s\n", s.Edges, parallelNote(s.ParallelEdge))
	fmt.Fprintf(tw, "vertices\t%d\tV − E + F = %d\n", s.Vertices, s.Euler)
	fmt.Fprintf(tw, "area\t%.10g %s\trelative to the exact surface %+.2e\n", s.Area, unit, s.AreaDefect)
	fmt.Fprintf(tw, "cell area\t%.4g … %.4g %s\tratio %.3f\n", s.MinCellArea, s.MaxCellArea, unit, s.MinCellArea/s.MaxCellArea)
	fmt.Fprintf(tw, "edge length\t%.4g … %.4g %s\n", s.MinEdge, s.MaxEdge, lunit)
	fmt.Fprintf(tw, "fingerprint\t%s\n", s.Fingerprint)
	return tw.Flush()
}

func degreeList(d map[string]int) string {
	var parts []string
	for k := 3; k <= 64; k++ {
		if n := d[fmt.Sprint(k)]; n > 0 {
			parts = append(parts, fmt.Sprintf("%d with %d sides", n, k))
		}
	}
	return strings.Join(parts, ", ")
}

func parallelNote(n int) string {
	if n == 0 {
		return ""
	}
	return fmt.Sprintf("%d along parallels", n)
}
