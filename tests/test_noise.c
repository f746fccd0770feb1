/* test_noise.c - tests of the refinement's analytic Jacobian (refine.c)
 * and of the station noise model (noise.c): the Jacobian against central
 * differences of the residual, the whitening against the covariance it
 * whitens, and the noise estimate on synthetic stations with known
 * per-axis noise. */
#include "test_util.h"

#include "solve/noise_internal.h"
#include "solve/refine_internal.h"

static void random_pose(test_rng *r, double tscale, tram_se3 *T)
{
    tram_mat3 R;
    test_random_rotation(r, &R);
    double t[3] = {tscale * test_rng_normal(r), tscale * test_rng_normal(r), tscale * test_rng_normal(r)};
    tram_se3_from_rt(&R, t, T);
}

static void test_jacobian_matches_differences(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("analytic Jacobian", 13001);
    double worst = 0;
    for (int trial = 0; trial < 200; trial++) {
        tram_se3 P, S, X, Z;
        random_pose(&rng, 500, &P);
        random_pose(&rng, 300, &S);
        random_pose(&rng, 100, &X);
        /* Z near the station's prediction (residuals of up to ~1 rad) and far from it */
        tram_se3 PX, Zp;
        tram_se3_compose(&P, &X, &PX);
        tram_se3_compose(&PX, &S, &Zp);
        Z = Zp;
        test_perturb_pose(&rng, &Z, trial % 2 ? 0.5 : 0.01, 5.0);
        double r[6], J[6][12];
        tram__refine_station_raw(&P, &S, &X, &Z, r, J);
        for (int p = 0; p < 12; p++) {
            double x[12] = {0}, rp[6], rm[6], h = (p % 6) < 3 ? 1e-6 : 1e-4;
            tram_se3 Xp, Zq;
            x[p] = h;
            tram__refine_apply(&X, &Z, x, &Xp, &Zq);
            tram__refine_residual(&P, &S, &Xp, &Zq, rp);
            x[p] = -h;
            tram__refine_apply(&X, &Z, x, &Xp, &Zq);
            tram__refine_residual(&P, &S, &Xp, &Zq, rm);
            for (int k = 0; k < 6; k++) {
                double fd = (rp[k] - rm[k]) / (2 * h);
                double err = fabs(fd - J[k][p]) / (1.0 + fabs(fd));
                if (err > worst) worst = err;
            }
        }
    }
    printf("[ figures  ] analytic Jacobian vs central differences, 200 stations: worst relative "
           "difference %.2e\n", worst);
    assert_true(worst < 1e-6);
}

/* W^T W = Sigma^-1: W Sigma W^T = I. */
static void test_whitening_whitens(void **state)
{
    (void)state;
    test_rng rng = test_rng_seeded("noise whitening", 13002);
    tram__noise nm = {{1e-6, 2e-6, 4e-6}, {0.01, 0.02, 0.09}, 1e-8, 4e-4, 0, 1, {0}};
    tram_se3 P[4], S[4], X, Z;
    random_pose(&rng, 100, &X);
    random_pose(&rng, 500, &Z);
    for (int i = 0; i < 4; i++) {
        random_pose(&rng, 500, &P[i]);
        random_pose(&rng, 300, &S[i]);
    }
    for (int e2h = 0; e2h < 2; e2h++) {
        nm.eye_to_hand = e2h;
        tram_refine_problem pb = {.P = P, .S = S, .n = 4, .sigma_angle = 1, .sigma_length = 1, .length_scale = 1};
        double W[4 * 18];
        tram__noise_whitening(&nm, &pb, &X, &Z, W);
        for (int i = 0; i < 4; i++) {
            double Sb[2][9];
            tram__noise_station_cov(&nm, &P[i], &S[i], &X, &Z, Sb[0], Sb[1]);
            for (int b = 0; b < 2; b++)
                for (int p = 0; p < 3; p++)
                    for (int q = 0; q < 3; q++) {
                        double v = 0;
                        for (int k = 0; k < 3; k++)
                            for (int l = 0; l < 3; l++)
                                v += W[18 * i + 9 * b + 3 * p + k] * Sb[b][3 * k + l] * W[18 * i + 9 * b + 3 * q + l];
                        assert_true(fabs(v - (p == q)) < 1e-9);
                    }
        }
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_jacobian_matches_differences),
        cmocka_unit_test(test_whitening_whitens),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
