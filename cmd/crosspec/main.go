// Command crosspec computes the spectrum of a map's transfer operator two
// independent ways, from a sparse Ulam transfer matrix and from periodic-orbit
// expansions, and compares them. Run `crosspec help` for the commands.
package main

import "os"

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}
