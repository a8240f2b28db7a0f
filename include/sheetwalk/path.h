/* sheetwalk — paths: polylines in the complex plane.
 *
 * Format (inline with ';' for line breaks, or a file): one vertex per line,
 * any constant expression with an optional bank mark (x+i0, x-i0); '#'
 * starts a comment; blank lines are ignored; a vertex "inf" (first or last
 * only) continues the adjacent segment's direction to infinity; "close"
 * repeats the first vertex; "circle C R [N]" appends a counter-clockwise
 * N-gon (default 64) around C of radius R starting and ending at C+R; a file
 * may start with "name: ..." and "note: ..." lines.
 *
 * Parameter along a path: t in [0, nseg], t = k + s on segment k (from
 * vertex k to k+1) at fraction s in [0, 1]. */
#ifndef SHEETWALK_PATH_H
#define SHEETWALK_PATH_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/expr.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Limits, to refuse absurd input with a clear message. */
#define SW_PATH_MAX_VERTICES 1000000
#define SW_PATH_MAX_CIRCLE_N 100000

typedef struct sw_path {
    size_t n, alloc;       /* number of finite vertices */
    double complex *z;     /* vertices */
    int *bank;             /* SW_BANK_* per vertex */
    int inf_start;         /* path comes in from infinity before z[0] */
    int inf_end;           /* path runs on to infinity after z[n-1] */
    char *name;            /* "name:" line, or NULL */
    char *note;            /* "note:" line, or NULL */
} sw_path;

void sw_path_init(sw_path *p);
void sw_path_clear(sw_path *p);

/* Parse path text (lines separated by '\n' or ';').  ORIGIN names the source
 * in messages ("path", a file name).  Errors name the line and the problem. */
sw_status sw_path_parse(sw_path *p, const char *text, const char *origin,
                        const sw_params *params, sw_error *err);
/* Read a path file (refuses empty, binary or oversized files). */
sw_status sw_path_read_file(sw_path *p, const char *filename, const sw_params *params,
                            sw_error *err);
/* The --path convention: an existing file name is read as a file, anything
 * else is parsed as inline text. */
sw_status sw_path_load(sw_path *p, const char *spec, const sw_params *params, sw_error *err);

/* Append a vertex. */
sw_status sw_path_push(sw_path *p, double complex z, int bank, sw_error *err);
/* 1 when the path is closed (first vertex equals last, finite, n >= 2). */
int sw_path_is_closed(const sw_path *p);
/* Number of finite segments (n - 1). */
size_t sw_path_segments(const sw_path *p);
/* Point at parameter t (clamped to [0, nseg]). */
double complex sw_path_point(const sw_path *p, double t);
/* Total length of the finite part and the scale max(length, max |z_k|, 1e-300). */
double sw_path_length(const sw_path *p);
double sw_path_scale(const sw_path *p);
/* Distance from Z to the segment [A, B]. */
double sw_segment_distance(double complex z, double complex a, double complex b);
/* Reverse the path in place (banks kept with their vertices). */
void sw_path_reverse(sw_path *p);
/* Copy. */
sw_status sw_path_copy(sw_path *dst, const sw_path *src, sw_error *err);

#ifdef __cplusplus
}
#endif
#endif
