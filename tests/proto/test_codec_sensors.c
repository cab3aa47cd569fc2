/*
 * test_codec_sensors.c - several sensors per robot on the wire (codec.h,
 * proto/PROTOCOL.md): the robot description's "sensors", a frame's "sensor"
 * and whether it carried its "mount", and a plan request's "frames".
 *
 * - A table of bad inputs, each with its code and the field the message
 *   must name, by its full path ("robot.sensors[1].name", "frames[2].dist[5]").
 * - Good inputs decode to what they say, defaults included (kind scan,
 *   mount at the centre, no fov, no height band); has_mount is set exactly
 *   when "mount" is there, on the fast path and the cJSON path alike.
 * - Round trips: random sensor lists and frames naming sensors encode and
 *   decode bit for bit, and encoding the decoded message again gives the
 *   same text byte for byte (what lets a recording replay exactly).
 * - A plan request's frames all stay readable at once (each in a window of
 *   the decode buffers), the last is the request's frame, and an error
 *   carries the failing frame's seq.
 *
 * Table entries are written with ' for " to stay readable.
 */
#include "testutil.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "codec.h"
#include "codec_fast.h"

/* ------------------------------------------------------------ helpers */

static bool same_bits(double a, double b) { return memcmp(&a, &b, sizeof a) == 0; }

#define assert_same_double(a, b)                                                        \
    do {                                                                                \
        double a_ = (a), b_ = (b);                                                      \
        if (!same_bits(a_, b_))                                                         \
            fail_msg("%s = %.17g differs from %s = %.17g in its bits", #a, a_, #b, b_); \
    } while (0)

#define TEXT_MAX 8192

/* ---------------------------------------------------------- bad inputs */

#define ROBOT(s) "{'type':'robot','sensors':" s "}"
#define SCAN_HEAD "{'type':'scan','seq':7,'stamp':1.5,'pose':[0,0,0],"
#define SCAN_BODY "'bearing_first':-1,'bearing_step':0.1,'near':0.1,'far':10,'dist':[1,2]}"
#define SCAN(extra) SCAN_HEAD extra SCAN_BODY
#define PTS(extra) "{'type':'points','seq':3,'stamp':2,'pose':[0,0,0]," extra "'xy':[1,2]}"
#define F(seq) "{'type':'scan','seq':" #seq ",'stamp':0,'pose':[0,0,0]," SCAN_BODY
#define N32 "abcdefghijklmnopqrstuvwxyz012345"

enum { MSG = 0, PLAN = 1 };

typedef struct bad_case {
    int entry;
    const char *text;
    lc_wire_code code;
    const char *field;
} bad_case;

static const bad_case bad_cases[] = {
    /* the robot's sensors */
    {MSG, ROBOT("{}"), LC_WIRE_BAD_FIELD, "robot.sensors"},
    {MSG, ROBOT("null"), LC_WIRE_BAD_FIELD, "robot.sensors"},
    {MSG, ROBOT("[]"), LC_WIRE_BAD_FIELD, "robot.sensors"},
    {MSG, ROBOT("[{'name':'a'},{'name':'b'},{'name':'c'},{'name':'d'},{'name':'e'},"
                "{'name':'f'},{'name':'g'},{'name':'h'},{'name':'i'}]"),
     LC_WIRE_BAD_FIELD, "robot.sensors"},
    {MSG, ROBOT("['front']"), LC_WIRE_BAD_FIELD, "robot.sensors[0]"},
    {MSG, ROBOT("[{'kind':'scan'}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].name"},
    {MSG, ROBOT("[{'name':''}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].name"},
    {MSG, ROBOT("[{'name':null}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].name"},
    {MSG, ROBOT("[{'name':7}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].name"},
    {MSG, ROBOT("[{'name':'a'},{'name':'rear/left'}]"), LC_WIRE_BAD_FIELD, "robot.sensors[1].name"},
    {MSG, ROBOT("[{'name':'a b'}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].name"},
    {MSG, ROBOT("[{'name':'caf\\u00e9'}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].name"},
    {MSG, ROBOT("[{'name':'" N32 "6'}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].name"},
    {MSG, ROBOT("[{'name':'front'},{'name':'front'}]"), LC_WIRE_BAD_FIELD, "robot.sensors[1].name"},
    {MSG, ROBOT("[{'name':'a'},{'name':'b'},{'name':'a'}]"), LC_WIRE_BAD_FIELD,
     "robot.sensors[2].name"},
    {MSG, ROBOT("[{'name':'a','name':'b'}]"), LC_WIRE_BAD_MESSAGE, "robot.sensors[0].name"},
    {MSG, ROBOT("[{'name':'a','kind':'lidar'}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].kind"},
    {MSG, ROBOT("[{'name':'a','kind':1}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].kind"},
    {MSG, ROBOT("[{'name':'a','kind':'Scan'}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].kind"},
    {MSG, ROBOT("[{'name':'a','mount':[0,0]}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].mount"},
    {MSG, ROBOT("[{'name':'a','mount':[0,'x',0]}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].mount[1]"},
    {MSG, ROBOT("[{'name':'a','mount':[0,0,1e400]}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].mount[2]"},
    {MSG, ROBOT("[{'name':'a','fov':1}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].fov"},
    {MSG, ROBOT("[{'name':'a','kind':'scan','z_min':0}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].z_min"},
    {MSG, ROBOT("[{'name':'a','z_max':1}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].z_max"},
    {MSG, ROBOT("[{'name':'a','kind':'points','fov':0}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].fov"},
    {MSG, ROBOT("[{'name':'a','kind':'points','fov':-1}]"), LC_WIRE_BAD_FIELD, "robot.sensors[0].fov"},
    {MSG, ROBOT("[{'name':'a','kind':'points','fov':6.3}]"), LC_WIRE_BAD_FIELD,
     "robot.sensors[0].fov"},
    {MSG, ROBOT("[{'name':'a','kind':'points','fov':'wide'}]"), LC_WIRE_BAD_FIELD,
     "robot.sensors[0].fov"},
    {MSG, ROBOT("[{'name':'a','kind':'points','z_min':1,'z_max':1}]"), LC_WIRE_BAD_FIELD,
     "robot.sensors[0].z_max"},
    {MSG, ROBOT("[{'name':'a','kind':'points','z_max':-2e9}]"), LC_WIRE_BAD_FIELD,
     "robot.sensors[0].z_max"},
    {MSG, "{'type':'robot','radius':0,'sensors':[{'name':'a'}]}", LC_WIRE_BAD_FIELD, "robot.radius"},
    /* a frame's sensor */
    {MSG, SCAN("'sensor':'',"), LC_WIRE_BAD_FIELD, "scan.sensor"},
    {MSG, SCAN("'sensor':null,"), LC_WIRE_BAD_FIELD, "scan.sensor"},
    {MSG, SCAN("'sensor':1,"), LC_WIRE_BAD_FIELD, "scan.sensor"},
    {MSG, SCAN("'sensor':['rear'],"), LC_WIRE_BAD_FIELD, "scan.sensor"},
    {MSG, SCAN("'sensor':'rear left',"), LC_WIRE_BAD_FIELD, "scan.sensor"},
    {MSG, SCAN("'sensor':'" N32 "6',"), LC_WIRE_BAD_FIELD, "scan.sensor"},
    {MSG, SCAN("'sensor':'rear','sensor':'rear',"), LC_WIRE_BAD_MESSAGE, "scan.sensor"},
    {MSG, PTS("'sensor':'cam\\u0007',"), LC_WIRE_BAD_FIELD, "points.sensor"},
    {MSG, PTS("'sensor':'',"), LC_WIRE_BAD_FIELD, "points.sensor"},
    {MSG, PTS("'mount':[0,0],'sensor':'cam',"), LC_WIRE_BAD_FIELD, "points.mount"},
    /* a plan request's frames */
    {PLAN, "{'goal':[1,0],'frames':[]}", LC_WIRE_BAD_FIELD, "frames"},
    {PLAN, "{'goal':[1,0],'frames':{}}", LC_WIRE_BAD_FIELD, "frames"},
    {PLAN, "{'goal':[1,0],'frames':null}", LC_WIRE_BAD_FIELD, "frames"},
    {PLAN, "{'goal':[1,0],'frame':" F(1) ",'frames':[" F(2) "]}", LC_WIRE_BAD_FIELD, "frames"},
    {PLAN, "{'goal':[1,0],'frames':[" F(1) ",7]}", LC_WIRE_BAD_FIELD, "frames[1]"},
    {PLAN, "{'goal':[1,0],'frames':[" F(1) ",{'seq':2}]}", LC_WIRE_BAD_FIELD, "frames[1].type"},
    {PLAN, "{'goal':[1,0],'frames':[" F(1) "," F(2) ",{'type':'scan','seq':3,'stamp':0,"
           "'pose':[0,0,0],'bearing_first':-1,'bearing_step':0.1,'near':0.1,'far':10,"
           "'dist':[1,2,3,4,5,'x']}]}",
     LC_WIRE_BAD_FIELD, "frames[2].dist[5]"},
    {PLAN, "{'goal':[1,0],'frames':[{'type':'points','seq':1,'stamp':0,'pose':[0,0,0],"
           "'sensor':'a b','xy':[]}]}",
     LC_WIRE_BAD_FIELD, "frames[0].sensor"},
    {PLAN, "{'goal':[1,0],'robot':{'sensors':[{'name':'a'},{'name':'a'}]},'frames':[" F(1) "]}",
     LC_WIRE_BAD_FIELD, "robot.sensors[1].name"},
    {PLAN, "{'goal':[1,0],'robot':{'sensors':[{'name':'a','fov':1}]},'frame':" F(1) "}",
     LC_WIRE_BAD_FIELD, "robot.sensors[0].fov"},
};

static int decode_case(int entry, const char *text, lc_wire_buffers *buf, lc_wire_error *err)
{
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    size_t n = strlen(text);
    char *copy = malloc(n ? n : 1); /* exactly n bytes: ASan sees an overread */
    assert_non_null(copy);
    memcpy(copy, text, n);
    int rc = entry == PLAN ? lc_wire_decode_plan_request(copy, n, NULL, buf, &req, err)
                           : lc_wire_decode(copy, n, NULL, buf, &msg, err);
    free(copy);
    return rc;
}

static void test_bad_inputs(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    for (size_t i = 0; i < sizeof bad_cases / sizeof bad_cases[0]; i++) {
        const bad_case *c = &bad_cases[i];
        char text[TEXT_MAX];
        lc_test_unquote(c->text, text, sizeof text);
        lc_wire_error err;
        int rc = decode_case(c->entry, text, &buf, &err);
        if (rc != -1 || err.code != c->code || !lc_test_names_field(err.message, c->field))
            fail_msg("case %zu %s: rc %d %s \"%s\"; wanted %s naming %s", i, text, rc,
                     lc_wire_code_name(err.code), err.message, lc_wire_code_name(c->code),
                     c->field);
    }
    lc_wire_buffers_free(&buf);
}

/* 65 frames: one more than a request may carry. */
static void test_too_many_frames(void **state)
{
    (void)state;
    static char text[65 * 200 + 64];
    size_t n = (size_t)sprintf(text, "{\"goal\":[1,0],\"frames\":[");
    char one[256];
    for (int i = 0; i <= LC_WIRE_PLAN_FRAMES_MAX; i++)
        n += (size_t)sprintf(text + n, "%s%s", i ? "," : "", lc_test_unquote(F(1), one, sizeof one));
    sprintf(text + n, "]}");
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_error err;
    assert_int_equal(decode_case(PLAN, text, &buf, &err), -1);
    assert_true(lc_test_names_field(err.message, "frames"));
    assert_non_null(strstr(err.message, "64"));
    /* 64 are fine */
    char *last = strrchr(text, '{');
    strcpy(last - 1, "]}");
    assert_int_equal(decode_case(PLAN, text, &buf, &err), 0);
    lc_wire_buffers_free(&buf);
}

/* --------------------------------------------------------- good inputs */

static void test_two_sensor_robot(void **state)
{
    (void)state;
    char text[TEXT_MAX];
    lc_test_unquote("{'type':'robot','model':'unicycle','sensors':["
            "{'name':'front','kind':'scan','mount':[0.3,0,0]},"
            "{'name':'rear','mount':[-0.3,0,3.141592653589793]},"
            "{'name':'cam.1_A-z','kind':'points','mount':[0.2,0.05,0.1],'fov':1.2,"
            "'z_min':-0.1,'z_max':1.5},"
            "{'name':'" N32 "','kind':'points'}]}",
            text, sizeof text);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg m;
    lc_wire_error err;
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &m, &err), 0);
    assert_int_equal(m.type, LC_MSG_ROBOT);
    const lc_robot *r = &m.u.robot;
    assert_int_equal(r->model, LC_MODEL_UNICYCLE);
    assert_int_equal(r->n_sensors, 4);
    assert_string_equal(r->sensors[0].name, "front");
    assert_int_equal(r->sensors[0].kind, LC_FRAME_SCAN);
    assert_true(r->sensors[0].mount.x == 0.3 && r->sensors[0].mount.yaw == 0.0);
    assert_string_equal(r->sensors[1].name, "rear");
    assert_int_equal(r->sensors[1].kind, LC_FRAME_SCAN); /* the default kind */
    assert_true(r->sensors[1].mount.yaw == 3.141592653589793);
    assert_true(r->sensors[1].fov == 0.0 && isinf(r->sensors[1].z_min) &&
                r->sensors[1].z_min < 0 && isinf(r->sensors[1].z_max));
    assert_string_equal(r->sensors[2].name, "cam.1_A-z");
    assert_int_equal(r->sensors[2].kind, LC_FRAME_POINTS);
    assert_true(r->sensors[2].fov == 1.2 && r->sensors[2].z_min == -0.1 &&
                r->sensors[2].z_max == 1.5);
    assert_true(r->sensors[2].mount.x == 0.2 && r->sensors[2].mount.y == 0.05 &&
                r->sensors[2].mount.yaw == 0.1);
    assert_string_equal(r->sensors[3].name, N32);
    /* a points sensor without fov or band: judged from the points, all heights */
    assert_true(r->sensors[3].fov == 0.0 && isinf(r->sensors[3].z_max));
    assert_true(r->sensors[3].mount.x == 0.0 && r->sensors[3].mount.yaw == 0.0);
    assert_int_equal(err.ignored, 0);
    /* no sensors: none */
    lc_test_unquote("{'type':'robot'}", text, sizeof text);
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &m, &err), 0);
    assert_int_equal(m.u.robot.n_sensors, 0);
    /* an unknown key in a sensor is ignored, and named */
    lc_test_unquote("{'type':'robot','sensors':[{'name':'a','colour':'red'}]}", text, sizeof text);
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &m, &err), 0);
    assert_int_equal(err.ignored, 1);
    assert_non_null(strstr(err.ignored_keys, "sensors[0].colour"));
    lc_wire_buffers_free(&buf);
}

/* has_mount and sensor on both decode paths. */
static void test_frame_sensor_and_mount(void **state)
{
    (void)state;
    static const struct {
        const char *text;
        const char *sensor;
        bool has_mount;
        double mount_x;
    } cases[] = {
        {SCAN(""), "", false, 0.0},
        {SCAN("'sensor':'rear',"), "rear", false, 0.0},
        {SCAN("'mount':[-0.25,0,3],'sensor':'rear',"), "rear", true, -0.25},
        {SCAN("'mount':[0,0,0],"), "", true, 0.0},
        {SCAN("'sensor':'" N32 "',"), N32, false, 0.0},
        {PTS("'sensor':'cam',"), "cam", false, 0.0},
        {PTS("'sensor':'cam','mount':[0.1,0,0],"), "cam", true, 0.1},
        {SCAN("'sensor':'r\\u0065ar',"), "rear", false, 0.0}, /* an escape: cJSON path */
    };
    lc_wire_limits lim;
    lc_wire_limits_default(&lim);
    lc_wire_buffers fast, slow;
    lc_wire_buffers_init(&fast, NULL);
    lc_wire_buffers_init(&slow, NULL);
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        char text[TEXT_MAX];
        lc_test_unquote(cases[i].text, text, sizeof text);
        lc_wire_msg a, b;
        lc_wire_error err;
        assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &fast, &a, &err), 0);
        assert_int_equal(lc_wire_decode_slow(text, strlen(text), NULL, &slow, &b, &err), 0);
        const lc_frame *fs[] = {&a.u.frame, &b.u.frame};
        for (int k = 0; k < 2; k++) {
            if (strcmp(fs[k]->sensor, cases[i].sensor) != 0 ||
                fs[k]->has_mount != cases[i].has_mount || fs[k]->mount.x != cases[i].mount_x)
                fail_msg("case %zu (%s path): sensor '%s' has_mount %d mount.x %g", i,
                         k ? "cJSON" : "entry", fs[k]->sensor, fs[k]->has_mount,
                         fs[k]->mount.x);
        }
        /* plain messages take the fast path, an escape does not */
        lc_wire_msg c;
        assert_int_equal(lc_wire_decode_frame_fast(text, strlen(text), &lim, &fast, &c),
                         strstr(text, "\\u") ? 0 : 1);
    }
    lc_wire_buffers_free(&fast);
    lc_wire_buffers_free(&slow);
}

/* ---------------------------------------------------------- round trips */

static double random_number(lc_rng *r)
{
    switch (lc_rng_next(r) % 4) {
    case 0: return lc_rng_uniform(r, -1, 1);
    case 1: return round(lc_rng_uniform(r, -1000, 1000)) / 1000.0;
    case 2: return lc_rng_uniform(r, -1e6, 1e6) * 1e-9;
    default: return lc_rng_normal(r) * 3.0;
    }
}

/* A name of 2..LC_SENSOR_NAME_MAX characters of every kind, unique by its
 * first two (i < 100). */
static void random_name(lc_rng *r, char *out, int i)
{
    static const char chars[] = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_.-";
    int n = 2 + (int)(lc_rng_next(r) % (LC_SENSOR_NAME_MAX - 1));
    out[0] = (char)('0' + i / 10 % 10);
    out[1] = (char)('0' + i % 10);
    for (int k = 2; k < n; k++)
        out[k] = chars[lc_rng_next(r) % (sizeof chars - 1)];
    out[n] = '\0';
}

static void random_sensors(lc_rng *r, lc_robot *robot)
{
    lc_robot_default(robot);
    robot->n_sensors = 1 + (int)(lc_rng_next(r) % LC_SENSORS_MAX);
    for (int i = 0; i < robot->n_sensors; i++) {
        lc_sensor_desc *s = &robot->sensors[i];
        lc_sensor_desc_default(s, lc_rng_next(r) % 2 ? LC_FRAME_POINTS : LC_FRAME_SCAN);
        random_name(r, s->name, i);
        s->mount = (lc_pose){random_number(r), random_number(r), random_number(r)};
        if (s->kind == LC_FRAME_POINTS && lc_rng_next(r) % 3)
            s->fov = lc_rng_uniform(r, 1e-3, 2.0 * LC_PI);
        if (s->kind == LC_FRAME_POINTS && lc_rng_next(r) % 2) {
            s->z_min = random_number(r) - 2.0;
            s->z_max = s->z_min + fabs(random_number(r)) + 1e-9;
        }
    }
}

static void same_sensors(const lc_robot *a, const lc_robot *b)
{
    assert_int_equal(a->n_sensors, b->n_sensors);
    for (int i = 0; i < a->n_sensors; i++) {
        const lc_sensor_desc *x = &a->sensors[i], *y = &b->sensors[i];
        assert_string_equal(x->name, y->name);
        assert_int_equal(x->kind, y->kind);
        assert_same_double(x->mount.x, y->mount.x);
        assert_same_double(x->mount.y, y->mount.y);
        assert_same_double(x->mount.yaw, y->mount.yaw);
        assert_same_double(x->fov, y->fov);
        assert_same_double(x->z_min, y->z_min);
        assert_same_double(x->z_max, y->z_max);
    }
}

static int encode_robot(lc_wire_text *t, const lc_wire_msg *m)
{
    return lc_wire_encode_robot(t, &m->u.robot);
}

static int encode_frame(lc_wire_text *t, const lc_wire_msg *m)
{
    return lc_wire_encode_frame(t, &m->u.frame);
}

/* t decoded into *m, then encoded again: the same text, byte for byte. */
static void decode_same_text(const lc_wire_text *t, lc_wire_buffers *buf, lc_wire_msg *m,
                             int (*encode)(lc_wire_text *, const lc_wire_msg *))
{
    lc_wire_error err;
    if (lc_wire_decode(t->s, (size_t)t->len, NULL, buf, m, &err) != 0)
        fail_msg("%s\n%s", err.message, t->s);
    lc_wire_text again;
    lc_wire_text_init(&again, NULL);
    assert_int_equal(encode(&again, m), 0);
    assert_string_equal(again.s, t->s);
    lc_wire_text_free(&again);
}

static void test_roundtrip_robot_sensors(void **state)
{
    (void)state;
    lc_rng r;
    lc_rng_seed(&r, 15);
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_robot robot;
    static lc_wire_msg m;
    for (int iter = 0; iter < 500; iter++) {
        random_sensors(&r, &robot);
        assert_int_equal(lc_wire_encode_robot(&t, &robot), 0);
        decode_same_text(&t, &buf, &m, encode_robot);
        same_sensors(&robot, &m.u.robot);
    }
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

/* Frames naming sensors, with and without a mount: the same text twice. */
static void test_roundtrip_frames_text(void **state)
{
    (void)state;
    lc_rng r;
    lc_rng_seed(&r, 40);
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    double ranges[64], xy[128];
    for (int iter = 0; iter < 400; iter++) {
        lc_frame f = {.seq = iter, .stamp = iter / 40.0};
        f.pose = (lc_pose){random_number(&r), random_number(&r), random_number(&r)};
        f.has_mount = lc_rng_next(&r) % 2;
        if (f.has_mount)
            f.mount = (lc_pose){random_number(&r), random_number(&r), random_number(&r)};
        if (lc_rng_next(&r) % 3)
            random_name(&r, f.sensor, iter % 100);
        int n = 1 + (int)(lc_rng_next(&r) % 64);
        for (int i = 0; i < 2 * n; i++)
            xy[i] = random_number(&r);
        for (int i = 0; i < n; i++)
            ranges[i] = lc_rng_next(&r) % 4 ? lc_rng_uniform(&r, 0.05, 30) : NAN;
        if (iter % 2) {
            f.kind = LC_FRAME_POINTS;
            f.xy = xy;
            f.n_points = n;
        } else {
            f.kind = LC_FRAME_SCAN;
            f.angle_start = -1.0;
            f.angle_step = 0.03;
            f.range_min = 0.05;
            f.range_max = 30;
            f.ranges = ranges;
            f.n_ranges = n;
        }
        assert_int_equal(lc_wire_encode_frame(&t, &f), 0);
        assert_true((strstr(t.s, "\"mount\"") != NULL) == f.has_mount);
        assert_true((strstr(t.s, "\"sensor\"") != NULL) == (f.sensor[0] != '\0'));
        lc_wire_msg m;
        decode_same_text(&t, &buf, &m, encode_frame);
        assert_string_equal(m.u.frame.sensor, f.sensor);
        assert_int_equal(m.u.frame.has_mount, f.has_mount);
    }
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

/* ------------------------------------------------------- plan requests */

static void test_plan_frames(void **state)
{
    (void)state;
    char text[TEXT_MAX];
    lc_test_unquote("{'goal':[4,0],'robot':{'sensors':[{'name':'front','mount':[0.3,0,0]},"
            "{'name':'cam','kind':'points','fov':1.5}]},'frames':["
            "{'type':'scan','seq':1,'stamp':0,'pose':[0,0,0],'sensor':'front',"
            "'bearing_first':-1,'bearing_step':0.5,'near':0.1,'far':10,"
            "'dist':[1,2,3,4,5]},"
            "{'type':'points','seq':2,'stamp':0.01,'pose':[0,0,0],'sensor':'cam',"
            "'xy':[1,2,3,4],'z':[0.5,0.6]},"
            "{'type':'points','seq':3,'stamp':0.02,'pose':[0,0,0],'xy':[]},"
            "{'type':'scan','seq':4,'stamp':0.025,'pose':[0.1,0,0],'mount':[0.2,0,0],"
            "'bearing_first':0,'bearing_step':0.1,'near':0.1,'far':10,"
            "'dist':[7,null,9]}]}",
            text, sizeof text);
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, &ca.alloc);
    static lc_wire_plan_request req;
    lc_wire_error err;
    assert_int_equal(lc_wire_decode_plan_request(text, strlen(text), NULL, &buf, &req, &err), 0);
    assert_int_equal(req.n_frames, 4);
    assert_int_equal(req.robot.n_sensors, 2);
    const lc_frame *f = req.frames;
    /* every frame's arrays are still there once the last is decoded */
    assert_int_equal(f[0].n_ranges, 5);
    for (int i = 0; i < 5; i++)
        assert_true(f[0].ranges[i] == i + 1.0);
    assert_string_equal(f[0].sensor, "front");
    assert_false(f[0].has_mount);
    assert_int_equal(f[1].n_points, 2);
    assert_true(f[1].xy[0] == 1 && f[1].xy[3] == 4 && f[1].z[0] == 0.5 && f[1].z[1] == 0.6);
    assert_string_equal(f[1].sensor, "cam");
    assert_int_equal(f[2].n_points, 0);
    assert_null(f[2].z);
    assert_int_equal(f[3].n_ranges, 3);
    assert_true(f[3].ranges[0] == 7 && isnan(f[3].ranges[1]) && f[3].ranges[2] == 9);
    assert_true(f[3].has_mount && f[3].mount.x == 0.2);
    /* the request's frame is the last */
    assert_true(req.frame.seq == 4 && req.frame.ranges == f[3].ranges);
    /* windows do not overlap */
    assert_true(f[0].ranges + 5 <= f[3].ranges);
    assert_true(f[1].xy + 4 <= f[2].xy || f[2].n_points == 0);
    /* decoding it again reuses the buffers */
    long calls = ca.calls;
    assert_int_equal(lc_wire_decode_plan_request(text, strlen(text), NULL, &buf, &req, &err), 0);
    assert_int_equal(ca.calls, calls);
    lc_wire_buffers_free(&buf);
    assert_int_equal(ca.live, 0);

    /* one "frame" is one of frames */
    lc_test_unquote("{'goal':[1,0],'frame':" F(9) "}", text, sizeof text);
    lc_wire_buffers_init(&buf, NULL);
    assert_int_equal(lc_wire_decode_plan_request(text, strlen(text), NULL, &buf, &req, &err), 0);
    assert_int_equal(req.n_frames, 1);
    assert_true(req.frames[0].seq == 9 && req.frame.seq == 9);

    /* an error carries the seq of the frame at fault */
    lc_test_unquote("{'goal':[1,0],'frames':[" F(11) ",{'type':'scan','seq':12,'stamp':0,"
            "'pose':[0,0]}]}",
            text, sizeof text);
    assert_int_equal(lc_wire_decode_plan_request(text, strlen(text), NULL, &buf, &req, &err), -1);
    assert_true(lc_test_names_field(err.message, "frames[1].pose"));
    assert_true(err.has_seq);
    assert_int_equal(err.seq, 12);
    lc_wire_buffers_free(&buf);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_bad_inputs),
        cmocka_unit_test(test_too_many_frames),
        cmocka_unit_test(test_two_sensor_robot),
        cmocka_unit_test(test_frame_sensor_and_mount),
        cmocka_unit_test(test_roundtrip_robot_sensors),
        cmocka_unit_test(test_roundtrip_frames_text),
        cmocka_unit_test(test_plan_frames),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
