/* checkpoint.h - the complete state of a run at the end of a step, written to one file and read back, so
 * that a stopped run continues and ends with the same bits as one that never stopped.
 *
 * A checkpoint holds everything the next step and the outputs depend on: the model's fields as stored
 * (either precision, halo included), its clock, the edges' level and the slabs of the surface forcing
 * (sw_model_state_parts); the forcing's slab times, gauge values and maps (sw_forcing_state_parts); the
 * tracker's maps (sw_tracker_state_parts); the gauges' series and what they watch (sw_gauges_state_parts);
 * and the run's own schedule (sw_ckpt_run). A rupture in time needs nothing: its motion over a step is a
 * function of the step's times (faults.h). Snapshots already taken are kept beside it in a frames file
 * (sw_ckpt_frames), which grows as snapshots are taken, since holding them in memory or copying them at
 * every checkpoint would cost the snapshot file's size each time.
 *
 * The file: a text header of `key value` lines (the format's name and version, the byte order, then the
 * fingerprint of what must match: shoreward version, the scenario text's FNV-1a hash, precision, layout,
 * grid, dt, steps; then the step and time saved), a line "data", then binary blocks, each a 32-byte
 * NUL-padded name, its length in bytes (uint64, native order) and its bytes, in a fixed order; the last
 * block, "end", holds the FNV-1a 64 hash of every block before it. It is written as <path>.part and
 * renamed when complete (base/atomic_file.h). Reading refuses any difference of the fingerprint, naming it,
 * and a file whose blocks differ in name, size or hash from what this run holds.
 */
#ifndef SW_CHECKPOINT_H
#define SW_CHECKPOINT_H

#include <stddef.h>
#include <stdint.h>

#include "base/grid.h"
#include "base/status.h"
#include "forcing/forcing.h"
#include "inputs/scenario.h"
#include "model/model.h"
#include "observers/gauges.h"
#include "observers/tracker.h"
#include "run/setup.h"

#define SW_CKPT_NAME "checkpoint.swck"      /* the checkpoint's file name in a run's output folder */
#define SW_CKPT_FRAMES_NAME "checkpoint.frames" /* the snapshots taken, beside it */

/* What a checkpoint must share with the run that reads it. */
typedef struct {
    char version[32];          /* shoreward version (SW_VERSION) */
    uint64_t scenario_hash;    /* FNV-1a 64 of the scenario text (sw_scenario.text) */
    char precision[8];         /* of the model state: "double" or "single" */
    char layout[16];           /* the layout's name */
    sw_grid grid;              /* cells, spacing (m), origin (m), kind, radius (m) */
    double dt_s;               /* time step, s */
    long long n_steps;         /* steps of the whole run */
    double checkpoint_interval_s; /* not compared: informative */
} sw_ckpt_fingerprint;

/* The fingerprint of the run of scenario sc with setup s. Never fails. */
void sw_ckpt_fingerprint_of(const sw_scenario *sc, const sw_setup *s, sw_ckpt_fingerprint *fp);

/* FNV-1a 64 of n bytes, continuing from h (start with SW_FNV_BASIS). */
#define SW_FNV_BASIS 14695981039346656037ULL
uint64_t sw_ckpt_fnv1a(uint64_t h, const void *data, size_t n);

/* The pieces of a run a checkpoint holds: the observers and model (forcing may be NULL), and the run's own
 * scalars, each written and read in place. */
typedef struct {
    sw_model *model;
    sw_tracker *tracker;
    sw_gauges *gauges;
    sw_forcing *forcing;       /* NULL without forcing */
    double *next_sample_s;     /* the next gauge sample due, s */
    double *next_snapshot_s;   /* the next snapshot due, s */
    double *next_checkpoint_s; /* the next checkpoint due, s */
    double *volume_start_m3;   /* the displaced volume at t = 0, m3 (for the summary) */
    long long *frames;         /* snapshots taken (sw_ckpt_frames_count) */
} sw_ckpt_run;

/* Writes the state of run st at the end of its step `step` (time sw_model_time) to path, atomically:
 * <path>.part, renamed over path once complete (an existing checkpoint stays until then). Call between
 * steps from one thread (it gathers the tracker's per-thread counts, sw_tracker_state_parts). Returns SW_OK,
 * or SW_ERR_IO ("<path>: cannot write <part>: <cause>") with nothing left but the previous checkpoint. */
sw_status sw_ckpt_save(const char *path, const sw_ckpt_fingerprint *fp, long long step, const sw_ckpt_run *st,
                       sw_error *err);

/* Reads the checkpoint at path into run st, made by the caller as for a fresh run from the same scenario
 * and setup (the forcing already advanced to t = 0), and sets *step to the step it was saved at. Refuses,
 * before changing anything: a missing or unreadable file (SW_ERR_IO), a file that is not a checkpoint of
 * this format (SW_ERR_PARSE, "<path>:LINE: ..."), a fingerprint that differs from fp (SW_ERR_INPUT,
 * naming the item, the checkpoint's value and this run's); then, while reading blocks, a block whose name
 * or size differs from this run's (SW_ERR_INPUT), a short file (SW_ERR_IO) or a hash that does not match
 * (SW_ERR_INPUT). After a failure in the blocks st holds a mixture: free it, do not run it. */
sw_status sw_ckpt_load(const char *path, const sw_ckpt_fingerprint *fp, const sw_ckpt_run *st, long long *step,
                       sw_error *err);

/* ---- the snapshots taken so far, beside the checkpoint ----------------------------------------------- */

typedef struct sw_ckpt_frames sw_ckpt_frames;

/* Opens the frames file at path for snapshots of `cells` values: a new, empty one (keep < 0; an existing
 * file is replaced), or an existing one of which the first `keep` frames are kept and the rest dropped
 * (resuming: keep is the checkpoint's frame count; SW_ERR_INPUT when the file holds fewer). Returns SW_OK
 * with *out (free with sw_ckpt_frames_close), or SW_ERR_IO / SW_ERR_NOMEM with *out NULL. */
sw_status sw_ckpt_frames_open(const char *path, size_t cells, long long keep, sw_ckpt_frames **out, sw_error *err);

/* Frame k (< sw_ckpt_frames_count) into *time_s and frame[cells]. SW_OK or SW_ERR_IO. */
sw_status sw_ckpt_frames_get(sw_ckpt_frames *fr, long long k, double *time_s, double *frame, sw_error *err);

/* Appends a frame (time, s; frame[cells], NaN on land). SW_OK or SW_ERR_IO. */
sw_status sw_ckpt_frames_add(sw_ckpt_frames *fr, double time_s, const double *frame, sw_error *err);

/* Pushes the frames added to the file and its disk, before a checkpoint names their count. SW_OK or SW_ERR_IO. */
sw_status sw_ckpt_frames_sync(sw_ckpt_frames *fr, sw_error *err);

/* Frames in the file. */
long long sw_ckpt_frames_count(const sw_ckpt_frames *fr);

/* Closes the file, and removes it when `remove_file` (the run finished). fr may be NULL. */
void sw_ckpt_frames_close(sw_ckpt_frames *fr, int remove_file);

#endif
