/* Benchmark: endpoint-singular integrals with sw_integrate_path.
 *
 * Five integrals whose ends are branch points (and one running to infinity),
 * each asked for 1e-12 relative accuracy.  Prints, per integral, the value's
 * actual relative error against a closed form, the reported error estimate,
 * the number of integrand evaluations and the wall time of one call (best
 * of 20 batches of 10 calls; the function and path are built once, outside
 * the timing; rules cached by earlier calls of the thread are reused, as
 * mpmath reuses its cached nodes).  With --json, one JSON object per line for
 * tests/bench/integrate_vs_mpmath.py, which puts mpmath's quad beside it.
 * Not a test: figures only.
 *
 * Closed forms: DLMF 5.12.1 (gsl_sf_beta); the series
 * int_0^1 x^(a-1) e^x dx = sum_n 1/(n! (n + a)) (termwise integration of the
 * exponential series, common practice, no source); DLMF 19.2.8
 * (gsl_sf_ellint_Kcomp); int_0^1 x^(-1/2) log x dx = -4 (DLMF 5.12.1
 * differentiated in a); DLMF 5.12.3 with 5.5.3 (pi / sin(pi a)). */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include <time.h>

#include <gsl/gsl_sf_ellint.h>
#include <gsl/gsl_sf_gamma.h>

#include "sheetwalk/sheetwalk.h"

static const double PI = 3.14159265358979323846;

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

typedef struct bench_case {
    const char *name;      /* short label, also used by the mpmath script */
    const char *text;      /* expression or curve */
    int curve;
    const char *integrand; /* NULL: w */
    const char *path;
} bench_case;

static const bench_case cases[] = {
    {"beta", "z^(-0.63)*(1-z)^(-0.19)", 0, NULL, "0; 1"},
    {"strong", "z^(-0.9)*exp(z)", 0, NULL, "0; 1"},
    {"elliptic", "w^2-(1-z^2)*(1-0.81*z^2)", 1, "1/w", "0; 1"},
    {"log", "log(z)/sqrt(z)", 0, NULL, "0; 1"},
    {"ray", "z^(-0.7)/(1+z)", 0, NULL, "0; 1; inf"},
};

static double reference(int k)
{
    switch (k) {
    case 0: return gsl_sf_beta(0.37, 0.81);
    case 1: {
        long double s = 0, fact = 1;
        for (int n = 0; n < 40; n++) {
            if (n > 0)
                fact *= n;
            s += 1.0L / (fact * (n + 0.1L));
        }
        return (double)s;
    }
    case 2: return -gsl_sf_ellint_Kcomp(0.9, GSL_PREC_DOUBLE); /* sheet 1: w < 0 */
    case 3: return -4;
    default: return PI / sin(0.3 * PI);
    }
}

int main(int argc, char **argv)
{
    int json = argc > 1 && strcmp(argv[1], "--json") == 0;
    sw_error err;
    if (sw_init(&err) != SW_OK)
        return 1;
    if (!json)
        printf("%-9s %-32s %10s %10s %6s %10s\n", "integral", "function", "rel.error", "abserr",
               "evals", "time/us");
    for (int k = 0; k < (int)(sizeof cases / sizeof cases[0]); k++) {
        const bench_case *b = &cases[k];
        sw_func *f = NULL;
        sw_expr *R = NULL;
        sw_path p;
        sw_path_init(&p);
        if ((b->curve ? sw_func_from_curve(&f, b->text, NULL, &err)
                      : sw_func_from_expr(&f, b->text, NULL, &err)) != SW_OK ||
            (b->integrand && sw_integrand_parse(&R, b->integrand, NULL, &err) != SW_OK) ||
            sw_path_parse(&p, b->path, "path", NULL, &err) != SW_OK) {
            fprintf(stderr, "bench: %s\n", err.msg);
            return 1;
        }
        sw_integrate_opts o;
        sw_integrate_opts_init(&o);
        o.epsrel = 1e-12;
        sw_integral r;
        sw_integral_init(&r);
        /* the best of 20 batches of 10 calls: other load on the machine only
           ever slows a batch down */
        double t = INFINITY;
        sw_status st = SW_OK;
        for (int batch = 0; batch < 20 && (st == SW_OK || st == SW_ETOLERANCE); batch++) {
            double t0 = now();
            for (int rep = 0; rep < 10; rep++)
                st = sw_integrate_path(&r, f, R, &p, 0, NULL, &o, &err);
            t = fmin(t, (now() - t0) / 10);
        }
        if (st != SW_OK && st != SW_ETOLERANCE) {
            fprintf(stderr, "bench: %s: %s\n", b->name, err.msg);
            return 1;
        }
        double ref = reference(k);
        double rel = cabs(r.value - ref) / fabs(ref);
        double us = t * 1e6;
        if (json)
            printf("{\"name\": \"%s\", \"value\": %.17g, \"relerr\": %.3g, \"abserr\": %.3g, "
                   "\"evaluations\": %zu, \"seconds\": %.6g, \"converged\": %s}\n",
                   b->name, creal(r.value), rel, r.abserr, r.evaluations, t,
                   r.converged ? "true" : "false");
        else
            printf("%-9s %-32s %10.2g %10.2g %6zu %10.1f\n", b->name, b->text, rel, r.abserr,
                   r.evaluations, us);
        sw_integral_clear(&r);
        sw_path_clear(&p);
        sw_expr_free(R);
        sw_func_free(f);
    }
    return 0;
}
