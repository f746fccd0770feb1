/* test_solve.c - tests of the solve pipeline (solve.c, refine.c,
 * diagnose.c, solution_json.c) on synthetic stations with known truth. */
#include "test_util.h"

#include <cjson/cJSON.h>

#include "math/stats_internal.h"

typedef struct synth {
    size_t n;
    tram_se3 X, Z;          /* truth: T_flange_sensor, T_base_target */
    tram_se3 F[64], S[64];  /* T_base_flange, T_sensor_target (noisy) */
} synth;

/* Eye-in-hand stations: flange poses spread around a work point, the
 * target fixed.  Noise per axis: robot (deg, mm), sensor (deg, mm). */
static void make_synth(test_rng *r, size_t n, double rob_deg, double rob_mm, double sen_deg,
                       double sen_mm, synth *s)
{
    s->n = n;
    double xt[3] = {30 + 20 * test_rng_uniform(r), -40 + 20 * test_rng_uniform(r),
                    90 + 20 * test_rng_uniform(r)};
    tram_mat3 R;
    test_random_rotation(r, &R);
    tram_se3_from_rt(&R, xt, &s->X);
    double zt[3] = {700, -100, 50};
    test_random_rotation(r, &R);
    tram_se3_from_rt(&R, zt, &s->Z);
    for (size_t i = 0; i < n; i++) {
        double w[3] = {0.6 * test_rng_normal(r), 0.6 * test_rng_normal(r),
                       1.5 * test_rng_normal(r)};
        tram_mat3 Rf, down;
        tram_so3_axis_rotation(0, M_PI, &down);
        tram_so3_exp(w, &Rf);
        tram_so3_mul(&down, &Rf, &Rf);
        double t[3] = {600 + 200 * test_rng_uniform(r), -100 + 200 * test_rng_uniform(r),
                       450 + 200 * test_rng_uniform(r)};
        tram_se3_from_rt(&Rf, t, &s->F[i]);
        tram_se3 FX, FXi;
        tram_se3_compose(&s->F[i], &s->X, &FX);
        tram_se3_invert(&FX, &FXi);
        tram_se3_compose(&FXi, &s->Z, &s->S[i]);
        test_perturb_pose(r, &s->F[i], rob_deg * M_PI / 180, rob_mm);
        test_perturb_pose(r, &s->S[i], sen_deg * M_PI / 180, sen_mm);
    }
}

static tram_records *records_of(const synth *s)
{
    tram_records *r = calloc(1, sizeof *r);
    r->count = s->n;
    r->stations = calloc(s->n, sizeof *r->stations);
    r->id_pool = calloc(s->n, 24); /* the ids, freed with the record set */
    snprintf(r->source, sizeof r->source, "synthetic");
    r->length_unit = TRAM_LENGTH_MM;
    r->has_block[0] = r->has_block[1] = 1;
    r->setup = TRAM_SETUP_EYE_IN_HAND;
    for (size_t i = 0; i < s->n; i++) {
        snprintf(r->id_pool + 24 * i, 24, "s%zu", i + 1);
        r->stations[i].id = r->id_pool + 24 * i;
        r->stations[i].T_base_flange = s->F[i];
        r->stations[i].T_sensor_target = s->S[i];
    }
    return r;
}

static double tram__sq_test(double x) { return x * x; }

static void pose_error(const tram_se3 *a, const tram_se3 *b, double *deg, double *len)
{
    tram_se3_distance(a, b, deg, len);
}

static tram_solution *solve_ok(const tram_records *r, const tram_solve_options *o)
{
    tram_solution *s = NULL;
    tram_error e;
    tram_status st = tram_solve(r, r->setup, o, &s, &e);
    if (st != TRAM_OK) fail_msg("solve failed: %s", e.message);
    return s;
}

static void test_noise_free_every_method(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("solve noise-free", 7001);
    synth s;
    make_synth(&rng, 12, 0, 0, 0, 0, &s);
    tram_records *r = records_of(&s);
    for (int m = 0; m < TRAM_METHOD_COUNT; m++) {
        for (int refine = 0; refine < 2; refine++) {
            tram_solve_options o;
            tram_solve_options_init(&o);
            o.method = (tram_method)m;
            o.refine = refine;
            o.check_conventions = 0;
            if (m == 0 && !refine) continue;
            tram_solution *sol = solve_ok(r, &o);
            double d, l;
            pose_error(&sol->X, &s.X, &d, &l);
            assert_true(d * M_PI / 180 < 1e-9 && l < 1e-9 * 100);
            pose_error(&sol->Z, &s.Z, &d, &l);
            assert_true(d * M_PI / 180 < 1e-9 && l < 1e-9 * 700);
            assert_int_equal(sol->n_outliers, 0);
            tram_solution_destroy(sol);
        }
    }
    tram_records_destroy(r);
}

static void test_three_station_minimum(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("solve three stations", 7002);
    synth s;
    make_synth(&rng, 3, 0, 0, 0, 0, &s);
    tram_records *r = records_of(&s);
    tram_solution *sol = solve_ok(r, NULL);
    double d, l;
    pose_error(&sol->X, &s.X, &d, &l);
    assert_true(d < 1e-7 && l < 1e-7);
    tram_solution_destroy(sol);
    r->count = 2;
    tram_error e;
    assert_int_equal(tram_solve(r, r->setup, NULL, &sol, &e), TRAM_EUNDETERMINED);
    assert_non_null(sol);
    assert_false(sol->solved);
    assert_string_equal(sol->diag[0].code, "too-few-stations");
    tram_solution_destroy(sol);
    tram_records_destroy(r);
}

static void test_refined_beats_closed_forms(void **state)
{
    (void)state;
    /* Realistic noise: robot 0.01 deg / 0.05 mm, sensor 0.05 deg / 0.2 mm. */
    test_rng rng = test_rng_seeded("solve accuracy", 7003);
    double err_ref = 0, err_best_cf = 0;
    const int trials = 30;
    for (int t = 0; t < trials; t++) {
        synth s;
        make_synth(&rng, 20, 0.01, 0.05, 0.05, 0.2, &s);
        tram_records *r = records_of(&s);
        tram_solve_options o;
        tram_solve_options_init(&o);
        o.check_conventions = 0;
        tram_solution *sol = solve_ok(r, &o);
        double d, l;
        pose_error(&sol->X, &s.X, &d, &l);
        err_ref += l * l;
        /* Bound derived from the noise.  Per axis, a station's prediction of
         * the target position scatters by sigma_t = sqrt(0.2^2 + 0.05^2 +
         * (lever * 0.01 deg)^2) with a lever of about 700 mm, and its
         * orientation by sigma_r = sqrt(0.05^2 + 0.01^2) deg.  The solution
         * averages n = 20 stations, with a geometry factor of at most 3 for
         * the spread of rotations used here (common practice), and we allow
         * 5 sigma: bound = 5 * 3 * sigma / sqrt(n), per axis, times sqrt(3)
         * for the norm. */
        double sig_t = sqrt(0.04 + 0.0025 + tram__sq_test(700 * 0.01 * M_PI / 180));
        double sig_r = sqrt(0.05 * 0.05 + 0.01 * 0.01);
        double bt = 5 * 3 * sig_t / sqrt(20.0) * sqrt(3.0), br = 5 * 3 * sig_r / sqrt(20.0) * sqrt(3.0);
        if (!(l < bt && d < br)) fail_msg("error %.3g mm / %.3g deg above the noise bound %.3g / %.3g", l, d, bt, br);
        double best = INFINITY;
        for (int m = 1; m < TRAM_METHOD_COUNT; m++) {
            o.method = (tram_method)m;
            o.refine = 0;
            tram_solution *c = solve_ok(r, &o);
            pose_error(&c->X, &s.X, &d, &l);
            if (l < best) best = l;
            tram_solution_destroy(c);
        }
        err_best_cf += best * best;
        tram_solution_destroy(sol);
        tram_records_destroy(r);
    }
    printf("[ info     ] rms translation error of T_flange_sensor: refined %.4f mm, best closed "
           "form %.4f mm\n",
           sqrt(err_ref / trials), sqrt(err_best_cf / trials));
    assert_true(err_ref <= err_best_cf * 1.05);
}

static void test_interval_coverage(void **state)
{
    (void)state;
    /* Over 200 trials with known noise, the 95% intervals (1.96 sigma per
     * axis, all 12 axes) contain the truth in 90-99% of cases. */
    test_rng rng = test_rng_seeded("solve coverage", 7004);
    size_t inside = 0, total = 0;
    for (int t = 0; t < 200; t++) {
        synth s;
        make_synth(&rng, 20, 0.01, 0.05, 0.05, 0.2, &s);
        tram_records *r = records_of(&s);
        tram_solve_options o;
        tram_solve_options_init(&o);
        o.check_conventions = 0;
        tram_solution *sol = solve_ok(r, &o);
        assert_true(sol->unc.valid);
        const tram_se3 *est[2] = {&sol->X, &sol->Z}, *tru[2] = {&s.X, &s.Z};
        for (int b = 0; b < 2; b++) {
            tram_mat3 Re, Rt, D;
            double te[3], tt[3], w[3];
            tram_se3_to_rt(est[b], &Re, te);
            tram_se3_to_rt(tru[b], &Rt, tt);
            tram_so3_transpose(&Re, &D);
            tram_so3_mul(&D, &Rt, &D); /* truth = est * exp(w): about own axes */
            tram_so3_log(&D, w);
            for (int k = 0; k < 3; k++) {
                inside += fabs(tt[k] - te[k]) <= 1.96 * sol->unc.sigma[6 * b + k];
                inside += fabs(w[k] * 180 / M_PI) <= 1.96 * sol->unc.sigma[6 * b + 3 + k];
                total += 2;
            }
        }
        tram_solution_destroy(sol);
        tram_records_destroy(r);
    }
    double frac = (double)inside / (double)total;
    printf("[ info     ] 95%% interval coverage over 200 trials: %.3f\n", frac);
    assert_true(frac >= 0.90 && frac <= 0.99);
}

static void test_bootstrap_agrees(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("solve bootstrap", 7005);
    synth s;
    make_synth(&rng, 30, 0.01, 0.05, 0.05, 0.2, &s);
    tram_records *r = records_of(&s);
    tram_solve_options o;
    tram_solve_options_init(&o);
    o.check_conventions = 0;
    o.bootstrap = 300;
    o.seed = 42;
    tram_solution *sol = solve_ok(r, &o);
    assert_true(sol->unc.bootstrap_valid);
    for (int a = 0; a < 12; a++) {
        double ratio = sol->unc.bootstrap_sigma[a] / sol->unc.sigma[a];
        if (!(ratio > 0.4 && ratio < 2.5)) fail_msg("axis %d: bootstrap/Jacobian sigma %.3g", a, ratio);
    }
    tram_solution_destroy(sol);
    tram_records_destroy(r);
}

static void test_outlier_flagged(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("solve outliers", 7006);
    synth s;
    make_synth(&rng, 20, 0.01, 0.05, 0.05, 0.2, &s);
    test_perturb_pose(&rng, &s.S[4], 2.0 * M_PI / 180, 8.0);
    test_perturb_pose(&rng, &s.S[11], 1.0 * M_PI / 180, 5.0);
    tram_records *r = records_of(&s);
    tram_solve_options o;
    tram_solve_options_init(&o);
    o.check_conventions = 0;
    tram_solution *sol = solve_ok(r, &o);
    assert_true(sol->stations[4].outlier);
    assert_true(sol->stations[11].outlier);
    assert_int_equal(sol->n_outliers, 2);
    double d, l;
    pose_error(&sol->X, &s.X, &d, &l);
    assert_true(l < 1.0);
    tram_solution_destroy(sol);
    tram_records_destroy(r);
}

static void test_planar_motion_undetermined(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("solve planar", 7007);
    synth s;
    make_synth(&rng, 10, 0, 0, 0, 0, &s);
    for (size_t i = 0; i < s.n; i++) { /* SCARA-like: rotate about base z only */
        tram_mat3 R, down;
        tram_so3_axis_rotation(2, 0.5 * (double)i, &R);
        tram_so3_axis_rotation(0, M_PI, &down);
        tram_so3_mul(&R, &down, &R);
        double t[3] = {600 + 20.0 * (double)i, 10.0 * (double)i, 500};
        tram_se3_from_rt(&R, t, &s.F[i]);
        tram_se3 FX, FXi;
        tram_se3_compose(&s.F[i], &s.X, &FX);
        tram_se3_invert(&FX, &FXi);
        tram_se3_compose(&FXi, &s.Z, &s.S[i]);
    }
    tram_records *r = records_of(&s);
    tram_solution *sol;
    tram_error e;
    assert_int_equal(tram_solve(r, r->setup, NULL, &sol, &e), TRAM_EUNDETERMINED);
    assert_string_equal(sol->diag[sol->ndiag - 1].code, "parallel-rotation-axes");
    assert_non_null(strstr(sol->diag[sol->ndiag - 1].message, "translation along this axis"));
    tram_solution_destroy(sol);
    tram_records_destroy(r);
}

static void test_eye_to_hand(void **state)
{
    (void)state;
    /* Eye-to-hand: T_base_sensor T_sensor_target = T_base_flange T_flange_target. */
    test_rng rng = test_rng_seeded("solve eye-to-hand", 7008);
    synth s;
    make_synth(&rng, 15, 0, 0, 0, 0, &s);
    tram_se3 T_base_sensor = s.Z, T_flange_target = s.X;
    tram_records *r = records_of(&s);
    r->setup = TRAM_SETUP_EYE_TO_HAND;
    for (size_t i = 0; i < s.n; i++) {
        tram_se3 FT, Si;
        tram_se3_compose(&s.F[i], &T_flange_target, &FT);
        tram_se3_invert(&T_base_sensor, &Si);
        tram_se3_compose(&Si, &FT, &r->stations[i].T_sensor_target);
    }
    tram_solution *sol = solve_ok(r, NULL);
    assert_string_equal(sol->X_name, "T_base_sensor");
    double d, l;
    pose_error(&sol->X, &T_base_sensor, &d, &l);
    assert_true(d < 1e-7 && l < 1e-6);
    pose_error(&sol->Z, &T_flange_target, &d, &l);
    assert_true(d < 1e-7 && l < 1e-6);
    tram_solution_destroy(sol);
    tram_records_destroy(r);
}

static void test_json_schema(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("solve json", 7009);
    synth s;
    make_synth(&rng, 10, 0.01, 0.05, 0.05, 0.2, &s);
    tram_records *r = records_of(&s);
    tram_solution *sol = solve_ok(r, NULL);
    char *text;
    tram_error e;
    assert_int_equal(tram_solution_to_json(sol, r, "auto", 1, &text, &e), TRAM_OK);
    cJSON *j = cJSON_Parse(text);
    assert_non_null(j);
    const char *keys[] = {"setup", "method", "length_unit", "transforms", "residuals",
                          "uncertainty", "diagnostics", "input", "tool"};
    for (size_t i = 0; i < sizeof keys / sizeof keys[0]; i++)
        assert_non_null(cJSON_GetObjectItem(j, keys[i]));
    cJSON *x = cJSON_GetObjectItem(cJSON_GetObjectItem(j, "transforms"), "T_flange_sensor");
    assert_int_equal(cJSON_GetArraySize(cJSON_GetObjectItem(x, "matrix")), 4);
    assert_int_equal(cJSON_GetArraySize(cJSON_GetObjectItem(x, "quaternion_wxyz")), 4);
    /* matrix reads back exactly */
    cJSON *row = cJSON_GetArrayItem(cJSON_GetObjectItem(x, "matrix"), 0);
    assert_true(cJSON_GetArrayItem(row, 3)->valuedouble == sol->X.m[0][3]);
    cJSON *st = cJSON_GetArrayItem(
        cJSON_GetObjectItem(cJSON_GetObjectItem(j, "residuals"), "stations"), 0);
    assert_string_equal(cJSON_GetObjectItem(st, "station")->valuestring, "s1");
    assert_true(cJSON_IsBool(cJSON_GetObjectItem(st, "outlier")));
    cJSON_Delete(j);
    free(text);
    tram_solution_destroy(sol);
    tram_records_destroy(r);
}

static int cmp_dbl(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double get_dbl(const void *ctx, size_t i) { return ((const double *)ctx)[i]; }

/* The allocation-free median (radix selection) against sorting, and the
 * in-place selection against it bit for bit: random
 * values of both signs over many magnitudes, ties, zeros of both signs. */
static void test_median_selection(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("median", 7010);
    double v[257], c[257];
    for (int trial = 0; trial < 200; trial++) {
        size_t n = 1 + (size_t)(test_rng_uniform(&r) * 257);
        for (size_t i = 0; i < n; i++) {
            double u = test_rng_uniform(&r);
            v[i] = u < 0.1 ? 0.0 : u < 0.15 ? -0.0 : u < 0.3 ? 3.5 : test_rng_normal(&r) * pow(10, 8 * (u - 0.6));
        }
        memcpy(c, v, n * sizeof *v);
        qsort(c, n, sizeof *c, cmp_dbl);
        double want = n % 2 ? c[n / 2] : 0.5 * (c[n / 2 - 1] + c[n / 2]);
        double got = tram__median(v, n);
        if (!(got == want)) fail_msg("trial %d (n %zu): median %.17g, sorting gives %.17g", trial, n, got, want);
        size_t k = (size_t)(test_rng_uniform(&r) * (double)n);
        assert_true(tram__median(v, n) == want); /* input not reordered */
        assert_true(tram__kth(n, get_dbl, v, k) == c[k]);
        double w[257], m = tram__median(v, n);
        memcpy(w, v, n * sizeof *v);
        double mi = tram__median_inplace(w, n); /* Hoare's selection: the same bits */
        if (memcmp(&mi, &m, sizeof m)) fail_msg("trial %d (n %zu): in place %.17g, radix %.17g", trial, n, mi, m);
    }
    double one = 2.5;
    assert_true(tram__median_inplace(&one, 1) == 2.5 && tram__median_inplace(&one, 0) == 0.0);
    assert_true(tram__median(v, 0) == 0.0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_noise_free_every_method), cmocka_unit_test(test_three_station_minimum),
        cmocka_unit_test(test_refined_beats_closed_forms), cmocka_unit_test(test_interval_coverage),
        cmocka_unit_test(test_bootstrap_agrees),   cmocka_unit_test(test_outlier_flagged),
        cmocka_unit_test(test_planar_motion_undetermined), cmocka_unit_test(test_eye_to_hand),
        cmocka_unit_test(test_json_schema), cmocka_unit_test(test_median_selection)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
