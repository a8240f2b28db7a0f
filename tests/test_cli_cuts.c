/* Command-line tests of cuts, which, batch, and of crossings and loop words
 * in trace/loop.  Expected values: DLMF 4.2.26 (z^a = exp(a Ln z): a jump of
 * exp(2 pi i a) across the negative axis), the principal square root of C
 * (C11 Annex G) for sqrt(z-1) sqrt(z+1), and facts of the trade marked
 * "common practice, no source". */
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

static const double PI = 3.14159265358979323846;

static json_t *run_json(const char *input, const char *const *argv, int want_code)
{
    return cli_run_json(input, argv, want_code);
}

static double complex jc(const json_t *a)
{
    return CMPLX(json_real_value(json_array_get(a, 0)), json_real_value(json_array_get(a, 1)));
}

static void close_to(double complex got, double complex want, double tol, const char *what)
{
    if (!(cabs(got - want) <= tol * (1 + cabs(want)))) {
        print_error("%s: got %.17g%+.17gi want %.17g%+.17gi\n", what, creal(got), cimag(got),
                    creal(want), cimag(want));
        fail();
    }
}

static void test_cuts_json(void **state)
{
    (void)state;
    /* z^(1/3) with the default cut (negative axis): the upper bank is the
       right one of the ray 0 -> -inf; ratio exp(2 pi i/3) (DLMF 4.2.26) */
    const char *a1[] = {"", "cuts", "-f", "z^(1/3)", "--json", NULL};
    json_t *d = run_json(NULL, a1, 0);
    assert_string_equal(json_string_value(json_object_get(d, "command")), "cuts");
    assert_int_equal(json_integer_value(json_object_get(d, "format")), 1);
    assert_true(json_is_true(json_object_get(d, "single_valued")));
    json_t *pc = json_array_get(json_object_get(d, "pieces"), 0);
    assert_true(json_is_null(json_object_get(pc, "to")));
    close_to(jc(json_object_get(pc, "ratio")), cexp(CMPLX(0, 2 * PI / 3)), 1e-12,
             "z^(1/3) jump");
    assert_int_equal(json_array_size(json_object_get(d, "problems")), 0);
    json_decref(d);

    /* sqrt(z^2-1) with the cut [-1,1], fixed at 2 by sqrt(3): on 0.5+i0 the
       value is csqrt(-0.5+0i) csqrt(1.5+0i) = i sqrt(0.75) (C11 Annex G) */
    const char *a2[] = {"", "cuts", "-f", "sqrt(z^2-1)", "--cut", "-1; 1", "--fix",
                        "2=1.7320508", "--eval", "0.5+i0", "--eval", "0.5-i0", "--json", NULL};
    d = run_json(NULL, a2, 0);
    assert_true(json_is_true(json_object_get(d, "single_valued")));
    json_t *v = json_object_get(d, "values");
    close_to(jc(json_object_get(json_array_get(v, 0), "w")), CMPLX(0, sqrt(0.75)), 1e-12,
             "0.5+i0");
    close_to(jc(json_object_get(json_array_get(v, 1), "w")), CMPLX(0, -sqrt(0.75)), 1e-12,
             "0.5-i0");
    close_to(jc(json_object_get(json_array_get(json_object_get(d, "pieces"), 0), "ratio")), -1,
             1e-12, "[-1,1] jump");
    json_decref(d);

    /* a bounded cut for a cube root: not single-valued, with a readable problem */
    const char *a3[] = {"", "cuts", "-c", "w^3 - (z^2-1)", "--cut", "-1;1", "--json", NULL};
    d = run_json(NULL, a3, 0);
    assert_true(json_is_false(json_object_get(d, "single_valued")));
    json_t *pr = json_object_get(d, "problems");
    assert_true(json_array_size(pr) >= 1);
    int perm_problem = 0;
    for (size_t k = 0; k < json_array_size(pr); k++)
        if (strstr(json_string_value(json_array_get(pr, k)), "permutes the sheets"))
            perm_problem = 1;
    assert_true(perm_problem);
    json_decref(d);
}

static void test_which_json(void **state)
{
    (void)state;
    /* w^2 = z: sheets over 1 are -1 (label 1) and 1 (label 2); carried above
       the default cut to -4+i0 the sheet w = 1 becomes 2i = csqrt(-4+0i)
       (C11 Annex G) */
    const char *a[] = {"", "which", "-c", "w^2-z", "--base", "1", "--point", "-4+i0",
                       "--value", "2i", "--json", NULL};
    json_t *d = run_json(NULL, a, 0);
    assert_int_equal(json_integer_value(json_object_get(d, "sheet")), 2);
    close_to(jc(json_object_get(d, "base_value")), 1, 1e-12, "base value");
    assert_true(json_real_value(json_object_get(d, "distance")) < 1e-12);
    json_decref(d);
    /* a value equally far from both sheets is refused */
    const char *b[] = {"", "which", "-c", "w^2-z", "--base", "1", "--point", "4", "--value",
                       "0", NULL};
    cli_result r = cli_run(NULL, b);
    assert_int_equal(r.code, 3);
    assert_int_equal(cr_lines(r.err), 1);
    assert_non_null(strstr(r.err, "sheetwalk: which: "));
    cli_result_clear(&r);
}

static void test_crossings_and_word(void **state)
{
    (void)state;
    /* a circle around 0 and 1 for sqrt(z (z-1)): the word of the default
       rays (0 -> -inf, 1 -> +inf) is g1 g2 (each crossed counter-clockwise) */
    const char *a[] = {"", "loop", "-f", "sqrt(z*(z-1))", "-p", "circle 0.5 2", "--json", NULL};
    json_t *d = run_json(NULL, a, 0);
    const char *w = json_string_value(json_object_get(d, "word"));
    assert_non_null(w);
    assert_true(strcmp(w, "g1 g2") == 0 || strcmp(w, "g2 g1") == 0);
    /* both roots flip: the product returns (common practice, no source) */
    close_to(jc(json_object_get(d, "ratio")), 1, 1e-12, "ratio");
    json_decref(d);
    const char *b[] = {"", "trace", "-f", "sqrt(z)", "-p", "1; 1i; -1; -1i; 1", "--cut",
                       "0; -1; inf", "--json", NULL};
    d = run_json(NULL, b, 0);
    json_t *x = json_object_get(d, "crossings");
    assert_int_equal(json_array_size(x), 1);
    json_t *c0 = json_array_get(x, 0);
    assert_string_equal(json_string_value(json_object_get(c0, "direction")), "right-to-left");
    /* after crossing the principal cut once the continued root is -1 times
       the principal (regular) one (DLMF 4.2.26 with a = 1/2) */
    close_to(jc(json_object_get(c0, "relative")), -1, 1e-10, "relative sheet");
    json_decref(d);
}

static void test_batch(void **state)
{
    (void)state;
    const char *in =
        "{\"id\": 1, \"command\": \"loop\", \"function\": \"z^(1/3)\", \"path\": \"circle 0 2\"}\n"
        "not json\n"
        "\n"
        "{\"id\": \"x\", \"command\": \"trace\", \"function\": \"sqrt(z\", \"path\": \"0; 1\"}\n"
        "{\"id\": 3, \"command\": \"cuts\", \"function\": \"sqrt(z^2-m)\", \"set\": {\"m\": 1},"
        " \"cut\": [\"-1; 1\"], \"eval\": [\"0+i0\"]}\n"
        "{\"id\": 4, \"command\": \"loop\", \"function\": \"z^(1/3)\", \"path\": \"circle 0 3\"}\n"
        "{\"id\": 5, \"command\": \"explode\"}\n"
        "{\"id\": 6, \"command\": \"loop\", \"curve\": \"w^2 - z*(z-1)\", \"path\": \"circle 0 0.5\"}\n";
    const char *a[] = {"", "batch", NULL};
    cli_result r = cli_run(in, a);
    assert_int_equal(r.code, 0);
    assert_int_equal(cr_lines(r.out), 7);
    char *save = NULL, *line = strtok_r(r.out, "\n", &save);
    int k = 0;
    while (line) {
        json_error_t je;
        json_t *d = json_loads(line, 0, &je);
        assert_non_null(d);
        json_t *id = json_object_get(d, "id");
        switch (k) {
        case 0: /* exp(2 pi i/3), DLMF 4.2.26 */
            assert_int_equal(json_integer_value(id), 1);
            close_to(jc(json_object_get(d, "ratio")), cexp(CMPLX(0, 2 * PI / 3)), 1e-12, "b1");
            break;
        case 1:
            assert_true(json_is_null(id));
            assert_non_null(strstr(json_string_value(json_object_get(d, "error")), "line 2"));
            break;
        case 2:
            assert_string_equal(json_string_value(id), "x");
            assert_non_null(strstr(json_string_value(json_object_get(d, "error")), "column"));
            assert_int_equal(json_integer_value(json_object_get(d, "exit_code")), 3);
            break;
        case 3:
            close_to(jc(json_object_get(json_array_get(json_object_get(d, "values"), 0), "w")),
                     CMPLX(0, 1), 1e-12, "b3");
            break;
        case 4:
            assert_int_equal(json_integer_value(id), 4);
            close_to(jc(json_object_get(d, "ratio")), cexp(CMPLX(0, 2 * PI / 3)), 1e-12, "b4");
            break;
        case 5:
            assert_non_null(json_object_get(d, "error"));
            break;
        case 6: { /* a simple branch point swaps two sheets (common practice) */
            json_t *p = json_object_get(d, "permutation");
            assert_int_equal(json_integer_value(json_array_get(p, 0)), 2);
            assert_int_equal(json_integer_value(json_array_get(p, 1)), 1);
            break;
        }
        }
        json_decref(d);
        k++;
        line = strtok_r(NULL, "\n", &save);
    }
    assert_int_equal(k, 7);
    cli_result_clear(&r);
}

static void test_bad_cut_input(void **state)
{
    (void)state;
    static const struct {
        const char *args[12];
        int code;
        const char *says;
    } cases[] = {
        {{"", "cuts", "-f", "sqrt(z)", "--cut", "inf; 0; 1", NULL}, 3, "inf"},
        {{"", "cuts", "-f", "sqrt(z)", "--cut", "2", NULL}, 3, "two vertices"},
        {{"", "cuts", "-f", "sqrt(z)", "--eval", "-1", NULL}, 3, "bank"},
        {{"", "cuts", "-f", "sqrt(z)", "--fix", "1", NULL}, 2, "P=W"},
        {{"", "cuts", "-f", "sqrt(z)", "--fix", "0=1", NULL}, 3, "branch point"},
        {{"", "which", "-f", "sqrt(z)", "--base", "1", NULL}, 2, "--point"},
        {{"", "cuts", "-f", "sqrt(z)", "--cut", "nosuch.path", NULL}, 3, "nosuch.path"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        cli_result r = cli_run(NULL, cases[k].args);
        if (r.code != cases[k].code || cr_lines(r.err) != 1 ||
            strncmp(r.err, "sheetwalk: ", 11) != 0 || strstr(r.err, cases[k].says) == NULL) {
            print_error("case %zu: exit %d (want %d), stderr: %s\n", k, r.code, cases[k].code,
                        r.err);
            fail();
        }
        cli_result_clear(&r);
    }
}

/* The demo as one JSON document.  Its integral has a closed form:
 * int_a^b sqrt((x-a)(b-x)) / (x - p) dx = pi ((a+b)/2 - p + sgn(p-b) sqrt((p-a)(p-b)))
 * for real p outside [a, b] (common practice, no source), combined by partial
 * fractions 1/(x(x-6)) = (1/(x-6) - 1/x)/6; a loop around both thresholds flips
 * both channel momenta (common practice, no source). */
static void test_demo_json(void **state)
{
    (void)state;
    const char *a[] = {"", "demo", "--json", NULL};
    json_t *d = run_json(NULL, a, 0);
    json_t *in = json_object_get(d, "integral");
    assert_non_null(in);
    double i0 = PI * (2.5 - 2.0), i6 = PI * (2.5 - 6.0 + sqrt(10.0));
    close_to(jc(json_object_get(in, "direct")), CMPLX(0, (i6 - i0) / 6), 1e-12, "direct");
    close_to(jc(json_object_get(in, "contour")), CMPLX(0, (i6 - i0) / 6), 1e-10, "contour");
    json_t *pts = json_object_get(json_object_get(d, "loop"), "points");
    assert_string_equal(json_string_value(json_object_get(json_array_get(pts, 0), "sheet")), "+,+");
    assert_string_equal(
        json_string_value(json_object_get(json_array_get(pts, json_array_size(pts) - 1), "sheet")),
        "-,-");
    json_t *dis = json_object_get(json_object_get(d, "audit"), "discontinuities");
    assert_int_equal(json_array_size(dis), 1);
    /* sqrt(s(s-4)) at s + i0: Im(s(s-4)) = (2s-4) 0+ changes sign at s = 2 */
    close_to(jc(json_object_get(json_array_get(dis, 0), "z")), 2, 1e-10, "audit jump");
    json_decref(d);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_cuts_json),       cmocka_unit_test(test_which_json),
        cmocka_unit_test(test_crossings_and_word), cmocka_unit_test(test_batch),
        cmocka_unit_test(test_bad_cut_input),    cmocka_unit_test(test_demo_json),
    };
    return cmocka_run_group_tests_name("cli_cuts", tests, NULL, NULL);
}
