"""Checks that numpy_assembly.py builds crosspec's matrices.

usage: python3 numpy_check.py {logistic,henon} CROSSPEC.mtx

CROSSPEC.mtx is crosspec's export of the same matrix, unrestricted:

    crosspec ulam logistic-repeller --cells 1000000 --restrict none --quiet --export F.mtx
    crosspec ulam henon --grid 1024x1024 --points 16 --restrict none --quiet --export G.mtx

It builds the NumPy matrix in this process, reads crosspec's with
scipy.io.mmread, and prints one line: the entries on both sides, the
entries in both patterns, the largest absolute difference over them, the
number of entries on one side only ("slivers" when their value is within
the tolerance, "extra" otherwise) and PASS or FAIL.

Tolerance, logistic (exact assembly). An entry is (x1 - x0)/|B_i| with x0,
x1 cell edges (identical on both sides) or preimages of cell edges. The
closed form x- = 2y/(A(1 + s)), s = sqrt(1 - 4y/A), has a relative error of
about 6 unit roundoffs u = 2^-53 (one rounding in 4/A, the product, the
difference, the square root, the sum, the product and the quotient, the
sum's error halved by the square root and divided by 1 + s >= 1.58), so an
absolute error below 1.3u for x- <= 0.212, and x+ = 1 - x- one rounding
more, below 2.3u; crosspec's root finder is accurate to full double
precision, taken as one ulp of x < 1, 2u. Each endpoint thus differs by
at most 4.3u, an entry by at most 2 x 4.3u/|B_i| plus its own rounding:
8.6 x 1.11e-16 x 1e6 + 1.1e-16, about 9.6e-10. The tolerance is 1e-9.
An edge whose image is exactly an edge (y = f(x) for two grid values)
gives a preimage that each side may round to either side of the edge: a
piece of a few ulps, an entry of order 1e-10 or less on one side only (a
sliver), and the neighbouring entry changed by as much. Slivers are
counted, not compared.

Tolerance, henon (test points). Both sides map the same points with the
same floating-point operations and the same cell arithmetic, and an entry
is count/16, exact: the patterns must agree and the values be equal; the
tolerance is 0 and no sliver is allowed.
"""
import sys

import numpy as np
import scipy.io

sys.dont_write_bytecode = True  # no __pycache__ beside the scripts
import numpy_assembly  # noqa: E402

TOLERANCE = {"logistic": 1e-9, "henon": 0.0}


def compare(name, csr, path):
    indptr, indices, data = csr
    n = len(indptr) - 1
    theirs = scipy.io.mmread(path).tocoo()
    if theirs.shape != (n, n):
        return "shape %s, want %d x %d: FAIL" % (theirs.shape, n, n), False
    # Keys row*n + col; both sides are sorted by row and then column.
    ours_key = np.repeat(np.arange(n, dtype=np.int64), np.diff(indptr)) * n + indices
    their_key = theirs.row.astype(np.int64) * n + theirs.col
    order = np.argsort(their_key, kind="stable")
    their_key, their_val = their_key[order], theirs.data[order]
    if np.any(np.diff(ours_key) <= 0) or np.any(np.diff(their_key) <= 0):
        return "duplicate or unsorted entries: FAIL", False
    common, ia, ib = np.intersect1d(ours_key, their_key, assume_unique=True,
                                    return_indices=True)
    diff = np.abs(data[ia] - their_val[ib])
    max_diff = diff.max() if len(diff) else 0.0
    tol = TOLERANCE[name]
    only_ours = np.delete(data, ia)
    only_theirs = np.delete(their_val, ib)
    slivers_ours = int(np.sum(np.abs(only_ours) <= tol))
    slivers_theirs = int(np.sum(np.abs(only_theirs) <= tol))
    extra = len(only_ours) - slivers_ours + len(only_theirs) - slivers_theirs
    ok = max_diff <= tol and extra == 0
    largest_sliver = max([0.0] + [float(np.abs(v).max()) for v in (only_ours, only_theirs) if len(v)])
    line = ("%s: NumPy %d entries, crosspec %d, %d in both, max |diff| %.3g (tolerance %g, "
            "%d above 1e-12), slivers NumPy-only %d crosspec-only %d (largest %.3g), "
            "other one-sided entries %d: %s") % (
        name, len(data), len(their_val), len(common), max_diff, tol,
        int(np.sum(diff > 1e-12)), slivers_ours, slivers_theirs, largest_sliver, extra,
        "PASS" if ok else "FAIL")
    return line, ok


def main():
    if len(sys.argv) != 3 or sys.argv[1] not in numpy_assembly.BUILDERS:
        sys.exit("usage: numpy_check.py {logistic,henon} CROSSPEC.mtx")
    name, path = sys.argv[1], sys.argv[2]
    line, ok = compare(name, numpy_assembly.BUILDERS[name](), path)
    print(line)
    sys.exit(0 if ok else 1)


if __name__ == "__main__":
    main()
