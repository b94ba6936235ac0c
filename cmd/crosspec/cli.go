package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"sort"
	"strconv"
	"strings"

	"crosspec/dynsys"
	"crosspec/ulam"
)

// version is the program's version, printed by --version and written into
// run manifests.
const version = "0.1.0-dev"

// Exit codes of DESIGN.md section 6.
const (
	exitOK        = 0
	exitNumerical = 1
	exitUsage     = 2
)

// command is one subcommand of crosspec.
type command struct {
	name    string
	args    string // the positional arguments, for the usage line
	summary string
	// details follows the usage line in `crosspec help NAME`.
	details string
	// flags declares the command's flags on fs and returns the function
	// that runs it once the flags are parsed.
	setup func(fs *flag.FlagSet, env *env) func(args []string) int
}

// env carries the output streams of one run.
type env struct {
	stdout, stderr io.Writer
	cmd            string
}

// commands lists the subcommands; each command's file adds itself with
// register. `crosspec help` lists them in the order of commandOrder.
var commands []*command

// commandOrder is the order in which help lists the commands: the main job
// first, then the single paths, then the utilities.
var commandOrder = []string{"demo", "check", "ulam", "cycles", "expand", "systems", "show", "version"}

// register adds c to the command table, keeping commandOrder.
func register(c *command) {
	commands = append(commands, c)
	rank := func(name string) int {
		for i, n := range commandOrder {
			if n == name {
				return i
			}
		}
		return len(commandOrder)
	}
	sort.SliceStable(commands, func(i, j int) bool { return rank(commands[i].name) < rank(commands[j].name) })
}

// usageError is a mistake on the command line: exit code 2.
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

func usagef(format string, args ...any) error {
	return &usageError{fmt.Sprintf(format, args...)}
}

// run executes the command line args and returns the exit code.
func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		printUsage(stderr)
		return exitUsage
	}
	switch args[0] {
	case "-h", "-help", "--help", "help":
		if len(args) > 1 && args[0] == "help" {
			c := lookupCommand(args[1])
			if c == nil {
				fmt.Fprintf(stderr, "crosspec help: unknown command %q (commands: %s)\n", args[1], commandNames())
				return exitUsage
			}
			fs, _ := newFlagSet(c, &env{stdout: stdout, stderr: stderr})
			fs.SetOutput(stdout)
			fs.Usage()
			return exitOK
		}
		printUsage(stdout)
		return exitOK
	case "-version", "--version":
		fmt.Fprintf(stdout, "crosspec %s\n", version)
		return exitOK
	}
	c := lookupCommand(args[0])
	if c == nil {
		fmt.Fprintf(stderr, "crosspec: unknown command %q (commands: %s; see crosspec help)\n", args[0], commandNames())
		return exitUsage
	}
	e := &env{stdout: stdout, stderr: stderr, cmd: "crosspec " + c.name}
	fs, runner := newFlagSet(c, e)
	positional, err := parseInterspersed(fs, args[1:])
	if errors.Is(err, flag.ErrHelp) {
		fs.SetOutput(stdout)
		fs.Usage()
		return exitOK
	}
	if err != nil {
		fmt.Fprintf(stderr, "%s: %v\n", e.cmd, err)
		return exitUsage
	}
	return runner(positional)
}

func newFlagSet(c *command, e *env) (*flag.FlagSet, func([]string) int) {
	fs := flag.NewFlagSet(c.name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	runner := c.setup(fs, e)
	fs.Usage = func() {
		w := fs.Output()
		fmt.Fprintf(w, "usage: crosspec %s [flags] %s\n\n%s\n", c.name, c.args, c.summary)
		if c.details != "" {
			fmt.Fprintf(w, "\n%s\n", strings.TrimSpace(c.details))
		}
		var any bool
		fs.VisitAll(func(*flag.Flag) { any = true })
		if any {
			fmt.Fprintf(w, "\nflags:\n")
			fs.VisitAll(func(f *flag.Flag) {
				name, usage := flag.UnquoteUsage(f)
				line := "  --" + f.Name
				if name != "" {
					line += " " + name
				}
				fmt.Fprintf(w, "%s\n    \t%s", line, usage)
				if f.DefValue != "" && f.DefValue != "false" && f.DefValue != "[]" {
					fmt.Fprintf(w, " (default %s)", f.DefValue)
				}
				fmt.Fprintln(w)
			})
		}
	}
	return fs, runner
}

// parseInterspersed parses flags that may come before or after the
// positional arguments, as `crosspec show henon --param a=1.2` needs.
func parseInterspersed(fs *flag.FlagSet, args []string) ([]string, error) {
	var positional []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		rest := fs.Args()
		if len(rest) == 0 {
			return positional, nil
		}
		if rest[0] == "--" {
			return append(positional, rest[1:]...), nil
		}
		positional = append(positional, rest[0])
		args = rest[1:]
	}
}

func lookupCommand(name string) *command {
	for _, c := range commands {
		if c.name == name {
			return c
		}
	}
	return nil
}

func commandNames() string {
	names := make([]string, len(commands))
	for i, c := range commands {
		names[i] = c.name
	}
	return strings.Join(names, ", ")
}

func printUsage(w io.Writer) {
	fmt.Fprintf(w, `crosspec checks the spectrum of a map's transfer operator two independent ways:
a sparse Ulam transfer matrix and periodic-orbit (cycle) expansions.

usage: crosspec <command> [flags] [SYSTEM]

SYSTEM is a system file (TOML) or the name of a catalog system (crosspec systems).

commands:
`)
	for _, c := range commands {
		fmt.Fprintf(w, "  %-9s %s\n", c.name, c.summary)
	}
	fmt.Fprintf(w, "\nRun 'crosspec help COMMAND' for a command's flags; 'crosspec --version' for the version.\n")
}

// fail reports err on one line and returns its exit code: 2 for mistakes
// in the command line or the input files, 1 for numerical failures.
func (e *env) fail(err error) int {
	msg := strings.ReplaceAll(err.Error(), "\n", "; ")
	fmt.Fprintf(e.stderr, "%s: %s\n", e.cmd, msg)
	var ue *usageError
	var fe *dynsys.Error
	// A grid too large to index is a request out of range, not a failure
	// of the computation.
	if errors.As(err, &ue) || errors.As(err, &fe) || errors.Is(err, ulam.ErrTooLarge) {
		return exitUsage
	}
	var ne *numericalError
	if errors.As(err, &ne) {
		return exitNumerical
	}
	return exitUsage
}

// interruptContext returns a context that the first Ctrl-C (SIGINT)
// cancels: the command then starts no new work and reports what it has
// finished. The signal's default action comes back at that moment, so a
// second Ctrl-C ends the process at once. Call stop when done.
func interruptContext() (ctx context.Context, stop context.CancelFunc) {
	ctx, stop = signal.NotifyContext(context.Background(), os.Interrupt)
	go func() {
		<-ctx.Done()
		stop()
	}()
	return ctx, stop
}

// errStopped is what whileRunning returns for work that Ctrl-C cut short.
var errStopped = errors.New("stopped by Ctrl-C")

// whileRunning runs work and returns its results, or errStopped as soon as
// ctx is cancelled. The work is then abandoned: work that watches ctx too
// (a Ulam grid, ulam.ComputeContext) stops at its next step, other work (a
// Galerkin size) goes on in the background until the process, which is
// about to report what it finished and exit, ends.
func whileRunning[T any](ctx context.Context, work func() (T, error)) (T, error) {
	var zero T
	if ctx.Err() != nil {
		return zero, errStopped
	}
	type outcome struct {
		res T
		err error
	}
	done := make(chan outcome, 1)
	go func() {
		r, err := work()
		done <- outcome{r, err}
	}()
	select {
	case o := <-done:
		return o.res, o.err
	case <-ctx.Done():
		return zero, errStopped
	}
}

// interruptedError reports work cut short by Ctrl-C (exit code 1), after
// the report of what was finished when there is any.
func interruptedError(where string, reported bool) error {
	if reported {
		return &numericalError{fmt.Errorf("interrupted (Ctrl-C) %s: the report above holds only the work finished before", where)}
	}
	return &numericalError{fmt.Errorf("interrupted (Ctrl-C) %s, before any result", where)}
}

// numericalError marks a failure of a computation (exit code 1).
type numericalError struct{ err error }

func (e *numericalError) Error() string { return e.err.Error() }
func (e *numericalError) Unwrap() error { return e.err }

// paramFlag collects repeated --param NAME=VALUE flags.
type paramFlag map[string]float64

func (p paramFlag) String() string {
	keys := make([]string, 0, len(p))
	for k := range p {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = fmt.Sprintf("%s=%g", k, p[k])
	}
	return strings.Join(parts, ",")
}

func (p paramFlag) Set(s string) error {
	name, value, ok := strings.Cut(s, "=")
	if !ok || name == "" {
		return fmt.Errorf("expected NAME=VALUE, found %q", s)
	}
	v, err := strconv.ParseFloat(value, 64)
	if err != nil {
		return fmt.Errorf("parameter %s: expected a number, found %q", name, value)
	}
	p[name] = v
	return nil
}

// openSystem loads the one positional SYSTEM argument.
func openSystem(args []string, params paramFlag) (*dynsys.System, error) {
	if len(args) != 1 {
		if len(args) == 0 {
			return nil, usagef("expected a SYSTEM (a system file or a catalog name, see crosspec systems)")
		}
		return nil, usagef("expected one SYSTEM, found %d arguments: %s", len(args), strings.Join(args, " "))
	}
	s, err := dynsys.Open(args[0], params)
	if err != nil {
		var fe *dynsys.Error
		if errors.As(err, &fe) {
			return nil, err
		}
		return nil, &usageError{err.Error()}
	}
	return s, nil
}
