package remap

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// BundleOptions tunes BuildBundle.
type BundleOptions struct {
	// Workers for the horizontal maps (≤ 0: all cores).
	Workers int
	// Provenance stored in every map.
	Provenance weights.Provenance
	// Log, if not nil, receives one line per map built.
	Log func(format string, args ...any)
}

// BundleResult says what BuildBundle did.
type BundleResult struct {
	Manifest *weights.Manifest
	// UpToDate is true when the bundle already matched the plan and meshes and nothing was
	// written.
	UpToDate bool
	// Written lists the files written (relative to the bundle directory).
	Written []string
	// Warnings are about choices the plan made that the audit will show as defects (for
	// example the adjoint wind prolongation on a mesh whose edges are skewed).
	Warnings []string
}

// ErrNotBundle is returned when the output directory holds files but no manifest: it is
// not a bundle, and BuildBundle will not write into it.
var ErrNotBundle = errors.New("directory is not empty and holds no bundle manifest")

// skewWarning is the edge skew (radians) above which the adjoint wind prolongation loses
// consistency visibly: 5°. On the icosahedral dual (2°) its worst TC2 error is 3 % of the
// wind; on the cubed sphere (23–28°) 40 % (measured; see ColumnWinds).
const skewWarning = 5 * 3.141592653589793 / 180

// BuildBundle builds every map of the plan into dir: for each variable its restriction to
// the columns (horizontal factor, and vertical factor for 3-D fields, stored factored) and
// the prolongation of increments back, plus dir/manifest.json listing them, and nothing
// else. Maps shared by several variables (the same locations and method) are built and
// stored once. Re-running with the same plan, meshes and colbridge version does nothing
// (UpToDate); with a changed plan it rewrites the bundle and removes the map files the new
// manifest no longer lists. Files appear under their names only when complete, and the
// manifest is written last.
func BuildBundle(p *Plan, dir string, opt BundleOptions) (*BundleResult, error) {
	logf := opt.Log
	if logf == nil {
		logf = func(string, ...any) {}
	}
	dyn, err := grids.ReadMesh(p.MeshPath(p.Dynamics))
	if err != nil {
		return nil, err
	}
	cols, err := grids.ReadMesh(p.MeshPath(p.Columns))
	if err != nil {
		return nil, err
	}
	var dynLev, colLev *grids.Levels
	if p.Dynamics.Levels != nil {
		if dynLev, err = p.Dynamics.Levels.Build(); err != nil {
			return nil, p.errf("dynamics.levels", "%v", err)
		}
		colLev = dynLev
		if p.Columns.Levels != nil {
			if colLev, err = p.Columns.Levels.Build(); err != nil {
				return nil, p.errf("columns.levels", "%v", err)
			}
		}
	}
	// Mesh files are recorded relative to the bundle directory, so the bundle can be
	// audited and applied from anywhere (and moved together with its meshes).
	relToBundle := func(path string) string {
		abs, err1 := filepath.Abs(path)
		absDir, err2 := filepath.Abs(dir)
		if err1 != nil || err2 != nil {
			return path
		}
		if r, err := filepath.Rel(absDir, abs); err == nil {
			return r
		}
		return abs
	}
	man := &weights.Manifest{
		Format: weights.ManifestFormat, Version: weights.Version,
		Plan: filepath.Base(p.Path), PlanHash: p.Hash,
		Dynamics: weights.MeshRef{File: relToBundle(p.MeshPath(p.Dynamics)), Name: dyn.Name, Fingerprint: dyn.Fingerprint()},
		Columns:  weights.MeshRef{File: relToBundle(p.MeshPath(p.Columns)), Name: cols.Name, Fingerprint: cols.Fingerprint()},
	}
	if dynLev != nil {
		man.DynLev = levelsRef(dynLev)
		man.ColLev = levelsRef(colLev)
	}
	res := &BundleResult{Manifest: man}

	// An existing bundle: up to date, or to be replaced. Anything else: refuse.
	old, err := weights.ReadManifest(dir)
	switch {
	case err == nil:
		if old.PlanHash == man.PlanHash && old.Version == man.Version &&
			old.Dynamics.Fingerprint == man.Dynamics.Fingerprint && old.Columns.Fingerprint == man.Columns.Fingerprint &&
			allPresent(dir, old) {
			res.Manifest, res.UpToDate = old, true
			return res, nil
		}
	case errors.Is(err, os.ErrNotExist):
		old = nil
		if entries, derr := os.ReadDir(dir); derr == nil && len(entries) > 0 {
			return nil, fmt.Errorf("%s: %w", dir, ErrNotBundle)
		}
	default:
		return nil, err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}

	b := &bundler{p: p, dir: dir, dyn: dyn, cols: cols, dynLev: dynLev, colLev: colLev,
		opt: opt, logf: logf, built: map[string]bool{}, res: res}
	for _, v := range p.Variables {
		if err := b.variable(v); err != nil {
			return nil, err
		}
	}
	if err := weights.WriteManifest(dir, man); err != nil {
		return nil, err
	}
	// Remove map files of the previous bundle that the new one does not use.
	if old != nil {
		keep := map[string]bool{}
		for _, e := range man.Maps {
			keep[e.File] = true
			if e.Vertical != "" {
				keep[e.Vertical] = true
			}
		}
		for _, e := range old.Maps {
			for _, f := range []string{e.File, e.Vertical} {
				if f != "" && !keep[f] {
					os.Remove(filepath.Join(dir, f))
				}
			}
		}
	}
	return res, nil
}

func allPresent(dir string, m *weights.Manifest) bool {
	for _, e := range m.Maps {
		for _, f := range []string{e.File, e.Vertical} {
			if f == "" {
				continue
			}
			if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
				return false
			}
		}
	}
	return true
}

func levelsRef(l *grids.Levels) *weights.LevelsRef {
	return &weights.LevelsRef{Coord: l.Coord.String(), Interfaces: l.Interfaces}
}

type bundler struct {
	p              *Plan
	dir            string
	dyn, cols      *grids.Mesh
	dynLev, colLev *grids.Levels
	opt            BundleOptions
	logf           func(string, ...any)
	built          map[string]bool
	res            *BundleResult
}

// write stores a map under name unless a map of that name was already written by this
// run (shared factors).
func (b *bundler) write(name string, m *weights.Map) error {
	if b.built[name] {
		return nil
	}
	m.Provenance = b.opt.Provenance
	if err := weights.WriteMap(filepath.Join(b.dir, name), m); err != nil {
		return err
	}
	b.built[name] = true
	b.res.Written = append(b.res.Written, name)
	b.logf("wrote %s: %s, %d × %d, %d weights", name, m.Method, m.W.Rows, m.W.Cols, m.W.NNZ())
	return nil
}

func (b *bundler) variable(v PlanVariable) error {
	entry := fmt.Sprintf("variable %q", v.Name)
	src, _ := grids.ParseLocation(v.Source)
	tgt, _ := grids.ParseLocation(v.Target)
	hopt := Options{Method: v.Method, Order: v.Order, Workers: b.opt.Workers}
	hkey := fmt.Sprintf("%s.%s%d", src.H, v.Method, v.Order)
	vector := src.H == grids.EdgeNormal || src.H == grids.EdgeTangential

	// Vertical factors.
	var vRestrict, vProlong string
	if src.V != grids.NoLevels {
		vm, err := ParseVerticalMethod(v.Vertical)
		if err != nil {
			return b.p.errf(entry, "vertical: %v", err)
		}
		r, err := NewVerticalMap(b.dynLev, src.V, b.colLev, tgt.V, vm, nil)
		if err != nil {
			return b.p.errf(entry, "vertical map: %v", err)
		}
		vRestrict = fmt.Sprintf("vertical.%s-%s.%s.restrict.nc", src.V, tgt.V, vm)
		if err := b.write(vRestrict, verticalMapOf(r, b.dynLev, src.V, b.colLev, tgt.V)); err != nil {
			return err
		}
		if v.Prolongation != ProlongNone {
			var back *VerticalMap
			if v.Prolongation == ProlongAdjoint {
				back, err = r.Adjoint()
				vProlong = fmt.Sprintf("vertical.%s-%s.%s.adjoint.nc", src.V, tgt.V, vm)
			} else {
				bm := VerticalLinear
				if src.V == grids.Layer && tgt.V == grids.Layer {
					bm = VerticalConservative
				}
				back, err = NewVerticalMap(b.colLev, tgt.V, b.dynLev, src.V, bm, nil)
				vProlong = fmt.Sprintf("vertical.%s-%s.%s.prolong.nc", tgt.V, src.V, bm)
			}
			if err != nil {
				return b.p.errf(entry, "vertical prolongation: %v", err)
			}
			if err := b.write(vProlong, verticalMapOf(back, b.colLev, tgt.V, b.dynLev, src.V)); err != nil {
				return err
			}
		}
	}
	add := func(e weights.ManifestEntry, m *weights.Map) {
		e.Variable = v.Name
		e.Method = m.Method
		e.Order = m.Order
		e.Entries = m.W.NNZ()
		e.MeasureVariable = v.Measure
		b.res.Manifest.Maps = append(b.res.Manifest.Maps, e)
	}

	if !vector {
		name := "h." + hkey + ".restrict.nc"
		r, err := ScalarToColumns(b.dyn, b.cols, src.H, hopt)
		if err != nil {
			return b.p.errf(entry, "restriction: %v", err)
		}
		if err := b.write(name, r); err != nil {
			return err
		}
		restrictName, prolongName := v.Name+".restrict", v.Name+".prolong"
		re := weights.ManifestEntry{Name: restrictName, File: name, Direction: "restriction",
			SourceLocation: v.Source, TargetLocation: v.Target, Vertical: vRestrict, Components: []string{v.Name}}
		if v.Prolongation != ProlongNone {
			re.Partner = prolongName
		}
		add(re, r)
		if v.Prolongation == ProlongNone {
			return nil
		}
		var pm *weights.Map
		pname := "h." + hkey + "." + v.Prolongation + ".prolong.nc"
		if v.Prolongation == ProlongAdjoint {
			pm, err = Adjoint(r)
		} else {
			pm, err = Build(b.cols, b.dyn, Options{Method: Conservative, Order: 1, Workers: b.opt.Workers})
		}
		if err != nil {
			return b.p.errf(entry, "prolongation: %v", err)
		}
		if err := b.write(pname, pm); err != nil {
			return err
		}
		add(weights.ManifestEntry{Name: prolongName, File: pname, Direction: "prolongation",
			SourceLocation: v.Target, TargetLocation: v.Source, Vertical: vProlong, Partner: restrictName,
			Components: []string{v.Name}}, pm)
		return nil
	}

	east, north, err := ColumnWinds(b.dyn, b.cols, src.H, hopt)
	if err != nil {
		return b.p.errf(entry, "wind restriction: %v", err)
	}
	comps := [2]string{"east", "north"}
	maps := [2]*weights.Map{east, north}
	var back [2]*weights.Map
	switch v.Prolongation {
	case ProlongAdjoint:
		for k := range maps {
			if back[k], err = Adjoint(maps[k]); err != nil {
				return b.p.errf(entry, "wind prolongation: %v", err)
			}
		}
		if src.H == grids.EdgeNormal {
			worst := slices.Max(EdgeSkew(b.dyn))
			if worst > skewWarning {
				b.res.Warnings = append(b.res.Warnings, fmt.Sprintf(
					"%s: the adjoint wind prolongation is consistent only on orthogonal meshes; %s has edges skewed by up to %.0f°, so a uniform wind increment comes back distorted (prolongation = \"average\" is consistent but not energy-neutral)",
					entry, b.dyn.Name, worst*180/3.141592653589793))
			}
		}
	case ProlongAverage:
		if src.H != grids.EdgeNormal {
			return b.p.errf(entry, "prolongation %q is defined for edge-normal sources", v.Prolongation)
		}
		if back[0], back[1], err = AveragedEdgeNormal(b.dyn, b.cols, Options{Method: Conservative, Order: 1, Workers: b.opt.Workers}); err != nil {
			return b.p.errf(entry, "wind prolongation: %v", err)
		}
	}
	for k := range maps {
		name := fmt.Sprintf("h.%s.%s.restrict.nc", hkey, comps[k])
		if err := b.write(name, maps[k]); err != nil {
			return err
		}
		rname := fmt.Sprintf("%s.%s.restrict", v.Name, comps[k])
		pname := fmt.Sprintf("%s.%s.prolong", v.Name, comps[k])
		re := weights.ManifestEntry{Name: rname, File: name, Direction: "restriction",
			SourceLocation: v.Source, TargetLocation: v.Target, Vertical: vRestrict, Components: []string{v.Components[k]}}
		if back[k] != nil {
			re.Partner = pname
		}
		add(re, maps[k])
		if back[k] == nil {
			continue
		}
		file := fmt.Sprintf("h.%s.%s.%s.prolong.nc", hkey, comps[k], v.Prolongation)
		if err := b.write(file, back[k]); err != nil {
			return err
		}
		add(weights.ManifestEntry{Name: pname, File: file, Direction: "prolongation",
			SourceLocation: v.Target, TargetLocation: v.Source, Vertical: vProlong, Partner: rname,
			Components: []string{v.Components[k]}}, back[k])
	}
	return nil
}

// verticalMapOf wraps a vertical map's matrix (one column) as a weights.Map whose sides
// carry the coordinate thickness of each volume as measure. Apply steps rebuild the
// vertical map from the manifest's levels (mass weighting needs the VerticalMap itself)
// and check it against this stored matrix.
func verticalMapOf(vm *VerticalMap, sl *grids.Levels, sv grids.VLocation, tl *grids.Levels, tv grids.VLocation) *weights.Map {
	side := func(l *grids.Levels, v grids.VLocation) weights.Side {
		return weights.Side{
			MeshName:        levelsName(l),
			MeshFingerprint: l.Fingerprint(),
			Location:        grids.Location{V: v},
			Size:            l.Size(v),
			Measure:         VolumeMeasures(l, v),
		}
	}
	w := vm.W
	if w == nil {
		panic("remap: verticalMapOf: nonlinear vertical map has no matrix")
	}
	return &weights.Map{W: w, Source: side(sl, sv), Target: side(tl, tv),
		Method: "vertical-" + vm.Method.String(),
		Attrs:  map[string]string{"factor": "vertical", "coordinate": sl.Coord.String()}}
}

func levelsName(l *grids.Levels) string {
	return fmt.Sprintf("%d levels, %s %g to %g", l.NLev(), l.Coord, l.Interfaces[0], l.Interfaces[l.NLev()])
}

var _ = strings.TrimSpace
