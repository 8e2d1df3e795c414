/* split.c - one run spread over the processes of a job: bands, agreement and the final gather (see
 * split.h). No MPI here: the messages go through sw_split_ops. */
#include "run/split.h"

#include <stdio.h>
#include <string.h>

void sw_split_rows(size_t ny, int size, int r, size_t *row0, size_t *row1)
{
    *row0 = ny * (size_t)r / (size_t)size;
    *row1 = ny * (size_t)(r + 1) / (size_t)size;
}

int sw_split_max_ranks(const sw_model *m, size_t ny)
{
    const size_t most = ny / sw_model_halo_rows(m);
    return most < 1 ? 1 : most > 1000000 ? 1000000 : (int)most;
}

static void halo_of(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    sp->ops->halo(sp, m);
}

static void halo_start_of(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    sp->ops->halo_start(sp, m);
}

static void halo_poll_of(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    sp->ops->halo_poll(sp, m);
}

static void halo_finish_of(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    sp->ops->halo_finish(sp, m);
}

sw_status sw_split_attach(sw_split *sp, sw_model *m, int ring, sw_error *err)
{
    sp->ring = ring;
    const size_t ny = sw_model_grid(m)->ny;
    sp->ny = ny;
    sp->halo = sw_model_halo_rows(m);
    if (sp->size > sw_split_max_ranks(m, ny))
        return sw_fail(err, SW_ERR_USAGE, "%d ranks are too many for a grid of %zu rows: every rank needs at least "
                       "%zu rows (the %s layout's stencils reach that far), so use at most %d ranks (mpirun -n)",
                       sp->size, ny, sp->halo, sw_model_layout(m)->name, sw_split_max_ranks(m, ny));
    if (sp->size == 1)
        return SW_OK;
    if (sp->ops->bind)
        sp->ops->bind(sp);
    size_t r0, r1;
    sw_split_rows(ny, sp->size, sp->rank, &r0, &r1);
    sw_status rc = sw_model_set_share(m, r0, r1, halo_of, sp, err);
    if (rc == SW_OK)   /* a neighbour sends rows of its own band only: the thinnest band bounds a sweep's halo */
        sw_model_set_share_reach(m, ny / (size_t)sp->size);
    if (rc == SW_OK && sp->ops->halo_start && sp->ops->halo_finish)
        sw_model_set_share_overlap(m, halo_start_of, sp->ops->halo_poll ? halo_poll_of : NULL, halo_finish_of);
    return rc;
}

int sw_split_owner(const sw_split *sp, size_t row)
{
    for (int r = 0; r < sp->size; r++) {
        size_t r0, r1;
        sw_split_rows(sp->ny, sp->size, r, &r0, &r1);
        if (row < r1)
            return r;
    }
    return sp->size - 1;
}

sw_status sw_split_agree(sw_split *sp, sw_status rc, sw_error *err)
{
    long long first = rc == SW_OK ? sp->size : sp->rank;   /* the lowest failing rank: the largest -rank */
    long long v = -first;
    sp->ops->max_ll(sp, &v, 1);
    first = -v;
    if (first >= sp->size)
        return SW_OK;
    sw_error e = {0};
    if (sp->rank == (int)first)
        e = *err;
    sp->ops->bcast(sp, (int)first, &e, sizeof e);
    *err = e;
    if (first != 0) {   /* say which rank failed */
        char msg[sizeof e.msg];
        snprintf(msg, sizeof msg, "rank %lld: %.900s", first, e.msg);
        memcpy(err->msg, msg, sizeof msg);
    }
    return err->code;
}

void sw_split_gather(sw_split *sp, sw_model *m, sw_tracker *t, sw_gauges *gs, size_t n_gauges)
{
    if (sp->size == 1)
        return;
    const size_t nx = sw_model_grid(m)->nx, ny = sp->ny;
    for (int k = 0; k < 3; k++) {   /* the state: grid row r is padded row r + 1, and the ghost row ny + 1 */
        size_t rb;
        void *row1 = sw_model_field_rows(m, k, 1, &rb);
        sp->ops->gather_rows(sp, row1, rb);
        sp->ops->to_root(sp, sp->size - 1, sw_model_field_rows(m, k, ny + 1, &rb), rb);
    }
    void *ptr[SW_TRACKER_STATE_PARTS];
    size_t bytes[SW_TRACKER_STATE_PARTS];
    sw_tracker_state_parts(t, ptr, bytes);   /* five maps [ny nx] floats, the rows' segments, three counts */
    for (int k = 0; k < 5; k++)
        sp->ops->gather_rows(sp, ptr[k], nx * sizeof(float));
    sp->ops->gather_rows(sp, ptr[5], bytes[5] / ny);
    long long counts[3] = {*(long long *)ptr[6], *(long long *)ptr[7], *(int *)ptr[8]};
    sp->ops->sum_ll(sp, counts, 3);   /* the sums on rank 0 (the others keep none, so that a later gather
                                       * counts nothing twice); a non-finite value seen anywhere on all */
    *(long long *)ptr[6] = sp->rank == 0 ? counts[0] : 0;
    *(long long *)ptr[7] = sp->rank == 0 ? counts[1] : 0;
    *(int *)ptr[8] = counts[2] != 0;
    for (size_t q = 0; gs && q < n_gauges; q++) {
        const int owner = sw_split_owner(sp, sw_gauges_row(gs, q));
        void *gp[SW_GAUGES_STATION_PARTS];
        size_t gb[SW_GAUGES_STATION_PARTS];
        const size_t n = sw_gauges_station_parts(gs, q, gp, gb);
        for (size_t k = 0; k < n; k++)
            sp->ops->to_root(sp, owner, gp[k], gb[k]);
    }
}
