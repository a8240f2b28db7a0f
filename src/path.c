/* Paths: polylines given as text (inline with ';' or a file). */
#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "sheetwalk/path.h"

#define MAX_FILE_BYTES (16u << 20) /* refuse path files above 16 MiB */
#define MAX_ABS_VERTEX 1e150       /* beyond this, squares overflow in the engines */

static const double PI = 3.14159265358979323846;

void sw_path_init(sw_path *p) { memset(p, 0, sizeof *p); }

void sw_path_clear(sw_path *p)
{
    if (p == NULL)
        return;
    free(p->z);
    free(p->bank);
    free(p->name);
    free(p->note);
    memset(p, 0, sizeof *p);
}

sw_status sw_path_push(sw_path *p, double complex z, int bank, sw_error *err)
{
    if (!isfinite(creal(z)) || !isfinite(cimag(z)))
        return sw_error_set(err, SW_EINPUT, "a path vertex is not a finite number");
    if (cabs(z) > MAX_ABS_VERTEX)
        return sw_error_set(err, SW_EINPUT, "a path vertex is too large (|z| > 1e150)");
    if (p->n >= SW_PATH_MAX_VERTICES)
        return sw_error_set(err, SW_EINPUT, "too many path vertices (limit %d)",
                            SW_PATH_MAX_VERTICES);
    if (p->n == p->alloc) {
        size_t na = p->alloc ? 2 * p->alloc : 16;
        double complex *nz = realloc(p->z, na * sizeof *nz);
        if (nz == NULL)
            return sw_error_set(err, SW_ENOMEM, "out of memory");
        p->z = nz;
        int *nb = realloc(p->bank, na * sizeof *nb);
        if (nb == NULL)
            return sw_error_set(err, SW_ENOMEM, "out of memory");
        p->bank = nb;
        p->alloc = na;
    }
    p->z[p->n] = z;
    p->bank[p->n] = bank;
    p->n++;
    return SW_OK;
}

static char *trim(char *s)
{
    while (isspace((unsigned char)*s))
        s++;
    size_t n = strlen(s);
    while (n > 0 && isspace((unsigned char)s[n - 1]))
        s[--n] = '\0';
    return s;
}

/* Split S in place at whitespace outside parentheses; at most MAX tokens. */
static int split_args(char **tok, int max, char *s)
{
    int n = 0, depth = 0;
    char *q = s;
    while (*q) {
        while (isspace((unsigned char)*q))
            q++;
        if (!*q)
            break;
        if (n == max)
            return max + 1;
        tok[n++] = q;
        while (*q && (depth > 0 || !isspace((unsigned char)*q))) {
            if (*q == '(')
                depth++;
            else if (*q == ')' && depth > 0)
                depth--;
            q++;
        }
        if (*q)
            *q++ = '\0';
    }
    return n;
}

static sw_status set_text(char **dst, const char *src, sw_error *err)
{
    free(*dst);
    *dst = strdup(src);
    return *dst ? SW_OK : sw_error_set(err, SW_ENOMEM, "out of memory");
}

sw_status sw_path_parse(sw_path *out, const char *text, const char *origin,
                        const sw_params *params, sw_error *err)
{
    sw_path p;
    sw_path_init(&p);
    sw_status st = SW_OK;
    char *buf = strdup(text ? text : "");
    if (buf == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    int inf_seen_last = 0;
    size_t lineno = 0, inf_line = 0;
    char *save = buf;
    const char *what = origin ? origin : "path";
    int is_file = origin && strcmp(origin, "path") != 0;
    const char *unit = is_file ? "line" : "item";
    /* inline text uses ';' for line breaks; in a file only newlines separate
       lines, so that a note may contain ';' */
    const char *seps = is_file ? "\n" : ";\n";
    for (;;) {
        char *line = save;
        if (line == NULL)
            break;
        char *end = strpbrk(line, seps);
        if (end) {
            *end = '\0';
            save = end + 1;
        } else {
            save = NULL;
        }
        lineno++;
        char *hash = strchr(line, '#');
        if (hash)
            *hash = '\0';
        char *s = trim(line);
        if (*s == '\0')
            continue;
        sw_error e2;
        sw_error_clear(&e2);
        if (inf_seen_last) {
            st = sw_error_set(err, SW_EINPUT,
                              "%s %s %zu: 'inf' may only be the first or the last vertex", what,
                              unit, inf_line);
            goto cleanup;
        }
        if (strncmp(s, "name:", 5) == 0 || strncmp(s, "note:", 5) == 0) {
            st = set_text(s[1] == 'a' ? &p.name : &p.note, trim(s + 5), err);
            if (st != SW_OK)
                goto cleanup;
            continue;
        }
        if (strcmp(s, "close") == 0) {
            if (p.n == 0) {
                st = sw_error_set(err, SW_EINPUT, "%s %s %zu: 'close' before any vertex", what,
                                  unit, lineno);
                goto cleanup;
            }
            if (p.inf_start) {
                st = sw_error_set(err, SW_EINPUT,
                                  "%s %s %zu: a path from 'inf' cannot be closed", what, unit,
                                  lineno);
                goto cleanup;
            }
            st = sw_path_push(&p, p.z[0], p.bank[0], err);
            if (st != SW_OK)
                goto cleanup;
            continue;
        }
        if (strncmp(s, "circle", 6) == 0 && (s[6] == '\0' || isspace((unsigned char)s[6]))) {
            char *tok[4];
            int nt = split_args(tok, 3, s + 6);
            if (nt < 2 || nt > 3) {
                st = sw_error_set(err, SW_EINPUT,
                                  "%s %s %zu: 'circle' needs a centre, a radius and optionally a "
                                  "vertex count (C R [N], each without spaces or in parentheses)",
                                  what, unit, lineno);
                goto cleanup;
            }
            double complex c, r;
            double complex nv = 64;
            const char *names[3] = {"centre", "radius", "vertex count"};
            for (int k = 0; k < nt; k++) {
                double complex *dst = k == 0 ? &c : k == 1 ? &r : &nv;
                if (sw_const_parse(dst, NULL, tok[k], params, &e2) != SW_OK) {
                    st = sw_error_set(err, e2.code, "%s %s %zu: circle %s: %s", what, unit, lineno,
                                      names[k], e2.msg);
                    goto cleanup;
                }
            }
            if (cimag(r) != 0 || !(creal(r) > 0)) {
                st = sw_error_set(err, SW_EINPUT, "%s %s %zu: circle radius must be positive",
                                  what, unit, lineno);
                goto cleanup;
            }
            if (cimag(nv) != 0 || creal(nv) != floor(creal(nv)) || creal(nv) < 3 ||
                creal(nv) > SW_PATH_MAX_CIRCLE_N) {
                st = sw_error_set(err, SW_EINPUT,
                                  "%s %s %zu: circle vertex count must be an integer from 3 to "
                                  "%d", what, unit, lineno, SW_PATH_MAX_CIRCLE_N);
                goto cleanup;
            }
            if (p.inf_start && p.n == 0) {
                st = sw_error_set(err, SW_EINPUT, "%s %s %zu: a circle cannot follow 'inf'", what,
                                  unit, lineno);
                goto cleanup;
            }
            long nn = (long)creal(nv);
            double rr = creal(r);
            for (long k = 0; k <= nn; k++) {
                double complex v = c + rr;
                if (k > 0 && k < nn) {
                    double a = 2 * PI * (double)k / (double)nn;
                    v = c + CMPLX(rr * cos(a), rr * sin(a));
                }
                if (k == 0 && p.n > 0 && p.z[p.n - 1] == v)
                    continue;
                if (sw_path_push(&p, v, SW_BANK_NONE, &e2) != SW_OK) {
                    st = sw_error_set(err, e2.code, "%s %s %zu: circle: %s", what, unit, lineno,
                                      e2.msg);
                    goto cleanup;
                }
            }
            continue;
        }
        if (strcmp(s, "inf") == 0) {
            if (p.n == 0 && !p.inf_start) {
                p.inf_start = 1;
            } else if (p.n > 0) {
                p.inf_end = 1;
                inf_seen_last = 1;
                inf_line = lineno;
            } else {
                st = sw_error_set(err, SW_EINPUT, "%s %s %zu: 'inf' twice", what, unit, lineno);
                goto cleanup;
            }
            continue;
        }
        double complex v;
        int bank;
        if (sw_const_parse(&v, &bank, s, params, &e2) != SW_OK) {
            st = sw_error_set(err, e2.code, "%s %s %zu: %s", what, unit, lineno, e2.msg);
            goto cleanup;
        }
        if (sw_path_push(&p, v, bank, &e2) != SW_OK) {
            st = sw_error_set(err, e2.code, "%s %s %zu: %s", what, unit, lineno, e2.msg);
            goto cleanup;
        }
    }
    if (p.n == 0) {
        st = sw_error_set(err, SW_EINPUT, "%s has no vertices", what);
        goto cleanup;
    }
    if ((p.inf_start || p.inf_end) && p.n < 2) {
        st = sw_error_set(err, SW_EINPUT,
                          "%s: 'inf' needs two finite vertices beside it to give a direction",
                          what);
        goto cleanup;
    }
    if (p.inf_start && p.z[0] == p.z[1]) {
        st = sw_error_set(err, SW_EINPUT, "%s: the direction to 'inf' is undefined (repeated "
                          "vertex)", what);
        goto cleanup;
    }
    if (p.inf_end && p.z[p.n - 1] == p.z[p.n - 2]) {
        st = sw_error_set(err, SW_EINPUT, "%s: the direction to 'inf' is undefined (repeated "
                          "vertex)", what);
        goto cleanup;
    }
    sw_path_clear(out);
    *out = p;
    sw_path_init(&p);
cleanup:
    sw_path_clear(&p);
    free(buf);
    return st;
}

sw_status sw_path_read_file(sw_path *p, const char *filename, const sw_params *params,
                            sw_error *err)
{
    FILE *fp = fopen(filename, "rb");
    if (fp == NULL)
        return sw_error_set(err, SW_EINPUT, "cannot open path file '%s': %s", filename,
                            strerror(errno));
    char *buf = malloc(MAX_FILE_BYTES + 1);
    if (buf == NULL) {
        fclose(fp);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    size_t n = fread(buf, 1, MAX_FILE_BYTES + 1, fp);
    int bad = ferror(fp);
    fclose(fp);
    sw_status st = SW_OK;
    if (bad)
        st = sw_error_set(err, SW_EINPUT, "cannot read path file '%s'", filename);
    else if (n > MAX_FILE_BYTES)
        st = sw_error_set(err, SW_EINPUT, "path file '%s' is larger than 16 MiB", filename);
    else if (n == 0)
        st = sw_error_set(err, SW_EINPUT, "path file '%s' is empty", filename);
    else if (memchr(buf, '\0', n) != NULL)
        st = sw_error_set(err, SW_EINPUT, "path file '%s' is binary, not text", filename);
    if (st == SW_OK) {
        buf[n] = '\0';
        /* ';' is a line break inline, but in files only newlines separate lines;
           treat both the same for simplicity: a file may use either */
        st = sw_path_parse(p, buf, filename, params, err);
    }
    free(buf);
    return st;
}

sw_status sw_path_load(sw_path *p, const char *spec, const sw_params *params, sw_error *err)
{
    struct stat sb;
    if (spec == NULL || *spec == '\0')
        return sw_error_set(err, SW_EUSAGE, "empty path");
    if (stat(spec, &sb) == 0 && S_ISREG(sb.st_mode))
        return sw_path_read_file(p, spec, params, err);
    size_t n = strlen(spec);
    if (n > 5 && strcmp(spec + n - 5, ".path") == 0)
        return sw_error_set(err, SW_EINPUT, "no such path file '%s'", spec);
    return sw_path_parse(p, spec, "path", params, err);
}

int sw_path_is_closed(const sw_path *p)
{
    return p->n >= 2 && !p->inf_start && !p->inf_end && p->z[0] == p->z[p->n - 1];
}

size_t sw_path_segments(const sw_path *p) { return p->n ? p->n - 1 : 0; }

double complex sw_path_point(const sw_path *p, double t)
{
    size_t ns = sw_path_segments(p);
    if (ns == 0)
        return p->n ? p->z[0] : 0;
    if (!(t > 0))
        return p->z[0];
    if (t >= (double)ns)
        return p->z[ns];
    size_t k = (size_t)t;
    double s = t - (double)k;
    if (s == 0)
        return p->z[k];
    return p->z[k] + s * (p->z[k + 1] - p->z[k]);
}

double sw_path_length(const sw_path *p)
{
    double L = 0;
    for (size_t k = 1; k < p->n; k++)
        L += cabs(p->z[k] - p->z[k - 1]);
    return L;
}

double sw_path_scale(const sw_path *p)
{
    double s = sw_path_length(p);
    for (size_t k = 0; k < p->n; k++)
        if (cabs(p->z[k]) > s)
            s = cabs(p->z[k]);
    return s > 1e-300 ? s : 1e-300;
}

double sw_segment_distance(double complex z, double complex a, double complex b)
{
    double complex ab = b - a;
    double L2 = creal(ab) * creal(ab) + cimag(ab) * cimag(ab);
    double s = L2 > 0 ? creal((z - a) * conj(ab)) / L2 : 0;
    s = s < 0 ? 0 : s > 1 ? 1 : s;
    return cabs(z - (a + s * ab));
}

void sw_path_reverse(sw_path *p)
{
    for (size_t a = 0, b = p->n ? p->n - 1 : 0; a < b; a++, b--) {
        double complex tz = p->z[a];
        p->z[a] = p->z[b];
        p->z[b] = tz;
        int tb = p->bank[a];
        p->bank[a] = p->bank[b];
        p->bank[b] = tb;
    }
    int t = p->inf_start;
    p->inf_start = p->inf_end;
    p->inf_end = t;
}

sw_status sw_path_copy(sw_path *dst, const sw_path *src, sw_error *err)
{
    sw_path q;
    sw_path_init(&q);
    for (size_t k = 0; k < src->n; k++)
        if (sw_path_push(&q, src->z[k], src->bank[k], err) != SW_OK) {
            sw_path_clear(&q);
            return err ? err->code : SW_ENOMEM;
        }
    q.inf_start = src->inf_start;
    q.inf_end = src->inf_end;
    if ((src->name && set_text(&q.name, src->name, err) != SW_OK) ||
        (src->note && set_text(&q.note, src->note, err) != SW_OK)) {
        sw_path_clear(&q);
        return SW_ENOMEM;
    }
    sw_path_clear(dst);
    *dst = q;
    return SW_OK;
}
