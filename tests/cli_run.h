/* Running the built sheetwalk binary from a test: argv in, exit code, stdout
 * and stderr out (through temporary files, so that large outputs cannot
 * dead-lock), optional stdin text.  The binary's path comes from SW_BIN,
 * which tests/CMakeLists.txt sets. */
#ifndef SW_CLI_RUN_H
#define SW_CLI_RUN_H

#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <unistd.h>

typedef struct cli_result {
    int code;     /* exit code, or 128 + signal */
    char *out;    /* stdout text (NUL-terminated) */
    char *err;    /* stderr text */
} cli_result;

static inline char *cr_slurp(int fd)
{
    size_t cap = 4096, n = 0;
    char *buf = malloc(cap);
    lseek(fd, 0, SEEK_SET);
    for (;;) {
        if (n + 1 >= cap) {
            cap *= 2;
            buf = realloc(buf, cap);
        }
        ssize_t r = read(fd, buf + n, cap - n - 1);
        if (r <= 0)
            break;
        n += (size_t)r;
    }
    buf[n] = '\0';
    return buf;
}

/* argv[0] is ignored (replaced by SW_BIN); the list ends with NULL. */
static inline cli_result cli_run(const char *input, const char *const *argv)
{
    cli_result r = {-1, NULL, NULL};
    const char *bin = getenv("SW_BIN");
    if (bin == NULL)
        bin = "./sheetwalk";
    char fo[] = "/tmp/sw_cli_outXXXXXX", fe[] = "/tmp/sw_cli_errXXXXXX",
         fi[] = "/tmp/sw_cli_inXXXXXX";
    int out = mkstemp(fo), err = mkstemp(fe), in = mkstemp(fi);
    if (out < 0 || err < 0 || in < 0)
        return r;
    unlink(fo);
    unlink(fe);
    unlink(fi);
    if (input && write(in, input, strlen(input)) < 0)
        return r;
    lseek(in, 0, SEEK_SET);
    pid_t pid = fork();
    if (pid == 0) {
        dup2(in, 0);
        dup2(out, 1);
        dup2(err, 2);
        size_t n = 0;
        while (argv[n])
            n++;
        char **args = calloc(n + 1, sizeof *args);
        args[0] = (char *)bin;
        for (size_t k = 1; k < n; k++)
            args[k] = (char *)argv[k];
        execv(bin, args);
        _exit(127);
    }
    int status = 0;
    waitpid(pid, &status, 0);
    r.code = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    r.out = cr_slurp(out);
    r.err = cr_slurp(err);
    close(out);
    close(err);
    close(in);
    return r;
}

static inline void cli_result_clear(cli_result *r)
{
    free(r->out);
    free(r->err);
    r->out = r->err = NULL;
}

/* Number of lines in S. */
static inline int cr_lines(const char *s)
{
    int n = 0;
    for (; *s; s++)
        if (*s == '\n')
            n++;
    return n;
}

/* Run, require exit code WANT_CODE and an empty stderr, and parse stdout as
 * one JSON document (cmocka must be included before this header). */
#ifdef cmocka_unit_test
#include <jansson.h>
static inline json_t *cli_run_json(const char *input, const char *const *argv, int want_code)
{
    cli_result r = cli_run(input, argv);
    if (r.code != want_code) {
        print_error("%s %s: exit %d (wanted %d); stderr: %s\n", argv[1], argv[2] ? argv[2] : "",
                    r.code, want_code, r.err);
        fail();
    }
    json_error_t je;
    json_t *d = json_loads(r.out, 0, &je);
    if (d == NULL) {
        print_error("not JSON: %s (%s)\n", r.out, je.text);
        fail();
    }
    assert_string_equal(r.err, "");
    cli_result_clear(&r);
    return d;
}
#endif

#endif
