package main

import (
	"encoding/json"
	"fmt"
	"os"
	"strings"

	flag "github.com/spf13/pflag"

	"github.com/colbridge/colbridge/conserve"
	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/weights"
)

// gateFlags binds the threshold flags to a Thresholds value.
func gateFlags(fs *flag.FlagSet, t *conserve.Thresholds) *bool {
	fs.Float64Var(&t.MaxConservationDefect, "max-conservation-defect", 0, "gate: max |c_s − 1| over fully covered sources")
	fs.Float64Var(&t.MaxConsistencyDefect, "max-consistency-error", 0, "gate: max |Σ_s W_ts − 1| over covered targets")
	fs.Float64Var(&t.MaxMassError, "max-mass-error", 0, "gate: largest relative change of the global integral of a test field")
	fs.BoolVar(&t.NoNegativeWeights, "no-negative", false, "gate: no negative weights")
	fs.Float64Var(&t.MaxOvershoot, "max-overshoot", 0, "gate: largest new local extremum on test fields (relative)")
	fs.Float64Var(&t.MaxPairDifference, "max-pair-difference", 0, "gate: ‖P − W*‖/‖W*‖ of a restriction and its prolongation")
	fs.Float64Var(&t.MaxRoundTripMassError, "max-round-trip-mass-error", 0, "gate: mass change of a dynamics-side round trip")
	fs.Float64Var(&t.MaxIdempotenceDefect, "max-idempotence-defect", 0, "gate: ‖R² − R‖ of the round trip where it must be a projection")
	fs.Float64Var(&t.MaxNoise, "max-noise", 0, "gate: share of grid-scale noise after a round trip of smooth input (needs --spectral)")
	fs.Float64Var(&t.MinSmoothResponse, "min-smooth-response", 0, "gate: amplitude kept by a round trip at 8 grid lengths and longer (needs --spectral)")
	fs.Float64Var(&t.MaxL2Error, "max-l2-error", 0, "gate: normalised L2 error on the analytic test fields (needs meshes)")
	return fs.Bool("strict", false, "gates for a first-order conservative monotone map: conservation, consistency and mass to 1e-12, no negative weights, no new extrema")
}

func runAudit(args []string, e *env) error {
	fs := newFlags("audit",
		"audit MAP.nc|BUNDLE_DIR [--source A.nc --target B.nc] [--json] [--report DIR] [gates]\n"+
			"       colbridge audit --matrix M.mtx --source A.nc --target B.nc [--json] [gates]\n"+
			"       colbridge audit --triplets F.nc --rows VAR --cols VAR --values VAR --source A.nc --target B.nc\n"+
			"       colbridge audit --before F.nc --after G.nc --var NAME --source A.nc --target B.nc",
		"colbridge audit m.nc --json",
		"colbridge audit m.nc --source c24.nc --target ll.nc --report audit/ --max-mass-error 1e-13",
		"colbridge audit bundle/ --max-consistency-error 1e-12 --no-negative || echo 'coupling failed its gates'",
		"colbridge audit --matrix theirs.mtx --source atm.nc --target ocn.nc --strict",
		"colbridge audit --triplets rmp.nc --rows dst --cols src --values w --one-based --source a.nc --target b.nc",
		"colbridge audit --before dyn_state.nc --after phys_state.nc --var tracer --source dyn.nc --target cols.nc")
	src := fs.String("source", "", "source mesh file: measures (cell areas), positional test fields, maps of the error")
	tgt := fs.String("target", "", "target mesh file")
	matrix := fs.String("matrix", "", "a foreign matrix in Matrix Market form: rows are targets, columns sources, 1-based")
	trip := fs.String("triplets", "", "a foreign matrix as triplets in a NetCDF file (with --rows, --cols, --values)")
	rowsVar := fs.String("rows", "", "variable holding the target (row) index of each entry")
	colsVar := fs.String("cols", "", "variable holding the source (column) index of each entry")
	valsVar := fs.String("values", "", "variable holding the weight of each entry")
	oneBased := fs.Bool("one-based", false, "the triplet indices count from 1")
	before := fs.String("before", "", "field file on the source mesh, before a coupler ran")
	after := fs.String("after", "", "field file on the target mesh, after it ran")
	varName := fs.String("var", "", "the variable compared by --before/--after")
	asJSON := fs.Bool("json", false, "print one JSON object on stdout (schema in the conserve package documentation)")
	report := fs.String("report", "", "write PNG plots, the JSON and an HTML page into this directory")
	spectral := fs.Bool("spectral", false, "also run the noise, damping and invisible-mode analyses (slower)")
	var th conserve.Thresholds
	strict := gateFlags(fs, &th)
	if err := parse(fs, args, e); err != nil {
		return err
	}
	if *strict {
		s := conserve.StrictThresholds()
		mergeThresholds(&th, s)
	}
	opt := conserve.Options{Spectral: *spectral, Thresholds: th}
	sm, tm, err := readMeshPair(*src, *tgt)
	if err != nil {
		return err
	}

	switch {
	case *before != "" || *after != "":
		if *before == "" || *after == "" || *varName == "" || sm == nil || tm == nil {
			return usagef("audit: a field pair needs --before, --after, --var, --source and --target")
		}
		rep, err := conserve.CheckFieldPair(*before, *after, *varName, sm.CellArea, tm.CellArea)
		if err != nil {
			return err
		}
		if *asJSON {
			enc := json.NewEncoder(e.stdout)
			enc.SetIndent("", "  ")
			if err := enc.Encode(rep); err != nil {
				return err
			}
		} else {
			fmt.Fprintf(e.stdout, "field %q: %d slices, largest relative change of the global integral %.3e (missing values: %d before, %d after)\n",
				rep.Variable, len(rep.Slices), rep.MaxRelativeError, rep.MissingBefore, rep.MissingAfter)
		}
		if th.MaxMassError > 0 && rep.MaxRelativeError > th.MaxMassError {
			return &gateError{fmt.Sprintf("audit: max-mass-error: %.3e > %.3e", rep.MaxRelativeError, th.MaxMassError)}
		}
		return nil
	case *matrix != "" || *trip != "":
		if sm == nil || tm == nil {
			return usagef("audit: a foreign matrix needs --source and --target mesh files for its measures")
		}
		var w *weights.CSR
		if *matrix != "" {
			f, err := os.Open(*matrix)
			if err != nil {
				return err
			}
			w, err = weights.ReadMatrixMarket(f)
			f.Close()
			if err != nil {
				return fmt.Errorf("%s: %w", *matrix, err)
			}
		} else {
			if *rowsVar == "" || *colsVar == "" || *valsVar == "" {
				return usagef("audit: --triplets needs --rows, --cols and --values")
			}
			if w, err = weights.ReadTriplets(*trip, weights.TripletNames{Row: *rowsVar, Col: *colsVar, Value: *valsVar, OneBased: *oneBased}, tm.NumCells(), sm.NumCells()); err != nil {
				return err
			}
		}
		if w.Rows != tm.NumCells() || w.Cols != sm.NumCells() {
			return fmt.Errorf("audit: the matrix is %d × %d but the target mesh %s has %d cells and the source mesh %s has %d", w.Rows, w.Cols, *tgt, tm.NumCells(), *src, sm.NumCells())
		}
		m := &weights.Map{W: w, Method: "foreign",
			Source: weights.Side{MeshName: sm.Name, MeshFingerprint: sm.Fingerprint(), Location: grids.Location{H: grids.Cell}, Size: sm.NumCells(), Measure: sm.CellArea},
			Target: weights.Side{MeshName: tm.Name, MeshFingerprint: tm.Fingerprint(), Location: grids.Location{H: grids.Cell}, Size: tm.NumCells(), Measure: tm.CellArea}}
		opt.SourceMesh, opt.TargetMesh = sm, tm
		return auditOne(m, opt, *asJSON, *report, e)
	}
	if fs.NArg() != 1 {
		return usagef("audit: give one map file or bundle directory (or --matrix, --triplets, --before/--after)")
	}
	in := fs.Arg(0)
	if st, err := os.Stat(in); err == nil && st.IsDir() {
		br, err := conserve.AuditBundle(in, opt)
		if err != nil {
			return err
		}
		if *report != "" {
			if err := conserve.WriteBundleReportDir(*report, br); err != nil {
				return err
			}
		}
		if *asJSON {
			err = conserve.WriteBundleJSON(e.stdout, br)
		} else {
			err = conserve.WriteBundleText(e.stdout, br)
		}
		if err != nil {
			return err
		}
		if !br.Passed {
			return &gateError{fmt.Sprintf("audit: %d gates failed in %s", len(br.Failures), in)}
		}
		return nil
	}
	m, err := weights.ReadMap(in)
	if err != nil {
		return err
	}
	for _, c := range []struct {
		mesh *grids.Mesh
		side weights.Side
		path string
		name string
	}{{sm, m.Source, *src, "source"}, {tm, m.Target, *tgt, "target"}} {
		if c.mesh != nil && c.side.MeshFingerprint != "" && c.mesh.Fingerprint() != c.side.MeshFingerprint {
			return fmt.Errorf("audit: %s mesh %s has fingerprint %s, but the map %s was built for %s (%s)", c.name, c.path, c.mesh.Fingerprint(), in, c.side.MeshFingerprint, c.side.MeshName)
		}
	}
	opt.SourceMesh, opt.TargetMesh = sm, tm
	return auditOne(m, opt, *asJSON, *report, e)
}

func auditOne(m *weights.Map, opt conserve.Options, asJSON bool, report string, e *env) error {
	r, err := conserve.Audit(m, opt)
	if err != nil {
		return err
	}
	if report != "" {
		if _, err := conserve.WriteReportDir(report, r); err != nil {
			return err
		}
	}
	if asJSON {
		err = conserve.WriteJSON(e.stdout, r)
	} else {
		err = conserve.WriteText(e.stdout, r)
	}
	if err != nil {
		return err
	}
	if !r.Passed {
		var names []string
		for _, f := range r.Failures {
			names = append(names, f.Gate)
		}
		return &gateError{"audit: gates failed: " + strings.Join(names, ", ")}
	}
	return nil
}

// mergeThresholds fills the gates of t that are off with those of s.
func mergeThresholds(t *conserve.Thresholds, s conserve.Thresholds) {
	set := func(dst *float64, v float64) {
		if *dst == 0 {
			*dst = v
		}
	}
	set(&t.MaxConservationDefect, s.MaxConservationDefect)
	set(&t.MaxConsistencyDefect, s.MaxConsistencyDefect)
	set(&t.MaxMassError, s.MaxMassError)
	set(&t.MaxOvershoot, s.MaxOvershoot)
	t.NoNegativeWeights = t.NoNegativeWeights || s.NoNegativeWeights
}

// readMeshPair reads the mesh files that are named ("" means none), both at once: the
// NetCDF reads are serialised anyway, but building the meshes' geometry runs side by side.
func readMeshPair(a, b string) (ma, mb *grids.Mesh, err error) {
	var errA, errB error
	done := make(chan struct{})
	go func() {
		defer close(done)
		if b != "" {
			mb, errB = grids.ReadMesh(b)
		}
	}()
	if a != "" {
		ma, errA = grids.ReadMesh(a)
	}
	<-done
	if errA != nil {
		return nil, nil, errA
	}
	return ma, mb, errB
}
