/* sheetwalk — the tracker: drive a germ along a polyline.
 *
 * Step control lives here only once; the engine only accepts or refuses a
 * step.  A step is tried at the current length, halved on refusal and grown
 * (doubled) after acceptance; a step that would have to shrink below
 * min_step * scale means the path runs through or grazes a singular point and
 * the run stops with SW_ESINGULAR naming the node and the point — never a
 * silent sheet jump. */
#ifndef SHEETWALK_TRACK_H
#define SHEETWALK_TRACK_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/func.h"
#include "sheetwalk/path.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct sw_track_opts {
    sw_step_opts step;   /* engine acceptance (see func.h) */
    double min_step;     /* refusal floor, relative to the path scale (default 1e-11) */
    double max_step;     /* longest step, relative to the path scale (default 0.25) */
    size_t max_steps;    /* give up after this many accepted steps (default 1e7) */
    int keep_log;        /* keep the dense log of germs (default 1) */
} sw_track_opts;

void sw_track_opts_init(sw_track_opts *o);

/* The result of a run.  Caller-held: sw_trace_init / sw_trace_clear. */
typedef struct sw_trace {
    size_t nvert;          /* vertices of the path */
    sw_germ *vert;         /* germ at every vertex (nvert of them) */
    size_t steps;          /* accepted steps */
    size_t rejected;       /* refused tries (halvings) */
    int certified;         /* 1 when every step was proven (certify mode) */
    /* dense log: germ k sits at path parameter t[k] (t[0] = 0, last = nseg) */
    size_t nlog, alloc;
    double *t;
    double complex *z;     /* point of each logged germ */
    int *sheet;            /* selected sheet of each logged germ */
    double complex *state; /* nlog * len slots */
    size_t len;            /* slots per germ */
} sw_trace;

void sw_trace_init(sw_trace *tr);
void sw_trace_clear(sw_trace *tr);

/* Track START (a germ at the path's first vertex) along PATH.  The path must
 * be finite (no inf ends).  On SW_ESINGULAR the message names the node and
 * the point where the path meets it. */
sw_status sw_track_run(sw_trace *tr, const sw_func *f, const sw_germ *start,
                       const sw_path *path, const sw_track_opts *o, sw_error *err);

/* The logged germ with the largest parameter <= t (the first one when t is
 * before it), copied into G (initialised for the traced function); returns
 * its index.  The log must not be empty. */
size_t sw_trace_logged_germ(sw_germ *g, const sw_trace *tr, double t);
/* The index of that logged germ, without copying it. */
size_t sw_trace_log_index(const sw_trace *tr, double t);

/* The germ on the tracked branch at parameter t (from the dense log, without
 * re-choosing the branch).  G must be initialised for F. */
sw_status sw_trace_germ_at(sw_germ *g, const sw_trace *tr, const sw_func *f, double t,
                           const sw_path *path, sw_error *err);

/* A germ for the start of PATH: on the sheet nearest *W at vertex index
 * VERTEX (W NULL: principal / sheet 1 at vertex 0), carried back to vertex 0
 * along the path when VERTEX > 0. */
sw_status sw_track_start_germ(sw_germ *g, const sw_func *f, const sw_path *path,
                              size_t vertex, const double complex *w,
                              const sw_track_opts *o, sw_error *err);

/* The point the tracker actually follows for vertex K: the vertex itself, or
 * for a bank-marked vertex the vertex displaced by 1e-10 of the path's scale
 * to the marked side (so that a path along x+i0 passes the axis above).
 * SCALE is sw_path_scale(path) (passed in so that loops compute it once). */
double complex sw_path_followed_vertex(const sw_path *path, size_t k, double scale);

/* Net number of counter-clockwise turns of the finite part of PATH around C
 * (a real number; an integer for closed paths).  Exact for polylines. */
double sw_path_winding(const sw_path *path, double complex c);
/* Smallest distance from the finite part of PATH to C. */
double sw_path_distance(const sw_path *path, double complex c);

#ifdef __cplusplus
}
#endif
#endif
