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

// Amounts and prices as the page should show them, formatted here by node's own Intl (ICU)
// as the reference: money with two decimals, prices per kWh with four.
function money(amount, currency) {
  return new Intl.NumberFormat('en-US', { style: 'currency', currency, minimumFractionDigits: 2,
    maximumFractionDigits: 2 }).format(Number(amount));
}
function price(perKwh, currency) {
  return `${new Intl.NumberFormat('en-US', { style: 'currency', currency, minimumFractionDigits: 4,
    maximumFractionDigits: 4 }).format(Number(perKwh))}/kWh`;
}
function clock(ms, zone) {
  return new Intl.DateTimeFormat('en-US', { timeZone: zone, hour: '2-digit', minute: '2-digit',
    hourCycle: 'h23' }).format(new Date(ms));
}

// No horizontal page scroll: the document is no wider than the viewport.
async function checkNoSideScroll(page, what) {
  const [scroll, client] = await page.evaluate(() =>
    [document.documentElement.scrollWidth, document.documentElement.clientWidth]);
  check(scroll <= client, `${what}: no horizontal page scroll (${scroll} <= ${client} px)`);
}

// The panels every token sees: cost so far with the projection, and the price now.
async function checkMoneyPanels(page, base, token, unit) {
  const cycle = await api(base, token, `/v1/cycles/current${unit ? `?unit=${unit}` : ''}`);
  await page.waitForFunction(() => /\d/.test(document.getElementById('cost-projected').textContent)
    && /\d/.test(document.getElementById('cost-today').textContent), null, { timeout: 30_000 });
  const shown = await page.$$eval('#cycle .tile-value', (tiles) => tiles.map((t) => t.textContent));
  // The page and this request ask up to a minute apart while live readings arrive (the demo
  // draws a few kW, a few cents an hour): amounts may differ by some cents.
  const near = (text, amount) => Math.abs(Number(text.replace(/[^\d.-]/g, '')) - Number(amount)) <= 0.05;
  const symbol = money(0, cycle.currency).replace(/[\d.,\s-]/g, '');
  check(near(shown[1], cycle.cost_so_far) && near(shown[2], cycle.projected_cost)
    && shown.every((text) => text.includes(symbol)),
  `cost so far and the cycle's projection match /v1/cycles/current (${shown.join(' / ')}; API `
    + `${money(cycle.cost_so_far, cycle.currency)} / ${money(cycle.projected_cost, cycle.currency)})`);
  const rate = await api(base, token, '/v1/tariff/now');
  await page.waitForFunction(() => /kWh/.test(document.getElementById('rate-price')?.textContent ?? ''),
    null, { timeout: 30_000 });
  const [period, rateText, change] = await Promise.all(['#rate-period', '#rate-price', '#rate-change']
    .map((selector) => page.textContent(selector)));
  check(rateText === price(rate.price_per_kwh, rate.currency) && period.length > 0,
    `the price now is shown (${period}, ${rateText}; API ${rate.period} ${rate.price_per_kwh})`);
  check(rate.until === null || (change.includes(clock(Date.parse(rate.until), rate.zone))
    && change.includes(price(rate.next.price_per_kwh, rate.currency))),
  `the next price change is shown with its time and price (${change})`);
  const slots = await page.$$eval('#rate-day li.rate-slot', (items) => items.length);
  const current = await page.$$eval('#rate-day li.current', (items) => items.length);
  check(slots > 0 && current === 1, `today's rate periods are listed, the present one marked (${slots})`);
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
    await checkMoneyPanels(page, base, viewerToken, null);

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
    const yearBands = await page.$eval('svg.stack-chart', (chart) => chart.dataset.bands);
    const yearNote = await page.textContent('#band-note');
    check(yearBands === '0' && /up to a month/.test(yearNote),
      `a year's range has no rate shading and says why (${yearNote})`);
    check(yearPoints > 0 && /per month/.test(yearLabel),
      `the chart zooms out to a year in months with data (${yearLabel}: ${yearPoints} points)`);
    await page.click('#range-presets button:has-text("Day")');
    await page.waitForFunction(() => /per quarter hour/.test(document.getElementById('range-label').textContent)
      && document.querySelector('svg.stack-chart').dataset.step === '15m');
    // The day's rate periods are shaded behind it, as /v1/tariff/periods answers them, and
    // the day's cost is split by rate period as /v1/energy?by=rate_period answers it.
    const [dayFromMs, dayToMs] = await page.$eval('svg.stack-chart', (chart) =>
      [Number(chart.dataset.from), Number(chart.dataset.to)]);
    const iso = (ms) => new Date(ms).toISOString().replace('.000Z', 'Z');
    const periods = await api(base, viewerToken, `/v1/tariff/periods?from=${iso(dayFromMs)}&to=${iso(dayToMs)}`);
    await page.waitForFunction((n) => document.querySelector('svg.stack-chart').dataset.bands === String(n),
      periods.periods.length, { timeout: 10_000 }).catch(() => {});
    const dayBands = await page.$eval('svg.stack-chart', (chart) => Number(chart.dataset.bands));
    const legend = await page.$$eval('#band-legend li', (items) => items.map((i) => i.textContent));
    check(dayBands > 0 && dayBands === periods.periods.length && legend.length > 0,
      `the day's rate periods are shaded behind the chart (${dayBands} bands; ${legend.join('; ')})`);
    const byPeriod = await api(base, viewerToken,
      `/v1/energy?from=${iso(dayFromMs)}&to=${iso(dayToMs)}&by=rate_period`);
    await page.waitForFunction(() => document.querySelector('#rate-costs .rate-total'), null, { timeout: 10_000 });
    const rateRows = await page.$$eval('#rate-costs li[data-period]', (items) => items.map((i) => i.dataset.period));
    const rateTotal = await page.textContent('#rate-costs .rate-total .rate-cost');
    const apiTotal = byPeriod.rows.reduce((sum, r) => sum + Number(r.cost), 0);
    // As above, live readings may add a few cents between the page's request and this one.
    check(rateRows.length > 0 && Math.abs(Number(rateTotal.replace(/[^\d.-]/g, '')) - apiTotal) <= 0.05,
      `cost by rate period is listed (${rateRows.join(', ')}: ${rateTotal}; API ${apiTotal.toFixed(4)})`);
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

    // A unit token's page, on a phone-sized screen: its unit only, with its statement.
    const unitUrl = `${base}/#token=${unitToken}`;
    const unit = await openPage(browser, unitUrl, UNIT_EXPECTED, { width: 390, height: 844 });
    const own = circuits.filter((c) => c.unit === 'upper');
    await unit.page.waitForFunction((n) => document.querySelectorAll('li.circuit').length === n,
      own.length, { timeout: 30_000 });
    await unit.page.waitForFunction(() => Number(document.querySelector('svg.stack-chart')?.dataset.points) > 0,
      null, { timeout: 30_000 });
    await checkMoneyPanels(unit.page, base, unitToken, 'upper');
    const current = await api(base, unitToken, '/v1/cycles/current?unit=upper');
    const statement = await api(base, unitToken, `/v1/units/upper/statements/${current.cycle}`);
    await unit.page.waitForFunction(() => document.getElementById('statement-total'), null, { timeout: 30_000 });
    const statementTotal = await unit.page.textContent('#statement-total');
    const statementText = await unit.page.textContent('#statement');
    check(statementTotal === money(statement.total, statement.currency)
      && statementText.includes(statement.notice),
    `the unit's statement for cycle ${current.cycle} shows its total (${statementTotal}) and the `
      + 'tenant-billing notice');
    const cycles = await unit.page.$$eval('#statement-cycle option', (options) => options.map((o) => o.value));
    check(cycles[0] === current.cycle && cycles.length > 1, `earlier cycles can be chosen (${cycles.slice(0, 3).join(', ')}, ...)`);

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

    // The statement names the shared circuits the unit pays a share of; nothing else does.
    const text = await unit.page.textContent('body');
    const outsideStatement = await unit.page.evaluate(() => [...document.querySelectorAll('body > *, main > *')]
      .filter((node) => node.id !== 'statement' && node.tagName !== 'MAIN').map((node) => node.textContent).join(' '));
    const others = [...circuits.filter((c) => c.unit !== 'upper' && c.unit !== null).map((c) => c.name),
      ...units.filter((u) => u.id !== 'upper').map((u) => u.name)];
    const shared = circuits.filter((c) => c.unit === null).map((c) => c.name);
    const leaked = [...others.filter((name) => text.includes(name)),
      ...shared.filter((name) => outsideStatement.includes(name))];
    check(own.every((c) => text.includes(c.name)), 'the unit page lists its own circuits');
    check(leaked.length === 0, `the unit page shows no other unit, no other unit's circuit, and `
      + `shared circuits only in its statement${leaked.length ? `: ${leaked.join(', ')}` : ''}`);
    check(await unit.page.isHidden('#nodes'), 'the unit page has no site-wide node panel');
    await checkNoSideScroll(unit.page, 'the unit\'s page at 390 px');
    await unit.page.waitForTimeout(300);
    await unit.page.screenshot({ path: path.join(workDir, 'dashboard-unit-phone.png'), fullPage: true });

    // Printed, the unit's page is its statement alone.
    await unit.page.emulateMedia({ media: 'print' });
    const printed = await unit.page.evaluate(() => [...document.querySelectorAll('main > section')]
      .filter((section) => getComputedStyle(section).display !== 'none').map((section) => section.id));
    check(printed.join() === 'statement', `printing shows the statement alone (${printed.join(', ')})`);
    await unit.page.pdf({ path: path.join(workDir, 'statement.pdf'), format: 'A4' });
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
