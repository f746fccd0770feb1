/*
 * test_image.c - grey images read from PNG and JPEG (src/image/image_io.c).
 *
 * The test files are written here, with libpng and libjpeg themselves, into
 * memory and into a temporary directory: every PNG colour type and bit
 * depth (PNG specification, ISO/IEC 15948:2004, table 11.1), with and
 * without Adam7 interlacing, and grey and colour JPEG files.  Expected grey
 * levels use the ITU-R BT.601 luma weights 0.299, 0.587, 0.114; libpng
 * expands a low bit depth by replicating bits, so a b-bit grey v becomes
 * v * 255 / (2^b - 1) exactly.  Then the refusals: every truncation of a
 * PNG and a JPEG, a flipped byte, a zero-size and an over-limit header
 * (with a correct CRC, so the size check itself is what refuses it), and
 * non-image files.
 */
#include "test_util.h"

#include <jpeglib.h>
#include <png.h>
#include <unistd.h>

typedef struct membuf {
    unsigned char *p;
    size_t n, cap;
} membuf;

static void mem_write(png_structp png, png_bytep data, size_t n)
{
    membuf *b = png_get_io_ptr(png);
    if (b->n + n > b->cap) {
        b->cap = 2 * (b->n + n) + 1024;
        b->p = realloc(b->p, b->cap);
        assert_non_null(b->p);
    }
    memcpy(b->p + b->n, data, n);
    b->n += n;
}
static void mem_flush(png_structp png) { (void)png; }

#define TW 13
#define TH 7

/* Sample c of pixel (x, y) at bit depth `depth`: a pattern that reaches
 * 0 and the top value. */
static unsigned sample(int x, int y, int c, int depth)
{
    unsigned top = (1u << depth) - 1;
    unsigned v = (unsigned)(x * 37 + y * 91 + c * 53) * (depth == 16 ? 331u : 7u);
    if (x == 0 && y == 0) return 0;
    if (x == 1 && y == 0) return top;
    return v % (top + 1);
}

static double to8(unsigned v, int depth)
{
    return depth == 16 ? v / 257.0 : (double)v * 255.0 / (double)((1u << depth) - 1);
}

static const png_color palette[4] = {{0, 0, 0}, {255, 255, 255}, {200, 100, 50}, {10, 220, 130}};

/* Write a TW x TH PNG of the given type into b; fill expect with the grey
 * levels tram should read. */
static void write_png(membuf *b, int ctype, int depth, int interlace, double *expect)
{
    png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, NULL, NULL, NULL);
    png_infop info = png_create_info_struct(png);
    assert_non_null(info);
    if (setjmp(png_jmpbuf(png))) fail_msg("libpng failed writing the test file");
    png_set_write_fn(png, b, mem_write, mem_flush);
    png_set_IHDR(png, info, TW, TH, depth, ctype, interlace ? PNG_INTERLACE_ADAM7 : PNG_INTERLACE_NONE,
                 PNG_COMPRESSION_TYPE_DEFAULT, PNG_FILTER_TYPE_DEFAULT);
    int channels = ctype == PNG_COLOR_TYPE_GRAY || ctype == PNG_COLOR_TYPE_PALETTE ? 1
                   : ctype == PNG_COLOR_TYPE_GRAY_ALPHA ? 2 : ctype == PNG_COLOR_TYPE_RGB ? 3 : 4;
    if (ctype == PNG_COLOR_TYPE_PALETTE) {
        int npal = depth == 1 ? 2 : 4;
        png_set_PLTE(png, info, palette, npal);
        png_byte trns[4] = {255, 128, 0, 255}; /* alpha, which tram ignores */
        png_set_tRNS(png, info, trns, npal, NULL);
    }
    png_write_info(png, info);
    size_t rowbytes = ((size_t)TW * (size_t)channels * (size_t)depth + 7) / 8;
    unsigned char rows[TH][TW * 8];
    png_bytep rp[TH];
    memset(rows, 0, sizeof rows);
    for (int y = 0; y < TH; y++) {
        rp[y] = rows[y];
        for (int x = 0; x < TW; x++) {
            unsigned s[4];
            for (int c = 0; c < channels; c++) s[c] = sample(x, y, c, ctype == PNG_COLOR_TYPE_PALETTE ? (depth == 1 ? 1 : 2) : depth);
            for (int c = 0; c < channels; c++) {
                if (depth == 16) {
                    rows[y][2 * (x * channels + c)] = (unsigned char)(s[c] >> 8);
                    rows[y][2 * (x * channels + c) + 1] = (unsigned char)(s[c] & 255);
                } else if (depth == 8) {
                    rows[y][x * channels + c] = (unsigned char)s[c];
                } else { /* 1, 2, 4 bits, one channel, most significant first */
                    int bit = x * depth;
                    rows[y][bit / 8] |= (unsigned char)(s[c] << (8 - depth - bit % 8));
                }
            }
            double e;
            if (ctype == PNG_COLOR_TYPE_PALETTE) {
                const png_color *pc = &palette[s[0]];
                e = 0.299 * pc->red + 0.587 * pc->green + 0.114 * pc->blue;
            } else if (channels >= 3) {
                e = 0.299 * to8(s[0], depth) + 0.587 * to8(s[1], depth) + 0.114 * to8(s[2], depth);
            } else {
                e = to8(s[0], depth);
            }
            expect[y * TW + x] = e;
        }
    }
    (void)rowbytes;
    png_write_image(png, rp);
    png_write_end(png, NULL);
    png_destroy_write_struct(&png, &info);
}

static void check_grey(const tram_grey_image *im, const double *expect, const char *what)
{
    assert_int_equal(im->width, TW);
    assert_int_equal(im->height, TH);
    double worst = 0;
    for (int i = 0; i < TW * TH; i++) {
        double d = fabs(im->pixels[i] - expect[i]);
        if (d > worst) worst = d;
    }
    if (worst > 1e-3) fail_msg("%s: grey level off by %g", what, worst);
}

static void test_png_every_type(void **state)
{
    (void)state;
    static const struct { int ctype, depth; const char *name; } types[] = {
        {PNG_COLOR_TYPE_GRAY, 1, "grey 1"},     {PNG_COLOR_TYPE_GRAY, 2, "grey 2"},
        {PNG_COLOR_TYPE_GRAY, 4, "grey 4"},     {PNG_COLOR_TYPE_GRAY, 8, "grey 8"},
        {PNG_COLOR_TYPE_GRAY, 16, "grey 16"},   {PNG_COLOR_TYPE_GRAY_ALPHA, 8, "grey+alpha 8"},
        {PNG_COLOR_TYPE_GRAY_ALPHA, 16, "grey+alpha 16"}, {PNG_COLOR_TYPE_RGB, 8, "RGB 8"},
        {PNG_COLOR_TYPE_RGB, 16, "RGB 16"},     {PNG_COLOR_TYPE_RGBA, 8, "RGBA 8"},
        {PNG_COLOR_TYPE_RGBA, 16, "RGBA 16"},   {PNG_COLOR_TYPE_PALETTE, 1, "palette 1"},
        {PNG_COLOR_TYPE_PALETTE, 2, "palette 2"}, {PNG_COLOR_TYPE_PALETTE, 4, "palette 4"},
        {PNG_COLOR_TYPE_PALETTE, 8, "palette 8"}};
    int count = 0;
    for (size_t t = 0; t < sizeof types / sizeof types[0]; t++)
        for (int il = 0; il <= 1; il++) {
            membuf b = {0};
            double expect[TW * TH];
            write_png(&b, types[t].ctype, types[t].depth, il, expect);
            tram_grey_image *im = NULL;
            tram_error err;
            tram_error_clear(&err);
            if (tram_grey_image_read_buffer("t.png", b.p, b.n, &im, &err) != TRAM_OK)
                fail_msg("%s%s: %s", types[t].name, il ? " interlaced" : "", err.message);
            char what[64];
            snprintf(what, sizeof what, "%s%s", types[t].name, il ? " interlaced" : "");
            check_grey(im, expect, what);
            tram_grey_image_destroy(im);
            free(b.p);
            count++;
        }
    printf("[ png      ] %d colour type / bit depth / interlace combinations read exactly\n", count);
}

/* A JPEG of w x h pixels: grey (components 1) or RGB (3). */
static void write_jpeg(membuf *b, int w, int h, int components, const unsigned char *pix, int quality)
{
    struct jpeg_compress_struct c;
    struct jpeg_error_mgr e;
    c.err = jpeg_std_error(&e);
    jpeg_create_compress(&c);
    unsigned char *out = NULL;
    unsigned long outlen = 0;
    jpeg_mem_dest(&c, &out, &outlen);
    c.image_width = (JDIMENSION)w;
    c.image_height = (JDIMENSION)h;
    c.input_components = components;
    c.in_color_space = components == 1 ? JCS_GRAYSCALE : JCS_RGB;
    jpeg_set_defaults(&c);
    jpeg_set_quality(&c, quality, TRUE);
    jpeg_start_compress(&c, TRUE);
    while (c.next_scanline < c.image_height) {
        JSAMPROW row = (JSAMPROW)(pix + (size_t)c.next_scanline * (size_t)w * (size_t)components);
        jpeg_write_scanlines(&c, &row, 1);
    }
    jpeg_finish_compress(&c);
    jpeg_destroy_compress(&c);
    b->p = malloc(outlen);
    memcpy(b->p, out, outlen);
    b->n = outlen;
    free(out);
}

static void test_jpeg(void **state)
{
    (void)state;
    enum { W = 48, H = 32 };
    static unsigned char grey[W * H], rgb[W * H * 3];
    for (int i = 0; i < W * H; i++) {
        grey[i] = (unsigned char)(40 + (i % W) * 3);
        rgb[3 * i] = 200;
        rgb[3 * i + 1] = 100;
        rgb[3 * i + 2] = 50;
    }
    membuf b = {0};
    write_jpeg(&b, W, H, 1, grey, 100);
    tram_grey_image *im = NULL;
    tram_error err;
    tram_error_clear(&err);
    /* the decoder follows the signature, not the name */
    assert_int_equal(tram_grey_image_read_buffer("misnamed.png", b.p, b.n, &im, &err), TRAM_OK);
    tram_grey_image_destroy(im);
    assert_int_equal(tram_grey_image_read_buffer("g.jpg", b.p, b.n, &im, &err), TRAM_OK);
    assert_int_equal(im->width, W);
    assert_int_equal(im->height, H);
    double worst = 0;
    for (int i = 0; i < W * H; i++) worst = fmax(worst, fabs(im->pixels[i] - grey[i]));
    printf("[ jpeg     ] grey gradient, quality 100: worst difference %.1f grey levels\n", worst);
    assert_true(worst <= 2.0);
    tram_grey_image_destroy(im);
    free(b.p);
    /* uniform colour (200, 100, 50): BT.601 luma 124.2 */
    write_jpeg(&b, W, H, 3, rgb, 100);
    assert_int_equal(tram_grey_image_read_buffer("c.jpg", b.p, b.n, &im, &err), TRAM_OK);
    double mean = 0;
    for (int i = 0; i < W * H; i++) mean += im->pixels[i] / (W * H);
    printf("[ jpeg     ] colour (200,100,50): grey %.2f, BT.601 luma 124.20\n", mean);
    assert_true(fabs(mean - 124.2) <= 1.0);
    tram_grey_image_destroy(im);
    /* every truncation is refused, naming the file */
    int refused = 0;
    for (size_t n = 0; n < b.n; n++) {
        tram_error_clear(&err);
        tram_status st = tram_grey_image_read_buffer("cut.jpg", b.p, n, &im, &err);
        if (st != TRAM_EINPUT) fail_msg("JPEG cut to %zu of %zu bytes: status %d", n, b.n, (int)st);
        assert_null(im);
        assert_string_equal(err.file, "cut.jpg");
        refused++;
    }
    printf("[ jpeg     ] %d truncations refused\n", refused);
    free(b.p);
}

static uint32_t crc32_of(const unsigned char *p, size_t n)
{
    uint32_t c = 0xffffffffu;
    for (size_t i = 0; i < n; i++) {
        c ^= p[i];
        for (int k = 0; k < 8; k++) c = (c >> 1) ^ (0xedb88320u & (0u - (c & 1u)));
    }
    return c ^ 0xffffffffu;
}

static void put32(unsigned char *p, uint32_t v)
{
    p[0] = (unsigned char)(v >> 24);
    p[1] = (unsigned char)(v >> 16);
    p[2] = (unsigned char)(v >> 8);
    p[3] = (unsigned char)v;
}

/* A PNG signature and IHDR of the given size (grey 8 bit), CRC correct,
 * and no image data. */
static size_t png_header(unsigned char *out, uint32_t w, uint32_t h)
{
    static const unsigned char sig[8] = {0x89, 'P', 'N', 'G', 13, 10, 26, 10};
    memcpy(out, sig, 8);
    put32(out + 8, 13);
    memcpy(out + 12, "IHDR", 4);
    put32(out + 16, w);
    put32(out + 20, h);
    out[24] = 8; out[25] = 0; out[26] = 0; out[27] = 0; out[28] = 0;
    put32(out + 29, crc32_of(out + 12, 17));
    return 33;
}

static void expect_refused(const unsigned char *p, size_t n, const char *name, const char *words)
{
    tram_grey_image *im = NULL;
    tram_error err;
    tram_error_clear(&err);
    assert_int_equal(tram_grey_image_read_buffer(name, p, n, &im, &err), TRAM_EINPUT);
    assert_null(im);
    assert_string_equal(err.file, name);
    if (!strstr(err.message, words)) fail_msg("%s: '%s' lacks '%s'", name, err.message, words);
}

static void test_refusals(void **state)
{
    (void)state;
    unsigned char h[64];
    expect_refused(h, png_header(h, 20000, 10000), "big.png", "more than the 100000000 pixels");
    expect_refused(h, png_header(h, 0, 10), "zero.png", "the image is empty");
    expect_refused(h, png_header(h, 10, 10), "noimage.png", "truncated");
    /* 100 MP declared in 33 bytes: refused before the 400 MB are allocated
     * (deflate's ceiling of 1032:1, RFC 1951; found by libFuzzer) */
    {
        size_t n = png_header(h, 10000, 10000);
        put32(h + n, 0); /* an empty IDAT chunk: libpng reads the header up to it */
        memcpy(h + n + 4, "IDAT", 4);
        put32(h + n + 8, crc32_of(h + n + 4, 4));
        expect_refused(h, n + 12, "huge.png", "the header declares 10000x10000 pixels");
    }
    expect_refused((const unsigned char *)"hello, world", 12, "text.png", "not a PNG or JPEG");
    expect_refused((const unsigned char *)"", 0, "empty.png", "empty file");
    expect_refused(h, 5, "short.png", "truncated PNG");
    /* every truncation of a real PNG, and a flipped byte in each place */
    membuf b = {0};
    double expect[TW * TH];
    write_png(&b, PNG_COLOR_TYPE_RGB, 8, 0, expect);
    int cuts = 0, flips = 0, flips_read = 0;
    for (size_t n = 0; n < b.n; n++) {
        tram_grey_image *im = NULL;
        tram_error err;
        tram_error_clear(&err);
        if (tram_grey_image_read_buffer("cut.png", b.p, n, &im, &err) != TRAM_EINPUT)
            fail_msg("PNG cut to %zu of %zu bytes was not refused", n, b.n);
        assert_null(im);
        cuts++;
        b.p[n] ^= 0x40;
        tram_status st = tram_grey_image_read_buffer("flip.png", b.p, b.n, &im, &err);
        b.p[n] ^= 0x40;
        if (st == TRAM_OK) flips_read++;
        else assert_int_equal(st, TRAM_EINPUT);
        tram_grey_image_destroy(im);
        flips++;
    }
    /* the CRC covers every chunk; a flip that still reads can only be in
     * bytes libpng is allowed to ignore (none in this file but the
     * ancillary-free layout), so expect none */
    printf("[ refusals ] PNG: %d truncations refused; %d of %d flipped bytes read anyway\n", cuts,
           flips_read, flips);
    assert_int_equal(flips_read, 0);
    free(b.p);
    /* a JPEG whose frame header says 20000 x 10000 */
    static unsigned char px[16 * 16];
    memset(px, 128, sizeof px);
    write_jpeg(&b, 16, 16, 1, px, 90);
    for (size_t i = 2; i + 9 < b.n; i++)
        if (b.p[i] == 0xff && (b.p[i + 1] == 0xc0 || b.p[i + 1] == 0xc1)) {
            b.p[i + 5] = 10000 >> 8; b.p[i + 6] = 10000 & 255;  /* height */
            b.p[i + 7] = 20000 >> 8; b.p[i + 8] = 20000 & 255;  /* width */
            break;
        }
    expect_refused(b.p, b.n, "big.jpg", "more than the 100000000 pixels");
    free(b.p);
    /* 64 MP declared in a few hundred bytes: under one bit per 8x8 block
     * of Huffman data (ISO/IEC 10918-1), refused before allocating */
    write_jpeg(&b, 16, 16, 1, px, 90);
    for (size_t i = 2; i + 9 < b.n; i++)
        if (b.p[i] == 0xff && (b.p[i + 1] == 0xc0 || b.p[i + 1] == 0xc1)) {
            b.p[i + 5] = 8000 >> 8; b.p[i + 6] = 8000 & 255;
            b.p[i + 7] = 8000 >> 8; b.p[i + 8] = 8000 & 255;
            break;
        }
    expect_refused(b.p, b.n, "huge.jpg", "the header declares 8000x8000 pixels");
    free(b.p);
    /* and one whose frame header says width 0 */
    write_jpeg(&b, 16, 16, 1, px, 90);
    for (size_t i = 2; i + 9 < b.n; i++)
        if (b.p[i] == 0xff && (b.p[i + 1] == 0xc0 || b.p[i + 1] == 0xc1)) {
            b.p[i + 7] = 0;
            b.p[i + 8] = 0;
            break;
        }
    expect_refused(b.p, b.n, "zero.jpg", "Empty JPEG image");
    free(b.p);
}

static void test_files_and_create(void **state)
{
    (void)state;
    char dir[] = "/tmp/tram-test-image-XXXXXX";
    assert_non_null(mkdtemp(dir));
    char path[128];
    snprintf(path, sizeof path, "%s/grey16.png", dir);
    membuf b = {0};
    double expect[TW * TH];
    write_png(&b, PNG_COLOR_TYPE_GRAY, 16, 1, expect);
    FILE *f = fopen(path, "wb");
    assert_non_null(f);
    fwrite(b.p, 1, b.n, f);
    fclose(f);
    free(b.p);
    tram_grey_image *im = NULL;
    tram_error err;
    tram_error_clear(&err);
    assert_int_equal(tram_grey_image_read_file(path, &im, &err), TRAM_OK);
    check_grey(im, expect, "grey 16 from a file");
    tram_grey_image_destroy(im);
    unlink(path);
    assert_int_not_equal(tram_grey_image_read_file(path, &im, &err), TRAM_OK);
    assert_string_equal(err.file, path);
    rmdir(dir);
    assert_int_equal(tram_grey_image_create(0, 5, &im, &err), TRAM_EINPUT);
    assert_int_equal(tram_grey_image_create(100001, 1000, &im, &err), TRAM_EINPUT);
    assert_int_equal(tram_grey_image_create(3, 2, &im, &err), TRAM_OK);
    for (int i = 0; i < 6; i++) assert_true(im->pixels[i] == 0.0f);
    tram_grey_image_destroy(im);
    tram_grey_image_destroy(NULL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_png_every_type),
        cmocka_unit_test(test_jpeg),
        cmocka_unit_test(test_refusals),
        cmocka_unit_test(test_files_and_create),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
