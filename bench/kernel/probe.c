/* Throughput probe: one square root and one division per "pair", the least
 * the field kernel needs (one sqrt per vertex-point pair, shared by two
 * segments, and one division per segment-point pair), with nothing else in
 * the way but one addition. Each lane's chain depends on its last value so
 * the compiler cannot drop the work; 64 independent lanes per thread keep
 * the divide/sqrt unit busy (throughput, not latency).
 *
 * Build: gcc -O3 -march=native -fopenmp probe.c -o probe -lm
 * Run:   OMP_NUM_THREADS=2 ./probe [runs]   (prints pairs_per_s per run)
 */
#include <math.h>
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>

#define LANES 64
#define REPS 800000

int main(int argc, char **argv) {
    int runs = argc > 1 ? atoi(argv[1]) : 5;
    double sink = 0.0;
    for (int r = -1; r < runs; r++) { /* r = -1: warm-up */
        double t0 = omp_get_wtime();
        int threads = 1;
#pragma omp parallel reduction(+ : sink)
        {
            double v[LANES];
            for (int i = 0; i < LANES; i++) v[i] = 1.0 + i * 1e-3 + omp_get_thread_num();
            for (int rep = 0; rep < REPS; rep++) {
#pragma omp simd
                for (int i = 0; i < LANES; i++) v[i] = 1.0 / sqrt(v[i] + 1.0);
            }
            for (int i = 0; i < LANES; i++) sink += v[i];
#pragma omp single
            threads = omp_get_num_threads();
        }
        double t = omp_get_wtime() - t0;
        if (r >= 0) printf("pairs_per_s %.6e\n", (double)REPS * LANES * threads / t);
    }
    fprintf(stderr, "threads %d, checksum %.17g\n", omp_get_max_threads(), sink);
    return 0;
}
