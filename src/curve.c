/* The curve engine: algebraic functions w(z) defined by P(z, w) = 0.
 *
 * Input.  The curve text is parsed by the expression parser (z and w allowed)
 * and the postfix program is turned into a polynomial in (z, w) with exact
 * Gaussian-rational coefficients (FLINT fmpq_mpoly, real and imaginary part).
 * Constant sub-expressions are re-read from their source text so that
 * integers, fractions and decimals are exact ("0.1" is 1/10, "1+2i" is
 * 1 + 2i); a constant that involves pi, e, a function or a --set parameter is
 * the double the parser computed, taken exactly.  Anything that is not a
 * polynomial (roots, logs, non-integer or negative powers, division by a
 * non-constant) is refused with the sub-expression and its column.
 *
 * Reduction (documented choice): a factor depending on z alone that divides
 * every coefficient (e.g. z in z*(w^2 - z)) is divided out, since it does not
 * change w(z) away from finitely many points; a polynomial that is not
 * square-free in w (a repeated factor such as (w - z)^2) is refused with the
 * repeated factor named, because its repeated sheets cannot be told apart.
 * For coefficients with non-zero imaginary parts the square-free test is
 * numerical (two fibers at fixed generic points).
 *
 * The fiber over z: all n roots, by the Aberth-Ehrlich simultaneous iteration
 * in double precision (O. Aberth, Math. Comp. 27 (1973) 339-344) started from
 * the Newton-polygon radii (D. A. Bini, Numer. Algorithms 13 (1996) 179-200),
 * polished by Newton's method.
 *
 * Sheet order (the labels 1..n seen by users): increasing real part; values
 * whose real parts agree within 1e-10 times the largest |w| of the fiber are
 * ordered by increasing imaginary part.  The rule is applied where a fiber is
 * first computed (a germ's point, or a loop's base point); along a path the
 * labels travel with the continued roots.
 *
 * Tracking: predictor w' = -P_z/P_w (Euler), Newton corrector; a step is
 * accepted only when every corrected root lies within sep (default 1/4) of
 * the distance from its prediction to the nearest other prediction, and moved
 * less than half its distance to the nearest other root at the start (so the
 * roots cannot trade places unseen); see methods.md section 2. */
#include <assert.h>
#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "curve_internal.h"
#include "expr_internal.h"
/* GCC 12 misreads FLINT's one-element array parameter types (fmpq_mpoly_t)
 * passed from struct members as 8-byte regions (-Wstringop-overread false
 * positives on fmpq_mpoly_add, _pow_ui, _content_vars). */
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC diagnostic ignored "-Wstringop-overread"
#endif
#include "func_internal.h"

/* ------------------------------------------------------------------------ */
/* Exact constants: re-reading a constant's source text over Q(i).          */

typedef struct gq {
    fmpq_t re, im;
} gq;

static void gq_init(gq *a) { fmpq_init(a->re); fmpq_init(a->im); }
static void gq_clear(gq *a) { fmpq_clear(a->re); fmpq_clear(a->im); }

static void gq_mul(gq *r, const gq *a, const gq *b)
{
    fmpq_t t1, t2, t3;
    fmpq_init(t1); fmpq_init(t2); fmpq_init(t3);
    fmpq_mul(t1, a->re, b->re);
    fmpq_mul(t2, a->im, b->im);
    fmpq_sub(t3, t1, t2);
    fmpq_mul(t1, a->re, b->im);
    fmpq_mul(t2, a->im, b->re);
    fmpq_add(r->im, t1, t2);
    fmpq_swap(r->re, t3);
    fmpq_clear(t1); fmpq_clear(t2); fmpq_clear(t3);
}

/* r = 1/a; returns 0 when a == 0. */
static int gq_inv(gq *r, const gq *a)
{
    fmpq_t nrm, t;
    if (fmpq_is_zero(a->re) && fmpq_is_zero(a->im))
        return 0;
    fmpq_init(nrm); fmpq_init(t);
    fmpq_mul(nrm, a->re, a->re);
    fmpq_mul(t, a->im, a->im);
    fmpq_add(nrm, nrm, t);
    fmpq_div(r->re, a->re, nrm);
    fmpq_div(r->im, a->im, nrm);
    fmpq_neg(r->im, r->im);
    fmpq_clear(nrm); fmpq_clear(t);
    return 1;
}

typedef struct cparse {
    const char *s, *end;
    int ok;
} cparse;

static void cp_ws(cparse *p)
{
    while (p->s < p->end && (*p->s == ' ' || *p->s == '\t'))
        p->s++;
}

static void cp_expr(gq *r, cparse *p);

/* number := digits ['.' digits] [(e|E) [+-] digits], or '.' digits */
static int cp_number(gq *r, cparse *p)
{
    fmpz_t num, den, ten;
    long exp10 = 0;
    int any = 0;
    fmpz_init(num); fmpz_init_set_ui(den, 1); fmpz_init_set_ui(ten, 10);
    while (p->s < p->end && *p->s >= '0' && *p->s <= '9') {
        fmpz_mul_ui(num, num, 10);
        fmpz_add_ui(num, num, (ulong)(*p->s - '0'));
        p->s++; any = 1;
    }
    if (p->s < p->end && *p->s == '.') {
        p->s++;
        while (p->s < p->end && *p->s >= '0' && *p->s <= '9') {
            fmpz_mul_ui(num, num, 10);
            fmpz_add_ui(num, num, (ulong)(*p->s - '0'));
            fmpz_mul_ui(den, den, 10);
            p->s++; any = 1;
        }
    }
    if (any && p->s < p->end && (*p->s == 'e' || *p->s == 'E')) {
        const char *q = p->s + 1;
        int sign = 1, digits = 0;
        long ex = 0;
        if (q < p->end && (*q == '+' || *q == '-')) {
            sign = (*q == '-') ? -1 : 1;
            q++;
        }
        while (q < p->end && *q >= '0' && *q <= '9') {
            if (ex < 100000)
                ex = 10 * ex + (*q - '0');
            q++; digits = 1;
        }
        if (!digits || ex > 4000) {   /* "2e" is not ours to guess; huge exponents fall back */
            p->ok = 0;
        } else {
            exp10 = sign * ex;
            p->s = q;
        }
    }
    if (any && p->ok) {
        fmpz_t pw;
        fmpz_init(pw);
        fmpz_pow_ui(pw, ten, (ulong)labs(exp10));
        if (exp10 >= 0) fmpz_mul(num, num, pw); else fmpz_mul(den, den, pw);
        fmpz_clear(pw);
        fmpq_set_fmpz_frac(r->re, num, den);
        fmpq_zero(r->im);
    }
    fmpz_clear(num); fmpz_clear(den); fmpz_clear(ten);
    return any;
}

static void cp_atom(gq *r, cparse *p)
{
    cp_ws(p);
    if (!p->ok || p->s >= p->end) { p->ok = 0; return; }
    if (*p->s == '(') {
        p->s++;
        cp_expr(r, p);
        cp_ws(p);
        if (p->s < p->end && *p->s == ')') p->s++; else p->ok = 0;
        return;
    }
    if ((*p->s >= '0' && *p->s <= '9') || *p->s == '.') {
        if (!cp_number(r, p)) { p->ok = 0; return; }
        /* "2i": a number times the imaginary unit, unless an identifier follows */
        if (p->s < p->end && *p->s == 'i') {
            const char *q = p->s + 1;
            if (q < p->end && ((*q >= 'a' && *q <= 'z') || (*q >= 'A' && *q <= 'Z') ||
                               (*q >= '0' && *q <= '9') || *q == '_')) {
                p->ok = 0;
                return;
            }
            p->s = q;
            fmpq_swap(r->re, r->im);
        }
        return;
    }
    if (*p->s == 'i') {
        const char *q = p->s + 1;
        if (q < p->end && ((*q >= 'a' && *q <= 'z') || (*q >= 'A' && *q <= 'Z') ||
                           (*q >= '0' && *q <= '9') || *q == '_')) {
            p->ok = 0;
            return;
        }
        p->s = q;
        fmpq_zero(r->re);
        fmpq_one(r->im);
        return;
    }
    p->ok = 0;   /* identifiers (pi, e, parameters, functions): not exact */
}

static void cp_unary(gq *r, cparse *p);

/* power := atom ['^' unary], exponent an exact integer of modest size */
static void cp_power(gq *r, cparse *p)
{
    cp_atom(r, p);
    cp_ws(p);
    if (!p->ok || p->s >= p->end || *p->s != '^')
        return;
    p->s++;
    {
        gq ex, acc, base;
        long k;
        gq_init(&ex); gq_init(&acc); gq_init(&base);
        cp_unary(&ex, p);
        if (!p->ok || !fmpq_is_zero(ex.im) || !fmpz_is_one(fmpq_denref(ex.re)) ||
            fmpz_bits(fmpq_numref(ex.re)) > 10) {
            p->ok = 0;
        } else {
            k = fmpz_get_si(fmpq_numref(ex.re));
            fmpq_one(acc.re);
            fmpq_set(base.re, r->re); fmpq_set(base.im, r->im);
            if (k < 0 && !gq_inv(&base, &base)) {
                p->ok = 0;
            } else {
                long e = labs(k);
                while (e > 0) {
                    if (e & 1) gq_mul(&acc, &acc, &base);
                    e >>= 1;
                    if (e) gq_mul(&base, &base, &base);
                }
                fmpq_swap(r->re, acc.re); fmpq_swap(r->im, acc.im);
            }
        }
        gq_clear(&ex); gq_clear(&acc); gq_clear(&base);
    }
}

static void cp_unary(gq *r, cparse *p)
{
    cp_ws(p);
    if (p->ok && p->s < p->end && (*p->s == '-' || *p->s == '+')) {
        int neg = (*p->s == '-');
        p->s++;
        cp_unary(r, p);
        if (neg) { fmpq_neg(r->re, r->re); fmpq_neg(r->im, r->im); }
        return;
    }
    cp_power(r, p);
}

static void cp_term(gq *r, cparse *p)
{
    cp_unary(r, p);
    for (;;) {
        char op;
        gq b;
        cp_ws(p);
        if (!p->ok || p->s >= p->end || (*p->s != '*' && *p->s != '/'))
            return;
        op = *p->s++;
        gq_init(&b);
        cp_unary(&b, p);
        if (p->ok) {
            if (op == '/' && !gq_inv(&b, &b)) p->ok = 0;
            else gq_mul(r, r, &b);
        }
        gq_clear(&b);
    }
}

static void cp_expr(gq *r, cparse *p)
{
    cp_term(r, p);
    for (;;) {
        char op;
        gq b;
        cp_ws(p);
        if (!p->ok || p->s >= p->end || (*p->s != '+' && *p->s != '-'))
            return;
        op = *p->s++;
        gq_init(&b);
        cp_term(&b, p);
        if (p->ok) {
            if (op == '+') { fmpq_add(r->re, r->re, b.re); fmpq_add(r->im, r->im, b.im); }
            else { fmpq_sub(r->re, r->re, b.re); fmpq_sub(r->im, r->im, b.im); }
        }
        gq_clear(&b);
    }
}

/* Re-read the constant text [s, end) exactly; 1 on success.  The result is
 * trusted only if it agrees with the parser's double value V (a guard against
 * reading the text differently from the parser). */
static int exact_constant(gq *r, const char *s, const char *end, double complex v)
{
    cparse p;
    p.s = s; p.end = end; p.ok = 1;
    cp_expr(r, &p);
    cp_ws(&p);
    if (!p.ok || p.s != p.end)
        return 0;
    {
        double re = fmpq_get_d(r->re), im = fmpq_get_d(r->im);
        double scale = fmax(1.0, cabs(v));
        if (!(fabs(re - creal(v)) <= 1e-12 * scale && fabs(im - cimag(v)) <= 1e-12 * scale))
            return 0;
    }
    return 1;
}

/* The exact rational value of a double. */
static void fmpq_from_double(fmpq_t q, double x)
{
    arf_t a;
    arf_init(a);
    arf_set_d(a, x);
    arf_get_fmpq(q, a);
    arf_clear(a);
}

/* ------------------------------------------------------------------------ */
/* Polynomials with Gaussian-rational coefficients: (re, im) fmpq_mpoly.     */

typedef struct cpoly {
    fmpq_mpoly_t re, im;
    int live;
} cpoly;

static void cpoly_mul(cpoly *r, const cpoly *a, const cpoly *b, const fmpq_mpoly_ctx_t ctx)
{
    fmpq_mpoly_t t1, t2, nre;
    fmpq_mpoly_init(t1, ctx); fmpq_mpoly_init(t2, ctx); fmpq_mpoly_init(nre, ctx);
    fmpq_mpoly_mul(t1, a->re, b->re, ctx);
    if (!fmpq_mpoly_is_zero(a->im, ctx) && !fmpq_mpoly_is_zero(b->im, ctx)) {
        fmpq_mpoly_mul(t2, a->im, b->im, ctx);
        fmpq_mpoly_sub(nre, t1, t2, ctx);
    } else {
        fmpq_mpoly_swap(nre, t1, ctx);
    }
    fmpq_mpoly_mul(t1, a->re, b->im, ctx);
    fmpq_mpoly_mul(t2, a->im, b->re, ctx);
    fmpq_mpoly_add(r->im, t1, t2, ctx);
    fmpq_mpoly_swap(r->re, nre, ctx);
    fmpq_mpoly_clear(t1, ctx); fmpq_mpoly_clear(t2, ctx); fmpq_mpoly_clear(nre, ctx);
}

static void cpoly_addsub(cpoly *r, const cpoly *a, const cpoly *b, int sub,
                         const fmpq_mpoly_ctx_t ctx)
{
    if (sub) {
        fmpq_mpoly_sub(r->re, a->re, b->re, ctx);
        fmpq_mpoly_sub(r->im, a->im, b->im, ctx);
    } else {
        fmpq_mpoly_add(r->re, a->re, b->re, ctx);
        fmpq_mpoly_add(r->im, a->im, b->im, ctx);
    }
}

static slong cpoly_deg(const cpoly *a, slong var, const fmpq_mpoly_ctx_t ctx)
{
    slong d1 = fmpq_mpoly_degree_si(a->re, var, ctx);
    slong d2 = fmpq_mpoly_degree_si(a->im, var, ctx);
    return d1 > d2 ? d1 : d2;
}

static int cpoly_is_const(const cpoly *a, const fmpq_mpoly_ctx_t ctx)
{
    return fmpq_mpoly_is_fmpq(a->re, ctx) && fmpq_mpoly_is_fmpq(a->im, ctx);
}

/* Quote the source of node K into BUF. */
static const char *node_text(char *buf, size_t n, const sw_expr *e, int k)
{
    int c0 = e->node[k].col0, c1 = e->node[k].col1;
    int len = (int)strlen(e->text);
    if (c0 < 0) c0 = 0;
    if (c1 > len) c1 = len;
    if (c1 < c0) c1 = c0;
    if ((size_t)(c1 - c0) >= n) c1 = c0 + (int)n - 4;
    if (c1 - c0 <= 0 && n > 0) {
        buf[0] = '\0';
        return buf;
    }
    memcpy(buf, e->text + c0, (size_t)(c1 - c0));
    buf[c1 - c0] = '\0';
    if (c1 < e->node[k].col1 && n > 4)
        strcat(buf, "...");
    return buf;
}

static sw_status not_poly(sw_error *err, const sw_expr *e, int k, const char *why)
{
    char buf[160];
    return sw_error_set(err, SW_EPARSE, "not a polynomial in z and w%s: %s (column %d)",
                        why, node_text(buf, sizeof buf, e, k), e->node[k].col0 + 1);
}

/* Walk the postfix program into a polynomial.  *RATIONAL is cleared when a
 * constant could not be read exactly. */
static sw_status expr_to_poly(cpoly *out, int *rational, const sw_expr *e,
                              const fmpq_mpoly_ctx_t ctx, sw_error *err)
{
    sw_status st = SW_OK;
    cpoly *v = NULL;
    size_t i;
    char buf[160];

    if (e->n == 0)
        return sw_error_set(err, SW_EPARSE, "empty curve");
    v = calloc(e->n, sizeof *v);
    if (!v)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    for (i = 0; i < e->n; i++) {
        fmpq_mpoly_init(v[i].re, ctx);
        fmpq_mpoly_init(v[i].im, ctx);
        v[i].live = 1;
    }
    for (i = 0; i < e->n && st == SW_OK; i++) {
        const sw_node *nd = &e->node[i];
        cpoly *r = &v[i];
        /* children come first in the program; an index out of range is a
         * malformed program (checked where a child is used) */
        int ha = nd->a >= 0 && (size_t)nd->a < i, hb = nd->b >= 0 && (size_t)nd->b < i;
        const cpoly *a = &v[ha ? nd->a : 0];
        const cpoly *b = &v[hb ? nd->b : 0];
        switch (nd->kind) {
        case N_CONST: {
            gq q;
            if (!isfinite(creal(nd->c)) || !isfinite(cimag(nd->c))) {
                st = sw_error_set(err, SW_EINPUT, "coefficient is not finite: %s (column %d)",
                                  node_text(buf, sizeof buf, e, (int)i), nd->col0 + 1);
                break;
            }
            gq_init(&q);
            if (!(nd->col1 > nd->col0 &&
                  exact_constant(&q, e->text + nd->col0, e->text + nd->col1, nd->c))) {
                /* the parser's double, exactly */
                *rational = 0;
                fmpq_from_double(q.re, creal(nd->c));
                fmpq_from_double(q.im, cimag(nd->c));
            }
            fmpq_mpoly_set_fmpq(r->re, q.re, ctx);
            fmpq_mpoly_set_fmpq(r->im, q.im, ctx);
            gq_clear(&q);
            break;
        }
        case N_Z:
        case N_W:
            fmpq_mpoly_gen(r->re, nd->kind == N_Z ? 0 : 1, ctx);
            fmpq_mpoly_zero(r->im, ctx);
            break;
        case N_ADD:
        case N_SUB:
            if (!ha || !hb) { st = sw_error_set(err, SW_EINTERNAL, "malformed expression program"); break; }
            cpoly_addsub(r, a, b, nd->kind == N_SUB, ctx);
            break;
        case N_NEG:
            if (!ha) { st = sw_error_set(err, SW_EINTERNAL, "malformed expression program"); break; }
            fmpq_mpoly_neg(r->re, a->re, ctx);
            fmpq_mpoly_neg(r->im, a->im, ctx);
            break;
        case N_MUL:
            if (!ha || !hb) { st = sw_error_set(err, SW_EINTERNAL, "malformed expression program"); break; }
            if (cpoly_deg(a, 0, ctx) + cpoly_deg(b, 0, ctx) > SW_CURVE_MAX_DEGREE ||
                cpoly_deg(a, 1, ctx) + cpoly_deg(b, 1, ctx) > SW_CURVE_MAX_DEGREE) {
                st = sw_error_set(err, SW_EINPUT,
                                  "degree exceeds the supported maximum %d in z or in w: %s (column %d)",
                                  SW_CURVE_MAX_DEGREE, node_text(buf, sizeof buf, e, (int)i), nd->col0 + 1);
                break;
            }
            cpoly_mul(r, a, b, ctx);
            break;
        case N_DIV: {
            gq q, qi;
            if (!ha || !hb) { st = sw_error_set(err, SW_EINTERNAL, "malformed expression program"); break; }
            if (!cpoly_is_const(b, ctx)) {
                st = not_poly(err, e, (int)i, " (division by a non-constant)");
                break;
            }
            gq_init(&q); gq_init(&qi);
            fmpq_mpoly_get_fmpq(q.re, b->re, ctx);   /* zero polynomial gives 0 */
            fmpq_mpoly_get_fmpq(q.im, b->im, ctx);
            if (!gq_inv(&qi, &q)) {
                st = sw_error_set(err, SW_EINPUT, "division by zero: %s (column %d)",
                                  node_text(buf, sizeof buf, e, (int)i), nd->col0 + 1);
            } else {
                cpoly c;
                fmpq_mpoly_init(c.re, ctx); fmpq_mpoly_init(c.im, ctx);
                fmpq_mpoly_set_fmpq(c.re, qi.re, ctx);
                fmpq_mpoly_set_fmpq(c.im, qi.im, ctx);
                cpoly_mul(r, a, &c, ctx);
                fmpq_mpoly_clear(c.re, ctx); fmpq_mpoly_clear(c.im, ctx);
            }
            gq_clear(&q); gq_clear(&qi);
            break;
        }
        case N_POWI: {
            long k = nd->k;
            if (!ha) { st = sw_error_set(err, SW_EINTERNAL, "malformed expression program"); break; }
            if (k < 0) {
                if (cpoly_is_const(a, ctx)) {
                    /* constant^negative: the parser folds these; kept for safety */
                    st = not_poly(err, e, (int)i, " (negative power)");
                } else {
                    st = not_poly(err, e, (int)i, " (negative power)");
                }
                break;
            }
            if ((k > 0 && (cpoly_deg(a, 0, ctx) * k > SW_CURVE_MAX_DEGREE ||
                           cpoly_deg(a, 1, ctx) * k > SW_CURVE_MAX_DEGREE))) {
                st = sw_error_set(err, SW_EINPUT,
                                  "degree exceeds the supported maximum %d in z or in w: %s (column %d)",
                                  SW_CURVE_MAX_DEGREE, node_text(buf, sizeof buf, e, (int)i), nd->col0 + 1);
                break;
            }
            if (fmpq_mpoly_is_zero(a->im, ctx)) {
                fmpq_mpoly_pow_ui(r->re, a->re, (ulong)k, ctx);
                fmpq_mpoly_zero(r->im, ctx);
            } else {
                cpoly base, acc;
                long ee = k;
                fmpq_mpoly_init(base.re, ctx); fmpq_mpoly_init(base.im, ctx);
                fmpq_mpoly_init(acc.re, ctx); fmpq_mpoly_init(acc.im, ctx);
                fmpq_mpoly_set(base.re, a->re, ctx); fmpq_mpoly_set(base.im, a->im, ctx);
                fmpq_mpoly_one(acc.re, ctx);
                while (ee > 0) {
                    if (ee & 1) cpoly_mul(&acc, &acc, &base, ctx);
                    ee >>= 1;
                    if (ee) cpoly_mul(&base, &base, &base, ctx);
                }
                fmpq_mpoly_swap(r->re, acc.re, ctx); fmpq_mpoly_swap(r->im, acc.im, ctx);
                fmpq_mpoly_clear(base.re, ctx); fmpq_mpoly_clear(base.im, ctx);
                fmpq_mpoly_clear(acc.re, ctx); fmpq_mpoly_clear(acc.im, ctx);
            }
            break;
        }
        default:
            st = not_poly(err, e, (int)i, "");
            break;
        }
    }
    if (st == SW_OK) {
        fmpq_mpoly_swap(out->re, v[e->n - 1].re, ctx);
        fmpq_mpoly_swap(out->im, v[e->n - 1].im, ctx);
    }
    for (i = 0; i < e->n; i++) {
        fmpq_mpoly_clear(v[i].re, ctx);
        fmpq_mpoly_clear(v[i].im, ctx);
    }
    free(v);
    return st;
}

/* ------------------------------------------------------------------------ */
/* Double-precision polynomial helpers.                                      */

/* Coefficients A_j(z) (and A_j'(z) when DA != NULL) of P(z, w) = sum A_j w^j. */
static void coeffs_at(double complex *A, double complex *dA, const sw_curve *cv,
                      double complex z)
{
    long j, k, m = cv->m;
    for (j = 0; j <= cv->n; j++) {
        const double complex *c = cv->c + j * (m + 1);
        double complex s = c[m], d = 0;
        if (dA) {
            for (k = m - 1; k >= 0; k--) {
                d = d * z + s;
                s = s * z + c[k];
            }
            dA[j] = d;
        } else {
            for (k = m - 1; k >= 0; k--)
                s = s * z + c[k];
        }
        A[j] = s;
    }
}

/* sum_k |c_{n,k}| |z|^k: the scale of the leading coefficient at z. */
static double lead_scale(const sw_curve *cv, double complex z)
{
    long k, m = cv->m;
    const double *c = cv->cabs + cv->n * (m + 1);
    double az = cabs(z), s = c[m];
    for (k = m - 1; k >= 0; k--)
        s = s * az + c[k];
    return s;
}

double sw_fiber_sep(const double complex *w, size_t n, size_t i)
{
    double d = INFINITY;
    size_t j;
    for (j = 0; j < n; j++) {
        if (j != i) {
            double t = cabs(w[i] - w[j]);
            if (t < d) d = t;
        }
    }
    return d;
}

/* sep[i] = sw_fiber_sep(w, n, i) for every i, bit for bit, with each
 * distance computed once (|w_i - w_j| and |w_j - w_i| are the same double:
 * the differences are exact negatives and cabs is even in each part). */
static void fiber_seps(double *sep, const double complex *w, size_t n)
{
    size_t i, j;
    for (i = 0; i < n; i++)
        sep[i] = INFINITY;
    for (i = 0; i < n; i++)
        for (j = i + 1; j < n; j++) {
            double t = cabs(w[i] - w[j]);
            if (t < sep[i]) sep[i] = t;
            if (t < sep[j]) sep[j] = t;
        }
}

/* p(x) and p'(x) for p = sum a_k x^k, degree d. */
static void horner2(double complex *p, double complex *dp, const double complex *a, int d,
                    double complex x)
{
    double complex s = a[d], t = 0;
    int k;
    for (k = d - 1; k >= 0; k--) {
        t = t * x + s;
        s = s * x + a[k];
    }
    *p = s;
    *dp = t;
}

/* Newton correction p/p' computed without overflow: for |x| > 1 through the
 * reversed polynomial (p'/p = d/x - y^2 q'(y)/q(y) with y = 1/x). */
static double complex newton_ratio(const double complex *a, int d, double complex x, int *zero)
{
    double complex p, dp;
    *zero = 0;
    if (cabs(x) <= 1.0) {
        horner2(&p, &dp, a, d, x);
        if (p == 0) { *zero = 1; return 0; }
        return p / dp;
    } else {
        double complex y = 1.0 / x, q = a[0], dq = 0, ratio;
        int k;
        for (k = 1; k <= d; k++) {
            dq = dq * y + q;
            q = q * y + a[k];
        }
        if (q == 0) { *zero = 1; return 0; }
        /* p'/p = d*y - y^2 q'(y)/q(y) */
        ratio = d * y - y * y * dq / q;
        return 1.0 / ratio;
    }
}

/* Backward-error test: |p(x)| <= 16 eps sum |a_k| |x|^k (done through the
 * reversed polynomial for |x| > 1). */
static int root_converged(const double complex *a, const double *aa, int d, double complex x)
{
    double ax = cabs(x);
    double complex p = 0;
    double s = 0;
    int k;
    if (ax <= 1.0) {
        for (k = d; k >= 0; k--) {
            p = p * x + a[k];
            s = s * ax + aa[k];
        }
    } else {
        double complex y = 1.0 / x;
        double ay = 1.0 / ax;
        for (k = 0; k <= d; k++) {
            p = p * y + a[k];
            s = s * ay + aa[k];
        }
    }
    return cabs(p) <= 16 * DBL_EPSILON * s;
}

/* Initial approximations from the upper convex hull of (k, log|a_k|)
 * (Bini 1996): on each hull edge from i to j, j - i points on the circle of
 * radius (|a_i|/|a_j|)^(1/(j-i)), angles offset to avoid symmetry. */
static void aberth_init(double complex *x, const double complex *a, int d)
{
    int *hull = malloc((size_t)(d + 1) * sizeof *hull);
    double *lg = malloc((size_t)(d + 1) * sizeof *lg);
    int h = 0, k, e, cnt = 0;
    const double offset = 0.4;   /* radians; breaks symmetry with real coefficients */
    const double twopi = 6.283185307179586476925286766559;
    if (!hull || !lg) {   /* fall back to the unit circle */
        for (k = 0; k < d; k++)
            x[k] = cexp(CMPLX(0, twopi * k / d + offset));
        free(hull); free(lg);
        return;
    }
    for (k = 0; k <= d; k++)
        lg[k] = a[k] != 0 ? log(cabs(a[k])) : -INFINITY;
    for (k = 0; k <= d; k++) {
        if (lg[k] == -INFINITY)
            continue;
        while (h >= 2) {
            int i0 = hull[h - 2], i1 = hull[h - 1];
            /* drop i1 if it lies on or below the segment i0 -> k */
            double cross = (lg[i1] - lg[i0]) * (double)(k - i0) - (lg[k] - lg[i0]) * (double)(i1 - i0);
            if (cross <= 0) h--; else break;
        }
        hull[h++] = k;
    }
    for (e = 0; e + 1 < h; e++) {
        int i = hull[e], j = hull[e + 1], q = j - i;
        double r = exp((lg[i] - lg[j]) / q);
        for (k = 0; k < q && cnt < d; k++, cnt++)
            x[cnt] = r * cexp(CMPLX(0, twopi * k / q + offset + twopi * e / (2.0 * d)));
    }
    for (; cnt < d; cnt++)   /* zero low coefficients: roots at 0 */
        x[cnt] = 0;
    free(hull);
    free(lg);
}

/* Aberth-Ehrlich iteration for all roots of sum a_k x^k (a_d != 0).
 * Returns 0 when every root met the backward-error test, -1 otherwise. */
static int aberth(double complex *x, const double complex *a, int d, int maxit)
{
    double *aa = malloc((size_t)(d + 1) * sizeof *aa);
    unsigned char *done = calloc((size_t)d, 1);
    int it, k, j, left = d, rc = -1;
    if (!aa || !done) {
        free(aa); free(done);
        return -1;
    }
    for (k = 0; k <= d; k++)
        aa[k] = cabs(a[k]);
    aberth_init(x, a, d);
    for (it = 0; it < maxit && left > 0; it++) {
        for (k = 0; k < d; k++) {
            double complex ratio, sum = 0, corr;
            int zero;
            if (done[k])
                continue;
            if (root_converged(a, aa, d, x[k])) {
                done[k] = 1;
                left--;
                continue;
            }
            ratio = newton_ratio(a, d, x[k], &zero);
            if (zero) { done[k] = 1; left--; continue; }
            for (j = 0; j < d; j++)
                if (j != k && x[j] != x[k])
                    sum += 1.0 / (x[k] - x[j]);
            corr = ratio / (1.0 - ratio * sum);
            if (isfinite(creal(corr)) && isfinite(cimag(corr)))
                x[k] -= corr;
        }
    }
    if (left == 0)
        rc = 0;
    free(aa);
    free(done);
    return rc;
}

/* Roots of a polynomial with double coefficients (Aberth + convergence test),
 * shared with the discriminant root finder in curve_points.c. */
int sw_dpoly_roots(double complex *x, const double complex *a, int d, int maxit);
int sw_dpoly_roots(double complex *x, const double complex *a, int d, int maxit)
{
    return aberth(x, a, d, maxit);
}

/* ------------------------------------------------------------------------ */
/* Fibers and steps.                                                         */

/* The sheet-order comparison: real part first.  Groups of (chained) nearly
 * equal real parts are then ordered by imaginary part in a second pass. */
static int cmp_re(const void *pa, const void *pb)
{
    double a = creal(*(const double complex *)pa), b = creal(*(const double complex *)pb);
    return (a > b) - (a < b);
}

static int cmp_im(const void *pa, const void *pb)
{
    double a = cimag(*(const double complex *)pa), b = cimag(*(const double complex *)pb);
    return (a > b) - (a < b);
}

/* Relative tolerance for "equal real parts" in the sheet order: far above the
 * ~1e-15 noise of a Newton-polished root, far below any genuine difference a
 * user could mean. */
#define SHEET_ORDER_TOL 1e-10

void sw_curve_sort_fiber(double complex *w, size_t n)
{
    double big = 0, tol;
    size_t i, g0;
    for (i = 0; i < n; i++)
        if (cabs(w[i]) > big) big = cabs(w[i]);
    tol = SHEET_ORDER_TOL * big;
    qsort(w, n, sizeof *w, cmp_re);
    for (g0 = 0; g0 < n;) {
        size_t g1 = g0 + 1;
        while (g1 < n && creal(w[g1]) - creal(w[g1 - 1]) <= tol)
            g1++;
        if (g1 - g0 > 1)
            qsort(w + g0, g1 - g0, sizeof *w, cmp_im);
        g0 = g1;
    }
}

/* Two roots closer than this (relative to the fiber's size) are taken as
 * coinciding: double-precision roots near a collision are only accurate to
 * about sqrt(eps) ~ 1.5e-8, so 1e-9 means "indistinguishable". */
#define FIBER_COLLISION_TOL 1e-9
/* A leading coefficient below this fraction of its scale is zero to working
 * accuracy (a root escapes to infinity). */
#define LEAD_ZERO_TOL 1e-13

sw_status sw_curve_fiber(double complex *roots, const sw_curve *cv, double complex z,
                         sw_error *err)
{
    long n = cv->n, j, i;
    double complex A[SW_CURVE_MAX_DEGREE + 1];
    double big = 0;

    coeffs_at(A, NULL, cv, z);
    if (cabs(A[n]) <= LEAD_ZERO_TOL * lead_scale(cv, z))
        return sw_error_set(err, SW_ESINGULAR,
                            "the leading coefficient in w vanishes at z = %.10g%+.10gi: a sheet has a pole there",
                            creal(z), cimag(z));
    if (n == 1) {
        roots[0] = -A[0] / A[1];
        return SW_OK;
    }
    if (aberth(roots, A, (int)n, 500) != 0)
        return sw_error_set(err, SW_ETOLERANCE,
                            "root finder did not converge for the fiber at z = %.10g%+.10gi",
                            creal(z), cimag(z));
    /* Newton polish (two steps; the Aberth result is already at backward
     * error ~eps, this only helps ill-scaled fibers) */
    for (i = 0; i < n; i++) {
        for (j = 0; j < 2; j++) {
            int zero;
            double complex r = newton_ratio(A, (int)n, roots[i], &zero);
            if (zero || !isfinite(creal(r)) || !isfinite(cimag(r)))
                break;
            roots[i] -= r;
        }
    }
    for (i = 0; i < n; i++) {
        if (!isfinite(creal(roots[i])) || !isfinite(cimag(roots[i])))
            return sw_error_set(err, SW_ESINGULAR, "a root is not finite at z = %.10g%+.10gi",
                                creal(z), cimag(z));
        if (cabs(roots[i]) > big) big = cabs(roots[i]);
    }
    for (i = 0; i < n; i++)
        if (sw_fiber_sep(roots, (size_t)n, (size_t)i) <= FIBER_COLLISION_TOL * fmax(big, DBL_MIN))
            return sw_error_set(err, SW_ESINGULAR,
                                "two sheets meet at z = %.10g%+.10gi (a root of the discriminant)",
                                creal(z), cimag(z));
    return SW_OK;
}

/* Newton stopping rule: a correction below this fraction of the root's
 * distance to its neighbours (or of its size) is at rounding level. */
#define NEWTON_TOL 1e-13
#define NEWTON_MAXIT 12
/* A root may move at most this fraction of its distance to the nearest
 * other root in one step: with the prediction test alone, a step that
 * passes close by a branch point can return the two meeting roots swapped
 * (seen on random curves; the certified mode found the right labels). */
#define STEP_MOTION 0.5
/* Rounding floor accepted near root clusters: a correction this small next
 * to the separation cannot move a root to another sheet. */
#define NEWTON_FLOOR 1e-7

sw_step_result sw_curve_step(double complex *w1, const sw_curve *cv, double complex z0,
                             const double complex *w0, double complex z1, double sep)
{
    long n = cv->n, i, j;
    double complex A[SW_CURVE_MAX_DEGREE + 1], dA[SW_CURVE_MAX_DEGREE + 1];
    double complex p[SW_CURVE_MAX_DEGREE];
    double dpv[SW_CURVE_MAX_DEGREE], d0v[SW_CURVE_MAX_DEGREE];
    double complex h = z1 - z0;

    coeffs_at(A, dA, cv, z0);
    for (i = 0; i < n; i++) {
        double complex w = w0[i], Pw = 0, Pz = dA[n];
        for (j = n; j >= 1; j--) {
            Pw = Pw * w + (double)j * A[j];
            Pz = Pz * w + dA[j - 1];
        }
        if (Pw == 0)
            return SW_STEP_SINGULAR;
        p[i] = w - Pz / Pw * h;
        if (!isfinite(creal(p[i])) || !isfinite(cimag(p[i])))
            return SW_STEP_TOO_FAR;
    }
    coeffs_at(A, NULL, cv, z1);
    if (cabs(A[n]) <= LEAD_ZERO_TOL * lead_scale(cv, z1))
        return SW_STEP_SINGULAR;
    fiber_seps(dpv, p, (size_t)n);
    fiber_seps(d0v, w0, (size_t)n);
    for (i = 0; i < n; i++) {
        double dp = dpv[i];
        double d0 = d0v[i];
        double complex w = p[i];
        int it, conv = 0;
        double prev = INFINITY;
        if (!(dp > 0))
            return SW_STEP_TOO_FAR;
        for (it = 0; it < NEWTON_MAXIT; it++) {
            double complex P = A[n], Pw = 0, dw;
            for (j = n - 1; j >= 0; j--) {
                Pw = Pw * w + P;
                P = P * w + A[j];
            }
            if (Pw == 0)
                return SW_STEP_TOO_FAR;
            dw = P / Pw;
            w -= dw;
            if (!isfinite(creal(w)) || !isfinite(cimag(w)) || cabs(w - p[i]) > sep * dp)
                return SW_STEP_TOO_FAR;
            if (cabs(dw) <= NEWTON_TOL * fmax(cabs(w), dp)) {
                conv = 1;
                break;
            }
            /* near a cluster of roots rounding limits the attainable
             * accuracy (~eps |P| / |P_w|): once the corrections stop
             * shrinking while tiny next to the separation, that floor is
             * reached */
            if (it >= 2 && cabs(dw) >= 0.5 * prev && cabs(dw) <= NEWTON_FLOOR * dp) {
                conv = 1;
                break;
            }
            prev = cabs(dw);
        }
        if (!conv || cabs(w - w0[i]) > STEP_MOTION * d0)
            return SW_STEP_TOO_FAR;
        w1[i] = w;
    }
    return SW_STEP_OK;
}

/* ------------------------------------------------------------------------ */
/* The engine.                                                               */

static void curve_destroy(void *impl) { sw_curve_free(impl); }

static size_t curve_state_len(const void *impl) { return (size_t)((const sw_curve *)impl)->n; }

static size_t curve_degree(const void *impl) { return (size_t)((const sw_curve *)impl)->n; }

/* Distance of the bank offset: a bank mark is honoured by computing the fiber
 * this far (relative to max(1, |z|)) off the real direction and continuing to
 * z, so the labels are those of the side approached. */
#define BANK_OFFSET 1e-9

/* Carry a fiber from z0 to z1 by straight steps, halving on refusal (used for
 * the short bank offset). */
static sw_step_result carry(double complex *w, const sw_curve *cv, double complex z0,
                            double complex z1)
{
    double complex cur = z0, buf[SW_CURVE_MAX_DEGREE];
    double frac = 1.0, done = 0.0;
    while (done < 1.0) {
        double t = fmin(1.0, done + frac);
        double complex nz = z0 + (z1 - z0) * t;
        sw_step_result r = sw_curve_step(buf, cv, cur, w, nz, 0.25);
        if (r == SW_STEP_OK) {
            memcpy(w, buf, (size_t)cv->n * sizeof *w);
            cur = nz;
            done = t;
            frac *= 2;
        } else if (r == SW_STEP_SINGULAR || frac < 1e-6) {
            return r == SW_STEP_SINGULAR ? r : SW_STEP_TOO_FAR;
        } else {
            frac *= 0.5;
        }
    }
    return SW_STEP_OK;
}

/* Tie rule for hints: the two nearest sheets are equally near when their
 * distances differ by less than this fraction of the larger one (plus a
 * rounding-level absolute term). */
#define HINT_TIE_TOL 1e-9

static sw_status curve_germ_at(sw_germ *g, const void *impl, double complex z, int bank,
                               const double complex *hint, sw_error *err)
{
    const sw_curve *cv = impl;
    size_t n = (size_t)cv->n, i;
    double complex z0 = z;
    sw_status st;

    if (!isfinite(creal(z)) || !isfinite(cimag(z)))
        return sw_error_set(err, SW_EINPUT, "point is not finite");
    if (g->len < n || !g->s)
        return sw_error_set(err, SW_EINTERNAL, "germ not initialised for this curve");
    if (bank != SW_BANK_NONE)
        z0 = z + CMPLX(0, (bank > 0 ? 1 : -1) * BANK_OFFSET * fmax(1.0, cabs(z)));
    st = sw_curve_fiber(g->s, cv, z0, err);
    if (st != SW_OK)
        return st;
    sw_curve_sort_fiber(g->s, n);
    if (bank != SW_BANK_NONE) {
        sw_step_result r = carry(g->s, cv, z0, z);
        if (r != SW_STEP_OK)
            return sw_error_set(err, SW_ESINGULAR,
                                "z = %.10g%+.10gi is a branch point or pole of the curve: no bank value",
                                creal(z), cimag(z));
    }
    g->z = z;
    g->bank = bank;
    g->sheet = 0;
    if (hint) {
        size_t best = 0, second = (size_t)-1;
        double d1 = INFINITY, d2 = INFINITY;
        for (i = 0; i < n; i++) {
            double d = cabs(g->s[i] - *hint);
            if (d < d1) { d2 = d1; second = best; d1 = d; best = i; }
            else if (d < d2) { d2 = d; second = i; }
        }
        if (n > 1 && second != (size_t)-1 &&
            d2 - d1 <= HINT_TIE_TOL * d2 + 4 * DBL_EPSILON * cabs(*hint)) {
            return sw_error_set(err, SW_EAMBIGUOUS,
                                "sheets %zu and %zu are equally near the value %.10g%+.10gi at z = %.10g%+.10gi",
                                (best < second ? best : second) + 1, (best < second ? second : best) + 1,
                                creal(*hint), cimag(*hint), creal(z), cimag(z));
        }
        g->sheet = (int)best;
    }
    return SW_OK;
}

/* Certified steps are proven in pieces: a root may move only a fraction of
 * its distance to the others within one Krawczyk region (curve_cert.c),
 * which is shorter than what the double-precision test accepts.  The first
 * piece's length is chosen from the motion and from how fast P_w changes, so
 * that most first tries are proven; after a refused piece the length is
 * multiplied by CERT_SHRINK for the rest of the step (so one refusal sets the
 * length instead of every piece being refused and split again; growing it
 * again after proven pieces was measured to cost more refusals than it
 * saves), down to 2^-CERT_SPLIT_DEPTH of the first length (so the loop ends:
 * at most CERT_SPLIT_DEPTH refusals, every proof advances by a piece).
 * Intermediate fibers come from double-precision steps; every piece is
 * proven between the fibers at its ends, so the chain proves the whole step
 * from IN's fiber to W1. */
#define CERT_MOTION 0.125
#define CERT_PW_CHANGE 0.4
#define CERT_MAX_PIECES 256
#define CERT_SPLIT_DEPTH 3
#define CERT_SHRINK 0.5

static sw_step_result certify_pieces(const sw_curve *cv, double complex z0,
                                     const double complex *w0, double complex z1,
                                     const double complex *w1, double sep)
{
    size_t n = (size_t)cv->n, i;
    double ratio = 0, t = 0, h, hmin;
    long k;
    double complex cur[SW_CURVE_MAX_DEGREE], nxt[SW_CURVE_MAX_DEGREE], zc = z0;
    if (n > 1) {
        double s0v[SW_CURVE_MAX_DEGREE], s1v[SW_CURVE_MAX_DEGREE];
        fiber_seps(s0v, w0, n);
        fiber_seps(s1v, w1, n);
        for (i = 0; i < n; i++)
            ratio = fmax(ratio, cabs(w1[i] - w0[i]) / fmin(s0v[i], s1v[i]));
    }
    /* the Krawczyk contraction also needs P_w to change little across a
     * piece: |P_wz / P_w| |dz| small (P_wz from the derivative coefficients) */
    {
        double complex A[SW_CURVE_MAX_DEGREE + 1], dA[SW_CURVE_MAX_DEGREE + 1];
        long j;
        double rel = 0;
        coeffs_at(A, dA, cv, z0);
        for (i = 0; i < n; i++) {
            double complex w = w0[i], Pw = 0, Pwz = 0;
            for (j = (long)n; j >= 1; j--) {
                Pw = Pw * w + (double)j * A[j];
                Pwz = Pwz * w + (double)j * dA[j];
            }
            if (Pw != 0)
                rel = fmax(rel, cabs(Pwz / Pw));
        }
        ratio = fmax(ratio, rel * cabs(z1 - z0) * CERT_MOTION / CERT_PW_CHANGE);
    }
    k = (long)ceil(ratio / CERT_MOTION);
    if (k < 1) k = 1;
    if (k > CERT_MAX_PIECES)
        return SW_STEP_TOO_FAR;
    h = 1.0 / (double)k;
    hmin = ldexp(h, -CERT_SPLIT_DEPTH) * (1 - 1e-9);
    memcpy(cur, w0, n * sizeof *cur);
    while (t < 1) {
        /* a remainder shorter than a quarter piece joins this piece */
        double tn = t + h >= 1 - 0.25 * h ? 1 : t + h;
        double complex zq = tn == 1 ? z1 : z0 + (z1 - z0) * tn;
        sw_step_result r = SW_STEP_UNPROVEN;
        if (tn == 1)
            memcpy(nxt, w1, n * sizeof *nxt);
        if (tn == 1 || sw_curve_step(nxt, cv, zc, cur, zq, sep) == SW_STEP_OK)
            r = sw_curve_certify_step(cv, zc, cur, zq, nxt);
        if (r == SW_STEP_OK) {
            memcpy(cur, nxt, n * sizeof *cur);
            zc = zq;
            t = tn;
        } else {
            h *= CERT_SHRINK;
            if (h < hmin)
                return SW_STEP_UNPROVEN;
        }
    }
    return SW_STEP_OK;
}

static sw_step_result curve_advance(sw_germ *out, const sw_germ *in, double complex z,
                                    const void *impl, const sw_step_opts *o, int *why)
{
    const sw_curve *cv = impl;
    double complex w1[SW_CURVE_MAX_DEGREE];
    double sep = (o && o->sep > 0 && o->sep < 1) ? o->sep : 0.25;
    sw_step_result r;

    if (why) *why = -1;
    r = sw_curve_step(w1, cv, in->z, in->s, z, sep);
    if (r != SW_STEP_OK)
        return r;
    if (o && o->certify) {
        r = certify_pieces(cv, in->z, in->s, z, w1, sep);
        if (r == SW_STEP_TOO_FAR)
            return r;
    }
    if (out != in) {
        out->sheet = in->sheet;
    }
    memcpy(out->s, w1, (size_t)cv->n * sizeof *w1);
    out->z = z;
    out->bank = SW_BANK_NONE;
    return r;
}

static double complex curve_value(const void *impl, const sw_germ *g)
{
    (void)impl;
    return g->s[g->sheet];
}

static size_t curve_sheet_values(double complex *out, size_t max, const void *impl,
                                 const sw_germ *g)
{
    const sw_curve *cv = impl;
    size_t n = (size_t)cv->n, i;
    for (i = 0; i < n && i < max; i++)
        out[i] = g->s[i];
    return n;
}

static char *curve_describe(char *buf, size_t n, const void *impl, int why)
{
    (void)impl;
    (void)why;
    if (n > 0) {
        strncpy(buf, "a branch point or pole of the curve (sheets meet or escape)", n - 1);
        buf[n - 1] = '\0';
    }
    return buf;
}

static const sw_engine curve_engine = {
    "curve",
    curve_destroy,
    curve_state_len,
    curve_degree,
    curve_germ_at,
    curve_advance,
    curve_value,
    curve_sheet_values,
    curve_describe,
    sw_curve_points
};

const sw_curve *sw_curve_of(const sw_func *f)
{
    if (!f || f->eng != &curve_engine)
        return NULL;
    return f->impl;
}

/* ------------------------------------------------------------------------ */
/* Construction.                                                             */

void sw_curve_free(sw_curve *cv)
{
    if (!cv)
        return;
    free(cv->c);
    free(cv->cabs);
    free(cv->cdev);
    if (cv->ball)
        _acb_vec_clear(cv->ball, (cv->n + 1) * (cv->m + 1));
    fmpq_mpoly_clear(cv->re, cv->ctx);
    fmpq_mpoly_clear(cv->im, cv->ctx);
    fmpq_mpoly_ctx_clear(cv->ctx);
    free(cv->text);
    free(cv);
}

static char *dupstr(const char *s)
{
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d) memcpy(d, s, n);
    return d;
}

/* Divide out a factor in z alone common to every coefficient in w. */
static void remove_z_content(sw_curve *cv)
{
    fmpq_mpoly_t g, g2, t;
    slong wvar[1] = {1};
    fmpq_mpoly_init(g, cv->ctx);
    fmpq_mpoly_init(g2, cv->ctx);
    fmpq_mpoly_init(t, cv->ctx);
    if (fmpq_mpoly_content_vars(g, cv->re, wvar, 1, cv->ctx)) {
        int ok = 1;
        if (!fmpq_mpoly_is_zero(cv->im, cv->ctx)) {
            ok = fmpq_mpoly_content_vars(g2, cv->im, wvar, 1, cv->ctx) &&
                 fmpq_mpoly_gcd(g, g, g2, cv->ctx);
        }
        if (ok && fmpq_mpoly_degree_si(g, 0, cv->ctx) > 0) {
            if (fmpq_mpoly_divides(t, cv->re, g, cv->ctx)) {
                fmpq_mpoly_swap(cv->re, t, cv->ctx);
                if (fmpq_mpoly_divides(t, cv->im, g, cv->ctx))
                    fmpq_mpoly_swap(cv->im, t, cv->ctx);
                cv->content_removed = 1;
            }
        }
    }
    fmpq_mpoly_clear(g, cv->ctx);
    fmpq_mpoly_clear(g2, cv->ctx);
    fmpq_mpoly_clear(t, cv->ctx);
}

static const char *curve_vars[2] = {"z", "w"};

sw_status sw_curve_build(sw_curve **out, const char *text, const sw_params *params,
                         sw_error *err)
{
    sw_status st = SW_OK;
    sw_expr *e = NULL;
    sw_curve *cv = NULL;
    cpoly P;
    int rational = 1, have_ctx = 0;
    slong i, len;
    double cmax = 0;
    int emax = 0;

    *out = NULL;
    if (!text)
        return sw_error_set(err, SW_EUSAGE, "no curve given");
    st = sw_expr_parse(&e, text, params, SW_EXPR_VAR_Z | SW_EXPR_VAR_W, err);
    if (st != SW_OK)
        return st;
    cv = calloc(1, sizeof *cv);
    if (!cv) { st = sw_error_set(err, SW_ENOMEM, "out of memory"); goto cleanup; }
    fmpq_mpoly_ctx_init(cv->ctx, 2, ORD_LEX);
    fmpq_mpoly_init(cv->re, cv->ctx);
    fmpq_mpoly_init(cv->im, cv->ctx);
    have_ctx = 1;
    fmpq_mpoly_init(P.re, cv->ctx);
    fmpq_mpoly_init(P.im, cv->ctx);
    st = expr_to_poly(&P, &rational, e, cv->ctx, err);
    fmpq_mpoly_swap(cv->re, P.re, cv->ctx);
    fmpq_mpoly_swap(cv->im, P.im, cv->ctx);
    fmpq_mpoly_clear(P.re, cv->ctx);
    fmpq_mpoly_clear(P.im, cv->ctx);
    if (st != SW_OK)
        goto cleanup;
    cv->text = dupstr(text);
    if (!cv->text) { st = sw_error_set(err, SW_ENOMEM, "out of memory"); goto cleanup; }
    cv->rational = rational;
    cv->complex_coeffs = !fmpq_mpoly_is_zero(cv->im, cv->ctx);
    if (fmpq_mpoly_is_zero(cv->re, cv->ctx) && !cv->complex_coeffs) {
        st = sw_error_set(err, SW_EINPUT, "the curve polynomial is identically zero: %s", text);
        goto cleanup;
    }
    remove_z_content(cv);
    {
        cpoly tmp;
        tmp.live = 0;
        fmpq_mpoly_init(tmp.re, cv->ctx); fmpq_mpoly_init(tmp.im, cv->ctx);
        fmpq_mpoly_swap(tmp.re, cv->re, cv->ctx); fmpq_mpoly_swap(tmp.im, cv->im, cv->ctx);
        cv->n = cpoly_deg(&tmp, 1, cv->ctx);
        cv->m = cpoly_deg(&tmp, 0, cv->ctx);
        fmpq_mpoly_swap(tmp.re, cv->re, cv->ctx); fmpq_mpoly_swap(tmp.im, cv->im, cv->ctx);
        fmpq_mpoly_clear(tmp.re, cv->ctx); fmpq_mpoly_clear(tmp.im, cv->ctx);
    }
    if (cv->m < 0) cv->m = 0;
    if (cv->n <= 0) {
        st = sw_error_set(err, SW_EINPUT,
                          "the curve does not involve w (degree 0 in w): nothing defines w(z) in %s", text);
        goto cleanup;
    }
    if (cv->n > SW_CURVE_MAX_DEGREE || cv->m > SW_CURVE_MAX_DEGREE) {
        st = sw_error_set(err, SW_EINPUT, "degree (%ld in z, %ld in w) exceeds the supported maximum %d",
                          cv->m, cv->n, SW_CURVE_MAX_DEGREE);
        goto cleanup;
    }
    /* square-free in w (exact for real coefficients) */
    if (!cv->complex_coeffs) {
        fmpq_mpoly_t dw, g;
        fmpq_mpoly_init(dw, cv->ctx);
        fmpq_mpoly_init(g, cv->ctx);
        fmpq_mpoly_derivative(dw, cv->re, 1, cv->ctx);
        if (fmpq_mpoly_gcd(g, cv->re, dw, cv->ctx) && fmpq_mpoly_degree_si(g, 1, cv->ctx) > 0) {
            char *s = fmpq_mpoly_get_str_pretty(g, curve_vars, cv->ctx);
            st = sw_error_set(err, SW_EINPUT,
                              "the curve is not square-free in w: the factor %s is repeated; "
                              "give each factor once", s ? s : "?");
            flint_free(s);
        }
        fmpq_mpoly_clear(dw, cv->ctx);
        fmpq_mpoly_clear(g, cv->ctx);
        if (st != SW_OK)
            goto cleanup;
    }
    /* double and ball coefficients */
    len = (cv->n + 1) * (cv->m + 1);
    cv->c = calloc((size_t)len, sizeof *cv->c);
    cv->cabs = calloc((size_t)len, sizeof *cv->cabs);
    cv->cdev = calloc((size_t)len, sizeof *cv->cdev);
    cv->ball = _acb_vec_init(len);
    if (!cv->c || !cv->cabs || !cv->cdev) { st = sw_error_set(err, SW_ENOMEM, "out of memory"); goto cleanup; }
    {
        fmpq_t q;
        slong ex[2];
        fmpq_init(q);
        for (int part = 0; part < 2; part++) {
            const fmpq_mpoly_struct *src = part ? cv->im : cv->re;
            for (i = 0; i < fmpq_mpoly_length(src, cv->ctx); i++) {
                slong idx;
                arb_ptr dst;
                fmpq_mpoly_get_term_exp_si(ex, src, i, cv->ctx);
                fmpq_mpoly_get_term_coeff_fmpq(q, src, i, cv->ctx);
                idx = ex[1] * (cv->m + 1) + ex[0];
                dst = part ? acb_imagref(cv->ball + idx) : acb_realref(cv->ball + idx);
                arb_set_fmpq(dst, q, CURVE_BALL_PREC);
            }
        }
        fmpq_clear(q);
    }
    for (i = 0; i < len; i++) {
        double re = arf_get_d(arb_midref(acb_realref(cv->ball + i)), ARF_RND_NEAR);
        double im = arf_get_d(arb_midref(acb_imagref(cv->ball + i)), ARF_RND_NEAR);
        if (!isfinite(re) || !isfinite(im) || fabs(re) > 1e300 || fabs(im) > 1e300) {
            st = sw_error_set(err, SW_EINPUT, "a coefficient of the curve is too large for double precision");
            goto cleanup;
        }
        cv->c[i] = CMPLX(re, im);
        if (cabs(cv->c[i]) > cmax) cmax = cabs(cv->c[i]);
    }
    /* scale by a power of two so the largest coefficient is near 1 (exact in
     * both the doubles and the balls; the roots do not change) */
    frexp(cmax, &emax);
    for (i = 0; i < len; i++) {
        cv->c[i] = CMPLX(ldexp(creal(cv->c[i]), -emax), ldexp(cimag(cv->c[i]), -emax));
        cv->cabs[i] = cabs(cv->c[i]);
        acb_mul_2exp_si(cv->ball + i, cv->ball + i, -emax);
        /* one-limb midpoints: the certified steps work at 64 bits, and a
         * rounded ball still encloses the exact coefficient */
        acb_set_round(cv->ball + i, cv->ball + i, CURVE_BALL_PREC);
    }
    /* distance from each double coefficient to its ball (which encloses the
     * exact coefficient), rounded up: the double-precision certified test
     * (curve_cert.c) works with the doubles and adds this deviation */
    {
        arb_t d;
        arf_t b;
        arb_init(d);
        arf_init(b);
        for (i = 0; i < len; i++) {
            double dev = 0;
            for (int part = 0; part < 2; part++) {
                const arb_struct *x = part ? acb_imagref(cv->ball + i) : acb_realref(cv->ball + i);
                arb_set_d(d, part ? cimag(cv->c[i]) : creal(cv->c[i]));
                arb_sub(d, x, d, 2 * CURVE_BALL_PREC);
                arb_get_abs_ubound_arf(b, d, 53);
                dev += arf_get_d(b, ARF_RND_UP);
            }
            /* the sum of the two parts bounds the modulus; one more ulp
             * covers the rounding of this addition */
            cv->cdev[i] = dev > 0 ? nextafter(dev, INFINITY) : 0;
        }
        arb_clear(d);
        arf_clear(b);
    }
    if (cv->complex_coeffs) {
        /* numerical square-free test at two fixed generic points */
        static const double complex probe[2] = {CMPLX(0.6180339887, 0.3183098862),
                                                CMPLX(-0.4142135624, 0.7071067812)};
        double complex *w = malloc((size_t)cv->n * sizeof *w);
        int bad = 0;
        if (!w) { st = sw_error_set(err, SW_ENOMEM, "out of memory"); goto cleanup; }
        for (int t = 0; t < 2 && !bad; t++) {
            sw_error e2;
            sw_status s2 = sw_curve_fiber(w, cv, probe[t], &e2);
            if (s2 == SW_OK) { bad = 0; break; }
            bad = (s2 == SW_ESINGULAR);
        }
        free(w);
        if (bad) {
            st = sw_error_set(err, SW_EINPUT,
                              "the curve appears not square-free in w (sheets coincide at generic points): "
                              "give each factor once");
            goto cleanup;
        }
    }
    *out = cv;
    cv = NULL;
cleanup:
    if (cv && !have_ctx) free(cv);
    else sw_curve_free(cv);
    sw_expr_free(e);
    return st;
}

sw_status sw_curve_func_new(sw_func **f, const char *text, const sw_params *params,
                            sw_error *err)
{
    sw_curve *cv = NULL;
    sw_status st = sw_curve_build(&cv, text, params, err);
    if (st != SW_OK)
        return st;
    return sw_func_wrap(f, SW_FUNC_CURVE, &curve_engine, cv, text, err);
}
