package conserve

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"testing"

	"github.com/colbridge/colbridge/weights"
)

var update = flag.Bool("update", false, "rewrite conserve/testdata/leak.mtx from the hand-built map")

const leakFile = "testdata/leak.mtx"

// leakMap is the hand-built map stored in testdata/leak.mtx: the 2:1 conservative
// coarsening of the periodic 6×6 unit square onto 3×3 (weights 1/4, Jones 1999
// first-order weights), with a planted leak: fine cell 7 = (1, 1) keeps only 99 % of its
// weight in coarse cell 0.
func leakMap() *weights.CSR {
	w := coarsen2(3)
	w.Values[entry(w, 0, 7)] *= 0.99
	return w
}

// TestForeignMatrixLeak audits the Matrix Market file in testdata (the format of NIST's
// Matrix Market exchange specification; rows are targets, columns sources, 1-based) with
// measures from the two meshes, as `colbridge audit --matrix` does, and checks the
// figures worked out by hand: c_7 = 4·(0.99/4) = 0.99, row 0 sums to 0.9975, the
// constant field loses 0.0025·(1/9) of a unit mass. Run `go test -run ForeignMatrix
// -update` to regenerate the file (tests only read it).
func TestForeignMatrixLeak(t *testing.T) {
	if *update {
		var buf bytes.Buffer
		if err := weights.WriteMatrixMarket(&buf, leakMap(), "colbridge test matrix: 2:1 coarsening of a periodic 6x6 plane onto 3x3,", "entry (1, 8) holds 99 % of its weight (a planted 1 % leak of source 8)."); err != nil {
			t.Fatal(err)
		}
		if err := os.MkdirAll(filepath.Dir(leakFile), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := writeAtomic(leakFile, buf.Bytes()); err != nil {
			t.Fatal(err)
		}
	}
	f, err := os.Open(leakFile)
	if err != nil {
		t.Fatalf("%v (run with -update to create it)", err)
	}
	defer f.Close()
	w, err := weights.ReadMatrixMarket(f)
	if err != nil {
		t.Fatal(err)
	}
	fine, coarse := planeQuads(t, 6), planeQuads(t, 3)
	r, err := Audit(cellMap(w, fine, coarse), Options{SourceMesh: fine, TargetMesh: coarse, Thresholds: StrictThresholds()})
	if err != nil {
		t.Fatal(err)
	}
	expectInt(t, "entries", r.Entries, 36)
	expectInt(t, "sources", r.Sources, 36)
	expectInt(t, "targets", r.Targets, 9)
	expect(t, "conservation max defect", *r.ConservationMaxDefect, 0.01, tolPlanted)
	expectInt(t, "conservation at", r.Conservation.MaxDefectAt, 7)
	expect(t, "consistency max defect", r.ConsistencyMaxDefect, 0.0025, tolPlanted)
	expectInt(t, "consistency at", r.Consistency.MaxDefectAt, 0)
	expectInt(t, "negative weights", r.NegativeWeights, 0)
	expect(t, "constant mass error", r.Conservation.Fields[0].RelativeError, -0.0025/9, tolPlanted)
	if r.Passed {
		t.Error("leaking matrix passed the strict gates")
	}
	// The file round-trips exactly (17 significant digits).
	want := leakMap()
	for k := range want.Values {
		if w.Values[k] != want.Values[k] || w.ColIndex[k] != want.ColIndex[k] {
			t.Fatalf("entry %d differs from the hand-built map", k)
		}
	}
}
