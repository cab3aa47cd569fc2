/* status.c - see status.h. */
#include "status.h"

static const char *const names[] = {"ok", "no_memory", "bad_input", "degenerate", "unbounded",
                                    "library"};

const char *lc_status_name(int status)
{
    int i = -status;
    return i >= 0 && i < (int)(sizeof names / sizeof names[0]) ? names[i] : "unknown";
}
