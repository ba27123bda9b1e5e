package ncio

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"
)

// TestKnownCrashers opens each file of testdata/crashers (inputs found by
// FuzzOpen, see doc.go) in a child process and logs what happens: handled
// by our checks, or still crashing or hanging inside the C library. It is
// opt-in (COLBRIDGE_LONG=1) and fails only if the child reports a
// Go-level error (an error that is not an *Error naming the file); use
// it to re-check after a NetCDF or HDF5 upgrade.
func TestKnownCrashers(t *testing.T) {
	if p := os.Getenv("COLBRIDGE_NCIO_CHILD"); p != "" {
		exercise(t, p)
		return
	}
	if os.Getenv("COLBRIDGE_LONG") == "" {
		t.Skip("set COLBRIDGE_LONG=1 to run the known crash inputs in child processes")
	}
	files, err := filepath.Glob(filepath.Join("testdata", "crashers", "*.nc"))
	check(t, err)
	for _, f := range files {
		abs, err := filepath.Abs(f)
		check(t, err)
		ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
		cmd := exec.CommandContext(ctx, os.Args[0], "-test.run=^TestKnownCrashers$", "-test.v")
		cmd.Env = append(os.Environ(), "COLBRIDGE_NCIO_CHILD="+abs)
		out, err := cmd.CombinedOutput()
		timedOut := ctx.Err() == context.DeadlineExceeded
		cancel()
		switch {
		case timedOut:
			t.Logf("%s: still hangs in the C library (killed after 10 s)", f)
		case err == nil:
			t.Logf("%s: handled", f)
		case cmd.ProcessState.Exited() && cmd.ProcessState.ExitCode() == 1:
			t.Errorf("%s: the child failed a check:\n%s", f, out)
		default:
			t.Logf("%s: still crashes in the C library (%v)", f, err)
		}
	}
}
