/*
 * recall.h - what the memory adds to one frame's plan.
 *
 * The current frame shows what its sensor sees now; the memory (memory.h)
 * knows what every sensor saw lately. Where the frame's sensor does not
 * look (its blind cone, the directions outside its field of view), the
 * memory is read like a scan: a fan of rays from the robot centre, one
 * every LC_RECALL_RAY_STEP radians, each marching through the cells
 * (memory.h, lc_memory_march) to the first one that is not known free.
 * That cell is
 *   - occupied: a remembered obstacle (a box passed a moment ago, what a
 *     rear scanner saw), or
 *   - unknown: the frontier of what the robot knows ("space neither seen
 *     now nor remembered free is not free"),
 * and its centre becomes a point of the memory's scan (range and bearing
 * from the centre, in ray order), to be cut into pieces and grown like the
 * frame's own points (a caller grows them by half a cell's diagonal more:
 * a cell is a square, not its centre). A ray that finds its first unknown
 * cell nearer than `near` metres does not count as known: the blind cone
 * that stays is the one from the first such ray to the last, and the
 * region's blind lines are drawn for it (the rays where the memory knows
 * the space near the robot widen the view). What lies behind the first
 * cell along a ray is left out, as a frame leaves out what its nearer
 * returns hide.
 *
 * Ownership: the clouds' buffers grow through the allocator given to
 * lc_recall_init and are reused (no allocation once warm); lc_recall_free
 * releases them.
 */
#ifndef LC_RECALL_H
#define LC_RECALL_H

#include "alloc.h"
#include "ingest.h"
#include "memory.h"

#define LC_RECALL_RAY_STEP (LC_PI / 90.0) /* 2 degrees */

typedef struct lc_recall_input {
    const lc_memory *mem;
    lc_vec2 centre;   /* robot centre, world frame */
    double body;      /* m, the robot's own disc (always free) */
    double fov;       /* rad, the current frame's view (2 pi: all round) */
    double view_mid;  /* rad, world direction of the middle of that view */
    double reach;     /* m, how far the rays go */
    double near;      /* m, a ray counts as known when its first unknown cell is
                         at least this far from the centre */
} lc_recall_input;

typedef struct lc_recall {
    lc_cloud occupied;  /* remembered obstacle cells, in ray order */
    lc_cloud frontier;  /* first unknown cells of the known rays, in ray order */
    double fov;         /* rad, the view with memory (>= the frame's) */
    double view_mid;    /* rad, its middle, world frame */
    int rays, rays_known;
} lc_recall;

/* An empty recall whose buffers grow through alloc (NULL: the default). */
void lc_recall_init(lc_recall *r, const lc_alloc *alloc);

/*
 * The `near` of a robot whose clearance (radius + margin) is clearance, on
 * memory cells of side cell: 1.05 clearance plus two cells, so that the
 * frontier cells past it, grown by the clearance and half a cell's
 * diagonal, leave the robot centre out. Guidance (guide.c) reads the
 * robot's surroundings out to the same horizon.
 */
static inline double lc_recall_near(double clearance, double cell)
{
    return 1.05 * clearance + 2.0 * cell;
}

/* Fills out; 0, or -1 when out of memory. */
int lc_recall_collect(const lc_recall_input *in, lc_recall *out);

void lc_recall_free(lc_recall *r);

#endif
