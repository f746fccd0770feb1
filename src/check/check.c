/*
 * check.c - the mount check: new stations against a stored calibration.
 *
 * With the generic form P_i X S_i = Z (tram/handeye.h) and the stored X, Z,
 * each new station predicts Zhat_i = P_i X S_i.  Its whitened residual r_i
 * (rotation vector of R_Z^T R_Zhat over the stored per-axis angle noise,
 * translation difference over the length noise) is what the tests use.
 *
 * Tests (false-alarm rate alpha = 0.01 in all, split over three tests by
 * Bonferroni's inequality, so each runs at alpha/3):
 *  - nothing changed: q0 = r^T (I + J C J^T)^-1 r over all stations, where J
 *    is the Jacobian of r with respect to the calibration's 12 parameters
 *    and C their stored covariance (Woodbury's identity keeps this 12x12);
 *    q0 ~ chi2(6n) when nothing moved.
 *  - a structured change: for each model (sensor moved: X' = (exp(w) R_X,
 *    t_X + d); target moved: Z' likewise, (w, d) in the frame the moved
 *    part is fixed to) the change is estimated by Gauss-Newton, and its
 *    significance q = D^T (H^-1 + C_cal)^-1 D ~ chi2(6) when nothing moved.
 *  "ok" when none of the three rejects (or, with --tolerance, when every
 *  station is within the tolerances).
 * Attribution: a model "fits" when its residual chi-square (with the
 * calibration covariance of the part it keeps) is below the chi2(6n - 6)
 * threshold.  Exactly one model fitting names the cause; both fitting -
 * or a single station, or stations whose orientations differ by less than
 * 5 degrees (common practice), which cannot separate a change fixed to the
 * flange from one fixed to the base - is "inconclusive"; neither fitting is
 * "inconsistent" (a robot, detection or data problem).
 * Chi-square quantiles by the Wilson-Hilferty approximation (1931).
 */
#include "math/so3_internal.h"
#include "tram/check.h"
#include "math/linalg_internal.h"
#include "solve/refine_internal.h"
#include "solve/pipeline_internal.h"
#include "solve/diagnose_internal.h"
#include "solve/pairing_internal.h"
#include "solve/plausibility_internal.h"
#include "math/stats_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define RAD2DEG (180.0 / TRAM_PI)
#define ALPHA 0.01
#define Z_ALPHA3 2.713052 /* normal quantile at 1 - 0.01/3 */
#define Z_STATION 3.090232 /* normal quantile at 0.999 */
#define MIN_SPREAD_DEG 5.0

double tram_check_chi2_quantile(double k, double z)
{
    double a = 2.0 / (9.0 * k);
    double c = 1.0 - a + z * sqrt(a);
    return k * c * c * c;
}

const char *tram_verdict_name(tram_verdict v)
{
    static const char *const names[] = {"ok", "sensor-moved", "target-moved", "inconsistent",
                                        "inconclusive"};
    return (int)v >= 0 && v <= TRAM_VERDICT_INCONCLUSIVE ? names[v] : "unknown";
}

int tram_verdict_parse(const char *name)
{
    for (int v = TRAM_VERDICT_OK; name && v <= TRAM_VERDICT_INCONCLUSIVE; v++)
        if (strcmp(name, tram_verdict_name((tram_verdict)v)) == 0) return v;
    return -1;
}

void tram_check_result_destroy(tram_check_result *res)
{
    if (!res) return;
    tram__free(res->stations);
    tram__free(res->diag);
    tram__free(res);
}

/* tram__diag_add works on a solution; the check keeps its own list. */
static tram_status add_diag(tram_check_result *res, const char *code, tram_severity sev,
                            const char *msg)
{
    tram_diagnostic *d = tram__realloc(res->diag, (res->ndiag + 1) * sizeof *d);
    if (!d) return TRAM_ENOMEM;
    res->diag = d;
    snprintf(d[res->ndiag].code, sizeof d[res->ndiag].code, "%s", code);
    d[res->ndiag].severity = sev;
    snprintf(d[res->ndiag].message, sizeof d[res->ndiag].message, "%s", msg);
    res->ndiag++;
    return TRAM_OK;
}

typedef struct ctx {
    const tram_se3 *P, *S;
    size_t n;
    tram_se3 X, Z;
    double inv_sa, inv_sl, ht;
    double C[144];  /* calibration covariance in the refinement's parameter order */
    int has_cov;
} ctx;

/* Public covariance order (X t, X w, Z t, Z w) to parameter order (X w, X t, Z w, Z t). */
static int param_of_pub(int a)
{
    int b = a / 6, k = a % 6;
    return b * 6 + (k < 3 ? 3 + k : k - 3);
}

/* Apply a change (w, d) in the parent frame of T: (exp(w) R, t + d). */
static void apply_change(const tram_se3 *T, const double ch[6], tram_se3 *out)
{
    tram_mat3 R, E;
    double t[3];
    tram_se3_to_rt(T, &R, t);
    tram_so3_exp(ch, &E);
    tram_so3_mul(&E, &R, &R);
    for (int i = 0; i < 3; i++) t[i] += ch[3 + i];
    tram_se3_from_rt(&R, t, out);
}

/* Whitened residuals of all stations at (X, Z); q = r^T (I + J C J^T)^-1 r
 * over the parameters selected by mask (12 flags, parameter order). */
static tram_status chi2_with_cov(const ctx *c, const tram_se3 *X, const tram_se3 *Z,
                                 const int mask[12], double *q, double *per_station)
{
    double H[144] = {0}, g[12] = {0}, rr = 0;
    for (size_t i = 0; i < c->n; i++) {
        double r[6], J[6][12];
        tram__refine_station_jacobian(&c->P[i], &c->S[i], X, Z, c->inv_sa, c->inv_sl, c->ht, r, J);
        double ri = 0;
        for (int k = 0; k < 6; k++) ri += r[k] * r[k];
        if (per_station) per_station[i] = ri;
        rr += ri;
        for (int a = 0; a < 12; a++) {
            for (int k = 0; k < 6; k++) g[a] += J[k][a] * r[k];
            for (int b = 0; b < 12; b++)
                for (int k = 0; k < 6; k++) H[a * 12 + b] += J[k][a] * J[k][b];
        }
    }
    *q = rr;
    if (!c->has_cov) return TRAM_OK;
    /* Woodbury on the selected parameters: r^T r - g^T (C^-1 + H)^-1 g. */
    int idx[12], m = 0;
    for (int a = 0; a < 12; a++)
        if (mask[a]) idx[m++] = a;
    if (m == 0) return TRAM_OK;
    double Cs[144], Ci[144], A[144], gs[12], x[12];
    for (int a = 0; a < m; a++) {
        gs[a] = g[idx[a]];
        for (int b = 0; b < m; b++) Cs[a * m + b] = c->C[idx[a] * 12 + idx[b]];
    }
    if (tram__spd_inverse(m, Cs, Ci) != TRAM_OK) return TRAM_OK; /* no usable covariance */
    for (int a = 0; a < m; a++)
        for (int b = 0; b < m; b++) A[a * m + b] = Ci[a * m + b] + H[idx[a] * 12 + idx[b]];
    if (tram__spd_solve(m, A, gs, x) != TRAM_OK) return TRAM_OK;
    double corr = 0;
    for (int a = 0; a < m; a++) corr += gs[a] * x[a];
    *q = rr - corr;
    return TRAM_OK;
}

/* Gauss-Newton for a change of X (which = 0) or Z (which = 1); fills the
 * change, its normal matrix H (6x6) and returns the moved transforms. */
static tram_status fit_change(const ctx *c, int which, double ch[6], double H6[36], tram_se3 *Xo,
                              tram_se3 *Zo)
{
    memset(ch, 0, 6 * sizeof *ch);
    for (int it = 0; it < 20; it++) {
        double H[36] = {0}, g[6] = {0}, dx[6], mg[6];
        for (size_t i = 0; i < c->n; i++) {
            double r0[6], J[6][6];
            tram_se3 X = c->X, Z = c->Z;
            apply_change(which ? &c->Z : &c->X, ch, which ? &Z : &X);
            tram__refine_residual(&c->P[i], &c->S[i], &X, &Z, r0);
            for (int p = 0; p < 6; p++) {
                double hp = p < 3 ? 1e-6 : c->ht, cp[6], rp[6], rm[6];
                tram_se3 Xp = c->X, Zp = c->Z;
                memcpy(cp, ch, sizeof cp);
                cp[p] += hp;
                apply_change(which ? &c->Z : &c->X, cp, which ? &Zp : &Xp);
                tram__refine_residual(&c->P[i], &c->S[i], &Xp, &Zp, rp);
                cp[p] -= 2 * hp;
                Xp = c->X;
                Zp = c->Z;
                apply_change(which ? &c->Z : &c->X, cp, which ? &Zp : &Xp);
                tram__refine_residual(&c->P[i], &c->S[i], &Xp, &Zp, rm);
                for (int k = 0; k < 6; k++)
                    J[k][p] = (rp[k] - rm[k]) / (2 * hp) * (k < 3 ? c->inv_sa : c->inv_sl);
            }
            for (int k = 0; k < 6; k++) r0[k] *= k < 3 ? c->inv_sa : c->inv_sl;
            for (int a = 0; a < 6; a++) {
                for (int k = 0; k < 6; k++) g[a] += J[k][a] * r0[k];
                for (int b = 0; b < 6; b++)
                    for (int k = 0; k < 6; k++) H[a * 6 + b] += J[k][a] * J[k][b];
            }
        }
        for (int a = 0; a < 6; a++) mg[a] = -g[a];
        memcpy(H6, H, sizeof H);
        if (tram__spd_solve(6, H, mg, dx) != TRAM_OK) return TRAM_ENUMERIC;
        double step = 0;
        for (int a = 0; a < 6; a++) {
            ch[a] += dx[a];
            step += dx[a] * dx[a];
        }
        if (step < 1e-24) break;
    }
    *Xo = c->X;
    *Zo = c->Z;
    apply_change(which ? &c->Z : &c->X, ch, which ? Zo : Xo);
    return TRAM_OK;
}

/* Calibration covariance of X (which = 0) or Z as (w, d) in the parent
 * frame: the rotation about own axes is mapped by R. */
static void parent_cov(const ctx *c, int which, double out[36])
{
    memset(out, 0, 36 * sizeof *out);
    if (!c->has_cov) return;
    tram_mat3 R;
    tram_se3_to_rt(which ? &c->Z : &c->X, &R, NULL);
    double T[36] = {0};
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) T[i * 6 + j] = R.m[i][j];
    for (int i = 3; i < 6; i++) T[i * 6 + i] = 1;
    int o = 6 * which;
    for (int a = 0; a < 6; a++)
        for (int b = 0; b < 6; b++) {
            double v = 0;
            for (int k = 0; k < 6; k++)
                for (int l = 0; l < 6; l++)
                    v += T[a * 6 + k] * c->C[(o + k) * 12 + o + l] * T[b * 6 + l];
            out[a * 6 + b] = v;
        }
}

static tram_status model(const ctx *c, int which, tram_change *m, double *per_station)
{
    double ch[6], H[36];
    tram_se3 X, Z;
    tram_status st = fit_change(c, which, ch, H, &X, &Z);
    if (st != TRAM_OK) return st;
    /* Residual chi-square with the covariance of the part kept fixed. */
    int mask[12] = {0};
    for (int a = 0; a < 6; a++) mask[(which ? 0 : 6) + a] = 1;
    chi2_with_cov(c, &X, &Z, mask, &m->fit_chi2, per_station);
    m->fit_threshold = tram_check_chi2_quantile((double)(6 * c->n) - 6.0 > 0 ? (double)(6 * c->n - 6) : 1.0, Z_ALPHA3);
    m->fits = m->fit_chi2 <= m->fit_threshold;
    /* Covariance of the change: the fit's plus the calibration's own. */
    double Hi[36], Cc[36], Ct[36], Cti[36];
    if (tram__spd_inverse(6, H, Hi) != TRAM_OK) return TRAM_ENUMERIC;
    parent_cov(c, which, Cc);
    for (int a = 0; a < 36; a++) Ct[a] = Hi[a] + Cc[a];
    m->significance = 0;
    if (tram__spd_inverse(6, Ct, Cti) == TRAM_OK)
        for (int a = 0; a < 6; a++)
            for (int b = 0; b < 6; b++) m->significance += ch[a] * Cti[a * 6 + b] * ch[b];
    for (int i = 0; i < 3; i++) {
        m->rotation_deg[i] = ch[i] * RAD2DEG;
        m->translation[i] = ch[3 + i];
        m->rotation_sigma_deg[i] = sqrt(fmax(Ct[i * 6 + i], 0)) * RAD2DEG;
        m->translation_sigma[i] = sqrt(fmax(Ct[(3 + i) * 6 + 3 + i], 0));
    }
    m->translation_norm = tram__norm3(m->translation);
    m->rotation_angle_deg = tram__norm3(ch) * RAD2DEG;
    return TRAM_OK;
}

/* ---- Before blaming the mount or the robot (docs/check.md) ----------- */

/* "Nothing changed" chi-square of the records re-read under conv. */
static tram_status reading_chi2(const tram_calibration *cal, const tram_records *src,
                                const tram_block_convention *conv, const ctx *base, double *chi2,
                                int *ok)
{
    *ok = 0;
    tram_records *r = tram_records_clone(src);
    if (!r) return TRAM_ENOMEM;
    tram_error e;
    tram_status st = TRAM_OK;
    if (tram_records_rebuild(r, conv, &e) == TRAM_OK) {
        tram_se3 *P, *S;
        st = tram__station_poses(r, cal->setup, &P, &S);
        if (st == TRAM_OK) {
            double f = tram_unit_length_factor(r->length_unit, cal->length_unit);
            for (size_t i = 0; i < r->count; i++) {
                tram_se3_scale_translation(&P[i], f, &P[i]);
                tram_se3_scale_translation(&S[i], f, &S[i]);
            }
            ctx c = *base;
            c.P = P;
            c.S = S;
            int all12[12] = {1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1};
            st = chi2_with_cov(&c, &cal->X, &cal->Z, all12, chi2, NULL);
            *ok = st == TRAM_OK && isfinite(*chi2);
            tram__free(P);
            tram__free(S);
        }
    }
    tram_records_destroy(r);
    return st;
}

/* The convention doctor's readings: one under which the stations agree
 * with the calibration (chi-square below the test's threshold), or - when
 * no rigid change explains them - one 25 times closer, is a mistake in
 * the record file, not a change of the cell.  *found is set. */
static tram_status search_conventions(const tram_calibration *cal, const tram_records *r,
                                      const ctx *c, tram_check_result *res, int *found)
{
    enum { CAP = 120 };
    *found = 0;
    tram__reading *rd = tram__malloc(CAP * sizeof *rd);
    if (!rd) return TRAM_ENOMEM;
    size_t nr = tram__convention_readings(r, cal->setup, rd, CAP), best = nr;
    double best_chi2 = INFINITY;
    tram_status st = TRAM_OK;
    for (size_t k = 0; k < nr && st == TRAM_OK; k++) {
        double q;
        int ok;
        st = reading_chi2(cal, r, rd[k].conv, c, &q, &ok);
        if (ok && q < best_chi2) {
            best_chi2 = q;
            best = k;
        }
    }
    if (st == TRAM_OK && best < nr &&
        (best_chi2 <= res->threshold_none ||
         (res->verdict == TRAM_VERDICT_INCONSISTENT && best_chi2 * 25.0 <= res->chi2_none))) {
        char msg[700];
        snprintf(msg, sizeof msg,
                 "%s: read that way the stations %s the calibration (chi2 %.1f against %.1f; as "
                 "declared %.1f). The deviations come from the record file, not from the mount "
                 "or the robot: fix the file and check again",
                 rd[best].fix, best_chi2 <= res->threshold_none ? "agree with" : "come far closer to",
                 best_chi2, res->threshold_none, res->chi2_none);
        st = add_diag(res, rd[best].code, TRAM_SEVERITY_WARNING, msg);
        res->verdict = TRAM_VERDICT_INCONCLUSIVE;
        *found = 1;
    }
    tram__free(rd);
    return st;
}

/* The pairing test's fit for a check: sensor rows permuted, both change
 * models fitted, the smaller median whitened station residual norm. */
typedef struct perm_ctx {
    const ctx *c;
    tram_se3 *Sp;
    double *per, *tmp;
} perm_ctx;

static tram_status perm_fit(const void *pctx, const size_t *perm, size_t n, double *med_rot,
                            double *med_tr)
{
    const perm_ctx *pc = pctx;
    ctx c = *pc->c;
    if (perm) {
        for (size_t i = 0; i < n; i++) pc->Sp[i] = pc->c->S[perm[i]];
        c.S = pc->Sp;
    }
    double best = INFINITY;
    for (int which = 0; which < 2; which++) {
        tram_change m;
        memset(&m, 0, sizeof m);
        if (model(&c, which, &m, pc->per) != TRAM_OK) continue;
        for (size_t i = 0; i < n; i++) pc->tmp[i] = sqrt(fmax(pc->per[i], 0));
        double med = tram__median(pc->tmp, n);
        if (med < best) best = med;
    }
    *med_rot = 0;
    *med_tr = best;
    return isfinite(best) ? TRAM_OK : TRAM_ENUMERIC;
}

/* Before a verdict other than ok: the convention search, the pairing test
 * and the plausibility gate; each that finds the data at fault makes the
 * verdict inconclusive with its reason.  *blamed: one of them did. */
static tram_status trust_checks(const tram_calibration *cal, const tram_records *r, const ctx *c,
                                const tram_check_options *opt, tram_check_result *res,
                                int *blamed)
{
    *blamed = 0;
    if (res->verdict == TRAM_VERDICT_OK || (opt && opt->no_plausibility)) return TRAM_OK;
    tram_status st = search_conventions(cal, r, c, res, blamed);
    if (st != TRAM_OK || *blamed) return st;
    tram_trust_options t;
    tram_trust_options_init(&t);
    size_t n = c->n, perms = opt && opt->pairing_permutations ? opt->pairing_permutations
                                                              : t.pairing_permutations;
    unsigned long long seed = opt && opt->seed ? opt->seed : 1;
    if (n >= 3) {
        perm_ctx pc = {c, tram__malloc(n * sizeof(tram_se3)), tram__malloc(2 * n * sizeof(double)),
                       NULL};
        if (!pc.Sp || !pc.per) {
            tram__free(pc.Sp);
            tram__free(pc.per);
            return TRAM_ENOMEM;
        }
        pc.tmp = pc.per + n;
        tram__pairing_result pr;
        st = tram__pairing_test(n, perms, seed, t.pairing_factor, 0, 1e-9, perm_fit, &pc, &pr);
        tram__free(pc.Sp);
        tram__free(pc.per);
        if (st != TRAM_OK) return st;
        if (pr.failed) {
            char msg[600];
            snprintf(msg, sizeof msg,
                     "the data cannot tell a change: with the robot and sensor rows paired at "
                     "random (%zu pairings, seed %llu) the best random pairing fits only %.2f "
                     "times worse than the file's (at least %.3g times is needed). Check that "
                     "each row pairs the robot pose with the sensor reading taken at it, and that "
                     "both come from the same session",
                     pr.permutations, seed, pr.ratio_trans, t.pairing_factor);
            res->verdict = TRAM_VERDICT_INCONCLUSIVE;
            *blamed = 1;
            return add_diag(res, "pairing-not-determined", TRAM_SEVERITY_WARNING, msg);
        }
    }
    if (res->verdict != TRAM_VERDICT_INCONSISTENT) return TRAM_OK;
    /* The gate on the deviations from the stored calibration. */
    double sr = 0, stt = 0;
    for (size_t i = 0; i < n; i++) {
        sr += tram__sq(res->stations[i].rot_deg);
        stt += tram__sq(res->stations[i].trans);
    }
    sr = sqrt(sr / (double)(n ? n : 1));
    stt = sqrt(stt / (double)(n ? n : 1));
    double wd = tram__working_distance(c->S, n);
    double lim = tram__gate_length(&t, cal->length_unit, wd);
    if (sr > t.max_rms_deg || stt > lim) {
        const char *u = tram_unit_length_name(cal->length_unit);
        char msg[700];
        snprintf(msg, sizeof msg,
                 "the stations deviate from the calibration by RMS %.3g deg and %.4g %s, beyond "
                 "what a working sensor and robot produce (%.3g deg and %.4g %s; common "
                 "practice), and no rigid change explains them. Likely mistakes: robot and sensor "
                 "rows not paired station by station, a unit or convention of the record file "
                 "that differs from the calibration's, or the wrong file; only if the data are "
                 "right, the robot itself (re-mastering, collision)",
                 sr, stt, u, t.max_rms_deg, lim, u);
        res->verdict = TRAM_VERDICT_INCONCLUSIVE;
        *blamed = 1;
        return add_diag(res, "implausible-residuals", TRAM_SEVERITY_WARNING, msg);
    }
    return TRAM_OK;
}

/* Records a check can use against cal, or an input error. */
static tram_status check_inputs(const tram_calibration *cal, const tram_records *r, tram_error *err)
{
    if (!(cal->noise_angle_rad > 0))
        return tram__fail(err, TRAM_EINPUT, cal->source, cal->noise_line, cal->noise_column,
                          "the calibration holds a point noise but no pose noise (noise.angle_deg "
                          "is null): it was solved from 3D points (solve --points); a mount check "
                          "compares poses, so it needs a calibration solved from poses");
    /* Without its covariance the calibration's own uncertainty would drop
     * out of every test silently (docs/check.md): refused.  solve -o writes
     * one whenever the refinement's normal matrix is invertible. */
    if (!cal->has_cov)
        return tram__fail(err, TRAM_EINPUT, cal->source, 1, 1,
                          "the calibration holds no \"covariance\" (its 12x12 uncertainty), which "
                          "a check needs to weigh the calibration's own uncertainty: solve again "
                          "with stations that determine both transforms (tram solve -o)");
    if (r->setup != TRAM_SETUP_UNSET && r->setup != cal->setup)
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "the records declare setup %s but the calibration %s is %s",
                          tram_setup_name(r->setup), cal->source, tram_setup_name(cal->setup));
    if (!r->has_block[TRAM_BLOCK_ROBOT] && r->n_joints)
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "the record file gives joint readings (joint_1 ...): pass --chain FILE "
                          "to compute the flange poses");
    if (!r->has_block[TRAM_BLOCK_ROBOT] || !r->has_block[TRAM_BLOCK_SENSOR])
        return tram__fail(err, TRAM_EINPUT, r->source, r->count ? r->stations[0].line : 0, 0,
                          "a check needs both a robot_ and a sensor_ pose block");
    return TRAM_OK;
}

/* The test context of the stations P, S (lengths already in the
 * calibration's unit) against cal. */
static void init_ctx(ctx *c, const tram_calibration *cal, const tram_se3 *P, const tram_se3 *S,
                     size_t n)
{
    memset(c, 0, sizeof *c);
    c->P = P;
    c->S = S;
    c->n = n;
    c->X = cal->X;
    c->Z = cal->Z;
    c->inv_sa = 1.0 / cal->noise_angle_rad;
    c->inv_sl = 1.0 / cal->noise_length;
    c->ht = 1e-3 * (cal->noise_length > 0 ? cal->noise_length : 1.0);
    c->has_cov = cal->has_cov;
    for (int a = 0; a < 12; a++)
        for (int b = 0; b < 12; b++)
            c->C[param_of_pub(a) * 12 + param_of_pub(b)] = cal->cov[a * 12 + b];
}

/* Each station's deviation from the stored calibration, and the largest
 * rotation between two stations' flange orientations (of the first 200). */
static void station_deviations(const tram_calibration *cal, const ctx *c, tram_check_result *res)
{
    for (size_t i = 0; i < c->n; i++) {
        double rot, tr;
        tram_handeye_residuals(&c->P[i], &c->S[i], 1, &cal->X, &cal->Z, &rot, &tr);
        res->stations[i].rot_deg = rot * RAD2DEG;
        res->stations[i].trans = tr;
    }
    double spread = 0;
    for (size_t i = 0; i < c->n && i < 200; i++)
        for (size_t j = i + 1; j < c->n && j < 200; j++) {
            tram_mat3 Ri, Rj;
            tram_se3_to_rt(&c->P[i], &Ri, NULL);
            tram_se3_to_rt(&c->P[j], &Rj, NULL);
            double a = tram_so3_distance(&Ri, &Rj) * RAD2DEG;
            if (a > spread) spread = a;
        }
    res->orientation_spread_deg = spread;
}

/* Names of the two change models in this setup. */
static void name_models(tram_check_result *res, tram_setup setup)
{
    int eih = setup == TRAM_SETUP_EYE_IN_HAND;
    res->sensor.model = "sensor-moved";
    res->target.model = "target-moved";
    res->sensor.frame = eih ? "flange" : "base";
    res->target.frame = eih ? "base" : "flange";
    res->sensor.transform = eih ? "T_flange_sensor" : "T_base_sensor";
    res->target.transform = eih ? "T_base_target" : "T_flange_target";
}

/* 1 when some station lies outside the tolerances (index in *worst). */
static int outside_tolerance(const tram_check_result *res, const tram_check_options *opt,
                             size_t *worst)
{
    int out = 0;
    double wmax = -1;
    for (size_t i = 0; i < res->n; i++) {
        double q = fmax(res->stations[i].trans / fmax(opt->tol_length, 1e-300),
                        res->stations[i].rot_deg / fmax(opt->tol_angle_rad * RAD2DEG, 1e-300));
        if (q > 1) out = 1;
        if (q > wmax) {
            wmax = q;
            *worst = i;
        }
    }
    return out;
}

/* The verdict from the tests and the two models' fits; per_v: the
 * per-station chi-square that decides which stations disagree. */
static void decide(tram_check_result *res, int changed, const double *per, const double *per_a,
                   const double *per_b, const double **per_v)
{
    const double *alt = res->best ? per_b : per_a;
    *per_v = per;
    if (!changed) {
        res->verdict = TRAM_VERDICT_OK;
    } else if (res->n < 2 || res->orientation_spread_deg < MIN_SPREAD_DEG) {
        res->verdict = TRAM_VERDICT_INCONCLUSIVE;
        *per_v = alt;
    } else if (res->sensor.fits && !res->target.fits) {
        res->verdict = TRAM_VERDICT_SENSOR_MOVED;
        *per_v = per_a;
    } else if (res->target.fits && !res->sensor.fits) {
        res->verdict = TRAM_VERDICT_TARGET_MOVED;
        *per_v = per_b;
    } else {
        res->verdict = res->target.fits ? TRAM_VERDICT_INCONCLUSIVE : TRAM_VERDICT_INCONSISTENT;
        *per_v = alt;
    }
}

/* --tolerance found a station outside it, but the statistical test finds
 * no change: the tolerance is tighter than the stations' noise can check.
 * Say so, with a tolerance the data can support. */
static tram_status tolerance_below_noise(const tram_calibration *cal, const tram_records *r,
                                         const tram_check_options *opt, size_t worst,
                                         tram_check_result *res)
{
    const char *u = tram_unit_length_name(cal->length_unit);
    /* one station's 3D deviation from noise alone: RMS sqrt(3) sigma; its
     * 99.9% bound sqrt(chi2_3(0.999)) sigma (about 4.03 sigma) */
    double k = sqrt(tram_check_chi2_quantile(3.0, Z_STATION));
    double sl = cal->noise_length, sa = cal->noise_angle_rad * RAD2DEG;
    char msg[700];
    snprintf(msg, sizeof msg,
             "the tolerance %.4g %s, %.4g deg is tighter than these stations can check: station "
             "'%s' deviates by %.4g %s and %.4g deg, yet the statistical test finds no change "
             "(chi2 %.1f against %.1f); from noise alone one station deviates by about %.3g %s "
             "and %.3g deg (RMS; per-axis noise %.3g %s, %.3g deg stored with the calibration). "
             "A tolerance the data supports is at least %.2g %s, %.2g deg (the 99.9%% bound of "
             "one station's deviation when nothing moved); or measure with less noise",
             opt->tol_length, u, opt->tol_angle_rad * RAD2DEG, r->stations[worst].id,
             res->stations[worst].trans, u, res->stations[worst].rot_deg, res->chi2_none,
             res->threshold_none, sqrt(3.0) * sl, u, sqrt(3.0) * sa, sl, u, sa, k * sl, u,
             k * sa);
    return add_diag(res, "tolerance-below-noise", TRAM_SEVERITY_WARNING, msg);
}

/* Why an inconclusive verdict is inconclusive. */
static tram_status explain_inconclusive(tram_check_result *res)
{
    char msg[600];
    if (res->n < 2)
        snprintf(msg, sizeof msg,
                 "one station cannot tell a moved sensor from a moved target: both explain any "
                 "deviation; add stations with different flange orientations (at least %.0f deg "
                 "apart)",
                 MIN_SPREAD_DEG);
    else if (res->orientation_spread_deg < MIN_SPREAD_DEG)
        snprintf(msg, sizeof msg,
                 "the stations' flange orientations differ by at most %.2f deg: a change fixed "
                 "to the flange and one fixed to the base look the same; add stations rotated "
                 "by %.0f deg or more (common practice)",
                 res->orientation_spread_deg, MIN_SPREAD_DEG);
    else
        snprintf(msg, sizeof msg,
                 "both a moved sensor and a moved target explain the deviations although the "
                 "flange orientations span %.0f deg; add stations rotated about other axes, or "
                 "repeat the check to rule out a one-off disturbance",
                 res->orientation_spread_deg);
    return add_diag(res, "cause-undetermined", TRAM_SEVERITY_WARNING, msg);
}

/* The tests and the verdict on stations P, S already in cal's unit. */
static tram_status run_tests(const tram_calibration *cal, const tram_records *r, ctx *c,
                             const tram_check_options *opt, double *per, tram_check_result *res,
                             int *tol_only)
{
    size_t n = c->n;
    int all12[12] = {1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1};
    chi2_with_cov(c, &cal->X, &cal->Z, all12, &res->chi2_none, per);
    res->dof_none = 6 * n;
    res->threshold_none = tram_check_chi2_quantile((double)(6 * n), Z_ALPHA3);
    name_models(res, cal->setup);
    double *per_a = tram__malloc(2 * n * sizeof *per_a);
    if (!per_a) return TRAM_ENOMEM;
    double *per_b = per_a + n;
    tram_status st;
    if ((st = model(c, 0, &res->sensor, per_a)) != TRAM_OK ||
        (st = model(c, 1, &res->target, per_b)) != TRAM_OK) {
        tram__free(per_a);
        return st;
    }
    res->best = res->target.fit_chi2 < res->sensor.fit_chi2;
    double thr6 = tram_check_chi2_quantile(6.0, Z_ALPHA3);
    int stat_changed = res->chi2_none > res->threshold_none || res->sensor.significance > thr6 ||
                       res->target.significance > thr6;
    size_t worst = 0;
    int changed = opt && opt->use_tolerance ? outside_tolerance(res, opt, &worst) : stat_changed;
    *tol_only = opt && opt->use_tolerance && changed && !stat_changed;
    const double *per_v;
    decide(res, changed, per, per_a, per_b, &per_v);
    if (*tol_only) res->verdict = TRAM_VERDICT_INCONCLUSIVE;
    double thr_station = tram_check_chi2_quantile(6.0, Z_STATION);
    for (size_t i = 0; i < n; i++) res->stations[i].disagrees = per_v[i] > thr_station;
    tram__free(per_a);
    if (*tol_only) return tolerance_below_noise(cal, r, opt, worst, res);
    return TRAM_OK;
}

tram_status tram_check(const tram_calibration *cal, const tram_records *r,
                       const tram_check_options *opt, tram_check_result **out, tram_error *err)
{
    *out = NULL;
    tram_status tool_st = tram_records_require_flange(r, err);
    if (tool_st != TRAM_OK) return tool_st;
    tram_status st = check_inputs(cal, r, err);
    if (st != TRAM_OK) return st;
    size_t n = r->count;
    tram_check_result *res = tram__calloc(1, sizeof *res);
    ctx c;
    tram_se3 *P = NULL, *S = NULL;
    double *per = NULL;
    if (!res || !(res->stations = tram__calloc(n, sizeof *res->stations)) ||
        !(per = tram__malloc(n * sizeof *per)) || tram__station_poses(r, cal->setup, &P, &S) != TRAM_OK) {
        st = tram__fail(err, TRAM_ENOMEM, NULL, 0, 0, "out of memory");
        goto done;
    }
    res->setup = cal->setup;
    res->length_unit = cal->length_unit;
    res->n = n;
    res->false_alarm = ALPHA;
    /* Lengths in the calibration's unit: both units are declared, so this
     * is a conversion, not a guess. */
    double f = tram_unit_length_factor(r->length_unit, cal->length_unit);
    for (size_t i = 0; i < n; i++) {
        tram_se3_scale_translation(&P[i], f, &P[i]);
        tram_se3_scale_translation(&S[i], f, &S[i]);
    }
    init_ctx(&c, cal, P, S, n);
    station_deviations(cal, &c, res);
    int tol_only = 0;
    st = run_tests(cal, r, &c, opt, per, res, &tol_only);
    if (st != TRAM_OK) {
        st = tram__fail(err, st, NULL, 0, 0,
                        st == TRAM_ENOMEM ? "out of memory" : "the change could not be estimated");
        goto done;
    }
    if (!cal->trustworthy)
        st = add_diag(res, "calibration-not-trustworthy", TRAM_SEVERITY_WARNING,
                      "the stored calibration was marked not trustworthy when it was solved; "
                      "its warnings apply to this check too");
    if (st == TRAM_OK && res->verdict == TRAM_VERDICT_INCONCLUSIVE && !tol_only)
        st = explain_inconclusive(res);
    int blamed = 0;
    if (st == TRAM_OK && !tol_only) st = trust_checks(cal, r, &c, opt, res, &blamed);
    if (st == TRAM_OK && res->verdict == TRAM_VERDICT_INCONSISTENT)
        st = add_diag(res, "no-rigid-change", TRAM_SEVERITY_WARNING,
                      "neither one rigid change of the sensor mount nor one of the target "
                      "explains the deviations: suspect the robot (re-mastering, payload, "
                      "collision), the target detection, or the data");
    if (st != TRAM_OK) st = tram__fail(err, st, NULL, 0, 0, "out of memory");
done:
    tram__free(P);
    tram__free(S);
    tram__free(per);
    if (st != TRAM_OK) {
        tram_check_result_destroy(res);
        return st;
    }
    *out = res;
    return TRAM_OK;
}
