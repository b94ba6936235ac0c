#!/usr/bin/env python3
"""Plain Ulam's method for x -> 4x(1-x), built independently of crosspec.

Builds the N-cell Ulam matrix from the closed-form preimages
x = (1 -/+ sqrt(1 - y))/2 of the cell edges, finds its invariant density by
power iteration (the matrix is stochastic), and prints how far the density
is from the cell averages of the exact density 1/(pi sqrt(x(1-x)))
(S. Ulam and J. von Neumann, Bull. Amer. Math. Soc. 53 (1947) 1120) on the
cells inside [0.1, 0.9], for N = 1024 ... 65536. With a CSV written by
`crosspec ulam logistic4 --cells N --density FILE.csv` as argument it also
prints the largest relative difference between crosspec's density and this
one at that N.

Usage: python3 ulam/scripts/logistic4_density.py [FILE.csv]   (needs NumPy)
"""
import sys

import numpy as np


def ulam_matrix(n):
    """P[i, j] = |B_i ∩ f^-1(B_j)| / |B_i| as arrays (rows i, columns j, values)."""
    y = np.arange(n + 1) / n
    s = np.sqrt(1 - y)
    lower, upper = (1 - s) / 2, (1 + s) / 2  # the two preimages of each edge
    rows, cols, vals = [], [], []
    for j in range(n):
        # f^-1(B_j) = [lower_j, lower_{j+1}] ∪ [upper_{j+1}, upper_j]
        for a, b in ((lower[j], lower[j + 1]), (upper[j + 1], upper[j])):
            first, last = int(np.floor(a * n)), min(int(np.floor(b * n)), n - 1)
            for i in range(first, last + 1):
                overlap = min(b, (i + 1) / n) - max(a, i / n)
                if overlap > 0:
                    rows.append(i)
                    cols.append(j)
                    vals.append(overlap * n)
    return np.array(rows), np.array(cols), np.array(vals)


def density(n, rows, cols, vals, steps=5000, tol=1e-15):
    """The invariant cell masses rho = rho P, by power iteration, as a density."""
    rho = np.full(n, 1.0 / n)
    for _ in range(steps):
        nxt = np.bincount(cols, weights=rho[rows] * vals, minlength=n)
        nxt /= nxt.sum()
        done = np.abs(nxt - rho).max() < tol * nxt.max()
        rho = nxt
        if done:
            return rho * n
    sys.exit(f"power iteration at N = {n} did not settle in {steps} steps")


def exact_cell_averages(n):
    x = np.arange(n + 1) / n
    cdf = 2 / np.pi * np.arcsin(np.sqrt(x))
    return (cdf[1:] - cdf[:-1]) * n


def main():
    for n in (1024, 2048, 4096, 8192, 16384, 65536):
        dens = density(n, *ulam_matrix(n))
        want = exact_cell_averages(n)
        x = np.arange(n) / n
        inside = (x >= 0.1) & (x + 1 / n <= 0.9)
        rel = np.abs(dens / want - 1)[inside]
        print(f"N = {n:6d}: density off by {rel.max() * 100:.2f} % at worst, "
              f"{rel.mean() * 100:.2f} % on average over the cells in [0.1, 0.9] "
              f"(worst near x = {x[inside][rel.argmax()]:.3f})")
        if len(sys.argv) > 1:
            theirs = np.loadtxt(sys.argv[1], delimiter=",", skiprows=1)[:, 1]
            if len(theirs) == n:
                print(f"           crosspec's density ({sys.argv[1]}) differs by "
                      f"{np.abs(theirs / dens - 1).max():.2e} relative at most")


if __name__ == "__main__":
    main()
