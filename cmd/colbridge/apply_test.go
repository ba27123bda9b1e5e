package main

import (
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/colbridge/colbridge/internal/ncio"
	"github.com/colbridge/colbridge/internal/scenario"
)

// smallDemo runs the demo scenario on small meshes (the same plan, levels and fields)
// and builds its bundle; it returns the directory.
func smallDemo(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	s := scenario.Small
	if err := s.Prepare(dir, io.Discard); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := runCmd(t, "weights", "--plan", filepath.Join(dir, scenario.PlanFile), "-o", filepath.Join(dir, "bundle"), "-q"); code != 0 {
		t.Fatalf("weights --plan: exit %d: %s", code, stderr)
	}
	return dir
}

// TestApplyDemo is the acceptance check: apply on the demo scenario's fields
// writes outputs that ncdump (netcdf-bin) reads with the CF/UGRID attributes, one
// summary line per file, and the prolongation takes the outputs back to the dynamics
// mesh.
func TestApplyDemo(t *testing.T) {
	dir := smallDemo(t)
	in := filepath.Join(dir, scenario.FieldsFile)
	phys := filepath.Join(dir, "phys")
	code, out, stderr := runCmd(t, "apply", "--bundle", filepath.Join(dir, "bundle"), "--out-dir", phys, in)
	if code != 0 {
		t.Fatalf("apply: exit %d: %s", code, stderr)
	}
	for _, w := range []string{in + " → " + filepath.Join(phys, scenario.FieldsFile), "restriction", "u_east", "layer_mass"} {
		if !strings.Contains(out, w) {
			t.Errorf("summary %q lacks %q", out, w)
		}
	}
	back := filepath.Join(dir, "back")
	code, out, stderr = runCmd(t, "apply", "--bundle", filepath.Join(dir, "bundle"), "--out-dir", back, filepath.Join(phys, scenario.FieldsFile))
	if code != 0 || !strings.Contains(out, "prolongation") {
		t.Fatalf("apply back: exit %d: %s%s", code, out, stderr)
	}
	ncdump, err := exec.LookPath("ncdump")
	if err != nil {
		t.Skip("ncdump (netcdf-bin) is not installed")
	}
	// ncdump: the NetCDF library's own reader (an outside check of the files); the
	// attributes are those of CF 1.11 (units, standard_name, _FillValue, history) and
	// UGRID 1.0 (mesh, location, cf_role).
	for _, c := range []struct {
		file string
		want []string
	}{
		{filepath.Join(phys, scenario.FieldsFile), []string{
			"double theta(time, lev, nmesh_face)", `theta:standard_name = "air_potential_temperature"`, `theta:units = "K"`,
			`u_east:location = "face"`, `u_north:mesh = "mesh"`, "tracer:_FillValue = 1.e+20", `mesh:cf_role = "mesh_topology"`,
			`colbridge apply --bundle`}},
		{filepath.Join(back, scenario.FieldsFile), []string{
			"double u(time, lev, nmesh_edge)", `u:location = "edge"`, "double theta(time, interface, nmesh_face)",
			`surface_pressure:standard_name = "surface_air_pressure"`}},
	} {
		b, err := exec.Command(ncdump, "-h", c.file).CombinedOutput()
		if err != nil {
			t.Fatalf("ncdump %s: %v\n%s", c.file, err, b)
		}
		for _, w := range c.want {
			if !strings.Contains(string(b), w) {
				t.Errorf("%s: ncdump -h lacks %q", c.file, w)
			}
		}
	}
}

// TestApplyUsage: command-line mistakes exit 2 with a message, --help exits 0 with
// examples (DESIGN.md §8 exit codes).
func TestApplyUsage(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "in.nc")
	if err := os.WriteFile(in, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		args     []string
		code     int
		contains string
	}{
		{[]string{"apply"}, 2, "exactly one of --map and --bundle"},
		{[]string{"apply", "--map", "m.nc", "--bundle", "b", "--out-dir", dir, in}, 2, "exactly one"},
		{[]string{"apply", "--map", "m.nc", in}, 2, "--out-dir"},
		{[]string{"apply", "--map", "m.nc", "--out-dir", dir}, 2, "at least one input"},
		{[]string{"apply", "--map", "m.nc", "--out-dir", dir, "--type", "int16", in}, 2, "--type"},
		{[]string{"apply", "--map", "m.nc", "--out-dir", dir, "--deflate", "12", in}, 2, "--deflate"},
		{[]string{"apply", "--map", "m.nc", "--out-dir", dir, "--memory", "lots", in}, 2, "--memory"},
		{[]string{"apply", "--bundle", "b", "--out-dir", dir, "--direction", "sideways", in}, 2, "--direction"},
		{[]string{"apply", "--map", "m.nc", "--out-dir", dir, "--direction", "restriction", in}, 2, "for bundles"},
		{[]string{"apply", "--map", "m.nc", "--out-dir", dir, "--bogus", in}, 2, "bogus"},
		{[]string{"apply", "--map", filepath.Join(dir, "none.nc"), "--out-dir", dir, in}, 1, "none.nc"},
		{[]string{"apply", "--help"}, 0, "Examples"},
	}
	for _, tc := range cases {
		code, out, stderr := runCmd(t, tc.args...)
		if code != tc.code || !strings.Contains(out+stderr, tc.contains) {
			t.Errorf("%v: exit %d (want %d), output %q", tc.args, code, tc.code, out+stderr)
		}
	}
}

// TestParseBytes: sizes as job schedulers and people write them (common practice:
// K/M/G binary as in SLURM's --mem, KiB binary and KB decimal as in IEC 80000-13).
func TestParseBytes(t *testing.T) {
	for _, c := range []struct {
		in   string
		want int64
	}{{"2GiB", 2 << 30}, {"512MiB", 512 << 20}, {"1.5G", 3 << 29}, {"4GB", 4e9}, {"100M", 100 << 20}, {"1073741824", 1 << 30}} {
		got, err := parseBytes(c.in)
		if err != nil || got != c.want {
			t.Errorf("parseBytes(%q) = %d, %v; want %d", c.in, got, err, c.want)
		}
	}
	for _, bad := range []string{"", "lots", "-1G", "2XB", "12", "NaNG"} {
		if _, err := parseBytes(bad); err == nil {
			t.Errorf("parseBytes(%q) accepted", bad)
		}
	}
}

// fieldFile writes n records of a (time, lev, cell) float64 field on a mesh of nc cells.
func fieldFile(t testing.TB, path string, nrec, nlev, nc int) {
	t.Helper()
	w, err := ncio.Create(path, ncio.CreateOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer w.Abort()
	for _, d := range []struct {
		n string
		l int
	}{{"time", 0}, {"lev", nlev}, {"cell", nc}} {
		must(t, w.DefDim(d.n, d.l))
	}
	must(t, w.DefVar("x", ncio.Float64, []string{"time", "lev", "cell"}))
	must(t, w.PutAttrText("x", "units", "K"))
	must(t, w.SetChunking("x", []int{1, nlev, nc}))
	must(t, w.EndDef())
	buf := make([]float64, nlev*nc)
	for r := 0; r < nrec; r++ {
		for i := range buf {
			buf[i] = 250 + 20*math.Sin(float64(i)*1e-3+float64(r))
		}
		must(t, w.WriteFloat64s("x", []int{r, 0, 0}, []int{1, nlev, nc}, buf))
	}
	must(t, w.Commit())
}

func must(t testing.TB, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

// TestApplyManyFilesOneFails: in a batch, a bad file fails with its name on stderr and
// exit 1, while the other files are written (issue: "a non-zero exit names every file
// that failed while the others complete").
func TestApplyManyFilesOneFails(t *testing.T) {
	dir := t.TempDir()
	c6, ll := filepath.Join(dir, "c6.nc"), filepath.Join(dir, "ll.nc")
	m := filepath.Join(dir, "m.nc")
	for _, args := range [][]string{
		{"mesh", "make", "cubed", "--n", "6", "-o", c6},
		{"mesh", "make", "latlon", "--nlon", "36", "--nlat", "18", "-o", ll},
		{"weights", "--source", c6, "--target", ll, "--method", "conservative", "-q", "-o", m},
	} {
		if code, _, stderr := runCmd(t, args...); code != 0 {
			t.Fatalf("%v: %s", args, stderr)
		}
	}
	in := filepath.Join(dir, "in")
	must(t, os.MkdirAll(in, 0o755))
	a, b, bad := filepath.Join(in, "a.nc"), filepath.Join(in, "b.nc"), filepath.Join(in, "bad.nc")
	fieldFile(t, a, 3, 4, 216)
	fieldFile(t, b, 2, 4, 216)
	fieldFile(t, bad, 2, 4, 217)
	// Outputs are never inputs: the input's own directory is refused (usage error).
	if code, _, stderr := runCmd(t, "apply", "--map", m, "--out-dir", in, a); code != 2 || !strings.Contains(stderr, "itself") {
		t.Errorf("--out-dir = the input's directory: exit %d, %q", code, stderr)
	}
	out := filepath.Join(dir, "out")
	code, stdout, stderr := runCmd(t, "apply", "--map", m, "--out-dir", out, a, bad, b)
	if code != 1 {
		t.Fatalf("exit %d, want 1\n%s%s", code, stdout, stderr)
	}
	if !strings.Contains(stderr, bad) || !strings.Contains(stderr, "1 of 3 files failed") || strings.Contains(stderr, a+":") {
		t.Errorf("stderr %q should name only %s", stderr, bad)
	}
	for _, f := range []string{"a.nc", "b.nc"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("good input %s: %v", f, err)
		}
	}
	if names, _ := os.ReadDir(out); len(names) != 2 {
		t.Errorf("output directory holds %d entries, want 2", len(names))
	}
	if strings.Count(stdout, "\n") != 2 {
		t.Errorf("want one summary line per good file, got %q", stdout)
	}
	// A re-run with --skip-existing leaves the two alone and still reports the bad one.
	code, stdout, _ = runCmd(t, "apply", "--map", m, "--out-dir", out, "--skip-existing", a, bad, b)
	if code != 1 || strings.Count(stdout, "skipped") != 2 {
		t.Errorf("--skip-existing: exit %d, %q", code, stdout)
	}
}

// TestApplyKilled builds the binary, starts it on an input big enough to take a while,
// kills it with SIGKILL while it writes, and finds no file under the output's final name
// (the output is written under a temporary name and renamed when complete).
func TestApplyKilled(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and writes ~150 MB")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "colbridge")
	if b, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, b)
	}
	c, ll, m := filepath.Join(dir, "c.nc"), filepath.Join(dir, "ll.nc"), filepath.Join(dir, "m.nc")
	for _, args := range [][]string{
		{"mesh", "make", "cubed", "--n", "48", "-o", c},
		{"mesh", "make", "latlon", "--nlon", "180", "--nlat", "90", "-o", ll},
		{"weights", "--source", c, "--target", ll, "--method", "conservative", "-q", "-o", m},
	} {
		if code, _, stderr := runCmd(t, args...); code != 0 {
			t.Fatalf("%v: %s", args, stderr)
		}
	}
	in := filepath.Join(dir, "in.nc")
	fieldFile(t, in, 40, 30, 13824) // 133 MB in, 156 MB out
	out := filepath.Join(dir, "out")
	final := filepath.Join(out, "in.nc")
	cmd := exec.Command(bin, "apply", "--map", m, "--out-dir", out, "--memory", "256MiB", in)
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	// Wait until the temporary output exists and has data in it, then kill.
	deadline := time.Now().Add(30 * time.Second)
	killed := false
	for time.Now().Before(deadline) && !killed {
		es, _ := os.ReadDir(out)
		for _, e := range es {
			if strings.HasPrefix(e.Name(), ".in.nc.tmp-") {
				if fi, err := e.Info(); err == nil && fi.Size() > 8<<20 {
					must(t, cmd.Process.Signal(syscall.SIGKILL))
					killed = true
				}
			}
		}
		time.Sleep(5 * time.Millisecond)
	}
	err := cmd.Wait()
	if !killed {
		t.Fatalf("the run ended (%v) before it could be killed mid-file; use a bigger input", err)
	}
	if ws, ok := cmd.ProcessState.Sys().(syscall.WaitStatus); !ok || !ws.Signaled() {
		t.Fatalf("the process was not killed by the signal: %v", cmd.ProcessState)
	}
	if _, err := os.Stat(final); !os.IsNotExist(err) {
		t.Fatalf("after SIGKILL, %s exists (%v): a partial output under the final name", final, err)
	}
	// A re-run completes; the dead run's hidden temporary file does not disturb it. With
	// --memory 128MiB its peak resident set (getrusage) stays under 128 MiB.
	rerun := exec.Command(bin, "apply", "-q", "--map", m, "--out-dir", out, "--memory", "128MiB", in)
	if b, err := rerun.CombinedOutput(); err != nil {
		t.Fatalf("re-run: %v\n%s", err, b)
	}
	if _, err := os.Stat(final); err != nil {
		t.Fatal(err)
	}
	if ru, ok := rerun.ProcessState.SysUsage().(*syscall.Rusage); ok {
		if rss := ru.Maxrss / 1024; rss > 128 {
			t.Errorf("peak resident set %d MiB with --memory 128MiB", rss)
		}
	}
}
