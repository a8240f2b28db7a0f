/* Audits of principal-branch formulas and of sampled values.
 *
 * Sources of the expected values (named beside every check):
 *  - DLMF 4.2.3: ln z = ln|z| + i ph z with -pi < ph z <= pi, so the
 *    principal logarithm (and every principal root and power, DLMF 4.2.26
 *    z^a = exp(a ln z)) jumps exactly where its operand crosses the negative
 *    real axis; a logarithm by -+2 pi i (DLMF 4.2.6), a square root by the
 *    factor -1, z^(1/3) by exp(-+2 pi i/3);
 *  - DLMF 4.2.7: on the cut, ln(x +- i0) = ln|x| +- i pi (the two banks);
 *  - DLMF 4.8.2: ln(z1 z2) = ln z1 + ln z2 only while -pi <= ph z1 + ph z2 <=
 *    pi; otherwise they differ by -+2 pi i;
 *  - the identity sqrt(z-1) sqrt(z+1) = sqrt(z^2-1), which holds only off the
 *    union of the cuts of the two sides (common practice, no source);
 *  - where a straight segment A + s (B - A) meets the negative real axis of
 *    z - a (Im = 0 solved for s) or of z^2 - c (a quadratic in s): elementary
 *    algebra (common practice, no source);
 *  - reference libraries for values: GSL gsl_complex_sqrt, gsl_complex_log,
 *    gsl_complex_pow_real (the principal branches, GSL manual "Complex
 *    Numbers"). */
#include "test_util.h"

#include <unistd.h>

#include <gsl/gsl_complex.h>
#include <gsl/gsl_complex_math.h>

#include "sheetwalk/audit.h"
#include "sheetwalk/func.h"
#include "sheetwalk/path.h"
#include "sheetwalk/track.h"

#define LOC 1e-10 /* location accuracy required, relative to the path scale */

static double complex g_sqrt(double complex z)
{
    gsl_complex r = gsl_complex_sqrt(gsl_complex_rect(creal(z), cimag(z)));
    return CMPLX(GSL_REAL(r), GSL_IMAG(r));
}

static double complex g_log(double complex z)
{
    gsl_complex r = gsl_complex_log(gsl_complex_rect(creal(z), cimag(z)));
    return CMPLX(GSL_REAL(r), GSL_IMAG(r));
}

static double complex g_cbrt(double complex z)
{
    gsl_complex r = gsl_complex_pow_real(gsl_complex_rect(creal(z), cimag(z)), 1.0 / 3.0);
    return CMPLX(GSL_REAL(r), GSL_IMAG(r));
}

/* ------------------------------------------------------------ a run */

typedef struct ar {
    sw_status st;
    sw_func *f;
    sw_path p;
    sw_trace tr;
    sw_audit a;
    sw_error err;
} ar;

static void ar_clear(ar *r)
{
    sw_audit_clear(&r->a);
    sw_trace_clear(&r->tr);
    sw_path_clear(&r->p);
    sw_func_free(r->f);
    r->f = NULL;
}

/* Track FTEXT (expression, or curve when CURVE) along PTEXT from the sheet
 * nearest *START (NULL: principal / sheet 1); audit the formula when asked. */
static void ar_track(ar *r, const char *ftext, int curve, const char *ptext,
                     const double complex *start, int audit)
{
    memset(r, 0, sizeof *r);
    sw_path_init(&r->p);
    sw_trace_init(&r->tr);
    sw_audit_init(&r->a);
    sw_error_clear(&r->err);
    sw_germ g;
    r->st = curve ? sw_func_from_curve(&r->f, ftext, NULL, &r->err)
                  : sw_func_from_expr(&r->f, ftext, NULL, &r->err);
    if (r->st == SW_OK)
        r->st = sw_path_parse(&r->p, ptext, "path", NULL, &r->err);
    if (r->st != SW_OK)
        return;
    if ((r->st = sw_germ_init(&g, r->f)) != SW_OK)
        return;
    sw_track_opts o;
    sw_track_opts_init(&o);
    r->st = sw_track_start_germ(&g, r->f, &r->p, 0, start, &o, &r->err);
    if (r->st == SW_OK)
        r->st = sw_track_run(&r->tr, r->f, &g, &r->p, &o, &r->err);
    sw_germ_clear(&g);
    if (r->st == SW_OK && audit)
        r->st = sw_audit_formula(&r->a, r->f, &r->p, &r->tr, NULL, &r->err);
}

static void ar_audit(ar *r, const char *ftext, const char *ptext)
{
    ar_track(r, ftext, 0, ptext, NULL, 1);
    if (r->st != SW_OK) {
        print_error("audit of '%s' along '%s' failed: %s\n", ftext, ptext, r->err.msg);
        fail();
    }
}

/* The jump (of the formula) nearest to z, and its distance. */
static const sw_audit_jump *nearest_jump(const sw_audit *a, double complex z, double *dist)
{
    const sw_audit_jump *best = NULL;
    *dist = INFINITY;
    for (size_t k = 0; k < a->njumps; k++)
        if (cabs(a->jump[k].z - z) < *dist) {
            *dist = cabs(a->jump[k].z - z);
            best = &a->jump[k];
        }
    return best;
}

static void expect_jump_at(const ar *r, double complex z, const char *what, const char *source)
{
    double d;
    const sw_audit_jump *j = nearest_jump(&r->a, z, &d);
    if (j == NULL || !(d <= LOC * r->a.scale)) {
        print_error("%s: no jump within %.1g of %.17g%+.17gi (nearest at distance %.3g) (%s)\n",
                    what, LOC * r->a.scale, creal(z), cimag(z), d, source);
        fail();
    }
}

static void expect_count(const ar *r, size_t n, const char *what, const char *source)
{
    if (r->a.njumps != n) {
        print_error("%s: %zu jumps found, expected %zu (%s)\n", what, r->a.njumps, n, source);
        for (size_t k = 0; k < r->a.njumps; k++)
            print_error("  found t = %.17g z = %.17g%+.17gi\n", r->a.jump[k].t,
                        creal(r->a.jump[k].z), cimag(r->a.jump[k].z));
        fail();
    }
}

/* -------------------------------------------- classic pitfalls */

static void test_log_of_product(void **state)
{
    (void)state;
    ar r;
    /* Along the vertical segment -2+i -> -2-i, z and z+1 cross the negative
       axis at -2 while z(z+1) = 2 stays positive.  Before the crossing
       ph z + ph(z+1) is near 2 pi > pi, after it near -2 pi < -pi: by DLMF
       4.8.2 (with ph in (-pi, pi], DLMF 4.2.3) the formula
       log(z(z+1)) - log z - log(z+1) equals -2 pi i before and +2 pi i after. */
    ar_audit(&r, "log(z*(z+1)) - log(z) - log(z+1)", "-2+1i; -2-1i");
    expect_count(&r, 1, "log(z1 z2) - log z1 - log z2", "DLMF 4.8.2");
    expect_jump_at(&r, -2, "log(z1 z2) - log z1 - log z2", "DLMF 4.8.2");
    const sw_audit_jump *j = &r.a.jump[0];
    TU_CHECK_CLOSE(j->t, 0.5, 1e-10, "parameter of the jump", "midpoint of the segment");
    TU_CHECK_CLOSE(j->before, -TU_2PI_I, 1e-12, "value before", "DLMF 4.8.2 with 4.2.3");
    TU_CHECK_CLOSE(j->after, TU_2PI_I, 1e-12, "value after", "DLMF 4.8.2 with 4.2.3");
    TU_CHECK_CLOSE(j->difference, 2.0 * TU_2PI_I, 1e-12, "difference", "DLMF 4.8.2");
    /* the two logarithms are the causes, each jumping by -2 pi i (DLMF 4.2.6) */
    assert_int_equal(j->ncause, 2);
    for (size_t k = 0; k < 2; k++) {
        assert_true(j->cause[k].downward);
        TU_CHECK_CLOSE(j->cause[k].node_after - j->cause[k].node_before, -TU_2PI_I, 1e-12,
                       "log jump", "DLMF 4.2.6");
    }
    /* the continued formula is the constant -2 pi i (its derivative is 0):
       the principal one agrees before and differs by 4 pi i after */
    assert_int_equal(r.a.npieces, 2);
    assert_true(r.a.piece[0].agrees);
    assert_false(r.a.piece[1].agrees);
    TU_CHECK_CLOSE(r.a.piece[1].difference, 2.0 * TU_2PI_I, 1e-12, "principal - continued",
                   "DLMF 4.8.2");
    ar_clear(&r);

    /* log z + log(z+1) alone jumps by -4 pi i there; log(z(z+1)) does not */
    ar_audit(&r, "log(z) + log(z+1)", "-2+1i; -2-1i");
    expect_count(&r, 1, "log z + log(z+1)", "DLMF 4.2.3");
    TU_CHECK_CLOSE(r.a.jump[0].difference, -2.0 * TU_2PI_I, 1e-12, "sum of logs",
                   "DLMF 4.2.6, twice");
    ar_clear(&r);
    ar_audit(&r, "log(z*(z+1))", "-2+1i; -2-1i");
    expect_count(&r, 0, "log(z(z+1)), operand 2 at the crossing", "DLMF 4.2.3");
    ar_clear(&r);

    /* a closed loop around 0 and -1: every logarithm's operand crosses the
       negative axis once, upward (DLMF 4.2.6: + one positive crossing) */
    ar_audit(&r, "log(z) + log(z+1)", "circle -0.5 2 64");
    expect_count(&r, 1, "log z + log(z+1) on a circle", "DLMF 4.2.3");
    expect_jump_at(&r, -2.5, "log z + log(z+1) on a circle", "DLMF 4.2.3");
    TU_CHECK_CLOSE(r.a.jump[0].difference, -2.0 * TU_2PI_I, 1e-12, "circle jump",
                   "DLMF 4.2.6");
    ar_clear(&r);
}

static void test_sqrt_product_identity(void **state)
{
    (void)state;
    ar r;
    /* sqrt(z-1) sqrt(z+1) has its cuts on (-inf, 1]: it jumps where a path
       crosses (-1, 1) (one factor jumps) and not where it crosses (-inf, -1)
       (both jump: cancel).  sqrt(z^2-1) has its cut where z^2-1 <= 0: the
       segment [-1, 1] and the imaginary axis.  The identity holds only off
       the union of the cuts (common practice, no source). */
    const char *path = "-0.5+1i; 0.3-1i; 2-1i; 2+1i; 0.3+1i; -3+1i; -3-1i";
    /* crossings: segment 1 meets the real axis at -0.1 (s = 1/2) and the
       imaginary axis at -0.25i (s = 5/8); segment 5 meets the imaginary axis
       at 1i (s = 0.3/3.3); segment 6 meets the real axis at -3 */
    ar_audit(&r, "sqrt(z^2-1)", path);
    expect_count(&r, 3, "sqrt(z^2-1)", "common practice, no source");
    expect_jump_at(&r, -0.1, "sqrt(z^2-1) on (-1,1)", "common practice, no source");
    expect_jump_at(&r, CMPLX(0, -0.25), "sqrt(z^2-1) on the imaginary axis",
                   "common practice, no source");
    expect_jump_at(&r, CMPLX(0, 1), "sqrt(z^2-1) on the imaginary axis",
                   "common practice, no source");
    for (size_t k = 0; k < r.a.njumps; k++)
        TU_CHECK_CLOSE(r.a.jump[k].ratio, -1, 1e-12, "sqrt ratio", "C11 Annex G csqrt");
    TU_CHECK_CLOSE(r.a.jump[0].t, 0.5, 1e-10, "t of the first jump", "s = 1/2 on segment 0");
    TU_CHECK_CLOSE(r.a.jump[1].t, 0.625, 1e-10, "t of the second jump", "s = 5/8 on segment 0");
    ar_clear(&r);

    ar_audit(&r, "sqrt(z-1)*sqrt(z+1)", path);
    expect_count(&r, 1, "sqrt(z-1) sqrt(z+1)", "common practice, no source");
    expect_jump_at(&r, -0.1, "sqrt(z-1) sqrt(z+1) on (-1,1)", "common practice, no source");
    assert_int_equal(r.a.jump[0].ncause, 1);
    /* at -3 both factors jump and cancel: a note, not a jump */
    assert_int_equal(r.a.nnotes, 1);
    TU_CHECK_CLOSE(r.a.note[0].z, -3, LOC, "cancelled jumps at -3", "common practice, no source");
    assert_int_equal(r.a.note[0].ncause, 2);
    assert_true(r.a.note[0].cancels);
    ar_clear(&r);

    /* the quotient is +-1 and jumps on the symmetric difference of the cuts */
    ar_audit(&r, "sqrt(z-1)*sqrt(z+1)/sqrt(z^2-1)", path);
    expect_count(&r, 2, "quotient", "common practice, no source");
    expect_jump_at(&r, CMPLX(0, -0.25), "quotient", "common practice, no source");
    expect_jump_at(&r, CMPLX(0, 1), "quotient", "common practice, no source");
    for (size_t k = 0; k < r.a.njumps; k++) {
        TU_CHECK_CLOSE(r.a.jump[k].ratio, -1, 1e-12, "quotient ratio",
                       "common practice, no source");
        TU_CHECK_CLOSE(cabs(r.a.jump[k].before), 1, 1e-12, "quotient is +-1",
                       "common practice, no source");
    }
    /* at -0.1 both sides jump (cancel in the quotient) */
    assert_int_equal(r.a.nnotes, 2);
    ar_clear(&r);
}

static void test_cancelling_nodes(void **state)
{
    (void)state;
    ar r;
    /* csqrt(4 z) = 2 csqrt(z) (scaling by a positive number), so
       sqrt(z) sqrt(4z) = 2z everywhere: continuous although both nodes jump
       at the negative axis (common practice, no source) */
    ar_audit(&r, "sqrt(z)*sqrt(4*z)", "-1+1i; -1-1i");
    expect_count(&r, 0, "sqrt(z) sqrt(4z)", "common practice, no source");
    assert_int_equal(r.a.nnotes, 1);
    assert_int_equal(r.a.note[0].ncause, 2);
    TU_CHECK_CLOSE(r.a.note[0].z, -1, LOC, "the note's place", "common practice, no source");
    assert_true(r.a.npieces == 1 && r.a.piece[0].agrees);
    ar_clear(&r);
    /* sqrt(z)^2 = z: the node jumps, the formula does not */
    ar_audit(&r, "sqrt(z)^2", "-1+1i; -1-1i");
    expect_count(&r, 0, "sqrt(z)^2", "common practice, no source");
    assert_int_equal(r.a.nnotes, 1);
    ar_clear(&r);
}

static void test_nested(void **state)
{
    (void)state;
    ar r;
    /* log(sqrt(z) - 1): the operand sqrt(z)-1 lies on the negative axis for
       z in (0, 1) (Re csqrt >= 0), so along x = 0.5 the outer logarithm jumps
       by -2 pi i at z = 0.5 (DLMF 4.2.6); along x = -0.5 the inner root jumps
       (ratio -1) and the formula goes from clog(csqrt(-0.5+i0) - 1) to
       clog(csqrt(-0.5-i0) - 1) (GSL reference values, DLMF 4.2.7) */
    ar_audit(&r, "log(sqrt(z)-1)", "0.5+1i; 0.5-1i");
    expect_count(&r, 1, "outer log", "DLMF 4.2.3");
    expect_jump_at(&r, 0.5, "outer log", "DLMF 4.2.3");
    TU_CHECK_CLOSE(r.a.jump[0].difference, -TU_2PI_I, 1e-10, "outer log jump", "DLMF 4.2.6");
    ar_clear(&r);
    ar_audit(&r, "log(sqrt(z)-1)", "-0.5+1i; -0.5-1i");
    expect_count(&r, 1, "inner root", "DLMF 4.2.3");
    expect_jump_at(&r, -0.5, "inner root", "DLMF 4.2.3");
    double complex s = CMPLX(0, sqrt(0.5));
    TU_CHECK_CLOSE(r.a.jump[0].before, g_log(s - 1), 1e-9, "limit from above",
                   "GSL gsl_complex_log, DLMF 4.2.7");
    TU_CHECK_CLOSE(r.a.jump[0].after, g_log(-s - 1), 1e-9, "limit from below",
                   "GSL gsl_complex_log, DLMF 4.2.7");
    /* the inner root crosses; it carries sqrt(z)-1 from -1+0.71i to -1-0.71i,
       across the cut of the outer logarithm */
    assert_int_equal(r.a.jump[0].ncause, 2);
    assert_int_equal(r.a.jump[0].cause[0].node, 0);
    assert_false(r.a.jump[0].cause[0].carried);
    assert_int_equal(r.a.jump[0].cause[1].node, 1);
    assert_true(r.a.jump[0].cause[1].carried);
    ar_clear(&r);
    /* log(log(z)^2): where log z jumps by -2 pi i at z = -0.8, log(z)^2
       (near -pi^2) is carried across the negative axis; later it crosses back
       by itself where Re log z = 0, i.e. |z| = 1 (DLMF 4.2.3): on this path
       at -0.8-0.6i (segment 1, s = 1/2) */
    ar_audit(&r, "log(log(z)^2)", "-0.8+0.3i; -0.8-0.3i; -0.8-0.9i");
    expect_count(&r, 2, "log(log(z)^2)", "DLMF 4.2.3");
    expect_jump_at(&r, -0.8, "inner crossing", "DLMF 4.2.3");
    expect_jump_at(&r, CMPLX(-0.8, -0.6), "outer crossing at |z| = 1", "DLMF 4.2.3");
    TU_CHECK_CLOSE(r.a.jump[1].t, 1.5, 1e-10, "t of the outer crossing", "segment 1, s = 1/2");
    assert_true(r.a.jump[0].ncause == 2 && r.a.jump[0].cause[1].carried);
    assert_true(r.a.jump[1].ncause == 1 && !r.a.jump[1].cause[0].carried);
    ar_clear(&r);
}

static void test_bank_paths(void **state)
{
    (void)state;
    ar r;
    /* sqrt(1 - 4/z) has its principal cut on (0, 4].  On the upper bank x+i0
       the operand approaches the cut from Im > 0, so csqrt gives
       +i sqrt(4/x - 1) (C11 Annex G: csqrt(-r + i0) = i sqrt(r)); along the
       bank the principal evaluation is continuous and is the continued one. */
    ar_audit(&r, "sqrt(1-4/z)", "0.5+i0; 3.5+i0");
    expect_count(&r, 0, "along the upper bank", "C11 Annex G");
    assert_int_equal(r.a.nproblems, 0);
    assert_true(r.a.npieces == 1 && r.a.piece[0].agrees);
    ar_clear(&r);
    ar_audit(&r, "sqrt(1-4/z)", "6+i0; -1+i0");
    expect_count(&r, 0, "the whole upper bank, over the branch points", "C11 Annex G");
    ar_clear(&r);
    /* from the upper to the lower bank at x = 2: one jump, +i -> -i */
    ar_audit(&r, "sqrt(1-4/z)", "2+i0; 2-i0");
    expect_count(&r, 1, "across the cut at 2", "C11 Annex G");
    expect_jump_at(&r, 2, "across the cut at 2", "C11 Annex G");
    TU_CHECK_CLOSE(r.a.jump[0].t, 0.5, 1e-10, "t across the cut", "midpoint");
    TU_CHECK_CLOSE(r.a.jump[0].before, CMPLX(0, 1), 1e-8, "upper bank value",
                   "i sqrt(4/2 - 1), C11 Annex G");
    TU_CHECK_CLOSE(r.a.jump[0].after, CMPLX(0, -1), 1e-8, "lower bank value",
                   "-i sqrt(4/2 - 1), C11 Annex G");
    ar_clear(&r);
    /* along the upper bank, down across at 3, back along the lower bank:
       one jump at 3 and the lower bank's principal value is -continued */
    ar_audit(&r, "sqrt(1-4/z)", "1+i0; 3+i0; 3-i0; 1-i0");
    expect_count(&r, 1, "around the end of the cut", "C11 Annex G");
    expect_jump_at(&r, 3, "across at 3", "C11 Annex G");
    assert_int_equal(r.a.npieces, 2);
    TU_CHECK_CLOSE(r.a.piece[1].ratio, -1, 1e-8, "lower bank vs continued",
                   "common practice, no source");
    ar_clear(&r);
    /* the logarithm on the two banks (DLMF 4.2.7): log(z) from -2+i0 to -2-i0 */
    ar_audit(&r, "log(z)", "-2+i0; -2-i0");
    expect_count(&r, 1, "log across its cut", "DLMF 4.2.7");
    TU_CHECK_CLOSE(r.a.jump[0].before, CMPLX(log(2), TU_PI), 1e-8, "ln(-2+i0)", "DLMF 4.2.7");
    TU_CHECK_CLOSE(r.a.jump[0].after, CMPLX(log(2), -TU_PI), 1e-8, "ln(-2-i0)", "DLMF 4.2.7");
    ar_clear(&r);
}

static void test_on_the_cut(void **state)
{
    (void)state;
    ar r;
    /* along the negative axis the operand of sqrt(z) is exactly real: the
       principal value there is decided by the sign of zero; reported as a
       problem, no search (and no hang) */
    ar_audit(&r, "sqrt(z)", "-3; -1");
    assert_int_equal(r.a.nproblems, 1);
    assert_int_equal(r.a.problem[0].kind, SW_AUDIT_ON_CUT);
    TU_CHECK_CLOSE(r.a.problem[0].t0, 0, 1e-12, "stretch start", "the whole path");
    TU_CHECK_CLOSE(r.a.problem[0].t1, 1, 1e-12, "stretch end", "the whole path");
    expect_count(&r, 0, "along the cut", "C11 Annex G");
    char buf[1024];
    sw_audit_problem_text(buf, sizeof buf, r.f, &r.a.problem[0]);
    assert_non_null(strstr(buf, "negative real axis"));
    ar_clear(&r);
    /* arriving on the cut from below: C's value on the cut (+0 imaginary part
       here) is the upper one, so the formula jumps where the path arrives */
    ar_audit(&r, "sqrt(z)", "-3-1i; -3; -1; -1+1i");
    expect_count(&r, 1, "arriving on the cut", "C11 Annex G");
    TU_CHECK_CLOSE(r.a.jump[0].t, 1, 1e-12, "arrival", "the second vertex");
    assert_int_equal(r.a.nproblems, 1);
    ar_clear(&r);
    /* a rotated copy: the operand is real only to rounding (noise of both
       signs); still reported as a stretch, in bounded time */
    char fx[128], px[256], v1[64], v2[64];
    double th = 0.3;
    snprintf(fx, sizeof fx, "sqrt(z*exp(%.17g*i))", th);
    tu_fmt_vertex(v1, sizeof v1, -3 * cexp(CMPLX(0, -th)));
    tu_fmt_vertex(v2, sizeof v2, -1 * cexp(CMPLX(0, -th)));
    snprintf(px, sizeof px, "%s; %s", v1, v2);
    ar_audit(&r, fx, px);
    int stretch = 0;
    for (size_t k = 0; k < r.a.nproblems; k++)
        stretch |= r.a.problem[k].kind == SW_AUDIT_ON_CUT;
    assert_true(stretch);
    ar_clear(&r);
    /* an operand that only touches the axis: z^2 - 1 on a line through 0 has
       Im of one sign (a ray from -1): no jump, no problem */
    ar_audit(&r, "sqrt(z^2-1)", "-0.5+1i; 0.5-1i");
    expect_count(&r, 0, "touching the cut", "common practice, no source");
    assert_int_equal(r.a.nproblems, 0);
    assert_int_equal(r.a.nnotes, 0);
    ar_clear(&r);
}

static void test_repeated_vertices(void **state)
{
    (void)state;
    ar r;
    /* repeated vertices make segments of length zero: sqrt(z) crosses the
       negative axis at -1 (segment 2, s = 1/2) and at -0.5 (segment 4,
       s = 1/2), and nowhere else (DLMF 4.2.3) */
    ar_audit(&r, "sqrt(z)", "1i; -1+1i; -1+1i; -1-1i; -1-1i; 1i; 1i");
    expect_count(&r, 2, "with repeated vertices", "DLMF 4.2.3");
    TU_CHECK_CLOSE(r.a.jump[0].t, 2.5, 1e-10, "first jump", "segment 2, s = 1/2");
    TU_CHECK_CLOSE(r.a.jump[1].t, 4.5, 1e-10, "second jump", "segment 4, s = 1/2");
    expect_jump_at(&r, -1, "first jump", "DLMF 4.2.3");
    expect_jump_at(&r, -0.5, "second jump", "DLMF 4.2.3");
    ar_clear(&r);
    /* a crossing exactly at a vertex where the path turns */
    ar_audit(&r, "sqrt(z)", "-1+1i; -2; -1-1i");
    expect_count(&r, 1, "crossing at a vertex", "DLMF 4.2.3");
    TU_CHECK_CLOSE(r.a.jump[0].t, 1, 1e-10, "at the vertex", "vertex 1");
    ar_clear(&r);
}

static void test_principal_pole(void **state)
{
    (void)state;
    ar r;
    /* 1/(sqrt(z) - 1): after crossing the negative axis the continued branch
       is 1/(-csqrt(z) - 1), finite at z = 1, while the formula as written has
       a pole there (csqrt(1) = 1): a problem, and one jump at -1 */
    ar_audit(&r, "1/(sqrt(z)-1)", "-1+1i; -1-1i; 1-1i; 1+1i");
    expect_count(&r, 1, "crossing at -1", "C11 Annex G");
    expect_jump_at(&r, -1, "crossing at -1", "C11 Annex G");
    assert_int_equal(r.a.nproblems, 1);
    assert_int_equal(r.a.problem[0].kind, SW_AUDIT_SINGULAR);
    assert_true(cabs(r.a.problem[0].z0 - 1) < 1e-9);
    ar_clear(&r);
}

/* -------------------------------------------- random polylines */

typedef struct xc {
    size_t seg;
    double s;
    double complex z;
    int node;
} xc;

/* Roots in (0,1) of a s^2 + b s + c (a may be 0); returns the count. */
static int roots01(double *out, double a, double b, double c)
{
    int n = 0;
    if (fabs(a) < 1e-300) {
        if (b != 0)
            out[n++] = -c / b;
    } else {
        double D = b * b - 4 * a * c;
        if (D < 0)
            return -1; /* no real root */
        double q = -0.5 * (b + copysign(sqrt(D), b));
        out[n++] = q / a;
        if (q != 0)
            out[n++] = c / q;
    }
    return n;
}

/* Audit sqrt(z-a) (z-b)^(1/3) log(z-c) sqrt(z^2-d) along the polyline V and
 * compare with the crossings in closed form.  Returns the number of
 * crossings checked, or -1 when the case is degenerate (skipped). */
static int check_case(double complex a, double complex b, double complex c, double complex d,
                      const double complex *v, size_t nv, const char *what)
{
    xc ex[64];
    int nex = 0, bad = 0;
    double complex br[5] = {a, b, c, csqrt(d), -csqrt(d)};
    for (size_t k = 0; k + 1 < nv && !bad; k++) {
        double complex A = v[k], D = v[k + 1] - v[k];
        for (int q = 0; q < 5; q++) /* stay away from the branch points */
            if (tu_polyline_distance(v + k, 2, br[q]) < 1e-2)
                bad = 1;
        for (int node = 0; node < 4 && !bad; node++) {
            double r[2];
            int nr;
            if (node < 3) {
                double complex p = node == 0 ? a : node == 1 ? b : c;
                nr = roots01(r, 0, cimag(D), cimag(A - p));
            } else {
                nr = roots01(r, cimag(D * D), 2 * cimag(A * D), cimag(A * A - d));
            }
            for (int q = 0; q < nr; q++) {
                double s = r[q];
                if (!(s > -1e-6 && s < 1 + 1e-6))
                    continue;
                if (s < 1e-6 || s > 1 - 1e-6) {
                    bad = 1; /* a crossing at a vertex: skip the case */
                    break;
                }
                double complex z = A + s * D;
                double complex u = node == 0 ? z - a : node == 1 ? z - b : node == 2 ? z - c
                                                                                      : z * z - d;
                if (creal(u) < 0 && nex < 64)
                    ex[nex++] = (xc){k, s, z, node};
            }
        }
    }
    /* two crossings too close to tell apart: skip */
    for (int i = 0; i < nex && !bad; i++)
        for (int j = i + 1; j < nex; j++)
            if (cabs(ex[i].z - ex[j].z) < 1e-6 && ex[i].seg == ex[j].seg)
                bad = 1;
    if (bad)
        return -1;
    char fa[64], fb[64], fc[64], fd[64], nodes[4][96], ftext[512], ptext[512];
    tu_fmt_vertex(fa, sizeof fa, a);
    tu_fmt_vertex(fb, sizeof fb, b);
    tu_fmt_vertex(fc, sizeof fc, c);
    tu_fmt_vertex(fd, sizeof fd, d);
    snprintf(nodes[0], sizeof nodes[0], "sqrt(z-(%s))", fa);
    snprintf(nodes[1], sizeof nodes[1], "(z-(%s))^(1/3)", fb);
    snprintf(nodes[2], sizeof nodes[2], "log(z-(%s))", fc);
    snprintf(nodes[3], sizeof nodes[3], "sqrt(z^2-(%s))", fd);
    snprintf(ftext, sizeof ftext, "%s*%s*%s*%s", nodes[0], nodes[1], nodes[2], nodes[3]);
    size_t used = 0;
    for (size_t k = 0; k < nv; k++) {
        char vb[64];
        tu_fmt_vertex(vb, sizeof vb, v[k]);
        used += (size_t)snprintf(ptext + used, sizeof ptext - used, "%s%s", k ? "; " : "", vb);
    }
    ar r;
    ar_track(&r, ftext, 0, ptext, NULL, 1);
    if (r.st == SW_ESINGULAR) { /* the formula's value vanishes or blows up on the path */
        ar_clear(&r);
        return -1;
    }
    if (r.st != SW_OK) {
        print_error("%s: %s\n", what, r.err.msg);
        fail();
    }
    if ((int)r.a.njumps != nex) {
        print_error("%s: %zu jumps, expected %d (closed form, DLMF 4.2.3)\n  f = %s\n  path = %s\n",
                    what, r.a.njumps, nex, ftext, ptext);
        for (int i = 0; i < nex; i++)
            print_error("  expected z = %.17g%+.17gi node %d\n", creal(ex[i].z), cimag(ex[i].z),
                        ex[i].node);
        for (size_t k = 0; k < r.a.njumps; k++)
            print_error("  found z = %.17g%+.17gi\n", creal(r.a.jump[k].z), cimag(r.a.jump[k].z));
        fail();
    }
    for (int i = 0; i < nex; i++) {
        double dist;
        const sw_audit_jump *j = nearest_jump(&r.a, ex[i].z, &dist);
        if (!(dist <= LOC * r.a.scale)) {
            print_error("%s: crossing at %.17g%+.17gi (node %d) located at distance %.3g\n"
                        "  f = %s\n  path = %s\n", what, creal(ex[i].z), cimag(ex[i].z),
                        ex[i].node, dist, ftext, ptext);
            fail();
        }
        TU_CHECK_CLOSE(j->t, (double)ex[i].seg + ex[i].s, 1e-9, "t", "closed form");
        assert_true(j->ncause >= 1);
        assert_false(j->cause[0].carried);
        char txt[128];
        sw_expr_mv_text(txt, sizeof txt, sw_func_expr(r.f), j->cause[0].node);
        assert_string_equal(txt, nodes[ex[i].node]);
    }
    ar_clear(&r);
    return nex;
}

static void test_double_crossing_in_one_step(void **state)
{
    (void)state;
    /* z^2 - d crosses the negative axis and comes back (0.36 apart) inside
       one step of the tracker, with the operand within 9 degrees of the axis
       at the samples: found by refining where the operand is closer to the
       axis than it turns between samples (a case once missed) */
    const double complex v[] = {CMPLX(-3.6561587585787532, -0.31442907487049343),
                                CMPLX(-0.2518878765919732, -2.158486938392107),
                                CMPLX(-3.8542634151824506, 2.9733296860389959)};
    int n = check_case(CMPLX(1.1282081174405603, -1.671500532775684),
                       CMPLX(1.9883386339764066, -0.74257207917045065),
                       CMPLX(-1.7444022111110407, 0.21552691872738672),
                       CMPLX(2.7994035174104255, 2.1935661141348088), v, 3, "double crossing");
    assert_int_equal(n, 8);
}

static void test_property_random_polylines(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 20260611);
    int cases = 0, total = 0;
    for (int icase = 0; cases < 60 && icase < 2000; icase++) {
        double complex a = CMPLX(tu_range(&rng, -2, 2), tu_range(&rng, -2, 2));
        double complex b = CMPLX(tu_range(&rng, -2, 2), tu_range(&rng, -2, 2));
        double complex c = CMPLX(tu_range(&rng, -2, 2), tu_range(&rng, -2, 2));
        double complex d = CMPLX(tu_range(&rng, -3, 3), tu_range(&rng, -3, 3));
        size_t nv = (size_t)tu_int(&rng, 2, 5);
        double complex v[6];
        for (size_t k = 0; k < nv; k++)
            v[k] = CMPLX(tu_range(&rng, -4, 4), tu_range(&rng, -4, 4));
        char what[96];
        snprintf(what, sizeof what, "seed %llu (set SW_SEED to reproduce) case %d",
                 (unsigned long long)rng.seed, icase);
        int n = check_case(a, b, c, d, v, nv, what);
        if (n < 0)
            continue;
        cases++;
        total += n;
    }
    print_message("random polylines: %d cases, %d crossings located (seed %llu)\n", cases, total,
                  (unsigned long long)rng.seed);
    assert_true(cases >= 40);
    assert_true(total >= 40); /* the cases are not all trivial */
}

/* ------------------------------------------------------------ samples */

static sw_status parse_text(sw_samples *s, const char *text, sw_error *err)
{
    return sw_samples_parse(s, text, strlen(text), "t.csv", err);
}

static void expect_bad_csv(const char *text, size_t len, const char *needle)
{
    sw_samples s;
    sw_samples_init(&s);
    sw_error err;
    sw_error_clear(&err);
    sw_status st = sw_samples_parse(&s, text, len, "t.csv", &err);
    if (st != SW_EINPUT || strstr(err.msg, needle) == NULL) {
        print_error("CSV %.40s...: status %d, message '%s' (wanted '%s')\n", text, st, err.msg,
                    needle);
        fail();
    }
    assert_int_equal(s.n, 0);
    sw_samples_clear(&s);
}

static void test_csv_parsing(void **state)
{
    (void)state;
    sw_samples s;
    sw_samples_init(&s);
    sw_error err;
    const char *ok = "\xEF\xBB\xBFre_z,im_z,re_w,im_w\r\n"
                     "1, 2, 3, 4\r\n"
                     "\n"
                     "# a comment\n"
                     "-1e-3,0.5,-0,7";
    assert_int_equal(parse_text(&s, ok, &err), SW_OK);
    assert_int_equal(s.n, 2);
    assert_true(s.s[0].z == CMPLX(1, 2) && s.s[0].w == CMPLX(3, 4));
    assert_int_equal(s.s[0].line, 2);
    assert_int_equal(s.s[1].line, 5);
    assert_true(s.s[1].z == CMPLX(-1e-3, 0.5));
    sw_samples_clear(&s);

    expect_bad_csv("", 0, "empty");
    expect_bad_csv("re_z,im_z,re_w,im_w\n", 20, "no samples");
    expect_bad_csv("re_z,im_z,re_w,im_w\n1,2,3\n", 26, "line 2: 3 columns");
    expect_bad_csv("re_z,im_z,re_w,im_w\n1,2,3,4\n1,2,3,4,5\n", 38, "line 3: 5 columns");
    expect_bad_csv("re_z,im_z,re_w,im_w\n1,2,nan,4\n", 30, "line 2, column 3: not a finite");
    expect_bad_csv("re_z,im_z,re_w,im_w\n1,2,3,inf\n", 30, "line 2, column 4: not a finite");
    expect_bad_csv("re_z,im_z,re_w,im_w\n1,2x,3,4\n", 29, "line 2, column 2: not a number");
    expect_bad_csv("re_z,im_z,re_w,im_w\n1,,3,4\n", 27, "line 2, column 2: empty");
    expect_bad_csv("1,2,3,4\n", 8, "line 1: expected a header");
    expect_bad_csv("re_z,im_z\n1,2,3,4\n", 18, "line 1: the header has 2 columns");
    expect_bad_csv("re_z,im_z,re_w,im_w\n1,2\0,3,4\n", 28, "binary");
    expect_bad_csv("re_z,im_z,re_w,im_w\n1,2,3,4\x01\n", 29, "line 2: control character");
    /* files */
    assert_int_equal(sw_samples_read_file(&s, "/nonexistent/x.csv", &err), SW_EINPUT);
    assert_int_equal(sw_samples_read_file(&s, "/", &err), SW_EINPUT);
}

/* A CSV of N samples of VALUE(z) along the polyline V (NV vertices), with the
 * value at index k multiplied by FACTOR[k] (1 for none) and a relative noise
 * of size NOISE; written to a temporary file whose name goes to PATH. */
static void write_csv(char *path, const double complex *v, size_t nv, size_t n,
                      double complex (*value)(double complex), const double complex *factor,
                      double noise, tu_rng *rng)
{
    strcpy(path, "/tmp/sw_audit_csvXXXXXX");
    int fd = mkstemp(path);
    assert_true(fd >= 0);
    FILE *fp = fdopen(fd, "w");
    fprintf(fp, "re_z,im_z,re_w,im_w\n");
    size_t nseg = nv - 1;
    for (size_t i = 0; i < n; i++) {
        double t = (double)nseg * (double)i / (double)(n - 1);
        size_t k = (size_t)t;
        if (k >= nseg)
            k = nseg - 1;
        double s = t - (double)k;
        double complex z = v[k] + s * (v[k + 1] - v[k]);
        double complex w = value(z) * factor[i];
        w *= 1 + noise * CMPLX(tu_range(rng, -1, 1), tu_range(rng, -1, 1));
        fprintf(fp, "%.17g,%.17g,%.17g,%.17g\n", creal(z), cimag(z), creal(w), cimag(w));
    }
    fclose(fp);
}

/* The continued branch of sqrt(z^2-1) along the upper half-plane paths below:
 * -sqrt(z-1) sqrt(z+1), analytic off (-inf, 1] (GSL principal roots; the sign
 * matches the principal sqrt(z^2-1) at -2+0.5i, checked in the test). */
static double complex cont_sqrt(double complex z) { return -g_sqrt(z - 1) * g_sqrt(z + 1); }

static void test_samples_planted(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 777);
    const double complex v[] = {CMPLX(-2, 0.5), CMPLX(2, 0.5), CMPLX(2, 2), CMPLX(-2, 2)};
    const char *ptext = "-2+0.5i; 2+0.5i; 2+2i; -2+2i";
    /* the reference branch equals the principal value at the start */
    TU_CHECK_CLOSE(cont_sqrt(v[0]), g_sqrt(v[0] * v[0] - 1), 1e-14, "start sign",
                   "GSL gsl_complex_sqrt");
    enum { N = 61 };
    double complex factor[N];
    const int planted[] = {0, 7, 8, 23, 45, 60};
    for (int i = 0; i < N; i++)
        factor[i] = 1;
    for (size_t q = 0; q < sizeof planted / sizeof *planted; q++)
        factor[planted[q]] = -1;
    char file[64];
    write_csv(file, v, 4, N, cont_sqrt, factor, 1e-9, &rng);
    sw_samples s;
    sw_samples_init(&s);
    sw_error err;
    assert_int_equal(sw_samples_read_file(&s, file, &err), SW_OK);
    assert_int_equal(s.n, N);
    for (int curve = 0; curve < 2; curve++) {
        ar r;
        double complex start = cont_sqrt(v[0]);
        ar_track(&r, curve ? "w^2 - z^2 + 1" : "sqrt(z^2-1)", curve, ptext, &start, 0);
        assert_int_equal(r.st, SW_OK);
        sw_sample_report rep;
        sw_sample_report_init(&rep);
        sw_status st = sw_audit_samples(&rep, r.f, &r.p, &r.tr, &s, NULL, &err);
        if (st != SW_OK) {
            print_error("%s\n", err.msg);
            fail();
        }
        assert_int_equal(rep.n, N);
        assert_int_equal(rep.off_branch, sizeof planted / sizeof *planted);
        for (int i = 0; i < N; i++) {
            int want_off = factor[i] != 1;
            if (rep.c[i].on_branch == want_off) {
                print_error("%s: sample %d on_branch = %d, planted %d\n",
                            curve ? "curve" : "expression", i, rep.c[i].on_branch, want_off);
                fail();
            }
            if (!want_off)
                continue;
            assert_true(rep.c[i].matched);
            TU_CHECK_CLOSE(rep.c[i].sheet_value / rep.c[i].continued, -1, 1e-8,
                           "the other sheet", "planted sign flip");
            if (curve) {
                assert_true(rep.c[i].sheet != rep.c[i].continued_sheet);
                assert_true(rep.c[i].sheet >= 1 && rep.c[i].sheet <= 2);
                /* at the point, sheets are ordered by real part (then
                   imaginary part): the flipped value is the other one */
                double complex other = -rep.c[i].continued;
                int want_local = creal(other) < creal(rep.c[i].continued) ? 1 : 2;
                assert_int_equal(rep.c[i].local_sheet, want_local);
                assert_int_equal(rep.c[i].continued_local_sheet, 3 - want_local);
            } else {
                assert_true(labs(rep.c[i].branch[0] - rep.c[i].continued_branch[0]) % 2 == 1);
                char buf[512];
                sw_sample_explain(buf, sizeof buf, r.f, &rep, &rep.c[i]);
                assert_non_null(strstr(buf, "-1 times the continued value"));
                assert_non_null(strstr(buf, "the other sign of sqrt(z^2-1)"));
            }
        }
        sw_sample_report_clear(&rep);
        ar_clear(&r);
    }
    sw_samples_clear(&s);
    unlink(file);
}

static void test_samples_noisy(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 31337);
    /* values with a relative noise of 3e-5, thirty times the default
       tolerance: the tolerance is raised to ten times the median scatter and
       exactly the planted sign flips are found */
    const double complex v[] = {CMPLX(-2, 0.5), CMPLX(2, 0.5), CMPLX(2, 2), CMPLX(-2, 2)};
    enum { N = 200 };
    double complex factor[N];
    for (int i = 0; i < N; i++)
        factor[i] = (i % 37 == 5 || i == 100 || i == 101) ? -1 : 1;
    char file[64];
    write_csv(file, v, 4, N, cont_sqrt, factor, 3e-5, &rng);
    sw_samples s;
    sw_samples_init(&s);
    sw_error err;
    assert_int_equal(sw_samples_read_file(&s, file, &err), SW_OK);
    ar r;
    ar_track(&r, "sqrt(z^2-1)", 0, "-2+0.5i; 2+0.5i; 2+2i; -2+2i", NULL, 0);
    assert_int_equal(r.st, SW_OK);
    sw_sample_report rep;
    sw_sample_report_init(&rep);
    assert_int_equal(sw_audit_samples(&rep, r.f, &r.p, &r.tr, &s, NULL, &err), SW_OK);
    assert_true(rep.tolerance_raised);
    assert_true(rep.tolerance > 3e-5 && rep.tolerance < 1e-3);
    size_t planted = 0;
    for (int i = 0; i < N; i++) {
        planted += factor[i] != 1;
        if (rep.c[i].on_branch != (factor[i] == 1)) {
            print_error("noisy sample %d: on_branch %d, planted %d\n", i, rep.c[i].on_branch,
                        factor[i] != 1);
            fail();
        }
        assert_true(rep.c[i].matched);
    }
    assert_int_equal(rep.off_branch, planted);
    /* with the tolerance kept as given, the noise puts nearly every value on
       no sheet */
    sw_audit_opts o;
    sw_audit_opts_init(&o);
    o.adapt_tol = 0;
    sw_sample_report_clear(&rep);
    assert_int_equal(sw_audit_samples(&rep, r.f, &r.p, &r.tr, &s, &o, &err), SW_OK);
    assert_true(rep.off_branch > N / 2);
    sw_sample_report_clear(&rep);
    ar_clear(&r);
    sw_samples_clear(&s);
    unlink(file);
}

static double complex cube_root(double complex z) { return g_cbrt(z); }

static void test_samples_cube_roots(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 4242);
    /* z^(1/3) in the upper half-plane: the principal branch is analytic there
       and is the continued one (DLMF 4.2.26); planted factors e^(2 pi i/3)
       and e^(4 pi i/3) move a value to the other two sheets */
    const double complex v[] = {CMPLX(3, 0.2), CMPLX(-3, 0.4), CMPLX(-3, 3)};
    enum { N = 40 };
    double complex factor[N];
    double complex w1 = cexp(CMPLX(0, 2 * TU_PI / 3));
    for (int i = 0; i < N; i++)
        factor[i] = 1;
    factor[5] = w1;
    factor[6] = w1 * w1;
    factor[30] = w1;
    char file[64];
    write_csv(file, v, 3, N, cube_root, factor, 1e-8, &rng);
    sw_samples s;
    sw_samples_init(&s);
    sw_error err;
    assert_int_equal(sw_samples_read_file(&s, file, &err), SW_OK);
    ar r;
    ar_track(&r, "z^(1/3)", 0, "3+0.2i; -3+0.4i; -3+3i", NULL, 0);
    assert_int_equal(r.st, SW_OK);
    sw_sample_report rep;
    sw_sample_report_init(&rep);
    assert_int_equal(sw_audit_samples(&rep, r.f, &r.p, &r.tr, &s, NULL, &err), SW_OK);
    assert_int_equal(rep.off_branch, 3);
    for (int i = 0; i < N; i++) {
        assert_int_equal(rep.c[i].on_branch, factor[i] == 1);
        if (factor[i] == 1)
            continue;
        TU_CHECK_CLOSE(rep.c[i].sheet_value / rep.c[i].continued, factor[i], 1e-7,
                       "cube root sheet", "DLMF 4.2.26");
        long dk = rep.c[i].branch[0] - rep.c[i].continued_branch[0];
        assert_int_equal(((dk % 3) + 3) % 3, factor[i] == w1 ? 1 : 2);
    }
    /* a tolerance larger than the noise is still far below the sheet gap;
       a tolerance below the noise flags every sample */
    sw_audit_opts o;
    sw_audit_opts_init(&o);
    o.value_tol = 1e-10;
    o.adapt_tol = 0; /* as given, not raised to the scatter */
    sw_sample_report_clear(&rep);
    assert_int_equal(sw_audit_samples(&rep, r.f, &r.p, &r.tr, &s, &o, &err), SW_OK);
    assert_true(rep.off_branch > 30);
    sw_sample_report_clear(&rep);
    ar_clear(&r);
    sw_samples_clear(&s);
    unlink(file);
}

static void test_samples_off_path(void **state)
{
    (void)state;
    sw_samples s;
    sw_samples_init(&s);
    sw_error err;
    const char *text = "re_z,im_z,re_w,im_w\n1,1,1,0\n0.5,1.3,1,0\n";
    assert_int_equal(parse_text(&s, text, &err), SW_OK);
    ar r;
    ar_track(&r, "sqrt(z)", 0, "1+1i; -1+1i", NULL, 0);
    assert_int_equal(r.st, SW_OK);
    sw_sample_report rep;
    sw_sample_report_init(&rep);
    assert_int_equal(sw_audit_samples(&rep, r.f, &r.p, &r.tr, &s, NULL, &err), SW_EINPUT);
    assert_non_null(strstr(err.msg, "line 3"));
    assert_non_null(strstr(err.msg, "away from the path"));
    ar_clear(&r);
    sw_samples_clear(&s);
    /* samples on a closed path that passes the base twice: in path order the
       last one is at the end (after one turn: the other sign) */
    const char *loop = "re_z,im_z,re_w,im_w\n1,0,1,0\n-1,0,0,1\n1,0,-1,0\n";
    assert_int_equal(parse_text(&s, loop, &err), SW_OK);
    ar_track(&r, "sqrt(z)", 0, "circle 0 1 256", NULL, 0);
    assert_int_equal(r.st, SW_OK);
    assert_int_equal(sw_audit_samples(&rep, r.f, &r.p, &r.tr, &s, NULL, &err), SW_OK);
    /* the 256-gon passes -1 exactly (vertex 128) */
    TU_CHECK_CLOSE(rep.c[1].t, 128, 1e-9, "t of -1", "vertex 128 of the 256-gon");
    TU_CHECK_CLOSE(rep.c[2].t, 256, 1e-9, "t of the end", "the last vertex");
    assert_int_equal(rep.off_branch, 0); /* sqrt(z) after one turn is -1 at 1 */
    sw_sample_report_clear(&rep);
    ar_clear(&r);
    sw_samples_clear(&s);
}

static void test_input_checks(void **state)
{
    (void)state;
    ar r;
    ar_track(&r, "w^2 - z", 1, "1; 2", NULL, 0);
    assert_int_equal(r.st, SW_OK);
    sw_audit a;
    sw_audit_init(&a);
    sw_error err;
    assert_int_equal(sw_audit_formula(&a, r.f, &r.p, &r.tr, NULL, &err), SW_EUSAGE);
    assert_true(err.msg[0] != '\0');
    ar_clear(&r);
    /* a trace without its dense log */
    sw_func *f = NULL;
    sw_path p;
    sw_path_init(&p);
    assert_int_equal(sw_func_from_expr(&f, "sqrt(z)", NULL, &err), SW_OK);
    assert_int_equal(sw_path_parse(&p, "1; 2", "path", NULL, &err), SW_OK);
    sw_germ g;
    sw_germ_init(&g, f);
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.keep_log = 0;
    sw_trace tr;
    sw_trace_init(&tr);
    assert_int_equal(sw_track_start_germ(&g, f, &p, 0, NULL, &o, &err), SW_OK);
    assert_int_equal(sw_track_run(&tr, f, &g, &p, &o, &err), SW_OK);
    assert_int_equal(sw_audit_formula(&a, f, &p, &tr, NULL, &err), SW_EUSAGE);
    assert_non_null(strstr(err.msg, "dense log"));
    sw_trace_clear(&tr);
    sw_germ_clear(&g);
    sw_path_clear(&p);
    sw_func_free(f);
    sw_audit_clear(&a);
    sw_audit_clear(NULL);
    sw_samples_clear(NULL);
    sw_sample_report_clear(NULL);
}

int main(void)
{
    sw_error err;
    if (sw_init(&err) != SW_OK)
        return 1;
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_log_of_product),
        cmocka_unit_test(test_sqrt_product_identity),
        cmocka_unit_test(test_cancelling_nodes),
        cmocka_unit_test(test_nested),
        cmocka_unit_test(test_bank_paths),
        cmocka_unit_test(test_on_the_cut),
        cmocka_unit_test(test_repeated_vertices),
        cmocka_unit_test(test_principal_pole),
        cmocka_unit_test(test_double_crossing_in_one_step),
        cmocka_unit_test(test_property_random_polylines),
        cmocka_unit_test(test_csv_parsing),
        cmocka_unit_test(test_samples_planted),
        cmocka_unit_test(test_samples_noisy),
        cmocka_unit_test(test_samples_cube_roots),
        cmocka_unit_test(test_samples_off_path),
        cmocka_unit_test(test_input_checks),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
