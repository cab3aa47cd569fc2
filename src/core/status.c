/* status.c - see status.h. */
#include "status.h"

static const char *const names[] = {"ok", "no_memory", "bad_input", "degenerate", "unbounded",
                                    "library"};

const char *lc_status_name(int status)
{
    int n = (int)(sizeof names / sizeof names[0]);
    return status <= 0 && status > -n ? names[-status] : "unknown"; /* no -INT_MIN */
}
