/* Tests of cut systems, regular branches and jumps (include/sheetwalk/cuts.h).
 *
 * Reference values:
 *  - principal powers and logarithms, DLMF 4.2.2 (ph z in (-pi, pi]), 4.2.3
 *    (Ln z = ln|z| + i ph z) and 4.2.26 (z^a = exp(a Ln z)), evaluated with C's
 *    cpow/clog/csqrt (C11 Annex G) — their cut is the negative real axis, so
 *    the regular branch fixed by the principal value there must equal them;
 *  - sqrt(z - 1) sqrt(z + 1) with principal factors is analytic off [-1, 1]
 *    (the factors' cuts cancel on (-inf, -1)): common practice, no source;
 *  - a product z^a (1 - z)^b is single-valued off a cut [0, 1] iff a + b is an
 *    integer (its monodromy at infinity is exp(-2 pi i (a + b))): common
 *    practice, no source. */
#include <complex.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>

#include "sheetwalk/cuts.h"
#include "sheetwalk/sheetwalk.h"
#include "test_util.h"

#define REL 1e-12

typedef struct setup {
    sw_func *f;
    sw_points pts;
    sw_cuts cuts;
    sw_branch *b;
} setup;

static void setup_open(setup *s, const char *expr, const char *const *cuts, size_t ncuts,
                       double complex fixz, int fixbank, const double complex *fixw)
{
    sw_error err;
    memset(s, 0, sizeof *s);
    sw_points_init(&s->pts);
    sw_cuts_init(&s->cuts);
    if (sw_func_from_expr(&s->f, expr, NULL, &err) != SW_OK) {
        print_error("%s: %s\n", expr, err.msg);
        fail();
    }
    assert_int_equal(sw_points_compute(&s->pts, s->f, NULL, &err), SW_OK);
    if (ncuts == 0) {
        assert_int_equal(sw_cuts_default(&s->cuts, &s->pts, &err), SW_OK);
    }
    for (size_t k = 0; k < ncuts; k++) {
        sw_path p;
        sw_path_init(&p);
        assert_int_equal(sw_path_parse(&p, cuts[k], "path", NULL, &err), SW_OK);
        assert_int_equal(sw_cuts_add(&s->cuts, &p, &err), SW_OK);
        sw_path_clear(&p);
    }
    if (sw_branch_new(&s->b, s->f, &s->cuts, fixz, fixbank, fixw, &err) != SW_OK) {
        print_error("%s: fixing: %s\n", expr, err.msg);
        fail();
    }
}

static void setup_close(setup *s)
{
    sw_branch_free(s->b);
    sw_cuts_clear(&s->cuts);
    sw_points_clear(&s->pts);
    sw_func_free(s->f);
}

static double complex reg_value(const setup *s, double complex z, int bank)
{
    sw_germ g;
    sw_error err;
    sw_germ_init(&g, s->f);
    if (sw_branch_eval(&g, s->b, z, bank, &err) != SW_OK) {
        print_error("regular branch at %g%+gi: %s\n", creal(z), cimag(z), err.msg);
        sw_germ_clear(&g);
        fail();
    }
    double complex v = sw_func_value(s->f, &g);
    sw_germ_clear(&g);
    return v;
}

/* The regular branch fixed by the principal value equals the principal
 * function off its cut, and its bank values are the one-sided limits. */
static void test_principal_powers_and_log(void **state)
{
    (void)state;
    static const struct {
        const char *f;
        int kind; /* 0 sqrt, 1 z^a, 2 log */
        double a;
    } cases[] = {{"sqrt(z)", 0, 0.5}, {"z^(1/3)", 1, 1.0 / 3}, {"z^(-0.7)", 1, -0.7},
                 {"z^(2.25)", 1, 2.25}, {"log(z)", 2, 0}};
    static const char *const cut[] = {"0; -1; inf"};
    tu_rng rng;
    tu_rng_init(&rng, 4242);
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        setup s;
        setup_open(&s, cases[k].f, cut, 1, 1.0, SW_BANK_NONE, NULL);
        for (int j = 0; j < 12; j++) {
            double complex z = CMPLX(tu_range(&rng, -3, 3), tu_range(&rng, -3, 3));
            if (fabs(cimag(z)) < 0.05)
                continue;
            double complex want = cases[k].kind == 0 ? csqrt(z)
                                  : cases[k].kind == 1 ? cpow(z, cases[k].a) : clog(z);
            TU_PROP_CLOSE(&rng, j, reg_value(&s, z, SW_BANK_NONE), want, REL, cases[k].f,
                          "DLMF 4.2.2, 4.2.3, 4.2.26 via C cpow/clog/csqrt");
        }
        /* banks of the negative axis: limits from above and below */
        double x = -1.7;
        double complex up = cases[k].kind == 0 ? csqrt(CMPLX(x, 0.0))
                            : cases[k].kind == 1 ? cpow(CMPLX(x, 0.0), cases[k].a)
                                                 : clog(CMPLX(x, 0.0));
        double complex dn = cases[k].kind == 0 ? csqrt(CMPLX(x, -0.0))
                            : cases[k].kind == 1 ? cpow(CMPLX(x, -0.0), cases[k].a)
                                                 : clog(CMPLX(x, -0.0));
        TU_CHECK_CLOSE(reg_value(&s, x, SW_BANK_UPPER), up, REL, cases[k].f,
                       "upper bank: ph = pi (DLMF 4.2.2), C signed-zero limit");
        TU_CHECK_CLOSE(reg_value(&s, x, SW_BANK_LOWER), dn, REL, cases[k].f,
                       "lower bank: ph = -pi (DLMF 4.2.2), C signed-zero limit");
        setup_close(&s);
    }
}

/* Jumps across the negative real axis, piece directed 0 -> -inf: the right
 * bank is the upper one.  z^a: ratio exp(2 pi i a) (DLMF 4.2.26 with ph = +-pi);
 * log: difference 2 pi i (DLMF 4.2.3). */
static void test_jumps_negative_axis(void **state)
{
    (void)state;
    static const double as[] = {0.5, 1.0 / 3, -0.25, 0.7, 1.5, -1.5};
    static const char *const cut[] = {"0; -1; inf"};
    for (size_t k = 0; k < sizeof as / sizeof as[0]; k++) {
        char f[64];
        snprintf(f, sizeof f, "z^(%.17g)", as[k]);
        setup s;
        setup_open(&s, f, cut, 1, 1.0, SW_BANK_NONE, NULL);
        sw_cut_report r;
        sw_cut_report_init(&r);
        sw_error err;
        assert_int_equal(sw_cuts_check(&r, s.f, &s.pts, &s.cuts, s.b, &err), SW_OK);
        assert_true(r.single_valued);
        assert_int_equal(r.npieces, 2);
        for (size_t j = 0; j < r.npieces; j++)
            TU_CHECK_CLOSE(r.jump[j].ratio, cexp(CMPLX(0.0, 2 * TU_PI * as[k])), REL, f,
                           "DLMF 4.2.26: exp(i pi a) / exp(-i pi a)");
        sw_cut_report_clear(&r);
        setup_close(&s);
    }
    setup s;
    setup_open(&s, "log(z)", cut, 1, 1.0, SW_BANK_NONE, NULL);
    sw_cut_report r;
    sw_cut_report_init(&r);
    sw_error err;
    assert_int_equal(sw_cuts_check(&r, s.f, &s.pts, &s.cuts, s.b, &err), SW_OK);
    for (size_t j = 0; j < r.npieces; j++)
        TU_CHECK_CLOSE(r.jump[j].difference, CMPLX(0.0, 2 * TU_PI), REL, "log",
                       "DLMF 4.2.3: ph jumps by 2 pi");
    sw_cut_report_clear(&r);
    setup_close(&s);
}

/* sqrt(z^2 - 1) with the cut [-1, 1], fixed ~ z at +inf, equals
 * csqrt(z - 1) csqrt(z + 1) (common practice, no source). */
static void test_two_point_cut(void **state)
{
    (void)state;
    static const char *const cut[] = {"-1; 1"};
    double complex w2 = csqrt(3.0);
    setup s;
    setup_open(&s, "sqrt(z^2-1)", cut, 1, 2.0, SW_BANK_NONE, &w2);
    tu_rng rng;
    tu_rng_init(&rng, 777);
    for (int j = 0; j < 16; j++) {
        double complex z = CMPLX(tu_range(&rng, -3, 3), tu_range(&rng, -2, 2));
        if (fabs(cimag(z)) < 0.05 && fabs(creal(z)) < 1.05)
            continue;
        double complex want = csqrt(z - 1) * csqrt(z + 1);
        TU_PROP_CLOSE(&rng, j, reg_value(&s, z, SW_BANK_NONE), want, REL, "sqrt(z^2-1)",
                      "principal csqrt(z-1) csqrt(z+1), analytic off [-1,1]");
    }
    double x = 0.3;
    TU_CHECK_CLOSE(reg_value(&s, x, SW_BANK_UPPER),
                   csqrt(CMPLX(x - 1, 0.0)) * csqrt(CMPLX(x + 1, 0.0)), REL, "0.3+i0",
                   "upper bank: i sqrt(1 - x^2)");
    TU_CHECK_CLOSE(reg_value(&s, x, SW_BANK_LOWER),
                   csqrt(CMPLX(x - 1, -0.0)) * csqrt(CMPLX(x + 1, -0.0)), REL, "0.3-i0",
                   "lower bank: -i sqrt(1 - x^2)");
    sw_cut_report r;
    sw_cut_report_init(&r);
    sw_error err;
    assert_int_equal(sw_cuts_check(&r, s.f, &s.pts, &s.cuts, s.b, &err), SW_OK);
    assert_true(r.single_valued);
    assert_int_equal(r.nproblems, 0);
    /* piece -1 -> 1: its right bank is the lower one: ratio -1 */
    TU_CHECK_CLOSE(r.jump[0].ratio, -1.0, REL, "[-1,1]", "lower over upper bank");
    sw_cut_report_clear(&r);
    setup_close(&s);
}

/* Verdicts for z^a (1 - z)^b with the cut [0, 1]: single-valued iff a + b is
 * an integer (common practice, no source). */
static void test_verdicts_exponent_sum(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 31337);
    static const char *const cut[] = {"0; 1"};
    for (int j = 0; j < 16; j++) {
        long q1 = tu_int(&rng, 2, 7), q2 = tu_int(&rng, 2, 7);
        long p1 = tu_int(&rng, 1, q1 - 1), p2 = tu_int(&rng, 1, q2 - 1);
        if (j % 2 == 0) { /* make the sum an integer half of the time */
            q2 = q1;
            p2 = q1 - p1;
        }
        double a = (double)p1 / q1, b = (double)p2 / q2;
        int integer = (p1 * q2 + p2 * q1) % (q1 * q2) == 0;
        char f[96];
        snprintf(f, sizeof f, "z^(%ld/%ld)*(1-z)^(%ld/%ld)", p1, q1, p2, q2);
        setup s;
        setup_open(&s, f, cut, 1, CMPLX(0.5, 1.0), SW_BANK_NONE, NULL);
        sw_cut_report r;
        sw_cut_report_init(&r);
        sw_error err;
        assert_int_equal(sw_cuts_check(&r, s.f, &s.pts, &s.cuts, s.b, &err), SW_OK);
        if (r.single_valued != integer) {
            print_error("seed %llu case %d: %s: single_valued = %d, expected %d (a+b = %g)\n",
                        (unsigned long long)rng.seed, j, f, r.single_valued, integer, a + b);
            fail();
        }
        if (!integer) {
            assert_true(r.nproblems > 0);
            assert_true(r.inf_branched == 1);
        }
        sw_cut_report_clear(&r);
        setup_close(&s);
    }
}

/* The jump across each default ray equals the multiplier of a
 * counter-clockwise turn around its branch point (methods: the jump across a
 * piece is the monodromy of a loop around the branch points on one side). */
static void test_jump_equals_local_monodromy(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 2718);
    for (int j = 0; j < 10; j++) {
        int m = (int)tu_int(&rng, 1, 3);
        char f[256] = "";
        size_t used = 0;
        for (int k = 0; k < m; k++) {
            double complex c = CMPLX(tu_range(&rng, -2, 2), tu_range(&rng, -2, 2));
            long q = tu_int(&rng, 2, 5), p = tu_int(&rng, 1, q - 1);
            used += (size_t)snprintf(f + used, sizeof f - used, "%s(z-(%.6f%+.6fi))^(%ld/%ld)",
                                     k ? "*" : "", creal(c), cimag(c), p, q);
        }
        setup s;
        setup_open(&s, f, NULL, 0, CMPLX(0.1, 7.0), SW_BANK_NONE, NULL);
        sw_cut_report r;
        sw_cut_report_init(&r);
        sw_error err;
        assert_int_equal(sw_cuts_check(&r, s.f, &s.pts, &s.cuts, s.b, &err), SW_OK);
        assert_true(r.single_valued);
        for (size_t k = 0; k < s.cuts.npieces; k++) {
            const sw_point *p = &s.pts.pt[s.cuts.branch_of[s.cuts.piece[k].cut]];
            TU_PROP_CLOSE(&rng, j, r.jump[k].ratio, p->ratio, 1e-10, f,
                          "jump across the ray of p = multiplier of a turn around p");
        }
        sw_cut_report_clear(&r);
        setup_close(&s);
    }
}

/* Off the cuts the regular branch is continuous; fixing it on either bank
 * gives the same branch up to the jump. */
static void test_continuity_and_bank_fixing(void **state)
{
    (void)state;
    static const char *const cut[] = {"-1; 1"};
    tu_rng rng;
    tu_rng_init(&rng, 99);
    double complex wu = CMPLX(0.0, sqrt(1 - 0.25)); /* i sqrt(1 - x^2) at x = 0.5 */
    setup up, dn;
    setup_open(&up, "sqrt(z^2-1)", cut, 1, 0.5, SW_BANK_UPPER, &wu);
    /* on the lower bank the same branch takes -i sqrt(1 - x^2) (ratio -1) */
    double complex wd = -wu;
    setup_open(&dn, "sqrt(z^2-1)", cut, 1, 0.5, SW_BANK_LOWER, &wd);
    for (int j = 0; j < 12; j++) {
        double complex z = CMPLX(tu_range(&rng, -3, 3), tu_range(&rng, -2, 2));
        if (fabs(cimag(z)) < 0.05)
            continue;
        double complex a = reg_value(&up, z, SW_BANK_NONE), b = reg_value(&dn, z, SW_BANK_NONE);
        TU_PROP_CLOSE(&rng, j, a, b, REL, "fixed on either bank",
                      "same branch up to the jump -1 across [-1,1]");
        double complex c = reg_value(&up, z + CMPLX(1e-7, 1e-7), SW_BANK_NONE);
        TU_PROP_CLOSE(&rng, j, c, a, 1e-6, "continuity", "regular branch is analytic off cuts");
    }
    setup_close(&up);
    setup_close(&dn);
}

/* A branch point on no cut is a problem; a bounded cut around a point with
 * multiplier -1 is one too; infinity branched without a cut to it is one. */
static void test_problems(void **state)
{
    (void)state;
    static const char *const cut[] = {"1; 2"};
    setup s;
    setup_open(&s, "sqrt(z*(z-1))", cut, 1, CMPLX(0.0, 3.0), SW_BANK_NONE, NULL);
    sw_cut_report r;
    sw_cut_report_init(&r);
    sw_error err;
    assert_int_equal(sw_cuts_check(&r, s.f, &s.pts, &s.cuts, s.b, &err), SW_OK);
    assert_false(r.single_valued);
    int found0 = 0;
    for (size_t k = 0; k < r.nproblems; k++)
        print_message("problem: %s\n", r.problem[k]);
    for (size_t k = 0; k < r.nproblems; k++)
        if (strstr(r.problem[k], "branch point 0 lies on no cut"))
            found0 = 1;
    assert_true(found0);
    sw_cut_report_clear(&r);
    setup_close(&s);
}

/* Crossings: a circle around 0 crosses the negative axis once, right to left
 * (counter-clockwise). */
static void test_crossings(void **state)
{
    (void)state;
    sw_cuts c;
    sw_cuts_init(&c);
    sw_path cut, p;
    sw_path_init(&cut);
    sw_path_init(&p);
    sw_error err;
    assert_int_equal(sw_path_parse(&cut, "0; -1; inf", "path", NULL, &err), SW_OK);
    assert_int_equal(sw_cuts_add(&c, &cut, &err), SW_OK);
    assert_int_equal(sw_path_parse(&p, "circle 0 2 32", "path", NULL, &err), SW_OK);
    sw_crossing *x = NULL;
    size_t n = 0;
    assert_int_equal(sw_cuts_crossings(&x, &n, &c, &p, &err), SW_OK);
    assert_int_equal(n, 1);
    assert_int_equal(x[0].direction, 1);
    TU_CHECK_CLOSE(x[0].z, -2.0, 1e-12, "crossing", "the circle meets the axis at -2");
    free(x);
    /* a path through the joint of two pieces counts once */
    sw_path_clear(&p);
    assert_int_equal(sw_path_parse(&p, "-1+1i; -1-1i", "path", NULL, &err), SW_OK);
    assert_int_equal(sw_cuts_crossings(&x, &n, &c, &p, &err), SW_OK);
    assert_int_equal(n, 1);
    /* walking along the piece (towards -inf) its right side is the upper half
       plane: going down crosses from right to left */
    assert_int_equal(x[0].direction, 1);
    free(x);
    sw_path_clear(&p);
    sw_path_clear(&cut);
    sw_cuts_clear(&c);
}

static void test_bad_cuts(void **state)
{
    (void)state;
    sw_cuts c;
    sw_cuts_init(&c);
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    assert_int_equal(sw_path_parse(&p, "inf; 0; 1", "path", NULL, &err), SW_OK);
    assert_int_equal(sw_cuts_add(&c, &p, &err), SW_EINPUT);
    assert_non_null(strstr(err.msg, "inf"));
    sw_path_clear(&p);
    assert_int_equal(sw_path_parse(&p, "2", "path", NULL, &err), SW_OK);
    assert_int_equal(sw_cuts_add(&c, &p, &err), SW_EINPUT);
    sw_path_clear(&p);
    sw_cuts_clear(&c);
    /* a point on a cut without a bank mark is refused */
    static const char *const cut[] = {"0; -1; inf"};
    setup s;
    setup_open(&s, "sqrt(z)", cut, 1, 1.0, SW_BANK_NONE, NULL);
    sw_germ g;
    sw_germ_init(&g, s.f);
    assert_int_equal(sw_branch_eval(&g, s.b, -2.0, SW_BANK_NONE, &err), SW_EINPUT);
    assert_non_null(strstr(err.msg, "bank"));
    sw_germ_clear(&g);
    setup_close(&s);
}

int main(void)
{
    sw_init(NULL);
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_principal_powers_and_log),
        cmocka_unit_test(test_jumps_negative_axis),
        cmocka_unit_test(test_two_point_cut),
        cmocka_unit_test(test_verdicts_exponent_sum),
        cmocka_unit_test(test_jump_equals_local_monodromy),
        cmocka_unit_test(test_continuity_and_bank_fixing),
        cmocka_unit_test(test_problems),
        cmocka_unit_test(test_crossings),
        cmocka_unit_test(test_bad_cuts),
    };
    return cmocka_run_group_tests_name("cuts", tests, NULL, NULL);
}
