/*
 * hubfake.c - the hub without sockets, for the server's tests (hubfake.h).
 */
#include "testutil.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "config.h"
#include "hubfake.h"

lc_fake_io lc_fake;

static void fake_wake(void *data, void *conn_user) { ((lc_fake_io *)data)->wakes++; }
static void fake_kill(void *data, void *conn_user) { ((lc_fake_io *)data)->kills++; }

lc_hub *lc_fake_hub(void (*tweak)(lc_hub_config *))
{
    lc_hub_config hc;
    memset(&hc, 0, sizeof hc);
    lc_server_config_default(&hc.opts);
    /* the fake peers answer no ping and the tests jump the clock: no link
     * is timed out unless a test says so */
    hc.opts.link_timeout_ms = 0;
    hc.headroom = 16;
    hc.io = (lc_hub_io){fake_wake, fake_kill, &lc_fake};
    if (tweak)
        tweak(&hc);
    lc_hub *hub = lc_hub_new(&hc);
    assert_non_null(hub);
    return hub;
}

int lc_fake_say(lc_hub *hub, lc_conn *c, const char *text, double now)
{
    return lc_hub_receive(hub, c, text, strlen(text), true, true, false, now);
}

cJSON *lc_fake_next(lc_conn *c)
{
    size_t len;
    char *text = lc_conn_peek(c, &len);
    if (!text)
        return NULL;
    cJSON *j = cJSON_ParseWithLength(text, len);
    assert_non_null(j);
    lc_conn_pop(c);
    return j;
}

const char *lc_fake_str(const cJSON *j, const char *key)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(j, key);
    return cJSON_IsString(it) ? it->valuestring : "";
}

double lc_fake_num(const cJSON *j, const char *key)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(j, key);
    return cJSON_IsNumber(it) ? it->valuedouble : NAN;
}

void lc_fake_expect(lc_conn *c, const char *type, const char *code)
{
    cJSON *j = lc_fake_next(c);
    assert_non_null(j);
    assert_string_equal(lc_fake_str(j, "type"), type);
    if (code)
        assert_string_equal(lc_fake_str(j, "code"), code);
    cJSON_Delete(j);
}

void lc_fake_expect_none(lc_conn *c)
{
    size_t len;
    assert_null(lc_conn_peek(c, &len));
}

int lc_fake_drain(lc_conn *c)
{
    int n = 0;
    size_t len;
    for (; lc_conn_peek(c, &len); n++)
        lc_conn_pop(c);
    return n;
}

lc_conn *lc_fake_robot(lc_hub *hub, const char *name, double now)
{
    char text[128];
    lc_conn *c = lc_hub_open(hub, NULL, NULL, now);
    assert_non_null(c);
    snprintf(text, sizeof text, "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"%s\"}", name);
    assert_int_equal(lc_fake_say(hub, c, text, now), 0);
    lc_fake_expect(c, "welcome", NULL);
    return c;
}

void lc_fake_frame(lc_hub *hub, lc_conn *c, int seq, double stamp, double x, double y,
                   double now)
{
    char text[2048];
    int n = snprintf(text, sizeof text,
                     "{\"type\":\"points\",\"seq\":%d,\"stamp\":%.17g,\"pose\":[%.17g,%.17g,0],"
                     "\"xy\":[", seq, stamp, x, y);
    for (int k = 0; k < 36; k++) {
        double a = 2 * LC_PI * k / 36;
        n += snprintf(text + n, sizeof text - (size_t)n, "%s%.6f,%.6f", k ? "," : "",
                      6 * cos(a), 6 * sin(a));
    }
    snprintf(text + n, sizeof text - (size_t)n, "]}");
    assert_int_equal(lc_fake_say(hub, c, text, now), 0);
}
