/*
 * gen_images.c - the image scene of the demo: renders what the wrist
 * camera of the invented demo scenario sees at each station of
 * wrist_camera.csv, with the test renderer (tools/render/: Brown 1966
 * camera, supersampling, blur, lighting, noise, clutter on the table), and
 * writes the images with their ground truth.
 *
 * Usage: gen_images DEMO_DIR OUTDIR
 *   reads  DEMO_DIR/wrist_camera.csv   robot poses T_base_flange (taken as exact)
 *          DEMO_DIR/truth.json         wrist_camera.T_flange_sensor
 *          DEMO_DIR/truth_images.json  camera, board, T_base_target, render settings
 *   writes OUTDIR/STATION.png          one 8-bit grey image per station
 *          OUTDIR/truth.json           camera, board, and per image T_sensor_target
 *                                      and the true corner pixels (format
 *                                      tram-demo-images-truth, for tests)
 * Each station's camera pose is T_base_sensor = T_base_flange T_flange_sensor
 * and the board is seen at T_sensor_target = T_base_sensor^-1 T_base_target.
 * Not part of the product; the scene is invented for the demo.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "io/json_internal.h"
#include "render/render.h"
#include "tram/tram.h"

static int read_text(const char *path, char **text, size_t *len)
{
    FILE *f = fopen(path, "rb");
    if (!f) return -1;
    size_t cap = 1 << 16, n = 0;
    char *buf = malloc(cap);
    while (buf) {
        n += fread(buf + n, 1, cap - n, f);
        if (n < cap) break;
        char *p = realloc(buf, cap *= 2);
        if (!p) {
            free(buf);
            buf = NULL;
        } else buf = p;
    }
    fclose(f);
    if (!buf) return -1;
    *text = buf;
    *len = n;
    return 0;
}

static cJSON *read_json(const char *path)
{
    char *text;
    size_t len;
    cJSON *doc = NULL;
    tram_error err;
    if (read_text(path, &text, &len) != 0) {
        fprintf(stderr, "gen_images: cannot read %s\n", path);
        return NULL;
    }
    if (tram__json_parse(path, text, len, "truth file", &doc, &err) != TRAM_OK)
        fprintf(stderr, "gen_images: %s:%ld:%ld: %s\n", err.file, err.line, err.column, err.message);
    free(text);
    return doc;
}

/* obj.key as a number; missing or not a number is an error. */
static int num(const cJSON *obj, const char *key, double *v, const char *path)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
    if (!cJSON_IsNumber(it)) {
        fprintf(stderr, "gen_images: %s: expected a number \"%s\"\n", path, key);
        return -1;
    }
    *v = it->valuedouble;
    return 0;
}

static int matrix4(const cJSON *obj, const char *key, tram_se3 *T, const char *path)
{
    const cJSON *m = cJSON_GetObjectItemCaseSensitive(obj, key);
    if (cJSON_GetArraySize(m) != 4) goto bad;
    for (int i = 0; i < 4; i++) {
        const cJSON *row = cJSON_GetArrayItem(m, i);
        if (cJSON_GetArraySize(row) != 4) goto bad;
        for (int j = 0; j < 4; j++) {
            const cJSON *x = cJSON_GetArrayItem(row, j);
            if (!cJSON_IsNumber(x)) goto bad;
            T->m[i][j] = x->valuedouble;
        }
    }
    if (tram_se3_is_valid(T, 1e-9)) return 0;
bad:
    fprintf(stderr, "gen_images: %s: expected \"%s\" as a 4x4 rigid transform\n", path, key);
    return -1;
}

typedef struct scene_file {
    tram_board board;
    tram_camera camera;
    tram_se3 T_base_target;
    double seed, supersample, blur, noise, gain_min, gain_max, clutter, black, white, background;
    cJSON *occluded; /* array of station ids, owned by doc */
    cJSON *doc;
} scene_file;

static int read_scene(const char *path, scene_file *sf)
{
    memset(sf, 0, sizeof *sf);
    sf->doc = read_json(path);
    if (!sf->doc) return -1;
    const cJSON *b = cJSON_GetObjectItemCaseSensitive(sf->doc, "board");
    const cJSON *c = cJSON_GetObjectItemCaseSensitive(sf->doc, "camera");
    const cJSON *r = cJSON_GetObjectItemCaseSensitive(sf->doc, "render");
    double cols, rows, w, h;
    tram_camera *cam = &sf->camera;
    if (num(b, "cols", &cols, path) || num(b, "rows", &rows, path) ||
        num(b, "square", &sf->board.square, path) || num(c, "fx", &cam->fx, path) ||
        num(c, "fy", &cam->fy, path) || num(c, "cx", &cam->cx, path) ||
        num(c, "cy", &cam->cy, path) || num(c, "skew", &cam->skew, path) ||
        num(c, "k1", &cam->k1, path) || num(c, "k2", &cam->k2, path) ||
        num(c, "k3", &cam->k3, path) || num(c, "p1", &cam->p1, path) ||
        num(c, "p2", &cam->p2, path) || num(c, "width", &w, path) || num(c, "height", &h, path) ||
        num(r, "seed", &sf->seed, path) || num(r, "supersample", &sf->supersample, path) ||
        num(r, "blur_sigma_px", &sf->blur, path) || num(r, "noise_sigma", &sf->noise, path) ||
        num(r, "gain_min", &sf->gain_min, path) || num(r, "gain_max", &sf->gain_max, path) ||
        num(r, "clutter", &sf->clutter, path) || num(r, "black", &sf->black, path) ||
        num(r, "white", &sf->white, path) || num(r, "background", &sf->background, path) ||
        matrix4(sf->doc, "T_base_target", &sf->T_base_target, path))
        return -1;
    const cJSON *dist = cJSON_GetObjectItemCaseSensitive(c, "distortion");
    int d = cJSON_IsString(dist) ? tram_distortion_parse(dist->valuestring) : -1;
    if (d < 0 || !(w >= 1 && w <= 20000 && h >= 1 && h <= 20000) || !(cols >= 2 && cols <= 100) ||
        !(rows >= 2 && rows <= 100)) {
        fprintf(stderr, "gen_images: %s: bad camera distortion, image size or board size\n", path);
        return -1;
    }
    cam->distortion = (tram_distortion)d;
    cam->width = (size_t)w;
    cam->height = (size_t)h;
    sf->board.kind = TRAM_BOARD_CHESSBOARD;
    sf->board.cols = (int)cols;
    sf->board.rows = (int)rows;
    sf->board.unit = TRAM_LENGTH_MM;
    sf->occluded = cJSON_GetObjectItemCaseSensitive(sf->doc, "occluded_stations");
    return 0;
}

static int is_occluded(const scene_file *sf, const char *id)
{
    const cJSON *it;
    cJSON_ArrayForEach(it, sf->occluded)
        if (cJSON_IsString(it) && strcmp(it->valuestring, id) == 0) return 1;
    return 0;
}

static void camera_json(tram__jb *jb, cJSON *root, const tram_camera *c)
{
    cJSON *o = tram__jb_obj(jb, root, "camera");
    tram__jb_num(jb, o, "fx", c->fx);
    tram__jb_num(jb, o, "fy", c->fy);
    tram__jb_num(jb, o, "cx", c->cx);
    tram__jb_num(jb, o, "cy", c->cy);
    tram__jb_num(jb, o, "skew", c->skew);
    tram__jb_num(jb, o, "k1", c->k1);
    tram__jb_num(jb, o, "k2", c->k2);
    tram__jb_num(jb, o, "k3", c->k3);
    tram__jb_num(jb, o, "p1", c->p1);
    tram__jb_num(jb, o, "p2", c->p2);
    tram__jb_str(jb, o, "distortion", tram_distortion_name(c->distortion));
    tram__jb_num(jb, o, "width", (double)c->width);
    tram__jb_num(jb, o, "height", (double)c->height);
}

/* One station: render, write the PNG, add its truth to `images`. */
static int do_station(const scene_file *sf, const tram_station *st, unsigned long long idx,
                      const tram_se3 *T_flange_sensor,
                      const char *outdir, tram__jb *jb, cJSON *images, size_t *nfull)
{
    tram_se3 T_base_sensor, T_sensor_base, T_sensor_target;
    tram_se3_compose(&st->T_base_flange, T_flange_sensor, &T_base_sensor);
    tram_se3_invert(&T_base_sensor, &T_sensor_base);
    tram_se3_compose(&T_sensor_base, &sf->T_base_target, &T_sensor_target);
    render_scene s;
    render_scene_init(&s, &sf->board, &sf->camera, &T_sensor_target);
    s.seed = (unsigned long long)sf->seed * 1000ULL + idx; /* one seed per image */
    s.supersample = (int)sf->supersample;
    s.blur_sigma_px = sf->blur;
    s.noise_sigma = sf->noise;
    s.gain_min = sf->gain_min;
    s.gain_max = sf->gain_max;
    s.gain_angle_deg = (double)(s.seed % 360);
    s.clutter = (int)sf->clutter;
    s.black = sf->black;
    s.white = sf->white;
    s.background = sf->background;
    s.occluder = is_occluded(sf, st->id);
    tram_grey_image *im;
    render_truth t;
    tram_error err;
    char path[1200], name[128];
    snprintf(name, sizeof name, "%s.png", st->id);
    snprintf(path, sizeof path, "%s/%s", outdir, name);
    if (render_chessboard(&s, &im, &t, &err) != TRAM_OK ||
        render_png_write(im, path, &err) != TRAM_OK) {
        fprintf(stderr, "gen_images: %s: %s\n", st->id, err.message);
        return -1;
    }
    render_image_destroy(im);
    cJSON *o = tram__jb_obj(jb, images, NULL);
    tram__jb_str(jb, o, "station", st->id);
    tram__jb_str(jb, o, "file", name);
    tram__jb_matrix4(jb, o, "T_sensor_target", &T_sensor_target);
    tram__jb_bool(jb, o, "occluder", s.occluder);
    tram__jb_num(jb, o, "corners_inside", (double)t.ninside);
    tram__jb_num(jb, o, "corners_visible", (double)t.nvisible);
    tram__jb_num(jb, o, "square_px", t.square_px);
    cJSON *uv = tram__jb_arr(jb, o, "uv");
    cJSON *vis = tram__jb_arr(jb, o, "visible");
    for (size_t i = 0; i < t.ncorners; i++) {
        tram__jb_vec(jb, uv, NULL, &t.uv[2 * i], 2, 1.0);
        tram__jb_bool(jb, vis, NULL, t.inside[i] && !t.occluded[i]);
    }
    printf("gen_images: %s: %zu of %zu corners in view%s, squares %.0f px\n", st->id, t.nvisible,
           t.ncorners, s.occluder ? " (part of the board covered)" : "", t.square_px);
    *nfull += t.nvisible == t.ncorners;
    render_truth_free(&t);
    return 0;
}

static int write_truth(const char *outdir, cJSON *root, tram__jb *jb)
{
    char *text, path[1200];
    tram_error err;
    snprintf(path, sizeof path, "%s/truth.json", outdir);
    if (tram__jb_finish(jb, root, 1, 1, &text, &err) != TRAM_OK ||
        tram_file_write_atomic(path, text, strlen(text), 1, &err) != TRAM_OK) {
        fprintf(stderr, "gen_images: %s: %s\n", path, err.message);
        return -1;
    }
    free(text);
    return 0;
}

int main(int argc, char **argv)
{
    if (argc != 3) {
        fprintf(stderr, "usage: gen_images DEMO_DIR OUTDIR\n");
        return 2;
    }
    char path[1200];
    tram_se3 T_flange_sensor;
    scene_file sf;
    snprintf(path, sizeof path, "%s/truth.json", argv[1]);
    cJSON *truth = read_json(path);
    const cJSON *wrist = cJSON_GetObjectItemCaseSensitive(truth, "wrist_camera");
    int bad = !truth || matrix4(wrist, "T_flange_sensor", &T_flange_sensor, path) != 0;
    cJSON_Delete(truth);
    snprintf(path, sizeof path, "%s/truth_images.json", argv[1]);
    if (bad || read_scene(path, &sf) != 0) return 1;
    tram_records *rec = NULL;
    tram_read_options ro;
    tram_error err;
    memset(&ro, 0, sizeof ro);
    snprintf(path, sizeof path, "%s/wrist_camera.csv", argv[1]);
    if (tram_records_read_file(path, &ro, &rec, &err) != TRAM_OK || !rec->has_block[TRAM_BLOCK_ROBOT]) {
        fprintf(stderr, "gen_images: %s:%ld: %s\n", path, err.line, rec ? "no robot poses" : err.message);
        tram_records_destroy(rec);
        cJSON_Delete(sf.doc);
        return 1;
    }
    tram__jb jb = {0};
    cJSON *root = cJSON_CreateObject();
    tram__jb_str(&jb, root, "format", "tram-demo-images-truth");
    tram__jb_str(&jb, root, "comment",
                 "ground truth of the demo's rendered images (invented scenario; tools/gen_images.c). "
                 "uv: true pixel of corner id r*cols+c (centre of the top-left pixel is (0, 0)); "
                 "visible: inside the image and not covered");
    tram__jb_str(&jb, root, "length_unit", "mm");
    cJSON *bo = tram__jb_obj(&jb, root, "board");
    tram__jb_num(&jb, bo, "cols", sf.board.cols);
    tram__jb_num(&jb, bo, "rows", sf.board.rows);
    tram__jb_num(&jb, bo, "square", sf.board.square);
    camera_json(&jb, root, &sf.camera);
    tram__jb_matrix4(&jb, root, "T_flange_sensor", &T_flange_sensor);
    tram__jb_matrix4(&jb, root, "T_base_target", &sf.T_base_target);
    cJSON *images = tram__jb_arr(&jb, root, "images");
    size_t nfull = 0;
    int rc = 0;
    for (size_t i = 0; i < rec->count && rc == 0; i++)
        rc = do_station(&sf, &rec->stations[i], i, &T_flange_sensor, argv[2], &jb, images, &nfull);
    if (rc == 0) rc = write_truth(argv[2], root, &jb);
    else cJSON_Delete(root);
    if (rc == 0)
        printf("gen_images: %zu images in %s, %zu with the whole board in view; truth in %s/truth.json\n",
               rec->count, argv[2], nfull, argv[2]);
    tram_records_destroy(rec);
    cJSON_Delete(sf.doc);
    return rc ? 1 : 0;
}
