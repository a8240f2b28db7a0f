/* sheetwalk — audits: a formula written with principal-branch functions, and
 * a user's sampled values, compared with true continuation along a path.
 *
 * The formula audit evaluates an expression exactly as C's csqrt, clog and
 * cpow would (sw_expr_eval_principal) along a path and compares it with the
 * continuation of the same expression from the path's start.  The principal
 * evaluation can only jump where the operand of some multivalued node, itself
 * evaluated with principal branches, crosses the negative real axis (the
 * principal cut of every root, power and logarithm; DLMF 4.2.2-4.2.6).  Each
 * node's principal operand is sampled at the tracker's logged steps, refined
 * until consecutive samples pass the same ratio test the tracker uses, and
 * every sign change of its imaginary part on the negative side is located by
 * bisection.  Crossings that coincide are grouped; a group is a discontinuity
 * of the formula when the formula's value changes across it, otherwise the
 * node jumps cancel and the group is kept as a note.
 *
 * The audit is numerical, not a proof: a crossing that starts and ends
 * between two samples that pass the ratio test (an operand grazing the cut
 * twice within one refined step) is not seen.
 *
 * Bank marks (x+i0): the tracker follows a bank-marked segment at a height of
 * 1e-10 of the path scale on the marked side; the audit evaluates the formula
 * at the same followed points, so on a bank the principal value is the
 * one-sided limit, to a relative error of the order of that height.  Reported
 * points z lie on the path as given (the bank mark removed); reported values
 * are those at the followed points.
 *
 * Sample checks read a CSV file of points and values (header line, then
 * re_z,im_z,re_w,im_w), find each point's parameter on the path by projection,
 * continue the function to it and say whether the value lies on the continued
 * branch, and if not, on which sheet it lies instead. */
#ifndef SHEETWALK_AUDIT_H
#define SHEETWALK_AUDIT_H

#include <complex.h>
#include <stddef.h>
#include "sheetwalk/error.h"
#include "sheetwalk/func.h"
#include "sheetwalk/path.h"
#include "sheetwalk/track.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct sw_audit_opts {
    double locate;       /* bisection stops when the bracket is shorter than
                            locate * path scale (default 1e-14; the bracket
                            cannot shrink below a few units in the last place
                            of the segment parameter) */
    double jump_rel;     /* across a node crossing, a change of the formula
                            smaller than jump_rel * |value| (beyond what the
                            formula's own slope explains) is no discontinuity:
                            the node jumps cancel (default 1e-9) */
    double value_tol;    /* samples: a value w is on a sheet with value v when
                            |w - v| <= value_tol * max(|v|, |w|) (default 1e-6) */
    int adapt_tol;       /* samples: raise value_tol to ten times the median
                            relative distance of the values from their nearest
                            sheets when that is larger (noisy data), at most
                            to 1e-2 (default 1; 0 keeps value_tol as given) */
    double position_tol; /* samples: a point farther than position_tol * path
                            scale from the path is refused (default 1e-6) */
    size_t max_evals;    /* give up (SW_ETOLERANCE) after this many evaluations
                            of operands (default 2e7, a few seconds) */
} sw_audit_opts;

void sw_audit_opts_init(sw_audit_opts *o);

/* One multivalued node whose principal operand crosses the negative real
 * axis at a discontinuity (listed first), or is carried across it by the
 * jump of an inner node (carried = 1, listed after). */
typedef struct sw_audit_cause {
    size_t node;             /* index of the multivalued node (sw_expr_mv_text) */
    int downward;            /* 1: the operand goes from Im > 0 to Im < 0 (the
                                principal argument drops from pi to -pi);
                                0: from Im < 0 to Im > 0 */
    double complex operand;  /* the operand at the crossing (about real, < 0) */
    double complex node_before, node_after; /* the node's principal value on
                                either side */
    int carried;             /* 1: the operand does not cross by itself; the
                                jump of an inner cause carries it across the
                                cut (nested formulas), so this node jumps too */
} sw_audit_cause;

/* A place where the principal evaluation jumps (or where node jumps cancel). */
typedef struct sw_audit_jump {
    double t;                    /* path parameter (t = k + s on segment k) */
    double complex z;            /* the point on the path as given */
    double t_before, t_after;    /* the bracket: limits are taken there */
    double complex before, after;/* the formula's principal value just before and after */
    double complex ratio;        /* after / before */
    double complex difference;   /* after - before */
    double complex continued;    /* the continued value at t */
    /* principal / continued just before and just after: how the relation
       between the formula as written and the true continuation changes */
    double complex rel_before, rel_after;
    int endpoint;                /* -1: at the path's start (the path starts on
                                    a cut, "before" is the value there), +1: at
                                    its end, 0: inside */
    int cancels;                 /* 1: the node jumps cancel in the formula */
    size_t ncause;
    sw_audit_cause *cause;
} sw_audit_jump;

/* The stretch between consecutive discontinuities. */
typedef struct sw_audit_piece {
    double t0, t1;
    double complex ratio;      /* principal / continued in the middle of the piece */
    double complex difference; /* principal - continued there */
    /* sampled: the logged points inside the piece and 7 evenly spaced ones */
    int agrees;                /* principal = continued (to 1e-9 relative) at every
                                  sampled point of the piece */
    int constant_ratio;        /* the ratio is the same (to 1e-9) at every sampled point */
    int constant_difference;   /* so is the difference (logarithms: 2 pi i k) */
} sw_audit_piece;

typedef enum sw_audit_problem_kind {
    SW_AUDIT_ON_CUT = 1,   /* an operand lies on the negative real axis for a
                              stretch of the path: the principal value there is
                              decided by the sign of a floating-point zero */
    SW_AUDIT_SINGULAR = 2, /* the principal evaluation is infinite or undefined
                              near a point of the path (a zero or pole that the
                              continued branch does not have) */
    SW_AUDIT_ERRATIC = 3   /* a principal operand (or the formula) flips back
                              and forth along a stretch faster than sampling
                              can resolve; nothing is reported there */
} sw_audit_problem_kind;

typedef struct sw_audit_problem {
    sw_audit_problem_kind kind;
    long node;             /* the multivalued node, or -1 for the whole formula */
    double t0, t1;         /* the stretch (t0 == t1 for a point) */
    double complex z0, z1; /* its ends on the path as given */
} sw_audit_problem;

/* The result of a formula audit.  Caller-held: sw_audit_init / sw_audit_clear. */
typedef struct sw_audit {
    size_t njumps;
    sw_audit_jump *jump;       /* discontinuities of the formula, in path order */
    size_t nnotes;
    sw_audit_jump *note;       /* node crossings that cancel in the formula */
    size_t npieces;
    sw_audit_piece *piece;     /* njumps + 1 pieces (fewer when a jump is at an end) */
    size_t nproblems;
    sw_audit_problem *problem;
    size_t evaluations;        /* operand and formula evaluations used */
    double scale;              /* the path scale */
} sw_audit;

void sw_audit_init(sw_audit *a);
void sw_audit_clear(sw_audit *a);

/* Audit the expression F (an expression engine function; SW_EUSAGE for a
 * curve) along PATH against the continued branch recorded in TR, a trace of
 * F along PATH made with keep_log = 1.  O may be NULL (defaults).
 * Returns SW_OK (problems such as a stretch along a cut are results, listed
 * in OUT), SW_EUSAGE (a curve, no dense log), SW_ESINGULAR (the continued
 * branch cannot be evaluated where needed), SW_ETOLERANCE (evaluation budget
 * spent; OUT is left empty), SW_ENOMEM. */
sw_status sw_audit_formula(sw_audit *out, const sw_func *f, const sw_path *path,
                           const sw_trace *tr, const sw_audit_opts *o, sw_error *err);

/* A sentence saying what causes a jump, into BUF (size N), e.g. "the principal
 * square root of `z^2-1` jumps (factor -1) where `z^2-1` crosses the negative
 * real axis (from Im > 0 to Im < 0)".  Returns BUF. */
char *sw_audit_explain(char *buf, size_t n, const sw_func *f, const sw_audit_jump *j);
/* A sentence describing a problem, into BUF.  Returns BUF. */
char *sw_audit_problem_text(char *buf, size_t n, const sw_func *f, const sw_audit_problem *p);

/* ------------------------------------------------------------- samples */

typedef struct sw_sample {
    double complex z, w;   /* point and the user's value there */
    long line;             /* 1-based line of the file */
} sw_sample;

/* Samples read from CSV.  Caller-held: sw_samples_init / sw_samples_clear. */
typedef struct sw_samples {
    size_t n, alloc;
    sw_sample *s;
    char *origin;          /* the file name (for messages), or NULL */
} sw_samples;

void sw_samples_init(sw_samples *s);
void sw_samples_clear(sw_samples *s);

/* Parse CSV text of LEN bytes: a header line (its first field must not be a
 * number), then one sample per line, four comma-separated numbers re_z, im_z,
 * re_w, im_w.  Blank lines and lines starting with '#' are skipped; CRLF line
 * ends and a UTF-8 byte-order mark are accepted.  Refused with the line (and
 * column) named: a NUL byte (binary data), a wrong number of columns, a field
 * that is not a number, NaN or infinity, no data line, more than 1e6 samples.
 * ORIGIN names the source in messages. */
sw_status sw_samples_parse(sw_samples *s, const char *text, size_t len, const char *origin,
                           sw_error *err);
/* Read and parse a CSV file (at most 64 MiB). */
sw_status sw_samples_read_file(sw_samples *s, const char *filename, sw_error *err);

/* The check of one sample. */
typedef struct sw_sample_check {
    size_t index;             /* 0-based index among the samples */
    long line;                /* line of the file */
    double t;                 /* parameter of the nearest point of the path */
    double distance;          /* distance from the path */
    double complex continued; /* the continued branch at the sample's point */
    int on_branch;            /* the value lies on the continued branch */
    int matched;              /* a sheet was identified for the value (else it is
                                 on no sheet within the tolerance, or two tie) */
    double cont_error;        /* relative distance from the value to the continued one */
    int tie;                  /* two sheets are equally near the value, or both
                                 within the tolerance */
    double error;             /* relative distance from the value to the sheet
                                 matched (or the nearest sheet) */
    double complex sheet_value; /* the value of that sheet at the point */
    double complex ratio;     /* w / continued */
    double complex difference;/* w - continued */
    /* curves: 1-based sheet labels, where sheet k is the continuation of
       sheet k at the path's start (labels travel with the continued roots);
       0 when unknown */
    int sheet, continued_sheet;
    /* curves: the labels at the sample's own point instead (the engine's
       order there: increasing real part, then imaginary part); 0 when unknown */
    int local_sheet, continued_local_sheet;
    /* expressions: branch index of every multivalued node (0 = principal at
       the point) for the sheet matched and for the continued branch; NULL
       for curves; branch is NULL when no sheet was matched */
    long *branch, *continued_branch;
} sw_sample_check;

typedef struct sw_sample_report {
    size_t n;
    sw_sample_check *c;
    size_t nmv;               /* entries per branch array (expressions) */
    size_t off_branch;        /* samples not on the continued branch */
    double tolerance;         /* the value tolerance used */
    double scatter;           /* median relative distance of the values from
                                 their nearest sheets */
    int tolerance_raised;     /* the tolerance was raised above value_tol */
} sw_sample_report;

void sw_sample_report_init(sw_sample_report *r);
void sw_sample_report_clear(sw_sample_report *r);

/* Check every sample against the branch recorded in TR (a trace of F along
 * PATH with keep_log = 1).  Each sample point is placed on the path by
 * projection (of the nearest points, the first at or after the previous
 * sample's parameter, so that samples in path order follow a path that
 * passes a point twice); a point farther than position_tol * scale is
 * refused with its line (SW_EINPUT).  Works for expressions and curves. */
sw_status sw_audit_samples(sw_sample_report *out, const sw_func *f, const sw_path *path,
                           const sw_trace *tr, const sw_samples *s, const sw_audit_opts *o,
                           sw_error *err);

/* A phrase saying how a sample relates to the continued branch, into BUF, e.g.
 * "-1 times the continued value (the other sign of sqrt(z^2-1))". */
char *sw_sample_explain(char *buf, size_t n, const sw_func *f, const sw_sample_report *r,
                        const sw_sample_check *c);

#ifdef __cplusplus
}
#endif
#endif
