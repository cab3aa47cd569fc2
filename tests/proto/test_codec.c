/*
 * test_codec.c - the wire codec: a table of bad inputs (each with its code
 * and the field the message must name), the examples in proto/examples,
 * exact round trips on random values, the encoders' output read back with
 * cJSON, buffer reuse, and seeded mutation fuzzing (run under ASan too).
 *
 * Table entries are written with ' for " to stay readable; unquote() turns
 * them into JSON.
 */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "codec.h"
#include "footprint.h"

/* ------------------------------------------------------------ helpers */

static void *xmalloc(size_t n)
{
    void *p = malloc(n ? n : 1);
    if (!p)
        abort();
    return p;
}

static char *unquote(const char *s)
{
    size_t n = strlen(s);
    char *out = xmalloc(n + 1);
    assert_non_null(out);
    for (size_t i = 0; i <= n; i++)
        out[i] = s[i] == '\'' ? '"' : s[i];
    return out;
}

/* A file of the source tree, whole (free it); its length in *len. */
static char *read_text(const char *rel, size_t *len)
{
    char *buf = lc_test_slurp_len(lc_test_source_path(rel), len);
    if (!buf)
        fail_msg("cannot read %s", lc_test_source_path(rel));
    return buf;
}

static bool same_double(double a, double b) { return memcmp(&a, &b, sizeof a) == 0; }

#define assert_same_double(a, b)                                                            \
    do {                                                                                    \
        double a_ = (a), b_ = (b);                                                          \
        if (!same_double(a_, b_))                                                           \
            fail_msg("%s = %.17g differs from %s = %.17g in its bits", #a, a_, #b, b_);     \
    } while (0)

/* Decode text (a copy of exactly len bytes, no NUL: ASan sees overreads). */
static int decode_exact(const char *text, size_t len, const lc_wire_limits *lim,
                        lc_wire_buffers *buf, lc_wire_msg *msg, lc_wire_error *err)
{
    char *copy = xmalloc(len ? len : 1);
    assert_non_null(copy);
    memcpy(copy, text, len);
    int rc = lc_wire_decode(copy, len, lim, buf, msg, err);
    free(copy);
    return rc;
}

static int plan_exact(const char *text, size_t len, const lc_wire_limits *lim,
                      lc_wire_buffers *buf, lc_wire_plan_request *req, lc_wire_error *err)
{
    char *copy = xmalloc(len ? len : 1);
    assert_non_null(copy);
    memcpy(copy, text, len);
    int rc = lc_wire_decode_plan_request(copy, len, lim, buf, req, err);
    free(copy);
    return rc;
}

/* ---------------------------------------------------------- bad inputs */

#define HEAD "{'type':'scan','seq':7,'stamp':1.5,'pose':[0,0,0],"
#define ANG "'bearing_first':-1,'bearing_step':0.1,"
#define LIM "'near':0.1,'far':10,"
#define SCAN(tail) HEAD ANG LIM tail
#define PTS(tail) "{'type':'points','seq':3,'stamp':2,'pose':[0,0,0]," tail
#define ROUTE(tail) "{'type':'route','waypoints':[[0,0],[1,1]]" tail
#define ROBOT(tail) "{'type':'robot'" tail
#define RECT "[[0.5,-0.25],[0.5,0.25],[-0.5,0.25],[-0.5,-0.25]]"
#define FOOT(vertices) ROBOT(",'footprint':" vertices "}")
#define HELLO(tail) "{'type':'hello'" tail
#define FRAME "'frame':{'type':'scan','seq':9,'stamp':0,'pose':[0,0,0]," ANG LIM "'dist':[1,2]}"

enum { GENERIC = 0, PLAN = 1 };

typedef struct bad_case {
    int entry;
    const char *text;
    lc_wire_code code;
    const char *field; /* the message starts with "field:" */
} bad_case;

static const bad_case bad_cases[] = {
    /* JSON itself */
    {GENERIC, "", LC_WIRE_BAD_JSON, "message"},
    {GENERIC, "   ", LC_WIRE_BAD_JSON, "message"},
    {GENERIC, "{", LC_WIRE_BAD_JSON, "message"},
    {GENERIC, SCAN("'dist':[1,2"), LC_WIRE_BAD_JSON, "message"},
    {GENERIC, SCAN("'dist':[1,2]}x"), LC_WIRE_BAD_JSON, "message"},
    {GENERIC, SCAN("'dist':[1,2]} {}"), LC_WIRE_BAD_JSON, "message"},
    {GENERIC, SCAN("'dist':[1,NaN]}"), LC_WIRE_BAD_JSON, "message"},
    {GENERIC, SCAN("'dist':[1,Infinity]}"), LC_WIRE_BAD_JSON, "message"},
    {GENERIC, SCAN("'dist':[1,-Infinity]}"), LC_WIRE_BAD_JSON, "message"},
    {GENERIC, SCAN("'dist':[1,.5]}"), LC_WIRE_BAD_JSON, "message"},
    {GENERIC, SCAN("'dist':[1,0x10]}"), LC_WIRE_BAD_JSON, "message"},
    {GENERIC, "\x01{'type':'hello','role':'viewer'}", LC_WIRE_BAD_JSON, "message"},
    {GENERIC, "{'type':'hello','role':'vie\x02wer'}", LC_WIRE_BAD_JSON, "message"},
    /* message shape */
    {GENERIC, "[1,2]", LC_WIRE_BAD_MESSAGE, "message"},
    {GENERIC, "'scan'", LC_WIRE_BAD_MESSAGE, "message"},
    {GENERIC, "null", LC_WIRE_BAD_MESSAGE, "message"},
    {GENERIC, "{'seq':1}", LC_WIRE_BAD_MESSAGE, "type"},
    {GENERIC, "{'type':5}", LC_WIRE_BAD_MESSAGE, "type"},
    {GENERIC, "{'type':null}", LC_WIRE_BAD_MESSAGE, "type"},
    {GENERIC, "{'type':'teleport'}", LC_WIRE_UNKNOWN_TYPE, "type"},
    {GENERIC, "{'type':''}", LC_WIRE_UNKNOWN_TYPE, "type"},
    {GENERIC, "{'type':'Scan','seq':1}", LC_WIRE_UNKNOWN_TYPE, "type"},
    {GENERIC, "{'Type':'scan','seq':7}", LC_WIRE_BAD_MESSAGE, "type"},
    {GENERIC, SCAN("'dist':[1],'dist':[2]}"), LC_WIRE_BAD_MESSAGE, "scan.dist"},
    {GENERIC, SCAN("'dist':[1],'type':'scan'}"), LC_WIRE_BAD_MESSAGE, "scan.type"},
    /* frame header */
    {GENERIC, SCAN("'Dist':[1,2]}"), LC_WIRE_BAD_FIELD, "scan.dist"},
    {GENERIC, "{'type':'scan','seq':1.5,'stamp':0,'pose':[0,0,0]}", LC_WIRE_BAD_FIELD, "scan.seq"},
    {GENERIC, "{'type':'scan','seq':-1,'stamp':0,'pose':[0,0,0]}", LC_WIRE_BAD_FIELD, "scan.seq"},
    {GENERIC, "{'type':'scan','seq':1e16,'stamp':0,'pose':[0,0,0]}", LC_WIRE_BAD_FIELD, "scan.seq"},
    {GENERIC, "{'type':'scan','seq':'7','stamp':0,'pose':[0,0,0]}", LC_WIRE_BAD_FIELD, "scan.seq"},
    {GENERIC, "{'type':'scan','stamp':0,'pose':[0,0,0]}", LC_WIRE_BAD_FIELD, "scan.seq"},
    {GENERIC, "{'type':'scan','seq':1,'pose':[0,0,0]}", LC_WIRE_BAD_FIELD, "scan.stamp"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':'now','pose':[0,0,0]}", LC_WIRE_BAD_FIELD, "scan.stamp"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':1e400,'pose':[0,0,0]}", LC_WIRE_BAD_FIELD, "scan.stamp"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':0}", LC_WIRE_BAD_FIELD, "scan.pose"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':0,'pose':[0,0]}", LC_WIRE_BAD_FIELD, "scan.pose"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':0,'pose':[0,0,0,0]}", LC_WIRE_BAD_FIELD, "scan.pose"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':0,'pose':[0,null,0]}", LC_WIRE_BAD_FIELD, "scan.pose[1]"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':0,'pose':[0,0,1e400]}", LC_WIRE_BAD_FIELD, "scan.pose[2]"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':0,'pose':[0,2e9,0]}", LC_WIRE_BAD_FIELD, "scan.pose[1]"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':0,'pose':{'x':0}}", LC_WIRE_BAD_FIELD, "scan.pose"},
    {GENERIC, "{'type':'scan','seq':1,'stamp':0,'pose':[0,0,0],'mount':0}", LC_WIRE_BAD_FIELD, "scan.mount"},
    /* scan geometry */
    {GENERIC, HEAD "'bearing_first':0,'bearing_step':0," LIM "'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.bearing_step"},
    {GENERIC, HEAD "'bearing_first':0,'bearing_step':-0.0," LIM "'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.bearing_step"},
    {GENERIC, HEAD "'bearing_first':0,'bearing_step':'0.1'," LIM "'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.bearing_step"},
    {GENERIC, HEAD "'bearing_first':0,'bearing_step':7," LIM "'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.bearing_step"},
    {GENERIC, HEAD "'bearing_first':0,'bearing_step':1," LIM "'dist':[1,1,1,1,1,1,1,1]}", LC_WIRE_BAD_FIELD, "scan.bearing_step"},
    {GENERIC, HEAD "'bearing_step':0.1," LIM "'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.bearing_first"},
    {GENERIC, HEAD ANG "'near':0,'far':10,'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.near"},
    {GENERIC, HEAD ANG "'near':-1,'far':10,'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.near"},
    {GENERIC, HEAD ANG "'near':5,'far':1,'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.far"},
    {GENERIC, HEAD ANG "'near':5,'far':5,'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.far"},
    {GENERIC, HEAD ANG "'near':0.1,'dist':[1]}", LC_WIRE_BAD_FIELD, "scan.far"},
    {GENERIC, SCAN("'dist':[]}"), LC_WIRE_BAD_FIELD, "scan.dist"},
    {GENERIC, SCAN("'dist':{}}"), LC_WIRE_BAD_FIELD, "scan.dist"},
    {GENERIC, SCAN("'dist':5}"), LC_WIRE_BAD_FIELD, "scan.dist"},
    {GENERIC, SCAN("'range':[1]}"), LC_WIRE_BAD_FIELD, "scan.dist"},
    {GENERIC, SCAN("'dist':[1,2,'far',3]}"), LC_WIRE_BAD_FIELD, "scan.dist[2]"},
    {GENERIC, SCAN("'dist':[true]}"), LC_WIRE_BAD_FIELD, "scan.dist[0]"},
    {GENERIC, SCAN("'dist':[1,[2]]}"), LC_WIRE_BAD_FIELD, "scan.dist[1]"},
    {GENERIC, SCAN("'dist':[1,1e400]}"), LC_WIRE_BAD_FIELD, "scan.dist[1]"},
    {GENERIC, SCAN("'dist':[1,-1e400]}"), LC_WIRE_BAD_FIELD, "scan.dist[1]"},
    /* points */
    {GENERIC, PTS("'xy':[1,2,3]}"), LC_WIRE_BAD_FIELD, "points.xy"},
    {GENERIC, PTS("'xy':[1,null]}"), LC_WIRE_BAD_FIELD, "points.xy[1]"},
    {GENERIC, PTS("'xy':[1,2],'z':[1,2]}"), LC_WIRE_BAD_FIELD, "points.z"},
    {GENERIC, PTS("'xy':[1,2,3,4],'z':[1]}"), LC_WIRE_BAD_FIELD, "points.z"},
    {GENERIC, PTS("'xy':[1,2],'z':['up']}"), LC_WIRE_BAD_FIELD, "points.z[0]"},
    {GENERIC, PTS("'xy':[1,2],'z':7}"), LC_WIRE_BAD_FIELD, "points.z"},
    {GENERIC, PTS("'z':[1]}"), LC_WIRE_BAD_FIELD, "points.xy"},
    {GENERIC, PTS("'xy':[1,2],'xy':[3,4]}"), LC_WIRE_BAD_MESSAGE, "points.xy"},
    /* route */
    {GENERIC, "{'type':'route'}", LC_WIRE_BAD_FIELD, "route.waypoints"},
    {GENERIC, "{'type':'route','waypoints':[[0,0],[1,1,1]]}", LC_WIRE_BAD_FIELD, "route.waypoints[1]"},
    {GENERIC, "{'type':'route','waypoints':[[0]]}", LC_WIRE_BAD_FIELD, "route.waypoints[0]"},
    {GENERIC, "{'type':'route','waypoints':[5]}", LC_WIRE_BAD_FIELD, "route.waypoints[0]"},
    {GENERIC, "{'type':'route','waypoints':[[0,'a']]}", LC_WIRE_BAD_FIELD, "route.waypoints[0][1]"},
    {GENERIC, ROUTE(",'tolerance':0}"), LC_WIRE_BAD_FIELD, "route.tolerance"},
    {GENERIC, ROUTE(",'tolerance':-1}"), LC_WIRE_BAD_FIELD, "route.tolerance"},
    {GENERIC, ROUTE(",'loop':'yes'}"), LC_WIRE_BAD_FIELD, "route.loop"},
    {GENERIC, ROUTE(",'loop':1}"), LC_WIRE_BAD_FIELD, "route.loop"},
    {GENERIC, ROUTE(",'on_blocked':'retry'}"), LC_WIRE_BAD_FIELD, "route.on_blocked"},
    {GENERIC, ROUTE(",'blocked_time':0}"), LC_WIRE_BAD_FIELD, "route.blocked_time"},
    {GENERIC, ROUTE(",'progress':-0.1}"), LC_WIRE_BAD_FIELD, "route.progress"},
    /* robot */
    {GENERIC, ROBOT(",'radius':0}"), LC_WIRE_BAD_FIELD, "robot.radius"},
    {GENERIC, ROBOT(",'radius':-0.3}"), LC_WIRE_BAD_FIELD, "robot.radius"},
    {GENERIC, ROBOT(",'radius':1e10}"), LC_WIRE_BAD_FIELD, "robot.radius"},
    {GENERIC, ROBOT(",'margin':-0.01}"), LC_WIRE_BAD_FIELD, "robot.margin"},
    {GENERIC, ROBOT(",'z_min':0.5,'z_max':0.2}"), LC_WIRE_BAD_FIELD, "robot.z_max"},
    {GENERIC, ROBOT(",'z_min':0.5,'z_max':0.5}"), LC_WIRE_BAD_FIELD, "robot.z_max"},
    {GENERIC, ROBOT(",'z_max':-1e10}"), LC_WIRE_BAD_FIELD, "robot.z_max"},
    {GENERIC, ROBOT(",'z_min':'low'}"), LC_WIRE_BAD_FIELD, "robot.z_min"},
    {GENERIC, ROBOT(",'v_max':0}"), LC_WIRE_BAD_FIELD, "robot.v_max"},
    {GENERIC, ROBOT(",'a_max':-1}"), LC_WIRE_BAD_FIELD, "robot.a_max"},
    {GENERIC, ROBOT(",'w_max':0}"), LC_WIRE_BAD_FIELD, "robot.w_max"},
    {GENERIC, ROBOT(",'dw_max':0}"), LC_WIRE_BAD_FIELD, "robot.dw_max"},
    {GENERIC, ROBOT(",'model':'tank'}"), LC_WIRE_BAD_FIELD, "robot.model"},
    {GENERIC, ROBOT(",'model':1}"), LC_WIRE_BAD_FIELD, "robot.model"},
    {GENERIC, ROBOT(",'reverse':'no'}"), LC_WIRE_BAD_FIELD, "robot.reverse"},
    /* a polygon footprint: the vertex at fault, else the footprint */
    {GENERIC, FOOT("[[1,0],[0,1]]"), LC_WIRE_BAD_FIELD, "robot.footprint"},
    {GENERIC, FOOT("[]"), LC_WIRE_BAD_FIELD, "robot.footprint"},
    {GENERIC, FOOT("{}"), LC_WIRE_BAD_FIELD, "robot.footprint"},
    {GENERIC, FOOT("[[1,0],[0.9,0.4],[0.7,0.7],[0.4,0.9],[0,1],[-0.4,0.9],[-0.7,0.7],[-0.9,0.4],"
                   "[-1,0],[-0.9,-0.4],[-0.7,-0.7],[-0.4,-0.9],[0,-1],[0.4,-0.9],[0.7,-0.7],"
                   "[0.9,-0.4],[0.95,-0.2]]"), LC_WIRE_BAD_FIELD, "robot.footprint"},
    {GENERIC, FOOT("[[1,0],[0,1,2],[-1,-1]]"), LC_WIRE_BAD_FIELD, "robot.footprint[1]"},
    {GENERIC, FOOT("[[1,0],[0,'a'],[-1,-1]]"), LC_WIRE_BAD_FIELD, "robot.footprint[1][1]"},
    {GENERIC, FOOT("[[200,0],[0,1],[-1,-1]]"), LC_WIRE_BAD_FIELD, "robot.footprint[0]"},
    {GENERIC, FOOT("[[0.5,-0.25],[-0.5,-0.25],[-0.5,0.25],[0.5,0.25]]"), LC_WIRE_BAD_FIELD,
     "robot.footprint"}, /* clockwise */
    {GENERIC, FOOT("[[0.5,-0.25],[0.5,0.25],[0,0.1],[-0.5,0.25],[-0.5,-0.25]]"),
     LC_WIRE_BAD_FIELD, "robot.footprint[2]"}, /* dented */
    {GENERIC, FOOT("[[0.5,-0.25],[0.5,0.25],[0,0.25],[-0.5,0.25],[-0.5,-0.25]]"),
     LC_WIRE_BAD_FIELD, "robot.footprint[2]"}, /* on its neighbours' line */
    {GENERIC, FOOT("[[0.5,-0.25],[0.5,0.25],[0.5,0.2504],[-0.5,0.25],[-0.5,-0.25]]"),
     LC_WIRE_BAD_FIELD, "robot.footprint[2]"}, /* a repeated vertex */
    {GENERIC, FOOT("[[1,0],[-0.809017,0.587785],[0.309017,-0.951057],[0.309017,0.951057],"
                   "[-0.809017,-0.587785]]"), LC_WIRE_BAD_FIELD, "robot.footprint"}, /* crosses itself */
    {GENERIC, FOOT("[[2,-1],[3,-1],[3,1],[2,1]]"), LC_WIRE_BAD_FIELD, "robot.footprint"}, /* centre out */
    {GENERIC, ROBOT(",'radius':0.3,'footprint':" RECT "}"), LC_WIRE_BAD_FIELD, "robot.radius"},
    {GENERIC, ROBOT(",'footprint':" RECT ",'footprint':" RECT "}"), LC_WIRE_BAD_MESSAGE,
     "robot.footprint"},
    /* hello */
    {GENERIC, HELLO("}"), LC_WIRE_BAD_FIELD, "hello.role"},
    {GENERIC, HELLO(",'role':'admin','robot':'a'}"), LC_WIRE_BAD_FIELD, "hello.role"},
    {GENERIC, HELLO(",'role':'robot'}"), LC_WIRE_BAD_FIELD, "hello.robot"},
    {GENERIC, HELLO(",'role':'robot','robot':''}"), LC_WIRE_BAD_FIELD, "hello.robot"},
    {GENERIC, HELLO(",'role':'robot','robot':'../etc'}"), LC_WIRE_BAD_FIELD, "hello.robot"},
    {GENERIC, HELLO(",'role':'robot','robot':'a/b'}"), LC_WIRE_BAD_FIELD, "hello.robot"},
    {GENERIC, HELLO(",'role':'robot','robot':'.hidden'}"), LC_WIRE_BAD_FIELD, "hello.robot"},
    {GENERIC, HELLO(",'role':'robot','robot':"
                    "'aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa'}"),
     LC_WIRE_BAD_FIELD, "hello.robot"},
    {GENERIC, HELLO(",'role':'viewer','robot':7}"), LC_WIRE_BAD_FIELD, "hello.robot"},
    {GENERIC, HELLO(",'role':'robot','robot':'r1','token':42}"), LC_WIRE_BAD_FIELD, "hello.token"},
    {GENERIC, HELLO(",'role':'robot','robot':'r1','token':'a\\u0001b'}"), LC_WIRE_BAD_FIELD, "hello.token"},
    /* server -> client messages */
    {GENERIC, "{'type':'setpoint','seq':1,'stamp':0,'vx':0,'vy':0,'v':0,'w':0,"
              "'state':'idle','limit':'idle'}", LC_WIRE_BAD_FIELD, "setpoint.v"},
    {GENERIC, "{'type':'setpoint','seq':1,'stamp':0,'vx':0,'state':'idle','limit':'idle'}",
     LC_WIRE_BAD_FIELD, "setpoint.vy"},
    {GENERIC, "{'type':'setpoint','seq':1,'stamp':0,'vx':0,'vy':0,'state':'napping',"
              "'limit':'idle'}", LC_WIRE_BAD_FIELD, "setpoint.state"},
    {GENERIC, "{'type':'setpoint','seq':1,'stamp':0,'v':0,'w':0,'state':'idle',"
              "'limit':'idle','waypoint':1.5}", LC_WIRE_BAD_FIELD, "setpoint.waypoint"},
    {GENERIC, "{'type':'event','event':'teleported','stamp':0}", LC_WIRE_BAD_FIELD, "event.event"},
    {GENERIC, "{'type':'error','code':'oops','message':'x'}", LC_WIRE_BAD_FIELD, "error.code"},
    {GENERIC, "{'type':'welcome','role':'robot','robot':'r1'}", LC_WIRE_BAD_FIELD, "welcome.protocol"},
    /* the plan request */
    {PLAN, "[]", LC_WIRE_BAD_MESSAGE, "request"},
    {PLAN, "{'goal':[1,0]}", LC_WIRE_BAD_FIELD, "frame"},
    {PLAN, "{" FRAME "}", LC_WIRE_BAD_FIELD, "goal"},
    {PLAN, "{'goal':[1,0,0]," FRAME "}", LC_WIRE_BAD_FIELD, "goal"},
    {PLAN, "{'goal':[1,0],'dt':0," FRAME "}", LC_WIRE_BAD_FIELD, "dt"},
    {PLAN, "{'goal':[1,0],'dt':-0.05," FRAME "}", LC_WIRE_BAD_FIELD, "dt"},
    {PLAN, "{'goal':[1,0],'dt':5," FRAME "}", LC_WIRE_BAD_FIELD, "dt"},
    {PLAN, "{'goal':[1,0],'velocity':'fast'," FRAME "}", LC_WIRE_BAD_FIELD, "velocity"},
    {PLAN, "{'goal':[1,0],'robot':{'radius':0}," FRAME "}", LC_WIRE_BAD_FIELD, "robot.radius"},
    {PLAN, "{'goal':[1,0],'robot':{'footprint':[[1,0],[0,1],[-1,0],[-1,0.0004]]}," FRAME "}",
     LC_WIRE_BAD_FIELD, "robot.footprint[3]"},
    {PLAN, "{'goal':[1,0],'robot':[1]," FRAME "}", LC_WIRE_BAD_FIELD, "robot"},
    {PLAN, "{'goal':[1,0],'robot':{'type':'route'}," FRAME "}", LC_WIRE_BAD_FIELD, "robot.type"},
    {PLAN, "{'goal':[1,0],'frame':7}", LC_WIRE_BAD_FIELD, "frame"},
    {PLAN, "{'goal':[1,0],'frame':{'seq':1}}", LC_WIRE_BAD_FIELD, "frame.type"},
    {PLAN, "{'goal':[1,0],'frame':{'type':'hello'}}", LC_WIRE_BAD_FIELD, "frame.type"},
    {PLAN, "{'goal':[1,0],'frame':{'type':'scan','seq':9,'stamp':0,'pose':[0,0,0]," ANG LIM
           "'dist':[1,'x']}}", LC_WIRE_BAD_FIELD, "frame.dist[1]"},
    {PLAN, "{'type':'plan','goal':[1,0]," FRAME "}", LC_WIRE_BAD_FIELD, "type"},
    {PLAN, "{'goal':[1,0],'goal':[2,0]," FRAME "}", LC_WIRE_BAD_MESSAGE, "goal"},
};

static void test_bad_inputs(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    int n = (int)(sizeof bad_cases / sizeof bad_cases[0]);
    assert_true(n >= 40);
    for (int i = 0; i < n; i++) {
        const bad_case *c = &bad_cases[i];
        char *text = unquote(c->text);
        lc_wire_error err;
        int rc = c->entry == PLAN ? plan_exact(text, strlen(text), NULL, &buf, &req, &err)
                                  : decode_exact(text, strlen(text), NULL, &buf, &msg, &err);
        if (rc != -1 || err.code != c->code || !lc_test_names_field(err.message, c->field))
            fail_msg("case %d %s: rc %d code %s message \"%s\"; wanted %s naming %s", i, text,
                     rc, lc_wire_code_name(err.code), err.message, lc_wire_code_name(c->code),
                     c->field);
        free(text);
    }
    lc_wire_buffers_free(&buf);
}

/* Messages that are fine: unknown fields, defaults, null beams, optional parts. */
static const char *const good_cases[] = {
    SCAN("'dist':[1,null,2],'future_field':{'a':[1,2,3]}}"),
    SCAN("'dist':[1],'mount':[0.1,0,0]}"),
    PTS("'xy':[]}"),
    PTS("'xy':[1,2],'z':null}"),
    "{'type':'route','waypoints':[]}",
    "{'type':'robot'}",
    "{'type':'hello','role':'viewer'}",
    "{'type':'hello','role':'viewer','robot':''}",
    "{'type':'hello','role':'viewer','robot':null,'token':null}",
    "{'type':'hello','role':'robot','robot':'A.b-c_9','token':''}",
    "{'type':'view','anything':1}",
    "  \n{'type':'robot'}\r\n\t ",
};

static void test_good_inputs(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    for (size_t i = 0; i < sizeof good_cases / sizeof good_cases[0]; i++) {
        char *text = unquote(good_cases[i]);
        lc_wire_error err;
        if (decode_exact(text, strlen(text), NULL, &buf, &msg, &err) != 0)
            fail_msg("%s: %s %s", text, lc_wire_code_name(err.code), err.message);
        assert_int_not_equal(msg.type, LC_MSG_NONE);
        free(text);
    }
    lc_wire_buffers_free(&buf);
}

/* Null and out-of-limit beams are "no return" (NAN); the rest is kept as sent. */
static void test_scan_no_return(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    lc_wire_error err;
    char *text = unquote(SCAN("'dist':[0.1,null,0.05,10,10.5,-3,5.25]}"));
    assert_int_equal(decode_exact(text, strlen(text), NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.type, LC_MSG_SCAN);
    const lc_frame *f = &msg.u.frame;
    assert_int_equal(f->n_ranges, 7);
    assert_true(f->ranges[0] == 0.1);
    assert_true(isnan(f->ranges[1]));
    assert_true(isnan(f->ranges[2]));
    assert_true(f->ranges[3] == 10.0);
    assert_true(isnan(f->ranges[4]));
    assert_true(isnan(f->ranges[5]));
    assert_true(f->ranges[6] == 5.25);
    assert_int_equal(f->seq, 7);
    assert_true(f->mount.x == 0.0 && f->mount.y == 0.0 && f->mount.yaw == 0.0);
    free(text);
    lc_wire_buffers_free(&buf);
}

/* The error carries the seq when the message had a readable one. */
static void test_error_seq(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    lc_wire_error err;
    char *a = unquote(SCAN("'dist':[1,'x']}"));
    assert_int_equal(decode_exact(a, strlen(a), NULL, &buf, &msg, &err), -1);
    assert_true(err.has_seq);
    assert_int_equal(err.seq, 7);
    char *b = unquote("{'type':'teleport','seq':12}");
    assert_int_equal(decode_exact(b, strlen(b), NULL, &buf, &msg, &err), -1);
    assert_int_equal(err.code, LC_WIRE_UNKNOWN_TYPE);
    assert_true(err.has_seq);
    assert_int_equal(err.seq, 12);
    char *c = unquote("{'type':'scan','seq':-4}");
    assert_int_equal(decode_exact(c, strlen(c), NULL, &buf, &msg, &err), -1);
    assert_false(err.has_seq);
    assert_int_equal(decode_exact("{", 1, NULL, &buf, &msg, &err), -1);
    assert_false(err.has_seq);
    free(a);
    free(b);
    free(c);
    lc_wire_buffers_free(&buf);
}

/* seq up to 2^53 is kept exactly. */
static void test_seq_limit(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    lc_wire_error err;
    char *text = unquote("{'type':'scan','seq':9007199254740992,'stamp':0,'pose':[0,0,0],"
                         ANG LIM "'dist':[1]}");
    assert_int_equal(decode_exact(text, strlen(text), NULL, &buf, &msg, &err), 0);
    assert_true(msg.u.frame.seq == INT64_C(9007199254740992));
    free(text);
    text = unquote("{'type':'scan','seq':9007199254740994,'stamp':0,'pose':[0,0,0]}");
    assert_int_equal(decode_exact(text, strlen(text), NULL, &buf, &msg, &err), -1);
    assert_true(lc_test_names_field(err.message, "scan.seq"));
    free(text);
    lc_wire_buffers_free(&buf);
}

/* --------------------------------------------- generated large inputs */

static char *repeat_text(const char *head, const char *item, int n, const char *tail)
{
    size_t len = strlen(head) + (size_t)n * (strlen(item) + 1) + strlen(tail) + 1;
    char *s = xmalloc(len);
    assert_non_null(s);
    char *p = s;
    p += sprintf(p, "%s", head);
    for (int i = 0; i < n; i++)
        p += sprintf(p, "%s%s", i ? "," : "", item);
    sprintf(p, "%s", tail);
    return s;
}

static void expect_error(const char *text, const lc_wire_limits *lim, lc_wire_code code,
                         const char *field)
{
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    lc_wire_error err;
    int rc = decode_exact(text, strlen(text), lim, &buf, &msg, &err);
    if (rc != -1 || err.code != code || !lc_test_names_field(err.message, field))
        fail_msg("rc %d %s \"%s\"; wanted %s naming %s", rc, lc_wire_code_name(err.code),
                 err.message, lc_wire_code_name(code), field);
    lc_wire_buffers_free(&buf);
}

static void test_deep_nesting(void **state)
{
    (void)state;
    int depth = 2000;
    char *s = xmalloc((size_t)depth * 2 + 64);
    assert_non_null(s);
    char *p = s + sprintf(s, "{\"type\":\"robot\",\"x\":");
    for (int i = 0; i < depth; i++)
        *p++ = '[';
    for (int i = 0; i < depth; i++)
        *p++ = ']';
    strcpy(p, "}");
    expect_error(s, NULL, LC_WIRE_BAD_JSON, "message");
    /* Nesting within cJSON's limit in an unknown field is ignored. */
    p = s + sprintf(s, "{\"type\":\"robot\",\"x\":");
    for (int i = 0; i < 500; i++)
        *p++ = '[';
    for (int i = 0; i < 500; i++)
        *p++ = ']';
    strcpy(p, "}");
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    lc_wire_error err;
    assert_int_equal(lc_wire_decode(s, strlen(s), NULL, &buf, &msg, &err), 0);
    free(s);
}

static void test_huge_counts(void **state)
{
    (void)state;
    /* default maximum 100000 beams: 100000 pass, 100001 do not */
    char head[256];
    snprintf(head, sizeof head, "{\"type\":\"scan\",\"seq\":1,\"stamp\":0,\"pose\":[0,0,0],"
                                "\"bearing_first\":0,\"bearing_step\":1e-5,\"near\":0.1,"
                                "\"far\":10,\"dist\":[");
    char *ok = repeat_text(head, "1", 100000, "]}");
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    lc_wire_error err;
    assert_int_equal(lc_wire_decode(ok, strlen(ok), NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.frame.n_ranges, 100000);
    lc_wire_buffers_free(&buf);
    char *bad = repeat_text(head, "1", 100001, "]}");
    expect_error(bad, NULL, LC_WIRE_BAD_FIELD, "scan.dist");
    /* a configured maximum */
    lc_wire_limits lim;
    lc_wire_limits_default(&lim);
    lim.max_beams = 10;
    lim.max_points = 3;
    char *eleven = repeat_text(head, "1", 11, "]}");
    expect_error(eleven, &lim, LC_WIRE_BAD_FIELD, "scan.dist");
    char *pts = repeat_text("{\"type\":\"points\",\"seq\":1,\"stamp\":0,\"pose\":[0,0,0],"
                            "\"xy\":[", "1", 8, "]}");
    expect_error(pts, &lim, LC_WIRE_BAD_FIELD, "points.xy");
    /* route longer than LC_ROUTE_MAX */
    char *route = repeat_text("{\"type\":\"route\",\"waypoints\":[", "[1,2]", LC_ROUTE_MAX + 1,
                              "]}");
    expect_error(route, NULL, LC_WIRE_BAD_FIELD, "route.waypoints");
    char *route_ok = repeat_text("{\"type\":\"route\",\"waypoints\":[", "[1,2]", LC_ROUTE_MAX,
                                 "]}");
    static lc_wire_msg m2;
    assert_int_equal(lc_wire_decode(route_ok, strlen(route_ok), NULL, &buf, &m2, &err), 0);
    assert_int_equal(m2.u.route.count, LC_ROUTE_MAX);
    /* longer than the message limit */
    lim.max_message = 100;
    expect_error(ok, &lim, LC_WIRE_TOO_LARGE, "message");
    free(ok);
    free(bad);
    free(eleven);
    free(pts);
    free(route);
    free(route_ok);
    lc_wire_buffers_free(&buf);
}

/* ------------------------------------------------------------ examples */

typedef struct example {
    const char *file;
    lc_msg_type type; /* LC_MSG_NONE: not a message (plan request, plan result) */
} example;

static const example examples[] = {
    {"proto/examples/hello.json", LC_MSG_HELLO},
    {"proto/examples/welcome.json", LC_MSG_WELCOME},
    {"proto/examples/robot.json", LC_MSG_ROBOT},
    {"proto/examples/route.json", LC_MSG_ROUTE},
    {"proto/examples/scan.json", LC_MSG_SCAN},
    {"proto/examples/points.json", LC_MSG_POINTS},
    {"proto/examples/setpoint.json", LC_MSG_SETPOINT},
    {"proto/examples/event.json", LC_MSG_EVENT},
    {"proto/examples/error.json", LC_MSG_ERROR},
    {"proto/examples/warning.json", LC_MSG_WARNING},
    {"proto/examples/view.json", LC_MSG_VIEW},
    {"proto/examples/scenario.json", LC_MSG_SCENARIO},
    {"proto/examples/plan_request.json", LC_MSG_NONE},
    {"proto/examples/plan_result.json", LC_MSG_NONE},
};
#define N_EXAMPLES ((int)(sizeof examples / sizeof examples[0]))

static void test_examples_decode(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    lc_wire_error err;
    for (int i = 0; i < N_EXAMPLES; i++) {
        size_t len;
        char *text = read_text(examples[i].file, &len);
        if (examples[i].type != LC_MSG_NONE) {
            if (decode_exact(text, len, NULL, &buf, &msg, &err) != 0)
                fail_msg("%s: %s", examples[i].file, err.message);
            assert_int_equal(msg.type, examples[i].type);
            if (err.ignored) /* the examples use only keys the codec knows */
                fail_msg("%s: %s", examples[i].file, err.ignored_keys);
        } else if (strstr(examples[i].file, "plan_request")) {
            if (plan_exact(text, len, NULL, &buf, &req, &err) != 0)
                fail_msg("%s: %s", examples[i].file, err.message);
            if (err.ignored)
                fail_msg("%s: %s", examples[i].file, err.ignored_keys);
        } else {
            cJSON *j = cJSON_ParseWithLength(text, len);
            assert_non_null(j);
            cJSON_Delete(j);
        }
        free(text);
    }
    lc_wire_buffers_free(&buf);
}

/* What the examples say, read back field by field. */
static void test_examples_content(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    lc_wire_error err;
    size_t len;
    char *t = read_text("proto/examples/scan.json", &len);
    assert_int_equal(lc_wire_decode(t, len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.frame.n_ranges, 9);
    assert_true(isnan(msg.u.frame.ranges[2]));  /* null */
    assert_true(isnan(msg.u.frame.ranges[5]));  /* 25 > range_max 12 */
    assert_true(msg.u.frame.ranges[8] == 6.6);
    assert_true(msg.u.frame.mount.x == 0.1);
    free(t);
    t = read_text("proto/examples/route.json", &len);
    assert_int_equal(lc_wire_decode(t, len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.route.count, 4);
    assert_true(msg.u.route.loop);
    assert_int_equal(msg.u.route.on_blocked, LC_BLOCKED_SKIP);
    assert_true(msg.u.route.blocked_time == 8.0);
    free(t);
    t = read_text("proto/examples/robot.json", &len);
    assert_int_equal(lc_wire_decode(t, len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.robot.model, LC_MODEL_UNICYCLE);
    assert_true(msg.u.robot.radius == 0.32);
    free(t);
    t = read_text("proto/examples/setpoint.json", &len);
    assert_int_equal(lc_wire_decode(t, len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.setpoint.model, LC_MODEL_UNICYCLE);
    assert_int_equal(msg.u.setpoint.state, LC_STATE_TRACKING);
    assert_int_equal(msg.u.setpoint.sp.limit, LC_LIMIT_BRAKING);
    assert_int_equal(msg.u.setpoint.waypoint, 1);
    assert_int_equal(msg.u.setpoint.valid_ms, 100);
    assert_true(msg.u.setpoint.sp.v == 0.43);
    free(t);
    t = read_text("proto/examples/warning.json", &len);
    assert_int_equal(lc_wire_decode(t, len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.warning.code, LC_WARN_SEQ_BACKWARDS);
    assert_true(msg.u.warning.has_seq && msg.u.warning.seq == 40);
    assert_true(lc_test_names_field(msg.u.warning.message, "scan.seq"));
    free(t);
    t = read_text("proto/examples/points.json", &len);
    assert_int_equal(lc_wire_decode(t, len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.frame.n_points, 5);
    assert_non_null(msg.u.frame.z);
    assert_true(msg.u.frame.z[4] == 0.9);
    free(t);
    t = read_text("proto/examples/plan_request.json", &len);
    assert_int_equal(lc_wire_decode_plan_request(t, len, NULL, &buf, &req, &err), 0);
    assert_true(req.goal.x == 5.0 && req.goal.y == 0.0);
    assert_true(req.has_velocity && req.velocity.vx == 0.2);
    assert_true(req.dt == 0.05);
    assert_true(req.robot.w_max == 1.0); /* default kept */
    assert_int_equal(req.frame.kind, LC_FRAME_SCAN);
    assert_int_equal(req.frame.n_ranges, 5);
    free(t);
    lc_wire_buffers_free(&buf);
}

/* Defaults of docs/INTERFACES.md when fields are left out. */
static void test_defaults(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    lc_wire_error err;
    const char *r = "{\"type\":\"robot\"}";
    assert_int_equal(lc_wire_decode(r, strlen(r), NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.robot.model, LC_MODEL_POINT);
    assert_true(msg.u.robot.radius == 0.30 && msg.u.robot.margin == 0.05);
    assert_true(msg.u.robot.v_max == 0.8 && msg.u.robot.a_max == 0.5);
    assert_true(msg.u.robot.w_max == 1.0 && msg.u.robot.dw_max == 2.0);
    const char *rt = "{\"type\":\"route\",\"waypoints\":[[1,2]]}";
    assert_int_equal(lc_wire_decode(rt, strlen(rt), NULL, &buf, &msg, &err), 0);
    assert_false(msg.u.route.loop);
    assert_true(msg.u.route.tolerance == 0.25);
    char *p = unquote("{'goal':[1,2],'frame':{'seq':1,'stamp':0,'pose':[0,0,0],'xy':[1,1]}}");
    assert_int_equal(lc_wire_decode_plan_request(p, strlen(p), NULL, &buf, &req, &err), 0);
    assert_true(req.dt == 0.05);
    assert_false(req.has_velocity);
    assert_true(req.velocity.vx == 0.0 && req.velocity.v == 0.0);
    assert_int_equal(req.frame.kind, LC_FRAME_POINTS); /* inferred from xy */
    assert_null(req.frame.z);
    free(p);
    /* unicycle velocity is (v, w) */
    p = unquote("{'robot':{'model':'unicycle'},'goal':[1,2],'velocity':[0.3,-0.2],"
                "'frame':{'seq':1,'stamp':0,'pose':[0,0,0],'xy':[1,1]}}");
    assert_int_equal(lc_wire_decode_plan_request(p, strlen(p), NULL, &buf, &req, &err), 0);
    assert_true(req.velocity.v == 0.3 && req.velocity.w == -0.2);
    free(p);
    lc_wire_buffers_free(&buf);
}

/* ---------------------------------------------------------- round trips */

/* A random finite double within the codec's magnitude bound, in many forms. */
static double random_double(lc_rng *r, bool positive)
{
    double x;
    switch (lc_rng_next(r) % 8) {
    case 0: x = lc_rng_uniform(r, -1e9, 1e9); break;
    case 1: x = ldexp(lc_rng_uniform(r, -1.0, 1.0), -(int)(lc_rng_next(r) % 1074)); break;
    case 2: x = (double)((int64_t)(lc_rng_next(r) % 2000001) - 1000000); break;
    case 3: x = (double)(lc_rng_next(r) % 1000) / 10.0; break; /* 0.1-style decimals */
    case 4: x = lc_rng_uniform(r, -10.0, 10.0); break;
    case 5: x = (lc_rng_next(r) & 1) ? 1e9 : -1e9; break;
    case 6: x = (lc_rng_next(r) & 1) ? 0.0 : -0.0; break;
    default: x = nextafter(lc_rng_uniform(r, -1.0, 1.0), 2.0); break;
    }
    if (positive) {
        x = fabs(x);
        if (x == 0.0)
            x = 4.9406564584124654e-324;
    }
    return x;
}

static void check_roundtrip_frame(const lc_frame *a, lc_wire_text *t, lc_wire_buffers *buf)
{
    static lc_wire_msg msg;
    lc_wire_error err;
    assert_int_equal(lc_wire_encode_frame(t, a), 0);
    if (lc_wire_decode(t->s, (size_t)t->len, NULL, buf, &msg, &err) != 0)
        fail_msg("%s\n%.300s", err.message, t->s);
    const lc_frame *b = &msg.u.frame;
    assert_int_equal(b->kind, a->kind);
    assert_true(b->seq == a->seq);
    assert_same_double(b->stamp, a->stamp);
    assert_same_double(b->pose.x, a->pose.x);
    assert_same_double(b->pose.y, a->pose.y);
    assert_same_double(b->pose.yaw, a->pose.yaw);
    assert_same_double(b->mount.x, a->mount.x);
    assert_same_double(b->mount.y, a->mount.y);
    assert_same_double(b->mount.yaw, a->mount.yaw);
    assert_int_equal(b->has_mount, a->has_mount);
    assert_string_equal(b->sensor, a->sensor);
    if (a->kind == LC_FRAME_SCAN) {
        assert_same_double(b->angle_start, a->angle_start);
        assert_same_double(b->angle_step, a->angle_step);
        assert_same_double(b->range_min, a->range_min);
        assert_same_double(b->range_max, a->range_max);
        assert_int_equal(b->n_ranges, a->n_ranges);
        for (int i = 0; i < a->n_ranges; i++) {
            if (isnan(a->ranges[i]))
                assert_true(isnan(b->ranges[i]));
            else
                assert_same_double(b->ranges[i], a->ranges[i]);
        }
    } else {
        assert_int_equal(b->n_points, a->n_points);
        for (int i = 0; i < 2 * a->n_points; i++)
            assert_same_double(b->xy[i], a->xy[i]);
        assert_int_equal(b->z != NULL, a->z != NULL);
        for (int i = 0; a->z && i < a->n_points; i++)
            assert_same_double(b->z[i], a->z[i]);
    }
}

static void random_pose(lc_rng *r, lc_pose *p)
{
    p->x = random_double(r, false);
    p->y = random_double(r, false);
    p->yaw = random_double(r, false);
}

static void test_roundtrip_frames(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 20240611);
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    double ranges[400], xy[800], z[400];
    for (int iter = 0; iter < 300; iter++) {
        lc_frame f = {0};
        f.seq = (int64_t)(lc_rng_next(&rng) % (UINT64_C(1) << 53));
        f.stamp = random_double(&rng, false) * (iter % 3 == 0 ? 1e6 : 1.0);
        random_pose(&rng, &f.pose);
        /* a mount goes on the wire only when the frame carries one */
        f.has_mount = iter % 5 != 0;
        if (f.has_mount)
            random_pose(&rng, &f.mount);
        if (iter % 3 == 1)
            snprintf(f.sensor, sizeof f.sensor, "s%d.-_Z", iter);
        if (iter % 2 == 0) {
            int n = 1 + (int)(lc_rng_next(&rng) % 400);
            f.kind = LC_FRAME_SCAN;
            f.angle_start = random_double(&rng, false);
            do
                f.angle_step = lc_rng_uniform(&rng, -1.0, 1.0) * 2.0 * LC_PI / n;
            while (f.angle_step == 0.0);
            f.range_min = lc_rng_uniform(&rng, 1e-3, 1.0);
            f.range_max = f.range_min + random_double(&rng, true) + 1.0;
            if (f.range_max > 1e9)
                f.range_max = 1e9;
            for (int i = 0; i < n; i++)
                ranges[i] = (lc_rng_next(&rng) % 5 == 0)
                                ? NAN
                                : lc_rng_uniform(&rng, f.range_min, f.range_max);
            ranges[0] = f.range_min; /* the limits themselves are returns */
            ranges[n - 1] = f.range_max;
            f.ranges = ranges;
            f.n_ranges = n;
        } else {
            int n = (int)(lc_rng_next(&rng) % 400);
            f.kind = LC_FRAME_POINTS;
            for (int i = 0; i < 2 * n; i++)
                xy[i] = random_double(&rng, false);
            for (int i = 0; i < n; i++)
                z[i] = random_double(&rng, false);
            f.xy = xy;
            f.z = (iter % 4 == 1) ? z : NULL;
            f.n_points = n;
        }
        check_roundtrip_frame(&f, &t, &buf);
    }
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

static void test_roundtrip_robot_route(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 77);
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static lc_route route;
    lc_wire_error err;
    for (int iter = 0; iter < 200; iter++) {
        lc_robot a = {
            .model = (iter & 1) ? LC_MODEL_UNICYCLE : LC_MODEL_POINT,
            .radius = random_double(&rng, true),
            .margin = fabs(random_double(&rng, false)),
            .v_max = random_double(&rng, true),
            .a_max = random_double(&rng, true),
            .w_max = random_double(&rng, true),
            .dw_max = random_double(&rng, true),
            .reverse = (iter & 2) != 0,
            .z_min = (iter & 4) ? -0.5 * fabs(random_double(&rng, false)) - 1e-3 : -INFINITY,
            .z_max = (iter & 4) ? fabs(random_double(&rng, false)) : INFINITY,
        };
        if (iter % 3 == 0) { /* a polygon footprint: radius its circumscribed radius */
            lc_vec2 fp[LC_FOOTPRINT_MAX];
            int n, at;
            do {
                n = 3 + (int)(lc_rng_next(&rng) % 14);
                lc_test_random_convex(&rng, lc_v2(0.01 * random_double(&rng, false), 0),
                                      fabs(random_double(&rng, true)) + 0.1, n, fp);
            } while (lc_footprint_check(fp, n, &at) != LC_FOOTPRINT_OK);
            assert_int_equal(lc_robot_set_footprint(&a, fp, n), LC_OK);
        }
        assert_int_equal(lc_wire_encode_robot(&t, &a), 0);
        if (lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err) != 0)
            fail_msg("%s\n%s", err.message, t.s);
        assert_int_equal(msg.type, LC_MSG_ROBOT);
        const lc_robot *b = &msg.u.robot;
        assert_int_equal(b->n_footprint, a.n_footprint);
        for (int i = 0; i < a.n_footprint; i++) {
            assert_same_double(b->footprint[i].x, a.footprint[i].x);
            assert_same_double(b->footprint[i].y, a.footprint[i].y);
        }
        assert_int_equal(b->model, a.model);
        assert_int_equal(b->reverse, a.reverse);
        assert_same_double(b->radius, a.radius);
        assert_same_double(b->margin, a.margin);
        assert_same_double(b->v_max, a.v_max);
        assert_same_double(b->a_max, a.a_max);
        assert_same_double(b->z_min, a.z_min);
        assert_same_double(b->z_max, a.z_max);
        assert_same_double(b->w_max, a.w_max);
        assert_same_double(b->dw_max, a.dw_max);

        lc_route_default(&route);
        route.count = (int)(lc_rng_next(&rng) % 50) + (iter == 0 ? LC_ROUTE_MAX - 50 : 0);
        for (int i = 0; i < route.count; i++)
            route.waypoints[i] = lc_v2(random_double(&rng, false), random_double(&rng, false));
        route.loop = (iter & 1) != 0;
        route.tolerance = random_double(&rng, true);
        route.on_blocked = (iter & 2) ? LC_BLOCKED_SKIP : LC_BLOCKED_WAIT;
        route.blocked_time = random_double(&rng, true);
        route.progress = fabs(random_double(&rng, false));
        assert_int_equal(lc_wire_encode_route(&t, &route), 0);
        if (lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err) != 0)
            fail_msg("%s", err.message);
        const lc_route *rb = &msg.u.route;
        assert_int_equal(rb->count, route.count);
        assert_int_equal(rb->loop, route.loop);
        assert_int_equal(rb->on_blocked, route.on_blocked);
        assert_same_double(rb->tolerance, route.tolerance);
        assert_same_double(rb->blocked_time, route.blocked_time);
        assert_same_double(rb->progress, route.progress);
        assert_memory_equal(rb->waypoints, route.waypoints,
                            sizeof route.waypoints[0] * (size_t)route.count);
    }
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

static void test_roundtrip_messages(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 4242);
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    lc_wire_error err;
    for (int iter = 0; iter < 300; iter++) {
        lc_wire_setpoint a = {
            .seq = (int64_t)(lc_rng_next(&rng) % 1000000),
            .stamp = random_double(&rng, false),
            .model = (iter & 1) ? LC_MODEL_UNICYCLE : LC_MODEL_POINT,
            .state = (lc_state)(lc_rng_next(&rng) % LC_STATE_COUNT),
            .waypoint = (int)(lc_rng_next(&rng) % 20) - 1,
            .valid_ms = 1 + (int)(lc_rng_next(&rng) % 1000),
        };
        a.sp.limit = (lc_limit)(lc_rng_next(&rng) % LC_LIMIT_COUNT);
        if (a.model == LC_MODEL_UNICYCLE) {
            a.sp.v = random_double(&rng, false);
            a.sp.w = random_double(&rng, false);
        } else {
            a.sp.vx = random_double(&rng, false);
            a.sp.vy = random_double(&rng, false);
        }
        assert_int_equal(lc_wire_encode_setpoint(&t, &a), 0);
        if (lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err) != 0)
            fail_msg("%s\n%s", err.message, t.s);
        const lc_wire_setpoint *b = &msg.u.setpoint;
        assert_true(b->seq == a.seq);
        assert_int_equal(b->model, a.model);
        assert_int_equal(b->state, a.state);
        assert_int_equal(b->sp.limit, a.sp.limit);
        assert_int_equal(b->waypoint, a.waypoint);
        assert_int_equal(b->valid_ms, a.valid_ms);
        assert_same_double(b->stamp, a.stamp);
        assert_same_double(b->sp.vx, a.sp.vx);
        assert_same_double(b->sp.vy, a.sp.vy);
        assert_same_double(b->sp.v, a.sp.v);
        assert_same_double(b->sp.w, a.sp.w);

        lc_wire_event ev = {
            .ev = {(lc_event_kind)(lc_rng_next(&rng) % LC_EVENT_COUNT),
                   (int)(lc_rng_next(&rng) % 5) - 1, random_double(&rng, false)},
            .seq = (iter % 3 == 0) ? -1 : iter,
        };
        assert_int_equal(lc_wire_encode_event(&t, &ev), 0);
        assert_int_equal(lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err), 0);
        assert_int_equal(msg.u.event.ev.kind, ev.ev.kind);
        assert_int_equal(msg.u.event.ev.waypoint, ev.ev.waypoint);
        assert_same_double(msg.u.event.ev.stamp, ev.ev.stamp);
        assert_true(msg.u.event.seq == ev.seq);
    }
    /* error, hello, welcome */
    lc_wire_error e = {.code = LC_WIRE_BAD_FIELD, .has_seq = true, .seq = 99};
    snprintf(e.message, sizeof e.message, "scan.dist[3]: \"quoted\" \\ and \t tab");
    assert_int_equal(lc_wire_encode_error(&t, &e), 0);
    assert_int_equal(lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.type, LC_MSG_ERROR);
    assert_int_equal(msg.u.error.code, LC_WIRE_BAD_FIELD);
    assert_string_equal(msg.u.error.message, e.message);
    assert_true(msg.u.error.has_seq && msg.u.error.seq == 99);
    e.has_seq = false;
    assert_int_equal(lc_wire_encode_error(&t, &e), 0);
    assert_null(strstr(t.s, "\"seq\""));

    lc_wire_hello h = {.role = LC_ROLE_ROBOT, .has_token = true};
    strcpy(h.robot, "yard-3");
    strcpy(h.token, "a \"b\" c");
    assert_int_equal(lc_wire_encode_hello(&t, &h), 0);
    assert_int_equal(lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.hello.role, LC_ROLE_ROBOT);
    assert_string_equal(msg.u.hello.robot, "yard-3");
    assert_true(msg.u.hello.has_token);
    assert_string_equal(msg.u.hello.token, "a \"b\" c");

    lc_wire_welcome w = {.role = LC_ROLE_VIEWER, .watchdog_ms = 200, .max_message = 1 << 20,
                         .max_beams = 100000, .max_points = 5000, .view_hz = 20};
    assert_int_equal(lc_wire_encode_welcome(&t, &w), 0);
    assert_int_equal(lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.welcome.role, LC_ROLE_VIEWER);
    assert_string_equal(msg.u.welcome.robot, "");
    assert_string_equal(msg.u.welcome.protocol, LC_WIRE_PROTOCOL);
    assert_int_equal(strncmp(msg.u.welcome.server, "lacuna ", 7), 0);
    assert_int_equal(msg.u.welcome.watchdog_ms, 200);
    assert_int_equal(msg.u.welcome.max_points, 5000);
    assert_true(msg.u.welcome.view_hz == 20.0);
    assert_int_equal(msg.u.welcome.max_waypoints, LC_ROUTE_MAX);
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

/* -------------------------------------------------------- number format */

static void test_format_number(void **state)
{
    (void)state;
    char b[LC_WIRE_NUMBER_MAX];
    lc_wire_format_number(b, 0.1, -1);
    assert_string_equal(b, "0.1");
    lc_wire_format_number(b, -0.0, -1);
    assert_string_equal(b, "-0");
    lc_wire_format_number(b, 1.0 / 3.0, -1);
    assert_true(strtod(b, NULL) == 1.0 / 3.0);
    lc_wire_format_number(b, 9007199254740993.0, -1);
    assert_true(strtod(b, NULL) == 9007199254740993.0);
    lc_wire_format_number(b, NAN, -1);
    assert_string_equal(b, "null");
    lc_wire_format_number(b, INFINITY, 4);
    assert_string_equal(b, "null");
    lc_wire_format_number(b, -INFINITY, -1);
    assert_string_equal(b, "null");
    lc_wire_format_number(b, 1.23456789, 4);
    assert_string_equal(b, "1.2346");
    lc_wire_format_number(b, 2.5, 4);
    assert_string_equal(b, "2.5");
    lc_wire_format_number(b, 3.0, 4);
    assert_string_equal(b, "3");
    lc_wire_format_number(b, -0.00001, 4);
    assert_string_equal(b, "0");
    lc_wire_format_number(b, 120.0, 0);
    assert_string_equal(b, "120");
    lc_wire_format_number(b, -1e300, 4); /* too large for fixed: exact form */
    assert_true(strtod(b, NULL) == -1e300);
    lc_wire_format_number(b, 4.9406564584124654e-324, -1);
    assert_true(strtod(b, NULL) == 4.9406564584124654e-324);
    /* property: every random bit pattern that is finite round-trips */
    lc_rng rng;
    lc_rng_seed(&rng, 5);
    for (int i = 0; i < 20000; i++) {
        uint64_t bits = lc_rng_next(&rng);
        double x;
        memcpy(&x, &bits, sizeof x);
        int n = lc_wire_format_number(b, x, -1);
        assert_true(n > 0 && n < LC_WIRE_NUMBER_MAX);
        if (isfinite(x))
            assert_same_double(strtod(b, NULL), x);
        else
            assert_string_equal(b, "null");
    }
}

/* The encoder never prints NaN or Infinity: JSON has neither. */
static void test_no_nonfinite_out(void **state)
{
    (void)state;
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_setpoint sp = {.seq = 1, .stamp = NAN, .model = LC_MODEL_POINT, .waypoint = -1};
    sp.sp.vx = INFINITY;
    sp.sp.vy = NAN;
    assert_int_equal(lc_wire_encode_setpoint(&t, &sp), 0);
    assert_null(strstr(t.s, "nan"));
    assert_null(strstr(t.s, "inf"));
    cJSON *j = cJSON_Parse(t.s);
    assert_non_null(j);
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "vx")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "stamp")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "waypoint")));
    cJSON_Delete(j);
    lc_robot r;
    lc_robot_default(&r);
    r.radius = NAN;
    assert_int_equal(lc_wire_encode_robot(&t, &r), 0);
    j = cJSON_Parse(t.s);
    assert_non_null(j);
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "radius")));
    cJSON_Delete(j);
    lc_wire_text_free(&t);
}

/* ---------------------------------------------- plan result and view */

typedef struct fake_step {
    lc_vec2 obst_v[7];
    lc_span obst_span[2];
    lc_polyset obstacles, grown;
    lc_halfspace h[4];
    lc_vec2 rv[4];
    lc_region region;
    lc_vec2 world[3];
    lc_cloud cloud;
    lc_plan_result r;
} fake_step;

static void fake_step_init(fake_step *s)
{
    memset(s, 0, sizeof *s);
    const lc_vec2 ov[7] = {{3, -1}, {4, -1}, {4, 1}, {3, 1}, {-2, 2}, {-1, 2}, {-1.5, 3}};
    memcpy(s->obst_v, ov, sizeof ov);
    s->obst_span[0] = (lc_span){0, 4, 0};
    s->obst_span[1] = (lc_span){4, 3, 1};
    s->obstacles = (lc_polyset){s->obst_v, 7, 7, s->obst_span, 2, 2, NULL};
    s->grown = (lc_polyset){s->obst_v, 4, 4, s->obst_span, 1, 1, NULL};
    const lc_halfspace h[4] = {{{1, 0}, 2.65}, {{0, 1}, 1.65}, {{-1, 0}, 2.0}, {{0, -1}, 3.0}};
    memcpy(s->h, h, sizeof h);
    const lc_vec2 rv[4] = {{2.65, -3}, {2.65, 1.65}, {-2, 1.65}, {-2, -3}};
    memcpy(s->rv, rv, sizeof rv);
    s->region.h = s->h;
    s->region.nh = 4;
    s->region.v = s->rv;
    s->region.nv = 4;
    s->region.ellipse = (lc_ellipse){2.325, 0.0, 2.325, {0.325, -0.675}};
    s->world[0] = lc_v2(3, 0);
    s->world[1] = lc_v2(3, 0.123456789);
    s->world[2] = lc_v2(3, 0.2);
    s->cloud.world = s->world;
    s->cloud.n = 3;
    s->r.cloud = &s->cloud;
    s->r.obstacles = &s->obstacles;
    s->r.grown = &s->grown;
    s->r.region = &s->region;
    s->r.has_target = true;
    s->r.target = lc_v2(2.65, 0.1);
    s->r.has_waypoint = true;
    s->r.waypoint = lc_v2(6, 0.1);
    s->r.waypoint_index = 2;
    s->r.setpoint = (lc_setpoint){.vx = 0.1 + 0.2, .vy = -1e-17, .limit = LC_LIMIT_BRAKING};
    s->r.state = LC_STATE_TRACKING;
    s->r.events[0] = (lc_event){LC_EVENT_REACHED, 1, 12.5, LC_BLOCK_NONE};
    s->r.n_events = 1;
    s->r.clearance = 2.35;
    for (int i = 0; i < LC_STAGE_COUNT; i++)
        s->r.stage_us[i] = 1.5 + i;
    s->r.total_us = 40.25;
    s->r.ellipse_iterations = 9;
}

static double num_at(const cJSON *arr, int i)
{
    const cJSON *it = cJSON_GetArrayItem(arr, i);
    assert_true(cJSON_IsNumber(it));
    return it->valuedouble;
}

static void test_plan_result(void **state)
{
    (void)state;
    static fake_step s;
    fake_step_init(&s);
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    assert_int_equal(lc_wire_encode_plan_result(&t, &s.r, LC_MODEL_POINT), 0);
    cJSON *j = cJSON_Parse(t.s);
    assert_non_null(j);
    const cJSON *obs = cJSON_GetObjectItemCaseSensitive(j, "obstacles");
    assert_int_equal(cJSON_GetArraySize(obs), 2);
    assert_int_equal(cJSON_GetArraySize(cJSON_GetArrayItem(obs, 1)), 3);
    assert_true(num_at(cJSON_GetArrayItem(cJSON_GetArrayItem(obs, 1), 2), 0) == -1.5);
    assert_int_equal(cJSON_GetArraySize(cJSON_GetObjectItemCaseSensitive(j, "grown")), 1);
    const cJSON *reg = cJSON_GetObjectItemCaseSensitive(j, "region");
    const cJSON *hs = cJSON_GetObjectItemCaseSensitive(reg, "halfspaces");
    assert_int_equal(cJSON_GetArraySize(hs), 4);
    assert_true(num_at(cJSON_GetArrayItem(hs, 0), 2) == 2.65);
    assert_int_equal(cJSON_GetArraySize(cJSON_GetObjectItemCaseSensitive(reg, "vertices")), 4);
    const cJSON *ell = cJSON_GetObjectItemCaseSensitive(j, "ellipse");
    const cJSON *mat = cJSON_GetObjectItemCaseSensitive(ell, "matrix");
    assert_true(num_at(cJSON_GetArrayItem(mat, 0), 1) == num_at(cJSON_GetArrayItem(mat, 1), 0));
    assert_true(num_at(cJSON_GetObjectItemCaseSensitive(ell, "center"), 1) == -0.675);
    const cJSON *sp = cJSON_GetObjectItemCaseSensitive(j, "setpoint");
    /* exact: 0.1 + 0.2 is not 0.3 and the text must say so */
    assert_same_double(cJSON_GetObjectItemCaseSensitive(sp, "vx")->valuedouble, 0.1 + 0.2);
    assert_same_double(cJSON_GetObjectItemCaseSensitive(sp, "vy")->valuedouble, -1e-17);
    assert_null(cJSON_GetObjectItemCaseSensitive(sp, "v"));
    assert_string_equal(cJSON_GetObjectItemCaseSensitive(j, "state")->valuestring, "tracking");
    assert_string_equal(cJSON_GetObjectItemCaseSensitive(j, "limit")->valuestring, "braking");
    assert_int_equal(cJSON_GetObjectItemCaseSensitive(j, "waypoint")->valuedouble, 2);
    assert_true(num_at(cJSON_GetObjectItemCaseSensitive(j, "points"), 3) == 0.123456789);
    const cJSON *ev = cJSON_GetArrayItem(cJSON_GetObjectItemCaseSensitive(j, "events"), 0);
    assert_string_equal(cJSON_GetObjectItemCaseSensitive(ev, "event")->valuestring,
                        "waypoint_reached");
    const cJSON *tim = cJSON_GetObjectItemCaseSensitive(j, "timing_us");
    assert_true(cJSON_GetObjectItemCaseSensitive(tim, "total")->valuedouble == 40.25);
    for (int i = 0; i < LC_STAGE_COUNT; i++) {
        const cJSON *st = cJSON_GetObjectItemCaseSensitive(tim, lc_stage_name((lc_stage)i));
        assert_non_null(st);
        assert_true(st->valuedouble == 1.5 + i);
    }
    cJSON_Delete(j);

    /* no region: region and ellipse null; no target, no waypoint; unicycle pair */
    s.r.region = NULL;
    s.r.has_target = false;
    s.r.has_waypoint = false;
    s.r.clearance = INFINITY;
    s.r.setpoint = (lc_setpoint){.v = 0, .w = 0.5, .limit = LC_LIMIT_TURNING};
    assert_int_equal(lc_wire_encode_plan_result(&t, &s.r, LC_MODEL_UNICYCLE), 0);
    j = cJSON_Parse(t.s);
    assert_non_null(j);
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "region")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "ellipse")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "target")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "waypoint")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "clearance")));
    sp = cJSON_GetObjectItemCaseSensitive(j, "setpoint");
    assert_true(cJSON_GetObjectItemCaseSensitive(sp, "w")->valuedouble == 0.5);
    assert_null(cJSON_GetObjectItemCaseSensitive(sp, "vx"));
    cJSON_Delete(j);
    lc_wire_text_free(&t);
}

static void test_view(void **state)
{
    (void)state;
    static fake_step s;
    fake_step_init(&s);
    static lc_route route;
    lc_route_default(&route);
    route.count = 2;
    route.waypoints[0] = lc_v2(1, 2);
    route.waypoints[1] = lc_v2(6, 0.1);
    lc_robot robot;
    lc_robot_default(&robot);
    robot.model = LC_MODEL_UNICYCLE;
    lc_wire_setpoint sent = {.seq = 41, .stamp = 12.35, .model = LC_MODEL_UNICYCLE,
                             .state = LC_STATE_STALE, .waypoint = 1};
    sent.sp = lc_setpoint_stop(LC_LIMIT_STALE);
    lc_wire_view v = {.robot = "rover \"7\"", .desc = &robot, .route = &route,
                      .result = &s.r, .pose = {1.23456789, 0, 0.1}, .seq = 41,
                      .stamp = 12.35, .setpoint = &sent, .plan_us = 48.25, .plan_max_us = 71.5};
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    assert_int_equal(lc_wire_encode_view(&t, &v), 0);
    static lc_wire_msg msg;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_error err;
    assert_int_equal(lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.type, LC_MSG_VIEW);
    cJSON *j = cJSON_Parse(t.s);
    assert_non_null(j);
    assert_string_equal(cJSON_GetObjectItemCaseSensitive(j, "robot")->valuestring, "rover \"7\"");
    /* view geometry is rounded to LC_WIRE_VIEW_DECIMALS */
    assert_true(num_at(cJSON_GetObjectItemCaseSensitive(j, "pose"), 0) == 1.2346);
    assert_true(num_at(cJSON_GetObjectItemCaseSensitive(j, "points"), 3) == 0.1235);
    /* state and limit are what was sent (the watchdog's stale stop) */
    assert_string_equal(cJSON_GetObjectItemCaseSensitive(j, "state")->valuestring, "stale");
    assert_string_equal(cJSON_GetObjectItemCaseSensitive(j, "limit")->valuestring, "stale");
    const cJSON *sp = cJSON_GetObjectItemCaseSensitive(j, "setpoint");
    assert_non_null(cJSON_GetObjectItemCaseSensitive(sp, "v"));
    const cJSON *rt = cJSON_GetObjectItemCaseSensitive(j, "route");
    assert_int_equal(cJSON_GetArraySize(cJSON_GetObjectItemCaseSensitive(rt, "waypoints")), 2);
    assert_int_equal(cJSON_GetObjectItemCaseSensitive(rt, "current")->valuedouble, 1);
    assert_non_null(cJSON_GetObjectItemCaseSensitive(j, "region"));
    assert_non_null(cJSON_GetObjectItemCaseSensitive(j, "grown"));
    /* the robot's limits, the route's policy and the plan time (0.1 us) for the panel */
    assert_true(cJSON_GetObjectItemCaseSensitive(j, "v_max")->valuedouble == robot.v_max);
    assert_true(cJSON_GetObjectItemCaseSensitive(j, "dw_max")->valuedouble == robot.dw_max);
    assert_string_equal(cJSON_GetObjectItemCaseSensitive(rt, "on_blocked")->valuestring,
                        route.on_blocked == LC_BLOCKED_SKIP ? "skip" : "wait");
    assert_true(cJSON_GetObjectItemCaseSensitive(j, "plan_us")->valuedouble == 48.3 ||
                cJSON_GetObjectItemCaseSensitive(j, "plan_us")->valuedouble == 48.2);
    assert_true(cJSON_GetObjectItemCaseSensitive(j, "plan_max_us")->valuedouble == 71.5);
    assert_null(cJSON_GetObjectItemCaseSensitive(j, "footprint")); /* a disc */
    cJSON_Delete(j);
    /* a polygon footprint goes to the viewer, rounded like the rest */
    const lc_vec2 rect[] = {{0.5, -0.25}, {0.5, 0.25}, {-0.512345, 0.25}, {-0.5, -0.25}};
    assert_int_equal(lc_robot_set_footprint(&robot, rect, 4), LC_OK);
    assert_int_equal(lc_wire_encode_view(&t, &v), 0);
    assert_int_equal(lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &msg, &err), 0);
    j = cJSON_Parse(t.s);
    const cJSON *fp = cJSON_GetObjectItemCaseSensitive(j, "footprint");
    assert_int_equal(cJSON_GetArraySize(fp), 4);
    assert_true(num_at(cJSON_GetArrayItem(fp, 2), 0) == -0.5123);
    cJSON_Delete(j);

    /* before any frame: geometry null, no route */
    lc_wire_view empty = {.robot = "r", .desc = NULL, .route = NULL, .result = NULL, .seq = -1};
    assert_int_equal(lc_wire_encode_view(&t, &empty), 0);
    j = cJSON_Parse(t.s);
    assert_non_null(j);
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "pose")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "region")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "route")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "seq")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "plan_us")));
    assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(j, "v_max")));
    assert_string_equal(cJSON_GetObjectItemCaseSensitive(j, "state")->valuestring, "idle");
    cJSON_Delete(j);
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

/* ---------------------------------------------------------- allocation */

/* Warm buffers: decoding and encoding frames of the same size allocate nothing via lc_alloc. */
static void test_warm_no_alloc(void **state)
{
    (void)state;
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, &ca.alloc);
    lc_wire_text t;
    lc_wire_text_init(&t, &ca.alloc);
    char head[256];
    snprintf(head, sizeof head, "{\"type\":\"scan\",\"seq\":1,\"stamp\":0,\"pose\":[0,0,0],"
                                "\"bearing_first\":0,\"bearing_step\":0.001,\"near\":0.1,"
                                "\"far\":10,\"dist\":[");
    char *scan = repeat_text(head, "1.25", 1081, "]}");
    static lc_wire_msg msg;
    lc_wire_error err;
    assert_int_equal(lc_wire_decode(scan, strlen(scan), NULL, &buf, &msg, &err), 0);
    assert_int_equal(lc_wire_encode_frame(&t, &msg.u.frame), 0);
    long warm = ca.calls;
    assert_true(warm > 0);
    for (int i = 0; i < 5; i++) {
        assert_int_equal(lc_wire_decode(scan, strlen(scan), NULL, &buf, &msg, &err), 0);
        lc_frame copy = msg.u.frame;
        assert_int_equal(lc_wire_encode_frame(&t, &copy), 0);
    }
    assert_int_equal(ca.calls, warm);
    free(scan);
    lc_wire_buffers_free(&buf);
    lc_wire_text_free(&t);
    assert_int_equal(ca.live, 0);
}

/* Out of memory in an encode gives -1 and an empty text, never a half message. */
static void *failing_realloc(void *data, void *p, size_t n)
{
    long *budget = data;
    if (n == 0) {
        free(p);
        return NULL;
    }
    if (*budget <= 0)
        return NULL;
    (*budget)--;
    return realloc(p, n);
}

static void test_out_of_memory(void **state)
{
    (void)state;
    long budget = 0;
    lc_alloc fail_alloc = {failing_realloc, &budget};
    lc_wire_text t;
    lc_wire_text_init(&t, &fail_alloc);
    lc_robot r;
    lc_robot_default(&r);
    assert_int_equal(lc_wire_encode_robot(&t, &r), -1);
    assert_int_equal(t.len, 0);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, &fail_alloc);
    static lc_wire_msg msg;
    lc_wire_error err;
    char *s = unquote(SCAN("'dist':[1,2]}"));
    assert_int_equal(lc_wire_decode(s, strlen(s), NULL, &buf, &msg, &err), -1);
    assert_int_equal(err.code, LC_WIRE_INTERNAL);
    assert_true(lc_test_names_field(err.message, "scan.dist"));
    budget = 100;
    assert_int_equal(lc_wire_encode_robot(&t, &r), 0);
    assert_int_equal(lc_wire_decode(s, strlen(s), NULL, &buf, &msg, &err), 0);
    free(s);
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

/* ------------------------------------------------------------- fuzzing */

static const char *const snippets[] = {"null", "1e400", "-0", "[", "]", "{", "}", "\"", ",",
                                       ":", "\\u0000", "99999999999999999999", "true", "-1",
                                       "0.5", "\"type\":\"scan\"", "[[", "\"seq\":", " ", "e"};

static size_t mutate(lc_rng *r, char *s, size_t len, size_t cap)
{
    int n = 1 + (int)(lc_rng_next(r) % 4);
    for (int k = 0; k < n; k++) {
        size_t at = len ? lc_rng_next(r) % len : 0;
        switch (lc_rng_next(r) % 6) {
        case 0: /* flip a bit */
            if (len)
                s[at] ^= (char)(1u << (lc_rng_next(r) % 8));
            break;
        case 1: /* a structural byte */
            if (len)
                s[at] = "{}[]\",:0123456789.-eE nultrfa\\"[lc_rng_next(r) % 30];
            break;
        case 2: /* truncate */
            len = at;
            break;
        case 3: { /* insert a snippet */
            const char *sn = snippets[lc_rng_next(r) % (sizeof snippets / sizeof snippets[0])];
            size_t m = strlen(sn);
            if (len + m < cap) {
                memmove(s + at + m, s + at, len - at);
                memcpy(s + at, sn, m);
                len += m;
            }
            break;
        }
        case 4: { /* delete a run */
            size_t m = 1 + lc_rng_next(r) % 8;
            if (at + m > len)
                m = len - at;
            memmove(s + at, s + at + m, len - at - m);
            len -= m;
            break;
        }
        default: { /* duplicate a run */
            size_t m = 1 + lc_rng_next(r) % 16;
            if (at + m > len)
                m = len - at;
            if (len + m < cap) {
                memmove(s + at + m, s + at, len - at);
                len += m;
            }
            break;
        }
        }
    }
    return len;
}

/* What was accepted must encode and decode back to an accepted message. */
static void reencode(const lc_wire_msg *msg, lc_wire_text *t, lc_wire_buffers *buf2)
{
    int rc = 0;
    switch (msg->type) {
    case LC_MSG_HELLO: rc = lc_wire_encode_hello(t, &msg->u.hello); break;
    case LC_MSG_ROBOT: rc = lc_wire_encode_robot(t, &msg->u.robot); break;
    case LC_MSG_ROUTE: rc = lc_wire_encode_route(t, &msg->u.route); break;
    case LC_MSG_SCAN:
    case LC_MSG_POINTS: rc = lc_wire_encode_frame(t, &msg->u.frame); break;
    case LC_MSG_SETPOINT: rc = lc_wire_encode_setpoint(t, &msg->u.setpoint); break;
    case LC_MSG_EVENT: rc = lc_wire_encode_event(t, &msg->u.event); break;
    case LC_MSG_ERROR: rc = lc_wire_encode_error(t, &msg->u.error); break;
    case LC_MSG_WARNING: rc = lc_wire_encode_warning(t, &msg->u.warning); break;
    default: return;
    }
    assert_int_equal(rc, 0);
    static lc_wire_msg again;
    lc_wire_error err;
    if (lc_wire_decode(t->s, (size_t)t->len, NULL, buf2, &again, &err) != 0)
        fail_msg("re-encoded message refused: %s\n%.400s", err.message, t->s);
    assert_int_equal(again.type, msg->type);
}

static void test_fuzz(void **state)
{
    (void)state;
    enum { ITERATIONS = 40000 };
    char *texts[N_EXAMPLES];
    size_t lens[N_EXAMPLES];
    for (int i = 0; i < N_EXAMPLES; i++)
        texts[i] = read_text(examples[i].file, &lens[i]);
    lc_rng rng;
    lc_rng_seed(&rng, 0xC0DECull);
    lc_wire_buffers buf, buf2;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_buffers_init(&buf2, NULL);
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    long accepted = 0, refused[LC_WIRE_CODE_COUNT] = {0};
    for (int iter = 0; iter < ITERATIONS; iter++) {
        int e = (int)(lc_rng_next(&rng) % N_EXAMPLES);
        size_t cap = lens[e] * 2 + 64;
        char *s = xmalloc(cap);
        assert_non_null(s);
        memcpy(s, texts[e], lens[e]);
        size_t len = mutate(&rng, s, lens[e], cap);
        char *exact = xmalloc(len ? len : 1); /* exactly len bytes: overreads are caught */
        assert_non_null(exact);
        memcpy(exact, s, len);
        free(s);
        lc_wire_error err;
        int rc = lc_wire_decode(exact, len, NULL, &buf, &msg, &err);
        if (rc == 0) {
            accepted++;
            assert_int_not_equal(msg.type, LC_MSG_NONE);
            reencode(&msg, &t, &buf2);
        } else {
            assert_int_equal(rc, -1);
            assert_true(err.code > LC_WIRE_OK && err.code < LC_WIRE_CODE_COUNT);
            assert_non_null(strchr(err.message, ':'));
            refused[err.code]++;
        }
        rc = lc_wire_decode_plan_request(exact, len, NULL, &buf, &req, &err);
        assert_true(rc == 0 || (rc == -1 && err.code != LC_WIRE_OK && err.message[0]));
        free(exact);
    }
    print_message("fuzz: %d inputs, %ld accepted, bad_json %ld, bad_message %ld, "
                  "bad_field %ld, unknown_type %ld\n",
                  ITERATIONS, accepted, refused[LC_WIRE_BAD_JSON], refused[LC_WIRE_BAD_MESSAGE],
                  refused[LC_WIRE_BAD_FIELD], refused[LC_WIRE_UNKNOWN_TYPE]);
    /* the mutations must reach past the parser, or the test shows little */
    assert_true(accepted > ITERATIONS / 50);
    assert_true(refused[LC_WIRE_BAD_FIELD] > ITERATIONS / 50);
    for (int i = 0; i < N_EXAMPLES; i++)
        free(texts[i]);
    lc_wire_buffers_free(&buf);
    lc_wire_buffers_free(&buf2);
    lc_wire_text_free(&t);
}

/* The n-th node of a tree in pre-order (n counts down), or NULL. */
static cJSON *nth_node(cJSON *node, long *n)
{
    if (*n == 0)
        return node;
    cJSON *child;
    cJSON_ArrayForEach(child, node) {
        (*n)--;
        cJSON *hit = nth_node(child, n);
        if (hit)
            return hit;
    }
    return NULL;
}

static long count_nodes(const cJSON *node)
{
    long n = 1;
    const cJSON *child;
    cJSON_ArrayForEach(child, node)
        n += count_nodes(child);
    return n;
}

static cJSON *parent_of(cJSON *root, const cJSON *node)
{
    cJSON *child;
    cJSON_ArrayForEach(child, root) {
        if (child == node)
            return root;
        cJSON *hit = parent_of(child, node);
        if (hit)
            return hit;
    }
    return NULL;
}

static cJSON *random_value(lc_rng *r)
{
    static const double nums[] = {0.0, -0.0, -1.0, 1.5, 0.25, 1e9, 2e9, -7.0, 3.0, 1e-300,
                                  9007199254740992.0, 9007199254740994.0, 100001.0, 7.0};
    switch (lc_rng_next(r) % 8) {
    case 0: return cJSON_CreateNull();
    case 1: return cJSON_CreateBool(lc_rng_next(r) & 1);
    case 2: return cJSON_CreateNumber(nums[lc_rng_next(r) % (sizeof nums / sizeof nums[0])]);
    case 3: return cJSON_CreateNumber(lc_rng_uniform(r, -20.0, 20.0));
    case 4: {
        static const char *const strs[] = {"scan", "points", "robot", "route", "hello",
                                           "viewer", "unicycle", "skip", "", "x/y", "tracking"};
        return cJSON_CreateString(strs[lc_rng_next(r) % (sizeof strs / sizeof strs[0])]);
    }
    case 5: {
        double v[4] = {lc_rng_uniform(r, -5, 5), lc_rng_uniform(r, -5, 5),
                       lc_rng_uniform(r, -5, 5), lc_rng_uniform(r, -5, 5)};
        return cJSON_CreateDoubleArray(v, (int)(lc_rng_next(r) % 5));
    }
    case 6: return cJSON_CreateObject();
    default: return cJSON_CreateArray();
    }
}

/* Mutate the parsed examples value by value: reaches the field checks. */
static void test_fuzz_tree(void **state)
{
    (void)state;
    enum { ITERATIONS = 20000 };
    lc_rng rng;
    lc_rng_seed(&rng, 31337);
    lc_wire_buffers buf, buf2;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_buffers_init(&buf2, NULL);
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    cJSON *trees[N_EXAMPLES];
    for (int i = 0; i < N_EXAMPLES; i++) {
        size_t len;
        char *text = read_text(examples[i].file, &len);
        trees[i] = cJSON_ParseWithLength(text, len);
        assert_non_null(trees[i]);
        free(text);
    }
    long accepted = 0, field_errors = 0;
    for (int iter = 0; iter < ITERATIONS; iter++) {
        cJSON *tree = cJSON_Duplicate(trees[lc_rng_next(&rng) % N_EXAMPLES], 1);
        assert_non_null(tree);
        int k = 1 + (int)(lc_rng_next(&rng) % 3);
        for (int m = 0; m < k; m++) {
            long n = (long)(lc_rng_next(&rng) % (uint64_t)count_nodes(tree));
            if (n == 0)
                continue; /* keep the root */
            cJSON *node = nth_node(tree, &n);
            if (!node)
                continue;
            cJSON *parent = parent_of(tree, node);
            assert_non_null(parent);
            if (lc_rng_next(&rng) % 4 == 0)
                cJSON_Delete(cJSON_DetachItemViaPointer(parent, node));
            else {
                /* ReplaceItemViaPointer keeps no key: give the new value the old one */
                cJSON *v = random_value(&rng);
                if (node->string)
                    v->string = strdup(node->string);
                assert_true(cJSON_ReplaceItemViaPointer(parent, node, v));
            }
        }
        char *text = cJSON_PrintUnformatted(tree);
        cJSON_Delete(tree);
        assert_non_null(text);
        size_t len = strlen(text);
        lc_wire_error err;
        int rc = decode_exact(text, len, NULL, &buf, &msg, &err);
        if (rc == 0) {
            accepted++;
            reencode(&msg, &t, &buf2);
        } else {
            assert_true(err.code > LC_WIRE_OK && err.code < LC_WIRE_CODE_COUNT);
            assert_non_null(strchr(err.message, ':'));
            field_errors += err.code == LC_WIRE_BAD_FIELD;
        }
        rc = plan_exact(text, len, NULL, &buf, &req, &err);
        assert_true(rc == 0 || (rc == -1 && err.code != LC_WIRE_OK));
        free(text);
    }
    print_message("tree fuzz: %d inputs, %ld accepted, %ld bad_field\n", ITERATIONS, accepted,
                  field_errors);
    assert_true(accepted > ITERATIONS / 20);
    assert_true(field_errors > ITERATIONS / 4);
    for (int i = 0; i < N_EXAMPLES; i++)
        cJSON_Delete(trees[i]);
    lc_wire_buffers_free(&buf);
    lc_wire_buffers_free(&buf2);
    lc_wire_text_free(&t);
}

/* Random bytes and random token soup: refused cleanly. */
static void test_fuzz_random_bytes(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 99);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static const char *const tokens[] = {"{", "}", "[", "]", ",", ":", "\"type\"", "\"scan\"",
                                         "\"dist\"", "null", "1", "-2.5e3", "\"x\"", "true"};
    for (int iter = 0; iter < 5000; iter++) {
        size_t len = lc_rng_next(&rng) % 200;
        char *s = xmalloc(len * 10 + 1);
        assert_non_null(s);
        size_t n = 0;
        for (size_t i = 0; i < len; i++) {
            if (iter & 1) {
                s[n++] = (char)(lc_rng_next(&rng) & 0xff);
            } else {
                const char *tk = tokens[lc_rng_next(&rng) % (sizeof tokens / sizeof tokens[0])];
                memcpy(s + n, tk, strlen(tk));
                n += strlen(tk);
            }
        }
        lc_wire_error err;
        int rc = decode_exact(s, n, NULL, &buf, &msg, &err);
        assert_true(rc == 0 || (rc == -1 && err.code != LC_WIRE_OK));
        free(s);
    }
    lc_wire_buffers_free(&buf);
}

/* Unknown keys: ignored, counted and named so that a typo can be warned of. */
static void test_unknown_keys(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    lc_wire_error err;
    char text[4096], said[LC_WIRE_KEY_SHOWN + 64];

    /* none: nothing said */
    char *t = unquote("{'type':'robot','model':'point','radius':0.3,'margin':0.1}");
    assert_int_equal(decode_exact(t, strlen(t), NULL, &buf, &msg, &err), 0);
    assert_int_equal(err.ignored, 0);
    lc_wire_ignored_text(&err, said, sizeof said);
    assert_string_equal(said, "");
    free(t);

    /* a typo: the default margin stays, and the key is named */
    t = unquote("{'type':'robot','model':'point','radius':0.3,'margn':0.2}");
    assert_int_equal(decode_exact(t, strlen(t), NULL, &buf, &msg, &err), 0);
    lc_robot def;
    lc_robot_default(&def);
    assert_true(msg.u.robot.margin == def.margin);
    assert_int_equal(err.ignored, 1);
    lc_wire_ignored_text(&err, said, sizeof said);
    assert_string_equal(said, "unknown key 'robot.margn' ignored"); /* the path from the type */
    free(t);

    /* nested: named with its path, in the order met */
    size_t len;
    char *req_text = read_text("proto/examples/plan_request.json", &len);
    char *brace = strchr(req_text, '{'), *robot = strstr(req_text, "\"robot\"");
    assert_non_null(brace);
    assert_non_null(robot);
    char *open = strchr(robot, '{');
    assert_non_null(open);
    snprintf(text, sizeof text, "{\"extra\":1,%.*s\"margn\":0.2,%s", (int)(open + 1 - brace - 1),
             brace + 1, open + 1);
    assert_int_equal(plan_exact(text, strlen(text), NULL, &buf, &req, &err), 0);
    assert_int_equal(err.ignored, 2);
    lc_wire_ignored_text(&err, said, sizeof said);
    assert_string_equal(said, "unknown keys 'extra', 'robot.margn' ignored");
    free(req_text);

    /* many: as many named as fit, the rest counted; odd bytes shown as '?' */
    int n = snprintf(text, sizeof text, "{\"type\":\"hello\",\"role\":\"viewer\",\"k\\u00e9\":1");
    for (int i = 0; i < 40; i++)
        n += snprintf(text + n, sizeof text - (size_t)n, ",\"unknown_key_%02d\":%d", i, i);
    snprintf(text + n, sizeof text - (size_t)n, "}");
    assert_int_equal(decode_exact(text, strlen(text), NULL, &buf, &msg, &err), 0);
    assert_int_equal(err.ignored, 41);
    assert_true(err.ignored_named > 3 && err.ignored_named < 41);
    assert_true(strncmp(err.ignored_keys, "'hello.k?" "?', 'hello.unknown_key_00'", 35) == 0);
    lc_wire_ignored_text(&err, said, sizeof said);
    char tail[64];
    snprintf(tail, sizeof tail, " and %d more ignored", 41 - err.ignored_named);
    assert_non_null(strstr(said, tail));
    assert_true(strlen(said) < sizeof said - 1);

    /* a key too long for the list is cut, never left out; later ones keep the order */
    char longkey[200];
    memset(longkey, 'x', 150);
    longkey[150] = '\0';
    snprintf(text, sizeof text, "{\"type\":\"hello\",\"role\":\"viewer\",\"%s\":1,\"b\":2}", longkey);
    assert_int_equal(decode_exact(text, strlen(text), NULL, &buf, &msg, &err), 0);
    assert_int_equal(err.ignored, 2);
    assert_int_equal(err.ignored_named, 1);
    lc_wire_ignored_text(&err, said, sizeof said);
    assert_true(strncmp(said, "unknown keys 'hello.xxxx", 24) == 0);
    assert_non_null(strstr(said, "' and 1 more ignored"));
    snprintf(text, sizeof text, "{\"type\":\"hello\",\"role\":\"viewer\",\"a\":0,\"%s\":1,\"b\":2}",
             longkey);
    assert_int_equal(decode_exact(text, strlen(text), NULL, &buf, &msg, &err), 0);
    lc_wire_ignored_text(&err, said, sizeof said);
    assert_string_equal(said, "unknown keys 'hello.a' and 2 more ignored");

    /* an empty key is named as such, with its path */
    t = unquote("{'type':'route','waypoints':[[1,2]],'':3}");
    assert_int_equal(decode_exact(t, strlen(t), NULL, &buf, &msg, &err), 0);
    lc_wire_ignored_text(&err, said, sizeof said);
    assert_string_equal(said, "unknown key 'route.\"\"' ignored");
    free(t);

    /* seq is read from every message (errors echo it): known at the top level */
    t = unquote("{'type':'robot','seq':5,'radius':0.3}");
    assert_int_equal(decode_exact(t, strlen(t), NULL, &buf, &msg, &err), 0);
    assert_int_equal(err.ignored, 0);
    free(t);

    /* a scan with an extra key leaves the fast path and is still decoded */
    t = unquote("{'type':'scan','seq':1,'stamp':0,'pose':[0,0,0],'bearing_first':0,"
                "'bearing_step':0.1,'near':0.1,'far':10,'dist':[1,2],"
                "'strength':[5,6]}");
    assert_int_equal(decode_exact(t, strlen(t), NULL, &buf, &msg, &err), 0);
    assert_int_equal(msg.u.frame.n_ranges, 2);
    assert_int_equal(err.ignored, 1);
    lc_wire_ignored_text(&err, said, sizeof said);
    assert_string_equal(said, "unknown key 'scan.strength' ignored");
    free(t);
    /* lacuna.v1's scan names are unknown keys now: the scan is refused for
     * its missing fields, and the old names are still counted */
    t = unquote("{'type':'scan','seq':1,'stamp':0,'pose':[0,0,0],'angle_start':0,"
                "'angle_step':0.1,'range_min':0.1,'range_max':10,'ranges':[1,2]}");
    assert_int_equal(decode_exact(t, strlen(t), NULL, &buf, &msg, &err), -1);
    assert_true(lc_test_names_field(err.message, "scan.bearing_first"));
    assert_int_equal(err.ignored, 5);
    free(t);
    lc_wire_buffers_free(&buf);
}

static void test_names(void **state)
{
    (void)state;
    const char *const want[] = {"bad_json", "bad_message", "bad_field", "unknown_type",
                                "unauthorized", "forbidden", "name_taken", "too_large",
                                "binary"};
    for (size_t i = 0; i < sizeof want / sizeof want[0]; i++) {
        lc_wire_code c;
        assert_true(lc_wire_code_from_name(want[i], &c));
        assert_string_equal(lc_wire_code_name(c), want[i]);
    }
    assert_string_equal(lc_wire_code_name(LC_WIRE_BAD_FIELD), "bad_field");
    lc_wire_code c;
    assert_false(lc_wire_code_from_name("Bad_Field", &c));
    for (int i = 1; i < LC_MSG_COUNT; i++)
        assert_non_null(lc_msg_type_name((lc_msg_type)i));
    assert_null(lc_msg_type_name(LC_MSG_NONE));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_bad_inputs),
        cmocka_unit_test(test_good_inputs),
        cmocka_unit_test(test_scan_no_return),
        cmocka_unit_test(test_error_seq),
        cmocka_unit_test(test_seq_limit),
        cmocka_unit_test(test_deep_nesting),
        cmocka_unit_test(test_huge_counts),
        cmocka_unit_test(test_examples_decode),
        cmocka_unit_test(test_examples_content),
        cmocka_unit_test(test_defaults),
        cmocka_unit_test(test_roundtrip_frames),
        cmocka_unit_test(test_roundtrip_robot_route),
        cmocka_unit_test(test_roundtrip_messages),
        cmocka_unit_test(test_format_number),
        cmocka_unit_test(test_no_nonfinite_out),
        cmocka_unit_test(test_plan_result),
        cmocka_unit_test(test_view),
        cmocka_unit_test(test_warm_no_alloc),
        cmocka_unit_test(test_out_of_memory),
        cmocka_unit_test(test_fuzz),
        cmocka_unit_test(test_fuzz_tree),
        cmocka_unit_test(test_fuzz_random_bytes),
        cmocka_unit_test(test_unknown_keys),
        cmocka_unit_test(test_names),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
