/*
 * hub_views.c - the views: at most view_hz per robot, and only while it
 * changed; encoded once and shared by every viewer that watches the robot;
 * a slow viewer loses the oldest views of a robot, never a reply. The
 * remembered cells near the robot, the largest part of a view, go out at
 * most every LC_HUB_MEMORY_VIEW_S: memory changes slowly, and a viewer keeps
 * the last it got.
 */
#include <math.h>
#include <string.h>

#include "hub_internal.h"

#define LC_HUB_MEMORY_VIEW_S 0.5

void lc_hub_mark_views_dirty(lc_hub *hub)
{
    for (bot *b = hub->bots; b; b = b->next)
        b->view_dirty = true;
}

static bool watches(const lc_conn *c, const bot *b)
{
    return c->role == ROLE_VIEWER && !c->closing && (!c->watch[0] || strcmp(c->watch, b->name) == 0);
}

/*
 * A slow viewer keeps at most viewer_queue views of each robot: a new view
 * pushes out the oldest one of the same robot, never another robot's (a
 * viewer of every robot would otherwise lose whole robots when their views
 * fall due in the same tick). The queue grows to fit; it holds pointers to
 * shared views, at most viewer_queue per robot.
 */
static void push_view(lc_hub *hub, lc_conn *c, msg *m)
{
    int mine = 0, oldest = -1;
    for (int k = 0; k < c->views.count; k++) {
        if (c->views.items[(c->views.head + k) % c->views.cap]->robot == m->robot) {
            oldest = oldest < 0 ? k : oldest;
            mine++;
        }
    }
    if (mine >= hub->cfg.opts.viewer_queue) {
        lc_hub_queue_remove(&c->views, oldest);
        hub->views_dropped++;
    }
    if (c->views.count == c->views.cap && lc_hub_queue_grow(&c->views) < 0) {
        lc_hub_queue_drop_front(&c->views); /* out of memory: lose the oldest of any robot */
        hub->views_dropped++;
    }
    m->refs++;
    lc_hub_queue_push(&c->views, m);
    lc_hub_wake(hub, c);
}

void lc_hub_broadcast_view(lc_hub *hub, bot *b, double now)
{
    b->view_dirty = false;
    bool any = false;
    for (lc_conn *c = hub->conns; c && !any; c = c->next)
        any = watches(c, b);
    if (!any)
        return;
    lc_wire_view v = {.robot = b->name, .desc = &b->desc,
                      .route = b->has_route ? &b->route : NULL,
                      .result = b->has_frame ? &b->result : NULL,
                      .pose = b->pose, .seq = b->seq, .stamp = b->stamp,
                      .setpoint = b->has_sp ? &b->last_sp : NULL,
                      .plan_us = b->has_frame ? b->result.total_us : 0.0,
                      .link_down = !b->conn, .blocked = b->blocked,
                      .with_memory = b->has_frame && now >= b->memory_view_at};
    if (v.with_memory)
        b->memory_view_at = now + LC_HUB_MEMORY_VIEW_S;
    /* the longest of the frames since the previous view, the last one among them */
    v.plan_max_us = fmax(b->plan_max_us, v.plan_us);
    b->plan_max_us = 0.0;
    if (lc_wire_encode_view(&hub->text, &v) < 0)
        return;
    msg *m = lc_hub_msg_new(hub, hub->text.s, (size_t)hub->text.len);
    if (!m)
        return;
    m->robot = b->id;
    for (lc_conn *c = hub->conns; c; c = c->next)
        if (watches(c, b))
            push_view(hub, c, m);
    lc_hub_msg_unref(m);
    b->view_at = now + 1.0 / hub->cfg.opts.view_hz;
}
