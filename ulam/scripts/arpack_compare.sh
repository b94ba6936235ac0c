#!/usr/bin/env bash
# Compares crosspec's Krylov–Schur eigen-solver with SciPy's ARPACK
# (scipy.sparse.linalg.eigs; Debian package python3-scipy) on the same
# 10^6-cell Ulam matrices, exported with `crosspec ulam --export`: the
# logistic repeller A x(1-x), A = 6, and the Henon map (1.4, 0.3) on a
# 1024x1024 grid with 16 test points a cell, both unrestricted (mostly
# transient cells, which our solver splits off: see krylov.EigsSparse),
# the logistic map 4x(1-x) (closed; its matrix is irreducible, so it
# shows the Krylov-Schur iteration alone), and the first two restricted
# to the cells on cycles (--restrict cycles, the rows the split leaves),
# where ARPACK too works on the reduced problem.
# It prints how each matrix splits into irreducible blocks, then for
# k = 1, 6, 10 leading eigenvalues at relative tolerance 1e-12 the solve
# times (assembly and file reading excluded), mat-vec counts and the time
# ratio ARPACK/ours, as Markdown tables.
#
# usage: [ARPACK_LIMIT=seconds] [MATRICES="logistic henon ..."] ulam/scripts/arpack_compare.sh [WORKDIR]
set -euo pipefail
cd "$(dirname "$0")/../.."
work=${1:-$(mktemp -d)}
limit=${ARPACK_LIMIT:-300}
matrices=${MATRICES:-logistic henon logistic4 logistic-cycles henon-cycles}
mkdir -p "$work"
# shellcheck source=ulam/scripts/scipy_python.sh
source ulam/scripts/scipy_python.sh arpack_compare
go build -o "$work/crosspec" ./cmd/crosspec
go build -o "$work/eigsmtx" ./ulam/scripts/eigsmtx
for m in $matrices; do
  case $m in
  logistic) args="logistic-repeller --cells 1000000 --restrict none" ;;
  henon) args="henon --grid 1024x1024 --points 16 --restrict none" ;;
  logistic4) args="logistic4 --cells 1000000 --restrict none" ;;
  logistic-cycles) args="logistic-repeller --cells 1000000 --restrict cycles" ;;
  henon-cycles) args="henon --grid 1024x1024 --points 16 --restrict cycles" ;;
  *) echo "arpack_compare: unknown matrix $m" >&2; exit 2 ;;
  esac
  # shellcheck disable=SC2086
  "$work/crosspec" ulam $args --quiet --export "$work/$m.mtx" >/dev/null
done

echo "| matrix | rows | irreducible blocks | rows in blocks of more than one row |"
echo "|---|---|---|---|"
for m in $matrices; do
  read -r rows blocks cyclic < <("$work/eigsmtx" "$work/$m.mtx" -blocks)
  echo "| $m | $rows | $blocks | $cyclic |"
done
echo
echo "| matrix | k | ours s | ours mat-vecs | ARPACK ncv | ARPACK s | ARPACK mat-vecs | ARPACK status | time ratio ARPACK/ours |"
echo "|---|---|---|---|---|---|---|---|---|"
for m in $matrices; do
  for k in 1 6 10; do
    # Both solvers get a bounded effort: 300 restarts for ours, 1000
    # iterations and $limit seconds for ARPACK ("timeout" in the table).
    read -r ours_s ours_mv ours_status _ < <("$work/eigsmtx" "$work/$m.mtx" "$k" 1e-12 300)
    for ncv in default 60; do
      if [ "$k" = 1 ] && [ "$ncv" = 60 ]; then continue; fi
      if ! read -r ar_s ar_mv ar_status _ < <(timeout "$limit" "$py" ulam/scripts/arpack_eigs.py "$work/$m.mtx" "$k" "$ncv"); then
        ar_s=$limit ar_mv=- ar_status=timeout
      fi
      ratio=$("$py" -c "print('%.1f' % ($ar_s / $ours_s))")
      echo "| $m | $k | $ours_s ($ours_status) | $ours_mv | $ncv | $ar_s | $ar_mv | $ar_status | $ratio |"
    done
  done
done
