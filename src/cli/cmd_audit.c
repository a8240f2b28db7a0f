/* sheetwalk audit: a principal-branch formula, and a user's sampled values,
 * compared with true continuation along a path. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"

static const char audit_help[] =
    "usage: sheetwalk audit -f EXPR -p PATH [--samples FILE.csv [--tolerance TOL]]\n"
    "                       [--start W | --at Z=W] [--set NAME=VALUE]... [--certify] [--json]\n"
    "       sheetwalk audit -c POLY -p PATH --samples FILE.csv [--tolerance TOL] ...\n\n"
    "Evaluates the formula EXPR as written, with the principal branch at every root,\n"
    "power and logarithm (as C's csqrt, cpow and clog compute them), along PATH and\n"
    "compares it with the true continuation of EXPR from the path's start.  Every\n"
    "place where the principal evaluation jumps is located (to about 1e-14 of the\n"
    "path's scale) and reported with its path parameter t (t = k + s on segment k),\n"
    "the ratio after/before and the difference after-before of the formula's value,\n"
    "and the node of the formula whose operand crosses the negative real axis there.\n"
    "Node jumps that cancel in the whole formula are listed as notes, not as jumps.\n"
    "Bank marks (x+i0) work as everywhere: the formula is evaluated on the marked\n"
    "side, so a path along x+i0 audits the +i0 prescription.\n\n"
    "With --samples, FILE.csv holds your own values: a header line, then lines\n"
    "re_z,im_z,re_w,im_w of points on the path and the values you computed there.\n"
    "Each sample is placed on the path, the function is continued to it, and every\n"
    "sample that is not on the continued branch is reported with the sheet it lies\n"
    "on instead.  This works for curves (-c) too; a curve alone has no formula to\n"
    "audit.  The branch is fixed as in every command (--start/--at; default: the\n"
    "principal branch, or sheet 1 of a curve, at the first vertex).\n\n"
    "The audit is numerical evidence, not a proof (see docs/audit.md).\n\n"
    "  -f, --function EXPR   the formula, an expression in z\n"
    "  -c, --curve POLY      a polynomial P(z, w) (only with --samples)\n"
    "  -p, --path PATH       a path file, or inline vertices separated by ';'\n"
    "      --samples FILE    CSV of sampled values (header, then re_z,im_z,re_w,im_w)\n"
    "      --tolerance TOL   relative tolerance of the sampled values; without it,\n"
    "                        1e-6, raised to ten times the values' median scatter\n"
    "                        around their nearest sheets when that is larger (at\n"
    "                        most 1e-2); sample points may lie max(TOL, 1e-6) times\n"
    "                        the path's scale away from the path\n"
    "      --start W         continue from the sheet nearest W at the first vertex\n"
    "      --at Z=W          continue from the sheet nearest W at the vertex Z\n"
    "      --set NAME=VALUE  give a parameter a value (repeatable)\n"
    "      --certify         prove every continuation step in ball arithmetic\n"
    "      --json            one JSON document on stdout\n\n"
    "Exit codes: 0 done (jumps found or not), 1 --certify not met, 2 usage error,\n"
    "3 bad input (parse error, bad CSV with its line, path through a branch point).\n";

static const char numerical_note[] =
    "numerical evidence, not a proof: every operand is sampled at the tracker's steps, "
    "refined until neighbouring samples pass the ratio test, and each crossing of the "
    "negative real axis is bisected; a crossing that enters and leaves between two such "
    "samples would be missed";

static json_t *zw(double complex z, double complex w)
{
    json_t *o = json_object();
    json_object_set_new(o, "z", json_cplx(z));
    json_object_set_new(o, "w", json_cplx(w));
    return o;
}

static json_t *jump_json(const sw_func *f, const sw_audit_jump *j)
{
    const sw_expr *e = sw_func_expr(f);
    json_t *o = json_object();
    char buf[2048];
    json_object_set_new(o, "z", json_cplx(j->z));
    json_object_set_new(o, "t", json_real(j->t));
    json_object_set_new(o, "ratio", json_cplx(j->ratio));
    json_object_set_new(o, "difference", json_cplx(j->difference));
    json_object_set_new(o, "before", json_cplx(j->before));
    json_object_set_new(o, "after", json_cplx(j->after));
    json_t *br = json_array();
    json_array_append_new(br, json_real(j->t_before));
    json_array_append_new(br, json_real(j->t_after));
    json_object_set_new(o, "bracket", br);
    json_object_set_new(o, "continued", json_cplx(j->continued));
    json_t *rel = json_object();
    json_object_set_new(rel, "before", json_cplx(j->rel_before));
    json_object_set_new(rel, "after", json_cplx(j->rel_after));
    json_object_set_new(o, "principal_over_continued", rel);
    json_object_set_new(o, "at_endpoint", j->endpoint < 0 ? json_string("start")
                                          : j->endpoint > 0 ? json_string("end")
                                                            : json_null());
    json_t *causes = json_array();
    for (size_t q = 0; q < j->ncause; q++) {
        const sw_audit_cause *cz = &j->cause[q];
        json_t *c = json_object();
        sw_expr_mv_text(buf, sizeof buf, e, cz->node);
        json_object_set_new(c, "node", json_string(buf));
        json_object_set_new(c, "node_index", json_integer((json_int_t)cz->node));
        json_object_set_new(c, "operand", json_cplx(cz->operand));
        json_object_set_new(c, "direction", json_string(cz->downward ? "from Im > 0 to Im < 0"
                                                                     : "from Im < 0 to Im > 0"));
        json_object_set_new(c, "carried", json_boolean(cz->carried));
        json_object_set_new(c, "node_before", json_cplx(cz->node_before));
        json_object_set_new(c, "node_after", json_cplx(cz->node_after));
        json_array_append_new(causes, c);
    }
    json_object_set_new(o, "causes", causes);
    json_object_set_new(o, "explanation", json_string(sw_audit_explain(buf, sizeof buf, f, j)));
    return o;
}

static json_t *sheet_json(const sw_func *f, const sw_sample_report *r, const long *branch,
                          int label)
{
    if (sw_func_kind_of(f) == SW_FUNC_CURVE)
        return label > 0 ? json_integer(label) : json_null();
    if (branch == NULL)
        return json_null();
    json_t *a = json_array();
    for (size_t q = 0; q < r->nmv; q++)
        json_array_append_new(a, json_integer(branch[q]));
    return a;
}

static json_t *samples_json(const sw_func *f, const sw_samples *s, const sw_sample_report *r)
{
    json_t *a = json_array();
    char buf[1024];
    for (size_t q = 0; q < r->n; q++) {
        const sw_sample_check *k = &r->c[q];
        json_t *o = json_object();
        json_object_set_new(o, "index", json_integer((json_int_t)k->index));
        json_object_set_new(o, "line", json_integer(k->line));
        json_object_set_new(o, "on_branch", json_boolean(k->on_branch));
        json_object_set_new(o, "sheet", k->matched ? sheet_json(f, r, k->branch, k->sheet)
                                                   : json_null());
        json_object_set_new(o, "continued_sheet",
                            sheet_json(f, r, k->continued_branch, k->continued_sheet));
        if (sw_func_kind_of(f) == SW_FUNC_CURVE) {
            json_object_set_new(o, "local_sheet", k->matched && k->local_sheet
                                                      ? json_integer(k->local_sheet)
                                                      : json_null());
            json_object_set_new(o, "continued_local_sheet",
                                k->continued_local_sheet ? json_integer(k->continued_local_sheet)
                                                         : json_null());
        }
        json_object_set_new(o, "z", json_cplx(s->s[q].z));
        json_object_set_new(o, "w", json_cplx(s->s[q].w));
        json_object_set_new(o, "t", json_real(k->t));
        json_object_set_new(o, "continued", json_cplx(k->continued));
        json_object_set_new(o, "ratio", json_cplx(k->ratio));
        json_object_set_new(o, "difference", json_cplx(k->difference));
        json_object_set_new(o, "relative_error", json_real(k->error));
        if (k->tie)
            json_object_set_new(o, "tie", json_true());
        json_object_set_new(o, "explanation",
                            json_string(sw_sample_explain(buf, sizeof buf, f, r, k)));
        json_array_append_new(a, o);
    }
    return a;
}

static void print_samples(const sw_func *f, const sw_samples *s, const sw_sample_report *r,
                          const char *file)
{
    char b1[64], b2[64], buf[1024];
    printf("\nsamples:  %zu from %s, tolerance %g (relative", r->n, file, r->tolerance);
    if (r->tolerance_raised)
        printf("; raised from the default to ten times the values' median scatter %.2g "
               "around their nearest sheets", r->scatter);
    printf(")\n");
    if (r->off_branch == 0) {
        printf("  all %zu samples lie on the continued branch\n", r->n);
        return;
    }
    printf("  %zu of %zu %s not on the continued branch:\n\n", r->off_branch, r->n,
           r->off_branch == 1 ? "is" : "are");
    printf("  %-6s %-6s %-12s %-28s %-28s %s\n", "index", "line", "t", "z", "value", "what it is");
    for (size_t q = 0; q < r->n; q++) {
        const sw_sample_check *k = &r->c[q];
        if (k->on_branch)
            continue;
        printf("  %-6zu %-6ld %-12.8g %-28s %-28s %s\n", k->index, k->line, k->t,
               cfmt(b1, sizeof b1, s->s[q].z), cfmt(b2, sizeof b2, s->s[q].w),
               sw_sample_explain(buf, sizeof buf, f, r, k));
    }
    if (r->off_branch == r->n && r->n > 1)
        printf("\n  every sample is off the continued branch: if your values start on another "
               "sheet, fix the branch with --start W (or --at Z=W)\n");
}

/* A point for the table: components below 1e-12 of the path scale are
 * below the location accuracy and shown as 0 (JSON keeps the raw values). */
static const char *zfmt(char *buf, size_t n, double complex z, double scale)
{
    double re = creal(z), im = cimag(z);
    if (fabs(re) < 1e-12 * scale)
        re = 0;
    if (fabs(im) < 1e-12 * scale)
        im = 0;
    return cfmt(buf, n, CMPLX(re, im));
}

/* Ratios and differences for the table: 10 significant digits (the limits
 * are taken a bracket's width, ~1e-14 of the scale, apart), components below
 * 1e-10 of the modulus shown as 0 (JSON keeps the raw values). */
static const char *vfmt(char *buf, size_t n, double complex z)
{
    double re = creal(z), im = cimag(z), mod = cabs(z);
    if (fabs(re) < 1e-10 * mod)
        re = 0;
    if (fabs(im) < 1e-10 * mod)
        im = 0;
    if (im == 0)
        snprintf(buf, n, "%.10g", re + 0.0);
    else if (re == 0)
        snprintf(buf, n, "%.10gi", im);
    else
        snprintf(buf, n, "%.10g%+.10gi", re, im);
    return buf;
}

static void print_audit(const sw_func *f, const sw_audit *a)
{
    char b1[64], b2[64], b3[64], buf[2048];
    if (a->njumps == 0)
        printf("\nThe formula as written (principal csqrt/cpow/clog at every node) does not jump "
               "along the path.\n");
    else
        printf("\nThe formula as written (principal csqrt/cpow/clog at every node) jumps %zu "
               "time%s along the path:\n\n", a->njumps, a->njumps == 1 ? "" : "s");
    if (a->njumps)
        printf("  %-3s %-16s %-34s %-26s %s\n", "#", "t", "z", "ratio (after/before)",
               "difference (after-before)");
    for (size_t q = 0; q < a->njumps; q++) {
        const sw_audit_jump *j = &a->jump[q];
        printf("  %-3zu %-16.12g %-34s %-26s %s\n", q + 1, j->t, zfmt(b1, sizeof b1, j->z, a->scale),
               vfmt(b2, sizeof b2, j->ratio), vfmt(b3, sizeof b3, j->difference));
        printf("      %s\n", sw_audit_explain(buf, sizeof buf, f, j));
    }
    if (a->nnotes) {
        printf("\nNode jumps that cancel in the formula (not discontinuities):\n");
        for (size_t q = 0; q < a->nnotes; q++) {
            const sw_audit_jump *j = &a->note[q];
            printf("  t = %-14.12g z = %-26s %s\n", j->t, zfmt(b1, sizeof b1, j->z, a->scale),
                   sw_audit_explain(buf, sizeof buf, f, j));
        }
    }
    printf("\nThe formula as written compared with the continued branch:\n");
    for (size_t q = 0; q < a->npieces; q++) {
        const sw_audit_piece *p = &a->piece[q];
        char range[80];
        snprintf(range, sizeof range, "t from %.10g to %.10g", p->t0, p->t1);
        if (p->agrees)
            printf("  %-36s principal = continued\n", range);
        else if (p->constant_ratio && p->constant_difference && !isnan(creal(p->ratio)))
            printf("  %-36s principal = (%s) * continued = continued + (%s)\n", range,
                   vfmt(b1, sizeof b1, p->ratio), vfmt(b2, sizeof b2, p->difference));
        else if (p->constant_ratio && !isnan(creal(p->ratio)))
            printf("  %-36s principal = (%s) * continued\n", range,
                   vfmt(b1, sizeof b1, p->ratio));
        else if (p->constant_difference)
            printf("  %-36s principal = continued + (%s)\n", range,
                   vfmt(b1, sizeof b1, p->difference));
        else
            printf("  %-36s principal is on another sheet (in the middle: principal / "
                   "continued = %s, neither ratio nor difference constant)\n", range,
                   vfmt(b1, sizeof b1, p->ratio));
    }
    if (a->nproblems) {
        printf("\nProblems:\n");
        for (size_t q = 0; q < a->nproblems; q++)
            printf("  - %s\n", sw_audit_problem_text(buf, sizeof buf, f, &a->problem[q]));
    }
}

int cmd_audit(int argc, char **argv)
{
    cli c;
    cli_init(&c, "audit", OPT_FUNC | OPT_PATH | OPT_START | OPT_CERTIFY | OPT_JSON | OPT_SAMPLES);
    sw_error err;
    sw_samples smp;
    sw_samples_init(&smp);
    sw_audit au;
    sw_audit_init(&au);
    sw_sample_report rep;
    sw_sample_report_init(&rep);
    sw_trace tr;
    sw_trace_init(&tr);
    sw_germ start;
    int have_germ = 0;
    int rc = cli_parse(&c, argc, argv, audit_help);
    if (rc >= 0)
        goto done;
    if ((rc = cli_load(&c, 1, &err)) >= 0)
        goto done;
    rc = -1;
    int is_curve = sw_func_kind_of(c.f) == SW_FUNC_CURVE;
    if (c.p.inf_start || c.p.inf_end) {
        rc = cli_usage(&c, "the path runs to 'inf': an audit needs a finite path");
        goto done;
    }
    if (c.p.n < 2) {
        rc = cli_usage(&c, "the path needs at least two vertices");
        goto done;
    }
    if (is_curve && !c.samples) {
        rc = cli_usage(&c, "a curve has no formula to audit: give --samples FILE.csv to check "
                           "your values against its continued branch, or audit a formula "
                           "with -f EXPR");
        goto done;
    }
    if (c.tolerance && !c.samples) {
        rc = cli_usage(&c, "--tolerance applies to --samples values; give --samples FILE.csv");
        goto done;
    }
    sw_audit_opts ao;
    sw_audit_opts_init(&ao);
    if (c.tolerance) {
        char *end;
        double tol = strtod(c.tolerance, &end);
        if (end == c.tolerance || *end != '\0' || !(tol > 0) || !(tol < 1)) {
            rc = cli_usage(&c, "--tolerance %s: give a relative tolerance between 0 and 1 "
                               "(e.g. 1e-6)", c.tolerance);
            goto done;
        }
        ao.value_tol = tol;
        ao.adapt_tol = 0; /* a tolerance given is used as given */
        ao.position_tol = fmax(tol, 1e-6);
    }
    if (c.samples && sw_samples_read_file(&smp, c.samples, &err) != SW_OK) {
        rc = cli_fail(&c, &err);
        goto done;
    }
    if (sw_germ_init(&start, c.f) != SW_OK) {
        sw_error_set(&err, SW_ENOMEM, "out of memory");
        rc = cli_fail(&c, &err);
        goto done;
    }
    have_germ = 1;
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.step.certify = c.certify;
    o.keep_log = 1;
    if ((rc = cli_start_germ(&c, &start, &o, &err)) >= 0)
        goto done;
    if (sw_track_run(&tr, c.f, &start, &c.p, &o, &err) != SW_OK) {
        rc = cli_fail(&c, &err);
        goto done;
    }
    if (!is_curve && sw_audit_formula(&au, c.f, &c.p, &tr, &ao, &err) != SW_OK) {
        rc = cli_fail(&c, &err);
        goto done;
    }
    if (c.samples && sw_audit_samples(&rep, c.f, &c.p, &tr, &smp, &ao, &err) != SW_OK) {
        rc = cli_fail(&c, &err);
        goto done;
    }

    double complex w0 = sw_func_value(c.f, &tr.vert[0]);
    char buf[2048];
    if (c.json) {
        json_t *d = cli_doc(&c);
        json_t *pj = json_object();
        if (c.p.name)
            json_object_set_new(pj, "name", json_string(c.p.name));
        json_object_set_new(pj, "vertices", json_integer((json_int_t)c.p.n));
        json_object_set_new(pj, "length", json_real(sw_path_length(&c.p)));
        json_object_set_new(pj, "scale", json_real(sw_path_scale(&c.p)));
        json_object_set_new(d, "path", pj);
        json_object_set_new(d, "start", zw(c.p.z[0], w0));
        json_object_set_new(d, "steps", json_integer((json_int_t)tr.steps));
        json_object_set_new(d, "formula_audited", json_boolean(!is_curve));
        json_t *dj = json_array(), *nj = json_array(), *pc = json_array(), *pr = json_array();
        for (size_t q = 0; q < au.njumps; q++)
            json_array_append_new(dj, jump_json(c.f, &au.jump[q]));
        for (size_t q = 0; q < au.nnotes; q++)
            json_array_append_new(nj, jump_json(c.f, &au.note[q]));
        for (size_t q = 0; q < au.npieces; q++) {
            const sw_audit_piece *p = &au.piece[q];
            json_t *o2 = json_object();
            json_object_set_new(o2, "t_from", json_real(p->t0));
            json_object_set_new(o2, "t_to", json_real(p->t1));
            json_object_set_new(o2, "agrees", json_boolean(p->agrees));
            json_object_set_new(o2, "constant_ratio", json_boolean(p->constant_ratio));
            json_object_set_new(o2, "constant_difference", json_boolean(p->constant_difference));
            json_object_set_new(o2, "ratio", json_cplx(p->ratio));
            json_object_set_new(o2, "difference", json_cplx(p->difference));
            json_array_append_new(pc, o2);
        }
        for (size_t q = 0; q < au.nproblems; q++)
            json_array_append_new(pr, json_string(sw_audit_problem_text(buf, sizeof buf, c.f,
                                                                        &au.problem[q])));
        json_object_set_new(d, "discontinuities", dj);
        json_object_set_new(d, "cancelled", nj);
        json_object_set_new(d, "pieces", pc);
        json_object_set_new(d, "problems", pr);
        if (c.samples) {
            json_object_set_new(d, "samples", samples_json(c.f, &smp, &rep));
            json_object_set_new(d, "samples_off_branch", json_integer((json_int_t)rep.off_branch));
            json_object_set_new(d, "tolerance", json_real(rep.tolerance));
            json_object_set_new(d, "tolerance_raised", json_boolean(rep.tolerance_raised));
            json_object_set_new(d, "scatter", json_real(rep.scatter));
        }
        json_object_set_new(d, "certified", json_boolean(c.certify && tr.certified));
        json_object_set_new(d, "note", json_string(numerical_note));
        cli_emit(d);
    } else {
        char b1[64], b2[64];
        printf("function: %s (%s)\n", sw_func_text(c.f), is_curve ? "curve" : "expression");
        if (c.p.name)
            printf("path:     %s\n", c.p.name);
        printf("path:     %zu vertices, length %.6g; %zu continuation steps\n", c.p.n,
               sw_path_length(&c.p), tr.steps);
        printf("start:    z = %s, w = %s (%s)\n", cfmt(b1, sizeof b1, c.p.z[0]),
               cfmt(b2, sizeof b2, w0),
               (c.start || c.at) ? "the branch you fixed"
               : is_curve ? "sheet 1" : "the principal branch");
        if (!is_curve)
            print_audit(c.f, &au);
        if (c.samples)
            print_samples(c.f, &smp, &rep, c.samples);
        printf("\n%s.\n", numerical_note);
        if (c.certify)
            printf("%s\n", tr.certified ? "certified: every continuation step proven in ball "
                                          "arithmetic (the jump search itself is numerical)"
                                        : "NOT certified: some continuation steps could not be "
                                          "proven");
    }
    rc = (c.certify && !tr.certified) ? 1 : 0;
done:
    if (have_germ)
        sw_germ_clear(&start);
    sw_trace_clear(&tr);
    sw_audit_clear(&au);
    sw_sample_report_clear(&rep);
    sw_samples_clear(&smp);
    cli_clear(&c);
    return rc;
}
