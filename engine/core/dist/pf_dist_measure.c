/* pf_dist_measure.c - small measurements of a distributed wave's density,
 * computed on each rank's planes (pf_dist_measure.h): marginals and column
 * densities, slices, radial profiles, moments, region probabilities and the
 * column picture.
 *
 * A walk hands the density to an accumulator one run at a time: a run is a
 * stretch of the last axis in the single process's field order (ascending
 * wave numbers in momentum), with values computed by pf_grid_density_of's
 * formulas into one row of work.  The single process visits its whole field
 * in offset order; a walk visits the same runs in the same order, only
 * spread over the ranks, so each accumulator adds the same terms in the same
 * order and gets the same bits. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_dist_measure.h"
#include "pf_internal.h"

void pf_field_geometry(const pf_grid *g, pf_rep rep, pf_field *out)
{
    memset(out, 0, sizeof *out);
    out->ctx = g->ctx;
    out->dim = g->dim;
    out->total = g->total;
    for (int a = 0; a < PF_MAX_DIM; a++) {
        out->n[a] = 1;
        out->first[a] = 0;
        out->step[a] = 1;
    }
    for (int a = 0; a < g->dim; a++) {
        out->n[a] = g->n[a];
        out->first[a] = rep == PF_POSITION ? g->x[a][0] : g->k[a][pf_grid_fft_index(g, a, 0)];
        out->step[a] = rep == PF_POSITION ? g->dx[a] : pf_grid_kspacing(g, a);
    }
}

int pf_dist_flag_any(const pf_grid *g, int flag) { return pf_dist_any(g, flag); }

#ifndef PF_HAVE_DIST

pf_status pf_dist_marginal(pf_wave *w, pf_rep rep, const pf_field *geom, const int *keep, pf_field *out)
{
    (void)rep, (void)geom, (void)keep, (void)out;
    return pf_dist_refuse(w->grid->ctx, "a distributed marginal");
}
pf_status pf_dist_slice(pf_wave *w, pf_rep rep, const pf_field *geom, const size_t *fixed, pf_field *out)
{
    (void)rep, (void)geom, (void)fixed, (void)out;
    return pf_dist_refuse(w->grid->ctx, "a distributed slice");
}
pf_status pf_dist_radial(pf_wave *w, pf_rep rep, const pf_field *geom, const double *center, double bin, size_t nbins,
                         double *profile, double *count)
{
    (void)rep, (void)geom, (void)center, (void)bin, (void)nbins, (void)profile, (void)count;
    return pf_dist_refuse(w->grid->ctx, "a distributed radial profile");
}
pf_status pf_dist_moments(pf_wave *w, pf_rep rep, const pf_field *geom, double *mean, double *cov)
{
    (void)rep, (void)geom, (void)mean, (void)cov;
    return pf_dist_refuse(w->grid->ctx, "distributed moments");
}
pf_status pf_dist_region_probability(pf_wave *w, const pf_region *r, double *p)
{
    (void)r, (void)p;
    return pf_dist_refuse(w->grid->ctx, "a distributed region probability");
}
pf_status pf_dist_draw_events(pf_wave *w, pf_rep rep, const pf_field *geom, pf_rng *rng, size_t count, int jitter,
                         double *out)
{
    (void)rep, (void)geom, (void)rng, (void)count, (void)jitter, (void)out;
    return pf_dist_refuse(w->grid->ctx, "distributed sampling");
}
pf_status pf_dist_column_picture(pf_wave *w, pf_rep rep, double *out)
{
    (void)rep, (void)out;
    return pf_dist_refuse(w->grid->ctx, "a distributed column picture");
}

#else /* PF_HAVE_DIST */

#include <mpi.h>

/* MPI counts are ints: messages go in pieces of at most 2^27 doubles. */
#define PIECE ((size_t)1 << 27)
#define CHAIN_TAG 29

typedef void (*run_fn)(void *user, const size_t *start, size_t count, const double *values);

/* Ascending indices [lo, hi) of the split axis (0 in position, 1 in
 * momentum) that one rank holds as consecutive storage planes. */
typedef struct run_seg {
    int owner;
    size_t lo, hi;
} run_seg;

typedef struct walk {
    pf_wave *w;
    pf_grid *g;
    pf_rep rep;
    int rank;
    size_t first;   /* this rank's first storage plane of the split axis */
    double scale;   /* momentum: |phi|^2 / |S|^2, pf_grid_density_of's factor */
    double *row;    /* one run of density values */
    run_seg *seg;   /* every rank's runs of the split axis, ascending */
    int nseg;
    double *entry;  /* when set: acc[0] before each of this rank's visits, in order */
    int cut;        /* position visits: 1 or 2 restrict that axis to [cut_lo, cut_hi) */
    size_t cut_lo, cut_hi;
} walk;

static void send_doubles(double *v, size_t n, int to)
{
    for (size_t at = 0; at < n; at += PIECE)
        MPI_Send(v + at, (int)(n - at < PIECE ? n - at : PIECE), MPI_DOUBLE, to, CHAIN_TAG, MPI_COMM_WORLD);
}

static void recv_doubles(double *v, size_t n, int from)
{
    for (size_t at = 0; at < n; at += PIECE)
        MPI_Recv(v + at, (int)(n - at < PIECE ? n - at : PIECE), MPI_DOUBLE, from, CHAIN_TAG, MPI_COMM_WORLD,
                 MPI_STATUS_IGNORE);
}

static void bcast_doubles(double *v, size_t n, int root)
{
    for (size_t at = 0; at < n; at += PIECE)
        MPI_Bcast(v + at, (int)(n - at < PIECE ? n - at : PIECE), MPI_DOUBLE, root, MPI_COMM_WORLD);
}

/* Cells only one rank writes (the others hold exact zeros): x + 0 = x, so
 * the sum in any order is the writer's value. */
static void combine_disjoint(double *v, size_t n)
{
    for (size_t at = 0; at < n; at += PIECE)
        MPI_Allreduce(MPI_IN_PLACE, v + at, (int)(n - at < PIECE ? n - at : PIECE), MPI_DOUBLE, MPI_SUM, MPI_COMM_WORLD);
}

/* A local failure (memory) fails every rank here, before any rank enters
 * the walk's messages alone. */
static pf_status agree_ok(pf_context *ctx, int ok, const char *what)
{
    int all = 0;
    MPI_Allreduce(&ok, &all, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (all) return PF_OK;
    if (!ok) return pf_context_status(ctx) ? pf_context_status(ctx) : pf_fail(ctx, PF_ENOMEM, "out of memory in %s", what);
    return pf_fail(ctx, PF_ENOMEM, "another MPI rank ran out of memory in %s", what);
}

static void walk_close(walk *k)
{
    pf_context_free(k->g->ctx, k->row);
    pf_context_free(k->g->ctx, k->seg);
    k->row = NULL;
    k->seg = NULL;
}

/* Brings w to rep and finds who holds which runs of the split axis. */
static pf_status walk_open(walk *k, pf_wave *w, pf_rep rep, const char *what)
{
    memset(k, 0, sizeof *k);
    pf_grid *g = w->grid;
    pf_context *ctx = g->ctx;
    k->w = w;
    k->g = g;
    k->rep = rep;
    k->rank = pf_dist_rank();
    pf_status s = pf_wave_to(w, rep); /* collective; the same outcome on every rank */
    if (s) return s;
    k->scale = 1.0;
    if (rep == PF_MOMENTUM)
        for (int a = 0; a < g->dim; a++) k->scale *= g->span[a] * g->span[a] / PF_TWO_PI;
    const int ranks = pf_dist_ranks(), split = rep == PF_MOMENTUM ? 1 : 0;
    size_t longest = 1;
    for (int a = 0; a < g->dim; a++) longest = g->n[a] > longest ? g->n[a] : longest;
    size_t count;
    pf_grid_slab(g, rep, &k->first, &count);
    long long mine[2] = {(long long)k->first, (long long)count};
    long long *all = PF_ALLOC_N(ctx, 2 * (size_t)ranks, sizeof(long long));
    k->row = PF_ALLOC_N(ctx, longest, sizeof(double));
    k->seg = PF_ALLOC_N(ctx, (size_t)ranks + 2, sizeof(run_seg));
    s = agree_ok(ctx, all && k->row && k->seg, what);
    if (s) {
        pf_context_free(ctx, all);
        walk_close(k);
        return s;
    }
    MPI_Allgather(mine, 2, MPI_LONG_LONG, all, 2, MPI_LONG_LONG, MPI_COMM_WORLD);
    /* Ascending order of the split axis: storage order in position; in
     * momentum the negative wave numbers (upper storage planes) come first. */
    const size_t n = g->n[split];
    for (size_t a = 0; a < n; a++) {
        size_t j = split ? pf_grid_fft_index(g, 1, a) : a;
        int owner = 0;
        for (int r = 0; r < ranks; r++)
            if ((size_t)all[2 * r] <= j && j < (size_t)(all[2 * r] + all[2 * r + 1])) owner = r;
        run_seg *last = k->nseg ? &k->seg[k->nseg - 1] : NULL;
        size_t jlast = last ? (split ? pf_grid_fft_index(g, 1, last->hi - 1) : last->hi - 1) : 0;
        if (last && last->owner == owner && j == jlast + 1) {
            last->hi = a + 1;
        } else {
            k->seg[k->nseg].owner = owner;
            k->seg[k->nseg].lo = a;
            k->seg[k->nseg].hi = a + 1;
            k->nseg++;
        }
    }
    pf_context_free(ctx, all);
    return PF_OK;
}

static inline double rho_of(double complex z) { return creal(z) * creal(z) + cimag(z) * cimag(z); }

/* The runs of segment sg (owned here), for the ascending index a0 of axis 0
 * in momentum (position: a0 unused, the segment is a range of planes). */
static void visit(walk *k, const run_seg *sg, size_t a0, run_fn fn, void *user)
{
    const pf_grid *g = k->g;
    const double complex *z = k->w->store;
    const size_t n0 = g->n[0], n1 = g->n[1], n2 = g->dim == 3 ? g->n[2] : 1;
    double *row = k->row;
    if (k->rep == PF_POSITION) {
        const size_t jlo = k->cut == 1 ? k->cut_lo : 0, jhi = k->cut == 1 ? k->cut_hi : n1;
        const size_t clo = k->cut == 2 ? k->cut_lo : 0, chi = k->cut == 2 ? k->cut_hi : n2;
        for (size_t i = sg->lo; i < sg->hi; i++) {
            const double complex *plane = z + (i - k->first) * n1 * n2;
            if (g->dim == 2) {
                for (size_t j = jlo; j < jhi; j++) row[j - jlo] = rho_of(plane[j]);
                fn(user, (const size_t[]){i, jlo, 0}, jhi - jlo, row);
                continue;
            }
            for (size_t j = jlo; j < jhi; j++) {
                for (size_t c = clo; c < chi; c++) row[c - clo] = rho_of(plane[j * n2 + c]);
                fn(user, (const size_t[]){i, j, clo}, chi - clo, row);
            }
        }
        return;
    }
    /* Transposed momentum slab: axis 1 slowest, then axis 0, then axis 2. */
    const size_t i = pf_grid_fft_index(g, 0, a0);
    const double s = k->scale;
    if (g->dim == 2) {
        for (size_t a1 = sg->lo; a1 < sg->hi; a1++) {
            size_t j = pf_grid_fft_index(g, 1, a1);
            row[a1 - sg->lo] = s * rho_of(z[(j - k->first) * n0 + i]);
        }
        fn(user, (const size_t[]){a0, sg->lo, 0}, sg->hi - sg->lo, row);
        return;
    }
    for (size_t a1 = sg->lo; a1 < sg->hi; a1++) {
        size_t j = pf_grid_fft_index(g, 1, a1);
        const double complex *line = z + ((j - k->first) * n0 + i) * n2;
        for (size_t a2 = 0; a2 < n2; a2++) row[a2] = s * rho_of(line[pf_grid_fft_index(g, 2, a2)]);
        fn(user, (const size_t[]){a0, a1, 0}, n2, row);
    }
}

/* Rounds of the walk: position one (the planes in rank order); momentum one
 * per ascending index of axis 0, which is the slowest in field order. */
static size_t rounds_of(const walk *k) { return k->rep == PF_MOMENTUM ? k->g->n[0] : 1; }

/* Every run this rank holds, each cell's terms in field order; for
 * accumulators whose cells only one rank writes. */
static void walk_local(walk *k, run_fn fn, void *user)
{
    for (size_t r = 0; r < rounds_of(k); r++)
        for (int s = 0; s < k->nseg; s++)
            if (k->seg[s].owner == k->rank) visit(k, &k->seg[s], r, fn, user);
}

/* The whole field in field order: the accumulator acc (n doubles, equal on
 * every rank on entry) travels from segment owner to segment owner.  With
 * stride > 0, round r only touches acc[r stride, (r + 1) stride) (cells of
 * one wave number of axis 0), so only that window travels and every round
 * starts from its untouched zeros.  The owner of the last segment ends with
 * the whole result and broadcasts it. */
static void walk_ordered(walk *k, run_fn fn, void *user, double *acc, size_t n, size_t stride)
{
    const size_t rounds = rounds_of(k);
    const int S = k->nseg;
    for (size_t r = 0; r < rounds; r++) {
        double *win = stride ? acc + r * stride : acc;
        const size_t len = stride ? stride : n;
        for (int s = 0; s < S; s++) {
            if (k->seg[s].owner != k->rank) continue;
            int prev = s > 0 ? k->seg[s - 1].owner : (!stride && r > 0 ? k->seg[S - 1].owner : -1);
            int next = s < S - 1 ? k->seg[s + 1].owner : (!stride && r + 1 < rounds ? k->seg[0].owner : -1);
            if (prev >= 0 && prev != k->rank) recv_doubles(win, len, prev);
            if (k->entry) *k->entry++ = win[0];
            visit(k, &k->seg[s], r, fn, user);
            if (next >= 0 && next != k->rank) send_doubles(win, len, next);
        }
    }
    bcast_doubles(acc, n, k->seg[S - 1].owner);
}

/* walk_ordered for position accumulators whose cells follow one axis
 * `cut` (1 or 2) of the field, `cells` of them per index of that axis: the
 * axis is cut into chunks, and chunk c only touches its own window of acc,
 * so while rank r adds its planes to chunk c, rank r + 1 already adds its
 * planes to chunk c - 1.  Each cell still receives its terms in plane order
 * (the single process's), but the ranks work at once instead of in turn:
 * about 8 chunks per rank keep the pipeline's fill and drain short. */
static void walk_pipelined(walk *k, run_fn fn, void *user, double *acc, size_t n, int cut, size_t cells)
{
    const int S = k->nseg;
    const size_t len = k->g->n[cut], want = 8 * (size_t)pf_dist_ranks();
    const size_t per = (len + want - 1) / want;
    k->cut = cut;
    for (size_t lo = 0; lo < len; lo += per) {
        k->cut_lo = lo;
        k->cut_hi = lo + per < len ? lo + per : len;
        double *win = acc + lo * cells;
        const size_t wn = (k->cut_hi - lo) * cells;
        for (int s = 0; s < S; s++) {
            if (k->seg[s].owner != k->rank) continue;
            if (s > 0 && k->seg[s - 1].owner != k->rank) recv_doubles(win, wn, k->seg[s - 1].owner);
            visit(k, &k->seg[s], 0, fn, user);
            if (s < S - 1 && k->seg[s + 1].owner != k->rank) send_doubles(win, wn, k->seg[s + 1].owner);
        }
    }
    k->cut = 0;
    bcast_doubles(acc, n, k->seg[S - 1].owner);
}

/* Opens the walk and makes the result field of `kept` axes (a marginal or a
 * slice): every rank agrees that the field exists before any rank walks, or
 * all fail with nothing left open or allocated. */
static pf_status walk_open_with_field(walk *k, pf_wave *w, pf_rep rep, int kept, const size_t *n,
                                      const double *first, const double *step, pf_field *out, const char *what)
{
    pf_context *ctx = w->grid->ctx;
    pf_status s = walk_open(k, w, rep, what);
    if (s) return s;
    s = pf_field_new(ctx, kept, n, first, step, out);
    s = agree_ok(ctx, s == PF_OK, what);
    if (s) {
        pf_field_free(out);
        walk_close(k);
    }
    return s;
}

/* ---- marginals ---- */

typedef struct marg_job {
    int dim, kept, map[PF_MAX_DIM], last_kept;
    size_t n[PF_MAX_DIM];
    double weight;
    double *out;
} marg_job;

static void marg_run(void *user, const size_t *start, size_t count, const double *v)
{
    const marg_job *m = user;
    size_t o = 0;
    for (int b = 0; b < m->kept; b++) o = o * m->n[b] + start[m->map[b]];
    /* pf_field_marginal: out[o] += value * weight, in field order. */
    if (m->last_kept)
        for (size_t t = 0; t < count; t++) m->out[o + t] += v[t] * m->weight;
    else
        for (size_t t = 0; t < count; t++) m->out[o] += v[t] * m->weight;
}

pf_status pf_dist_marginal(pf_wave *w, pf_rep rep, const pf_field *geom, const int *keep, pf_field *out)
{
    const int d = geom->dim;
    marg_job m = {.dim = d, .weight = 1};
    double first[PF_MAX_DIM], step[PF_MAX_DIM];
    for (int a = 0; a < d; a++) {
        if (keep[a]) {
            m.map[m.kept] = a;
            m.n[m.kept] = geom->n[a];
            first[m.kept] = geom->first[a];
            step[m.kept] = geom->step[a];
            m.kept++;
        } else {
            m.weight *= geom->step[a];
        }
    }
    memset(out, 0, sizeof *out);
    pf_context *ctx = w->grid->ctx;
    if (!m.kept) return pf_fail(ctx, PF_EINVAL, "a marginal must keep at least one axis");
    m.last_kept = keep[d - 1] != 0;
    walk k;
    pf_status s = walk_open_with_field(&k, w, rep, m.kept, m.n, first, step, out, "a distributed marginal");
    if (s) return s;
    m.out = out->values;
    const int split = rep == PF_MOMENTUM ? 1 : 0;
    if (keep[split]) {
        walk_local(&k, marg_run, &m);
        combine_disjoint(out->values, out->total);
    } else if (rep == PF_POSITION) {
        /* Axis 0 summed over: the result's cells follow axis 1 when it is
         * kept, else axis 2 (3D, only axis 2 kept). */
        if (keep[1]) walk_pipelined(&k, marg_run, &m, out->values, out->total, 1, d == 3 && keep[2] ? geom->n[2] : 1);
        else walk_pipelined(&k, marg_run, &m, out->values, out->total, 2, 1);
    } else {
        /* Momentum with axis 0 kept: its cells come first in the result, and
         * each round only touches (and hands on) its own. */
        size_t stride = 0;
        if (keep[0]) stride = out->total / geom->n[0];
        walk_ordered(&k, marg_run, &m, out->values, out->total, stride);
    }
    walk_close(&k);
    return PF_OK;
}

/* ---- slices ---- */

typedef struct slice_job {
    int dim, kept, map[PF_MAX_DIM];
    size_t n[PF_MAX_DIM];
    const size_t *fixed;
    double *out;
} slice_job;

static void slice_run(void *user, const size_t *start, size_t count, const double *v)
{
    const slice_job *j = user;
    const int last = j->dim - 1;
    for (int a = 0; a < last; a++)
        if (j->fixed[a] != PF_FREE_AXIS && start[a] != j->fixed[a]) return;
    size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
    for (size_t t = 0; t < count; t++) {
        idx[last] = start[last] + t;
        if (j->fixed[last] != PF_FREE_AXIS && idx[last] != j->fixed[last]) continue;
        size_t o = 0;
        for (int b = 0; b < j->kept; b++) o = o * j->n[b] + idx[j->map[b]];
        j->out[o] = v[t];
    }
}

pf_status pf_dist_slice(pf_wave *w, pf_rep rep, const pf_field *geom, const size_t *fixed, pf_field *out)
{
    const int d = geom->dim;
    pf_context *ctx = w->grid->ctx;
    slice_job j = {.dim = d, .fixed = fixed};
    double first[PF_MAX_DIM], step[PF_MAX_DIM];
    memset(out, 0, sizeof *out);
    for (int a = 0; a < d; a++) {
        if (fixed[a] == PF_FREE_AXIS) {
            j.map[j.kept] = a;
            j.n[j.kept] = geom->n[a];
            first[j.kept] = geom->first[a];
            step[j.kept] = geom->step[a];
            j.kept++;
        } else if (fixed[a] >= geom->n[a]) {
            return pf_fail(ctx, PF_EINVAL, "slice index %zu on axis %d is outside 0..%zu", fixed[a], a + 1,
                           geom->n[a] - 1);
        }
    }
    if (!j.kept) return pf_fail(ctx, PF_EINVAL, "a slice needs at least one free axis");
    walk k;
    pf_status s = walk_open_with_field(&k, w, rep, j.kept, j.n, first, step, out, "a distributed slice");
    if (s) return s;
    j.out = out->values;
    /* Every cell is one point of the field: one rank writes it. */
    walk_local(&k, slice_run, &j);
    combine_disjoint(out->values, out->total);
    walk_close(&k);
    return PF_OK;
}

/* ---- radial profiles ---- */

typedef struct radial_job {
    const pf_field *geom;
    const double *center;
    double bin;
    size_t nbins;
    double *profile, *count; /* one accumulator: count = profile + nbins */
} radial_job;

static void radial_run(void *user, const size_t *start, size_t count, const double *v)
{
    const radial_job *r = user;
    const pf_field *f = r->geom;
    const int d = f->dim, last = d - 1;
    for (size_t t = 0; t < count; t++) {
        double r2 = 0;
        for (int a = 0; a < d; a++) {
            double dd = pf_field_coord(f, a, a == last ? start[a] + t : start[a]) - r->center[a];
            r2 += dd * dd;
        }
        double b = floor(sqrt(r2) / r->bin);
        if (b >= (double)r->nbins) continue;
        r->profile[(size_t)b] += v[t];
        r->count[(size_t)b] += 1;
    }
}

pf_status pf_dist_radial(pf_wave *w, pf_rep rep, const pf_field *geom, const double *center, double bin, size_t nbins,
                         double *profile, double *count)
{
    pf_context *ctx = w->grid->ctx;
    if (geom->dim < 2) return pf_fail(ctx, PF_EINVAL, "a radial profile needs a 2D or 3D distribution");
    if (!(bin > 0) || !isfinite(bin)) return pf_fail(ctx, PF_EINVAL, "radial bin width must be positive, got %g", bin);
    if (nbins < 1) return pf_fail(ctx, PF_EINVAL, "a radial profile needs at least one bin");
    walk k;
    pf_status s = walk_open(&k, w, rep, "a distributed radial profile");
    if (s) return s;
    double *acc = PF_ALLOC_N(ctx, 2 * nbins, sizeof(double));
    s = agree_ok(ctx, acc != NULL, "a distributed radial profile");
    if (s) {
        walk_close(&k);
        return s;
    }
    memset(acc, 0, 2 * nbins * sizeof(double));
    radial_job r = {geom, center, bin, nbins, acc, acc + nbins};
    walk_ordered(&k, radial_run, &r, acc, 2 * nbins, 0);
    for (size_t b = 0; b < nbins; b++) {
        profile[b] = acc[b];
        count[b] = acc[nbins + b];
        if (count[b] > 0) profile[b] /= count[b];
    }
    pf_context_free(ctx, acc);
    walk_close(&k);
    return PF_OK;
}

/* ---- moments ---- */

typedef struct moment_job {
    const pf_field *geom;
    int second;               /* 0: sum and first moments; 1: second about m */
    double m[PF_MAX_DIM];
    double *acc;              /* pass 1: s0, s1[d]; pass 2: s2[d d] */
} moment_job;

static void moment_run(void *user, const size_t *start, size_t count, const double *v)
{
    const moment_job *j = user;
    const pf_field *f = j->geom;
    const int d = f->dim, last = d - 1;
    double *acc = j->acc;
    for (size_t t = 0; t < count; t++) {
        size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
        idx[last] += t;
        if (!j->second) {
            acc[0] += v[t];
            for (int a = 0; a < d; a++) acc[1 + a] += v[t] * pf_field_coord(f, a, idx[a]);
            continue;
        }
        double dx[PF_MAX_DIM];
        for (int a = 0; a < d; a++) dx[a] = pf_field_coord(f, a, idx[a]) - j->m[a];
        for (int a = 0; a < d; a++)
            for (int b = a; b < d; b++) acc[a * d + b] += v[t] * dx[a] * dx[b];
    }
}

pf_status pf_dist_moments(pf_wave *w, pf_rep rep, const pf_field *geom, double *mean, double *cov)
{
    pf_context *ctx = w->grid->ctx;
    const int d = geom->dim;
    walk k;
    pf_status s = walk_open(&k, w, rep, "distributed moments");
    if (s) return s;
    double acc[1 + PF_MAX_DIM * PF_MAX_DIM] = {0};
    moment_job j = {.geom = geom, .acc = acc};
    walk_ordered(&k, moment_run, &j, acc, 1 + (size_t)d, 0);
    const double s0 = acc[0];
    if (!(s0 > 0)) {
        walk_close(&k);
        return pf_fail(ctx, PF_EINVAL, "moments of a zero distribution are undefined");
    }
    for (int a = 0; a < d; a++) j.m[a] = acc[1 + a] / s0;
    if (mean)
        for (int a = 0; a < d; a++) mean[a] = j.m[a];
    if (cov) {
        /* pf_field_moments' second pass about the mean. */
        memset(acc, 0, sizeof acc);
        j.second = 1;
        walk_ordered(&k, moment_run, &j, acc, (size_t)d * (size_t)d, 0);
        for (int a = 0; a < d; a++)
            for (int b = a; b < d; b++) cov[a * d + b] = cov[b * d + a] = acc[a * d + b] / s0;
    }
    walk_close(&k);
    return PF_OK;
}

/* ---- region probabilities ---- */

typedef struct region_job {
    const pf_grid *g;
    const pf_region *r;
    double acc[2]; /* sum of weight * density, sum of density */
} region_job;

/* pf_region_weights' rule at one point. */
static double region_weight(const pf_grid *g, const pf_region *r, const size_t *idx)
{
    const int d = g->dim;
    if (r->kind == PF_REGION_MASK)
        return r->mask[(idx[0] * g->n[1] + idx[1]) * (d == 3 ? g->n[2] : 1) + (d == 3 ? idx[2] : 0) - r->mask_first];
    double x[PF_MAX_DIM];
    for (int a = 0; a < d; a++) x[a] = g->x[a][idx[a]];
    return pf_region_contains(d, r, x) ? 1.0 : 0.0;
}

static void region_run(void *user, const size_t *start, size_t count, const double *v)
{
    region_job *j = user;
    const int last = j->g->dim - 1;
    size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
    for (size_t t = 0; t < count; t++) {
        idx[last] = start[last] + t;
        j->acc[0] += region_weight(j->g, j->r, idx) * v[t];
        j->acc[1] += v[t];
    }
}

pf_status pf_dist_region_probability(pf_wave *w, const pf_region *r, double *p)
{
    pf_grid *g = w->grid;
    pf_status s = pf_region_check(g, r);
    if (s) return s;
    walk k;
    s = walk_open(&k, w, PF_POSITION, "a distributed region probability");
    if (s) return s;
    region_job j = {g, r, {0, 0}};
    walk_ordered(&k, region_run, &j, j.acc, 2, 0);
    walk_close(&k);
    /* pf_field_region_integral and pf_field_integral's volumes. */
    double inside = j.acc[0] * pf_grid_cell_volume(g), vol = 1;
    for (int a = 0; a < g->dim; a++) vol *= g->dx[a];
    double norm = j.acc[1] * vol;
    if (!(norm > 0)) return pf_fail(g->ctx, PF_EINVAL, "region probability of a zero state is undefined");
    *p = inside / norm;
    return PF_OK;
}

/* ---- Born-rule samples ---- */

/* Pass 1 token, handed along in field order: pf_sampler_init's running sum
 * and the first value it would refuse (field offset, value). */
typedef struct cdf_job {
    const pf_grid *g;
    double *acc; /* run, first bad offset (-1: none), its value */
} cdf_job;

static size_t field_offset(const pf_grid *g, const size_t *start)
{
    return g->dim == 3 ? (start[0] * g->n[1] + start[1]) * g->n[2] + start[2] : start[0] * g->n[1] + start[1];
}

static void cdf_run(void *user, const size_t *start, size_t count, const double *v)
{
    const cdf_job *j = user;
    double *acc = j->acc;
    for (size_t t = 0; t < count; t++) {
        if ((!(v[t] >= 0) || !isfinite(v[t])) && acc[1] < 0) {
            acc[1] = (double)(field_offset(j->g, start) + t);
            acc[2] = v[t];
        }
        acc[0] += v[t];
    }
}

/* Pass 2, on this rank alone: the running sum again from each visit's
 * entry value (the same additions, so the same cumulative values), and each
 * event whose level the cumulative value passes is in that cell
 * (pf_sampler_cell: the first cell whose cumulative sum exceeds it). */
typedef struct find_job {
    const pf_grid *g;
    double run;
    const double *level;  /* per event */
    const size_t *order;  /* events by ascending level */
    size_t count, next;   /* next: first event in order not yet placed */
    double *cell;         /* per event: field offset + 1, 0 when elsewhere */
} find_job;

static void find_run(void *user, const size_t *start, size_t count, const double *v)
{
    find_job *j = user;
    const size_t base = field_offset(j->g, start);
    for (size_t t = 0; t < count; t++) {
        j->run += v[t];
        while (j->next < j->count && j->level[j->order[j->next]] < j->run) j->cell[j->order[j->next++]] = (double)(base + t) + 1;
    }
}

static const double *sort_levels;
static int by_level(const void *x, const void *y)
{
    double a = sort_levels[*(const size_t *)x], b = sort_levels[*(const size_t *)y];
    if (a < b) return -1;
    if (a > b) return 1;
    return *(const size_t *)x < *(const size_t *)y ? -1 : *(const size_t *)x > *(const size_t *)y;
}

pf_status pf_dist_draw_events(pf_wave *w, pf_rep rep, const pf_field *geom, pf_rng *rng, size_t count, int jitter,
                         double *out)
{
    pf_grid *g = w->grid;
    pf_context *ctx = g->ctx;
    const int d = g->dim;
    walk k;
    pf_status s = walk_open(&k, w, rep, "distributed sampling");
    if (s) return s;
    /* Entry sums: one per visit of this rank (one per round and segment). */
    size_t visits = 0;
    for (int q = 0; q < k.nseg; q++) visits += k.seg[q].owner == k.rank;
    visits *= rounds_of(&k);
    double *entry = PF_ALLOC_N(ctx, visits ? visits : 1, sizeof(double));
    double *level = PF_ALLOC_N(ctx, count ? count : 1, sizeof(double));
    double *cell = PF_ALLOC_N(ctx, count ? count : 1, sizeof(double));
    size_t *order = PF_ALLOC_N(ctx, count ? count : 1, sizeof(size_t));
    s = agree_ok(ctx, entry && level && cell && order, "distributed sampling");
    double acc[3] = {0, -1, 0};
    if (!s) {
        cdf_job cj = {g, acc};
        k.entry = entry;
        walk_ordered(&k, cdf_run, &cj, acc, 3, 0);
        k.entry = NULL;
        if (acc[1] >= 0)
            s = pf_fail(ctx, PF_EINVAL, "sampling needs non-negative finite weights; value %zu is %g", (size_t)acc[1] + 1,
                        acc[2]);
        else if (!(acc[0] > 0))
            s = pf_fail(ctx, PF_EINVAL, "cannot sample from a distribution whose total is %g", acc[0]);
    }
    if (!s) {
        /* The generator's draws in pf_sampler_draw's order on every rank,
         * so all generators stay in step; the jitter uniforms wait in out.
         * A level is where pf_sampler_cell starts its search: the larger of
         * u total and its guide slice's level. */
        const double total = acc[0];
        const size_t nguide = g->total;
        for (size_t e = 0; e < count; e++) {
            double u = pf_rng_uniform(rng);
            size_t gi = (size_t)(u * (double)nguide);
            if (gi >= nguide) gi = nguide - 1;
            double lv = u * total, lg = total * (double)gi / (double)nguide;
            level[e] = lv > lg ? lv : lg;
            order[e] = e;
            cell[e] = 0;
            if (jitter)
                for (int a = 0; a < d; a++) out[e * (size_t)d + (size_t)a] = pf_rng_uniform(rng);
        }
        sort_levels = level;
        qsort(order, count, sizeof *order, by_level);
        find_job fj = {g, 0, level, order, count, 0, cell};
        size_t v = 0;
        for (size_t r = 0; r < rounds_of(&k); r++)
            for (int q = 0; q < k.nseg; q++) {
                if (k.seg[q].owner != k.rank) continue;
                fj.run = entry[v++];
                /* Events below the entry sum lie in earlier cells. */
                size_t lo = 0, hi = count;
                while (lo < hi) {
                    size_t mid = lo + (hi - lo) / 2;
                    if (level[order[mid]] < fj.run) lo = mid + 1;
                    else hi = mid;
                }
                fj.next = lo;
                visit(&k, &k.seg[q], r, find_run, &fj);
            }
        combine_disjoint(cell, count);
        for (size_t e = 0; e < count; e++) {
            /* No cumulative sum above the level: the last cell, as pf_sampler_cell. */
            size_t c = cell[e] > 0 ? (size_t)cell[e] - 1 : g->total - 1;
            double *ev = out + e * (size_t)d;
            for (int a = d - 1; a >= 0; a--) {
                size_t j = c % geom->n[a];
                c /= geom->n[a];
                double jit = ev[a];
                ev[a] = pf_field_coord(geom, a, j);
                if (jitter) ev[a] += (jit - 0.5) * geom->step[a];
            }
        }
    }
    pf_context_free(ctx, entry);
    pf_context_free(ctx, level);
    pf_context_free(ctx, cell);
    pf_context_free(ctx, order);
    walk_close(&k);
    return s;
}

/* ---- the column picture ---- */

typedef struct column_job {
    size_t n1;
    double dz;
    double *out;
} column_job;

static void column_run(void *user, const size_t *start, size_t count, const double *v)
{
    const column_job *c = user;
    /* The run is a whole row along axis 2 (walk_local): its column as the
     * single process's picture computes it. */
    pf_column_integrals(v, 1, count, c->dz, &c->out[start[0] * c->n1 + start[1]]);
}

pf_status pf_dist_column_picture(pf_wave *w, pf_rep rep, double *out)
{
    pf_grid *g = w->grid;
    if (g->dim != 3) return pf_fail(g->ctx, PF_EINVAL, "a column picture needs a 3D wave");
    walk k;
    pf_status s = walk_open(&k, w, rep, "a distributed column picture");
    if (s) return s;
    column_job c = {g->n[1], rep == PF_POSITION ? pf_grid_spacing(g, 2) : pf_grid_kspacing(g, 2), out};
    memset(out, 0, g->n[0] * g->n[1] * sizeof(double));
    walk_local(&k, column_run, &c); /* each row whole on one rank */
    combine_disjoint(out, g->n[0] * g->n[1]);
    walk_close(&k);
    return PF_OK;
}

#endif /* PF_HAVE_DIST */
