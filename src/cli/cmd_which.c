/* sheetwalk which: the sheet a value at a point belongs to, seen from a base
 * point through the plane minus the cuts. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"

static const char help[] =
    "usage: sheetwalk which (-f EXPR | -c POLY) --base B --point Z --value W\n"
    "                       [--cut PATH]... [--set NAME=VALUE]... [--json]\n\n"
    "Says which sheet the value W at the point Z lies on.  Sheets are named at the\n"
    "base point B and carried to Z along a path that crosses no cut (the default\n"
    "cut system when no --cut is given).  For a curve the sheets over B are\n"
    "labelled 1..n in the curve's deterministic order (see 'sheetwalk loop'); the\n"
    "answer is the label, the distance from W to that sheet's value at Z, and the\n"
    "value of the sheet at B.  For an expression the sheet is given by the branch\n"
    "index of every root, power and log at B (0 = principal); 'sheet' is that index\n"
    "when the expression has a single multivalued node.  Two sheets equally close\n"
    "to W are refused (exit 3).\n\n"
    "  --base B     base point (bank marks allowed)\n"
    "  --point Z    where the value is given (bank marks allowed)\n"
    "  --value W    the value\n"
    "  --cut PATH   cuts that the carrying path must not cross (repeatable)\n";

/* Relative gap below which two sheets count as equally close to W. */
#define TIE 1e-8

int cmd_which(int argc, char **argv)
{
    cli c;
    sw_error err;
    const sw_points *pts = NULL;
    sw_cuts cuts;
    sw_branch *b = NULL;
    sw_germ g, gb;
    int have_g = 0;
    sw_cuts_init(&cuts);
    cli_init(&c, "which", OPT_FUNC | OPT_WHICH | OPT_CUT | OPT_JSON);
    int rc = cli_parse(&c, argc, argv, help);
    double complex B = 0, Z = 0, W = 0;
    int bb = 0, zb = 0;
    if (rc < 0 && (!c.base || !c.point || !c.value))
        rc = cli_usage(&c, "which needs --base B, --point Z and --value W");
    if (rc < 0)
        rc = cli_load(&c, 0, &err);
    if (rc < 0) {
        if (sw_const_parse(&B, &bb, c.base, &c.params, &err) != SW_OK) {
            sw_error_prefix(&err, "--base");
            rc = cli_fail(&c, &err);
        } else if (sw_const_parse(&Z, &zb, c.point, &c.params, &err) != SW_OK) {
            sw_error_prefix(&err, "--point");
            rc = cli_fail(&c, &err);
        } else if (sw_const_parse(&W, NULL, c.value, &c.params, &err) != SW_OK) {
            sw_error_prefix(&err, "--value");
            rc = cli_fail(&c, &err);
        }
    }
    if (rc < 0 && cli_get_points(&c, &pts, 0, &err) != SW_OK)
        rc = cli_fail(&c, &err);
    if (rc < 0)
        rc = cli_load_cuts(&c, &cuts, pts, &err);
    if (rc < 0) {
        if (sw_germ_init(&g, c.f) != SW_OK || sw_germ_init(&gb, c.f) != SW_OK) {
            sw_error_set(&err, SW_ENOMEM, "out of memory");
            rc = cli_fail(&c, &err);
        } else {
            have_g = 1;
        }
    }
    int curve = c.f && sw_func_kind_of(c.f) == SW_FUNC_CURVE;
    size_t n = c.f ? sw_func_degree(c.f) : 0;
    long sheet = 0;
    double dist = 0;
    double complex base_value = 0, at_value = 0;
    long br[64];
    size_t nbr = 0;
    if (rc < 0 && curve) {
        /* the labelled fiber over B, carried to Z as a whole */
        if (sw_branch_new(&b, c.f, &cuts, B, bb, NULL, &err) != SW_OK ||
            sw_branch_eval(&g, b, Z, zb, &err) != SW_OK) {
            rc = cli_fail(&c, &err);
        } else {
            double complex fz[64], fb[64];
            size_t m = sw_func_sheet_values(fz, 64, c.f, &g);
            sw_func_sheet_values(fb, 64, c.f, sw_branch_anchor(b));
            double d1 = INFINITY, d2 = INFINITY;
            size_t k1 = 0;
            for (size_t k = 0; k < m; k++) {
                double d = cabs(fz[k] - W);
                if (d < d1) {
                    d2 = d1;
                    d1 = d;
                    k1 = k;
                } else if (d < d2) {
                    d2 = d;
                }
            }
            if (m > 1 && d2 - d1 <= TIE * (d1 + cabs(W) + 1e-300)) {
                sw_error_set(&err, SW_EAMBIGUOUS,
                             "two sheets are equally close to the value at the point (distance "
                             "%.6g): give a value nearer to one of them", d1);
                rc = cli_fail(&c, &err);
            } else {
                /* the anchor germ may have been moved off a cut: its order is the
                   label order at B, and labels at B come from a fresh fiber */
                sw_germ lab;
                sw_germ_init(&lab, c.f);
                int perm[64];
                if (sw_func_germ_at(&lab, c.f, B, bb, NULL, &err) == SW_OK &&
                    sw_fiber_permutation(perm, c.f, &lab, sw_branch_anchor(b), &err) == SW_OK) {
                    sheet = perm[k1] + 1;
                    base_value = lab.s[perm[k1]];
                    (void)fb;
                } else {
                    rc = cli_fail(&c, &err);
                }
                sw_germ_clear(&lab);
                dist = d1;
                at_value = fz[k1];
            }
        }
    } else if (rc < 0) {
        /* expressions: the branch nearest W at Z, carried back to B */
        if (sw_func_germ_at(&g, c.f, Z, zb, &W, &err) != SW_OK) {
            sw_error_prefix(&err, "at the point");
            rc = cli_fail(&c, &err);
        } else if (sw_branch_from_germ(&b, c.f, &cuts, &g, &err) != SW_OK ||
                   sw_branch_eval(&gb, b, B, bb, &err) != SW_OK) {
            rc = cli_fail(&c, &err);
        } else {
            at_value = sw_func_value(c.f, &g);
            dist = cabs(at_value - W);
            base_value = sw_func_value(c.f, &gb);
            nbr = sw_func_node_branches(br, 64, c.f, &gb);
            sheet = nbr == 1 ? br[0] : 0;
        }
    }
    if (rc < 0) {
        char b1[64], b2[64];
        if (c.json) {
            json_t *d = cli_doc(&c);
            if (curve || nbr == 1)
                json_object_set_new(d, "sheet", json_integer(sheet));
            else
                json_object_set_new(d, "sheet", json_null());
            if (!curve) {
                json_t *a = json_array();
                for (size_t k = 0; k < nbr; k++)
                    json_array_append_new(a, json_integer(br[k]));
                json_object_set_new(d, "branches", a);
            }
            json_object_set_new(d, "distance", json_real(dist));
            json_object_set_new(d, "base", json_cplx(B));
            json_object_set_new(d, "base_value", json_cplx(base_value));
            json_object_set_new(d, "point", json_cplx(Z));
            json_object_set_new(d, "value_at_point", json_cplx(at_value));
            if (curve)
                json_object_set_new(d, "sheets", json_integer((json_int_t)n));
            json_object_set_new(d, "default_cuts", json_boolean(cuts.is_default));
            json_object_set_new(d, "certified", json_false());
            cli_emit(d);
        } else {
            printf("function: %s (%s)\n", sw_func_text(c.f), curve ? "curve" : "expression");
            if (curve) {
                printf("the value %s at z = %s lies on sheet %ld of %zu (labels at the base %s)\n",
                       cfmt(b1, sizeof b1, W), c.point, sheet, n, c.base);
            } else {
                printf("the value %s at z = %s lies on the branch with indices (",
                       cfmt(b1, sizeof b1, W), c.point);
                for (size_t k = 0; k < nbr; k++)
                    printf("%s%ld", k ? "," : "", br[k]);
                printf(") at the base %s (0 = principal)\n", c.base);
            }
            printf("  value of that sheet at the point  %s (distance to W %.3g)\n",
                   cfmt(b1, sizeof b1, at_value), dist);
            printf("  value of that sheet at the base   %s\n", cfmt(b2, sizeof b2, base_value));
            printf("  carried along a path that crosses no %s cut\n",
                   cuts.is_default ? "default" : "given");
            printf("uncertified: values from continuation in double precision\n");
        }
        rc = 0;
    }
    if (have_g) {
        sw_germ_clear(&g);
        sw_germ_clear(&gb);
    }
    sw_branch_free(b);
    sw_cuts_clear(&cuts);
    cli_clear(&c);
    return rc;
}
