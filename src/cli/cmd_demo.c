/* sheetwalk demo: a toy two-channel scattering amplitude continued across its
 * cuts (our own scenario).  Units of a mass scale; thresholds t1 = 1 and
 * t2 = 4; phase-space factors rho_k(s) = sqrt(1 - t_k/s); channel momenta
 * q_k(s) = sqrt(s) rho_k(s) / 2.  Sheets are labelled by the signs of Im q1 and
 * Im q2 (common practice in the field, no source): (+,+) is the physical sheet. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "sheetwalk/audit.h"
#include "sheetwalk/integrate.h"

static const char help[] =
    "usage: sheetwalk demo [--json]\n\n"
    "A guided scenario: the phase-space factors rho_k(s) = sqrt(1 - t_k/s) of a toy\n"
    "two-channel amplitude with thresholds at s = 1 and s = 4 are continued from the\n"
    "physical region through the cut into the unphysical sheets, which are labelled\n"
    "by the signs of the imaginary parts of the channel momenta; then a loop around\n"
    "both thresholds.  Every number is computed by the library as you watch.\n";

static const char *const FUNC = "sqrt(1 - 1/z) * sqrt(1 - 4/z)";

/* Human text goes to OUT (stdout, or nowhere with --json); with --json the
 * numbers are collected in DOC instead. */
static FILE *OUT;
static json_t *DOC;
static const double M_PI_VALUE = 3.14159265358979323846;

/* Sign of Im q, with the +i0 limit on the real axis above threshold. */
static char sign_of(double complex q, double complex s)
{
    double tiny = 1e-12 * (cabs(q) + 1e-300);
    if (fabs(cimag(q)) > tiny)
        return cimag(q) > 0 ? '+' : '-';
    (void)s;
    return creal(q) > 0 ? '+' : '-'; /* q real: Im q(s + i0) has the sign of q */
}

static void momenta(double complex q[2], const sw_func *f, const sw_germ *g)
{
    double complex rho[2];
    sw_func_node_values(rho, 2, f, g);
    double complex rs = csqrt(g->z); /* s stays in Re s > 0 in this scenario */
    q[0] = 0.5 * rs * rho[0];
    q[1] = 0.5 * rs * rho[1];
}

typedef struct walk {
    char label[8][4];      /* sheet label at each vertex (at most 8 reported) */
    double complex ratio;  /* value of rho1 rho2 at the end over the start */
} walk;

static int show_path(walk *out, const sw_func *f, const char *title, const char *spec,
                     const char *story, int loop)
{
    sw_path p;
    sw_path_init(&p);
    sw_error err;
    sw_germ g, h;
    sw_trace tr;
    sw_trace_init(&tr);
    int rc = 0;
    json_t *rows = NULL;
    if (sw_path_parse(&p, spec, "path", NULL, &err) != SW_OK || sw_germ_init(&g, f) != SW_OK ||
        sw_germ_init(&h, f) != SW_OK) {
        fprintf(stderr, "sheetwalk: demo: %s\n", err.msg);
        return 4;
    }
    sw_track_opts o;
    sw_track_opts_init(&o);
    if (sw_func_germ_at(&g, f, p.z[0], p.bank[0], NULL, &err) != SW_OK ||
        sw_track_run(&tr, f, &g, &p, &o, &err) != SW_OK) {
        fprintf(stderr, "sheetwalk: demo: %s\n", err.msg);
        rc = sw_status_exit_code(err.code);
        goto cleanup;
    }
    rows = DOC ? json_array() : NULL;
    fprintf(OUT, "\n%s\n", title);
    fprintf(OUT, "   path: %s\n%s\n", spec, story);
    fprintf(OUT, "   %-30s %-32s %-32s %s\n", "s", "q1", "q2", "sheet (Im q1, Im q2)");
    size_t nseg = sw_path_segments(&p);
    for (size_t k = 0; k <= nseg; k++) {
        /* vertices, and the middle of each segment of a polygon with few sides */
        for (int half = 0; half < 2; half++) {
            if (half == 1 && (k == nseg || loop))
                continue;
            double t = (double)k + 0.5 * half;
            if (sw_trace_germ_at(&h, &tr, f, t, &p, &err) != SW_OK) {
                fprintf(stderr, "sheetwalk: demo: %s\n", err.msg);
                rc = 4;
                goto cleanup;
            }
            if (half == 0)
                sw_germ_copy(&h, &tr.vert[k]);
            double complex q[2];
            momenta(q, f, &h);
            char a[64], b[64], c[64], zb[80];
            snprintf(zb, sizeof zb, "%s%s", cfmt(a, sizeof a, sw_path_point(&p, t)),
                     half == 0 && p.bank[k] > 0 ? "+i0" : "");
            char l1 = sign_of(q[0], h.z), l2 = sign_of(q[1], h.z);
            if (rows) {
                json_t *row = json_object();
                char lab[8];
                snprintf(lab, sizeof lab, "%c,%c", l1, l2);
                json_object_set_new(row, "s", json_cplx(sw_path_point(&p, t)));
                if (half == 0 && p.bank[k] != SW_BANK_NONE)
                    json_object_set_new(row, "bank",
                                        json_string(p.bank[k] > 0 ? "+i0" : "-i0"));
                json_object_set_new(row, "q1", json_cplx(q[0]));
                json_object_set_new(row, "q2", json_cplx(q[1]));
                json_object_set_new(row, "sheet", json_string(lab));
                json_array_append_new(rows, row);
            }
            fprintf(OUT, "   %-30s %-32s %-32s (%c,%c)%s\n", zb, cfmt(b, sizeof b, q[0]),
                   cfmt(c, sizeof c, q[1]), l1, l2, l1 == '+' && l2 == '+' ? " physical" : "");
            size_t slot = loop && k == nseg ? 7 : k;
            if (half == 0 && slot < 8) {
                out->label[slot][0] = l1;
                out->label[slot][1] = ',';
                out->label[slot][2] = l2;
                out->label[slot][3] = '\0';
            }
        }
    }
    out->ratio = sw_func_value(f, &tr.vert[nseg]) / sw_func_value(f, &tr.vert[0]);
    if (rows) {
        json_t *sec = json_object();
        json_object_set_new(sec, "path", json_string(spec));
        json_object_set_new(sec, "steps", json_integer((json_int_t)tr.steps));
        json_object_set_new(sec, "points", rows);
        json_object_set_new(sec, "product_ratio", json_cplx(out->ratio));
        json_object_set_new(DOC, loop ? "loop" : "continuation", sec);
        rows = NULL;
    }
    fprintf(OUT, "   (%zu steps, none refused by a branch point; uncertified double precision)\n",
           tr.steps);
cleanup:
    json_decref(rows);
    sw_trace_clear(&tr);
    sw_germ_clear(&g);
    sw_germ_clear(&h);
    sw_path_clear(&p);
    return rc;
}

/* Section 4: a formula for rho2 as it is often typed, audited along the
 * upper bank.  sqrt(s*(s-4))/s equals sqrt(1 - 4/s) for s > 4, but its single
 * root has the operand s(s-4), whose imaginary part at s + i0 changes sign at
 * s = 2: the principal root flips there. */
static int audit_section(void)
{
    static const char *const formula = "sqrt(z*(z-4))/z";
    static const char *const spec = "0.5+i0; 6+i0";
    json_t *aj = NULL, *jl = NULL;
    sw_error err;
    sw_func *f = NULL;
    sw_path p;
    sw_path_init(&p);
    sw_germ g;
    sw_trace tr;
    sw_trace_init(&tr);
    sw_audit a;
    sw_audit_init(&a);
    int rc = 0, have_g = 0;
    sw_track_opts o;
    sw_track_opts_init(&o);
    o.keep_log = 1;
    if (sw_func_from_expr(&f, formula, NULL, &err) != SW_OK ||
        sw_path_parse(&p, spec, "path", NULL, &err) != SW_OK || sw_germ_init(&g, f) != SW_OK) {
        fprintf(stderr, "sheetwalk: demo: %s\n", err.msg);
        rc = 4;
        goto cleanup;
    }
    have_g = 1;
    if (sw_func_germ_at(&g, f, p.z[0], p.bank[0], NULL, &err) != SW_OK ||
        sw_track_run(&tr, f, &g, &p, &o, &err) != SW_OK ||
        sw_audit_formula(&a, f, &p, &tr, NULL, &err) != SW_OK) {
        fprintf(stderr, "sheetwalk: demo: %s\n", err.msg);
        rc = sw_status_exit_code(err.code);
        goto cleanup;
    }
    fprintf(OUT, "\n4. The same factor as it is often typed, rho2 = %s, evaluated the way\n"
           "   C's csqrt does it, along the upper bank %s:\n", formula, spec);
    aj = DOC ? json_object() : NULL;
    jl = DOC ? json_array() : NULL;
    if (aj) {
        json_object_set_new(aj, "formula", json_string(formula));
        json_object_set_new(aj, "path", json_string(spec));
    }
    if (a.njumps == 0)
        fprintf(OUT, "   no discontinuity found.\n");
    for (size_t k = 0; k < a.njumps; k++) {
        const sw_audit_jump *j = &a.jump[k];
        char b1[64], b2[64], b3[64], why[512];
        fprintf(OUT, "   jump at s = %s (path parameter %.12g): after/before = %s\n",
               cfmt(b1, sizeof b1, j->z), j->t, cfmt(b2, sizeof b2, j->ratio));
        fprintf(OUT, "   %s\n", sw_audit_explain(why, sizeof why, f, j));
        if (jl) {
            json_t *jo = json_object();
            json_object_set_new(jo, "z", json_cplx(j->z));
            json_object_set_new(jo, "t", json_real(j->t));
            json_object_set_new(jo, "ratio", json_cplx(j->ratio));
            json_object_set_new(jo, "difference", json_cplx(j->difference));
            json_object_set_new(jo, "explanation", json_string(why));
            json_array_append_new(jl, jo);
        }
        fprintf(OUT, "   formula / continued value: %s before, %s after\n",
               cfmt(b2, sizeof b2, j->rel_before), cfmt(b3, sizeof b3, j->rel_after));
    }
    /* compare with the physical factor sqrt(1 - 4/s) at s + i0 on both sides */
    {
        sw_func *phys = NULL;
        sw_germ h;
        if (sw_func_from_expr(&phys, "sqrt(1 - 4/z)", NULL, &err) == SW_OK &&
            sw_germ_init(&h, phys) == SW_OK) {
            static const double at[] = {1.0, 3.0};
            for (int k = 0; k < 2; k++) {
                char b1[64], b2[64];
                double complex typed = sw_expr_eval_principal(sw_func_expr(f),
                                                              CMPLX(at[k], 1e-100), 0);
                if (sw_func_germ_at(&h, phys, at[k], SW_BANK_UPPER, NULL, &err) != SW_OK)
                    break;
                double complex good = sw_func_value(phys, &h);
                fprintf(OUT, "   at s = %g+i0: typed formula %s, physical sqrt(1 - 4/s) %s%s\n", at[k],
                       cfmt(b1, sizeof b1, typed), cfmt(b2, sizeof b2, good),
                       cabs(typed - good) < 1e-9 * cabs(good) ? "  (agree)" : "  (wrong sign)");
            }
            sw_germ_clear(&h);
        }
        sw_func_free(phys);
    }
    if (aj) {
        json_object_set_new(aj, "discontinuities", jl);
        json_object_set_new(DOC, "audit", aj);
        jl = aj = NULL;
    }
    fprintf(OUT, "   The single root hides a sign flip at s = 2, half-way between the thresholds;\n"
           "   the factor written as sqrt(1 - 4/s) has none along the bank.  (A numerical\n"
           "   audit in double precision; see 'sheetwalk audit --help'.)\n");
cleanup:
    json_decref(jl);
    json_decref(aj);
    sw_audit_clear(&a);
    sw_trace_clear(&tr);
    if (have_g)
        sw_germ_clear(&g);
    sw_path_clear(&p);
    sw_func_free(f);
    return rc;
}

/* Section 5: a dispersion-type integral over the cut between the thresholds,
 * two ways.  f(s) = sqrt((s-1)(s-4)) / (s (s - 6)) has the cut [1, 4] and
 * poles at 0 and 6; on the upper bank sqrt((s-1)(s-4)) = i sqrt((s-1)(4-s)). */
static int integral_section(void)
{
    static const char *const fn = "sqrt((z-1)*(z-4)) / (z*(z-6))";
    sw_error err;
    sw_func *f = NULL;
    sw_cuts cuts;
    sw_cuts_init(&cuts);
    sw_path cut;
    sw_path_init(&cut);
    sw_branch *b = NULL;
    sw_bank_integral r;
    sw_bank_integral_init(&r);
    int rc = 0;
    /* at s = 5: sqrt(4 * 1) / (5 * (5 - 6)) = -0.4, the branch that is
       positive times 1/(s(s-6)) above the cut */
    double complex wfix = 2.0 / (5.0 * (5.0 - 6.0));
    if (sw_func_from_expr(&f, fn, NULL, &err) != SW_OK ||
        sw_path_parse(&cut, "1; 4", "path", NULL, &err) != SW_OK ||
        sw_cuts_add(&cuts, &cut, &err) != SW_OK ||
        sw_branch_new(&b, f, &cuts, 5.0, SW_BANK_NONE, &wfix, &err) != SW_OK) {
        fprintf(stderr, "sheetwalk: demo: %s\n", err.msg);
        rc = 4;
        goto cleanup;
    }
    sw_status st = sw_integrate_bank(&r, f, NULL, &cuts, b, NULL, 1.0, 4.0, SW_BANK_UPPER,
                                     NULL, &err);
    if (st != SW_OK && st != SW_ETOLERANCE) {
        fprintf(stderr, "sheetwalk: demo: %s\n", err.msg);
        rc = sw_status_exit_code(st);
        goto cleanup;
    }
    char b1[64], b2[64];
    /* closed form (common practice): int_a^b sqrt((x-a)(b-x)) / (x - p) dx
       = pi ((a+b)/2 - p + sgn(p - b) sqrt((p-a)(p-b))) for real p outside [a, b] */
    double i0 = M_PI_VALUE * (2.5 - 0.0 - 2.0), i6 = M_PI_VALUE * (2.5 - 6.0 + sqrt(10.0));
    double exact = (i6 - i0) / 6.0;
    fprintf(OUT, "\n5. A dispersion-type integral over the cut between the thresholds: the upper\n"
           "   bank of %s from s = 1 to s = 4, with the cut [1, 4]\n"
           "   and the branch that is real and negative at s = 5, computed two ways:\n", fn);
    fprintf(OUT, "   direct quadrature on the bank   %s  (estimated error %.2g)\n",
           cfmt(b1, sizeof b1, r.direct.value), r.direct.abserr);
    if (r.contour_applies)
        fprintf(OUT, "   loop around the cut / (jump-1)  %s  (jump %s)\n",
               cfmt(b2, sizeof b2, r.contour), cfmt(b1, sizeof b1, r.lambda));
    else
        fprintf(OUT, "   contour method: %s\n", r.note);
    fprintf(OUT, "   relative difference             %.2g\n", r.agreement);
    fprintf(OUT, "   closed form                     %s  (pi((a+b)/2 - p +- sqrt((p-a)(p-b))),\n"
           "                                   partial fractions; common practice)\n",
           cfmt(b1, sizeof b1, CMPLX(0.0, exact)));
    fprintf(OUT, "   Both are numerical (quadrature, not a proof); their agreement is the check.\n");
    if (DOC) {
        json_t *o = json_object();
        json_object_set_new(o, "function", json_string(fn));
        json_object_set_new(o, "bank", json_string("[1, 4] +i0"));
        json_object_set_new(o, "direct", json_cplx(r.direct.value));
        json_object_set_new(o, "abserr", json_real(r.direct.abserr));
        json_object_set_new(o, "contour", r.contour_applies ? json_cplx(r.contour) : json_null());
        json_object_set_new(o, "agreement", r.contour_applies ? json_real(r.agreement)
                                                              : json_null());
        json_object_set_new(o, "jump", json_cplx(r.lambda));
        json_object_set_new(o, "closed_form", json_cplx(CMPLX(0.0, exact)));
        json_object_set_new(DOC, "integral", o);
    }
cleanup:
    sw_bank_integral_clear(&r);
    sw_branch_free(b);
    sw_cuts_clear(&cuts);
    sw_path_clear(&cut);
    sw_func_free(f);
    return rc;
}

int cmd_demo(int argc, char **argv)
{
    cli c;
    cli_init(&c, "demo", OPT_JSON);
    int rc = cli_parse(&c, argc, argv, help);
    if (rc >= 0) {
        cli_clear(&c);
        return rc;
    }
    sw_error err;
    sw_func *f = NULL;
    sw_points pts;
    sw_points_init(&pts);
    rc = 0;
    if (sw_func_from_expr(&f, FUNC, NULL, &err) != SW_OK ||
        sw_points_compute(&pts, f, NULL, &err) != SW_OK) {
        rc = cli_fail(&c, &err);
        goto cleanup;
    }
    OUT = stdout;
    DOC = NULL;
    if (c.json) {
        OUT = fopen("/dev/null", "w");
        if (OUT == NULL) {
            sw_error_set(&err, SW_EINTERNAL, "cannot open /dev/null");
            rc = cli_fail(&c, &err);
            goto cleanup;
        }
        DOC = cli_doc(&c);
        json_object_set_new(DOC, "function", json_string(FUNC));
        json_t *pj = cli_points_json(&pts, f);
        json_object_update(DOC, pj);
        json_decref(pj);
        json_object_set_new(DOC, "certified", json_false());
    }
    fprintf(OUT, "sheetwalk demo: a two-channel amplitude, continued across its cuts\n"
           "==================================================================\n"
           "A toy amplitude in units of a mass scale has channel thresholds at s = 1 and\n"
           "s = 4.  Its phase-space factors are rho_k(s) = sqrt(1 - t_k/s) and the channel\n"
           "momenta q_k(s) = sqrt(s) rho_k(s) / 2.  Sheets are labelled by the signs of\n"
           "Im q1 and Im q2; (+,+) is the physical sheet.  The physical region is the\n"
           "real axis above threshold approached from above, s + i0.\n\n"
           "1. Where does rho1 rho2 = %s branch?\n", FUNC);
    cli_points_table(OUT, &pts, f);
    fprintf(OUT, "   Each threshold flips the sign of its factor (multiplier -1); s = 0, where\n"
           "   both operands have a pole, is not a branch point of the product, and\n"
           "   neither is infinity.\n");
    walk w1, w2;
    memset(&w1, 0, sizeof w1);
    memset(&w2, 0, sizeof w2);
    fprintf(OUT, "\n   On the real axis a label refers to the continued values pushed to s + i0.\n");
    rc = show_path(&w1, f, "2. From the physical region down through the real axis above both "
                   "thresholds,", "5+i0; 5-1i; 2.5-1i; 2.5+1i; 5+1i",
                   "   then left below the axis and up again between the thresholds.", 0);
    if (rc)
        goto cleanup;
    fprintf(OUT, "   Crossing the axis at s = 5 (above both thresholds) led from (%s) to (%s).\n"
           "   Crossing it at s = 2.5 (between them) led from (%s) to (%s): only the\n"
           "   momentum whose threshold lies to the left of the crossing changed sides.\n",
           w1.label[0], w1.label[1], w1.label[2], w1.label[3]);
    rc = show_path(&w2, f, "3. A loop around both thresholds (and not around s = 0):",
                   "circle 2.5 2 16", "   counter-clockwise, starting and ending at s = 4.5.", 1);
    if (rc)
        goto cleanup;
    {
        char rb[64];
        fprintf(OUT, "   The loop starts on (%s) and ends on (%s), while the product rho1 rho2\n"
               "   comes back multiplied by %s.  A formula that only looks at the\n"
               "   product cannot tell these sheets apart; the momenta can.\n\n",
               w2.label[0], w2.label[7], cfmt(rb, sizeof rb, w2.ratio));
    }
    rc = audit_section();
    if (rc)
        goto cleanup;
    rc = integral_section();
    if (rc)
        goto cleanup;
    fprintf(OUT, 
           "\nTry it on your own functions:\n"
           "   sheetwalk points -f \"%s\"\n"
           "   sheetwalk trace  -f \"%s\" -p \"5+i0; 5-1i; 2.5-1i\"\n"
           "   sheetwalk loop   -f \"sqrt(1 - 4/z)\" -p \"circle 4 1\" --json\n"
           "   sheetwalk loop   -c \"w^2 - z*(z-1)\" -p \"circle 0 0.5\"\n"
           "   sheetwalk audit  -f \"sqrt(z*(z-4))/z\" -p \"0.5+i0; 6+i0\"\n",
           FUNC, FUNC);
cleanup:
    if (DOC) {
        if (rc == 0)
            cli_emit(DOC);
        else
            json_decref(DOC);
        DOC = NULL;
    }
    if (OUT && OUT != stdout)
        fclose(OUT);
    OUT = stdout;
    sw_points_clear(&pts);
    sw_func_free(f);
    cli_clear(&c);
    return rc;
}
