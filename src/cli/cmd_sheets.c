/* sheetwalk sheets: the monodromy graph of a curve, its components, genus and
 * monodromy group. */
#include <string.h>

#include "cli.h"
#include "sheetwalk/sheets.h"

static const char help[] =
    "usage: sheetwalk sheets -c POLY [--set NAME=VALUE]... [--graph FILE] [--certify] [--json]\n\n"
    "Glues the sheets of the algebraic function w(z) with P(z, w) = 0: finds every\n"
    "branch point (and infinity) with its local permutation of the sheets, and\n"
    "from these the monodromy graph (sheets as vertices, one directed edge per\n"
    "step of every cycle, labelled by the branch point), its connected components\n"
    "(the irreducible components of the curve), the genus of each component by\n"
    "the Riemann-Hurwitz formula, and the order of the monodromy group\n"
    "(Schreier-Sims, exact).  Sheets are labelled 1..n at the base point by\n"
    "increasing real part (then imaginary part).  The product of all local\n"
    "permutations with infinity must be the identity; when it is not, nothing is\n"
    "reported (exit 4).\n\n"
    "  -c, --curve POLY      a polynomial P(z, w)\n"
    "      --set NAME=VALUE  give a parameter a value (repeatable)\n"
    "      --graph FILE      write the monodromy graph: .dot/.gv (Graphviz) or\n"
    "                        .graphml/.xml (GraphML)\n"
    "      --certify         prove every continuation step of the loops (Krawczyk\n"
    "                        test in ball arithmetic); exit 1 if some step was not\n"
    "                        proven\n"
    "      --json            one JSON document on stdout\n";

static json_t *sheet_list(const sw_sheets *sh, size_t comp)
{
    json_t *a = json_array();
    for (size_t i = 0; i < sh->nsheets; i++)
        if ((size_t)sh->component[i] == comp)
            json_array_append_new(a, json_integer((json_int_t)i + 1));
    return a;
}

static int all_certified(const sw_points *pts)
{
    for (size_t k = 0; k < pts->n; k++)
        if (!pts->pt[k].certified)
            return 0;
    return pts->infinity.certified;
}

int cmd_sheets(int argc, char **argv)
{
    cli c;
    sw_error err;
    const sw_points *pts = NULL;
    sw_sheets sh;
    int rc;
    sw_sheets_init(&sh);
    sw_error_clear(&err);
    cli_init(&c, "sheets", OPT_FUNC | OPT_CERTIFY | OPT_JSON | OPT_GRAPH);
    rc = cli_parse(&c, argc, argv, help);
    if (rc < 0 && c.function)
        rc = cli_usage(&c, "sheets needs a curve: give -c POLY (an expression has no finite "
                           "set of sheets)");
    if (rc < 0 && !c.curve)
        rc = cli_usage(&c, "give a curve with -c POLY");
    if (rc < 0)
        rc = cli_load(&c, 0, &err);
    if (rc < 0 && cli_get_points(&c, &pts, c.certify, &err) != SW_OK)
        rc = cli_fail(&c, &err);
    if (rc < 0 && sw_sheets_compute(&sh, pts, &err) != SW_OK)
        rc = cli_fail(&c, &err);
    if (rc < 0 && c.graph && sw_sheets_write_graph(pts, c.graph, &err) != SW_OK)
        rc = cli_fail(&c, &err);
    if (rc < 0) {
        int proven = c.certify && all_certified(pts);
        if (c.json) {
            json_t *d = cli_doc(&c);
            json_t *pj = cli_points_json(pts, c.f);
            json_t *genus = json_array(), *comps = json_array(), *of = json_array();
            json_object_update(d, pj);
            json_decref(pj);
            json_object_set_new(d, "sheets", json_integer((json_int_t)sh.nsheets));
            json_object_set_new(d, "components", json_integer((json_int_t)sh.ncomponents));
            for (size_t k = 0; k < sh.ncomponents; k++) {
                json_array_append_new(genus, json_integer(sh.genus[k]));
                json_array_append_new(comps, sheet_list(&sh, k));
            }
            for (size_t i = 0; i < sh.nsheets; i++)
                json_array_append_new(of, json_integer(sh.component[i] + 1));
            json_object_set_new(d, "genus", genus);
            json_object_set_new(d, "component_sheets", comps);
            json_object_set_new(d, "component_of_sheet", of);
            /* exact as a JSON integer when it fits in 63 bits; always as text */
            if (strlen(sh.group_order) <= 18)
                json_object_set_new(d, "group_order",
                                    json_integer((json_int_t)strtoll(sh.group_order, NULL, 10)));
            else
                json_object_set_new(d, "group_order", json_real(sh.group_order_d));
            json_object_set_new(d, "group_order_exact", json_string(sh.group_order));
            json_object_set_new(d, "certified", json_boolean(proven));
            if (c.graph)
                json_object_set_new(d, "graph", json_string(c.graph));
            cli_emit(d);
        } else {
            printf("curve: %s\n", sw_func_text(c.f));
            printf("  sheets               %zu\n", sh.nsheets);
            printf("  components           %zu\n", sh.ncomponents);
            printf("  monodromy group      order %s%s\n", sh.group_order,
                   sh.transitive ? "" : " (acting on all sheets)");
            printf("\n  component  genus  sheets\n");
            for (size_t k = 0; k < sh.ncomponents; k++) {
                printf("  %-9zu  %-5ld ", k + 1, sh.genus[k]);
                for (size_t i = 0; i < sh.nsheets; i++)
                    if ((size_t)sh.component[i] == k)
                        printf(" %zu", i + 1);
                printf("\n");
            }
            printf("\n");
            cli_points_table(stdout, pts, c.f);
            if (c.graph)
                printf("monodromy graph written to %s\n", c.graph);
            printf("%s\n", !c.certify ? "loops tracked in double precision: numerical evidence, "
                                        "not a proof (use --certify)"
                           : proven ? "every continuation step of every loop proven (ball arithmetic)"
                                    : "some steps could not be proven: result not certified");
        }
        rc = (c.certify && !proven) ? 1 : 0;
    }
    sw_sheets_clear(&sh);
    cli_clear(&c);
    return rc;
}
