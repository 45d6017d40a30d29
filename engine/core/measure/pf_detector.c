/* pf_detector.c - point-spread blur, pixel binning, shot noise and optical
 * depth on 1D and 2D fields. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_detector.h"
#include "pf_internal.h"

double pf_resonant_cross_section(double wavelength) { return 3.0 * wavelength * wavelength / PF_TWO_PI; }

/* Cell-integrated Gaussian weights for offsets -half..half cells, over at
 * most `reach` cells each way (no sample moves further along a line).  The
 * weights are normalised by the closed form of their untruncated sum,
 * erf((want + 1/2) h / (sqrt 2 sigma)) with want = ceil(6 sigma / h), so a
 * kernel cut at the line length still sends the right share off the sensor,
 * and a huge sigma / h can never become an out-of-range size_t. */
static double *blur_kernel(pf_context *ctx, double sigma, double h, size_t reach, size_t *half_out)
{
    double want = ceil(6.0 * sigma / h);
    size_t half = want < (double)reach ? (size_t)want : reach;
    double *k = pf_alloc(ctx, (2 * half + 1) * sizeof *k);
    if (!k) return NULL;
    double c = 1.0 / (sqrt(2.0) * sigma);
    double s = erf((want + 0.5) * h * c);
    for (size_t i = 0; i <= 2 * half; i++) {
        double o = (double)i - (double)half;
        k[i] = 0.5 * (erf((o + 0.5) * h * c) - erf((o - 0.5) * h * c)) / s;
    }
    *half_out = half;
    return k;
}

pf_status pf_field_blur(pf_field *f, const double *sigma)
{
    if (f->dim > 2) return pf_fail(f->ctx, PF_EINVAL, "the point-spread blur works on 1D and 2D images");
    for (int a = 0; a < f->dim; a++)
        if (!(sigma[a] >= 0) || !isfinite(sigma[a]))
            return pf_fail(f->ctx, PF_EINVAL, "point-spread width on axis %d must be >= 0, got %g", a + 1, sigma[a]);
    size_t len = f->n[0] > f->n[1] ? f->n[0] : f->n[1];
    double *line = pf_alloc(f->ctx, 2 * len * sizeof *line);
    if (!line) return pf_context_status(f->ctx);
    for (int a = 0; a < f->dim; a++) {
        if (sigma[a] == 0) continue;
        size_t half;
        double *k = blur_kernel(f->ctx, sigma[a], f->step[a], f->n[a], &half);
        if (!k) {
            pf_context_free(f->ctx, line);
            return pf_context_status(f->ctx);
        }
        size_t n = f->n[a];
        size_t lines = f->total / n, stride = (f->dim == 2 && a == 0) ? f->n[1] : 1;
        for (size_t l = 0; l < lines; l++) {
            double *base = f->values + (stride == 1 ? l * n : l);
            double *in = line, *out = line + len;
            for (size_t j = 0; j < n; j++) in[j] = base[j * stride];
            for (size_t j = 0; j < n; j++) out[j] = 0;
            /* Scatter each sample into its neighbours: what lands beyond the
             * sensor edge is lost, as light missing a real sensor is. */
            for (size_t j = 0; j < n; j++) {
                if (in[j] == 0) continue;
                for (size_t i = 0; i <= 2 * half; i++) {
                    ptrdiff_t t = (ptrdiff_t)j + (ptrdiff_t)i - (ptrdiff_t)half;
                    if (t >= 0 && t < (ptrdiff_t)n) out[t] += in[j] * k[i];
                }
            }
            for (size_t j = 0; j < n; j++) base[j * stride] = out[j];
        }
        pf_context_free(f->ctx, k);
    }
    pf_context_free(f->ctx, line);
    return PF_OK;
}

/* Per grid cell on one axis, the pixels it overlaps (a run starting at
 * start[j], count[j] long) and the overlap lengths (m). */
typedef struct overlap_list {
    size_t *start, *count; /* per cell: first pixel and number of pixels */
    double *len;           /* per cell: up to maxper lengths */
    size_t maxper;
    pf_context *ctx;       /* the lists are charged to it */
} overlap_list;

static int overlaps(const pf_field *f, int a, const pf_camera *cam, overlap_list *o)
{
    size_t n = f->n[a];
    double h = f->step[a], P = cam->pitch[a], c0 = cam->corner[a];
    /* A cell overlaps at most every pixel of the row (and a tiny pitch must
     * not make ceil(h / P) an out-of-range size_t). */
    double per = ceil(h / P) + 2;
    o->maxper = per < (double)cam->pixels[a] + 2 ? (size_t)per : cam->pixels[a] + 2;
    o->ctx = f->ctx;
    o->start = pf_calloc(f->ctx, n, sizeof *o->start);
    o->count = pf_calloc(f->ctx, n, sizeof *o->count);
    o->len = pf_calloc(f->ctx, pf_bytes(n, o->maxper), sizeof *o->len);
    if (!o->start || !o->count || !o->len) return 0;
    for (size_t j = 0; j < n; j++) {
        double xc = pf_field_coord(f, a, j), xl = xc - 0.5 * h, xr = xc + 0.5 * h;
        double pl = floor((xl - c0) / P), pr = floor((xr - c0) / P);
        if (pl < 0) pl = 0;
        if (pr > (double)cam->pixels[a] - 1) pr = (double)cam->pixels[a] - 1;
        o->start[j] = pl >= 0 ? (size_t)pl : 0;
        for (double p = pl; p <= pr; p++) {
            double lo = fmax(xl, c0 + p * P), hi = fmin(xr, c0 + (p + 1) * P);
            size_t c = o->count[j];
            if (hi > lo && c < o->maxper) {
                if (c == 0) o->start[j] = (size_t)p;
                o->len[j * o->maxper + c] = hi - lo;
                o->count[j] = c + 1;
            }
        }
    }
    return 1;
}

static void overlaps_free(overlap_list *o)
{
    if (!o->ctx) return; /* never filled */
    pf_context_free(o->ctx, o->start);
    pf_context_free(o->ctx, o->count);
    pf_context_free(o->ctx, o->len);
}

pf_status pf_field_bin(const pf_field *f, const pf_camera *cam, pf_field *out)
{
    if (f->dim != cam->dim)
        return pf_fail(f->ctx, PF_EINVAL, "a %dD camera cannot image a %dD distribution", cam->dim, f->dim);
    double first[2], step[2];
    for (int a = 0; a < cam->dim; a++) {
        if (cam->pixels[a] < 1) return pf_fail(f->ctx, PF_EINVAL, "camera needs at least one pixel per axis");
        if (!(cam->pitch[a] > 0) || !isfinite(cam->pitch[a]) || !isfinite(cam->corner[a]))
            return pf_fail(f->ctx, PF_EINVAL, "pixel pitch on axis %d must be positive, got %g", a + 1, cam->pitch[a]);
        first[a] = cam->corner[a] + 0.5 * cam->pitch[a];
        step[a] = cam->pitch[a];
    }
    pf_status s = pf_field_new(f->ctx, cam->dim, cam->pixels, first, step, out);
    if (s) return s;
    overlap_list ox = {0}, oy = {0};
    int ok = overlaps(f, 0, cam, &ox) && (cam->dim == 1 || overlaps(f, 1, cam, &oy));
    double *rowbuf = NULL;
    if (ok && cam->dim == 2) ok = (rowbuf = pf_calloc(f->ctx, cam->pixels[1], sizeof *rowbuf)) != NULL;
    if (!ok) {
        overlaps_free(&ox);
        overlaps_free(&oy);
        pf_field_free(out);
        return pf_context_status(f->ctx);
    }
    /* A value is a density; the integral over the overlap of a cell with a
     * pixel is density times the overlap lengths. */
    if (cam->dim == 1) {
        for (size_t j = 0; j < f->n[0]; j++)
            for (size_t c = 0; c < ox.count[j]; c++)
                out->values[ox.start[j] + c] += f->values[j] * ox.len[j * ox.maxper + c];
    } else {
        size_t ny = f->n[1], py = cam->pixels[1];
        for (size_t j = 0; j < f->n[0]; j++) {
            if (!ox.count[j]) continue;
            memset(rowbuf, 0, py * sizeof *rowbuf);
            const double *row = f->values + j * ny;
            for (size_t k = 0; k < ny; k++)
                for (size_t c = 0; c < oy.count[k]; c++)
                    rowbuf[oy.start[k] + c] += row[k] * oy.len[k * oy.maxper + c];
            for (size_t c = 0; c < ox.count[j]; c++) {
                double lx = ox.len[j * ox.maxper + c];
                double *dst = out->values + (ox.start[j] + c) * py;
                for (size_t q = 0; q < py; q++) dst[q] += lx * rowbuf[q];
            }
        }
    }
    pf_context_free(f->ctx, rowbuf);
    overlaps_free(&ox);
    overlaps_free(&oy);
    return PF_OK;
}

pf_status pf_field_poisson(pf_field *f, pf_rng *r)
{
    for (size_t i = 0; i < f->total; i++) {
        double m = f->values[i];
        if (!(m >= 0) || m > 1e15)
            return pf_fail(f->ctx, PF_EINVAL, "Poisson mean of pixel %zu must be in [0, 1e15], got %g", i + 1, m);
        f->values[i] = pf_rng_poisson(r, m);
    }
    return PF_OK;
}

void pf_field_scale(pf_field *f, double factor)
{
    for (size_t i = 0; i < f->total; i++) f->values[i] *= factor;
}

pf_status pf_field_optical_depth(const pf_field *atoms, double cross_section, pf_field *od)
{
    if (!(cross_section > 0) || !isfinite(cross_section))
        return pf_fail(atoms->ctx, PF_EINVAL, "absorption cross-section must be positive (m^2), got %g", cross_section);
    if (atoms->dim != 2) return pf_fail(atoms->ctx, PF_EINVAL, "optical depth needs a 2D image");
    pf_status s = pf_field_new(atoms->ctx, atoms->dim, atoms->n, atoms->first, atoms->step, od);
    if (s) return s;
    double area = atoms->step[0] * atoms->step[1];
    for (size_t i = 0; i < atoms->total; i++) od->values[i] = cross_section * atoms->values[i] / area;
    return PF_OK;
}

double pf_field_atoms_from_optical_depth(const pf_field *od, double cross_section)
{
    double sum = 0;
    for (size_t i = 0; i < od->total; i++) sum += od->values[i];
    return sum * (od->step[0] * od->step[1]) / cross_section;
}

void pf_field_transmission(pf_field *od)
{
    for (size_t i = 0; i < od->total; i++) od->values[i] = exp(-od->values[i]);
}
