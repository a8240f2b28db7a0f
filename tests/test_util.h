/* Shared helpers of the cmocka suites: a seeded generator for property tests,
 * closeness checks that name their source, an independent winding number, and
 * (for the command-line tests) a runner for the built binary.
 *
 * Every helper is `static inline` so that a suite that does not use one does
 * not trip -Wunused-function. */
#ifndef SW_TEST_UTIL_H
#define SW_TEST_UTIL_H

#include <complex.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <cmocka.h>

#define TU_PI 3.14159265358979323846
#define TU_2PI_I CMPLX(0.0, 2.0 * TU_PI)

/* ------------------------------------------------------------ known bugs */

/* A check that currently fails because of a library bug (listed in the
 * report that introduced it).  Skipped by default so the rest of the suite
 * stays runnable; run with SW_CHECK_KNOWN_BUGS=1 to see it fail. */
#define SW_KNOWN_BUG(what)                                                         \
    do {                                                                           \
        if (getenv("SW_CHECK_KNOWN_BUGS") == NULL) {                               \
            print_message("KNOWN BUG (skipped; SW_CHECK_KNOWN_BUGS=1 runs it): %s\n", \
                          what);                                                   \
            skip();                                                                \
        }                                                                          \
    } while (0)

/* ------------------------------------------------------- seeded generator */

/* splitmix64 (S. Vigna, public domain reference algorithm): small, fast and
 * good enough to draw test cases.  The seed is printed with every failure. */
typedef struct tu_rng {
    uint64_t state;
    uint64_t seed;
} tu_rng;

/* The seed: SW_SEED from the environment when set (decimal; "time" draws one
 * from the clock), else the fixed default so that CI runs are reproducible. */
static inline uint64_t tu_seed(uint64_t fallback)
{
    const char *s = getenv("SW_SEED");
    if (s == NULL || *s == '\0')
        return fallback;
    if (strcmp(s, "time") == 0)
        return (uint64_t)time(NULL) ^ ((uint64_t)clock() << 32);
    return strtoull(s, NULL, 10);
}

static inline void tu_rng_init(tu_rng *r, uint64_t fallback)
{
    r->seed = tu_seed(fallback);
    r->state = r->seed;
}

static inline uint64_t tu_next(tu_rng *r)
{
    uint64_t z = (r->state += 0x9E3779B97F4A7C15ull);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    return z ^ (z >> 31);
}

/* Uniform in [0, 1). */
static inline double tu_unif(tu_rng *r) { return (double)(tu_next(r) >> 11) * 0x1.0p-53; }
/* Uniform in [a, b). */
static inline double tu_range(tu_rng *r, double a, double b) { return a + (b - a) * tu_unif(r); }
/* Uniform integer in [a, b]. */
static inline long tu_int(tu_rng *r, long a, long b)
{
    return a + (long)(tu_next(r) % (uint64_t)(b - a + 1));
}

/* --------------------------------------------------------- comparisons */

static inline double tu_relerr(double complex got, double complex want)
{
    double d = cabs(got - want), s = cabs(want);
    return s > 0 ? d / s : d;
}

/* Fail (with everything needed to reproduce) when |got - want| > tol * |want|
 * (absolute when want = 0).  SOURCE names where the expected value comes from. */
#define TU_CHECK_CLOSE(got, want, tol, what, source)                                      \
    do {                                                                                  \
        double complex g_ = (got), w_ = (want);                                           \
        double e_ = tu_relerr(g_, w_);                                                    \
        if (!(e_ <= (tol))) {                                                             \
            print_error("%s: got %.17g%+.17gi, expected %.17g%+.17gi (%s); relative "    \
                        "error %.3g > %.3g\n",                                            \
                        (what), creal(g_), cimag(g_), creal(w_), cimag(w_), (source), e_, \
                        (double)(tol));                                                   \
            fail();                                                                       \
        }                                                                                 \
    } while (0)

/* The same inside a property test: also prints the seed and the case. */
#define TU_PROP_CLOSE(rng, icase, got, want, tol, what, source)                           \
    do {                                                                                  \
        double complex g_ = (got), w_ = (want);                                           \
        double e_ = tu_relerr(g_, w_);                                                    \
        if (!(e_ <= (tol))) {                                                             \
            print_error("seed %llu (set SW_SEED to reproduce), case %d: %s: got "        \
                        "%.17g%+.17gi, expected %.17g%+.17gi (%s); relative error %.3g\n", \
                        (unsigned long long)(rng)->seed, (int)(icase), (what), creal(g_), \
                        cimag(g_), creal(w_), cimag(w_), (source), e_);                   \
            fail();                                                                       \
        }                                                                                 \
    } while (0)

/* Bitwise equality of two complex doubles (signed zeros count; NaN == NaN). */
static inline int tu_same_bits(double complex a, double complex b)
{
    double x[2] = {creal(a), cimag(a)}, y[2] = {creal(b), cimag(b)};
    return memcmp(x, y, sizeof x) == 0;
}

/* ------------------------------------------------ independent geometry */

/* Winding number of the closed polyline z[0..n-1] (z[n-1] == z[0]) around c:
 * the sum of the angle increments over 2 pi (the argument principle for a
 * polygon; common practice, no source).  Written here on purpose, without
 * the library's own sw_path_winding. */
static inline double tu_winding(const double complex *z, size_t n, double complex c)
{
    double turns = 0;
    for (size_t k = 0; k + 1 < n; k++)
        turns += carg((z[k + 1] - c) / (z[k] - c));
    return turns / (2 * TU_PI);
}

/* Distance from c to the polyline z[0..n-1]. */
static inline double tu_polyline_distance(const double complex *z, size_t n, double complex c)
{
    double d = cabs(c - z[0]);
    for (size_t k = 0; k + 1 < n; k++) {
        double complex a = z[k], ab = z[k + 1] - z[k];
        double L2 = creal(ab) * creal(ab) + cimag(ab) * cimag(ab);
        double s = L2 > 0 ? creal((c - a) * conj(ab)) / L2 : 0;
        s = s < 0 ? 0 : s > 1 ? 1 : s;
        double dk = cabs(c - (a + s * ab));
        if (dk < d)
            d = dk;
    }
    return d;
}

/* Format a complex number as path text ("(re)+(im)*i"), exact to 17 digits. */
static inline void tu_fmt_vertex(char *buf, size_t n, double complex z)
{
    snprintf(buf, n, "(%.17g)+(%.17g)*i", creal(z), cimag(z));
}

#endif
