/*
 * view.c - see view.h. The lines pass through the robot centre with unit
 * normals (hs_through); angles are world-frame, CCW from +x.
 */
#include "view.h"

static lc_halfspace hs_through(lc_vec2 normal, lc_vec2 p)
{
    double l = lc_len(normal);
    lc_vec2 a = lc_scale(normal, 1.0 / l);
    return (lc_halfspace){a, lc_dot(a, p)};
}

int lc_region_blind_lines(lc_vec2 centre, double fov, double view_mid, bool has_waypoint,
                          lc_vec2 waypoint, lc_halfspace out[2])
{
    if (!(fov < 2.0 * LC_PI - 1e-9) || !(fov > 0))
        return 0;
    double half = 0.5 * fov;
    if (fov <= LC_PI) {
        /* The seen cone is convex: the region stays between its edges. */
        out[0] = hs_through(lc_unit_angle(view_mid + half + 0.5 * LC_PI), centre);
        out[1] = hs_through(lc_unit_angle(view_mid - half - 0.5 * LC_PI), centre);
        return 2;
    }
    /* Normals n with n . u >= 0 over the blind cone lie within
     * (half - pi/2) of the blind axis; the region is n . (p - c) <= 0. */
    double blind_axis = view_mid + LC_PI, spread = half - 0.5 * LC_PI;
    double nang = blind_axis;
    if (has_waypoint && lc_dist(waypoint, centre) > 0) {
        lc_vec2 g = lc_sub(waypoint, centre);
        double want = atan2(-g.y, -g.x); /* n = -g leaves the most room toward g */
        double off = lc_wrap_angle(want - blind_axis);
        nang = blind_axis + (off > spread ? spread : (off < -spread ? -spread : off));
    }
    out[0] = hs_through(lc_unit_angle(nang), centre);
    return 1;
}

/* May the footprint move along u (see lc_region_view_wedge)? e[] are the
 * blind cone's edge directions, o the sensor relative to the centre. */
static bool sweep_sees(lc_vec2 u, lc_vec2 o, const lc_vec2 e[2], double radius)
{
    const double tol = 1e-12;
    double ou = lc_dot(o, u);
    for (int k = 0; k < 2; k++) {
        double eu = lc_dot(e[k], u);
        if (ou <= 0) {
            if (eu > tol)
                return false;
            continue;
        }
        /* the apex lies ahead: the cone must leave the half plane again
         * (eu < 0) and the stretch of its edge ahead stays in the disc */
        if (!(eu < -tol))
            return false;
        lc_vec2 exit = lc_add(o, lc_scale(e[k], -ou / eu));
        if (lc_len(exit) > radius)
            return false;
    }
    return ou <= 0 || lc_len(o) <= radius;
}

/* The largest angle in [0, pi/2] that directions view_mid + side * a keep
 * qualifying for every a up to it (bisection; qualifying shrinks with a). */
static double wedge_reach(double view_mid, double side, lc_vec2 o, const lc_vec2 e[2],
                          double radius)
{
    double lo = 0.0, hi = 0.5 * LC_PI;
    lc_vec2 ulo = lc_unit_angle(view_mid), uhi = lc_unit_angle(view_mid + side * hi);
    if (sweep_sees(uhi, o, e, radius))
        return hi;
    /* The directions are halved as unit vectors (the normalised sum of the
     * two ends) beside the angles: a square root per step, not a sincos
     * (the two sides' 80 sincos were 14k of the 600k instructions of a
     * 1081-beam bench frame, callgrind). */
    for (int i = 0; i < 40; i++) {
        double mid = 0.5 * (lo + hi);
        lc_vec2 sum = lc_add(ulo, uhi), umid = lc_scale(sum, 1.0 / lc_len(sum));
        if (sweep_sees(umid, o, e, radius)) {
            lo = mid;
            ulo = umid;
        } else {
            hi = mid;
            uhi = umid;
        }
    }
    return lo;
}

int lc_region_view_wedge(lc_vec2 centre, lc_vec2 sensor_offset, double fov, double view_mid,
                         double radius, lc_halfspace out[2])
{
    if (!(fov < 2.0 * LC_PI - 1e-9))
        return 0;
    if (!lc_vec2_finite(sensor_offset) || !(radius >= 0))
        return LC_ERR_BAD_INPUT;
    /* the blind cone's edges run from the sensor at view_mid +- fov/2 */
    lc_vec2 e[2] = {lc_unit_angle(view_mid + 0.5 * fov), lc_unit_angle(view_mid - 0.5 * fov)};
    if (!(fov > LC_PI) || !sweep_sees(lc_unit_angle(view_mid), sensor_offset, e, radius))
        return LC_ERR_DEGENERATE;
    double left = wedge_reach(view_mid, 1.0, sensor_offset, e, radius);
    double right = wedge_reach(view_mid, -1.0, sensor_offset, e, radius);
    out[0] = hs_through(lc_unit_angle(view_mid + left + 0.5 * LC_PI), centre);
    out[1] = hs_through(lc_unit_angle(view_mid - right - 0.5 * LC_PI), centre);
    return 2;
}
