#!/usr/bin/env bash
# Times crosspec's sparse mat-vec (ulam.Matrix.Apply) on the 10^6-cell
# exact Ulam matrix of the logistic repeller, unrestricted (the matrix of
# BenchmarkMatVec1e6), beside a plain CSR loop in C (matvec.c, gcc -O3
# -march=native -fopenmp) on the same arrays and the memory read bandwidth
# (a sum over 512 MiB), all in the same run, and prints a Markdown table.
# The traffic of one mat-vec is counted as 12 bytes a nonzero (value and
# 32-bit column) and 20 a row (32-bit row pointer, x and the result); x
# and the result may stay partly in the caches, so the rate can pass the
# read bandwidth.
#
# usage: [REPEATS=r] ulam/scripts/matvec_compare.sh [WORKDIR]
set -euo pipefail
cd "$(dirname "$0")/../.."
work=${1:-$(mktemp -d)}
repeats=${REPEATS:-300}
mkdir -p "$work"
go build -o "$work/matvectime" ./ulam/scripts/matvectime
gcc -O3 -march=native -fopenmp ulam/scripts/matvec.c -o "$work/matvec"

echo "load: $(uptime | sed 's/.*load average/load average/')"
read -r rows nnz o2_best o2_median _ < <("$work/matvectime" "$work/logistic.bin" "$repeats")
read -r _ _ o1_best o1_median _ < <(GOMAXPROCS=1 "$work/matvectime" "$work/logistic.bin" "$repeats")
declare -A c_best c_median bw
while read -r what threads best median; do
  case $what in
  csr) c_best[$threads]=$best c_median[$threads]=$median ;;
  read) bw[$threads]=$median ;;
  esac
done < <("$work/matvec" "$work/logistic.bin" "$repeats")
rate() { awk -v ms="$1" -v rows="$rows" -v nnz="$nnz" 'BEGIN { printf "%.1f", (12 * nnz + 20 * rows) / (ms * 1e-3) / 1e9 }'; }
echo
echo "| cores | ours best / median ms | C best / median ms | ours GB/s (median) | read bandwidth GB/s (median) | ratio C/ours (median) |"
echo "|---|---|---|---|---|---|"
for t in 1 2; do
  if [ "$t" = 1 ]; then ob=$o1_best om=$o1_median; else ob=$o2_best om=$o2_median; fi
  ratio=$(awk -v c="${c_median[$t]}" -v o="$om" 'BEGIN { printf "%.2f", c / o }')
  echo "| $t | $ob / $om | ${c_best[$t]} / ${c_median[$t]} | $(rate "$om") | ${bw[$t]} | $ratio |"
done
echo
echo "$rows rows, $nnz nonzeros, $repeats mat-vecs each. load: $(uptime | sed 's/.*load average/load average/')"
