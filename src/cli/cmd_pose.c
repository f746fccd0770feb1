/*
 * cmd_pose.c - "tram pose": the target's pose in every image of a
 * pixel-observation file (tram/pose.h: Zhang 2000's homography or EPnP,
 * then Levenberg-Marquardt on the reprojection error), written as a record
 * file's sensor_ block (T_sensor_target, target-in-sensor), optionally
 * joined with the robot poses of another record file so that `tram solve`
 * can read it directly.
 */
#include "cli.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

const char cli_pose_help[] =
    "usage: tram pose --camera FILE (--board FILE | --model FILE) [OPTIONS] PIXELS\n\n"
    "Finds the target's pose in each station's image from its pixels (a tram-pixels-1\n"
    "file, docs/pixels.md): T_sensor_target, the target frame in the camera frame.\n"
    "Output: a record file (docs/records.md) with sensor_ columns (x, y, z in the\n"
    "length unit, then the quaternion qw, qx, qy, qz) and, per station, a comment\n"
    "with the reprojection RMS in pixels.\n\n"
    "options:\n"
    "  --camera FILE     the camera file (tram-camera, docs/camera.md)\n"
    "  --board FILE      the board file: point ids are corner ids r*cols+c\n"
    "  --model FILE      or a model file (point,x,y,z in the target frame)\n"
    "  --robot FILE      a record file with the robot poses of the stations: its\n"
    "                    robot_ columns are copied beside the sensor_ columns\n"
    "  --length-unit U   unit of the output lengths (default: the board's unit, or\n"
    "                    the robot file's; mm for a model without --robot)\n"
    "  -o FILE           write the record file atomically (default: standard output)\n"
    "  --force           allow -o to replace an existing file\n\n"
    "examples (from the top of the source tree):\n"
    "  tram pose --camera tests/cli/data/pixels/camera.json --board tests/cli/data/pixels/board.json tests/cli/data/pixels/pixels.csv\n"
    "\n"
    "exit status: 0 every pose found; 2 usage or input error; 3 a view whose pose\n"
    "cannot be found (fewer than 4 corners, corners on one line).\n";

typedef struct pose_args {
    const char *pixels, *camera, *board, *model, *robot, *out;
    tram_length_unit unit;
    int force;
} pose_args;

static int parse_args(int argc, char **argv, pose_args *a)
{
    memset(a, 0, sizeof *a);
    int bad = 0;
    const char *v = NULL;
    for (int i = 1; i < argc; i++) {
        if (cli_take(argc, argv, &i, "--camera", &a->camera, &bad)) {
        } else if (cli_take(argc, argv, &i, "--board", &a->board, &bad)) {
        } else if (cli_take(argc, argv, &i, "--model", &a->model, &bad)) {
        } else if (cli_take(argc, argv, &i, "--robot", &a->robot, &bad)) {
        } else if (cli_take(argc, argv, &i, "-o", &a->out, &bad)) {
        } else if (cli_take(argc, argv, &i, "--length-unit", &v, &bad)) {
            if (bad) break;
            a->unit = tram_unit_length_parse(v);
            if (a->unit == TRAM_LENGTH_UNSET)
                return cli_usage_error("pose", "--length-unit '%s': expected mm, cm, m or in", v);
        } else if (cli_flag(argv, i, "--force")) {
            a->force = 1;
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            return cli_usage_error("pose", "unknown option '%s'", argv[i]);
        } else if (a->pixels) {
            return cli_usage_error("pose", "one pixel file expected, got '%s' and '%s'", a->pixels, argv[i]);
        } else {
            a->pixels = argv[i];
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (!a->pixels) return cli_usage_error("pose", "no pixel-observation file");
    if (!a->camera) return cli_usage_error("pose", "--camera FILE is required");
    if (!a->board == !a->model) return cli_usage_error("pose", "give one of --board FILE and --model FILE");
    return CLI_EXIT_OK;
}

/* Append to a growing text; returns -1 when memory runs out. */
typedef struct text {
    char *s;
    size_t len, cap;
} text;

static int tprintf(text *t, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;
static int tprintf(text *t, const char *fmt, ...)
{
    for (;;) {
        va_list ap;
        va_start(ap, fmt);
        int k = vsnprintf(t->s ? t->s + t->len : NULL, t->s ? t->cap - t->len : 0, fmt, ap);
        va_end(ap);
        if (k < 0) return -1;
        if (t->s && t->len + (size_t)k < t->cap) {
            t->len += (size_t)k;
            return 0;
        }
        size_t nc = (t->cap ? t->cap * 2 : 4096) + (size_t)k;
        char *ns = realloc(t->s, nc);
        if (!ns) return -1;
        t->s = ns;
        t->cap = nc;
    }
}

static long station_line(const tram_pixel_obs *o, size_t s)
{
    for (size_t i = 0; i < o->n; i++)
        if (o->station[i] == s) return o->line[i];
    return 0;
}

/* The output text: directives, header, per station a comment and a row. */
static int write_text(const pose_args *a, const tram_pixel_obs *obs, const tram_records *rob,
                      const size_t *rob_idx, const tram_pose_result *res, tram_length_unit unit,
                      text *t)
{
    int rc = 0;
    rc |= tprintf(t, "# format: tram-records-1\n# length-unit: %s\n", tram_unit_length_name(unit));
    if (rob) rc |= tprintf(t, "# robot-pose: flange-in-base\n");
    rc |= tprintf(t, "# sensor-pose: target-in-sensor\n");
    if (rob && rob->setup != TRAM_SETUP_UNSET) rc |= tprintf(t, "# setup: %s\n", tram_setup_name(rob->setup));
    rc |= tprintf(t, "# Written by tram pose from %s with camera %s and %s %s.\n", a->pixels,
                  a->camera, a->board ? "board" : "model", a->board ? a->board : a->model);
    rc |= tprintf(t, "# Sensor columns: T_sensor_target (target frame in the camera frame); "
                     "quaternion scalar first.\n");
    rc |= tprintf(t, "station");
    if (rob)
        rc |= tprintf(t, ",robot_x,robot_y,robot_z,robot_r11,robot_r12,robot_r13,robot_r21,"
                         "robot_r22,robot_r23,robot_r31,robot_r32,robot_r33");
    rc |= tprintf(t, ",sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz\n");
    for (size_t s = 0; s < obs->nstations; s++) {
        const tram_pose_result *p = &res[s];
        rc |= tprintf(t, "# Station %s: reprojection RMS %.4f px, max %.4f px, %zu corners, %s start\n",
                      obs->station_id[s], p->rms_px, p->max_px, p->n,
                      p->planar ? "homography" : "EPnP");
        rc |= tprintf(t, "%s", obs->station_id[s]);
        if (rob) {
            const tram_se3 *T = &rob->stations[rob_idx[s]].T_base_flange;
            double f = tram_unit_length_factor(rob->length_unit, unit);
            rc |= tprintf(t, ",%.17g,%.17g,%.17g", T->m[0][3] * f, T->m[1][3] * f, T->m[2][3] * f);
            for (int i = 0; i < 3; i++)
                for (int j = 0; j < 3; j++) rc |= tprintf(t, ",%.17g", T->m[i][j]);
        }
        tram_mat3 R;
        double tr[3];
        tram_quat_wxyz q;
        tram_se3_to_rt(&p->T_sensor_target, &R, tr);
        tram_quat_wxyz_from_mat3(&R, &q);
        rc |= tprintf(t, ",%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g\n", tr[0], tr[1], tr[2], q.w,
                      q.x, q.y, q.z);
    }
    return rc;
}

/* Each observed station's index in the robot records, or an error. */
static int match_robot(const tram_pixel_obs *obs, const tram_records *rob, size_t *idx)
{
    for (size_t s = 0; s < obs->nstations; s++) {
        size_t i;
        for (i = 0; i < rob->count; i++)
            if (strcmp(rob->stations[i].id, obs->station_id[s]) == 0) break;
        if (i == rob->count) {
            fprintf(stderr, "%s:%ld: error: station '%s' has pixels but no robot pose in %s\n",
                    obs->source, station_line(obs, s), obs->station_id[s], rob->source);
            return CLI_EXIT_USAGE;
        }
        idx[s] = i;
    }
    return CLI_EXIT_OK;
}

/* Poses of every station; 3 (and the station named) when one fails. */
static int all_poses(const tram_camera *cam, const tram_pixel_obs *obs, const double *xyz,
                     tram_pose_result *res)
{
    double *px = malloc((obs->n ? obs->n : 1) * 3 * sizeof *px), *pu = malloc((obs->n ? obs->n : 1) * 2 * sizeof *pu);
    int rc = CLI_EXIT_OK;
    if (!px || !pu) rc = cli_usage_error("pose", "out of memory");
    for (size_t s = 0; rc == CLI_EXIT_OK && s < obs->nstations; s++) {
        size_t k = 0;
        for (size_t i = 0; i < obs->n; i++)
            if (obs->station[i] == s) {
                memcpy(px + 3 * k, xyz + 3 * i, 3 * sizeof *px);
                memcpy(pu + 2 * k, obs->uv + 2 * i, 2 * sizeof *pu);
                k++;
            }
        tram_error err;
        tram_error_clear(&err);
        tram_status st = tram_pose_from_pixels(cam, px, pu, k, &res[s], &err);
        if (st != TRAM_OK) {
            fprintf(stderr, "%s:%ld: error: station '%s': %s\n", obs->source, station_line(obs, s),
                    obs->station_id[s], err.message);
            rc = cli_exit_for(st);
        }
    }
    free(px);
    free(pu);
    return rc;
}

int cli_pose(int argc, char **argv)
{
    pose_args a;
    int rc = parse_args(argc, argv, &a);
    if (rc != CLI_EXIT_OK) return rc;
    tram_error err;
    tram_error_clear(&err);
    tram_pixel_obs *obs = NULL;
    tram_records *rob = NULL;
    tram_point_model *mdl = NULL;
    tram_camera cam;
    tram_board board;
    double *xyz = NULL;
    size_t *rob_idx = NULL;
    tram_pose_result *res = NULL;
    text t = {0};
    tram_status st = tram_pixel_obs_read_file(a.pixels, &obs, &err);
    if (st == TRAM_OK) st = tram_camera_read_file(a.camera, &cam, NULL, &err);
    if (st == TRAM_OK && a.robot) {
        tram_read_options ro;
        memset(&ro, 0, sizeof ro);
        st = tram_records_read_file(a.robot, &ro, &rob, &err);
        if (st == TRAM_OK) cli_records_warnings(rob);
        if (st == TRAM_OK && !rob->has_block[TRAM_BLOCK_ROBOT]) {
            fprintf(stderr, "%s: error: --robot: the file has no robot_ pose columns\n", a.robot);
            rc = CLI_EXIT_USAGE;
            goto out;
        }
    }
    if (st != TRAM_OK) goto fail;
    tram_length_unit unit = a.unit ? a.unit : rob ? rob->length_unit : TRAM_LENGTH_MM;
    if (a.board) {
        if ((st = tram_board_read_file(a.board, &board, &err)) != TRAM_OK) goto fail;
        if (!a.unit && !rob) unit = board.unit;
        st = tram_pixel_target_from_board(obs, &board, unit, &xyz, &err);
    } else {
        tram_records units;
        memset(&units, 0, sizeof units);
        units.length_unit = unit;
        if ((st = tram_point_model_read_file(a.model, &units, &mdl, &err)) == TRAM_OK)
            st = tram_pixel_target_from_model(obs, mdl, &xyz, &err);
    }
    if (st != TRAM_OK) goto fail;
    if (cam.width && cam.height && (cam.width != obs->width || cam.height != obs->height)) {
        fprintf(stderr, "%s:%ld: error: image size %zux%zu, but the camera %s is for %zux%zu images\n",
                obs->source, obs->image_size_line, obs->width, obs->height, a.camera, cam.width,
                cam.height);
        rc = CLI_EXIT_USAGE;
        goto out;
    }
    rob_idx = calloc(obs->nstations ? obs->nstations : 1, sizeof *rob_idx);
    res = calloc(obs->nstations ? obs->nstations : 1, sizeof *res);
    if (!rob_idx || !res) {
        rc = cli_usage_error("pose", "out of memory");
        goto out;
    }
    if (rob && (rc = match_robot(obs, rob, rob_idx)) != CLI_EXIT_OK) goto out;
    if ((rc = all_poses(&cam, obs, xyz, res)) != CLI_EXIT_OK) goto out;
    if (write_text(&a, obs, rob, rob_idx, res, unit, &t) != 0) {
        rc = cli_usage_error("pose", "out of memory");
        goto out;
    }
    if (a.out) {
        if (tram_file_write_atomic(a.out, t.s, t.len, a.force, &err) != TRAM_OK) {
            cli_report(&err);
            rc = CLI_EXIT_USAGE;
            goto out;
        }
        double worst = 0;
        for (size_t s = 0; s < obs->nstations; s++) worst = fmax(worst, res[s].rms_px);
        printf("tram pose: %zu station(s) from %s, target poses (T_sensor_target, %s) written to "
               "%s; worst station reprojection RMS %.4f px\n",
               obs->nstations, a.pixels, tram_unit_length_name(unit), a.out, worst);
    } else {
        fwrite(t.s, 1, t.len, stdout);
    }
    goto out;
fail:
    cli_report(&err);
    rc = cli_exit_for(st);
out:
    free(t.s);
    free(res);
    free(rob_idx);
    tram_pixel_target_free(xyz);
    tram_point_model_destroy(mdl);
    tram_records_destroy(rob);
    tram_pixel_obs_destroy(obs);
    return rc;
}
