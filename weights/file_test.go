package weights

import (
	"errors"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

func testMap(rng *rand.Rand) *Map {
	w, _ := randomCSR(rng, 40, 30, 0.15)
	ms := make([]float64, 30)
	mt := make([]float64, 40)
	for i := range ms {
		ms[i] = 1 + rng.Float64()
	}
	for i := range mt {
		mt[i] = 1 + rng.Float64()
	}
	return &Map{
		W:      w,
		Source: Side{MeshName: "src", MeshFingerprint: "sha256:aa", Location: grids.Location{H: grids.Cell}, Size: 30, Measure: ms},
		Target: Side{MeshName: "tgt", MeshFingerprint: "sha256:bb", Location: grids.Location{H: grids.EdgeNormal, V: grids.Layer}, Size: 40, Measure: mt, Coverage: mt},
		Method: "conservative", Order: 2, Normalization: "covered",
		Provenance: Provenance{Version: Version, Command: "colbridge weights ...", Created: time.Unix(1700000000, 0).UTC()},
		Attrs:      map[string]string{"measure_variable": "dp"},
	}
}

// TestMapFileRoundTrip: a map written and read back is identical, and ncdump (netcdf-bin,
// the reference NetCDF tool) reads the file with the documented layout.
func TestMapFileRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	m := testMap(rng)
	for i := range m.Target.Coverage {
		m.Target.Coverage[i] = 1
	}
	path := filepath.Join(t.TempDir(), "m.nc")
	if err := WriteMap(path, m); err != nil {
		t.Fatal(err)
	}
	r, err := ReadMap(path)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(r.W.RowStart, m.W.RowStart) || !slices.Equal(r.W.ColIndex, m.W.ColIndex) || !slices.Equal(r.W.Values, m.W.Values) {
		t.Error("matrix differs")
	}
	if !slices.Equal(r.Source.Measure, m.Source.Measure) || !slices.Equal(r.Target.Coverage, m.Target.Coverage) || r.Source.Coverage != nil {
		t.Error("measures or coverage differ")
	}
	if r.Method != m.Method || r.Order != m.Order || r.Normalization != m.Normalization || r.Target.Location != m.Target.Location ||
		r.Source.MeshFingerprint != m.Source.MeshFingerprint || r.Attrs["measure_variable"] != "dp" ||
		!r.Provenance.Created.Equal(m.Provenance.Created) || r.Provenance.Command != m.Provenance.Command {
		t.Errorf("metadata differs: %+v", r)
	}
	if _, err := exec.LookPath("ncdump"); err != nil {
		t.Skip("ncdump not installed")
	}
	out, err := exec.Command("ncdump", "-h", path).CombinedOutput()
	if err != nil {
		t.Fatalf("ncdump: %v %s", err, out)
	}
	for _, want := range []string{"int64 row_start(row_offsets)", "double weight(entries)", `colbridge_map_format = "colbridge-map-1"`, `target_location = "edge-normal/layer"`} {
		if !strings.Contains(string(out), want) {
			t.Errorf("ncdump -h lacks %q", want)
		}
	}
}

// TestReadMapErrors: bad map files give errors naming the file and the variable, and an
// invalid map is refused before anything is written.
func TestReadMapErrors(t *testing.T) {
	dir := t.TempDir()
	// A NetCDF file that is not a map.
	other := filepath.Join(dir, "other.nc")
	w, _ := ncio.Create(other, ncio.CreateOptions{})
	w.DefDim("x", 1)
	w.EndDef()
	w.Commit()
	if _, err := ReadMap(other); !errors.Is(err, ErrNotMap) || !strings.Contains(err.Error(), "other.nc") {
		t.Errorf("not a map: %v", err)
	}
	// A map whose column index is out of range (written by hand).
	bad := filepath.Join(dir, "bad.nc")
	m := testMap(rand.New(rand.NewPCG(1, 2)))
	if err := WriteMap(bad, m); err != nil {
		t.Fatal(err)
	}
	// Corrupt one column index in place through the NetCDF layer.
	r, _ := ReadMap(bad)
	r.W.ColIndex[0] = 1000
	if err := WriteMap(filepath.Join(dir, "never.nc"), r); err == nil {
		t.Error("an invalid map was written")
	}
	if _, err := os.Stat(filepath.Join(dir, "never.nc")); !os.IsNotExist(err) {
		t.Error("a refused map left a file behind")
	}
	// Truncated file.
	data, _ := os.ReadFile(bad)
	tr := filepath.Join(dir, "trunc.nc")
	os.WriteFile(tr, data[:len(data)*2/3], 0o644)
	if _, err := ReadMap(tr); err == nil || !strings.Contains(err.Error(), "trunc.nc") {
		t.Errorf("truncated: %v", err)
	}
}
