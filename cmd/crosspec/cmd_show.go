package main

import (
	"flag"
	"fmt"
	"io"
	"strings"

	"crosspec/dynsys"
)

func init() { register(showCommand) }

var showCommand = &command{
	name:    "show",
	args:    "SYSTEM",
	summary: "print a system as parsed: formulas, derivatives, parameters, domain and laps",
	details: `For a 1D map the monotone laps are listed with their images: both
computational paths use them, so check them before trusting a result.`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		params := paramFlag{}
		fs.Var(params, "param", "override a parameter, NAME=VALUE (repeatable)")
		minWidth := fs.Float64("lap-width", 0, "leave out laps narrower than this (default 1e-9 of the domain)")
		return func(args []string) int {
			s, err := openSystem(args, params)
			if err != nil {
				return e.fail(err)
			}
			if err := describeSystem(e.stdout, s, &dynsys.LapSettings{MinWidth: *minWidth}); err != nil {
				return e.fail(err)
			}
			return exitOK
		}
	},
}

// describeSystem writes what the loader understood of s.
func describeSystem(w io.Writer, s *dynsys.System, lapSettings *dynsys.LapSettings) error {
	kind := "open (points leaving the domain escape)"
	if s.Closed {
		kind = "closed (the domain is invariant)"
	}
	fmt.Fprintf(w, "system       %s\n", s.Name)
	fmt.Fprintf(w, "source       %s\n", s.File)
	fmt.Fprintf(w, "description  %s\n", s.Description)
	fmt.Fprintf(w, "kind         %s, dimension %d\n", kind, s.Dim())
	var params []string
	for _, p := range s.Params {
		params = append(params, fmt.Sprintf("%s = %g", p.Name, p.Value))
	}
	if len(params) > 0 {
		fmt.Fprintf(w, "parameters   %s\n", strings.Join(params, ", "))
	}
	var box []string
	for i, v := range s.Vars {
		box = append(box, fmt.Sprintf("%s in [%g, %g]", v, s.Lo[i], s.Hi[i]))
	}
	fmt.Fprintf(w, "domain       %s\n", strings.Join(box, ", "))
	fmt.Fprintln(w, "\nmap")
	for i, f := range s.MapFormulas() {
		fmt.Fprintf(w, "  %s' = %s\n", s.Vars[i], f)
	}
	fmt.Fprintln(w, "\nJacobian")
	jac := s.JacobianFormulas()
	d := s.Dim()
	for i := range d {
		for j := range d {
			fmt.Fprintf(w, "  d%s'/d%s = %s\n", s.Vars[i], s.Vars[j], jac[i*d+j])
		}
	}
	if s.HasObservable() {
		fmt.Fprintf(w, "\nobservable\n  a = %s\n", s.ObservableFormula())
		for j, g := range s.GradientFormulas() {
			fmt.Fprintf(w, "  da/d%s = %s\n", s.Vars[j], g)
		}
	}
	if s.SymbolsText != "" {
		fmt.Fprintf(w, "\nsymbols      %s\n", s.SymbolsText)
	}
	if len(s.Forbidden) > 0 {
		fmt.Fprintf(w, "forbidden    %s\n", strings.Join(s.Forbidden, ", "))
	}
	if d == 1 {
		ls, err := s.Laps(lapSettings)
		if err != nil {
			return &numericalError{err}
		}
		fmt.Fprintf(w, "\nlaps (%d)\n", len(ls.Laps))
		g := &grid{header: []string{"lap", "from", "to", "image from", "image to", "orientation"}}
		show := func(i int, l dynsys.Lap) {
			o := "decreasing"
			if l.Increasing {
				o = "increasing"
			}
			g.add(fmt.Sprint(i), fmt.Sprintf("%.17g", l.Lo), fmt.Sprintf("%.17g", l.Hi), fmt.Sprintf("%.17g", l.FLo), fmt.Sprintf("%.17g", l.FHi), o)
		}
		const most = 12
		for i, l := range ls.Laps {
			if len(ls.Laps) > most && i == most/2 {
				g.add("…", fmt.Sprintf("(%d more)", len(ls.Laps)-most), "", "", "", "")
			}
			if len(ls.Laps) > most && i >= most/2 && i < len(ls.Laps)-most/2 {
				continue
			}
			show(i, l)
		}
		if err := g.render(w, formatTable); err != nil {
			return err
		}
		if len(ls.Excluded) > 0 {
			var parts []string
			for _, iv := range ls.Excluded {
				parts = append(parts, fmt.Sprintf("[%.6g, %.6g]", iv.Lo, iv.Hi))
			}
			fmt.Fprintf(w, "left out (laps too narrow to resolve): %s, total length %.3g\n", strings.Join(parts, " "), ls.ExcludedLength)
		}
	}
	if len(s.References) > 0 {
		fmt.Fprintln(w, "\nknown values")
		for _, r := range s.References {
			label := string(r.Quantity)
			if r.Quantity == dynsys.Eigenvalues {
				label = fmt.Sprintf("eigenvalue %d", r.Index)
			}
			fmt.Fprintf(w, "  %-14s %.16g  (%s)\n", label, r.Value, r.Source)
		}
	}
	return nil
}
