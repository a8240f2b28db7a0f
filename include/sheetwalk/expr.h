/* sheetwalk — expressions: parameters, parsing, constant and principal evaluation.
 *
 * Syntax (the command-line contract): numbers (2, -0.5, 1e-3), the imaginary
 * unit i (2i, 1+2i, i*pi), constants pi and e, the variable z (and w in
 * curves), named parameters given with sw_params; + - * / ^ with the usual
 * precedence, ^ right-associative, unary minus, parentheses; functions sqrt,
 * cbrt, root(x, n), log, exp, sin, cos, tan, sinh, cosh, tanh.  x^a with a
 * non-integer constant a is the multivalued power exp(a log x); x^y with y
 * depending on z is exp(y log x); integer powers are exact (single-valued).
 * sqrt, cbrt, root, non-integer powers and log are the *multivalued nodes*. */
#ifndef SHEETWALK_EXPR_H
#define SHEETWALK_EXPR_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Named parameters (--set NAME=VALUE).  Caller-held: sw_params_init/clear. */
typedef struct sw_params {
    size_t n, alloc;
    char **names;
    double complex *values;
} sw_params;

void sw_params_init(sw_params *p);
void sw_params_clear(sw_params *p);
/* Set (or overwrite) NAME.  Names are identifiers that are not reserved
 * (z, w, i, e, pi, inf, function names). */
sw_status sw_params_set(sw_params *p, const char *name, double complex value, sw_error *err);
/* Parse "NAME=VALUE" where VALUE is a constant expression (earlier
 * parameters may be used in it). */
sw_status sw_params_assign(sw_params *p, const char *assignment, sw_error *err);
/* Look up NAME; returns 1 and sets *value when found, else 0. */
int sw_params_get(double complex *value, const sw_params *p, const char *name);

/* Which variables an expression may use. */
enum {
    SW_EXPR_VAR_Z = 1u, /* allow z */
    SW_EXPR_VAR_W = 2u  /* allow w (curves, integrands) */
};

/* An expression parsed into an evaluation program.  Opaque. */
typedef struct sw_expr sw_expr;

/* Parse TEXT.  PARAMS may be NULL.  On a syntax error the message names the
 * problem and its 1-based column, e.g. "unexpected ')' (column 7)". */
sw_status sw_expr_parse(sw_expr **out, const char *text, const sw_params *params,
                        unsigned vars, sw_error *err);
void sw_expr_free(sw_expr *e);

const char *sw_expr_text(const sw_expr *e);
/* Number of multivalued nodes (roots, non-integer powers, logs). */
size_t sw_expr_mv_count(const sw_expr *e);
/* The source text of multivalued node K (e.g. "sqrt(1-z)"), NUL-terminated
 * into BUF of size N.  Returns BUF. */
char *sw_expr_mv_text(char *buf, size_t n, const sw_expr *e, size_t k);
/* 1 if the expression uses z / w. */
int sw_expr_uses_z(const sw_expr *e);
int sw_expr_uses_w(const sw_expr *e);

/* Principal evaluation: every multivalued node on its principal branch,
 * exactly as C's csqrt, clog and cpow compute it (cbrt(x) and root(x, n) are
 * cpow(x, 1.0/n)).  Returns NaN+NaN*i where the formula is undefined. */
double complex sw_expr_eval_principal(const sw_expr *e, double complex z, double complex w);

/* Bank marks: the side from which a point on a cut is approached. */
enum { SW_BANK_NONE = 0, SW_BANK_UPPER = 1, SW_BANK_LOWER = -1 };

/* Parse a constant (no z, no w), with an optional trailing bank mark
 * "+i0" / "-i0" when BANK is non-NULL (otherwise a bank mark is an error).
 * Rejects NaN and infinite results. */
sw_status sw_const_parse(double complex *value, int *bank, const char *text,
                         const sw_params *params, sw_error *err);

#ifdef __cplusplus
}
#endif
#endif
