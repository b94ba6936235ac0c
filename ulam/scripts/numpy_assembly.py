"""Vectorised NumPy construction of two Ulam matrices that crosspec builds.

usage: python3 numpy_assembly.py {logistic,henon} [REPEATS] [--export FILE.mtx]

The NumPy peer of ulam.Assemble (assembly_compare.sh runs it beside
assemblytime): the same two matrices, unrestricted, as CSR arrays
(indptr, indices, data) with P_ij = fraction of cell i mapped into cell j
(rows = source cells), columns increasing in every row.

logistic: the logistic repeller f(x) = A x (1 - x), A = 6, on [0, 1] in
10^6 uniform cells, exact: on each monotone lap the preimages of the cell
edges in closed form (the roots of the quadratic), P_ij = |B_i ∩ f⁻¹(B_j)|/|B_i|;
the middle interval, mapped above 1, escapes.

henon: the Hénon map (x, y) -> (1 - a x² + y, b x), a = 1.4, b = 0.3, on
the box [-1.5, 1.5] x [-0.45, 0.45] in a 1024 x 1024 grid (cell
i0*1024 + i1, the second coordinate fastest), 4 x 4 test points a cell at
the centres of a 4 x 4 subdivision, P_ij = (points of cell i landing in
cell j)/16; a point whose image leaves the box escapes. The test points,
the map's floating-point operations and the cell arithmetic are those of
ulam/sampled.go and ulam/grid.go, so the matrix is crosspec's to the bit.
The points are mapped a block of grid rows at a time (HENON_ROWS).

Each construction is timed with time.perf_counter (imports, argument
parsing and the export excluded): the first call, which pays the page
faults of fresh memory, then REPEATS more calls (default 20). It prints one
line, in the format of assemblytime:

    NAME ROWS NNZ FIRST_S BEST_S MEDIAN_S REPEATS

NumPy runs on one thread. Large arrays come from glibc's malloc, which
maps each one afresh above its mmap threshold and returns it to the system
when freed, so every call pays page faults; assembly_compare.sh also runs
with MALLOC_MMAP_THRESHOLD_ and MALLOC_TRIM_THRESHOLD_ raised, so that
freed memory is kept, as Go's heap keeps it. --export writes the matrix of the last call in
Matrix Market coordinate format (1-based, values to 17 digits), not timed.
"""
import statistics
import sys
import time

import numpy as np

# The catalog's systems (dynsys/catalog/logistic-repeller.toml, henon.toml).
LOGISTIC_A = 6.0
HENON_A, HENON_B = 1.4, 0.3
HENON_LO, HENON_HI = (-1.5, -0.45), (1.5, 0.45)

# The Hénon points are mapped 16 grid rows (16·1024 cells, 2^18 points) at
# a time: arrays of 2 MB stay in the caches and are reused by the
# allocator, where 16.8 million points at once (128 MB an array) ran about three
# times slower here (0.65 s against 0.20 s), from memory traffic and page faults.
HENON_ROWS = 16


def edges(lo, hi, m):
    """Cell edges lo + (hi - lo)*i/m, i = 0 … m, in the operation order of
    ulam.Grid.Edge, with the last edge hi exactly."""
    e = lo + (hi - lo) * np.arange(m + 1, dtype=np.float64) / m
    e[m] = hi
    return e


def lap_entries(e, xa, xb, pre, increasing):
    """Entries (source, target, length) of one monotone lap [xa, xb] of a 1D
    map whose image of [xa, xb] is the whole domain: pre holds the preimages
    of the edges e on the lap in increasing order of x (pre[0] = xa,
    pre[-1] = xb). The lap is cut at the cell edges inside it and at the
    preimages; each piece of positive length is one entry."""
    n = len(e) - 1
    i_lo = np.searchsorted(e, xa, side="right")  # xa lies in cell i_lo - 1
    i_hi = np.searchsorted(e, xb, side="left")
    inner = e[i_lo:i_hi]
    z = np.concatenate((inner, pre))
    # Two sorted runs: the stable sort (timsort) only merges them. Among
    # equal values the edge comes first, so the counts after a tie
    # include everything at that point.
    order = np.argsort(z, kind="stable")
    z = z[order]
    is_edge = order < len(inner)
    n_edges = np.cumsum(is_edge)
    n_pre = np.arange(1, len(z) + 1) - n_edges
    length = np.diff(z)
    keep = length > 0
    src = (i_lo - 1 + n_edges[:-1])[keep]
    if increasing:
        tgt = n_pre[:-1][keep] - 1
    else:
        tgt = n - n_pre[:-1][keep]
    return src, tgt, length[keep]


def reverse_runs(src, *arrays):
    """Reverses the order of the entries inside each run of equal src (a
    decreasing lap meets a row's targets from the right)."""
    k = len(src)
    run_start = np.flatnonzero(np.concatenate(([True], src[1:] != src[:-1])))
    run_len = np.diff(np.append(run_start, k))
    starts = np.repeat(run_start, run_len)
    ends = np.repeat(run_start + run_len, run_len)
    perm = starts + ends - 1 - np.arange(k)
    return [a[perm] for a in arrays]


def to_csr(n, src, tgt, val):
    """CSR arrays from entries sorted by source, each row's targets
    increasing and distinct."""
    indptr = np.zeros(n + 1, dtype=np.int64)
    np.cumsum(np.bincount(src, minlength=n), out=indptr[1:])
    return indptr, tgt, val


def logistic(n=1_000_000, a=LOGISTIC_A):
    """The exact Ulam matrix of A x (1 - x), A > 4, on [0, 1] in n cells."""
    e = edges(0.0, 1.0, n)
    # Roots of A x (1 - x) = y: x± = (1 ± s)/2, s = sqrt(1 - 4y/A); the
    # small one as (y/A)/x+ = 2y/(A (1 + s)), free of cancellation.
    s = np.sqrt(1.0 - (4.0 / a) * e)
    left = 2.0 * e / (a * (1.0 + s))      # increasing lap [0, x-(1)]
    right = (1.0 - left)[::-1]            # decreasing lap [x+(1), 1], by symmetry
    width_inv = 1.0 / np.diff(e)
    s1, t1, l1 = lap_entries(e, 0.0, left[-1], left, True)
    s2, t2, l2 = lap_entries(e, right[0], 1.0, right, False)
    t2, l2 = reverse_runs(s2, t2, l2)
    if s1[-1] >= s2[0]:
        raise ValueError("laps share a cell: rows would need merging")
    src = np.concatenate((s1, s2))
    tgt = np.concatenate((t1, t2))
    # (x1 - x0) times the reciprocal width, as crosspec's sweep does.
    val = np.concatenate((l1, l2)) * width_inv[src]
    return to_csr(n, src, tgt, val)


def henon(m=(1024, 1024), q=4, a=HENON_A, b=HENON_B, lo=HENON_LO, hi=HENON_HI,
          rows=HENON_ROWS):
    """The Ulam matrix of the Hénon map from q x q test points a cell,
    built rows x m1 cells at a time."""
    m0, m1 = m
    n, per = m0 * m1, q * q
    e0 = edges(lo[0], hi[0], m0)[:-1]
    e1 = edges(lo[1], hi[1], m1)[:-1]
    o0 = ((hi[0] - lo[0]) / m0) * (np.arange(q) + 0.5) / q
    o1 = ((hi[1] - lo[1]) / m1) * (np.arange(q) + 0.5) / q
    xs = (e0[:, None] + o0)[:, None, :, None]  # x of (i0, s)
    ys = (e1[:, None] + o1)[None, :, None, :]  # y of (i1, t)
    inv0 = m0 / (hi[0] - lo[0])
    inv1 = m1 / (hi[1] - lo[1])
    parts = []
    for r0 in range(0, m0, rows):
        r1 = min(r0 + rows, m0)
        cells = (r1 - r0) * m1
        # Points in the order (i0, i1, s, t): cell i0*m1 + i1, offsets (s, t).
        x = np.broadcast_to(xs[r0:r1], (r1 - r0, m1, q, q)).ravel()
        y = np.broadcast_to(ys, (r1 - r0, m1, q, q)).ravel()
        # 1 - a*x^2 + y, left to right with x^2 = x*x and no fused
        # multiply-add, as crosspec's expression compiler evaluates it.
        fx = 1.0 - a * (x * x) + y
        fy = b * x
        inside = (fx >= lo[0]) & (fx <= hi[0]) & (fy >= lo[1]) & (fy <= hi[1])
        i0 = np.minimum(((fx - lo[0]) * inv0).astype(np.int32), m0 - 1)
        i1 = np.minimum(((fy - lo[1]) * inv1).astype(np.int32), m1 - 1)
        target = i0 * m1 + i1
        target[~inside] = -1
        # Each cell's targets sorted; a run of equal targets is one entry
        # whose value is the run's length over the points a cell.
        target = np.sort(target.reshape(cells, per), axis=1).ravel()
        start = np.empty(cells * per, dtype=bool)
        start[0] = True
        np.not_equal(target[1:], target[:-1], out=start[1:])
        start[::per] = True
        first = np.flatnonzero(start)
        count = np.diff(np.append(first, cells * per))
        col = target[first]
        keep = col >= 0
        parts.append((first[keep] // per + r0 * m1, col[keep], count[keep] / per))
    return to_csr(n, *(np.concatenate(p) for p in zip(*parts)))


BUILDERS = {"logistic": logistic, "henon": henon}


def write_matrix_market(path, csr, comment):
    """Writes CSR arrays in Matrix Market coordinate format (real, general)."""
    indptr, indices, data = csr
    n = len(indptr) - 1
    rows = np.repeat(np.arange(1, n + 1), np.diff(indptr))
    with open(path, "w") as f:
        f.write("%%MatrixMarket matrix coordinate real general\n")
        f.write("%% %s\n" % comment)
        f.write("%d %d %d\n" % (n, n, len(data)))
        np.savetxt(f, np.column_stack((rows, indices + 1, data)),
                   fmt=("%d", "%d", "%.17g"))


def time_builder(build, repeats):
    """Runs build once (first call) and then repeats more times; returns the
    last result, the first time and the later times, in seconds."""
    start = time.perf_counter()
    out = build()
    first = time.perf_counter() - start
    times = []
    for _ in range(repeats):
        out = None  # free the previous matrix first, as Go's collector may
        start = time.perf_counter()
        out = build()
        times.append(time.perf_counter() - start)
    return out, first, times


def main():
    args = sys.argv[1:]
    export = None
    if "--export" in args:
        k = args.index("--export")
        export = args[k + 1]
        del args[k:k + 2]
    if not args or args[0] not in BUILDERS:
        sys.exit("usage: numpy_assembly.py {logistic,henon} [REPEATS] [--export FILE.mtx]")
    name = args[0]
    repeats = int(args[1]) if len(args) > 1 else 20
    csr, first, times = time_builder(BUILDERS[name], repeats)
    best = min(times) if times else first
    median = statistics.median(times) if times else first
    print("%s %d %d %.4f %.4f %.4f %d" % (name, len(csr[0]) - 1, len(csr[2]),
                                          first, best, median, repeats))
    if export:
        write_matrix_market(export, csr, "NumPy construction: " + name)


if __name__ == "__main__":
    main()
