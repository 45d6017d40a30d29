/* pf_dist.h - one 2D or 3D grid spread over MPI ranks in slabs along its
 * first axis, on FFTW's MPI layer (docs/distributed.md).
 *
 * A context set to distribute (pf_context_set_distribute) gives every 2D/3D
 * grid made while MPI runs a slab layout from fftw_mpi_local_size_transposed:
 * each rank stores planes [first, first + count) of axis 0 in position
 * representation and, in momentum representation, planes of axis 1 of the
 * transposed array (axes 0 and 1 swapped), as FFTW_MPI_TRANSPOSED_OUT leaves
 * it.  The grid's sizes, spans and coordinate tables stay global; only the
 * samples are split.  Every rank runs the same calls in the same order
 * (collective), and reductions add fixed blocks of the global array in
 * global order, so their results are the same bits for any rank count.
 *
 * Without MPI, FFTW-MPI or a started MPI, nothing is distributed and these
 * functions answer as for one process.  Only the functions listed in
 * docs/distributed.md work on a distributed wave; the others refuse it with
 * PF_ESTATE (see pf_dist_refuse). */
#ifndef PF_DIST_H
#define PF_DIST_H

#include <complex.h>
#include <stddef.h>
#include "pf_context.h"
#include "pf_grid.h"
#include "pf_wave.h"

/* 1 when the engine was built with FFTW's MPI layer. */
int pf_dist_built(void);
/* 1 when built with it and MPI has been started (MPI_Init) and not ended. */
int pf_dist_running(void);
/* This process's rank and the rank count (0 and 1 when MPI is not running). */
int pf_dist_rank(void);
int pf_dist_ranks(void);

/* For programs other than the runner (benchmarks): starts MPI when the
 * process was started by mpirun and MPI is not running yet (returns 1 when
 * MPI runs afterwards), and ends it.  The runner starts MPI itself. */
int pf_dist_start(void);
void pf_dist_stop(void);
/* Wall-clock seconds, the same on every rank to MPI's precision
 * (MPI_Wtime; a monotonic clock without MPI). */
double pf_dist_seconds(void);

/* Asks for distributed grids: every 2D/3D grid made afterwards on ctx while
 * MPI runs is split over the ranks.  Without MPI running it is recorded and
 * changes nothing. */
void pf_context_set_distribute(pf_context *ctx, int on);
int pf_context_distribute(const pf_context *ctx);

/* 1 when g's samples are split over ranks. */
int pf_grid_distributed(const pf_grid *g);
int pf_wave_distributed(const pf_wave *w);
/* The planes of axis 0 this rank holds in position representation (first
 * and count), and of axis 1 in momentum representation; a grid that is not
 * distributed holds all of them.  Bytes of one wave function on this rank. */
void pf_grid_slab(const pf_grid *g, pf_rep rep, size_t *first, size_t *count);
size_t pf_grid_local_bytes(const pf_grid *g);
/* Global row-major offsets [*begin, *end) of the position samples this
 * rank holds ([0, total) for a grid held whole): a sampler fills them in
 * order into a local array of end - begin values. */
void pf_grid_local_range(const pf_grid *g, size_t *begin, size_t *end);

/* The whole grid's smallest and largest value of a quantity each rank
 * knows for its own points (*lo, *hi: this rank's; +inf and -inf when it
 * holds none): exact minimum and maximum over the ranks, so every rank gets
 * the same pair.  Collective on a distributed grid; nothing to do on a grid
 * held whole. */
void pf_grid_combine_range(const pf_grid *g, double *lo, double *hi);

/* Gathers the whole wave in representation rep (position: natural order,
 * psi in the storage convention; momentum: FFT order S as a single process
 * stores it) into out (pf_grid_total values) on rank 0.  Collective; out is
 * only written, and only needed, on rank 0.  A wave that is not distributed
 * is copied after pf_wave_to. */
pf_status pf_wave_gather(pf_wave *w, pf_rep rep, double complex *out);

/* Rows first, first + 1, ... (count of them, wrapping past the last row to
 * row 0) of axis 0 of the whole wave in representation rep, onto rank 0's
 * out (count * pf_grid_total / n0 values, row after row; momentum: S in FFT
 * storage order as a single process stores it).  Collective; rank 0 holds
 * only these rows besides its slab, so a field too large for one rank is
 * written piece by piece (engine/io/pf_h5.c).  out is only written, and
 * only needed, on rank 0; a wave that is not distributed is copied. */
pf_status pf_wave_gather_rows(pf_wave *w, pf_rep rep, size_t first, size_t count, double complex *out);

/* The density |psi|^2 (position, natural order) or |phi|^2 (momentum,
 * ascending k), as pf_wave_density gives it, of the whole wave on rank 0
 * (out: pf_grid_total doubles there, unused elsewhere).  Collective. */
pf_status pf_wave_gather_density(pf_wave *w, pf_rep rep, double *out);

/* The refusal of functions that do not handle distributed waves (yet):
 * PF_ESTATE with a message naming the operation.  A core function that reads
 * the samples through pf_wave_to / pf_wave_settle gets it from there. */
pf_status pf_dist_refuse(pf_context *ctx, const char *what);

/* Rank count the memory per machine suggests for a grid: the smallest count
 * whose per-rank share of `waves` wave functions plus FFTW's work array fits
 * `bytes_per_rank`, and at most points[0] (one plane per rank).  0 when even
 * that does not fit.  Also the bytes per rank at that count. */
size_t pf_dist_advise_ranks(int dim, const size_t *points, double waves, double bytes_per_rank, double *need);

#endif
