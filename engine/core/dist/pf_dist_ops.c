/* pf_dist_ops.c - single samples of a distributed wave (w:psi, w:phi,
 * w:set_psi, w:set_phi; docs/distributed.md), and the range of values
 * that each rank knows for its own points only (pf.potential's range), and
 * the momentum-space pass of the closed-form fall (w:fall).
 *
 * A distributed wave holds planes of axis 0 in position and planes of axis
 * 1 of the transposed array in momentum (pf_dist.h).  One sample lives on
 * exactly one rank: that rank reads it from its slab and broadcasts it, so
 * every rank returns the same value (the script runs on every rank and must
 * not branch on anything rank-dependent); a write is done by the owner only,
 * since every rank was handed the same value by the same script line.
 * Without FFTW-MPI no grid is distributed and these index the whole array. */
#include <complex.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_internal.h"

#ifdef PF_HAVE_DIST
#include <mpi.h>
#endif

#define NOT_HERE ((size_t)-1)

/* Offset of global multi-index idx (row-major, momentum in FFT storage
 * order) in this rank's storage of rep, or NOT_HERE when another rank holds
 * it.  Position slabs keep axis 0's planes [first, first + count) in the
 * global order; momentum slabs keep axis 1's planes with axes 0 and 1
 * swapped (axis 1 slowest, then axis 0, then axis 2). */
static size_t local_offset(const pf_grid *g, pf_rep rep, const size_t *idx)
{
    const size_t n2 = g->dim == 3 ? g->n[2] : 1, i2 = g->dim == 3 ? idx[2] : 0;
    if (!pf_grid_distributed(g)) {
        size_t off = 0;
        for (int a = 0; a < g->dim; a++) off = off * g->n[a] + idx[a];
        return off;
    }
    size_t first, count;
    pf_grid_slab(g, rep, &first, &count);
    const int swap = rep == PF_MOMENTUM;
    const size_t plane = swap ? idx[1] : idx[0], inner = swap ? idx[0] : idx[1];
    const size_t inner_n = swap ? g->n[0] : g->n[1];
    if (plane < first || plane >= first + count) return NOT_HERE;
    return ((plane - first) * inner_n + inner) * n2 + i2;
}

double complex pf_dist_stored_value(const pf_grid *g, pf_rep rep, const double complex *store, const size_t *idx)
{
    size_t off = local_offset(g, rep, idx);
    if (!pf_grid_distributed(g)) return store[off];
#ifdef PF_HAVE_DIST
    /* The owner's rank, agreed by all (the others offer -1), then its value:
     * the real and imaginary parts travel as they are, signs of zero kept. */
    int rank = pf_dist_rank(), owner = -1, offer = off != NOT_HERE ? rank : -1;
    MPI_Allreduce(&offer, &owner, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
    double parts[2] = {0.0, 0.0};
    if (rank == owner) {
        parts[0] = creal(store[off]);
        parts[1] = cimag(store[off]);
    }
    MPI_Bcast(parts, 2, MPI_DOUBLE, owner, MPI_COMM_WORLD);
    /* A complex is laid out as its two parts (C11 6.2.5); CMPLX is not
     * defined by every compiler's complex.h. */
    double complex z;
    memcpy(&z, parts, sizeof z);
    return z;
#else
    return 0.0;
#endif
}

void pf_dist_store_value(const pf_grid *g, pf_rep rep, double complex *store, const size_t *idx, double complex v)
{
    size_t off = local_offset(g, rep, idx);
    if (off != NOT_HERE) store[off] = v;
}

void pf_grid_combine_range(const pf_grid *g, double *lo, double *hi)
{
    pf_dist_minmax(g, lo, hi); /* exact MPI_MIN and MPI_MAX: order-free */
}

pf_status pf_dist_momentum_pass(pf_wave *w, const double complex *const *tables)
{
    double scale = 1.0;
    /* From position: the unscaled forward transform, its 1/N joined to the
     * tables' pass as one process joins it (pf_wave_fall). */
    pf_status s = pf_dist_momentum_unscaled(w, &scale);
    if (s) return s;
    pf_dist_momentum_multiply(w->grid, w->store, tables, scale);
    pf_dist_backward(w->grid, w->store);
    w->rep = PF_POSITION;
    return PF_OK;
}
