/* sheetwalk points: branch points and their local monodromy. */
#include "cli.h"

static const char help[] =
    "usage: sheetwalk points (-f EXPR | -c POLY) [--set NAME=VALUE]... [--certify] [--json]\n\n"
    "Finds the branch points of the function (finite ones and infinity) and the\n"
    "effect of one counter-clockwise turn around each: a multiplier or a shift for\n"
    "expressions, a permutation of the sheets (as cycles) for curves.  Candidates\n"
    "with trivial monodromy (e.g. sqrt(z^2) at 0, a node of a curve) are listed as\n"
    "not branched.  The monodromy at infinity is that of a loop around infinity,\n"
    "i.e. a large clockwise circle.\n\n"
    "  -f, --function EXPR   an expression in z\n"
    "  -c, --curve POLY      a polynomial P(z, w); the function is w(z)\n"
    "      --set NAME=VALUE  give a parameter a value (repeatable)\n"
    "      --certify         track the loops in ball arithmetic\n"
    "      --json            one JSON document on stdout\n";

int cmd_points(int argc, char **argv)
{
    cli c;
    sw_error err;
    const sw_points *pts = NULL;
    cli_init(&c, "points", OPT_FUNC | OPT_CERTIFY | OPT_JSON);
    int rc = cli_parse(&c, argc, argv, help);
    if (rc < 0)
        rc = cli_load(&c, 0, &err);
    if (rc < 0) {
        if (cli_get_points(&c, &pts, c.certify, &err) != SW_OK) {
            rc = cli_fail(&c, &err);
        } else if (sw_func_kind_of(c.f) == SW_FUNC_CURVE && !pts->product_ok) {
            /* the self-test of methods §2: never print permutations that fail it */
            sw_error_set(&err, SW_EINTERNAL,
                         "the ordered product of the local monodromies is not the identity: "
                         "the permutations are not trustworthy and are not printed (try "
                         "--certify)");
            rc = cli_fail(&c, &err);
        }
    }
    if (rc < 0) {
        if (c.json) {
            json_t *d = cli_doc(&c);
            json_t *pj = cli_points_json(pts, c.f);
            json_object_update(d, pj);
            json_decref(pj);
            cli_emit(d);
        } else {
            printf("function: %s (%s)\n", sw_func_text(c.f),
                   sw_func_kind_of(c.f) == SW_FUNC_EXPR ? "expression" : "curve");
            cli_points_table(stdout, pts, c.f);
            printf("%s\n", c.certify ? "loops tracked in ball arithmetic (see 'certified' in "
                                       "--json per point)"
                                     : "loops tracked in double precision: numerical evidence, "
                                       "not a proof (use --certify)");
        }
        rc = 0;
    }
    cli_clear(&c);
    return rc;
}
