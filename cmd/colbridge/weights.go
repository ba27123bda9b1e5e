package main

import (
	"fmt"
	"path/filepath"
	"runtime/debug"
	"strings"
	"sync/atomic"
	"time"

	"github.com/colbridge/colbridge/grids"
	"github.com/colbridge/colbridge/remap"
	"github.com/colbridge/colbridge/weights"
)

func runWeights(args []string, e *env) error {
	fs := newFlags("weights",
		"weights --source A.nc --target B.nc --method METHOD [--order K] -o MAP.nc\n       colbridge weights --plan PLAN.toml -o BUNDLE_DIR",
		"colbridge weights --source c24.nc --target ll.nc --method conservative --order 1 -o m.nc",
		"colbridge weights --source c24.nc --target ll.nc --method conservative --order 2 --workers 2 -o m2.nc",
		"colbridge weights --source ll.nc --target c24.nc --method interpolate -o bilin.nc",
		"colbridge weights --source ocean.nc --target ll.nc --method conservative --order 1 --source-mask sea --normalize whole -o m.nc",
		"colbridge weights --plan coupling.toml -o bundle/")
	src := fs.String("source", "", "source mesh file (UGRID, or a lat-lon grid with CF bounds)")
	tgt := fs.String("target", "", "target mesh file")
	method := fs.String("method", remap.Conservative, "conservative, interpolate or nearest")
	order := fs.Int("order", 1, "order of accuracy: 1-4 for conservative, 1 for interpolate, 0 for nearest")
	norm := fs.String("normalize", remap.ByCovered, "partly covered targets: 'covered' (divide by the covered part: keeps constants) or 'whole' (divide by the whole cell: keeps the integral)")
	srcMask := fs.String("source-mask", "", "variable of the source mesh file on its faces; cells where it is 0 take no part")
	tgtMask := fs.String("target-mask", "", "variable of the target mesh file on its faces; cells where it is 0 are not filled")
	plan := fs.String("plan", "", "coupling plan (TOML): build every map of the coupling into a bundle directory")
	out := fs.StringP("output", "o", "", "the map file to write (NetCDF; Matrix Market when the name ends in .mtx), or with --plan the bundle directory")
	workers := fs.Int("workers", 0, "goroutines to use (0: all cores); the map file is identical for any value")
	memory := fs.String("memory", "1536MiB", "soft limit on the heap (e.g. 1GiB, 4GiB): the collector works harder near it; the work never fails for it")
	quiet := fs.BoolP("quiet", "q", false, "no progress bar and no summary line")
	if err := parse(fs, args, e); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("weights: unexpected argument %q", fs.Arg(0))
	}
	if *out == "" {
		return usagef("weights: say where to write with -o")
	}
	limit, err := parseBytes(*memory)
	if err != nil {
		return usagef("weights: --memory: %v", err)
	}
	debug.SetMemoryLimit(limit)
	if *plan != "" {
		if *src != "" || *tgt != "" {
			return usagef("weights: --plan names the meshes itself; do not also give --source or --target")
		}
		return buildBundle(*plan, *out, *workers, *quiet, e)
	}
	if *src == "" || *tgt == "" {
		return usagef("weights: give --source and --target mesh files (or --plan)")
	}
	for _, in := range []string{*src, *tgt} {
		if samePath(in, *out) {
			return usagef("weights: the output %s is also an input; choose another name", *out)
		}
	}
	t0 := time.Now()
	sm, err := grids.ReadMesh(*src)
	if err != nil {
		return err
	}
	tm, err := grids.ReadMesh(*tgt)
	if err != nil {
		return err
	}
	opt := remap.Options{Method: *method, Order: *order, Normalization: *norm, Workers: *workers,
		Provenance: weights.NewProvenance(contentArgs(e.args))}
	if *srcMask != "" {
		if opt.SourceMask, err = grids.ReadCellMask(*src, *srcMask, sm); err != nil {
			return err
		}
	}
	if *tgtMask != "" {
		if opt.TargetMask, err = grids.ReadCellMask(*tgt, *tgtMask, tm); err != nil {
			return err
		}
	}
	var done atomic.Int64
	opt.Done = &done
	stop := startProgress(e, "weights", int64(sm.NumCells()), &done, *quiet)
	m, err := remap.Build(sm, tm, opt)
	stop()
	if err != nil {
		return usageOr(err, fmt.Errorf("weights %s → %s: %w", *src, *tgt, err))
	}
	if strings.HasSuffix(*out, ".mtx") {
		comment := fmt.Sprintf("colbridge %s map: %s order %d, rows = targets (%s), columns = sources (%s)", version, m.Method, m.Order, m.Target.MeshName, m.Source.MeshName)
		if err := weights.WriteMatrixMarketFile(*out, m.W, comment); err != nil {
			return err
		}
	} else if err := weights.WriteMap(*out, m); err != nil {
		return err
	}
	if !*quiet {
		fmt.Fprintf(e.stdout, "wrote %s: %s order %d, %d × %d, %d weights, %.1f s\n",
			*out, m.Method, m.Order, m.W.Rows, m.W.Cols, m.W.NNZ(), time.Since(t0).Seconds())
	}
	return nil
}

// usageOr returns a usage error when err comes from bad options, else alt.
func usageOr(err, alt error) error {
	if isBadOptions(err) {
		return usagef("%v", err)
	}
	return alt
}

// samePath reports whether two paths name the same file (after cleaning; symbolic links
// are resolved when the files exist).
func samePath(a, b string) bool {
	ra, err1 := filepath.Abs(a)
	rb, err2 := filepath.Abs(b)
	if err1 != nil || err2 != nil {
		return a == b
	}
	if ea, err := filepath.EvalSymlinks(ra); err == nil {
		ra = ea
	}
	if eb, err := filepath.EvalSymlinks(rb); err == nil {
		rb = eb
	}
	return ra == rb
}

// contentArgs returns the command line without the flags that do not change a file's
// content (output name, worker count, quiet), so maps built with any number of workers
// are byte-identical, provenance included.
func contentArgs(args []string) []string {
	var out []string
	for i := 0; i < len(args); i++ {
		a := args[i]
		name, _, hasValue := strings.Cut(a, "=")
		switch name {
		case "-o", "--output", "--workers", "--memory":
			if !hasValue {
				i++ // skip the separate value
			}
			continue
		case "-q", "--quiet":
			continue
		}
		if strings.HasPrefix(a, "-o") && len(a) > 2 && !strings.HasPrefix(a, "--") {
			continue // -oFILE
		}
		out = append(out, a)
	}
	if len(out) > 0 {
		out[0] = filepath.Base(out[0])
	}
	return out
}
