/* test_noise.c - tests of the refinement's analytic Jacobian (refine.c):
 * the Jacobian against central differences of the residual. */
#include "test_util.h"

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

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_jacobian_matches_differences),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
