/* Private: the curve engine (algebraic functions w(z) with P(z, w) = 0).
 * Not installed.
 *
 * A curve is kept three ways:
 *   - exactly, as two rational polynomials in (z, w) (real and imaginary parts
 *     of the coefficients) in FLINT: a coefficient the user wrote as an
 *     integer, fraction or decimal ("0.1" = 1/10) is that rational; one that
 *     came from pi, e, a function value or a --set parameter is the double the
 *     parser produced, taken exactly as the dyadic rational it is;
 *   - in double precision, for the fast predictor-corrector and root finder;
 *   - as Arb balls enclosing the exact coefficients, for certified steps. */
#ifndef SW_CURVE_INTERNAL_H
#define SW_CURVE_INTERNAL_H

/* FLINT's headers use `I` as a parameter name: include them before
 * <complex.h> defines it as a macro. */
#include <flint/fmpq_mpoly.h>
#include <flint/fmpz_poly.h>
#include <acb.h>
#include <complex.h>
#include "sheetwalk/error.h"
#include "sheetwalk/expr.h"
#include "sheetwalk/func.h"
#include "sheetwalk/monodromy.h"

/* Supported degrees: up to SW_CURVE_MAX_DEGREE in z and in w.  The limit keeps
 * the discriminant (degree <= (2n-2) m in z) within what exact elimination
 * and root isolation handle in seconds on one core. */
#define SW_CURVE_MAX_DEGREE 40

typedef struct sw_curve {
    long n;                 /* degree in w (number of sheets), >= 1 */
    long m;                 /* degree in z */
    double complex *c;      /* c[j*(m+1)+k]: coefficient of z^k w^j (double) */
    double *cabs;           /* |c[...]|, for rounding-error scales */
    double *cdev;           /* upper bounds of |exact coefficient - c[...]|
                               (0 when the double is exact), for the
                               double-precision certified test */
    acb_struct *ball;       /* the same coefficients as Arb balls (exact or
                               enclosing the exact rational), CURVE_BALL_PREC */
    int rational;           /* 1: every coefficient was written as an exact
                               rational (no i, pi, e, parameter, function) */
    int complex_coeffs;     /* 1: some coefficient has a non-zero imaginary part */
    fmpq_mpoly_ctx_t ctx;   /* variables (z, w) */
    fmpq_mpoly_t re, im;    /* exact coefficients (re + i im) */
    int content_removed;    /* 1: a common factor in z alone was divided out */
    char *text;             /* the input text */
} sw_curve;

/* Precision of the coefficient balls used by certified steps (bits; one
 * limb keeps the ball arithmetic on its fast path). */
#define CURVE_BALL_PREC 64

/* Parse TEXT into a curve (see sw_curve_func_new for the rules). */
sw_status sw_curve_build(sw_curve **out, const char *text, const sw_params *params,
                         sw_error *err);
void sw_curve_free(sw_curve *cv);

/* All n roots of P(z, .) in double precision (Aberth-Ehrlich, then Newton),
 * unordered.  SW_ESINGULAR when the leading coefficient vanishes at z or two
 * roots coincide to working accuracy; SW_ETOLERANCE when the iteration did not
 * converge. */
sw_status sw_curve_fiber(double complex *roots, const sw_curve *cv, double complex z,
                         sw_error *err);

/* Sort a fiber into the documented sheet order (see curve.c). */
void sw_curve_sort_fiber(double complex *w, size_t n);

/* One double-precision predictor-corrector step of the whole fiber from
 * (z0, w0[]) to z1; w1 receives the new fiber in the same order. */
sw_step_result sw_curve_step(double complex *w1, const sw_curve *cv, double complex z0,
                             const double complex *w0, double complex z1, double sep);

/* Prove the step (z0, w0[]) -> (z1, w1[]) with the Krawczyk operator
 * (curve_cert.c).  Returns SW_STEP_OK when proven, SW_STEP_TOO_FAR when the
 * roots move too far for the enclosure geometry, SW_STEP_UNPROVEN otherwise. */
sw_step_result sw_curve_certify_step(const sw_curve *cv, double complex z0,
                                     const double complex *w0, double complex z1,
                                     const double complex *w1);

/* Branch points, poles and local monodromy (curve_points.c). */
sw_status sw_curve_points(sw_points *out, const sw_func *f, const sw_points_opts *o,
                          sw_error *err);

/* Isolate all complex roots of a square-free integer polynomial with Arb:
 * double-precision Aberth-Ehrlich approximations refined and validated by
 * acb_poly_find_roots, precision raised from a start suited to the
 * coefficient size until every root is isolated (up to MAXPREC bits).
 * ROOTS must hold deg(p) entries.  Returns SW_OK or SW_ETOLERANCE. */
sw_status sw_poly_isolate_roots(acb_ptr roots, const fmpz_poly_t p, slong maxprec,
                                sw_error *err);

/* Minimal distance from w[i] to the other entries. */
double sw_fiber_sep(const double complex *w, size_t n, size_t i);

/* The curve behind a function built by sw_curve_func_new. */
const sw_curve *sw_curve_of(const sw_func *f);

#endif
