/* Expression parser and principal evaluation.
 *
 * Checked against: the C library (csqrt, clog, cpow, cexp, ...: the contract of
 * sw_expr_eval_principal is to agree with them bit for bit), GSL's complex
 * functions (gsl_complex_sqrt, gsl_complex_log, gsl_complex_pow, and the special
 * function gsl_sf_complex_log) to 1e-15 relative, and elementary arithmetic
 * whose value is known exactly (common practice, no source).  Parse errors are
 * checked for their code and the 1-based column of the offending input. */
#include "test_util.h"

#include <gsl/gsl_complex.h>
#include <gsl/gsl_complex_math.h>
#include <gsl/gsl_sf_log.h>

#include "sheetwalk/expr.h"

/* ------------------------------------------------------------ helpers */

static double complex eval_text(const char *text, double complex z, const sw_params *params)
{
    sw_expr *e = NULL;
    sw_error err;
    sw_error_clear(&err);
    sw_status st = sw_expr_parse(&e, text, params, SW_EXPR_VAR_Z, &err);
    if (st != SW_OK) {
        print_error("'%s' did not parse: %s\n", text, err.msg);
        fail();
    }
    double complex v = sw_expr_eval_principal(e, z, 0);
    sw_expr_free(e);
    return v;
}

/* The C library's cpow, called at run time: with a constant exponent the
 * compiler may expand cpow(z, c) inline in a different way, which would not
 * be the library function the contract refers to. */
static double complex c_pow(double complex a, double complex b)
{
    volatile double br = creal(b), bi = cimag(b);
    return cpow(a, CMPLX(br, bi));
}

static gsl_complex to_gsl(double complex z) { return gsl_complex_rect(creal(z), cimag(z)); }
static double complex from_gsl(gsl_complex g) { return CMPLX(GSL_REAL(g), GSL_IMAG(g)); }

/* ------------------------------------------- constants and precedence */

typedef struct const_case {
    const char *input;
    double re, im;
    double tol;
    const char *source;
} const_case;

static const double SQRT3_2 = 0.86602540378443864676; /* sqrt(3)/2 */

static const const_case const_table[] = {
    /* input, expected, tolerance, source */
    {"2", 2, 0, 0, "literal"},
    {"-0.5", -0.5, 0, 0, "literal, unary minus"},
    {"1e-3", 1e-3, 0, 0, "literal with exponent (strtod)"},
    {"2.5E+2", 250, 0, 0, "literal with exponent"},
    {".25", 0.25, 0, 0, "literal without leading digit"},
    {"2i", 0, 2, 0, "imaginary literal"},
    {"1+2i", 1, 2, 0, "complex literal"},
    {"i", 0, 1, 0, "imaginary unit"},
    {"i*i", -1, 0, 0, "i^2 = -1"},
    {"i*pi", 0, TU_PI, 0, "pi times i"},
    {"pi", TU_PI, 0, 0, "pi to double precision"},
    {"e", 2.71828182845904523536, 0, 1e-15, "e to double precision (DLMF 4.2.11)"},
    {"2+3*4", 14, 0, 0, "* binds tighter than + (common practice, no source)"},
    {"(2+3)*4", 20, 0, 0, "parentheses"},
    {"2-3-4", -5, 0, 0, "- is left-associative (common practice, no source)"},
    {"2/4/2", 0.25, 0, 0, "/ is left-associative (common practice, no source)"},
    {"2*3^2", 18, 0, 0, "^ binds tighter than * (common practice, no source)"},
    {"2^3^2", 512, 0, 0, "^ is right-associative: 2^(3^2) (common practice, no source)"},
    {"(2^3)^2", 64, 0, 0, "parenthesised left grouping"},
    {"-2^2", -4, 0, 0, "unary minus binds looser than ^: -(2^2) (common practice, no source)"},
    {"(-2)^2", 4, 0, 0, "parenthesised negative base"},
    {"2^-1", 0.5, 0, 0, "unary minus in an exponent"},
    {"--3", 3, 0, 0, "double unary minus"},
    {"+3", 3, 0, 0, "unary plus"},
    {"2*-3", -6, 0, 0, "unary minus after *"},
    {"(1+2i)*(3-4i)", 11, 2, 0, "complex product (1+2i)(3-4i) = 11+2i"},
    {"(1+2i)/(3-4i)", -0.2, 0.4, 1e-15, "complex quotient (1+2i)/(3-4i) = -1/5 + 2i/5"},
    {"  1 +\t2 ", 3, 0, 0, "white space is ignored"},
    {"root(16, 4)", 2, 0, 1e-15, "principal 4th root of 16"},
    {"sqrt(2i)", 1, 1, 1e-15, "principal sqrt(2i) = 1 + i (DLMF 4.2.26)"},
    {"(3+4i)^(1/2)", 2, 1, 1e-15, "principal (3+4i)^(1/2) = 2 + i"},
    {"log(2i)", 0.69314718055994530942, TU_PI / 2, 1e-15, "ln 2 + i pi/2 (DLMF 4.2.3)"},
    {"cbrt(i)", SQRT3_2, 0.5, 1e-15, "principal i^(1/3) = exp(i pi/6) (DLMF 4.2.26)"},
    {"log(e)", 1, 0, 1e-15, "ln e = 1"},
    {"exp(i*pi)", -1, 0, 1e-15, "exp(i pi) = -1 (DLMF 4.2.3 / Euler)"},
    {"exp(1)", 2.71828182845904523536, 0, 1e-15, "e"},
    {"sin(pi/6)", 0.5, 0, 1e-15, "sin(pi/6) = 1/2 (DLMF 4.16 table)"},
    {"cos(pi/3)", 0.5, 0, 1e-15, "cos(pi/3) = 1/2 (DLMF 4.16 table)"},
    {"tan(pi/4)", 1, 0, 1e-15, "tan(pi/4) = 1 (DLMF 4.16 table)"},
    {"sinh(log(2))", 0.75, 0, 1e-15, "sinh(ln 2) = (2 - 1/2)/2 (DLMF 4.28.1)"},
    {"cosh(log(2))", 1.25, 0, 1e-15, "cosh(ln 2) = (2 + 1/2)/2 (DLMF 4.28.2)"},
    {"tanh(log(2))", 0.6, 0, 1e-15, "tanh(ln 2) = 3/5 (DLMF 4.28.3)"},
    {"i^i", 0.20787957635076190855, 0, 1e-15, "principal i^i = exp(-pi/2) (DLMF 4.2.26)"},
    {"2^(1/2)", 1.41421356237309504880, 0, 1e-15, "sqrt 2"},
    {"4^0.5", 2, 0, 1e-15, "4^(1/2)"},
    {"2^10", 1024, 0, 0, "integer power is exact"},
    {"(1+i)^8", 16, 0, 0, "(1+i)^8 = 16, integer power is exact"},
    {"2^-3", 0.125, 0, 0, "negative integer power is exact"},
};

static int check_const_cases(const const_case *cases, size_t n)
{
    int bad = 0;
    for (size_t k = 0; k < n; k++) {
        const const_case *c = &cases[k];
        double complex v;
        sw_error err;
        sw_status st = sw_const_parse(&v, NULL, c->input, NULL, &err);
        if (st != SW_OK) {
            print_error("'%s' did not parse: %s\n", c->input, err.msg);
            bad++;
            continue;
        }
        double complex want = CMPLX(c->re, c->im);
        /* the same text with z allowed, evaluated anywhere, gives the same */
        double complex v2 = eval_text(c->input, CMPLX(0.3, 0.7), NULL);
        if (!(tu_relerr(v, want) <= c->tol) || !(tu_relerr(v2, want) <= c->tol)) {
            print_error("'%s': got %.17g%+.17gi (as a function of z: %.17g%+.17gi), expected "
                        "%.17g%+.17gi (%s)\n", c->input, creal(v), cimag(v), creal(v2),
                        cimag(v2), creal(want), cimag(want), c->source);
            bad++;
        }
    }
    return bad;
}

static void test_constants_table(void **state)
{
    (void)state;
    assert_int_equal(check_const_cases(const_table, sizeof const_table / sizeof const_table[0]),
                     0);
}

/* Principal values of roots, powers and logs of negative real constants.  A
 * negative number written in the input is a real number: its phase is pi
 * (DLMF 4.2.1: the principal branch has -pi < ph z <= pi), so the principal
 * root lies on the positive imaginary side.
 * KNOWN BUG: "-4" is parsed as -(4+0i) = -4-0i (negative zero imaginary part),
 * and every principal function of it lands on the lower bank: sqrt(-4) = -2i,
 * log(-1) = -i pi.  Reported; skipped until fixed. */
static const const_case negative_real_table[] = {
    /* input, expected, tolerance, source */
    {"sqrt(-4)", 0, 2, 0, "principal sqrt(-4) = 2i (DLMF 4.2.1, 4.2.26; C11 G.6.4.2)"},
    {"sqrt(-9)", 0, 3, 0, "principal sqrt(-9) = 3i (DLMF 4.2.1, 4.2.26)"},
    {"cbrt(-8)", 1, 1.7320508075688772935, 1e-15,
     "principal cube root of -8 = 2 exp(i pi/3) = 1 + i sqrt 3 (DLMF 4.2.26)"},
    {"root(-1, 6)", SQRT3_2, 0.5, 1e-15, "(-1)^(1/6) = exp(i pi/6) (DLMF 4.2.26)"},
    {"log(-1)", 0, TU_PI, 1e-15, "principal log(-1) = i pi (DLMF 4.2.3 with ph = pi)"},
    {"log(-2)", 0.69314718055994530942, TU_PI, 1e-15, "ln 2 + i pi (DLMF 4.2.3)"},
    {"(-8)^(2/3)", -2, 3.4641016151377545870, 1e-15,
     "principal (-8)^(2/3) = 4 exp(2 pi i/3) = -2 + 2i sqrt 3 (DLMF 4.2.26)"},
};

static void test_constants_negative_real(void **state)
{
    (void)state;
    assert_int_equal(check_const_cases(negative_real_table, sizeof negative_real_table /
                                                                sizeof negative_real_table[0]),
                     0);
}

/* Expressions in z: value at a point against the same formula written in C. */
static void test_precedence_with_z(void **state)
{
    (void)state;
    const double complex zs[] = {CMPLX(0.5, 0.25), CMPLX(-1.5, 2), CMPLX(3, -0.75), 2};
    for (size_t k = 0; k < sizeof zs / sizeof zs[0]; k++) {
        double complex z = zs[k];
        const char *src = "operator precedence (common practice, no source)";
        TU_CHECK_CLOSE(eval_text("z", z, NULL), z, 0, "z", src);
        TU_CHECK_CLOSE(eval_text("1+2*z", z, NULL), 1 + 2 * z, 1e-15, "1+2*z", src);
        TU_CHECK_CLOSE(eval_text("-z^2", z, NULL), -(z * z), 1e-15, "-z^2", src);
        TU_CHECK_CLOSE(eval_text("(1-z)*(1+z)", z, NULL), (1 - z) * (1 + z), 1e-15,
                       "(1-z)*(1+z)", src);
        TU_CHECK_CLOSE(eval_text("z/2/z", z, NULL), 0.5, 1e-15, "z/2/z", src);
        TU_CHECK_CLOSE(eval_text("z^3 - 2*z + 1/z", z, NULL), z * z * z - 2 * z + 1 / z, 1e-14,
                       "z^3 - 2*z + 1/z", src);
    }
}

/* ------------------------------------------------- principal evaluation */

/* Points including both banks of the negative real axis (signed zeros), the
 * axes, and generic points in every quadrant. */
static const double complex principal_points[] = {
    CMPLX(-4.0, 0.0), CMPLX(-4.0, -0.0), CMPLX(-0.25, 0.0), CMPLX(-0.25, -0.0),
    CMPLX(4.0, 0.0),  CMPLX(4.0, -0.0),  CMPLX(0.0, 3.0),   CMPLX(0.0, -3.0),
    CMPLX(1.5, 2.5),  CMPLX(-1.5, 2.5),  CMPLX(-1.5, -2.5), CMPLX(1.5, -2.5),
    CMPLX(1e-3, 7e2), CMPLX(-9e4, 1e-5), CMPLX(-9e4, -1e-5), CMPLX(0.7, 0.0)};

static void test_principal_matches_c_exactly(void **state)
{
    (void)state;
    sw_expr *es[8];
    const char *texts[8] = {"sqrt(z)", "log(z)", "z^(1/3)", "cbrt(z)", "root(z, 5)",
                            "z^0.5",   "z^(2/3+0.5i)", "z^z"};
    sw_error err;
    for (int j = 0; j < 8; j++)
        assert_int_equal(sw_expr_parse(&es[j], texts[j], NULL, SW_EXPR_VAR_Z, &err), SW_OK);
    for (size_t k = 0; k < sizeof principal_points / sizeof principal_points[0]; k++) {
        double complex z = principal_points[k];
        double complex want[8] = {csqrt(z),
                                  clog(z),
                                  c_pow(z, 1.0 / 3.0),
                                  c_pow(z, 1.0 / 3.0),
                                  c_pow(z, 1.0 / 5.0),
                                  c_pow(z, 0.5),
                                  c_pow(z, CMPLX(2.0 / 3.0, 0.5)),
                                  c_pow(z, z)};
        for (int j = 0; j < 8; j++) {
            double complex got = sw_expr_eval_principal(es[j], z, 0);
            if (!tu_same_bits(got, want[j])) {
                print_error("%s at z = %.17g%+.17gi: got %.17g%+.17gi, C library gives "
                            "%.17g%+.17gi (contract: exactly as csqrt/clog/cpow)\n",
                            texts[j], creal(z), cimag(z), creal(got), cimag(got),
                            creal(want[j]), cimag(want[j]));
                fail();
            }
        }
    }
    for (int j = 0; j < 8; j++)
        sw_expr_free(es[j]);
}

/* The two banks of the cut, checked by value (C99 Annex G / DLMF 4.2.26). */
static void test_principal_banks(void **state)
{
    (void)state;
    const char *src = "principal branch on the cut: sqrt(-4+0i) = 2i, sqrt(-4-0i) = -2i "
                      "(C11 Annex G.6.4.2; DLMF 4.2.26)";
    TU_CHECK_CLOSE(eval_text("sqrt(z)", CMPLX(-4.0, 0.0), NULL), CMPLX(0, 2), 0, "sqrt(-4+0i)",
                   src);
    TU_CHECK_CLOSE(eval_text("sqrt(z)", CMPLX(-4.0, -0.0), NULL), CMPLX(0, -2), 0,
                   "sqrt(-4-0i)", src);
    TU_CHECK_CLOSE(eval_text("log(z)", CMPLX(-1.0, -0.0), NULL), CMPLX(0, -TU_PI), 1e-16,
                   "log(-1-0i)", "clog(-1-0i) = -i pi (C11 Annex G.6.3.2; DLMF 4.2.3)");
    /* undefined points give NaN, as documented */
    double complex v = eval_text("log(z)", 0, NULL);
    assert_true(isnan(creal(v)) && isnan(cimag(v)));
    v = eval_text("1/z", 0, NULL);
    assert_true(isnan(creal(v)) && isnan(cimag(v)));
}

/* GSL as an independent reference, off the cut, to 1e-15 relative. */
static void test_principal_vs_gsl(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 7001);
    sw_expr *e_sqrt, *e_log, *e_pow, *e_powc, *e_nest;
    sw_error err;
    assert_int_equal(sw_expr_parse(&e_sqrt, "sqrt(z)", NULL, SW_EXPR_VAR_Z, &err), SW_OK);
    assert_int_equal(sw_expr_parse(&e_log, "log(z)", NULL, SW_EXPR_VAR_Z, &err), SW_OK);
    assert_int_equal(sw_expr_parse(&e_pow, "z^0.3", NULL, SW_EXPR_VAR_Z, &err), SW_OK);
    assert_int_equal(sw_expr_parse(&e_powc, "z^(0.25-0.5i)", NULL, SW_EXPR_VAR_Z, &err), SW_OK);
    assert_int_equal(sw_expr_parse(&e_nest, "log(sqrt(z))", NULL, SW_EXPR_VAR_Z, &err), SW_OK);
    for (int k = 0; k < 200; k++) {
        double r = exp(tu_range(&rng, -4, 4)), t = tu_range(&rng, -3.1, 3.1);
        double complex z = CMPLX(r * cos(t), r * sin(t));
        gsl_complex g = to_gsl(z);
        TU_PROP_CLOSE(&rng, k, sw_expr_eval_principal(e_sqrt, z, 0),
                      from_gsl(gsl_complex_sqrt(g)), 1e-15, "sqrt(z)", "gsl_complex_sqrt");
        /* logarithms: absolute error (d ln z = dz/z), measured against max(|ln z|, 1) */
        double complex lz = sw_expr_eval_principal(e_log, z, 0);
        double complex lg = from_gsl(gsl_complex_log(g));
        TU_PROP_CLOSE(&rng, k, (lz - lg) / fmax(cabs(lg), 1.0), 0, 1e-15, "log(z)",
                      "gsl_complex_log");
        gsl_sf_result lr, th;
        gsl_sf_complex_log_e(creal(z), cimag(z), &lr, &th);
        TU_PROP_CLOSE(&rng, k, (lz - CMPLX(lr.val, th.val)) / fmax(cabs(lg), 1.0), 0, 1e-15,
                      "log(z)", "gsl_sf_complex_log_e");
        TU_PROP_CLOSE(&rng, k, sw_expr_eval_principal(e_pow, z, 0),
                      from_gsl(gsl_complex_pow_real(g, 0.3)), 1e-15, "z^0.3",
                      "gsl_complex_pow_real");
        TU_PROP_CLOSE(&rng, k, sw_expr_eval_principal(e_powc, z, 0),
                      from_gsl(gsl_complex_pow(g, gsl_complex_rect(0.25, -0.5))), 1e-15,
                      "z^(0.25-0.5i)", "gsl_complex_pow");
        /* a composition: exactly C's clog(csqrt(z)); against GSL the error of a
           logarithm is absolute (d ln w = dw/w), so measured against max(|ln w|, 1) */
        double complex nest = sw_expr_eval_principal(e_nest, z, 0);
        if (!tu_same_bits(nest, clog(csqrt(z)))) {
            print_error("seed %llu case %d: log(sqrt(z)) differs from clog(csqrt(z))\n",
                        (unsigned long long)rng.seed, k);
            fail();
        }
        double complex gnest = from_gsl(gsl_complex_log(gsl_complex_sqrt(g)));
        TU_PROP_CLOSE(&rng, k, (nest - gnest) / fmax(cabs(gnest), 1.0), 0, 1e-15,
                      "log(sqrt(z))", "gsl_complex_log(gsl_complex_sqrt)");
    }
    sw_expr_free(e_sqrt);
    sw_expr_free(e_log);
    sw_expr_free(e_pow);
    sw_expr_free(e_powc);
    sw_expr_free(e_nest);
}

/* Elementary functions of z against GSL. */
static void test_elementary_vs_gsl(void **state)
{
    (void)state;
    const double complex zs[] = {CMPLX(0.3, 0.4), CMPLX(-1.2, 0.7), CMPLX(2.5, -1.5), 0.5};
    for (size_t k = 0; k < sizeof zs / sizeof zs[0]; k++) {
        double complex z = zs[k];
        gsl_complex g = to_gsl(z);
        TU_CHECK_CLOSE(eval_text("exp(z)", z, NULL), from_gsl(gsl_complex_exp(g)), 1e-15,
                       "exp(z)", "gsl_complex_exp");
        TU_CHECK_CLOSE(eval_text("sin(z)", z, NULL), from_gsl(gsl_complex_sin(g)), 1e-15,
                       "sin(z)", "gsl_complex_sin");
        TU_CHECK_CLOSE(eval_text("cos(z)", z, NULL), from_gsl(gsl_complex_cos(g)), 1e-15,
                       "cos(z)", "gsl_complex_cos");
        TU_CHECK_CLOSE(eval_text("tan(z)", z, NULL), from_gsl(gsl_complex_tan(g)), 4e-15,
                       "tan(z)", "gsl_complex_tan");
        TU_CHECK_CLOSE(eval_text("sinh(z)", z, NULL), from_gsl(gsl_complex_sinh(g)), 1e-15,
                       "sinh(z)", "gsl_complex_sinh");
        TU_CHECK_CLOSE(eval_text("cosh(z)", z, NULL), from_gsl(gsl_complex_cosh(g)), 1e-15,
                       "cosh(z)", "gsl_complex_cosh");
        TU_CHECK_CLOSE(eval_text("tanh(z)", z, NULL), from_gsl(gsl_complex_tanh(g)), 4e-15,
                       "tanh(z)", "gsl_complex_tanh");
    }
}

/* ------------------------------------------------ structure of a program */

static void test_multivalued_nodes(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        size_t nmv;
        const char *first;
    } cases[] = {
        {"z^2 + 1", 0, NULL},
        {"sqrt(4) + z", 0, NULL}, /* a constant root is folded, not multivalued */
        {"sqrt(z)", 1, "sqrt(z)"},
        {"1 + sqrt(1-z)", 1, "sqrt(1-z)"},
        {"z^(1/3)*(1-z)^(2/3)", 2, "z^(1/3)"},
        {"log(z) + cbrt(z) + root(z, 4)", 3, "log(z)"},
        {"z^z", 1, "z^z"},
        {"root(z, 1)", 0, NULL}, /* root(x, 1) = x */
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        sw_expr *e;
        sw_error err;
        assert_int_equal(sw_expr_parse(&e, cases[k].text, NULL, SW_EXPR_VAR_Z, &err), SW_OK);
        if (sw_expr_mv_count(e) != cases[k].nmv) {
            print_error("'%s': %zu multivalued nodes, expected %zu\n", cases[k].text,
                        sw_expr_mv_count(e), cases[k].nmv);
            fail();
        }
        if (cases[k].first) {
            char buf[64];
            assert_string_equal(sw_expr_mv_text(buf, sizeof buf, e, 0), cases[k].first);
        }
        assert_true(sw_expr_uses_z(e) == (strchr(cases[k].text, 'z') != NULL));
        assert_false(sw_expr_uses_w(e));
        assert_string_equal(sw_expr_text(e), cases[k].text);
        sw_expr_free(e);
    }
    /* w only where allowed */
    sw_expr *e;
    sw_error err;
    assert_int_equal(sw_expr_parse(&e, "w^2 - z", NULL, SW_EXPR_VAR_Z | SW_EXPR_VAR_W, &err),
                     SW_OK);
    assert_true(sw_expr_uses_w(e));
    TU_CHECK_CLOSE(sw_expr_eval_principal(e, 2, 3), 7, 0, "w^2 - z at z=2, w=3", "arithmetic");
    sw_expr_free(e);
}

/* ---------------------------------------------------------- parameters */

static void test_parameters(void **state)
{
    (void)state;
    sw_params p;
    sw_params_init(&p);
    sw_error err;
    assert_int_equal(sw_params_assign(&p, "a=1/3", &err), SW_OK);
    assert_int_equal(sw_params_assign(&p, " b = a*3i + 1 ", &err), SW_OK); /* earlier a used */
    assert_int_equal(sw_params_assign(&p, "c_2=sqrt(9)*i", &err), SW_OK);
    double complex v;
    assert_true(sw_params_get(&v, &p, "b"));
    TU_CHECK_CLOSE(v, CMPLX(1, 1), 1e-15, "b = a*3i + 1 with a = 1/3", "arithmetic");
    assert_false(sw_params_get(&v, &p, "d"));
    TU_CHECK_CLOSE(eval_text("z^a", CMPLX(-8, 0), &p), c_pow(CMPLX(-8, 0), 1.0 / 3.0), 1e-15,
                   "z^a with a = 1/3 at -8", "C cpow");
    TU_CHECK_CLOSE(eval_text("c_2 * b", 0, &p), CMPLX(0, 3) * CMPLX(1, 1), 1e-15, "c_2*b",
                   "sqrt(9)*i = 3i");
    /* overwrite */
    assert_int_equal(sw_params_assign(&p, "a=2", &err), SW_OK);
    TU_CHECK_CLOSE(eval_text("z^a", 3, &p), 9, 0, "z^a with a = 2", "arithmetic");

    /* refusals: code and a non-empty message */
    static const struct {
        const char *text;
        sw_status code;
    } bad[] = {
        {"a", SW_EUSAGE},          /* no '=' */
        {"=3", SW_EUSAGE},         /* no name */
        {"pi=3", SW_EUSAGE},       /* reserved */
        {"z=1", SW_EUSAGE},        /* reserved */
        {"sqrt=1", SW_EUSAGE},     /* reserved */
        {"2x=1", SW_EUSAGE},       /* not an identifier */
        {"q=foo", SW_EPARSE},      /* unknown name in the value */
        {"q=", SW_EPARSE},         /* empty value */
        {"q=z", SW_EPARSE},        /* the variable is not a constant */
        {"q=1/0", SW_EINPUT},      /* not finite */
        {"q=1e999", SW_EINPUT},    /* out of range */
    };
    for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
        sw_error_clear(&err);
        sw_status st = sw_params_assign(&p, bad[k].text, &err);
        if (st != bad[k].code || err.code != st || err.msg[0] == '\0') {
            print_error("--set %s: status %d (%s), expected %d; message '%s'\n", bad[k].text,
                        (int)st, sw_status_name(st), (int)bad[k].code, err.msg);
            fail();
        }
    }
    assert_int_equal(sw_params_set(&p, "ok", CMPLX(NAN, 0), &err), SW_EINPUT);
    sw_params_clear(&p);
    sw_params_clear(&p); /* clearing twice is allowed */
}

/* ------------------------------------------------------------ bank marks */

static void test_const_bank_marks(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        double re, im;
        int bank;
    } cases[] = {
        {"0.3+i0", 0.3, 0, SW_BANK_UPPER},
        {"0.3-i0", 0.3, 0, SW_BANK_LOWER},
        {"-2 + i0", -2, 0, SW_BANK_UPPER},
        {"-2 -i0", -2, 0, SW_BANK_LOWER},
        {"1/4-i0", 0.25, 0, SW_BANK_LOWER},
        {"2", 2, 0, SW_BANK_NONE},
        {"1+2i", 1, 2, SW_BANK_NONE},
        {"i0", 0, 0, -99}, /* not a bank mark: an unknown name */
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        double complex v = 0;
        int bank = 42;
        sw_error err;
        sw_status st = sw_const_parse(&v, &bank, cases[k].text, NULL, &err);
        if (cases[k].bank == -99) {
            assert_int_equal(st, SW_EPARSE);
            continue;
        }
        if (st != SW_OK) {
            print_error("'%s': %s\n", cases[k].text, err.msg);
            fail();
        }
        TU_CHECK_CLOSE(v, CMPLX(cases[k].re, cases[k].im), 1e-16, cases[k].text,
                       "bank mark x+i0 / x-i0 (cli.md)");
        assert_int_equal(bank, cases[k].bank);
    }
    /* without a bank output a bank mark is refused */
    double complex v;
    sw_error err;
    sw_error_clear(&err);
    assert_int_equal(sw_const_parse(&v, NULL, "2+i0", NULL, &err), SW_EPARSE);
    assert_true(strstr(err.msg, "bank") != NULL);
    assert_int_equal(sw_const_parse(&v, NULL, "2", NULL, &err), SW_OK);
    TU_CHECK_CLOSE(v, 2, 0, "2", "literal");
    /* constants only */
    assert_int_not_equal(sw_const_parse(&v, NULL, "z+1", NULL, &err), SW_OK);
    assert_int_equal(sw_const_parse(&v, NULL, "log(0)", NULL, &err), SW_EINPUT);
}

/* ---------------------------------------------------------- parse errors */

typedef struct error_case {
    const char *input;
    sw_status code;
    int column;         /* 1-based column the message must name; 0: none required */
    const char *word;   /* a word the message must contain (the problem) */
} error_case;

/* Columns are counted by hand from the input (1-based bytes). */
static const error_case error_table[] = {
    {"sqrt(z", SW_EPARSE, 7, "')'"},          /* the ')' is missing at the end */
    {"(z+1", SW_EPARSE, 5, "')'"},
    {"(z+1))", SW_EPARSE, 6, "')'"},          /* unmatched ')' */
    {"2*+", SW_EPARSE, 4, "expect"},          /* operand expected after "+" */
    {"z+", SW_EPARSE, 3, "expect"},
    {"z^", SW_EPARSE, 3, "expect"},
    {"foo(z)", SW_EPARSE, 1, "foo"},          /* unknown function */
    {"z + bar(1)", SW_EPARSE, 5, "bar"},
    {"q", SW_EPARSE, 1, "q"},                 /* unknown name */
    {"2*q+1", SW_EPARSE, 3, "q"},
    {"1e400", SW_EINPUT, 1, "range"},         /* out of range */
    {"z*1e400", SW_EINPUT, 3, "range"},
    {"z w", SW_EPARSE, 3, "operator"},        /* missing operator */
    {"2 3", SW_EPARSE, 3, "operator"},
    {"root(z)", SW_EPARSE, 7, "root"},
    {"sqrt z", SW_EPARSE, 1, "sqrt"},
    {"sin(z, 1)", SW_EPARSE, 6, "sin"},
    {"z @ 2", SW_EPARSE, 3, "@"},
    {"z+\x01", SW_EPARSE, 3, "character"},    /* binary junk */
    {"\xff\xfe", SW_EPARSE, 1, "character"},
    {"z*)", SW_EPARSE, 3, "')'"},
    {"w+1", SW_EPARSE, 1, "w"},               /* w is not allowed in an expression in z */
    {"inf", SW_EPARSE, 1, "inf"},
    {".", SW_EPARSE, 1, "number"},
    {"", SW_EPARSE, 0, "empty"},
    {"   ", SW_EPARSE, 0, "empty"},
    {"1/0", SW_EINPUT, 1, "finite"},          /* folded constant that is not finite */
    {"z^1e9", SW_EINPUT, -1, "exponent"},     /* column of the '^' or of the exponent */
};

static int message_column(const char *msg)
{
    const char *p = strstr(msg, "column ");
    int last = 0;
    while (p) { /* the last "column N" is the position of the error */
        last = atoi(p + 7);
        p = strstr(p + 7, "column ");
    }
    return last;
}

static void test_parse_errors(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof error_table / sizeof error_table[0]; k++) {
        const error_case *c = &error_table[k];
        sw_expr *e = (sw_expr *)&e; /* must be reset to NULL on failure */
        sw_error err;
        sw_error_clear(&err);
        sw_status st = sw_expr_parse(&e, c->input, NULL, SW_EXPR_VAR_Z, &err);
        int col = message_column(err.msg);
        int col_ok = c->column == 0 || (c->column > 0 && col == c->column) ||
                     (c->column < 0 && (col == 2 || col == 3));
        int word_ok = strstr(err.msg, c->word) != NULL;
        if (st != c->code || err.code != c->code || e != NULL || !col_ok || !word_ok ||
            strchr(err.msg, '\n') != NULL) {
            print_error("input \"%s\": status %d (%s), expected %d; message \"%s\"; expected "
                        "column %d and the word \"%s\"\n",
                        c->input, (int)st, sw_status_name(st), (int)c->code, err.msg, c->column,
                        c->word);
            fail();
        }
        if (c->column > 0 && strstr(err.msg, "column ") == NULL)
            fail();
    }
    /* NULL text and over-long / over-deep input are refused, not crashed on */
    sw_expr *e;
    sw_error err;
    assert_int_not_equal(sw_expr_parse(&e, NULL, NULL, SW_EXPR_VAR_Z, &err), SW_OK);
    char *deep = malloc(20001);
    assert_non_null(deep);
    memset(deep, '(', 20000);
    deep[20000] = '\0';
    assert_int_equal(sw_expr_parse(&e, deep, NULL, SW_EXPR_VAR_Z, &err), SW_EINPUT);
    assert_null(e);
    memset(deep, '-', 20000);
    assert_int_equal(sw_expr_parse(&e, deep, NULL, SW_EXPR_VAR_Z, &err), SW_EINPUT);
    free(deep);
    size_t n = 200001;
    char *longtext = malloc(n + 1);
    assert_non_null(longtext);
    for (size_t k = 0; k < n; k++)
        longtext[k] = (k % 2) ? '+' : 'z';
    longtext[n] = '\0';
    assert_int_equal(sw_expr_parse(&e, longtext, NULL, SW_EXPR_VAR_Z, &err), SW_EINPUT);
    free(longtext);
}

/* The column of a bad root degree: where the degree starts. */
static void test_root_degree_column(void **state)
{
    (void)state;
    sw_expr *e;
    sw_error err;
    assert_int_equal(sw_expr_parse(&e, "root(z,3)", NULL, SW_EXPR_VAR_Z, &err), SW_OK);
    sw_expr_free(e);
    sw_error_clear(&err);
    assert_int_equal(sw_expr_parse(&e, "root(z,2.5)", NULL, SW_EXPR_VAR_Z, &err), SW_EINPUT);
    assert_int_equal(message_column(err.msg), 8);
}

/* KNOWN BUG: with a space after the comma the column names the space, one
 * before the degree: "root(z, 0)" says column 8, the '0' is at column 9. */
static void test_root_degree_column_after_space(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        int column;
    } cases[] = {{"root(z, 2.5)", 9}, {"root(z, 0)", 9}, {"root(z, -2)", 9}, {"root(z, z)", 9}};
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        sw_expr *e;
        sw_error err;
        sw_error_clear(&err);
        assert_int_not_equal(sw_expr_parse(&e, cases[k].text, NULL, SW_EXPR_VAR_Z, &err), SW_OK);
        if (message_column(err.msg) != cases[k].column) {
            print_error("\"%s\": message \"%s\", expected column %d (where the degree "
                        "starts)\n", cases[k].text, err.msg, cases[k].column);
            fail();
        }
    }
}

/* Random printable garbage never crashes and always gives a status with a
 * message; a failure names its column inside the text (or one past its end). */
static void test_parse_random_garbage(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 7003);
    static const char alphabet[] = "z+-*/^()., 0123456789ie pisqrtlogroot\t";
    char buf[64];
    for (int k = 0; k < 2000; k++) {
        int n = (int)tu_int(&rng, 0, 40);
        for (int j = 0; j < n; j++)
            buf[j] = alphabet[tu_int(&rng, 0, (long)sizeof alphabet - 2)];
        buf[n] = '\0';
        sw_expr *e = NULL;
        sw_error err;
        sw_error_clear(&err);
        sw_status st = sw_expr_parse(&e, buf, NULL, SW_EXPR_VAR_Z, &err);
        if (st == SW_OK) {
            assert_non_null(e);
            (void)sw_expr_eval_principal(e, CMPLX(0.3, 0.1), 0);
            sw_expr_free(e);
            continue;
        }
        int col = message_column(err.msg);
        int blank = 1;
        for (int j = 0; j < n; j++)
            if (buf[j] != ' ' && buf[j] != '\t')
                blank = 0;
        if (err.msg[0] == '\0' || e != NULL || (!blank && (col < 1 || col > n + 1))) {
            print_error("seed %llu case %d: \"%s\" -> status %d, message \"%s\"\n",
                        (unsigned long long)rng.seed, k, buf, (int)st, err.msg);
            fail();
        }
    }
}

int main(void)
{
    sw_error err;
    if (sw_init(&err) != SW_OK)
        return 1;
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_constants_table),
        cmocka_unit_test(test_constants_negative_real),
        cmocka_unit_test(test_precedence_with_z),
        cmocka_unit_test(test_principal_matches_c_exactly),
        cmocka_unit_test(test_principal_banks),
        cmocka_unit_test(test_principal_vs_gsl),
        cmocka_unit_test(test_elementary_vs_gsl),
        cmocka_unit_test(test_multivalued_nodes),
        cmocka_unit_test(test_parameters),
        cmocka_unit_test(test_const_bank_marks),
        cmocka_unit_test(test_parse_errors),
        cmocka_unit_test(test_root_degree_column),
        cmocka_unit_test(test_root_degree_column_after_space),
        cmocka_unit_test(test_parse_random_garbage),
    };
    return cmocka_run_group_tests_name("expr", tests, NULL, NULL);
}
