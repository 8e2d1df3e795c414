/* report.h - what a person reads: the plan of a run, its summary table, and their JSON twins. */
#ifndef SW_REPORT_H
#define SW_REPORT_H

#include <stddef.h>
#include <stdio.h>

#include "studies/estimate.h"
#include "run/run.h"
#include "inputs/scenario.h"
#include "run/setup.h"

/* Formats a duration in seconds as "1 h 02 min 03 s", "12 min 30 s" or "42.5 s"; "-" for NaN. */
void sw_format_duration(double s, char *buf, size_t n);

/* Prints the plan of a run (grid: its kind, and on a geographic grid its extent in degrees; the land the
 * seabed file marked by missing values or a mask when the scenario reads them; layout, dt and Courant
 * number against the limit, and on a geographic grid the row, latitude and narrowest cell width where the
 * limit is reached; the terms, with
 * forcing a `Forcing` line naming the storm, weather file or level series (and the storm's warning when
 * its centre never enters the domain, from s->storm), with [fault] sections a `Faults` line (sections,
 * segments, the total seismic moment and Mw, and on a second line when the rupture ends and the faults' peak
 * uplift and subsidence over water, of the initial surface or of the whole rupture: s->fault), `Source` lines
 * (s->source: the peak uplift and subsidence over water and where, the extent above SW_SOURCE_EXTENT_SHARE of
 * the peak, the displaced volume and its raised and lowered parts, of the final static surface when a rupture
 * goes on in time, or "no initial displacement"; a warning per source that loses more than
 * SW_SOURCE_WARN_LOST of its volume on land or outside the grid), steps, gauge samples and snapshots (as
 * many as the files will hold), memory
 * (the forcing's or the rupture in time's share named), gauges
 * with their depth and warnings). With a rate (NULL or cells_per_s <= 0 = unknown: no
 * estimate), one line gives the estimated time, cells x steps / rate, with the rate and where it
 * came from (cache and its age, or measured now and whether the cache was written). */
void sw_report_plan(FILE *f, const sw_scenario *sc, const sw_setup *s, const sw_rate_info *rate);

/* The plan as a JSON object (string owned by the caller, free()). NULL when out of memory. Its "grid" has
 * "kind" ("projected" or "geographic"; geographic grids add "radius_m", "dx_deg", "dy_deg", "lon_west_deg",
 * "lon_east_deg", "lat_south_deg", "lat_north_deg"); "land_from_file" is null or has "missing_cells" and
 * "mask_cells"; "dt_limit" has "dt_s", "row", "latitude_deg" (null on a projected grid) and "cell_width_m";
 * a gauge on a geographic grid adds "lon_deg" and "lat_deg". It has
 * "forcing": null without forcing, else an object with "description" (the plan's line), "storm" (its
 * settings, "outside_domain", "closest_approach_m", "closest_approach_s"; null without a storm),
 * "weather_file", "level_series" (null when absent), the drag and densities, "memory_bytes" and
 * "warnings" (strings). It has "faults": null without [fault], else "sections", "segments", "kajiura_segments",
 * "horizontal_segments", "moment_nm", "magnitude_mw", "rupture_end_s", "peaks_of" ("initial surface" or
 * "whole rupture"), "uplift_max_m", "subsidence_max_m" (<= 0) and "memory_bytes" (a rupture in time's
 * share of the run's memory). It has "source" (docs/scenario.md, "What check says about the source"):
 * "surface", "displaced", "final_surface", "uplift_max_m", "subsidence_max_m", "uplift_at" and
 * "subsidence_at" (x_m, y_m, and lon_deg, lat_deg on a geographic grid; null when none), "extent_threshold_m",
 * "extent_area_m2", "extent_box" (null without displacement), "volume_m3", "volume_raised_m3",
 * "volume_lowered_m3", "sources" (per source "name", "asked_over_plane", "asked_m3", "on_grid_m3",
 * "in_water_m3", "lost_fraction") and "warnings"; and "gauge_samples" and "snapshots", the lengths of the
 * time axes of gauges.nc and snapshots.nc. With a rate it has "estimated_seconds", "rate_cells_per_s", "rate_source" ("cache" or "measured"),
 * "rate_age_days", "rate_threads", "rate_cache_file" (null when none) and "rate_note" (null when none).
 * It always has "caution": the scenario's caution (sw_caution_for, run.h), and "warnings": strings for a
 * scenario where nothing moves the water and for one without gauges (the text plan prints them too). */
char *sw_report_plan_json(const sw_scenario *sc, const sw_setup *s, const sw_rate_info *rate);

/* Prints the end-of-run summary: the forcing and the highest wind and lowest air pressure over the
 * water when there was an atmosphere, a table per gauge, the files written and the caution
 * (sw_caution_for: the surge caution when the scenario has forcing). */
void sw_report_run(FILE *f, const sw_scenario *sc, const sw_setup *s, const sw_run_result *r);

/* The summary as a JSON object (string owned by the caller, free()). NULL when out of memory. Its
 * "run" has "forcing" (the run's line or null), "wind_max_ms", "air_pressure_min_pa" and
 * "air_pressure_min_hpa" (null without an atmosphere); "caution" is sw_caution_for(sc). */
char *sw_report_run_json(const sw_scenario *sc, const sw_setup *s, const sw_run_result *r);

#endif
