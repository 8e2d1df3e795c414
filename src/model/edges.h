/* edges.h - what happens at the four edges of the domain: the boundary kinds the model accepts.
 *
 * The scenario parser fills these (inputs/scenario.h includes this file); the model and its layouts
 * act on them. Nothing here depends on the parser.
 */
#ifndef SW_EDGES_H
#define SW_EDGES_H

/* Domain edges: a wall reflects (no normal flow); open lets waves leave (radiation condition); level
 * holds the sea surface at mean level on the edge line (a node), as where a bay opens onto a large
 * basin; periodic joins the edge to the opposite one (both must be periodic): what leaves one side
 * enters the other, as in an endless channel. */
typedef enum { SW_EDGE_WALL = 0, SW_EDGE_OPEN = 1, SW_EDGE_LEVEL = 2, SW_EDGE_PERIODIC = 3 } sw_edge_kind;

enum { SW_WEST = 0, SW_EAST = 1, SW_SOUTH = 2, SW_NORTH = 3 };   /* index into edges[4] */

/* "wall", "open", "level", "periodic". */
static inline const char *sw_edge_name(sw_edge_kind e)
{
    return e == SW_EDGE_OPEN ? "open" : e == SW_EDGE_LEVEL ? "level" : e == SW_EDGE_PERIODIC ? "periodic" : "wall";
}

#endif
