package remap

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/weights"
)

// Directions of bundle entries (weights.ManifestEntry.Direction).
const (
	Restriction  = "restriction"
	Prolongation = "prolongation"
)

// Applier holds the maps of one map file or one bundle, loaded and checked once, ready to
// be applied to any number of field files (ApplyFile, ApplyFiles). It is safe for
// concurrent use.
type Applier struct {
	// Source is the map file or bundle directory the Applier was loaded from.
	Source string
	// Manifest is the bundle's manifest; nil for a map file.
	Manifest *weights.Manifest

	single  *weights.Map // the map of a map file
	ops     []*fieldOp   // bundle operators, both directions
	meshes  [2]meshRef   // dynamics, columns (bundles)
	levels  [2]*grids.Levels
	files   []string // every file the Applier read (outputs must not overwrite them)
	mapSize int64    // bytes held by matrices
}

// meshRef is a mesh a bundle or map refers to, and the file found for it ("" if none).
type meshRef struct {
	name, fingerprint, file string
}

// fieldOp is one output variable: the sum over its inputs of H_k ⊗ V applied to input
// variable k (one input, or two for a vector prolongation), optionally mass-weighted.
type fieldOp struct {
	entry     string // bundle entry names, or the map file's base name
	direction string // Restriction, Prolongation, or "" for a map file
	output    string // output variable name ("" for a map file: the input's name)
	inputs    []opInput
	measure   string // measure variable (mass weighting), "" for none
	src, tgt  grids.Location
	vert      *vertOp // nil for 2-D fields and map files
	isMeasure bool    // this op maps the measure variable itself
}

type opInput struct {
	name string // input variable ("" for a map file: any variable found)
	h    *weights.Map
	file string // map file, for the output's attributes
}

// vertOp is the vertical factor of a bundle entry.
type vertOp struct {
	vm       *VerticalMap
	w        *weights.CSR // the stored matrix (checked against vm.W)
	identity bool         // same levels and location on both sides: the factor is the identity
	massDep  bool         // the result depends on the layer measures
	file     string
	method   string
	// ownMass, if not nil, replaces this factor for mass-weighted fields whose measure
	// is given on the source's own layers rather than on MassLevels (see loadVertical).
	ownMass *vertOp
}

// NewMapApplier loads a map file (weights.WriteMap's layout) for ApplyFile. The map is
// applied to every horizontal slice of a field on its own; vertical factors of bundles
// (map files whose attr_factor is "vertical") are refused: apply them through their
// bundle (NewBundleApplier), which knows the levels.
func NewMapApplier(path string) (*Applier, error) {
	m, err := weights.ReadMap(path)
	if err != nil {
		return nil, err
	}
	if m.Attrs["factor"] == "vertical" || m.Source.Location.H == 0 || m.Target.Location.H == 0 {
		return nil, fmt.Errorf("%s: a vertical factor of a bundle; apply it with its bundle (--bundle), which knows the levels", path)
	}
	if m.Source.Location.V != grids.NoLevels || m.Target.Location.V != grids.NoLevels {
		return nil, fmt.Errorf("%s: map from %v to %v: a map file holds a horizontal map; 3-D maps come in bundles", path, m.Source.Location, m.Target.Location)
	}
	a := &Applier{Source: path, single: m, files: []string{path}, mapSize: csrBytes(m.W)}
	return a, nil
}

// NewBundleApplier loads every map of a bundle directory (weights.ReadManifest) for
// ApplyFile: horizontal factors from their files, vertical factors rebuilt from the
// manifest's levels (mass weighting needs the VerticalMap itself) and checked entry by
// entry against the stored matrices (to 1e-12 of the row's largest weight). Entries
// sharing a file share the loaded matrix.
func NewBundleApplier(dir string) (*Applier, error) {
	man, err := weights.ReadManifest(dir)
	if err != nil {
		return nil, err
	}
	a := &Applier{Source: dir, Manifest: man, files: []string{filepath.Join(dir, weights.ManifestName)}}
	a.meshes[0] = meshRef{name: man.Dynamics.Name, fingerprint: man.Dynamics.Fingerprint}
	a.meshes[1] = meshRef{name: man.Columns.Name, fingerprint: man.Columns.Fingerprint}
	for i, lr := range []*weights.LevelsRef{man.DynLev, man.ColLev} {
		if lr == nil {
			continue
		}
		c, err := grids.ParseVerticalCoord(lr.Coord)
		if err != nil {
			return nil, fmt.Errorf("%s: %s levels: %w", a.manifestPath(), [2]string{"dynamics", "columns"}[i], err)
		}
		if a.levels[i], err = grids.NewLevels(c, lr.Interfaces); err != nil {
			return nil, fmt.Errorf("%s: %s levels: %w", a.manifestPath(), [2]string{"dynamics", "columns"}[i], err)
		}
	}
	// Mesh files: the manifest names them relative to the plan, which usually sits in
	// the bundle's parent directory; they are used only if their fingerprint matches.
	for i, ref := range []weights.MeshRef{man.Dynamics, man.Columns} {
		for _, cand := range []string{filepath.Join(dir, ref.File), filepath.Join(dir, "..", ref.File)} {
			if ref.File != "" && meshFileFingerprint(cand) == ref.Fingerprint {
				a.meshes[i].file = cand
				break
			}
		}
	}
	maps := map[string]*weights.Map{}
	load := func(file string) (*weights.Map, error) {
		if m, ok := maps[file]; ok {
			return m, nil
		}
		path := filepath.Join(dir, file)
		m, err := weights.ReadMap(path)
		if err != nil {
			return nil, err
		}
		maps[file] = m
		a.files = append(a.files, path)
		a.mapSize += csrBytes(m.W)
		return m, nil
	}
	verts := map[string]*vertOp{}
	byName := map[string]*fieldOp{}
	for i := range man.Maps {
		e := &man.Maps[i]
		bad := func(format string, args ...any) error {
			return fmt.Errorf("%s: map %q: %s", a.manifestPath(), e.Name, fmt.Sprintf(format, args...))
		}
		if e.Direction != Restriction && e.Direction != Prolongation {
			return nil, bad("direction %q (want %s or %s)", e.Direction, Restriction, Prolongation)
		}
		src, err := grids.ParseLocation(e.SourceLocation)
		if err != nil {
			return nil, bad("source location: %v", err)
		}
		tgt, err := grids.ParseLocation(e.TargetLocation)
		if err != nil {
			return nil, bad("target location: %v", err)
		}
		h, err := load(e.File)
		if err != nil {
			return nil, err
		}
		if h.Source.Location.H != src.H || h.Target.Location.H != tgt.H {
			return nil, bad("%s maps %v to %v, but the entry says %v to %v", e.File, h.Source.Location, h.Target.Location, src, tgt)
		}
		side := 0
		if e.Direction == Prolongation {
			side = 1
		}
		if fp := a.meshes[side].fingerprint; fp != "" && h.Source.MeshFingerprint != "" && h.Source.MeshFingerprint != fp {
			return nil, bad("%s was built for source mesh %s, the manifest's %s mesh is %s", e.File, h.Source.MeshFingerprint, [2]string{"dynamics", "columns"}[side], fp)
		}
		var vo *vertOp
		if (src.V == grids.NoLevels) != (tgt.V == grids.NoLevels) {
			return nil, bad("maps %v to %v: both sides or neither need levels", src, tgt)
		}
		if src.V != grids.NoLevels {
			if e.Vertical == "" {
				return nil, bad("maps %v to %v but names no vertical factor", src, tgt)
			}
			key := e.Vertical
			if pe, ok := man.Find(e.Partner); ok {
				key += "\x00" + pe.Vertical // an adjoint depends on its restriction
			}
			if vo = verts[key]; vo == nil {
				if vo, err = a.loadVertical(dir, e, load); err != nil {
					return nil, err
				}
				verts[key] = vo
			}
			if vo.vm.SourceLoc != src.V || vo.vm.TargetLoc != tgt.V {
				return nil, bad("vertical factor %s maps %v to %v, the entry %v to %v", e.Vertical, vo.vm.SourceLoc, vo.vm.TargetLoc, src.V, tgt.V)
			}
		}
		comp := e.Variable
		if len(e.Components) > 0 {
			comp = e.Components[0]
		}
		if e.Variable == "" || comp == "" {
			return nil, bad("names no variable")
		}
		in := opInput{name: e.Variable, h: h, file: e.File}
		out := comp
		if e.Direction == Prolongation {
			in.name, out = comp, e.Variable
		}
		key := e.Direction + "\x00" + out
		op := byName[key]
		if op == nil {
			op = &fieldOp{entry: e.Name, direction: e.Direction, output: out, measure: e.MeasureVariable, src: src, tgt: tgt, vert: vo}
			byName[key] = op
			a.ops = append(a.ops, op)
		} else {
			// A second component of a vector prolongation: summed into the same output.
			if op.src != src || op.tgt != tgt || op.vert != vo || op.measure != e.MeasureVariable {
				return nil, bad("adds to %s %q, but its locations, vertical factor or measure differ from entry %q", e.Direction, out, op.entry)
			}
			if e.Direction == Restriction {
				return nil, bad("restriction output %q is produced twice (also by %q)", out, op.entry)
			}
			op.entry += "+" + e.Name
		}
		op.inputs = append(op.inputs, in)
	}
	return a, nil
}

func (a *Applier) manifestPath() string { return filepath.Join(a.Source, weights.ManifestName) }

// loadVertical rebuilds the vertical factor of entry e from the manifest's levels and
// checks it against the stored matrix.
func (a *Applier) loadVertical(dir string, e *weights.ManifestEntry, load func(string) (*weights.Map, error)) (*vertOp, error) {
	vf, err := load(e.Vertical)
	if err != nil {
		return nil, err
	}
	path := filepath.Join(dir, e.Vertical)
	bad := func(format string, args ...any) error {
		return fmt.Errorf("%s: vertical factor of map %q: %s", path, e.Name, fmt.Sprintf(format, args...))
	}
	levelsOf := func(fp string) (*grids.Levels, error) {
		for _, l := range a.levels {
			if l != nil && l.Fingerprint() == fp {
				return l, nil
			}
		}
		return nil, bad("its levels (fingerprint %s) are not the manifest's dynamics or columns levels", fp)
	}
	sl, err := levelsOf(vf.Source.MeshFingerprint)
	if err != nil {
		return nil, err
	}
	tl, err := levelsOf(vf.Target.MeshFingerprint)
	if err != nil {
		return nil, err
	}
	name, ok := strings.CutPrefix(vf.Method, "vertical-")
	if !ok {
		return nil, bad("method %q is not a vertical method", vf.Method)
	}
	method, err := ParseVerticalMethod(name)
	if err != nil {
		return nil, bad("%v", err)
	}
	sv, tv := vf.Source.Location.V, vf.Target.Location.V
	var vm *VerticalMap
	if method == VerticalAdjoint {
		// The adjoint of the partner's restriction.
		pe, ok := a.Manifest.Find(e.Partner)
		if !ok || pe.Vertical == "" {
			return nil, bad("an adjoint needs its restriction: partner %q has no vertical factor", e.Partner)
		}
		pf, err := load(pe.Vertical)
		if err != nil {
			return nil, err
		}
		pname, _ := strings.CutPrefix(pf.Method, "vertical-")
		pm, err := ParseVerticalMethod(pname)
		if err != nil {
			return nil, bad("partner %q: %v", e.Partner, err)
		}
		r, err := NewVerticalMap(tl, tv, sl, sv, pm, nil)
		if err != nil {
			return nil, bad("rebuilding the restriction: %v", err)
		}
		if vm, err = r.Adjoint(); err != nil {
			return nil, bad("%v", err)
		}
	} else if vm, err = NewVerticalMap(sl, sv, tl, tv, method, nil); err != nil {
		return nil, bad("rebuilding it from the manifest's levels: %v", err)
	}
	if vm.W == nil {
		return nil, bad("method %v has no matrix", method)
	}
	if err := sameMatrix(vm.W, vf.W); err != nil {
		return nil, bad("does not match the map rebuilt from the manifest's levels: %v", err)
	}
	vo := &vertOp{vm: vm, w: vf.W, file: e.Vertical, method: vf.Method}
	vo.identity = sl.Fingerprint() == tl.Fingerprint() && sv == tv && isIdentity(vf.W)
	vo.massDep = method != VerticalLinear
	if method == VerticalAdjoint && vm.Restriction() == VerticalConservative && sv == grids.Layer &&
		vm.MassLevels().Fingerprint() != sl.Fingerprint() {
		// The adjoint weighs by the layer masses of its restriction's source (the other
		// side's levels). A file on this side holds its measure on its own layers; for it
		// the conservative overlap map from these layers, weighted by those masses, is
		// used: the same map for the coordinate measure (the adjoint of a conservative
		// map is the conservative map back), and it keeps Σ m q with the file's masses.
		alt, err := NewVerticalMap(sl, sv, tl, tv, VerticalConservative, nil)
		if err != nil {
			return nil, bad("%v", err)
		}
		if err := sameMatrix(alt.W, vf.W); err != nil {
			return nil, bad("the conservative map back differs from the stored adjoint: %v", err)
		}
		vo.ownMass = &vertOp{vm: alt, w: vf.W, file: e.Vertical, method: "vertical-conservative (the adjoint, weighted by this side's layer masses)", massDep: true}
	}
	return vo, nil
}

// sameMatrix reports whether two matrices agree entry by entry to 1e-12 of each row's
// largest weight (the stored file and the rebuilt map come from the same arithmetic; the
// margin allows a different compiler's rounding).
func sameMatrix(a, b *weights.CSR) error {
	if a.Rows != b.Rows || a.Cols != b.Cols {
		return fmt.Errorf("%d × %d, stored %d × %d", a.Rows, a.Cols, b.Rows, b.Cols)
	}
	row := make([]float64, a.Cols)
	for i := 0; i < a.Rows; i++ {
		clear(row)
		big := 0.0
		for k := a.RowStart[i]; k < a.RowStart[i+1]; k++ {
			row[a.ColIndex[k]] += a.Values[k]
			big = math.Max(big, math.Abs(a.Values[k]))
		}
		for k := b.RowStart[i]; k < b.RowStart[i+1]; k++ {
			row[b.ColIndex[k]] -= b.Values[k]
			big = math.Max(big, math.Abs(b.Values[k]))
		}
		for j, d := range row {
			if math.Abs(d) > 1e-12*big {
				return fmt.Errorf("entry (%d, %d) differs by %.3g", i, j, d)
			}
		}
	}
	return nil
}

func isIdentity(w *weights.CSR) bool {
	if w.Rows != w.Cols {
		return false
	}
	for i := 0; i < w.Rows; i++ {
		if w.RowStart[i+1]-w.RowStart[i] != 1 || w.ColIndex[w.RowStart[i]] != int32(i) || w.Values[w.RowStart[i]] != 1 {
			return false
		}
	}
	return true
}

func csrBytes(w *weights.CSR) int64 {
	return int64(len(w.RowStart))*8 + int64(len(w.ColIndex))*4 + int64(len(w.Values))*8
}

// meshFileFingerprint returns the colbridge_fingerprint attribute of the UGRID topology
// in a mesh file, "" when the file cannot be read or has none.
func meshFileFingerprint(path string) string {
	if _, err := os.Stat(path); err != nil {
		return ""
	}
	f, err := ncio.Open(path)
	if err != nil {
		return ""
	}
	defer f.Close()
	topo := topologyVar(f)
	if topo == "" {
		return ""
	}
	fp, _ := f.AttrText(topo, "colbridge_fingerprint")
	return fp
}

// topologyVar returns the first variable with cf_role = "mesh_topology" and
// topology_dimension 2 (or none given), "" if there is none.
func topologyVar(f *ncio.File) string {
	for _, v := range f.Vars() {
		if role, err := f.AttrText(v.Name, "cf_role"); err != nil || role != "mesh_topology" {
			continue
		}
		if d, err := f.AttrInt64s(v.Name, "topology_dimension"); err == nil && len(d) == 1 && d[0] != 2 {
			continue
		}
		return v.Name
	}
	return ""
}

// opsFor returns the bundle operators of one direction.
func (a *Applier) opsFor(direction string) []*fieldOp {
	var out []*fieldOp
	for _, op := range a.ops {
		if op.direction == direction {
			out = append(out, op)
		}
	}
	return out
}

// sideOf returns 0 (dynamics) or 1 (columns) for the source mesh of a direction.
func sideOf(direction string) int {
	if direction == Prolongation {
		return 1
	}
	return 0
}

// targetMeshFile returns the mesh file for the target of ops in a direction (bundles),
// or for the map's target, checked against the fingerprint; "" when none is known.
func (a *Applier) targetMeshFile(direction, given string) (string, error) {
	want := ""
	if a.single != nil {
		want = a.single.Target.MeshFingerprint
	} else {
		want = a.meshes[1-sideOf(direction)].fingerprint
	}
	if given != "" {
		fp := meshFileFingerprint(given)
		if fp == "" {
			m, err := grids.ReadMesh(given)
			if err != nil {
				return "", err
			}
			fp = m.Fingerprint()
		}
		if want != "" && fp != want {
			return "", fmt.Errorf("target mesh %s has fingerprint %s, but the maps write onto %s", given, fp, want)
		}
		return given, nil
	}
	if a.single != nil {
		return "", nil
	}
	return a.meshes[1-sideOf(direction)].file, nil
}

// errAmbiguous is returned when a bundle's direction cannot be told from a file.
var errAmbiguous = errors.New("cannot tell whether the file holds dynamics or columns fields; say --direction")

// Inputs returns the input variable names the Applier's operators read, sorted (for
// messages and help).
func (a *Applier) Inputs(direction string) []string {
	var names []string
	for _, op := range a.opsFor(direction) {
		for _, in := range op.inputs {
			names = append(names, in.name)
		}
	}
	slices.Sort(names)
	return slices.Compact(names)
}
