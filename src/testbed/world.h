/*
 * world.h - a simulated site: polygons (walls, pillars, pallets) and a
 * ray-cast scanner over them. Used by `lacuna sim`, the bench and tests.
 *
 * Polygons are closed rings in the world frame (any orientation, simple);
 * a polygon of two vertices is a thin wall (a segment). The scanner model
 * is docs/INTERFACES.md's `sensor`: beams spread evenly over fov, centred on the
 * mount's x axis; range noise is Gaussian with the given deviation, drawn
 * from a caller-owned seeded generator so runs repeat exactly.
 */
#ifndef LC_WORLD_H
#define LC_WORLD_H

#include <stdbool.h>
#include <stdint.h>

#include "geom.h"
#include "polyset.h"

typedef struct lc_world {
    lc_polyset polys;
} lc_world;

typedef struct lc_sensor {
    int beams;
    double fov;        /* rad */
    double range_min;  /* m */
    double range_max;  /* m */
    double rate;       /* Hz */
    double noise;      /* m, standard deviation */
    lc_pose mount;     /* sensor in the robot frame */
} lc_sensor;

void lc_sensor_default(lc_sensor *s);

/* Deterministic generator (splitmix64) for sensor noise. */
typedef struct lc_sim_rng {
    uint64_t state;
} lc_sim_rng;
double lc_sim_rng_normal(lc_sim_rng *r);

void lc_world_init(lc_world *w);
void lc_world_free(lc_world *w);
int lc_world_add(lc_world *w, const lc_vec2 *v, int n);

/* Distance along the unit direction dir from origin to the first surface,
 * or INFINITY when nothing is hit within max_range. */
double lc_world_raycast(const lc_world *w, lc_vec2 origin, lc_vec2 dir, double max_range);

/* Angle of beam i for a sensor (sensor frame). */
double lc_sensor_beam_angle(const lc_sensor *s, int i);
double lc_sensor_angle_step(const lc_sensor *s);

/*
 * One scan from the robot at pose: ranges[i] for beam i (NAN: no return
 * within range_max). rng may be NULL for no noise.
 */
void lc_world_scan(const lc_world *w, lc_pose pose, const lc_sensor *s, lc_sim_rng *rng,
                   double *ranges);

/* Distance from p to the nearest surface (0 on or inside a polygon). */
double lc_world_distance(const lc_world *w, lc_vec2 p);

/* True when p lies inside a closed polygon of the world (ray parity). */
bool lc_world_inside(const lc_world *w, lc_vec2 p);

/*
 * The least distance between the convex polygon foot[0..nf) (a footprint
 * at its pose, nf >= 3) and the world's polygons; when it overlaps one,
 * minus how deep (the deepest vertex of either inside the other, at least
 * 1e-9 m). INFINITY for an empty world, NaN for nf < 3.
 */
double lc_world_polygon_distance(const lc_world *w, const lc_vec2 *foot, int nf);

#endif
