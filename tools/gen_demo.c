/*
 * gen_demo.c - generates the demo record files of datasets/demo from a
 * fixed seed.  The scenario is invented for the demo: a packaging cell with
 * a six-axis arm, a wrist camera (eye-in-hand) looking at a calibration
 * board fixed on the infeed table, and an overhead camera (eye-to-hand)
 * looking at a board carried on the flange.  Noise levels are typical of
 * such cells: robot 0.01 deg / 0.05 mm, camera 0.05 deg / 0.2 mm per axis.
 * The ground truth is written beside the records.
 *
 * Usage: gen_demo OUTDIR [ARM_CHAIN.json] (default OUTDIR/arm_dh.json, the
 * hand-written chain of the invented arm).  make regenerates nothing by
 * itself; the generated files are committed, and a test checks they match.
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tram/tram.h"

#define PI 3.14159265358979323846
#define DEG (PI / 180.0)

static uint64_t rng_state = 20261201;

static double uniform(void)
{
    uint64_t z = (rng_state += 0x9E3779B97F4A7C15ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    z ^= z >> 31;
    return (double)(z >> 11) * (1.0 / 9007199254740992.0);
}

static double normal(void)
{
    double u1 = uniform(), u2 = uniform();
    if (u1 < 1e-300) u1 = 1e-300;
    return sqrt(-2.0 * log(u1)) * cos(2.0 * PI * u2);
}

static void pose_from(const double rv_deg[3], const double t[3], tram_se3 *T)
{
    double w[3] = {rv_deg[0] * DEG, rv_deg[1] * DEG, rv_deg[2] * DEG};
    tram_mat3 R;
    tram_so3_exp(w, &R);
    tram_se3_from_rt(&R, t, T);
}

/* Perturb T on the right by noise of the given per-axis sigmas. */
static void add_noise(tram_se3 *T, double sig_deg, double sig_len)
{
    double w[3] = {normal() * sig_deg * DEG, normal() * sig_deg * DEG, normal() * sig_deg * DEG};
    tram_mat3 R, E;
    double t[3];
    tram_se3_to_rt(T, &R, t);
    tram_so3_exp(w, &E);
    tram_so3_mul(&R, &E, &R);
    for (int i = 0; i < 3; i++) t[i] += normal() * sig_len;
    tram_se3_from_rt(&R, t, T);
}

/* A camera pose looking from `eye` at `at`, rolled by roll_deg. */
static void look_at(const double eye[3], const double at[3], double roll_deg, tram_se3 *T)
{
    double z[3] = {at[0] - eye[0], at[1] - eye[1], at[2] - eye[2]};
    double n = sqrt(z[0] * z[0] + z[1] * z[1] + z[2] * z[2]);
    for (int i = 0; i < 3; i++) z[i] /= n;
    double up[3] = {0, 0, 1};
    if (fabs(z[2]) > 0.95) up[0] = 1, up[2] = 0;
    double x[3] = {up[1] * z[2] - up[2] * z[1], up[2] * z[0] - up[0] * z[2],
                   up[0] * z[1] - up[1] * z[0]};
    n = sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]);
    for (int i = 0; i < 3; i++) x[i] /= n;
    double y[3] = {z[1] * x[2] - z[2] * x[1], z[2] * x[0] - z[0] * x[2], z[0] * x[1] - z[1] * x[0]};
    tram_mat3 R, Rr;
    for (int i = 0; i < 3; i++) {
        R.m[i][0] = x[i];
        R.m[i][1] = y[i];
        R.m[i][2] = z[i];
    }
    tram_so3_axis_rotation(2, roll_deg * DEG, &Rr);
    tram_so3_mul(&R, &Rr, &R);
    tram_se3_from_rt(&R, eye, T);
}

static void write_quat(FILE *f, const tram_se3 *T, double lscale)
{
    tram_mat3 R;
    double t[3];
    tram_quat_wxyz q;
    tram_se3_to_rt(T, &R, t);
    tram_quat_wxyz_from_mat3(&R, &q);
    fprintf(f, ",%.4f,%.4f,%.4f,%.8f,%.8f,%.8f,%.8f", t[0] * lscale, t[1] * lscale,
            t[2] * lscale, q.w, q.x, q.y, q.z);
}

static void write_euler(FILE *f, const tram_se3 *T)
{
    tram_mat3 R;
    double t[3], e[3];
    tram_se3_to_rt(T, &R, t);
    tram_euler_from_mat3(TRAM_EULER_ZYX_INTRINSIC, &R, e);
    fprintf(f, ",%.3f,%.3f,%.3f,%.4f,%.4f,%.4f", t[0], t[1], t[2], e[0] / DEG, e[1] / DEG,
            e[2] / DEG);
}

static void write_rotvec_m(FILE *f, const tram_se3 *T)
{
    tram_mat3 R;
    double t[3], w[3];
    tram_se3_to_rt(T, &R, t);
    tram_so3_log(&R, w);
    fprintf(f, ",%.6f,%.6f,%.6f,%.5f,%.5f,%.5f", t[0] / 1000.0, t[1] / 1000.0, t[2] / 1000.0,
            w[0] / DEG, w[1] / DEG, w[2] / DEG);
}

static void json_pose(FILE *f, const char *name, const tram_se3 *T, int last)
{
    fprintf(f, "    \"%s\": [", name);
    for (int i = 0; i < 4; i++)
        fprintf(f, "%s[%.17g, %.17g, %.17g, %.17g]", i ? ", " : "", T->m[i][0], T->m[i][1],
                T->m[i][2], T->m[i][3]);
    fprintf(f, "]%s\n", last ? "" : ",");
}

static const char wrist_header[] =
    "# format: tram-records-1\n# setup: eye-in-hand\n# length-unit: mm\n"
    "# angle-unit: deg\n# robot-euler: zyx-intrinsic\n# robot-pose: flange-in-base\n"
    "# sensor-pose: target-in-sensor\n"
    "station,robot_x,robot_y,robot_z,robot_e1,robot_e2,robot_e3,"
    "sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz\n";

/* Wrist-camera stations looking at the board from above at varied angles;
 * station `bad` (1-based, 0 for none) gets a gross detection error.  With
 * T_flange_tool the robot poses are logged as tool (TCP) poses. */
static int write_wrist_tool(const char *dir, const char *name, char prefix, const char *comment,
                            const tram_se3 *T_flange_sensor, const tram_se3 *T_base_target, int n,
                            int bad, const tram_se3 *T_flange_tool)
{
    char path[1024];
    snprintf(path, sizeof path, "%s/%s", dir, name);
    FILE *f = fopen(path, "w");
    if (!f) return 1;
    fputs(comment, f);
    if (!T_flange_tool) {
        fputs(wrist_header, f);
    } else {
        static const char flange_line[] = "# robot-pose: flange-in-base\n";
        const char *at = strstr(wrist_header, flange_line);
        fwrite(wrist_header, 1, (size_t)(at - wrist_header), f);
        fputs("# robot-pose: tool-in-base\n", f);
        fputs(at + strlen(flange_line), f);
    }
    double board[3] = {T_base_target->m[0][3], T_base_target->m[1][3], T_base_target->m[2][3]};
    for (int i = 1; i <= n; i++) {
        double az = uniform() * 2 * PI, el = (45 + 35 * uniform()) * DEG,
               d = 380 + 200 * uniform();
        double eye[3] = {board[0] + d * cos(el) * cos(az), board[1] + d * cos(el) * sin(az),
                         board[2] + d * sin(el)};
        double at[3] = {board[0] + 60 * (uniform() - 0.5), board[1] + 60 * (uniform() - 0.5),
                        board[2]};
        tram_se3 Ts, Xi, Tf, Ts_inv, St;
        look_at(eye, at, -40 + 80 * uniform(), &Ts);
        tram_se3_invert(T_flange_sensor, &Xi);
        tram_se3_compose(&Ts, &Xi, &Tf);
        tram_se3_invert(&Ts, &Ts_inv);
        tram_se3_compose(&Ts_inv, T_base_target, &St);
        add_noise(&Tf, 0.01, 0.05);
        add_noise(&St, 0.05, 0.2);
        if (i == bad) add_noise(&St, 1.5, 6.0); /* the bad detection */
        fprintf(f, "%c%02d", prefix, i);
        if (T_flange_tool) tram_se3_compose(&Tf, T_flange_tool, &Tf); /* the TCP's pose */
        write_euler(f, &Tf);
        write_quat(f, &St, 1.0);
        fprintf(f, "\n");
    }
    fclose(f);
    return 0;
}

static int write_wrist(const char *dir, const char *name, char prefix, const char *comment,
                       const tram_se3 *T_flange_sensor, const tram_se3 *T_base_target, int n,
                       int bad)
{
    return write_wrist_tool(dir, name, prefix, comment, T_flange_sensor, T_base_target, n, bad,
                            NULL);
}

int main(int argc, char **argv)
{
    if (argc != 2 && argc != 3) {
        fprintf(stderr, "usage: gen_demo OUTDIR [ARM_CHAIN.json]\n");
        return 2;
    }
    char path[1024];
    /* Wrist camera: 80 mm ahead of the flange, 40 mm off-axis, tilted 8 deg. */
    tram_se3 T_flange_sensor, T_base_target, T_base_sensor, T_flange_target;
    pose_from((double[3]){3.0, -8.0, 91.0}, (double[3]){40.0, -12.0, 80.0}, &T_flange_sensor);
    pose_from((double[3]){0.0, 0.0, 12.0}, (double[3]){720.0, -150.0, 30.0}, &T_base_target);
    /* Overhead camera 1.6 m above the table, looking down; board on the flange. */
    pose_from((double[3]){178.0, 2.0, -4.0}, (double[3]){650.0, 250.0, 1600.0}, &T_base_sensor);
    pose_from((double[3]){0.0, 0.0, 45.0}, (double[3]){0.0, 10.0, 25.0}, &T_flange_target);

    if (write_wrist(argv[1], "wrist_camera.csv", 'p',
                    "# Demo: wrist camera on a packaging-cell arm (invented scenario, made by\n"
                    "# tools/gen_demo.c with a fixed seed). The board is fixed on the infeed table.\n"
                    "# Station p14 is a bad detection (the board was partly covered).\n",
                    &T_flange_sensor, &T_base_target, 20, 14))
        return 1;
    snprintf(path, sizeof path, "%s/overhead_camera.csv", argv[1]);
    FILE *f = fopen(path, "w");
    if (!f) return 1;
    fprintf(f, "# Demo: overhead camera above the packaging cell (invented scenario, made by\n"
               "# tools/gen_demo.c). The board rides on the flange; the camera reports metres.\n"
               "# format: tram-records-1\n# setup: eye-to-hand\n# length-unit: mm\n"
               "# sensor-length-unit: m\n# angle-unit: deg\n"
               "station,robot_x,robot_y,robot_z,robot_qw,robot_qx,robot_qy,robot_qz,"
               "sensor_x,sensor_y,sensor_z,sensor_rx,sensor_ry,sensor_rz\n");
    for (int i = 1; i <= 16; i++) {
        /* Flange over the table, board facing up towards the camera, tilted. */
        double t[3] = {500 + 300 * uniform(), 100 + 300 * uniform(), 350 + 300 * uniform()};
        double rv[3] = {180 + 50 * (uniform() - 0.5), 50 * (uniform() - 0.5),
                        360 * (uniform() - 0.5)};
        tram_se3 Tf, PX, Ts_inv, St;
        pose_from((double[3]){0, 0, rv[2]}, (double[3]){0, 0, 0}, &PX);
        tram_se3 tilt;
        pose_from((double[3]){rv[0], rv[1], 0}, t, &tilt);
        tram_se3_compose(&tilt, &PX, &Tf);
        tram_se3_invert(&T_base_sensor, &Ts_inv);
        tram_se3_compose(&Tf, &T_flange_target, &PX);
        tram_se3_compose(&Ts_inv, &PX, &St);
        add_noise(&Tf, 0.01, 0.05);
        add_noise(&St, 0.05, 0.3);
        fprintf(f, "o%02d", i);
        write_quat(f, &Tf, 1.0);
        write_rotvec_m(f, &St);
        fprintf(f, "\n");
    }
    fclose(f);

    snprintf(path, sizeof path, "%s/truth.json", argv[1]);
    f = fopen(path, "w");
    if (!f) return 1;
    fprintf(f, "{\n  \"comment\": \"ground truth of the invented demo scenario (tools/gen_demo.c)\",\n"
               "  \"length_unit\": \"mm\",\n  \"wrist_camera\": {\n");
    json_pose(f, "T_flange_sensor", &T_flange_sensor, 0);
    json_pose(f, "T_base_target", &T_base_target, 1);
    fprintf(f, "  },\n  \"overhead_camera\": {\n");
    json_pose(f, "T_base_sensor", &T_base_sensor, 0);
    json_pose(f, "T_flange_target", &T_flange_target, 1);
    fprintf(f, "  }\n}\n");
    fclose(f);
    /* Months later: a re-check with nothing moved, and one after the wrist
     * camera's bracket was bumped (0.6 deg about the flange's x axis and
     * 1.2 mm along x, -0.8 mm along z, in the flange frame). */
    if (write_wrist(argv[1], "wrist_recheck.csv", 'r',
                    "# Demo: re-check of the wrist camera, nothing moved (invented scenario).\n",
                    &T_flange_sensor, &T_base_target, 8, 0))
        return 1;
    tram_se3 bump, T_flange_sensor_bumped;
    pose_from((double[3]){0.6, 0.0, 0.0}, (double[3]){0, 0, 0}, &bump);
    tram_se3_compose(&bump, &T_flange_sensor, &T_flange_sensor_bumped);
    T_flange_sensor_bumped.m[0][3] += 1.2;
    T_flange_sensor_bumped.m[2][3] -= 0.8;
    if (write_wrist(argv[1], "wrist_bumped.csv", 'b',
                    "# Demo: re-check after the wrist camera's bracket was bumped (invented\n"
                    "# scenario; the change is in truth.json).\n",
                    &T_flange_sensor_bumped, &T_base_target, 8, 0))
        return 1;
    snprintf(path, sizeof path, "%s/truth_bump.json", argv[1]);
    f = fopen(path, "w");
    if (!f) return 1;
    /* The change as tram check reports it: displacement of the sensor's
     * origin and rotation about it, both in the flange frame. */
    tram_mat3 Ra, Rb, Rbt, D;
    double w[3];
    tram_se3_to_rt(&T_flange_sensor, &Ra, NULL);
    tram_se3_to_rt(&T_flange_sensor_bumped, &Rb, NULL);
    tram_so3_transpose(&Ra, &Rbt);
    tram_so3_mul(&Rb, &Rbt, &D);
    tram_so3_log(&D, w);
    fprintf(f, "{\n  \"comment\": \"the bump of wrist_bumped.csv: change of T_flange_sensor in the "
               "flange frame (origin displacement, rotation about the sensor origin)\",\n");
    fprintf(f, "  \"translation_mm\": [%.6f, %.6f, %.6f],\n",
            T_flange_sensor_bumped.m[0][3] - T_flange_sensor.m[0][3],
            T_flange_sensor_bumped.m[1][3] - T_flange_sensor.m[1][3],
            T_flange_sensor_bumped.m[2][3] - T_flange_sensor.m[2][3]);
    fprintf(f, "  \"rotation_vector_deg\": [%.6f, %.6f, %.6f],\n", w[0] / DEG, w[1] / DEG,
            w[2] / DEG);
    json_pose(f, "T_flange_sensor_bumped", &T_flange_sensor_bumped, 1);
    fprintf(f, "}\n");
    fclose(f);
    /* The same wrist camera on the invented six-axis arm of arm_dh.json,
     * logged as joint readings (deg) instead of flange poses. */
    if (argc > 2) snprintf(path, sizeof path, "%s", argv[2]);
    else snprintf(path, sizeof path, "%s/arm_dh.json", argv[1]);
    tram_chain *arm = NULL;
    tram_error err;
    if (tram_chain_read_file(path, &arm, &err) != TRAM_OK) {
        fprintf(stderr, "gen_demo: %s\n", err.message);
        return 1;
    }
    const double q0[6] = {0, -10, 20, 0, -60, 0};
    tram_se3 F0, Ts0, T_base_board;
    tram_chain_forward(arm, q0, &F0, NULL);
    tram_se3_compose(&F0, &T_flange_sensor, &Ts0);
    tram_se3 ahead;
    pose_from((double[3]){0, 0, 15}, (double[3]){20, -10, 520}, &ahead);
    tram_se3_compose(&Ts0, &ahead, &T_base_board);
    snprintf(path, sizeof path, "%s/wrist_camera_joints.csv", argv[1]);
    f = fopen(path, "w");
    if (!f) return 1;
    fprintf(f, "# Demo: the wrist camera on the invented arm of arm_dh.json, logged as joint\n"
               "# readings (tools/gen_demo.c). Solve with: tram solve --chain arm_dh.json\n"
               "# format: tram-records-1\n# setup: eye-in-hand\n# length-unit: mm\n# angle-unit: deg\n"
               "station,joint_1,joint_2,joint_3,joint_4,joint_5,joint_6,"
               "sensor_x,sensor_y,sensor_z,sensor_qw,sensor_qx,sensor_qy,sensor_qz\n");
    for (int i = 1; i <= 15; i++) {
        double q[6] = {q0[0] + 25 * (uniform() - 0.5), q0[1] + 20 * (uniform() - 0.5),
                       q0[2] + 20 * (uniform() - 0.5), q0[3] + 70 * (uniform() - 0.5),
                       q0[4] + 50 * (uniform() - 0.5), q0[5] + 180 * (uniform() - 0.5)};
        for (int k = 0; k < 6; k++) q[k] = round(q[k] * 1000.0) / 1000.0; /* controller's 0.001 deg */
        tram_se3 F, FX, FXi, St;
        tram_chain_forward(arm, q, &F, NULL);
        tram_se3_compose(&F, &T_flange_sensor, &FX);
        tram_se3_invert(&FX, &FXi);
        tram_se3_compose(&FXi, &T_base_board, &St);
        add_noise(&St, 0.05, 0.2);
        fprintf(f, "j%02d,%.3f,%.3f,%.3f,%.3f,%.3f,%.3f", i, q[0], q[1], q[2], q[3], q[4], q[5]);
        write_quat(f, &St, 1.0);
        fprintf(f, "\n");
    }
    fclose(f);
    tram_chain_destroy(arm);
    /* The wrist camera logged with the gripper's tool offset active on the
     * controller: TCP poses (docs/records.md, tool poses). */
    tram_se3 T_flange_tool;
    pose_from((double[3]){0.0, 0.0, 30.0}, (double[3]){0.0, 0.0, 150.0}, &T_flange_tool);
    if (write_wrist_tool(argv[1], "wrist_camera_tcp.csv", 't',
                         "# Demo: the wrist camera logged with the gripper's tool offset active on\n"
                         "# the controller (invented, tools/gen_demo.c): the robot poses are TCP\n"
                         "# poses. The gripper's TCP is 150 mm along the flange's z, turned 30 deg\n"
                         "# about it: --tool '0,0,150mm euler:zyx-intrinsic:30,0,0deg'.\n",
                         &T_flange_sensor, &T_base_target, 12, 0, &T_flange_tool))
        return 1;
    return 0;
}
