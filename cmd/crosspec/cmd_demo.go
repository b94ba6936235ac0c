package main

import (
	"flag"
	"fmt"

	"crosspec/compare"
	"crosspec/cycles"
	"crosspec/dynsys"
	"crosspec/ulam/galerkin"
)

func init() { register(demoCommand) }

// demoSystem is the catalog entry the demo runs: an invented scenario.
const demoSystem = "stirred-loop"

var demoCommand = &command{
	name:    "demo",
	summary: "run check on the built-in demo (an invented stirred-loop scenario)",
	details: `Runs 'crosspec check --methods ulam,galerkin,cycles' on the catalog's
stirred-loop system, a made-up tracer return map with made-up parameters, for
its escape rate: the table of the three paths (Ulam's method, piecewise
polynomials of degree 6, the cycle expansion), the extrapolated values with their estimated error bars, the verdict and
the truncation advice. The report in every format, the plots and a manifest go
into the folder --out (default crosspec-demo).`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		out := fs.String("out", "crosspec-demo", "folder for the report, plots and manifest")
		quiet := fs.Bool("quiet", false, "no progress indicator")
		return func(args []string) int {
			if len(args) > 0 {
				return e.fail(usagef("expected no arguments, found %q", args[0]))
			}
			s, err := dynsys.Lookup(demoSystem, nil)
			if err != nil {
				return e.fail(err)
			}
			fmt.Fprintf(e.stdout, "crosspec demo: %s\n%s\n\n", s.Name, s.Description)
			runs, err := parseRuns(defaultCells(s, ""), "", s.Dim())
			if err != nil {
				return e.fail(err)
			}
			disc := discretization{basis: galerkin.Cells, degree: 6}
			sizes, err := parseSizes("", disc)
			if err != nil {
				return e.fail(err)
			}
			opts := checkOptions{
				methods:       map[string]bool{"ulam": true, "galerkin": true, "cycles": true},
				disc:          disc,
				galerkinSizes: sizes,
				quantity:      dynsys.EscapeRate,
				runs:          runs,
				points:        16,
				eigs:          3,
				tol:           compare.DefaultTolerance,
				expand:        expandOptions{maxLen: 12, function: cycles.SpectralDeterminant},
				format:        formatTable,
				outDir:        *out,
				progress:      !*quiet && isTerminal(e.stderr),
			}
			ctx, stop := interruptContext()
			defer stop()
			return runCheckCommand(ctx, e, s, opts, []string{"crosspec", "demo", "--out", *out})
		}
	},
}
