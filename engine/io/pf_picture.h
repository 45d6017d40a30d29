/* pf_picture.h - PNG pictures through PLplot's cairo PNG driver: colour
 * maps (densities, space-time carpets) and line plots (profiles, computed
 * against reference curves).
 *
 * Axes are labelled in lab units: coordinates in SI are shown with the SI
 * prefix that gives readable numbers (um, mm, 1/um, ms, ...), and densities
 * per unit of a scaled axis are rescaled to match.  The colour map is
 * cubehelix (pf_cubehelix.h).  Files go through the safe writer. */
#ifndef PF_PICTURE_H
#define PF_PICTURE_H

#include <stddef.h>
#include "pf_context.h"

typedef enum pf_quantity {
    PF_Q_PLAIN = 0,    /* shown as given, label verbatim */
    PF_Q_LENGTH,       /* m */
    PF_Q_WAVENUMBER,   /* 1/m */
    PF_Q_TIME          /* s */
} pf_quantity;

typedef struct pf_plot_axis {
    const char *name;    /* "x", "k_y", "t" ... (PLplot text escapes allowed) */
    pf_quantity q;
} pf_plot_axis;

/* A labelled horizontal line across a map at y = at (SI units of the y
 * axis): a characteristic time on a carpet (a Talbot time), a plane. */
typedef struct pf_mark {
    double at;
    const char *label;        /* NULL: the line alone */
} pf_mark;

/* A colour map of values[ix * ny + iy] at sample centres x[ix], y[iy]
 * (both ascending, uniformly spaced). */
typedef struct pf_map {
    const char *title;
    pf_plot_axis xa, ya;
    size_t nx, ny;
    const double *x, *y;
    const double *values;
    const char *value_name;   /* e.g. "density" */
    const char *value_unit;   /* SI unit text of values when per_x/per_y are 0 */
    int per_x, per_y;         /* values are densities per unit of x / of y */
    int equal_aspect;         /* one unit on x as long as one on y (same quantity only) */
    int width, height;        /* pixels, 0: 860 x 640 */
    int smooth;               /* resample to the panel's pixels (fields); 0: one block per sample (camera pixels) */
    int y_at_samples;         /* y runs from the first to the last sample (a carpet's times, with smooth),
                               * not half a cell beyond them */
    double value_max;         /* top of the colour scale in the units of values; 0: the largest value.
                               * Values above it are clipped, and the colour bar says so. */
    size_t nmarks;
    const pf_mark *marks;
} pf_map;

typedef struct pf_series {
    const double *x, *y;
    size_t n;
    const char *label;        /* legend text, NULL: none */
    int dashed;               /* reference curves are drawn dashed */
    int points;               /* draw markers instead of a line */
} pf_series;

typedef struct pf_lines {
    const char *title;
    pf_plot_axis xa;
    const char *y_name;
    const char *y_unit;       /* used when y_per_x is 0 */
    int y_per_x;              /* y is a density per unit of x */
    int log_y;
    int legend;               /* corner: 0 upper left, 1 upper right, 2 lower left, 3 lower right */
    size_t nseries;
    const pf_series *series;
    int width, height;        /* 0: 860 x 560 */
    /* A residual panel under the plot: series residual_of minus series
     * residual_ref (1-based; the reference interpolated linearly at the
     * result's x, inside its range), 0: none. */
    size_t residual_of, residual_ref;
} pf_lines;

pf_status pf_picture_map(pf_context *ctx, const char *path, int overwrite, const pf_map *m);

/* Resamples src (n samples) to m pixels with a tent filter as wide as the
 * larger of a sample and a pixel: linear interpolation when enlarging, an
 * average over each pixel's footprint when reducing, so neither blocks nor
 * aliasing show.  The pixels span the samples' cells (n cells, centres at
 * the samples), or with at_samples the range from the first sample to the
 * last.  dst[j * dstride] for j < m from src[i * sstride]. */
void pf_picture_resample(const double *src, size_t n, ptrdiff_t sstride, double *dst, size_t m, ptrdiff_t dstride,
                         int at_samples);

/* An axis to put ticks on: from lo to hi (display units), drawn len_px
 * pixels long, its labels needing char_px per character plus gap_px (for
 * labels stacked along a vertical axis: char_px 0, gap_px the line spacing). */
typedef struct pf_tick_spec {
    double lo, hi;
    double len_px;
    double char_px, gap_px;
} pf_tick_spec;

/* Major ticks of the axis `spec`: the smallest step of 1, 2, 5 x 10^n whose
 * labels do not touch.  Both ends are
 * labelled, with one more decimal than the ticks unless they fall on one;
 * an interior tick too close to an end label keeps its tick mark but loses
 * its label.  Fills at most max labels (value, position 0..1 along the
 * axis, decimals to print) in ascending order and returns their count; the
 * step goes to *step. */
typedef struct pf_tick_label {
    double value, pos;
    int decimals;
} pf_tick_label;
int pf_picture_ticks(const pf_tick_spec *spec, double *step, pf_tick_label *labels, int max);
pf_status pf_picture_lines(pf_context *ctx, const char *path, int overwrite, const pf_lines *p);

/* The SI prefix psiflight shows a quantity with, given the largest |value|:
 * writes the unit text (PLplot escapes, e.g. "#gmm") and returns the factor
 * that converts SI values into it. */
double pf_display_unit(pf_quantity q, double max_abs, char *unit, size_t size);

/* cairo writes the clock time into a PDF's information dictionary
 * (/CreationDate (D:...)), so reruns would differ.  The first such entry
 * of the file at path is replaced by blanks of the same length: whitespace
 * is legal between dictionary entries, and every byte offset in the
 * cross-reference table stays right.  Returns 1 when done or when the file
 * has no such entry, 0 when it could not be read or written. */
int pf_picture_pdf_drop_date(const char *path);

/* PLplot's version string. */
void pf_plplot_version(char *buf, size_t size);

#endif
