"""Leading eigenvalues of a Matrix Market file with SciPy's ARPACK.

usage: python3 arpack_eigs.py FILE.mtx K [NCV] [TOL]

Prints one line: seconds (solve only), mat-vecs, status and eigenvalues, in
the format of eigsmtx, so arpack_compare.sh can put the two side by side.
"""
import sys
import time

import numpy as np
import scipy.io
import scipy.sparse.linalg as sla


def main():
    path, k = sys.argv[1], int(sys.argv[2])
    ncv = int(sys.argv[3]) if len(sys.argv) > 3 and sys.argv[3] != "default" else None
    tol = float(sys.argv[4]) if len(sys.argv) > 4 else 1e-12
    a = scipy.io.mmread(path).tocsr()
    count = [0]

    def matvec(x):
        count[0] += 1
        return a @ x

    op = sla.LinearOperator(a.shape, matvec=matvec, dtype=np.float64)
    start = time.perf_counter()
    status = "converged"
    try:
        values = sla.eigs(op, k=k, which="LM", ncv=ncv, tol=tol, maxiter=1000,
                          return_eigenvectors=False)
    except sla.ArpackNoConvergence as err:
        status = "failed"
        values = err.eigenvalues
    elapsed = time.perf_counter() - start
    values = sorted(values, key=lambda z: -abs(z))
    print("%.4f %d %s %s" % (elapsed, count[0], status,
                            " ".join("%.12g%+.12gi" % (z.real, z.imag) for z in values)))


if __name__ == "__main__":
    main()
