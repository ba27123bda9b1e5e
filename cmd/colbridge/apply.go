package main

import (
	"fmt"
	"math"
	"os"
	"runtime/debug"
	"strconv"
	"strings"
	"sync/atomic"

	"github.com/colbridge/colbridge/remap"
)

func runApply(args []string, e *env) error {
	fs := newFlags("apply",
		"apply --map MAP.nc | --bundle DIR --out-dir DIR [flags] INPUT.nc...",
		"colbridge apply --bundle bundle/ --out-dir phys/ dyn_0001.nc dyn_0002.nc",
		"colbridge apply --bundle bundle/ --out-dir back/ --direction prolongation phys/dyn_0001.nc",
		"colbridge apply --map c96_to_1deg.nc --out-dir ll/ --vars t2m,precip --type float32 --deflate 1 run/*.nc",
		"colbridge apply --map m2.nc --out-dir ll/ --bounds --memory 512MiB --skip-existing run/*.nc",
		"colbridge apply --map m.nc --target-mesh ll.nc --out-dir ll/ fields.nc")
	mapFile := fs.String("map", "", "a map file: applied to every horizontal slice of each field on its source")
	bundle := fs.String("bundle", "", "a bundle directory (colbridge weights --plan): every map of the coupling, vertical factors and vectors included")
	outDir := fs.String("out-dir", "", "directory for the outputs (created if needed); each keeps its input's file name")
	vars := fs.StringSlice("vars", nil, "input variables to map (comma-separated); default: every variable the maps apply to")
	direction := fs.String("direction", "", "bundles: restriction (dynamics → columns) or prolongation (columns → dynamics); default: told from the file's mesh")
	typ := fs.String("type", "", "output values: float32 or float64 (default: float32 for float32 inputs, float64 otherwise)")
	deflate := fs.Int("deflate", 0, "zlib level 1-9 for the outputs (with shuffle); 0 writes them uncompressed")
	memory := fs.String("memory", "2GiB", "memory budget for maps and field buffers (e.g. 512MiB, 2GiB, 4GB)")
	workers := fs.Int("workers", 0, "goroutines for the arithmetic (0: all cores)")
	parallel := fs.Int("parallel-files", 2, "input files processed at the same time (they share the memory budget)")
	skip := fs.Bool("skip-existing", false, "leave outputs that already exist alone (for re-runs)")
	noSync := fs.Bool("no-sync", false, "do not fsync outputs before renaming them into place (faster, e.g. on parallel file systems; outputs still appear only when complete, but a power failure may leave an empty one)")
	bounds := fs.Bool("bounds", false, "keep each target value within the range of the source values its map row uses, keeping the integral (clip-and-assured-sum, Bradley et al. 2019); for maps of order 2 and higher")
	targetMesh := fs.String("target-mesh", "", "mesh file of the target whose UGRID topology goes into the outputs (default: the bundle's, when found beside it)")
	quiet := fs.BoolP("quiet", "q", false, "no progress bar and no summary lines (failures are still reported)")
	if err := parse(fs, args, e); err != nil {
		return err
	}
	if (*mapFile == "") == (*bundle == "") {
		return usagef("apply: give exactly one of --map and --bundle")
	}
	if *outDir == "" {
		return usagef("apply: say where the outputs go with --out-dir")
	}
	if fs.NArg() == 0 {
		return usagef("apply: name at least one input file")
	}
	switch *direction {
	case "", remap.Restriction, remap.Prolongation:
	default:
		return usagef("apply: --direction must be %s or %s, not %q", remap.Restriction, remap.Prolongation, *direction)
	}
	if *direction != "" && *mapFile != "" {
		return usagef("apply: --direction is for bundles; a map file has one direction")
	}
	switch *typ {
	case "", remap.TypeFloat32, remap.TypeFloat64:
	default:
		return usagef("apply: --type must be float32 or float64, not %q", *typ)
	}
	if *deflate < 0 || *deflate > 9 {
		return usagef("apply: --deflate must be 0 to 9, not %d", *deflate)
	}
	budget, err := parseBytes(*memory)
	if err != nil {
		return usagef("apply: --memory: %v", err)
	}
	if *parallel < 1 {
		return usagef("apply: --parallel-files must be at least 1")
	}
	inputs := fs.Args()
	for _, in := range inputs {
		if st, err := os.Stat(in); err == nil && st.IsDir() {
			return usagef("apply: %s is a directory; name the field files", in)
		}
	}

	var a *remap.Applier
	if *mapFile != "" {
		a, err = remap.NewMapApplier(*mapFile)
	} else {
		a, err = remap.NewBundleApplier(*bundle)
	}
	if err != nil {
		return err
	}
	if err := a.CheckOutputs(inputs, *outDir); err != nil {
		return usagef("apply: %v", err)
	}
	// The budget covers the Go heap too: let the collector work to stay below it.
	debug.SetMemoryLimit(budget)

	var total int64
	for _, in := range inputs {
		if st, err := os.Stat(in); err == nil {
			total += st.Size()
		}
	}
	var done atomic.Int64
	opt := remap.ApplyOptions{
		Vars: *vars, Direction: *direction, Type: *typ, Deflate: *deflate, Memory: budget, NoSync: *noSync,
		Workers: *workers, Bounds: *bounds, TargetMesh: *targetMesh,
		History: strings.Join(contentArgs(e.args), " "), Progress: &done,
	}
	stop := startProgress(e, "apply", total, &done, *quiet)
	var failed []string
	results := a.ApplyFiles(inputs, *outDir, opt, *parallel, *skip, func(r *remap.FileResult) {
		stop() // the bar and the lines must not mix; it restarts below
		if r.Err != nil {
			fmt.Fprintf(e.stderr, "colbridge: apply %s: FAILED: %v\n", r.Input, r.Err)
		} else if !*quiet {
			fmt.Fprintln(e.stdout, summaryLine(r))
		}
		stop = startProgress(e, "apply", total, &done, *quiet)
	})
	stop()
	for _, r := range results {
		if r.Err != nil {
			failed = append(failed, r.Input)
		}
	}
	if len(failed) > 0 {
		return fmt.Errorf("apply: %d of %d files failed: %s", len(failed), len(results), strings.Join(failed, ", "))
	}
	return nil
}

// summaryLine is the one line printed per file.
func summaryLine(r *remap.FileResult) string {
	if r.Skipped {
		return fmt.Sprintf("%s: skipped, %s exists", r.Input, r.Output)
	}
	var names []string
	var missSrc, miss, clipped, infeasible int64
	recs := 0
	for _, v := range r.Vars {
		names = append(names, v.Name)
		missSrc += v.MissingSources
		miss += v.Missing
		clipped += v.Clipped
		infeasible += v.Infeasible
		recs = max(recs, v.Records)
	}
	dir := ""
	if r.Direction != "" {
		dir = r.Direction + ", "
	}
	s := fmt.Sprintf("%s → %s: %s%d variables (%s), %d records, %s read in %.1f s",
		r.Input, r.Output, dir, len(r.Vars), strings.Join(names, ", "), recs, humanBytes(r.BytesRead), r.Duration.Seconds())
	if missSrc > 0 {
		s += fmt.Sprintf("; %d missing source values → %d target values set to fill", missSrc, miss)
	}
	if clipped > 0 {
		s += fmt.Sprintf("; bounds moved %d values", clipped)
		if infeasible > 0 {
			s += fmt.Sprintf(" (%d slices could not keep their bounds and their integral)", infeasible)
		}
	}
	return s
}

func humanBytes(b int64) string {
	switch {
	case b >= 1<<30:
		return fmt.Sprintf("%.2f GiB", float64(b)/(1<<30))
	case b >= 1<<20:
		return fmt.Sprintf("%.1f MiB", float64(b)/(1<<20))
	case b >= 1<<10:
		return fmt.Sprintf("%.1f KiB", float64(b)/(1<<10))
	}
	return fmt.Sprintf("%d B", b)
}

// parseBytes reads a size: a number with an optional unit K, M, G, T (binary, as job
// schedulers use them), KiB, MiB, GiB, TiB (binary) or KB, MB, GB, TB (decimal), B.
func parseBytes(s string) (int64, error) {
	t := strings.TrimSpace(s)
	i := strings.IndexFunc(t, func(r rune) bool { return (r < '0' || r > '9') && r != '.' && r != 'e' && r != 'E' && r != '+' })
	num, unit := t, ""
	if i >= 0 {
		num, unit = t[:i], strings.TrimSpace(t[i:])
	}
	x, err := strconv.ParseFloat(num, 64)
	if err != nil || !(x > 0) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%q is not a positive size (e.g. 512MiB, 2GiB)", s)
	}
	mult := map[string]float64{"": 1, "B": 1,
		"K": 1 << 10, "KiB": 1 << 10, "KB": 1e3,
		"M": 1 << 20, "MiB": 1 << 20, "MB": 1e6,
		"G": 1 << 30, "GiB": 1 << 30, "GB": 1e9,
		"T": 1 << 40, "TiB": 1 << 40, "TB": 1e12}
	m, ok := mult[unit]
	if !ok {
		return 0, fmt.Errorf("unknown unit %q in %q (use K, M, G, T, KiB ... or KB ...)", unit, s)
	}
	v := x * m
	if v > math.MaxInt64/2 {
		return 0, fmt.Errorf("%q is too large", s)
	}
	if v < 1<<20 {
		return 0, fmt.Errorf("%q is less than 1 MiB", s)
	}
	return int64(v), nil
}
