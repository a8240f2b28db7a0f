/* Cut systems, regular branches, jumps across cut pieces, crossings.
 *
 * Regular branches are evaluated by continuation from the fixing point along
 * a path that crosses no cut: the shortest such path bends only at the ends
 * of cut pieces, so it is found in a visibility graph whose nodes are the two
 * end points and small rings of points around every cut vertex and every
 * crossing of two pieces (Dijkstra).  Rays to infinity are truncated far
 * beyond every node, so no route can go round their far end.
 * The single-valuedness test follows methods.md §3: every branch point on a
 * cut, trivial monodromy of a loop hugging every bounded component of the cut
 * set (the boundary of its convex hull thickened by a small disk), and the
 * behaviour at infinity as an independent check. */
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "sheetwalk/cuts.h"

#define RING 16              /* points on the ring around each cut vertex */
#define RING_FRACTION 0.25   /* ring radius: this fraction of the distance to other cuts */
#define RING_MAX 0.05        /* ... and at most this fraction of the scale */
#define BANK_OFFSET 1e-9     /* bank points: this fraction of the scale off the cut */
#define ON_CUT 1e-12         /* closer than this (relative to the scale): on the cut */
#define TRIVIAL_TOL 1e-9     /* |ratio - 1| below this: trivial monodromy */

static const double PI = 3.14159265358979323846;

/* ------------------------------------------------------------ geometry */

static double cross(double complex a, double complex b)
{
    return creal(a) * cimag(b) - cimag(a) * creal(b);
}


/* Segments [a,b] and [c,d] meet (touching counts); *s, *t the parameters. */
static int seg_meet(double complex a, double complex b, double complex c, double complex d,
                    double tol, double *s, double *t)
{
    double complex r = b - a, q = d - c;
    double den = cross(r, q);
    if (fabs(den) > 1e-300 * (cabs(r) * cabs(q) + 1e-300) && fabs(den) > 0) {
        double ss = cross(c - a, q) / den, tt = cross(c - a, r) / den;
        double er = tol / (cabs(r) + 1e-300), eq = tol / (cabs(q) + 1e-300);
        if (ss >= -er && ss <= 1 + er && tt >= -eq && tt <= 1 + eq) {
            if (s)
                *s = ss;
            if (t)
                *t = tt;
            return 1;
        }
    }
    /* parallel, or just missing: touching within tol */
    double d1 = sw_segment_distance(a, c, d), d2 = sw_segment_distance(b, c, d), d3 = sw_segment_distance(c, a, b),
           d4 = sw_segment_distance(d, a, b);
    double m = fmin(fmin(d1, d2), fmin(d3, d4));
    if (m <= tol) {
        if (s)
            *s = d1 == m ? 0 : d2 == m ? 1 : creal((c - a) * conj(r)) / (cabs(r) * cabs(r) + 1e-300);
        if (t)
            *t = d3 == m ? 0 : d4 == m ? 1 : creal((a - c) * conj(q)) / (cabs(q) * cabs(q) + 1e-300);
        return 1;
    }
    return 0;
}

static void piece_seg(const sw_cut_piece *p, double far, double complex *a, double complex *b)
{
    *a = p->from;
    *b = p->to_inf ? p->from + far * p->dir : p->to;
}

/* --------------------------------------------------------- cut systems */

void sw_cuts_init(sw_cuts *c) { memset(c, 0, sizeof *c); }

void sw_cuts_clear(sw_cuts *c)
{
    if (c == NULL)
        return;
    for (size_t k = 0; k < c->n; k++)
        sw_path_clear(&c->cut[k]);
    free(c->cut);
    free(c->piece);
    free(c->branch_of);
    memset(c, 0, sizeof *c);
}

static sw_status add_piece(sw_cuts *c, sw_cut_piece pc, sw_error *err)
{
    sw_cut_piece *np = realloc(c->piece, (c->npieces + 1) * sizeof *np);
    if (np == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    c->piece = np;
    c->piece[c->npieces++] = pc;
    return SW_OK;
}

sw_status sw_cuts_add(sw_cuts *c, const sw_path *p, sw_error *err)
{
    if (p->inf_start)
        return sw_error_set(err, SW_EINPUT, "cut %zu: 'inf' may only be the last vertex of a cut",
                            c->n + 1);
    if (p->n < 2 && !(p->n == 1 && p->inf_end))
        return sw_error_set(err, SW_EINPUT, "cut %zu needs two vertices, or one and 'inf'",
                            c->n + 1);
    if (p->n == 1 && p->inf_end)
        return sw_error_set(err, SW_EINPUT,
                            "cut %zu: 'inf' needs a direction: give two finite vertices before it",
                            c->n + 1);
    sw_path *nc = realloc(c->cut, (c->n + 1) * sizeof *nc);
    if (nc == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    c->cut = nc;
    sw_path_init(&c->cut[c->n]);
    sw_status st = sw_path_copy(&c->cut[c->n], p, err);
    if (st != SW_OK)
        return st;
    size_t idx = c->n++;
    for (size_t k = 0; k + 1 < p->n; k++) {
        if (p->z[k] == p->z[k + 1])
            continue;
        sw_cut_piece pc = {p->z[k], p->z[k + 1], (p->z[k + 1] - p->z[k]) / cabs(p->z[k + 1] - p->z[k]),
                           0, idx, k};
        if ((st = add_piece(c, pc, err)) != SW_OK)
            return st;
    }
    if (p->inf_end) {
        double complex d = p->z[p->n - 1] - p->z[p->n - 2];
        sw_cut_piece pc = {p->z[p->n - 1], 0, d / cabs(d), 1, idx, p->n - 1};
        if ((st = add_piece(c, pc, err)) != SW_OK)
            return st;
    }
    return SW_OK;
}

double sw_cuts_distance(const sw_cuts *c, double complex z)
{
    double d = INFINITY;
    for (size_t k = 0; k < c->npieces; k++) {
        const sw_cut_piece *p = &c->piece[k];
        double complex a, b;
        piece_seg(p, 4 * (cabs(z) + cabs(p->from) + 1), &a, &b);
        d = fmin(d, sw_segment_distance(z, a, b));
    }
    return d;
}

static double cuts_scale(const sw_cuts *c)
{
    double s = 1;
    for (size_t k = 0; k < c->npieces; k++) {
        s = fmax(s, cabs(c->piece[k].from));
        if (!c->piece[k].to_inf)
            s = fmax(s, cabs(c->piece[k].to));
    }
    return s;
}

sw_status sw_cuts_default(sw_cuts *c, const sw_points *pts, sw_error *err)
{
    sw_cuts res;
    sw_cuts_init(&res);
    res.is_default = 1;
    size_t nb = 0;
    double complex centre = 0;
    for (size_t k = 0; k < pts->n; k++)
        if (pts->pt[k].kind == SW_POINT_BRANCH) {
            centre += pts->pt[k].z;
            nb++;
        }
    if (nb)
        centre /= (double)nb;
    double complex *from = calloc(nb ? nb : 1, sizeof *from), *dir = calloc(nb ? nb : 1, sizeof *dir);
    res.branch_of = calloc(nb ? nb : 1, sizeof *res.branch_of);
    sw_status st = SW_OK;
    if (!from || !dir || !res.branch_of) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    double scale = 1;
    for (size_t k = 0; k < pts->n; k++)
        scale = fmax(scale, cabs(pts->pt[k].z - centre));
    size_t m = 0;
    for (size_t k = 0; k < pts->n; k++) {
        if (pts->pt[k].kind != SW_POINT_BRANCH)
            continue;
        double complex p = pts->pt[k].z;
        double complex d0 = cabs(p - centre) > 1e-9 * scale ? (p - centre) / cabs(p - centre) : -1;
        double complex d = d0;
        /* turn by 0, +5, -5, +10, ... degrees until the ray passes no other
           branch point and crosses no earlier ray */
        for (int tries = 0; tries < 72; tries++) {
            double ang = (tries % 2 ? 1 : -1) * (double)((tries + 1) / 2) * (5 * PI / 180);
            d = d0 * cexp(CMPLX(0.0, ang));
            double far = 4 * (scale + cabs(centre) + cabs(p)) + 1;
            int ok = 1;
            for (size_t j = 0; j < pts->n && ok; j++) {
                if (j == k || pts->pt[j].kind == SW_POINT_REGULAR)
                    continue;
                double dist = sw_segment_distance(pts->pt[j].z, p, p + far * d);
                if (dist < 0.05 * cabs(pts->pt[j].z - p))
                    ok = 0;
            }
            for (size_t j = 0; j < m && ok; j++)
                if (seg_meet(p, p + far * d, from[j], from[j] + far * dir[j], 0, NULL, NULL))
                    ok = 0;
            if (ok)
                break;
        }
        from[m] = p;
        dir[m] = d;
        sw_path q;
        sw_path_init(&q);
        sw_path_push(&q, p, SW_BANK_NONE, NULL);
        sw_path_push(&q, p + d, SW_BANK_NONE, NULL);
        q.inf_end = 1;
        st = sw_cuts_add(&res, &q, err);
        sw_path_clear(&q);
        if (st != SW_OK)
            goto cleanup;
        /* the finite piece p -> p+d and the ray after it form one straight cut:
           keep a single ray from p */
        res.npieces -= 2;
        sw_cut_piece ray = {p, 0, d, 1, res.n - 1, 0};
        if ((st = add_piece(&res, ray, err)) != SW_OK)
            goto cleanup;
        res.branch_of[m++] = k;
    }
    sw_cuts_clear(c);
    *c = res;
    sw_cuts_init(&res);
cleanup:
    free(from);
    free(dir);
    sw_cuts_clear(&res);
    return st;
}

/* ------------------------------------------------------------- routes */

typedef struct graph {
    size_t n, alloc;
    double complex *z;
} graph;

static int gpush(graph *g, double complex z)
{
    if (g->n == g->alloc) {
        size_t na = g->alloc ? 2 * g->alloc : 64;
        double complex *nz = realloc(g->z, na * sizeof *nz);
        if (nz == NULL)
            return 0;
        g->z = nz;
        g->alloc = na;
    }
    g->z[g->n++] = z;
    return 1;
}

static int visible(const sw_cuts *c, double complex a, double complex b, double far, double tol)
{
    for (size_t k = 0; k < c->npieces; k++) {
        double complex p, q;
        piece_seg(&c->piece[k], far, &p, &q);
        if (seg_meet(a, b, p, q, tol, NULL, NULL))
            return 0;
    }
    return 1;
}

static void add_ring(graph *g, const sw_cuts *c, double complex v, double scale, double far)
{
    double dmin = RING_MAX * scale / RING_FRACTION;
    for (size_t k = 0; k < c->npieces; k++) {
        double complex p, q;
        piece_seg(&c->piece[k], far, &p, &q);
        double d = sw_segment_distance(v, p, q);
        if (d > ON_CUT * scale)
            dmin = fmin(dmin, d);
    }
    double r = RING_FRACTION * dmin;
    for (int j = 0; j < RING; j++) {
        double complex z = v + r * cexp(CMPLX(0.0, 2 * PI * j / RING + 0.1));
        if (sw_cuts_distance(c, z) > 0.2 * r)
            gpush(g, z);
    }
}

/* A polyline from A to B that crosses no cut (written into ROUTE). */
static sw_status find_route(sw_path *route, const sw_cuts *c, double complex a, double complex b,
                            sw_error *err)
{
    double scale = fmax(cuts_scale(c), fmax(cabs(a), cabs(b)));
    double far = 8 * scale + 1, tol = ON_CUT * scale;
    sw_path_clear(route);
    if (visible(c, a, b, far, tol)) {
        sw_path_push(route, a, SW_BANK_NONE, NULL);
        sw_path_push(route, b, SW_BANK_NONE, NULL);
        return SW_OK;
    }
    graph g = {0, 0, NULL};
    gpush(&g, a);
    gpush(&g, b);
    for (size_t k = 0; k < c->npieces; k++) {
        const sw_cut_piece *p = &c->piece[k];
        add_ring(&g, c, p->from, scale, far);
        if (!p->to_inf)
            add_ring(&g, c, p->to, scale, far);
        for (size_t j = k + 1; j < c->npieces; j++) {
            double complex p1, p2, q1, q2;
            double s, t;
            piece_seg(p, far, &p1, &p2);
            piece_seg(&c->piece[j], far, &q1, &q2);
            if (seg_meet(p1, p2, q1, q2, 0, &s, &t) && s > 0 && s < 1)
                add_ring(&g, c, p1 + s * (p2 - p1), scale, far);
        }
    }
    size_t n = g.n;
    double *dist = malloc(n * sizeof *dist);
    int *prev = malloc(n * sizeof *prev);
    char *done = calloc(n, 1);
    sw_status st = SW_OK;
    if (!dist || !prev || !done || g.z == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    for (size_t k = 0; k < n; k++) {
        dist[k] = INFINITY;
        prev[k] = -1;
    }
    dist[0] = 0;
    for (;;) {
        size_t u = n;
        for (size_t k = 0; k < n; k++)
            if (!done[k] && dist[k] < INFINITY && (u == n || dist[k] < dist[u]))
                u = k;
        if (u == n || u == 1)
            break;
        done[u] = 1;
        for (size_t v = 0; v < n; v++) {
            if (done[v])
                continue;
            double w = dist[u] + cabs(g.z[v] - g.z[u]);
            if (w < dist[v] && visible(c, g.z[u], g.z[v], far, tol)) {
                dist[v] = w;
                prev[v] = (int)u;
            }
        }
    }
    if (prev[1] < 0) {
        st = sw_error_set(err, SW_EINPUT,
                          "the cuts separate %.6g%+.6gi from %.6g%+.6gi: no path between them "
                          "avoids the cuts", creal(a), cimag(a), creal(b), cimag(b));
        goto cleanup;
    }
    /* walk back from b */
    size_t len = 0;
    for (int k = 1; k >= 0; k = prev[k])
        len++;
    double complex *pts = malloc(len * sizeof *pts);
    if (pts == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    size_t i = len;
    for (int k = 1; k >= 0; k = prev[k])
        pts[--i] = g.z[k];
    for (size_t k = 0; k < len; k++)
        sw_path_push(route, pts[k], SW_BANK_NONE, NULL);
    free(pts);
cleanup:
    free(dist);
    free(prev);
    free(done);
    free(g.z);
    return st;
}

/* ----------------------------------------------------- regular branches */

struct sw_branch {
    const sw_func *f;
    const sw_cuts *c;
    sw_germ anchor;
    double scale;
};

const sw_germ *sw_branch_anchor(const sw_branch *b) { return &b->anchor; }

void sw_branch_free(sw_branch *b)
{
    if (b == NULL)
        return;
    sw_germ_clear(&b->anchor);
    free(b);
}

/* Carry germ G (at route start) along ROUTE; on success G is at the end. */
static sw_status carry(sw_germ *g, const sw_func *f, const sw_path *route, sw_error *err)
{
    if (route->n < 2 || route->z[0] == route->z[route->n - 1]) {
        if (route->n >= 1 && route->z[route->n - 1] == g->z)
            return SW_OK;
    }
    sw_trace tr;
    sw_trace_init(&tr);
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.keep_log = 0;
    sw_status st = sw_track_run(&tr, f, g, route, &o, err);
    if (st == SW_OK)
        sw_germ_copy(g, &tr.vert[tr.nvert - 1]);
    sw_trace_clear(&tr);
    return st;
}

sw_status sw_branch_from_germ(sw_branch **out, const sw_func *f, const sw_cuts *c,
                              const sw_germ *g, sw_error *err)
{
    sw_branch *b = calloc(1, sizeof *b);
    if (b == NULL || sw_germ_init(&b->anchor, f) != SW_OK) {
        free(b);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    b->f = f;
    b->c = c;
    b->scale = fmax(cuts_scale(c), cabs(g->z));
    sw_germ_copy(&b->anchor, g);
    if (sw_cuts_distance(c, g->z) <= ON_CUT * b->scale) {
        if (g->bank == SW_BANK_NONE) {
            sw_branch_free(b);
            return sw_error_set(err, SW_EINPUT,
                                "the fixing point %.10g%+.10gi lies on a cut: mark the bank "
                                "(+i0 or -i0)", creal(g->z), cimag(g->z));
        }
        /* step off the cut to the marked side */
        sw_path r;
        sw_path_init(&r);
        sw_path_push(&r, g->z, SW_BANK_NONE, NULL);
        sw_path_push(&r, g->z + CMPLX(0.0, g->bank * BANK_OFFSET * b->scale), SW_BANK_NONE, NULL);
        sw_status st = carry(&b->anchor, f, &r, err);
        sw_path_clear(&r);
        if (st != SW_OK) {
            sw_branch_free(b);
            return st;
        }
    }
    *out = b;
    return SW_OK;
}

sw_status sw_branch_new(sw_branch **out, const sw_func *f, const sw_cuts *c, double complex p,
                        int bank, const double complex *w, sw_error *err)
{
    sw_germ g;
    if (sw_germ_init(&g, f) != SW_OK)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    sw_status st = sw_func_germ_at(&g, f, p, bank, w, err);
    if (st == SW_OK)
        st = sw_branch_from_germ(out, f, c, &g, err);
    sw_germ_clear(&g);
    return st;
}

/* The regular branch at NEAR (off the cuts), then carried straight to Z. */
static sw_status eval_via(sw_germ *g, const sw_branch *b, double complex near, double complex z,
                          sw_error *err)
{
    sw_path route;
    sw_path_init(&route);
    sw_germ_copy(g, &b->anchor);
    sw_status st = find_route(&route, b->c, b->anchor.z, near, err);
    if (st == SW_OK && near != z)
        st = sw_path_push(&route, z, SW_BANK_NONE, err);
    if (st == SW_OK)
        st = carry(g, b->f, &route, err);
    sw_path_clear(&route);
    return st;
}

sw_status sw_branch_eval(sw_germ *g, const sw_branch *b, double complex z, int bank,
                         sw_error *err)
{
    double scale = fmax(b->scale, cabs(z));
    double complex near = z;
    if (sw_cuts_distance(b->c, z) <= ON_CUT * scale) {
        if (bank == SW_BANK_NONE)
            return sw_error_set(err, SW_EINPUT,
                                "%.10g%+.10gi lies on a cut: mark the bank (+i0 or -i0)",
                                creal(z), cimag(z));
        near = z + CMPLX(0.0, bank * BANK_OFFSET * scale);
    }
    sw_status st = eval_via(g, b, near, z, err);
    if (st == SW_OK)
        g->bank = bank;
    return st;
}

/* A point of piece K away from other pieces and branch points. */
static double complex piece_point(const sw_cuts *c, size_t k, const sw_points *pts)
{
    const sw_cut_piece *p = &c->piece[k];
    double scale = cuts_scale(c), far = 8 * scale + 1;
    static const double fractions[] = {0.5, 0.37, 0.63, 0.29, 0.71, 0.43};
    double len = p->to_inf ? fmax(1.0, 0.5 * scale) : cabs(p->to - p->from);
    double complex best = p->from + 0.5 * len * p->dir;
    double bestd = -1;
    for (size_t f = 0; f < sizeof fractions / sizeof fractions[0]; f++) {
        double complex m = p->from + fractions[f] * len * p->dir;
        double d = INFINITY;
        for (size_t j = 0; j < c->npieces; j++) {
            if (j == k)
                continue;
            double complex a, b;
            piece_seg(&c->piece[j], far, &a, &b);
            d = fmin(d, sw_segment_distance(m, a, b));
        }
        for (size_t j = 0; pts && j < pts->n; j++)
            d = fmin(d, cabs(m - pts->pt[j].z));
        if (d > bestd) {
            bestd = d;
            best = m;
        }
    }
    return best;
}

sw_status sw_branch_banks(sw_germ *left, sw_germ *right, const sw_branch *b, size_t piece,
                          const sw_points *pts, double complex *at, sw_error *err)
{
    if (piece >= b->c->npieces)
        return sw_error_set(err, SW_EUSAGE, "no cut piece %zu", piece + 1);
    double complex m = piece_point(b->c, piece, pts);
    double complex n = CMPLX(0.0, 1.0) * b->c->piece[piece].dir; /* left normal */
    double h = BANK_OFFSET * fmax(b->scale, cabs(m));
    *at = m;
    sw_status st = eval_via(left, b, m + h * n, m, err);
    if (st == SW_OK)
        st = eval_via(right, b, m - h * n, m, err);
    return st;
}

/* ---------------------------------------------------------------- checks */

void sw_cut_report_init(sw_cut_report *r) { memset(r, 0, sizeof *r); }

void sw_cut_report_clear(sw_cut_report *r)
{
    if (r == NULL)
        return;
    for (size_t k = 0; k < r->npieces && r->jump; k++)
        free(r->jump[k].perm);
    free(r->jump);
    for (size_t k = 0; k < r->ncomp && r->comp; k++)
        free(r->comp[k].perm);
    free(r->comp);
    for (size_t k = 0; k < r->nproblems; k++)
        free(r->problem[k]);
    memset(r, 0, sizeof *r);
}

static void problem(sw_cut_report *r, const char *fmt, ...)
{
    if (r->nproblems >= SW_CUTS_MAX_PROBLEMS)
        return;
    char buf[512];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, sizeof buf, fmt, ap);
    va_end(ap);
    r->problem[r->nproblems] = strdup(buf);
    if (r->problem[r->nproblems])
        r->nproblems++;
}

static const char *cstr(char *buf, size_t n, double complex z)
{
    double re = creal(z), im = cimag(z), mod = cabs(z);
    if (fabs(re) < 1e-13 * mod)
        re = 0;
    if (fabs(im) < 1e-13 * mod)
        im = 0;
    if (im == 0)
        snprintf(buf, n, "%.10g", re + 0.0);
    else
        snprintf(buf, n, "%.10g%+.10gi", re, im);
    return buf;
}

/* Convex hull (monotone chain), counter-clockwise, into H; returns its size. */
static int cmp_c(const void *a, const void *b)
{
    const double complex *p = a, *q = b;
    if (creal(*p) != creal(*q))
        return creal(*p) < creal(*q) ? -1 : 1;
    if (cimag(*p) != cimag(*q))
        return cimag(*p) < cimag(*q) ? -1 : 1;
    return 0;
}

static size_t hull(double complex *h, double complex *p, size_t n)
{
    qsort(p, n, sizeof *p, cmp_c);
    size_t k = 0;
    for (size_t i = 0; i < n; i++) {
        while (k >= 2 && cross(h[k - 1] - h[k - 2], p[i] - h[k - 2]) <= 0)
            k--;
        h[k++] = p[i];
    }
    for (size_t i = n - 1, t = k + 1; i-- > 0;) {
        while (k >= t && cross(h[k - 1] - h[k - 2], p[i] - h[k - 2]) <= 0)
            k--;
        h[k++] = p[i];
    }
    return k > 1 ? k - 1 : k;
}

/* The hull of the component's vertices thickened by a disk of radius R:
 * a counter-clockwise closed polyline. */
static sw_status hug_loop(sw_path *loop, const double complex *h, size_t nh, double r,
                          sw_error *err)
{
    sw_path_clear(loop);
    sw_status st = SW_OK;
    for (size_t k = 0; k < nh && st == SW_OK; k++) {
        double complex prev = h[(k + nh - 1) % nh], v = h[k], next = h[(k + 1) % nh];
        double complex din = v - prev, dout = next - v;
        if (nh == 1)
            din = dout = 1;
        /* outward normals (right of a ccw edge) */
        double a0 = carg(-CMPLX(0.0, 1.0) * din), a1 = carg(-CMPLX(0.0, 1.0) * dout);
        if (nh == 1)
            a1 = a0 + 2 * PI - 1e-9;
        while (a1 < a0)
            a1 += 2 * PI;
        int steps = (int)ceil((a1 - a0) / (PI / 8)) + 1;
        for (int j = 0; j <= steps && st == SW_OK; j++) {
            double a = a0 + (a1 - a0) * j / steps;
            st = sw_path_push(loop, v + r * cexp(CMPLX(0.0, a)), SW_BANK_NONE, err);
        }
    }
    if (st == SW_OK)
        st = sw_path_push(loop, loop->z[0], SW_BANK_NONE, err);
    return st;
}

static size_t find(size_t *par, size_t i)
{
    while (par[i] != i)
        i = par[i] = par[par[i]];
    return i;
}

static sw_status check_component(sw_cut_report *r, sw_cut_component *cc, size_t ci,
                                 const sw_func *f, const sw_points *pts, const sw_cuts *c,
                                 const sw_branch *b, const size_t *comp_of, sw_error *err)
{
    double scale = cuts_scale(c), far = 8 * scale + 1;
    size_t nv = 0;
    for (size_t k = 0; k < cc->ncuts && k < 32; k++)
        nv += c->cut[cc->cuts[k]].n;
    double complex *v = malloc((nv ? nv : 1) * sizeof *v), *h = malloc((nv + 1) * sizeof *h);
    sw_path loop;
    sw_path_init(&loop);
    sw_status st = SW_OK;
    if (!v || !h) {
        free(v);
        free(h);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    nv = 0;
    for (size_t k = 0; k < cc->ncuts && k < 32; k++)
        for (size_t j = 0; j < c->cut[cc->cuts[k]].n; j++)
            v[nv++] = c->cut[cc->cuts[k]].z[j];
    size_t nh = hull(h, v, nv);
    /* thickness: a third of the distance to everything outside the component */
    double dmin = 0.1 * scale;
    for (size_t k = 0; k < c->npieces; k++) {
        if (comp_of[c->piece[k].cut] == ci)
            continue;
        double complex a, bb;
        piece_seg(&c->piece[k], far, &a, &bb);
        for (size_t j = 0; j < nh; j++) {
            double complex a2 = h[j], b2 = h[(j + 1) % nh];
            double d = seg_meet(a, bb, a2, b2, 0, NULL, NULL) ? 0 :
                       fmin(fmin(sw_segment_distance(a, a2, b2), sw_segment_distance(bb, a2, b2)),
                            fmin(sw_segment_distance(a2, a, bb), sw_segment_distance(b2, a, bb)));
            dmin = fmin(dmin, d);
        }
    }
    for (size_t k = 0; k < pts->n; k++) {
        if (pts->pt[k].kind != SW_POINT_BRANCH)
            continue;
        double d = INFINITY;
        for (size_t j = 0; j < nh; j++)
            d = fmin(d, sw_segment_distance(pts->pt[k].z, h[j], h[(j + 1) % nh]));
        if (d > ON_CUT * scale * 1e3)
            dmin = fmin(dmin, d);
    }
    char b1[64];
    if (!(dmin > 1e-9 * scale)) {
        problem(r, "component %zu (cut %zu): another cut or branch point touches its convex hull; "
                "its loop was not checked", ci + 1, cc->cuts[0] + 1);
        goto cleanup;
    }
    st = hug_loop(&loop, h, nh, dmin / 3, err);
    if (st != SW_OK)
        goto cleanup;
    /* nothing else may be inside: other pieces' points and branch points off the component */
    for (size_t k = 0; k < c->npieces; k++) {
        if (comp_of[c->piece[k].cut] == ci)
            continue;
        double w = sw_path_winding(&loop, c->piece[k].from);
        if (isfinite(w) && fabs(w) > 0.5) {
            problem(r, "component %zu (cut %zu): another cut lies inside its convex hull; its loop "
                    "was not checked", ci + 1, cc->cuts[0] + 1);
            goto cleanup;
        }
    }
    for (size_t k = 0; k < pts->n; k++) {
        if (pts->pt[k].kind != SW_POINT_BRANCH)
            continue;
        double onc = INFINITY;
        for (size_t j = 0; j < cc->ncuts && j < 32; j++)
            for (size_t q = 0; q < c->npieces; q++)
                if (c->piece[q].cut == cc->cuts[j]) {
                    double complex a, bb;
                    piece_seg(&c->piece[q], far, &a, &bb);
                    onc = fmin(onc, sw_segment_distance(pts->pt[k].z, a, bb));
                }
        double w = sw_path_winding(&loop, pts->pt[k].z);
        if (onc > 1e-9 * scale + pts->pt[k].radius && isfinite(w) && fabs(w) > 0.5) {
            problem(r, "component %zu (cut %zu): the branch point %s lies inside its convex hull "
                    "but not on it; its loop was not checked", ci + 1, cc->cuts[0] + 1,
                    cstr(b1, sizeof b1, pts->pt[k].z));
            goto cleanup;
        }
    }
    /* track the regular branch once around */
    sw_germ g;
    sw_trace tr;
    sw_trace_init(&tr);
    if (sw_germ_init(&g, f) != SW_OK) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    sw_error e2;
    st = sw_branch_eval(&g, b, loop.z[0], SW_BANK_NONE, &e2);
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.keep_log = 0;
    if (st == SW_OK)
        st = sw_track_run(&tr, f, &g, &loop, &o, &e2);
    if (st != SW_OK) {
        problem(r, "component %zu (cut %zu): its loop could not be tracked: %s", ci + 1,
                cc->cuts[0] + 1, e2.msg);
        st = SW_OK;
    } else {
        const sw_germ *e = &tr.vert[tr.nvert - 1];
        cc->checked = 1;
        if (sw_func_kind_of(f) == SW_FUNC_EXPR) {
            double complex v0 = sw_func_value(f, &g), v1 = sw_func_value(f, e);
            cc->ratio = v1 / v0;
            cc->difference = v1 - v0;
            cc->trivial = cabs(v1 - v0) <= TRIVIAL_TOL * (cabs(v0) + cabs(v1) + 1e-300) ||
                          cabs(v1 - v0) < 1e-300;
            if (!cc->trivial)
                problem(r, "component %zu (cut %zu): a loop around it changes the function by the "
                        "factor %s (difference %s): it is not single-valued outside the cuts",
                        ci + 1, cc->cuts[0] + 1, cstr(b1, sizeof b1, cc->ratio),
                        cstr((char[64]){0}, 64, cc->difference));
        } else {
            size_t n = sw_func_degree(f);
            cc->perm = calloc(n ? n : 1, sizeof *cc->perm);
            if (cc->perm && sw_fiber_permutation(cc->perm, f, &g, e, &e2) == SW_OK) {
                cc->trivial = 1;
                for (size_t i = 0; i < n; i++)
                    if (cc->perm[i] != (int)i)
                        cc->trivial = 0;
                if (!cc->trivial) {
                    char cyc[256];
                    size_t used = 0;
                    for (size_t i = 0; i < n && used < sizeof cyc - 16; i++)
                        if (cc->perm[i] != (int)i)
                            used += (size_t)snprintf(cyc + used, sizeof cyc - used, "%s%zu->%d",
                                                     used ? ", " : "", i + 1, cc->perm[i] + 1);
                    problem(r, "component %zu (cut %zu): a loop around it permutes the sheets "
                            "(%s): w is not single-valued outside the cuts", ci + 1,
                            cc->cuts[0] + 1, cyc);
                }
            } else {
                problem(r, "component %zu (cut %zu): %s", ci + 1, cc->cuts[0] + 1, e2.msg);
            }
        }
    }
    sw_trace_clear(&tr);
    sw_germ_clear(&g);
cleanup:
    sw_path_clear(&loop);
    free(v);
    free(h);
    return st;
}

sw_status sw_cuts_check(sw_cut_report *out, const sw_func *f, const sw_points *pts,
                        const sw_cuts *c, const sw_branch *b, sw_error *err)
{
    sw_cut_report r;
    sw_cut_report_init(&r);
    sw_status st = SW_OK;
    double scale = cuts_scale(c), far = 8 * scale + 1;
    char b1[64], b2[64];
    size_t *par = malloc((c->n ? c->n : 1) * sizeof *par);
    r.jump = calloc(c->npieces ? c->npieces : 1, sizeof *r.jump);
    if (!par || !r.jump) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    r.npieces = c->npieces;
    /* 1. branch points on cuts */
    if (!pts->complete)
        problem(&r, "not every branch point is known (%s): the verdict covers only those found",
                pts->incomplete);
    for (size_t k = 0; k < pts->n; k++) {
        const sw_point *p = &pts->pt[k];
        if (p->kind != SW_POINT_BRANCH)
            continue;
        if (sw_cuts_distance(c, p->z) > 1e-9 * fmax(scale, cabs(p->z)) + p->radius) {
            if (sw_func_kind_of(f) == SW_FUNC_EXPR)
                problem(&r, "the branch point %s lies on no cut (one turn around it %s %s)",
                        cstr(b1, sizeof b1, p->z), p->is_shift ? "adds" : "multiplies by",
                        cstr(b2, sizeof b2, p->is_shift ? p->difference : p->ratio));
            else
                problem(&r, "the branch point %s lies on no cut", cstr(b1, sizeof b1, p->z));
        }
    }
    /* 2. components */
    for (size_t k = 0; k < c->n; k++)
        par[k] = k;
    for (size_t i = 0; i < c->npieces; i++)
        for (size_t j = i + 1; j < c->npieces; j++) {
            double complex a1, a2, q1, q2;
            piece_seg(&c->piece[i], far, &a1, &a2);
            piece_seg(&c->piece[j], far, &q1, &q2);
            if (seg_meet(a1, a2, q1, q2, ON_CUT * scale, NULL, NULL)) {
                size_t x = find(par, c->piece[i].cut), y = find(par, c->piece[j].cut);
                if (x != y)
                    par[x] = y;
            }
        }
    size_t *comp_of = malloc((c->n ? c->n : 1) * sizeof *comp_of);
    size_t *root_id = malloc((c->n ? c->n : 1) * sizeof *root_id);
    r.comp = calloc(c->n ? c->n : 1, sizeof *r.comp);
    if (!comp_of || !root_id || !r.comp) {
        free(comp_of);
        free(root_id);
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    for (size_t k = 0; k < c->n; k++)
        root_id[k] = (size_t)-1;
    for (size_t k = 0; k < c->n; k++) {
        size_t rt = find(par, k);
        if (root_id[rt] == (size_t)-1) {
            root_id[rt] = r.ncomp;
            r.comp[r.ncomp].bounded = 1;
            r.ncomp++;
        }
        size_t ci = root_id[rt];
        comp_of[k] = ci;
        sw_cut_component *cc = &r.comp[ci];
        if (cc->ncuts < 32)
            cc->cuts[cc->ncuts] = k;
        cc->ncuts++;
        if (c->cut[k].inf_end)
            cc->bounded = 0;
        if (c->cut[k].inf_end)
            r.inf_reached = 1;
    }
    for (size_t ci = 0; ci < r.ncomp && st == SW_OK; ci++)
        if (r.comp[ci].bounded)
            st = check_component(&r, &r.comp[ci], ci, f, pts, c, b, comp_of, err);
    free(comp_of);
    free(root_id);
    if (st != SW_OK)
        goto cleanup;
    /* 3. infinity */
    r.inf_branched = pts->complete ? pts->infinity.kind == SW_POINT_BRANCH : -1;
    if (r.inf_branched == 1 && !r.inf_reached)
        problem(&r, "infinity is a branch point (a large circle %s), but no cut runs to infinity",
                sw_func_kind_of(f) == SW_FUNC_EXPR
                    ? (pts->infinity.is_shift ? "adds a constant" : "multiplies the function")
                    : "permutes the sheets");
    /* 4. jumps across every piece */
    for (size_t k = 0; k < c->npieces; k++) {
        sw_germ L, R;
        if (sw_germ_init(&L, f) != SW_OK || sw_germ_init(&R, f) != SW_OK) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        sw_error e2;
        sw_piece_jump *j = &r.jump[k];
        if (sw_branch_banks(&L, &R, b, k, pts, &j->at, &e2) == SW_OK) {
            j->left = sw_func_value(f, &L);
            j->right = sw_func_value(f, &R);
            j->ratio = j->right / j->left;
            j->difference = j->right - j->left;
            if (sw_func_kind_of(f) == SW_FUNC_CURVE) {
                size_t n = sw_func_degree(f);
                j->perm = calloc(n ? n : 1, sizeof *j->perm);
                if (j->perm && sw_fiber_permutation(j->perm, f, &L, &R, &e2) != SW_OK) {
                    free(j->perm);
                    j->perm = NULL;
                }
            }
        } else {
            j->left = j->right = j->ratio = j->difference = CMPLX(NAN, NAN);
            problem(&r, "cut %zu, piece %zu: the banks could not be evaluated: %s",
                    c->piece[k].cut + 1, c->piece[k].seg + 1, e2.msg);
        }
        sw_germ_clear(&L);
        sw_germ_clear(&R);
    }
    r.single_valued = r.nproblems == 0;
    sw_cut_report_clear(out);
    *out = r;
    sw_cut_report_init(&r);
cleanup:
    free(par);
    sw_cut_report_clear(&r);
    return st;
}

/* ------------------------------------------------------------- crossings */

static int cmp_cross(const void *a, const void *b)
{
    const sw_crossing *p = a, *q = b;
    return p->t < q->t ? -1 : p->t > q->t ? 1 : 0;
}

sw_status sw_cuts_crossings(sw_crossing **out, size_t *nout, const sw_cuts *c, const sw_path *p,
                            sw_error *err)
{
    *out = NULL;
    *nout = 0;
    double scale = fmax(cuts_scale(c), sw_path_scale(p));
    double far = 8 * scale + 1;
    size_t n = 0, alloc = 0;
    sw_crossing *x = NULL;
    double pscale = sw_path_scale(p);
    for (size_t k = 0; k + 1 < p->n; k++) {
        double complex a = sw_path_followed_vertex(p, k, pscale),
                       b = sw_path_followed_vertex(p, k + 1, pscale);
        if (a == b)
            continue;
        for (size_t j = 0; j < c->npieces; j++) {
            double complex q1, q2;
            piece_seg(&c->piece[j], far, &q1, &q2);
            double s, t;
            double den = cross(b - a, q2 - q1);
            if (den == 0 || !seg_meet(a, b, q1, q2, 0, &s, &t))
                continue;
            /* count a crossing at a path vertex once (on the segment it starts);
               a path that starts on a cut is taken to start on the side it
               leaves to, one that ends on a cut to end beyond it, so that a
               closed path based on a cut crosses it once, on its return */
            if (s >= 1 && k + 2 < p->n)
                continue;
            if (k == 0 && s <= 0)
                continue;
            if (n == alloc) {
                alloc = alloc ? 2 * alloc : 16;
                sw_crossing *nx = realloc(x, alloc * sizeof *nx);
                if (nx == NULL) {
                    free(x);
                    return sw_error_set(err, SW_ENOMEM, "out of memory");
                }
                x = nx;
            }
            x[n].t = (double)k + s;
            x[n].z = a + s * (b - a);
            x[n].piece = j;
            /* path direction to the left of the piece: from its right to its left */
            x[n].direction = cross(c->piece[j].dir, b - a) > 0 ? 1 : -1;
            n++;
        }
    }
    if (n)
        qsort(x, n, sizeof *x, cmp_cross);
    /* a crossing through the joint of two consecutive pieces of one cut is one
       crossing of that cut */
    size_t m = 0;
    for (size_t k = 0; k < n; k++) {
        if (m > 0) {
            const sw_crossing *q = &x[m - 1];
            const sw_cut_piece *a = &c->piece[q->piece], *b = &c->piece[x[k].piece];
            if (a->cut == b->cut && fabs(q->t - x[k].t) <= 1e-12 * (1 + fabs(x[k].t)) &&
                (a->seg + 1 == b->seg || b->seg + 1 == a->seg) && q->direction == x[k].direction)
                continue;
        }
        x[m++] = x[k];
    }
    n = m;
    *out = x;
    *nout = n;
    return SW_OK;
}
