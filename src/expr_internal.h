/* Private: the expression program (flat postfix node array).  Not installed.
 *
 * Nodes are stored children-first, so evaluating nodes[0..n-1] in order
 * evaluates the whole expression; the last node is the root.  Subtrees that
 * use neither z nor w are folded into N_CONST at parse time. */
#ifndef SW_EXPR_INTERNAL_H
#define SW_EXPR_INTERNAL_H

#include "sheetwalk/expr.h"

typedef enum sw_node_kind {
    N_CONST, N_Z, N_W,
    N_ADD, N_SUB, N_MUL, N_DIV, N_NEG,
    N_POWI,   /* a^k, k integer (exact, single-valued) */
    N_POW,    /* multivalued power a^c, c constant non-integer: exp(c L) */
    N_POWG,   /* a^b with b depending on z/w: exp(b L) */
    N_LOG,    /* multivalued log: L */
    N_EXP, N_SIN, N_COS, N_TAN, N_SINH, N_COSH, N_TANH
} sw_node_kind;

typedef struct sw_node {
    sw_node_kind kind;
    int a, b;             /* child node indices (-1 if none) */
    int mv;               /* multivalued node index, or -1 */
    long k;               /* N_POWI exponent; root degree for display */
    double complex c;     /* N_CONST value; N_POW exponent */
    int col0, col1;       /* source span [col0, col1) (0-based bytes) */
    int fn;               /* original spelling: 0 '^', 1 sqrt, 2 cbrt, 3 root */
} sw_node;

struct sw_expr {
    char *text;
    sw_node *node;
    size_t n, alloc;
    size_t nmv;
    int *mv_node;         /* node index of each multivalued node */
    char *need;           /* need[k]: node k feeds some multivalued operand */
    int uses_z, uses_w;
};

/* Continued evaluation used by the expression engine.  STATE has 2*nmv slots:
 * u_k at s[2k], L_k at s[2k+1].  Evaluates at z (and w) computing each
 * multivalued operand u' and L' = L + Log(u'/u); returns -1 on success, or
 * the index k of the first multivalued node whose ratio test |u'/u - 1| <= rho
 * fails (rho < 0 disables the test), or -2 - k when the operand of node k is
 * zero or not finite.  NEW_STATE may equal OLD_STATE.  VALS is scratch of n
 * slots; *VALUE receives the root's value — VALUE NULL skips every node that
 * no multivalued operand depends on (the fast path of the tracker). */
int sw_expr_eval_step(double complex *value, double complex *new_state,
                      const sw_expr *e, double complex z, double complex w,
                      const double complex *old_state, double rho, double complex *vals);
/* The principal state at z: L_k = Log(u_k) for every node in order.
 * Returns -1 or -2 - k as above. */
int sw_expr_principal_state(double complex *value, double complex *state, const sw_expr *e,
                            double complex z, double complex w, double complex *vals);
/* As sw_expr_principal_state with node k on the branch Log(u_k) + 2 pi i shift[k]
 * (SHIFT NULL: all zero). */
int sw_expr_shifted_state(double complex *value, double complex *state, const sw_expr *e,
                          double complex z, double complex w, const long *shift,
                          double complex *vals);
/* The operand of multivalued node K at z, with inner nodes on their principal
 * branches (the modulus is branch independent, which is what callers use:
 * zero, finite, or not). */
double complex sw_expr_mv_operand(const sw_expr *e, size_t k, double complex z, double complex w);
/* Value from a given state at z (no ratio test, state not updated). */
double complex sw_expr_eval_state(const sw_expr *e, double complex z, double complex w,
                                  const double complex *state, double complex *vals);

#endif
