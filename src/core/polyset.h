/*
 * polyset.h - a set of small polygons in one flat vertex buffer.
 *
 * Polygon i is v[span[i].start .. span[i].start + span[i].count). A polygon of
 * one vertex is a point, of two a segment; three or more are convex and CCW
 * wherever the pipeline stores them. `src` is free for the producer (the
 * obstacle a grown polygon came from, the first point index of a piece).
 * Buffers grow through the set's own lc_alloc (alloc.h) and are reused
 * across frames.
 */
#ifndef LC_POLYSET_H
#define LC_POLYSET_H

#include "alloc.h"
#include "geom.h"

typedef struct lc_span {
    int start, count, src;
} lc_span;

typedef struct lc_polyset {
    lc_vec2 *v;
    int nv, cap_v;
    lc_span *span;
    int np, cap_p;
    const lc_alloc *alloc; /* the buffers grow through it (alloc.h) */
} lc_polyset;

/* Init and free as alloc.h says. */
void lc_polyset_init(lc_polyset *s, const lc_alloc *alloc);
void lc_polyset_free(lc_polyset *s);

static inline void lc_polyset_clear(lc_polyset *s) { s->nv = 0; s->np = 0; }

/* Room for `extra` more vertices; LC_OK or LC_ERR_NO_MEMORY. */
int lc_polyset_reserve(lc_polyset *s, int extra);

/* Append a polygon of n vertices (copied); LC_OK or LC_ERR_NO_MEMORY. */
int lc_polyset_push(lc_polyset *s, const lc_vec2 *v, int n, int src);

/* Start a polygon whose vertices the caller writes at s->v + s->nv after
 * lc_polyset_reserve; lc_polyset_commit(s, n, src) closes it. */
int lc_polyset_commit(lc_polyset *s, int n, int src);

static inline const lc_vec2 *lc_polyset_at(const lc_polyset *s, int i, int *n)
{
    *n = s->span[i].count;
    return s->v + s->span[i].start;
}

#endif
