/* Certified continuation steps for curves: the Krawczyk operator in Arb balls.
 *
 * Krawczyk's test (R. Krawczyk, Computing 4 (1969) 187-201; R. E. Moore,
 * R. B. Kearfott, M. J. Cloud, Introduction to Interval Analysis, SIAM 2009,
 * section 8.2): for a box W with centre m, any Y, and Z a box of z values,
 *     K(Z, W) = m - Y P(Z, m) + (1 - Y P_w(Z, W)) (W - m).
 * If K(Z, W) lies in the interior of W then for every z in Z the polynomial
 * P(z, .) has exactly one root in W.  (Complex arithmetic on rectangles: the
 * mean-value inclusion P(z, x) - P(z, m) in P_w(z, W) (x - m) holds because
 * Arb's complex balls are convex.)
 *
 * A step from z0 to z1 is proven when, with Z a box containing the segment
 * [z0, z1] and one box W_i per sheet,
 *   (1) K(Z, W_i) lies inside W_i for every sheet i, and
 *   (2) W_i lies inside the disk D(w0_i, s0_i / 2) and inside D(w1_i, s1_i / 2),
 *       where s_i is the distance from the (double) value w_i to the nearest
 *       other value of the same fiber.
 * (2) makes the W_i pairwise disjoint, so the n roots are n distinct
 * continuous functions on the segment, root i staying in W_i.  It also links
 * consecutive steps without carrying boxes in the germ: at the shared point
 * z1 both steps' boxes for sheet i lie in the disk D(w1_i, s1_i / 2), and
 * these disks are pairwise disjoint, so the root proven in the one box is the
 * root proven in the next.  The germ's double values are thus labels of
 * proven root paths; the chain starts at the fiber of germ_at. */
#include <math.h>
#include <string.h>

#include "curve_internal.h"

/* Working precision of the ball arithmetic (the coefficient balls are exact
 * or 128-bit enclosures; 64 bits make rounding negligible next to the box
 * sizes used). */
#define CERT_PREC 64
/* Safety factor for the geometric condition (2), computed in double: double
 * rounding is ~1e-16 relative, far inside this margin. */
#define CERT_GEOM_MARGIN 0.999

static void acb_set_dc(acb_t x, double complex v)
{
    acb_set_d_d(x, creal(v), cimag(v));
}

sw_step_result sw_curve_certify_step(const sw_curve *cv, double complex z0,
                                     const double complex *w0, double complex z1,
                                     const double complex *w1)
{
    long n = cv->n, m = cv->m, i, j, k;
    double rho[SW_CURVE_MAX_DEGREE], rmaxv[SW_CURVE_MAX_DEGREE];
    sw_step_result res = SW_STEP_OK;
    int attempt;
    acb_t Zc, dZ, t, M, P, Pw, Q, Y, K, D;
    acb_ptr zp, Zp, A, dA, ddA, jA, jdA, jjdA, jddA, jjA, jjjA, Mp, Wp, cd;
    double complex zc = 0.5 * (z0 + z1);

    /* geometry first (cheap): box radii allowed by condition (2) */
    for (i = 0; i < n; i++) {
        double s0 = n > 1 ? sw_fiber_sep(w0, (size_t)n, (size_t)i) : INFINITY;
        double s1 = n > 1 ? sw_fiber_sep(w1, (size_t)n, (size_t)i) : INFINITY;
        double half = 0.5 * cabs(w1[i] - w0[i]);
        /* farthest point of the square box (half-width rho) from w0 or w1 is
         * at most half + sqrt(2) rho from either */
        double rmax = (0.5 * fmin(s0, s1) * CERT_GEOM_MARGIN - half) / 1.4142135623730951;
        if (n == 1)
            rmax = 4 * half + 1e-6 * (cabs(w0[i]) + 1);
        if (!(rmax > 0) || !(rmax > 2 * half))
            return SW_STEP_TOO_FAR;
        /* K - m is about half (the motion) plus a contraction of rho: aim at
         * twice the motion, never beyond what (2) allows */
        rho[i] = fmin(0.95 * rmax, 2 * half + 0.01 * rmax);
        rmaxv[i] = rmax;
    }

    acb_init(Zc); acb_init(dZ); acb_init(t); acb_init(M); acb_init(P); acb_init(Pw);
    acb_init(Q); acb_init(Y); acb_init(K); acb_init(D);
    zp = _acb_vec_init(m + 1);
    Zp = _acb_vec_init(m + 1);
    cd = _acb_vec_init(m + 1);
    A = _acb_vec_init(n + 1);
    dA = _acb_vec_init(n + 1);
    jA = _acb_vec_init(n + 1);
    jdA = _acb_vec_init(n + 1);
    jjA = _acb_vec_init(n + 1);
    ddA = _acb_vec_init(n + 1);
    jjdA = _acb_vec_init(n + 1);
    jddA = _acb_vec_init(n + 1);
    jjjA = _acb_vec_init(n + 1);
    Mp = _acb_vec_init(n + 1);
    Wp = _acb_vec_init(n + 1);

    /* Zc the midpoint, dZ = (z1 - z0)/2 * [-1, 1] (a real interval times a
     * complex number: its rectangle hull is the segment's, with no widening
     * for a diagonal direction) */
    acb_set_dc(Zc, zc);
    acb_set_dc(dZ, 0.5 * (z1 - z0));
    {
        arb_t e;
        arb_init(e);
        arb_zero(e);
        mag_one(arb_radref(e));
        acb_mul_arb(dZ, dZ, e, CERT_PREC);
        arb_clear(e);
    }
    /* powers of zc and of the box Z = zc + dZ */
    acb_one(zp + 0);
    acb_one(Zp + 0);
    if (m >= 1) {
        acb_set(zp + 1, Zc);
        acb_add(Zp + 1, Zc, dZ, CERT_PREC);
    }
    for (k = 2; k <= m; k++) {
        acb_mul(zp + k, zp + k - 1, zp + 1, CERT_PREC);
        acb_mul(Zp + k, Zp + k - 1, Zp + 1, CERT_PREC);
    }
    /* Coefficients: A_j(zc), A_j'(zc) (points) and A_j''(Z) (over the box).
     * Everything below is a mean-value (centred) form around (zc, m): the
     * terms of P nearly cancel near a root, and a naive evaluation over the
     * boxes would add up their individual variations and force needlessly
     * short steps.  Only second-order remainders are evaluated over boxes. */
    for (j = 0; j <= n; j++) {
        const acb_struct *c = cv->ball + j * (m + 1);
        acb_dot(A + j, NULL, 0, c, 1, zp, 1, m + 1, CERT_PREC);
        if (m >= 1) {
            for (k = 1; k <= m; k++)
                acb_mul_si(cd + k - 1, c + k, k, CERT_PREC);
            acb_dot(dA + j, NULL, 0, cd, 1, zp, 1, m, CERT_PREC);
        } else {
            acb_zero(dA + j);
        }
        if (m >= 2) {
            for (k = 2; k <= m; k++)
                acb_mul_si(cd + k - 2, c + k, k * (k - 1), CERT_PREC);
            acb_dot(ddA + j, NULL, 0, cd, 1, Zp, 1, m - 1, CERT_PREC);
        } else {
            acb_zero(ddA + j);
        }
        acb_mul_si(jA + j, A + j, j, CERT_PREC);
        acb_mul_si(jdA + j, dA + j, j, CERT_PREC);
        acb_mul_si(jjdA + j, dA + j, j * (j - 1), CERT_PREC);
        acb_mul_si(jddA + j, ddA + j, j, CERT_PREC);
        acb_mul_si(jjA + j, A + j, j * (j - 1), CERT_PREC);
        acb_mul_si(jjjA + j, A + j, j * (j - 1) * (j - 2), CERT_PREC);
    }
    for (i = 0; i < n && res == SW_STEP_OK; i++) {
        double complex mid = 0.5 * (w0[i] + w1[i]), pw = 0;
        arb_t r;
        /* Y = 1 / P_w(zc, m) in double: any Y is valid, this one contracts */
        for (j = n; j >= 1; j--)
            pw = pw * mid + CMPLX(arf_get_d(arb_midref(acb_realref(jA + j)), ARF_RND_NEAR),
                                  arf_get_d(arb_midref(acb_imagref(jA + j)), ARF_RND_NEAR));
        if (pw == 0 || !isfinite(creal(pw)) || !isfinite(cimag(pw))) {
            res = SW_STEP_UNPROVEN;
            break;
        }
        acb_set_dc(Y, 1.0 / pw);
        acb_set_dc(M, mid);
        acb_one(Mp + 0);
        for (j = 1; j <= n; j++)
            acb_mul(Mp + j, Mp + j - 1, M, CERT_PREC);
        /* P(Z, m) in P(zc, m) + (P_z(zc, m) + P_zz(Z, m) dZ) dZ */
        acb_dot(P, NULL, 0, A, 1, Mp, 1, n + 1, CERT_PREC);
        acb_dot(Q, NULL, 0, dA, 1, Mp, 1, n + 1, CERT_PREC);
        acb_dot(t, NULL, 0, ddA, 1, Mp, 1, n + 1, CERT_PREC);
        acb_addmul(Q, t, dZ, CERT_PREC);
        acb_addmul(P, Q, dZ, CERT_PREC);
        acb_mul(P, P, Y, CERT_PREC);                       /* Y P */
        arb_init(r);
        /* epsilon-inflation (Rump): when K does not fit, retry once with the
         * box widened to a little more than K, if (2) still allows it */
        for (attempt = 0; attempt < 2; attempt++) {
            int proven = 1;
            arb_set_d(r, rho[i]);
            acb_zero(D);                                   /* D = W - m */
            arb_add_error(acb_realref(D), r);
            arb_add_error(acb_imagref(D), r);
            acb_add(Wp + 1, M, D, CERT_PREC);              /* W */
            acb_one(Wp + 0);
            for (j = 2; j < n; j++)
                acb_mul(Wp + j, Wp + j - 1, Wp + 1, CERT_PREC);
            /* P_w(Z, W) in P_w(zc, m) + P_wz(Z, W) dZ + P_ww(zc, W) D, with
             * P_wz(Z, W) in P_wz(zc, m) + P_wzz(Z, W) dZ + P_wzw(zc, W) D */
            acb_dot(Pw, NULL, 0, jA + 1, 1, Mp, 1, n, CERT_PREC);
            acb_dot(Q, NULL, 0, jdA + 1, 1, Mp, 1, n, CERT_PREC);
            acb_dot(t, NULL, 0, jddA + 1, 1, Wp, 1, n, CERT_PREC);
            acb_addmul(Q, t, dZ, CERT_PREC);
            if (n >= 2) {
                acb_dot(t, NULL, 0, jjdA + 2, 1, Wp, 1, n - 1, CERT_PREC);
                acb_addmul(Q, t, D, CERT_PREC);
            }
            acb_addmul(Pw, Q, dZ, CERT_PREC);
            if (n >= 2) {
                /* P_ww(zc, W) in P_ww(zc, m) + P_www(zc, W) D: centred again,
                 * the contraction is then that of the exact P_ww at m */
                acb_dot(Q, NULL, 0, jjA + 2, 1, Mp, 1, n - 1, CERT_PREC);
                if (n >= 3) {
                    acb_dot(t, NULL, 0, jjjA + 3, 1, Wp, 1, n - 2, CERT_PREC);
                    acb_addmul(Q, t, D, CERT_PREC);
                }
                acb_addmul(Pw, Q, D, CERT_PREC);
            }
            /* K - m = -Y P + (1 - Y Pw) D */
            acb_mul(Pw, Pw, Y, CERT_PREC);
            acb_sub_ui(Pw, Pw, 1, CERT_PREC);
            acb_neg(Pw, Pw);
            acb_mul(K, Pw, D, CERT_PREC);
            acb_sub(K, K, P, CERT_PREC);
            /* strictly inside the square of half-width rho */
            {
                arb_t lo;
                arb_init(lo);
                arb_neg(lo, r);
                if (!(arb_lt(acb_realref(K), r) && arb_gt(acb_realref(K), lo) &&
                      arb_lt(acb_imagref(K), r) && arb_gt(acb_imagref(K), lo)))
                    proven = 0;
                arb_clear(lo);
            }
            if (proven)
                break;
            {
                arf_t kb;
                double need;
                arf_init(kb);
                arb_get_abs_ubound_arf(kb, acb_realref(K), 53);
                need = arf_get_d(kb, ARF_RND_UP);
                arb_get_abs_ubound_arf(kb, acb_imagref(K), 53);
                need = fmax(need, arf_get_d(kb, ARF_RND_UP));
                arf_clear(kb);
                need *= 1.1;
                if (attempt == 1 || !(need > rho[i]) || need > 0.95 * rmaxv[i]) {
                    res = SW_STEP_UNPROVEN;
                    break;
                }
                rho[i] = need;
            }
        }
        arb_clear(r);
    }
    _acb_vec_clear(zp, m + 1);
    _acb_vec_clear(Zp, m + 1);
    _acb_vec_clear(cd, m + 1);
    _acb_vec_clear(A, n + 1);
    _acb_vec_clear(dA, n + 1);
    _acb_vec_clear(jA, n + 1);
    _acb_vec_clear(jdA, n + 1);
    _acb_vec_clear(jjA, n + 1);
    _acb_vec_clear(ddA, n + 1);
    _acb_vec_clear(jjdA, n + 1);
    _acb_vec_clear(jddA, n + 1);
    _acb_vec_clear(jjjA, n + 1);
    _acb_vec_clear(Mp, n + 1);
    _acb_vec_clear(Wp, n + 1);
    acb_clear(Zc); acb_clear(dZ); acb_clear(t); acb_clear(M); acb_clear(P); acb_clear(Pw);
    acb_clear(Q); acb_clear(Y); acb_clear(K); acb_clear(D);
    return res;
}
