/* The engine dispatcher: sw_func, germs, and the calls every analysis uses. */
#include <stdlib.h>
#include <string.h>

#include "func_internal.h"

void sw_step_opts_init(sw_step_opts *o)
{
    o->rho = 0.5;   /* |u'/u - 1| <= 1/2 keeps arg(u'/u) below pi/6 (methods.md §1) */
    o->sep = 0.25;  /* a root must stay within 1/4 of the fiber separation (methods.md §2) */
    o->certify = 0;
}

sw_status sw_func_wrap(sw_func **f, sw_func_kind kind, const sw_engine *eng, void *impl,
                       const char *text, sw_error *err)
{
    sw_func *g = calloc(1, sizeof *g);
    if (g == NULL || (g->text = strdup(text ? text : "")) == NULL) {
        free(g);
        eng->destroy(impl);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    g->kind = kind;
    g->eng = eng;
    g->impl = impl;
    *f = g;
    return SW_OK;
}

void sw_func_free(sw_func *f)
{
    if (f == NULL)
        return;
    f->eng->destroy(f->impl);
    free(f->text);
    free(f);
}

sw_status sw_func_from_curve(sw_func **f, const char *text, const sw_params *params,
                             sw_error *err)
{
    *f = NULL;
    return sw_curve_func_new(f, text, params, err);
}

sw_func_kind sw_func_kind_of(const sw_func *f) { return f->kind; }
const char *sw_func_text(const sw_func *f) { return f->text; }
size_t sw_func_degree(const sw_func *f) { return f->eng->degree(f->impl); }

sw_status sw_germ_init(sw_germ *g, const sw_func *f)
{
    memset(g, 0, sizeof *g);
    size_t len = f->eng->state_len(f->impl);
    g->len = len;
    g->s = calloc(len ? len : 1, sizeof *g->s);
    return g->s ? SW_OK : SW_ENOMEM;
}

void sw_germ_clear(sw_germ *g)
{
    if (g == NULL)
        return;
    free(g->s);
    memset(g, 0, sizeof *g);
}

void sw_germ_copy(sw_germ *dst, const sw_germ *src)
{
    dst->z = src->z;
    dst->bank = src->bank;
    dst->sheet = src->sheet;
    memcpy(dst->s, src->s, src->len * sizeof *src->s);
}

sw_status sw_func_germ_at(sw_germ *g, const sw_func *f, double complex z, int bank,
                          const double complex *hint, sw_error *err)
{
    return f->eng->germ_at(g, f->impl, z, bank, hint, err);
}

sw_step_result sw_func_advance(sw_germ *out, const sw_germ *in, double complex z, const sw_func *f,
                               const sw_step_opts *o, int *why)
{
    return f->eng->advance(out, in, z, f->impl, o, why);
}

double complex sw_func_value(const sw_func *f, const sw_germ *g)
{
    return f->eng->value(f->impl, g);
}

size_t sw_func_sheet_values(double complex *out, size_t max, const sw_func *f, const sw_germ *g)
{
    return f->eng->sheet_values ? f->eng->sheet_values(out, max, f->impl, g) : 0;
}

char *sw_func_describe(char *buf, size_t n, const sw_func *f, int why)
{
    return f->eng->describe(buf, n, f->impl, why);
}

sw_status sw_points_compute(sw_points *out, const sw_func *f, const sw_points_opts *o,
                            sw_error *err)
{
    sw_points_opts def;
    if (o == NULL) {
        sw_points_opts_init(&def);
        o = &def;
    }
    return f->eng->points(out, f, o, err);
}
