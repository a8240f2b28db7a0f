/* The monodromy graph: components, genus (Riemann-Hurwitz), group order
 * (Schreier-Sims), export.  See include/sheetwalk/sheets.h. */
#include <flint/fmpz.h>
#include <igraph.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "sheetwalk/sheets.h"

void sw_sheets_init(sw_sheets *s) { memset(s, 0, sizeof *s); }

void sw_sheets_clear(sw_sheets *s)
{
    if (!s)
        return;
    free(s->component);
    free(s->comp_size);
    free(s->genus);
    free(s->group_order);
    memset(s, 0, sizeof *s);
}

static int is_perm(const int *p, size_t n)
{
    unsigned char seen[SW_SHEETS_MAX];
    size_t i;
    if (!p || n > SW_SHEETS_MAX)
        return 0;
    memset(seen, 0, sizeof seen);
    for (i = 0; i < n; i++) {
        if (p[i] < 0 || (size_t)p[i] >= n || seen[p[i]])
            return 0;
        seen[p[i]] = 1;
    }
    return 1;
}

size_t sw_perm_cycles(int *elems, size_t *lens, const int *perm, size_t n)
{
    unsigned char seen[SW_SHEETS_MAX];
    size_t i, nc = 0, pos = 0;
    if (!is_perm(perm, n))
        return 0;
    memset(seen, 0, sizeof seen);
    for (i = 0; i < n; i++) {
        size_t len = 0;
        int x = (int)i;
        if (seen[i])
            continue;
        while (!seen[x]) {
            seen[x] = 1;
            elems[pos++] = x;
            len++;
            x = perm[x];
        }
        lens[nc++] = len;
    }
    return nc;
}

/* ------------------------------------------------------------------------ */
/* Schreier-Sims (deterministic; D. Holt, B. Eick, E. O'Brien, Handbook of
 * Computational Group Theory, CRC 2005, section 4.4.2, procedure
 * SCHREIERSIMS).  Permutations of at most SW_SHEETS_MAX points as int arrays,
 * p[i] the image of i; (a b)(i) = a[b[i]]. */

typedef struct ss_level {
    int base;
    unsigned char valid[SW_SHEETS_MAX];
    int *u;      /* n x n: row x maps base -> x */
    int *uinv;   /* inverses */
    int orbit[SW_SHEETS_MAX];
    int norbit;
} ss_level;

typedef struct ss {
    int n;
    int nlev;
    ss_level lev[SW_SHEETS_MAX + 1];
    int **gens;
    int ngens, agens;
} ss;

static int perm_is_id(const int *p, int n)
{
    for (int i = 0; i < n; i++)
        if (p[i] != i) return 0;
    return 1;
}

static int ss_add_gen(ss *s, const int *p)
{
    int *c;
    if (s->ngens == s->agens) {
        int na = s->agens ? 2 * s->agens : 16;
        int **ng = realloc(s->gens, (size_t)na * sizeof *ng);
        if (!ng) return 0;
        s->gens = ng;
        s->agens = na;
    }
    c = malloc((size_t)s->n * sizeof *c);
    if (!c) return 0;
    memcpy(c, p, (size_t)s->n * sizeof *c);
    s->gens[s->ngens++] = c;
    return 1;
}

/* Does generator g fix base points 0..l-1? */
static int fixes_prefix(const ss *s, const int *g, int l)
{
    for (int i = 0; i < l; i++)
        if (g[s->lev[i].base] != s->lev[i].base) return 0;
    return 1;
}

static int ss_new_level(ss *s, int base)
{
    ss_level *L = &s->lev[s->nlev];
    L->base = base;
    L->u = malloc((size_t)s->n * (size_t)s->n * sizeof *L->u);
    L->uinv = malloc((size_t)s->n * (size_t)s->n * sizeof *L->uinv);
    if (!L->u || !L->uinv) return 0;
    s->nlev++;
    return 1;
}

/* Orbit and transversal of level l under the generators fixing the prefix. */
static void ss_orbit(ss *s, int l)
{
    ss_level *L = &s->lev[l];
    int n = s->n, head = 0, i, g;
    memset(L->valid, 0, sizeof L->valid);
    for (i = 0; i < n; i++) {
        L->u[L->base * n + i] = i;
        L->uinv[L->base * n + i] = i;
    }
    L->valid[L->base] = 1;
    L->orbit[0] = L->base;
    L->norbit = 1;
    while (head < L->norbit) {
        int x = L->orbit[head++];
        for (g = 0; g < s->ngens; g++) {
            const int *p = s->gens[g];
            int y;
            if (!fixes_prefix(s, p, l))
                continue;
            y = p[x];
            if (!L->valid[y]) {
                /* u_y = p u_x */
                for (i = 0; i < n; i++)
                    L->u[y * n + i] = p[L->u[x * n + i]];
                for (i = 0; i < n; i++)
                    L->uinv[y * n + L->u[y * n + i]] = i;
                L->valid[y] = 1;
                L->orbit[L->norbit++] = y;
            }
        }
    }
}

/* Sift h (in place) from level l0; returns the level where it stopped. */
static int ss_sift(const ss *s, int *h, int l0)
{
    int n = s->n, l, i, tmp[SW_SHEETS_MAX];
    for (l = l0; l < s->nlev; l++) {
        const ss_level *L = &s->lev[l];
        int x = h[L->base];
        if (!L->valid[x])
            return l;
        for (i = 0; i < n; i++)
            tmp[i] = L->uinv[x * n + h[i]];
        memcpy(h, tmp, (size_t)n * sizeof *h);
    }
    return s->nlev;
}

static void ss_clear(ss *s)
{
    for (int l = 0; l < s->nlev; l++) {
        free(s->lev[l].u);
        free(s->lev[l].uinv);
    }
    for (int g = 0; g < s->ngens; g++)
        free(s->gens[g]);
    free(s->gens);
}

static int first_moved(const int *p, int n)
{
    for (int i = 0; i < n; i++)
        if (p[i] != i) return i;
    return -1;
}

/* Order of the group generated by the NG permutations GENS on n points. */
static int group_order(fmpz_t order, int *const *gens, int ng, int n)
{
    ss s;
    int ok = 1, l, i, g;
    memset(&s, 0, sizeof s);
    s.n = n;
    fmpz_one(order);
    for (g = 0; g < ng && ok; g++)
        if (!perm_is_id(gens[g], n))
            ok = ss_add_gen(&s, gens[g]);
    for (g = 0; g < s.ngens && ok; g++)
        if (fixes_prefix(&s, s.gens[g], s.nlev))
            ok = ss_new_level(&s, first_moved(s.gens[g], n));
    for (l = 0; l < s.nlev; l++)
        ss_orbit(&s, l);
    l = s.nlev - 1;
    while (ok && l >= 0) {
        int restart = 0;
        ss_level *L = &s.lev[l];
        for (int oi = 0; oi < L->norbit && !restart && ok; oi++) {
            int x = L->orbit[oi];
            for (g = 0; g < s.ngens && !restart && ok; g++) {
                const int *p = s.gens[g];
                int h[SW_SHEETS_MAX], y, j;
                if (!fixes_prefix(&s, p, l))
                    continue;
                y = p[x];
                /* Schreier generator u_y^-1 p u_x */
                for (i = 0; i < n; i++)
                    h[i] = L->uinv[y * n + p[L->u[x * n + i]]];
                if (perm_is_id(h, n))
                    continue;
                j = ss_sift(&s, h, l + 1);
                if (j < s.nlev || !perm_is_id(h, n)) {
                    if (j == s.nlev)
                        ok = ss_new_level(&s, first_moved(h, n));
                    if (ok)
                        ok = ss_add_gen(&s, h);
                    if (ok) {
                        for (int q = l + 1; q <= j; q++)
                            ss_orbit(&s, q);
                        l = j;
                        restart = 1;
                    }
                    /* L may be stale after new levels: re-fetched by the loop */
                }
            }
        }
        if (!restart)
            l--;
    }
    if (ok)
        for (l = 0; l < s.nlev; l++)
            fmpz_mul_ui(order, order, (ulong)s.lev[l].norbit);
    ss_clear(&s);
    return ok;
}

/* ------------------------------------------------------------------------ */

static const int *point_perm(const sw_points *pts, size_t k)
{
    return k < pts->n ? pts->pt[k].perm : pts->infinity.perm;
}

/* Build the monodromy graph (no attributes). */
static sw_status build_graph(igraph_t *g, const sw_points *pts, igraph_vector_int_t *edge_point,
                             sw_error *err)
{
    igraph_vector_int_t edges;
    size_t n = pts->nsheets, k;
    int elems[SW_SHEETS_MAX];
    size_t lens[SW_SHEETS_MAX];
    sw_status st = SW_OK;
    if (igraph_vector_int_init(&edges, 0) != IGRAPH_SUCCESS)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    for (k = 0; k <= pts->n && st == SW_OK; k++) {
        const int *p = point_perm(pts, k);
        size_t nc, c, pos = 0;
        if (!p) continue;
        nc = sw_perm_cycles(elems, lens, p, n);
        for (c = 0; c < nc; c++) {
            for (size_t q = 0; q < lens[c] && lens[c] > 1; q++) {
                int a = elems[pos + q], b = elems[pos + (q + 1) % lens[c]];
                if (igraph_vector_int_push_back(&edges, a) != IGRAPH_SUCCESS ||
                    igraph_vector_int_push_back(&edges, b) != IGRAPH_SUCCESS ||
                    (edge_point && igraph_vector_int_push_back(edge_point, k < pts->n ? (igraph_integer_t)k : -1) != IGRAPH_SUCCESS))
                    st = sw_error_set(err, SW_ENOMEM, "out of memory");
            }
            pos += lens[c];
        }
    }
    if (st == SW_OK && igraph_create(g, &edges, (igraph_integer_t)n, IGRAPH_DIRECTED) != IGRAPH_SUCCESS)
        st = sw_error_set(err, SW_EINTERNAL, "igraph could not build the monodromy graph");
    igraph_vector_int_destroy(&edges);
    return st;
}

static sw_status check_points(const sw_points *pts, sw_error *err)
{
    size_t k;
    if (!pts || pts->nsheets == 0 || !pts->infinity.perm)
        return sw_error_set(err, SW_EUSAGE, "no sheet permutations (the monodromy graph needs a curve)");
    if (pts->nsheets > SW_SHEETS_MAX)
        return sw_error_set(err, SW_EUNSUPPORTED, "more than %d sheets", SW_SHEETS_MAX);
    for (k = 0; k <= pts->n; k++) {
        const int *p = point_perm(pts, k);
        if (k < pts->n && !p)
            return sw_error_set(err, SW_EUSAGE, "point %zu has no sheet permutation", k + 1);
        if (!is_perm(p, pts->nsheets))
            return sw_error_set(err, SW_EINTERNAL, "the local monodromy at %s is not a permutation",
                                k < pts->n ? "a finite point" : "infinity");
    }
    return SW_OK;
}

sw_status sw_sheets_compute(sw_sheets *out, const sw_points *pts, sw_error *err)
{
    sw_sheets res;
    sw_status st;
    igraph_t g;
    igraph_vector_int_t memb, csize;
    igraph_integer_t ncomp = 0;
    size_t n, k, i;
    int have_g = 0, have_v = 0;
    int elems[SW_SHEETS_MAX];
    size_t lens[SW_SHEETS_MAX];
    int remap[SW_SHEETS_MAX];
    long *sum = NULL;
    fmpz_t order;
    int **gens = NULL;

    sw_sheets_init(&res);
    fmpz_init(order);
    st = check_points(pts, err);
    if (st != SW_OK)
        goto cleanup;
    if (!pts->product_ok) {
        st = sw_error_set(err, SW_EINTERNAL,
                          "the local monodromies do not satisfy the product relation: the loops "
                          "were not tracked reliably, so no genus or group is reported");
        goto cleanup;
    }
    n = pts->nsheets;
    st = build_graph(&g, pts, NULL, err);
    if (st != SW_OK)
        goto cleanup;
    have_g = 1;
    if (igraph_vector_int_init(&memb, 0) != IGRAPH_SUCCESS) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    if (igraph_vector_int_init(&csize, 0) != IGRAPH_SUCCESS) {
        igraph_vector_int_destroy(&memb);
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    have_v = 1;
    if (igraph_connected_components(&g, &memb, &csize, &ncomp, IGRAPH_WEAK) != IGRAPH_SUCCESS) {
        st = sw_error_set(err, SW_EINTERNAL, "igraph could not find the components");
        goto cleanup;
    }
    res.nsheets = n;
    res.ncomponents = (size_t)ncomp;
    res.component = malloc(n * sizeof *res.component);
    res.comp_size = calloc((size_t)ncomp, sizeof *res.comp_size);
    res.genus = calloc((size_t)ncomp, sizeof *res.genus);
    sum = calloc((size_t)ncomp, sizeof *sum);
    if (!res.component || !res.comp_size || !res.genus || !sum) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    /* number components by their smallest sheet */
    for (i = 0; i < SW_SHEETS_MAX; i++) remap[i] = -1;
    {
        int next = 0;
        for (i = 0; i < n; i++) {
            int c = (int)VECTOR(memb)[i];
            if (remap[c] < 0) remap[c] = next++;
            res.component[i] = remap[c];
            res.comp_size[remap[c]]++;
        }
    }
    /* Riemann-Hurwitz per component */
    for (k = 0; k <= pts->n; k++) {
        const int *p = point_perm(pts, k);
        size_t nc = sw_perm_cycles(elems, lens, p, n), pos = 0;
        for (size_t c = 0; c < nc; c++) {
            sum[res.component[elems[pos]]] += (long)lens[c] - 1;
            pos += lens[c];
        }
    }
    for (i = 0; i < res.ncomponents; i++) {
        long twog = sum[i] - 2 * (long)res.comp_size[i] + 2;
        if (twog % 2 != 0 || twog < 0) {
            st = sw_error_set(err, SW_EINTERNAL,
                              "Riemann-Hurwitz gives 2g = %ld for component %zu: the local "
                              "monodromies are inconsistent", twog, i + 1);
            goto cleanup;
        }
        res.genus[i] = twog / 2;
    }
    res.transitive = res.ncomponents == 1;
    /* group order */
    gens = malloc((pts->n + 1) * sizeof *gens);
    if (!gens) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory");
        goto cleanup;
    }
    for (k = 0; k <= pts->n; k++)
        gens[k] = (int *)point_perm(pts, k);
    if (!group_order(order, gens, (int)(pts->n + 1), (int)n)) {
        st = sw_error_set(err, SW_ENOMEM, "out of memory (group order)");
        goto cleanup;
    }
    {
        char *s = fmpz_get_str(NULL, 10, order);
        if (!s) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        res.group_order = malloc(strlen(s) + 1);
        if (res.group_order)
            strcpy(res.group_order, s);
        flint_free(s);
        if (!res.group_order) {
            st = sw_error_set(err, SW_ENOMEM, "out of memory");
            goto cleanup;
        }
        res.group_order_d = fmpz_get_d(order);
    }
    sw_sheets_clear(out);
    *out = res;
    sw_sheets_init(&res);
cleanup:
    if (have_v) {
        igraph_vector_int_destroy(&memb);
        igraph_vector_int_destroy(&csize);
    }
    if (have_g)
        igraph_destroy(&g);
    free(sum);
    free(gens);
    fmpz_clear(order);
    sw_sheets_clear(&res);
    return st;
}

static int ends_with(const char *s, const char *suffix)
{
    size_t a = strlen(s), b = strlen(suffix);
    if (a < b) return 0;
    for (size_t i = 0; i < b; i++) {
        char c = s[a - b + i];
        if (c >= 'A' && c <= 'Z') c = (char)(c - 'A' + 'a');
        if (c != suffix[i]) return 0;
    }
    return 1;
}

sw_status sw_sheets_write_graph(const sw_points *pts, const char *filename, sw_error *err)
{
    int dot, gml;
    sw_status st;
    igraph_t g;
    igraph_vector_int_t ep;
    FILE *fp = NULL;
    char buf[128];
    igraph_integer_t e, ne;
    size_t i;

    if (!filename || !*filename)
        return sw_error_set(err, SW_EUSAGE, "no graph file name given");
    dot = ends_with(filename, ".dot") || ends_with(filename, ".gv");
    gml = ends_with(filename, ".graphml") || ends_with(filename, ".xml");
    if (!dot && !gml)
        return sw_error_set(err, SW_EUSAGE,
                            "graph file '%s': the name must end in .dot, .gv, .graphml or .xml",
                            filename);
    st = check_points(pts, err);
    if (st != SW_OK)
        return st;
    if (igraph_vector_int_init(&ep, 0) != IGRAPH_SUCCESS)
        return sw_error_set(err, SW_ENOMEM, "out of memory");
    st = build_graph(&g, pts, &ep, err);
    if (st != SW_OK) {
        igraph_vector_int_destroy(&ep);
        return st;
    }
    for (i = 0; i < pts->nsheets && st == SW_OK; i++) {
        snprintf(buf, sizeof buf, "%zu", i + 1);
        if (SETVAS(&g, "name", (igraph_integer_t)i, buf) != IGRAPH_SUCCESS)
            st = sw_error_set(err, SW_EINTERNAL, "igraph attribute");
        if (pts->base_fiber) {
            snprintf(buf, sizeof buf, "%.10g%+.10gi", creal(pts->base_fiber[i]), cimag(pts->base_fiber[i]));
            if (st == SW_OK && SETVAS(&g, "w", (igraph_integer_t)i, buf) != IGRAPH_SUCCESS)
                st = sw_error_set(err, SW_EINTERNAL, "igraph attribute");
        }
    }
    ne = igraph_ecount(&g);
    for (e = 0; e < ne && st == SW_OK; e++) {
        igraph_integer_t k = VECTOR(ep)[e];
        if (k >= 0)
            snprintf(buf, sizeof buf, "z=%.10g%+.10gi", creal(pts->pt[k].z), cimag(pts->pt[k].z));
        else
            snprintf(buf, sizeof buf, "infinity");
        if (SETEAN(&g, "point", e, (igraph_real_t)k) != IGRAPH_SUCCESS ||
            SETEAS(&g, "label", e, buf) != IGRAPH_SUCCESS)
            st = sw_error_set(err, SW_EINTERNAL, "igraph attribute");
    }
    if (st == SW_OK) {
        fp = fopen(filename, "w");
        if (!fp)
            st = sw_error_set(err, SW_EINPUT, "cannot write the graph file '%s': %s", filename,
                              strerror(errno));
    }
    if (st == SW_OK) {
        igraph_error_t r = dot ? igraph_write_graph_dot(&g, fp)
                               : igraph_write_graph_graphml(&g, fp, 1);
        if (r != IGRAPH_SUCCESS)
            st = sw_error_set(err, SW_EINTERNAL, "igraph could not write '%s'", filename);
    }
    if (fp && fclose(fp) != 0 && st == SW_OK)
        st = sw_error_set(err, SW_EINPUT, "cannot write the graph file '%s': %s", filename,
                          strerror(errno));
    igraph_destroy(&g);
    igraph_vector_int_destroy(&ep);
    return st;
}
