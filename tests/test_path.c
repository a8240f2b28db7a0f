/* Paths: inline text and files, directives, validation, geometry.
 *
 * Checked against the path format of the command-line contract (cli.md:
 * vertices, '#' comments, blank lines, close, circle C R [N], inf first or
 * last, name:/note:, bank marks) and elementary geometry: the vertices of a
 * regular N-gon of radius R about C are C + R exp(2 pi i k/N) and its
 * perimeter is 2 N R sin(pi/N) (common practice, no source); the winding
 * number of a closed polygon is the sum of its angle increments over 2 pi
 * (computed independently in test_util.h). */
#include "test_util.h"

#include <glob.h>
#include <unistd.h>

#include "sheetwalk/path.h"
#include "sheetwalk/track.h"

/* ------------------------------------------------------------ helpers */

static void parse_ok(sw_path *p, const char *text)
{
    sw_error err;
    sw_error_clear(&err);
    sw_status st = sw_path_parse(p, text, "path", NULL, &err);
    if (st != SW_OK) {
        print_error("path \"%s\" refused: %s\n", text, err.msg);
        fail();
    }
}

/* Write TEXT (LEN bytes) to a fresh temporary file; returns its name (static). */
static const char *temp_file(const char *text, size_t len)
{
    static char name[64];
    snprintf(name, sizeof name, "/tmp/sw_test_path_XXXXXX");
    int fd = mkstemp(name);
    assert_true(fd >= 0);
    FILE *fp = fdopen(fd, "wb");
    assert_non_null(fp);
    if (len)
        assert_int_equal(fwrite(text, 1, len, fp), len);
    fclose(fp);
    return name;
}

/* Number after WORD ("line 4" -> 4) in MSG, or -1. */
static long number_after(const char *msg, const char *word)
{
    const char *p = strstr(msg, word);
    if (p == NULL)
        return -1;
    return strtol(p + strlen(word), NULL, 10);
}

static int same_point(double complex a, double complex b)
{
    return creal(a) == creal(b) && cimag(a) == cimag(b);
}

/* --------------------------------------------------------- valid input */

static void test_inline_vertices(void **state)
{
    (void)state;
    sw_path p;
    sw_path_init(&p);
    parse_ok(&p, "1; 2i; -1; 0.5-0.25i");
    assert_int_equal(p.n, 4);
    assert_true(same_point(p.z[0], 1));
    assert_true(same_point(p.z[1], CMPLX(0, 2)));
    assert_true(creal(p.z[2]) == -1 && cimag(p.z[2]) == 0);
    assert_true(same_point(p.z[3], CMPLX(0.5, -0.25)));
    assert_int_equal(sw_path_segments(&p), 3);
    assert_false(sw_path_is_closed(&p));
    assert_false(p.inf_start || p.inf_end);
    assert_null(p.name);
    for (size_t k = 0; k < p.n; k++)
        assert_int_equal(p.bank[k], SW_BANK_NONE);
    /* constant expressions are vertices */
    parse_ok(&p, "sqrt(4); 2*i*pi/pi; (1+1)^3");
    assert_int_equal(p.n, 3);
    assert_true(same_point(p.z[0], 2));
    assert_true(same_point(p.z[1], CMPLX(0, 2)));
    assert_true(same_point(p.z[2], 8));
    /* newlines work inline too, as do comments and blank items */
    parse_ok(&p, "# a comment\n1 # the first\n\n ;; \t\n2\n");
    assert_int_equal(p.n, 2);
    assert_true(same_point(p.z[1], 2));
    sw_path_clear(&p);
    sw_path_clear(&p);
}

static void test_parameters_in_paths(void **state)
{
    (void)state;
    sw_params pr;
    sw_params_init(&pr);
    sw_error err;
    assert_int_equal(sw_params_assign(&pr, "a=2", &err), SW_OK);
    assert_int_equal(sw_params_assign(&pr, "r=0.5", &err), SW_OK);
    sw_path p;
    sw_path_init(&p);
    assert_int_equal(sw_path_parse(&p, "a; a*i; circle a r 4", "path", &pr, &err), SW_OK);
    assert_int_equal(p.n, 2 + 5);
    assert_true(same_point(p.z[0], 2));
    assert_true(same_point(p.z[1], CMPLX(0, 2)));
    assert_true(same_point(p.z[2], 2.5)); /* C + R */
    sw_path_clear(&p);
    sw_params_clear(&pr);
}

static void test_close(void **state)
{
    (void)state;
    sw_path p;
    sw_path_init(&p);
    parse_ok(&p, "1; i; -1; close");
    assert_int_equal(p.n, 4);
    assert_true(same_point(p.z[3], p.z[0]));
    assert_true(sw_path_is_closed(&p));
    /* a path whose last vertex repeats the first is closed without 'close' */
    parse_ok(&p, "1; i; 1");
    assert_true(sw_path_is_closed(&p));
    parse_ok(&p, "1");
    assert_false(sw_path_is_closed(&p)); /* one vertex is not a loop */
    sw_path_clear(&p);
}

/* circle C R [N]: vertices C + R exp(2 pi i k/N), k = 0..N, start and end
 * exactly at C + R, counter-clockwise (cli.md; regular polygon, common practice). */
static void test_circle(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        double complex c;
        double r;
        int n;
    } cases[] = {
        {"circle 0 2", 0, 2, 64},
        {"circle 1+i 0.5 8", CMPLX(1, 1), 0.5, 8},
        {"circle (1 + i) 0.5 8", CMPLX(1, 1), 0.5, 8},
        {"circle -3 1e-3 3", -3, 1e-3, 3},
        {"circle 2i 10 1000", CMPLX(0, 2), 10, 1000},
    };
    for (size_t j = 0; j < sizeof cases / sizeof cases[0]; j++) {
        sw_path p;
        sw_path_init(&p);
        parse_ok(&p, cases[j].text);
        double complex c = cases[j].c;
        double r = cases[j].r;
        int n = cases[j].n;
        if (p.n != (size_t)n + 1) {
            print_error("%s: %zu vertices, expected %d\n", cases[j].text, p.n, n + 1);
            fail();
        }
        assert_true(same_point(p.z[0], c + r));
        assert_true(same_point(p.z[n], c + r));
        assert_true(sw_path_is_closed(&p));
        for (int k = 0; k <= n; k++) {
            double a = 2 * TU_PI * k / n;
            double complex want = c + CMPLX(r * cos(a), r * sin(a));
            TU_CHECK_CLOSE(p.z[k] - c, want - c, 1e-14, cases[j].text,
                           "vertex k of a regular N-gon: C + R exp(2 pi i k/N)");
        }
        /* counter-clockwise: one positive turn around the centre, none outside */
        TU_CHECK_CLOSE(tu_winding(p.z, p.n, c), 1, 1e-12, cases[j].text,
                       "winding number of a counter-clockwise polygon (argument principle)");
        TU_CHECK_CLOSE(sw_path_winding(&p, c), 1, 1e-12, cases[j].text,
                       "winding number 1 around the centre");
        TU_CHECK_CLOSE(sw_path_winding(&p, c + 3 * r), 0, 1e-12, cases[j].text,
                       "winding number 0 outside");
        assert_true(cimag(p.z[1] - c) > 0); /* first step goes up: counter-clockwise */
        double perim = 2 * n * r * sin(TU_PI / n);
        TU_CHECK_CLOSE(sw_path_length(&p), perim, 1e-13, cases[j].text,
                       "perimeter of a regular N-gon 2 N R sin(pi/N)");
        sw_path_clear(&p);
    }
    /* a circle appended after vertices, and a circle followed by vertices */
    sw_path p;
    sw_path_init(&p);
    parse_ok(&p, "0; circle 0 1 4; 0");
    assert_true(same_point(p.z[0], 0));
    assert_true(same_point(p.z[1], 1));
    assert_true(same_point(p.z[p.n - 2], 1));
    assert_true(same_point(p.z[p.n - 1], 0));
    TU_CHECK_CLOSE(sw_path_winding(&p, CMPLX(0.5, 0.1)), 1, 1e-12, "0; circle 0 1 4; 0",
                   "winding number of the square around an inner point");
    sw_path_clear(&p);
}

static void test_inf(void **state)
{
    (void)state;
    sw_path p;
    sw_path_init(&p);
    parse_ok(&p, "inf; 0; 1");
    assert_true(p.inf_start);
    assert_false(p.inf_end);
    assert_int_equal(p.n, 2);
    assert_false(sw_path_is_closed(&p));
    parse_ok(&p, "0; 1; inf");
    assert_false(p.inf_start);
    assert_true(p.inf_end);
    assert_int_equal(p.n, 2);
    parse_ok(&p, "inf; -1; 1; inf");
    assert_true(p.inf_start && p.inf_end);
    assert_int_equal(p.n, 2);
    /* reversing swaps the two ends */
    parse_ok(&p, "inf; 0; 1");
    sw_path_reverse(&p);
    assert_false(p.inf_start);
    assert_true(p.inf_end);
    assert_true(same_point(p.z[0], 1));
    sw_path_clear(&p);
}

static void test_bank_vertices(void **state)
{
    (void)state;
    sw_path p;
    sw_path_init(&p);
    parse_ok(&p, "-2+i0; -1-i0; 3; 0.5 + i0");
    assert_int_equal(p.n, 4);
    const int banks[4] = {SW_BANK_UPPER, SW_BANK_LOWER, SW_BANK_NONE, SW_BANK_UPPER};
    const double re[4] = {-2, -1, 3, 0.5};
    for (int k = 0; k < 4; k++) {
        assert_int_equal(p.bank[k], banks[k]);
        assert_true(creal(p.z[k]) == re[k] && cimag(p.z[k]) == 0);
    }
    /* reversing keeps every bank with its vertex */
    sw_path_reverse(&p);
    for (int k = 0; k < 4; k++) {
        assert_int_equal(p.bank[k], banks[3 - k]);
        assert_true(creal(p.z[k]) == re[3 - k]);
    }
    sw_path_clear(&p);
}

static void test_file(void **state)
{
    (void)state;
    const char text[] = "name: Around the unit square\n"
                        "note: shows comments; blank lines and close\n"
                        "# a comment line\n"
                        "\n"
                        "1 - 1i   # bottom right\n"
                        "1 + 1i\n"
                        "   \n"
                        "-1 + 1i\r\n"
                        "-1 - 1i\n"
                        "close\n";
    const char *name = temp_file(text, sizeof text - 1);
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    sw_error_clear(&err);
    sw_status st = sw_path_read_file(&p, name, NULL, &err);
    if (st != SW_OK) {
        print_error("%s\n", err.msg);
        fail();
    }
    assert_int_equal(p.n, 5);
    assert_true(same_point(p.z[0], CMPLX(1, -1)));
    assert_true(same_point(p.z[2], CMPLX(-1, 1)));
    assert_true(sw_path_is_closed(&p));
    assert_non_null(p.name);
    assert_string_equal(p.name, "Around the unit square");
    assert_non_null(p.note);
    assert_string_equal(p.note, "shows comments; blank lines and close");
    TU_CHECK_CLOSE(sw_path_length(&p), 8, 1e-15, "unit square", "perimeter of a 2x2 square");
    /* sw_path_load: an existing file is read as a file */
    sw_path q;
    sw_path_init(&q);
    assert_int_equal(sw_path_load(&q, name, NULL, &err), SW_OK);
    assert_int_equal(q.n, 5);
    assert_string_equal(q.name, "Around the unit square");
    /* ... anything else is inline text */
    assert_int_equal(sw_path_load(&q, "0; 1; 2", NULL, &err), SW_OK);
    assert_int_equal(q.n, 3);
    sw_path_clear(&q);
    sw_path_clear(&p);
    unlink(name);
}

/* The shipped example files all parse (issue 2 asks for at least five). */
static void test_example_files(void **state)
{
    (void)state;
    const char *dir = getenv("SW_SOURCE_DIR");
    if (dir == NULL)
        skip();
    char pattern[600];
    snprintf(pattern, sizeof pattern, "%s/paths/*.path", dir);
    glob_t g;
    memset(&g, 0, sizeof g);
    assert_int_equal(glob(pattern, 0, NULL, &g), 0);
    assert_true(g.gl_pathc >= 5);
    for (size_t k = 0; k < g.gl_pathc; k++) {
        sw_path p;
        sw_path_init(&p);
        sw_error err;
        sw_error_clear(&err);
        if (sw_path_read_file(&p, g.gl_pathv[k], NULL, &err) != SW_OK) {
            print_error("%s: %s\n", g.gl_pathv[k], err.msg);
            fail();
        }
        assert_true(p.n >= 1);
        sw_path_clear(&p);
    }
    globfree(&g);
}

/* ------------------------------------------------------------- geometry */

static void test_point_length_reverse(void **state)
{
    (void)state;
    sw_path p;
    sw_path_init(&p);
    parse_ok(&p, "0; 3; 3+4i");
    TU_CHECK_CLOSE(sw_path_length(&p), 7, 0, "0; 3; 3+4i", "3 + |4i| = 7");
    assert_true(sw_path_scale(&p) >= 7);
    const struct {
        double t;
        double complex z;
    } pts[] = {{0, 0},   {0.5, 1.5}, {1, 3}, {1.25, CMPLX(3, 1)}, {2, CMPLX(3, 4)},
               {-1, 0}, {7, CMPLX(3, 4)}};
    for (size_t k = 0; k < sizeof pts / sizeof pts[0]; k++)
        TU_CHECK_CLOSE(sw_path_point(&p, pts[k].t), pts[k].z, 1e-15, "sw_path_point",
                       "t = k + s on segment k at fraction s; clamped to [0, nseg] (path.h)");
    sw_path_reverse(&p);
    assert_true(same_point(p.z[0], CMPLX(3, 4)));
    assert_true(same_point(p.z[2], 0));
    TU_CHECK_CLOSE(sw_path_length(&p), 7, 0, "reversed", "length is unchanged by reversal");
    TU_CHECK_CLOSE(sw_path_point(&p, 0.5), CMPLX(3, 2), 1e-15, "reversed, t = 0.5",
                   "midpoint of the first segment");
    /* copy */
    sw_path q;
    sw_path_init(&q);
    sw_error err;
    assert_int_equal(sw_path_copy(&q, &p, &err), SW_OK);
    assert_int_equal(q.n, p.n);
    for (size_t k = 0; k < p.n; k++)
        assert_true(same_point(q.z[k], p.z[k]));
    sw_path_clear(&q);
    sw_path_clear(&p);
    /* empty path helpers do not crash */
    sw_path_init(&p);
    assert_int_equal(sw_path_segments(&p), 0);
    assert_true(sw_path_length(&p) == 0);
    sw_path_reverse(&p);
    sw_path_clear(&p);
}

/* Property: parse(format(z)) gives z back, reversal twice is the identity,
 * and the length is additive over concatenation (seeded). */
static void test_path_properties(void **state)
{
    (void)state;
    tu_rng rng;
    tu_rng_init(&rng, 8001);
    char *text = malloc(64 * 80);
    assert_non_null(text);
    for (int icase = 0; icase < 200; icase++) {
        int n = (int)tu_int(&rng, 1, 40);
        double complex z[40];
        size_t used = 0;
        for (int k = 0; k < n; k++) {
            double s = exp(tu_range(&rng, -20, 20));
            z[k] = CMPLX(s * tu_range(&rng, -1, 1), s * tu_range(&rng, -1, 1));
            char v[80];
            tu_fmt_vertex(v, sizeof v, z[k]);
            used += (size_t)snprintf(text + used, 64 * 80 - used, "%s%s", k ? "; " : "", v);
        }
        sw_path p, q;
        sw_path_init(&p);
        sw_path_init(&q);
        sw_error err;
        if (sw_path_parse(&p, text, "path", NULL, &err) != SW_OK) {
            print_error("seed %llu case %d: %s\n", (unsigned long long)rng.seed, icase, err.msg);
            fail();
        }
        assert_int_equal(p.n, (size_t)n);
        for (int k = 0; k < n; k++)
            TU_PROP_CLOSE(&rng, icase, p.z[k], z[k], 0, "vertex round trip", "strtod");
        assert_int_equal(sw_path_copy(&q, &p, &err), SW_OK);
        sw_path_reverse(&q);
        TU_PROP_CLOSE(&rng, icase, sw_path_length(&q), sw_path_length(&p), 1e-13,
                      "length of the reverse", "reversal keeps the length");
        for (int k = 0; k < n; k++) {
            TU_PROP_CLOSE(&rng, icase, q.z[k], p.z[n - 1 - k], 0, "reversed vertex",
                          "reversal");
            /* P_rev(nseg - t) = P(t), up to rounding on the scale of the segment */
            double t = tu_range(&rng, 0, n - 1);
            size_t seg = (size_t)t < (size_t)(n - 1) ? (size_t)t : (size_t)(n > 1 ? n - 2 : 0);
            double segscale = cabs(p.z[seg]) + cabs(p.z[n > 1 ? seg + 1 : seg]);
            double complex a = sw_path_point(&q, (double)(n - 1) - t), b = sw_path_point(&p, t);
            if (!(cabs(a - b) <= 1e-12 * segscale)) {
                print_error("seed %llu case %d: P_rev(nseg - t) = %.17g%+.17gi, P(t) = "
                            "%.17g%+.17gi at t = %.17g\n", (unsigned long long)rng.seed, icase,
                            creal(a), cimag(a), creal(b), cimag(b), t);
                fail();
            }
        }
        sw_path_reverse(&q);
        for (int k = 0; k < n; k++)
            TU_PROP_CLOSE(&rng, icase, q.z[k], p.z[k], 0, "reversed twice", "involution");
        sw_path_clear(&p);
        sw_path_clear(&q);
    }
    free(text);
}

/* ----------------------------------------------------------------- errors */

typedef struct bad_path {
    const char *text;   /* inline text */
    sw_status code;
    long item;          /* the item (line) the message must name; 0: none */
    const char *word;   /* a word the message must contain */
} bad_path;

static const bad_path bad_inline[] = {
    {"1; 2*; 3", SW_EPARSE, 2, "item"},        /* bad vertex */
    {"1; foo; 3", SW_EPARSE, 2, "foo"},
    {"1; 0/0", SW_EINPUT, 2, "finite"},        /* NaN vertex */
    {"1; log(0)", SW_EINPUT, 2, "finite"},     /* infinite vertex */
    {"1; 2; 1e300", SW_EINPUT, 3, "large"},    /* huge vertex */
    {"1; 1e400", SW_EINPUT, 2, "range"},
    {"z; 1", SW_EPARSE, 1, "z"},               /* not a constant */
    {"", SW_EINPUT, 0, "no vertices"},         /* empty */
    {"# only a comment", SW_EINPUT, 0, "no vertices"},
    {"close; 1", SW_EINPUT, 1, "close"},
    {"circle 0 -1", SW_EINPUT, 1, "radius"},   /* negative radius */
    {"1; circle 0 0", SW_EINPUT, 2, "radius"},
    {"circle 0 i", SW_EINPUT, 1, "radius"},
    {"circle 0 1 2", SW_EINPUT, 1, "vertex count"},
    {"circle 0 1 4.5", SW_EINPUT, 1, "vertex count"},
    {"circle 0 1 100001", SW_EINPUT, 1, "vertex count"},
    {"circle 0", SW_EINPUT, 1, "circle"},
    {"circle 0 1 8 9", SW_EINPUT, 1, "circle"},
    {"circle q 1", SW_EPARSE, 1, "q"},
    {"inf; inf; 1; 2", SW_EINPUT, 2, "inf"},
    {"inf; 1", SW_EINPUT, 0, "inf"},           /* no direction */
    {"0; 0; inf", SW_EINPUT, 0, "inf"},        /* zero-length direction */
    {"1+i0+i0", SW_EPARSE, 1, ""},
};

static void check_error(const char *text, sw_status st, const sw_error *err, sw_status code,
                        long item, const char *unit, const char *word)
{
    long got = item ? number_after(err->msg, unit) : 0;
    if (st != code || err->code != code || err->msg[0] == '\0' || got != item ||
        strstr(err->msg, word) == NULL || strchr(err->msg, '\n') != NULL) {
        print_error("path \"%s\": status %d (%s), expected %d; message \"%s\"; expected %s%ld "
                    "and \"%s\"\n", text, (int)st, sw_status_name(st), (int)code, err->msg, unit,
                    item, word);
        fail();
    }
}

static void test_inline_errors(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof bad_inline / sizeof bad_inline[0]; k++) {
        sw_path p;
        sw_path_init(&p);
        sw_error err;
        sw_error_clear(&err);
        sw_status st = sw_path_parse(&p, bad_inline[k].text, "path", NULL, &err);
        check_error(bad_inline[k].text, st, &err, bad_inline[k].code, bad_inline[k].item,
                    "item ", bad_inline[k].word);
        assert_int_equal(p.n, 0); /* nothing committed on failure */
        sw_path_clear(&p);
    }
    /* a vertex pushed directly must be finite */
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    assert_int_equal(sw_path_push(&p, CMPLX(NAN, 0), SW_BANK_NONE, &err), SW_EINPUT);
    assert_int_equal(sw_path_push(&p, CMPLX(0, INFINITY), SW_BANK_NONE, &err), SW_EINPUT);
    assert_int_equal(sw_path_push(&p, CMPLX(1e300, 0), SW_BANK_NONE, &err), SW_EINPUT);
    assert_int_equal(p.n, 0);
    assert_int_equal(sw_path_push(&p, 1, SW_BANK_NONE, &err), SW_OK);
    sw_path_clear(&p);
    /* sw_path_load refuses an empty spec and a missing .path file */
    assert_int_equal(sw_path_load(&p, "", NULL, &err), SW_EUSAGE);
    sw_error_clear(&err);
    assert_int_equal(sw_path_load(&p, "/nonexistent/dir/none.path", NULL, &err), SW_EINPUT);
    assert_true(strstr(err.msg, "none.path") != NULL);
}

/* 'inf' in the middle: the message must name the line of the 'inf'. */
static void test_inf_in_the_middle(void **state)
{
    (void)state;
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    sw_error_clear(&err);
    sw_status st = sw_path_parse(&p, "0; inf; 1", "path", NULL, &err);
    assert_int_equal(st, SW_EINPUT);
    assert_true(strstr(err.msg, "inf") != NULL);
    assert_int_equal(p.n, 0);
    check_error("0; inf; 1", st, &err, SW_EINPUT, 2, "item ", "inf");
}

/* File errors name the line, counting comments and blank lines. */
static void test_file_errors(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        size_t len;     /* 0: strlen */
        sw_status code;
        long line;
        const char *word;
    } cases[] = {
        {"1\n# comment\n\n2*\n3\n", 0, SW_EPARSE, 4, "line"},
        {"name: x\n1\n0/0\n", 0, SW_EINPUT, 3, "finite"},
        {"1\n2\n\n\n1e300\n", 0, SW_EINPUT, 5, "large"},
        {"1\n2\ncircle 0 -1\n", 0, SW_EINPUT, 3, "radius"},
        {"", 0, SW_EINPUT, 0, "empty"},
        {"# nothing but a comment\n\n", 0, SW_EINPUT, 0, "no vertices"},
        {"1\n2\0\n3\n", 7, SW_EINPUT, 0, "binary"},
        {"\x7f" "ELF\x02\x01\x01\0\0\0", 10, SW_EINPUT, 0, "binary"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        size_t len = cases[k].len ? cases[k].len : strlen(cases[k].text);
        const char *name = temp_file(cases[k].text, len);
        sw_path p;
        sw_path_init(&p);
        sw_error err;
        sw_error_clear(&err);
        sw_status st = sw_path_read_file(&p, name, NULL, &err);
        check_error(cases[k].text, st, &err, cases[k].code, cases[k].line, "line ",
                    cases[k].word);
        assert_int_equal(p.n, 0);
        /* the same through sw_path_load (the --path convention) */
        sw_error_clear(&err);
        st = sw_path_load(&p, name, NULL, &err);
        check_error(cases[k].text, st, &err, cases[k].code, cases[k].line, "line ",
                    cases[k].word);
        sw_path_clear(&p);
        unlink(name);
    }
    /* a missing file */
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    sw_error_clear(&err);
    assert_int_equal(sw_path_read_file(&p, "/nonexistent/sw_none.path", NULL, &err), SW_EINPUT);
    assert_true(strstr(err.msg, "sw_none.path") != NULL);
    /* a directory is not a path file */
    sw_error_clear(&err);
    assert_int_not_equal(sw_path_read_file(&p, "/tmp", NULL, &err), SW_OK);
    assert_true(err.msg[0] != '\0');
}

int main(void)
{
    sw_error err;
    if (sw_init(&err) != SW_OK)
        return 1;
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_inline_vertices),
        cmocka_unit_test(test_parameters_in_paths),
        cmocka_unit_test(test_close),
        cmocka_unit_test(test_circle),
        cmocka_unit_test(test_inf),
        cmocka_unit_test(test_bank_vertices),
        cmocka_unit_test(test_file),
        cmocka_unit_test(test_example_files),
        cmocka_unit_test(test_point_length_reverse),
        cmocka_unit_test(test_path_properties),
        cmocka_unit_test(test_inline_errors),
        cmocka_unit_test(test_inf_in_the_middle),
        cmocka_unit_test(test_file_errors),
    };
    return cmocka_run_group_tests_name("path", tests, NULL, NULL);
}
