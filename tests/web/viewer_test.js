/*
 * viewer_test.js - the viewer page (web/) in real headless Chromium against a
 * live `lacuna serve` with robots patrolling through `lacuna sim --connect`. Run by run.sh (meson suite
 * 'web'); see run.sh for the environment it needs.
 *
 * What it checks, in order:
 *  1. The page loads from the server with no console error and no request
 *     leaving the server's origin; it connects (data-conn="live").
 *  2. The map is drawn: the pixels hold the colours of the free region, the
 *     robot, the route and the ellipse (lacuna.css --map-*), so a blank or
 *     half-drawn canvas fails; two snapshots a moment apart differ (the
 *     patrol moves).
 *  3. The panel names the robot and shows a state from the protocol's list
 *     with its words, and a setpoint in m/s.
 *  4. Viewer only: every websocket frame the page sent is one hello with
 *     role "viewer", once per connection.
 *  5. Hidden tab: no redraws while document.visibilityState is "hidden"
 *     (views keep arriving), drawing again when visible.
 *  6. The + button and the wheel zoom; a drag pans and stops following;
 *     follow puts the robot back in the middle.
 *  7. 360 x 740 phone screen: no sideways scrolling, the robot is drawn
 *     inside the map and outside the panel, the toolbar and the header, and
 *     the state badge is on the first screen, in large type.
 *  8. A second robot: the picker appears and switches the panel. A robot
 *     whose frames stop (its sim paused) shows as stale, drawn red, and the
 *     panel says the watchdog stopped it.
 *  9. The server is killed: the page says so; a new server on the same port:
 *     the page reconnects by itself and draws new views.
 * 10. A server with a viewer token: the page asks for the token, does not
 *     knock again until it has one, connects with the one typed in.
 * 11. Explanations (after 8): waypoints are numbered from 0 on the map and
 *     in the panel, as on the wire (the views the page received); a
 *     unicycle that starts facing a long wall, its waypoint behind it, is
 *     said to turn on the spot to get round, then to go round
 *     (the view's guide is a detour) while the guidance path and the
 *     remembered cells are drawn in their colours; the accel limit says
 *     whether it speeds up or slows down; a waypoint in a locked cage is
 *     said to be unreachable (blocked, no_path); a robot whose link drops is
 *     said to have lost it, its session kept.
 * Screenshots go to LACUNA_WEB_SHOTS for people to look at. No timing
 * assertions: every wait is "until this holds", with a generous timeout that
 * only turns a hang into a failure.
 */
'use strict';

const { spawn } = require('child_process');
const fs = require('fs');
const os = require('os');
const path = require('path');
const { chromium } = require('playwright-core');

const EXE = process.env.LACUNA_EXE;
const ROOT = process.env.LACUNA_SOURCE_ROOT;
const SHOTS = process.env.LACUNA_WEB_SHOTS;
const CHROMIUM = process.env.LACUNA_CHROMIUM || '/usr/bin/chromium';
const ROBOT_NAME = 'test-rover';
const STATES = ['idle', 'tracking', 'arrived', 'done', 'blocked', 'stale', 'too_close'];
const WAIT = 20000; /* ms: a hang becomes a failure, never a speed check */

const t0 = Date.now();
const children = new Set();
let failures = 0;

function log(msg) {
  process.stdout.write(`[${((Date.now() - t0) / 1000).toFixed(1)} s] ${msg}\n`);
}

function check(ok, what, detail) {
  if (ok) {
    log(`ok   ${what}`);
  } else {
    failures++;
    log(`FAIL ${what}${detail !== undefined ? ': ' + detail : ''}`);
  }
  return ok;
}

/* Only for "nothing happens within ms" checks: every other wait is waitFor. */
function sleep(ms) { return new Promise((r) => setTimeout(r, ms)); }

function track(child, name, logFile) {
  children.add(child);
  const out = fs.createWriteStream(logFile, { flags: 'a' });
  child.stdout.pipe(out);
  child.stderr.pipe(out);
  child.on('exit', () => children.delete(child));
  child.label = name;
  return child;
}

function killAll() {
  for (const c of children) {
    try { c.kill('SIGKILL'); } catch (e) { /* gone already */ }
  }
}
process.on('exit', killAll);

/* ------------------------------------------------------------- server */

/* Starts `lacuna serve` on listen (HOST:PORT, port 0 = any); resolves with
 * the port it printed. */
function startServer(listen, extra) {
  const child = track(spawn(EXE, ['serve', '--listen', listen, '--web', path.join(ROOT, 'web'),
                                  '--log-level', 'info'].concat(extra || []),
                            { stdio: ['ignore', 'pipe', 'pipe'] }),
                      'server', path.join(SHOTS, 'server.log'));
  return new Promise((resolve, reject) => {
    let text = '';
    const timer = setTimeout(() => reject(new Error('server printed no port: ' + text)), WAIT);
    const onData = (d) => {
      text += d.toString();
      const m = /listening on http:\/\/127\.0\.0\.1:(\d+)\//.exec(text);
      if (m) {
        clearTimeout(timer);
        child.stderr.off('data', onData);
        child.stdout.off('data', onData);
        resolve({ child, port: Number(m[1]) });
      }
    };
    child.stderr.on('data', onData);
    child.stdout.on('data', onData);
    child.on('exit', (code) => { clearTimeout(timer); reject(new Error('server exited ' + code + ': ' + text)); });
  });
}

/* Resolves with the exit status (a number, or the signal's name). SIGKILL
 * (the default) is a crash, not a polite shutdown. */
function stopServer(child, signal) {
  return new Promise((resolve) => {
    if (child.exitCode !== null || child.signalCode !== null)
      return resolve(child.exitCode !== null ? child.exitCode : child.signalCode);
    child.once('exit', (code, sig) => resolve(code !== null ? code : sig));
    child.kill(signal || 'SIGKILL');
  });
}

/* ------------------------------------------------------------- patrol */

/* A patrolling robot: `lacuna sim SCENARIO --connect`, restarted whenever it
 * ends (it ends when its server goes away), until stopped. */
function startPatrol(port, name, scenario) {
  const file = path.isAbsolute(scenario) ? scenario : path.join(ROOT, 'scenarios', scenario);
  const args = ['sim', file, '--connect', `ws://127.0.0.1:${port}/`,
                '--name', name, '--laps', '0', '--json'];
  const state = { stopped: false, starts: 0, child: null };
  const run = () => {
    if (state.stopped)
      return;
    state.starts++;
    state.child = track(spawn(EXE, args, { stdio: ['ignore', 'pipe', 'pipe'] }),
                        'patrol', path.join(SHOTS, 'patrol-' + name + '.log'));
    /* a pause between restarts while the server is away (no wait for anything:
     * a sim that cannot connect ends at once, and would otherwise spin) */
    state.child.on('exit', () => { if (!state.stopped) setTimeout(run, 300); });
  };
  run();
  state.stop = () => {
    state.stopped = true;
    if (state.child)
      state.child.kill('SIGINT');
  };
  return state;
}

/* ------------------------------------------------------------- page helpers */

/* Waits until fn(arg) holds in the page; a failure ends the test (what
 * follows depends on it, and waiting on would only pile up timeouts). */
async function waitFor(page, fn, arg, what) {
  try {
    await page.waitForFunction(fn, arg, { timeout: WAIT, polling: 100 });
  } catch (e) {
    check(false, what, 'not within ' + WAIT / 1000 + ' s');
    throw new Error('stopped at: ' + what);
  }
}

/* Waits until the page has drawn the map n more times than it had when
 * called: what the test reads next (robot position, pixels, a screenshot)
 * comes from a drawing made after whatever it did before. */
async function drawnAgain(page, n, what) {
  const d0 = Number(await page.getAttribute('#map', 'data-draws') || 0);
  await waitFor(page, (want) => Number(document.getElementById('map').dataset.draws) >= want,
                d0 + n, what);
}

/* Pixel statistics of the map canvas, read in the page: how many pixels
 * carry each map colour exactly, and the pixels themselves for a diff. */
async function canvasStats(page) {
  return page.evaluate(() => {
    const c = document.getElementById('map');
    const g = c.getContext('2d');
    const d = g.getImageData(0, 0, c.width, c.height).data;
    const cs = getComputedStyle(document.documentElement);
    const names = ['paper', 'region', 'robot', 'robot-bad', 'route', 'ellipse', 'arrow', 'obstacle',
                   'region-line', 'points-core', 'path', 'memory'];
    const want = {};
    for (const n of names) {
      const hex = cs.getPropertyValue('--map-' + n).trim();
      want[n] = parseInt(hex.slice(1), 16);
    }
    const count = {};
    names.forEach((n) => { count[n] = 0; });
    let other = 0;
    for (let i = 0; i < d.length; i += 4) {
      const rgb = (d[i] << 16) | (d[i + 1] << 8) | d[i + 2];
      let hit = false;
      for (const n of names) {
        if (want[n] === rgb) {
          count[n]++;
          hit = true;
          break;
        }
      }
      if (!hit)
        other++;
    }
    window.__lastPixels = window.__thisPixels || null;
    window.__thisPixels = d;
    let changed = -1;
    if (window.__lastPixels && window.__lastPixels.length === d.length) {
      changed = 0;
      for (let i = 0; i < d.length; i += 4) {
        if (d[i] !== window.__lastPixels[i] || d[i + 1] !== window.__lastPixels[i + 1] ||
            d[i + 2] !== window.__lastPixels[i + 2])
          changed++;
      }
    }
    return { total: d.length / 4, count, other, changed };
  });
}

async function dataset(page) {
  return page.evaluate(() => {
    const c = document.getElementById('map');
    return {
      conn: document.body.dataset.conn,
      draws: Number(c.dataset.draws || 0),
      scale: Number(c.dataset.scale || 0),
      views: Number(c.dataset.views || 0),
      robotX: c.dataset.robotX === undefined ? null : Number(c.dataset.robotX),
      robotY: c.dataset.robotY === undefined ? null : Number(c.dataset.robotY),
    };
  });
}

function rectOf(page, sel) {
  return page.evaluate((s) => {
    const el = document.querySelector(s);
    if (!el)
      return null;
    const r = el.getBoundingClientRect();
    return { left: r.left, top: r.top, right: r.right, bottom: r.bottom };
  }, sel);
}

function inside(x, y, r, pad) {
  return r && x >= r.left - pad && x <= r.right + pad && y >= r.top - pad && y <= r.bottom + pad;
}

/* Watches one page: console errors, page errors, requests off the origin,
 * websocket frames it sends. */
function watchPage(page, origin, tag) {
  const w = { errors: [], offOrigin: [], sent: [], sockets: 0, allowSocketErrors: false };
  page.on('console', (m) => {
    if (m.type() !== 'error')
      return;
    const text = m.text();
    /* While the server is down, Chromium itself logs each refused websocket
     * attempt; that is the page retrying, not a fault of the page. */
    if (w.allowSocketErrors && /^WebSocket connection to .* failed/.test(text))
      return;
    w.errors.push(`${tag}: console: ${text}`);
  });
  page.on('pageerror', (e) => w.errors.push(`${tag}: uncaught: ${e.message}`));
  page.on('request', (r) => {
    const u = r.url();
    if (!u.startsWith(origin) && !u.startsWith('data:'))
      w.offOrigin.push(u);
  });
  w.waypoints = {}; /* robot -> the last waypoint indices its views carried */
  page.on('websocket', (ws) => {
    w.sockets++;
    const mine = [];
    w.sent.push(mine);
    ws.on('framesent', (f) => mine.push(f.payload));
    ws.on('framereceived', (f) => {
      let m = null;
      try { m = JSON.parse(String(f.payload)); } catch (e) { return; }
      if (m && m.type === 'view' && typeof m.robot === 'string') {
        const list = w.waypoints[m.robot] || (w.waypoints[m.robot] = []);
        list.push(m.waypoint);
        if (list.length > 60)
          list.shift();
      }
    });
  });
  return w;
}

function checkSentOnlyHello(w, tag) {
  const bad = [];
  let hellos = 0;
  for (const frames of w.sent) {
    frames.forEach((payload, i) => {
      let m = null;
      try { m = JSON.parse(String(payload)); } catch (e) { /* not JSON: bad */ }
      if (i === 0 && m && m.type === 'hello' && m.role === 'viewer')
        hellos++;
      else
        bad.push(String(payload).slice(0, 120));
    });
  }
  check(bad.length === 0 && hellos >= 1,
        `${tag}: the page sent only hellos with role viewer (${hellos} connections)`,
        JSON.stringify(bad));
}

/* ------------------------------------------------------------- explanations */

/* A scenario of the shipped office round's robot and scanner: it starts
 * facing a long wall 0.8 m ahead, its one waypoint behind the wall. */
function wallScenario(dir) {
  const first = fs.readFileSync(path.join(ROOT, 'scenarios', 'office_round.jsonl'), 'utf8').split('\n')[0];
  const h = JSON.parse(first);
  const box = (x0, y0, x1, y1) => [[x0, y0], [x1, y0], [x1, y1], [x0, y1]];
  h.description = 'Fenwick yard: a unicycle facing a long wall, its waypoint behind it';
  h.start = [2.2, 0, 0];
  h.route = { waypoints: [[7, 0]], loop: false, tolerance: 0.3 };
  h.world = { polygons: [box(3, -3, 3.2, 3), box(-3, -6, 10, -5.8), box(-3, 5.8, 10, 6),
                         box(-3, -6, -2.8, 6), box(10, -6, 10.2, 6)] };
  h.max_time = 60;
  const file = path.join(dir, 'wall.jsonl');
  fs.writeFileSync(file, JSON.stringify(h) + '\n');
  return file;
}

/* The panel's texts and the map's counts the checks read. */
async function panelOf(page) {
  return page.evaluate(() => {
    const text = (id) => document.getElementById(id).textContent;
    const map = document.getElementById('map').dataset;
    return {
      name: text('robot-name'), state: text('state'), code: text('state-code'),
      words: text('state-words'), limit: text('limit-words'), setpoint: text('f-setpoint'),
      rate: text('f-rate'), age: text('f-age'), plan: text('f-plan'),
      waypoint: text('f-waypoint'), detail: text('f-waypoint-detail'), way: text('f-way'),
      labels: map.labels, path: Number(map.path || 0), memory: Number(map.memory || 0),
    };
  });
}

async function pick(page, name) {
  await waitFor(page, (n) => Array.from(document.getElementById('picker').options).some((o) => o.value === n),
                name, 'the picker lists ' + name);
  await page.selectOption('#picker', name);
  await waitFor(page, (n) => document.getElementById('robot-name').textContent === n, name,
                'the panel shows ' + name);
}

/* 11: what the panel says, and the way and the memory drawn. */
async function explanations(page, w, port, dir) {
  /* numbering: the office round has 8 waypoints, labelled 0 to 7; the panel
   * shows the index the wire carries */
  await pick(page, ROBOT_NAME);
  await waitFor(page, () => /^\d+$/.test(document.getElementById('f-waypoint').textContent), null,
                'the panel shows a waypoint index');
  await drawnAgain(page, 1, 'the route drawn');
  let p = await panelOf(page);
  const sent = w.waypoints[ROBOT_NAME] || [];
  check(p.labels === '0,1,2,3,4,5,6,7', 'the map numbers the waypoints from 0', p.labels);
  check(sent.includes(Number(p.waypoint)) && /of 0\u20137/.test(p.detail),
        'the panel numbers the current waypoint as the wire does', JSON.stringify([p.waypoint, p.detail, sent.slice(-5)]));
  const named = /toward waypoint (\d+)/.exec(p.words);
  check(!named || sent.includes(Number(named[1])), 'the words name a waypoint as the wire does', p.words);

  /* turning on the spot, then going round the wall, the way drawn */
  const wall = startPatrol(port, 'test-wall', wallScenario(dir));
  await pick(page, 'test-wall');
  await waitFor(page, () => document.getElementById('state').textContent === 'Turning on the spot' &&
                /to get round: the way ahead is closed/.test(document.getElementById('state-words').textContent),
                null, 'a unicycle turning where it stands to get round the wall is said to');
  await drawnAgain(page, 1, 'the turning robot drawn');
  await page.screenshot({ path: path.join(SHOTS, 'turning.png') });
  p = await panelOf(page);
  log('turning: ' + JSON.stringify(p));
  check(!/^On its way/.test(p.state), 'not "On its way" while it turns where it stands', p.state);
  await waitFor(page, () => document.getElementById('state').textContent === 'Going round' &&
                /way ahead is closed/.test(document.getElementById('state-words').textContent), null,
                'a detour of the guidance path is said in words');
  await drawnAgain(page, 2, 'the detour drawn');
  await page.screenshot({ path: path.join(SHOTS, 'detour.png') });
  p = await panelOf(page);
  const px = await canvasStats(page);
  log('detour: ' + JSON.stringify(p) + ' path px ' + px.count.path + ', memory px ' + px.count.memory);
  check(p.path >= 2 && px.count.path > 50, 'the guidance path is drawn in its colour',
        JSON.stringify({ vertices: p.path, px: px.count.path }));
  check(p.memory > 0 && px.count.memory > 20, 'the remembered cells are drawn in their colour',
        JSON.stringify({ cells: p.memory, px: px.count.memory }));
  check(/going round/.test(p.way) || /going round/.test(await page.textContent('#f-way-detail')),
        'the way figure says it goes round', p.way);
  await waitFor(page, () => document.getElementById('limit-code').textContent === 'accel' &&
                /speeding up|slowing down|up or down/.test(document.getElementById('limit-words').textContent),
                null, 'the accel limit says which way the speed changes');

  /* the link drops: the session waits, and the panel says so */
  wall.stop();
  await waitFor(page, () => document.getElementById('state').textContent === 'Link lost' &&
                /keeps its route/.test(document.getElementById('state-words').textContent), null,
                'a dropped link is said, with the session kept');
  await page.screenshot({ path: path.join(SHOTS, 'link-lost.png') });

  /* a waypoint in a locked cage: unreachable */
  const cage = startPatrol(port, 'test-cage', 'locked_cage.jsonl');
  await pick(page, 'test-cage');
  await waitFor(page, () => /unreachable/.test(document.getElementById('state').textContent) &&
                /No way leads to waypoint 1/.test(document.getElementById('state-words').textContent), null,
                'a waypoint the patrol found no way to is said to be unreachable');
  await drawnAgain(page, 1, 'the blocked robot drawn');
  await page.screenshot({ path: path.join(SHOTS, 'unreachable.png') });
  log('unreachable: ' + JSON.stringify(await panelOf(page)));
  cage.stop();
  await pick(page, ROBOT_NAME);
}

/* ------------------------------------------------------------- main */

async function main() {
  if (!EXE || !ROOT || !SHOTS)
    throw new Error('set LACUNA_EXE, LACUNA_SOURCE_ROOT and LACUNA_WEB_SHOTS');
  fs.mkdirSync(SHOTS, { recursive: true });
  for (const f of fs.readdirSync(SHOTS))
    if (/\.(png|log)$/.test(f))
      fs.unlinkSync(path.join(SHOTS, f));

  let server = await startServer('127.0.0.1:0');
  const port = server.port;
  const origin = `http://127.0.0.1:${port}`;
  log(`server on port ${port}`);
  const patrol = startPatrol(port, ROBOT_NAME, 'office_round.jsonl');

  const profile = fs.mkdtempSync(path.join(os.tmpdir(), 'lacuna-web-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
           '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    viewport: { width: 1280, height: 800 },
  });
  try {
    /* ---- 1-3: desktop page */
    const page = context.pages()[0] || await context.newPage();
    const w = watchPage(page, origin, 'desktop');
    await page.goto(origin + '/', { waitUntil: 'load' });
    check(await page.title() === 'lacuna viewer', 'page served by lacuna serve', await page.title());
    await waitFor(page, () => document.body.dataset.conn === 'live', null, 'page connects');
    await waitFor(page, () => document.getElementById('map').dataset.robotX !== undefined, null,
                  'robot drawn on the map');
    await waitFor(page, (states) => states.includes(document.getElementById('state-code').textContent),
                  STATES, 'panel shows a protocol state');
    /* the patrol is under way: the robot drives (not only turns on the spot) */
    await waitFor(page, () => /^0\.[1-9]|^[1-9]/.test(document.getElementById('f-setpoint').textContent),
                  null, 'setpoint shows a forward speed');
    await page.screenshot({ path: path.join(SHOTS, 'desktop-1.png') });
    const a = await canvasStats(page);
    const ds1 = await dataset(page);
    await waitFor(page, (d) => Number(document.getElementById('map').dataset.views) >= d.views + 10 &&
                  Number(document.getElementById('map').dataset.draws) >= d.draws + 5, ds1,
                  'views and drawing go on');
    await page.screenshot({ path: path.join(SHOTS, 'desktop-2.png') });
    const b = await canvasStats(page);
    const fr = (n) => (b.count[n] / b.total);
    log(`canvas ${b.total} px: ` + Object.keys(b.count).map((n) => `${n} ${(100 * fr(n)).toFixed(2)}%`).join(', ') +
        `, other ${(100 * b.other / b.total).toFixed(1)}%; changed ${b.changed} px`);
    check(b.count.paper < 0.98 * b.total, 'canvas is not blank');
    /* the footprint is red while the robot is stopped for a reason (a
     * loaded machine can delay the sim past the watchdog: state stale) */
    const robotPx = (s) => s.count.robot + s.count['robot-bad'];
    for (const n of ['region', 'route', 'ellipse', 'region-line', 'points-core'])
      check(b.count[n] > 20, `canvas shows the ${n} colour`, b.count[n]);
    check(robotPx(b) > 20, 'canvas shows the robot', JSON.stringify(b.count));
    check(a.count.region > 20 && robotPx(a) > 20, 'first snapshot shows region and robot too',
          JSON.stringify(a.count));
    check(b.changed > 0.002 * b.total, 'canvas changed between the two snapshots', b.changed);

    const panel = await panelOf(page);
    log('panel: ' + JSON.stringify(panel));
    check(panel.name === ROBOT_NAME, 'panel names the robot', panel.name);
    check(STATES.includes(panel.code) && panel.state.length > 0 && panel.words.length > 20,
          'panel shows the state in words', JSON.stringify(panel));
    check(/m\/s$/.test(panel.setpoint), 'panel shows the setpoint in m/s', panel.setpoint);
    /* a limit named by the panel comes with the robot's own value */
    check(!/\((v_max|a_max|w_max)\)/.test(panel.limit), 'panel gives the limit its value',
          panel.limit);
    check(/\/s$/.test(panel.rate), 'panel shows the robot frame rate', panel.rate);
    check(/^\d+ \u00b5s/.test(panel.plan), 'panel shows the plan time in microseconds', panel.plan);

    /* ---- 5: hidden tab: no drawing, views still counted */
    const before = await dataset(page);
    await page.evaluate(() => {
      Object.defineProperty(document, 'visibilityState', { configurable: true, get: () => 'hidden' });
      document.dispatchEvent(new Event('visibilitychange'));
    });
    const hidden0 = await dataset(page);
    await page.waitForFunction((n) => Number(document.getElementById('map').dataset.views) >= n + 10,
                               hidden0.views, { timeout: WAIT });
    const hidden1 = await dataset(page);
    check(hidden1.draws === hidden0.draws && hidden1.views > hidden0.views,
          'hidden tab: views arrive, nothing drawn', JSON.stringify({ hidden0, hidden1 }));
    check(await page.textContent('#f-draw') === 'paused', 'panel says drawing is paused');
    await page.evaluate(() => {
      delete document.visibilityState;
      document.dispatchEvent(new Event('visibilitychange'));
    });
    await waitFor(page, (n) => Number(document.getElementById('map').dataset.draws) > n, hidden1.draws,
                  'drawing resumes when the tab shows');
    check(before.draws > 0, 'drawing counted');

    /* ---- 6: zoom, drag, follow (before a second page opens: with two pages
     * open, headless Chromium did not deliver the wheel to either) */
    const z0 = await dataset(page);
    await page.click('#zoom-in');
    await waitFor(page, (sc) => Number(document.getElementById('map').dataset.scale) > sc * 1.4, z0.scale,
                  'the + button zooms in');
    const mapBox = await rectOf(page, '#map');
    const mx = (mapBox.left + mapBox.right) / 2, my = (mapBox.top + mapBox.bottom) / 2;
    await page.mouse.move(mx, my);
    const z1 = await dataset(page);
    await page.mouse.wheel(0, 300);
    await waitFor(page, (sc) => Number(document.getElementById('map').dataset.scale) < sc * 0.8, z1.scale,
                  'the wheel zooms out');
    await page.mouse.down();
    await page.mouse.move(mx - 60, my - 40, { steps: 4 });
    await page.mouse.move(mx - 150, my - 100, { steps: 4 });
    await page.mouse.up();
    check(await page.getAttribute('#follow', 'aria-pressed') === 'false', 'dragging the map stops following');
    await drawnAgain(page, 1, 'the map drawn after the drag');
    const dragged = await dataset(page);
    /* the robot keeps driving; by less than the 180 px drag in one drawing */
    check(Math.hypot(dragged.robotX - mx, dragged.robotY - my) > 90, 'the map moved with the drag',
          JSON.stringify({ robot: [dragged.robotX, dragged.robotY], centre: [mx, my] }));
    await page.click('#follow');
    await waitFor(page, (c) => {
      const m = document.getElementById('map').dataset;
      return Math.hypot(Number(m.robotX) - c[0], Number(m.robotY) - c[1]) < 2;
    }, [mx, my], 'follow puts the robot back in the middle');

    /* ---- 7: phone */
    const phone = await context.newPage();
    await phone.setViewportSize({ width: 360, height: 740 });
    const wp = watchPage(phone, origin, 'phone');
    /* the phone watches one robot, named in the address */
    await phone.goto(origin + '/#robot=' + ROBOT_NAME, { waitUntil: 'load' });
    await waitFor(phone, () => document.getElementById('map').dataset.robotX !== undefined &&
                  document.getElementById('state-code').textContent !== '', null, 'phone: robot drawn');
    await drawnAgain(phone, 3, 'phone: the map drawn on, following the robot');
    await phone.screenshot({ path: path.join(SHOTS, 'phone-360.png') });
    await phone.screenshot({ path: path.join(SHOTS, 'phone-360-full.png'), fullPage: true });
    const pd = await dataset(phone);
    const geo = {
      canvas: await rectOf(phone, '#map'), panel: await rectOf(phone, '#panel'),
      tools: await rectOf(phone, '.tools'), bar: await rectOf(phone, '.bar'),
      state: await rectOf(phone, '#state'),
      scrollWidth: await phone.evaluate(() => document.documentElement.scrollWidth),
      stateFont: await phone.evaluate(() => parseFloat(getComputedStyle(document.getElementById('state')).fontSize)),
    };
    log(`phone: robot at (${pd.robotX}, ${pd.robotY}); ` + JSON.stringify(geo));
    check(geo.scrollWidth <= 360, 'phone: no sideways scrolling', geo.scrollWidth);
    check(pd.robotX !== null && inside(pd.robotX, pd.robotY, geo.canvas, -10), 'phone: robot inside the map');
    check(!inside(pd.robotX, pd.robotY, geo.panel, 10), 'phone: the panel does not cover the robot');
    check(!inside(pd.robotX, pd.robotY, geo.tools, 10) && !inside(pd.robotX, pd.robotY, geo.bar, 10),
          'phone: toolbar and header do not cover the robot');
    check(geo.state && geo.state.bottom <= 740, 'phone: the state is on the first screen', geo.state && geo.state.bottom);
    check(geo.stateFont >= 20, 'phone: the state is in large type', geo.stateFont);

    /* ---- 8: a second robot: the picker shows, picking switches the panel */
    await page.bringToFront();
    /* a holonomic robot in another invented site: setpoints vx, vy */
    const second = startPatrol(port, 'test-sweeper', 'warehouse_aisles.jsonl');
    await waitFor(page, () => !document.getElementById('picker-wrap').hidden &&
                  document.getElementById('picker').options.length === 2, null,
                  'picker appears with two robots');
    await page.selectOption('#picker', 'test-sweeper');
    await waitFor(page, () => document.getElementById('robot-name').textContent === 'test-sweeper' &&
                  document.getElementById('state-code').textContent !== '' &&
                  /vx .* vy /.test(document.getElementById('f-setpoint-detail').textContent), null,
                  'picking the second robot shows it, with its vx, vy setpoint');
    await drawnAgain(page, 3, 'the second robot drawn');
    await page.screenshot({ path: path.join(SHOTS, 'two-robots.png') });
    await page.selectOption('#picker', ROBOT_NAME);
    await waitFor(page, (n) => document.getElementById('robot-name').textContent === n, ROBOT_NAME,
                  'picking the first robot again');
    const phonePicker = await phone.evaluate(() => ({
      hidden: document.getElementById('picker-wrap').hidden,
      options: document.getElementById('picker').options.length }));
    check(phonePicker.hidden && phonePicker.options === 1,
          'the phone, watching #robot=' + ROBOT_NAME + ', gets only that robot', JSON.stringify(phonePicker));
    second.stop();

    /* ---- 11: explanations */
    await explanations(page, w, port, profile);

    /* ---- 8b: the robot stops sending frames (its sim is paused): the
     * server's watchdog stops it, and the page says why */
    patrol.child.kill('SIGSTOP');
    await waitFor(page, () => document.getElementById('state-code').textContent === 'stale', null,
                  'a paused robot shows as stale');
    /* the watchdog's stops keep views coming: a drawing of the stale state */
    await drawnAgain(page, 1, 'the stale robot drawn');
    await page.screenshot({ path: path.join(SHOTS, 'stale.png') });
    const staleWords = await page.textContent('#state-words');
    check(/watchdog/.test(staleWords) && /no sensor frame/.test(staleWords),
          'the panel says the watchdog stopped it for want of frames', staleWords);
    const st = await canvasStats(page);
    check(st.count['robot-bad'] > 20, 'the stopped robot is drawn red', JSON.stringify(st.count));
    patrol.child.kill('SIGCONT');
    await waitFor(page, () => document.getElementById('state-code').textContent !== 'stale', null,
                  'the robot drives on after its frames resume');

    /* ---- 9: server killed and restarted on the same port */
    w.allowSocketErrors = wp.allowSocketErrors = true;
    check(w.errors.length === 0 && wp.errors.length === 0, 'no console errors while connected',
          w.errors.concat(wp.errors).join(' | '));
    await stopServer(server.child);
    log('server killed');
    await waitFor(page, () => document.body.dataset.conn === 'down', null, 'page shows the connection lost');
    await page.screenshot({ path: path.join(SHOTS, 'server-lost.png') });
    const pill = await page.textContent('#conn');
    check(/lost|retry/.test(pill), 'connection pill says lost and when it retries', pill);
    const lost = await dataset(page);
    server = await startServer(`127.0.0.1:${port}`);
    log('server restarted on the same port');
    await waitFor(page, () => document.body.dataset.conn === 'live', null, 'page reconnects by itself');
    await waitFor(page, (n) => Number(document.getElementById('map').dataset.views) >= n + 10, lost.views,
                  'new views after the restart');
    /* the phone page was opened last: bring the desktop one to the front
     * (Chromium throttles frames of pages behind it) */
    await page.bringToFront();
    await canvasStats(page);
    const again = await dataset(page);
    await waitFor(page, (d) => Number(document.getElementById('map').dataset.views) >= d.views + 5 &&
                  Number(document.getElementById('map').dataset.draws) >= d.draws + 5, again,
                  'drawing after the restart');
    const c = await canvasStats(page);
    await page.screenshot({ path: path.join(SHOTS, 'reconnected.png') });
    check(robotPx(c) > 20 && c.count.region > 20 && c.changed > 0.002 * c.total,
          'draws the live patrol again', JSON.stringify({ count: c.count, changed: c.changed }));
    await waitFor(phone, () => document.body.dataset.conn === 'live', null, 'phone page reconnects too');

    /* ---- 10: a server with a viewer token: the page asks for it, stops
     * knocking, and connects with the token typed into the form */
    await phone.close();
    await stopServer(server.child);
    const tokenFile = path.join(profile, 'viewer-token');
    fs.writeFileSync(tokenFile, 'quiet-heron-58\n', { mode: 0o600 });
    server = await startServer(`127.0.0.1:${port}`, ['--viewer-token-file', tokenFile]);
    log('server restarted with a viewer token');
    await waitFor(page, () => !document.getElementById('message').hidden &&
                  /token/.test(document.getElementById('message').textContent), null,
                  'page asks for the viewer token');
    await page.screenshot({ path: path.join(SHOTS, 'token-asked.png') });
    const socketsBefore = w.sockets;
    await sleep(1500); /* kept: that nothing happens in this time is the check */
    check(w.sockets === socketsBefore, 'no retries while the token is missing',
          `${w.sockets - socketsBefore} more`);
    await page.fill('#token', 'quiet-heron-58');
    await page.click('#token-form button[type=submit]');
    await waitFor(page, () => document.body.dataset.conn === 'live' &&
                  document.getElementById('message').hidden, null, 'connects with the token from the form');
    const tok = await dataset(page);
    await waitFor(page, (n) => Number(document.getElementById('map').dataset.views) >= n + 5, tok.views,
                  'views with the token');

    /* ---- 1, 4: clean console, same origin, viewer only */
    const errs = w.errors.concat(wp.errors);
    check(errs.length === 0, 'no console or page errors', errs.join(' | '));
    const off = w.offOrigin.concat(wp.offOrigin);
    check(off.length === 0, 'nothing fetched from outside the server', off.join(' '));
    checkSentOnlyHello(w, 'desktop');
    checkSentOnlyHello(wp, 'phone');
    const phoneHello = JSON.parse(String(wp.sent[0][0]));
    check(phoneHello.robot === ROBOT_NAME, 'the phone\'s hello names the robot from the address',
          JSON.stringify(phoneHello));
    check(w.sockets >= 2, 'desktop page opened a new websocket after the restart', w.sockets);

    /* a clean end with viewers connected (under ASan: no leak report) */
    patrol.stop();
    const status = await stopServer(server.child, 'SIGTERM');
    check(status === 0, 'server exits 0 on SIGTERM with a viewer connected', status);
  } finally {
    patrol.stop();
    await context.close();
    await stopServer(server.child);
    fs.rmSync(profile, { recursive: true, force: true });
  }
  log(`screenshots in ${SHOTS}`);
  log(failures ? `${failures} check(s) failed` : 'all checks passed');
  return failures ? 1 : 0;
}

main().then((rc) => { killAll(); process.exit(rc); },
            (e) => { log('FAIL ' + (e && e.stack || e)); killAll(); process.exit(1); });
