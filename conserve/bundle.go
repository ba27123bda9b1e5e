package conserve

import (
	"bytes"
	"encoding/json"
	"fmt"
	"html/template"
	"io"
	"os"
	"path/filepath"
	"text/tabwriter"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// BundleSchemaVersion identifies the JSON layout of a bundle audit.
const BundleSchemaVersion = "colbridge.audit-bundle/1"

// BundleReport is the audit of every restriction/prolongation pair of a bundle.
type BundleReport struct {
	Schema   string        `json:"schema"`
	Bundle   string        `json:"bundle"`
	Plan     string        `json:"plan"`
	Passed   bool          `json:"passed"`
	Maps     []BundleEntry `json:"maps"`
	Failures []string      `json:"failures"`
	Notes    []string      `json:"notes"`
}

// BundleEntry is one audited pair: the restriction entry's name, its partner, and the
// report of the restriction audited with the partner as prolongation.
type BundleEntry struct {
	Name    string  `json:"name"`
	Partner string  `json:"partner"`
	Factor  string  `json:"factor"` // "horizontal" or "vertical"
	Report  *Report `json:"report"`
}

// AuditBundle audits every restriction of the bundle in dir together with its
// prolongation partner, horizontal and vertical factors separately (a factored map's
// properties are those of its factors: a tensor product of conservative, consistent maps
// is conservative and consistent). The meshes named in the manifest are used when they
// can be found next to the bundle (relative paths are relative to the bundle directory)
// and match the recorded fingerprints; otherwise positional test fields are skipped with
// a note. Shared factors are audited once.
func AuditBundle(dir string, opt Options) (*BundleReport, error) {
	man, err := weights.ReadManifest(dir)
	if err != nil {
		return nil, err
	}
	br := &BundleReport{Schema: BundleSchemaVersion, Bundle: dir, Plan: man.Plan, Passed: true,
		Maps: []BundleEntry{}, Failures: []string{}, Notes: []string{}}
	meshes := map[string]*grids.Mesh{}
	for _, ref := range []weights.MeshRef{man.Dynamics, man.Columns} {
		p := ref.File
		if !filepath.IsAbs(p) {
			p = filepath.Join(dir, p)
		}
		m, err := grids.ReadMesh(p)
		switch {
		case err != nil:
			br.Notes = append(br.Notes, fmt.Sprintf("mesh %s not read (%v): positional test fields skipped for its maps", ref.File, err))
		case m.Fingerprint() != ref.Fingerprint:
			br.Notes = append(br.Notes, fmt.Sprintf("mesh %s has fingerprint %s, the bundle was built for %s: not used", ref.File, m.Fingerprint(), ref.Fingerprint))
		default:
			meshes[ref.Fingerprint] = m
		}
	}
	done := map[string]bool{}
	load := func(f string) (*weights.Map, error) { return weights.ReadMap(filepath.Join(dir, f)) }
	for _, e := range man.Maps {
		if e.Direction != "restriction" {
			continue
		}
		var partner *weights.ManifestEntry
		if e.Partner != "" {
			p, ok := man.Find(e.Partner)
			if !ok {
				return nil, fmt.Errorf("%s: map %q names partner %q, which is not listed", dir, e.Name, e.Partner)
			}
			partner = p
		}
		type pair struct{ factor, r, p string }
		pairs := []pair{{"horizontal", e.File, ""}}
		if partner != nil {
			pairs[0].p = partner.File
		}
		if e.Vertical != "" {
			vp := ""
			if partner != nil {
				vp = partner.Vertical
			}
			pairs = append(pairs, pair{"vertical", e.Vertical, vp})
		}
		for _, pr := range pairs {
			key := pr.r + "|" + pr.p
			if done[key] {
				continue
			}
			done[key] = true
			r, err := load(pr.r)
			if err != nil {
				return nil, err
			}
			o := opt
			o.SourceMesh = meshes[r.Source.MeshFingerprint]
			o.TargetMesh = meshes[r.Target.MeshFingerprint]
			o.Prolongation = nil
			if pr.p != "" {
				if o.Prolongation, err = load(pr.p); err != nil {
					return nil, err
				}
			}
			rep, err := Audit(r, o)
			if err != nil {
				return nil, fmt.Errorf("%s: %s: %w", dir, pr.r, err)
			}
			name := e.Name
			if pr.factor == "vertical" {
				name += " (vertical)"
			}
			partnerName := ""
			if partner != nil {
				partnerName = partner.Name
			}
			br.Maps = append(br.Maps, BundleEntry{Name: name, Partner: partnerName, Factor: pr.factor, Report: rep})
			if !rep.Passed {
				br.Passed = false
				for _, f := range rep.Failures {
					br.Failures = append(br.Failures, fmt.Sprintf("%s: %s %s", name, f.Gate, f.Reason))
				}
			}
		}
	}
	return br, nil
}

// WriteBundleJSON writes the bundle report as one indented JSON object.
func WriteBundleJSON(out io.Writer, b *BundleReport) error {
	enc := json.NewEncoder(out)
	enc.SetIndent("", "  ")
	return enc.Encode(b)
}

// WriteBundleText writes an aligned summary: one line per audited map with its key
// figures and verdict, then the failures.
func WriteBundleText(out io.Writer, b *BundleReport) error {
	tw := tabwriter.NewWriter(out, 0, 0, 2, ' ', 0)
	verdict := "PASSED"
	if !b.Passed {
		verdict = "FAILED"
	}
	fmt.Fprintf(tw, "bundle audit\t%s\t%s\t%d maps\n", b.Bundle, verdict, len(b.Maps))
	fmt.Fprintln(tw, "map\tmethod\tconservation\tconsistency\tnegative\tpair difference\tround-trip mass\tverdict")
	for _, m := range b.Maps {
		r := m.Report
		cons := "—"
		if r.ConservationMaxDefect != nil {
			cons = e2(*r.ConservationMaxDefect)
		}
		pd, rt := "—", "—"
		if r.Pair != nil {
			pd = e2(r.Pair.RelativeDifference)
		}
		if r.RoundTrip != nil {
			rt = e2(r.RoundTrip.Dynamics.MaxMassError)
		}
		v := "ok"
		if !r.Passed {
			v = "FAILED"
		}
		consist, neg := e2(r.ConsistencyMaxDefect), fmt.Sprint(r.NegativeWeights)
		if r.VectorComponent {
			cons, consist, neg, rt = "vector", "vector", "vector", "—"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", m.Name, r.Method, cons, consist, neg, pd, rt, v)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	for _, f := range b.Failures {
		fmt.Fprintf(out, "gate failed: %s\n", f)
	}
	for _, n := range b.Notes {
		fmt.Fprintf(out, "note: %s\n", n)
	}
	return nil
}

// WriteBundleReportDir writes one report directory per audited map (dir/NN-name/) and an
// index.html with the summary table linking them, and bundle.json.
func WriteBundleReportDir(dir string, b *BundleReport) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("audit report: %w", err)
	}
	type row struct {
		Dir, Name, Method, Cons, Consist, Verdict string
		Negative                                  int
	}
	var rows []row
	for i, m := range b.Maps {
		sub := fmt.Sprintf("%02d-%s", i+1, sanitize(m.Name))
		if _, err := WriteReportDir(filepath.Join(dir, sub), m.Report); err != nil {
			return err
		}
		cons := "—"
		if m.Report.ConservationMaxDefect != nil {
			cons = e2(*m.Report.ConservationMaxDefect)
		}
		v := "passed"
		if !m.Report.Passed {
			v = "FAILED"
		}
		rows = append(rows, row{sub, m.Name, m.Report.Method, cons, e2(m.Report.ConsistencyMaxDefect), v, m.Report.NegativeWeights})
	}
	var buf bytes.Buffer
	if err := WriteBundleJSON(&buf, b); err != nil {
		return err
	}
	if err := writeAtomic(filepath.Join(dir, "bundle.json"), buf.Bytes()); err != nil {
		return err
	}
	buf.Reset()
	if err := bundleIndex.Execute(&buf, struct {
		B    *BundleReport
		Rows []row
	}{b, rows}); err != nil {
		return err
	}
	return writeAtomic(filepath.Join(dir, "index.html"), buf.Bytes())
}

func sanitize(s string) string {
	out := make([]byte, 0, len(s))
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', c >= '0' && c <= '9', c == '.', c == '-', c == '_':
			out = append(out, c)
		default:
			out = append(out, '_')
		}
	}
	return string(out)
}

var bundleIndex = template.Must(template.New("bundle").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>colbridge bundle audit</title>
<style>body{font-family:sans-serif;margin:2em;max-width:70em}table{border-collapse:collapse}
td,th{border:1px solid #bbb;padding:.3em .7em;text-align:left}th{background:#eef}
.bad{color:#b00;font-weight:bold}.ok{color:#060}</style></head><body>
<h1>Bundle audit: {{.B.Bundle}}</h1>
<p>Plan {{.B.Plan}} — {{if .B.Passed}}<span class="ok">all gates passed</span>{{else}}<span class="bad">gates failed</span>{{end}}</p>
<table><tr><th>map</th><th>method</th><th>conservation max |c−1|</th><th>consistency max |Σw−1|</th><th>negative weights</th><th>verdict</th></tr>
{{range .Rows}}<tr><td><a href="{{.Dir}}/index.html">{{.Name}}</a></td><td>{{.Method}}</td><td>{{.Cons}}</td><td>{{.Consist}}</td><td>{{.Negative}}</td><td>{{.Verdict}}</td></tr>
{{end}}</table>
{{if .B.Failures}}<h2>Failed gates</h2><ul>{{range .B.Failures}}<li>{{.}}</li>{{end}}</ul>{{end}}
{{if .B.Notes}}<h2>Notes</h2><ul>{{range .B.Notes}}<li>{{.}}</li>{{end}}</ul>{{end}}
<p>colbridge checks numerics, not forecast skill.</p>
</body></html>
`))
