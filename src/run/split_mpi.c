/* split_mpi.c - a split run's messages over MPI (see split_mpi.h and split.h).
 *
 * The halo exchange posts, for each of eta, u and v, a receive of each neighbour's nearest rows (a step's
 * halo, or before a sweep of several steps its deeper one: sw_model_halo_depth)
 * into the same padded rows here and a send of this band's nearest rows to it: twelve messages at most,
 * each a run of whole padded rows straight from the field (no packing). Within a step it waits for all at
 * once; before a sweep it waits for the south side only, and the sweep completes the north side when its
 * first step gets there (split.h halo_start, halo_poll, halo_finish), so those rows travel meanwhile. Rows are sent as
 * bytes: every rank must run the same build on the same kind of CPU (a homogeneous cluster).
 */
#include "run/split_mpi.h"

#include <mpi.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
    int south, north;           /* neighbouring ranks, or -1 */
    size_t south_top, north_bottom; /* the south neighbour's last grid row + 1, the north one's first grid row */
    size_t row0, row1;          /* this band */
    MPI_Request south_req[6], north_req[6]; /* the posted exchange's messages with each neighbour */
    int n_south, n_north;       /* of them, still to complete */
} job;

/* Posts the exchange of sw_model_halo_depth(m) rows with both neighbours: for each of eta, u and v a
 * receive of the neighbour's nearest rows into the same padded rows here and a send of this band's nearest
 * rows, each a run of whole padded rows straight from the field. */
static void post(sw_split *sp, sw_model *m)
{
    job *j = sp->job;
    const size_t h = sw_model_halo_depth(m);   /* a step's halo, or a sweep's deeper one */
    j->n_south = j->n_north = 0;
    for (int k = 0; k < 3; k++) {
        size_t rb;
        char *f = sw_model_field_rows(m, k, 0, &rb);   /* padded row p = grid row p - 1 */
        const int count = (int)(h * rb);
        if (j->south >= 0) {
            MPI_Irecv(f + (j->south_top - h + 1) * rb, count, MPI_BYTE, j->south, 2 * k, MPI_COMM_WORLD,
                      &j->south_req[j->n_south++]);
            MPI_Isend(f + (j->row0 + 1) * rb, count, MPI_BYTE, j->south, 2 * k + 1, MPI_COMM_WORLD,
                      &j->south_req[j->n_south++]);
        }
        if (j->north >= 0) {
            MPI_Irecv(f + (j->north_bottom + 1) * rb, count, MPI_BYTE, j->north, 2 * k + 1, MPI_COMM_WORLD,
                      &j->north_req[j->n_north++]);
            MPI_Isend(f + (j->row1 - h + 1) * rb, count, MPI_BYTE, j->north, 2 * k, MPI_COMM_WORLD,
                      &j->north_req[j->n_north++]);
        }
        sp->halo_bytes += (double)count * ((j->south >= 0) + (j->north >= 0));
    }
}

/* split.h halo_start: posts the exchange and completes its south side. */
static void halo_start(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    job *j = sp->job;
    const double t0 = MPI_Wtime();
    post(sp, m);
    MPI_Waitall(j->n_south, j->south_req, MPI_STATUSES_IGNORE);
    j->n_south = 0;
    sp->exchange_s += MPI_Wtime() - t0;
}

/* split.h halo_poll: lets MPI move the north side's messages on (a large message moves only inside MPI
 * calls) without waiting. */
static void halo_poll(void *ctx, sw_model *m)
{
    (void)m;
    sw_split *sp = ctx;
    job *j = sp->job;
    if (!j->n_north)
        return;
    const double t0 = MPI_Wtime();
    int done = 0;
    MPI_Testall(j->n_north, j->north_req, &done, MPI_STATUSES_IGNORE);
    sp->exchange_s += MPI_Wtime() - t0;
}

/* split.h halo_finish: completes the north side, then wraps the rows of periodic edges. */
static void halo_finish(void *ctx, sw_model *m)
{
    sw_split *sp = ctx;
    job *j = sp->job;
    const double t0 = MPI_Wtime();
    MPI_Waitall(j->n_north, j->north_req, MPI_STATUSES_IGNORE);
    j->n_north = 0;
    sw_model_wrap_rows(m);
    sp->exchanges++;
    sp->exchange_s += MPI_Wtime() - t0;
}

/* The whole exchange at once (split.h halo), where the step's threads meet. */
static void halo_mpi(void *ctx, sw_model *m)
{
    halo_start(ctx, m);
    halo_finish(ctx, m);
}

static void max_ll(sw_split *sp, long long *v, int n)
{
    (void)sp;
    MPI_Allreduce(MPI_IN_PLACE, v, n, MPI_LONG_LONG, MPI_MAX, MPI_COMM_WORLD);
}

static void sum_ll(sw_split *sp, long long *v, int n)
{
    (void)sp;
    MPI_Allreduce(MPI_IN_PLACE, v, n, MPI_LONG_LONG, MPI_SUM, MPI_COMM_WORLD);
}

/* Sends or receives `bytes` in pieces an int count can hold. */
static void move_bytes(int send, void *p, size_t bytes, int peer, int tag)
{
    const size_t piece = (size_t)1 << 30;
    for (size_t o = 0; o < bytes; o += piece) {
        const int c = (int)(bytes - o < piece ? bytes - o : piece);
        if (send)
            MPI_Send((char *)p + o, c, MPI_BYTE, peer, tag, MPI_COMM_WORLD);
        else
            MPI_Recv((char *)p + o, c, MPI_BYTE, peer, tag, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
    }
}

static void bcast(sw_split *sp, int from, void *p, size_t bytes)
{
    (void)sp;
    const size_t piece = (size_t)1 << 30;
    for (size_t o = 0; o < bytes; o += piece)
        MPI_Bcast((char *)p + o, (int)(bytes - o < piece ? bytes - o : piece), MPI_BYTE, from, MPI_COMM_WORLD);
}

static void to_root(sw_split *sp, int from, void *p, size_t bytes)
{
    if (from == 0)
        return;
    if (sp->rank == from)
        move_bytes(1, p, bytes, 0, 77);
    else if (sp->rank == 0)
        move_bytes(0, p, bytes, from, 77);
}

static void gather_rows(sw_split *sp, void *base, size_t row_bytes)
{
    for (int r = 1; r < sp->size; r++) {
        size_t r0, r1;
        sw_split_rows(sp->ny, sp->size, r, &r0, &r1);
        to_root(sp, r, (char *)base + r0 * row_bytes, (r1 - r0) * row_bytes);
    }
}

static const sw_split_ops mpi_ops;

sw_status sw_split_mpi_create(sw_split *sp, sw_error *err)
{
    memset(sp, 0, sizeof *sp);
    job *j = calloc(1, sizeof *j);
    if (!j)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the split run");
    MPI_Comm_rank(MPI_COMM_WORLD, &sp->rank);
    MPI_Comm_size(MPI_COMM_WORLD, &sp->size);
    sp->job = j;
    sp->ops = &mpi_ops;
    return SW_OK;
}

/* The neighbours, once the grid's rows are known. */
static void bind(sw_split *sp)
{
    job *j = sp->job;
    const int n = sp->size, r = sp->rank;
    sw_split_rows(sp->ny, n, r, &j->row0, &j->row1);
    j->south = r > 0 ? r - 1 : sp->ring && n > 1 ? n - 1 : -1;
    j->north = r < n - 1 ? r + 1 : sp->ring && n > 1 ? 0 : -1;
    size_t a, b;
    if (j->south >= 0) {
        sw_split_rows(sp->ny, n, j->south, &a, &b);
        j->south_top = b;   /* grid row b - 1 is padded row b */
    }
    if (j->north >= 0) {
        sw_split_rows(sp->ny, n, j->north, &a, &b);
        j->north_bottom = a;
    }
}

static const sw_split_ops mpi_ops = {
    .halo = halo_mpi, .halo_start = halo_start, .halo_poll = halo_poll, .halo_finish = halo_finish, .max_ll = max_ll, .sum_ll = sum_ll, .bcast = bcast, .to_root = to_root,
    .gather_rows = gather_rows, .bind = bind,
};

void sw_split_mpi_free(sw_split *sp)
{
    free(sp->job);
    sp->job = NULL;
}
