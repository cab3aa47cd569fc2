/*
 * clock_mono.h - the one monotonic clock of the program (CLOCK_MONOTONIC):
 * the server's deadlines, the tools' pacing and timing, the reference
 * solver's timing, and the lc_clock hook handed to the core (the core reads
 * no clock of its own). Microseconds; it never goes back, and its zero means
 * nothing (only differences do).
 */
#ifndef LC_CLOCK_MONO_H
#define LC_CLOCK_MONO_H

#include "clock.h"

/* Monotonic microseconds. */
double lc_mono_us(void);

/* An lc_clock reading lc_mono_us (static: valid for the program's life). */
const lc_clock *lc_mono_clock(void);

#endif
