/*
 * guide_scene.h - the scenes the guidance tests search (tests/core/
 * test_guide.c, test_guide_steady.c): a simulated site (src/testbed/
 * world.h), the memory a robot builds of it from full-turn scans without
 * noise (lc_ingest, lc_memory_update), a guide, and measures of the paths
 * found. Only tests use it; every call asserts its own success.
 *
 * Memories here: cells of 0.05 m, a window of 16 m (moved once the robot
 * is 4 m off its centre, by as little as brings it back), reach 20 m,
 * nothing forgotten within 300 s.
 */
#ifndef LC_GUIDE_SCENE_H
#define LC_GUIDE_SCENE_H

#include <stdbool.h>

#include "guide.h"
#include "memory.h"
#include "world.h"

#define SCENE_CLEAR 0.35 /* m, the robot's clearance (radius + margin) */

void scene_memory_config(lc_memory_config *mc);
lc_memory *scene_new_memory(void);

/* A guide of gc for the memories above (NULL alloc: the default). */
lc_guide *scene_new_guide(const lc_guide_config *gc, const lc_alloc *alloc);

/* A full-turn scan of w from `at` into m, stamped `stamp`; beams without
 * a return mark free space out to range_max. */
void scene_see(lc_memory *m, const lc_world *w, lc_vec2 at, double stamp, double range_max);

/* A memory of w seen from each of the n places, out to 12 m (the first
 * place puts the window: keep the others within 4 m of it). */
lc_memory *scene_memory_of(const lc_world *w, const lc_vec2 *from, int n);

void scene_wall(lc_world *w, lc_vec2 a, lc_vec2 b);
void scene_post(lc_world *w, lc_vec2 c, double r); /* a 16-gon of radius r */

/* One lc_guide_update for a robot of SCENE_CLEAR; asserts it returned 0. */
const lc_guide_path *scene_step(lc_guide *g, const lc_memory *m, lc_vec2 robot, lc_vec2 wp,
                                double tolerance, lc_guide_info *info);

bool scene_same(lc_vec2 a, lc_vec2 b); /* bit for bit */

/* What most tests set up: a site, its memory seen from some places, a
 * guide of gc (the defaults unless changed before scene_ready) and the
 * last update's info. */
typedef struct scene {
    lc_world w;
    lc_memory *m;
    lc_guide_config gc;
    lc_guide *g;
    lc_guide_info info;
} scene;

void scene_init(scene *s);
void scene_ready(scene *s, const lc_vec2 *from, int n); /* after the walls */
void scene_open(scene *s);  /* open, known space all round the origin */
void scene_guide(scene *s); /* a fresh guide of s->gc for the one there */
const lc_guide_path *scene_update(scene *s, lc_vec2 robot, lc_vec2 wp, double tolerance);
void scene_free(scene *s);

/* The least distance from the path to a remembered return (brute force
 * over lc_memory_each_occupied). */
double scene_path_clearance(const lc_memory *m, const lc_guide_path *p);

/* The y where the path first crosses the line x; NAN when it does not. */
double scene_crossing_y(const lc_guide_path *p, double x);

/*
 * The least cost from the robot's cell to a cell whose centre lies within
 * reach of the goal (or, for a goal outside the window, to the goal
 * through the border), over the grid guide.h lays on m's window for the
 * clearance R and the costs of gc: plain Dijkstra (Dijkstra 1959), each
 * cell classified by brute force over every remembered return; INFINITY
 * when no goal is reached. The rules are in guide_scene.c.
 */
double scene_least_cost(const lc_memory *m, const lc_guide_config *gc, double R, lc_vec2 start,
                        lc_vec2 goal, double reach);

#endif
