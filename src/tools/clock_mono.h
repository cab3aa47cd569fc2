/*
 * clock_mono.h - the monotonic clock the tools hand to the core's lc_clock
 * hook (the core reads no clock of its own).
 */
#ifndef LC_CLOCK_MONO_H
#define LC_CLOCK_MONO_H

#include "clock.h"

/* Monotonic microseconds. */
double lc_mono_us(void);

/* An lc_clock reading lc_mono_us. */
const lc_clock *lc_mono_clock(void);

#endif
