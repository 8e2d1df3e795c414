/* split.h - one run spread over the processes of a job (`mpirun -n N shoreward run`): the rows each
 * process computes, and the collective operations sw_run needs to step, observe and write as one process
 * would.
 *
 * The grid is cut into N bands of whole rows, rank r computing grid rows ny r / N .. ny (r + 1) / N - 1
 * (sw_split_rows) with its own threads. Every rank builds the whole model from the scenario (the seabed,
 * the source, the forcing: the same bits on every rank) and steps its band only; at each point where the
 * step's threads meet, the halo rows next to the band come from the neighbouring ranks (model.h
 * sw_model_set_share). Since a value does not depend on who computes it, each band is the same bits as in
 * a one-process run, for any N and any thread count. Gauges are sampled by the rank whose band holds the
 * gauge's lower stencil row; arrival and extreme tracking runs on each band. Snapshots and, at the end, the
 * state, the tracker's running maps and the gauge series are gathered on rank 0, which writes the files
 * (serial NetCDF): the output is a small part of a run's time, so the gather costs little and needs no
 * parallel NetCDF library.
 *
 * The operations are an interface (sw_split_ops) so that this file needs no MPI; run/split_mpi.c
 * implements them over MPI (a build with -DSW_MPI=ON). Every operation is collective: all ranks call it,
 * in the same order, from the one thread that started MPI (sw_run calls them from OpenMP's master
 * thread). */
#ifndef SW_SPLIT_H
#define SW_SPLIT_H

#include <stddef.h>

#include "base/status.h"
#include "model/model.h"
#include "observers/gauges.h"
#include "observers/tracker.h"

typedef struct sw_split sw_split;

typedef struct {
    /* The halo exchange of model m (a sw_halo_fn: model.h): the sw_model_halo_rows(m) rows on each side
     * of this rank's band from the neighbouring ranks, then sw_model_wrap_rows. */
    void (*halo)(void *split, sw_model *m);
    /* The same exchange in parts for a sweep of several steps (model.h sw_model_set_share_overlap: start
     * returns with the south side done, poll advances the rest, finish completes the north side and calls
     * sw_model_wrap_rows), so that the north side's rows travel while the sweep computes the band's
     * interior. All three NULL: the sweep waits for `halo` instead. */
    void (*halo_start)(void *split, sw_model *m);
    void (*halo_poll)(void *split, sw_model *m);
    void (*halo_finish)(void *split, sw_model *m);
    /* v[0 .. n-1] becomes, on every rank, the largest (max) or the sum (sum) of each element over ranks. */
    void (*max_ll)(sw_split *sp, long long *v, int n);
    void (*sum_ll)(sw_split *sp, long long *v, int n);
    /* bytes at p of rank `from` into p on every rank. */
    void (*bcast)(sw_split *sp, int from, void *p, size_t bytes);
    /* bytes at p of rank `from` into p on rank 0 (nothing when from is 0). */
    void (*to_root)(sw_split *sp, int from, void *p, size_t bytes);
    /* Rows of `row_bytes` bytes, grid row k at base + k row_bytes: each rank's band (sw_split_rows) into
     * the same rows of rank 0's base. The other ranks' base is read only. */
    void (*gather_rows)(sw_split *sp, void *base, size_t row_bytes);
    /* Called by sw_split_attach once sp->ny and sp->halo are set (the bands are known); may be NULL. */
    void (*bind)(sw_split *sp);
} sw_split_ops;

struct sw_split {
    int rank, size;            /* this process's rank 0 .. size - 1, and the ranks in the job */
    const sw_split_ops *ops;
    void *job;                 /* the implementation's state */
    size_t ny;                 /* grid rows, set by sw_split_attach */
    size_t halo;               /* halo rows on each side, set by sw_split_attach */
    int node_ranks;            /* ranks sharing this rank's node (and its memory), >= 1 */
    int ring;                  /* 1 when the south and north edges are periodic: the last band's northern
                                * neighbour is the first band (set by sw_split_attach) */
    double exchange_s;         /* wall-clock time spent in halo exchanges so far, s (the implementation adds): the
                                * time the step waited, not the time rows travelled while it computed */
    long long exchanges;       /* halo exchanges so far */
    double halo_bytes;         /* bytes this rank sent in them */
};

/* Grid rows *row0 .. *row1 - 1 of rank r among `size` ranks over a grid of ny rows. */
void sw_split_rows(size_t ny, int size, int r, size_t *row0, size_t *row1);

/* The most ranks a grid of ny rows can be split over for model m: each band needs at least
 * sw_model_halo_rows(m) rows. */
int sw_split_max_ranks(const sw_model *m, size_t ny);

/* Restricts model m to this rank's band with the split's halo exchange (sw_model_set_share); `ring` 1
 * when m's south and north edges are periodic. SW_OK, or SW_ERR_USAGE naming the grid's rows and the
 * most ranks it can take when the bands would be too thin. */
sw_status sw_split_attach(sw_split *sp, sw_model *m, int ring, sw_error *err);

/* The rank whose band holds row `row`. */
int sw_split_owner(const sw_split *sp, size_t row);

/* Collective, at the end of a run: each rank's status; returns, on every rank, SW_OK when all succeeded,
 * else the status and message (err) of the lowest failing rank. */
sw_status sw_split_agree(sw_split *sp, sw_status rc, sw_error *err);

/* Collective, between steps (at a checkpoint, after the last step): brings to rank 0 each band's state of
 * model m (eta, u, v, with the ghost row beyond the north edge), the tracker's running maps and counts,
 * and the series of the n_gauges gauges of gs sampled on other ranks, so that rank 0 holds what a
 * one-process run would. The other ranks' copies are read only, but for their tracker's segment counts,
 * which move to rank 0 (so that gathering again counts nothing twice). Rank 0's copies of other bands are
 * never read by its steps, so it may go on stepping. */
void sw_split_gather(sw_split *sp, sw_model *m, sw_tracker *t, sw_gauges *gs, size_t n_gauges);

#endif
