package main

import (
	"flag"
	"fmt"

	"crosspec/dynsys"
)

func init() { register(systemsCommand) }

var systemsCommand = &command{
	name:    "systems",
	summary: "list the built-in catalog of systems",
	details: `Each catalog system can be named in place of a system file. Known values
(with their published sources) are what the tests and the calibration of the
error bars check against; 'crosspec show NAME' prints them.`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		format := fs.String("format", formatTable, "output format: table, csv, json, latex or markdown")
		return func(args []string) int {
			if len(args) > 0 {
				return e.fail(usagef("expected no arguments, found %q", args[0]))
			}
			if err := checkFormat(*format); err != nil {
				return e.fail(err)
			}
			entries, err := dynsys.Catalog()
			if err != nil {
				return e.fail(err)
			}
			if *format == formatJSON {
				type entry struct {
					Name        string `json:"name"`
					Dim         int    `json:"dim"`
					Closed      bool   `json:"closed"`
					References  int    `json:"references"`
					Description string `json:"description"`
				}
				out := struct {
					Systems []entry `json:"systems"`
				}{}
				for _, c := range entries {
					out.Systems = append(out.Systems, entry{c.Name, c.Dim, c.Closed, c.References, c.Description})
				}
				if err := writeJSON(e.stdout, out); err != nil {
					return e.fail(err)
				}
				return exitOK
			}
			g := &grid{header: []string{"system", "dim", "kind", "known values", "description"}}
			for _, c := range entries {
				kind := "open"
				if c.Closed {
					kind = "closed"
				}
				g.add(c.Name, fmt.Sprint(c.Dim), kind, fmt.Sprint(c.References), c.Description)
			}
			if err := g.render(e.stdout, *format); err != nil {
				return e.fail(err)
			}
			return exitOK
		}
	},
}

func init() { register(versionCommand) }

var versionCommand = &command{
	name:    "version",
	summary: "print the program's version",
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		return func(args []string) int {
			fmt.Fprintf(e.stdout, "crosspec %s\n", version)
			return exitOK
		}
	},
}
