package remap

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync/atomic"
	"time"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/weights"
)

// DefaultMemory is the memory budget of ApplyOptions.Memory when none is given: 2 GiB.
const DefaultMemory int64 = 2 << 30

// Output value types for ApplyOptions.Type.
const (
	TypeSame    = ""        // float32 inputs give float32, everything else float64
	TypeFloat32 = "float32" // NetCDF float
	TypeFloat64 = "float64" // NetCDF double
)

// ApplyOptions tunes ApplyFile and ApplyFiles. The zero value maps every field found
// with the default budget.
type ApplyOptions struct {
	// Vars names the input variables to map; nil finds them: for a bundle, the variables
	// its entries name (of the direction at hand); for a map file, every variable on the
	// map's source (see the package documentation).
	Vars []string
	// Direction is Restriction or Prolongation for bundles; "" tells it from the file's
	// mesh (its UGRID fingerprint, else the sizes of the variables).
	Direction string
	// Type of the output values: TypeSame, TypeFloat32 or TypeFloat64.
	Type string
	// Deflate is the zlib level (0–9) of the output variables, with the shuffle filter;
	// 0 writes them uncompressed.
	Deflate int
	// Memory is the budget in bytes for everything ApplyFiles holds at once: the maps and
	// the slices of fields in flight. ≤ 0 means DefaultMemory.
	Memory int64
	// Workers is the number of goroutines for the arithmetic (≤ 0: GOMAXPROCS).
	Workers int
	// Bounds turns on clip-and-assured-sum (Bradley et al. 2019): each target value is
	// kept within the range of the source values its row uses, and the slice's integral
	// is kept. For scalar fields only.
	Bounds bool
	// TargetMesh is a mesh file for the target whose UGRID topology is copied into every
	// output; "" uses the bundle's mesh file when it is found beside the bundle.
	TargetMesh string
	// History is the command line recorded in the outputs' history attribute.
	History string
	// NoSync skips the fsync before each output is renamed into place (see
	// ncio.CreateOptions.NoSync): outputs still appear only when complete.
	NoSync bool
	// Progress, if not nil, is increased by the bytes of input read.
	Progress *atomic.Int64
}

// FileResult says what applying the maps to one file did.
type FileResult struct {
	Input, Output string
	Direction     string // Restriction, Prolongation, or "" for a map file
	Skipped       bool   // the output existed and ApplyFiles was told to skip it
	Vars          []VarResult
	BytesRead     int64
	BytesWritten  int64 // values written (not the file size)
	Buffers       int64 // peak bytes of field buffers held
	Chunks        int   // slices of the file read, mapped and written one after another
	Duration      time.Duration
	Err           error
}

// VarResult reports one output variable.
type VarResult struct {
	Name    string   // in the output
	Inputs  []string // input variables summed into it
	Measure string   // the measure variable that weighted it, if any
	Records int      // (level, horizontal) slabs mapped
	Values  int64    // values written
	// Uncovered counts target values without any source (written as the fill value).
	Uncovered int64
	// MissingSources counts source values that were missing (_FillValue, missing_value,
	// NaN, or a missing or non-positive measure); Missing counts the target values set
	// to the fill value because their rows use one of them.
	MissingSources, Missing int64
	// Clipped counts values moved by clip-and-assured-sum; Infeasible counts slices whose
	// local bounds could not hold the slice's integral (kept exact anyway).
	Clipped, Infeasible int64
	// BoundsSkipped is set when Bounds was asked for but does not apply (vectors).
	BoundsSkipped bool
}

// OutputPath returns where ApplyFiles writes the output of input: the same base name in
// outDir.
func OutputPath(input, outDir string) string { return filepath.Join(outDir, filepath.Base(input)) }

// ErrSameFile is returned (wrapped) when an output would replace an input.
var ErrSameFile = errors.New("output would replace an input")

// sameFile reports whether a and b name the same file: equal after resolving symbolic
// links, or the same inode (hard links).
func sameFile(a, b string) bool {
	ra, err1 := filepath.Abs(a)
	rb, err2 := filepath.Abs(b)
	if err1 == nil && err2 == nil {
		if ea, err := filepath.EvalSymlinks(ra); err == nil {
			ra = ea
		} else if d, err := filepath.EvalSymlinks(filepath.Dir(ra)); err == nil {
			ra = filepath.Join(d, filepath.Base(ra))
		}
		if eb, err := filepath.EvalSymlinks(rb); err == nil {
			rb = eb
		} else if d, err := filepath.EvalSymlinks(filepath.Dir(rb)); err == nil {
			rb = filepath.Join(d, filepath.Base(rb))
		}
		if ra == rb {
			return true
		}
	}
	sa, err1 := os.Stat(a)
	sb, err2 := os.Stat(b)
	return err1 == nil && err2 == nil && os.SameFile(sa, sb)
}

// CheckOutputs refuses a batch whose outputs would replace an input, a map or a mesh
// file the Applier read, or would collide (two inputs with the same base name).
func (a *Applier) CheckOutputs(inputs []string, outDir string) error {
	seen := map[string]string{}
	for _, in := range inputs {
		out := OutputPath(in, outDir)
		if prev, ok := seen[out]; ok {
			return fmt.Errorf("%s and %s would both be written to %s; give them different names or run twice", prev, in, out)
		}
		seen[out] = in
		for _, other := range append(slices.Clone(inputs), a.files...) {
			if sameFile(out, other) {
				return fmt.Errorf("the output %s is %s itself: %w; choose another --out-dir", out, other, ErrSameFile)
			}
		}
	}
	return nil
}

// ApplyFile applies the Applier's maps to the fields of the NetCDF file in and writes the
// results to out, under a temporary name renamed when complete: on any error nothing
// appears at out. It refuses an out that is in itself (also through links), and a file
// whose mesh is not the maps' source mesh (UGRID colbridge_fingerprint, or else the
// sizes). The returned result is also filled on error (as far as it got).
func (a *Applier) ApplyFile(in, out string, opt ApplyOptions) (*FileResult, error) {
	t0 := time.Now()
	res := &FileResult{Input: in, Output: out}
	err := a.applyFile(in, out, opt, res)
	res.Duration = time.Since(t0)
	res.Err = err
	return res, err
}

func (a *Applier) applyFile(inPath, outPath string, opt ApplyOptions, res *FileResult) error {
	for _, f := range append([]string{inPath}, a.files...) {
		if sameFile(outPath, f) {
			return fmt.Errorf("%s: the output is %s itself: %w", outPath, f, ErrSameFile)
		}
	}
	in, err := openInput(inPath)
	if err != nil {
		return err
	}
	defer in.f.Close()
	dir, jobs, err := a.plan(in, opt)
	if err != nil {
		return err
	}
	res.Direction = dir
	meshFile, err := a.targetMeshFile(dir, opt.TargetMesh)
	if err != nil {
		return err
	}
	if meshFile != "" && sameFile(outPath, meshFile) {
		return fmt.Errorf("%s: the output is the mesh file %s: %w", outPath, meshFile, ErrSameFile)
	}
	budget := opt.Memory
	if budget <= 0 {
		budget = DefaultMemory
	}
	budget -= a.mapSize + fixedOverhead
	for _, j := range jobs {
		if err := j.size(budget, a.mapSize); err != nil {
			return fmt.Errorf("%s: %w", inPath, err)
		}
	}
	w, err := ncio.Create(outPath, ncio.CreateOptions{Format: ncio.NetCDF4, NoSync: opt.NoSync})
	if err != nil {
		return err
	}
	defer w.Abort()
	o := &output{w: w, in: in, a: a, opt: opt, meshFile: meshFile, jobs: jobs, direction: dir}
	defer o.close()
	if err := o.define(); err != nil {
		return err
	}
	if err := o.writeCopies(); err != nil {
		return err
	}
	if err := runPipeline(jobs, w, in, opt, res); err != nil {
		return err
	}
	for _, j := range jobs {
		res.Vars = append(res.Vars, j.stats)
	}
	return w.Commit()
}

// fixedOverhead is the memory kept aside from the budget for what is not a field buffer
// or a map: the program, the Go runtime, and the NetCDF and HDF5 libraries with their
// chunk caches (16 MiB per variable by default: one variable being read, one being
// written). Measured: peak resident set minus buffers and maps was 76–86 MiB on the
// 1 GB benchmark input with budgets of 96 to 256 MiB.
const fixedOverhead = 96 << 20

// plan decides the direction and the jobs (output variables) for a file.
func (a *Applier) plan(in *inputFile, opt ApplyOptions) (string, []*job, error) {
	if opt.Deflate < 0 || opt.Deflate > 9 {
		return "", nil, fmt.Errorf("deflate level %d not in 0..9", opt.Deflate)
	}
	switch opt.Type {
	case TypeSame, TypeFloat32, TypeFloat64:
	default:
		return "", nil, fmt.Errorf("output type %q (want %s or %s)", opt.Type, TypeFloat32, TypeFloat64)
	}
	if a.single != nil {
		jobs, err := a.planSingle(in, opt)
		return "", jobs, err
	}
	dir := opt.Direction
	switch dir {
	case Restriction, Prolongation:
		if fp := a.meshes[sideOf(dir)].fingerprint; in.meshFP != "" && fp != "" && in.meshFP != fp {
			return "", nil, a.meshMismatch(in, dir)
		}
	case "":
		var err error
		if dir, err = a.direction(in); err != nil {
			return "", nil, err
		}
	default:
		return "", nil, fmt.Errorf("direction %q (want %s or %s)", dir, Restriction, Prolongation)
	}
	jobs, err := a.planBundle(in, dir, opt)
	return dir, jobs, err
}

func (a *Applier) meshMismatch(in *inputFile, dir string) error {
	s := sideOf(dir)
	return fmt.Errorf("%s is on mesh %s (%s), but the %s maps of %s read mesh %s (%s)",
		in.path, in.meshFP, orUnnamed(in.meshName), dir, a.Source, a.meshes[s].fingerprint, orUnnamed(a.meshes[s].name))
}

func orUnnamed(s string) string {
	if s == "" {
		return "unnamed"
	}
	return s
}

// direction tells from a file whether it holds dynamics fields (restriction) or column
// fields (prolongation): by its mesh fingerprint, else by which direction's input
// variables it holds with the right horizontal sizes.
func (a *Applier) direction(in *inputFile) (string, error) {
	if in.meshFP != "" {
		dyn, col := in.meshFP == a.meshes[0].fingerprint, in.meshFP == a.meshes[1].fingerprint
		switch {
		case dyn && !col:
			return Restriction, nil
		case col && !dyn:
			return Prolongation, nil
		case !dyn && !col:
			return "", fmt.Errorf("%s is on mesh %s (%s), but the bundle %s couples dynamics mesh %s (%s) and columns mesh %s (%s)",
				in.path, in.meshFP, orUnnamed(in.meshName), a.Source, a.meshes[0].fingerprint, orUnnamed(a.meshes[0].name), a.meshes[1].fingerprint, orUnnamed(a.meshes[1].name))
		}
	}
	score := func(dir string) int {
		n := 0
		for _, op := range a.opsFor(dir) {
			for _, ip := range op.inputs {
				if v, ok := in.vars[ip.name]; ok && len(v.Shape) > 0 && v.Shape[len(v.Shape)-1] == ip.h.Source.Size {
					n++
				}
			}
		}
		return n
	}
	r, p := score(Restriction), score(Prolongation)
	switch {
	case r > p:
		return Restriction, nil
	case p > r:
		return Prolongation, nil
	case r == 0:
		return "", fmt.Errorf("%s holds none of the variables the bundle %s maps (restriction: %s; prolongation: %s) with the sizes of its meshes",
			in.path, a.Source, strings.Join(a.Inputs(Restriction), ", "), strings.Join(a.Inputs(Prolongation), ", "))
	}
	return "", fmt.Errorf("%s: %w", in.path, errAmbiguous)
}

// planSingle plans a map file: one job per field on the map's source.
func (a *Applier) planSingle(in *inputFile, opt ApplyOptions) ([]*job, error) {
	m := a.single
	if in.meshFP != "" && m.Source.MeshFingerprint != "" && in.meshFP != m.Source.MeshFingerprint {
		hint := ""
		if in.meshFP == m.Target.MeshFingerprint {
			hint = " (it is the map's target mesh: the map goes the other way)"
		}
		return nil, fmt.Errorf("%s is on mesh %s (%s), but the map %s reads mesh %s (%s)%s",
			in.path, in.meshFP, orUnnamed(in.meshName), a.Source, m.Source.MeshFingerprint, orUnnamed(m.Source.MeshName), hint)
	}
	measure := m.Attrs["measure_variable"]
	names := opt.Vars
	if names == nil {
		for _, n := range in.candidates(m.Source.Location, m.Source.Size) {
			if n != measure {
				names = append(names, n)
			}
		}
		if len(names) == 0 {
			return nil, fmt.Errorf("%s: no variable on the map's source (last dimension of %d %ss, as the map %s reads); name them with --vars",
				in.path, m.Source.Size, hName(m.Source.Location.H), a.Source)
		}
	}
	var jobs []*job
	for _, n := range names {
		op := &fieldOp{entry: filepath.Base(a.Source), output: n, measure: measure,
			src: m.Source.Location, tgt: m.Target.Location,
			inputs: []opInput{{name: n, h: m, file: filepath.Base(a.Source)}}}
		j, err := newJob(in, op, opt)
		if err != nil {
			return nil, err
		}
		jobs = append(jobs, j)
	}
	return a.addMeasureJobs(in, jobs, opt)
}

// planBundle plans the bundle operators of one direction whose inputs are in the file
// (or named in opt.Vars).
func (a *Applier) planBundle(in *inputFile, dir string, opt ApplyOptions) ([]*job, error) {
	ops := a.opsFor(dir)
	want := map[string]bool{}
	for _, v := range opt.Vars {
		want[v] = true
	}
	used := map[string]bool{}
	var jobs []*job
	for _, op := range ops {
		var have, named []string
		for _, ip := range op.inputs {
			if _, ok := in.vars[ip.name]; ok {
				have = append(have, ip.name)
			}
			if want[ip.name] {
				named = append(named, ip.name)
			}
		}
		if opt.Vars != nil && len(named) == 0 {
			continue
		}
		if opt.Vars == nil && len(have) == 0 {
			continue
		}
		for _, ip := range op.inputs {
			used[ip.name] = true
			if _, ok := in.vars[ip.name]; !ok {
				if len(op.inputs) > 1 {
					return nil, fmt.Errorf("%s: variable %q: not in the file; %q is the sum of %s, which needs all of them",
						in.path, ip.name, op.output, quoteList(op.inputNames()))
				}
				return nil, fmt.Errorf("%s: variable %q: not in the file", in.path, ip.name)
			}
		}
		j, err := newJob(in, op, opt)
		if err != nil {
			return nil, err
		}
		jobs = append(jobs, j)
	}
	for _, v := range opt.Vars {
		if !used[v] {
			return nil, fmt.Errorf("%s: variable %q: the bundle %s has no %s map for it (it maps %s)", in.path, v, a.Source, dir, strings.Join(a.Inputs(dir), ", "))
		}
	}
	if len(jobs) == 0 {
		return nil, fmt.Errorf("%s: none of the variables the bundle %s restricts or prolongs (%s: %s) is in the file", in.path, a.Source, dir, strings.Join(a.Inputs(dir), ", "))
	}
	return a.addMeasureJobs(in, jobs, opt)
}

func (op *fieldOp) inputNames() []string {
	var out []string
	for _, ip := range op.inputs {
		out = append(out, ip.name)
	}
	return out
}

func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = fmt.Sprintf("%q", n)
	}
	return strings.Join(q, " and ")
}

// addMeasureJobs adds, for every measure variable a job is weighted by, a job that maps
// the measure itself (so the output holds the target measure the mapped field conserves
// with), unless a job already writes that name.
func (a *Applier) addMeasureJobs(in *inputFile, jobs []*job, opt ApplyOptions) ([]*job, error) {
	outs := map[string]bool{}
	for _, j := range jobs {
		outs[j.out] = true
	}
	n := len(jobs)
	for _, j := range jobs[:n] {
		if j.op.measure == "" || outs[j.op.measure] {
			continue
		}
		if len(j.op.inputs) > 1 {
			return nil, fmt.Errorf("%s: variable %q: mass weighting of a vector sum is not supported", in.path, j.out)
		}
		op := &fieldOp{entry: j.op.entry, direction: j.op.direction, output: j.op.measure, measure: j.op.measure,
			src: j.op.src, tgt: j.op.tgt, vert: j.op.vert, isMeasure: true,
			inputs: []opInput{{name: j.op.measure, h: j.op.inputs[0].h, file: j.op.inputs[0].file}}}
		mj, err := newJob(in, op, opt)
		if err != nil {
			return nil, err
		}
		outs[mj.out] = true
		jobs = append(jobs, mj)
	}
	return jobs, nil
}

// job is one output variable of one file.
type job struct {
	op      *fieldOp
	out     string
	inputs  []*fieldLayout
	mass    *fieldLayout // the measure variable (mass-weighted ops and measure ops)
	lead    []int
	leadDim []string
	ls, lt  int // levels per column at source and target (1 for 2-D)
	lm      int // layers of the measure
	ns, nt  int
	h       []*weights.Map // per input
	outType ncio.Type
	fill    float64 // the output's _FillValue
	// chunks: splitCount indices of lead[splitDim] (each perSplit records) at a time
	splitDim, splitCount, perSplit int
	bounds                         bool
	// output dimension names, set by output.define
	outLevDim, outHDim string
	uncovered          []bool  // targets no input covers
	uncoveredList      []int32 // their indices
	nUncovered         int
	tmeasure           []float64 // target measure × coverage (bounds)
	stats              VarResult
}

func newJob(in *inputFile, op *fieldOp, opt ApplyOptions) (*job, error) {
	j := &job{op: op, out: op.output, ls: 1, lt: 1}
	h0 := op.inputs[0].h
	j.ns, j.nt = h0.Source.Size, h0.Target.Size
	lsArg := 0
	if op.vert != nil {
		j.ls, j.lt = op.vert.vm.NSource(), op.vert.vm.NTarget()
		lsArg = j.ls
	}
	for _, ip := range op.inputs {
		j.h = append(j.h, ip.h)
		if op.isMeasure {
			continue
		}
		l, err := in.layout(ip.name, op.src, j.ns, lsArg)
		if err != nil {
			return nil, err
		}
		j.inputs = append(j.inputs, l)
	}
	if op.measure != "" {
		mloc, nlev := grids.Location{H: op.src.H}, 0
		if op.vert != nil {
			mloc.V, nlev = grids.Layer, op.vert.vm.MassLevels().NLev()
			if om := op.vert.ownMass; om != nil {
				if v, ok := in.vars[op.measure]; ok && len(v.Shape) >= 2 && v.Shape[len(v.Shape)-2] == om.vm.MassLevels().NLev() && v.Shape[len(v.Shape)-2] != nlev {
					o := *op
					o.vert = om
					op = &o
					j.op = op
					nlev = om.vm.MassLevels().NLev()
				}
			}
		}
		l, err := in.layout(op.measure, mloc, j.ns, nlev)
		if err != nil {
			if _, ok := in.vars[op.measure]; !ok {
				return nil, fmt.Errorf("%s: variable %q: the measure (layer mass) that %q is weighted by is not in the file", in.path, op.measure, op.inputs[0].name)
			}
			return nil, err
		}
		j.mass, j.lm = l, max(nlev, 1)
		if op.isMeasure {
			j.inputs = []*fieldLayout{l}
			if op.vert == nil {
				j.ls = 1
			} else {
				j.ls = nlev
			}
		}
	}
	first := j.inputs[0]
	j.lead, j.leadDim = first.lead, first.leadDims
	for _, l := range append(slices.Clone(j.inputs[1:]), j.mass) {
		if l == nil {
			continue
		}
		if !slices.Equal(l.lead, j.lead) {
			return nil, fmt.Errorf("%s: variable %q has leading dimensions %v, but %q has %v; they must agree",
				in.path, l.name, l.lead, first.name, j.lead)
		}
	}
	switch opt.Type {
	case TypeFloat32:
		j.outType = ncio.Float32
	case TypeFloat64:
		j.outType = ncio.Float64
	default:
		j.outType = ncio.Float64
		if first.v.Type == ncio.Float32 && !first.packed {
			j.outType = ncio.Float32
		}
	}
	j.fill = defaultFillFloat
	if first.hasFill && !first.packed && fitsType(first.fill, j.outType) {
		j.fill = first.fill
	}
	j.bounds = opt.Bounds && len(op.inputs) == 1 && op.src.H == grids.Cell && !op.isMeasure
	j.stats = VarResult{Name: j.out, Inputs: op.inputNames(), Measure: op.measure, BoundsSkipped: opt.Bounds && !j.bounds && !op.isMeasure}
	if op.isMeasure {
		j.stats.Measure = ""
	}
	if j.bounds {
		if h0.Target.Measure == nil {
			return nil, fmt.Errorf("%s: variable %q: --bounds needs the map's target measure, which %s lacks", in.path, j.out, op.inputs[0].file)
		}
		j.tmeasure = make([]float64, j.nt)
		for i, m := range h0.Target.Measure {
			j.tmeasure[i] = m
			if h0.Target.Coverage != nil {
				j.tmeasure[i] *= h0.Target.Coverage[i]
			}
		}
	}
	j.uncovered = make([]bool, j.nt)
	for i := range j.uncovered {
		empty := true
		for _, h := range j.h {
			if h.W.RowStart[i+1] > h.W.RowStart[i] {
				empty = false
			}
		}
		if h0.Target.Coverage != nil && h0.Target.Coverage[i] == 0 {
			empty = true
		}
		j.uncovered[i] = empty
		if empty {
			j.nUncovered++
			j.uncoveredList = append(j.uncoveredList, int32(i))
		}
	}
	return j, nil
}

// defaultFillFloat is NetCDF's default fill for float and double (netcdf.h NC_FILL_FLOAT,
// NC_FILL_DOUBLE: 9.9692099683868690e+36, exact in float32 as rounded).
const defaultFillFloat = 9.9692099683868690e+36

func fitsType(x float64, t ncio.Type) bool {
	if t == ncio.Float32 {
		return x != x || float64(float32(x)) == x
	}
	return true
}

// records returns the total number of (level, horizontal) slabs of the job.
func (j *job) records() int {
	n := 1
	for _, d := range j.lead {
		n *= d
	}
	return n
}

// split describes how chunks cut the leading dimensions: each chunk takes one index of
// the dimensions before splitDim, splitCount consecutive indices of splitDim and all of
// the dimensions after it, so it is one hyperslab of the file.
func (j *job) split() (dim, count, per int) {
	if len(j.lead) == 0 {
		return -1, 1, 1
	}
	return j.splitDim, j.splitCount, j.perSplit
}

// recordBytes returns the bytes of buffers one record of the job needs in the pipeline
// (two input slots, the scratch, two output slots).
func (j *job) recordBytes() int64 {
	ns, nt, ls, lt := int64(j.ns), int64(j.nt), int64(j.ls), int64(j.lt)
	in := int64(len(j.inputs)) * ls * ns
	if j.mass != nil && !j.op.isMeasure {
		in += int64(j.lm) * ns
	}
	scratch := lt * ns // vertical result
	if j.mass != nil {
		scratch += 2 * lt * ns // target measures and their product with the field
		scratch += lt * nt     // the mapped measure
	}
	if j.bounds {
		scratch += 2 * lt * nt
	}
	out := lt * nt
	osize := int64(8)
	if j.outType == ncio.Float32 {
		osize = 4
	}
	b := 8*(2*in+scratch) + 2*out*osize
	b += (ls+lt)*ns + lt*nt // missing-value masks (bytes)
	return b
}

// columnBytes is the scratch of the per-column vertical path, for one record.
func (j *job) columnBytes() int64 {
	return 8 * int64(j.ns) * int64(j.ls+j.lm+j.lt)
}

// maxChunkBytes bounds the input of one chunk so that a file is cut into enough chunks
// for reading, computing and writing to overlap: 32 MiB.
const maxChunkBytes = 32 << 20

// size chooses the records per chunk within the budget.
func (j *job) size(budget, mapSize int64) error {
	per := j.recordBytes()
	need := per + j.columnBytes()
	if need > budget {
		return fmt.Errorf("variable %q: one record (%d levels × %d %ss) needs %.0f MiB of buffers, more than the memory budget leaves for them (%.0f MiB, after %.0f MiB for the maps and %.0f MiB for the program and the NetCDF library); raise --memory",
			j.out, j.ls, j.ns, hName(j.op.src.H), float64(need)/(1<<20), float64(max(budget, 0))/(1<<20), float64(mapSize)/(1<<20), float64(fixedOverhead)/(1<<20))
	}
	r := int((budget - j.columnBytes()) / per)
	inBytes := int64(len(j.inputs)) * int64(j.ls) * int64(j.ns) * 8
	r = max(1, min(r, max(1, int(maxChunkBytes/inBytes))))
	// The largest trailing block of leading dimensions that fits, and how many of it.
	j.splitDim, j.perSplit = len(j.lead)-1, 1
	for j.splitDim > 0 && j.perSplit*j.lead[j.splitDim] <= r {
		j.perSplit *= j.lead[j.splitDim]
		j.splitDim--
	}
	if len(j.lead) > 0 {
		j.splitCount = max(1, min(j.lead[j.splitDim], r/j.perSplit))
	}
	return nil
}
