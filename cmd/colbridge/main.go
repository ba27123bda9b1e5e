// Command colbridge builds, audits and applies the maps that couple a staggered dynamical
// core to column physics. Run "colbridge help" for the verbs.
//
// Exit codes: 0 success, 1 failure, 2 usage error, 3 an audit gate failed.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	flag "github.com/spf13/pflag"
)

// Exit codes, DESIGN.md §8.
const (
	exitOK      = 0
	exitFailure = 1
	exitUsage   = 2
	exitGate    = 3
)

// usageError is a mistake in the command line: exit code 2.
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

func usagef(format string, args ...any) error { return &usageError{fmt.Sprintf(format, args...)} }

// gateError means an audit gate failed: exit code 3.
type gateError struct{ msg string }

func (e *gateError) Error() string { return e.msg }

// verb is one command word.
type verb struct {
	name    string
	summary string
	run     func(args []string, env *env) error
}

// env carries the process's streams so tests can run verbs in-process.
type env struct {
	stdout, stderr io.Writer
	args           []string // the full command line, for provenance
}

func verbs() []verb {
	return []verb{
		{"mesh", "make meshes and describe mesh files", runMesh},
		{"weights", "build the maps between two meshes, or every map of a coupling plan", runWeights},
		{"audit", "check a map, a bundle or a foreign matrix: conservation, consistency, noise", runAudit},
		{"apply", "apply maps to NetCDF fields", runApply},
		{"demo", "run the whole job on the built-in demo scenario", runDemo},
	}
}

func main() {
	os.Exit(run(os.Args[1:], &env{stdout: os.Stdout, stderr: os.Stderr, args: os.Args}))
}

// run executes a command line and returns the exit code.
func run(args []string, e *env) int {
	if len(args) == 0 || args[0] == "help" || args[0] == "-h" || args[0] == "--help" {
		if len(args) > 1 {
			return run([]string{args[1], "--help"}, e)
		}
		printUsage(e.stdout)
		if len(args) == 0 {
			return exitUsage
		}
		return exitOK
	}
	if args[0] == "version" || args[0] == "--version" {
		fmt.Fprintln(e.stdout, "colbridge", version)
		return exitOK
	}
	for _, v := range verbs() {
		if v.name == args[0] {
			return exitCode(v.run(args[1:], e), e)
		}
	}
	fmt.Fprintf(e.stderr, "colbridge: unknown verb %q\n\n", args[0])
	printUsage(e.stderr)
	return exitUsage
}

func exitCode(err error, e *env) int {
	if err == nil {
		return exitOK
	}
	if errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	var ue *usageError
	if errors.As(err, &ue) {
		fmt.Fprintf(e.stderr, "colbridge: %v\n(run with --help for usage)\n", err)
		return exitUsage
	}
	var ge *gateError
	if errors.As(err, &ge) {
		fmt.Fprintf(e.stderr, "colbridge: %v\n", err)
		return exitGate
	}
	fmt.Fprintf(e.stderr, "colbridge: %v\n", err)
	return exitFailure
}

func printUsage(w io.Writer) {
	fmt.Fprintf(w, "colbridge %s — maps between a staggered dynamical core and column physics\n\n", version)
	fmt.Fprintln(w, "Usage: colbridge <verb> [flags] [arguments]")
	fmt.Fprintln(w, "\nVerbs:")
	for _, v := range verbs() {
		fmt.Fprintf(w, "  %-8s %s\n", v.name, v.summary)
	}
	fmt.Fprintln(w, "\nRun 'colbridge <verb> --help' for the flags and examples of a verb.")
	fmt.Fprintln(w, "Exit codes: 0 success, 1 failure, 2 usage error, 3 an audit gate failed.")
}

// newFlags returns a flag set whose --help prints the usage line, the flags and examples.
func newFlags(name, usage string, examples ...string) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SortFlags = false
	fs.Usage = func() {}
	fs.SetOutput(io.Discard)
	fs.Usage = func() {
		w := fs.Output()
		fmt.Fprintf(w, "Usage: colbridge %s\n\nFlags:\n%s", usage, fs.FlagUsages())
		if len(examples) > 0 {
			fmt.Fprintf(w, "\nExamples:\n  %s\n", strings.Join(examples, "\n  "))
		}
	}
	return fs
}

// parse parses args; --help prints the usage to stdout and returns flag.ErrHelp.
func parse(fs *flag.FlagSet, args []string, e *env) error {
	fs.SetOutput(e.stdout)
	err := fs.Parse(args)
	fs.SetOutput(e.stderr)
	if errors.Is(err, flag.ErrHelp) {
		return err
	}
	if err != nil {
		return usagef("%s: %v", fs.Name(), err)
	}
	return nil
}
