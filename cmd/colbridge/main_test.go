package main

import (
	"bytes"
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// runCmd runs a command line in-process and returns its exit code and output.
func runCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(args, &env{stdout: &out, stderr: &errb, args: append([]string{"colbridge"}, args...)})
	return code, out.String(), errb.String()
}

// TestMeshAcceptance is the foundation issue's acceptance check: a cubed sphere with
// N = 24 has 6N² = 3456 cells, 12N² = 6912 edges and 6N²+2 = 3458 vertices (REFERENCES.md,
// Euler characteristic) and its area is 4πR² within 1e-12 relative.
func TestMeshAcceptance(t *testing.T) {
	dir := t.TempDir()
	c24 := filepath.Join(dir, "c24.nc")
	if code, _, stderr := runCmd(t, "mesh", "make", "cubed", "--n", "24", "-o", c24); code != 0 {
		t.Fatalf("mesh make: exit %d: %s", code, stderr)
	}
	code, out, stderr := runCmd(t, "mesh", "info", c24, "--json")
	if code != 0 {
		t.Fatalf("mesh info: exit %d: %s", code, stderr)
	}
	var s struct {
		Cells, Edges, Vertices int
		Area                   float64
		Surface                string
		Radius                 float64
	}
	if err := json.Unmarshal([]byte(out), &s); err != nil {
		t.Fatalf("mesh info --json is not one JSON object: %v\n%s", err, out)
	}
	exact := 4 * math.Pi * s.Radius * s.Radius
	if s.Cells != 3456 || s.Edges != 6912 || s.Vertices != 3458 || s.Surface != "sphere" || math.Abs(s.Area-exact) > 1e-12*exact {
		t.Errorf("mesh info: %+v", s)
	}
}

// TestExitCodes: usage errors exit 2, --help exits 0 with examples, failures exit 1 and
// name the file (DESIGN.md §8).
func TestExitCodes(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		args     []string
		code     int
		contains string
	}{
		{[]string{}, 2, ""},
		{[]string{"frobnicate"}, 2, "unknown verb"},
		{[]string{"mesh", "make", "cubed", "--n", "4"}, 2, "-o FILE"},
		{[]string{"mesh", "make", "cubed", "--n", "0", "-o", filepath.Join(dir, "x.nc")}, 2, "n = 0"},
		{[]string{"mesh", "make", "cubed", "--bogus"}, 2, "bogus"},
		{[]string{"mesh", "info", filepath.Join(dir, "nope.nc")}, 1, "nope.nc"},
		{[]string{"mesh", "make", "cubed", "--help"}, 0, "Examples"},
		{[]string{"weights", "--help"}, 0, "Examples"},
		{[]string{"help"}, 0, "Verbs"},
	}
	for _, tc := range cases {
		code, out, stderr := runCmd(t, tc.args...)
		if code != tc.code || !strings.Contains(out+stderr, tc.contains) {
			t.Errorf("%v: exit %d (want %d), output %q", tc.args, code, tc.code, out+stderr)
		}
	}
}

// TestContentArgs: the recorded command drops flags that do not change the content.
func TestContentArgs(t *testing.T) {
	got := strings.Join(contentArgs([]string{"/usr/bin/colbridge", "weights", "--workers", "4", "-o", "m.nc", "--order=2", "-q", "--output=x"}), " ")
	if got != "colbridge weights --order=2" {
		t.Errorf("got %q", got)
	}
}

// TestWeightsAndAuditAcceptance is issue 3's and 5's acceptance path: build a first-order
// conservative map, audit it (conservation and consistency ≤ 1e-13, DESIGN.md §5), audit
// its Matrix Market export as a foreign matrix, and see a failing gate exit with 3.
func TestWeightsAndAuditAcceptance(t *testing.T) {
	dir := t.TempDir()
	p := func(n string) string { return filepath.Join(dir, n) }
	for _, args := range [][]string{
		{"mesh", "make", "cubed", "--n", "6", "-o", p("c.nc")},
		{"mesh", "make", "latlon", "--nlon", "36", "--nlat", "18", "-o", p("ll.nc")},
		{"weights", "--source", p("c.nc"), "--target", p("ll.nc"), "--method", "conservative", "--order", "1", "-o", p("m.nc")},
		{"weights", "--source", p("c.nc"), "--target", p("ll.nc"), "--method", "conservative", "--order", "2", "-o", p("m2.mtx")},
	} {
		if code, _, stderr := runCmd(t, args...); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, stderr)
		}
	}
	code, out, stderr := runCmd(t, "audit", p("m.nc"), "--json")
	if code != 0 {
		t.Fatalf("audit: exit %d: %s", code, stderr)
	}
	var r struct {
		Conservation *float64 `json:"conservation_max_defect"`
		Consistency  float64  `json:"consistency_max_defect"`
		Negative     int      `json:"negative_weights"`
		Entries      int      `json:"entries"`
		Passed       bool     `json:"passed"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if r.Conservation == nil || *r.Conservation > 1e-13 || r.Consistency > 1e-13 || r.Negative != 0 || r.Entries == 0 || !r.Passed {
		t.Errorf("audit: %+v", r)
	}
	// The order-2 matrix as a foreign Matrix Market file: conservative and consistent,
	// but with negative weights, so --strict (no negative weights) fails with exit 3.
	code, out, _ = runCmd(t, "audit", "--matrix", p("m2.mtx"), "--source", p("c.nc"), "--target", p("ll.nc"), "--strict")
	if code != 3 || !strings.Contains(out, "negative") {
		t.Errorf("strict audit of an order-2 matrix: exit %d, want 3\n%s", code, out)
	}
	code, _, _ = runCmd(t, "audit", "--matrix", p("m2.mtx"), "--source", p("c.nc"), "--target", p("ll.nc"), "--max-consistency-error", "1e-12", "--max-conservation-defect", "1e-12")
	if code != 0 {
		t.Errorf("order-2 matrix within its gates: exit %d", code)
	}
}
