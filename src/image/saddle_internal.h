/*
 * saddle_internal.h - chessboard corner candidates (saddle points) for the
 * detector: the ChESS response of Bennett and Lasenby (2014) on a lightly
 * smoothed working image, the ring analysis of each candidate (where the
 * ring around it crosses its mean, and which sectors are dark), the
 * sub-pixel refinement by the gradient-orthogonality condition of Forstner
 * and Gulch (1987), and the edge blur measure behind `sharpness`.
 *
 * All positions are in full-resolution pixels of the input image
 * (tram/image.h convention), whatever the working level.  Angles are
 * atan2(dv, du) in radians, in [0, 2 pi).
 */
#ifndef TRAM_SADDLE_INTERNAL_H
#define TRAM_SADDLE_INTERNAL_H

#include "tram/image.h"

/* The working image: the input reduced by `scale` (1, 2, 4 or 8; 2x2 box
 * averages) and smoothed by a 5-tap binomial kernel. */
typedef struct tram__level {
    size_t w, h;
    float *px;
    double scale;    /* full-resolution pixels per working pixel */
} tram__level;

/* One saddle point: a local maximum of the response whose ring crosses
 * its mean exactly four times, the crossings near-opposite in pairs. */
typedef struct tram__saddle {
    double u, v;         /* full-resolution pixels */
    double response;     /* ChESS response, working-level grey levels */
    double cross[4];     /* crossing angles, increasing, in [0, 2 pi) */
    int dark0;           /* 1: the sector from cross[0] to cross[1] is dark */
    double contrast;     /* (bright mean - dark mean) / 2 on the ring, grey levels */
} tram__saddle;

typedef struct tram__saddles {
    tram__level level;
    tram__saddle *s;     /* strongest response first */
    size_t n;
    size_t nmax;         /* local maxima above the threshold (before the ring test) */
    double ring_px;      /* ring radius, full-resolution pixels */
} tram__saddles;

/* Find the saddle points of im for squares of at least min_square_px
 * pixels, with up to `threads` threads (>= 1).  TRAM_OK or TRAM_ENOMEM;
 * on success free out with tram__saddles_free. */
tram_status tram__saddles_find(const tram_grey_image *im, double min_square_px, int threads,
                               tram__saddles *out);
void tram__saddles_free(tram__saddles *s);

/* Bilinear sample of the working image at full-resolution (u, v), clamped
 * to the image. */
double tram__level_sample(const tram__level *lv, double u, double v);

/* Which sector of s contains the direction `ang`: 0..3 (sector k runs from
 * cross[k] to cross[k+1]); and whether sector k is dark. */
int tram__saddle_sector(const tram__saddle *s, double ang);
static inline int tram__saddle_dark(const tram__saddle *s, int k) { return s->dark0 ^ (k & 1); }

/* Refine the corner at uv (full-resolution pixels, updated in place) on the
 * input image by the gradient-orthogonality condition in a disc of radius
 * radius_px, iterated to a fixed point.  Returns 1 when it converged
 * within radius_px / 2 of the start, 0 otherwise (uv left unchanged). */
int tram__corner_refine(const tram_grey_image *im, double radius_px, double uv[2]);

/* Blur of the edge between corners a and b: the standard deviation, in
 * pixels, of the intensity derivative across the edge at its midpoint
 * (for a step edge blurred by a Gaussian of sigma this is about
 * sqrt(sigma^2 + 1/12), the 1/12 from the pixel's own area).  Negative
 * when the profile shows no edge. */
double tram__edge_blur(const tram_grey_image *im, const double a[2], const double b[2]);

#endif
