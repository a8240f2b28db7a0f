/* Continuation along polylines, against closed forms.
 *
 * Sources of the expected values (named beside every check):
 *  - DLMF 4.2.1 / 4.2.6: the general logarithm Ln z = integral of dt/t from 1
 *    along the path; Ln z = ln z + 2 k pi i, k the net number of positive
 *    crossings of the negative real axis, so one counter-clockwise turn
 *    around 0 adds 2 pi i;
 *  - DLMF 4.2.3 / 4.2.5: ln z = ln|z| + i ph z on the principal branch;
 *  - DLMF 4.2.7: ln(x +- i0) = ln|x| +- i pi on the two banks of the cut;
 *  - DLMF 4.2.26 (section 4.2(iv)): z^a = exp(a Ln z), so one turn around 0
 *    multiplies z^a by exp(2 pi i a), and a product of powers of (z - a_k)
 *    by the product of exp(2 pi i a_k w_k) over the winding numbers w_k;
 *  - the C library (csqrt, clog, cpow) for principal values off the cut.
 * Continued values are checked to 1e-12 relative. */
#include "test_util.h"

#include "sheetwalk/func.h"
#include "sheetwalk/path.h"
#include "sheetwalk/track.h"

#define REL 1e-12 /* the accuracy goal for continued values */

/* ------------------------------------------------------------ helpers */

typedef struct run {
    sw_status st;
    double complex w0, w1;   /* value at the first and the last vertex */
    int certified;
    size_t steps;
    char msg[SW_ERROR_MSG_MAX];
} run;

/* Continue FTEXT along PATH from the principal branch at its first vertex
 * (or from a given start germ).  Optionally returns the trace and function. */
static run track_path(const char *ftext, const sw_path *path, int certify,
                      const double complex *start_hint)
{
    run r;
    memset(&r, 0, sizeof r);
    sw_func *f = NULL;
    sw_error err;
    sw_error_clear(&err);
    sw_germ g;
    int have_g = 0;
    sw_trace tr;
    sw_trace_init(&tr);
    r.st = sw_func_from_expr(&f, ftext, NULL, &err);
    if (r.st == SW_OK)
        r.st = sw_germ_init(&g, f);
    if (r.st == SW_OK)
        have_g = 1;
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.step.certify = certify;
    if (r.st == SW_OK)
        r.st = sw_track_start_germ(&g, f, path, 0, start_hint, &o, &err);
    if (r.st == SW_OK)
        r.st = sw_track_run(&tr, f, &g, path, &o, &err);
    if (r.st == SW_OK) {
        r.w0 = sw_func_value(f, &tr.vert[0]);
        r.w1 = sw_func_value(f, &tr.vert[tr.nvert - 1]);
        r.certified = tr.certified;
        r.steps = tr.steps;
    }
    snprintf(r.msg, sizeof r.msg, "%s", err.msg);
    sw_trace_clear(&tr);
    if (have_g)
        sw_germ_clear(&g);
    sw_func_free(f);
    return r;
}

static run track_text(const char *ftext, const char *ptext, int reverse, int certify)
{
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    run r;
    memset(&r, 0, sizeof r);
    r.st = sw_path_parse(&p, ptext, "path", NULL, &err);
    if (r.st != SW_OK) {
        snprintf(r.msg, sizeof r.msg, "%s", err.msg);
        return r;
    }
    if (reverse)
        sw_path_reverse(&p);
    r = track_path(ftext, &p, certify, NULL);
    sw_path_clear(&p);
    return r;
}

static void require_ok(const run *r, const char *f, const char *p)
{
    if (r->st != SW_OK) {
        print_error("continuing %s along \"%s\" failed: %s (%s)\n", f, p,
                    sw_status_name(r->st), r->msg);
        fail();
    }
}

/* ------------------------------------------------ closed loops: table */

typedef struct loop_case {
    const char *f;
    const char *path;
    int reverse;              /* follow the path backwards (clockwise circles) */
    int additive;             /* 1: difference = 2 pi i * shift; 0: ratio */
    double a_re, a_im;        /* ratio = exp(2 pi i (a_re + i a_im)); or shift */
    const char *source;
} loop_case;

static const loop_case loop_table[] = {
    /* f, path, reverse, additive, exponent (or shift in turns), source */
    {"z^(1/3)", "circle 0 2", 0, 0, 1.0 / 3, 0, "DLMF 4.2.26: z^a -> exp(2 pi i a) z^a"},
    {"sqrt(z)", "circle 0 0.5", 0, 0, 0.5, 0, "DLMF 4.2.26 with a = 1/2: sign flip"},
    {"z^0.3", "circle 0 10 200", 0, 0, 0.3, 0, "DLMF 4.2.26 with a = 0.3"},
    {"z^(-1/2)", "circle 0 1", 0, 0, -0.5, 0, "DLMF 4.2.26 with a = -1/2"},
    {"z^1.7", "circle 0 3", 0, 0, 1.7, 0, "DLMF 4.2.26 with a = 1.7"},
    {"z^(0.5+0.25i)", "circle 0 2", 0, 0, 0.5, 0.25,
     "DLMF 4.2.26 with complex a: exp(2 pi i a) = -exp(-pi/2)"},
    {"cbrt(z)", "circle 0 2; circle 0 2", 0, 0, 2.0 / 3, 0,
     "DLMF 4.2.26, two turns: exp(4 pi i/3)"},
    {"root(z, 5)", "circle 0 1.5", 1, 0, -0.2, 0,
     "DLMF 4.2.26, one clockwise turn: exp(-2 pi i/5)"},
    {"(z-1-1i)^(2/5)", "circle 1+1i 0.25 16", 0, 0, 0.4, 0,
     "DLMF 4.2.26 around the branch point 1+i"},
    {"sqrt(z^2-1)", "circle 0 3", 0, 0, 1.0, 0,
     "DLMF 4.2.26: around both +-1 the operand turns twice, exp(2 pi i) = 1"},
    {"sqrt(z^2-1)", "circle 1 1", 0, 0, 0.5, 0, "DLMF 4.2.26: around +1 only, sign flip"},
    {"sqrt(z^2-1)", "circle -1 0.5", 0, 0, 0.5, 0, "DLMF 4.2.26: around -1 only, sign flip"},
    {"z^(1/3)*(1-z)^(2/3)", "circle 0 3", 0, 0, 1.0, 0,
     "DLMF 4.2.26: exp(2 pi i (1/3 + 2/3)) = 1 around both branch points"},
    {"z^(1/3)*(1-z)^(2/3)", "circle 0 0.5", 0, 0, 1.0 / 3, 0,
     "DLMF 4.2.26: around 0 only, exp(2 pi i/3)"},
    {"z^(1/3)*(1-z)^(2/3)", "circle 1 0.5", 0, 0, 2.0 / 3, 0,
     "DLMF 4.2.26: around 1 only, exp(4 pi i/3)"},
    {"sqrt((z-1)/(z+1))", "circle 1 1", 0, 0, 0.5, 0,
     "DLMF 4.2.26: zero of the operand at 1, sign flip"},
    {"sqrt((z-1)/(z+1))", "circle -1 1", 0, 0, -0.5, 0,
     "DLMF 4.2.26: pole of the operand at -1, exp(-pi i) = -1"},
    {"sqrt((z-1)/(z+1))", "circle 0 2", 0, 0, 0.0, 0,
     "DLMF 4.2.26: zero and pole cancel, ratio 1"},
    {"z^z", "circle 0 0.5", 0, 0, 0.5, 0,
     "z^z = exp(z Ln z) (DLMF 4.2.26): one turn multiplies by exp(2 pi i z0), z0 = 0.5"},
    {"log(z)", "circle 0 2", 0, 1, 1.0, 0, "DLMF 4.2.1/4.2.6: one turn adds 2 pi i"},
    {"log(z)", "circle 0 2", 1, 1, -1.0, 0, "DLMF 4.2.6: one clockwise turn adds -2 pi i"},
    {"log(z)", "circle 0 1; circle 0 1; circle 0 1", 0, 1, 3.0, 0,
     "DLMF 4.2.6: three turns add 6 pi i"},
    {"log(1-z)", "circle 1 0.5", 0, 1, 1.0, 0,
     "DLMF 4.2.6: 1-z turns once around 0 as z turns around 1: +2 pi i"},
    {"log(z*(z-1))", "circle 0 3", 0, 1, 2.0, 0,
     "DLMF 4.2.6: the operand turns twice around 0: +4 pi i"},
    {"3*log(z) - 2*log(z-2)", "circle 1 2 128", 0, 1, 1.0, 0,
     "DLMF 4.2.6: 3 (2 pi i) - 2 (2 pi i) = 2 pi i"},
};

static void test_loops_closed_forms(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof loop_table / sizeof loop_table[0]; k++) {
        const loop_case *c = &loop_table[k];
        run r = track_text(c->f, c->path, c->reverse, 0);
        require_ok(&r, c->f, c->path);
        char what[200];
        snprintf(what, sizeof what, "%s along \"%s\"%s", c->f, c->path,
                 c->reverse ? " (reversed)" : "");
        if (c->additive) {
            double complex want = TU_2PI_I * c->a_re;
            /* relative to the size of the values involved */
            double scale = fmax(cabs(want), fmax(cabs(r.w0), 1.0));
            if (!(cabs((r.w1 - r.w0) - want) <= REL * scale)) {
                print_error("%s: difference %.17g%+.17gi, expected %.17g%+.17gi (%s)\n", what,
                            creal(r.w1 - r.w0), cimag(r.w1 - r.w0), creal(want), cimag(want),
                            c->source);
                fail();
            }
        } else {
            double complex a = CMPLX(c->a_re, c->a_im);
            double complex want = cexp(TU_2PI_I * a);
            TU_CHECK_CLOSE(r.w1 / r.w0, want, REL, what, c->source);
        }
    }
}

/* The start value of a loop is the principal value at the first vertex
 * (cli.md), and the end value is the closed form itself, not only the ratio. */
static void test_loop_values(void **state)
{
    (void)state;
    run r = track_text("z^(1/3)", "circle 0 2", 0, 0);
    require_ok(&r, "z^(1/3)", "circle 0 2");
    double c2 = cbrt(2.0);
    TU_CHECK_CLOSE(r.w0, c2, REL, "z^(1/3) at 2", "principal value 2^(1/3) (DLMF 4.2.26)");
    TU_CHECK_CLOSE(r.w1, c2 * CMPLX(-0.5, 0.86602540378443864676), REL,
                   "z^(1/3) after one turn", "2^(1/3) exp(2 pi i/3) (cli.md worked example)");
    r = track_text("log(z)", "1; 1i; -1; -1i; 1", 0, 0);
    require_ok(&r, "log(z)", "1; 1i; -1; -1i; 1");
    TU_CHECK_CLOSE(r.w0, 0, 0, "log(1)", "ln 1 = 0");
    TU_CHECK_CLOSE(r.w1, TU_2PI_I, REL, "log after 1; 1i; -1; -1i; 1",
                   "DLMF 4.2.6: 2 pi i (cli.md worked example)");
}

/* ------------------------------------------------- values along a path */

/* sqrt(z) from 1 along the upper half of the unit circle: at angle theta
 * the continued value is exp(i theta/2); at -1 it is i (the limit from above,
 * DLMF 4.2.7 with 4.2.26); along the lower half it ends at -i. */
static void test_values_along_half_circles(void **state)
{
    (void)state;
    const int N = 48;
    for (int side = 1; side >= -1; side -= 2) {
        sw_path p;
        sw_path_init(&p);
        sw_error err;
        for (int k = 0; k < N; k++) {
            double th = side * TU_PI * k / N;
            assert_int_equal(sw_path_push(&p, CMPLX(cos(th), sin(th)), SW_BANK_NONE, &err),
                             SW_OK);
        }
        assert_int_equal(sw_path_push(&p, CMPLX(-1.0, 0.0), SW_BANK_NONE, &err), SW_OK);
        static const char *const fs[3] = {"sqrt(z)", "z^(1/3)", "log(z)"};
        for (int j = 0; j < 3; j++) {
            sw_func *f;
            assert_int_equal(sw_func_from_expr(&f, fs[j], NULL, &err), SW_OK);
            sw_germ g;
            assert_int_equal(sw_germ_init(&g, f), SW_OK);
            assert_int_equal(sw_func_germ_at(&g, f, 1, SW_BANK_NONE, NULL, &err), SW_OK);
            sw_trace tr;
            sw_trace_init(&tr);
            if (sw_track_run(&tr, f, &g, &p, NULL, &err) != SW_OK) {
                print_error("%s: %s\n", fs[j], err.msg);
                fail();
            }
            for (int k = 0; k <= N; k++) {
                double th = side * TU_PI * k / N;
                double complex want = j == 0 ? cexp(CMPLX(0, th / 2))
                                      : j == 1 ? cexp(CMPLX(0, th / 3))
                                               : CMPLX(0, th);
                char what[96];
                snprintf(what, sizeof what, "%s at angle %d pi/%d", fs[j], side * k, N);
                double complex got = sw_func_value(f, &tr.vert[k]);
                if (j == 2)
                    TU_CHECK_CLOSE(got - want, 0, REL, what, "DLMF 4.2.3: ln e^{i t} = i t");
                else
                    TU_CHECK_CLOSE(got, want, REL, what,
                                   "DLMF 4.2.26: exp(a i theta) on the continued branch");
            }
            /* between vertices, from the dense log: the principal value (the path
               stays in one closed half plane; C library csqrt/cpow/clog) */
            sw_germ h;
            assert_int_equal(sw_germ_init(&h, f), SW_OK);
            for (int k = 0; k < N - 1; k++) {
                double t = k + 0.37;
                assert_int_equal(sw_trace_germ_at(&h, &tr, f, t, &p, &err), SW_OK);
                double complex z = sw_path_point(&p, t);
                double complex want = j == 0 ? csqrt(z) : j == 1 ? cpow(z, 1.0 / 3.0) : clog(z);
                TU_CHECK_CLOSE(sw_func_value(f, &h), want, REL, fs[j],
                               "principal value in the open half plane (C csqrt/cpow/clog)");
            }
            sw_germ_clear(&h);
            sw_trace_clear(&tr);
            sw_germ_clear(&g);
            sw_func_free(f);
        }
        sw_path_clear(&p);
    }
}

/* The quarter-turn vertices of the cli.md log example, both directions. */
static void test_log_vertices(void **state)
{
    (void)state;
    static const struct {
        const char *path;
        double turns[5]; /* Im log / (pi/2) at each vertex */
    } cases[] = {{"1; 1i; -1; -1i; 1", {0, 1, 2, 3, 4}}, {"1; -1i; -1; 1i; 1", {0, -1, -2, -3, -4}}};
    for (int c = 0; c < 2; c++) {
        sw_path p;
        sw_path_init(&p);
        sw_error err;
        assert_int_equal(sw_path_parse(&p, cases[c].path, "path", NULL, &err), SW_OK);
        sw_func *f;
        assert_int_equal(sw_func_from_expr(&f, "log(z)", NULL, &err), SW_OK);
        sw_germ g;
        sw_germ_init(&g, f);
        assert_int_equal(sw_track_start_germ(&g, f, &p, 0, NULL, NULL, &err), SW_OK);
        sw_trace tr;
        sw_trace_init(&tr);
        assert_int_equal(sw_track_run(&tr, f, &g, &p, NULL, &err), SW_OK);
        for (int k = 0; k < 5; k++)
            TU_CHECK_CLOSE(sw_func_value(f, &tr.vert[k]), CMPLX(0, cases[c].turns[k] * TU_PI / 2),
                           REL, cases[c].path, "DLMF 4.2.1: Ln along the path, i pi/2 per quarter");
        sw_trace_clear(&tr);
        sw_germ_clear(&g);
        sw_func_free(f);
        sw_path_clear(&p);
    }
}

/* Nested roots continue correctly: sqrt(1+sqrt(z)) around circle 0 0.5
 * flips the inner root only (|sqrt z| < 1 keeps the outer operand in the
 * right half plane): end = sqrt(1 - sqrt(0.5)).  Around circle 0 2 the outer
 * operand 1 + sqrt(2) e^{i phi}, phi from 0 to pi, turns by pi around 0 and
 * ends at 1 - sqrt 2 < 0: end = i sqrt(sqrt 2 - 1) (DLMF 4.2.26 twice). */
static void test_nested(void **state)
{
    (void)state;
    run r = track_text("sqrt(1+sqrt(z))", "circle 0 0.5", 0, 0);
    require_ok(&r, "sqrt(1+sqrt(z))", "circle 0 0.5");
    TU_CHECK_CLOSE(r.w0, sqrt(1 + sqrt(0.5)), REL, "sqrt(1+sqrt(z)) at 0.5", "principal value");
    TU_CHECK_CLOSE(r.w1, sqrt(1 - sqrt(0.5)), REL, "sqrt(1+sqrt(z)) after a turn of radius 0.5",
                   "inner root flips (DLMF 4.2.26), outer stays principal");
    r = track_text("sqrt(1+sqrt(z))", "circle 0 2", 0, 0);
    require_ok(&r, "sqrt(1+sqrt(z))", "circle 0 2");
    TU_CHECK_CLOSE(r.w1, CMPLX(0, sqrt(sqrt(2.0) - 1)), REL,
                   "sqrt(1+sqrt(z)) after a turn of radius 2",
                   "outer operand ends at 1 - sqrt 2 with phase pi (DLMF 4.2.26)");
    /* a single-valued function of a root: exp(sqrt z) -> exp(-sqrt z) */
    r = track_text("exp(sqrt(z))", "circle 0 4", 0, 0);
    require_ok(&r, "exp(sqrt(z))", "circle 0 4");
    TU_CHECK_CLOSE(r.w1 / r.w0, exp(-4.0), REL, "exp(sqrt(z)) around 0 from 4",
                   "sqrt(4) = 2 -> -2 (DLMF 4.2.26): ratio exp(-4)");
}

/* ------------------------------------------------------------ bank marks */

static void test_bank_germs(void **state)
{
    (void)state;
    static const struct {
        const char *f;
        double x;
        int bank;
        double re, im;
        const char *source;
    } cases[] = {
        {"sqrt(z)", -2, SW_BANK_UPPER, 0, 1.41421356237309504880,
         "sqrt(-2+i0) = i sqrt 2 (DLMF 4.2.7 with 4.2.26)"},
        {"sqrt(z)", -2, SW_BANK_LOWER, 0, -1.41421356237309504880,
         "sqrt(-2-i0) = -i sqrt 2 (DLMF 4.2.7 with 4.2.26)"},
        {"log(z)", -1, SW_BANK_UPPER, 0, TU_PI, "ln(-1+i0) = i pi (DLMF 4.2.7)"},
        {"log(z)", -1, SW_BANK_LOWER, 0, -TU_PI, "ln(-1-i0) = -i pi (DLMF 4.2.7)"},
        {"log(z)", -3, SW_BANK_UPPER, 1.09861228866810969140, TU_PI,
         "ln(-3+i0) = ln 3 + i pi (DLMF 4.2.7)"},
        {"z^(1/3)", -8, SW_BANK_UPPER, 1, 1.73205080756887729353,
         "(-8+i0)^(1/3) = 2 exp(i pi/3) (DLMF 4.2.7, 4.2.26)"},
        {"z^(1/3)", -8, SW_BANK_LOWER, 1, -1.73205080756887729353,
         "(-8-i0)^(1/3) = 2 exp(-i pi/3) (DLMF 4.2.7, 4.2.26)"},
        {"sqrt(1-z)", 5, SW_BANK_UPPER, 0, -2,
         "sqrt(1-(5+i0)) = sqrt(-4-i0) = -2i (DLMF 4.2.7, 4.2.26)"},
        {"sqrt(1-z)", 5, SW_BANK_LOWER, 0, 2, "sqrt(1-(5-i0)) = sqrt(-4+i0) = 2i"},
        {"sqrt(z)", 3, SW_BANK_UPPER, 1.73205080756887729353, 0,
         "no cut at x = 3: both banks give sqrt 3"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        sw_func *f;
        sw_error err;
        assert_int_equal(sw_func_from_expr(&f, cases[k].f, NULL, &err), SW_OK);
        sw_germ g;
        sw_germ_init(&g, f);
        sw_error_clear(&err);
        if (sw_func_germ_at(&g, f, cases[k].x, cases[k].bank, NULL, &err) != SW_OK) {
            print_error("%s at %g%+di0: %s\n", cases[k].f, cases[k].x, cases[k].bank, err.msg);
            fail();
        }
        TU_CHECK_CLOSE(sw_func_value(f, &g), CMPLX(cases[k].re, cases[k].im), REL, cases[k].f,
                       cases[k].source);
        sw_germ_clear(&g);
        sw_func_free(f);
    }
}

/* Paths with bank marks: the +-i0 prescription passes the branch point on
 * the marked side; crossing the cut between the banks is continuous. */
static void test_bank_paths(void **state)
{
    (void)state;
    static const struct {
        const char *f, *path;
        double re0, im0, re1, im1;
        const char *source;
    } cases[] = {
        {"sqrt(z)", "-2+i0; 2+i0", 0, 1.41421356237309504880, 1.41421356237309504880, 0,
         "upper bank: i sqrt 2 to sqrt 2, the principal branch on the closed upper half plane "
         "(DLMF 4.2.7, 4.2.26)"},
        {"sqrt(z)", "-2-i0; 2-i0", 0, -1.41421356237309504880, 1.41421356237309504880, 0,
         "lower bank: -i sqrt 2 to sqrt 2 (DLMF 4.2.7, 4.2.26)"},
        {"sqrt(z)", "-2-i0; -2+i0", 0, -1.41421356237309504880, 0, -1.41421356237309504880,
         "crossing the cut upwards (negative sense) stays continuous: Ln = ln - 2 pi i on the "
         "upper bank (DLMF 4.2.6), value -i sqrt 2"},
        {"log(z)", "-1-i0; -1+i0", 0, -TU_PI, 0, -TU_PI,
         "crossing the cut upwards: ln(-1+i0) - 2 pi i = -i pi (DLMF 4.2.6, 4.2.7)"},
        {"log(z)", "-1+i0; 1+i0", 0, TU_PI, 0, 0, "upper bank from -1 to 1: i pi to 0"},
        {"z^(1/3)", "-8+i0; 8+i0; 8-i0; -8-i0", 1, 1.73205080756887729353, 1,
         -1.73205080756887729353,
         "from the upper to the lower bank passing right of 0 (DLMF 4.2.7, 4.2.26)"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        run r = track_text(cases[k].f, cases[k].path, 0, 0);
        require_ok(&r, cases[k].f, cases[k].path);
        char what[160];
        snprintf(what, sizeof what, "%s along \"%s\", start", cases[k].f, cases[k].path);
        TU_CHECK_CLOSE(r.w0, CMPLX(cases[k].re0, cases[k].im0), REL, what, cases[k].source);
        snprintf(what, sizeof what, "%s along \"%s\", end", cases[k].f, cases[k].path);
        TU_CHECK_CLOSE(r.w1, CMPLX(cases[k].re1, cases[k].im1), REL, what, cases[k].source);
    }
}

/* Without a bank mark the first vertex takes the principal value (cli.md);
 * on the negative real axis that is the value of DLMF 4.2.5 (ph z = pi). */
static void test_start_on_negative_axis(void **state)
{
    (void)state;
    static const struct {
        const char *f, *path;
        double re, im;
        const char *source;
    } cases[] = {
        {"sqrt(z)", "-2; -2+1i", 0, 1.41421356237309504880,
         "principal sqrt(-2) = i sqrt 2 (DLMF 4.2.5, 4.2.26; C csqrt(-2))"},
        {"log(z)", "-1; -1+1i", 0, TU_PI, "principal ln(-1) = i pi (DLMF 4.2.5)"},
        {"z^(1/3)", "-8; -8+1i", 1, 1.73205080756887729353,
         "principal (-8)^(1/3) = 1 + i sqrt 3 (DLMF 4.2.5, 4.2.26)"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        run r = track_text(cases[k].f, cases[k].path, 0, 0);
        require_ok(&r, cases[k].f, cases[k].path);
        TU_CHECK_CLOSE(r.w0, CMPLX(cases[k].re, cases[k].im), REL, cases[k].f, cases[k].source);
    }
}

/* ---------------------------------------------- singular paths refused */

static void test_through_branch_point_refused(void **state)
{
    (void)state;
    static const struct {
        const char *f, *path;
        const char *node; /* the multivalued node the message must name */
    } cases[] = {
        {"sqrt(z)", "-1; 1", "sqrt(z)"},
        {"log(z)", "-1-1i; 1+1i", "log(z)"},
        {"sqrt(z)", "1; 0", "sqrt(z)"},               /* ends on the branch point */
        {"sqrt(z)", "0; 1", "sqrt(z)"},               /* starts on it */
        {"sqrt(z^2-1)", "0; 2", "sqrt(z^2-1)"},
        {"z^(1/3)*(1-z)^(2/3)", "0.5; 1.5", "(1-z)^(2/3)"},
        {"z^(1/3)*(1-z)^(2/3)", "0.5+0.5i; -0.5-0.5i", "z^(1/3)"},
        {"sqrt(1/z)", "-1; 1", "sqrt(1/z)"},          /* a pole of the operand */
        {"log(z-1-1i)", "0; 2+2i", "log(z-1-1i)"},
        {"sqrt(z)", "1; 1i; -1; -1i; 1; 0.5; 0", "sqrt(z)"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        run r = track_text(cases[k].f, cases[k].path, 0, 0);
        if (r.st != SW_ESINGULAR || strstr(r.msg, cases[k].node) == NULL ||
            strchr(r.msg, '\n') != NULL) {
            print_error("%s along \"%s\": status %s, message \"%s\"; expected a refusal "
                        "(SW_ESINGULAR) naming %s\n", cases[k].f, cases[k].path,
                        sw_status_name(r.st), r.msg, cases[k].node);
            fail();
        }
    }
    /* the refusal also comes in certified mode */
    run r = track_text("sqrt(z)", "-1; 1", 0, 1);
    assert_int_equal(r.st, SW_ESINGULAR);
}

/* Paths that stay 1e-6 of their scale away from every branch point are not
 * refused and do not jump sheet: compared with the closed form. */
static void test_near_miss(void **state)
{
    (void)state;
    /* straight lines above and below 0; scale 2, distance 2e-6 = 1e-6 * scale */
    static const struct {
        const char *f, *path;
        double complex z0, z1;
    } lines[] = {
        {"sqrt(z)", "-1+2e-6i; 1+2e-6i", CMPLX(-1, 2e-6), CMPLX(1, 2e-6)},
        {"sqrt(z)", "-1-2e-6i; 1-2e-6i", CMPLX(-1, -2e-6), CMPLX(1, -2e-6)},
        {"log(z)", "-1+2e-6i; 1+2e-6i", CMPLX(-1, 2e-6), CMPLX(1, 2e-6)},
        {"log(z)", "1-2e-6i; -1-2e-6i", CMPLX(1, -2e-6), CMPLX(-1, -2e-6)},
        {"z^(1/3)", "-1+2e-6i; 1+2e-6i", CMPLX(-1, 2e-6), CMPLX(1, 2e-6)},
    };
    for (size_t k = 0; k < sizeof lines / sizeof lines[0]; k++) {
        run r = track_text(lines[k].f, lines[k].path, 0, 0);
        require_ok(&r, lines[k].f, lines[k].path);
        int j = lines[k].f[0] == 's' ? 0 : lines[k].f[0] == 'l' ? 1 : 2;
        double complex z0 = lines[k].z0, z1 = lines[k].z1;
        double complex w0 = j == 0 ? csqrt(z0) : j == 1 ? clog(z0) : cpow(z0, 1.0 / 3.0);
        double complex w1 = j == 0 ? csqrt(z1) : j == 1 ? clog(z1) : cpow(z1, 1.0 / 3.0);
        const char *src = "the path stays in one open half plane, where the principal branch "
                          "is the continuation (DLMF 4.2.2; C csqrt/clog/cpow)";
        if (j == 1) {
            /* a logarithm's error is absolute (d ln z = dz/z): measured against
               max(|ln z|, 1) here; the strictly relative check near ln z = 0 is
               test_log_relative_accuracy */
            TU_CHECK_CLOSE((r.w0 - w0) / fmax(cabs(w0), 1.0), 0, REL, lines[k].path, src);
            TU_CHECK_CLOSE((r.w1 - w1) / fmax(cabs(w1), 1.0), 0, REL, lines[k].path, src);
        } else {
            TU_CHECK_CLOSE(r.w0, w0, REL, lines[k].path, src);
            TU_CHECK_CLOSE(r.w1, w1, REL, lines[k].path, src);
        }
    }
    /* a loop whose sides pass 1e-6 of its scale from the branch point 0 */
    double d = 4.2e-6;
    char path[200];
    snprintf(path, sizeof path, "0.5; %.17gi; -1; -%.17gi; 0.5", d, d);
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    assert_int_equal(sw_path_parse(&p, path, "path", NULL, &err), SW_OK);
    assert_true(tu_polyline_distance(p.z, p.n, 0) >= 1e-6 * sw_path_scale(&p));
    TU_CHECK_CLOSE(tu_winding(p.z, p.n, 0), 1, 1e-12, "diamond", "one turn around 0");
    static const struct {
        const char *f;
        double complex want;
        int additive;
        const char *source;
    } loops[] = {
        {"z^(1/3)", CMPLX(-0.5, 0.86602540378443864676), 0, "DLMF 4.2.26: exp(2 pi i/3)"},
        {"sqrt(z)", -1, 0, "DLMF 4.2.26: -1"},
        {"log(z)", CMPLX(0, 2 * TU_PI), 1, "DLMF 4.2.6: +2 pi i"},
        {"z^(1/3)*(1-z)^(2/3)", CMPLX(-0.5, 0.86602540378443864676), 0,
         "DLMF 4.2.26: around 0 only, exp(2 pi i/3)"},
    };
    for (size_t k = 0; k < sizeof loops / sizeof loops[0]; k++) {
        run r = track_path(loops[k].f, &p, 0, NULL);
        require_ok(&r, loops[k].f, path);
        if (loops[k].additive)
            TU_CHECK_CLOSE(r.w1 - r.w0, loops[k].want, REL, loops[k].f, loops[k].source);
        else
            TU_CHECK_CLOSE(r.w1 / r.w0, loops[k].want, REL, loops[k].f, loops[k].source);
    }
    sw_path_clear(&p);
    /* a loop around +1 only that passes 1e-6 of its scale from +1 */
    snprintf(path, sizeof path, "2; 1+%.17gi; 0.5; 1-%.17gi; 2", d, d);
    assert_int_equal(sw_path_parse(&p, path, "path", NULL, &err), SW_OK);
    assert_true(tu_polyline_distance(p.z, p.n, 1) >= 1e-6 * sw_path_scale(&p));
    run r = track_path("sqrt(z^2-1)", &p, 0, NULL);
    require_ok(&r, "sqrt(z^2-1)", path);
    TU_CHECK_CLOSE(r.w1 / r.w0, -1, REL, "sqrt(z^2-1) around +1 passing 1e-6 away",
                   "DLMF 4.2.26: -1");
    r = track_path("z^(1/3)*(1-z)^(2/3)", &p, 0, NULL);
    require_ok(&r, "z^(1/3)*(1-z)^(2/3)", path);
    TU_CHECK_CLOSE(r.w1 / r.w0, CMPLX(-0.5, -0.86602540378443864676), REL,
                   "z^(1/3)*(1-z)^(2/3) around 1 passing 1e-6 away",
                   "DLMF 4.2.26: exp(4 pi i/3)");
    sw_path_clear(&p);
}

/* Continued logarithms keep full relative accuracy where ln z is small.
 * KNOWN BUG: the real part of the unwrapped logarithm L is accumulated step
 * by step, so its absolute error (~1e-16) stays when the value itself is
 * tiny: log(z) from 2 via 1+i to 1+1e-8i gives 0 + 1e-8 i against
 * ln(1+1e-8 i) = 5e-17 + 1e-8 i (relative error 5e-9).  Taking Re L =
 * ln|u| (and Im L = Arg u + 2 pi k) at evaluation would give the principal
 * accuracy. */
static void test_log_relative_accuracy(void **state)
{
    (void)state;
    static const struct {
        const char *path;
        double complex z1;
    } cases[] = {
        {"2; 1+1i; 1+1e-8i", CMPLX(1, 1e-8)},
        {"-1+2e-6i; 1+2e-6i", CMPLX(1, 2e-6)},
        {"0.5; 2i; 1.000001", 1.000001},
    };
    int bad = 0;
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        run r = track_text("log(z)", cases[k].path, 0, 0);
        require_ok(&r, "log(z)", cases[k].path);
        double complex want = clog(cases[k].z1);
        if (!(tu_relerr(r.w1, want) <= REL)) {
            print_error("log(z) along %s: got %.17g%+.17gi, expected %.17g%+.17gi (the path "
                        "stays in one open half plane: principal ln, DLMF 4.2.2; C clog); "
                        "relative error %.3g\n", cases[k].path, creal(r.w1), cimag(r.w1),
                        creal(want), cimag(want), tu_relerr(r.w1, want));
            bad++;
        }
    }
    assert_int_equal(bad, 0);
}

/* ------------------------------------------------------ chosen start sheet */

static void test_start_sheet(void **state)
{
    (void)state;
    sw_func *f;
    sw_error err;
    assert_int_equal(sw_func_from_expr(&f, "sqrt(z)", NULL, &err), SW_OK);
    sw_germ g;
    sw_germ_init(&g, f);
    double complex hint = -2.1;
    assert_int_equal(sw_func_germ_at(&g, f, 4, SW_BANK_NONE, &hint, &err), SW_OK);
    TU_CHECK_CLOSE(sw_func_value(f, &g), -2, REL, "sqrt at 4 nearest -2.1",
                   "the two values of 4^(1/2) are +-2");
    hint = CMPLX(0, 2); /* equally far from +2 and -2 */
    sw_error_clear(&err);
    assert_int_equal(sw_func_germ_at(&g, f, 4, SW_BANK_NONE, &hint, &err), SW_EAMBIGUOUS);
    assert_true(err.msg[0] != '\0');
    /* the sheet fixed at a later vertex, carried back to the first:
       w(-1) = -i on the path 1; i; -1 is the negative of the principal branch */
    sw_path p;
    sw_path_init(&p);
    assert_int_equal(sw_path_parse(&p, "1; 1i; -1+0.1i", "path", NULL, &err), SW_OK);
    hint = csqrt(CMPLX(-1, 0.1)) * -1;
    assert_int_equal(sw_track_start_germ(&g, f, &p, 2, &hint, NULL, &err), SW_OK);
    TU_CHECK_CLOSE(sw_func_value(f, &g), -1, REL, "sqrt carried back to 1",
                   "continuation of -sqrt(z) along the upper half plane (DLMF 4.2.26)");
    sw_path_clear(&p);
    sw_germ_clear(&g);
    sw_func_free(f);
    /* log: the branch nearest a value picks ln z + 2 pi i k */
    assert_int_equal(sw_func_from_expr(&f, "log(z)", NULL, &err), SW_OK);
    sw_germ_init(&g, f);
    hint = CMPLX(0, 12.5);
    assert_int_equal(sw_func_germ_at(&g, f, CMPLX(0, 1), SW_BANK_NONE, &hint, &err), SW_OK);
    TU_CHECK_CLOSE(sw_func_value(f, &g), CMPLX(0, TU_PI / 2 + 4 * TU_PI), REL,
                   "log at i nearest 12.5i", "DLMF 4.2.6: ln i + 2 pi i k, k = 2");
    sw_germ_clear(&g);
    sw_func_free(f);
}

/* ------------------------------------------------------------ certified */

static void test_certified(void **state)
{
    (void)state;
    static const struct {
        const char *f, *path;
        double complex ratio;
        const char *source;
    } cases[] = {
        {"z^(1/3)", "circle 0 2", CMPLX(-0.5, 0.86602540378443864676), "DLMF 4.2.26"},
        {"sqrt(z^2-1)", "circle 1 1", -1, "DLMF 4.2.26"},
        {"z^(1/3)*(1-z)^(2/3)", "circle 0 3", 1, "DLMF 4.2.26: exponents sum to 1"},
        {"sqrt(1+sqrt(z))", "circle 0 0.5", 0, "nested: checked against double mode only"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        run d = track_text(cases[k].f, cases[k].path, 0, 0);
        run c = track_text(cases[k].f, cases[k].path, 0, 1);
        require_ok(&d, cases[k].f, cases[k].path);
        require_ok(&c, cases[k].f, cases[k].path);
        if (!c.certified) {
            print_error("%s along %s: not certified in certified mode\n", cases[k].f,
                        cases[k].path);
            fail();
        }
        assert_false(d.certified); /* double mode never claims a proof */
        TU_CHECK_CLOSE(c.w0, d.w0, REL, cases[k].f, "certified start = double start");
        TU_CHECK_CLOSE(c.w1, d.w1, REL, cases[k].f, "certified end = double end");
        if (cases[k].ratio != 0)
            TU_CHECK_CLOSE(c.w1 / c.w0, cases[k].ratio, REL, cases[k].f, cases[k].source);
    }
}

/* Short steps are as provable as long ones.
 * KNOWN BUG: the certified step demands that the double-precision L at the
 * step's end lie inside the ball enclosure computed over a disk whose edge
 * passes through that end point, with no allowance for the double rounding
 * error; for short steps (below ~1e-9 of |u|) the containment then fails about
 * half the time.  A segment of length 1e-15 is never certified, a sliver step
 * left by rounding at the end of a segment makes a whole loop uncertified, and
 * after a tiny segment the step hardly grows again: "1; 1+1e-15i; 2" takes
 * about 1e5 steps in certified mode and ends uncertified (50 in double mode). */
static void test_certified_short_steps(void **state)
{
    (void)state;
    static const char *const paths[] = {
        "1; 1+1e-15",
        "1; 1+1e-15i; 2",
        /* a loop 0.567 from the branch point: uncertified because of a 8.9e-16 sliver
           step at the end of its last segment (property test, SW_SEED=20, case 6) */
        "(-2.2381651352282668)+(-0.7902001560955707)*i; "
        "(-1.0929608970878579)+(-0.70724110634498283)*i; "
        "(0.18296960476180057)+(-1.4193322783019136)*i; "
        "(-1.8438437279625082)+(-1.3852178912674873)*i; "
        "(2.3915775088983136)+(-0.25964506084604322)*i; "
        "(-2.2381651352282668)+(-0.7902001560955707)*i",
    };
    static const char *const fs[] = {"z^(1/3)", "z^(1/3)", "(z-0.375+1.953125i)^(2/3)"};
    for (size_t k = 0; k < sizeof paths / sizeof paths[0]; k++) {
        sw_path p;
        sw_path_init(&p);
        sw_error err;
        assert_int_equal(sw_path_parse(&p, paths[k], "path", NULL, &err), SW_OK);
        sw_func *f;
        assert_int_equal(sw_func_from_expr(&f, fs[k], NULL, &err), SW_OK);
        sw_germ g;
        sw_germ_init(&g, f);
        assert_int_equal(sw_func_germ_at(&g, f, p.z[0], SW_BANK_NONE, NULL, &err), SW_OK);
        sw_track_opts o;
        sw_track_opts_init(&o);
        o.step.certify = 1;
        o.max_steps = 20000; /* double mode needs at most a few hundred here */
        sw_trace tr;
        sw_trace_init(&tr);
        sw_status st = sw_track_run(&tr, f, &g, &p, &o, &err);
        if (st != SW_OK || !tr.certified) {
            print_error("%s along \"%s\" in certified mode: %s, certified %d, %zu steps\n",
                        fs[k], paths[k], st == SW_OK ? "ok" : err.msg, tr.certified, tr.steps);
            fail();
        }
        sw_trace_clear(&tr);
        sw_germ_clear(&g);
        sw_func_free(f);
        sw_path_clear(&p);
    }
}

/* ------------------------------------------------------- property tests */

#define MAXF 4

/* A random product of powers prod (z - a_k)^(p_k/q_k) (with an optional
 * sum of logs instead), its branch points and exponents. */
typedef struct rfunc {
    int m;
    int logs;                   /* 1: sum c_k log(z - a_k); 0: product of powers */
    double complex a[MAXF];
    double complex e[MAXF];     /* exponents (or log coefficients) */
    char text[600];
} rfunc;

static void random_func(rfunc *rf, tu_rng *rng, int logs)
{
    for (;;) {
        rf->m = (int)tu_int(rng, 1, MAXF);
        rf->logs = logs;
        for (int k = 0; k < rf->m; k++) {
            /* points on a 1/64 grid in [-2, 2]^2 */
            rf->a[k] = CMPLX(tu_int(rng, -128, 128) / 64.0, tu_int(rng, -128, 128) / 64.0);
        }
        int ok = 1;
        for (int k = 0; k < rf->m; k++)
            for (int j = 0; j < k; j++)
                if (cabs(rf->a[k] - rf->a[j]) < 0.3)
                    ok = 0;
        if (ok)
            break;
    }
    size_t used = 0;
    for (int k = 0; k < rf->m; k++) {
        char num[80];
        long p = tu_int(rng, -5, 5), q = tu_int(rng, 1, 6);
        if (p == 0)
            p = 1;
        if (logs) {
            rf->e[k] = CMPLX((double)p / (double)q, 0);
            snprintf(num, sizeof num, "(%ld/%ld)", p, q);
        } else if (tu_int(rng, 0, 4) == 0) { /* now and then a complex exponent */
            double im = tu_int(rng, -4, 4) / 8.0;
            rf->e[k] = CMPLX((double)p / (double)q, im);
            snprintf(num, sizeof num, "(%ld/%ld+(%.17g)*i)", p, q, im);
        } else {
            rf->e[k] = (double)p / (double)q;
            snprintf(num, sizeof num, "(%ld/%ld)", p, q);
        }
        if (logs)
            used += (size_t)snprintf(rf->text + used, sizeof rf->text - used,
                                     "%s%s*log(z-(%.17g)-(%.17g)*i)", k ? " + " : "", num,
                                     creal(rf->a[k]), cimag(rf->a[k]));
        else
            used += (size_t)snprintf(rf->text + used, sizeof rf->text - used,
                                     "%s(z-(%.17g)-(%.17g)*i)^%s", k ? "*" : "", creal(rf->a[k]),
                                     cimag(rf->a[k]), num);
    }
}

/* The closed form of the branch continued from the principal one along the
 * polyline z[0..n-1]: each factor's argument is the principal argument at
 * z[0] plus the angle increments along the path (DLMF 4.2.1: Ln is the
 * integral of dt/t along the path), then DLMF 4.2.26 (or the sum of logs). */
static double complex closed_form(const rfunc *rf, const double complex *z, size_t n)
{
    double complex v = rf->logs ? 0 : 1;
    for (int k = 0; k < rf->m; k++) {
        double th = carg(z[0] - rf->a[k]);
        for (size_t j = 0; j + 1 < n; j++)
            th += carg((z[j + 1] - rf->a[k]) / (z[j] - rf->a[k]));
        double complex L = CMPLX(log(cabs(z[n - 1] - rf->a[k])), th);
        if (rf->logs)
            v += rf->e[k] * L;
        else
            v *= cexp(rf->e[k] * L);
    }
    return v;
}

/* Distance of the polyline from every branch point and from the cuts at the
 * first vertex (so that the principal start is unambiguous). */
static int path_is_safe(const rfunc *rf, const double complex *z, size_t n, double margin)
{
    for (int k = 0; k < rf->m; k++) {
        if (tu_polyline_distance(z, n, rf->a[k]) < margin)
            return 0;
        if (fabs(carg(z[0] - rf->a[k])) > TU_PI - 1e-3)
            return 0;
    }
    return 1;
}

/* "f = TEXT, path = V0; V1; ..." for failure messages (paste into the CLI). */
static const char *describe_case(char *buf, size_t len, const rfunc *rf, const double complex *z,
                                 size_t n)
{
    size_t used = (size_t)snprintf(buf, len, "-f \"%s\" -p \"", rf->text);
    for (size_t j = 0; j < n && used < len; j++) {
        char v[96];
        tu_fmt_vertex(v, sizeof v, z[j]);
        used += (size_t)snprintf(buf + used, len - used, "%s%s", j ? "; " : "", v);
    }
    if (used < len)
        snprintf(buf + used, len - used, "\"");
    return buf;
}

static void random_polyline(double complex *z, size_t n, tu_rng *rng, double complex c, double r)
{
    for (size_t j = 0; j < n; j++)
        z[j] = c + CMPLX(tu_range(rng, -r, r), tu_range(rng, -r, r));
}

static void make_path(sw_path *p, const double complex *z, size_t n)
{
    sw_error err;
    sw_path_clear(p);
    for (size_t j = 0; j < n; j++)
        assert_int_equal(sw_path_push(p, z[j], SW_BANK_NONE, &err), SW_OK);
}

/* Values at the end of random open polylines agree with the closed form;
 * the path followed by its reverse returns the start value. */
static void test_property_polyline_and_reverse(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 9101);
    double complex z[24];
    sw_path p;
    sw_path_init(&p);
    for (int icase = 0; icase < 200; icase++) {
        rfunc rf;
        random_func(&rf, &rng, icase % 4 == 3);
        size_t n;
        do {
            n = (size_t)tu_int(&rng, 2, 12);
            random_polyline(z, n, &rng, 0, 3);
        } while (!path_is_safe(&rf, z, n, 0.02));
        /* forward: closed form at the end */
        make_path(&p, z, n);
        char desc[4096];
        describe_case(desc, sizeof desc, &rf, z, n);
        run r = track_path(rf.text, &p, 0, NULL);
        if (r.st != SW_OK) {
            print_error("seed %llu case %d: %s: %s\n", (unsigned long long)rng.seed, icase,
                        desc, r.msg);
            fail();
        }
        double complex want = closed_form(&rf, z, n);
        if (rf.logs) {
            double scale = fmax(cabs(want), 1.0);
            TU_PROP_CLOSE(&rng, icase, (r.w1 - want) / scale, 0, REL, desc,
                          "DLMF 4.2.1: Ln along the path");
        } else {
            TU_PROP_CLOSE(&rng, icase, r.w1, want, REL, desc,
                          "DLMF 4.2.1 with 4.2.26: exp(a Ln) along the path");
        }
        /* the path followed by its reverse, as one path: back to the start */
        size_t m = 2 * n - 1;
        double complex zz[48];
        for (size_t j = 0; j < n; j++)
            zz[j] = z[j];
        for (size_t j = 1; j < n; j++)
            zz[n - 1 + j] = z[n - 1 - j];
        make_path(&p, zz, m);
        run b = track_path(rf.text, &p, 0, NULL);
        if (b.st != SW_OK) {
            print_error("seed %llu case %d: %s (there and back): %s\n",
                        (unsigned long long)rng.seed, icase, desc, b.msg);
            fail();
        }
        if (rf.logs)
            TU_PROP_CLOSE(&rng, icase, (b.w1 - b.w0) / fmax(cabs(b.w0), 1.0), 0, REL, desc,
                          "a path and its reverse: Ln returns to its start (DLMF 4.2.1)");
        else
            TU_PROP_CLOSE(&rng, icase, b.w1, b.w0, REL, desc,
                          "a path and its reverse return the start value");
    }
    sw_path_clear(&p);
}

/* Random closed polylines: the ratio is the product of exp(2 pi i a_k w_k)
 * with the winding numbers w_k computed independently (DLMF 4.2.26); for
 * loops around no branch point the ratio is 1 (the loop is trivial). */
static void test_property_loops(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 9203);
    double complex z[16];
    sw_path p;
    sw_path_init(&p);
    int trivial = 0, nontrivial = 0;
    for (int icase = 0; icase < 200; icase++) {
        rfunc rf;
        random_func(&rf, &rng, icase % 5 == 4);
        int want_trivial = icase % 2 == 0;
        size_t n;
        int w[MAXF];
        for (;;) {
            n = (size_t)tu_int(&rng, 3, 9);
            double complex c = CMPLX(tu_range(&rng, -2, 2), tu_range(&rng, -2, 2));
            double r = want_trivial ? tu_range(&rng, 0.1, 1.5) : tu_range(&rng, 1, 3);
            random_polyline(z, n, &rng, c, r);
            z[n] = z[0];
            if (!path_is_safe(&rf, z, n + 1, 0.02))
                continue;
            int all_zero = 1;
            for (int k = 0; k < rf.m; k++) {
                double t = tu_winding(z, n + 1, rf.a[k]);
                w[k] = (int)lround(t);
                assert_true(fabs(t - w[k]) < 1e-9);
                if (w[k] != 0)
                    all_zero = 0;
            }
            if (all_zero == want_trivial)
                break;
        }
        n += 1;
        make_path(&p, z, n);
        char desc[4096];
        describe_case(desc, sizeof desc, &rf, z, n);
        run r = track_path(rf.text, &p, 0, NULL);
        if (r.st != SW_OK) {
            print_error("seed %llu case %d: %s: %s\n", (unsigned long long)rng.seed, icase,
                        desc, r.msg);
            fail();
        }
        if (rf.logs) {
            double complex want = 0;
            for (int k = 0; k < rf.m; k++)
                want += rf.e[k] * TU_2PI_I * (double)w[k];
            double scale = fmax(fmax(cabs(want), cabs(r.w0)), 1.0);
            TU_PROP_CLOSE(&rng, icase, (r.w1 - r.w0 - want) / scale, 0, REL, desc,
                          "DLMF 4.2.6: sum of c_k 2 pi i w_k");
        } else {
            double complex want = 1;
            for (int k = 0; k < rf.m; k++)
                want *= cexp(rf.e[k] * TU_2PI_I * (double)w[k]);
            TU_PROP_CLOSE(&rng, icase, r.w1 / r.w0, want, REL, desc,
                          want_trivial ? "a loop around no branch point is trivial"
                                       : "DLMF 4.2.26: product of exp(2 pi i a_k w_k)");
        }
        if (want_trivial)
            trivial++;
        else
            nontrivial++;
    }
    assert_true(trivial >= 50 && nontrivial >= 50);
    sw_path_clear(&p);
}

/* Concatenated paths compose: tracking A, then B from A's end germ, equals
 * tracking A+B; both equal the closed form. */
static void test_property_concatenation(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 9307);
    double complex z[24];
    sw_path pa, pb, pab;
    sw_path_init(&pa);
    sw_path_init(&pb);
    sw_path_init(&pab);
    sw_track_opts o;
    sw_track_opts_init(&o);
    for (int icase = 0; icase < 150; icase++) {
        rfunc rf;
        random_func(&rf, &rng, icase % 4 == 1);
        size_t na, nb;
        do {
            na = (size_t)tu_int(&rng, 2, 8);
            nb = (size_t)tu_int(&rng, 2, 8);
            random_polyline(z, na + nb - 1, &rng, 0, 3);
        } while (!path_is_safe(&rf, z, na + nb - 1, 0.02));
        make_path(&pa, z, na);
        make_path(&pb, z + na - 1, nb);
        make_path(&pab, z, na + nb - 1);
        char desc[4096];
        describe_case(desc, sizeof desc, &rf, z, na + nb - 1);
        sw_func *f;
        sw_error err;
        assert_int_equal(sw_func_from_expr(&f, rf.text, NULL, &err), SW_OK);
        sw_germ g;
        sw_germ_init(&g, f);
        assert_int_equal(sw_func_germ_at(&g, f, z[0], SW_BANK_NONE, NULL, &err), SW_OK);
        sw_trace ta, tb, tab;
        sw_trace_init(&ta);
        sw_trace_init(&tb);
        sw_trace_init(&tab);
        if (sw_track_run(&ta, f, &g, &pa, &o, &err) != SW_OK ||
            sw_track_run(&tb, f, &ta.vert[ta.nvert - 1], &pb, &o, &err) != SW_OK ||
            sw_track_run(&tab, f, &g, &pab, &o, &err) != SW_OK) {
            print_error("seed %llu case %d: %s: %s\n", (unsigned long long)rng.seed, icase,
                        desc, err.msg);
            fail();
        }
        double complex wb = sw_func_value(f, &tb.vert[tb.nvert - 1]);
        double complex wab = sw_func_value(f, &tab.vert[tab.nvert - 1]);
        double complex want = closed_form(&rf, z, na + nb - 1);
        double scale = rf.logs ? fmax(cabs(want), 1.0) : cabs(want);
        TU_PROP_CLOSE(&rng, icase, (wb - wab) / scale, 0, REL, desc,
                      "A then B equals A+B (composition of continuations)");
        TU_PROP_CLOSE(&rng, icase, (wab - want) / scale, 0, REL, desc,
                      "closed form along A+B (DLMF 4.2.1 with 4.2.26)");
        /* the vertex germs of A+B at the junction agree with A's end */
        TU_PROP_CLOSE(&rng, icase,
                      (sw_func_value(f, &tab.vert[na - 1]) -
                       sw_func_value(f, &ta.vert[ta.nvert - 1])) /
                          fmax(cabs(sw_func_value(f, &ta.vert[ta.nvert - 1])), 1e-300),
                      0, REL, desc, "junction value");
        sw_trace_clear(&ta);
        sw_trace_clear(&tb);
        sw_trace_clear(&tab);
        sw_germ_clear(&g);
        sw_func_free(f);
    }
    sw_path_clear(&pa);
    sw_path_clear(&pb);
    sw_path_clear(&pab);
}

/* Certified runs of random loops contain the double-precision result (the
 * same branch) and are certified.  (With other seeds this fails through the
 * bug of test_certified_short_steps: a sliver step at the end of a segment.) */
static void test_property_certified(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 9409);
    double complex z[16];
    sw_path p;
    sw_path_init(&p);
    for (int icase = 0; icase < 40; icase++) {
        rfunc rf;
        random_func(&rf, &rng, 0);
        size_t n;
        do {
            n = (size_t)tu_int(&rng, 3, 7);
            random_polyline(z, n, &rng, 0, 2.5);
            z[n] = z[0];
        } while (!path_is_safe(&rf, z, n + 1, 0.05));
        make_path(&p, z, n + 1);
        char desc[4096];
        describe_case(desc, sizeof desc, &rf, z, n + 1);
        run d = track_path(rf.text, &p, 0, NULL);
        run c = track_path(rf.text, &p, 1, NULL);
        if (d.st != SW_OK || c.st != SW_OK) {
            print_error("seed %llu case %d: %s: %s / %s\n", (unsigned long long)rng.seed,
                        icase, desc, d.msg, c.msg);
            fail();
        }
        if (!c.certified) {
            print_error("seed %llu case %d: %s: certified mode did not certify a loop 0.05 "
                        "from every branch point\n", (unsigned long long)rng.seed, icase,
                        desc);
            fail();
        }
        TU_PROP_CLOSE(&rng, icase, c.w1, d.w1, REL, desc, "certified end = double end");
    }
    sw_path_clear(&p);
}

/* ------------------------------------------------------------ odd input */

static void test_track_input_checks(void **state)
{
    (void)state;
    sw_func *f;
    sw_error err;
    assert_int_equal(sw_func_from_expr(&f, "sqrt(z)", NULL, &err), SW_OK);
    sw_germ g;
    sw_germ_init(&g, f);
    assert_int_equal(sw_func_germ_at(&g, f, 1, SW_BANK_NONE, NULL, &err), SW_OK);
    sw_path p;
    sw_path_init(&p);
    sw_trace tr;
    sw_trace_init(&tr);
    /* a path to infinity cannot be continued */
    assert_int_equal(sw_path_parse(&p, "1; 2; inf", "path", NULL, &err), SW_OK);
    sw_error_clear(&err);
    assert_int_not_equal(sw_track_run(&tr, f, &g, &p, NULL, &err), SW_OK);
    assert_true(err.msg[0] != '\0');
    /* a single vertex: nothing to do, the value is the start */
    assert_int_equal(sw_path_parse(&p, "1", "path", NULL, &err), SW_OK);
    assert_int_equal(sw_track_run(&tr, f, &g, &p, NULL, &err), SW_OK);
    TU_CHECK_CLOSE(sw_func_value(f, &tr.vert[0]), 1, 0, "sqrt(1)", "sqrt 1 = 1");
    /* repeated vertices (zero-length segments) are harmless */
    assert_int_equal(sw_path_parse(&p, "1; 1; 4; 4", "path", NULL, &err), SW_OK);
    assert_int_equal(sw_track_run(&tr, f, &g, &p, NULL, &err), SW_OK);
    TU_CHECK_CLOSE(sw_func_value(f, &tr.vert[3]), 2, REL, "sqrt(4)", "sqrt 4 = 2");
    sw_trace_clear(&tr);
    sw_path_clear(&p);
    sw_germ_clear(&g);
    sw_func_free(f);
    /* function parse errors come through sw_func_from_expr with their column */
    sw_error_clear(&err);
    assert_int_equal(sw_func_from_expr(&f, "sqrt(z", NULL, &err), SW_EPARSE);
    assert_null(f);
    assert_true(strstr(err.msg, "column 7") != NULL);
}

int main(void)
{
    sw_error err;
    if (sw_init(&err) != SW_OK)
        return 1;
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_loops_closed_forms),
        cmocka_unit_test(test_loop_values),
        cmocka_unit_test(test_values_along_half_circles),
        cmocka_unit_test(test_log_vertices),
        cmocka_unit_test(test_nested),
        cmocka_unit_test(test_bank_germs),
        cmocka_unit_test(test_bank_paths),
        cmocka_unit_test(test_start_on_negative_axis),
        cmocka_unit_test(test_through_branch_point_refused),
        cmocka_unit_test(test_near_miss),
        cmocka_unit_test(test_log_relative_accuracy),
        cmocka_unit_test(test_start_sheet),
        cmocka_unit_test(test_certified),
        cmocka_unit_test(test_certified_short_steps),
        cmocka_unit_test(test_property_polyline_and_reverse),
        cmocka_unit_test(test_property_loops),
        cmocka_unit_test(test_property_concatenation),
        cmocka_unit_test(test_property_certified),
        cmocka_unit_test(test_track_input_checks),
    };
    return cmocka_run_group_tests_name("track", tests, NULL, NULL);
}
