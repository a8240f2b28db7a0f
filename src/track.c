/* The tracker: one step controller for every engine.
 *
 * Steps start at max_step * scale, are halved whenever the engine refuses and
 * doubled after each acceptance.  When a step would have to fall below
 * min_step * scale the path runs through (or grazes) a singular point: the
 * run stops with SW_ESINGULAR naming what is singular and where.
 *
 * Bank marks: a segment whose end vertices carry bank marks (x+i0, x-i0) is
 * followed at a height BANK_HEIGHT * scale on that side (interpolated when
 * only one end is marked), and the germ recorded at such a vertex is the
 * limit from that side, taken by one more step to the exact point.  This is
 * the "+i0 prescription": the path passes a branch point on the axis on the
 * marked side, and values on the bank are exact limits. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "expr_internal.h"
#include "func_internal.h"
#include "sheetwalk/track.h"

#define BANK_HEIGHT 1e-10 /* relative to the path scale; far above min_step */
/* In certified mode a step that the engine accepts numerically but cannot
 * prove is halved at most this many times before it is accepted unproven. */
#define CERT_HALVINGS 30

static const double PI = 3.14159265358979323846;

void sw_track_opts_init(sw_track_opts *o)
{
    sw_step_opts_init(&o->step);
    o->min_step = 1e-13;  /* 2^-43 of the scale: far below any real step, far above rounding */
    o->max_step = 0.25;   /* at least 4 steps per path scale, so the midpoint test sees detail */
    o->max_steps = 10000000; /* about 10 s of work: beyond it, a path is refused, not run */
    o->keep_log = 1;
}

void sw_trace_init(sw_trace *tr) { memset(tr, 0, sizeof *tr); }

void sw_trace_clear(sw_trace *tr)
{
    if (tr == NULL)
        return;
    for (size_t k = 0; k < tr->nvert; k++)
        sw_germ_clear(&tr->vert[k]);
    free(tr->vert);
    free(tr->t);
    free(tr->z);
    free(tr->sheet);
    free(tr->state);
    memset(tr, 0, sizeof *tr);
}

static sw_status log_push(sw_trace *tr, double t, const sw_germ *g)
{
    if (tr->nlog == tr->alloc) {
        size_t na = tr->alloc ? 2 * tr->alloc : 256;
        double *nt = realloc(tr->t, na * sizeof *nt);
        if (nt == NULL)
            return SW_ENOMEM;
        tr->t = nt;
        double complex *nz = realloc(tr->z, na * sizeof *nz);
        if (nz == NULL)
            return SW_ENOMEM;
        tr->z = nz;
        int *ns = realloc(tr->sheet, na * sizeof *ns);
        if (ns == NULL)
            return SW_ENOMEM;
        tr->sheet = ns;
        double complex *st = realloc(tr->state, na * (tr->len ? tr->len : 1) * sizeof *st);
        if (st == NULL)
            return SW_ENOMEM;
        tr->state = st;
        tr->alloc = na;
    }
    tr->t[tr->nlog] = t;
    tr->z[tr->nlog] = g->z;
    tr->sheet[tr->nlog] = g->sheet;
    memcpy(tr->state + tr->nlog * tr->len, g->s, tr->len * sizeof *g->s);
    tr->nlog++;
    return SW_OK;
}

/* The followed (displaced) position of vertex k. */
static double complex displaced(const sw_path *p, size_t k, double scale)
{
    return p->z[k] + CMPLX(0.0, (double)p->bank[k] * BANK_HEIGHT * scale);
}

/* Move G to Z with as many steps as needed (short moves: bank limits, dense
 * log look-ups).  Returns the step result of the last try. */
static sw_step_result walk_to(sw_germ *g, sw_germ *tmp, double complex z, const sw_func *f,
                              const sw_step_opts *so, double hmin, int *why)
{
    double complex a = g->z;
    double len = cabs(z - a), s = 0, h = len;
    sw_step_result r = SW_STEP_OK;
    int guard = 0;
    while (s < len) {
        double hh = fmin(h, len - s);
        double complex target = (s + hh >= len) ? z : a + (z - a) * ((s + hh) / len);
        r = sw_func_advance(tmp, g, target, f, so, why);
        if (r == SW_STEP_OK || r == SW_STEP_UNPROVEN) {
            sw_germ_copy(g, tmp);
            s += hh;
            h = 2 * hh;
        } else if (r == SW_STEP_SINGULAR || hh < hmin || ++guard > 100000) {
            return r == SW_STEP_SINGULAR ? r : SW_STEP_TOO_FAR;
        } else {
            h = hh / 2;
        }
    }
    g->z = z;
    return r == SW_STEP_UNPROVEN ? SW_STEP_OK : r;
}

static sw_status singular_error(sw_error *err, const sw_func *f, int why, double complex z,
                                size_t seg, int grazing)
{
    char what[160];
    sw_func_describe(what, sizeof what, f, why);
    const sw_expr *e = sw_func_expr(f);
    if (e != NULL && why < 0)
        return sw_error_set(err, SW_ESINGULAR,
                            "the value of the function is not finite near z = %.10g%+.10gi "
                            "(segment %zu): a pole of the expression, or beyond double range",
                            creal(z), cimag(z), seg + 1);
    if (e != NULL) {
        double complex u = sw_expr_mv_operand(e, (size_t)why, z, 0);
        if (!isfinite(creal(u)) || !isfinite(cimag(u)) || cabs(u) > 1e300)
            return sw_error_set(err, SW_ESINGULAR,
                                "the operand of '%s' is infinite or beyond double range near z = "
                                "%.10g%+.10gi (segment %zu): a pole of the operand, or overflow",
                                what, creal(z), cimag(z), seg + 1);
        return sw_error_set(err, SW_ESINGULAR,
                            "the path %s a zero or pole of the operand of '%s' at z = "
                            "%.10g%+.10gi (segment %zu): a branch point lies on the path",
                            grazing ? "grazes" : "runs through", what, creal(z), cimag(z),
                            seg + 1);
    }
    return sw_error_set(err, SW_ESINGULAR,
                        "the path %s a branch point or pole of the curve near z = "
                        "%.10g%+.10gi (segment %zu): sheets collide there", grazing ? "grazes" :
                        "runs through", creal(z), cimag(z), seg + 1);
}

sw_status sw_track_run(sw_trace *out, const sw_func *f, const sw_germ *start,
                       const sw_path *path, const sw_track_opts *opts, sw_error *err)
{
    sw_track_opts defo;
    if (opts == NULL) {
        sw_track_opts_init(&defo);
        opts = &defo;
    }
    sw_trace tr;
    sw_trace_init(&tr);
    sw_germ g, tmp, vtmp;
    sw_status st = SW_OK;
    int have = 0;
    if (path->inf_start || path->inf_end)
        return sw_error_set(err, SW_EUNSUPPORTED,
                            "continuation cannot run to 'inf'; end the path at a finite point "
                            "(integrals accept 'inf')");
    if (path->n < 1)
        return sw_error_set(err, SW_EINPUT, "the path has no vertices");
    if (sw_germ_init(&g, f) != SW_OK || sw_germ_init(&tmp, f) != SW_OK ||
        sw_germ_init(&vtmp, f) != SW_OK) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    have = 1;
    double scale = sw_path_scale(path);
    double hmin = opts->min_step * scale, hmax = opts->max_step * scale;
    tr.len = g.len;
    tr.nvert = path->n;
    tr.vert = calloc(path->n, sizeof *tr.vert);
    if (tr.vert == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    for (size_t k = 0; k < path->n; k++)
        if (sw_germ_init(&tr.vert[k], f) != SW_OK) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
    if (cabs(start->z - path->z[0]) > 1e-12 * scale) {
        st = sw_error_set(err, SW_EINTERNAL, "the start germ is not at the path's first vertex");
        goto cleanup;
    }
    sw_germ_copy(&g, start);
    sw_germ_copy(&tr.vert[0], start);
    tr.certified = opts->step.certify ? 1 : 0;
    int why = -1;
    /* step onto the followed (displaced) position of vertex 0 */
    double complex zd0 = displaced(path, 0, scale);
    if (zd0 != g.z && walk_to(&g, &tmp, zd0, f, &opts->step, hmin, &why) != SW_STEP_OK) {
        st = singular_error(err, f, why, path->z[0], 0, 1);
        goto cleanup;
    }
    if (opts->keep_log && log_push(&tr, 0.0, &g) != SW_OK) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    double h = hmax;
    for (size_t k = 0; k + 1 < path->n; k++) {
        double complex a = displaced(path, k, scale), b = displaced(path, k + 1, scale);
        double len = cabs(b - a), s = 0;
        int halvings = 0, refused = 0;
        while (s < len) {
            double hh = fmin(h, len - s);
            /* a remainder of a few ulps is rounding, not a step of its own */
            int last = s + hh >= len * (1 - 1e-12);
            double complex target = last ? b : a + (b - a) * ((s + hh) / len);
            sw_step_result r = sw_func_advance(&tmp, &g, target, f, &opts->step, &why);
            if (r == SW_STEP_UNPROVEN && halvings < CERT_HALVINGS && hh > hmin) {
                h = hh / 2;
                halvings++;
                tr.rejected++;
                continue;
            }
            if (r == SW_STEP_OK || r == SW_STEP_UNPROVEN) {
                if (r == SW_STEP_UNPROVEN)
                    tr.certified = 0;
                sw_germ_copy(&g, &tmp);
                s = last ? len : s + hh;
                tr.steps++;
                halvings = 0;
                /* grow only after a step that was accepted at the first try:
                   right after a refusal the accepted length is about the
                   largest safe one, and doubling it would be refused again */
                h = fmin(refused ? hh : 2 * hh, hmax);
                refused = 0;
                if (opts->keep_log &&
                    log_push(&tr, (double)k + (last ? 1.0 : s / len), &g) != SW_OK) {
                    st = sw_error_set(err, SW_ENOMEM, "out of memory");
                    goto cleanup;
                }
                if (tr.steps >= opts->max_steps) {
                    st = sw_error_set(err, SW_ETOLERANCE,
                                      "gave up after %zu steps on segment %zu (raise the step "
                                      "limit or shorten the path)", tr.steps, k + 1);
                    goto cleanup;
                }
                continue;
            }
            if (r == SW_STEP_SINGULAR) {
                st = singular_error(err, f, why, target, k, 0);
                goto cleanup;
            }
            tr.rejected++;
            refused = 1;
            h = hh / 2;
            if (h < hmin) {
                st = singular_error(err, f, why, target, k, 1);
                goto cleanup;
            }
        }
        /* the germ at vertex k+1: the exact point (the bank limit when marked) */
        sw_germ_copy(&vtmp, &g);
        if (path->bank[k + 1] != SW_BANK_NONE &&
            walk_to(&vtmp, &tmp, path->z[k + 1], f, &opts->step, hmin, &why) != SW_STEP_OK) {
            st = singular_error(err, f, why, path->z[k + 1], k, 1);
            goto cleanup;
        }
        vtmp.bank = path->bank[k + 1];
        sw_germ_copy(&tr.vert[k + 1], &vtmp);
    }
    sw_trace_clear(out);
    *out = tr;
    sw_trace_init(&tr);
cleanup:
    if (have) {
        sw_germ_clear(&g);
        sw_germ_clear(&tmp);
        sw_germ_clear(&vtmp);
    } else {
        sw_germ_clear(&g);
        sw_germ_clear(&tmp);
    }
    sw_trace_clear(&tr);
    return st;
}

size_t sw_trace_log_index(const sw_trace *tr, double t)
{
    /* binary search for the last logged germ with t_k <= t */
    size_t lo = 0, hi = tr->nlog - 1;
    if (t <= tr->t[0])
        hi = 0;
    while (lo < hi) {
        size_t mid = (lo + hi + 1) / 2;
        if (tr->t[mid] <= t)
            lo = mid;
        else
            hi = mid - 1;
    }
    return lo;
}

size_t sw_trace_logged_germ(sw_germ *g, const sw_trace *tr, double t)
{
    size_t lo = sw_trace_log_index(tr, t);
    g->z = tr->z[lo];
    g->sheet = tr->sheet[lo];
    g->bank = SW_BANK_NONE;
    memcpy(g->s, tr->state + lo * tr->len, tr->len * sizeof *g->s);
    return lo;
}

sw_status sw_trace_germ_at(sw_germ *g, const sw_trace *tr, const sw_func *f, double t,
                           const sw_path *path, sw_error *err)
{
    if (tr->nlog == 0)
        return sw_error_set(err, SW_EUSAGE, "the trace has no dense log");
    sw_trace_logged_germ(g, tr, t);
    double complex target = sw_path_point(path, t);
    if (g->z == target)
        return SW_OK;
    sw_germ tmp;
    if (sw_germ_init(&tmp, f) != SW_OK)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    sw_track_opts o;
    sw_track_opts_init(&o);
    int why = -1;
    sw_step_result r = walk_to(g, &tmp, target, f, &o.step,
                               o.min_step * sw_path_scale(path), &why);
    sw_germ_clear(&tmp);
    if (r != SW_STEP_OK) {
        char what[160];
        sw_func_describe(what, sizeof what, f, why);
        return sw_error_set(err, SW_ESINGULAR,
                            "cannot evaluate the tracked branch at t = %.12g (z = "
                            "%.10g%+.10gi): '%s' is singular there", t, creal(target),
                            cimag(target), what);
    }
    return SW_OK;
}

sw_status sw_track_start_germ(sw_germ *g, const sw_func *f, const sw_path *path, size_t vertex,
                              const double complex *w, const sw_track_opts *o, sw_error *err)
{
    if (path->n == 0)
        return sw_error_set(err, SW_EINPUT, "the path has no vertices");
    if (vertex >= path->n)
        return sw_error_set(err, SW_EUSAGE, "vertex %zu is not on the path", vertex + 1);
    sw_status st = sw_func_germ_at(g, f, path->z[vertex], path->bank[vertex], w, err);
    if (st != SW_OK || vertex == 0)
        return st;
    sw_path back;
    sw_path_init(&back);
    for (size_t k = vertex + 1; k-- > 0;)
        if ((st = sw_path_push(&back, path->z[k], path->bank[k], err)) != SW_OK) {
            sw_path_clear(&back);
            return st;
        }
    sw_trace tr;
    sw_trace_init(&tr);
    sw_track_opts oo;
    if (o == NULL)
        sw_track_opts_init(&oo);
    else
        oo = *o;
    oo.keep_log = 0;
    st = sw_track_run(&tr, f, g, &back, &oo, err);
    if (st == SW_OK)
        sw_germ_copy(g, &tr.vert[tr.nvert - 1]);
    sw_trace_clear(&tr);
    sw_path_clear(&back);
    return st;
}

double complex sw_path_followed_vertex(const sw_path *path, size_t k, double scale)
{
    return displaced(path, k, scale);
}

double sw_path_winding(const sw_path *path, double complex c)
{
    double scale = sw_path_scale(path), turns = 0;
    for (size_t k = 0; k + 1 < path->n; k++) {
        double complex a = displaced(path, k, scale) - c, b = displaced(path, k + 1, scale) - c;
        if (a == 0 || b == 0)
            return NAN;
        double complex q = b / a;
        if (cimag(q) == 0 && creal(q) < 0)
            return NAN; /* the segment passes through c */
        turns += carg(q);
    }
    return turns / (2 * PI);
}

double sw_path_distance(const sw_path *path, double complex c)
{
    double d = INFINITY;
    for (size_t k = 0; k < path->n; k++)
        d = fmin(d, k + 1 == path->n ? cabs(c - path->z[k])
                                     : sw_segment_distance(c, path->z[k], path->z[k + 1]));
    return d;
}
