// Package scenario is colbridge's built-in demo: a coupling of our own invention, small
// enough to run in seconds and complete enough to show the whole job.
//
// The scenario: a cubed-sphere dynamical core with N = 48 (13,824 cells, about 200 km)
// and 30 levels up to 30 km, temperature on the interfaces (Charney–Phillips), coupled to
// column physics on the hexagonal–pentagonal grid of icosahedral level 4 (2,562 columns,
// about 480 km) with 30 layers (Lorenz). Nothing here is data from a real model.
package scenario

import (
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"text/tabwriter"

	"github.com/colbridge/colbridge/grids"
)

// Scenario describes the demo coupling.
type Scenario struct {
	DynamicsN     int     // cubed-sphere cells per panel edge
	ColumnsLevel  int     // icosahedral level of the physics grid (its dual)
	NLev          int     // layers on both sides
	Top           float64 // model top, m
	Stretch       float64 // level stretching (grids.NewStretchedLevels)
	DynamicsFile  string
	ColumnsFile   string
	DynamicsStagg grids.Staggering
	ColumnsStagg  grids.Staggering
}

// Default is the scenario `make demo` runs.
var Default = Scenario{
	DynamicsN: 48, ColumnsLevel: 4, NLev: 30, Top: 30e3, Stretch: 2,
	DynamicsFile: "dynamics_mesh.nc", ColumnsFile: "columns_mesh.nc",
	DynamicsStagg: grids.CharneyPhillips, ColumnsStagg: grids.Lorenz,
}

// Meshes builds the scenario's dynamics mesh, physics column footprints and levels.
func (s Scenario) Meshes() (dyn, col *grids.Mesh, lev *grids.Levels, err error) {
	if dyn, err = grids.NewCubedSphere(s.DynamicsN, 0); err != nil {
		return
	}
	if col, err = grids.NewIcosahedralDual(s.ColumnsLevel, 0); err != nil {
		return
	}
	lev, err = grids.NewStretchedLevels(grids.Height, s.NLev, 0, s.Top, s.Stretch)
	return
}

// Prepare writes the scenario's meshes, its coupling plan and a day of dynamics fields
// into dir and prints a summary of the meshes to w.
func (s Scenario) Prepare(dir string, w io.Writer) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	dyn, col, lev, err := s.Meshes()
	if err != nil {
		return fmt.Errorf("demo meshes: %w", err)
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  side\tmesh\tcells\tedges\tvertices\tmean cell size\tarea error\tfile")
	for _, r := range []struct {
		side string
		m    *grids.Mesh
		file string
	}{{"dynamics", dyn, s.DynamicsFile}, {"physics", col, s.ColumnsFile}} {
		path := filepath.Join(dir, r.file)
		if err := grids.WriteUGRID(path, r.m); err != nil {
			return err
		}
		total := r.m.TotalArea()
		exact := 4 * math.Pi * r.m.Radius * r.m.Radius
		size := math.Sqrt(total/float64(r.m.NumCells())) / 1e3
		fmt.Fprintf(tw, "  %s\t%s\t%d\t%d\t%d\t%.0f km\t%.1e\t%s\n", r.side, r.m.Name, r.m.NumCells(), r.m.NumEdges(), r.m.NumVerts(), size, (total-exact)/exact, r.file)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	dz := lev.Thicknesses()
	fmt.Fprintf(w, "  levels: %d layers from 0 to %.0f km, %.0f m thick at the ground, %.0f m at the top; temperature on %s (dynamics) and %s (physics) levels\n",
		lev.NLev(), s.Top/1e3, dz[0], dz[len(dz)-1], s.DynamicsStagg, s.ColumnsStagg)
	if err := os.WriteFile(filepath.Join(dir, PlanFile), s.plan(), 0o644); err != nil {
		return err
	}
	if _, err := s.WriteFields(dir, dyn, lev); err != nil {
		return err
	}
	fmt.Fprintf(w, "  wrote %s, %s and %s (a day: %v h)\n", s.DynamicsFile, s.ColumnsFile, FieldsFile, Hours)
	return nil
}
