/* The curve engine: input rules, fibers, steps, branch points and local
 * monodromy of algebraic functions P(z, w) = 0.
 *
 * Sources are named beside each check.  Reference library: GSL's
 * gsl_poly_complex_solve (companion-matrix QR) for fibers. */
/* curve_internal.h first: FLINT's headers must precede <complex.h> */
#include "curve_internal.h"

#include "test_util.h"

#include <gsl/gsl_poly.h>

#include "sheetwalk/func.h"
#include "sheetwalk/monodromy.h"
#include "sheetwalk/path.h"
#include "sheetwalk/track.h"

static int setup(void **state)
{
    (void)state;
    sw_error err;
    return sw_init(&err) == SW_OK ? 0 : -1;
}

static sw_func *curve(const char *text, const sw_params *params)
{
    sw_func *f = NULL;
    sw_error err;
    sw_error_clear(&err);
    if (sw_func_from_curve(&f, text, params, &err) != SW_OK) {
        print_error("%s: %s\n", text, err.msg);
        fail();
    }
    return f;
}

static void points_of(sw_points *pts, const char *text, int certify)
{
    sw_func *f = curve(text, NULL);
    sw_error err;
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
    if (!pts->product_ok) {
        print_error("points of %s: product relation failed\n", text);
        fail();
    }
}

static const sw_point *point_near(const sw_points *pts, double complex z, const char *text)
{
    for (size_t k = 0; k < pts->n; k++)
        if (cabs(pts->pt[k].z - z) <= fmax(pts->pt[k].radius, 1e-12) + 1e-12 * cabs(z))
            return &pts->pt[k];
    print_error("%s: no candidate at %.17g%+.17gi\n", text, creal(z), cimag(z));
    fail();
    return NULL;
}

/* Cycle type as a sorted list of lengths (descending) into LENS; returns count. */
static size_t cycle_type(size_t *lens, const int *perm, size_t n)
{
    unsigned char seen[64] = {0};
    size_t nc = 0;
    for (size_t i = 0; i < n; i++) {
        size_t len = 0;
        for (int x = (int)i; !seen[x]; x = perm[x]) {
            seen[x] = 1;
            len++;
        }
        if (len) lens[nc++] = len;
    }
    for (size_t a = 1; a < nc; a++)
        for (size_t b = a; b > 0 && lens[b] > lens[b - 1]; b--) {
            size_t t = lens[b]; lens[b] = lens[b - 1]; lens[b - 1] = t;
        }
    return nc;
}

/* ---------------------------------------------------------------- input */

typedef struct bad_input {
    const char *text;
    sw_status code;
    const char *must_contain;   /* a piece of the message */
} bad_input;

static void test_bad_input(void **state)
{
    (void)state;
    /* each message names the problem and where (style.md, cli.md) */
    static const bad_input cases[] = {
        {"w^2 - sqrt(z)", SW_EPARSE, "sqrt(z)"},
        {"w^2 - sqrt(z)", SW_EPARSE, "column 7"},
        {"w - log(1 + z)", SW_EPARSE, "log(1 + z)"},
        {"w^2 - z^(1/3)", SW_EPARSE, "not a polynomial"},
        {"w^2 - 1/z", SW_EPARSE, "division by a non-constant"},
        {"w*z^-1 + 1", SW_EPARSE, "not a polynomial"},
        {"z^2 + 1", SW_EINPUT, "degree 0 in w"},
        {"w^41 - z", SW_EINPUT, "40"},
        {"w - z^41", SW_EINPUT, "40"},
        {"(w - z)^2*(w + 1)", SW_EINPUT, "not square-free"},
        {"w^2 - w^2", SW_EINPUT, "identically zero"},
        {"w - z/0", SW_EPARSE, ""},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        sw_func *f = NULL;
        sw_error err;
        sw_error_clear(&err);
        sw_status st = sw_func_from_curve(&f, cases[i].text, NULL, &err);
        if (st == SW_OK || strlen(err.msg) == 0 || strstr(err.msg, cases[i].must_contain) == NULL) {
            print_error("%s: status %d, message '%s' (want code %d containing '%s')\n",
                        cases[i].text, st, err.msg, cases[i].code, cases[i].must_contain);
            sw_func_free(f);
            fail();
        }
        /* the parser may classify z/0 itself; everything else has our code */
        if (cases[i].must_contain[0] != '\0')
            assert_int_equal(st, cases[i].code);
    }
}

/* Exact rationals: "0.1" is 1/10, so the branch points of
 * w^2 = (z - 0.1)(z - 0.3) are certified balls containing 1/10 and 3/10
 * (exact arithmetic; the balls come from Arb). */
static void test_exact_decimals(void **state)
{
    (void)state;
    sw_points pts;
    points_of(&pts, "w^2 - (z - 0.1)*(z - 0.3)", 0);
    assert_int_equal(pts.n, 2);
    const sw_point *a = point_near(&pts, 0.1, "decimals");
    const sw_point *b = point_near(&pts, 0.3, "decimals");
    assert_true(fabs(creal(a->z) - 0.1) <= a->radius + 1e-17);
    assert_true(fabs(creal(b->z) - 0.3) <= b->radius + 3e-17);
    assert_int_equal(a->kind, SW_POINT_BRANCH);
    sw_points_clear(&pts);
}

/* Complex coefficients and parameters: w^2 = (z - i)(z + 2i) branches at i
 * and -2i; w^2 = z (z - a) with a = 0.75 at 0 and 0.75 (square-root branch
 * points: simple zeros of the radicand, DLMF 4.2.26 applied to sqrt). */
static void test_complex_and_params(void **state)
{
    (void)state;
    sw_points pts;
    points_of(&pts, "w^2 - (z - i)*(z + 2i)", 0);
    assert_int_equal(pts.n, 2);
    assert_int_equal(point_near(&pts, CMPLX(0, 1), "complex")->kind, SW_POINT_BRANCH);
    assert_int_equal(point_near(&pts, CMPLX(0, -2), "complex")->kind, SW_POINT_BRANCH);
    assert_int_equal(pts.infinity.kind, SW_POINT_REGULAR);
    sw_points_clear(&pts);

    sw_params par;
    sw_params_init(&par);
    sw_error err;
    assert_int_equal(sw_params_set(&par, "a", 0.75, &err), SW_OK);
    sw_func *f = curve("w^2 - z*(z - a)", &par);
    sw_points_init(&pts);
    assert_int_equal(sw_points_compute(&pts, f, NULL, &err), SW_OK);
    assert_true(pts.product_ok);
    assert_int_equal(pts.n, 2);
    point_near(&pts, 0, "param");
    point_near(&pts, 0.75, "param");
    sw_points_clear(&pts);
    sw_func_free(f);
    sw_params_clear(&par);
}

/* ---------------------------------------------------------------- fibers */

/* The fiber of w^3 = z at z = 8 is 2 exp(2 pi i k / 3) (cube roots, DLMF
 * 4.2.4-4.2.7 / common practice); the documented order is increasing real
 * part, then increasing imaginary part for equal real parts. */
static void test_fiber_order(void **state)
{
    (void)state;
    sw_func *f = curve("w^3 - z", NULL);
    sw_germ g;
    sw_error err;
    assert_int_equal(sw_germ_init(&g, f), SW_OK);
    assert_int_equal(sw_func_germ_at(&g, f, 8, SW_BANK_NONE, NULL, &err), SW_OK);
    double complex want[3] = {CMPLX(-1, -sqrt(3.0)), CMPLX(-1, sqrt(3.0)), 2};
    double complex got[3];
    assert_int_equal(sw_func_sheet_values(got, 3, f, &g), 3);
    for (int k = 0; k < 3; k++)
        assert_true(cabs(got[k] - want[k]) <= 1e-14 * 2);
    assert_int_equal(g.sheet, 0);
    /* hint: the sheet nearest 1.9 is the real root */
    double complex h = 1.9;
    assert_int_equal(sw_func_germ_at(&g, f, 8, SW_BANK_NONE, &h, &err), SW_OK);
    assert_int_equal(g.sheet, 2);
    assert_true(cabs(sw_func_value(f, &g) - 2) <= 1e-14);
    /* a hint equally near two sheets (on the real axis, between the
     * conjugate pair) is refused */
    h = -1;
    assert_int_equal(sw_func_germ_at(&g, f, 8, SW_BANK_NONE, &h, &err), SW_EAMBIGUOUS);
    assert_true(strlen(err.msg) > 0);
    /* at the branch point the fiber is degenerate */
    assert_int_equal(sw_func_germ_at(&g, f, 0, SW_BANK_NONE, NULL, &err), SW_ESINGULAR);
    assert_true(strlen(err.msg) > 0);
    sw_germ_clear(&g);
    sw_func_free(f);
}

/* Fibers against GSL's companion-matrix solver at random real points of a
 * random real curve (reference library; the two methods are independent). */
static void test_fiber_vs_gsl(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 20240603u);
    for (int trial = 0; trial < 20; trial++) {
        int n = (int)tu_int(&rng, 2, 7), m = (int)tu_int(&rng, 1, 5);
        char text[2048];
        size_t len = 0;
        long c[8][6];
        for (int j = 0; j <= n; j++)
            for (int k = 0; k <= m; k++) {
                c[j][k] = tu_int(&rng, -9, 9);
                if (j == n && k == 0 && c[j][k] == 0) c[j][k] = 1;
                len += (size_t)snprintf(text + len, sizeof text - len, "%s(%ld)*z^%d*w^%d",
                                        len ? "+" : "", c[j][k], k, j);
            }
        double z = tu_range(&rng, -2, 2);
        double a[8];
        for (int j = 0; j <= n; j++) {
            double s = 0;
            for (int k = m; k >= 0; k--) s = s * z + (double)c[j][k];
            a[j] = s;
        }
        if (fabs(a[n]) < 0.1)
            continue;
        double sol[16];
        gsl_poly_complex_workspace *ws = gsl_poly_complex_workspace_alloc((size_t)n + 1);
        assert_int_equal(gsl_poly_complex_solve(a, (size_t)n + 1, ws, sol), 0);
        gsl_poly_complex_workspace_free(ws);
        sw_func *f = curve(text, NULL);
        sw_germ g;
        sw_error err;
        assert_int_equal(sw_germ_init(&g, f), SW_OK);
        if (sw_func_germ_at(&g, f, z, SW_BANK_NONE, NULL, &err) != SW_OK) {
            sw_germ_clear(&g);
            sw_func_free(f);
            continue;   /* z happened to be (near) a branch point */
        }
        double scale = 0;
        for (int j = 0; j < n; j++) scale = fmax(scale, cabs(CMPLX(sol[2 * j], sol[2 * j + 1])));
        for (int j = 0; j < n; j++) {
            double complex r = CMPLX(sol[2 * j], sol[2 * j + 1]);
            double best = INFINITY;
            for (int i = 0; i < n; i++) best = fmin(best, cabs(g.s[i] - r));
            if (best > 1e-7 * fmax(1, scale)) {
                print_error("seed %llu trial %d: %s at z=%g: GSL root %g%+gi unmatched (%g)\n",
                            (unsigned long long)rng.seed, trial, text, z, creal(r), cimag(r), best);
                fail();
            }
        }
        sw_germ_clear(&g);
        sw_func_free(f);
    }
}

/* One counter-clockwise turn round 0 swaps the two sheets of w^2 = z, and
 * the continued value is -sqrt (DLMF 4.2.26: sqrt changes sign once round
 * its branch point).  In certified mode every step is proven. */
static void test_track_sqrt(void **state)
{
    (void)state;
    sw_func *f = curve("w^2 - z", NULL);
    for (int cert = 0; cert <= 1; cert++) {
        sw_path p;
        sw_error err;
        sw_path_init(&p);
        assert_int_equal(sw_path_parse(&p, "circle 0 2", "path", NULL, &err), SW_OK);
        sw_germ g;
        sw_germ_init(&g, f);
        double complex h = sqrt(2.0);
        assert_int_equal(sw_func_germ_at(&g, f, 2, SW_BANK_NONE, &h, &err), SW_OK);
        sw_track_opts o;
        sw_track_opts_init(&o);
        o.step.certify = cert;
        sw_trace tr;
        sw_trace_init(&tr);
        assert_int_equal(sw_track_run(&tr, f, &g, &p, &o, &err), SW_OK);
        double complex end = sw_func_value(f, &tr.vert[tr.nvert - 1]);
        assert_true(cabs(end + sqrt(2.0)) <= 1e-12);
        if (cert)
            assert_true(tr.certified);
        sw_trace_clear(&tr);
        sw_germ_clear(&g);
        sw_path_clear(&p);
    }
    sw_func_free(f);
}

/* A path through a branch point is refused, never silently continued. */
static void test_through_branch_point(void **state)
{
    (void)state;
    sw_func *f = curve("w^2 - z*(z - 1)", NULL);
    sw_path p;
    sw_error err;
    sw_path_init(&p);
    assert_int_equal(sw_path_parse(&p, "-1; 2", "path", NULL, &err), SW_OK);
    sw_germ g;
    sw_germ_init(&g, f);
    assert_int_equal(sw_func_germ_at(&g, f, -1, SW_BANK_NONE, NULL, &err), SW_OK);
    sw_trace tr;
    sw_trace_init(&tr);
    sw_error_clear(&err);
    assert_int_equal(sw_track_run(&tr, f, &g, &p, NULL, &err), SW_ESINGULAR);
    assert_true(strlen(err.msg) > 0);
    sw_trace_clear(&tr);
    sw_germ_clear(&g);
    sw_path_clear(&p);
    sw_func_free(f);
}

/* ------------------------------------------------------- branch points */

/* w^2 = z (z - 1): simple branch points at 0 and 1, infinity unbranched
 * (even number of simple zeros; Miranda, Algebraic Curves and Riemann
 * Surfaces, ch. III, hyperelliptic curves). */
static void test_points_sqrt2(void **state)
{
    (void)state;
    sw_points pts;
    points_of(&pts, "w^2 - z*(z-1)", 0);
    assert_int_equal(pts.n, 2);
    for (size_t k = 0; k < 2; k++) {
        assert_int_equal(pts.pt[k].kind, SW_POINT_BRANCH);
        assert_int_equal(pts.pt[k].perm[0], 1);
        assert_int_equal(pts.pt[k].perm[1], 0);
    }
    assert_true(cabs(pts.pt[0].z) < 1e-15 && cabs(pts.pt[1].z - 1) < 1e-15);
    assert_int_equal(pts.infinity.kind, SW_POINT_REGULAR);
    assert_int_equal(pts.nsheets, 2);
    sw_points_clear(&pts);
}

/* w^n = z: one n-cycle at 0 and at infinity (the cyclic cover z = w^n is
 * totally ramified over 0 and infinity; Miranda, ch. II.4, Hurwitz's
 * formula examples). */
static void test_cycle_type_root(void **state)
{
    (void)state;
    for (int n = 2; n <= 7; n++) {
        char text[32];
        snprintf(text, sizeof text, "w^%d - z", n);
        sw_points pts;
        points_of(&pts, text, 0);
        assert_int_equal(pts.n, 1);
        size_t lens[8];
        assert_int_equal(cycle_type(lens, pts.pt[0].perm, (size_t)n), 1);
        assert_int_equal(lens[0], n);
        assert_int_equal(cycle_type(lens, pts.infinity.perm, (size_t)n), 1);
        assert_int_equal(lens[0], n);
        sw_points_clear(&pts);
    }
}

/* A node is not a branch point: w^2 = z^2 (z - 1) has the two smooth
 * branches w = +-z sqrt(z - 1) through (0, 0) (Brieskorn-Knoerrer, Plane
 * Algebraic Curves, ordinary double points); 1 and infinity branch. */
static void test_node(void **state)
{
    (void)state;
    sw_points pts;
    points_of(&pts, "w^2 - z^2*(z - 1)", 0);
    assert_int_equal(pts.n, 2);
    assert_int_equal(point_near(&pts, 0, "node")->kind, SW_POINT_REGULAR);
    assert_int_equal(point_near(&pts, 1, "node")->kind, SW_POINT_BRANCH);
    assert_int_equal(pts.infinity.kind, SW_POINT_BRANCH);
    sw_points_clear(&pts);
}

/* A pole without branching: z w = 1 (w = 1/z) and z w^2 = 1 + z, where both
 * sheets +-sqrt((1+z)/z) branch at 0 and -1 (DLMF 4.2.26). */
static void test_poles(void **state)
{
    (void)state;
    sw_points pts;
    points_of(&pts, "z*w - 1", 0);
    assert_int_equal(pts.n, 1);
    assert_int_equal(pts.pt[0].kind, SW_POINT_POLE);
    sw_points_clear(&pts);
    points_of(&pts, "z*w^2 - 1 - z", 0);
    assert_int_equal(pts.n, 2);
    assert_int_equal(point_near(&pts, 0, "pole")->kind, SW_POINT_BRANCH);
    assert_int_equal(point_near(&pts, -1, "pole")->kind, SW_POINT_BRANCH);
    sw_points_clear(&pts);
}

/* Product relation on random dense curves (the loops ordered by argument
 * round the base point compose to the inverse of infinity's; methods.md 2,
 * Deconinck-van Hoeij 2001).  The library checks it; we also recompute it. */
static void random_curve_text(char *text, size_t cap, tu_rng *rng, int n, int m)
{
    size_t len = 0;
    text[0] = '\0';
    for (int j = 0; j <= n; j++)
        for (int k = 0; k <= m; k++) {
            long c = tu_int(rng, -9, 9);
            if (j == n && k == m && c == 0) c = 1;
            if (c == 0) continue;
            len += (size_t)snprintf(text + len, cap - len, "%s(%ld)*z^%d*w^%d", len ? "+" : "",
                                    c, k, j);
        }
}

static void test_product_relation_random(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 777u);
    for (int trial = 0; trial < 12; trial++) {
        char text[4096];
        int n = (int)tu_int(&rng, 2, 5), m = (int)tu_int(&rng, 1, 5);
        random_curve_text(text, sizeof text, &rng, n, m);
        sw_func *f = NULL;
        sw_error err;
        if (sw_func_from_curve(&f, text, NULL, &err) != SW_OK)
            continue;   /* e.g. not square-free: rare, and refused by design */
        sw_points pts;
        sw_points_init(&pts);
        sw_status st = sw_points_compute(&pts, f, NULL, &err);
        if (st != SW_OK || !pts.product_ok) {
            print_error("seed %llu trial %d: %s: %s (product_ok %d)\n",
                        (unsigned long long)rng.seed, trial, text, st ? err.msg : "", pts.product_ok);
            fail();
        }
        /* every candidate's loop and infinity give permutations */
        for (size_t k = 0; k < pts.n; k++)
            assert_non_null(pts.pt[k].perm);
        sw_points_clear(&pts);
        sw_func_free(f);
    }
}

/* Certified loops agree with double-precision loops and are all proven. */
static void test_certified_agrees(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 4242u);
    for (int trial = 0; trial < 4; trial++) {
        char text[4096];
        random_curve_text(text, sizeof text, &rng, (int)tu_int(&rng, 2, 3), (int)tu_int(&rng, 1, 3));
        sw_func *f = NULL;
        sw_error err;
        if (sw_func_from_curve(&f, text, NULL, &err) != SW_OK)
            continue;
        sw_points a, b;
        sw_points_opts o;
        sw_points_opts_init(&o);
        sw_points_init(&a);
        sw_points_init(&b);
        assert_int_equal(sw_points_compute(&a, f, &o, &err), SW_OK);
        o.certify = 1;
        assert_int_equal(sw_points_compute(&b, f, &o, &err), SW_OK);
        assert_int_equal(a.n, b.n);
        assert_true(a.product_ok && b.product_ok);
        for (size_t k = 0; k <= a.n; k++) {
            const sw_point *pa = k < a.n ? &a.pt[k] : &a.infinity;
            const sw_point *pb = k < b.n ? &b.pt[k] : &b.infinity;
            if (!pb->certified) {
                print_error("seed %llu: %s: loop %zu not proven\n", (unsigned long long)rng.seed, text, k);
                fail();
            }
            for (size_t i = 0; i < a.nsheets; i++)
                if (pa->perm[i] != pb->perm[i]) {
                    print_error("seed %llu: %s: loop %zu differs\n", (unsigned long long)rng.seed, text, k);
                    fail();
                }
        }
        sw_points_clear(&a);
        sw_points_clear(&b);
        sw_func_free(f);
    }
}

/* A certified step must be refused when two roots meet inside it, even when
 * the fibers at both ends are far apart and each root returns to where it
 * started.  w^2 = z^4 is (w - z^2)(w + z^2): the roots +-z^2 meet at z = 0
 * (elementary algebra) and have the same values +-r^4 at z = -r and z = r, so
 * the step from -r to r passes the end-point geometry; only the proof can
 * refuse it, in either labelling.  Controls that must be proven, so the
 * refusal is not vacuous: the same steps for w^2 = z^4 + 1/100, whose roots
 * +-sqrt(z^4 + 1/100) stay at least 2/10 apart on the real segment, and a
 * step of w^2 = z^4 away from 0. */
static void test_certify_refuses_collision(void **state)
{
    (void)state;
    static const double radii[] = {0.5, 0.2, 0.05, 1e-3};
    sw_func *f = curve("w^2 - z^4", NULL), *g = curve("w^2 - z^4 - 1/100", NULL);
    const sw_curve *cf = sw_curve_of(f), *cg = sw_curve_of(g);
    double complex w0[2], w1[2], sw[2];
    sw_error err;
    for (size_t k = 0; k < sizeof radii / sizeof radii[0]; k++) {
        double r = radii[k];
        /* the colliding pair: the same sorted values at both ends */
        assert_int_equal(sw_curve_fiber(w0, cf, -r, &err), SW_OK);
        assert_int_equal(sw_curve_fiber(w1, cf, r, &err), SW_OK);
        sw_curve_sort_fiber(w0, 2);
        sw_curve_sort_fiber(w1, 2);
        assert_true(cabs(w0[0] - w1[0]) <= 1e-12 * r * r && cabs(w0[1] - w1[1]) <= 1e-12 * r * r);
        assert_int_not_equal(sw_curve_certify_step(cf, -r, w0, r, w1), SW_STEP_OK);
        sw[0] = w1[1];
        sw[1] = w1[0];
        assert_int_not_equal(sw_curve_certify_step(cf, -r, w0, r, sw), SW_STEP_OK);
        /* the pair that does not meet: proven, in pieces when long */
        assert_int_equal(sw_curve_fiber(w0, cg, -r, &err), SW_OK);
        sw_curve_sort_fiber(w0, 2);
        {
            double complex cur[2] = {w0[0], w0[1]}, za = -r;
            int pieces = r > 0.1 ? 16 : 1;
            for (int q = 1; q <= pieces; q++) {
                double complex zb = -r + 2 * r * q / pieces;
                assert_int_equal(sw_curve_step(w1, cg, za, cur, zb, 0.25), SW_STEP_OK);
                if (sw_curve_certify_step(cg, za, cur, zb, w1) != SW_STEP_OK) {
                    print_error("w^2 = z^4 + 1/100: step %g -> %g not proven\n", creal(za), creal(zb));
                    fail();
                }
                cur[0] = w1[0];
                cur[1] = w1[1];
                za = zb;
            }
        }
    }
    /* w^2 = z^4 away from the meeting point */
    assert_int_equal(sw_curve_fiber(w0, cf, 0.4, &err), SW_OK);
    sw_curve_sort_fiber(w0, 2);
    assert_int_equal(sw_curve_step(w1, cf, 0.4, w0, 0.45, 0.25), SW_STEP_OK);
    assert_int_equal(sw_curve_certify_step(cf, 0.4, w0, 0.45, w1), SW_STEP_OK);
    sw_func_free(f);
    sw_func_free(g);
}

/* Relabelling the base point gives conjugate permutations: a circle round a
 * branch point started at a random point of the circle (its own base, its
 * own labels) has the cycle type of the local permutation (conjugacy
 * classes of S_n are cycle types: common practice, e.g. any algebra text). */
static void test_conjugate_base(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 99u);
    for (int trial = 0; trial < 5; trial++) {
        char text[4096];
        random_curve_text(text, sizeof text, &rng, (int)tu_int(&rng, 3, 4), (int)tu_int(&rng, 1, 3));
        sw_func *f = NULL;
        sw_error err;
        if (sw_func_from_curve(&f, text, NULL, &err) != SW_OK)
            continue;
        sw_points pts;
        sw_points_init(&pts);
        assert_int_equal(sw_points_compute(&pts, f, NULL, &err), SW_OK);
        size_t n = pts.nsheets;
        for (size_t k = 0; k < pts.n; k++) {
            double dmin = INFINITY;
            for (size_t j = 0; j < pts.n; j++)
                if (j != k) dmin = fmin(dmin, cabs(pts.pt[j].z - pts.pt[k].z));
            if (!isfinite(dmin)) dmin = 1;
            double r = dmin * tu_range(&rng, 0.1, 0.3), th = tu_range(&rng, 0, 2 * TU_PI);
            sw_path p;
            sw_path_init(&p);
            for (int q = 0; q <= 48; q++)
                sw_path_push(&p, pts.pt[k].z + r * cexp(CMPLX(0, th + 2 * TU_PI * (q % 48) / 48)),
                             SW_BANK_NONE, &err);
            sw_germ g;
            sw_germ_init(&g, f);
            assert_int_equal(sw_func_germ_at(&g, f, p.z[0], SW_BANK_NONE, NULL, &err), SW_OK);
            sw_trace tr;
            sw_trace_init(&tr);
            assert_int_equal(sw_track_run(&tr, f, &g, &p, NULL, &err), SW_OK);
            int perm[64];
            const double complex *E = tr.vert[tr.nvert - 1].s;
            for (size_t i = 0; i < n; i++) {
                size_t best = 0;
                for (size_t j = 1; j < n; j++)
                    if (cabs(E[i] - g.s[j]) < cabs(E[i] - g.s[best])) best = j;
                perm[i] = (int)best;
            }
            size_t l1[64], l2[64];
            size_t c1 = cycle_type(l1, perm, n), c2 = cycle_type(l2, pts.pt[k].perm, n);
            assert_int_equal(c1, c2);
            for (size_t i = 0; i < c1; i++)
                if (l1[i] != l2[i]) {
                    print_error("seed %llu: %s: point %zu cycle types differ\n",
                                (unsigned long long)rng.seed, text, k);
                    fail();
                }
            sw_trace_clear(&tr);
            sw_germ_clear(&g);
            sw_path_clear(&p);
        }
        sw_points_clear(&pts);
        sw_func_free(f);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_bad_input),
        cmocka_unit_test(test_exact_decimals),
        cmocka_unit_test(test_complex_and_params),
        cmocka_unit_test(test_fiber_order),
        cmocka_unit_test(test_fiber_vs_gsl),
        cmocka_unit_test(test_track_sqrt),
        cmocka_unit_test(test_through_branch_point),
        cmocka_unit_test(test_points_sqrt2),
        cmocka_unit_test(test_cycle_type_root),
        cmocka_unit_test(test_node),
        cmocka_unit_test(test_poles),
        cmocka_unit_test(test_product_relation_random),
        cmocka_unit_test(test_certified_agrees),
        cmocka_unit_test(test_certify_refuses_collision),
        cmocka_unit_test(test_conjugate_base),
    };
    return cmocka_run_group_tests_name("curve", tests, setup, NULL);
}
