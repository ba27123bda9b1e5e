package remap

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/internal/ncio"
)

// TestApplyBadInputs: each bad input gives an error naming the file and, where there is
// one, the variable and what is wrong, and leaves nothing in the output directory: no
// file under the final name and no temporary file (DESIGN.md §7, "nothing is written
// half"). Common practice.
func TestApplyBadInputs(t *testing.T) {
	src, _, mapPath, good, _ := tc2Setup(t, 1)
	dir := t.TempDir()
	n := src.NumCells()
	other, err := grids.NewCubedSphere(9, 0)
	check(t, err)

	wrongSize := filepath.Join(dir, "wrong_size.nc")
	writeTestFile(t, wrongSize, ncio.NetCDF4, []tdim{{"ncells", n + 1, false}},
		[]tvar{{name: "h", dims: []string{"ncells"}, data: make([]float64, n+1)}})
	otherMesh := filepath.Join(dir, "other_mesh.nc")
	writeTestFile(t, otherMesh, ncio.NetCDF4, []tdim{{"ncells", n, false}},
		[]tvar{topoVar(other, "ncells", ""), {name: "h", dims: []string{"ncells"}, data: make([]float64, n)}})
	wrongLoc := filepath.Join(dir, "wrong_location.nc")
	writeTestFile(t, wrongLoc, ncio.NetCDF4, []tdim{{"ncells", n, false}},
		[]tvar{{name: "h", dims: []string{"ncells"}, data: make([]float64, n), text: [][2]string{{"location", "edge"}}}})
	text := filepath.Join(dir, "not_netcdf.nc")
	check(t, os.WriteFile(text, []byte("this is not a NetCDF file\n"), 0o644))
	// Truncated files: a NetCDF-4 file and a classic one cut in half.
	data, err := os.ReadFile(good)
	check(t, err)
	trunc4 := filepath.Join(dir, "truncated4.nc")
	check(t, os.WriteFile(trunc4, data[:len(data)/2], 0o644))
	classic := filepath.Join(dir, "classic.nc")
	writeTestFile(t, classic, ncio.Classic64, []tdim{{"ncells", n, false}}, []tvar{{name: "h", dims: []string{"ncells"}, data: make([]float64, n)}})
	cdata, err := os.ReadFile(classic)
	check(t, err)
	truncC := filepath.Join(dir, "truncated_classic.nc")
	check(t, os.WriteFile(truncC, cdata[:len(cdata)-len(cdata)/3], 0o644))
	// An output "directory" below a regular file cannot be created, even by root.
	blocker := filepath.Join(dir, "a_file")
	check(t, os.WriteFile(blocker, []byte("x"), 0o644))

	a, err := NewMapApplier(mapPath)
	check(t, err)
	cases := []struct {
		name   string
		in     string
		outDir string
		opt    ApplyOptions
		want   []string // all must appear in the error
	}{
		{"missing variable", good, "", ApplyOptions{Vars: []string{"nope"}}, []string{good, `"nope"`, "not in the file"}},
		{"wrong dimension size", wrongSize, "", ApplyOptions{Vars: []string{"h"}}, []string{wrongSize, `"h"`, "length 385", "384 cells"}},
		{"nothing on the source", wrongSize, "", ApplyOptions{}, []string{wrongSize, "no variable on the map's source"}},
		{"map for another mesh", otherMesh, "", ApplyOptions{}, []string{otherMesh, other.Fingerprint(), src.Fingerprint()}},
		{"wrong location attribute", wrongLoc, "", ApplyOptions{Vars: []string{"h"}}, []string{wrongLoc, `"h"`, `location = "edge"`}},
		{"not NetCDF", text, "", ApplyOptions{}, []string{text}},
		{"truncated NetCDF-4", trunc4, "", ApplyOptions{}, []string{trunc4}},
		{"truncated classic", truncC, "", ApplyOptions{}, []string{truncC}},
		{"unwritable output directory", good, filepath.Join(blocker, "out"), ApplyOptions{}, []string{filepath.Join(blocker, "out")}},
		{"bad output type", good, "", ApplyOptions{Type: "int8"}, []string{"int8"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			out := tc.outDir
			if out == "" {
				out = filepath.Join(t.TempDir(), "out")
			}
			rs := a.ApplyFiles([]string{tc.in}, out, tc.opt, 1, false, nil)
			err := rs[0].Err
			if err == nil {
				t.Fatalf("no error")
			}
			t.Log(err)
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q does not mention %q", err, w)
				}
			}
			if names := listDir(t, out); len(names) != 0 {
				t.Errorf("left %v in the output directory", names)
			}
		})
	}
}

// TestApplyInjectedWriteFault: a write error in the middle of a file (ncio's injected
// fault, standing in for a full disk) fails that file with an error naming it and the
// variable, and leaves no output and no temporary file; other files of the batch are
// written. Common practice.
func TestApplyInjectedWriteFault(t *testing.T) {
	dir, dyn, _, dynLev, _ := stdPlan(t)
	in := filepath.Join(dir, "dyn_fields.nc")
	stdFields(t, in, dyn, dynLev)
	a, err := NewBundleApplier(filepath.Join(dir, "bundle"))
	check(t, err)
	out := filepath.Join(t.TempDir(), "out")
	// Write call 21: past the copied mesh topology (17 variables), into the fields.
	restore := ncio.InjectWriteFault(20)
	rs := a.ApplyFiles([]string{in}, out, ApplyOptions{}, 1, false, nil)
	restore()
	err = rs[0].Err
	if err == nil || !errors.Is(err, ncio.ErrInjected) {
		t.Fatalf("error %v, want the injected write fault", err)
	}
	t.Log(err)
	named := false
	for _, v := range []string{"air_density", "tracer", "theta", "u_east", "u_north", "layer_mass"} {
		named = named || strings.Contains(err.Error(), `variable "`+v+`"`)
	}
	if !strings.Contains(err.Error(), OutputPath(in, out)) || !named {
		t.Errorf("error %q should name the output file and a mapped variable", err)
	}
	if names := listDir(t, out); len(names) != 0 {
		t.Errorf("left %v in the output directory", names)
	}
	// Without the fault the same batch works.
	rs = a.ApplyFiles([]string{in}, out, ApplyOptions{}, 1, false, nil)
	check(t, rs[0].Err)
}

// TestApplyRefusesInputs: an output that is an input — the same path, through a symbolic
// link, or a hard link — is refused before anything is written, and the input is intact;
// with skipExisting an existing output is left alone. Common practice.
func TestApplyRefusesInputs(t *testing.T) {
	_, _, mapPath, good, _ := tc2Setup(t, 1)
	a, err := NewMapApplier(mapPath)
	check(t, err)
	before, err := os.ReadFile(good)
	check(t, err)
	dir := filepath.Dir(good)
	if err := a.CheckOutputs([]string{good}, dir); err == nil || !errors.Is(err, ErrSameFile) {
		t.Errorf("output directory = input directory: %v", err)
	}
	if _, err := a.ApplyFile(good, good, ApplyOptions{}); !errors.Is(err, ErrSameFile) {
		t.Errorf("ApplyFile(in, in): %v", err)
	}
	linkDir := t.TempDir()
	check(t, os.Symlink(good, filepath.Join(linkDir, filepath.Base(good))))
	if _, err := a.ApplyFile(good, filepath.Join(linkDir, filepath.Base(good)), ApplyOptions{}); !errors.Is(err, ErrSameFile) {
		t.Errorf("output is a symbolic link to the input: %v", err)
	}
	hardDir := t.TempDir()
	if err := os.Link(good, filepath.Join(hardDir, filepath.Base(good))); err == nil {
		if _, err := a.ApplyFile(good, filepath.Join(hardDir, filepath.Base(good)), ApplyOptions{}); !errors.Is(err, ErrSameFile) {
			t.Errorf("output is a hard link to the input: %v", err)
		}
	}
	if err := a.CheckOutputs([]string{mapPath}, t.TempDir()); err != nil {
		t.Errorf("a map file as input to another directory is fine: %v", err)
	}
	if err := a.CheckOutputs([]string{good, filepath.Join(t.TempDir(), filepath.Base(good))}, t.TempDir()); err == nil {
		t.Errorf("two inputs with one output name were accepted")
	}
	after, err := os.ReadFile(good)
	check(t, err)
	if string(after) != string(before) {
		t.Fatalf("the input changed")
	}
	// skipExisting leaves an existing output alone.
	out := t.TempDir()
	marker := []byte("keep me")
	check(t, os.WriteFile(OutputPath(good, out), marker, 0o644))
	rs := a.ApplyFiles([]string{good}, out, ApplyOptions{}, 1, true, nil)
	if !rs[0].Skipped || rs[0].Err != nil {
		t.Errorf("skip-existing: %+v", rs[0])
	}
	if b, _ := os.ReadFile(OutputPath(good, out)); string(b) != string(marker) {
		t.Errorf("skip-existing rewrote the output")
	}
}

// TestApplyBundleBadInputs: bundle-specific refusals name the file and the variable: a
// vector prolongation with one component missing, a mass-weighted field without its
// measure, a 3-D field with the wrong number of levels, a file on neither mesh.
func TestApplyBundleBadInputs(t *testing.T) {
	dir, dyn, cols, dynLev, _ := stdPlan(t)
	a, err := NewBundleApplier(filepath.Join(dir, "bundle"))
	check(t, err)
	nc := dyn.NumCells()
	nl := dynLev.NLev()
	cases := []struct {
		name string
		dims []tdim
		vars []tvar
		opt  ApplyOptions
		want []string
	}{
		{"measure missing", []tdim{{"lev", nl, false}, {"c", nc, false}},
			[]tvar{topoVar(dyn, "c", ""), {name: "tracer", dims: []string{"lev", "c"}, data: make([]float64, nl*nc)}},
			ApplyOptions{}, []string{`"layer_mass"`, "not in the file"}},
		{"wrong level count", []tdim{{"lev", nl - 1, false}, {"c", nc, false}},
			[]tvar{topoVar(dyn, "c", ""), {name: "air_density", dims: []string{"lev", "c"}, data: make([]float64, (nl-1)*nc)}},
			ApplyOptions{}, []string{`"air_density"`, "length 19", "20 layer values"}},
		{"one wind component", []tdim{{"lev", 12, false}, {"c", cols.NumCells(), false}},
			[]tvar{topoVar(cols, "c", ""), {name: "u_east", dims: []string{"lev", "c"}, data: make([]float64, 12*cols.NumCells())}},
			ApplyOptions{}, []string{`"u_north"`, "not in the file"}},
		{"mesh of neither side", []tdim{{"c", 10, false}},
			[]tvar{{name: "mesh", t: ncio.Int32, text: [][2]string{{"cf_role", "mesh_topology"}, {"colbridge_fingerprint", "sha256:0123"}}},
				{name: "air_density", dims: []string{"c"}, data: make([]float64, 10)}},
			ApplyOptions{}, []string{"sha256:0123", dyn.Fingerprint(), cols.Fingerprint()}},
		{"variable the bundle does not map", []tdim{{"c", nc, false}},
			[]tvar{topoVar(dyn, "c", ""), {name: "x", dims: []string{"c"}, data: make([]float64, nc)}},
			ApplyOptions{Vars: []string{"x"}}, []string{`"x"`, "no restriction map"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			in := filepath.Join(t.TempDir(), "in.nc")
			writeTestFile(t, in, ncio.NetCDF4, tc.dims, tc.vars)
			out := filepath.Join(t.TempDir(), "out")
			rs := a.ApplyFiles([]string{in}, out, tc.opt, 1, false, nil)
			if rs[0].Err == nil {
				t.Fatal("no error")
			}
			t.Log(rs[0].Err)
			for _, w := range append(tc.want, in) {
				if !strings.Contains(rs[0].Err.Error(), w) {
					t.Errorf("error %q does not mention %q", rs[0].Err, w)
				}
			}
			if names := listDir(t, out); len(names) != 0 {
				t.Errorf("left %v", names)
			}
		})
	}
}
