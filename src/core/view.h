/*
 * view.h - what the sensor saw, as lines through the robot centre that bound
 * the free region (lc_region_input.blind): the edges of a scanner's blind
 * sector, or the wedge of directions a sliding robot may move in without
 * its footprint sweeping unseen space. Not part of inflation itself: the
 * region takes these lines as given. The names keep the region's prefix
 * because they fill its input.
 *
 * Invariants: world frame, angles CCW from +x, lengths in metres; every
 * line returned has a unit normal and passes through the centre.
 */
#ifndef LC_VIEW_H
#define LC_VIEW_H

#include <stdbool.h>

#include "geom.h"
#include "status.h"

/*
 * Lines bounding a scanner's blind sector, through the centre: the view
 * covers fov radians about the world direction view_mid. fov >= 2 pi: none.
 * fov > pi: one line, the supporting line of the blind cone that leaves most
 * room toward the waypoint (or perpendicular to the blind axis without one);
 * fov <= pi: the two edges of the seen cone. Returns the count (0..2).
 */
int lc_region_blind_lines(lc_vec2 centre, double fov, double view_mid, bool has_waypoint,
                          lc_vec2 waypoint, lc_halfspace out[2]);

/*
 * The directions a robot that can slide sideways (the point model) may move
 * in without its footprint sweeping space the scanner did not see. Moving
 * from the centre c along u, every point the disc of radius `radius` newly
 * covers lies in the half plane (p - c) . u >= 0; that half plane may meet
 * the blind cone (apex at the sensor, c + sensor_offset, world frame) only
 * inside the disc the robot occupies now, which is free. For fov > pi that
 * holds for the directions of a wedge about the view axis (half angle
 * fov/2 - pi/2 with the sensor at the centre; narrower or wider with a
 * mount offset), returned as two lines through c (the region then stays in
 * the wedge and every straight braking path from c does too). Returns 2;
 * 0 when fov >= 2 pi; LC_ERR_DEGENERATE when no direction qualifies (the
 * sensor outside the footprint, or fov <= pi, where a half plane always
 * reaches unseen space), LC_ERR_BAD_INPUT for a non-finite sensor_offset or
 * a radius not >= 0: on either, callers fall back to lc_region_blind_lines.
 */
int lc_region_view_wedge(lc_vec2 centre, lc_vec2 sensor_offset, double fov, double view_mid,
                         double radius, lc_halfspace out[2]);

#endif
