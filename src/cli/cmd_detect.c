/*
 * cmd_detect.c - "tram detect": find a chessboard's corners in images and
 * write them as a pixel-observation file (format tram-pixels-1,
 * docs/images.md), with a per-image report and optional pictures.
 *
 * Every image is read and searched before anything is written, so an
 * unreadable image (exit 2) or too few boards found (exit 3) leave no
 * observation file behind.  Pictures are drawn afterwards from a second
 * read of each image, so that only the detections stay in memory.
 */
#include "cli.h"
#include "tram/pixels.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

const char cli_detect_help[] =
    "usage: tram detect --board BOARD.json [-o OBS.csv] [--json] [--plot DIR]\n"
    "                   [--stations FILE.csv] [--force] IMAGE...\n\n"
    "Finds the board's inner corners in each PNG or JPEG image and writes them as a\n"
    "pixel-observation file (format tram-pixels-1): station,point,u,v with point the\n"
    "corner id r*cols+c.  Pixel convention: the centre of the top-left pixel is\n"
    "(0, 0), u to the right, v down.  All images of one run must have one size.\n\n"
    "options:\n"
    "  --board FILE      the board file written by 'tram board'\n"
    "  -o FILE           the observation file (written atomically; default: stdout)\n"
    "  --json            the per-image report as JSON on stdout (instead of stderr)\n"
    "  --plot DIR        pictures: DIR/STATION-corners.png for each image and\n"
    "                    DIR/coverage.png with every corner found over the image frame\n"
    "  --stations FILE   CSV with header image,station naming each image's station\n"
    "                    (default: the image file name without its extension)\n"
    "  --force           replace existing output files\n\n"
    "examples (from the top of the source tree):\n"
    "  tram board --corners 9x6 --square 18mm -o board.json --png view.png --dpi 100 --force\n"
    "  # three copies of one rendered view stand in for three photographs\n"
    "  for i in 1 2 3; do cp view.png shot_$i.png; done\n"
    "  tram detect --board board.json -o obs.csv --force shot_1.png shot_2.png shot_3.png\n"
    "\n"
    "exit status: 0 every image read and at least three boards found; 2 usage or\n"
    "input error (an unreadable, truncated or corrupt image, a non-image, images of\n"
    "different sizes); 3 fewer than three images show the whole board.\n";

#define MIN_BOARDS 3

typedef struct shot {
    const char *path;
    char station[TRAM_PIXEL_STATION_ID_MAX + 8]; /* longer ids are refused by the writer */
    tram_detection *det;
} shot;

static const char *base_name(const char *path)
{
    const char *s = strrchr(path, '/');
    return s ? s + 1 : path;
}

/* A station id must survive the CSV: no separator, quote or control
 * character, and not empty. */
static int station_ok(const char *s)
{
    if (!*s || *s == '#' || *s == ' ' || strlen(s) >= TRAM_PIXEL_STATION_ID_MAX) return 0;
    for (; *s; s++)
        if (*s == ',' || *s == '"' || (unsigned char)*s < 0x20) return 0;
    return 1;
}

static void default_station(const char *path, char *out, size_t size)
{
    snprintf(out, size, "%s", base_name(path));
    char *dot = strrchr(out, '.');
    if (dot && dot != out) *dot = '\0';
}

/* The --stations file: a header "image,station", then one line per image
 * (the image as given on the command line, or its file name). */
static int read_stations(const char *file, shot *shots, int n)
{
    FILE *f = fopen(file, "r");
    if (!f) {
        fprintf(stderr, "%s: error: cannot open: %s\n", file, strerror(errno));
        return CLI_EXIT_USAGE;
    }
    char line[1024];
    long ln = 0;
    int rc = CLI_EXIT_OK, header = 0;
    long *from = calloc((size_t)n, sizeof *from);
    while (rc == CLI_EXIT_OK && from && fgets(line, sizeof line, f)) {
        ln++;
        size_t len = strlen(line);
        if (len && line[len - 1] == '\n') line[--len] = '\0';
        if (len && line[len - 1] == '\r') line[--len] = '\0';
        if (len == 0 || line[0] == '#') continue;
        if (!header) {
            if (strcmp(line, "image,station") != 0) {
                fprintf(stderr, "%s:%ld: error: expected the header 'image,station'\n", file, ln);
                rc = CLI_EXIT_USAGE;
            }
            header = 1;
            continue;
        }
        char *comma = strchr(line, ',');
        if (!comma || strchr(comma + 1, ',') || comma == line || !station_ok(comma + 1)) {
            fprintf(stderr, "%s:%ld: error: expected IMAGE,STATION (a station id of at most %d "
                            "characters without commas, quotes or control characters)\n",
                    file, ln, TRAM_PIXEL_STATION_ID_MAX - 1);
            rc = CLI_EXIT_USAGE;
            break;
        }
        *comma = '\0';
        int matched = 0;
        for (int i = 0; i < n; i++)
            if (strcmp(line, shots[i].path) == 0 || strcmp(line, base_name(shots[i].path)) == 0) {
                if (from[i]) {
                    fprintf(stderr, "%s:%ld: error: image '%s' named again (first at line %ld)\n",
                            file, ln, line, from[i]);
                    rc = CLI_EXIT_USAGE;
                    break;
                }
                from[i] = ln;
                snprintf(shots[i].station, sizeof shots[i].station, "%s", comma + 1);
                matched = 1;
            }
        (void)matched; /* lines for images not in this run are allowed */
    }
    if (rc == CLI_EXIT_OK && !header) {
        fprintf(stderr, "%s:%ld: error: expected the header 'image,station'\n", file, ln + 1);
        rc = CLI_EXIT_USAGE;
    }
    for (int i = 0; rc == CLI_EXIT_OK && from && i < n; i++)
        if (!from[i]) {
            fprintf(stderr, "%s: error: no station for image '%s'\n", file, shots[i].path);
            rc = CLI_EXIT_USAGE;
        }
    if (!from) rc = CLI_EXIT_USAGE;
    free(from);
    fclose(f);
    return rc;
}

/* Read and search every image; stop at the first that cannot be read. */
static int detect_all(const tram_board *b, shot *shots, int n, size_t *w, size_t *h)
{
    tram_detect_options opt;
    tram_detect_options_init(&opt);
    for (int i = 0; i < n; i++) {
        tram_error err;
        tram_error_clear(&err);
        tram_grey_image *im = NULL;
        tram_status st = tram_grey_image_read_file(shots[i].path, &im, &err);
        if (st != TRAM_OK) {
            cli_report(&err);
            fprintf(stderr, "tram detect: error: %s cannot be used; nothing written\n", shots[i].path);
            return CLI_EXIT_USAGE;
        }
        if (i == 0) {
            *w = im->width;
            *h = im->height;
        } else if (im->width != *w || im->height != *h) {
            fprintf(stderr, "%s: error: image size %zux%zu differs from %s (%zux%zu); one run takes "
                            "images of one size (one camera at one resolution)\n",
                    shots[i].path, im->width, im->height, shots[0].path, *w, *h);
            tram_grey_image_destroy(im);
            return CLI_EXIT_USAGE;
        }
        st = tram_detect_chessboard(im, b, &opt, &shots[i].det, &err);
        tram_grey_image_destroy(im);
        if (st != TRAM_OK) {
            cli_report(&err);
            return cli_exit_for(st);
        }
    }
    return CLI_EXIT_OK;
}

static void report_text(const shot *shots, int n, size_t w, size_t h, int found)
{
    for (int i = 0; i < n; i++) {
        const tram_detection *d = shots[i].det;
        if (d->found)
            fprintf(stderr, "%s: station %s: found, %zu corners, edge blur %.2f px\n", shots[i].path,
                    shots[i].station, d->ncorners, d->sharpness);
        else
            fprintf(stderr, "%s: station %s: not found (%s); %zu corners of a lattice seen\n",
                    shots[i].path, shots[i].station, d->reason[0] ? d->reason : "no reason given",
                    d->nseen);
    }
    fprintf(stderr, "detect: board found in %d of %d images (%zux%zu pixels); pixel convention: "
                    "(0, 0) is the centre of the top-left pixel, u right, v down\n",
            found, n, w, h);
}

/* The run's JSON report (tram/image.h) on stdout. */
static int report_json(const shot *shots, int n, size_t w, size_t h, const char *board_path,
                       const tram_board *b, const char *out_path)
{
    size_t m = n > 0 ? (size_t)n : 1;
    const char **paths = malloc(m * sizeof *paths), **ids = malloc(m * sizeof *ids);
    const tram_detection **dets = malloc(m * sizeof *dets);
    char *text = NULL;
    tram_error err;
    tram_status st = TRAM_ENOMEM;
    snprintf(err.message, sizeof err.message, "out of memory");
    if (paths && ids && dets) {
        for (int i = 0; i < n; i++) {
            paths[i] = shots[i].path;
            ids[i] = shots[i].station;
            dets[i] = shots[i].det;
        }
        tram_detect_report r = {b, board_path, w, h, (size_t)n, paths, ids, dets, out_path};
        st = tram_detect_report_to_json(&r, &text, &err);
    }
    free(paths);
    free(ids);
    free(dets);
    if (st != TRAM_OK) {
        fprintf(stderr, "tram detect: error: %s\n", err.message);
        return CLI_EXIT_USAGE;
    }
    fputs(text, stdout);
    tram_free(text);
    return CLI_EXIT_OK;
}

/* The observation file (format tram-pixels-1), through the io layer's
 * writer so that the format is produced and read by one module. */
static char *obs_text(const shot *shots, int n, size_t w, size_t h, const char *board_path,
                      tram_error *err)
{
    tram_pixel_obs *obs = NULL;
    char *text = NULL;
    /* the board directive is informational and short: the path as given,
     * else its file name, else left out */
    const char *bname = strlen(board_path) < 80 ? board_path : base_name(board_path);
    if (strlen(bname) >= 80 || strpbrk(bname, "\r\n")) bname = NULL;
    tram_status st = tram_pixel_obs_create(w, h, bname, &obs, err);
    for (int i = 0; st == TRAM_OK && i < n; i++) {
        const tram_detection *d = shots[i].det;
        for (size_t k = 0; st == TRAM_OK && d->found && k < d->ncorners; k++) {
            char id[24];
            snprintf(id, sizeof id, "%zu", k);
            st = tram_pixel_obs_add(obs, shots[i].station, id, d->uv[2 * k], d->uv[2 * k + 1], err);
        }
    }
    if (st == TRAM_OK) st = tram_pixel_obs_write(obs, &text, err);
    tram_pixel_obs_destroy(obs);
    return st == TRAM_OK ? text : NULL;
}

/* DIR and NAME joined with one slash. */
static void join(char *out, size_t size, const char *dir, const char *name)
{
    size_t dl = strlen(dir);
    while (dl > 1 && dir[dl - 1] == '/') dl--;
    snprintf(out, size, "%.*s%s%s", (int)dl, dir, dir[dl - 1] == '/' ? "" : "/", name);
}

/* Refuse existing outputs before any work is done. */
static int refuse_existing(const char *o, const char *dir, const shot *shots, int n, int force)
{
    struct stat sb;
    if (force) return CLI_EXIT_OK;
    if (o && stat(o, &sb) == 0) {
        fprintf(stderr, "%s: error: already exists; not overwritten (pass --force to replace it)\n", o);
        return CLI_EXIT_USAGE;
    }
    char path[4096];
    for (int i = 0; dir && i <= n; i++) {
        char name[200];
        snprintf(name, sizeof name, "%s-corners.png", i < n ? shots[i].station : "");
        join(path, sizeof path, dir, i < n ? name : "coverage.png");
        if (stat(path, &sb) == 0) {
            fprintf(stderr, "%s: error: already exists; not overwritten (pass --force to replace it)\n", path);
            return CLI_EXIT_USAGE;
        }
    }
    return CLI_EXIT_OK;
}

static int write_pictures(const char *dir, const tram_board *b, const shot *shots, int n, size_t w,
                          size_t h, int force)
{
    if (mkdir(dir, 0755) != 0 && errno != EEXIST) {
        fprintf(stderr, "%s: error: cannot create the picture directory: %s\n", dir, strerror(errno));
        return CLI_EXIT_USAGE;
    }
    char path[4096];
    tram_error err;
    tram_error_clear(&err);
    const tram_detection **dets = calloc((size_t)n, sizeof *dets);
    if (!dets) return CLI_EXIT_USAGE;
    tram_status st = TRAM_OK;
    for (int i = 0; st == TRAM_OK && i < n; i++) {
        dets[i] = shots[i].det;
        tram_grey_image *im = NULL;
        tram_image *pic = NULL;
        char name[200];
        snprintf(name, sizeof name, "%s-corners.png", shots[i].station);
        join(path, sizeof path, dir, name);
        st = tram_grey_image_read_file(shots[i].path, &im, &err);
        if (st == TRAM_OK) st = tram_plot_detection(im, b, shots[i].det, shots[i].path, &pic, &err);
        if (st == TRAM_OK) st = tram_image_write_png(pic, path, force, &err);
        if (st == TRAM_OK) fprintf(stderr, "picture: %s\n", path);
        tram_image_destroy(pic);
        tram_grey_image_destroy(im);
    }
    if (st == TRAM_OK) {
        tram_plot_coverage_data cd = {w, h, (size_t)n, dets, b, "corners of every board found"};
        tram_image *pic = NULL;
        join(path, sizeof path, dir, "coverage.png");
        st = tram_plot_coverage(&cd, &pic, &err);
        if (st == TRAM_OK) st = tram_image_write_png(pic, path, force, &err);
        if (st == TRAM_OK) fprintf(stderr, "picture: %s\n", path);
        tram_image_destroy(pic);
    }
    free(dets);
    if (st != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    return CLI_EXIT_OK;
}

static int check_stations(const shot *shots, int n)
{
    for (int i = 0; i < n; i++) {
        if (!station_ok(shots[i].station)) {
            fprintf(stderr, "%s: error: station id '%s' (from the file name) cannot be written to "
                            "the observation file (empty, longer than %d characters, a leading blank or '#', "
                            "a comma, quote or control character); "
                            "name it with --stations\n", shots[i].path, shots[i].station,
                    TRAM_PIXEL_STATION_ID_MAX - 1);
            return CLI_EXIT_USAGE;
        }
        for (int k = 0; k < i; k++)
            if (strcmp(shots[i].station, shots[k].station) == 0) {
                fprintf(stderr, "%s: error: station '%s' is also %s's; name the stations with "
                                "--stations\n", shots[i].path, shots[i].station, shots[k].path);
                return CLI_EXIT_USAGE;
            }
    }
    return CLI_EXIT_OK;
}

static int run(const char *board_path, const char *o, const char *plot, int json, int force,
               shot *shots, int n)
{
    tram_error err;
    tram_error_clear(&err);
    tram_board b;
    if (tram_board_read_file(board_path, &b, &err) != TRAM_OK) {
        cli_report(&err);
        return CLI_EXIT_USAGE;
    }
    int rc = refuse_existing(o, plot, shots, n, force);
    if (rc != CLI_EXIT_OK) return rc;
    size_t w = 0, h = 0;
    rc = detect_all(&b, shots, n, &w, &h);
    if (rc != CLI_EXIT_OK) return rc;
    int found = 0;
    for (int i = 0; i < n; i++) found += shots[i].det->found != 0;
    if (!json || found < MIN_BOARDS) report_text(shots, n, w, h, found);
    if (plot) {
        rc = write_pictures(plot, &b, shots, n, w, h, force);
        tram_plot_shutdown();
        if (rc != CLI_EXIT_OK) return rc;
    }
    if (found < MIN_BOARDS) {
        fprintf(stderr, "tram detect: the whole board was found in %d image%s; at least %d are needed "
                        "to use the observations; no observation file written\n",
                found, found == 1 ? "" : "s", MIN_BOARDS);
        return CLI_EXIT_UNDETERMINED;
    }
    char *text = obs_text(shots, n, w, h, board_path, &err);
    if (!text) {
        cli_report(&err);
        return cli_exit_for(err.status);
    }
    if (o) {
        if (tram_file_write_atomic(o, text, strlen(text), force, &err) != TRAM_OK) {
            free(text);
            cli_report(&err);
            return CLI_EXIT_USAGE;
        }
        fprintf(stderr, "observations: %s\n", o);
    } else if (!json) {
        fputs(text, stdout);
    }
    free(text);
    if (json) return report_json(shots, n, w, h, board_path, &b, o);
    return CLI_EXIT_OK;
}

int cli_detect(int argc, char **argv)
{
    const char *board = NULL, *o = NULL, *plot = NULL, *stations = NULL;
    int json = 0, force = 0, bad = 0, n = 0;
    shot *shots = calloc((size_t)argc, sizeof *shots);
    if (!shots) return CLI_EXIT_USAGE;
    int rc = CLI_EXIT_OK;
    for (int i = 1; i < argc && rc == CLI_EXIT_OK; i++) {
        if (cli_take(argc, argv, &i, "--board", &board, &bad)) {
        } else if (cli_take(argc, argv, &i, "-o", &o, &bad)) {
        } else if (cli_take(argc, argv, &i, "--plot", &plot, &bad)) {
        } else if (cli_take(argc, argv, &i, "--stations", &stations, &bad)) {
        } else if (cli_flag(argv, i, "--json")) {
            json = 1;
        } else if (cli_flag(argv, i, "--force")) {
            force = 1;
        } else if (argv[i][0] == '-' && argv[i][1]) {
            rc = cli_usage_error("detect", "unknown option '%s'", argv[i]);
        } else {
            shots[n].path = argv[i];
            default_station(argv[i], shots[n].station, sizeof shots[n].station);
            n++;
        }
        if (bad) rc = CLI_EXIT_USAGE;
    }
    if (rc == CLI_EXIT_OK && !board) rc = cli_usage_error("detect", "--board BOARD.json is required");
    if (rc == CLI_EXIT_OK && n == 0) rc = cli_usage_error("detect", "no images given");
    if (rc == CLI_EXIT_OK && stations) rc = read_stations(stations, shots, n);
    if (rc == CLI_EXIT_OK) rc = check_stations(shots, n);
    if (rc == CLI_EXIT_OK) rc = run(board, o, plot, json, force, shots, n);
    for (int i = 0; i < n; i++) tram_detection_destroy(shots[i].det);
    free(shots);
    return rc;
}
