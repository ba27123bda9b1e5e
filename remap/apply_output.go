package remap

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/weights"
)

// output defines an output file: the target mesh's topology, the mapped variables with
// their attributes, the variables copied from the input, and the global attributes.
type output struct {
	w         *ncio.Writer
	in        *inputFile
	a         *Applier
	opt       ApplyOptions
	meshFile  string
	jobs      []*job
	direction string

	dims    map[string]dimDef
	order   []string
	copies  []copyVar
	coords  []levelCoord
	topo    string // topology variable in the output
	defined map[string]bool
	meshF   *ncio.File // the target mesh file, open while its topology is copied
}

// close closes the mesh file, if one was opened.
func (o *output) close() {
	if o.meshF != nil {
		o.meshF.Close()
		o.meshF = nil
	}
}

type dimDef struct {
	n         int
	unlimited bool
}

// copyVar is a variable copied whole after the header is written.
type copyVar struct {
	f        *ncio.File
	from, to string
	t        ncio.Type
	n        int
}

// levelCoord is a coordinate variable written for a new level dimension.
type levelCoord struct {
	name   string
	values []float64
}

// def defines a dimension, or reuses one of the same name and length; on a clash of
// lengths it tries name_2, name_3 ... and returns the name used.
func (o *output) def(name string, n int, unlimited bool) (string, error) {
	for k := 1; ; k++ {
		cand := name
		if k > 1 {
			cand = name + "_" + strconv.Itoa(k)
		}
		d, ok := o.dims[cand]
		if !ok {
			ln := n
			if unlimited {
				ln = 0
			}
			if err := o.w.DefDim(cand, ln); err != nil {
				return "", err
			}
			o.dims[cand] = dimDef{n: n, unlimited: unlimited}
			o.order = append(o.order, cand)
			return cand, nil
		}
		if d.n == n && d.unlimited == unlimited {
			return cand, nil
		}
	}
}

// define writes the whole header and ends define mode.
func (o *output) define() error {
	o.dims = map[string]dimDef{}
	o.defined = map[string]bool{}
	need := map[string]int{}
	for _, j := range o.jobs {
		loc := ugridLocation(j.op.tgt.H)
		if n, ok := need[loc]; ok && n != j.nt {
			return fmt.Errorf("%s: outputs on the target %ss have %d and %d values", o.in.path, loc, n, j.nt)
		}
		need[loc] = j.nt
	}
	hdims, err := o.defineTopology(need)
	if err != nil {
		return err
	}

	// Level dimensions: a target (levels, location) that some input uses keeps that
	// input's dimension name; others get "layer" or "interface".
	inLev := map[string]string{}
	for _, j := range o.jobs {
		if vo := j.op.vert; vo != nil && !j.op.isMeasure {
			inLev[levKey(vo.vm.Source, vo.vm.SourceLoc)] = j.inputs[0].levDim
		}
		if j.mass != nil && j.op.vert != nil {
			inLev[levKey(j.op.vert.vm.MassLevels(), grids.Layer)] = j.mass.levDim
		}
	}
	newLev := map[string]string{}
	for _, j := range o.jobs {
		var dims []string
		for i, d := range j.leadDim {
			dd, err := o.in.f.Dim(d)
			if err != nil {
				return err
			}
			name, err := o.def(d, j.lead[i], dd.Unlimited)
			if err != nil {
				return err
			}
			dims = append(dims, name)
		}
		if vo := j.op.vert; vo != nil {
			key := levKey(vo.vm.Target, vo.vm.TargetLoc)
			name, ok := inLev[key]
			if !ok {
				name, ok = newLev[key]
			}
			if !ok {
				base := "layer"
				if vo.vm.TargetLoc == grids.Interface {
					base = "interface"
				}
				if name, err = o.def(base, j.lt, false); err != nil {
					return err
				}
				newLev[key] = name
				o.coords = append(o.coords, levelCoord{name: name, values: levelPoints(vo.vm.Target, vo.vm.TargetLoc)})
			} else if name, err = o.def(name, j.lt, false); err != nil {
				return err
			}
			j.outLevDim = name
			dims = append(dims, name)
		}
		hd := hdims[ugridLocation(j.op.tgt.H)]
		j.outHDim = hd.name
		dims = append(dims, hd.name)
		if o.defined[j.out] {
			return fmt.Errorf("%s: variable %q would be written twice", o.in.path, j.out)
		}
		if err := o.w.DefVar(j.out, j.outType, dims); err != nil {
			return err
		}
		o.defined[j.out] = true
		if err := o.fieldAttrs(j, hd.coords); err != nil {
			return err
		}
		if err := o.storage(j, dims); err != nil {
			return err
		}
	}
	for _, c := range o.coords {
		if o.defined[c.name] {
			continue
		}
		if err := o.w.DefVar(c.name, ncio.Float64, []string{c.name}); err != nil {
			return err
		}
		o.defined[c.name] = true
		vo := o.levelsFor(c.name)
		units, sn := "m", "height"
		if vo != nil && vo.Coord == grids.Normalized {
			units, sn = "1", ""
		}
		attrs := [][2]string{{"long_name", "vertical coordinate of the " + c.name + " values"}, {"units", units}, {"positive", "up"}, {"axis", "Z"}}
		if sn != "" {
			attrs = append(attrs, [2]string{"standard_name", sn})
		}
		for _, at := range attrs {
			if err := o.w.PutAttrText(c.name, at[0], at[1]); err != nil {
				return err
			}
		}
	}
	if err := o.copyOthers(); err != nil {
		return err
	}
	if err := o.globals(); err != nil {
		return err
	}
	return o.w.EndDef()
}

func levKey(l *grids.Levels, v grids.VLocation) string { return l.Fingerprint() + "/" + v.String() }

// levelPoints returns the coordinate of each degree of freedom of location v: layer
// midpoints or interfaces.
func levelPoints(l *grids.Levels, v grids.VLocation) []float64 {
	if v == grids.Interface {
		return slices.Clone(l.Interfaces)
	}
	return l.Midpoints()
}

func (o *output) levelsFor(dim string) *grids.Levels {
	for _, j := range o.jobs {
		if j.outLevDim == dim && j.op.vert != nil {
			return j.op.vert.vm.Target
		}
	}
	return nil
}

// hdim is the output's horizontal dimension for one UGRID location.
type hdim struct {
	name, coords string
}

// defineTopology copies the target mesh's UGRID topology from the mesh file, or writes a
// topology variable that names the mesh by fingerprint when no mesh file is known. need
// maps the UGRID locations the outputs use ("face", "edge") to their sizes; it returns
// the horizontal dimension (and coordinates attribute) of each.
func (o *output) defineTopology(need map[string]int) (map[string]hdim, error) {
	out := map[string]hdim{}
	if o.meshFile != "" {
		mf, err := ncio.Open(o.meshFile)
		if err != nil {
			return nil, err
		}
		o.meshF = mf
		topo := topologyVar(mf)
		if topo == "" {
			return nil, fmt.Errorf("%s: no UGRID mesh topology to copy into the output", o.meshFile)
		}
		o.topo = topo
		vars := topologyVars(mf, topo)
		for _, v := range mf.Vars() {
			if !vars[v.Name] || !(v.Type.IsNumeric()) {
				continue
			}
			for i, d := range v.Dims {
				md, _ := mf.Dim(d)
				if _, err := o.def(d, v.Shape[i], md.Unlimited); err != nil {
					return nil, err
				}
			}
			if err := o.w.DefVar(v.Name, v.Type, v.Dims); err != nil {
				return nil, err
			}
			o.defined[v.Name] = true
			if err := copyAttrs(mf, v.Name, o.w, v.Name, nil); err != nil {
				return nil, err
			}
			o.copies = append(o.copies, copyVar{f: mf, from: v.Name, to: v.Name, t: v.Type, n: v.Len()})
		}
		for loc, n := range need {
			dimAttr, connAttr, coordAttr := loc+"_dimension", loc+"_node_connectivity", loc+"_coordinates"
			name, _ := mf.AttrText(topo, dimAttr)
			if name == "" {
				if conn, err := mf.AttrText(topo, connAttr); err == nil {
					if v, err := mf.Var(strings.TrimSpace(conn)); err == nil && len(v.Dims) > 0 {
						name = v.Dims[0]
					}
				}
			}
			if d, ok := o.dims[name]; name == "" || !ok || d.n != n {
				return nil, fmt.Errorf("%s: the mesh has no %s dimension of length %d for the outputs", o.meshFile, loc, n)
			}
			coords, _ := mf.AttrText(topo, coordAttr)
			out[loc] = hdim{name: name, coords: coords}
		}
		return out, nil
	}
	// No mesh file: a topology variable that identifies the mesh without its geometry.
	h0 := o.jobs[0].h[0]
	o.topo = "mesh"
	for o.in.vars[o.topo].Name != "" && !o.in.meshVars[o.topo] {
		o.topo += "_target" // an input variable of that name is copied
	}
	if err := o.w.DefVar(o.topo, ncio.Int32, nil); err != nil {
		return nil, err
	}
	o.defined[o.topo] = true
	attrs := [][2]string{
		{"cf_role", "mesh_topology"},
		{"long_name", "topology of the target mesh: " + h0.Target.MeshName},
		{"colbridge_name", h0.Target.MeshName},
		{"colbridge_fingerprint", h0.Target.MeshFingerprint},
		{"comment", "node coordinates and connectivity are not included: colbridge apply did not have the target's mesh file (give it with --target-mesh)"},
	}
	for _, loc := range []string{"face", "edge"} {
		n, ok := need[loc]
		if !ok {
			continue
		}
		name, err := o.def("nmesh_"+loc, n, false)
		if err != nil {
			return nil, err
		}
		out[loc] = hdim{name: name}
		attrs = append(attrs, [2]string{loc + "_dimension", name})
	}
	for _, at := range attrs {
		if err := o.w.PutAttrText(o.topo, at[0], at[1]); err != nil {
			return nil, err
		}
	}
	if err := o.w.PutAttrInt32s(o.topo, "topology_dimension", 2); err != nil {
		return nil, err
	}
	return out, nil
}

// fieldAttrs sets the attributes of a mapped variable.
func (o *output) fieldAttrs(j *job, coords string) error {
	first := j.inputs[0]
	vector := len(j.op.inputs) > 1 || j.op.src.H == grids.EdgeNormal || j.op.src.H == grids.EdgeTangential
	skip := func(name string) bool {
		switch name {
		case "missing_value", "valid_min", "valid_max", "valid_range", "actual_range", "scale_factor", "add_offset",
			"mesh", "location", "coordinates", "cell_measures", "grid_mapping", "bounds", "history":
			return true
		case "standard_name", "long_name":
			return vector
		}
		return strings.HasPrefix(name, "_")
	}
	if err := copyAttrs(o.in.f, first.name, o.w, j.out, skip); err != nil {
		return err
	}
	if vector {
		long := fmt.Sprintf("%s from %s", j.op.tgt, strings.Join(j.op.inputNames(), " and "))
		if len(j.op.inputs) == 1 {
			comp := "a component"
			switch {
			case strings.Contains(j.op.entry, ".east."):
				comp = "eastward component"
			case strings.Contains(j.op.entry, ".north."):
				comp = "northward component"
			}
			long = fmt.Sprintf("%s of %s (%v)", comp, first.name, j.op.src)
		}
		if err := o.w.PutAttrText(j.out, "long_name", long); err != nil {
			return err
		}
	}
	if err := o.w.PutAttrFloat64s(j.out, "_FillValue", j.fill); err != nil {
		return err
	}
	h := j.h[0]
	method := fmt.Sprintf("%s order %d", h.Method, h.Order)
	maps := j.op.entry + ": " + j.op.inputs[0].file
	if len(j.op.inputs) > 1 {
		var files []string
		for _, ip := range j.op.inputs {
			files = append(files, ip.file)
		}
		maps = j.op.entry + ": " + strings.Join(files, " + ")
	}
	if vo := j.op.vert; vo != nil {
		method += " ⊗ " + vo.method
		maps += " ⊗ " + vo.file
		if j.op.isMeasure {
			method = fmt.Sprintf("%s order %d ⊗ target layer measures of %s", h.Method, h.Order, vo.method)
		}
	}
	if j.op.measure != "" && !j.op.isMeasure {
		method += ", weighted by " + j.op.measure
	}
	if j.bounds {
		method += ", bounds by clip-and-assured-sum"
	}
	attrs := [][2]string{
		{"mesh", o.topo},
		{"location", ugridLocation(j.op.tgt.H)},
		{"colbridge_method", method},
		{"colbridge_maps", maps},
		{"colbridge_source_mesh_fingerprint", h.Source.MeshFingerprint},
		{"colbridge_target_mesh_fingerprint", h.Target.MeshFingerprint},
	}
	if coords != "" {
		attrs = append(attrs, [2]string{"coordinates", coords})
	}
	if vo := j.op.vert; vo != nil {
		attrs = append(attrs,
			[2]string{"colbridge_source_levels_fingerprint", vo.vm.Source.Fingerprint()},
			[2]string{"colbridge_target_levels_fingerprint", vo.vm.Target.Fingerprint()})
	}
	for _, at := range attrs {
		if err := o.w.PutAttrText(j.out, at[0], at[1]); err != nil {
			return err
		}
	}
	return nil
}

// storageChunkBytes bounds a chunk of an output variable: 16 MiB, so one record of a
// large field is one chunk (written whole, never read back) without exceeding NetCDF's
// default chunk cache.
const storageChunkBytes = 16 << 20

// storage sets deflate and chunking when the variable has an unlimited dimension or is
// compressed (contiguous otherwise). A chunk holds whole records of the innermost leading
// dimension when one fits in storageChunkBytes, as many as fit, and the pipeline's chunks
// are rounded to whole storage chunks, so every write covers whole chunks and nothing is
// read back; a record too large for one chunk has its levels split.
func (o *output) storage(j *job, dims []string) error {
	unlimited := false
	for _, d := range dims {
		unlimited = unlimited || o.dims[d].unlimited
	}
	if o.opt.Deflate == 0 && !unlimited {
		return nil
	}
	size := 8
	if j.outType == ncio.Float32 {
		size = 4
	}
	chunks := make([]int, len(dims))
	for i := range chunks {
		chunks[i] = 1
	}
	hn := min(j.nt, max(1, storageChunkBytes/size))
	chunks[len(dims)-1] = hn
	rec := size * hn
	if j.outLevDim != "" {
		chunks[len(dims)-2] = min(j.lt, max(1, storageChunkBytes/rec))
		rec *= j.lt
	}
	if L := len(j.lead); L > 0 && rec <= storageChunkBytes {
		k := max(1, min(j.lead[L-1], storageChunkBytes/rec))
		if j.splitDim == L-1 && j.splitCount > k {
			j.splitCount = k * (j.splitCount / k) // writes cover whole chunks
		} else if j.splitDim == L-1 {
			k = j.splitCount
		}
		chunks[L-1] = k
	}
	if o.opt.Deflate > 0 {
		if err := o.w.SetDeflate(j.out, o.opt.Deflate, true); err != nil {
			return err
		}
	}
	return o.w.SetChunking(j.out, chunks)
}

// copyOthers copies the input's variables that do not live on the source mesh: time and
// other coordinate variables, their bounds, scalars; those whose dimensions the output
// has (or can have) unchanged.
func (o *output) copyOthers() error {
	excluded := map[string]bool{}
	for d := range o.in.meshDims {
		excluded[d] = true
	}
	for _, j := range o.jobs {
		for _, l := range append(slices.Clone(j.inputs), j.mass) {
			if l == nil {
				continue
			}
			excluded[l.hDim] = true
			if l.levDim != "" {
				excluded[l.levDim] = true
			}
		}
	}
	mapped := map[string]bool{}
	for _, j := range o.jobs {
		for _, l := range j.inputs {
			mapped[l.name] = true
		}
		if j.mass != nil {
			mapped[j.mass.name] = true
		}
	}
	for _, v := range o.in.f.Vars() {
		if mapped[v.Name] || o.in.meshVars[v.Name] || o.defined[v.Name] || !v.Type.IsNumeric() {
			continue
		}
		ok := true
		for i, d := range v.Dims {
			if dd, have := o.dims[d]; have {
				ok = ok && dd.n == v.Shape[i]
			} else {
				ok = ok && !excluded[d]
			}
		}
		if !ok {
			continue
		}
		for i, d := range v.Dims {
			dd, _ := o.in.f.Dim(d)
			if _, err := o.def(d, v.Shape[i], dd.Unlimited); err != nil {
				return err
			}
		}
		if err := o.w.DefVar(v.Name, v.Type, v.Dims); err != nil {
			return err
		}
		o.defined[v.Name] = true
		if err := copyAttrs(o.in.f, v.Name, o.w, v.Name, nil); err != nil {
			return err
		}
		o.copies = append(o.copies, copyVar{f: o.in.f, from: v.Name, to: v.Name, t: v.Type, n: v.Len()})
	}
	return nil
}

// globals copies the input's global attributes and appends a line to history.
func (o *output) globals() error {
	hist, _ := o.in.f.AttrText("", "history")
	if err := copyAttrs(o.in.f, "", o.w, "", func(n string) bool { return n == "history" }); err != nil {
		return err
	}
	cmd := o.opt.History
	if cmd == "" {
		flag := "--map"
		if o.a.Manifest != nil {
			flag = "--bundle"
		}
		cmd = "colbridge apply " + flag + " " + o.a.Source + " " + o.in.path
	}
	line := now().Format(time.RFC3339) + ": " + cmd
	if hist != "" {
		hist = strings.TrimRight(hist, "\n") + "\n" + line
	} else {
		hist = line
	}
	if err := o.w.PutAttrText("", "history", hist); err != nil {
		return err
	}
	return o.w.PutAttrText("", "colbridge_maps", o.a.Source)
}

// now is the time recorded in history: SOURCE_DATE_EPOCH when set (reproducible files,
// as for map provenance), else the clock.
func now() time.Time {
	return weights.NewProvenance(nil).Created
}

// writeCopies writes the copied variables and level coordinates (after EndDef).
func (o *output) writeCopies() error {
	for _, c := range o.copies {
		if c.n == 0 {
			continue
		}
		switch c.t {
		case ncio.Float32, ncio.Float64:
			buf := make([]float64, c.n)
			if err := c.f.ReadFloat64s(c.from, nil, nil, buf); err != nil {
				return err
			}
			if err := o.w.WriteFloat64s(c.to, nil, countOf(c.f, c.from), buf); err != nil {
				return err
			}
		default:
			buf := make([]int64, c.n)
			if err := c.f.ReadInt64s(c.from, nil, nil, buf); err != nil {
				return err
			}
			if err := o.w.WriteInt64s(c.to, nil, countOf(c.f, c.from), buf); err != nil {
				return err
			}
		}
	}
	for _, c := range o.coords {
		if err := o.w.WriteFloat64s(c.name, nil, nil, c.values); err != nil {
			return err
		}
	}
	return nil
}

// countOf returns the shape of a variable (the count of a whole-variable write, needed
// along unlimited dimensions).
func countOf(f *ncio.File, name string) []int {
	v, err := f.Var(name)
	if err != nil {
		return nil
	}
	return v.Shape
}

// copyAttrs copies the attributes of variable from ("" for global) in f to variable to of
// w, except those skip names. Multi-string attributes are not copied (ncio reads one
// string); other types keep their class (text, integer, floating).
func copyAttrs(f *ncio.File, from string, w *ncio.Writer, to string, skip func(string) bool) error {
	attrs, err := f.Attrs(from)
	if err != nil {
		return err
	}
	for _, at := range attrs {
		if skip != nil && skip(at.Name) {
			continue
		}
		var err error
		switch at.Type {
		case ncio.Char:
			s, e := f.AttrText(from, at.Name)
			if e != nil {
				continue
			}
			err = w.PutAttrText(to, at.Name, s)
		case ncio.String:
			s, e := f.AttrText(from, at.Name)
			if e != nil {
				continue
			}
			err = w.PutAttrStrings(to, at.Name, s)
		case ncio.Float32, ncio.Float64:
			x, e := f.AttrFloat64s(from, at.Name)
			if e != nil {
				continue
			}
			err = w.PutAttrFloat64s(to, at.Name, x...)
		default:
			x, e := f.AttrInt64s(from, at.Name)
			if e != nil {
				continue
			}
			small := true
			for _, v := range x {
				small = small && v >= math.MinInt32 && v <= math.MaxInt32
			}
			if small && at.Type != ncio.Int64 && at.Type != ncio.Uint64 {
				x32 := make([]int32, len(x))
				for i, v := range x {
					x32[i] = int32(v)
				}
				err = w.PutAttrInt32s(to, at.Name, x32...)
			} else {
				err = w.PutAttrInt64s(to, at.Name, x...)
			}
		}
		if err != nil {
			return err
		}
	}
	return nil
}
