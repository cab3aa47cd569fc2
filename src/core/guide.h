/*
 * guide.h - guidance: a path through the remembered space from the robot
 * to its waypoint, for the robot's size.
 *
 * The region (region.h) is convex and local: in a cul-de-sac, behind a
 * wall with an offset doorway, at the closed end of a corridor, the point
 * of the region nearest the waypoint lies in a pocket and the robot stops
 * there. Guidance looks further: an A* search (Hart, Nilsson and Raphael
 * 1968) over a grid of `cell`-metre cells laid on the memory's window
 * (memory.h), 8-connected, octile heuristic (admissible: no step costs less
 * than its length), the heuristic weighted by `greed` (weighted A*, Pohl
 * 1970: through unknown space, which costs several times its length, plain
 * A* would open most of the window):
 *   - a cell whose centre lies nearer a remembered return than the
 *     clearance (radius + margin) less half a search cell is closed (a
 *     passage just wide enough may hold no cell centre a full clearance
 *     from both sides: the search errs on the open side, and the region,
 *     which keeps the exact clearance, decides whether the robot passes);
 *     within 5 cm more of the clearance a step costs 8 times its length
 *     (such a gap holds the robot on a needle of a region);
 *   - a step costs its length, times `soft_cost` within `soft` metres more
 *     of an obstacle (the path keeps off walls where it can), times
 *     `unknown_cost` through space the memory does not know (never seen, or
 *     forgotten), so that the robot goes to look rather than through the
 *     unknown when a known way is not much longer;
 *   - a waypoint outside the window is a goal node of its own, reached
 *     from the window's border cells at the unknown-space cost of the
 *     straight line on: the path leaves the window where the rest of the
 *     way looks cheapest.
 * The path found is shortened where the straight line is free (line of
 * sight in steps of a memory cell), its vertices near returns moved to
 * the middle of their gap, and kept as a polyline in the world frame.
 *
 * Cadence (never a clock, so a replay plans exactly as the live run did):
 * a periodic search once `every` frames have passed and the robot has
 * moved `travel` metres since the last one (or 10 x `every` frames have
 * passed: a robot that stays put), so the cost follows the robot's motion,
 * not the frame rate; and at once when the goal changes, when there is no
 * path yet, when a stretch was refused, or when the memory now holds an
 * obstacle within the clearance of the path ahead (checked every frame
 * along the first `check_ahead` metres). Steadiness: a new path replaces the one being
 * followed only when the old one is blocked or the new one costs less than
 * (1 - hysteresis) times what the rest of the old one costs now, so the
 * robot does not flip between two ways round an obstacle of nearly equal
 * cost.
 *
 * No path (the waypoint enclosed, inside an obstacle, or every way closed
 * within the window) is an answer of its own: LC_GUIDE_NO_PATH. Before it
 * is given, the search is run again with the robot's whole clearance
 * passable round the start (a robot in a gap, range noise on the cells
 * beside it, can make its own cells read closed), and where a path was
 * being followed the next search, `every` frames on, must agree (the old
 * path is kept meanwhile). A way the robot cannot follow can be refused
 * (lc_guide_refuse); the searches then look for another, and take the
 * refused way again rather than none when the refusals close every way.
 *
 * Ownership: lc_guide_new allocates the search grid once through the given
 * allocator (kept in the struct); nothing is allocated per frame.
 */
#ifndef LC_GUIDE_H
#define LC_GUIDE_H

#include <stdbool.h>

#include "alloc.h"
#include "geom.h"
#include "memory.h"

typedef struct lc_guide_config {
    bool enabled;        /* search for paths at all (default true; needs memory) */
    double cell;         /* m, search cell (default 0.1) */
    int every;           /* frames at least between periodic searches (default 10) */
    double travel;       /* m the robot moves between periodic searches (default 0.5);
                            a robot that stays put searches every 10 x `every` frames */
    double unknown_cost; /* cost factor through unknown space (default 2) */
    double soft;         /* m beyond the clearance where steps cost more (default 0.6) */
    double soft_cost;    /* that factor (default 2) */
    double hysteresis;   /* share a new path must save to replace the old (default 0.15) */
    double check_ahead;  /* m of the path checked for new obstacles every frame (default 3) */
    double stall;        /* s without progress along a path before its next stretch is
                            refused and another way sought (default 4; 0: never) */
    double greed;        /* weight of the heuristic (weighted A*, Pohl 1970): a path
                            found costs at most this times the least (default 2) */
    double blind_cost;   /* further factor through unknown space entered in a direction
                            the robot cannot look (lc_guide_set_sight; default 25) */
    int slice;           /* cells a search expands at most per frame, the rest on the
                            frames after (its path then comes later; a new waypoint's
                            first search runs whole); 0: every search whole in the frame
                            that starts it (default 0; the session's 100) */
} lc_guide_config;

void lc_guide_config_default(lc_guide_config *cfg);

/* 0 when cfg is usable, else -1 with the offending field in *field. */
int lc_guide_config_check(const lc_guide_config *cfg, const char **field);

#define LC_GUIDE_PATH_MAX 256 /* polyline vertices kept */

typedef enum lc_guide_status {
    LC_GUIDE_NONE = 0,    /* nothing asked yet */
    LC_GUIDE_PATH = 1,    /* a path to the goal */
    LC_GUIDE_NO_PATH = 2, /* no way to the goal within the window */
} lc_guide_status;

typedef struct lc_guide_path {
    lc_guide_status status;
    lc_vec2 v[LC_GUIDE_PATH_MAX]; /* world frame, v[0] the robot when found */
    int n;
    double length;  /* m, along v */
    double cost;    /* the search's cost of it */
    lc_vec2 goal;   /* the waypoint it leads to (a path that goes round the window's
                       edge ends short of it, where it leaves the window) */
    bool projected; /* the path leaves the window: the waypoint lies outside it, or
                       no way to it lies within it (round the edge) */
    long found_at;  /* frame count of the search that found it */
    int seg;        /* the robot was last nearest segment [v[seg], v[seg + 1]] */
} lc_guide_path;

typedef struct lc_guide lc_guide;

/* NULL when a config is unusable or out of memory. NULL alloc: default. */
lc_guide *lc_guide_new(const lc_guide_config *cfg, const lc_memory_config *mem_cfg,
                       const lc_alloc *alloc);
void lc_guide_free(lc_guide *g);

/* Forget the path and the refused spots (a new route, a new robot
 * description). */
void lc_guide_reset(lc_guide *g);

/*
 * The robot could not follow the path past `at` (a gap the search took to
 * be wide enough, by the memory's cells, that the region does not pass):
 * the cells within `radius` of it are closed to the searches until the goal
 * changes (at most LC_GUIDE_REFUSED of them, the oldest forgotten first),
 * and the next update searches again.
 */
#define LC_GUIDE_REFUSED 16
void lc_guide_refuse(lc_guide *g, lc_vec2 at, double radius);

/*
 * Where a path the robot cannot follow is in doubt: along path p from the
 * point `from` metres past the robot's nearest point (robot c) up to
 * `upto` metres past it, the first point (in steps of a memory cell) that
 * the memory does not know or that lies within the tight band of the
 * clearance (clearance + 5 cm) of a remembered return: a shadow a wall
 * was not seen in, a gap the cells make look wide enough. A stalled robot
 * refuses that spot rather than the first one past its region, which may
 * be a passage that is wide enough (the way the robot needs next). True
 * with *at; false when the path is known and roomy that far.
 */
bool lc_guide_doubt_ahead(const lc_guide *g, const lc_memory *m, const lc_guide_path *p,
                          lc_vec2 c, double from, double upto, double clearance, lc_vec2 *at);

/*
 * Where the robot can look, world frame: directions within half[i] of
 * mid[i] for some i. A robot that turns to face its way (the unicycle)
 * looks everywhere it goes; one that never turns (the point model, its
 * sensors fixed on the body) sees unknown space only in its sensors' views,
 * and unknown space it would come near in another direction (within the
 * region's horizon of where it would stand, recall.h lc_recall_near) is
 * space it cannot see before it gets there: the region stops it short of
 * what it has not seen. Such steps cost blind_cost times more, and a
 * shortcut through unknown space in such a direction is not taken, so that
 * the path comes at the unknown from a side the robot looks toward (a
 * waypoint behind a robot that never turns is approached from where it
 * comes into view). NULL or n == 0: everywhere (the default). Kept until
 * set again.
 */
#define LC_GUIDE_SIGHTS 8
typedef struct lc_guide_sight {
    int n;
    double mid[LC_GUIDE_SIGHTS], half[LC_GUIDE_SIGHTS]; /* rad */
} lc_guide_sight;

void lc_guide_set_sight(lc_guide *g, const lc_guide_sight *sight);

/* What the last lc_guide_update did (for the bench and the viewer). */
typedef struct lc_guide_info {
    bool searched;      /* a search ended this frame */
    bool searching;     /* a search is under way (sliced: it goes on next frame) */
    bool replaced;      /* and its path replaced the one followed */
    bool blocked_ahead; /* the path ahead was found closed */
    int expanded;       /* cells the search expanded this frame */
    long searches;      /* searches so far */
} lc_guide_info;

/*
 * One frame: keep, check or search the path from `robot` to `waypoint`
 * through memory m for a robot of the given clearance (m, radius + margin).
 * tolerance (m): the goal counts as reached within it (the route's). The
 * path (valid until the next call) is *out. Returns 0, or -1 when out of
 * memory (the path is then the one before).
 */
int lc_guide_update(lc_guide *g, const lc_memory *m, lc_vec2 robot, lc_vec2 waypoint,
                    double clearance, double tolerance, const lc_guide_path **out,
                    lc_guide_info *info);

#endif
