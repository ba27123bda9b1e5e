package scenario

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"time"

	"github.com/colbridge/colbridge/conserve"
	"github.com/colbridge/colbridge/remap"
	"github.com/colbridge/colbridge/weights"
)

// Output names inside the demo directory.
const (
	BundleDir     = "bundle"
	AuditDir      = "audit"
	ColumnsDir    = "columns"
	IncrementsDir = "dynamics_increments"
	PlotsDir      = "plots"
)

// Small is a scenario small enough for the tests and the README recipes: the same plan on
// a cubed sphere N = 8, icosahedral level 2 columns and 10 levels.
var Small = Scenario{
	DynamicsN: 8, ColumnsLevel: 2, NLev: 10, Top: 30e3, Stretch: 2,
	DynamicsFile: Default.DynamicsFile, ColumnsFile: Default.ColumnsFile,
	DynamicsStagg: Default.DynamicsStagg, ColumnsStagg: Default.ColumnsStagg,
}

// Run does the whole job on the scenario, in dir: meshes, plan and a day of dynamics
// fields (Prepare); the bundle of maps from the plan; its audit with a report; the
// restriction of the fields to the columns; one step of Held & Suarez physics there; the
// prolongation of its increments back to the dynamics; the conservation ledger and the
// plots. It prints what it does to w and ends with the ledger.
func (s Scenario) Run(dir string, w io.Writer) error {
	t0 := time.Now()
	fmt.Fprintln(w, "colbridge demo: a cubed-sphere dynamical core coupled to hexagonal physics columns (an invented scenario)")
	fmt.Fprintln(w, "1. meshes, levels, plan and a day of dynamics fields")
	if err := s.Prepare(dir, w); err != nil {
		return err
	}
	dyn, cols, lev, err := s.Meshes()
	if err != nil {
		return err
	}

	fmt.Fprintf(w, "2. weights: every map of %s into %s/\n", PlanFile, BundleDir)
	plan, err := remap.ReadPlan(filepath.Join(dir, PlanFile))
	if err != nil {
		return err
	}
	res, err := remap.BuildBundle(plan, filepath.Join(dir, BundleDir), remap.BundleOptions{Provenance: weights.NewProvenance([]string{"colbridge", "demo"})})
	if err != nil {
		return err
	}
	if res.UpToDate {
		fmt.Fprintf(w, "  up to date: %d map entries\n", len(res.Manifest.Maps))
	} else {
		fmt.Fprintf(w, "  %d map entries in %d files\n", len(res.Manifest.Maps), len(res.Written))
	}
	for _, warn := range res.Warnings {
		fmt.Fprintf(w, "  note: %s\n", warn)
	}

	fmt.Fprintf(w, "3. audit of the bundle (with the noise, damping and invisible-mode analyses), report in %s/index.html\n", AuditDir)
	br, err := conserve.AuditBundle(filepath.Join(dir, BundleDir), conserve.Options{Spectral: true})
	if err != nil {
		return err
	}
	if err := conserve.WriteBundleReportDir(filepath.Join(dir, AuditDir), br); err != nil {
		return err
	}
	for _, m := range br.Maps {
		r := m.Report
		cons := "   —    "
		if r.ConservationMaxDefect != nil {
			cons = fmt.Sprintf("%.1e", *r.ConservationMaxDefect)
		}
		pair := ""
		if r.Pair != nil {
			pair = fmt.Sprintf(", prolongation vs adjoint %.1e", r.Pair.RelativeDifference)
		}
		if ns := r.NullSpace; ns != nil && ns.Dimension > 0 && ns.Exact {
			pair += fmt.Sprintf(", %d invisible mode(s)", ns.Dimension)
		}
		if r.VectorComponent {
			fmt.Fprintf(w, "  %-34s vector component (scalar sums do not apply)%s\n", m.Name, pair)
			continue
		}
		fmt.Fprintf(w, "  %-34s conservation %s  consistency %.1e  negative weights %d%s\n", m.Name, cons, r.ConsistencyMaxDefect, r.NegativeWeights, pair)
	}

	applier, err := remap.NewBundleApplier(filepath.Join(dir, BundleDir))
	if err != nil {
		return err
	}
	in := filepath.Join(dir, FieldsFile)
	colState := remap.OutputPath(in, filepath.Join(dir, ColumnsDir))
	fmt.Fprintf(w, "4. restriction: %s → %s\n", FieldsFile, rel(dir, colState))
	if err := os.MkdirAll(filepath.Join(dir, ColumnsDir), 0o755); err != nil {
		return err
	}
	fr, err := applier.ApplyFile(in, colState, remap.ApplyOptions{Direction: remap.Restriction, History: "colbridge demo"})
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "  %d variables, %d values\n", len(fr.Vars), valuesOf(fr))

	fmt.Fprintf(w, "5. physics on the columns: Held & Suarez (1994) relaxation and drag over %.0f s\n", PhysicsStep)
	incr, err := Physics(colState, filepath.Join(dir, ColumnsDir), cols, lev)
	if err != nil {
		return err
	}
	dynIncr := remap.OutputPath(incr, filepath.Join(dir, IncrementsDir))
	fmt.Fprintf(w, "6. prolongation of the increments: %s → %s\n", rel(dir, incr), rel(dir, dynIncr))
	if err := os.MkdirAll(filepath.Join(dir, IncrementsDir), 0o755); err != nil {
		return err
	}
	if _, err := applier.ApplyFile(incr, dynIncr, remap.ApplyOptions{Direction: remap.Prolongation, History: "colbridge demo"}); err != nil {
		return err
	}

	fmt.Fprintln(w, "7. ledger and plots")
	rows, err := Ledger(ledgerFiles{dynState: in, colState: colState, colIncr: incr, dynIncr: dynIncr}, dyn, cols, lev)
	if err != nil {
		return err
	}
	noon := 2 // index of 12:00 in Hours
	plots, err := writePlots(filepath.Join(dir, PlotsDir), []fieldPlot{
		{file: in, name: "tracer", mesh: dyn, levels: lev.NLev(), time: noon, k: 0, out: "tracer_dynamics.png",
			title: "Tracer at 12:00, lowest layer, dynamics mesh", label: "kg/kg"},
		{file: colState, name: "tracer", mesh: cols, levels: lev.NLev(), time: noon, k: 0, out: "tracer_columns.png",
			title: "Tracer at 12:00, lowest layer, restricted to the columns", label: "kg/kg"},
		{file: incr, name: "theta", mesh: cols, levels: lev.NLev(), time: noon, k: 0, out: "theta_increment_columns.png",
			title: "Physics θ increment at 12:00, lowest layer (columns)", label: "K", diverging: true},
		{file: dynIncr, name: "theta", mesh: dyn, levels: lev.NLev() + 1, time: noon, k: 1, out: "theta_increment_dynamics.png",
			title: "θ increment prolonged to the dynamics, first interface above ground", label: "K", diverging: true},
	}, rows)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "  plots in %s/: %v\n", PlotsDir, plots)
	fmt.Fprintf(w, "done in %.1f s. Open %s for the audit and %s/ for the maps.\n", time.Since(t0).Seconds(), filepath.Join(dir, AuditDir, "index.html"), filepath.Join(dir, PlotsDir))
	fmt.Fprintln(w, "colbridge checks numerics, not forecast skill; operational use follows the centre's own validation.")
	fmt.Fprintln(w)
	return WriteLedger(w, rows)
}

func valuesOf(fr *remap.FileResult) int64 {
	var n int64
	for _, v := range fr.Vars {
		n += v.Values
	}
	return n
}

func rel(dir, p string) string {
	if r, err := filepath.Rel(dir, p); err == nil {
		return r
	}
	return p
}
