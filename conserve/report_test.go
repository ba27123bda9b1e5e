package conserve

import (
	"bytes"
	"encoding/json"
	"image/png"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// topKeys are the top-level keys of schema colbridge.audit/1 (package documentation);
// the first seven after the header are the ones DESIGN.md §8 requires of `audit --json`.
var topKeys = []string{
	"schema", "method", "order", "source", "target",
	"sources", "targets", "entries", "vector_component",
	"conservation_max_defect", "consistency_max_defect", "negative_weights", "passed",
	"failures", "conservation", "consistency", "bounds", "pair", "round_trip", "fourier",
	"sphere_noise", "null_space", "accuracy", "convergence", "notes",
}

// TestJSONSchema: the JSON report has exactly the documented top-level keys, the
// DESIGN.md §8 keys with the documented types, and sections not run are null.
func TestJSONSchema(t *testing.T) {
	fine, coarse := planeQuads(t, 8), planeQuads(t, 4)
	r, err := Audit(cellMap(coarsen2(4), fine, coarse), Options{})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, r); err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(buf.Bytes(), &m); err != nil {
		t.Fatal(err)
	}
	var got []string
	for k := range m {
		got = append(got, k)
	}
	want := append([]string(nil), topKeys...)
	sort.Strings(got)
	sort.Strings(want)
	if strings.Join(got, ",") != strings.Join(want, ",") {
		t.Errorf("top-level keys\n got %v\nwant %v", got, want)
	}
	for _, k := range []string{"conservation_max_defect", "consistency_max_defect", "negative_weights", "entries", "sources", "targets"} {
		if _, ok := m[k].(float64); !ok {
			t.Errorf("%s is %T, want a number", k, m[k])
		}
	}
	if _, ok := m["passed"].(bool); !ok {
		t.Errorf("passed is %T, want bool", m["passed"])
	}
	if m["entries"].(float64) != 64 || m["sources"].(float64) != 64 || m["targets"].(float64) != 16 {
		t.Errorf("entries/sources/targets = %v/%v/%v, want 64/64/16", m["entries"], m["sources"], m["targets"])
	}
	for _, k := range []string{"pair", "fourier", "sphere_noise", "null_space", "accuracy", "convergence"} {
		if m[k] != nil {
			t.Errorf("%s = %v, want null (not run)", k, m[k])
		}
	}
	if fs, ok := m["failures"].([]any); !ok || len(fs) != 0 {
		t.Errorf("failures = %v, want []", m["failures"])
	}

	// Without measures the conservation key is null, never a made-up number.
	mm := cellMap(coarsen2(4), fine, coarse)
	mm.Source.Measure = nil
	r, err = Audit(mm, Options{})
	if err != nil {
		t.Fatal(err)
	}
	buf.Reset()
	if err := WriteJSON(&buf, r); err != nil {
		t.Fatal(err)
	}
	m = nil
	json.Unmarshal(buf.Bytes(), &m)
	if v, ok := m["conservation_max_defect"]; !ok || v != nil {
		t.Errorf("conservation_max_defect = %v (present %v), want null", v, ok)
	}
	if len(r.Notes) == 0 {
		t.Error("no note says why conservation was skipped")
	}
}

// TestGateNotMeasured: a gate asked for on a check that did not run fails with "not
// measured" (it must not pass silently).
func TestGateNotMeasured(t *testing.T) {
	fine, coarse := planeQuads(t, 8), planeQuads(t, 4)
	r, err := Audit(cellMap(coarsen2(4), fine, coarse), Options{Thresholds: Thresholds{MaxNoise: 0.1}})
	if err != nil {
		t.Fatal(err)
	}
	if r.Passed || len(r.Failures) != 1 || r.Failures[0].Gate != "max-noise" || r.Failures[0].Value != nil {
		t.Errorf("failures %+v, want one unmeasured max-noise", r.Failures)
	}
}

// TestReportDir writes the whole report of a spectral audit (periodic plane) and of one
// on the cubed sphere, and checks every file: JSON parses, text has the verdict, each PNG
// decodes, the HTML links each PNG. Set COLBRIDGE_REPORT_DIR to keep the files.
func TestReportDir(t *testing.T) {
	dir := os.Getenv("COLBRIDGE_REPORT_DIR")
	if dir == "" {
		dir = t.TempDir()
	}
	fine, coarse := planeQuads(t, 16), planeQuads(t, 8)
	cf, cc := cubed(t, 8), cubed(t, 4)
	cases := []struct {
		name  string
		audit func() (*Report, error)
		plots []string
	}{
		{"plane", func() (*Report, error) {
			return Audit(cellMap(coarsen2(8), fine, coarse), Options{SourceMesh: fine, TargetMesh: coarse, Spectral: true})
		}, []string{"damping.png", "defects.png", "error_map.png", "noise_spectrum.png", "null_mode.png"}},
		{"sphere", func() (*Report, error) {
			return Audit(cellMap(cubeCoarsen2(cf, cc, 4), cf, cc), Options{SourceMesh: cf, TargetMesh: cc, Spectral: true})
		}, []string{"damping.png", "defects.png", "error_map.png", "null_mode.png"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r, err := c.audit()
			if err != nil {
				t.Fatal(err)
			}
			d := filepath.Join(dir, c.name)
			files, err := WriteReportDir(d, r)
			if err != nil {
				t.Fatal(err)
			}
			want := append([]string{"audit.json", "audit.txt"}, c.plots...)
			want = append(want, "index.html")
			if strings.Join(files, ",") != strings.Join(want, ",") {
				t.Errorf("files %v, want %v", files, want)
			}
			html, _ := os.ReadFile(filepath.Join(d, "index.html"))
			for _, p := range c.plots {
				f, err := os.Open(filepath.Join(d, p))
				if err != nil {
					t.Fatal(err)
				}
				img, err := png.Decode(f)
				f.Close()
				if err != nil {
					t.Errorf("%s: %v", p, err)
				} else if b := img.Bounds(); b.Dx() < 400 || b.Dy() < 250 {
					t.Errorf("%s: %v is too small to read", p, b)
				}
				if !bytes.Contains(html, []byte(`src="`+p+`"`)) {
					t.Errorf("index.html does not show %s", p)
				}
			}
			txt, _ := os.ReadFile(filepath.Join(d, "audit.txt"))
			if !bytes.Contains(txt, []byte("verdict: all gates passed")) || !bytes.Contains(txt, []byte("max |c_s − 1|")) {
				t.Errorf("audit.txt lacks the verdict or the conservation row:\n%s", txt)
			}
			entries, _ := os.ReadDir(d)
			for _, e := range entries {
				if strings.Contains(e.Name(), ".tmp") {
					t.Errorf("temporary file %s left behind", e.Name())
				}
			}
		})
	}
}
