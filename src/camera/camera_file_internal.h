/*
 * camera_file_internal.h - the camera file's document (camera_file.c)
 * built into a larger document, e.g. embedded in the intrinsics report.
 */
#ifndef TRAM_CAMERA_FILE_INTERNAL_H
#define TRAM_CAMERA_FILE_INTERNAL_H

#include "tram/camera.h"
#include "io/json_internal.h"

/* The camera file's document of c (with cal's block when present) added
 * to parent under key, as tram_camera_to_json writes it; TRAM_EINPUT for
 * a camera or calibration no file may hold.  Allocation failures are
 * recorded in b. */
tram_status tram__camera_add_json(tram__jb *b, cJSON *parent, const char *key, const tram_camera *c,
                                  const tram_camera_calib *cal, tram_error *err);

#endif
