/*
 * cmd_board.c - "tram board": a chessboard's description file, and the
 * board to print (PDF at true scale, or PNG at a given resolution);
 * docs/images.md.
 */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

const char cli_board_help[] =
    "usage: tram board --corners CxR --square LENGTH -o BOARD.json [--pdf FILE.pdf]\n"
    "                  [--page a4|letter|WxH] [--png FILE.png --dpi N] [--force]\n\n"
    "Describes a chessboard of C x R inner corners and squares of LENGTH (e.g. 25mm,\n"
    "2.5cm, 0.025m, 1in) in a board file, and draws it to print.  One of C and R must\n"
    "be odd and the other even: a board with both odd or both even looks the same\n"
    "turned by 180 degrees, so its corner order would be ambiguous.\n"
    "Board convention: inner corner (c, r) is at (c*s, r*s, 0) in the target frame, its\n"
    "point id is r*C + c, the square at corner 0's -x,-y side is black, and z = x cross y\n"
    "points into the board.  On the printed page corner 0 is the top-left inner corner.\n\n"
    "options:\n"
    "  --corners CxR     inner corners across (x) and down (y), e.g. 9x6\n"
    "  --square LENGTH   side of one square with its unit (mm, cm, m, in)\n"
    "  -o FILE           the board file (JSON, format tram-board, version 1)\n"
    "  --pdf FILE        the board as a one-page PDF at true scale (1 pt = 1/72 in);\n"
    "                    print it at 100% / actual size and check the 100 mm scale bar\n"
    "  --page P          a4 (ISO 216, 210x297 mm; default), letter, or WxH in mm;\n"
    "                    a4 and letter turn to landscape when only that fits\n"
    "  --png FILE        the same page as a grey PNG at --dpi N (default 300)\n"
    "  --force           replace existing output files\n\n"
    "Every output is written atomically; nothing is written unless all can be.\n"
    "examples (from the top of the source tree):\n"
    "  tram board --corners 9x6 --square 18mm -o board.json --pdf board.pdf --force\n"
    "\n"
    "exit status: 0 success; 2 usage or input error (a board that does not fit the\n"
    "page is refused with the sizes needed and available).\n";

/* "25mm", "2.5cm", "1in": a positive number and a unit. */
static int parse_length(const char *s, double *v, tram_length_unit *u)
{
    char *end;
    *v = strtod(s, &end);
    if (end == s || !isfinite(*v) || !(*v > 0)) return -1;
    *u = tram_unit_length_parse(end);
    return *u == TRAM_LENGTH_UNSET ? -1 : 0;
}

static int parse_corners(const char *s, int *c, int *r)
{
    char tail;
    return sscanf(s, "%dx%d%c", c, r, &tail) == 2 ? 0 : -1;
}

static int exists(const char *path)
{
    struct stat sb;
    return path && stat(path, &sb) == 0;
}

int cli_board(int argc, char **argv)
{
    const char *corners = NULL, *square = NULL, *o = NULL, *pdf = NULL, *png = NULL;
    const char *page_s = "a4", *dpi_s = NULL;
    int force = 0, bad = 0;
    for (int i = 1; i < argc; i++) {
        if (cli_take(argc, argv, &i, "--corners", &corners, &bad)) {
        } else if (cli_take(argc, argv, &i, "--square", &square, &bad)) {
        } else if (cli_take(argc, argv, &i, "-o", &o, &bad)) {
        } else if (cli_take(argc, argv, &i, "--pdf", &pdf, &bad)) {
        } else if (cli_take(argc, argv, &i, "--page", &page_s, &bad)) {
        } else if (cli_take(argc, argv, &i, "--png", &png, &bad)) {
        } else if (cli_take(argc, argv, &i, "--dpi", &dpi_s, &bad)) {
        } else if (cli_flag(argv, i, "--force")) {
            force = 1;
        } else if (argv[i][0] == '-' && argv[i][1]) {
            return cli_usage_error("board", "unknown option '%s'", argv[i]);
        } else {
            return cli_usage_error("board", "unexpected argument '%s'", argv[i]);
        }
        if (bad) return CLI_EXIT_USAGE;
    }
    if (!corners) return cli_usage_error("board", "--corners CxR is required (e.g. --corners 9x6)");
    if (!square) return cli_usage_error("board", "--square LENGTH is required (e.g. --square 25mm)");
    if (!o) return cli_usage_error("board", "-o BOARD.json is required");
    int cols, rows;
    if (parse_corners(corners, &cols, &rows) != 0)
        return cli_usage_error("board", "--corners '%s': expected CxR, e.g. 9x6", corners);
    double sq;
    tram_length_unit unit;
    if (parse_length(square, &sq, &unit) != 0)
        return cli_usage_error("board", "--square '%s': expected a positive length with its unit "
                               "(mm, cm, m, in), e.g. 25mm", square);
    double dpi = 300;
    if (dpi_s) {
        char *end;
        dpi = strtod(dpi_s, &end);
        if (end == dpi_s || *end || !png)
            return cli_usage_error("board", png ? "--dpi '%s': expected a number" : "--dpi %s needs --png FILE", dpi_s);
    }
    tram_error err;
    tram_error_clear(&err);
    tram_board b;
    tram_plot_page page;
    if (tram_board_init(&b, cols, rows, sq, unit, &err) != TRAM_OK ||
        tram_plot_page_parse(page_s, &page, &err) != TRAM_OK ||
        ((pdf || png) && tram_plot_board_check_page(&b, &page, &err) != TRAM_OK)) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    if (png && !(dpi >= 50 && dpi <= 2400))
        return cli_usage_error("board", "--dpi %g: expected 50 to 2400", dpi);
    /* refuse before writing anything, so that no output is left alone */
    const char *outs[3] = {o, pdf, png};
    for (int k = 0; k < 3; k++)
        if (!force && exists(outs[k])) {
            fprintf(stderr, "%s: error: already exists; not overwritten (pass --force to replace it)\n",
                    outs[k]);
            return CLI_EXIT_USAGE;
        }
    char *text = NULL;
    tram_status st = tram_board_to_json(&b, &text, &err);
    if (st == TRAM_OK) st = tram_file_write_atomic(o, text, strlen(text), force, &err);
    free(text);
    if (st == TRAM_OK && pdf) st = tram_plot_board_write_pdf(&b, &page, pdf, force, &err);
    if (st == TRAM_OK && png) st = tram_plot_board_write_png(&b, &page, dpi, png, force, &err);
    tram_plot_shutdown();
    if (st != TRAM_OK) {
        cli_report(&err);
        return cli_exit_for(st);
    }
    fprintf(stderr, "board: %dx%d inner corners, %g %s squares: %s%s%s%s%s\n", cols, rows, sq,
            tram_unit_length_name(unit), o, pdf ? ", " : "", pdf ? pdf : "", png ? ", " : "",
            png ? png : "");
    if (pdf || png)
        fprintf(stderr, "print at 100%% / actual size (no fit to page) and check the 100 mm scale bar "
                        "with a ruler before use\n");
    return CLI_EXIT_OK;
}
