/*
 * status.h - the one error scheme of the core.
 *
 * A fallible call returns an int: LC_OK (0) or a count or a positive
 * outcome its module names (region's LC_REGION_TOO_CLOSE, the ellipse
 * solver's LC_ELLIPSE_MAX_ITER), and a negative lc_status on an error.
 * Every negative number means the same in every module, so a caller may
 * pass one up unchanged; lc_status_name gives its name for a log line.
 */
#ifndef LC_STATUS_H
#define LC_STATUS_H

typedef enum lc_status {
    LC_OK = 0,
    LC_ERR_NO_MEMORY = -1,  /* an allocation through lc_alloc failed */
    LC_ERR_BAD_INPUT = -2,  /* a value outside its domain (NaN, infinite,
                             * negative size, too few halfspaces) */
    LC_ERR_DEGENERATE = -3, /* nothing of positive size exists: an empty or
                             * zero-area polygon, no region about the centre,
                             * no direction that qualifies */
    LC_ERR_UNBOUNDED = -4,  /* a polygon without the bound the call needs */
    LC_ERR_LIBRARY = -5,    /* an outside library (qhull) refused the input */
} lc_status;

/* "ok", "no_memory", "bad_input", "degenerate", "unbounded", "library";
 * "unknown" for any other value (module outcomes are named by their
 * module). */
const char *lc_status_name(int status);

#endif
