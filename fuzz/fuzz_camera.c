/*
 * fuzz_camera.c - libFuzzer harness for camera files (tram-camera,
 * version 1, docs/camera.md): whatever reads must write and read back to
 * the same camera and calibration block.
 */
#include "fuzz_common.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    tram_camera c, b;
    tram_camera_calib cal, bcal;
    tram_error err;
    tram_error_clear(&err);
    if (tram_camera_read_buffer("fuzz.json", (const char *)data, size, &c, &cal, &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    char *text = NULL;
    if (tram_camera_to_json(&c, &cal, &text, &err) != TRAM_OK) {
        fuzz_check_error(&err);
        return 0;
    }
    if (tram_camera_read_buffer("back.json", text, strlen(text), &b, &bcal, &err) != TRAM_OK) {
        fprintf(stderr, "fuzz: written camera file does not read back: %s\n", err.message);
        abort();
    }
    int same = b.distortion == c.distortion && b.width == c.width && b.height == c.height &&
               bcal.present == cal.present && bcal.rms_px == cal.rms_px;
    for (int k = 0; same && k < TRAM_CAM_NPARAM; k++)
        same = tram_camera_param(&b, k) == tram_camera_param(&c, k) &&
               bcal.sigma[k] == cal.sigma[k] && bcal.free_param[k] == cal.free_param[k];
    if (!same) {
        fprintf(stderr, "fuzz: camera file round trip changed the camera\n");
        abort();
    }
    free(text);
    return 0;
}
