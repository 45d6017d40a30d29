/* pf_dist_grid.h - the slab layout and FFTW-MPI plans of one grid split over
 * MPI ranks (pf_dist.h), shared by the files that work on split grids
 * (pf_dist.c, pf_dist_long.c).  Only for builds with FFTW's MPI layer
 * (PF_HAVE_DIST). */
#ifndef PF_DIST_GRID_H
#define PF_DIST_GRID_H

#include <stddef.h>
#include <mpi.h>
#include <fftw3-mpi.h>
#include "pf_internal.h"

struct pf_dist_grid {
    int rank, size;
    /* FFTW-MPI's split: planes [start0, start0 + n0loc) of axis 0 in
     * position, [start1, start1 + n1loc) of axis 1 in the transposed
     * momentum layout; alloc values of storage. */
    ptrdiff_t n0loc, start0, n1loc, start1, alloc;
    size_t plane;  /* values per axis-0 plane, position layout */
    size_t tplane; /* values per axis-1 plane, transposed layout */
    size_t lay[2][PF_MAX_DIM]; /* axis lengths of the two layouts, slowest first */
    size_t *range[2];          /* per rank: global offsets lo, hi of its samples, per layout */
    /* TRANSPOSED_OUT forward, TRANSPOSED_IN backward; borrowed from the
     * context's plan cache (pf_dist_plans), never destroyed with the grid. */
    fftw_plan fwd, bwd;
    /* Forward and backward with the position slab layout on both sides,
     * fetched on first use by a scaled flight (pf_dist_long.c; the cache's
     * too); NULL before. */
    fftw_plan nat_fwd, nat_bwd;
    double *local_part;        /* block partials this rank completes */
    size_t local_part_cap;     /* doubles */
    int *counts, *displs;      /* MPI_Allgatherv of the partials */
};

#endif
