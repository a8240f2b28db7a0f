/* sheetwalk integrate, run as a user runs it (the built binary from SW_BIN).
 *
 * Checked against the command-line contract (cli.md: the keys "command",
 * "format", "value", "abserr", "evaluations"; exit codes 0/1/2/3; one line
 * "sheetwalk: integrate: ..." on stderr per error) and, for values:
 *  - DLMF 5.12.1 (Beta integral) through GSL's gsl_sf_beta;
 *  - DLMF 5.12.3 with b = 1 - a and DLMF 5.5.3: int_0^inf t^(a-1)/(1+t) dt
 *    = pi / sin(pi a);
 *  - DLMF 19.2.8 through gsl_sf_ellint_Kcomp, on a curve (4 K around the cut);
 *  - the residue theorem for a closed loop (common practice, no source). */
#include "test_util.h"

#include <gsl/gsl_sf_ellint.h>
#include <gsl/gsl_sf_gamma.h>
#include <jansson.h>

#include "cli_run.h"

/* Run integrate with ARGS (after the command name), expect exit code CODE;
 * returns the parsed JSON document when the run printed one, else NULL. */
static json_t *run_integrate(const char *const *args, int code)
{
    const char *argv[40] = {"sheetwalk", "integrate"};
    size_t n = 2;
    for (size_t k = 0; args[k] && n < 38; k++)
        argv[n++] = args[k];
    argv[n] = NULL;
    cli_result r = cli_run(NULL, argv);
    if (r.code != code) {
        print_error("sheetwalk integrate");
        for (size_t k = 0; args[k]; k++)
            print_error(" '%s'", args[k]);
        print_error(": exit %d, expected %d\nstdout: %s\nstderr: %s\n", r.code, code,
                    r.out ? r.out : "", r.err ? r.err : "");
        cli_result_clear(&r);
        fail();
    }
    if (code >= 2) {
        /* exactly one line, naming the command */
        assert_int_equal(cr_lines(r.err), 1);
        assert_true(strncmp(r.err, "sheetwalk: integrate: ", 22) == 0);
        assert_string_equal(r.out, "");
    }
    json_t *d = NULL;
    if (r.out && r.out[0] == '{') {
        json_error_t je;
        d = json_loads(r.out, 0, &je);
        if (d == NULL) {
            print_error("not JSON (%s): %s\n", je.text, r.out);
            cli_result_clear(&r);
            fail();
        }
        assert_int_equal(cr_lines(r.out), 1);
    }
    cli_result_clear(&r);
    return d;
}

static double complex jcplx(const json_t *d, const char *key)
{
    const json_t *a = json_object_get(d, key);
    assert_true(json_is_array(a));
    assert_int_equal(json_array_size(a), 2);
    return CMPLX(json_number_value(json_array_get(a, 0)),
                 json_number_value(json_array_get(a, 1)));
}

static void check_doc(const json_t *d, double complex want, const char *what, const char *source)
{
    assert_non_null(d);
    assert_string_equal(json_string_value(json_object_get(d, "command")), "integrate");
    assert_int_equal(json_integer_value(json_object_get(d, "format")), 1);
    double complex v = jcplx(d, "value");
    TU_CHECK_CLOSE(v, want, 1e-10, what, source);
    const json_t *e = json_object_get(d, "abserr");
    assert_true(json_is_number(e));
    double abserr = json_number_value(e);
    assert_true(abserr >= 0);
    assert_true(cabs(v - want) <= abserr + 1e-15 * cabs(want));
    assert_true(json_is_integer(json_object_get(d, "evaluations")));
    assert_true(json_integer_value(json_object_get(d, "evaluations")) > 0);
    assert_true(json_is_false(json_object_get(d, "certified")));
    assert_true(json_is_true(json_object_get(d, "converged")));
    assert_true(json_is_array(json_object_get(d, "pieces")));
    assert_true(json_is_array(json_object_get(d, "endpoints")));
}

static void test_values(void **state)
{
    (void)state;
    const char *beta[] = {"-f", "z^(-0.63)*(1-z)^(-0.19)", "-p", "0; 1", "--json", NULL};
    json_t *d = run_integrate(beta, 0);
    check_doc(d, gsl_sf_beta(0.37, 0.81), "Beta(0.37, 0.81)", "DLMF 5.12.1, gsl_sf_beta");
    const json_t *ends = json_object_get(d, "endpoints");
    assert_int_equal(json_array_size(ends), 2);
    TU_CHECK_CLOSE(jcplx(json_array_get(ends, 0), "exponent"), -0.63, 1e-12, "exponent at 0",
                   "the integrand z^(-0.63)");
    json_decref(d);

    const char *ray[] = {"-f", "z^(-0.7)/(1+z)", "-p", "0; 1; inf", "--json", NULL};
    d = run_integrate(ray, 0);
    check_doc(d, TU_PI / sin(0.3 * TU_PI), "int_0^inf t^-0.7/(1+t)",
              "DLMF 5.12.3 with b = 1 - a, DLMF 5.5.3");
    assert_true(json_is_null(json_object_get(json_array_get(json_object_get(d, "pieces"), 1),
                                             "to")));
    json_decref(d);

    const char *period[] = {"-c", "w^2-(1-z^2)*(1-0.25*z^2)", "--integrand", "1/w", "-p",
                            "circle 0 1.5", "--json", NULL};
    d = run_integrate(period, 0);
    double K = gsl_sf_ellint_Kcomp(0.5, GSL_PREC_DOUBLE);
    double complex v = jcplx(d, "value");
    check_doc(d, v / cabs(v) * 4 * K, "period around [-1, 1]", "DLMF 19.2.8 (4 K)");
    assert_true(json_is_integer(json_object_get(d, "start_sheet")));
    assert_int_equal(json_integer_value(json_object_get(d, "start_sheet")),
                     json_integer_value(json_object_get(d, "end_sheet")));
    json_decref(d);

    const char *res[] = {"-f", "1/(z*(z-2))", "-p", "1; 1i; -1; -1i; 1", "--json", NULL};
    d = run_integrate(res, 0);
    check_doc(d, CMPLX(0, -TU_PI), "square loop around 0", "residue theorem");
    json_decref(d);

    /* --at fixes the branch at another vertex: sqrt(z) from 1 to 4 on the
       negative branch */
    const char *at[] = {"-f", "sqrt(z)", "-p", "1; 4", "--at", "4=-2", "--json", NULL};
    d = run_integrate(at, 0);
    check_doc(d, -14.0 / 3, "int_1^4 -sqrt(z) dz", "antiderivative 2/3 z^(3/2)");
    json_decref(d);
}

/* --bank: the contract's keys "direct", "contour", "agreement"; the value is
 * 9 pi / 8 = 3^2 B(3/2, 3/2) in modulus (DLMF 5.12.1). */
static void test_bank(void **state)
{
    (void)state;
    const char *args[] = {"-f", "sqrt((z-1)*(z-4))", "--cut", "1; 4", "--bank", "1,4", "--json",
                          NULL};
    json_t *d = run_integrate(args, 0);
    assert_non_null(d);
    double complex direct = jcplx(d, "direct"), contour = jcplx(d, "contour");
    TU_CHECK_CLOSE(cabs(direct), 9 * gsl_sf_beta(1.5, 1.5), 1e-10, "|direct|",
                   "DLMF 5.12.1, gsl_sf_beta(3/2, 3/2)");
    TU_CHECK_CLOSE(contour, direct, 1e-9, "contour vs direct", "the contour method");
    TU_CHECK_CLOSE(jcplx(d, "value"), direct, 0, "value is the direct bank integral", "cli.md");
    const json_t *ag = json_object_get(d, "agreement");
    assert_true(json_is_number(ag));
    assert_true(json_number_value(ag) <= 1e-9);
    json_decref(d);
    /* no bounded cut: the contour method does not apply, and says so */
    const char *open[] = {"-f", "sqrt(z)", "--bank", "-1,0", "--json", NULL};
    d = run_integrate(open, 0);
    assert_true(json_is_null(json_object_get(d, "contour")));
    assert_true(json_is_null(json_object_get(d, "agreement")));
    const json_t *cm = json_object_get(d, "contour_method");
    assert_true(json_is_false(json_object_get(cm, "applies")));
    assert_non_null(strstr(json_string_value(json_object_get(cm, "note")), "does not apply"));
    TU_CHECK_CLOSE(cabs(jcplx(d, "direct")), 2.0 / 3, 1e-10, "int_-1^0 |sqrt(x)| dx",
                   "antiderivative 2/3 |x|^(3/2) (common practice, no source)");
    json_decref(d);
    /* usage errors */
    const char *u1[] = {"-f", "sqrt(z)", "--bank", "1", NULL};
    json_decref(run_integrate(u1, 2));
    const char *u2[] = {"-f", "sqrt(z)", "--bank", "-1,0", "-p", "0; 1", NULL};
    json_decref(run_integrate(u2, 2));
    const char *u3[] = {"-f", "sqrt(z)", "--cut", "0; -1", "-p", "1; 2", NULL};
    json_decref(run_integrate(u3, 2));
    const char *u4[] = {"-f", "sqrt(z)", "--bank", "-1+i0,0-i0", NULL};
    json_decref(run_integrate(u4, 2));
}

static void test_human_and_help(void **state)
{
    (void)state;
    const char *argv[] = {"sheetwalk", "integrate", "-f", "sqrt(z)", "-p", "0; 1", NULL};
    cli_result r = cli_run(NULL, argv);
    assert_int_equal(r.code, 0);
    assert_non_null(strstr(r.out, "value:"));
    assert_non_null(strstr(r.out, "0.666666666667"));
    assert_non_null(strstr(r.out, "not a proof"));
    assert_string_equal(r.err, "");
    cli_result_clear(&r);
    const char *help[] = {"sheetwalk", "integrate", "--help", NULL};
    r = cli_run(NULL, help);
    assert_int_equal(r.code, 0);
    assert_non_null(strstr(r.out, "usage: sheetwalk integrate"));
    cli_result_clear(&r);
}

static void test_bad_input(void **state)
{
    (void)state;
    /* usage errors: exit 2 */
    const char *a1[] = {"-f", "sqrt(z)", NULL};
    json_decref(run_integrate(a1, 2));
    const char *a2[] = {"-f", "sqrt(z)", "-p", "0; 1", "--frobnicate", NULL};
    json_decref(run_integrate(a2, 2));
    const char *a3[] = {"-f", "sqrt(z)", "-p", "1; 2", "--start", "1", "--at", "1=1", NULL};
    json_decref(run_integrate(a3, 2));
    const char *a4[] = {"-f", "sqrt(z)", "-p", "1; 2", "--at", "3=1", NULL};
    json_decref(run_integrate(a4, 2));
    const char *a5[] = {"-p", "1; 2", NULL};
    json_decref(run_integrate(a5, 2));
    const char *a6[] = {"-f", "sqrt(z)", "-p", "1", NULL};
    json_decref(run_integrate(a6, 2));
    /* bad input: exit 3 */
    const char *b1[] = {"-f", "1/z", "-p", "0; 1", "--json", NULL};
    json_decref(run_integrate(b1, 3));
    const char *b2[] = {"-f", "1/z", "-p", "1; 2; inf", NULL};
    json_decref(run_integrate(b2, 3));
    const char *b3[] = {"-f", "sqrt(z", "-p", "1; 2", NULL};
    json_decref(run_integrate(b3, 3));
    const char *b4[] = {"-c", "w^2-z", "--integrand", "sqrt(w)", "-p", "1; 2", NULL};
    json_decref(run_integrate(b4, 3));
    const char *b5[] = {"-f", "sqrt(z)", "-p", "-1; 0; 1", NULL};
    json_decref(run_integrate(b5, 3));
    const char *b6[] = {"-f", "sqrt(z)", "-p", "-1; 1", NULL};
    json_decref(run_integrate(b6, 3));
    const char *b7[] = {"-f", "sqrt(z)", "-p", "1; 2", "--start", "nan", NULL};
    json_decref(run_integrate(b7, 3));
    /* two sheets equally near the given value: ambiguous, exit 3 */
    const char *b8[] = {"-c", "w^2-z", "-p", "1; 2", "--start", "0", NULL};
    json_decref(run_integrate(b8, 3));
}

/* A tolerance that is not met: exit 1, the result still printed and flagged
 * (an oscillating integrand on a ray: no power law at infinity). */
static void test_tolerance_not_met(void **state)
{
    (void)state;
    const char *argv[] = {"sheetwalk", "integrate", "-f", "sin(z)/z^2", "-p", "1; 2; inf",
                          "--json", NULL};
    cli_result r = cli_run(NULL, argv);
    assert_int_equal(r.code, 1);
    assert_int_equal(cr_lines(r.err), 1);
    assert_true(strncmp(r.err, "sheetwalk: integrate: ", 22) == 0);
    json_error_t je;
    json_t *d = json_loads(r.out, 0, &je);
    assert_non_null(d);
    assert_true(json_is_false(json_object_get(d, "converged")));
    double abserr = json_number_value(json_object_get(d, "abserr"));
    double complex v = jcplx(d, "value");
    assert_true(abserr > 1e-10 * cabs(v));
    json_decref(d);
    cli_result_clear(&r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_values),
        cmocka_unit_test(test_bank),
        cmocka_unit_test(test_human_and_help),
        cmocka_unit_test(test_bad_input),
        cmocka_unit_test(test_tolerance_not_met),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
