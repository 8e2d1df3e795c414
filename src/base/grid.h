/* grid.h - the regular Cartesian grid of cells that every field is defined on.
 *
 * Cell (i, j) has its centre at x = x0_m + (i + 0.5) dx_m, y = y0_m + (j + 0.5) dy_m; i runs east
 * (0 .. nx-1), j runs north (0 .. ny-1). Plain input/output fields are stored row by row,
 * index j * nx + i, with no halo. The model keeps its own padded copies (see model.h).
 */
#ifndef SW_GRID_H
#define SW_GRID_H

#include <stddef.h>

typedef struct {
    size_t nx;      /* number of cells along x (east) */
    size_t ny;      /* number of cells along y (north) */
    double dx_m;    /* cell width along x, m */
    double dy_m;    /* cell height along y, m */
    double x0_m;    /* x of the domain's west edge, m */
    double y0_m;    /* y of the domain's south edge, m */
} sw_grid;

/* x of the centre of column i, m. */
static inline double sw_grid_xc(const sw_grid *g, size_t i) { return g->x0_m + ((double)i + 0.5) * g->dx_m; }
/* y of the centre of row j, m. */
static inline double sw_grid_yc(const sw_grid *g, size_t j) { return g->y0_m + ((double)j + 0.5) * g->dy_m; }
/* Number of cells. */
static inline size_t sw_grid_cells(const sw_grid *g) { return g->nx * g->ny; }

#endif
