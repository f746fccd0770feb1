/*
 * report.c - tram_report_write_pdf: gathers what the calibration report
 * shows (the calibration, the hashes of its input files, the pictures)
 * and lays the document out twice on a cairo PDF surface - once to count
 * the pages, once with "page i of n" in every footer - then writes it
 * atomically.  The layout is in report_sections.c and report_doc.c.
 */
#include "tram/fileio.h"
#include "io/sha256_internal.h"
#include "io/text_internal.h"
#include "report/report_sections_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define PT_PER_MM (72.0 / 25.4)

static tram_status check_options(const tram_report_options *opt, tram_error *err)
{
    if (tram_euler_name(opt->euler)[0] == 'u' || opt->euler == TRAM_EULER_UNSET)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "the report needs an Euler convention for its angles (e.g. "
                          "zyx-intrinsic or xyz-extrinsic); none is assumed");
    if (!opt->page.named)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "report page '%s': expected a4 or letter", opt->page.name);
    const char *t = opt->date_utc;
    if (!t || strlen(t) != 20 || t[4] != '-' || t[7] != '-' || t[10] != 'T' || t[19] != 'Z')
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                          "report date '%s': expected YYYY-MM-DDTHH:MM:SSZ (UTC)", t ? t : "");
    return TRAM_OK;
}

/* The hash of a file read whole; found = 0 (and a note) when it cannot
 * be read. */
static void hash_file(tram__report_file *f, const char *role, const char *path, char **keep,
                      size_t *keep_len)
{
    snprintf(f->role, sizeof f->role, "%s", role);
    snprintf(f->path, sizeof f->path, "%s", path);
    char *data;
    size_t len;
    tram_error e;
    tram_error_clear(&e);
    if (tram__read_all(path, &data, &len, &e) != TRAM_OK) {
        snprintf(f->note, sizeof f->note, "not readable when the report was made (%.100s)",
                 e.message);
        return;
    }
    f->found = 1;
    f->bytes = len;
    tram__sha256_hex(data, len, f->sha256);
    if (keep) {
        *keep = data;
        *keep_len = len;
    } else {
        tram__free(data);
    }
}

/* The record file the calibration was solved from, checked against the
 * FNV-1a checksum stored with the calibration. */
static void hash_records(tram__report_file *f, const tram_calibration *cal)
{
    char *data = NULL;
    size_t len = 0;
    hash_file(f, "records (solved)", cal->input_source, &data, &len);
    if (!f->found) return;
    char hex[24];
    snprintf(hex, sizeof hex, "%016llx", tram__fnv1a64(data, len));
    tram__free(data);
    if (!cal->checksum[0])
        snprintf(f->note, sizeof f->note, "the calibration holds no checksum to compare with");
    else if (strcmp(hex, cal->checksum) == 0)
        snprintf(f->note, sizeof f->note, "the same bytes as solved (FNV-1a %s)", hex);
    else
        snprintf(f->note, sizeof f->note,
                 "CHANGED since the calibration (FNV-1a %s, the calibration has %s)", hex,
                 cal->checksum);
}

/* Station flags of the input stations, matched by id to the residuals. */
static int outlier_of(const tram_calibration *cal, const char *id)
{
    for (size_t i = 0; i < cal->nresiduals; i++)
        if (strcmp(cal->residuals[i].station, id) == 0) return cal->residuals[i].outlier;
    return 0;
}

static tram_status draw_pictures(tram__report_ctx *c, tram_error *err)
{
    const tram_calibration *cal = c->cal;
    size_t n = cal->ninput > cal->nresiduals ? cal->ninput : cal->nresiduals;
    const char **ids = tram__calloc(n ? n : 1, sizeof *ids);
    int *out = tram__calloc(n ? n : 1, sizeof *out);
    double *rot = tram__calloc(n ? 2 * n : 1, sizeof *rot);
    tram_status st = ids && out && rot ? TRAM_OK : tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    if (st == TRAM_OK && cal->ninput > 0) {
        for (size_t i = 0; i < cal->ninput; i++) {
            ids[i] = cal->input_ids[i];
            out[i] = outlier_of(cal, cal->input_ids[i]);
        }
        tram_plot_frames_data fd = {0};
        fd.n = cal->ninput;
        fd.T_base_flange = cal->input_T_base_flange;
        fd.ids = ids;
        fd.outlier = out;
        fd.setup = cal->setup;
        fd.has_solution = 1;
        fd.X = cal->X;
        fd.Z = cal->Z;
        fd.length_unit = cal->length_unit;
        fd.title = "stations, sensor and target";
        st = tram_plot_frames(&fd, 1100, 700, &c->frames, err);
    }
    int finite = 1;
    for (size_t i = 0; i < cal->nresiduals; i++)
        finite &= isfinite(cal->residuals[i].rotation_deg) && isfinite(cal->residuals[i].translation);
    if (st == TRAM_OK && cal->nresiduals > 0 && finite) {
        double *tr = rot + cal->nresiduals;
        for (size_t i = 0; i < cal->nresiduals; i++) {
            ids[i] = cal->residuals[i].station;
            out[i] = cal->residuals[i].outlier;
            rot[i] = cal->residuals[i].rotation_deg;
            tr[i] = cal->residuals[i].translation;
        }
        tram_plot_residuals_data rd = {0};
        rd.n = cal->nresiduals;
        rd.ids = ids;
        rd.rot_deg = rot;
        rd.trans = tr;
        rd.outlier = out;
        rd.length_unit = cal->length_unit;
        rd.title = "residual of each station";
        st = tram_plot_residuals(&rd, 1100, 700, &c->residuals, err);
    }
    tram__free(ids);
    tram__free(out);
    tram__free(rot);
    return st;
}

static tram_status draw_history(tram__report_ctx *c, tram_error *err)
{
    const tram_check_history *h = c->history;
    int *alarm = tram__calloc(h->n ? h->n : 1, sizeof *alarm);
    if (!alarm) return tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
    for (size_t i = 0; i < h->n; i++) alarm[i] = h->verdict[i] != TRAM_VERDICT_OK;
    tram_plot_history_data hd = {0};
    hd.n = h->n;
    hd.time_s = h->time_s;
    hd.trans = h->translation_norm;
    hd.rot_deg = h->rotation_angle_deg;
    hd.alarm = alarm;
    hd.length_unit = h->length_unit;
    hd.title = "mount checks";
    tram_status st = tram_plot_history(&hd, 1100, 560, &c->history_img, err);
    tram__free(alarm);
    return st;
}

/* One layout pass; doc->pdf.buf holds the PDF bytes on success. */
static tram_status lay_out(const tram__report_ctx *c, int total, tram__doc *doc, int *pages,
                           tram_error *err)
{
    const tram_plot_page *pg = &c->opt->page;
    memset(doc, 0, sizeof *doc);
    doc->total = total;
    snprintf(doc->footer, sizeof doc->footer, "tram calibration record - %.120s - %sNOT verified on the cell",
             c->cal->source, c->cal->trustworthy ? "" : "NOT trustworthy, ");
    char title[320];
    snprintf(title, sizeof title, "Hand-eye calibration record: %.200s", c->cal->source);
    tram_status st = tram__doc_open(doc, pg->width_mm * PT_PER_MM, pg->height_mm * PT_PER_MM,
                                    title, c->opt->date_utc, err);
    if (st != TRAM_OK) return st;
    tram__report_lay_out(doc, c);
    *pages = doc->page;
    return tram__doc_close(doc, err);
}

static tram_status read_inputs(const char *calibration_path, tram__report_ctx *c,
                               tram_calibration **cal, tram_check_history **hist, tram_error *err)
{
    char *data = NULL;
    size_t len = 0;
    tram_status st = tram__read_all(calibration_path, &data, &len, err);
    if (st != TRAM_OK) return st;
    tram__report_file *f = &c->files[c->nfiles++];
    snprintf(f->role, sizeof f->role, "calibration");
    snprintf(f->path, sizeof f->path, "%s", calibration_path);
    f->found = 1;
    f->bytes = len;
    tram__sha256_hex(data, len, f->sha256);
    st = tram_calibration_read_buffer(calibration_path, data, len, cal, err);
    tram__free(data);
    if (st != TRAM_OK) return st;
    c->cal = *cal;
    if ((*cal)->input_source[0]) hash_records(&c->files[c->nfiles++], *cal);
    if (c->opt->history_path) {
        st = tram_check_history_read_file(c->opt->history_path, hist, err);
        if (st != TRAM_OK) return st;
        c->history = *hist;
        hash_file(&c->files[c->nfiles++], "check history", c->opt->history_path, NULL, NULL);
    }
    return TRAM_OK;
}

tram_status tram_report_write_pdf(const char *calibration_path, const tram_report_options *opt,
                                  const char *pdf_path, int overwrite, int *pages, tram_error *err)
{
    if (pages) *pages = 0;
    tram_status st = check_options(opt, err);
    if (st != TRAM_OK) return st;
    tram__report_ctx c;
    memset(&c, 0, sizeof c);
    c.opt = opt;
    tram_calibration *cal = NULL;
    tram_check_history *hist = NULL;
    st = read_inputs(calibration_path, &c, &cal, &hist, err);
    if (st == TRAM_OK) {
        int eih = cal->setup == TRAM_SETUP_EYE_IN_HAND;
        c.X_name = eih ? "T_flange_sensor" : "T_base_sensor";
        c.Z_name = eih ? "T_base_target" : "T_flange_target";
        st = draw_pictures(&c, err);
    }
    if (st == TRAM_OK && hist && hist->n > 0) st = draw_history(&c, err);
    tram__doc doc;
    int n = 0;
    if (st == TRAM_OK) st = lay_out(&c, 0, &doc, &n, err); /* count the pages */
    if (st == TRAM_OK) {
        tram__membuf_free(&doc.pdf.buf);
        st = lay_out(&c, n, &doc, &n, err);
    }
    if (st == TRAM_OK) {
        st = tram_file_write_atomic(pdf_path, (const char *)doc.pdf.buf.p, doc.pdf.buf.n, overwrite,
                                    err);
        tram__membuf_free(&doc.pdf.buf);
    }
    if (st == TRAM_OK && pages) *pages = n;
    tram_image_destroy(c.frames);
    tram_image_destroy(c.residuals);
    tram_image_destroy(c.history_img);
    tram_check_history_destroy(hist);
    tram_calibration_destroy(cal);
    return st;
}

tram_status tram_report_date_now(char *out, size_t cap, tram_error *err)
{
    if (cap) out[0] = '\0';
    time_t t = time(NULL);
    const char *sde = getenv("SOURCE_DATE_EPOCH");
    if (sde && *sde) {
        char *end;
        long long v = strtoll(sde, &end, 10);
        if (*end || v < 0 || v > 253402300799LL) /* up to 9999-12-31 */
            return tram__fail(err, TRAM_EINPUT, NULL, 0, 0,
                              "SOURCE_DATE_EPOCH '%.100s': expected whole seconds since "
                              "1970-01-01T00:00:00Z",
                              sde);
        t = (time_t)v;
    }
    struct tm tmv;
    if (cap < 21 || !gmtime_r(&t, &tmv) || strftime(out, cap, "%Y-%m-%dT%H:%M:%SZ", &tmv) == 0)
        return tram__fail(err, TRAM_EINPUT, NULL, 0, 0, "report date: no room for the date");
    return TRAM_OK;
}
