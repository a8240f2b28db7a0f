/* Status codes, error records and process-wide initialisation. */
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <igraph.h>

#include "sheetwalk/error.h"

void sw_error_clear(sw_error *err)
{
    if (err == NULL)
        return;
    err->code = SW_OK;
    err->msg[0] = '\0';
}

sw_status sw_error_set(sw_error *err, sw_status code, const char *fmt, ...)
{
    if (err != NULL) {
        va_list ap;
        err->code = code;
        va_start(ap, fmt);
        vsnprintf(err->msg, sizeof err->msg, fmt, ap);
        va_end(ap);
    }
    return code;
}

sw_status sw_error_prefix(sw_error *err, const char *fmt, ...)
{
    if (err == NULL)
        return SW_OK;
    char old[SW_ERROR_MSG_MAX];
    memcpy(old, err->msg, sizeof old);
    old[sizeof old - 1] = '\0';
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(err->msg, sizeof err->msg, fmt, ap);
    va_end(ap);
    if (n < 0)
        n = 0;
    size_t used = (size_t)n < sizeof err->msg ? (size_t)n : sizeof err->msg - 1;
    size_t room = sizeof err->msg - 1 - used;
    if (room > 2) {
        memcpy(err->msg + used, ": ", 2);
        used += 2;
        room -= 2;
        size_t len = strlen(old);
        if (len > room)
            len = room;
        memcpy(err->msg + used, old, len);
        used += len;
    }
    err->msg[used] = '\0';
    return err->code;
}

const char *sw_status_name(sw_status s)
{
    switch (s) {
    case SW_OK: return "ok";
    case SW_EUSAGE: return "usage error";
    case SW_EPARSE: return "parse error";
    case SW_EINPUT: return "bad input";
    case SW_ESINGULAR: return "singular point on the path";
    case SW_EAMBIGUOUS: return "ambiguous sheet";
    case SW_ETOLERANCE: return "tolerance not met";
    case SW_EUNSUPPORTED: return "not supported";
    case SW_ENOMEM: return "out of memory";
    case SW_EINTERNAL: return "internal error";
    }
    return "unknown status";
}

int sw_status_exit_code(sw_status s)
{
    switch (s) {
    case SW_OK: return 0;
    case SW_ETOLERANCE: return 1;
    case SW_EUSAGE: return 2;
    case SW_EPARSE:
    case SW_EINPUT:
    case SW_ESINGULAR:
    case SW_EAMBIGUOUS:
    case SW_EUNSUPPORTED: return 3;
    case SW_ENOMEM:
    case SW_EINTERNAL: return 4;
    }
    return 4;
}

/* igraph reports through this instead of aborting; the calling code checks
 * the returned igraph_error_t and turns it into an sw_status. */
static void igraph_quiet_handler(const char *reason, const char *file, int line,
                                 igraph_error_t code)
{
    (void)reason;
    (void)file;
    (void)line;
    (void)code;
    IGRAPH_FINALLY_FREE();
}

static void igraph_quiet_warning(const char *reason, const char *file, int line)
{
    (void)reason;
    (void)file;
    (void)line;
}

static int sw_initialised = 0;

sw_status sw_init(sw_error *err)
{
    sw_error_clear(err);
    if (sw_initialised)
        return SW_OK;
    gsl_set_error_handler_off();
    igraph_set_error_handler(igraph_quiet_handler);
    igraph_set_warning_handler(igraph_quiet_warning);
    igraph_set_attribute_table(&igraph_cattribute_table);
    sw_initialised = 1;
    return SW_OK;
}

const char *sw_version(void) { return SW_VERSION_STRING; }
