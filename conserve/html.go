package conserve

import (
	"bytes"
	"fmt"
	"html/template"
	"io"
	"os"
	"path/filepath"
)

var pageTemplate = template.Must(template.New("audit").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>colbridge audit: {{.Method}}</title>
<style>
body { font-family: sans-serif; margin: 2em auto; max-width: 62em; color: #222; }
h1 { font-size: 1.4em; } h2 { font-size: 1.15em; margin-top: 2em; }
table { border-collapse: collapse; font-size: 0.92em; }
td, th { padding: 0.25em 0.8em; border-bottom: 1px solid #ddd; text-align: left; vertical-align: top; }
td.v { font-family: monospace; white-space: nowrap; }
th { background: #f2f2f2; }
.pass { color: #176b2c; font-weight: bold; } .fail { color: #a11; font-weight: bold; }
figure { margin: 1.5em 0; } figcaption { font-size: 0.9em; color: #555; max-width: 48em; }
img { max-width: 100%; border: 1px solid #ddd; }
</style>
</head>
<body>
<h1>colbridge audit: {{.Method}}, order {{.Order}}</h1>
<p>From <b>{{.SourceLoc}}</b> ({{.Sources}} degrees of freedom, {{.SourceMesh}}) to
<b>{{.TargetLoc}}</b> ({{.Targets}}, {{.TargetMesh}}); {{.Entries}} weights.</p>
{{if .Passed}}<p class="pass">All gates passed.</p>{{else}}<p class="fail">{{len .Failures}} gate(s) failed:</p>
<ul>{{range .Failures}}<li><code>{{.Gate}}</code>: {{.Reason}} (<code>{{.Key}}</code>)</li>{{end}}</ul>{{end}}
<h2>Summary</h2>
<table>
<tr><th>check</th><th>quantity</th><th>value</th><th>detail</th></tr>
{{range .Rows}}<tr><td>{{.Check}}</td><td>{{.Quantity}}</td><td class="v">{{.Value}}</td><td>{{.Detail}}</td></tr>
{{end}}</table>
{{range .Plots}}<figure><h2>{{.Title}}</h2><img src="{{.File}}" alt="{{.Title}}"><figcaption>{{.Caption}}</figcaption></figure>
{{end}}{{if .Notes}}<h2>Notes</h2><ul>{{range .Notes}}<li>{{.}}</li>{{end}}</ul>{{end}}
<p style="font-size:0.85em;color:#666">The full figures are in <a href="audit.json">audit.json</a>.
These checks concern the numerics of the coupling maps, not forecast skill.</p>
</body>
</html>
`))

// WriteHTML writes one self-contained HTML page (inline style, no scripts) with the
// summary table, the gate verdict and the figures, which it links by file name (the PNG
// files written beside it by WriteReportDir).
func WriteHTML(out io.Writer, r *Report, plots []Plot) error {
	type row struct{ Check, Quantity, Value, Detail string }
	var rows []row
	for _, s := range r.summaryRows() {
		rows = append(rows, row{s.check, s.quantity, s.value, s.detail})
	}
	data := struct {
		Method, SourceLoc, TargetLoc, SourceMesh, TargetMesh string
		Order, Sources, Targets, Entries                     int
		Passed                                               bool
		Failures                                             []Failure
		Rows                                                 []row
		Plots                                                []Plot
		Notes                                                []string
	}{orDash(r.Method), r.Source.Location, r.Target.Location, orDash(r.Source.Mesh), orDash(r.Target.Mesh),
		r.Order, r.Sources, r.Targets, r.Entries, r.Passed, r.Failures, rows, plots, r.Notes}
	return pageTemplate.Execute(out, data)
}

// WriteReportDir writes the whole report into dir (created if missing): audit.json,
// audit.txt, one PNG per figure and index.html. Every file is written to a temporary
// name in dir and renamed, so no file is ever left half written. It returns the names of
// the files written.
func WriteReportDir(dir string, r *Report) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("audit report: %w", err)
	}
	plots, err := Plots(r)
	if err != nil {
		return nil, err
	}
	var files []string
	put := func(name string, b []byte) error {
		if err := writeAtomic(filepath.Join(dir, name), b); err != nil {
			return err
		}
		files = append(files, name)
		return nil
	}
	var buf bytes.Buffer
	if err := WriteJSON(&buf, r); err != nil {
		return nil, err
	}
	if err := put("audit.json", buf.Bytes()); err != nil {
		return nil, err
	}
	buf.Reset()
	if err := WriteText(&buf, r); err != nil {
		return nil, err
	}
	if err := put("audit.txt", buf.Bytes()); err != nil {
		return nil, err
	}
	for _, p := range plots {
		if err := put(p.File, p.PNG); err != nil {
			return nil, err
		}
	}
	buf.Reset()
	if err := WriteHTML(&buf, r, plots); err != nil {
		return nil, fmt.Errorf("audit report: index.html: %w", err)
	}
	if err := put("index.html", buf.Bytes()); err != nil {
		return nil, err
	}
	return files, nil
}

// writeAtomic writes b to path through a temporary file in the same directory.
func writeAtomic(path string, b []byte) error {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp*")
	if err != nil {
		return fmt.Errorf("audit report: %s: %w", path, err)
	}
	tmp := f.Name()
	_, werr := f.Write(b)
	cerr := f.Close()
	if werr != nil || cerr != nil {
		os.Remove(tmp)
		return fmt.Errorf("audit report: %s: %w", path, firstErr(werr, cerr))
	}
	if err := os.Chmod(tmp, 0o644); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("audit report: %s: %w", path, err)
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("audit report: %s: %w", path, err)
	}
	return nil
}

func firstErr(errs ...error) error {
	for _, e := range errs {
		if e != nil {
			return e
		}
	}
	return nil
}
