/* Integrals of the tracked branch along a path (methods.md section 4); the
 * methods and their sources are listed in include/sheetwalk/integrate.h.
 *
 * The path is cut into pieces (finite segments, rays to or from infinity, or
 * one circle).  Every piece is tracked once (sw_track_run with the dense
 * log) on one or more "tracked lines", chained so that each starts with the
 * germ the previous one ended with; every quadrature point is then evaluated
 * from the dense log (sw_trace_germ_at), so the branch is never re-chosen.
 *
 * A piece is integrated in a local variable x: on a segment z = base + x dir
 * with x the fraction of the segment from one end; on a ray z = c + e / s
 * with s in (0, 1] (s = 0 is infinity).  An end where the integrand is
 * singular is analysed (analyze_end) by loops on a ladder of radii, which
 * give the local exponent exactly (mod 1/q) and the zone where the local
 * expansion holds; for expressions whose multivalued nodes take operands
 * built from z alone, the turns of each operand are read from its order at
 * the end (Laurent jets, operand_orders) and no loop is tracked.  At such an
 * end of the path an anchor (anchor_jump) carries the branch in closed form
 * inside the operands' disc, so the tracked line starts a quarter of the
 * segment away (the whole segment but its last quarter when the operands
 * are monomials in x, operands_monomial).  When the integrand itself is a
 * product of such powers and one logarithm, its exponent and logarithm are
 * read off the tree (tree_log_end) and no loop or sample is needed; a
 * smooth factor of degree 1 at most starts the product rule at order 2
 * (smooth_degree).  Then a rule that samples only the smooth factor is used
 * (Gauss-Jacobi; for x^alpha log x Gauss-Jacobi with product weights,
 * Gauss-Laguerre for higher powers of logarithms; QAWS and tanh-sinh as
 * fallbacks).  Smooth pieces use GSL QAG on both parts of the complex
 * integrand through a cache, so each value is computed (and counted) once. */
/* curve_internal.h brings FLINT's headers, which must precede <complex.h> */
#include "curve_internal.h"
#include <flint/fmpq.h>
#include <mpfr.h>

#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>

#include "expr_internal.h"
#include "func_internal.h"
#include "sheetwalk/integrate.h"

static const double PI = 3.14159265358979323846;
static const double EPS = 2.220446049250313e-16;

#define LOOP_VERTICES 16   /* polygon of a small loop: stays within 2% of the circle */
#define QMAX_EXPR 12       /* most turns tried for an expression end */
#define RATIO_TOL 1e-8     /* two radii agree on the ratio after q turns (relative) */
#define SAME_OPERAND 1e-9  /* a turn left an operand unchanged (relative) */
#define RADIUS_RETRIES 3   /* shrink the loop radii (by 16) this often before giving up */
#define GJ_FIRST 4         /* the first Gauss-Jacobi order (see gj_c) */
#define SPLIT_DEPTH 6      /* Jacobi zone [0, X] shrinks to [0, X/4^6] at most */
#define LOG_SPLIT_DEPTH 3  /* Laguerre zone: to [0, X/4^2] at most, then QAWS */
#define BRIDGE_INSET 1e-9  /* half-circle radius (relative to the path scale) that
                              carries the branch past a marked interior vertex */
#define RAY_CHUNK 64.0     /* rays are tracked in pieces [u, 64 u] (own scale each) */
#define RAY_DEPTH 1e-12    /* tracked rays end at s = 1e-12 (u = 1e12 L) */
#define COLLIDE 1e-6       /* curve sheets this close (relative) meet: singular */
#define TS_TMAX 3.5        /* tanh-sinh: |t| <= 3.5, weights below 1e-21 beyond */
#define TS_LEVELS 8        /* tanh-sinh: step 1/2 down to 1/256 */
#define TS_CUT 1e-12       /* tanh-sinh: lower cut x_c (relative) before rounding limits */
#define TRAPEZOID_MAX 16384 /* most nodes on a circle */
#define FAST_DECAY 30.0
#define GROWTH 30.0       /* estimated exponent below -30: growth beyond any power law */
#define ROUNDING_FLOOR 1000.0 /* eps units of the L1 norm: cancellation limit */    /* local exponent above this: F vanishes to all orders */

void sw_integrate_opts_init(sw_integrate_opts *o)
{
    sw_track_opts_init(&o->track);
    o->epsabs = 0;
    o->epsrel = 1e-10; /* the accuracy the product promises for numerical integrals */
    o->aim = 0.01;     /* rules aim two digits below the tolerance */
    o->limit = 500;
    o->circle = 1;
}

void sw_integral_init(sw_integral *r) { memset(r, 0, sizeof *r); }

void sw_integral_clear(sw_integral *r)
{
    if (r == NULL)
        return;
    free(r->piece);
    free(r->end);
    memset(r, 0, sizeof *r);
}

const char *sw_end_rule_name(sw_end_rule r)
{
    switch (r) {
    case SW_RULE_JACOBI: return "gauss-jacobi";
    case SW_RULE_QAWS: return "qaws";
    case SW_RULE_LAGUERRE: return "gauss-laguerre";
    case SW_RULE_TANH_SINH: return "tanh-sinh";
    case SW_RULE_JACOBI_LOG: return "gauss-jacobi-log";
    default: return "none";
    }
}

sw_status sw_integrand_parse(sw_expr **out, const char *text, const sw_params *params,
                             sw_error *err)
{
    *out = NULL;
    sw_expr *e = NULL;
    sw_status st = sw_expr_parse(&e, text, params, SW_EXPR_VAR_Z | SW_EXPR_VAR_W, err);
    if (st != SW_OK)
        return st;
    if (sw_expr_mv_count(e) > 0) {
        char what[160];
        sw_expr_mv_text(what, sizeof what, e, 0);
        sw_expr_free(e);
        return sw_error_set(err, SW_EINPUT,
                            "the integrand must be single-valued in z and w, but '%s' is a "
                            "root, non-integer power or log (put it into the function instead)",
                            what);
    }
    *out = e;
    return SW_OK;
}

/* ------------------------------------------------------------ tracked lines */

typedef struct tline {
    sw_path path;      /* 2 vertices (a bridge: 3) */
    sw_trace tr;
    double complex p, q;
    int eval;          /* 1: quadrature points are looked up here */
    double inset_p, inset_q; /* distance of p / q from a singular point (0: none) */
    double min_step;   /* tracker floor for this line */
} tline;

/* An expression end whose operands have simple structure (operand_orders):
 * inside the disc |x| < xj every operand is u_k = x^(n_k) v_k(x) with v_k
 * within 1/2 of v_k(0), so the branch at any x in (0, xj] follows from the
 * germ GJ at xj in closed form (anchor_jump) and the tracked line starts (or
 * ends) at xj instead of next to the end. */
typedef struct anchor {
    double complex base, dir; /* z = base + x dir */
    double xj, xs;            /* the line's end at xj; nothing is evaluated below xs */
    long *ord;                /* n_k */
    sw_germ gj;               /* the tracked germ at xj */
    sw_germ gs;               /* the germ at xs (reported as the path's end) */
    int whole;                /* every v_k is constant (operands_monomial): the jump
                                 holds on the whole segment */
} anchor;

typedef struct zmap {
    int inf;                  /* 0: z = base + x dir;  1: z = base + dir / x */
    double complex base, dir;
    size_t line0, nline;      /* lines (indices into the context) of this piece */
    /* relative rounding of integrand values next to a singular end at x = 0
       (all 0 elsewhere): rfac * kappa from the cancellation model, and the
       measured noise eta at x = xeta, growing like 1/x towards the end */
    double rfac, eta, xeta;
    const anchor *anc;        /* the end x = 0 (NULL: every point from the lines) */
    const anchor *anc_far;    /* segments: the end x = 1 */
} zmap;

typedef struct ictx {
    const sw_func *f;
    const sw_expr *R;
    const sw_integrate_opts *o;
    double scale;
    size_t evals, steps;
    sw_germ g, h, k;           /* scratch germs */
    int expr;
    size_t nmv;
    const sw_curve *curve;     /* curves: the polynomial (root polishing) */
    int quick;                 /* quadrature points of curves by quick_root */
    long double complex *ld;   /* its exact coefficients in long double */
    long ldm, ldn;
    sw_status st;              /* first failure inside a quadrature callback */
    double l1;                 /* L1 estimate of the last result a rule returned */
    double *piece_l1;          /* per piece */
    sw_error err;
    tline *lines;
    size_t nlines, alloc;
    /* results under construction */
    sw_integral_piece *pieces;
    size_t npieces, apieces;
    sw_integral_end *ends;
    size_t nends, aends;
} ictx;

static double complex map_z(const zmap *m, double complex x)
{
    return m->inf ? m->base + m->dir / x : m->base + x * m->dir;
}

static double complex map_x(const zmap *m, double complex z)
{
    return m->inf ? m->dir / (z - m->base) : (z - m->base) / m->dir;
}

static double complex map_jac(const zmap *m, double complex x)
{
    return m->inf ? -m->dir / (x * x) : m->dir;
}

/* Rounding amplification of an integrand value at z near the singular end of
 * M: operands that vanish at z0 are formed from terms of size |z0| (e.g.
 * 1 - z^2 near z = 1), so their relative error is about eps |z0| / |z - z0|;
 * a power alpha multiplies it by |alpha| (applied by the callers).  At
 * infinity there is no such cancellation. */
static double kappa(const zmap *m, double complex z)
{
    if (m->inf)
        return 1;
    double d = cabs(z - m->base);
    return d > 0 ? 1 + cabs(m->base) / d : 1;
}

static double relnoise(const zmap *m, double complex z)
{
    if (!(m->rfac > 0))
        return 0;
    double x = cabs(map_x(m, z));
    double v = m->rfac * kappa(m, z);
    if (m->eta > 0 && x > 0)
        v = fmax(v, m->eta * m->xeta / x);
    return v;
}

static double complex integrand_at(const ictx *c, double complex z, double complex w)
{
    return c->R ? sw_expr_eval_principal(c->R, z, w) : w;
}

/* The error a rule aims at: aim * epsrel relative, but never below the
 * rounding level of double precision: 100 eps of the value, or of L1 (an
 * estimate of the integral of |F|) when the value cancels. */
static double target(const ictx *c, double tol_abs, double mag, double l1)
{
    return fmax(fmax(tol_abs, fmax(c->o->aim * c->o->epsrel, 100 * EPS) * mag), 100 * EPS * l1);
}

/* Accept the newest of a sequence of fixed rules of growing order?  H, the
 * smooth factor, is analytic near the interval, so the error of the rules
 * falls geometrically: with the differences d and dprev of the last two
 * pairs of rules (d about the error of the older rule), the newer rule's
 * error is at most about d^2 / dprev when the order grows by at least as much
 * as in the pair before; a factor 10 of safety, and never more than d.  The
 * reported error adds the rounding RND of the integrand's values next to the
 * singular end (which more nodes do not reduce).  Returns 1 when converged or
 * down to that rounding (more nodes cannot help); *DPREV is updated. */
static int rule_converged(ictx *c, double complex cur, double complex prev, double *dprev,
                          double asum, double rnd, double tol_abs, double complex *Iv,
                          double *err)
{
    double d = cabs(cur - prev);
    double e = isfinite(*dprev) && *dprev > 0 ? fmin(d, 10 * d * d / *dprev) : d;
    e += 50 * EPS * asum;
    double tol = target(c, tol_abs, cabs(cur), asum);
    c->l1 = asum;
    *Iv = cur;
    *err = e + rnd;
    *dprev = d;
    return e <= fmax(tol, 2 * rnd);
}


static int finite_c(double complex v) { return isfinite(creal(v)) && isfinite(cimag(v)); }

static sw_status fail(ictx *c, sw_status code, const char *msg)
{
    if (c->st == SW_OK) {
        c->st = code;
        sw_error_set(&c->err, code, "%s", msg);
    }
    return code;
}

/* The tracked line of M nearest to Z, and the parameter of Z on it. */
static const tline *find_line(const ictx *c, const zmap *m, double complex z, double *t)
{
    const tline *best = NULL;
    double bestd = INFINITY, bt = 0;
    for (size_t k = m->line0; k < m->line0 + m->nline; k++) {
        const tline *l = &c->lines[k];
        if (!l->eval)
            continue;
        double tt = creal((z - l->p) / (l->q - l->p));
        double d = tt < 0 ? -tt : tt > 1 ? tt - 1 : 0;
        if (d < bestd) {
            bestd = d;
            best = l;
            bt = tt < 0 ? 0 : tt > 1 ? 1 : tt;
        }
    }
    *t = bt;
    return best;
}

/* Curves: the exact rational coefficients of P(z, w) (the curve engine keeps
 * them in FLINT) rounded to long double, c[j (m+1) + k] for z^k w^j.  The
 * engine's double coefficients are rounded to 53 bits, which moves a branch
 * point by about eps / |P_z| -- next to a nearly double branch point (e.g.
 * w^2 = (1-z^2)(1-0.999^2 z^2) near z = 1) far enough to spoil an integral
 * that ends there. */
static int ld_coeffs(ictx *c)
{
    const sw_curve *cv = c->curve;
    slong m = 0, n = 0;
    for (int part = 0; part < 2; part++) {
        const fmpq_mpoly_struct *P = part ? cv->im : cv->re;
        if (fmpq_mpoly_is_zero(P, cv->ctx))
            continue;
        m = FLINT_MAX(m, fmpq_mpoly_degree_si(P, 0, cv->ctx));
        n = FLINT_MAX(n, fmpq_mpoly_degree_si(P, 1, cv->ctx));
    }
    c->ldm = m;
    c->ldn = n;
    c->ld = calloc((size_t)((m + 1) * (n + 1)), sizeof *c->ld);
    if (c->ld == NULL)
        return -1;
    fmpq_t q;
    mpfr_t r;
    fmpq_init(q);
    mpfr_init2(r, 128);
    for (int part = 0; part < 2; part++) {
        const fmpq_mpoly_struct *P = part ? cv->im : cv->re;
        slong len = fmpq_mpoly_length(P, cv->ctx);
        for (slong t = 0; t < len; t++) {
            ulong e[2];
            fmpq_mpoly_get_term_coeff_fmpq(q, P, t, cv->ctx);
            fmpq_mpoly_get_term_exp_ui(e, P, t, cv->ctx);
            fmpq_get_mpfr(r, q, MPFR_RNDN);
            long double v = mpfr_get_ld(r, MPFR_RNDN);
            long double complex *dst = &c->ld[(slong)e[1] * (m + 1) + (slong)e[0]];
            *dst += part ? CMPLXL(0.0L, v) : CMPLXL(v, 0.0L);
        }
    }
    mpfr_clear(r);
    fmpq_clear(q);
    return 0;
}

/* Curves: one Newton step on the selected root with P and P_w evaluated in
 * long double (64-bit significand on x86-64) from the exact coefficients.
 * Next to a branch point the double-precision fiber loses digits to
 * cancellation (e.g. 1 - 1.998 z^2 + 0.998 z^4 near z = 1); the step
 * recovers them.  The correction is used only when it is tiny against the
 * distance to the other roots, so the sheet cannot change. */
static double complex polish_root(const ictx *c, const sw_germ *g)
{
    double complex w = g->s[g->sheet];
    if (c->ld == NULL)
        return w;
    long m = c->ldm, n = c->ldn;
    long double complex zz = g->z, ww = w, P = 0, dP = 0;
    for (long j = n; j >= 0; j--) {
        const long double complex *cc = c->ld + j * (m + 1);
        long double complex a = cc[m];
        for (long k = m - 1; k >= 0; k--)
            a = a * zz + cc[k];
        dP = dP * ww + P;
        P = P * ww + a;
    }
    if (dP == 0)
        return w;
    long double complex dw = P / dP;
    size_t nf = sw_func_degree(c->f);
    double sep = nf > 1 ? sw_fiber_sep(g->s, nf, (size_t)g->sheet) : cabs(w) + 1;
    if (!(cabsl(dw) <= 1e-3L * sep))
        return w;
    return (double complex)(ww - dw);
}

static double complex germ_value(const ictx *c, const sw_germ *g)
{
    return c->ld ? polish_root(c, g) : sw_func_value(c->f, g);
}

/* Walk G straight to Z in as many equal steps as the engine needs (at most
 * MAX_PIECES). */
static int nudge(ictx *c, sw_germ *g, double complex z, int max_pieces)
{
    double complex a = g->z;
    for (int pieces = 1; pieces <= max_pieces; pieces *= 2) {
        sw_germ_copy(&c->h, g);
        int good = 1;
        for (int k = 1; k <= pieces && good; k++) {
            double complex t = k == pieces ? z : a + (z - a) * ((double)k / pieces);
            good = sw_func_advance(&c->k, &c->h, t, c->f, &c->o->track.step, NULL) == SW_STEP_OK;
            if (good)
                sw_germ_copy(&c->h, &c->k);
        }
        if (good) {
            sw_germ_copy(g, &c->h);
            return 0;
        }
    }
    return -1;
}

/* The germ on line L at parameter T, from its dense log: the last logged germ
 * at or before T, walked straight to the point (what sw_trace_germ_at does,
 * without its per-call allocation; it remains the fallback). */
static int log_germ_at(ictx *c, const tline *l, double t, sw_germ *g)
{
    const sw_trace *tr = &l->tr;
    if (tr->nlog == 0)
        return -1;
    sw_trace_logged_germ(g, tr, t);
    double complex target = sw_path_point(&l->path, t);
    if (g->z == target)
        return 0;
    return nudge(c, g, target, 16);
}

/* Curves, quadrature points only: the selected root at parameter T of line L
 * from the nearest logged germ at or before T by a first-order predictor and
 * Newton steps on that root alone (in long double, from the exact
 * coefficients), instead of a step of the whole fiber.  Accepted only when
 * the root moved by less than a tenth of its distance to the other roots of
 * the logged fiber and Newton converged, the same kind of test the curve
 * engine applies to its steps; otherwise -1 (the caller takes the engine's
 * step).  The germ itself is not produced: callers use only the point. */
static int quick_root(const ictx *c, const tline *l, double t, double complex z1,
                      double complex *wout)
{
    const sw_trace *tr = &l->tr;
    if (c->ld == NULL || tr->nlog == 0)
        return -1;
    size_t lo = sw_trace_log_index(tr, t);
    const double complex *fib = tr->state + lo * tr->len;
    size_t n = tr->len, sheet = (size_t)tr->sheet[lo];
    double complex z0 = tr->z[lo], w0 = fib[sheet];
    double sep = n > 1 ? sw_fiber_sep(fib, n, sheet) : cabs(w0) + 1;
    /* predictor and Newton in double on the engine's coefficients ... */
    const sw_curve *cv = c->curve;
    long m = cv->m, nd = cv->n;
    double complex w = w0;
    int conv = 0;
    for (int it = 0; it < 5 && !conv; it++) {
        double complex zz = it == 0 ? z0 : z1, P = 0, Pw = 0, Pz = 0;
        for (long j = nd; j >= 0; j--) {
            const double complex *cc = cv->c + j * (m + 1);
            double complex a = cc[m], da = 0;
            for (long k = m - 1; k >= 0; k--) {
                da = da * zz + a;
                a = a * zz + cc[k];
            }
            Pw = Pw * w + P;
            P = P * w + a;
            Pz = Pz * w + da;
        }
        if (Pw == 0)
            return -1;
        double complex dw = it == 0 ? -Pz / Pw * (z1 - z0) : -P / Pw;
        w += dw;
        conv = it >= 2 && cabs(dw) <= 1e-13 * cabs(w) + 1e-300;
    }
    if (!conv || !(cabs(w - w0) <= 0.1 * sep))
        return -1;
    /* ... then one step in long double from the exact coefficients */
    long lm = c->ldm, ln = c->ldn;
    long double complex zl = z1, wl = w, P = 0, Pw = 0;
    for (long j = ln; j >= 0; j--) {
        const long double complex *cc = c->ld + j * (lm + 1);
        long double complex a = cc[lm];
        for (long k = lm - 1; k >= 0; k--)
            a = a * zl + cc[k];
        Pw = Pw * wl + P;
        P = P * wl + a;
    }
    if (Pw != 0 && cabsl(P / Pw) <= 1e-3L * sep)
        wl -= P / Pw;
    *wout = (double complex)wl;
    return 0;
}

/* F(x) = R(z, w) dz/dx on the tracked branch, at the logged germ nearest the
 * point z(x); *XH receives the local coordinate of the point actually used,
 * c->g the germ there. */
static int anchor_jump(ictx *c, sw_germ *out, const anchor *a, const sw_germ *in, double x,
                       double tol);

static int eval_F(ictx *c, const zmap *m, double x, double complex *F, double complex *xh)
{
    double t;
    const anchor *a = NULL;
    double xa = 0;
    if (m->anc && x < m->anc->xj) {
        a = m->anc;
        xa = x;
    } else if (m->anc_far && 1 - x < m->anc_far->xj) {
        a = m->anc_far;
        xa = 1 - x;
    }
    if (a) {
        /* inside an anchor's disc: the branch in closed form from its germ */
        if (anchor_jump(c, &c->g, a, &a->gj, fmax(xa, a->xs), 1.0) != 0)
            return fail(c, SW_EINTERNAL, "a point next to a singular end could not be "
                                         "reached from the anchor"), -1;
        double complex z = c->g.z, X = map_x(m, z);
        *F = integrand_at(c, z, sw_func_value(c->f, &c->g)) * map_jac(m, X);
        if (xh)
            *xh = X;
        c->evals++;
        return 0;
    }
    if (m->inf && !(x >= RAY_DEPTH))
        x = RAY_DEPTH; /* infinity itself (a rule's end node): the farthest tracked point */
    const tline *l = find_line(c, m, map_z(m, x), &t);
    sw_error e;
    if (l == NULL)
        return fail(c, SW_EINTERNAL, "no tracked line for a quadrature point"), -1;
    double complex zq = sw_path_point(&l->path, t), wq;
    if (c->quick && quick_root(c, l, t, zq, &wq) == 0) {
        c->g.z = zq; /* only the point is used by the caller (see quick_root) */
        double complex Xq = map_x(m, zq);
        *F = integrand_at(c, zq, wq) * map_jac(m, Xq);
        if (xh)
            *xh = Xq;
        c->evals++;
        return 0;
    }
    if (log_germ_at(c, l, t, &c->g) != 0 &&
        sw_trace_germ_at(&c->g, &l->tr, c->f, t, &l->path, &e) != SW_OK) {
        /* a point a rounding error away from an inset end (next to a
           singular end the engine may refuse even a tiny step): the logged
           germ at the end is as good, the local coordinate of the point
           actually used enters the rules */
        double len = cabs(l->q - l->p);
        if ((l->inset_p && t * len <= 1e-3 * l->inset_p) ||
            (l->inset_q && (1 - t) * len <= 1e-3 * l->inset_q)) {
            const sw_germ *v = (l->inset_p && t * len <= 1e-3 * l->inset_p)
                                   ? &l->tr.vert[0] : &l->tr.vert[l->tr.nvert - 1];
            sw_germ_copy(&c->g, v);
        } else {
            return fail(c, e.code, e.msg), -1;
        }
    }
    double complex z = c->g.z, w = germ_value(c, &c->g);
    double complex X = map_x(m, z);
    *F = integrand_at(c, z, w) * map_jac(m, X);
    if (xh)
        *xh = X;
    c->evals++;
    return 0;
}

/* Expressions: F at the germ G with the logarithm of operand k shifted by
 * 2 pi i TURNS * shift[k] (the germ layout: u_k at s[2k], L_k at s[2k+1]). */
static double complex eval_shifted(ictx *c, const zmap *m, const sw_germ *g, const long *shift,
                                   long turns)
{
    sw_germ_copy(&c->h, g);
    for (size_t k = 0; k < c->nmv; k++)
        c->h.s[2 * k + 1] += CMPLX(0.0, 2 * PI * (double)(shift[k] * turns));
    double complex w = sw_func_value(c->f, &c->h);
    c->evals++;
    return integrand_at(c, g->z, w) * map_jac(m, map_x(m, g->z));
}

/* ------------------------------------------------- QAG on complex values */

typedef int (*cfn)(void *arg, double x, double complex *v, double complex *aux);

typedef struct centry {
    double x;
    int used;
    double complex v, aux;
} centry;

typedef struct qarg {
    cfn fn;
    void *arg;
    centry *tab;
    size_t cap, n;
    int part;     /* 0: Re v, 1: Im v, 2: Re aux, 3: Im aux */
    int failed;
} qarg;

static size_t hash_x(double x, size_t cap)
{
    uint64_t b;
    memcpy(&b, &x, sizeof b);
    b ^= b >> 33;
    b *= 0xff51afd7ed558ccdull;
    b ^= b >> 33;
    return (size_t)b & (cap - 1);
}

static int cache_grow(qarg *q)
{
    size_t ncap = q->cap ? 2 * q->cap : 256;
    centry *nt = calloc(ncap, sizeof *nt);
    if (nt == NULL)
        return -1;
    for (size_t k = 0; k < q->cap; k++)
        if (q->tab[k].used) {
            size_t h = hash_x(q->tab[k].x, ncap);
            while (nt[h].used)
                h = (h + 1) & (ncap - 1);
            nt[h] = q->tab[k];
        }
    free(q->tab);
    q->tab = nt;
    q->cap = ncap;
    return 0;
}

static double qpart(double x, void *p)
{
    qarg *q = p;
    if (q->failed)
        return 0;
    if (2 * (q->n + 1) > q->cap && cache_grow(q) != 0) {
        q->failed = 1;
        return 0;
    }
    size_t h = hash_x(x, q->cap);
    while (q->tab[h].used && q->tab[h].x != x)
        h = (h + 1) & (q->cap - 1);
    centry *e = &q->tab[h];
    if (!e->used) {
        e->aux = 0;
        if (q->fn(q->arg, x, &e->v, &e->aux) != 0) {
            q->failed = 1;
            return 0;
        }
        e->x = x;
        e->used = 1;
        q->n++;
    }
    double complex v = q->part < 2 ? e->v : e->aux;
    double r = (q->part & 1) ? cimag(v) : creal(v);
    if (!isfinite(r)) {
        q->failed = 1;
        return 0;
    }
    return r;
}

typedef struct mapfn {
    ictx *c;
    const zmap *m;
} mapfn;

static int map_eval(void *arg, double x, double complex *v, double complex *aux)
{
    mapfn *a = arg;
    (void)aux;
    if (eval_F(a->c, a->m, x, v, NULL) != 0)
        return -1;
    if (!finite_c(*v)) {
        char msg[200];
        double complex z = a->c->g.z;
        snprintf(msg, sizeof msg,
                 "the integrand is not finite at z = %.10g%+.10gi on the path (a pole or a "
                 "singular point inside a segment: make it a vertex or avoid it)",
                 creal(z), cimag(z));
        return fail(a->c, SW_ESINGULAR, msg), -1;
    }
    return 0;
}

/* int_a^b F(x) dx by QAG on both parts.  TOL_ABS is the absolute target;
 * with tol_abs <= 0 the target is aim * epsrel * |estimate|. */
/* Rounding of the integrand values a rule used next to a singular end: a
 * trapezoidal sum over the sorted nodes of the cache of |F| kappa times
 * RFAC (see kappa()).  PART_LOG: the cache holds (A, B) of a logarithmic end
 * with exponent ALPHA, F = x^alpha (A log x + B). */
static int cmp_dbl(const void *pa, const void *pb)
{
    double a = *(const double *)pa, b = *(const double *)pb;
    return a < b ? -1 : a > b;
}

static double cache_rounding(const qarg *q, const zmap *m, double a, double b, int part_log,
                             double complex alpha)
{
    if (!(m->rfac > 0) || q->n == 0)
        return 0;
    double *xs = malloc(2 * q->n * sizeof *xs);
    if (xs == NULL)
        return 0;
    size_t n = 0;
    for (size_t k = 0; k < q->cap; k++)
        if (q->tab[k].used) {
            const centry *e = &q->tab[k];
            double complex F = e->v;
            if (part_log)
                F = cpow(e->x, alpha) * (e->v * log(e->x) + e->aux);
            xs[2 * n] = e->x;
            xs[2 * n + 1] = cabs(F) * relnoise(m, map_z(m, e->x));
            n++;
        }
    qsort(xs, n, 2 * sizeof *xs, cmp_dbl);
    double sum = xs[1] * (xs[0] - a) + xs[2 * n - 1] * (b - xs[2 * n - 2]);
    for (size_t k = 0; k + 1 < n; k++)
        sum += (xs[2 * k + 2] - xs[2 * k]) * (xs[2 * k + 1] + xs[2 * k + 3]) / 2;
    free(xs);
    return isfinite(sum) ? fabs(sum) : 0;
}

static int qag_c(ictx *c, cfn fn, void *arg, double a, double b, double tol_abs,
                 const zmap *km, double complex *val, double *abserr, int *ok)
{
    qarg q = {fn, arg, NULL, 0, 0, 0, 0};
    gsl_function gf = {qpart, &q};
    double rr, er, ri, ei, ra, rs, ra2;
    int rc = 0;
    q.part = 0;
    gsl_integration_qk21(&gf, a, b, &rr, &er, &ra, &rs);
    q.part = 1;
    gsl_integration_qk21(&gf, a, b, &ri, &ei, &ra2, &rs);
    if (q.failed) {
        rc = -1;
        goto done;
    }
    double est = cabs(CMPLX(rr, ri));
    c->l1 = ra + ra2;
    double tol = target(c, tol_abs, est, c->l1);
    if (!(tol > 0))
        tol = 1e-300;
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(c->o->limit);
    if (w == NULL) {
        rc = -1;
        fail(c, SW_ENOMEM, "out of memory");
        goto done;
    }
    q.part = 0;
    int s1 = gsl_integration_qag(&gf, a, b, tol / 2, 0, c->o->limit, GSL_INTEG_GAUSS21, w, &rr,
                                 &er);
    q.part = 1;
    int s2 = gsl_integration_qag(&gf, a, b, tol / 2, 0, c->o->limit, GSL_INTEG_GAUSS21, w, &ri,
                                 &ei);
    gsl_integration_workspace_free(w);
    if (q.failed) {
        rc = -1;
        goto done;
    }
    *val = CMPLX(rr, ri);
    *abserr = er + ei + (km ? cache_rounding(&q, km, a, b, 0, 0) : 0);
    *ok = s1 == GSL_SUCCESS && s2 == GSL_SUCCESS;
done:
    free(q.tab);
    if (rc != 0 && c->st == SW_OK)
        fail(c, SW_EINTERNAL, "a quadrature point could not be evaluated");
    return rc;
}

/* Next to a singular end (m->rfac > 0) the rounding of the values there is
 * added to the error. */
static int qag_map(ictx *c, const zmap *m, double a, double b, double tol_abs,
                   double complex *val, double *abserr, int *ok)
{
    mapfn mf = {c, m};
    return qag_c(c, map_eval, &mf, a, b, tol_abs, m, val, abserr, ok);
}

/* ------------------------------------------------------ end analysis */

typedef enum { END_REGULAR, END_PURE, END_LOG, END_OTHER } end_kind;

typedef struct endinfo {
    end_kind kind;
    int q;
    double complex alpha;   /* local exponent of F in x */
    double complex mu;      /* END_LOG: exp(2 pi i alpha) */
    long *shift;            /* END_LOG: turns of every operand (nmv entries) */
    int exact;
    double alpha_num;       /* numerical estimate of Re alpha */
    int logdeg;             /* END_LOG: degree of the polynomial in log x (1..3) */
    double reach;           /* the expansion holds for x below this (local units) */
} endinfo;

static void endinfo_clear(endinfo *e)
{
    free(e->shift);
    memset(e, 0, sizeof *e);
}

/* Continue G once around the local origin on |x| = R, counter-clockwise in
 * x (for the map at infinity that is a clockwise circle in z). */
static int loop_once(ictx *c, const zmap *m, sw_germ *g, double r)
{
    sw_path p;
    sw_trace tr;
    sw_path_init(&p);
    sw_trace_init(&tr);
    int rc = -1;
    sw_error e;
    if (sw_path_push(&p, g->z, SW_BANK_NONE, &e) != SW_OK)
        goto done;
    /* curve steps may turn by up to about pi around a branch point (roots
       move less than half their separation); expression steps by 1/2 radian
       per order of the operand's zero (the ratio test) */
    int nv = c->curve ? LOOP_VERTICES / 2 : LOOP_VERTICES;
    for (int k = 1; k < nv; k++) {
        double a = 2 * PI * k / nv;
        if (sw_path_push(&p, map_z(m, r * CMPLX(cos(a), sin(a))), SW_BANK_NONE, &e) != SW_OK)
            goto done;
    }
    if (sw_path_push(&p, g->z, SW_BANK_NONE, &e) != SW_OK)
        goto done;
    sw_track_opts o = c->o->track;
    o.keep_log = 0;
    sw_germ start = *g;
    start.bank = SW_BANK_NONE;
    if (sw_track_run(&tr, c->f, &start, &p, &o, &e) != SW_OK)
        goto done;
    c->steps += tr.steps;
    sw_germ_copy(g, &tr.vert[tr.nvert - 1]);
    rc = 0;
done:
    sw_trace_clear(&tr);
    sw_path_clear(&p);
    return rc;
}

/* Expressions: does G2 (G after one turn) differ from G only by 2 pi i n_k
 * in the logarithms?  Fills SHIFT. */
static int shift_of(ictx *c, const sw_germ *g, const sw_germ *g2, long *shift)
{
    for (size_t k = 0; k < c->nmv; k++) {
        double complex u0 = g->s[2 * k], u1 = g2->s[2 * k];
        if (cabs(u1 - u0) > SAME_OPERAND * cabs(u0))
            return 0;
        double complex dL = g2->s[2 * k + 1] - g->s[2 * k + 1];
        double n = cimag(dL) / (2 * PI);
        if (fabs(creal(dL)) > 1e-9 || fabs(n - nearbyint(n)) > 1e-9)
            return 0;
        shift[k] = lround(n);
    }
    return 1;
}

static double complex exponent_mod(double complex mu, int q)
{
    /* mu = exp(2 pi i q alpha): q alpha = arg(mu)/(2 pi) - i ln|mu|/(2 pi) mod 1 */
    (void)q;
    return CMPLX(carg(mu) / (2 * PI), -log(cabs(mu)) / (2 * PI));
}

/* Local log-slopes of |F| at x = X/8, X/16, ..., X/256, accelerated by
 * Aitken's delta-squared: an estimate of Re alpha. */
static int slope_estimate(ictx *c, const zmap *m, double X, double *an, int *zero)
{
    double complex Fs[6], xh[6];
    int zeros = 0;
    *zero = 0;
    for (int j = 0; j < 6; j++) {
        if (eval_F(c, m, X / (double)(8 << j), &Fs[j], &xh[j]) != 0)
            return -1;
        if (!finite_c(Fs[j])) {
            *an = -INFINITY;
            return 0;
        }
        zeros += Fs[j] == 0;
    }
    if (zeros == 6) {
        *zero = 1;
        *an = INFINITY;
        return 0;
    }
    double lam[5];
    for (int j = 0; j < 5; j++) {
        double p = cabs(Fs[j]), q = cabs(Fs[j + 1]);
        lam[j] = (p > 0 && q > 0) ? log(p / q) / log(cabs(xh[j]) / cabs(xh[j + 1]))
                                  : (q == 0 ? INFINITY : -INFINITY);
    }
    double v = lam[4];
    double den = lam[4] - 2 * lam[3] + lam[2];
    if (isfinite(den) && fabs(den) > 1e-12) {
        double ait = lam[4] - (lam[4] - lam[3]) * (lam[4] - lam[3]) / den;
        if (isfinite(ait) && fabs(ait - lam[4]) < 0.5)
            v = ait;
    }
    *an = v;
    return 0;
}

#define NRADII 4           /* loop radii X0/16, X0/256, X0/4096, X0/65536 */

/* Expressions: F at the germ G with only the logarithms of power nodes (not
 * of log nodes) shifted by TURNS turns of SHIFT. */
static double complex eval_shifted_powers(ictx *c, const zmap *m, const sw_germ *g,
                                          const long *shift, long turns)
{
    const sw_expr *e = sw_func_expr(c->f);
    sw_germ_copy(&c->h, g);
    for (size_t k = 0; k < c->nmv; k++)
        if (e->node[e->mv_node[k]].kind != N_LOG)
            c->h.s[2 * k + 1] += CMPLX(0.0, 2 * PI * (double)(shift[k] * turns));
    double complex w = sw_func_value(c->f, &c->h);
    c->evals++;
    return integrand_at(c, g->z, w) * map_jac(m, map_x(m, g->z));
}

#define LOG_DEGREE_MAX 3

/* h_k = F_k / mu^k at the germ G (F_0 = FK0 and F_1 = FK1 already known):
 * a polynomial of degree p in k exactly when its (p+1)-th difference
 * vanishes.  Returns the least such p in 1..LOG_DEGREE_MAX (values computed
 * only as far as needed), or 0. */
static int log_poly_degree(ictx *c, const zmap *m, const sw_germ *g, const long *shift,
                           double complex mu, double complex Fk0, double complex Fk1)
{
    double complex h[LOG_DEGREE_MAX + 2];
    h[0] = Fk0;
    h[1] = Fk1 / mu;
    double big = fmax(cabs(h[0]), cabs(h[1]));
    for (int p = 1; p <= LOG_DEGREE_MAX; p++) {
        h[p + 1] = eval_shifted(c, m, g, shift, p + 1) / cpow(mu, p + 1);
        big = fmax(big, cabs(h[p + 1]));
        /* (p+1)-th and p-th differences at 0 */
        double complex d1 = 0, d0 = 0;
        double b1 = 1, b0 = 1;
        for (int j = 0; j <= p + 1; j++) {
            d1 += ((p + 1 - j) % 2 ? -1 : 1) * b1 * h[j];
            b1 = b1 * (p + 1 - j) / (j + 1);
        }
        for (int j = 0; j <= p; j++) {
            d0 += ((p - j) % 2 ? -1 : 1) * b0 * h[j];
            b0 = b0 * (p - j) / (j + 1);
        }
        if (cabs(d1) <= RATIO_TOL * big * (1 << p))
            return cabs(d0) > RATIO_TOL * big ? p : 0;
    }
    return 0;
}

/* Look for a logarithmic end (see analyze_end) from the values F0 and, after
 * one turn, F1 on the ladder; fills EI and returns the degree p, 0 when the
 * end is not of that kind, -1 on failure. */
static int log_degree(ictx *c, const zmap *m, const sw_germ *g, const long *shift, int J,
                      const double complex *F0, const double complex *F1, const int *alive,
                      const int *shiftok, const double *r, double X0, endinfo *ei)
{
    if (!alive[J] || !alive[J - 1] || !shiftok[J] || !shiftok[J - 1])
        return 0;
    const long *sJ = shift + (size_t)J * c->nmv, *sJ1 = shift + (size_t)(J - 1) * c->nmv;
    double complex mu = eval_shifted_powers(c, m, &g[J], sJ, 1) / F0[J];
    double complex mu1 = eval_shifted_powers(c, m, &g[J - 1], sJ1, 1) / F0[J - 1];
    if (!finite_c(mu) || cabs(mu - mu1) > RATIO_TOL * fmax(1.0, cabs(mu)))
        return 0;
    int p = log_poly_degree(c, m, &g[J], sJ, mu, F0[J], F1[J]);
    if (p == 0 || log_poly_degree(c, m, &g[J - 1], sJ1, mu, F0[J - 1], F1[J - 1]) != p)
        return 0;
    ei->kind = END_LOG;
    ei->q = 1;
    ei->logdeg = p;
    ei->mu = mu;
    ei->shift = malloc(c->nmv * sizeof *ei->shift);
    if (ei->shift == NULL) {
        fail(c, SW_ENOMEM, "out of memory");
        return -1;
    }
    memcpy(ei->shift, sJ, c->nmv * sizeof *ei->shift);
    /* reach: the larger radii with the same turns and the same structure */
    int top = J - 1;
    while (top > 0 && alive[top - 1] && shiftok[top - 1] &&
           memcmp(shift + (size_t)(top - 1) * c->nmv, sJ, c->nmv * sizeof *sJ) == 0) {
        const long *st = shift + (size_t)(top - 1) * c->nmv;
        double complex mt = eval_shifted_powers(c, m, &g[top - 1], st, 1) / F0[top - 1];
        if (cabs(mt - mu) > RATIO_TOL * fmax(1.0, cabs(mu)) ||
            log_poly_degree(c, m, &g[top - 1], st, mu, F0[top - 1], F1[top - 1]) != p)
            break;
        top--;
    }
    ei->reach = top == 0 ? X0 : r[top];
    return p;
}

/* ------------------------------------------- operand orders from the tree */

/* Expressions whose multivalued nodes (powers with constant exponent, logs)
 * take operands built from z alone by + - * / integer powers, exp and the
 * trigonometric and hyperbolic functions: each operand is single-valued and
 * meromorphic at the end, u_k = x^(n_k) v_k(x) with v_k analytic and
 * v_k(0) != 0.  Once around the end (counter-clockwise in x) continues its
 * logarithm by exactly 2 pi i n_k, so the turns the loops of analyze_end
 * would find are read off the tree instead of being tracked.  The orders
 * n_k come from truncated Laurent series (jets) of the operands in x;
 * coefficients that cancel to rounding are dropped, and a cancellation that
 * is neither clean nor absent leaves the decision to the loops. */
#define JET_TERMS 10       /* Laurent terms kept per operand */
#define JET_ZERO 1e3       /* eps units of the terms' size: a cancelled coefficient */
#define JET_UNSURE 1e-8    /* above JET_ZERO eps, below this (relative): no decision */

typedef struct jet {
    int ord;                    /* value = x^ord sum_i c[i] x^i, c[0] != 0 */
    int nt;                     /* terms known */
    double complex c[JET_TERMS];
    double s[JET_TERMS];        /* size of the terms that formed c[i] (rounding scale) */
} jet;

/* Drop leading coefficients that cancelled; 0 on success, -1 when the
 * order cannot be decided. */
static int jet_norm(jet *j)
{
    int d = 0;
    while (d < j->nt) {
        double a = cabs(j->c[d]), s = j->s[d];
        if (a > JET_UNSURE * s)
            break;
        if (a > JET_ZERO * EPS * s)
            return -1;
        d++;
    }
    if (d == j->nt)
        return -1; /* cancelled to rounding in every known term */
    if (d > 0) {
        for (int i = 0; i + d < j->nt; i++) {
            j->c[i] = j->c[i + d];
            j->s[i] = j->s[i + d];
        }
        j->nt -= d;
        j->ord += d;
    }
    return 0;
}

static void jet_const(jet *j, double complex v)
{
    memset(j, 0, sizeof *j);
    j->nt = JET_TERMS;
    j->c[0] = v;
    j->s[0] = cabs(v);
}

static int jet_add(jet *r, const jet *a, const jet *b, double sign)
{
    int o = a->ord < b->ord ? a->ord : b->ord;
    int da = a->ord - o, db = b->ord - o;
    int nt = a->nt + da < b->nt + db ? a->nt + da : b->nt + db;
    if (nt > JET_TERMS)
        nt = JET_TERMS;
    jet t;
    memset(&t, 0, sizeof t);
    t.ord = o;
    t.nt = nt;
    for (int i = 0; i < nt; i++) {
        if (i >= da) {
            t.c[i] += a->c[i - da];
            t.s[i] += a->s[i - da];
        }
        if (i >= db) {
            t.c[i] += sign * b->c[i - db];
            t.s[i] += b->s[i - db];
        }
    }
    *r = t;
    return jet_norm(r);
}

static void jet_mul(jet *r, const jet *a, const jet *b)
{
    jet t;
    memset(&t, 0, sizeof t);
    t.ord = a->ord + b->ord;
    t.nt = a->nt < b->nt ? a->nt : b->nt;
    for (int i = 0; i < t.nt; i++)
        for (int j = 0; j <= i; j++) {
            t.c[i] += a->c[j] * b->c[i - j];
            t.s[i] += a->s[j] * b->s[i - j];
        }
    *r = t;
}

static void jet_div(jet *r, const jet *a, const jet *b)
{
    jet t;
    memset(&t, 0, sizeof t);
    t.ord = a->ord - b->ord;
    t.nt = a->nt < b->nt ? a->nt : b->nt;
    double b0 = cabs(b->c[0]);
    for (int i = 0; i < t.nt; i++) {
        double complex v = a->c[i];
        double s = a->s[i];
        for (int j = 1; j <= i; j++) {
            v -= b->c[j] * t.c[i - j];
            s += b->s[j] * t.s[i - j];
        }
        t.c[i] = v / b->c[0];
        t.s[i] = s / b0;
    }
    *r = t;
}

/* exp(sign * g) for an argument analytic at the end (ord >= 0), as a jet of
 * order 0: e_0 = exp(g_0), i e_i = sum_j j g_j e_(i-j). */
static int jet_exp(jet *r, const jet *a, double complex sign)
{
    if (a->ord < 0)
        return -1; /* an essential singularity */
    double complex g[JET_TERMS] = {0};
    double sg[JET_TERMS] = {0};
    int nt = a->nt + a->ord < JET_TERMS ? a->nt + a->ord : JET_TERMS;
    for (int i = a->ord; i < nt; i++) {
        g[i] = sign * a->c[i - a->ord];
        sg[i] = a->s[i - a->ord];
    }
    jet t;
    memset(&t, 0, sizeof t);
    t.nt = nt;
    t.c[0] = cexp(g[0]);
    t.s[0] = cabs(t.c[0]);
    for (int i = 1; i < nt; i++) {
        double complex v = 0;
        double s = 0;
        for (int j = 1; j <= i; j++) {
            v += (double)j * g[j] * t.c[i - j];
            s += (double)j * sg[j] * t.s[i - j];
        }
        t.c[i] = v / (double)i;
        t.s[i] = s / (double)i;
    }
    *r = t;
    return 0;
}

/* sin, cos, sinh, cosh, tan, tanh from exponentials */
static int jet_trig(jet *r, const jet *a, sw_node_kind kind)
{
    int circ = kind == N_SIN || kind == N_COS || kind == N_TAN;
    double complex i1 = circ ? I : 1;
    jet ep, em, s, c;
    if (jet_exp(&ep, a, i1) != 0 || jet_exp(&em, a, -i1) != 0)
        return -1;
    /* sinh-like = (ep - em) / 2 (divided by i for sin); cosh-like = (ep + em) / 2 */
    if (jet_add(&s, &ep, &em, -1) != 0 && kind != N_COS && kind != N_COSH)
        return -1;
    if (jet_add(&c, &ep, &em, 1) != 0 && kind != N_SIN && kind != N_SINH)
        return -1;
    double complex hs = circ ? 1 / (2 * I) : 0.5;
    for (int i = 0; i < JET_TERMS; i++) {
        s.c[i] *= hs;
        s.s[i] *= 0.5;
        c.c[i] *= 0.5;
        c.s[i] *= 0.5;
    }
    if (kind == N_SIN || kind == N_SINH)
        *r = s;
    else if (kind == N_COS || kind == N_COSH)
        *r = c;
    else
        jet_div(r, &s, &c);
    return 0;
}

/* Jets of every node up to the root of each multivalued operand at the end
 * x = 0 of M; fills ORD (n_k) and, when REACH is not NULL, the radius in x
 * within which no v_k can vanish by the known terms (a root of the series
 * sum |c_i / c_0| r^i = 1/2 bounds it from below).  Returns 0, or -1 when
 * the tree is not of the simple kind (then the loops decide). */
static int operand_orders(const ictx *c, const zmap *m, long *ord, double *reach)
{
    if (!c->expr || c->nmv == 0 || c->R != NULL)
        return -1;
    const sw_expr *e = sw_func_expr(c->f);
    jet stackj[64];
    char stackd[64];
    jet *J = e->n <= 64 ? stackj : malloc(e->n * sizeof *J);
    char *dep = e->n <= 64 ? stackd : malloc(e->n);
    int rc = 0;
    if (J == NULL || dep == NULL) {
        rc = -1;
        goto done;
    }
    double rmin = INFINITY;
    for (size_t k = 0; k < e->n && rc == 0; k++) {
        const sw_node *nd = &e->node[k];
        dep[k] = (char)(nd->mv >= 0 || (nd->a >= 0 && dep[nd->a]) || (nd->b >= 0 && dep[nd->b]));
        if (nd->mv >= 0) {
            /* a power with constant exponent or a log, of an operand free of
               other multivalued nodes */
            if (nd->kind == N_POWG || dep[nd->a]) {
                rc = -1;
                break;
            }
            const jet *u = &J[nd->a];
            ord[nd->mv] = u->ord;
            if (reach) {
                /* the root of sum_i |c_i / c_0| r^i = 1/2 (increasing in r),
                   by bisection on log r */
                double q[JET_TERMS], c0 = cabs(u->c[0]), lo = -60, hi = 60;
                int top = 0;
                for (int i = 1; i < u->nt; i++)
                    if ((q[i] = cabs(u->c[i]) / c0) > 0)
                        top = i;
                for (int it = 0; it < 24 && top > 0; it++) {
                    double mid = 0.5 * (lo + hi), r = exp(mid), sum = 0;
                    for (int i = top; i >= 1; i--)
                        sum = (sum + q[i]) * r;
                    if (sum > 0.5)
                        hi = mid;
                    else
                        lo = mid;
                }
                rmin = fmin(rmin, top == 0 ? INFINITY : exp(lo));
            }
            continue;
        }
        if (dep[k] || !e->need[k])
            continue; /* above the operands: not needed here */
        const jet *a = nd->a >= 0 ? &J[nd->a] : NULL, *b = nd->b >= 0 ? &J[nd->b] : NULL;
        switch (nd->kind) {
        case N_CONST:
            if (nd->c == 0)
                rc = -1;
            else
                jet_const(&J[k], nd->c);
            break;
        case N_Z:
            /* segment: z = base + dir x;  ray: z = x^-1 (dir + base x) */
            if (m->inf) {
                jet_const(&J[k], m->dir);
                J[k].ord = -1;
                J[k].c[1] = m->base;
                J[k].s[1] = cabs(m->base);
            } else if (m->base == 0) {
                jet_const(&J[k], m->dir);
                J[k].ord = 1;
            } else {
                jet_const(&J[k], m->base);
                J[k].c[1] = m->dir;
                J[k].s[1] = cabs(m->dir);
            }
            break;
        case N_ADD: rc = jet_add(&J[k], a, b, 1); break;
        case N_SUB: rc = jet_add(&J[k], a, b, -1); break;
        case N_MUL: jet_mul(&J[k], a, b); break;
        case N_DIV: jet_div(&J[k], a, b); break;
        case N_NEG:
            J[k] = *a;
            for (int i = 0; i < JET_TERMS; i++)
                J[k].c[i] = -J[k].c[i];
            break;
        case N_POWI: {
            long p = nd->k < 0 ? -nd->k : nd->k;
            jet r, sq = *a;
            jet_const(&r, 1);
            for (; p > 0; p >>= 1) {
                if (p & 1)
                    jet_mul(&r, &r, &sq);
                if (p > 1)
                    jet_mul(&sq, &sq, &sq);
            }
            if (nd->k < 0) {
                jet one;
                jet_const(&one, 1);
                jet_div(&J[k], &one, &r);
            } else {
                J[k] = r;
            }
            break;
        }
        case N_EXP: rc = jet_exp(&J[k], a, 1); break;
        case N_SIN: case N_COS: case N_TAN: case N_SINH: case N_COSH: case N_TANH:
            rc = jet_trig(&J[k], a, nd->kind);
            break;
        default: rc = -1; break; /* w, or anything new */
        }
        if (rc == 0 && (J[k].nt < 1 || !finite_c(J[k].c[0]) || J[k].c[0] == 0))
            rc = -1;
    }
    if (rc == 0 && reach)
        *reach = rmin;
done:
    if (J != stackj)
        free(J);
    if (dep != stackd)
        free(dep);
    return rc;
}

/* Expressions on a segment: when F = C x^alpha P(x) (log x + c0) or
 * C x^alpha P(x) exactly, with P a polynomial, a bound on the degree of P;
 * -1 when the tree does not show that form.  Read from the tree alone:
 * every multivalued operand is a monomial in x (constants and z, with the
 * end at z = 0, under products, quotients and integer powers), multivalued
 * nodes enter only through products, quotients by powers and integer powers
 * of powers, at most one logarithm, and everything else is a polynomial in z
 * (degree bound: z 1, sums max, products sum).  Then A and B of the product
 * rule are polynomials of that degree and the rule of order n is exact for
 * degree n - 1 (see log_weights). */
static int smooth_degree(const ictx *c, const zmap *m)
{
    if (!c->expr || c->nmv == 0 || c->R != NULL || m->inf)
        return -1;
    const sw_expr *e = sw_func_expr(c->f);
    if (e->n == 0 || e->n > 64)
        return -1;
    int deg[64], logs[64];
    char dep[64], mono[64];
    for (size_t k = 0; k < e->n; k++) {
        const sw_node *nd = &e->node[k];
        int a = nd->a, b = nd->b;
        dep[k] = (char)(nd->mv >= 0 || (a >= 0 && dep[a]) || (b >= 0 && dep[b]));
        logs[k] = 0;
        mono[k] = 0;
        if (nd->mv >= 0) {
            if ((nd->kind != N_POW && nd->kind != N_LOG) || a < 0 || dep[a] || !mono[a])
                return -1;
            deg[k] = 0;
            logs[k] = nd->kind == N_LOG;
            continue;
        }
        if (!dep[k]) {
            switch (nd->kind) {
            case N_CONST: deg[k] = 0; mono[k] = 1; break;
            case N_Z: deg[k] = 1; mono[k] = m->base == 0; break;
            case N_ADD: case N_SUB: deg[k] = deg[a] > deg[b] ? deg[a] : deg[b]; break;
            case N_MUL: deg[k] = deg[a] + deg[b]; mono[k] = mono[a] && mono[b]; break;
            case N_DIV:
                /* a quotient is a polynomial only by a constant; monomials
                   stay monomials (as multivalued operands) */
                mono[k] = mono[a] && mono[b];
                deg[k] = deg[b] == 0 ? deg[a] : 64;
                break;
            case N_NEG: deg[k] = deg[a]; mono[k] = mono[a]; break;
            case N_POWI:
                mono[k] = mono[a];
                deg[k] = nd->k >= 0 && nd->k <= 64 ? (int)nd->k * deg[a]
                                                   : deg[a] == 0 ? 0 : 64;
                break;
            default: return -1;
            }
            if (deg[k] > 64)
                deg[k] = 64;
            continue;
        }
        /* above a multivalued node */
        switch (nd->kind) {
        case N_MUL:
            deg[k] = deg[a] + deg[b];
            logs[k] = logs[a] + logs[b];
            break;
        case N_DIV:
            if (deg[b] != 0 || logs[b] != 0)
                return -1;
            deg[k] = deg[a];
            logs[k] = logs[a];
            break;
        case N_NEG: deg[k] = deg[a]; logs[k] = logs[a]; break;
        case N_POWI:
            if (logs[a] != 0 || deg[a] != 0)
                return -1;
            deg[k] = 0;
            break;
        default: return -1;
        }
        if (deg[k] > 64 || logs[k] > 1)
            return -1;
    }
    return deg[e->n - 1] < 64 ? deg[e->n - 1] : -1;
}

/* Expressions: every multivalued operand is built from nonzero constants
 * and z by products, quotients and integer powers, and the end BASE is
 * z = 0: each operand is c x^(n_k) exactly on a segment from there (the jets
 * of operand_orders are then not truncated).  1 or 0. */
static int operands_monomial(const ictx *c, double complex base)
{
    if (!c->expr || c->nmv == 0 || base != 0)
        return 0;
    const sw_expr *e = sw_func_expr(c->f);
    if (e->n == 0 || e->n > 64)
        return 0;
    char dep[64], mono[64];
    for (size_t k = 0; k < e->n; k++) {
        const sw_node *nd = &e->node[k];
        int a = nd->a, b = nd->b;
        dep[k] = (char)(nd->mv >= 0 || (a >= 0 && dep[a]) || (b >= 0 && dep[b]));
        mono[k] = 0;
        if (nd->mv >= 0) {
            if (a < 0 || dep[a] || !mono[a])
                return 0;
            continue;
        }
        if (dep[k])
            continue;
        switch (nd->kind) {
        case N_CONST: mono[k] = nd->c != 0 && finite_c(nd->c); break;
        case N_Z: mono[k] = 1; break;
        case N_MUL: case N_DIV: mono[k] = mono[a] && mono[b]; break;
        case N_NEG: case N_POWI: mono[k] = mono[a]; break;
        default: break;
        }
    }
    return 1;
}

/* The germ at X in (0, xj] of anchor A from the germ IN at another point of
 * its disc: L_k(x) = Log u_k(x) + 2 pi i m_k with m_k the integer nearest to
 * the continuation Im L_k(in) + Arg(v_k(x) / v_k(x_in)), v_k = u_k / x^(n_k)
 * (on the segment x is real and positive, so x^(n_k) adds no argument; the
 * disc keeps v_k within 1/2 of v_k(0), so the ratio stays in the right half
 * plane and its principal Arg is the continued one).  As a check of the
 * truncated series, -1 when some |v_k(x)/v_k(x_in) - 1| exceeds TOL. */
static int anchor_jump(ictx *c, sw_germ *out, const anchor *a, const sw_germ *in, double x,
                       double tol)
{
    const sw_expr *e = sw_func_expr(c->f);
    double complex stackbuf[256], v;
    double complex *vals = e->n <= 256 ? stackbuf : malloc(e->n * sizeof *vals);
    if (vals == NULL)
        return -1;
    double complex z = a->base + x * a->dir;
    double xin = creal((in->z - a->base) / a->dir), xo = creal((z - a->base) / a->dir);
    int rc = sw_expr_principal_state(&v, out->s, e, z, 0, vals) == -1 && xin > 0 && xo > 0
                 ? 0 : -1;
    for (size_t k = 0; k < c->nmv && rc == 0; k++) {
        double complex r = out->s[2 * k] / in->s[2 * k] *
                           exp((double)a->ord[k] * (log(xin) - log(xo)));
        if (!(cabs(r - 1) <= tol)) {
            rc = -1;
            break;
        }
        double want = cimag(in->s[2 * k + 1]) + carg(r);
        double have = cimag(out->s[2 * k + 1]);
        out->s[2 * k + 1] += CMPLX(0.0, 2 * PI * nearbyint((want - have) / (2 * PI)));
    }
    if (rc == 0) {
        out->z = z;
        out->bank = SW_BANK_NONE;
        out->sheet = 0;
    }
    if (vals != stackbuf)
        free(vals);
    return rc;
}

static void anchor_free(anchor *a)
{
    if (a == NULL)
        return;
    free(a->ord);
    sw_germ_clear(&a->gj);
    sw_germ_clear(&a->gs);
    free(a);
}

#define ANCHOR_MAX 0.25    /* an anchor covers at most a quarter of its segment */
#define ANCHOR_CHECKS 3    /* points x_j 16^-k where the jump is checked before use */

/* An anchor for the singular end BASE of the segment [BASE, BASE + DIR] when
 * the expression's operands are simple there (operand_orders); NULL
 * otherwise (then the line is tracked from next to the end, as before). */
static anchor *anchor_new(ictx *c, double complex base, double complex dir)
{
    zmap m = {0, base, dir, 0, 0, 0, 0, 0, NULL, NULL};
    anchor *a = calloc(1, sizeof *a);
    if (a == NULL)
        return NULL;
    a->ord = calloc(c->nmv ? c->nmv : 1, sizeof *a->ord);
    double reach = 0;
    if (a->ord == NULL || sw_germ_init(&a->gj, c->f) != SW_OK ||
        sw_germ_init(&a->gs, c->f) != SW_OK || operand_orders(c, &m, a->ord, &reach) != 0) {
        anchor_free(a);
        return NULL;
    }
    a->base = base;
    a->dir = dir;
    a->xj = fmin(ANCHOR_MAX, reach / 2);
    a->whole = reach == INFINITY && operands_monomial(c, base);
    return a;
}

/* The germ at xj from the germ G at xs (the branch fixed next to the end),
 * checked at points in between as a tracker would be; 0 or -1. */
static int anchor_from_start(ictx *c, anchor *a, const sw_germ *g)
{
    sw_germ_copy(&a->gs, g);
    /* (monomial operands: the jump is exact, nothing to check) */
    for (int k = a->whole ? 0 : ANCHOR_CHECKS; k >= 1; k--) {
        double x = a->xj * pow(16.0, -k);
        if (x > a->xs && anchor_jump(c, &c->h, a, &a->gs, x, 0.5) != 0)
            return -1;
    }
    return anchor_jump(c, &a->gj, a, &a->gs, a->xj, 0.5);
}

/* The germ at xs from the tracked germ G at xj (the end of the path as
 * reported). */
static int anchor_from_line(ictx *c, anchor *a, const sw_germ *g)
{
    sw_germ_copy(&a->gj, g);
    return anchor_jump(c, &a->gs, a, &a->gj, a->xs, 0.5);
}

/* Classify the end x = 0 of map M (the zone reaches at most X0).
 *
 * Loops on a ladder of radii r_j = X0 16^-(j+1): the structure is read at
 * the two smallest radii (nothing else singular is that close, unless the
 * path passes within 1e-7 of the zone's size from another singular point);
 * the largest radius up to which every loop agrees bounds the zone in which
 * the local expansion holds (another singular point lies beyond it). */
static int analyze_end_body(ictx *c, const zmap *m, double X0, endinfo *ei);

/* Expressions on a segment whose end is z = 0, built by products,
 * quotients and integer powers (no sums) from nonzero constants, z, powers
 * with real constant exponents and one logarithm, each multivalued operand
 * again such a product of z and constants with nonzero order n_k at the end:
 * then F = C x^alpha (n log x + c0) exactly, with alpha and the turns n_k
 * read off the tree (exponents add under products), and the end needs no
 * numerical analysis.  1 when EI was filled (a logarithmic end of degree 1,
 * the expansion holding on the whole zone), 0 when the tree is not of that
 * form, -1 on failure. */
static int tree_log_end(ictx *c, const zmap *m, double X0, endinfo *ei)
{
    if (!c->expr || c->nmv == 0 || c->R != NULL || m->inf || m->base != 0)
        return 0;
    const sw_expr *e = sw_func_expr(c->f);
    if (e->n == 0 || e->n > 64)
        return 0;
    double ex[64];
    int logs[64];
    char dep[64];
    long ord[64];
    for (size_t k = 0; k < e->n; k++) {
        const sw_node *nd = &e->node[k];
        int a = nd->a, b = nd->b;
        dep[k] = (char)(nd->mv >= 0 || (a >= 0 && dep[a]) || (b >= 0 && dep[b]));
        logs[k] = 0;
        if (nd->mv >= 0) {
            if (nd->mv >= 64 || a < 0 || dep[a] || ex[a] == 0 || ex[a] != nearbyint(ex[a]))
                return 0;
            ord[nd->mv] = (long)ex[a];
            if (nd->kind == N_LOG) {
                ex[k] = 0;
                logs[k] = 1;
            } else if (nd->kind == N_POW && cimag(nd->c) == 0) {
                ex[k] = creal(nd->c) * ex[a];
            } else {
                return 0;
            }
            continue;
        }
        switch (nd->kind) {
        case N_CONST:
            if (nd->c == 0 || !finite_c(nd->c))
                return 0;
            ex[k] = 0;
            break;
        case N_Z: ex[k] = 1; break;
        case N_MUL:
            ex[k] = ex[a] + ex[b];
            logs[k] = logs[a] + logs[b];
            break;
        case N_DIV:
            if (logs[b] != 0)
                return 0;
            ex[k] = ex[a] - ex[b];
            logs[k] = logs[a];
            break;
        case N_NEG: ex[k] = ex[a]; logs[k] = logs[a]; break;
        case N_POWI:
            if (logs[a] != 0)
                return 0;
            ex[k] = (double)nd->k * ex[a];
            break;
        default: return 0;
        }
        if (logs[k] > 1)
            return 0;
    }
    size_t root = e->n - 1;
    if (logs[root] != 1 || (size_t)c->nmv > 64 || !isfinite(ex[root]))
        return 0;
    memset(ei, 0, sizeof *ei);
    ei->shift = malloc(c->nmv * sizeof *ei->shift);
    if (ei->shift == NULL) {
        fail(c, SW_ENOMEM, "out of memory");
        return -1;
    }
    memcpy(ei->shift, ord, c->nmv * sizeof *ei->shift);
    ei->kind = END_LOG;
    ei->q = 1;
    ei->logdeg = 1;
    ei->alpha = ex[root];
    ei->alpha_num = ex[root];
    ei->mu = cexp(CMPLX(0.0, 2 * PI * ex[root]));
    ei->exact = 1;
    ei->reach = X0;
    return 1;
}

/* (the analysis keeps real germs: no quick roots) */
static int analyze_end(ictx *c, const zmap *m, double X0, endinfo *ei)
{
    int t = tree_log_end(c, m, X0, ei);
    if (t != 0)
        return t > 0 ? 0 : -1;
    int q = c->quick;
    c->quick = 0;
    int rc = analyze_end_body(c, m, X0, ei);
    c->quick = q;
    return rc;
}

static int analyze_end_body(ictx *c, const zmap *m, double X0, endinfo *ei)
{
    memset(ei, 0, sizeof *ei);
    ei->reach = X0;
    double rmin = X0 * 1e-9;
    if (!m->inf && m->base != 0)
        rmin = fmax(rmin, 1e5 * EPS * cabs(m->base) / cabs(m->dir));
    double r[NRADII];
    int nr = 0;
    for (int j = 0; j < NRADII; j++) {
        double rr = X0 / pow(16.0, j + 1);
        if (rr >= rmin)
            r[nr++] = rr;
    }
    size_t qmax = c->expr ? QMAX_EXPR : (sw_func_degree(c->f) ? sw_func_degree(c->f) : 8);
    long *shift = NULL;
    sw_germ g[NRADII], l[NRADII];
    int ng = 0, rc = 0;
    double complex F0[NRADII], x0h[NRADII];
    int shiftok[NRADII], alive[NRADII];
    if (c->expr && c->nmv) {
        shift = calloc(NRADII * c->nmv, sizeof *shift);
        if (shift == NULL) {
            fail(c, SW_ENOMEM, "out of memory");
            return -1;
        }
    }
    for (ng = 0; ng < 2 * nr; ng++)
        if (sw_germ_init(ng < nr ? &g[ng] : &l[ng - nr], c->f) != SW_OK) {
            fail(c, SW_ENOMEM, "out of memory");
            rc = -1;
            goto done;
        }
    for (int j = 0; j < nr; j++) {
        if (eval_F(c, m, r[j], &F0[j], &x0h[j]) != 0) {
            rc = -1;
            goto done;
        }
        sw_germ_copy(&g[j], &c->g);
        sw_germ_copy(&l[j], &c->g);
        alive[j] = finite_c(F0[j]) && F0[j] != 0;
        shiftok[j] = 0;
    }
    int J = nr - 1; /* the smallest radius */
    if (nr < 2 || !alive[J] || !alive[J - 1]) {
        ei->kind = END_OTHER;
        goto numeric;
    }
    int shiftmode = 0;
    /* the turns from the tree when it is simple (see operand_orders): no
       loops; radii beyond the disc where the operands keep their structure
       are out of reach, as a disagreeing loop would have put them */
    int structural = 0;
    double sreach = 0;
    if (shift && operand_orders(c, m, shift, &sreach) == 0 && r[J - 1] <= sreach) {
        structural = shiftmode = 1;
        for (int j = 0; j < nr; j++) {
            if (j > 0)
                memcpy(shift + (size_t)j * c->nmv, shift, c->nmv * sizeof *shift);
            shiftok[j] = 1;
            /* F = x^alpha H(x) with H single-valued holds in the whole disc
               once the two smallest radii agree: the larger ones are not
               looked at, the reach is the disc's */
            if (j < J - 1)
                alive[j] = 0;
        }
    }
    for (size_t k = 1; k <= qmax && ei->kind == END_REGULAR; k++) {
        double complex ratio[NRADII] = {0};
        for (int j = 0; j < nr; j++) {
            if (!alive[j])
                continue;
            double complex fk;
            if (!structural && (k == 1 || !shiftmode || !shiftok[j])) {
                if (k > 1 && shiftmode && !shiftok[j]) {
                    alive[j] = 0; /* operands change at this radius: beyond reach */
                    continue;
                }
                if (loop_once(c, m, &l[j], r[j]) != 0) {
                    alive[j] = 0;
                    continue;
                }
                if (k == 1 && shift)
                    shiftok[j] = shift_of(c, &g[j], &l[j], shift + (size_t)j * c->nmv);
            }
            if (k == 1 && j == J && !structural)
                shiftmode = shift && shiftok[J] && shiftok[J - 1] &&
                            memcmp(shift + (size_t)J * c->nmv, shift + (size_t)(J - 1) * c->nmv,
                                   c->nmv * sizeof *shift) == 0;
            if (shiftmode && shiftok[j] && (k > 1 || structural)) {
                fk = eval_shifted(c, m, &g[j], shift + (size_t)j * c->nmv, (long)k);
            } else {
                double complex w = germ_value(c, &l[j]);
                fk = integrand_at(c, l[j].z, w) * map_jac(m, map_x(m, l[j].z));
                c->evals++;
            }
            ratio[j] = fk / F0[j];
        }
        /* shift mode is decided at the smallest radius after the first turn */
        if (!alive[J] || !alive[J - 1])
            break;
        double complex mu = ratio[J];
        if (finite_c(mu) && cabs(ratio[J - 1] - mu) <= RATIO_TOL * fmax(1.0, cabs(mu))) {
            ei->kind = END_PURE;
            ei->q = (int)k;
            ei->mu = mu;
            /* reach: the largest radius below which every loop agrees */
            int top = J;
            while (top > 0 && alive[top - 1] && finite_c(ratio[top - 1]) &&
                   cabs(ratio[top - 1] - mu) <= RATIO_TOL * fmax(1.0, cabs(mu)))
                top--;
            ei->reach = top == 0 ? X0 : r[top];
            break;
        }
        if (k == 1 && shiftmode) {
            /* logarithmic: F = x^alpha P(log x) with P a polynomial of degree
               p <= 3 whose coefficients are analytic at the end.  Shifting
               only the powers' logarithms by one turn multiplies F by
               mu = exp(2 pi i alpha); shifting all of them k times gives
               mu^k P(log x + 2 pi i k), a polynomial of degree p in k */
            double complex F1[NRADII];
            for (int j = 0; j < nr; j++)
                F1[j] = ratio[j] * F0[j];
            int p = log_degree(c, m, g, shift, J, F0, F1, alive, shiftok, r, X0, ei);
            if (p < 0) {
                rc = -1;
                goto done;
            }
            if (p > 0)
                break;
        }
    }
    if (structural && (ei->kind == END_PURE || ei->kind == END_LOG)) {
        /* as a loop at every radius inside the disc would have agreed */
        ei->reach = X0;
        for (int j = 0; j < nr; j++)
            if (r[j] > sreach)
                ei->reach = j + 1 < nr ? r[j + 1] : r[j];
    }
numeric:
    {
        /* the integer part of alpha from the decay inside the reach */
        double an;
        int zero;
        /* from the ladder's own values inside the reach (radii 16 apart),
           else from fresh samples */
        int top = 0;
        while (top < nr && r[top] > ei->reach * (1 + 1e-12))
            top++;
        double lam[NRADII];
        int nl = 0;
        for (int j = top; j + 1 < nr; j++)
            if (F0[j] != 0 && F0[j + 1] != 0 && finite_c(F0[j]) && finite_c(F0[j + 1]))
                lam[nl++] = log(cabs(F0[j]) / cabs(F0[j + 1])) /
                            log(cabs(x0h[j]) / cabs(x0h[j + 1]));
        zero = 0;
        if (nl >= 2) {
            an = lam[nl - 1];
            if (nl >= 3) {
                double den = lam[nl - 1] - 2 * lam[nl - 2] + lam[nl - 3];
                if (fabs(den) > 1e-12) {
                    double ait = lam[nl - 1] - (lam[nl - 1] - lam[nl - 2]) *
                                                   (lam[nl - 1] - lam[nl - 2]) / den;
                    if (isfinite(ait) && fabs(ait - lam[nl - 1]) < 0.5)
                        an = ait;
                }
            }
        } else if (slope_estimate(c, m, fmin(X0, ei->reach), &an, &zero) != 0) {
            rc = -1;
            goto done;
        }
        ei->alpha_num = an;
        if (zero || !(an < FAST_DECAY)) {
            ei->kind = END_REGULAR; /* vanishes to all orders: nothing to resolve */
            goto done;
        }
        if (!isfinite(an)) {
            ei->kind = END_OTHER;
            ei->alpha = -INFINITY;
            goto done;
        }
    }
    if (ei->kind == END_PURE || ei->kind == END_LOG) {
        int q = ei->q;
        double complex a0 = exponent_mod(ei->mu, q);
        double mm = nearbyint(q * ei->alpha_num - creal(a0));
        ei->alpha = (a0 + mm) / q;
        ei->exact = 1;
        /* rationals with small denominators are exact to rounding: snap them */
        for (int dd = 1; dd <= 64; dd++) {
            double num = creal(ei->alpha) * dd;
            if (fabs(num - nearbyint(num)) < 1e-13 * dd) {
                ei->alpha = CMPLX(nearbyint(num) / dd, cimag(ei->alpha));
                break;
            }
        }
        /* |mu| = 1 to rounding for real exponents */
        if (cimag(ei->alpha) != 0 && fabs(cimag(ei->alpha)) < 1e-9 * fmax(1, cabs(ei->alpha)))
            ei->alpha = creal(ei->alpha);
    } else {
        ei->kind = END_OTHER;
        ei->alpha = ei->alpha_num;
    }
done:
    for (int j = 0; j < ng; j++)
        sw_germ_clear(j < nr ? &g[j] : &l[j - nr]);
    free(shift);
    return rc;
}

/* The rounding noise of the integrand next to the end x = 0 of M, measured:
 * the second difference of G = F / x^alpha over relative steps of 1e-6 at
 * x_p (G is smooth there to ~1e-12, so a larger difference is noise, e.g.
 * from evaluating 1 - z^2 near z = 1, or the roots of a curve near a branch
 * point).  Sets the noise model of M (see relnoise()). */
static int probe_noise(ictx *c, zmap *m, const endinfo *ei, double X)
{
    double complex a = ei->kind == END_PURE || ei->kind == END_LOG ? ei->alpha : ei->alpha_num;
    m->rfac = EPS * (1 + cabs(a));
    m->eta = 0;
    m->xeta = 0;
    if (!finite_c(a) || m->inf || (m->base == 0 && c->curve == NULL))
        return 0; /* no cancellation at 0 or infinity (curves: roots near a
                     branch point are measured anyway) */
    double xp = fmin(X, ei->reach) * 1e-4, d = 1e-6;
    double complex G[3];
    for (int k = 0; k < 3; k++) {
        double complex F, xh;
        if (eval_F(c, m, xp * (1 + (k - 1) * d), &F, &xh) != 0)
            return -1;
        G[k] = F / cpow(xh, a);
    }
    double g = cabs(G[1]);
    if (g > 0 && finite_c(G[0]) && finite_c(G[2])) {
        m->eta = cabs(G[0] - 2 * G[1] + G[2]) / (g * 2.45); /* sqrt(6): three values' noise */
        m->xeta = xp;
    }
    return 0;
}

/* ------------------------------------------------------- fixed rules */

/* GSL computes the nodes and weights of a Gauss rule by an eigenvalue
 * problem, O(n^2): about 50 us for 32 nodes, more than the integrand values
 * of a typical end.  The last few rules of this thread are kept (a family of
 * integrals of one function reuses its exponents); they live until the
 * thread ends. */
#define RULE_CACHE 8

typedef struct rule_entry {
    const gsl_integration_fixed_type *type;
    size_t n;
    double a, b;
    gsl_integration_fixed_workspace *w;
    double *logw;           /* Jacobi with a = 0: the weights of log_weights() */
    unsigned long used;
} rule_entry;

static _Thread_local rule_entry rule_cache[RULE_CACHE];
static _Thread_local unsigned long rule_clock;

static rule_entry *rule_get(const gsl_integration_fixed_type *type, size_t n, double a, double b)
{
    rule_entry *old = &rule_cache[0];
    for (int k = 0; k < RULE_CACHE; k++) {
        rule_entry *e = &rule_cache[k];
        if (e->w && e->type == type && e->n == n && e->a == a && e->b == b) {
            e->used = ++rule_clock;
            return e;
        }
        if (e->used < old->used)
            old = e;
    }
    /* Jacobi: weight (1-x)^a x^b on [0, 1]; Laguerre: e^(-x) on [0, inf) */
    gsl_integration_fixed_workspace *w = gsl_integration_fixed_alloc(type, n, 0.0, 1.0, a, b);
    if (w == NULL)
        return NULL;
    if (old->w)
        gsl_integration_fixed_free(old->w);
    free(old->logw);
    old->type = type;
    old->n = n;
    old->a = a;
    old->b = b;
    old->w = w;
    old->logw = NULL;
    old->used = ++rule_clock;
    return old;
}

static const gsl_integration_fixed_workspace *fixed_rule(const gsl_integration_fixed_type *type,
                                                         size_t n, double a, double b)
{
    const rule_entry *e = rule_get(type, n, a, b);
    return e ? e->w : NULL;
}

/* Product integration for the logarithmic part (P. J. Davis, P. Rabinowitz,
 * Methods of Numerical Integration, 2nd ed., Academic Press 1984, on product
 * rules): weights W_j = int_0^1 s^alpha log s l_j(s) ds of the Lagrange basis
 * l_j at the N nodes s_j of the Gauss-Jacobi rule for s^alpha (weights w_j),
 * so that sum_j W_j A(s_j) = int_0^1 s^alpha log s A(s) ds exactly for
 * polynomials A of degree < N.  With pi_k the monic orthogonal polynomials of
 * s^alpha and h_k = int s^alpha pi_k^2, Gauss interpolation gives
 * l_j = w_j sum_(k<N) pi_k(s_j) pi_k / h_k, so W_j = w_j sum_k pi_k(s_j) nu_k / h_k
 * with the modified moments nu_k = int_0^1 s^alpha log s pi_k(s) ds.  The
 * recurrence of pi_k and h_k come from the rule itself (Stieltjes' procedure
 * on the discrete measure, exact for k < N: W. Gautschi, Orthogonal
 * Polynomials: Computation and Approximation, OUP 2004, ch. 2).  The moments
 * in closed form (our derivation): Rodrigues' formula
 * s^alpha pi_k = (-1)^k / (k+alpha+1)_k d^k/ds^k [s^(k+alpha) (1-s)^k] and k
 * integrations by parts give int_0^1 s^g pi_k ds = (g-alpha)(g-alpha-1)...(g-alpha-k+1)
 * B(g+1, k+1) / (k+alpha+1)_k; its derivative in g at g = alpha is
 *   nu_0 = -1/(alpha+1)^2,
 *   nu_k = (-1)^(k+1) (k-1)! k! / ((alpha+1)(alpha+2)...(alpha+k+1) (k+alpha+1)_k),
 * with (y)_k = y (y+1) ... (y+k-1).  Checked against int_0^1 x^a log x x^m dx
 * = -1/(a+m+1)^2 in tests/test_integrate.c. */
static int log_weights(rule_entry *e)
{
    if (e->logw)
        return 0;
    size_t n = e->n;
    const double *x = e->w->x, *w = e->w->weights;
    double al = e->b;
    double *W = calloc(3 * n, sizeof *W);
    if (W == NULL)
        return -1;
    double *p0 = W + n, *p1 = W + 2 * n; /* pi_(k-1), pi_k at the nodes */
    double hprev = 0, nu = -1 / ((al + 1) * (al + 1));
    double ratio = 1; /* nu_k / nu_(k-1) pieces, accumulated in nu */
    for (size_t j = 0; j < n; j++) {
        p0[j] = 0;
        p1[j] = 1;
    }
    for (size_t k = 0; k < n; k++) {
        double h = 0, a = 0;
        for (size_t j = 0; j < n; j++) {
            h += w[j] * p1[j] * p1[j];
            a += w[j] * x[j] * p1[j] * p1[j];
        }
        if (!(h > 0))
            break; /* underflow: the remaining terms are negligible */
        if (k >= 1) {
            /* nu_k from nu_(k-1) (k >= 2), or in full for k = 1 */
            double kk = (double)k;
            if (k == 1)
                nu = 1 / ((al + 1) * (al + 2) * (al + 2));
            else {
                /* (k-1)! k! grows by (k-1) k; (alpha+1)_(k+1) by (alpha+k+1);
                   (k+alpha+1)_k / (k+alpha)_(k-1) = (2k+alpha-1)(2k+alpha) / (k+alpha) */
                ratio = -(kk - 1) * kk / (al + kk + 1) * (al + kk) /
                        ((2 * kk + al - 1) * (2 * kk + al));
                nu *= ratio;
            }
        }
        for (size_t j = 0; j < n; j++)
            W[j] += w[j] * p1[j] * nu / h;
        /* pi_(k+1) = (s - a_k) pi_k - b_k pi_(k-1), b_k = h_k / h_(k-1) */
        a /= h;
        double b = k == 0 ? 0 : h / hprev;
        for (size_t j = 0; j < n; j++) {
            double pn = (x[j] - a) * p1[j] - b * p0[j];
            p0[j] = p1[j];
            p1[j] = pn;
        }
        hprev = h;
    }
    e->logw = W;
    return 0;
}

/* ------------------------------------------------------- Gauss-Jacobi */

/* One Gauss-Jacobi rule of order N for int_0^X F dx at a pure end (A, q),
 * or two-sided on [0, 1] when MB is not NULL (weights x^alpha (1-x)^beta,
 * q = 1).  *ABSUM receives sum |w H| (for the rounding term). */
static int gj_rule(ictx *c, const zmap *m, const zmap *mb, double X, int q, double alpha,
                   double beta, int n, double complex *Iv, double *absum, double *rnd)
{
    double gam = mb ? alpha : q * (alpha + 1) - 1;
    const gsl_integration_fixed_workspace *w =
        fixed_rule(gsl_integration_fixed_jacobi, (size_t)n, mb ? beta : 0.0, gam);
    if (w == NULL)
        return fail(c, SW_EINTERNAL, "Gauss-Jacobi rule not available for these exponents"), -1;
    const double *s = w->x, *wt = w->weights;
    double complex sum = 0;
    double asum = 0, rsum = 0;
    int rc = 0;
    for (int j = 0; j < n; j++) {
        double x = mb ? s[j] : X * pow(s[j], q);
        double complex F, xh;
        if (eval_F(c, m, x, &F, &xh) != 0) {
            rc = -1;
            break;
        }
        double complex H = F / cpow(xh, alpha);
        if (mb) {
            double complex xb = map_x(mb, c->g.z);
            H /= cpow(xb, beta);
        }
        if (!finite_c(H)) {
            rc = -1;
            fail(c, SW_ESINGULAR, "the integrand is not finite at a quadrature point "
                                       "next to a singular end");
            break;
        }
        sum += wt[j] * H;
        asum += fabs(wt[j]) * cabs(H);
        double kap = relnoise(m, c->g.z);
        if (mb)
            kap = fmax(kap, relnoise(mb, c->g.z));
        rsum += fabs(wt[j]) * cabs(H) * kap;
    }
    double fac = mb ? 1.0 : q * pow(X, alpha + 1);
    *Iv = fac * sum;
    *absum = fac * asum;
    *rnd = fac * rsum;
    return rc;
}

/* Orders 4, 8, 16, 24, ... until the error estimate is met (or rounding). */
static int gj_c(ictx *c, const zmap *m, const zmap *mb, double X, int q, double alpha,
                double beta, double tol_abs, double complex *Iv, double *err, int *ok)
{
    double complex prev = 0, cur = 0;
    double asum = 0, rnd = 0, dprev = INFINITY;
    *ok = 0;
    /* orders 4, 8, 16, 24, 32, 48, 64: steps of a third to a half, so that a
       rule is not much larger than needed */
    static const int orders[] = {4, 8, 16, 24, 32, 48, 64};
    for (size_t io = 0; io < sizeof orders / sizeof orders[0]; io++) {
        int n = orders[io];
        if (gj_rule(c, m, mb, X, q, alpha, beta, n, &cur, &asum, &rnd) != 0)
            return -1;
        if (n > GJ_FIRST &&
            rule_converged(c, cur, prev, &dprev, asum, rnd, tol_abs, Iv, err)) {
            *ok = 1;
            return 0;
        }
        prev = cur;
    }
    return 0;
}

/* ---------------------------------------------------------------- QAWS */

typedef struct logfn {
    ictx *c;
    const zmap *m;
    const endinfo *ei;
} logfn;

/* v = A(x), aux = B(x) with F = x^alpha (A log x + B). */
static int log_eval(void *arg, double x, double complex *v, double complex *aux)
{
    logfn *a = arg;
    double complex F, xh;
    if (eval_F(a->c, a->m, x, &F, &xh) != 0)
        return -1;
    double complex F1 = eval_shifted(a->c, a->m, &a->c->g, a->ei->shift, 1);
    double complex xa = cpow(xh, a->ei->alpha);
    double complex A = (F1 / a->ei->mu - F) / CMPLX(0.0, 2 * PI) / xa;
    *v = A;
    *aux = F / xa - A * clog(xh);
    return 0;
}

static int qaws_log(ictx *c, const zmap *m, const endinfo *ei, double X, double tol_abs,
                    double complex *val, double *abserr, int *ok)
{
    logfn lf = {c, m, ei};
    qarg q = {log_eval, &lf, NULL, 0, 0, 0, 0};
    gsl_function gf = {qpart, &q};
    double alpha = creal(ei->alpha);
    gsl_integration_qaws_table *t1 = gsl_integration_qaws_table_alloc(alpha, 0.0, 1, 0);
    gsl_integration_qaws_table *t0 = gsl_integration_qaws_table_alloc(alpha, 0.0, 0, 0);
    gsl_integration_workspace *w = gsl_integration_workspace_alloc(c->o->limit);
    int rc = 0;
    *ok = 1;
    if (!t1 || !t0 || !w) {
        rc = -1;
        fail(c, SW_EINTERNAL, "QAWS tables not available");
        goto done;
    }
    /* the scale of the result from the middle of the zone: for real parts
       near zero a relative target alone would never be met */
    double r[4], e[4];
    double complex A, B;
    if (log_eval(&lf, X / 2, &A, &B) != 0) {
        rc = -1;
        goto done;
    }
    double ap1 = alpha + 1;
    double est = pow(X, ap1) * (cabs(A) * (fabs(log(X)) + 1 / ap1) / ap1 + cabs(B) / ap1);
    double tol = target(c, tol_abs, est, est);
    if (!(tol > 0))
        tol = 1e-300;
    for (int p = 0; p < 4; p++) {
        q.part = p;
        int s = gsl_integration_qaws(&gf, 0.0, X, p < 2 ? t1 : t0, tol / 4, 0, c->o->limit, w,
                                     &r[p], &e[p]);
        if (q.failed) {
            rc = -1;
            goto done;
        }
        if (s != GSL_SUCCESS)
            *ok = 0;
    }
    *val = CMPLX(r[0] + r[2], r[1] + r[3]);
    *abserr = e[0] + e[1] + e[2] + e[3] +
              cache_rounding(&q, m, 0, X, 1, ei->alpha);
done:
    free(q.tab);
    if (t1)
        gsl_integration_qaws_table_free(t1);
    if (t0)
        gsl_integration_qaws_table_free(t0);
    if (w)
        gsl_integration_workspace_free(w);
    return rc;
}

/* ------------------------------------------------------- Gauss-Laguerre */

/* One Gauss-Laguerre rule of order N for a logarithmic end:
 *   int_0^X F dx = X^(alpha+1)/(alpha+1) int_0^inf e^(-u) G(X e^(-u/(alpha+1))) du
 * with G = F / x^alpha = A(x) log x + B(x), a polynomial of degree 1 in u plus
 * terms decaying like exp(-k u/(alpha+1)).  A node closer to the end than
 * the tracked line reaches is evaluated where the line starts (x^) and moved
 * to its own x with the logarithm's coefficient A(x^) (A, B analytic). */
static int lag_rule(ictx *c, const zmap *m, const endinfo *ei, double X, int n,
                    double complex *Iv, double *absum, double *rnd)
{
    const gsl_integration_fixed_workspace *w =
        fixed_rule(gsl_integration_fixed_laguerre, (size_t)n, 0.0, 0.0);
    if (w == NULL)
        return fail(c, SW_EINTERNAL, "Gauss-Laguerre rule not available"), -1;
    const double *u = w->x, *wt = w->weights;
    double ap1 = creal(ei->alpha) + 1;
    double complex sum = 0;
    double asum = 0, rsum = 0;
    int rc = 0;
    for (int j = 0; j < n && rc == 0; j++) {
        double lx = log(X) - u[j] / ap1; /* log of the node x */
        double complex F, xh;
        if (eval_F(c, m, exp(lx), &F, &xh) != 0) {
            rc = -1;
            break;
        }
        double complex xa = cpow(xh, ei->alpha);
        double complex G = F / xa;
        double complex dl = lx - clog(xh);
        if (cabs(dl) > 1e-12) {
            /* G = P(log x) with P of degree p: interpolate P through its
               values at log x^ + 2 pi i k (k turns), k = 0..p */
            int p = ei->logdeg;
            double complex hk[LOG_DEGREE_MAX + 1], t0 = clog(xh), P = 0;
            hk[0] = G;
            for (int k = 1; k <= p; k++)
                hk[k] = eval_shifted(c, m, &c->g, ei->shift, k) / cpow(ei->mu, k) / xa;
            for (int k = 0; k <= p; k++) {
                double complex l = hk[k];
                for (int i2 = 0; i2 <= p; i2++)
                    if (i2 != k)
                        l *= (lx - (t0 + CMPLX(0.0, 2 * PI * i2))) / CMPLX(0.0, 2 * PI * (k - i2));
                P += l;
            }
            G = P;
        }
        if (!finite_c(G)) {
            rc = -1;
            fail(c, SW_ESINGULAR, "the integrand is not finite at a quadrature point next to "
                                  "a logarithmic end");
            break;
        }
        sum += wt[j] * G;
        asum += wt[j] * cabs(G);
        rsum += wt[j] * cabs(G) * relnoise(m, c->g.z);
    }
    double fac = pow(X, ap1) / ap1;
    *Iv = fac * sum;
    *absum = fac * asum;
    *rnd = fac * rsum;
    return rc;
}

/* Orders 8, 16, 32 until the error estimate (as for Gauss-Jacobi) is met;
 * *OK 0 when it is not (the caller falls back to QAWS). */
static int lag_c(ictx *c, const zmap *m, const endinfo *ei, double X, double tol_abs,
                 double complex *Iv, double *err, int *ok)
{
    double complex prev = 0, cur = 0;
    double asum = 0, rnd = 0, dprev = INFINITY;
    *ok = 0;
    for (int n = 8; n <= 32; n *= 2) {
        if (lag_rule(c, m, ei, X, n, &cur, &asum, &rnd) != 0)
            return -1;
        if (n > 8 && rule_converged(c, cur, prev, &dprev, asum, rnd, tol_abs, Iv, err)) {
            *ok = 1;
            return 0;
        }
        prev = cur;
    }
    return 0;
}

/* ---------------------------------------------- Gauss-Jacobi with logs */

/* One rule of order N for a logarithmic end of degree 1 with real alpha,
 * F = x^alpha (A(x) log x + B(x)), A and B analytic: with x = X s,
 *   int_0^X F dx = X^(alpha+1) int_0^1 s^alpha (A log X + B + A log s) ds,
 * the first two terms by Gauss-Jacobi (weight s^alpha), the last by the
 * product weights of log_weights() at the same nodes: N values of F and N
 * of F continued once around the end (A = (F1/mu - F) / (2 pi i x^alpha)),
 * no tracking.  Exact when A and B are polynomials of degree < N. */
static int gjl_rule(ictx *c, const zmap *m, const endinfo *ei, double X, int n,
                    double complex *Iv, double *absum, double *rnd)
{
    double alpha = creal(ei->alpha);
    rule_entry *re = rule_get(gsl_integration_fixed_jacobi, (size_t)n, 0.0, alpha);
    if (re == NULL || log_weights(re) != 0)
        return fail(c, SW_EINTERNAL, "Gauss-Jacobi rule not available for this exponent"), -1;
    const double *sn = re->w->x, *wt = re->w->weights, *W = re->logw;
    double lX = log(X);
    double complex sum = 0;
    double asum = 0, rsum = 0;
    for (int j = 0; j < n; j++) {
        double complex F, xh;
        if (eval_F(c, m, X * sn[j], &F, &xh) != 0)
            return -1;
        double complex F1 = eval_shifted(c, m, &c->g, ei->shift, 1);
        double complex xa = cpow(xh, alpha);
        double complex A = (F1 / ei->mu - F) / CMPLX(0.0, 2 * PI) / xa;
        double complex B = F / xa - A * clog(xh);
        double complex t = wt[j] * (A * lX + B) + W[j] * A;
        if (!finite_c(t))
            return fail(c, SW_ESINGULAR, "the integrand is not finite at a quadrature point "
                                         "next to a logarithmic end"), -1;
        sum += t;
        double a = fabs(wt[j]) * cabs(A * lX + B) + fabs(W[j]) * cabs(A);
        asum += a;
        rsum += a * relnoise(m, c->g.z);
    }
    double fac = pow(X, alpha + 1);
    *Iv = fac * sum;
    *absum = fac * asum;
    *rnd = fac * rsum;
    return 0;
}

/* Orders 4, 8, 16, ... (2, 4, ... when smooth_degree shows A and B of
 * degree 1 at most) as gj_c, with the same error estimate. */
static int gjl_c(ictx *c, const zmap *m, const endinfo *ei, double X, double tol_abs,
                 double complex *Iv, double *err, int *ok)
{
    double complex prev = 0, cur = 0;
    double asum = 0, rnd = 0, dprev = INFINITY;
    *ok = 0;
    /* a rule of order 2 is exact when A and B are of degree 1 at most: then
       2 and 4 (which confirms it) instead of 4 and 8 */
    static const int orders[] = {2, 4, 8, 16, 24, 32, 48, 64};
    int deg = smooth_degree(c, m);
    size_t first = deg >= 0 && deg <= 1 ? 0 : 1;
    for (size_t io = first; io < sizeof orders / sizeof orders[0]; io++) {
        int n = orders[io];
        if (gjl_rule(c, m, ei, X, n, &cur, &asum, &rnd) != 0)
            return -1;
        if (io > first && rule_converged(c, cur, prev, &dprev, asum, rnd, tol_abs, Iv, err)) {
            *ok = 1;
            return 0;
        }
        prev = cur;
    }
    return 0;
}

/* ----------------------------------------------------------- tanh-sinh */

/* int_0^X F dx for an end of unknown structure: tanh-sinh on [x_c, X]
 * (values corrected to the nominal node with the local power law) plus the
 * tail over [0, x_c] from the same law. */
static int tanh_sinh_end(ictx *c, const zmap *m, const endinfo *ei, double X, double tol_abs,
                         double complex *val, double *abserr, int *ok)
{
    double xc = TS_CUT * X;
    if (!m->inf && m->base != 0)
        xc = fmax(xc, 1e4 * EPS * cabs(m->base) / cabs(m->dir));
    double complex alpha = ei->alpha;
    double L = X - xc;
    double complex T = 0, Tprev = 0;
    double h = 0.5, asum = 0, rsum = 0;
    *ok = 0;
    *abserr = INFINITY;
    for (int level = 0; level < TS_LEVELS; level++, h /= 2) {
        double complex S = 0;
        long jmax = (long)ceil(TS_TMAX / h);
        for (long j = -jmax; j <= jmax; j++) {
            if (level > 0 && (j % 2) == 0)
                continue; /* nodes of the previous levels */
            double t = (double)j * h;
            double v = PI / 2 * sinh(t) * 2;
            double e = exp(-fabs(v)), phi, phc; /* phi and 1 - phi */
            if (v >= 0) {
                phi = 1 / (1 + e);
                phc = e / (1 + e);
            } else {
                phi = e / (1 + e);
                phc = 1 / (1 + e);
            }
            double wt = PI * cosh(t) * phi * phc * L;
            double x = xc + L * phi;
            if (!(wt > 0) || L * phc == 0)
                continue;
            double complex F, xh;
            if (eval_F(c, m, x, &F, &xh) != 0)
                return -1;
            /* move the value from the point used to the node (power law) */
            if (cabs(xh - x) > 0 && creal(xh) > 0)
                F *= cpow(x / xh, alpha);
            if (!finite_c(F))
                continue;
            S += wt * F;
            asum += wt * cabs(F);
            rsum += wt * cabs(F) * relnoise(m, c->g.z);
        }
        T = level == 0 ? h * S : Tprev / 2 + h * S;
        if (level >= 3) {
            double e = cabs(T - Tprev);
            *abserr = e;
            if (e <= target(c, tol_abs, cabs(T), asum * h)) {
                *ok = 1;
                Tprev = T;
                break;
            }
        }
        Tprev = T;
    }
    /* tail from the power law, compared with the local slope at x_c */
    double complex F1, F2, x1, x2;
    if (eval_F(c, m, xc, &F1, &x1) != 0 || eval_F(c, m, 2 * xc, &F2, &x2) != 0)
        return -1;
    double complex tail = F1 * x1 / (alpha + 1);
    double terr;
    if (ei->exact && ei->kind == END_PURE) {
        /* F = x^alpha H(x^(1/q)) with the exponent known: the law is off by
           the variation of H over [0, x_c] */
        terr = cabs(tail) * (8 * pow(xc / X, 1.0 / ei->q) + 1e3 * EPS);
    } else {
        double slope = log(cabs(F2) / cabs(F1)) / log(cabs(x2) / cabs(x1));
        double complex tail2 = F1 * x1 / (slope + 1 + CMPLX(0.0, cimag(alpha)));
        /* the two laws bracket the truth only roughly (a log^2 end has a
           slowly drifting slope): twice their difference, and 1% */
        terr = 2 * cabs(tail - tail2) + 1e-2 * cabs(tail);
    }
    if (!finite_c(tail) || !isfinite(terr)) {
        tail = 0;
        terr = INFINITY;
    }
    *val = Tprev + tail;
    *abserr += terr + 50 * EPS * asum * h + rsum * h;
    c->l1 = asum * h + cabs(tail);
    if (*abserr > fmax(tol_abs, c->o->epsrel * cabs(*val)))
        *ok = 0;
    return 0;
}

/* ------------------------------------------------------ one singular end */

/* A complex number for messages: "2", "-0.5i", "1+2i" (10 digits). */
static const char *cstr(char *buf, size_t n, double complex z)
{
    double re = creal(z), im = cimag(z), mod = cabs(z);
    if (fabs(re) <= 1e-14 * mod)
        re = 0;
    if (fabs(im) <= 1e-14 * mod)
        im = 0;
    if (im == 0)
        snprintf(buf, n, "%.10g", re + 0.0);
    else if (re == 0)
        snprintf(buf, n, "%.10gi", im);
    else
        snprintf(buf, n, "%.10g%+.10gi", re, im);
    return buf;
}

static sw_status refuse_end(ictx *c, const zmap *m, const endinfo *ei, double complex z0)
{
    double complex a = ei->alpha;
    char buf[SW_ERROR_MSG_MAX], sa[64], sz[64];
    if (!ei->exact && !(creal(a) > -GROWTH)) {
        /* faster than any power: an exponential, or no power law at all */
        if (m->inf)
            snprintf(buf, sizeof buf,
                     "the integrand does not decay along the ray to infinity (it grows or "
                     "oscillates faster than any power): the integral over the ray diverges");
        else
            snprintf(buf, sizeof buf,
                     "the integrand grows faster than any power of 1/|z - z0| at the end z0 = %s "
                     "of the path: not integrable", cstr(sz, sizeof sz, z0));
        c->st = SW_EINPUT;
        sw_error_set(&c->err, SW_EINPUT, "%s", buf);
        return SW_EINPUT;
    }
    if (m->inf) {
        double complex beta = -a - 2; /* F ~ s^a  <=>  f ~ z^(-a-2) */
        snprintf(buf, sizeof buf,
                 "the integrand decays only like |z|^(%.6g) along the ray to infinity (%s), "
                 "not faster than 1/|z|: the integral over the ray diverges",
                 creal(beta), ei->exact ? "exponent from continuation around infinity"
                                        : "estimated exponent");
    } else {
        snprintf(buf, sizeof buf,
                 "the integrand behaves like (z - z0)^(%s) at the end z0 = %s of the path "
                 "(%s): not integrable (the exponent's real part is <= -1)",
                 isfinite(creal(a)) ? cstr(sa, sizeof sa, a) : "-inf", cstr(sz, sizeof sz, z0),
                 ei->exact ? "exponent from continuation" : "estimated exponent");
    }
    c->st = SW_EINPUT;
    sw_error_set(&c->err, SW_EINPUT, "%s", buf);
    return SW_EINPUT;
}

static int push_end(ictx *c, const zmap *m, const endinfo *ei, sw_end_rule rule)
{
    if (c->nends == c->aends) {
        size_t na = c->aends ? 2 * c->aends : 4;
        sw_integral_end *ne = realloc(c->ends, na * sizeof *ne);
        if (ne == NULL)
            return fail(c, SW_ENOMEM, "out of memory"), -1;
        c->ends = ne;
        c->aends = na;
    }
    sw_integral_end *e = &c->ends[c->nends++];
    memset(e, 0, sizeof *e);
    e->at_infinity = m->inf;
    e->z = m->inf ? 0 : m->base;
    /* finite: F = f dir, so f ~ (z - z0)^alpha;  infinity: f ~ z^(-alpha-2) */
    e->exponent = m->inf ? -ei->alpha - 2 : ei->alpha;
    e->ramification = ei->kind == END_PURE || ei->kind == END_LOG ? ei->q : 0;
    e->logarithmic = ei->kind == END_LOG;
    e->exact = ei->exact;
    e->rule = rule;
    return 0;
}

static int end_integral(ictx *c, const zmap *m, const endinfo *ei, double X, int depth,
                        double tol_abs, double complex *val, double *abserr, int *ok,
                        sw_end_rule *rule);

/* Shrinking towards the end: the end rule on [0, X/4] (one level deeper),
 * Gauss-Kronrod on [X/4, X], each with half the tolerance that a value of
 * size MAG asks for. */
static int end_split(ictx *c, const zmap *m, const endinfo *ei, double X, int depth, double mag,
                     double tol_abs, double complex *val, double *abserr, int *ok,
                     sw_end_rule *rule)
{
    double complex v1, v2;
    double e1, e2;
    int ok1, ok2;
    double tl = target(c, tol_abs, mag, c->l1) / 2;
    if (end_integral(c, m, ei, X / 4, depth + 1, tl, &v1, &e1, &ok1, rule) != 0)
        return -1;
    double l1a = c->l1;
    if (qag_map(c, m, X / 4, X, tl, &v2, &e2, &ok2) != 0)
        return -1;
    c->l1 += l1a;
    *val = v1 + v2;
    *abserr = e1 + e2;
    *ok = ok1 && ok2;
    return 0;
}

/* int_0^X F dx at the end x = 0 of M (analysed in EI), splitting towards the
 * end when the rule does not converge on the whole zone. */
static int end_integral(ictx *c, const zmap *m, const endinfo *ei, double X, int depth,
                        double tol_abs, double complex *val, double *abserr, int *ok,
                        sw_end_rule *rule)
{
    if (ei->kind == END_REGULAR) {
        *rule = SW_RULE_NONE;
        return qag_map(c, m, 0, X, tol_abs, val, abserr, ok);
    }
    if (ei->kind == END_LOG && ei->logdeg == 1 && cimag(ei->alpha) == 0 &&
        creal(ei->alpha) > -1 && depth == 0) {
        /* the product rule on the whole zone; when A or B vary too fast for
           it (another singular point near the zone), Gauss-Laguerre with
           its splitting below */
        double complex Iv;
        double e;
        int good;
        if (gjl_c(c, m, ei, X, tol_abs, &Iv, &e, &good) != 0)
            return -1;
        if (good) {
            *rule = SW_RULE_JACOBI_LOG;
            *val = Iv;
            *abserr = e;
            *ok = 1;
            return 0;
        }
    }
    if (ei->kind == END_LOG && creal(ei->alpha) > -1 &&
        (ei->logdeg == 1 || (cimag(ei->alpha) == 0 && depth < LOG_SPLIT_DEPTH))) {
        if (cimag(ei->alpha) == 0 && depth < LOG_SPLIT_DEPTH) {
            *rule = SW_RULE_LAGUERRE;
            if (lag_c(c, m, ei, X, tol_abs, val, abserr, ok) != 0)
                return -1;
            if (*ok)
                return 0;
            /* A and B vary too fast for Laguerre on the whole zone (another
               singular point near it): a quarter of it, Gauss-Kronrod beyond */
            return end_split(c, m, ei, X, depth, cabs(*val), tol_abs, val, abserr, ok, rule);
        }
        *rule = SW_RULE_QAWS;
        return qaws_log(c, m, ei, X, tol_abs, val, abserr, ok);
    }
    if (ei->kind == END_PURE && cimag(ei->alpha) == 0) {
        *rule = SW_RULE_JACOBI;
        double complex Iv;
        double e;
        int good;
        if (gj_c(c, m, NULL, X, ei->q, creal(ei->alpha), 0, tol_abs, &Iv, &e, &good) != 0)
            return -1;
        if (good || depth >= SPLIT_DEPTH) {
            *val = Iv;
            *abserr = e;
            *ok = good;
            return 0;
        }
        /* the rest of H's analyticity region is smaller than X: shrink */
        if (end_split(c, m, ei, X, depth, cabs(Iv), tol_abs, val, abserr, ok, rule) != 0)
            return -1;
        *rule = SW_RULE_JACOBI;
        return 0;
    }
    *rule = SW_RULE_TANH_SINH;
    return tanh_sinh_end(c, m, ei, X, tol_abs, val, abserr, ok);
}

/* int_0^Xmax F dx at the end x = 0: the special rule up to where the local
 * expansion holds (the whole zone unless the loops showed another singular
 * point nearer than Xmax), Gauss-Kronrod beyond. */
static int end_zone(ictx *c, const zmap *m, const endinfo *ei, double Xmax, double tol_abs,
                    double complex *val, double *abserr, int *ok, sw_end_rule *rule)
{
    double Xs = ei->reach >= Xmax ? Xmax : ei->reach / 2;
    if (end_integral(c, m, ei, Xs, 0, tol_abs, val, abserr, ok, rule) != 0)
        return -1;
    if (Xs < Xmax) {
        double l1a = c->l1, e2;
        double complex v2;
        int ok2;
        if (qag_map(c, m, Xs, Xmax, tol_abs, &v2, &e2, &ok2) != 0)
            return -1;
        *val += v2;
        *abserr += e2;
        *ok = *ok && ok2;
        c->l1 += l1a;
    }
    return 0;
}

/* ------------------------------------------------------------ results */

static int push_piece(ictx *c, sw_piece_kind kind, double complex from, double complex to,
                      double complex val, double err, size_t evals, const char *method)
{
    if (c->npieces == c->apieces) {
        size_t na = c->apieces ? 2 * c->apieces : 8;
        sw_integral_piece *np = realloc(c->pieces, na * sizeof *np);
        if (np == NULL)
            return fail(c, SW_ENOMEM, "out of memory"), -1;
        c->pieces = np;
        double *nl = realloc(c->piece_l1, na * sizeof *nl);
        if (nl == NULL)
            return fail(c, SW_ENOMEM, "out of memory"), -1;
        c->piece_l1 = nl;
        c->apieces = na;
    }
    sw_integral_piece *p = &c->pieces[c->npieces++];
    p->kind = kind;
    p->from = from;
    p->to = to;
    p->value = val;
    p->abserr = err;
    p->evaluations = evals;
    p->method = method;
    c->piece_l1[c->npieces - 1] = c->l1;
    return 0;
}

static const char *rule_method(sw_end_rule r)
{
    switch (r) {
    case SW_RULE_JACOBI: return "gauss-jacobi";
    case SW_RULE_QAWS: return "qaws";
    case SW_RULE_LAGUERRE: return "gauss-laguerre";
    case SW_RULE_TANH_SINH: return "tanh-sinh";
    case SW_RULE_JACOBI_LOG: return "gauss-jacobi-log";
    default: return "gauss-kronrod";
    }
}

/* ------------------------------------------------------------- pieces */

typedef struct station {
    double complex z;
    int bank, sing, inf;
    long vertex;            /* index of the path vertex, -1 for added stations */
    double L;               /* infinity: length scale of the ray */
    double complex dir;     /* infinity: unit direction of the ray, outwards */
} station;

typedef struct piece {
    sw_piece_kind kind;
    double complex a, b;   /* segment: ends; ray: a = finite end, b = unit direction out */
    int sing_a, sing_b;    /* singular finite ends */
    anchor *anc_a, *anc_b; /* their anchors (NULL: none) */
    double L;              /* ray: length scale */
    size_t line0, nline;   /* tracked lines of this piece */
    /* circle */
    double complex centre;
    double radius, theta0;
    int orient, ncircle;
} piece;

/* A finite segment. */
static int integrate_segment(ictx *c, const piece *pc, int *all_ok, double *tol_share)
{
    size_t ev0 = c->evals;
    zmap ma = {0, pc->a, pc->b - pc->a, pc->line0, pc->nline, 0, 0, 0, pc->anc_a, pc->anc_b};
    zmap mb = {0, pc->b, pc->a - pc->b, pc->line0, pc->nline, 0, 0, 0, pc->anc_b, pc->anc_a};
    double complex val = 0;
    double err = 0;
    int ok = 1;
    const char *method = "gauss-kronrod";
    endinfo ea, eb;
    memset(&ea, 0, sizeof ea);
    memset(&eb, 0, sizeof eb);
    int rc = -1;
    double tol = *tol_share;
    if (!pc->sing_a && !pc->sing_b) {
        if (qag_map(c, &ma, 0, 1, tol, &val, &err, &ok) != 0)
            goto done;
    } else {
        double X0 = pc->sing_a && pc->sing_b ? 0.5 : 1.0;
        if (pc->sing_a && (analyze_end(c, &ma, X0, &ea) != 0 ||
                           probe_noise(c, &ma, &ea, X0) != 0))
            goto done;
        if (pc->sing_b && (analyze_end(c, &mb, X0, &eb) != 0 ||
                           probe_noise(c, &mb, &eb, X0) != 0))
            goto done;
        if (pc->sing_a && ea.kind != END_REGULAR && !(creal(ea.alpha) > -1)) {
            refuse_end(c, &ma, &ea, pc->a);
            goto done;
        }
        if (pc->sing_b && eb.kind != END_REGULAR && !(creal(eb.alpha) > -1)) {
            refuse_end(c, &mb, &eb, pc->b);
            goto done;
        }
        sw_end_rule ra = SW_RULE_NONE, rb = SW_RULE_NONE;
        int done2 = 0;
        if (pc->sing_a && pc->sing_b && ea.kind == END_PURE && eb.kind == END_PURE &&
            ea.q == 1 && eb.q == 1 && cimag(ea.alpha) == 0 && cimag(eb.alpha) == 0 &&
            ea.reach >= 0.5 && eb.reach >= 0.5) {
            /* both ends at once: weight x^alpha (1 - x)^beta on the whole segment */
            double complex Iv;
            double e;
            int good;
            if (gj_c(c, &ma, &mb, 1.0, 1, creal(ea.alpha), creal(eb.alpha), tol, &Iv, &e,
                     &good) != 0)
                goto done;
            if (good) {
                val = Iv;
                err = e;
                ra = rb = SW_RULE_JACOBI;
                done2 = 1;
                method = "gauss-jacobi";
            }
        }
        if (!done2) {
            double complex v1 = 0, v2 = 0;
            double e1 = 0, e2 = 0;
            int ok1 = 1, ok2 = 1;
            if (pc->sing_a && pc->sing_b) {
                if (end_zone(c, &ma, &ea, 0.5, tol / 2, &v1, &e1, &ok1, &ra) != 0)
                    goto done;
                double l1a = c->l1;
                if (end_zone(c, &mb, &eb, 0.5, tol / 2, &v2, &e2, &ok2, &rb) != 0)
                    goto done;
                c->l1 += l1a;
                val = v1 - v2; /* mb runs backwards: int_a^b = -int over mb */
            } else if (pc->sing_a) {
                if (end_zone(c, &ma, &ea, 1.0, tol, &v1, &e1, &ok1, &ra) != 0)
                    goto done;
                val = v1;
            } else {
                if (end_zone(c, &mb, &eb, 1.0, tol, &v2, &e2, &ok2, &rb) != 0)
                    goto done;
                val = -v2;
            }
            err = e1 + e2;
            ok = ok1 && ok2;
            method = rule_method(pc->sing_a ? ra : rb);
        }
        if (pc->sing_a && push_end(c, &ma, &ea, ra) != 0)
            goto done;
        if (pc->sing_b && push_end(c, &mb, &eb, rb) != 0)
            goto done;
    }
    if (push_piece(c, SW_PIECE_SEGMENT, pc->a, pc->b, val, err, c->evals - ev0, method) != 0)
        goto done;
    *all_ok &= ok;
    rc = 0;
done:
    endinfo_clear(&ea);
    endinfo_clear(&eb);
    return rc;
}

/* A ray: s in (0, 1], z = c + e / s with c = a - b L, e = b L (s = 1 at a). */
static int integrate_ray(ictx *c, const piece *pc, int *all_ok, double *tol_share)
{
    size_t ev0 = c->evals;
    zmap m = {1, pc->a - pc->b * pc->L, pc->b * pc->L, pc->line0, pc->nline, 0, 0, 0, NULL, NULL};
    endinfo ei;
    double complex val = 0;
    double err = 0;
    int ok = 1, rc = -1;
    sw_end_rule rule = SW_RULE_NONE;
    if (analyze_end(c, &m, 1.0, &ei) != 0 || probe_noise(c, &m, &ei, 1.0) != 0)
        goto done;
    if (ei.kind != END_REGULAR && !(creal(ei.alpha) > -1)) {
        refuse_end(c, &m, &ei, 0);
        goto done;
    }
    if (end_zone(c, &m, &ei, 1.0, *tol_share, &val, &err, &ok, &rule) != 0)
        goto done;
    if (push_end(c, &m, &ei, rule) != 0)
        goto done;
    /* int over s in [0,1] of F ds with F = f dz/ds runs from infinity (s=0)
       to a (s=1): outward rays take the opposite sign */
    if (pc->kind == SW_PIECE_RAY_OUT)
        val = -val;
    if (push_piece(c, pc->kind, pc->a, pc->a, val, err, c->evals - ev0, rule_method(rule)) != 0)
        goto done;
    *all_ok &= ok;
    rc = 0;
done:
    endinfo_clear(&ei);
    return rc;
}

/* ------------------------------------------------------------ circles */


typedef struct circfn {
    ictx *c;
    const piece *pc;
} circfn;

/* F(tau) = R(z, w) dz/dtau on the circle z = C + R exp(i (theta0 + orient tau)). */
static int circle_eval(void *arg, double tau, double complex *v, double complex *aux)
{
    circfn *a = arg;
    ictx *c = a->c;
    const piece *pc = a->pc;
    const tline *l = &c->lines[pc->line0];
    (void)aux;
    double frac = tau / (2 * PI);
    double t = frac * pc->ncircle;
    /* the logged germ nearest below t (the dense log, as sw_trace_germ_at
       reads it, without its per-call measure of a long path) */
    sw_trace_logged_germ(&c->g, &l->tr, t);
    double th = pc->theta0 + pc->orient * tau;
    double complex z = pc->centre + pc->radius * CMPLX(cos(th), sin(th));
    if (tau == 0 || tau == 2 * PI)
        z = l->p;
    double complex wq;
    if (c->quick && quick_root(c, l, t, z, &wq) == 0) {
        c->g.z = z;
        *v = integrand_at(c, z, wq) * CMPLX(0.0, (double)pc->orient) * (z - pc->centre);
        c->evals++;
        return 0;
    }
    if (nudge(c, &c->g, z, 1 << 12) != 0)
        return fail(c, SW_ESINGULAR, "cannot reach a point of the circle from the polygon "
                                     "(a singular point lies between them)"), -1;
    double complex w = germ_value(c, &c->g);
    *v = integrand_at(c, c->g.z, w) * CMPLX(0.0, (double)pc->orient) * (c->g.z - pc->centre);
    c->evals++;
    return 0;
}

static int integrate_circle(ictx *c, const piece *pc, int *all_ok, double *tol_share)
{
    size_t ev0 = c->evals;
    circfn cf = {c, pc};
    const tline *l = &c->lines[pc->line0];
    double complex F0, F1;
    int rc = -1, ok = 1;
    double complex val = 0;
    double err = 0;
    const char *method = "trapezoid";
    /* periodic when the integrand comes back to its start value (at two points) */
    double complex w0 = sw_func_value(c->f, &l->tr.vert[0]);
    double complex w1 = sw_func_value(c->f, &l->tr.vert[l->tr.nvert - 1]);
    double complex r0 = integrand_at(c, l->p, w0), r1 = integrand_at(c, l->p, w1);
    c->evals += 2;
    int periodic = cabs(r1 - r0) <= 1e-10 * fmax(cabs(r0), 1e-300);
    if (periodic) {
        /* a second point: the end germ carried a little further */
        double dth = 2 * PI / pc->ncircle;
        double complex zz = pc->centre + pc->radius * CMPLX(cos(pc->theta0 + pc->orient * dth),
                                                            sin(pc->theta0 + pc->orient * dth));
        sw_germ_copy(&c->g, &l->tr.vert[l->tr.nvert - 1]);
        if (nudge(c, &c->g, zz, 1 << 12) == 0) {
            double complex wa = sw_func_value(c->f, &c->g);
            F1 = integrand_at(c, c->g.z, wa);
            if (circle_eval(&cf, dth, &F0, NULL) != 0)
                goto done;
            double complex Fb = F0 / (CMPLX(0.0, (double)pc->orient) * (c->g.z - pc->centre));
            periodic = cabs(F1 - Fb) <= 1e-8 * fmax(cabs(Fb), 1e-300);
        } else {
            periodic = 0;
        }
    }
    if (periodic) {
        /* trapezoidal rule, doubling the nodes until two sums agree; the
           error of the finer sum is far below their difference (geometric
           convergence), which is reported */
        double complex T = 0, S = 0;
        double A = 0;
        size_t M = 16;
        for (size_t j = 0; j < M; j++) {
            double complex v;
            if (circle_eval(&cf, 2 * PI * (double)j / (double)M, &v, NULL) != 0)
                goto done;
            S += v;
            A += cabs(v);
        }
        T = S * (2 * PI / (double)M);
        ok = 0;
        double dprev = INFINITY;
        for (; M <= TRAPEZOID_MAX / 2; M *= 2) {
            double complex Sn = 0;
            for (size_t j = 0; j < M; j++) {
                double complex v;
                if (circle_eval(&cf, 2 * PI * (2 * (double)j + 1) / (2 * (double)M), &v, NULL) !=
                    0)
                    goto done;
                Sn += v;
                A += cabs(v);
            }
            S += Sn;
            double complex T2 = S * (2 * PI / (2 * (double)M));
            c->l1 = A * 2 * PI / (2 * (double)M);
            /* geometric convergence: the error squares (relatively) with
               each doubling, so the newer sum's error is about d^2 / dprev
               (a factor 10 of safety, never more than d) */
            double d = cabs(T2 - T);
            err = (isfinite(dprev) && dprev > 0 ? fmin(d, 10 * d * d / dprev) : d) +
                  50 * EPS * c->l1;
            dprev = d;
            T = T2;
            if (err <= target(c, *tol_share, cabs(T), c->l1) && M >= 32) {
                ok = 1;
                break;
            }
        }
        val = T;
    } else {
        method = "gauss-kronrod";
        if (qag_c(c, circle_eval, &cf, 0, 2 * PI, *tol_share, NULL, &val, &err, &ok) != 0)
            goto done;
    }
    if (push_piece(c, SW_PIECE_CIRCLE, pc->centre, pc->radius, val, err, c->evals - ev0,
                   method) != 0)
        goto done;
    *all_ok &= ok;
    rc = 0;
done:
    return rc;
}

/* ------------------------------------------------------------ the driver */

static int add_line(ictx *c, const double complex *z, const int *bank, size_t n, int eval,
                    double min_step)
{
    if (c->nlines == c->alloc) {
        size_t na = c->alloc ? 2 * c->alloc : 16;
        tline *nl = realloc(c->lines, na * sizeof *nl);
        if (nl == NULL)
            return fail(c, SW_ENOMEM, "out of memory"), -1;
        c->lines = nl;
        c->alloc = na;
    }
    tline *l = &c->lines[c->nlines];
    sw_path_init(&l->path);
    sw_trace_init(&l->tr);
    l->eval = eval;
    l->min_step = min_step;
    l->inset_p = l->inset_q = 0;
    l->p = z[0];
    l->q = z[n - 1];
    c->nlines++;
    sw_error e;
    for (size_t k = 0; k < n; k++)
        if (sw_path_push(&l->path, z[k], bank ? bank[k] : SW_BANK_NONE, &e) != SW_OK)
            return fail(c, e.code, e.msg), -1;
    return 0;
}

/* Is the finite point Z singular for the integrand (a branch point, an
 * operand zero or pole, colliding sheets, a pole of R)? */
static int point_singular(ictx *c, double complex z, int bank)
{
    sw_error e;
    if (c->expr && bank == SW_BANK_NONE) {
        /* an operand zero or not finite at z: what sw_func_germ_at refuses,
           without formatting its message */
        const sw_expr *ex = sw_func_expr(c->f);
        double complex stackbuf[256], v;
        double complex *vals = ex->n <= 256 ? stackbuf : malloc(ex->n * sizeof *vals);
        if (vals == NULL)
            return 1;
        int r = sw_expr_principal_state(&v, c->g.s, ex, z, 0, vals);
        if (vals != stackbuf)
            free(vals);
        if (r != -1)
            return 1;
    }
    if (sw_func_germ_at(&c->g, c->f, z, bank, NULL, &e) != SW_OK)
        return 1;
    double complex w = sw_func_value(c->f, &c->g);
    if (!finite_c(w) || !finite_c(integrand_at(c, z, w)))
        return 1;
    size_t n = sw_func_degree(c->f);
    if (n > 1) {
        double complex *v = malloc(n * sizeof *v);
        if (v == NULL)
            return 1;
        size_t got = sw_func_sheet_values(v, n, c->f, &c->g);
        double big = 0;
        for (size_t i = 0; i < got; i++)
            big = fmax(big, cabs(v[i]));
        int sing = 0;
        for (size_t i = 0; i < got && !sing; i++) {
            if (!finite_c(v[i]) || !finite_c(integrand_at(c, z, v[i])))
                sing = 1;
            for (size_t j = i + 1; j < got && !sing; j++)
                if (cabs(v[i] - v[j]) <= COLLIDE * (1 + big))
                    sing = 1;
        }
        free(v);
        return sing;
    }
    return 0;
}

/* Curves: the 1-based label of the germ's sheet over its point, i.e. the
 * position of its root in the fiber sorted into the documented sheet order
 * (the order sw_func_germ_at uses). */
static int sheet_label(const sw_func *f, const sw_germ *g)
{
    if (sw_func_kind_of(f) != SW_FUNC_CURVE)
        return 0;
    size_t n = sw_func_degree(f);
    double complex *v = malloc(n * sizeof *v);
    if (v == NULL)
        return 0;
    memcpy(v, g->s, n * sizeof *v);
    double complex w = g->s[g->sheet];
    sw_curve_sort_fiber(v, n);
    int lab = 0;
    double best = INFINITY;
    for (size_t i = 0; i < n; i++)
        if (cabs(v[i] - w) < best) {
            best = cabs(v[i] - w);
            lab = (int)i + 1;
        }
    free(v);
    return lab;
}

/* Is the closed path a regular polygon from "circle C R N" (N >= 16)? */
static int circle_of(const sw_path *p, double complex *centre, double *radius, double *theta0,
                     int *orient)
{
    if (!sw_path_is_closed(p) || p->n < 17)
        return 0;
    size_t N = p->n - 1;
    double complex C = 0;
    for (size_t k = 0; k < N; k++) {
        if (p->bank[k] != SW_BANK_NONE)
            return 0;
        C += p->z[k];
    }
    C /= (double)N;
    double R = cabs(p->z[0] - C);
    if (!(R > 0))
        return 0;
    double step = 0;
    for (size_t k = 0; k < N; k++) {
        if (fabs(cabs(p->z[k] - C) - R) > 1e-9 * R)
            return 0;
        double d = carg((p->z[k + 1] - C) / (p->z[k] - C));
        if (k == 0)
            step = d;
        else if (fabs(d - step) > 1e-9)
            return 0;
    }
    if (fabs(fabs(step) * (double)N - 2 * PI) > 1e-8)
        return 0;
    *centre = C;
    *radius = R;
    *theta0 = carg(p->z[0] - C);
    *orient = step > 0 ? 1 : -1;
    return 1;
}

static sw_status track_lines(ictx *c, sw_germ *g, size_t from, size_t to, int keep,
                             sw_error *err)
{
    for (size_t k = from; k < to; k++) {
        tline *l = &c->lines[k];
        sw_track_opts o = c->o->track;
        o.keep_log = keep;
        o.min_step = fmin(o.min_step, l->min_step);
        sw_status st = sw_track_run(&l->tr, c->f, g, &l->path, &o, err);
        if (st != SW_OK)
            return st;
        c->steps += l->tr.steps;
        sw_germ_copy(g, &l->tr.vert[l->tr.nvert - 1]);
    }
    return SW_OK;
}

static sw_status track_back(ictx *c, sw_germ *g, size_t upto, sw_error *err)
{
    for (size_t k = upto; k-- > 0;) {
        sw_path rp;
        sw_path_init(&rp);
        sw_status st = sw_path_copy(&rp, &c->lines[k].path, err);
        if (st != SW_OK)
            return st;
        sw_path_reverse(&rp);
        sw_trace tr;
        sw_trace_init(&tr);
        sw_track_opts o = c->o->track;
        o.keep_log = 0;
        o.min_step = fmin(o.min_step, c->lines[k].min_step);
        st = sw_track_run(&tr, c->f, g, &rp, &o, err);
        if (st == SW_OK) {
            c->steps += tr.steps;
            sw_germ_copy(g, &tr.vert[tr.nvert - 1]);
        }
        sw_trace_clear(&tr);
        sw_path_clear(&rp);
        if (st != SW_OK)
            return st;
    }
    return SW_OK;
}

sw_status sw_integrate_path(sw_integral *out, const sw_func *f, const sw_expr *integrand,
                            const sw_path *path, size_t vertex, const double complex *w,
                            const sw_integrate_opts *opts, sw_error *err)
{
    sw_integrate_opts defo;
    if (opts == NULL) {
        sw_integrate_opts_init(&defo);
        opts = &defo;
    }
    ictx c;
    memset(&c, 0, sizeof c);
    c.f = f;
    c.R = integrand;
    c.o = opts;
    c.expr = sw_func_kind_of(f) == SW_FUNC_EXPR;
    c.nmv = c.expr ? sw_expr_mv_count(sw_func_expr(f)) : 0;
    c.curve = sw_func_kind_of(f) == SW_FUNC_CURVE ? sw_curve_of(f) : NULL;
    c.quick = c.curve != NULL;
    if (c.curve && ld_coeffs(&c) != 0)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    piece *pcs = NULL;
    station *stations = NULL;
    int *sing = NULL;
    size_t npc = 0, nst = 0;
    sw_germ g0;
    int have_g0 = 0;
    sw_status st = SW_OK;
    const size_t n = path->n;
    if (!(opts->epsrel >= 0) || !(opts->epsabs >= 0) || !(opts->epsrel > 0 || opts->epsabs > 0))
        return sw_error_set(err, SW_EUSAGE, "tolerances must be >= 0 and not both 0");
    if (n < 2)
        return sw_error_set(err, SW_EINPUT, "the path needs at least two finite vertices");
    if (vertex >= n)
        return sw_error_set(err, SW_EUSAGE, "vertex %zu is not a finite vertex of the path",
                            vertex + 1);
    if (sw_germ_init(&c.g, f) != SW_OK || sw_germ_init(&c.h, f) != SW_OK ||
        sw_germ_init(&c.k, f) != SW_OK || sw_germ_init(&g0, f) != SW_OK) {
        sw_germ_clear(&c.g);
        sw_germ_clear(&c.h);
        sw_germ_clear(&c.k);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    have_g0 = 1;
    c.scale = sw_path_scale(path);
    const double S = c.scale;
    pcs = calloc(n + 4, sizeof *pcs);
    sing = calloc(n, sizeof *sing);
    if (pcs == NULL || sing == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    double complex centre = 0;
    double radius = 0, theta0 = 0;
    int orient = 1;
    int is_circle = opts->circle && circle_of(path, &centre, &radius, &theta0, &orient);
    double complex fixz = 0;
    int fixbank = SW_BANK_NONE;
    size_t fixline = 0; /* the branch is fixed at the start of this line (== nlines: end) */

    if (is_circle) {
        /* track a polygon of at least 64 vertices on the circle (the user's
           own when it has that many); quadrature points are reached from it
           by a short straight step (at most 0.12% of the radius).  A coarser
           user polygon decides the branch at the end, and the two must agree */
        size_t N = path->n - 1, Nt = N < 64 ? 64 : N;
        double complex *zz = malloc((Nt + 1) * sizeof *zz);
        if (zz == NULL) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        for (size_t k = 0; k <= Nt; k++) {
            double th = theta0 + orient * 2 * PI * (double)k / (double)Nt;
            zz[k] = (k == 0 || k == Nt) ? path->z[0] : centre + radius * CMPLX(cos(th), sin(th));
        }
        int r = add_line(&c, zz, NULL, Nt + 1, 1, opts->track.min_step);
        free(zz);
        if (r != 0)
            goto fail_ctx;
        pcs[0].kind = SW_PIECE_CIRCLE;
        pcs[0].centre = centre;
        pcs[0].radius = radius;
        pcs[0].theta0 = theta0;
        pcs[0].orient = orient;
        pcs[0].ncircle = (int)Nt;
        pcs[0].line0 = 0;
        pcs[0].nline = 1;
        npc = 1;
        sw_track_opts to = opts->track;
        st = sw_track_start_germ(&g0, f, path, vertex, w, &to, err);
        if (st != SW_OK)
            goto cleanup;
        sw_germ gp;
        if (sw_germ_init(&gp, f) != SW_OK) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        sw_germ_copy(&gp, &g0);
        double complex wpoly = 0;
        if (Nt != N) {
            sw_trace ptr;
            sw_trace_init(&ptr);
            to.keep_log = 0;
            st = sw_track_run(&ptr, f, &gp, path, &to, err);
            wpoly = st == SW_OK ? sw_func_value(f, &ptr.vert[ptr.nvert - 1]) : 0;
            if (st == SW_OK)
                c.steps += ptr.steps;
            sw_trace_clear(&ptr);
        }
        if (st == SW_OK)
            st = track_lines(&c, &gp, 0, 1, 1, err);
        double complex wfine = sw_func_value(f, &gp);
        sw_germ_clear(&gp);
        if (st != SW_OK)
            goto cleanup;
        if (Nt != N && cabs(wfine - wpoly) > 1e-8 * fmax(cabs(wpoly), 1e-300)) {
            /* a singular point between polygon and circle: integrate the polygon */
            sw_path_clear(&c.lines[0].path);
            sw_trace_clear(&c.lines[0].tr);
            c.nlines = 0;
            is_circle = 0;
            npc = 0;
        }
    }

    if (!is_circle) {
        /* stations: the points the pieces run between, in path order (an
           artificial station splits a ray off a singular finite vertex) */
        for (size_t k = 0; k < n; k++)
            sing[k] = point_singular(&c, path->z[k], path->bank[k]);
        nst = 0;
        stations = calloc(n + 4, sizeof *stations);
        if (stations == NULL) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        if (path->inf_start) {
            double complex d = path->z[0] - path->z[1];
            double L = fmax(cabs(d), cabs(path->z[0]));
            stations[nst++] = (station){0, SW_BANK_NONE, 0, 1, -1, L, d / cabs(d)};
            if (sing[0])
                stations[nst++] = (station){path->z[0] + d / cabs(d) * L, SW_BANK_NONE, 0, 0,
                                            -1, 0, 0};
        }
        for (size_t k = 0; k < n; k++)
            stations[nst++] = (station){path->z[k], path->bank[k], sing[k], 0, (long)k, 0, 0};
        if (path->inf_end) {
            double complex d = path->z[n - 1] - path->z[n - 2];
            double L = fmax(cabs(d), cabs(path->z[n - 1]));
            if (sing[n - 1])
                stations[nst++] = (station){path->z[n - 1] + d / cabs(d) * L, SW_BANK_NONE, 0,
                                            0, -1, 0, 0};
            stations[nst++] = (station){0, SW_BANK_NONE, 0, 1, -1, L, d / cabs(d)};
        }
        for (size_t i = 1; i + 1 < nst; i++)
            if (stations[i].sing && stations[i].bank == SW_BANK_NONE) {
                st = sw_error_set(err, SW_ESINGULAR,
                                  "the path passes through a singular point (branch point, "
                                  "pole or zero of an operand) at z = %.10g%+.10gi: the branch "
                                  "beyond it is not determined; mark the side with a bank mark "
                                  "(e.g. '%.6g+i0') or end the path there",
                                  creal(stations[i].z), cimag(stations[i].z),
                                  creal(stations[i].z));
                goto cleanup;
            }
        if (sing[vertex] && w == NULL && !(stations[0].vertex == (long)vertex ||
                                           stations[nst - 1].vertex == (long)vertex)) {
            /* the default branch at a singular point inside the path (a path
               from 'inf' through a marked branch point): principal / sheet 1
               at the nearest regular vertex instead */
            for (size_t d = 1; d < n; d++) {
                if (vertex + d < n && !sing[vertex + d]) {
                    vertex += d;
                    break;
                }
                if (vertex >= d && !sing[vertex - d]) {
                    vertex -= d;
                    break;
                }
            }
        }
        if (sing[vertex] && !(stations[0].vertex == (long)vertex ||
                              stations[nst - 1].vertex == (long)vertex)) {
            st = sw_error_set(err, SW_EUSAGE,
                              "the branch cannot be fixed at vertex %zu: it is a singular "
                              "point inside the path; fix it at another vertex", vertex + 1);
            goto cleanup;
        }
        /* tracking starts INSET from a singular end of the path; an engine
           that cannot step that close to a branch point (colliding roots of
           a curve) gets a start 1000 times farther, twice at most */
        int use_anchors = c.expr && c.nmv > 0 && c.R == NULL;
        for (double boost = 1;; boost *= 1000) {
            int retry = boost < 1e6 && (stations[0].sing || stations[nst - 1].sing);
            for (size_t k = 0; k < c.nlines; k++) {
                sw_path_clear(&c.lines[k].path);
                sw_trace_clear(&c.lines[k].tr);
            }
            c.nlines = 0;
            for (size_t k = 0; k < npc; k++) {
                anchor_free(pcs[k].anc_a);
                anchor_free(pcs[k].anc_b);
            }
            npc = 0;
            memset(pcs, 0, (n + 4) * sizeof *pcs);
            /* pieces and their tracked lines, in path order */
            double inset = SW_INTEGRATE_INSET * S * boost, bridge = BRIDGE_INSET * S;
            double fine = 1e-15; /* tracker floor next to singular ends (relative) */
            for (size_t i = 0; i + 1 < nst; i++) {
                const station *sa = &stations[i], *sb = &stations[i + 1];
                piece *p = &pcs[npc];
                if (sa->inf || sb->inf) {
                    const station *fin = sa->inf ? sb : sa, *inf = sa->inf ? sa : sb;
                    p->kind = sa->inf ? SW_PIECE_RAY_IN : SW_PIECE_RAY_OUT;
                    p->a = fin->z;
                    p->b = inf->dir;
                    p->L = inf->L;
                    double umax = p->L * (1 / RAY_DEPTH - 1);
                    double us[80];
                    size_t nu = 0;
                    us[nu++] = 0;
                    for (double u = p->L; u < umax && nu < 70; u *= RAY_CHUNK)
                        us[nu++] = u;
                    us[nu++] = umax;
                    p->line0 = c.nlines;
                    for (size_t k = 0; k + 1 < nu; k++) {
                        size_t j = sa->inf ? nu - 1 - k : k;
                        double complex zz[2] = {p->a + p->b * us[j],
                                                p->a + p->b * us[sa->inf ? j - 1 : j + 1]};
                        if (add_line(&c, zz, NULL, 2, 1, opts->track.min_step) != 0)
                            goto fail_ctx;
                    }
                    p->nline = c.nlines - p->line0;
                    npc++;
                    continue;
                }
                double complex a = sa->z, b = sb->z;
                if (a == b)
                    continue;
                p->kind = SW_PIECE_SEGMENT;
                p->a = a;
                p->b = b;
                p->sing_a = sa->sing;
                p->sing_b = sb->sing;
                double complex u = (b - a) / cabs(b - a);
                double ia = !sa->sing ? 0 : (i == 0 ? inset : bridge);
                double ib = !sb->sing ? 0 : (i + 2 == nst ? inset : bridge);
                if (ia + ib >= 0.5 * cabs(b - a)) {
                    st = sw_error_set(err, SW_EINPUT,
                                      "a segment of length %.3g next to a singular point is too "
                                      "short for the path's scale %.3g", cabs(b - a), S);
                    goto cleanup;
                }
                double complex zz[2] = {a + u * ia, b - u * ib};
                int bk[2] = {sa->bank, sb->bank};
                /* anchors at the path's singular ends (see anchor): the line
                   is tracked only from xj on */
                if (use_anchors && i == 0 && sa->sing && sa->bank == SW_BANK_NONE &&
                    (p->anc_a = anchor_new(&c, a, b - a)) != NULL) {
                    p->anc_a->xs = ia / cabs(b - a);
                    if (p->anc_a->xj > 16 * p->anc_a->xs) {
                        zz[0] = a + p->anc_a->xj * (b - a);
                        ia = 0;
                    } else {
                        anchor_free(p->anc_a);
                        p->anc_a = NULL;
                    }
                }
                if (use_anchors && i + 2 == nst && sb->sing && sb->bank == SW_BANK_NONE &&
                    (p->anc_b = anchor_new(&c, b, a - b)) != NULL) {
                    p->anc_b->xs = ib / cabs(b - a);
                    if (p->anc_b->xj > 16 * p->anc_b->xs) {
                        zz[1] = b + p->anc_b->xj * (a - b);
                        ib = 0;
                    } else {
                        anchor_free(p->anc_b);
                        p->anc_b = NULL;
                    }
                }
                if (p->anc_a && p->anc_a->whole && !sb->sing) {
                    /* operands that are monomials at the end: the closed form
                       covers the segment but for the quarter next to its
                       other (regular) end, which is tracked */
                    p->anc_a->xj = 1 - ANCHOR_MAX;
                    zz[0] = a + p->anc_a->xj * (b - a);
                }
                if (i > 0 && sa->sing && c.nlines > 0) {
                    /* carry the branch past the marked singular point on a small
                       detour on the marked side */
                    double complex bz[3] = {c.lines[c.nlines - 1].q,
                                            a + CMPLX(0.0, (double)sa->bank * ia), zz[0]};
                    if (add_line(&c, bz, NULL, 3, 0, fine) != 0)
                        goto fail_ctx;
                }
                p->line0 = c.nlines;
                if (add_line(&c, zz, bk, 2, 1, (ia > 0 || ib > 0) ? fine : opts->track.min_step) !=
                    0)
                    goto fail_ctx;
                c.lines[c.nlines - 1].inset_p = ia;
                c.lines[c.nlines - 1].inset_q = ib;
                p->nline = 1;
                npc++;
            }
            if (c.nlines == 0) {
                st = sw_error_set(err, SW_EINPUT, "the path has no segment of positive length");
                goto cleanup;
            }
            /* where the branch is fixed */
            anchor *fixed_anchor = NULL;
            double complex fixshown = 0; /* the point named in messages (0: fixz) */
            if (!sing[vertex]) {
                fixz = path->z[vertex];
                fixbank = path->bank[vertex];
            } else if (stations[0].vertex == (long)vertex) {
                fixz = c.lines[0].p;
                fixbank = path->bank[vertex];
            } else {
                fixz = c.lines[c.nlines - 1].q;
                fixbank = path->bank[vertex];
            }
            fixline = c.nlines;
            for (size_t k = 0; k < c.nlines; k++)
                if (c.lines[k].p == fixz) {
                    fixline = k;
                    break;
                }
            if (fixline == c.nlines && c.lines[c.nlines - 1].q != fixz) {
                st = sw_error_set(err, SW_EINTERNAL, "the fixing point is not on a tracked line");
                goto cleanup;
            }
            if (sing[vertex] && fixbank != SW_BANK_NONE) {
                /* a bank limit so close to a branch point is beyond the
                   engine (it takes the limit from 1e-8 of |z| away): take it
                   farther along the segment and carry it back on the bank */
                double complex z0 = path->z[vertex], d = fixz - z0;
                double want = fmax(1e-4 * fmax(1.0, cabs(z0)), 1e-6 * S);
                const tline *fl = fixline < c.nlines ? &c.lines[fixline] : &c.lines[c.nlines - 1];
                double room = 0.25 * cabs(fl->q - fl->p);
                double complex zf = z0 + d / cabs(d) * fmin(want, room);
                sw_path bp;
                sw_path_init(&bp);
                sw_trace btr;
                sw_trace_init(&btr);
                st = sw_func_germ_at(&g0, f, zf, fixbank, w, err);
                if (st == SW_OK && (st = sw_path_push(&bp, zf, fixbank, err)) == SW_OK &&
                    (st = sw_path_push(&bp, fixz, fixbank, err)) == SW_OK) {
                    sw_track_opts to = opts->track;
                    to.keep_log = 0;
                    to.min_step = fmin(to.min_step, 1e-15);
                    st = sw_track_run(&btr, f, &g0, &bp, &to, err);
                    if (st == SW_OK)
                        sw_germ_copy(&g0, &btr.vert[1]);
                }
                sw_trace_clear(&btr);
                sw_path_clear(&bp);
            } else if (sing[vertex] && (stations[0].vertex == (long)vertex ? pcs[0].anc_a
                                                                               : pcs[npc - 1].anc_b)) {
                /* the branch fixed next to an anchored end, carried to the
                   anchor's line end in closed form */
                fixed_anchor = stations[0].vertex == (long)vertex ? pcs[0].anc_a : pcs[npc - 1].anc_b;
                double complex zs = fixed_anchor->base + fixed_anchor->xs * fixed_anchor->dir;
                fixshown = zs;
                st = sw_func_germ_at(&g0, f, zs, fixbank, w, err);
                if (st == SW_OK) {
                    if (anchor_from_start(&c, fixed_anchor, &g0) != 0) {
                        use_anchors = 0; /* again, tracked from next to the end */
                        boost /= 1000;
                        continue;
                    }
                    sw_germ_copy(&g0, &fixed_anchor->gj);
                }
            } else {
                st = sw_func_germ_at(&g0, f, fixz, fixbank, w, err);
            }
            if (st == SW_ESINGULAR && retry)
                continue;
            if (st != SW_OK) {
                if (fixed_anchor == NULL)
                    fixshown = fixz;
                sw_error_prefix(err, "fixing the branch at z = %.10g%+.10gi", creal(fixshown),
                                cimag(fixshown));
                goto cleanup;
            }
            g0.z = fixz;
            st = track_back(&c, &g0, fixline, err);
            if (st == SW_ESINGULAR && retry)
                continue;
            if (st != SW_OK)
                goto cleanup;
            sw_germ gg;
            if (sw_germ_init(&gg, f) != SW_OK) {
                st = sw_error_set(err, SW_ENOMEM, "out of memory");
                goto cleanup;
            }
            sw_germ_copy(&gg, &g0);
            st = track_lines(&c, &gg, 0, c.nlines, 1, err);
            sw_germ_clear(&gg);
            if (st == SW_ESINGULAR && retry)
                continue;
            if (st != SW_OK)
                goto cleanup;
            /* the other anchors take the germs the lines arrived with */
            int bad = 0;
            for (size_t k = 0; k < npc && !bad; k++) {
                const piece *pk = &pcs[k];
                if (pk->anc_a && pk->anc_a != fixed_anchor)
                    bad = anchor_from_line(&c, pk->anc_a, &c.lines[pk->line0].tr.vert[0]) != 0;
                if (pk->anc_b && pk->anc_b != fixed_anchor) {
                    const tline *l = &c.lines[pk->line0 + pk->nline - 1];
                    bad = bad || anchor_from_line(&c, pk->anc_b, &l->tr.vert[l->tr.nvert - 1]) != 0;
                }
            }
            if (bad) {
                use_anchors = 0;
                boost /= 1000;
                continue;
            }
            break;
        }
    }

    /* integrate every piece */
    int all_ok = 1;
    double tol_share = opts->epsabs / (double)(npc ? npc : 1) * opts->aim;
    for (size_t k = 0; k < npc; k++) {
        int r;
        if (pcs[k].kind == SW_PIECE_SEGMENT)
            r = integrate_segment(&c, &pcs[k], &all_ok, &tol_share);
        else if (pcs[k].kind == SW_PIECE_CIRCLE)
            r = integrate_circle(&c, &pcs[k], &all_ok, &tol_share);
        else
            r = integrate_ray(&c, &pcs[k], &all_ok, &tol_share);
        if (r != 0)
            goto fail_ctx;
    }
    {
        sw_integral res;
        sw_integral_init(&res);
        double complex v = 0;
        double e = 0, l1 = 0;
        for (size_t k = 0; k < c.npieces; k++) {
            v += c.pieces[k].value;
            e += c.pieces[k].abserr;
            l1 += fmax(c.piece_l1[k], cabs(c.pieces[k].value));
        }
        res.value = v;
        res.abserr = e;
        res.evaluations = c.evals;
        res.steps = c.steps;
        res.magnitude = l1;
        /* met: within the tolerance, or within rounding of the integral of
           |R dz| when the value itself cancels (then no relative accuracy
           of the value is possible in double precision) */
        /* the rules' own flags (GSL's roundoff and iteration limits) are
           reflected in their error estimates, which decide */
        (void)all_ok;
        res.converged = e <= fmax(fmax(opts->epsabs, opts->epsrel * cabs(v)),
                                  ROUNDING_FLOOR * EPS * l1);
        res.certified = 0;
        res.npieces = c.npieces;
        res.piece = c.pieces;
        res.nends = c.nends;
        res.end = c.ends;
        c.pieces = NULL;
        c.ends = NULL;
        const tline *l0 = &c.lines[0], *ln = &c.lines[c.nlines - 1];
        /* anchored ends: the germs next to the end, as without anchors */
        const sw_germ *gfirst = npc && pcs[0].anc_a ? &pcs[0].anc_a->gs : &l0->tr.vert[0];
        const sw_germ *glast = npc && pcs[npc - 1].anc_b ? &pcs[npc - 1].anc_b->gs
                                                         : &ln->tr.vert[ln->tr.nvert - 1];
        res.start_z = gfirst->z;
        res.start_w = sw_func_value(f, gfirst);
        res.end_z = glast->z;
        res.end_w = sw_func_value(f, glast);
        if (path->inf_start)
            res.start_w = CMPLX(NAN, NAN);
        if (path->inf_end)
            res.end_w = CMPLX(NAN, NAN);
        res.closed = sw_path_is_closed(path);
        res.start_sheet = sheet_label(f, &l0->tr.vert[0]);
        res.end_sheet = sheet_label(f, &ln->tr.vert[ln->tr.nvert - 1]);
        sw_integral_clear(out);
        *out = res;
        if (!res.converged)
            st = sw_error_set(err, SW_ETOLERANCE,
                              "the integral did not reach the tolerance: estimated error %.3g "
                              "for |value| %.3g (requested %.3g relative)", e, cabs(v),
                              opts->epsrel);
    }
    goto cleanup;
fail_ctx:
    if (c.st == SW_OK)
        c.st = sw_error_set(&c.err, SW_EINTERNAL, "integration failed");
    st = c.st;
    if (err)
        *err = c.err;
cleanup:
    for (size_t k = 0; k < c.nlines; k++) {
        sw_path_clear(&c.lines[k].path);
        sw_trace_clear(&c.lines[k].tr);
    }
    free(c.lines);
    for (size_t k = 0; pcs && k < npc; k++) {
        anchor_free(pcs[k].anc_a);
        anchor_free(pcs[k].anc_b);
    }
    free(c.pieces);
    free(c.piece_l1);
    free(c.ld);
    free(c.ends);
    free(pcs);
    free(stations);
    free(sing);
    sw_germ_clear(&c.g);
    sw_germ_clear(&c.h);
    sw_germ_clear(&c.k);
    if (have_g0)
        sw_germ_clear(&g0);
    return st;
}

/* ------------------------------------------------------- bank integrals */

void sw_bank_integral_init(sw_bank_integral *r)
{
    memset(r, 0, sizeof *r);
    sw_integral_init(&r->direct);
    r->agreement = NAN;
    r->contour = CMPLX(NAN, NAN);
}

void sw_bank_integral_clear(sw_bank_integral *r)
{
    if (r == NULL)
        return;
    sw_integral_clear(&r->direct);
    memset(r, 0, sizeof *r);
    r->agreement = NAN;
}

/* The integrand of the regular branch at Z on bank side BANK. */
static sw_status bank_value(double complex *v, double complex *wout, sw_germ *g, const sw_func *f,
                            const sw_expr *R, const sw_branch *b, double complex z, int bank,
                            sw_error *err)
{
    sw_status st = sw_branch_eval(g, b, z, bank, err);
    if (st != SW_OK)
        return st;
    double complex w = sw_func_value(f, g);
    if (wout)
        *wout = w;
    *v = R ? sw_expr_eval_principal(R, z, w) : w;
    if (!isfinite(creal(*v)) || !isfinite(cimag(*v)))
        return sw_error_set(err, SW_ESINGULAR, "the integrand is not finite at z = %.10g%+.10gi",
                            creal(z), cimag(z));
    return SW_OK;
}

sw_status sw_integrate_bank(sw_bank_integral *out, const sw_func *f, const sw_expr *R,
                            const sw_cuts *cuts, const sw_branch *b, const sw_points *pts,
                            double complex A, double complex B, int bank,
                            const sw_integrate_opts *o, sw_error *err)
{
    sw_bank_integral res;
    sw_bank_integral_init(&res);
    sw_points own;
    sw_points_init(&own);
    sw_germ g;
    sw_path p, circ;
    sw_path_init(&p);
    sw_path_init(&circ);
    sw_integral loop;
    sw_integral_init(&loop);
    sw_crossing *cr = NULL;
    size_t ncr = 0;
    sw_status st = SW_OK, dst = SW_OK;
    char a1[64], a2[64];
    if (sw_germ_init(&g, f) != SW_OK)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    double complex u = B - A;
    if (bank != SW_BANK_UPPER && bank != SW_BANK_LOWER) {
        st = sw_error_set(err, SW_EUSAGE, "the bank must be +i0 or -i0");
        goto cleanup;
    }
    if (!(cabs(u) > 0) || fabs(creal(u)) <= 1e-12 * cabs(u)) {
        st = sw_error_set(err, SW_EINPUT,
                          "the bank segment from %s to %s is %s: +i0 / -i0 do not choose a side",
                          cstr(a1, sizeof a1, A), cstr(a2, sizeof a2, B),
                          cabs(u) > 0 ? "vertical" : "empty");
        goto cleanup;
    }
    /* (a) direct: along the bank, the branch fixed by B at the middle (or a
       point near it when the middle is itself singular) */
    double complex M = A + 0.5 * u, wm = 0;
    double complex vm;
    const double tries[3] = {0.5, 0.4321, 0.5678};
    for (int k = 0; k < 3; k++) {
        M = A + tries[k] * u;
        st = bank_value(&vm, &wm, &g, f, R, b, M, bank, err);
        if (st == SW_OK)
            break;
    }
    if (st != SW_OK) {
        sw_error_prefix(err, "the regular branch on the bank");
        goto cleanup;
    }
    if ((st = sw_path_push(&p, A, bank, err)) != SW_OK ||
        (st = sw_path_push(&p, M, bank, err)) != SW_OK ||
        (st = sw_path_push(&p, B, bank, err)) != SW_OK)
        goto cleanup;
    dst = sw_integrate_path(&res.direct, f, R, &p, 1, &wm, o, err);
    if (dst != SW_OK && dst != SW_ETOLERANCE) {
        st = dst;
        goto cleanup;
    }
    res.evaluations = res.direct.evaluations;
    /* (b) the jump, constant along [A, B]? */
    double complex lam[3];
    const double at[3] = {0.25, 0.5, 0.75};
    sw_error e2;
    int ok = 1;
    for (int k = 0; k < 3 && ok; k++) {
        double complex z = A + at[k] * u, v1, v2;
        if (bank_value(&v1, NULL, &g, f, R, b, z, bank, &e2) != SW_OK ||
            bank_value(&v2, NULL, &g, f, R, b, z, -bank, &e2) != SW_OK) {
            snprintf(res.note, sizeof res.note,
                     "the contour method does not apply: the other bank could not be evaluated "
                     "(%.150s)", e2.msg);
            ok = 0;
            break;
        }
        lam[k] = v2 / v1;
    }
    if (ok) {
        res.lambda = lam[1];
        if (cabs(lam[0] - lam[1]) > 1e-8 * cabs(lam[1]) ||
            cabs(lam[2] - lam[1]) > 1e-8 * cabs(lam[1])) {
            snprintf(res.note, sizeof res.note,
                     "the contour method does not apply: the jump across [A, B] is not one "
                     "constant factor (%s at 1/4, %s at 3/4)", cstr(a1, sizeof a1, lam[0]),
                     cstr(a2, sizeof a2, lam[2]));
            ok = 0;
        } else if (cabs(lam[1] - 1) <= 1e-8) {
            snprintf(res.note, sizeof res.note,
                     "the contour method does not apply: the integrand does not jump across "
                     "[A, B] (lambda = 1)");
            ok = 0;
        }
    }
    /* The loop: an ellipse with foci A and B, z = C + (u/2) cosh(rho + i theta),
       thin enough to leave out every known singular point off [A, B] (rho at
       most half of the parameter of the nearest one).  Poles of single-valued
       parts are not among the known points, so the loop integral is taken on
       two confocal ellipses (rho and rho/2) and must agree: if it does not, a
       singular point lies between them and rho is halved again (3 times at
       most).  Both loops cross no cut when the cut is [A, B] itself. */
    double scale = fmax(cabs(A), cabs(B)) + cabs(u);
    double rho = 0.6;
    double complex C = A + 0.5 * u, near = 0;
    if (ok && pts == NULL) {
        if (sw_points_compute(&own, f, NULL, &e2) != SW_OK) {
            snprintf(res.note, sizeof res.note,
                     "the contour method does not apply: the singular points are not known "
                     "(%.150s)", e2.msg);
            ok = 0;
        }
        pts = &own;
    }
    if (ok) {
        for (size_t k = 0; k < pts->n; k++) {
            double complex z = pts->pt[k].z;
            if (sw_segment_distance(z, A, B) <= 1e-9 * scale)
                continue;
            /* elliptic parameter of z: Re acosh((z - C) / (u/2)) >= 0 */
            double complex w = (z - C) / (0.5 * u);
            double complex r = w + csqrt(w - 1) * csqrt(w + 1);
            double rz = log(fmax(cabs(r), 1 / cabs(r)));
            if (0.5 * rz < rho) {
                rho = 0.5 * rz;
                near = z;
            }
        }
        /* poles of single-valued parts (zeros of denominators) count too */
        double complex *pz = NULL;
        size_t npz = 0;
        sw_error e3;
        sw_status pst = sw_expr_pole_candidates(&pz, &npz, f, &e3);
        for (size_t k = 0; k < npz; k++) {
            double complex z = pz[k];
            if (sw_segment_distance(z, A, B) <= 1e-9 * scale)
                continue;
            double complex w = (z - C) / (0.5 * u);
            double complex r = w + csqrt(w - 1) * csqrt(w + 1);
            double rz = log(fmax(cabs(r), 1 / cabs(r)));
            if (0.5 * rz < rho) {
                rho = 0.5 * rz;
                near = z;
            }
        }
        free(pz);
        (void)pst; /* unknown denominators: the two-ellipse cross-check remains */
        if (!(rho > 1e-3)) {
            snprintf(res.note, sizeof res.note,
                     "the contour method does not apply: the singular point %s is too close to "
                     "[A, B] for a loop around it", cstr(a1, sizeof a1, near));
            ok = 0;
        }
    }
    double complex loopv[2] = {0, 0};
    double loope[2] = {0, 0};
    int agreed = 0;
    for (int attempt = 0; ok && attempt < 4 && !agreed; attempt++) {
        for (int j = 0; j < 2 && ok; j++) {
            double rj = j == 0 ? rho : 0.5 * rho;
            /* vertices: enough that the polygon stays close to the ellipse */
            int N = (int)fmin(512, ceil(48 / fmax(rj, 0.05)));
            sw_path_clear(&circ);
            sw_path_init(&circ);
            for (int k = 0; k <= N && st == SW_OK; k++) {
                double th = 2 * PI * k / N;
                st = sw_path_push(&circ, k == N ? circ.z[0]
                                              : C + 0.5 * u * ccosh(CMPLX(rj, th)),
                                  SW_BANK_NONE, err);
            }
            if (st != SW_OK)
                goto cleanup;
            free(cr);
            cr = NULL;
            if (sw_cuts_crossings(&cr, &ncr, cuts, &circ, &e2) != SW_OK || ncr > 0) {
                snprintf(res.note, sizeof res.note,
                         "the contour method does not apply: a loop around [A, B] crosses the "
                         "cuts (the cut does not end at A and B)");
                ok = 0;
                break;
            }
            double complex ws;
            if (bank_value(&vm, &ws, &g, f, R, b, circ.z[0], SW_BANK_NONE, &e2) != SW_OK) {
                snprintf(res.note, sizeof res.note,
                         "the contour method does not apply: the regular branch on the loop "
                         "(%.150s)", e2.msg);
                ok = 0;
                break;
            }
            sw_integral_clear(&loop);
            sw_integral_init(&loop);
            sw_status ls = sw_integrate_path(&loop, f, R, &circ, 0, &ws, o, &e2);
            res.evaluations += loop.evaluations;
            if (ls != SW_OK && ls != SW_ETOLERANCE) {
                snprintf(res.note, sizeof res.note,
                         "the contour method does not apply: the loop failed (%.150s)", e2.msg);
                ok = 0;
            } else if (cabs(loop.end_w - loop.start_w) > 1e-8 * cabs(loop.start_w)) {
                snprintf(res.note, sizeof res.note,
                         "the contour method does not apply: the function does not come back "
                         "to its branch after a turn around [A, B]");
                ok = 0;
            }
            loopv[j] = loop.value;
            loope[j] = loop.abserr;
        }
        if (!ok)
            break;
        double tol = 1e-9 * (cabs(loopv[0]) + cabs(loopv[1])) + 10 * (loope[0] + loope[1]);
        if (cabs(loopv[0] - loopv[1]) <= tol)
            agreed = 1;
        else
            rho *= 0.25; /* something sits between the two ellipses: hug closer */
    }
    if (ok && !agreed) {
        snprintf(res.note, sizeof res.note,
                 "the contour method does not apply: loops around [A, B] of different widths "
                 "disagree (a singular point the analysis does not know lies next to the cut)");
        ok = 0;
    }
    if (ok) {
        res.centre = C;
        res.radius = 0.5 * cabs(u) * cosh(rho); /* semi-major axis of the outer ellipse */
        loop.value = loopv[0];
        loop.abserr = fmax(loope[0], cabs(loopv[0] - loopv[1]));
    }
    if (ok) {
        /* counter-clockwise: along the right side of A -> B from A to B, back
           along the left side: loop = int_A^B (f_right - f_left) dz */
        int left = bank * creal(u) > 0;
        double complex fac = left ? res.lambda - 1 : 1 - res.lambda;
        res.loop = loop.value;
        res.loop_abserr = loop.abserr;
        res.contour = loop.value / fac;
        res.contour_abserr = loop.abserr / cabs(fac);
        res.agreement = cabs(res.direct.value - res.contour) / cabs(res.direct.value);
        res.contour_applies = 1;
        snprintf(res.note, sizeof res.note,
                 "loop integral computed numerically on ellipses with foci A and B (semi-major "
                 "axis %.6g, and half as thick for the cross-check), divided by %s",
                 res.radius, left ? "(lambda - 1)" : "(1 - lambda)");
    }
    st = dst;
    if (st == SW_ETOLERANCE)
        sw_error_set(err, SW_ETOLERANCE, "the direct bank integral did not reach the tolerance");
    sw_bank_integral_clear(out);
    *out = res;
    sw_bank_integral_init(&res);
cleanup:
    sw_bank_integral_clear(&res);
    sw_integral_clear(&loop);
    free(cr);
    sw_points_clear(&own);
    sw_path_clear(&p);
    sw_path_clear(&circ);
    sw_germ_clear(&g);
    return st;
}
