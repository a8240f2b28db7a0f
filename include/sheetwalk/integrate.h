/* sheetwalk — integrals of the tracked branch along a path.
 *
 * The integral of f(z) dz (expressions) or R(z, w) dz (any function: w is the
 * tracked value, R a single-valued expression in z and w, default R = w)
 * along a polyline, on the branch fixed at one vertex and continued along the
 * path by the tracker.  Quadrature points are evaluated from the tracker's
 * dense log, so the branch is never re-chosen.
 *
 * Methods:
 *   - smooth pieces: adaptive Gauss-Kronrod (GSL QAG, 21-point rule) on the
 *     real and imaginary parts, sharing every integrand value (R. Piessens
 *     et al., QUADPACK, Springer 1983);
 *   - an end of the path at a branch point, a pole or an operand zero (a
 *     "singular end"): the local behaviour of F(x) = R dz/dx in the distance
 *     x from the end is detected automatically, by continuation around
 *     circles |x| = r on a ladder of radii (X/16 ... X/65536): after q turns
 *     F is multiplied by exp(2 pi i q alpha) at every radius exactly when
 *     F = x^alpha H(x^(1/q)) with H single-valued near the end, which gives
 *     alpha modulo 1/q to rounding; its integer part comes from the decay of
 *     |F| along the ladder (Aitken's delta-squared).  Loops that disagree at
 *     larger radii reveal another singular point nearby and bound the zone.
 *     Such ends are integrated by Gauss-Jacobi rules (GSL
 *     gsl_integration_fixed) in s = x^(1/q) with the weight
 *     s^(q(alpha+1)-1), so that only the analytic H is sampled, of orders
 *     4, 8, ..., 64 until the geometric error estimate is met (the zone
 *     shrinks towards the end when it is not).  Each value H = F / x^alpha
 *     uses the local coordinate of the point where the germ actually is, so
 *     rounding of z0 + x dir next to an end z0 != 0 does not spoil it;
 *     For expressions whose roots, powers and logs take operands built from
 *     z alone (+ - * /, integer powers, exp, trigonometric and hyperbolic
 *     functions), the turns are read from the orders of the operands' zeros
 *     and poles at the end (truncated Laurent series) instead of loops, and
 *     inside the disc where every operand keeps its leading behaviour the
 *     branch follows in closed form from one tracked germ;
 *   - logarithmic ends of expressions, F = x^alpha P(log x) with P of degree
 *     <= 3 (coefficients analytic): recognised by shifting the logarithms of
 *     the operands by whole turns; degree 1 with real alpha is integrated by
 *     Gauss-Jacobi for x^alpha with product-integration weights for
 *     x^alpha log x at the same nodes (modified moments in closed form;
 *     P. J. Davis, P. Rabinowitz, Methods of Numerical Integration, 1984;
 *     W. Gautschi, Orthogonal Polynomials, OUP 2004), orders 4, 8, 16, ...;
 *     otherwise (or when that does not converge) by Gauss-Laguerre in
 *     u = (alpha + 1) log(X/x), where F x^-alpha is a polynomial in u plus
 *     decaying terms (GSL QAWS, weights x^alpha and x^alpha log x, as a
 *     fallback for degree 1);
 *   - anything else falls back to the double-exponential (tanh-sinh) rule of
 *     H. Takahasi, M. Mori, Publ. RIMS 9 (1974) 721-741, with the innermost
 *     tail taken from the local power law and its uncertainty in abserr.  An
 *     end with Re alpha <= -1 (or growing faster than any power) is not
 *     integrable and is refused (SW_EINPUT);
 *   - 'inf' ends: the ray z = z_e + u d, u in [0, inf), is mapped to
 *     s = L/(u + L) in (0, 1] and the point at infinity is treated as a
 *     singular end in s; the integrand must decay faster than 1/|z|
 *     (f ~ z^beta with Re beta < -1), otherwise the ray is refused;
 *   - a closed path made by the path directive "circle C R N" (N >= 16) is
 *     integrated on the circle itself: by the trapezoidal rule, which
 *     converges geometrically for periodic analytic integrands
 *     (L. N. Trefethen, J. A. C. Weideman, SIAM Review 56 (2014) 385-458),
 *     when the integrand returns to its start value after the turn, else by
 *     QAG in the angle.  The circle is used only when continuation along it
 *     ends on the same branch as along the polygon;
 *   - curves: the tracked root is polished by one Newton step from the exact
 *     coefficients in long double before R is evaluated.
 *
 * Branch conventions.  The branch is fixed at vertex VERTEX (0-based, finite
 * vertices) to the sheet nearest *W (W NULL: the principal branch of every
 * root, power and log of an expression, sheet 1 of a curve).  When that
 * vertex is a singular end (a branch point has no value), the branch is fixed
 * at the point of the adjacent segment at distance SW_INTEGRATE_INSET times
 * the path scale from the vertex — in practice the limit along the segment.
 * When W is NULL and VERTEX is a singular point inside the path (a path from
 * 'inf' through a marked branch point), the nearest regular vertex is used.
 * A path through a singular point at an interior vertex is continued past it
 * on the side given by the vertex's bank mark (x+i0: a small half-circle
 * above, x-i0: below) and refused without a mark.
 *
 * Results are numerical, not proofs: "certified" is always 0.  abserr is an
 * estimate from the quadrature rules (Kronrod extensions, differences of
 * rules of increasing order with their geometric decay), plus the rounding
 * of integrand values next to singular ends (a cancellation model and a
 * measured noise level), plus tail terms. */
#ifndef SHEETWALK_INTEGRATE_H
#define SHEETWALK_INTEGRATE_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/expr.h"
#include "sheetwalk/func.h"
#include "sheetwalk/path.h"
#include "sheetwalk/track.h"
#include "sheetwalk/cuts.h"
#include "sheetwalk/monodromy.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Distance (relative to the path scale) of the point where the branch is
 * fixed and tracking starts next to a singular end. */
#define SW_INTEGRATE_INSET 1e-12

typedef struct sw_integrate_opts {
    sw_track_opts track;  /* continuation options (keep_log is forced on) */
    double epsabs;        /* absolute tolerance (default 0) */
    double epsrel;        /* relative tolerance the result must meet (default 1e-10) */
    double aim;           /* the rules aim at aim * tolerance, so that the reported
                             error stays below the tolerance (default 0.01) */
    size_t limit;         /* most subintervals of one adaptive piece (default 500) */
    int circle;           /* integrate "circle" paths on the circle (default 1) */
} sw_integrate_opts;

void sw_integrate_opts_init(sw_integrate_opts *o);

/* How an end of a piece was integrated. */
typedef enum sw_end_rule {
    SW_RULE_NONE = 0,       /* a regular end: no special treatment */
    SW_RULE_JACOBI,         /* Gauss-Jacobi in s = x^(1/q) */
    SW_RULE_QAWS,           /* algebraic-logarithmic weight (QAWS) */
    SW_RULE_LAGUERRE,       /* x = X exp(-u/(alpha+1)), Gauss-Laguerre in u (logs) */
    SW_RULE_TANH_SINH,      /* double-exponential rule with a modelled tail */
    SW_RULE_JACOBI_LOG      /* Gauss-Jacobi with product weights for x^alpha log x */
} sw_end_rule;

/* A singular end of the path (a finite point or infinity). */
typedef struct sw_integral_end {
    double complex z;       /* the point (0 at infinity) */
    int at_infinity;
    /* local behaviour of the integrand f(z) (dz included for finite ends):
       finite: f ~ (z - z0)^exponent; infinity: f ~ z^exponent */
    double complex exponent;
    int ramification;       /* q: the behaviour is a series in (z - z0)^(1/q)
                               (0 when not detected) */
    int logarithmic;        /* a log(z - z0) factor was found */
    int exact;              /* 1: exponent from continuation (exact to rounding);
                               0: a numerical estimate */
    sw_end_rule rule;
} sw_integral_end;

/* One piece of the path: a finite segment, a ray to or from infinity, or a
 * whole circle. */
typedef enum sw_piece_kind {
    SW_PIECE_SEGMENT = 1,
    SW_PIECE_RAY_OUT,       /* from `from` to infinity */
    SW_PIECE_RAY_IN,        /* from infinity to `to` */
    SW_PIECE_CIRCLE         /* the circle through the path's vertices */
} sw_piece_kind;

typedef struct sw_integral_piece {
    sw_piece_kind kind;
    double complex from, to;   /* ends (the finite ones); circle: centre and radius */
    double complex value;
    double abserr;
    size_t evaluations;
    const char *method;        /* static text, e.g. "gauss-kronrod" */
} sw_integral_piece;

/* The result.  Caller-held: sw_integral_init / sw_integral_clear. */
typedef struct sw_integral {
    double complex value;
    double abserr;            /* error estimate (not a bound) */
    double magnitude;         /* estimate of the integral of |R dz| along the path:
                                 the scale below which cancellation hides digits */
    size_t evaluations;       /* integrand evaluations, all pieces and analyses */
    size_t steps;             /* continuation steps (tracking and small loops) */
    int converged;            /* 1: abserr <= max(epsabs, epsrel |value|, or 1000
                                 eps magnitude when the value cancels) */
    int certified;            /* always 0: quadrature is numerical */
    size_t npieces;
    sw_integral_piece *piece;
    size_t nends;
    sw_integral_end *end;
    /* the tracked function at the two ends of the path (at the tracking
       start/end points; NaN at infinity): start_z/end_z are the points */
    double complex start_z, start_w, end_z, end_w;
    int closed;               /* the path is closed */
    /* curves: 1-based sheet labels (fiber order at the point) of the branch at
       the start and at the end of the path (0 for expressions) */
    int start_sheet, end_sheet;
} sw_integral;

void sw_integral_init(sw_integral *r);
void sw_integral_clear(sw_integral *r);

/* Parse an integrand R(z, w): a single-valued expression (no roots,
 * non-integer powers or logs; exp, trig, integer powers and division are
 * fine).  A multivalued integrand is refused with SW_EINPUT naming the node. */
sw_status sw_integrand_parse(sw_expr **out, const char *text, const sw_params *params,
                             sw_error *err);

/* The integral of R(z, w(z)) dz along PATH (INTEGRAND NULL: R = w).
 * VERTEX, W: where and how the branch is fixed (see above).  O NULL: the
 * defaults.  On success OUT holds the result; when the tolerance was not met
 * the result is still filled in and SW_ETOLERANCE is returned.  Errors:
 * SW_EINPUT (non-integrable end, slow decay at infinity, fewer than two
 * vertices), SW_ESINGULAR (the path meets a singular point at an unmarked
 * interior vertex or inside a segment), SW_EUSAGE (VERTEX is not a finite
 * vertex, or is a singular interior vertex), SW_EAMBIGUOUS (two sheets tie
 * for *W), SW_ENOMEM. */
sw_status sw_integrate_path(sw_integral *out, const sw_func *f, const sw_expr *integrand,
                            const sw_path *path, size_t vertex, const double complex *w,
                            const sw_integrate_opts *o, sw_error *err);

const char *sw_end_rule_name(sw_end_rule r);

/* A bank integral computed two ways. */
typedef struct sw_bank_integral {
    sw_integral direct;       /* int_A^B R(x, w(x +- i0)) dx by quadrature along the bank */
    int contour_applies;      /* 1: the contour method was used */
    char note[256];           /* how the contour value was obtained, or why not */
    double complex lambda;    /* jump of the integrand: other bank / this bank */
    double complex loop;      /* the counter-clockwise loop integral around [A, B] */
    double loop_abserr;
    double complex centre;    /* the loop: an ellipse centred here (the middle of [A, B]) */
    double radius;            /* ... with this semi-major axis (foci A and B) */
    double complex contour;   /* loop / (lambda - 1) (sign by the side, see below) */
    double contour_abserr;
    double agreement;         /* |direct - contour| / |direct| (NaN when not applied) */
    size_t evaluations;       /* both ways together */
} sw_bank_integral;

void sw_bank_integral_init(sw_bank_integral *r);
void sw_bank_integral_clear(sw_bank_integral *r);

/* The integral of R(x, w) dx over [A, B] on one bank of a cut (BANK = +1:
 * the side of increasing imaginary part, x + i0; -1: x - i0) of the regular
 * branch B on the plane minus the cuts CUTS, computed two independent ways:
 *  (a) directly, by sw_integrate_path along the bank (ends at branch points
 *      allowed), the branch fixed by B at the segment's middle;
 *  (b) by the contour method (methods.md section 4): when the integrand
 *      jumps by a constant factor lambda across [A, B] (checked at three
 *      points) and a circle around [A, B] meets no cut and no other singular
 *      point of PTS (the finite points of sw_points_compute; NULL: computed
 *      here), the counter-clockwise loop on that circle equals
 *      (lambda - 1) times the bank integral (the bank on the left of A -> B;
 *      (1 - lambda) when on the right), so the bank integral is the loop
 *      divided by that factor.  The loop is computed numerically on an
 *      ellipse with foci A and B that leaves out every point of PTS and every
 *      zero of a denominator of the expression (sw_expr_pole_candidates), and
 *      is cross-checked on a confocal ellipse half as thick (they must agree,
 *      else the ellipses shrink); the agreement of (a) and (b) is the final
 *      check.  lambda = 1 (no jump), a non-constant jump, a
 *      cut running on beyond [A, B] or a loop that does not return to its
 *      branch: the contour method does not apply, and NOTE says why.
 * [A, B] must not be vertical (the bank is chosen by +-i0).  Errors as for
 * sw_integrate_path; SW_ETOLERANCE when the direct value misses the
 * tolerance (the result is filled in). */
sw_status sw_integrate_bank(sw_bank_integral *out, const sw_func *f, const sw_expr *integrand,
                            const sw_cuts *cuts, const sw_branch *b, const sw_points *pts,
                            double complex A, double complex B, int bank,
                            const sw_integrate_opts *o, sw_error *err);

#ifdef __cplusplus
}
#endif
#endif
