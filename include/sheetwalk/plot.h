/* sheetwalk — pictures: the plane, the monodromy graph, domain colouring.
 *
 * Three pictures, each written with cairo to SVG, PNG or PDF (chosen by the
 * file name's extension):
 *  - the plane: axes with tick labels, the finite branch points (filled disc:
 *    branch point; open circle: candidate that is not branched; cross: pole),
 *    a cut system (rays clipped to the view, with an arrow where they leave
 *    it) and optionally a tracked path drawn in pieces coloured by the sheet
 *    the continued function is on;
 *  - the monodromy graph of a curve: sheets as labelled discs on a circle,
 *    one directed arc per step of every cycle of every local permutation,
 *    one colour per branch point, with the components and genus;
 *  - domain colouring of a regular branch on a pixel grid (hue = arg w,
 *    brightness rising from |w| = 2^k to 2^(k+1): contour bands at the powers
 *    of 2), the cuts and branch points drawn on top.
 * Every picture carries the caption line "numerical (double precision)":
 * nothing drawn is a proof.
 *
 * "Sheet" along a path: for an expression, the vector of branch indices of
 * its multivalued nodes (sw_func_node_branches: 0 = principal value of that
 * node); for a curve, the label (1-based) of the tracked value in the fiber
 * over each point labelled afresh there (increasing real part, see curve.c),
 * found as the nearest fiber value.
 *
 * Coordinates: the picture is W x H units (pixels for PNG, points for SVG and
 * PDF), origin at the top left, y downwards.  The view [xmin, xmax] x
 * [ymin, ymax] of the complex plane fills the frame (fx, fy, fw, fh); the
 * scales are equal unless one side of the view is more than 4 times the
 * other.  In the colour picture one grid pixel is one picture unit and grid
 * pixel (i, j) (column i from the left, row j from the top) shows the branch
 * at Re z = xmin + (i + 1/2)(xmax - xmin)/fw, Im z = ymax - (j + 1/2)(ymax - ymin)/fh. */
#ifndef SHEETWALK_PLOT_H
#define SHEETWALK_PLOT_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/func.h"
#include "sheetwalk/monodromy.h"
#include "sheetwalk/cuts.h"
#include "sheetwalk/path.h"
#include "sheetwalk/sheets.h"
#include "sheetwalk/track.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum sw_plot_type { SW_PLOT_SVG = 1, SW_PLOT_PNG = 2, SW_PLOT_PDF = 3 } sw_plot_type;

/* The file type from FILENAME's extension (".svg", ".png", ".pdf", any
 * case).  SW_EUSAGE with a message naming the extension otherwise. */
sw_status sw_plot_type_of(sw_plot_type *type, const char *filename, sw_error *err);
/* "svg", "png" or "pdf". */
const char *sw_plot_type_name(sw_plot_type type);

/* Limits of the colour grid (pixels on its long side). */
#define SW_PLOT_PIXELS_DEFAULT 300
#define SW_PLOT_PIXELS_MIN 8
#define SW_PLOT_PIXELS_MAX 2000
/* Extra caption lines a caller may add. */
#define SW_PLOT_MAX_NOTES 4

typedef struct sw_plot_opts {
    int have_view;                 /* 1: use the view below; 0: fit it (default) */
    double xmin, xmax, ymin, ymax; /* the view (finite, min < max) */
    size_t pixels;                 /* colour: grid pixels on the long side (default 300) */
    const char *title;             /* NULL (default): the function's text */
    size_t nnotes;                 /* extra caption lines (default none) */
    const char *note[SW_PLOT_MAX_NOTES];
} sw_plot_opts;

void sw_plot_opts_init(sw_plot_opts *o);
/* Check O's view when it has one: finite, XMIN < XMAX, YMIN < YMAX, and
 * each side at least 1e-10 of the view's distance from 0 (narrower views
 * cannot be resolved in double precision).  SW_EUSAGE otherwise. */
sw_status sw_plot_check_view(const sw_plot_opts *o, sw_error *err);

/* A piece of a path on one sheet: path parameters [t0, t1], sheet index into
 * sw_plot_info's sheet list. */
typedef struct sw_plot_piece {
    double t0, t1;
    size_t sheet;
} sw_plot_piece;

/* What was drawn.  Caller-held: sw_plot_info_init / sw_plot_info_clear. */
typedef struct sw_plot_info {
    int width, height;             /* picture size (units as above) */
    double xmin, xmax, ymin, ymax; /* the view used (plane, colour) */
    int fx, fy, fw, fh;            /* the frame of the view (colour: the pixel grid) */
    /* plane with a path: the sheets seen, in order of first appearance; each
       label has `label_len` entries at label + k * label_len (expressions: the
       branch index of every multivalued node; curves: one entry, the 1-based
       sheet label) */
    size_t nsheets, label_len;
    long *label;
    size_t npieces;
    sw_plot_piece *piece;
    /* colour: how the grid pixels got their values */
    size_t continued;              /* by a step from a neighbouring pixel */
    size_t direct;                 /* by sw_branch_eval (seeds and fall-backs) */
    size_t unevaluated;            /* neither worked (on a cut, at a singular point): grey */
} sw_plot_info;

void sw_plot_info_init(sw_plot_info *i);
void sw_plot_info_clear(sw_plot_info *i);

/* The plane picture of F into FILENAME.
 *  PTS     branch points to mark (NULL: none);
 *  CUTS    cut system to draw (NULL: none);
 *  PATH, TR a path and the trace of F along it (sw_track_run with the dense
 *          log kept), both NULL for no path.  The path is drawn in pieces by
 *          sheet; a change of sheet between two logged germs is located by
 *          bisection on the trace (sw_trace_germ_at) to 1e-9 of a parameter
 *          step.  Paths with an 'inf' end are refused (SW_EUNSUPPORTED);
 *  O       options (NULL: defaults); INFO (may be NULL) receives the layout
 *          and the sheets seen, only on success.
 * Errors: SW_EUSAGE (extension, view), SW_EINPUT (the file cannot be
 * written: cairo's reason), SW_ESINGULAR (the trace cannot be evaluated
 * where a sheet changes), SW_ENOMEM. */
sw_status sw_plot_plane(const char *filename, const sw_func *f, const sw_points *pts,
                        const sw_cuts *cuts, const sw_path *path, const sw_trace *tr,
                        const sw_plot_opts *o, sw_plot_info *info, sw_error *err);

/* The monodromy graph of the curve F: PTS from sw_points_compute (curves:
 * local permutations relative to pts->base_fiber) and SH from
 * sw_sheets_compute on the same PTS.  Points whose permutation is the
 * identity draw no arcs and are not listed.  SW_EUSAGE for an expression. */
sw_status sw_plot_graph(const char *filename, const sw_func *f, const sw_points *pts,
                        const sw_sheets *sh, const sw_plot_opts *o, sw_plot_info *info,
                        sw_error *err);

/* Domain colouring of the regular branch B of F on the plane minus CUTS (the
 * system B was built on).  The grid is filled from the pixel nearest B's
 * anchor (evaluated with sw_branch_eval) by one-step continuation between
 * neighbouring pixels (sw_func_advance, halved up to 16 times when refused),
 * never along a step that meets a cut; pixels left over get sw_branch_eval
 * (at most SW_PLOT_DIRECT_MAX of them) and seed further filling; a region
 * that the cuts separate from the anchor (no route avoids them) stays grey,
 * for the regular branch is not defined there.  A pixel
 * whose centre lies on a cut shows the limit from its neighbour of largest
 * imaginary part (then smallest real part).  Pixels where nothing works are
 * grey.  When the cuts do not make F single-valued the colouring shows a seam
 * off the cuts where the filling fronts met.  PTS (may be NULL): branch
 * points marked on top and used to fit the view. */
#define SW_PLOT_DIRECT_MAX 4096
sw_status sw_plot_colour(const char *filename, const sw_func *f, const sw_branch *b,
                         const sw_cuts *cuts, const sw_points *pts, const sw_plot_opts *o,
                         sw_plot_info *info, sw_error *err);

/* The colour of a value, as the colour picture paints it: hue = arg w
 * (0 red at arg 0, then yellow, green at 2 pi/3, cyan, blue at -2 pi/3,
 * magenta), saturation 0.9, value 0.55 + 0.45 frac(log2 |w|); black at
 * w = 0, white where |w| is infinite, grey (0.5) for NaN.  RGB in [0, 1]. */
void sw_plot_value_colour(double rgb[3], double complex w);

#ifdef __cplusplus
}
#endif
#endif
