/* sheetwalk — cut systems, regular branches, jumps and crossings.
 *
 * A cut system is a set of polylines (sw_path), each possibly running on to
 * infinity after its last vertex.  The plane minus the cuts carries *regular
 * branches*: a branch is fixed by a germ at one point (sw_branch_new) and
 * evaluated anywhere else by continuation along a path that crosses no cut
 * (a shortest path around the cuts, found in a visibility graph).  The cut
 * system makes the function single-valued when every branch point lies on a
 * cut and the loop hugging every bounded connected component of the cut set
 * has trivial monodromy; the behaviour at infinity is an independent check.
 *
 * Conventions: a cut piece is one segment of a cut polyline, directed from
 * its first vertex to its second; its *right* side is on the right when
 * walking along it.  ratio = value on the right bank / value on the left bank,
 * difference = right - left.  A path crossing a piece from right to left
 * crosses it "positively" (direction +1). */
#ifndef SHEETWALK_CUTS_H
#define SHEETWALK_CUTS_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/func.h"
#include "sheetwalk/monodromy.h"
#include "sheetwalk/path.h"
#include "sheetwalk/track.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct sw_cut_piece {
    double complex from, to;  /* to is meaningless when to_inf */
    double complex dir;       /* unit direction */
    int to_inf;               /* the piece is a ray from `from` in direction dir */
    size_t cut;               /* index of the polyline */
    size_t seg;               /* index of the segment in that polyline */
} sw_cut_piece;

typedef struct sw_cuts {
    size_t n;                 /* polylines */
    sw_path *cut;
    int is_default;           /* built by sw_cuts_default */
    size_t npieces;
    sw_cut_piece *piece;
    size_t *branch_of;        /* default systems: the branch point each cut starts at */
} sw_cuts;

void sw_cuts_init(sw_cuts *c);
void sw_cuts_clear(sw_cuts *c);
/* Add a polyline (copied).  It needs two finite vertices, or one and 'inf';
 * 'inf' may only end it. */
sw_status sw_cuts_add(sw_cuts *c, const sw_path *p, sw_error *err);
/* The default cut system: from every branch point a ray to infinity pointing
 * away from the centroid of the branch points (the negative real axis when
 * there is a single one at the centroid), turned by small angles when it
 * would pass another branch point or cross another ray. */
sw_status sw_cuts_default(sw_cuts *c, const sw_points *pts, sw_error *err);
/* Smallest distance from Z to the cut set. */
double sw_cuts_distance(const sw_cuts *c, double complex z);

/* A regular branch on the plane minus the cuts.  Opaque. */
typedef struct sw_branch sw_branch;

/* Fix the regular branch by the sheet nearest *W at P (bank marks allowed; W
 * NULL: principal / sheet 1).  SW_EAMBIGUOUS when two sheets tie. */
sw_status sw_branch_new(sw_branch **b, const sw_func *f, const sw_cuts *c, double complex p,
                        int bank, const double complex *w, sw_error *err);
/* Fix it by a given germ (its point must not lie on a cut). */
sw_status sw_branch_from_germ(sw_branch **b, const sw_func *f, const sw_cuts *c,
                              const sw_germ *g, sw_error *err);
void sw_branch_free(sw_branch *b);
/* The regular branch at Z (a germ; BANK selects the side when Z is on a cut:
 * +1 the side of increasing imaginary part, -1 the other; for a point on a
 * cut without a bank mark the call fails with SW_EINPUT). */
sw_status sw_branch_eval(sw_germ *g, const sw_branch *b, double complex z, int bank,
                         sw_error *err);
/* The germ at the fixing point. */
const sw_germ *sw_branch_anchor(const sw_branch *b);

/* Banks of a piece: the regular branch on the left and the right bank at a
 * point *AT of the piece chosen away from other pieces and from the points of
 * PTS (may be NULL). */
sw_status sw_branch_banks(sw_germ *left, sw_germ *right, const sw_branch *b, size_t piece,
                          const sw_points *pts, double complex *at, sw_error *err);

#define SW_CUTS_MAX_PROBLEMS 64

typedef struct sw_piece_jump {
    double complex at;            /* where the banks were compared */
    double complex left, right;   /* bank values */
    double complex ratio, difference;
    int *perm;                    /* curves: sheet i on the right is regular sheet perm[i] on the left... */
} sw_piece_jump;

typedef struct sw_cut_component {
    size_t ncuts;
    size_t cuts[32];              /* polylines in the component (first 32) */
    int bounded;
    int checked;                  /* a hugging loop was built and tracked */
    int trivial;                  /* its monodromy is trivial */
    double complex ratio, difference; /* expressions: effect of the hugging loop */
    int *perm;                    /* curves: permutation of the hugging loop (0-based) */
} sw_cut_component;

typedef struct sw_cut_report {
    int single_valued;
    size_t npieces;
    sw_piece_jump *jump;          /* one per piece, in order */
    size_t ncomp;
    sw_cut_component *comp;
    int inf_branched;             /* from the branch points' analysis */
    int inf_reached;              /* some cut runs to infinity */
    size_t nproblems;
    char *problem[SW_CUTS_MAX_PROBLEMS];
} sw_cut_report;

void sw_cut_report_init(sw_cut_report *r);
void sw_cut_report_clear(sw_cut_report *r);

/* Check a cut system for F with the regular branch B: branch points on cuts,
 * hugging loops of bounded components, infinity; jumps across every piece. */
sw_status sw_cuts_check(sw_cut_report *r, const sw_func *f, const sw_points *pts,
                        const sw_cuts *c, const sw_branch *b, sw_error *err);

/* Crossings of PATH with the cut pieces, in path order.  A path that starts on
 * a cut is taken to start on the side it leaves to; one that ends on a cut,
 * to end beyond it (so a closed path based on a cut crosses it once). */
typedef struct sw_crossing {
    double t;                  /* path parameter */
    double complex z;          /* where */
    size_t piece;              /* which piece */
    int direction;             /* +1 right-to-left of the piece, -1 left-to-right */
} sw_crossing;

sw_status sw_cuts_crossings(sw_crossing **out, size_t *n, const sw_cuts *c, const sw_path *p,
                            sw_error *err);

#ifdef __cplusplus
}
#endif
#endif
