/*
 * solve_access.c - solve options and results through plain values, for
 * callers that cannot depend on the layout of the structs (the Python
 * package and other bindings): options on the heap set by name (the
 * defaults are tram_solve_options_init's), and the covariance of a
 * solution as an array.
 */
#include "tram/solve.h"
#include "core/tram_internal.h"

#include <math.h>
#include <string.h>

tram_solve_options *tram_solve_options_create(void)
{
    tram_solve_options *o = tram__malloc(sizeof *o);
    if (o) tram_solve_options_init(o);
    return o;
}

void tram_solve_options_destroy(tram_solve_options *opt) { tram__free(opt); }

/* v as a whole number in [lo, hi]; -1 when it is not. */
static int whole(double v, double lo, double hi, unsigned long long *out)
{
    if (!(v >= lo && v <= hi) || floor(v) != v) return -1;
    *out = (unsigned long long)v;
    return 0;
}

int tram_solve_options_set(tram_solve_options *opt, const char *name, double value)
{
    unsigned long long u;
    if (!opt || !name) return -1;
    if (strcmp(name, "noise_length") == 0 || strcmp(name, "noise_angle_rad") == 0) {
        if (!(value >= 0) || !isfinite(value)) return -1;
        *(name[6] == 'l' ? &opt->noise_length : &opt->noise_angle_rad) = value;
        return 0;
    }
    static const char *const axis_names[] = {"noise_length_x", "noise_length_y", "noise_length_z",
                                             "noise_angle_rad_x", "noise_angle_rad_y",
                                             "noise_angle_rad_z", "robot_noise_length",
                                             "robot_noise_angle_rad"};
    for (int k = 0; k < 8; k++)
        if (strcmp(name, axis_names[k]) == 0) {
            if (!(value >= 0) || !isfinite(value)) return -1;
            double *slot = k < 3 ? &opt->noise_length_axis[k]
                           : k < 6 ? &opt->noise_angle_axis_rad[k - 3]
                           : k == 6 ? &opt->robot_noise_length : &opt->robot_noise_angle_rad;
            *slot = value;
            return 0;
        }
    if (strcmp(name, "method") == 0) {
        if (whole(value, 0, (double)TRAM_METHOD_COUNT - 1, &u)) return -1;
        opt->method = (tram_method)u;
    } else if (strcmp(name, "pairs") == 0) {
        if (whole(value, 0, (double)TRAM_PAIRS_CONSECUTIVE, &u)) return -1;
        opt->pairs = (tram_pairs_mode)u;
    } else if (strcmp(name, "refine") == 0 || strcmp(name, "robust") == 0 ||
               strcmp(name, "check_conventions") == 0) {
        if (whole(value, 0, 1, &u)) return -1;
        *(name[0] == 'c' ? &opt->check_conventions
          : name[1] == 'e' ? &opt->refine : &opt->robust) = (int)u;
    } else if (strcmp(name, "bootstrap") == 0) {
        if (whole(value, 0, 1e6, &u)) return -1;
        opt->bootstrap = (size_t)u;
    } else if (strcmp(name, "fit_scale") == 0) {
        if (whole(value, 0, 1, &u)) return -1;
        opt->fit_scale = (int)u;
    } else if (strcmp(name, "seed") == 0) {
        if (whole(value, 0, 9007199254740992.0, &u)) return -1;
        opt->seed = u;
    } else {
        return -1;
    }
    return 0;
}

int tram_solution_covariance(const tram_solution *s, double cov[144])
{
    if (!s || !s->unc.valid) return 0;
    memcpy(cov, s->unc.cov, sizeof s->unc.cov);
    return 1;
}
