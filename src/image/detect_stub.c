/*
 * detect_stub.c - TEMPORARY stand-in for the chessboard detector
 * (src/image/detect.c on the detector branch), so that the images branch
 * links and `tram detect` can be tested for everything but finding a
 * board.  It finds nothing.  Deleted when the detector is merged.
 */
#include "tram/image.h"
#include "core/tram_internal.h"

#include <stdio.h>
#include <string.h>

void tram_detect_options_init(tram_detect_options *opt)
{
    opt->min_square_px = 8.0;
    opt->threads = 0;
}

tram_status tram_detect_chessboard(const tram_grey_image *im, const tram_board *b,
                                   const tram_detect_options *opt, tram_detection **out,
                                   tram_error *err)
{
    (void)opt;
    *out = NULL;
    if (!im || !b || !im->pixels)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "detect: no image or no board");
    tram_detection *d = tram__calloc(1, sizeof *d);
    if (!d) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    snprintf(d->reason, sizeof d->reason, "the detector is not built in (temporary stub)");
    *out = d;
    return TRAM_OK;
}

void tram_detection_destroy(tram_detection *d)
{
    if (!d) return;
    tram__free(d->uv);
    tram__free(d);
}
