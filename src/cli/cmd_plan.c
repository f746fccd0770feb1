/*
 * cmd_plan.c - "tram plan": the robot stations that best cut the
 * uncertainty of the calibration, inside the cell's view and reach
 * (tram/plan.h, docs/plan.md), written as a record file of robot poses in
 * a short visiting order, with the predicted 1-sigma before and after and
 * against random feasible stations.
 */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

const char cli_plan_help[] =
    "usage: tram plan --setup S --cell CELL.json [OPTIONS] [RECORDS]\n\n"
    "Proposes the robot stations that best cut the uncertainty of X (T_flange_sensor, or\n"
    "T_base_sensor for eye-to-hand) and of the other unknown, keeping the board in view\n"
    "(every corner inside the image with the margin, the working distance, the board\n"
    "tilt) and inside the reach (the cell's flange box or sphere and tilt, or its chain\n"
    "with joint limits, reached by inverse kinematics).  Candidates are sampled with a\n"
    "fixed, printed seed and chosen by D-optimality on the refinement's information; the\n"
    "stations come in a short visiting order.  RECORDS (the stations so far, optional):\n"
    "their solve replaces the cell's guess and gives the noise.  The cell file's format:\n"
    "docs/plan.md.\n\n"
    "options:\n"
    "  --setup eye-in-hand|eye-to-hand   (or the records' '# setup:' directive)\n"
    "  --cell FILE        the cell file (required)\n"
    "  --stations K       stations to propose (default 6, at most 60)\n"
    "  --seed N           sampling seed (default 1)\n"
    "  --candidates N     feasible candidates to sample (default 1500)\n"
    "  -o FILE            write the stations as a record file (atomically): station ids,\n"
    "                     robot_ columns in the cell's output convention (or the records'),\n"
    "                     and joint_ columns when the cell gives a chain\n"
    "  --format csv|json  the record file's form (default csv)\n"
    "  --force            allow -o to replace an existing file\n"
    "  --json             print the plan as JSON (docs/plan.md)\n"
    "  --plot DIR         draw DIR/plan.png: recorded and proposed flange positions (top and\n"
    "                     front views, in visiting order) and the 1-sigma now, planned, random\n\n"
    "The poses are unverified proposals: tram checks no collisions. Jog to each at reduced\n"
    "speed with the safety functions active.\n\n"    "examples (from the top of the source tree):\n"
    "  tram plan --setup eye-in-hand --cell datasets/demo/cell_wrist.json -o next.csv\n"
    "  tram plan --cell datasets/demo/cell_wrist.json --stations 4 --json datasets/demo/wrist_camera.csv\n"
    "\n"
    "exit status: 0 planned; 2 usage or input error (a cell file names file:line:column);\n"
    "3 no pose satisfies the constraints (the reason is given), or the noise is unknown.\n";

static const char plan_safety[] =
    "SAFETY: these poses are unverified proposals, NOT verified on the cell: tram checks no\n"
    "collisions with fixtures, cables or people. Jog to each pose at reduced speed with the\n"
    "safety functions active, keep clear of the working envelope, and follow the applicable\n"
    "robot-safety standards and local codes.\n";

typedef struct plan_args {
    const char *cell, *records, *out, *format, *plot;
    tram_setup setup;
    tram_plan_options po;
    int json, force;
} plan_args;

static int parse_count(const char *opt, const char *v, size_t lo, size_t hi, size_t *out)
{
    char *end;
    unsigned long long x = strtoull(v, &end, 10);
    if (!*v || *end || v[0] == '-' || x < lo || x > hi)
        return cli_usage_error("plan", "%s '%s': expected a whole number from %zu to %zu", opt, v, lo, hi);
    *out = (size_t)x;
    return CLI_EXIT_OK;
}

static int parse_args(int argc, char **argv, plan_args *a)
{
    const char *v = NULL;
    int bad = 0;
    for (int i = 1; i < argc; i++) {
        if (cli_take(argc, argv, &i, "--setup", &v, &bad)) {
            if (bad) break;
            if ((a->setup = tram_setup_parse(v)) == TRAM_SETUP_UNSET)
                return cli_usage_error("plan", "--setup '%s': expected eye-in-hand or eye-to-hand", v);
        } else if (cli_take(argc, argv, &i, "--cell", &a->cell, &bad)) {
        } else if (cli_take(argc, argv, &i, "--stations", &v, &bad)) {
            if (bad || parse_count("--stations", v, 1, 60, &a->po.stations)) return CLI_EXIT_USAGE;
        } else if (cli_take(argc, argv, &i, "--candidates", &v, &bad)) {
            if (bad || parse_count("--candidates", v, 10, 100000, &a->po.candidates)) return CLI_EXIT_USAGE;
        } else if (cli_take(argc, argv, &i, "--seed", &v, &bad)) {
            size_t s;
            if (bad || parse_count("--seed", v, 0, (size_t)-1, &s)) return CLI_EXIT_USAGE;
            a->po.seed = s;
        } else if (cli_take(argc, argv, &i, "-o", &a->out, &bad)) {
        } else if (cli_take(argc, argv, &i, "--plot", &a->plot, &bad)) {
        } else if (cli_take(argc, argv, &i, "--format", &a->format, &bad)) {
            if (bad) break;
            if (strcmp(a->format, "csv") && strcmp(a->format, "json"))
                return cli_usage_error("plan", "--format '%s': expected csv or json", a->format);
        } else if (cli_flag(argv, i, "--json")) {
            a->json = 1;
        } else if (cli_flag(argv, i, "--force")) {
            a->force = 1;
        } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
            return cli_usage_error("plan", "unknown option '%s'", argv[i]);
        } else if (a->records) {
            return cli_usage_error("plan", "one record file expected");
        } else {
            a->records = argv[i];
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (bad) return CLI_EXIT_USAGE;
    if (!a->cell) return cli_usage_error("plan", "--cell FILE is required (docs/plan.md)");
    return CLI_EXIT_OK;
}

/* Read the records (if any), settle the setup, solve them. */
static int load_records(plan_args *a, tram_records **r)
{
    tram_error err;
    tram_error_clear(&err);
    if (a->records) {
        if (tram_records_read_file(a->records, NULL, r, &err) != TRAM_OK) {
            cli_report(&err);
            return CLI_EXIT_USAGE;
        }
        if (a->setup != TRAM_SETUP_UNSET && (*r)->setup != TRAM_SETUP_UNSET && a->setup != (*r)->setup) {
            fprintf(stderr, "%s:%ld: error: the file declares setup %s but --setup %s was given\n",
                    (*r)->source, (*r)->setup_line ? (*r)->setup_line : 1L, tram_setup_name((*r)->setup),
                    tram_setup_name(a->setup));
            return CLI_EXIT_USAGE;
        }
        if (a->setup == TRAM_SETUP_UNSET) a->setup = (*r)->setup;
    }
    if (a->setup == TRAM_SETUP_UNSET)
        return cli_usage_error("plan", "no setup: pass --setup eye-in-hand or eye-to-hand");
    return CLI_EXIT_OK;
}

static int solve_records(const tram_cell *c, tram_records *r, tram_solution **s)
{
    tram_error err;
    tram_error_clear(&err);
    if (r->n_joints && !r->has_block[TRAM_BLOCK_ROBOT] && c->chain &&
        tram_records_apply_chain(r, c->chain, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    tram_solve_options so;
    tram_solve_options_init(&so);
    if (c->noise_given) {
        so.noise_length = c->noise_length;
        so.noise_angle_rad = c->noise_angle_rad;
    }
    tram_status st = tram_solve(r, c->setup, &so, s, &err);
    if (st != TRAM_OK && st != TRAM_EUNDETERMINED) {
        cli_report(&err);
        return cli_exit_for(st);
    }
    return CLI_EXIT_OK;
}

static void print_sigma(const char *what, const tram_plan_sigma *s)
{
    if (s->valid) printf("  %-46s %12.4g %12.4g\n", what, s->trans, s->rot_deg);
    else printf("  %-46s %12s %12s\n", what, "undetermined", "undetermined");
}

static void print_report(const plan_args *a, const tram_cell *c, const tram_plan_result *p)
{
    const char *lu = tram_unit_length_name(p->length_unit);
    int eih = p->setup == TRAM_SETUP_EYE_IN_HAND;
    printf("tram plan: %zu stations for %s (cell %s), lengths in %s\n", p->n, tram_setup_name(p->setup),
           c->source, lu);
    if (p->n_existing || a->records)
        printf("estimate: %s (%zu recorded stations from %s)\n",
               strcmp(p->estimate_source, "records") ? "the cell's guess" : "the solve of the records",
               p->n_existing, a->records);
    else
        printf("estimate: the cell's guess (planning from scratch)\n");
    printf("noise per station: %.4g %s, %.4g deg per axis (%s)\n", p->noise_length, lu,
           p->noise_angle_rad * 180 / 3.14159265358979323846, p->noise_source);
    printf("candidates: %zu feasible of %zu samples (seed %llu)\n\n", p->candidates, p->samples,
           p->seed);
    printf("1-sigma of %s (root sum of the 3 axes)  %12s %12s\n", eih ? "T_flange_sensor" : "T_base_sensor",
           lu, "deg");
    char buf[96];
    snprintf(buf, sizeof buf, "now (%zu stations)", p->n_existing);
    print_sigma(buf, &p->current);
    snprintf(buf, sizeof buf, "predicted after the %zu proposed stations", p->n);
    print_sigma(buf, &p->planned);
    snprintf(buf, sizeof buf, "after %zu random feasible ones (median of %zu)", p->n, p->random_draws);
    print_sigma(buf, &p->random);
    printf("\nstations in visiting order (flange in the base frame):\n");
    printf("  %-8s %10s %10s %10s %9s %9s %9s\n", "station", "x", "y", "z", "distance", "tilt_deg",
           "gain");
    for (size_t i = 0; i < p->n; i++) {
        const tram_plan_station *s = &p->stations[i];
        printf("  %-8s %10.2f %10.2f %10.2f %9.1f %9.1f %9.3f\n", s->id, s->T_base_flange.m[0][3],
               s->T_base_flange.m[1][3], s->T_base_flange.m[2][3], s->distance, s->board_tilt_deg, s->gain);
    }
    printf("flange travel along the order: %.1f %s\n", p->path_length, lu);
    if (p->n_joints) printf("every pose reached by the chain inside its joint limits (joint_ columns)\n");
    if (a->out) printf("written: %s\n", a->out);
    printf("\n%s", plan_safety);
}

static int write_records(const plan_args *a, const tram_cell *c, const tram_records *ex,
                         const tram_plan_result *p)
{
    tram_error err;
    tram_error_clear(&err);
    tram_records *r = NULL;
    tram_output_rep rep;
    memset(&rep, 0, sizeof rep);
    rep.kind = TRAM_REP_QUAT;
    if (c->out_rep_given) rep = c->out_rep;
    else if (ex && ex->conv[TRAM_BLOCK_ROBOT].rep != TRAM_REP_NONE) {
        rep.kind = ex->conv[TRAM_BLOCK_ROBOT].rep;
        rep.euler = ex->conv[TRAM_BLOCK_ROBOT].euler;
        rep.angle_unit = ex->conv[TRAM_BLOCK_ROBOT].angle_unit;
    }
    rep.length_unit = TRAM_LENGTH_UNSET;
    rep.with_joints = p->n_joints > 0;
    char *buf = NULL;
    size_t len = 0;
    FILE *mem = NULL;
    tram_status st = tram_plan_records(p, c, &r, &err);
    if (st == TRAM_OK && !(mem = open_memstream(&buf, &len)))
        st = TRAM_ENOMEM;
    int json = a->format && strcmp(a->format, "json") == 0;
    if (st == TRAM_OK) {
        if (!json)
            fprintf(mem, "# Proposed stations from tram plan (seed %llu): unverified poses, NOT "
                         "checked for collisions; jog at reduced speed.\n", p->seed);
        st = tram_records_write(r, &rep, json, mem, &err);
    }
    if (mem) fclose(mem);
    if (st == TRAM_OK) st = tram_file_write_atomic(a->out, buf, len, a->force, &err);
    free(buf);
    tram_records_destroy(r);
    if (st != TRAM_OK) {
        if (!err.message[0]) snprintf(err.message, sizeof err.message, "out of memory");
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    return CLI_EXIT_OK;
}

static int draw_plan(const plan_args *a, const tram_records *r, const tram_plan_result *p)
{
    tram_error err;
    tram_error_clear(&err);
    tram_se3 *ex = NULL;
    size_t n = r ? r->count : 0;
    if (n && !(ex = malloc(n * sizeof *ex))) return cli_usage_error("plan", "out of memory");
    for (size_t i = 0; i < n; i++) ex[i] = r->stations[i].T_base_flange;
    tram_plot_plan_data d = {p, n, ex, NULL};
    tram_image *img = NULL;
    char path[4200];
    mkdir(a->plot, 0755);
    snprintf(path, sizeof path, "%s/plan.png", a->plot);
    tram_status st = tram_plot_plan(&d, 1600, 1000, &img, &err);
    if (st == TRAM_OK) st = tram_image_write_png(img, path, a->force, &err);
    tram_image_destroy(img);
    free(ex);
    if (st != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    return CLI_EXIT_OK;
}

int cli_plan(int argc, char **argv)
{
    plan_args a;
    memset(&a, 0, sizeof a);
    tram_plan_options_init(&a.po);
    int rc = parse_args(argc, argv, &a);
    if (rc != CLI_EXIT_OK) return rc;
    tram_records *r = NULL;
    tram_solution *s = NULL;
    tram_cell *c = NULL;
    tram_plan_result *p = NULL;
    tram_error err;
    tram_error_clear(&err);
    rc = load_records(&a, &r);
    if (rc == CLI_EXIT_OK && tram_cell_read_file(a.cell, a.setup, &c, &err) != TRAM_OK) {
        cli_report(&err);
        rc = cli_exit_for(err.status);
    }
    if (rc == CLI_EXIT_OK && r) rc = solve_records(c, r, &s);
    if (rc == CLI_EXIT_OK && s && s->solved && !s->trustworthy)
        fprintf(stderr, "tram plan: warning: the solve of %s has warnings (see tram solve); the plan "
                        "starts from it all the same\n", r->source);
    if (rc == CLI_EXIT_OK && s && !s->solved)
        fprintf(stderr, "tram plan: note: %s cannot be solved yet; planning from the cell's guess\n",
                r->source);
    if (rc == CLI_EXIT_OK) {
        tram_status st = tram_plan(c, r, s, &a.po, &p, &err);
        if (st != TRAM_OK) {
            cli_report(&err);
            rc = cli_exit_for(st);
        }
    }
    if (rc == CLI_EXIT_OK && a.out) rc = write_records(&a, c, r, p);
    if (rc == CLI_EXIT_OK && a.plot) rc = draw_plan(&a, r, p);
    if (rc == CLI_EXIT_OK) {
        if (a.json) {
            char *text = NULL;
            if (tram_plan_to_json(p, &text, &err) != TRAM_OK) {
                cli_report(&err);
                rc = CLI_EXIT_USAGE;
            } else {
                fputs(text, stdout);
            }
            free(text);
        } else {
            print_report(&a, c, p);
        }
        if (a.json) fputs(plan_safety, stderr);
    }
    tram_plan_result_destroy(p);
    tram_cell_destroy(c);
    tram_solution_destroy(s);
    tram_records_destroy(r);
    return rc;
}
