package weights

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

// MapFormat identifies the layout of map files this package writes.
const MapFormat = "colbridge-map-1"

const (
	dimRowOffsets = "row_offsets"
	dimEntries    = "entries"
	dimSources    = "sources"
	dimTargets    = "targets"
	varRowStart   = "row_start"
	varColIndex   = "col_index"
	varWeight     = "weight"
	varSrcMeasure = "source_measure"
	varTgtMeasure = "target_measure"
	varSrcCover   = "source_coverage"
	varTgtCover   = "target_coverage"
)

// WriteMap writes m to path in the map file layout (see the package documentation),
// under a temporary name renamed when complete.
func WriteMap(path string, m *Map) error {
	if err := m.Check(); err != nil {
		return fmt.Errorf("%s: refusing to write an invalid map: %w", path, err)
	}
	w, err := ncio.Create(path, ncio.CreateOptions{Format: ncio.NetCDF4})
	if err != nil {
		return err
	}
	if err := writeMap(w, m); err != nil {
		w.Abort()
		return err
	}
	return w.Commit()
}

func writeMap(w *ncio.Writer, m *Map) error {
	W := m.W
	for _, d := range []struct {
		n string
		v int
	}{{dimRowOffsets, W.Rows + 1}, {dimEntries, W.NNZ()}, {dimSources, W.Cols}, {dimTargets, W.Rows}} {
		if err := w.DefDim(d.n, d.v); err != nil {
			return err
		}
	}
	type vd struct {
		name string
		t    ncio.Type
		dim  string
		long string
		data []float64
	}
	vars := []vd{
		{varRowStart, ncio.Int64, dimRowOffsets, "CSR row offsets: row t holds entries row_start(t) to row_start(t+1)-1", nil},
		{varColIndex, ncio.Int32, dimEntries, "0-based source index of each weight", nil},
		{varWeight, ncio.Float64, dimEntries, "weight of source col_index in its target row", W.Values},
	}
	for _, o := range []struct {
		name, dim, long string
		data            []float64
	}{
		{varSrcMeasure, dimSources, "measure of each source degree of freedom", m.Source.Measure},
		{varTgtMeasure, dimTargets, "measure of each target degree of freedom", m.Target.Measure},
		{varSrcCover, dimSources, "fraction of each source covered by the target side", m.Source.Coverage},
		{varTgtCover, dimTargets, "fraction of each target covered by the source side (0: uncovered)", m.Target.Coverage},
	} {
		if o.data != nil {
			vars = append(vars, vd{o.name, ncio.Float64, o.dim, o.long, o.data})
		}
	}
	for _, v := range vars {
		if err := w.DefVar(v.name, v.t, []string{v.dim}); err != nil {
			return err
		}
		if err := w.PutAttrText(v.name, "long_name", v.long); err != nil {
			return err
		}
	}
	if m.Source.Location.H == grids.Cell {
		for _, n := range []string{varSrcMeasure} {
			if m.Source.Measure != nil {
				if err := w.PutAttrText(n, "units", "m2"); err != nil {
					return err
				}
			}
		}
	}
	if m.Target.Location.H == grids.Cell && m.Target.Measure != nil {
		if err := w.PutAttrText(varTgtMeasure, "units", "m2"); err != nil {
			return err
		}
	}
	title := fmt.Sprintf("colbridge map: %s order %d, %s (%s) to %s (%s)", m.Method, m.Order,
		m.Source.MeshName, m.Source.Location, m.Target.MeshName, m.Target.Location)
	texts := [][2]string{
		{"colbridge_map_format", MapFormat},
		{"title", title},
		{"method", m.Method},
		{"normalization", m.Normalization},
		{"source_location", m.Source.Location.String()},
		{"target_location", m.Target.Location.String()},
		{"source_mesh", m.Source.MeshName},
		{"source_mesh_fingerprint", m.Source.MeshFingerprint},
		{"target_mesh", m.Target.MeshName},
		{"target_mesh_fingerprint", m.Target.MeshFingerprint},
		{"colbridge_version", m.Provenance.Version},
		{"command", m.Provenance.Command},
		{"created", m.Provenance.Created.UTC().Format(time.RFC3339)},
	}
	keys := make([]string, 0, len(m.Attrs))
	for k := range m.Attrs {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		texts = append(texts, [2]string{"attr_" + k, m.Attrs[k]})
	}
	for _, t := range texts {
		if err := w.PutAttrText("", t[0], t[1]); err != nil {
			return err
		}
	}
	if err := w.PutAttrInt32s("", "order", int32(m.Order)); err != nil {
		return err
	}
	if err := w.EndDef(); err != nil {
		return err
	}
	if err := w.WriteInt64s(varRowStart, nil, nil, W.RowStart); err != nil {
		return err
	}
	if err := w.WriteInt32s(varColIndex, nil, nil, W.ColIndex); err != nil {
		return err
	}
	for _, v := range vars[2:] {
		if err := w.WriteFloat64s(v.name, nil, nil, v.data); err != nil {
			return err
		}
	}
	return nil
}

// ErrNotMap is returned (wrapped) for a NetCDF file that is not a colbridge map.
var ErrNotMap = errors.New("not a colbridge map file")

// ReadMap reads a map file and checks it completely (sizes, offsets, indices, finite
// weights, measures); errors name the file and the variable.
func ReadMap(path string) (*Map, error) {
	f, err := ncio.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if fm, err := f.AttrText("", "colbridge_map_format"); err != nil || fm != MapFormat {
		if err == nil {
			return nil, fmt.Errorf("%s: map format %q, this colbridge reads %q: %w", path, fm, MapFormat, ErrNotMap)
		}
		return nil, fmt.Errorf("%s: no colbridge_map_format attribute: %w", path, ErrNotMap)
	}
	dim := func(name string) (int, error) {
		d, err := f.Dim(name)
		if err != nil {
			return 0, fmt.Errorf("%s: dimension %q: %w", path, name, err)
		}
		return d.Len, nil
	}
	nr1, err := dim(dimRowOffsets)
	if err != nil {
		return nil, err
	}
	nnz, err := dim(dimEntries)
	if err != nil {
		return nil, err
	}
	ns, err := dim(dimSources)
	if err != nil {
		return nil, err
	}
	nt, err := dim(dimTargets)
	if err != nil {
		return nil, err
	}
	if nr1 != nt+1 {
		return nil, fmt.Errorf("%s: %s has %d values for %d targets", path, varRowStart, nr1, nt)
	}
	if nnz > math.MaxInt32 || ns > math.MaxInt32 || nt > math.MaxInt32 {
		return nil, fmt.Errorf("%s: map too large (%d entries, %d × %d)", path, nnz, nt, ns)
	}
	W := &CSR{Rows: nt, Cols: ns, RowStart: make([]int64, nt+1), ColIndex: make([]int32, nnz), Values: make([]float64, nnz)}
	if err := f.ReadInt64s(varRowStart, nil, nil, W.RowStart); err != nil {
		return nil, err
	}
	if err := f.ReadInt32s(varColIndex, nil, nil, W.ColIndex); err != nil {
		return nil, err
	}
	if err := f.ReadFloat64s(varWeight, nil, nil, W.Values); err != nil {
		return nil, err
	}
	if err := W.Check(); err != nil {
		return nil, fmt.Errorf("%s: variables %s/%s/%s: %w", path, varRowStart, varColIndex, varWeight, err)
	}
	opt := func(name string, n int) ([]float64, error) {
		if _, err := f.Var(name); err != nil {
			return nil, nil
		}
		x := make([]float64, n)
		if err := f.ReadFloat64s(name, nil, nil, x); err != nil {
			return nil, err
		}
		return x, nil
	}
	text := func(name string) string { s, _ := f.AttrText("", name); return s }
	m := &Map{W: W, Method: text("method"), Normalization: text("normalization")}
	if o, err := f.AttrInt64s("", "order"); err == nil && len(o) == 1 {
		m.Order = int(o[0])
	}
	for _, s := range []struct {
		side             *Side
		n                int
		loc, mesh, fp    string
		measure, coverge string
	}{
		{&m.Source, ns, "source_location", "source_mesh", "source_mesh_fingerprint", varSrcMeasure, varSrcCover},
		{&m.Target, nt, "target_location", "target_mesh", "target_mesh_fingerprint", varTgtMeasure, varTgtCover},
	} {
		s.side.Size = s.n
		s.side.MeshName = text(s.mesh)
		s.side.MeshFingerprint = text(s.fp)
		if l := text(s.loc); l != "" {
			loc, err := grids.ParseLocation(l)
			if err != nil {
				return nil, fmt.Errorf("%s: attribute %s: %w", path, s.loc, err)
			}
			s.side.Location = loc
		}
		if s.side.Measure, err = opt(s.measure, s.n); err != nil {
			return nil, err
		}
		if s.side.Coverage, err = opt(s.coverge, s.n); err != nil {
			return nil, err
		}
	}
	m.Provenance.Version = text("colbridge_version")
	m.Provenance.Command = text("command")
	if t, err := time.Parse(time.RFC3339, text("created")); err == nil {
		m.Provenance.Created = t
	}
	attrs, _ := f.Attrs("")
	for _, a := range attrs {
		if k, ok := strings.CutPrefix(a.Name, "attr_"); ok {
			if m.Attrs == nil {
				m.Attrs = map[string]string{}
			}
			m.Attrs[k] = text(a.Name)
		}
	}
	if err := m.Check(); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return m, nil
}

var _ = strconv.Itoa
