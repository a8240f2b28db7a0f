/* sheetwalk — multivalued functions behind one engine interface.
 *
 * A function is either an expression in z (sw_func_from_expr) or an
 * algebraic function w(z) with P(z, w) = 0 (sw_func_from_curve).  A *germ* is
 * a point z with a branch state: for an expression, the operand value u and
 * the unwrapped logarithm L of every multivalued node (so u^a = exp(a L),
 * log u = L); for a curve, the ordered fiber of all n roots plus the index of
 * the selected sheet.  Everything above this interface (tracker, analyses,
 * commands) is written once for both engines. */
#ifndef SHEETWALK_FUNC_H
#define SHEETWALK_FUNC_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/expr.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum sw_func_kind { SW_FUNC_EXPR = 1, SW_FUNC_CURVE = 2 } sw_func_kind;

typedef struct sw_func sw_func;

/* Step acceptance options shared by every engine (the tracker passes them). */
typedef struct sw_step_opts {
    double rho;      /* expressions: accept a half-step only if |u1/u0 - 1| <= rho
                        for every multivalued operand (default 0.5: the ratio's
                        argument stays below pi/6, far from the principal cut) */
    double sep;      /* curves: a corrected root must lie within sep times the
                        fiber's minimal separation of its prediction (default 0.25) */
    int certify;     /* prove each step in ball arithmetic (default 0) */
} sw_step_opts;

void sw_step_opts_init(sw_step_opts *o);

/* A germ: caller-held, sw_germ_init(&g, f) / sw_germ_clear(&g). */
typedef struct sw_germ {
    double complex z;     /* the point */
    int bank;             /* SW_BANK_* when the germ was fixed on a bank */
    int sheet;            /* curves: selected sheet (0-based index into s) */
    size_t len;           /* number of complex slots in s */
    double complex *s;    /* the branch state (engine specific) */
} sw_germ;

sw_status sw_germ_init(sw_germ *g, const sw_func *f);
void sw_germ_clear(sw_germ *g);
/* dst must have been initialised for the same function. */
void sw_germ_copy(sw_germ *dst, const sw_germ *src);

/* Build functions.  PARAMS may be NULL.  Errors quote the input and column. */
sw_status sw_func_from_expr(sw_func **f, const char *text, const sw_params *params,
                            sw_error *err);
sw_status sw_func_from_curve(sw_func **f, const char *text, const sw_params *params,
                             sw_error *err);
void sw_func_free(sw_func *f);

sw_func_kind sw_func_kind_of(const sw_func *f);
const char *sw_func_text(const sw_func *f);
/* The underlying expression (expressions only; NULL for curves). */
const sw_expr *sw_func_expr(const sw_func *f);
/* Number of sheets over a generic point: n for curves, 0 (= infinitely many
 * or not counted) for expressions. */
size_t sw_func_degree(const sw_func *f);

/* A germ at z (bank marks honoured: the limit from that side).  HINT NULL:
 * the principal branch (expressions) or sheet 1 (curves); else the sheet
 * whose value is nearest *HINT.  SW_EAMBIGUOUS when two sheets tie. */
sw_status sw_func_germ_at(sw_germ *g, const sw_func *f, double complex z, int bank,
                          const double complex *hint, sw_error *err);

typedef enum sw_step_result {
    SW_STEP_OK = 0,       /* accepted (and proven, in certified mode) */
    SW_STEP_TOO_FAR,      /* not safe at this length: shorten the step */
    SW_STEP_UNPROVEN,     /* certified mode only: accepted numerically, not proven */
    SW_STEP_SINGULAR      /* an operand is zero/infinite or roots collide at z */
} sw_step_result;

/* Advance IN to the point Z (a straight step).  OUT is written only on
 * SW_STEP_OK / SW_STEP_UNPROVEN.  On SW_STEP_SINGULAR and SW_STEP_TOO_FAR,
 * *WHY (may be NULL) receives the index of the offending multivalued node
 * (expressions) or -1. */
sw_step_result sw_func_advance(sw_germ *out, const sw_germ *in, double complex z,
                               const sw_func *f, const sw_step_opts *o, int *why);

/* The value of the germ (the selected sheet for curves). */
double complex sw_func_value(const sw_func *f, const sw_germ *g);
/* Curves: all sheet values over the germ's point, in the germ's order.
 * Returns the number written (n), 0 for expressions. */
size_t sw_func_sheet_values(double complex *out, size_t max, const sw_func *f,
                            const sw_germ *g);
/* Expressions: the value of every multivalued node (in evaluation order,
 * inner nodes first) on the germ's branch.  Returns the number written. */
size_t sw_func_node_values(double complex *out, size_t max, const sw_func *f, const sw_germ *g);
/* Expressions: the branch index of every multivalued node,
 * k = (Im L - Arg u) / 2 pi (0 on the principal branch).  Returns the count. */
size_t sw_func_node_branches(long *out, size_t max, const sw_func *f, const sw_germ *g);

/* A short description of what makes WHY singular ("sqrt(1-z)"), into BUF. */
char *sw_func_describe(char *buf, size_t n, const sw_func *f, int why);

#ifdef __cplusplus
}
#endif
#endif
