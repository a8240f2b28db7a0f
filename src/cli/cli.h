/* The command-line front end: shared option parsing and output helpers.
 * Front ends only parse, call the library and format; main() alone exits. */
#ifndef SW_CLI_H
#define SW_CLI_H

#include <jansson.h>
#include <stdio.h>

#include "sheetwalk/sheetwalk.h"
#include "sheetwalk/cuts.h"

/* Which shared options a command accepts. */
enum {
    OPT_FUNC = 1u << 0,     /* -f / -c / --set */
    OPT_PATH = 1u << 1,     /* -p */
    OPT_START = 1u << 2,    /* --start / --at */
    OPT_CUT = 1u << 3,      /* --cut */
    OPT_FIX = 1u << 4,      /* --fix / --eval */
    OPT_CERTIFY = 1u << 5,  /* --certify */
    OPT_JSON = 1u << 6,     /* --json */
    OPT_GRAPH = 1u << 7,    /* --graph FILE */
    OPT_WHICH = 1u << 8,    /* --base / --point / --value */
    OPT_INTEGRAND = 1u << 9,/* --integrand / --bank */
    OPT_SAMPLES = 1u << 10, /* --samples / --tolerance */
    OPT_OUTPUT = 1u << 11,  /* -o FILE */
    OPT_PLOT = 1u << 12     /* --picture / --view / --pixels */
};

#define CLI_MAX_LIST 64

typedef struct cli {
    const char *cmd;
    unsigned accepted;
    const char *function, *curve, *path, *start, *at, *fix;
    const char *cuts[CLI_MAX_LIST];
    size_t ncuts;
    const char *evals[CLI_MAX_LIST];
    size_t nevals;
    int certify, json;
    const char *graph, *base, *point, *value, *integrand, *bank, *samples, *output,
        *tolerance;
    const char *picture, *view, *pixels;
    sw_params params;
    /* loaded by cli_load */
    sw_func *f;
    int f_borrowed;          /* f belongs to the batch cache */
    sw_path p;
    int have_path;
    sw_points pts_store;     /* points computed for this command (not cached) */
} cli;

/* Batch mode: functions and their branch points are cached across queries,
 * documents are captured instead of printed, errors are captured instead of
 * written to stderr.  NULL outside batch mode. */
typedef struct cli_batch_ctx cli_batch_ctx;
extern cli_batch_ctx *cli_batch;
cli_batch_ctx *cli_batch_new(void);
void cli_batch_free(cli_batch_ctx *b);
/* The captured document (ownership passes to the caller) or NULL. */
json_t *cli_batch_take_doc(cli_batch_ctx *b);
/* The captured error message or NULL. */
const char *cli_batch_error(const cli_batch_ctx *b);
void cli_batch_reset(cli_batch_ctx *b);

/* The branch points of c->f (cached in batch mode; computed once per command
 * otherwise).  Returns SW_OK or a failure with ERR filled. */
sw_status cli_get_points(cli *c, const sw_points **pts, int certify, sw_error *err);

void cli_init(cli *c, const char *cmd, unsigned accepted);
void cli_clear(cli *c);

/* Parse argv (argv[0] is the command name).  Returns -1 to go on, or an exit
 * code (0 after --help, 2 on a usage error, already reported). */
int cli_parse(cli *c, int argc, char **argv, const char *help);

/* Report a failure: one line "sheetwalk: CMD: message" on stderr; returns the
 * exit code for the status. */
int cli_fail(const cli *c, const sw_error *err);
int cli_usage(const cli *c, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

/* Build c->f from -f/-c (exactly one required) and, when NEED_PATH, c->p. */
int cli_load(cli *c, int need_path, sw_error *err);
/* The start germ from --start / --at (or the default). */
int cli_start_germ(cli *c, sw_germ *g, const sw_track_opts *o, sw_error *err);

/* The cut system from --cut (each a file or inline polyline), or the default
 * system built from PTS when none is given. */
int cli_load_cuts(cli *c, sw_cuts *cuts, const sw_points *pts, sw_error *err);
/* Parse "P=W" (P may carry a bank mark). */
int cli_point_value(cli *c, const char *opt, const char *text, double complex *p, int *bank,
                    double complex *w, sw_error *err);
/* The default fixing point: above all branch points, off the cuts. */
double complex cli_default_anchor(const sw_points *pts, const sw_cuts *cuts);
/* Regular branch from --fix, or the default (principal / sheet 1 at the
 * default anchor). */
int cli_regular_branch(cli *c, sw_branch **b, const sw_cuts *cuts, const sw_points *pts,
                       sw_error *err);
json_t *cli_cuts_json(const sw_cuts *cuts);
json_t *cli_perm_json(const int *perm, size_t n);

/* JSON helpers. */
json_t *json_cplx(double complex z);
json_t *cli_doc(const cli *c);          /* {"command": ..., "format": 1, "function": {...}} */
void cli_emit(json_t *doc);             /* print one document and free it */
json_t *cli_points_json(const sw_points *pts, const sw_func *f);
void cli_points_table(FILE *fp, const sw_points *pts, const sw_func *f);

/* Human formatting of a complex number, 12 significant digits, into BUF. */
const char *cfmt(char *buf, size_t n, double complex z);

/* Commands. */
int cmd_demo(int argc, char **argv);
int cmd_points(int argc, char **argv);
int cmd_trace(int argc, char **argv);
int cmd_loop(int argc, char **argv);
int cmd_sheets(int argc, char **argv);
int cmd_integrate(int argc, char **argv);
int cmd_cuts(int argc, char **argv);
int cmd_which(int argc, char **argv);
int cmd_audit(int argc, char **argv);
int cmd_plot(int argc, char **argv);
int cmd_batch(int argc, char **argv);
/* The command NAME from the table in main.c, or NULL (batch mode). */
int (*cli_command(const char *name))(int, char **);

#endif
