package remap

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// TestApplyNcdump reads an output back with ncdump (netcdf-bin, the NetCDF library's own
// reader, an outside check of the file) and finds the header CF and UGRID ask for: the
// variable's units and standard_name copied (CF §3.1, §3.3), a _FillValue (CF §2.5.1), the
// UGRID mesh/location attributes and a topology with cf_role = "mesh_topology" (UGRID
// 1.0), a history line appended (CF §2.6.2), and the map's method and fingerprints.
func TestApplyNcdump(t *testing.T) {
	ncdump, err := exec.LookPath("ncdump")
	if err != nil {
		t.Skip("ncdump (netcdf-bin) is not installed")
	}
	dir, dyn, _, dynLev, _ := stdPlan(t)
	in := filepath.Join(dir, "dyn_fields.nc")
	stdFields(t, in, dyn, dynLev)
	a, err := NewBundleApplier(filepath.Join(dir, "bundle"))
	check(t, err)
	out := filepath.Join(t.TempDir(), "out.nc")
	_, err = a.ApplyFile(in, out, ApplyOptions{History: "colbridge apply --bundle bundle --out-dir x dyn_fields.nc", Deflate: 1, Type: TypeFloat32})
	check(t, err)
	b, err := exec.Command(ncdump, "-h", out).CombinedOutput()
	if err != nil {
		t.Fatalf("ncdump: %v\n%s", err, b)
	}
	h := string(b)
	for _, want := range []string{
		"float air_density(time, layer, nmesh_face)",
		"double layer(layer)",
		`layer:units = "m"`,
		`air_density:units = "kg m-3"`,
		`air_density:standard_name = "air_density"`,
		"air_density:_FillValue = 9.96921e+36f",
		`air_density:mesh = "mesh"`,
		`air_density:location = "face"`,
		`air_density:colbridge_method = "conservative order 1 ⊗ vertical-conservative"`,
		`air_density:colbridge_source_mesh_fingerprint = "` + dyn.Fingerprint() + `"`,
		`tracer:colbridge_method = "conservative order 1 ⊗ vertical-conservative, weighted by layer_mass"`,
		`mesh:cf_role = "mesh_topology"`,
		"time = UNLIMITED ; // (2 currently)",
		`colbridge apply --bundle bundle --out-dir x dyn_fields.nc"`,
	} {
		if !strings.Contains(h, want) {
			t.Errorf("ncdump -h lacks %q", want)
		}
	}
	// Deflate and chunking as asked (ncdump -s shows the storage).
	b, err = exec.Command(ncdump, "-hs", out).CombinedOutput()
	check(t, err)
	for _, want := range []string{`air_density:_DeflateLevel = 1`, `air_density:_Shuffle = "true"`} {
		if !strings.Contains(string(b), want) {
			t.Errorf("ncdump -hs lacks %q", want)
		}
	}
	if testing.Verbose() {
		os.Stdout.Write(b[:min(len(b), 4000)])
	}
}
