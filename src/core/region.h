/*
 * region.h - the convex free region around the robot.
 *
 * The region is {p : a_i . p <= b_i} in the world frame for the robot
 * CENTRE (obstacles are already grown by radius + margin), with |a_i| = 1,
 * no redundant halfspace, and its vertices counter-clockwise. It is built by
 * iterative region inflation (Deits and Tedrake) with three additions: every
 * line keeps the robot centre inside, a goal seed a step toward the waypoint
 * is kept inside when that step is free, and a blind sector of the sensor
 * bounds the region by a line through the robot centre.
 */
#ifndef LC_REGION_H
#define LC_REGION_H

#include <stdbool.h>
#include "alloc.h"
#include "ellipse.h"
#include "geom.h"
#include "polyset.h"
#include "clock.h"
#include "view.h" /* the lines of lc_region_input.blind */

typedef struct lc_region {
    lc_halfspace *h; /* non-redundant, |a| = 1 */
    int nh, cap_h;
    int *h_src;      /* per halfspace: grown obstacle index, or LC_REGION_SRC_* */
    int cap_src;
    lc_vec2 *v;      /* vertices, CCW */
    int nv, cap_v;
    lc_ellipse ellipse;
    int rounds;
    bool has_goal_seed;
    lc_vec2 goal_seed;
    const lc_alloc *alloc; /* the buffers grow through it (alloc.h) */
} lc_region;

/* Init and free as alloc.h says. */
void lc_region_init(lc_region *r, const lc_alloc *alloc);
void lc_region_free(lc_region *r);

#define LC_REGION_SRC_WINDOW (-1)
#define LC_REGION_SRC_BLIND (-2)

typedef struct lc_region_config {
    double window;        /* m, half side of the local window box (0: frame's range_max) */
    double window_max;    /* m, cap on the half side, 10 */
    int max_rounds;       /* inflation rounds, 6 */
    double area_tol;      /* stop when the area grows by less than this fraction, 0.02 */
    double seed_radius;   /* m, most the first ellipse reaches from the seeds (half their clearance), 1.0 */
    double goal_step;     /* m, the goal seed this far toward the waypoint, 1.0 */
    bool blind_line;      /* bound the region by the scanner's blind sector, true */
    double points_fov;    /* rad, field of view of `points` frames (0: judged from the points) */
} lc_region_config;

void lc_region_config_default(lc_region_config *cfg);

#define LC_REGION_MAX_ROUNDS 16

/* What the region is built from. Obstacles are grown, convex, CCW. */
typedef struct lc_region_input {
    const lc_polyset *grown;
    lc_vec2 centre;         /* robot centre, world frame */
    bool has_waypoint;
    lc_vec2 waypoint;       /* world frame */
    bool has_bend;          /* a point where the way to the waypoint turns: the goal seed */
    lc_vec2 bend;           /* when the step toward the waypoint is not free (world frame) */
    double window;          /* m, half side of the window box about the centre */
    int n_blind;            /* lines bounding the blind sector (0..2) */
    lc_halfspace blind[2];
} lc_region_input;

/* lc_region_inflate's one positive outcome (its errors are lc_status). */
enum {
    LC_REGION_TOO_CLOSE = 1, /* centre inside a grown obstacle: those were left out */
};

typedef struct lc_region_info {
    int rounds;
    double area[LC_REGION_MAX_ROUNDS + 1]; /* ellipse area after each round (m^2) */
    int ellipse_iterations;                /* all solves of the frame */
    int fallback_lines;    /* lines that had to be moved to keep a seed inside */
    int too_close;         /* grown obstacles holding the centre (left out) */
    double ellipse_us;     /* solver time, when a clock is given */
} lc_region_info;

/* Scratch reused across frames. */
typedef struct lc_region_ws {
    int *order;  int cap_order; /* obstacles in order of distance */
    int n_order;                 /* how many are in order (this frame's) */
    double *dist; int cap_dist;
    unsigned char *flags; int cap_flags;
    double *box; int cap_box;    /* per obstacle: x0 x1 y0 y1 */
    lc_vec2 *xstar; int cap_xstar; /* per obstacle: nearest point, ellipse frame */
    double *circle; int cap_circle; /* per obstacle: bounding circle x y r */
    double *lower; int cap_lower;  /* per obstacle: lower bound of dist */
    int *heap; int cap_heap;
    lc_halfspace *hs; int cap_hs;
    int *hs_src; int cap_hs_src;
    lc_vec2 *tv; int cap_tv;     /* transformed vertices */
    lc_vec2 *clip_a, *clip_b; int cap_ca, cap_cb;
    int *own_a, *own_b; int cap_oa, cap_ob;
    double *scratch; int cap_scratch;
    double *lambda; int cap_lambda;
    struct lc_region cand;       /* the round being built (the same allocator) */
    const lc_alloc *alloc;       /* the buffers grow through it (alloc.h) */
} lc_region_ws;

/* Init and free as alloc.h says; init gives cand the same allocator. */
void lc_region_ws_init(lc_region_ws *ws, const lc_alloc *alloc);
void lc_region_ws_free(lc_region_ws *ws);

/*
 * Iterative region inflation. Fills out (its buffers grown through its
 * allocator, ws's through ws's) and info (may be NULL). clock may be NULL. Returns LC_OK, LC_REGION_TOO_CLOSE,
 * or LC_ERR_NO_MEMORY, LC_ERR_BAD_INPUT (a non-finite centre, a window not
 * above 0), LC_ERR_DEGENERATE (no region of positive area holds the centre).
 */
int lc_region_inflate(const lc_region_input *in, const lc_region_config *cfg,
                      const lc_ellipse_opts *eopts, lc_region_ws *ws, lc_region *out,
                      lc_region_info *info, const lc_clock *clock);

/* True when p satisfies every halfspace within eps metres. */
bool lc_region_contains(const lc_region *r, lc_vec2 p, double eps);

/* Signed distance of p to the region boundary: positive inside (min slack). */
double lc_region_margin(const lc_region *r, lc_vec2 p);

/*
 * Distance from p (inside) along the unit direction dir until the region is
 * left; 0 when p is outside or on the boundary moving outward.
 */
double lc_region_ray_exit(const lc_region *r, lc_vec2 p, lc_vec2 dir);

/* The closest point of the region to p (p itself when inside). */
lc_vec2 lc_region_project(const lc_region *r, lc_vec2 p);

#endif
