/* pf_picture.c - PNG colour maps and line plots with PLplot (pngcairo).
 *
 * PLplot ends the process on some errors, so every input is validated here
 * before PLplot sees it, and the drawing runs under pf_plguard, which turns
 * a fatal PLplot error into a status.  PLplot never sees a file name: it
 * draws into an open FILE of the safe writer's temporary file (plsfile), so
 * PLplot's file-name syntax (family members "%n") cannot apply to names from
 * scripts.  Each picture uses a fresh PLplot stream, ended before
 * returning, so pictures never share state. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <plplot.h>
#include "pf_cubehelix.h"
#include "pf_picture.h"
#include "pf_plguard.h"
#include "pf_safefile.h"

void pf_plplot_version(char *buf, size_t size)
{
    char v[80];
    plgver(v);
    snprintf(buf, size, "%s", v);
}

double pf_display_unit(pf_quantity q, double max_abs, char *unit, size_t size)
{
    static const char *const len[] = {"m", "mm", "#gmm", "nm"};
    static const char *const wav[] = {"m#u-1#d", "mm#u-1#d", "#gmm#u-1#d", "nm#u-1#d"};
    static const char *const tim[] = {"s", "ms", "#gms", "ns"};
    static const double lenf[] = {1, 1e3, 1e6, 1e9};
    static const double wavf[] = {1, 1e-3, 1e-6, 1e-9};
    if (q == PF_Q_PLAIN) {
        snprintf(unit, size, "%s", "");
        return 1;
    }
    const char *const *names = q == PF_Q_LENGTH ? len : (q == PF_Q_WAVENUMBER ? wav : tim);
    const double *f = q == PF_Q_WAVENUMBER ? wavf : lenf;
    /* Aim for numbers around 30: at most three digits before the point. */
    int best = 0;
    double score = INFINITY;
    for (int i = 0; i < 4; i++) {
        double v = max_abs * f[i];
        double sc = v > 0 ? fabs(log10(v) - 1.5) : (i == 0 ? 0 : 1);
        if (sc < score) {
            score = sc;
            best = i;
        }
    }
    snprintf(unit, size, "%s", names[best]);
    return f[best];
}

/* Colours: index 0 background, 1 frame and text, 2.. series. */
static void set_palette(void)
{
    static const int pal[][3] = {
        {255, 255, 255}, {40, 40, 48}, {30, 80, 170}, {200, 70, 40},
        {40, 140, 90}, {130, 60, 160}, {110, 110, 110}, {190, 150, 20},
    };
    int n = (int)(sizeof pal / sizeof pal[0]);
    PLINT r[8], g[8], b[8];
    for (int i = 0; i < n; i++) r[i] = pal[i][0], g[i] = pal[i][1], b[i] = pal[i][2];
    plscmap0(r, g, b, n);
    PLINT cr[256], cg[256], cb[256];
    for (int i = 0; i < 256; i++) {
        double rgb[3];
        pf_cubehelix(&pf_cubehelix_default, i / 255.0, rgb);
        cr[i] = (PLINT)lround(255 * rgb[0]);
        cg[i] = (PLINT)lround(255 * rgb[1]);
        cb[i] = (PLINT)lround(255 * rgb[2]);
    }
    plscmap1n(256);
    plscmap1(cr, cg, cb, 256);
}

/* Starts a stream that draws into out.  PLplot owns out from here on: plend1
 * closes it (plCloseFile), so the caller never closes it itself. */
static int ends_with_svg(const char *path)
{
    size_t n = strlen(path);
    return n >= 4 && strcasecmp(path + n - 4, ".svg") == 0;
}

/* PLplot device for a picture file: SVG (vector, for papers) when the name
 * ends in .svg, PNG otherwise.  Both through cairo, which embeds no time. */
static const char *device_for(const char *path) { return ends_with_svg(path) ? "svgcairo" : "pngcairo"; }

static void begin_stream(FILE *out, int w, int h, const char *device)
{
    PLINT strm;
    plmkstrm(&strm);
    plsdev(device);
    plsfile(out);
    char geo[32];
    snprintf(geo, sizeof geo, "%dx%d", w, h);
    plsetopt("geometry", geo);
    set_palette();
    plinit();
    pladv(0);
    /* PLplot scales text with the page height; low pictures get part of
     * that back so their labels stay legible without crowding the panel. */
    plschr(0, 0.95 * (h < 640 ? sqrt(640.0 / h) : 1.0));
}

/* cairo reports no write errors through PLplot, so a full disk would go
 * unnoticed: a complete PNG ends with the IEND chunk and its fixed CRC. */
static int png_complete(const char *path)
{
    static const unsigned char iend[12] = {0, 0, 0, 0, 'I', 'E', 'N', 'D', 0xAE, 0x42, 0x60, 0x82};
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    unsigned char tail[12];
    int ok = fseek(f, -12, SEEK_END) == 0 && fread(tail, 1, 12, f) == 12 && memcmp(tail, iend, 12) == 0;
    fclose(f);
    return ok;
}

/* The same for SVG: a complete file ends with its closing tag. */
static int svg_complete(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    char tail[64] = {0};
    long size = fseek(f, 0, SEEK_END) == 0 ? ftell(f) : -1;
    long back = size < 63 ? size : 63;
    int ok = size > 0 && fseek(f, -back, SEEK_END) == 0 && fread(tail, 1, (size_t)back, f) == (size_t)back;
    fclose(f);
    return ok && strstr(tail, "</svg>") != NULL;
}

/* Opens the safe writer's temporary file for PLplot; NULL (after abandoning
 * the file) when it cannot be opened. */
static FILE *open_for_plplot(pf_context *ctx, pf_safefile *sf, pf_status *s)
{
    FILE *out = fopen(sf->temp_path, "wb");
    if (!out) {
        char final[512];
        snprintf(final, sizeof final, "%s", sf->final_path);
        pf_safe_abandon(sf);
        *s = pf_fail(ctx, PF_EIO, "cannot write the picture '%s'", final);
    }
    return out;
}

/* Commits the picture drawn with status drawn, or abandons it. */
static pf_status finish(pf_context *ctx, pf_safefile *sf, pf_status drawn)
{
    if (drawn) {
        pf_safe_abandon(sf);
        return drawn;
    }
    if (!(ends_with_svg(sf->final_path) ? svg_complete(sf->temp_path) : png_complete(sf->temp_path))) {
        char final[512];
        snprintf(final, sizeof final, "%s", sf->final_path);
        pf_safe_abandon(sf);
        return pf_fail(ctx, PF_EIO, "the picture '%s' could not be written completely (disk full?)", final);
    }
    return pf_safe_commit(ctx, sf);
}

static int all_finite(const double *v, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (!isfinite(v[i])) return 0;
    return 1;
}

static void axis_label(char *buf, size_t size, const char *name, const char *unit)
{
    if (unit && *unit) snprintf(buf, size, "%s (%s)", name, unit);
    else snprintf(buf, size, "%s", name);
}

/* Unit text of "per display unit u" raised to power (1 or 2): lengths and
 * times get a negative exponent; for wave numbers u is "L#u-1#d", whose
 * inverse is the length L itself. */
static void inverse_unit(pf_quantity q, const char *u, int power, char *out, size_t size)
{
    if (q == PF_Q_WAVENUMBER) {
        const char *cut = strstr(u, "#u-1#d");
        int len = cut ? (int)(cut - u) : (int)strlen(u);
        if (power == 1) snprintf(out, size, "%.*s", len, u);
        else snprintf(out, size, "%.*s#u%d#d", len, u, power);
    } else if (q == PF_Q_PLAIN) {
        snprintf(out, size, "%s", "");
    } else {
        snprintf(out, size, "%s#u-%d#d", u, power);
    }
}

static double max_abs2(double a, double b) { return fmax(fabs(a), fabs(b)); }

/* Everything a map's drawing needs, computed before PLplot starts. */
typedef struct map_job {
    const pf_map *m;
    FILE *out;
    int w, h, equal;
    PLFLT **rows;
    double vmin, vmax;
    double box[4];             /* x0, x1, y0, y1 in display units */
    char lx[96], ly[96];
    const char *vlabel;
    char title[320];
    const char *device;
} map_job;

/* Draws a map (runs under pf_plguard). */
static void draw_map(void *user)
{
    const map_job *j = user;
    const pf_map *m = j->m;
    double x0 = j->box[0], x1 = j->box[1], y0 = j->box[2], y1 = j->box[3];
    double vmin = j->vmin, vmax = j->vmax;
    begin_stream(j->out, j->w, j->h, j->device);
    /* Main panel. */
    /* Equal aspect keeps a cloud's true shape (its aspect ratio is often
     * the point of the picture); the panel then shrinks along one side. */
    if (j->equal) {
        double aspect = (y1 - y0) / (x1 - x0) * (double)j->w / (double)j->h;
        double vx = 0.66, vy = 0.78; /* largest panel in normalised units */
        if (aspect * vx > vy) vx = vy / aspect; else vy = aspect * vx;
        double cx = 0.10 + 0.66 / 2, cy = 0.12 + 0.78 / 2;
        plvpor(cx - vx / 2, cx + vx / 2, cy - vy / 2, cy + vy / 2);
    } else {
        plvpor(0.10, 0.76, 0.12, 0.90);
    }
    PLFLT px0, px1, py0, py1;
    plgvpd(&px0, &px1, &py0, &py1);
    plwind(x0, x1, y0, y1);
    plimagefr((PLFLT_MATRIX)j->rows, (PLINT)m->nx, (PLINT)m->ny, x0, x1, y0, y1, vmin, vmax, vmin, vmax, NULL, NULL);
    plcol0(1);
    /* Ticks point outwards: inside they vanish against dark parts of the map. */
    plbox("bcnsti", 0, 0, "bcnstiv", 0, 0);
    pllab(j->lx, j->ly, "");
    plmtex("t", 1.6, 0.0, 0.0, j->title);
    /* Colour bar: a vertical strip of the same map with its own axis. */
    double ramp_v[2][64];
    PLFLT *ramp[2] = {ramp_v[0], ramp_v[1]};
    for (int i = 0; i < 64; i++) ramp_v[0][i] = ramp_v[1][i] = vmin + (vmax - vmin) * i / 63.0;
    plvpor(px1 + 0.03, px1 + 0.06, py0, py1);
    plwind(0, 1, vmin, vmax);
    plimagefr((PLFLT_MATRIX)ramp, 2, 64, 0, 1, vmin, vmax, vmin, vmax, vmin, vmax, NULL, NULL);
    plcol0(1);
    plsyax(6, 0);
    plbox("bc", 0, 0, "bcmstiv", 0, 0);
    plmtex("r", 6.2, 0.5, 0.5, j->vlabel);
    plend1();
}

pf_status pf_picture_map(pf_context *ctx, const char *path, int overwrite, const pf_map *m)
{
    if (m->nx < 2 || m->ny < 2) return pf_fail(ctx, PF_EINVAL, "a map needs at least 2 x 2 samples, got %zu x %zu", m->nx, m->ny);
    if (!all_finite(m->x, m->nx) || !all_finite(m->y, m->ny) || !all_finite(m->values, m->nx * m->ny))
        return pf_fail(ctx, PF_EINVAL, "map '%s': coordinates and values must be finite", m->title ? m->title : "");
    if (!(m->x[m->nx - 1] > m->x[0]) || !(m->y[m->ny - 1] > m->y[0]))
        return pf_fail(ctx, PF_EINVAL, "map axes must ascend");
    int w = m->width ? m->width : 860, h = m->height ? m->height : 640;
    if (w < 200 || h < 150 || w > 8000 || h > 8000)
        return pf_fail(ctx, PF_EINVAL, "picture size %d x %d is outside 200x150..8000x8000", w, h);
    /* Cell edges: samples are centres of uniform cells. */
    double hx = (m->x[m->nx - 1] - m->x[0]) / (double)(m->nx - 1) / 2;
    double hy = (m->y[m->ny - 1] - m->y[0]) / (double)(m->ny - 1) / 2;
    char ux[32], uy[32];
    double fx = pf_display_unit(m->xa.q, max_abs2(m->x[0] - hx, m->x[m->nx - 1] + hx), ux, sizeof ux);
    double fy = pf_display_unit(m->ya.q, max_abs2(m->y[0] - hy, m->y[m->ny - 1] + hy), uy, sizeof uy);
    int equal = m->equal_aspect && m->xa.q == m->ya.q;
    /* Equal aspect of a very elongated region (80 um x 3.4 mm) leaves a
     * sliver a few pixels wide under crowded tick labels: past 1:6 the map
     * fills the panel and the title says the axes are not to scale. */
    double extent_ratio = (m->y[m->ny - 1] - m->y[0] + 2 * hy) / (m->x[m->nx - 1] - m->x[0] + 2 * hx);
    int not_to_scale = equal && (extent_ratio > 6 || extent_ratio < 1.0 / 6);
    if (not_to_scale) equal = 0;
    if (equal && m->xa.q != PF_Q_PLAIN) {
        /* One unit for both axes, or equal lengths would not look equal. */
        double both = fmax(max_abs2(m->x[0] - hx, m->x[m->nx - 1] + hx), max_abs2(m->y[0] - hy, m->y[m->ny - 1] + hy));
        fx = fy = pf_display_unit(m->xa.q, both, ux, sizeof ux);
        snprintf(uy, sizeof uy, "%s", ux);
    }
    if (equal && !m->height) {
        /* Fit the picture to the map: a wide cloud gets a low picture. */
        double ratio = (m->y[m->ny - 1] - m->y[0] + 2 * hy) / (m->x[m->nx - 1] - m->x[0] + 2 * hx);
        double want = 0.66 * w * ratio / 0.78 + 0.5;
        h = want < 420 ? 420 : (want > 640 ? 640 : (int)want);
    }
    double vscale = 1;
    if (m->per_x) vscale /= fx;
    if (m->per_y) vscale /= fy;
    size_t n = m->nx * m->ny;
    double *vals = malloc(n * sizeof *vals);
    PLFLT **rows = malloc(m->nx * sizeof *rows);
    if (!vals || !rows) {
        free(vals);
        free(rows);
        return pf_fail(ctx, PF_ENOMEM, "out of memory");
    }
    double vmin = INFINITY, vmax = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        vals[i] = m->values[i] * vscale;
        vmin = fmin(vmin, vals[i]);
        vmax = fmax(vmax, vals[i]);
    }
    for (size_t ix = 0; ix < m->nx; ix++) rows[ix] = vals + ix * m->ny;
    /* Densities start at zero; a flat map still gets a visible range. */
    if (vmin >= 0) vmin = 0;
    if (!(vmax > vmin)) vmax = vmin + 1;
    char vunit[64], vlabel[160];
    if (m->per_x && m->per_y && strcmp(ux, uy) == 0 && m->xa.q == m->ya.q) {
        inverse_unit(m->xa.q, ux, 2, vunit, sizeof vunit);
    } else if (m->per_x || m->per_y) {
        char a[32] = "", b[32] = "";
        if (m->per_x) inverse_unit(m->xa.q, ux, 1, a, sizeof a);
        if (m->per_y) inverse_unit(m->ya.q, uy, 1, b, sizeof b);
        snprintf(vunit, sizeof vunit, "%s%s%s", a, *a && *b ? " " : "", b);
    } else {
        snprintf(vunit, sizeof vunit, "%s", m->value_unit ? m->value_unit : "");
    }
    /* Fold a power of ten into the label rather than let PLplot print a
     * detached "(x10^n)" beside the colour bar. */
    int e10 = vmax > 0 ? (int)floor(log10(vmax)) : 0;
    if (e10 < -2 || e10 > 3) {
        double f = pow(10.0, -e10);
        for (size_t i = 0; i < n; i++) vals[i] *= f;
        vmin *= f;
        vmax *= f;
        char plain[64];
        snprintf(plain, sizeof plain, "%s", vunit);
        snprintf(vunit, sizeof vunit, "10#u%d#d %.40s", e10, plain);
    }
    axis_label(vlabel, sizeof vlabel, m->value_name ? m->value_name : "value", vunit);
    pf_safefile sf;
    pf_status s = pf_safe_begin(ctx, path, overwrite, &sf);
    if (s) {
        free(vals);
        free(rows);
        return s;
    }
    FILE *out = open_for_plplot(ctx, &sf, &s);
    if (out) {
        map_job job = {m, out, w, h, equal, rows, vmin, vmax, {(m->x[0] - hx) * fx, (m->x[m->nx - 1] + hx) * fx,
                       (m->y[0] - hy) * fy, (m->y[m->ny - 1] + hy) * fy}, "", "", vlabel, "", device_for(path)};
        snprintf(job.title, sizeof job.title, "%s%s", m->title ? m->title : "",
                 not_to_scale ? (m->title && *m->title ? " (x and y not to scale)" : "x and y not to scale") : "");
        axis_label(job.lx, sizeof job.lx, m->xa.name, ux);
        axis_label(job.ly, sizeof job.ly, m->ya.name, uy);
        s = finish(ctx, &sf, pf_plguard_run(ctx, draw_map, &job));
    }
    free(vals);
    free(rows);
    return s;
}

/* Samples of all series (display units: x * fx, y * fy or log10) inside
 * the box [left, left + bw] x [top - bh, top]. */
static size_t samples_in_box(const pf_lines *p, double fx, double fy, double left, double bw, double top, double bh)
{
    size_t n = 0;
    for (size_t k = 0; k < p->nseries; k++) {
        const pf_series *s = &p->series[k];
        for (size_t i = 0; i < s->n; i++) {
            if (p->log_y && !(s->y[i] > 0)) continue;
            double x = s->x[i] * fx, y = p->log_y ? log10(s->y[i] * fy) : s->y[i] * fy;
            n += x >= left && x <= left + bw && y >= top - bh && y <= top;
        }
    }
    return n;
}

/* Legend on a white box with a frame, one row per labelled series, in the
 * corner the caller chose unless it would hide samples of the curves: then
 * in the corner that hides the fewest (the requested one wins ties). */
static void draw_legend(const pf_lines *p, double sx, double sy, double xmin, double xmax, double ymin, double ymax)
{
    size_t rows = 0;
    for (size_t k = 0; k < p->nseries; k++) rows += p->series[k].label != NULL;
    if (!rows) return;
    double W = xmax - xmin, H = ymax - ymin;
    double bw = 0.30 * W, rh = 0.065 * H, bh = rh * (double)rows + 0.03 * H;
    int corner = p->legend;
    size_t best = (size_t)-1;
    for (int t = 0; t < 4 && best; t++) {
        int c = (p->legend + t) % 4;
        double l = (c & 1) ? xmax - 0.02 * W - bw : xmin + 0.02 * W;
        double tp = (c & 2) ? ymin + 0.03 * H + bh : ymax - 0.03 * H;
        size_t hidden = samples_in_box(p, sx, sy, l, bw, tp, bh);
        if (hidden < best) best = hidden, corner = c;
    }
    double left = (corner & 1) ? xmax - 0.02 * W - bw : xmin + 0.02 * W;
    double top = (corner & 2) ? ymin + 0.03 * H + bh : ymax - 0.03 * H;
    PLFLT fx[4] = {left, left + bw, left + bw, left}, fy[4] = {top, top, top - bh, top - bh};
    plcol0(0);
    plfill(4, fx, fy);
    plcol0(6);
    PLFLT ex[5] = {left, left + bw, left + bw, left, left}, ey[5] = {top, top, top - bh, top - bh, top};
    plline(5, ex, ey);
    size_t row = 0;
    for (size_t k = 0; k < p->nseries; k++) {
        const pf_series *s = &p->series[k];
        if (!s->label) continue;
        double y = top - 0.015 * H - rh * ((double)row + 0.5);
        PLFLT lx[2] = {left + 0.03 * bw, left + 0.22 * bw}, ly[2] = {y, y};
        plcol0(2 + (PLINT)(k % 6));
        plwidth(s->dashed ? 1.6 : 2.0);
        pllsty(s->dashed ? 2 : 1);
        if (s->points) {
            PLFLT mx = (lx[0] + lx[1]) / 2;
            plpoin(1, &mx, &ly[0], 17);
        } else {
            plline(2, lx, ly);
        }
        pllsty(1);
        plwidth(1.0);
        plcol0(1);
        plptex(left + 0.27 * bw, y, 1, 0, 0, s->label);
        row++;
    }
}

/* Everything a line plot's drawing needs, computed before PLplot starts. */
typedef struct lines_job {
    const pf_lines *p;
    FILE *out;
    int w, h;
    double fx, fy;
    double box[4];             /* xmin, xmax, ymin, ymax in display units */
    char xl[96], yl[128];
    PLFLT *bx, *by;            /* scratch for one series */
    const char *device;
} lines_job;

/* Draws a line plot (runs under pf_plguard). */
static void draw_lines(void *user)
{
    const lines_job *j = user;
    const pf_lines *p = j->p;
    double xmin = j->box[0], xmax = j->box[1], ymin = j->box[2], ymax = j->box[3];
    begin_stream(j->out, j->w, j->h, j->device);
    plvpor(0.11, 0.95, 0.13, 0.89);
    plwind(xmin, xmax, ymin, ymax);
    /* Light grid first, frame and labels over it. */
    plcol0(6);
    pllsty(3);
    plbox("g", 0, 0, p->log_y ? "g" : "g", 0, 0);
    pllsty(1);
    plcol0(1);
    plbox("bcnst", 0, 0, p->log_y ? "bcnstvl" : "bcnstv", 0, 0);
    pllab(j->xl, j->yl, "");
    plmtex("t", 1.4, 0.0, 0.0, p->title ? p->title : "");
    for (size_t k = 0; k < p->nseries; k++) {
        const pf_series *s = &p->series[k];
        size_t m = 0;
        for (size_t i = 0; i < s->n; i++) {
            if (p->log_y && !(s->y[i] > 0)) continue;
            j->bx[m] = s->x[i] * j->fx;
            j->by[m] = p->log_y ? log10(s->y[i] * j->fy) : s->y[i] * j->fy;
            m++;
        }
        plcol0(2 + (PLINT)(k % 6));
        plwidth(s->dashed ? 1.6 : 2.0);
        pllsty(s->dashed ? 2 : 1);
        if (s->points) plpoin((PLINT)m, j->bx, j->by, 17);
        else plline((PLINT)m, j->bx, j->by);
        pllsty(1);
        plwidth(1.0);
    }
    draw_legend(p, j->fx, j->fy, xmin, xmax, ymin, ymax);
    plend1();
}

pf_status pf_picture_lines(pf_context *ctx, const char *path, int overwrite, const pf_lines *p)
{
    if (p->nseries < 1) return pf_fail(ctx, PF_EINVAL, "a line plot needs at least one series");
    int w = p->width ? p->width : 860, h = p->height ? p->height : 560;
    if (w < 200 || h < 150 || w > 8000 || h > 8000)
        return pf_fail(ctx, PF_EINVAL, "picture size %d x %d is outside 200x150..8000x8000", w, h);
    double xmin = INFINITY, xmax = -INFINITY, ymin = INFINITY, ymax = -INFINITY;
    for (size_t k = 0; k < p->nseries; k++) {
        const pf_series *s = &p->series[k];
        if (s->n < 1) return pf_fail(ctx, PF_EINVAL, "series %zu is empty", k + 1);
        if (!all_finite(s->x, s->n) || !all_finite(s->y, s->n))
            return pf_fail(ctx, PF_EINVAL, "series %zu holds non-finite values", k + 1);
        for (size_t i = 0; i < s->n; i++) {
            xmin = fmin(xmin, s->x[i]);
            xmax = fmax(xmax, s->x[i]);
            if (p->log_y && !(s->y[i] > 0)) continue;
            ymin = fmin(ymin, s->y[i]);
            ymax = fmax(ymax, s->y[i]);
        }
    }
    if (p->log_y && !(ymax > 0)) return pf_fail(ctx, PF_EINVAL, "a logarithmic plot needs positive values");
    char ux[32], yl[128], xl[96], yunit[48];
    double fx = pf_display_unit(p->xa.q, max_abs2(xmin, xmax), ux, sizeof ux);
    double fy = p->y_per_x ? 1 / fx : 1;
    if (p->y_per_x) inverse_unit(p->xa.q, ux, 1, yunit, sizeof yunit);
    else snprintf(yunit, sizeof yunit, "%s", p->y_unit ? p->y_unit : "");
    axis_label(xl, sizeof xl, p->xa.name, ux);
    axis_label(yl, sizeof yl, p->y_name ? p->y_name : "", yunit);
    xmin *= fx, xmax *= fx;
    ymin *= fy, ymax *= fy;
    if (!(xmax > xmin)) xmin -= 0.5, xmax += 0.5;
    if (p->log_y) {
        ymin = log10(ymin), ymax = log10(ymax);
        if (ymax - ymin > 12) ymin = ymax - 12; /* twelve decades keep the curve readable */
    }
    if (!(ymax > ymin)) ymin -= 0.5, ymax += 0.5;
    double pad = 0.05 * (ymax - ymin);
    if (!p->log_y && ymin >= 0 && ymin - pad < 0) ymin = pad; /* nonnegative data sit on the axis */
    ymin -= pad, ymax += pad;
    size_t nmax = 0;
    for (size_t k = 0; k < p->nseries; k++) nmax = p->series[k].n > nmax ? p->series[k].n : nmax;
    lines_job job = {p, NULL, w, h, fx, fy, {xmin, xmax, ymin, ymax}, "", "", NULL, NULL, device_for(path)};
    snprintf(job.xl, sizeof job.xl, "%s", xl);
    snprintf(job.yl, sizeof job.yl, "%s", yl);
    job.bx = malloc(nmax * sizeof *job.bx);
    job.by = malloc(nmax * sizeof *job.by);
    if (!job.bx || !job.by) {
        free(job.bx);
        free(job.by);
        return pf_fail(ctx, PF_ENOMEM, "out of memory");
    }
    pf_safefile sf;
    pf_status st = pf_safe_begin(ctx, path, overwrite, &sf);
    if (!st) {
        job.out = open_for_plplot(ctx, &sf, &st);
        if (job.out) st = finish(ctx, &sf, pf_plguard_run(ctx, draw_lines, &job));
    }
    free(job.bx);
    free(job.by);
    return st;
}
