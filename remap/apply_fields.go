package remap

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

// inputFile is what ApplyFile learns from an input file's metadata.
type inputFile struct {
	f        *ncio.File
	path     string
	topo     string // UGRID topology variable, "" if none
	meshFP   string // its colbridge_fingerprint, "" if none
	meshName string
	meshVars map[string]bool // the topology and the variables it names (with their bounds)
	meshDims map[string]bool // the dimensions of those variables
	vars     map[string]ncio.Var
	aux      map[string]bool // variables named by coordinates, bounds or cell_measures
}

// openInput opens an input file and reads what apply needs from its metadata.
func openInput(path string) (*inputFile, error) {
	f, err := ncio.Open(path)
	if err != nil {
		return nil, err
	}
	in := &inputFile{f: f, path: path, meshVars: map[string]bool{}, meshDims: map[string]bool{},
		vars: map[string]ncio.Var{}, aux: map[string]bool{}}
	for _, v := range f.Vars() {
		in.vars[v.Name] = v
	}
	in.topo = topologyVar(f)
	if in.topo != "" {
		in.meshFP, _ = f.AttrText(in.topo, "colbridge_fingerprint")
		in.meshName, _ = f.AttrText(in.topo, "colbridge_name")
		in.meshVars = topologyVars(f, in.topo)
		for name := range in.meshVars {
			for _, d := range in.vars[name].Dims {
				in.meshDims[d] = true
			}
		}
		for _, a := range []string{"face_dimension", "edge_dimension", "node_dimension"} {
			if d, err := f.AttrText(in.topo, a); err == nil {
				in.meshDims[strings.TrimSpace(d)] = true
			}
		}
	}
	for name := range in.vars {
		for _, a := range []string{"coordinates", "bounds", "cell_measures"} {
			s, err := f.AttrText(name, a)
			if err != nil {
				continue
			}
			for _, w := range strings.Fields(s) {
				in.aux[strings.TrimSuffix(w, ":")] = true
			}
		}
	}
	return in, nil
}

// topologyVars returns the topology variable and every variable its attributes name,
// with their bounds, and the cell-area variables that refer to it.
func topologyVars(f *ncio.File, topo string) map[string]bool {
	out := map[string]bool{topo: true}
	attrs, _ := f.Attrs(topo)
	for _, a := range attrs {
		if a.Type != ncio.Char && a.Type != ncio.String {
			continue
		}
		s, err := f.AttrText(topo, a.Name)
		if err != nil {
			continue
		}
		for _, w := range strings.Fields(s) {
			if _, err := f.Var(w); err == nil {
				out[w] = true
			}
		}
	}
	for name := range out {
		if b, err := f.AttrText(name, "bounds"); err == nil {
			if _, err := f.Var(b); err == nil {
				out[b] = true
			}
		}
	}
	for _, v := range f.Vars() {
		mesh, _ := f.AttrText(v.Name, "mesh")
		sn, _ := f.AttrText(v.Name, "standard_name")
		if mesh == topo && sn == "cell_area" {
			out[v.Name] = true
		}
	}
	return out
}

// ugridLocation is the UGRID location attribute value of a horizontal location.
func ugridLocation(h grids.HLocation) string {
	switch h {
	case grids.Cell:
		return "face"
	case grids.EdgeNormal, grids.EdgeTangential:
		return "edge"
	case grids.Vertex:
		return "node"
	}
	return ""
}

// fieldLayout is how one input variable is stored:
//
//	(lead..., [level,] horizontal)
//
// the horizontal dimension last, the level dimension (3-D fields) just before it, and any
// number of leading dimensions (time, ensemble member, ...) before that, each slice of
// which is mapped on its own.
type fieldLayout struct {
	name     string
	v        ncio.Var
	lead     []int    // lengths of the leading dimensions
	leadDims []string // their names
	levDim   string   // "" for 2-D fields
	ls       int      // levels (1 for 2-D fields)
	hDim     string
	ns       int
	fill     float64 // _FillValue (stored units), or the type's default
	hasFill  bool
	missing  []float64 // missing_value (stored units)
	scale    float64   // scale_factor (1 if none)
	offset   float64   // add_offset (0 if none)
	packed   bool
}

// records returns the number of (level, horizontal) slabs: the product of the leading
// dimensions.
func (l *fieldLayout) records() int {
	n := 1
	for _, d := range l.lead {
		n *= d
	}
	return n
}

// layout checks that variable name can be read as a field at location loc with ns
// horizontal and ls vertical degrees of freedom (ls = 0: a 2-D field whose leading
// dimensions may include levels) and returns its layout. Errors name the file and the
// variable and say which dimension is wrong.
func (in *inputFile) layout(name string, loc grids.Location, ns, ls int) (*fieldLayout, error) {
	bad := func(format string, args ...any) error {
		return fmt.Errorf("%s: variable %q: %s", in.path, name, fmt.Sprintf(format, args...))
	}
	v, ok := in.vars[name]
	if !ok {
		return nil, bad("not in the file")
	}
	if !v.Type.IsNumeric() {
		return nil, bad("holds %s values, not numbers", v.Type)
	}
	rank := len(v.Dims)
	want := 1
	if ls > 0 {
		want = 2
	}
	shape := shapeString(v)
	if rank < want {
		if ls > 0 {
			return nil, bad("has dimensions %s; a %v field needs (..., level, %s) with %d levels and %d %ss", shape, loc, hName(loc.H), ls, ns, hName(loc.H))
		}
		return nil, bad("is a scalar; a %v field needs a last dimension of %d %ss", loc, ns, hName(loc.H))
	}
	if got := v.Shape[rank-1]; got != ns {
		return nil, bad("has dimensions %s; its last dimension %q has length %d, but the map's source has %d %ss (the horizontal dimension must be last: (..., %s) or (..., level, %s))",
			shape, v.Dims[rank-1], got, ns, hName(loc.H), hName(loc.H), hName(loc.H))
	}
	if l, err := in.f.AttrText(name, "location"); err == nil && ugridLocation(loc.H) != "" && l != ugridLocation(loc.H) {
		return nil, bad("has location = %q, but the map's source is on the %ss (%q)", l, hName(loc.H), ugridLocation(loc.H))
	}
	fl := &fieldLayout{name: name, v: v, hDim: v.Dims[rank-1], ns: ns, ls: 1, scale: 1}
	nlead := rank - 1
	if ls > 0 {
		if got := v.Shape[rank-2]; got != ls {
			return nil, bad("has dimensions %s; the level dimension %q (just before the horizontal one) has length %d, but the map's source has %d %s values per column",
				shape, v.Dims[rank-2], got, ls, loc.V)
		}
		fl.levDim, fl.ls = v.Dims[rank-2], ls
		nlead = rank - 2
	}
	fl.lead = slices.Clone(v.Shape[:nlead])
	fl.leadDims = slices.Clone(v.Dims[:nlead])
	var err error
	if fl.fill, fl.hasFill, err = in.f.FillValue(name); err != nil {
		return nil, bad("_FillValue: %v", err)
	}
	if fl.missing, err = in.f.MissingValues(name); err != nil {
		return nil, bad("missing_value: %v", err)
	}
	for _, p := range []struct {
		attr string
		dst  *float64
	}{{"scale_factor", &fl.scale}, {"add_offset", &fl.offset}} {
		x, err := in.f.AttrFloat64s(name, p.attr)
		if err != nil {
			continue
		}
		if len(x) != 1 || math.IsNaN(x[0]) || math.IsInf(x[0], 0) {
			return nil, bad("%s must be one finite number, have %v", p.attr, x)
		}
		*p.dst, fl.packed = x[0], true
	}
	return fl, nil
}

// isMissing reports whether a stored value is missing: NaN, the _FillValue (without the
// attribute, the type's default fill, which unwritten elements hold and which the NetCDF
// Users Guide says generic applications treat as missing), or one of the missing_value
// values (CF §2.5.1).
func (l *fieldLayout) isMissing(x float64) bool {
	if x != x || x == l.fill {
		return true
	}
	for _, m := range l.missing {
		if x == m {
			return true
		}
	}
	return false
}

func shapeString(v ncio.Var) string {
	parts := make([]string, len(v.Dims))
	for i, d := range v.Dims {
		parts[i] = fmt.Sprintf("%s=%d", d, v.Shape[i])
	}
	return "(" + strings.Join(parts, ", ") + ")"
}

func hName(h grids.HLocation) string {
	switch h {
	case grids.Cell:
		return "cell"
	case grids.EdgeNormal, grids.EdgeTangential:
		return "edge"
	case grids.Vertex:
		return "vertex"
	}
	return h.String()
}

// candidates returns, for a map file, the variables of the input that look like fields at
// the map's source: numeric, not part of the mesh topology, not named as coordinates,
// bounds or cell measures, with last dimension of length ns, and with a UGRID location
// attribute (if any) matching the source location. Sorted by name.
func (in *inputFile) candidates(loc grids.Location, ns int) []string {
	var out []string
	for name, v := range in.vars {
		if in.meshVars[name] || in.aux[name] || !v.Type.IsNumeric() || len(v.Dims) == 0 || v.Shape[len(v.Shape)-1] != ns {
			continue
		}
		if r, err := in.f.AttrText(name, "cf_role"); err == nil && r != "" {
			continue
		}
		if sn, _ := in.f.AttrText(name, "standard_name"); sn == "cell_area" || sn == "longitude" || sn == "latitude" {
			continue
		}
		if l, err := in.f.AttrText(name, "location"); err == nil && l != ugridLocation(loc.H) {
			continue
		}
		if m, err := in.f.AttrText(name, "mesh"); err == nil && in.topo != "" && m != in.topo {
			continue
		}
		out = append(out, name)
	}
	slices.Sort(out)
	return out
}
