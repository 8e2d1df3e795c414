/* grid.h - the regular grid of cells that every field is defined on: projected (metres) or geographic
 * (longitude and latitude on a sphere).
 *
 * Cell (i, j) has its centre at x = x0_m + (i + 0.5) dx_m, y = y0_m + (j + 0.5) dy_m; i runs east
 * (0 .. nx-1), j runs north (0 .. ny-1). Plain input/output fields are stored row by row,
 * index j * nx + i, with no halo. The model keeps its own padded copies (see model.h).
 *
 * On a geographic grid x and y are still metres, but arc lengths on the sphere's equator and
 * meridian: x = R lambda, y = R phi (lambda, phi the longitude and latitude in radians, R = radius_m),
 * so that every position, spacing and offset keeps its one unit. A cell's true width is then
 * dx_m cos(phi): the model's metric factors (model.h) carry cos(phi); positions read or written in
 * degrees convert with sw_grid_deg / sw_grid_to_deg.
 */
#ifndef SW_GRID_H
#define SW_GRID_H

#include <math.h>
#include <stddef.h>

typedef enum {
    SW_GRID_PROJECTED = 0,  /* x, y in metres on a plane (the zero default) */
    SW_GRID_GEOGRAPHIC = 1  /* x = R lambda, y = R phi on a sphere of radius radius_m */
} sw_grid_kind;

#define SW_EARTH_RADIUS_M 6371000.0   /* the mean Earth radius (IUGG; docs/references.md), the default R */
#define SW_GRID_POLE_LIMIT_DEG 89.0   /* a geographic grid's halo rows must stay within this latitude */

typedef struct {
    size_t nx;      /* number of cells along x (east) */
    size_t ny;      /* number of cells along y (north) */
    double dx_m;    /* cell width along x, m (geographic: R dlambda, the width on the equator) */
    double dy_m;    /* cell height along y, m (geographic: R dphi) */
    double x0_m;    /* x of the domain's west edge, m (geographic: R lambda_west) */
    double y0_m;    /* y of the domain's south edge, m (geographic: R phi_south) */
    sw_grid_kind kind; /* projected (0) or geographic */
    double radius_m;/* geographic: the sphere's radius R, m (> 0); unused on projected grids */
} sw_grid;

/* x of the centre of column i, m. */
static inline double sw_grid_xc(const sw_grid *g, size_t i) { return g->x0_m + ((double)i + 0.5) * g->dx_m; }
/* y of the centre of row j, m. */
static inline double sw_grid_yc(const sw_grid *g, size_t j) { return g->y0_m + ((double)j + 0.5) * g->dy_m; }
/* Number of cells. */
static inline size_t sw_grid_cells(const sw_grid *g) { return g->nx * g->ny; }

/* 1 on a geographic grid. */
static inline int sw_grid_geographic(const sw_grid *g) { return g->kind == SW_GRID_GEOGRAPHIC; }

/* Metres of model coordinate per degree: R pi / 180 on a geographic grid; 0 on a projected one. */
static inline double sw_grid_m_per_deg(const sw_grid *g)
{
    return sw_grid_geographic(g) ? g->radius_m * (3.14159265358979323846 / 180.0) : 0.0;
}

/* A longitude or latitude (deg) as a model coordinate (m), and back. Geographic grids only. */
static inline double sw_grid_deg(const sw_grid *g, double deg) { return deg * sw_grid_m_per_deg(g); }
static inline double sw_grid_to_deg(const sw_grid *g, double m) { return m / sw_grid_m_per_deg(g); }

/* cos(latitude) at model y (m): the factor that turns an x extent into a true length; 1 on a projected
 * grid. */
static inline double sw_grid_cos_lat(const sw_grid *g, double y_m)
{
    return sw_grid_geographic(g) ? cos(y_m / g->radius_m) : 1.0;
}

/* The smallest cos(latitude) over the domain (its edge line farthest from the equator): the narrowest
 * true cell is dx_m times this. 1 on a projected grid. */
static inline double sw_grid_cos_min(const sw_grid *g)
{
    return fmin(sw_grid_cos_lat(g, g->y0_m), sw_grid_cos_lat(g, g->y0_m + (double)g->ny * g->dy_m));
}

#endif
