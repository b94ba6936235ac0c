// Package runs holds what the timing programs of ulam/scripts share: the
// optional REPEATS argument and the best and median of the times, the
// median as Python's statistics.median takes it (the mean of the middle
// two of an even count), so that the Go and the NumPy sides of a
// comparison are summarised alike.
package runs

import (
	"fmt"
	"os"
	"slices"
	"strconv"
)

// Repeats returns os.Args[i] as a count of at least least, or def when
// there is no such argument; on a bad one it prints a one-line error
// naming the program and exits with code 2.
func Repeats(program string, i, def, least int) int {
	if len(os.Args) <= i {
		return def
	}
	n, err := strconv.Atoi(os.Args[i])
	if err != nil || n < least {
		fmt.Fprintf(os.Stderr, "%s: REPEATS must be an integer of at least %d, got %q\n", program, least, os.Args[i])
		os.Exit(2)
	}
	return n
}

// BestMedian returns the smallest and the median of times, which must not
// be empty; it sorts them.
func BestMedian(times []float64) (best, median float64) {
	if len(times) == 0 {
		panic("runs: no times")
	}
	slices.Sort(times)
	k := len(times) / 2
	median = times[k]
	if len(times)%2 == 0 {
		median = 0.5 * (times[k-1] + times[k])
	}
	return times[0], median
}
