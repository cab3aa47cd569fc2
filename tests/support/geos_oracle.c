/* geos_oracle.c - see geos_oracle.h. One GEOS context per test process. */
#include "geos_oracle.h"

#include <geos_c.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>

static GEOSContextHandle_t ctx;

static void quiet(const char *fmt, ...) { (void)fmt; }

void oracle_init(void)
{
    if (!ctx) {
        ctx = GEOS_init_r();
        GEOSContext_setNoticeHandler_r(ctx, quiet);
        GEOSContext_setErrorHandler_r(ctx, quiet);
    }
}

void oracle_finish(void)
{
    if (ctx)
        GEOS_finish_r(ctx);
    ctx = NULL;
}

static GEOSCoordSequence *seq(const lc_vec2 *v, int n, int close)
{
    GEOSCoordSequence *s = GEOSCoordSeq_create_r(ctx, (unsigned)(n + close), 2);
    for (int i = 0; i < n + close; i++)
        GEOSCoordSeq_setXY_r(ctx, s, (unsigned)i, v[i % n].x, v[i % n].y);
    return s;
}

/* A point, a segment (line string) or a polygon from v[0..n). */
static GEOSGeometry *geom(const lc_vec2 *v, int n)
{
    oracle_init();
    if (n == 1)
        return GEOSGeom_createPointFromXY_r(ctx, v[0].x, v[0].y);
    if (n == 2)
        return GEOSGeom_createLineString_r(ctx, seq(v, n, 0));
    GEOSGeometry *ring = GEOSGeom_createLinearRing_r(ctx, seq(v, n, 1));
    return GEOSGeom_createPolygon_r(ctx, ring, NULL, 0);
}

static GEOSGeometry *multipoint(const lc_vec2 *v, int n)
{
    oracle_init();
    GEOSGeometry **pts = malloc(sizeof *pts * (size_t)(n ? n : 1));
    for (int i = 0; i < n; i++)
        pts[i] = GEOSGeom_createPointFromXY_r(ctx, v[i].x, v[i].y);
    GEOSGeometry *g = GEOSGeom_createCollection_r(ctx, GEOS_MULTIPOINT, pts, (unsigned)n);
    free(pts);
    return g;
}

static int coords_out(const GEOSCoordSequence *s, int skip_last, lc_vec2 *out, int cap)
{
    unsigned size = 0;
    GEOSCoordSeq_getSize_r(ctx, s, &size);
    int m = (int)size - (skip_last ? 1 : 0);
    for (int i = 0; i < m && i < cap; i++)
        GEOSCoordSeq_getXY_r(ctx, s, (unsigned)i, &out[i].x, &out[i].y);
    return m;
}

int oracle_convex_hull(const lc_vec2 *pts, int n, lc_vec2 *out, int cap, double *area)
{
    GEOSGeometry *mp = multipoint(pts, n);
    GEOSGeometry *h = GEOSConvexHull_r(ctx, mp);
    int count = 0;
    *area = 0;
    switch (GEOSGeomTypeId_r(ctx, h)) {
    case GEOS_POINT:
        GEOSGeomGetX_r(ctx, h, &out[0].x);
        GEOSGeomGetY_r(ctx, h, &out[0].y);
        count = 1;
        break;
    case GEOS_LINESTRING:
        count = coords_out(GEOSGeom_getCoordSeq_r(ctx, h), 0, out, cap);
        break;
    case GEOS_POLYGON:
        count = coords_out(GEOSGeom_getCoordSeq_r(ctx, GEOSGetExteriorRing_r(ctx, h)), 1,
                           out, cap);
        GEOSArea_r(ctx, h, area);
        break;
    default:
        count = 0;
    }
    GEOSGeom_destroy_r(ctx, h);
    GEOSGeom_destroy_r(ctx, mp);
    return count;
}

double oracle_polygon_area(const lc_vec2 *v, int n)
{
    GEOSGeometry *g = geom(v, n);
    double a = 0;
    GEOSArea_r(ctx, g, &a);
    GEOSGeom_destroy_r(ctx, g);
    return a;
}

double oracle_distance(const lc_vec2 *a, int na, const lc_vec2 *b, int nb)
{
    GEOSGeometry *ga = geom(a, na), *gb = geom(b, nb);
    double d = -1;
    GEOSDistance_r(ctx, ga, gb, &d);
    GEOSGeom_destroy_r(ctx, ga);
    GEOSGeom_destroy_r(ctx, gb);
    return d;
}

double oracle_point_distance(const lc_vec2 *v, int n, lc_vec2 p)
{
    return oracle_distance(v, n, &p, 1);
}

lc_vec2 oracle_nearest(const lc_vec2 *v, int n, lc_vec2 p)
{
    GEOSGeometry *g = geom(v, n), *q = geom(&p, 1);
    GEOSCoordSequence *s = GEOSNearestPoints_r(ctx, g, q);
    lc_vec2 r = p;
    if (s) {
        GEOSCoordSeq_getXY_r(ctx, s, 0, &r.x, &r.y);
        GEOSCoordSeq_destroy_r(ctx, s);
    }
    GEOSGeom_destroy_r(ctx, g);
    GEOSGeom_destroy_r(ctx, q);
    return r;
}

int oracle_covers(const lc_vec2 *v, int n, lc_vec2 p)
{
    GEOSGeometry *g = geom(v, n), *q = geom(&p, 1);
    char r = GEOSCovers_r(ctx, g, q);
    GEOSGeom_destroy_r(ctx, g);
    GEOSGeom_destroy_r(ctx, q);
    return r == 1;
}

double oracle_intersection_area(const lc_vec2 *a, int na, const lc_vec2 *b, int nb)
{
    GEOSGeometry *ga = geom(a, na), *gb = geom(b, nb);
    GEOSGeometry *i = GEOSIntersection_r(ctx, ga, gb);
    double area = 0;
    if (i) {
        GEOSArea_r(ctx, i, &area);
        GEOSGeom_destroy_r(ctx, i);
    }
    GEOSGeom_destroy_r(ctx, ga);
    GEOSGeom_destroy_r(ctx, gb);
    return area;
}

double oracle_hausdorff(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, double frac)
{
    GEOSGeometry *ga = geom(a, na), *gb = geom(b, nb);
    double d = -1;
    GEOSHausdorffDistanceDensify_r(ctx, ga, gb, frac, &d);
    GEOSGeom_destroy_r(ctx, ga);
    GEOSGeom_destroy_r(ctx, gb);
    return d;
}
