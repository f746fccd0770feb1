/*
 * fuzz_image.c - libFuzzer harness for the grey-image reader (PNG through
 * libpng, JPEG through libjpeg-turbo, chosen by signature;
 * docs/images.md).  The input is a whole file.  A file that reads must
 * give a non-empty image within the pixel limit whose grey levels are
 * finite and in 0 .. 255; a file that does not must say why.
 */
#include "fuzz_common.h"

#include <math.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_grey_image *im = NULL;
    tram_error err;
    tram_error_clear(&err);
    if (tram_grey_image_read_buffer("fuzz.img", data, size, &im, &err) != TRAM_OK) {
        fuzz_check_error(&err);
        if (im) abort(); /* a failed read leaves no image */
        return 0;
    }
    if (!im || im->width == 0 || im->height == 0 ||
        (unsigned long long)im->width * im->height > TRAM_IMAGE_MAX_PIXELS)
        abort();
    for (size_t i = 0; i < im->width * im->height; i++)
        if (!isfinite(im->pixels[i]) || im->pixels[i] < 0.0f || im->pixels[i] > 255.0f) abort();
    tram_grey_image_destroy(im);
    return 0;
}
