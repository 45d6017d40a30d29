/* pf_ops.c - instantaneous pulses, masks, displacement and velocity selection
 * (contracts in pf_ops.h).  Separable operations build per-axis tables and use
 * the axis kernels; only the circular aperture and user functions need a
 * full-grid array. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_edges.h"
#include "pf_internal.h"
#include "pf_kernels.h"
#include "pf_ops.h"

/* Per-axis scratch tables, allocated together and freed together. */
typedef struct axis_tables {
    pf_context *ctx; /* the tables are charged to it */
    double complex *t[PF_MAX_DIM];
} axis_tables;

static pf_status tables_alloc(pf_grid *g, axis_tables *at, unsigned axes_mask)
{
    memset(at, 0, sizeof *at);
    at->ctx = g->ctx;
    for (int a = 0; a < g->dim; a++) {
        if (!(axes_mask & (1u << a))) continue;
        at->t[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double complex));
        if (!at->t[a]) {
            for (int b = 0; b < a; b++) pf_context_free(g->ctx, at->t[b]);
            return pf_context_status(g->ctx);
        }
    }
    return PF_OK;
}

static void tables_free(axis_tables *at)
{
    for (int a = 0; a < PF_MAX_DIM; a++) pf_context_free(at->ctx, at->t[a]);
}

static pf_status check_axis(pf_grid *g, int axis, const char *what)
{
    if (axis < 0 || axis >= g->dim)
        return pf_fail(g->ctx, PF_EINVAL, "axis must be 1..%d, got %d", g->dim, axis + 1);
    return PF_OK;
}

/* Applies unitary per-axis phase tables in position space and logs the step. */
static pf_status apply_position_phase(pf_wave *w, axis_tables *at, const char *kind, const char *method)
{
    double norm = pf_wave_last_logged_norm(w);
    pf_status s = pf_wave_to(w, PF_POSITION);
    if (s) return s;
    pf_kernel_axis_multiply(w->grid, w->store, (const double complex *const *)at->t, 1.0);
    pf_wave_log_step(w, kind, method, 0.0, 0.0, norm);
    return PF_OK;
}

/* Applies per-axis transmission tables (position space), logs, reports removed. */
static pf_status apply_position_mask(pf_wave *w, axis_tables *at, const char *method, double *removed)
{
    pf_status s = pf_wave_to(w, PF_POSITION);
    if (s) return s;
    double r = pf_kernel_probability(w, pf_kernel_axis_mask(w->grid, w->store, (const double complex *const *)at->t));
    if (r < 0) r = 0; /* |t| <= 1 on every built-in mask; only rounding can go below */
    pf_wave_log_step(w, "mask", method, 0.0, r, -1.0);
    if (removed) *removed = r;
    return PF_OK;
}

/* ---- phase pulses ---- */

pf_status pf_wave_grating(pf_wave *w, int axis, double depth, double period, double phase)
{
    pf_grid *g = w->grid;
    pf_status s = check_axis(g, axis, "grating");
    if (s) return s;
    if (!isfinite(period) || period <= 0)
        return pf_fail(g->ctx, PF_EINVAL, "period must be finite and positive (m), got %g", period);
    if (!isfinite(depth)) return pf_fail(g->ctx, PF_EINVAL, "depth must be finite (rad), got %g", depth);
    if (!isfinite(phase)) return pf_fail(g->ctx, PF_EINVAL, "phase must be finite (rad), got %g", phase);
    axis_tables at;
    if ((s = tables_alloc(g, &at, 1u << axis))) return s;
    for (size_t j = 0; j < g->n[axis]; j++) {
        /* Reduce x/period to a fraction first, so the argument of cos stays
         * small however far the grid sits from the origin. */
        double u = g->x[axis][j] / period;
        u -= floor(u);
        at.t[axis][j] = cexp(I * depth * cos(PF_TWO_PI * u + phase));
    }
    s = apply_position_phase(w, &at, "grating", "raman-nath");
    tables_free(&at);
    return s;
}

pf_status pf_wave_lens(pf_wave *w, int axis, double focal_time, const double *center)
{
    pf_grid *g = w->grid;
    pf_status s;
    if (axis >= 0 && (s = check_axis(g, axis, "lens"))) return s;
    if (!isfinite(focal_time) || focal_time == 0)
        return pf_fail(g->ctx, PF_EINVAL,
                       "focal time must be finite and non-zero (s; negative defocuses), got %g", focal_time);
    unsigned mask = axis < 0 ? (1u << g->dim) - 1 : 1u << axis;
    axis_tables at;
    if ((s = tables_alloc(g, &at, mask))) return s;
    double c = w->mass / (2.0 * PF_HBAR * focal_time);
    for (int a = 0; a < g->dim; a++) {
        if (!at.t[a]) continue;
        double x0 = center ? center[a] : 0.0;
        for (size_t j = 0; j < g->n[a]; j++) {
            double x = g->x[a][j] - x0;
            at.t[a][j] = cexp(-I * c * x * x);
        }
    }
    s = apply_position_phase(w, &at, "lens", "quadratic-phase");
    tables_free(&at);
    return s;
}

pf_status pf_wave_kick(pf_wave *w, const double *k)
{
    pf_grid *g = w->grid;
    unsigned mask = 0;
    for (int a = 0; a < g->dim; a++) {
        if (!isfinite(k[a]))
            return pf_fail(g->ctx, PF_EINVAL, "wave number on axis %d must be finite (rad/m), got %g", a + 1, k[a]);
        if (k[a] != 0) mask |= 1u << a;
    }
    axis_tables at;
    pf_status s = tables_alloc(g, &at, mask);
    if (s) return s;
    for (int a = 0; a < g->dim; a++) {
        if (!at.t[a]) continue;
        if (fabs(k[a]) >= pf_grid_knyquist(g, a))
            pf_context_warn(g->ctx, "kick: wave number %g rad/m on axis %d reaches the grid's Nyquist limit %g rad/m; "
                            "the momentum wraps around (use a finer grid)", k[a], a + 1, pf_grid_knyquist(g, a));
        for (size_t j = 0; j < g->n[a]; j++) at.t[a][j] = cexp(I * k[a] * g->x[a][j]);
    }
    s = apply_position_phase(w, &at, "kick", "position-phase");
    tables_free(&at);
    return s;
}

/* Shared by imprint and user masks: samples fn over the representation's
 * coordinates into a full-grid array (natural order for position, storage
 * order for momentum); on a grid split over MPI ranks, this rank's points
 * of the representation's slab (pf_dist.h). */
static pf_status sample_field(pf_wave *w, pf_rep rep, pf_sample_fn fn, void *user, double complex **out)
{
    pf_grid *g = w->grid;
    size_t bytes = pf_bytes(pf_dist_rep_values(g, rep), sizeof(double complex));
    double complex *f = pf_alloc(g->ctx, bytes ? bytes : sizeof(double complex));
    if (!f) return pf_context_status(g->ctx);
    pf_status s = pf_dist_sample(g, rep, fn, user, f);
    if (s) {
        pf_free(g->ctx, f, bytes ? bytes : sizeof(double complex));
        return s;
    }
    *out = f;
    return PF_OK;
}

/* The field's size as sample_field allocated it. */
static size_t field_bytes(const pf_grid *g, pf_rep rep)
{
    size_t bytes = pf_bytes(pf_dist_rep_values(g, rep), sizeof(double complex));
    return bytes ? bytes : sizeof(double complex);
}

/* Index of the first bad value in f[0..n), n when none; over MPI ranks,
 * every rank learns whether any rank found one (then *elsewhere is 1 on
 * the ranks that did not). */
static size_t first_bad(const pf_grid *g, const double complex *f, size_t n, int phase, int *elsewhere)
{
    size_t bad = n;
    for (size_t i = 0; i < n && bad == n; i++) {
        double complex t = f[i];
        if (phase ? (!isfinite(creal(t)) || cimag(t) != 0)
                  : (!isfinite(creal(t)) || !isfinite(cimag(t)) || cabs(t) > 1.0 + 1e-12))
            bad = i;
    }
    *elsewhere = pf_dist_any(g, bad < n) && bad == n;
    return bad;
}

pf_status pf_wave_imprint(pf_wave *w, pf_sample_fn fn, void *user)
{
    pf_grid *g = w->grid;
    double complex *f;
    pf_status s = sample_field(w, PF_POSITION, fn, user, &f);
    if (s) return s;
    size_t bytes = field_bytes(g, PF_POSITION), n = pf_dist_rep_values(g, PF_POSITION), first, end;
    int elsewhere = 0;
    size_t bad = first_bad(g, f, n, 1, &elsewhere);
    if (bad < n || elsewhere) {
        pf_grid_local_range(g, &first, &end);
        double complex t = bad < n ? f[bad] : 0;
        pf_free(g->ctx, f, bytes);
        if (elsewhere) return pf_fail(g->ctx, PF_EINVAL, "a phase at a point another MPI rank holds is not a finite real number (rad)");
        return pf_fail(g->ctx, PF_EINVAL, "phase at point %zu is %g%+gi; it must be a finite real number (rad)", first + bad + 1,
                       creal(t), cimag(t));
    }
    for (size_t i = 0; i < n; i++) f[i] = cexp(I * creal(f[i]));
    double norm = pf_wave_last_logged_norm(w);
    s = pf_wave_to(w, PF_POSITION);
    if (!s) {
        pf_dist_field_mask(g, PF_POSITION, w->store, f, 0);
        pf_wave_log_step(w, "imprint", "function", 0.0, 0.0, norm);
    }
    pf_free(g->ctx, f, bytes);
    return s;
}

/* ---- amplitude masks ---- */

/* Relative tolerance for points that sit exactly on an edge: grids and
 * masks specified in round numbers put points on edges, and rounding must not
 * open one period of a grating and close the next. */
#define EDGE_EPS 1e-9

static int exact_edges(const pf_edges *e) { return e && e->mode == PF_EDGES_EXACT; }

pf_status pf_wave_slits(pf_wave *w, const pf_slits_spec *spec, const pf_edges *edges, double *removed)
{
    pf_grid *g = w->grid;
    int axis = spec->axis, count = spec->count;
    double width = spec->width, pitch = spec->pitch, center = spec->center;
    pf_status s = check_axis(g, axis, "slits");
    if (s) return s;
    if (count < 1) return pf_fail(g->ctx, PF_EINVAL, "count must be at least 1, got %d", count);
    if (!isfinite(width) || width <= 0)
        return pf_fail(g->ctx, PF_EINVAL, "width must be finite and positive (m), got %g", width);
    if (!isfinite(center)) return pf_fail(g->ctx, PF_EINVAL, "center must be finite (m), got %g", center);
    if (count > 1 && (!isfinite(pitch) || pitch <= width))
        return pf_fail(g->ctx, PF_EINVAL, "pitch must be finite and larger than the width %g m, got %g",
                       width, pitch);
    if (edges && (s = pf_edges_check(g, edges))) return s;
    axis_tables at;
    if ((s = tables_alloc(g, &at, 1u << axis))) return s;
    if (exact_edges(edges)) {
        double start = center - 0.5 * (count - 1) * pitch - 0.5 * width;
        pf_edges_comb comb = {.start = start, .open = width, .pitch = count > 1 ? pitch : width, .first = 0,
                              .last = count - 1};
        if (!(s = pf_edges_comb_table(g, axis, &comb, edges, at.t[axis])))
            s = apply_position_mask(w, &at, count == 1 ? "slit" : "slits", removed);
        tables_free(&at);
        return s;
    }
    double half = 0.5 * width * (1.0 + EDGE_EPS);
    for (size_t j = 0; j < g->n[axis]; j++) {
        double x = g->x[axis][j] - center;
        int open = 0;
        if (count == 1) {
            open = fabs(x) <= half;
        } else {
            /* Nearest slit index, clamped to the slit range. */
            double i = nearbyint(x / pitch + 0.5 * (count - 1));
            if (i < 0) i = 0;
            if (i > count - 1) i = count - 1;
            open = fabs(x - (i - 0.5 * (count - 1)) * pitch) <= half;
        }
        at.t[axis][j] = open ? 1.0 : 0.0;
    }
    s = apply_position_mask(w, &at, count == 1 ? "slit" : "slits", removed);
    tables_free(&at);
    return s;
}

pf_status pf_wave_mask_grating(pf_wave *w, int axis, double period, double open_fraction, double offset,
                               const pf_edges *edges, double *removed)
{
    pf_grid *g = w->grid;
    pf_status s = check_axis(g, axis, "mask_grating");
    if (s) return s;
    if (!isfinite(period) || period <= 0)
        return pf_fail(g->ctx, PF_EINVAL, "period must be finite and positive (m), got %g", period);
    if (!(open_fraction > 0 && open_fraction <= 1))
        return pf_fail(g->ctx, PF_EINVAL, "open_fraction must be in (0, 1], got %g", open_fraction);
    if (!isfinite(offset)) return pf_fail(g->ctx, PF_EINVAL, "offset must be finite (m), got %g", offset);
    if (edges && (s = pf_edges_check(g, edges))) return s;
    axis_tables at;
    if ((s = tables_alloc(g, &at, 1u << axis))) return s;
    if (exact_edges(edges)) {
        /* Every period that can meet the window, and one more on each side. */
        double x0 = g->x[axis][0];
        double first = floor((x0 - offset) / period) - 1, last = ceil((x0 + g->span[axis] - offset) / period) + 1;
        pf_edges_comb comb = {.start = offset, .open = open_fraction * period, .pitch = period, .first = first,
                              .last = last};
        if (!(s = pf_edges_comb_table(g, axis, &comb, edges, at.t[axis])))
            s = apply_position_mask(w, &at, "grating", removed);
        tables_free(&at);
        return s;
    }
    for (size_t j = 0; j < g->n[axis]; j++) {
        double u = (g->x[axis][j] - offset) / period;
        double r = u - floor(u);
        if (r > 1.0 - EDGE_EPS) r = 0.0; /* on an opening edge */
        at.t[axis][j] = r < open_fraction - EDGE_EPS || open_fraction == 1 ? 1.0 : 0.0;
    }
    s = apply_position_mask(w, &at, "grating", removed);
    tables_free(&at);
    return s;
}

pf_status pf_wave_aperture_rect(pf_wave *w, const double *center, const double *size, const pf_edges *edges,
                                double *removed)
{
    pf_grid *g = w->grid;
    unsigned mask = 0;
    for (int a = 0; a < g->dim; a++) {
        if (isnan(size[a]) || size[a] <= 0)
            return pf_fail(g->ctx, PF_EINVAL, "size on axis %d must be positive (m), got %g", a + 1, size[a]);
        if (center && !isfinite(center[a]))
            return pf_fail(g->ctx, PF_EINVAL, "center on axis %d must be finite (m), got %g", a + 1, center[a]);
        if (isfinite(size[a])) mask |= 1u << a;
    }
    pf_status s;
    if (edges && (s = pf_edges_check(g, edges))) return s;
    axis_tables at;
    if ((s = tables_alloc(g, &at, mask))) return s;
    for (int a = 0; a < g->dim; a++) {
        if (!at.t[a]) continue;
        double c = center ? center[a] : 0.0;
        if (exact_edges(edges)) {
            pf_edges_comb box = {.start = c - 0.5 * size[a], .open = size[a], .pitch = size[a], .first = 0, .last = 0};
            if ((s = pf_edges_comb_table(g, a, &box, edges, at.t[a]))) {
                tables_free(&at);
                return s;
            }
            continue;
        }
        double half = 0.5 * size[a] * (1.0 + EDGE_EPS);
        for (size_t j = 0; j < g->n[a]; j++) at.t[a][j] = fabs(g->x[a][j] - c) <= half ? 1.0 : 0.0;
    }
    s = apply_position_mask(w, &at, "rectangle", removed);
    tables_free(&at);
    return s;
}

pf_status pf_wave_aperture_circle(pf_wave *w, int axis_a, int axis_b, const double *center, double radius,
                                  const pf_edges *edges, double *removed)
{
    pf_grid *g = w->grid;
    if (g->dim < 2)
        return pf_fail(g->ctx, PF_EINVAL, "a circular aperture needs a 2D or 3D grid, this one is 1D");
    pf_status s;
    if ((s = check_axis(g, axis_a, "aperture")) || (s = check_axis(g, axis_b, "aperture"))) return s;
    if (axis_a == axis_b)
        return pf_fail(g->ctx, PF_EINVAL, "the two axes of a circular aperture must differ, got %d twice",
                       axis_a + 1);
    if (!isfinite(radius) || radius <= 0)
        return pf_fail(g->ctx, PF_EINVAL, "radius must be finite and positive (m), got %g", radius);
    double c0 = center ? center[0] : 0.0, c1 = center ? center[1] : 0.0;
    if (!isfinite(c0) || !isfinite(c1))
        return pf_fail(g->ctx, PF_EINVAL, "center must be finite (m), got (%g, %g)", c0, c1);
    if (edges && (s = pf_edges_check(g, edges))) return s;
    /* The field of this rank's position samples (the whole grid unless it
     * is split over MPI ranks). */
    size_t first, end;
    pf_grid_local_range(g, &first, &end);
    size_t bytes = field_bytes(g, PF_POSITION);
    double complex *f = pf_alloc(g->ctx, bytes);
    if (!f) return pf_context_status(g->ctx);
    double r2 = radius * radius * (1.0 + 2 * EDGE_EPS);
    size_t idx[PF_MAX_DIM];
    if (exact_edges(edges) && (s = pf_edges_disk_field(g, axis_a, axis_b, c0, c1, radius, edges, f))) {
        pf_free(g->ctx, f, bytes);
        return s;
    }
    for (size_t off = first; !exact_edges(edges) && off < end; off++) {
        size_t rest = off;
        for (int a = g->dim - 1; a >= 0; a--) {
            idx[a] = rest % g->n[a];
            rest /= g->n[a];
        }
        double u = g->x[axis_a][idx[axis_a]] - c0, v = g->x[axis_b][idx[axis_b]] - c1;
        f[off - first] = u * u + v * v <= r2 ? 1.0 : 0.0;
    }
    s = pf_wave_to(w, PF_POSITION);
    if (!s) {
        double r = pf_kernel_probability(w, pf_dist_field_mask(g, PF_POSITION, w->store, f, 1));
        if (r < 0) r = 0;
        pf_wave_log_step(w, "mask", "circle", 0.0, r, -1.0);
        if (removed) *removed = r;
    }
    pf_free(g->ctx, f, bytes);
    return s;
}

pf_status pf_wave_mask(pf_wave *w, pf_rep rep, pf_sample_fn fn, void *user, double *removed)
{
    pf_grid *g = w->grid;
    double complex *f;
    pf_status s = sample_field(w, rep, fn, user, &f);
    if (s) return s;
    size_t bytes = field_bytes(g, rep), n = pf_dist_rep_values(g, rep);
    int elsewhere = 0;
    size_t bad = first_bad(g, f, n, 0, &elsewhere);
    if (bad < n || elsewhere) {
        double complex t = bad < n ? f[bad] : 0;
        pf_free(g->ctx, f, bytes);
        if (elsewhere)
            return pf_fail(g->ctx, PF_EINVAL, "a transmission at a point another MPI rank holds is not finite or has "
                                              "modulus above 1");
        /* On a distributed grid the index counts this rank's points. */
        return pf_fail(g->ctx, PF_EINVAL,
                       "transmission at point %zu is %g%+gi; it must be finite with modulus at most 1",
                       bad + 1, creal(t), cimag(t));
    }
    s = pf_wave_to(w, rep);
    if (!s) {
        double r = pf_kernel_probability(w, pf_dist_field_mask(g, rep, w->store, f, 1));
        if (r < 0) r = 0;
        pf_wave_log_step(w, rep == PF_POSITION ? "mask" : "momentum-mask", "function", 0.0, r, -1.0);
        if (removed) *removed = r;
    }
    pf_free(g->ctx, f, bytes);
    return s;
}

/* ---- momentum-space operations ---- */

/* Brings the wave to momentum storage and returns the scale still owed to it
 * (1/N when the raw forward transform was just taken), so the caller can fuse
 * the scaling into its own pass. */
static pf_status to_momentum_unscaled(pf_wave *w, double *scale)
{
    *scale = 1.0;
    if (w->deferred.active) return pf_wave_settle_to(w, PF_MOMENTUM); /* scaled already */
    if (w->rep == PF_MOMENTUM) return PF_OK;
    pf_status s = pf_grid_fft(w->grid, w->store, -1);
    if (s) return s;
    *scale = 1.0 / (double)w->grid->total;
    w->rep = PF_MOMENTUM;
    return PF_OK;
}

pf_status pf_wave_shift(pf_wave *w, const double *d)
{
    pf_grid *g = w->grid;
    for (int a = 0; a < g->dim; a++) {
        if (!isfinite(d[a]))
            return pf_fail(g->ctx, PF_EINVAL, "distance on axis %d must be finite (m), got %g", a + 1, d[a]);
        if (fabs(d[a]) > 0.5 * g->span[a])
            pf_context_warn(g->ctx, "shift: distance %g m on axis %d exceeds half the grid span %g m; "
                            "the periodic grid wraps the state around", d[a], a + 1, g->span[a]);
    }
    axis_tables at;
    pf_status s = tables_alloc(g, &at, (1u << g->dim) - 1);
    if (s) return s;
    pf_kernel_kinetic_tables(g, 0.0, d, at.t);
    double norm = pf_wave_last_logged_norm(w), scale;
    s = g->dist ? pf_dist_momentum_unscaled(w, &scale) : to_momentum_unscaled(w, &scale);
    if (!s && g->dist) { /* over MPI ranks: the transposed momentum slab */
        pf_dist_momentum_multiply(g, w->store, (const double complex *const *)at.t, scale);
        pf_wave_log_step(w, "shift", "momentum-exact", 0.0, 0.0, norm);
    } else if (!s) {
        pf_kernel_axis_multiply(g, w->store, (const double complex *const *)at.t, scale);
        pf_wave_log_step(w, "shift", "momentum-exact", 0.0, 0.0, norm);
    }
    tables_free(&at);
    return s;
}

pf_status pf_wave_select_velocity(pf_wave *w, int axis, double center, double width, int gaussian,
                                  double *removed)
{
    pf_grid *g = w->grid;
    pf_status s = check_axis(g, axis, "select_velocity");
    if (s) return s;
    if (!isfinite(center))
        return pf_fail(g->ctx, PF_EINVAL, "center must be finite (m/s), got %g", center);
    if (!isfinite(width) || width <= 0)
        return pf_fail(g->ctx, PF_EINVAL, "width must be finite and positive (m/s), got %g", width);
    axis_tables at;
    if ((s = tables_alloc(g, &at, 1u << axis))) return s;
    double vk = PF_HBAR / w->mass; /* velocity per unit wave number */
    for (size_t j = 0; j < g->n[axis]; j++) {
        double dv = g->k[axis][j] * vk - center;
        if (gaussian)
            at.t[axis][j] = exp(-dv * dv / (4.0 * width * width));
        else
            at.t[axis][j] = fabs(dv) <= 0.5 * width * (1.0 + EDGE_EPS) ? 1.0 : 0.0;
    }
    s = pf_wave_to(w, PF_MOMENTUM);
    if (!s) {
        /* Over MPI ranks the transposed momentum slab (the same factor per
         * point; the removed sum in that layout's block order). */
        const double complex *const *t = (const double complex *const *)at.t;
        double r = pf_kernel_probability(w, g->dist ? pf_dist_momentum_axis_mask(g, w->store, t)
                                                    : pf_kernel_axis_mask(g, w->store, t));
        if (r < 0) r = 0;
        pf_wave_log_step(w, "momentum-mask", gaussian ? "velocity-gauss" : "velocity-box", 0.0, r, -1.0);
        if (removed) *removed = r;
    }
    tables_free(&at);
    return s;
}
