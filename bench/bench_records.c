/*
 * bench_records.c - benchmark of reading record files (docs/records.md):
 * large generated files of eye-in-hand stations (quaternion blocks, 17
 * significant digits, as tram convert writes them), parsed from memory
 * (tram_records_read_buffer) and from a file (tram_records_read_file), in
 * the CSV and the JSON form.  Reports MB/s and the growth exponent of the
 * CSV parse time across sizes; writes a JSON array to argv[1].  A
 * benchmark, not a test: `make bench`.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "tram/tram.h"
#include "bench_util.h"

/* n stations with varied poses, written by the library's own writer. */
static char *generate(size_t n, int json, size_t *len)
{
    tram_records r;
    memset(&r, 0, sizeof r);
    r.count = n;
    r.stations = calloc(n, sizeof *r.stations);
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
        snprintf(r.stations[i].id, sizeof r.stations[i].id, "s%zu", i + 1);
    }
    char *buf = NULL;
    FILE *f = open_memstream(&buf, len);
    tram_output_rep rep = {TRAM_REP_QUAT, TRAM_EULER_UNSET, TRAM_LENGTH_UNSET, TRAM_ANGLE_UNSET, 0, 0};
    tram_error e;
    if (!f || tram_records_write(&r, &rep, json, f, &e) != TRAM_OK) exit(1);
    fclose(f);
    free(r.stations);
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
    double csv_s[2] = {0, 0};
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
            if (!getenv("BENCH_KEEP")) remove(path);
            free(buf);
        }
    }
    double slope = log(csv_s[1] / csv_s[0]) / log((double)sizes[1] / (double)sizes[0]);
    printf("growth exponent of CSV parse time, 20,000 -> 200,000 stations: %.2f (1 = linear)\n",
           slope);
    fprintf(out, "  {\"name\": \"read_csv_growth_exponent\", \"n\": %zu, \"seconds\": null, "
                 "\"exponent\": %.4g}\n]\n",
            sizes[1], slope);
    fclose(out);
    return 0;
}
