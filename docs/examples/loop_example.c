/* A complete program against the installed sheetwalk package.
 *
 *   cc -std=c11 loop_example.c $(pkg-config --cflags --libs sheetwalk)
 *
 * It continues z^(1/3) once around 0 and prints the factor the turn applies,
 * then continues the two sheets of w(z) with w^2 = z (z - 1) around the
 * branch point 0 and prints the permutation of the sheets. */
#include <complex.h>
#include <stdio.h>

#include <sheetwalk/sheetwalk.h>

static int fail(const sw_error *err)
{
    fprintf(stderr, "loop_example: %s\n", err->msg);
    return 1;
}

int main(void)
{
    sw_error err;
    if (sw_init(&err) != SW_OK)
        return fail(&err);

    /* 1. an expression */
    sw_func *f = NULL;
    if (sw_func_from_expr(&f, "z^(1/3)", NULL, &err) != SW_OK)
        return fail(&err);
    sw_path path;
    sw_path_init(&path);
    if (sw_path_parse(&path, "circle 0 2", "path", NULL, &err) != SW_OK)
        return fail(&err);
    sw_germ start;
    sw_germ_init(&start, f);
    /* the principal branch at the first vertex */
    if (sw_func_germ_at(&start, f, path.z[0], path.bank[0], NULL, &err) != SW_OK)
        return fail(&err);
    sw_track_opts opts;
    sw_track_opts_init(&opts);
    sw_trace tr;
    sw_trace_init(&tr);
    if (sw_track_run(&tr, f, &start, &path, &opts, &err) != SW_OK)
        return fail(&err);
    double complex w0 = sw_func_value(f, &tr.vert[0]);
    double complex w1 = sw_func_value(f, &tr.vert[tr.nvert - 1]);
    double complex ratio = w1 / w0;
    printf("z^(1/3) once around 0: %zu steps, ratio %.12f%+.12fi\n", tr.steps, creal(ratio),
           cimag(ratio));
    sw_trace_clear(&tr);
    sw_germ_clear(&start);
    sw_func_free(f);

    /* 2. an algebraic function: the whole fiber is carried along */
    if (sw_func_from_curve(&f, "w^2 - z*(z-1)", NULL, &err) != SW_OK)
        return fail(&err);
    sw_path_clear(&path);
    sw_path_init(&path);
    if (sw_path_parse(&path, "circle 0 0.5", "path", NULL, &err) != SW_OK)
        return fail(&err);
    sw_germ_init(&start, f);
    if (sw_func_germ_at(&start, f, path.z[0], SW_BANK_NONE, NULL, &err) != SW_OK ||
        sw_track_run(&tr, f, &start, &path, &opts, &err) != SW_OK)
        return fail(&err);
    int perm[2];
    if (sw_fiber_permutation(perm, f, &start, &tr.vert[tr.nvert - 1], &err) != SW_OK)
        return fail(&err);
    printf("w^2 = z(z-1) once around 0: permutation %d %d\n", perm[0] + 1, perm[1] + 1);
    sw_trace_clear(&tr);
    sw_germ_clear(&start);
    sw_path_clear(&path);
    sw_func_free(f);
    return 0;
}
