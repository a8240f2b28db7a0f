/* The expression engine: germs of an expression in z carry, for every
 * multivalued node k, its operand u_k and the unwrapped logarithm L_k of that
 * operand (methods.md §1).  Steps are accepted by the ratio test on every
 * node at the step's midpoint and end; the certified variant evaluates the
 * program in Arb balls over a disk containing the step and proves that every
 * operand ball stays in the open half-plane around its previous value, so
 * that the continuous logarithm along the step is the one computed.
 * References: R. E. Moore, Interval Analysis (1966); the Arb documentation
 * (ball arithmetic, acb). */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <acb.h>

#include "expr_internal.h"
#include "func_internal.h"

static const double PI = 3.14159265358979323846;

/* Bank germs are computed at z + i*bank*BANK_OFFSET*max(1,|z|) and carried
 * back to z: the limit from that side, provided no operand zero lies closer. */
#define BANK_OFFSET 1e-8
/* Two candidate values count as a tie when their distances to the requested
 * value differ by less than this fraction of the distance scale. */
#define TIE_RELATIVE 1e-8
/* Sheet search by value: at most this many branch combinations. */
#define MAX_COMBOS 200000
/* Working precision of the certified step (bits). */
#define CERT_PREC 96

typedef struct expr_impl {
    sw_expr *e;
} expr_impl;

sw_status sw_expr_points(sw_points *out, const sw_func *f, const sw_points_opts *o,
                         sw_error *err); /* monodromy.c */

static void expr_destroy(void *impl)
{
    expr_impl *x = impl;
    if (x == NULL)
        return;
    sw_expr_free(x->e);
    free(x);
}

static size_t expr_state_len(const void *impl)
{
    const expr_impl *x = impl;
    return 2 * x->e->nmv;
}

static size_t expr_degree(const void *impl)
{
    (void)impl;
    return 0;
}

/* Scratch for node values: the stack for small programs. */
#define SCRATCH(e, stackbuf) \
    ((e)->n <= 128 ? (stackbuf) : malloc((e)->n * sizeof(double complex)))

static char *expr_describe(char *buf, size_t n, const void *impl, int why)
{
    const expr_impl *x = impl;
    if (why >= 0 && (size_t)why < x->e->nmv)
        return sw_expr_mv_text(buf, n, x->e, (size_t)why);
    snprintf(buf, n, "%s", x->e->text);
    return buf;
}

/* Number of distinct branches worth trying for node k: q for a rational
 * exponent p/q (q <= 64), else a window of 2*R+1 shifts around 0. */
static long branch_span(const sw_node *nd, long window)
{
    if (nd->kind == N_POW && cimag(nd->c) == 0) {
        double c = creal(nd->c);
        for (long q = 1; q <= 64; q++) {
            double p = c * (double)q;
            if (fabs(p - nearbyint(p)) < 1e-12 * q)
                return q;
        }
    }
    return 2 * window + 1;
}

static sw_status pick_by_value(sw_germ *g, const expr_impl *x, double complex z,
                               double complex want, double complex *vals, sw_error *err)
{
    const sw_expr *e = x->e;
    size_t m = e->nmv;
    if (m == 0)
        return SW_OK;
    long window = m == 1 ? 50 : m == 2 ? 10 : 3;
    long *span = calloc(m, sizeof *span), *cur = calloc(m, sizeof *cur),
         *best = calloc(m, sizeof *best), *sh = calloc(m, sizeof *sh);
    double complex *st = malloc(2 * m * sizeof *st);
    sw_status rc = SW_OK;
    if (!span || !cur || !best || !sh || !st) {
        rc = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    double combos = 1;
    for (size_t k = 0; k < m; k++) {
        span[k] = branch_span(&e->node[e->mv_node[k]], window);
        combos *= (double)span[k];
    }
    if (combos > MAX_COMBOS) {
        rc = sw_error_set(err, SW_EUNSUPPORTED,
                          "too many multivalued nodes (%zu) to choose a sheet by value; start on "
                          "the principal branch instead", m);
        goto cleanup;
    }
    double d1 = INFINITY, d2 = INFINITY;
    double complex v1 = 0;
    for (;;) {
        /* rational exponents p/q: shifts 0..q-1; otherwise a window around 0 */
        for (size_t k = 0; k < m; k++)
            sh[k] = span[k] == 2 * window + 1 ? cur[k] - window : cur[k];
        double complex v;
        if (sw_expr_shifted_state(&v, st, e, z, 0, sh, vals) == -1 && isfinite(creal(v)) &&
            isfinite(cimag(v))) {
            double d = cabs(v - want);
            int distinct = cabs(v - v1) > 1e-12 * (cabs(v) + 1e-300);
            if (d < d1) {
                if (distinct || d1 == INFINITY)
                    d2 = d1;
                d1 = d;
                v1 = v;
                memcpy(best, sh, m * sizeof *best);
            } else if (d < d2 && distinct) {
                d2 = d;
            }
        }
        size_t k = 0;
        while (k < m && ++cur[k] == span[k])
            cur[k++] = 0;
        if (k == m)
            break;
    }
    if (d1 == INFINITY) {
        rc = sw_error_set(err, SW_ESINGULAR, "the function is undefined at this point");
        goto cleanup;
    }
    if (d2 - d1 <= TIE_RELATIVE * (d1 + cabs(want) + cabs(v1))) {
        rc = sw_error_set(err, SW_EAMBIGUOUS,
                          "two sheets are equally close to the value %.10g%+.10gi: give a value "
                          "nearer to one of them", creal(want), cimag(want));
        goto cleanup;
    }
    double complex v;
    sw_expr_shifted_state(&v, g->s, e, z, 0, best, vals);
cleanup:
    free(span);
    free(cur);
    free(best);
    free(sh);
    free(st);
    return rc;
}

static sw_step_result expr_advance(sw_germ *out, const sw_germ *in, double complex z,
                                   const void *impl, const sw_step_opts *o, int *why);

static sw_status expr_germ_at(sw_germ *g, const void *impl, double complex z, int bank,
                              const double complex *hint, sw_error *err)
{
    const expr_impl *x = impl;
    const sw_expr *e = x->e;
    double complex stackbuf[128];
    double complex *vals = SCRATCH(e, stackbuf);
    sw_status rc = SW_OK;
    if (vals == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    double complex z0 = z;
    if (bank != SW_BANK_NONE)
        z0 = z + CMPLX(0.0, (double)bank * BANK_OFFSET * fmax(1.0, cabs(z)));
    double complex v;
    int r = sw_expr_principal_state(&v, g->s, e, z0, 0, vals);
    char what[200];
    if (r != -1) {
        rc = sw_error_set(err, SW_ESINGULAR,
                          "'%s' is zero or infinite at z = %.10g%+.10gi: a branch point, not a "
                          "place to start", expr_describe(what, sizeof what, impl, -2 - r),
                          creal(z0), cimag(z0));
        goto cleanup;
    }
    g->z = z0;
    g->sheet = 0;
    if (hint != NULL) {
        rc = pick_by_value(g, x, z0, *hint, vals, err);
        if (rc != SW_OK)
            goto cleanup;
    }
    if (bank != SW_BANK_NONE) {
        sw_step_opts so;
        sw_step_opts_init(&so);
        int w = -1;
        sw_step_result sr = expr_advance(g, g, z, impl, &so, &w);
        if (sr != SW_STEP_OK) {
            rc = sw_error_set(err, SW_ESINGULAR,
                              "cannot take the bank limit at z = %.10g%+.10gi: '%s' vanishes "
                              "there or next to it", creal(z), cimag(z),
                              expr_describe(what, sizeof what, impl, w));
            goto cleanup;
        }
    }
    g->bank = bank;
    v = sw_expr_eval_state(e, g->z, 0, g->s, vals);
    if (!isfinite(creal(v)) || !isfinite(cimag(v)))
        rc = sw_error_set(err, SW_ESINGULAR, "the function is not finite at z = %.10g%+.10gi",
                          creal(z), cimag(z));
cleanup:
    if (vals != stackbuf)
        free(vals);
    return rc;
}

/* ------------------------------------------------------ certified step */

static int cert_step(const sw_expr *e, const double complex *old_state, double complex z0,
                     double complex z1, const double complex *new_state)
{
    slong prec = CERT_PREC;
    acb_ptr v = _acb_vec_init((slong)e->n);
    acb_t Z, t, L;
    mag_t r;
    acb_init(Z);
    acb_init(t);
    acb_init(L);
    mag_init(r);
    int ok = 1;
    double complex mid = 0.5 * (z0 + z1);
    acb_set_d_d(Z, creal(mid), cimag(mid));
    mag_set_d(r, 0.5 * cabs(z1 - z0) * (1 + 1e-12) + 1e-300);
    acb_add_error_mag(Z, r);
    for (size_t k = 0; k < e->n && ok; k++) {
        const sw_node *nd = &e->node[k];
        acb_ptr a = nd->a >= 0 ? v + nd->a : NULL, b = nd->b >= 0 ? v + nd->b : NULL;
        switch (nd->kind) {
        case N_CONST: acb_set_d_d(v + k, creal(nd->c), cimag(nd->c)); break;
        case N_Z: acb_set(v + k, Z); break;
        case N_W: acb_zero(v + k); break;
        case N_ADD: acb_add(v + k, a, b, prec); break;
        case N_SUB: acb_sub(v + k, a, b, prec); break;
        case N_MUL: acb_mul(v + k, a, b, prec); break;
        case N_DIV: acb_div(v + k, a, b, prec); break;
        case N_NEG: acb_neg(v + k, a); break;
        case N_POWI: acb_pow_si(v + k, a, nd->k, prec); break;
        case N_EXP: acb_exp(v + k, a, prec); break;
        case N_SIN: acb_sin(v + k, a, prec); break;
        case N_COS: acb_cos(v + k, a, prec); break;
        case N_TAN: acb_tan(v + k, a, prec); break;
        case N_SINH: acb_sinh(v + k, a, prec); break;
        case N_COSH: acb_cosh(v + k, a, prec); break;
        case N_TANH: acb_tanh(v + k, a, prec); break;
        case N_POW: case N_POWG: case N_LOG: {
            int m = nd->mv;
            double complex u0 = old_state[2 * m];
            double complex L0 = old_state[2 * m + 1];
            /* U / u0 must lie in the open right half-plane for the whole step */
            acb_set_d_d(t, creal(u0), cimag(u0));
            acb_div(t, a, t, prec);
            if (!acb_is_finite(t) || !arb_is_positive(acb_realref(t))) {
                ok = 0;
                break;
            }
            acb_log(L, t, prec);
            acb_set_d_d(t, creal(L0), cimag(L0));
            acb_add(L, L, t, prec);
            /* The ball holds the continuous log of the operand over the whole
               step; what the double-precision update must get right is the
               branch integer of Im L at the end.  Proven when the ball's
               imaginary width is below pi and the double value lies within it
               (plus a rounding allowance far below pi). */
            double complex L1 = new_state[2 * m + 1];
            double lm = arf_get_d(arb_midref(acb_imagref(L)), ARF_RND_NEAR);
            double rad = mag_get_d(arb_radref(acb_imagref(L)));
            if (!(rad < 0.5 * PI) ||
                !(fabs(cimag(L1) - lm) <= rad + 1e-12 * (1 + fabs(lm)))) {
                ok = 0;
                break;
            }
            if (nd->kind == N_LOG) {
                acb_set(v + k, L);
            } else if (nd->kind == N_POW) {
                acb_set_d_d(t, creal(nd->c), cimag(nd->c));
                acb_mul(t, t, L, prec);
                acb_exp(v + k, t, prec);
            } else {
                acb_mul(t, b, L, prec);
                acb_exp(v + k, t, prec);
            }
            break;
        }
        }
    }
    acb_clear(Z);
    acb_clear(t);
    acb_clear(L);
    mag_clear(r);
    _acb_vec_clear(v, (slong)e->n);
    return ok;
}

static sw_step_result expr_advance(sw_germ *out, const sw_germ *in, double complex z,
                                   const void *impl, const sw_step_opts *o, int *why)
{
    const expr_impl *x = impl;
    const sw_expr *e = x->e;
    double complex stackbuf[128], st1[64], st2[64];
    double complex *vals = SCRATCH(e, stackbuf);
    size_t len = 2 * e->nmv;
    double complex *s1 = len <= 64 ? st1 : malloc(len * sizeof *s1);
    double complex *s2 = len <= 64 ? st2 : malloc(len * sizeof *s2);
    sw_step_result res = SW_STEP_OK;
    int w = -1;
    if (vals == NULL || s1 == NULL || s2 == NULL) {
        res = SW_STEP_TOO_FAR;
        goto cleanup;
    }
    double complex mid = 0.5 * (in->z + z), v = 0;
    /* the branch needs only the operands; the value is computed at the end
       only when the caller asked for certification (whose check uses it) */
    int r = sw_expr_eval_step(NULL, s1, e, mid, 0, in->s, o->rho, vals);
    if (r == -1)
        r = sw_expr_eval_step(NULL, s2, e, z, 0, s1, o->rho, vals);
    if (r >= 0) {
        res = SW_STEP_TOO_FAR;
        w = r;
        goto cleanup;
    }
    if (r <= -2) {
        res = SW_STEP_SINGULAR;
        w = -2 - r;
        goto cleanup;
    }
    (void)v;
    if (o->certify && !cert_step(e, in->s, in->z, z, s2))
        res = SW_STEP_UNPROVEN;
    memcpy(out->s, s2, len * sizeof *s2);
    out->z = z;
    out->bank = SW_BANK_NONE;
    out->sheet = 0;
cleanup:
    if (why)
        *why = w;
    if (vals != stackbuf)
        free(vals);
    if (s1 != st1)
        free(s1);
    if (s2 != st2)
        free(s2);
    return res;
}

static double complex expr_value(const void *impl, const sw_germ *g)
{
    const expr_impl *x = impl;
    double complex stackbuf[128];
    double complex *vals = SCRATCH(x->e, stackbuf);
    if (vals == NULL)
        return CMPLX(NAN, NAN);
    double complex v = sw_expr_eval_state(x->e, g->z, 0, g->s, vals);
    if (vals != stackbuf)
        free(vals);
    return v;
}

static const sw_engine expr_engine = {
    "expression",   expr_destroy, expr_state_len, expr_degree, expr_germ_at,
    expr_advance,   expr_value,   NULL,           expr_describe, sw_expr_points,
};

sw_status sw_func_from_expr(sw_func **f, const char *text, const sw_params *params,
                            sw_error *err)
{
    *f = NULL;
    sw_expr *e = NULL;
    sw_status st = sw_expr_parse(&e, text, params, SW_EXPR_VAR_Z, err);
    if (st != SW_OK)
        return st;
    expr_impl *x = calloc(1, sizeof *x);
    if (x == NULL) {
        sw_expr_free(e);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    x->e = e;
    return sw_func_wrap(f, SW_FUNC_EXPR, &expr_engine, x, text, err);
}

const sw_expr *sw_func_expr(const sw_func *f)
{
    if (f->kind != SW_FUNC_EXPR)
        return NULL;
    return ((const expr_impl *)f->impl)->e;
}

size_t sw_func_node_values(double complex *out, size_t max, const sw_func *f, const sw_germ *g)
{
    const sw_expr *e = sw_func_expr(f);
    if (e == NULL)
        return 0;
    size_t n = 0;
    double complex stackbuf[128];
    double complex *vals = SCRATCH(e, stackbuf);
    if (vals == NULL)
        return 0;
    sw_expr_eval_state(e, g->z, 0, g->s, vals);
    for (size_t m = 0; m < e->nmv && n < max; m++)
        out[n++] = vals[e->mv_node[m]];
    if (vals != stackbuf)
        free(vals);
    return n;
}

size_t sw_func_node_branches(long *out, size_t max, const sw_func *f, const sw_germ *g)
{
    const sw_expr *e = sw_func_expr(f);
    if (e == NULL)
        return 0;
    size_t n = 0;
    for (size_t m = 0; m < e->nmv && n < max; m++) {
        double complex u = g->s[2 * m];
        double arg = cimag(u) == 0 ? (creal(u) < 0 ? PI : 0.0) : carg(u); /* Arg in (-pi, pi] */
        out[n++] = lround((cimag(g->s[2 * m + 1]) - arg) / (2 * PI));
    }
    return n;
}
