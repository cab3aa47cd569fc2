/*
 * memory.h - what a robot has seen lately: a rolling occupancy grid in the
 * world frame that moves with the robot (occupancy grid mapping, Moravec and
 * Elfes 1985, Elfes 1989), fed by every frame of every sensor.
 *
 * The window is a square of side about `size` metres, cells of `cell`
 * metres on a lattice anchored at the world origin (cell (i, j) covers
 * [i c, (i+1) c) x [j c, (j+1) c)), stored as a torus so that moving the
 * window copies nothing: centred on the robot at first, and when the robot
 * is more than a quarter of the side from the window's centre along an
 * axis, moved along it by as little as brings it back to a quarter side,
 * the cells that come in cleared. A robot driving on keeps a quarter side
 * ahead of it and three quarters behind (15 m of a 20 m window: a route
 * that doubles back finds what it passed). Its size is fixed at creation:
 * no allocation per frame.
 *
 * Evidence per cell, from each frame (docs/DESIGN.md, "Memory"):
 *   - free: the cell's centre lies inside the frame's view polygon, the
 *     star polygon from the sensor through every beam's end pulled back by
 *     1.5 cells (a beam with no return ends at min(far, reach)), cut at
 *     `reach` metres: the space the rays crossed, exactly, by cell centre
 *     (scan-line fill of the polygon instead of a traversal per ray: the
 *     same cells up to the polygon's interpolation between neighbouring
 *     beams, at a fraction of the cost);
 *   - occupied: a kept return (ingest.h) lies in the cell; the cell keeps
 *     where its last return fell (to 1/256 of the cell), so that what is
 *     remembered stands where it was seen, not at the cell's centre;
 *   - the robot's own disc is free (it stands there).
 * A return sets the cell occupied for `clear_frames` see-throughs: each
 * frame whose view polygon holds the cell's centre takes one away, so a
 * cart that was moved away is cleared `clear_frames` frames after a sensor
 * first sees through where it stood. Evidence ages: an occupied cell
 * nobody re-sees is forgotten `hold_occupied` s after its last return,
 * remembered free space `hold_free` s after it was last seen. Time is the
 * frames' stamps, never a clock; the same frames give the same memory bit
 * for bit (replay stays exact). A stamp that goes back by more than a
 * second (another sensor's older frame is fine), or jumps forward by more
 * than LC_MEMORY_JUMP s, clears the memory (a restarted clock).
 *
 * Ownership: lc_memory_new allocates everything once through the given
 * allocator, kept in the struct; lc_memory_free releases it.
 */
#ifndef LC_MEMORY_H
#define LC_MEMORY_H

#include <stdbool.h>
#include <stdint.h>

#include "alloc.h"
#include "frame.h"
#include "geom.h"
#include "ingest.h"

typedef struct lc_memory_config {
    bool enabled;         /* remember at all (default true) */
    double cell;          /* m, side of a cell (default 0.05) */
    double size;          /* m, side of the window (default 20) */
    double reach;         /* m, free space is marked up to this far from a sensor (default 6) */
    double hold_occupied; /* s, an occupied cell nobody re-sees is forgotten after this (30) */
    double hold_free;     /* s, remembered free space is forgotten after this (90: a robot
                             drives back through space it saw on its way out) */
    int clear_frames;     /* see-throughs that clear an occupied cell (default 2) */
} lc_memory_config;

/* Bounds the configuration must keep (lc_memory_config_check). */
#define LC_MEMORY_CELL_MIN 0.02
#define LC_MEMORY_CELL_MAX 0.5
#define LC_MEMORY_CELLS_MAX 1024 /* cells along a side */
#define LC_MEMORY_HOLD_MAX 300.0 /* s */
#define LC_MEMORY_JUMP 300.0     /* s, a larger stamp jump clears the memory */

void lc_memory_config_default(lc_memory_config *cfg);

/* 0 when cfg is usable, else -1 with the offending field's name in *field. */
int lc_memory_config_check(const lc_memory_config *cfg, const char **field);

/* Cells along a side for cfg (the window is this many cells square). */
int lc_memory_side(const lc_memory_config *cfg);

/* Bytes a memory of cfg holds in its grid (7 a cell; the scan-line scratch
 * grows with the frames besides). */
size_t lc_memory_grid_bytes(const lc_memory_config *cfg);

typedef struct lc_memory lc_memory;

/* NULL when cfg is not usable or out of memory. NULL alloc: the default. */
lc_memory *lc_memory_new(const lc_memory_config *cfg, const lc_alloc *alloc);
void lc_memory_free(lc_memory *m);

/* Forget everything (the window stays where it is). */
void lc_memory_clear(lc_memory *m);

/*
 * One frame: f as received (the beams, including those without a return)
 * and cloud, its kept points from lc_ingest; body_radius the robot's own
 * disc about the pose (m). Returns 0, or -1 when out of memory (the
 * scan-line scratch; the memory is then as before the call).
 */
int lc_memory_update(lc_memory *m, const lc_frame *f, const lc_cloud *cloud,
                     double body_radius);

/*
 * A polygon footprint's body after lc_memory_update (given body_radius 0):
 * the cells whose centres lie in the convex CCW polygon body[0..n) (world
 * frame, the footprint at the frame's pose) are free, seen now. Like the
 * disc's, only cells whose centre the body covers: never a cell that may
 * hold something else.
 */
void lc_memory_mark_body(lc_memory *m, const lc_vec2 *body, int n);

/*
 * After lc_memory_update: the occupied cells whose centres lie within
 * radius of centre are not forgotten while they stay that near (their age
 * starts again from one tick before now; not "seen now", and a sensor
 * that sees through them still clears them). For a robot whose body
 * swings as it turns (a polygon footprint): what lies beside it out of
 * every sensor's view stays an obstacle however long it stands there,
 * rather than turning into unknown space its body's turn does not check.
 * Remembering longer is the safe side. Cells outside the window are left.
 */
void lc_memory_keep_near(lc_memory *m, lc_vec2 centre, double radius);

/* What the memory says of a cell. */
typedef enum lc_cell_state {
    LC_CELL_UNKNOWN = 0, /* never seen, forgotten, or outside the window */
    LC_CELL_FREE = 1,    /* seen free within hold_free */
    LC_CELL_OCCUPIED = 2,
} lc_cell_state;

/* The state of the cell holding the world point p. */
lc_cell_state lc_memory_state(const lc_memory *m, lc_vec2 p);

/* The state of lattice cell (i, j) (world index, see above). */
lc_cell_state lc_memory_cell(const lc_memory *m, long i, long j);

/* True when the last update touched cell (i, j): inside that frame's view
 * polygon, or holding one of its returns, or under the body. */
bool lc_memory_touched_now(const lc_memory *m, long i, long j);

/* The window: lattice cells [i0, i0 + n) x [j0, j0 + n), cell side c (m). */
typedef struct lc_memory_window {
    long i0, j0;
    int n;
    double cell;
} lc_memory_window;

lc_memory_window lc_memory_get_window(const lc_memory *m);

/* The lattice cell of a world point. */
void lc_memory_cell_of(const lc_memory *m, lc_vec2 p, long *i, long *j);

/* The centre of lattice cell (i, j), world frame. */
lc_vec2 lc_memory_cell_centre(const lc_memory *m, long i, long j);

/* Cone of directions from apex: `width` radians counter-clockwise from
 * the world direction `from` (width >= 2 pi: every direction). */
typedef struct lc_cone {
    lc_vec2 apex;
    double from, width; /* rad */
} lc_cone;

/* True when the direction of p from the cone's apex lies in the cone. */
bool lc_cone_holds(const lc_cone *cone, lc_vec2 p);


/*
 * March from `from` along the unit direction dir through every cell the
 * ray crosses (Amanatides and Woo's traversal), up to `max` metres: the
 * distance at which the ray enters the first cell that is not known free
 * (cells the ray crosses within `body` of `from` count as free); its state
 * goes to *state, and to *cell where its last return fell (occupied) or
 * its centre (unknown). INFINITY (and *state LC_CELL_FREE) when every cell
 * up to max is known free; 0 (unknown, at `from`) for a memory that has
 * taken no frame.
 */
double lc_memory_march(const lc_memory *m, lc_vec2 from, lc_vec2 dir, double max, double body,
                       lc_cell_state *state, lc_vec2 *cell);

/*
 * The distance from p to the nearest occupied cell's last return within
 * `radius` metres of p (to a cell's side of p, and farther, it may miss);
 * INFINITY when there is none. Occupied here means evidence
 * not yet swept away: a cell whose hold ran out counts until the ageing
 * sweep (SWEEP_ROWS rows an update) reaches it. Cheap: a box of bytes,
 * eight at a time.
 */
double lc_memory_nearest(const lc_memory *m, lc_vec2 p, double radius);

/*
 * Calls fn(data, p) for the last return p of every occupied cell of the
 * window (evidence not yet swept away, as lc_memory_nearest), row by row.
 * Returns the first non-zero value fn returns (and stops), else 0.
 */
int lc_memory_each_occupied(const lc_memory *m, int (*fn)(void *data, lc_vec2 p), void *data);

/*
 * The same for the occupied cells of the window that meet the box [lo, hi]
 * (a cell on its edge too: fn gets returns up to a cell outside the box,
 * and picks those it wants), row by row.
 */
int lc_memory_each_occupied_in(const lc_memory *m, lc_vec2 lo, lc_vec2 hi,
                               int (*fn)(void *data, lc_vec2 p), void *data);

/* Counts for tests, the bench and the viewer. */
typedef struct lc_memory_stats {
    long occupied, free, unknown; /* cells of the window in each state */
    size_t bytes;                 /* everything the memory holds now */
    long updates, clears;         /* frames taken; full clears (stamp jumps) */
} lc_memory_stats;

void lc_memory_get_stats(const lc_memory *m, lc_memory_stats *out);

#endif
