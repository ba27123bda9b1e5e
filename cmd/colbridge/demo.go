package main

import "github.com/colbridge/colbridge/internal/scenario"

func runDemo(args []string, e *env) error {
	fs := newFlags("demo", "demo [--out DIR] [--small]",
		"colbridge demo --out out/demo",
		"colbridge demo --out /tmp/try --small     # a few seconds: the same job on small meshes")
	out := fs.String("out", "out/demo", "directory for the demo's files")
	small := fs.Bool("small", false, "run the same job on small meshes (cubed sphere N=8, 10 levels)")
	if err := parse(fs, args, e); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usagef("demo: unexpected argument %q", fs.Arg(0))
	}
	s := scenario.Default
	if *small {
		s = scenario.Small
	}
	return s.Run(*out, e.stdout)
}
