/*
 * lacuna.js - the viewer page: draws what `lacuna serve` plans for each
 * robot, live, from the server's `view` messages (proto/PROTOCOL.md, "Server
 * to viewer: view").
 *
 * Invariants:
 * - Read-only. The only message this page ever sends is its hello with role
 *   "viewer" (the websocket is opened in connect() and nothing else calls
 *   send()). A viewer cannot steer a robot; the server refuses anything else
 *   from a viewer anyway ("forbidden").
 * - World frame, metres, radians counter-clockwise from +x, y up on screen.
 *   Screen positions are CSS pixels; the canvas backing store is scaled by
 *   devicePixelRatio so lines stay sharp on phones.
 * - Nothing is fetched: no script, font or image from anywhere. The colours
 *   of the map are CSS custom properties of lacuna.css (--map-*), read once,
 *   so the legend swatches and the canvas cannot drift apart.
 * - Drawing stops while the tab is hidden (document.visibilityState); views
 *   keep arriving and the trail keeps growing, so the picture is current the
 *   moment the tab shows again.
 *
 * URL fragment: #robot=NAME watches that robot only (the hello names it, the
 * server sends nothing else); #token=TOKEN for a server with a viewer token.
 *
 * Waypoints are numbered from 0, as on the wire, in events and in the run
 * pictures (proto/PROTOCOL.md): the map's labels and the panel show the
 * wire's index itself.
 *
 * The panel explains in words what the view says (PROTOCOL.md, view): a
 * unicycle turning on the spot, a detour of the guidance path, a waypoint
 * the patrol found unreachable (blocked, no_path), a dropped link whose
 * session waits for the robot, and an acceleration limit while speeding up
 * or slowing down. The map draws guidance's way ahead and the occupied cells
 * the robot remembers (a view carries them now and then: the last is kept).
 *
 * For the browser test (tests/web): the canvas carries data-robot-x and
 * data-robot-y (the drawn robot centre, viewport CSS pixels), data-scale
 * (pixels per metre), data-draws (maps drawn), data-views (views
 * received), data-path (vertices of the guidance path drawn), data-memory
 * (remembered cells drawn) and data-labels (the waypoint labels drawn,
 * comma separated); the body carries data-conn (live, wait, down).
 */
(function () {
  'use strict';

  var PROTOCOL = 'lacuna.v2';
  var TRAIL_SECONDS = 30;         /* the trail fades out over this time */
  var TRAIL_BREAK_M = 1.0;        /* a jump longer than this starts a new trail piece */
  var SILENT_SECONDS = 2.0;       /* at least: a robot sending frames, or stale, gets a view
                                     every watchdog period (see silentAfter) */
  var FORGET_SECONDS = 120;       /* a silent robot leaves the picker after this */
  var BACKOFF_MIN = 0.5, BACKOFF_MAX = 8; /* s between reconnection attempts */
  var SCALE_MIN = 4, SCALE_MAX = 2500;   /* px per metre */
  var RATE_WINDOW = 2.0;          /* s of arrivals the rates are averaged over */
  var NAME_RE = /^[A-Za-z0-9_-][A-Za-z0-9_.-]{0,63}$/; /* PROTOCOL.md, hello */

  function $(id) { return document.getElementById(id); }
  function now() { return performance.now() / 1000; }
  function finite(x) { return typeof x === 'number' && isFinite(x); }
  function isPoint(p) { return Array.isArray(p) && p.length >= 2 && finite(p[0]) && finite(p[1]); }
  function clamp(x, lo, hi) { return Math.min(hi, Math.max(lo, x)); }

  /* ------------------------------------------------------------ words */

  /* What each state means for the person watching the run. cls picks the
   * colour of the badge: good (moving on), calm (finished something), warn,
   * bad (stopped for a reason that needs a look), none. */
  var STATES = {
    tracking: { title: 'On its way', cls: 'good',
      words: function (v) { return 'Driving along the route' + toWaypoint(v) + '.'; } },
    arrived: { title: 'At a waypoint', cls: 'calm',
      words: function (v) { return 'Reached a waypoint just now; on' + toWaypoint(v) + '.'; } },
    done: { title: 'Route done', cls: 'calm',
      words: function () { return 'The route is finished. The robot stands still until it gets a new one.'; } },
    blocked: { title: 'Blocked', cls: 'bad',
      words: function (v) {
        var r = v.route || {}, time = finite(r.blocked_time) ? ' (' + fmt(r.blocked_time, 0) + ' s)' : '';
        var head = 'It has not got closer' + toWaypoint(v) + ' for the blocked time' + time + '. ';
        if (r.on_blocked === 'skip')
          return head + 'The route says skip: it gives this waypoint up and goes on to the next.';
        if (r.on_blocked === 'wait')
          return head + 'The route says wait: it holds still and keeps looking, and moves again ' +
            'as soon as a way opens.';
        return head + 'It holds still and keeps looking; it moves again as soon as a way opens ' +
          '(or gives the waypoint up, if the route says skip).';
      } },
    stale: { title: 'No sensor data', cls: 'bad',
      words: function () { return 'Stopped by the watchdog: lacuna has had no sensor frame from the robot for ' +
        (conn.watchdogMs ? conn.watchdogMs + ' ms' : 'the watchdog time') +
        '. Check the robot\u2019s link and its scanner.'; } },
    too_close: { title: 'Too close', cls: 'bad',
      words: function () { return 'Something is closer to the robot\u2019s centre than its radius plus margin. ' +
        'It may turn but not drive until it is clear.'; } },
    idle: { title: 'No route', cls: 'none',
      words: function () { return 'Connected, but it has no route: it waits for one.'; } }
  };

  /* " 0.80 m/s" after a limit's name when the view carries its value. */
  function limitValue(x, unit) {
    return finite(x) ? ' ' + fmt(x, 2) + ' ' + unit : '';
  }

  /* "Why this speed?": what bound the setpoint (src/core/motion.h); a
   * function of the view where the robot's own limit can be named. */
  var LIMITS = {
    none: 'Nothing asks it to move.',
    goal: 'It eases off as it nears the target.',
    top_speed: function (v) { return 'It is at its top speed (v_max' + limitValue(v.v_max, 'm/s') + ').'; },
    braking: 'It keeps room to stop inside the free region: an obstacle, or the edge of what the sensor has seen, is close ahead.',
    accel: function (v, r) {
      var a = 'its acceleration limit (a_max' + limitValue(v.a_max, 'm/s\u00b2') + ')';
      var now = speedOf(v), before = r ? r.prevSpeed : NaN;
      if (finite(before) && now > before + 0.002)
        return 'It is speeding up as fast as ' + a + ' lets it.';
      if (finite(before) && now < before - 0.002)
        return 'It is slowing down as fast as ' + a + ' lets it.';
      return 'Its speed changes, up or down, no faster than ' + a + ' lets it.';
    },
    turning: 'It turns on the spot first: the target is too far off its heading to drive.',
    turn_rate: function (v) {
      return 'It turns as fast as it may (w_max' + limitValue(v.w_max, 'rad/s') +
        ', or its turn acceleration dw_max' + limitValue(v.dw_max, 'rad/s\u00b2') + ').';
    },
    too_close: 'It may not drive: an obstacle is inside radius + margin.',
    stale: 'Stopped: no fresh sensor frame.',
    blocked: function (v) {
      return v.blocked === 'no_path' ? 'Stopped: no way to the waypoint through what it knows.'
                                     : 'Stopped: no progress toward the waypoint.';
    },
    arrived: 'Stopped: at its waypoint, or the route is done.',
    idle: 'Stopped: no route.'
  };

  function toWaypoint(v) {
    return finite(v.waypoint) ? ' toward waypoint ' + v.waypoint : '';
  }

  /* The setpoint's speed along the ground (m/s), 0 without one. */
  function speedOf(v) {
    var sp = v && v.setpoint;
    if (!sp)
      return 0;
    if (finite(sp.v) || finite(sp.w))
      return Math.abs(finite(sp.v) ? sp.v : 0);
    return Math.hypot(finite(sp.vx) ? sp.vx : 0, finite(sp.vy) ? sp.vy : 0);
  }

  /* A unicycle turning where it stands: no speed, a turn rate. */
  function turningOnTheSpot(v) {
    var sp = v.setpoint;
    return !!sp && finite(sp.w) && Math.abs(sp.w) >= 0.02 && speedOf(v) < 0.005;
  }

  /* "(9.9 m along it against 7.0 m straight)" when the view gives both. */
  function wayLengths(g) {
    return finite(g.to_go) && finite(g.straight)
      ? ' (' + fmt(g.to_go, 1) + ' m along it against ' + fmt(g.straight, 1) + ' m straight)' : '';
  }

  /*
   * What the view says beyond its state, in words: null when the state's
   * own words are the whole story. The link first (nothing else holds while
   * it is down), then an unreachable waypoint, then how a tracking robot
   * finds its way: turning on the spot, going round.
   */
  function explain(v, t, r) {
    var g = v.guide || {};
    if (v.link === 'down') {
      var ago = 'The robot\u2019s link to lacuna dropped ' + fmtAge(t - r.linkDownAt) + ' ago';
      var grace = conn.graceMs / 1000;
      if (grace > 0 && t - r.linkDownAt > grace)
        return { title: 'Disconnected', cls: 'bad', words: ago + ', and it did not come back within ' +
          fmt(grace, 0) + ' s: lacuna ended its session.' };
      return { title: 'Link lost', cls: 'bad', words: ago + '. lacuna keeps its route and progress' +
        (grace > 0 ? ' for ' + fmt(grace, 0) + ' s' : '') +
        ': if it says hello again in time it carries on where it was; after that it starts anew.' };
    }
    if (v.state === 'blocked' && v.blocked === 'no_path') {
      var route = v.route || {};
      var then = route.on_blocked === 'skip' ? ' The route says skip: it gives this waypoint up and goes on.'
        : ' It holds still and keeps looking, and moves again if a way opens.';
      return { title: 'Waypoint ' + (finite(v.waypoint) ? v.waypoint + ' ' : '') + 'unreachable', cls: 'bad',
        words: 'No way leads to waypoint ' + v.waypoint + ' through what the robot has seen and ' +
          'remembers: it is shut in, inside an obstacle, or beyond what the robot knows.' + then };
    }
    if (v.state !== 'tracking')
      return null;
    if (turningOnTheSpot(v)) {
      return { title: 'Turning on the spot', cls: 'good', words: g.detour
        ? 'Turning on the spot to get round: the way ahead is closed, so it turns onto the way round' +
          wayLengths(g) + toWaypoint(v) + '.'
        : 'Turning on the spot to face its way: it turns where it stands until it faces where it ' +
          'must go, then drives' + toWaypoint(v) + '.' };
    }
    if (g.detour) {
      return { title: 'Going round', cls: 'good', words: 'Going round: the way ahead is closed (or not ' +
        'seen yet), so it follows a way round' + wayLengths(g) + toWaypoint(v) + '.' };
    }
    return null;
  }

  function fmt(x, digits) {
    if (!finite(x))
      return '\u2013';
    var t = x.toFixed(digits);
    return /^-0\.?0*$/.test(t) ? t.slice(1) : t; /* no "-0.000" */
  }

  function fmtMetres(x) {
    if (!finite(x))
      return '\u2013';
    return Math.abs(x) < 10 ? x.toFixed(2) + ' m' : x.toFixed(1) + ' m';
  }

  function fmtAge(s) {
    if (!finite(s))
      return '\u2013';
    return s < 1 ? Math.round(s * 1000) + ' ms' : s < 60 ? s.toFixed(1) + ' s' : Math.round(s / 60) + ' min';
  }

  /* ------------------------------------------------------------ options */

  function readFragment() {
    var p = new URLSearchParams(location.hash.replace(/^#/, ''));
    return { robot: p.get('robot') || '', token: p.get('token') || '' };
  }

  var opts = readFragment();
  var fragmentProblem = '';
  if (opts.robot && !NAME_RE.test(opts.robot)) {
    fragmentProblem = 'The address names the robot "' + opts.robot.slice(0, 70) +
      '", which is not a robot name (letters, digits, _ - . only); watching every robot instead.';
    opts.robot = '';
  }

  /* ------------------------------------------------------------ palette */

  var P = {};
  function readPalette() {
    var cs = getComputedStyle(document.documentElement);
    ['paper', 'ink', 'grid', 'region', 'region-line', 'ellipse', 'obstacle', 'grown', 'grown-line',
     'points', 'points-core', 'route', 'target', 'robot', 'robot-bad', 'arrow', 'trail', 'other', 'card',
     'path', 'memory'
    ].forEach(function (k) {
      P[k] = cs.getPropertyValue('--map-' + k).trim() || '#000';
    });
  }

  /* ------------------------------------------------------------ robots */

  /* name -> {name, view, arrivals: [{t, seq}], trail: [{x, y, t, gap}],
   *          minClear, lastArrival, memory (the last view's that carried it),
   *          prevSpeed (the view before's), linkDownAt} */
  var robots = new Map();
  var selected = opts.robot || '';
  var viewsTotal = 0;

  function robotFor(name) {
    var r = robots.get(name);
    if (!r) {
      r = { name: name, view: null, arrivals: [], trail: [], minClear: Infinity, lastArrival: 0,
            memory: null, prevSpeed: NaN, linkDownAt: 0 };
      robots.set(name, r);
      pickerDirty = true;
    }
    return r;
  }

  function onView(v) {
    if (typeof v.robot !== 'string' || !v.robot)
      return;
    var t = now();
    var r = robotFor(v.robot);
    var prev = r.view;
    r.view = v;
    r.prevSpeed = prev ? speedOf(prev) : NaN;
    if (v.link === 'down' && (!prev || prev.link !== 'down'))
      r.linkDownAt = t;
    /* the memory comes in some views only: keep the last, drop it with its session */
    if (v.memory && typeof v.memory === 'object')
      r.memory = v.memory;
    else if (!finite(v.seq) || (prev && finite(prev.seq) && v.seq < prev.seq))
      r.memory = null;
    r.lastArrival = t;
    r.arrivals.push({ t: t, seq: finite(v.seq) ? v.seq : null });
    while (r.arrivals.length > 2 && r.arrivals[0].t < t - RATE_WINDOW)
      r.arrivals.shift();
    if (finite(v.clearance))
      r.minClear = Math.min(r.minClear, v.clearance);
    var pose = v.pose;
    if (Array.isArray(pose) && finite(pose[0]) && finite(pose[1])) {
      var last = r.trail.length ? r.trail[r.trail.length - 1] : null;
      /* A new session (seq went back, e.g. the robot reconnected) or a jump
       * starts a new piece of trail instead of a line across the map. */
      var restarted = prev && finite(prev.seq) && finite(v.seq) && v.seq < prev.seq;
      var gap = !last || restarted || Math.hypot(pose[0] - last.x, pose[1] - last.y) > TRAIL_BREAK_M;
      if (!last || gap || Math.hypot(pose[0] - last.x, pose[1] - last.y) > 0.01)
        r.trail.push({ x: pose[0], y: pose[1], t: t, gap: gap });
    }
    while (r.trail.length && r.trail[0].t < t - TRAIL_SECONDS)
      r.trail.shift();
    if (!selected) {
      selected = v.robot;
      pickerDirty = true;
    }
    viewsTotal++;
    canvas.dataset.views = String(viewsTotal);
    mapDirty = true;
    if (v.robot === selected)
      panelDirty = true;
  }

  function forgetSilent(t) {
    robots.forEach(function (r, name) {
      if (name !== selected && t - r.lastArrival > FORGET_SECONDS) {
        robots.delete(name);
        pickerDirty = true;
      }
    });
  }

  function silentAfter() { return Math.max(SILENT_SECONDS, 2.5 * conn.watchdogMs / 1000); }

  function isSilent(r, t) { return !r || !r.lastArrival || t - r.lastArrival > silentAfter(); }

  /* ------------------------------------------------------------ connection */

  var conn = {
    ws: null, status: 'wait', attempt: 0, retryAt: 0, timer: 0, helloAt: 0, rtt: NaN,
    watchdogMs: 0, graceMs: 0, stopped: false, token: opts.token, everLive: false,
    why: ''  /* why the page stopped trying, for the pill and the map */
  };

  function serverUrl() {
    return (location.protocol === 'https:' ? 'wss://' : 'ws://') + location.host + '/';
  }

  function setConn(status, text) {
    conn.status = status;
    var pill = $('conn');
    pill.className = 'pill pill-' + status;
    if (pill.textContent !== text)
      pill.textContent = text;
    document.body.dataset.conn = status;
    mapDirty = true;
  }

  function showMessage(text) {
    var m = $('message');
    m.textContent = text || '';
    m.hidden = !text;
  }

  function connect() {
    clearTimeout(conn.timer);
    conn.timer = 0;
    if (conn.ws)
      return;
    if (!location.host) {
      setConn('down', 'no server');
      showMessage('Open this page from lacuna serve (http://HOST:PORT/), not from a file.');
      return;
    }
    setConn('wait', conn.attempt ? 'reconnecting\u2026' : 'connecting\u2026');
    var ws;
    try {
      ws = new WebSocket(serverUrl(), PROTOCOL);
    } catch (e) {
      scheduleRetry();
      return;
    }
    conn.ws = ws;
    ws.onopen = function () {
      var hello = { type: 'hello', role: 'viewer', robot: opts.robot };
      if (conn.token)
        hello.token = conn.token;
      conn.helloAt = now();
      ws.send(JSON.stringify(hello)); /* the only message this page sends */
    };
    ws.onmessage = function (ev) {
      if (typeof ev.data !== 'string')
        return;
      var m;
      try {
        m = JSON.parse(ev.data);
      } catch (e) {
        return; /* the server sends JSON; ignore a broken message rather than stop */
      }
      if (!m || typeof m !== 'object')
        return;
      if (m.type === 'view')
        onView(m);
      else if (m.type === 'welcome')
        onWelcome(m);
      else if (m.type === 'error')
        onError(m);
    };
    ws.onclose = function () {
      if (conn.ws !== ws)
        return;
      conn.ws = null;
      if (conn.stopped) {
        setConn('down', conn.why || 'not connected');
        return;
      }
      scheduleRetry();
    };
    ws.onerror = function () { /* onclose follows and schedules the retry */ };
  }

  function onWelcome(m) {
    conn.rtt = now() - conn.helloAt;
    conn.attempt = 0;
    conn.everLive = true;
    conn.watchdogMs = finite(m.watchdog_ms) ? m.watchdog_ms : 0;
    conn.graceMs = finite(m.grace_ms) ? m.grace_ms : 0;
    setConn('live', 'live');
    showMessage(fragmentProblem);
    panelDirty = true;
  }

  function onError(m) {
    var code = String(m.code || 'error');
    var text = typeof m.message === 'string' ? m.message : '';
    if (code === 'unauthorized') {
      /* Retrying with the same token cannot help: wait for the form. */
      conn.stopped = true;
      conn.why = 'token needed';
      $('access').open = true;
      showMessage(conn.token ? 'The server refused this viewer token. Enter the right one below.'
                             : 'This server needs a viewer token. Enter it below.');
      $('token').focus();
    } else if (conn.status !== 'live' && /^bad_/.test(code)) {
      /* the hello itself is wrong (e.g. the robot name in the address):
       * the same hello would be refused again */
      conn.stopped = true;
      conn.why = 'hello refused';
      showMessage('The server refused this page\u2019s hello: ' + code + ' ' + text);
    } else if (conn.status !== 'live') {
      /* busy (too_many_connections, rate_limited, internal): the backoff
       * tries again later */
      showMessage('The server turned this page away for now: ' + code + ' ' + text);
    } else {
      showMessage('Server says: ' + code + ' ' + text);
    }
  }

  function scheduleRetry() {
    conn.attempt++;
    var delay = Math.min(BACKOFF_MAX, BACKOFF_MIN * Math.pow(2, conn.attempt - 1));
    delay *= 0.8 + 0.4 * Math.random(); /* several viewers do not knock at once */
    conn.retryAt = now() + delay;
    conn.timer = setTimeout(connect, delay * 1000);
    updateRetryText();
  }

  function updateRetryText() {
    if (conn.ws || conn.stopped || !conn.timer)
      return;
    var left = Math.max(0, conn.retryAt - now());
    setConn('down', (conn.everLive ? 'server lost' : 'no server') + ' \u00b7 retry ' + Math.ceil(left) + ' s');
  }

  function retryNow() {
    if (conn.ws)
      return;
    conn.stopped = false;
    conn.why = '';
    connect();
  }

  /* ------------------------------------------------------------ camera */

  var cam = { x: 0, y: 0, scale: 40, follow: true, placed: false };
  var canvas = $('map');
  var ctx = canvas.getContext('2d');
  var cssW = 1, cssH = 1, dpr = 1;

  function resize() {
    var rect = canvas.getBoundingClientRect();
    dpr = window.devicePixelRatio || 1;
    cssW = Math.max(1, rect.width);
    cssH = Math.max(1, rect.height);
    var w = Math.round(cssW * dpr), h = Math.round(cssH * dpr);
    if (canvas.width !== w || canvas.height !== h) {
      canvas.width = w;
      canvas.height = h;
    }
    mapDirty = true;
  }

  function sx(x) { return cssW / 2 + (x - cam.x) * cam.scale; }
  function sy(y) { return cssH / 2 - (y - cam.y) * cam.scale; }
  function worldX(px) { return cam.x + (px - cssW / 2) / cam.scale; }
  function worldY(py) { return cam.y - (py - cssH / 2) / cam.scale; }

  function zoomAt(factor, px, py) {
    var wx = worldX(px), wy = worldY(py);
    cam.scale = clamp(cam.scale * factor, SCALE_MIN, SCALE_MAX);
    if (!cam.follow) {
      /* keep the world point under the finger where it is */
      cam.x = wx - (px - cssW / 2) / cam.scale;
      cam.y = wy + (py - cssH / 2) / cam.scale;
    }
    mapDirty = true;
  }

  function setFollow(on) {
    cam.follow = on;
    $('follow').setAttribute('aria-pressed', on ? 'true' : 'false');
    mapDirty = true;
  }

  /* Points that should be on screen: the route, the robot, its region. */
  function interesting(v) {
    var pts = [];
    if (v.route && Array.isArray(v.route.waypoints))
      v.route.waypoints.forEach(function (p) { if (isPoint(p)) pts.push(p); });
    if (isPoint(v.pose))
      pts.push(v.pose);
    if (v.region && Array.isArray(v.region.vertices))
      v.region.vertices.forEach(function (p) { if (isPoint(p)) pts.push(p); });
    return pts;
  }

  /* Scale at which every point is on screen, around (cx, cy), with a border. */
  function scaleToShow(pts, cx, cy) {
    var pad = 28, s = SCALE_MAX;
    pts.forEach(function (p) {
      var dx = Math.abs(p[0] - cx), dy = Math.abs(p[1] - cy);
      if (dx > 1e-6)
        s = Math.min(s, (cssW / 2 - pad) / dx);
      if (dy > 1e-6)
        s = Math.min(s, (cssH / 2 - pad) / dy);
    });
    return clamp(s, SCALE_MIN, 200);
  }

  /* The centre and scale that show the route, the robot and its region. */
  function fitView(v) {
    var pts = interesting(v);
    if (!pts.length)
      return null;
    var x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    pts.forEach(function (p) {
      x0 = Math.min(x0, p[0]); x1 = Math.max(x1, p[0]);
      y0 = Math.min(y0, p[1]); y1 = Math.max(y1, p[1]);
    });
    var x = (x0 + x1) / 2, y = (y0 + y1) / 2;
    return { x: x, y: y, scale: scaleToShow(pts, x, y) };
  }

  function fit() {
    var r = robots.get(selected), f = r && r.view ? fitView(r.view) : null;
    if (!f)
      return;
    cam.x = f.x;
    cam.y = f.y;
    cam.scale = f.scale;
    setFollow(false);
    cam.placed = true;
  }

  /* First sight of a robot: follow it, at the zoom that would show its whole
   * route (the route may run off one side: the robot's surroundings matter
   * more than the far end of the route). */
  function placeCamera(v) {
    if (cam.placed || !isPoint(v.pose))
      return;
    var f = fitView(v);
    cam.placed = true;
    cam.x = v.pose[0];
    cam.y = v.pose[1];
    if (f)
      cam.scale = f.scale;
  }

  /* ------------------------------------------------------------ drawing */

  var mapDirty = true, panelDirty = true, pickerDirty = true;
  var draws = 0, drawTimes = [], lastDraw = 0, lastPanel = 0;
  var hatch = null;

  function hatchPattern() {
    if (hatch)
      return hatch;
    var c = document.createElement('canvas');
    c.width = c.height = 10;
    var g = c.getContext('2d');
    g.fillStyle = P.grown;
    g.globalAlpha = 0.35;
    g.fillRect(0, 0, 10, 10);
    g.globalAlpha = 0.9;
    g.strokeStyle = P.grown;
    g.lineWidth = 3;
    g.beginPath();
    g.moveTo(-2, 12); g.lineTo(12, -2);
    g.moveTo(-2, 2); g.lineTo(2, -2);
    g.moveTo(8, 12); g.lineTo(12, 8);
    g.stroke();
    hatch = ctx.createPattern(c, 'repeat');
    return hatch;
  }

  /* A path through world points (those that are not points are skipped). */
  function worldPath(pts, close) {
    ctx.beginPath();
    var first = true;
    for (var i = 0; i < pts.length; i++) {
      var p = pts[i];
      if (!isPoint(p))
        continue;
      if (first)
        ctx.moveTo(sx(p[0]), sy(p[1]));
      else
        ctx.lineTo(sx(p[0]), sy(p[1]));
      first = false;
    }
    if (close)
      ctx.closePath();
  }

  function strokeWith(colour, width, dash) {
    ctx.strokeStyle = colour;
    ctx.lineWidth = width;
    if (dash)
      ctx.setLineDash(dash);
    ctx.stroke();
    if (dash)
      ctx.setLineDash([]);
  }

  function drawGrid() {
    /* line spacing: the smallest of 1-2-5 steps at least 48 px apart */
    var steps = [0.1, 0.2, 0.5, 1, 2, 5, 10, 20, 50, 100, 200, 500];
    var step = steps[steps.length - 1];
    for (var i = 0; i < steps.length; i++) {
      if (steps[i] * cam.scale >= 48) {
        step = steps[i];
        break;
      }
    }
    ctx.strokeStyle = P.grid;
    ctx.lineWidth = 1;
    ctx.beginPath();
    var x0 = Math.floor(worldX(0) / step) * step, x1 = worldX(cssW);
    for (var x = x0; x <= x1; x += step) {
      var px = Math.round(sx(x)) + 0.5;
      ctx.moveTo(px, 0); ctx.lineTo(px, cssH);
    }
    var y0 = Math.floor(worldY(cssH) / step) * step, y1 = worldY(0);
    for (var y = y0; y <= y1; y += step) {
      var py = Math.round(sy(y)) + 0.5;
      ctx.moveTo(0, py); ctx.lineTo(cssW, py);
    }
    ctx.stroke();
    return step;
  }

  function drawRegion(v) {
    var verts = v.region && Array.isArray(v.region.vertices) ? v.region.vertices : null;
    if (!verts || verts.length < 3)
      return;
    worldPath(verts, true);
    ctx.fillStyle = P.region;
    ctx.fill();
    ctx.lineJoin = 'round';
    strokeWith(P['region-line'], 3);
  }

  function drawPolygons(list, fill, line, width) {
    if (!Array.isArray(list))
      return;
    ctx.lineJoin = 'round';
    ctx.lineCap = 'round';
    list.forEach(function (poly) {
      if (!Array.isArray(poly) || !poly.length)
        return;
      if (poly.length < 3) {
        /* a point or a wall seen edge-on: a thick stroke shows it */
        ctx.beginPath();
        var a = poly[0], b = poly[poly.length - 1];
        if (!isPoint(a) || !isPoint(b))
          return;
        ctx.moveTo(sx(a[0]), sy(a[1]));
        ctx.lineTo(sx(b[0]) + (poly.length === 1 ? 0.01 : 0), sy(b[1]));
        ctx.strokeStyle = line;
        ctx.lineWidth = width + 3;
        ctx.stroke();
        return;
      }
      worldPath(poly, true);
      if (fill) {
        ctx.fillStyle = fill;
        ctx.fill();
      }
      ctx.strokeStyle = line;
      ctx.lineWidth = width;
      ctx.stroke();
    });
  }

  function drawPoints(v) {
    var xy = v.points;
    if (!Array.isArray(xy))
      return;
    /* light dots ringed in ink: they show on the paper and on the dark
     * obstacle outlines they usually lie on */
    var i, x, y;
    ctx.fillStyle = P.points;
    for (i = 0; i + 1 < xy.length; i += 2) {
      if (finite(xy[i]) && finite(xy[i + 1]))
        ctx.fillRect(sx(xy[i]) - 3, sy(xy[i + 1]) - 3, 6, 6);
    }
    ctx.fillStyle = P['points-core'];
    for (i = 0; i + 1 < xy.length; i += 2) {
      if (finite(xy[i]) && finite(xy[i + 1])) {
        x = sx(xy[i]);
        y = sy(xy[i + 1]);
        ctx.fillRect(x - 1.5, y - 1.5, 3, 3);
      }
    }
  }

  function drawEllipse(v) {
    var e = v.ellipse;
    if (!e || !isPoint(e.center) || !Array.isArray(e.matrix) || e.matrix.length !== 2)
      return;
    var C = e.matrix;
    if (!isPoint(C[0]) || !isPoint(C[1]))
      return;
    var pts = [];
    for (var i = 0; i < 72; i++) {
      var t = i / 72 * 2 * Math.PI, c = Math.cos(t), s = Math.sin(t);
      pts.push([e.center[0] + C[0][0] * c + C[0][1] * s, e.center[1] + C[1][0] * c + C[1][1] * s]);
    }
    worldPath(pts, true);
    strokeWith(P.ellipse, 3, [10, 5]);
  }

  function drawRoute(v) {
    var route = v.route;
    if (!route || !Array.isArray(route.waypoints) || !route.waypoints.length)
      return;
    var wps = route.waypoints.filter(isPoint), labels = [];
    var cur = finite(route.current) ? route.current : (finite(v.waypoint) ? v.waypoint : -1);
    worldPath(wps, route.loop && wps.length > 2);
    strokeWith(P.route, 3, [12, 8]);

    var wp = route.waypoints[cur];
    if (isPoint(wp) && finite(route.tolerance) && route.tolerance * cam.scale > 4) {
      ctx.beginPath();
      ctx.arc(sx(wp[0]), sy(wp[1]), route.tolerance * cam.scale, 0, 2 * Math.PI);
      strokeWith(P.route, 2, [4, 4]);
    }
    ctx.font = 'bold 13px "DejaVu Sans", sans-serif';
    ctx.textAlign = 'center';
    ctx.textBaseline = 'middle';
    route.waypoints.forEach(function (p, i) {
      if (!isPoint(p))
        return;
      var r = i === cur ? 13 : 10;
      ctx.beginPath();
      ctx.arc(sx(p[0]), sy(p[1]), r, 0, 2 * Math.PI);
      ctx.fillStyle = i === cur ? P.route : P.card;
      ctx.fill();
      ctx.strokeStyle = P.route;
      ctx.lineWidth = 3;
      ctx.stroke();
      ctx.fillStyle = i === cur ? P.card : P.route;
      ctx.fillText(String(i), sx(p[0]), sy(p[1]) + 0.5);
      labels.push(i);
    });
    canvas.dataset.labels = labels.join(',');
  }

  /* Guidance's way ahead: a solid line over a light casing, dots at its
   * corners. Returns the vertices drawn. */
  function drawGuide(v) {
    var g = v.guide, pts = g && Array.isArray(g.path) ? g.path.filter(isPoint) : [];
    if (pts.length < 2)
      return 0;
    ctx.lineJoin = 'round';
    ctx.lineCap = 'round';
    worldPath(pts, false);
    strokeWith(P.card, 8);
    worldPath(pts, false);
    strokeWith(P.path, 4);
    ctx.fillStyle = P.path;
    for (var i = 1; i < pts.length; i++) {
      ctx.beginPath();
      ctx.arc(sx(pts[i][0]), sy(pts[i][1]), 4, 0, 2 * Math.PI);
      ctx.fill();
    }
    return pts.length;
  }

  /* The occupied cells the robot remembers: runs [dj, di, n] of cells along
   * +x from the lattice origin (PROTOCOL.md, view memory). Returns the
   * cells drawn. */
  function drawMemory(m) {
    if (!m || !finite(m.cell) || m.cell <= 0 || !Array.isArray(m.origin) || !Array.isArray(m.runs))
      return 0;
    var c = m.cell, i0 = m.origin[0], j0 = m.origin[1], runs = m.runs, cells = 0;
    if (!finite(i0) || !finite(j0))
      return 0;
    ctx.fillStyle = P.memory;
    for (var k = 0; k + 2 < runs.length; k += 3) {
      var dj = runs[k], di = runs[k + 1], n = runs[k + 2];
      if (!finite(dj) || !finite(di) || !finite(n) || n < 1)
        continue;
      /* whole pixels: a cell is a few pixels wide, and blurred edges would grey it */
      var x0 = Math.floor(sx((i0 + di) * c)), x1 = Math.ceil(sx((i0 + di + n) * c));
      var y0 = Math.floor(sy((j0 + dj + 1) * c)), y1 = Math.ceil(sy((j0 + dj) * c));
      ctx.fillRect(x0, y0, Math.max(1, x1 - x0), Math.max(1, y1 - y0));
      cells += n;
    }
    return cells;
  }

  function drawTrail(r, t) {
    var tr = r.trail;
    ctx.lineCap = 'round';
    ctx.lineWidth = 5;
    ctx.strokeStyle = P.trail;
    for (var i = 1; i < tr.length; i++) {
      if (tr[i].gap)
        continue;
      var age = t - tr[i].t;
      var a = 1 - age / TRAIL_SECONDS;
      if (a <= 0)
        continue;
      ctx.globalAlpha = 0.85 * a;
      ctx.beginPath();
      ctx.moveTo(sx(tr[i - 1].x), sy(tr[i - 1].y));
      ctx.lineTo(sx(tr[i].x), sy(tr[i].y));
      ctx.stroke();
    }
    ctx.globalAlpha = 1;
  }

  function drawTarget(v) {
    if (!isPoint(v.target))
      return;
    var x = sx(v.target[0]), y = sy(v.target[1]), s = 10;
    ctx.beginPath();
    ctx.moveTo(x, y - s); ctx.lineTo(x + s, y); ctx.lineTo(x, y + s); ctx.lineTo(x - s, y);
    ctx.closePath();
    ctx.fillStyle = P.target;
    ctx.fill();
    ctx.strokeStyle = P.ink;
    ctx.lineWidth = 3;
    ctx.stroke();
  }

  function arrowHead(x, y, ang, size, colour) {
    ctx.beginPath();
    ctx.moveTo(x + Math.cos(ang) * size, y + Math.sin(ang) * size);
    ctx.lineTo(x + Math.cos(ang + 2.5) * size, y + Math.sin(ang + 2.5) * size);
    ctx.lineTo(x + Math.cos(ang - 2.5) * size, y + Math.sin(ang - 2.5) * size);
    ctx.closePath();
    ctx.fillStyle = colour;
    ctx.fill();
  }

  /* The setpoint drawn as where the robot would be after holding it for 1 s:
   * an arc for the unicycle, a straight arrow for the point model, a curved
   * arrow around the robot when it only turns. */
  function drawSetpoint(v, radiusPx) {
    var sp = v.setpoint, pose = v.pose;
    if (!sp || !Array.isArray(pose) || !finite(pose[0]) || !finite(pose[1]))
      return;
    var yaw = finite(pose[2]) ? pose[2] : 0;
    var pts = [], w = 0, lin = 0;
    if (finite(sp.v) || finite(sp.w)) {
      var vv = finite(sp.v) ? sp.v : 0;
      w = finite(sp.w) ? sp.w : 0;
      lin = Math.abs(vv);
      for (var i = 0; i <= 24; i++) {
        var t = i / 24, x, y;
        if (Math.abs(w) < 1e-6) {
          x = pose[0] + vv * t * Math.cos(yaw);
          y = pose[1] + vv * t * Math.sin(yaw);
        } else {
          x = pose[0] + vv / w * (Math.sin(yaw + w * t) - Math.sin(yaw));
          y = pose[1] - vv / w * (Math.cos(yaw + w * t) - Math.cos(yaw));
        }
        pts.push([x, y]);
      }
    } else if (finite(sp.vx) || finite(sp.vy)) {
      var vx = finite(sp.vx) ? sp.vx : 0, vy = finite(sp.vy) ? sp.vy : 0;
      lin = Math.hypot(vx, vy);
      pts.push([pose[0], pose[1]]);
      pts.push([pose[0] + vx * Math.cos(yaw) - vy * Math.sin(yaw),
                pose[1] + vx * Math.sin(yaw) + vy * Math.cos(yaw)]);
    }
    ctx.strokeStyle = P.arrow;
    ctx.lineWidth = 5;
    ctx.lineCap = 'round';
    if (lin * cam.scale >= 6 && pts.length >= 2) {
      worldPath(pts, false);
      ctx.stroke();
      var a = pts[pts.length - 2], b = pts[pts.length - 1];
      arrowHead(sx(b[0]), sy(b[1]), Math.atan2(sy(b[1]) - sy(a[1]), sx(b[0]) - sx(a[0])), 14, P.arrow);
    } else if (Math.abs(w) > 0.02) {
      /* turning on the spot: an arc around the footprint, as far as 1 s turns it */
      var rr = radiusPx + 10, cx = sx(pose[0]), cy = sy(pose[1]);
      var a0 = -yaw, sweep = -clamp(w, -Math.PI * 1.5, Math.PI * 1.5);
      ctx.beginPath();
      ctx.arc(cx, cy, rr, a0, a0 + sweep, sweep < 0);
      ctx.stroke();
      var ae = a0 + sweep;
      arrowHead(cx + rr * Math.cos(ae), cy + rr * Math.sin(ae), ae + (sweep < 0 ? -Math.PI / 2 : Math.PI / 2),
                12, P.arrow);
    }
  }

  /* A polygon footprint at the pose as a canvas path, grown by m metres
   * (edges moved out, corners rounded in four steps; 0: as it is). */
  function footprintPath(fp, pose, yaw, m) {
    var c = Math.cos(yaw), s = Math.sin(yaw), n = fp.length;
    function world(p) { return [pose[0] + c * p[0] - s * p[1], pose[1] + s * p[0] + c * p[1]]; }
    function normal(a, b) { /* outward normal of the CCW edge a -> b */
      var dx = b[0] - a[0], dy = b[1] - a[1], l = Math.hypot(dx, dy) || 1;
      return Math.atan2(-dx / l, dy / l);
    }
    ctx.beginPath();
    for (var i = 0; i < n; i++) {
      var p = world(fp[i]), a0 = normal(world(fp[(i + n - 1) % n]), p);
      var a1 = normal(p, world(fp[(i + 1) % n]));
      if (a1 < a0) a1 += 2 * Math.PI;
      for (var k = 0; k <= (m > 0 ? 4 : 0); k++) {
        var a = a0 + (a1 - a0) * k / 4, q = [sx(p[0] + m * Math.cos(a)), sy(p[1] + m * Math.sin(a))];
        if (i === 0 && k === 0) ctx.moveTo(q[0], q[1]); else ctx.lineTo(q[0], q[1]);
      }
    }
    ctx.closePath();
  }

  /* The footprint (a disc of the robot's radius, or its polygon), its
   * margin, its heading. */
  function drawRobot(v, main, t) {
    var pose = v.pose;
    if (!Array.isArray(pose) || !finite(pose[0]) || !finite(pose[1]))
      return null;
    var yaw = finite(pose[2]) ? pose[2] : 0;
    var radius = finite(v.radius) ? v.radius : 0.3;
    var margin = finite(v.margin) ? v.margin : 0;
    var fp = Array.isArray(v.footprint) && v.footprint.length >= 3 ? v.footprint : null;
    var x = sx(pose[0]), y = sy(pose[1]);
    var rp = Math.max(9, radius * cam.scale);
    var bad = v.state === 'blocked' || v.state === 'stale' || v.state === 'too_close' || v.link === 'down';
    if (main && margin > 0 && margin * cam.scale > 2) {
      if (fp) {
        footprintPath(fp, pose, yaw, margin);
      } else {
        ctx.beginPath();
        ctx.arc(x, y, rp + margin * cam.scale, 0, 2 * Math.PI);
      }
      strokeWith(P.ink, 1.5, [3, 4]);
    }
    if (fp) {
      footprintPath(fp, pose, yaw, 0);
      rp = Math.max(9, fp.reduce(function (r, p) { return Math.max(r, p[0]); }, 0) * cam.scale);
    } else {
      ctx.beginPath();
      ctx.arc(x, y, rp, 0, 2 * Math.PI);
    }
    ctx.fillStyle = main ? (bad ? P['robot-bad'] : P.robot) : P.other;
    ctx.fill();
    ctx.strokeStyle = P.ink;
    ctx.lineWidth = 3;
    ctx.stroke();
    /* heading: a nose wedge reaching the rim */
    var hx = Math.cos(-yaw), hy = Math.sin(-yaw);
    ctx.beginPath();
    ctx.moveTo(x + hx * rp, y + hy * rp);
    ctx.lineTo(x + Math.cos(-yaw + 2.4) * rp * 0.45, y + Math.sin(-yaw + 2.4) * rp * 0.45);
    ctx.lineTo(x + Math.cos(-yaw - 2.4) * rp * 0.45, y + Math.sin(-yaw - 2.4) * rp * 0.45);
    ctx.closePath();
    ctx.fillStyle = P.ink;
    ctx.fill();
    if (!main || robots.size > 1) {
      ctx.font = 'bold 14px "DejaVu Sans", sans-serif';
      ctx.textAlign = 'left';
      ctx.textBaseline = 'middle';
      var label = v.robot + (v.link === 'down' ? ' (link lost)' : isSilent(robots.get(v.robot), t) ? ' (silent)' : '');
      var ly = main ? y - rp : y + rp; /* two robots side by side keep apart labels */
      ctx.lineWidth = 4;
      ctx.strokeStyle = P.card;
      ctx.strokeText(label, x + rp + 6, ly);
      ctx.fillStyle = P.ink;
      ctx.fillText(label, x + rp + 6, ly);
    }
    return { x: x, y: y, r: rp };
  }

  function drawScaleBar(step) {
    var px = step * cam.scale, x = 12, y = cssH - 14;
    var label = step >= 1 ? step + ' m' : Math.round(step * 100) + ' cm';
    ctx.font = 'bold 15px "DejaVu Sans", sans-serif';
    var tw = ctx.measureText(label).width;
    ctx.fillStyle = P.card;
    ctx.globalAlpha = 0.9;
    ctx.fillRect(x - 6, y - 26, px + tw + 22, 34);
    ctx.globalAlpha = 1;
    ctx.strokeStyle = P.ink;
    ctx.lineWidth = 4;
    ctx.lineCap = 'butt';
    ctx.beginPath();
    ctx.moveTo(x, y - 10); ctx.lineTo(x, y); ctx.lineTo(x + px, y); ctx.lineTo(x + px, y - 10);
    ctx.stroke();
    ctx.fillStyle = P.ink;
    ctx.textAlign = 'left';
    ctx.textBaseline = 'alphabetic';
    ctx.fillText(label, x + px + 8, y);
  }

  /* A line of text across the top of the map for what the map cannot say. */
  function banner(text, bad) {
    ctx.font = 'bold 17px "DejaVu Sans", sans-serif';
    var w = Math.min(cssW - 16, ctx.measureText(text).width + 24);
    var x = (cssW - w) / 2, y = 10;
    ctx.fillStyle = bad ? P['robot-bad'] : P.card;
    ctx.fillRect(x, y, w, 34);
    ctx.strokeStyle = P.ink;
    ctx.lineWidth = 3;
    ctx.strokeRect(x, y, w, 34);
    ctx.fillStyle = bad ? '#ffffff' : P.ink;
    ctx.textAlign = 'center';
    ctx.textBaseline = 'middle';
    ctx.fillText(text, cssW / 2, y + 18, w - 16);
  }

  function draw(t) {
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.fillStyle = P.paper;
    ctx.fillRect(0, 0, cssW, cssH);
    var r = robots.get(selected), v = r && r.view;
    if (v && isPoint(v.pose)) {
      placeCamera(v);
      if (cam.follow) {
        cam.x = v.pose[0];
        cam.y = v.pose[1];
      }
    }
    var step = drawGrid();
    var spot = null, pathDrawn = 0, memoryDrawn = 0;
    if (v) {
      drawRegion(v);
      drawPolygons(v.grown, hatchPattern(), P['grown-line'], 2);
      memoryDrawn = drawMemory(r.memory);
      drawPolygons(v.obstacles, P.obstacle, P.obstacle, 2);
      pathDrawn = drawGuide(v);
      drawRoute(v);
      drawEllipse(v);
      drawTrail(r, t);
      drawPoints(v);
      drawTarget(v);
    }
    robots.forEach(function (o, name) {
      if (name !== selected && o.view)
        drawRobot(o.view, false, t);
    });
    if (v) {
      spot = drawRobot(v, true, t);
      if (spot)
        drawSetpoint(v, spot.r);
    }
    drawScaleBar(step);

    if (conn.stopped && conn.why)
      banner('Not connected: ' + conn.why + ' (see the panel)', true);
    else if (conn.status !== 'live')
      banner(conn.everLive ? 'Server connection lost \u2013 showing the last view' : 'Not connected to lacuna', true);
    else if (!r)
      banner(opts.robot ? 'Waiting for robot ' + opts.robot : 'Connected \u2013 waiting for a robot', false);
    else if (v && v.link === 'down')
      banner(r.name + ': link lost ' + fmtAge(t - r.linkDownAt) + ' ago', true);
    else if (isSilent(r, t))
      banner('No view from ' + r.name + ' for ' + fmtAge(t - r.lastArrival), true);
    else if (!v || !isPoint(v.pose))
      banner(r.name + ' connected \u2013 no sensor frame yet', false);

    /* for the browser test and for anyone debugging layout */
    var rect = canvas.getBoundingClientRect();
    if (spot) {
      canvas.dataset.robotX = (rect.left + spot.x).toFixed(1);
      canvas.dataset.robotY = (rect.top + spot.y).toFixed(1);
    } else {
      delete canvas.dataset.robotX;
      delete canvas.dataset.robotY;
    }
    draws++;
    canvas.dataset.draws = String(draws);
    canvas.dataset.path = String(pathDrawn);
    canvas.dataset.memory = String(memoryDrawn);
    canvas.dataset.scale = cam.scale.toFixed(3);
    drawTimes.push(t);
    while (drawTimes.length > 2 && drawTimes[0] < t - RATE_WINDOW)
      drawTimes.shift();
  }

  /* ------------------------------------------------------------ panel */

  function setText(id, text) {
    var el = $(id);
    if (el.textContent !== text)
      el.textContent = text;
  }

  function setClass(id, cls) {
    var el = $(id);
    if (el.className !== cls)
      el.className = cls;
  }

  function rate(list, t) {
    if (list.length < 2 || t - list[list.length - 1].t > silentAfter())
      return NaN;
    var span = list[list.length - 1].t - list[0].t;
    return span > 0 ? (list.length - 1) / span : NaN;
  }

  function frameRate(r, t) {
    var a = r.arrivals;
    if (a.length < 2 || t - a[a.length - 1].t > silentAfter())
      return NaN;
    /* count from the start of the current session: after the last view
     * without a seq (before a first frame) or with a seq that went back (the
     * robot or the server started over) */
    var k = a.length - 1;
    while (k > 0 && a[k - 1].seq !== null && a[k].seq !== null && a[k - 1].seq <= a[k].seq)
      k--;
    var first = a[k], last = a[a.length - 1];
    if (first === last || first.seq === null || last.seq === null)
      return NaN;
    var span = last.t - first.t;
    return span > 0 ? (last.seq - first.seq) / span : NaN;
  }

  function setpointText(v) {
    var sp = v.setpoint;
    if (!sp)
      return ['\u2013', ''];
    if (finite(sp.v) || finite(sp.w)) {
      var w = finite(sp.w) ? sp.w : 0;
      var v = finite(sp.v) ? sp.v : 0;
      var turn = Math.abs(w) >= 0.005 ? (w > 0 ? 'turning left' : 'turning right')
               : Math.abs(v) >= 0.005 ? 'straight' : 'standing';
      return [fmt(sp.v, 2) + ' m/s', 'v ' + fmt(sp.v, 3) + ' m/s, w ' + fmt(w, 3) + ' rad/s, ' + turn];
    }
    var vx = finite(sp.vx) ? sp.vx : 0, vy = finite(sp.vy) ? sp.vy : 0;
    var speed = Math.hypot(vx, vy);
    var dir = speed < 0.005 ? 'standing' : Math.round(Math.atan2(vy, vx) * 180 / Math.PI) + '\u00b0 from its heading';
    return [speed.toFixed(2) + ' m/s', 'vx ' + fmt(vx, 3) + ', vy ' + fmt(vy, 3) + ' m/s, ' + dir];
  }

  /* Guidance's way to the waypoint: its length, and what it is like. */
  function wayText(g) {
    if (!g || typeof g !== 'object')
      return ['\u2013', ''];
    if (g.status === 'no_path')
      return ['none', 'no way through what it knows'];
    return [fmtMetres(g.to_go), (finite(g.straight) ? fmtMetres(g.straight) + ' straight' : '') +
            (g.detour ? ', going round' : '')];
  }

  function clearanceClass(c, v) {
    if (!finite(c))
      return '';
    var margin = finite(v.margin) ? v.margin : 0;
    return c <= 0 ? 'bad' : c < margin ? 'warn' : '';
  }

  function updatePanel(t) {
    var r = robots.get(selected), v = r && r.view;
    var drawRate = rate(drawTimes.map(function (x) { return { t: x }; }), t);
    setText('f-draw', document.visibilityState === 'hidden' ? 'paused' : (finite(drawRate) ? drawRate.toFixed(0) + ' /s' : '\u2013'));
    setText('f-rtt', finite(conn.rtt) ? fmtAge(conn.rtt) : '\u2013');
    if (!v) {
      setText('robot-name', r ? r.name : (opts.robot || 'no robot yet'));
      setText('robot-age', '');
      setText('state', 'waiting');
      setClass('state', 'state state-none');
      setText('state-code', '');
      setText('state-words', conn.status === 'live'
        ? (opts.robot ? 'Watching only ' + opts.robot + ' (from the address); it has not connected.'
                      : 'Connected. No robot has connected to lacuna yet.')
        : 'Not connected to lacuna yet.');
      setText('limit-words', '');
      setText('limit-code', '');
      $('limit-line').hidden = true;
      return;
    }
    var silent = isSilent(r, t), offline = conn.status !== 'live';
    setText('robot-name', r.name);
    setText('robot-age', (finite(v.stamp) ? 't ' + v.stamp.toFixed(1) + ' s' : '') +
            (finite(v.seq) ? ' \u00b7 #' + v.seq : ''));
    var st = STATES[v.state] || { title: String(v.state), cls: 'none', words: function () { return ''; } };
    if (!isPoint(v.pose))
      st = { title: 'No frame yet', cls: 'none',
             words: function () { return 'Connected; lacuna has not had a sensor frame from it yet.'; } };
    var more = explain(v, t, r);
    if (more)
      st = { title: more.title, cls: more.cls, words: function () { return more.words; } };
    if (offline)
      st = { title: 'No connection', cls: 'bad', words: function () {
        return 'The page lost its connection to lacuna ' + fmtAge(t - r.lastArrival) +
          ' ago and is trying again. The map shows the last view; last state: ' + (v.state || '?') + '.';
      } };
    else if (silent && v.link !== 'down')
      st = { title: 'Silent', cls: 'bad', words: function () {
        return 'No view for ' + fmtAge(t - r.lastArrival) + ': the robot has disconnected from lacuna, ' +
          'or has never sent a frame. Last state: ' + (v.state || '?') + '.';
      } };
    silent = silent || offline || v.link === 'down'; /* no state or limit is in force: nothing is told */
    setText('state', st.title);
    setClass('state', 'state state-' + st.cls);
    setText('state-code', silent ? '' : String(v.state || ''));
    setText('state-words', st.words(v));
    var lw = LIMITS[v.limit] || '';
    if (typeof lw === 'function')
      lw = lw(v, r);
    $('limit-line').hidden = !lw || silent;
    setText('limit-words', lw);
    setText('limit-code', String(v.limit || ''));

    var spt = setpointText(v);
    setText('f-setpoint', spt[0]);
    setText('f-setpoint-detail', spt[1]);
    var wp = '\u2013', wpd = '';
    if (v.route && Array.isArray(v.route.waypoints) && finite(v.waypoint)) {
      var n = v.route.waypoints.length, g = isPoint(v.goal) ? v.goal : v.route.waypoints[v.waypoint];
      wp = String(v.waypoint);
      wpd = n > 1 ? 'of 0\u2013' + (n - 1) : 'the only one';
      if (isPoint(g) && isPoint(v.pose))
        wpd += ', ' + fmtMetres(Math.hypot(g[0] - v.pose[0], g[1] - v.pose[1])) + ' away';
      wpd += ', ' + (v.route.loop ? 'looping' : 'once through');
    } else if (v.route && Array.isArray(v.route.waypoints)) {
      wp = v.route.waypoints.length ? 'none' : 'no route';
    }
    setText('f-waypoint', wp);
    setText('f-waypoint-detail', wpd);
    var way = wayText(v.guide);
    setText('f-way', way[0]);
    setText('f-way-detail', way[1]);
    setText('f-clearance', fmtMetres(v.clearance));
    setClass('f-clearance', clearanceClass(v.clearance, v));
    setText('f-minclear', fmtMetres(r.minClear));
    setClass('f-minclear', clearanceClass(r.minClear, v));
    var fr = frameRate(r, t), vr = rate(r.arrivals, t);
    setText('f-rate', finite(fr) ? fr.toFixed(1) + ' /s' : '\u2013');
    setText('f-plan', silent || !finite(v.plan_us) ? '\u2013' : Math.round(v.plan_us) + ' \u00b5s' +
      (finite(v.plan_max_us) && v.plan_max_us > v.plan_us ? ' (up to ' + Math.round(v.plan_max_us) + ')' : ''));
    setText('f-views', finite(vr) ? vr.toFixed(1) + ' /s' : '\u2013');
    setText('f-age', fmtAge(t - r.lastArrival));
    setClass('f-age', silent ? 'bad' : '');
  }

  function updatePicker() {
    pickerDirty = false;
    var sel = $('picker');
    var names = Array.from(robots.keys()).sort();
    $('picker-wrap').hidden = names.length < 2;
    var t = now();
    var want = names.map(function (n) { return n + (isSilent(robots.get(n), t) ? ' (silent)' : ''); });
    var have = Array.from(sel.options).map(function (o) { return o.textContent; });
    if (want.join('\n') !== have.join('\n')) {
      sel.textContent = '';
      names.forEach(function (n, i) {
        var o = document.createElement('option');
        o.value = n;
        o.textContent = want[i];
        sel.appendChild(o);
      });
    }
    if (sel.value !== selected)
      sel.value = selected;
  }

  /* ------------------------------------------------------------ loop */

  var rafId = 0, lastSilentCheck = 0;

  function frame() {
    rafId = 0;
    if (document.visibilityState === 'hidden')
      return;
    var t = now();
    /* the trail fades and ages tick even without views: redraw 5 times a second */
    if (mapDirty || t - lastDraw > 0.2) {
      mapDirty = false;
      lastDraw = t;
      draw(t);
    }
    if (panelDirty ? t - lastPanel > 0.1 : t - lastPanel > 0.25) {
      panelDirty = false;
      lastPanel = t;
      updatePanel(t);
      updateRetryText();
    }
    if (t - lastSilentCheck > 1) {
      lastSilentCheck = t;
      forgetSilent(t);
      pickerDirty = true; /* silent marks change with time */
    }
    if (pickerDirty)
      updatePicker();
    rafId = requestAnimationFrame(frame);
  }

  function wake() {
    if (!rafId && document.visibilityState !== 'hidden')
      rafId = requestAnimationFrame(frame);
  }

  /* ------------------------------------------------------------ input */

  var pointers = new Map(), pinch = null, dragMoved = false;

  function canvasPoint(ev) {
    var rect = canvas.getBoundingClientRect();
    return { x: ev.clientX - rect.left, y: ev.clientY - rect.top };
  }

  function pinchState() {
    var ps = Array.from(pointers.values());
    return { d: Math.hypot(ps[0].x - ps[1].x, ps[0].y - ps[1].y),
             mx: (ps[0].x + ps[1].x) / 2, my: (ps[0].y + ps[1].y) / 2 };
  }

  canvas.addEventListener('pointerdown', function (ev) {
    canvas.setPointerCapture(ev.pointerId);
    pointers.set(ev.pointerId, canvasPoint(ev));
    dragMoved = false;
    pinch = pointers.size === 2 ? pinchState() : null;
    canvas.classList.add('dragging');
  });

  canvas.addEventListener('pointermove', function (ev) {
    if (!pointers.has(ev.pointerId))
      return;
    var before = pointers.get(ev.pointerId), p = canvasPoint(ev);
    pointers.set(ev.pointerId, p);
    if (pointers.size === 2 && pinch) {
      var next = pinchState();
      if (pinch.d > 10 && next.d > 10)
        zoomAt(next.d / pinch.d, next.mx, next.my);
      if (!cam.follow) {
        cam.x -= (next.mx - pinch.mx) / cam.scale;
        cam.y += (next.my - pinch.my) / cam.scale;
      }
      pinch = next;
      mapDirty = true;
    } else if (pointers.size === 1) {
      var dx = p.x - before.x, dy = p.y - before.y;
      if (!dragMoved && Math.hypot(dx, dy) < 3) {
        pointers.set(ev.pointerId, before); /* a tap that shook a little is not a drag */
        return;
      }
      dragMoved = true;
      if (cam.follow)
        setFollow(false);
      cam.x -= dx / cam.scale;
      cam.y += dy / cam.scale;
      mapDirty = true;
    }
  });

  function pointerUp(ev) {
    pointers.delete(ev.pointerId);
    pinch = pointers.size === 2 ? pinchState() : null;
    if (!pointers.size)
      canvas.classList.remove('dragging');
  }
  canvas.addEventListener('pointerup', pointerUp);
  canvas.addEventListener('pointercancel', pointerUp);

  canvas.addEventListener('wheel', function (ev) {
    ev.preventDefault();
    var p = canvasPoint(ev);
    var dy = ev.deltaMode === 1 ? ev.deltaY * 16 : ev.deltaY;
    zoomAt(Math.exp(-clamp(dy, -300, 300) * 0.002), p.x, p.y);
  }, { passive: false });

  $('zoom-in').addEventListener('click', function () { zoomAt(1.5, cssW / 2, cssH / 2); });
  $('zoom-out').addEventListener('click', function () { zoomAt(1 / 1.5, cssW / 2, cssH / 2); });
  $('follow').addEventListener('click', function () { setFollow(!cam.follow); });
  $('fit').addEventListener('click', fit);
  $('conn').addEventListener('click', retryNow);

  $('picker').addEventListener('change', function (ev) {
    selected = ev.target.value;
    cam.placed = false;
    setFollow(true);
    panelDirty = mapDirty = true;
  });

  $('token-form').addEventListener('submit', function (ev) {
    ev.preventDefault();
    conn.token = $('token').value;
    showMessage('');
    conn.attempt = 0;
    if (conn.ws)
      conn.ws.close(1000, 'new token');
    conn.ws = null;
    conn.stopped = false;
    conn.why = '';
    clearTimeout(conn.timer);
    connect();
  });

  document.addEventListener('keydown', function (ev) {
    if (ev.target && /^(INPUT|SELECT|TEXTAREA)$/.test(ev.target.tagName))
      return;
    if (ev.key === '+' || ev.key === '=')
      zoomAt(1.5, cssW / 2, cssH / 2);
    else if (ev.key === '-')
      zoomAt(1 / 1.5, cssW / 2, cssH / 2);
    else if (ev.key === 'f')
      setFollow(!cam.follow);
    else
      return;
    ev.preventDefault();
  });

  document.addEventListener('visibilitychange', function () {
    if (document.visibilityState === 'hidden') {
      if (rafId)
        cancelAnimationFrame(rafId);
      rafId = 0;
      setText('f-draw', 'paused');
    } else {
      mapDirty = panelDirty = true;
      /* a phone that slept may have let the backoff grow: try now */
      if (!conn.ws && !conn.stopped)
        connect();
      wake();
    }
  });

  window.addEventListener('online', function () { if (!conn.ws && !conn.stopped) connect(); });
  window.addEventListener('hashchange', function () { location.reload(); });

  /* ------------------------------------------------------------ start */

  readPalette();
  if (typeof ResizeObserver === 'function')
    new ResizeObserver(resize).observe(canvas);
  window.addEventListener('resize', resize);
  resize();
  if (opts.token)
    $('token').value = opts.token;
  showMessage(fragmentProblem);
  connect();
  wake();
})();
