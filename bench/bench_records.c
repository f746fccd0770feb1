/*
 * bench_records.c - benchmark of reading record files (docs/records.md):
 * large generated files of eye-in-hand stations (quaternion blocks, 17
 * significant digits, as tram convert writes them), parsed from memory
 * (tram_records_read_buffer, CSV at 20,000 and 200,000 stations) and from
 * a file in a fresh process (tram_records_read_file, this program run
 * again with --read: CSV and JSON at 200,000 stations).  Reports MB/s by
 * wall time and by CPU time (best of several runs), the growth exponent
 * of the CSV read per byte from 20,000 to 200,000 stations, the memory a
 * record set keeps per station (counted by this program's own allocation
 * hooks, the way tests/test_alloc.c replaces them), and the goals of
 * issue 16 with their limits (CSV at least 300 MB/s at 200,000 stations
 * with a growth exponent at most 1.05, JSON at least 100 MB/s, at most
 * 300 bytes per CSV station); exits 1 when a goal is missed by more than
 * the machine's noise (see goal()).  Writes a JSON array to argv[1].  A
 * benchmark, not a test: `make bench`.
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

/* One measurement: the best of several runs of wall time and of CPU
 * time.  cpu is the critical path of the two threads a read uses (the
 * reading thread, and the checksum beside it, docs/performance.md): on
 * two free cores the read takes that long, and unlike the wall time it
 * is not inflated by other jobs on a shared machine. */
typedef struct timing {
    double wall, cpu;
} timing;

static double clock_of(clockid_t id)
{
    struct timespec ts;
    clock_gettime(id, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* One read of buf (file NULL) or of file, timed. */
static timing timed_read(const char *buf, size_t len, const char *file)
{
    tram_records *r;
    tram_error e;
    double t0 = now(), c0 = clock_of(CLOCK_THREAD_CPUTIME_ID),
           p0 = clock_of(CLOCK_PROCESS_CPUTIME_ID);
    tram_status st = file ? tram_records_read_file(file, NULL, &r, &e)
                          : tram_records_read_buffer("bench.csv", buf, len, NULL, &r, &e);
    double wall = now() - t0, thread = clock_of(CLOCK_THREAD_CPUTIME_ID) - c0,
           process = clock_of(CLOCK_PROCESS_CPUTIME_ID) - p0;
    if (st != TRAM_OK) {
        fprintf(stderr, "bench: read failed: %s\n", e.message);
        exit(1);
    }
    tram_records_destroy(r);
    timing t = {wall, thread > process - thread ? thread : process - thread};
    return t;
}

static void keep_best(timing *best, timing t)
{
    if (t.wall < best->wall) best->wall = t.wall;
    if (t.cpu < best->cpu) best->cpu = t.cpu;
}

static timing best_parse(const char *buf, size_t len, int reps)
{
    timing best = {INFINITY, INFINITY};
    for (int k = 0; k < reps; k++) keep_best(&best, timed_read(buf, len, NULL));
    return best;
}

/* The read of file in a fresh process (this program run again with
 * --read), as a user's command reads it: the best of reps. */
static timing best_fresh(const char *self, const char *file, int reps)
{
    timing best = {INFINITY, INFINITY};
    for (int k = 0; k < reps; k++) {
        char cmd[2300];
        snprintf(cmd, sizeof cmd, "'%s' --read '%s'", self, file);
        FILE *p = popen(cmd, "r");
        timing t;
        if (!p || fscanf(p, "%lf %lf", &t.wall, &t.cpu) != 2 || pclose(p) != 0) {
            fprintf(stderr, "bench: the fresh-process read of %s failed\n", file);
            exit(1);
        }
        keep_best(&best, t);
    }
    return best;
}

/* A goal: met when the wall time or the CPU time shows it; FAIL when both
 * miss it by a clear margin (the machine's noise is less than that);
 * otherwise "not shown" (too close to tell on a loaded machine).  higher:
 * the goal is a lower limit.  Returns 1 for FAIL. */
static int goal(const char *what, double wall, double cpu, double limit, double margin,
                int higher, const char *fmt)
{
    int met_w = higher ? wall >= limit : wall <= limit;
    int met_c = higher ? cpu >= limit : cpu <= limit;
    int fail = higher ? wall < limit - margin && cpu < limit - margin
                      : wall > limit + margin && cpu > limit + margin;
    printf("goal: %s %s ", what, higher ? ">=" : "<=");
    printf(fmt, limit);
    printf(": wall ");
    printf(fmt, wall);
    printf(", cpu ");
    printf(fmt, cpu);
    printf(" (%s)\n", met_w || met_c ? "met" : fail ? "FAIL" : "not shown, within the noise");
    return fail;
}

static void put(FILE *out, const char *name, size_t n, size_t bytes, timing t)
{
    double mb = (double)bytes / 1e6;
    printf("%-30s %10zu %8.1f %9.4f %9.1f %9.4f %9.1f\n", name, n, mb, t.wall, mb / t.wall, t.cpu,
           mb / t.cpu);
    fprintf(out,
            "  {\"name\": \"%s\", \"n\": %zu, \"seconds\": %.6g, \"cpu_seconds\": %.6g, "
            "\"bytes\": %zu, \"mb_per_s\": %.4g, \"cpu_mb_per_s\": %.4g},\n",
            name, n, t.wall, t.cpu, bytes, mb / t.wall, mb / t.cpu);
}

/* Write len bytes of buf to path. */
static void write_file(const char *path, const char *buf, size_t len)
{
    FILE *f = fopen(path, "wb");
    if (!f || fwrite(buf, 1, len, f) != len || fclose(f) != 0) {
        fprintf(stderr, "bench: cannot write %s\n", path);
        exit(1);
    }
}

int main(int argc, char **argv)
{
    if (argc == 3 && strcmp(argv[1], "--read") == 0) {
        /* the child of best_fresh: one read, its times on stdout */
        timing t = timed_read(NULL, 0, argv[2]);
        printf("%.9g %.9g\n", t.wall, t.cpu);
        return 0;
    }
    const char *json = argc > 1 ? argv[1] : "build/bench_records.json";
    const char *dir = argc > 2 ? argv[2] : "build";
    FILE *out = fopen(json, "w");
    if (!out) return 1;
    fprintf(out, "[\n");
    printf("best of several runs; cpu: the reading thread or the checksum beside it, whichever "
           "is longer\n");
    printf("%-30s %10s %8s %9s %9s %9s %9s\n", "measurement", "stations", "MB", "wall s",
           "MB/s", "cpu s", "MB/s");
    const size_t sizes[] = {20000, 200000};
    timing csv[2] = {{0, 0}, {0, 0}};
    size_t csv_len[2] = {0, 0};
    double csv_bytes = 0;
    char path[1024];
    for (int k = 0; k < 2; k++) {
        size_t len;
        char *buf = generate(sizes[k], 0, &len);
        csv_len[k] = len;
        csv[k] = best_parse(buf, len, k ? 5 : 15);
        put(out, "read_csv_memory", sizes[k], len, csv[k]);
        if (k == 1) {
            snprintf(path, sizeof path, "%s/bench_records_data.csv", dir);
            write_file(path, buf, len);
            put(out, "read_csv_file_fresh_process", sizes[k], len, best_fresh(argv[0], path, 3));
            if (!getenv("BENCH_KEEP")) remove(path);
            csv_bytes = kept_per_station(buf, len, sizes[k]);
        }
        free(buf);
    }
    size_t jlen;
    char *jbuf = generate(sizes[1], 1, &jlen);
    snprintf(path, sizeof path, "%s/bench_records_data.json", dir);
    write_file(path, jbuf, jlen);
    free(jbuf);
    timing js = best_fresh(argv[0], path, 3);
    put(out, "read_json_file_fresh_process", sizes[1], jlen, js);
    if (!getenv("BENCH_KEEP")) remove(path);

    printf("%-30s %10zu %8.1f bytes per station kept (tram_station %zu of them)\n",
           "read_csv_memory_kept", sizes[1], csv_bytes, sizeof(tram_station));
    fprintf(out,
            "  {\"name\": \"read_csv_bytes_per_station\", \"n\": %zu, \"seconds\": null, "
            "\"bytes_per_station\": %.4g, \"station_struct_bytes\": %zu},\n",
            sizes[1], csv_bytes, sizeof(tram_station));
    double lr = log((double)sizes[1] / (double)sizes[0]);
    /* per byte, so that the sizes' small difference in row length cancels */
    double ew = log(csv[1].wall / (double)csv_len[1] * (double)csv_len[0] / csv[0].wall) / lr + 1;
    double ec = log(csv[1].cpu / (double)csv_len[1] * (double)csv_len[0] / csv[0].cpu) / lr + 1;
    printf("growth exponent of the CSV read, 20,000 -> 200,000 stations: wall %.2f, cpu %.2f "
           "(1 = linear)\n",
           ew, ec);
    int failed = 0;
    failed |= goal("CSV MB/s at 200,000 stations", (double)csv_len[1] / 1e6 / csv[1].wall,
                   (double)csv_len[1] / 1e6 / csv[1].cpu, 300, 30, 1, "%.0f");
    failed |= goal("CSV growth exponent 20,000 -> 200,000", ew, ec, 1.05, 0.10, 0, "%.2f");
    failed |= goal("JSON MB/s, fresh process", (double)jlen / 1e6 / js.wall,
                   (double)jlen / 1e6 / js.cpu, 100, 10, 1, "%.0f");
    /* memory does not depend on the load: no margin */
    failed |= goal("bytes kept per CSV station", csv_bytes, csv_bytes, 300, 0, 0, "%.0f");
    fprintf(out,
            "  {\"name\": \"read_csv_growth_exponent\", \"n\": %zu, \"seconds\": null, "
            "\"exponent\": %.4g, \"cpu_exponent\": %.4g}\n]\n",
            sizes[1], ew, ec);
    fclose(out);
    if (failed) printf("bench_records: FAIL (a goal missed by more than the noise)\n");
    return failed;
}
