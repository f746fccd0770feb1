/*
 * bench_records.c - benchmark of reading record files (docs/records.md):
 * large generated files of eye-in-hand stations (quaternion blocks, 17
 * significant digits, as tram convert writes them), parsed from memory
 * (tram_records_read_buffer) and from a file (tram_records_read_file), in
 * the CSV and the JSON form.  Reports MB/s and the growth exponent of the
 * CSV parse time across sizes, the memory a record set keeps per station
 * (counted by this program's own allocation hooks, the way
 * tests/test_alloc.c replaces them), and the goals of issue 16 (CSV at
 * least 300 MB/s at 200,000 stations with a growth exponent at most 1.05,
 * JSON at least 100 MB/s, at most 300 bytes per CSV station); writes a
 * JSON array to argv[1].  A benchmark, not a test: `make bench`.
 */
#include <malloc.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "tram/tram.h"
#include "bench_util.h"

/* The library's allocation hooks (src/core/alloc.c), replaced to count
 * the bytes live: a static archive member is linked only for a symbol
 * still undefined, so these are used instead. */
static size_t live_bytes;
static void count(void *p, int sign)
{
    if (p) __atomic_add_fetch(&live_bytes, (size_t)sign * malloc_usable_size(p), __ATOMIC_RELAXED);
}
void *tram__malloc(size_t n);
void *tram__calloc(size_t c, size_t n);
void *tram__realloc(void *p, size_t n);
void tram__free(void *p);
void *tram__malloc(size_t n)
{
    void *p = malloc(n ? n : 1);
    count(p, 1);
    return p;
}
void *tram__calloc(size_t c, size_t n)
{
    void *p = calloc(c ? c : 1, n ? n : 1);
    count(p, 1);
    return p;
}
void *tram__realloc(void *p, size_t n)
{
    size_t old = p ? malloc_usable_size(p) : 0;
    void *q = realloc(p, n ? n : 1);
    if (q) {
        __atomic_sub_fetch(&live_bytes, old, __ATOMIC_RELAXED);
        count(q, 1);
    }
    return q;
}
void tram__free(void *p)
{
    count(p, -1);
    free(p);
}

/* Bytes per station a record set read from buf keeps. */
static double kept_per_station(const char *buf, size_t len, size_t n)
{
    tram_records *r;
    tram_error e;
    size_t before = live_bytes;
    if (tram_records_read_buffer("bench.csv", buf, len, NULL, &r, &e) != TRAM_OK) exit(1);
    double per = (double)(live_bytes - before) / (double)n;
    tram_records_destroy(r);
    return per;
}

/* n stations with varied poses, written by the library's own writer. */
static char *generate(size_t n, int json, size_t *len)
{
    tram_records r;
    memset(&r, 0, sizeof r);
    r.count = n;
    r.stations = calloc(n, sizeof *r.stations);
    r.id_pool = calloc(n, 24); /* the ids, freed with the record set */
    r.length_unit = TRAM_LENGTH_MM;
    r.has_block[0] = r.has_block[1] = 1;
    r.setup = TRAM_SETUP_EYE_IN_HAND;
    for (size_t i = 0; i < n; i++) {
        double k = (double)i;
        double w[3] = {0.3 * sin(k), 0.2 * cos(1.7 * k), 3.0 * sin(0.37 * k)};
        double v[3] = {0.1 * cos(k), -0.2 * sin(2.3 * k), 0.4 * cos(0.11 * k)};
        tram_mat3 R;
        tram_so3_exp(w, &R);
        double t[3] = {600 + 100 * sin(k), -50 + 80 * cos(k), 450 + 60 * sin(3 * k)};
        tram_se3_from_rt(&R, t, &r.stations[i].T_base_flange);
        tram_so3_exp(v, &R);
        double u[3] = {12.5 * cos(k), -4.25 * sin(k), 612.0 + sin(k)};
        tram_se3_from_rt(&R, u, &r.stations[i].T_sensor_target);
        snprintf(r.id_pool + 24 * i, 24, "s%zu", i + 1);
        r.stations[i].id = r.id_pool + 24 * i;
    }
    char *buf = NULL;
    FILE *f = open_memstream(&buf, len);
    tram_output_rep rep = {.kind = TRAM_REP_QUAT, .euler = TRAM_EULER_UNSET,
                           .length_unit = TRAM_LENGTH_UNSET, .angle_unit = TRAM_ANGLE_UNSET};
    tram_error e;
    if (!f || tram_records_write(&r, &rep, json, f, &e) != TRAM_OK) exit(1);
    fclose(f);
    free(r.stations);
    free(r.id_pool);
    return buf;
}

static double best_parse(const char *buf, size_t len, const char *file, int reps)
{
    double best = INFINITY;
    for (int k = 0; k < reps; k++) {
        tram_records *r;
        tram_error e;
        double t0 = now();
        tram_status st = file ? tram_records_read_file(file, NULL, &r, &e)
                              : tram_records_read_buffer("bench.csv", buf, len, NULL, &r, &e);
        double dt = now() - t0;
        if (st != TRAM_OK) {
            fprintf(stderr, "bench: read failed: %s\n", e.message);
            exit(1);
        }
        tram_records_destroy(r);
        if (dt < best) best = dt;
    }
    return best;
}

int main(int argc, char **argv)
{
    const char *json = argc > 1 ? argv[1] : "build/bench_records.json";
    const char *dir = argc > 2 ? argv[2] : "build";
    FILE *out = fopen(json, "w");
    if (!out) return 1;
    fprintf(out, "[\n");
    printf("%-30s %10s %10s %10s %10s\n", "measurement", "stations", "MB", "seconds", "MB/s");
    const size_t sizes[] = {20000, 200000};
    double csv_s[2] = {0, 0}, csv_mbs = 0, json_mbs = 0, csv_bytes = 0;
    for (int form = 0; form <= 1; form++) {
        for (int k = 0; k < 2; k++) {
            if (form == 1 && k == 0) continue; /* JSON at the large size only */
            size_t len;
            char *buf = generate(sizes[k], form, &len);
            char path[1024];
            snprintf(path, sizeof path, "%s/bench_records_data.%s", dir, form ? "json" : "csv");
            FILE *f = fopen(path, "wb");
            if (!f || fwrite(buf, 1, len, f) != len) return 1;
            fclose(f);
            double mb = (double)len / 1e6;
            for (int src = 0; src <= 1; src++) {
                double s = best_parse(buf, len, src ? path : NULL, 3);
                if (!form && !src) csv_s[k] = s;
                if (!src && k == 1) *(form ? &json_mbs : &csv_mbs) = mb / s;
                char name[64];
                snprintf(name, sizeof name, "read_%s_%s", form ? "json" : "csv",
                         src ? "file" : "memory");
                printf("%-30s %10zu %10.1f %10.4f %10.1f\n", name, sizes[k], mb,
                       s, mb / s);
                fprintf(out,
                        "  {\"name\": \"%s\", \"n\": %zu, \"seconds\": %.6g, \"bytes\": %zu, "
                        "\"mb_per_s\": %.4g},\n",
                        name, sizes[k], s, len, mb / s);
            }
            if (!form && k == 1) {
                csv_bytes = kept_per_station(buf, len, sizes[k]);
                printf("%-30s %10zu %10.1f bytes per station kept\n", "read_csv_memory_kept",
                       sizes[k], csv_bytes);
                fprintf(out,
                        "  {\"name\": \"read_csv_bytes_per_station\", \"n\": %zu, \"seconds\": "
                        "null, \"bytes_per_station\": %.4g},\n",
                        sizes[k], csv_bytes);
            }
            if (!getenv("BENCH_KEEP")) remove(path);
            free(buf);
        }
    }
    double slope = log(csv_s[1] / csv_s[0]) / log((double)sizes[1] / (double)sizes[0]);
    printf("growth exponent of CSV parse time, 20,000 -> 200,000 stations: %.2f (1 = linear)\n",
           slope);
    printf("goal: CSV >= 300 MB/s at 200,000 stations: %.0f (%s)\n", csv_mbs,
           csv_mbs >= 300 ? "met" : "NOT met");
    printf("goal: CSV growth exponent <= 1.05: %.2f (%s)\n", slope, slope <= 1.05 ? "met" : "NOT met");
    printf("goal: JSON >= 100 MB/s: %.0f (%s)\n", json_mbs, json_mbs >= 100 ? "met" : "NOT met");
    printf("goal: at most 300 bytes kept per CSV station: %.0f (%s)\n", csv_bytes,
           csv_bytes <= 300 ? "met" : "NOT met");
    fprintf(out, "  {\"name\": \"read_csv_growth_exponent\", \"n\": %zu, \"seconds\": null, "
                 "\"exponent\": %.4g}\n]\n",
            sizes[1], slope);
    fclose(out);
    return 0;
}
