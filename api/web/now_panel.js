// now_panel.js: "Now and today" (using, solar, net; energy since local midnight) and the circuit
// list grouped by unit, from GET /v1/live and each circuit's day series.
import { el, formatAge, formatKwh, formatWatts } from './dom.js';
import { rfc3339 } from './site_time.js';

// A reading older than this is shown as stale: a node reports every minute or so.
const STALE_SECONDS = 300;

export class NowPanel {
  constructor(api, site) {
    this.api = api;
    this.site = site;
    this.rows = new Map();  // circuit id -> {now, today, bar, row}
    this.build();
  }

  // Groups: each visible unit's circuits, then shared circuits, then export (solar).
  groups() {
    const { circuits, units } = this.site;
    const groups = units.map((unit) => ({
      title: unit.name || unit.id,
      circuits: circuits.filter((c) => c.unit === unit.id && c.direction !== 'export'),
    }));
    groups.push({ title: 'Shared and common',
      circuits: circuits.filter((c) => c.unit === null && c.direction !== 'export') });
    groups.push({ title: 'Solar and export', circuits: circuits.filter((c) => c.direction === 'export') });
    return groups.filter((g) => g.circuits.length > 0);
  }

  build() {
    const host = document.getElementById('circuit-groups');
    host.replaceChildren(...this.groups().map((group) => el('div', { class: 'circuit-group' },
      el('h3', {}, group.title),
      el('ul', { class: 'circuit-list' }, group.circuits.map((circuit) => this.row(circuit))))));
    const hasExport = this.site.circuits.some((c) => c.direction === 'export');
    for (const id of ['solar-tile', 'net-tile', 'solar-today-tile']) {
      document.getElementById(id).hidden = !hasExport;
    }
  }

  row(circuit) {
    const fill = el('span', { class: `bar-fill ${circuit.direction === 'export' ? 'export' : 'use'}` });
    const entry = {
      now: el('span', { class: 'circuit-now' }, '–'),
      today: el('span', { class: 'circuit-today' }, '–'),
      age: el('span', { class: 'circuit-age quiet' }),
      bar: fill,
      row: null,
    };
    entry.row = el('li', { class: 'circuit', 'data-circuit': circuit.id },
      el('span', { class: 'circuit-name' }, circuit.name || circuit.id),
      el('span', { class: 'bar', 'aria-hidden': 'true' }, fill),
      entry.now, entry.today, entry.age);
    this.rows.set(circuit.id, entry);
    return entry.row;
  }

  async refreshLive() {
    const live = await this.api.get('/v1/live');
    let use = 0;
    let solar = 0;
    let newest = null;
    const largest = Math.max(1, ...live.circuits.map((c) => Math.abs(c.watts)));
    for (const circuit of live.circuits) {
      const entry = this.rows.get(circuit.id);
      if (!entry) continue;
      const stale = circuit.reading_end === null || circuit.age_s > STALE_SECONDS;
      entry.now.textContent = circuit.reading_end === null ? 'no reading' : formatWatts(circuit.watts);
      entry.age.textContent = circuit.reading_end === null ? ''
        : stale ? `stale: ${formatAge(circuit.age_s)}` : '';
      entry.row.classList.toggle('stale', stale);
      entry.bar.style.width = `${(100 * Math.abs(circuit.watts)) / largest}%`;
      if (circuit.direction === 'export') solar += circuit.watts;
      else use += circuit.watts;
      if (circuit.reading_end !== null) newest = Math.max(newest ?? 0, circuit.reading_end);
    }
    setText('use-now', formatWatts(use));
    setText('solar-now', formatWatts(solar));
    const net = use - solar;
    setText('net-now', net >= 0 ? formatWatts(net) : `${formatWatts(-net)} sent out`);
    document.getElementById('net-tile').classList.toggle('sending', net < 0);
    const status = document.getElementById('now-status');
    status.textContent = newest === null ? 'No readings in the last hour.'
      : `Newest reading ${formatAge((Date.now() - newest) / 1000)}; refreshes every few seconds.`;
  }

  // Energy since local midnight per circuit (step day: one period, today).
  async refreshToday(now) {
    const from = this.site.time.startOfDay(now);
    const to = this.site.time.addDays(from, 1);
    const query = { from: rfc3339(from), to: rfc3339(to), step: 'day' };
    const answers = await Promise.all(this.site.circuits.map((circuit) =>
      this.api.get(`/v1/circuits/${encodeURIComponent(circuit.id)}/series`, query)));
    let use = 0;
    let solar = 0;
    answers.forEach((answer, i) => {
      const circuit = this.site.circuits[i];
      this.rows.get(circuit.id).today.textContent = `${formatKwh(answer.total_energy_kwh)} today`;
      if (circuit.direction === 'export') solar += answer.total_energy_kwh;
      else use += answer.total_energy_kwh;
    });
    setText('use-today', formatKwh(use));
    setText('solar-today', formatKwh(solar));
  }
}

function setText(id, text) {
  document.getElementById(id).textContent = text;
}
