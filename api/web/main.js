// main.js: the dashboard's entry point. Asks for a token once (kept in sessionStorage, for this
// tab only), learns what the token may see, then keeps the panels fresh. A token given in the
// address's fragment (#token=..., as `ampledger demo` prints it) is taken and cleared from the
// address bar; the fragment never reaches the server.
import { AlertsPanel } from './alerts_panel.js';
import { Api } from './api.js';
import { CyclePanel } from './cycle_panel.js';
import { siteFormat } from './dom.js';
import { HistoryPanel } from './history_panel.js';
import { NodesPanel } from './nodes_panel.js';
import { NowPanel } from './now_panel.js';
import { RatePanel } from './rate_panel.js';
import { SiteTime, rfc3339 } from './site_time.js';
import { StatementPanel } from './statement_panel.js';

const TOKEN_KEY = 'ampledger.token';
const LIVE_EVERY_MS = 5_000;
const TODAY_EVERY_MS = 60_000;
const NODES_EVERY_MS = 15_000;
const HISTORY_EVERY_MS = 120_000;
const ALERTS_EVERY_MS = 15_000;
const MONEY_EVERY_MS = 60_000;

function takeToken() {
  const fragment = new URLSearchParams(window.location.hash.slice(1));
  const given = fragment.get('token');
  if (given) {
    sessionStorage.setItem(TOKEN_KEY, given);
    history.replaceState(null, '', window.location.pathname + window.location.search);
  }
  return sessionStorage.getItem(TOKEN_KEY);
}

function showGate(message) {
  document.getElementById('gate').hidden = false;
  const error = document.getElementById('gate-error');
  error.hidden = !message;
  error.textContent = message || '';
  document.getElementById('gate-token').focus();
}

document.getElementById('gate-form').addEventListener('submit', (event) => {
  event.preventDefault();
  const token = document.getElementById('gate-token').value.trim();
  if (!token) return;
  sessionStorage.setItem(TOKEN_KEY, token);
  window.location.reload();
});

document.getElementById('forget').addEventListener('click', () => {
  sessionStorage.removeItem(TOKEN_KEY);
  window.location.reload();
});

// The site's zone for a unit token, which may not read /v1/site: every series answer states it.
// Quarter hours are UTC-aligned, so one can be asked for without knowing the zone.
async function zoneFromSeries(api, circuit) {
  const to = Math.floor(Date.now() / 900_000) * 900_000;
  const answer = await api.get(`/v1/circuits/${encodeURIComponent(circuit.id)}/series`,
    { from: rfc3339(to - 900_000), to: rfc3339(to), step: '15m' });
  return answer.time_zone;
}

// What this token sees: {scope: 'site'|'unit', priced, name, zone, time, circuits, units}.
async function learnSite(api) {
  let siteInfo = null;
  try {
    siteInfo = await api.get('/v1/site');
  } catch (error) {
    if (!error.absent) throw error;  // 404: a unit token, which sees no site-wide route
  }
  const [{ circuits }, { units }] = await Promise.all([api.get('/v1/circuits'), api.get('/v1/units')]);
  const zone = siteInfo ? siteInfo.time_zone
    : circuits.length ? await zoneFromSeries(api, circuits[0]) : 'UTC';
  // Whether the site has a tariff: without one the price and cost routes answer 404.
  const priced = await api.get('/v1/tariff/now').then(() => true, (error) => {
    if (error.absent) return false;
    throw error;
  });
  return {
    scope: siteInfo ? 'site' : 'unit',
    priced,
    name: siteInfo ? siteInfo.name : (units[0]?.name || units[0]?.id || 'ampledger'),
    zone,
    time: new SiteTime(zone),
    circuits,
    units,
  };
}

// Runs `task` now and every `ms`, reporting failures in `statusId` without stopping.
function every(ms, task, statusId) {
  const run = async () => {
    try {
      await task();
    } catch (error) {
      if (error.unauthorized) return showGate('The token is no longer accepted; paste a new one.');
      document.getElementById(statusId).textContent = `Could not refresh: ${error.message}`;
    }
  };
  run();
  return setInterval(run, ms);
}

async function start() {
  const token = takeToken();
  if (!token) return showGate();
  const api = new Api(token);
  let site;
  try {
    site = await learnSite(api);
  } catch (error) {
    sessionStorage.removeItem(TOKEN_KEY);
    return showGate(error.unauthorized ? 'That token was not accepted. Check it and try again.'
      : `The daemon could not be read: ${error.message}`);
  }
  document.getElementById('forget').hidden = false;
  document.getElementById('place').textContent = site.name;
  document.title = `${site.name} · ampledger`;
  const clock = siteFormat(site.zone, { weekday: 'short', hour: '2-digit', minute: '2-digit',
    hourCycle: 'h23' });
  const tick = () => {
    document.getElementById('clock').textContent =
      `${clock(Date.now())} site time (${site.zone})${site.scope === 'unit' ? ' · one unit' : ''}`;
  };
  tick();
  setInterval(tick, 20_000);

  for (const id of ['now', 'cycle', 'rate', 'circuits', 'history', 'alerts', 'events']) {
    document.getElementById(id).hidden = false;
  }
  const now = new NowPanel(api, site);
  every(LIVE_EVERY_MS, () => now.refreshLive(), 'now-status');
  every(TODAY_EVERY_MS, () => now.refreshToday(Date.now()), 'now-status');
  const cycle = new CyclePanel(api, site);
  every(MONEY_EVERY_MS, () => cycle.refresh(Date.now()), 'cycle-status');
  const rate = new RatePanel(api, site);
  every(MONEY_EVERY_MS, () => rate.refresh(Date.now()), 'rate-status');
  const historyPanel = new HistoryPanel(api, site);
  historyPanel.start();
  setInterval(() => historyPanel.refresh(), HISTORY_EVERY_MS);
  const alerts = new AlertsPanel(api, site);
  every(ALERTS_EVERY_MS, () => alerts.refreshAlerts(), 'alerts-status');
  every(ALERTS_EVERY_MS, () => alerts.refreshEvents(), 'events-status');
  if (site.scope === 'site') {
    document.getElementById('nodes').hidden = false;
    const nodes = new NodesPanel(api);
    every(NODES_EVERY_MS, () => nodes.refresh(), 'node-list');
  } else if (site.units.length > 0) {
    document.getElementById('statement').hidden = false;
    new StatementPanel(api, site).start().catch((error) => {
      document.getElementById('statement-status').textContent = `Could not load: ${error.message}`;
    });
  }
}

start();
