/*
 * detect_json.c - the JSON report of a detection run over several images
 * (tram detect --json; schema: docs/images.md): the board, the pixel
 * convention, and each image's result.  Built through json_internal.h, so
 * a failed allocation never yields a partial document.
 */
#include "tram/image.h"
#include "io/json_internal.h"

tram_status tram_detect_report_to_json(const tram_detect_report *r, char **text, tram_error *err)
{
    tram__jb b = {0};
    cJSON *root = cJSON_CreateObject();
    if (!root) b.failed = 1;
    tram__jb_str(&b, root, "format", "tram-detect-report");
    tram__jb_num(&b, root, "version", 1);
    tram__jb_str(&b, root, "tool", "tram " TRAM_VERSION_STRING);
    cJSON *bo = tram__jb_obj(&b, root, "board");
    tram__jb_str(&b, bo, "file", r->board_path);
    tram__jb_num(&b, bo, "cols", r->board->cols);
    tram__jb_num(&b, bo, "rows", r->board->rows);
    tram__jb_num(&b, bo, "square", r->board->square);
    tram__jb_str(&b, bo, "length_unit", tram_unit_length_name(r->board->unit));
    tram__jb_str(&b, root, "pixel_origin", "top-left-pixel-centre");
    tram__jb_str(&b, root, "pixel_convention",
                 "(0, 0) is the centre of the top-left pixel; u to the right, v down");
    double size[2] = {(double)r->width, (double)r->height};
    tram__jb_vec(&b, root, "image_size", size, 2, 1);
    size_t found = 0;
    for (size_t i = 0; i < r->n; i++) found += r->detections[i]->found != 0;
    tram__jb_num(&b, root, "images_total", (double)r->n);
    tram__jb_num(&b, root, "boards_found", (double)found);
    if (r->observations_path) tram__jb_str(&b, root, "observations", r->observations_path);
    else tram__jb_null(&b, root, "observations");
    cJSON *arr = tram__jb_arr(&b, root, "images");
    for (size_t i = 0; i < r->n; i++) {
        const tram_detection *d = r->detections[i];
        cJSON *o = tram__jb_obj(&b, arr, NULL);
        tram__jb_str(&b, o, "image", r->image_paths[i]);
        tram__jb_str(&b, o, "station", r->stations[i]);
        tram__jb_bool(&b, o, "found", d->found);
        tram__jb_num(&b, o, "corners", (double)d->ncorners);
        tram__jb_num(&b, o, "corners_seen", (double)d->nseen);
        /* the detector's sharpness: edge blur in pixels, lower is sharper */
        if (d->found) tram__jb_num(&b, o, "edge_blur_px", d->sharpness);
        else tram__jb_null(&b, o, "edge_blur_px");
        if (!d->found) tram__jb_str(&b, o, "reason", d->reason);
    }
    return tram__jb_finish(&b, root, 1, 1, text, err);
}
