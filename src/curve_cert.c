/* Certified continuation steps for curves.
 *
 * A step from z0 to z1 with double-precision fibers w0[], w1[] at its ends is
 * proven when there are closed regions W_i, one per sheet, such that
 *   (1) for every z on the segment [z0, z1], P(z, .) has exactly one root in
 *       W_i, and
 *   (2) W_i lies inside the disk D(w0_i, s0_i / 2) and inside D(w1_i, s1_i / 2),
 *       where s_i is the distance from the (double) value w_i to the nearest
 *       other value of the same fiber.
 * (2) makes the W_i pairwise disjoint, so the n roots are n distinct
 * continuous functions on the segment, root i staying in W_i.  It also links
 * consecutive steps without carrying regions in the germ: at the shared point
 * z1 the n regions of a step hold n distinct roots, hence every root of
 * P(z1, .); both steps' regions for sheet i lie in the disk D(w1_i, s1_i / 2),
 * these disks are pairwise disjoint, so the root proven in the one region is
 * the root proven in the next.  The germ's double values are thus labels of
 * proven root paths; the chain starts at the fiber of germ_at.
 *
 * (1) is proven by Krawczyk's test (R. Krawczyk, Computing 4 (1969) 187-201;
 * R. E. Moore, R. B. Kearfott, M. J. Cloud, Introduction to Interval Analysis,
 * SIAM 2009, section 8.2) in one of two forms:
 *
 *   - on disks, in double precision with rigorous rounding-error bounds
 *     (certify_disks, tried first: it is ~100 times cheaper);
 *   - on rectangles, in Arb ball arithmetic (certify_boxes, the fallback when
 *     the first form failed only because of its rounding-error terms).
 *
 * Both are proofs; a step is reported proven when either succeeds. */
#include <float.h>
#include <math.h>
#include <string.h>

#include "curve_internal.h"

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

/* ------------------------------------------------------------------------ */
/* Krawczyk's test on disks, in double precision.
 *
 * The argument.  Let Z be the disk |z - zc| <= delta (it contains the
 * segment), W = D(c, rho), Y != 0 any complex number, and for z in Z let
 * N(w) = w - Y P(z, w).  With E_j(z) = P^(j)(z, c) / j! (w-derivatives),
 * for w = c + v in W exactly (Taylor's formula for the polynomial P(z, .))
 *     N(w) - c = -Y P(z, c) + (1 - Y E_1(z)) v - Y sum_{j>=2} E_j(z) v^j.
 * So with   A  >= sup_Z |Y P(z, c)|,
 *           Bm >= sup_Z (|1 - Y E_1(z)| + |Y| sum_{j>=2} |E_j(z)| rho^(j-1)),
 *           Bc >= sup_{Z x W} |1 - Y P_w(z, w)|,
 * A + Bm rho < rho implies that N maps W into its interior, and Bc < 1 that
 * N is a contraction there (|N'| <= Bc on the convex set W).  By Banach's
 * fixed-point theorem (e.g. E. Zeidler, Nonlinear Functional Analysis and
 * its Applications I, Springer 1986, Theorem 1.A: a contraction of a closed
 * set into itself) N has exactly one fixed point in W, i.e. P(z, .) has
 * exactly one root in W, and it is simple (|1 - Y P_w| < 1 there).  Since
 * Bm <= Bc (the bounds below: the same terms without the factors j), this
 * asks less than Krawczyk's condition A + Bc rho < rho (which implies both),
 * i.e. K(Z, W) = c - Y P(Z, c) + (1 - Y P_w(Z, W))(W - c) inside int W,
 * written with disk bounds instead of interval hulls (the disk form of the
 * contraction argument, e.g. S. M. Rump, "Verification methods", Acta
 * Numerica 19 (2010) 287-449, section 13): the self-map is bounded by the
 * exact Taylor remainder, sum |E_j| rho^j, instead of the mean-value form,
 * sum j |E_j| rho^j, which roughly halves the curvature term and lets the
 * same pieces be proven with larger margins (fewer refused pieces).
 *
 * The bounds.  Expand the polynomial at the centre of the step:
 *     P(zc + t, c + v) = sum_{j,k} E_jk t^k v^j.
 * Then for |t| <= delta, |v| <= rho
 *     |Y P(zc + t, c)|       <= |Y| sum_k |E_0k| delta^k,
 *     |1 - Y P_w(zc+t, c+v)| <= |1 - Y E_10|
 *                               + |Y| sum_{j>=1, (j,k) != (1,0)} j |E_jk| delta^k rho^(j-1)
 * (this is Bc; Bm is the same sum without the factors j).
 * These majorant bounds are centred to every order: the large terms of P
 * that cancel near a root never enter, which is what makes long steps and
 * clustered or large roots provable (a ball evaluation over the boxes adds
 * up the variations of the individual terms instead).  Y = 1 / E_10.
 *
 * The E_jk are computed in double precision by two Taylor shifts (repeated
 * synthetic division): first in z, once per step for all sheets, then in w
 * at each sheet's centre c.  Rounding errors are bounded a priori
 * (N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed.,
 * SIAM 2002, Lemmas 3.1 and 3.3): the shifts are sums of products in which
 * every term passes through at most L = 3 (m + n) rounded operations (a
 * coefficient moved d places takes d products and d sums, and every pass of
 * synthetic division rounds the sum it sits in once more), each with
 * relative error at most u for a complex sum and 2 sqrt(2) u (1 + u) < 3u for
 * a complex product of doubles (Higham, Lemma 3.5; with or without a fused
 * multiply-add), so each computed E_jk differs from the exact shift of the
 * double coefficients by at most
 *     gamma Et_jk,   gamma = (1 + 3u)^L - 1 <= 3.01 u L,
 * where Et_jk are the same shifts applied to |c_jk|, |zc| and |c| exactly.
 * The double coefficients themselves differ from the exact ones by at most
 * cdev_jk (curve.c), whose shifts are bounded the same way.  Weighted as in
 * the bounds above, these errors sum to the values of one polynomial with
 * non-negative coefficients,
 *     R(x, y) = sum (gamma |c_jk| + cdev_jk) x^k y^j,
 * namely R(|zc| + delta, |c|) in A and R_y(|zc| + delta, |c| + rho) in Bc
 * and in Bm (whose weights, without the factors j >= 1, are smaller).
 * Underflow in the shifts adds at most 2^-1074 per component and operation,
 * carried through the rest of the (linear) shifts with a growth of at most
 * (1 + |zc|)^m (1 + |c|)^n: an absolute term bounds it.
 *
 * The remaining arithmetic is on non-negative numbers (sums and products
 * only, depth < 4 (m + n) + 20 <= 340 operations), where a computed value is
 * at least (1 - u)^340 > 1 - 2^-40 times the exact one; the factor SLACK
 * covers this.  Underflow there is excluded by flooring every input at
 * FLOOR and both radii at RADIUS_MIN (replacing a bound by a larger one keeps
 * it a bound; a larger Z only asks more): all partial results then stay above
 * 1e-300, in the normal range.  The only subtraction, 1 - Y E_10, gets its
 * rounding error added explicitly. */

#define U_ROUND (DBL_EPSILON / 2)
#define SLACK (1 + 0x1p-40)
#define FLOOR 1e-150
#define RADIUS_MIN 1e-100
/* Safety factor for the geometric condition (2), computed in double: double
 * rounding is ~1e-16 relative, far inside this margin. */
#define CERT_GEOM_MARGIN 0.999
/* Golden section search for the disk radius (each probe costs O(n) once the
 * expansion is known; 40 probes narrow [0, rmax] by 0.618^40 ~ 4e-9). */
#define RADIUS_SEARCH 40
#define GOLDEN 0.6180339887498949

/* An upper bound for |x + iy| up to the factor SLACK (for tiny values, where
 * the squares could underflow, the 1-norm). */
static double abs_ub(double x, double y)
{
    double a = fabs(x) + fabs(y);
    if (a < 1e-140 || !isfinite(a))
        return a;
    return sqrt(x * x + y * y);
}

/* Taylor shift in the row index, for every column at once: RE + i IM holds
 * deg+1 rows of LD entries (LD even; entries past the used columns are
 * padding, shifted along but never read); for each column k the entries p_j
 * (row j) are the coefficients of p(x) = sum_j p_j x^j, replaced by those of
 * p(x + s) (repeated synthetic division, deg (deg + 1) / 2 multiply-adds per
 * column; the inner loop runs along a row, contiguous).  Each operation is
 * the same as in the plain loop
 *     for i < deg, for j = deg-1 down to i: p_j += s p_{j+1},
 * in the same order for every entry (two rows of a pass are swept together,
 * two columns per SSE2 instruction), so the results are bit for bit those
 * of that loop and the error analysis above applies unchanged. */
static void shift_columns(double *restrict re, double *restrict im, long deg, long ld, double sr,
                          double si)
{
#if defined(__SSE2__)
    const __m128d vsr = _mm_set1_pd(sr), vsi = _mm_set1_pd(si);
#endif
    for (long i = 0; i < deg; i++) {
        long j = deg - 1;
        for (; j - 1 >= i; j -= 2) {
            double *a1r = re + j * ld, *a1i = im + j * ld;
            double *a0r = a1r - ld, *a0i = a1i - ld;
            const double *br = a1r + ld, *bi = a1i + ld;
#if defined(__SSE2__)
            for (long k = 0; k < ld; k += 2) {
                __m128d xr = _mm_load_pd(br + k), xi = _mm_load_pd(bi + k);
                __m128d yr = _mm_add_pd(_mm_load_pd(a1r + k),
                                        _mm_sub_pd(_mm_mul_pd(vsr, xr), _mm_mul_pd(vsi, xi)));
                __m128d yi = _mm_add_pd(_mm_load_pd(a1i + k),
                                        _mm_add_pd(_mm_mul_pd(vsr, xi), _mm_mul_pd(vsi, xr)));
                _mm_store_pd(a1r + k, yr);
                _mm_store_pd(a1i + k, yi);
                _mm_store_pd(a0r + k, _mm_add_pd(_mm_load_pd(a0r + k),
                                                 _mm_sub_pd(_mm_mul_pd(vsr, yr), _mm_mul_pd(vsi, yi))));
                _mm_store_pd(a0i + k, _mm_add_pd(_mm_load_pd(a0i + k),
                                                 _mm_add_pd(_mm_mul_pd(vsr, yi), _mm_mul_pd(vsi, yr))));
            }
#else
            for (long k = 0; k < ld; k++) {
                double yr = a1r[k] + (sr * br[k] - si * bi[k]);
                double yi = a1i[k] + (sr * bi[k] + si * br[k]);
                a1r[k] = yr;
                a1i[k] = yi;
                a0r[k] += sr * yr - si * yi;
                a0i[k] += sr * yi + si * yr;
            }
#endif
        }
        if (j >= i) {
            double *ar = re + j * ld, *ai = im + j * ld;
            const double *br = ar + ld, *bi = ai + ld;
            for (long k = 0; k < ld; k++) {
                double pr = sr * br[k] - si * bi[k];
                double pi = sr * bi[k] + si * br[k];
                ar[k] += pr;
                ai[k] += pi;
            }
        }
    }
}

/* av[k] = max(abs_ub(re[k], im[k]), FLOOR) for k < cnt (cnt even, arrays
 * 16-byte aligned), the same value as the scalar expression bit for bit
 * (sqrt and the products and sums are correctly rounded in SSE2 as in scalar
 * code) except that a NaN, which only an overflow in the shifts can produce,
 * gives +infinity (so no bound built from it can pass a test) instead of
 * FLOOR. */
static void abs_floor(double *restrict av, const double *restrict re, const double *restrict im,
                      long cnt)
{
#if defined(__SSE2__)
    const __m128d sign = _mm_set1_pd(-0.0), tiny = _mm_set1_pd(1e-140),
                  big = _mm_set1_pd(DBL_MAX), inf = _mm_set1_pd(INFINITY),
                  floor_ = _mm_set1_pd(FLOOR);
    for (long k = 0; k < cnt; k += 2) {
        __m128d x = _mm_load_pd(re + k), y = _mm_load_pd(im + k);
        __m128d a = _mm_add_pd(_mm_andnot_pd(sign, x), _mm_andnot_pd(sign, y));
        __m128d q = _mm_sqrt_pd(_mm_add_pd(_mm_mul_pd(x, x), _mm_mul_pd(y, y)));
        /* the 1-norm when a < 1e-140 or a is not finite (not a <= DBL_MAX) */
        __m128d use_a = _mm_or_pd(_mm_cmplt_pd(a, tiny), _mm_cmpnle_pd(a, big));
        __m128d r = _mm_or_pd(_mm_and_pd(use_a, a), _mm_andnot_pd(use_a, q));
        __m128d nan = _mm_cmpunord_pd(r, r);
        r = _mm_or_pd(_mm_and_pd(nan, inf), _mm_andnot_pd(nan, r));
        _mm_store_pd(av + k, _mm_max_pd(r, floor_));
    }
#else
    for (long k = 0; k < cnt; k++) {
        double r = abs_ub(re[k], im[k]);
        av[k] = isnan(r) ? INFINITY : fmax(r, FLOOR);
    }
#endif
}

/* sep[i] = distance from w[i] to the nearest other entry, from squared
 * distances (one square root per entry; relative error a few u, far inside
 * CERT_GEOM_MARGIN; an underflowing square only makes a distance smaller,
 * which makes condition (2) stricter). */
static void separations(double *sep, const double complex *w, long n)
{
    for (long i = 0; i < n; i++) {
        double d = INFINITY;
        for (long j = 0; j < n; j++) {
            if (j != i) {
                double x = creal(w[i]) - creal(w[j]), y = cimag(w[i]) - cimag(w[j]);
                double q = x * x + y * y;
                if (q < d) d = q;
            }
        }
        /* an overflowing square: the distance exceeds sqrt(DBL_MAX) > 1e150 */
        sep[i] = isfinite(d) ? sqrt(d) : 1e150;
    }
}

/* The test of the argument above at radius rho:
 *     Bc(rho) < 1   and   A + Bm(rho) rho < rho,
 * Bc(rho) >= sup |1 - Y P_w| over Z x D(c, rho) (the contraction),
 * Bm(rho) = the same sum without the factors j (the self-map); both with the
 * rounding-error term R_y(X, |c| + rho), which bounds the errors of either
 * sum.  B0 gets Bc without the rounding-error terms.  Returns 1 when the test
 * holds (with the rounding of the last sum covered). */
static int radius_test(double *Bout, double *B0out, double rho, double A, double c10, double ay,
                       double uf, double ac, const double *S, const double *Rg, long n)
{
    double bs = 0, bm = 0, rs = 0, y = ac + rho, B, Bm, err;
    long j;
    *Bout = INFINITY;
    *B0out = INFINITY;
    if (!(rho >= RADIUS_MIN))
        return 0;
    /* sum_{j>=1} j S[j] rho^(j-1), sum_{j>=1} S[j] rho^(j-1) and
     * R_y(X, |c| + rho) */
    for (j = n; j >= 1; j--) {
        bs = bs * rho + (double)j * S[j];
        bm = bm * rho + S[j];
        rs = rs * y + (double)j * Rg[j];
    }
    err = ay * (rs + uf);
    *B0out = c10 + ay * bs;
    B = (*B0out + err) * SLACK;
    Bm = (c10 + ay * bm + err) * SLACK;
    *Bout = B;
    return isfinite(B) && B < 1 && (A + Bm * rho) * (1 + 4 * U_ROUND) < rho;
}

/* min(rho - A - Bm(rho) rho, rho - Bc(rho) rho), concave in rho (a search
 * criterion only: the proof is radius_test). */
static double radius_margin(double rho, double A, double c10, double ay, double uf, double ac,
                            const double *S, const double *Rg, long n)
{
    double B, B0, bm = 0, rs = 0, y = ac + rho, Bm;
    long j;
    if (radius_test(&B, &B0, rho, A, c10, ay, uf, ac, S, Rg, n))
        return 1;
    if (!isfinite(B))
        return -INFINITY;
    for (j = n; j >= 1; j--) {
        bm = bm * rho + S[j];
        rs = rs * y + (double)j * Rg[j];
    }
    Bm = (c10 + ay * bm + ay * (rs + uf)) * SLACK;
    return fmin(rho - A - Bm * rho, rho - B * rho);
}

static sw_step_result certify_disks(const sw_curve *cv, double complex z0,
                                    const double complex *w0, double complex z1,
                                    const double complex *w1, int *retry)
{
    enum { D1 = SW_CURVE_MAX_DEGREE + 1 };
    long n = cv->n, m = cv->m, i, j, k;
    long L = 3 * (m + n);
    double gamma = 3.01 * U_ROUND * (double)L;
    /* z-shifted coefficients, stored transposed: zr[k * ldz + j] is the
     * coefficient of t^k w^j, so the z shift runs along rows; rows padded
     * to an even length (ldz >= n+1, ldw >= m+1) and 16-byte aligned for
     * shift_columns */
    _Alignas(16) double zr[D1 * (D1 + 1)], zi[D1 * (D1 + 1)], er[D1 * (D1 + 1)],
        ei[D1 * (D1 + 1)], av[D1 * (D1 + 1)], tr[D1 * (D1 + 1)], ti[D1 * (D1 + 1)];
    long ldz = (n + 2) & ~1L, ldw = (m + 2) & ~1L;
    double rmax[SW_CURVE_MAX_DEGREE], Rg[D1], s0v[SW_CURVE_MAX_DEGREE], s1v[SW_CURVE_MAX_DEGREE];
    double complex zc = 0.5 * (z0 + z1);
    double delta, X, azc;
    long nops = (n + 1) * m * m + (m + 1) * n * n + 1;

    *retry = 0;
    /* geometry first (cheap): disk radii allowed by condition (2) */
    if (n > 1) {
        separations(s0v, w0, n);
        separations(s1v, w1, n);
    }
    for (i = 0; i < n; i++) {
        double complex c = 0.5 * (w0[i] + w1[i]);
        double a = creal(c - w0[i]), b = cimag(c - w0[i]);
        double half = abs_ub(a, b);
        a = creal(c - w1[i]);
        b = cimag(c - w1[i]);
        half = fmax(half, abs_ub(a, b)) * (1 + 8 * U_ROUND);
        if (n == 1)
            rmax[i] = 4 * half + 1e-6 * (cabs(w0[i]) + 1);
        else
            rmax[i] = 0.5 * fmin(s0v[i], s1v[i]) * CERT_GEOM_MARGIN - half;
        if (!(rmax[i] > half))
            return SW_STEP_TOO_FAR;
    }
    /* the disk Z: any centre, a radius reaching both ends (a difference of
     * doubles is rounded once per component) */
    delta = fmax(abs_ub(creal(z0 - zc), cimag(z0 - zc)), abs_ub(creal(z1 - zc), cimag(z1 - zc)));
    delta = fmax(delta * (1 + 8 * U_ROUND), RADIUS_MIN);
    azc = abs_ub(creal(zc), cimag(zc)) * (1 + 4 * U_ROUND);
    X = azc + delta;
    /* Rg[j] = sum_k (gamma |c_jk| + cdev_jk) X^k: R(X, y) = sum_j Rg[j] y^j */
    for (j = 0; j <= n; j++) {
        const double *ca = cv->cabs + j * (m + 1), *cd = cv->cdev + j * (m + 1);
        double s = 0;
        for (k = m; k >= 0; k--)
        {
            double v = gamma * ca[k] + cd[k];   /* >= 0, not NaN: fmax inline */
            s = s * X + (v > FLOOR ? v : FLOOR);
        }
        Rg[j] = s;
    }
    /* shift in z: for each j, a_j(zc + t) */
    for (k = 0; k <= m; k++) {
        for (j = 0; j <= n; j++) {
            zr[k * ldz + j] = creal(cv->c[j * (m + 1) + k]);
            zi[k * ldz + j] = cimag(cv->c[j * (m + 1) + k]);
        }
        for (; j < ldz; j++)
            zr[k * ldz + j] = zi[k * ldz + j] = 0;
    }
    shift_columns(zr, zi, m, ldz, creal(zc), cimag(zc));
    /* transpose into tr[j * ldw + k] (coefficient of t^k w^j), once for
     * all sheets */
    for (j = 0; j <= n; j++) {
        for (k = 0; k <= m; k++) {
            tr[j * ldw + k] = zr[k * ldz + j];
            ti[j * ldw + k] = zi[k * ldz + j];
        }
        for (; k < ldw; k++)
            tr[j * ldw + k] = ti[j * ldw + k] = 0;
    }

    for (i = 0; i < n; i++) {
        double complex c = 0.5 * (w0[i] + w1[i]);
        double ac = abs_ub(creal(c), cimag(c)) * (1 + 4 * U_ROUND);
        double S0 = 0, S[D1], ay, A, Aerr, uf, c10, yr, yi, er10, ei10, den;
        double rho;
        int t, proven = 0, clean = 0;
        /* shift in w at c */
        memcpy(er, tr, (size_t)((n + 1) * ldw) * sizeof *er);
        memcpy(ei, ti, (size_t)((n + 1) * ldw) * sizeof *ei);
        shift_columns(er, ei, n, ldw, creal(c), cimag(c));
        /* Y = 1 / E_10 (any non-zero Y is valid; this one contracts) */
        er10 = er[1 * ldw + 0];
        ei10 = ei[1 * ldw + 0];
        den = er10 * er10 + ei10 * ei10;
        if (!(den > 0) || !isfinite(den)) {
            *retry = 1;
            return SW_STEP_UNPROVEN;
        }
        yr = er10 / den;
        yi = -ei10 / den;
        ay = fmax(abs_ub(yr, yi), FLOOR);
        /* |1 - Y E_10|: the product's rounding error is below 3u |Y| |E_10|,
         * the subtraction's below u (1 + |Y E_10|) (1 + u) */
        {
            double pr = yr * er10 - yi * ei10, pi = yr * ei10 + yi * er10;
            double ype = ay * abs_ub(er10, ei10);
            c10 = (abs_ub(1 - pr, pi) + 3 * U_ROUND * ype + 2 * U_ROUND * (1 + ype)) * SLACK;
        }
        /* S0 = sum_k |E_0k| delta^k;  S[j] = sum_k |E_jk| delta^k for
         * j >= 1, without E_10 */
        abs_floor(av, er, ei, (n + 1) * ldw);
        /* by Horner's rule in delta, the rows side by side (independent
         * chains): row j gets s = s delta + av[j][k] for k = m down to 1,
         * then the k = 0 term (row 1: a factor delta instead) */
        for (j = 0; j <= n; j++)
            S[j] = av[j * ldw + m];
        for (k = m - 1; k >= 1; k--)
            for (j = 0; j <= n; j++)
                S[j] = S[j] * delta + av[j * ldw + k];
        for (j = 0; j <= n; j++)
            S[j] = j == 1 ? (m >= 1 ? S[j] * delta : 0) : (m >= 1 ? S[j] * delta + av[j * ldw] : S[j]);
        S0 = S[0];
        /* underflow in the shifts: at most 2^-1074 per component and
         * operation, grown by at most (1 + |zc|)^m (1 + |c|)^n, weighted by
         * at most (n+1)^2 (m+1) n max(1, delta)^m max(1, rho)^n (bounded
         * below with rho <= rmax) */
        uf = (double)nops * (double)((n + 1) * (n + 1) * (m + 1) * n) *
             pow((1 + azc) * (1 + delta), (double)m) *
             pow((1 + ac) * (1 + fmax(rmax[i], RADIUS_MIN)), (double)n) *
             1e-300; /* > 2^-1072, and keeps the product normal */
        /* A >= sup |Y P(z, c)| */
        {
            double r0 = 0;
            for (j = n; j >= 0; j--)
                r0 = r0 * ac + Rg[j];
            Aerr = ay * (r0 + uf);
            A = (ay * S0 + Aerr) * SLACK;
        }
        if (!isfinite(A)) {
            *retry = 1;
            return SW_STEP_UNPROVEN;
        }
        /* radius: the test asks rho (1 - Bm(rho)) > A and rho (1 - Bc(rho))
         * > 0, where Bm, Bc are polynomials in rho with non-negative
         * coefficients, so h = min(rho (1 - Bm) - A, rho (1 - Bc)) is
         * concave on [0, rmax].  Try a radius a little above the smallest feasible
         * one first (usually enough); else take the maximum of h by golden
         * section search (its test is as valid as any other radius's). */
        {
            double b0 = c10 + ay * S[1];
            double lo = 0, hi = rmax[i], x1, x2, h1, h2, B, B0;
            if (!(b0 < 1)) {
                *retry = 0;
                return SW_STEP_UNPROVEN;
            }
            rho = fmin(rmax[i], fmax(1.5 * A / (1 - b0), RADIUS_MIN));
            proven = radius_test(&B, &B0, rho, A, c10, ay, uf, ac, S, Rg, n);
            if (!proven) {
                if (ay * S0 + B0 * rho < rho)
                    clean = 1;
                x1 = hi - GOLDEN * (hi - lo);
                x2 = lo + GOLDEN * (hi - lo);
                h1 = radius_margin(x1, A, c10, ay, uf, ac, S, Rg, n);
                h2 = radius_margin(x2, A, c10, ay, uf, ac, S, Rg, n);
                for (t = 0; t < RADIUS_SEARCH && !(h1 > 0 || h2 > 0); t++) {
                    if (h1 < h2) {
                        lo = x1; x1 = x2; h1 = h2;
                        x2 = lo + GOLDEN * (hi - lo);
                        h2 = radius_margin(x2, A, c10, ay, uf, ac, S, Rg, n);
                    } else {
                        hi = x2; x2 = x1; h2 = h1;
                        x1 = hi - GOLDEN * (hi - lo);
                        h1 = radius_margin(x1, A, c10, ay, uf, ac, S, Rg, n);
                    }
                }
                rho = h1 > h2 ? x1 : x2;
                proven = radius_test(&B, &B0, rho, A, c10, ay, uf, ac, S, Rg, n);
                if (!proven && ay * S0 + B0 * rho < rho)
                    clean = 1;
            }
        }
        if (!proven) {
            *retry = clean;
            return SW_STEP_UNPROVEN;
        }
    }
    return SW_STEP_OK;
}

/* ------------------------------------------------------------------------ */
/* Krawczyk's test on rectangles in Arb ball arithmetic.
 *
 * For a box W with centre m, any Y, and Z a box of z values,
 *     K(Z, W) = m - Y P(Z, m) + (1 - Y P_w(Z, W)) (W - m).
 * If K(Z, W) lies in the interior of W then for every z in Z the polynomial
 * P(z, .) has exactly one root in W.  (Complex arithmetic on rectangles: the
 * mean-value inclusion P(z, x) - P(z, m) in P_w(z, W) (x - m) holds because
 * Arb's complex balls are convex.)  W_i is a square box, inside the disks of
 * condition (2). */

/* Working precision of the ball arithmetic (the coefficient balls are exact
 * or 128-bit enclosures; 64 bits make rounding negligible next to the box
 * sizes used). */
#define CERT_PREC 64

static void acb_set_dc(acb_t x, double complex v)
{
    acb_set_d_d(x, creal(v), cimag(v));
}

static sw_step_result certify_boxes(const sw_curve *cv, double complex z0,
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
        double complex mid = 0.5 * (w0[i] + w1[i]);
        /* distances from the box centre (the rounded midpoint) to the ends */
        double half = fmax(cabs(mid - w0[i]), cabs(mid - w1[i])) * (1 + 4 * DBL_EPSILON);
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

sw_step_result sw_curve_certify_step(const sw_curve *cv, double complex z0,
                                     const double complex *w0, double complex z1,
                                     const double complex *w1)
{
    int retry = 0;
    sw_step_result r = certify_disks(cv, z0, w0, z1, w1, &retry);
    if (r == SW_STEP_OK || r == SW_STEP_TOO_FAR || !retry)
        return r;
    return certify_boxes(cv, z0, w0, z1, w1);
}
