/* pfr_mpi.h - the few MPI calls a sweep needs, compiled to single-process
 * stand-ins when the runner is built without MPI (pfr_mpi.c). */
#ifndef PFR_MPI_H
#define PFR_MPI_H

typedef struct pfr_mpi {
    int rank;   /* 0 without MPI */
    int size;   /* 1 without MPI */
    int active; /* MPI_Init was called */
} pfr_mpi;

/* Starts MPI when the runner was built with it and launched by mpirun (an
 * Open MPI or PMI rank variable is set); otherwise a single rank.  Returns
 * -1 when MPI cannot start, or when a runner built without MPI was launched
 * as one of several ranks. */
int pfr_mpi_start(pfr_mpi *m);
/* Element-wise maximum of values[0..n) over all ranks, in place. */
void pfr_mpi_max(pfr_mpi *m, int *values, int n);
void pfr_mpi_finish(pfr_mpi *m);
/* Ends every rank with this status (a stopped sweep); returns without MPI. */
void pfr_mpi_abort(pfr_mpi *m, int status);
/* Forgets that this process was started by mpirun (the launcher's rank
 * variables), for a child that must run as one plain process. */
void pfr_mpi_forget_launcher(void);
/* 1 when this runner was built with MPI. */
int pfr_mpi_available(void);

#endif
