/* Benchmark: continuation speed and step economy of the tracker.
 *
 * Prints, for a few expressions, accepted steps per second (one core) and
 * steps per unit path length, and the number of steps needed to pass a
 * branch point at distance d (should grow like log(1/d) near it and stay a
 * few per unit length at distance 1).  Not a test: figures only. */
#include <math.h>
#include <stdio.h>
#include <time.h>

#include "sheetwalk/sheetwalk.h"

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int run(const char *expr, const char *path, int repeat, int keep_log, size_t *steps_out,
               double *len_out, double *secs_out)
{
    sw_error err;
    sw_func *f = NULL;
    sw_path p;
    sw_path_init(&p);
    if (sw_func_from_expr(&f, expr, NULL, &err) != SW_OK ||
        sw_path_parse(&p, path, "path", NULL, &err) != SW_OK) {
        fprintf(stderr, "bench: %s\n", err.msg);
        return 1;
    }
    sw_germ g;
    sw_germ_init(&g, f);
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.keep_log = keep_log;
    size_t steps = 0;
    double t0 = now();
    for (int r = 0; r < repeat; r++) {
        sw_trace tr;
        sw_trace_init(&tr);
        if (sw_func_germ_at(&g, f, p.z[0], p.bank[0], NULL, &err) != SW_OK ||
            sw_track_run(&tr, f, &g, &p, &o, &err) != SW_OK) {
            fprintf(stderr, "bench: %s\n", err.msg);
            return 1;
        }
        steps += tr.steps;
        sw_trace_clear(&tr);
    }
    *secs_out = now() - t0;
    *steps_out = steps;
    *len_out = sw_path_length(&p) * repeat;
    sw_germ_clear(&g);
    sw_path_clear(&p);
    sw_func_free(f);
    return 0;
}

int main(void)
{
    sw_init(NULL);
    static const struct {
        const char *label, *expr, *path;
    } cases[] = {
        {"product of 5 powers", "z^(1/3)*(1-z)^(2/3)*(z+2)^(1/5)*(z-3i)^0.7*(z+1i)^(-1/2)",
         "circle 0.5 0.25 256"},
        {"nested root", "sqrt(1 + sqrt(z))", "circle 0 0.5 256"},
        {"log of a rational function", "log((z^2 + 1)/(z - 2))", "circle 0 0.5 256"},
        {"single root", "sqrt(z)", "circle 0 1 256"},
    };
    printf("%-28s %12s %14s %16s\n", "expression", "steps/s", "steps/length", "evaluations/s");
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        size_t steps;
        double len, secs;
        if (run(cases[k].expr, cases[k].path, 4000, 0, &steps, &len, &secs))
            return 1;
        printf("%-28s %12.3g %14.3g %16.3g\n", cases[k].label, (double)steps / secs,
               (double)steps / len, 2.0 * (double)steps / secs);
    }
    printf("\nwith the dense log kept (as integrals and audits use it):\n");
    {
        size_t steps;
        double len, secs;
        if (run(cases[0].expr, cases[0].path, 4000, 1, &steps, &len, &secs))
            return 1;
        printf("%-28s %12.3g steps/s\n", cases[0].label, (double)steps / secs);
    }
    printf("\nsteps to pass the branch point of sqrt(z) at distance d on the segment "
           "-1+di -> 1+di:\n%-12s %10s\n", "d", "steps");
    for (double d = 1; d >= 1e-9; d /= 100) {
        char path[128];
        snprintf(path, sizeof path, "-1+%.17gi; 1+%.17gi", d, d);
        size_t steps;
        double len, secs;
        if (run("sqrt(z)", path, 1, 0, &steps, &len, &secs))
            return 1;
        printf("%-12.0e %10zu\n", d, steps);
    }
    printf("\nsteps per unit length on circles of radius r around the branch point of "
           "sqrt(z):\n%-12s %14s\n", "r", "steps/length");
    for (double r = 1; r <= 1000; r *= 10) {
        char path[128];
        snprintf(path, sizeof path, "circle 0 %.17g 64", r);
        size_t steps;
        double len, secs;
        if (run("sqrt(z)", path, 1, 0, &steps, &len, &secs))
            return 1;
        printf("%-12g %14.3g\n", r, (double)steps / len);
    }
    return 0;
}
