/* pf_levels.c - multi-level wave functions: the levels view over its
 * component waves, and flights, pulses, populations and Born events of all
 * levels together, on the grid or in a shared moving frame (pf_levels.h). */
#include "pf_levels.h"
#include <math.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_field.h"
#include "pf_ensemble.h"
#include "pf_flight.h"
#include "pf_force.h"
#include "pf_frame.h"
#include "pf_internal.h"
#include "pf_observe.h"
#include "pf_ops.h"
#include "pf_sample.h"

struct pf_levels {
    pf_context *ctx;
    int count;
    int moving;
    char label[PF_LEVELS_MAX][PF_LEVELS_LABEL_MAX];
    double energy[PF_LEVELS_MAX];
    pf_wave *wave[PF_LEVELS_MAX];
};

pf_status pf_levels_new(pf_context *ctx, int count, const char *const *labels, const double *energies,
                        pf_wave *const *waves, int moving, pf_levels **out)
{
    *out = NULL;
    if (count < 2 || count > PF_LEVELS_MAX)
        return pf_fail(ctx, PF_EINVAL, "2 to %d levels, got %d", PF_LEVELS_MAX, count);
    for (int i = 0; i < count; i++) {
        size_t len = labels[i] ? strlen(labels[i]) : 0;
        if (len == 0 || len >= PF_LEVELS_LABEL_MAX)
            return pf_fail(ctx, PF_EINVAL, "label %d must be a string of 1 to %d characters", i + 1,
                           PF_LEVELS_LABEL_MAX - 1);
        for (int j = 0; j < i; j++)
            if (strcmp(labels[j], labels[i]) == 0)
                return pf_fail(ctx, PF_EINVAL, "label '%s' appears twice", labels[i]);
        if (energies && !isfinite(energies[i]))
            return pf_fail(ctx, PF_EINVAL, "energy of '%s' must be finite (J), got %g", labels[i], energies[i]);
        if (!waves[i]) return pf_fail(ctx, PF_EINVAL, "level '%s' has no wave function", labels[i]);
        for (int j = 0; j < i; j++)
            if (waves[j] == waves[i])
                return pf_fail(ctx, PF_EINVAL, "levels '%s' and '%s' are one wave function", labels[j],
                               labels[i]);
    }
    const pf_wave *w0 = waves[0];
    pf_frame f0;
    pf_wave_frame(w0, &f0);
    for (int i = 0; i < count; i++) {
        const pf_wave *w = waves[i];
        if (!pf_grid_same(w->grid, w0->grid) || w->mass != w0->mass || w->clock != w0->clock)
            return pf_fail(ctx, PF_EINVAL, "the waves must share one grid, mass and clock (level '%s' differs)",
                           labels[i]);
        if (!moving && pf_wave_frame_moved(w))
            return pf_fail(ctx, PF_EINVAL,
                           "level '%s' is in a moving frame; pf.levels does not support a wave in a moving "
                           "frame unless the levels share one (frame = true, docs/internal-states.md)",
                           labels[i]);
        for (int a = 0; moving && a < PF_MAX_DIM; a++)
            if (w->frame.position[a] != f0.position[a] || w->frame.wavenumber[a] != f0.wavenumber[a])
                return pf_fail(ctx, PF_EINVAL,
                               "level '%s' is in another moving frame than level '%s' (axis %d); the levels "
                               "must share one frame position and wave number",
                               labels[i], labels[0], a + 1);
    }
    pf_levels *lv = pf_alloc(ctx, sizeof *lv);
    if (!lv) return pf_context_status(ctx);
    memset(lv, 0, sizeof *lv);
    lv->ctx = ctx;
    lv->count = count;
    lv->moving = moving ? 1 : 0;
    for (int i = 0; i < count; i++) {
        strcpy(lv->label[i], labels[i]);
        lv->energy[i] = energies ? energies[i] : 0.0;
        lv->wave[i] = waves[i];
    }
    *out = lv;
    return PF_OK;
}

void pf_levels_free(pf_levels *lv)
{
    if (lv) pf_free(lv->ctx, lv, sizeof *lv);
}

int pf_levels_count(const pf_levels *lv) { return lv->count; }
int pf_levels_moving(const pf_levels *lv) { return lv->moving; }
const char *pf_levels_label(const pf_levels *lv, int i) { return lv->label[i]; }
double pf_levels_energy(const pf_levels *lv, int i) { return lv->energy[i]; }
pf_wave *pf_levels_wave(const pf_levels *lv, int i) { return lv->wave[i]; }

int pf_levels_find(const pf_levels *lv, const char *label)
{
    for (int i = 0; i < lv->count; i++)
        if (strcmp(lv->label[i], label) == 0) return i;
    return -1;
}

void pf_levels_label_list(const pf_levels *lv, char *buf, size_t size)
{
    size_t used = 0;
    if (size) buf[0] = '\0';
    for (int i = 0; i < lv->count && used + 1 < size; i++) {
        int n = snprintf(buf + used, size - used, "%s%s", i ? ", " : "", lv->label[i]);
        if (n < 0) break;
        used += (size_t)n;
    }
}

double pf_levels_detuning(const pf_levels *lv, int from, int to, double omega)
{
    return omega - (lv->energy[to] - lv->energy[from]) / PF_HBAR;
}

/* The waves still form one state: in the moving frame one frame position and
 * wave number (a level moved on its own through its wave breaks that); on
 * the grid no moved frame. */
static pf_status check_shared(pf_levels *lv)
{
    const pf_wave *w0 = lv->wave[0];
    for (int i = 0; i < lv->count; i++) {
        const pf_wave *w = lv->wave[i];
        if (!lv->moving && pf_wave_frame_moved(w))
            return pf_fail(lv->ctx, PF_EINVAL,
                           "level '%s' was moved into a moving frame on its own; the levels keep their "
                           "accelerations on the grid (create them with frame = true for a shared frame)",
                           lv->label[i]);
        for (int a = 0; lv->moving && a < PF_MAX_DIM; a++)
            if (w->frame.position[a] != w0->frame.position[a] || w->frame.wavenumber[a] != w0->frame.wavenumber[a])
                return pf_fail(lv->ctx, PF_EINVAL,
                               "level '%s' left the levels' shared frame (it was flown or kicked on its own)",
                               lv->label[i]);
    }
    return PF_OK;
}

/* ---- the moving frame ---- */

/* The acceleration of level i (0 when not given). */
static double level_accel(const pf_levels_forces *f, int i, int a)
{
    return (f && f->has[i]) ? f->accel[i][a] : 0.0;
}

/* Common acceleration (the levels' mean, the frame's) and each level's
 * difference from it; *any_diff says whether one is non-zero. */
static void split_forces(const pf_levels *lv, const pf_levels_forces *f, double *common, double diff[][PF_MAX_DIM],
                         int *any_diff)
{
    const int dim = lv->wave[0]->grid->dim;
    for (int a = 0; a < PF_MAX_DIM; a++) {
        double s = 0.0;
        for (int i = 0; i < lv->count; i++) s += a < dim ? level_accel(f, i, a) : 0.0;
        common[a] = s / lv->count;
    }
    for (int i = 0; i < lv->count; i++) {
        any_diff[i] = 0;
        for (int a = 0; a < PF_MAX_DIM; a++) {
            diff[i][a] = a < dim ? level_accel(f, i, a) - common[a] : 0.0;
            if (diff[i][a] != 0.0) any_diff[i] = 1;
        }
    }
}

static int nonzero(const double *v, int dim)
{
    for (int a = 0; a < dim; a++)
        if (v[a] != 0.0) return 1;
    return 0;
}

/* Frame position X(s) = X0 + V0 s + a s^2 / 2 on axis a after s seconds. */
static double frame_position(const pf_frame *f0, double mass, const double *common, int a, double s)
{
    return f0->position[a] + PF_HBAR * f0->wavenumber[a] / mass * s + 0.5 * common[a] * s * s;
}

/* Level w flies t seconds in the shared frame: chi under the difference
 * force diff on the grid (exact), the frame under the common acceleration
 * (exact, pf_frame_advance), theta plus (m / hbar) diff . integral X dt. */
static pf_status fly_in_shared_frame(pf_wave *w, double t, const double *common, const double *diff)
{
    const int dim = w->grid->dim;
    if (!nonzero(diff, dim) && !nonzero(common, dim)) return pf_wave_fly_in_frame(w, t, NULL);
    pf_frame f;
    pf_wave_frame(w, &f);
    double extra = 0.0;
    for (int a = 0; a < dim; a++) {
        double v0 = PF_HBAR * f.wavenumber[a] / w->mass;
        double integral = f.position[a] * t + 0.5 * v0 * t * t + common[a] * t * t * t / 6.0;
        extra += diff[a] * integral;
    }
    pf_status s = nonzero(diff, dim) ? pf_wave_fall(w, t, diff) : pf_wave_fly(w, t);
    if (s) return s;
    pf_frame_advance(&f, dim, w->mass, t, common);
    f.phase += w->mass * extra / PF_HBAR;
    return pf_wave_set_frame(w, &f);
}

/* ---- flights ---- */

/* Flies the levels other than skip1, skip2 for t seconds. */
static pf_status fly_others(pf_levels *lv, int skip1, int skip2, double t, const pf_levels_forces *f)
{
    double common[PF_MAX_DIM], diff[PF_LEVELS_MAX][PF_MAX_DIM];
    int any[PF_LEVELS_MAX];
    if (lv->moving) split_forces(lv, f, common, diff, any);
    for (int i = 0; i < lv->count; i++) {
        if (i == skip1 || i == skip2) continue;
        pf_wave *w = lv->wave[i];
        pf_status s;
        if (lv->moving) s = fly_in_shared_frame(w, t, common, diff[i]);
        else s = (f && f->has[i]) ? pf_wave_fall(w, t, f->accel[i]) : pf_wave_fly(w, t);
        if (s) return s;
    }
    return PF_OK;
}

pf_status pf_levels_fly(pf_levels *lv, double t, const pf_levels_forces *forces)
{
    if (!isfinite(t)) return pf_fail(lv->ctx, PF_EINVAL, "flight time must be finite (s), got %g", t);
    pf_status s = check_shared(lv);
    return s ? s : fly_others(lv, -1, -1, t, forces);
}

/* ---- pulses ---- */

/* A two-level pulse in the shared frame (pf_levels.h): Strang slices with
 * the difference forces as grid kicks (their number part m d.X(t_k) h / hbar
 * into the level's theta), each slice a plain pulse whose detuning and phase
 * follow the coupling phase
 *     Phi(t) = phi - delta t - chirp t^2/2 + k_eff.X(t) - (theta_b - theta_a)
 * linearised at the slice midpoint; the frame itself advances exactly. */
static pf_status pulse_in_shared_frame(pf_levels *lv, int ia, int ib, const pf_pulse_shape *shape,
                                       const pf_pulse_light *light, double chirp, const double *common,
                                       const double *diff_a, const double *diff_b, int slices)
{
    pf_wave *wa = lv->wave[ia], *wb = lv->wave[ib];
    const int dim = wa->grid->dim;
    const double m = wa->mass, t0 = wa->clock, tau = shape->duration, h = tau / slices;
    pf_frame fa, fb;
    pf_wave_frame(wa, &fa);
    pf_wave_frame(wb, &fb);
    const pf_frame f0 = fa;
    double th_a = fa.phase, th_b = fb.phase;
    pf_wave *w2[2] = {wa, wb};
    const double *d2[2] = {diff_a, diff_b};
    double *th2[2] = {&th_a, &th_b};
    pf_pulse_shape piece = *shape;
    piece.duration = h;
    for (int k = 0; k <= slices; k++) {
        double sk = k * h;
        for (int i = 0; i < 2; i++) {
            if (!nonzero(d2[i], dim)) continue;
            double part = (k == 0 || k == slices) ? 0.5 : 1.0, q[PF_MAX_DIM] = {0};
            for (int a = 0; a < dim; a++) {
                q[a] = m * d2[i][a] * part * h / PF_HBAR;
                *th2[i] += q[a] * frame_position(&f0, m, common, a, sk);
            }
            pf_status s = pf_wave_kick(w2[i], q);
            if (s) return s;
        }
        if (k == slices) break;
        double sm = sk + 0.5 * h, tm = t0 + sm;
        double phi = light->phase - light->detuning * tm - 0.5 * chirp * tm * tm - (th_b - th_a);
        double dphi = -light->detuning - chirp * tm;
        for (int a = 0; a < dim; a++) {
            phi += light->kick[a] * frame_position(&f0, m, common, a, sm);
            dphi += light->kick[a] * (PF_HBAR * f0.wavenumber[a] / m + common[a] * sm);
        }
        pf_pulse_light li = *light;
        li.detuning = -dphi;
        li.phase = phi + li.detuning * tm;
        if (shape->envelope == PF_ENVELOPE_GAUSSIAN) piece.peak_offset = shape->peak_offset + 0.5 * tau - sm;
        pf_status s = pf_pulse_two_level(wa, wb, &piece, &li);
        if (s) return s;
    }
    fa.phase = th_a;
    fb.phase = th_b;
    pf_frame_advance(&fa, dim, m, tau, common);
    pf_frame_advance(&fb, dim, m, tau, common);
    pf_status s = pf_wave_set_frame(wa, &fa);
    return s ? s : pf_wave_set_frame(wb, &fb);
}

pf_status pf_levels_pulse(pf_levels *lv, int from, int to, const pf_pulse_shape *shape, const pf_pulse_light *light,
                          double chirp, const pf_levels_forces *forces, int slices)
{
    if (from < 0 || from >= lv->count || to < 0 || to >= lv->count || from == to)
        return pf_fail(lv->ctx, PF_EINVAL, "a pulse couples two different levels, got %d and %d", from + 1,
                       to + 1);
    pf_status s = check_shared(lv);
    if (s) return s;
    const pf_levels_forces *f = forces;
    if (!lv->moving) {
        s = pf_pulse_two_level_moving(lv->wave[from], lv->wave[to], shape, light, chirp,
                                      (f && f->has[from]) ? f->accel[from] : NULL,
                                      (f && f->has[to]) ? f->accel[to] : NULL, slices);
    } else {
        if (slices < 1 || slices > 1000000)
            return pf_fail(lv->ctx, PF_EINVAL, "pulse slices must be 1 .. 1000000, got %d", slices);
        if (!isfinite(chirp)) return pf_fail(lv->ctx, PF_EINVAL, "pulse chirp must be finite (rad/s^2), got %g", chirp);
        double common[PF_MAX_DIM], diff[PF_LEVELS_MAX][PF_MAX_DIM];
        int any[PF_LEVELS_MAX];
        split_forces(lv, f, common, diff, any);
        for (int a = 0; a < PF_MAX_DIM; a++)
            if (!isfinite(common[a]))
                return pf_fail(lv->ctx, PF_EINVAL, "acceleration during a pulse must be finite, got %g", common[a]);
        s = pulse_in_shared_frame(lv, from, to, shape, light, chirp, common, diff[from], diff[to], slices);
    }
    return s ? s : fly_others(lv, from, to, shape->duration, f);
}

pf_status pf_levels_bragg(pf_levels *lv, int only, const pf_pulse_shape *shape, const pf_pulse_light *light)
{
    if (only < -1 || only >= lv->count) return pf_fail(lv->ctx, PF_EINVAL, "no level %d", only + 1);
    pf_status s = check_shared(lv);
    if (s) return s;
    pf_pulse_light li = *light;
    pf_frame f0;
    pf_wave_frame(lv->wave[0], &f0);
    if (lv->moving) {
        /* The standing wave cos(K.x - delta t + phi) seen from the frame moving
         * at V: cos(K.xi - (delta - K.V) t + phi + K.X0 - K.V t0). */
        const pf_wave *w0 = lv->wave[0];
        const double t0 = w0->clock;
        for (int a = 0; a < w0->grid->dim; a++) {
            double v = PF_HBAR * f0.wavenumber[a] / w0->mass;
            li.detuning -= light->kick[a] * v;
            li.phase += light->kick[a] * (f0.position[a] - v * t0);
        }
    }
    const double none[PF_MAX_DIM] = {0};
    for (int i = 0; i < lv->count; i++) {
        if (only >= 0 && i != only) continue;
        pf_wave *w = lv->wave[i];
        s = pf_pulse_bragg(w, shape, &li);
        if (!s && lv->moving) {
            pf_frame f;
            pf_wave_frame(w, &f);
            pf_frame_advance(&f, w->grid->dim, w->mass, shape->duration, NULL);
            s = pf_wave_set_frame(w, &f);
        }
        if (s) return s;
    }
    /* Levels the pulse skipped keep flying, so the clocks stay together. */
    if (only >= 0)
        for (int i = 0; i < lv->count; i++) {
            if (i == only) continue;
            s = lv->moving ? fly_in_shared_frame(lv->wave[i], shape->duration, none, none)
                           : pf_wave_fly(lv->wave[i], shape->duration);
            if (s) return s;
        }
    return PF_OK;
}

/* ---- what the levels hold ---- */

pf_status pf_levels_populations(pf_levels *lv, double *out, double *total)
{
    double sum = 0.0;
    for (int i = 0; i < lv->count; i++) {
        double p = pf_wave_norm(lv->wave[i]);
        if (!isfinite(p)) return pf_context_status(lv->ctx) ? pf_context_status(lv->ctx) : PF_EINVAL;
        out[i] = p;
        sum += p;
    }
    if (total) *total = sum;
    return PF_OK;
}

pf_status pf_levels_order_populations(pf_levels *lv, const double *kick, double center, int nmax, double *out)
{
    const pf_wave *w0 = lv->wave[0];
    double shift = 0.0, kk = 0.0;
    for (int a = 0; a < w0->grid->dim; a++) kk += kick[a] * kick[a];
    /* Lab orders: (q + K).k/|k| - center = q.k/|k| - (center - K.k/|k|). */
    if (kk > 0 && isfinite(kk))
        for (int a = 0; a < w0->grid->dim; a++) shift += w0->frame.wavenumber[a] * kick[a] / sqrt(kk);
    for (int i = 0; i < lv->count; i++) {
        pf_status s = pf_wave_order_populations(lv->wave[i], kick, center - shift, nmax, out + (size_t)i * (2 * nmax + 1));
        if (s) return s;
    }
    return PF_OK;
}

pf_status pf_levels_sample(pf_levels *lv, pf_rep rep, size_t n, int jitter, pf_rng *rng, double *events)
{
    pf_field f[PF_LEVELS_MAX];
    pf_sampler sm[PF_LEVELS_MAX];
    double cum[PF_LEVELS_MAX];
    int fields = 0, samplers = 0;
    pf_status s = PF_OK;
    const int d = lv->wave[0]->grid->dim;
    double total = 0.0;
    for (; fields < lv->count; fields++) {
        pf_wave *w = lv->wave[fields];
        const double one = 1.0;
        pf_mixture mix = {1, &lv->wave[fields], &one};
        s = pf_mixture_field(&mix, rep, &f[fields]);
        if (s) break;
        /* Lab axes: the grid's shifted by the frame (pf_frame.h). */
        for (int a = 0; a < d; a++) f[fields].first[a] += rep == PF_POSITION ? w->frame.position[a] : w->frame.wavenumber[a];
        double sum = 0, cell = 1;
        for (size_t j = 0; j < f[fields].total; j++) sum += f[fields].values[j];
        for (int a = 0; a < f[fields].dim; a++) cell *= f[fields].step[a];
        total += sum * cell;
        cum[fields] = total;
    }
    if (!s && !(total > 0)) s = pf_fail(lv->ctx, PF_EINVAL, "the levels hold no probability");
    /* An empty level gets no sampler and is never chosen. */
    for (; !s && samplers < lv->count; samplers++) {
        sm[samplers].cdf = NULL;
        if (cum[samplers] > (samplers ? cum[samplers - 1] : 0)) s = pf_sampler_init(&sm[samplers], &f[samplers]);
    }
    if (!s)
        for (size_t e = 0; e < n; e++) {
            double u = pf_rng_uniform(rng) * total;
            int lvl = 0;
            while (lvl < lv->count - 1 && (u >= cum[lvl] || !sm[lvl].cdf)) lvl++;
            pf_sampler_draw(&sm[lvl], rng, 1, jitter, events + e * (size_t)(d + 1));
            events[e * (size_t)(d + 1) + (size_t)d] = lvl;
        }
    /* A failed sampler_init leaves its own tables released. */
    for (int i = 0; i < samplers; i++)
        if (sm[i].cdf) pf_sampler_free(&sm[i]);
    for (int i = 0; i < fields; i++) pf_field_free(&f[i]);
    return s;
}
