/* test_check.c - tests of the mount check (check.c, calib.c, check_json.c):
 * false alarms, detection and attribution of a moved sensor or target in
 * both setups, single stations, and calibration files that must be refused. */
#include "test_util.h"

#include <cjson/cJSON.h>

#define SEN_DEG 0.05
#define SEN_MM 0.2
#define ROB_DEG 0.01
#define ROB_MM 0.05

/* n noisy stations of the setup for the generic P X S = Z with given X, Z. */
static tram_records *stations(test_rng *r, tram_setup setup, size_t n, const tram_se3 *X,
                              const tram_se3 *Z)
{
    tram_records *rec = calloc(1, sizeof *rec);
    rec->count = n;
    rec->stations = calloc(n, sizeof *rec->stations);
    rec->id_pool = calloc(n, 24); /* the ids, freed with the record set */
    rec->length_unit = TRAM_LENGTH_MM;
    rec->has_block[0] = rec->has_block[1] = 1;
    rec->setup = setup;
    snprintf(rec->source, sizeof rec->source, "synthetic");
    for (size_t i = 0; i < n; i++) {
        tram_mat3 Rf, down;
        double w[3] = {0.6 * test_rng_normal(r), 0.6 * test_rng_normal(r),
                       1.5 * test_rng_normal(r)};
        tram_so3_exp(w, &Rf);
        tram_so3_axis_rotation(0, M_PI, &down);
        tram_so3_mul(&down, &Rf, &Rf);
        double t[3] = {600 + 200 * test_rng_uniform(r), -100 + 200 * test_rng_uniform(r),
                       450 + 200 * test_rng_uniform(r)};
        tram_se3 F, P, PX, PXi;
        tram_se3_from_rt(&Rf, t, &F);
        if (setup == TRAM_SETUP_EYE_TO_HAND) tram_se3_invert(&F, &P);
        else P = F;
        tram_se3_compose(&P, X, &PX);
        tram_se3_invert(&PX, &PXi);
        tram_se3_compose(&PXi, Z, &rec->stations[i].T_sensor_target);
        rec->stations[i].T_base_flange = F;
        test_perturb_pose(r, &rec->stations[i].T_base_flange, ROB_DEG * M_PI / 180, ROB_MM);
        test_perturb_pose(r, &rec->stations[i].T_sensor_target, SEN_DEG * M_PI / 180, SEN_MM);
        snprintf(rec->id_pool + 24 * i, 24, "c%zu", i + 1);
        rec->stations[i].id = rec->id_pool + 24 * i;
    }
    return rec;
}

static void truth(test_rng *r, tram_setup setup, tram_se3 *X, tram_se3 *Z)
{
    tram_mat3 R;
    test_random_rotation(r, &R);
    double near[3] = {40, -20, 90}, far[3] = {700, -100, 50};
    /* eye-in-hand: X near the flange, Z far; eye-to-hand: the reverse */
    tram_se3_from_rt(&R, setup == TRAM_SETUP_EYE_IN_HAND ? near : far, X);
    test_random_rotation(r, &R);
    tram_se3_from_rt(&R, setup == TRAM_SETUP_EYE_IN_HAND ? far : near, Z);
}

/* Calibrate on 20 stations and read the calibration back from its file text. */
static tram_calibration *calibrate(test_rng *r, tram_setup setup, const tram_se3 *X,
                                   const tram_se3 *Z)
{
    tram_records *rec = stations(r, setup, 20, X, Z);
    tram_solve_options o;
    tram_solve_options_init(&o);
    o.check_conventions = 0;
    tram_solution *s;
    tram_error e;
    assert_int_equal(tram_solve(rec, setup, &o, &s, &e), TRAM_OK);
    char *text;
    assert_int_equal(tram_solution_to_json(s, rec, "auto", 1, &text, &e), TRAM_OK);
    tram_calibration *cal;
    if (tram_calibration_read_buffer("cal.json", text, strlen(text), &cal, &e) != TRAM_OK)
        fail_msg("%s", e.message);
    free(text);
    tram_solution_destroy(s);
    tram_records_destroy(rec);
    return cal;
}

static tram_check_result *run_check(const tram_calibration *cal, const tram_records *rec,
                                    const tram_check_options *o)
{
    tram_check_result *res;
    tram_error e;
    if (tram_check(cal, rec, o, &res, &e) != TRAM_OK) fail_msg("%s", e.message);
    return res;
}

/* Move the sensor (which = 0) or the target by (w, d) in its parent frame. */
static void moved(const tram_se3 *T, const double w[3], const double d[3], tram_se3 *out)
{
    tram_mat3 R, E;
    double t[3];
    tram_se3_to_rt(T, &R, t);
    tram_so3_exp(w, &E);
    tram_so3_mul(&E, &R, &R);
    for (int i = 0; i < 3; i++) t[i] += d[i];
    tram_se3_from_rt(&R, t, out);
}

static void test_false_alarms(void **state)
{
    (void)state;
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    /* Nothing moved: ok in at least 95% of 200 trials (the test is built
     * for a 1% false-alarm rate; the measured rate is printed). */
    test_rng r = test_rng_seeded("check false alarms", 9001);
    int ok = 0;
    for (int t = 0; t < 200; t++) {
        tram_setup setup = t % 2 ? TRAM_SETUP_EYE_TO_HAND : TRAM_SETUP_EYE_IN_HAND;
        tram_se3 X, Z;
        truth(&r, setup, &X, &Z);
        tram_calibration *cal = calibrate(&r, setup, &X, &Z);
        tram_records *rec = stations(&r, setup, 8, &X, &Z);
        tram_check_result *res = run_check(cal, rec, NULL);
        ok += res->verdict == TRAM_VERDICT_OK;
        tram_check_result_destroy(res);
        tram_records_destroy(rec);
        tram_calibration_destroy(cal);
    }
    printf("[ info     ] no change: ok in %d of 200 trials (false-alarm rate %.3f)\n", ok,
           1.0 - ok / 200.0);
    assert_true(ok >= 190);
}

static void detection(tram_setup setup, int which, uint64_t seed)
{
    TEST_FIGURES_IN_PLAIN_BUILD_ONLY();
    /* A change of three times the calibration's per-axis 1-sigma station
     * noise on every axis of the moved transform (docs/check.md says why
     * the transform's own 1-sigma is not a detectable size). */
    test_rng r = test_rng_seeded(which ? "check target moved" : "check sensor moved", seed);
    int named = 0, inside = 0, axes = 0;
    const int trials = 100;
    for (int t = 0; t < trials; t++) {
        tram_se3 X, Z, Xm, Zm;
        truth(&r, setup, &X, &Z);
        tram_calibration *cal = calibrate(&r, setup, &X, &Z);
        double w[3], d[3];
        for (int i = 0; i < 3; i++) {
            w[i] = 3 * cal->noise_angle_rad * (test_rng_uniform(&r) < 0.5 ? -1 : 1);
            d[i] = 3 * cal->noise_length * (test_rng_uniform(&r) < 0.5 ? -1 : 1);
        }
        moved(which ? &Z : &X, w, d, which ? &Zm : &Xm);
        if (which) Xm = X;
        else Zm = Z;
        tram_records *rec = stations(&r, setup, 8, &Xm, &Zm);
        tram_check_result *res = run_check(cal, rec, NULL);
        tram_verdict want = which ? TRAM_VERDICT_TARGET_MOVED : TRAM_VERDICT_SENSOR_MOVED;
        named += res->verdict == want;
        const tram_change *c = which ? &res->target : &res->sensor;
        for (int i = 0; i < 3; i++) {
            inside += fabs(c->translation[i] - d[i]) <= 1.96 * c->translation_sigma[i];
            inside += fabs(c->rotation_deg[i] - w[i] * 180 / M_PI) <= 1.96 * c->rotation_sigma_deg[i];
            axes += 2;
        }
        tram_check_result_destroy(res);
        tram_records_destroy(rec);
        tram_calibration_destroy(cal);
    }
    printf("[ info     ] %s, %s moved: named in %d of %d trials; change within its 95%% "
           "interval on %.3f of the axes\n",
           tram_setup_name(setup), which ? "target" : "sensor", named, trials,
           (double)inside / axes);
    assert_true(named >= 95 * trials / 100);
    assert_true((double)inside / axes >= 0.90);
}

static void test_sensor_moved_eye_in_hand(void **state)
{
    (void)state;
    detection(TRAM_SETUP_EYE_IN_HAND, 0, 9002);
}

static void test_target_moved_eye_in_hand(void **state)
{
    (void)state;
    detection(TRAM_SETUP_EYE_IN_HAND, 1, 9003);
}

static void test_sensor_moved_eye_to_hand(void **state)
{
    (void)state;
    detection(TRAM_SETUP_EYE_TO_HAND, 0, 9004);
}

static void test_target_moved_eye_to_hand(void **state)
{
    (void)state;
    detection(TRAM_SETUP_EYE_TO_HAND, 1, 9005);
}

static void test_single_station(void **state)
{
    (void)state;
    /* One station cannot know the cause: inconclusive (or ok), never a cause. */
    test_rng r = test_rng_seeded("check one station", 9006);
    for (int t = 0; t < 20; t++) {
        tram_se3 X, Z, Xm;
        truth(&r, TRAM_SETUP_EYE_IN_HAND, &X, &Z);
        tram_calibration *cal = calibrate(&r, TRAM_SETUP_EYE_IN_HAND, &X, &Z);
        double w[3] = {0.001, 0, 0}, d[3] = {2.0, 0, 0}; /* 0.06 deg, 2 mm */
        moved(&X, w, d, &Xm);
        tram_records *rec = stations(&r, TRAM_SETUP_EYE_IN_HAND, 1, t % 2 ? &Xm : &X, &Z);
        tram_check_result *res = run_check(cal, rec, NULL);
        assert_true(res->verdict == TRAM_VERDICT_OK || res->verdict == TRAM_VERDICT_INCONCLUSIVE);
        if (t % 2) assert_int_equal(res->verdict, TRAM_VERDICT_INCONCLUSIVE);
        tram_check_options o = {1, 5.0, 1.0 * M_PI / 180, 0, 0, 0};
        tram_check_result *tol = run_check(cal, rec, &o); /* within a 5 mm, 1 deg tolerance */
        assert_int_equal(tol->verdict, TRAM_VERDICT_OK);
        tram_check_result_destroy(tol);
        tram_check_result_destroy(res);
        tram_records_destroy(rec);
        tram_calibration_destroy(cal);
    }
}

static void test_calibration_refused(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("check refused", 9007);
    tram_se3 X, Z;
    truth(&r, TRAM_SETUP_EYE_IN_HAND, &X, &Z);
    tram_records *rec = stations(&r, TRAM_SETUP_EYE_IN_HAND, 20, &X, &Z);
    tram_solution *s;
    tram_error e;
    assert_int_equal(tram_solve(rec, TRAM_SETUP_EYE_IN_HAND, NULL, &s, &e), TRAM_OK);
    char *text;
    assert_int_equal(tram_solution_to_json(s, rec, "auto", 1, &text, &e), TRAM_OK);
    tram_calibration *cal;
    /* newer version */
    cJSON *j = cJSON_Parse(text);
    cJSON_ReplaceItemInObject(j, "version", cJSON_CreateNumber(2));
    char *t2 = cJSON_Print(j);
    assert_int_equal(tram_calibration_read_buffer("c.json", t2, strlen(t2), &cal, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "newer"));
    free(t2);
    /* damaged: a second document after the first (text after the JSON) */
    size_t tl = strlen(text);
    char *twice = malloc(2 * tl + 1);
    memcpy(twice, text, tl);
    memcpy(twice + tl, text, tl + 1);
    assert_int_equal(tram_calibration_read_buffer("c.json", twice, 2 * tl, &cal, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "damaged calibration file: text after the JSON document"));
    assert_true(e.line > 1 && e.column == 1);
    free(twice);
    /* damaged: truncated */
    assert_int_equal(tram_calibration_read_buffer("c.json", text, strlen(text) / 2, &cal, &e),
                     TRAM_EINPUT);
    assert_non_null(strstr(e.message, "damaged"));
    assert_true(e.line > 0);
    /* a transform that is not rigid */
    cJSON_ReplaceItemInObject(j, "version", cJSON_CreateNumber(1));
    cJSON *m = cJSON_GetObjectItem(
        cJSON_GetObjectItem(cJSON_GetObjectItem(j, "transforms"), "T_flange_sensor"), "matrix");
    cJSON_ReplaceItemInArray(cJSON_GetArrayItem(m, 0), 0, cJSON_CreateNumber(2.0));
    t2 = cJSON_Print(j);
    assert_int_equal(tram_calibration_read_buffer("c.json", t2, strlen(t2), &cal, &e), TRAM_EINPUT);
    free(t2);
    cJSON_Delete(j);
    /* a damaged residual table */
    j = cJSON_Parse(text);
    cJSON *row = cJSON_GetArrayItem(
        cJSON_GetObjectItem(cJSON_GetObjectItem(j, "residuals"), "stations"), 3);
    cJSON_ReplaceItemInObject(row, "translation", cJSON_CreateString("0.2"));
    t2 = cJSON_Print(j);
    assert_int_equal(tram_calibration_read_buffer("c.json", t2, strlen(t2), &cal, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "residuals.stations[3]"));
    free(t2);
    cJSON_Delete(j);
    /* a record file of the other setup */
    assert_int_equal(tram_calibration_read_buffer("c.json", text, strlen(text), &cal, &e), TRAM_OK);
    /* the residual table as solve wrote it */
    assert_int_equal(cal->nresiduals, 20);
    for (size_t i = 0; i < 20; i++) {
        assert_string_equal(cal->residuals[i].station, rec->stations[i].id);
        assert_true(fabs(cal->residuals[i].translation - s->stations[i].trans) < 1e-9);
        assert_int_equal(cal->residuals[i].outlier, s->stations[i].outlier);
    }
    rec->setup = TRAM_SETUP_EYE_TO_HAND;
    tram_check_result *res;
    assert_int_equal(tram_check(cal, rec, NULL, &res, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "declare setup eye-to-hand"));
    tram_calibration_destroy(cal);
    tram_calibration_destroy(NULL);
    free(text);
    tram_solution_destroy(s);
    tram_records_destroy(rec);
}

/* input.pixels: the other input files of a pixel solve, optional (a
 * pose calibration has none), each entry named at file:line:column when
 * damaged. */
static void test_calibration_pixel_inputs(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("check pixel inputs", 9011);
    tram_se3 X, Z;
    truth(&r, TRAM_SETUP_EYE_IN_HAND, &X, &Z);
    tram_calibration *cal = calibrate(&r, TRAM_SETUP_EYE_IN_HAND, &X, &Z);
    assert_int_equal(cal->npixel_inputs, 0);
    tram_calibration_destroy(cal);
    tram_records *rec = stations(&r, TRAM_SETUP_EYE_IN_HAND, 20, &X, &Z);
    tram_solution *s;
    tram_error e;
    assert_int_equal(tram_solve(rec, TRAM_SETUP_EYE_IN_HAND, NULL, &s, &e), TRAM_OK);
    char *text;
    assert_int_equal(tram_solution_to_json(s, rec, "auto", 1, &text, &e), TRAM_OK);
    cJSON *j = cJSON_Parse(text);
    cJSON *px = cJSON_AddObjectToObject(cJSON_GetObjectItem(j, "input"), "pixels");
    cJSON *o = cJSON_AddObjectToObject(px, "observations");
    cJSON_AddStringToObject(o, "source", "obs.csv");
    cJSON_AddStringToObject(o, "checksum_fnv1a64", "0123456789abcdef");
    o = cJSON_AddObjectToObject(px, "model");
    cJSON_AddStringToObject(o, "source", "model.csv");
    char *t2 = cJSON_Print(j);
    if (tram_calibration_read_buffer("c.json", t2, strlen(t2), &cal, &e) != TRAM_OK)
        fail_msg("%s", e.message);
    assert_int_equal(cal->npixel_inputs, 2);
    assert_string_equal(cal->pixel_inputs[0].key, "observations");
    assert_string_equal(cal->pixel_inputs[0].source, "obs.csv");
    assert_string_equal(cal->pixel_inputs[0].checksum, "0123456789abcdef");
    assert_string_equal(cal->pixel_inputs[1].key, "model");
    assert_string_equal(cal->pixel_inputs[1].source, "model.csv");
    assert_string_equal(cal->pixel_inputs[1].checksum, "");
    tram_calibration_destroy(cal);
    free(t2);
    /* damaged: an entry that is not an object, one without a source, a bad checksum */
    cJSON_AddStringToObject(px, "camera", "cam.json");
    t2 = cJSON_Print(j);
    assert_int_equal(tram_calibration_read_buffer("c.json", t2, strlen(t2), &cal, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "input.pixels.camera must be an object"));
    assert_true(e.line > 1 && e.column > 0);
    free(t2);
    cJSON_DeleteItemFromObject(px, "camera");
    cJSON_DeleteItemFromObject(cJSON_GetObjectItem(px, "model"), "source");
    t2 = cJSON_Print(j);
    assert_int_equal(tram_calibration_read_buffer("c.json", t2, strlen(t2), &cal, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "input.pixels.model: expected a non-empty \"source\""));
    assert_true(e.line > 1 && e.column > 0);
    free(t2);
    cJSON_DeleteItemFromObject(px, "model");
    cJSON_ReplaceItemInObject(cJSON_GetObjectItem(px, "observations"), "checksum_fnv1a64",
                              cJSON_CreateString("0123"));
    t2 = cJSON_Print(j);
    assert_int_equal(tram_calibration_read_buffer("c.json", t2, strlen(t2), &cal, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "input.pixels.observations.checksum_fnv1a64: expected 16"));
    assert_true(e.line > 1 && e.column > 0);
    free(t2);
    cJSON_Delete(j);
    free(text);
    tram_solution_destroy(s);
    tram_records_destroy(rec);
}

static void test_json_and_history(void **state)
{
    (void)state;
    test_rng r = test_rng_seeded("check json", 9008);
    tram_se3 X, Z;
    truth(&r, TRAM_SETUP_EYE_IN_HAND, &X, &Z);
    tram_calibration *cal = calibrate(&r, TRAM_SETUP_EYE_IN_HAND, &X, &Z);
    tram_records *rec = stations(&r, TRAM_SETUP_EYE_IN_HAND, 6, &X, &Z);
    tram_check_result *res = run_check(cal, rec, NULL);
    char *text;
    tram_error e;
    assert_int_equal(tram_check_result_to_json(res, rec, 0, NULL, &text, &e), TRAM_OK);
    cJSON *j = cJSON_Parse(text);
    assert_string_equal(cJSON_GetObjectItem(j, "verdict")->valuestring, "ok");
    cJSON *c = cJSON_GetObjectItem(j, "change");
    const char *keys[] = {"frame", "translation", "rotation_deg", "translation_norm",
                          "rotation_angle_deg"};
    for (size_t i = 0; i < 5; i++) assert_non_null(cJSON_GetObjectItem(c, keys[i]));
    assert_int_equal(cJSON_GetArraySize(cJSON_GetObjectItem(j, "stations")), 6);
    cJSON_Delete(j);
    free(text);
    assert_int_equal(tram_check_result_to_json(res, rec, 1, "2026-12-01T00:00:00Z", &text, &e),
                     TRAM_OK);
    assert_null(strchr(text, '\n')); /* one line */
    j = cJSON_Parse(text);
    assert_string_equal(cJSON_GetObjectItem(j, "timestamp_utc")->valuestring,
                        "2026-12-01T00:00:00Z");
    cJSON_Delete(j);
    /* The line reads back through the history reader. 2026-12-01T00:00:00Z
     * is 1,796,083,200 s after the epoch (20,788 days; Python
     * datetime(2026,12,1,tzinfo=timezone.utc).timestamp()). */
    char two[4096];
    snprintf(two, sizeof two, "%s\n\n%s\r\n", text, text);
    tram_check_history *h;
    assert_int_equal(tram_check_history_read_buffer("h.jsonl", two, strlen(two), &h, &e), TRAM_OK);
    assert_int_equal(h->n, 2);
    assert_int_equal(h->line[1], 3);
    assert_true(h->time_s[0] == 1796083200.0);
    assert_int_equal(h->verdict[0], res->verdict);
    assert_int_equal(h->length_unit, TRAM_LENGTH_MM);
    assert_true(fabs(h->translation_norm[0] - res->sensor.translation_norm) < 1e-12 ||
                fabs(h->translation_norm[0] - res->target.translation_norm) < 1e-12);
    tram_check_history_destroy(h);
    tram_check_history_destroy(NULL);
    free(text);
    tram_check_result_destroy(res);
    tram_records_destroy(rec);
    tram_calibration_destroy(cal);
}

/* History files that must be refused, each with the line and what is expected. */
static void test_history_refused(void **state)
{
    (void)state;
    const char *good = "{\"timestamp_utc\":\"2026-12-01T22:40:00Z\",\"verdict\":\"ok\","
                       "\"length_unit\":\"m\",\"change\":{\"translation_norm\":0.001,"
                       "\"rotation_angle_deg\":0.01}}\n";
    static const struct {
        const char *line, *expect;
        long col;
    } bad[] = {
        {"{\"timestamp_utc\":\"2026-13-01T22:40:00Z\",\"verdict\":\"ok\"}", "timestamp_utc", 0},
        {"{\"timestamp_utc\":\"2026-12-01 22:40:00\",\"verdict\":\"ok\"}", "timestamp_utc", 0},
        {"{\"timestamp_utc\":\"2026-02-29T22:40:00Z\",\"verdict\":\"ok\"}", "timestamp_utc", 0},
        {"{\"timestamp_utc\":\"2026-12-01T22:40:00Z\",\"verdict\":\"fine\"}", "verdict", 0},
        {"{\"timestamp_utc\":\"2026-12-01T22:40:00Z\",\"verdict\":\"ok\",\"change\":{}}",
         "length_unit", 0},
        {"{\"timestamp_utc\":\"2026-12-01T22:40:00Z\",\"verdict\":\"ok\",\"length_unit\":\"mm\","
         "\"change\":{\"translation_norm\":-1,\"rotation_angle_deg\":0}}",
         "translation_norm", 0},
        {"{\"timestamp_utc\": 5} trailing", "one JSON object per line", 22},
        {"[1, 2", "one JSON object per line", 0},
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        char text[1024];
        snprintf(text, sizeof text, "%s%s\n", good, bad[i].line);
        tram_check_history *h = (tram_check_history *)1;
        tram_error e;
        assert_int_equal(tram_check_history_read_buffer("h.jsonl", text, strlen(text), &h, &e),
                         TRAM_EINPUT);
        assert_null(h);
        assert_int_equal(e.line, 2);
        if (bad[i].col) assert_int_equal(e.column, bad[i].col);
        if (!strstr(e.message, bad[i].expect)) fail_msg("case %zu: %s", i, e.message);
    }
    /* Units are converted to the first line's (m), never assumed. */
    char mixed[1024];
    snprintf(mixed, sizeof mixed, "%s%s", good,
             "{\"timestamp_utc\":\"2026-12-02T00:00:00Z\",\"verdict\":\"sensor-moved\","
             "\"length_unit\":\"mm\",\"change\":{\"translation_norm\":2.5,"
             "\"rotation_angle_deg\":0.2}}");
    tram_check_history *h;
    tram_error e;
    assert_int_equal(tram_check_history_read_buffer("h.jsonl", mixed, strlen(mixed), &h, &e), TRAM_OK);
    assert_int_equal(h->length_unit, TRAM_LENGTH_M);
    assert_true(fabs(h->translation_norm[1] - 0.0025) < 1e-15);
    assert_int_equal(h->verdict[1], TRAM_VERDICT_SENSOR_MOVED);
    assert_true(h->time_s[1] - h->time_s[0] == 4800.0);
    tram_check_history_destroy(h);
    /* a leap day: 2028-02-29T00:00:00Z is 1,835,395,200 s after the epoch
     * (Python datetime(2028,2,29,tzinfo=timezone.utc).timestamp()) */
    const char *leap = "{\"timestamp_utc\":\"2028-02-29T00:00:00Z\",\"verdict\":\"ok\","
                       "\"length_unit\":\"mm\",\"change\":{\"translation_norm\":0,"
                       "\"rotation_angle_deg\":0}}";
    assert_int_equal(tram_check_history_read_buffer("h.jsonl", leap, strlen(leap), &h, &e), TRAM_OK);
    assert_true(h->time_s[0] == 1835395200.0);
    tram_check_history_destroy(h);
    assert_int_equal(tram_check_history_read_buffer("h.jsonl", "\n \n", 3, &h, &e), TRAM_EINPUT);
    assert_non_null(strstr(e.message, "no check"));
    assert_int_equal(tram_verdict_parse("target-moved"), TRAM_VERDICT_TARGET_MOVED);
    assert_int_equal(tram_verdict_parse("moved"), -1);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_false_alarms),
        cmocka_unit_test(test_sensor_moved_eye_in_hand),
        cmocka_unit_test(test_target_moved_eye_in_hand),
        cmocka_unit_test(test_sensor_moved_eye_to_hand),
        cmocka_unit_test(test_target_moved_eye_to_hand),
        cmocka_unit_test(test_single_station),
        cmocka_unit_test(test_calibration_refused),
        cmocka_unit_test(test_calibration_pixel_inputs),
        cmocka_unit_test(test_json_and_history), cmocka_unit_test(test_history_refused)};
    return cmocka_run_group_tests(tests, NULL, NULL);
}
