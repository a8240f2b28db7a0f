/* sheetwalk plot: pictures of the plane, of the monodromy graph, and of a
 * regular branch by domain colouring (SVG, PNG or PDF by the file's
 * extension). */
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "sheetwalk/plot.h"
#include "sheetwalk/sheets.h"

static const char help[] =
    "usage: sheetwalk plot (-f EXPR | -c POLY) -o FILE [--picture plane|graph|colour]\n"
    "                      [-p PATH [--start W | --at Z=W]] [--cut PATH]... [--fix P=W]\n"
    "                      [--view XMIN,XMAX,YMIN,YMAX] [--pixels N]\n"
    "                      [--set NAME=VALUE]... [--json]\n\n"
    "Draws a picture into FILE; its extension chooses the format: .svg, .png or\n"
    ".pdf.  Every picture is captioned \"numerical (double precision)\": it shows\n"
    "results of continuation, not proofs.\n\n"
    "  --picture plane   (default) axes, the finite branch points (filled disc:\n"
    "                    branch point; open circle: candidate that is not branched;\n"
    "                    cross: pole), the cuts (--cut, or the default system; rays\n"
    "                    end in an arrow where they leave the view) and, with -p,\n"
    "                    the path in pieces coloured by the sheet the continued\n"
    "                    function is on: for an expression the branch index k of\n"
    "                    every root, power and log (0 = its principal value), for\n"
    "                    a curve the label of the value in the fiber over each\n"
    "                    point (sheets 1..n by increasing Re w there).\n"
    "  --picture graph   curves only: the monodromy graph, sheets as numbered discs\n"
    "                    on a circle, one arrow per step of every cycle of every\n"
    "                    branch point's permutation (one colour per branch point),\n"
    "                    with components, genus and group order.\n"
    "  --picture colour  domain colouring of the regular branch on the plane minus\n"
    "                    the cuts (fixed by --fix P=W, or by default the principal\n"
    "                    branch / sheet 1 at a point above all branch points, as in\n"
    "                    'sheetwalk cuts'): hue = arg w (red: positive real), the\n"
    "                    brightness rises from |w| = 2^k to 2^(k+1); cuts on top.\n"
    "                    Values by continuation between neighbouring pixels that\n"
    "                    never crosses a cut.  ('color' is accepted too.)\n\n"
    "  -o, --output FILE       the picture: FILE.svg, FILE.png or FILE.pdf\n"
    "  -p, --path PATH         plane: a path to continue along and draw\n"
    "      --start W, --at Z=W plane: where the path starts (as for 'trace')\n"
    "      --cut PATH          a cut (repeatable); without it, the default system\n"
    "      --fix P=W           colour: the regular branch is the sheet nearest W at P\n"
    "      --view XMIN,XMAX,YMIN,YMAX\n"
    "                          the part of the plane to show (default: fitted to the\n"
    "                          branch points, the cuts' vertices and the path)\n"
    "      --pixels N          colour: grid pixels on the long side (default 300,\n"
    "                          8..2000); one grid pixel is one picture pixel\n"
    "  -f, -c, --set, --json   as for every command\n\n"
    "Exit codes: 0 written; 2 usage (unknown extension or picture, bad --view or\n"
    "--pixels, an option the picture does not use, graph of an expression); 3 bad\n"
    "input (the function or path, a path through a branch point, a file that cannot\n"
    "be written); 4 internal error.\n";

enum { PIC_PLANE, PIC_GRAPH, PIC_COLOUR };
static const char *const pic_name[] = {"plane", "graph", "colour"};

/* "XMIN,XMAX,YMIN,YMAX": four finite numbers with min < max. */
static int parse_view(cli *c, sw_plot_opts *o)
{
    double v[4];
    const char *s = c->view;
    for (int k = 0; k < 4; k++) {
        char *end;
        errno = 0;
        v[k] = strtod(s, &end);
        if (end == s || errno == ERANGE || !isfinite(v[k]) || *end != (k < 3 ? ',' : '\0'))
            return cli_usage(c, "--view %s: give four finite numbers XMIN,XMAX,YMIN,YMAX "
                                "(e.g. -2,2,-1.5,1.5)", c->view);
        s = end + 1;
    }
    if (!(v[0] < v[1]) || !(v[2] < v[3]))
        return cli_usage(c, "--view %s: needs XMIN < XMAX and YMIN < YMAX", c->view);
    o->have_view = 1;
    o->xmin = v[0], o->xmax = v[1], o->ymin = v[2], o->ymax = v[3];
    /* the library's own check (a view too narrow for double precision) */
    sw_error err;
    if (sw_plot_check_view(o, &err) != SW_OK)
        return cli_usage(c, "--view %s: %s", c->view, err.msg);
    return -1;
}

/* Options that picture P does not use are usage errors. */
static int check_options(cli *c, int p)
{
    if (c->nevals)
        return cli_usage(c, "--eval is not used by plot (see 'sheetwalk cuts')");
    if (p == PIC_GRAPH) {
        if (c->function)
            return cli_usage(c, "--picture graph needs a curve: give -c POLY (an expression has "
                                "no finite set of sheets)");
        const char *bad = c->path ? "--path" : c->ncuts ? "--cut" : c->fix ? "--fix"
                          : c->view ? "--view" : c->pixels ? "--pixels" : c->start ? "--start"
                          : c->at ? "--at" : NULL;
        if (bad)
            return cli_usage(c, "%s is not used by --picture graph", bad);
    }
    if (p == PIC_PLANE) {
        if (c->fix)
            return cli_usage(c, "--fix is used by --picture colour only");
        if (c->pixels)
            return cli_usage(c, "--pixels is used by --picture colour only");
    }
    if (p == PIC_COLOUR && c->path)
        return cli_usage(c, "--path is drawn by --picture plane only");
    if ((c->start || c->at) && !c->path)
        return cli_usage(c, "%s needs a path (-p PATH)", c->start ? "--start" : "--at");
    return -1;
}

/* A caption line on whether the cuts make the function single-valued. */
static void cuts_note(char *buf, size_t n, const sw_func *f, const sw_points *pts,
                      const sw_cuts *cuts, const sw_branch *given)
{
    sw_error err;
    sw_branch *b = NULL;
    sw_cut_report rep;
    sw_cut_report_init(&rep);
    buf[0] = '\0';
    if (cuts->npieces == 0) {
        if (pts->n)
            snprintf(buf, n, "no cuts");
        return;
    }
    const sw_branch *use = given;
    if (use == NULL) {
        if (sw_branch_new(&b, f, cuts, cli_default_anchor(pts, cuts), SW_BANK_NONE, NULL,
                          &err) != SW_OK) {
            snprintf(buf, n, "the cuts were not checked: %.150s", err.msg);
            return;
        }
        use = b;
    }
    if (sw_cuts_check(&rep, f, pts, cuts, use, &err) != SW_OK)
        snprintf(buf, n, "the cuts were not checked: %.150s", err.msg);
    else if (rep.single_valued)
        snprintf(buf, n, "the cuts make the function single-valued (checked by continuation)");
    else
        snprintf(buf, n, "the cuts do NOT make the function single-valued%s%.140s",
                 rep.nproblems ? ": " : "", rep.nproblems ? rep.problem[0] : "");
    sw_cut_report_clear(&rep);
    sw_branch_free(b);
}

static json_t *label_json(const sw_plot_info *in, size_t s, int curve)
{
    const long *l = in->label + s * in->label_len;
    if (curve)
        return json_integer(l[0]);
    json_t *a = json_array();
    for (size_t j = 0; j < in->label_len; j++)
        json_array_append_new(a, json_integer(l[j]));
    return a;
}

static void label_str(char *buf, size_t n, const sw_plot_info *in, size_t s, int curve)
{
    const long *l = in->label + s * in->label_len;
    if (curve) {
        snprintf(buf, n, "sheet %ld", l[0]);
        return;
    }
    if (in->label_len == 1) {
        snprintf(buf, n, "k = %ld", l[0]);
        return;
    }
    size_t used = (size_t)snprintf(buf, n, "k = (");
    for (size_t j = 0; j < in->label_len && used < n; j++)
        used += (size_t)snprintf(buf + used, n - used, "%s%ld", j ? ", " : "", l[j]);
    if (used < n)
        snprintf(buf + used, n - used, ")");
}

int cmd_plot(int argc, char **argv)
{
    cli c;
    sw_error err;
    const sw_points *pts = NULL;
    sw_cuts cuts;
    sw_branch *b = NULL;
    sw_trace tr;
    sw_germ g;
    sw_sheets sh;
    sw_plot_opts o;
    sw_plot_info info;
    sw_plot_type type = SW_PLOT_PNG;
    int pic = PIC_PLANE, have_germ = 0;
    char note[320];
    sw_cuts_init(&cuts);
    sw_trace_init(&tr);
    sw_sheets_init(&sh);
    sw_plot_opts_init(&o);
    sw_plot_info_init(&info);
    sw_error_clear(&err);
    note[0] = '\0';
    cli_init(&c, "plot", OPT_FUNC | OPT_PATH | OPT_START | OPT_CUT | OPT_FIX | OPT_JSON |
                             OPT_OUTPUT | OPT_PLOT);
    int rc = cli_parse(&c, argc, argv, help);
    /* everything is checked before anything is computed */
    if (rc < 0 && c.picture) {
        if (strcmp(c.picture, "plane") == 0)
            pic = PIC_PLANE;
        else if (strcmp(c.picture, "graph") == 0)
            pic = PIC_GRAPH;
        else if (strcmp(c.picture, "colour") == 0 || strcmp(c.picture, "color") == 0)
            pic = PIC_COLOUR;
        else
            rc = cli_usage(&c, "--picture %s: choose plane, graph or colour", c.picture);
    }
    if (rc < 0 && !c.output)
        rc = cli_usage(&c, "no output file: give -o FILE (.svg, .png or .pdf)");
    if (rc < 0 && sw_plot_type_of(&type, c.output, &err) != SW_OK)
        rc = cli_usage(&c, "%s", err.msg);
    if (rc < 0)
        rc = check_options(&c, pic);
    if (rc < 0 && c.view)
        rc = parse_view(&c, &o);
    if (rc < 0 && c.pixels) {
        char *end;
        errno = 0;
        long n = strtol(c.pixels, &end, 10);
        if (end == c.pixels || *end != '\0' || errno == ERANGE || n < SW_PLOT_PIXELS_MIN ||
            n > SW_PLOT_PIXELS_MAX)
            rc = cli_usage(&c, "--pixels %s: give a whole number from %d to %d", c.pixels,
                           SW_PLOT_PIXELS_MIN, SW_PLOT_PIXELS_MAX);
        else
            o.pixels = (size_t)n;
    }
    if (rc < 0)
        rc = cli_load(&c, c.path != NULL, &err);
    if (rc < 0 && c.have_path && (c.p.inf_start || c.p.inf_end)) {
        sw_error_set(&err, SW_EUNSUPPORTED, "the plane picture draws finite paths only: end "
                                            "the path at a finite vertex instead of 'inf'");
        rc = cli_fail(&c, &err);
    }
    if (rc < 0 && cli_get_points(&c, &pts, 0, &err) != SW_OK)
        rc = cli_fail(&c, &err);
    int curve = rc < 0 && sw_func_kind_of(c.f) == SW_FUNC_CURVE;

    if (rc < 0 && pic != PIC_GRAPH)
        rc = cli_load_cuts(&c, &cuts, pts, &err);
    if (rc < 0 && pic == PIC_PLANE && c.have_path) {
        sw_track_opts to;
        sw_track_opts_init(&to);
        if (sw_germ_init(&g, c.f) != SW_OK) {
            sw_error_set(&err, SW_ENOMEM, "out of memory");
            rc = cli_fail(&c, &err);
        } else {
            have_germ = 1;
            rc = cli_start_germ(&c, &g, &to, &err);
        }
        if (rc < 0) {
            if (sw_track_run(&tr, c.f, &g, &c.p, &to, &err) != SW_OK)
                rc = cli_fail(&c, &err);
        }
    }
    if (rc < 0 && pic == PIC_PLANE) {
        cuts_note(note, sizeof note, c.f, pts, &cuts, NULL);
        if (note[0])
            o.note[o.nnotes++] = note;
        if (sw_plot_plane(c.output, c.f, pts, &cuts, c.have_path ? &c.p : NULL,
                          c.have_path ? &tr : NULL, &o, &info, &err) != SW_OK)
            rc = cli_fail(&c, &err);
    }
    if (rc < 0 && pic == PIC_GRAPH) {
        if (sw_sheets_compute(&sh, pts, &err) != SW_OK ||
            sw_plot_graph(c.output, c.f, pts, &sh, &o, &info, &err) != SW_OK)
            rc = cli_fail(&c, &err);
    }
    if (rc < 0 && pic == PIC_COLOUR) {
        rc = cli_regular_branch(&c, &b, &cuts, pts, &err);
        if (rc < 0) {
            cuts_note(note, sizeof note, c.f, pts, &cuts, b);
            if (note[0])
                o.note[o.nnotes++] = note;
            if (sw_plot_colour(c.output, c.f, b, &cuts, pts, &o, &info, &err) != SW_OK)
                rc = cli_fail(&c, &err);
        }
    }

    if (rc < 0) {
        if (c.json) {
            json_t *d = cli_doc(&c);
            json_object_set_new(d, "output", json_string(c.output));
            json_object_set_new(d, "file_type", json_string(sw_plot_type_name(type)));
            json_object_set_new(d, "picture", json_string(pic_name[pic]));
            json_object_set_new(d, "width", json_integer(info.width));
            json_object_set_new(d, "height", json_integer(info.height));
            if (pic != PIC_GRAPH) {
                json_t *v = json_array();
                json_array_append_new(v, json_real(info.xmin));
                json_array_append_new(v, json_real(info.xmax));
                json_array_append_new(v, json_real(info.ymin));
                json_array_append_new(v, json_real(info.ymax));
                json_object_set_new(d, "view", v);
                json_t *fr = json_array();
                json_array_append_new(fr, json_integer(info.fx));
                json_array_append_new(fr, json_integer(info.fy));
                json_array_append_new(fr, json_integer(info.fw));
                json_array_append_new(fr, json_integer(info.fh));
                json_object_set_new(d, "frame", fr);
                json_object_set_new(d, "default_cuts", json_boolean(cuts.is_default));
                json_object_set_new(d, "cuts", cli_cuts_json(&cuts));
            }
            json_t *seen = json_array(), *pieces = json_array();
            for (size_t s = 0; s < info.nsheets; s++)
                json_array_append_new(seen, label_json(&info, s, curve));
            for (size_t k = 0; k < info.npieces; k++) {
                const sw_plot_piece *p = &info.piece[k];
                json_t *o1 = json_object();
                json_object_set_new(o1, "from_t", json_real(p->t0));
                json_object_set_new(o1, "to_t", json_real(p->t1));
                json_object_set_new(o1, "from", json_cplx(sw_path_point(&c.p, p->t0)));
                json_object_set_new(o1, "to", json_cplx(sw_path_point(&c.p, p->t1)));
                json_object_set_new(o1, "sheet", label_json(&info, p->sheet, curve));
                json_array_append_new(pieces, o1);
            }
            json_object_set_new(d, "sheets_on_path", seen);
            json_object_set_new(d, "path_pieces", pieces);
            if (pic == PIC_GRAPH) {
                json_object_set_new(d, "sheets", json_integer((json_int_t)sh.nsheets));
                json_object_set_new(d, "components", json_integer((json_int_t)sh.ncomponents));
                json_t *genus = json_array();
                for (size_t k = 0; k < sh.ncomponents; k++)
                    json_array_append_new(genus, json_integer(sh.genus[k]));
                json_object_set_new(d, "genus", genus);
            }
            if (pic == PIC_COLOUR) {
                const sw_germ *a = sw_branch_anchor(b);
                json_t *fx = json_object();
                json_object_set_new(fx, "z", json_cplx(a->z));
                json_object_set_new(fx, "w", json_cplx(sw_func_value(c.f, a)));
                json_object_set_new(d, "fix", fx);
                json_t *gr = json_array();
                json_array_append_new(gr, json_integer(info.fw));
                json_array_append_new(gr, json_integer(info.fh));
                json_object_set_new(d, "grid", gr);
                json_t *ev = json_object();
                json_object_set_new(ev, "continued", json_integer((json_int_t)info.continued));
                json_object_set_new(ev, "direct", json_integer((json_int_t)info.direct));
                json_object_set_new(ev, "unevaluated",
                                    json_integer((json_int_t)info.unevaluated));
                json_object_set_new(d, "evaluation", ev);
            }
            if (note[0])
                json_object_set_new(d, "note", json_string(note));
            json_object_set_new(d, "certified", json_false());
            cli_emit(d);
        } else {
            printf("wrote %s: %s picture, %d x %d (%s)\n", c.output, pic_name[pic], info.width,
                   info.height, sw_plot_type_name(type));
            if (pic != PIC_GRAPH)
                printf("view: [%g, %g] x [%g, %g]\n", info.xmin, info.xmax, info.ymin,
                       info.ymax);
            if (c.have_path) {
                char buf[256];
                printf("sheets on the path, in order of appearance:");
                for (size_t s = 0; s < info.nsheets; s++) {
                    if (!curve && info.label_len == 0)
                        snprintf(buf, sizeof buf, "single-valued");
                    else
                        label_str(buf, sizeof buf, &info, s, curve);
                    printf("%s %s", s ? "," : "", buf);
                }
                printf("\n");
            }
            if (pic == PIC_GRAPH) {
                printf("sheets %zu, components %zu, genus", sh.nsheets, sh.ncomponents);
                for (size_t k = 0; k < sh.ncomponents; k++)
                    printf("%s %ld", k ? "," : "", sh.genus[k]);
                printf("\n");
            }
            if (pic == PIC_COLOUR)
                printf("pixels: %zu continued, %zu evaluated directly, %zu not evaluated\n",
                       info.continued, info.direct, info.unevaluated);
            if (note[0])
                printf("%s\n", note);
            printf("numerical (double precision): the picture shows continuation, not a proof\n");
        }
        rc = 0;
    }
    if (have_germ)
        sw_germ_clear(&g);
    sw_trace_clear(&tr);
    sw_sheets_clear(&sh);
    sw_branch_free(b);
    sw_cuts_clear(&cuts);
    sw_plot_info_clear(&info);
    cli_clear(&c);
    return rc;
}
