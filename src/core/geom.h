/*
 * geom.h - small planar geometry values passed by value.
 *
 * Units are metres and radians; angles are counter-clockwise from +x. A pose
 * maps a child frame into its parent: p_parent = R(yaw) p_child + (x, y).
 * A halfspace {p : a . p <= b} is stored with |a| = 1 wherever this module
 * builds one, so that b - a . p is a signed distance in metres.
 */
#ifndef LC_GEOM_H
#define LC_GEOM_H

#include <math.h>
#include <stdbool.h>
#include <stddef.h>

#define LC_PI 3.14159265358979323846

typedef struct lc_vec2 {
    double x, y;
} lc_vec2;

typedef struct lc_pose {
    double x, y, yaw;
} lc_pose;

/* {p : a . p <= b} */
typedef struct lc_halfspace {
    lc_vec2 a;
    double b;
} lc_halfspace;

/* Halfspaces a1[i] x + a2[i] y <= b[i], i < n, as rows: a structure of
 * arrays in a caller's scratch, for the ellipse solver's inner loops. */
typedef struct lc_hrows {
    double *a1, *a2, *b;
    int n;
} lc_hrows;

/* min and max that the compiler inlines (libm's fmin/fmax are calls); for
 * finite values only. */
static inline double lc_min(double a, double b) { return a < b ? a : b; }
static inline double lc_max(double a, double b) { return a > b ? a : b; }

static inline lc_vec2 lc_v2(double x, double y) { return (lc_vec2){x, y}; }
static inline lc_vec2 lc_add(lc_vec2 p, lc_vec2 q) { return lc_v2(p.x + q.x, p.y + q.y); }
static inline lc_vec2 lc_sub(lc_vec2 p, lc_vec2 q) { return lc_v2(p.x - q.x, p.y - q.y); }
static inline lc_vec2 lc_scale(lc_vec2 p, double s) { return lc_v2(p.x * s, p.y * s); }
static inline double lc_dot(lc_vec2 p, lc_vec2 q) { return p.x * q.x + p.y * q.y; }
static inline double lc_cross(lc_vec2 p, lc_vec2 q) { return p.x * q.y - p.y * q.x; }
/* sqrt, not hypot: coordinates stay far below overflow (the codec caps them at
 * 1e9) and hypot costs several times more in the hot loops. */
static inline double lc_len(lc_vec2 p) { return sqrt(p.x * p.x + p.y * p.y); }
static inline double lc_len2(lc_vec2 p) { return p.x * p.x + p.y * p.y; }
static inline double lc_dist(lc_vec2 p, lc_vec2 q) { return lc_len(lc_sub(p, q)); }
static inline lc_vec2 lc_perp(lc_vec2 p) { return lc_v2(-p.y, p.x); } /* +90 deg */
static inline lc_vec2 lc_lerp(lc_vec2 p, lc_vec2 q, double t)
{
    return lc_v2(p.x + (q.x - p.x) * t, p.y + (q.y - p.y) * t);
}
static inline lc_vec2 lc_unit_angle(double a) { return lc_v2(cos(a), sin(a)); }
static inline bool lc_vec2_finite(lc_vec2 p) { return isfinite(p.x) && isfinite(p.y); }

static inline lc_vec2 lc_rotate(lc_vec2 p, double yaw)
{
    double c = cos(yaw), s = sin(yaw);
    return lc_v2(c * p.x - s * p.y, s * p.x + c * p.y);
}

/* Child-frame point into the parent frame of pose. */
static inline lc_vec2 lc_pose_apply(lc_pose pose, lc_vec2 p)
{
    return lc_add(lc_rotate(p, pose.yaw), lc_v2(pose.x, pose.y));
}

/* Parent-frame point into the child frame of pose. */
static inline lc_vec2 lc_pose_inverse_apply(lc_pose pose, lc_vec2 p)
{
    return lc_rotate(lc_sub(p, lc_v2(pose.x, pose.y)), -pose.yaw);
}

/* parent <- a <- b: the pose of b's frame in a's parent. */
static inline lc_pose lc_pose_compose(lc_pose a, lc_pose b)
{
    lc_vec2 t = lc_pose_apply(a, lc_v2(b.x, b.y));
    return (lc_pose){t.x, t.y, a.yaw + b.yaw};
}

/* Angle wrapped into (-pi, pi]. */
double lc_wrap_angle(double a);

/* Distance from p to the closed segment [a, b], and the closest point. */
double lc_segment_distance(lc_vec2 p, lc_vec2 a, lc_vec2 b, lc_vec2 *closest);

/* Its square (no square root, for comparisons). Inline: segmentation and
 * region call it hundreds of times per frame. */
static inline double lc_segment_distance2(lc_vec2 p, lc_vec2 a, lc_vec2 b)
{
    lc_vec2 ab = lc_sub(b, a), ap = lc_sub(p, a);
    double l2 = lc_len2(ab);
    double t = l2 > 0 ? lc_dot(ap, ab) / l2 : 0.0;
    t = t < 0 ? 0 : (t > 1 ? 1 : t);
    return lc_len2(lc_sub(ap, lc_scale(ab, t)));
}

/* Twice the signed area of a polygon (positive when counter-clockwise). */
double lc_polygon_area2(const lc_vec2 *v, int n);

/*
 * True when p lies in the convex CCW polygon v[0..n) (boundary included,
 * tolerance eps in metres). n == 1 or 2 are a point and a segment.
 */
bool lc_convex_contains(const lc_vec2 *v, int n, lc_vec2 p, double eps);

/* Distance from p to the convex CCW polygon v[0..n) (0 inside), closest point. */
double lc_convex_distance(const lc_vec2 *v, int n, lc_vec2 p, lc_vec2 *closest);

#endif
