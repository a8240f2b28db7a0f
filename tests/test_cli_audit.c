/* Command-line tests of `sheetwalk audit`: the JSON keys of the contract,
 * exit codes, one-line errors, bad CSV files, sampled values with planted
 * sheet changes.  Expected values: the principal square root of C (C11 Annex
 * G: csqrt(-r +- i0) = +-i sqrt(r)) and of GSL (gsl_complex_sqrt), DLMF 4.2.3
 * (the principal branch jumps where its operand crosses the negative axis),
 * and the identity sqrt(z-1) sqrt(z+1) = sqrt(z^2-1) off the union of the
 * cuts (common practice, no source). */
#include "test_util.h"

#include <jansson.h>
#include <unistd.h>

#include <gsl/gsl_complex.h>
#include <gsl/gsl_complex_math.h>

#include "cli_run.h"

static json_t *run_json(const char *const *argv, int want_code)
{
    return cli_run_json(NULL, argv, want_code);
}

/* A failure: exit code CODE, nothing on stdout, exactly one line on stderr
 * starting "sheetwalk: audit: " and containing NEEDLE. */
static void expect_error(const char *const *argv, int code, const char *needle)
{
    cli_result r = cli_run(NULL, argv);
    if (r.code != code || r.out[0] != '\0' || cr_lines(r.err) != 1 ||
        strncmp(r.err, "sheetwalk: audit: ", 18) != 0 || strstr(r.err, needle) == NULL) {
        print_error("exit %d (wanted %d), stdout '%s', stderr '%s' (wanted '%s')\n", r.code,
                    code, r.out, r.err, needle);
        fail();
    }
    cli_result_clear(&r);
}

static double complex jc(const json_t *a)
{
    return CMPLX(json_real_value(json_array_get(a, 0)), json_real_value(json_array_get(a, 1)));
}

static double complex g_sqrt(double complex z)
{
    gsl_complex r = gsl_complex_sqrt(gsl_complex_rect(creal(z), cimag(z)));
    return CMPLX(GSL_REAL(r), GSL_IMAG(r));
}

static void write_file(char *name, const char *data, size_t len)
{
    strcpy(name, "/tmp/sw_cli_auditXXXXXX");
    int fd = mkstemp(name);
    assert_true(fd >= 0);
    assert_true(write(fd, data, len) == (ssize_t)len);
    close(fd);
}

static void test_help(void **state)
{
    (void)state;
    const char *a[] = {"", "audit", "--help", NULL};
    cli_result r = cli_run(NULL, a);
    assert_int_equal(r.code, 0);
    assert_non_null(strstr(r.out, "usage: sheetwalk audit"));
    assert_non_null(strstr(r.out, "--samples"));
    cli_result_clear(&r);
    /* listed in the command overview, no longer "not available" */
    const char *b[] = {"", "--help", NULL};
    r = cli_run(NULL, b);
    assert_non_null(strstr(r.out, "audit"));
    cli_result_clear(&r);
}

static void test_jumps_json(void **state)
{
    (void)state;
    /* the segment -0.5+i -> 0.3-i meets the real axis at -0.1 (s = 1/2) and
       the imaginary axis at -0.25i (s = 5/8); sqrt(z^2-1) jumps at both,
       sqrt(z-1) sqrt(z+1) only at -0.1 (common practice, no source) */
    const char *path = "-0.5+1i; 0.3-1i; 2-1i; 2+1i";
    const char *a1[] = {"", "audit", "-f", "sqrt(z-1)*sqrt(z+1)", "-p", path, "--json", NULL};
    json_t *d = run_json(a1, 0);
    assert_string_equal(json_string_value(json_object_get(d, "command")), "audit");
    assert_int_equal(json_integer_value(json_object_get(d, "format")), 1);
    json_t *dj = json_object_get(d, "discontinuities");
    assert_int_equal(json_array_size(dj), 1);
    json_t *j = json_array_get(dj, 0);
    TU_CHECK_CLOSE(jc(json_object_get(j, "z")), -0.1, 1e-10, "z of the jump", "s = 1/2");
    TU_CHECK_CLOSE(json_real_value(json_object_get(j, "t")), 0.5, 1e-10, "t", "s = 1/2");
    TU_CHECK_CLOSE(jc(json_object_get(j, "ratio")), -1, 1e-12, "ratio", "C11 Annex G csqrt");
    /* from the upper side (before) to the lower: +-i sqrt(1.1) sqrt(0.9) */
    TU_CHECK_CLOSE(jc(json_object_get(j, "difference")), CMPLX(0, -2 * sqrt(0.99)), 1e-12,
                   "difference", "C11 Annex G csqrt");
    assert_non_null(strstr(json_string_value(json_object_get(j, "explanation")), "`z-1`"));
    assert_int_equal(json_array_size(json_object_get(d, "problems")), 0);
    json_decref(d);

    const char *a2[] = {"", "audit", "-f", "sqrt(z^2-1)", "-p", path, "--json", NULL};
    d = run_json(a2, 0);
    dj = json_object_get(d, "discontinuities");
    assert_int_equal(json_array_size(dj), 2);
    TU_CHECK_CLOSE(jc(json_object_get(json_array_get(dj, 0), "z")), -0.1, 1e-10, "first",
                   "s = 1/2");
    TU_CHECK_CLOSE(jc(json_object_get(json_array_get(dj, 1), "z")), CMPLX(0, -0.25), 1e-10,
                   "second", "s = 5/8");
    TU_CHECK_CLOSE(json_real_value(json_object_get(json_array_get(dj, 1), "t")), 0.625, 1e-10,
                   "t of the second", "s = 5/8");
    json_decref(d);

    /* human output names the node and the operand */
    const char *a3[] = {"", "audit", "-f", "sqrt(z-1)*sqrt(z+1)", "-p", path, NULL};
    cli_result r = cli_run(NULL, a3);
    assert_int_equal(r.code, 0);
    assert_non_null(strstr(r.out, "jumps 1 time"));
    assert_non_null(strstr(r.out, "square root `sqrt(z-1)`"));
    assert_non_null(strstr(r.out, "`z-1` crosses the negative real axis"));
    assert_non_null(strstr(r.out, "not a proof"));
    cli_result_clear(&r);
}

static void test_bank(void **state)
{
    (void)state;
    /* +i0: along the upper bank of the cut (0, 4] of sqrt(1-4/z) nothing
       jumps; from 2+i0 to 2-i0 it jumps from +i to -i (C11 Annex G) */
    const char *a1[] = {"", "audit", "-f", "sqrt(1-4/z)", "-p", "0.5+i0; 3.5+i0", "--json", NULL};
    json_t *d = run_json(a1, 0);
    assert_int_equal(json_array_size(json_object_get(d, "discontinuities")), 0);
    assert_true(json_is_true(json_object_get(json_array_get(json_object_get(d, "pieces"), 0),
                                             "agrees")));
    json_decref(d);
    const char *a2[] = {"", "audit", "-f", "sqrt(1-4/z)", "-p", "2+i0; 2-i0", "--json", NULL};
    d = run_json(a2, 0);
    json_t *dj = json_object_get(d, "discontinuities");
    assert_int_equal(json_array_size(dj), 1);
    TU_CHECK_CLOSE(jc(json_object_get(json_array_get(dj, 0), "z")), 2, 1e-10, "z", "the vertex");
    TU_CHECK_CLOSE(json_real_value(json_object_get(json_array_get(dj, 0), "t")), 0.5, 1e-10, "t",
                   "the crossing of the axis");
    TU_CHECK_CLOSE(jc(json_object_get(json_array_get(dj, 0), "difference")), CMPLX(0, -2), 1e-7,
                   "difference", "-i - i, C11 Annex G");
    json_decref(d);
}

/* sqrt(z^2-1) continued from the principal branch at -2+0.5i along paths in
 * the upper half-plane: -sqrt(z-1) sqrt(z+1) (GSL roots; both are analytic
 * off (-inf, 1] and agree at the start). */
static double complex cont(double complex z) { return -g_sqrt(z - 1) * g_sqrt(z + 1); }

static void test_samples(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 99);
    const double complex v[] = {CMPLX(-2, 0.5), CMPLX(2, 0.5), CMPLX(2, 2), CMPLX(-2, 2)};
    const char *path = "-2+0.5i; 2+0.5i; 2+2i; -2+2i";
    TU_CHECK_CLOSE(cont(v[0]), g_sqrt(v[0] * v[0] - 1), 1e-14, "start", "GSL gsl_complex_sqrt");
    enum { N = 50 };
    int flip[N] = {0};
    flip[3] = flip[4] = flip[20] = flip[49] = 1;
    char *csv = malloc(N * 100 + 100);
    size_t used = (size_t)sprintf(csv, "re_z,im_z,re_w,im_w\n");
    for (int i = 0; i < N; i++) {
        double t = 3.0 * i / (N - 1);
        int k = t >= 3 ? 2 : (int)t;
        double complex z = v[k] + (t - k) * (v[k + 1] - v[k]);
        double complex w = cont(z) * (flip[i] ? -1 : 1);
        w *= 1 + 1e-9 * CMPLX(tu_range(&rng, -1, 1), tu_range(&rng, -1, 1));
        used += (size_t)sprintf(csv + used, "%.17g,%.17g,%.17g,%.17g\n", creal(z), cimag(z),
                                creal(w), cimag(w));
    }
    char file[64];
    write_file(file, csv, used);
    free(csv);
    char start[96];
    snprintf(start, sizeof start, "(%.17g)+(%.17g)*i", creal(cont(v[0])), cimag(cont(v[0])));
    for (int curve = 0; curve < 2; curve++) {
        const char *a[] = {"", "audit", curve ? "-c" : "-f", curve ? "w^2-z^2+1" : "sqrt(z^2-1)",
                           "-p", path, "--samples", file, "--start", start, "--json", NULL};
        json_t *d = run_json(a, 0);
        json_t *s = json_object_get(d, "samples");
        assert_int_equal(json_array_size(s), N);
        int off = 0;
        for (int i = 0; i < N; i++) {
            json_t *o = json_array_get(s, (size_t)i);
            assert_int_equal(json_integer_value(json_object_get(o, "index")), i);
            int on = json_is_true(json_object_get(o, "on_branch"));
            if (on == flip[i]) {
                print_error("%s: sample %d on_branch %d, planted flip %d\n",
                            curve ? "curve" : "expression", i, on, flip[i]);
                fail();
            }
            off += !on;
            json_t *sh = json_object_get(o, "sheet"), *cs = json_object_get(o, "continued_sheet");
            if (curve) {
                assert_true(json_is_integer(sh) && json_is_integer(cs));
                assert_true((json_integer_value(sh) == json_integer_value(cs)) == on);
            } else {
                assert_true(json_is_array(sh) && json_array_size(sh) == 1);
                long dk = (long)(json_integer_value(json_array_get(sh, 0)) -
                                 json_integer_value(json_array_get(cs, 0)));
                assert_int_equal(labs(dk) % 2, !on);
            }
            if (!on)
                TU_CHECK_CLOSE(jc(json_object_get(o, "ratio")), -1, 1e-8, "ratio of a flip",
                               "planted");
        }
        assert_int_equal(off, 4);
        assert_int_equal(json_integer_value(json_object_get(d, "samples_off_branch")), 4);
        json_decref(d);
    }
    /* the human summary */
    const char *h[] = {"", "audit", "-f", "sqrt(z^2-1)", "-p", path, "--samples", file, NULL};
    cli_result r = cli_run(NULL, h);
    assert_int_equal(r.code, 0);
    assert_non_null(strstr(r.out, "4 of 50 are not on the continued branch"));
    assert_non_null(strstr(r.out, "-1 times the continued value (the other sign of sqrt(z^2-1))"));
    cli_result_clear(&r);
    /* a tolerance below the noise: every sample is off */
    const char *t[] = {"", "audit", "-f", "sqrt(z^2-1)", "-p", path, "--samples", file,
                       "--tolerance", "1e-12", "--json", NULL};
    json_t *d = run_json(t, 0);
    assert_true(json_integer_value(json_object_get(d, "samples_off_branch")) > 40);
    json_decref(d);
    unlink(file);
}

static void test_errors(void **state)
{
    (void)state;
    const char *p = "-2+0.5i; 2+0.5i";
    const char *a1[] = {"", "audit", "-c", "w^2-z", "-p", p, NULL};
    expect_error(a1, 2, "a curve has no formula to audit");
    const char *a2[] = {"", "audit", "-f", "sqrt(z)", "-p", p, "--tolerance", "1e-3", NULL};
    expect_error(a2, 2, "--tolerance");
    const char *a3[] = {"", "audit", "-f", "sqrt(z)", "-p", p, "--samples", "/nonexistent.csv",
                        NULL};
    expect_error(a3, 3, "cannot open");
    const char *a4[] = {"", "audit", "-f", "sqrt(z)", NULL};
    expect_error(a4, 2, "no path");
    const char *a5[] = {"", "audit", "-f", "sqrt(z)", "-p", "1; 2; inf", NULL};
    expect_error(a5, 2, "inf");
    const char *a6[] = {"", "audit", "-f", "sqrt(z)", "-p", "-1; 1", NULL};
    expect_error(a6, 3, "branch point");
    const char *a7[] = {"", "audit", "-f", "sqrt(z", "-p", p, NULL};
    expect_error(a7, 3, "column");

    struct {
        const char *data;
        size_t len;
        const char *needle;
    } bad[] = {
        {"", 0, "empty"},
        {"re_z,im_z,re_w,im_w\n", 20, "no samples"},
        {"re_z,im_z,re_w,im_w\n0,0.5,1,0\n1,0.5,1\n", 38, "line 3: 3 columns"},
        {"re_z,im_z,re_w,im_w\n0,0.5,NaN,0\n", 32, "line 2, column 3: not a finite number"},
        {"re_z,im_z,re_w,im_w\n0,0.5,1..2,0\n", 33, "line 2, column 3: not a number"},
        {"re_z,im_z,re_w,im_w\n0,0.5\0,1,0\n", 31, "binary"},
        {"0,0.5,1,0\n", 10, "line 1: expected a header"},
        {"re_z,im_z,re_w,im_w\n0,3,1,0\n", 28, "line 2"},
    };
    for (size_t k = 0; k < sizeof bad / sizeof *bad; k++) {
        char file[64];
        write_file(file, bad[k].data, bad[k].len);
        const char *a[] = {"", "audit", "-f", "sqrt(z)", "-p", p, "--samples", file, NULL};
        expect_error(a, 3, bad[k].needle);
        const char *tol[] = {"", "audit", "-f", "sqrt(z)", "-p", p, "--samples", file,
                             "--tolerance", "abc", NULL};
        expect_error(tol, 2, "--tolerance abc");
        unlink(file);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_help),
        cmocka_unit_test(test_jumps_json),
        cmocka_unit_test(test_bank),
        cmocka_unit_test(test_samples),
        cmocka_unit_test(test_errors),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
