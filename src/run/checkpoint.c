/* checkpoint.c - a run's state in one file, and the snapshots beside it (see checkpoint.h).
 *
 * Invariant: the blocks of a checkpoint are the parts of the model, forcing, tracker, gauges and run, in
 * that order, each under its own name; a checkpoint is read only into a run whose parts have the same names
 * and sizes, so a byte copy restores each. Loading checks the whole file (header, names, sizes, hash)
 * before it writes a single byte into the run.
 */
#define _POSIX_C_SOURCE 200809L
#include "run/checkpoint.h"

#include <errno.h>
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/types.h>
#include <unistd.h>

#include "base/atomic_file.h"

#define FORMAT_LINE "shoreward checkpoint 1"
#define BLOCK_NAME_LEN 32
#define MAX_BLOCKS (SW_MODEL_STATE_PARTS + SW_FORCING_STATE_PARTS + SW_TRACKER_STATE_PARTS + SW_GAUGES_STATE_PARTS + 8)
#define LINE_MAX_CHARS 512

uint64_t sw_ckpt_fnv1a(uint64_t h, const void *data, size_t n)
{
    const unsigned char *p = data;
    for (size_t k = 0; k < n; k++) {
        h ^= p[k];
        h *= 1099511628211ULL;
    }
    return h;
}

void sw_ckpt_fingerprint_of(const sw_scenario *sc, const sw_setup *s, sw_ckpt_fingerprint *fp)
{
    memset(fp, 0, sizeof *fp);
    snprintf(fp->version, sizeof fp->version, "%s", SW_VERSION);
    const char *text = sc->text ? sc->text : "";
    fp->scenario_hash = sw_ckpt_fnv1a(SW_FNV_BASIS, text, strlen(text));
    snprintf(fp->precision, sizeof fp->precision, "%s", sw_precision_name(sc->precision));
    snprintf(fp->layout, sizeof fp->layout, "%s", s->layout->name);
    fp->grid = s->grid;
    fp->dt_s = s->dt_s;
    fp->n_steps = s->n_steps;
    fp->checkpoint_interval_s = sc->checkpoint_interval_s;
}

/* ---- the header ----------------------------------------------------------------------------------------- */

/* In the order they are checked: the items a user is likeliest to have changed on purpose first, so that
 * the message names them rather than the scenario text they are written in. */
enum { H_FORMAT, H_ORDER, H_VERSION, H_PRECISION, H_LAYOUT, H_GRID, H_DT, H_STEPS, H_SCENARIO, H_COUNT };

static const char *const HEADER_KEY[H_COUNT] = {
    "format", "byte_order", "version", "precision", "layout", "grid", "dt_s", "n_steps", "scenario_fnv1a",
};
/* What the user changed when an item differs, for the message. */
static const char *const HEADER_WHAT[H_COUNT] = {
    "the file format", "the byte order (another kind of machine)", "the shoreward version",
    "the precision (--precision or [run] precision)", "the layout", "the grid", "the time step",
    "the step count", "the scenario text",
};

static const char *byte_order(void)
{
    const uint16_t one = 1;
    unsigned char c;
    memcpy(&c, &one, 1);
    return c ? "little-endian" : "big-endian";
}

/* The header values of fingerprint fp, as the file spells them. */
static void header_values(const sw_ckpt_fingerprint *fp, char v[H_COUNT][LINE_MAX_CHARS])
{
    const sw_grid *g = &fp->grid;
    snprintf(v[H_FORMAT], LINE_MAX_CHARS, "%s", FORMAT_LINE);
    snprintf(v[H_ORDER], LINE_MAX_CHARS, "%s", byte_order());
    snprintf(v[H_VERSION], LINE_MAX_CHARS, "%s", fp->version);
    snprintf(v[H_SCENARIO], LINE_MAX_CHARS, "%016" PRIx64, fp->scenario_hash);
    snprintf(v[H_PRECISION], LINE_MAX_CHARS, "%s", fp->precision);
    snprintf(v[H_LAYOUT], LINE_MAX_CHARS, "%s", fp->layout);
    const int n = snprintf(v[H_GRID], LINE_MAX_CHARS, "%zu x %zu cells of %.17g x %.17g m from (%.17g, %.17g) m, ",
                           g->nx, g->ny, g->dx_m, g->dy_m, g->x0_m, g->y0_m);
    if (g->kind == SW_GRID_GEOGRAPHIC)
        snprintf(v[H_GRID] + n, LINE_MAX_CHARS - (size_t)n, "geographic, R = %.17g m", g->radius_m);
    else
        snprintf(v[H_GRID] + n, LINE_MAX_CHARS - (size_t)n, "projected");
    snprintf(v[H_DT], LINE_MAX_CHARS, "%.17g", fp->dt_s);
    snprintf(v[H_STEPS], LINE_MAX_CHARS, "%lld", fp->n_steps);
}

/* ---- the blocks ------------------------------------------------------------------------------------------ */

typedef struct {
    size_t n;
    const char *name[MAX_BLOCKS];
    void *ptr[MAX_BLOCKS];
    size_t bytes[MAX_BLOCKS];
} block_list;

/* Adds the parts of one module, named prefix.names[k]. */
static void add_parts(block_list *b, void **ptr, const size_t *bytes, size_t n, const char *const *names)
{
    for (size_t k = 0; k < n && b->n < MAX_BLOCKS; k++, b->n++) {
        b->name[b->n] = names[k];
        b->ptr[b->n] = ptr[k];
        b->bytes[b->n] = bytes[k];
    }
}

static void run_blocks(const sw_ckpt_run *st, block_list *b)
{
    static const char *const model_names[SW_MODEL_STATE_PARTS] = {
        "model.eta", "model.u", "model.v", "model.steps", "model.time_s", "model.edge_level_m",
        "model.slab_weight", "model.slab0_x", "model.slab0_y", "model.slab1_x", "model.slab1_y",
        "model.edge_head0", "model.edge_head1",
    };
    static const char *const forcing_names[SW_FORCING_STATE_PARTS] = {
        "forcing.slab_times_s", "forcing.points0", "forcing.points1", "forcing.wind_max_ms",
        "forcing.pressure_min_pa",
    };
    static const char *const tracker_names[SW_TRACKER_STATE_PARTS] = {
        "tracker.eta_max_m", "tracker.eta_min_m", "tracker.arrival_s", "tracker.eta_max_time_s",
        "tracker.speed2_max", "tracker.segments", "tracker.seen", "tracker.updated", "tracker.nonfinite",
    };
    static const char *const gauge_names[SW_GAUGES_STATE_PARTS] = {
        "gauges.count", "gauges.time_s", "gauges.eta_m", "gauges.u_ms", "gauges.v_ms", "gauges.stats",
        "gauges.prev_eta_m", "gauges.prev_time_s", "gauges.air",
    };
    static const char *const run_names[5] = {
        "run.next_sample_s", "run.next_snapshot_s", "run.next_checkpoint_s", "run.volume_start_m3", "run.frames",
    };
    void *ptr[16];
    size_t bytes[16], n;
    memset(b, 0, sizeof *b);
    n = sw_model_state_parts(st->model, ptr, bytes);
    add_parts(b, ptr, bytes, n, model_names);
    n = sw_forcing_state_parts(st->forcing, ptr, bytes);
    add_parts(b, ptr, bytes, n, forcing_names);
    n = sw_tracker_state_parts(st->tracker, ptr, bytes);
    add_parts(b, ptr, bytes, n, tracker_names);
    n = sw_gauges_state_parts(st->gauges, ptr, bytes);
    add_parts(b, ptr, bytes, n, gauge_names);
    void *rp[5] = {st->next_sample_s, st->next_snapshot_s, st->next_checkpoint_s, st->volume_start_m3, st->frames};
    const size_t rb[5] = {sizeof(double), sizeof(double), sizeof(double), sizeof(double), sizeof(long long)};
    add_parts(b, rp, rb, 5, run_names);
}

/* Writes one block: its padded name, length and bytes; folds all three into *h. Returns 1 on success. */
static int put_block(FILE *f, const char *name, const void *data, uint64_t bytes, uint64_t *h)
{
    char padded[BLOCK_NAME_LEN] = {0};
    snprintf(padded, sizeof padded, "%s", name);
    *h = sw_ckpt_fnv1a(*h, padded, sizeof padded);
    *h = sw_ckpt_fnv1a(*h, &bytes, sizeof bytes);
    *h = sw_ckpt_fnv1a(*h, data, (size_t)bytes);
    return fwrite(padded, 1, sizeof padded, f) == sizeof padded && fwrite(&bytes, sizeof bytes, 1, f) == 1
        && (bytes == 0 || fwrite(data, 1, (size_t)bytes, f) == bytes);
}

sw_status sw_ckpt_save(const char *path, const sw_ckpt_fingerprint *fp, long long step, const sw_ckpt_run *st,
                       sw_error *err)
{
    block_list b;
    run_blocks(st, &b);
    char v[H_COUNT][LINE_MAX_CHARS];
    header_values(fp, v);
    sw_atomic_file af;
    sw_status rc = sw_atomic_open(&af, path, err);
    if (rc != SW_OK)
        return rc;
    fprintf(af.f, "%s\n", v[H_FORMAT]);
    for (int k = H_ORDER; k < H_COUNT; k++)
        fprintf(af.f, "%s %s\n", HEADER_KEY[k], v[k]);
    fprintf(af.f, "step %lld\ntime_s %.17g\ncheckpoint_interval_s %.17g\ndata\n", step, sw_model_time(st->model),
            fp->checkpoint_interval_s);
    uint64_t h = SW_FNV_BASIS;
    int ok = 1;
    for (size_t k = 0; ok && k < b.n; k++)
        ok = put_block(af.f, b.name[k], b.ptr[k], b.bytes[k], &h);
    const uint64_t hash = h;
    if (ok)
        ok = put_block(af.f, "end", &hash, sizeof hash, &h);
    if (!ok) {
        const int e = errno;
        sw_atomic_discard(&af);
        return sw_fail(err, SW_ERR_IO, "%s: cannot write %s: %s", path, af.part, strerror(e));
    }
    return sw_atomic_close(&af, err);
}

/* Reads one line without its newline into buf; 0 at the end of the file or for a line too long. */
static int get_line(FILE *f, char *buf, size_t n)
{
    if (!fgets(buf, (int)n, f))
        return 0;
    size_t len = strlen(buf);
    if (len == 0 || buf[len - 1] != '\n')
        return 0;
    buf[len - 1] = '\0';
    return 1;
}

/* Reads and checks the header against fp; *step from it. Leaves f at the first block. */
static sw_status read_header(FILE *f, const char *path, const sw_ckpt_fingerprint *fp, long long *step, sw_error *err)
{
    char v[H_COUNT][LINE_MAX_CHARS], line[LINE_MAX_CHARS];
    header_values(fp, v);
    int ln = 1;
    if (!get_line(f, line, sizeof line) || strcmp(line, FORMAT_LINE) != 0)
        return sw_fail(err, SW_ERR_PARSE, "%s:1: not a shoreward checkpoint (accepted: a file whose first line "
                       "is '%s', written by `shoreward run` with [run] checkpoint_interval)", path, FORMAT_LINE);
    for (int k = H_ORDER; k < H_COUNT; k++) {
        ln++;
        const size_t kl = strlen(HEADER_KEY[k]);
        if (!get_line(f, line, sizeof line) || strncmp(line, HEADER_KEY[k], kl) != 0 || line[kl] != ' ')
            return sw_fail(err, SW_ERR_PARSE, "%s:%d: expected '%s VALUE' (the checkpoint is damaged)", path, ln,
                           HEADER_KEY[k]);
        if (strcmp(line + kl + 1, v[k]) != 0)
            return sw_fail(err, SW_ERR_INPUT, "%s:%d: the checkpoint was written for another run: %s differs "
                           "(%s '%s' in the checkpoint, '%s' in this run); resume with the scenario and options "
                           "it was written with, or run without --resume to start again", path, ln,
                           HEADER_WHAT[k], HEADER_KEY[k], line + kl + 1, v[k]);
    }
    ln++;
    char *end = NULL;
    if (!get_line(f, line, sizeof line) || strncmp(line, "step ", 5) != 0 ||
        (errno = 0, *step = strtoll(line + 5, &end, 10), errno != 0 || *end || *step < 0 || *step > fp->n_steps))
        return sw_fail(err, SW_ERR_PARSE, "%s:%d: expected 'step N' with 0 <= N <= %lld (the checkpoint is "
                       "damaged)", path, ln, fp->n_steps);
    for (;;) {   /* informative lines up to "data" */
        ln++;
        if (!get_line(f, line, sizeof line))
            return sw_fail(err, SW_ERR_PARSE, "%s:%d: expected the line 'data' (the checkpoint is damaged)", path, ln);
        if (strcmp(line, "data") == 0)
            return SW_OK;
    }
}

/* Reads the next block's header; checks its name against `name` and its size against `bytes`. */
static sw_status get_block_head(FILE *f, const char *path, const char *name, size_t bytes, uint64_t *h, sw_error *err)
{
    char padded[BLOCK_NAME_LEN];
    uint64_t n;
    if (fread(padded, 1, sizeof padded, f) != sizeof padded || fread(&n, sizeof n, 1, f) != 1)
        return sw_fail(err, SW_ERR_IO, "%s: ends before block '%s' (the checkpoint is truncated)", path, name);
    padded[BLOCK_NAME_LEN - 1] = '\0';
    if (strcmp(padded, name) != 0)
        return sw_fail(err, SW_ERR_INPUT, "%s: block '%s' where this run expects '%s' (the checkpoint was written "
                       "for a run with other gauges, forcing or snapshots)", path, padded, name);
    if (n != (uint64_t)bytes)
        return sw_fail(err, SW_ERR_INPUT, "%s: block '%s' holds %" PRIu64 " bytes, this run's %zu (the checkpoint "
                       "was written for another run)", path, name, n, bytes);
    char full[BLOCK_NAME_LEN] = {0};
    snprintf(full, sizeof full, "%s", name);
    *h = sw_ckpt_fnv1a(*h, full, sizeof full);
    *h = sw_ckpt_fnv1a(*h, &n, sizeof n);
    return SW_OK;
}

/* Reads every block of b in order: into place when `store`, else through a buffer only to check names,
 * sizes and the final hash. */
static sw_status read_blocks(FILE *f, const char *path, const block_list *b, int store, sw_error *err)
{
    uint64_t h = SW_FNV_BASIS;
    unsigned char buf[65536];
    for (size_t k = 0; k < b->n; k++) {
        sw_status rc = get_block_head(f, path, b->name[k], b->bytes[k], &h, err);
        if (rc != SW_OK)
            return rc;
        for (size_t done = 0; done < b->bytes[k];) {
            const size_t n = b->bytes[k] - done < sizeof buf ? b->bytes[k] - done : sizeof buf;
            unsigned char *to = store ? (unsigned char *)b->ptr[k] + done : buf;
            if (fread(to, 1, n, f) != n)
                return sw_fail(err, SW_ERR_IO, "%s: ends inside block '%s' (the checkpoint is truncated)", path,
                               b->name[k]);
            h = sw_ckpt_fnv1a(h, to, n);
            done += n;
        }
    }
    const uint64_t want = h;
    uint64_t got;
    sw_status rc = get_block_head(f, path, "end", sizeof got, &h, err);
    if (rc != SW_OK)
        return rc;
    if (fread(&got, sizeof got, 1, f) != 1)
        return sw_fail(err, SW_ERR_IO, "%s: ends inside block 'end' (the checkpoint is truncated)", path);
    if (got != want)
        return sw_fail(err, SW_ERR_INPUT, "%s: the blocks' hash %016" PRIx64 " differs from the one recorded, %016"
                       PRIx64 " (the checkpoint is damaged)", path, want, got);
    return SW_OK;
}

sw_status sw_ckpt_load(const char *path, const sw_ckpt_fingerprint *fp, const sw_ckpt_run *st, long long *step,
                       sw_error *err)
{
    *step = 0;
    FILE *f = fopen(path, "rb");
    if (!f)
        return sw_fail(err, SW_ERR_IO, "%s: cannot open the checkpoint to resume from: %s", path, strerror(errno));
    long long saved = 0;
    sw_status rc = read_header(f, path, fp, &saved, err);
    off_t data = rc == SW_OK ? ftello(f) : -1;
    block_list b;
    run_blocks(st, &b);
    if (rc == SW_OK)
        rc = read_blocks(f, path, &b, 0, err);   /* everything checked before anything changes */
    if (rc == SW_OK && fseeko(f, data, SEEK_SET) != 0)
        rc = sw_fail(err, SW_ERR_IO, "%s: cannot seek: %s", path, strerror(errno));
    if (rc == SW_OK)
        rc = read_blocks(f, path, &b, 1, err);
    fclose(f);
    if (rc == SW_OK)
        *step = saved;
    return rc;
}

/* ---- the frames file --------------------------------------------------------------------------------- */

#define FRAMES_MAGIC "shoreward frames 1\n"   /* 19 bytes, then the cell count (uint64) */
#define FRAMES_HEAD ((off_t)(sizeof FRAMES_MAGIC - 1 + sizeof(uint64_t)))

struct sw_ckpt_frames {
    FILE *f;
    char path[SW_PATH_MAX];
    size_t cells;        /* values a frame */
    long long count;     /* frames in the file */
};

static off_t frame_offset(const sw_ckpt_frames *fr, long long k)
{
    return FRAMES_HEAD + (off_t)k * (off_t)((fr->cells + 1) * sizeof(double));
}

sw_status sw_ckpt_frames_open(const char *path, size_t cells, long long keep, sw_ckpt_frames **out, sw_error *err)
{
    *out = NULL;
    sw_ckpt_frames *fr = calloc(1, sizeof *fr);
    if (!fr)
        return sw_fail(err, SW_ERR_NOMEM, "out of memory for the snapshot frames");
    snprintf(fr->path, sizeof fr->path, "%s", path);
    fr->cells = cells;
    const uint64_t n64 = cells;
    sw_status rc = SW_OK;
    if (keep < 0) {
        fr->f = fopen(path, "w+b");
        if (!fr->f || fwrite(FRAMES_MAGIC, 1, sizeof FRAMES_MAGIC - 1, fr->f) != sizeof FRAMES_MAGIC - 1 ||
            fwrite(&n64, sizeof n64, 1, fr->f) != 1)
            rc = sw_fail(err, SW_ERR_IO, "%s: cannot create the snapshot frames: %s", path, strerror(errno));
    } else {
        char magic[sizeof FRAMES_MAGIC - 1];
        uint64_t got = 0;
        fr->f = fopen(path, "r+b");
        if (!fr->f)
            rc = sw_fail(err, SW_ERR_IO, "%s: cannot open the snapshot frames to resume from: %s", path,
                         strerror(errno));
        else if (fread(magic, 1, sizeof magic, fr->f) != sizeof magic || memcmp(magic, FRAMES_MAGIC, sizeof magic) != 0 ||
                 fread(&got, sizeof got, 1, fr->f) != 1 || got != n64)
            rc = sw_fail(err, SW_ERR_INPUT, "%s: not the snapshot frames of this run (accepted: the file written "
                         "beside %s by the run that wrote it)", path, SW_CKPT_NAME);
        else if (fseeko(fr->f, 0, SEEK_END) != 0 || ftello(fr->f) < frame_offset(fr, keep))
            rc = sw_fail(err, SW_ERR_INPUT, "%s: holds fewer than the %lld snapshot frames the checkpoint names", path,
                         keep);
        else if (fflush(fr->f) != 0 || ftruncate(fileno(fr->f), frame_offset(fr, keep)) != 0)
            rc = sw_fail(err, SW_ERR_IO, "%s: cannot drop the frames after the checkpoint: %s", path, strerror(errno));
        fr->count = keep;
    }
    if (rc != SW_OK) {
        if (fr->f)
            fclose(fr->f);
        free(fr);
        return rc;
    }
    *out = fr;
    return SW_OK;
}

sw_status sw_ckpt_frames_get(sw_ckpt_frames *fr, long long k, double *time_s, double *frame, sw_error *err)
{
    if (k < 0 || k >= fr->count || fseeko(fr->f, frame_offset(fr, k), SEEK_SET) != 0 ||
        fread(time_s, sizeof *time_s, 1, fr->f) != 1 || fread(frame, sizeof *frame, fr->cells, fr->f) != fr->cells)
        return sw_fail(err, SW_ERR_IO, "%s: cannot read snapshot frame %lld of %lld", fr->path, k, fr->count);
    return SW_OK;
}

sw_status sw_ckpt_frames_add(sw_ckpt_frames *fr, double time_s, const double *frame, sw_error *err)
{
    if (fseeko(fr->f, frame_offset(fr, fr->count), SEEK_SET) != 0 || fwrite(&time_s, sizeof time_s, 1, fr->f) != 1 ||
        fwrite(frame, sizeof *frame, fr->cells, fr->f) != fr->cells)
        return sw_fail(err, SW_ERR_IO, "%s: cannot write snapshot frame %lld: %s", fr->path, fr->count, strerror(errno));
    fr->count++;
    return SW_OK;
}

sw_status sw_ckpt_frames_sync(sw_ckpt_frames *fr, sw_error *err)
{
    if (fflush(fr->f) != 0 || fsync(fileno(fr->f)) != 0)
        return sw_fail(err, SW_ERR_IO, "%s: cannot write the snapshot frames: %s", fr->path, strerror(errno));
    return SW_OK;
}

long long sw_ckpt_frames_count(const sw_ckpt_frames *fr) { return fr ? fr->count : 0; }

void sw_ckpt_frames_close(sw_ckpt_frames *fr, int remove_file)
{
    if (!fr)
        return;
    fclose(fr->f);
    if (remove_file)
        remove(fr->path);
    free(fr);
}
