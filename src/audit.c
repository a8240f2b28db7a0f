/* Audits: a formula as C's principal-branch functions evaluate it, compared
 * with true continuation along a path; and a user's sampled values checked
 * against the continued branch.
 *
 * Where the principal evaluation can jump.  Every multivalued node (root,
 * non-integer power, logarithm) is evaluated by csqrt, cpow or clog of its
 * operand u, and these are continuous except where u crosses the negative
 * real axis, their common cut (DLMF 4.2.2, 4.2.3; the principal argument
 * jumps by 2 pi there, DLMF 4.2.6 counts those crossings).  Single-valued
 * nodes are continuous except at poles.  So the principal evaluation of the
 * whole formula can only jump where the *principal* operand of some node (the
 * operand computed with every inner node principal, sw_expr_mv_operand)
 * crosses the negative real axis, or where an operand vanishes or blows up.
 *
 * Scan.  For every node, the principal operand is sampled at the points the
 * tracker logged (its steps already pass the ratio test |u1/u0 - 1| <= 1/2 for
 * the continued operands) and refined by halving until consecutive samples
 * and the midpoint between them pass the same ratio test for the principal
 * operand (which differs from the continued one when inner nodes are on other
 * branches).  Within such an interval the argument of u moves by less than
 * pi/6 per half, so u crosses the negative axis at most once per half, and
 * only when both ends of that half lie in the left half-plane: a crossing is
 * a change of the sign bit of Im u between two samples with Re u < 0 (the
 * sign bit, because csqrt and clog decide by it on the cut: C11 Annex G).
 * Near the cut an interval is halved further while the operand's angular
 * distance from the negative axis at the samples is less than twice the
 * angle it turns between them, or a quadratic through the three samples of
 * Im u / |u| dips towards the axis: otherwise the operand could cross the
 * axis and come back between two samples unseen.  Each crossing is bisected to a bracket of
 * locate * scale (default 1e-14).
 *
 * Samples on the cut.  An operand that lies on the negative axis (to
 * rounding) at three consecutive samples of an interval longer than 1e-9 of
 * the scale runs along the cut: the principal value there is decided by the
 * sign of a floating-point zero.  Such stretches are reported as problems and
 * not searched for crossings, so the scan cannot loop on rounding noise.
 *
 * Grouping and the formula check.  Crossings whose brackets lie within 1e-11
 * of the scale along the path are one event.  Its limits are the formula's
 * principal values at the two ends of the joint bracket.  It is a
 * discontinuity of the formula when they differ by more than jump_rel of their
 * size plus eight times the change the formula's own slope makes over a
 * bracket's width on either side; otherwise the node jumps cancel (e.g.
 * sqrt(z)*sqrt(4*z) at negative z) and the event is kept as a note.
 *
 * Unresolved points.  Where refinement reaches its floor (1e-12 of the scale)
 * without passing the ratio test, an operand jumps (because an inner node
 * jumps: explained by that node's crossing), vanishes or blows up.  A point
 * that no crossing explains is a problem when the formula is infinite or
 * undefined there or changes abruptly across it.
 *
 * Banks.  The tracker follows a bank-marked segment slightly to the marked
 * side; the followed vertices are read back from the dense log (the vertex at
 * t = k is logged at exactly t = k), and both evaluations use the followed
 * points, so that on a bank the principal value is the one-sided limit.  A
 * crossing found on such a segment is relocated on the path as given when the
 * operand crosses transversally there too.
 *
 * Everything here is numerical evidence, not proof; see audit.h. */
#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "expr_internal.h"
#include "sheetwalk/audit.h"

static const double PI = 3.14159265358979323846;

/* The ratio test of the tracker (sw_step_opts default rho): between samples
 * that pass it an operand's argument moves by at most asin(1/2) = pi/6. */
#define RHO 0.5
/* |Im u| <= CUT_EPS |u| with Re u < 0: u lies on the cut to rounding (a few
 * dozen ulps; a bank height of 1e-10 of the scale is far above). */
#define CUT_EPS (64 * DBL_EPSILON)
/* An operand real to rounding with imaginary parts of both signs along an
 * interval longer than STRETCH_MIN (times the scale) runs along the cut; of
 * one sign, only along an interval longer than STRETCH_LONG (an operand
 * touching the axis is real to rounding only within ~1e-7 of the contact). */
#define STRETCH_MIN 1e-9
#define STRETCH_LONG 1e-6
/* Refinement floor (times the scale): below it an interval that still fails
 * the ratio test is an unresolved point (an operand jump, zero or pole). */
#define FLOOR_REL 1e-12
/* Crossings whose brackets are closer than this along the path (times the
 * scale) are one event: far above the bisection bracket (1e-14), far below
 * any separation a user could mean. */
#define GROUP_REL 1e-11
/* Principal and continued values agree when within this relative distance. */
#define AGREE_REL 1e-9
/* Refine where an operand's angular distance from the negative axis is less
 * than this many times the angle it turns between neighbouring samples. */
#define NEAR_K 2.0
/* Evaluations allowed for refining one logged step of one node: locating a
 * few jumps takes a few hundred; more means the operand flips erratically. */
#define SCAN_BUDGET 4000
/* Recursion depth cap of the refinement (2^-90 is below any floor). */
#define MAX_DEPTH 90
/* A point where the formula is this many times larger than 100 brackets away
 * is a pole-like singularity of the principal evaluation. */
#define POLE_GROWTH 10.0
/* Evenly spaced points at which each piece between jumps is compared. */
#define PIECE_SAMPLES 7
/* Most samples accepted from one file. */
#define MAX_SAMPLES 1000000
#define MAX_SAMPLE_FILE (64u << 20)

void sw_audit_opts_init(sw_audit_opts *o)
{
    o->locate = 1e-14;
    o->jump_rel = 1e-9;
    o->value_tol = 1e-6;
    o->position_tol = 1e-6;
    o->adapt_tol = 1;
    o->max_evals = 20000000;
}

void sw_audit_init(sw_audit *a) { memset(a, 0, sizeof *a); }

static void jumps_free(sw_audit_jump *j, size_t n)
{
    for (size_t k = 0; j && k < n; k++)
        free(j[k].cause);
    free(j);
}

void sw_audit_clear(sw_audit *a)
{
    if (a == NULL)
        return;
    jumps_free(a->jump, a->njumps);
    jumps_free(a->note, a->nnotes);
    free(a->piece);
    free(a->problem);
    memset(a, 0, sizeof *a);
}

/* Grow a dynamic array P of N elements of SIZE bytes (capacity *ALLOC) so
 * that one more fits.  Returns 0 on failure. */
static int grow(void **p, size_t *alloc, size_t n, size_t size)
{
    if (n < *alloc)
        return 1;
    size_t na = *alloc ? 2 * *alloc : 16;
    void *q = realloc(*p, na * size);
    if (q == NULL)
        return 0;
    *p = q;
    *alloc = na;
    return 1;
}

static int finite_c(double complex v) { return isfinite(creal(v)) && isfinite(cimag(v)); }

/* ------------------------------------------------------------ context */

typedef struct crossing {
    size_t node, seg;
    double sa, sb;      /* bracket on the followed segment */
    double s_report;    /* where it is reported (relocated on the path as given) */
    int downward;       /* Im u goes from >= 0 (sign bit clear) to < 0 */
    int keep;           /* a cause of its event (not undone within it) */
} crossing;

typedef struct spot {     /* an unresolved point or an on-cut interval */
    long node;            /* node, or nmv for the formula */
    size_t seg;
    double sa, sb;
} spot;

typedef struct ctx {
    const sw_func *f;
    const sw_expr *e;
    const sw_path *path;
    const sw_trace *tr;
    const sw_audit_opts *o;
    double scale;
    size_t nseg, m;
    double complex *fv;  /* followed vertices */
    int *first;          /* first program node of every node's subtree */
    double *seglen;      /* followed segment lengths */
    crossing *cr;
    size_t ncr, acr;
    spot *un;
    size_t nun, aun;
    spot *oc;
    size_t noc, aoc;
    spot *er;            /* intervals too erratic to resolve */
    size_t ner, aer;
    size_t evals, scan_start;
    int over, nomem, erratic;
    sw_germ g, tmp;
    int have_germs;
} ctx;

static double complex zd(const ctx *c, size_t k, double s)
{
    if (s == 0)
        return c->fv[k];
    if (s == 1)
        return c->fv[k + 1];
    return c->fv[k] + s * (c->fv[k + 1] - c->fv[k]);
}

static double complex zp(const ctx *c, size_t k, double s)
{
    const double complex *z = c->path->z;
    if (s == 0)
        return z[k];
    if (s == 1)
        return z[k + 1];
    return z[k] + s * (z[k + 1] - z[k]);
}

/* The principal operand of node J (J == m: the formula's principal value). */
static double complex U(ctx *c, size_t j, double complex z)
{
    c->evals++;
    if (c->evals > c->o->max_evals)
        c->over = 1;
    if (j < c->m)
        return sw_expr_mv_operand(c->e, j, z, 0);
    return sw_expr_eval_principal(c->e, z, 0);
}

static double complex P(ctx *c, double complex z) { return U(c, c->m, z); }

/* Which side of the cut: 0 off the left half-plane, else +1 (sign bit of Im
 * clear: csqrt/clog take the upper side) or -1. */
static int side(double complex u)
{
    if (!(creal(u) < 0))
        return 0;
    return signbit(cimag(u)) ? -1 : 1;
}

static int on_cut(double complex u)
{
    return creal(u) < 0 && fabs(cimag(u)) <= CUT_EPS * cabs(u);
}

/* Do three samples (spanning a length L) show an operand running along the
 * cut?  Either it is exactly real there (Im = +-0: a real formula on a real
 * path), or real to rounding over a long stretch, or real to rounding with
 * imaginary parts of both signs (rounding noise) over a stretch that is not
 * tiny.  An operand that only touches the axis (Im of one sign, below the
 * rounding level only within about sqrt(CUT_EPS) of the point of contact)
 * does not count: it does not cross. */
static int on_cut_stretch(double complex ua, double complex um, double complex ub, double L,
                          double scale)
{
    if (!on_cut(ua) || !on_cut(um) || !on_cut(ub))
        return 0;
    if (cimag(ua) == 0 && cimag(um) == 0 && cimag(ub) == 0)
        return 1;
    if (L > STRETCH_LONG * scale)
        return 1;
    int pos = (cimag(ua) > 0) + (cimag(um) > 0) + (cimag(ub) > 0);
    int neg = (cimag(ua) < 0) + (cimag(um) < 0) + (cimag(ub) < 0);
    return pos > 0 && neg > 0 && L > STRETCH_MIN * scale;
}

static void push_spot(ctx *c, spot **arr, size_t *n, size_t *alloc, long node, size_t seg,
                      double sa, double sb)
{
    if (!grow((void **)arr, alloc, *n, sizeof **arr)) {
        c->nomem = 1;
        return;
    }
    (*arr)[(*n)++] = (spot){node, seg, sa, sb};
}

/* Arc length along the followed path from (k1, s1) to (k2, s2), k1 <= k2. */
static double arc(const ctx *c, size_t k1, double s1, size_t k2, double s2)
{
    if (k1 == k2)
        return fabs(s2 - s1) * c->seglen[k1];
    double d = (1 - s1) * c->seglen[k1] + s2 * c->seglen[k2];
    for (size_t k = k1 + 1; k < k2; k++)
        d += c->seglen[k];
    return d;
}

/* Relocate a crossing found on a displaced (bank) segment onto the path as
 * given, when the operand crosses transversally there as well. */
static double relocate(ctx *c, size_t j, size_t k, double sa, double sb, int sgn)
{
    double s0 = 0.5 * (sa + sb);
    double complex a = c->path->z[k], b = c->path->z[k + 1];
    double h = fmax(cabs(c->fv[k] - a), cabs(c->fv[k + 1] - b));
    double L = cabs(b - a);
    if (h == 0 || L == 0)
        return s0;
    double w = 1e3 * h / L; /* a window a thousand bank heights wide */
    double lo = fmax(0.0, s0 - w), hi = fmin(1.0, s0 + w);
    double complex ul = U(c, j, zp(c, k, lo)), uh = U(c, j, zp(c, k, hi));
    if (side(ul) != sgn || side(uh) != -sgn)
        return s0;
    for (int it = 0; it < 200; it++) {
        if (cabs(zp(c, k, hi) - zp(c, k, lo)) <= c->o->locate * c->scale && hi - lo <= 1e-13)
            break;
        double mid = lo + 0.5 * (hi - lo);
        if (mid <= lo || mid >= hi)
            break;
        double complex u = U(c, j, zp(c, k, mid));
        if ((signbit(cimag(u)) ? -1 : 1) == sgn)
            lo = mid;
        else
            hi = mid;
    }
    return 0.5 * (lo + hi);
}

/* Locate the crossing of node J in [a, b] of segment K, side(a) = SGN. */
static void bisect(ctx *c, size_t j, size_t k, double a, double b, int sgn)
{
    for (int it = 0; it < 200 && !c->over; it++) {
        /* small in the plane, and in t too (a short segment, e.g. from x+i0
           to x-i0, needs more halvings for t than for z) */
        if (cabs(zd(c, k, b) - zd(c, k, a)) <= c->o->locate * c->scale && b - a <= 1e-13)
            break;
        double mid = a + 0.5 * (b - a);
        if (mid <= a || mid >= b)
            break;
        double complex u = U(c, j, zd(c, k, mid));
        if (!finite_c(u) || u == 0) {
            push_spot(c, &c->un, &c->nun, &c->aun, (long)j, k, a, b);
            return;
        }
        if ((signbit(cimag(u)) ? -1 : 1) == sgn)
            a = mid;
        else
            b = mid;
    }
    if (!grow((void **)&c->cr, &c->acr, c->ncr, sizeof *c->cr)) {
        c->nomem = 1;
        return;
    }
    double sr = 0.5 * (a + b);
    if (c->fv[k] != c->path->z[k] || c->fv[k + 1] != c->path->z[k + 1])
        sr = relocate(c, j, k, a, b, sgn);
    c->cr[c->ncr++] = (crossing){j, k, a, b, sr, sgn > 0, 1};
}

/* Might Im u / |u| dip across zero and back between the three samples?  A
 * quadratic through them with an interior extremum of the other sign, or
 * within a quarter of the smaller end value of zero, says maybe. */
static int hidden_dip(double complex ua, double complex um, double complex ub)
{
    double ya = cimag(ua) / cabs(ua), ym = cimag(um) / cabs(um), yb = cimag(ub) / cabs(ub);
    if (ya == 0 || yb == 0 || (ya > 0) != (yb > 0))
        return 0;
    if (fabs(ya) <= CUT_EPS && fabs(ym) <= CUT_EPS && fabs(yb) <= CUT_EPS)
        return 0; /* rounding noise: no shape to read */
    double c2 = 2 * ya - 4 * ym + 2 * yb, c1 = -3 * ya + 4 * ym - yb;
    if (c2 == 0)
        return 0;
    double xe = -c1 / (2 * c2);
    if (!(xe > 0 && xe < 1))
        return 0;
    double qe = ya + c1 * xe + c2 * xe * xe;
    return (qe > 0) != (ya > 0) || qe == 0 || fabs(qe) < 0.25 * fmin(fabs(ya), fabs(yb));
}

/* Between two samples on the same side of the cut, could the operand reach
 * the cut and come back unseen?  Only if its angular distance from the
 * negative axis at the samples is not clearly larger than the angle it turns
 * between them (NEAR_K times; below rounding the operand merely touches). */
static int too_close(double complex u0, double complex u1, int s0, int s1)
{
    if (s0 != s1)
        return 0; /* a crossing: bisected, not refined */
    double d = fmin(PI - fabs(carg(u0)), PI - fabs(carg(u1)));
    double turn = fabs(carg(u1 / u0));
    return d > CUT_EPS && d < NEAR_K * turn;
}

static void scan(ctx *c, size_t j, size_t k, double a, double b, double complex ua,
                 double complex ub, int depth)
{
    if (c->over || c->nomem || c->erratic)
        return;
    if (c->evals - c->scan_start > SCAN_BUDGET) {
        c->erratic = 1;
        return;
    }
    double L = cabs(zd(c, k, b) - zd(c, k, a));
    double mid = a + 0.5 * (b - a);
    int can_split = depth < MAX_DEPTH && L > FLOOR_REL * c->scale && mid > a && mid < b;
    double complex um = U(c, j, zd(c, k, mid));
    int bad = !finite_c(ua) || !finite_c(um) || !finite_c(ub) || ua == 0 || um == 0 ||
              ub == 0 || cabs(um / ua - 1) > RHO || cabs(ub / um - 1) > RHO;
    if (bad) {
        if (can_split) {
            scan(c, j, k, a, mid, ua, um, depth + 1);
            scan(c, j, k, mid, b, um, ub, depth + 1);
        } else {
            push_spot(c, &c->un, &c->nun, &c->aun, (long)j, k, a, b);
        }
        return;
    }
    if (j == c->m) /* the formula: only checked for poles */
        return;
    if (on_cut_stretch(ua, um, ub, L, c->scale)) {
        push_spot(c, &c->oc, &c->noc, &c->aoc, (long)j, k, a, b);
        return;
    }
    int sa = side(ua), sm = side(um), sb = side(ub);
    int near = creal(ua) < 0 || creal(um) < 0 || creal(ub) < 0;
    if (near && can_split && (hidden_dip(ua, um, ub) || too_close(ua, um, sa, sm) ||
                              too_close(um, ub, sm, sb))) {
        scan(c, j, k, a, mid, ua, um, depth + 1);
        scan(c, j, k, mid, b, um, ub, depth + 1);
        return;
    }
    if (sa && sm && sa != sm)
        bisect(c, j, k, a, mid, sa);
    if (sm && sb && sm != sb)
        bisect(c, j, k, mid, b, sm);
}

/* ------------------------------------------------ continued evaluation */

/* Move G along a straight line to Z in accepted steps. */
static sw_status walk(ctx *c, sw_germ *g, double complex z, sw_error *err)
{
    sw_step_opts so;
    sw_step_opts_init(&so);
    double complex a = g->z;
    double len = cabs(z - a), s = 0, h = len, hmin = 1e-13 * c->scale;
    int guard = 0, why = -1;
    while (s < len) {
        double hh = fmin(h, len - s);
        double complex target = (s + hh >= len) ? z : a + (z - a) * ((s + hh) / len);
        sw_step_result r = sw_func_advance(&c->tmp, g, target, c->f, &so, &why);
        if (r == SW_STEP_OK || r == SW_STEP_UNPROVEN) {
            sw_germ_copy(g, &c->tmp);
            s += hh;
            h = 2 * hh;
            continue;
        }
        if (r == SW_STEP_SINGULAR || hh < hmin || ++guard > 100000) {
            char what[160];
            sw_func_describe(what, sizeof what, c->f, why);
            return sw_error_set(err, SW_ESINGULAR,
                                "cannot continue the function to z = %.10g%+.10gi: '%s' is "
                                "singular there or next to it", creal(z), cimag(z), what);
        }
        h = hh / 2;
    }
    g->z = z;
    return SW_OK;
}

/* The logged germ with the largest t <= T. */
static void log_germ(const ctx *c, sw_germ *g, double t)
{
    sw_trace_logged_germ(g, c->tr, t);
}

/* The continued germ at (K, S) on the followed path, into c->g. */
static sw_status cont_at(ctx *c, size_t k, double s, sw_error *err)
{
    log_germ(c, &c->g, (double)k + s);
    double complex z = zd(c, k, s);
    if (c->g.z == z)
        return SW_OK;
    return walk(c, &c->g, z, err);
}

/* ------------------------------------------------------------ set-up */

static sw_status ctx_init(ctx *c, const sw_func *f, const sw_path *path, const sw_trace *tr,
                          const sw_audit_opts *o, sw_error *err)
{
    memset(c, 0, sizeof *c);
    c->f = f;
    c->e = sw_func_expr(f);
    c->path = path;
    c->tr = tr;
    c->o = o;
    c->scale = sw_path_scale(path);
    c->nseg = sw_path_segments(path);
    c->m = c->e ? sw_expr_mv_count(c->e) : 0;
    if (tr->nlog == 0 || tr->t == NULL)
        return sw_error_set(err, SW_EUSAGE, "the trace has no dense log (track with keep_log)");
    if (path->n < 2)
        return sw_error_set(err, SW_EINPUT, "the path needs at least two vertices");
    /* (the log ends at the last segment of positive length, not always at nseg) */
    if (tr->nvert != path->n || tr->t[tr->nlog - 1] > (double)c->nseg + 1e-9)
        return sw_error_set(err, SW_EUSAGE, "the trace does not belong to this path");
    c->fv = malloc(path->n * sizeof *c->fv);
    c->seglen = malloc(path->n * sizeof *c->seglen);
    if (c->fv == NULL || c->seglen == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    /* followed vertices: logged at exactly t = k; a vertex that was not
       logged closes a segment of length zero and sits where the previous one does */
    for (size_t k = 0; k < path->n; k++)
        c->seglen[k] = -1; /* marks "not logged" for the moment */
    for (size_t i = 0; i < tr->nlog; i++) {
        double t = tr->t[i];
        if (t == floor(t) && t >= 0 && t <= (double)c->nseg) {
            c->fv[(size_t)t] = tr->z[i];
            c->seglen[(size_t)t] = 0;
        }
    }
    c->fv[0] = tr->z[0];
    for (size_t k = 1; k < path->n; k++)
        if (c->seglen[k] < 0)
            c->fv[k] = c->fv[k - 1];
    for (size_t k = 0; k + 1 < path->n; k++)
        c->seglen[k] = cabs(c->fv[k + 1] - c->fv[k]);
    if (c->e != NULL) {
        c->first = malloc((c->e->n ? c->e->n : 1) * sizeof *c->first);
        if (c->first == NULL)
            return sw_error_set(err, SW_ENOMEM, "out of memory");
        for (size_t n = 0; n < c->e->n; n++) {
            const sw_node *nd = &c->e->node[n];
            int f0 = (int)n;
            if (nd->a >= 0 && c->first[nd->a] < f0)
                f0 = c->first[nd->a];
            if (nd->b >= 0 && c->first[nd->b] < f0)
                f0 = c->first[nd->b];
            c->first[n] = f0;
        }
    }
    if (sw_germ_init(&c->g, f) != SW_OK || sw_germ_init(&c->tmp, f) != SW_OK)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    c->have_germs = 1;
    return SW_OK;
}

static void ctx_clear(ctx *c)
{
    free(c->fv);
    free(c->first);
    free(c->seglen);
    free(c->cr);
    free(c->un);
    free(c->oc);
    free(c->er);
    if (c->have_germs) {
        sw_germ_clear(&c->g);
        sw_germ_clear(&c->tmp);
    }
}

/* ------------------------------------------------------ the formula audit */

static int cmp_double(const void *pa, const void *pb)
{
    double a = *(const double *)pa, b = *(const double *)pb;
    return a < b ? -1 : a > b;
}

/* Does node J (J == m: the formula) use node I in its operand?  In the
 * postfix program a subtree occupies the contiguous range [first, root]. */
static int depends(const ctx *c, size_t j, size_t i)
{
    if (j == c->m)
        return 1;
    if (i >= j)
        return 0;
    int a = c->e->node[c->e->mv_node[j]].a;
    int n = c->e->mv_node[i];
    return a >= 0 && n <= a && n >= c->first[a];
}

static int cmp_crossing(const void *pa, const void *pb)
{
    const crossing *a = pa, *b = pb;
    if (a->seg != b->seg)
        return a->seg < b->seg ? -1 : 1;
    if (a->sa != b->sa)
        return a->sa < b->sa ? -1 : 1;
    return a->node < b->node ? -1 : a->node > b->node;
}

/* Parameters of the followed path: a position (segment, fraction). */
typedef struct pos {
    size_t k;
    double s;
} pos;

static double pos_t(pos p) { return (double)p.k + p.s; }

/* Move P along the path by distance D (negative: backwards), staying on its
 * segment (clamped to the segment's ends). */
static pos pos_move(const ctx *c, pos p, double d)
{
    double L = c->seglen[p.k];
    if (L > 0)
        p.s += d / L;
    p.s = p.s < 0 ? 0 : p.s > 1 ? 1 : p.s;
    return p;
}

/* The principal value of node J at z, as C computes it. */
static double complex node_value(ctx *c, size_t j, double complex z, double complex u)
{
    const sw_node *nd = &c->e->node[c->e->mv_node[j]];
    switch (nd->kind) {
    case N_POW:
        return nd->fn == 1 ? csqrt(u) : cpow(u, nd->c);
    case N_LOG:
        return clog(u);
    default: {
        /* a^b with b depending on z: the exponent's value from a principal pass */
        double complex stackbuf[256], v;
        double complex *vals = c->e->n <= 256 ? stackbuf : malloc(c->e->n * sizeof *vals);
        double complex *st = malloc((2 * c->m + 1) * sizeof *st);
        double complex r = CMPLX(NAN, NAN);
        if (vals && st && sw_expr_principal_state(&v, st, c->e, z, 0, vals) == -1)
            r = cpow(u, vals[nd->b]);
        if (vals != stackbuf)
            free(vals);
        free(st);
        return r;
    }
    }
}

static sw_status add_problem(sw_audit *a, size_t *alloc, sw_audit_problem_kind kind, long node,
                             double t0, double t1, double complex z0, double complex z1,
                             sw_error *err)
{
    if (!grow((void **)&a->problem, alloc, a->nproblems, sizeof *a->problem))
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    a->problem[a->nproblems++] = (sw_audit_problem){kind, node, t0, t1, z0, z1};
    return SW_OK;
}

/* Is an unresolved spot explained by a crossing event within reach? */
static int explained(const ctx *c, const spot *u, const pos *ev_lo, const pos *ev_hi, size_t nev)
{
    double reach = 4 * FLOOR_REL * c->scale + GROUP_REL * c->scale;
    for (size_t i = 0; i < nev; i++) {
        pos a = ev_lo[i], b = ev_hi[i];
        /* distance between [a, b] and [u.sa, u.sb] on the path */
        double d;
        if (b.k < u->seg || (b.k == u->seg && b.s < u->sa))
            d = arc(c, b.k, b.s, u->seg, u->sa);
        else if (a.k > u->seg || (a.k == u->seg && a.s > u->sb))
            d = arc(c, u->seg, u->sb, a.k, a.s);
        else
            d = 0;
        if (d <= reach)
            return 1;
    }
    return 0;
}

sw_status sw_audit_formula(sw_audit *out, const sw_func *f, const sw_path *path,
                           const sw_trace *tr, const sw_audit_opts *o, sw_error *err)
{
    sw_audit_opts defo;
    if (o == NULL) {
        sw_audit_opts_init(&defo);
        o = &defo;
    }
    if (sw_func_kind_of(f) != SW_FUNC_EXPR)
        return sw_error_set(err, SW_EUSAGE,
                            "a curve has no formula to audit: check sampled values against it "
                            "instead");
    sw_audit res;
    sw_audit_init(&res);
    ctx c;
    sw_status st = ctx_init(&c, f, path, tr, o, err);
    double *svals = NULL, *pts = NULL;
    double complex *uvals = NULL;
    pos *ev_lo = NULL, *ev_hi = NULL;
    size_t aj = 0, an = 0, ap = 0;
    if (st != SW_OK)
        goto cleanup;
    res.scale = c.scale;

    /* ---- scan every segment, node by node (the formula last, for poles) */
    size_t i0 = 0;
    size_t apts = tr->nlog + 2, auv = tr->nlog + 2;
    svals = malloc((tr->nlog + 2) * sizeof *svals);
    pts = malloc(apts * sizeof *pts);
    uvals = malloc(auv * sizeof *uvals);
    if (svals == NULL || uvals == NULL || pts == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    for (size_t k = 0; k < c.nseg; k++) {
        /* the log points of segment k, as fractions s */
        size_t ns = 0;
        svals[ns++] = 0;
        while (i0 < tr->nlog && tr->t[i0] <= (double)k)
            i0++;
        size_t i = i0;
        while (i < tr->nlog && tr->t[i] < (double)(k + 1)) {
            double s = tr->t[i] - (double)k;
            if (s > svals[ns - 1])
                svals[ns++] = s;
            i++;
        }
        svals[ns++] = 1;
        if (c.seglen[k] == 0)
            continue;
        size_t cr_seg = c.ncr; /* segments are scanned in order: this one's crossings follow */
        for (size_t j = 0; j <= c.m; j++) {
            /* sample points: the logged steps, and both ends of the bracket of
               every crossing of an inner node this one depends on: the
               operand jumps there (possibly across the axis and back later),
               so no interval may straddle such a bracket; the bracket itself
               belongs to the inner node's event */
            size_t np = 0, cr_end = c.ncr;
            for (size_t q = 0; q < ns; q++)
                pts[np++] = svals[q];
            for (size_t x = cr_seg; x < cr_end; x++)
                if (depends(&c, j, c.cr[x].node)) {
                    if (!grow((void **)&pts, &apts, np + 1, sizeof *pts)) {
                        c.nomem = 1;
                        break;
                    }
                    pts[np++] = c.cr[x].sa;
                    pts[np++] = c.cr[x].sb;
                }
            if (c.nomem)
                break;
            if (np > ns)
                qsort(pts, np, sizeof *pts, cmp_double);
            size_t nu = 0;
            for (size_t q = 0; q < np; q++)
                if (nu == 0 || pts[q] > pts[nu - 1])
                    pts[nu++] = pts[q];
            np = nu;
            if (!grow((void **)&uvals, &auv, np, sizeof *uvals)) {
                c.nomem = 1;
                break;
            }
            for (size_t q = 0; q < np; q++)
                uvals[q] = U(&c, j, zd(&c, k, pts[q]));
            for (size_t q = 0; q + 1 < np && !c.over && !c.nomem; q++) {
                int inside = 0; /* within the bracket of an inner jump */
                for (size_t x = cr_seg; x < cr_end && !inside; x++)
                    inside = depends(&c, j, c.cr[x].node) &&
                             pts[q] >= c.cr[x].sa && pts[q + 1] <= c.cr[x].sb;
                if (inside)
                    continue;
                /* a budget per interval: an operand that flips back and forth
                   (an inner node running along its cut with rounding noise)
                   is reported as erratic, not refined forever */
                size_t ncr = c.ncr, nun = c.nun, noc = c.noc;
                c.scan_start = c.evals;
                c.erratic = 0;
                scan(&c, j, k, pts[q], pts[q + 1], uvals[q], uvals[q + 1], 0);
                if (c.erratic) {
                    c.ncr = ncr;
                    c.nun = nun;
                    c.noc = noc;
                    if (c.ner > 0 && c.er[c.ner - 1].node == (long)j &&
                        c.er[c.ner - 1].seg == k && c.er[c.ner - 1].sb == pts[q])
                        c.er[c.ner - 1].sb = pts[q + 1];
                    else
                        push_spot(&c, &c.er, &c.ner, &c.aer, (long)j, k, pts[q], pts[q + 1]);
                }
            }
        }
        if (c.over || c.nomem)
            break;
    }
    if (c.nomem) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    if (c.over) {
        st = sw_error_set(err, SW_ETOLERANCE,
                          "the audit needed more than %zu evaluations (operands varying too "
                          "fast along the path?); shorten the path", o->max_evals);
        goto cleanup;
    }

    /* ---- group the crossings into events */
    if (c.ncr > 1)
        qsort(c.cr, c.ncr, sizeof *c.cr, cmp_crossing);
    ev_lo = malloc((c.ncr + 1) * sizeof *ev_lo);
    ev_hi = malloc((c.ncr + 1) * sizeof *ev_hi);
    if (ev_lo == NULL || ev_hi == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    size_t nev = 0;
    for (size_t q = 0; q < c.ncr;) {
        size_t r = q + 1;
        pos hi = {c.cr[q].seg, c.cr[q].sb};
        while (r < c.ncr) {
            const crossing *x = &c.cr[r];
            double gap;
            if (x->seg < hi.k || (x->seg == hi.k && x->sa <= hi.s))
                gap = 0;
            else
                gap = arc(&c, hi.k, hi.s, x->seg, x->sa);
            if (gap > GROUP_REL * c.scale)
                break;
            if (x->seg > hi.k || (x->seg == hi.k && x->sb > hi.s))
                hi = (pos){x->seg, x->sb};
            r++;
        }
        pos lo = {c.cr[q].seg, c.cr[q].sa};
        ev_lo[nev] = lo;
        ev_hi[nev] = hi;
        nev++;

        /* a node that crosses back and forth within the group (an operand
           touching the axis, exactly on it at one sample) does not jump */
        size_t nkeep = 0;
        for (size_t x = q; x < r; x++) {
            size_t times = 0;
            int first = 1;
            for (size_t y = q; y < r; y++)
                if (c.cr[y].node == c.cr[x].node) {
                    times++;
                    if (y < x)
                        first = 0;
                }
            c.cr[x].keep = first && times % 2 == 1;
            nkeep += c.cr[x].keep;
        }
        if (nkeep == 0) {
            q = r;
            continue;
        }

        /* limits and the formula check */
        double complex before = P(&c, zd(&c, lo.k, lo.s)), after = P(&c, zd(&c, hi.k, hi.s));
        double w = fmax(arc(&c, lo.k, lo.s, hi.k, hi.s), o->locate * c.scale);
        pos lo2 = pos_move(&c, lo, -w), hi2 = pos_move(&c, hi, w);
        double complex b2 = P(&c, zd(&c, lo2.k, lo2.s)), a2 = P(&c, zd(&c, hi2.k, hi2.s));
        double slope = (finite_c(b2) ? cabs(before - b2) : 0) + (finite_c(a2) ? cabs(a2 - after) : 0);
        if (!finite_c(before) || !finite_c(after)) {
            double tt = 0.5 * (pos_t(lo) + pos_t(hi));
            size_t kk = lo.k;
            double ss = tt - (double)kk;
            if (ss > 1)
                ss = 1;
            st = add_problem(&res, &ap, SW_AUDIT_SINGULAR, -1, tt, tt, zp(&c, kk, ss),
                             zp(&c, kk, ss), err);
            if (st != SW_OK)
                goto cleanup;
            q = r;
            continue;
        }
        int jump = cabs(after - before) >
                   8 * slope + o->jump_rel * fmax(cabs(before), cabs(after));

        sw_audit_jump J;
        memset(&J, 0, sizeof J);
        /* the reported place: the crossing itself for a single node, the middle
           of the joint bracket for several */
        pos rp = r == q + 1 ? (pos){c.cr[q].seg, c.cr[q].s_report}
                            : (pos){lo.k, lo.k == hi.k ? 0.5 * (lo.s + hi.s) : lo.s};
        J.t = pos_t(rp);
        J.z = zp(&c, rp.k, rp.s);
        J.t_before = pos_t(lo);
        J.t_after = pos_t(hi);
        J.before = before;
        J.after = after;
        J.ratio = after / before;
        J.difference = after - before;
        J.cancels = !jump;
        J.endpoint = (lo.k == 0 && lo.s == 0) ? -1 : (hi.k + 1 == c.nseg && hi.s == 1) ? 1 : 0;
        if ((st = cont_at(&c, lo.k, lo.s, err)) != SW_OK)
            goto cleanup;
        J.rel_before = before / sw_func_value(f, &c.g);
        if ((st = cont_at(&c, hi.k, hi.s, err)) != SW_OK)
            goto cleanup;
        J.rel_after = after / sw_func_value(f, &c.g);
        if ((st = cont_at(&c, rp.k, rp.s, err)) != SW_OK)
            goto cleanup;
        J.continued = sw_func_value(f, &c.g);
        J.ncause = nkeep;
        J.cause = calloc(nkeep + c.m, sizeof *J.cause);
        if (J.cause == NULL) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        for (size_t x = q, y = 0; x < r; x++) {
            const crossing *cr = &c.cr[x];
            if (!cr->keep)
                continue;
            sw_audit_cause *cz = &J.cause[y++];
            double complex zb = zd(&c, lo.k, lo.s), za = zd(&c, hi.k, hi.s);
            cz->node = cr->node;
            cz->downward = cr->downward;
            cz->operand = U(&c, cr->node, zd(&c, cr->seg, 0.5 * (cr->sa + cr->sb)));
            cz->node_before = node_value(&c, cr->node, zb, U(&c, cr->node, zb));
            cz->node_after = node_value(&c, cr->node, za, U(&c, cr->node, za));
        }
        /* outer nodes whose operand the jump of an inner cause carries across
           the cut (it jumps from one side to the other without crossing) */
        for (size_t j = 0; j < c.m; j++) {
            int is_cause = 0, below = 0;
            for (size_t y = 0; y < nkeep; y++) {
                is_cause |= J.cause[y].node == j;
                below |= depends(&c, j, J.cause[y].node);
            }
            if (is_cause || !below)
                continue;
            double complex zb = zd(&c, lo.k, lo.s), za = zd(&c, hi.k, hi.s);
            double complex ub = U(&c, j, zb), ua = U(&c, j, za);
            if (side(ub) == 0 || side(ua) == 0 || side(ub) == side(ua))
                continue;
            sw_audit_cause *cz = &J.cause[J.ncause++];
            cz->node = j;
            cz->carried = 1;
            cz->downward = side(ub) > 0;
            cz->operand = ub;
            cz->node_before = node_value(&c, j, zb, ub);
            cz->node_after = node_value(&c, j, za, ua);
        }
        sw_audit_jump **arr = jump ? &res.jump : &res.note;
        size_t *cnt = jump ? &res.njumps : &res.nnotes, *al = jump ? &aj : &an;
        if (!grow((void **)arr, al, *cnt, sizeof **arr)) {
            free(J.cause);
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        (*arr)[(*cnt)++] = J;
        q = r;
    }

    /* ---- unresolved points that no crossing explains */
    for (size_t q = 0; q < c.nun; q++) {
        const spot *u = &c.un[q];
        if (explained(&c, u, ev_lo, ev_hi, nev))
            continue;
        double s0 = 0.5 * (u->sa + u->sb), w = 100 * (u->sb - u->sa);
        double complex pm = P(&c, zd(&c, u->seg, s0));
        double complex pa = P(&c, zd(&c, u->seg, fmax(0, u->sa - w)));
        double complex pb = P(&c, zd(&c, u->seg, fmin(1, u->sb + w)));
        double complex qa = P(&c, zd(&c, u->seg, u->sa)), qb = P(&c, zd(&c, u->seg, u->sb));
        int singular = !finite_c(pm) || !finite_c(qa) || !finite_c(qb) ||
                       cabs(pm) > POLE_GROWTH * (cabs(pa) + cabs(pb));
        int abrupt = !singular && u->node < (long)c.m &&
                     cabs(qb - qa) > 1e-6 * fmax(cabs(qa), cabs(qb)) + 8 * (cabs(qa - pa) +
                                                                             cabs(pb - qb)) / 100;
        if (!singular && !abrupt)
            continue;
        /* one problem per place: skip when the previous one is the same spot */
        double tt = (double)u->seg + s0;
        if (res.nproblems > 0 && res.problem[res.nproblems - 1].kind == SW_AUDIT_SINGULAR &&
            fabs(res.problem[res.nproblems - 1].t0 - tt) <= 1e-9)
            continue;
        st = add_problem(&res, &ap, SW_AUDIT_SINGULAR, u->node < (long)c.m ? u->node : -1, tt, tt,
                         zp(&c, u->seg, s0), zp(&c, u->seg, s0), err);
        if (st != SW_OK)
            goto cleanup;
    }

    /* ---- erratic stretches (not those inside an on-cut stretch, which is
       the reason and is reported below) */
    for (size_t q = 0; q < c.ner; q++) {
        const spot *x = &c.er[q];
        int inside = 0;
        for (size_t node = 0; node < c.m && !inside; node++) {
            double covered = 0; /* a node's on-cut intervals do not overlap */
            for (size_t y = 0; y < c.noc; y++)
                if (c.oc[y].node == (long)node && c.oc[y].seg == x->seg)
                    covered += fmax(0.0, fmin(c.oc[y].sb, x->sb) - fmax(c.oc[y].sa, x->sa));
            inside = covered >= (x->sb - x->sa) * (1 - 1e-9);
        }
        if (inside)
            continue;
        st = add_problem(&res, &ap, SW_AUDIT_ERRATIC, x->node < (long)c.m ? x->node : -1,
                         (double)x->seg + x->sa, (double)x->seg + x->sb, zp(&c, x->seg, x->sa),
                         zp(&c, x->seg, x->sb), err);
        if (st != SW_OK)
            goto cleanup;
    }

    /* ---- stretches along a cut, merged per node */
    for (size_t q = 0; q < c.noc;) {
        size_t r = q + 1;
        size_t kend = c.oc[q].seg;
        double send = c.oc[q].sb;
        while (r < c.noc && c.oc[r].node == c.oc[q].node &&
               ((c.oc[r].seg == kend && c.oc[r].sa == send) ||
                (c.oc[r].seg == kend + 1 && send == 1 && c.oc[r].sa == 0))) {
            kend = c.oc[r].seg;
            send = c.oc[r].sb;
            r++;
        }
        st = add_problem(&res, &ap, SW_AUDIT_ON_CUT, c.oc[q].node,
                         (double)c.oc[q].seg + c.oc[q].sa, (double)kend + send,
                         zp(&c, c.oc[q].seg, c.oc[q].sa), zp(&c, kend, send), err);
        if (st != SW_OK)
            goto cleanup;
        q = r;
    }

    /* ---- pieces between discontinuities: principal vs continued, at the
       logged points inside each piece and at PIECE_SAMPLES evenly spaced ones */
    res.piece = calloc(res.njumps + 1, sizeof *res.piece);
    if (res.piece == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    for (size_t p = 0; p <= res.njumps; p++) {
        double t0 = p == 0 ? 0 : res.jump[p - 1].t_after;
        double t1 = p == res.njumps ? (double)c.nseg : res.jump[p].t_before;
        if (!(t1 > t0))
            continue;
        sw_audit_piece *pc = &res.piece[res.npieces];
        pc->t0 = t0;
        pc->t1 = t1;
        pc->agrees = pc->constant_ratio = pc->constant_difference = 1;
        double complex r0 = 0, d0 = 0;
        int have_r0 = 0, have_d0 = 0;
        size_t i = 0;
        while (i < tr->nlog && !(tr->t[i] > t0))
            i++;
        for (int q = 1; q <= PIECE_SAMPLES || (i < tr->nlog && tr->t[i] < t1);) {
            double complex cv, pv;
            double tq = t0 + (t1 - t0) * q / (PIECE_SAMPLES + 1);
            int mid_point = 0;
            if (q <= PIECE_SAMPLES && !(i < tr->nlog && tr->t[i] < t1 && tr->t[i] < tq)) {
                size_t k = (size_t)tq;
                if (k >= c.nseg)
                    k = c.nseg - 1;
                double s = tq - (double)k;
                if ((st = cont_at(&c, k, s, err)) != SW_OK)
                    goto cleanup;
                cv = sw_func_value(f, &c.g);
                pv = P(&c, zd(&c, k, s));
                mid_point = q == (PIECE_SAMPLES + 1) / 2;
                q++;
            } else {
                log_germ(&c, &c.g, tr->t[i]);
                cv = sw_func_value(f, &c.g);
                pv = P(&c, tr->z[i]);
                i++;
            }
            if (!finite_c(pv) || !finite_c(cv))
                continue;
            if (cabs(pv - cv) > AGREE_REL * fmax(cabs(pv), cabs(cv)))
                pc->agrees = 0;
            double complex r = cv != 0 ? pv / cv : CMPLX(NAN, NAN), d = pv - cv;
            if (!have_r0 && cv != 0) {
                r0 = r;
                have_r0 = 1;
            } else if (cv != 0 && cabs(r - r0) > AGREE_REL * cabs(r0)) {
                pc->constant_ratio = 0;
            }
            if (!have_d0) {
                d0 = d;
                have_d0 = 1;
            } else if (cabs(d - d0) > AGREE_REL * fmax(cabs(d0), fmax(cabs(pv), cabs(cv)))) {
                pc->constant_difference = 0;
            }
            if (mid_point) {
                pc->ratio = r;
                pc->difference = d;
            }
        }
        res.npieces++;
    }
    res.evaluations = c.evals;
    sw_audit_clear(out);
    *out = res;
    sw_audit_init(&res);
cleanup:
    free(svals);
    free(pts);
    free(uvals);
    free(ev_lo);
    free(ev_hi);
    sw_audit_clear(&res);
    ctx_clear(&c);
    return st;
}

/* ----------------------------------------------------------- wording */

/* The operand's source text of node K, outer parentheses removed. */
static void operand_text(char *buf, size_t n, const sw_expr *e, size_t k)
{
    const sw_node *nd = &e->node[e->mv_node[k]];
    const sw_node *a = &e->node[nd->a];
    int c0 = a->col0, c1 = a->col1;
    const char *t = e->text;
    while (c1 - c0 >= 2 && t[c0] == '(' && t[c1 - 1] == ')') {
        /* only strip a pair that encloses everything */
        int depth = 0, whole = 1;
        for (int q = c0; q < c1 - 1; q++) {
            depth += t[q] == '(' ? 1 : t[q] == ')' ? -1 : 0;
            if (depth == 0) {
                whole = 0;
                break;
            }
        }
        if (!whole)
            break;
        c0++;
        c1--;
    }
    if (c1 <= c0 || nd->a < 0)
        snprintf(buf, n, "its operand");
    else
        snprintf(buf, n, "%.*s", c1 - c0, t + c0);
}

static const char *node_noun(const sw_node *nd, char *buf, size_t n)
{
    if (nd->kind == N_LOG)
        return "logarithm";
    if (nd->kind == N_POWG)
        return "power";
    if (nd->fn == 1)
        return "square root";
    if (nd->fn == 2)
        return "cube root";
    if (nd->fn == 3) {
        snprintf(buf, n, "root of degree %ld", nd->k);
        return buf;
    }
    return "power";
}

static void cfmt6(char *buf, size_t n, double complex z)
{
    double re = creal(z), im = cimag(z), mod = cabs(z);
    if (fabs(re) < 1e-12 * mod)
        re = 0;
    if (fabs(im) < 1e-12 * mod)
        im = 0;
    if (im == 0)
        snprintf(buf, n, "%.6g", re + 0.0);
    else if (re == 0)
        snprintf(buf, n, "%.6gi", im);
    else
        snprintf(buf, n, "%.6g%+.6gi", re, im);
}

char *sw_audit_explain(char *buf, size_t n, const sw_func *f, const sw_audit_jump *j)
{
    const sw_expr *e = sw_func_expr(f);
    size_t used = 0;
    if (n == 0)
        return buf;
    buf[0] = '\0';
    if (e == NULL)
        return buf;
#define ADD(...)                                                              \
    do {                                                                      \
        if (used < n) {                                                       \
            int w_ = snprintf(buf + used, n - used, __VA_ARGS__);             \
            used += w_ > 0 ? (size_t)w_ : 0;                                  \
        }                                                                     \
    } while (0)
    for (size_t q = 0; q < j->ncause; q++) {
        const sw_audit_cause *cz = &j->cause[q];
        const sw_node *nd = &e->node[e->mv_node[cz->node]];
        char noun[64], txt[200], op[200], amount[96], v[64];
        const char *what = node_noun(nd, noun, sizeof noun);
        sw_expr_mv_text(txt, sizeof txt, e, cz->node);
        operand_text(op, sizeof op, e, cz->node);
        if (nd->kind == N_LOG) {
            cfmt6(v, sizeof v, cz->node_after - cz->node_before);
            snprintf(amount, sizeof amount, "by %s", v);
        } else if (cz->node_before != 0 && finite_c(cz->node_before)) {
            cfmt6(v, sizeof v, cz->node_after / cz->node_before);
            snprintf(amount, sizeof amount, "by the factor %s", v);
        } else {
            snprintf(amount, sizeof amount, "to another branch");
        }
        if (cz->carried)
            ADD("%sthis carries `%s` across the negative real axis (from Im %s 0 to Im %s 0), so "
                "the principal %s `%s` jumps %s as well", q ? "; " : "", op,
                cz->downward ? ">" : "<", cz->downward ? "<" : ">", what, txt, amount);
        else
            ADD("%sthe principal %s `%s` jumps %s where `%s` crosses the negative real axis "
                "(from Im %s 0 to Im %s 0)", q ? "; " : "", what, txt, amount, op,
                cz->downward ? ">" : "<", cz->downward ? "<" : ">");
    }
    if (j->cancels && j->ncause == 1)
        ADD("; the formula does not change across it (the jump is trivial here, or undone by "
            "the rest of the formula)");
    else if (j->cancels)
        ADD("; these jumps cancel in the formula, which stays continuous here");
    else if (j->endpoint == -1)
        ADD("; the path starts on the cut, so the value at its first point is taken on the "
            "side the sign of zero selects");
    else if (j->endpoint == 1)
        ADD("; the path ends on the cut, so the value at its last point is taken on the side "
            "the sign of zero selects");
#undef ADD
    return buf;
}

char *sw_audit_problem_text(char *buf, size_t n, const sw_func *f, const sw_audit_problem *p)
{
    const sw_expr *e = sw_func_expr(f);
    char txt[200], op[200];
    if (n == 0)
        return buf;
    if (p->node >= 0 && e != NULL) {
        sw_expr_mv_text(txt, sizeof txt, e, (size_t)p->node);
        operand_text(op, sizeof op, e, (size_t)p->node);
    } else {
        snprintf(txt, sizeof txt, "%s", sw_func_text(f));
        snprintf(op, sizeof op, "it");
    }
    if (p->kind == SW_AUDIT_ON_CUT)
        snprintf(buf, n,
                 "from t = %.12g (z = %.10g%+.10gi) to t = %.12g (z = %.10g%+.10gi) the operand "
                 "`%s` of `%s` lies on the negative real axis, the cut of the principal branch: "
                 "the value there is decided by the sign of a floating-point zero, not by the "
                 "formula (mark the path's vertices with +i0 or -i0 to say which side is meant); "
                 "no jumps are searched along this stretch",
                 p->t0, creal(p->z0), cimag(p->z0), p->t1, creal(p->z1), cimag(p->z1), op, txt);
    else if (p->kind == SW_AUDIT_ERRATIC)
        snprintf(buf, n,
                 "from t = %.12g (z = %.10g%+.10gi) to t = %.12g (z = %.10g%+.10gi) the principal "
                 "evaluation of `%s` flips back and forth faster than can be resolved (typically an "
                 "inner root or logarithm runs along its cut, where rounding decides the side); no "
                 "jumps are reported there",
                 p->t0, creal(p->z0), cimag(p->z0), p->t1, creal(p->z1), cimag(p->z1), txt);
    else if (p->node >= 0)
        snprintf(buf, n,
                 "near t = %.12g (z = %.10g%+.10gi) the principal evaluation is singular or "
                 "changes abruptly: the operand `%s` of `%s`, computed with principal inner "
                 "branches, vanishes or is infinite there (the continued branch is not)",
                 p->t0, creal(p->z0), cimag(p->z0), op, txt);
    else
        snprintf(buf, n,
                 "near t = %.12g (z = %.10g%+.10gi) the principal evaluation of the formula is "
                 "infinite or undefined (a pole on the principal branch that the continued "
                 "branch does not have)", p->t0, creal(p->z0), cimag(p->z0));
    return buf;
}

/* ------------------------------------------------------------- samples */

void sw_samples_init(sw_samples *s) { memset(s, 0, sizeof *s); }

void sw_samples_clear(sw_samples *s)
{
    if (s == NULL)
        return;
    free(s->s);
    free(s->origin);
    memset(s, 0, sizeof *s);
}

/* Parse one field [p, q) as a finite double.  Returns 1 on success; on
 * failure sets *why: 1 empty, 2 not a number, 3 not finite. */
static int parse_field(double *out, const char *p, const char *q, int *why)
{
    while (p < q && (*p == ' ' || *p == '\t'))
        p++;
    while (q > p && (q[-1] == ' ' || q[-1] == '\t'))
        q--;
    if (p == q) {
        *why = 1;
        return 0;
    }
    char tmp[128];
    size_t len = (size_t)(q - p);
    if (len >= sizeof tmp) {
        *why = 2;
        return 0;
    }
    memcpy(tmp, p, len);
    tmp[len] = '\0';
    char *end;
    double v = strtod(tmp, &end);
    if (end == tmp || *end != '\0') {
        *why = 2;
        return 0;
    }
    if (!isfinite(v)) {
        *why = 3;
        return 0;
    }
    *out = v;
    return 1;
}

sw_status sw_samples_parse(sw_samples *out, const char *text, size_t len, const char *origin,
                           sw_error *err)
{
    sw_samples s;
    sw_samples_init(&s);
    sw_status st = SW_OK;
    const char *name = origin ? origin : "samples";
    if (len == 0)
        return sw_error_set(err, SW_EINPUT, "%s: the file is empty", name);
    const char *nul = memchr(text, '\0', len);
    if (nul != NULL) {
        long line = 1;
        for (const char *q = text; q < nul; q++)
            line += *q == '\n';
        return sw_error_set(err, SW_EINPUT, "%s: binary data (a NUL byte on line %ld), not CSV text",
                            name, line);
    }
    const char *p = text, *endt = text + len;
    if (len >= 3 && (unsigned char)p[0] == 0xEF && (unsigned char)p[1] == 0xBB &&
        (unsigned char)p[2] == 0xBF)
        p += 3;
    long line = 0;
    int header = 0;
    while (p < endt) {
        const char *eol = memchr(p, '\n', (size_t)(endt - p));
        const char *q = eol ? eol : endt;
        const char *next = eol ? eol + 1 : endt;
        line++;
        if (q > p && q[-1] == '\r')
            q--;
        /* blank or comment */
        const char *b = p;
        while (b < q && (*b == ' ' || *b == '\t'))
            b++;
        if (b == q || *b == '#') {
            p = next;
            continue;
        }
        for (const char *x = p; x < q; x++)
            if ((unsigned char)*x < 32 && *x != '\t') {
                st = sw_error_set(err, SW_EINPUT,
                                  "%s line %ld: control character (code %d) in column %ld: not "
                                  "CSV text", name, line, (unsigned char)*x, (long)(x - p) + 1);
                goto fail;
            }
        /* split at commas */
        const char *f0[5], *f1[5];
        int nf = 0;
        const char *fs = p;
        for (const char *x = p;; x++) {
            if (x == q || *x == ',') {
                if (nf < 5) {
                    f0[nf] = fs;
                    f1[nf] = x;
                }
                nf++;
                fs = x + 1;
                if (x == q)
                    break;
            }
        }
        if (!header) {
            double v;
            int why;
            if (parse_field(&v, f0[0], f1[0], &why)) {
                st = sw_error_set(err, SW_EINPUT,
                                  "%s line %ld: expected a header line (re_z,im_z,re_w,im_w) "
                                  "before the numbers", name, line);
                goto fail;
            }
            if (nf != 4) {
                st = sw_error_set(err, SW_EINPUT,
                                  "%s line %ld: the header has %d column%s, expected 4 "
                                  "(re_z,im_z,re_w,im_w)", name, line, nf, nf == 1 ? "" : "s");
                goto fail;
            }
            header = 1;
            p = next;
            continue;
        }
        if (nf != 4) {
            st = sw_error_set(err, SW_EINPUT,
                              "%s line %ld: %d column%s, expected 4 (re_z,im_z,re_w,im_w)", name,
                              line, nf, nf == 1 ? "" : "s");
            goto fail;
        }
        double v[4];
        for (int k = 0; k < 4; k++) {
            int why = 0;
            if (!parse_field(&v[k], f0[k], f1[k], &why)) {
                int w = (int)(f1[k] - f0[k]);
                st = sw_error_set(err, SW_EINPUT, "%s line %ld, column %d: %s%.*s%s", name, line,
                                  k + 1, why == 1 ? "empty field" : why == 3 ?
                                  "not a finite number: '" : "not a number: '",
                                  why == 1 ? 0 : (w > 40 ? 40 : w), f0[k],
                                  why == 1 ? "" : "'");
                goto fail;
            }
        }
        if (s.n >= MAX_SAMPLES) {
            st = sw_error_set(err, SW_EINPUT, "%s line %ld: more than %d samples", name, line,
                              MAX_SAMPLES);
            goto fail;
        }
        if (!grow((void **)&s.s, &s.alloc, s.n, sizeof *s.s)) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto fail;
        }
        s.s[s.n++] = (sw_sample){CMPLX(v[0], v[1]), CMPLX(v[2], v[3]), line};
        p = next;
    }
    if (!header) {
        st = sw_error_set(err, SW_EINPUT, "%s: no header line and no samples", name);
        goto fail;
    }
    if (s.n == 0) {
        st = sw_error_set(err, SW_EINPUT, "%s: no samples after the header", name);
        goto fail;
    }
    s.origin = strdup(name);
    if (s.origin == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto fail;
    }
    sw_samples_clear(out);
    *out = s;
    return SW_OK;
fail:
    sw_samples_clear(&s);
    return st;
}

sw_status sw_samples_read_file(sw_samples *s, const char *filename, sw_error *err)
{
    FILE *fp = fopen(filename, "rb");
    if (fp == NULL)
        return sw_error_set(err, SW_EINPUT, "cannot open samples file '%s'", filename);
    char *buf = malloc(MAX_SAMPLE_FILE + 1);
    if (buf == NULL) {
        fclose(fp);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    size_t n = fread(buf, 1, MAX_SAMPLE_FILE + 1, fp);
    int bad = ferror(fp);
    fclose(fp);
    sw_status st;
    if (bad)
        st = sw_error_set(err, SW_EINPUT, "cannot read samples file '%s' (a directory?)",
                          filename);
    else if (n > MAX_SAMPLE_FILE)
        st = sw_error_set(err, SW_EINPUT, "samples file '%s' is larger than 64 MiB", filename);
    else
        st = sw_samples_parse(s, buf, n, filename, err);
    free(buf);
    return st;
}

void sw_sample_report_init(sw_sample_report *r) { memset(r, 0, sizeof *r); }

void sw_sample_report_clear(sw_sample_report *r)
{
    if (r == NULL)
        return;
    for (size_t k = 0; r->c && k < r->n; k++) {
        free(r->c[k].branch);
        free(r->c[k].continued_branch);
    }
    free(r->c);
    memset(r, 0, sizeof *r);
}

static double rel_dist(double complex a, double complex b)
{
    double s = fmax(cabs(a), cabs(b));
    return s > 0 ? cabs(a - b) / s : 0;
}

/* Measure one sample with the continued germ c->g already at its point: the
 * continued value and branch, and the sheet nearest to the value W. */
static sw_status measure_expr(ctx *c, sw_sample_check *k, double complex w, int *same,
                              double *second, sw_error *err)
{
    size_t m = c->m;
    k->continued = sw_func_value(c->f, &c->g);
    k->ratio = w / k->continued;
    k->difference = w - k->continued;
    k->cont_error = rel_dist(w, k->continued);
    k->continued_branch = calloc(m ? m : 1, sizeof *k->continued_branch);
    k->branch = calloc(m ? m : 1, sizeof *k->branch);
    if (k->continued_branch == NULL || k->branch == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    sw_func_node_branches(k->continued_branch, m, c->f, &c->g);
    *second = INFINITY;
    sw_germ h;
    if (sw_germ_init(&h, c->f) != SW_OK)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    sw_error e2;
    sw_status s2 = sw_func_germ_at(&h, c->f, c->g.z, SW_BANK_NONE, &w, &e2);
    if (s2 == SW_OK) {
        k->sheet_value = sw_func_value(c->f, &h);
        k->error = rel_dist(w, k->sheet_value);
        sw_func_node_branches(k->branch, m, c->f, &h);
        *same = rel_dist(k->sheet_value, k->continued) <= 1e-9;
        if (*same) { /* the same sheet, perhaps under another branch index */
            k->sheet_value = k->continued;
            memcpy(k->branch, k->continued_branch, m * sizeof *k->branch);
            k->error = k->cont_error;
        } else {
            *second = k->cont_error; /* the continued sheet is another candidate */
        }
    } else {
        /* two sheets tie for the value (or no sheet search is possible) */
        k->tie = s2 == SW_EAMBIGUOUS;
        *same = 0;
        k->error = k->cont_error;
        k->sheet_value = CMPLX(NAN, NAN);
        free(k->branch);
        k->branch = NULL;
    }
    sw_germ_clear(&h);
    return SW_OK;
}

static sw_status measure_curve(ctx *c, sw_sample_check *k, double complex w, int *same,
                               double *second, sw_error *err)
{
    size_t n = sw_func_degree(c->f);
    double complex *fib = malloc((n ? n : 1) * sizeof *fib);
    if (fib == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    n = sw_func_sheet_values(fib, n, c->f, &c->g);
    k->continued = sw_func_value(c->f, &c->g);
    k->continued_sheet = c->g.sheet + 1;
    k->ratio = w / k->continued;
    k->difference = w - k->continued;
    k->cont_error = rel_dist(w, k->continued);
    size_t best = 0;
    double d1 = INFINITY, d2 = INFINITY;
    for (size_t i = 0; i < n; i++) {
        double d = rel_dist(w, fib[i]);
        if (d < d1) {
            d2 = d1;
            d1 = d;
            best = i;
        } else if (d < d2) {
            d2 = d;
        }
    }
    k->sheet = n ? (int)best + 1 : 0;
    k->sheet_value = n ? fib[best] : CMPLX(NAN, NAN);
    k->error = d1;
    *second = d2;
    *same = n > 0 && (int)best == c->g.sheet;
    free(fib);
    /* the labels at this point (the engine's order there) */
    sw_germ h;
    sw_error e2;
    if (sw_germ_init(&h, c->f) != SW_OK)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    if (n && sw_func_germ_at(&h, c->f, c->g.z, SW_BANK_NONE, &k->sheet_value, &e2) == SW_OK)
        k->local_sheet = h.sheet + 1;
    if (sw_func_germ_at(&h, c->f, c->g.z, SW_BANK_NONE, &k->continued, &e2) == SW_OK)
        k->continued_local_sheet = h.sheet + 1;
    sw_germ_clear(&h);
    return SW_OK;
}

/* Distance from Z to segment G of the path as given; *S receives the
 * fraction of the nearest point. */
static double project(const ctx *c, size_t g, double complex z, double *s)
{
    double complex a = c->path->z[g], ab = c->path->z[g + 1] - a;
    double L2 = creal(ab) * creal(ab) + cimag(ab) * cimag(ab);
    double sg = L2 > 0 ? creal((z - a) * conj(ab)) / L2 : 0;
    sg = sg < 0 ? 0 : sg > 1 ? 1 : sg;
    *s = sg;
    return cabs(z - zp(c, g, sg));
}

static int cmp_dbl(const void *pa, const void *pb)
{
    double a = *(const double *)pa, b = *(const double *)pb;
    return a < b ? -1 : a > b;
}

sw_status sw_audit_samples(sw_sample_report *out, const sw_func *f, const sw_path *path,
                           const sw_trace *tr, const sw_samples *s, const sw_audit_opts *o,
                           sw_error *err)
{
    sw_audit_opts defo;
    if (o == NULL) {
        sw_audit_opts_init(&defo);
        o = &defo;
    }
    sw_sample_report rep;
    sw_sample_report_init(&rep);
    int *same = NULL;
    double *second = NULL, *scat = NULL;
    ctx c;
    sw_status st = ctx_init(&c, f, path, tr, o, err);
    if (st != SW_OK)
        goto cleanup;
    rep.nmv = c.m;
    rep.tolerance = o->value_tol;
    rep.c = calloc(s->n ? s->n : 1, sizeof *rep.c);
    same = calloc(s->n ? s->n : 1, sizeof *same);
    second = calloc(s->n ? s->n : 1, sizeof *second);
    scat = calloc(s->n ? s->n : 1, sizeof *scat);
    if (rep.c == NULL || same == NULL || second == NULL || scat == NULL) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    double allowed = o->position_tol * c.scale;
    double tprev = 0;
    size_t kprev = 0;
    for (size_t q = 0; q < s->n; q++) {
        const sw_sample *sm = &s->s[q];
        sw_sample_check *k = &rep.c[q];
        k->index = q;
        k->line = sm->line;
        rep.n = q + 1;
        /* place the point on the path as given: the first passage within the
           allowed distance at or after the previous sample (a forward search
           from its segment, so that samples in path order cost little), else
           the nearest passage anywhere */
        size_t kb = 0;
        double sb = 0, tb = INFINITY;
        for (size_t g = kprev; g < c.nseg; g++) {
            double sg, d = project(&c, g, sm->z, &sg);
            if (d <= allowed && (double)g + sg >= tprev - 1e-12) {
                tb = (double)g + sg;
                kb = g;
                sb = sg;
                break;
            }
        }
        if (tb == INFINITY) {
            double dmin = INFINITY;
            for (size_t g = 0; g < c.nseg; g++) {
                double sg, d = project(&c, g, sm->z, &sg);
                if (d < dmin) {
                    dmin = d;
                    tb = (double)g + sg;
                    kb = g;
                    sb = sg;
                }
            }
            if (!(dmin <= allowed)) {
                st = sw_error_set(err, SW_EINPUT,
                                  "%s line %ld: the point %.10g%+.10gi is %.3g away from the "
                                  "path (at most %.3g = %.3g times the path scale is accepted)",
                                  s->origin ? s->origin : "samples", sm->line, creal(sm->z),
                                  cimag(sm->z), dmin, allowed, o->position_tol);
                goto cleanup;
            }
        }
        kprev = kb;
        tprev = tb;
        k->t = tb;
        k->distance = cabs(sm->z - zp(&c, kb, sb));
        if ((st = cont_at(&c, kb, sb, err)) != SW_OK ||
            (st = walk(&c, &c.g, sm->z, err)) != SW_OK) {
            sw_error_prefix(err, "%s line %ld", s->origin ? s->origin : "samples", sm->line);
            goto cleanup;
        }
        st = sw_func_kind_of(f) == SW_FUNC_EXPR
                 ? measure_expr(&c, k, sm->w, &same[q], &second[q], err)
                 : measure_curve(&c, k, sm->w, &same[q], &second[q], err);
        if (st != SW_OK)
            goto cleanup;
    }

    /* the tolerance: as given, or raised to ten times the median scatter of
       the values around their nearest sheets (noisy data), at most 1e-2 */
    double tol = o->value_tol;
    size_t nd = 0;
    for (size_t q = 0; q < s->n; q++)
        if (isfinite(rep.c[q].error))
            scat[nd++] = rep.c[q].error;
    if (nd > 0) {
        qsort(scat, nd, sizeof *scat, cmp_dbl);
        rep.scatter = nd % 2 ? scat[nd / 2] : 0.5 * (scat[nd / 2 - 1] + scat[nd / 2]);
        if (o->adapt_tol && 10 * rep.scatter > tol) {
            tol = fmin(10 * rep.scatter, 1e-2);
            rep.tolerance_raised = tol > o->value_tol;
            if (!rep.tolerance_raised)
                tol = o->value_tol;
        }
    }
    rep.tolerance = tol;
    for (size_t q = 0; q < s->n; q++) {
        sw_sample_check *k = &rep.c[q];
        k->on_branch = k->cont_error <= tol;
        /* another sheet within the tolerance too: which one cannot be told */
        if (second[q] <= tol || (!same[q] && k->error <= tol && k->on_branch))
            k->tie = 1;
        k->matched = !k->tie && k->error <= tol && (k->branch != NULL || k->sheet > 0);
        if (k->on_branch && !k->tie) {
            k->matched = 1;
            k->sheet_value = k->continued;
            k->error = k->cont_error;
            if (k->continued_branch && k->branch)
                memcpy(k->branch, k->continued_branch, rep.nmv * sizeof *k->branch);
            if (k->continued_sheet) {
                k->sheet = k->continued_sheet;
                k->local_sheet = k->continued_local_sheet;
            }
        }
        if (!k->on_branch)
            rep.off_branch++;
    }
    sw_sample_report_clear(out);
    *out = rep;
    sw_sample_report_init(&rep);
cleanup:
    free(same);
    free(second);
    free(scat);
    sw_sample_report_clear(&rep);
    ctx_clear(&c);
    return st;
}

static long modq(long a, long q) { return ((a % q) + q) % q; }

char *sw_sample_explain(char *buf, size_t n, const sw_func *f, const sw_sample_report *r,
                        const sw_sample_check *k)
{
    size_t used = 0;
    if (n == 0)
        return buf;
    buf[0] = '\0';
#define ADD(...)                                                              \
    do {                                                                      \
        if (used < n) {                                                       \
            int w_ = snprintf(buf + used, n - used, __VA_ARGS__);             \
            used += w_ > 0 ? (size_t)w_ : 0;                                  \
        }                                                                     \
    } while (0)
    char v[64];
    if (k->on_branch) {
        ADD("on the continued branch");
        if (k->tie)
            ADD(" (but within the tolerance of another sheet too)");
        return buf;
    }
    if (k->tie) {
        ADD("not on the continued branch; two sheets are equally near the value, so its "
            "sheet cannot be told at this tolerance");
        return buf;
    }
    if (!k->matched) {
        ADD("on no sheet within the tolerance (the nearest sheet is %.3g away, relative)",
            k->error);
        return buf;
    }
    if (sw_func_kind_of(f) == SW_FUNC_CURVE) {
        ADD("on sheet %d instead of sheet %d (labels: the continuation of each sheet from the "
            "path's start", k->sheet, k->continued_sheet);
        if (k->local_sheet && k->continued_local_sheet)
            ADD("; sheet %d instead of %d in the order at this point", k->local_sheet,
                k->continued_local_sheet);
        ADD(")");
        return buf;
    }
    double complex R = k->sheet_value / k->continued, D = k->sheet_value - k->continued;
    if (cabs(R + 1) < 1e-6)
        ADD("-1 times the continued value");
    else if (fabs(cabs(R) - 1) < 1e-6)
        ADD("e^(%.6g pi i) times the continued value", carg(R) / PI);
    else if (fabs(creal(D)) < 1e-6 * cabs(D) && fabs(remainder(cimag(D), 2 * PI)) <
             1e-6 * fabs(cimag(D)))
        ADD("the continued value %+ld*2 pi i", lround(cimag(D) / (2 * PI)));
    else {
        cfmt6(v, sizeof v, R);
        ADD("%s times the continued value", v);
    }
    const sw_expr *e = sw_func_expr(f);
    int first = 1;
    for (size_t q = 0; e && k->branch && k->continued_branch && q < r->nmv; q++) {
        long dq = k->branch[q] - k->continued_branch[q];
        if (dq == 0)
            continue;
        const sw_node *nd = &e->node[e->mv_node[q]];
        char txt[200];
        sw_expr_mv_text(txt, sizeof txt, e, q);
        if (nd->kind == N_POW && nd->k >= 2 && nd->fn != 0 && modq(dq, nd->k) == 0)
            continue;
        ADD("%s", first ? " (" : ", ");
        first = 0;
        if (nd->kind == N_POW && nd->fn == 1)
            ADD("the other sign of %s", txt);
        else if (nd->kind == N_LOG)
            ADD("%s shifted by %+ld*2 pi i", txt, dq);
        else
            ADD("another branch of %s (%+ld turn%s of its operand)", txt, dq,
                labs(dq) == 1 ? "" : "s");
    }
    if (!first)
        ADD(")");
#undef ADD
    return buf;
}
