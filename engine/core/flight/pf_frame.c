/* pf_frame.c - the co-moving frame of a wave function: its closed-form
 * advance under a uniform acceleration, and the lab values and moments that
 * follow from it (see pf_frame.h for the relation to the lab). */
#include <math.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_flight.h"
#include "pf_flux.h"
#include "pf_frame.h"
#include "pf_internal.h"
#include "pf_observe.h"
#include "pf_ops.h"
#include "pf_algebra.h"
#include "pf_measure.h"

void pf_wave_frame(const pf_wave *w, pf_frame *out) { *out = w->frame; }

int pf_wave_frame_moved(const pf_wave *w)
{
    const pf_frame *f = &w->frame;
    if (f->phase != 0.0) return 1;
    for (int a = 0; a < PF_MAX_DIM; a++)
        if (f->position[a] != 0.0 || f->wavenumber[a] != 0.0) return 1;
    return 0;
}

pf_status pf_wave_set_frame(pf_wave *w, const pf_frame *f)
{
    pf_context *ctx = w->grid->ctx;
    if (!isfinite(f->phase)) return pf_fail(ctx, PF_EINVAL, "frame phase must be finite (rad), got %g", f->phase);
    pf_frame n = {{0}, {0}, f->phase};
    for (int a = 0; a < w->grid->dim; a++) {
        if (!isfinite(f->position[a]))
            return pf_fail(ctx, PF_EINVAL, "frame position on axis %d must be finite (m), got %g", a + 1,
                           f->position[a]);
        if (!isfinite(f->wavenumber[a]))
            return pf_fail(ctx, PF_EINVAL, "frame wave number on axis %d must be finite (rad/m), got %g", a + 1,
                           f->wavenumber[a]);
        n.position[a] = f->position[a];
        n.wavenumber[a] = f->wavenumber[a];
    }
    w->frame = n;
    return PF_OK;
}

/* Integrating K' = m a / hbar, X' = hbar K / m, theta' = (m V^2 / 2 + m a.X) / hbar
 * (V = hbar K / m) over [0, t] with V = V0 + a s and X = X0 + V0 s + a s^2 / 2:
 *   theta(t) - theta0 = (m / hbar) (V0^2 t / 2 + V0.a t^2 + a.X0 t + |a|^2 t^3 / 3). */
void pf_frame_advance(pf_frame *f, int dim, double mass, double t, const double *accel)
{
    double action = 0.0; /* in units of m / hbar, summed over axes */
    for (int a = 0; a < dim; a++) {
        double acc = accel ? accel[a] : 0.0;
        double v0 = PF_HBAR * f->wavenumber[a] / mass;
        double x0 = f->position[a];
        action += 0.5 * v0 * v0 * t + v0 * acc * t * t + acc * x0 * t + acc * acc * t * t * t / 3.0;
        f->position[a] = x0 + v0 * t + 0.5 * acc * t * t;
        f->wavenumber[a] += mass * acc * t / PF_HBAR;
    }
    f->phase += mass * action / PF_HBAR;
}

/* Checks t and accel and computes the frame after the step into *next;
 * *moving says whether the step involves the frame at all. */
static pf_status frame_step(pf_wave *w, double t, const double *accel, pf_frame *next, int *moving)
{
    pf_grid *g = w->grid;
    if (!isfinite(t)) return pf_fail(g->ctx, PF_EINVAL, "time must be finite (s), got %g", t);
    int accelerated = 0;
    if (accel) {
        for (int a = 0; a < g->dim; a++) {
            if (!isfinite(accel[a]))
                return pf_fail(g->ctx, PF_EINVAL, "acceleration on axis %d must be finite (m/s^2), got %g", a + 1,
                               accel[a]);
            if (accel[a] != 0.0) accelerated = 1;
        }
    }
    *next = w->frame;
    *moving = accelerated || pf_wave_frame_moved(w);
    if (!*moving) return PF_OK;
    pf_frame_advance(next, g->dim, w->mass, t, accelerated ? accel : NULL);
    int finite = isfinite(next->phase);
    for (int a = 0; a < g->dim; a++) finite = finite && isfinite(next->position[a]) && isfinite(next->wavenumber[a]);
    if (!finite) return pf_fail(g->ctx, PF_EINVAL, "the frame leaves the range of finite numbers after %g s", t);
    return PF_OK;
}

/* After a successful flight of chi: the new frame, and the method of the
 * step just logged names the moving frame. */
static void frame_commit(pf_wave *w, const pf_frame *next, size_t log_before, const char *method)
{
    w->frame = *next;
    if (method && w->log.count > log_before) {
        pf_step *st = &w->log.steps[w->log.count - 1];
        strncpy(st->method, method, sizeof st->method - 1);
        st->method[sizeof st->method - 1] = '\0';
    }
}

pf_status pf_wave_fly_in_frame(pf_wave *w, double t, const double *accel)
{
    pf_frame next;
    int moving;
    pf_status s = frame_step(w, t, accel, &next, &moving);
    if (s) return s;
    if (!moving) return pf_wave_fly(w, t);
    size_t before = w->log.count;
    s = pf_wave_fly(w, t);
    if (!s) frame_commit(w, &next, before, "moving-frame");
    return s;
}

pf_status pf_wave_fly_long_in_frame(pf_wave *w, double t, const pf_long_flight_opts *opts,
                                    pf_long_flight_report *report, const double *accel)
{
    pf_frame next;
    int moving;
    pf_status s = frame_step(w, t, accel, &next, &moving);
    if (s) return s;
    s = pf_wave_fly_long(w, t, opts, report);
    if (!s && moving) frame_commit(w, &next, 0, NULL); /* the log keeps the method that flew chi */
    return s;
}

pf_status pf_wave_fly_scaled_in_frame(pf_wave *w, double t, const size_t *points, const double *centre,
                                      const double *accel)
{
    pf_frame next;
    int moving;
    pf_status s = frame_step(w, t, accel, &next, &moving);
    if (s) return s;
    s = pf_wave_fly_scaled(w, t, points, centre);
    if (!s && moving) frame_commit(w, &next, 0, NULL);
    return s;
}

pf_status pf_wave_far_field_in_frame(pf_wave *w, double t, const double *accel, double *out,
                                     pf_far_field_info *info, double *lab_origin)
{
    pf_frame next;
    int moving;
    pf_status s = frame_step(w, t, accel, &next, &moving);
    if (s) return s;
    s = pf_wave_far_field(w, t, out, info);
    if (!s)
        for (int a = 0; a < w->grid->dim; a++) lab_origin[a] = moving ? next.position[a] : 0.0;
    return s;
}

pf_status pf_wave_frame_kick(pf_wave *w, const double *dk)
{
    pf_grid *g = w->grid;
    double dot = 0.0;
    for (int a = 0; a < g->dim; a++) {
        if (!isfinite(dk[a]))
            return pf_fail(g->ctx, PF_EINVAL, "kick wave number on axis %d must be finite (rad/m), got %g", a + 1,
                           dk[a]);
        dot += dk[a] * w->frame.position[a];
    }
    /* exp(i dk.x) psi_lab = exp(i (theta + dk.X + (K + dk).(x - X))) chi(x - X). */
    for (int a = 0; a < g->dim; a++) w->frame.wavenumber[a] += dk[a];
    w->frame.phase += dot;
    return PF_OK;
}

void pf_wave_lab_position(const pf_wave *w, const size_t *idx, double *x)
{
    const pf_grid *g = w->grid;
    for (int a = 0; a < g->dim; a++) x[a] = g->x[a][idx[a]] + w->frame.position[a];
}

void pf_wave_lab_wavenumber(const pf_wave *w, const size_t *idx, double *k)
{
    const pf_grid *g = w->grid;
    for (int a = 0; a < g->dim; a++) k[a] = g->k[a][idx[a]] + w->frame.wavenumber[a];
}

void pf_wave_grid_position(const pf_wave *w, const double *lab_x, double *xi)
{
    for (int a = 0; a < w->grid->dim; a++) xi[a] = lab_x[a] - w->frame.position[a];
}

/* exp(i arg) relating the grid value at idx to the lab one (pf_frame.h). */
static double frame_angle(const pf_wave *w, pf_rep rep, const size_t *idx)
{
    const pf_grid *g = w->grid;
    const pf_frame *f = &w->frame;
    double arg = f->phase;
    if (rep == PF_POSITION) {
        for (int a = 0; a < g->dim; a++) arg += f->wavenumber[a] * g->x[a][idx[a]];
    } else {
        for (int a = 0; a < g->dim; a++) arg -= (g->k[a][idx[a]] + f->wavenumber[a]) * f->position[a];
    }
    return arg;
}

pf_status pf_wave_lab_set_value(pf_wave *w, pf_rep rep, const size_t *idx, double complex v)
{
    for (int a = 0; a < w->grid->dim; a++)
        if (idx[a] >= w->grid->n[a]) return pf_wave_set_value(w, rep, idx, v); /* its own index error */
    double arg = frame_angle(w, rep, idx);
    return pf_wave_set_value(w, rep, idx, arg == 0.0 ? v : v * cexp(-I * arg));
}

pf_status pf_wave_lab_kick(pf_wave *w, const double *q)
{
    pf_status s = pf_wave_kick(w, q);
    if (s) return s;
    for (int a = 0; a < w->grid->dim; a++) w->frame.phase += q[a] * w->frame.position[a];
    return PF_OK;
}

pf_status pf_wave_lab_shift(pf_wave *w, const double *d)
{
    pf_status s = pf_wave_shift(w, d);
    if (s) return s;
    /* psi_lab(x - d) = exp(i (theta - K.d + K.(x - X))) chi(x - d - X). */
    for (int a = 0; a < w->grid->dim; a++) w->frame.phase -= w->frame.wavenumber[a] * d[a];
    return PF_OK;
}

pf_status pf_wave_lab_density_window(pf_wave *w, double lo, size_t m, double *out)
{
    pf_grid *g = w->grid;
    if (g->dim != 1) return pf_fail(g->ctx, PF_EINVAL, "a lab density window needs a 1D wave, got %dD", g->dim);
    if (!isfinite(lo)) return pf_fail(g->ctx, PF_EINVAL, "lab window start must be finite (m), got %g", lo);
    const size_t n = g->n[0];
    const double dx = g->dx[0];
    /* Lab point i sits at grid coordinate x_0 + (s + i) dx. */
    double s = (lo - w->frame.position[0] - g->x[0][0]) / dx;
    double whole = floor(s), frac = s - whole;
    if (frac > 1.0 - 1e-12) whole += 1.0, frac = 0.0; /* rounding of a whole number of cells */
    if (frac < 1e-12) frac = 0.0;
    if (!(fabs(whole) < 1e15)) return pf_fail(g->ctx, PF_EINVAL, "lab window start %g m is too far from the grid", lo);
    double *col = pf_context_alloc(g->ctx, n * sizeof *col);
    if (!col) return pf_context_status(g->ctx);
    /* w's own density first: its grid guards look at it as at any density
     * (one warning per axis, naming w's steps). */
    pf_status st = pf_wave_density(w, PF_POSITION, col);
    if (!st && frac != 0.0) {
        /* chi'(xi) = chi(xi + frac dx): cell k of the copy holds chi at the
         * grid coordinate of lab point k - whole.  The scratch copy's guards
         * stay silent (w has spoken for the same cloud). */
        pf_wave *c = NULL;
        double d = -frac * dx;
        st = pf_wave_copy(w, &c);
        if (!st) c->guard.warned = ~0u;
        if (!st) st = pf_wave_shift(c, &d);
        if (!st) st = pf_wave_density(c, PF_POSITION, col);
        if (c) pf_wave_free(c);
    }
    if (!st) {
        long long base = (long long)whole;
        for (size_t i = 0; i < m; i++) {
            long long k = base + (long long)i;
            out[i] = k >= 0 && k < (long long)n ? col[k] : 0.0;
        }
    }
    pf_context_free(g->ctx, col);
    return st;
}

pf_status pf_wave_frame_centre(pf_wave *w, int *moved)
{
    pf_grid *g = w->grid;
    double xm[PF_MAX_DIM], km[PF_MAX_DIM];
    if (moved) *moved = 0;
    pf_status s = pf_wave_position_moments(w, xm, NULL);
    if (!s) s = pf_wave_wavenumber_moments(w, km, NULL);
    if (s) return s;
    double d[PF_MAX_DIM] = {0, 0, 0}, q[PF_MAX_DIM] = {0, 0, 0};
    int shift = 0, kick = 0;
    for (int a = 0; a < g->dim; a++) {
        d[a] = xm[a] - g->origin[a];
        q[a] = -km[a];
        /* Below these the cloud already sits at the origin at rest (rounding
         * of a symmetric state's moments). */
        if (fabs(d[a]) > 1e-9 * g->dx[a]) shift = 1;
        else d[a] = 0.0;
        if (fabs(km[a]) > 1e-9 * PF_TWO_PI / g->span[a]) kick = 1;
        else q[a] = 0.0;
    }
    if (shift) {
        /* chi'(xi) = chi(xi + d) with X' = X + d: theta gains K.d. */
        double back[PF_MAX_DIM];
        for (int a = 0; a < g->dim; a++) back[a] = -d[a];
        if ((s = pf_wave_shift(w, back))) return s;
        for (int a = 0; a < g->dim; a++) {
            w->frame.phase += w->frame.wavenumber[a] * d[a];
            w->frame.position[a] += d[a];
        }
    }
    if (kick) {
        /* chi'' = exp(-i k_c.xi) chi' with K' = K + k_c. */
        if ((s = pf_wave_kick(w, q))) return s;
        for (int a = 0; a < g->dim; a++) w->frame.wavenumber[a] -= q[a];
    }
    if (moved) *moved = shift || kick;
    return PF_OK;
}

/* Two lab states combine on their grids only when their grids sit in the
 * same frame (X and K equal on every axis); their phases theta may differ. */
static pf_status same_frame(const pf_wave *a, const pf_wave *b)
{
    const pf_grid *g = a->grid;
    for (int d = 0; d < g->dim; d++)
        if (a->frame.position[d] != b->frame.position[d] || a->frame.wavenumber[d] != b->frame.wavenumber[d])
            return pf_fail(g->ctx, PF_EINVAL,
                           "the two waves sit in different frames (axis %d: offset %g m, %g rad/m against %g m, %g "
                           "rad/m); fly them together, or fold both (w:evolve) first",
                           d + 1, a->frame.position[d], a->frame.wavenumber[d], b->frame.position[d],
                           b->frame.wavenumber[d]);
    return PF_OK;
}

pf_status pf_wave_lab_inner(pf_wave *a, pf_wave *b, double complex *out)
{
    pf_status s = same_frame(a, b);
    if (!s) s = pf_wave_inner(a, b, out);
    if (!s) *out *= cexp(I * (b->frame.phase - a->frame.phase));
    return s;
}

pf_status pf_wave_lab_fidelity(pf_wave *a, pf_wave *b, double *out)
{
    pf_status s = same_frame(a, b);
    return s ? s : pf_wave_fidelity(a, b, out);
}

pf_status pf_wave_lab_axpy(pf_wave *y, double complex alpha, pf_wave *x)
{
    pf_status s = same_frame(y, x);
    /* chi_y += alpha exp(i (theta_x - theta_y)) chi_x keeps y's frame. */
    return s ? s : pf_wave_axpy(y, alpha * cexp(I * (x->frame.phase - y->frame.phase)), x);
}

pf_status pf_wave_lab_value(pf_wave *w, pf_rep rep, const size_t *idx, double complex *out)
{
    double complex v;
    pf_status s = pf_wave_value(w, rep, idx, &v);
    if (s) return s;
    double arg = frame_angle(w, rep, idx);
    *out = arg == 0.0 ? v : v * cexp(I * arg);
    return PF_OK;
}

pf_status pf_wave_lab_position_moments(pf_wave *w, double *mean, double *variance)
{
    pf_status s = pf_wave_position_moments(w, mean, variance);
    if (s || !mean) return s;
    for (int a = 0; a < w->grid->dim; a++) mean[a] += w->frame.position[a];
    return PF_OK;
}

pf_status pf_wave_lab_wavenumber_moments(pf_wave *w, double *mean, double *variance)
{
    pf_status s = pf_wave_wavenumber_moments(w, mean, variance);
    if (s || !mean) return s;
    for (int a = 0; a < w->grid->dim; a++) mean[a] += w->frame.wavenumber[a];
    return PF_OK;
}

pf_status pf_wave_lab_kinetic_energy(pf_wave *w, double *energy)
{
    pf_status s = pf_wave_kinetic_energy(w, energy);
    if (s || !pf_wave_frame_moved(w)) return s;
    double mean[PF_MAX_DIM];
    s = pf_wave_wavenumber_moments(w, mean, NULL);
    if (s) return s;
    double cross = 0.0;
    for (int a = 0; a < w->grid->dim; a++) {
        double K = w->frame.wavenumber[a];
        cross += K * mean[a] + 0.5 * K * K;
    }
    *energy += PF_HBAR * PF_HBAR * cross / w->mass;
    return PF_OK;
}

/* The plane x_axis = at (lab) on the co-moving grid: xi = at - X, refused
 * with lab numbers when it lies outside the grid's cell. */
static pf_status lab_plane(const pf_wave *w, int axis, double at, double *xi)
{
    const pf_grid *g = w->grid;
    if (axis < 0 || axis >= g->dim)
        return pf_fail(g->ctx, PF_EINVAL, "plane axis must be 1..%d, got %d", g->dim, axis + 1);
    const double X = w->frame.position[axis];
    const double lo = g->x[axis][0] - 0.5 * g->dx[axis] + X, hi = lo + g->span[axis];
    if (!isfinite(at) || at < lo || at > hi)
        return pf_fail(g->ctx, PF_EINVAL,
                       "plane position %g m lies outside the cloud's co-moving grid [%g, %g] m (lab) on axis %d", at, lo,
                       hi, axis + 1);
    *xi = at - X;
    return PF_OK;
}

pf_status pf_wave_lab_flux(pf_wave *w, int axis, double at, double *flux)
{
    if (!pf_wave_frame_moved(w)) return pf_wave_flux(w, axis, at, flux);
    double xi, jg, rho;
    pf_status s = lab_plane(w, axis, at, &xi);
    if (!s) s = pf_wave_plane_figures(w, axis, xi, &jg, &rho);
    if (!s) *flux = jg + PF_HBAR * w->frame.wavenumber[axis] / w->mass * rho;
    return s;
}

pf_status pf_wave_lab_beyond(pf_wave *w, int axis, double at, double *probability)
{
    if (!pf_wave_frame_moved(w)) return pf_wave_beyond(w, axis, at, probability);
    double xi;
    pf_status s = lab_plane(w, axis, at, &xi);
    return s ? s : pf_wave_beyond(w, axis, xi, probability);
}

/* The arguments of pf_wave_lab_arrival, for a wave split over MPI ranks
 * (pf_dist_on_whole runs it on rank 0 on the gathered wave and broadcasts
 * the series, as pf_wave_arrival does without a frame). */
typedef struct lab_arrival_args {
    const double *accel;
    const pf_arrival_window *window;
} lab_arrival_args;

static pf_status lab_arrival_whole(pf_wave *w, void *user, double *out)
{
    const lab_arrival_args *a = user;
    return pf_wave_lab_arrival(w, a->accel, a->window, out);
}

pf_status pf_wave_lab_arrival(pf_wave *w, const double *accel, const pf_arrival_window *window, double *flux)
{
    pf_grid *g = w->grid;
    const int axis = window->axis;
    const double at = window->at, start = window->start, dt = window->dt;
    const size_t count = window->count;
    if (axis < 0 || axis >= g->dim)
        return pf_fail(g->ctx, PF_EINVAL, "plane axis must be 1..%d, got %d", g->dim, axis + 1);
    if (!isfinite(at)) return pf_fail(g->ctx, PF_EINVAL, "plane position must be finite (m), got %g", at);
    pf_status s = pf_arrival_window_check(g->ctx, window);
    if (s) return s;
    if (g->dist) {
        /* Rank 0 holds the whole wave and its flown copy meanwhile. */
        lab_arrival_args a = {accel, window};
        return pf_dist_on_whole(w, PF_MOMENTUM, lab_arrival_whole, &a, flux, count);
    }
    pf_wave *c;
    s = pf_wave_copy(w, &c);
    if (s) return s;
    if (start != 0) s = pf_wave_fly_in_frame(c, start, accel);
    const double lo = g->x[axis][0] - 0.5 * g->dx[axis], hi = lo + g->span[axis];
    for (size_t k = 0; !s && k < count; k++) {
        if (k) s = pf_wave_fly_in_frame(c, dt, accel);
        if (s) break;
        double xi = at - c->frame.position[axis];
        if (xi < lo || xi > hi) {
            flux[k] = 0.0;
            continue;
        }
        double jg, rho; /* as pf_wave_lab_flux, with the range already settled above */
        s = pf_wave_plane_figures(c, axis, xi, &jg, &rho);
        if (!s) flux[k] = jg + PF_HBAR * c->frame.wavenumber[axis] / c->mass * rho;
    }
    pf_wave_free(c);
    return s;
}
