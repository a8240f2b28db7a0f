/* sheetwalk cuts: does a cut system make the function single-valued, and
 * what does the regular branch jump by across every piece? */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"

static const char help[] =
    "usage: sheetwalk cuts (-f EXPR | -c POLY) [--cut PATH]... [--fix P=W] [--eval Z]...\n"
    "                      [--set NAME=VALUE]... [--json]\n\n"
    "Checks a cut system: every branch point must lie on a cut, and a loop hugging\n"
    "every bounded connected piece of the cut set must leave the function unchanged;\n"
    "the behaviour at infinity is checked independently.  Reports the jump of the\n"
    "regular branch across every cut piece: ratio = value on the right bank / value\n"
    "on the left bank (right and left seen walking along the piece), difference =\n"
    "right - left.\n\n"
    "  --cut PATH    a cut: a polyline as for --path (file or inline); a last vertex\n"
    "                'inf' runs on to infinity.  Repeatable.  Without --cut: the\n"
    "                default system, one straight ray per branch point pointing away\n"
    "                from their centroid (the negative real axis for a single branch\n"
    "                point), turned a little where it would meet another.\n"
    "  --fix P=W     the regular branch is the sheet nearest W at P (P may carry a\n"
    "                bank mark, e.g. --fix \"2+i0=1\").  Without it: the principal\n"
    "                branch (sheet 1 for curves) at a point above all branch points.\n"
    "  --eval Z      print the regular branch at Z (bank marks select the side of a\n"
    "                cut).  Repeatable.\n"
    "  -f, -c, --set, --json   as for every command\n\n"
    "Values come from numerical continuation in double precision (uncertified).\n";

int cmd_cuts(int argc, char **argv)
{
    cli c;
    sw_error err;
    const sw_points *pts = NULL;
    sw_cuts cuts;
    sw_cut_report rep;
    sw_branch *b = NULL;
    sw_cuts_init(&cuts);
    sw_cut_report_init(&rep);
    cli_init(&c, "cuts", OPT_FUNC | OPT_CUT | OPT_FIX | OPT_JSON);
    int rc = cli_parse(&c, argc, argv, help);
    if (rc < 0)
        rc = cli_load(&c, 0, &err);
    if (rc < 0 && cli_get_points(&c, &pts, 0, &err) != SW_OK)
        rc = cli_fail(&c, &err);
    if (rc < 0)
        rc = cli_load_cuts(&c, &cuts, pts, &err);
    if (rc < 0)
        rc = cli_regular_branch(&c, &b, &cuts, pts, &err);
    if (rc < 0 && sw_cuts_check(&rep, c.f, pts, &cuts, b, &err) != SW_OK)
        rc = cli_fail(&c, &err);
    /* values at --eval points */
    size_t nv = c.nevals;
    double complex *ez = calloc(nv ? nv : 1, sizeof *ez), *ew = calloc(nv ? nv : 1, sizeof *ew);
    int *eb = calloc(nv ? nv : 1, sizeof *eb);
    if (rc < 0 && (!ez || !ew || !eb)) {
        sw_error_set(&err, SW_ENOMEM, "out of memory");
        rc = cli_fail(&c, &err);
    }
    for (size_t k = 0; k < nv && rc < 0; k++) {
        sw_germ g;
        if (sw_const_parse(&ez[k], &eb[k], c.evals[k], &c.params, &err) != SW_OK) {
            sw_error_prefix(&err, "--eval %s", c.evals[k]);
            rc = cli_fail(&c, &err);
            break;
        }
        if (sw_germ_init(&g, c.f) != SW_OK ||
            sw_branch_eval(&g, b, ez[k], eb[k], &err) != SW_OK) {
            sw_error_prefix(&err, "--eval %s", c.evals[k]);
            rc = cli_fail(&c, &err);
        } else {
            ew[k] = sw_func_value(c.f, &g);
        }
        sw_germ_clear(&g);
    }
    if (rc < 0) {
        const sw_germ *a = sw_branch_anchor(b);
        double complex aw = sw_func_value(c.f, a);
        int curve = sw_func_kind_of(c.f) == SW_FUNC_CURVE;
        size_t n = sw_func_degree(c.f);
        if (c.json) {
            json_t *d = cli_doc(&c);
            json_object_set_new(d, "single_valued", json_boolean(rep.single_valued));
            json_object_set_new(d, "default_cuts", json_boolean(cuts.is_default));
            json_object_set_new(d, "cuts", cli_cuts_json(&cuts));
            json_t *pcs = json_array();
            for (size_t k = 0; k < cuts.npieces; k++) {
                const sw_cut_piece *p = &cuts.piece[k];
                const sw_piece_jump *j = &rep.jump[k];
                json_t *o = json_object();
                json_object_set_new(o, "cut", json_integer((json_int_t)p->cut + 1));
                json_object_set_new(o, "from", json_cplx(p->from));
                json_object_set_new(o, "to", p->to_inf ? json_null() : json_cplx(p->to));
                if (p->to_inf)
                    json_object_set_new(o, "direction", json_cplx(p->dir));
                json_object_set_new(o, "at", json_cplx(j->at));
                json_object_set_new(o, "left", json_cplx(j->left));
                json_object_set_new(o, "right", json_cplx(j->right));
                json_object_set_new(o, "ratio", json_cplx(j->ratio));
                json_object_set_new(o, "difference", json_cplx(j->difference));
                if (curve && j->perm)
                    json_object_set_new(o, "permutation", cli_perm_json(j->perm, n));
                json_array_append_new(pcs, o);
            }
            json_object_set_new(d, "pieces", pcs);
            json_t *pr = json_array();
            for (size_t k = 0; k < rep.nproblems; k++)
                json_array_append_new(pr, json_string(rep.problem[k]));
            json_object_set_new(d, "problems", pr);
            json_t *comps = json_array();
            for (size_t k = 0; k < rep.ncomp; k++) {
                const sw_cut_component *cc = &rep.comp[k];
                json_t *o = json_object(), *cl = json_array();
                for (size_t j = 0; j < cc->ncuts && j < 32; j++)
                    json_array_append_new(cl, json_integer((json_int_t)cc->cuts[j] + 1));
                json_object_set_new(o, "cuts", cl);
                json_object_set_new(o, "bounded", json_boolean(cc->bounded));
                if (cc->bounded) {
                    json_object_set_new(o, "checked", json_boolean(cc->checked));
                    if (cc->checked) {
                        json_object_set_new(o, "trivial", json_boolean(cc->trivial));
                        if (curve && cc->perm)
                            json_object_set_new(o, "permutation", cli_perm_json(cc->perm, n));
                        else if (!curve) {
                            json_object_set_new(o, "ratio", json_cplx(cc->ratio));
                            json_object_set_new(o, "difference", json_cplx(cc->difference));
                        }
                    }
                }
                json_array_append_new(comps, o);
            }
            json_object_set_new(d, "components", comps);
            json_t *inf = json_object();
            json_object_set_new(inf, "branched", rep.inf_branched < 0 ? json_null()
                                                 : json_boolean(rep.inf_branched));
            json_object_set_new(inf, "reached_by_cut", json_boolean(rep.inf_reached));
            if (!curve && pts->complete)
                json_object_set_new(inf, "leading_exponent",
                                    pts->inf_exponent_ok ? json_real(pts->inf_exponent)
                                                        : json_null());
            json_object_set_new(d, "infinity", inf);
            json_t *fx = json_object();
            json_object_set_new(fx, "z", json_cplx(a->z));
            json_object_set_new(fx, "w", json_cplx(aw));
            if (curve)
                json_object_set_new(fx, "sheet", json_integer(a->sheet + 1));
            json_object_set_new(d, "fix", fx);
            json_t *vals = json_array();
            for (size_t k = 0; k < nv; k++) {
                json_t *o = json_object();
                json_object_set_new(o, "z", json_cplx(ez[k]));
                if (eb[k])
                    json_object_set_new(o, "bank", json_string(eb[k] > 0 ? "+i0" : "-i0"));
                json_object_set_new(o, "w", json_cplx(ew[k]));
                json_array_append_new(vals, o);
            }
            json_object_set_new(d, "values", vals);
            json_object_set_new(d, "certified", json_false());
            cli_emit(d);
        } else {
            char b1[64], b2[64], b3[64];
            printf("function: %s (%s)\n", sw_func_text(c.f), curve ? "curve" : "expression");
            printf("cuts:     %s\n", cuts.is_default
                                         ? "the default system: one ray per branch point, away "
                                           "from their centroid"
                                         : "as given");
            for (size_t k = 0; k < cuts.n; k++) {
                const sw_path *p = &cuts.cut[k];
                printf("  cut %zu: ", k + 1);
                for (size_t j = 0; j < p->n; j++)
                    printf("%s%s", j ? " -> " : "", cfmt(b1, sizeof b1, p->z[j]));
                printf("%s\n", p->inf_end ? " -> inf" : "");
            }
            printf("regular branch: fixed at z = %s where w = %s%s\n", cfmt(b1, sizeof b1, a->z),
                   cfmt(b2, sizeof b2, aw), c.fix ? "" : " (default: principal / sheet 1)");
            if (!curve && pts->complete && pts->inf_exponent_ok)
                printf("at infinity: |f| ~ |z|^%.6g (numerical estimate); %s\n",
                       pts->inf_exponent, rep.inf_branched == 1 ? "branched" : "not branched");
            printf("\nverdict: %s\n", rep.single_valued
                                          ? "single-valued on the plane minus the cuts"
                                          : "NOT shown single-valued on the plane minus the cuts");
            for (size_t k = 0; k < rep.nproblems; k++)
                printf("  - %s\n", rep.problem[k]);
            printf("\njumps of the regular branch (right bank over / minus left bank, seen along "
                   "each piece):\n  %-4s %-26s %-26s %-26s %s\n", "cut", "piece", "ratio",
                   "difference", curve ? "sheets right -> left" : "");
            for (size_t k = 0; k < cuts.npieces; k++) {
                const sw_cut_piece *p = &cuts.piece[k];
                const sw_piece_jump *j = &rep.jump[k];
                char piece[80];
                if (p->to_inf)
                    snprintf(piece, sizeof piece, "%s -> inf", cfmt(b1, sizeof b1, p->from));
                else
                    snprintf(piece, sizeof piece, "%s -> %s", cfmt(b1, sizeof b1, p->from),
                             cfmt(b2, sizeof b2, p->to));
                printf("  %-4zu %-26s %-26s %-26s", p->cut + 1, piece,
                       cfmt(b3, sizeof b3, j->ratio), cfmt(b2, sizeof b2, j->difference));
                if (curve && j->perm)
                    for (size_t i = 0; i < n; i++)
                        printf("%s%zu->%d", i ? " " : "", i + 1, j->perm[i] + 1);
                printf("\n");
            }
            if (nv) {
                printf("\nregular branch at the requested points:\n");
                for (size_t k = 0; k < nv; k++) {
                    char zb[80];
                    snprintf(zb, sizeof zb, "%s%s", cfmt(b1, sizeof b1, ez[k]),
                             eb[k] > 0 ? "+i0" : eb[k] < 0 ? "-i0" : "");
                    printf("  %-30s %s\n", zb, cfmt(b2, sizeof b2, ew[k]));
                }
            }
            printf("\nuncertified: values from continuation in double precision\n");
        }
        rc = 0;
    }
    free(ez);
    free(ew);
    free(eb);
    sw_branch_free(b);
    sw_cut_report_clear(&rep);
    sw_cuts_clear(&cuts);
    cli_clear(&c);
    return rc;
}
