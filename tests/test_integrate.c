/* Integrals along paths (sw_integrate_path), against published values.
 *
 * Sources of the expected values (named beside every check):
 *  - DLMF 5.12.1: B(a,b) = int_0^1 t^(a-1) (1-t)^(b-1) dt, with GSL's
 *    gsl_sf_beta as the reference implementation; on a segment [z0, z0 + c]
 *    the substitution z = z0 + c t gives c^(a+b-1) B(a,b) on the principal
 *    branches (common practice, no source);
 *  - DLMF 5.12.3 with b = 1 - a and DLMF 5.5.3: int_0^inf t^(a-1)/(1+t) dt =
 *    Gamma(a) Gamma(1-a) = pi / sin(pi a); a ray turned by an angle below pi
 *    gives the same value (Cauchy's theorem, common practice, no source);
 *  - DLMF 19.2.8: K(k) = int_0^1 dt / sqrt((1-t^2)(1-k^2 t^2)), reference
 *    gsl_sf_ellint_Kcomp; a loop around [-1, 1] on the curve
 *    w^2 = (1-z^2)(1-k^2 z^2) gives 4 K(k) (twice the integral over the
 *    cut, once on each bank), a loop around [1, 1/k] gives 2 K(k') with
 *    k' = sqrt(1-k^2) (DLMF 19.2.9 K'(k) = K(k'); the substitution
 *    t^2 = 1/(1 - k'^2 s^2) maps the integral over [1, 1/k] to 19.2.8, common
 *    practice, no source);
 *  - DLMF 25.12.2: Li2(1) = -int_0^1 log(1-t)/t dt, reference gsl_sf_dilog;
 *  - DLMF 5.12.1 differentiated in a (and in a and b), with DLMF 5.15.1:
 *    int_0^1 t^(a-1) log^n t dt = (-1)^n n! / a^(n+1) and
 *    int_0^1 log t log(1-t) dt = 2 - pi^2/6 (gsl_sf_psi_1 for psi'(2));
 *  - DLMF 15.6.1 (Euler's integral of 2F1) and DLMF 13.4.1 (of 1F1) for
 *    random exponents, evaluated by mpmath (/usr/bin/python3, Debian's
 *    python3-mpmath) at 30 digits: an independent implementation;
 *  - the residue theorem and Cauchy's theorem for closed loops (common
 *    practice, no source).
 * Every check asks for 1e-10 relative accuracy and an honest error estimate:
 * the reported abserr must not be smaller than the actual error. */
#include "test_util.h"

#include <gsl/gsl_integration.h>
#include <gsl/gsl_sf_dilog.h>
#include <gsl/gsl_sf_ellint.h>
#include <gsl/gsl_sf_gamma.h>
#include <gsl/gsl_sf_psi.h>

#include "sheetwalk/cuts.h"
#include "sheetwalk/integrate.h"

#define REL 1e-10 /* the accuracy goal */
#define TU_E 2.71828182845904523536 /* DLMF 4.2.11 */

/* ------------------------------------------------------------ helpers */

typedef struct ires {
    sw_status st;
    sw_integral r;
    char msg[SW_ERROR_MSG_MAX];
} ires;

/* Integrate FTEXT (an expression, or a curve when CURVE) along PATHTEXT with
 * integrand RTEXT (NULL: w), branch fixed at VERTEX nearest *W (NULL:
 * principal / sheet 1). */
static ires integ(const char *ftext, int curve, const char *rtext, const char *pathtext,
                  size_t vertex, const double complex *w)
{
    ires x;
    memset(&x, 0, sizeof x);
    sw_integral_init(&x.r);
    sw_func *f = NULL;
    sw_expr *R = NULL;
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    sw_error_clear(&err);
    x.st = curve ? sw_func_from_curve(&f, ftext, NULL, &err)
                 : sw_func_from_expr(&f, ftext, NULL, &err);
    if (x.st == SW_OK && rtext)
        x.st = sw_integrand_parse(&R, rtext, NULL, &err);
    if (x.st == SW_OK)
        x.st = sw_path_parse(&p, pathtext, "path", NULL, &err);
    if (x.st == SW_OK)
        x.st = sw_integrate_path(&x.r, f, R, &p, vertex, w, NULL, &err);
    snprintf(x.msg, sizeof x.msg, "%s", err.msg);
    sw_path_clear(&p);
    sw_expr_free(R);
    sw_func_free(f);
    return x;
}

/* Value within REL of WANT, and the error estimate honest (not below the
 * actual error, with a floor of a few rounding units). */
static void check_value(const ires *x, double complex want, const char *what, const char *source)
{
    if (x->st != SW_OK) {
        print_error("%s: status %d (%s)\n", what, (int)x->st, x->msg);
        fail();
    }
    TU_CHECK_CLOSE(x->r.value, want, REL, what, source);
    double actual = cabs(x->r.value - want);
    if (!(actual <= x->r.abserr + 8 * 2.2e-16 * cabs(want))) {
        print_error("%s: abserr %.3g is below the actual error %.3g (%s)\n", what, x->r.abserr,
                    actual, source);
        fail();
    }
    if (!(x->r.abserr <= REL * cabs(want) + 1e-300)) {
        print_error("%s: abserr %.3g above the goal for |value| %.3g\n", what, x->r.abserr,
                    cabs(want));
        fail();
    }
    assert_int_equal(x->r.certified, 0);
    assert_true(x->r.evaluations > 0);
}

static void fmt(char *buf, size_t n, double x) { snprintf(buf, n, "(%.17g)", x); }

/* ------------------------------------------------------------ Beta */

typedef struct beta_case {
    double a, b;
} beta_case;

static const beta_case beta_table[] = {
    /* a, b: expected gsl_sf_beta(a, b), DLMF 5.12.1, tolerance REL */
    {0.5, 0.5},   {0.37, 0.81}, {0.05, 0.9}, {1.5, 0.25},
    {2.0, 3.0},   {0.02, 0.3},  {4.5, 0.6},  {0.999, 0.011},
};

static void test_beta_table(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof beta_table / sizeof beta_table[0]; k++) {
        char a[40], b[40], f[160], what[200];
        fmt(a, sizeof a, beta_table[k].a - 1);
        fmt(b, sizeof b, beta_table[k].b - 1);
        snprintf(f, sizeof f, "z^%s*(1-z)^%s", a, b);
        ires x = integ(f, 0, NULL, "0; 1", 0, NULL);
        snprintf(what, sizeof what, "int_0^1 %s dz", f);
        check_value(&x, gsl_sf_beta(beta_table[k].a, beta_table[k].b), what,
                    "DLMF 5.12.1, gsl_sf_beta");
        /* both ends are detected exactly (integer powers are single-valued
           and their ends regular) */
        if (beta_table[k].a != floor(beta_table[k].a) && beta_table[k].b != floor(beta_table[k].b)) {
            assert_int_equal(x.r.nends, 2);
            for (size_t e = 0; e < 2; e++)
                assert_int_equal(x.r.end[e].exact, 1);
            TU_CHECK_CLOSE(x.r.end[0].exponent, beta_table[k].a - 1, 1e-12, "exponent at 0",
                           "DLMF 5.12.1 integrand");
            TU_CHECK_CLOSE(x.r.end[1].exponent, beta_table[k].b - 1, 1e-12, "exponent at 1",
                           "DLMF 5.12.1 integrand");
        }
        sw_integral_clear(&x.r);
    }
}

/* Random exponents on random segments: c^(a+b-1) B(a,b). */
static void test_beta_random_segments(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 20240605);
    for (int k = 0; k < 12; k++) {
        double a = tu_range(&rng, 0.03, 3), b = tu_range(&rng, 0.03, 3);
        double complex z0 = CMPLX(tu_range(&rng, -2, 2), tu_range(&rng, -2, 2));
        double complex c = tu_range(&rng, 0.2, 3) * cexp(CMPLX(0, tu_range(&rng, -3, 3)));
        char A[40], Bs[40], f[300], p[200], v0[80], v1[80];
        fmt(A, sizeof A, a - 1);
        fmt(Bs, sizeof Bs, b - 1);
        tu_fmt_vertex(v0, sizeof v0, z0);
        tu_fmt_vertex(v1, sizeof v1, z0 + c);
        snprintf(f, sizeof f, "(z-(%s))^%s*((%s)-z)^%s", v0, A, v1, Bs);
        snprintf(p, sizeof p, "%s; %s", v0, v1);
        ires x = integ(f, 0, NULL, p, 0, NULL);
        /* the principal branches: arg(z - z0) = arg c, arg(z1 - z) = arg c */
        double complex want = cexp((a + b - 1) * clog(c)) * gsl_sf_beta(a, b);
        if (x.st != SW_OK)
            print_error("seed %llu case %d: %s\n", (unsigned long long)rng.seed, k, x.msg);
        assert_int_equal(x.st, SW_OK);
        TU_PROP_CLOSE(&rng, k, x.r.value, want, REL, f, "DLMF 5.12.1 with z = z0 + c t");
        assert_true(cabs(x.r.value - want) <= x.r.abserr + 1e-15 * cabs(want));
        sw_integral_clear(&x.r);
    }
}

/* ------------------------------------------------------------ rays */

static void test_ray_keyhole_type(void **state)
{
    (void)state;
    const double as[] = {0.1, 0.3, 0.5, 0.77, 0.95};
    const char *paths[] = {"0; 1; inf", "0; 2; inf", "0; exp(0.7i); inf", "0; exp(-2.5i); inf"};
    for (size_t k = 0; k < sizeof as / sizeof as[0]; k++)
        for (size_t j = 0; j < sizeof paths / sizeof paths[0]; j++) {
            char f[120], what[200];
            snprintf(f, sizeof f, "z^(%.17g)/(1+z)", as[k] - 1);
            ires x = integ(f, 0, NULL, paths[j], 0, NULL);
            snprintf(what, sizeof what, "int %s along %s", f, paths[j]);
            check_value(&x, TU_PI / sin(TU_PI * as[k]), what,
                        "DLMF 5.12.3 with b = 1 - a, DLMF 5.5.3");
            sw_integral_clear(&x.r);
        }
}

/* ------------------------------------------------------------ elliptic */

static void test_elliptic_K(void **state)
{
    (void)state;
    const double ks[] = {0.1, 0.5, 0.9, 0.999};
    for (size_t j = 0; j < sizeof ks / sizeof ks[0]; j++) {
        double k = ks[j], K = gsl_sf_ellint_Kcomp(k, GSL_PREC_DOUBLE);
        char f[160], c[160], what[240];
        snprintf(f, sizeof f, "1/sqrt((1-z^2)*(1-(%.17g)^2*z^2))", k);
        ires x = integ(f, 0, NULL, "0; 1", 0, NULL);
        snprintf(what, sizeof what, "int_0^1 %s dz", f);
        check_value(&x, K, what, "DLMF 19.2.8, gsl_sf_ellint_Kcomp");
        sw_integral_clear(&x.r);
        /* the same on the curve, with the integrand 1/w: sheet 1 at 0 is the
           negative root (sheets in order of real part) */
        snprintf(c, sizeof c, "w^2-(1-z^2)*(1-(%.17g)^2*z^2)", k);
        x = integ(c, 1, "1/w", "0; 1", 0, NULL);
        snprintf(what, sizeof what, "int_0^1 dz/w on %s", c);
        check_value(&x, -K, what, "DLMF 19.2.8, gsl_sf_ellint_Kcomp");
        assert_int_equal(x.r.end[0].ramification, 1);
        TU_CHECK_CLOSE(x.r.end[0].exponent, -0.5, 1e-12, "exponent at 1", "w ~ sqrt(1-z)");
        sw_integral_clear(&x.r);
    }
}

static void test_curve_periods(void **state)
{
    (void)state;
    const double ks[] = {0.3, 0.5, 0.8};
    for (size_t j = 0; j < sizeof ks / sizeof ks[0]; j++) {
        double k = ks[j], K = gsl_sf_ellint_Kcomp(k, GSL_PREC_DOUBLE);
        double kp = sqrt(1 - k * k), Kp = gsl_sf_ellint_Kcomp(kp, GSL_PREC_DOUBLE);
        char c[160], p[120], what[300];
        snprintf(c, sizeof c, "w^2-(1-z^2)*(1-(%.17g)^2*z^2)", k);
        /* around the cut [-1, 1]: 4K, back on the same sheet */
        snprintf(p, sizeof p, "circle 0 %.17g 64", (1 + 1 / k) / 2);
        ires x = integ(c, 1, "1/w", p, 0, NULL);
        snprintf(what, sizeof what, "period of dz/w around [-1,1] on %s", c);
        assert_int_equal(x.st, SW_OK);
        assert_int_equal(x.r.closed, 1);
        assert_int_equal(x.r.start_sheet, x.r.end_sheet);
        /* the sign depends on the sheet: compare |period| and its phase */
        check_value(&x, x.r.value / cabs(x.r.value) * 4 * K, what,
                    "DLMF 19.2.8 (loop around the cut = 2 x both banks)");
        assert_true(fabs(cimag(x.r.value)) <= 1e-10 * 4 * K);
        sw_integral_clear(&x.r);
        /* around [1, 1/k]: 2 K(k'), purely imaginary */
        double ctr = (1 + 1 / k) / 2, rad = (1 / k - 1) / 2 + fmin(0.5, (1 / k - 1) / 2) * 0.5;
        snprintf(p, sizeof p, "circle %.17g %.17g 64", ctr, rad);
        x = integ(c, 1, "1/w", p, 0, NULL);
        snprintf(what, sizeof what, "period of dz/w around [1,1/k] on %s", c);
        assert_int_equal(x.st, SW_OK);
        assert_int_equal(x.r.start_sheet, x.r.end_sheet);
        check_value(&x, x.r.value / cabs(x.r.value) * 2 * Kp, what,
                    "DLMF 19.2.8 and 19.2.9 (K' = K(k'))");
        assert_true(fabs(creal(x.r.value)) <= 1e-10 * 2 * Kp);
        sw_integral_clear(&x.r);
    }
    /* a loop around one branch point ends on the other sheet */
    ires x = integ("w^2-(1-z^2)*(1-0.25*z^2)", 1, "1/w", "circle 1 0.4 64", 0, NULL);
    assert_int_equal(x.st, SW_OK);
    assert_int_equal(x.r.closed, 1);
    assert_true(x.r.start_sheet >= 1 && x.r.end_sheet >= 1);
    assert_int_not_equal(x.r.start_sheet, x.r.end_sheet);
    TU_CHECK_CLOSE(x.r.end_w, -x.r.start_w, 1e-12, "w after one turn around a simple branch point",
                   "w ~ sqrt(z - 1): one turn changes the sign (common practice, no source)");
    sw_integral_clear(&x.r);
}

/* ------------------------------------------------------------ logarithms */

static void test_log_ends(void **state)
{
    (void)state;
    const double as[] = {1.0, 0.5, 0.2, 1.7};
    for (size_t k = 0; k < sizeof as / sizeof as[0]; k++) {
        char f[120];
        snprintf(f, sizeof f, "z^(%.17g)*log(z)", as[k] - 1);
        ires x = integ(f, 0, NULL, "0; 1", 0, NULL);
        check_value(&x, -1 / (as[k] * as[k]), f, "DLMF 5.12.1 differentiated in a");
        assert_int_equal(x.r.end[0].logarithmic, 1);
        assert_int_equal(x.r.end[0].rule, SW_RULE_JACOBI_LOG);
        sw_integral_clear(&x.r);
    }
    /* the product weights for x^alpha log x against a polynomial factor:
       int_0^1 t^(a-1) (1+t)^3 log t dt = -sum_m C(3,m) / (a+m)^2 (DLMF 5.12.1
       differentiated in a, termwise) */
    {
        const double a = 0.37;
        double want = 0;
        for (int m = 0, bin = 1; m <= 3; bin = bin * (3 - m) / (m + 1), m++)
            want -= bin / ((a + m) * (a + m));
        ires y = integ("z^(-0.63)*(1+z)^3*log(z)", 0, NULL, "0; 1", 0, NULL);
        check_value(&y, want, "int_0^1 z^(-0.63) (1+z)^3 log z dz",
                    "DLMF 5.12.1 differentiated in a, termwise");
        assert_int_equal(y.r.end[0].rule, SW_RULE_JACOBI_LOG);
        sw_integral_clear(&y.r);
    }
    /* ends whose exponent and logarithm are read off the tree (products,
       quotients and integer powers of z and constants): int_0^X t^(a-1)
       (log t + c) dt = X^a ((log X + c) / a - 1 / a^2) (DLMF 5.12.1
       differentiated in a, scaled to [0, X]) */
    {
        static const struct {
            const char *f, *path;
            double a, X, c, fac;
        } tc[] = {
            {"log(z)/sqrt(z)", "0; 1", 0.5, 1, 0, 1},
            {"log(z)/sqrt(z)", "0; 4", 0.5, 4, 0, 1},
            /* sqrt(2) x^(3/2) (log 3 + log x) */
            {"log(3*z)*z^2/sqrt(z/2)", "0; 1", 2.5, 1, 1.0986122886681098, 1.4142135623730951},
            {"-z*log(z)/z^(1/3)", "0; 2", 5.0 / 3, 2, 0, -1},
        };
        for (size_t k = 0; k < sizeof tc / sizeof tc[0]; k++) {
            double a = tc[k].a, X = tc[k].X;
            double want = tc[k].fac * pow(X, a) * ((log(X) + tc[k].c) / a - 1 / (a * a));
            ires y = integ(tc[k].f, 0, NULL, tc[k].path, 0, NULL);
            check_value(&y, want, tc[k].f, "DLMF 5.12.1 differentiated in a");
            assert_int_equal(y.r.end[0].logarithmic, 1);
            assert_int_equal(y.r.end[0].rule, SW_RULE_JACOBI_LOG);
            sw_integral_clear(&y.r);
        }
    }
    ires x = integ("log(1-z)/z", 0, NULL, "0; 1", 0, NULL);
    check_value(&x, -gsl_sf_dilog(1.0), "int_0^1 log(1-z)/z dz", "DLMF 25.12.2, gsl_sf_dilog");
    sw_integral_clear(&x.r);
    /* powers of the logarithm: int_0^1 t^(a-1) log^n t dt = (-1)^n n! / a^(n+1)
       (DLMF 5.12.1 differentiated n times in a) */
    x = integ("log(z)^2", 0, NULL, "0; 1", 0, NULL);
    check_value(&x, 2, "int_0^1 log^2 z dz", "DLMF 5.12.1 differentiated twice in a");
    sw_integral_clear(&x.r);
    x = integ("z^(-0.5)*log(z)^2", 0, NULL, "0; 1", 0, NULL);
    check_value(&x, 16, "int_0^1 z^(-1/2) log^2 z dz", "DLMF 5.12.1 differentiated twice in a");
    sw_integral_clear(&x.r);
    x = integ("z^0.25*log(z)^3", 0, NULL, "0; 1", 0, NULL);
    check_value(&x, -6 / pow(1.25, 4), "int_0^1 z^(1/4) log^3 z dz",
                "DLMF 5.12.1 differentiated three times in a");
    sw_integral_clear(&x.r);
    x = integ("log(z)*log(1-z)", 0, NULL, "0; 1", 0, NULL);
    check_value(&x, 1.0 - gsl_sf_psi_1(2.0), "int_0^1 log z log(1-z) dz",
                "DLMF 5.12.1 differentiated in a and b, DLMF 5.15.1 (psi(1)-psi(2) = -1)");
    sw_integral_clear(&x.r);
}

/* ------------------------------------------------------------ properties */

/* Reversing a path negates the integral (the branch fixed by the end value
 * of the forward run); splitting a path at a vertex adds. */
static void test_reverse_and_split(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 777);
    const char *fs[] = {"sqrt(z*(z-1)*(z+2i))", "z^(-0.4)*(1-z)^(0.3)", "log(z)*sqrt(z-3)"};
    for (int k = 0; k < 9; k++) {
        const char *f = fs[k % 3];
        /* three random vertices (the first may be the branch point 0) */
        double complex v[3];
        for (int j = 0; j < 3; j++)
            v[j] = CMPLX(tu_range(&rng, -2.5, 2.5), tu_range(&rng, 0.3, 2.5));
        if (k % 2 == 0)
            v[0] = 0;
        char s[3][80], p[300], q[300];
        for (int j = 0; j < 3; j++)
            tu_fmt_vertex(s[j], sizeof s[j], v[j]);
        snprintf(p, sizeof p, "%s; %s; %s", s[0], s[1], s[2]);
        ires fw = integ(f, 0, NULL, p, 0, NULL);
        if (fw.st != SW_OK)
            print_error("seed %llu case %d: %s\n", (unsigned long long)rng.seed, k, fw.msg);
        assert_int_equal(fw.st, SW_OK);
        snprintf(q, sizeof q, "%s; %s; %s", s[2], s[1], s[0]);
        double complex wend = fw.r.end_w;
        ires bw = integ(f, 0, NULL, q, 0, &wend);
        assert_int_equal(bw.st, SW_OK);
        TU_PROP_CLOSE(&rng, k, bw.r.value, -fw.r.value, REL, f,
                      "reversing a path negates the integral (common practice, no source)");
        /* split at the middle vertex */
        snprintf(q, sizeof q, "%s; %s", s[0], s[1]);
        ires a = integ(f, 0, NULL, q, 0, NULL);
        assert_int_equal(a.st, SW_OK);
        snprintf(q, sizeof q, "%s; %s", s[1], s[2]);
        double complex wmid = a.r.end_w;
        ires b = integ(f, 0, NULL, q, 0, &wmid);
        assert_int_equal(b.st, SW_OK);
        TU_PROP_CLOSE(&rng, k, a.r.value + b.r.value, fw.r.value, REL, f,
                      "splitting a path adds (common practice, no source)");
        sw_integral_clear(&fw.r);
        sw_integral_clear(&bw.r);
        sw_integral_clear(&a.r);
        sw_integral_clear(&b.r);
    }
}

static void test_closed_loops(void **state)
{
    (void)state;
    /* residues: 1/(z(z-2)) has residue -1/2 at 0 */
    ires x = integ("1/(z*(z-2))", 0, NULL, "circle 0 1", 0, NULL);
    check_value(&x, CMPLX(0, -TU_PI), "loop of dz/(z(z-2)) around 0",
                "residue theorem (common practice, no source)");
    assert_string_equal(x.r.piece[0].method, "trapezoid");
    sw_integral_clear(&x.r);
    /* the same loop as a square: Gauss-Kronrod on the segments */
    x = integ("1/(z*(z-2))", 0, NULL, "1; 1i; -1; -1i; 1", 0, NULL);
    check_value(&x, CMPLX(0, -TU_PI), "square loop of dz/(z(z-2)) around 0",
                "residue theorem (common practice, no source)");
    sw_integral_clear(&x.r);
    /* Cauchy: a branch of sqrt on a loop around no branch point */
    x = integ("sqrt(z)", 0, NULL, "circle 3 1", 0, NULL);
    assert_int_equal(x.st, SW_OK);
    assert_true(cabs(x.r.value) <= 1e-12);
    assert_true(cabs(x.r.value) <= x.r.abserr + 1e-15);
    sw_integral_clear(&x.r);
    /* a loop around the branch point of sqrt: not periodic, the value of the
       open path on the surface: int_0^2pi e^(i t/2) i e^(i t) dt = -4/3 */
    x = integ("sqrt(z)", 0, NULL, "circle 0 1", 0, NULL);
    check_value(&x, -4.0 / 3, "one turn of sqrt(z) dz around 0",
                "integral of exp(3it/2) (common practice, no source)");
    sw_integral_clear(&x.r);
}

/* Fixing the branch at a singular first vertex: next to it (1e-12 of the
 * path scale), the sheet nearest the given value. */
static void test_branch_at_singular_start(void **state)
{
    (void)state;
    ires x = integ("z^(-2/3)", 0, NULL, "0; 1", 0, NULL);
    check_value(&x, 3, "int_0^1 z^(-2/3) dz, principal", "DLMF 5.12.1 with b = 1");
    double complex w = x.r.start_w * cexp(CMPLX(0, -4 * TU_PI / 3));
    sw_integral_clear(&x.r);
    x = integ("z^(-2/3)", 0, NULL, "0; 1", 0, &w);
    check_value(&x, 3 * cexp(CMPLX(0, -4 * TU_PI / 3)), "int_0^1 z^(-2/3) dz, other branch",
                "DLMF 4.2.26: branches differ by exp(-4 pi i k/3)");
    sw_integral_clear(&x.r);
    /* an integrand in z and w: w^2 = z on the principal sqrt */
    x = integ("sqrt(z)", 0, "w^2*exp(w)/w", "0; 1", 0, NULL);
    /* int_0^1 sqrt(z) exp(sqrt(z)) dz = 2 int_0^1 s^2 e^s ds = 2(e - 2) */
    check_value(&x, 2 * (TU_E - 2), "int_0^1 w exp(w) dz with w = sqrt(z)",
                "substitution z = s^2 (common practice, no source)");
    sw_integral_clear(&x.r);
}

/* ------------------------------------------------------------ refusals */

static void expect_status(const char *f, int curve, const char *R, const char *p, size_t vertex,
                          sw_status want, const char *needle)
{
    ires x = integ(f, curve, R, p, vertex, NULL);
    if (x.st != want) {
        print_error("%s along %s: status %d, expected %d (%s)\n", f, p, (int)x.st, (int)want,
                    x.msg);
        fail();
    }
    assert_true(strlen(x.msg) > 0);
    if (needle && strstr(x.msg, needle) == NULL) {
        print_error("message '%s' lacks '%s'\n", x.msg, needle);
        fail();
    }
    sw_integral_clear(&x.r);
}

static void test_refusals(void **state)
{
    (void)state;
    expect_status("1/z", 0, NULL, "0; 1", 0, SW_EINPUT, "not integrable");
    expect_status("z^(-1.5)", 0, NULL, "0; 1", 0, SW_EINPUT, "not integrable");
    expect_status("w^2-z", 1, "1/w^3", "0; 1", 0, SW_EINPUT, "not integrable");
    expect_status("log(z)/z", 0, NULL, "0; 1", 0, SW_EINPUT, "not integrable");
    expect_status("1/z", 0, NULL, "1; 2; inf", 0, SW_EINPUT, "diverges");
    expect_status("z^(-0.5)", 0, NULL, "inf; 2; 1", 0, SW_EINPUT, "diverges");
    expect_status("sqrt(z)", 0, NULL, "-1; 0; 1", 0, SW_ESINGULAR, "bank mark");
    expect_status("sqrt(z)", 0, NULL, "-1; 1", 0, SW_ESINGULAR, NULL);
    expect_status("1/(z-0.5)", 0, NULL, "0; 1", 0, SW_ESINGULAR, "not finite");
    expect_status("sqrt(z)", 0, NULL, "1; 2", 5, SW_EUSAGE, NULL);
    expect_status("sqrt(z)", 0, NULL, "1", 0, SW_EINPUT, NULL);
    /* a value given at a singular vertex inside the path cannot fix a branch */
    double complex one = 1;
    ires y = integ("sqrt(z)", 0, NULL, "-1; 0+i0; 1", 1, &one);
    assert_int_equal(y.st, SW_EUSAGE);
    assert_non_null(strstr(y.msg, "singular"));
    sw_integral_clear(&y.r);
    /* without a value, the nearest regular vertex (z = 1, the next one)
       carries the default branch: sqrt(1) = 1, continued above 0 to
       sqrt(x + i0) = i sqrt(-x) on (-1, 0): the integral is (2/3)(1 + i) */
    y = integ("sqrt(z)", 0, NULL, "-1; 0+i0; 1", 1, NULL);
    assert_int_equal(y.st, SW_OK);
    TU_CHECK_CLOSE(y.r.value, CMPLX(2.0 / 3, 2.0 / 3), REL, "int_-1^1 sqrt(x+i0) dx",
                   "antiderivative (2/3) z^(3/2) above 0 (common practice, no source)");
    sw_integral_clear(&y.r);
    sw_expr *R = NULL;
    sw_error err;
    assert_int_equal(sw_integrand_parse(&R, "w*sqrt(z)", NULL, &err), SW_EINPUT);
    assert_non_null(strstr(err.msg, "sqrt(z)"));
    assert_null(R);
    assert_int_equal(sw_integrand_parse(&R, "w*(", NULL, &err), SW_EPARSE);
    assert_true(strlen(err.msg) > 0);
    assert_int_equal(sw_integrand_parse(&R, "w^3*exp(z)/(1+z^2)", NULL, &err), SW_OK);
    sw_expr_free(R);
}

/* A bank path past interior branch points: the +i0 prescription. */
static void test_bank_path(void **state)
{
    (void)state;
    /* sqrt(z(z-1)) from -1 to 2 above the axis: sqrt(x(x-1)) on (-1,0),
       -i sqrt(x(1-x)) on (0,1), -sqrt(x(x-1)) on (1,2) (the continuation
       above both branch points); int_0^1 sqrt(x(1-x)) = B(3/2,3/2) = pi/8
       (DLMF 5.12.1) and the outer parts cancel by the symmetry x -> 1-x */
    ires x = integ("sqrt(z*(z-1))", 0, NULL, "-1+i0; 0+i0; 1+i0; 2+i0", 0, NULL);
    check_value(&x, CMPLX(0, -gsl_sf_beta(1.5, 1.5)), "bank integral of sqrt(z(z-1))",
                "DLMF 5.12.1, gsl_sf_beta(3/2, 3/2)");
    assert_int_equal(x.r.nends, 4);
    sw_integral_clear(&x.r);
}

/* ------------------------------------------------------- bank integrals */

typedef struct bres {
    sw_status st;
    sw_bank_integral r;
    char msg[SW_ERROR_MSG_MAX];
} bres;

/* The bank integral over [A, B] with the single cut CUT (path text) and the
 * default regular branch (principal / sheet 1 at the middle of the bank). */
static bres bank(const char *ftext, int curve, const char *rtext, const char *cut,
                 double complex A, double complex B, int side)
{
    bres x;
    memset(&x, 0, sizeof x);
    sw_bank_integral_init(&x.r);
    sw_func *f = NULL;
    sw_expr *R = NULL;
    sw_path p;
    sw_path_init(&p);
    sw_cuts cuts;
    sw_cuts_init(&cuts);
    sw_branch *b = NULL;
    sw_error err;
    sw_error_clear(&err);
    x.st = curve ? sw_func_from_curve(&f, ftext, NULL, &err)
                 : sw_func_from_expr(&f, ftext, NULL, &err);
    if (x.st == SW_OK && rtext)
        x.st = sw_integrand_parse(&R, rtext, NULL, &err);
    if (x.st == SW_OK)
        x.st = sw_path_parse(&p, cut, "path", NULL, &err);
    if (x.st == SW_OK)
        x.st = sw_cuts_add(&cuts, &p, &err);
    if (x.st == SW_OK)
        x.st = sw_branch_new(&b, f, &cuts, (A + B) / 2, side, NULL, &err);
    if (x.st == SW_OK)
        x.st = sw_integrate_bank(&x.r, f, R, &cuts, b, NULL, A, B, side, NULL, &err);
    snprintf(x.msg, sizeof x.msg, "%s", err.msg);
    sw_branch_free(b);
    sw_cuts_clear(&cuts);
    sw_path_clear(&p);
    sw_expr_free(R);
    sw_func_free(f);
    return x;
}

static void test_bank_two_ways(void **state)
{
    (void)state;
    /* int_1^4 sqrt((x-1)(4-x)) dx = 3^2 B(3/2, 3/2) = 9 pi / 8 (DLMF 5.12.1 with
       x = 1 + 3t); on the bank the function is +-i times it */
    bres x = bank("sqrt((z-1)*(z-4))", 0, NULL, "1; 4", 1, 4, SW_BANK_UPPER);
    if (x.st != SW_OK)
        print_error("%s\n", x.msg);
    assert_int_equal(x.st, SW_OK);
    TU_CHECK_CLOSE(cabs(x.r.direct.value), 9 * gsl_sf_beta(1.5, 1.5), REL, "|direct|",
                   "DLMF 5.12.1, gsl_sf_beta(3/2, 3/2)");
    assert_true(fabs(creal(x.r.direct.value)) <= 1e-12);
    assert_int_equal(x.r.contour_applies, 1);
    TU_CHECK_CLOSE(x.r.lambda, -1, 1e-12, "jump of a square root across its cut",
                   "a turn around one zero changes the sign of a square root (DLMF 4.2.26)");
    TU_CHECK_CLOSE(x.r.contour, x.r.direct.value, 1e-9, "contour vs direct",
                   "the contour method (methods.md section 4)");
    assert_true(x.r.agreement <= 1e-9);
    sw_bank_integral_clear(&x.r);
    /* the lower bank of 1/sqrt((x-1)(x-4)): pi = B(1/2, 1/2) (DLMF 5.12.1) */
    x = bank("1/sqrt((z-1)*(z-4))", 0, NULL, "1; 4", 1, 4, SW_BANK_LOWER);
    assert_int_equal(x.st, SW_OK);
    TU_CHECK_CLOSE(cabs(x.r.direct.value), gsl_sf_beta(0.5, 0.5), REL, "|direct|, lower bank",
                   "DLMF 5.12.1, gsl_sf_beta(1/2, 1/2)");
    assert_int_equal(x.r.contour_applies, 1);
    assert_true(x.r.agreement <= 1e-9);
    sw_bank_integral_clear(&x.r);
    /* a curve, the cut between two of its three finite branch points; the
       integral is elliptic: direct and contour must agree */
    x = bank("w^2-(z-1)*(z-4)*(z+3)", 1, "1/w", "1; 4", 1, 4, SW_BANK_UPPER);
    assert_int_equal(x.st, SW_OK);
    assert_int_equal(x.r.contour_applies, 1);
    if (!(x.r.agreement <= 1e-9)) {
        print_error("curve bank integral: agreement %.3g (%s)\n", x.r.agreement, x.r.note);
        fail();
    }
    sw_bank_integral_clear(&x.r);
    /* no jump: a single-valued function, the contour method does not apply */
    x = bank("(z-1)*(z-4)", 0, NULL, "1; 4", 1, 4, SW_BANK_UPPER);
    assert_int_equal(x.st, SW_OK);
    assert_int_equal(x.r.contour_applies, 0);
    assert_non_null(strstr(x.r.note, "lambda = 1"));
    TU_CHECK_CLOSE(x.r.direct.value, -4.5, REL, "int_1^4 (x-1)(x-4) dx",
                   "antiderivative (common practice, no source)");
    sw_bank_integral_clear(&x.r);
    /* a vertical segment has no +-i0 side */
    x = bank("sqrt(z)", 0, NULL, "0; 1i", 0, CMPLX(0, 1), SW_BANK_UPPER);
    assert_int_equal(x.st, SW_EINPUT);
    sw_bank_integral_clear(&x.r);
}

/* ------------------------------------------------ mpmath cross-check */

/* Random exponents checked against mpmath (an independent implementation)
 * through /usr/bin/python3.  A missing interpreter or mpmath is a failure:
 * this check must not be skipped silently. */
static double qaws_g(double x, void *params)
{
    const struct cp { double complex p; int imag; } *c = params;
    double complex v = 1.0 / (x - c->p);
    return c->imag ? cimag(v) : creal(v);
}

/* Reference by GSL's QAWS (algebraic-logarithmic weight, QUADPACK):
 * int_1^4 sqrt((x-1)(4-x)) g(x) dx with g = Re or Im of 1/(x - p). */
static double qaws_part(double complex p, int imag)
{
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(200);
    gsl_integration_qaws_table *t = gsl_integration_qaws_table_alloc(0.5, 0.5, 0, 0);
    struct cp { double complex p; int imag; } c = {p, imag};
    gsl_function F;
    F.function = qaws_g;
    F.params = &c;
    double res = NAN, err;
    gsl_integration_qaws(&F, 1, 4, t, 0, 1e-13, 200, w, &res, &err);
    gsl_integration_qaws_table_free(t);
    gsl_integration_workspace_free(w);
    return res;
}

/* Poles of a single-valued part near the cut must stay outside the loop of the
 * contour method: sqrt((z-1)(z-4)) / (z - p) for a pole p off [1, 4], the
 * upper bank equal to +-i int sqrt((x-1)(4-x)) / (x - p) dx (QAWS reference). */
static void test_bank_pole_near_cut(void **state)
{
    (void)state;
    static const double complex poles[] = {0.0, CMPLX(2.5, 0.3), CMPLX(3.1, -0.05), 5.0};
    for (size_t k = 0; k < sizeof poles / sizeof poles[0]; k++) {
        char f[96];
        snprintf(f, sizeof f, "sqrt((z-1)*(z-4))/(z-(%.17g%+.17gi))", creal(poles[k]),
                 cimag(poles[k]));
        bres x = bank(f, 0, NULL, "1; 4", 1, 4, SW_BANK_UPPER);
        if (x.st != SW_OK)
            print_error("%s: %s\n", f, x.msg);
        assert_int_equal(x.st, SW_OK);
        double complex ref = CMPLX(qaws_part(poles[k], 0), qaws_part(poles[k], 1));
        /* the bank value is +-i sqrt((x-1)(4-x)): compare moduli and the contour */
        TU_CHECK_CLOSE(cabs(x.r.direct.value), cabs(ref), 1e-10, f,
                       "QUADPACK QAWS (GSL) with weight (x-1)^(1/2) (4-x)^(1/2)");
        assert_int_equal(x.r.contour_applies, 1);
        if (!(x.r.agreement <= 1e-9)) {
            print_error("%s: agreement %.3g (%s)\n", f, x.r.agreement, x.r.note);
            fail();
        }
        sw_bank_integral_clear(&x.r);
    }
}

static void test_mpmath_random(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 4242);
    enum { NCASE = 8 };
    double a[NCASE], b[NCASE], c[NCASE];
    char cmd[8192];
    size_t used = (size_t)snprintf(
        cmd, sizeof cmd,
        "/usr/bin/python3 -c 'import mpmath as m; m.mp.dps = 30\n"
        "def p(v): print(\"%%.17g %%.17g\" %% (float(m.re(v)), float(m.im(v))))\n");
    for (int k = 0; k < NCASE; k++) {
        a[k] = tu_range(&rng, 0.05, 2.5);
        b[k] = tu_range(&rng, 0.05, 2.5);
        c[k] = tu_range(&rng, 0.1, 3);
        /* DLMF 15.6.1: int_0^1 t^(a-1)(1-t)^(b-1)(1+c t)^(-1/2) dt
                        = B(a,b) 2F1(1/2, a; a+b; -c);
           DLMF 13.4.1: int_0^1 t^(a-1)(1-t)^(b-1) e^(c t) dt = B(a,b) 1F1(a; a+b; c);
           with b = 1 differentiated in a (mpmath's diff):
           int_0^1 t^(a-1) log t e^(c t) dt = d/da [1F1(a; a+1; c) / a] */
        used += (size_t)snprintf(
            cmd + used, sizeof cmd - used,
            "a=m.mpf(%.17g); b=m.mpf(%.17g); c=m.mpf(%.17g)\n"
            "p(m.beta(a,b)*m.hyp2f1(m.mpf(1)/2,a,a+b,-c)); p(m.beta(a,b)*m.hyp1f1(a,a+b,c))\n"
            "p(m.diff(lambda s: m.hyp1f1(s,s+1,c)/s, a))\n",
            a[k], b[k], c[k]);
    }
    snprintf(cmd + used, sizeof cmd - used, "' 2>&1");
    FILE *fp = popen(cmd, "r");
    if (fp == NULL) {
        print_error("cannot run /usr/bin/python3 (install python3-mpmath)\n");
        fail();
    }
    double ref[3 * NCASE][2];
    int got = 0;
    char line[512];
    while (fgets(line, sizeof line, fp))
        if (got < 3 * NCASE && sscanf(line, "%lf %lf", &ref[got][0], &ref[got][1]) == 2)
            got++;
        else
            print_error("python3: %s", line);
    int status = pclose(fp);
    if (status != 0 || got != 3 * NCASE) {
        print_error("the mpmath reference failed (exit status %d, %d values): /usr/bin/python3 "
                    "with python3-mpmath is required for this test\n", status, got);
        fail();
    }
    for (int k = 0; k < NCASE; k++) {
        char A[40], Bs[40], C[40], f[300];
        fmt(A, sizeof A, a[k] - 1);
        fmt(Bs, sizeof Bs, b[k] - 1);
        fmt(C, sizeof C, c[k]);
        snprintf(f, sizeof f, "z^%s*(1-z)^%s/sqrt(1+%s*z)", A, Bs, C);
        ires x = integ(f, 0, NULL, "0; 1", 0, NULL);
        assert_int_equal(x.st, SW_OK);
        TU_PROP_CLOSE(&rng, k, x.r.value, CMPLX(ref[3 * k][0], ref[3 * k][1]), REL, f,
                      "DLMF 15.6.1 by mpmath");
        assert_true(cabs(x.r.value - CMPLX(ref[3 * k][0], ref[3 * k][1])) <=
                    x.r.abserr + 1e-15 * ref[3 * k][0]);
        sw_integral_clear(&x.r);
        snprintf(f, sizeof f, "z^%s*(1-z)^%s*exp(%s*z)", A, Bs, C);
        x = integ(f, 0, NULL, "0; 1", 0, NULL);
        assert_int_equal(x.st, SW_OK);
        TU_PROP_CLOSE(&rng, k, x.r.value, CMPLX(ref[3 * k + 1][0], ref[3 * k + 1][1]), REL, f,
                      "DLMF 13.4.1 by mpmath");
        sw_integral_clear(&x.r);
        /* a logarithmic end with analytic A = e^(c t), B = 0 */
        snprintf(f, sizeof f, "z^%s*log(z)*exp(%s*z)", A, C);
        x = integ(f, 0, NULL, "0; 1", 0, NULL);
        assert_int_equal(x.st, SW_OK);
        double complex want = CMPLX(ref[3 * k + 2][0], ref[3 * k + 2][1]);
        TU_PROP_CLOSE(&rng, k, x.r.value, want, REL, f,
                      "DLMF 13.4.1 differentiated in a, by mpmath");
        assert_true(cabs(x.r.value - want) <= x.r.abserr + 8 * 2.2e-16 * cabs(want));
        sw_integral_clear(&x.r);
    }
}

int main(void)
{
    sw_error err;
    if (sw_init(&err) != SW_OK)
        return 1;
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_beta_table),
        cmocka_unit_test(test_beta_random_segments),
        cmocka_unit_test(test_ray_keyhole_type),
        cmocka_unit_test(test_elliptic_K),
        cmocka_unit_test(test_curve_periods),
        cmocka_unit_test(test_log_ends),
        cmocka_unit_test(test_reverse_and_split),
        cmocka_unit_test(test_closed_loops),
        cmocka_unit_test(test_branch_at_singular_start),
        cmocka_unit_test(test_refusals),
        cmocka_unit_test(test_bank_path),
        cmocka_unit_test(test_bank_two_ways),
        cmocka_unit_test(test_bank_pole_near_cut),
        cmocka_unit_test(test_mpmath_random),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
