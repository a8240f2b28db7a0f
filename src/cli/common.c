/* Shared option parsing and output helpers of the command-line front end. */
#include <getopt.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"

/* ------------------------------------------------------------ batch cache */

typedef struct cache_entry {
    char *key;
    sw_func *f;
    sw_points pts;
    int have_pts;
} cache_entry;

struct cli_batch_ctx {
    size_t n, alloc;
    cache_entry *e;
    json_t *doc;
    char err[SW_ERROR_MSG_MAX + 128];
    int have_err;
};

cli_batch_ctx *cli_batch = NULL;

/* Functions kept at most; beyond it the oldest is dropped. */
#define CACHE_MAX 64

cli_batch_ctx *cli_batch_new(void) { return calloc(1, sizeof(cli_batch_ctx)); }

void cli_batch_free(cli_batch_ctx *b)
{
    if (b == NULL)
        return;
    for (size_t k = 0; k < b->n; k++) {
        free(b->e[k].key);
        sw_func_free(b->e[k].f);
        sw_points_clear(&b->e[k].pts);
    }
    free(b->e);
    json_decref(b->doc);
    free(b);
}

json_t *cli_batch_take_doc(cli_batch_ctx *b)
{
    json_t *d = b->doc;
    b->doc = NULL;
    return d;
}

const char *cli_batch_error(const cli_batch_ctx *b) { return b->have_err ? b->err : NULL; }

void cli_batch_reset(cli_batch_ctx *b)
{
    json_decref(b->doc);
    b->doc = NULL;
    b->have_err = 0;
    b->err[0] = '\0';
}

static char *cache_key(const cli *c)
{
    size_t n = 64 + strlen(c->function ? c->function : c->curve);
    for (size_t k = 0; k < c->params.n; k++)
        n += strlen(c->params.names[k]) + 64;
    char *key = malloc(n);
    if (key == NULL)
        return NULL;
    size_t used = (size_t)snprintf(key, n, "%c:%s", c->function ? 'f' : 'c',
                                   c->function ? c->function : c->curve);
    for (size_t k = 0; k < c->params.n && used < n; k++)
        used += (size_t)snprintf(key + used, n - used, "|%s=%a,%a", c->params.names[k],
                                 creal(c->params.values[k]), cimag(c->params.values[k]));
    return key;
}

static cache_entry *cache_find(const cli *c)
{
    if (cli_batch == NULL || c->f == NULL)
        return NULL;
    for (size_t k = 0; k < cli_batch->n; k++)
        if (cli_batch->e[k].f == c->f)
            return &cli_batch->e[k];
    return NULL;
}

void cli_init(cli *c, const char *cmd, unsigned accepted)
{
    memset(c, 0, sizeof *c);
    c->cmd = cmd;
    c->accepted = accepted;
    sw_params_init(&c->params);
    sw_path_init(&c->p);
    sw_points_init(&c->pts_store);
}

void cli_clear(cli *c)
{
    sw_params_clear(&c->params);
    sw_path_clear(&c->p);
    sw_points_clear(&c->pts_store);
    if (!c->f_borrowed)
        sw_func_free(c->f);
    c->f = NULL;
}

sw_status cli_get_points(cli *c, const sw_points **pts, int certify, sw_error *err)
{
    sw_points_opts o;
    sw_points_opts_init(&o);
    o.certify = certify;
    cache_entry *e = certify ? NULL : cache_find(c);
    if (e != NULL) {
        if (!e->have_pts) {
            sw_status st = sw_points_compute(&e->pts, c->f, &o, err);
            if (st != SW_OK)
                return st;
            e->have_pts = 1;
        }
        *pts = &e->pts;
        return SW_OK;
    }
    sw_points_clear(&c->pts_store);
    sw_status st = sw_points_compute(&c->pts_store, c->f, &o, err);
    if (st == SW_OK)
        *pts = &c->pts_store;
    return st;
}

int cli_fail(const cli *c, const sw_error *err)
{
    const char *msg = err->msg[0] ? err->msg : sw_status_name(err->code);
    if (cli_batch) {
        snprintf(cli_batch->err, sizeof cli_batch->err, "%s: %s", c->cmd, msg);
        cli_batch->have_err = 1;
    } else {
        fprintf(stderr, "sheetwalk: %s: %s\n", c->cmd, msg);
    }
    return sw_status_exit_code(err->code);
}

int cli_usage(const cli *c, const char *fmt, ...)
{
    va_list ap;
    char msg[SW_ERROR_MSG_MAX];
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    if (cli_batch) {
        snprintf(cli_batch->err, sizeof cli_batch->err, "%s: %s", c->cmd, msg);
        cli_batch->have_err = 1;
    } else {
        fprintf(stderr, "sheetwalk: %s: %s (see 'sheetwalk %s --help')\n", c->cmd, msg, c->cmd);
    }
    return 2;
}

enum {
    LO_SET = 1000, LO_START, LO_AT, LO_CUT, LO_FIX, LO_EVAL, LO_CERTIFY, LO_JSON, LO_GRAPH,
    LO_BASE, LO_POINT, LO_VALUE, LO_INTEGRAND, LO_BANK, LO_SAMPLES, LO_TOLERANCE,
    LO_PICTURE, LO_VIEW, LO_PIXELS
};

static const struct option long_opts[] = {
    {"function", required_argument, NULL, 'f'}, {"curve", required_argument, NULL, 'c'},
    {"set", required_argument, NULL, LO_SET},   {"path", required_argument, NULL, 'p'},
    {"start", required_argument, NULL, LO_START}, {"at", required_argument, NULL, LO_AT},
    {"cut", required_argument, NULL, LO_CUT},   {"fix", required_argument, NULL, LO_FIX},
    {"eval", required_argument, NULL, LO_EVAL}, {"certify", no_argument, NULL, LO_CERTIFY},
    {"json", no_argument, NULL, LO_JSON},       {"graph", required_argument, NULL, LO_GRAPH},
    {"base", required_argument, NULL, LO_BASE}, {"point", required_argument, NULL, LO_POINT},
    {"value", required_argument, NULL, LO_VALUE},
    {"integrand", required_argument, NULL, LO_INTEGRAND},
    {"bank", required_argument, NULL, LO_BANK}, {"samples", required_argument, NULL, LO_SAMPLES},
    {"tolerance", required_argument, NULL, LO_TOLERANCE},
    {"output", required_argument, NULL, 'o'},   {"help", no_argument, NULL, 'h'},
    {"picture", required_argument, NULL, LO_PICTURE}, {"view", required_argument, NULL, LO_VIEW},
    {"pixels", required_argument, NULL, LO_PIXELS},
    {NULL, 0, NULL, 0}};

static int needs(cli *c, unsigned bit, const char *name)
{
    if (c->accepted & bit)
        return 1;
    cli_usage(c, "option %s is not used by this command", name);
    return 0;
}

static int once(cli *c, const char **slot, const char *val, const char *name)
{
    if (*slot != NULL) {
        cli_usage(c, "option %s given twice", name);
        return 0;
    }
    *slot = val;
    return 1;
}

int cli_parse(cli *c, int argc, char **argv, const char *help)
{
    opterr = 0;
    optind = 0; /* GNU getopt: full re-initialisation (batch mode parses many times) */
    for (;;) {
        int lidx = -1;
        int ch = getopt_long(argc, argv, "+f:c:p:o:h", long_opts, &lidx);
        if (ch == -1)
            break;
        int ok = 1;
        switch (ch) {
        case 'h':
            fputs(help, stdout);
            return 0;
        case 'f':
            ok = needs(c, OPT_FUNC, "--function") && once(c, &c->function, optarg, "--function");
            break;
        case 'c':
            ok = needs(c, OPT_FUNC, "--curve") && once(c, &c->curve, optarg, "--curve");
            break;
        case LO_SET: {
            if (!needs(c, OPT_FUNC, "--set"))
                return 2;
            sw_error err;
            if (sw_params_assign(&c->params, optarg, &err) != SW_OK)
                return cli_usage(c, "--set %s: %s", optarg, err.msg);
            break;
        }
        case 'p': ok = needs(c, OPT_PATH, "--path") && once(c, &c->path, optarg, "--path"); break;
        case LO_START:
            ok = needs(c, OPT_START, "--start") && once(c, &c->start, optarg, "--start");
            break;
        case LO_AT: ok = needs(c, OPT_START, "--at") && once(c, &c->at, optarg, "--at"); break;
        case LO_CUT:
            if (!needs(c, OPT_CUT, "--cut"))
                return 2;
            if (c->ncuts == CLI_MAX_LIST)
                return cli_usage(c, "too many --cut options (limit %d)", CLI_MAX_LIST);
            c->cuts[c->ncuts++] = optarg;
            break;
        case LO_FIX: ok = needs(c, OPT_FIX, "--fix") && once(c, &c->fix, optarg, "--fix"); break;
        case LO_EVAL:
            if (!needs(c, OPT_FIX, "--eval"))
                return 2;
            if (c->nevals == CLI_MAX_LIST)
                return cli_usage(c, "too many --eval options (limit %d)", CLI_MAX_LIST);
            c->evals[c->nevals++] = optarg;
            break;
        case LO_CERTIFY: ok = needs(c, OPT_CERTIFY, "--certify"); c->certify = 1; break;
        case LO_JSON: ok = needs(c, OPT_JSON, "--json"); c->json = 1; break;
        case LO_GRAPH: ok = needs(c, OPT_GRAPH, "--graph") && once(c, &c->graph, optarg, "--graph"); break;
        case LO_BASE: ok = needs(c, OPT_WHICH, "--base") && once(c, &c->base, optarg, "--base"); break;
        case LO_POINT: ok = needs(c, OPT_WHICH, "--point") && once(c, &c->point, optarg, "--point"); break;
        case LO_VALUE: ok = needs(c, OPT_WHICH, "--value") && once(c, &c->value, optarg, "--value"); break;
        case LO_INTEGRAND:
            ok = needs(c, OPT_INTEGRAND, "--integrand") &&
                 once(c, &c->integrand, optarg, "--integrand");
            break;
        case LO_BANK: ok = needs(c, OPT_INTEGRAND, "--bank") && once(c, &c->bank, optarg, "--bank"); break;
        case LO_SAMPLES:
            ok = needs(c, OPT_SAMPLES, "--samples") && once(c, &c->samples, optarg, "--samples");
            break;
        case LO_TOLERANCE:
            ok = needs(c, OPT_SAMPLES, "--tolerance") &&
                 once(c, &c->tolerance, optarg, "--tolerance");
            break;
        case 'o': ok = needs(c, OPT_OUTPUT, "--output") && once(c, &c->output, optarg, "--output"); break;
        case LO_PICTURE:
            ok = needs(c, OPT_PLOT, "--picture") && once(c, &c->picture, optarg, "--picture");
            break;
        case LO_VIEW: ok = needs(c, OPT_PLOT, "--view") && once(c, &c->view, optarg, "--view"); break;
        case LO_PIXELS:
            ok = needs(c, OPT_PLOT, "--pixels") && once(c, &c->pixels, optarg, "--pixels");
            break;
        case ':':
            return cli_usage(c, "option %s needs a value", argv[optind - 1]);
        case '?':
        default:
            if (optopt && optopt < 256 && optopt != '?')
                return cli_usage(c, "option -%c needs a value or is unknown", optopt);
            return cli_usage(c, "unknown option '%s'", argv[optind - 1]);
        }
        if (!ok)
            return 2;
    }
    if (optind < argc)
        return cli_usage(c, "unexpected argument '%s'", argv[optind]);
    return -1;
}

int cli_load(cli *c, int need_path, sw_error *err)
{
    sw_status st;
    if (c->function && c->curve)
        return cli_usage(c, "give either -f EXPR or -c POLY, not both");
    if (!c->function && !c->curve)
        return cli_usage(c, "no function: give -f EXPR (an expression in z) or -c POLY (a "
                            "curve P(z, w) = 0)");
    char *key = cli_batch ? cache_key(c) : NULL;
    for (size_t k = 0; key && k < cli_batch->n; k++)
        if (strcmp(cli_batch->e[k].key, key) == 0) {
            c->f = cli_batch->e[k].f;
            c->f_borrowed = 1;
            break;
        }
    if (c->f)
        st = SW_OK;
    else if (c->function)
        st = sw_func_from_expr(&c->f, c->function, &c->params, err);
    else
        st = sw_func_from_curve(&c->f, c->curve, &c->params, err);
    if (st == SW_OK && key && !c->f_borrowed) {
        /* keep it for the next queries */
        if (cli_batch->n == CACHE_MAX) {
            free(cli_batch->e[0].key);
            sw_func_free(cli_batch->e[0].f);
            sw_points_clear(&cli_batch->e[0].pts);
            memmove(cli_batch->e, cli_batch->e + 1, (CACHE_MAX - 1) * sizeof *cli_batch->e);
            cli_batch->n--;
        }
        if (cli_batch->n == cli_batch->alloc) {
            size_t na = cli_batch->alloc ? 2 * cli_batch->alloc : 8;
            cache_entry *ne = realloc(cli_batch->e, na * sizeof *ne);
            if (ne) {
                cli_batch->e = ne;
                cli_batch->alloc = na;
            }
        }
        if (cli_batch->n < cli_batch->alloc) {
            cache_entry *e = &cli_batch->e[cli_batch->n++];
            e->key = key;
            key = NULL;
            e->f = c->f;
            sw_points_init(&e->pts);
            e->have_pts = 0;
            c->f_borrowed = 1;
        }
    }
    free(key);
    if (st != SW_OK) {
        sw_error_prefix(err, "%s '%.200s'", c->function ? "expression" : "curve",
                        c->function ? c->function : c->curve);
        return cli_fail(c, err);
    }
    if (need_path) {
        if (!c->path)
            return cli_usage(c, "no path: give -p PATH (a path file or inline vertices such as "
                                "\"1; 1i; -1\")");
        if (sw_path_load(&c->p, c->path, &c->params, err) != SW_OK)
            return cli_fail(c, err);
        c->have_path = 1;
    }
    return -1;
}

int cli_start_germ(cli *c, sw_germ *g, const sw_track_opts *o, sw_error *err)
{
    if (c->start && c->at)
        return cli_usage(c, "give either --start W or --at Z=W, not both");
    double complex w;
    size_t vertex = 0;
    const double complex *hint = NULL;
    if (c->start) {
        if (sw_const_parse(&w, NULL, c->start, &c->params, err) != SW_OK) {
            sw_error_prefix(err, "--start");
            return cli_fail(c, err);
        }
        hint = &w;
    } else if (c->at) {
        const char *eq = strchr(c->at, '=');
        if (eq == NULL)
            return cli_usage(c, "--at needs Z=W, got '%s'", c->at);
        char zt[256];
        size_t n = (size_t)(eq - c->at);
        if (n >= sizeof zt)
            return cli_usage(c, "--at: point too long");
        memcpy(zt, c->at, n);
        zt[n] = '\0';
        double complex z;
        int bank;
        if (sw_const_parse(&z, &bank, zt, &c->params, err) != SW_OK ||
            sw_const_parse(&w, NULL, eq + 1, &c->params, err) != SW_OK) {
            sw_error_prefix(err, "--at");
            return cli_fail(c, err);
        }
        size_t k;
        double scale = sw_path_scale(&c->p);
        for (k = 0; k < c->p.n; k++)
            if (cabs(c->p.z[k] - z) <= 1e-12 * scale)
                break;
        if (k == c->p.n)
            return cli_usage(c, "--at %s: the point is not a vertex of the path", c->at);
        vertex = k;
        hint = &w;
    }
    if (sw_track_start_germ(g, c->f, &c->p, vertex, hint, o, err) != SW_OK) {
        if (c->start)
            sw_error_prefix(err, "--start %s", c->start);
        else if (c->at)
            sw_error_prefix(err, "--at %s", c->at);
        return cli_fail(c, err);
    }
    return -1;
}

/* ------------------------------------------------------------ output */

json_t *json_cplx(double complex z)
{
    json_t *a = json_array();
    double re = creal(z), im = cimag(z);
    json_array_append_new(a, isfinite(re) ? json_real(re + 0.0) : json_null());
    json_array_append_new(a, isfinite(im) ? json_real(im + 0.0) : json_null());
    return a;
}

json_t *cli_doc(const cli *c)
{
    json_t *d = json_object();
    json_object_set_new(d, "command", json_string(c->cmd));
    json_object_set_new(d, "format", json_integer(1));
    if (c->f) {
        json_t *fn = json_object();
        json_object_set_new(fn, "kind", json_string(sw_func_kind_of(c->f) == SW_FUNC_EXPR ?
                                                    "expression" : "curve"));
        json_object_set_new(fn, "text", json_string(sw_func_text(c->f)));
        json_object_set_new(d, "function", fn);
    }
    return d;
}

void cli_emit(json_t *doc)
{
    if (cli_batch) {
        json_decref(cli_batch->doc);
        cli_batch->doc = doc;
        return;
    }
    char *s = json_dumps(doc, JSON_REAL_PRECISION(17) | JSON_PRESERVE_ORDER);
    if (s) {
        fputs(s, stdout);
        fputc('\n', stdout);
        free(s);
    }
    json_decref(doc);
}

const char *cfmt(char *buf, size_t n, double complex z)
{
    double re = creal(z), im = cimag(z);
    /* tables show 12 digits: a component below 1e-14 of the modulus is
       rounding noise at that precision (JSON keeps the raw values) */
    double mod = cabs(z);
    if (fabs(re) < 1e-14 * mod)
        re = 0;
    if (fabs(im) < 1e-14 * mod)
        im = 0;
    if (im == 0)
        snprintf(buf, n, "%.12g", re + 0.0);
    else if (re == 0)
        snprintf(buf, n, "%.12gi", im);
    else
        snprintf(buf, n, "%.12g%+.12gi", re, im);
    return buf;
}

static json_t *cycles_json(const int *perm, size_t n)
{
    json_t *cyc = json_array();
    char *seen = calloc(n ? n : 1, 1);
    for (size_t i = 0; seen && i < n; i++) {
        if (seen[i])
            continue;
        json_t *c = json_array();
        for (size_t j = i; !seen[j]; j = (size_t)perm[j]) {
            seen[j] = 1;
            json_array_append_new(c, json_integer((json_int_t)j + 1));
        }
        json_array_append_new(cyc, c);
    }
    free(seen);
    return cyc;
}

static json_t *point_json(const sw_point *pt, const sw_func *f)
{
    json_t *o = json_object();
    if (!pt->at_infinity) {
        json_object_set_new(o, "z", json_cplx(pt->z));
        json_object_set_new(o, "enclosure_radius", json_real(pt->radius));
    }
    if (sw_func_kind_of(f) == SW_FUNC_EXPR) {
        if (pt->kind == SW_POINT_BRANCH) {
            if (pt->is_multiplier)
                json_object_set_new(o, "multiplier", json_cplx(pt->ratio));
            else if (pt->is_shift)
                json_object_set_new(o, "shift", json_cplx(pt->difference));
        }
        json_object_set_new(o, "ratio", json_cplx(pt->ratio));
        json_object_set_new(o, "difference", json_cplx(pt->difference));
        json_t *t = json_array();
        for (size_t m = 0; m < pt->nmv && pt->node_turns; m++)
            json_array_append_new(t, json_integer(pt->node_turns[m]));
        json_object_set_new(o, "node_turns", t);
    } else if (pt->perm) {
        json_object_set_new(o, "cycles", cycles_json(pt->perm, pt->n));
        json_t *pm = json_array();
        for (size_t i = 0; i < pt->n; i++)
            json_array_append_new(pm, json_integer(pt->perm[i] + 1));
        json_object_set_new(o, "permutation", pm);
    }
    if (pt->other_sheets)
        json_object_set_new(o, "other_sheets", json_true());
    json_object_set_new(o, "certified", json_boolean(pt->certified));
    return o;
}

json_t *cli_points_json(const sw_points *pts, const sw_func *f)
{
    json_t *o = json_object();
    json_t *bp = json_array(), *reg = json_array(), *poles = json_array();
    for (size_t k = 0; k < pts->n; k++) {
        const sw_point *pt = &pts->pt[k];
        json_array_append_new(pt->kind == SW_POINT_BRANCH ? bp
                              : pt->kind == SW_POINT_POLE ? poles : reg,
                              point_json(pt, f));
    }
    json_object_set_new(o, "branch_points", bp);
    json_object_set_new(o, "regular_points", reg);
    json_object_set_new(o, "poles", poles);
    json_t *inf = point_json(&pts->infinity, f);
    json_object_set_new(inf, "branched", pts->complete ? json_boolean(pts->infinity.kind ==
                                                                      SW_POINT_BRANCH)
                                                       : json_null());
    if (sw_func_kind_of(f) == SW_FUNC_EXPR && pts->complete)
        json_object_set_new(inf, "leading_exponent", pts->inf_exponent_ok
                                                         ? json_real(pts->inf_exponent)
                                                         : json_null());
    json_object_set_new(o, "infinity", inf);
    json_object_set_new(o, "complete", json_boolean(pts->complete));
    if (!pts->complete)
        json_object_set_new(o, "note", json_string(pts->incomplete));
    if (pts->nsheets) {
        json_object_set_new(o, "base", json_cplx(pts->base));
        json_t *bf = json_array();
        for (size_t i = 0; i < pts->nsheets && pts->base_fiber; i++)
            json_array_append_new(bf, json_cplx(pts->base_fiber[i]));
        json_object_set_new(o, "base_sheets", bf);
        json_object_set_new(o, "product_relation", json_boolean(pts->product_ok));
    }
    return o;
}

static void cycles_text(char *buf, size_t n, const int *perm, size_t len)
{
    size_t used = 0;
    buf[0] = '\0';
    char *seen = calloc(len ? len : 1, 1);
    for (size_t i = 0; seen && i < len && used < n; i++) {
        if (seen[i])
            continue;
        used += (size_t)snprintf(buf + used, n - used, "(");
        for (size_t j = i; !seen[j] && used < n; j = (size_t)perm[j]) {
            seen[j] = 1;
            used += (size_t)snprintf(buf + used, n - used, "%s%zu", j == i ? "" : " ", j + 1);
        }
        if (used < n)
            used += (size_t)snprintf(buf + used, n - used, ")");
    }
    free(seen);
}

static void point_row(FILE *fp, const char *where, const sw_point *pt, const sw_func *f)
{
    char a[64], b[64], cyc[512];
    const char *kind = pt->kind == SW_POINT_BRANCH ? "branch point"
                       : pt->kind == SW_POINT_POLE ? "pole"
                       : pt->other_sheets ? "other sheets" : "not branched";
    if (sw_func_kind_of(f) == SW_FUNC_EXPR) {
        const char *what = "";
        if (pt->kind == SW_POINT_BRANCH) {
            if (pt->is_multiplier)
                snprintf(b, sizeof b, "multiplier %s", cfmt(a, sizeof a, pt->ratio)), what = b;
            else if (pt->is_shift)
                snprintf(b, sizeof b, "shift %s", cfmt(a, sizeof a, pt->difference)), what = b;
            else
                snprintf(b, sizeof b, "ratio %s (not a pure factor)",
                         cfmt(a, sizeof a, pt->ratio)), what = b;
        }
        fprintf(fp, "  %-34s %-13s %s\n", where, kind, what);
    } else {
        cyc[0] = '\0';
        if (pt->perm)
            cycles_text(cyc, sizeof cyc, pt->perm, pt->n);
        fprintf(fp, "  %-34s %-13s %s\n", where, kind, cyc);
    }
}

void cli_points_table(FILE *fp, const sw_points *pts, const sw_func *f)
{
    char a[64];
    fprintf(fp, "  %-34s %-13s %s\n", "point", "kind",
            sw_func_kind_of(f) == SW_FUNC_EXPR ? "one counter-clockwise turn" : "cycles");
    for (size_t k = 0; k < pts->n; k++)
        point_row(fp, cfmt(a, sizeof a, pts->pt[k].z), &pts->pt[k], f);
    if (pts->complete)
        point_row(fp, "infinity", &pts->infinity, f);
    else
        fprintf(fp, "  %-34s %s\n", "infinity", "not determined");
    if (pts->complete && sw_func_kind_of(f) == SW_FUNC_EXPR && pts->inf_exponent_ok)
        fprintf(fp, "  (at infinity |f| grows like |z|^%.6g: numerical estimate)\n",
                pts->inf_exponent);
    for (size_t k = 0; k < pts->n; k++)
        if (pts->pt[k].other_sheets) {
            fprintf(fp, "(other sheets: not branched for the principal branch, but an operand "
                        "vanishes or has a pole there on another branch of the inner roots)\n");
            break;
        }
    if (!pts->complete)
        fprintf(fp, "note: the list may be incomplete: %s.\n", pts->incomplete);
}

/* ------------------------------------------------------------ cuts */

int cli_load_cuts(cli *c, sw_cuts *cuts, const sw_points *pts, sw_error *err)
{
    if (c->ncuts == 0) {
        if (sw_cuts_default(cuts, pts, err) != SW_OK)
            return cli_fail(c, err);
        return -1;
    }
    for (size_t k = 0; k < c->ncuts; k++) {
        sw_path p;
        sw_path_init(&p);
        sw_status st = sw_path_load(&p, c->cuts[k], &c->params, err);
        if (st == SW_OK)
            st = sw_cuts_add(cuts, &p, err);
        sw_path_clear(&p);
        if (st != SW_OK) {
            sw_error_prefix(err, "--cut %.100s", c->cuts[k]);
            return cli_fail(c, err);
        }
    }
    return -1;
}

int cli_point_value(cli *c, const char *opt, const char *text, double complex *p, int *bank,
                    double complex *w, sw_error *err)
{
    const char *eq = strchr(text, '=');
    if (eq == NULL)
        return cli_usage(c, "%s needs P=W, got '%s'", opt, text);
    char pt[256];
    size_t n = (size_t)(eq - text);
    if (n >= sizeof pt)
        return cli_usage(c, "%s: point too long", opt);
    memcpy(pt, text, n);
    pt[n] = '\0';
    if (sw_const_parse(p, bank, pt, &c->params, err) != SW_OK ||
        sw_const_parse(w, NULL, eq + 1, &c->params, err) != SW_OK) {
        sw_error_prefix(err, "%s %s", opt, text);
        return cli_fail(c, err);
    }
    return -1;
}

double complex cli_default_anchor(const sw_points *pts, const sw_cuts *cuts)
{
    double complex centre = 0;
    size_t n = 0;
    for (size_t k = 0; k < pts->n; k++) {
        centre += pts->pt[k].z;
        n++;
    }
    if (n)
        centre /= (double)n;
    double R = 0;
    for (size_t k = 0; k < pts->n; k++)
        R = fmax(R, cabs(pts->pt[k].z - centre));
    double complex z = centre + CMPLX(0.0, R + 1);
    /* nudge off a cut that happens to pass there */
    for (int k = 0; k < 16 && sw_cuts_distance(cuts, z) < 1e-6 * (R + 1); k++)
        z += 0.1 * (R + 1) * cexp(CMPLX(0.0, 0.7 * k));
    return z;
}

int cli_regular_branch(cli *c, sw_branch **b, const sw_cuts *cuts, const sw_points *pts,
                       sw_error *err)
{
    double complex p, w;
    int bank = SW_BANK_NONE, rc;
    sw_status st;
    if (c->fix) {
        if ((rc = cli_point_value(c, "--fix", c->fix, &p, &bank, &w, err)) >= 0)
            return rc;
        st = sw_branch_new(b, c->f, cuts, p, bank, &w, err);
    } else {
        p = cli_default_anchor(pts, cuts);
        st = sw_branch_new(b, c->f, cuts, p, SW_BANK_NONE, NULL, err);
    }
    if (st != SW_OK) {
        sw_error_prefix(err, "fixing the regular branch");
        return cli_fail(c, err);
    }
    return -1;
}

json_t *cli_cuts_json(const sw_cuts *cuts)
{
    json_t *a = json_array();
    for (size_t k = 0; k < cuts->n; k++) {
        json_t *v = json_array();
        const sw_path *p = &cuts->cut[k];
        size_t nv = p->n;
        for (size_t j = 0; j < nv; j++)
            json_array_append_new(v, json_cplx(p->z[j]));
        if (p->inf_end)
            json_array_append_new(v, json_string("inf"));
        json_array_append_new(a, v);
    }
    return a;
}

json_t *cli_perm_json(const int *perm, size_t n)
{
    json_t *a = json_array();
    for (size_t i = 0; i < n; i++)
        json_array_append_new(a, json_integer(perm[i] + 1));
    return a;
}
