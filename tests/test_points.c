/* Branch points of expressions and their local monodromy.
 *
 * Expected values: near a zero (or pole) a of order m of the operand u of
 * u^c, u = (z - a)^m v with v analytic and non-zero, so one counter-clockwise
 * turn multiplies u^c by exp(2 pi i c m) and adds 2 pi i m to log u (DLMF
 * 4.2.26 and 4.2.6).  At infinity (a loop around infinity is a large
 * clockwise circle, monodromy.h) u ~ C z^M turns -M times: multiplier
 * exp(-2 pi i c M), shift -2 pi i M.  Hence the product of all multipliers,
 * infinity included, is 1 and the sum of all shifts is 0 (common practice,
 * no source: a loop around every finite point and infinity is contractible).
 * A candidate whose exponent c m is an integer is not a branch point. */
#include "test_util.h"

#include "sheetwalk/func.h"
#include "sheetwalk/monodromy.h"

#define REL 1e-12 /* the accuracy goal for continued values */

static const double complex W3 = CMPLX(-0.5, 0.86602540378443864676);   /* exp(2 pi i/3) */
static const double complex W3SQ = CMPLX(-0.5, -0.86602540378443864676); /* exp(4 pi i/3) */

static void compute(sw_points *pts, const char *text, int certify)
{
    sw_func *f;
    sw_error err;
    sw_error_clear(&err);
    if (sw_func_from_expr(&f, text, NULL, &err) != SW_OK) {
        print_error("%s: %s\n", text, err.msg);
        fail();
    }
    sw_points_opts o;
    sw_points_opts_init(&o);
    o.certify = certify;
    sw_points_init(pts);
    sw_status st = sw_points_compute(pts, f, &o, &err);
    sw_func_free(f);
    if (st != SW_OK) {
        print_error("points of %s: %s\n", text, err.msg);
        fail();
    }
}

/* The finite point nearest Z (fails when none lies within 1e-10). */
static const sw_point *point_at(const sw_points *pts, double complex z, const char *text)
{
    for (size_t k = 0; k < pts->n; k++) {
        double tol = fmax(pts->pt[k].radius, 1e-12 * (1 + cabs(z)));
        if (cabs(pts->pt[k].z - z) <= tol)
            return &pts->pt[k];
    }
    print_error("%s: no point found at %.17g%+.17gi (%zu found)\n", text, creal(z), cimag(z),
                pts->n);
    for (size_t k = 0; k < pts->n; k++)
        print_error("  found %.17g%+.17gi (radius %g)\n", creal(pts->pt[k].z),
                    cimag(pts->pt[k].z), pts->pt[k].radius);
    fail();
    return NULL;
}

typedef struct expect_pt {
    double re, im;          /* location */
    int kind;               /* SW_POINT_* */
    int shift;              /* 1: additive (log), 0: multiplier */
    double complex value;   /* multiplier, or shift / (2 pi i) */
} expect_pt;

typedef struct points_case {
    const char *f;
    int n;                  /* finite candidates expected */
    expect_pt pt[4];
    expect_pt inf;          /* re/im unused */
    const char *source;
} points_case;

#define MUL(re_, im_, v) {re_, im_, SW_POINT_BRANCH, 0, v}
#define SHIFT(re_, im_, k) {re_, im_, SW_POINT_BRANCH, 1, k}
#define REG(re_, im_) {re_, im_, SW_POINT_REGULAR, 0, 1}

static const points_case table[] = {
    /* f, finite count, points, infinity, source */
    {"sqrt(z)", 1, {MUL(0, 0, -1)}, MUL(0, 0, -1),
     "u = z: exp(pi i) at 0, exp(-pi i) at infinity (DLMF 4.2.26)"},
    {"sqrt(z^2)", 1, {REG(0, 0)}, REG(0, 0), "u = z^2: exp(2 pi i/2) = 1, not branched"},
    {"log(z)", 1, {SHIFT(0, 0, 1)}, SHIFT(0, 0, -1),
     "u = z: +2 pi i at 0, -2 pi i at infinity (DLMF 4.2.6)"},
    {"z^(1/3)*(1-z)^(2/3)", 2, {MUL(0, 0, W3), MUL(1, 0, W3SQ)}, REG(0, 0),
     "exp(2 pi i/3) at 0, exp(4 pi i/3) at 1; exponents sum to 1: infinity unbranched "
     "(DLMF 4.2.26)"},
    {"(z^2+1)^(1/4)", 2, {MUL(0, -1, CMPLX(0, 1)), MUL(0, 1, CMPLX(0, 1))}, MUL(0, 0, -1),
     "simple zeros at +-i: exp(2 pi i/4) = i; infinity exp(-2 pi i 2/4) = -1 (DLMF 4.2.26)"},
    {"sqrt((z-1)/(z+1))", 2, {MUL(-1, 0, -1), MUL(1, 0, -1)}, REG(0, 0),
     "pole at -1: exp(-pi i) = -1, zero at 1: exp(pi i) = -1, u -> 1 at infinity"},
    {"sqrt(z-1-2i)", 1, {MUL(1, 2, -1)}, MUL(0, 0, -1), "a complex branch point 1+2i"},
    {"sqrt(z^2-2i)", 2, {MUL(-1, -1, -1), MUL(1, 1, -1)}, REG(0, 0),
     "z^2 = 2i at +-(1+i); u ~ z^2: infinity exp(-2 pi i) = 1"},
    {"sqrt(1/z)", 1, {MUL(0, 0, -1)}, MUL(0, 0, -1), "pole of the operand: exp(-pi i) = -1"},
    {"sqrt((z-1)^2*(z+1))", 2, {MUL(-1, 0, -1), REG(1, 0)}, MUL(0, 0, -1),
     "double zero at 1 is not branched; infinity exp(-3 pi i) = -1"},
    {"sqrt((z-1)*(z-2)*(z-3))", 3, {MUL(1, 0, -1), MUL(2, 0, -1), MUL(3, 0, -1)},
     MUL(0, 0, -1), "three simple zeros; infinity exp(-3 pi i) = -1"},
    {"log(z*(z-1))", 2, {SHIFT(0, 0, 1), SHIFT(1, 0, 1)}, SHIFT(0, 0, -2),
     "+2 pi i at 0 and 1, -4 pi i at infinity (DLMF 4.2.6)"},
    {"log((z-1)/(z+1))", 2, {SHIFT(-1, 0, -1), SHIFT(1, 0, 1)}, REG(0, 0),
     "-2 pi i at the pole -1, +2 pi i at the zero 1, infinity unbranched (DLMF 4.2.6)"},
    {"z^(0.5+0.25i)", 1, {MUL(0, 0, -0.20787957635076190855)}, MUL(0, 0, -4.8104773809653516555),
     "exp(2 pi i a) = -exp(-pi/2) at 0, exp(-2 pi i a) = -exp(pi/2) at infinity (DLMF 4.2.26)"},
    {"z^2 + 1", 0, {{0, 0, 0, 0, 0}}, REG(0, 0), "no multivalued node: no candidates"},
};

static void check_one(const char *f, const char *what, const sw_point *pt, const expect_pt *e,
                      const char *source)
{
    char msg[256];
    snprintf(msg, sizeof msg, "%s at %s", f, what);
    if ((int)pt->kind != e->kind) {
        print_error("%s: kind %d, expected %d (%s)\n", msg, (int)pt->kind, e->kind, source);
        fail();
    }
    if (e->kind == SW_POINT_REGULAR) {
        TU_CHECK_CLOSE(pt->ratio, 1, REL, msg, source);
        return;
    }
    if (e->shift) {
        if (!pt->is_shift || pt->is_multiplier) {
            print_error("%s: is_shift %d, is_multiplier %d; expected a shift (%s)\n", msg,
                        pt->is_shift, pt->is_multiplier, source);
            fail();
        }
        TU_CHECK_CLOSE(pt->difference, TU_2PI_I * e->value, REL, msg, source);
    } else {
        if (!pt->is_multiplier) {
            print_error("%s: is_multiplier %d; expected a multiplier (%s)\n", msg,
                        pt->is_multiplier, source);
            fail();
        }
        TU_CHECK_CLOSE(pt->ratio, e->value, REL, msg, source);
    }
}

static void test_points_table(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof table / sizeof table[0]; k++) {
        const points_case *c = &table[k];
        sw_points pts;
        compute(&pts, c->f, 0);
        if (pts.n != (size_t)c->n || !pts.complete) {
            print_error("%s: %zu candidates (expected %d), complete %d\n", c->f, pts.n, c->n,
                        pts.complete);
            fail();
        }
        double complex prod = 1, sum = 0;
        for (int j = 0; j < c->n; j++) {
            const sw_point *pt = point_at(&pts, CMPLX(c->pt[j].re, c->pt[j].im), c->f);
            char where[64];
            snprintf(where, sizeof where, "%g%+gi", c->pt[j].re, c->pt[j].im);
            check_one(c->f, where, pt, &c->pt[j], c->source);
            assert_false(pt->at_infinity);
            prod *= pt->ratio;
            sum += pt->difference;
        }
        /* sorted by (re, im) */
        for (size_t j = 1; j < pts.n; j++)
            assert_true(creal(pts.pt[j - 1].z) < creal(pts.pt[j].z) ||
                        (creal(pts.pt[j - 1].z) == creal(pts.pt[j].z) &&
                         cimag(pts.pt[j - 1].z) <= cimag(pts.pt[j].z)));
        assert_true(pts.infinity.at_infinity);
        check_one(c->f, "infinity", &pts.infinity, &c->inf, c->source);
        /* the product relation: all multipliers (infinity included) multiply to
           1; all shifts add to 0 */
        int all_mult = 1, all_shift = 1;
        for (size_t j = 0; j < pts.n; j++) {
            if (pts.pt[j].kind == SW_POINT_BRANCH && !pts.pt[j].is_multiplier)
                all_mult = 0;
            if (pts.pt[j].kind == SW_POINT_BRANCH && !pts.pt[j].is_shift)
                all_shift = 0;
        }
        if (all_mult)
            TU_CHECK_CLOSE(prod * pts.infinity.ratio, 1, REL, c->f,
                           "product of all local multipliers with infinity is 1");
        if (all_shift && !all_mult)
            TU_CHECK_CLOSE(sum + pts.infinity.difference, 0, REL, c->f,
                           "sum of all shifts with infinity is 0");
        sw_points_clear(&pts);
        sw_points_clear(&pts);
    }
}

/* How many turns each multivalued operand makes on each small loop: the
 * winding number of the operand's value around 0 (argument principle). */
static void test_node_turns(void **state)
{
    (void)state;
    sw_points pts;
    compute(&pts, "z^(1/3)*(1-z)^(2/3)", 0);
    assert_int_equal(pts.n, 2);
    const sw_point *p0 = point_at(&pts, 0, "z^(1/3)*(1-z)^(2/3)");
    const sw_point *p1 = point_at(&pts, 1, "z^(1/3)*(1-z)^(2/3)");
    assert_int_equal(p0->nmv, 2);
    assert_non_null(p0->node_turns);
    /* around 0: z turns once, 1 - z not at all; around 1: 1 - z = -(z - 1) once;
       around infinity (clockwise): both -1 */
    assert_int_equal(p0->node_turns[0], 1);
    assert_int_equal(p0->node_turns[1], 0);
    assert_int_equal(p1->node_turns[0], 0);
    assert_int_equal(p1->node_turns[1], 1);
    assert_int_equal(pts.infinity.node_turns[0], -1);
    assert_int_equal(pts.infinity.node_turns[1], -1);
    sw_points_clear(&pts);
    /* a double zero: the operand turns twice */
    compute(&pts, "sqrt((z-1)^2*(z+1))", 0);
    assert_int_equal(point_at(&pts, 1, "sqrt((z-1)^2*(z+1))")->node_turns[0], 2);
    assert_int_equal(point_at(&pts, -1, "sqrt((z-1)^2*(z+1))")->node_turns[0], 1);
    assert_int_equal(pts.infinity.node_turns[0], -3);
    sw_points_clear(&pts);
}

/* A mixed point: sqrt(z) log(z) after a turn is -sqrt(z) (log z + 2 pi i): the
 * ratio depends on the point, so it is neither a pure factor nor a shift. */
static void test_mixed_point(void **state)
{
    (void)state;
    sw_points pts;
    compute(&pts, "sqrt(z)*log(z)", 0);
    assert_int_equal(pts.n, 1);
    assert_int_equal(pts.pt[0].kind, SW_POINT_BRANCH);
    assert_false(pts.pt[0].is_multiplier);
    assert_false(pts.pt[0].is_shift);
    assert_int_equal(pts.infinity.kind, SW_POINT_BRANCH);
    sw_points_clear(&pts);
}

/* Nested roots: the zeros of 1 + sqrt(z) on every branch of the inner root
 * come from the resultant Res_y(1 + y, y^2 - z) = 1 - z, so z = 1 is listed;
 * the principal branch (inner root +1 near z = 1) is not branched there, the
 * other branch (inner root -1) is (elementary: 1 + sqrt(z) vanishes at z = 1
 * only when sqrt(z) = -1; common practice, no source).  An operand with a
 * logarithm inside is not enumerated: 'complete' is 0 with a plain note. */
static void test_nested(void **state)
{
    (void)state;
    sw_points pts;
    compute(&pts, "sqrt(1+sqrt(z))", 0);
    assert_true(pts.complete);
    const sw_point *p0 = point_at(&pts, 0, "sqrt(1+sqrt(z))");
    /* around 0 the inner root flips: f -> sqrt(1 - sqrt z), a point-dependent ratio */
    assert_int_equal(p0->kind, SW_POINT_BRANCH);
    assert_false(p0->is_multiplier);
    const sw_point *p1 = point_at(&pts, 1, "sqrt(1+sqrt(z))");
    assert_int_equal(p1->kind, SW_POINT_REGULAR);
    assert_true(p1->other_sheets);
    sw_points_clear(&pts);
    /* log(sqrt(z) + 2): Res_y(y + 2, y^2 - z) = 4 - z */
    compute(&pts, "log(sqrt(z) + 2)", 0);
    assert_true(pts.complete);
    const sw_point *p4 = point_at(&pts, 4, "log(sqrt(z) + 2)");
    assert_true(p4->other_sheets);
    sw_points_clear(&pts);
    compute(&pts, "sqrt(log(z) + 2)", 0);
    assert_false(pts.complete);
    assert_true(strlen(pts.incomplete) > 10);
    assert_true(strstr(pts.incomplete, "sqrt(log(z) + 2)") != NULL);
    assert_true(strchr(pts.incomplete, '\n') == NULL);
    sw_points_clear(&pts);
}

/* Certified loops give the same classification, marked certified. */
static void test_certified_points(void **state)
{
    (void)state;
    sw_points pts;
    compute(&pts, "z^(1/3)*(1-z)^(2/3)", 1);
    assert_int_equal(pts.n, 2);
    for (size_t k = 0; k < pts.n; k++)
        assert_true(pts.pt[k].certified);
    TU_CHECK_CLOSE(point_at(&pts, 0, "cert")->ratio, W3, REL, "certified at 0",
                   "DLMF 4.2.26: exp(2 pi i/3)");
    TU_CHECK_CLOSE(point_at(&pts, 1, "cert")->ratio, W3SQ, REL, "certified at 1",
                   "DLMF 4.2.26: exp(4 pi i/3)");
    sw_points_clear(&pts);
}

/* Property: random products of powers prod (z - a_k)^(p_k/q_k), or sums of
 * logs: every a_k is found, with multiplier exp(2 pi i e_k) (DLMF 4.2.26) or
 * shift 2 pi i c_k (DLMF 4.2.6); infinity gives exp(-2 pi i sum e_k); the
 * product of all local monodromies is the identity. */
static void test_property_products(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 6101);
    for (int icase = 0; icase < 40; icase++) {
        int logs = icase % 4 == 3;
        int m;
        double complex a[4];
        long p[4], q[4];
        for (;;) {
            m = (int)tu_int(&rng, 1, 4);
            int ok = 1;
            for (int k = 0; k < m; k++) {
                a[k] = CMPLX(tu_int(&rng, -96, 96) / 32.0, tu_int(&rng, -96, 96) / 32.0);
                for (int j = 0; j < k; j++)
                    if (cabs(a[k] - a[j]) < 0.2)
                        ok = 0;
            }
            if (ok)
                break;
        }
        char text[600];
        size_t used = 0;
        double esum = 0;
        for (int k = 0; k < m; k++) {
            q[k] = tu_int(&rng, 2, 7);
            do
                p[k] = tu_int(&rng, -6, 6);
            while (p[k] == 0 || (!logs && p[k] % q[k] == 0));
            esum += (double)p[k] / (double)q[k];
            if (logs)
                used += (size_t)snprintf(text + used, sizeof text - used,
                                         "%s(%ld/%ld)*log(z-(%.17g)-(%.17g)*i)", k ? "+" : "",
                                         p[k], q[k], creal(a[k]), cimag(a[k]));
            else
                used += (size_t)snprintf(text + used, sizeof text - used,
                                         "%s(z-(%.17g)-(%.17g)*i)^(%ld/%ld)", k ? "*" : "",
                                         creal(a[k]), cimag(a[k]), p[k], q[k]);
        }
        sw_points pts;
        compute(&pts, text, 0);
        char what[700];
        snprintf(what, sizeof what, "seed %llu case %d: %s", (unsigned long long)rng.seed, icase,
                 text);
        if (pts.n != (size_t)m || !pts.complete) {
            print_error("%s: %zu candidates, expected %d\n", what, pts.n, m);
            fail();
        }
        double complex prod = 1, sum = 0;
        for (int k = 0; k < m; k++) {
            const sw_point *pt = point_at(&pts, a[k], what);
            double e = (double)p[k] / (double)q[k];
            assert_int_equal(pt->kind, SW_POINT_BRANCH);
            if (logs)
                TU_PROP_CLOSE(&rng, icase, pt->difference, TU_2PI_I * e, REL, what,
                              "DLMF 4.2.6: shift 2 pi i c_k");
            else
                TU_PROP_CLOSE(&rng, icase, pt->ratio, cexp(TU_2PI_I * e), REL, what,
                              "DLMF 4.2.26: exp(2 pi i e_k)");
            prod *= pt->ratio;
            sum += pt->difference;
        }
        if (logs) {
            TU_PROP_CLOSE(&rng, icase, pts.infinity.difference, -TU_2PI_I * esum, REL, what,
                          "infinity: -2 pi i sum c_k");
            TU_PROP_CLOSE(&rng, icase, sum + pts.infinity.difference, 0, REL, what,
                          "shifts add to 0");
        } else {
            int integral = fabs(esum - nearbyint(esum)) < 1e-9;
            TU_PROP_CLOSE(&rng, icase, pts.infinity.ratio, cexp(-TU_2PI_I * esum), REL, what,
                          "infinity: exp(-2 pi i sum e_k) (DLMF 4.2.26)");
            assert_int_equal(pts.infinity.kind, integral ? SW_POINT_REGULAR : SW_POINT_BRANCH);
            TU_PROP_CLOSE(&rng, icase, prod * pts.infinity.ratio, 1, REL, what,
                          "the product of all local monodromies is the identity");
        }
        sw_points_clear(&pts);
    }
}

/* Options: NULL gives the defaults; a smaller loop radius gives the same. */
static void test_points_options(void **state)
{
    (void)state;
    sw_func *f;
    sw_error err;
    assert_int_equal(sw_func_from_expr(&f, "sqrt(z*(z-0.01))", NULL, &err), SW_OK);
    sw_points pts;
    sw_points_init(&pts);
    assert_int_equal(sw_points_compute(&pts, f, NULL, &err), SW_OK);
    assert_int_equal(pts.n, 2);
    TU_CHECK_CLOSE(point_at(&pts, 0.01, "sqrt(z*(z-0.01))")->ratio, -1, REL, "close pair",
                   "DLMF 4.2.26: -1 at each simple zero, even 0.01 apart");
    TU_CHECK_CLOSE(pts.infinity.ratio, 1, REL, "close pair at infinity",
                   "u ~ z^2: exp(-2 pi i) = 1");
    sw_points_clear(&pts);
    sw_points_opts o;
    sw_points_opts_init(&o);
    o.radius_fraction = 0.1;
    assert_int_equal(sw_points_compute(&pts, f, &o, &err), SW_OK);
    TU_CHECK_CLOSE(point_at(&pts, 0, "sqrt(z*(z-0.01))")->ratio, -1, REL, "radius 0.1",
                   "DLMF 4.2.26");
    sw_points_clear(&pts);
    sw_func_free(f);
}

int main(void)
{
    sw_error err;
    if (sw_init(&err) != SW_OK)
        return 1;
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_points_table),
        cmocka_unit_test(test_node_turns),
        cmocka_unit_test(test_mixed_point),
        cmocka_unit_test(test_nested),
        cmocka_unit_test(test_certified_points),
        cmocka_unit_test(test_property_products),
        cmocka_unit_test(test_points_options),
    };
    return cmocka_run_group_tests_name("points", tests, NULL, NULL);
}
