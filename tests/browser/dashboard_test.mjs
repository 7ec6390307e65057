// The dashboard end to end: a real `ampledger demo` daemon (its simulated nodes send two weeks
// of history, then live readings, over real UDP), real HTTP on 127.0.0.1, and the page in
// headless Debian chromium through playwright-core. No part is mocked.
// Usage: node dashboard_test.mjs WORK_DIR AMPLEDGER CHROMIUM (see run.sh).
import { spawn, execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';

const [workDir, ampledger, chromiumPath] = process.argv.slice(2);
const { chromium } = createRequire(path.join(workDir, 'package.json'))('playwright-core');

// Answers the page expects and handles, which chromium still logs as failed resources:
// a unit token is told site-wide routes do not exist (the page asks /v1/site to learn its
// scope), and a viewer token may not acknowledge (403; the page says which tokens may).
const UNIT_EXPECTED = [{ status: 404, route: /\/v1\/site$/ }];
const VIEWER_EXPECTED = [{ status: 403, route: /\/v1\/alerts\/.+\/acknowledge$/ }];

const failures = [];
const pageErrors = [];  // every page's, printed if a wait fails
const started = Date.now();
function check(condition, what) {
  console.log(`${condition ? 'ok  ' : 'FAIL'} ${what}`);
  if (!condition) failures.push(what);
}

async function freePort(kind) {
  if (kind === 'udp') {
    const dgram = await import('node:dgram');
    const socket = dgram.createSocket('udp4');
    await new Promise((resolve) => socket.bind(0, '127.0.0.1', resolve));
    const { port } = socket.address();
    socket.close();
    return port;
  }
  const server = net.createServer();
  await new Promise((resolve) => server.listen(0, '127.0.0.1', resolve));
  const { port } = server.address();
  await new Promise((resolve) => server.close(resolve));
  return port;
}

// Starts the demo and resolves with the dashboard URL it prints, once its history is sent.
function startDemo(dir, httpPort, udpPort) {
  const daemon = spawn(ampledger, ['demo', '--keep', dir, '--http', `127.0.0.1:${httpPort}`,
    '--udp', `127.0.0.1:${udpPort}`], { stdio: ['ignore', 'pipe', 'pipe'] });
  let log = '';
  const ready = new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`demo not ready in 240 s; log:\n${log}`)), 240_000);
    const read = (chunk) => {
      log += chunk;
      const url = log.match(/dashboard: open (http:\/\/\S+#token=\S+)/);
      if (url && log.includes('history sent')) {
        clearTimeout(timer);
        resolve(url[1]);
      }
    };
    daemon.stdout.on('data', read);
    daemon.stderr.on('data', read);
    daemon.on('exit', (code) => reject(new Error(`demo exited with ${code}; log:\n${log}`)));
  });
  return { daemon, ready };
}

async function api(base, token, route) {
  const response = await fetch(new URL(route, base), { headers: { Authorization: `Bearer ${token}` } });
  if (!response.ok) throw new Error(`${route}: HTTP ${response.status}`);
  return response.json();
}

// Opens the page in a fresh context (its own sessionStorage; US English, so amounts are
// formatted as below) and collects console errors, except the `expected` failed answers.
async function openPage(browser, url, expected, viewport) {
  const context = await browser.newContext({ viewport, locale: 'en-US' });
  const page = await context.newPage();
  const errors = [];
  page.on('console', (message) => {
    if (message.type() !== 'error') return;
    const where = message.location().url || '';
    const known = expected.some(({ status, route }) =>
      message.text().includes(`status of ${status}`) && route.test(where));
    if (!known) errors.push(`${message.text()} (${where})`);
  });
  page.on('pageerror', (error) => errors.push(`uncaught: ${error.message}`));
  pageErrors.push(errors);
  await page.goto(url);
  return { context, page, errors };
}

// No horizontal page scroll: the document is no wider than the viewport.
async function checkNoSideScroll(page, what) {
  const [scroll, client] = await page.evaluate(() =>
    [document.documentElement.scrollWidth, document.documentElement.clientWidth]);
  check(scroll <= client, `${what}: no horizontal page scroll (${scroll} <= ${client} px)`);
}

async function main() {
  const dir = mkdtempSync(path.join(os.tmpdir(), 'ampledger-browser-'));
  const [httpPort, udpPort] = [await freePort('tcp'), await freePort('udp')];
  const { daemon, ready } = startDemo(dir, httpPort, udpPort);
  const browser = await chromium.launch({ executablePath: chromiumPath,
    args: ['--no-sandbox', '--disable-gpu'] });
  try {
    const url = await ready;
    console.log(`demo ready after ${Math.round((Date.now() - started) / 1000)} s`);
    const base = new URL(url).origin;
    const viewerToken = new URL(url).hash.replace('#token=', '');
    const unitToken = execFileSync(ampledger, ['token', 'create', '-c', path.join(dir, 'examples', 'duplex.toml'),
      '--scope', 'unit:upper', '--label', 'browser test']).toString().trim();

    // The page itself: no token needed, a strict policy, no inline script.
    const index = await fetch(`${base}/`);
    const policy = index.headers.get('content-security-policy') || '';
    check(index.status === 200 && index.headers.get('content-type').startsWith('text/html'),
      'GET / answers the page as text/html without a token');
    check(/script-src 'self'/.test(policy) && !policy.includes('unsafe'),
      `the page's Content-Security-Policy allows only this origin's scripts (${policy})`);
    check(!/<script(?![^>]*\bsrc=)[^>]*>/.test(await index.text()), 'the page has no inline script');
    const script = await fetch(`${base}/static/main.js`);
    check(script.headers.get('content-type').startsWith('text/javascript'),
      '/static/main.js is served as text/javascript');
    check((await fetch(`${base}/static/nothing.js`)).status === 404, 'an unknown static file is 404');

    const { circuits } = await api(base, viewerToken, '/v1/circuits');
    const { units } = await api(base, viewerToken, '/v1/units');

    // The viewer's page: every circuit, a chart with data, live values that move.
    const viewer = await openPage(browser, url, VIEWER_EXPECTED, { width: 1280, height: 900 });
    const { page } = viewer;
    await page.waitForFunction((n) => document.querySelectorAll('li.circuit').length === n,
      circuits.length, { timeout: 30_000 });
    const listed = await page.$$eval('li.circuit .circuit-name', (names) => names.map((n) => n.textContent));
    check(circuits.every((c) => listed.includes(c.name)),
      `the page lists all ${circuits.length} circuits of the demo by name`);
    check(page.url() === `${base}/`, 'the token is cleared from the address bar');
    await page.waitForFunction(() => Number(document.querySelector('svg.stack-chart')?.dataset.points) > 0,
      null, { timeout: 60_000 });
    const points = await page.$eval('svg.stack-chart', (chart) => Number(chart.dataset.points));
    check(points > 0, `the history chart has data points (${points})`);
    const areas = await page.$$eval('svg.stack-chart path.area', (paths) => paths.length);
    check(areas === units.length + circuits.filter((c) => c.unit === null).length,
      `the chart stacks one area per unit and per circuit no unit owns (${areas})`);
    await page.waitForFunction(() => /kWh/.test(document.getElementById('use-today').textContent),
      null, { timeout: 30_000 });
    const firstUse = await page.textContent('#use-now');
    const firstReadingEnd = await page.textContent('#now-status');
    await page.waitForFunction((before) => document.getElementById('use-now').textContent !== before,
      firstUse, { timeout: 60_000 });
    const laterUse = await page.textContent('#use-now');
    check(laterUse !== firstUse && /W$/.test(laterUse),
      `the live total changes as new readings arrive (${firstUse} -> ${laterUse}; ${firstReadingEnd})`);
    await page.waitForFunction(() => document.querySelectorAll('table.nodes tr.node').length > 0,
      null, { timeout: 30_000 });
    const nodeRows = await page.$$eval('table.nodes tr.node', (rows) => rows.map((r) => r.dataset.node));
    check(nodeRows.length === 3, `node health lists the demo's three nodes (${nodeRows.join(', ')})`);

    // Alerts and events as sentences; a viewer token's acknowledge is refused and explained.
    const { alerts } = await api(base, viewerToken, '/v1/alerts');
    await page.waitForFunction(() => document.getElementById('alerts-status').textContent !== '',
      null, { timeout: 30_000 });
    const alertItems = await page.$$eval('#alert-list li.alert', (items) => items.map((i) => i.dataset.alert));
    check(alertItems.length === alerts.length && alerts.length > 0,
      `the active alerts are listed (${alertItems.join(', ')})`);
    const { events } = await api(base, viewerToken, '/v1/events?limit=1000');
    await page.waitForFunction(() => document.querySelectorAll('#event-list li.event').length > 0,
      null, { timeout: 30_000 });
    const eventTexts = await page.$$eval('#event-list li.event', (items) => items.map((i) => i.textContent));
    check(events.length > 0 && eventTexts.length === Math.min(events.length, 25)
      && eventTexts.every((t) => !/[{}"]/.test(t)),
    `recent events read as sentences, not JSON (${eventTexts.length}; newest: ${eventTexts[0]})`);
    if (await page.$('#alert-list li.alert button.acknowledge')) {
      await page.click('#alert-list li.alert button.acknowledge');
      await page.waitForFunction(() => /may only read/.test(
        document.querySelector('#alert-list .alert-note')?.textContent ?? ''), null, { timeout: 10_000 });
      check(true, 'a viewer token\'s acknowledge is refused and the page says which tokens may');
    }

    // By circuit: one area per circuit, each with its own fill (colour, or colour and stripes).
    await page.click('#stack-by button:has-text("By circuit")');
    await page.waitForFunction((n) => document.querySelectorAll('svg.stack-chart path.area').length === n,
      circuits.length);
    const fills = await page.$$eval('svg.stack-chart path.area', (paths) =>
      paths.map((p) => getComputedStyle(p).fill));
    check(new Set(fills).size === circuits.length && !fills.includes('rgb(0, 0, 0)'),
      `each circuit's area has a fill of its own (${new Set(fills).size} of ${circuits.length})`);

    // Zoom: a week, then a year, each drawn with the step the range calls for.
    await page.click('#range-presets button:has-text("Week")');
    await page.waitForFunction(() => /per hour/.test(document.getElementById('range-label').textContent));
    await page.click('#range-presets button:has-text("Year")');
    await page.waitForFunction(() => /per month/.test(document.getElementById('range-label').textContent));
    await page.waitForFunction(() => /^\d+$/.test(document.querySelector('svg.stack-chart').dataset.points ?? '')
      && document.getElementById('history-status').textContent !== 'Loading…');
    const yearPoints = await page.$eval('svg.stack-chart', (chart) => Number(chart.dataset.points));
    const yearLabel = await page.textContent('#range-label');
    check(yearPoints > 0 && /per month/.test(yearLabel),
      `the chart zooms out to a year in months with data (${yearLabel}: ${yearPoints} points)`);
    await page.click('#range-presets button:has-text("Day")');
    await page.waitForFunction(() => /per quarter hour/.test(document.getElementById('range-label').textContent)
      && document.querySelector('svg.stack-chart').dataset.step === '15m');
    // Dragging across the middle fifth of the day zooms into those hours.
    const dayLabel = await page.textContent('#range-label');
    const box = await (await page.$('svg.stack-chart')).boundingBox();
    await page.mouse.move(box.x + box.width * 0.4, box.y + box.height / 2);
    const readout = await page.textContent('.chart-readout');
    check(/^\w{3}, .*\d\d:\d\d: .*Wh/.test(readout), `moving over the chart reads out a period (${readout})`);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.6, box.y + box.height / 2, { steps: 5 });
    await page.mouse.up();
    const dayFrom = await page.$eval('svg.stack-chart', (chart) => chart.dataset.from);
    await page.waitForFunction((before) => document.querySelector('svg.stack-chart').dataset.from !== before,
      dayFrom);
    const zoomedLabel = await page.textContent('#range-label');
    check(/per quarter hour/.test(zoomedLabel) && zoomedLabel !== dayLabel,
      `dragging across the chart zooms in (${dayLabel} -> ${zoomedLabel})`);
    await page.click('#range-presets button:has-text("Day")');
    await page.waitForFunction((before) => document.querySelector('svg.stack-chart').dataset.from === before,
      dayFrom);
    await page.waitForTimeout(500);
    await page.screenshot({ path: path.join(workDir, 'dashboard.png'), fullPage: true });
    // The same page on a phone: everything fits the width (the chart redraws on resize).
    await page.setViewportSize({ width: 390, height: 844 });
    await page.waitForTimeout(800);
    await checkNoSideScroll(page, 'the viewer\'s page at 390 px');
    await page.screenshot({ path: path.join(workDir, 'dashboard-phone.png'), fullPage: true });
    check(viewer.errors.length === 0, `no console errors on the viewer's page${
      viewer.errors.length ? `: ${viewer.errors.join('; ')}` : ''}`);
    await viewer.context.close();

    // A unit token's page, on a phone-sized screen: its unit only.
    const unitUrl = `${base}/#token=${unitToken}`;
    const unit = await openPage(browser, unitUrl, UNIT_EXPECTED, { width: 390, height: 844 });
    const own = circuits.filter((c) => c.unit === 'upper');
    await unit.page.waitForFunction((n) => document.querySelectorAll('li.circuit').length === n,
      own.length, { timeout: 30_000 });
    await unit.page.waitForFunction(() => Number(document.querySelector('svg.stack-chart')?.dataset.points) > 0,
      null, { timeout: 30_000 });
    // The unit may acknowledge its own alerts from the page.
    const { alerts: unitAlerts } = await api(base, unitToken, '/v1/alerts');
    const open = unitAlerts.find((a) => !a.acknowledged);
    check(open !== undefined, `the demo raised an alert the unit may acknowledge (${
      unitAlerts.map((a) => `${a.rule}/${a.subject.id}`).join(', ')})`);
    if (open) {
      const key = `${open.rule}/${open.subject.type}/${open.subject.id}`;
      await unit.page.waitForFunction((k) => document.querySelector(`li.alert[data-alert="${k}"] button`),
        key, { timeout: 30_000 });
      await unit.page.click(`li.alert[data-alert="${key}"] button.acknowledge`);
      await unit.page.waitForFunction((k) => document.querySelector(`li.alert.seen[data-alert="${k}"]`),
        key, { timeout: 10_000 });
      const after = await api(base, viewerToken, '/v1/alerts');
      const stored = after.alerts.find((a) => `${a.rule}/${a.subject.type}/${a.subject.id}` === key);
      check(stored?.acknowledged === true && stored.acknowledged_by.startsWith('unit'),
        `the alert ${key} is acknowledged from the page (by ${stored?.acknowledged_by})`);
    }

    const text = await unit.page.textContent('body');
    const others = [...circuits.filter((c) => c.unit !== 'upper').map((c) => c.name),
      ...units.filter((u) => u.id !== 'upper').map((u) => u.name)];
    const leaked = others.filter((name) => text.includes(name));
    check(own.every((c) => text.includes(c.name)), 'the unit page lists its own circuits');
    check(leaked.length === 0, `the unit page shows no other unit or circuit${
      leaked.length ? `: ${leaked.join(', ')}` : ''}`);
    check(await unit.page.isHidden('#nodes'), 'the unit page has no site-wide node panel');
    await checkNoSideScroll(unit.page, 'the unit\'s page at 390 px');
    await unit.page.waitForTimeout(300);
    await unit.page.screenshot({ path: path.join(workDir, 'dashboard-unit-phone.png'), fullPage: true });

    check(unit.errors.length === 0, `no console errors on the unit's page${
      unit.errors.length ? `: ${unit.errors.join('; ')}` : ''}`);
    await unit.context.close();
  } finally {
    await browser.close();
    daemon.kill('SIGTERM');
    await new Promise((resolve) => (daemon.exitCode !== null ? resolve() : daemon.on('exit', resolve)));
    rmSync(dir, { recursive: true, force: true });
  }
  console.log(`${failures.length ? `${failures.length} check(s) failed` : 'all checks passed; '
    + `screenshots in ${workDir}`} (${Math.round((Date.now() - started) / 1000)} s)`);
  process.exit(failures.length ? 1 : 0);
}

main().catch((error) => {
  console.error(error);
  console.error(`console errors so far: ${pageErrors.flat().join('\n') || 'none'}`);
  process.exit(1);
});
