/* sweep_mpi.h - a sweep spread over the ranks of an MPI job (`mpirun -n N shoreward sweep`); compiled only
 * in a build configured with -DSW_MPI=ON (which defines SW_HAVE_MPI).
 *
 * Every rank loads the scenario and builds the same plan (sweep.h); sw_sweep_mpi_agree checks that they
 * did, and brings a setup failure of any rank to all of them. Rank 0 then does what a one-process sweep
 * does (sw_sweep_run: the output folder's lock, the manifest and resume, the member scenario files, the
 * combine into sweep.nc and sweep.md) with its member loop replaced by a dispatcher: the other ranks ask
 * for a member, run it with their own threads, write its member file (members/mNNNNN.nc, .part + rename)
 * into the shared output folder and ask again; rank 0 answers them, and runs members itself in between
 * (it answers from the member's progress callback, about twice a second) when the MPI library lets any
 * thread call it (MPI_THREAD_SERIALIZED); otherwise it only dispatches. Since sweep.nc is always computed
 * from the member files, the result is bitwise that of a one-process sweep, whichever rank ran what.
 *
 * Messages are fixed-size byte records: the ranks must run one build of shoreward on one kind of CPU
 * (a homogeneous cluster). The output folder must be one shared folder, seen under the same path (the
 * working directory mpirun gives every rank) by every rank.
 */
#ifndef SW_SWEEP_MPI_H
#define SW_SWEEP_MPI_H

#include "base/status.h"
#include "studies/sweep.h"

/* This process in the MPI job. */
typedef struct {
    int rank;                 /* rank in MPI_COMM_WORLD, 0 .. size - 1 */
    int size;                 /* ranks in the job */
    int rank0_runs_members;   /* 1 when rank 0 may run members between requests (the MPI library gave
                               * MPI_THREAD_SERIALIZED or more); 0 = rank 0 only dispatches */
    int node_ranks;           /* ranks on this rank's node (sharing its memory), >= 1 */
} sw_sweep_mpi_world;

/* Starts MPI (MPI_Init_thread, asking for MPI_THREAD_SERIALIZED) and fills w. Needs argc, argv as main
 * got them (MPI may take its own arguments out). Returns SW_OK, or SW_ERR_IO when MPI cannot start (then
 * nothing else here may be called). Call once per process. */
sw_status sw_sweep_mpi_init(int *argc, char ***argv, sw_sweep_mpi_world *w, sw_error *err);

/* The threads a rank runs its members with: `threads` when > 0 (--threads); else OpenMP's default
 * (the cores this process may run on) shared among the ranks of its node, at least 1, so that ranks on
 * one node do not oversubscribe its cores; OMP_NUM_THREADS, when set, is taken as it is, per rank. */
int sw_sweep_mpi_threads(const sw_sweep_mpi_world *w, int threads);

/* Collective (every rank calls it): gathers each rank's setup outcome (`setup`: SW_OK when it loaded the
 * scenario and built plan; else its failure, err holding the message) and a fingerprint of its plan (the
 * scenario text, the design's values, each member's grid, time step and planning status) on rank 0.
 * Returns, on every rank, SW_OK when every rank built the same plan; else the failure of the lowest failing
 * rank, with err holding its message ("rank 2: ..." for a rank other than 0), or SW_ERR_INPUT "rank 2
 * built a different sweep than rank 0 ..." when the plans differ. plan may be NULL when setup != SW_OK. */
sw_status sw_sweep_mpi_agree(const sw_sweep_mpi_world *w, const sw_sweep_plan *plan, sw_status setup,
                             sw_error *err);

/* Collective: runs the planned sweep over all ranks (see the top of this file). On rank 0 it is
 * sw_sweep_run (opt as there; its progress callback is called on rank 0 only) and returns what that
 * returns, fills out, and a failure of another rank (a member file it could not write, memory) is
 * returned with "rank R: " before its message; on the other ranks opt->threads (see sw_sweep_mpi_threads)
 * and opt->stop are used and out is left zeroed. Every rank returns rank 0's status and message (err), so
 * the job ends as one. A failed member is recorded as in a one-process sweep and is not a failure of the
 * job. Needs every rank's plan built from the same scenario (sw_sweep_mpi_agree first). When stopped
 * (opt->stop on any rank), each rank stops after, or inside, its current member; the finished members
 * are kept and the same command resumes. With w->size == 1 it is sw_sweep_run. */
sw_status sw_sweep_mpi_run(const sw_sweep_mpi_world *w, sw_sweep_plan *plan, const sw_sweep_options *opt,
                           sw_sweep_summary *out, sw_error *err);

/* Collective: returns rank 0's `code` on every rank (so that every rank ends the job with the same exit
 * status), then ends MPI (MPI_Finalize). Nothing here may be called afterwards. */
int sw_sweep_mpi_finish(const sw_sweep_mpi_world *w, int code);

#endif
