// Command assemblytime times crosspec's assembly of one of the two
// 10⁶-cell Ulam matrices of the benchmarks in ulam/bench_test.go, with the
// same settings (ulam.Assemble, RestrictNone): the logistic repeller
// A x(1−x), A = 6, exact in 10⁶ cells, or the Hénon map (1.4, 0.3) on a
// 1024×1024 grid with 16 test points a cell. In a fresh process it times
// the first call, which pays the page faults of the heap's growth, and
// then REPEATS more calls (default 20), printing one line in the format of
// numpy_assembly.py, so that assembly_compare.sh can put the two side by
// side:
//
//	NAME ROWS NNZ FIRST_S BEST_S MEDIAN_S REPEATS
//
// Loading the system from the catalog is not timed. The assembly uses
// GOMAXPROCS cores.
//
//	usage: assemblytime {logistic|henon} [REPEATS]
package main

import (
	"fmt"
	"os"
	"time"

	"crosspec/dynsys"
	"crosspec/ulam"
	"crosspec/ulam/scripts/internal/runs"
)

func main() {
	if len(os.Args) < 2 || len(os.Args) > 3 {
		fmt.Fprintln(os.Stderr, "usage: assemblytime {logistic|henon} [REPEATS]")
		os.Exit(2)
	}
	var system string
	var set ulam.Settings
	switch os.Args[1] {
	case "logistic":
		system, set = "logistic-repeller", ulam.Settings{Cells: 1_000_000, Restrict: ulam.RestrictNone}
	case "henon":
		system, set = "henon", ulam.Settings{Shape: []int{1024, 1024}, Points: 16, Restrict: ulam.RestrictNone}
	default:
		fmt.Fprintln(os.Stderr, "assemblytime: unknown matrix", os.Args[1])
		os.Exit(2)
	}
	repeats := runs.Repeats("assemblytime", 2, 20, 0)
	sys, err := dynsys.Open(system, nil)
	if err != nil {
		fmt.Fprintln(os.Stderr, "assemblytime:", err)
		os.Exit(1)
	}
	var m *ulam.Matrix
	assemble := func() float64 {
		m = nil // the previous matrix is garbage during the call, as in numpy_assembly.py
		start := time.Now()
		m, err = ulam.Assemble(sys, &set)
		elapsed := time.Since(start).Seconds()
		if err != nil {
			fmt.Fprintln(os.Stderr, "assemblytime:", err)
			os.Exit(1)
		}
		return elapsed
	}
	first := assemble()
	times := make([]float64, repeats)
	for r := range times {
		times[r] = assemble()
	}
	best, median := first, first
	if repeats > 0 {
		best, median = runs.BestMedian(times)
	}
	fmt.Printf("%s %d %d %.4f %.4f %.4f %d\n", os.Args[1], m.Dim(), m.NNZ(), first, best, median, repeats)
}
