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

/* Picture formats, chosen by the file name's ending: SVG and PDF (vector,
 * for papers) or PNG; all through cairo, which embeds no time in PNG and
 * SVG (PDF's creation date is fixed in finish()). */
typedef enum pic_format { PIC_PNG, PIC_SVG, PIC_PDF } pic_format;

static pic_format format_of(const char *path)
{
    size_t n = strlen(path);
    if (n >= 4 && strcasecmp(path + n - 4, ".svg") == 0) return PIC_SVG;
    if (n >= 4 && strcasecmp(path + n - 4, ".pdf") == 0) return PIC_PDF;
    return PIC_PNG;
}

static const char *device_for(const char *path)
{
    static const char *const dev[] = {"pngcairo", "svgcairo", "pdfcairo"};
    return dev[format_of(path)];
}

/* Text height in pixels: 14 px in the default picture sizes, growing with
 * larger requested pictures (a poster keeps its proportions) and never
 * below 11 px.  Fixed in pixels rather than PLplot's page-relative default,
 * so the margins computed before drawing hold whatever the height. */
#define TEXT_PX 14.25
static double text_px(int w, int h, int hdef)
{
    double s = fmin(w / 860.0, h / (double)hdef);
    return TEXT_PX * (s < 0.78 ? 0.78 : s);
}

/* Starts a stream that draws into out.  PLplot owns out from here on: plend1
 * closes it (plCloseFile), so the caller never closes it itself. */
static void begin_stream(FILE *out, int w, int h, const char *device, double chpx)
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
    PLFLT x0, x1, y0, y1;
    plgspa(&x0, &x1, &y0, &y1);
    plschr(chpx * (x1 - x0) / w, 1.0); /* millimetres per pixel from the page */
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

/* The same for SVG and PDF: a complete file ends with its closing tag
 * (SVG) or end-of-file marker (PDF); tail must occur in the last 63 bytes. */
static int ends_with_marker(const char *path, const char *marker)
{
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    char tail[64] = {0};
    long size = fseek(f, 0, SEEK_END) == 0 ? ftell(f) : -1;
    long back = size < 63 ? size : 63;
    int ok = size > 0 && fseek(f, -back, SEEK_END) == 0 && fread(tail, 1, (size_t)back, f) == (size_t)back;
    fclose(f);
    return ok && strstr(tail, marker) != NULL;
}

int pf_picture_pdf_drop_date(const char *path)
{
    FILE *f = fopen(path, "r+b");
    if (!f) return 0;
    char buf[4096];
    static const char key[] = "/CreationDate (";
    int ok = 1;
    long base = 0;
    for (;;) {
        if (fseek(f, base, SEEK_SET) != 0) { ok = 0; break; }
        size_t got = fread(buf, 1, sizeof buf, f);
        if (got < sizeof key) break;
        char *hit = NULL;
        for (size_t i = 0; i + sizeof key - 1 <= got && !hit; i++)
            if (memcmp(buf + i, key, sizeof key - 1) == 0) hit = buf + i;
        if (hit) {
            char *close = memchr(hit, ')', (size_t)(buf + got - hit));
            if (!close && hit > buf && got == sizeof buf) {
                base += (long)(hit - buf); /* the entry runs past this read: read again from the key */
                continue;
            }
            if (!close) { ok = 0; break; }
            size_t len = (size_t)(close - hit) + 1;
            memset(hit, ' ', len);
            ok = fseek(f, base + (hit - buf), SEEK_SET) == 0 && fwrite(hit, 1, len, f) == len;
            break;
        }
        if (got < sizeof buf) break;
        base += (long)(got - sizeof key); /* overlap: a key split between reads */
    }
    return fclose(f) == 0 && ok;
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
    pic_format fmt = format_of(sf->final_path);
    int complete = fmt == PIC_SVG ? ends_with_marker(sf->temp_path, "</svg>")
                 : fmt == PIC_PDF ? ends_with_marker(sf->temp_path, "%%EOF") && pf_picture_pdf_drop_date(sf->temp_path)
                                  : png_complete(sf->temp_path);
    if (!complete) {
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

void pf_picture_resample(const double *src, size_t n, ptrdiff_t sstride, double *dst, size_t m, ptrdiff_t dstride,
                         int at_samples)
{
    double ratio = (double)(at_samples ? n - 1 : n) / (double)m; /* samples per pixel */
    double half = ratio > 1 ? ratio : 1;                          /* tent half-width, in samples */
    for (size_t j = 0; j < m; j++) {
        double u = ((double)j + 0.5) * ratio - (at_samples ? 0 : 0.5); /* pixel centre in sample indices */
        long i0 = (long)ceil(u - half), i1 = (long)floor(u + half);
        if (i0 < 0) i0 = 0;
        if (i1 > (long)n - 1) i1 = (long)n - 1;
        double sum = 0, wsum = 0;
        for (long i = i0; i <= i1; i++) {
            double wt = 1 - fabs((double)i - u) / half;
            if (wt <= 0) continue;
            sum += wt * src[i * sstride];
            wsum += wt;
        }
        dst[(ptrdiff_t)j * dstride] = wsum > 0 ? sum / wsum : src[(u < 0 ? 0 : (ptrdiff_t)n - 1) * sstride];
    }
}

static int decimals_for(double step)
{
    int d = (int)-floor(log10(step) + 1e-9);
    return d < 0 ? 0 : (d > 12 ? 12 : d);
}

static int label_chars(double v, int decimals)
{
    char b[64];
    return snprintf(b, sizeof b, "%.*f", decimals, v);
}

/* The end label's decimals: the ticks' own when the end lies within 2 % of
 * a step from a tick (it then reads as that tick), else to a tenth of the
 * step (-4.3 beside steps of 1, -251 beside steps of 100). */
static int end_decimals(double v, double step, int d)
{
    double q = v / step;
    if (fabs(q - nearbyint(q)) < 0.02) return d;
    int e = decimals_for(step / 10);
    return e < d ? d : e;
}

int pf_picture_ticks(const pf_tick_spec *spec, double *step_out, pf_tick_label *lab, int max)
{
    double lo = spec->lo, hi = spec->hi, len_px = spec->len_px, char_px = spec->char_px, gap_px = spec->gap_px;
    double span = hi - lo;
    if (!(span > 0) || !isfinite(span) || !(len_px > 0) || max < 2) return 0;
    static const double mant[] = {1, 2, 5};
    int e0 = (int)floor(log10(span / 50));
    double step = 0;
    int d = 0;
    for (int k = 0; k < 30 && !step; k++) {
        double s = mant[k % 3] * pow(10.0, e0 + k / 3);
        if (span / s > 50) continue;
        int dd = decimals_for(s);
        int wide = label_chars(s * ceil(lo / s), dd);
        int c = label_chars(s * floor(hi / s), dd);
        wide = c > wide ? c : wide;
        if (s / span * len_px >= wide * char_px + gap_px) step = s, d = dd;
    }
    if (!step) /* not even one interval fits: the two ends alone */
        step = span, d = decimals_for(span);
    *step_out = step;
    int n = 0;
    int dlo = end_decimals(lo, step, d), dhi = end_decimals(hi, step, d);
    double wlo = label_chars(lo, dlo) * char_px, whi = label_chars(hi, dhi) * char_px;
    lab[n++] = (pf_tick_label){lo, 0, dlo};
    for (double k = ceil(lo / step - 1e-6); k * step <= hi + 1e-6 * step && n < max - 1; k++) {
        double v = fabs(k) < 0.5 ? 0 : k * step;
        double pos = (v - lo) / span, w = label_chars(v, d) * char_px;
        /* Centres at least half of both labels' widths plus the gap apart. */
        if (pos * len_px < (wlo + w) / 2 + gap_px || (1 - pos) * len_px < (whi + w) / 2 + gap_px) continue;
        lab[n++] = (pf_tick_label){v, pos, d};
    }
    lab[n++] = (pf_tick_label){hi, 1, dhi};
    return n;
}

/* Labels of one axis: a side of the panel ("b" bottom, "l" left, "r" the
 * colour bar's right), their values and widest label in characters. */
typedef struct axis_labels {
    pf_tick_label lab[64];
    int n;
    double step;
    int widest;
} axis_labels;

/* Width of a digit or sign, in text heights (DejaVu Sans figures, cairo's
 * default face). */
#define CHAR_W 0.87

/* Along the axis (x): labels side by side, a character's width each plus
 * two of gap (along = 1); across (y 2.6, colour bar 3.0): stacked, `along` text
 * heights apart (the colour bar's sparser, its labels being read less). */
static void choose_ticks(axis_labels *a, double lo, double hi, double len_px, double ch, double along)
{
    pf_tick_spec spec = {.lo = lo, .hi = hi, .len_px = len_px, .char_px = along == 1 ? CHAR_W * ch : 0,
                         .gap_px = along == 1 ? 2.0 * CHAR_W * ch : along * ch};
    a->n = pf_picture_ticks(&spec, &a->step, a->lab, 64);
    a->widest = 0;
    for (int i = 0; i < a->n; i++) {
        int c = label_chars(a->lab[i].value, a->lab[i].decimals);
        a->widest = c > a->widest ? c : a->widest;
    }
}

static void draw_tick_labels(const axis_labels *a, const char *side, double disp, double just)
{
    for (int i = 0; i < a->n; i++) {
        char b[64];
        double v = a->lab[i].value;
        snprintf(b, sizeof b, "%.*f", a->lab[i].decimals, v);
        if (strspn(b, "-0.") == strlen(b) && b[0] == '-') memmove(b, b + 1, strlen(b)); /* no "-0.0" */
        plmtex(side, disp, a->lab[i].pos, just, b);
    }
}

/* Pixel layout of a map, decided before PLplot starts (text has a fixed
 * pixel size, text_px). */
typedef struct map_layout {
    int w, h;
    double ch;                     /* text height, px */
    double left, right, top, bottom; /* panel edges, px from the left / top */
    axis_labels xl, yl, vl;        /* tick labels: x, y, colour bar */
    int not_to_scale;
    double vlabel_pos;             /* centre of the colour bar's label along the bar (0..1, or below 0.5 when longer) */
} map_layout;

/* Margins around the panel in text heights: the title above; tick labels
 * and the axis name below; the colour bar (gap, bar, labels, name, clip
 * note) on the right; tick labels and the axis name on the left. */
#define MAP_TOP 3.3
#define MAP_BOTTOM 4.6
static double map_left(int widest, double ch) { return (1.0 + CHAR_W * widest + 2.2) * ch; }
static double map_right(int widest, double ch) { return (1.6 + 1.6 + 0.8 + CHAR_W * widest + 4.4) * ch; }

/* Lays the map out: the panel fills the room the picture leaves it, or,
 * with equal aspect, as much as keeps one unit equally long on both axes,
 * and a picture whose size was not given shrinks to the panel, so no blank
 * band is left above the title or beside the panel.  Equal aspect gives way
 * (not to scale, said in the title) when it would leave a side under 7
 * text heights: a sliver with crowded labels says less than a stretched map. */
static void layout_map(map_layout *L, const pf_map *m, int equal, const double box[4], double vmin, double vmax,
                       double vlabel_px)
{
    int wgiven = m->width != 0, hgiven = m->height != 0;
    L->w = wgiven ? m->width : 860;
    L->h = hgiven ? m->height : 640;
    L->ch = text_px(L->w, L->h, 640);
    double ch = L->ch;
    double ex = box[1] - box[0], ey = box[3] - box[2];
    int wy = 4, wv = 4;
    L->not_to_scale = 0;
    double pw = 0, ph = 0;
    for (int pass = 0; pass < 3; pass++) {
        /* The room: the given size, else the default 860 x 640 at most. */
        double pwmax = (wgiven ? m->width : 860) - map_left(wy, ch) - map_right(wv, ch);
        double phmax = (hgiven ? m->height : 640) - (MAP_TOP + MAP_BOTTOM) * ch;
        pw = pwmax, ph = phmax;
        if (equal && !L->not_to_scale) {
            double r = ey / ex;
            if (pw * r <= ph) ph = pw * r; else pw = ph / r;
            if (pw < 7 * ch || ph < 7 * ch) {
                L->not_to_scale = 1;
                pw = pwmax, ph = phmax;
            }
        }
        choose_ticks(&L->yl, box[2], box[3], ph, ch, 2.6);
        choose_ticks(&L->vl, vmin, vmax, ph, ch, 3.0);
        wy = L->yl.widest, wv = L->vl.widest;
        /* The picture takes the panel's size where it was not given. */
        if (!wgiven) L->w = (int)lround(map_left(wy, ch) + pw + map_right(wv, ch));
        if (!hgiven) L->h = (int)lround((MAP_TOP + MAP_BOTTOM) * ch + ph);
        if (L->w < 480 && !wgiven) L->w = 480; /* room for a title */
    }
    L->left = map_left(wy, ch);
    L->right = L->left + pw;
    L->top = MAP_TOP * ch;
    L->bottom = L->top + ph;
    /* The colour bar's label runs along it; beside a low panel it would
     * leave the picture, so the picture grows below the panel (the title
     * stays right above it) and the label hangs from the bar's top. */
    L->vlabel_pos = 0.5;
    if (vlabel_px > ph) {
        L->vlabel_pos = 1 - vlabel_px / (2 * ph);
        if (!hgiven && L->h < L->top + vlabel_px + 1.0 * ch) L->h = (int)lround(L->top + vlabel_px + 1.0 * ch);
    }
    choose_ticks(&L->xl, box[0], box[1], pw, ch, 1);
}

/* Everything a map's drawing needs, computed before PLplot starts. */
typedef struct map_job {
    const pf_map *m;
    FILE *out;
    map_layout lay;
    PLFLT **rows;              /* the image drawn: inx x iny cells over the box */
    size_t inx, iny;
    double vmin, vmax;
    int clipped;
    char clip_note[96];
    double box[4];             /* x0, x1, y0, y1 in display units */
    double fy;                 /* SI -> display units on y (marks) */
    char lx[96], ly[96];
    const char *vlabel;
    char title[320];
    const char *device;
} map_job;

/* Characters a PLplot text shows: escapes (#u, #d, #gX for a Greek
 * letter, ## for #) count as what they print. */
static double visible_chars(const char *t)
{
    double n = 0;
    for (const char *c = t; *c; c++) {
        if (*c == '#' && c[1]) {
            if (c[1] == 'g' && c[2]) n += 1, c += 2;
            else if (c[1] == '#') n += 1, c += 1;
            else c += 1; /* #u, #d, #b...: no glyph */
        } else if ((*c & 0xC0) != 0x80) {
            n += 1; /* one per UTF-8 character */
        }
    }
    return n;
}

/* A mark: a dashed line across the panel, dark under light, so it shows on
 * both ends of the colour scale, and its label in a dark box at the right. */
static void draw_mark(const map_job *j, const pf_mark *mk)
{
    double y = mk->at * j->fy, x0 = j->box[0], x1 = j->box[1];
    if (!(y >= j->box[2] && y <= j->box[3])) return;
    PLFLT lx[2] = {x0, x1}, ly[2] = {y, y};
    plcol0(1);
    plwidth(3.0);
    plline(2, lx, ly);
    plcol0(0);
    plwidth(1.2);
    pllsty(2);
    plline(2, lx, ly);
    pllsty(1);
    plwidth(1.0);
    if (!mk->label || !*mk->label) return;
    /* Label box: its width estimated from the visible characters (this
     * PLplot has no text-measuring call), converted to world units. */
    double wx = (x1 - x0) * visible_chars(mk->label) * 0.8 * j->lay.ch / (j->lay.right - j->lay.left);
    double hy = (j->box[3] - j->box[2]) * (1.9 * j->lay.ch) / (j->lay.bottom - j->lay.top);
    double pad = (x1 - x0) * (0.4 * j->lay.ch) / (j->lay.right - j->lay.left);
    double right = x1 - pad, left = right - wx - 2 * pad;
    double yb = y + 0.25 * hy, yt = yb + hy;
    if (yt > j->box[3]) yb = y - 0.25 * hy - hy, yt = y - 0.25 * hy; /* near the top: below the line */
    PLFLT fx[4] = {left, right, right, left}, fyv[4] = {yb, yb, yt, yt};
    plcol0(1);
    plfill(4, fx, fyv);
    plcol0(0);
    plptex(right - pad, yb + 0.55 * hy, 1, 0, 1.0, mk->label); /* room for subscripts below */
}

/* Draws a map (runs under pf_plguard). */
static void draw_map(void *user)
{
    const map_job *j = user;
    const map_layout *L = &j->lay;
    double x0 = j->box[0], x1 = j->box[1], y0 = j->box[2], y1 = j->box[3];
    double vmin = j->vmin, vmax = j->vmax;
    begin_stream(j->out, L->w, L->h, j->device, L->ch);
    plvpor(L->left / L->w, L->right / L->w, 1 - L->bottom / L->h, 1 - L->top / L->h);
    plwind(x0, x1, y0, y1);
    plimagefr((PLFLT_MATRIX)j->rows, (PLINT)j->inx, (PLINT)j->iny, x0, x1, y0, y1, vmin, vmax, vmin, vmax, NULL, NULL);
    for (size_t k = 0; k < j->m->nmarks; k++) draw_mark(j, &j->m->marks[k]);
    plcol0(1);
    /* Ticks point outwards: inside they vanish against dark parts of the
     * map.  Numbers come from pf_picture_ticks (both ends labelled). */
    plbox("bcsti", L->xl.step, 0, "bcsti", L->yl.step, 0);
    draw_tick_labels(&L->xl, "b", 1.5, 0.5);
    draw_tick_labels(&L->yl, "lv", 0.7, 1.0);
    plmtex("b", 3.3, 0.5, 0.5, j->lx);
    plmtex("l", 0.7 + CHAR_W * L->yl.widest + 1.0, 0.5, 0.5, j->ly);
    plmtex("t", 1.5, 0.0, 0.0, j->title);
    /* Colour bar: a vertical strip of the same map with its own axis. */
    double ramp_v[2][256];
    PLFLT *ramp[2] = {ramp_v[0], ramp_v[1]};
    for (int i = 0; i < 256; i++) ramp_v[0][i] = ramp_v[1][i] = vmin + (vmax - vmin) * i / 255.0;
    double bl = L->right + 1.6 * L->ch, br = bl + 1.6 * L->ch;
    plvpor(bl / L->w, br / L->w, 1 - L->bottom / L->h, 1 - L->top / L->h);
    plwind(0, 1, vmin, vmax);
    plimagefr((PLFLT_MATRIX)ramp, 2, 256, 0, 1, vmin, vmax, vmin, vmax, vmin, vmax, NULL, NULL);
    plcol0(1);
    plbox("bc", 0, 0, "bcsti", L->vl.step, 0);
    draw_tick_labels(&L->vl, "rv", 0.8, 0.0);
    double name_at = 0.8 + CHAR_W * L->vl.widest + 1.4;
    plmtex("r", name_at, L->vlabel_pos, 0.5, j->vlabel);
    if (j->clipped) {
        /* Values above the scale share its top colour: say so beside the bar,
         * and cap the bar with an arrow head in that colour. */
        plmtex("r", name_at + 1.5, L->vlabel_pos, 0.5, j->clip_note);
        double tip = 1.3 * L->ch;
        plvpor(bl / L->w, br / L->w, 1 - (L->top - 0.15 * L->ch) / L->h, 1 - (L->top - tip) / L->h);
        plwind(0, 1, 0, 1);
        PLFLT ax[4] = {0, 1, 0.5, 0}, ay[4] = {0, 0, 1, 0};
        plcol1(1.0);
        plfill(3, ax, ay);
        plcol0(1);
        plline(4, ax, ay);
    }
    plend1();
}

/* The image drawn for a map: with smooth set, resampled to the panel's
 * pixels (pf_picture_resample along y, then x), else the samples as cells;
 * values clipped to vmax.  NULL on failure to allocate. */
static double *map_image(const pf_map *m, const double *vals, const map_layout *L, size_t *inx, size_t *iny)
{
    size_t nx = m->nx, ny = m->ny;
    if (m->smooth) {
        /* The panel's pixels, at most 2048 a side (cairo scales the rest). */
        double pw = L->right - L->left, ph = L->bottom - L->top;
        nx = (size_t)fmin(2048, fmax(2, lround(pw)));
        ny = (size_t)fmin(2048, fmax(2, lround(ph)));
    }
    double *img = malloc(nx * ny * sizeof *img);
    if (!img) return NULL;
    if (m->smooth) {
        double *tmp = malloc(m->nx * ny * sizeof *tmp);
        if (!tmp) {
            free(img);
            return NULL;
        }
        for (size_t ix = 0; ix < m->nx; ix++) pf_picture_resample(vals + ix * m->ny, m->ny, 1, tmp + ix * ny, ny, 1, m->y_at_samples);
        for (size_t iy = 0; iy < ny; iy++)
            pf_picture_resample(tmp + iy, m->nx, (ptrdiff_t)ny, img + iy, nx, (ptrdiff_t)ny, 0);
        free(tmp);
    } else {
        memcpy(img, vals, nx * ny * sizeof *img);
    }
    *inx = nx, *iny = ny;
    return img;
}

/* Refuses a map that cannot be drawn (too few samples, non-finite or
 * descending axes, a bad colour-scale top or mark, a size out of range);
 * gives the picture's size in pixels. */
static pf_status check_map(pf_context *ctx, const pf_map *m, int *wq, int *hq)
{
    if (m->nx < 2 || m->ny < 2) return pf_fail(ctx, PF_EINVAL, "a map needs at least 2 x 2 samples, got %zu x %zu", m->nx, m->ny);
    if (!all_finite(m->x, m->nx) || !all_finite(m->y, m->ny) || !all_finite(m->values, m->nx * m->ny))
        return pf_fail(ctx, PF_EINVAL, "map '%s': coordinates and values must be finite", m->title ? m->title : "");
    if (!(m->x[m->nx - 1] > m->x[0]) || !(m->y[m->ny - 1] > m->y[0]))
        return pf_fail(ctx, PF_EINVAL, "map axes must ascend");
    if (!isfinite(m->value_max) || m->value_max < 0)
        return pf_fail(ctx, PF_EINVAL, "map '%s': the colour scale's top must be positive and finite, got %g",
                       m->title ? m->title : "", m->value_max);
    for (size_t k = 0; k < m->nmarks; k++)
        if (!isfinite(m->marks[k].at)) return pf_fail(ctx, PF_EINVAL, "map mark %zu: position must be finite", k + 1);
    *wq = m->width ? m->width : 860, *hq = m->height ? m->height : 640;
    if (*wq < 200 || *hq < 150 || *wq > 8000 || *hq > 8000)
        return pf_fail(ctx, PF_EINVAL, "picture size %d x %d is outside 200x150..8000x8000", *wq, *hq);
    return PF_OK;
}

/* Unit of the colour scale: the values' own, or per unit length (area) of
 * the axes shown in units ux and uy when the map is a density per_x/per_y. */
static void value_unit_text(const pf_map *m, const char *ux, const char *uy, char *vunit, size_t size)
{
    if (m->per_x && m->per_y && strcmp(ux, uy) == 0 && m->xa.q == m->ya.q) {
        inverse_unit(m->xa.q, ux, 2, vunit, size);
    } else if (m->per_x || m->per_y) {
        char a[32] = "", b[32] = "";
        if (m->per_x) inverse_unit(m->xa.q, ux, 1, a, sizeof a);
        if (m->per_y) inverse_unit(m->ya.q, uy, 1, b, sizeof b);
        snprintf(vunit, size, "%s%s%s", a, *a && *b ? " " : "", b);
    } else {
        snprintf(vunit, size, "%s", m->value_unit ? m->value_unit : "");
    }
}

/* Folds a power of ten into the colour scale's unit (vunit, 64 bytes) when
 * the top lies outside 1e-2..1e4, rather than let PLplot print a detached
 * "(x10^n)" beside the colour bar: the n values and the range are scaled. */
static void fold_power_of_ten(double *vals, size_t n, double *vmin, double *vmax, char vunit[64])
{
    int e10 = *vmax > 0 ? (int)floor(log10(*vmax)) : 0;
    if (e10 >= -2 && e10 <= 3) return;
    double f = pow(10.0, -e10);
    for (size_t i = 0; i < n; i++) vals[i] *= f;
    *vmin *= f;
    *vmax *= f;
    char plain[64];
    snprintf(plain, sizeof plain, "%s", vunit);
    snprintf(vunit, 64, "10#u%d#d %.40s", e10, plain);
}

pf_status pf_picture_map(pf_context *ctx, const char *path, int overwrite, const pf_map *m)
{
    int wq = 0, hq = 0;
    pf_status s = check_map(ctx, m, &wq, &hq);
    if (s) return s;
    /* Cell edges: samples are centres of uniform cells. */
    double hx = (m->x[m->nx - 1] - m->x[0]) / (double)(m->nx - 1) / 2;
    double hy = m->y_at_samples && m->smooth ? 0 : (m->y[m->ny - 1] - m->y[0]) / (double)(m->ny - 1) / 2;
    char ux[32], uy[32];
    double fx = pf_display_unit(m->xa.q, max_abs2(m->x[0] - hx, m->x[m->nx - 1] + hx), ux, sizeof ux);
    double fy = pf_display_unit(m->ya.q, max_abs2(m->y[0] - hy, m->y[m->ny - 1] + hy), uy, sizeof uy);
    int equal = m->equal_aspect && m->xa.q == m->ya.q;
    int not_to_scale = 0;
    if (equal) {
        /* Would equal aspect leave a sliver?  Decided on the extents alone
         * (the colour bar's labels barely move the margins), before the
         * units, since a map not to scale shows each axis in its own unit. */
        map_layout pre;
        double ext[4] = {m->x[0] - hx, m->x[m->nx - 1] + hx, m->y[0] - hy, m->y[m->ny - 1] + hy};
        layout_map(&pre, m, 1, ext, 0, 1, 0);
        not_to_scale = pre.not_to_scale;
        equal = !not_to_scale;
    }
    if (equal && m->xa.q != PF_Q_PLAIN) {
        /* One unit for both axes, or equal lengths would not look equal. */
        double both = fmax(max_abs2(m->x[0] - hx, m->x[m->nx - 1] + hx), max_abs2(m->y[0] - hy, m->y[m->ny - 1] + hy));
        fx = fy = pf_display_unit(m->xa.q, both, ux, sizeof ux);
        snprintf(uy, sizeof uy, "%s", ux);
    }
    double vscale = 1;
    if (m->per_x) vscale /= fx;
    if (m->per_y) vscale /= fy;
    size_t n = m->nx * m->ny;
    double *vals = malloc(n * sizeof *vals);
    if (!vals) return pf_fail(ctx, PF_ENOMEM, "out of memory");
    double vmin = INFINITY, vmax = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        vals[i] = m->values[i] * vscale;
        vmin = fmin(vmin, vals[i]);
        vmax = fmax(vmax, vals[i]);
    }
    /* Densities start at zero; a flat map still gets a visible range. */
    if (vmin >= 0) vmin = 0;
    int clipped = 0;
    if (m->value_max > 0) {
        double top = m->value_max * vscale;
        clipped = vmax > top;
        if (!(top > vmin)) {
            free(vals);
            return pf_fail(ctx, PF_EINVAL, "map '%s': the colour scale's top %g is not above its bottom %g",
                           m->title ? m->title : "", m->value_max, vmin / vscale);
        }
        vmax = top;
        for (size_t i = 0; i < n; i++) vals[i] = fmin(vals[i], top);
    }
    if (!(vmax > vmin)) vmax = vmin + 1;
    char vunit[64], vlabel[160];
    value_unit_text(m, ux, uy, vunit, sizeof vunit);
    fold_power_of_ten(vals, n, &vmin, &vmax, vunit);
    axis_label(vlabel, sizeof vlabel, m->value_name ? m->value_name : "value", vunit);
    map_job job = {.m = m, .vmin = vmin, .vmax = vmax, .clipped = clipped, .fy = fy, .vlabel = vlabel,
                   .device = device_for(path),
                   .box = {(m->x[0] - hx) * fx, (m->x[m->nx - 1] + hx) * fx, (m->y[0] - hy) * fy, (m->y[m->ny - 1] + hy) * fy}};
    /* The colour bar's label, and the clip note beside it, along the bar. */
    double vlabel_px = visible_chars(vlabel) * 0.8 * text_px(wq, hq, 640);
    if (clipped) vlabel_px = fmax(vlabel_px, 22 * 0.8 * text_px(wq, hq, 640));
    layout_map(&job.lay, m, equal, job.box, vmin, vmax, vlabel_px);
    job.lay.not_to_scale = not_to_scale;
    if (clipped) {
        const pf_tick_label *top = &job.lay.vl.lab[job.lay.vl.n - 1];
        snprintf(job.clip_note, sizeof job.clip_note, "clipped above %.*f", top->decimals, top->value);
    }
    double *img = map_image(m, vals, &job.lay, &job.inx, &job.iny);
    PLFLT **rows = img ? malloc(job.inx * sizeof *rows) : NULL;
    free(vals);
    if (!rows) {
        free(img);
        return pf_fail(ctx, PF_ENOMEM, "out of memory");
    }
    for (size_t ix = 0; ix < job.inx; ix++) rows[ix] = img + ix * job.iny;
    job.rows = rows;
    pf_safefile sf;
    s = pf_safe_begin(ctx, path, overwrite, &sf);
    if (!s) {
        job.out = open_for_plplot(ctx, &sf, &s);
        if (job.out) {
            int nts = job.lay.not_to_scale;
            snprintf(job.title, sizeof job.title, "%s%s", m->title ? m->title : "",
                     nts ? (m->title && *m->title ? " (x and y not to scale)" : "x and y not to scale") : "");
            axis_label(job.lx, sizeof job.lx, m->xa.name, ux);
            axis_label(job.ly, sizeof job.ly, m->ya.name, uy);
            s = finish(ctx, &sf, pf_plguard_run(ctx, draw_map, &job));
        }
    }
    free(img);
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

/* Legend rows and box size as fractions of the panel. */
static size_t legend_rows(const pf_lines *p)
{
    size_t rows = 0;
    for (size_t k = 0; k < p->nseries; k++) rows += p->series[k].label != NULL;
    return rows;
}
#define LEGEND_W 0.30
#define LEGEND_ROW 0.065
static double legend_height(size_t rows) { return LEGEND_ROW * (double)rows + 0.03; }

/* The corner (0..3) whose legend box hides the fewest samples, the
 * requested one winning ties; *hidden gets that count. */
static int legend_corner(const pf_lines *p, double sx, double sy, const double box[4], size_t *hidden)
{
    double xmin = box[0], xmax = box[1], ymin = box[2], ymax = box[3];
    double W = xmax - xmin, H = ymax - ymin;
    double bw = LEGEND_W * W, bh = legend_height(legend_rows(p)) * H;
    int corner = p->legend;
    size_t best = (size_t)-1;
    for (int t = 0; t < 4 && best; t++) {
        int c = (p->legend + t) % 4;
        double l = (c & 1) ? xmax - 0.02 * W - bw : xmin + 0.02 * W;
        double tp = (c & 2) ? ymin + 0.03 * H + bh : ymax - 0.03 * H;
        size_t h = samples_in_box(p, sx, sy, l, bw, tp, bh);
        if (h < best) best = h, corner = c;
    }
    *hidden = best;
    return corner;
}

/* Markers for series that coincide with an earlier one (same x, y within
 * 1 % of the plot's span, or 2 % on a log scale): a dashed curve on top of
 * an equal solid one would be invisible.  marked[k] is the marker stride
 * (0: none); yspan in the series' own units. */
static void coincident_markers(const pf_lines *p, double yspan, size_t *marked)
{
    for (size_t k = 0; k < p->nseries; k++) {
        marked[k] = 0;
        const pf_series *s = &p->series[k];
        if (s->points || s->n < 2) continue;
        for (size_t j = 0; j < k && !marked[k]; j++) {
            const pf_series *r = &p->series[j];
            if (r->n != s->n) continue;
            int same = 1;
            for (size_t i = 0; i < s->n && same; i++)
                same = s->x[i] == r->x[i] && (p->log_y ? fabs(s->y[i] - r->y[i]) <= 0.02 * fabs(r->y[i])
                                                       : fabs(s->y[i] - r->y[i]) <= 0.01 * yspan);
            if (same) marked[k] = s->n / 24 > 1 ? s->n / 24 : 1; /* about two dozen markers */
        }
    }
}

static const PLINT MARKER_CODE[6] = {17, 5, 4, 11, 13, 2}; /* filled dot, cross, circle, diamond, triangle, plus */

/* Everything a line plot's drawing needs, computed before PLplot starts. */
typedef struct lines_job {
    const pf_lines *p;
    FILE *out;
    int w, h;
    double ch;                 /* text height, px */
    double fx, fy;
    double box[4];             /* xmin, xmax, ymin, ymax in display units */
    char xl[96], yl[128];
    PLFLT *bx, *by;            /* scratch for one series */
    size_t *marked;            /* marker stride per series, 0: none */
    const double *rx, *ry;     /* residual samples (display units), rn of them */
    size_t rn;
    double rbox[2];            /* residual panel's y range */
    char rl[160];              /* its y label */
    const char *device;
} lines_job;

/* Legend on a white box with a frame, one row per labelled series, in the
 * corner legend_corner chose. */
static void draw_legend(const lines_job *j)
{
    const pf_lines *p = j->p;
    size_t rows = legend_rows(p), hidden;
    if (!rows) return;
    double xmin = j->box[0], xmax = j->box[1], ymin = j->box[2], ymax = j->box[3];
    int corner = legend_corner(p, j->fx, j->fy, j->box, &hidden);
    double W = xmax - xmin, H = ymax - ymin;
    double bw = LEGEND_W * W, rh = LEGEND_ROW * H, bh = legend_height(rows) * H;
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
        PLFLT mx = (lx[0] + lx[1]) / 2;
        if (s->points) plpoin(1, &mx, &ly[0], 17);
        else plline(2, lx, ly);
        if (j->marked[k]) plpoin(1, &mx, &ly[0], MARKER_CODE[k % 6]);
        pllsty(1);
        plwidth(1.0);
        plcol0(1);
        plptex(left + 0.27 * bw, y, 1, 0, 0, s->label);
        row++;
    }
}

/* Draws a line plot (runs under pf_plguard). */
static void draw_lines(void *user)
{
    const lines_job *j = user;
    const pf_lines *p = j->p;
    double xmin = j->box[0], xmax = j->box[1], ymin = j->box[2], ymax = j->box[3];
    begin_stream(j->out, j->w, j->h, j->device, j->ch);
    /* With a residual panel the plot takes the upper three quarters and
     * the x axis is labelled under the residual panel only. */
    double ylo = j->rn ? 0.36 : 0.13;
    plvpor(0.11, 0.95, ylo, 0.89);
    plwind(xmin, xmax, ymin, ymax);
    /* Light grid first, frame and labels over it. */
    plcol0(6);
    pllsty(3);
    plbox("g", 0, 0, "g", 0, 0);
    pllsty(1);
    plcol0(1);
    plbox(j->rn ? "bcst" : "bcnst", 0, 0, p->log_y ? "bcnstvl" : "bcnstv", 0, 0);
    pllab(j->rn ? "" : j->xl, j->yl, "");
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
        if (j->marked[k]) {
            /* Sparse markers, offset per series so two marked curves interleave. */
            size_t step = j->marked[k], n = 0;
            for (size_t i = (k * step) / 3 % step; i < m; i += step) j->bx[n] = j->bx[i], j->by[n] = j->by[i], n++;
            plpoin((PLINT)n, j->bx, j->by, MARKER_CODE[k % 6]);
        }
    }
    draw_legend(j);
    if (j->rn) {
        plvpor(0.11, 0.95, 0.13, 0.31);
        plwind(xmin, xmax, j->rbox[0], j->rbox[1]);
        plcol0(6);
        pllsty(3);
        plbox("g", 0, 0, "g", 0, 0);
        pllsty(1);
        PLFLT zx[2] = {xmin, xmax}, zy[2] = {0, 0};
        plline(2, zx, zy);
        plcol0(1);
        plbox("bcnst", 0, 0, "bcnstv", 0, 0);
        pllab(j->xl, "", "");
        plmtex("t", 0.4, 0.0, 0.0, j->rl);
        plcol0(2 + (PLINT)((p->residual_of - 1) % 6));
        plwidth(1.6);
        plline((PLINT)j->rn, (PLFLT *)j->rx, (PLFLT *)j->ry);
        if (j->rn <= 60) plpoin((PLINT)j->rn, (PLFLT *)j->rx, (PLFLT *)j->ry, 17);
        plwidth(1.0);
    }
    plend1();
}

/* The reference series r at x (linear between its samples, which must
 * ascend); NAN outside its range. */
static double interpolate_series(const pf_series *r, double x)
{
    if (r->n == 1) return x == r->x[0] ? r->y[0] : NAN;
    if (x < r->x[0] || x > r->x[r->n - 1]) return NAN;
    size_t lo = 0, hi = r->n - 1;
    while (hi - lo > 1) {
        size_t mid = (lo + hi) / 2;
        if (r->x[mid] <= x) lo = mid; else hi = mid;
    }
    double dx = r->x[hi] - r->x[lo];
    return dx > 0 ? r->y[lo] + (r->y[hi] - r->y[lo]) * (x - r->x[lo]) / dx : r->y[lo];
}

/* Refuses a line plot that cannot be drawn (no or empty series, non-finite
 * values, a size out of range, a bad residual pair or reference, a
 * logarithmic plot of no positive value); gives the size in pixels and the
 * data's range (SI units; y over positive values only when log_y). */
static pf_status check_lines(pf_context *ctx, const pf_lines *p, int *w, int *h, double range[4])
{
    if (p->nseries < 1) return pf_fail(ctx, PF_EINVAL, "a line plot needs at least one series");
    *w = p->width ? p->width : 860, *h = p->height ? p->height : 560;
    if (*w < 200 || *h < 150 || *w > 8000 || *h > 8000)
        return pf_fail(ctx, PF_EINVAL, "picture size %d x %d is outside 200x150..8000x8000", *w, *h);
    if ((p->residual_of || p->residual_ref) &&
        (p->residual_of < 1 || p->residual_of > p->nseries || p->residual_ref < 1 || p->residual_ref > p->nseries ||
         p->residual_of == p->residual_ref))
        return pf_fail(ctx, PF_EINVAL, "a residual needs two different series among 1..%zu, got %zu and %zu", p->nseries,
                       p->residual_of, p->residual_ref);
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
    if (p->residual_ref) {
        const pf_series *r = &p->series[p->residual_ref - 1];
        for (size_t i = 1; i < r->n; i++)
            if (!(r->x[i] > r->x[i - 1]))
                return pf_fail(ctx, PF_EINVAL, "the residual's reference (series %zu) needs ascending x", p->residual_ref);
    }
    range[0] = xmin, range[1] = xmax, range[2] = ymin, range[3] = ymax;
    return PF_OK;
}

/* The residual panel: result minus reference at the result's x (display
 * units fx, fy) into res (x in res[0..], y in res[rcap..]), its symmetric
 * range and its label (y axis unit yunit) in job.  Fails when no x of the
 * result lies inside the reference's range.  ylo, yhi: the main panel's
 * range, which scales the panel of an exactly zero residual. */
static pf_status residual_panel(pf_context *ctx, const pf_lines *p, double fx, double fy, double ylo, double yhi,
                                const char *yunit, double *res, size_t rcap, lines_job *job)
{
    const pf_series *a = &p->series[p->residual_of - 1], *r = &p->series[p->residual_ref - 1];
    double lo = INFINITY, hi = -INFINITY;
    for (size_t i = 0; i < a->n; i++) {
        double ref = interpolate_series(r, a->x[i]);
        if (isnan(ref)) continue;
        res[job->rn] = a->x[i] * fx;
        res[rcap + job->rn] = (a->y[i] - ref) * fy;
        lo = fmin(lo, res[rcap + job->rn]);
        hi = fmax(hi, res[rcap + job->rn]);
        job->rn++;
    }
    if (!job->rn)
        return pf_fail(ctx, PF_EINVAL, "series %zu has no x inside the range of its residual's reference (series %zu)",
                       p->residual_of, p->residual_ref);
    /* Symmetric about zero, so the sign of the deviation reads at once. */
    double amp = fmax(fabs(lo), fabs(hi));
    if (!(amp > 0)) amp = fmax(1e-300, 1e-12 * (fabs(yhi) + fabs(ylo)));
    /* A power of ten goes into the unit text above the panel, not into
     * PLplot's detached "(x10^n)" that would collide with the label. */
    int e10 = (int)floor(log10(amp));
    double f = e10 < -2 || e10 > 3 ? pow(10.0, -e10) : 1;
    for (size_t i = 0; i < job->rn; i++) res[rcap + i] *= f;
    amp *= f;
    job->rbox[0] = -1.15 * amp, job->rbox[1] = 1.15 * amp;
    job->rx = res, job->ry = res + rcap;
    if (f != 1) snprintf(job->rl, sizeof job->rl, "residual in 10#u%d#d %s", e10, *yunit ? yunit : "");
    else snprintf(job->rl, sizeof job->rl, "residual%s%s", *yunit ? " in " : "", yunit);
    return PF_OK;
}

pf_status pf_picture_lines(pf_context *ctx, const char *path, int overwrite, const pf_lines *p)
{
    int w = 0, h = 0;
    double range[4] = {0, 0, 0, 0};
    pf_status st = check_lines(ctx, p, &w, &h, range);
    if (st) return st;
    double xmin = range[0], xmax = range[1], ymin = range[2], ymax = range[3];
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
    double yspan = ymax - ymin;
    double pad = 0.05 * yspan;
    if (!p->log_y && ymin >= 0 && ymin - pad < 0) ymin = pad; /* nonnegative data sit on the axis */
    /* Headroom: 8 % above the highest curve. */
    ymin -= pad, ymax += 0.08 * yspan;
    size_t nmax = 0;
    for (size_t k = 0; k < p->nseries; k++) nmax = p->series[k].n > nmax ? p->series[k].n : nmax;
    lines_job job = {p, NULL, w, h, text_px(w, h, 560), fx, fy, {xmin, xmax, ymin, ymax}, "", "", NULL, NULL, NULL,
                     NULL, NULL, 0, {0, 0}, "", device_for(path)};
    /* A legend that would hide samples in every corner gets room above the
     * curves instead: the top rises until an upper corner is free. */
    size_t hidden;
    if (legend_rows(p)) {
        legend_corner(p, fx, fy, job.box, &hidden);
        for (int t = 0; t < 8 && hidden; t++) {
            double f = legend_height(legend_rows(p)) + 0.06;
            double top = ymax + (ymax - ymin) * f / (1 - f);
            job.box[3] = ymax = top;
            legend_corner(p, fx, fy, job.box, &hidden);
        }
    }
    snprintf(job.xl, sizeof job.xl, "%s", xl);
    snprintf(job.yl, sizeof job.yl, "%s", yl);
    job.bx = malloc(nmax * sizeof *job.bx);
    job.by = malloc(nmax * sizeof *job.by);
    job.marked = malloc(p->nseries * sizeof *job.marked);
    size_t rcap = p->residual_of ? p->series[p->residual_of - 1].n : 0;
    double *res = rcap ? malloc(2 * rcap * sizeof *res) : NULL;
    if (!job.bx || !job.by || !job.marked || (rcap && !res)) {
        free(job.bx);
        free(job.by);
        free(job.marked);
        free(res);
        return pf_fail(ctx, PF_ENOMEM, "out of memory");
    }
    coincident_markers(p, yspan / (p->log_y ? 1 : fy), job.marked);
    if (rcap) st = residual_panel(ctx, p, fx, fy, ymin, ymax, yunit, res, rcap, &job);
    pf_safefile sf;
    if (!st) st = pf_safe_begin(ctx, path, overwrite, &sf);
    if (!st) {
        job.out = open_for_plplot(ctx, &sf, &st);
        if (job.out) st = finish(ctx, &sf, pf_plguard_run(ctx, draw_lines, &job));
    }
    free(job.bx);
    free(job.by);
    free(job.marked);
    free(res);
    return st;
}
