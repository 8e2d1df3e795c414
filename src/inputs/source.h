/* source.h - the initial sea-surface displacement at cell centres, summed over the scenario's sources.
 */
#ifndef SW_SOURCE_H
#define SW_SOURCE_H

#include "base/status.h"
#include "inputs/faults.h"
#include "inputs/scenario.h"

/* The largest |scale x displacement| a source file may give, m: the limit of an analytic source's
 * amplitude ([source] amplitude, scenario_keys.c). */
#define SW_SOURCE_FILE_MAX_M 100.0

/* Fills eta0_m[j * nx + i] (caller allocates nx*ny doubles) with the sum of all sources in
 * sc->sources, evaluated at cell centres of sc->grid (metres above mean sea level); on a geographic grid
 * the shapes' lengths are true distances on the sphere about each centre (source.c). File
 * sources are interpolated bilinearly, times their scale and moved by their offsets; cells outside the
 * file's extent get 0. NaN/Inf in a file, or |scale x value| above SW_SOURCE_FILE_MAX_M,
 * is an error naming the variable and the first bad index. Then the sea surface of the instant fault
 * segments (start 0, rise 0: sw_faults_surface with SW_FAULTS_INSTANT) is added: `faults` is the
 * scenario's set (sw_faults_collect; sc's positions placed), or NULL to collect it here from sc;
 * depth_m ([ny * nx], m, positive down; cells below min_depth_m are land) is needed when a fault uses
 * the Kajiura filter or the horizontal term, and may be NULL otherwise. When faults_eta_m is not NULL
 * ([ny * nx], m) it receives the instant faults' sea surface alone (0 without faults). The model zeroes
 * land cells itself. Returns SW_OK or the failure (a file, a fault table, memory) with err naming the
 * scenario line or the file and line. */
sw_status sw_source_build(const sw_scenario *sc, const sw_fault_set *faults, const double *depth_m,
                          double min_depth_m, double *eta0_m, double *faults_eta_m, sw_error *err);

/* One source's displaced volume (the integral of |eta| over area): what it asks for against what lies on
 * the grid and what the model keeps in the water (it zeroes land cells). */
typedef struct {
    char name[SW_NAME_MAX];   /* the source's name ([source NAME]), or "faults" for the fault segments */
    int line;                 /* its scenario line (0 for the faults) */
    int asked_known;          /* 1: asked_m3 is the shape's volume over the whole plane (analytic shapes);
                               * 0: only the grid's part is known (file sources, faults): asked_m3 = grid_m3 */
    double asked_m3;          /* the displaced volume the source asks for, m^3 */
    double grid_m3;           /* of it, on the grid's cells, land included (before land is masked), m^3 */
    double water_m3;          /* of it, on the water cells (depth >= min_depth): what the model keeps, m^3 */
} sw_source_budget;

/* Each source of sc alone, laid on sc->grid as sw_source_build lays it, and its displaced volume asked,
 * on the grid and in the water (cells of depth_m, [ny * nx] m positive down, at least min_depth_m deep),
 * a cell weighing dx dy cos(latitude) (docs/geographic.md). Analytic shapes ask for their volume over
 * the whole plane (source.c, source_asked); file sources only for what reaches the grid. When
 * faults_eta_m is not NULL ([ny * nx], m: the faults' sea surface) one more entry, "faults", follows.
 * out holds at least SW_MAX_SOURCES + 1 entries; *n_out receives how many were filled. Evaluates every
 * source once more (a source file is read again). Returns SW_OK or the failure (a file, memory) with err
 * naming the scenario line or file; *n_out then counts the entries filled before it. */
sw_status sw_source_budgets(const sw_scenario *sc, const double *depth_m, double min_depth_m,
                            const double *faults_eta_m, sw_source_budget *out, size_t *n_out, sw_error *err);

/* The share of b's asked volume the water does not keep, 0 .. 1: 1 - water_m3 / asked_m3 (0 when the
 * source asks for nothing). */
double sw_source_lost_fraction(const sw_source_budget *b);

#endif
