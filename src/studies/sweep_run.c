/* sweep_run.c - running a sweep: the manifest that a resumed sweep must match, and the member loop
 * (sw_sweep_run); then the aggregate (sweep_combine.c).
 *
 * Threads. Small members run side by side: an outer `omp parallel for schedule(dynamic, 1)` over
 * the members, each member inside a nested one-thread `omp parallel` (so that orphaned `omp for`
 * loops in the model, tracker and layouts bind to it and not to the team of members; nested
 * regions are inactive by default, and a member's own regions then run on its one thread). Large members
 * run one after another, each with all threads. NetCDF-C is not thread-safe: every NetCDF call made
 * while members may run (setup input, member files) sits in `omp critical(sw_netcdf)`. With
 * opt->member_loop set, the loop is that function's instead (sweep_mpi.c: the members go to MPI ranks).
 *
 * Files. <out>/members/manifest.json records the scenario text and the design; a resumed sweep
 * whose scenario or design differs is refused. <out>/members/mNNNNN.nc (ncsweep.c) appears, via
 * .part + rename, only when member NNNNN has finished (ok or failed), so a present file is a
 * finished member. <out>/members/mNNNNN.scn is the member's scenario text: `shoreward run` on it
 * repeats the member (except depth_factor, which no scenario key expresses; its file says so).
 */
#include "studies/sweep_impl.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "base/atomic_file.h"
#include "base/omp_compat.h"
#include "run/outdir.h"
#include "run/run.h"
#include "studies/ncsweep.h"

static int file_exists(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0 && S_ISREG(st.st_mode);
}

void sw_sweep_summary_free(sw_sweep_summary *s)
{
    if (!s)
        return;
    for (size_t k = 0; s->error && k < s->n_members; k++)
        free(s->error[k]);
    free(s->error);
    free(s->status);
    free(s->gauge);
    memset(s, 0, sizeof *s);
}

/* ---- the manifest: what a resumed sweep must match ------------------------------------------ */

/* The design as canonical text: design, seed, parameters and every member's values (%.17g). */
static char *design_text(const sw_sweep_plan *plan)
{
    const sw_sweep_spec *sw = &plan->base->sweep;
    size_t cap = 256 + plan->n_params * 160 + plan->n_members * (plan->n_params * 26 + 16);
    char *t = malloc(cap);
    if (!t)
        return NULL;
    size_t used = (size_t)snprintf(t, cap, "design %s; seed %llu; %zu members; parameters:",
                                   swp_design_name(sw->design), sw->seed, plan->n_members);
    for (size_t q = 0; q < plan->n_params; q++)
        used += (size_t)snprintf(t + used, cap - used, " %s;", plan->param[q].name);
    for (size_t k = 0; k < plan->n_members; k++) {
        used += (size_t)snprintf(t + used, cap - used, "\nm%05zu", k);
        for (size_t q = 0; q < plan->n_params; q++)
            used += (size_t)snprintf(t + used, cap - used, " %.17g", plan->member[k].value[q]);
    }
    return t;
}

/* The first line where a and b differ (1-based), with both lines cut to 60 characters. */
static int first_difference(const char *a, const char *b, char *la, char *lb)
{
    int line = 1;
    while (1) {
        const char *ea = strchr(a, '\n'), *eb = strchr(b, '\n');
        size_t na = ea ? (size_t)(ea - a) : strlen(a), nb = eb ? (size_t)(eb - b) : strlen(b);
        if (na != nb || memcmp(a, b, na) != 0 || !ea != !eb) {
            snprintf(la, 64, "%.*s", (int)(na < 60 ? na : 60), a);
            snprintf(lb, 64, "%.*s", (int)(nb < 60 ? nb : 60), b);
            return line;
        }
        if (!ea)
            return 0;
        a = ea + 1;
        b = eb + 1;
        line++;
    }
}

/* Appends text to buf (room bytes) as "; " comment lines of at most 100 characters, folded at spaces, so
 * that a scenario file stays within the reader's line length. */
static void append_comment(char *buf, size_t room, const char *text)
{
    while (*text && room > 1) {
        size_t len = strlen(text), cut = len;
        if (len > 98) {
            cut = 98;
            while (cut > 0 && text[cut] != ' ')
                cut--;
            if (cut == 0)
                cut = 98;
        }
        int w = snprintf(buf, room, "; %.*s\n", (int)cut, text);
        if (w < 0 || (size_t)w >= room)
            return;
        buf += w;
        room -= (size_t)w;
        text += cut;
        while (*text == ' ')
            text++;
    }
}

/* Writes the manifest, or checks an existing one against this sweep. */
static sw_status manifest(const sw_sweep_plan *plan, const char *members_dir, sw_error *err)
{
    char path[SW_PATH_MAX + 32];
    snprintf(path, sizeof path, "%s/manifest.json", members_dir);
    char *design = design_text(plan);
    if (!design)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory writing the sweep manifest");
    sw_status st = SW_OK;
    char *old = sw_read_text(path);
    if (old) {
        cJSON *o = cJSON_Parse(old);
        const char *ver = cJSON_GetStringValue(cJSON_GetObjectItem(o, "shoreward"));
        const char *text = cJSON_GetStringValue(cJSON_GetObjectItem(o, "scenario_text"));
        const char *des = cJSON_GetStringValue(cJSON_GetObjectItem(o, "design"));
        const char *how = "use another --out folder, or remove it to start this sweep over";
        char la[64], lb[64];
        if (!ver || !text || !des)
            st = sw_fail(err, SW_ERR_USAGE, "%s is not a sweep manifest this version can read; %s", path, how);
        else if (strcmp(ver, SW_VERSION) != 0)
            st = sw_fail(err, SW_ERR_USAGE, "%s: the finished members come from shoreward %s, this is %s; %s", path, ver,
                         SW_VERSION, how);
        else if (strcmp(text, plan->base->text) != 0) {
            int line = first_difference(plan->base->text, text, la, lb);
            st = sw_fail(err, SW_ERR_USAGE, "%s: the finished members in %s were run from a different scenario text "
                         "(line %d now reads '%s', then read '%s'); a sweep resumes only with the same scenario: %s",
                         plan->base->path, members_dir, line, la, lb, how);
        } else if (strcmp(des, design) != 0)
            st = sw_fail(err, SW_ERR_USAGE, "%s: the finished members in %s belong to a different design; %s",
                         plan->base->path, members_dir, how);
        cJSON_Delete(o);
        free(old);
        free(design);
        return st;
    }
    for (size_t k = 0; k < plan->n_members; k++) {
        char f[SW_PATH_MAX + 32];
        swp_member_file(plan, k, "nc", f, sizeof f);
        if (file_exists(f)) {
            free(design);
            return sw_fail(err, SW_ERR_USAGE, "%s holds member files but no manifest.json, so they cannot be matched to "
                           "this sweep; use another --out folder, or remove it", members_dir);
        }
    }
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "format", "shoreward sweep manifest 1");
    cJSON_AddStringToObject(o, "shoreward", SW_VERSION);
    cJSON_AddStringToObject(o, "scenario", plan->base->path);
    cJSON_AddStringToObject(o, "scenario_text", plan->base->text);
    cJSON_AddStringToObject(o, "design", design);
    cJSON_AddStringToObject(o, "caution", sw_caution_sweep_for(plan->base));
    char *txt = cJSON_Print(o);
    cJSON_Delete(o);
    free(design);
    if (!txt)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory writing the sweep manifest");
    st = sw_atomic_write_text(path, txt, err);
    free(txt);
    return st;
}

/* ---- the member loop ------------------------------------------------------------------------ */

typedef struct {
    const sw_sweep_plan *plan;
    const sw_sweep_options *opt;
    double t0, next_report;
    size_t done, total, n_running;
    double cost_all, cost_done;   /* cells x steps of this attempt's members; of those finished */
    double *fraction;             /* [n_members] progress of running members */
    unsigned char *running;       /* [n_members] */
    size_t last;                  /* member of the last report */
    int interrupted, failed;
    sw_error fail;                /* first I/O or memory failure */
} sweep_ctx;

/* Calls the progress callback (inside critical(sw_sweep_progress)). */
static void report_progress(sweep_ctx *c, size_t k)
{
    if (!c->opt->progress)
        return;
    double now = omp_get_wtime() - c->t0, work = c->cost_done;
    for (size_t i = 0; i < c->plan->n_members; i++)
        if (c->running[i])
            work += c->fraction[i] * c->plan->member[i].cost;
    sw_sweep_progress p = {
        .done = c->done, .total = c->total, .running = c->n_running, .current = k,
        .current_fraction = c->fraction[k], .elapsed_s = now,
        .remaining_s = work > 0 && c->cost_all > 0 ? now * (c->cost_all - work) / work : NAN,
    };
    c->opt->progress(&p, c->opt->progress_user);
    c->next_report = now + 0.5;
}

static void on_member_progress(size_t k, double fraction, void *user)
{
    sweep_ctx *c = user;
    SW_OMP(critical(sw_sweep_progress))
    {
        c->fraction[k] = fraction;
        if (omp_get_wtime() - c->t0 >= c->next_report)
            report_progress(c, k);
    }
}

/* Runs member k and keeps its file; a failed member is kept too, an interrupted one is not. */
static void run_one(sweep_ctx *c, size_t k, int threads, int side_by_side)
{
    const sw_sweep_plan *plan = c->plan;
    if (side_by_side)   /* maybe not the thread netCDF started in (see ncsweep.h) */
        sw_ncs_quiet_thread();
    SW_OMP(critical(sw_sweep_progress))
    {
        c->running[k] = 1;
        c->fraction[k] = 0;
        c->n_running++;
        report_progress(c, k);
    }
    sw_sweep_member_result r;
    sw_error e = { 0 };
    sw_status st = sw_sweep_member_run(plan, k, threads, c->opt->stop, on_member_progress, c, &r, &e);
    int kept = 0;
    if (st == SW_OK && r.status == SW_ERR_INTERRUPTED) {
        SW_OMP(atomic write)
        c->interrupted = 1;
    } else if (st == SW_OK) {
        char path[SW_PATH_MAX + 32];
        swp_member_file(plan, k, "nc", path, sizeof path);
        SW_OMP(critical(sw_netcdf))
        st = sw_ncs_member_write(path, &r, plan->member[k].value, plan->n_params, &plan->base_grid, sw_caution_sweep_for(plan->base), &e);
        kept = st == SW_OK;
    }
    sw_sweep_member_result_free(&r);
    SW_OMP(critical(sw_sweep_progress))
    {
        if (st != SW_OK && !c->failed) {
            c->failed = 1;
            c->fail = e;
        }
        c->running[k] = 0;
        c->n_running--;
        if (kept) {
            c->done++;
            c->cost_done += plan->member[k].cost;
        }
        c->fraction[k] = kept ? 1 : 0;
        report_progress(c, k);
    }
}

/* Writes member k's scenario file: the member's text, then what it is (as comments at the end, so
 * line numbers in messages match the file). */
static sw_status write_member_scenario(const sw_sweep_plan *plan, size_t k, sw_error *err)
{
    sw_scenario *sc = malloc(sizeof *sc);
    if (!sc)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory");
    sw_error e = { 0 };
    if (sw_sweep_member_scenario(plan, k, sc, &e) != SW_OK) {
        free(sc);
        return SW_OK;   /* a member that cannot be built has no scenario file; its member file says why */
    }
    char label[2048];
    sw_sweep_member_label(plan, k, label, sizeof label);
    size_t n = strlen(sc->text) + strlen(label) + strlen(plan->base->path) + strlen(sw_caution_sweep_for(plan->base)) + 1024;
    char *text = malloc(n);
    sw_status st = SW_OK;
    if (!text)
        st = sw_fail(err, SW_ERR_NOMEM, "out of memory");
    else {
        double s = sw_sweep_member_depth_factor(plan, k);
        int used = snprintf(text, n, "%s%s\n; ---- shoreward sweep member %zu of %s\n; %s\n%s", sc->text,
                 sc->text[0] && sc->text[strlen(sc->text) - 1] == '\n' ? "" : "\n", k, plan->base->path, label,
                 s != 1.0 ? "; depth_factor is applied to the built depth field by `shoreward sweep`; no scenario key "
                            "expresses it, so `shoreward run` of this file runs the member without it.\n" : "");
        if (used > 0 && (size_t)used < n)
            append_comment(text + used, n - (size_t)used, sw_caution_sweep_for(plan->base));
        char path[SW_PATH_MAX + 32];
        swp_member_file(plan, k, "scn", path, sizeof path);
        st = sw_atomic_write_text(path, text, err);
    }
    free(text);
    sw_scenario_free(sc);
    free(sc);
    return st;
}

static sw_status sweep_members(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out,
                               sw_error *err);

/* The output folder is created, write-tested and locked (run/outdir.h) while the members run, so that two
 * sweeps (or a sweep and a run) never write into one folder at once. */
sw_status sw_sweep_run(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out, sw_error *err)
{
    memset(out, 0, sizeof *out);
    if (!plan || !plan->out_dir[0] || !opt)
        return sw_fail(err, SW_ERR_USAGE, "sw_sweep_run: a plan with an output folder is required");
    sw_outdir od;
    sw_status st = sw_outdir_open(&od, plan->out_dir, opt->history, err);
    if (st != SW_OK)
        return st;
    st = sweep_members(plan, opt, out, err);
    sw_outdir_close(&od);
    return st;
}

static sw_status sweep_members(sw_sweep_plan *plan, const sw_sweep_options *opt, sw_sweep_summary *out,
                               sw_error *err)
{
    memset(out, 0, sizeof *out);
    if (!plan || !plan->out_dir[0] || !opt)
        return sw_fail(err, SW_ERR_USAGE, "sw_sweep_run: a plan with an output folder is required");
    if (strlen(plan->out_dir) > 900)   /* member paths are cut at 960 characters (swp_member_file) */
        return sw_fail(err, SW_ERR_RANGE, "output folder path has %zu characters (accepted: at most 900)",
                       strlen(plan->out_dir));
    size_t M = plan->n_members;
    snprintf(out->members_dir, sizeof out->members_dir, "%.1000s/members", plan->out_dir);
    sw_status st = sw_make_dirs(out->members_dir, err);
    if (st == SW_OK)
        st = manifest(plan, out->members_dir, err);
    if (st != SW_OK)
        return st;

    sweep_ctx c = { .plan = plan, .opt = opt, .total = M };
    size_t *pending = malloc(M * sizeof *pending);
    c.fraction = calloc(M, sizeof *c.fraction);
    c.running = calloc(M, 1);
    if (!pending || !c.fraction || !c.running) {
        free(pending);
        free(c.fraction);
        free(c.running);
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for %zu members", M);
    }
    size_t n_pending = 0, max_cells = 0;
    for (size_t k = 0; k < M && st == SW_OK; k++) {
        char path[SW_PATH_MAX + 32];
        swp_member_file(plan, k, "nc", path, sizeof path);
        if (file_exists(path)) {
            out->n_resumed++;
            c.done++;
            continue;
        }
        st = write_member_scenario(plan, k, err);
        const sw_sweep_member *m = &plan->member[k];
        if (st == SW_OK && m->status != SW_OK) {   /* cannot run: kept as a failed member right away */
            sw_sweep_member_result r = { .index = k, .status = m->status };
            snprintf(r.error, sizeof r.error, "%s", m->error ? m->error : "");
            st = sw_ncs_member_write(path, &r, m->value, plan->n_params, &plan->base_grid, sw_caution_sweep_for(plan->base), err);
            c.done++;
            continue;
        }
        pending[n_pending++] = k;
        c.cost_all += m->cost;
        size_t cells = sw_grid_cells(&m->grid);
        max_cells = cells > max_cells ? cells : max_cells;
    }
    int threads = opt->threads > 0 ? opt->threads : omp_get_max_threads();
    int par = opt->members_parallel;
    if (par <= 0)
        par = threads > 1 && max_cells <= SW_SWEEP_SMALL_CELLS ? threads : 1;
    if ((size_t)par > n_pending)
        par = n_pending > 0 ? (int)n_pending : 1;
    out->members_parallel = par;
    out->threads = par > 1 ? 1 : threads;
    c.t0 = omp_get_wtime();
    if (st == SW_OK && opt->member_loop) {   /* the members run elsewhere (MPI ranks: sweep_mpi.c) */
        st = opt->member_loop(plan, pending, n_pending, c.done, out, opt->member_loop_user, err);
        if (st == SW_OK)
            c.done = M;
    } else if (st == SW_OK && par > 1) {
        SW_OMP(parallel for num_threads(par) schedule(dynamic, 1))
        for (size_t i = 0; i < n_pending; i++) {
            int skip;
            SW_OMP(atomic read)
            skip = c.failed;
            /* a one-thread region of its own: the orphaned `omp for` loops a run meets outside its
             * time loop (model set-up, tracker) must bind to it, not to this team of members */
            if (!skip && !(opt->stop && *opt->stop))
                SW_OMP(parallel num_threads(1))
                run_one(&c, pending[i], 1, 1);
        }
    } else if (st == SW_OK) {
        for (size_t i = 0; i < n_pending && !c.failed && !(opt->stop && *opt->stop); i++)
            run_one(&c, pending[i], threads, 0);
    }
    out->wall_s = omp_get_wtime() - c.t0;
    free(pending);
    free(c.fraction);
    free(c.running);
    if (st != SW_OK)
        return st;
    if (c.failed) {
        if (err)
            *err = c.fail;
        return c.fail.code;
    }
    if (c.interrupted || c.done < M)
        return sw_fail(err, SW_ERR_INTERRUPTED, "sweep interrupted: %zu of %zu members are finished and kept in %s; "
                       "run the same command again to resume", c.done, M, out->members_dir);
    return swp_combine(plan, opt, out, err);
}
