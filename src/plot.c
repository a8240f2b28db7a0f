/* Pictures with cairo: the plane (branch points, cuts, a path coloured by
 * sheet), the monodromy graph of a curve, domain colouring of a regular
 * branch.  See include/sheetwalk/plot.h for what is drawn and the
 * coordinate conventions.
 *
 * The domain colouring uses the usual hue = arg w colour wheel with
 * brightness bands in log|w| (common practice, no source).  Its values come
 * from continuation between neighbouring pixels: the grid is flood-filled
 * (breadth first) from a seed pixel evaluated by sw_branch_eval, each pixel
 * reached by one engine step (sw_func_advance) from a neighbour, and no step
 * may meet a cut, so every pixel shows the regular branch of the plane minus
 * the cuts without one route per pixel. */
#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cairo.h>
#include <cairo-pdf.h>
#include <cairo-svg.h>

#include "sheetwalk/plot.h"

static const double PI = 3.14159265358979323846;

/* Layout of the plane and graph pictures, in picture units. */
#define PLANE_SIDE 560.0   /* long side of the plane's frame */
#define MAX_ASPECT 4.0     /* beyond this ratio of the view's sides the scales differ */
#define MARGIN_LEFT 72
#define MARGIN_TOP 52
#define MARGIN_RIGHT 24
#define LEGEND_WIDTH 250
#define LINE 16            /* caption line height */
#define FONT 12.0
#define FONT_SMALL 10.5
#define FONT_TITLE 15.0
#define MAX_LEGEND 24      /* legend entries listed before "... and N more" */

/* Sheet changes along a path are located to this fraction of the logged
 * step's parameter length (far below a pixel of the picture). */
#define BISECT_REL 1e-9
#define BISECT_MAX 80
/* Colour grid: a refused step between neighbouring pixels is retried in
 * 2, 4, ..., 16 pieces (a pixel next to a branch point needs a few). */
#define WALK_MAX_PIECES 16
/* A pixel centre closer than this (relative to the view's size) to a cut
 * is on the cut; steps meeting a cut within it are refused. */
#define ON_CUT_REL 1e-9
/* Twice the tolerance below which cuts.c takes a point to lie on a cut. */
#define ON_CUT_BRANCH 2e-12

/* Sheet colours, our own choice: ten well-separated hues; beyond ten the
 * colours repeat with a dashed line. */
static const double palette[10][3] = {
    {0.13, 0.40, 0.75}, {0.85, 0.40, 0.05}, {0.15, 0.60, 0.25}, {0.75, 0.15, 0.45},
    {0.45, 0.30, 0.80}, {0.55, 0.40, 0.10}, {0.05, 0.60, 0.65}, {0.80, 0.10, 0.10},
    {0.45, 0.55, 0.05}, {0.40, 0.40, 0.40}};
#define NPAL 10
static const double cut_rgb[3] = {0.08, 0.08, 0.08};

/* ------------------------------------------------------------- options */

void sw_plot_opts_init(sw_plot_opts *o)
{
    memset(o, 0, sizeof *o);
    o->pixels = SW_PLOT_PIXELS_DEFAULT;
}

void sw_plot_info_init(sw_plot_info *i) { memset(i, 0, sizeof *i); }

void sw_plot_info_clear(sw_plot_info *i)
{
    if (i == NULL)
        return;
    free(i->label);
    free(i->piece);
    memset(i, 0, sizeof *i);
}

static int ends_with(const char *s, const char *suffix)
{
    size_t n = strlen(s), m = strlen(suffix);
    if (n < m)
        return 0;
    for (size_t k = 0; k < m; k++)
        if (tolower((unsigned char)s[n - m + k]) != suffix[k])
            return 0;
    return 1;
}

sw_status sw_plot_type_of(sw_plot_type *type, const char *filename, sw_error *err)
{
    if (filename == NULL || filename[0] == '\0')
        return sw_error_set(err, SW_EUSAGE, "no output file");
    if (ends_with(filename, ".svg"))
        *type = SW_PLOT_SVG;
    else if (ends_with(filename, ".png"))
        *type = SW_PLOT_PNG;
    else if (ends_with(filename, ".pdf"))
        *type = SW_PLOT_PDF;
    else {
        const char *dot = strrchr(filename, '.'), *slash = strrchr(filename, '/');
        if (dot == NULL || (slash && dot < slash))
            return sw_error_set(err, SW_EUSAGE,
                                "output file '%.200s' has no extension: name it .svg, .png or .pdf",
                                filename);
        return sw_error_set(err, SW_EUSAGE,
                            "cannot write pictures of type '%.40s' (output '%.200s'): use .svg, "
                            ".png or .pdf", dot, filename);
    }
    return SW_OK;
}

const char *sw_plot_type_name(sw_plot_type type)
{
    return type == SW_PLOT_SVG ? "svg" : type == SW_PLOT_PNG ? "png" : "pdf";
}

sw_status sw_plot_check_view(const sw_plot_opts *o, sw_error *err)
{
    if (!o->have_view)
        return SW_OK;
    double v[4] = {o->xmin, o->xmax, o->ymin, o->ymax};
    for (int k = 0; k < 4; k++)
        if (!isfinite(v[k]))
            return sw_error_set(err, SW_EUSAGE, "the view must be finite");
    if (!(o->xmin < o->xmax) || !(o->ymin < o->ymax))
        return sw_error_set(err, SW_EUSAGE,
                            "the view needs XMIN < XMAX and YMIN < YMAX (got %g,%g,%g,%g)",
                            o->xmin, o->xmax, o->ymin, o->ymax);
    /* the view's width must be resolvable at the grid's resolution */
    double s = fmax(fmax(fabs(o->xmin), fabs(o->xmax)), fmax(fabs(o->ymin), fabs(o->ymax)));
    if (o->xmax - o->xmin < 1e-10 * s || o->ymax - o->ymin < 1e-10 * s)
        return sw_error_set(err, SW_EUSAGE,
                            "the view is too narrow for double precision (sides %g and %g at "
                            "distance %g from 0)", o->xmax - o->xmin, o->ymax - o->ymin, s);
    return SW_OK;
}

/* ------------------------------------------------------------- canvas */

typedef struct canvas {
    cairo_surface_t *surf;
    cairo_t *cr;
    sw_plot_type type;
    const char *filename;
    int w, h;
} canvas;

static sw_status cairo_failure(const char *filename, cairo_status_t s, sw_error *err)
{
    if (s == CAIRO_STATUS_NO_MEMORY)
        return sw_error_set(err, SW_ENOMEM, "out of memory while drawing");
    if (s == CAIRO_STATUS_WRITE_ERROR || s == CAIRO_STATUS_FILE_NOT_FOUND)
        return sw_error_set(err, SW_EINPUT, "cannot write '%.200s': %s", filename,
                            cairo_status_to_string(s));
    return sw_error_set(err, SW_EINTERNAL, "drawing '%.200s' failed: %s", filename,
                        cairo_status_to_string(s));
}

static sw_status canvas_open(canvas *cv, const char *filename, int w, int h, sw_error *err)
{
    memset(cv, 0, sizeof *cv);
    sw_status st = sw_plot_type_of(&cv->type, filename, err);
    if (st != SW_OK)
        return st;
    /* try the file first so that the message can say why it cannot be written */
    FILE *fp = fopen(filename, "wb");
    if (fp == NULL)
        return sw_error_set(err, SW_EINPUT, "cannot write '%.200s': %s", filename,
                            strerror(errno));
    fclose(fp);
    cv->filename = filename;
    cv->w = w;
    cv->h = h;
    if (cv->type == SW_PLOT_PNG)
        cv->surf = cairo_image_surface_create(CAIRO_FORMAT_ARGB32, w, h);
    else if (cv->type == SW_PLOT_SVG)
        cv->surf = cairo_svg_surface_create(filename, w, h);
    else
        cv->surf = cairo_pdf_surface_create(filename, w, h);
    cairo_status_t cs = cairo_surface_status(cv->surf);
    if (cs != CAIRO_STATUS_SUCCESS) {
        cairo_surface_destroy(cv->surf);
        cv->surf = NULL;
        return cairo_failure(filename, cs, err);
    }
    cv->cr = cairo_create(cv->surf);
    cairo_set_source_rgb(cv->cr, 1, 1, 1);
    cairo_paint(cv->cr);
    cairo_select_font_face(cv->cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL,
                           CAIRO_FONT_WEIGHT_NORMAL);
    return SW_OK;
}

/* Finish the picture (write it) and release everything.  With OK == 0 the
 * canvas is only released and the file (created by canvas_open) removed. */
static sw_status canvas_close(canvas *cv, int ok, sw_error *err)
{
    sw_status st = SW_OK;
    if (cv->cr) {
        cairo_status_t cs = cairo_status(cv->cr);
        if (ok && cs != CAIRO_STATUS_SUCCESS)
            st = cairo_failure(cv->filename, cs, err), ok = 0;
        cairo_destroy(cv->cr);
    }
    if (cv->surf) {
        if (ok && cv->type == SW_PLOT_PNG) {
            cairo_status_t cs = cairo_surface_write_to_png(cv->surf, cv->filename);
            if (cs != CAIRO_STATUS_SUCCESS)
                st = cairo_failure(cv->filename, cs, err);
        } else {
            cairo_surface_finish(cv->surf);
            cairo_status_t cs = cairo_surface_status(cv->surf);
            if (ok && cs != CAIRO_STATUS_SUCCESS)
                st = cairo_failure(cv->filename, cs, err);
        }
        cairo_surface_destroy(cv->surf);
    }
    if (cv->filename && (!ok || st != SW_OK))
        remove(cv->filename);
    memset(cv, 0, sizeof *cv);
    return st;
}

/* ------------------------------------------------------------- text */

/* Text at (x, y): AX = 0 left, 0.5 centre, 1 right aligned; y is the
 * baseline, or the vertical centre when VCENTRE. */
static void text_at(cairo_t *cr, double x, double y, const char *s, double size, double ax,
                    int vcentre)
{
    cairo_text_extents_t e;
    cairo_set_font_size(cr, size);
    cairo_text_extents(cr, s, &e);
    cairo_move_to(cr, x - ax * e.x_advance, vcentre ? y + 0.36 * size : y);
    cairo_show_text(cr, s);
}

/* A complex number in few digits for labels. */
static const char *cshort(char *buf, size_t n, double complex z)
{
    double re = creal(z), im = cimag(z), m = cabs(z);
    if (fabs(re) < 1e-12 * m)
        re = 0;
    if (fabs(im) < 1e-12 * m)
        im = 0;
    if (im == 0)
        snprintf(buf, n, "%.4g", re + 0.0);
    else if (re == 0)
        snprintf(buf, n, "%.4gi", im);
    else
        snprintf(buf, n, "%.4g%+.4gi", re, im);
    return buf;
}

/* ------------------------------------------------------------- geometry */

static double cross2(double complex a, double complex b)
{
    return creal(a) * cimag(b) - cimag(a) * creal(b);
}


/* Segments [a, b] and [c, d] meet or come within TOL of each other. */
static int seg_hits(double complex a, double complex b, double complex c, double complex d,
                    double tol)
{
    if (fmin(creal(a), creal(b)) > fmax(creal(c), creal(d)) + tol ||
        fmin(creal(c), creal(d)) > fmax(creal(a), creal(b)) + tol ||
        fmin(cimag(a), cimag(b)) > fmax(cimag(c), cimag(d)) + tol ||
        fmin(cimag(c), cimag(d)) > fmax(cimag(a), cimag(b)) + tol)
        return 0;
    double complex r = b - a, q = d - c;
    double den = cross2(r, q);
    if (den != 0) {
        double s = cross2(c - a, q) / den, t = cross2(c - a, r) / den;
        if (s >= 0 && s <= 1 && t >= 0 && t <= 1)
            return 1;
    }
    return sw_segment_distance(a, c, d) <= tol || sw_segment_distance(b, c, d) <= tol || sw_segment_distance(c, a, b) <= tol ||
           sw_segment_distance(d, a, b) <= tol;
}

/* The parameter interval [*t0, *t1] (t >= 0) of the ray p + t d inside the
 * rectangle; 0 when the ray misses it (Liang-Barsky clipping). */
static int clip_ray(double *t0, double *t1, double complex p, double complex d,
                    const double v[4])
{
    double lo = 0, hi = INFINITY;
    double pp[2] = {creal(p), cimag(p)}, dd[2] = {creal(d), cimag(d)};
    for (int k = 0; k < 2; k++) {
        double mn = v[2 * k], mx = v[2 * k + 1];
        if (dd[k] == 0) {
            if (pp[k] < mn || pp[k] > mx)
                return 0;
            continue;
        }
        double a = (mn - pp[k]) / dd[k], b = (mx - pp[k]) / dd[k];
        if (a > b) {
            double t = a;
            a = b;
            b = t;
        }
        lo = fmax(lo, a);
        hi = fmin(hi, b);
    }
    if (!(lo <= hi) || !isfinite(hi))
        return 0;
    *t0 = lo;
    *t1 = hi;
    return 1;
}

/* The view and the frame. */
typedef struct frame {
    double v[4];           /* xmin, xmax, ymin, ymax */
    double x, y, w, h;     /* frame in picture units */
} frame;

static double fx_of(const frame *fr, double x)
{
    return fr->x + (x - fr->v[0]) / (fr->v[1] - fr->v[0]) * fr->w;
}

static double fy_of(const frame *fr, double y)
{
    return fr->y + (fr->v[3] - y) / (fr->v[3] - fr->v[2]) * fr->h;
}

/* Grow a bounding box by Z (finite points only). */
static void bbox_add(double b[4], int *n, double complex z)
{
    if (!isfinite(creal(z)) || !isfinite(cimag(z)))
        return;
    if (*n == 0) {
        b[0] = b[1] = creal(z);
        b[2] = b[3] = cimag(z);
    } else {
        b[0] = fmin(b[0], creal(z));
        b[1] = fmax(b[1], creal(z));
        b[2] = fmin(b[2], cimag(z));
        b[3] = fmax(b[3], cimag(z));
    }
    (*n)++;
}

/* The fitted view: the box around the given points, no side shorter than
 * half the longer one, with a margin of 25% (our own choice). */
static void fit_view(double v[4], const sw_points *pts, const sw_cuts *cuts, const sw_path *path)
{
    double b[4] = {0, 0, 0, 0};
    int n = 0;
    for (size_t k = 0; pts && k < pts->n; k++)
        bbox_add(b, &n, pts->pt[k].z);
    for (size_t k = 0; cuts && k < cuts->npieces; k++) {
        bbox_add(b, &n, cuts->piece[k].from);
        if (!cuts->piece[k].to_inf)
            bbox_add(b, &n, cuts->piece[k].to);
    }
    for (size_t k = 0; path && k < path->n; k++)
        bbox_add(b, &n, path->z[k]);
    if (n == 0) {
        v[0] = v[2] = -2;
        v[1] = v[3] = 2;
        return;
    }
    double cx = 0.5 * (b[0] + b[1]), cy = 0.5 * (b[2] + b[3]);
    double hx = 0.5 * (b[1] - b[0]), hy = 0.5 * (b[3] - b[2]);
    double m = fmax(hx, hy);
    if (m == 0) /* a single point: a unit box, or half its distance from 0 */
        hx = hy = m = fmax(1.0, 0.5 * hypot(cx, cy));
    hx = 1.25 * fmax(hx, 0.5 * m);
    hy = 1.25 * fmax(hy, 0.5 * m);
    v[0] = cx - hx;
    v[1] = cx + hx;
    v[2] = cy - hy;
    v[3] = cy + hy;
}

/* Frame size for a view with long side L: equal scales unless the aspect
 * ratio exceeds MAX_ASPECT. */
static void frame_size(double *w, double *h, const double v[4], double L)
{
    double a = (v[1] - v[0]) / (v[3] - v[2]);
    if (a >= 1) {
        *w = L;
        *h = fmax(L / a, L / MAX_ASPECT);
    } else {
        *h = L;
        *w = fmax(L * a, L / MAX_ASPECT);
    }
}

/* ------------------------------------------------------------- drawing */

static void set_rgb(cairo_t *cr, const double c[3]) { cairo_set_source_rgb(cr, c[0], c[1], c[2]); }

/* A "nice" tick step: 1, 2 or 5 times a power of ten, giving about one
 * tick per 80 picture units of a side LEN long (at least two ticks). */
static double tick_step(double span, double len)
{
    double raw = span / fmax(2, fmin(6, len / 80)), mag = pow(10, floor(log10(raw))),
           r = raw / mag;
    return (r < 1.5 ? 1 : r < 3.5 ? 2 : r < 7.5 ? 5 : 10) * mag;
}

/* Frame, ticks, labels; with AXES also the lines Re z = 0 and Im z = 0. */
static void draw_axes(cairo_t *cr, const frame *fr, int axes)
{
    char buf[64];
    /* the coordinate axes where they are in view */
    cairo_save(cr);
    cairo_rectangle(cr, fr->x, fr->y, fr->w, fr->h);
    cairo_clip(cr);
    cairo_set_source_rgb(cr, 0.72, 0.72, 0.72);
    cairo_set_line_width(cr, 0.8);
    if (axes && fr->v[0] < 0 && fr->v[1] > 0) {
        cairo_move_to(cr, fx_of(fr, 0), fr->y);
        cairo_line_to(cr, fx_of(fr, 0), fr->y + fr->h);
    }
    if (axes && fr->v[2] < 0 && fr->v[3] > 0) {
        cairo_move_to(cr, fr->x, fy_of(fr, 0));
        cairo_line_to(cr, fr->x + fr->w, fy_of(fr, 0));
    }
    cairo_stroke(cr);
    cairo_restore(cr);
    /* frame and ticks */
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 1);
    cairo_rectangle(cr, fr->x, fr->y, fr->w, fr->h);
    cairo_stroke(cr);
    for (int axis = 0; axis < 2; axis++) {
        double lo = fr->v[2 * axis], hi = fr->v[2 * axis + 1],
               step = tick_step(hi - lo, axis == 0 ? fr->w : fr->h);
        for (double k = ceil(lo / step); k * step <= hi; k++) {
            double t = k * step;
            snprintf(buf, sizeof buf, "%.6g", fabs(t) < 1e-9 * step ? 0.0 : t);
            if (axis == 0) {
                double x = fx_of(fr, t), y = fr->y + fr->h;
                cairo_move_to(cr, x, y);
                cairo_line_to(cr, x, y + 5);
                cairo_stroke(cr);
                text_at(cr, x, y + 18, buf, FONT_SMALL, 0.5, 0);
            } else {
                double y = fy_of(fr, t), x = fr->x;
                cairo_move_to(cr, x, y);
                cairo_line_to(cr, x - 5, y);
                cairo_stroke(cr);
                text_at(cr, x - 8, y, buf, FONT_SMALL, 1, 1);
            }
        }
    }
    text_at(cr, fr->x + fr->w / 2, fr->y + fr->h + 34, "Re z", FONT, 0.5, 0);
    cairo_save(cr);
    cairo_translate(cr, fr->x - 52, fr->y + fr->h / 2);
    cairo_rotate(cr, -PI / 2);
    text_at(cr, 0, 0, "Im z", FONT, 0.5, 1);
    cairo_restore(cr);
}

/* An arrowhead with its tip at (x, y) pointing along angle A. */
static void arrowhead(cairo_t *cr, double x, double y, double a, double len, double half)
{
    double c = cos(a), s = sin(a);
    cairo_move_to(cr, x, y);
    cairo_line_to(cr, x - len * c - half * s, y - len * s + half * c);
    cairo_line_to(cr, x - len * c + half * s, y - len * s - half * c);
    cairo_close_path(cr);
    cairo_fill(cr);
}

static void marker(cairo_t *cr, sw_point_kind kind, double x, double y)
{
    cairo_set_line_width(cr, 1.5);
    if (kind == SW_POINT_POLE) {
        cairo_set_source_rgb(cr, 1, 1, 1);
        cairo_set_line_width(cr, 4);
        for (int pass = 0; pass < 2; pass++) {
            cairo_move_to(cr, x - 5, y - 5);
            cairo_line_to(cr, x + 5, y + 5);
            cairo_move_to(cr, x - 5, y + 5);
            cairo_line_to(cr, x + 5, y - 5);
            cairo_stroke(cr);
            cairo_set_source_rgb(cr, 0, 0, 0);
            cairo_set_line_width(cr, 1.8);
        }
        return;
    }
    cairo_new_sub_path(cr);
    cairo_arc(cr, x, y, 4.8, 0, 2 * PI);
    if (kind == SW_POINT_BRANCH)
        cairo_set_source_rgb(cr, 0, 0, 0);
    else
        cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_fill_preserve(cr);
    cairo_set_source_rgb(cr, kind == SW_POINT_BRANCH ? 1 : 0, kind == SW_POINT_BRANCH ? 1 : 0,
                         kind == SW_POINT_BRANCH ? 1 : 0);
    cairo_set_line_width(cr, kind == SW_POINT_BRANCH ? 1.2 : 1.6);
    cairo_stroke(cr);
}

static void draw_points(cairo_t *cr, const frame *fr, const sw_points *pts)
{
    if (pts == NULL)
        return;
    cairo_save(cr);
    cairo_rectangle(cr, fr->x - 6, fr->y - 6, fr->w + 12, fr->h + 12);
    cairo_clip(cr);
    for (size_t k = 0; k < pts->n; k++) {
        double complex z = pts->pt[k].z;
        if (creal(z) < fr->v[0] || creal(z) > fr->v[1] || cimag(z) < fr->v[2] ||
            cimag(z) > fr->v[3])
            continue;
        marker(cr, pts->pt[k].kind, fx_of(fr, creal(z)), fy_of(fr, cimag(z)));
    }
    cairo_restore(cr);
}

/* Cut pieces: finite ones as segments, rays to where they leave the view,
 * with an arrowhead there. */
static void draw_cuts(cairo_t *cr, const frame *fr, const sw_cuts *cuts, const double rgb[3],
                      double width)
{
    if (cuts == NULL)
        return;
    cairo_save(cr);
    cairo_rectangle(cr, fr->x, fr->y, fr->w, fr->h);
    cairo_clip(cr);
    set_rgb(cr, rgb);
    cairo_set_line_width(cr, width);
    cairo_set_line_cap(cr, CAIRO_LINE_CAP_ROUND);
    for (size_t k = 0; k < cuts->npieces; k++) {
        const sw_cut_piece *p = &cuts->piece[k];
        if (!p->to_inf) {
            cairo_move_to(cr, fx_of(fr, creal(p->from)), fy_of(fr, cimag(p->from)));
            cairo_line_to(cr, fx_of(fr, creal(p->to)), fy_of(fr, cimag(p->to)));
            cairo_stroke(cr);
            continue;
        }
        double t0, t1;
        if (!clip_ray(&t0, &t1, p->from, p->dir, fr->v))
            continue;
        double complex a = p->from + t0 * p->dir, b = p->from + t1 * p->dir;
        double ax = fx_of(fr, creal(a)), ay = fy_of(fr, cimag(a));
        double bx = fx_of(fr, creal(b)), by = fy_of(fr, cimag(b));
        cairo_move_to(cr, ax, ay);
        cairo_line_to(cr, bx, by);
        cairo_stroke(cr);
        if (hypot(bx - ax, by - ay) > 12)
            arrowhead(cr, bx, by, atan2(by - ay, bx - ax), 11, 4.5);
    }
    cairo_restore(cr);
}

static void draw_caption(cairo_t *cr, double x, double y, const char *const *lines, size_t n)
{
    cairo_set_source_rgb(cr, 0.15, 0.15, 0.15);
    for (size_t k = 0; k < n; k++)
        text_at(cr, x, y + (double)k * LINE, lines[k], FONT_SMALL, 0, 0);
}

static void draw_title(cairo_t *cr, double x, double y, const char *s)
{
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_BOLD);
    text_at(cr, x, y, s, FONT_TITLE, 0, 0);
    cairo_select_font_face(cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_NORMAL);
}

/* The title: the option, or the function's text (curves: "P = 0"). */
static void title_text(char *buf, size_t n, const sw_func *f, const sw_plot_opts *o)
{
    if (o->title)
        snprintf(buf, n, "%s", o->title);
    else if (sw_func_kind_of(f) == SW_FUNC_CURVE)
        snprintf(buf, n, "w(z):  %s = 0", sw_func_text(f));
    else
        snprintf(buf, n, "%s", sw_func_text(f));
    /* keep it on the picture */
    if (strlen(buf) > 90)
        snprintf(buf + 87, n - 87, "...");
}

/* ------------------------------------------------- sheets along a path */

typedef struct labeller {
    const sw_func *f;
    int curve;
    size_t len;              /* entries per label */
    sw_germ fresh;           /* curves: the freshly labelled fiber */
    double complex *fib;
    size_t n;
} labeller;

static sw_status labeller_init(labeller *L, const sw_func *f, sw_error *err)
{
    memset(L, 0, sizeof *L);
    L->f = f;
    L->curve = sw_func_kind_of(f) == SW_FUNC_CURVE;
    if (L->curve) {
        L->len = 1;
        L->n = sw_func_degree(f);
        L->fib = calloc(L->n ? L->n : 1, sizeof *L->fib);
        if (L->fib == NULL || sw_germ_init(&L->fresh, f) != SW_OK) {
            free(L->fib);
            L->fib = NULL;
            return sw_error_set(err, SW_ENOMEM, "out of memory");
        }
    } else {
        L->len = sw_expr_mv_count(sw_func_expr(f));
    }
    return SW_OK;
}

static void labeller_clear(labeller *L)
{
    if (L->curve)
        sw_germ_clear(&L->fresh);
    free(L->fib);
    memset(L, 0, sizeof *L);
}

/* The sheet label of germ G into OUT (L->len entries). */
static sw_status label_of(long *out, labeller *L, const sw_germ *g, sw_error *err)
{
    if (!L->curve) {
        if (L->len)
            sw_func_node_branches(out, L->len, L->f, g);
        return SW_OK;
    }
    sw_status st = sw_func_germ_at(&L->fresh, L->f, g->z, SW_BANK_NONE, NULL, err);
    if (st != SW_OK)
        return st;
    size_t n = sw_func_sheet_values(L->fib, L->n, L->f, &L->fresh);
    double complex w = sw_func_value(L->f, g);
    size_t best = 0;
    for (size_t i = 1; i < n; i++)
        if (cabs(L->fib[i] - w) < cabs(L->fib[best] - w))
            best = i;
    out[0] = (long)best + 1;
    return SW_OK;
}

static int same_label(const long *a, const long *b, size_t len)
{
    return len == 0 || memcmp(a, b, len * sizeof *a) == 0;
}

/* Index of LABEL in INFO's sheet list, appending it when new; (size_t)-1
 * when out of memory. */
static size_t sheet_index(sw_plot_info *info, const long *label)
{
    size_t len = info->label_len;
    for (size_t k = 0; k < info->nsheets; k++)
        if (same_label(info->label + k * len, label, len))
            return k;
    long *nl = realloc(info->label, (info->nsheets + 1) * (len ? len : 1) * sizeof *nl);
    if (nl == NULL)
        return (size_t)-1;
    info->label = nl;
    if (len)
        memcpy(info->label + info->nsheets * len, label, len * sizeof *label);
    return info->nsheets++;
}

static int add_piece(sw_plot_info *info, double t0, double t1, size_t sheet)
{
    sw_plot_piece *np = realloc(info->piece, (info->npieces + 1) * sizeof *np);
    if (np == NULL)
        return 0;
    info->piece = np;
    info->piece[info->npieces++] = (sw_plot_piece){t0, t1, sheet};
    return 1;
}

/* The pieces of PATH by sheet, from the dense log of TR, into INFO. */
static sw_status path_sheets(sw_plot_info *info, const sw_func *f, const sw_path *path,
                             const sw_trace *tr, sw_error *err)
{
    labeller L;
    sw_germ g;
    long *cur = NULL, *nxt = NULL, *mid = NULL;
    sw_status st = labeller_init(&L, f, err);
    if (st != SW_OK)
        return st;
    if (sw_germ_init(&g, f) != SW_OK) {
        labeller_clear(&L);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    size_t len = L.len, slots = len ? len : 1;
    info->label_len = len;
    cur = calloc(slots, sizeof *cur);
    nxt = calloc(slots, sizeof *nxt);
    mid = calloc(slots, sizeof *mid);
    if (!cur || !nxt || !mid) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    if (tr->nlog == 0 || tr->len != g.len) {
        st = sw_error_set(err, SW_EUSAGE, "the trace has no dense log for this function");
        goto cleanup;
    }
    double t_start = 0;
    for (size_t k = 0; k < tr->nlog; k++) {
        sw_germ view = {tr->z[k], SW_BANK_NONE, tr->sheet[k], tr->len, tr->state + k * tr->len};
        sw_status ls = label_of(k == 0 ? cur : nxt, &L, &view, err);
        if (ls != SW_OK) {
            if (k == 0) {
                st = ls;
                goto cleanup;
            }
            /* a fiber that cannot be computed at one logged point (it sits
               on a singular point of the curve): keep the current sheet */
            memcpy(nxt, cur, slots * sizeof *cur);
        }
        if (k == 0 || same_label(cur, nxt, len))
            continue;
        /* the sheet changes between logged germs k-1 and k: bisect */
        double lo = tr->t[k - 1], hi = tr->t[k], tol = BISECT_REL * (hi - lo);
        for (int it = 0; it < BISECT_MAX && hi - lo > tol; it++) {
            double tm = 0.5 * (lo + hi);
            if (sw_trace_germ_at(&g, tr, f, tm, path, err) != SW_OK ||
                label_of(mid, &L, &g, err) != SW_OK)
                break; /* keep the bracket found so far */
            if (same_label(mid, cur, len))
                lo = tm;
            else
                hi = tm;
        }
        double tc = 0.5 * (lo + hi);
        size_t s = sheet_index(info, cur);
        if (s == (size_t)-1 || !add_piece(info, t_start, tc, s)) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        t_start = tc;
        memcpy(cur, nxt, slots * sizeof *cur);
    }
    size_t s = sheet_index(info, cur);
    if (s == (size_t)-1 || !add_piece(info, t_start, tr->t[tr->nlog - 1], s))
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
cleanup:
    free(cur);
    free(nxt);
    free(mid);
    sw_germ_clear(&g);
    labeller_clear(&L);
    return st;
}

/* A sheet's label as text: "k = 0", "k = (0, 1)", "sheet 2", "single-valued". */
static void label_text(char *buf, size_t n, const sw_plot_info *info, size_t s, int curve)
{
    const long *l = info->label + s * info->label_len;
    size_t len = info->label_len;
    if (curve) {
        snprintf(buf, n, "sheet %ld", l[0]);
        return;
    }
    if (len == 0) {
        snprintf(buf, n, "single-valued");
        return;
    }
    if (len == 1) {
        snprintf(buf, n, "k = %ld", l[0]);
        return;
    }
    size_t used = (size_t)snprintf(buf, n, "k = (");
    for (size_t j = 0; j < len && used < n; j++)
        used += (size_t)snprintf(buf + used, n - used, "%s%ld", j ? ", " : "", l[j]);
    if (used < n)
        snprintf(buf + used, n - used, ")");
}

static void sheet_style(cairo_t *cr, size_t s, double width)
{
    set_rgb(cr, palette[s % NPAL]);
    cairo_set_line_width(cr, width);
    if (s >= NPAL) {
        double dash[2] = {7, 4};
        cairo_set_dash(cr, dash, 2, 0);
    } else {
        cairo_set_dash(cr, NULL, 0, 0);
    }
}

static void draw_path(cairo_t *cr, const frame *fr, const sw_path *path,
                      const sw_plot_info *info)
{
    cairo_save(cr);
    cairo_rectangle(cr, fr->x, fr->y, fr->w, fr->h);
    cairo_clip(cr);
    cairo_set_line_cap(cr, CAIRO_LINE_CAP_ROUND);
    cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
    for (size_t k = 0; k < info->npieces; k++) {
        const sw_plot_piece *p = &info->piece[k];
        double complex z = sw_path_point(path, p->t0);
        cairo_move_to(cr, fx_of(fr, creal(z)), fy_of(fr, cimag(z)));
        for (double v = floor(p->t0) + 1; v < p->t1; v++) {
            z = sw_path_point(path, v);
            cairo_line_to(cr, fx_of(fr, creal(z)), fy_of(fr, cimag(z)));
        }
        z = sw_path_point(path, p->t1);
        cairo_line_to(cr, fx_of(fr, creal(z)), fy_of(fr, cimag(z)));
        sheet_style(cr, p->sheet, 2.6);
        cairo_stroke(cr);
    }
    cairo_set_dash(cr, NULL, 0, 0);
    /* start: a square; end: an arrowhead along the last segment */
    double complex z0 = path->z[0];
    double x0 = fx_of(fr, creal(z0)), y0 = fy_of(fr, cimag(z0));
    cairo_rectangle(cr, x0 - 4.5, y0 - 4.5, 9, 9);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_fill_preserve(cr);
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_set_line_width(cr, 1.5);
    cairo_stroke(cr);
    size_t n = path->n;
    for (size_t k = n - 1; k > 0; k--) {
        double complex a = path->z[k - 1], b = path->z[n - 1];
        double ax = fx_of(fr, creal(a)), ay = fy_of(fr, cimag(a));
        double bx = fx_of(fr, creal(b)), by = fy_of(fr, cimag(b));
        if (hypot(bx - ax, by - ay) < 0.5)
            continue;
        cairo_set_source_rgb(cr, 0, 0, 0);
        arrowhead(cr, bx, by, atan2(by - ay, bx - ax), 13, 5.5);
        break;
    }
    cairo_restore(cr);
}

/* Legend entries: a symbol and a text, one per line. */
typedef struct legend {
    cairo_t *cr;
    double x, y;
} legend;

static void legend_heading(legend *lg, const char *s)
{
    cairo_set_source_rgb(lg->cr, 0, 0, 0);
    cairo_select_font_face(lg->cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL, CAIRO_FONT_WEIGHT_BOLD);
    text_at(lg->cr, lg->x, lg->y, s, FONT, 0, 1);
    cairo_select_font_face(lg->cr, "sans-serif", CAIRO_FONT_SLANT_NORMAL,
                           CAIRO_FONT_WEIGHT_NORMAL);
    lg->y += 18;
}

static void legend_text(legend *lg, const char *s)
{
    cairo_set_source_rgb(lg->cr, 0, 0, 0);
    text_at(lg->cr, lg->x + 30, lg->y, s, FONT_SMALL, 0, 1);
    lg->y += 17;
}

static void legend_marker(legend *lg, sw_point_kind kind, const char *s)
{
    marker(lg->cr, kind, lg->x + 11, lg->y);
    legend_text(lg, s);
}

static void legend_line(legend *lg, const double rgb[3], size_t style, double width,
                        const char *s)
{
    cairo_t *cr = lg->cr;
    if (style == (size_t)-1) {
        set_rgb(cr, rgb);
        cairo_set_line_width(cr, width);
        cairo_set_dash(cr, NULL, 0, 0);
    } else {
        sheet_style(cr, style, width);
    }
    cairo_move_to(cr, lg->x, lg->y);
    cairo_line_to(cr, lg->x + 22, lg->y);
    cairo_stroke(cr);
    cairo_set_dash(cr, NULL, 0, 0);
    legend_text(lg, s);
}

/* ------------------------------------------------------------- the plane */

static int kind_present(const sw_points *pts, sw_point_kind kind, const double v[4])
{
    for (size_t k = 0; pts && k < pts->n; k++) {
        double complex z = pts->pt[k].z;
        if (pts->pt[k].kind == kind && creal(z) >= v[0] && creal(z) <= v[1] &&
            cimag(z) >= v[2] && cimag(z) <= v[3])
            return 1;
    }
    return 0;
}

/* Common caption lines; returns how many were written into LINES. */
static size_t caption_lines(char lines[][200], const sw_points *pts, const sw_cuts *cuts,
                            const sw_plot_opts *o, const char *what)
{
    size_t n = 0;
    snprintf(lines[n++], 200, "numerical (double precision)%s%s", what ? ": " : "",
             what ? what : "");
    if (cuts && cuts->npieces)
        snprintf(lines[n++], 200, "cuts: %s", cuts->is_default
                                                   ? "the default system, one ray per branch "
                                                     "point away from their centroid"
                                                   : "as given");
    if (pts && !pts->complete)
        snprintf(lines[n++], 200, "branch points may be incomplete: %.150s", pts->incomplete);
    for (size_t k = 0; k < o->nnotes && k < SW_PLOT_MAX_NOTES; k++)
        if (o->note[k])
            snprintf(lines[n++], 200, "%.190s", o->note[k]);
    return n;
}

sw_status sw_plot_plane(const char *filename, const sw_func *f, const sw_points *pts,
                        const sw_cuts *cuts, const sw_path *path, const sw_trace *tr,
                        const sw_plot_opts *o_in, sw_plot_info *info, sw_error *err)
{
    sw_plot_opts o;
    sw_plot_info res;
    canvas cv;
    sw_plot_type type;
    sw_status st;
    char title[128];
    char lines[SW_PLOT_MAX_NOTES + 4][200];
    if (o_in)
        o = *o_in;
    else
        sw_plot_opts_init(&o);
    sw_plot_info_init(&res);
    memset(&cv, 0, sizeof cv);
    if ((st = sw_plot_type_of(&type, filename, err)) != SW_OK || (st = sw_plot_check_view(&o, err)) != SW_OK)
        return st;
    if ((path == NULL) != (tr == NULL))
        return sw_error_set(err, SW_EUSAGE, "a path needs its trace and a trace its path");
    if (path && (path->inf_start || path->inf_end))
        return sw_error_set(err, SW_EUNSUPPORTED,
                            "the plane picture draws finite paths only: end the path at a "
                            "finite vertex instead of 'inf'");
    if (path && path->n < 2)
        return sw_error_set(err, SW_EINPUT, "the path needs at least two vertices");
    if (path && (st = path_sheets(&res, f, path, tr, err)) != SW_OK)
        goto cleanup;

    frame fr;
    if (o.have_view) {
        fr.v[0] = o.xmin, fr.v[1] = o.xmax, fr.v[2] = o.ymin, fr.v[3] = o.ymax;
    } else {
        fit_view(fr.v, pts, cuts, path);
    }
    frame_size(&fr.w, &fr.h, fr.v, PLANE_SIDE);
    fr.w = round(fr.w), fr.h = round(fr.h);
    fr.x = MARGIN_LEFT;
    fr.y = MARGIN_TOP;
    int curve = sw_func_kind_of(f) == SW_FUNC_CURVE;
    char what[160];
    snprintf(what, sizeof what, "%s", path ? "sheets along the path from continuation, not proven"
                                           : "branch points located and classified by "
                                             "continuation");
    size_t ncap = caption_lines(lines, pts, cuts, &o, what);
    if (path && !curve && res.label_len)
        snprintf(lines[ncap++], 200, "k = branch index of each multivalued node "
                                     "(0: its principal value)");
    if (path && curve)
        snprintf(lines[ncap++], 200, "sheet = label of the value in the fiber over each point "
                                     "(sheets 1..n by increasing Re w there)");
    /* legend height decides the picture's height when it is taller */
    size_t nmv = curve ? 0 : res.label_len;
    double legend_h = 18 * 3 + 17 * 8 + 17 * (double)(res.nsheets < MAX_LEGEND ? res.nsheets
                                                                                : MAX_LEGEND + 1) +
                      17 * (double)(nmv < 6 ? nmv : 7);
    int W = (int)(fr.x + fr.w + MARGIN_RIGHT + LEGEND_WIDTH);
    double body = fmax(fr.h + 48, legend_h);
    int H = (int)(fr.y + body + 14 + LINE * (double)ncap + 8);
    if ((st = canvas_open(&cv, filename, W, H, err)) != SW_OK)
        goto cleanup;
    cairo_t *cr = cv.cr;
    title_text(title, sizeof title, f, &o);
    draw_title(cr, fr.x, 30, title);
    draw_axes(cr, &fr, 1);
    draw_cuts(cr, &fr, cuts, cut_rgb, 2.2);
    if (path)
        draw_path(cr, &fr, path, &res);
    draw_points(cr, &fr, pts);

    legend lg = {cr, fr.x + fr.w + MARGIN_RIGHT, fr.y + 8};
    int any = 0;
    if (kind_present(pts, SW_POINT_BRANCH, fr.v))
        legend_marker(&lg, SW_POINT_BRANCH, "branch point"), any = 1;
    if (kind_present(pts, SW_POINT_REGULAR, fr.v))
        legend_marker(&lg, SW_POINT_REGULAR, "candidate, not branched"), any = 1;
    if (kind_present(pts, SW_POINT_POLE, fr.v))
        legend_marker(&lg, SW_POINT_POLE, "pole"), any = 1;
    if (cuts && cuts->npieces)
        legend_line(&lg, cut_rgb, (size_t)-1, 2.2, "cut"), any = 1;
    if (pts && pts->complete) {
        char b[64];
        snprintf(b, sizeof b, "infinity: %s",
                 pts->infinity.kind == SW_POINT_BRANCH ? "branched" : "not branched");
        legend_text(&lg, b), any = 1;
    }
    if (path) {
        if (any)
            lg.y += 8;
        legend_heading(&lg, "sheets on the path");
        char b[200], nb[160];
        for (size_t j = 0; j < nmv && j < 6; j++) {
            sw_expr_mv_text(nb, sizeof nb, sw_func_expr(f), j);
            if (nmv == 1)
                snprintf(b, sizeof b, "k: %.60s", nb);
            else
                snprintf(b, sizeof b, "k%zu: %.60s", j + 1, nb);
            cairo_set_source_rgb(cr, 0.2, 0.2, 0.2);
            text_at(cr, lg.x, lg.y, b, FONT_SMALL, 0, 1);
            lg.y += 17;
        }
        if (nmv > 6) {
            snprintf(b, sizeof b, "... (%zu nodes)", nmv);
            text_at(cr, lg.x, lg.y, b, FONT_SMALL, 0, 1);
            lg.y += 17;
        }
        for (size_t s = 0; s < res.nsheets && s < MAX_LEGEND; s++) {
            label_text(b, sizeof b, &res, s, curve);
            legend_line(&lg, NULL, s, 2.6, b);
        }
        if (res.nsheets > MAX_LEGEND) {
            snprintf(b, sizeof b, "... and %zu more", res.nsheets - MAX_LEGEND);
            legend_text(&lg, b);
        }
        lg.y += 6;
        double sx = lg.x + 11, sy = lg.y;
        cairo_rectangle(cr, sx - 4.5, sy - 4.5, 9, 9);
        cairo_set_source_rgb(cr, 1, 1, 1);
        cairo_fill_preserve(cr);
        cairo_set_source_rgb(cr, 0, 0, 0);
        cairo_set_line_width(cr, 1.5);
        cairo_stroke(cr);
        legend_text(&lg, "start");
        arrowhead(cr, lg.x + 18, lg.y, 0, 13, 5.5);
        legend_text(&lg, "end");
    }
    {
        const char *lp[SW_PLOT_MAX_NOTES + 4];
        for (size_t k = 0; k < ncap; k++)
            lp[k] = lines[k];
        draw_caption(cr, 16, fr.y + body + 14, lp, ncap);
    }
    st = canvas_close(&cv, 1, err);
    if (st != SW_OK)
        goto cleanup;
    res.width = W;
    res.height = H;
    res.xmin = fr.v[0], res.xmax = fr.v[1], res.ymin = fr.v[2], res.ymax = fr.v[3];
    res.fx = (int)fr.x, res.fy = (int)fr.y, res.fw = (int)fr.w, res.fh = (int)fr.h;
    if (info) {
        sw_plot_info_clear(info);
        *info = res;
        sw_plot_info_init(&res);
    }
cleanup:
    canvas_close(&cv, 0, NULL);
    sw_plot_info_clear(&res);
    return st;
}

/* ------------------------------------------------------------- the graph */

static int perm_trivial(const int *perm, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (perm[i] != (int)i)
            return 0;
    return 1;
}

static void cycles_text(char *buf, size_t n, const int *perm, size_t len)
{
    int elems[SW_SHEETS_MAX];
    size_t lens[SW_SHEETS_MAX];
    size_t nc = sw_perm_cycles(elems, lens, perm, len), used = 0, at = 0;
    buf[0] = '\0';
    for (size_t c = 0; c < nc && used < n; c++) {
        if (lens[c] > 1) {
            used += (size_t)snprintf(buf + used, n - used, "(");
            for (size_t j = 0; j < lens[c] && used < n; j++)
                used += (size_t)snprintf(buf + used, n - used, "%s%d", j ? " " : "",
                                         elems[at + j] + 1);
            if (used < n)
                used += (size_t)snprintf(buf + used, n - used, ")");
        }
        at += lens[c];
    }
}

sw_status sw_plot_graph(const char *filename, const sw_func *f, const sw_points *pts,
                        const sw_sheets *sh, const sw_plot_opts *o_in, sw_plot_info *info,
                        sw_error *err)
{
    sw_plot_opts o;
    canvas cv;
    sw_plot_type type;
    sw_status st;
    char title[128], buf[256];
    char lines[SW_PLOT_MAX_NOTES + 8][200];
    if (o_in)
        o = *o_in;
    else
        sw_plot_opts_init(&o);
    memset(&cv, 0, sizeof cv);
    if ((st = sw_plot_type_of(&type, filename, err)) != SW_OK)
        return st;
    if (sw_func_kind_of(f) != SW_FUNC_CURVE)
        return sw_error_set(err, SW_EUSAGE,
                            "the monodromy graph needs a curve (an expression has no finite set "
                            "of sheets)");
    size_t n = pts->nsheets;
    if (n == 0 || n > SW_SHEETS_MAX || sh == NULL || sh->nsheets != n)
        return sw_error_set(err, SW_EUSAGE, "no monodromy data for the graph");
    /* the points with a non-trivial permutation, infinity last */
    size_t npts = 0;
    const sw_point **act = malloc((pts->n + 1) * sizeof *act);
    int *count = calloc(n * n, sizeof *count);
    if (act == NULL || count == NULL) {
        free(act);
        free(count);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    for (size_t k = 0; k < pts->n; k++)
        if (pts->pt[k].perm && pts->pt[k].n == n && !perm_trivial(pts->pt[k].perm, n))
            act[npts++] = &pts->pt[k];
    if (pts->infinity.perm && pts->infinity.n == n && !perm_trivial(pts->infinity.perm, n))
        act[npts++] = &pts->infinity;

    size_t ncap = 0;
    snprintf(lines[ncap++], 200, "%zu sheet%s over the base point z0 = %s, labelled by increasing "
             "Re w there", n, n == 1 ? "" : "s", cshort(buf, sizeof buf, pts->base));
    {
        size_t used = (size_t)snprintf(lines[ncap], 200, "components: %zu; genus: ",
                                       sh->ncomponents);
        for (size_t k = 0; k < sh->ncomponents && used < 200; k++)
            used += (size_t)snprintf(lines[ncap] + used, 200 - used, "%s%ld", k ? ", " : "",
                                     sh->genus[k]);
        if (used < 200)
            snprintf(lines[ncap] + used, 200 - used, " (Riemann-Hurwitz)");
        ncap++;
    }
    snprintf(lines[ncap++], 200, "monodromy group order %.60s; product relation %s",
             sh->group_order ? sh->group_order : "?", pts->product_ok ? "verified" : "FAILED");
    snprintf(lines[ncap++], 200, "numerical (double precision): loops tracked by continuation, "
                                 "not proven");
    for (size_t k = 0; k < o.nnotes && k < SW_PLOT_MAX_NOTES; k++)
        if (o.note[k])
            snprintf(lines[ncap++], 200, "%.190s", o.note[k]);

    const double R = 180, cx = 130 + R, cy = MARGIN_TOP + 56 + R;
    double rd = fmin(17, 0.38 * 2 * PI * R / (double)n);
    double legend_h = 18 + 17 * (double)(npts < MAX_LEGEND ? npts : MAX_LEGEND + 1);
    int W = (int)(cx + R + 130 + LEGEND_WIDTH);
    double body = fmax(2 * R + 112, legend_h + 40);
    int H = (int)(MARGIN_TOP + body + LINE * (double)ncap + 12);
    if ((st = canvas_open(&cv, filename, W, H, err)) != SW_OK)
        goto cleanup;
    cairo_t *cr = cv.cr;
    title_text(title, sizeof title, f, &o);
    draw_title(cr, 20, 30, title);
    text_at(cr, 20, 48, "monodromy graph: sheets and how loops around each branch point permute "
                        "them", FONT_SMALL, 0, 0);
    double complex *pos = malloc(n * sizeof *pos);
    if (pos == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    for (size_t i = 0; i < n; i++) {
        double a = PI / 2 - 2 * PI * (double)i / (double)n;
        /* picture coordinates, y down: sheet 1 at the top, then clockwise */
        pos[i] = n == 1 ? CMPLX(cx, cy) : CMPLX(cx + R * cos(a), cy - R * sin(a));
    }
    /* arcs */
    cairo_set_line_cap(cr, CAIRO_LINE_CAP_ROUND);
    for (size_t p = 0; p < npts; p++) {
        const int *perm = act[p]->perm;
        for (size_t a = 0; a < n; a++) {
            size_t b = (size_t)perm[a];
            if (b == a)
                continue;
            int m = count[a * n + b]++;
            double complex A = pos[a], B = pos[b], d = B - A;
            double L = cabs(d);
            /* bulge to the left of a -> b (y down: multiply by -i) */
            double complex nrm = CMPLX(0.0, -1.0) * d / L;
            double complex C = 0.5 * (A + B) + (0.14 + 0.11 * m) * L * nrm;
            double complex A1 = A + rd * (C - A) / cabs(C - A), B1 = B + (rd + 2) * (C - B) / cabs(C - B);
            double complex c1 = A1 + 2.0 / 3.0 * (C - A1), c2 = B1 + 2.0 / 3.0 * (C - B1);
            sheet_style(cr, p, 2.0);
            cairo_move_to(cr, creal(A1), cimag(A1));
            cairo_curve_to(cr, creal(c1), cimag(c1), creal(c2), cimag(c2), creal(B1), cimag(B1));
            cairo_stroke(cr);
            cairo_set_dash(cr, NULL, 0, 0);
            double complex dir = B1 - C;
            arrowhead(cr, creal(B1), cimag(B1), atan2(cimag(dir), creal(dir)), 11, 4.5);
        }
    }
    /* discs */
    for (size_t i = 0; i < n; i++) {
        cairo_new_sub_path(cr);
        cairo_arc(cr, creal(pos[i]), cimag(pos[i]), rd, 0, 2 * PI);
        cairo_set_source_rgb(cr, 1, 1, 1);
        cairo_fill_preserve(cr);
        cairo_set_source_rgb(cr, 0, 0, 0);
        cairo_set_line_width(cr, 1.5);
        cairo_stroke(cr);
        snprintf(buf, sizeof buf, "%zu", i + 1);
        text_at(cr, creal(pos[i]), cimag(pos[i]), buf, rd > 12 ? FONT : FONT_SMALL, 0.5, 1);
        if (pts->base_fiber && n <= 16) {
            double complex u = n == 1 ? CMPLX(0.0, 1.0) : (pos[i] - CMPLX(cx, cy)) / R;
            double complex q = pos[i] + (rd + 10) * u;
            char wb[64];
            snprintf(buf, sizeof buf, "w = %s", cshort(wb, sizeof wb, pts->base_fiber[i]));
            cairo_set_source_rgb(cr, 0.3, 0.3, 0.3);
            text_at(cr, creal(q), cimag(q), buf, FONT_SMALL,
                    creal(u) > 0.3 ? 0 : creal(u) < -0.3 ? 1 : 0.5, 1);
        }
    }
    free(pos);
    /* legend */
    legend lg = {cr, cx + R + 120, MARGIN_TOP + 40};
    legend_heading(&lg, npts ? "branch points (cycles)" : "no branch points");
    for (size_t p = 0; p < npts && p < MAX_LEGEND; p++) {
        char cyc[160], zb[64];
        cycles_text(cyc, sizeof cyc, act[p]->perm, n);
        if (act[p]->at_infinity)
            snprintf(buf, sizeof buf, "infinity  %.150s", cyc);
        else
            snprintf(buf, sizeof buf, "z = %s  %.150s", cshort(zb, sizeof zb, act[p]->z), cyc);
        legend_line(&lg, NULL, p, 2.0, buf);
    }
    if (npts > MAX_LEGEND) {
        snprintf(buf, sizeof buf, "... and %zu more", npts - MAX_LEGEND);
        legend_text(&lg, buf);
    }
    {
        const char *lp[SW_PLOT_MAX_NOTES + 8];
        for (size_t k = 0; k < ncap; k++)
            lp[k] = lines[k];
        draw_caption(cr, 20, MARGIN_TOP + body, lp, ncap);
    }
    st = canvas_close(&cv, 1, err);
    if (st == SW_OK && info) {
        sw_plot_info_clear(info);
        info->width = W;
        info->height = H;
    }
cleanup:
    canvas_close(&cv, 0, NULL);
    free(act);
    free(count);
    return st;
}

/* ------------------------------------------------------------- colouring */

void sw_plot_value_colour(double rgb[3], double complex w)
{
    double re = creal(w), im = cimag(w);
    if (isnan(re) || isnan(im)) {
        rgb[0] = rgb[1] = rgb[2] = 0.5;
        return;
    }
    double m = cabs(w);
    if (m == 0) {
        rgb[0] = rgb[1] = rgb[2] = 0;
        return;
    }
    if (isinf(m)) {
        rgb[0] = rgb[1] = rgb[2] = 1;
        return;
    }
    double h = atan2(im, re) / (2 * PI); /* turns, in (-1/2, 1/2] */
    h -= floor(h);
    double l = log2(m);
    double v = 0.55 + 0.45 * (l - floor(l)), s = 0.9;
    /* HSV to RGB (common practice, no source) */
    double h6 = 6 * h;
    int sector = (int)floor(h6) % 6;
    double fpart = h6 - floor(h6);
    double p = v * (1 - s), q = v * (1 - s * fpart), t = v * (1 - s * (1 - fpart));
    switch (sector) {
    case 0: rgb[0] = v, rgb[1] = t, rgb[2] = p; break;
    case 1: rgb[0] = q, rgb[1] = v, rgb[2] = p; break;
    case 2: rgb[0] = p, rgb[1] = v, rgb[2] = t; break;
    case 3: rgb[0] = p, rgb[1] = q, rgb[2] = v; break;
    case 4: rgb[0] = t, rgb[1] = p, rgb[2] = v; break;
    default: rgb[0] = v, rgb[1] = p, rgb[2] = q; break;
    }
}

static uint32_t pack_rgb(const double c[3])
{
    uint32_t r = (uint32_t)lround(255 * fmin(1, fmax(0, c[0])));
    uint32_t g = (uint32_t)lround(255 * fmin(1, fmax(0, c[1])));
    uint32_t b = (uint32_t)lround(255 * fmin(1, fmax(0, c[2])));
    return 0xFF000000u | r << 16 | g << 8 | b;
}

/* A cut piece as a segment (rays cut far beyond the view). */
typedef struct seg {
    double complex a, b;
} seg;

/* The flood fill's state. */
typedef struct filler {
    const sw_func *f;
    const sw_branch *b;
    size_t gw, gh;
    double x0, y1, dx, dy;        /* pixel (i, j) centre: x0 + (i+1/2) dx, y1 - (j+1/2) dy */
    unsigned char *state;         /* 0 unset, 1 set, 2 given up, 3 centre on a cut */
    uint32_t *px;                 /* image data rows (stride in uint32) */
    size_t stride;
    size_t nseg;
    seg *cut;
    double tol;
    sw_step_opts so;
    size_t len;                   /* germ slots */
    /* the queue of pixels to expand, with their germs */
    size_t qhead, qn, qcap;
    size_t *qpix;
    int *qsheet;
    double complex *qstate;
    sw_germ cur, w1, w2;
    size_t continued, direct, unevaluated, direct_tries;
} filler;

static double complex pix_z(const filler *F, size_t i, size_t j)
{
    return CMPLX(F->x0 + ((double)i + 0.5) * F->dx, F->y1 - ((double)j + 0.5) * F->dy);
}

static int blocked(const filler *F, double complex a, double complex b)
{
    for (size_t k = 0; k < F->nseg; k++)
        if (seg_hits(a, b, F->cut[k].a, F->cut[k].b, F->tol))
            return 1;
    return 0;
}

static int on_cut(const filler *F, double complex z)
{
    for (size_t k = 0; k < F->nseg; k++)
        if (sw_segment_distance(z, F->cut[k].a, F->cut[k].b) <= F->tol)
            return 1;
    return 0;
}

static void paint(filler *F, size_t pix, double complex w)
{
    double c[3];
    sw_plot_value_colour(c, w);
    F->px[(pix / F->gw) * F->stride + pix % F->gw] = pack_rgb(c);
}

static int qpush(filler *F, size_t pix, const sw_germ *g)
{
    if (F->qn == F->qcap) {
        size_t nc = F->qcap ? 2 * F->qcap : 1024;
        size_t *np = malloc(nc * sizeof *np);
        int *ns = malloc(nc * sizeof *ns);
        double complex *nst = malloc(nc * (F->len ? F->len : 1) * sizeof *nst);
        if (!np || !ns || !nst) {
            free(np);
            free(ns);
            free(nst);
            return 0;
        }
        for (size_t k = 0; k < F->qn; k++) {
            size_t from = (F->qhead + k) % F->qcap;
            np[k] = F->qpix[from];
            ns[k] = F->qsheet[from];
            memcpy(nst + k * F->len, F->qstate + from * F->len, F->len * sizeof *nst);
        }
        free(F->qpix);
        free(F->qsheet);
        free(F->qstate);
        F->qpix = np;
        F->qsheet = ns;
        F->qstate = nst;
        F->qcap = nc;
        F->qhead = 0;
    }
    size_t at = (F->qhead + F->qn) % F->qcap;
    F->qpix[at] = pix;
    F->qsheet[at] = g->sheet;
    memcpy(F->qstate + at * F->len, g->s, F->len * sizeof *g->s);
    F->qn++;
    return 1;
}

/* Continue IN to Z by 1, 2, 4, ... WALK_MAX_PIECES equal steps; the result
 * in F->w1 on success. */
static int walk(filler *F, const sw_germ *in, double complex z)
{
    for (int pieces = 1; pieces <= WALK_MAX_PIECES; pieces *= 2) {
        sw_germ_copy(&F->w1, in);
        int ok = 1;
        for (int k = 1; k <= pieces && ok; k++) {
            double complex zk = k == pieces ? z : in->z + (z - in->z) * ((double)k / pieces);
            sw_step_result r = sw_func_advance(&F->w2, &F->w1, zk, F->f, &F->so, NULL);
            if (r == SW_STEP_OK) {
                sw_germ_copy(&F->w1, &F->w2);
            } else {
                ok = 0;
                if (r == SW_STEP_SINGULAR)
                    return 0;
            }
        }
        if (ok)
            return 1;
    }
    return 0;
}

/* Expand the queue until it is empty.  Returns 0 when out of memory. */
static int fill(filler *F)
{
    static const int di[4] = {0, -1, 1, 0}, dj[4] = {-1, 0, 0, 1}; /* up, left, right, down */
    while (F->qn) {
        size_t at = F->qhead, pix = F->qpix[at];
        F->qhead = (F->qhead + 1) % F->qcap;
        F->qn--;
        size_t i = pix % F->gw, j = pix / F->gw;
        F->cur.z = pix_z(F, i, j);
        F->cur.bank = SW_BANK_NONE;
        F->cur.sheet = F->qsheet[at];
        memcpy(F->cur.s, F->qstate + at * F->len, F->len * sizeof *F->cur.s);
        for (int k = 0; k < 4; k++) {
            if ((i == 0 && di[k] < 0) || (j == 0 && dj[k] < 0) ||
                (i + 1 == F->gw && di[k] > 0) || (j + 1 == F->gh && dj[k] > 0))
                continue;
            size_t qi = (size_t)((long)i + di[k]), qj = (size_t)((long)j + dj[k]);
            size_t q = qj * F->gw + qi;
            if (F->state[q] == 1 || F->state[q] == 2)
                continue;
            double complex zq = pix_z(F, qi, qj);
            if (F->state[q] == 3) {
                /* a centre on a cut takes the limit from its preferred
                   neighbour: the first of up, left, right, down that is off
                   the cuts -- the largest imaginary part, then the smallest
                   real part */
                int pref = -1;
                for (int m = 0; m < 4 && pref < 0; m++) {
                    long ni = (long)qi + di[m], nj = (long)qj + dj[m];
                    if (ni < 0 || nj < 0 || ni >= (long)F->gw || nj >= (long)F->gh)
                        continue;
                    if (F->state[(size_t)nj * F->gw + (size_t)ni] != 3)
                        pref = m;
                }
                if (pref < 0 || (long)qi + di[pref] != (long)i || (long)qj + dj[pref] != (long)j)
                    continue;
                if (blocked(F, F->cur.z, 0.5 * (F->cur.z + zq)))
                    continue;
                if (walk(F, &F->cur, zq)) {
                    F->state[q] = 1;
                    paint(F, q, sw_func_value(F->f, &F->w1));
                    F->continued++;
                }
                continue;
            }
            if (blocked(F, F->cur.z, zq) || !walk(F, &F->cur, zq))
                continue;
            F->state[q] = 1;
            paint(F, q, sw_func_value(F->f, &F->w1));
            F->continued++;
            if (!qpush(F, q, &F->w1))
                return 0;
        }
    }
    return 1;
}

/* Give up the pixels connected to PIX without meeting a cut: the cuts
 * separate them from the fixing point.  Returns 0 when out of memory. */
static int give_up_region(filler *F, size_t pix)
{
    static const int di[4] = {0, -1, 1, 0}, dj[4] = {-1, 0, 0, 1};
    size_t n = 0, cap = 1024;
    size_t *stack = malloc(cap * sizeof *stack);
    if (stack == NULL)
        return 0;
    F->state[pix] = 2;
    stack[n++] = pix;
    while (n) {
        size_t p = stack[--n], i = p % F->gw, j = p / F->gw;
        double complex z = pix_z(F, i, j);
        for (int k = 0; k < 4; k++) {
            long ni = (long)i + di[k], nj = (long)j + dj[k];
            if (ni < 0 || nj < 0 || ni >= (long)F->gw || nj >= (long)F->gh)
                continue;
            size_t q = (size_t)nj * F->gw + (size_t)ni;
            if (F->state[q] != 0 || blocked(F, z, pix_z(F, (size_t)ni, (size_t)nj)))
                continue;
            if (n == cap) {
                size_t *ns = realloc(stack, 2 * cap * sizeof *ns);
                if (ns == NULL) {
                    free(stack);
                    return 0;
                }
                stack = ns;
                cap *= 2;
            }
            F->state[q] = 2;
            stack[n++] = q;
        }
    }
    free(stack);
    return 1;
}

/* Evaluate pixel PIX directly and seed the fill from it.  Returns 1 when
 * seeded, 0 when the evaluation failed, -1 when out of memory. */
static int seed(filler *F, size_t pix)
{
    sw_error e;
    F->direct_tries++;
    size_t i = pix % F->gw, j = pix / F->gw;
    sw_status st = sw_branch_eval(&F->w1, F->b, pix_z(F, i, j), SW_BANK_NONE, &e);
    if (st == SW_EINPUT) /* no route avoids the cuts: the whole region is cut off */
        return give_up_region(F, pix) ? 0 : -1;
    if (st != SW_OK) { /* a singular point: this pixel only */
        F->state[pix] = 2;
        return 0;
    }
    F->state[pix] = 1;
    paint(F, pix, sw_func_value(F->f, &F->w1));
    F->direct++;
    if (!qpush(F, pix, &F->w1))
        return -1;
    return fill(F) ? 1 : -1;
}

static void filler_clear(filler *F)
{
    free(F->state);
    free(F->cut);
    free(F->qpix);
    free(F->qsheet);
    free(F->qstate);
    sw_germ_clear(&F->cur);
    sw_germ_clear(&F->w1);
    sw_germ_clear(&F->w2);
}

/* Fill the image surface IMG (gw x gh) with the colouring of B. */
static sw_status colour_grid(filler *F, cairo_surface_t *img, const sw_cuts *cuts,
                             const double v[4], sw_error *err)
{
    sw_status st = SW_OK;
    size_t gw = F->gw, gh = F->gh, npix = gw * gh;
    F->x0 = v[0];
    F->y1 = v[3];
    F->dx = (v[1] - v[0]) / (double)gw;
    F->dy = (v[3] - v[2]) / (double)gh;
    double scale = fmax(fmax(fabs(v[0]), fabs(v[1])), fmax(fabs(v[2]), fabs(v[3])));
    scale = fmax(scale, fmax(v[1] - v[0], v[3] - v[2]));
    /* at least what sw_branch_eval calls "on a cut" (1e-12 of the larger of
       the cuts' size and |z|), so that a direct evaluation never fails for
       that reason and its SW_EINPUT means "separated by the cuts" */
    double cscale = fmax(1.0, scale);
    for (size_t k = 0; cuts && k < cuts->npieces; k++) {
        cscale = fmax(cscale, cabs(cuts->piece[k].from));
        if (!cuts->piece[k].to_inf)
            cscale = fmax(cscale, cabs(cuts->piece[k].to));
    }
    F->tol = fmax(ON_CUT_REL * scale, ON_CUT_BRANCH * cscale);
    sw_step_opts_init(&F->so);
    F->state = calloc(npix, 1);
    F->nseg = cuts ? cuts->npieces : 0;
    F->cut = calloc(F->nseg ? F->nseg : 1, sizeof *F->cut);
    if (!F->state || !F->cut || sw_germ_init(&F->cur, F->f) != SW_OK ||
        sw_germ_init(&F->w1, F->f) != SW_OK || sw_germ_init(&F->w2, F->f) != SW_OK)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    F->len = F->cur.len;
    for (size_t k = 0; k < F->nseg; k++) {
        const sw_cut_piece *p = &cuts->piece[k];
        double far = 4 * (scale + cabs(p->from)) + 1;
        F->cut[k].a = p->from;
        F->cut[k].b = p->to_inf ? p->from + far * p->dir : p->to;
    }
    cairo_surface_flush(img);
    F->px = (uint32_t *)(void *)cairo_image_surface_get_data(img);
    F->stride = (size_t)cairo_image_surface_get_stride(img) / 4;
    double grey[3] = {0.5, 0.5, 0.5};
    uint32_t g = pack_rgb(grey);
    for (size_t j = 0; j < gh; j++)
        for (size_t i = 0; i < gw; i++) {
            F->px[j * F->stride + i] = g;
            if (on_cut(F, pix_z(F, i, j)))
                F->state[j * gw + i] = 3;
        }
    /* the seed: the pixel nearest the anchor, off the cuts */
    double complex a = sw_branch_anchor(F->b)->z;
    double ai = floor((creal(a) - F->x0) / F->dx), aj = floor((F->y1 - cimag(a)) / F->dy);
    size_t si = (size_t)fmin(fmax(ai, 0), (double)gw - 1),
           sj = (size_t)fmin(fmax(aj, 0), (double)gh - 1);
    size_t best = npix;
    double bd = INFINITY;
    for (size_t j = 0; j < gh; j++)
        for (size_t i = 0; i < gw; i++) {
            double d = hypot((double)i - (double)si, (double)j - (double)sj);
            if (F->state[j * gw + i] == 0 && d < bd)
                bd = d, best = j * gw + i;
        }
    if (best < npix && seed(F, best) < 0)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    /* what the fill did not reach: seeds of their own, within the budget */
    for (size_t p = 0; p < npix; p++) {
        if (F->state[p] != 0)
            continue;
        if (F->direct_tries >= SW_PLOT_DIRECT_MAX)
            break;
        if (seed(F, p) < 0)
            return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    for (size_t p = 0; p < npix; p++)
        if (F->state[p] != 1)
            F->unevaluated++;
    cairo_surface_mark_dirty(img);
    return st;
}

sw_status sw_plot_colour(const char *filename, const sw_func *f, const sw_branch *b,
                         const sw_cuts *cuts, const sw_points *pts, const sw_plot_opts *o_in,
                         sw_plot_info *info, sw_error *err)
{
    sw_plot_opts o;
    canvas cv;
    sw_plot_type type;
    sw_status st;
    filler F;
    cairo_surface_t *img = NULL;
    char title[128], buf[200], b1[64], b2[64];
    char lines[SW_PLOT_MAX_NOTES + 8][200];
    if (o_in)
        o = *o_in;
    else
        sw_plot_opts_init(&o);
    memset(&cv, 0, sizeof cv);
    memset(&F, 0, sizeof F);
    if ((st = sw_plot_type_of(&type, filename, err)) != SW_OK || (st = sw_plot_check_view(&o, err)) != SW_OK)
        return st;
    if (o.pixels < SW_PLOT_PIXELS_MIN || o.pixels > SW_PLOT_PIXELS_MAX)
        return sw_error_set(err, SW_EUSAGE, "pixels: %zu is outside %d..%d", o.pixels,
                            SW_PLOT_PIXELS_MIN, SW_PLOT_PIXELS_MAX);
    if (b == NULL)
        return sw_error_set(err, SW_EUSAGE, "no regular branch to colour");
    frame fr;
    if (o.have_view) {
        fr.v[0] = o.xmin, fr.v[1] = o.xmax, fr.v[2] = o.ymin, fr.v[3] = o.ymax;
    } else {
        fit_view(fr.v, pts, cuts, NULL);
    }
    frame_size(&fr.w, &fr.h, fr.v, (double)o.pixels);
    fr.w = fmax(1, round(fr.w));
    fr.h = fmax(1, round(fr.h));
    fr.x = MARGIN_LEFT;
    fr.y = MARGIN_TOP;
    F.f = f;
    F.b = b;
    F.gw = (size_t)fr.w;
    F.gh = (size_t)fr.h;
    img = cairo_image_surface_create(CAIRO_FORMAT_RGB24, (int)F.gw, (int)F.gh);
    if (cairo_surface_status(img) != CAIRO_STATUS_SUCCESS) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory for a %zu x %zu grid", F.gw, F.gh);
        goto cleanup;
    }
    if ((st = colour_grid(&F, img, cuts, fr.v, err)) != SW_OK)
        goto cleanup;

    const sw_germ *an = sw_branch_anchor(b);
    size_t ncap = 0;
    snprintf(lines[ncap++], 200, "numerical (double precision): values by continuation, not "
                                 "proven");
    snprintf(lines[ncap++], 200, "regular branch fixed by w = %s at z = %s",
             cshort(b1, sizeof b1, sw_func_value(f, an)), cshort(b2, sizeof b2, an->z));
    snprintf(lines[ncap++], 200, "pixels: %zu continued, %zu evaluated directly, %zu grey (not "
             "evaluated)", F.continued, F.direct, F.unevaluated);
    if (cuts && cuts->npieces)
        snprintf(lines[ncap++], 200, "cuts: %s", cuts->is_default
                                                     ? "the default system, one ray per branch "
                                                       "point away from their centroid"
                                                     : "as given");
    if (pts && !pts->complete)
        snprintf(lines[ncap++], 200, "branch points may be incomplete: %.150s", pts->incomplete);
    for (size_t k = 0; k < o.nnotes && k < SW_PLOT_MAX_NOTES; k++)
        if (o.note[k])
            snprintf(lines[ncap++], 200, "%.190s", o.note[k]);

    int W = (int)fmax(fr.x + fr.w + MARGIN_RIGHT, 640);
    double key_y = fr.y + fr.h + 58;
    int H = (int)(key_y + 40 + LINE * (double)ncap + 6);
    if ((st = canvas_open(&cv, filename, W, H, err)) != SW_OK)
        goto cleanup;
    cairo_t *cr = cv.cr;
    title_text(title, sizeof title, f, &o);
    draw_title(cr, 16, 30, title);
    /* the grid, pixel for pixel */
    cairo_save(cr);
    cairo_set_source_surface(cr, img, fr.x, fr.y);
    cairo_pattern_set_filter(cairo_get_source(cr), CAIRO_FILTER_NEAREST);
    cairo_rectangle(cr, fr.x, fr.y, fr.w, fr.h);
    cairo_fill(cr);
    cairo_restore(cr);
    draw_axes(cr, &fr, 0);
    draw_cuts(cr, &fr, cuts, cut_rgb, 1.6);
    draw_points(cr, &fr, pts);
    /* the fixing point: a ring */
    if (creal(an->z) >= fr.v[0] && creal(an->z) <= fr.v[1] && cimag(an->z) >= fr.v[2] &&
        cimag(an->z) <= fr.v[3]) {
        double x = fx_of(&fr, creal(an->z)), y = fy_of(&fr, cimag(an->z));
        cairo_new_sub_path(cr);
        cairo_arc(cr, x, y, 6, 0, 2 * PI);
        cairo_set_source_rgb(cr, 1, 1, 1);
        cairo_set_line_width(cr, 3);
        cairo_stroke_preserve(cr);
        cairo_set_source_rgb(cr, 0, 0, 0);
        cairo_set_line_width(cr, 1.2);
        cairo_stroke(cr);
    }
    /* the key: arg w from -pi to pi, and the brightness rule */
    {
        double kx = 16, kw = 220, kh = 12;
        for (int k = 0; k < (int)kw; k++) {
            double c[3];
            double a = -PI + 2 * PI * (k + 0.5) / kw;
            sw_plot_value_colour(c, cexp(CMPLX(0.62, a))); /* log2|w| ~ 0.9: bright */
            set_rgb(cr, c);
            cairo_rectangle(cr, kx + k, key_y - kh, 1.2, kh);
            cairo_fill(cr);
        }
        cairo_set_source_rgb(cr, 0, 0, 0);
        cairo_set_line_width(cr, 0.8);
        cairo_rectangle(cr, kx, key_y - kh, kw, kh);
        cairo_stroke(cr);
        text_at(cr, kx, key_y + 13, "arg w = -\xcf\x80", FONT_SMALL, 0, 0);
        text_at(cr, kx + kw / 2, key_y + 13, "0", FONT_SMALL, 0.5, 0);
        text_at(cr, kx + kw, key_y + 13, "\xcf\x80", FONT_SMALL, 1, 0);
        snprintf(buf, sizeof buf, "hue: arg w; brightness rises from |w| = 2^k to 2^(k+1)");
        text_at(cr, kx + kw + 16, key_y - 2, buf, FONT_SMALL, 0, 0);
        text_at(cr, kx + kw + 16, key_y + 13, "black: w = 0, grey: not evaluated", FONT_SMALL,
                0, 0);
    }
    {
        const char *lp[SW_PLOT_MAX_NOTES + 8];
        for (size_t k = 0; k < ncap; k++)
            lp[k] = lines[k];
        draw_caption(cr, 16, key_y + 38, lp, ncap);
    }
    st = canvas_close(&cv, 1, err);
    if (st == SW_OK && info) {
        sw_plot_info_clear(info);
        info->width = W;
        info->height = H;
        info->xmin = fr.v[0], info->xmax = fr.v[1], info->ymin = fr.v[2], info->ymax = fr.v[3];
        info->fx = (int)fr.x, info->fy = (int)fr.y, info->fw = (int)fr.w, info->fh = (int)fr.h;
        info->continued = F.continued;
        info->direct = F.direct;
        info->unevaluated = F.unevaluated;
    }
cleanup:
    canvas_close(&cv, 0, NULL);
    if (img)
        cairo_surface_destroy(img);
    filler_clear(&F);
    return st;
}
