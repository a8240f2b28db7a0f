/* Branch points of expressions and their local monodromy.
 *
 * Candidates are the zeros and poles of every multivalued node's operand when
 * that operand is a rational function of z.  The operand is built exactly
 * (every double constant is a dyadic rational) as a ratio of polynomials with
 * Gaussian-rational coefficients A + iB; the roots of a complex polynomial p
 * are among those of the real polynomial p * conj(p) = A^2 + B^2, whose
 * square-free factors (FLINT fmpz_poly_factor_squarefree) are isolated in
 * Arb balls (acb_poly_find_roots), keeping the roots where the ball value of
 * p contains 0.  Each candidate is then classified by continuation around a
 * small circle (radius a fraction of the distance to the other candidates):
 * trivial monodromy means the candidate is not a branch point, e.g.
 * sqrt(z^2) at 0.  Conventions: counter-clockwise loops; infinity by a large
 * clockwise circle. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <acb_poly.h>
#include <arf.h>
#include <flint/fmpq_mpoly.h>
#include <flint/fmpq_poly.h>
#include <flint/fmpz_poly.h>
#include <flint/fmpz_poly_factor.h>

#include "curve_internal.h"
#include "expr_internal.h"
#include "func_internal.h"
#include "sheetwalk/monodromy.h"
#include "sheetwalk/track.h"

#define MAX_OPERAND_DEGREE 400 /* beyond this the operand is not expanded */
#define MAX_ROOT_PREC 2048     /* highest precision tried when isolating roots */
#define LOOP_VERTICES 64       /* polygon used for the small loops */
#define SAME_POINT 1e-10       /* candidates closer than this (relative) are merged */
#define TRIVIAL_TOL 1e-9       /* |ratio - 1| below this: trivial monodromy */
#define COMPARE_TOL 1e-8       /* two loops agree on a multiplier/shift within this */

static const double PI = 3.14159265358979323846;

void sw_points_opts_init(sw_points_opts *o)
{
    o->certify = 0;
    o->radius_fraction = 1.0 / 3.0;
}

void sw_points_init(sw_points *p) { memset(p, 0, sizeof *p); }

static void point_clear(sw_point *q)
{
    free(q->node_turns);
    free(q->perm);
    q->node_turns = NULL;
    q->perm = NULL;
}

void sw_points_clear(sw_points *p)
{
    if (p == NULL)
        return;
    for (size_t k = 0; k < p->n; k++)
        point_clear(&p->pt[k]);
    free(p->pt);
    point_clear(&p->infinity);
    free(p->base_fiber);
    memset(p, 0, sizeof *p);
}

/* ---------------------------------------------- Gaussian-rational polynomials */

typedef struct cpoly {
    fmpq_poly_t re, im;
} cpoly;

typedef struct crat {
    cpoly num, den;
} crat;

static void cpoly_init(cpoly *p)
{
    fmpq_poly_init(p->re);
    fmpq_poly_init(p->im);
}

static void cpoly_clear(cpoly *p)
{
    fmpq_poly_clear(p->re);
    fmpq_poly_clear(p->im);
}

static void crat_init(crat *r)
{
    cpoly_init(&r->num);
    cpoly_init(&r->den);
}

static void crat_clear(crat *r)
{
    cpoly_clear(&r->num);
    cpoly_clear(&r->den);
}

static void fmpq_set_double(fmpq_t q, double d)
{
    arf_t x;
    fmpz_t man, ex, den;
    arf_init(x);
    fmpz_init(man);
    fmpz_init(ex);
    fmpz_init(den);
    arf_set_d(x, d);
    arf_get_fmpz_2exp(man, ex, x);
    slong e = fmpz_get_si(ex);
    fmpz_one(den);
    if (e >= 0)
        fmpz_mul_2exp(man, man, (ulong)e);
    else
        fmpz_mul_2exp(den, den, (ulong)(-e));
    fmpq_set_fmpz_frac(q, man, den);
    arf_clear(x);
    fmpz_clear(man);
    fmpz_clear(ex);
    fmpz_clear(den);
}

static void cpoly_set_const(cpoly *p, double complex c)
{
    fmpq_t q;
    fmpq_init(q);
    fmpq_poly_zero(p->re);
    fmpq_poly_zero(p->im);
    fmpq_set_double(q, creal(c));
    fmpq_poly_set_coeff_fmpq(p->re, 0, q);
    fmpq_set_double(q, cimag(c));
    fmpq_poly_set_coeff_fmpq(p->im, 0, q);
    fmpq_clear(q);
}

static void cpoly_mul(cpoly *r, const cpoly *a, const cpoly *b)
{
    fmpq_poly_t t1, t2, re;
    fmpq_poly_init(t1);
    fmpq_poly_init(t2);
    fmpq_poly_init(re);
    fmpq_poly_mul(t1, a->re, b->re);
    fmpq_poly_mul(t2, a->im, b->im);
    fmpq_poly_sub(re, t1, t2);
    fmpq_poly_mul(t1, a->re, b->im);
    fmpq_poly_mul(t2, a->im, b->re);
    fmpq_poly_add(r->im, t1, t2);
    fmpq_poly_swap(r->re, re);
    fmpq_poly_clear(t1);
    fmpq_poly_clear(t2);
    fmpq_poly_clear(re);
}

static void cpoly_addsub(cpoly *r, const cpoly *a, const cpoly *b, int sub)
{
    if (sub) {
        fmpq_poly_sub(r->re, a->re, b->re);
        fmpq_poly_sub(r->im, a->im, b->im);
    } else {
        fmpq_poly_add(r->re, a->re, b->re);
        fmpq_poly_add(r->im, a->im, b->im);
    }
}

static slong cpoly_degree(const cpoly *p)
{
    slong a = fmpq_poly_degree(p->re), b = fmpq_poly_degree(p->im);
    return a > b ? a : b;
}

static int cpoly_is_zero(const cpoly *p)
{
    return fmpq_poly_is_zero(p->re) && fmpq_poly_is_zero(p->im);
}

/* Build node K's value as a rational function; 0 when it is not one. */
static int build_rational(crat *out, const sw_expr *e, int k, int *bad)
{
    const sw_node *nd = &e->node[k];
    crat a, b;
    int ok = 1;
    crat_init(&a);
    crat_init(&b);
    switch (nd->kind) {
    case N_CONST:
        cpoly_set_const(&out->num, nd->c);
        cpoly_set_const(&out->den, 1.0);
        break;
    case N_Z:
        fmpq_poly_zero(out->num.re);
        fmpq_poly_zero(out->num.im);
        fmpq_poly_set_coeff_si(out->num.re, 1, 1);
        cpoly_set_const(&out->den, 1.0);
        break;
    case N_NEG:
        ok = build_rational(out, e, nd->a, bad);
        fmpq_poly_neg(out->num.re, out->num.re);
        fmpq_poly_neg(out->num.im, out->num.im);
        break;
    case N_ADD: case N_SUB: {
        ok = build_rational(&a, e, nd->a, bad) && build_rational(&b, e, nd->b, bad);
        if (!ok)
            break;
        cpoly t1, t2;
        cpoly_init(&t1);
        cpoly_init(&t2);
        cpoly_mul(&t1, &a.num, &b.den);
        cpoly_mul(&t2, &b.num, &a.den);
        cpoly_addsub(&out->num, &t1, &t2, nd->kind == N_SUB);
        cpoly_mul(&out->den, &a.den, &b.den);
        cpoly_clear(&t1);
        cpoly_clear(&t2);
        break;
    }
    case N_MUL: case N_DIV:
        ok = build_rational(&a, e, nd->a, bad) && build_rational(&b, e, nd->b, bad);
        if (!ok)
            break;
        if (nd->kind == N_MUL) {
            cpoly_mul(&out->num, &a.num, &b.num);
            cpoly_mul(&out->den, &a.den, &b.den);
        } else {
            cpoly_mul(&out->num, &a.num, &b.den);
            cpoly_mul(&out->den, &a.den, &b.num);
        }
        break;
    case N_POWI: {
        ok = build_rational(&a, e, nd->a, bad);
        if (!ok)
            break;
        long n = labs(nd->k);
        if ((double)n * (double)(cpoly_degree(&a.num) + cpoly_degree(&a.den)) >
            MAX_OPERAND_DEGREE) {
            ok = 0;
            *bad = 2;
            break;
        }
        cpoly_set_const(&out->num, 1.0);
        cpoly_set_const(&out->den, 1.0);
        for (long j = 0; j < n; j++) {
            cpoly_mul(&out->num, &out->num, nd->k > 0 ? &a.num : &a.den);
            cpoly_mul(&out->den, &out->den, nd->k > 0 ? &a.den : &a.num);
        }
        break;
    }
    default:
        ok = 0;
        *bad = 1;
        break;
    }
    if (ok && (cpoly_degree(&out->num) > MAX_OPERAND_DEGREE ||
               cpoly_degree(&out->den) > MAX_OPERAND_DEGREE)) {
        ok = 0;
        *bad = 2;
    }
    if (ok && cpoly_is_zero(&out->den)) {
        ok = 0;
        *bad = 3;
    }
    crat_clear(&a);
    crat_clear(&b);
    return ok;
}

typedef struct cand_list {
    size_t n, alloc;
    double complex *z;
    double *rad;
} cand_list;

static int cand_add(cand_list *c, double complex z, double rad)
{
    for (size_t k = 0; k < c->n; k++)
        if (cabs(c->z[k] - z) <= SAME_POINT * (1 + cabs(z))) {
            if (rad > c->rad[k])
                c->rad[k] = rad;
            return 1;
        }
    if (c->n == c->alloc) {
        size_t na = c->alloc ? 2 * c->alloc : 16;
        double complex *nz = realloc(c->z, na * sizeof *nz);
        if (nz == NULL)
            return 0;
        c->z = nz;
        double *nr = realloc(c->rad, na * sizeof *nr);
        if (nr == NULL)
            return 0;
        c->rad = nr;
        c->alloc = na;
    }
    c->z[c->n] = z;
    c->rad[c->n] = rad;
    c->n++;
    return 1;
}

/* Isolate the roots of the complex polynomial p and add them.  0 on failure. */
static int add_roots(cand_list *c, const cpoly *p)
{
    if (cpoly_degree(p) < 1)
        return 1;
    fmpq_poly_t q, t;
    fmpz_poly_t zq;
    fmpz_poly_factor_t fac;
    fmpq_poly_init(q);
    fmpq_poly_init(t);
    fmpz_poly_init(zq);
    fmpz_poly_factor_init(fac);
    int ok = 1;
    /* p * conj(p) = re^2 + im^2 (coefficient-wise conjugate) */
    fmpq_poly_mul(q, p->re, p->re);
    fmpq_poly_mul(t, p->im, p->im);
    fmpq_poly_add(q, q, t);
    fmpq_poly_get_numerator(zq, q);
    fmpz_poly_factor_squarefree(fac, zq);
    for (slong f = 0; f < fac->num && ok; f++) {
        slong d = fmpz_poly_degree(fac->p + f);
        if (d < 1)
            continue;
        acb_ptr roots = _acb_vec_init(d);
        acb_poly_t P, pr, pi;
        acb_poly_init(P);
        acb_poly_init(pr);
        acb_poly_init(pi);
        /* double-precision Aberth starting values refined and validated by Arb
           (shared with the curve engine), precision raised only as needed */
        slong prec = 256;
        if (sw_poly_isolate_roots(roots, fac->p + f, MAX_ROOT_PREC, NULL) != SW_OK) {
            ok = 0;
        } else {
            acb_poly_set_fmpq_poly(pr, p->re, prec);
            acb_poly_set_fmpq_poly(pi, p->im, prec);
            acb_t vr, vi;
            acb_init(vr);
            acb_init(vi);
            for (slong j = 0; j < d && ok; j++) {
                /* real polynomial: a root ball touching the axis is real; a ball
                   containing 0 in a coordinate gets the midpoint 0 there (still
                   inside the enclosure), so that exact roots print exactly */
                if (arb_contains_zero(acb_imagref(roots + j)))
                    arb_zero(acb_imagref(roots + j));
                if (arb_contains_zero(acb_realref(roots + j)))
                    arf_zero(arb_midref(acb_realref(roots + j)));
                if (d == 1) { /* a linear factor: the root -c0/c1 exactly */
                    fmpq_t r0;
                    fmpq_init(r0);
                    fmpq_set_fmpz_frac(r0, fac->p[f].coeffs, fac->p[f].coeffs + 1);
                    fmpq_neg(r0, r0);
                    arb_set_fmpq(acb_realref(roots + j), r0, prec);
                    arb_zero(acb_imagref(roots + j));
                    fmpq_clear(r0);
                }
                acb_poly_evaluate(vr, pr, roots + j, prec);
                acb_poly_evaluate(vi, pi, roots + j, prec);
                acb_mul_onei(vi, vi);
                acb_add(vr, vr, vi, prec);
                if (!acb_contains_zero(vr))
                    continue; /* a root of conj(p) only */
                double complex z = CMPLX(arf_get_d(arb_midref(acb_realref(roots + j)), ARF_RND_NEAR),
                                         arf_get_d(arb_midref(acb_imagref(roots + j)), ARF_RND_NEAR));
                mag_t m;
                mag_init(m);
                acb_get_mag(m, roots + j);
                double rad = mag_get_d(arb_radref(acb_realref(roots + j))) +
                             mag_get_d(arb_radref(acb_imagref(roots + j)));
                mag_clear(m);
                ok = cand_add(c, z, rad);
            }
            acb_clear(vr);
            acb_clear(vi);
        }
        acb_poly_clear(P);
        acb_poly_clear(pr);
        acb_poly_clear(pi);
        _acb_vec_clear(roots, d);
    }
    fmpq_poly_clear(q);
    fmpq_poly_clear(t);
    fmpz_poly_clear(zq);
    fmpz_poly_factor_clear(fac);
    return ok;
}

/* ------------------------------------------------------------------ loops */

/* Continue the principal branch once around the circle |z - c| = r starting at
 * angle th (clockwise when cw).  On success fills ratio, difference, turns. */
static sw_status loop_effect(double complex *ratio, double complex *diff, long *turns,
                             const sw_func *f, double complex c, double r, double th, int cw,
                             int certify, int *certified, sw_error *err)
{
    sw_path p;
    sw_path_init(&p);
    sw_germ g;
    sw_trace tr;
    sw_trace_init(&tr);
    sw_status st = sw_germ_init(&g, f);
    if (st != SW_OK)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    for (int k = 0; k <= LOOP_VERTICES && st == SW_OK; k++) {
        double a = th + (cw ? -1 : 1) * 2 * PI * (double)(k % LOOP_VERTICES) / LOOP_VERTICES;
        st = sw_path_push(&p, c + CMPLX(r * cos(a), r * sin(a)), SW_BANK_NONE, err);
    }
    if (st == SW_OK)
        st = sw_func_germ_at(&g, f, p.z[0], SW_BANK_NONE, NULL, err);
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.keep_log = 0;
    o.step.certify = certify;
    if (st == SW_OK)
        st = sw_track_run(&tr, f, &g, &p, &o, err);
    if (st == SW_OK) {
        const sw_germ *e = &tr.vert[tr.nvert - 1];
        double complex v0 = sw_func_value(f, &g), v1 = sw_func_value(f, e);
        *ratio = v1 / v0;
        *diff = v1 - v0;
        if (certified)
            *certified = tr.certified;
        const sw_expr *ex = sw_func_expr(f);
        for (size_t m = 0; ex && m < ex->nmv; m++)
            turns[m] = lround((cimag(e->s[2 * m + 1]) - cimag(g.s[2 * m + 1])) / (2 * PI));
    }
    sw_trace_clear(&tr);
    sw_germ_clear(&g);
    sw_path_clear(&p);
    return st;
}

static int near(double complex a, double complex b, double tol)
{
    return cabs(a - b) <= tol * (1 + cabs(a) + cabs(b));
}

/* Classify one point from two loops of different radius and start angle. */
static sw_status classify(sw_point *pt, const sw_func *f, double complex c, double r, int cw,
                          int certify, size_t nmv, sw_error *err)
{
    double complex r1, d1, r2, d2;
    long *t2 = calloc(nmv ? nmv : 1, sizeof *t2);
    pt->node_turns = calloc(nmv ? nmv : 1, sizeof *pt->node_turns);
    pt->nmv = nmv;
    if (t2 == NULL || pt->node_turns == NULL) {
        free(t2);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    int cert1 = 0, cert2 = 0;
    sw_status st = loop_effect(&r1, &d1, pt->node_turns, f, c, r, 0.4, cw, certify, &cert1, err);
    if (st == SW_OK)
        st = loop_effect(&r2, &d2, t2, f, c, 0.6 * r, 1.9, cw, certify, &cert2, err);
    free(t2);
    if (st != SW_OK)
        return st;
    pt->ratio = r1;
    pt->difference = d1;
    pt->certified = certify && cert1 && cert2;
    int trivial1 = cabs(r1 - 1) < TRIVIAL_TOL || cabs(d1) < TRIVIAL_TOL;
    int trivial2 = cabs(r2 - 1) < TRIVIAL_TOL || cabs(d2) < TRIVIAL_TOL;
    if (trivial1 && trivial2) {
        pt->kind = SW_POINT_REGULAR;
        pt->ratio = 1;
        pt->difference = 0;
        return SW_OK;
    }
    pt->kind = SW_POINT_BRANCH;
    pt->is_multiplier = near(r1, r2, COMPARE_TOL) && isfinite(creal(r1));
    pt->is_shift = !pt->is_multiplier && near(d1, d2, COMPARE_TOL);
    return SW_OK;
}

static int cmp_point(const void *a, const void *b)
{
    const sw_point *p = a, *q = b;
    if (creal(p->z) != creal(q->z))
        return creal(p->z) < creal(q->z) ? -1 : 1;
    if (cimag(p->z) != cimag(q->z))
        return cimag(p->z) < cimag(q->z) ? -1 : 1;
    return 0;
}

/* |f| ~ |c| r^q on the ray arg z = 0.3 beyond every candidate: the slope of
 * log|f| against log r between radii R 2^k and R 2^(k+1). */
static void leading_exponent(sw_points *res, const sw_func *f, double R)
{
    sw_germ g, h;
    if (sw_germ_init(&g, f) != SW_OK)
        return;
    if (sw_germ_init(&h, f) != SW_OK) {
        sw_germ_clear(&g);
        return;
    }
    double complex dir = cexp(CMPLX(0.0, 0.3));
    sw_step_opts so;
    sw_step_opts_init(&so);
    double q[40];
    int n = 0;
    double complex z = R * dir;
    if (sw_func_germ_at(&g, f, z, SW_BANK_NONE, NULL, NULL) == SW_OK) {
        double lf = log(cabs(sw_func_value(f, &g)));
        for (int k = 1; k < 40 && isfinite(lf); k++) {
            double complex z1 = z * 2.0;
            /* walk out along the ray in steps the engine accepts */
            double complex at = z;
            int ok = 1;
            while (at != z1 && ok) {
                double complex to = z1;
                sw_step_result r;
                int tries = 0;
                while ((r = sw_func_advance(&h, &g, to, f, &so, NULL)) == SW_STEP_TOO_FAR &&
                       tries++ < 60)
                    to = 0.5 * (at + to);
                if (r != SW_STEP_OK) {
                    ok = 0;
                    break;
                }
                sw_germ_copy(&g, &h);
                at = to;
            }
            if (!ok)
                break;
            double l1 = log(cabs(sw_func_value(f, &g)));
            q[n++] = (l1 - lf) / log(2.0);
            lf = l1;
            z = z1;
            if (n >= 3 && fabs(q[n - 1] - q[n - 2]) < 1e-7 && fabs(q[n - 2] - q[n - 3]) < 1e-7) {
                res->inf_exponent = q[n - 1];
                res->inf_exponent_ok = 1;
                /* snap to a nearby rational with a small denominator */
                for (int den = 1; den <= 24; den++) {
                    double num = nearbyint(q[n - 1] * den);
                    if (fabs(num / den - q[n - 1]) < 1e-6) {
                        res->inf_exponent = num / den;
                        break;
                    }
                }
                break;
            }
            if (cabs(z) > 1e30)
                break;
        }
    }
    sw_germ_clear(&g);
    sw_germ_clear(&h);
}

/* --------------------------------------- nested roots: elimination by resultants */

/* An operand built from z, real rational constants, + - * /, integer powers
 * and inner roots / rational powers y_j = U_j^(p/q) is a rational function of
 * z and the y_j.  With the relations y_j^q B_j^p - A_j^p = 0 (U_j = A_j/B_j,
 * p > 0; swapped for p < 0), the resultants Res_{y_j} eliminate the inner
 * roots one by one (outermost first), leaving a polynomial in z whose roots
 * contain the zeros (or poles) of the operand on every branch of the inner
 * roots.  Variables: 0 = z, 1 + j = y_j (multivalued node j). */

#define ALG_MAX_DEGREE 400 /* beyond this the elimination is abandoned */

typedef struct mrat {
    fmpq_mpoly_t num, den;
} mrat;

static void mrat_init(mrat *r, const fmpq_mpoly_ctx_t ctx)
{
    fmpq_mpoly_init(r->num, ctx);
    fmpq_mpoly_init(r->den, ctx);
}

static void mrat_clear(mrat *r, const fmpq_mpoly_ctx_t ctx)
{
    fmpq_mpoly_clear(r->num, ctx);
    fmpq_mpoly_clear(r->den, ctx);
}

/* p/q for a real exponent with q <= 64, else 0. */
static int rational_exponent(long *p, long *q, double complex c)
{
    if (cimag(c) != 0)
        return 0;
    for (long d = 1; d <= 64; d++) {
        double n = creal(c) * (double)d;
        if (fabs(n - nearbyint(n)) < 1e-12 * (double)d && fabs(n) < 1e6) {
            *p = (long)nearbyint(n);
            *q = d;
            return 1;
        }
    }
    return 0;
}

static int build_alg(mrat *out, const sw_expr *e, int k, const fmpq_mpoly_ctx_t ctx)
{
    const sw_node *nd = &e->node[k];
    mrat a, b;
    int ok = 1;
    mrat_init(&a, ctx);
    mrat_init(&b, ctx);
    fmpq_t q;
    fmpq_init(q);
    switch (nd->kind) {
    case N_CONST:
        if (cimag(nd->c) != 0) {
            ok = 0;
            break;
        }
        fmpq_set_double(q, creal(nd->c));
        fmpq_mpoly_set_fmpq(out->num, q, ctx);
        fmpq_mpoly_one(out->den, ctx);
        break;
    case N_Z:
        fmpq_mpoly_gen(out->num, 0, ctx);
        fmpq_mpoly_one(out->den, ctx);
        break;
    case N_POW: {
        long pp, qq;
        if (!rational_exponent(&pp, &qq, nd->c)) {
            ok = 0;
            break;
        }
        fmpq_mpoly_gen(out->num, 1 + nd->mv, ctx);
        fmpq_mpoly_one(out->den, ctx);
        break;
    }
    case N_NEG:
        ok = build_alg(out, e, nd->a, ctx);
        if (ok)
            fmpq_mpoly_neg(out->num, out->num, ctx);
        break;
    case N_ADD: case N_SUB: case N_MUL: case N_DIV:
        ok = build_alg(&a, e, nd->a, ctx) && build_alg(&b, e, nd->b, ctx);
        if (!ok)
            break;
        if (nd->kind == N_MUL) {
            fmpq_mpoly_mul(out->num, a.num, b.num, ctx);
            fmpq_mpoly_mul(out->den, a.den, b.den, ctx);
        } else if (nd->kind == N_DIV) {
            fmpq_mpoly_mul(out->num, a.num, b.den, ctx);
            fmpq_mpoly_mul(out->den, a.den, b.num, ctx);
        } else {
            fmpq_mpoly_t t;
            fmpq_mpoly_init(t, ctx);
            fmpq_mpoly_mul(out->num, a.num, b.den, ctx);
            fmpq_mpoly_mul(t, b.num, a.den, ctx);
            if (nd->kind == N_ADD)
                fmpq_mpoly_add(out->num, out->num, t, ctx);
            else
                fmpq_mpoly_sub(out->num, out->num, t, ctx);
            fmpq_mpoly_mul(out->den, a.den, b.den, ctx);
            fmpq_mpoly_clear(t, ctx);
        }
        break;
    case N_POWI: {
        ok = build_alg(&a, e, nd->a, ctx);
        if (!ok)
            break;
        ulong n = (ulong)labs(nd->k);
        if (n > 64) {
            ok = 0;
            break;
        }
        ok = fmpq_mpoly_pow_ui(out->num, nd->k > 0 ? a.num : a.den, n, ctx) &&
             fmpq_mpoly_pow_ui(out->den, nd->k > 0 ? a.den : a.num, n, ctx);
        break;
    }
    default:
        ok = 0; /* logs, general powers, transcendental functions */
        break;
    }
    if (ok && (fmpq_mpoly_total_degree_si(out->num, ctx) > ALG_MAX_DEGREE ||
               fmpq_mpoly_total_degree_si(out->den, ctx) > ALG_MAX_DEGREE))
        ok = 0;
    if (ok && fmpq_mpoly_is_zero(out->den, ctx))
        ok = 0;
    fmpq_clear(q);
    mrat_clear(&a, ctx);
    mrat_clear(&b, ctx);
    return ok;
}

/* Eliminate the y's from P using the relations of the inner roots. */
static int eliminate(fmpq_poly_t out, const fmpq_mpoly_t P, const sw_expr *e, size_t upto,
                     const fmpq_mpoly_ctx_t ctx)
{
    fmpq_mpoly_t R, rel, t;
    fmpq_mpoly_init(R, ctx);
    fmpq_mpoly_init(rel, ctx);
    fmpq_mpoly_init(t, ctx);
    fmpq_mpoly_set(R, P, ctx);
    int ok = 1;
    for (size_t j = upto; j-- > 0 && ok;) {
        if (fmpq_mpoly_degree_si(R, (slong)(1 + j), ctx) <= 0)
            continue;
        const sw_node *nd = &e->node[e->mv_node[j]];
        long pp, qq;
        mrat u;
        mrat_init(&u, ctx);
        ok = nd->kind == N_POW && rational_exponent(&pp, &qq, nd->c) &&
             build_alg(&u, e, nd->a, ctx);
        if (ok) {
            /* y^q B^p - A^p (p > 0), y^q A^|p| - B^|p| (p < 0) */
            fmpq_mpoly_gen(rel, (slong)(1 + j), ctx);
            ok = fmpq_mpoly_pow_ui(rel, rel, (ulong)qq, ctx) &&
                 fmpq_mpoly_pow_ui(t, pp > 0 ? u.den : u.num, (ulong)labs(pp), ctx);
            if (ok) {
                fmpq_mpoly_mul(rel, rel, t, ctx);
                ok = fmpq_mpoly_pow_ui(t, pp > 0 ? u.num : u.den, (ulong)labs(pp), ctx);
                fmpq_mpoly_sub(rel, rel, t, ctx);
            }
            if (ok)
                ok = fmpq_mpoly_resultant(R, R, rel, (slong)(1 + j), ctx);
            if (ok && fmpq_mpoly_total_degree_si(R, ctx) > ALG_MAX_DEGREE)
                ok = 0;
        }
        mrat_clear(&u, ctx);
    }
    if (ok)
        ok = !fmpq_mpoly_is_zero(R, ctx) && fmpq_mpoly_get_fmpq_poly(out, R, 0, ctx);
    fmpq_mpoly_clear(R, ctx);
    fmpq_mpoly_clear(rel, ctx);
    fmpq_mpoly_clear(t, ctx);
    return ok;
}

/* Candidates for node M's operand through elimination.  0 when not possible. */
static int add_nested_roots(cand_list *c, const sw_expr *e, size_t m)
{
    fmpq_mpoly_ctx_t ctx;
    fmpq_mpoly_ctx_init(ctx, (slong)(1 + e->nmv), ORD_LEX);
    mrat v;
    mrat_init(&v, ctx);
    fmpq_poly_t pn, pd;
    fmpq_poly_init(pn);
    fmpq_poly_init(pd);
    int ok = build_alg(&v, e, e->node[e->mv_node[m]].a, ctx) && eliminate(pn, v.num, e, m, ctx) &&
             eliminate(pd, v.den, e, m, ctx) && fmpq_poly_degree(pn) <= ALG_MAX_DEGREE &&
             fmpq_poly_degree(pd) <= ALG_MAX_DEGREE;
    if (ok) {
        cpoly cp;
        cpoly_init(&cp);
        fmpq_poly_set(cp.re, pn);
        ok = add_roots(c, &cp);
        fmpq_poly_set(cp.re, pd);
        ok = ok && add_roots(c, &cp);
        cpoly_clear(&cp);
    }
    fmpq_poly_clear(pn);
    fmpq_poly_clear(pd);
    mrat_clear(&v, ctx);
    fmpq_mpoly_ctx_clear(ctx);
    return ok;
}

/* Is some operand zero or infinite at C on a branch of the inner roots other
 * than the principal one, while it is not on the principal branch?  (Tried
 * over the branches of the rational exponents; an operand that vanishes on
 * every branch, like a rational one, does not count.) */
static int singular_nodes(char *sing, const sw_expr *e, double complex c, double r,
                          const long *shift, double complex *st, double complex *st2,
                          double complex *vals)
{
    double complex v;
    memset(sing, 0, e->nmv);
    int r1 = sw_expr_shifted_state(&v, st, e, c, 0, shift, vals);
    int r2 = sw_expr_shifted_state(&v, st2, e, c + r, 0, shift, vals);
    if (r2 != -1)
        return 0; /* the comparison point itself is singular: no verdict */
    if (r1 <= -2) {
        sing[-2 - r1] = 1; /* evaluation stops at the first singular node */
        return 1;
    }
    for (size_t k = 0; k < e->nmv; k++) {
        double a = cabs(st[2 * k]), b = cabs(st2[2 * k]);
        if (a < 1e-7 * b || b < 1e-7 * a)
            sing[k] = 1;
    }
    return 1;
}

static int branched_elsewhere(const sw_expr *e, double complex c, double r)
{
    size_t m = e->nmv;
    if (m == 0 || m > 12)
        return 0;
    long span[12], cur[12] = {0};
    double combos = 1;
    for (size_t k = 0; k < m; k++) {
        long pp, qq;
        const sw_node *nd = &e->node[e->mv_node[k]];
        span[k] = nd->kind == N_POW && rational_exponent(&pp, &qq, nd->c) ? qq : 1;
        combos *= (double)span[k];
    }
    if (combos > 4096 || combos < 2)
        return 0;
    double complex *st = malloc(2 * m * sizeof *st), *st2 = malloc(2 * m * sizeof *st2);
    double complex *vals = malloc(e->n * sizeof *vals);
    char sing0[12], sing[12];
    int found = 0;
    if (st && st2 && vals && singular_nodes(sing0, e, c, r, cur, st, st2, vals)) {
        for (;;) {
            size_t k = 0;
            while (k < m && ++cur[k] == span[k])
                cur[k++] = 0;
            if (k == m || found)
                break;
            if (singular_nodes(sing, e, c, r, cur, st, st2, vals))
                for (size_t j = 0; j < m; j++)
                    if (sing[j] && !sing0[j])
                        found = 1;
        }
    }
    free(st);
    free(st2);
    free(vals);
    return found;
}

sw_status sw_expr_points(sw_points *out, const sw_func *f, const sw_points_opts *o,
                         sw_error *err); /* called through the engine vtable */

sw_status sw_expr_points(sw_points *out, const sw_func *f, const sw_points_opts *o,
                         sw_error *err)
{
    const sw_expr *e = sw_func_expr(f);
    sw_points res;
    sw_points_init(&res);
    cand_list c = {0, 0, NULL, NULL};
    sw_status st = SW_OK;
    res.complete = 1;
    for (size_t m = 0; m < e->nmv; m++) {
        const sw_node *nd = &e->node[e->mv_node[m]];
        crat r;
        crat_init(&r);
        int bad = 0;
        char what[160];
        if (build_rational(&r, e, nd->a, &bad)) {
            if (!add_roots(&c, &r.num) || !add_roots(&c, &r.den)) {
                res.complete = 0;
                snprintf(res.incomplete, sizeof res.incomplete,
                         "the roots of the operand of '%s' could not be isolated",
                         sw_expr_mv_text(what, sizeof what, e, m));
            }
        } else if (add_nested_roots(&c, e, m)) {
            /* a nested root: its candidates come from the elimination */
        } else if (res.complete) {
            res.complete = 0;
            snprintf(res.incomplete, sizeof res.incomplete,
                     bad == 2 ? "the operand of '%s' has too high a degree to expand; its zeros "
                                "and poles are not listed"
                     : bad == 3 ? "the operand of '%s' is identically infinite"
                                : "the operand of '%s' is not an algebraic function of z built "
                                  "from rational functions and roots (it contains logs, "
                                  "irrational or complex-coefficient nesting, or transcendental "
                                  "functions); its zeros and poles are not listed",
                     sw_expr_mv_text(what, sizeof what, e, m));
        }
        crat_clear(&r);
    }
    /* the branch points of the non-rational operands are unknown: so is the
       effect of a big circle, and of a small one if it happened to enclose them;
       classify anyway (the small circles are the best available evidence) */
    res.n = c.n;
    res.pt = calloc(c.n ? c.n : 1, sizeof *res.pt);
    if (res.pt == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    double R = 0;
    for (size_t k = 0; k < c.n; k++)
        R = fmax(R, cabs(c.z[k]));
    for (size_t k = 0; k < c.n; k++) {
        double dmin = INFINITY;
        for (size_t j = 0; j < c.n; j++)
            if (j != k)
                dmin = fmin(dmin, cabs(c.z[j] - c.z[k]));
        double r = fmin(o->radius_fraction * dmin, 0.5 * fmax(1.0, cabs(c.z[k])));
        sw_point *pt = &res.pt[k];
        pt->z = c.z[k];
        pt->radius = c.rad[k];
        sw_error e2;
        st = classify(pt, f, c.z[k], r, 0, o->certify, e->nmv, &e2);
        if (st == SW_OK && pt->kind == SW_POINT_REGULAR)
            pt->other_sheets = branched_elsewhere(e, c.z[k], r);
        if (st != SW_OK) {
            st = sw_error_set(err, st, "classifying the candidate %.10g%+.10gi: %s",
                              creal(c.z[k]), cimag(c.z[k]), e2.msg);
            goto cleanup;
        }
    }
    qsort(res.pt, res.n, sizeof *res.pt, cmp_point);
    res.infinity.at_infinity = 1;
    res.infinity.kind = SW_POINT_REGULAR;
    res.infinity.ratio = 1;
    if (res.complete) {
        double Rb = 2 * R + 1;
        sw_error e2;
        st = classify(&res.infinity, f, 0, Rb, 1, o->certify, e->nmv, &e2);
        if (st != SW_OK) {
            st = sw_error_set(err, st, "classifying infinity: %s", e2.msg);
            goto cleanup;
        }
    }
    if (res.complete)
        leading_exponent(&res, f, 2 * R + 1);
    sw_points_clear(out);
    *out = res;
    sw_points_init(&res);
cleanup:
    sw_points_clear(&res);
    free(c.z);
    free(c.rad);
    return st;
}

sw_status sw_fiber_permutation(int *perm, const sw_func *f, const sw_germ *start,
                               const sw_germ *end, sw_error *err)
{
    size_t n = sw_func_degree(f);
    if (n == 0 || start->len < n || end->len < n)
        return sw_error_set(err, SW_EUSAGE, "a permutation needs a function with finitely many "
                            "sheets");
    double sep = INFINITY;
    for (size_t i = 0; i < n; i++)
        for (size_t j = i + 1; j < n; j++)
            sep = fmin(sep, cabs(start->s[i] - start->s[j]));
    char *used = calloc(n, 1);
    if (used == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    sw_status st = SW_OK;
    for (size_t i = 0; i < n && st == SW_OK; i++) {
        size_t best = 0;
        double d = INFINITY;
        for (size_t j = 0; j < n; j++) {
            double dj = cabs(end->s[i] - start->s[j]);
            if (dj < d) {
                d = dj;
                best = j;
            }
        }
        /* the end value must sit well inside its sheet's neighbourhood */
        if (!(d < 0.25 * sep) || used[best])
            st = sw_error_set(err, SW_EAMBIGUOUS,
                              "the end of the loop does not match the start fiber clearly "
                              "(distance %.3g, fiber separation %.3g)", d, sep);
        else {
            used[best] = 1;
            perm[i] = (int)best;
        }
    }
    free(used);
    return st;
}

/* Zeros of the denominators of an expression (division nodes, negative
 * integer powers) on every branch of its roots: where a single-valued part of
 * it may have a pole.  Candidates only (a zero may cancel). */
sw_status sw_expr_pole_candidates(double complex **out, size_t *n, const sw_func *f,
                                  sw_error *err)
{
    *out = NULL;
    *n = 0;
    const sw_expr *e = sw_func_expr(f);
    if (e == NULL)
        return SW_OK;
    cand_list c = {0, 0, NULL, NULL};
    fmpq_mpoly_ctx_t ctx;
    fmpq_mpoly_ctx_init(ctx, (slong)(1 + e->nmv), ORD_LEX);
    int complete = 1;
    for (size_t k = 0; k < e->n; k++) {
        const sw_node *nd = &e->node[k];
        int base;
        if (nd->kind == N_DIV)
            base = nd->b;
        else if (nd->kind == N_POWI && nd->k < 0)
            base = nd->a;
        else
            continue;
        crat r;
        crat_init(&r);
        int bad = 0;
        if (build_rational(&r, e, base, &bad)) {
            if (!add_roots(&c, &r.num))
                complete = 0;
        } else {
            /* nested: eliminate the roots it contains (all of them, any index) */
            mrat v;
            mrat_init(&v, ctx);
            fmpq_poly_t pn;
            fmpq_poly_init(pn);
            if (build_alg(&v, e, base, ctx) && eliminate(pn, v.num, e, e->nmv, ctx)) {
                cpoly cp;
                cpoly_init(&cp);
                fmpq_poly_set(cp.re, pn);
                if (!add_roots(&c, &cp))
                    complete = 0;
                cpoly_clear(&cp);
            } else {
                complete = 0;
            }
            fmpq_poly_clear(pn);
            mrat_clear(&v, ctx);
        }
        crat_clear(&r);
    }
    fmpq_mpoly_ctx_clear(ctx);
    free(c.rad);
    *out = c.z;
    *n = c.n;
    if (!complete)
        return sw_error_set(err, SW_EUNSUPPORTED,
                            "some denominators are not algebraic in z: their zeros are unknown");
    return SW_OK;
}
