package main

import (
	"flag"
	"fmt"

	"crosspec/dynsys"
)

// demoSystem is the catalog entry the demo runs: an invented scenario.
const demoSystem = "stirred-loop"

func init() { register(demoCommand) }

var demoCommand = &command{
	name:    "demo",
	summary: "run the built-in demo (an invented stirred-loop scenario)",
	details: `The demo system is invented for illustration; its data are made up.`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		return func(args []string) int {
			if len(args) > 0 {
				return e.fail(usagef("expected no arguments, found %q", args[0]))
			}
			s, err := dynsys.Lookup(demoSystem, nil)
			if err != nil {
				return e.fail(err)
			}
			fmt.Fprintln(e.stdout, "crosspec demo: the invented stirred-loop system (made-up scenario and parameters)")
			fmt.Fprintln(e.stdout)
			if err := describeSystem(e.stdout, s, nil); err != nil {
				return e.fail(err)
			}
			return exitOK
		}
	},
}
