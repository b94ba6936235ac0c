#!/usr/bin/env bash
# Times crosspec's assembly of the two 10^6-cell Ulam matrices of
# ulam/bench_test.go (the logistic repeller A x(1-x), A = 6, exact in 10^6
# cells; the Henon map (1.4, 0.3) on a 1024x1024 grid with 16 test points
# a cell; both unrestricted) beside a vectorised NumPy construction of the
# same matrices (numpy_assembly.py; Debian packages python3-numpy and
# python3-scipy), in the same run: each in a fresh process, the first call
# (page faults of fresh memory included) and the best and median of
# REPEATS more calls, assembly alone. Ours runs on GOMAXPROCS cores (as
# given, default all), NumPy on one thread. A second table runs NumPy with
# glibc's malloc keeping freed memory (as Go's heap does), which removes
# the page faults of its later calls. Then it checks once that the NumPy
# matrices are crosspec's (numpy_check.py against `crosspec ulam --export`).
# Prints Markdown tables.
#
# usage: [GOMAXPROCS=n] [REPEATS=r] [CHECK=0] ulam/scripts/assembly_compare.sh [WORKDIR]
set -euo pipefail
cd "$(dirname "$0")/../.."
work=${1:-$(mktemp -d)}
repeats=${REPEATS:-20}
mkdir -p "$work"
# shellcheck source=ulam/scripts/scipy_python.sh
source ulam/scripts/scipy_python.sh assembly_compare
go build -o "$work/assemblytime" ./ulam/scripts/assemblytime
cores=${GOMAXPROCS:-$(nproc)}
keep="MALLOC_MMAP_THRESHOLD_=4294967296 MALLOC_TRIM_THRESHOLD_=68719476736"

echo "load: $(uptime | sed 's/.*load average/load average/')"
echo
echo "| matrix | nnz | ours first call s | ours best / median s | NumPy first call s | NumPy best / median s | ratio NumPy/ours (median) |"
echo "|---|---|---|---|---|---|---|"
declare -A ours_median
for m in logistic henon; do
  read -r _ _ nnz o_first o_best o_median _ < <(GOMAXPROCS=$cores "$work/assemblytime" "$m" "$repeats")
  read -r _ _ np_nnz n_first n_best n_median _ < <("$py" ulam/scripts/numpy_assembly.py "$m" "$repeats")
  ours_median[$m]=$o_median
  ratio=$("$py" -c "print('%.1f' % ($n_median / $o_median))")
  if [ "$nnz" != "$np_nnz" ]; then nnz="$nnz (NumPy $np_nnz)"; fi
  echo "| $m | $nnz | $o_first | $o_best / $o_median | $n_first | $n_best / $n_median | $ratio |"
done
echo
echo "Ours on $cores core(s) (GOMAXPROCS), NumPy on one thread; $repeats calls after the first."
echo
echo "NumPy with glibc keeping freed memory ($keep), beside the same runs of ours:"
echo
echo "| matrix | NumPy first call s | NumPy best / median s | ratio NumPy/ours (median) |"
echo "|---|---|---|---|"
for m in logistic henon; do
  # shellcheck disable=SC2086
  read -r _ _ _ n_first n_best n_median _ < <(env $keep "$py" ulam/scripts/numpy_assembly.py "$m" "$repeats")
  ratio=$("$py" -c "print('%.1f' % ($n_median / ${ours_median[$m]}))")
  echo "| $m | $n_first | $n_best / $n_median | $ratio |"
done
echo "load: $(uptime | sed 's/.*load average/load average/')"

if [ "${CHECK:-1}" != 0 ]; then
  echo
  go build -o "$work/crosspec" ./cmd/crosspec
  "$work/crosspec" ulam logistic-repeller --cells 1000000 --restrict none --quiet --export "$work/logistic.mtx" >/dev/null
  "$work/crosspec" ulam henon --grid 1024x1024 --points 16 --restrict none --quiet --export "$work/henon.mtx" >/dev/null
  for m in logistic henon; do
    "$py" ulam/scripts/numpy_check.py "$m" "$work/$m.mtx"
  done
fi
