/* sheetwalk batch: JSON Lines in, JSON Lines out.
 *
 * Each input line is one query object: "command" plus the long option names
 * of that command as keys ("function", "curve", "path", "start", "at", "cut"
 * (a list), "fix", "eval" (a list), "set" (an object), "certify" (true), ...)
 * and an optional "id".  Each output line is the document the command prints
 * with --json, with "id" echoed, or {"id": ..., "error": "..."} for a bad
 * query; the batch goes on with the next line.  Parsed functions and their
 * branch points are kept across lines that repeat them. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"


static const char help[] =
    "usage: sheetwalk batch < queries.jsonl > answers.jsonl\n\n"
    "Reads one JSON query object per line on stdin and writes one JSON answer per\n"
    "line on stdout, in the same order.  A query names its command and gives the\n"
    "command's long options as keys, e.g.\n"
    "  {\"id\": 1, \"command\": \"loop\", \"curve\": \"w^3 - z\", \"path\": \"circle 0 1\"}\n"
    "  {\"id\": 2, \"command\": \"cuts\", \"function\": \"sqrt(z^2-1)\", \"cut\": [\"-1; 1\"],\n"
    "   \"eval\": [\"0+i0\"], \"set\": {\"m\": 0.5}}\n"
    "Lists give repeatable options, true gives a flag, \"set\" takes an object.  The\n"
    "answer is the command's --json document with \"id\" echoed, or\n"
    "{\"id\": ..., \"error\": \"...\", \"exit_code\": N} — and the batch goes on.\n"
    "Functions (with their parameters) and their branch points are computed once\n"
    "and reused by later lines.  Exit code 0 when every line was read.\n";

#define MAX_ARGS 256
#define MAX_LINE (16u << 20)

typedef struct argbuf {
    int argc;
    char *argv[MAX_ARGS + 1];
    char *owned[MAX_ARGS + 1];
    int nowned;
} argbuf;

static int push_arg(argbuf *a, const char *s, int copy)
{
    if (a->argc >= MAX_ARGS)
        return 0;
    char *p = copy ? strdup(s) : (char *)s;
    if (p == NULL)
        return 0;
    if (copy)
        a->owned[a->nowned++] = p;
    a->argv[a->argc++] = p;
    a->argv[a->argc] = NULL;
    return 1;
}

static void free_args(argbuf *a)
{
    for (int k = 0; k < a->nowned; k++)
        free(a->owned[k]);
    a->nowned = a->argc = 0;
}

/* A scalar as option text; 0 when it is not a string or number. */
static int scalar_text(char *buf, size_t n, const json_t *v)
{
    if (json_is_string(v))
        snprintf(buf, n, "%s", json_string_value(v));
    else if (json_is_integer(v))
        snprintf(buf, n, "%lld", (long long)json_integer_value(v));
    else if (json_is_real(v))
        snprintf(buf, n, "%.17g", json_real_value(v));
    else
        return 0;
    return 1;
}

static int build_args(argbuf *a, const json_t *q, char *why, size_t nwhy)
{
    const char *key;
    json_t *v;
    json_object_foreach((json_t *)q, key, v)
    {
        if (strcmp(key, "command") == 0 || strcmp(key, "id") == 0 || strcmp(key, "json") == 0)
            continue;
        char opt[80];
        snprintf(opt, sizeof opt, "--%s", key);
        char val[4096];
        if (strcmp(key, "set") == 0) {
            if (!json_is_object(v)) {
                snprintf(why, nwhy, "\"set\" must be an object of NAME: VALUE");
                return 0;
            }
            const char *pk;
            json_t *pv;
            json_object_foreach(v, pk, pv)
            {
                char num[2048];
                if (!scalar_text(num, sizeof num, pv)) {
                    snprintf(why, nwhy, "\"set\": the value of '%s' must be a number or a string",
                             pk);
                    return 0;
                }
                snprintf(val, sizeof val, "%s=%s", pk, num);
                if (!push_arg(a, "--set", 0) || !push_arg(a, val, 1))
                    goto too_many;
            }
        } else if (json_is_true(v)) {
            if (!push_arg(a, opt, 1))
                goto too_many;
        } else if (json_is_false(v) || json_is_null(v)) {
            continue;
        } else if (json_is_array(v)) {
            size_t i;
            json_t *item;
            json_array_foreach(v, i, item)
            {
                if (!scalar_text(val, sizeof val, item)) {
                    snprintf(why, nwhy, "\"%s\": list items must be strings or numbers", key);
                    return 0;
                }
                if (!push_arg(a, opt, 1) || !push_arg(a, val, 1))
                    goto too_many;
            }
        } else if (scalar_text(val, sizeof val, v)) {
            if (!push_arg(a, opt, 1) || !push_arg(a, val, 1))
                goto too_many;
        } else {
            snprintf(why, nwhy, "\"%s\": unsupported value type", key);
            return 0;
        }
    }
    if (!push_arg(a, "--json", 0))
        goto too_many;
    return 1;
too_many:
    snprintf(why, nwhy, "too many options in one query (limit %d)", MAX_ARGS);
    return 0;
}

static void answer_error(json_t *id, const char *msg, int code)
{
    json_t *o = json_object();
    json_object_set(o, "id", id ? id : json_null());
    json_object_set_new(o, "error", json_string(msg));
    json_object_set_new(o, "exit_code", json_integer(code));
    char *s = json_dumps(o, JSON_COMPACT | JSON_PRESERVE_ORDER);
    if (s) {
        puts(s);
        free(s);
    }
    json_decref(o);
}

int cmd_batch(int argc, char **argv)
{
    cli c;
    cli_init(&c, "batch", 0);
    int rc = cli_parse(&c, argc, argv, help);
    cli_clear(&c);
    if (rc >= 0)
        return rc;
    cli_batch_ctx *ctx = cli_batch_new();
    if (ctx == NULL) {
        fprintf(stderr, "sheetwalk: batch: out of memory\n");
        return 4;
    }
    char *line = NULL;
    size_t cap = 0;
    ssize_t len;
    size_t lineno = 0;
    while ((len = getline(&line, &cap, stdin)) != -1) {
        lineno++;
        while (len > 0 && (line[len - 1] == '\n' || line[len - 1] == '\r'))
            line[--len] = '\0';
        size_t k = 0;
        while (line[k] == ' ' || line[k] == '\t')
            k++;
        if (line[k] == '\0')
            continue;
        char why[512];
        if ((size_t)len > MAX_LINE || memchr(line, '\0', (size_t)len) != NULL) {
            snprintf(why, sizeof why, "line %zu: not a text line of JSON", lineno);
            answer_error(NULL, why, 3);
            continue;
        }
        json_error_t jerr;
        json_t *q = json_loadb(line, (size_t)len, JSON_REJECT_DUPLICATES, &jerr);
        if (q == NULL || !json_is_object(q)) {
            snprintf(why, sizeof why, "line %zu: %s (column %d)", lineno,
                     q ? "a query must be a JSON object" : jerr.text, q ? 1 : jerr.column);
            answer_error(NULL, why, 2);
            json_decref(q);
            continue;
        }
        json_t *id = json_object_get(q, "id");
        const char *cmd = json_string_value(json_object_get(q, "command"));
        int (*run)(int, char **) = cmd ? cli_command(cmd) : NULL;
        if (cmd == NULL) {
            snprintf(why, sizeof why, "line %zu: the query has no \"command\"", lineno);
            answer_error(id, why, 2);
        } else if (run == NULL || strcmp(cmd, "batch") == 0 || strcmp(cmd, "demo") == 0) {
            snprintf(why, sizeof why, "line %zu: '%.40s' is not a command that batch runs",
                     lineno, cmd);
            answer_error(id, why, 2);
        } else {
            argbuf a;
            memset(&a, 0, sizeof a);
            push_arg(&a, cmd, 1);
            if (!build_args(&a, q, why, sizeof why)) {
                char msg[600];
                snprintf(msg, sizeof msg, "line %zu: %s", lineno, why);
                answer_error(id, msg, 2);
            } else {
                cli_batch_reset(ctx);
                cli_batch = ctx;
                int code = run(a.argc, a.argv);
                cli_batch = NULL;
                json_t *doc = cli_batch_take_doc(ctx);
                if (doc != NULL) {
                    json_object_set(doc, "id", id ? id : json_null());
                    if (code != 0)
                        json_object_set_new(doc, "exit_code", json_integer(code));
                    char *s = json_dumps(doc, JSON_COMPACT | JSON_PRESERVE_ORDER |
                                                  JSON_REAL_PRECISION(17));
                    if (s) {
                        puts(s);
                        free(s);
                    }
                    json_decref(doc);
                } else {
                    const char *msg = cli_batch_error(ctx);
                    char m2[800];
                    snprintf(m2, sizeof m2, "line %zu: %s", lineno,
                             msg ? msg : "the command printed no document");
                    answer_error(id, m2, code ? code : 4);
                }
            }
            free_args(&a);
        }
        json_decref(q);
    }
    free(line);
    cli_batch_free(ctx);
    fflush(stdout);
    return 0;
}
