/* sheetwalk trace and sheetwalk loop: continuation along a path. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"

static const char trace_help[] =
    "usage: sheetwalk trace (-f EXPR | -c POLY) -p PATH [--start W | --at Z=W]\n"
    "                       [--set NAME=VALUE]... [--certify] [--json]\n\n"
    "Continues the function along the polyline PATH and reports the value and the\n"
    "branch at every vertex, the number of steps, and the net number of turns\n"
    "around every branch point.  Without --start/--at an expression starts on its\n"
    "principal branch at the first vertex and a curve on sheet 1.  A path through\n"
    "(or grazing) a branch point is refused (exit 3).  Vertices may carry bank\n"
    "marks: '2+i0' is 2 approached from above, and a segment between marked\n"
    "vertices passes points on the axis on that side (the +i0 prescription).\n\n"
    "  -f, --function EXPR   an expression in z\n"
    "  -c, --curve POLY      a polynomial P(z, w); the function is w(z)\n"
    "  -p, --path PATH       a path file, or inline vertices separated by ';'\n"
    "      --start W         start on the sheet nearest W at the first vertex\n"
    "      --at Z=W          start on the sheet nearest W at the vertex Z\n"
    "      --set NAME=VALUE  give a parameter a value (repeatable)\n"
    "      --certify         prove every step in ball arithmetic\n"
    "      --cut PATH        a cut (repeatable): report every crossing of a cut piece,\n"
    "                        its direction, and the sheet relative to the regular\n"
    "                        branch that agrees with the start\n"
    "      --json            one JSON document on stdout\n";

static const char loop_help[] =
    "usage: sheetwalk loop (-f EXPR | -c POLY) -p PATH [--start W | --at Z=W]\n"
    "                      [--set NAME=VALUE]... [--certify] [--json]\n\n"
    "PATH must be closed (last vertex = first, or 'close', or 'circle C R').\n"
    "For an expression: the value at the start and after the loop, their ratio\n"
    "(end/start) and difference (end-start), and the turns of every multivalued\n"
    "operand.  For a curve: the fiber over the base point (sheets in label order)\n"
    "and the permutation of the sheets (1-based: sheet i ends on sheet s_i).\n\n"
    "  -f, --function EXPR   an expression in z\n"
    "  -c, --curve POLY      a polynomial P(z, w); the function is w(z)\n"
    "  -p, --path PATH       a closed path: a file, or inline vertices\n"
    "      --start W         start on the sheet nearest W\n"
    "      --at Z=W          fix the sheet nearest W at the vertex Z\n"
    "      --set NAME=VALUE  give a parameter a value (repeatable)\n"
    "      --certify         prove every step in ball arithmetic\n"
    "      --cut PATH        a cut (repeatable): report the crossings, as for trace\n"
    "      --json            one JSON document on stdout\n\n"
    "The loop is also written as a word in the generators g1, g2, ... of the default\n"
    "cut system (one ray per branch point, see 'sheetwalk cuts --help'): gk is a\n"
    "counter-clockwise crossing of the ray of the k-th branch point, gk^-1 the\n"
    "opposite.\n";

static json_t *zw(double complex z, double complex w, int bank)
{
    json_t *o = json_object();
    json_object_set_new(o, "z", json_cplx(z));
    if (bank != SW_BANK_NONE)
        json_object_set_new(o, "bank", json_string(bank > 0 ? "+i0" : "-i0"));
    json_object_set_new(o, "w", json_cplx(w));
    return o;
}

/* Branch description of a germ: per-node branch indices (expressions) or the
 * sheet label over its point (curves).  Into BUF for tables; JSON into O. */
static void branch_info(char *buf, size_t n, json_t *o, const sw_func *f, const sw_germ *g)
{
    buf[0] = '\0';
    if (sw_func_kind_of(f) == SW_FUNC_EXPR) {
        long br[64];
        size_t m = sw_func_node_branches(br, 64, f, g);
        json_t *a = json_array();
        size_t used = 0;
        for (size_t k = 0; k < m; k++) {
            json_array_append_new(a, json_integer(br[k]));
            if (used < n)
                used += (size_t)snprintf(buf + used, n - used, "%s%ld", k ? "," : "", br[k]);
        }
        if (o)
            json_object_set_new(o, "branch", a);
        else
            json_decref(a);
    } else {
        sw_germ h;
        sw_error e2;
        double complex w = sw_func_value(f, g);
        if (sw_germ_init(&h, f) == SW_OK &&
            sw_func_germ_at(&h, f, g->z, SW_BANK_NONE, &w, &e2) == SW_OK) {
            snprintf(buf, n, "%d", h.sheet + 1);
            if (o)
                json_object_set_new(o, "sheet", json_integer(h.sheet + 1));
        }
        sw_germ_clear(&h);
    }
}

typedef struct run {
    cli c;
    sw_germ start;
    sw_trace tr;
    const sw_points *pts;
    int have_pts, have_germ;
    sw_error pts_err;
} run;

static int run_track(run *r, int argc, char **argv, const char *help, int need_closed)
{
    sw_error err;
    sw_trace_init(&r->tr);
    r->pts = NULL;
    r->have_pts = r->have_germ = 0;
    int rc = cli_parse(&r->c, argc, argv, help);
    if (rc >= 0)
        return rc;
    if ((rc = cli_load(&r->c, 1, &err)) >= 0)
        return rc;
    if (r->c.p.inf_start || r->c.p.inf_end)
        return cli_usage(&r->c, "the path runs to 'inf': continuation needs a finite path "
                                "(integrals accept 'inf')");
    if (r->c.p.n < 2)
        return cli_usage(&r->c, "the path needs at least two vertices");
    if (need_closed && !sw_path_is_closed(&r->c.p))
        return cli_usage(&r->c, "the path is not closed: end it at its first vertex (add a "
                                "'close' line or use 'circle C R')");
    if (sw_germ_init(&r->start, r->c.f) != SW_OK) {
        sw_error_set(&err, SW_ENOMEM, "out of memory");
        return cli_fail(&r->c, &err);
    }
    r->have_germ = 1;
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.step.certify = r->c.certify;
    o.keep_log = r->c.ncuts > 0; /* crossings look up the germ after each one */
    if ((rc = cli_start_germ(&r->c, &r->start, &o, &err)) >= 0)
        return rc;
    if (sw_track_run(&r->tr, r->c.f, &r->start, &r->c.p, &o, &err) != SW_OK)
        return cli_fail(&r->c, &err);
    r->have_pts = cli_get_points(&r->c, &r->pts, 0, &r->pts_err) == SW_OK;
    return -1;
}

static void run_clear(run *r)
{
    if (r->have_germ)
        sw_germ_clear(&r->start);
    sw_trace_clear(&r->tr);
    cli_clear(&r->c);
}

/* Winding around every branch point (JSON array) and a table on stdout. */
static json_t *winding(const run *r, int print)
{
    json_t *a = json_array();
    if (!r->have_pts)
        return a;
    int header = 0;
    for (size_t k = 0; k < r->pts->n; k++) {
        const sw_point *pt = &r->pts->pt[k];
        if (pt->kind != SW_POINT_BRANCH)
            continue;
        double t = sw_path_winding(&r->c.p, pt->z);
        if (!isfinite(t))
            continue;
        json_t *o = json_object();
        json_object_set_new(o, "z", json_cplx(pt->z));
        if (sw_path_is_closed(&r->c.p))
            json_object_set_new(o, "turns", json_integer((json_int_t)lround(t)));
        else
            json_object_set_new(o, "turns", json_real(t));
        json_array_append_new(a, o);
        if (print) {
            char b[64];
            if (!header)
                printf("\nturns around the branch points:\n  %-34s %s\n", "branch point",
                       "turns (counter-clockwise)");
            header = 1;
            if (sw_path_is_closed(&r->c.p))
                printf("  %-34s %ld\n", cfmt(b, sizeof b, pt->z), lround(t));
            else
                printf("  %-34s %.6f\n", cfmt(b, sizeof b, pt->z), t);
        }
    }
    return a;
}

/* Crossings of the given cuts, with the sheet after each relative to the
 * regular branch that agrees with the start of the path. */
static json_t *crossings(const run *r, int print)
{
    json_t *a = json_array();
    const cli *c = &r->c;
    if (c->ncuts == 0)
        return a;
    sw_error err;
    sw_cuts cuts;
    sw_cuts_init(&cuts);
    sw_branch *b = NULL;
    sw_crossing *x = NULL;
    size_t nx = 0;
    sw_germ gt, gr;
    sw_germ_init(&gt, c->f);
    sw_germ_init(&gr, c->f);
    cli tmp = *c; /* cli_load_cuts only reads c */
    if (cli_load_cuts(&tmp, &cuts, r->pts, &err) >= 0)
        goto cleanup;
    if (sw_cuts_crossings(&x, &nx, &cuts, &c->p, &err) != SW_OK)
        goto cleanup;
    int have_b = sw_branch_from_germ(&b, c->f, &cuts, &r->start, &err) == SW_OK;
    if (print) {
        printf("\ncrossings of the cuts%s:\n", have_b ? " (sheet relative to the regular branch "
                                                     "through the start)" : "");
        if (nx == 0)
            printf("  none\n");
        else
            printf("  %-10s %-28s %-5s %-7s %-14s %s\n", "t", "z", "cut", "piece", "direction",
                   "after it");
    }
    int curve = sw_func_kind_of(c->f) == SW_FUNC_CURVE;
    for (size_t k = 0; k < nx; k++) {
        const sw_cut_piece *pc = &cuts.piece[x[k].piece];
        json_t *o = json_object();
        json_object_set_new(o, "t", json_real(x[k].t));
        json_object_set_new(o, "z", json_cplx(x[k].z));
        json_object_set_new(o, "cut", json_integer((json_int_t)pc->cut + 1));
        json_object_set_new(o, "piece", json_integer((json_int_t)pc->seg + 1));
        json_object_set_new(o, "direction", json_string(x[k].direction > 0 ? "right-to-left"
                                                                           : "left-to-right"));
        char after[96] = "";
        if (have_b) {
            /* a point just after the crossing, before anything else happens */
            double tn = k + 1 < nx ? x[k + 1].t : (double)sw_path_segments(&c->p);
            double ta = x[k].t + fmin(1e-6, 0.5 * (tn - x[k].t));
            if (sw_trace_germ_at(&gt, &r->tr, c->f, ta, &c->p, &err) == SW_OK &&
                sw_branch_eval(&gr, b, gt.z, SW_BANK_NONE, &err) == SW_OK) {
                double complex vt = sw_func_value(c->f, &gt);
                if (curve) {
                    double complex fib[64];
                    size_t n = sw_func_sheet_values(fib, 64, c->f, &gr);
                    size_t best = 0;
                    for (size_t i = 1; i < n; i++)
                        if (cabs(fib[i] - vt) < cabs(fib[best] - vt))
                            best = i;
                    /* regular sheets are named by the start fiber's labels */
                    json_object_set_new(o, "regular_sheet", json_integer((json_int_t)best + 1));
                    snprintf(after, sizeof after, "regular sheet %zu", best + 1);
                } else {
                    double complex q = vt / sw_func_value(c->f, &gr);
                    char qb[64];
                    json_object_set_new(o, "relative", json_cplx(q));
                    snprintf(after, sizeof after, "%s x regular", cfmt(qb, sizeof qb, q));
                }
            }
        }
        json_array_append_new(a, o);
        if (print) {
            char zb[64];
            printf("  %-10.6f %-28s %-5zu %-7zu %-14s %s\n", x[k].t, cfmt(zb, sizeof zb, x[k].z),
                   pc->cut + 1, pc->seg + 1, x[k].direction > 0 ? "right-to-left" :
                   "left-to-right", after);
        }
    }
cleanup:
    free(x);
    sw_branch_free(b);
    sw_cuts_clear(&cuts);
    sw_germ_clear(&gt);
    sw_germ_clear(&gr);
    return a;
}

/* The loop as a word in the generators of the default cut system. */
static json_t *word(const run *r, int print)
{
    json_t *o = json_object();
    sw_cuts cuts;
    sw_cuts_init(&cuts);
    sw_error err;
    sw_crossing *x = NULL;
    size_t nx = 0;
    if (!r->have_pts || sw_cuts_default(&cuts, r->pts, &err) != SW_OK ||
        sw_cuts_crossings(&x, &nx, &cuts, &r->c.p, &err) != SW_OK) {
        json_object_set_new(o, "word", json_null());
        goto cleanup;
    }
    /* generator k <-> the k-th branch point (in the order of 'points') */
    size_t *gen_of = calloc(r->pts->n ? r->pts->n : 1, sizeof *gen_of);
    json_t *gens = json_array();
    size_t g = 0;
    for (size_t k = 0; gen_of && k < r->pts->n; k++)
        if (r->pts->pt[k].kind == SW_POINT_BRANCH)
            gen_of[k] = ++g;
    for (size_t k = 0; k < cuts.n; k++) {
        json_t *e = json_object();
        char name[32];
        snprintf(name, sizeof name, "g%zu", gen_of ? gen_of[cuts.branch_of[k]] : k + 1);
        json_object_set_new(e, "name", json_string(name));
        json_object_set_new(e, "z", json_cplx(cuts.piece[k].from));
        json_object_set_new(e, "ray_direction", json_cplx(cuts.piece[k].dir));
        json_array_append_new(gens, e);
    }
    char w[1024] = "";
    size_t used = 0;
    for (size_t k = 0; k < nx && used < sizeof w - 32; k++) {
        size_t cut = cuts.piece[x[k].piece].cut;
        size_t gi = gen_of ? gen_of[cuts.branch_of[cut]] : cut + 1;
        used += (size_t)snprintf(w + used, sizeof w - used, "%sg%zu%s", used ? " " : "", gi,
                                 x[k].direction > 0 ? "" : "^-1");
    }
    free(gen_of);
    json_object_set_new(o, "word", json_string(nx ? w : "1"));
    json_object_set_new(o, "generators", gens);
    if (print) {
        printf("\nas a word in the generators of the default cut system: %s\n", nx ? w : "1 "
               "(crosses no default cut)");
        for (size_t k = 0; k < cuts.n; k++) {
            char zb[64], db[64];
            printf("  %s: a counter-clockwise turn around %s (ray towards %s)\n",
                   json_string_value(json_object_get(json_array_get(gens, k), "name")),
                   cfmt(zb, sizeof zb, cuts.piece[k].from),
                   cfmt(db, sizeof db, cuts.piece[k].dir));
        }
    }
cleanup:
    free(x);
    sw_cuts_clear(&cuts);
    return o;
}

static void certification_line(const run *r)
{
    if (!r->c.certify)
        printf("\nuncertified: steps accepted by numerical tests in double precision (use "
               "--certify for proven steps)\n");
    else if (r->tr.certified)
        printf("\ncertified: every step proven in ball arithmetic (the branch followed is "
               "proven; values are double precision)\n");
    else
        printf("\nNOT certified: some steps could not be proven in ball arithmetic; the "
               "result is numerical only\n");
}

static void path_header(const run *r)
{
    const sw_path *p = &r->c.p;
    printf("function: %s (%s)\n", sw_func_text(r->c.f),
           sw_func_kind_of(r->c.f) == SW_FUNC_EXPR ? "expression" : "curve");
    if (p->name)
        printf("path:     %s\n", p->name);
    if (p->note)
        printf("note:     %s\n", p->note);
    printf("path:     %zu vertices, length %.6g; %zu steps accepted, %zu refused\n", p->n,
           sw_path_length(p), r->tr.steps, r->tr.rejected);
}

static json_t *common_doc(const run *r)
{
    json_t *d = cli_doc(&r->c);
    const sw_path *p = &r->c.p;
    json_t *pj = json_object();
    if (p->name)
        json_object_set_new(pj, "name", json_string(p->name));
    if (p->note)
        json_object_set_new(pj, "note", json_string(p->note));
    json_object_set_new(pj, "vertices", json_integer((json_int_t)p->n));
    json_object_set_new(pj, "length", json_real(sw_path_length(p)));
    json_object_set_new(d, "path", pj);
    const sw_germ *g0 = &r->tr.vert[0], *g1 = &r->tr.vert[r->tr.nvert - 1];
    json_object_set_new(d, "start", zw(p->z[0], sw_func_value(r->c.f, g0), p->bank[0]));
    json_object_set_new(d, "end", zw(p->z[p->n - 1], sw_func_value(r->c.f, g1),
                                     p->bank[p->n - 1]));
    json_object_set_new(d, "steps", json_integer((json_int_t)r->tr.steps));
    json_object_set_new(d, "rejected", json_integer((json_int_t)r->tr.rejected));
    return d;
}

static int finish(const run *r)
{
    /* a value that double precision cannot hold (or a pole of a single-valued
       part at a vertex) is printed as null: say so, and flag the result */
    for (size_t k = 0; k < r->tr.nvert; k++) {
        double complex w = sw_func_value(r->c.f, &r->tr.vert[k]);
        if (!isfinite(creal(w)) || !isfinite(cimag(w))) {
            sw_error e;
            sw_error_set(&e, SW_ETOLERANCE,
                         "the value at vertex %zu is not a finite double (beyond double range, "
                         "or a pole there); it is reported as null", k + 1);
            return cli_fail(&r->c, &e);
        }
    }
    return (r->c.certify && !r->tr.certified) ? 1 : 0;
}

int cmd_trace(int argc, char **argv)
{
    run r;
    cli_init(&r.c, "trace", OPT_FUNC | OPT_PATH | OPT_START | OPT_CERTIFY | OPT_JSON | OPT_CUT);
    int rc = run_track(&r, argc, argv, trace_help, 0);
    if (rc < 0) {
        const sw_path *p = &r.c.p;
        char b1[64], b2[64], br[256];
        json_t *d = r.c.json ? common_doc(&r) : NULL;
        json_t *verts = json_array();
        if (!r.c.json) {
            path_header(&r);
            printf("\n  %-6s %-30s %-34s %s\n", "vertex", "z", "w",
                   sw_func_kind_of(r.c.f) == SW_FUNC_EXPR ? "branch of each root/power/log"
                                                          : "sheet");
        }
        for (size_t k = 0; k < r.tr.nvert; k++) {
            double complex w = sw_func_value(r.c.f, &r.tr.vert[k]);
            json_t *o = zw(p->z[k], w, p->bank[k]);
            branch_info(br, sizeof br, o, r.c.f, &r.tr.vert[k]);
            json_array_append_new(verts, o);
            if (!r.c.json) {
                char zb[80];
                snprintf(zb, sizeof zb, "%s%s", cfmt(b1, sizeof b1, p->z[k]),
                         p->bank[k] > 0 ? " +i0" : p->bank[k] < 0 ? " -i0" : "");
                printf("  %-6zu %-30s %-34s %s\n", k + 1, zb, cfmt(b2, sizeof b2, w), br);
            }
        }
        json_t *wd = winding(&r, !r.c.json);
        json_t *cx = crossings(&r, !r.c.json);
        if (r.c.json) {
            if (r.c.ncuts)
                json_object_set_new(d, "crossings", cx);
            else
                json_decref(cx);
            json_object_set_new(d, "vertices", verts);
            json_object_set_new(d, "winding", wd);
            json_object_set_new(d, "winding_complete", json_boolean(r.have_pts &&
                                                                    r.pts->complete));
            json_object_set_new(d, "certified", json_boolean(r.c.certify && r.tr.certified));
            cli_emit(d);
        } else {
            json_decref(verts);
            json_decref(wd);
            json_decref(cx);
            if (!r.have_pts)
                printf("\n(turns not reported: %s)\n", r.pts_err.msg);
            else if (!r.pts->complete)
                printf("\n(turns listed only for the branch points found: %s)\n",
                       r.pts->incomplete);
            certification_line(&r);
        }
        rc = finish(&r);
    }
    run_clear(&r);
    return rc;
}

int cmd_loop(int argc, char **argv)
{
    run r;
    cli_init(&r.c, "loop", OPT_FUNC | OPT_PATH | OPT_START | OPT_CERTIFY | OPT_JSON | OPT_CUT);
    int rc = run_track(&r, argc, argv, loop_help, 1);
    if (rc < 0) {
        const sw_func *f = r.c.f;
        const sw_germ *g0 = &r.tr.vert[0], *g1 = &r.tr.vert[r.tr.nvert - 1];
        double complex w0 = sw_func_value(f, g0), w1 = sw_func_value(f, g1);
        json_t *d = r.c.json ? common_doc(&r) : NULL;
        if (d) {
            /* the loop contract: "start" and "end" are the values themselves */
            json_object_set_new(d, "start", json_cplx(w0));
            json_object_set_new(d, "end", json_cplx(w1));
        }
        char b1[64], b2[64];
        int perm_rc = -1;
        if (!r.c.json) {
            path_header(&r);
            printf("\n  start value  %s\n  end value    %s\n", cfmt(b1, sizeof b1, w0),
                   cfmt(b2, sizeof b2, w1));
        }
        if (sw_func_kind_of(f) == SW_FUNC_EXPR) {
            double complex ratio = w1 / w0, diff = w1 - w0;
            long t0[64], t1[64];
            size_t m = sw_func_node_branches(t0, 64, f, g0);
            sw_func_node_branches(t1, 64, f, g1);
            json_t *turns = json_array();
            for (size_t k = 0; k < m; k++)
                json_array_append_new(turns, json_integer(t1[k] - t0[k]));
            if (r.c.json) {
                json_object_set_new(d, "ratio", json_cplx(ratio));
                json_object_set_new(d, "difference", json_cplx(diff));
                json_object_set_new(d, "node_turns", turns);
            } else {
                printf("  ratio        %s   (end / start)\n  difference   %s   (end - start)\n",
                       cfmt(b1, sizeof b1, ratio), cfmt(b2, sizeof b2, diff));
                const sw_expr *e = sw_func_expr(f);
                if (m)
                    printf("\n  %-34s %s\n", "root / power / log", "turns of its operand");
                for (size_t k = 0; k < m; k++) {
                    char txt[128];
                    printf("  %-34s %ld\n", sw_expr_mv_text(txt, sizeof txt, e, k),
                           t1[k] - t0[k]);
                }
                json_decref(turns);
            }
        } else {
            size_t n = sw_func_degree(f);
            int *perm = calloc(n ? n : 1, sizeof *perm);
            int *p0 = calloc(n ? n : 1, sizeof *p0), *p1 = calloc(n ? n : 1, sizeof *p1);
            double complex *fib = calloc(n ? n : 1, sizeof *fib);
            sw_germ b;
            sw_error err;
            /* the fiber over the base in label order */
            if (perm && p0 && p1 && fib && sw_germ_init(&b, f) == SW_OK) {
                /* labels of the tracked fiber at the start (p0) and at the end
                   (p1) in the labelled fiber b; sheet p0[j] goes to p1[j] */
                if (sw_func_germ_at(&b, f, r.c.p.z[0], r.c.p.bank[0], NULL, &err) == SW_OK &&
                    sw_fiber_permutation(p0, f, &b, g0, &err) == SW_OK &&
                    sw_fiber_permutation(p1, f, &b, g1, &err) == SW_OK) {
                    for (size_t j = 0; j < n; j++)
                        perm[p0[j]] = p1[j];
                    sw_func_sheet_values(fib, n, f, &b);
                    json_t *sh = json_array(), *pm = json_array();
                    for (size_t i = 0; i < n; i++) {
                        json_array_append_new(sh, json_cplx(fib[i]));
                        json_array_append_new(pm, json_integer(perm[i] + 1));
                    }
                    if (r.c.json) {
                        json_object_set_new(d, "base", json_cplx(r.c.p.z[0]));
                        json_object_set_new(d, "sheets", sh);
                        json_object_set_new(d, "permutation", pm);
                    } else {
                        printf("\n  base point %s\n  %-6s %-34s %s\n", cfmt(b1, sizeof b1,
                               r.c.p.z[0]), "sheet", "value at the base", "ends on sheet");
                        for (size_t i = 0; i < n; i++)
                            printf("  %-6zu %-34s %d\n", i + 1, cfmt(b2, sizeof b2, fib[i]),
                                   perm[i] + 1);
                        json_decref(sh);
                        json_decref(pm);
                    }
                } else {
                    perm_rc = cli_fail(&r.c, &err);
                }
                sw_germ_clear(&b);
            }
            free(perm);
            free(p0);
            free(p1);
            free(fib);
        }
        if (perm_rc >= 0) {
            json_decref(d);
            rc = perm_rc;
        } else {
            json_t *wd = winding(&r, !r.c.json);
            json_t *cx = crossings(&r, !r.c.json);
            json_t *wo = word(&r, !r.c.json);
            if (r.c.json) {
                if (r.c.ncuts)
                    json_object_set_new(d, "crossings", cx);
                else
                    json_decref(cx);
                json_object_update(d, wo);
                json_decref(wo);
                json_object_set_new(d, "winding", wd);
                json_object_set_new(d, "certified", json_boolean(r.c.certify && r.tr.certified));
                cli_emit(d);
            } else {
                json_decref(wd);
                json_decref(cx);
                json_decref(wo);
                certification_line(&r);
            }
            rc = finish(&r);
        }
    }
    run_clear(&r);
    return rc;
}
