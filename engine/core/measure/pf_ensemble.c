/* pf_ensemble.c - mixture densities and measurements, Gauss-Hermite rules
 * and the thermal coherent-state mixture. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_ensemble.h"
#include "pf_internal.h"
#include "pf_observe.h"

pf_status pf_mixture_check(const pf_mixture *m)
{
    if (m->count < 1 || !m->members[0]) return pf_fail(NULL, PF_EINVAL, "empty mixture");
    pf_context *ctx = m->members[0]->grid->ctx;
    double sum = 0;
    for (size_t i = 0; i < m->count; i++) {
        if (!(m->weights[i] >= 0) || !isfinite(m->weights[i]))
            return pf_fail(ctx, PF_EINVAL, "mixture weight %zu must be finite and >= 0, got %g", i + 1, m->weights[i]);
        if (!pf_grid_same(m->members[0]->grid, m->members[i]->grid))
            return pf_fail(ctx, PF_ESTATE, "mixture member %zu lives on a grid of another geometry", i + 1);
        sum += m->weights[i];
    }
    if (!(sum > 0)) return pf_fail(ctx, PF_EINVAL, "mixture weights sum to zero");
    return PF_OK;
}

pf_status pf_mixture_field(const pf_mixture *m, pf_rep rep, pf_field *out)
{
    pf_status s = pf_mixture_check(m);
    if (s) return s;
    pf_grid *g = m->members[0]->grid;
    s = pf_field_for_grid(g, rep, out);
    if (s) return s;
    size_t bytes = g->total * sizeof(double);
    double *scratch = pf_alloc(g->ctx, bytes);
    if (!scratch) {
        pf_field_free(out);
        return pf_context_status(g->ctx);
    }
    for (size_t i = 0; i < m->count && !s; i++)
        if (m->weights[i] > 0) s = pf_field_add_density(out, m->members[i], rep, m->weights[i], scratch);
    pf_free(g->ctx, scratch, bytes);
    if (s) pf_field_free(out);
    return s;
}

pf_status pf_mixture_measure_region(const pf_mixture *m, const pf_region *reg, pf_rng *r, int forced,
                                    int *outcome, double *probability, double *new_weights)
{
    pf_status s = pf_mixture_check(m);
    if (s) return s;
    pf_context *ctx = m->members[0]->grid->ctx;
    if (forced < 0 && !r) return pf_fail(ctx, PF_EINVAL, "a drawn outcome needs a random generator");
    double *p = pf_alloc(ctx, m->count * sizeof *p);
    if (!p) return pf_context_status(ctx);
    double wsum = 0, pyes = 0;
    for (size_t i = 0; i < m->count && !s; i++) {
        s = pf_wave_region_probability(m->members[i], reg, &p[i]);
        wsum += m->weights[i];
        pyes += m->weights[i] * p[i];
    }
    if (s) {
        pf_context_free(ctx, p);
        return s;
    }
    pyes /= wsum;
    int yes = forced >= 0 ? forced : pf_rng_uniform(r) < pyes;
    double P = yes ? pyes : 1 - pyes;
    if (!(P > 0)) {
        pf_context_free(ctx, p);
        return pf_fail(ctx, PF_EINVAL, "forced outcome '%s' has probability 0", yes ? "yes" : "no");
    }
    for (size_t i = 0; i < m->count && !s; i++) {
        double pi = yes ? p[i] : 1 - p[i];
        new_weights[i] = m->weights[i] / wsum * pi / P;
        if (pi > 0 && m->weights[i] > 0) {
            int o;
            double q;
            s = pf_wave_measure_region(m->members[i], reg, NULL, yes, &o, &q);
        }
    }
    pf_context_free(ctx, p);
    if (s) return s;
    *outcome = yes;
    *probability = P;
    return PF_OK;
}

pf_status pf_gauss_hermite_normal(pf_context *ctx, int M, double *nodes, double *weights)
{
    if (M < 1 || M > 64) return pf_fail(ctx, PF_EINVAL, "Gauss-Hermite order must be 1..64, got %d", M);
    /* Roots of H_M (weight exp(-x^2)) by Newton's method on the orthonormal
     * recurrence, with the classic starting values for the largest roots and
     * extrapolation from the previous two for the rest (as in Numerical
     * Recipes, gauher).  Then z = sqrt(2) x, w = w_x / sqrt(pi). */
    const double pim4 = 0.7511255444649425; /* pi^(-1/4) */
    int half = (M + 1) / 2;
    double *x = nodes;
    double z = 0;
    for (int i = 0; i < half; i++) {
        if (i == 0) z = sqrt(2.0 * M + 1) - 1.85575 * pow(2.0 * M + 1, -0.16667);
        else if (i == 1) z -= 1.14 * pow((double)M, 0.426) / z;
        else if (i == 2) z = 1.86 * z - 0.86 * x[0];
        else if (i == 3) z = 1.91 * z - 0.91 * x[1];
        else z = 2.0 * z - x[i - 2];
        double pp = 0;
        for (int it = 0; it < 100; it++) {
            double p1 = pim4, p2 = 0;
            for (int j = 1; j <= M; j++) {
                double p3 = p2;
                p2 = p1;
                p1 = z * sqrt(2.0 / j) * p2 - sqrt((double)(j - 1) / j) * p3;
            }
            pp = sqrt(2.0 * M) * p2;
            double z1 = z;
            z = z1 - p1 / pp;
            if (fabs(z - z1) <= 1e-15 * fmax(1.0, fabs(z))) break;
        }
        if (M == 1) z = 0, pp = sqrt(2.0) * pim4;
        x[i] = z;
        x[M - 1 - i] = -z;
        weights[i] = weights[M - 1 - i] = 2.0 / (pp * pp);
    }
    double sum = 0;
    for (int i = 0; i < M; i++) {
        nodes[i] *= sqrt(2.0);
        weights[i] /= sqrt(PF_PI);
        sum += weights[i];
    }
    /* The rule integrates 1 exactly; remove the last rounding so weights of a
     * mixture sum to 1. */
    for (int i = 0; i < M; i++) weights[i] /= sum;
    return PF_OK;
}

double pf_thermal_sigma0(double mass, double omega) { return sqrt(PF_HBAR / (2.0 * mass * omega)); }

double pf_thermal_nbar(double omega, double temperature)
{
    return 1.0 / expm1(PF_HBAR * omega / (PF_BOLTZMANN * temperature));
}

pf_status pf_thermal_members(pf_context *ctx, const pf_thermal_spec *sp, pf_rng *r, pf_thermal_member **out,
                             size_t *count)
{
    *out = NULL;
    *count = 0;
    const int d = sp->dim;
    if (d < 1 || d > PF_MAX_DIM) return pf_fail(ctx, PF_EINVAL, "thermal ensemble dimension must be 1..3");
    if (!(sp->mass > 0) || !isfinite(sp->mass)) return pf_fail(ctx, PF_EINVAL, "mass must be positive (kg), got %g", sp->mass);
    if (!(sp->temperature > 0) || !isfinite(sp->temperature))
        return pf_fail(ctx, PF_EINVAL, "temperature must be positive (K), got %g", sp->temperature);
    double sx[PF_MAX_DIM], sk[PF_MAX_DIM];
    for (int a = 0; a < d; a++) {
        if (!(sp->omega[a] > 0) || !isfinite(sp->omega[a]))
            return pf_fail(ctx, PF_EINVAL, "trap frequency on axis %d must be positive (rad/s), got %g", a + 1, sp->omega[a]);
        double s0 = pf_thermal_sigma0(sp->mass, sp->omega[a]);
        double nb = pf_thermal_nbar(sp->omega[a], sp->temperature);
        sx[a] = 2.0 * s0 * sqrt(0.5 * nb);  /* std of the displacement 2 sigma0 Re alpha */
        sk[a] = sqrt(0.5 * nb) / s0;        /* std of the mean wave number Im alpha / sigma0 */
    }
    if (sp->nodes > 0) {
        int M = sp->nodes;
        double z[64], wz[64];
        pf_status s = pf_gauss_hermite_normal(ctx, M, z, wz);
        if (s) return s;
        double total = 1;
        for (int q = 0; q < 2 * d; q++) total *= M;
        if (total > 1e6)
            return pf_fail(ctx, PF_ELIMIT, "%d nodes in %dD make %.0f members (limit 1e6); use fewer nodes or sampling", M, d,
                           total);
        size_t n = (size_t)total;
        pf_thermal_member *list = calloc(n, sizeof *list);
        if (!list) return pf_fail(ctx, PF_ENOMEM, "out of memory for %zu ensemble members", n);
        for (size_t i = 0; i < n; i++) {
            size_t rest = i;
            double wgt = 1;
            for (int q = 0; q < 2 * d; q++) {
                int node = (int)(rest % (size_t)M);
                rest /= (size_t)M;
                int a = q / 2;
                if (q % 2 == 0) list[i].shift[a] = sx[a] * z[node];
                else list[i].kmean[a] = sk[a] * z[node];
                wgt *= wz[node];
            }
            list[i].weight = wgt;
        }
        *out = list;
        *count = n;
        return PF_OK;
    }
    if (sp->samples < 1 || sp->samples > 1000000)
        return pf_fail(ctx, PF_EINVAL, "sampled thermal ensemble needs 1..1e6 members, got %zu", sp->samples);
    if (!r) return pf_fail(ctx, PF_EINVAL, "a sampled thermal ensemble needs a random generator");
    pf_thermal_member *list = calloc(sp->samples, sizeof *list);
    if (!list) return pf_fail(ctx, PF_ENOMEM, "out of memory for %zu ensemble members", sp->samples);
    for (size_t i = 0; i < sp->samples; i++) {
        for (int a = 0; a < d; a++) {
            list[i].shift[a] = sx[a] * pf_rng_normal(r);
            list[i].kmean[a] = sk[a] * pf_rng_normal(r);
        }
        list[i].weight = 1.0 / (double)sp->samples;
    }
    *out = list;
    *count = sp->samples;
    return PF_OK;
}

pf_status pf_thermal_levels(pf_context *ctx, const pf_thermal_spec *sp, double tol, size_t max_count,
                            pf_thermal_level **out, size_t *count, double *kept)
{
    *out = NULL;
    *count = 0;
    const int d = sp->dim;
    if (d < 1 || d > PF_MAX_DIM) return pf_fail(ctx, PF_EINVAL, "thermal ensemble dimension must be 1..3");
    if (!(tol > 0 && tol < 1)) return pf_fail(ctx, PF_EINVAL, "eigenstate tolerance must be in (0, 1), got %g", tol);
    if (!(sp->temperature > 0) || !isfinite(sp->temperature))
        return pf_fail(ctx, PF_EINVAL, "temperature must be positive (K), got %g", sp->temperature);
    double beta[PF_MAX_DIM];
    int nmax[PF_MAX_DIM] = {0, 0, 0};
    double budget = log(1.0 / tol);
    for (int a = 0; a < d; a++) {
        if (!(sp->omega[a] > 0) || !isfinite(sp->omega[a]))
            return pf_fail(ctx, PF_EINVAL, "trap frequency on axis %d must be positive (rad/s), got %g", a + 1, sp->omega[a]);
        beta[a] = PF_HBAR * sp->omega[a] / (PF_BOLTZMANN * sp->temperature);
        double nm = floor(budget / beta[a]);
        if (nm > 5000) return pf_fail(ctx, PF_ELIMIT, "axis %d needs levels up to %.0f (kB T >> hbar omega); use the "
                                      "coherent-state scheme", a + 1, nm);
        nmax[a] = (int)nm;
    }
    /* Count first, so the limit is checked before allocating. */
    size_t n = 0;
    int lv[PF_MAX_DIM] = {0, 0, 0};
    for (;;) {
        double e = 0;
        for (int a = 0; a < d; a++) e += lv[a] * beta[a];
        if (e <= budget) n++;
        int a = d - 1;
        while (a >= 0 && ++lv[a] > nmax[a]) lv[a--] = 0;
        if (a < 0) break;
    }
    if (n > max_count)
        return pf_fail(ctx, PF_ELIMIT, "the eigenstate expansion needs %zu levels (limit %zu); raise the tolerance or use "
                       "the coherent-state scheme", n, max_count);
    pf_thermal_level *list = calloc(n, sizeof *list);
    if (!list) return pf_fail(ctx, PF_ENOMEM, "out of memory for %zu levels", n);
    size_t i = 0;
    double sum = 0;
    memset(lv, 0, sizeof lv);
    for (;;) {
        double e = 0, w = 1;
        for (int a = 0; a < d; a++) {
            e += lv[a] * beta[a];
            w *= -expm1(-beta[a]) * exp(-lv[a] * beta[a]);
        }
        if (e <= budget) {
            for (int a = 0; a < d; a++) list[i].n[a] = lv[a];
            list[i].weight = w;
            sum += w;
            i++;
        }
        int a = d - 1;
        while (a >= 0 && ++lv[a] > nmax[a]) lv[a--] = 0;
        if (a < 0) break;
    }
    for (i = 0; i < n; i++) list[i].weight /= sum;
    *out = list;
    *count = n;
    *kept = sum;
    return PF_OK;
}

pf_status pf_wave_fill_coherent(pf_wave *w, const double *center, const double *sigma0, const double *shift,
                                const double *kmean)
{
    pf_grid *g = w->grid;
    const int d = g->dim;
    double complex *T[PF_MAX_DIM] = {NULL, NULL, NULL};
    for (int a = 0; a < d; a++) {
        if (!(sigma0[a] > 0)) return pf_fail(g->ctx, PF_EINVAL, "coherent-state width must be positive");
        T[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double complex));
        if (!T[a]) {
            for (int b = 0; b < a; b++) pf_context_free(g->ctx, T[b]);
            return pf_context_status(g->ctx);
        }
        double c = center[a] + shift[a], s2 = sigma0[a] * sigma0[a];
        double amp = pow(PF_TWO_PI * s2, -0.25);
        for (size_t j = 0; j < g->n[a]; j++) {
            double u = g->x[a][j] - c;
            T[a][j] = amp * cexp(-u * u / (4 * s2) + I * kmean[a] * u);
        }
    }
    size_t idx[PF_MAX_DIM] = {0, 0, 0};
    double complex *data = pf_wave_overwrite(w);
    for (size_t off = 0; off < g->total; off++) {
        double complex v = 1;
        for (int a = 0; a < d; a++) v *= T[a][idx[a]];
        data[off] = v;
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < g->n[a]) break;
            idx[a] = 0;
        }
    }
    for (int a = 0; a < d; a++) pf_context_free(g->ctx, T[a]);
    w->rep = PF_POSITION;
    pf_status s = pf_wave_normalize(w);
    if (s) return s;
    pf_wave_log_step(w, "build", "coherent", 0.0, 0.0, -1.0);
    return PF_OK;
}
