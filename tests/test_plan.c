/* test_plan.c - unit tests of station planning (plan/cell.c, sample.c,
 * design.c, plan.c, plan_out.c) and of the chain's inverse kinematics
 * (chain/ik.c), on simulated cells of our own (invented geometry):
 *   - cell files: every refusal names file:line:column and what was expected;
 *   - constraints hold: every proposed pose keeps the whole board in the
 *     image with the margin, inside the distance range and the tilt
 *     limits, the flange inside the box; with a chain every pose is the
 *     chain's at its written joints, inside the limits;
 *   - the prediction is honest: the predicted 1-sigma of X's translation
 *     against the spread of solves of simulated noisy stations at the
 *     proposed poses (Monte Carlo, fixed printed seeds);
 *   - planned beats random: over 20 seeds the median ratio of achieved
 *     sigma, planned over random feasible stations, is at most 0.7;
 *   - refusals: a cell whose constraints cannot be met.
 * The outside check of the information matrix is tests/ref/check_plan_numpy.py. */
#include "test_util.h"

#include "plan/sample_internal.h"

#include <unistd.h>

static const char *cell_text =
    "{\"format\": \"tram-cell\", \"version\": 1, \"length_unit\": \"mm\",\n"
    " \"guess\": {\"T_flange_sensor\": {\"x\": 40, \"y\": -10, \"z\": 80, \"qw\": 0.7071, \"qx\": 0, \"qy\": 0, \"qz\": 0.7071},\n"
    "           \"T_base_target\": {\"x\": 720, \"y\": -150, \"z\": 30, \"qw\": 0.9945, \"qx\": 0, \"qy\": 0, \"qz\": 0.1045}},\n"
    " \"target\": {\"x\": [-100, 100], \"y\": [-62.5, 62.5]},\n"
    " \"view\": {\"field_of_view_deg\": {\"horizontal\": 65, \"vertical\": 51},\n"
    "          \"image_size\": {\"width\": 1280, \"height\": 960},\n"
    "          \"distance\": [350, 650], \"max_tilt_deg\": 45, \"margin_px\": 40},\n"
    " \"reach\": {\"box\": {\"min\": [450, -550, 350], \"max\": [1050, 250, 950]},\n"
    "           \"nominal\": {\"qw\": 0, \"qx\": 1, \"qy\": 0, \"qz\": 0}, \"max_tilt_deg\": 45},\n"
    " \"noise\": {\"length\": 0.2, \"angle_deg\": 0.05}}\n";

static tram_cell *cell_of(const char *text, tram_setup setup)
{
    tram_cell *c = NULL;
    tram_error e;
    if (tram_cell_read_buffer("cell.json", text, strlen(text), NULL, setup, &c, &e) != TRAM_OK)
        fail_msg("%s:%ld:%ld: %s", e.file, e.line, e.column, e.message);
    return c;
}

/* text with the first occurrence of `from` replaced by `to` */
static char *edit(const char *text, const char *from, const char *to)
{
    const char *at = strstr(text, from);
    if (!at) fail_msg("edit: '%s' not in the cell", from);
    size_t n = strlen(text) + strlen(to) + 1;
    char *out = malloc(n);
    snprintf(out, n, "%.*s%s%s", (int)(at - text), text, to, at + strlen(from));
    return out;
}

static void expect_bad(const char *from, const char *to, long line, long col, const char *msg)
{
    char *t = edit(cell_text, from, to);
    tram_cell *c = NULL;
    tram_error e;
    tram_error_clear(&e);
    tram_status st = tram_cell_read_buffer("cell.json", t, strlen(t), NULL, TRAM_SETUP_EYE_IN_HAND, &c, &e);
    if (st != TRAM_EINPUT || c || e.line != line || (col && e.column != col) || !strstr(e.message, msg))
        fail_msg("'%s' -> '%s': status %d at %ld:%ld '%s'; expected %ld:%ld '%s'", from, to, (int)st,
                 e.line, e.column, e.message, line, col, msg);
    assert_string_equal(e.file, "cell.json");
    free(t);
}

static void test_cell_read(void **state)
{
    (void)state;
    tram_cell *c = cell_of(cell_text, TRAM_SETUP_EYE_IN_HAND);
    assert_int_equal(c->length_unit, TRAM_LENGTH_MM);
    assert_int_equal(c->reach, TRAM_REACH_BOX);
    assert_true(c->has_nominal && c->noise_given);
    assert_close(c->noise_angle_rad, 0.05 * M_PI / 180, 1e-15);
    /* f = (W / 2) / tan(fov / 2), principal point at the centre */
    assert_close(c->camera.fx, 640 / tan(32.5 * M_PI / 180), 1e-9);
    assert_close(c->camera.cy, 479.5, 1e-12);
    assert_close(c->X.m[2][3], 80, 1e-12);
    tram_cell_destroy(c);
    tram_cell_destroy(NULL);
    expect_bad("\"version\": 1", "\"version\": 2", 1, 36, "version: expected 1");
    expect_bad("\"max_tilt_deg\": 45, \"margin", "\"max_tilt_deg\": 45, \"margins", 7, 55,
               "unknown key \"margins_px\" in view: expected camera");
    expect_bad("\"qw\": 0.7071", "\"qw\": 0.8", 2, 66, "quaternion norm");
    expect_bad("\"min\": [450, -550, 350]", "\"min\": [450, -550, 1350]", 8, 53, "min < max on every axis (axis z)");
    expect_bad("\"margin_px\": 40", "\"margin_px\": 500", 7, 68, "less than half the image");
    expect_bad("\"distance\": [350, 650]", "\"distance\": [650, 350]", 7, 23, "low < high");
    expect_bad("\"T_base_target\"", "\"T_flange_target\"", 3, 12,
               "unknown key \"T_flange_target\" in guess: expected T_flange_sensor and T_base_target");
    expect_bad("\"length_unit\": \"mm\"", "\"length_unit\": \"furlong\"", 1, 54, "expected mm, cm, m or in");
    expect_bad("\"noise\": {\"length\": 0.2", "\"noise\": {\"length\": -0.2", 10, 22, "expected a per-axis 1-sigma > 0");
    expect_bad(" \"target\": {\"x\": [-100, 100], \"y\": [-62.5, 62.5]},\n", "", 1, 1, "missing key \"target\"");
    expect_bad("\"image_size\"", "\"camera\": \"c.json\", \"image_size\"", 6, 11, "either \"camera\" or");
    expect_bad("\"nominal\": {\"qw\": 0, \"qx\": 1, \"qy\": 0, \"qz\": 0}, ", "", 8, 11, "go together");
    /* syntax errors come from the strict parser with their position */
    expect_bad("\"y\": [-62.5, 62.5]}", "\"y\": [-62.5, 62.5]]", 4, 49, "malformed JSON");
    tram_error e;
    assert_int_equal(tram_cell_read_buffer("cell.json", cell_text, strlen(cell_text), NULL, TRAM_SETUP_UNSET, &c, &e),
                     TRAM_EINPUT);
    assert_non_null(strstr(e.message, "no setup"));
    /* a camera file of tram intrinsics, named relative to the cell's folder */
    char dir[] = "/tmp/tram_cell_XXXXXX", path[300];
    assert_non_null(mkdtemp(dir));
    snprintf(path, sizeof path, "%s/cam.json", dir);
    tram_camera cam = {1000, 1002, 640.5, 479.5, 0, -0.1, 0.02, 0, 0, 0, TRAM_DISTORTION_RADIAL2, 1280, 960};
    char *ct = NULL;
    assert_int_equal(tram_camera_to_json(&cam, NULL, &ct, &e), TRAM_OK);
    FILE *f = fopen(path, "w");
    fputs(ct, f);
    fclose(f);
    free(ct);
    char *t = edit(cell_text, "\"field_of_view_deg\": {\"horizontal\": 65, \"vertical\": 51},\n"
                              "          \"image_size\": {\"width\": 1280, \"height\": 960},",
                   "\"camera\": \"cam.json\",");
    assert_int_equal(tram_cell_read_buffer("cell.json", t, strlen(t), dir, TRAM_SETUP_EYE_IN_HAND, &c, &e), TRAM_OK);
    assert_int_equal(c->camera.distortion, TRAM_DISTORTION_RADIAL2);
    assert_close(c->camera.fy, 1002, 0);
    /* planning with the distorted camera keeps the board inside the image */
    tram_plan_options o;
    tram_plan_options_init(&o);
    o.candidates = 100;
    tram_plan_result *p = NULL;
    assert_int_equal(tram_plan(c, NULL, NULL, &o, &p, &e), TRAM_OK);
    for (size_t i = 0; i < p->n; i++)
        for (int k = 0; k < 4; k++) {
            double corner[3] = {c->target_x[k & 1], c->target_y[k >> 1], 0}, uv[2];
            assert_true(tram_camera_reproject(&c->camera, &p->stations[i].T_sensor_target, corner, uv));
            assert_true(uv[0] >= 40 && uv[0] <= 1239 && uv[1] >= 40 && uv[1] <= 919);
        }
    tram_plan_result_destroy(p);
    tram_cell_destroy(c);
    /* a camera file that is not there names itself */
    assert_int_equal(tram_cell_read_buffer("cell.json", t, strlen(t), "/nonexistent", TRAM_SETUP_EYE_IN_HAND, &c, &e),
                     TRAM_EIO);
    assert_non_null(strstr(e.file, "/nonexistent/cam.json"));
    remove(path);
    rmdir(dir);
    free(t);
}

/* ---- inverse kinematics ------------------------------------------------ */

static const char *arm_text =
    "{\"convention\": \"dh\", \"length_unit\": \"mm\", \"angle_unit\": \"deg\", \"joints\": ["
    "{\"a\": 150, \"alpha\": -90, \"d\": 450, \"theta\": 0, \"type\": \"revolute\", \"limits\": [-170, 170]},"
    "{\"a\": 600, \"alpha\": 0, \"d\": 0, \"theta\": -90, \"type\": \"revolute\", \"limits\": [-120, 80]},"
    "{\"a\": 120, \"alpha\": -90, \"d\": 0, \"theta\": 0, \"type\": \"revolute\", \"limits\": [-150, 160]},"
    "{\"a\": 0, \"alpha\": 90, \"d\": 640, \"theta\": 0, \"type\": \"revolute\", \"limits\": [-200, 200]},"
    "{\"a\": 0, \"alpha\": -90, \"d\": 0, \"theta\": 0, \"type\": \"revolute\", \"limits\": [-125, 125]},"
    "{\"a\": 0, \"alpha\": 0, \"d\": 100, \"theta\": 0, \"type\": \"revolute\", \"limits\": [-360, 360]}]}";

static void test_ik(void **state)
{
    (void)state;
    tram_chain *ch = NULL;
    tram_error e;
    assert_int_equal(tram_chain_read_buffer("arm.json", arm_text, strlen(arm_text), &ch, &e), TRAM_OK);
    test_rng r = test_rng_seeded("plan ik", 18001);
    int reached = 0;
    for (int t = 0; t < 40; t++) {
        double q[6], q0[6], qs[6];
        for (int j = 0; j < 6; j++) {
            const tram_chain_element *el = NULL;
            for (size_t i = 0, k = 0; i < ch->n_elements; i++)
                if (ch->elements[i].kind != TRAM_CHAIN_FIXED && k++ == (size_t)j) el = &ch->elements[i];
            q[j] = el->lo + 0.1 * (el->hi - el->lo) + 0.8 * (el->hi - el->lo) * test_rng_uniform(&r);
            q0[j] = q[j] + 20 * (2 * test_rng_uniform(&r) - 1); /* a start 20 deg away */
        }
        tram_se3 goal, got;
        tram_chain_forward(ch, q, &goal, NULL);
        if (!tram_chain_ik(ch, &goal, q0, 1e-4, 1e-7, qs)) continue;
        reached++;
        tram_chain_forward(ch, qs, &got, NULL);
        double ang, len;
        tram_se3_distance(&goal, &got, &ang, &len);
        assert_true(len <= 0.01 && ang * 180 / M_PI <= 0.001); /* the reach figures */
        assert_int_equal(tram_chain_limit_violation(ch, qs), -1);
    }
    printf("[ info     ] IK reached %d of 40 poses from starts 20 deg away\n", reached);
    assert_true(reached >= 36);
    /* out of reach: 3 m away */
    double q0[6] = {0, 0, 0, 0, 10, 0}, qs[6];
    tram_se3 far;
    tram_se3_identity(&far);
    far.m[0][3] = 3000;
    assert_false(tram_chain_ik(ch, &far, q0, 1e-4, 1e-7, qs));
    tram_chain_destroy(ch);
}

/* ---- simulation ------------------------------------------------------- */

/* Solve stations at the poses T_base_flange (n) with observations
 * simulated at the truth (X, Z of the cell's guess) plus noise of the
 * given per-axis sigmas; returns the error of X's translation, or -1 when
 * the solve failed. */
static double simulate_solve(const tram_cell *c, const tram_se3 *T_bf, size_t n, double sl, double sa,
                             test_rng *rng)
{
    double *P = malloc(n * 16 * sizeof *P), *S = malloc(n * 16 * sizeof *S);
    for (size_t i = 0; i < n; i++) {
        tram_se3 Pp, Ss;
        tram__plan_predict(c->setup, &c->X, &c->Z, &T_bf[i], &Pp, &Ss);
        tram_mat3 R, E;
        double t[3], w[3];
        tram_se3_to_rt(&Ss, &R, t);
        for (int k = 0; k < 3; k++) {
            w[k] = sa * test_rng_normal(rng);
            t[k] += sl * test_rng_normal(rng);
        }
        tram_so3_exp(w, &E);
        tram_so3_mul(&R, &E, &R);
        tram_se3_from_rt(&R, t, &Ss);
        for (int a = 0; a < 4; a++)
            for (int b = 0; b < 4; b++) {
                P[i * 16 + (size_t)(a * 4 + b)] = T_bf[i].m[a][b];
                S[i * 16 + (size_t)(a * 4 + b)] = Ss.m[a][b];
            }
    }
    tram_records *r = NULL;
    tram_error e;
    tram_read_options ro;
    memset(&ro, 0, sizeof ro);
    ro.reorthonormalize = 1;
    double out = -1;
    if (tram_records_from_poses(n, NULL, P, S, TRAM_LENGTH_MM, c->setup, &ro, &r, &e) == TRAM_OK) {
        tram_solve_options so;
        tram_solve_options_init(&so);
        so.noise_length = sl;
        so.noise_angle_rad = sa;
        so.robust = 0;
        so.check_conventions = 0;
        so.trust.pairing_permutations = 0;
        tram_solution *s = NULL;
        if (tram_solve(r, c->setup, &so, &s, &e) == TRAM_OK || (s && s->solved)) {
            double d2 = 0;
            for (int k = 0; k < 3; k++) d2 += tram__sq_t(s->X.m[k][3] - c->X.m[k][3]);
            out = sqrt(d2);
        }
        tram_solution_destroy(s);
    }
    tram_records_destroy(r);
    free(P);
    free(S);
    return out;
}

/* RMS of X's translation error over m simulated solves (= the achieved
 * root-sum-of-squares 1-sigma). */
static double achieved_sigma(const tram_cell *c, const tram_se3 *T_bf, size_t n, int m, test_rng *rng)
{
    double s2 = 0;
    for (int i = 0; i < m; i++) {
        double d = simulate_solve(c, T_bf, n, c->noise_length, c->noise_angle_rad, rng);
        if (d < 0) return INFINITY;
        s2 += d * d;
    }
    return sqrt(s2 / m);
}

static tram_plan_result *plan_of(const tram_cell *c, unsigned long long seed, size_t k, size_t cand)
{
    tram_plan_options o;
    tram_plan_options_init(&o);
    o.seed = seed;
    o.stations = k;
    o.candidates = cand;
    tram_plan_result *p = NULL;
    tram_error e;
    if (tram_plan(c, NULL, NULL, &o, &p, &e) != TRAM_OK) fail_msg("plan: %s", e.message);
    return p;
}

static void check_constraints(const tram_cell *c, const tram_plan_result *p)
{
    for (size_t i = 0; i < p->n; i++) {
        const tram_plan_station *s = &p->stations[i];
        tram_se3 P, S;
        tram__plan_predict(c->setup, &c->X, &c->Z, &s->T_base_flange, &P, &S);
        /* every corner inside the image with the margin */
        for (int k = 0; k < 4; k++) {
            double corner[3] = {c->target_x[k & 1], c->target_y[k >> 1], 0}, uv[2];
            assert_true(tram_camera_reproject(&c->camera, &S, corner, uv));
            assert_true(uv[0] >= c->margin_px && uv[0] <= (double)c->camera.width - 1 - c->margin_px);
            assert_true(uv[1] >= c->margin_px && uv[1] <= (double)c->camera.height - 1 - c->margin_px);
        }
        double ctr[3] = {0, 0, 0}, pc[3];
        tram_se3_apply_point(&S, ctr, pc);
        assert_true(pc[2] >= c->distance[0] && pc[2] <= c->distance[1]);
        assert_true(acos(fabs(S.m[2][2])) <= c->max_board_tilt_rad + 1e-12);
        tram_mat3 R;
        double t[3];
        tram_se3_to_rt(&s->T_base_flange, &R, t);
        if (c->reach == TRAM_REACH_BOX)
            for (int k = 0; k < 3; k++) assert_true(t[k] >= c->box_lo[k] && t[k] <= c->box_hi[k]);
        if (c->has_nominal) assert_true(tram_so3_distance(&c->R_nominal, &R) <= c->max_flange_tilt_rad + 1e-12);
        if (c->chain) {
            tram_se3 T;
            tram_chain_forward(c->chain, s->joints, &T, NULL);
            double ang, len;
            tram_se3_distance(&s->T_base_flange, &T, &ang, &len);
            assert_true(len <= 0.01 && ang * 180 / M_PI <= 0.001);
            assert_int_equal(tram_chain_limit_violation(c->chain, s->joints), -1);
        }
    }
}

static void test_constraints_hold(void **state)
{
    (void)state;
    printf("[ seed     ] plan constraints: sampling seeds 7 and 8\n");
    tram_cell *c = cell_of(cell_text, TRAM_SETUP_EYE_IN_HAND);
    tram_plan_result *p = plan_of(c, 7, 8, 400);
    assert_int_equal(p->n, 8);
    check_constraints(c, p);
    /* from scratch the plan is a start the closed forms can use: Tsai-Lenz
     * on its noise-free observations recovers X (non-parallel axes) */
    {
        tram_se3 P[8], S[8], X, Z;
        for (size_t i = 0; i < 8; i++) {
            P[i] = p->stations[i].T_base_flange;
            S[i] = p->stations[i].T_sensor_target;
        }
        tram_pair *pairs = NULL;
        size_t np = 0;
        tram_error e;
        assert_int_equal(tram_handeye_pairs(8, TRAM_PAIRS_ALL, &pairs, &np), TRAM_OK);
        assert_int_equal(tram_handeye_closed_form(TRAM_METHOD_TSAI_LENZ, P, S, 8, pairs, np, &X, &Z, &e), TRAM_OK);
        double ang, len;
        tram_se3_distance(&X, &c->X, &ang, &len);
        assert_true(ang < 1e-6 && len < 1e-6);
        free(pairs);
    }
    assert_true(p->planned.valid);
    assert_false(p->current.valid); /* from scratch */
    tram_plan_result_destroy(p);
    tram_cell_destroy(c);
    /* with a chain in place of the box (eye-in-hand, the arm of test_ik) */
    char dir[] = "/tmp/tram_plan_XXXXXX";
    assert_non_null(mkdtemp(dir));
    char path[300];
    snprintf(path, sizeof path, "%s/arm.json", dir);
    FILE *f = fopen(path, "w");
    fputs(arm_text, f);
    fclose(f);
    char *t = edit(cell_text, "\"box\": {\"min\": [450, -550, 350], \"max\": [1050, 250, 950]},", "\"chain\": \"arm.json\",");
    tram_error e;
    assert_int_equal(tram_cell_read_buffer("cell.json", t, strlen(t), dir, TRAM_SETUP_EYE_IN_HAND, &c, &e), TRAM_OK);
    p = plan_of(c, 8, 6, 60);
    check_constraints(c, p);
    assert_int_equal(p->n_joints, 6);
    tram_records *r = NULL;
    assert_int_equal(tram_plan_records(p, c, &r, &e), TRAM_OK);
    assert_int_equal(r->n_joints, 6);
    assert_int_equal(r->count, 6);
    tram_records_destroy(r);
    tram_plan_result_destroy(p);
    tram_cell_destroy(c);
    remove(path);
    rmdir(dir);
    free(t);
}

static void test_prediction_honest(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    tram_cell *c = cell_of(cell_text, TRAM_SETUP_EYE_IN_HAND);
    tram_plan_result *p = plan_of(c, 3, 6, 400);
    tram_se3 T[6];
    for (size_t i = 0; i < 6; i++) T[i] = p->stations[i].T_base_flange;
    test_rng r = test_rng_seeded("plan honest (100 simulated solves)", 18003);
    double got = achieved_sigma(c, T, 6, 100, &r);
    printf("[ info     ] X translation 1-sigma: predicted %.4g mm, achieved %.4g mm over 100 solves "
           "(ratio %.3f)\n", p->planned.trans, got, got / p->planned.trans);
    /* the figure: within 25% (100 draws give about 7% spread) */
    assert_true(fabs(got / p->planned.trans - 1) < 0.25);
    tram_plan_result_destroy(p);
    tram_cell_destroy(c);
}

static int cmp_d(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static void test_planned_beats_random(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    tram_cell *c = cell_of(cell_text, TRAM_SETUP_EYE_IN_HAND);
    test_rng r = test_rng_seeded("plan versus random (20 seeds x 12 solves each)", 18004);
    double ratio[20];
    for (int s = 0; s < 20; s++) {
        unsigned long long seed = 100 + (unsigned long long)s;
        tram_plan_result *p = plan_of(c, seed, 6, 1000);
        tram_se3 T[6];
        for (size_t i = 0; i < 6; i++) T[i] = p->stations[i].T_base_flange;
        double planned = achieved_sigma(c, T, 6, 12, &r);
        /* 6 random feasible stations: the first 6 samples of another stream */
        tram__plan_cand *k = NULL;
        size_t n = 0;
        tram__sample_stats st;
        assert_int_equal(tram__plan_sample(c, &c->X, &c->Z, 6, 100000, seed + 1000, &k, &n, &st), TRAM_OK);
        assert_int_equal(n, 6);
        for (size_t i = 0; i < 6; i++) T[i] = k[i].T_base_flange;
        double random = achieved_sigma(c, T, 6, 12, &r);
        ratio[s] = planned / random;
        tram__free(k);
        tram_plan_result_destroy(p);
    }
    qsort(ratio, 20, sizeof *ratio, cmp_d);
    double med = (ratio[9] + ratio[10]) / 2;
    printf("[ info     ] achieved X translation sigma, planned / random: median %.3f over 20 seeds "
           "(range %.3f - %.3f)\n", med, ratio[0], ratio[19]);
    assert_true(med <= 0.7); /* the figure */
    tram_cell_destroy(c);
}

static void test_refusals(void **state)
{
    (void)state;
    /* the box lies 1.5 m above the table: no working distance in reach */
    char *t = edit(cell_text, "\"min\": [450, -550, 350], \"max\": [1050, 250, 950]",
                   "\"min\": [450, -550, 1500], \"max\": [1050, 250, 1800]");
    tram_cell *c = cell_of(t, TRAM_SETUP_EYE_IN_HAND);
    tram_plan_options o;
    tram_plan_options_init(&o);
    o.max_samples = 20000;
    tram_plan_result *p = NULL;
    tram_error e;
    assert_int_equal(tram_plan(c, NULL, NULL, &o, &p, &e), TRAM_EUNDETERMINED);
    assert_null(p);
    assert_non_null(strstr(e.message, "the working distance 350-650 mm cannot be reached inside the flange box"));
    tram_cell_destroy(c);
    free(t);
    /* no noise and no records */
    t = edit(cell_text, ",\n \"noise\": {\"length\": 0.2, \"angle_deg\": 0.05}", "");
    c = cell_of(t, TRAM_SETUP_EYE_IN_HAND);
    assert_int_equal(tram_plan(c, NULL, NULL, NULL, &p, &e), TRAM_EUNDETERMINED);
    assert_non_null(strstr(e.message, "no noise per station"));
    tram_cell_destroy(c);
    free(t);
}

static void test_with_records_and_eye_to_hand(void **state)
{
    (void)state;
    /* three recorded stations (random feasible ones, noise-free) and their
     * solve: the plan starts from their information and lowers the sigma */
    tram_cell *c = cell_of(cell_text, TRAM_SETUP_EYE_IN_HAND);
    tram__plan_cand *k = NULL;
    size_t n = 0;
    tram__sample_stats st;
    printf("[ seed     ] plan with records: sampling seed 55, plan seed 56\n");
    assert_int_equal(tram__plan_sample(c, &c->X, &c->Z, 4, 100000, 55, &k, &n, &st), TRAM_OK);
    double P[64], S[64];
    for (size_t i = 0; i < 4; i++)
        for (int a = 0; a < 16; a++) {
            P[i * 16 + (size_t)a] = k[i].T_base_flange.m[a / 4][a % 4];
            S[i * 16 + (size_t)a] = k[i].S.m[a / 4][a % 4];
        }
    tram_records *r = NULL;
    tram_error e;
    assert_int_equal(tram_records_from_poses(4, NULL, P, S, TRAM_LENGTH_MM, TRAM_SETUP_EYE_IN_HAND, NULL, &r, &e), TRAM_OK);
    tram_solve_options so;
    tram_solve_options_init(&so);
    so.noise_length = c->noise_length;
    so.noise_angle_rad = c->noise_angle_rad;
    tram_solution *sol = NULL;
    assert_int_equal(tram_solve(r, TRAM_SETUP_EYE_IN_HAND, &so, &sol, &e), TRAM_OK);
    tram_plan_options o;
    tram_plan_options_init(&o);
    o.seed = 56;
    o.candidates = 300;
    tram_plan_result *p = NULL;
    assert_int_equal(tram_plan(c, r, sol, &o, &p, &e), TRAM_OK);
    assert_int_equal(p->n_existing, 4);
    assert_string_equal(p->estimate_source, "records");
    assert_true(p->current.valid && p->planned.valid);
    assert_true(p->planned.trans < p->current.trans);
    assert_true(p->planned.trans < p->random.trans);
    printf("[ info     ] with 4 recorded stations: sigma %.4g -> %.4g mm planned (random %.4g)\n",
           p->current.trans, p->planned.trans, p->random.trans);
    char *text = NULL;
    assert_int_equal(tram_plan_to_json(p, &text, &e), TRAM_OK);
    assert_non_null(strstr(text, "\"format\":\t\"tram-plan\""));
    free(text);
    tram_plan_result_destroy(p);
    tram_solution_destroy(sol);
    tram_records_destroy(r);
    tram__free(k);
    tram_cell_destroy(c);
    /* eye-to-hand: a camera over the table, the board on the flange */
    const char *eth =
        "{\"format\": \"tram-cell\", \"version\": 1, \"length_unit\": \"mm\",\n"
        " \"guess\": {\"T_base_sensor\": {\"x\": 650, \"y\": 250, \"z\": 1600, \"qw\": 0, \"qx\": 1, \"qy\": 0, \"qz\": 0},\n"
        "           \"T_flange_target\": {\"x\": 0, \"y\": 10, \"z\": 25, \"qw\": 1, \"qx\": 0, \"qy\": 0, \"qz\": 0}},\n"
        " \"target\": {\"x\": [-80, 80], \"y\": [-60, 60]},\n"
        " \"view\": {\"field_of_view_deg\": {\"horizontal\": 50, \"vertical\": 40},\n"
        "          \"image_size\": {\"width\": 1280, \"height\": 1024},\n"
        "          \"distance\": [800, 1200], \"max_tilt_deg\": 40, \"margin_px\": 30},\n"
        " \"reach\": {\"sphere\": {\"centre\": [650, 250, 600], \"radius\": 300},\n"
        "           \"nominal\": {\"qw\": 1, \"qx\": 0, \"qy\": 0, \"qz\": 0}, \"max_tilt_deg\": 40},\n"
        " \"noise\": {\"length\": 0.3, \"angle_deg\": 0.05}}\n";
    c = cell_of(eth, TRAM_SETUP_EYE_TO_HAND);
    assert_int_equal(c->reach, TRAM_REACH_SPHERE);
    p = plan_of(c, 9, 6, 300);
    check_constraints(c, p);
    for (size_t i = 0; i < p->n; i++) {
        double d2 = 0;
        for (int a = 0; a < 3; a++) d2 += tram__sq_t(p->stations[i].T_base_flange.m[a][3] - c->centre[a]);
        assert_true(sqrt(d2) <= 300);
    }
    assert_true(p->planned.trans < p->random.trans);
    tram_plan_result_destroy(p);
    tram_cell_destroy(c);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_cell_read),         cmocka_unit_test(test_ik),
        cmocka_unit_test(test_constraints_hold),  cmocka_unit_test(test_prediction_honest),
        cmocka_unit_test(test_planned_beats_random), cmocka_unit_test(test_refusals),
        cmocka_unit_test(test_with_records_and_eye_to_hand),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
