/* Branch points, poles and local monodromy of a curve P(z, w) = 0.
 *
 * Candidates (methods.md section 2; R. Miranda, Algebraic Curves and Riemann
 * Surfaces, AMS 1995, ch. III-IV): the roots of the discriminant Disc_w P(z)
 * and of the leading coefficient a_n(z).  Both are computed exactly with FLINT
 * (fmpq_mpoly_discriminant).  With complex coefficients P = P_re + i P_im is
 * written with a third variable t for i, the discriminant is taken in
 * Q[z, w, t] and reduced modulo t^2 + 1; the real polynomial |D|^2 =
 * D_re^2 + D_im^2 then carries every root of D (and of its conjugate, which
 * are discarded by evaluating D on the root's ball).  Square-free parts are
 * taken exactly (p / gcd(p, p')), the pieces "discriminant only",
 * "discriminant and leading coefficient" and "leading coefficient only" are
 * separated by an exact gcd, and each piece's roots are isolated with Arb.
 *
 * Root isolation: double-precision Aberth-Ehrlich approximations (curve.c)
 * are handed to acb_poly_find_roots as starting values at a precision chosen
 * from the coefficient size and degree, raised (x1.5) until every root is
 * isolated in a certified ball.
 *
 * Loops.  Base point b: outside the candidates' convex hull, on a circle of
 * radius 1.5 R + max(R, 1)/4 around their centroid (R = largest distance from
 * the centroid), at the one of 64 trial angles where no candidate comes close
 * to the segment from b to another candidate (relative to its loop radius).
 * Each candidate c_k gets a counter-clockwise circle of radius r_k =
 * radius_fraction * (distance to its nearest other candidate); the loop runs
 * straight from b towards c_k, bending around the disk of radius 1.25 r_j of
 * any other candidate c_j it would enter, on the side away from c_j (so the
 * path stays homotopic to the straight segment), goes once round the circle,
 * and returns the same way.  Only the way out and the circle are tracked: the
 * permutation comes from matching the fiber after the circle to the fiber
 * before it, both at the circle's start point.
 *
 * Product relation.  With b outside the hull, the straight loops taken in
 * increasing argument of c_k - b (measured from the direction of the
 * centroid) compose to a loop once counter-clockwise round all candidates,
 * which is the inverse of the loop round infinity (a large clockwise circle,
 * reached radially from b).  So applying the finite permutations in that
 * order and then infinity's must give the identity; every run checks this
 * (B. Deconinck, M. van Hoeij, Physica D 152-153 (2001) 28-46). */
#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "curve_internal.h"
#include <flint/fmpq_poly.h>
#include <acb_poly.h>
#include "func_internal.h"
#include "sheetwalk/path.h"
#include "sheetwalk/track.h"

#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC diagnostic ignored "-Wstringop-overread"   /* see curve.c */
#endif

int sw_dpoly_roots(double complex *x, const double complex *a, int d, int maxit);

static const double PI = 3.14159265358979323846;

/* ------------------------------------------------------------------------ */
/* Exact candidate polynomials.                                              */

/* Read a polynomial in z alone (variable 0 of CTX, other exponents must be
 * zero) into an fmpq_poly; terms are grouped by the exponent of variable
 * TVAR (if >= 0) modulo 4 and combined with i^k into (RE, IM). */
static void mpoly_to_poly_i(fmpq_poly_t re, fmpq_poly_t im, const fmpq_mpoly_t A, slong tvar,
                            const fmpq_mpoly_ctx_t ctx)
{
    slong i, nv = fmpq_mpoly_ctx_nvars(ctx);
    slong ex[3];
    fmpq_t c, old;
    fmpq_init(c);
    fmpq_init(old);
    fmpq_poly_zero(re);
    fmpq_poly_zero(im);
    for (i = 0; i < fmpq_mpoly_length(A, ctx); i++) {
        slong tk = 0;
        fmpq_mpoly_get_term_exp_si(ex, A, i, ctx);
        fmpq_mpoly_get_term_coeff_fmpq(c, A, i, ctx);
        if (tvar >= 0 && tvar < nv)
            tk = ex[tvar] % 4;
        if (tk == 2 || tk == 3)
            fmpq_neg(c, c);
        if (tk == 0 || tk == 2) {
            fmpq_poly_get_coeff_fmpq(old, re, ex[0]);
            fmpq_add(old, old, c);
            fmpq_poly_set_coeff_fmpq(re, ex[0], old);
        } else {
            fmpq_poly_get_coeff_fmpq(old, im, ex[0]);
            fmpq_add(old, old, c);
            fmpq_poly_set_coeff_fmpq(im, ex[0], old);
        }
    }
    fmpq_clear(c);
    fmpq_clear(old);
}

/* The leading coefficient in w (variable 1) of A as a polynomial in z. */
static void lead_coeff(fmpq_poly_t re, fmpq_poly_t im, const fmpq_mpoly_t A, slong n,
                       slong tvar, const fmpq_mpoly_ctx_t ctx)
{
    fmpq_mpoly_t L;
    slong i, ex[3];
    fmpq_t c;
    fmpq_mpoly_init(L, ctx);
    fmpq_init(c);
    for (i = 0; i < fmpq_mpoly_length(A, ctx); i++) {
        fmpq_mpoly_get_term_exp_si(ex, A, i, ctx);
        if (ex[1] == n) {
            ulong ue[3] = {(ulong)ex[0], 0, tvar >= 0 ? (ulong)ex[2] : 0};
            fmpq_mpoly_get_term_coeff_fmpq(c, A, i, ctx);
            fmpq_mpoly_set_coeff_fmpq_ui(L, c, ue, ctx);
        }
    }
    mpoly_to_poly_i(re, im, L, tvar, ctx);
    fmpq_mpoly_clear(L, ctx);
    fmpq_clear(c);
}

/* p <- primitive integer polynomial with the roots of re^2 + im^2. */
static void norm_poly(fmpz_poly_t p, const fmpq_poly_t re, const fmpq_poly_t im)
{
    fmpq_poly_t a, b;
    fmpq_poly_init(a);
    fmpq_poly_init(b);
    fmpq_poly_mul(a, re, re);
    fmpq_poly_mul(b, im, im);
    fmpq_poly_add(a, a, b);
    fmpq_poly_get_numerator(p, a);
    fmpz_poly_primitive_part(p, p);
    fmpq_poly_clear(a);
    fmpq_poly_clear(b);
}

static void sqf_part(fmpz_poly_t s, const fmpz_poly_t p)
{
    fmpz_poly_t d, g;
    if (fmpz_poly_degree(p) <= 0) {
        fmpz_poly_one(s);
        return;
    }
    fmpz_poly_init(d);
    fmpz_poly_init(g);
    fmpz_poly_derivative(d, p);
    fmpz_poly_gcd(g, p, d);
    fmpz_poly_div(s, p, g);
    fmpz_poly_primitive_part(s, s);
    fmpz_poly_clear(d);
    fmpz_poly_clear(g);
}

/* ------------------------------------------------------------------------ */
/* Root isolation.                                                           */

sw_status sw_poly_isolate_roots(acb_ptr roots, const fmpz_poly_t p, slong maxprec,
                                sw_error *err)
{
    slong d = fmpz_poly_degree(p), k, prec, bits;
    double complex *a = NULL, *x = NULL;
    acb_poly_t ap;
    acb_ptr init = NULL;
    sw_status st = SW_OK;
    slong emax = WORD_MIN;

    if (d <= 0)
        return SW_OK;
    if (d == 1) {
        fmpq_t r;
        fmpq_init(r);
        fmpz_neg(fmpq_numref(r), p->coeffs + 0);
        fmpz_set(fmpq_denref(r), p->coeffs + 1);
        fmpq_canonicalise(r);
        acb_zero(roots);
        arb_set_fmpq(acb_realref(roots), r, 128);
        fmpq_clear(r);
        return SW_OK;
    }
    a = malloc((size_t)(d + 1) * sizeof *a);
    x = malloc((size_t)d * sizeof *x);
    init = _acb_vec_init(d);
    acb_poly_init(ap);
    if (!a || !x) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    /* doubles scaled by a common power of two (coefficients may exceed the
     * double range) */
    for (k = 0; k <= d; k++) {
        if (!fmpz_is_zero(p->coeffs + k)) {
            slong e = (slong)fmpz_bits(p->coeffs + k);
            if (e > emax) emax = e;
        }
    }
    for (k = 0; k <= d; k++) {
        slong e;
        double mnt = fmpz_get_d_2exp(&e, p->coeffs + k);
        a[k] = fmpz_is_zero(p->coeffs + k) ? 0.0 : ldexp(mnt, (int)(e - emax));
    }
    sw_dpoly_roots(x, a, (int)d, 400);   /* starting values; need not converge */
    for (k = 0; k < d; k++) {
        if (!isfinite(creal(x[k])) || !isfinite(cimag(x[k])))
            x[k] = cexp(CMPLX(0, 2 * PI * (double)k / (double)d + 0.3));
        acb_set_d_d(init + k, creal(x[k]), cimag(x[k]));
    }
    /* a start suited to the problem: coefficient size plus degree (a root of
     * multiplicity-like clustering loses about that much), at least 64 */
    bits = (slong)fmpz_poly_max_bits(p);
    if (bits < 0) bits = -bits;
    prec = 64 + bits / 2 + d / 4;
    for (;;) {
        slong found;
        acb_poly_set_fmpz_poly(ap, p, prec);
        found = acb_poly_find_roots(roots, ap, init, 4 * d + 20, prec);
        if (found == d)
            break;
        if (prec >= maxprec) {
            st = sw_error_set(err, SW_ETOLERANCE,
                              "could not isolate the roots of a degree-%ld polynomial at %ld bits",
                              (long)d, (long)prec);
            goto cleanup;
        }
        for (k = 0; k < d; k++) {   /* continue from where this attempt got */
            acb_get_mid(init + k, roots + k);
        }
        prec = prec * 3 / 2;
        if (prec > maxprec) prec = maxprec;
    }
cleanup:
    free(a);
    free(x);
    _acb_vec_clear(init, d);
    acb_poly_clear(ap);
    return st;
}

/* ------------------------------------------------------------------------ */
/* Candidates.                                                               */

typedef struct cand {
    double complex z;
    double rad;       /* enclosure radius */
    int disc, lead;   /* root of the discriminant / of the leading coefficient */
    double r;         /* loop radius */
    double alpha;     /* argument seen from the base point */
    int idx;          /* index in the sorted output */
} cand;

typedef struct candvec {
    cand *c;
    size_t n, alloc;
} candvec;

static int cand_push(candvec *v, const acb_t r, int disc, int lead)
{
    cand *c;
    arf_t m;
    if (v->n == v->alloc) {
        size_t na = v->alloc ? 2 * v->alloc : 32;
        cand *nc = realloc(v->c, na * sizeof *nc);
        if (!nc) return 0;
        v->c = nc;
        v->alloc = na;
    }
    c = &v->c[v->n++];
    memset(c, 0, sizeof *c);
    /* a coordinate whose enclosure contains 0 is printed as 0 (still inside
       the enclosure), so that roots on the axes read exactly */
    double re = arb_contains_zero(acb_realref(r))
                    ? 0.0 : arf_get_d(arb_midref(acb_realref(r)), ARF_RND_NEAR);
    double im = arb_contains_zero(acb_imagref(r))
                    ? 0.0 : arf_get_d(arb_midref(acb_imagref(r)), ARF_RND_NEAR);
    c->z = CMPLX(re, im);
    arf_init(m);
    acb_get_rad_ubound_arf(m, r, 53);
    c->rad = arf_get_d(m, ARF_RND_UP);
    arf_clear(m);
    c->disc = disc;
    c->lead = lead;
    return 1;
}

/* Isolate the roots of piece Q and append them.  For complex curves the
 * exact D (dre + i dim) and L are evaluated on each root to tell which it is
 * a root of, and roots of neither (conjugates) are dropped. */
static sw_status add_piece(candvec *v, const fmpz_poly_t q, int disc, int lead, int cplx,
                           const fmpq_poly_t dre, const fmpq_poly_t dim,
                           const fmpq_poly_t lre, const fmpq_poly_t lim, sw_error *err)
{
    slong d = fmpz_poly_degree(q), k;
    acb_ptr r;
    sw_status st;
    if (d <= 0)
        return SW_OK;
    r = _acb_vec_init(d);
    st = sw_poly_isolate_roots(r, q, 4096, err);
    if (st == SW_OK) {
        acb_poly_t D, L;
        acb_t y;
        acb_poly_init(D);
        acb_poly_init(L);
        acb_init(y);
        if (cplx) {
            acb_poly_set2_fmpq_poly(D, dre, dim, 256);
            acb_poly_set2_fmpq_poly(L, lre, lim, 256);
        }
        for (k = 0; k < d && st == SW_OK; k++) {
            int is_d = disc, is_l = lead;
            if (cplx) {
                acb_poly_evaluate(y, D, r + k, 256);
                is_d = acb_contains_zero(y);
                acb_poly_evaluate(y, L, r + k, 256);
                is_l = acb_contains_zero(y) && acb_poly_degree(L) > 0;
                if (!is_d && !is_l)
                    continue;
            }
            if (!cand_push(v, r + k, is_d, is_l))
                st = sw_error_set(err, SW_ENOMEM, "out of memory");
        }
        acb_poly_clear(D);
        acb_poly_clear(L);
        acb_clear(y);
    }
    _acb_vec_clear(r, d);
    return st;
}

static sw_status find_candidates(candvec *v, const sw_curve *cv, sw_error *err)
{
    sw_status st = SW_OK;
    fmpq_poly_t dre, dim, lre, lim;
    fmpz_poly_t nd, nl, sd, sl, g, a, c;
    int cplx = cv->complex_coeffs;

    fmpq_poly_init(dre); fmpq_poly_init(dim); fmpq_poly_init(lre); fmpq_poly_init(lim);
    fmpz_poly_init(nd); fmpz_poly_init(nl); fmpz_poly_init(sd); fmpz_poly_init(sl);
    fmpz_poly_init(g); fmpz_poly_init(a); fmpz_poly_init(c);

    if (!cplx) {
        fmpq_mpoly_t D;
        fmpq_mpoly_init(D, cv->ctx);
        if (cv->n >= 2 && !fmpq_mpoly_discriminant(D, cv->re, 1, cv->ctx)) {
            st = sw_error_set(err, SW_EINTERNAL, "the exact discriminant could not be computed");
        } else {
            if (cv->n >= 2)
                mpoly_to_poly_i(dre, dim, D, -1, cv->ctx);
            else
                fmpq_poly_one(dre);
            lead_coeff(lre, lim, cv->re, cv->n, -1, cv->ctx);
        }
        fmpq_mpoly_clear(D, cv->ctx);
    } else {
        /* variables (z, w, t), t standing for i */
        fmpq_mpoly_ctx_t c3;
        fmpq_mpoly_t P3, Q, D;
        slong i, ex2[2];
        fmpq_t q;
        fmpq_mpoly_ctx_init(c3, 3, ORD_LEX);
        fmpq_mpoly_init(P3, c3); fmpq_mpoly_init(Q, c3); fmpq_mpoly_init(D, c3);
        fmpq_init(q);
        for (int part = 0; part < 2; part++) {
            const fmpq_mpoly_struct *src = part ? cv->im : cv->re;
            for (i = 0; i < fmpq_mpoly_length(src, cv->ctx); i++) {
                ulong e3[3];
                fmpq_mpoly_get_term_exp_si(ex2, src, i, cv->ctx);
                fmpq_mpoly_get_term_coeff_fmpq(q, src, i, cv->ctx);
                e3[0] = (ulong)ex2[0]; e3[1] = (ulong)ex2[1]; e3[2] = (ulong)part;
                fmpq_mpoly_set_coeff_fmpq_ui(P3, q, e3, c3);
            }
        }
        if (cv->n >= 2 && !fmpq_mpoly_discriminant(D, P3, 1, c3)) {
            st = sw_error_set(err, SW_EINTERNAL, "the exact discriminant could not be computed");
        } else {
            if (cv->n >= 2)
                mpoly_to_poly_i(dre, dim, D, 2, c3);
            else
                fmpq_poly_one(dre);
            lead_coeff(lre, lim, P3, cv->n, 2, c3);
        }
        fmpq_clear(q);
        fmpq_mpoly_clear(P3, c3); fmpq_mpoly_clear(Q, c3); fmpq_mpoly_clear(D, c3);
        fmpq_mpoly_ctx_clear(c3);
    }
    if (st != SW_OK)
        goto cleanup;
    if (fmpq_poly_is_zero(dre) && fmpq_poly_is_zero(dim)) {
        st = sw_error_set(err, SW_EINPUT,
                          "the discriminant vanishes identically: the curve is not square-free in w");
        goto cleanup;
    }
    norm_poly(nd, dre, dim);   /* real case: D^2, same roots */
    norm_poly(nl, lre, lim);
    sqf_part(sd, nd);
    sqf_part(sl, nl);
    if (fmpz_poly_degree(sd) > 0 && fmpz_poly_degree(sl) > 0)
        fmpz_poly_gcd(g, sd, sl);
    else
        fmpz_poly_one(g);
    fmpz_poly_div(a, sd, g);
    fmpz_poly_div(c, sl, g);
    st = add_piece(v, a, 1, 0, cplx, dre, dim, lre, lim, err);
    if (st == SW_OK)
        st = add_piece(v, g, 1, 1, cplx, dre, dim, lre, lim, err);
    if (st == SW_OK)
        st = add_piece(v, c, 0, 1, cplx, dre, dim, lre, lim, err);
cleanup:
    fmpq_poly_clear(dre); fmpq_poly_clear(dim); fmpq_poly_clear(lre); fmpq_poly_clear(lim);
    fmpz_poly_clear(nd); fmpz_poly_clear(nl); fmpz_poly_clear(sd); fmpz_poly_clear(sl);
    fmpz_poly_clear(g); fmpz_poly_clear(a); fmpz_poly_clear(c);
    return st;
}

/* ------------------------------------------------------------------------ */
/* Loops.                                                                    */

static int cmp_cand_z(const void *pa, const void *pb)
{
    const cand *a = pa, *b = pb;
    if (creal(a->z) != creal(b->z))
        return creal(a->z) < creal(b->z) ? -1 : 1;
    return (cimag(a->z) > cimag(b->z)) - (cimag(a->z) < cimag(b->z));
}


/* Number of trial base angles, and the detour radius relative to the loop
 * radius (>1 so that detours stay outside the loop circles; with loop radii
 * at most 1/3 of the nearest distance, 1.25/3 + 1/3 < 1 keeps all detour
 * disks and loop disks disjoint). */
#define BASE_TRIALS 64
#define DETOUR_FACTOR 1.25
#define CIRCLE_VERTICES 16
#define INF_CIRCLE_VERTICES 64

static double base_quality(const candvec *v, double complex b)
{
    double q = INFINITY;
    size_t j, k;
    for (k = 0; k < v->n; k++)
        for (j = 0; j < v->n; j++) {
            if (j != k) {
                double d = sw_segment_distance(v->c[j].z, b, v->c[k].z) / v->c[j].r;
                if (d < q) q = d;
            }
        }
    return q;
}

static sw_status push(sw_path *p, double complex z, sw_error *err)
{
    return sw_path_push(p, z, SW_BANK_NONE, err);
}

/* Append the way from b to the point p near candidate K, with detours. */
static sw_status way_out(sw_path *path, const candvec *v, size_t K, double complex b,
                         double complex p, sw_error *err)
{
    double complex d = p - b;
    double L = cabs(d);
    double complex u = d / L;
    sw_status st = push(path, b, err);
    /* blocking disks, by position along the segment */
    size_t j, nb = 0;
    struct blk { double t1, t2; size_t j; } *bl = NULL;
    if (st != SW_OK)
        return st;
    bl = malloc((v->n ? v->n : 1) * sizeof *bl);
    if (!bl)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    for (j = 0; j < v->n; j++) {
        double rho, s, h2;
        double complex cj;
        if (j == K)
            continue;
        cj = v->c[j].z;
        rho = DETOUR_FACTOR * v->c[j].r;
        s = creal((cj - b) * conj(u));            /* projection along the segment */
        h2 = rho * rho - pow(cimag((cj - b) * conj(u)), 2);
        if (h2 <= 0)
            continue;
        if (s + sqrt(h2) <= 0 || s - sqrt(h2) >= L)
            continue;
        bl[nb].t1 = s - sqrt(h2);
        bl[nb].t2 = s + sqrt(h2);
        bl[nb].j = j;
        nb++;
    }
    /* sort by entry (insertion sort: few entries) */
    for (size_t i = 1; i < nb; i++) {
        struct blk t = bl[i];
        size_t q = i;
        while (q > 0 && bl[q - 1].t1 > t.t1) { bl[q] = bl[q - 1]; q--; }
        bl[q] = t;
    }
    for (size_t i = 0; i < nb && st == SW_OK; i++) {
        double complex cj = v->c[bl[i].j].z;
        double complex e1 = b + bl[i].t1 * u, e2 = b + bl[i].t2 * u;
        double rho = DETOUR_FACTOR * v->c[bl[i].j].r;
        double th1 = carg(e1 - cj), th2 = carg(e2 - cj), dth;
        int left = cimag(conj(u) * (cj - b)) > 0, np, q;
        dth = th2 - th1;
        if (left) { while (dth <= 0) dth += 2 * PI; while (dth > 2 * PI) dth -= 2 * PI; }
        else { while (dth >= 0) dth -= 2 * PI; while (dth < -2 * PI) dth += 2 * PI; }
        np = (int)ceil(fabs(dth) / (PI / 8));
        if (np < 2) np = 2;
        st = push(path, e1, err);
        for (q = 1; q < np && st == SW_OK; q++)
            st = push(path, cj + rho * cexp(CMPLX(0, th1 + dth * q / np)), err);
        if (st == SW_OK)
            st = push(path, e2, err);
    }
    free(bl);
    if (st == SW_OK)
        st = push(path, p, err);
    return st;
}

/* Match fiber E (after a loop) to fiber F (before it, same point): E[i] is
 * F[perm[i]].  Fails when a value is not clearly nearest one entry of F or
 * two values pick the same entry. */
static int match_fibers(int *perm, const double complex *E, const double complex *F, size_t n)
{
    size_t i, j;
    unsigned char *used = calloc(n ? n : 1, 1);
    int ok = 1;
    if (!used)
        return 0;
    for (i = 0; i < n && ok; i++) {
        size_t best = 0;
        double d1 = INFINITY;
        for (j = 0; j < n; j++) {
            double d = cabs(E[i] - F[j]);
            if (d < d1) { d1 = d; best = j; }
        }
        /* clearly nearest: within a quarter of F[best]'s own separation */
        if (n > 1 && !(d1 <= 0.25 * sw_fiber_sep(F, n, best)))
            ok = 0;
        else if (used[best])
            ok = 0;
        else {
            used[best] = 1;
            perm[i] = (int)best;
        }
    }
    free(used);
    return ok;
}

/* Track the fiber along OUT (a path ending at its last vertex q), then round
 * the closed polyline CIRC starting and ending at q; PERM receives the
 * permutation.  *PROVEN is cleared when a step could not be proven. */
static sw_status loop_perm(int *perm, int *proven, const sw_func *f, const sw_germ *g0,
                           const sw_path *out, const sw_path *circ, const sw_track_opts *to,
                           sw_error *err)
{
    sw_trace t1, t2;
    sw_status st;
    size_t n = g0->len;
    sw_trace_init(&t1);
    sw_trace_init(&t2);
    st = sw_track_run(&t1, f, g0, out, to, err);
    if (st == SW_OK) {
        const sw_germ *q = &t1.vert[t1.nvert - 1];
        if (to->step.certify && !t1.certified) *proven = 0;
        st = sw_track_run(&t2, f, q, circ, to, err);
        if (st == SW_OK) {
            if (to->step.certify && !t2.certified) *proven = 0;
            if (!match_fibers(perm, t2.vert[t2.nvert - 1].s, q->s, n))
                st = sw_error_set(err, SW_EINTERNAL,
                                  "ambiguous sheet matching after the loop round z = %.10g%+.10gi",
                                  creal(circ->z[0]), cimag(circ->z[0]));
        }
    }
    sw_trace_clear(&t1);
    sw_trace_clear(&t2);
    return st;
}

static int perm_is_identity(const int *p, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (p[i] != (int)i) return 0;
    return 1;
}

static int cmp_alpha(const void *pa, const void *pb)
{
    const cand *const *a = pa, *const *b = pb;
    return ((*a)->alpha > (*b)->alpha) - ((*a)->alpha < (*b)->alpha);
}

sw_status sw_curve_points(sw_points *out, const sw_func *f, const sw_points_opts *o,
                          sw_error *err)
{
    const sw_curve *cv = sw_curve_of(f);
    sw_points res;
    candvec v = {NULL, 0, 0};
    sw_status st = SW_OK;
    size_t n, k, j;
    double complex cen = 0, b = 0, bout;
    double R = 0, S, rb, frac;
    sw_germ g0;
    int have_g = 0;
    sw_track_opts to;
    sw_path p1, p2;
    cand **ord = NULL;
    int *acc = NULL, *tmp = NULL;

    sw_points_init(&res);
    sw_path_init(&p1);
    sw_path_init(&p2);
    if (!cv)
        return sw_error_set(err, SW_EINTERNAL, "not a curve");
    n = (size_t)cv->n;
    frac = (o && o->radius_fraction > 0 && o->radius_fraction <= 1.0 / 3.0) ? o->radius_fraction
                                                                           : 1.0 / 3.0;
    st = find_candidates(&v, cv, err);
    if (st != SW_OK)
        goto cleanup;
    qsort(v.c, v.n, sizeof *v.c, cmp_cand_z);
    for (k = 0; k < v.n; k++) {
        v.c[k].idx = (int)k;
        cen += v.c[k].z;
    }
    if (v.n) cen /= (double)v.n;
    for (k = 0; k < v.n; k++)
        R = fmax(R, cabs(v.c[k].z - cen));
    S = fmax(R, 1.0);
    for (k = 0; k < v.n; k++) {
        double dmin = INFINITY;
        for (j = 0; j < v.n; j++)
            if (j != k) dmin = fmin(dmin, cabs(v.c[k].z - v.c[j].z));
        if (!isfinite(dmin)) dmin = S;
        v.c[k].r = frac * dmin;
        if (v.c[k].r <= 8 * v.c[k].rad || v.c[k].r <= 1e-12 * S) {
            st = sw_error_set(err, SW_ETOLERANCE,
                              "candidates near z = %.10g%+.10gi are too close together to separate "
                              "by loops (distance %.3g)", creal(v.c[k].z), cimag(v.c[k].z), dmin);
            goto cleanup;
        }
    }
    /* the base point */
    rb = 1.5 * R + 0.25 * S;
    {
        double bestq = -1;
        int t;
        for (t = 0; t < BASE_TRIALS; t++) {
            double complex bt = cen + rb * cexp(CMPLX(0, 2 * PI * t / BASE_TRIALS + 0.1));
            double q = base_quality(&v, bt);
            if (q > bestq) { bestq = q; b = bt; }
            if (!isfinite(q)) break;   /* fewer than two candidates */
        }
    }
    bout = cen + 2 * (b - cen);
    if (v.n == 0) {
        b = CMPLX(0.1, 0.1);
        bout = 2 * b;
    }
    if (sw_germ_init(&g0, f) != SW_OK) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    have_g = 1;
    st = sw_func_germ_at(&g0, f, b, SW_BANK_NONE, NULL, err);
    if (st != SW_OK)
        goto cleanup;
    res.nsheets = n;
    res.base = b;
    res.base_fiber = malloc(n * sizeof *res.base_fiber);
    res.pt = calloc(v.n ? v.n : 1, sizeof *res.pt);
    ord = malloc((v.n ? v.n : 1) * sizeof *ord);
    acc = malloc(n * sizeof *acc);
    tmp = malloc(n * sizeof *tmp);
    res.infinity.perm = malloc(n * sizeof(int));
    if (!res.base_fiber || !res.pt || !ord || !acc || !tmp || !res.infinity.perm) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    memcpy(res.base_fiber, g0.s, n * sizeof *g0.s);
    res.n = v.n;
    sw_track_opts_init(&to);
    to.keep_log = 0;
    to.step.certify = o ? o->certify : 0;

    for (k = 0; k < v.n; k++) {
        cand *c = &v.c[k];
        sw_point *pt = &res.pt[k];
        double complex u = (b - c->z) / cabs(b - c->z), p = c->z + c->r * u;
        int proven = 1;
        pt->z = c->z;
        pt->radius = c->rad;
        pt->n = n;
        pt->perm = malloc(n * sizeof(int));
        if (!pt->perm) { st = sw_error_set(err, SW_ENOMEM, "out of memory"); goto cleanup; }
        sw_path_clear(&p1);
        sw_path_clear(&p2);
        st = way_out(&p1, &v, k, b, p, err);
        for (int q = 0; q <= CIRCLE_VERTICES && st == SW_OK; q++)
            st = push(&p2, q == CIRCLE_VERTICES ? p : c->z + (p - c->z) * cexp(CMPLX(0, 2 * PI * q / CIRCLE_VERTICES)), err);
        if (st == SW_OK)
            st = loop_perm(pt->perm, &proven, f, &g0, &p1, &p2, &to, err);
        if (st != SW_OK)
            goto cleanup;
        pt->certified = to.step.certify ? proven : 0;
        pt->kind = !perm_is_identity(pt->perm, n) ? SW_POINT_BRANCH
                   : c->lead ? SW_POINT_POLE : SW_POINT_REGULAR;
        c->alpha = carg((c->z - b) / (cen - b));
        ord[k] = c;
    }
    /* infinity: radially out, a clockwise circle, back */
    {
        int proven = 1;
        double complex cc = v.n ? cen : 0;
        sw_path_clear(&p1);
        sw_path_clear(&p2);
        st = push(&p1, b, err);
        if (st == SW_OK) st = push(&p1, bout, err);
        for (int q = 0; q <= INF_CIRCLE_VERTICES && st == SW_OK; q++)
            st = push(&p2, q == INF_CIRCLE_VERTICES ? bout
                           : cc + (bout - cc) * cexp(CMPLX(0, -2 * PI * q / INF_CIRCLE_VERTICES)), err);
        if (st == SW_OK)
            st = loop_perm(res.infinity.perm, &proven, f, &g0, &p1, &p2, &to, err);
        if (st != SW_OK)
            goto cleanup;
        res.infinity.at_infinity = 1;
        res.infinity.z = 0;
        res.infinity.n = n;
        res.infinity.certified = to.step.certify ? proven : 0;
        res.infinity.kind = perm_is_identity(res.infinity.perm, n) ? SW_POINT_REGULAR : SW_POINT_BRANCH;
    }
    /* the product relation: finite loops by increasing argument, then infinity */
    qsort(ord, v.n, sizeof *ord, cmp_alpha);
    for (j = 0; j < n; j++) acc[j] = (int)j;
    for (k = 0; k < v.n; k++) {
        const int *pk = res.pt[ord[k]->idx].perm;
        for (j = 0; j < n; j++) acc[j] = pk[acc[j]];
    }
    for (j = 0; j < n; j++) acc[j] = res.infinity.perm[acc[j]];
    res.product_ok = perm_is_identity(acc, n);
    res.complete = 1;
    sw_points_clear(out);
    *out = res;
    sw_points_init(&res);
cleanup:
    if (have_g) sw_germ_clear(&g0);
    sw_path_clear(&p1);
    sw_path_clear(&p2);
    sw_points_clear(&res);
    free(v.c);
    free(ord);
    free(acc);
    free(tmp);
    return st;
}
