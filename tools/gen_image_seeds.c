/*
 * gen_image_seeds.c - writes the small seed images of fuzz/corpus/image/
 * (not part of the product): PNG files of several colour types, bit depths
 * and interlacing, and baseline and progressive JPEG files, each a few
 * hundred bytes, written with libpng and libjpeg.
 *
 *   cc -std=c11 -D_POSIX_C_SOURCE=200809L tools/gen_image_seeds.c -o /tmp/gen_image_seeds \
 *      $(pkg-config --cflags --libs libpng libjpeg) && /tmp/gen_image_seeds fuzz/corpus/image
 */
#include <stdio.h> /* before jpeglib.h, which needs FILE and size_t */
#include <jpeglib.h>
#include <png.h>
#include <stdlib.h>
#include <string.h>

static void png_file(const char *dir, const char *name, int w, int h, int ctype, int depth, int interlace)
{
    char path[512];
    snprintf(path, sizeof path, "%s/%s", dir, name);
    FILE *f = fopen(path, "wb");
    if (!f) exit(1);
    png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, NULL, NULL, NULL);
    png_infop info = png_create_info_struct(png);
    if (setjmp(png_jmpbuf(png))) exit(1);
    png_init_io(png, f);
    png_set_IHDR(png, info, (png_uint_32)w, (png_uint_32)h, depth, ctype,
                 interlace ? PNG_INTERLACE_ADAM7 : PNG_INTERLACE_NONE, 0, 0);
    int ch = ctype == PNG_COLOR_TYPE_GRAY || ctype == PNG_COLOR_TYPE_PALETTE ? 1
             : ctype == PNG_COLOR_TYPE_GRAY_ALPHA ? 2 : ctype == PNG_COLOR_TYPE_RGB ? 3 : 4;
    if (ctype == PNG_COLOR_TYPE_PALETTE) {
        png_color pal[4] = {{0, 0, 0}, {255, 255, 255}, {200, 100, 50}, {10, 220, 130}};
        png_byte trns[4] = {255, 128, 0, 255};
        png_set_PLTE(png, info, pal, 4);
        png_set_tRNS(png, info, trns, 4, NULL);
    }
    png_write_info(png, info);
    size_t rb = ((size_t)w * (size_t)ch * (size_t)depth + 7) / 8;
    unsigned char *row = calloc(rb, 1);
    for (int pass = 0; pass < (interlace ? 7 : 1); pass++) (void)pass;
    png_bytep *rows = malloc((size_t)h * sizeof *rows);
    for (int y = 0; y < h; y++) {
        rows[y] = calloc(rb, 1);
        for (size_t i = 0; i < rb; i++) rows[y][i] = (unsigned char)(y * 40 + (int)i * 23);
        if (ctype == PNG_COLOR_TYPE_PALETTE && depth == 8)
            for (size_t i = 0; i < rb; i++) rows[y][i] &= 3;
    }
    png_write_image(png, rows);
    png_write_end(png, NULL);
    png_destroy_write_struct(&png, &info);
    for (int y = 0; y < h; y++) free(rows[y]);
    free(rows);
    free(row);
    fclose(f);
}

static void jpeg_file(const char *dir, const char *name, int w, int h, int comps, int progressive)
{
    char path[512];
    snprintf(path, sizeof path, "%s/%s", dir, name);
    FILE *f = fopen(path, "wb");
    if (!f) exit(1);
    struct jpeg_compress_struct c;
    struct jpeg_error_mgr e;
    c.err = jpeg_std_error(&e);
    jpeg_create_compress(&c);
    jpeg_stdio_dest(&c, f);
    c.image_width = (JDIMENSION)w;
    c.image_height = (JDIMENSION)h;
    c.input_components = comps;
    c.in_color_space = comps == 1 ? JCS_GRAYSCALE : JCS_RGB;
    jpeg_set_defaults(&c);
    jpeg_set_quality(&c, 75, TRUE);
    if (progressive) jpeg_simple_progression(&c);
    jpeg_start_compress(&c, TRUE);
    unsigned char *row = malloc((size_t)w * (size_t)comps);
    while (c.next_scanline < c.image_height) {
        for (int i = 0; i < w * comps; i++) row[i] = (unsigned char)((int)c.next_scanline * 16 + i * 9);
        JSAMPROW r = row;
        jpeg_write_scanlines(&c, &r, 1);
    }
    jpeg_finish_compress(&c);
    jpeg_destroy_compress(&c);
    free(row);
    fclose(f);
}

int main(int argc, char **argv)
{
    const char *dir = argc > 1 ? argv[1] : ".";
    png_file(dir, "grey8.png", 8, 8, PNG_COLOR_TYPE_GRAY, 8, 0);
    png_file(dir, "grey1.png", 9, 3, PNG_COLOR_TYPE_GRAY, 1, 0);
    png_file(dir, "grey16_interlaced.png", 6, 5, PNG_COLOR_TYPE_GRAY, 16, 1);
    png_file(dir, "grey_alpha8.png", 4, 4, PNG_COLOR_TYPE_GRAY_ALPHA, 8, 0);
    png_file(dir, "palette2_trns.png", 6, 5, PNG_COLOR_TYPE_PALETTE, 2, 0);
    png_file(dir, "rgb8_interlaced.png", 7, 7, PNG_COLOR_TYPE_RGB, 8, 1);
    png_file(dir, "rgba16.png", 5, 4, PNG_COLOR_TYPE_RGBA, 16, 0);
    jpeg_file(dir, "grey.jpg", 16, 8, 1, 0);
    jpeg_file(dir, "colour.jpg", 16, 16, 3, 0);
    jpeg_file(dir, "progressive.jpg", 16, 16, 3, 1);
    return 0;
}
