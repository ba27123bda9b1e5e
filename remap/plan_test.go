package remap

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

const planHead = `
[dynamics]
mesh = "dyn.nc"
levels = { nlev = 4, top = 4000.0 }
[columns]
mesh = "col.nc"
`

// TestPlanRefusals: an inconsistent plan is refused with a message naming the entry and
// the problem (issue 4).
func TestPlanRefusals(t *testing.T) {
	dir := t.TempDir()
	cases := []struct{ body, want string }{
		{`[dynamics]` + "\n" + `mesh = ""`, "dynamics: needs a mesh file"},
		{planHead, "names no variables"},
		{planHead + `[[variable]]` + "\nname = \"a\"\nsource = \"cell/layer\"\ntarget = \"edge-normal/layer\"\n", `variable "a": target "edge-normal/layer"`},
		{planHead + `[[variable]]` + "\nname = \"a\"\nsource = \"cell/layer\"\ntarget = \"cell\"\n", `variable "a": source "cell/layer" and target "cell" must both`},
		{planHead + `[[variable]]` + "\nname = \"u\"\nsource = \"edge-normal/layer\"\ntarget = \"cell/layer\"\n", `variable "u": source "edge-normal/layer" holds vector components`},
		{planHead + `[[variable]]` + "\nname = \"a\"\nsource = \"cell/layer\"\ntarget = \"cell/layer\"\nmethod = \"conservative\"\norder = 7\n", `variable "a": conservative order must be 1 to 4`},
		{planHead + `[[variable]]` + "\nname = \"a\"\nsource = \"cell/layer\"\ntarget = \"cell/layer\"\nvertical = \"spline\"\n", `variable "a": vertical: `},
		{planHead + `[[variable]]` + "\nname = \"a\"\nsource = \"cell\"\ntarget = \"cell\"\nmeasure = \"m\"\n", `variable "a": a measure (mass weighting) needs levels`},
		{planHead + `[[variable]]` + "\nname = \"a\"\nsource = \"cell\"\ntarget = \"cell\"\n[[variable]]\nname = \"a\"\nsource = \"cell\"\ntarget = \"cell\"\n", `variable "a": is listed twice`},
		{planHead + `[[variable]]` + "\nname = \"a\"\nsource = \"cell\"\ntarget = \"cell\"\nprolongaton = \"adjoint\"\n", `unknown keys: variable.prolongaton`},
		{planHead + `[[variable]]` + "\nname = \"a\"\nsource = \"blob\"\ntarget = \"cell\"\n", `variable "a": source: unknown location "blob"`},
		{"title = [", "not valid TOML"},
	}
	for i, tc := range cases {
		path := filepath.Join(dir, "p.toml")
		os.WriteFile(path, []byte(tc.body), 0o644)
		_, err := ReadPlan(path)
		var pe *PlanError
		if err == nil || !errors.As(err, &pe) || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "p.toml") {
			t.Errorf("case %d: error %v, want a plan error containing %q", i, err, tc.want)
		}
	}
}

// TestBundleIdempotent: building a plan writes every map and the manifest; re-running
// does nothing; a changed plan rewrites and removes maps it no longer needs; a directory
// that is not a bundle is refused.
func TestBundleIdempotent(t *testing.T) {
	dir := t.TempDir()
	dyn, err := grids.NewCubedSphere(4, 0)
	mustMesh(t, dyn, err)
	col, err := grids.NewIcosahedralDual(1, 0)
	mustMesh(t, col, err)
	for name, m := range map[string]*grids.Mesh{"dyn.nc": dyn, "col.nc": col} {
		if err := grids.WriteUGRID(filepath.Join(dir, name), m); err != nil {
			t.Fatal(err)
		}
	}
	plan := planHead + `
[[variable]]
name = "theta"
source = "cell/interface"
target = "cell/layer"
order = 2
[[variable]]
name = "u"
source = "edge-normal/layer"
target = "cell/layer"
components = ["ue", "un"]
prolongation = "average"
[[variable]]
name = "q"
source = "cell/layer"
target = "cell/layer"
order = 2
measure = "mass"
`
	pp := filepath.Join(dir, "plan.toml")
	os.WriteFile(pp, []byte(plan), 0o644)
	p, err := ReadPlan(pp)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "bundle")
	res, err := BuildBundle(p, out, BundleOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if res.UpToDate || len(res.Manifest.Maps) != 2+4+2 {
		t.Fatalf("first build: up to date %v, %d entries", res.UpToDate, len(res.Manifest.Maps))
	}
	// Every listed file exists and is a valid map whose partner is listed.
	man, err := weights.ReadManifest(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range man.Maps {
		if _, err := weights.ReadMap(filepath.Join(out, e.File)); err != nil {
			t.Errorf("%s: %v", e.Name, err)
		}
		if _, ok := man.Find(e.Partner); e.Partner != "" && !ok {
			t.Errorf("%s: partner %s not listed", e.Name, e.Partner)
		}
	}
	files, _ := os.ReadDir(out)
	if len(files) != len(res.Written)+1 {
		t.Errorf("%d files in the bundle, %d written plus the manifest", len(files), len(res.Written))
	}
	res2, err := BuildBundle(p, out, BundleOptions{})
	if err != nil || !res2.UpToDate {
		t.Fatalf("second build: %v, up to date %v", err, res2 != nil && res2.UpToDate)
	}
	// Drop u from the plan: its maps disappear.
	os.WriteFile(pp, []byte(strings.Replace(plan, `name = "u"`, `name = "u"`+"\nprolongation = \"none\"", 1)), 0o644)
	p2, err := ReadPlan(pp)
	if err == nil {
		t.Fatal("a duplicated key was accepted")
	}
	i := strings.Index(plan, "[[variable]]\nname = \"u\"")
	j := strings.Index(plan, "[[variable]]\nname = \"q\"")
	os.WriteFile(pp, []byte(plan[:i]+plan[j:]), 0o644)
	if p2, err = ReadPlan(pp); err != nil {
		t.Fatal(err)
	}
	if _, err := BuildBundle(p2, out, BundleOptions{}); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"h.edge-normal.conservative1.east.restrict.nc", "h.edge-normal.conservative1.east.average.prolong.nc"} {
		if _, err := os.Stat(filepath.Join(out, f)); !os.IsNotExist(err) {
			t.Errorf("%s should have been removed", f)
		}
	}
	// Not a bundle.
	other := filepath.Join(dir, "other")
	os.MkdirAll(other, 0o755)
	os.WriteFile(filepath.Join(other, "notes.txt"), []byte("mine"), 0o644)
	if _, err := BuildBundle(p2, other, BundleOptions{}); !errors.Is(err, ErrNotBundle) {
		t.Errorf("wrote into a non-bundle directory: %v", err)
	}
}
