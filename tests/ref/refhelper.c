/*
 * refhelper.c - a line-oriented driver of libtram for the reference checks
 * in the Python scripts of tests/ref.  Each input line is an operation and its numbers; each
 * output line holds the result with %.17g.  Not part of the product.
 *
 *   quat2mat w x y z            -> 9 numbers (row-major)
 *   mat2quat m00 .. m22         -> w x y z (canonical sign)
 *   rotvec2mat rx ry rz         -> 9
 *   mat2rotvec m00 .. m22       -> 3
 *   euler2mat SEQ e1 e2 e3      -> 9        (SEQ as in tram_euler_parse)
 *   mat2euler SEQ m00 .. m22    -> 3
 *   compose  qA(4) tA(3) qB(4) tB(3) -> 16  (T_A T_B)
 *   invert   q(4) t(3)          -> 16
 *   apply    q(4) t(3) p(3)     -> 3
 *   mean     n q1(4) .. qn(4)   -> w x y z
 *   chi2q    k z                -> chi-square quantile (tram_check_chi2_quantile)
 *   tq       p nu               -> Student t quantile (tram__t_quantile, internal)
 *   fq       p d1 d2            -> F quantile (tram__f_quantile, internal)
 *   cq       p k                -> chi-square quantile (tram__chi2_quantile, internal)
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tram/tram.h"
#include "math/stats_internal.h"

static void put(const double *v, int n)
{
    for (int i = 0; i < n; i++) printf(i ? " %.17g" : "%.17g", v[i]);
    printf("\n");
}

static int get(double *v, int n)
{
    for (int i = 0; i < n; i++) {
        char *tok = strtok(NULL, " \t\n");
        if (!tok) return -1;
        v[i] = strtod(tok, NULL);
    }
    return 0;
}

static void pose(const double *q, const double *t, tram_se3 *T)
{
    tram_quat_wxyz qq = {q[0], q[1], q[2], q[3]};
    tram_mat3 R;
    tram_quat_wxyz_to_mat3(&qq, &R);
    tram_se3_from_rt(&R, t, T);
}

int main(void)
{
    static char line[1 << 20];
    while (fgets(line, sizeof line, stdin)) {
        char *op = strtok(line, " \t\n");
        if (!op) continue;
        double v[64], out[16];
        tram_mat3 R;
        if (strcmp(op, "quat2mat") == 0 && !get(v, 4)) {
            tram_quat_wxyz q = {v[0], v[1], v[2], v[3]};
            tram_quat_wxyz_to_mat3(&q, &R);
            put(&R.m[0][0], 9);
        } else if (strcmp(op, "mat2quat") == 0 && !get(v, 9)) {
            memcpy(&R.m[0][0], v, sizeof R.m);
            tram_quat_wxyz q;
            tram_quat_wxyz_from_mat3(&R, &q);
            double o[4] = {q.w, q.x, q.y, q.z};
            put(o, 4);
        } else if (strcmp(op, "rotvec2mat") == 0 && !get(v, 3)) {
            tram_rotvec_to_mat3(v, &R);
            put(&R.m[0][0], 9);
        } else if (strcmp(op, "mat2rotvec") == 0 && !get(v, 9)) {
            memcpy(&R.m[0][0], v, sizeof R.m);
            tram_rotvec_from_mat3(&R, out);
            put(out, 3);
        } else if (strcmp(op, "euler2mat") == 0 || strcmp(op, "mat2euler") == 0) {
            char *seqname = strtok(NULL, " \t\n");
            tram_euler_seq seq = tram_euler_parse(seqname);
            if (seq == TRAM_EULER_UNSET) return 2;
            if (op[0] == 'e') {
                if (get(v, 3)) return 2;
                tram_euler_to_mat3(seq, v, &R);
                put(&R.m[0][0], 9);
            } else {
                if (get(v, 9)) return 2;
                memcpy(&R.m[0][0], v, sizeof R.m);
                tram_euler_from_mat3(seq, &R, out);
                put(out, 3);
            }
        } else if (strcmp(op, "compose") == 0 && !get(v, 14)) {
            tram_se3 A, B, C;
            pose(v, v + 4, &A);
            pose(v + 7, v + 11, &B);
            tram_se3_compose(&A, &B, &C);
            put(&C.m[0][0], 16);
        } else if (strcmp(op, "invert") == 0 && !get(v, 7)) {
            tram_se3 A, B;
            pose(v, v + 4, &A);
            tram_se3_invert(&A, &B);
            put(&B.m[0][0], 16);
        } else if (strcmp(op, "apply") == 0 && !get(v, 10)) {
            tram_se3 A;
            pose(v, v + 4, &A);
            tram_se3_apply_point(&A, v + 7, out);
            put(out, 3);
        } else if (strcmp(op, "tq") == 0 && !get(v, 2)) {
            double q = tram__t_quantile(v[0], v[1]);
            put(&q, 1);
        } else if (strcmp(op, "cq") == 0 && !get(v, 2)) {
            double q = tram__chi2_quantile(v[0], v[1]);
            put(&q, 1);
        } else if (strcmp(op, "fq") == 0 && !get(v, 3)) {
            double q = tram__f_quantile(v[0], v[1], v[2]);
            put(&q, 1);
        } else if (strcmp(op, "chi2q") == 0 && !get(v, 2)) {
            double q = tram_check_chi2_quantile(v[0], v[1]);
            put(&q, 1);
        } else if (strcmp(op, "mean") == 0 && !get(v, 1)) {
            int n = (int)v[0];
            tram_mat3 *Rs = malloc((size_t)n * sizeof *Rs);
            if (!Rs) return 2;
            for (int i = 0; i < n; i++) {
                double q[4];
                if (get(q, 4)) return 2;
                tram_quat_wxyz qq = {q[0], q[1], q[2], q[3]};
                tram_quat_wxyz_to_mat3(&qq, &Rs[i]);
            }
            tram_so3_mean(Rs, NULL, (size_t)n, &R);
            free(Rs);
            tram_quat_wxyz q;
            tram_quat_wxyz_from_mat3(&R, &q);
            double o[4] = {q.w, q.x, q.y, q.z};
            put(o, 4);
        } else {
            fprintf(stderr, "refhelper: bad line starting '%s'\n", op);
            return 2;
        }
    }
    return 0;
}
