// planned_panels.js: panels without a view of their own yet: costs and tariffs and statements
// (routes newer daemons add), alerts and events (routes this daemon has). Each asks its route
// once; a 404 means this daemon does not offer it, and the panel says so instead of failing.
// When a route answers, its JSON is shown as a plain table until the panel gets its own view.
import { el } from './dom.js';
import { rfc3339 } from './site_time.js';

const MAX_ROWS = 20;

// What each panel needs of the API. `unit` is the first unit the token sees (or null).
function plannedPanels(site, now) {
  const today = site.time.startOfDay(now);
  const monthStart = site.time.startOfMonth(now);
  const unit = site.units[0]?.id ?? null;
  const cycle = new Intl.DateTimeFormat('en-CA', { timeZone: site.zone, year: 'numeric',
    month: '2-digit' }).format(new Date(now));
  return [
    { title: 'Cost by rate period', path: '/v1/cost',
      query: { from: rfc3339(monthStart), to: rfc3339(site.time.addDays(today, 1)),
        group: 'rate_period' } },
    { title: 'Current rate and price', path: '/v1/tariff/now', query: {} },
    { title: 'Active alerts', path: '/v1/alerts', query: {} },
    { title: 'Recent events', path: '/v1/events', query: { after: '0' } },
    unit && { title: `Statement for ${site.units[0].name || unit}, ${cycle}`,
      path: `/v1/units/${encodeURIComponent(unit)}/statements/${cycle}`, query: {},
      note: 'Billing tenants for energy is regulated in many places; local law decides whether '
        + 'and how a statement may be used.' },
  ].filter(Boolean);
}

export async function showPlannedPanels(api, site) {
  const host = document.getElementById('planned-list');
  const panels = plannedPanels(site, Date.now());
  const items = await Promise.all(panels.map(async (panel) => {
    const body = el('div', { class: 'planned-body' });
    const item = el('div', { class: 'planned', 'data-route': panel.path },
      el('h3', {}, panel.title), panel.note && el('p', { class: 'quiet' }, panel.note), body);
    try {
      body.append(renderJson(await api.get(panel.path, panel.query), 0));
      item.classList.add('offered');
    } catch (error) {
      body.append(el('p', { class: error.absent ? 'quiet' : 'problem' }, error.absent
        ? 'Not available on this daemon.' : `Could not load: ${error.message}`));
    }
    return item;
  }));
  host.replaceChildren(...items);
}

// A readable rendering of any JSON value: objects as term lists, arrays of objects as tables.
function renderJson(value, depth) {
  if (value === null || typeof value !== 'object') return el('span', {}, String(value));
  if (depth > 2) return el('span', {}, JSON.stringify(value));
  if (Array.isArray(value)) {
    if (value.length === 0) return el('span', { class: 'quiet' }, 'none');
    if (value.every((v) => v && typeof v === 'object' && !Array.isArray(v))) {
      const columns = [...new Set(value.flatMap((v) => Object.keys(v)))];
      return el('div', { class: 'table-scroll' }, el('table', {},
        el('thead', {}, el('tr', {}, columns.map((c) => el('th', { scope: 'col' }, c)))),
        el('tbody', {}, value.slice(0, MAX_ROWS).map((row) => el('tr', {},
          columns.map((c) => el('td', {}, renderJson(row[c] ?? '', depth + 1))))))));
    }
    return el('span', {}, value.map((v) => JSON.stringify(v)).join(', '));
  }
  return el('dl', { class: 'terms' }, Object.entries(value).flatMap(([key, v]) =>
    [el('dt', {}, key), el('dd', {}, renderJson(v, depth + 1))]));
}
