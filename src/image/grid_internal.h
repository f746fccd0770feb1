/*
 * grid_internal.h - recovery of the board's lattice among the saddle
 * points (src/image/grid.c) and its order by the board convention.
 */
#ifndef TRAM_GRID_INTERNAL_H
#define TRAM_GRID_INTERNAL_H

#include "image/saddle_internal.h"

typedef struct tram__grid_result {
    int found;           /* 1: a complete cols x rows lattice, ordered */
    size_t nseen;        /* corners of the largest lattice seen */
    double *uv;          /* when found: 2 * cols * rows pixels in board order (caller frees
                            with tram__free) */
    char reason[256];    /* why not found */
} tram__grid_result;

/* Find b's lattice among the saddle points of an image of width x height
 * pixels.  TRAM_OK (found or not, see res) or TRAM_ENOMEM. */
tram_status tram__grid_find(const tram__saddles *S, const tram_board *b, size_t width,
                            size_t height, double min_square_px, tram__grid_result *res);

#endif
