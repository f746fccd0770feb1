/*
 * cmd_plot.c - "tram plot": pictures of frames, residuals, check histories
 * and registration residuals (docs/plot.md), and the standard set that
 * "tram solve --plot DIR" writes.
 */
#include "cli.h"
#include "tram/plot.h"

#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>

const char cli_plot_help[] =
    "usage: tram plot frames RECORDS [--calibration CALIB.json] [--chain CHAIN.json] -o FILE.png\n"
    "       tram plot residuals --calibration CALIB.json -o FILE.png\n"
    "       tram plot history HISTORY.jsonl [--tolerance LEN,ANGLE] -o FILE.png\n"
    "       tram plot points PAIRS [--robust] -o FILE.png\n\n"
    "Draws PNG pictures with cairo: the base, flange, sensor and target frames in three\n"
    "orthographic views and one oblique view (x red, y green, z blue); per-station\n"
    "residual bars with the RMS line and outlier threshold and a scatter of the\n"
    "translation residual vectors; the trend of mount-check changes over time with the\n"
    "tolerance band; per-point registration residuals.  Outliers are drawn vermillion.\n"
    "'tram solve --plot DIR' writes frames.png and residuals.png for a solve.\n\n"
    "options:\n"
    "  -o FILE.png        output (written atomically; --force to replace)\n"
    "  --size WxH         image size (default 1600x1000)\n"
    "  --calibration F    frames: draw the solved sensor and target too\n"
    "  --chain F          frames: records with joint readings; every link frame is drawn\n"
    "  --tolerance L,A    history: the tolerance band, e.g. 0.5mm,0.1deg\n"
    "  --robust           points: RANSAC registration (outliers flagged)\n"
    "\n"
    "examples (from the top of the source tree):\n"
    "  tram plot frames datasets/demo/wrist_camera.csv -o frames.png --force\n"
    "  tram plot points tests/cli/data/pairs.csv -o points.png --force\n\n"
    "exit status: 0 picture written; 2 usage or input error (the message names\n"
    "file:line:column), or an existing output without --force.\n";

/* st and *img come from a plot call made before this one (the order in
 * which C evaluates arguments is unspecified, so *img is read here). */
static int write_png(tram_status st, tram_image **imgp, const char *path, int force, tram_error *err)
{
    tram_image *img = *imgp;
    if (st == TRAM_OK) st = tram_image_write_png(img, path, force, err);
    tram_image_destroy(img);
    if (st != TRAM_OK) {
        cli_report(err);
        return CLI_EXIT_USAGE;
    }
    return CLI_EXIT_OK;
}

int cli_plot_solution(const tram_records *r, const tram_solution *s, const char *dir, int force)
{
    tram_error err;
    tram_error_clear(&err);
    mkdir(dir, 0755);
    char path[1200];
    const char **ids = malloc((r->count ? r->count : 1) * sizeof *ids);
    int *out = malloc((r->count ? r->count : 1) * sizeof *out);
    double *rot = malloc((r->count ? r->count : 1) * 5 * sizeof *rot);
    if (!ids || !out || !rot) {
        free(ids);
        free(out);
        free(rot);
        return CLI_EXIT_USAGE;
    }
    double *tr = rot + r->count, *vec = rot + 2 * r->count;
    int has_vec = r->has_block[TRAM_BLOCK_SENSOR];
    for (size_t i = 0; i < r->count; i++) {
        ids[i] = r->stations[i].id;
        out[i] = s->stations[i].outlier;
        rot[i] = s->stations[i].rot_deg;
        tr[i] = s->stations[i].trans;
        if (has_vec) {
            tram_se3 P = r->stations[i].T_base_flange, PX, Zh;
            if (s->setup == TRAM_SETUP_EYE_TO_HAND) tram_se3_invert(&P, &P);
            tram_se3_compose(&P, &s->X, &PX);
            tram_se3_compose(&PX, &r->stations[i].T_sensor_target, &Zh);
            for (int a = 0; a < 3; a++) vec[3 * i + (size_t)a] = Zh.m[a][3] - s->Z.m[a][3];
        }
    }
    tram_se3 *F = malloc((r->count ? r->count : 1) * sizeof *F);
    int rc = CLI_EXIT_USAGE;
    if (F) {
        for (size_t i = 0; i < r->count; i++) F[i] = r->stations[i].T_base_flange;
        tram_plot_frames_data fd = {r->count, F, ids, out, s->setup, s->solved, s->X, s->Z, NULL, 0,
                                    s->length_unit, NULL};
        tram_image *img = NULL;
        cli_path_join(path, sizeof path, dir, "frames.png");
        rc = write_png(tram_plot_frames(&fd, 1600, 1000, &img, &err), &img, path, force, &err);
        if (rc == CLI_EXIT_OK) {
            fprintf(stderr, "picture: %s\n", path);
            /* no threshold lines: the station test is joint over the six
             * components (solve_refine.c), so a per-component line would
             * not be the rule that flagged a bar */
            tram_plot_residuals_data rd = {r->count, ids, rot, tr, has_vec ? vec : NULL, out,
                                           0, 0, s->length_unit, NULL};
            img = NULL;
            cli_path_join(path, sizeof path, dir, "residuals.png");
            rc = write_png(tram_plot_residuals(&rd, 1600, 1000, &img, &err), &img, path, force, &err);
            if (rc == CLI_EXIT_OK) fprintf(stderr, "picture: %s\n", path);
        }
    }
    free(F);
    free(ids);
    free(out);
    free(rot);
    tram_plot_shutdown();
    return rc;
}

static int plot_history(const char *file, const char *tol, const char *o, int w, int h, int force)
{
    tram_error err;
    tram_error_clear(&err);
    tram_check_history *hist = NULL;
    if (tram_check_history_read_file(file, &hist, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    int rc = CLI_EXIT_OK;
    double tl = 0, ta = 0;
    if (tol) {
        char *end;
        tl = strtod(tol, &end);
        tram_length_unit tu = TRAM_LENGTH_UNSET;
        char *comma = strchr(tol, ',');
        if (comma) {
            char ub[8] = {0};
            size_t ul = (size_t)(comma - end);
            if (ul < sizeof ub) memcpy(ub, end, ul);
            tu = tram_unit_length_parse(ub);
            ta = strtod(comma + 1, &end);
        }
        if (!comma || tu == TRAM_LENGTH_UNSET || strcmp(end, "deg") != 0)
            rc = cli_usage_error("plot", "--tolerance '%s': expected LENGTH,ANGLE like 0.5mm,0.1deg", tol);
        else
            tl *= tram_unit_length_factor(tu, hist->length_unit);
    }
    int *alarm = rc == CLI_EXIT_OK ? malloc(hist->n * sizeof *alarm) : NULL;
    if (rc == CLI_EXIT_OK && !alarm) {
        fprintf(stderr, "tram plot: error: out of memory\n");
        rc = CLI_EXIT_USAGE;
    }
    if (rc == CLI_EXIT_OK) {
        for (size_t i = 0; i < hist->n; i++) alarm[i] = hist->verdict[i] != TRAM_VERDICT_OK;
        tram_plot_history_data hd = {hist->n, hist->time_s, hist->translation_norm,
                                     hist->rotation_angle_deg, alarm, tl, ta, hist->length_unit, NULL};
        tram_image *img = NULL;
        rc = write_png(tram_plot_history(&hd, w, h, &img, &err), &img, o, force, &err);
    }
    free(alarm);
    tram_check_history_destroy(hist);
    return rc;
}

/* Where and how big the picture goes. */
typedef struct plot_out {
    const char *path;
    int w, h, force;
} plot_out;

/* The residual bars of a calibration file's residual table. */
static int plot_residuals(const tram_calibration *cal, const char *calib, const plot_out *po)
{
    tram_error err;
    tram_error_clear(&err);
    size_t n = cal->nresiduals;
    const char **ids = calloc(n ? n : 1, sizeof *ids);
    double *rot = calloc(2 * (n ? n : 1), sizeof *rot);
    int *out = calloc(n ? n : 1, sizeof *out), rc;
    if (!ids || !rot || !out) {
        fprintf(stderr, "tram plot: error: out of memory\n");
        rc = CLI_EXIT_USAGE;
    } else if (n == 0) {
        rc = cli_usage_error("plot", "%s has no per-station residuals", calib);
    } else {
        for (size_t k = 0; k < n; k++) {
            ids[k] = cal->residuals[k].station;
            rot[k] = cal->residuals[k].rotation_deg;
            rot[n + k] = cal->residuals[k].translation;
            out[k] = cal->residuals[k].outlier;
        }
        /* no threshold lines: the solve's station test is joint (see above) */
        tram_plot_residuals_data rd = {n, ids, rot, rot + n, NULL, out, 0, 0, cal->length_unit,
                                       NULL};
        tram_image *img = NULL;
        rc = write_png(tram_plot_residuals(&rd, po->w, po->h, &img, &err), &img, po->path, po->force, &err);
    }
    free(ids);
    free(rot);
    free(out);
    return rc;
}

/* Every station's link frames (c->n_joints + 2 each) in the records'
 * length unit; NULL when out of memory. */
static tram_se3 *chain_link_frames(const tram_records *r, const tram_chain *c)
{
    size_t per = c->n_joints + 2;
    tram_se3 *links = malloc(r->count * per * sizeof *links);
    double ang = tram_unit_angle_in_rad(r->angle_unit) / tram_unit_angle_in_rad(c->angle_unit);
    double len = tram_unit_length_factor(r->length_unit, c->length_unit);
    double back = tram_unit_length_factor(c->length_unit, r->length_unit);
    for (size_t i = 0; links && i < r->count; i++) {
        double q[TRAM_JOINTS_MAX];
        size_t j = 0;
        for (size_t e = 0; e < c->n_elements; e++)
            if (c->elements[e].kind != TRAM_CHAIN_FIXED) {
                q[j] = tram_records_joints(r, i)[j] * (c->elements[e].kind == TRAM_CHAIN_REVOLUTE ? ang : len);
                j++;
            }
        tram_se3 T;
        tram_chain_forward(c, q, &T, links + i * per);
        for (size_t f = 0; f < per; f++)
            tram_se3_scale_translation(&links[i * per + f], back, &links[i * per + f]);
    }
    return links;
}

/* The frames picture of a record file (with a calibration's X and Z, and
 * a chain's link frames, when given). */
static int plot_frames(const char *file, const tram_calibration *cal, const char *chain,
                       const plot_out *po)
{
    tram_error err;
    tram_error_clear(&err);
    tram_records *r = NULL;
    if (!file) return cli_usage_error("plot", "frames needs a record file");
    if (tram_records_read_file(file, NULL, &r, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    cli_records_warnings(r);
    tram_chain *c = NULL;
    tram_se3 *links = NULL;
    int rc = CLI_EXIT_OK;
    if (chain) {
        if (tram_chain_read_file(chain, &c, &err) != TRAM_OK || tram_records_apply_chain(r, c, &err) != TRAM_OK) {
            cli_report(&err);
            rc = CLI_EXIT_USAGE;
        } else {
            links = chain_link_frames(r, c);
        }
    }
    if (rc == CLI_EXIT_OK && cal && cal->setup != r->setup && r->setup != TRAM_SETUP_UNSET)
        rc = cli_usage_error("plot", "the records' setup differs from the calibration's");
    if (rc == CLI_EXIT_OK && !r->has_block[TRAM_BLOCK_ROBOT])
        rc = cli_usage_error("plot", "the record file has no robot poses (joint readings need --chain)");
    if (rc == CLI_EXIT_OK) {
        tram_se3 *F = malloc(r->count * sizeof *F);
        const char **ids = malloc(r->count * sizeof *ids);
        for (size_t i = 0; F && ids && i < r->count; i++) {
            F[i] = r->stations[i].T_base_flange;
            ids[i] = r->stations[i].id;
        }
        tram_plot_frames_data fd = {r->count, F, ids, NULL,
                                    cal ? cal->setup : (r->setup ? r->setup : TRAM_SETUP_EYE_IN_HAND),
                                    cal != NULL, cal ? cal->X : F[0], cal ? cal->Z : F[0], links,
                                    c ? c->n_joints + 2 : 0, r->length_unit, NULL};
        tram_image *img = NULL;
        rc = write_png(tram_plot_frames(&fd, po->w, po->h, &img, &err), &img, po->path, po->force, &err);
        free(F);
        free(ids);
    }
    free(links);
    tram_chain_destroy(c);
    tram_records_destroy(r);
    return rc;
}

/* frames or residuals: both may read a calibration file. */
static int plot_calibration_kind(const char *kind, const char *file, const char *calib,
                                 const char *chain, const plot_out *po)
{
    tram_error err;
    tram_error_clear(&err);
    tram_calibration *cal = NULL;
    if (calib && tram_calibration_read_file(calib, &cal, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    int rc;
    if (strcmp(kind, "residuals") == 0)
        rc = cal ? plot_residuals(cal, calib, po)
                 : cli_usage_error("plot", "residuals needs --calibration");
    else
        rc = plot_frames(file, cal, chain, po);
    tram_calibration_destroy(cal);
    return rc;
}

/* The residuals of a point registration (robust when asked). */
static int plot_points(const char *file, int robust, const plot_out *po)
{
    tram_error err;
    tram_error_clear(&err);
    if (!file) return cli_usage_error("plot", "points needs a point-pair file");
    tram_point_pairs *p = NULL;
    if (tram_point_pairs_read_file(file, TRAM_LENGTH_UNSET, &p, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    int rc;
    tram_register_options ro = {TRAM_REGISTER_SVD, 0, p->dim, 2};
    tram_register_result res;
    double *resid = malloc(p->n * sizeof *resid), thr = 0;
    int *inl = malloc(p->n * sizeof *inl), *outl = malloc(p->n * sizeof *outl);
    const char **ids = malloc(p->n * sizeof *ids);
    tram_status st = robust ? tram_register_robust(p->from, p->to, p->weight, p->n, &ro, 0, 1, NULL, NULL, &res, inl, &thr, &err)
                            : tram_register_points(p->from, p->to, p->weight, p->n, &ro, &res, &err);
    if (st != TRAM_OK) {
        cli_report(&err);
        rc = cli_exit_for(st);
    } else {
        tram_register_residuals(p->from, p->to, p->n, p->dim, &res, resid);
        for (size_t i = 0; i < p->n; i++) {
            outl[i] = robust && !inl[i];
            ids[i] = p->id[i];
        }
        tram_image *img = NULL;
        rc = write_png(tram_plot_points(p->n, ids, resid, outl, thr, p->length_unit, NULL, po->w, po->h, &img, &err),
                       &img, po->path, po->force, &err);
    }
    free(resid);
    free(inl);
    free(outl);
    free(ids);
    tram_point_pairs_destroy(p);
    return rc;
}

int cli_plot(int argc, char **argv)
{
    if (argc < 2) return cli_usage_error("plot", "expected frames, residuals, history or points");
    const char *kind = argv[1], *file = NULL, *calib = NULL, *chain = NULL, *tol = NULL, *v;
    plot_out po = {NULL, 1600, 1000, 0};
    int robust = 0, bad = 0;
    for (int i = 2; i < argc; i++) {
        if (cli_take(argc, argv, &i, "-o", &po.path, &bad)) {
        } else if (cli_take(argc, argv, &i, "--calibration", &calib, &bad)) {
        } else if (cli_take(argc, argv, &i, "--chain", &chain, &bad)) {
        } else if (cli_take(argc, argv, &i, "--tolerance", &tol, &bad)) {
        } else if (cli_take(argc, argv, &i, "--size", &v, &bad)) {
            if (bad) break;
            if (sscanf(v, "%dx%d", &po.w, &po.h) != 2) return cli_usage_error("plot", "--size '%s': expected WxH", v);
        } else if (cli_flag(argv, i, "--force")) {
            po.force = 1;
        } else if (cli_flag(argv, i, "--robust")) {
            robust = 1;
        } else if (argv[i][0] == '-' && argv[i][1]) {
            return cli_usage_error("plot", "unknown option '%s'", argv[i]);
        } else if (file) {
            return cli_usage_error("plot", "one input file expected");
        } else {
            file = argv[i];
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (!po.path) return cli_usage_error("plot", "-o FILE.png is required");
    int rc;
    if (strcmp(kind, "history") == 0) {
        if (!file) return cli_usage_error("plot", "history needs a history file");
        rc = plot_history(file, tol, po.path, po.w, po.h, po.force);
    } else if (strcmp(kind, "frames") == 0 || strcmp(kind, "residuals") == 0) {
        rc = plot_calibration_kind(kind, file, calib, chain, &po);
    } else if (strcmp(kind, "points") == 0) {
        rc = plot_points(file, robust, &po);
    } else {
        return cli_usage_error("plot", "'%s': expected frames, residuals, history or points", kind);
    }
    tram_plot_shutdown();
    if (rc == CLI_EXIT_OK) fprintf(stderr, "picture: %s\n", po.path);
    return rc;
}
