/*
 * cmd_register.c - "tram register": the rigid (or similarity) transform
 * between two lists of corresponding points, e.g. a fixed camera or a
 * fixture registered to the robot base from points the tool tip visited.
 */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define M_PI_TRAM 3.14159265358979323846

const char cli_register_help[] =
    "usage: tram register [OPTIONS] PAIRS\n\n"
    "Finds T_to_from with p_to = c R p_from + t from a point-pair file (docs/points.md):\n"
    "columns from_x,from_y[,from_z],to_x,to_y[,to_z] and optionally point (id) and weight;\n"
    "2D when the z columns are absent.  Rigid by default (c = 1); reflections are never\n"
    "returned as rotations.\n\n"
    "options:\n"
    "  --scale             similarity: also solve the scale c (Umeyama 1991)\n"
    "  --method M          svd (Kabsch 1976; Arun et al. 1987; default) or quaternion\n"
    "                      (Horn 1987)\n"
    "  --robust            RANSAC on minimal samples, then least squares on the inliers;\n"
    "                      outliers are flagged\n"
    "  --threshold LEN     inlier distance for --robust, e.g. 0.5mm (default: from the\n"
    "                      data, 2.5 robust sigmas)\n"
    "  --seed N            RANSAC seed (default 1)\n"
    "  --threads N         threads for the moment pass of very large files (default 2)\n"
    "  --length-unit U     when the file does not declare one\n"
    "  --json              print the result as JSON\n"
    "  --max-residual LEN[+PCT%]   plausibility gate on the residual RMS (default\n"
    "                      5mm+1%: 5 mm plus 1% of the working distance)\n"
    "  --pairing-test N    random pairings of the pairing test (default 30; 0: off;\n"
    "                      its seed is --seed)\n"
    "  --no-plausibility   skip the gate and the pairing test\n\n"
    "examples (from the top of the source tree):\n"
    "  tram register --scale tests/cli/data/pairs.csv\n"
    "\n"
    "exit status: 0 success; 2 usage or input error; 3 the points cannot determine the\n"
    "transform (fewer than 3 points in 3D or 2 in 2D, coincident or collinear points),\n"
    "or the residuals are implausible, or the pairing fits no better than random ones.\n";

static void progress(void *ctx, size_t done, size_t total)
{
    (void)ctx;
    if (total < 1000) return;
    fprintf(stderr, "\rRANSAC %zu/%zu", done, total);
    if (done >= total) fputc('\n', stderr);
}

/* The result as JSON (tram/register_json.h) on stdout. */
static int print_json(const tram_point_pairs *p, const tram_register_result *res, const double *resid,
                      const int *inlier, int robust, double thr, const char *method, int scale,
                      const tram_register_trust *trust, const tram_register_trust_options *to)
{
    tram_register_report r = {p, res, resid, robust ? inlier : NULL, thr, method, scale, trust, to};
    tram_error err;
    char *text = NULL;
    if (tram_register_to_json(&r, &text, &err) != TRAM_OK) {
        fprintf(stderr, "tram register: error: %s\n", err.message);
        return CLI_EXIT_USAGE;
    }
    fputs(text, stdout);
    tram_free(text);
    return CLI_EXIT_OK;
}

/* The command line of tram register. */
typedef struct reg_args {
    const char *file, *method;
    int json, robust, plaus;
    tram_register_options ro;
    tram_length_unit lu, thr_unit;
    double thr;                  /* --threshold in thr_unit (0: from the data) */
    unsigned long long seed;
    tram_register_trust_options to;
    double max_rms_m;            /* --max-residual's length in metres          */
} reg_args;

/* --max-residual LEN[+PCT%] into a; 0, or the usage exit code. */
static int parse_max_residual(const char *v, reg_args *a)
{
    char *end;
    double x = strtod(v, &end);
    tram_length_unit xu = TRAM_LENGTH_UNSET;
    char ub[8] = {0};
    size_t ul = strcspn(end, "+");
    if (ul < sizeof ub) {
        memcpy(ub, end, ul);
        xu = tram_unit_length_parse(ub);
    }
    const char *rest = end + ul;
    double pct = 1.0;
    if (*rest == '+') {
        pct = strtod(rest + 1, &end);
        rest = (end != rest + 1 && *end == '%' && end[1] == '\0' && pct >= 0) ? "" : NULL;
    }
    if (end == v || !(x > 0) || xu == TRAM_LENGTH_UNSET || !rest || *rest)
        return cli_usage_error("register", "--max-residual '%s': expected LENGTH[+PERCENT%%], "
                                           "e.g. 5mm+1%%", v);
    a->max_rms_m = x * tram_unit_length_in_m(xu);
    a->to.max_rms_fraction = pct / 100;
    return 0;
}

/* An option that takes a number or a unit, at argv[*i]; 1 if it was one
 * (with *rc the usage exit code on a bad value, else 0). */
static int parse_valued(int argc, char **argv, int *i, reg_args *a, int *bad, int *rc)
{
    const char *v = NULL;
    char *end;
    *rc = 0;
    if (cli_take(argc, argv, i, "--max-residual", &v, bad)) {
        if (!*bad) *rc = parse_max_residual(v, a);
    } else if (cli_take(argc, argv, i, "--pairing-test", &v, bad)) {
        if (*bad) return 1;
        long n = strtol(v, &end, 10);
        if (*end || end == v || n < 0 || n > 10000)
            *rc = cli_usage_error("register", "--pairing-test '%s': expected a count (0: off)", v);
        a->to.permutations = (size_t)(n > 0 ? n : 0);
    } else if (cli_take(argc, argv, i, "--method", &a->method, bad)) {
        if (*bad) return 1;
        if (strcmp(a->method, "svd") == 0) a->ro.method = TRAM_REGISTER_SVD;
        else if (strcmp(a->method, "quaternion") == 0) a->ro.method = TRAM_REGISTER_QUATERNION;
        else *rc = cli_usage_error("register", "--method '%s': expected svd or quaternion", a->method);
    } else if (cli_take(argc, argv, i, "--threshold", &v, bad)) {
        if (*bad) return 1;
        a->thr = strtod(v, &end);
        a->thr_unit = tram_unit_length_parse(end);
        if (end == v || !(a->thr > 0) || a->thr_unit == TRAM_LENGTH_UNSET)
            *rc = cli_usage_error("register", "--threshold '%s': expected a length with its unit, e.g. 0.5mm", v);
    } else if (cli_take(argc, argv, i, "--seed", &v, bad)) {
        if (*bad) return 1;
        a->seed = strtoull(v, &end, 10);
        if (*end) *rc = cli_usage_error("register", "--seed '%s': expected a number", v);
    } else if (cli_take(argc, argv, i, "--threads", &v, bad)) {
        if (*bad) return 1;
        long n = strtol(v, &end, 10);
        if (*end || n < 1 || n > 8) *rc = cli_usage_error("register", "--threads '%s': expected 1 to 8", v);
        a->ro.threads = (int)n;
    } else if (cli_take(argc, argv, i, "--length-unit", &v, bad)) {
        if (*bad) return 1;
        if ((a->lu = tram_unit_length_parse(v)) == TRAM_LENGTH_UNSET)
            *rc = cli_usage_error("register", "--length-unit '%s': expected mm, cm, m or in", v);
    } else {
        return 0;
    }
    return 1;
}

/* The command line into a; 0, or the usage exit code. */
static int parse_args(int argc, char **argv, reg_args *a)
{
    memset(a, 0, sizeof *a);
    a->method = "svd";
    a->plaus = 1;
    a->ro = (tram_register_options){TRAM_REGISTER_SVD, 0, 3, 2};
    a->lu = a->thr_unit = TRAM_LENGTH_UNSET;
    a->seed = 1;
    a->to = (tram_register_trust_options){0.005, 0.01, 30, 1, 3.0};
    a->max_rms_m = 0.005;
    int bad = 0, rc = 0;
    for (int i = 1; i < argc; i++) {
        if (cli_flag(argv, i, "--scale")) {
            a->ro.scale = 1;
        } else if (cli_flag(argv, i, "--robust")) {
            a->robust = 1;
        } else if (cli_flag(argv, i, "--json")) {
            a->json = 1;
        } else if (cli_flag(argv, i, "--no-plausibility")) {
            a->plaus = 0;
        } else if (parse_valued(argc, argv, &i, a, &bad, &rc)) {
            if (rc) return rc;
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            return cli_usage_error("register", "unknown option '%s'", argv[i]);
        } else if (a->file) {
            return cli_usage_error("register", "one point-pair file expected");
        } else {
            a->file = argv[i];
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (!a->file) return cli_usage_error("register", "no point-pair file (use '-' for stdin)");
    return 0;
}

/* The human-readable report of a registration on stdout. */
static void print_text(const tram_point_pairs *p, const tram_register_result *res,
                       const double *resid, const int *inlier, double used, const char *mname,
                       const reg_args *a, const tram_register_trust *trust)
{
    const char *u = tram_unit_length_name(p->length_unit);
    const tram_se3 *T = &res->T_to_from;
    printf("tram register: %zu point pairs (%dD) from %s, lengths in %s, %s%s\n\n", p->n,
           p->dim, p->source, u, mname, a->robust ? " with RANSAC" : "");
    printf("T_to_from  (maps 'from' coordinates to 'to' coordinates: p_to = c R p_from + t)\n");
    if (p->dim == 3) {
        for (int i = 0; i < 4; i++)
            printf("    [ %12.8f %12.8f %12.8f %14.6f ]\n", T->m[i][0], T->m[i][1], T->m[i][2], T->m[i][3]);
        tram_mat3 R;
        tram_quat_wxyz q;
        tram_se3_to_rt(T, &R, NULL);
        tram_quat_wxyz_from_mat3(&R, &q);
        printf("  translation (%s)  %.6f %.6f %.6f   1-sigma %.3g %.3g %.3g\n", u, T->m[0][3],
               T->m[1][3], T->m[2][3], res->translation_sigma[0], res->translation_sigma[1],
               res->translation_sigma[2]);
        printf("  quaternion (w, x, y, z)  %.9f %.9f %.9f %.9f\n", cli_print_zero(q.w, 9), cli_print_zero(q.x, 9), cli_print_zero(q.y, 9),
           cli_print_zero(q.z, 9));
        printf("  rotation 1-sigma (deg, about the to-frame's x y z)  %.3g %.3g %.3g\n",
               res->rotation_sigma_deg[0], res->rotation_sigma_deg[1], res->rotation_sigma_deg[2]);
    } else {
        printf("    [ %12.8f %12.8f %14.6f ]\n    [ %12.8f %12.8f %14.6f ]\n    [ %12.8f %12.8f %14.6f ]\n",
               T->m[0][0], T->m[0][1], T->m[0][3], T->m[1][0], T->m[1][1], T->m[1][3], 0.0, 0.0, 1.0);
        printf("  angle %.6f deg (1-sigma %.3g), translation %.6f %.6f %s\n",
               atan2(T->m[1][0], T->m[0][0]) * 180.0 / M_PI_TRAM, res->rotation_sigma_deg[2],
               T->m[0][3], T->m[1][3], u);
    }
    printf("  scale %.9f%s\n\n", res->scale, a->ro.scale ? "" : " (rigid: not solved)");
    size_t show = p->n <= 200 ? p->n : 0, outl = 0;
    double mx = 0, ss = 0;
    size_t k = 0;
    for (size_t i = 0; i < p->n; i++) {
        int out = a->robust && !inlier[i];
        outl += (size_t)out;
        if (!out) {
            ss += resid[i] * resid[i];
            k++;
            if (resid[i] > mx) mx = resid[i];
        }
        if (i < show || out)
            printf("  %-16s %12.5f %s%s\n", p->id[i], resid[i], u, out ? "   OUTLIER (excluded)" : "");
    }
    printf("  residual rms %.5f %s, max %.5f %s over %zu point(s)", k ? sqrt(ss / (double)k) : 0.0, u, mx, u, k);
    if (a->robust) printf("; inlier threshold %.5g %s, %zu outlier(s)", used, u, outl);
    printf("\nplausibility gate: RMS at most %.4g %s (working distance %.4g %s): %s\n",
           trust->limit, u, trust->working_distance, u,
           !a->plaus ? "skipped" : trust->gate_failed ? "EXCEEDED" : "passed");
    if (trust->permutations)
        printf("pairing test: the best of %zu random pairings (seed %llu) fits %.3g times "
               "worse than the file's: %s\n",
               trust->permutations, a->seed, trust->pairing_ratio,
               trust->pairing_failed ? "NOT DETERMINED" : "passed");
    printf("\n%s", cli_safety_text);
}

/* The registration of p (robust or plain) into res (inlier flags and the
 * threshold used for --robust); reports a failure and returns its exit
 * code, else 0. */
static int solve_pairs(const tram_point_pairs *p, reg_args *a, tram_register_result *res,
                       int *inlier, double *used)
{
    tram_error err;
    tram_error_clear(&err);
    a->ro.dim = p->dim;
    tram_status st;
    if (a->robust) {
        double t = a->thr > 0 ? a->thr * tram_unit_length_factor(a->thr_unit, p->length_unit) : 0;
        st = tram_register_robust(p->from, p->to, p->weight, p->n, &a->ro, t, a->seed,
                                  isatty(STDERR_FILENO) ? progress : NULL, NULL, res, inlier, used,
                                  &err);
    } else {
        st = tram_register_points(p->from, p->to, p->weight, p->n, &a->ro, res, &err);
    }
    if (st == TRAM_OK) return 0;
    snprintf(err.file, sizeof err.file, "%s", p->source);
    err.line = err.column = 0;
    cli_report(&err);
    return cli_exit_for(st);
}

/* The plausibility gate and pairing test of a solved registration, then
 * the report and its warnings; the exit code. */
static int judge_and_print(const tram_point_pairs *p, reg_args *a, const tram_register_result *res,
                           const double *resid, const int *inlier, double used)
{
    a->to.seed = a->seed;
    a->to.max_rms = a->max_rms_m / tram_unit_length_in_m(p->length_unit);
    if (!a->plaus) {
        a->to.max_rms = a->to.max_rms_fraction = 0;
        a->to.permutations = 0;
    }
    tram_error err;
    tram_error_clear(&err);
    tram_register_trust trust;
    if (tram_register_trust_check(p->from, p->to, p->weight, p->n, &a->ro, res,
                                  a->robust ? inlier : NULL, &a->to, &trust, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    const char *mname = a->ro.scale ? "umeyama"
                                    : (a->ro.method == TRAM_REGISTER_QUATERNION ? "horn" : "kabsch");
    int rc = CLI_EXIT_OK;
    if (a->json)
        rc = print_json(p, res, resid, inlier, a->robust, used, mname, a->ro.scale, &trust, &a->to);
    else
        print_text(p, res, resid, inlier, used, mname, a, &trust);
    if (rc != CLI_EXIT_OK) return rc;
    tram_register_warning w[TRAM_REGISTER_WARNINGS_MAX];
    size_t nw = tram_register_trust_warnings(&trust, &a->to, p->length_unit, w);
    for (size_t k = 0; k < nw; k++)
        fprintf(stderr, "tram register: warning: %s: %s\n", w[k].code, w[k].message);
    return nw ? CLI_EXIT_UNDETERMINED : CLI_EXIT_OK;
}

int cli_register(int argc, char **argv)
{
    reg_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc) return rc;
    tram_error err;
    tram_error_clear(&err);
    tram_point_pairs *p = NULL;
    if (tram_point_pairs_read_file(a.file, a.lu, &p, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    tram_register_result res;
    double *resid = malloc((p->n ? p->n : 1) * sizeof *resid);
    int *inlier = calloc(p->n ? p->n : 1, sizeof *inlier);
    double used = 0;
    if (!resid || !inlier) {
        rc = CLI_EXIT_USAGE;
    } else if ((rc = solve_pairs(p, &a, &res, inlier, &used)) == 0) {
        tram_register_residuals(p->from, p->to, p->n, p->dim, &res, resid);
        rc = judge_and_print(p, &a, &res, resid, inlier, used);
    }
    free(resid);
    free(inlier);
    tram_point_pairs_destroy(p);
    return rc;
}
