/* sweep_mpi.c - a sweep over the ranks of an MPI job: the plan check, the dispatcher on rank 0 and the
 * workers (sweep_mpi.h). Compiled only with -DSW_MPI=ON.
 *
 * The protocol (MPI_COMM_WORLD). A worker (rank > 0) sends an `ask` record to rank 0 (tag TAG_ASK):
 * the member it just finished and how (SW_OK: its member file is written; SW_ERR_INTERRUPTED: stopped,
 * no file; another status: a failure of the rank, with its message), or member -1 on its first ask.
 * Rank 0 answers each ask with one int64 (tag TAG_MEMBER): the next member to run, or -1 = stop. A
 * worker that was told to stop asks no more, so rank 0 is done when every worker has been told to stop.
 * Rank 0 answers in sw_sweep_run's member loop (the member_loop hook, sweep.h); when sw_sweep_run fails
 * before its loop (the lock, the manifest), rank 0 answers the workers' first asks with -1 afterwards.
 * Then rank 0's status is broadcast, so every rank returns the same.
 */
#define _POSIX_C_SOURCE 200809L   /* nanosleep */
#include "studies/sweep_mpi.h"

#include <math.h>
#include <mpi.h>
#include <pthread.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "base/omp_compat.h"
#include "run/run.h"
#include "studies/ncsweep.h"
#include "studies/sweep_impl.h"

enum { TAG_ASK = 701, TAG_MEMBER = 702 };

/* A worker's ask (see the top of the file). */
typedef struct {
    int32_t code;                 /* sw_status of `member`: SW_OK, SW_ERR_INTERRUPTED or the rank's failure */
    int32_t unused;
    int64_t member;               /* the member just finished; -1 on the first ask */
    char msg[SW_ERROR_MSG_MAX];   /* the failure's message, "" otherwise */
} ask_record;

/* A rank's setup outcome, gathered by sw_sweep_mpi_agree. */
typedef struct {
    int32_t code;                 /* sw_status of loading the scenario and building the plan */
    int32_t unused;
    uint64_t fingerprint;         /* plan_fingerprint, 0 when code != SW_OK */
    char msg[SW_ERROR_MSG_MAX];
} setup_record;

/* A status and its message, broadcast from rank 0. */
typedef struct {
    int32_t code;
    int32_t unused;
    char msg[SW_ERROR_MSG_MAX];
} status_record;

sw_status sw_sweep_mpi_init(int *argc, char ***argv, sw_sweep_mpi_world *w, sw_error *err)
{
    memset(w, 0, sizeof *w);
    int provided = MPI_THREAD_SINGLE;
    if (MPI_Init_thread(argc, argv, MPI_THREAD_SERIALIZED, &provided) != MPI_SUCCESS)
        return sw_fail(err, SW_ERR_IO, "MPI could not start (MPI_Init_thread failed); start shoreward with mpirun "
                       "or mpiexec of the MPI it was built with");
    MPI_Comm_rank(MPI_COMM_WORLD, &w->rank);
    MPI_Comm_size(MPI_COMM_WORLD, &w->size);
    w->rank0_runs_members = provided >= MPI_THREAD_SERIALIZED;
    MPI_Comm node;
    w->node_ranks = 1;
    if (MPI_Comm_split_type(MPI_COMM_WORLD, MPI_COMM_TYPE_SHARED, 0, MPI_INFO_NULL, &node) == MPI_SUCCESS) {
        MPI_Comm_size(node, &w->node_ranks);
        MPI_Comm_free(&node);
    }
    return SW_OK;
}

int sw_sweep_mpi_threads(const sw_sweep_mpi_world *w, int threads)
{
    if (threads > 0)
        return threads;
    int all = omp_get_max_threads();
    const char *env = getenv("OMP_NUM_THREADS");
    if (env && *env)
        return all;
    int t = all / (w->node_ranks > 0 ? w->node_ranks : 1);
    return t > 0 ? t : 1;
}

int sw_sweep_mpi_finish(const sw_sweep_mpi_world *w, int code)
{
    (void)w;
    int c = code;
    MPI_Bcast(&c, 1, MPI_INT, 0, MPI_COMM_WORLD);
    MPI_Finalize();
    return c;
}

/* ---- the plan check ----------------------------------------------------------------------------- */

static uint64_t fnv(uint64_t h, const void *p, size_t n)
{
    const unsigned char *b = p;
    for (size_t i = 0; i < n; i++) {
        h ^= b[i];
        h *= 1099511628211ull;   /* FNV-1a, 64 bits */
    }
    return h;
}

/* What two ranks' plans must share to compute the same members: the scenario text, the values, and each
 * member's grid size, time step, steps and planning status (which see the input files). */
static uint64_t plan_fingerprint(const sw_sweep_plan *plan)
{
    uint64_t h = 14695981039346656037ull;
    h = fnv(h, plan->base->text, strlen(plan->base->text));
    h = fnv(h, &plan->n_members, sizeof plan->n_members);
    h = fnv(h, &plan->n_params, sizeof plan->n_params);
    for (size_t k = 0; k < plan->n_members; k++) {
        const sw_sweep_member *m = &plan->member[k];
        h = fnv(h, m->value, plan->n_params * sizeof *m->value);
        h = fnv(h, &m->grid.nx, sizeof m->grid.nx);
        h = fnv(h, &m->grid.ny, sizeof m->grid.ny);
        h = fnv(h, &m->dt_s, sizeof m->dt_s);
        h = fnv(h, &m->steps, sizeof m->steps);
        int32_t s = (int32_t)m->status;
        h = fnv(h, &s, sizeof s);
    }
    return h;
}

/* Rank 0's status and message to every rank; returns it. */
static sw_status bcast_status(sw_status st, sw_error *err)
{
    status_record r;
    memset(&r, 0, sizeof r);
    r.code = (int32_t)st;
    if (st != SW_OK && err)
        memcpy(r.msg, err->msg, sizeof r.msg);
    MPI_Bcast(&r, (int)sizeof r, MPI_BYTE, 0, MPI_COMM_WORLD);
    r.msg[sizeof r.msg - 1] = '\0';
    if (r.code == SW_OK)
        return SW_OK;
    return sw_fail(err, (sw_status)r.code, "%s", r.msg);
}

sw_status sw_sweep_mpi_agree(const sw_sweep_mpi_world *w, const sw_sweep_plan *plan, sw_status setup,
                             sw_error *err)
{
    setup_record mine, *all = NULL;
    memset(&mine, 0, sizeof mine);
    mine.code = (int32_t)setup;
    if (setup != SW_OK && err)
        memcpy(mine.msg, err->msg, sizeof mine.msg);
    else if (setup == SW_OK && plan)
        mine.fingerprint = plan_fingerprint(plan);
    sw_status st = SW_OK;
    if (w->rank == 0) {
        all = calloc((size_t)w->size, sizeof *all);
        if (!all)   /* the others still take part in the gather below, through a one-record buffer */
            st = sw_fail(err, SW_ERR_NOMEM, "out of memory gathering the setup of %d ranks", w->size);
    }
    MPI_Gather(&mine, (int)sizeof mine, MPI_BYTE, all ? (void *)all : (void *)&mine, all ? (int)sizeof mine : 0,
               MPI_BYTE, 0, MPI_COMM_WORLD);
    if (w->rank == 0 && all) {
        for (int r = 0; r < w->size && st == SW_OK; r++) {
            all[r].msg[sizeof all[r].msg - 1] = '\0';
            if (all[r].code == SW_OK)
                continue;
            if (r == 0)
                st = sw_fail(err, (sw_status)all[r].code, "%s", all[r].msg);
            else
                st = sw_fail(err, (sw_status)all[r].code, "rank %d: %s", r, all[r].msg);
        }
        for (int r = 1; r < w->size && st == SW_OK; r++)
            if (all[r].fingerprint != all[0].fingerprint)
                st = sw_fail(err, SW_ERR_INPUT, "rank %d built a different sweep than rank 0 (another scenario "
                             "text, input file or shoreward on its node); every rank must see the same files "
                             "under the same paths", r);
    }
    free(all);
    return bcast_status(st, err);
}

/* ---- one member, on any rank ------------------------------------------------------------------------- */

/* Runs member k and writes its member file. Returns SW_OK (file written; a failed member too),
 * SW_ERR_INTERRUPTED (stopped; no file) or the failure (e filled) that kept it from writing the file. */
static sw_status run_member(const sw_sweep_plan *plan, size_t k, int threads, volatile sig_atomic_t *stop,
                           sw_sweep_member_progress_fn progress, void *user, sw_error *e)
{
    sw_sweep_member_result r;
    sw_status st = sw_sweep_member_run(plan, k, threads, stop, progress, user, &r, e);
    if (st == SW_OK && r.status == SW_ERR_INTERRUPTED)
        st = sw_fail(e, SW_ERR_INTERRUPTED, "member %zu interrupted", k);
    else if (st == SW_OK) {
        char path[SW_PATH_MAX + 32];
        swp_member_file(plan, k, "nc", path, sizeof path);
        st = sw_ncs_member_write(path, &r, plan->member[k].value, plan->n_params, &plan->base_grid,
                                 sw_caution_sweep_for(plan->base), e);
    }
    sw_sweep_member_result_free(&r);
    return st;
}

/* ---- rank 0: the dispatcher ------------------------------------------------------------------------- */

/* Rank 0's state. Two threads share it under `lock`: the dispatcher (the only one that calls MPI while
 * the member loop runs) and rank 0's main thread running its own members (its progress callbacks come
 * from whichever OpenMP thread reports). */
typedef struct {
    const sw_sweep_mpi_world *w;
    const sw_sweep_options *opt;
    const sw_sweep_plan *plan;
    pthread_mutex_t lock;
    const size_t *pending;        /* the members left to run, ascending */
    size_t n_pending, next;       /* ... and the next one to hand out */
    size_t done, total;           /* members finished (earlier attempts included); in the design */
    int n_stopped;                /* workers told to stop */
    int64_t *at;                  /* [size] the member each rank runs, -1 = none */
    double own_fraction;          /* progress of rank 0's own member, 0 .. 1 */
    double cost_all, cost_done;   /* cells x steps of this attempt's members; of those finished */
    double t0, next_report;       /* omp_get_wtime at the start; when to report next, s */
    int entered;                  /* the member loop ran: every worker has been told to stop */
    int stopping, interrupted, failed;
    sw_error fail;                /* the first failure of a rank */
} dispatcher;

/* Sleeps about a millisecond: waiting ranks poll with it instead of spinning in MPI, which would take a
 * core from the ranks and threads that compute. */
static void nap(void)
{
    struct timespec t = { 0, 1000000 };
    nanosleep(&t, NULL);
}

/* Calls the progress callback (holding lock). */
static void report(dispatcher *d, size_t current, double fraction)
{
    if (!d->opt->progress || !d->plan)   /* no plan: answering workers before the member loop */
        return;
    double now = omp_get_wtime() - d->t0, work = d->cost_done;
    size_t running = 0;
    for (int r = 0; r < d->w->size; r++)
        if (d->at[r] >= 0) {
            running++;
            if (r == 0)
                work += d->own_fraction * d->plan->member[d->at[r]].cost;
        }
    sw_sweep_progress p = {
        .done = d->done, .total = d->total, .running = running, .current = current,
        .current_fraction = fraction, .elapsed_s = now,
        .remaining_s = work > 0 && d->cost_all > 0 ? now * (d->cost_all - work) / work : NAN,
    };
    d->opt->progress(&p, d->opt->progress_user);
    d->next_report = now + 0.5;
}

/* Takes the outcome of member k (run on rank r) into the tally (holding lock). */
static void tally(dispatcher *d, int r, int64_t k, sw_status st, const char *msg)
{
    if (k >= 0 && st == SW_OK) {
        d->done++;
        d->cost_done += d->plan->member[k].cost;
    } else if (st == SW_ERR_INTERRUPTED)
        d->interrupted = 1;
    else if (st != SW_OK && !d->failed) {
        d->failed = 1;
        if (r == 0)
            sw_fail(&d->fail, st, "%s", msg);
        else
            sw_fail(&d->fail, st, "rank %d: %s", r, msg);
    }
    if (d->failed || d->interrupted || (d->opt->stop && *d->opt->stop))
        d->stopping = 1;
}

/* The next member for rank r, or -1 = stop (holding lock). */
static int64_t next_member(dispatcher *d, int r)
{
    if (d->opt->stop && *d->opt->stop)
        d->stopping = 1;
    int64_t k = -1;
    if (!d->stopping && d->next < d->n_pending)
        k = (int64_t)d->pending[d->next++];
    d->at[r] = k;
    return k;
}

/* Answers the workers' asks until every worker has been told to stop. */
static void serve(dispatcher *d)
{
    while (d->n_stopped < d->w->size - 1) {
        MPI_Status s;
        int flag = 0;
        MPI_Iprobe(MPI_ANY_SOURCE, TAG_ASK, MPI_COMM_WORLD, &flag, &s);
        if (!flag) {
            nap();
            continue;
        }
        ask_record a;
        MPI_Recv(&a, (int)sizeof a, MPI_BYTE, s.MPI_SOURCE, TAG_ASK, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
        a.msg[sizeof a.msg - 1] = '\0';
        int r = s.MPI_SOURCE;
        pthread_mutex_lock(&d->lock);
        tally(d, r, a.member, (sw_status)a.code, a.msg);
        int64_t k = next_member(d, r);
        if (k < 0)
            d->n_stopped++;
        report(d, k >= 0 ? (size_t)k : (a.member >= 0 ? (size_t)a.member : 0), 0);
        pthread_mutex_unlock(&d->lock);
        MPI_Send(&k, 1, MPI_INT64_T, r, TAG_MEMBER, MPI_COMM_WORLD);
    }
}

static void *serve_thread(void *user)
{
    serve(user);
    return NULL;
}

/* Rank 0's own member's progress. */
static void own_progress(size_t k, double fraction, void *user)
{
    dispatcher *d = user;
    pthread_mutex_lock(&d->lock);
    d->own_fraction = fraction;
    if (d->opt->stop && *d->opt->stop)
        d->stopping = 1;
    if (omp_get_wtime() - d->t0 >= d->next_report)
        report(d, k, fraction);
    pthread_mutex_unlock(&d->lock);
}

/* Rank 0 runs members while the dispatcher thread answers the workers. */
static void run_own(dispatcher *d, int threads)
{
    for (;;) {
        pthread_mutex_lock(&d->lock);
        int64_t k = next_member(d, 0);
        d->own_fraction = 0;
        if (k >= 0)
            report(d, (size_t)k, 0);
        pthread_mutex_unlock(&d->lock);
        if (k < 0)
            return;
        sw_error e = { 0 };
        sw_status st = run_member(d->plan, (size_t)k, threads, d->opt->stop, own_progress, d, &e);
        pthread_mutex_lock(&d->lock);
        d->at[0] = -1;
        tally(d, 0, k, st, e.msg);
        report(d, (size_t)k, st == SW_OK ? 1 : 0);
        pthread_mutex_unlock(&d->lock);
    }
}

/* The member loop on rank 0 (sw_sweep_options.member_loop). */
static sw_status dispatch(const sw_sweep_plan *plan, const size_t *pending, size_t n_pending, size_t done,
                          sw_sweep_summary *out, void *user, sw_error *err)
{
    dispatcher *d = user;
    pthread_mutex_lock(&d->lock);
    d->plan = plan;
    d->pending = pending;
    d->n_pending = n_pending;
    d->done = done;
    d->total = plan->n_members;
    d->entered = 1;
    d->t0 = omp_get_wtime();
    for (size_t i = 0; i < n_pending; i++)
        d->cost_all += plan->member[pending[i]].cost;
    pthread_mutex_unlock(&d->lock);
    int threads = sw_sweep_mpi_threads(d->w, d->opt->threads);
    int own = d->w->rank0_runs_members;
    pthread_t t;
    if (own && pthread_create(&t, NULL, serve_thread, d) != 0)
        own = 0;   /* no thread for the dispatcher: rank 0 only dispatches */
    out->members_parallel = own ? d->w->size : d->w->size - 1;
    out->threads = threads;
    if (own) {
        run_own(d, threads);
        pthread_join(t, NULL);
    } else
        serve(d);
    if (d->failed) {
        if (err)
            *err = d->fail;
        return d->fail.code;
    }
    if (d->interrupted || d->done < d->total)
        return sw_fail(err, SW_ERR_INTERRUPTED, "sweep interrupted: %zu of %zu members are finished and kept in "
                       "%s; run the same command again (with any number of ranks) to resume", d->done, d->total,
                       out->members_dir);
    return SW_OK;
}

/* ---- the other ranks: workers ----------------------------------------------------------------------- */

static void work(const sw_sweep_mpi_world *w, const sw_sweep_plan *plan, const sw_sweep_options *opt)
{
    ask_record a;
    memset(&a, 0, sizeof a);
    a.member = -1;
    int threads = sw_sweep_mpi_threads(w, opt->threads);
    for (;;) {
        int64_t k = -1;
        MPI_Request q;
        int got = 0;
        MPI_Send(&a, (int)sizeof a, MPI_BYTE, 0, TAG_ASK, MPI_COMM_WORLD);
        MPI_Irecv(&k, 1, MPI_INT64_T, 0, TAG_MEMBER, MPI_COMM_WORLD, &q);
        while (MPI_Test(&q, &got, MPI_STATUS_IGNORE), !got)
            nap();
        if (k < 0 || (uint64_t)k >= plan->n_members)
            return;
        sw_error e = { 0 };
        sw_status st = run_member(plan, (size_t)k, threads, opt->stop, NULL, NULL, &e);
        memset(&a, 0, sizeof a);
        a.code = (int32_t)st;
        a.member = k;
        if (st != SW_OK)
            memcpy(a.msg, e.msg, sizeof a.msg);
    }
}

sw_status sw_sweep_mpi_run(const sw_sweep_mpi_world *w, sw_sweep_plan *plan, const sw_sweep_options *opt,
                           sw_sweep_summary *out, sw_error *err)
{
    memset(out, 0, sizeof *out);
    if (w->size <= 1)
        return sw_sweep_run(plan, opt, out, err);
    if (w->rank != 0) {
        work(w, plan, opt);
        return bcast_status(SW_OK, err);
    }
    sw_status st = SW_OK;
    dispatcher d = { .w = w, .opt = opt };
    pthread_mutex_init(&d.lock, NULL);
    d.at = malloc((size_t)w->size * sizeof *d.at);
    if (!d.at)
        st = sw_fail(err, SW_ERR_NOMEM, "out of memory for %d ranks", w->size);
    else {
        for (int r = 0; r < w->size; r++)
            d.at[r] = -1;
        sw_sweep_options o = *opt;
        o.member_loop = dispatch;
        o.member_loop_user = &d;
        st = sw_sweep_run(plan, &o, out, err);
    }
    if (!d.entered) {   /* stopped before the member loop: the workers still wait for an answer */
        for (int r = 1; r < w->size; r++) {
            ask_record a;
            int64_t k = -1;
            MPI_Status s;
            MPI_Recv(&a, (int)sizeof a, MPI_BYTE, MPI_ANY_SOURCE, TAG_ASK, MPI_COMM_WORLD, &s);
            MPI_Send(&k, 1, MPI_INT64_T, s.MPI_SOURCE, TAG_MEMBER, MPI_COMM_WORLD);
        }
    }
    free(d.at);
    pthread_mutex_destroy(&d.lock);
    return bcast_status(st, err);
}
