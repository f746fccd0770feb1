/*
 * bench_register.c - benchmark of point-set registration from arrays in
 * memory (tram_register_points: Kabsch / Arun et al. with Umeyama's
 * reflection correction, one streaming pass over the pairs on both cores)
 * at N = 1e5, 1e6 and 1e7 pairs, side by side with
 *   - NumPy's SVD-based solution on the same data (bench/ref_register_numpy.py,
 *     run with Debian's /usr/bin/python3 on the pairs written to a file), and
 *   - the machine's memory read bandwidth, measured here by summing the
 *     same buffer (the pairs) on the same number of threads.
 * Reports time, pairs per second, the ratio to NumPy and the fraction of
 * the measured bandwidth; writes a JSON array (one object per measurement)
 * to the file named by argv[1].  A benchmark, not a test: `make bench`.
 *
 * The data: "from" points uniform in a 2 m cube about (1000, -500, 300) mm,
 * "to" = R from + t + 0.1 mm Gaussian noise, fixed seed; the ground truth
 * is recovered by both sides (checked, so that a fast wrong answer cannot
 * pass as a result).
 */
#include <math.h>
#include <pthread.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "tram/tram.h"
#include "bench_util.h"

#define THREADS 2
#define REPS 5


/* --- memory read bandwidth: THREADS threads each sum a share ---------- */
typedef struct share {
    const double *p;
    size_t n;
    double sum;
} share;

/* Sixteen independent sums in four 4-lane vectors (AVX2 where the
 * processor has it, as the registration pass uses), so the loop waits on
 * memory, not on additions: the fastest plain read this machine does. */
typedef double v4d __attribute__((vector_size(32)));
#if defined(__x86_64__)
__attribute__((target("avx2")))
#endif
static double sum_avx2(const double *p, size_t n)
{
    v4d a = {0}, b = {0}, c = {0}, d = {0};
    size_t i = 0;
    for (; i + 16 <= n; i += 16) {
        v4d x0, x1, x2, x3;
        memcpy(&x0, p + i, sizeof x0);
        memcpy(&x1, p + i + 4, sizeof x1);
        memcpy(&x2, p + i + 8, sizeof x2);
        memcpy(&x3, p + i + 12, sizeof x3);
        a += x0;
        b += x1;
        c += x2;
        d += x3;
    }
    v4d t = a + b + c + d;
    double s = t[0] + t[1] + t[2] + t[3];
    for (; i < n; i++) s += p[i];
    return s;
}

static void *sum_share(void *arg)
{
    share *s = arg;
    s->sum = sum_avx2(s->p, s->n);
    return NULL;
}

/* Read bandwidth in bytes per second over n doubles, one measurement (the
 * caller takes the best over as many repetitions as it gives the kernel,
 * so that neither side gets more chances at a quiet moment). */
static double bandwidth(const double *p, size_t n)
{
    share s[THREADS];
    pthread_t t[THREADS];
    double t0 = now();
    for (int k = 0; k < THREADS; k++) {
        size_t a = n * (size_t)k / THREADS, b = n * (size_t)(k + 1) / THREADS;
        s[k] = (share){p + a, b - a, 0};
        if (k) pthread_create(&t[k], NULL, sum_share, &s[k]);
    }
    sum_share(&s[0]);
    for (int k = 1; k < THREADS; k++) pthread_join(t[k], NULL);
    double dt = now() - t0, sink = 0;
    for (int k = 0; k < THREADS; k++) sink += s[k].sum;
    if (sink == 42.0) printf(" "); /* keep the sums alive */
    return (double)n * sizeof(double) / dt;
}

/* Run the NumPy reference on the pairs file; its best time in seconds, or
 * NAN when it could not run.  It prints "seconds S angle_deg A". */
static double numpy_seconds(const char *script, const char *path, size_t n, double *angle_deg)
{
    char cmd[2048];
    snprintf(cmd, sizeof cmd, "/usr/bin/python3 %s %s %zu %d", script, path, n, REPS);
    FILE *p = popen(cmd, "r");
    if (!p) return NAN;
    double s = NAN, a = NAN;
    if (fscanf(p, "seconds %lf angle_deg %lf", &s, &a) != 2) s = NAN;
    pclose(p);
    *angle_deg = a;
    return s;
}

int main(int argc, char **argv)
{
    const char *json = argc > 1 ? argv[1] : "build/bench_register.json";
    const char *script = argc > 2 ? argv[2] : "bench/ref_register_numpy.py";
    const char *datafile = argc > 3 ? argv[3] : "build/bench_pairs.bin";
    FILE *f = fopen(json, "w");
    if (!f) return 1;
    const size_t sizes[] = {100000, 1000000, 10000000};
    const size_t nmax = sizes[2];
    double *xy = malloc(6 * nmax * sizeof *xy); /* from (3n) then to (3n) */
    if (!xy) return 1;
    double wtrue[3] = {0.3, -0.2, 0.9}, ttrue[3] = {250, -40, 800};
    tram_mat3 R;
    tram_so3_exp(wtrue, &R);
    fprintf(f, "[\n");
    printf("%-30s %10s %10s %12s %10s %10s %10s\n", "measurement", "n", "seconds", "pairs/s",
           "numpy s", "x numpy", "bw frac");
    double secs[3], frac_1e7 = 0;
    for (int k = 0; k < 3; k++) {
        size_t n = sizes[k];
        double *from = xy, *to = xy + 3 * n;
        bench_state = 20261202;
        for (size_t i = 0; i < n; i++) {
            double *x = from + 3 * i, *y = to + 3 * i;
            x[0] = 1000 + 2000 * (uniform() - 0.5);
            x[1] = -500 + 2000 * (uniform() - 0.5);
            x[2] = 300 + 2000 * (uniform() - 0.5);
            for (int a = 0; a < 3; a++)
                y[a] = R.m[a][0] * x[0] + R.m[a][1] * x[1] + R.m[a][2] * x[2] + ttrue[a] +
                       0.1 * normal();
        }
        /* the same bytes for NumPy */
        FILE *d = fopen(datafile, "wb");
        if (!d || fwrite(xy, sizeof *xy, 6 * n, d) != 6 * n) return 1;
        fclose(d);

        tram_register_options o = {TRAM_REGISTER_SVD, 0, 3, THREADS};
        tram_register_result res;
        tram_error e;
        double best = INFINITY, bw = 0;
        /* REPS rounds, each one bandwidth measurement then one registration:
         * the best of each, over the same number of tries */
        for (int r = 0; r < REPS; r++) {
            double bwr = bandwidth(xy, 6 * n);
            if (bwr > bw) bw = bwr;
            double t0 = now();
            if (tram_register_points(from, to, NULL, n, &o, &res, &e) != TRAM_OK) {
                fprintf(stderr, "register failed: %s\n", e.message);
                return 1;
            }
            double dt = now() - t0;
            if (dt < best) best = dt;
        }
        secs[k] = best;
        tram_mat3 Rs;
        double ts[3];
        tram_se3_to_rt(&res.T_to_from, &Rs, ts);
        double err_deg = tram_so3_distance(&Rs, &R) * 180.0 / 3.141592653589793;
        double np_angle = NAN;
        double np_s = numpy_seconds(script, datafile, n, &np_angle);
        double frac = (6.0 * (double)n * sizeof(double) / best) / bw;
        if (k == 2) frac_1e7 = frac;
        printf("%-30s %10zu %10.5f %12.3g %10.5f %10.1f %10.2f\n", "register (Kabsch, 2 threads)",
               n, best, (double)n / best, np_s, np_s / best, frac);
        if (err_deg > 1e-3 || !(fabs(np_angle - err_deg) < 1e-6)) {
            fprintf(stderr, "bench: the solutions disagree (tram %.3g deg, NumPy %.3g deg from the "
                            "truth)\n",
                    err_deg, np_angle);
            return 1;
        }
        fprintf(f,
                "  {\"name\": \"register\", \"n\": %zu, \"seconds\": %.6g, \"pairs_per_s\": %.6g, "
                "\"numpy_seconds\": %.6g, \"ratio_vs_numpy\": %.4g, \"read_bandwidth_gb_per_s\": "
                "%.4g, \"bandwidth_fraction\": %.4g},\n",
                n, best, (double)n / best, np_s, np_s / best, bw / 1e9, frac);
    }
    remove(datafile);
    double slope = (log(secs[2]) - log(secs[0])) / (log(1e7) - log(1e5));
    printf("goal: bandwidth fraction at 1e7 pairs >= 0.85: %.2f (%s)\n", frac_1e7,
           frac_1e7 >= 0.85 ? "met" : "NOT met");
    printf("growth exponent of registration time, 1e5 -> 1e7 pairs: %.2f (1 = linear)\n", slope);
    fprintf(f, "  {\"name\": \"register_growth_exponent\", \"n\": 10000000, \"seconds\": null, "
               "\"exponent\": %.4g}\n]\n",
            slope);
    fclose(f);
    free(xy);
    return 0;
}
