package main

import (
	"errors"
	"fmt"

	"github.com/colbridge/colbridge/remap"
	"github.com/colbridge/colbridge/weights"
)

// buildBundle builds every map of a coupling plan into a bundle directory.
func buildBundle(planPath, out string, workers int, quiet bool, e *env) error {
	p, err := remap.ReadPlan(planPath)
	if err != nil {
		var pe *remap.PlanError
		if errors.As(err, &pe) {
			return usagef("%v", err)
		}
		return err
	}
	for _, m := range []string{p.MeshPath(p.Dynamics), p.MeshPath(p.Columns), planPath} {
		if samePath(m, out) {
			return usagef("weights: the bundle directory %s is also an input", out)
		}
	}
	opt := remap.BundleOptions{Workers: workers, Provenance: weights.NewProvenance(contentArgs(e.args))}
	if !quiet {
		opt.Log = func(format string, args ...any) { fmt.Fprintf(e.stdout, "  "+format+"\n", args...) }
	}
	res, err := remap.BuildBundle(p, out, opt)
	if err != nil {
		var pe *remap.PlanError
		if errors.As(err, &pe) {
			return usagef("%v", err)
		}
		return err
	}
	for _, w := range res.Warnings {
		fmt.Fprintf(e.stderr, "colbridge: warning: %s\n", w)
	}
	if quiet {
		return nil
	}
	if res.UpToDate {
		fmt.Fprintf(e.stdout, "%s is up to date (%d maps for plan %s)\n", out, len(res.Manifest.Maps), p.Path)
		return nil
	}
	fmt.Fprintf(e.stdout, "wrote %s: %d files, %d map entries in %s\n", out, len(res.Written), len(res.Manifest.Maps), weights.ManifestName)
	return nil
}
