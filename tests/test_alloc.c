/* test_alloc.c - tests of the allocation hooks (alloc.c): every allocation
 * of the library, and every allocation cJSON makes for it, is made to fail
 * in turn, and each call must then return an error - never crash, never
 * report success with part of its work missing, never leak (the ASan build
 * of `make test` and `make valgrind` check the leaks).
 *
 * This file defines tram__malloc, tram__calloc, tram__realloc and
 * tram__free itself, so the linker takes these instead of alloc.o from
 * libtram.a (see alloc.c).  cJSON's allocations are routed through the
 * same failing allocator with cJSON_InitHooks.  Allocations inside LAPACKE,
 * cairo and libpng are not reached this way; their failures come back as
 * those libraries' error codes, which the library checks.
 *
 * The inputs are the demo files (datasets/demo, an invented scenario) and
 * the fuzz seed corpus: the test is about failure paths, not accuracy. */
#include "test_util.h"

#include <cjson/cJSON.h>
#include <unistd.h>

#include "render/render.h"

/* The allocation that fails: the fail_at-th (0-based) since counting
 * started; -1: none fails. */
static long fail_at = -1, calls, failed;

static int should_fail(void)
{
    long k = calls++;
    if (k == fail_at) {
        failed++;
        return 1;
    }
    return 0;
}

void *tram__malloc(size_t n);
void *tram__calloc(size_t count, size_t size);
void *tram__realloc(void *p, size_t n);
void tram__free(void *p);

void *tram__malloc(size_t n) { return should_fail() ? NULL : malloc(n ? n : 1); }
void *tram__calloc(size_t count, size_t size)
{
    return should_fail() ? NULL : calloc(count ? count : 1, size ? size : 1);
}
void *tram__realloc(void *p, size_t n) { return should_fail() ? NULL : realloc(p, n ? n : 1); }
void tram__free(void *p) { free(p); }
static void *json_malloc(size_t n) { return should_fail() ? NULL : malloc(n); }

static char *slurp(const char *path, size_t *len)
{
    FILE *f = fopen(path, "rb");
    if (!f) fail_msg("cannot open %s (run the tests from the repository root)", path);
    char *buf = malloc(1 << 20);
    *len = fread(buf, 1, (1 << 20) - 1, f);
    buf[*len] = '\0';
    fclose(f);
    return buf;
}

/* Inputs shared by the operations, made before any failure is injected. */
static struct {
    char *csv, *json, *cal_text, *chain_text, *recheck, *pairs, *obs, *model, *history;
    char *png, *jpeg, *board;
    size_t png_len, jpeg_len, board_len;
    size_t csv_len, json_len, chain_len, recheck_len, pairs_len, obs_len, model_len, history_len;
    tram_records *rec, *recheck_rec, *joints_rec, *fixed_rec;
    tram_solution *sol;
    tram_calibration *cal;
    tram_check_result *check;
    tram_chain *chain;
    char *pixels, *camera;
    size_t pixels_len, camera_len;
    tram_records *rec_few;             /* the demo's first 6 stations (solve --points) */
    char *demo_obs;                 /* 4 board points per station of rec_few */
    tram_pixel_obs *views;          /* 4 views of a 7 x 6 grid (invented) */
    char grid_ids[42][16];
    const char *grid_idp[42];
    double grid_xy[84];
} in;

typedef tram_status (*op_fn)(tram_error *err);

/* Observed points of the demo stations: 4 points of the board (an
 * invented layout, mm) mapped by each station's T_sensor_target. */
static char *demo_points(const tram_records *r)
{
    static const double m[4][3] = {{0, 0, 0}, {120, 0, 0}, {0, 90, 0}, {120, 90, 0}};
    size_t cap = 100 + r->count * 4 * 100, l = 0;
    char *t = malloc(cap);
    l += (size_t)snprintf(t + l, cap - l, "# length-unit: mm\nstation,point,x,y,z\n");
    for (size_t i = 0; i < r->count; i++)
        for (int k = 0; k < 4; k++) {
            double p[3];
            tram_se3_apply_point(&r->stations[i].T_sensor_target, m[k], p);
            l += (size_t)snprintf(t + l, cap - l, "%s,c%d,%.6f,%.6f,%.6f\n", r->stations[i].id, k + 1,
                                  p[0], p[1], p[2]);
        }
    return t;
}

/* A clone that returns NULL has no error struct to fill: say it here. */
static tram_status nomem(tram_error *err)
{
    err->status = TRAM_ENOMEM;
    snprintf(err->message, sizeof err->message, "out of memory");
    return TRAM_ENOMEM;
}

/* Run op once to count its allocations, then once more for each of them
 * with that one failing: the call must return an error with a message,
 * never TRAM_OK with part of its work missing. */
static void exhaust(const char *name, op_fn op)
{
    /* TRAM_ALLOC_ONLY=TEXT runs only the operations whose name holds TEXT
     * (to chase one failure; the full run takes minutes). */
    const char *only = getenv("TRAM_ALLOC_ONLY");
    if (only && !strstr(name, only)) return;
    tram_error err;
    fail_at = -1;
    calls = failed = 0;
    tram_status st = op(&err);
    if (st != TRAM_OK) fail_msg("%s: fails without injected failures: %s", name, err.message);
    long total = calls, nomem = 0;
    /* Every allocation up to 3000; beyond that an even sample of 40 (the
     * convention checks make about a hundred solves).  TRAM_ALLOC_SAMPLES
     * caps the runs per call (300 in make test, 25 in make valgrind). */
    long cap = total > 3000 ? 40 : 3000;
    const char *env = getenv("TRAM_ALLOC_SAMPLES");
    if (env && atol(env) > 0 && atol(env) < cap) cap = atol(env);
    long step = total > cap ? total / cap + 1 : 1, runs = 0;
    for (long k = 0; k < total; k += step, runs++) {
        fail_at = k;
        calls = failed = 0;
        tram_error_clear(&err);
        st = op(&err);
        fail_at = -1;
        if (!failed) continue; /* the path changed before allocation k */
        if (st == TRAM_OK)
            fail_msg("%s: allocation %ld of %ld failed, yet the call returned TRAM_OK", name, k + 1,
                     total);
        if (err.message[0] == '\0')
            fail_msg("%s: allocation %ld failed: status %d without a message", name, k + 1, (int)st);
        nomem += st == TRAM_ENOMEM;
    }
    printf("[ info     ] %s: %ld of %ld allocations failed in turn: every call returned an error "
           "(%ld as TRAM_ENOMEM)\n",
           name, runs, total, nomem);
}

static tram_status op_records_csv(tram_error *err)
{
    tram_records *r;
    tram_status st = tram_records_read_buffer("demo.csv", in.csv, in.csv_len, NULL, &r, err);
    if (st == TRAM_OK) {
        tram_records *c = tram_records_clone(r);
        if (!c) st = nomem(err);
        tram_records_destroy(c);
    }
    tram_records_destroy(r);
    return st;
}

static tram_status op_records_json(tram_error *err)
{
    tram_records *r;
    tram_status st = tram_records_read_buffer("demo.json", in.json, in.json_len, NULL, &r, err);
    tram_records_destroy(r);
    return st;
}

static tram_status op_records_write(tram_error *err)
{
    tram_status st = TRAM_OK;
    for (int json = 0; json <= 1 && st == TRAM_OK; json++) {
        char *buf = NULL;
        size_t len = 0;
        FILE *f = open_memstream(&buf, &len);
        tram_output_rep rep = {.kind = TRAM_REP_EULER, .euler = TRAM_EULER_ZYX_INTRINSIC,
                               .length_unit = TRAM_LENGTH_M, .angle_unit = TRAM_ANGLE_DEG};
        st = tram_records_write(in.rec, &rep, json, f, err);
        fclose(f);
        free(buf);
    }
    return st;
}

static tram_status op_calibration(tram_error *err)
{
    tram_calibration *c;
    tram_status st =
        tram_calibration_read_buffer("cal.json", in.cal_text, strlen(in.cal_text), &c, err);
    tram_calibration_destroy(c);
    return st;
}

/* The calibration report: the calibration file on disk (written once),
 * the PDF replaced on every run. */
static char report_cal[64], report_pdf[80];

static tram_status op_report(tram_error *err)
{
    if (!report_cal[0]) {
        snprintf(report_cal, sizeof report_cal, "/tmp/tram-alloc-cal-XXXXXX");
        int fd = mkstemp(report_cal);
        if (fd < 0 || write(fd, in.cal_text, strlen(in.cal_text)) != (ssize_t)strlen(in.cal_text))
            fail_msg("cannot write the calibration for the report");
        close(fd);
        snprintf(report_pdf, sizeof report_pdf, "%s.pdf", report_cal);
    }
    tram_report_options opt;
    memset(&opt, 0, sizeof opt);
    tram_error e;
    if (tram_plot_page_parse("a4", &opt.page, &e) != TRAM_OK) fail_msg("a4: %s", e.message);
    opt.euler = TRAM_EULER_ZYX_INTRINSIC;
    opt.date_utc = "2026-12-02T12:00:00Z";
    int pages = 0;
    tram_status st = tram_report_write_pdf(report_cal, &opt, report_pdf, 1, &pages, err);
    if (st == TRAM_OK && pages < 2) fail_msg("report: %d pages", pages);
    return st;
}

static tram_status op_chain(tram_error *err)
{
    tram_chain *c;
    tram_status st = tram_chain_read_buffer("arm.json", in.chain_text, in.chain_len, &c, err);
    if (st == TRAM_OK) {
        tram_records *r = tram_records_clone(in.joints_rec);
        st = r ? tram_records_apply_chain(r, c, err) : nomem(err);
        tram_records_destroy(r);
    }
    tram_chain_destroy(c);
    return st;
}

static tram_status op_points(tram_error *err)
{
    tram_point_pairs *p;
    tram_point_obs *o = NULL;
    tram_point_model *m = NULL;
    tram_status st =
        tram_point_pairs_read_buffer("p.csv", in.pairs, in.pairs_len, TRAM_LENGTH_UNSET, &p, err);
    if (st == TRAM_OK)
        st = tram_point_obs_read_buffer("o.csv", in.obs, in.obs_len, in.fixed_rec, &o, err);
    if (st == TRAM_OK)
        st = tram_point_model_read_buffer("m.csv", in.model, in.model_len, in.fixed_rec, &m, err);
    if (st == TRAM_OK) {
        tram_register_result res;
        int *inl = calloc(p->n, sizeof *inl);
        double thr;
        tram_register_options ro = {TRAM_REGISTER_SVD, 0, p->dim, 1};
        st = tram_register_robust(p->from, p->to, p->weight, p->n, &ro, 0.5, 7, NULL, NULL, &res,
                                  inl, &thr, err);
        free(inl);
    }
    tram_point_pairs_destroy(p);
    tram_point_obs_destroy(o);
    tram_point_model_destroy(m);
    return st;
}

static tram_status op_history(tram_error *err)
{
    tram_check_history *h;
    tram_status st = tram_check_history_read_buffer("h.jsonl", in.history, in.history_len, &h, err);
    tram_check_history_destroy(h);
    return st;
}

static tram_status op_solve(tram_error *err)
{
    tram_solve_options o;
    tram_solve_options_init(&o);
    o.check_conventions = 0;
    o.bootstrap = 5;
    tram_solution *s;
    tram_status st = tram_solve(in.rec, TRAM_SETUP_EYE_IN_HAND, &o, &s, err);
    if (st == TRAM_OK) {
        char *text;
        st = tram_solution_to_json(s, in.rec, "auto", 1, &text, err);
        if (st == TRAM_OK) free(text);
    }
    tram_solution_destroy(s);
    return st;
}

/* Pose records with the sensor's scale fitted, bootstrap too (scale.c). */
static tram_status op_solve_scale(tram_error *err)
{
    tram_solve_options o;
    tram_solve_options_init(&o);
    o.check_conventions = 0;
    o.fit_scale = 1;
    o.bootstrap = 3;
    tram_solution *s;
    tram_status st = tram_solve(in.rec, TRAM_SETUP_EYE_IN_HAND, &o, &s, err);
    if (st == TRAM_OK) {
        char *text;
        st = tram_solution_to_json(s, in.rec, "auto", 0, &text, err);
        if (st == TRAM_OK) free(text);
    }
    tram_solution_destroy(s);
    return st;
}

/* tram solve --points with a model (with_model) or without, the scale
 * tested and fitted, and the solution's JSON. */
static tram_status point_solve(int with_model, tram_error *err)
{
    static const char model_text[] = "# length-unit: mm\npoint,x,y,z\nc1,0,0,0\nc2,120,0,0\n"
                                     "c3,0,90,0\nc4,120,90,0\n";
    tram_point_obs *obs = NULL;
    tram_point_model *m = NULL;
    tram_status st = tram_point_obs_read_buffer("o.csv", in.demo_obs, strlen(in.demo_obs), in.rec_few,
                                                &obs, err);
    if (st == TRAM_OK)
        st = tram_point_model_read_buffer("m.csv", model_text, sizeof model_text - 1, in.rec_few, &m, err);
    for (int k = 0; k < 2 && st == TRAM_OK; k++) {
        tram_solve_options o;
        tram_solve_options_init(&o);
        o.check_conventions = 0;
        o.trust.pairing_permutations = k == 0 ? 2 : 0; /* few allocations: all are failed in turn */
        o.fit_scale = k & 1;
        tram_solution *s = NULL;
        st = tram_solve_points(in.rec_few, TRAM_SETUP_EYE_IN_HAND, obs, with_model ? m : NULL, &o, &s, err);
        if (st == TRAM_OK) {
            char *text;
            st = tram_solution_to_json(s, in.rec_few, "auto", 0, &text, err);
            if (st == TRAM_OK) free(text);
        }
        tram_solution_destroy(s);
    }
    tram_point_obs_destroy(obs);
    tram_point_model_destroy(m);
    return st;
}

static tram_status op_point_solve_free(tram_error *err) { return point_solve(0, err); }
static tram_status op_point_solve_model(tram_error *err) { return point_solve(1, err); }

static tram_status op_solve_conventions(tram_error *err)
{
    tram_solve_options o;
    tram_solve_options_init(&o);
    tram_solution *s;
    tram_status st = tram_solve(in.rec, TRAM_SETUP_EYE_IN_HAND, &o, &s, err);
    tram_solution_destroy(s);
    return st;
}

static tram_status op_check(tram_error *err)
{
    tram_check_result *res;
    tram_status st = tram_check(in.cal, in.recheck_rec, NULL, &res, err);
    for (int hist = 0; hist <= 1 && st == TRAM_OK; hist++) {
        char *text;
        st = tram_check_result_to_json(res, in.recheck_rec, hist, "2026-12-01T00:00:00Z", &text,
                                       err);
        if (st == TRAM_OK) free(text);
    }
    tram_check_result_destroy(res);
    return st;
}

static tram_status op_plot(tram_error *err)
{
    size_t n = in.rec->count;
    tram_se3 *F = malloc(n * sizeof *F);
    for (size_t i = 0; i < n; i++) F[i] = in.rec->stations[i].T_base_flange;
    tram_plot_frames_data fd = {n, F, NULL, NULL, TRAM_SETUP_EYE_IN_HAND, 1, in.sol->X, in.sol->Z,
                                NULL, 0, TRAM_LENGTH_MM, NULL};
    tram_image *img = NULL;
    tram_status st = tram_plot_frames(&fd, 320, 200, &img, err);
    tram_image_destroy(img);
    free(F);
    return st;
}

static tram_status op_images(tram_error *err)
{
    tram_grey_image *im = NULL;
    tram_status st = tram_grey_image_read_buffer("seed.png", (const unsigned char *)in.png, in.png_len,
                                                 &im, err);
    tram_grey_image_destroy(im);
    im = NULL;
    if (st == TRAM_OK)
        st = tram_grey_image_read_buffer("seed.jpg", (const unsigned char *)in.jpeg, in.jpeg_len, &im, err);
    tram_grey_image_destroy(im);
    return st;
}

static tram_status op_board(tram_error *err)
{
    tram_board b;
    char *text = NULL;
    tram_status st = tram_board_read_buffer("board.json", in.board, in.board_len, &b, err);
    if (st == TRAM_OK) st = tram_board_to_json(&b, &text, err);
    free(text);
    return st;
}

static tram_status op_pixels(tram_error *err)
{
    tram_pixel_obs *o = NULL, *b = NULL;
    char *text = NULL;
    tram_status st = tram_pixel_obs_read_buffer("pixels.csv", in.pixels, in.pixels_len, &o, err);
    if (st == TRAM_OK) st = tram_pixel_obs_write(o, &text, err);
    if (st == TRAM_OK) st = tram_pixel_obs_read_buffer("back.csv", text, strlen(text), &b, err);
    if (st == TRAM_OK) st = tram_pixel_obs_add(b, "new", "p", 1.0, 2.0, err);
    free(text);
    tram_pixel_obs_destroy(o);
    tram_pixel_obs_destroy(b);
    return st;
}

static tram_status op_camera(tram_error *err)
{
    tram_camera c;
    tram_camera_calib cal;
    char *text = NULL;
    tram_status st = tram_camera_read_buffer("camera.json", in.camera, in.camera_len, &c, &cal, err);
    if (st == TRAM_OK) st = tram_camera_to_json(&c, &cal, &text, err);
    free(text);
    return st;
}

/* A test render of a 5 x 4 board (tools/render/), made before any failure
 * is injected: the detector's allocations are the ones made to fail. */
static tram_grey_image *detect_im;

static tram_status op_detect(tram_error *err)
{
    tram_board b = {TRAM_BOARD_CHESSBOARD, 5, 4, 20.0, TRAM_LENGTH_MM};
    if (!detect_im) {
        tram_camera c;
        memset(&c, 0, sizeof c);
        c.width = 320;
        c.height = 240;
        c.fx = c.fy = 300;
        c.cx = 160;
        c.cy = 120;
        tram_se3 T;
        render_pose_facing(&b, 300.0 * 20 / 30, 0, 0, 20, 30, 10, &T);
        render_scene s;
        render_scene_init(&s, &b, &c, &T);
        s.noise_sigma = 2;
        s.blur_sigma_px = 0.6;
        long keep = fail_at;
        fail_at = -1;
        tram_status st = render_chessboard(&s, &detect_im, NULL, err);
        fail_at = keep;
        if (st != TRAM_OK) return st;
    }
    tram_detection *d = NULL;
    tram_status st = tram_detect_chessboard(detect_im, &b, NULL, &d, err);
    if (st == TRAM_OK && !d->found) {
        /* not found is a success of the call, but here it means lost work */
        err->status = st = TRAM_EUNDETERMINED;
        snprintf(err->message, sizeof err->message, "board not found: %s", d->reason);
    }
    tram_detection_destroy(d);
    return st;
}

static tram_status op_intrinsics(tram_error *err)
{
    tram_planar_target t = {42, in.grid_idp, in.grid_xy};
    tram_intrinsics_options o;
    tram_intrinsics_options_init(&o);
    o.distortion = TRAM_DISTORTION_FULL;
    tram_intrinsics_result *r = NULL;
    tram_status st = tram_intrinsics_calibrate(in.views, &t, &o, &r, err);
    tram_image *img = NULL;
    if (st == TRAM_OK) {
        tram_plot_reprojection_data d = {640, 480, in.views->n, in.views->uv, r->residual_px, r->outlier,
                                         r->rms_px, NULL};
        st = tram_plot_reprojection(&d, &img, err);
        tram_image_destroy(img);
        img = NULL;
    }
    if (st == TRAM_OK) st = tram_plot_distortion(&r->camera, NULL, &img, err);
    tram_image_destroy(img);
    tram_intrinsics_result_destroy(r);
    return st;
}

static int setup(void **state)
{
    (void)state;
    static cJSON_Hooks hooks = {json_malloc, free};
    cJSON_InitHooks(&hooks);
    tram_error e;
    in.csv = slurp("datasets/demo/wrist_camera.csv", &in.csv_len);
    in.json = slurp("fuzz/corpus/records/demo_quat.json", &in.json_len);
    in.recheck = slurp("datasets/demo/wrist_recheck.csv", &in.recheck_len);
    in.chain_text = slurp("datasets/demo/arm_dh.json", &in.chain_len);
    in.pairs = slurp("fuzz/corpus/point_pairs/weighted_3d.csv", &in.pairs_len);
    in.obs = slurp("fuzz/corpus/point_obs/three_stations.csv", &in.obs_len);
    in.model = slurp("fuzz/corpus/point_model/board.csv", &in.model_len);
    in.history = slurp("fuzz/corpus/history/two_checks.jsonl", &in.history_len);
    in.png = slurp("fuzz/corpus/image/rgb8_interlaced.png", &in.png_len);
    in.jpeg = slurp("fuzz/corpus/image/progressive.jpg", &in.jpeg_len);
    in.board = slurp("fuzz/corpus/board/written.json", &in.board_len);
    in.pixels = slurp("fuzz/corpus/pixels/two_views.csv", &in.pixels_len);
    in.camera = slurp("fuzz/corpus/camera/radial2_calibrated.json", &in.camera_len);
    {
        /* 4 tilted views of a 7 x 6 grid of 20 mm through a known camera */
        tram_camera c = {800, 805, 322, 241, 0, -0.1, 0.02, 0, 0, 0, TRAM_DISTORTION_RADIAL2, 640, 480};
        if (tram_pixel_obs_create(640, 480, NULL, &in.views, &e) != TRAM_OK) fail_msg("%s", e.message);
        for (int i = 0; i < 42; i++) {
            snprintf(in.grid_ids[i], sizeof in.grid_ids[i], "%d", i);
            in.grid_idp[i] = in.grid_ids[i];
            in.grid_xy[2 * i] = 20.0 * (i % 7) - 60;
            in.grid_xy[2 * i + 1] = 20.0 * (i / 7) - 50;
        }
        for (int k = 0; k < 4; k++) {
            double w[3] = {k % 2 ? 0.5 : -0.4, k < 2 ? 0.45 : -0.5, 0.1 * k}, t[3] = {0, 0, 500.0 + 20 * k};
            tram_mat3 R;
            tram_se3 T;
            tram_so3_exp(w, &R);
            tram_se3_from_rt(&R, t, &T);
            for (int i = 0; i < 42; i++) {
                double X[3] = {in.grid_xy[2 * i], in.grid_xy[2 * i + 1], 0}, uv[2];
                char sid[16];
                snprintf(sid, sizeof sid, "v%d", k);
                tram_camera_reproject(&c, &T, X, uv);
                /* a fixed small pattern of errors, so the fit has a residual */
                uv[0] += 0.05 * sin(1.7 * i + k);
                uv[1] += 0.05 * cos(2.3 * i - k);
                if (tram_pixel_obs_add(in.views, sid, in.grid_ids[i], uv[0], uv[1], &e) != TRAM_OK)
                    fail_msg("%s", e.message);
            }
        }
    }
    size_t jl;
    char *joints = slurp("datasets/demo/wrist_camera_joints.csv", &jl);
    static const char fixed[] =
        "# length-unit: mm\n"
        "station,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz\n"
        "s1,500,0,400,1,0,0,0\ns2,520,30,410,1,0,0,0\ns3,480,-20,390,1,0,0,0\n";
    if (tram_records_read_buffer("demo.csv", in.csv, in.csv_len, NULL, &in.rec, &e) ||
        tram_records_read_buffer("recheck.csv", in.recheck, in.recheck_len, NULL, &in.recheck_rec,
                                 &e) ||
        tram_records_read_buffer("joints.csv", joints, jl, NULL, &in.joints_rec, &e) ||
        tram_records_read_buffer("fixed.csv", fixed, sizeof fixed - 1, NULL, &in.fixed_rec, &e))
        fail_msg("%s", e.message);
    free(joints);
    /* 6 stations keep the point solves under the sampling limit: every
     * allocation is failed in turn */
    in.rec_few = tram_records_clone(in.rec);
    assert_non_null(in.rec_few);
    in.rec_few->count = 6;
    in.demo_obs = demo_points(in.rec_few);
    tram_solve_options o;
    tram_solve_options_init(&o);
    o.check_conventions = 0;
    if (tram_solve(in.rec, TRAM_SETUP_EYE_IN_HAND, &o, &in.sol, &e) != TRAM_OK ||
        tram_solution_to_json(in.sol, in.rec, "auto", 1, &in.cal_text, &e) != TRAM_OK ||
        tram_calibration_read_buffer("cal.json", in.cal_text, strlen(in.cal_text), &in.cal, &e))
        fail_msg("%s", e.message);
    return 0;
}

static int teardown(void **state)
{
    (void)state;
    free(in.demo_obs);
    tram_records_destroy(in.rec_few);
    free(in.csv);
    free(in.json);
    free(in.recheck);
    free(in.chain_text);
    free(in.pairs);
    free(in.obs);
    free(in.model);
    free(in.history);
    free(in.png);
    free(in.jpeg);
    free(in.board);
    free(in.pixels);
    free(in.camera);
    tram_pixel_obs_destroy(in.views);
    free(in.cal_text);
    tram_records_destroy(in.rec);
    tram_records_destroy(in.recheck_rec);
    tram_records_destroy(in.joints_rec);
    tram_records_destroy(in.fixed_rec);
    tram_solution_destroy(in.sol);
    tram_calibration_destroy(in.cal);
    cJSON_InitHooks(NULL);
    tram_plot_shutdown();
    return 0;
}

/* The solve from pixels on the command-line tests' scene (its inputs read
 * before failures are injected: their readers are not under test here). */
static struct {
    tram_records *rec;
    tram_pixel_obs *obs;
    tram_camera cam;
    double *xyz;
} px;

static tram_status op_pixel_solve(tram_error *err)
{
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    tram_solution *s = NULL;
    tram_pixel_solve_options po;
    tram_pixel_solve_options_init(&po);
    po.refine_intrinsics = 1;
    tram_status st = tram_solve_pixels(px.rec, TRAM_SETUP_EYE_IN_HAND, &px.cam, px.obs, px.xyz, &so,
                                       &po, &s, err);
    char *text = NULL;
    if (st == TRAM_OK) st = tram_solution_to_json(s, px.rec, "auto", 0, &text, err);
    free(text);
    tram_solution_destroy(s);
    if (st == TRAM_OK) {
        tram_pose_result pr;
        st = tram_pose_from_pixels(&px.cam, px.xyz, px.obs->uv, 20, &pr, err);
    }
    return st;
}

/* The camera held fixed with its calibration covariance (the share of the
 * intervals from the camera), with a short bootstrap. */
static tram_status op_pixel_solve_camera_cov(tram_error *err)
{
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.check_conventions = 0;
    double cov[TRAM_CAM_NPARAM * TRAM_CAM_NPARAM] = {0};
    for (int k = 0; k < 4; k++) cov[k * TRAM_CAM_NPARAM + k] = 0.25;
    cov[TRAM_CAM_K1 * TRAM_CAM_NPARAM + TRAM_CAM_K1] = 1e-6;
    so.bootstrap = 4; /* and the pixel bootstrap's buffers */
    tram_pixel_solve_options po;
    tram_pixel_solve_options_init(&po);
    po.camera_cov = cov;
    tram_solution *s = NULL;
    tram_status st = tram_solve_pixels(px.rec, TRAM_SETUP_EYE_IN_HAND, &px.cam, px.obs, px.xyz, &so,
                                       &po, &s, err);
    char *text = NULL;
    if (st == TRAM_OK) st = tram_solution_to_json(s, px.rec, "auto", 0, &text, err);
    free(text);
    tram_solution_destroy(s);
    return st;
}

static void test_pixels(void **state)
{
    (void)state;
    tram_error e;
    tram_board b;
    fail_at = -1;
    assert_int_equal(tram_records_read_file("tests/cli/data/pixels/robot.csv", NULL, &px.rec, &e), TRAM_OK);
    assert_int_equal(tram_pixel_obs_read_file("tests/cli/data/pixels/pixels.csv", &px.obs, &e), TRAM_OK);
    assert_int_equal(tram_camera_read_file("tests/cli/data/pixels/camera.json", &px.cam, NULL, &e), TRAM_OK);
    assert_int_equal(tram_board_read_file("tests/cli/data/pixels/board.json", &b, &e), TRAM_OK);
    /* a smaller set keeps the thousand runs short: 5 stations, corners 0..19 */
    tram_pixel_obs *all = px.obs;
    assert_int_equal(tram_pixel_obs_create(all->width, all->height, NULL, &px.obs, &e), TRAM_OK);
    for (size_t i = 0; i < all->n; i++) {
        const char *sid = all->station_id[all->station[i]], *pid = all->point_id[all->point[i]];
        if (strcmp(sid, "s05") > 0 || atoi(pid) >= 20) continue;
        assert_int_equal(tram_pixel_obs_add(px.obs, sid, pid, all->uv[2 * i], all->uv[2 * i + 1], &e), TRAM_OK);
    }
    tram_pixel_obs_destroy(all);
    assert_int_equal(tram_pixel_target_from_board(px.obs, &b, TRAM_LENGTH_MM, &px.xyz, &e), TRAM_OK);
    exhaust("solve from pixels (camera refined) + JSON + pose", op_pixel_solve);
    exhaust("solve from pixels (camera covariance, bootstrap) + JSON", op_pixel_solve_camera_cov);
    tram_pixel_target_free(px.xyz);
    tram_pixel_obs_destroy(px.obs);
    tram_records_destroy(px.rec);
}

static void test_readers(void **state)
{
    (void)state;
    exhaust("records CSV + clone", op_records_csv);
    exhaust("records JSON", op_records_json);
    exhaust("calibration file", op_calibration);
    exhaust("chain file + joints", op_chain);
    exhaust("point files + RANSAC", op_points);
    exhaust("check history", op_history);
    exhaust("PNG and JPEG images", op_images);
    exhaust("board file + JSON", op_board);
    exhaust("pixel observations write + read", op_pixels);
    exhaust("camera file read + write", op_camera);
}

static void test_writers_and_solvers(void **state)
{
    (void)state;
    exhaust("records write", op_records_write);
    exhaust("solve + bootstrap + calibration JSON", op_solve);
    exhaust("solve with convention checks", op_solve_conventions);
    exhaust("solve with the sensor scale fitted + bootstrap", op_solve_scale);
    exhaust("solve from points, model solved (scale tested, fitted)", op_point_solve_free);
    exhaust("solve from points, model given (scale tested, fitted)", op_point_solve_model);
    exhaust("check + JSON", op_check);
    exhaust("plot frames", op_plot);
    /* Each run lays out the PDF and draws its pictures: 300 samples of the
     * report's allocations (about 2600, most in the calibration's parse,
     * swept whole above) keep the sanitizer build's run short. */
    int capped = getenv("TRAM_ALLOC_SAMPLES") == NULL;
    if (capped) setenv("TRAM_ALLOC_SAMPLES", "300", 1);
    exhaust("calibration report (PDF)", op_report);
    if (capped) unsetenv("TRAM_ALLOC_SAMPLES");
    remove(report_pdf);
    remove(report_cal);
    exhaust("chessboard detection", op_detect);
    render_image_destroy(detect_im);
    detect_im = NULL;
    exhaust("intrinsics + pictures", op_intrinsics);
}

int main(void)
{
    const struct CMUnitTest tests[] = {cmocka_unit_test(test_readers),
                                       cmocka_unit_test(test_writers_and_solvers),
                                       cmocka_unit_test(test_pixels)};

    return cmocka_run_group_tests(tests, setup, teardown);
}
