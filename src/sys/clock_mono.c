/* clock_mono.c - see clock_mono.h. */
#include "clock_mono.h"

#include <time.h>

double lc_mono_us(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec * 1e6 + (double)ts.tv_nsec * 1e-3;
}

static double hook(void *data)
{
    (void)data;
    return lc_mono_us();
}

static const lc_clock mono = {hook, NULL};

const lc_clock *lc_mono_clock(void) { return &mono; }
