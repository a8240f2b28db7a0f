/* sheetwalk — status codes, the error record, library initialisation.
 *
 * Every fallible function returns an sw_status (SW_OK == 0) and, when given a
 * non-NULL sw_error *, fills it with the code and a one-line message that
 * quotes the offending input and its position.  Library code never prints and
 * never exits. */
#ifndef SHEETWALK_ERROR_H
#define SHEETWALK_ERROR_H

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

#define SW_VERSION_STRING "0.1.0"

typedef enum sw_status {
    SW_OK = 0,
    SW_EUSAGE,       /* a call or option is malformed (CLI exit 2) */
    SW_EPARSE,       /* an expression, curve or path does not parse (exit 3) */
    SW_EINPUT,       /* well-formed but unacceptable input: NaN, degree, file (exit 3) */
    SW_ESINGULAR,    /* the path runs through or grazes a singular point (exit 3) */
    SW_EAMBIGUOUS,   /* two sheets tie for a requested value (exit 3) */
    SW_ETOLERANCE,   /* computed, but a tolerance/certification was not met (exit 1) */
    SW_EUNSUPPORTED, /* a case this version does not handle, said plainly (exit 3) */
    SW_ENOMEM,       /* out of memory (exit 4) */
    SW_EINTERNAL     /* a broken invariant or a library failure (exit 4) */
} sw_status;

#define SW_ERROR_MSG_MAX 512

typedef struct sw_error {
    sw_status code;
    char msg[SW_ERROR_MSG_MAX];
} sw_error;

/* Reset an error record to SW_OK with an empty message.  NULL is allowed. */
void sw_error_clear(sw_error *err);

/* Record a failure (printf-style message).  NULL err is allowed; the status
 * is returned so that `return sw_error_set(err, SW_EPARSE, ...)` reads well. */
sw_status sw_error_set(sw_error *err, sw_status code, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 3, 4)))
#endif
    ;

/* Prepend context to the message of ERR: "context: old message" (truncated
 * to fit).  NULL err is allowed.  Returns err->code. */
sw_status sw_error_prefix(sw_error *err, const char *fmt, ...)
#if defined(__GNUC__)
    __attribute__((format(printf, 2, 3)))
#endif
    ;

/* A short name of a status code ("parse error", ...). */
const char *sw_status_name(sw_status s);

/* The CLI exit code for a status: 0 ok, 1 tolerance, 2 usage, 3 bad input,
 * 4 internal (see docs/formats.md and the command-line contract). */
int sw_status_exit_code(sw_status s);

/* Process-wide set-up: turns off the aborting error handlers of GSL and
 * igraph and installs igraph's attribute table.  Idempotent; call once before
 * any other sheetwalk function. */
sw_status sw_init(sw_error *err);

const char *sw_version(void);

#ifdef __cplusplus
}
#endif
#endif
