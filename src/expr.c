/* Expressions: a recursive-descent parser that emits a flat postfix program,
 * constant folding, and the three evaluation modes (principal, continued
 * step, from a stored branch state).
 *
 * Continued evaluation follows the unwrapped-logarithm method: every
 * multivalued node keeps L = log of its operand, continuous along the path,
 * updated by L' = L + Log(u'/u) with the ratio test |u'/u - 1| <= rho, so
 * the argument of the ratio stays below asin(rho) and the principal Log of the
 * ratio is the continuous one.  Powers are exp(c L) (DLMF 4.2.26: z^a = exp(a ln z)),
 * logarithms are L itself (DLMF 4.2.1 ff.). */
#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "expr_internal.h"

#define MAX_TEXT 100000  /* longest expression accepted (characters) */
#define MAX_DEPTH 256    /* deepest nesting accepted (protects the C stack) */
#define MAX_NODES 20000  /* largest program accepted */
#define MAX_POWI 1000000 /* largest exact integer exponent */

static const double PI = 3.14159265358979323846;

/* ---------------------------------------------------------------- params */

void sw_params_init(sw_params *p)
{
    memset(p, 0, sizeof *p);
}

void sw_params_clear(sw_params *p)
{
    if (p == NULL)
        return;
    for (size_t k = 0; k < p->n; k++)
        free(p->names[k]);
    free(p->names);
    free(p->values);
    memset(p, 0, sizeof *p);
}

static const char *const reserved[] = {"z", "w", "i", "e", "pi", "inf", "sqrt", "cbrt", "root",
                                       "log", "exp", "sin", "cos", "tan", "sinh", "cosh", "tanh",
                                       NULL};

static int is_reserved(const char *name)
{
    for (int k = 0; reserved[k]; k++)
        if (strcmp(reserved[k], name) == 0)
            return 1;
    return 0;
}

static int is_identifier(const char *s)
{
    if (!(isalpha((unsigned char)s[0]) || s[0] == '_'))
        return 0;
    for (const char *q = s; *q; q++)
        if (!(isalnum((unsigned char)*q) || *q == '_'))
            return 0;
    return 1;
}

sw_status sw_params_set(sw_params *p, const char *name, double complex value, sw_error *err)
{
    if (!is_identifier(name) || strlen(name) > 64)
        return sw_error_set(err, SW_EUSAGE, "'%.80s' is not a valid parameter name", name);
    if (is_reserved(name))
        return sw_error_set(err, SW_EUSAGE, "'%s' is a reserved name and cannot be a parameter",
                            name);
    if (!isfinite(creal(value)) || !isfinite(cimag(value)))
        return sw_error_set(err, SW_EINPUT, "parameter '%s' is not a finite number", name);
    for (size_t k = 0; k < p->n; k++)
        if (strcmp(p->names[k], name) == 0) {
            p->values[k] = value;
            return SW_OK;
        }
    if (p->n == p->alloc) {
        size_t na = p->alloc ? 2 * p->alloc : 8;
        char **nn = realloc(p->names, na * sizeof *nn);
        if (nn == NULL)
            return sw_error_set(err, SW_ENOMEM, "out of memory");
        p->names = nn;
        double complex *nv = realloc(p->values, na * sizeof *nv);
        if (nv == NULL)
            return sw_error_set(err, SW_ENOMEM, "out of memory");
        p->values = nv;
        p->alloc = na;
    }
    p->names[p->n] = strdup(name);
    if (p->names[p->n] == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    p->values[p->n++] = value;
    return SW_OK;
}

int sw_params_get(double complex *value, const sw_params *p, const char *name)
{
    if (p == NULL)
        return 0;
    for (size_t k = 0; k < p->n; k++)
        if (strcmp(p->names[k], name) == 0) {
            *value = p->values[k];
            return 1;
        }
    return 0;
}

sw_status sw_params_assign(sw_params *p, const char *assignment, sw_error *err)
{
    const char *eq = strchr(assignment, '=');
    if (eq == NULL)
        return sw_error_set(err, SW_EUSAGE, "expected NAME=VALUE, got '%.80s'", assignment);
    size_t len = (size_t)(eq - assignment);
    char name[80];
    while (len > 0 && isspace((unsigned char)assignment[len - 1]))
        len--;
    size_t start = 0;
    while (start < len && isspace((unsigned char)assignment[start]))
        start++;
    if (len - start == 0 || len - start >= sizeof name)
        return sw_error_set(err, SW_EUSAGE, "expected NAME=VALUE, got '%.80s'", assignment);
    memcpy(name, assignment + start, len - start);
    name[len - start] = '\0';
    double complex v;
    sw_error e2;
    sw_status st = sw_const_parse(&v, NULL, eq + 1, p, &e2);
    if (st != SW_OK)
        return sw_error_set(err, st, "value of '%s': %s", name, e2.msg);
    return sw_params_set(p, name, v, err);
}

/* ---------------------------------------------------------------- parser */

typedef struct parser {
    const char *s;
    size_t pos;
    const sw_params *params;
    unsigned vars;
    sw_expr *e;
    sw_error *err;
    int depth;
    sw_status st;
} parser;

static void skip_ws(parser *P)
{
    while (P->s[P->pos] == ' ' || P->s[P->pos] == '\t' || P->s[P->pos] == '\r' ||
           P->s[P->pos] == '\n')
        P->pos++;
}

static int fail(parser *P, sw_status code, const char *fmt, const char *tok, size_t col)
{
    if (P->st == SW_OK) {
        char what[160];
        snprintf(what, sizeof what, fmt, tok ? tok : "");
        P->st = sw_error_set(P->err, code, "%s (column %zu)", what, col + 1);
    }
    return -1;
}

static int push(parser *P, sw_node nd)
{
    sw_expr *e = P->e;
    if (e->n >= MAX_NODES)
        return fail(P, SW_EINPUT, "expression too large (more than 20000 operations)%s", "",
                    nd.col0);
    if (e->n == e->alloc) {
        size_t na = e->alloc ? 2 * e->alloc : 32;
        sw_node *nn = realloc(e->node, na * sizeof *nn);
        if (nn == NULL) {
            P->st = sw_error_set(P->err, SW_ENOMEM, "out of memory");
            return -1;
        }
        e->node = nn;
        e->alloc = na;
    }
    e->node[e->n] = nd;
    return (int)e->n++;
}

static sw_node mknode(sw_node_kind k, int a, int b, int c0, int c1)
{
    sw_node nd;
    memset(&nd, 0, sizeof nd);
    nd.kind = k;
    nd.a = a;
    nd.b = b;
    nd.mv = -1;
    nd.col0 = c0;
    nd.col1 = c1;
    return nd;
}

static double complex powi(double complex x, long k)
{
    int neg = k < 0;
    unsigned long m = neg ? (unsigned long)(-k) : (unsigned long)k;
    double complex r = 1.0, b = x;
    while (m) {
        if (m & 1u)
            r *= b;
        m >>= 1;
        if (m)
            b *= b;
    }
    return neg ? 1.0 / r : r;
}

static double complex apply1(sw_node_kind k, double complex x)
{
    switch (k) {
    case N_NEG: return -x;
    case N_EXP: return cexp(x);
    case N_SIN: return csin(x);
    case N_COS: return ccos(x);
    case N_TAN: return ctan(x);
    case N_SINH: return csinh(x);
    case N_COSH: return ccosh(x);
    case N_TANH: return ctanh(x);
    case N_LOG: return clog(x);
    default: return x;
    }
}

static double complex apply2(sw_node_kind k, double complex x, double complex y)
{
    switch (k) {
    case N_ADD: return x + y;
    case N_SUB: return x - y;
    case N_MUL: return x * y;
    case N_DIV: return x / y;
    default: return x;
    }
}

static int finite_c(double complex v) { return isfinite(creal(v)) && isfinite(cimag(v)); }

/* Fold the last node if its children are constants. */
static int fold(parser *P, int idx)
{
    sw_expr *e = P->e;
    sw_node *nd = &e->node[idx];
    int a = nd->a, b = nd->b;
    if (a < 0 || e->node[a].kind != N_CONST)
        return idx;
    if (b >= 0 && e->node[b].kind != N_CONST)
        return idx;
    double complex x = e->node[a].c, v;
    switch (nd->kind) {
    case N_ADD: case N_SUB: case N_MUL: case N_DIV:
        v = apply2(nd->kind, x, e->node[b].c);
        break;
    case N_POWI: v = powi(x, nd->k); break;
    case N_POW: v = nd->fn == 1 ? csqrt(x) : cpow(x, nd->c); break;
    case N_POWG: v = cpow(x, e->node[b].c); break;
    default: v = apply1(nd->kind, x); break;
    }
    int c0 = nd->col0, c1 = nd->col1;
    /* a constant with zero imaginary part is a real number: +0, as a C real
       constant converted to complex would be (so sqrt(-4) folds to +2i) */
    if (cimag(v) == 0)
        v = CMPLX(creal(v), 0.0);
    if (!finite_c(v)) {
        char span[96];
        int len = c1 - c0 < 80 ? c1 - c0 : 80;
        snprintf(span, sizeof span, "%.*s", len, P->s + c0);
        return fail(P, SW_EINPUT, "constant '%s' is not a finite number", span, (size_t)c0);
    }
    /* children of a folded constant node are the last 1 or 2 nodes */
    e->n = (size_t)a;
    sw_node cn = mknode(N_CONST, -1, -1, c0, c1);
    cn.c = v;
    return push(P, cn);
}

static int parse_expr(parser *P);

static const struct {
    const char *name;
    sw_node_kind kind;
    int fn;
} functions[] = {{"sqrt", N_POW, 1}, {"cbrt", N_POW, 2}, {"root", N_POW, 3}, {"log", N_LOG, 0},
                 {"exp", N_EXP, 0},  {"sin", N_SIN, 0},  {"cos", N_COS, 0},   {"tan", N_TAN, 0},
                 {"sinh", N_SINH, 0}, {"cosh", N_COSH, 0}, {"tanh", N_TANH, 0}, {NULL, N_CONST, 0}};

static int parse_number(parser *P)
{
    const char *s = P->s;
    size_t p0 = P->pos, p = p0;
    while (isdigit((unsigned char)s[p]))
        p++;
    if (s[p] == '.') {
        p++;
        while (isdigit((unsigned char)s[p]))
            p++;
    }
    if (p == p0 + 1 && s[p0] == '.')
        return fail(P, SW_EPARSE, "malformed number '.'%s", "", p0);
    if ((s[p] == 'e' || s[p] == 'E') &&
        (isdigit((unsigned char)s[p + 1]) ||
         ((s[p + 1] == '+' || s[p + 1] == '-') && isdigit((unsigned char)s[p + 2])))) {
        p += 2;
        while (isdigit((unsigned char)s[p]))
            p++;
    }
    char buf[128];
    size_t len = p - p0;
    if (len >= sizeof buf)
        return fail(P, SW_EPARSE, "number too long%s", "", p0);
    memcpy(buf, s + p0, len);
    buf[len] = '\0';
    double v = strtod(buf, NULL);
    if (!isfinite(v))
        return fail(P, SW_EINPUT, "number '%s' is out of range", buf, p0);
    double complex c = v;
    if (s[p] == 'i' && !(isalnum((unsigned char)s[p + 1]) || s[p + 1] == '_')) {
        c = CMPLX(0.0, v);
        p++;
    }
    P->pos = p;
    sw_node nd = mknode(N_CONST, -1, -1, (int)p0, (int)p);
    nd.c = c;
    return push(P, nd);
}

static int parse_primary(parser *P)
{
    skip_ws(P);
    const char *s = P->s;
    size_t p0 = P->pos;
    char c = s[p0];
    if (c == '\0')
        return fail(P, SW_EPARSE, "expression ends where a number, name or '(' was expected%s",
                    "", p0);
    if (isdigit((unsigned char)c) || c == '.')
        return parse_number(P);
    if (c == '(') {
        P->pos++;
        int r = parse_expr(P);
        if (r < 0)
            return -1;
        skip_ws(P);
        if (s[P->pos] != ')') {
            char where[32];
            snprintf(where, sizeof where, "%zu", p0 + 1);
            return fail(P, SW_EPARSE, "missing ')' for the '(' at column %s", where, P->pos);
        }
        P->pos++;
        /* widen the span to include the parentheses */
        P->e->node[r].col0 = (int)p0;
        P->e->node[r].col1 = (int)P->pos;
        return r;
    }
    if (isalpha((unsigned char)c) || c == '_') {
        size_t p = p0;
        while (isalnum((unsigned char)s[p]) || s[p] == '_')
            p++;
        char name[72];
        size_t len = p - p0;
        if (len >= sizeof name)
            return fail(P, SW_EPARSE, "name too long%s", "", p0);
        memcpy(name, s + p0, len);
        name[len] = '\0';
        P->pos = p;
        skip_ws(P);
        int is_call = s[P->pos] == '(';
        for (int k = 0; functions[k].name; k++) {
            if (strcmp(functions[k].name, name) != 0)
                continue;
            if (!is_call)
                return fail(P, SW_EPARSE, "function '%s' needs an argument in parentheses", name,
                            p0);
            P->pos++;
            int a = parse_expr(P);
            if (a < 0)
                return -1;
            skip_ws(P);
            long deg = 0;
            if (functions[k].fn == 3) {
                if (s[P->pos] != ',')
                    return fail(P, SW_EPARSE, "root(x, n) needs two arguments%s", "", P->pos);
                P->pos++;
                skip_ws(P);
                size_t pn = P->pos;
                int b = parse_expr(P);
                if (b < 0)
                    return -1;
                sw_node *nb = &P->e->node[b];
                double complex nv = nb->c;
                if (nb->kind != N_CONST || cimag(nv) != 0 || creal(nv) != floor(creal(nv)) ||
                    creal(nv) < 1 || creal(nv) > 1e6)
                    return fail(P, SW_EINPUT,
                                "the degree of root(x, n) must be a constant integer from 1 to "
                                "1000000%s", "", pn);
                deg = (long)creal(nv);
                P->e->n--; /* drop the degree constant */
                skip_ws(P);
            } else if (s[P->pos] == ',') {
                return fail(P, SW_EPARSE, "function '%s' takes one argument", name, P->pos);
            }
            if (s[P->pos] != ')')
                return fail(P, SW_EPARSE, "missing ')' after the argument of '%s'", name, P->pos);
            P->pos++;
            sw_node nd = mknode(functions[k].kind, a, -1, (int)p0, (int)P->pos);
            nd.fn = functions[k].fn;
            if (functions[k].fn == 1)
                nd.c = 0.5, nd.k = 2;
            else if (functions[k].fn == 2)
                nd.c = 1.0 / 3.0, nd.k = 3;
            else if (functions[k].fn == 3) {
                nd.c = 1.0 / (double)deg, nd.k = deg;
                if (deg == 1) /* root(x, 1) = x */
                    return a;
            }
            int r = push(P, nd);
            return r < 0 ? r : fold(P, r);
        }
        if (is_call)
            return fail(P, SW_EPARSE,
                        "unknown function '%s' (known: sqrt cbrt root log exp sin cos tan sinh "
                        "cosh tanh)", name, p0);
        sw_node nd = mknode(N_CONST, -1, -1, (int)p0, (int)p);
        if (strcmp(name, "z") == 0 || strcmp(name, "w") == 0) {
            unsigned need = name[0] == 'z' ? SW_EXPR_VAR_Z : SW_EXPR_VAR_W;
            if (!(P->vars & need))
                return fail(P, SW_EPARSE, "the variable '%s' is not allowed here", name, p0);
            nd.kind = name[0] == 'z' ? N_Z : N_W;
            if (nd.kind == N_Z)
                P->e->uses_z = 1;
            else
                P->e->uses_w = 1;
        } else if (strcmp(name, "i") == 0) {
            nd.c = CMPLX(0.0, 1.0);
        } else if (strcmp(name, "pi") == 0) {
            nd.c = PI;
        } else if (strcmp(name, "e") == 0) {
            nd.c = exp(1.0);
        } else if (strcmp(name, "inf") == 0) {
            return fail(P, SW_EPARSE, "'inf' is only allowed as the first or last vertex of a "
                        "path%s", "", p0);
        } else if (!sw_params_get(&nd.c, P->params, name)) {
            return fail(P, SW_EPARSE, "unknown name '%s' (give it a value with --set NAME=VALUE)",
                        name, p0);
        }
        return push(P, nd);
    }
    char tok[8];
    snprintf(tok, sizeof tok, "%c", c);
    if ((unsigned char)c < 32 || (unsigned char)c > 126)
        return fail(P, SW_EPARSE, "unexpected non-printable character%s", "", p0);
    return fail(P, SW_EPARSE, "unexpected '%s'", tok, p0);
}

static int parse_unary(parser *P);

/* power := primary ('^' unary)? ; right-associative through unary */
static int parse_power(parser *P)
{
    size_t p0;
    skip_ws(P);
    p0 = P->pos;
    int a = parse_primary(P);
    if (a < 0)
        return -1;
    skip_ws(P);
    if (P->s[P->pos] != '^')
        return a;
    size_t pc = P->pos;
    P->pos++;
    int b = parse_unary(P);
    if (b < 0)
        return -1;
    int c1 = (int)P->pos;
    sw_expr *e = P->e;
    sw_node nb = e->node[b];
    sw_node nd;
    if (nb.kind == N_CONST) {
        double complex y = nb.c;
        e->n--; /* the exponent is stored in the node */
        if (cimag(y) == 0 && creal(y) == floor(creal(y)) && fabs(creal(y)) <= MAX_POWI) {
            nd = mknode(N_POWI, a, -1, (int)p0, c1);
            nd.k = (long)creal(y);
        } else if (cimag(y) == 0 && creal(y) == floor(creal(y))) {
            return fail(P, SW_EINPUT, "integer exponent too large (limit 1000000)%s", "", pc);
        } else {
            nd = mknode(N_POW, a, -1, (int)p0, c1);
            nd.c = y;
        }
    } else {
        nd = mknode(N_POWG, a, b, (int)p0, c1);
    }
    int r = push(P, nd);
    return r < 0 ? r : fold(P, r);
}

static int parse_unary(parser *P)
{
    skip_ws(P);
    char c = P->s[P->pos];
    if (c == '-' || c == '+') {
        size_t p0 = P->pos;
        if (++P->depth > MAX_DEPTH)
            return fail(P, SW_EINPUT, "expression nested too deeply%s", "", p0);
        P->pos++;
        int a = parse_unary(P);
        P->depth--;
        if (a < 0)
            return -1;
        if (c == '+')
            return a;
        int r = push(P, mknode(N_NEG, a, -1, (int)p0, (int)P->pos));
        return r < 0 ? r : fold(P, r);
    }
    return parse_power(P);
}

static int parse_term(parser *P)
{
    skip_ws(P);
    size_t p0 = P->pos;
    int a = parse_unary(P);
    if (a < 0)
        return -1;
    for (;;) {
        skip_ws(P);
        char c = P->s[P->pos];
        if (c != '*' && c != '/') {
            if (isalnum((unsigned char)c) || c == '(' || c == '_' || c == '.')
                return fail(P, SW_EPARSE, "missing operator before '%s' (write '*' for a product)",
                            (char[2]){c, 0}, P->pos);
            return a;
        }
        P->pos++;
        int b = parse_unary(P);
        if (b < 0)
            return -1;
        int r = push(P, mknode(c == '*' ? N_MUL : N_DIV, a, b, (int)p0, (int)P->pos));
        if (r < 0)
            return r;
        a = fold(P, r);
        if (a < 0)
            return -1;
    }
}

static int parse_expr(parser *P)
{
    if (++P->depth > MAX_DEPTH)
        return fail(P, SW_EINPUT, "expression nested too deeply%s", "", P->pos);
    skip_ws(P);
    size_t p0 = P->pos;
    int a = parse_term(P);
    while (a >= 0) {
        skip_ws(P);
        char c = P->s[P->pos];
        if (c != '+' && c != '-')
            break;
        P->pos++;
        int b = parse_term(P);
        if (b < 0)
            return -1;
        int r = push(P, mknode(c == '+' ? N_ADD : N_SUB, a, b, (int)p0, (int)P->pos));
        if (r < 0)
            return r;
        a = fold(P, r);
    }
    P->depth--;
    return a;
}

static int node_is_mv(const sw_node *nd)
{
    return nd->kind == N_POW || nd->kind == N_POWG || nd->kind == N_LOG;
}

sw_status sw_expr_parse(sw_expr **out, const char *text, const sw_params *params, unsigned vars,
                        sw_error *err)
{
    *out = NULL;
    if (text == NULL)
        return sw_error_set(err, SW_EUSAGE, "no expression given");
    size_t len = strlen(text);
    if (len > MAX_TEXT)
        return sw_error_set(err, SW_EINPUT, "expression too long (%zu characters, limit %d)", len,
                            MAX_TEXT);
    sw_expr *e = calloc(1, sizeof *e);
    if (e == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    e->text = strdup(text);
    if (e->text == NULL) {
        free(e);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    parser P = {text, 0, params, vars, e, err, 0, SW_OK};
    skip_ws(&P);
    if (text[P.pos] == '\0') {
        sw_expr_free(e);
        return sw_error_set(err, SW_EPARSE, "empty expression");
    }
    int r = parse_expr(&P);
    if (r >= 0) {
        skip_ws(&P);
        if (text[P.pos] != '\0') {
            char tok[2] = {text[P.pos], 0};
            if (text[P.pos] == ')')
                fail(&P, SW_EPARSE, "unmatched ')'%s", "", P.pos);
            else
                fail(&P, SW_EPARSE, "unexpected '%s'", tok, P.pos);
        }
    }
    if (P.st != SW_OK) {
        sw_expr_free(e);
        return P.st;
    }
    /* number the multivalued nodes in evaluation order */
    for (size_t k = 0; k < e->n; k++)
        if (node_is_mv(&e->node[k]))
            e->nmv++;
    e->mv_node = malloc((e->nmv ? e->nmv : 1) * sizeof *e->mv_node);
    if (e->mv_node == NULL) {
        sw_expr_free(e);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    size_t m = 0;
    for (size_t k = 0; k < e->n; k++)
        if (node_is_mv(&e->node[k])) {
            e->node[k].mv = (int)m;
            e->mv_node[m++] = (int)k;
        }
    /* nodes on the way to a multivalued operand (children come first, so a
       backward sweep sees every parent before its children) */
    e->need = calloc(e->n ? e->n : 1, 1);
    if (e->need == NULL) {
        sw_expr_free(e);
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    }
    for (size_t k = e->n; k-- > 0;) {
        const sw_node *nd = &e->node[k];
        if (node_is_mv(nd))
            e->need[nd->a] = 1;
        if (e->need[k]) {
            if (nd->a >= 0)
                e->need[nd->a] = 1;
            if (nd->b >= 0)
                e->need[nd->b] = 1;
        }
    }
    *out = e;
    return SW_OK;
}

void sw_expr_free(sw_expr *e)
{
    if (e == NULL)
        return;
    free(e->text);
    free(e->node);
    free(e->mv_node);
    free(e->need);
    free(e);
}

const char *sw_expr_text(const sw_expr *e) { return e->text; }
size_t sw_expr_mv_count(const sw_expr *e) { return e->nmv; }
int sw_expr_uses_z(const sw_expr *e) { return e->uses_z; }
int sw_expr_uses_w(const sw_expr *e) { return e->uses_w; }

char *sw_expr_mv_text(char *buf, size_t n, const sw_expr *e, size_t k)
{
    if (n == 0)
        return buf;
    if (k >= e->nmv) {
        snprintf(buf, n, "?");
        return buf;
    }
    const sw_node *nd = &e->node[e->mv_node[k]];
    int len = nd->col1 - nd->col0;
    snprintf(buf, n, "%.*s", len, e->text + nd->col0);
    return buf;
}

/* ------------------------------------------------------------ evaluation */

#define EVAL_SINGLE(nd, vals)                                                 \
    case N_CONST: vals[k] = nd->c; break;                                     \
    case N_Z: vals[k] = z; break;                                             \
    case N_W: vals[k] = w; break;                                             \
    case N_ADD: vals[k] = vals[nd->a] + vals[nd->b]; break;                   \
    case N_SUB: vals[k] = vals[nd->a] - vals[nd->b]; break;                   \
    case N_MUL: vals[k] = vals[nd->a] * vals[nd->b]; break;                   \
    case N_DIV: vals[k] = vals[nd->a] / vals[nd->b]; break;                   \
    case N_NEG: vals[k] = -vals[nd->a]; break;                                \
    case N_POWI: vals[k] = powi(vals[nd->a], nd->k); break;                   \
    case N_EXP: case N_SIN: case N_COS: case N_TAN: case N_SINH: case N_COSH: \
    case N_TANH: vals[k] = apply1(nd->kind, vals[nd->a]); break

double complex sw_expr_eval_principal(const sw_expr *e, double complex z, double complex w)
{
    double complex stackbuf[256];
    double complex *vals = e->n <= 256 ? stackbuf : malloc(e->n * sizeof *vals);
    if (vals == NULL)
        return CMPLX(NAN, NAN);
    for (size_t k = 0; k < e->n; k++) {
        const sw_node *nd = &e->node[k];
        switch (nd->kind) {
            EVAL_SINGLE(nd, vals);
        /* exactly as C computes it, signed zeros included: csqrt(-4 - 0i) = -2i
           (C11 Annex G); sw_expr_shifted_state is the place that treats a zero
           imaginary part as +0 */
        case N_POW:
            vals[k] = nd->fn == 1 ? csqrt(vals[nd->a]) : cpow(vals[nd->a], nd->c);
            break;
        case N_POWG: vals[k] = cpow(vals[nd->a], vals[nd->b]); break;
        case N_LOG: vals[k] = clog(vals[nd->a]); break;
        }
    }
    double complex r = vals[e->n - 1];
    if (vals != stackbuf)
        free(vals);
    if (!finite_c(r))
        return CMPLX(NAN, NAN);
    return r;
}

static double complex mv_value(const sw_node *nd, double complex L, const double complex *vals)
{
    switch (nd->kind) {
    case N_POW:
        if (nd->fn == 1) { /* sqrt: exp(L/2) computed to full relative accuracy */
            double r = exp(0.5 * creal(L));
            double t = 0.5 * cimag(L);
            return CMPLX(r * cos(t), r * sin(t));
        }
        return cexp(nd->c * L);
    case N_POWG: return cexp(vals[nd->b] * L);
    default: return L;
    }
}

/* Fast complex helpers for the step: the library versions guard against
 * overflow with scaling (hypot, __divdc3); here the moduli are checked to lie
 * well inside the double range first and the library is used otherwise. */
static inline int tame(double a2) { return a2 > 1e-280 && a2 < 1e280; }

int sw_expr_eval_step(double complex *value, double complex *new_state, const sw_expr *e,
                      double complex z, double complex w, const double complex *old_state,
                      double rho, double complex *vals)
{
    int full = value != NULL;
    double rho2 = rho * rho;
    for (size_t k = 0; k < e->n; k++) {
        const sw_node *nd = &e->node[k];
        if (!full && !e->need[k] && nd->mv < 0)
            continue; /* not on the way to any multivalued operand */
        switch (nd->kind) {
            EVAL_SINGLE(nd, vals);
        case N_POW: case N_POWG: case N_LOG: {
            int m = nd->mv;
            double complex u = vals[nd->a], u0 = old_state[2 * m];
            double ur = creal(u), ui = cimag(u);
            double a2 = ur * ur + ui * ui, b2 = creal(u0) * creal(u0) + cimag(u0) * cimag(u0);
            if (u == 0 || !finite_c(u))
                return -2 - m;
            double complex r = tame(a2) && tame(b2) ? u * conj(u0) / b2 : u / u0;
            double dr = creal(r) - 1, di = cimag(r);
            if (rho >= 0 && dr * dr + di * di > rho2)
                return m;
            /* the continued argument decides only the branch integer k; the
               value is recomputed as Log u + 2 pi i k, so rounding errors do not
               accumulate along the path */
            double im = cimag(old_state[2 * m + 1]) + atan2(cimag(r), creal(r));
            double arg = atan2(ui, ur);
            double re;
            if (a2 > 0.5 && a2 < 2) {
                /* near |u| = 1: log|u| = log1p(|u|^2 - 1) / 2 with the
                   difference formed without cancellation */
                double big = fabs(ur) > fabs(ui) ? fabs(ur) : fabs(ui);
                double small = fabs(ur) > fabs(ui) ? fabs(ui) : fabs(ur);
                re = 0.5 * log1p((big - 1) * (big + 1) + small * small);
            } else {
                re = tame(a2) ? 0.5 * log(a2) : log(cabs(u));
            }
            double k2 = nearbyint((im - arg) / (2 * PI));
            double complex L = CMPLX(re, arg + 2 * PI * k2);
            new_state[2 * m] = u;
            new_state[2 * m + 1] = L;
            if (full || e->need[k])
                vals[k] = mv_value(nd, L, vals);
            break;
        }
        }
    }
    if (full)
        *value = vals[e->n - 1];
    return -1;
}

int sw_expr_shifted_state(double complex *value, double complex *state, const sw_expr *e,
                          double complex z, double complex w, const long *shift,
                          double complex *vals)
{
    for (size_t k = 0; k < e->n; k++) {
        const sw_node *nd = &e->node[k];
        switch (nd->kind) {
            EVAL_SINGLE(nd, vals);
        case N_POW: case N_POWG: case N_LOG: {
            int m = nd->mv;
            double complex u = vals[nd->a];
            if (u == 0 || !finite_c(u))
                return -2 - m;
            if (cimag(u) == 0)
                u = CMPLX(creal(u), 0.0); /* +0: the principal Arg is pi on the cut */
            double complex L = clog(u);
            if (shift != NULL && shift[m] != 0)
                L += CMPLX(0.0, 2 * PI * (double)shift[m]);
            state[2 * m] = u;
            state[2 * m + 1] = L;
            vals[k] = mv_value(nd, L, vals);
            break;
        }
        }
    }
    *value = vals[e->n - 1];
    return -1;
}

int sw_expr_principal_state(double complex *value, double complex *state, const sw_expr *e,
                            double complex z, double complex w, double complex *vals)
{
    return sw_expr_shifted_state(value, state, e, z, w, NULL, vals);
}

double complex sw_expr_eval_state(const sw_expr *e, double complex z, double complex w,
                                  const double complex *state, double complex *vals)
{
    for (size_t k = 0; k < e->n; k++) {
        const sw_node *nd = &e->node[k];
        switch (nd->kind) {
            EVAL_SINGLE(nd, vals);
        case N_POW: case N_POWG: case N_LOG:
            vals[k] = mv_value(nd, state[2 * nd->mv + 1], vals);
            break;
        }
    }
    return vals[e->n - 1];
}

/* ------------------------------------------------------------- constants */

sw_status sw_const_parse(double complex *value, int *bank, const char *text,
                         const sw_params *params, sw_error *err)
{
    if (text == NULL)
        return sw_error_set(err, SW_EUSAGE, "no value given");
    size_t len = strlen(text);
    while (len > 0 && isspace((unsigned char)text[len - 1]))
        len--;
    int b = SW_BANK_NONE;
    /* a trailing "+i0" / "-i0" (spaces allowed around the sign) is a bank mark */
    if (len >= 3 && text[len - 1] == '0' && text[len - 2] == 'i') {
        size_t q = len - 2;
        while (q > 0 && isspace((unsigned char)text[q - 1]))
            q--;
        if (q > 0 && (text[q - 1] == '+' || text[q - 1] == '-')) {
            b = text[q - 1] == '+' ? SW_BANK_UPPER : SW_BANK_LOWER;
            len = q - 1;
        }
    }
    if (b != SW_BANK_NONE && bank == NULL)
        return sw_error_set(err, SW_EPARSE, "a bank mark (+i0 / -i0) is not allowed in '%.80s'",
                            text);
    char *copy = malloc(len + 1);
    if (copy == NULL)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    memcpy(copy, text, len);
    copy[len] = '\0';
    sw_expr *e = NULL;
    sw_status st = sw_expr_parse(&e, copy, params, 0, err);
    free(copy);
    if (st != SW_OK)
        return st;
    double complex v = sw_expr_eval_principal(e, 0, 0);
    sw_expr_free(e);
    if (!finite_c(v))
        return sw_error_set(err, SW_EINPUT, "'%.80s' is not a finite number", text);
    *value = CMPLX(creal(v) + 0.0, cimag(v) + 0.0); /* no negative zeros in constants */
    if (bank)
        *bank = b;
    return SW_OK;
}

double complex sw_expr_mv_operand(const sw_expr *e, size_t m, double complex z, double complex w)
{
    if (m >= e->nmv)
        return CMPLX(NAN, NAN);
    int target = e->node[e->mv_node[m]].a;
    double complex stackbuf[256];
    double complex *vals = e->n <= 256 ? stackbuf : malloc(e->n * sizeof *vals);
    if (vals == NULL)
        return CMPLX(NAN, NAN);
    for (size_t j = 0; j <= (size_t)target; j++) {
        const sw_node *nd = &e->node[j];
        size_t k = j; /* the name EVAL_SINGLE writes to */
        switch (nd->kind) {
            EVAL_SINGLE(nd, vals);
        case N_POW:
            vals[k] = nd->fn == 1 ? csqrt(vals[nd->a]) : cpow(vals[nd->a], nd->c);
            break;
        case N_POWG: vals[k] = cpow(vals[nd->a], vals[nd->b]); break;
        case N_LOG: vals[k] = clog(vals[nd->a]); break;
        }
    }
    double complex r = vals[target];
    if (vals != stackbuf)
        free(vals);
    return r;
}
