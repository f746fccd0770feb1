/*
 * cmd_intrinsics.c - "tram intrinsics": the camera's intrinsic parameters
 * and lens distortion from pixel observations of a planar target (Zhang
 * 2000, "A flexible new technique for camera calibration", IEEE PAMI
 * 22(11); docs/camera.md), written as a camera file (tram-camera, version
 * 1), with a report of every parameter's 1-sigma, the reprojection error
 * per view, the outliers, the diagnostics and optional pictures.
 */
#include "cli.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

const char cli_intrinsics_help[] =
    "usage: tram intrinsics (--board BOARD.json | --model MODEL.csv) OBS.csv [-o CAMERA.json]\n"
    "                       [--json] [--distortion none|radial2|radial3|full] [--free-skew]\n"
    "                       [--no-robust] [--plot DIR] [--force]\n\n"
    "Calibrates the camera from views of a planar target: OBS.csv is a pixel-observation\n"
    "file (format tram-pixels-1, e.g. from 'tram detect'), one station per view, at least\n"
    "three views of the target tilted in different directions.  Method: Zhang (2000)\n"
    "closed form from per-view homographies, then Levenberg-Marquardt over the\n"
    "intrinsics, the distortion and every view's pose with a Huber loss; outliers\n"
    "(residual over 8 robust sigmas) are flagged and left out.  Pixel convention: the\n"
    "centre of the top-left pixel is (0, 0), u to the right, v down.\n\n"
    "options:\n"
    "  --board FILE        the board file of 'tram board' (point ids r*cols+c)\n"
    "  --model FILE        a model point file (point,x,y,z with a length-unit) whose\n"
    "                      points all have z = 0; lengths are reported in mm\n"
    "  -o FILE             write the camera file (tram-camera, version 1; atomically)\n"
    "  --json              the report as JSON on stdout\n"
    "  --distortion MODEL  none, radial2 (k1 k2; default), radial3 (k1 k2 k3) or full\n"
    "                      (k1 k2 k3 p1 p2)\n"
    "  --free-skew         estimate the skew (default: held at 0)\n"
    "  --no-robust         squared loss; outliers are flagged but kept\n"
    "  --plot DIR          pictures: DIR/STATION-residuals.png per view, DIR/residuals.png\n"
    "                      (all views) and DIR/distortion.png\n"
    "  --force             replace existing output files\n\n"
    "examples (from the top of the source tree):\n"
    "  tram intrinsics --board tests/cli/data/pixels/board.json -o camera.json --force tests/cli/data/pixels/pixels.csv\n"
    "\n"
    "exit status: 0 calibrated (warnings are printed); 2 usage or input error (a bad\n"
    "file, a point id that is not on the target, a non-planar model); 3 the views cannot\n"
    "determine the camera (fewer than three views, too little tilt, degenerate views).\n";

/* The planar target from a board or a model file, owned here. */
typedef struct target {
    tram_planar_target t;
    char **ids;
    double *xy;
    const char *unit;
    char desc[300];
} target;

static void target_free(target *g)
{
    if (g->ids)
        for (size_t k = 0; k < g->t.n; k++) free(g->ids[k]);
    free(g->ids);
    free(g->xy);
}

static int target_alloc(target *g, size_t n)
{
    g->ids = calloc(n ? n : 1, sizeof *g->ids);
    g->xy = malloc(2 * (n ? n : 1) * sizeof *g->xy);
    g->t.n = n;
    g->t.id = (const char *const *)g->ids;
    g->t.xy = g->xy;
    return g->ids && g->xy;
}

static int board_target(const char *path, target *g)
{
    tram_board b;
    tram_error err;
    tram_error_clear(&err);
    if (tram_board_read_file(path, &b, &err) != TRAM_OK) {
        cli_report(&err);
        return cli_exit_for(err.status);
    }
    size_t n = tram_board_corner_count(&b);
    if (!target_alloc(g, n)) return CLI_EXIT_USAGE;
    for (size_t k = 0; k < n; k++) {
        double p[3];
        tram_board_corner(&b, k, p);
        char id[32];
        snprintf(id, sizeof id, "%zu", k);
        g->ids[k] = strdup(id);
        if (!g->ids[k]) return CLI_EXIT_USAGE;
        g->xy[2 * k] = p[0];
        g->xy[2 * k + 1] = p[1];
    }
    g->unit = tram_unit_length_name(b.unit);
    snprintf(g->desc, sizeof g->desc, "board %s (%d x %d inner corners, squares %g %s)", path,
             b.cols, b.rows, b.square, g->unit);
    return CLI_EXIT_OK;
}

static int model_target(const char *path, target *g)
{
    tram_records rec;
    memset(&rec, 0, sizeof rec);
    rec.length_unit = TRAM_LENGTH_MM;
    tram_point_model *m = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_point_model_read_file(path, &rec, &m, &err) != TRAM_OK) {
        cli_report(&err);
        return cli_exit_for(err.status);
    }
    int rc = target_alloc(g, m->n) ? CLI_EXIT_OK : CLI_EXIT_USAGE;
    double ext = 0;
    for (size_t k = 0; k < m->n; k++)
        ext = fmax(ext, fmax(fabs(m->xyz[3 * k]), fabs(m->xyz[3 * k + 1])));
    for (size_t k = 0; rc == CLI_EXIT_OK && k < m->n; k++) {
        if (fabs(m->xyz[3 * k + 2]) > 1e-9 * fmax(ext, 1.0)) {
            fprintf(stderr,
                    "%s:%ld: error: point '%s' has z = %g mm: tram intrinsics needs a planar "
                    "target with every z = 0 (the target frame's plane)\n",
                    path, m->line[k], m->id[k], m->xyz[3 * k + 2]);
            rc = CLI_EXIT_USAGE;
            break;
        }
        g->ids[k] = strdup(m->id[k]);
        if (!g->ids[k]) rc = CLI_EXIT_USAGE;
        g->xy[2 * k] = m->xyz[3 * k];
        g->xy[2 * k + 1] = m->xyz[3 * k + 1];
    }
    g->unit = "mm";
    snprintf(g->desc, sizeof g->desc, "model %s (%zu points)", path, m->n);
    tram_point_model_destroy(m);
    return rc;
}

static const char *warning_text(unsigned bit)
{
    switch (bit) {
    case TRAM_INTRINSICS_WARN_COVERAGE:
        return "coverage: the boards cover under half of the image; the distortion is "
               "extrapolated outside them - add views with the board near the corners and edges";
    case TRAM_INTRINSICS_WARN_RMS:
        return "rms: the reprojection error is over 1 px - check the board's flatness, the "
               "square size, focus and motion blur";
    case TRAM_INTRINSICS_WARN_TILT:
        return "tilt: about one of the image axes no view is tilted 15 degrees or more, so the "
               "focal length rests on little tilt - tilt the board 20-45 degrees about both "
               "image axes";
    case TRAM_INTRINSICS_WARN_OUTLIERS:
        return "outliers: more than 5% of the points are flagged - check the detections";
    default:
        return "?";
    }
}

static void print_param(const tram_intrinsics_result *r, int k)
{
    const tram_camera *c = &r->camera;
    const char *unit = k <= TRAM_CAM_SKEW ? "px" : "";
    double v = tram_camera_param(c, k);
    if (r->calib.free_param[k])
        printf("  %-5s %14.6f %-2s  1-sigma %.4g%s%s\n", tram_camera_param_name(k), v, unit,
               r->calib.sigma[k], *unit ? " " : "", unit);
    else
        printf("  %-5s %14.6f %-2s  (held fixed)\n", tram_camera_param_name(k), v, unit);
}

static void report_text(const tram_pixel_obs *obs, const target *g, const tram_intrinsics_result *r,
                        int robust, const char *out_path)
{
    const tram_camera *c = &r->camera;
    printf("tram intrinsics: %zu views, %zu points from %s; target: %s\n", r->nviews, r->nobs,
           obs->source, g->desc);
    printf("pixel convention: top-left-pixel-centre (the centre of the top-left pixel is (0, 0), "
           "u right, v down); image %zu x %zu px\n",
           c->width, c->height);
    printf("camera model: pinhole, Brown-Conrady distortion '%s', skew %s\n",
           tram_distortion_name(c->distortion), r->calib.free_param[TRAM_CAM_SKEW] ? "free" : "held at 0");
    printf("method: Zhang (2000) closed form, then Levenberg-Marquardt over the camera and every "
           "view's pose, %s (%d steps)\n\n",
           robust ? "Huber loss" : "squared loss", r->iterations);
    for (int k = 0; k < TRAM_CAM_NPARAM; k++)
        if (tram_distortion_has(c->distortion, k)) print_param(r, k);
    printf("  closed form (no distortion): fx %.3f fy %.3f cx %.3f cy %.3f skew %.4f\n\n",
           r->initial.fx, r->initial.fy, r->initial.cx, r->initial.cy, r->initial.skew);
    printf("reprojection error (observed minus projected), pixels; poses in %s\n", g->unit);
    printf("  %-16s %6s %8s %9s %10s %10s %10s\n", "view", "points", "outliers", "rms_px", "tilt_x_deg",
           "tilt_y_deg", "distance");
    for (size_t k = 0; k < r->nviews; k++) {
        const tram_intrinsics_view *v = &r->views[k];
        const double *t = (const double[3]){v->T_sensor_target.m[0][3], v->T_sensor_target.m[1][3],
                                            v->T_sensor_target.m[2][3]};
        printf("  %-16s %6zu %8zu %9.4f %10.2f %10.2f %10.4g\n", v->id, v->nobs, v->noutliers, v->rms_px,
               v->tilt_x_deg, v->tilt_y_deg, sqrt(t[0] * t[0] + t[1] * t[1] + t[2] * t[2]));
    }
    printf("  %-16s %6zu %8zu %9.4f\n", "all", r->nobs, r->calib.noutliers, r->rms_px);
    printf("robust sigma per axis %.4f px (median residual / sqrt(2 ln 2)); outlier rule: residual "
           "over %.4f px (8 sigma)%s\n",
           r->noise_px, r->outlier_px, robust ? ", left out of the fit" : ", kept (--no-robust)");
    size_t shown = 0;
    for (size_t i = 0; i < r->nobs; i++) {
        if (!r->outlier[i]) continue;
        if (shown++ == 20) {
            printf("  ... and %zu more\n", r->calib.noutliers - 20);
            break;
        }
        printf("  OUTLIER view %s point %s (line %ld): residual %.3f %.3f px\n",
               obs->station_id[obs->station[i]], obs->point_id[obs->point[i]], obs->line[i],
               r->residual_px[2 * i], r->residual_px[2 * i + 1]);
    }
    printf("\ndiagnostics:\n  coverage: %.0f%% of the image lies inside a view's board\n"
           "  largest tilt: %.1f deg about the image x axis, %.1f deg about y\n",
           100 * r->coverage, r->max_tilt_x_deg, r->max_tilt_y_deg);
    for (unsigned bit = 1; bit <= TRAM_INTRINSICS_WARN_OUTLIERS; bit <<= 1)
        if (r->warnings & bit) printf("  [WARNING] %s\n", warning_text(bit));
    if (out_path) printf("\ncamera file: %s\n", out_path);
    printf("\nresult: consistent with the data; NOT verified on the cell\n%s", cli_safety_text);
}

/* The JSON report (tram/camera.h) on stdout. */
static int report_json(const tram_pixel_obs *obs, const target *g, const tram_intrinsics_result *r,
                       int robust)
{
    const char *warn[16];
    size_t nw = 0;
    for (unsigned bit = 1; bit <= TRAM_INTRINSICS_WARN_OUTLIERS && nw < 16; bit <<= 1)
        if (r->warnings & bit) warn[nw++] = warning_text(bit);
    tram_intrinsics_report rep = {obs, g->desc, g->unit, robust, r, nw, warn, cli_safety_text};
    char *text = NULL;
    tram_error err;
    if (tram_intrinsics_report_to_json(&rep, &text, &err) != TRAM_OK) {
        fprintf(stderr, "tram intrinsics: error: %s\n", err.message);
        return CLI_EXIT_USAGE;
    }
    fputs(text, stdout);
    tram_free(text);
    return CLI_EXIT_OK;
}

/* One picture per view, one of every view, and the distortion field;
 * existing files are refused before anything is drawn. */
static int write_pictures(const char *dir, const tram_pixel_obs *obs, const tram_intrinsics_result *r,
                          int force)
{
    if (mkdir(dir, 0755) != 0 && errno != EEXIST) {
        fprintf(stderr, "%s: error: cannot create the picture directory: %s\n", dir, strerror(errno));
        return CLI_EXIT_USAGE;
    }
    size_t nv = r->nviews, np = nv + 2;
    char path[4096];
    for (size_t k = 0; k < np; k++) {
        char name[200];
        snprintf(name, sizeof name, "%s-residuals.png", k < nv ? r->views[k].id : "");
        cli_path_join(path, sizeof path, dir, k < nv ? name : k == nv ? "residuals.png" : "distortion.png");
        struct stat sb;
        if (!force && stat(path, &sb) == 0) {
            fprintf(stderr, "%s: error: already exists; not overwritten (pass --force to replace it)\n", path);
            return CLI_EXIT_USAGE;
        }
    }
    double *uv = malloc(2 * (r->nobs ? r->nobs : 1) * sizeof *uv), *res = malloc(2 * (r->nobs ? r->nobs : 1) * sizeof *res);
    int *out = malloc((r->nobs ? r->nobs : 1) * sizeof *out);
    tram_error err;
    tram_error_clear(&err);
    tram_status st = uv && res && out ? TRAM_OK : TRAM_ENOMEM;
    for (size_t k = 0; st == TRAM_OK && k <= nv; k++) {
        size_t m = 0;
        for (size_t i = 0; i < r->nobs; i++)
            if (k == nv || r->obs_view[i] == k) {
                memcpy(&uv[2 * m], &obs->uv[2 * i], 2 * sizeof *uv);
                memcpy(&res[2 * m], &r->residual_px[2 * i], 2 * sizeof *res);
                out[m++] = r->outlier[i];
            }
        char title[300], name[200];
        if (k < nv)
            snprintf(title, sizeof title, "view %s: reprojection residuals (%zu points, rms %.4f px)",
                     r->views[k].id, m, r->views[k].rms_px);
        else
            snprintf(title, sizeof title, "all %zu views: reprojection residuals", nv);
        tram_plot_reprojection_data d = {obs->width, obs->height, m, uv, res, out,
                                         k < nv ? r->views[k].rms_px : r->rms_px, title};
        tram_image *img = NULL;
        snprintf(name, sizeof name, "%s-residuals.png", k < nv ? r->views[k].id : "");
        cli_path_join(path, sizeof path, dir, k < nv ? name : "residuals.png");
        st = tram_plot_reprojection(&d, &img, &err);
        if (st == TRAM_OK) st = tram_image_write_png(img, path, force, &err);
        tram_image_destroy(img);
    }
    if (st == TRAM_OK) {
        tram_image *img = NULL;
        cli_path_join(path, sizeof path, dir, "distortion.png");
        st = tram_plot_distortion(&r->camera, "lens distortion of the calibrated camera", &img, &err);
        if (st == TRAM_OK) st = tram_image_write_png(img, path, force, &err);
        tram_image_destroy(img);
    }
    free(uv);
    free(res);
    free(out);
    if (st != TRAM_OK) {
        if (err.message[0]) cli_report(&err);
        else fprintf(stderr, "tram intrinsics: error: out of memory drawing the pictures\n");
        return cli_exit_for(st);
    }
    return CLI_EXIT_OK;
}

typedef struct args {
    const char *board, *model, *obs, *out, *plot;
    int json, force;
    tram_intrinsics_options opt;
} args;

static int parse(int argc, char **argv, args *a)
{
    memset(a, 0, sizeof *a);
    tram_intrinsics_options_init(&a->opt);
    int bad = 0;
    const char *v;
    for (int i = 1; i < argc; i++) {
        if (cli_take(argc, argv, &i, "--board", &a->board, &bad)) {
        } else if (cli_take(argc, argv, &i, "--model", &a->model, &bad)) {
        } else if (cli_take(argc, argv, &i, "-o", &a->out, &bad)) {
        } else if (cli_take(argc, argv, &i, "--plot", &a->plot, &bad)) {
        } else if (cli_take(argc, argv, &i, "--distortion", &v, &bad)) {
            if (bad) break;
            int d = tram_distortion_parse(v);
            if (d < 0)
                return cli_usage_error("intrinsics", "--distortion '%s': expected none, radial2, radial3 or full", v);
            a->opt.distortion = (tram_distortion)d;
        } else if (cli_flag(argv, i, "--free-skew")) {
            a->opt.free_skew = 1;
        } else if (cli_flag(argv, i, "--no-robust")) {
            a->opt.robust = 0;
        } else if (cli_flag(argv, i, "--json")) {
            a->json = 1;
        } else if (cli_flag(argv, i, "--force")) {
            a->force = 1;
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            return cli_usage_error("intrinsics", "unknown option '%s' (see 'tram help intrinsics')", argv[i]);
        } else if (a->obs) {
            return cli_usage_error("intrinsics", "one observation file expected, also got '%s'", argv[i]);
        } else {
            a->obs = argv[i];
        }
        if (bad) break;
    }
    if (bad) return CLI_EXIT_USAGE;
    if (!a->board == !a->model)
        return cli_usage_error("intrinsics", "give the target with exactly one of --board FILE and --model FILE");
    if (!a->obs) return cli_usage_error("intrinsics", "the observation file OBS.csv is required");
    struct stat sb;
    if (a->out && !a->force && stat(a->out, &sb) == 0) {
        fprintf(stderr, "%s: error: already exists; not overwritten (pass --force to replace it)\n", a->out);
        return CLI_EXIT_USAGE;
    }
    return CLI_EXIT_OK;
}

int cli_intrinsics(int argc, char **argv)
{
    args a;
    int rc = parse(argc, argv, &a);
    if (rc != CLI_EXIT_OK) return rc;
    tram_error err;
    tram_error_clear(&err);
    tram_pixel_obs *obs = NULL;
    if (tram_pixel_obs_read_file(a.obs, &obs, &err) != TRAM_OK) {
        cli_report(&err);
        return cli_exit_for(err.status);
    }
    target g;
    memset(&g, 0, sizeof g);
    rc = a.board ? board_target(a.board, &g) : model_target(a.model, &g);
    tram_intrinsics_result *r = NULL;
    char *camera_text = NULL;
    if (rc == CLI_EXIT_OK && tram_intrinsics_calibrate(obs, &g.t, &a.opt, &r, &err) != TRAM_OK) {
        cli_report(&err);
        rc = cli_exit_for(err.status);
    }
    if (rc == CLI_EXIT_OK && tram_camera_to_json(&r->camera, &r->calib, &camera_text, &err) != TRAM_OK) {
        cli_report(&err);
        rc = cli_exit_for(err.status);
    }
    if (rc == CLI_EXIT_OK && a.plot) rc = write_pictures(a.plot, obs, r, a.force);
    if (rc == CLI_EXIT_OK && a.out &&
        tram_file_write_atomic(a.out, camera_text, strlen(camera_text), a.force, &err) != TRAM_OK) {
        cli_report(&err);
        rc = cli_exit_for(err.status);
    }
    if (rc == CLI_EXIT_OK) {
        if (a.json)
            rc = report_json(obs, &g, r, a.opt.robust);
        else
            report_text(obs, &g, r, a.opt.robust, a.out);
    }
    free(camera_text);
    tram_intrinsics_result_destroy(r);
    target_free(&g);
    tram_pixel_obs_destroy(obs);
    return rc;
}
