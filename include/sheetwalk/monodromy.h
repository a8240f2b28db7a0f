/* sheetwalk — branch points and local monodromy.
 *
 * Candidates (zeros and poles of multivalued operands for expressions;
 * discriminant and leading-coefficient roots for curves) are located, then
 * each is classified by continuation around a small circle that meets no other
 * candidate: a candidate with trivial monodromy is not a branch point.
 * Conventions: loops are counter-clockwise; the monodromy at infinity is that
 * of a loop encircling infinity positively, i.e. a large *clockwise* circle in
 * the z-plane, so that the product of all local monodromies is the identity. */
#ifndef SHEETWALK_MONODROMY_H
#define SHEETWALK_MONODROMY_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/func.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum sw_point_kind {
    SW_POINT_BRANCH = 1,   /* non-trivial local monodromy */
    SW_POINT_REGULAR = 2,  /* a candidate with trivial monodromy (e.g. sqrt(z^2) at 0, a node) */
    SW_POINT_POLE = 3      /* curves: a pole of some sheet without branching */
} sw_point_kind;

typedef struct sw_point {
    double complex z;         /* location (midpoint of the enclosure) */
    double radius;            /* radius of a disk certified to contain the point (Arb), or 0 */
    int at_infinity;          /* the point at infinity */
    sw_point_kind kind;
    /* expressions: effect of one turn on the principal branch (at the loop's
       start point): ratio end/start and difference end-start; is_multiplier
       when the ratio does not depend on the point (a pure factor), is_shift
       when the difference does not (logarithms) */
    int is_multiplier, is_shift;
    double complex ratio, difference;
    /* expressions: how many turns each multivalued operand made (nmv) */
    long *node_turns;
    size_t nmv;
    /* curves: local permutation, 0-based: sheet i goes to perm[i] (n entries) */
    int *perm;
    size_t n;
    int certified;            /* 1 when the loop was tracked in certified mode */
    /* expressions with nested roots: not branched for the principal branch, but
       an operand vanishes (or has a pole) there on another branch of the inner
       roots, where the function does branch */
    int other_sheets;
} sw_point;

typedef struct sw_points {
    size_t n;
    sw_point *pt;             /* finite candidates, sorted by (re, im) */
    sw_point infinity;        /* the point at infinity */
    int complete;             /* 0 when some candidates could not be enumerated */
    char incomplete[256];     /* why not, in plain words */
    /* curves: base point and base fiber the permutations refer to */
    size_t nsheets;
    double complex base;
    double complex *base_fiber;
    int product_ok;           /* curves: product relation verified (1), failed (0) */
    /* expressions: f ~ c z^q at infinity; q estimated from |f| on a ray at
       radii growing by factors of 2 (numerical; inf_exponent_ok when three
       successive estimates agree to 1e-7) */
    double inf_exponent;
    int inf_exponent_ok;
} sw_points;

typedef struct sw_points_opts {
    int certify;              /* track the small loops in certified mode */
    double radius_fraction;   /* loop radius as a fraction of the distance to the
                                 nearest other candidate (default 1/3) */
} sw_points_opts;

void sw_points_opts_init(sw_points_opts *o);
void sw_points_init(sw_points *p);
void sw_points_clear(sw_points *p);

/* Find and classify the branch points of F. */
sw_status sw_points_compute(sw_points *out, const sw_func *f, const sw_points_opts *o,
                            sw_error *err);

/* Expressions: points where a single-valued part may have a pole — the zeros
 * of every denominator (division, negative integer power) on every branch of
 * the roots it contains.  *OUT (malloc'd, caller frees) gets the points.
 * SW_EUNSUPPORTED (with the points found so far) when some denominator is not
 * algebraic in z.  Curves: none (their poles are listed by sw_points_compute). */
sw_status sw_expr_pole_candidates(double complex **out, size_t *n, const sw_func *f,
                                  sw_error *err);

/* Curves: the permutation a path induced on the fiber.  START and END are
 * germs over the same point (END = START continued along a closed path);
 * PERM[i] (0-based) is the sheet of START on which the continuation of sheet
 * i of START ends.  SW_EAMBIGUOUS when the matching is not clear-cut. */
sw_status sw_fiber_permutation(int *perm, const sw_func *f, const sw_germ *start,
                               const sw_germ *end, sw_error *err);

#ifdef __cplusplus
}
#endif
#endif
