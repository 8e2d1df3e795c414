/* split_mpi.h - the operations of a split run (run/split.h) over MPI_COMM_WORLD; compiled only in a build
 * configured with -DSW_MPI=ON (SW_HAVE_MPI). */
#ifndef SW_SPLIT_MPI_H
#define SW_SPLIT_MPI_H

#include "base/status.h"
#include "run/split.h"

/* Fills *sp for this process of the running MPI job (MPI already started: studies/sweep_mpi.h
 * sw_sweep_mpi_init). SW_OK, or SW_ERR_NOMEM. Free with sw_split_mpi_free. */
sw_status sw_split_mpi_create(sw_split *sp, sw_error *err);

void sw_split_mpi_free(sw_split *sp);

#endif
