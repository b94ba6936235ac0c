// Command eigsmtx reads a matrix in Matrix Market format and computes its
// k eigenvalues of largest modulus with crosspec's solver
// (krylov.EigsSparse: Krylov–Schur on each irreducible diagonal block),
// printing one line: seconds (solve only, the split into blocks
// included), mat-vecs, status and the eigenvalues. arpack_compare.sh runs
// it beside SciPy's ARPACK. With -blocks instead of K it prints the
// dimension, the number of irreducible blocks and the rows in blocks of
// more than one row (the rows the Krylov iterations work on).
//
//	usage: eigsmtx FILE.mtx K [TOL [MAXRESTARTS]]
//	       eigsmtx FILE.mtx -blocks
package main

import (
	"fmt"
	"os"
	"strconv"
	"time"

	"crosspec/ulam"
	"crosspec/ulam/krylov"
)

func main() {
	if len(os.Args) < 3 {
		fmt.Fprintln(os.Stderr, "usage: eigsmtx FILE.mtx K [TOL]")
		os.Exit(2)
	}
	f, err := os.Open(os.Args[1])
	if err != nil {
		fmt.Fprintln(os.Stderr, "eigsmtx:", err)
		os.Exit(2)
	}
	m, err := ulam.ReadMatrixMarket(f)
	f.Close()
	if err != nil {
		fmt.Fprintln(os.Stderr, "eigsmtx:", err)
		os.Exit(2)
	}
	if os.Args[2] == "-blocks" {
		_, start := krylov.IrreducibleBlocks(m.RowPtr, m.Col)
		rows := 0
		for b := 0; b+1 < len(start); b++ {
			if size := start[b+1] - start[b]; size > 1 {
				rows += size
			}
		}
		fmt.Println(m.Dim(), len(start)-1, rows)
		return
	}
	k, err := strconv.Atoi(os.Args[2])
	if err != nil || k < 1 {
		fmt.Fprintln(os.Stderr, "eigsmtx: K must be a positive integer")
		os.Exit(2)
	}
	tol := 1e-12
	if len(os.Args) > 3 {
		if tol, err = strconv.ParseFloat(os.Args[3], 64); err != nil {
			fmt.Fprintln(os.Stderr, "eigsmtx: bad TOL")
			os.Exit(2)
		}
	}
	maxRestarts := 0
	if len(os.Args) > 4 {
		if maxRestarts, err = strconv.Atoi(os.Args[4]); err != nil {
			fmt.Fprintln(os.Stderr, "eigsmtx: bad MAXRESTARTS")
			os.Exit(2)
		}
	}
	start := time.Now()
	res, err := krylov.EigsSparse(m, &krylov.Settings{Wanted: k, Tol: tol, MaxRestarts: maxRestarts})
	elapsed := time.Since(start).Seconds()
	status := "converged"
	if err != nil {
		status = "failed"
	}
	fmt.Printf("%.4f %d %s", elapsed, res.Stats.MatVecs, status)
	for _, z := range res.Values {
		fmt.Printf(" %.12g%+.12gi", real(z), imag(z))
	}
	fmt.Println()
}
