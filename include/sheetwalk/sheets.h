/* sheetwalk — the monodromy graph of an algebraic function and what it tells.
 *
 * From the local permutations of sw_points (curves): the monodromy graph
 * (vertices = sheets; for every cycle (c1 ... ck) of every local permutation,
 * directed edges c1->c2->...->ck->c1 labelled with the point), its connected
 * components (= the irreducible components of a square-free curve), the cycle
 * type at every point, the genus of each component by the Riemann-Hurwitz
 * formula
 *     2 g - 2 = -2 n_c + sum over points p (including infinity) of
 *               sum over the cycles of p inside the component of (len - 1)
 * (R. Miranda, Algebraic Curves and Riemann Surfaces, AMS 1995, ch. II.4 and
 * III.4), and the exact order of the monodromy group by the Schreier-Sims
 * algorithm (C. C. Sims, in Computational Problems in Abstract Algebra, 1970;
 * A. Seress, Permutation Group Algorithms, CUP 2003, ch. 4).
 *
 * Conventions: sheets are 0-based in this API (the command line shows them
 * 1-based); a permutation p sends sheet i to sheet p[i]. */
#ifndef SHEETWALK_SHEETS_H
#define SHEETWALK_SHEETS_H

#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/monodromy.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Largest number of sheets handled (the curve engine's degree limit). */
#define SW_SHEETS_MAX 40

typedef struct sw_sheets {
    size_t nsheets;
    size_t ncomponents;
    int *component;        /* component of each sheet (nsheets entries); components are
                              numbered in order of their smallest sheet */
    size_t *comp_size;     /* sheets in each component */
    long *genus;           /* genus of each component */
    char *group_order;     /* order of the monodromy group, exact, decimal */
    double group_order_d;  /* the same as a double (may be inexact or infinite) */
    int transitive;        /* 1 when there is one component */
} sw_sheets;

void sw_sheets_init(sw_sheets *s);
void sw_sheets_clear(sw_sheets *s);

/* Components, genus per component and group order from the permutations in
 * PTS (finite points and infinity).  Errors: SW_EUSAGE when PTS holds no
 * curve permutations; SW_EINTERNAL when the permutations are inconsistent
 * (not permutations, product relation failed (pts->product_ok == 0), or the
 * Riemann-Hurwitz sum is odd) -- the data is then not trustworthy. */
sw_status sw_sheets_compute(sw_sheets *out, const sw_points *pts, sw_error *err);

/* The cycles of PERM (n entries, 0-based): each cycle listed from its
 * smallest element, cycles in order of their smallest element, fixed points
 * included as cycles of length 1.  ELEMS receives n entries, LENS the cycle
 * lengths (at most n); returns the number of cycles, or 0 when PERM is not a
 * permutation of 0..n-1. */
size_t sw_perm_cycles(int *elems, size_t *lens, const int *perm, size_t n);

/* Write the monodromy graph of PTS to FILENAME: Graphviz DOT for names ending
 * in ".dot" or ".gv", GraphML for ".graphml" or ".xml" (anything else is
 * SW_EUSAGE).  Vertices carry "name" (1-based sheet label) and "w" (the base
 * fiber value as text); edges carry "point" (0-based index of the point in
 * PTS, -1 for infinity) and "label" (the point's location as text).  Only
 * points with a non-trivial permutation contribute edges. */
sw_status sw_sheets_write_graph(const sw_points *pts, const char *filename, sw_error *err);

#ifdef __cplusplus
}
#endif
#endif
