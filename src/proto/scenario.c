/*
 * scenario.c - scenario files (see scenario.h): the header through cJSON and
 * the codec's field readers, every later line through lc_wire_decode.
 *
 * The header's robot and route are read and written by the codec, so a
 * scenario holds exactly what the wire would; the header is written with
 * the codec's JSON writer (json_write.h), numbers so that they parse back
 * to the same double, which is what lets `lacuna replay` reproduce a
 * recorded run bit for bit.
 */
#include "scenario.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "codec_encode.h"
#include "codec_names.h"
#include "json_read.h"
#include "json_write.h"

static int read_control(const cJSON *o, lc_control *c, lc_wire_error *we);

static const char *const expect_names[] = {"done", "blocked"};

const char *lc_scenario_expect_name(lc_scenario_expect e)
{
    return e == LC_EXPECT_BLOCKED ? expect_names[1] : expect_names[0];
}

void lc_scenario_sensor_default(lc_scenario_sensor *s)
{
    *s = (lc_scenario_sensor){.beams = 541,
                              .fov = 1.5 * LC_PI,
                              .range_min = 0.05,
                              .range_max = 12.0,
                              .rate = 20.0,
                              .noise = 0.01,
                              .mount = {0, 0, 0}};
}

void lc_scenario_header_init(lc_scenario_header *h)
{
    memset(h, 0, sizeof *h);
    h->version = LC_SCENARIO_VERSION;
    lc_robot_default(&h->robot);
    lc_route_default(&h->route);
    lc_scenario_sensor_default(&h->sensor);
    h->expect = LC_EXPECT_DONE;
}

void lc_scenario_header_free(lc_scenario_header *h) { lc_polyset_free(&h->world); }

int lc_scenario_sim_sensors(const lc_scenario_header *h, const lc_scenario_sensor **out)
{
    *out = h->n_sensors > 0 ? h->sensors : &h->sensor;
    return h->n_sensors > 0 ? h->n_sensors : 1;
}

double lc_scenario_first_dt(const lc_scenario_header *h)
{
    if (!h->has_sensor && h->n_sensors == 0)
        return 0.05;
    const lc_scenario_sensor *s;
    int n = lc_scenario_sim_sensors(h, &s);
    double rate = 0;
    for (int i = 0; i < n; i++)
        if (isfinite(s[i].rate))
            rate = fmax(rate, s[i].rate);
    return rate > 0 ? 1.0 / rate : 0.05;
}

lc_control lc_scenario_control(const lc_scenario_header *h)
{
    lc_control c;
    if (h->has_control)
        return h->control;
    lc_control_stamps(&c, lc_scenario_first_dt(h));
    return c;
}

static int fail_wire(lc_scenario_error *err, int line, const lc_wire_error *we)
{
    err->line = line;
    snprintf(err->message, sizeof err->message, "%s: %s", lc_wire_code_name(we->code),
             we->message);
    return -1;
}

static int fail_msg(lc_scenario_error *err, int line, const char *msg)
{
    err->line = line;
    snprintf(err->message, sizeof err->message, "%s", msg);
    return -1;
}

/* ------------------------------------------------------------ header */

static const lc_wire_bounds B_FOV = {0.0, 2.0 * LC_PI, true, false};
static const lc_wire_bounds B_BEAMS = {1.0, 100000.0, false, false};
static const lc_wire_bounds B_RATE = {0.0, 1000.0, true, false};
static const lc_wire_bounds B_VERSION = {1.0, 1e6, false, false};

/* What a simulated sensor's object at path p holds beside its name and
 * kind. */
static int read_sensor_fields(const cJSON *obj, const char *p, lc_scenario_sensor *s,
                              lc_wire_error *we)
{
    if (lc_wire_int_field(obj, p, "beams", false, &B_BEAMS, &s->beams, we) < 0 ||
        lc_wire_number_field(obj, p, "fov", false, &B_FOV, &s->fov, we) < 0 ||
        lc_wire_number_field(obj, p, "near", false, &lc_jr_pos, &s->range_min, we) < 0 ||
        lc_wire_number_field(obj, p, "far", false, &lc_jr_pos, &s->range_max, we) < 0 ||
        lc_wire_number_field(obj, p, "rate", false, &B_RATE, &s->rate, we) < 0 ||
        lc_wire_number_field(obj, p, "noise", false, &lc_jr_nonneg, &s->noise, we) < 0 ||
        lc_jr_pose_member(obj, p, "mount", false, &s->mount, we) < 0)
        return -1;
    if (!(s->range_min < s->range_max))
        return lc_jr_fail(we, LC_WIRE_BAD_FIELD, p, "far", "must be > near");
    return 0;
}

static int read_sensor(const cJSON *obj, lc_scenario_sensor *s, lc_wire_error *we)
{
    static const char *const keys[] = {"beams", "fov", "near", "far", "rate", "noise", "mount",
                                       NULL};
    if (lc_jr_need_object(obj, NULL, "sensor", we) ||
        lc_wire_check_duplicates(obj, "sensor", keys, we))
        return -1;
    return read_sensor_fields(obj, "sensor", s, we);
}

/* Sensor i of "sensors", named unlike the ones before it. */
static int read_sensor_item(const cJSON *obj, const char *p, int i, void *ctx,
                            lc_wire_error *we)
{
    static const char *const keys[] = {"name", "kind", "mount", "beams", "fov", "near", "far",
                                       "rate", "noise", NULL};
    lc_scenario_header *h = ctx;
    lc_scenario_sensor *s = &h->sensors[i];
    int kind = LC_FRAME_SCAN;
    lc_scenario_sensor_default(s);
    if (lc_jr_need_object(obj, NULL, p, we) || lc_wire_check_duplicates(obj, p, keys, we) ||
        lc_jr_sensor_name(obj, p, "name", true, s->name, we) < 0 ||
        lc_jr_choice(obj, p, "kind", false, lc_wire_kind_names, 2, &kind, we) < 0 ||
        read_sensor_fields(obj, p, s, we) < 0)
        return -1;
    s->kind = (lc_frame_kind)kind;
    for (int k = 0; k < i; k++)
        if (strcmp(h->sensors[k].name, s->name) == 0)
            return lc_jr_fail(we, LC_WIRE_BAD_FIELD, p, "name",
                              "\"%s\" is the name of sensors[%d] already", s->name, k);
    return 0;
}

/* "sensor" or "sensors", not both. */
static int read_sensors(const cJSON *root, lc_scenario_header *h, lc_wire_error *we)
{
    const cJSON *one = cJSON_GetObjectItemCaseSensitive(root, "sensor");
    const cJSON *many = cJSON_GetObjectItemCaseSensitive(root, "sensors");
    if (one && many)
        return lc_jr_fail(we, LC_WIRE_BAD_FIELD, NULL, "sensors",
                          "give sensor or sensors, not both");
    if (one) {
        if (read_sensor(one, &h->sensor, we) < 0)
            return -1;
        h->has_sensor = true;
    }
    if (many)
        return lc_jr_each(root, NULL, "sensors", 1, LC_SENSORS_MAX, "sensors",
                          read_sensor_item, h, &h->n_sensors, we);
    return 0;
}

static int read_polygon(const cJSON *poly, int i, lc_polyset *out, lc_wire_error *we)
{
    int n = cJSON_IsArray(poly) ? cJSON_GetArraySize(poly) : -1;
    if (n < 2) {
        lc_wire_error_set(we, LC_WIRE_BAD_FIELD,
                          "world.polygons[%d]: not an array of at least 2 points", i);
        return -1;
    }
    if (lc_polyset_reserve(out, n) < 0) {
        lc_wire_error_set(we, LC_WIRE_INTERNAL, "world.polygons[%d]: out of memory", i);
        return -1;
    }
    int j = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, poly) {
        char name[64];
        snprintf(name, sizeof name, "world.polygons[%d][%d]", i, j);
        if (lc_wire_vec2_from_json(it, name, &out->v[out->nv + j], we) < 0)
            return -1;
        j++;
    }
    if (lc_polyset_commit(out, n, i) < 0) {
        lc_wire_error_set(we, LC_WIRE_INTERNAL, "world.polygons[%d]: out of memory", i);
        return -1;
    }
    return 0;
}

static int read_world(const cJSON *obj, lc_polyset *out, lc_wire_error *we)
{
    static const char *const keys[] = {"polygons", NULL};
    const cJSON *polys = cJSON_IsObject(obj) ? cJSON_GetObjectItemCaseSensitive(obj, "polygons")
                                             : NULL;
    if (!polys || !cJSON_IsArray(polys)) {
        lc_wire_error_set(we, LC_WIRE_BAD_FIELD, "world.polygons: missing or not an array");
        return -1;
    }
    if (lc_wire_check_duplicates(obj, "world", keys, we))
        return -1;
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, polys) {
        if (read_polygon(it, i++, out, we) < 0)
            return -1;
    }
    return 0;
}

static int read_text_fields(const cJSON *root, lc_scenario_header *h, lc_wire_error *we)
{
    const cJSON *d = cJSON_GetObjectItemCaseSensitive(root, "description");
    if (d) {
        if (!cJSON_IsString(d) || !d->valuestring) {
            lc_wire_error_set(we, LC_WIRE_BAD_FIELD, "description: not a string");
            return -1;
        }
        snprintf(h->description, sizeof h->description, "%s", d->valuestring);
    }
    const cJSON *e = cJSON_GetObjectItemCaseSensitive(root, "expect");
    if (e) {
        const char *s = cJSON_IsString(e) ? e->valuestring : NULL;
        if (s && strcmp(s, expect_names[0]) == 0)
            h->expect = LC_EXPECT_DONE;
        else if (s && strcmp(s, expect_names[1]) == 0)
            h->expect = LC_EXPECT_BLOCKED;
        else {
            lc_wire_error_set(we, LC_WIRE_BAD_FIELD, "expect: must be \"done\" or \"blocked\"");
            return -1;
        }
    }
    return 0;
}

static int read_type_version(const cJSON *root, lc_scenario_header *h, lc_wire_error *we)
{
    const cJSON *t = cJSON_GetObjectItemCaseSensitive(root, "type");
    if (!cJSON_IsString(t) || !t->valuestring || strcmp(t->valuestring, "scenario") != 0) {
        lc_wire_error_set(we, LC_WIRE_BAD_MESSAGE, "type: the first line must be a \"scenario\"");
        return -1;
    }
    if (lc_wire_int_field(root, NULL, "version", true, &B_VERSION, &h->version, we) < 0)
        return -1;
    if (h->version != LC_SCENARIO_VERSION) {
        lc_wire_error_set(we, LC_WIRE_BAD_FIELD, "version: %d is not supported (only %d)",
                          h->version, LC_SCENARIO_VERSION);
        return -1;
    }
    return 0;
}

/* A generated world's family and shortest path (see scenario.h). */
static int read_suite_fields(const cJSON *root, lc_scenario_header *h, lc_wire_error *we)
{
    const cJSON *f = cJSON_GetObjectItemCaseSensitive(root, "family");
    if (f) {
        const char *s = cJSON_IsString(f) ? f->valuestring : NULL;
        size_t n = s ? strlen(s) : 0;
        bool ok = n > 0 && n < sizeof h->family;
        for (size_t i = 0; ok && i < n; i++)
            ok = s[i] == '_' || s[i] == '.' || s[i] == '-' || (s[i] >= '0' && s[i] <= '9') ||
                 (s[i] >= 'a' && s[i] <= 'z') || (s[i] >= 'A' && s[i] <= 'Z');
        if (!ok) {
            lc_wire_error_set(we, LC_WIRE_BAD_FIELD,
                              "family: 1 to %d of A-Z a-z 0-9 _ . -",
                              (int)sizeof h->family - 1);
            return -1;
        }
        memcpy(h->family, s, n + 1);
    }
    return lc_wire_number_field(root, NULL, "shortest_path", false, &lc_jr_nonneg,
                                &h->shortest_path, we) < 0 ? -1 : 0;
}

static int read_header_fields(const cJSON *root, lc_scenario_header *h, lc_wire_error *we)
{
    static const char *const keys[] = {"type", "version", "description", "robot", "route",
                                       "start", "world", "sensor", "sensors", "expect",
                                       "max_time", "control", "family", "shortest_path",
                                       NULL};
    if (!cJSON_IsObject(root)) {
        lc_wire_error_set(we, LC_WIRE_BAD_MESSAGE, "header: not a JSON object");
        return -1;
    }
    if (lc_wire_check_duplicates(root, NULL, keys, we) || read_type_version(root, h, we) ||
        read_text_fields(root, h, we) ||
        lc_wire_number_field(root, NULL, "max_time", false, &lc_jr_nonneg, &h->max_time, we) < 0)
        return -1;
    const cJSON *it;
    if ((it = cJSON_GetObjectItemCaseSensitive(root, "robot"))) {
        if (lc_wire_robot_from_json(it, "robot", &h->robot, we) < 0)
            return -1;
        h->has_robot = true;
    }
    if ((it = cJSON_GetObjectItemCaseSensitive(root, "route"))) {
        if (lc_wire_route_from_json(it, "route", &h->route, we) < 0)
            return -1;
        h->has_route = true;
    }
    if ((it = cJSON_GetObjectItemCaseSensitive(root, "start"))) {
        if (lc_wire_pose_from_json(it, "start", &h->start, we) < 0)
            return -1;
        h->has_start = true;
    }
    if ((it = cJSON_GetObjectItemCaseSensitive(root, "world"))) {
        if (read_world(it, &h->world, we) < 0)
            return -1;
        h->has_world = true;
    }
    if (read_sensors(root, h, we) < 0)
        return -1;
    if ((it = cJSON_GetObjectItemCaseSensitive(root, "control"))) {
        if (read_control(it, &h->control, we) < 0)
            return -1;
        h->has_control = true;
    }
    return read_suite_fields(root, h, we);
}

/* The recording server's control-period rule (see scenario.h). */
static int read_control(const cJSON *o, lc_control *c, lc_wire_error *we)
{
    const lc_wire_bounds nonneg = {0, 10, false, false}, pos = {0, 10, true, false};
    if (!cJSON_IsObject(o)) {
        lc_wire_error_set(we, LC_WIRE_BAD_FIELD, "control: not an object");
        return -1;
    }
    static const char *const keys[] = {"period", "dt_min", "dt_max", "first_dt",
                                       "watchdog_ms", NULL};
    const lc_wire_bounds ms = {0, 1e6, false, false};
    *c = (lc_control){.dt_min = 1e-4, .dt_max = 1.0, .first_dt = 0.05};
    if (lc_wire_check_duplicates(o, "control", keys, we) ||
        lc_wire_number_field(o, "control", "period", false, &nonneg, &c->period, we) < 0 ||
        lc_wire_number_field(o, "control", "dt_min", false, &pos, &c->dt_min, we) < 0 ||
        lc_wire_number_field(o, "control", "dt_max", false, &pos, &c->dt_max, we) < 0 ||
        lc_wire_number_field(o, "control", "first_dt", false, &pos, &c->first_dt, we) < 0 ||
        lc_wire_int_field(o, "control", "watchdog_ms", false, &ms, &c->watchdog_ms, we) < 0)
        return -1;
    return 0;
}

/* One JSON value with only white space after it; NULL and *we on failure. */
static cJSON *parse_one(const char *text, size_t len, lc_wire_error *we)
{
    const char *end = NULL;
    cJSON *root = len ? cJSON_ParseWithLengthOpts(text, len, &end, 0) : NULL;
    if (!root) {
        lc_jr_bad_json(we, "header", text, len, end);
        return NULL;
    }
    for (const char *p = end; p < text + len; p++) {
        if (*p != ' ' && *p != '\t' && *p != '\r' && *p != '\n') {
            cJSON_Delete(root);
            lc_wire_error_set(we, LC_WIRE_BAD_JSON, "header: bytes after the JSON value");
            return NULL;
        }
    }
    return root;
}

int lc_scenario_parse_header(const char *text, size_t len, lc_scenario_header *h,
                             lc_scenario_error *err)
{
    lc_scenario_header_free(h);
    lc_scenario_header_init(h);
    lc_wire_error we = {0};
    cJSON *root = parse_one(text, len, &we);
    int rc = root ? read_header_fields(root, h, &we) : -1;
    cJSON_Delete(root);
    if (rc < 0)
        return fail_wire(err, 1, &we);
    err->line = 0;
    err->message[0] = '\0';
    lc_wire_ignored_text(&we, err->ignored, sizeof err->ignored);
    return 0;
}

/* ------------------------------------------------------------ reader */

void lc_scenario_reader_init(lc_scenario_reader *r, const char *text, size_t len,
                             const lc_alloc *alloc)
{
    memset(r, 0, sizeof *r);
    r->text = text;
    r->len = len;
    lc_wire_limits_default(&r->lim);
    /* A recorded file holds what the server accepted: no tighter cap here
     * than the server's, and the message size of a file line is not a
     * network concern. */
    r->lim.max_message = (size_t)1 << 30;
    lc_wire_buffers_init(&r->buf, alloc);
}

void lc_scenario_reader_free(lc_scenario_reader *r) { lc_wire_buffers_free(&r->buf); }

static bool blank(const char *s, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (s[i] != ' ' && s[i] != '\t' && s[i] != '\r')
            return false;
    return true;
}

/* The next line (without its newline); false at the end. *complete: it had one. */
static bool next_line(lc_scenario_reader *r, const char **s, size_t *n, bool *complete)
{
    if (r->pos >= r->len)
        return false;
    const char *start = r->text + r->pos;
    const char *nl = memchr(start, '\n', r->len - r->pos);
    *s = start;
    *n = nl ? (size_t)(nl - start) : r->len - r->pos;
    *complete = nl != NULL;
    r->pos += *n + (nl ? 1 : 0);
    r->line++;
    return true;
}

static void warn(lc_scenario_reader *r, const char *msg)
{
    if (r->warning)
        r->warning(r->warning_data, r->line, msg);
}

int lc_scenario_read_header(lc_scenario_reader *r, lc_scenario_header *h,
                            lc_scenario_error *err)
{
    const char *s;
    size_t n;
    bool complete;
    if (!next_line(r, &s, &n, &complete) || blank(s, n))
        return fail_msg(err, r->line ? r->line : 1, "no scenario header (empty first line)");
    if (lc_scenario_parse_header(s, n, h, err) < 0) {
        if (!complete)
            return fail_msg(err, r->line, "truncated scenario header");
        err->line = r->line;
        return -1;
    }
    if (err->ignored[0]) {
        char msg[sizeof err->ignored + 32];
        snprintf(msg, sizeof msg, "scenario header: %s", err->ignored);
        warn(r, msg);
    }
    return 0;
}

int lc_scenario_next(lc_scenario_reader *r, lc_wire_msg *msg, lc_scenario_error *err)
{
    const char *s;
    size_t n;
    bool complete;
    for (;;) {
        if (!next_line(r, &s, &n, &complete))
            return 0;
        if (!blank(s, n))
            break;
    }
    lc_wire_error we;
    if (lc_wire_decode(s, n, &r->lim, &r->buf, msg, &we) < 0) {
        if (!complete && we.code == LC_WIRE_BAD_JSON) {
            warn(r, "truncated last line skipped");
            return 0;
        }
        return fail_wire(err, r->line, &we);
    }
    if (msg->type == LC_MSG_SCENARIO)
        return fail_msg(err, r->line, "a second scenario header");
    if (we.ignored && !(r->warned & (1u << msg->type))) {
        r->warned |= 1u << msg->type;
        char text[LC_WIRE_KEY_SHOWN + 64], line[sizeof text + 64];
        lc_wire_ignored_text(&we, text, sizeof text);
        snprintf(line, sizeof line, "%s (said once per message type)", text);
        warn(r, line);
    }
    return 1;
}

/* ------------------------------------------------------------ writer */

static void put_world(lc_wire_text *t, const lc_polyset *w)
{
    lc_jw_key(t, "world");
    lc_jw_open(t, '{');
    lc_jw_key(t, "polygons");
    lc_jw_polyset(t, w, -1);
    lc_jw_close(t, '}');
}

/* A simulated sensor's object as read_sensor_fields reads it back. */
static void put_sensor_fields(lc_wire_text *t, const lc_scenario_sensor *s)
{
    lc_jw_kv_int(t, "beams", s->beams);
    lc_jw_kv_num(t, "fov", s->fov, -1);
    lc_jw_kv_num(t, "near", s->range_min, -1);
    lc_jw_kv_num(t, "far", s->range_max, -1);
    lc_jw_kv_num(t, "rate", s->rate, -1);
    lc_jw_kv_num(t, "noise", s->noise, -1);
    lc_jw_key(t, "mount");
    lc_jw_pose(t, s->mount, -1);
}

static void put_sensor(lc_wire_text *t, const lc_scenario_sensor *s)
{
    lc_jw_key(t, "sensor");
    lc_jw_open(t, '{');
    put_sensor_fields(t, s);
    lc_jw_close(t, '}');
}

static void put_sensors(lc_wire_text *t, const lc_scenario_header *h)
{
    lc_jw_key(t, "sensors");
    lc_jw_open(t, '[');
    for (int i = 0; i < h->n_sensors && i < LC_SENSORS_MAX; i++) {
        const lc_scenario_sensor *s = &h->sensors[i];
        lc_jw_open(t, '{');
        lc_jw_kv_str(t, "name", s->name);
        lc_jw_kv_str(t, "kind", lc_wire_kind_names[s->kind == LC_FRAME_POINTS ? 1 : 0]);
        put_sensor_fields(t, s);
        lc_jw_close(t, '}');
    }
    lc_jw_close(t, ']');
}

/* The recording server's control settings, as read_control reads them. */
static void put_control(lc_wire_text *t, const lc_control *c)
{
    lc_jw_key(t, "control");
    lc_jw_open(t, '{');
    lc_jw_kv_num(t, "period", c->period, -1);
    lc_jw_kv_num(t, "dt_min", c->dt_min, -1);
    lc_jw_kv_num(t, "dt_max", c->dt_max, -1);
    lc_jw_kv_num(t, "first_dt", c->first_dt, -1);
    lc_jw_kv_int(t, "watchdog_ms", c->watchdog_ms);
    lc_jw_close(t, '}');
}

/* The robot and route as their wire messages write them, "type" and all. */
static void put_robot_route(lc_wire_text *t, const lc_scenario_header *h)
{
    if (h->has_robot) {
        lc_jw_key(t, "robot");
        lc_jw_open(t, '{');
        lc_wire_robot_members(t, &h->robot);
        lc_jw_close(t, '}');
    }
    if (h->has_route) {
        lc_jw_key(t, "route");
        lc_jw_open(t, '{');
        lc_wire_route_members(t, &h->route);
        lc_jw_close(t, '}');
    }
}

static void put_suite(lc_wire_text *t, const lc_scenario_header *h)
{
    if (h->family[0])
        lc_jw_kv_str(t, "family", h->family);
    if (h->shortest_path > 0)
        lc_jw_kv_num(t, "shortest_path", h->shortest_path, -1);
}

int lc_scenario_encode_header(lc_wire_text *t, const lc_scenario_header *h)
{
    lc_jw_begin(t);
    lc_jw_kv_str(t, "type", "scenario");
    lc_jw_kv_int(t, "version", LC_SCENARIO_VERSION);
    if (h->description[0])
        lc_jw_kv_str(t, "description", h->description);
    put_robot_route(t, h);
    if (h->has_start) {
        lc_jw_key(t, "start");
        lc_jw_pose(t, h->start, -1);
    }
    if (h->has_world)
        put_world(t, &h->world);
    if (h->has_sensor)
        put_sensor(t, &h->sensor);
    if (h->n_sensors > 0)
        put_sensors(t, h);
    lc_jw_kv_str(t, "expect", lc_scenario_expect_name(h->expect));
    if (h->max_time > 0)
        lc_jw_kv_num(t, "max_time", h->max_time, -1);
    put_suite(t, h);
    if (h->has_control)
        put_control(t, &h->control);
    return lc_jw_end(t);
}
