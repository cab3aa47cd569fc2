/*
 * segment.h - obstacle points into thin pieces.
 *
 * Ordered scans: the adaptive breakpoint detector (Borges and Aldon, J.
 * Intell. Robot. Syst. 40 (2004)): neighbours p_(n-1), p_n break apart when
 * |p_n - p_(n-1)| > r_(n-1) sin(dphi) / sin(lambda - dphi) + 3 sigma_r,
 * and always when a beam between them saw nothing (it looked through the gap).
 * Unordered points: grid-hashed Euclidean clustering with link distance
 * cluster_dist. Then every cluster is split recursively (iterative end-point
 * fit) until no point lies farther than split_width from its piece's chord,
 * so a concave cluster (the inside of a room corner) never becomes one hull
 * that swallows free space. Every kept point ends in at least one piece
 * (scan pieces of one cluster share their split point; unordered pieces
 * partition their cluster).
 */
#ifndef LC_SEGMENT_H
#define LC_SEGMENT_H

#include "alloc.h"
#include "ingest.h"

typedef struct lc_segment_config {
    double lambda;       /* rad, breakpoint detector's worst incidence, 10 deg */
    double sigma_r;      /* m, range noise, 0.01 */
    double cluster_dist; /* m, link distance for unordered points, 0.15 */
    double split_width;  /* m, most a point may lie from its piece's chord, 0.04 */
    int max_piece;       /* most points in one piece (longer ones split), 64 */
} lc_segment_config;

void lc_segment_config_default(lc_segment_config *cfg);

/* Borges and Aldon's threshold D_max for a neighbour at range r_prev and
 * angular step dphi; INFINITY-free: returns 0 when dphi >= lambda. */
double lc_breakpoint_threshold(double r_prev, double dphi, double lambda, double sigma_r);

typedef struct lc_segment_ws {
    int *order;   /* point indices, grouped by piece */
    int cap_order;
    int *piece_start, *piece_count; /* pieces over order[] */
    int n_pieces, cap_pieces;
    int *cell_head, *next; /* grid hash for clustering */
    int cap_cells, cap_next;
    int *stack;
    int cap_stack;
    const lc_alloc *alloc; /* the buffers grow through it (alloc.h) */
} lc_segment_ws;

/* Init and free as alloc.h says. */
void lc_segment_ws_init(lc_segment_ws *ws, const lc_alloc *alloc);
void lc_segment_ws_free(lc_segment_ws *ws);

/* Returns the number of pieces, or LC_ERR_NO_MEMORY. */
int lc_segment(const lc_cloud *cloud, const lc_segment_config *cfg, lc_segment_ws *ws);

#endif
