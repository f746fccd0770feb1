/*
 * pixels_target.c - the target point of every pixel observation, for the
 * pose and the solve from pixels (tram/pixel_solve.h): a board's corner
 * (id r * cols + c, at (c s, r s, 0) in the board frame, lengths converted
 * to the record file's unit) or a model file's point by id.  An id that is
 * not on the target is refused naming the observation's file:line.
 */
#include "tram/pixel_solve.h"
#include "core/tram_internal.h"

#include <stdlib.h>
#include <string.h>

void tram_pixel_target_free(double *xyz) { tram__free(xyz); }

tram_status tram_pixel_target_from_board(const tram_pixel_obs *obs, const tram_board *b,
                                         tram_length_unit unit, double **xyz, tram_error *err)
{
    *xyz = NULL;
    size_t nc = tram_board_corner_count(b);
    double f = unit == TRAM_LENGTH_UNSET ? 1.0 : tram_unit_length_factor(b->unit, unit);
    double *v = tram__malloc((obs->n ? obs->n : 1) * 3 * sizeof *v);
    if (!v) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    for (size_t i = 0; i < obs->n; i++) {
        const char *id = obs->point_id[obs->point[i]];
        char *end;
        unsigned long k = strtoul(id, &end, 10);
        if (id[0] < '0' || id[0] > '9' || *end || k >= nc || (id[0] == '0' && id[1])) {
            tram__free(v);
            return tram__fail(err, TRAM_EINPUT, obs->source, obs->line[i], 0,
                              "point '%s' is not a corner of the %dx%d board: expected a corner "
                              "id 0 .. %zu (r * cols + c)",
                              id, b->cols, b->rows, nc - 1);
        }
        tram_board_corner(b, (size_t)k, v + 3 * i);
        for (int a = 0; a < 3; a++) v[3 * i + (size_t)a] *= f;
    }
    *xyz = v;
    return TRAM_OK;
}

tram_status tram_pixel_target_from_model(const tram_pixel_obs *obs, const tram_point_model *m,
                                         double **xyz, tram_error *err)
{
    *xyz = NULL;
    double *v = tram__malloc((obs->n ? obs->n : 1) * 3 * sizeof *v);
    if (!v) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    for (size_t i = 0; i < obs->n; i++) {
        const char *id = obs->point_id[obs->point[i]];
        size_t j;
        for (j = 0; j < m->n; j++)
            if (strcmp(m->id[j], id) == 0) break;
        if (j == m->n) {
            tram__free(v);
            return tram__fail(err, TRAM_EINPUT, obs->source, obs->line[i], 0,
                              "point '%s' is not in the model %s", id, m->source);
        }
        memcpy(v + 3 * i, m->xyz + 3 * j, 3 * sizeof *v);
    }
    *xyz = v;
    return TRAM_OK;
}
