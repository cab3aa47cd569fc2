/*
 * svg_parts.h - what the two halves of the run picture share (svg.h): the
 * map (svg.c) and the lanes over time with the legend (svg_plots.c). The
 * map layers' styles are written once here, so that a layer and its swatch
 * in the legend cannot differ. Sizes are SVG pixels.
 */
#ifndef LC_SVG_PARTS_H
#define LC_SVG_PARTS_H

#include <stdbool.h>
#include <stdio.h>

#include "svg.h"

#define LC_SVG_WIDTH 900.0 /* px, the map's width and every lane's */
#define LC_SVG_PAD 30.0    /* px around the map and the lanes */
#define LC_SVG_MAX_TRAIL 4000 /* points of a line over the run at most, evenly spread */

/* Styles (SVG attributes) of the map layers, for their groups and swatches. */
#define LC_SVG_STYLE_WORLD "fill=\"#57606a\" stroke=\"#24292f\" stroke-width=\"1\""
#define LC_SVG_STYLE_SEEN \
    "fill=\"#fb8f44\" fill-opacity=\"0.35\" stroke=\"#bc4c00\" stroke-width=\"0.5\""
#define LC_SVG_STYLE_REGIONS \
    "fill=\"#0969da\" fill-opacity=\"0.04\" stroke=\"#0969da\" stroke-opacity=\"0.5\" " \
    "stroke-width=\"0.8\""
#define LC_SVG_STYLE_PATHS \
    "fill=\"none\" stroke=\"#8250df\" stroke-opacity=\"0.35\" stroke-dasharray=\"4 3\" " \
    "stroke-width=\"1\""
#define LC_SVG_STYLE_LAST_GROWN \
    "fill=\"#cf222e\" fill-opacity=\"0.08\" stroke=\"#cf222e\" stroke-opacity=\"0.5\" " \
    "stroke-width=\"0.6\""
#define LC_SVG_STYLE_LAST_REGION \
    "fill=\"#0969da\" fill-opacity=\"0.12\" stroke=\"#0969da\" stroke-width=\"1.5\""
#define LC_SVG_STYLE_LAST_PATH "fill=\"none\" stroke=\"#8250df\" stroke-width=\"2\""
#define LC_SVG_STYLE_TRAJECTORY "fill=\"none\" stroke=\"#1a7f37\" stroke-width=\"2\""
#define LC_SVG_STYLE_ROUTE "fill=\"#8250df\" fill-opacity=\"0.15\" stroke=\"#8250df\""
#define LC_SVG_STYLE_ROBOT "fill=\"#0969da\" fill-opacity=\"0.3\" stroke=\"#0969da\""

/* Height of the lanes, the time axis and the legend (world: the picture
 * has a world layer, which the legend then names). */
double lc_svg_plots_height(const lc_svg_run *run, bool world);

/* Writes them, the first lane's top at y = top. */
void lc_svg_put_plots(FILE *out, const lc_svg_run *run, double top, bool world);

#endif
