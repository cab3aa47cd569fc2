/*
 * control.c - the dt and valid_ms rules of control.h.
 */
#include "control.h"

#include <math.h>

void lc_control_default(lc_control *c)
{
    *c = (lc_control){.period = 0.0, .dt_min = 0.005, .dt_max = 0.2, .first_dt = 0.05,
                      .watchdog_ms = 200};
}

void lc_control_stamps(lc_control *c, double first_dt)
{
    *c = (lc_control){.period = 0.0, .dt_min = 0.0, .dt_max = INFINITY, .first_dt = first_dt,
                      .watchdog_ms = 0};
}

double lc_control_dt(const lc_control *c, bool first, double prev, double stamp)
{
    if (c->period > 0)
        return c->period;
    double dt = first ? c->first_dt : stamp - prev;
    if (!first && !(dt > 0 && isfinite(dt)))
        dt = c->dt_min > 0 ? c->dt_min : c->first_dt;
    if (dt < c->dt_min)
        dt = c->dt_min;
    return dt > c->dt_max ? c->dt_max : dt;
}

int lc_control_valid_ms(const lc_control *c, double dt)
{
    double ms = LC_VALID_PERIODS * 1000.0 * dt;
    if (!(ms >= 1.0)) /* also a dt that is not a number */
        return 1;
    if (c->watchdog_ms > 0 && ms > c->watchdog_ms)
        ms = c->watchdog_ms;
    return ms >= LC_VALID_MS_MAX ? LC_VALID_MS_MAX : (int)lround(ms);
}
