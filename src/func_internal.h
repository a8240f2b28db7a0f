/* Private: the engine vtable behind sw_func.  Not installed. */
#ifndef SW_FUNC_INTERNAL_H
#define SW_FUNC_INTERNAL_H

#include "sheetwalk/func.h"
#include "sheetwalk/monodromy.h"

typedef struct sw_engine {
    const char *name;
    void (*destroy)(void *impl);
    size_t (*state_len)(const void *impl);
    size_t (*degree)(const void *impl);
    sw_status (*germ_at)(sw_germ *g, const void *impl, double complex z, int bank,
                         const double complex *hint, sw_error *err);
    sw_step_result (*advance)(sw_germ *out, const sw_germ *in, double complex z,
                              const void *impl, const sw_step_opts *o, int *why);
    double complex (*value)(const void *impl, const sw_germ *g);
    size_t (*sheet_values)(double complex *out, size_t max, const void *impl,
                           const sw_germ *g);
    char *(*describe)(char *buf, size_t n, const void *impl, int why);
    sw_status (*points)(sw_points *out, const sw_func *f, const sw_points_opts *o,
                        sw_error *err);
} sw_engine;

struct sw_func {
    sw_func_kind kind;
    const sw_engine *eng;
    void *impl;
    char *text;
};

/* Wrap an engine implementation (takes ownership of IMPL). */
sw_status sw_func_wrap(sw_func **f, sw_func_kind kind, const sw_engine *eng, void *impl,
                       const char *text, sw_error *err);
/* The engine's private data. */
static inline void *sw_func_impl(const sw_func *f) { return f->impl; }

/* Curve engine constructor (src/curve.c). */
sw_status sw_curve_func_new(sw_func **f, const char *text, const sw_params *params,
                            sw_error *err);

#endif
