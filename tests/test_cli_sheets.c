/* Command-line tests of `sheets` (and `points` for curves): genus, components
 * and group order of curves with published answers, graph export, bad input.
 * Sources: R. Miranda, Algebraic Curves and Riemann Surfaces (AMS 1995),
 * ch. III (hyperelliptic curves w^2 = f(z), deg f = d: genus floor((d-1)/2));
 * the degree-genus formula g = (n-1)(n-2)/2 for smooth plane curves (Fermat
 * z^n + w^n = 1); a trinomial w^3 + w + z has monodromy group S_3 (order 6):
 * common practice, no source. */
#include <complex.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <jansson.h>

#include "cli_run.h"

static json_t *sheets_json(const char *curve)
{
    const char *a[] = {"", "sheets", "-c", curve, "--json", NULL};
    cli_result r = cli_run(NULL, a);
    if (r.code != 0) {
        print_error("sheets -c '%s': exit %d: %s\n", curve, r.code, r.err);
        fail();
    }
    json_t *d = json_loads(r.out, 0, NULL);
    assert_non_null(d);
    cli_result_clear(&r);
    return d;
}

static void test_genus_components_group(void **state)
{
    (void)state;
    static const struct {
        const char *curve;
        int sheets, components, genus0;
        long long order;
        const char *source;
    } cases[] = {
        {"w^2 - (z^5 - 1)", 2, 1, 2, 2, "Miranda III: d = 5 -> g = 2"},
        {"w^2 - (z^6 + z + 3)", 2, 1, 2, 2, "Miranda III: d = 6 -> g = 2"},
        {"w^2 - z*(z-1)*(z+2)", 2, 1, 1, 2, "Miranda III: d = 3 -> g = 1"},
        {"z^3 + w^3 - 1", 3, 1, 1, -1, "degree-genus formula, n = 3"},
        {"z^4 + w^4 - 1", 4, 1, 3, -1, "degree-genus formula, n = 4"},
        {"w^3 + w + z", 3, 1, 0, 6, "trinomial: S_3 (common practice)"},
        {"w^2 - z^2", 2, 2, 0, 1, "two lines w = z, w = -z"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        json_t *d = sheets_json(cases[k].curve);
        int sh = (int)json_integer_value(json_object_get(d, "sheets"));
        int cp = (int)json_integer_value(json_object_get(d, "components"));
        int g0 = (int)json_integer_value(json_array_get(json_object_get(d, "genus"), 0));
        long long ord = json_integer_value(json_object_get(d, "group_order"));
        if (sh != cases[k].sheets || cp != cases[k].components || g0 != cases[k].genus0 ||
            (cases[k].order > 0 && ord != cases[k].order)) {
            print_error("%s: sheets %d components %d genus %d order %lld (%s)\n",
                        cases[k].curve, sh, cp, g0, ord, cases[k].source);
            fail();
        }
        assert_string_equal(json_string_value(json_object_get(d, "command")), "sheets");
        assert_int_equal(json_integer_value(json_object_get(d, "format")), 1);
        assert_true(json_is_array(json_object_get(d, "branch_points")));
        json_decref(d);
    }
}

static void test_points_cycles(void **state)
{
    (void)state;
    /* w^4 = z: one 4-cycle at 0 and at infinity (common practice, no source) */
    const char *a[] = {"", "points", "-c", "w^4 - z", "--json", NULL};
    cli_result r = cli_run(NULL, a);
    assert_int_equal(r.code, 0);
    json_t *d = json_loads(r.out, 0, NULL);
    assert_non_null(d);
    json_t *bp = json_object_get(d, "branch_points");
    assert_int_equal(json_array_size(bp), 1);
    json_t *cyc = json_object_get(json_array_get(bp, 0), "cycles");
    assert_int_equal(json_array_size(cyc), 1);
    assert_int_equal(json_array_size(json_array_get(cyc, 0)), 4);
    assert_true(json_is_true(json_object_get(json_object_get(d, "infinity"), "branched")));
    json_decref(d);
    cli_result_clear(&r);
    /* a node is not a branch point: w^2 = z^2 (z - 1) at 0 (common practice) */
    const char *b[] = {"", "points", "-c", "w^2 - z^2*(z-1)", "--json", NULL};
    r = cli_run(NULL, b);
    assert_int_equal(r.code, 0);
    d = json_loads(r.out, 0, NULL);
    bp = json_object_get(d, "branch_points");
    for (size_t k = 0; k < json_array_size(bp); k++) {
        json_t *z = json_object_get(json_array_get(bp, k), "z");
        assert_true(fabs(json_real_value(json_array_get(z, 0))) > 0.5);
    }
    assert_true(json_array_size(json_object_get(d, "regular_points")) >= 1);
    json_decref(d);
    cli_result_clear(&r);
}

static void test_graph_export(void **state)
{
    (void)state;
    char dot[64], gml[64];
    snprintf(dot, sizeof dot, "/tmp/sw_graph_%ld.dot", (long)getpid());
    snprintf(gml, sizeof gml, "/tmp/sw_graph_%ld.graphml", (long)getpid());
    const char *a[] = {"", "sheets", "-c", "w^3 - z*(z-1)", "--graph", dot, NULL};
    cli_result r = cli_run(NULL, a);
    assert_int_equal(r.code, 0);
    cli_result_clear(&r);
    const char *b[] = {"", "sheets", "-c", "w^3 - z*(z-1)", "--graph", gml, NULL};
    r = cli_run(NULL, b);
    assert_int_equal(r.code, 0);
    cli_result_clear(&r);
    FILE *fp = fopen(dot, "r");
    char buf[4096] = "";
    size_t n = fread(buf, 1, sizeof buf - 1, fp);
    buf[n] = '\0';
    fclose(fp);
    assert_non_null(strstr(buf, "digraph"));
    fp = fopen(gml, "r");
    n = fread(buf, 1, sizeof buf - 1, fp);
    buf[n] = '\0';
    fclose(fp);
    assert_non_null(strstr(buf, "<graphml"));
    unlink(dot);
    unlink(gml);
}

static void test_bad_input(void **state)
{
    (void)state;
    static const struct {
        const char *args[8];
        int code;
        const char *says;
    } cases[] = {
        {{"", "sheets", "-f", "sqrt(z)", NULL}, 2, "curve"},
        {{"", "sheets", "-c", "w^2 - sqrt(z)", NULL}, 3, "column 7"},
        {{"", "sheets", "-c", "w^50 - z", NULL}, 3, "40"},
        {{"", "sheets", "-c", "z^2 + 1", NULL}, 3, "w"},
        {{"", "sheets", "-c", "(w - z)^2", NULL}, 3, "square"},
        {{"", "sheets", "-c", "w^2 - z", "--graph", "/tmp/x.png", NULL}, 2, ".dot"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        cli_result r = cli_run(NULL, cases[k].args);
        if (r.code != cases[k].code || cr_lines(r.err) != 1 ||
            strncmp(r.err, "sheetwalk: sheets: ", 19) != 0 ||
            strstr(r.err, cases[k].says) == NULL) {
            print_error("case %zu: exit %d (want %d): %s\n", k, r.code, cases[k].code, r.err);
            fail();
        }
        cli_result_clear(&r);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_genus_components_group),
        cmocka_unit_test(test_points_cycles),
        cmocka_unit_test(test_graph_export),
        cmocka_unit_test(test_bad_input),
    };
    return cmocka_run_group_tests_name("cli_sheets", tests, NULL, NULL);
}
