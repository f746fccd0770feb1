/*
 * chess_internal.h - the working image and the ChESS response peaks of the
 * chessboard detector (src/image/chess.c; Bennett and Lasenby 2014).
 */
#ifndef TRAM_CHESS_INTERNAL_H
#define TRAM_CHESS_INTERNAL_H

#include "tram/image.h"

/* The working image: the input reduced by `scale` (1, 2, 4 or 8; 2x2 box
 * averages) and smoothed by a 5-tap binomial kernel (sigma 1). */
typedef struct tram__level {
    size_t w, h;
    float *px;
    double scale;    /* full-resolution pixels per working pixel */
} tram__level;

/* A local maximum of the response, at sub-pixel working coordinates. */
typedef struct tram__peak {
    float resp;
    float x, y;
} tram__peak;

/* Build the working image of im for squares of at least min_square_px
 * (reduced while that is 24 working pixels or more).  Free lv->px with
 * tram__free.  TRAM_OK or TRAM_ENOMEM. */
tram_status tram__chess_level(const tram_grey_image *im, double min_square_px, int threads,
                              tram__level *lv);

/* The local maxima of the ChESS response of ring radius r (working pixels)
 * that are the largest within the Chebyshev distance k, above `floor` and
 * above `rel` times the strongest; strongest first.  *out is allocated
 * (tram__free).  TRAM_OK or TRAM_ENOMEM. */
tram_status tram__chess_peaks(const tram__level *lv, size_t r, size_t k, float floor, float rel,
                              int threads, tram__peak **out, size_t *n);

#endif
