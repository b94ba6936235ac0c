/*
 * The C peer of matvec_compare.sh: a plain CSR mat-vec loop in C on the
 * matrix matvectime wrote (same arrays: int32 row pointers and columns,
 * float64 values), on 1 and 2 OpenMP threads, and the machine's memory
 * read bandwidth measured the same way (a sum over a 512 MiB array, the
 * way STREAM-like benchmarks do; common practice, no source), so that the
 * mat-vec's share of the bandwidth is taken in the same run.
 *
 * Build: gcc -O3 -march=native -fopenmp matvec.c -o matvec
 * Usage: matvec FILE.bin [REPEATS]
 * Prints lines "csr THREADS BEST_MS MEDIAN_MS" and
 * "read THREADS BEST_GBPS MEDIAN_GBPS".
 */
#include <omp.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

static int cmp(const void *a, const void *b) {
	double x = *(const double *)a, y = *(const double *)b;
	return (x > y) - (x < y);
}

/* The median as the Go and Python sides take it: the mean of the middle
 * two of an even count. */
static double median(const double *t, int r) {
	return r % 2 ? t[r / 2] : 0.5 * (t[r / 2 - 1] + t[r / 2]);
}

static void report(const char *what, int threads, double *t, int r) {
	qsort(t, r, sizeof *t, cmp);
	printf("%s %d %.3f %.3f\n", what, threads, t[0], median(t, r));
}

int main(int argc, char **argv) {
	if (argc < 2) {
		fprintf(stderr, "usage: matvec FILE.bin [REPEATS]\n");
		return 2;
	}
	int repeats = argc > 2 ? atoi(argv[2]) : 200;
	if (repeats < 1) repeats = 1;
	FILE *f = fopen(argv[1], "rb");
	if (!f) {
		perror(argv[1]);
		return 2;
	}
	int64_t hdr[2];
	if (fread(hdr, sizeof hdr[0], 2, f) != 2) return 1;
	int64_t n = hdr[0], nnz = hdr[1];
	int32_t *rowPtr = malloc((n + 1) * sizeof *rowPtr);
	int32_t *col = malloc(nnz * sizeof *col);
	double *val = malloc(nnz * sizeof *val);
	double *x = malloc(n * sizeof *x), *y = malloc(n * sizeof *y);
	if (fread(rowPtr, sizeof *rowPtr, n + 1, f) != (size_t)(n + 1) ||
	    fread(col, sizeof *col, nnz, f) != (size_t)nnz ||
	    fread(val, sizeof *val, nnz, f) != (size_t)nnz) {
		fprintf(stderr, "%s: short file\n", argv[1]);
		return 2;
	}
	fclose(f);
	for (int64_t i = 0; i < n; i++) x[i] = 1 + (double)(i % 7), y[i] = 0;
	double *t = malloc(repeats * sizeof *t);

	for (int threads = 1; threads <= 2; threads++) {
		omp_set_num_threads(threads);
		for (int r = -1; r < repeats; r++) { /* r = -1: warm-up */
			double start = omp_get_wtime();
#pragma omp parallel for schedule(static)
			for (int64_t i = 0; i < n; i++) {
				double sum = 0;
				for (int32_t k = rowPtr[i]; k < rowPtr[i + 1]; k++) sum += val[k] * x[col[k]];
				y[i] = sum;
			}
			if (r >= 0) t[r] = (omp_get_wtime() - start) * 1e3;
		}
		report("csr", threads, t, repeats);
	}

	/* Read bandwidth: sum a 512 MiB array. */
	int64_t big = (int64_t)1 << 26;
	double *a = malloc(big * sizeof *a);
	for (int64_t i = 0; i < big; i++) a[i] = (double)(i & 1023);
	int reads = repeats < 20 ? repeats : 20;
	volatile double sink = 0;
	for (int threads = 1; threads <= 2; threads++) {
		omp_set_num_threads(threads);
		for (int r = -1; r < reads; r++) {
			double s = 0, start = omp_get_wtime();
			/* Eight partial sums a thread, so that the additions keep up
			 * with memory and the loop measures the bandwidth. */
#pragma omp parallel for reduction(+ : s) schedule(static)
			for (int64_t i = 0; i < big; i += 8) {
				double p = 0;
				for (int l = 0; l < 8; l++) p += a[i + l];
				s += p;
			}
			double sec = omp_get_wtime() - start;
			sink += s;
			/* Stored as seconds per GB so that the sort puts the best first. */
			if (r >= 0) t[r] = sec / (big * 8 / 1e9);
		}
		qsort(t, reads, sizeof *t, cmp);
		printf("read %d %.2f %.2f\n", threads, 1 / t[0], 1 / median(t, reads));
	}
	return sink == 42 ? 3 : 0;
}
