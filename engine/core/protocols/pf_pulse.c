/* pf_pulse.c - two-level (microwave, RF, Raman) and Bragg pulses as exact or
 * fourth-order propagators in momentum representation (models in pf_pulse.h). */
/* jn() is XSI; POSIX 2008 with the X/Open extension is what the build asks for. */
#define _XOPEN_SOURCE 700
#include "pf_pulse.h"
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_ops.h"

/* Yoshida's triple jump: a symmetric second-order step of length h, applied
 * with lengths c1 h, c0 h, c1 h, is of fourth order (H. Yoshida, Phys. Lett.
 * A 150, 262 (1990)). */
#define YOSHIDA_CBRT2 1.25992104989487316477
static const double YOSHIDA_C1 = 1.0 / (2.0 - YOSHIDA_CBRT2);
static const double YOSHIDA_C0 = -YOSHIDA_CBRT2 / (2.0 - YOSHIDA_CBRT2);

/* Coefficients of the Jacobi-Anger sum are dropped from this size on. */
#define BESSEL_CUTOFF 1e-17

double pf_pulse_rabi_at(const pf_pulse_shape *shape, double s)
{
    if (shape->envelope == PF_ENVELOPE_SQUARE) return shape->rabi;
    double u = (s - 0.5 * shape->duration - shape->peak_offset) / shape->width;
    return shape->rabi * exp(-0.5 * u * u);
}

int pf_pulse_auto_substeps(const pf_pulse_shape *shape, int bragg, double recoil)
{
    double tau = shape->duration;
    /* Per step: rotation angle Omega h and kinetic spread 4 w_r h at most 0.1
     * (Bragg), the envelope sampled 20 times per width (fourth-order error near 1e-10 in the pulse area). */
    double rate = shape->rabi;
    if (bragg && 4.0 * recoil > rate) rate = 4.0 * recoil;
    double n = ceil(tau * rate / 0.1);
    if (shape->envelope == PF_ENVELOPE_GAUSSIAN) {
        double m = ceil(20.0 * tau / shape->width);
        if (m > n) n = m;
    }
    if (!bragg && shape->envelope == PF_ENVELOPE_SQUARE) return 1;
    if (n < 8) n = 8;
    if (n > 1e6) n = 1e6;
    return (int)n;
}

static pf_status check_shape(pf_context *ctx, const pf_pulse_shape *sh)
{
    if (!(isfinite(sh->duration) && sh->duration > 0))
        return pf_fail(ctx, PF_EINVAL, "pulse duration must be a finite number > 0 (s), got %g", sh->duration);
    if (!(isfinite(sh->rabi) && sh->rabi >= 0))
        return pf_fail(ctx, PF_EINVAL, "Rabi frequency must be a finite number >= 0 (rad/s), got %g", sh->rabi);
    if (sh->envelope != PF_ENVELOPE_SQUARE && sh->envelope != PF_ENVELOPE_GAUSSIAN)
        return pf_fail(ctx, PF_EINVAL, "unknown pulse envelope %d", (int)sh->envelope);
    if (sh->envelope == PF_ENVELOPE_GAUSSIAN && !(isfinite(sh->width) && sh->width > 0))
        return pf_fail(ctx, PF_EINVAL, "Gaussian pulse width must be a finite number > 0 (s), got %g", sh->width);
    if (!isfinite(sh->peak_offset))
        return pf_fail(ctx, PF_EINVAL, "Gaussian pulse peak offset must be finite (s), got %g", sh->peak_offset);
    if (sh->substeps < 0 || sh->substeps > 10000000)
        return pf_fail(ctx, PF_EINVAL, "pulse substeps must be 0 (automatic) or 1 .. 10000000, got %d", sh->substeps);
    if (sh->rabi * sh->duration > 1e7)
        return pf_fail(ctx, PF_EINVAL, "pulse area Omega * duration = %g rad is beyond 1e7 rad; split the pulse",
                       sh->rabi * sh->duration);
    return PF_OK;
}

/* The kick as whole momentum spacings per axis (shift[a]); fails unless each
 * component is one to 1e-9 and within the grid. */
static pf_status kick_shift(const pf_grid *g, const double *kick, long *shift, int required)
{
    int any = 0;
    for (int a = 0; a < g->dim; a++) {
        if (!isfinite(kick[a]))
            return pf_fail(g->ctx, PF_EINVAL, "pulse kick on axis %d must be finite (rad/m), got %g", a + 1, kick[a]);
        double dk = pf_grid_kspacing(g, a);
        double m = kick[a] / dk;
        double r = nearbyint(m);
        if (fabs(m - r) > 1e-9 * fmax(1.0, fabs(m)))
            return pf_fail(g->ctx, PF_EINVAL,
                           "pulse kick %g rad/m on axis %d is not a whole number of momentum spacings (%g rad/m: "
                           "%.6f spacings); choose the grid span so that k_eff * span / (2 pi) is an integer",
                           kick[a], a + 1, dk, m);
        if (fabs(r) >= (double)g->n[a])
            return pf_fail(g->ctx, PF_EINVAL, "pulse kick %g rad/m on axis %d spans the whole momentum grid (%g rad/m)",
                           kick[a], a + 1, dk * (double)g->n[a]);
        shift[a] = (long)r;
        if (r != 0) any = 1;
    }
    if (required && !any) return pf_fail(g->ctx, PF_EINVAL, "a Bragg pulse needs a non-zero kick");
    return PF_OK;
}

/* exp(i K.x0), x0 the first grid point: multiplying psi by exp(i K.x) shifts
 * the momentum storage by the kick and multiplies it by this factor. */
static double complex shift_factor(const pf_grid *g, const double *kick)
{
    double p = 0;
    for (int a = 0; a < g->dim; a++) p += kick[a] * g->x[a][0];
    return cexp(I * p);
}

/* Multi-index of storage offset p (row-major). */
static void offset_index(const pf_grid *g, size_t p, size_t *idx)
{
    for (int a = g->dim - 1; a >= 0; a--) {
        idx[a] = p % g->n[a];
        p /= g->n[a];
    }
}

/* Storage offset of idx moved by times * shift (cyclic per axis). */
static size_t shifted_offset(const pf_grid *g, const size_t *idx, const long *shift, long times)
{
    size_t p = 0;
    for (int a = 0; a < g->dim; a++) {
        long n = (long)g->n[a];
        long j = ((long)idx[a] + times * shift[a]) % n;
        if (j < 0) j += n;
        p = p * g->n[a] + (size_t)j;
    }
    return p;
}

/* hbar |k|^2 / 2m of the storage multi-index (rad/s). */
static double kinetic_rate(const pf_grid *g, const size_t *idx, double hm)
{
    double k2 = 0;
    for (int a = 0; a < g->dim; a++) {
        double k = g->k[a][idx[a]];
        k2 += k * k;
    }
    return hm * k2;
}

/* ---- two-level pulses ---- */

typedef struct two_level_plan {
    int stages;        /* 1 (square) or 3 * substeps */
    double *len;       /* per stage: its length (s, may be negative) */
    double *rabi;      /* per stage: Omega at its midpoint */
} two_level_plan;

/* The SU(2) part [[u, v], [-v*, u*]] of the pulse for one momentum pair
 * whose diagonal difference is 2 half (rad/s), composed over the stages. */
static void pair_rotation(const two_level_plan *plan, double half, double complex *u_out, double complex *v_out)
{
    double complex u = 1.0, v = 0.0;
    for (int j = 0; j < plan->stages; j++) {
        double om = 0.5 * plan->rabi[j];
        double gen = sqrt(half * half + om * om); /* half the generalised Rabi frequency */
        double th = gen * plan->len[j];
        double c = cos(th), sn = gen > 0 ? sin(th) / gen : plan->len[j];
        double complex su = c - I * half * sn; /* stage matrix [[su, sv], [-sv*, su*]] */
        double complex sv = -I * om * sn;
        double complex nu = su * u - sv * conj(v);
        double complex nv = su * v + sv * conj(u);
        u = nu;
        v = nv;
    }
    *u_out = u;
    *v_out = v;
}

/* The pulse on a 2D/3D grid whose kick lies along one axis (ax; or none):
 * the kinetic energies are sums over axes, so the common phase
 * exp(-i mean tau) is a product of per-axis tables, and the rotation depends
 * on the index along ax only (the other axes' energies cancel in the
 * difference).  Tables of n_a entries replace the per-point square root,
 * sine, cosine and exponential; the loop runs over rows of the last axis. */
static pf_status two_level_separable(pf_grid *g, int ax, long shift, const two_level_plan *plan,
                                     const pf_pulse_light *light, double hm, double tau, double complex f12,
                                     double complex f21, double complex f22, double complex *sa, double complex *sb)
{
    pf_context *ctx = g->ctx;
    const int dim = g->dim;
    size_t tab_n = 2 * g->n[ax];
    for (int a = 0; a < dim; a++) tab_n += g->n[a];
    size_t bytes = pf_bytes(tab_n, sizeof(double complex));
    double complex *tab = pf_alloc(ctx, bytes);
    if (!tab) return pf_context_status(ctx);
    double complex *T[PF_MAX_DIM] = {NULL}, *U = tab, *V = tab + g->n[ax], *next = tab + 2 * g->n[ax];
    for (int a = 0; a < dim; a++) {
        T[a] = next;
        next += g->n[a];
        const long n = (long)g->n[a], sh = a == ax ? shift : 0;
        for (long j = 0; j < n; j++) {
            long jq = ((j + sh) % n + n) % n;
            double k = g->k[a][j], kq = g->k[a][jq];
            T[a][j] = cexp(-I * 0.5 * tau * hm * (k * k + kq * kq));
        }
    }
    {
        const long n = (long)g->n[ax];
        for (long j = 0; j < n; j++) {
            long jq = ((j + shift) % n + n) % n;
            double k = g->k[ax][j], kq = g->k[ax][jq];
            double half = 0.5 * (hm * (k * k - kq * kq) + light->shift_a - light->shift_b + light->detuning);
            pair_rotation(plan, half, &U[j], &V[j]);
        }
    }
    const double complex c0 = cexp(-I * 0.5 * tau * (light->shift_a + light->shift_b - light->detuning));
    const size_t nl = g->n[dim - 1], rows = g->total / nl;
    const long lshift = ax == dim - 1 ? ((shift % (long)nl) + (long)nl) % (long)nl : 0;
#pragma omp parallel for num_threads(ctx->threads) schedule(static)
    for (size_t r = 0; r < rows; r++) {
        size_t idx[PF_MAX_DIM] = {0}, rr = r;
        for (int a = dim - 2; a >= 0; a--) {
            idx[a] = rr % g->n[a];
            rr /= g->n[a];
        }
        double complex rowf = c0;
        for (int a = 0; a < dim - 1; a++) rowf *= T[a][idx[a]];
        /* the partner row: shifted along ax when ax is not the last axis */
        size_t rq = 0;
        for (int a = 0; a < dim - 1; a++) {
            size_t i = idx[a];
            if (a == ax) i = (size_t)((((long)i + shift) % (long)g->n[a] + (long)g->n[a]) % (long)g->n[a]);
            rq = rq * g->n[a] + i;
        }
        double complex *xa = sa + r * nl, *xb = sb + rq * nl;
        const double complex *Tl = T[dim - 1];
        if (ax == dim - 1) {
            for (size_t j = 0; j < nl; j++) {
                size_t jq = j + (size_t)lshift;
                if (jq >= nl) jq -= nl;
                double complex common = rowf * Tl[j], u = U[j], v = V[j];
                double complex pa = xa[j], pb = xb[jq];
                xa[j] = common * (u * pa + v * f12 * pb);
                xb[jq] = common * (-conj(v) * f21 * pa + conj(u) * f22 * pb);
            }
        } else {
            const double complex u = U[idx[ax]], v = V[idx[ax]];
            const double complex m11 = u, m12 = v * f12, m21 = -conj(v) * f21, m22 = conj(u) * f22;
            for (size_t j = 0; j < nl; j++) {
                double complex common = rowf * Tl[j];
                double complex pa = xa[j], pb = xb[j];
                xa[j] = common * (m11 * pa + m12 * pb);
                xb[j] = common * (m21 * pa + m22 * pb);
            }
        }
    }
    pf_free(ctx, tab, bytes);
    return PF_OK;
}

/* The two levels of a pulse share one grid, mass and clock; the pulse's
 * shape and light are finite. */
static pf_status check_pair(const pf_wave *a, const pf_wave *b, const pf_pulse_shape *shape,
                            const pf_pulse_light *light)
{
    pf_context *ctx = a->grid->ctx;
    if (a == b) return pf_fail(ctx, PF_EINVAL, "a two-level pulse needs two distinct waves");
    if (!pf_grid_same(a->grid, b->grid))
        return pf_fail(ctx, PF_EINVAL, "the two levels of a pulse must share one grid");
    if (a->mass != b->mass)
        return pf_fail(ctx, PF_EINVAL, "the two levels of a pulse must have one mass, got %g and %g kg", a->mass, b->mass);
    if (fabs(a->clock - b->clock) > 1e-12 * fmax(fabs(a->clock), 1e-9))
        return pf_fail(ctx, PF_EINVAL, "the two levels of a pulse must be at one time, got clocks %.17g and %.17g s",
                       a->clock, b->clock);
    pf_status s = check_shape(ctx, shape);
    if (s) return s;
    if (!isfinite(light->detuning) || !isfinite(light->phase) || !isfinite(light->shift_a) ||
        !isfinite(light->shift_b))
        return pf_fail(ctx, PF_EINVAL, "pulse detuning, phase and light shifts must be finite");
    return PF_OK;
}

/* The stages of the pulse: one for a square envelope (exact), else three per
 * substep with Yoshida's weights and the Rabi frequency at each stage's
 * midpoint (4th order).  plan->len heads one block of *bytes bytes. */
static pf_status plan_stages(pf_context *ctx, const pf_pulse_shape *shape, two_level_plan *plan, size_t *bytes)
{
    int sub = shape->substeps > 0 ? shape->substeps : pf_pulse_auto_substeps(shape, 0, 0.0);
    int stages = (shape->envelope == PF_ENVELOPE_SQUARE) ? 1 : 3 * sub;
    *bytes = pf_bytes((size_t)stages, 2 * sizeof(double));
    double *tab = pf_alloc(ctx, *bytes);
    if (!tab) return pf_context_status(ctx);
    *plan = (two_level_plan){stages, tab, tab + stages};
    if (stages == 1) {
        plan->len[0] = shape->duration;
        plan->rabi[0] = shape->rabi;
        return PF_OK;
    }
    double h = shape->duration / sub;
    const double c[3] = {YOSHIDA_C1, YOSHIDA_C0, YOSHIDA_C1};
    for (int i = 0; i < sub; i++) {
        double t = i * h;
        for (int j = 0; j < 3; j++) {
            plan->len[3 * i + j] = c[j] * h;
            plan->rabi[3 * i + j] = pf_pulse_rabi_at(shape, t + 0.5 * c[j] * h);
            t += c[j] * h;
        }
    }
    return PF_OK;
}

/* The pulse point by point (1D, or a kick along more than one axis): each
 * momentum p of level a pairs with p + kick of level b. */
static void two_level_pointwise(pf_grid *g, const long *shift, const two_level_plan *plan,
                                const pf_pulse_light *light, double hm, double tau, double complex f12,
                                double complex f21, double complex f22, double complex *sa, double complex *sb)
{
    const size_t total = g->total;
    const double delta = light->detuning;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (size_t p = 0; p < total; p++) {
        size_t ia[PF_MAX_DIM], ib[PF_MAX_DIM];
        offset_index(g, p, ia);
        size_t q = shifted_offset(g, ia, shift, 1);
        offset_index(g, q, ib);
        double h11 = kinetic_rate(g, ia, hm) + light->shift_a;
        double h22 = kinetic_rate(g, ib, hm) + light->shift_b - delta;
        double mean = 0.5 * (h11 + h22), half = 0.5 * (h11 - h22);
        /* The SU(2) part [[u, v], [-v*, u*]], v the (1,2) element before the
         * level-frame factors. */
        double complex u, v;
        pair_rotation(plan, half, &u, &v);
        double complex common = cexp(-I * mean * tau);
        double complex xa = sa[p], xb = sb[q];
        sa[p] = common * (u * xa + v * f12 * xb);
        sb[q] = common * (-conj(v) * f21 * xa + conj(u) * f22 * xb);
    }
}

pf_status pf_pulse_two_level(pf_wave *a, pf_wave *b, const pf_pulse_shape *shape, const pf_pulse_light *light)
{
    pf_grid *g = a->grid;
    pf_context *ctx = g->ctx;
    pf_status s = check_pair(a, b, shape, light);
    if (s) return s;
    long shift[PF_MAX_DIM] = {0};
    s = kick_shift(g, light->kick, shift, 0);
    if (s) return s;
    two_level_plan plan;
    size_t bytes;
    s = plan_stages(ctx, shape, &plan, &bytes);
    if (s) return s;

    s = pf_wave_to(a, PF_MOMENTUM);
    if (!s) s = pf_wave_to(b, PF_MOMENTUM);
    double complex *sa = s ? NULL : pf_wave_data(a);
    double complex *sb = (s || !sa) ? NULL : pf_wave_data(b);
    if (!sa || !sb) {
        pf_free(ctx, plan.len, bytes);
        return s ? s : pf_context_status(ctx);
    }

    const double tau = shape->duration, t0 = a->clock, t1 = t0 + tau;
    const double delta = light->detuning;
    const double hm = PF_HBAR / (2.0 * a->mass);
    const double complex r = shift_factor(g, light->kick);
    /* Level-frame factors (pf_pulse.h): the detuning's phase at the start and
     * the end of the window, the laser phase, and the storage shift. */
    const double complex up = cexp(-I * light->phase);           /* Omega/2 e^(-i phase) couples b into a */
    const double complex f12 = up * cexp(I * delta * t0) / r;
    const double complex f21 = conj(up) * cexp(-I * delta * t1) * r;
    const double complex f22 = cexp(-I * delta * tau);
    int kicked = 0, ax = g->dim - 1;
    for (int d = 0; d < g->dim; d++)
        if (shift[d]) {
            kicked++;
            ax = d;
        }
    if (g->dim >= 2 && kicked <= 1)
        s = two_level_separable(g, ax, shift[ax], &plan, light, hm, tau, f12, f21, f22, sa, sb);
    else
        two_level_pointwise(g, shift, &plan, light, hm, tau, f12, f21, f22, sa, sb);
    pf_free(ctx, plan.len, bytes);
    if (s) return s;
    pf_wave *w2[2] = {a, b};
    for (int i = 0; i < 2; i++) {
        w2[i]->clock += tau;
        w2[i]->norm_now = -1.0;
        pf_guard_forget(w2[i]);
        pf_wave_log_step(w2[i], "pulse", shape->envelope == PF_ENVELOPE_SQUARE ? "rotation-exact" : "rotation-4th",
                         tau, 0.0, -1.0);
    }
    return PF_OK;
}

/* ---- Bragg pulses ---- */

/* Kinetic phase tables exp(-i hbar k_a^2 len / 2m) per axis, for one length. */
typedef struct kinetic_tables {
    double complex *t[PF_MAX_DIM];
} kinetic_tables;

static void kinetic_fill(const pf_grid *g, double hm, double len, kinetic_tables *kt)
{
    for (int a = 0; a < g->dim; a++)
        for (size_t j = 0; j < g->n[a]; j++) {
            double k = g->k[a][j];
            kt->t[a][j] = cexp(-I * hm * k * k * len);
        }
}

static void kinetic_apply(const pf_grid *g, const kinetic_tables *kt, double complex *z)
{
    const size_t total = g->total;
    if (g->dim == 1) {
        const double complex *t = kt->t[0];
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
        for (size_t p = 0; p < total; p++) z[p] *= t[p];
        return;
    }
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (size_t p = 0; p < total; p++) {
        size_t idx[PF_MAX_DIM] = {0};
        offset_index(g, p, idx);
        double complex f = kt->t[0][idx[0]];
        for (int a = 1; a < g->dim; a++) f *= kt->t[a][idx[a]];
        z[p] *= f;
    }
}

/* exp(-i len Omega cos(K.x + chi)) as the Jacobi-Anger sum
 * sum_n (-i)^n J_n(Omega len) e^(i n chi) e^(i n K.x): each term a cyclic
 * shift of the momentum storage by n kicks times r^n. */
static void coupling_apply(const pf_grid *g, const long *shift, double complex r, double x, double chi,
                           const double complex *src, double complex *dst)
{
    /* Terms |n| <= nmax with |J_n(x)| above the cutoff (J_n decays faster
     * than (|x|/2)^n / n! once n > |x|). */
    enum { NMAX = 256 };
    double complex coef[2 * NMAX + 1];
    int nmax = 0;
    while (nmax < NMAX && ((double)nmax <= fabs(x) || fabs(jn(nmax + 1, x)) > BESSEL_CUTOFF)) nmax++;
    for (int n = -nmax; n <= nmax; n++) {
        double complex mi = 1.0;
        int m = ((n % 4) + 4) % 4;
        mi = (m == 0) ? 1.0 : (m == 1) ? -I : (m == 2) ? -1.0 : I;
        coef[n + nmax] = mi * jn(n, x) * cexp(I * n * chi) * cpow(r, n);
    }
    const size_t total = g->total;
    if (g->dim == 1 && (long)nmax * labs(shift[0]) < (long)total) {
        /* 1D: the source of term n is p - n M, wrapped once at most. */
        const long N = (long)total, M = shift[0];
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
        for (long p = 0; p < N; p++) {
            double complex acc = 0;
            for (int n = -nmax; n <= nmax; n++) {
                long j = p - n * M;
                j += (j < 0) ? N : (j >= N) ? -N : 0;
                acc += coef[n + nmax] * src[j];
            }
            dst[p] = acc;
        }
        return;
    }
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (size_t p = 0; p < total; p++) {
        size_t idx[PF_MAX_DIM] = {0};
        offset_index(g, p, idx);
        double complex acc = 0;
        for (int n = -nmax; n <= nmax; n++) acc += coef[n + nmax] * src[shifted_offset(g, idx, shift, -n)];
        dst[p] = acc;
    }
}

pf_status pf_pulse_bragg(pf_wave *w, const pf_pulse_shape *shape, const pf_pulse_light *light)
{
    pf_grid *g = w->grid;
    pf_context *ctx = g->ctx;
    pf_status s = check_shape(ctx, shape);
    if (s) return s;
    if (!isfinite(light->detuning) || !isfinite(light->phase))
        return pf_fail(ctx, PF_EINVAL, "Bragg pulse detuning and phase must be finite");
    long shift[PF_MAX_DIM] = {0};
    s = kick_shift(g, light->kick, shift, 1);
    if (s) return s;
    const double hm = PF_HBAR / (2.0 * w->mass);
    double k2 = 0;
    for (int a = 0; a < g->dim; a++) k2 += light->kick[a] * light->kick[a];
    int sub = shape->substeps > 0 ? shape->substeps : pf_pulse_auto_substeps(shape, 1, hm * k2);

    /* Scratch: one copy of the state and three sets of per-axis tables. */
    size_t tab_n = 0;
    for (int a = 0; a < g->dim; a++) tab_n += g->n[a];
    size_t bytes = pf_bytes(g->total + 3 * tab_n, sizeof(double complex));
    double complex *scratch = bytes ? pf_alloc(ctx, bytes) : NULL;
    if (!scratch) return pf_context_status(ctx);
    kinetic_tables kt[3]; /* lengths c1 h / 2, (c1 + c0) h / 2, c1 h */
    double complex *next = scratch + g->total;
    for (int i = 0; i < 3; i++)
        for (int a = 0; a < g->dim; a++) {
            kt[i].t[a] = next;
            next += g->n[a];
        }
    const double h = shape->duration / sub;
    const double c1 = YOSHIDA_C1, c0 = YOSHIDA_C0;
    kinetic_fill(g, hm, 0.5 * c1 * h, &kt[0]);
    kinetic_fill(g, hm, 0.5 * (c1 + c0) * h, &kt[1]);
    kinetic_fill(g, hm, c1 * h, &kt[2]);

    s = pf_wave_to(w, PF_MOMENTUM);
    double complex *z = s ? NULL : pf_wave_data(w);
    if (!z) {
        pf_free(ctx, scratch, bytes);
        return s ? s : pf_context_status(ctx);
    }
    const double norm = pf_wave_last_logged_norm(w); /* a Bragg pulse is unitary */
    const double complex r = shift_factor(g, light->kick);
    const double t0 = w->clock;
    double complex *cur = z, *other = scratch;
    kinetic_apply(g, &kt[0], cur);
    const double c[3] = {c1, c0, c1};
    for (int i = 0; i < sub; i++) {
        s = pf_context_poll_stop(ctx);
        if (s) break;
        double t = i * h;
        for (int j = 0; j < 3; j++) {
            double len = c[j] * h, mid = t + 0.5 * len;
            double chi = light->phase - light->detuning * (t0 + mid);
            coupling_apply(g, shift, r, pf_pulse_rabi_at(shape, mid) * len, chi, cur, other);
            double complex *tmp = cur;
            cur = other;
            other = tmp;
            t += len;
            /* The kinetic halves between stages merged: c1/2 + c0/2 twice
             * inside the step, c1/2 + c1/2 between steps, c1/2 at the end. */
            const kinetic_tables *k = (j < 2) ? &kt[1] : (i + 1 < sub) ? &kt[2] : &kt[0];
            kinetic_apply(g, k, cur);
        }
    }
    if (cur != z) memcpy(z, cur, g->total * sizeof(double complex));
    pf_free(ctx, scratch, bytes);
    if (s) {
        pf_guard_forget(w);
        w->norm_now = -1.0;
        return s;
    }
    w->clock += shape->duration;
    pf_guard_forget(w);
    pf_wave_log_step(w, "bragg", "jacobi-anger-4th", shape->duration, 0.0, norm);
    return PF_OK;
}

pf_status pf_wave_order_populations(pf_wave *w, const double *kick, double center, int nmax, double *out)
{
    pf_grid *g = w->grid;
    double kk = 0;
    for (int a = 0; a < g->dim; a++) {
        if (!isfinite(kick[a])) return pf_fail(g->ctx, PF_EINVAL, "order wavenumber on axis %d must be finite", a + 1);
        kk += kick[a] * kick[a];
    }
    if (!(kk > 0)) return pf_fail(g->ctx, PF_EINVAL, "momentum orders need a non-zero wavenumber");
    if (!isfinite(center)) return pf_fail(g->ctx, PF_EINVAL, "order center must be finite (rad/m), got %g", center);
    if (nmax < 0 || nmax > 1000) return pf_fail(g->ctx, PF_EINVAL, "orders must be 0 .. 1000, got %d", nmax);
    pf_status s = pf_wave_to(w, PF_MOMENTUM);
    if (s) return s;
    const double complex *z = pf_wave_data(w);
    if (!z) return pf_context_status(g->ctx);
    /* |phi|^2 dk = |S|^2 prod_a span_a (pf_wave.h: |c_a|^2 = span_a^2 / 2 pi, dk_a = 2 pi / span_a). */
    double cell = 1.0;
    for (int a = 0; a < g->dim; a++) cell *= g->span[a];
    const double klen = sqrt(kk);
    for (int n = 0; n <= 2 * nmax; n++) out[n] = 0;
    size_t idx[PF_MAX_DIM] = {0};
    /* Serial, in storage order: the sums do not depend on the thread count. */
    for (size_t p = 0; p < g->total; p++, pf_index_next(g, idx)) {
        double proj = 0;
        for (int a = 0; a < g->dim; a++) proj += g->k[a][idx[a]] * kick[a];
        double u = (proj / klen - center) / klen;
        double n = floor(u + 0.5);
        if (fabs(n) > nmax) continue;
        out[(int)n + nmax] += cell * (creal(z[p]) * creal(z[p]) + cimag(z[p]) * cimag(z[p]));
    }
    return PF_OK;
}

/* A pulse sliced in time so that a uniform force and a chirped detuning act
 * during it (see pf_pulse.h).  Strang splitting: half a force kick, then per
 * slice the pulse (which carries the kinetic energy) followed by a whole
 * kick, the last one a half. */
pf_status pf_pulse_two_level_moving(pf_wave *a, pf_wave *b, const pf_pulse_shape *shape, const pf_pulse_light *light,
                                    double chirp, const double *accel_a, const double *accel_b, int slices)
{
    pf_grid *g = a->grid;
    pf_context *ctx = g->ctx;
    if (slices < 1 || slices > 1000000)
        return pf_fail(ctx, PF_EINVAL, "pulse slices must be 1 .. 1000000, got %d", slices);
    if (!isfinite(chirp)) return pf_fail(ctx, PF_EINVAL, "pulse chirp must be finite (rad/s^2), got %g", chirp);
    pf_status s = check_shape(ctx, shape);
    if (s) return s;
    pf_wave *w2[2] = {a, b};
    const double *acc[2] = {accel_a, accel_b};
    for (int i = 0; i < 2; i++)
        if (acc[i])
            for (int d = 0; d < g->dim; d++)
                if (!isfinite(acc[i][d]))
                    return pf_fail(ctx, PF_EINVAL, "acceleration during a pulse must be finite, got %g", acc[i][d]);
    const double h = shape->duration / slices;
    pf_pulse_shape piece = *shape;
    piece.duration = h;
    /* Kick of a force over time t: k = m a t / hbar per axis. */
    double kick[2][PF_MAX_DIM] = {{0}};
    for (int i = 0; i < 2; i++)
        if (acc[i])
            for (int d = 0; d < g->dim; d++) kick[i][d] = w2[i]->mass * acc[i][d] * h / PF_HBAR;
    for (int k = 0; k <= slices; k++) {
        for (int i = 0; i < 2; i++) {
            if (!acc[i]) continue;
            double kk[PF_MAX_DIM];
            double part = (k == 0 || k == slices) ? 0.5 : 1.0;
            for (int d = 0; d < g->dim; d++) kk[d] = part * kick[i][d];
            s = pf_wave_kick(w2[i], kk);
            if (s) return s;
        }
        if (k == slices) break;
        /* The detuning delta + chirp t, taken at the slice midpoint, with the
         * phase matched there: phase - delta t - chirp t^2 / 2 to second order. */
        double tm = a->clock + 0.5 * h;
        pf_pulse_light li = *light;
        if (shape->envelope == PF_ENVELOPE_GAUSSIAN) piece.peak_offset = shape->peak_offset + 0.5 * shape->duration - (k + 0.5) * h;
        li.detuning = light->detuning + chirp * tm;
        li.phase = light->phase + 0.5 * chirp * tm * tm;
        s = pf_pulse_two_level(a, b, &piece, &li);
        if (s) return s;
    }
    return PF_OK;
}
