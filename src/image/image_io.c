/*
 * image_io.c - grey images read from PNG (libpng) and JPEG (libjpeg-turbo)
 * files, converted to grey levels with the ITU-R BT.601 luma weights
 * (Y = 0.299 R + 0.587 G + 0.114 B; Recommendation ITU-R BT.601).
 *
 * The decoder is chosen by the file's signature (PNG: the eight bytes
 * 89 50 4E 47 0D 0A 1A 0A of ISO/IEC 15948; JPEG: the SOI marker FF D8
 * followed by a marker FF), never by the name.  Both decoders read from
 * memory and report every problem through a longjmp back to the reader,
 * so a corrupt file never ends the process and the libraries print
 * nothing.  The header is read first: a zero-size image or one of more
 * than TRAM_IMAGE_MAX_PIXELS pixels is refused before the pixels are
 * allocated.
 *
 * PNG: palette, low bit depths and tRNS are expanded (png_set_expand), the
 * alpha channel is ignored (the colour values are used as stored), no
 * gamma correction is applied; 16-bit samples keep their fraction
 * (v16 / 257).  A truncated file, a CRC error or missing image data is an
 * error, also after the image data (png_read_end).
 * JPEG: decoded straight to grey (libjpeg's grey output is the Y channel,
 * which JFIF defines with the BT.601 weights); CMYK files are refused; a
 * corrupt-data warning of libjpeg (a truncated file among them) is an
 * error, not a grey-filled image.
 */
#include "tram/image.h"
#include "core/tram_internal.h"
#include "io/text_internal.h"

#include <stdio.h> /* before jpeglib.h, which needs FILE and size_t */
#include <jpeglib.h>
#include <png.h>
#include <setjmp.h>
#include <string.h>

#define W_R 0.299
#define W_G 0.587
#define W_B 0.114

static int size_ok(size_t w, size_t h)
{
    return w > 0 && h > 0 && w <= TRAM_IMAGE_MAX_PIXELS && h <= TRAM_IMAGE_MAX_PIXELS / w;
}

static tram_status alloc_image(const char *name, size_t w, size_t h, tram_grey_image **out,
                               tram_error *err)
{
    *out = NULL;
    if (w == 0 || h == 0)
        return tram__fail(err, TRAM_EINPUT, name, 0, 0, "image size %zux%zu: the image is empty", w, h);
    if (!size_ok(w, h))
        return tram__fail(err, TRAM_EINPUT, name, 0, 0,
                          "image size %zux%zu: more than the %llu pixels tram reads", w, h,
                          TRAM_IMAGE_MAX_PIXELS);
    tram_grey_image *im = tram__calloc(1, sizeof *im);
    if (im) im->pixels = tram__calloc(w * h, sizeof *im->pixels);
    if (!im || !im->pixels) {
        tram__free(im);
        return tram__fail(err, TRAM_ENOMEM, name, 0, 0, "out of memory for a %zux%zu image", w, h);
    }
    im->width = w;
    im->height = h;
    *out = im;
    return TRAM_OK;
}

tram_status tram_grey_image_create(size_t width, size_t height, tram_grey_image **out,
                                   tram_error *err)
{
    return alloc_image(NULL, width, height, out, err);
}

void tram_grey_image_destroy(tram_grey_image *im)
{
    if (!im) return;
    tram__free(im->pixels);
    tram__free(im);
}

/* ---- PNG ------------------------------------------------------------ */

/* Deflate's largest expansion of one compressed byte (RFC 1951: a
 * 258-byte match coded in two one-bit codes). */
#define PNG_DEFLATE_MAX_RATIO 1032.0

/* Everything the PNG decoder changes after its setjmp lives here, in the
 * caller's frame, so nothing is indeterminate after a longjmp. */
typedef struct png_job {
    const char *name;
    const unsigned char *data;
    size_t len, pos;
    int truncated, nomem;
    char msg[200];
    unsigned char *raw;      /* whole decoded image (interlaced) or one row */
    png_bytep *rows;
    tram_grey_image *im;
    tram_error *err;
    tram_status st;
} png_job;

static void png_fail_fn(png_structp png, png_const_charp msg)
{
    png_job *j = png_get_error_ptr(png);
    snprintf(j->msg, sizeof j->msg, "%s", msg ? msg : "unknown error");
    png_longjmp(png, 1);
}

static void png_warn_fn(png_structp png, png_const_charp msg)
{
    (void)png;
    (void)msg; /* warnings (ancillary chunk problems) are not errors */
}

static void png_read_fn(png_structp png, png_bytep out, size_t n)
{
    png_job *j = png_get_io_ptr(png);
    if (n > j->len - j->pos) {
        j->truncated = 1;
        png_error(png, "the file ends early");
    }
    memcpy(out, j->data + j->pos, n);
    j->pos += n;
}

static void *png_alloc_fn(png_structp png, png_alloc_size_t n)
{
    void *p = tram__malloc(n);
    png_job *j = png_get_mem_ptr(png);
    if (!p && j) j->nomem = 1; /* libpng then fails with its own message */
    return p;
}

static void png_free_fn(png_structp png, png_voidp p)
{
    (void)png;
    tram__free(p);
}

/* One decoded row (8 or 16 bit, 1 to 4 channels) to grey levels. */
static void png_row_to_grey(const unsigned char *row, size_t w, int channels, int depth, float *out)
{
    for (size_t x = 0; x < w; x++) {
        double v[3];
        int nc = channels >= 3 ? 3 : 1; /* the alpha channel is ignored */
        for (int c = 0; c < nc; c++) {
            if (depth == 16) {
                const unsigned char *p = row + 2 * ((size_t)channels * x + (size_t)c);
                v[c] = (double)((p[0] << 8) | p[1]) / 257.0;
            } else {
                v[c] = row[(size_t)channels * x + (size_t)c];
            }
        }
        out[x] = (float)(nc == 3 ? W_R * v[0] + W_G * v[1] + W_B * v[2] : v[0]);
    }
}

static void png_decode(png_job *j)
{
    png_structp png = png_create_read_struct_2(PNG_LIBPNG_VER_STRING, j, png_fail_fn, png_warn_fn,
                                               j, png_alloc_fn, png_free_fn);
    png_infop info = png ? png_create_info_struct(png) : NULL;
    if (!png || !info) {
        png_destroy_read_struct(png ? &png : NULL, NULL, NULL);
        j->st = tram__fail(j->err, TRAM_ENOMEM, j->name, 0, 0, "out of memory");
        return;
    }
    if (setjmp(png_jmpbuf(png))) {
        if (j->st == TRAM_OK && j->nomem)
            j->st = tram__fail(j->err, TRAM_ENOMEM, j->name, 0, 0, "out of memory reading the PNG file");
        else if (j->st == TRAM_OK)
            j->st = tram__fail(j->err, TRAM_EINPUT, j->name, 0, 0, "%s PNG file: %s",
                               j->truncated ? "truncated" : "corrupt", j->msg);
        tram__free(j->raw);
        tram__free(j->rows);
        j->raw = NULL;
        j->rows = NULL;
        tram_grey_image_destroy(j->im);
        j->im = NULL;
        png_destroy_read_struct(&png, &info, NULL);
        return;
    }
    png_set_read_fn(png, j, png_read_fn);
    /* the size is checked below, not by libpng's default 1e6 per side */
    png_set_user_limits(png, 0x7fffffff, 0x7fffffff);
    /* Ancillary chunks (text, profiles, suggested palettes ...) are not
     * used: libpng skips them instead of allocating their declared length,
     * and no chunk can need more memory than the file holds. */
    png_set_keep_unknown_chunks(png, PNG_HANDLE_CHUNK_NEVER, NULL, -1);
    png_set_chunk_malloc_max(png, j->len + 1);
    png_read_info(png, info);
    png_uint_32 w, h;
    int depth, ctype, interlace;
    png_get_IHDR(png, info, &w, &h, &depth, &ctype, &interlace, NULL, NULL);
    if (!size_ok(w, h)) {
        j->st = alloc_image(j->name, w, h, &j->im, j->err); /* the refusal's message */
        png_error(png, "size");
    }
    /* A header can declare 100 MP in a file of 60 bytes.  Deflate packs at
     * most 1032 bytes into one (a 258-byte match in two one-bit codes;
     * RFC 1951), so a file that cannot hold the declared pixels is refused
     * as truncated before anything is allocated for them. */
    {
        const double bits = (double)w * (double)h * (double)png_get_channels(png, info) * (double)depth;
        if (bits / 8.0 > PNG_DEFLATE_MAX_RATIO * (double)j->len) {
            j->st = tram__fail(j->err, TRAM_EINPUT, j->name, 0, 0,
                               "truncated PNG file: the header declares %lux%lu pixels, more than its %zu "
                               "bytes can hold (deflate expands a byte to at most %.0f)",
                               (unsigned long)w, (unsigned long)h, j->len, PNG_DEFLATE_MAX_RATIO);
            png_error(png, "size");
        }
    }
    png_set_expand(png);
    int passes = png_set_interlace_handling(png);
    png_read_update_info(png, info);
    int channels = png_get_channels(png, info);
    int odepth = png_get_bit_depth(png, info);
    size_t rowbytes = png_get_rowbytes(png, info);
    if (odepth != 8 && odepth != 16) png_error(png, "unexpected bit depth after expansion");
    j->st = alloc_image(j->name, w, h, &j->im, j->err);
    if (j->st != TRAM_OK) png_error(png, "no memory");
    size_t nrows = passes > 1 ? h : 1;
    if (rowbytes > ((size_t)-1) / nrows) png_error(png, "image too large");
    j->raw = tram__malloc(rowbytes * nrows);
    j->rows = tram__malloc(nrows * sizeof *j->rows);
    if (!j->raw || !j->rows) {
        j->st = tram__fail(j->err, TRAM_ENOMEM, j->name, 0, 0, "out of memory");
        png_error(png, "no memory");
    }
    for (size_t y = 0; y < nrows; y++) j->rows[y] = j->raw + y * rowbytes;
    if (passes > 1) {
        png_read_image(png, j->rows);
        for (size_t y = 0; y < h; y++)
            png_row_to_grey(j->rows[y], w, channels, odepth, j->im->pixels + y * w);
    } else {
        for (size_t y = 0; y < h; y++) {
            png_read_row(png, j->rows[0], NULL);
            png_row_to_grey(j->rows[0], w, channels, odepth, j->im->pixels + y * w);
        }
    }
    png_read_end(png, NULL);
    png_destroy_read_struct(&png, &info, NULL);
    tram__free(j->raw);
    tram__free(j->rows);
    j->raw = NULL;
    j->rows = NULL;
}

/* ---- JPEG ----------------------------------------------------------- */

typedef struct jpeg_job {
    struct jpeg_error_mgr pub;
    jmp_buf jump;
    struct jpeg_decompress_struct cinfo;
    const char *name;
    char msg[JMSG_LENGTH_MAX];
    int refused; /* our own refusal, already in err */
    tram_grey_image *im;
    unsigned char *row;
    tram_error *err;
    tram_status st;
} jpeg_job;

static void jpeg_fail_fn(j_common_ptr cinfo)
{
    jpeg_job *j = (jpeg_job *)cinfo->err;
    (*cinfo->err->format_message)(cinfo, j->msg);
    longjmp(j->jump, 1);
}

/* Warnings (msg_level -1) are corrupt data - a truncated file among them:
 * an error.  Trace messages (level >= 0) are dropped; nothing is printed. */
static void jpeg_emit_fn(j_common_ptr cinfo, int msg_level)
{
    if (msg_level < 0) jpeg_fail_fn(cinfo);
}

static void jpeg_output_fn(j_common_ptr cinfo) { (void)cinfo; }

static void jpeg_decode_run(jpeg_job *j, struct jpeg_decompress_struct *cinfo,
                            const unsigned char *data, size_t len)
{
    jpeg_mem_src(cinfo, data, (unsigned long)len);
    jpeg_read_header(cinfo, TRUE);
    size_t w = cinfo->image_width, h = cinfo->image_height;
    if (!size_ok(w, h) || cinfo->jpeg_color_space == JCS_CMYK ||
        cinfo->jpeg_color_space == JCS_YCCK) {
        if (!size_ok(w, h)) j->st = alloc_image(j->name, w, h, &j->im, j->err);
        else j->st = tram__fail(j->err, TRAM_EINPUT, j->name, 0, 0,
                                "CMYK JPEG: only grey, YCbCr and RGB JPEG files are read");
        j->refused = 1;
        longjmp(j->jump, 1);
    }
    /* As for PNG: a Huffman-coded JPEG spends at least one bit on each
     * 8x8 block of the first component (its DC code; ISO/IEC 10918-1), so a
     * file too short for the declared size is truncated.  Arithmetic coding
     * has no such floor and is not bounded here. */
    if (!cinfo->arith_code) {
        const double blocks = (double)((w + 7) / 8) * (double)((h + 7) / 8);
        if (blocks / 8.0 > (double)len) {
            j->st = tram__fail(j->err, TRAM_EINPUT, j->name, 0, 0,
                               "truncated JPEG file: the header declares %zux%zu pixels, more than its %zu "
                               "bytes can hold (at least one bit per 8x8 block)",
                               w, h, len);
            j->refused = 1;
            longjmp(j->jump, 1);
        }
    }
    cinfo->out_color_space = JCS_GRAYSCALE;
    j->st = alloc_image(j->name, w, h, &j->im, j->err);
    if (j->st != TRAM_OK) {
        j->refused = 1;
        longjmp(j->jump, 1);
    }
    jpeg_start_decompress(cinfo);
    j->row = tram__malloc(w);
    if (!j->row) {
        j->st = tram__fail(j->err, TRAM_ENOMEM, j->name, 0, 0, "out of memory");
        j->refused = 1;
        longjmp(j->jump, 1);
    }
    while (cinfo->output_scanline < cinfo->output_height) {
        size_t y = cinfo->output_scanline;
        JSAMPROW rp = j->row;
        if (jpeg_read_scanlines(cinfo, &rp, 1) != 1) {
            snprintf(j->msg, sizeof j->msg, "the image data ends at row %zu of %zu", y, h);
            longjmp(j->jump, 1);
        }
        for (size_t x = 0; x < w; x++) j->im->pixels[y * w + x] = j->row[x];
    }
    jpeg_finish_decompress(cinfo);
}

static void jpeg_decode(jpeg_job *j, const unsigned char *data, size_t len)
{
    j->cinfo.err = jpeg_std_error(&j->pub);
    j->pub.error_exit = jpeg_fail_fn;
    j->pub.emit_message = jpeg_emit_fn;
    j->pub.output_message = jpeg_output_fn;
    if (setjmp(j->jump)) {
        if (!j->refused)
            j->st = tram__fail(j->err, TRAM_EINPUT, j->name, 0, 0, "corrupt or truncated JPEG file: %s",
                               j->msg);
        tram__free(j->row);
        j->row = NULL;
        tram_grey_image_destroy(j->im);
        j->im = NULL;
        jpeg_destroy_decompress(&j->cinfo);
        return;
    }
    jpeg_create_decompress(&j->cinfo);
    jpeg_decode_run(j, &j->cinfo, data, len);
    jpeg_destroy_decompress(&j->cinfo);
    tram__free(j->row);
    j->row = NULL;
}

/* ---- entry points ---------------------------------------------------- */

static const unsigned char png_sig[8] = {0x89, 'P', 'N', 'G', 0x0d, 0x0a, 0x1a, 0x0a};

tram_status tram_grey_image_read_buffer(const char *name, const unsigned char *data, size_t len,
                                        tram_grey_image **out, tram_error *err)
{
    *out = NULL;
    if (!name) name = "<image>";
    if (len == 0) return tram__fail(err, TRAM_EINPUT, name, 0, 0, "empty file: expected a PNG or JPEG image");
    if (len >= 8 && memcmp(data, png_sig, 8) == 0) {
        /* the size from IHDR (bytes 16..23) before libpng reads on */
        if (len >= 24 && memcmp(data + 12, "IHDR", 4) == 0) {
            size_t w = ((size_t)data[16] << 24) | ((size_t)data[17] << 16) | ((size_t)data[18] << 8) | data[19];
            size_t h = ((size_t)data[20] << 24) | ((size_t)data[21] << 16) | ((size_t)data[22] << 8) | data[23];
            if (!size_ok(w, h)) return alloc_image(name, w, h, out, err);
        }
        png_job j;
        memset(&j, 0, sizeof j);
        j.name = name;
        j.data = data;
        j.len = len;
        j.err = err;
        j.st = TRAM_OK;
        png_decode(&j);
        if (j.st == TRAM_OK) *out = j.im;
        else tram_grey_image_destroy(j.im);
        return j.st;
    }
    if (len >= 3 && data[0] == 0xff && data[1] == 0xd8 && data[2] == 0xff) {
        jpeg_job j;
        memset(&j, 0, sizeof j);
        j.name = name;
        j.err = err;
        j.st = TRAM_OK;
        jpeg_decode(&j, data, len);
        if (j.st == TRAM_OK) *out = j.im;
        else tram_grey_image_destroy(j.im);
        return j.st;
    }
    if (len < 8 && memcmp(data, png_sig, len) == 0)
        return tram__fail(err, TRAM_EINPUT, name, 0, 0, "truncated PNG file: %zu bytes, shorter than the signature", len);
    return tram__fail(err, TRAM_EINPUT, name, 0, 0,
                      "not a PNG or JPEG image (the file does not start with either signature)");
}

tram_status tram_grey_image_read_file(const char *path, tram_grey_image **out, tram_error *err)
{
    *out = NULL;
    char *data = NULL;
    size_t len = 0;
    tram_status st = tram__read_all(path, &data, &len, err);
    if (st != TRAM_OK) return st;
    st = tram_grey_image_read_buffer(path, (const unsigned char *)data, len, out, err);
    tram__free(data);
    return st;
}
