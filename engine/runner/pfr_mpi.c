/* pfr_mpi.c - MPI for sweeps over several machines.  Ranks share nothing but
 * the sweep folder and one reduction: each rank runs its points, then all
 * ranks learn every point's exit status, and rank 0 writes the table. */
#include <stdlib.h>
#include "pfr_mpi.h"
#ifdef PFR_HAVE_MPI
#include <mpi.h>
#endif

int pfr_mpi_available(void)
{
#ifdef PFR_HAVE_MPI
    return 1;
#else
    return 0;
#endif
}

int pfr_mpi_start(pfr_mpi *m)
{
    m->rank = 0;
    m->size = 1;
    m->active = 0;
#ifndef PFR_HAVE_MPI
    /* Several copies of a runner without MPI would each run every point
     * into the same folders. */
    const char *n = getenv("OMPI_COMM_WORLD_SIZE");
    if (!n) n = getenv("PMI_SIZE");
    if (n && atoi(n) > 1) return -1;
#else
    /* Launched by mpirun?  Calling MPI_Init in a plain shell would start a
     * singleton MPI job: slow, and it fails where no launcher is installed. */
    if (!getenv("OMPI_COMM_WORLD_SIZE") && !getenv("PMI_SIZE") && !getenv("PMIX_RANK")) return 0;
    if (MPI_Init(NULL, NULL) != MPI_SUCCESS) return -1;
    m->active = 1;
    MPI_Comm_rank(MPI_COMM_WORLD, &m->rank);
    MPI_Comm_size(MPI_COMM_WORLD, &m->size);
#endif
    return 0;
}

void pfr_mpi_max(pfr_mpi *m, int *values, int n)
{
#ifdef PFR_HAVE_MPI
    if (m->active && n > 0) MPI_Allreduce(MPI_IN_PLACE, values, n, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
#else
    (void)m, (void)values, (void)n;
#endif
}

void pfr_mpi_forget_launcher(void)
{
    unsetenv("OMPI_COMM_WORLD_SIZE");
    unsetenv("PMI_SIZE");
    unsetenv("PMIX_RANK");
}

void pfr_mpi_finish(pfr_mpi *m)
{
#ifdef PFR_HAVE_MPI
    if (m->active) MPI_Finalize();
#endif
    m->active = 0;
}

void pfr_mpi_abort(pfr_mpi *m, int status)
{
#ifdef PFR_HAVE_MPI
    if (m->active) MPI_Abort(MPI_COMM_WORLD, status);
#else
    (void)status;
#endif
    m->active = 0;
}
