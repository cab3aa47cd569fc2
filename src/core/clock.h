/*
 * clock.h - the caller's clock. The core reads no clock of its own; a caller
 * that wants per-stage timing passes this hook, and timing never changes a
 * result.
 */
#ifndef LC_CLOCK_H
#define LC_CLOCK_H

typedef struct lc_clock {
    double (*now_us)(void *data); /* monotonic microseconds */
    void *data;
} lc_clock;

static inline double lc_clock_now(const lc_clock *c)
{
    return c && c->now_us ? c->now_us(c->data) : 0.0;
}

#endif
