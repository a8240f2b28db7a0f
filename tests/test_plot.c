/* Tests of the pictures (include/sheetwalk/plot.h) and of `sheetwalk plot`.
 *
 * Expected values and where they come from:
 *  - file signatures: PNG starts with the 8 bytes 89 50 4E 47 0D 0A 1A 0A
 *    (PNG specification, ISO/IEC 15948:2003 section 5.2); a PDF file starts
 *    with "%PDF-" and ends with "%%EOF" (ISO 32000-1:2008 sections 7.5.2 and
 *    7.5.5); an SVG file is XML with an <svg> root (SVG 1.1, W3C 2011,
 *    section 1.3); PNG files are read back with cairo's own reader;
 *  - domain colouring: hue = arg w on the RGB colour wheel (red at arg 0,
 *    green at 2 pi/3, blue at -2 pi/3) and the RGB -> hue formula used below:
 *    common practice, no source;
 *  - principal square root: DLMF 4.2.3 / 4.2.26 (z^(1/2) = exp(Ln z / 2),
 *    ph z in (-pi, pi]), evaluated with C's csqrt (C11 Annex G); its cut is
 *    the negative real axis, across which it changes sign;
 *  - the branch of sqrt(z) on the plane minus [0, +inf) with ph z in
 *    (0, 2 pi): DLMF 4.2.26 with that choice of ph (common practice);
 *  - w^3 = z (z - 1): three sheets, 3-cycles at 0, 1 and infinity, one
 *    component of genus 1 by Riemann-Hurwitz (R. Miranda, Algebraic Curves and
 *    Riemann Surfaces, AMS 1995, ch. II.4). */
#include <complex.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <dirent.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cairo.h>
#include <cmocka.h>
#include <jansson.h>

#include "sheetwalk/sheetwalk.h"
#include "cli_run.h"
#include "test_util.h"

static char tmpdir[64];

static const char *tmpfile_name(char *buf, size_t n, const char *name)
{
    snprintf(buf, n, "%s/%s", tmpdir, name);
    return buf;
}

static char *slurp(const char *file, size_t *len)
{
    FILE *fp = fopen(file, "rb");
    if (fp == NULL)
        return NULL;
    fseek(fp, 0, SEEK_END);
    long n = ftell(fp);
    fseek(fp, 0, SEEK_SET);
    char *buf = malloc((size_t)n + 1);
    size_t got = fread(buf, 1, (size_t)n, fp);
    fclose(fp);
    buf[got] = '\0';
    *len = got;
    return buf;
}

/* ---------------------------------------------------------- set-ups */

typedef struct fixture {
    sw_func *f;
    sw_points pts;
    sw_cuts cuts;
    sw_branch *b;
} fixture;

/* F from an expression (or a curve), its points, cuts (default when NCUTS
 * is 0) and the regular branch fixed at P by the sheet nearest *W (NULL:
 * principal / sheet 1). */
static void fixture_open(fixture *x, const char *text, int curve, const char *const *cuts,
                         size_t ncuts, double complex p, const double complex *w)
{
    sw_error err;
    memset(x, 0, sizeof *x);
    sw_points_init(&x->pts);
    sw_cuts_init(&x->cuts);
    sw_status st = curve ? sw_func_from_curve(&x->f, text, NULL, &err)
                         : sw_func_from_expr(&x->f, text, NULL, &err);
    if (st != SW_OK) {
        print_error("%s: %s\n", text, err.msg);
        fail();
    }
    assert_int_equal(sw_points_compute(&x->pts, x->f, NULL, &err), SW_OK);
    if (ncuts == 0)
        assert_int_equal(sw_cuts_default(&x->cuts, &x->pts, &err), SW_OK);
    for (size_t k = 0; k < ncuts; k++) {
        sw_path q;
        sw_path_init(&q);
        if (sw_path_parse(&q, cuts[k], "path", NULL, &err) != SW_OK) {
            print_error("cut '%s': %s\n", cuts[k], err.msg);
            fail();
        }
        assert_int_equal(sw_cuts_add(&x->cuts, &q, &err), SW_OK);
        sw_path_clear(&q);
    }
    if (sw_branch_new(&x->b, x->f, &x->cuts, p, SW_BANK_NONE, w, &err) != SW_OK) {
        print_error("%s: fixing the branch: %s\n", text, err.msg);
        fail();
    }
}

static void fixture_close(fixture *x)
{
    sw_branch_free(x->b);
    sw_cuts_clear(&x->cuts);
    sw_points_clear(&x->pts);
    sw_func_free(x->f);
}

/* ---------------------------------------------------------- pixels */

typedef struct image {
    cairo_surface_t *s;
    int w, h, stride;
    const unsigned char *data;
} image;

static void image_read(image *im, const char *file)
{
    im->s = cairo_image_surface_create_from_png(file);
    assert_int_equal(cairo_surface_status(im->s), CAIRO_STATUS_SUCCESS);
    im->w = cairo_image_surface_get_width(im->s);
    im->h = cairo_image_surface_get_height(im->s);
    im->stride = cairo_image_surface_get_stride(im->s);
    im->data = cairo_image_surface_get_data(im->s);
}

static void image_free(image *im) { cairo_surface_destroy(im->s); }

/* RGB in [0, 255] of picture pixel (x, y) (opaque pictures). */
static void pixel(int rgb[3], const image *im, int x, int y)
{
    uint32_t v;
    memcpy(&v, im->data + (size_t)y * (size_t)im->stride + 4 * (size_t)x, 4);
    rgb[0] = (int)(v >> 16 & 255);
    rgb[1] = (int)(v >> 8 & 255);
    rgb[2] = (int)(v & 255);
}

/* Hue in radians in (-pi, pi] and chroma of an RGB colour (common practice,
 * no source: the hexagonal hue of the HSV model). */
static double hue(const int rgb[3], int *chroma)
{
    int r = rgb[0], g = rgb[1], b = rgb[2];
    int mx = r > g ? (r > b ? r : b) : (g > b ? g : b);
    int mn = r < g ? (r < b ? r : b) : (g < b ? g : b);
    double c = mx - mn, h;
    *chroma = mx - mn;
    if (c == 0)
        return NAN;
    if (mx == r)
        h = fmod((g - b) / c + 6, 6);
    else if (mx == g)
        h = (b - r) / c + 2;
    else
        h = (r - g) / c + 4;
    h *= TU_PI / 3;
    return h > TU_PI ? h - 2 * TU_PI : h;
}

static double angle_diff(double a, double b)
{
    double d = fmod(a - b, 2 * TU_PI);
    if (d > TU_PI)
        d -= 2 * TU_PI;
    if (d < -TU_PI)
        d += 2 * TU_PI;
    return fabs(d);
}

/* The centre of grid pixel (i, j) of a colour picture (plot.h). */
static double complex grid_z(const sw_plot_info *in, int i, int j)
{
    double dx = (in->xmax - in->xmin) / in->fw, dy = (in->ymax - in->ymin) / in->fh;
    return CMPLX(in->xmin + (i + 0.5) * dx, in->ymax - (j + 0.5) * dy);
}

/* Grid pixel (i, j) is clear of what is drawn over the colouring: the frame,
 * the cuts, branch point markers and the fixing point's ring (in pixels). */
static int clear_of_overlays(const sw_plot_info *in, const fixture *x, int i, int j)
{
    double px = (in->xmax - in->xmin) / in->fw;
    double complex z = grid_z(in, i, j);
    if (i < 3 || j < 3 || i >= in->fw - 3 || j >= in->fh - 3)
        return 0;
    double dc = sw_cuts_distance(&x->cuts, z);
    if (dc < 4 * px)
        return 0;
    /* the arrowhead where a ray leaves the frame */
    if (dc < 8 * px && (i < 16 || j < 16 || i >= in->fw - 16 || j >= in->fh - 16))
        return 0;
    for (size_t k = 0; k < x->pts.n; k++)
        if (cabs(z - x->pts.pt[k].z) < 10 * px)
            return 0;
    return cabs(z - sw_branch_anchor(x->b)->z) >= 11 * px;
}

/* Check the hue of NSAMPLE seeded random grid pixels against arg EXPECT(z). */
static void check_hues(const char *file, const sw_plot_info *in, const fixture *x,
                       double complex (*expect)(double complex), int nsample, double tol,
                       const char *source)
{
    image im;
    tu_rng rng;
    tu_rng_init(&rng, 20240611);
    image_read(&im, file);
    assert_int_equal(im.w, in->width);
    assert_int_equal(im.h, in->height);
    int checked = 0;
    for (int s = 0; s < 20 * nsample && checked < nsample; s++) {
        int i = (int)tu_int(&rng, 0, in->fw - 1), j = (int)tu_int(&rng, 0, in->fh - 1);
        if (!clear_of_overlays(in, x, i, j))
            continue;
        double complex z = grid_z(in, i, j), w = expect(z);
        int rgb[3], chroma;
        pixel(rgb, &im, in->fx + i, in->fy + j);
        double h = hue(rgb, &chroma);
        if (!(chroma > 60) || !(angle_diff(h, carg(w)) <= tol)) {
            print_error("seed %llu: %s: pixel (%d, %d) at z = %.6g%+.6gi has RGB (%d, %d, %d), "
                        "hue %.4f; expected arg w = %.4f (%s)\n",
                        (unsigned long long)rng.seed, file, i, j, creal(z), cimag(z), rgb[0],
                        rgb[1], rgb[2], h, carg(w), source);
            fail();
        }
        checked++;
    }
    assert_int_equal(checked, nsample);
    image_free(&im);
}

static double complex identity(double complex z) { return z; }
static double complex principal_sqrt(double complex z) { return csqrt(z); }
static double complex minus_sqrt(double complex z) { return -csqrt(z); }
/* ph z in (0, 2 pi) */
static double complex sqrt_upper_cut(double complex z)
{
    double a = carg(z);
    if (a < 0)
        a += 2 * TU_PI;
    return sqrt(cabs(z)) * cexp(CMPLX(0.0, a / 2));
}

/* ---------------------------------------------------------- tests */

static void test_file_types(void **state)
{
    (void)state;
    static const struct {
        const char *name;
        sw_status st;
        sw_plot_type type;
    } cases[] = {{"a.svg", SW_OK, SW_PLOT_SVG},   {"a.PNG", SW_OK, SW_PLOT_PNG},
                 {"dir.x/a.pdf", SW_OK, SW_PLOT_PDF}, {"a.jpg", SW_EUSAGE, 0},
                 {"a", SW_EUSAGE, 0},              {"dir.png/a", SW_EUSAGE, 0},
                 {"", SW_EUSAGE, 0}};
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        sw_error err;
        sw_error_clear(&err);
        sw_plot_type t = 0;
        sw_status st = sw_plot_type_of(&t, cases[k].name, &err);
        if (st != cases[k].st || (st == SW_OK && t != cases[k].type)) {
            print_error("'%s': status %d type %d\n", cases[k].name, st, t);
            fail();
        }
        if (st != SW_OK)
            assert_true(err.msg[0] != '\0');
    }
}

/* Every picture in every format is a valid file of the size reported. */
static void test_files_valid(void **state)
{
    (void)state;
    static const char *const ext[] = {"png", "svg", "pdf"};
    fixture x;
    fixture_open(&x, "sqrt(z^2-1)", 0, NULL, 0, CMPLX(0, 2), NULL);
    fixture c;
    fixture_open(&c, "w^3 - z*(z-1)", 1, NULL, 0, CMPLX(0.5, 1.5), NULL);
    sw_sheets sh;
    sw_sheets_init(&sh);
    sw_error err;
    assert_int_equal(sw_sheets_compute(&sh, &c.pts, &err), SW_OK);
    sw_path path;
    sw_path_init(&path);
    assert_int_equal(sw_path_parse(&path, "circle 0 2", "path", NULL, &err), SW_OK);
    sw_germ g;
    sw_trace tr;
    sw_track_opts to;
    sw_track_opts_init(&to);
    sw_trace_init(&tr);
    sw_germ_init(&g, x.f);
    assert_int_equal(sw_func_germ_at(&g, x.f, path.z[0], SW_BANK_NONE, NULL, &err), SW_OK);
    assert_int_equal(sw_track_run(&tr, x.f, &g, &path, &to, &err), SW_OK);
    sw_plot_opts o;
    sw_plot_opts_init(&o);
    o.pixels = 60;
    for (int pic = 0; pic < 3; pic++)
        for (int e = 0; e < 3; e++) {
            char name[256], base[32];
            snprintf(base, sizeof base, "valid%d.%s", pic, ext[e]);
            tmpfile_name(name, sizeof name, base);
            sw_plot_info in;
            sw_plot_info_init(&in);
            sw_status st = pic == 0   ? sw_plot_plane(name, x.f, &x.pts, &x.cuts, &path, &tr, &o,
                                                      &in, &err)
                           : pic == 1 ? sw_plot_graph(name, c.f, &c.pts, &sh, &o, &in, &err)
                                      : sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, &in,
                                                       &err);
            if (st != SW_OK) {
                print_error("%s: %s\n", name, err.msg);
                fail();
            }
            assert_true(in.width > 100 && in.height > 100);
            size_t len;
            char *data = slurp(name, &len);
            assert_non_null(data);
            if (e == 0) {
                assert_true(len > 8);
                assert_memory_equal(data, "\x89PNG\r\n\x1a\n", 8);
                image im;
                image_read(&im, name);
                assert_int_equal(im.w, in.width);
                assert_int_equal(im.h, in.height);
                image_free(&im);
            } else if (e == 1) {
                assert_memory_equal(data, "<?xml", 5);
                char *svg = strstr(data, "<svg");
                assert_non_null(svg);
                char want[64];
                snprintf(want, sizeof want, "width=\"%dpt\" height=\"%dpt\"", in.width,
                         in.height);
                assert_non_null(strstr(svg, want));
                /* closed root element at the end */
                const char *end = data + len;
                while (end > data && (end[-1] == '\n' || end[-1] == ' '))
                    end--;
                assert_true(end - data > 6 && memcmp(end - 6, "</svg>", 6) == 0);
            } else {
                assert_memory_equal(data, "%PDF-", 5);
                const char *end = data + len;
                while (end > data && (end[-1] == '\n' || end[-1] == '\r'))
                    end--;
                assert_true(end - data > 5 && memcmp(end - 5, "%%EOF", 5) == 0);
            }
            free(data);
            if (pic == 2) {
                /* the grid matches the frame, all of it evaluated */
                assert_int_equal(in.continued + in.direct + in.unevaluated,
                                 (size_t)in.fw * (size_t)in.fh);
                assert_true(in.unevaluated <= 2);
            }
            sw_plot_info_clear(&in);
            remove(name);
        }
    sw_germ_clear(&g);
    sw_trace_clear(&tr);
    sw_path_clear(&path);
    sw_sheets_clear(&sh);
    fixture_close(&c);
    fixture_close(&x);
}

/* The identity: hue = arg z everywhere (common practice, no source). */
static void test_colour_identity(void **state)
{
    (void)state;
    fixture x;
    fixture_open(&x, "z", 0, NULL, 0, CMPLX(0.5, 0.5), NULL);
    assert_int_equal(x.cuts.npieces, 0); /* single-valued: no cuts */
    sw_plot_opts o;
    sw_plot_opts_init(&o);
    o.have_view = 1, o.xmin = -2, o.xmax = 2, o.ymin = -1, o.ymax = 1;
    o.pixels = 160;
    sw_plot_info in;
    sw_plot_info_init(&in);
    sw_error err;
    char name[256];
    tmpfile_name(name, sizeof name, "identity.png");
    assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, &in, &err), SW_OK);
    /* equal scales: 160 x 80 */
    assert_int_equal(in.fw, 160);
    assert_int_equal(in.fh, 80);
    assert_int_equal(in.unevaluated, 0);
    check_hues(name, &in, &x, identity, 300, 0.03, "hue = arg z, common practice");
    /* the brightness rule at four pixels: value = 0.55 + 0.45 frac(log2 |z|)
       (plot.h), the brightest channel over 255 */
    image im;
    image_read(&im, name);
    static const int ij[4][2] = {{20, 20}, {130, 60}, {70, 45}, {100, 70}};
    for (int k = 0; k < 4; k++) {
        double complex z = grid_z(&in, ij[k][0], ij[k][1]);
        assert_true(clear_of_overlays(&in, &x, ij[k][0], ij[k][1]));
        double l = log2(cabs(z)), v = 0.55 + 0.45 * (l - floor(l));
        int rgb[3];
        pixel(rgb, &im, in.fx + ij[k][0], in.fy + ij[k][1]);
        int mx = rgb[0] > rgb[1] ? (rgb[0] > rgb[2] ? rgb[0] : rgb[2])
                                 : (rgb[1] > rgb[2] ? rgb[1] : rgb[2]);
        TU_CHECK_CLOSE(mx / 255.0, v, 2.0 / 255, "brightness", "plot.h rule");
    }
    image_free(&im);
    remove(name);
    sw_plot_info_clear(&in);
    fixture_close(&x);
}

/* sqrt(z) with the default cut (the negative real axis) fixed by its
 * principal value: the principal branch everywhere (DLMF 4.2.26, csqrt), a
 * jump across the negative axis, none across the positive one.  Fixed by
 * the other value at the same point: -csqrt.  With the cut on the positive
 * axis instead: ph z in (0, 2 pi). */
static void test_colour_sqrt(void **state)
{
    (void)state;
    sw_plot_opts o;
    sw_plot_opts_init(&o);
    o.have_view = 1, o.xmin = -2, o.xmax = 2, o.ymin = -2, o.ymax = 2;
    o.pixels = 100; /* rows at y = +-0.02, +-0.06, ...: none on the cut */
    sw_error err;
    char name[256];
    tmpfile_name(name, sizeof name, "sqrt.png");

    fixture x;
    fixture_open(&x, "sqrt(z)", 0, NULL, 0, CMPLX(0.3, 1), NULL);
    assert_int_equal(x.cuts.npieces, 1);
    sw_plot_info in;
    sw_plot_info_init(&in);
    assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, &in, &err), SW_OK);
    check_hues(name, &in, &x, principal_sqrt, 300, 0.03, "DLMF 4.2.26, C11 csqrt");
    /* rows 46 (y = 0.14) and 53 (y = -0.14): across the negative axis the
       hue turns by about pi, across the positive axis by 2 atan(0.14/x)/2 */
    image im;
    image_read(&im, name);
    for (int i = 16; i < 84; i++) { /* clear of the ray's arrowhead at the left edge */
        double complex za = grid_z(&in, i, 46), zb = grid_z(&in, i, 53);
        if (fabs(creal(za)) < 0.3)
            continue; /* the branch point's marker */
        int ra[3], rb[3], ca, cb;
        pixel(ra, &im, in.fx + i, in.fy + 46);
        pixel(rb, &im, in.fx + i, in.fy + 53);
        double jump = angle_diff(hue(ra, &ca), hue(rb, &cb));
        double want = angle_diff(carg(csqrt(za)), carg(csqrt(zb)));
        if (creal(za) < 0 ? !(jump > 2.6) : !(jump < 0.5) || !(fabs(jump - want) < 0.05)) {
            print_error("x = %g: hue above %.4f below %.4f: turn %.4f (csqrt: %.4f)\n",
                        creal(za), hue(ra, &ca), hue(rb, &cb), jump, want);
            fail();
        }
    }
    image_free(&im);
    sw_plot_info_clear(&in);
    fixture_close(&x);

    /* the other sheet: fixed by -csqrt at the same point */
    double complex other = -csqrt(CMPLX(0.3, 1));
    fixture_open(&x, "sqrt(z)", 0, NULL, 0, CMPLX(0.3, 1), &other);
    assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, &in, &err), SW_OK);
    check_hues(name, &in, &x, minus_sqrt, 200, 0.03, "-csqrt, DLMF 4.2.26");
    sw_plot_info_clear(&in);
    fixture_close(&x);

    /* the cut along the positive axis: filling never crosses it */
    const char *cut[] = {"0; 1; inf"};
    fixture_open(&x, "sqrt(z)", 0, cut, 1, CMPLX(0.3, 1), NULL);
    assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, &in, &err), SW_OK);
    check_hues(name, &in, &x, sqrt_upper_cut, 300, 0.03, "DLMF 4.2.26 with ph z in (0, 2 pi)");
    sw_plot_info_clear(&in);
    fixture_close(&x);

    /* the same function as the curve w^2 = z: sheet 1 at 0.3+i is the value
       with the smaller real part, -csqrt (curve.c labels) */
    fixture_open(&x, "w^2 - z", 1, NULL, 0, CMPLX(0.3, 1), NULL);
    assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, &in, &err), SW_OK);
    check_hues(name, &in, &x, minus_sqrt, 200, 0.03, "-csqrt, DLMF 4.2.26");
    sw_plot_info_clear(&in);
    fixture_close(&x);
    remove(name);
}

/* A region enclosed by cuts is cut off from the fixing point: it stays grey
 * (not evaluated), and the colouring outside is still the regular branch. */
static void test_colour_enclosed(void **state)
{
    (void)state;
    /* sqrt((z-1)(z+1)) is single-valued off [-1, 1]; cut the square around
       0.5i off as well (a closed cut with no branch point inside): inside it
       the regular branch is still csqrt(z-1) csqrt(z+1) (the factors' cuts
       cancel on (-inf, -1): common practice, no source) */
    const char *cuts[] = {"-1; 1", "-0.4+0.2i; 0.4+0.2i; 0.4+0.9i; -0.4+0.9i; -0.4+0.2i"};
    fixture x;
    fixture_open(&x, "sqrt(z-1)*sqrt(z+1)", 0, cuts, 2, CMPLX(0, 1.5), NULL);
    sw_plot_opts o;
    sw_plot_opts_init(&o);
    o.have_view = 1, o.xmin = -2, o.xmax = 2, o.ymin = -1.5, o.ymax = 1.5;
    o.pixels = 120;
    sw_plot_info in;
    sw_plot_info_init(&in);
    sw_error err;
    char name[256];
    tmpfile_name(name, sizeof name, "enclosed.png");
    assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, &in, &err), SW_OK);
    assert_int_equal(in.direct, 1); /* one seed; the inside is given up at once */
    image im;
    image_read(&im, name);
    int inside = 0;
    for (int j = 0; j < in.fh; j++)
        for (int i = 0; i < in.fw; i++) {
            double complex z = grid_z(&in, i, j);
            if (!clear_of_overlays(&in, &x, i, j))
                continue;
            double complex w = csqrt(z - 1) * csqrt(z + 1);
            int rgb[3], chroma;
            pixel(rgb, &im, in.fx + i, in.fy + j);
            double h = hue(rgb, &chroma);
            if (fabs(creal(z)) < 0.4 && cimag(z) > 0.2 && cimag(z) < 0.9) {
                /* grey: 0.5 in every channel */
                if (!(rgb[0] == 128 && rgb[1] == 128 && rgb[2] == 128)) {
                    print_error("z = %g%+gi inside the closed cut: RGB (%d, %d, %d)\n",
                                creal(z), cimag(z), rgb[0], rgb[1], rgb[2]);
                    fail();
                }
                inside++;
            } else if (!(angle_diff(h, carg(w)) < 0.03)) {
                print_error("z = %g%+gi: hue %.4f, expected %.4f\n", creal(z), cimag(z), h,
                            carg(w));
                fail();
            }
        }
    assert_true(inside > 100);
    assert_true(in.unevaluated >= (size_t)inside);
    image_free(&im);
    remove(name);
    sw_plot_info_clear(&in);
    fixture_close(&x);
}

/* Sheets along a circle around the branch point of sqrt(z) (the expression)
 * and of w^2 = z (the curve): one change, where the circle crosses the
 * negative axis, at t = 32 of the 64-gon (DLMF 4.2.3: ph jumps there; for
 * the curve, Re w changes sign there, so the labels by increasing Re w
 * swap).  The path's pixels have the colours of the sheets. */
static void test_plane_sheets(void **state)
{
    (void)state;
    static const char *const fn[2] = {"sqrt(z)", "w^2 - z"};
    sw_error err;
    char name[256];
    tmpfile_name(name, sizeof name, "plane.png");
    for (int curve = 0; curve < 2; curve++) {
        sw_func *f;
        assert_int_equal(curve ? sw_func_from_curve(&f, fn[1], NULL, &err)
                               : sw_func_from_expr(&f, fn[0], NULL, &err),
                         SW_OK);
        sw_points pts;
        sw_points_init(&pts);
        assert_int_equal(sw_points_compute(&pts, f, NULL, &err), SW_OK);
        sw_cuts cuts;
        sw_cuts_init(&cuts);
        assert_int_equal(sw_cuts_default(&cuts, &pts, &err), SW_OK);
        for (int around = 1; around >= 0; around--) {
            sw_path path;
            sw_path_init(&path);
            assert_int_equal(sw_path_parse(&path, around ? "circle 0 1" : "circle 3 1", "path",
                                           NULL, &err),
                             SW_OK);
            sw_germ g;
            sw_trace tr;
            sw_track_opts to;
            sw_track_opts_init(&to);
            sw_trace_init(&tr);
            sw_germ_init(&g, f);
            assert_int_equal(sw_func_germ_at(&g, f, path.z[0], SW_BANK_NONE, NULL, &err), SW_OK);
            assert_int_equal(sw_track_run(&tr, f, &g, &path, &to, &err), SW_OK);
            sw_plot_opts o;
            sw_plot_opts_init(&o);
            o.have_view = 1, o.xmin = -2, o.xmax = 4.5, o.ymin = -1.5, o.ymax = 1.5;
            sw_plot_info in;
            sw_plot_info_init(&in);
            assert_int_equal(sw_plot_plane(name, f, &pts, &cuts, &path, &tr, &o, &in, &err),
                             SW_OK);
            image im;
            image_read(&im, name);
            /* the path's top and bottom points */
            double complex c = around ? 0 : 3;
            int top[3], bot[3];
            double sx = in.fw / (in.xmax - in.xmin), sy = in.fh / (in.ymax - in.ymin);
            int xt = (int)floor(in.fx + (creal(c) - in.xmin) * sx);
            int yt = (int)floor(in.fy + (in.ymax - (cimag(c) + 1)) * sy);
            int yb = (int)floor(in.fy + (in.ymax - (cimag(c) - 1)) * sy);
            pixel(top, &im, xt, yt);
            pixel(bot, &im, xt, yb);
            int ct, cb;
            assert_true(!isnan(hue(top, &ct)) && ct > 80); /* a coloured line, not the paper */
            assert_true(!isnan(hue(bot, &cb)) && cb > 80);
            int same = abs(top[0] - bot[0]) + abs(top[1] - bot[1]) + abs(top[2] - bot[2]) < 30;
            if (around) {
                assert_int_equal(in.nsheets, 2);
                assert_int_equal(in.npieces, 2);
                TU_CHECK_CLOSE(in.piece[0].t1, 32, 1e-6, "sheet change", "crossing at t = 32");
                assert_int_equal(in.piece[1].sheet, 1);
                if (curve) {
                    assert_int_equal(in.label_len, 1);
                    assert_int_equal(in.label[0], 1);
                    assert_int_equal(in.label[1], 2);
                } else {
                    assert_int_equal(in.label_len, 1);
                    assert_int_equal(in.label[0], 0);
                    assert_int_equal(in.label[1], 1);
                }
                assert_false(same);
            } else {
                /* around no branch point: for the expression one sheet; for the
                   curve Re w never changes sign (the circle stays in Re z > 0) */
                assert_int_equal(in.nsheets, 1);
                assert_int_equal(in.npieces, 1);
                assert_true(same);
            }
            image_free(&im);
            sw_plot_info_clear(&in);
            sw_germ_clear(&g);
            sw_trace_clear(&tr);
            sw_path_clear(&path);
        }
        sw_cuts_clear(&cuts);
        sw_points_clear(&pts);
        sw_func_free(f);
    }
    remove(name);
}

static void test_bad_arguments(void **state)
{
    (void)state;
    sw_error err;
    fixture x;
    fixture_open(&x, "sqrt(z)", 0, NULL, 0, CMPLX(0, 1), NULL);
    sw_plot_opts o;
    sw_plot_opts_init(&o);
    char name[256];
    tmpfile_name(name, sizeof name, "bad.png");
    /* views */
    static const double views[][4] = {{1, 0, 0, 1}, {0, 1, 1, 1}, {0, INFINITY, 0, 1},
                                      {NAN, 1, 0, 1}, {1e6, 1e6 + 1e-6, 0, 1}};
    for (size_t k = 0; k < sizeof views / sizeof views[0]; k++) {
        o.have_view = 1;
        o.xmin = views[k][0], o.xmax = views[k][1], o.ymin = views[k][2], o.ymax = views[k][3];
        sw_error_clear(&err);
        assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, NULL, &err),
                         SW_EUSAGE);
        assert_true(err.msg[0] != '\0');
        assert_int_equal(sw_plot_plane(name, x.f, &x.pts, &x.cuts, NULL, NULL, &o, NULL, &err),
                         SW_EUSAGE);
    }
    sw_plot_opts_init(&o);
    o.pixels = 3;
    assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, NULL, &err), SW_EUSAGE);
    o.pixels = 2001;
    assert_int_equal(sw_plot_colour(name, x.f, x.b, &x.cuts, &x.pts, &o, NULL, &err), SW_EUSAGE);
    /* the graph of an expression */
    sw_sheets sh;
    sw_sheets_init(&sh);
    assert_int_equal(sw_plot_graph(name, x.f, &x.pts, &sh, NULL, NULL, &err), SW_EUSAGE);
    assert_non_null(strstr(err.msg, "curve"));
    /* a file that cannot be written: SW_EINPUT, nothing left behind */
    assert_int_equal(sw_plot_plane("/nonexistent-dir/x.svg", x.f, &x.pts, &x.cuts, NULL, NULL,
                                   NULL, NULL, &err),
                     SW_EINPUT);
    assert_non_null(strstr(err.msg, "/nonexistent-dir/x.svg"));
    struct stat sb;
    assert_true(stat(name, &sb) != 0);
    fixture_close(&x);
}

/* ---------------------------------------------------------- the command */

static json_t *run_json(const char *const *argv, int want_code)
{
    return cli_run_json(NULL, argv, want_code);
}

static void test_cli_json(void **state)
{
    (void)state;
    char name[256];
    tmpfile_name(name, sizeof name, "cli.png");
    const char *a1[] = {"", "plot", "-f", "sqrt(z)", "-p", "circle 0 1", "-o", name, "--json",
                        NULL};
    json_t *d = run_json(a1, 0);
    assert_string_equal(json_string_value(json_object_get(d, "command")), "plot");
    assert_int_equal(json_integer_value(json_object_get(d, "format")), 1);
    assert_string_equal(json_string_value(json_object_get(d, "output")), name);
    assert_string_equal(json_string_value(json_object_get(d, "picture")), "plane");
    json_t *seen = json_object_get(d, "sheets_on_path");
    assert_int_equal(json_array_size(seen), 2);
    assert_int_equal(json_integer_value(json_array_get(json_array_get(seen, 0), 0)), 0);
    assert_int_equal(json_integer_value(json_array_get(json_array_get(seen, 1), 0)), 1);
    assert_true(json_is_false(json_object_get(d, "certified")));
    image im;
    image_read(&im, name);
    assert_int_equal(im.w, json_integer_value(json_object_get(d, "width")));
    assert_int_equal(im.h, json_integer_value(json_object_get(d, "height")));
    image_free(&im);
    json_decref(d);

    /* the colour picture of the identity through the command: hue = arg z at
       the frame's centre row (common practice, no source) */
    const char *a2[] = {"", "plot", "-f", "z", "--picture", "colour", "--view", "-1,1,-1,1",
                        "--pixels", "64", "-o", name, "--json", NULL};
    d = run_json(a2, 0);
    json_t *fr = json_object_get(d, "frame");
    int fx = (int)json_integer_value(json_array_get(fr, 0)),
        fy = (int)json_integer_value(json_array_get(fr, 1));
    assert_int_equal(json_integer_value(json_array_get(fr, 2)), 64);
    assert_int_equal(json_integer_value(json_array_get(fr, 3)), 64);
    assert_int_equal(json_integer_value(json_object_get(json_object_get(d, "evaluation"),
                                                        "unevaluated")),
                     0);
    image_read(&im, name);
    static const int ij[3][2] = {{60, 20}, {5, 40}, {30, 60}};
    for (int k = 0; k < 3; k++) {
        int rgb[3], chroma;
        pixel(rgb, &im, fx + ij[k][0], fy + ij[k][1]);
        double complex z = CMPLX(-1 + (ij[k][0] + 0.5) / 32, 1 - (ij[k][1] + 0.5) / 32);
        assert_true(angle_diff(hue(rgb, &chroma), carg(z)) < 0.03);
    }
    image_free(&im);
    json_decref(d);

    /* the graph of w^3 = z(z-1): genus 1 (Riemann-Hurwitz) */
    tmpfile_name(name, sizeof name, "cli.svg");
    const char *a3[] = {"", "plot", "-c", "w^3 - z*(z-1)", "--picture", "graph", "-o", name,
                        "--json", NULL};
    d = run_json(a3, 0);
    assert_int_equal(json_integer_value(json_object_get(d, "sheets")), 3);
    assert_int_equal(json_integer_value(json_object_get(d, "components")), 1);
    assert_int_equal(json_integer_value(json_array_get(json_object_get(d, "genus"), 0)), 1);
    assert_string_equal(json_string_value(json_object_get(d, "file_type")), "svg");
    json_decref(d);
    remove(name);

    /* help and the human summary */
    const char *a4[] = {"", "plot", "--help", NULL};
    cli_result r = cli_run(NULL, a4);
    assert_int_equal(r.code, 0);
    assert_non_null(strstr(r.out, "usage: sheetwalk plot"));
    cli_result_clear(&r);
    tmpfile_name(name, sizeof name, "cli.pdf");
    const char *a5[] = {"", "plot", "-f", "log(1-z)", "-o", name, NULL};
    r = cli_run(NULL, a5);
    assert_int_equal(r.code, 0);
    assert_non_null(strstr(r.out, "numerical (double precision)"));
    cli_result_clear(&r);
    remove(name);
    tmpfile_name(name, sizeof name, "cli.png");
    remove(name);
}

static void test_cli_errors(void **state)
{
    (void)state;
    char png[256];
    tmpfile_name(png, sizeof png, "err.png");
    static const struct {
        const char *args[12];
        int code;
        const char *needle;
    } cases[] = {
        {{"-f", "z", "-o", "@OUT.jpg"}, 2, "'.jpg'"},
        {{"-f", "z", "-o", "@OUTnoext"}, 2, "extension"},
        {{"-f", "z"}, 2, "-o FILE"},
        {{"-f", "sqrt(z)", "--picture", "graph", "-o", "@OUT.png"}, 2, "needs a curve"},
        {{"-f", "z", "--picture", "cloud", "-o", "@OUT.png"}, 2, "plane, graph or colour"},
        {{"-f", "z", "--view", "1,0,0,1", "-o", "@OUT.png"}, 2, "XMIN < XMAX"},
        {{"-f", "z", "--view", "0,1,0", "-o", "@OUT.png"}, 2, "four finite numbers"},
        {{"-f", "z", "--view", "0,1,0,inf", "-o", "@OUT.png"}, 2, "four finite numbers"},
        {{"-f", "z", "--view", "0,1,x,2", "-o", "@OUT.png"}, 2, "four finite numbers"},
        {{"-f", "z", "--picture", "colour", "--pixels", "5", "-o", "@OUT.png"}, 2, "8 to 2000"},
        {{"-f", "z", "--picture", "colour", "--pixels", "3000", "-o", "@OUT.png"}, 2,
         "8 to 2000"},
        {{"-f", "z", "--pixels", "100", "-o", "@OUT.png"}, 2, "colour only"},
        {{"-f", "z", "--picture", "colour", "-p", "1; 2", "-o", "@OUT.png"}, 2, "plane only"},
        {{"-c", "w^2-z", "--picture", "graph", "--cut", "0; -1; inf", "-o", "@OUT.png"}, 2,
         "--cut"},
        {{"-f", "z", "--start", "1", "-o", "@OUT.png"}, 2, "needs a path"},
        {{"-f", "sqrt(z", "-o", "@OUT.png"}, 3, "column"},
        {{"-f", "sqrt(z)", "-p", "-1; 1", "-o", "@OUT.png"}, 3, "sqrt"},
        {{"-f", "sqrt(z)", "-p", "1; 2; inf", "-o", "@OUT.png"}, 3, "inf"},
        {{"-f", "z", "-o", "/nonexistent-dir/x.png"}, 3, "cannot write"},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        const char *argv[16] = {"", "plot"};
        char out[256];
        size_t n = 2;
        for (size_t j = 0; cases[k].args[j]; j++) {
            const char *a = cases[k].args[j];
            if (strncmp(a, "@OUT", 4) == 0) {
                snprintf(out, sizeof out, "%s/err%s", tmpdir, a + 4);
                a = out;
            }
            argv[n++] = a;
        }
        argv[n] = NULL;
        cli_result r = cli_run(NULL, argv);
        int lines = cr_lines(r.err);
        if (r.code != cases[k].code || lines != 1 ||
            strncmp(r.err, "sheetwalk: plot: ", 17) != 0 || !strstr(r.err, cases[k].needle) ||
            r.out[0] != '\0') {
            print_error("case %zu (%s %s): exit %d (wanted %d), stderr '%s' (wanted one line "
                        "with '%s'), stdout '%s'\n",
                        k, argv[2], argv[3], r.code, cases[k].code, r.err, cases[k].needle,
                        r.out);
            fail();
        }
        cli_result_clear(&r);
        /* nothing written on failure */
        struct stat sb;
        if (n > 2 && strncmp(argv[n - 1], tmpdir, strlen(tmpdir)) == 0)
            assert_true(stat(argv[n - 1], &sb) != 0);
    }
    (void)png;
}

static int setup_dir(void **state)
{
    (void)state;
    snprintf(tmpdir, sizeof tmpdir, "/tmp/sw_plotXXXXXX");
    return mkdtemp(tmpdir) ? 0 : -1;
}

static int remove_dir(void **state)
{
    (void)state;
    /* files a failed check left behind */
    DIR *d = opendir(tmpdir);
    struct dirent *e;
    while (d && (e = readdir(d)) != NULL) {
        char name[512];
        if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0)
            continue;
        snprintf(name, sizeof name, "%s/%s", tmpdir, e->d_name);
        remove(name);
    }
    if (d)
        closedir(d);
    return rmdir(tmpdir);
}

int main(void)
{
    sw_init(NULL);
    /* under LeakSanitizer the command's children report the fontconfig
       suppression (tests/lsan.supp) on stderr unless told not to; the checks
       below want stderr to hold only the command's own words */
    char lsan[1024];
    const char *old = getenv("LSAN_OPTIONS");
    snprintf(lsan, sizeof lsan, "%s%sprint_suppressions=0", old ? old : "", old ? ":" : "");
    setenv("LSAN_OPTIONS", lsan, 1);
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_file_types),      cmocka_unit_test(test_files_valid),
        cmocka_unit_test(test_colour_identity), cmocka_unit_test(test_colour_sqrt),
        cmocka_unit_test(test_colour_enclosed), cmocka_unit_test(test_plane_sheets),
        cmocka_unit_test(test_bad_arguments),   cmocka_unit_test(test_cli_json),
        cmocka_unit_test(test_cli_errors),
    };
    return cmocka_run_group_tests_name("plot", tests, setup_dir, remove_dir);
}
