package main

import "github.com/colbridge/colbridge/internal/scenario"

func runDemo(args []string, e *env) error {
	fs := newFlags("demo", "demo [--out DIR]",
		"colbridge demo --out out/demo")
	out := fs.String("out", "out/demo", "directory for the demo's files")
	if err := parse(fs, args, e); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("demo: unexpected argument %q", fs.Arg(0))
	}
	return scenario.Default.Run(*out, e.stdout)
}
