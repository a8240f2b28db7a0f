/* sheetwalk — the command-line entry point.  main() is the only exit. */
#include <stdio.h>
#include <string.h>

#include "cli.h"

typedef struct command {
    const char *name;
    int (*run)(int argc, char **argv);
    const char *summary;
} command;


static const command commands[] = {
    {"demo", cmd_demo, "a guided scenario: a two-channel amplitude continued across its cuts"},
    {"points", cmd_points, "branch points, their local monodromy, and infinity"},
    {"trace", cmd_trace, "continue a function along a path: values, branches, winding"},
    {"loop", cmd_loop, "what a closed path does to the function (multiplier, permutation)"},
    {"sheets", cmd_sheets, "the monodromy graph of a curve: components, genus, group order"},
    {"integrate", cmd_integrate, "integrate the tracked branch along a path (ends at branch points, inf)"},
    {"cuts", cmd_cuts, "check a cut system: single-valued? jumps across every piece; --eval"},
    {"which", cmd_which, "which sheet a value at a point is on, seen from a base point"},
    {"batch", cmd_batch, "JSON Lines queries on stdin, one JSON answer per line on stdout"},
    {"audit", cmd_audit, "where a principal-branch formula jumps; sampled values off the branch"},
    {"plot", cmd_plot, "pictures: the plane (cuts, a path by sheet), monodromy graph, domain colouring"},
    {NULL, NULL, NULL}};

/* For batch mode: the command NAME, or NULL. */
int (*cli_command(const char *name))(int, char **)
{
    for (const command *c = commands; c->name; c++)
        if (strcmp(c->name, name) == 0)
            return c->run;
    return NULL;
}

/* Commands of the contract that later versions add. */
static const char *const planned[] = {NULL};

static void usage(FILE *fp)
{
    fprintf(fp,
            "sheetwalk %s - continue multivalued complex functions along paths\n\n"
            "usage: sheetwalk COMMAND [OPTIONS]\n"
            "       sheetwalk --help | --version      sheetwalk COMMAND --help\n\n"
            "commands:\n", sw_version());
    for (const command *c = commands; c->name; c++)
        fprintf(fp, "  %-10s %s\n", c->name, c->summary);
    fprintf(fp,
            "\nWith no command, sheetwalk runs the demo.  Functions are given with\n"
            "-f EXPR (an expression in z with roots, powers and logs) or -c POLY (w(z)\n"
            "defined by a polynomial P(z, w) = 0); paths with -p PATH (a file or inline\n"
            "vertices separated by ';').  --json prints one JSON document.\n"
            "Exit codes: 0 ok, 1 tolerance or certification not met, 2 usage error,\n"
            "3 bad input, 4 internal error.\n");
}

int main(int argc, char **argv)
{
    sw_error err;
    if (sw_init(&err) != SW_OK) {
        fprintf(stderr, "sheetwalk: %s\n", err.msg);
        return 4;
    }
    if (argc < 2)
        return cmd_demo(1, (char *[]){"demo", NULL});
    const char *name = argv[1];
    if (strcmp(name, "--help") == 0 || strcmp(name, "-h") == 0 || strcmp(name, "help") == 0) {
        usage(stdout);
        return 0;
    }
    if (strcmp(name, "--version") == 0) {
        printf("sheetwalk %s\n", sw_version());
        return 0;
    }
    for (const command *c = commands; c->name; c++)
        if (strcmp(c->name, name) == 0)
            return c->run(argc - 1, argv + 1);
    for (int k = 0; planned[k]; k++)
        if (strcmp(planned[k], name) == 0) {
            fprintf(stderr, "sheetwalk: %s: this command is not available in version %s yet\n",
                    name, sw_version());
            return 2;
        }
    fprintf(stderr, "sheetwalk: unknown command '%s' (see 'sheetwalk --help')\n", name);
    return 2;
}
