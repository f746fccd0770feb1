/*
 * cmd_fk.c - "tram fk": flange poses from joint readings and a kinematic
 * chain, written as a v1 record file (or every link frame as a table).
 */
#include "cli.h"

#include <stdlib.h>
#include <string.h>

const char cli_fk_help[] =
    "usage: tram fk --chain CHAIN.json [OPTIONS] RECORDS\n\n"
    "Computes T_base_flange for every station of a record file that gives joint readings\n"
    "(joint_1 ... joint_n; angles in its angle unit, prismatic joints in its length unit)\n"
    "with the chain (docs/chain.md): one 4x4 transform per element, multiplied along the\n"
    "chain.  Prints a v1 record file with the robot poses (and the sensor block, if the\n"
    "file has one).\n\n"
    "options:\n"
    "  --chain FILE        the kinematic chain (required)\n"
    "  --to REP            representation of the output (default quat), as in tram convert\n"
    "  --length-unit U     output length unit (default: the record file's)\n"
    "  --angle-unit U      output angle unit, for rotvec and euler:SEQ\n"
    "  --format csv|json   output file format (default csv)\n"
    "  --all-frames        print every link frame instead: a table station,frame,x,y,z,\n"
    "                      qw,qx,qy,qz with the frames base (where the first joint moves),\n"
    "                      one per joint (after it moves), and flange, all in the base frame\n\n"
    "examples (from the top of the source tree):\n"
    "  tram fk --chain datasets/demo/arm_dh.json datasets/demo/wrist_camera_joints.csv\n"
    "\n"
    "exit status: 0 success; 2 usage or input error (e.g. a joint outside its limits,\n"
    "naming the station, the joint and file:line:column).\n";

static int all_frames(const tram_records *r, const tram_chain *c, tram_length_unit out_lu)
{
    double ang = tram_unit_angle_in_rad(r->angle_unit) / tram_unit_angle_in_rad(c->angle_unit);
    double len = tram_unit_length_factor(r->length_unit, c->length_unit);
    tram_length_unit lu = out_lu != TRAM_LENGTH_UNSET ? out_lu : r->length_unit;
    double back = tram_unit_length_factor(c->length_unit, lu);
    tram_se3 *frames = malloc((c->n_joints + 2) * sizeof *frames);
    if (!frames) return CLI_EXIT_USAGE;
    printf("# format: tram-frames-1\n# length-unit: %s\n# frames in the robot base frame; "
           "quaternions scalar first\nstation,frame,x,y,z,qw,qx,qy,qz\n",
           tram_unit_length_name(lu));
    const tram_chain_element *joint[TRAM_JOINTS_MAX];
    size_t j = 0;
    for (size_t i = 0; i < c->n_elements; i++)
        if (c->elements[i].kind != TRAM_CHAIN_FIXED) joint[j++] = &c->elements[i];
    for (size_t s = 0; s < r->count; s++) {
        double q[TRAM_JOINTS_MAX];
        for (size_t k = 0; k < c->n_joints; k++)
            q[k] = tram_records_joints(r, s)[k] * (joint[k]->kind == TRAM_CHAIN_REVOLUTE ? ang : len);
        tram_se3 T;
        tram_chain_forward(c, q, &T, frames);
        for (size_t f = 0; f < c->n_joints + 2; f++) {
            tram_mat3 R;
            double t[3];
            tram_quat_wxyz qq;
            tram_se3_to_rt(&frames[f], &R, t);
            tram_quat_wxyz_from_mat3(&R, &qq);
            const char *name = f == 0 ? "base" : f == c->n_joints + 1 ? "flange" : joint[f - 1]->name;
            printf("%s,%s,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g\n", r->stations[s].id, name,
                   t[0] * back, t[1] * back, t[2] * back, qq.w, qq.x, qq.y, qq.z);
        }
    }
    free(frames);
    return CLI_EXIT_OK;
}

int cli_fk(int argc, char **argv)
{
    const char *chain = NULL, *file = NULL, *to = "quat", *v = NULL;
    int json = 0, frames = 0, bad = 0;
    tram_output_rep rep;
    tram_length_unit lu = TRAM_LENGTH_UNSET;
    tram_angle_unit au = TRAM_ANGLE_UNSET;
    for (int i = 1; i < argc; i++) {
        if (cli_take(argc, argv, &i, "--chain", &chain, &bad)) {
        } else if (cli_take(argc, argv, &i, "--to", &to, &bad)) {
        } else if (cli_take(argc, argv, &i, "--length-unit", &v, &bad)) {
            if (bad) break;
            if ((lu = tram_unit_length_parse(v)) == TRAM_LENGTH_UNSET)
                return cli_usage_error("fk", "--length-unit '%s': expected mm, cm, m or in", v);
        } else if (cli_take(argc, argv, &i, "--angle-unit", &v, &bad)) {
            if (bad) break;
            if ((au = tram_unit_angle_parse(v)) == TRAM_ANGLE_UNSET)
                return cli_usage_error("fk", "--angle-unit '%s': expected deg or rad", v);
        } else if (cli_take(argc, argv, &i, "--format", &v, &bad)) {
            if (bad) break;
            if (strcmp(v, "csv") == 0) json = 0;
            else if (strcmp(v, "json") == 0) json = 1;
            else return cli_usage_error("fk", "--format '%s': expected csv or json", v);
        } else if (cli_flag(argv, i, "--all-frames")) {
            frames = 1;
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            return cli_usage_error("fk", "unknown option '%s'", argv[i]);
        } else if (file) {
            return cli_usage_error("fk", "one record file expected");
        } else {
            file = argv[i];
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (!chain) return cli_usage_error("fk", "--chain FILE is required");
    if (!file) return cli_usage_error("fk", "no record file (use '-' for stdin)");
    if (tram_output_rep_parse(to, &rep) != 0)
        return cli_usage_error("fk", "--to '%s': expected quat, rotvec, matrix or euler:SEQ", to);
    rep.length_unit = lu;
    rep.angle_unit = au;
    tram_error err;
    tram_error_clear(&err);
    tram_chain *c = NULL;
    tram_records *r = NULL;
    tram_status st = tram_chain_read_file(chain, &c, &err);
    if (st == TRAM_OK) st = tram_records_read_file(file, NULL, &r, &err);
    if (st == TRAM_OK) cli_records_warnings(r);
    if (st == TRAM_OK) st = tram_records_apply_chain(r, c, &err);
    int rc = CLI_EXIT_OK;
    if (st != TRAM_OK) {
        cli_report(&err);
        rc = CLI_EXIT_USAGE;
    } else if (frames) {
        rc = all_frames(r, c, lu);
    } else {
        char *buf = NULL;
        size_t len = 0;
        FILE *mem = open_memstream(&buf, &len);
        if (!mem || tram_records_write(r, &rep, json, mem, &err) != TRAM_OK) {
            if (mem) fclose(mem);
            fprintf(stderr, "tram fk: error: %s\n", err.message);
            rc = CLI_EXIT_USAGE;
        } else {
            fclose(mem);
            fwrite(buf, 1, len, stdout);
        }
        free(buf);
    }
    tram_records_destroy(r);
    tram_chain_destroy(c);
    return rc;
}
