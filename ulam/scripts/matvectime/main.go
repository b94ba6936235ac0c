// Command matvectime times crosspec's sparse mat-vec (ulam.Matrix.Apply)
// on the 10⁶-cell exact Ulam matrix of the logistic repeller A x(1−x),
// A = 6, unrestricted (the matrix of BenchmarkMatVec1e6), and writes the
// matrix's CSR arrays as raw little-endian binary for matvec.c, so that
// matvec_compare.sh can time a plain C loop and the memory bandwidth on
// the same matrix in the same run. It prints one line:
//
//	ROWS NNZ BEST_MS MEDIAN_MS REPEATS
//
// with the times of REPEATS mat-vecs (default 200) on GOMAXPROCS cores.
// The binary file holds n and nnz as int64, then the row pointers and
// column indices as int32 (the 12 bytes a nonzero that Apply reads) and
// the values as float64.
//
//	usage: matvectime FILE.bin [REPEATS]
package main

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"os"
	"time"

	"crosspec/dynsys"
	"crosspec/ulam"
	"crosspec/ulam/scripts/internal/runs"
)

func main() {
	if len(os.Args) < 2 || len(os.Args) > 3 {
		fmt.Fprintln(os.Stderr, "usage: matvectime FILE.bin [REPEATS]")
		os.Exit(2)
	}
	repeats := runs.Repeats("matvectime", 2, 200, 1)
	sys, err := dynsys.Open("logistic-repeller", nil)
	if err != nil {
		fail(err)
	}
	m, err := ulam.Assemble(sys, &ulam.Settings{Cells: 1_000_000, Restrict: ulam.RestrictNone})
	if err != nil {
		fail(err)
	}
	if err := writeBinary(os.Args[1], m); err != nil {
		fail(err)
	}
	n := m.Dim()
	x, dst := make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = 1 + float64(i%7)
	}
	m.Apply(dst, x) // the compact index is made at the first call
	times := make([]float64, repeats)
	for r := range times {
		start := time.Now()
		m.Apply(dst, x)
		times[r] = time.Since(start).Seconds() * 1e3
	}
	best, median := runs.BestMedian(times)
	fmt.Printf("%d %d %.3f %.3f %d\n", n, m.NNZ(), best, median, repeats)
}

func writeBinary(path string, m *ulam.Matrix) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	put := func(v any) {
		if err == nil {
			err = binary.Write(w, binary.LittleEndian, v)
		}
	}
	put([]int64{int64(m.Dim()), int64(m.NNZ())})
	rowPtr := make([]int32, len(m.RowPtr))
	for i, p := range m.RowPtr {
		rowPtr[i] = int32(p)
	}
	col := make([]int32, len(m.Col))
	for k, j := range m.Col {
		col[k] = int32(j)
	}
	put(rowPtr)
	put(col)
	put(m.Val)
	if err == nil {
		err = w.Flush()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	return err
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "matvectime:", err)
	os.Exit(1)
}
