/* Benchmark: complete monodromy (all branch points and infinity) of curves,
 * in double precision and in certified mode.  Not a test: prints timings.
 *
 *   bench_curve [REPEATS]
 *
 * Random dense curves have integer coefficients uniform in [-9, 9] from a
 * fixed seed (so runs are comparable), every monomial z^k w^j with k <= dz,
 * j <= dw present. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "sheetwalk/sheetwalk.h"

static double now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_MONOTONIC, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static unsigned long long rng_state;
static int rnd_coef(void)
{
    rng_state = rng_state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (int)((rng_state >> 33) % 19) - 9;
}

static char *random_curve(int dz, int dw, unsigned long long seed)
{
    size_t cap = 64 + (size_t)(dz + 1) * (size_t)(dw + 1) * 24;
    char *s = malloc(cap);
    size_t len = 0;
    rng_state = seed;
    s[0] = '\0';
    for (int j = 0; j <= dw; j++)
        for (int k = 0; k <= dz; k++) {
            int c = rnd_coef();
            if ((j == dw && k == dz) && c == 0)
                c = 1;   /* keep the degrees */
            if (c == 0)
                continue;
            len += (size_t)snprintf(s + len, cap - len, "%s%d*z^%d*w^%d", len ? " + " : "", c, k, j);
        }
    return s;
}

static int run(const char *label, const char *curve, int certify, int repeats)
{
    sw_func *f = NULL;
    sw_error err;
    sw_points pts;
    sw_points_opts o;
    double best = 1e300;
    size_t nb = 0, ncert = 0;
    int product_ok = 0;
    if (sw_func_from_curve(&f, curve, NULL, &err) != SW_OK) {
        fprintf(stderr, "%s: %s\n", label, err.msg);
        return 1;
    }
    sw_points_opts_init(&o);
    o.certify = certify;
    for (int r = 0; r < repeats; r++) {
        double t0 = now(), t1;
        sw_points_init(&pts);
        if (sw_points_compute(&pts, f, &o, &err) != SW_OK) {
            fprintf(stderr, "%s: %s\n", label, err.msg);
            sw_func_free(f);
            return 1;
        }
        t1 = now() - t0;
        if (t1 < best) best = t1;
        nb = 0;
        ncert = 0;
        for (size_t k = 0; k < pts.n; k++) {
            if (pts.pt[k].kind == SW_POINT_BRANCH) nb++;
            if (pts.pt[k].certified) ncert++;
        }
        product_ok = pts.product_ok;
        printf("  %-26s %-9s candidates %4zu  branch points %4zu  %s%8.3f s%s\n", label,
               certify ? "certified" : "double", pts.n, nb, "time ", t1,
               product_ok ? "" : "  PRODUCT RELATION FAILED");
        if (certify)
            printf("  %-26s %-9s proven loops %zu/%zu\n", "", "", ncert, pts.n);
        sw_points_clear(&pts);
    }
    (void)best;
    sw_func_free(f);
    return product_ok ? 0 : 1;
}

int main(int argc, char **argv)
{
    int repeats = argc > 1 ? atoi(argv[1]) : 1;
    int bad = 0;
    sw_error err;
    char *c44 = random_curve(4, 4, 44), *c88 = random_curve(8, 8, 88), *c1212 = random_curve(12, 12, 1212);
    const char *only = getenv("SW_BENCH_ONLY");
    struct { const char *label, *curve; } cases[] = {
        {"smooth quartic (Klein)", "z^3*w + w^3 + z"},
        {"z^6 + w^6 = 1", "z^6 + w^6 - 1"},
        {"random dense (4,4)", c44},
        {"random dense (8,8)", c88},
        {"random dense (12,12)", c1212},
    };
    if (repeats < 1) repeats = 1;
    sw_init(&err);
    printf("complete monodromy (all candidates + infinity), best of %d\n", repeats);
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        if (only && !strstr(cases[i].label, only))
            continue;
        bad |= run(cases[i].label, cases[i].curve, 0, repeats);
        bad |= run(cases[i].label, cases[i].curve, 1, repeats);
    }
    free(c44);
    free(c88);
    free(c1212);
    return bad;
}
