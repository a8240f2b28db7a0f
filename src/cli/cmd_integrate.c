/* sheetwalk integrate: the integral of the tracked branch along a path. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"

static const char integrate_help[] =
    "usage: sheetwalk integrate (-f EXPR | -c POLY) -p PATH [--integrand R]\n"
    "                           [--start W | --at Z=W] [--set NAME=VALUE]... [--json]\n"
    "       sheetwalk integrate (-f EXPR | -c POLY) --bank A,B [--cut PATH]... [--fix P=W]\n"
    "                           [--integrand R] [--set NAME=VALUE]... [--json]\n\n"
    "Integrates R(z, w) dz along PATH, where w is the function continued along the\n"
    "path (R = w unless --integrand is given).  The branch is fixed as for 'trace':\n"
    "principal branch (expressions) or sheet 1 (curves) at the first vertex, or the\n"
    "sheet nearest W.  When that vertex is a branch point (no value there), the\n"
    "branch is fixed just inside the first segment (1e-12 of the path scale).\n\n"
    "Ends of the path may be branch points or poles with an integrable singularity:\n"
    "the local exponent is detected by continuation around small circles and the\n"
    "end is integrated with a Gauss-Jacobi, QAWS or tanh-sinh rule; an end with\n"
    "exponent <= -1 is refused.  A vertex 'inf' (first or last) runs on to infinity\n"
    "along the adjacent segment's direction; the integrand must decay faster than\n"
    "1/|z| there.  An interior vertex at a branch point needs a bank mark ('1+i0':\n"
    "the path passes it above).  A closed path made by 'circle C R N' (N >= 16) is\n"
    "integrated on the circle itself (trapezoidal rule when the integrand comes\n"
    "back to its start value).\n\n"
    "With --bank A,B: the integral of R over [A, B] on the bank x+i0 (A-i0,B-i0:\n"
    "the lower bank) of the regular branch fixed by --cut and --fix (as for 'cuts'),\n"
    "two ways: 'direct' by quadrature along the bank, and 'contour': the loop\n"
    "integral on a circle around [A, B] divided by (lambda - 1), lambda the jump\n"
    "factor across the cut.  'agreement' is their relative difference.  The\n"
    "contour method needs a constant jump and a cut that ends at A and B; when it\n"
    "does not apply, the output says why.\n\n"
    "The result is numerical, not a proof: 'abserr' is an error estimate.  Exit 1\n"
    "when the estimate exceeds 1e-10 of the value, or when the two bank values\n"
    "differ by more than 1e-8 (the result is still printed).\n\n"
    "  -f, --function EXPR   an expression in z\n"
    "  -c, --curve POLY      a polynomial P(z, w); the function is w(z)\n"
    "  -p, --path PATH       a path file, or inline vertices separated by ';'\n"
    "      --integrand R     a single-valued expression in z and w (default w)\n"
    "      --bank A,B        integrate over [A, B] on a bank of a cut (see above)\n"
    "      --cut PATH        a cut (repeatable; default: rays from the branch points)\n"
    "      --fix P=W         fix the regular branch: the sheet nearest W at P\n"
    "      --start W         fix the branch nearest W at the first vertex\n"
    "      --at Z=W          fix the branch nearest W at the vertex Z\n"
    "      --set NAME=VALUE  give a parameter a value (repeatable)\n"
    "      --json            one JSON document on stdout\n";

static const char *piece_kind(sw_piece_kind k)
{
    switch (k) {
    case SW_PIECE_SEGMENT: return "segment";
    case SW_PIECE_RAY_OUT: return "ray to infinity";
    case SW_PIECE_RAY_IN: return "ray from infinity";
    default: return "circle";
    }
}

static json_t *zw_json(double complex z, double complex w)
{
    json_t *o = json_object();
    json_object_set_new(o, "z", json_cplx(z));
    json_object_set_new(o, "w", isfinite(creal(w)) ? json_cplx(w) : json_null());
    return o;
}

static json_t *result_json(const cli *c, const sw_integral *r, const char *integrand)
{
    json_t *d = cli_doc(c);
    json_object_set_new(d, "integrand", json_string(integrand ? integrand : "w"));
    json_object_set_new(d, "value", json_cplx(r->value));
    json_object_set_new(d, "abserr", json_real(r->abserr));
    json_object_set_new(d, "evaluations", json_integer((json_int_t)r->evaluations));
    json_object_set_new(d, "steps", json_integer((json_int_t)r->steps));
    json_object_set_new(d, "converged", json_boolean(r->converged));
    json_object_set_new(d, "certified", json_false());
    json_object_set_new(d, "note", json_string("numerical quadrature: abserr is an estimate, "
                                               "not a bound"));
    json_t *pcs = json_array();
    for (size_t k = 0; k < r->npieces; k++) {
        const sw_integral_piece *p = &r->piece[k];
        json_t *o = json_object();
        json_object_set_new(o, "kind", json_string(piece_kind(p->kind)));
        if (p->kind == SW_PIECE_CIRCLE) {
            json_object_set_new(o, "centre", json_cplx(p->from));
            json_object_set_new(o, "radius", json_real(creal(p->to)));
        } else {
            json_object_set_new(o, "from", p->kind == SW_PIECE_RAY_IN ? json_null()
                                                                     : json_cplx(p->from));
            json_object_set_new(o, "to", p->kind == SW_PIECE_RAY_OUT ? json_null()
                                                                   : json_cplx(p->to));
        }
        json_object_set_new(o, "value", json_cplx(p->value));
        json_object_set_new(o, "abserr", json_real(p->abserr));
        json_object_set_new(o, "evaluations", json_integer((json_int_t)p->evaluations));
        json_object_set_new(o, "method", json_string(p->method));
        json_array_append_new(pcs, o);
    }
    json_object_set_new(d, "pieces", pcs);
    json_t *ends = json_array();
    for (size_t k = 0; k < r->nends; k++) {
        const sw_integral_end *e = &r->end[k];
        json_t *o = json_object();
        json_object_set_new(o, "z", e->at_infinity ? json_null() : json_cplx(e->z));
        json_object_set_new(o, "at_infinity", json_boolean(e->at_infinity));
        json_object_set_new(o, "exponent", json_cplx(e->exponent));
        json_object_set_new(o, "ramification", json_integer(e->ramification));
        json_object_set_new(o, "logarithmic", json_boolean(e->logarithmic));
        json_object_set_new(o, "exact", json_boolean(e->exact));
        json_object_set_new(o, "rule", json_string(sw_end_rule_name(e->rule)));
        json_array_append_new(ends, o);
    }
    json_object_set_new(d, "endpoints", ends);
    json_object_set_new(d, "start", zw_json(r->start_z, r->start_w));
    json_object_set_new(d, "end", zw_json(r->end_z, r->end_w));
    json_object_set_new(d, "closed", json_boolean(r->closed));
    if (sw_func_kind_of(c->f) == SW_FUNC_CURVE) {
        json_object_set_new(d, "start_sheet", r->start_sheet ? json_integer(r->start_sheet)
                                                             : json_null());
        json_object_set_new(d, "end_sheet", r->end_sheet ? json_integer(r->end_sheet)
                                                         : json_null());
    }
    return d;
}

static void result_table(const cli *c, const sw_integral *r, const char *integrand)
{
    char a[64], b[64], v[80];
    printf("function:  %s (%s)\n", sw_func_text(c->f),
           sw_func_kind_of(c->f) == SW_FUNC_EXPR ? "expression" : "curve");
    printf("integrand: %s dz\n", integrand ? integrand : "w");
    if (c->p.name)
        printf("path:      %s\n", c->p.name);
    printf("\n  %-34s %-30s %-9s %6s  %s\n", "piece", "value", "abserr", "evals", "method");
    for (size_t k = 0; k < r->npieces; k++) {
        const sw_integral_piece *p = &r->piece[k];
        char where[96];
        if (p->kind == SW_PIECE_CIRCLE)
            snprintf(where, sizeof where, "circle |z-(%s)| = %.6g", cfmt(a, sizeof a, p->from),
                     creal(p->to));
        else if (p->kind == SW_PIECE_RAY_OUT)
            snprintf(where, sizeof where, "%s -> inf", cfmt(a, sizeof a, p->from));
        else if (p->kind == SW_PIECE_RAY_IN)
            snprintf(where, sizeof where, "inf -> %s", cfmt(a, sizeof a, p->to));
        else
            snprintf(where, sizeof where, "%s -> %s", cfmt(a, sizeof a, p->from),
                     cfmt(b, sizeof b, p->to));
        printf("  %-34s %-30s %-9.2g %6zu  %s\n", where, cfmt(v, sizeof v, p->value), p->abserr,
               p->evaluations, p->method);
    }
    if (r->nends) {
        printf("\n  %-28s %-26s %-6s %-5s %s\n", "singular end", "local exponent", "q", "log",
               "rule");
        for (size_t k = 0; k < r->nends; k++) {
            const sw_integral_end *e = &r->end[k];
            char ex[80];
            snprintf(ex, sizeof ex, "%s%s", cfmt(v, sizeof v, e->exponent),
                     e->exact ? "" : " (estimate)");
            if (e->at_infinity)
                snprintf(ex, sizeof ex, "z^(%s)%s", cfmt(v, sizeof v, e->exponent),
                         e->exact ? "" : " (estimate)");
            printf("  %-28s %-26s %-6d %-5s %s\n",
                   e->at_infinity ? "infinity" : cfmt(a, sizeof a, e->z), ex, e->ramification,
                   e->logarithmic ? "yes" : "no", sw_end_rule_name(e->rule));
        }
    }
    printf("\nvalue:        %s\n", cfmt(v, sizeof v, r->value));
    printf("abserr:       %.3g (estimate: numerical quadrature, not a proof)\n", r->abserr);
    printf("evaluations:  %zu integrand values, %zu continuation steps\n", r->evaluations,
           r->steps);
    if (r->closed && sw_func_kind_of(c->f) == SW_FUNC_CURVE && r->start_sheet && r->end_sheet)
        printf("sheets:       the loop starts on sheet %d and ends on sheet %d\n",
               r->start_sheet, r->end_sheet);
    if (!r->converged)
        printf("NOT converged: the error estimate exceeds the tolerance\n");
}

/* "A,B": split at the comma outside parentheses. */
static int split_bank(const char *text, char *a, char *b, size_t n)
{
    int depth = 0;
    for (const char *p = text; *p; p++) {
        if (*p == '(')
            depth++;
        else if (*p == ')')
            depth--;
        else if (*p == ',' && depth == 0) {
            size_t la = (size_t)(p - text), lb = strlen(p + 1);
            if (la == 0 || lb == 0 || la >= n || lb >= n)
                return -1;
            memcpy(a, text, la);
            a[la] = '\0';
            memcpy(b, p + 1, lb + 1);
            return 0;
        }
    }
    return -1;
}

static int run_bank(cli *c)
{
    sw_error err;
    sw_error_clear(&err);
    char ta[256], tb[256];
    double complex A, B;
    int ba, bb, rc = -1;
    const sw_points *pts = NULL;
    sw_cuts cuts;
    sw_branch *br = NULL;
    sw_expr *R = NULL;
    sw_bank_integral res;
    sw_cuts_init(&cuts);
    sw_bank_integral_init(&res);
    if (split_bank(c->bank, ta, tb, sizeof ta) != 0)
        return cli_usage(c, "--bank needs A,B (two points separated by a comma), got '%s'",
                         c->bank);
    if ((rc = cli_load(c, 0, &err)) >= 0)
        goto done;
    if (sw_const_parse(&A, &ba, ta, &c->params, &err) != SW_OK ||
        sw_const_parse(&B, &bb, tb, &c->params, &err) != SW_OK) {
        sw_error_prefix(&err, "--bank %s", c->bank);
        rc = cli_fail(c, &err);
        goto done;
    }
    if ((ba && bb && ba != bb)) {
        rc = cli_usage(c, "--bank %s: the two ends are marked on different banks", c->bank);
        goto done;
    }
    int bank = ba ? ba : bb ? bb : SW_BANK_UPPER;
    if (c->integrand && sw_integrand_parse(&R, c->integrand, &c->params, &err) != SW_OK) {
        sw_error_prefix(&err, "--integrand '%.200s'", c->integrand);
        rc = cli_fail(c, &err);
        goto done;
    }
    if (cli_get_points(c, &pts, 0, &err) != SW_OK) {
        rc = cli_fail(c, &err);
        goto done;
    }
    if ((rc = cli_load_cuts(c, &cuts, pts, &err)) >= 0)
        goto done;
    if ((rc = cli_regular_branch(c, &br, &cuts, pts, &err)) >= 0)
        goto done;
    sw_integrate_opts o;
    sw_integrate_opts_init(&o);
    sw_status st = sw_integrate_bank(&res, c->f, R, &cuts, br, pts, A, B, bank, &o, &err);
    if (st != SW_OK && st != SW_ETOLERANCE) {
        rc = cli_fail(c, &err);
        goto done;
    }
    const sw_integral *r = &res.direct;
    if (c->json) {
        json_t *d = result_json(c, r, c->integrand);
        json_object_set_new(d, "evaluations", json_integer((json_int_t)res.evaluations));
        json_t *bk = json_object();
        json_object_set_new(bk, "from", json_cplx(A));
        json_object_set_new(bk, "to", json_cplx(B));
        json_object_set_new(bk, "side", json_string(bank > 0 ? "+i0" : "-i0"));
        json_object_set_new(d, "bank", bk);
        json_object_set_new(d, "direct", json_cplx(r->value));
        json_object_set_new(d, "direct_abserr", json_real(r->abserr));
        json_object_set_new(d, "contour", res.contour_applies ? json_cplx(res.contour)
                                                              : json_null());
        json_object_set_new(d, "contour_abserr", res.contour_applies
                                                      ? json_real(res.contour_abserr)
                                                      : json_null());
        json_object_set_new(d, "agreement", res.contour_applies ? json_real(res.agreement)
                                                                : json_null());
        json_t *cm = json_object();
        json_object_set_new(cm, "applies", json_boolean(res.contour_applies));
        json_object_set_new(cm, "note", json_string(res.note));
        json_object_set_new(cm, "lambda", json_cplx(res.lambda));
        if (res.contour_applies) {
            json_object_set_new(cm, "loop", json_cplx(res.loop));
            json_object_set_new(cm, "loop_abserr", json_real(res.loop_abserr));
            json_object_set_new(cm, "centre", json_cplx(res.centre));
            json_object_set_new(cm, "radius", json_real(res.radius));
        }
        json_object_set_new(d, "contour_method", cm);
        cli_emit(d);
    } else {
        char v1[80], v2[80];
        result_table(c, r, c->integrand);
        printf("\nbank integral over [%s, %s] on the %s bank, two ways:\n",
               cfmt(v1, sizeof v1, A), cfmt(v2, sizeof v2, B), bank > 0 ? "upper (+i0)"
                                                                        : "lower (-i0)");
        printf("  direct:     %-32s abserr %.3g\n", cfmt(v1, sizeof v1, r->value), r->abserr);
        if (res.contour_applies) {
            printf("  contour:    %-32s abserr %.3g\n", cfmt(v1, sizeof v1, res.contour),
                   res.contour_abserr);
            printf("  agreement:  %.3g (relative difference)\n", res.agreement);
            printf("  jump:       lambda = %s (other bank / this bank)\n",
                   cfmt(v2, sizeof v2, res.lambda));
        }
        printf("  %s\n", res.note);
    }
    rc = 0;
    if (st == SW_ETOLERANCE) {
        rc = cli_fail(c, &err);
    } else if (res.contour_applies && !(res.agreement <= 1e-8)) {
        sw_error_set(&err, SW_ETOLERANCE,
                     "the direct and contour values differ by %.3g (relative): a singular point "
                     "inside the loop, or a loss of accuracy", res.agreement);
        rc = cli_fail(c, &err);
    }
done:
    sw_bank_integral_clear(&res);
    sw_branch_free(br);
    sw_cuts_clear(&cuts);
    sw_expr_free(R);
    return rc;
}

int cmd_integrate(int argc, char **argv)
{
    cli c;
    cli_init(&c, "integrate",
             OPT_FUNC | OPT_PATH | OPT_START | OPT_INTEGRAND | OPT_CUT | OPT_FIX | OPT_JSON);
    sw_error err;
    sw_error_clear(&err);
    sw_expr *R = NULL;
    sw_integral res;
    sw_integral_init(&res);
    int rc = cli_parse(&c, argc, argv, integrate_help);
    if (rc >= 0)
        goto done;
    if (c.start && c.at) {
        rc = cli_usage(&c, "give either --start W or --at Z=W, not both");
        goto done;
    }
    if (c.nevals) {
        rc = cli_usage(&c, "--eval is not used by integrate");
        goto done;
    }
    if (c.bank) {
        if (c.path || c.start || c.at) {
            rc = cli_usage(&c, "--bank A,B gives the path: leave out -p, --start and --at");
            goto done;
        }
        rc = run_bank(&c);
        goto done;
    }
    if (c.ncuts || c.fix) {
        rc = cli_usage(&c, "--cut and --fix are used with --bank A,B");
        goto done;
    }
    if ((rc = cli_load(&c, 1, &err)) >= 0)
        goto done;
    if (c.p.n < 2) {
        rc = cli_usage(&c, "the path needs at least two finite vertices");
        goto done;
    }
    if (c.integrand && sw_integrand_parse(&R, c.integrand, &c.params, &err) != SW_OK) {
        sw_error_prefix(&err, "--integrand '%.200s'", c.integrand);
        rc = cli_fail(&c, &err);
        goto done;
    }
    size_t vertex = 0;
    double complex w;
    const double complex *hint = NULL;
    if (c.start) {
        if (sw_const_parse(&w, NULL, c.start, &c.params, &err) != SW_OK) {
            sw_error_prefix(&err, "--start");
            rc = cli_fail(&c, &err);
            goto done;
        }
        hint = &w;
    } else if (c.at) {
        const char *eq = strchr(c.at, '=');
        if (eq == NULL) {
            rc = cli_usage(&c, "--at needs Z=W, got '%s'", c.at);
            goto done;
        }
        char zt[256];
        size_t len = (size_t)(eq - c.at);
        if (len >= sizeof zt) {
            rc = cli_usage(&c, "--at: point too long");
            goto done;
        }
        memcpy(zt, c.at, len);
        zt[len] = '\0';
        double complex z;
        int bank;
        if (sw_const_parse(&z, &bank, zt, &c.params, &err) != SW_OK ||
            sw_const_parse(&w, NULL, eq + 1, &c.params, &err) != SW_OK) {
            sw_error_prefix(&err, "--at");
            rc = cli_fail(&c, &err);
            goto done;
        }
        double scale = sw_path_scale(&c.p);
        for (vertex = 0; vertex < c.p.n; vertex++)
            if (cabs(c.p.z[vertex] - z) <= 1e-12 * scale)
                break;
        if (vertex == c.p.n) {
            rc = cli_usage(&c, "--at %s: the point is not a vertex of the path", c.at);
            goto done;
        }
        hint = &w;
    }
    sw_integrate_opts o;
    sw_integrate_opts_init(&o);
    sw_status st = sw_integrate_path(&res, c.f, R, &c.p, vertex, hint, &o, &err);
    if (st != SW_OK && st != SW_ETOLERANCE) {
        rc = cli_fail(&c, &err);
        goto done;
    }
    if (c.json)
        cli_emit(result_json(&c, &res, c.integrand));
    else
        result_table(&c, &res, c.integrand);
    rc = 0;
    if (st == SW_ETOLERANCE)
        rc = cli_fail(&c, &err);
done:
    sw_integral_clear(&res);
    sw_expr_free(R);
    cli_clear(&c);
    return rc;
}
