/* C reference of the field kernel, for bench/kernel/run.sh.
 *
 * The same closed form as crates/fluxbound-core/src/field/kernel.rs (vertex
 * form of the thin straight filament, DESIGN.md "Field engine"): for a
 * segment p1 -> p2 and a point p, a = p1 - p, b = p2 - p,
 *
 *   B = (mu0 I / 4 pi) (a x b) (|a| + |b|) / (|a||b| (|a||b| + a.b)),
 *
 * with |a||b| + a.b kept free of cancellation where a.b < 0 (the point beside
 * the segment) by the same branch-free rewriting as the Rust kernel.
 * One square root per vertex-point pair, one division per segment-point pair.
 *
 * Same layout and structure as the Rust kernel: 64-point chunks in
 * structure-of-arrays form, segments outer, points inner (vectorised by
 * `omp simd`), OpenMP over chunks. It computes the field only, no
 * inside-conductor flags, so it is the lower bound of the work the Rust
 * kernel does. The case is the one of
 * crates/fluxbound-core/examples/kernel_pairs.rs: 10 wavy conductors of 100
 * segments, 100,000 grid points, one frequency.
 *
 * Build: gcc -O3 -march=native -fopenmp ref.c -o ref -lm
 * Run:   OMP_NUM_THREADS=2 ./ref [runs]   (prints pairs_per_s per run)
 */
#include <math.h>
#include <omp.h>
#include <stdio.h>
#include <stdlib.h>

#define CHUNK 64
#define NK 10
#define NS 100
#define NV (NS + 1)
#define NPTS 100000
#define FILL 1.0e9

static double vx[NK * NV], vy[NK * NV], vz[NK * NV];
static double cur_re[NK], cur_im[NK];
static double *ptx, *pty, *ptz;
/* Phasor per point: x, y, z, each re and im. */
static double *out;

static void setup(void) {
    const double pi = 3.14159265358979323846;
    for (int k = 0; k < NK; k++) {
        for (int j = 0; j < NV; j++) {
            double s = (double)j / NS;
            vx[k * NV + j] = 40.0 * s;
            vy[k * NV + j] = 0.2 * k + 0.05 * sin(7.0 * s);
            vz[k * NV + j] = 2.5 + 0.1 * cos(3.0 * s);
        }
        double ph = -120.0 * k * pi / 180.0;
        cur_re[k] = 400.0 * cos(ph);
        cur_im[k] = 400.0 * sin(ph);
    }
    int side = (int)ceil(sqrt((double)NPTS));
    ptx = malloc(sizeof(double) * NPTS);
    pty = malloc(sizeof(double) * NPTS);
    ptz = malloc(sizeof(double) * NPTS);
    out = malloc(sizeof(double) * NPTS * 6);
    for (int i = 0; i < NPTS; i++) {
        ptx[i] = -5.0 + 50.0 * (i % side) / side;
        pty[i] = -10.0 + 20.0 * (i / side) / side;
        ptz[i] = 1.0;
    }
}

/* Unit-current field of conductor k at one chunk (uT per A). */
static void unit_field(int k, const double *restrict px, const double *restrict py,
                       const double *restrict pz, double *restrict gx, double *restrict gy,
                       double *restrict gz) {
    double ax[CHUNK], ay[CHUNK], az[CHUNK], na[CHUNK];
    const double *x = vx + k * NV, *y = vy + k * NV, *z = vz + k * NV;
#pragma omp simd
    for (int i = 0; i < CHUNK; i++) {
        ax[i] = x[0] - px[i];
        ay[i] = y[0] - py[i];
        az[i] = z[0] - pz[i];
        na[i] = sqrt(ax[i] * ax[i] + ay[i] * ay[i] + az[i] * az[i]);
        gx[i] = gy[i] = gz[i] = 0.0;
    }
    for (int j = 1; j < NV; j++) {
        double x1 = x[j], y1 = y[j], z1 = z[j];
#pragma omp simd
        for (int i = 0; i < CHUNK; i++) {
            double bx = x1 - px[i], by = y1 - py[i], bz = z1 - pz[i];
            double nb = sqrt(bx * bx + by * by + bz * bz);
            double cx = ay[i] * bz - az[i] * by;
            double cy = az[i] * bx - ax[i] * bz;
            double cz = ax[i] * by - ay[i] * bx;
            double c2 = cx * cx + cy * cy + cz * cz;
            double dot = ax[i] * bx + ay[i] * by + az[i] * bz;
            double nab = na[i] * nb, sum = na[i] + nb;
            /* |a||b| + a.b without cancellation, as in the Rust kernel:
             * with m = |a||b| + |a.b|, q = sum m / (nab (c2 + (a.b + |a.b|) m)),
             * which is sum / (nab (nab + a.b)) for a.b >= 0 and
             * sum (nab - a.b) / (nab c2) for a.b < 0, every term >= 0. */
            double ad = fabs(dot);
            double m = nab + ad;
            double num = sum * m;
            double den = nab * (c2 + (dot + ad) * m);
            /* den == 0 only on the filament itself: contribute nothing there. */
            double q = num / den;
            double s = den > 0.0 ? q : 0.0;
            gx[i] += cx * s;
            gy[i] += cy * s;
            gz[i] += cz * s;
            ax[i] = bx;
            ay[i] = by;
            az[i] = bz;
            na[i] = nb;
        }
    }
}

static void evaluate(void) {
    int nchunks = (NPTS + CHUNK - 1) / CHUNK;
#pragma omp parallel for schedule(dynamic, 8)
    for (int c = 0; c < nchunks; c++) {
        double px[CHUNK], py[CHUNK], pz[CHUNK], gx[CHUNK], gy[CHUNK], gz[CHUNK];
        double b[CHUNK][6] = {{0}};
        int n = NPTS - c * CHUNK < CHUNK ? NPTS - c * CHUNK : CHUNK;
        for (int i = 0; i < CHUNK; i++) {
            px[i] = i < n ? ptx[c * CHUNK + i] : FILL;
            py[i] = i < n ? pty[c * CHUNK + i] : FILL;
            pz[i] = i < n ? ptz[c * CHUNK + i] : FILL;
        }
        for (int k = 0; k < NK; k++) {
            unit_field(k, px, py, pz, gx, gy, gz);
            double re = cur_re[k] * 0.1, im = cur_im[k] * 0.1; /* mu0/4pi in uT m/A */
            for (int i = 0; i < n; i++) {
                b[i][0] += re * gx[i];
                b[i][1] += im * gx[i];
                b[i][2] += re * gy[i];
                b[i][3] += im * gy[i];
                b[i][4] += re * gz[i];
                b[i][5] += im * gz[i];
            }
        }
        for (int i = 0; i < n; i++)
            for (int q = 0; q < 6; q++) out[(c * CHUNK + i) * 6 + q] = b[i][q];
    }
}

int main(int argc, char **argv) {
    int runs = argc > 1 ? atoi(argv[1]) : 5;
    setup();
    double pairs = (double)NK * NS * NPTS;
    evaluate(); /* warm-up */
    for (int r = 0; r < runs; r++) {
        double t0 = omp_get_wtime();
        evaluate();
        double t = omp_get_wtime() - t0;
        printf("pairs_per_s %.6e\n", pairs / t);
    }
    double r2 = 0.0;
    for (int q = 0; q < 6; q++) r2 += out[q] * out[q];
    fprintf(stderr, "threads %d, resultant at point 0: %.17g uT\n", omp_get_max_threads(), sqrt(r2));
    return 0;
}
